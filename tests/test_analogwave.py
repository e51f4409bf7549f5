"""Staircase voltages and switch positions along the simulated trace (synth/analogwave.py),
as the VCD and the SVG show them.

The VCD is read back by vcdvcd and pyvcd's tokenizer (both written against
IEEE 1364-2001 section 18; a ``real`` variable's changes are ``r<value>``,
section 18.2.3.8 / 18.2.3.9 as we read it, from memory of the section
numbers).  Every staircase value sampled in the middle of a tick must be the
ladder's level for that tick's code (bits of the tick index, as the spec
says), and the switch must join its ``on`` net exactly on the ticks its
select is asserted (the spec).  The SVG must stay well-formed XML with one
row per analog quantity.
"""

from __future__ import annotations

import io
import shutil
import subprocess
import xml.etree.ElementTree as ET

import pytest

from synth.analogwave import analog_waves
from synth.exports.svg import trace_to_svg
from synth.exports.vcd import trace_to_vcd, write_vcd
from synth.exports.verilog import spec_signals, write_verilog
from synth.inventory import data_path, example_path, load_catalog
from synth.netlist import verilog_module_name
from synth.pipeline import make_plan

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def example():
    return make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml"),
                     catalog=load_catalog())


def _code(ladder, tick: int) -> int:
    return sum(((tick >> bit) & 1) << k for k, bit in enumerate(ladder.bits))


def test_staircase_follows_the_tick_code_mid_tick(example):
    plan, trace = example.plan, example.trace
    ramp = next(w for w in analog_waves(trace, plan) if w.name == "ramp")
    ladder = plan.ladders["ramp"]
    for tick in range(trace.cycle):
        assert ramp.value_at((tick + 0.5) * trace.period_ns) == ladder.levels[_code(ladder, tick)], tick
    # the ripple counter's passing codes show between steps (the 7 -> 8 step passes 6, 4, 0)
    entry = 32 * trace.period_ns
    passing = [v for t, v in ramp.changes if entry < t < entry + 2000]
    assert passing[0] == ladder.levels[6] and passing[-1] == ladder.levels[8]


def test_switch_position_and_common_follow_the_select(example):
    plan, trace, spec = example.plan, example.trace, example.spec
    waves = {w.name: w for w in analog_waves(trace, plan)}
    position, common = waves["adc_in_on"], waves["adc_in"]
    ladder = plan.ladders["ramp"]
    for tick in range(trace.cycle):
        mid = (tick + 0.5) * trace.period_ns
        on = tick in spec.signals["sweep"].high
        assert position.value_at(mid) == (1.0 if on else 0.0), tick
        assert common.value_at(mid) == (ladder.levels[_code(ladder, tick)] if on else 0.0), tick


def test_vcd_real_variables_read_back_by_vcdvcd(example, tmp_path):
    from vcdvcd import VCDVCD

    plan, trace = example.plan, example.trace
    dump = VCDVCD(str(write_vcd(trace, plan, tmp_path / "adc.vcd")))
    scope = f"{verilog_module_name(plan.name)}.analog"
    ladder = plan.ladders["ramp"]
    ramp = dump[f"{scope}.ramp"]
    assert ramp.var_type == "real"
    for tick in (0, 5, 17, 63, 64, 100):
        got = float(ramp[int((tick + 0.5) * trace.period_ns * 1000)])
        assert got == pytest.approx(ladder.levels[_code(ladder, tick)], abs=1e-5), tick
    position = dump[f"{scope}.adc_in_on"]
    assert position[int(10.5 * trace.period_ns * 1000)] == "1"
    assert position[int(70.5 * trace.period_ns * 1000)] == "0"


def test_vcd_tokens_by_pyvcd_declare_real_and_wire(example):
    from vcd.reader import TokenKind, tokenize

    text = trace_to_vcd(example.trace, example.plan, date="2026-01-01")
    tokens = list(tokenize(io.BytesIO(text.encode())))
    declared = {t.data.reference: t.data for t in tokens if t.kind is TokenKind.VAR}
    assert declared["ramp"].type_.value == "real" and declared["adc_in"].type_.value == "real"
    assert declared["adc_in_on"].type_.value == "wire" and declared["adc_in_on"].size == 1
    reals = [t.data.value for t in tokens if t.kind is TokenKind.CHANGE_REAL
             and t.data.id_code == declared["ramp"].id_code]
    assert max(reals) == pytest.approx(max(example.plan.ladders["ramp"].levels), abs=1e-5)


