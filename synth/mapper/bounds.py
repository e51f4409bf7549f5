"""Lower bounds and the counting arguments behind an impossible verdict: gate
and chip floors (fan-in trees, distinct outputs, inversion), monotone and parity
(XOR-only) reachability, and the exact encoding's gate kinds.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Sequence

from .library import AND_FORM, Cell, inv_kinds
from .problem import Problem, Signal, needed_support


@dataclass(frozen=True)
class SatKind:
    """A cell as a gate type of the exact encoding (``width`` input slots)."""

    cell: int
    op: str
    width: int
    consts: tuple[int, ...]      # rail nodes its pins may take (0 = VSS, 1 = VDD)
    symmetric: bool


def sat_kinds(cells: Sequence[Cell]) -> list[SatKind]:
    kinds = []
    for i, c in enumerate(cells):
        if c.op in AND_FORM:
            kinds.append(SatKind(i, c.op, c.width, (), True))
        elif c.op in ("xor", "xnor") and c.width >= 2:
            kinds.append(SatKind(i, c.op, 2, (1,) if c.op == "xor" else (0,), True))
        elif c.op == "not":
            kinds.append(SatKind(i, "not", 1, (), True))
        elif c.op in ("mux", "spdt"):
            kinds.append(SatKind(i, "mux", 3, (0, 1), False))
    return kinds


def _distinct_inputs(kind: SatKind) -> int:
    return {"not": 1, "xor": 2, "xnor": 2, "mux": 3}.get(kind.op, kind.width)


def chip_capacities(cells: Sequence[Cell]) -> list[int]:
    """Units per chip for every chip the bin could open, largest first."""
    per_part: dict[str, tuple[int, int]] = {}
    for c in cells:
        upc, chips = per_part.get(c.part, (0, c.chips))
        per_part[c.part] = (max(upc, c.units_per_chip), chips)
    return sorted((upc for upc, chips in per_part.values() for _ in range(chips)), reverse=True)


def chips_lower_bound(k: int, capacities: Sequence[int]) -> float:
    """Fewest chips that can hold k units (inf when the bin cannot)."""
    total = 0
    for c, cap in enumerate(capacities, start=1):
        total += cap
        if total >= k:
            return c
    return 0 if k == 0 else float("inf")


def gate_lower_bound(problem: Problem, kinds: Sequence[SatKind]) -> float:
    """Gates any circuit needs: a signal over s variables needs a tree joining them,
    and signals no one gate output can deliver together need a gate each."""
    widest = max((_distinct_inputs(k) for k in kinds), default=0)
    bound = 1
    for sig in problem.signals:
        s = len(needed_support(sig, problem.nvars))
        if s >= 2:
            if widest <= 1:
                return float("inf")
            bound = max(bound, -(-(s - 1) // (widest - 1)))
    return max(bound, output_gate_bound(problem))


def _levels_agree(a: Signal, b: Signal) -> bool:
    """Whether one gate output can deliver both signals (each at its polarity)."""
    common = a.care & b.care
    same = all((m in a.on) == (m in b.on) for m in common)
    opposite = all((m in a.on) != (m in b.on) for m in common)
    fixed = {"high": 0, "low": 1}
    if a.polarity == "free" or b.polarity == "free":
        return same or opposite
    return same if fixed[a.polarity] == fixed[b.polarity] else opposite


def output_gate_bound(problem: Problem) -> int:
    """Gates that deliver signals: signals no single gate output can deliver two of
    need one gate each (a greedy set of pairwise such signals is a lower bound)."""
    apart: list[Signal] = []
    for sig in problem.signals:
        if all(not _levels_agree(sig, other) for other in apart):
            apart.append(sig)
    return len(apart)


def _monotone_possible(sig: Signal, nvars: int, low: bool) -> bool:
    """Whether some completion of the delivered level is monotone increasing in the
    counter bits (all a bin without any inverting unit can make from them)."""
    on = sig.care - sig.on if low else sig.on
    off = sig.care - on
    covered = bytearray(1 << nvars)
    for m in on:
        covered[m] = 1
    for i in range(nvars):
        bit = 1 << i
        for m in range(1 << nvars):
            if m & bit and covered[m ^ bit]:
                covered[m] = 1
    return not any(covered[m] for m in off)


def part_profiles(cells: Sequence[Cell]) -> dict[str, tuple[int, float, bool, int]]:
    """Per part type: (logic units per chip, widest fan-in, can invert, chips on hand)."""
    profiles: dict[str, tuple[int, float, bool, int]] = {}
    for c in cells:
        if c.op in AND_FORM:
            width: float = c.width
        elif c.op in ("xor", "xnor"):
            width = 2
        elif c.op in ("not", "buf"):
            width = 1
        else:                      # wide muxes and decoders: no fan-in argument applies
            width = float("inf")
        inverts = c.op in ("not", "nand", "nor", "xor", "xnor", "mux", "decoder", "spdt") or c.output_inv
        upc, w, inv, chips = profiles.get(c.part, (0, 0, False, c.chips))
        profiles[c.part] = (max(upc, c.units_per_chip), max(w, width), inv or inverts, chips)
    return profiles


def counting_bounds(problem: Problem, cells: Sequence[Cell], max_chips: int = 6) -> tuple[float, float]:
    """Lower bounds on (chips, gates) for any circuit of the bin, by counting.

    A signal that depends on s counter bits needs a tree of gates joining
    them (at least ceil((s-1)/(w-1)) gates of fan-in <= w), signals whose
    cared-for levels disagree need distinct output gates, and a signal no monotone function delivers
    needs an inverting unit.  The chip bound is the fewest chips of which some
    choice from the bin passes all three tests, the tree test counted per unit:
    the gates joining s inputs into one output have at least s - 1 inputs more
    than they have gates (every gate of fan-in w adds at most w - 1), and an
    inverter adds none, so the chosen chips' units must offer s - 1 of those.
    """
    profiles = part_profiles(cells)
    if not profiles:
        return float("inf"), float("inf")
    n = problem.nvars
    distinct = output_gate_bound(problem)   # signals one gate output cannot serve together
    widest_support = max((len(needed_support(s, n)) for s in problem.signals), default=0)
    needs_inversion = any(
        not any(_monotone_possible(s, n, low) for low in ((False, True) if s.polarity == "free"
                                                          else (s.polarity == "low",)))
        for s in problem.signals)

    def gates_needed(width: float) -> float:
        if widest_support <= 1:
            return max(distinct, 1)
        if width <= 1:
            return float("inf")
        tree = 1 if width == float("inf") else -(-(widest_support - 1) // int(width - 1))
        return max(distinct, tree)

    overall_gates = gates_needed(max(p[1] for p in profiles.values()))
    types = sorted(profiles)
    for count in range(1, max_chips + 1):
        for combo in itertools.combinations_with_replacement(types, count):
            if any(combo.count(t) > profiles[t][3] for t in set(combo)):
                continue
            units = sum(profiles[t][0] for t in combo)
            width = max(profiles[t][1] for t in combo)
            if needs_inversion and not any(profiles[t][2] for t in combo):
                continue
            joins = sum(profiles[t][0] * (profiles[t][1] - 1) for t in combo)
            if units >= gates_needed(width) and joins >= widest_support - 1:
                return count, overall_gates
    return max_chips + 1, overall_gates


def exact_complete(cells: Sequence[Cell]) -> bool:
    """Whether exact synthesis sees every way the cells can be used."""
    return all(c.op in AND_FORM or c.op in ("not", "buf") or (c.op in ("xor", "xnor") and c.width == 2)
               or (c.op in ("mux", "spdt") and c.width == 2) for c in cells)


def can_invert(cells: Sequence[Cell]) -> bool:
    return bool(inv_kinds(cells))


def affine_possible(sig: Signal, nvars: int) -> bool:
    """Whether some XOR of counter bits (maybe inverted) matches the signal where it is
    cared for: Gaussian elimination over GF(2), rows (1, bits of m | level at m)."""
    pivots: dict[int, int] = {}        # leading bit -> row (bit nvars+1 is the level)
    for m in sorted(sig.care):
        row = ((m << 1) | 1) | ((1 << (nvars + 1)) if m in sig.on else 0)
        while row:
            lead = (row & ((1 << (nvars + 1)) - 1)).bit_length() - 1
            if lead < 0:
                return False          # 0 = 1: inconsistent
            if lead not in pivots:
                pivots[lead] = row
                break
            row ^= pivots[lead]
    return True


def inversion_witness(problem: Problem) -> str | None:
    """A signal no monotone circuit delivers, in words: two counter states where it
    must fall although no counter output falls (None: every signal is monotone)."""
    n = problem.nvars
    for sig in problem.signals:
        lows = (False, True) if sig.polarity == "free" else (sig.polarity == "low",)
        if any(_monotone_possible(sig, n, low) for low in lows):
            continue
        low = lows[0]
        on = sig.care - sig.on if low else sig.on
        off = sig.care - on
        for a in sorted(on):
            above = next((b for b in sorted(off) if b & a == a), None)
            if above is not None:
                sense = " (it is active low)" if low else ""
                return (f"the output for {sig.name} must be high at counter state {a} and low at "
                        f"state {above}{sense}, though every counter output high at {a} is also "
                        f"high at {above}")
        return (f"{sig.name} must fall where no counter output falls (it is not a monotone "
                f"function of the counter outputs)")
    return None
