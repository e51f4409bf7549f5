"""On-sets and don't-care sets of decode signals -> minimized multi-output covers.

Interface:

- ``Cube = tuple[int, int]``: a product term as ``(mask, value)`` over the
  counter variables (bit i = variable i); variable i is in the term iff mask
  bit i is 1, at the level of value bit i.  ``(0, 0)`` is the empty term (1).
- ``cube_contains(cube, minterm)``, ``cube_literals(cube)``,
  ``run_cubes(start, stop, nvars)``, ``cube_to_text(cube, var_names, style)``:
  small pure helpers.
- ``Function(name, on, dc=frozenset())``: one signal; ``dc`` wins where the
  two sets overlap (a tick whose level does not matter is not asserted).
- ``Cover``: the shared product terms and, per signal, which terms its OR
  gathers and in which phase it is delivered, whether it is proven minimal
  and a ``note`` saying why not; ``evaluate``, ``signal_value``, ``cubes``,
  ``literals``, ``term_count``.
- ``minimize(functions, nvars, var_names=None, *, exact='auto',
  free_phase=frozenset()) -> Cover``; ``Cover.method`` is ``EXACT_LABEL``
  or ``HEURISTIC_LABEL``, plain words for output (method names stay here).
- ``to_text(cover, name, style='trade') -> str``.
- ``check_cover(cover, functions) -> list[Mismatch]``; ``Mismatch(name,
  minterm, wanted, got)``.

Cost (one definition, used by every path and reported in ``Cover.cost``):
the tuple ``(terms, literals, connections)`` compared lexicographically --
distinct product terms first (each is an AND gate, or a bare wire when it has
one literal), then the literals of those distinct terms (AND-gate inputs),
then connections, the terms summed over signals (OR-gate inputs; a shared
term counts once in the first two and once per signal in the third).  This is
the textbook "minimal sum" order (fewest terms, then fewest literals) and the
order Espresso itself optimises.  The empty term of a constant-1 signal
counts as one term of no literals.  Between equal costs the true phase wins.

Two paths:

- Espresso (through pyeda's binding) is the fast heuristic.  Its input is the
  on-set and don't-care set cut into aligned blocks (a run of counter states is
  a handful of cubes), so 12 variables and 16 signals take tens of ms.
- The exact path generates every multi-output prime implicant with a
  Quine-McCluskey merge done on integer bitsets (all bases of one cube shape
  at once), then solves the minimum cover as weighted MaxSAT (python-sat's
  RC2), free phases included as selector variables.  Shortcuts with the same
  guarantee: a cover made of essential connections alone, and for a single
  signal enumeration when few primes remain open.  A cover of multi-output
  primes with minimum cost always exists, so a finished solve is a proof:
  ``proven_minimal`` is True only then.  With ``exact='auto'`` the search runs
  within ``AUTO_MAX_VARS``, ``AUTO_MAX_WORK``, ``AUTO_MAX_PRIMES`` and
  ``AUTO_CONFLICT_BUDGET`` (conflicts counted, not seconds timed, so reaching
  the proof does not depend on machine speed); outside them the Espresso
  cover is kept and ``note`` says "best found" and why.  ``exact='yes'`` runs
  it without limits; ``'no'`` skips it.

Every result is checked against every minterm before it is returned.

Limits: pyeda's Espresso keeps internal state from one call to the next, so
within one process a heuristic ("best found") cover of the same input may
differ by a term between calls; a fresh process making the same calls gets
the same covers, and proven covers never vary in cost.  The phase search
for more than ``PHASE_ENUMERATE_MAX`` free signals is greedy (each signal's
cheaper phase alone, then one pass of single flips in the shared context)
unless the exact path finishes.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, replace
from typing import Iterable, Iterator, Literal, Sequence

from .errors import InternalError

__all__ = [
    "Cube", "Function", "Cover", "Mismatch", "minimize", "to_text", "check_cover",
    "cube_contains", "cube_literals", "run_cubes", "cube_to_text",
    "AUTO_MAX_VARS", "AUTO_MAX_WORK", "AUTO_MAX_PRIMES", "AUTO_CONFLICT_BUDGET",
    "EXACT_LABEL", "HEURISTIC_LABEL",
]

EXACT_LABEL = "exact cover, proven minimal"
"""``Cover.method`` when the exact path finished (printed and in the JSON: plain words)."""
HEURISTIC_LABEL = "heuristic cover"
"""``Cover.method`` when the heuristic's cover is kept (best found, not proven)."""

