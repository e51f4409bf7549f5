"""Registered outputs: a signal decoded one tick early and clocked into a D flip-flop.

Outside references: Icarus Verilog (Debian package ``iverilog``) runs the
exported module beside a test bench written here; the spec's own waveform is
the tick-by-tick reference; the 74HC74 function table (Nexperia 74HC74 Rev 9
and IN74HC74A, read: "information at a D-input is transferred to the Q output
on the next positive going edge of the clock"; set and reset active LOW,
asynchronous) is what ``network.evaluate_words`` and the Verilog model are
checked against.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from synth import timing
from synth.exports.verilog import verilog_names
from synth.inventory import load_catalog
from synth.network import Gate, Network, SignalOut, evaluate_words
from synth.pipeline import make_plan

from tests.cosim import needs_iverilog, run_plan

ARM_SPEC = """\
name: arm-bench
cycle: 16
clock: {frequency: 1 MHz}
signals:
  arm:
    high: [[0, 2]]
    %s
"""

BIN_74HC = """\
parts:
  74HC4040: 1
  74HC74: 1
  74HC00: 2
  74HC10: 1
  74HC04: 1
  74HC08: 1
"""

BIN_4000B = """\
parts:
  4040: 1
  4013: 1
  4011: 2
  4023: 1
  4069: 1
  4081: 1
