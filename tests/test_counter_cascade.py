"""Synchronous carry cascades: two or three 74HC163 (or 74HC161) counting as one counter.

Outside references: the Motorola MC54/74HC161A/163A data sheet function table
(shared/reference/hc-74.md, 74HC161 rows, read from
https://manualmachine.com/datasheet/mc54hc161aj/4153709-datasheet-motorola):
counting needs CEP = CET = HIGH, TC = CET·Q0·Q1·Q2·Q3 (HIGH at count 15), all
flip-flops clocked together on the rising edge of CP; the 163's reset is
synchronous (clears on the rising edge), the 161's asynchronous.  The cascade
wiring (TC of the lower unit to CEP and CET of the upper, both on one clock)
is the data sheet's synchronous multistage counting (common practice).
Icarus Verilog runs the exported module; the spec is the tick reference.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from synth import timing
from synth.counter import allocate
from synth.exports.verilog import verilog_names
from synth.inventory import load_bin, load_catalog
from synth.pipeline import make_plan
from synth.spec import load_spec
from tests.cosim import needs_iverilog, run_plan

SPEC = """\
name: two-163
cycle: {cycle}
clock: {{frequency: 1 MHz}}
signals:
  fire:
    high: [[0, 3]]
  mid:
    high: [[64, 80]]
"""

BIN = """\
parts:
  {counter}: 2
  74HC00: 3
  74HC04: 2
  74HC20: 3
  74HC08: 2
  74HC10: 2
  74HC11: 2
  74HC32: 2
"""


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


def _files(tmp_path: Path, cycle: int, counter: str = "74HC163") -> tuple[Path, Path]:
    spec, stock = tmp_path / "spec.yaml", tmp_path / "bin.yaml"
    spec.write_text(SPEC.format(cycle=cycle))
    stock.write_text(BIN.format(counter=counter))
    return spec, stock


def test_two_163_give_a_cycle_of_256(catalog, tmp_path):
    spec_path, bin_path = _files(tmp_path, 256)
    spec = load_spec(spec_path)
    cp = allocate(spec, load_bin(bin_path, catalog, spec.supply), catalog)
    assert [c.part for c in cp.chips] == ["74HC163", "74HC163"]
    assert cp.synchronous and cp.reset is None and cp.edge == "rising"
    low, high = cp.chips
    assert low.clock_net == high.clock_net == "CLK"
    assert low.carry_net == "U1.TC" and high.enable_net == "U1.TC"
    assert {high.enable_pin, *high.count_enable_pins} == {7, 10}          # CEP, CET
    assert 7 not in high.ties and 10 not in high.ties and low.ties[7] == low.ties[10] == "VDD"
    assert "synchronous cascade" in high.how


def test_tc_and_count_enable_follow_the_function_table(catalog, tmp_path):
    """TC (U1 pin 15) is high exactly while the lower unit shows 15 (CET tied high);
    the upper unit advances only on the edges where TC was high, so the pair counts 0..255."""
    spec_path, bin_path = _files(tmp_path, 256)
    design = make_plan(spec_path, bin_path, catalog=catalog)
    plan = design.plan
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=1,
                            clock_period_ns=1000.0)
    tc = trace.sample("U1.TC")
    assert [t for t in range(256) if tc[t]] == [t for t in range(256) if t % 16 == 15]
    counts = [trace.count_value(k * 1000.0 + 999.0) for k in range(256)]
    assert counts == list(range(256))
    low_nets = [n for n in trace.counter_nets if n.startswith("U1.")]
    high_nets = [n for n in trace.counter_nets if n.startswith("U2.")]
    # Entry to 16: the lower unit falls 15 -> 0 and the upper rises 0 -> 1 at the same instant.
    moves = {n: trace.window(n, 16) for n in low_nets + high_nets}
    times = {t for rows in moves.values() for t, _ in rows}
    assert len(times) == 1, f"outputs of a synchronous cascade change together, got {sorted(times)}"


@needs_iverilog
@pytest.mark.parametrize("cycle, counter", [(256, "74HC163"), (200, "74HC163"), (200, "74HC161")])
def test_cascade_cosimulates(cycle, counter, catalog, tmp_path):
    """Icarus: both outputs match the spec tick by tick over two cycles (a 200-tick cycle cut
    by the synchronous clear of the 163, or the decoded asynchronous clear of the 161)
    and every net agrees with binsynth's simulation event by event."""
    spec_path, bin_path = _files(tmp_path, cycle, counter)
    design = make_plan(spec_path, bin_path, catalog=catalog)
    plan, spec = design.plan, design.spec
    assert [c.part for c in plan.counter.chips] == [counter, counter]
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=2,
                            clock_period_ns=1000.0, gate_names=timing.gate_names_of(plan))
    period = timing.ps(trace.period_ns)
    samples, waves = run_plan(plan, catalog, period, 2 * cycle, tmp_path)
    for name, sig in spec.signals.items():
        active = plan.signals[name].polarity == "high"
        assert samples[name] == [(t % cycle in sig.high) == active for t in range(2 * cycle)], name
    half = period // 2
    for net, ident in verilog_names(plan, catalog).items():
        ours = [(timing.ps(t), "1" if v else "0") for t, v in trace.changes.get(net, []) if timing.ps(t) >= half]
        assert [(t, v) for t, v in waves[ident] if t >= half] == ours, f"net {net}"