Cube = tuple[int, int]
Phase = Literal["true", "complement"]
Style = Literal["trade", "ascii"]

AUTO_MAX_VARS = 12            # exact='auto' generates primes up to this many variables,
AUTO_MAX_WORK = 1 << 14       # ... 2^nvars x signal phases up to this (10 bits x 16 signals),
AUTO_MAX_PRIMES = 2000        # ... solves the cover only over this many useful primes,
AUTO_CONFLICT_BUDGET = 20_000  # ... within this many SAT conflicts (deterministic, not a clock)
PHASE_ENUMERATE_MAX = 3       # free-phase signals tried in every combination up to this many

_ESPRESSO_CONFIG = dict(single_expand=False, remove_essential=True,
                        force_irredundant=True, unwrap_onset=True,
                        recompute_onset=False, use_super_gasp=False)


# ---------------------------------------------------------------- small pure helpers

def cube_contains(cube: Cube, minterm: int) -> bool:
    """Whether the product term is 1 at ``minterm``.

    >>> cube_contains((0b1010, 0b1000), 0b1101)
    True
    >>> cube_contains((0b1010, 0b1000), 0b1111)
    False
    >>> cube_contains((0, 0), 12345)
    True
    """
    mask, value = cube
    return minterm & mask == value


def cube_literals(cube: Cube) -> int:
    """Number of literals (AND-gate inputs) in the term.

    >>> cube_literals((0b1011, 0b0001))
    3
    >>> cube_literals((0, 0))
    0
    """
    return cube[0].bit_count()


def run_cubes(start: int, stop: int, nvars: int) -> list[Cube]:
    """The run of counter states ``start <= m < stop`` as aligned blocks (few cubes).

    Each block is 2^k states starting at a multiple of 2^k, i.e. one cube
    with the k lowest variables free.

    >>> run_cubes(3, 9, 4)
    [(15, 3), (12, 4), (15, 8)]
    >>> run_cubes(0, 16, 4)
    [(0, 0)]
    >>> run_cubes(5, 5, 4)
    []
    >>> run_cubes(0, 17, 4)
    Traceback (most recent call last):
    ValueError: expected 0 <= start <= stop <= 16, got 0..17
    """
    full = 1 << nvars
    if not 0 <= start <= stop <= full:
        raise ValueError(f"expected 0 <= start <= stop <= {full}, got {start}..{stop}")
    cubes = []
    all_vars = full - 1
    while start < stop:
        size = start & -start if start else full
        while size > stop - start:
            size >>= 1
        mask = all_vars & ~(size - 1)
        cubes.append((mask, start))
        start += size
    return cubes


def cube_to_text(cube: Cube, var_names: Sequence[str], style: Style = "trade") -> str:
    """One product term in trade notation (``Q4·Q3'``) or ASCII (``Q4 & ~Q3``), msb first.

    >>> cube_to_text((0b1101, 0b1001), ["Q1", "Q2", "Q3", "Q4"])
    "Q4·Q3'·Q1"
    >>> cube_to_text((0b1101, 0b1001), ["Q1", "Q2", "Q3", "Q4"], "ascii")
    'Q4 & ~Q3 & Q1'
    >>> cube_to_text((0, 0), ["Q1"])
    '1'
    """
    mask, value = cube
    if not mask:
        return "1"
    parts = []
    for i in reversed(range(len(var_names))):
        if mask >> i & 1:
            positive = bool(value >> i & 1)
            name = var_names[i]
            if style == "trade":
                parts.append(name if positive else f"{name}'")
            else:
                parts.append(name if positive else f"~{name}")
    return ("·" if style == "trade" else " & ").join(parts)


def _set_bits(bits: int) -> Iterator[int]:
    """Indices of the 1 bits of ``bits``, lowest first."""
    while bits:
        low = bits & -bits
        yield low.bit_length() - 1
        bits ^= low


def _runs(bits: int) -> Iterator[tuple[int, int]]:
    """Maximal runs of 1 bits as half-open ``(start, stop)`` pairs (carry trick)."""
    while bits:
        low = bits & -bits
        carried = bits + low            # the run turns to 0s, its stop bit to 1
        stop_bit = carried & ~bits
        yield low.bit_length() - 1, stop_bit.bit_length() - 1
        bits &= carried


