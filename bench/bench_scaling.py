"""Benchmark: decode and plan time and memory against signal count and cycle length, in one run.

Usage: python bench/bench_scaling.py [--cap SECONDS] [--quick]

Each cell runs ``binsynth decode`` or ``binsynth plan`` (``--lacks 0``) in a
fresh Python process through ``synth.cli.main`` on generated specs of our
own (each signal one window at a spread-out position), and prints the wall
time, the peak memory, the exit code and the time relative to the smallest
row, side by side, as a curve:

- signals 10, 30, 100 and 500 at a cycle of 4096 ticks (500 is past
  ``synth.limits.SIGNALS``: the row shows how quickly it is refused);
- cycles 64, 4096, 65536 and 1048576 ticks with 4 signals, and 2**24 (past
  ``synth.limits.CYCLE_TICKS``, refused before any tick set is built).

A cell that runs past the cap is stopped and printed as such.  Targets: a
refused input answers in about the time of the smallest run; decode time
grows no faster than signals x cycle.  Speed is never asserted in tests.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

BIN = """\
# a generous drawer for the scaling runs (our own; not a real build)
parts:
  CD4040BE: 2
  CD4020BE: 2
  CD4011BE: 60
  CD4001BE: 40
  CD4069UBE: 20
  CD4012BE: 40
  CD4002BE: 40
  CD4073BE: 30
  CD4075BE: 30
  CD4078BE: 20
"""

RUNNER = """
import json, resource, sys, io, contextlib
sys.path.insert(0, sys.argv[1])
from synth.cli import main
out, err = io.StringIO(), io.StringIO()
with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
    code = main(sys.argv[2:])
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
print(json.dumps({"code": code, "peak_mb": peak / 1024, "error": (err.getvalue().strip().splitlines() or [""])[-1]}))
"""


def spec_text(signals: int, cycle: int) -> str:
    """``signals`` outputs, each one window of about 1/16 of the cycle, at spread-out starts."""
    width = max(1, cycle // 16)
    rows = []
    for i in range(signals):
        start = (i * 7919) % max(1, cycle - width)
        rows.append(f"  s{i}: {{high: [[{start}, {start + width}]]}}\n")
    return f"name: scale-{signals}x{cycle}\ncycle: {cycle}\nsignals:\n" + "".join(rows)


def run_cell(command: str, spec: Path, stock: Path, cap: float) -> dict:
    argv = [command, str(spec), "--bin", str(stock)] + (["--lacks", "0"] if command == "plan" else [])
    start = time.perf_counter()
    try:
        done = subprocess.run([sys.executable, "-c", RUNNER, str(ROOT), *argv], capture_output=True,
                              text=True, timeout=cap)
    except subprocess.TimeoutExpired:
        return {"seconds": None, "code": None, "peak_mb": None, "error": f"stopped at the {cap:g} s cap"}
    seconds = time.perf_counter() - start
    try:
        result = json.loads(done.stdout.strip().splitlines()[-1])
    except (IndexError, json.JSONDecodeError):
        result = {"code": done.returncode, "peak_mb": None,
                  "error": (done.stderr.strip().splitlines() or [""])[-1]}
    result["seconds"] = seconds
    return result


def show_curve(title: str, label: str, rows: list[tuple[int, dict, dict]]) -> None:
    print(f"\n{title}")
    print(f"{label:>10} | {'decode s':>9} {'x first':>8} {'MB':>6} {'exit':>4} | "
          f"{'plan s':>9} {'x first':>8} {'MB':>6} {'exit':>4}")
    base = {"decode": rows[0][1].get("seconds"), "plan": rows[0][2].get("seconds")}
    notes = []
    for value, decode, plan in rows:
        cells = []
        for name, cell in (("decode", decode), ("plan", plan)):
            secs = cell.get("seconds")
            ratio = f"{secs / base[name]:.1f}x" if secs and base[name] else "-"
            mb = f"{cell['peak_mb']:.0f}" if cell.get("peak_mb") else "-"
            cells.append(f"{secs if secs is None else round(secs, 2)!s:>9} {ratio:>8} {mb:>6} "
                         f"{cell.get('code')!s:>4}")
            if cell.get("code") not in (0, None) and cell.get("error"):
                message = cell["error"].split(": ", 1)[-1]
                notes.append(f"  {label} {value}, {name}: {message[:150]}")
            elif cell.get("code") is None:
                notes.append(f"  {label} {value}, {name}: {cell['error']}")
        print(f"{value:>10} | {cells[0]} | {cells[1]}")
    for note in notes:
        print(note)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=180.0, help="seconds per cell before it is stopped")
    parser.add_argument("--quick", action="store_true", help="the two smallest rows of each curve only")
    args = parser.parse_args()
    print(f"binsynth scaling, {platform.python_implementation()} {platform.python_version()}, "
          f"{os.cpu_count()} CPUs, load {os.getloadavg()[0]:.1f}; cap {args.cap:g} s per cell")
    signal_counts = (10, 30, 100, 500)
    cycles = (64, 4096, 65536, 1 << 20, 1 << 24)
    if args.quick:
        signal_counts, cycles = signal_counts[:2] + (500,), cycles[:2] + (1 << 24,)
    with tempfile.TemporaryDirectory(prefix="binsynth-scale-") as folder:
        work = Path(folder)
        stock = work / "drawer.yaml"
        stock.write_text(BIN)
        rows = []
        for count in signal_counts:
            spec = work / f"s{count}.yaml"
            spec.write_text(spec_text(count, 4096))
            rows.append((count, run_cell("decode", spec, stock, args.cap), run_cell("plan", spec, stock, args.cap)))
        show_curve("against signal count (cycle 4096 ticks)", "signals", rows)
        rows = []
        for cycle in cycles:
            spec = work / f"c{cycle}.yaml"
            spec.write_text(spec_text(4, cycle))
            rows.append((cycle, run_cell("decode", spec, stock, args.cap), run_cell("plan", spec, stock, args.cap)))
        show_curve("against cycle length (4 signals)", "cycle", rows)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
