"""``plan --fix glitches`` and the RC-delay offers, against outside references.

Sources named beside each check: the ripple-counter behaviour every digital
handbook describes (common practice: a 4-bit ripple count decoded for the
all-zero state spikes on the entries to counts 2, 4 and 8, because the low
stages clear before the next one sets), an independent tick-counting
reference written here (tick t shows count t), Icarus Verilog (Debian package
``iverilog``) as an outside simulator of the exported file, and the RC time
constant (t = R C ln((V_final - V_start) / (V_final - V_threshold)), any
circuits textbook).
"""

from __future__ import annotations

import json
import math
import shutil
import subprocess

import pytest

from synth import timing
from synth.exports.plan_json import plan_to_json
from synth.findings import Cost
from synth.exports.verilog import spec_signals, verilog_names, write_verilog
from synth.netlist import simulate_ticks, verilog_module_name
from synth.pipeline import make_plan

needs_iverilog = pytest.mark.skipif(
    shutil.which("iverilog") is None or shutil.which("vvp") is None,
    reason="Icarus Verilog is not installed (Debian package iverilog; .ci/run installs it)")

SPEC = "name: zero-strobe\nsupply: 5 V\nclock: {frequency: 100 kHz}\ncycle: 16\nsignals:\n  zero: {high: [0]}\n"
ZERO_SPIKES = [2, 4, 8]          # common practice (see the module text)


def _files(tmp_path, parts: dict[str, int], passives: str = ""):
    spec = tmp_path / "zero.yaml"
    spec.write_text(SPEC)
    stock = tmp_path / "bin.yaml"
    stock.write_text("parts:\n" + "".join(f"  {p}: {n}\n" for p, n in parts.items()) + passives)
    return spec, stock


def _ticks(design, signal="zero"):
    return sorted(g.at_tick for g in design.plan.glitches if g.signal == signal)


@pytest.fixture(scope="module")
def fixed(tmp_path_factory, catalog):
    folder = tmp_path_factory.mktemp("fixed")
    spec, stock = _files(folder, {"74HC4040": 1, "74HC4002": 1, "74HC08": 1})
    before = make_plan(spec, stock, catalog=catalog)
    after = make_plan(spec, stock, catalog=catalog, fix=["glitches"])
    return before, after


def test_zero_decode_spikes_on_the_entries_to_2_4_8(fixed):
    before, _ = fixed
    assert _ticks(before) == ZERO_SPIKES
    by_model = plan_to_json(before.plan)["glitches_by_model"]
    assert by_model["count_states"] == [["zero", t] for t in ZERO_SPIKES]
    for g in before.plan.glitches:
        assert g.mechanism == "transient_state" and g.transient_state == 0
        assert "states" in g.models and "transport_typ" in g.models


def test_clock_gating_removes_every_glitch_and_says_what_it_cost(fixed):
    before, after = fixed
    assert after.plan.glitches == []
    record, = after.plan.timing_fixes
    assert record.signal == "zero" and record.remedy == "clock_gating" and record.applied
    assert list(record.glitches_before) == ZERO_SPIKES and record.glitches_after == ()
    # One AND gate on a 74HC08 that the plan did not use before: one chip, one gate.
    assert record.cost == Cost(chips=1, gates=1)
    assert len(after.plan.chips) == len(before.plan.chips) + 1
    assert "74HC08" in after.plan.bom
    assert "asserted only while CLK high" in record.detail
    tried = {t.remedy: t.result for t in record.tried}
    assert tried["decode_choice"].startswith("not applicable")
    assert tried["synchronous_counter"].startswith("not applicable")


def test_fixed_plan_still_matches_the_spec_tick_by_tick(fixed, catalog):
    _, after = fixed
    plan = after.plan
    wanted = [t == 0 for t in range(16)]                      # independent: tick t shows count t
    assert list(simulate_ticks(plan)["zero"]) == wanted
    trace = timing.simulate(plan.counter, plan.network, catalog, plan.supply, cycles=2,
                            clock_period_ns=10_000, gate_names=timing.gate_names_of(plan))
    assert trace.sample(plan.signals["zero"].net)[:32] == wanted * 2
    # Within each tick: held low while the count moves (first half), the tick's level after.
    net = plan.signals["zero"].net
    for k in range(1, 32):
        mid = k * trace.period_ns + trace.period_ns / 2
        assert trace.level_at(net, mid - 1) is False


