"""Benchmark: synth.minimize.minimize against sympy.logic.SOPform, measured in one run.

Usage: python bench/bench_minimize.py [--seed N] [--cap SECONDS]

For 6, 8, 10 and 12 counter bits and 1, 4 and 16 signals, times our
multi-output minimization (default ``exact='auto'``, and Espresso alone) and
sympy's single-output SOPform run once per signal (summed), on the same seeded
window-shaped functions, and prints the ratio.  A sympy cell predicted or
found to need more than the cap is printed as skipped.  Then times the
12-bit, 16-signal problem on its own.  Targets: >= 5x faster than sympy at 10
bits; 12 bits x 16 signals under 2 s.
"""

from __future__ import annotations

import argparse
import multiprocessing as mp
import os
import platform
import random
import statistics
import sys
import time
from importlib.metadata import version
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from synth.minimize import Function, minimize  # noqa: E402

BITS = (6, 8, 10, 12)
SIGNALS = (1, 4, 16)


def window_function(rng: random.Random, nbits: int, name: str) -> Function:
    """A few runs of counter states (may wrap), unreached states and a run as don't-cares."""
    full = 1 << nbits
    cycle = full if rng.random() < 0.6 else rng.randint(full // 2 + 1, full)
    on: set[int] = set()
    for _ in range(rng.randint(1, 3)):
        start, length = rng.randrange(cycle), rng.randint(1, max(1, cycle // 3))
        on.update((start + k) % cycle for k in range(length))
    dc = set(range(cycle, full))
    if rng.random() < 0.5:
        start = rng.randrange(cycle)
        dc.update((start + k) % cycle for k in range(rng.randint(1, max(1, cycle // 8))))
    return Function(name, frozenset(on - dc), frozenset(dc))


def problem(seed: int, nbits: int, count: int) -> list[Function]:
    rng = random.Random(f"{seed}-{nbits}-{count}")
    return [window_function(rng, nbits, f"s{i}") for i in range(count)]


def time_ours(functions, nbits, repeats=3, **kwargs):
    """Best of ``repeats`` wall-clock runs, and the cover of the last."""
    best, cover = float("inf"), None
    for _ in range(repeats):
        start = time.perf_counter()
        cover = minimize(functions, nbits, **kwargs)
        best = min(best, time.perf_counter() - start)
    return best, cover


def _sympy_worker(functions, nbits, queue):
    from sympy import Or, false, symbols, true
    from sympy.logic import SOPform

    xs = [symbols(f"x{i}") for i in reversed(range(nbits))]
    terms = 0
    start = time.perf_counter()
    for f in functions:
        expr = SOPform(xs, sorted(f.on - f.dc), sorted(f.dc))
        if expr == true:
            terms += 1
        elif expr != false:
            terms += len(expr.args) if isinstance(expr, Or) else 1
    queue.put((time.perf_counter() - start, terms))


def time_sympy(functions, nbits, cap_s):
    """Sympy's total time over the signals in a child process; None past the cap."""
    queue = mp.Queue()
    child = mp.Process(target=_sympy_worker, args=(functions, nbits, queue))
    child.start()
    child.join(cap_s + 5)
    if child.is_alive():
        child.terminate()
        child.join()
        return None
    elapsed, terms = queue.get()
    return (elapsed, terms) if elapsed <= cap_s else None


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seed", type=int, default=2024)
    parser.add_argument("--cap", type=float, default=60.0, help="sympy seconds per cell")
    args = parser.parse_args(argv)

    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, {platform.system()} "
          f"{platform.release()}; Python {platform.python_version()}")
    print(f"pyeda {version('pyeda')}, python-sat {version('python-sat')}, sympy {version('sympy')}; "
          f"seed {args.seed}; sympy cap {args.cap:g} s per cell")
    print()
    head = (f"{'bits':>4} {'signals':>7} | {'ours auto':>10} {'proven':>6} {'terms':>5} | "
            f"{'espresso':>9} {'terms':>5} | {'sympy':>16} {'terms':>5} | {'sympy/ours':>10}")
    print(head)
    print("-" * len(head))
    ratios_at_10 = []
    for nbits in BITS:
        per_signal = None                       # sympy seconds per signal at this size
        for count in SIGNALS:
            functions = problem(args.seed, nbits, count)
            ours_s, cover = time_ours(functions, nbits)
            esp_s, esp_cover = time_ours(functions, nbits, exact="no")
            predicted = per_signal * count if per_signal is not None else 0.0
            sympy = None if predicted > args.cap else time_sympy(functions, nbits, args.cap)
            if sympy is None:
                sympy_text, terms_text, ratio_text = f"skipped (> {args.cap:g} s)", "", ""
            else:
                sympy_s, sympy_terms = sympy
                per_signal = sympy_s / count
                ratio = sympy_s / ours_s
                if nbits == 10:
                    ratios_at_10.append(ratio)
                sympy_text, terms_text, ratio_text = f"{sympy_s:.3f} s", str(sympy_terms), f"{ratio:.0f}x"
            print(f"{nbits:>4} {count:>7} | {ours_s:>8.3f} s {'yes' if cover.proven_minimal else 'no':>6} "
                  f"{cover.cost[0]:>5} | {esp_s:>7.3f} s {esp_cover.cost[0]:>5} | "
                  f"{sympy_text:>16} {terms_text:>5} | {ratio_text:>10}")
    print()
    print("terms: distinct product terms; ours share terms between signals, sympy's are summed per signal")
    print()

    functions = problem(args.seed, 12, 16)
    names = {f.name for f in functions}
    runs = [time_ours(functions, 12, repeats=1)[0] for _ in range(5)]
    free_runs = [time_ours(functions, 12, repeats=1, free_phase=names)[0] for _ in range(5)]
    fixed, free = statistics.median(runs), statistics.median(free_runs)
    print(f"12 bits x 16 signals, default settings: median {fixed:.3f} s of 5 "
          f"(min {min(runs):.3f}, max {max(runs):.3f})")
    print(f"12 bits x 16 signals, every phase free:  median {free:.3f} s of 5 "
          f"(min {min(free_runs):.3f}, max {max(free_runs):.3f})")
    print()
    at_10 = f"{min(ratios_at_10):.0f}x" if ratios_at_10 else "no sympy cell finished"
    ok_10 = bool(ratios_at_10) and min(ratios_at_10) >= 5
    print(f"target >= 5x faster than sympy at 10 bits: worst measured {at_10} "
          f"-> {'met' if ok_10 else 'NOT met'}")
    print(f"target 12 x 16 under 2 s: {max(fixed, free):.3f} s -> "
          f"{'met' if max(fixed, free) < 2 else 'NOT met'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