"""


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


def _files(tmp_path: Path, spec: str, bin_text: str, supply: str = "") -> tuple[Path, Path]:
    spec_path, bin_path = tmp_path / "spec.yaml", tmp_path / "bin.yaml"
    spec_path.write_text(spec + (f"supply: {supply}\n" if supply else ""))
    bin_path.write_text(bin_text)
    return spec_path, bin_path


# ---------------------------------------------------------------- the function table

def test_flipflop_words_follow_the_74hc74_function_table():
    """Q at tick t is D at tick t-1; active-LOW set forces Q high, reset low, both: Q = Q-bar = high."""
    g = Gate("f", "74HC74", "flipflop", ("d", "c", "s", "r"), ("q", "qn"),
             enables_active=("set:low", "reset:low"))
    full = 0b11111111
    d = 0b00010110
    net = Network([g], {"q": SignalOut("q", "high")}, ("d", "c", "s", "r"))
    out = evaluate_words(net, {"d": d, "c": 0, "s": full, "r": full}, 8)
    assert out["q"] == 0b00101100 and out["qn"] == 0b11010011
    out = evaluate_words(net, {"d": d, "c": 0, "s": 0b11111110, "r": full}, 8)   # set LOW at tick 0
    assert out["q"] & 1 and not out["qn"] & 1
    out = evaluate_words(net, {"d": d, "c": 0, "s": 0b11111110, "r": 0b11111110}, 8)            # both LOW
    assert out["q"] & 1 and out["qn"] & 1


# ---------------------------------------------------------------- the plan

@pytest.mark.parametrize("key", ["steady: true", "polarity: high"])
def test_arm_plans_without_a_glitch(key, catalog, tmp_path):
    """steady: true registers arm without --fix; --fix glitches registers it too, because
    its window is two ticks long (a pulse per tick would not hold it)."""
    spec, bin_path = _files(tmp_path, ARM_SPEC % key, BIN_74HC)
    fix = () if key.startswith("steady") else ("glitches",)
    design = make_plan(spec, bin_path, catalog=catalog, fix=fix)
    plan = design.plan
    assert plan.glitches == []
    assert "74HC74" in plan.bom
    assert plan.registered["arm"].part == "74HC74"
    assert not plan.strobed
    rec = plan.register_checks[0]
    assert rec.setup_ok and rec.hold_ok and rec.hold_margin_ns > rec.hold_needed_ns
    # The 74HC74 counts on CLK's rising edge, the 74HC4040 on a falling one: the counter
    # takes CLK through an inverter and the plan's ticks start on CLK's rising edge.
    assert plan.clock_edge == "rising"
    assert "CLK_n" in plan.nets and "CLK" in plan.external
    chip = next(c for c in plan.chips if c.part == "74HC74")
    assert chip.pins[4] == "VDD" and chip.pins[1] == "VDD"       # 1SD_n, 1RD_n held inactive
    assert chip.pins[10] == "VDD" and chip.pins[13] == "VDD"     # the spare unit's too


@needs_iverilog
@pytest.mark.parametrize("bin_text, supply, part", [(BIN_74HC, "", "74HC74"), (BIN_4000B, "10 V", "4013")])
def test_registered_output_is_steady_in_icarus(bin_text, supply, part, catalog, tmp_path):
    """Icarus: arm matches the spec tick by tick over two cycles, changes at most once per
    tick (one clock-to-output delay after the edge) and never between, and agrees with
    binsynth's own simulation event by event."""
    spec, bin_path = _files(tmp_path, ARM_SPEC % "steady: true", bin_text, supply)
    design = make_plan(spec, bin_path, catalog=catalog)
    plan = design.plan
    assert plan.registered["arm"].part == part and plan.glitches == []
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=2,
                            clock_period_ns=1000.0, gate_names=timing.gate_names_of(plan))
    period = timing.ps(trace.period_ns)
    samples, waves = run_plan(plan, catalog, period, 32, tmp_path)
    wanted = [t % 16 in (0, 1) for t in range(32)]           # the spec: asserted ticks 0-1
    assert samples["arm"] == wanted
    names = verilog_names(plan, catalog)
    changes = [t for t, _ in waves[names[plan.signals["arm"].net]] if t > 0]
    windows = [t // period for t in changes]
    assert len(windows) == len(set(windows)), "arm moved more than once in a tick"
    clock_to_q = timing.ps(catalog.parts[part].delay_ns("clock_to_q", plan.supply, "typ"))
    assert all(t % period == clock_to_q for t in changes)
    half = period // 2
    ours = [(timing.ps(t), "1" if v else "0") for t, v in trace.changes[plan.signals["arm"].net]
            if timing.ps(t) >= half]
    assert [(t, v) for t, v in waves[names[plan.signals["arm"].net]] if t >= half] == ours


def test_steady_without_a_flipflop_is_short(catalog, tmp_path):
    from synth.errors import ShortError

    spec, bin_path = _files(tmp_path, ARM_SPEC % "steady: true",
                            BIN_74HC.replace("  74HC74: 1\n", ""))
    with pytest.raises(ShortError, match="steady"):
        make_plan(spec, bin_path, catalog=catalog)


def test_steady_with_fix_and_no_flipflop_is_short(catalog, tmp_path):
    from synth.errors import ShortError

    spec, bin_path = _files(tmp_path, ARM_SPEC % "steady: true",
                            BIN_74HC.replace("  74HC74: 1\n", ""))
    with pytest.raises(ShortError, match="still glitch"):
        make_plan(spec, bin_path, catalog=catalog, fix=("glitches",))


def test_q_bar_carries_the_other_level(catalog, tmp_path):
    """Asked active low, arm may come from the 74HC74's Q-bar: the plan is self-checked
    tick by tick either way, and the delivered polarity is the one asked for."""
    spec, bin_path = _files(tmp_path, ARM_SPEC % "steady: true\n    polarity: low", BIN_74HC)
    plan = make_plan(spec, bin_path, catalog=catalog).plan
    assert plan.signals["arm"].polarity == "low" and plan.glitches == []
    chip = next(c for c in plan.chips if c.part == "74HC74")
    assert plan.signals["arm"].net in (chip.pins.get(5), chip.pins.get(6))


def test_steady_must_be_a_boolean(tmp_path):
    from synth.errors import SpecError
    from synth.spec import load_spec

    path = tmp_path / "s.yaml"
    path.write_text(ARM_SPEC % "steady: sometimes")
    with pytest.raises(SpecError, match="steady"):
        load_spec(path)