def test_plan_json_reports_fixes_gating_and_models(fixed):
    _, after = fixed
    body = json.loads(json.dumps(plan_to_json(after.plan)))
    assert body["glitches"] == []
    assert body["timing_fixes"][0]["remedy"] == "clock_gating"
    assert body["clock_gated"]["zero"]["still_phase"] == "CLK high"


@needs_iverilog
def test_icarus_sees_no_spike_after_the_fix(fixed, catalog, tmp_path):
    _, after = fixed
    plan = after.plan
    period_ps = 10_000_000                      # 100 kHz
    design = write_verilog(plan, catalog, tmp_path / "design.v")
    outs = spec_signals(plan)
    vcd = tmp_path / "run.vcd"
    bench = tmp_path / "bench.v"
    bench.write_text("\n".join([
        "`timescale 1ns/1ps", "module tb;", "  reg clk;", f"  wire {', '.join(outs)};",
        f"  {verilog_module_name(plan.name)} dut (.clk(clk), {', '.join(f'.{o}({o})' for o in outs)});",
        # falling-edge counter: CLK low in the first half of each tick, high in the second
        "  initial begin clk = 1'b0; forever begin #5000 clk = 1'b1; #5000 clk = 1'b0; end end",
        f'  initial begin $dumpfile("{vcd}"); $dumpvars(0, tb); #9999.999;',
        '    repeat (32) begin $display("S %b", zero); #10000; end $finish; end',
        "endmodule", ""]))
    subprocess.run(["iverilog", "-g2001", "-o", str(tmp_path / "x"), str(design), str(bench)],
                   check=True, capture_output=True, text=True)
    out = subprocess.run(["vvp", "-n", str(tmp_path / "x")], check=True, capture_output=True,
                         text=True).stdout
    samples = [line.split()[1] == "1" for line in out.splitlines() if line.startswith("S ")]
    assert samples == [t % 16 == 0 for t in range(32)]         # the spec, sampled before each edge
    from vcdvcd import VCDVCD

    wave = [(int(t), v) for t, v in VCDVCD(str(vcd))["tb.zero"].tv]
    settled = [(t, v) for t, v in wave if v in "01"][1:]           # after the first known level
    rises = [t for t, v in settled if v == "1"]
    falls = [t for t, v in settled if v == "0"]
    # One clean pulse per asserted tick (0, 16 and 32 = the next cycle's 0), inside the
    # clock's still half; it ends just after the next counting edge; nothing else moves.
    assert [t // period_ps for t in rises] == [0, 16, 32]
    assert all(t % period_ps >= period_ps // 2 for t in rises)
    assert [t // period_ps for t in falls] == [1, 17]
    assert all(a[1] != b[1] for a, b in zip(settled, settled[1:]))


def test_not_applicable_when_no_gate_is_left_and_the_rc_offer(tmp_path, catalog):
    spec, stock = _files(tmp_path, {"74HC4040": 1, "74HC4002": 1, "74HC14": 1},
                         "resistors: [10k, 22k]\ncapacitors: [220p, 330p, 1n]\n")
    design = make_plan(spec, stock, catalog=catalog, fix=["glitches"])
    record, = design.plan.timing_fixes
    assert record.remedy == "note" and not record.applied
    assert list(record.glitches_after) == ZERO_SPIKES
    assert any(t.remedy == "clock_gating" and t.result.startswith("not applicable")
               for t in record.tried)
    offer, = [o for o in design.plan.rc_offers if o.problem == "glitch"]
    assert offer.applicable and offer.receiver == "74HC14" and offer.applied is False
    assert "unit A" in offer.stages[0] and "unit B" in offer.stages[1]
    # The RC time constant with the catalog's typical VT+ (74HC14 at 5 V) reproduces the offer.
    vt = catalog.parts["74HC14"].thresholds
    from synth.analog import thresholds_at

    row = thresholds_at(vt, 5.0)["vt_plus"]
    t_typ = offer.values.r_ohm * offer.values.c_farad * math.log(5.0 / (5.0 - row["typ"]))
    assert offer.rising_ns[1] == pytest.approx(t_typ * 1e9, abs=0.1)
    assert offer.rising_ns[0] > max(g.width_max_ns for g in design.plan.glitches)
    assert offer.rising_ns[2] < 10_000 / 2          # well inside the 10 us tick
    assert any("R 10 kΩ" in w or "R 22 kΩ" in w for w in offer.values.wiring)


# ---------------------------------------------------------------- a shipped example, fixed

def _icarus(plan, catalog, folder, period_ps: int, ticks: int):
    """Run the exported Verilog in Icarus: samples 1 ps before each counting edge, and
    every DUT net's changes (time ps, value)."""
    from vcdvcd import VCDVCD

    design = write_verilog(plan, catalog, folder / "design.v")
    outs = spec_signals(plan)
    start = "1" if plan.clock_edge == "rising" else "0"
    other = "0" if start == "1" else "1"
    half = period_ps / 2000
    vcd = folder / "run.vcd"
    (folder / "bench.v").write_text("\n".join([
        "`timescale 1ns/1ps", "module tb;", "  reg clk;", f"  wire {', '.join(outs)};",
        f"  {verilog_module_name(plan.name)} dut (.clk(clk), {', '.join(f'.{o}({o})' for o in outs)});",
        f"  initial begin clk = 1'b{start}; forever begin #({half}) clk = 1'b{other}; #({half}) "
        f"clk = 1'b{start}; end end",
        f'  initial begin $dumpfile("{vcd}"); $dumpvars(0, tb); #({(period_ps - 1) / 1000});',
        f'    repeat ({ticks}) begin $display("S {" ".join("%b" for _ in outs)}", {", ".join(outs)}); '
        f"#({period_ps / 1000}); end $finish; end", "endmodule", ""]))
    subprocess.run(["iverilog", "-g2001", "-o", str(folder / "x"), str(design), str(folder / "bench.v")],
                   check=True, capture_output=True, text=True)
    out = subprocess.run(["vvp", "-n", str(folder / "x")], check=True, capture_output=True, text=True).stdout
    rows = [line.split()[1:] for line in out.splitlines() if line.startswith("S ")]
    samples = {o: [row[i] == "1" for row in rows] for i, o in enumerate(outs)}
    dump = VCDVCD(str(vcd))
    waves = {name[len("tb.dut."):]: [(int(t), v) for t, v in dump[name].tv]
             for name in dump.signals if name.startswith("tb.dut.")}
    return samples, waves


@needs_iverilog
def test_fixed_example_cosimulates_without_unreported_spikes(catalog, tmp_path):
    # The sample-and-hold example: frame (one-tick windows) is gated with the clock by --fix
    # glitches; ready has a 24-tick window, which gating would chop into one pulse per
    # tick, and the bin has no flip-flop to register it, so it keeps its decode and a note
    # (track selects the S/H switch, which gating would throw over every half
    # tick, so it keeps its decode and a note too); Icarus must show, where the plan reports no glitch, at most one change
    # in each half tick of a gated signal and in each tick of the others.
    from synth.inventory import data_path, example_path

    design = make_plan(example_path("sample_hold.yaml"), data_path("bins", "sample_hold.yaml"),
                       catalog=catalog, fix=["glitches"])
    plan, spec = design.plan, design.spec
    assert set(plan.strobed) == {"frame"}
    ready, = [r for r in plan.timing_fixes if r.signal == "ready"]
    assert ready.remedy == "note"
    assert any(t.remedy == "clock_gating" and "several ticks" in t.result for t in ready.tried)
    assert any(t.remedy == "registered" and "flip-flop" in t.result for t in ready.tried)
    track, = [r for r in plan.timing_fixes if r.signal == "track"]
    assert track.remedy == "note" and any("several ticks" in t.result for t in track.tried)
    period_ps = timing.ps(1e9 / spec.clock.frequency_hz)
    cycle = spec.cycle
    samples, waves = _icarus(plan, catalog, tmp_path, period_ps, 2 * cycle)
    zero_delay = simulate_ticks(plan)
    names = verilog_names(plan, catalog)
    reported = {(g.signal, g.at_tick) for g in plan.glitches}
    for name, sig in spec.signals.items():
        assert samples[name] == [zero_delay[name][t % cycle] for t in range(2 * cycle)]
        active = plan.signals[name].polarity == "high"
        for t in range(2 * cycle):                    # the spec itself, tick by tick
            if t % cycle not in sig.dont_care and t % cycle in sig.high:
                assert samples[name][t] == active, f"{name} tick {t}"
        wave = [(t, v) for t, v in waves[names[plan.signals[name].net]] if t >= period_ps]
        windows = 2 if name in plan.strobed else 1
        for k in range(1, 2 * cycle):
            if (name, k % cycle) in reported:
                continue
            for w in range(windows):
                lo = k * period_ps + w * period_ps // windows
                hi = lo + period_ps // windows
                moves = [x for x in wave if lo <= x[0] < hi]
                assert len(moves) <= 1, f"{name}: unreported spike in tick {k}: {moves}"


def test_synchronous_counter_from_the_bin_when_no_gate_is_left(tmp_path, catalog):
    # A 9-stage all-zero decode on a 4040 (one chip) spikes on every power-of-two entry
    # (common practice); the bin has no AND/NAND for gating, but two 4520 dual synchronous
    # counters: re-allocated on them, only the entries where one 4-bit unit carries into the
    # next (16 and 256, ripple between units) still pass through the all-zero state.
    spec = tmp_path / "s.yaml"
    spec.write_text("name: sync-try\nsupply: 5 V\nclock: {frequency: 10 kHz}\ncycle: 512\n"
                    "signals:\n  zero: {high: [0]}\n")
    stock = tmp_path / "b.yaml"
    stock.write_text("parts:\n  4040: 1\n  4520: 2\n  4002: 2\n  4025: 1\n  4001: 1\n")
    before = make_plan(spec, stock, catalog=catalog)
    assert _ticks(before) == [2, 4, 8, 16, 32, 64, 128, 256]
    after = make_plan(spec, stock, catalog=catalog, fix=["glitches"])
    record, = after.plan.timing_fixes
    assert record.remedy == "synchronous_counter" and record.cost.chips == 1
    assert {c.part for c in after.counter.chips} == {"4520"}
    states = {g.at_tick for g in after.plan.glitches if "states" in g.models}
    assert states == {16, 256}
    assert list(simulate_ticks(after.plan)["zero"]) == [t == 0 for t in range(512)]


def test_another_decode_choice_where_the_transient_is_a_dont_care(tmp_path, catalog):
    # s is asserted at tick 14 only, tick 6 does not matter.  The cheapest decode,
    # Q3·Q2·Q1' (covering 6 and 14), spikes on the entry to 8: the ripple passes through
    # 0110 (7 = 0111 -> 0110 -> 0100 -> 0000 -> 1000, common practice).  With 6 given the
    # steady (low) level the decode becomes Q4·Q3·Q2·Q1' and that spike is gone; the one on
    # the entry to 0 passes through 14, where s is specified, so the clock gating takes it.
    spec = tmp_path / "s.yaml"
    spec.write_text("name: dc-try\nsupply: 5 V\nclock: {frequency: 100 kHz}\ncycle: 16\n"
                    "signals:\n  s: {high: [14], dont_care: [6]}\n")
    stock = tmp_path / "b.yaml"
    stock.write_text("parts:\n  74HC4040: 1\n  74HC21: 1\n  74HC04: 1\n")
    before = make_plan(spec, stock, catalog=catalog)
    assert {(g.at_tick, g.transient_state) for g in before.plan.glitches} == {(0, 14), (8, 6)}
    after = make_plan(spec, stock, catalog=catalog, fix=["glitches"])
    record, = after.plan.timing_fixes
    assert record.remedies_applied == ("decode_choice", "clock_gating")
    assert record.tried[0].remedy == "decode_choice"
    assert record.tried[0].result.startswith("tried: 1 glitches left (was 2), +0 chips")
    assert after.plan.glitches == [] and record.cost == Cost(chips=0, gates=1)
    got = simulate_ticks(after.plan)["s"]
    assert [got[t] for t in range(16) if t != 6] == [t == 14 for t in range(16) if t != 6]