def _bitset(minterms: Iterable[int]) -> int:
    bits = 0
    for m in minterms:
        bits |= 1 << m
    return bits


class _Space:
    """The 2^n minterms as bit positions of Python ints, and per-variable masks."""

    def __init__(self, nvars: int) -> None:
        self.nvars = nvars
        self.size = 1 << nvars
        self.all = (1 << self.size) - 1
        self.var_bits = [self._var_bits(i) for i in range(nvars)]

    def _var_bits(self, i: int) -> int:
        """Minterms with variable i at 1: blocks of 2^i ones every 2^(i+1)."""
        half = 1 << i
        period_bits = ((1 << half) - 1) << half
        bits, width = period_bits, 2 * half
        while width < self.size:        # doubling: log steps, not 2^n
            bits |= bits << width
            width *= 2
        return bits & self.all

    def cube_bits(self, cube: Cube) -> int:
        mask, value = cube
        bits = self.all
        for i in _set_bits(mask):
            bits &= self.var_bits[i] if value >> i & 1 else ~self.var_bits[i]
        return bits

    def blocks(self, bits: int) -> list[Cube]:
        return [c for start, stop in _runs(bits) for c in run_cubes(start, stop, self.nvars)]


# ---------------------------------------------------------------- records

@dataclass(frozen=True)
class Function:
    """One decode signal: asserted on ``on``, level free on ``dc`` (dc wins on overlap)."""

    name: str
    on: frozenset[int]
    dc: frozenset[int] = frozenset()


@dataclass(frozen=True)
class Mismatch:
    """A minterm where a cover's delivered signal disagrees with its function."""

    name: str
    minterm: int
    wanted: bool
    got: bool


@dataclass(frozen=True)
class Cover:
    """Shared product terms and, per signal, the terms its OR gate gathers.

    ``outputs[name]`` indexes ``terms``; ``()`` is constant 0 and ``(i,)`` with
    ``terms[i] == (0, 0)`` constant 1.  ``phases[name] == 'complement'`` means
    the terms realise NOT f and the signal is delivered inverted (active low).
    ``cost`` is ``(terms, literals, connections)``, see the module docstring.
    """

    nvars: int
    var_names: tuple[str, ...]
    terms: tuple[Cube, ...]
    outputs: dict[str, tuple[int, ...]]
    phases: dict[str, str]
    proven_minimal: bool
    method: str
    cost: tuple[int, int, int]
    note: str = ""

    def cubes(self, name: str) -> tuple[Cube, ...]:
        """The product terms of one signal's OR, in ``terms`` order."""
        return tuple(self.terms[i] for i in self.outputs[name])

    def evaluate(self, name: str, minterm: int) -> bool:
        """The cover's own value at ``minterm`` (NOT f for a complement-phase signal)."""
        return any(cube_contains(c, minterm) for c in self.cubes(name))

    def signal_value(self, name: str, minterm: int) -> bool:
        """Whether the signal is asserted at ``minterm`` (the phase undone)."""
        return self.evaluate(name, minterm) != (self.phases[name] == "complement")

    def literals(self, name: str) -> int:
        """Literals in this signal's terms (shared terms counted here too)."""
        return sum(cube_literals(c) for c in self.cubes(name))

    def term_count(self, name: str) -> int:
        return len(self.outputs[name])


# ---------------------------------------------------------------- problem set-up

@dataclass(frozen=True)
class _Variant:
    """One signal in one phase: minterms that must be 1 and those that may be 1."""

    output: int
    phase: Phase
    care: int
    upper: int


def _validated(functions: Sequence[Function], nvars: int, var_names, exact: str,
               free_phase) -> tuple[tuple[str, ...], set[str]]:
    if not isinstance(nvars, int) or nvars < 0:
        raise ValueError(f"expected a variable count >= 0, got {nvars!r}")
    if exact not in ("auto", "yes", "no"):
        raise ValueError(f"expected exact='auto', 'yes' or 'no', got {exact!r}")
    names = tuple(var_names) if var_names is not None else tuple(
        f"Q{i + 1}" for i in range(nvars))
    if len(names) != nvars or len(set(names)) != nvars:
        raise ValueError(f"expected {nvars} distinct variable names, got {list(names)}")
    seen: set[str] = set()
    for f in functions:
        if f.name in seen:
            raise ValueError(f"expected distinct signal names, got {f.name!r} twice")
        seen.add(f.name)
        for m in itertools.chain(f.on, f.dc):
            if not isinstance(m, int) or not 0 <= m < 1 << nvars:
                raise ValueError(f"expected minterms 0..{(1 << nvars) - 1} in {f.name!r}, got {m!r}")
    free = set(free_phase)
    if not free <= seen:
        raise ValueError(f"expected free_phase among the signals, got {sorted(free - seen)}")
    return names, free


