"""Start-up benchmark: the demo as a fresh process, timed several times, the
median beside the issue-12 target (under 1.0 s without what-the-bin-lacks).

Run from the checkout: ``python3 bench/bench_startup.py [--runs N] [--root DIR]
[--before DIR]``.  ``--root`` times another checkout instead of this one;
``--before`` times a second checkout (e.g. an earlier commit unpacked with
``git archive``) alternately with the first and prints it beside it, so
before/after figures meet the same load.

- Each row runs ``python -m synth ...`` as a new process N times (default 5)
  and prints the median wall time and the median CPU time of the child (user
  + system, from ``getrusage``; on a machine others are loading, the CPU time
  is the steadier figure, the wall time the one a user waits for).
- The package is byte-compiled first (``compileall``) and the children run
  without PYTHONDONTWRITEBYTECODE, as an installed package would run.
- Rows: ``binsynth --help``; ``plan`` of examples/sample_hold.yaml with
  ``--lacks 0`` (what the bin lacks skipped; the target row), with
  ``--effort quick``, and at the default effort with what the bin lacks;
  ``binsynth demo`` (every output file written into a temporary folder).
- A second part runs the same plan in one fresh process, stage by stage, and
  prints where the CPU time goes (imports, catalog, spec and bin, mapping, the
  rest), so the next saving is easy to find.

Targets: the ``--lacks 0`` plan under 1.0 s wall (median), printed met/MISSED;
the rows with what the bin lacks are printed beside it for comparison (no
fixed target: as low as possible).
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SPEC = "examples/sample_hold.yaml"
BIN = "inventory/bins/sample_hold.yaml"
TARGET_SECONDS = 1.0


def byte_compile(root: Path) -> None:
    """As installed: every module compiled once, not at each start."""
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(root / "synth")], check=True,
                   cwd=root, env=child_env())


def child_env() -> dict[str, str]:
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


def fresh_process(args: list[str], root: Path = ROOT) -> tuple[float, float]:
    """(wall seconds, CPU seconds of the child) of one ``python -m synth ARGS`` run."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "synth", *args], cwd=root, env=child_env(),
                          stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if done.returncode not in (0,):
        raise SystemExit(f"binsynth {' '.join(args)} exited {done.returncode}: {done.stderr.strip()}")
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


ROWS = [
    ("binsynth --help", ["--help"]),
    ("plan sample_hold --lacks 0", ["plan", SPEC, "--bin", BIN, "--lacks", "0"]),
    ("plan sample_hold --effort quick", ["plan", SPEC, "--bin", BIN, "--effort", "quick"]),
    ("plan sample_hold (with what the bin lacks)", ["plan", SPEC, "--bin", BIN]),
    ("demo (every output, with what the bin lacks)", ["demo", "--out", "DIR"]),
]


def timed_rows(runs: int, roots: list[Path], rows=ROWS) -> list[tuple[str, list[tuple[float, float]]]]:
    """Per row and per checkout: (median wall, median CPU).  With two checkouts the
    runs alternate between them, so both meet the same load."""
    results = []
    with tempfile.TemporaryDirectory() as tmp:
        for label, args in rows:
            times: list[list[tuple[float, float]]] = [[] for _ in roots]
            for i in range(runs):
                for k, root in enumerate(roots):
                    run = [str(Path(tmp) / f"demo{k}-{i}") if word == "DIR" else word for word in args]
                    times[k].append(fresh_process(run, root))
            results.append((label, [(statistics.median(w for w, _ in t), statistics.median(c for _, c in t))
                                    for t in times]))
    return results


def stages(root: Path = ROOT) -> list[tuple[str, float]]:
    """One plan in this process, stage by stage (a fresh interpreter, so imports count)."""
    code = r"""
import time, sys
t0 = time.process_time()
import synth.commands.plan
from synth import flow, inventory, stages, mapper
t1 = time.process_time()
catalog = inventory.load_catalog()
t2 = time.process_time()
spent = {"mapping": 0.0}
inner = stages.map_decode
def timed(*a, **k):
    start = time.process_time()
    try:
        return inner(*a, **k)
    finally:
        spent["mapping"] += time.process_time() - start
flow.map_decode = timed
start = time.process_time()
flow.make_plan(sys.argv[1], sys.argv[2], lacks=False, catalog=catalog)
t3 = time.process_time()
print(t1 - t0, t2 - t1, spent["mapping"], t3 - start - spent["mapping"])
"""
    done = subprocess.run([sys.executable, "-c", code, SPEC, BIN], cwd=root, env=child_env(),
                          capture_output=True, text=True, check=True)
    imports, catalog, mapping, rest = (float(x) for x in done.stdout.split())
    return [("imports (the plan command and the flow)", imports), ("catalog load", catalog),
            ("mapping (map_decode)", mapping), ("the rest of the plan (spec, bin, counter, timing, ...)", rest)]


def main(argv: list[str]) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="fresh processes per row (default 5)")
    parser.add_argument("--root", type=Path, default=ROOT, help="the checkout to time (default: this one)")
    parser.add_argument("--before", type=Path, default=None,
                        help="another checkout timed alternately with it, printed beside it")
    args = parser.parse_args(argv)
    roots = [args.root.resolve()] + ([args.before.resolve()] if args.before else [])
    for root in roots:
        byte_compile(root)
    load = os.getloadavg()[0]
    print(f"binsynth start-up ({roots[0]}), fresh processes, median of {args.runs} "
          f"(load average {load:.1f} on {os.cpu_count()} cores)")
    if args.before:
        print(f"beside: {roots[1]} (runs alternate, so both meet the same load)")
    head = f"{'run':46} {'wall':>7} {'cpu':>7}"
    if args.before:
        head += f" {'before':>8} {'cpu':>7} {'ratio':>6}"
    print(head + "   target")
    met = True
    for label, figures in timed_rows(args.runs, roots):
        wall, cpu = figures[0]
        line = f"{label:46} {wall:6.2f}s {cpu:6.2f}s"
        if args.before:
            old_wall, old_cpu = figures[1]
            line += f" {old_wall:7.2f}s {old_cpu:6.2f}s {cpu / old_cpu:6.2f}"
        if "--lacks 0" in label:
            ok = wall < TARGET_SECONDS
            met = met and ok
            line += f"   wall < {TARGET_SECONDS:.1f} s: {'met' if ok else 'MISSED'}"
        print(line)
    print("\nwhere the CPU time goes (one run in one fresh process, --lacks 0):")
    for label, seconds in stages(roots[0]):
        print(f"  {label:56} {seconds:6.3f} s")
    return 0 if met else 1


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
