"""The incremental exact-synthesis engine checked against a second method.

Sources, beside each check:

- Minimality: a brute force written here (breadth-first over sets of truth
  tables: every circuit of k gates of the bin's gate types, inputs from the
  counter bits and earlier gates, joined inputs allowed) gives the fewest
  (chips, gates) of each small problem; the engine, which holds every size in
  one solver and picks the size by assumptions, must prove the same.  The
  brute force shares no code with the engine (no SAT, no project encoding).
- XOR of two bits from four 2-input NANDs, and no fewer (standard textbook
  circuit, from memory); a 3-input XOR as two cascaded 2-input XORs (common
  practice).
- The same encoding asked for its sizes in rising and in falling order must
  answer each size the same way (the incremental solver keeps no state that
  changes an answer).
"""

from __future__ import annotations

import itertools

import pytest

from synth.effort import Meter
from synth.inventory import Bin, load_catalog
from synth.minimize import Function
from synth.mapper import build_library, map_design
from synth.mapper.bounds import counting_bounds, sat_kinds
from synth.mapper.exact import ExactEncoding
from synth.mapper.objective import Cost
from synth.mapper.problem import Problem, Signal
from synth.mapper.satkit import new_solver, solve_within

CATALOG = load_catalog()


def library(parts: dict[str, int]):
    return build_library(Bin("test-bin", 5.0, dict(parts), [], [], [], {}, {}), CATALOG)


def truth(on, nvars: int) -> int:
    return sum(1 << m for m in on)


def _gate_word(op: str, words, full: int) -> int:
    if op in ("and", "nand"):
        out = full
        for w in words:
            out &= w
    elif op in ("or", "nor"):
        out = 0
        for w in words:
            out |= w
    elif op in ("xor", "xnor"):
        out = 0
        for w in words:
            out ^= w
    else:                                   # not
        out = words[0] ^ full
    return out ^ full if op in ("nand", "nor", "xnor") else out