def _variant(space: _Space, index: int, f: Function, phase: Phase) -> _Variant:
    dc = _bitset(f.dc)
    on = _bitset(f.on) & ~dc
    if phase == "true":
        return _Variant(index, phase, on, on | dc)
    off = space.all & ~(on | dc)
    return _Variant(index, phase, off, off | dc)


# ---------------------------------------------------------------- a solution: cubes per signal

_Solution = dict[int, list[Cube]]           # output index -> its cubes


def _cost(solution: _Solution) -> tuple[int, int, int]:
    distinct = {c for cubes in solution.values() for c in cubes}
    return (len(distinct), sum(cube_literals(c) for c in distinct),
            sum(len(cubes) for cubes in solution.values()))


def _phase_key(cost: tuple[int, int, int], phases: dict[int, Phase]) -> tuple:
    """Cost first, then fewer complemented signals (the true phase wins ties)."""
    return cost + (sum(p == "complement" for p in phases.values()),)


def _irredundant(space: _Space, solution: _Solution, variants: dict[int, _Variant]) -> _Solution:
    """Drop connections the other terms of the same signal already cover."""
    use = {}
    for cubes in solution.values():
        for c in cubes:
            use[c] = use.get(c, 0) + 1
    result = {}
    for out, cubes in solution.items():
        bits = {c: space.cube_bits(c) & variants[out].care for c in cubes}
        kept = list(cubes)
        for c in sorted(cubes, key=lambda c: (use[c] > 1, -cube_literals(c))):
            rest = 0
            for other in kept:
                if other != c:
                    rest |= bits[other]
            if bits[c] & ~rest == 0:
                kept.remove(c)
                use[c] -= 1
        result[out] = kept
    return result


# ---------------------------------------------------------------- Espresso path

def _espresso(space: _Space, variants: dict[int, _Variant]) -> _Solution:
    """One multi-output Espresso run over the chosen phase of every signal."""
    from pyeda.boolalg.espresso import DTYPE, FTYPE, espresso, set_config

    solution: _Solution = {}
    active = []
    for out, v in variants.items():
        if v.care == 0:
            solution[out] = []
        elif v.upper == space.all:
            solution[out] = [(0, 0)]
        else:
            active.append(out)
    if not active:
        return solution
    n, k = space.nvars, len(active)
    rows: dict[Cube, list[int]] = {}
    for j, out in enumerate(active):
        v = variants[out]
        for level, bits in ((1, v.care), (2, v.upper & ~v.care)):
            for cube in space.blocks(bits):
                rows.setdefault(cube, [0] * k)[j] = level
    cover = [(tuple(3 if not mask >> i & 1 else 2 if value >> i & 1 else 1 for i in range(n)),
              tuple(outvec)) for (mask, value), outvec in rows.items()]
    set_config(**_ESPRESSO_CONFIG)
    result = espresso(n, k, cover, intype=FTYPE | DTYPE)
    for out in active:
        solution[out] = []
    for invec, outvec in sorted(result):
        mask = sum(1 << i for i, x in enumerate(invec) if x != 3)
        value = sum(1 << i for i, x in enumerate(invec) if x == 2)
        for j, o in enumerate(outvec):
            if o == 1:
                solution[active[j]].append((mask, value))
    return _irredundant(space, solution, variants)