THREE = """\
name: three-163
cycle: {cycle}
clock: {{frequency: 1 MHz}}
signals:
  fire:
    high: [[0, 2]]
"""


def _three(tmp_path: Path, cycle: int, counter: str) -> tuple[Path, Path]:
    spec, stock = tmp_path / "spec.yaml", tmp_path / "bin.yaml"
    spec.write_text(THREE.format(cycle=cycle))
    stock.write_text(BIN.replace("{counter}: 2", "{counter}: 3").format(counter=counter))
    return spec, stock


@pytest.fixture(scope="module")
def three_163(catalog, tmp_path_factory):
    spec_path, bin_path = _three(tmp_path_factory.mktemp("three"), 4096, "74HC163")
    return make_plan(spec_path, bin_path, catalog=catalog)


def test_three_163_give_a_cycle_of_4096(three_163):
    """The data sheet's multistage counting: unit 2 counts while TC1 is high, unit 3 while
    TC2 = CET2 . (unit 2 at 15) is high; no reset decode is needed for 4096 = 16^3."""
    cp = three_163.plan.counter
    assert [c.part for c in cp.chips] == ["74HC163"] * 3 and cp.reset is None and cp.synchronous
    assert [c.enable_net for c in cp.chips[1:]] == ["U1.TC", "U2.TC"]
    assert [c.carry_net for c in cp.chips[:2]] == ["U1.TC", "U2.TC"]


def test_the_upper_tc_follows_its_own_enable(three_163, catalog):
    """TC2 is high only while unit 2 shows 15 AND its CET (TC1) is high: counts 255, 511, ...;
    unit 2 alone at 15 (counts 240..254) must not raise it."""
    plan = three_163.plan
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=1,
                            clock_period_ns=1000.0)
    tc2 = trace.sample("U2.TC")
    assert [t for t in range(4096) if tc2[t]] == [t for t in range(4096) if t % 256 == 255]
    counts = [trace.count_value(k * 1000.0 + 999.0) for k in range(4096)]
    assert counts == list(range(4096))
    # Entry to 256: all twelve outputs change at one instant (glitch analysis sees one move).
    moves = {n: trace.window(n, 256) for n in trace.counter_nets}
    assert len({t for rows in moves.values() for t, _ in rows}) == 1


@needs_iverilog
def test_three_163_cosimulate(three_163, catalog, tmp_path):
    """Icarus runs the exported model for a whole cycle and a bit: the output matches the
    spec tick by tick and every net, TC2 included, agrees with binsynth's simulation."""
    plan, spec = three_163.plan, three_163.spec
    ticks = 4096 + 300
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=2,
                            clock_period_ns=1000.0, gate_names=timing.gate_names_of(plan))
    period = timing.ps(trace.period_ns)
    samples, waves = run_plan(plan, catalog, period, ticks, tmp_path)
    sig = spec.signals["fire"]
    active = plan.signals["fire"].polarity == "high"
    assert samples["fire"] == [(t % 4096 in sig.high) == active for t in range(ticks)]
    half, end = period // 2, ticks * period
    for net, ident in verilog_names(plan, catalog).items():
        ours = [(timing.ps(t), "1" if v else "0") for t, v in trace.changes.get(net, [])
                if half <= timing.ps(t) < end]
        assert [(t, v) for t, v in waves[ident] if half <= t < end] == ours, f"net {net}"


