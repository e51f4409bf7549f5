"""Icarus Verilog co-simulation shared by the flip-flop and counter-cascade tests.

``run_plan(plan, catalog, period_ps, ticks, folder) -> (samples, waves)``: the
exported module compiled with ``iverilog -g2001`` beside a bench written here
(a 50 % clock starting at the level the counting edge leaves it in, each spec
output sampled 1 ps before each counting edge, every net dumped); ``samples``
per output, ``waves`` per net identifier as (time in ps, value) from the VCD
(read with vcdvcd).
"""

from __future__ import annotations

import shutil
import subprocess
from pathlib import Path

import pytest

from synth.exports.verilog import spec_signals, write_verilog
from synth.netlist import verilog_module_name

needs_iverilog = pytest.mark.skipif(
    shutil.which("iverilog") is None or shutil.which("vvp") is None,
    reason="Icarus Verilog is not installed (Debian package iverilog; .ci/run installs it)")


def bench_text(plan, period_ps: int, ticks: int, vcd: Path) -> str:
    outs = spec_signals(plan)
    half = period_ps // 2
    start = "1" if plan.clock_edge == "rising" else "0"
    other = "0" if start == "1" else "1"
    ns = lambda p: f"{p / 1000:.3f}"  # noqa: E731
    return "\n".join([
        "`timescale 1ns/1ps", "module tb;", "  reg clk;", f"  wire {', '.join(outs)};",
        f"  {verilog_module_name(plan.name)} dut (.clk(clk), {', '.join(f'.{o}({o})' for o in outs)});",
        f"  initial begin clk = 1'b{start}; forever begin #({ns(half)}) clk = 1'b{other}; "
        f"#({ns(half)}) clk = 1'b{start}; end end",
        "  initial begin", f'    $dumpfile("{vcd}"); $dumpvars(0, tb);', f"    #({ns(period_ps - 1)});",
        f'    repeat ({ticks}) begin $display("S {" ".join("%b" for _ in outs)}", {", ".join(outs)}); '
        f"#({ns(period_ps)}); end", "    $finish;", "  end", "endmodule", ""])


def run_plan(plan, catalog, period_ps: int, ticks: int, folder: Path):
    from vcdvcd import VCDVCD

    design = write_verilog(plan, catalog, folder / "design.v")
    bench = folder / "bench.v"
    bench.write_text(bench_text(plan, period_ps, ticks, folder / "w.vcd"))
    subprocess.run(["iverilog", "-g2001", "-o", str(folder / "x.vvp"), str(design), str(bench)],
                   check=True, capture_output=True, text=True)
    out = subprocess.run(["vvp", "-n", str(folder / "x.vvp")], check=True, capture_output=True,
                         text=True).stdout
    rows = [line.split()[1:] for line in out.splitlines() if line.startswith("S ")]
    samples = {o: [r[i] == "1" for r in rows] for i, o in enumerate(spec_signals(plan))}
    dump = VCDVCD(str(folder / "w.vcd"))
    waves = {n[len("tb.dut."):]: [(int(t), v) for t, v in dump[n].tv]
             for n in dump.signals if n.startswith("tb.dut.")}
    return samples, waves