def _espresso_phases(space: _Space, functions: Sequence[Function],
                     free: list[int]) -> tuple[_Solution, dict[int, Phase]]:
    """Espresso with a phase search over the free signals (no clock involved)."""
    both = {(i, p): _variant(space, i, f, p)
            for i, f in enumerate(functions) for p in ("true", "complement")
            if p == "true" or i in free}

    def run(phases: dict[int, Phase]) -> tuple[tuple, _Solution]:
        chosen = {i: both[(i, phases[i])] for i in range(len(functions))}
        sol = _espresso(space, chosen)
        return _phase_key(_cost(sol), phases), sol

    phases: dict[int, Phase] = {i: "true" for i in range(len(functions))}
    if len(free) <= PHASE_ENUMERATE_MAX:
        best = None
        for combo in itertools.product(("true", "complement"), repeat=len(free)):
            trial = {**phases, **dict(zip(free, combo))}
            key, sol = run(trial)
            if best is None or key < best[0]:
                best = (key, sol, trial)
        return best[1], best[2]
    # Many free signals: start from each signal's cheaper phase alone, then
    # one pass of single flips in the shared context, keeping improvements.
    for i in free:
        alone = {p: _cost(_espresso(space, {i: both[(i, p)]})) for p in ("true", "complement")}
        phases[i] = "complement" if alone["complement"] < alone["true"] else "true"
    key, sol = run(phases)
    for i in free:
        trial = dict(phases)
        trial[i] = "true" if phases[i] == "complement" else "complement"
        trial_key, trial_sol = run(trial)
        if trial_key < key:
            key, sol, phases = trial_key, trial_sol, trial
    return sol, phases


# ---------------------------------------------------------------- exact path: primes

def _multi_output_primes(space: _Space, variants: list[_Variant],
                         limit: int | None) -> list[tuple[Cube, int, int]] | None:
    """Multi-output prime implicants as ``(cube, cube_bits, useful_tag)``.

    Quine-McCluskey's merge on bitsets: ``imp[D][i]`` has bit b set when the
    cube with free variables D based at b (b & D == 0) lies in variant i's
    upper set; ``imp[D] = imp[D-j] & imp[D-j] >> 2^j``, grown only from
    shapes that still have an implicant.  A cube is a
    multi-output prime when no one-variable expansion keeps its whole tag
    (the variants it may serve).  The tag kept is restricted to the variants
    whose care set the cube touches, and cubes useful to none are dropped.
    Returns None once more than ``limit`` useful primes are found.
    """
    n, k = space.nvars, len(variants)
    imp: dict[int, list[int]] = {0: [v.upper for v in variants]}
    frontier = [0]
    while frontier:                 # each shape once: add a variable below its lowest
        grown = []
        for parent in frontier:
            lowest = (parent & -parent).bit_length() - 1 if parent else n
            for j in range(lowest):
                step, clear = 1 << j, ~space.var_bits[j]
                merged = [a & (a >> step) & clear for a in imp[parent]]
                if any(merged):
                    imp[parent | step] = merged
                    grown.append(parent | step)
        frontier = grown
    primes = []
    cares = [v.care for v in variants]
    for shape, rows in imp.items():
        anywhere = 0
        for a in rows:
            anywhere |= a
        dominated = 0
        for j in range(n):
            bigger = imp.get(shape | 1 << j) if not shape >> j & 1 else None
            if bigger is None:
                continue
            step = 1 << j
            kept = anywhere
            for a, e in zip(rows, bigger):
                if a:
                    kept &= ~a | e | (e << step)
                    if not kept:
                        break
            dominated |= kept
        mask = (space.size - 1) & ~shape
        for base in _set_bits(anywhere & ~dominated):
            cube = (mask, base)
            bits = space.cube_bits(cube)
            tag = 0
            for i in range(k):
                if rows[i] >> base & 1 and bits & cares[i]:
                    tag |= 1 << i
            if tag:
                primes.append((cube, bits, tag))
                if limit is not None and len(primes) > limit:
                    return None
    return primes


# ---------------------------------------------------------------- exact path: the cover as MaxSAT

def _coverage_classes(care: int, candidates: list[tuple[int, int]]) -> list[tuple[int, ...]]:
    """The distinct sets of primes covering a care minterm (one clause each)."""
    covering: dict[int, list[int]] = {}
    for p, bits in candidates:
        for start, stop in _runs(bits & care):
            for m in range(start, stop):
                covering.setdefault(m, []).append(p)
    return sorted({tuple(ps) for ps in covering.values()})