# ---------------------------------------------------------------- 4520 / 4518: a decoded enable
#
# Outside references: Nexperia HEF4520B / Motorola MC14520B (shared/reference/cmos-4000b.md,
# 4520 rows): each unit counts on CLOCK rising while ENABLE is HIGH, or on ENABLE falling while
# CLOCK is LOW; the 4518 is the BCD twin (counts 0-9).  Cascading both units on one clock with
# the upper ENABLE from a gate that decodes the lower unit at its last count (15, or 9 for BCD)
# is the synchronous way (common practice; the data sheets show the ripple way, Q4 into ENABLE).

SYNC = """\
name: sync-4520
cycle: {cycle}
clock: {{frequency: 100 kHz}}
signals:
  frame:
    high: [[16, 48]]
"""


def _sync_plan(tmp_path: Path, catalog, cycle: int, counter: str):
    from synth.decode import derive
    from synth.packing import pack
    from synth.pipeline import map_decode, mapping_inputs

    (tmp_path / "s.yaml").write_text(SYNC.format(cycle=cycle))
    (tmp_path / "b.yaml").write_text(f"parts: {{'{counter}': 1, '4081': 2, '4082': 1, '4011': 2, '4069': 1}}\n")
    spec = load_spec(tmp_path / "s.yaml")
    stock = load_bin(tmp_path / "b.yaml", catalog, spec.supply)
    cp = allocate(spec, stock, catalog, decoded_carry=True)
    decode = derive(spec, cp)
    library, polarity = mapping_inputs(spec, stock, catalog, cp, decode)
    network = map_decode(decode, cp, library, polarity, "auto")
    return spec, pack(network, cp, spec, stock, catalog)


@pytest.mark.parametrize("cycle, counter, last", [(256, "4520", 15), (100, "4518", 9)])
def test_decoded_enable_cascade_counts(cycle, counter, last, catalog, tmp_path):
    spec, plan = _sync_plan(tmp_path, catalog, cycle, counter)
    cp = plan.counter
    assert cp.synchronous and [c.clock_net for c in cp.chips] == ["CLK", "CLK"]
    carry, = cp.carries
    enable = plan.network.signals[carry.name].net
    assert plan.chip("U1").pins[cp.chips[1].enable_pin] == enable
    trace = timing.simulate(cp, plan.network, catalog, plan.supply, cycles=1, clock_period_ns=10000.0)
    assert [trace.count_value(k * 10000.0 + 9999.0) for k in range(cycle)] == list(range(cycle))
    high = trace.sample(enable)[:cycle]
    assert [t for t in range(cycle) if high[t]] == [t for t in range(cycle) if t % (last + 1) == last]
    moves = {n: trace.window(n, last + 1) for n in trace.counter_nets}      # the entry to the carry
    assert len({t for rows in moves.values() for t, _ in rows}) == 1


def test_enable_falling_while_clock_is_low_counts(catalog, tmp_path):
    """At a clock so fast that the enable decode falls after CLOCK has gone low again, the
    4520's second counting mode steps the upper unit once more: the simulator shows it."""
    _, plan = _sync_plan(tmp_path, catalog, 256, "4520")
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=1,
                            clock_period_ns=300.0)
    counts = [trace.count_value(k * 300.0 + 299.0) for k in range(40)]
    assert counts[:16] == list(range(16)) and counts[16:20] != [16, 17, 18, 19]


@needs_iverilog
@pytest.mark.parametrize("cycle, counter", [(256, "4520"), (100, "4518")])
def test_decoded_enable_cascade_cosimulates(cycle, counter, catalog, tmp_path):
    spec, plan = _sync_plan(tmp_path, catalog, cycle, counter)
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=2,
                            clock_period_ns=10000.0, gate_names=timing.gate_names_of(plan))
    period = timing.ps(trace.period_ns)
    samples, waves = run_plan(plan, catalog, period, 2 * cycle, tmp_path)
    sig = spec.signals["frame"]
    active = plan.signals["frame"].polarity == "high"
    assert samples["frame"] == [(t % cycle in sig.high) == active for t in range(2 * cycle)]
    half = period // 2
    for net, ident in verilog_names(plan, catalog).items():
        ours = [(timing.ps(t), "1" if v else "0") for t, v in trace.changes.get(net, []) if timing.ps(t) >= half]
        assert [(t, v) for t, v in waves[ident] if t >= half] == ours, f"net {net}"
