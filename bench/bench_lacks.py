"""What-the-bin-lacks benchmark: every shipped example planned as a fresh process
with and without the search, side by side, and the issue-12 targets as met/MISSED.

Run from the checkout: ``python3 bench/bench_lacks.py [--repeat N] [--root DIR]``.

- For each shipped example (examples/NAME.yaml with inventory/bins/NAME.yaml):
  ``python3 -m synth plan SPEC --bin BIN --json FILE`` (what the bin lacks searched at
  the default effort) and the same with ``--lacks 0``, each ``--repeat`` times (default
  3); the best wall time, the child's CPU time (user + system, the worker process
  included) and the ratio of the two walls are printed, with the search's reach
  (candidates re-planned of candidates) and its best suggestion from the plan JSON.
- The demo: ``python3 -m synth demo --out DIR`` (sample_hold, what the bin lacks on,
  every output file written), the same number of times.
- ``--root DIR`` times another checkout (say an export of an earlier commit) with this
  script, for before/after figures.  The package is byte-compiled first, as an
  installed package would be (this shell may forbid writing bytecode at import time,
  which would make every fresh process compile every module).

Targets (issue 12): what the bin lacks finishes its whole candidate list at the default
effort on every shipped example; the demo with it runs under ``DEMO_TARGET`` s wall
(best of the runs) as a fresh process on a 2-core machine.  The sample_hold row
without the search is printed as well: it is the floor the demo cannot go below.  Wall times depend on how busy the machine is
(the load average is printed); the CPU figures are the steadier ones.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

SHIPPED = ("adc_staircase", "led_scanner", "sample_hold", "stepper", "ultrasonic_burst")
DEMO_TARGET = 1.0        # seconds: the demo with what the bin lacks, fresh process (issue 12)


def fresh_process(root: Path, args: list[str], timeout: float = 900) -> tuple[float, float, int]:
    """``python -m synth ARGS`` in a new process from ``root``: (wall s, CPU s, exit code)."""
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPATH"] = str(root)
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    proc = subprocess.run([sys.executable, "-m", "synth", *args], cwd=root, env=env,
                          capture_output=True, text=True, timeout=timeout)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    if proc.returncode:
        print(f"    exit {proc.returncode}: {proc.stderr.strip()[:200]}")
    return wall, cpu, proc.returncode


def best_of(root: Path, args: list[str], repeat: int) -> tuple[float, float]:
    """Best wall and best CPU time over ``repeat`` fresh runs ("{run}" in an argument
    becomes the run's number, so each run may write a new folder)."""
    runs = [fresh_process(root, [a.format(run=n) for a in args]) for n in range(repeat)]
    return min(w for w, _, _ in runs), min(c for _, c, _ in runs)


def reach(plan_json: Path) -> tuple[bool, str]:
    """(complete?, 'tried/candidates, best PART -> N chips, G gates') from a plan JSON."""
    if not plan_json.exists():
        return False, "no plan JSON"
    lacks = json.loads(plan_json.read_text()).get("bin_lacks") or {}
    if not lacks:
        return False, "not searched"
    best = lacks.get("best")
    advice = (f"{best['part']}: {best['chips_with']} chips, {best['gates_with']} gates"
              if best else "no single extra chip type helps")
    return bool(lacks.get("complete")), f"{lacks.get('tried')}/{lacks.get('candidates')} re-planned, {advice}"


def main(argv: list[str]) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--root", type=Path, default=Path(__file__).resolve().parent.parent)
    args = parser.parse_args(argv)
    root = args.root.resolve()
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(root / "synth")], check=True,
                   capture_output=True)
    print(f"checkout {root}, best of {args.repeat} fresh processes, load average "
          f"{os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    print(f"{'example':18s} {'with (wall / CPU)':>20s} {'without (wall / CPU)':>22s} {'ratio':>6s}  search")
    complete = 0
    with tempfile.TemporaryDirectory() as tmp:
        for name in SHIPPED:
            out = Path(tmp) / f"{name}.json"
            files = ["plan", f"examples/{name}.yaml", "--bin", f"inventory/bins/{name}.yaml"]
            with_wall, with_cpu = best_of(root, [*files, "--json", str(out)], args.repeat)
            without_wall, without_cpu = best_of(root, [*files, "--lacks", "0"], args.repeat)
            done, text = reach(out)
            complete += done
            print(f"{name:18s} {with_wall:8.2f} s / {with_cpu:5.2f} s {without_wall:10.2f} s / "
                  f"{without_cpu:5.2f} s {with_wall / without_wall:6.2f}  {text}"
                  f"{'' if done else ' (NOT complete)'}")
        demo_wall, demo_cpu = best_of(root, ["demo", "--out", str(Path(tmp) / "demo{run}")], args.repeat)
    print(f"demo (sample_hold, what the bin lacks on): {demo_wall:.2f} s wall, {demo_cpu:.2f} s CPU")
    print(f"target: what the bin lacks complete on every shipped example: {complete}/{len(SHIPPED)} "
          f"{'met' if complete == len(SHIPPED) else 'MISSED'}")
    print(f"target: demo with what the bin lacks under {DEMO_TARGET:.1f} s wall: {demo_wall:.2f} s "
          f"{'met' if demo_wall < DEMO_TARGET else 'MISSED'} (ratio {demo_wall / DEMO_TARGET:.2f})")
    print(f"load average at the end: {os.getloadavg()[0]:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