def _solve_exact(space: _Space, functions: Sequence[Function], free: list[int],
                 limits: bool) -> tuple[_Solution, dict[int, Phase]] | str:
    """The minimum-cost cover over all multi-output primes, or why there is none."""
    variants = [_variant(space, i, f, "true") for i, f in enumerate(functions)]
    variants += [_variant(space, i, functions[i], "complement") for i in free]
    primes = _multi_output_primes(space, variants, AUTO_MAX_PRIMES if limits else None)
    if primes is None:
        return f"more than {AUTO_MAX_PRIMES} useful prime implicants"
    classes = [_coverage_classes(v.care, [(p, bits) for p, (_, bits, tag) in enumerate(primes)
                                          if tag >> vi & 1])
               for vi, v in enumerate(variants)]
    if len(functions) == 1:
        return _single_output_exact(variants, primes, classes, limits)
    if not free:
        essential = _essential_cover(primes, classes)
        if essential is not None:
            return essential, {i: "true" for i in range(len(functions))}
    return _maxsat_cover(variants, primes, classes, free, len(functions), limits)


def _single_output_exact(variants: list[_Variant], primes, classes,
                         limits: bool) -> tuple[_Solution, dict[int, Phase]] | str:
    """One signal: the minimum of each phase on its own (phases do not interact)."""
    best = None
    for v, variant in enumerate(variants):
        mine = [(cube, bits, 1) for cube, bits, tag in primes if tag >> v & 1]
        index = [p for p, (_, _, tag) in enumerate(primes) if tag >> v & 1]
        renumber = {p: i for i, p in enumerate(index)}
        own = [tuple(renumber[p] for p in cov) for cov in classes[v]]
        found = _essential_cover(mine, [own]) or _small_cover(mine, own)
        if found is None:
            # alone, either phase is a plain cover of its own care set: solve it as a fixed
            # true phase so the solver links its terms (a fixed complement would link none)
            result = _maxsat_cover([replace(variant, phase="true")], mine, [own], [], 1, limits)
            if isinstance(result, str):
                return result
            found = result[0]
        key = _phase_key(_cost(found), {0: variant.phase})
        if best is None or key < best[0]:
            best = (key, found, {0: variant.phase})
    return best[1], best[2]


SMALL_COVER_CANDIDATES = 12    # beyond this many open primes the SAT solver is quicker


def _small_cover(primes, classes) -> _Solution | None:
    """Exact single-output cover by enumeration when few primes remain open.

    Essential primes are taken; the remaining classes are covered by the
    fewest further primes, then the fewest literals (subsets by size).
    """
    forced = {cov[0] for cov in classes if len(cov) == 1}
    open_classes = [cov for cov in classes if not forced.intersection(cov)]
    candidates = sorted({p for cov in open_classes for p in cov})
    if len(candidates) > SMALL_COVER_CANDIDATES:
        return None
    hits = {p: sum(1 << c for c, cov in enumerate(open_classes) if p in cov) for p in candidates}
    everything = (1 << len(open_classes)) - 1
    for size in range(len(candidates) + 1):
        best = None
        for combo in itertools.combinations(candidates, size):
            covered = 0
            for p in combo:
                covered |= hits[p]
            if covered == everything:
                literals = sum(cube_literals(primes[p][0]) for p in combo)
                if best is None or literals < best[0]:
                    best = (literals, combo)
        if best is not None:
            return {0: [primes[p][0] for p in sorted(forced | set(best[1]))]}
    return None


def _essential_cover(primes, classes) -> _Solution | None:
    """The cover when essential connections alone suffice (then it is the minimum).

    A care minterm covered by a single prime forces that connection in every
    cover; if the forced connections already cover everything, no cover can
    have fewer terms, literals or connections.
    """
    forced = [{cov[0] for cov in per_variant if len(cov) == 1} for per_variant in classes]
    for per_variant, chosen in zip(classes, forced):
        if any(not chosen.intersection(cov) for cov in per_variant):
            return None
    return {v: [primes[p][0] for p in sorted(chosen)] for v, chosen in enumerate(forced)}