def brute_force_costs(targets: list[int], nvars: int, cells, max_gates: int = 5) -> list[Cost]:
    """(chips, gates) of every circuit of these cells of at most ``max_gates`` gates that
    delivers every target (breadth-first over the sets of truth tables k gates compute)."""
    full = (1 << (1 << nvars)) - 1
    bits = [sum(1 << m for m in range(1 << nvars) if m >> i & 1) for i in range(nvars)]
    kinds = [(c, c.op, c.width) for c in cells]
    found: list[Cost] = []
    level = {(frozenset(), tuple(0 for _ in cells))}
    for k in range(1, max_gates + 1):
        following = set()
        for made, units in level:
            nodes = bits + sorted(made)
            for index, (cell, op, width) in enumerate(kinds):
                if units[index] >= cell.capacity:
                    continue
                more = units[:index] + (units[index] + 1,) + units[index + 1:]
                arity = 1 if op == "not" else 2 if op in ("xor", "xnor") else width
                for picks in itertools.combinations_with_replacement(nodes, arity):
                    word = _gate_word(op, picks, full)
                    if word in made or word in bits:
                        continue
                    following.add((made | {word}, more))
        for made, units in following:
            if all(t in made for t in targets):
                chips = {}
                for (cell, _, _), n in zip(kinds, units):
                    chips[cell.part] = max(chips.get(cell.part, 0), -(-n // cell.units_per_chip))
                found.append(Cost(sum(chips.values()), k))
        level = following
    return found


def brute_force_optimum(targets: list[int], nvars: int, cells) -> Cost | None:
    """Fewest chips, then gates."""
    return min(brute_force_costs(targets, nvars, cells), default=None)


CASES = [
    # (parts, signals as on-sets, nvars, source)
    ({"4011": 2}, [[1, 2]], 2, "textbook: XOR from four NAND2; brute force here"),
    ({"4001": 2}, [[0, 3]], 2, "brute force here (XNOR from NOR2)"),
    ({"4011": 2, "4069": 1}, [[3, 7, 0, 2, 4, 6]], 3, "brute force here"),
    ({"4073": 1, "4011": 2}, [[7], [0, 1, 2, 3, 4, 5, 6]], 3, "brute force here (mixed widths)"),
    ({"4070": 1}, [[1, 2, 4, 7]], 3, "common practice: XOR3 as two cascaded XOR2; brute force here"),
    ({"4070": 1, "4011": 1}, [[1, 2, 4, 7], [3, 7]], 3, "brute force here (XOR and NAND together)"),
    ({"4001": 1, "4011": 1}, [[0], [6, 7]], 3, "brute force here (two signals, two part types)"),
]


@pytest.mark.parametrize("parts, ons, nvars, source", CASES)
def test_engine_proves_the_brute_force_optimum(parts, ons, nvars, source):
    lib = library(parts)
    funcs = [Function(f"s{i}", frozenset(on)) for i, on in enumerate(ons)]
    net = map_design(funcs, nvars, [f"x{i}" for i in range(nvars)], lib,
                     polarity={f.name: "high" for f in funcs}, exact="yes", effort="thorough")
    cells = [c for c in lib.mapped().cells if c.op in ("and", "nand", "or", "nor", "xor", "xnor", "not")]
    expected = brute_force_optimum([truth(on, nvars) for on in ons], nvars, cells)
    assert expected is not None, source
    assert net.proven_minimal, source
    assert Cost(sum(net.chips.values()), len(net.gates)) == expected, source


def _problem(ons, nvars):
    universe = frozenset(range(1 << nvars))
    return Problem(nvars, tuple(f"x{i}" for i in range(nvars)),
                   [Signal(f"s{i}", frozenset(on), universe, "high") for i, on in enumerate(ons)])


@pytest.mark.parametrize("parts, ons, nvars, source", CASES[:4])
def test_sizes_answer_alike_in_any_order(parts, ons, nvars, source):
    """One solver, every size by assumptions: each size's answer (a circuit or none)
    is the brute force's, asked rising and then falling."""
    lib = library(parts)
    cells = lib.mapped().cells
    kinds = sat_kinds(cells)
    problem = _problem(ons, nvars)
    encoding = ExactEncoding(problem, cells, kinds, 5)
    solver = new_solver(encoding.cnf.clauses)
    meter = Meter(600.0)
    plain = [c for c in cells if c.op in ("and", "nand", "or", "nor", "xor", "xnor", "not")]
    costs = brute_force_costs([truth(on, nvars) for on in ons], nvars, plain)
    try:
        answers = {}
        for order in (range(1, 6), range(5, 0, -1)):
            for k in order:
                result = solve_within(solver, encoding.gates_exactly(k), 10**9, meter)
                assert result is not None
                answers.setdefault(k, set()).add(result)
        fewest_gates = min(k for k, seen in answers.items() if True in seen)
    finally:
        solver.delete()
    assert all(len(seen) == 1 for seen in answers.values()), source
    assert fewest_gates == min(cost.gates for cost in costs), source


def test_counting_bound_lets_two_signals_share_one_gate_where_their_cared_levels_agree():
    """Two signals that differ only in a tick one of them does not care about are one
    AND2's output (checked here over every cared-for minterm), so no lower bound may
    ask for two output gates: the bound counts signals whose cared-for levels disagree,
    not distinct (on, care) pairs.  Source: the truth table itself, by enumeration."""
    full = frozenset(range(8))
    and2 = frozenset(m for m in full if m & 1 and m & 2)
    some = frozenset({0, 3, 4, 7})
    a = Signal("a", and2, full, "high")
    b = Signal("b", and2 & some, some, "high")
    assert all((m in a.on) == bool(m & 1 and m & 2) for m in a.care)
    assert all((m in b.on) == bool(m & 1 and m & 2) for m in b.care)
    problem = Problem(3, ("x0", "x1", "x2"), [a, b])
    _, gates = counting_bounds(problem, library({"74HC08": 1}).cells)
    assert gates <= 1


def test_counting_bound_counts_the_joins_a_tree_needs_per_unit():
    """Sixteen one-tick decodes of a 12-bit count (t == 0 .. t == 15) over 2-input
    gates and inverters.  Each is on exactly one minterm, so no two share an output
    (16 output units), and each depends on all 12 bits: the gates joining 12 inputs
    into one output have 11 more inputs than gates, and a 2-input gate adds one,
    an inverter none (a counting argument from graph theory: a connected cone of g
    gates over 12 inputs has at least g + 11 edges).  So 11 two-input gates, three
    quad chips, and 16 units in all: at least four chips (three 74HC04 and one
    74HC00 give 16 units but only 4 joins).  Source: the argument above, by hand."""
    full = frozenset(range(1 << 12))
    signals = [Signal(f"s{i}", frozenset({i}), full, "high") for i in range(16)]
    problem = Problem(12, tuple(f"x{i}" for i in range(12)), signals)
    chips, gates = counting_bounds(problem, library({"74HC00": 40, "74HC04": 30}).cells)
    assert chips == 4
    assert gates >= 16