def test_svg_draws_a_row_per_analog_quantity(example):
    root = ET.fromstring(trace_to_svg(example.trace, example.plan).encode())
    main = next(g for g in root.iter(f"{SVG}g") if g.get("id") == "main")
    rows = {g.get("data-net"): g.get("data-kind") for g in main.iter(f"{SVG}g")
            if "analog" in (g.get("class") or "") or "switch" in (g.get("class") or "")}
    assert rows == {"ramp": "staircase", "adc_in_on": "switch", "adc_in": "common"}


needs_iverilog = pytest.mark.skipif(
    shutil.which("iverilog") is None or shutil.which("vvp") is None,
    reason="Icarus Verilog is not installed (Debian package iverilog; .ci/run installs it)")


@needs_iverilog
def test_verilog_reals_give_the_levels_in_icarus(example, tmp_path):
    """Icarus Verilog samples the model's staircase and switch reals just before each
    counting edge: every tick shows that tick's ladder level (the spec's code) and the
    switch joins the staircase exactly on the ticks its select is asserted."""
    plan, trace, spec = example.plan, example.trace, example.spec
    design = write_verilog(plan, load_catalog(), tmp_path / "design.v")
    outs = spec_signals(plan)
    period = trace.period_ns
    start = "1" if trace.edge == "rising" else "0"
    other = "0" if start == "1" else "1"
    bench = tmp_path / "bench.v"
    bench.write_text("\n".join([
        "`timescale 1ns/1ps",
        "module tb;",
        "  reg clk;",
        f"  wire {', '.join(outs)};",
        f"  {verilog_module_name(plan.name)} dut (.clk(clk), {', '.join(f'.{o}({o})' for o in outs)});",
        f"  initial begin clk = 1'b{start}; forever begin #({period / 2:.3f}) clk = 1'b{other}; "
        f"#({period / 2:.3f}) clk = 1'b{start}; end end",
        "  initial begin",
        f"    #({period - 1:.3f});",
        f'    repeat ({trace.cycle}) begin $display("A %f %b %f", dut.ramp, dut.adc_in_on, dut.adc_in); '
        f"#({period:.3f}); end",
        "    $finish;",
        "  end",
        "endmodule", ""]))
    compiled = tmp_path / "x.vvp"
    subprocess.run(["iverilog", "-g2001", "-o", str(compiled), str(design), str(bench)],
                   check=True, capture_output=True, text=True)
    out = subprocess.run(["vvp", "-n", str(compiled)], check=True, capture_output=True, text=True).stdout
    rows = [line.split()[1:] for line in out.splitlines() if line.startswith("A ")]
    assert len(rows) == trace.cycle
    ladder = plan.ladders["ramp"]
    for tick, (ramp, on, common) in enumerate(rows):
        level = ladder.levels[_code(ladder, tick)]
        asserted = tick in spec.signals["sweep"].high
        assert float(ramp) == pytest.approx(level, abs=1e-6), tick
        assert on == ("1" if asserted else "0"), tick
        assert float(common) == pytest.approx(level if asserted else 0.0, abs=1e-6), tick


def test_a_driver_the_trace_lacks_follows_the_tick_count(example):
    """A ladder bit no decode reads is not simulated: its level comes from the tick index."""
    from types import SimpleNamespace

    trace = example.trace
    ladder = SimpleNamespace(kind="r-2r", bits=(6,), drivers=[("U1", 2, "not_simulated")],
                             levels=(0.0, 2.5))
    plan = SimpleNamespace(ladders={"half": ladder}, switches={}, supply=5.0)
    wave = analog_waves(trace, plan)[0]
    for tick in (0, 63, 64, 127):
        assert wave.value_at((tick + 0.5) * trace.period_ns) == (2.5 if tick >= 64 else 0.0), tick
    assert wave.changes[0] == (64 * trace.period_ns, 2.5)