def _maxsat_cover(variants: list[_Variant], primes, classes, free: list[int], outputs: int,
                  limits: bool) -> tuple[_Solution, dict[int, Phase]] | str:
    """Weighted MaxSAT over term, connection and phase-selector variables."""
    from pysat.examples.rc2 import RC2Stratified
    from pysat.formula import WCNF
    from pysat.solvers import Solver

    counter = itertools.count(1)
    term_var = [next(counter) for _ in primes]
    select = {i: next(counter) for i in free}         # True: the true phase
    wcnf = WCNF()
    link: dict[tuple[int, int], int] = {}              # (prime, variant) -> connection var
    for p, (_, _, tag) in enumerate(primes):
        tags = list(_set_bits(tag))
        for v in tags:
            link[(p, v)] = term_var[p] if len(tags) == 1 else next(counter)
            if len(tags) > 1:
                wcnf.append([-link[(p, v)], term_var[p]])
            if variants[v].output in select:
                s = select[variants[v].output]
                wcnf.append([-link[(p, v)], s if variants[v].phase == "true" else -s])
    # Essential connections of fixed-phase signals are hard facts: their terms
    # and connections cost the same in every cover, so they get no soft clause.
    forced = {(cov[0], v) for v, variant in enumerate(variants) if variant.output not in select
              for cov in classes[v] if len(cov) == 1}
    forced_terms = {p for p, _ in forced}
    for p, v in sorted(forced):
        wcnf.append([link[(p, v)]])
    for p in sorted(forced_terms):
        wcnf.append([term_var[p]])
    for v, variant in enumerate(variants):
        guard = []
        if variant.output in select:
            s = select[variant.output]
            guard = [-s] if variant.phase == "true" else [s]
        for covering in classes[v]:
            if not any((p, v) in forced for p in covering):
                wcnf.append(guard + [link[(p, v)] for p in covering])

    # Lexicographic weights: terms >> literals >> connections >> complemented phases.
    w_conn = len(free) + 1
    w_lit = len(link) * w_conn + len(free) + 1
    w_term = sum(cube_literals(c) for c, _, _ in primes) * w_lit + w_lit
    for p, (cube, _, tag) in enumerate(primes):
        if p not in forced_terms:
            single = tag.bit_count() == 1
            wcnf.append([-term_var[p]], weight=w_term + cube_literals(cube) * w_lit
                        + (w_conn if single else 0))
    for (p, v), var in link.items():
        if var != term_var[p] and (p, v) not in forced:
            wcnf.append([-var], weight=w_conn)
    for s in select.values():
        wcnf.append([s], weight=1)

    if wcnf.soft:
        model = _maxsat(RC2Stratified(wcnf), AUTO_CONFLICT_BUDGET if limits else None)
    else:                                   # everything forced: any model is optimal
        with Solver(bootstrap_with=wcnf.hard) as sat:
            model = sat.get_model() if sat.solve() else None
    if model is None:
        return f"the SAT solver gave up after {AUTO_CONFLICT_BUDGET} conflicts"
    true_vars = {lit for lit in model if lit > 0}
    phases: dict[int, Phase] = {i: "true" for i in range(outputs)}
    for i, s in select.items():
        phases[i] = "true" if s in true_vars else "complement"
    solution: _Solution = {i: [] for i in range(outputs)}
    for (p, v), var in link.items():
        variant = variants[v]
        if var in true_vars and phases[variant.output] == variant.phase:
            solution[variant.output].append(primes[p][0])
    return solution, phases


def _maxsat(solver, conflicts: int | None) -> list[int] | None:
    """Run RC2 to optimality; with a conflict budget, None when it runs out.

    With default options every oracle call of RC2 is ``solve_limited``, and
    the solver's budget counts from the moment it is set, over all calls.
    """
    try:
        if conflicts is None:
            return solver.compute()
        solver.oracle.conf_budget(conflicts)
        return solver.compute(expect_interrupt=True)
    finally:
        solver.delete()


# ---------------------------------------------------------------- assembling and checking

def _assemble(space: _Space, functions: Sequence[Function], names: tuple[str, ...],
              solution: _Solution, phases: dict[int, Phase], *, proven: bool,
              method: str, note: str) -> Cover:
    distinct = {c for cubes in solution.values() for c in cubes}
    terms = tuple(sorted(distinct, key=lambda c: (-cube_literals(c), -c[0], -c[1])))
    index = {c: i for i, c in enumerate(terms)}
    outputs = {f.name: tuple(sorted(index[c] for c in set(solution[i])))
               for i, f in enumerate(functions)}
    cover = Cover(nvars=space.nvars, var_names=names, terms=terms, outputs=outputs,
                  phases={f.name: phases[i] for i, f in enumerate(functions)},
                  proven_minimal=proven, method=method, cost=_cost(solution), note=note)
    wrong = check_cover(cover, functions)
    if wrong:
        first = wrong[0]
        raise InternalError(f"minimized cover of {first.name!r} is {int(first.got)} at minterm "
                            f"{first.minterm}, wanted {int(first.wanted)} ({len(wrong)} mismatches)")
    return cover


def check_cover(cover: Cover, functions: Sequence[Function]) -> list[Mismatch]:
    """Every minterm where a delivered signal is wrong: on-set must be 1, off-set 0.

    Exhaustive over all 2^nvars minterms (as bitsets); don't-cares are free.
    """
    space = _Space(cover.nvars)
    wrong = []
    for f in functions:
        if f.name not in cover.outputs:
            raise ValueError(f"expected signal {f.name!r} in the cover, got {sorted(cover.outputs)}")
        realised = 0
        for c in cover.cubes(f.name):
            realised |= space.cube_bits(c)
        if cover.phases[f.name] == "complement":
            realised = space.all & ~realised
        dc = _bitset(f.dc)
        on = _bitset(f.on) & ~dc
        off = space.all & ~(on | dc)
        for m in _set_bits((on & ~realised) | (off & realised)):
            wrong.append(Mismatch(f.name, m, wanted=bool(on >> m & 1), got=bool(realised >> m & 1)))
    return wrong


def to_text(cover: Cover, name: str, style: Style = "trade") -> str:
    """The signal's cover as written (NOT f for a complement-phase signal).

    Trade style: ``Q4·Q3'·Q1 + Q5'``; ASCII: ``Q4 & ~Q3 & Q1 | ~Q5``;
    constants ``1`` and ``0``.
    """
    if style not in ("trade", "ascii"):
        raise ValueError(f"expected style 'trade' or 'ascii', got {style!r}")
    cubes = cover.cubes(name)
    if not cubes:
        return "0"
    joiner = " + " if style == "trade" else " | "
    return joiner.join(cube_to_text(c, cover.var_names, style) for c in cubes)


# ---------------------------------------------------------------- the entry point

def minimize(functions: Sequence[Function], nvars: int, var_names: Sequence[str] | None = None,
             *, exact: str = "auto", free_phase: Iterable[str] = frozenset()) -> Cover:
    """A multi-output sum-of-products cover sharing terms between the signals.

    ``exact``: ``'auto'`` tries the exact search within the AUTO_* limits,
    ``'yes'`` runs it without limits (Espresso skipped), ``'no'`` keeps the
    Espresso cover.  Signals in ``free_phase`` may be delivered inverted when
    that is cheaper; ``Cover.phases`` says which.
    """
    names, free_names = _validated(functions, nvars, var_names, exact, free_phase)
    space = _Space(nvars)
    free = [i for i, f in enumerate(functions) if f.name in free_names]

    if exact == "yes":
        exact_result = _solve_exact(space, functions, free, limits=False)
        if isinstance(exact_result, str):
            raise InternalError(f"exact minimization failed: {exact_result}")
        solution, phases = exact_result
        return _assemble(space, functions, names, solution, phases, proven=True,
                         method=EXACT_LABEL, note="proven minimal over all multi-output primes")

    solution, phases = _espresso_phases(space, functions, free)
    if exact == "no":
        return _assemble(space, functions, names, solution, phases, proven=False,
                         method=HEURISTIC_LABEL, note="best found (heuristic cover; exact search not asked)")
    work = (1 << nvars) * (len(functions) + len(free))
    if nvars > AUTO_MAX_VARS:
        why = f"{nvars} variables exceed the automatic limit of {AUTO_MAX_VARS}"
    elif work > AUTO_MAX_WORK:
        why = (f"2^{nvars} states x {len(functions) + len(free)} signal phases exceed "
               f"the automatic limit of {AUTO_MAX_WORK}")
    else:
        exact_result = _solve_exact(space, functions, free, limits=True)
        if not isinstance(exact_result, str):
            exact_solution, exact_phases = exact_result
            return _assemble(space, functions, names, exact_solution, exact_phases,
                             proven=True, method=EXACT_LABEL,
                             note="proven minimal over all multi-output primes")
        why = exact_result
    return _assemble(space, functions, names, solution, phases, proven=False,
                     method=HEURISTIC_LABEL, note=f"best found (heuristic cover; exact search skipped: {why})")
