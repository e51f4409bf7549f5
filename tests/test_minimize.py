"""Tests for synth.minimize: covers checked on every minterm, sized against
sympy.logic (the independent reference library), textbook Karnaugh-map
answers and trade facts about counter decoding."""

from __future__ import annotations

import itertools
import random

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sympy import And, Or, false, symbols, true
from sympy.logic import SOPform

from synth.minimize import (AUTO_MAX_VARS, Cover, Function, Mismatch, _cost, _coverage_classes,
                            _maxsat_cover, _multi_output_primes, _Space, _variant, check_cover,
                            cube_contains, cube_literals, minimize, run_cubes, to_text)

def examples(count: int) -> settings:
    """Fixed example counts (the file runs in well under a minute), same draws every run."""
    return settings(max_examples=count, derandomize=True, deadline=None, database=None,
                    suppress_health_check=[HealthCheck.too_slow])


# ---------------------------------------------------------------- helpers

def delivered_ok(cover: Cover, f: Function) -> bool:
    """Every minterm, one by one: on-set asserted, off-set not, dc free."""
    for m in range(1 << cover.nvars):
        if m in f.dc:
            continue
        if cover.signal_value(f.name, m) != (m in f.on):
            return False
    return True


def sympy_size(expr) -> tuple[int, int]:
    """(terms, literals) of a sympy sum of products."""
    if expr == true:
        return 1, 0
    if expr == false:
        return 0, 0
    terms = expr.args if isinstance(expr, Or) else (expr,)
    literals = sum(len(t.args) if isinstance(t, And) else 1 for t in terms)
    return len(terms), literals


def sympy_reference(f: Function, nvars: int):
    """sympy.logic.SOPform on the same on-set and don't-cares (msb first)."""
    xs = [symbols(f"x{i}") for i in reversed(range(nvars))]
    return SOPform(xs, sorted(f.on - f.dc), sorted(f.dc))


def parse_sop(text: str, names: str) -> list[tuple[int, int]]:
    """A textbook answer such as ``B'D' + A'CD'`` over one-letter variables.

    ``names`` lists the variables msb first (``'ABCD'``): bit i is
    ``names[-1 - i]``.
    """
    cubes = []
    for term in text.replace(" ", "").split("+"):
        mask = value = 0
        i = 0
        while i < len(term):
            bit = len(names) - 1 - names.index(term[i])
            negated = i + 1 < len(term) and term[i + 1] == "'"
            mask |= 1 << bit
            if not negated:
                value |= 1 << bit
            i += 2 if negated else 1
        cubes.append((mask, value))
    return cubes


@st.composite
def window_functions(draw, min_bits=4, max_bits=10, name="s"):
    """A decode signal as counters produce them: a few runs of states, some don't-cares.

    The runs may wrap around the count; states past a truncated cycle
    (never reached) are don't-cares, as are the ticks of an optional run.
    """
    nbits = draw(st.integers(min_bits, max_bits))
    full = 1 << nbits
    cycle = draw(st.sampled_from([full, full, draw(st.integers(full // 2 + 1, full))]))
    on: set[int] = set()
    for _ in range(draw(st.integers(1, 3))):
        start = draw(st.integers(0, cycle - 1))
        length = draw(st.integers(1, max(1, cycle // 3)))
        on.update((start + k) % cycle for k in range(length))
    dc = set(range(cycle, full))
    if draw(st.booleans()):
        start = draw(st.integers(0, cycle - 1))
        dc.update((start + k) % cycle for k in range(draw(st.integers(1, max(1, cycle // 8)))))
    return nbits, Function(name, frozenset(on - dc), frozenset(dc))


# ---------------------------------------------------------------- random window functions

@examples(300)
@given(window_functions())
def test_cover_equals_function_on_every_minterm(case):
    nbits, f = case
    cover = minimize([f], nbits)
    assert delivered_ok(cover, f)
    assert check_cover(cover, [f]) == []


@examples(120)
@given(window_functions(max_bits=9))
def test_single_output_never_larger_than_sympy(case):
    # Reference: sympy.logic.SOPform (Quine-McCluskey with its own cover
    # selection), an independent library.  Our cost order is terms, then
    # literals, so the check is lexicographic.
    nbits, f = case
    cover = minimize([f], nbits)
    ours = (cover.term_count(f.name), cover.literals(f.name))
    theirs = sympy_size(sympy_reference(f, nbits))
    assert cover.proven_minimal
    assert ours <= theirs, (to_text(cover, f.name), theirs)


@examples(60)
@given(window_functions(max_bits=7))
def test_free_phase_cover_is_exact_and_no_larger_than_sympy_of_either_phase(case):
    # Reference: sympy.logic.SOPform of the function and of its complement
    # (off-set as on-set, same don't-cares); the free-phase cover must equal
    # the function on every minterm and cost no more than the cheaper of the two.
    nbits, f = case
    cover = minimize([f], nbits, free_phase={f.name})
    assert delivered_ok(cover, f)
    complement = Function(f.name, frozenset(range(1 << nbits)) - f.on - f.dc, f.dc)
    best = min(sympy_size(sympy_reference(f, nbits)), sympy_size(sympy_reference(complement, nbits)))
    assert (cover.term_count(f.name), cover.literals(f.name)) <= best


def test_free_phase_complement_needing_the_solver_is_not_empty():
    # Regression (found by fuzzing the CLI): 7 bits, on 55..77, don't-care 78..79; the
    # complement phase has too many open primes for enumeration and went to the solver,
    # which linked none of its terms: an empty cover, asserted on every off tick.
    f = Function("s0", frozenset(range(55, 78)), frozenset({78, 79}))
    cover = minimize([f], 7, free_phase={"s0"}, exact="yes")
    assert check_cover(cover, [f]) == []
    assert cover.phases["s0"] == "true"          # 3 terms beat the complement's cover
    assert cover.term_count("s0") == 3


@examples(8)
@given(window_functions(min_bits=10, max_bits=10))
def test_ten_bit_functions_never_larger_than_sympy(case):
    # Reference: sympy.logic.SOPform, as above, at the largest size asked for.
    nbits, f = case
    cover = minimize([f], nbits)
    assert check_cover(cover, [f]) == []
    assert (cover.term_count(f.name), cover.literals(f.name)) <= sympy_size(sympy_reference(f, nbits))


@examples(60)
@given(st.integers(4, 8).flatmap(lambda n: st.lists(
    window_functions(n, n), min_size=2, max_size=5)), st.booleans())
def test_multi_output_covers_are_exact_and_no_worse_than_espresso(cases, free):
    nbits = cases[0][0]
    functions = [Function(f"s{i}", f.on, f.dc) for i, (_, f) in enumerate(cases)]
    names = {f.name for f in functions} if free else set()
    exact = minimize(functions, nbits, exact="yes", free_phase=names)
    heuristic = minimize(functions, nbits, exact="no", free_phase=names)
    for cover in (exact, heuristic):
        assert all(delivered_ok(cover, f) for f in functions)
        assert check_cover(cover, functions) == []
    assert exact.proven_minimal and not heuristic.proven_minimal
    assert exact.cost <= heuristic.cost


# ---------------------------------------------------------------- textbook Karnaugh-map problems

TEXTBOOK = [
    # (source, variables msb first, on-set, don't-cares, published minimal sum)
    # Mano's example numbers are recalled and may differ between editions.
    ("Mano, Digital Design, Example 3.5 (from memory)", "WXYZ",
     [0, 1, 2, 4, 5, 6, 8, 9, 12, 13, 14], [], "Y' + W'Z' + XZ'"),
    ("Mano, Digital Design, Example 3.6 (from memory): "
     "F = A'B'C' + B'CD' + A'BCD' + AB'C'", "ABCD",
     [0, 1, 2, 6, 8, 9, 10], [], "B'D' + B'C' + A'CD'"),
    ("Mano, Digital Design, don't-care example (from memory)", "WXYZ",
     [1, 3, 7, 11, 15], [0, 2, 5], "YZ + W'X'"),
    ("Mano, Digital Design, same don't-care example, second answer (from memory)", "WXYZ",
     [1, 3, 7, 11, 15], [0, 2, 5], "YZ + W'Z"),
    ("four corners and centre of a 4-variable map (common textbook exercise, from memory)",
     "ABCD", [0, 2, 5, 7, 8, 10, 13, 15], [], "B'D' + BD"),
    ("cyclic prime-implicant chart, no essential primes (common textbook example, from memory)",
     "ABC", [0, 1, 2, 5, 6, 7], [], "A'B' + BC' + AC"),
    ("BCD digit >= 5, codes 10-15 don't-care (common textbook exercise, from memory)", "ABCD",
     [5, 6, 7, 8, 9], [10, 11, 12, 13, 14, 15], "A + BD + BC"),
]


@pytest.mark.parametrize("source, names, on, dc, published", TEXTBOOK,
                         ids=[t[0].split(",")[0] + f"#{i}" for i, t in enumerate(TEXTBOOK)])
def test_textbook_minimal_sums(source, names, on, dc, published):
    f = Function("F", frozenset(on), frozenset(dc))
    nvars = len(names)
    var_names = tuple(reversed(names))              # bit 0 is the last letter
    cover = minimize([f], nvars, var_names, exact="yes")
    answer = parse_sop(published, names)
    # The published answer is a correct cover of the same function ...
    for m in range(1 << nvars):
        if m not in f.dc:
            assert any(cube_contains(c, m) for c in answer) == (m in f.on), (source, m)
    # ... and ours costs exactly as much: terms and literals.
    assert cover.proven_minimal
    assert (cover.term_count("F"), cover.literals("F")) == (
        len(answer), sum(cube_literals(c) for c in answer)), (source, to_text(cover, "F"))


def test_textbook_unique_answer_is_printed_in_trade_notation():
    # Mano, Digital Design, Example 3.5 (from memory): every prime is
    # essential, so the minimal sum is unique.
    f = Function("F", frozenset([0, 1, 2, 4, 5, 6, 8, 9, 12, 13, 14]))
    cover = minimize([f], 4, ("Z", "Y", "X", "W"))
    assert to_text(cover, "F") == "W'·Z' + X·Z' + Y'"
    assert to_text(cover, "F", "ascii") == "~W & ~Z | X & ~Z | ~Y"


# ---------------------------------------------------------------- common-practice facts

def test_and_of_four_divider_outputs_is_one_tick_in_sixteen():
    # Common practice: ANDing Q1..Q4 of a binary divider asserts one tick in
    # sixteen (6.25 % duty); the decode is one 4-input AND.
    f = Function("strobe", frozenset({15}))
    cover = minimize([f], 4)
    assert cover.cubes("strobe") == ((0b1111, 0b1111),)
    assert to_text(cover, "strobe") == "Q4·Q3·Q2·Q1"
    asserted = [m for m in range(16) if cover.signal_value("strobe", m)]
    assert asserted == [15] and len(asserted) / 16 == 0.0625
    assert cover.proven_minimal and cover.cost == (1, 4, 1)


def test_a_variable_the_function_ignores_is_dropped():
    # Common practice: Q1 AND Q2 of a 5-stage counter does not involve Q3..Q5.
    f = Function("pair", frozenset(m for m in range(32) if m & 0b11 == 0b11))
    cover = minimize([f], 5)
    assert cover.cubes("pair") == ((0b00011, 0b00011),)
    assert to_text(cover, "pair") == "Q2·Q1"


def test_shared_term_is_built_once():
    # Common practice (multi-output minimization): F = Q4·Q3 + Q1' and
    # G = Q4·Q3 + Q2 share the product Q4·Q3; it is one AND gate feeding both ORs.
    F = Function("F", frozenset(m for m in range(16) if m & 0b1100 == 0b1100 or not m & 1))
    G = Function("G", frozenset(m for m in range(16) if m & 0b1100 == 0b1100 or m & 2))
    cover = minimize([F, G], 4)
    shared = cover.terms.index((0b1100, 0b1100))
    assert shared in cover.outputs["F"] and shared in cover.outputs["G"]
    assert cover.cost == (3, 4, 4)
    assert cover.proven_minimal


def test_sharing_can_use_a_term_that_is_prime_for_neither_function():
    # Textbook property of multi-output minimization (from memory): over
    # (Q2, Q1), F = NAND = Σm(0,1,2) and G = OR = Σm(1,2,3).  Alone their
    # minimal sums are F = Q2' + Q1' and G = Q2 + Q1 (four terms; sympy's
    # SOPform, the reference, gives the same).  Shared, the product Q2·Q1'
    # -- a prime of neither -- serves both: F = Q2' + Q2·Q1', G = Q1 + Q2·Q1'.
    F = Function("F", frozenset({0, 1, 2}))
    G = Function("G", frozenset({1, 2, 3}))
    separate = sympy_size(sympy_reference(F, 2))[0] + sympy_size(sympy_reference(G, 2))[0]
    cover = minimize([F, G], 2)
    assert separate == 4
    assert cover.cost == (3, 4, 4) and cover.proven_minimal
    shared = cover.terms.index((0b11, 0b10))
    assert shared in cover.outputs["F"] and shared in cover.outputs["G"]
    assert to_text(cover, "F") == "Q2·Q1' + Q2'" and to_text(cover, "G") == "Q2·Q1' + Q1"


def test_complement_phase_is_chosen_when_free_and_cheaper():
    # Common practice: "not at count 15" is a 4-input NAND of the stages;
    # in true phase it needs four terms Q1' + Q2' + Q3' + Q4'.
    f = Function("busy", frozenset(range(15)))
    fixed = minimize([f], 4)
    free = minimize([f], 4, free_phase={"busy"})
    assert fixed.phases["busy"] == "true" and fixed.cost == (4, 4, 4)
    assert free.phases["busy"] == "complement" and free.cost == (1, 4, 1)
    assert to_text(free, "busy") == "Q4·Q3·Q2·Q1"
    assert all(free.signal_value("busy", m) == (m < 15) for m in range(16))
    assert not free.evaluate("busy", 3) and free.evaluate("busy", 15)
    assert check_cover(free, [f]) == []


def test_true_phase_is_kept_when_both_cost_the_same():
    f = Function("half", frozenset(m for m in range(16) if m & 1))
    assert minimize([f], 4, free_phase={"half"}).phases["half"] == "true"


def test_phase_choice_in_a_shared_context():
    # Two signals, one free: the free one flips only if that lowers the total.
    a = Function("a", frozenset({15}))
    b = Function("b", frozenset(range(15)))
    cover = minimize([a, b], 4, free_phase={"b"})
    assert cover.phases == {"a": "true", "b": "complement"}
    assert cover.cost == (1, 4, 2)          # one AND gate drives both
    assert check_cover(cover, [a, b]) == []


# ---------------------------------------------------------------- proofs and limits

def test_small_cases_are_proven_minimal():
    f = Function("f", frozenset({1, 3, 7, 11, 15}), frozenset({0, 2, 5}))
    cover = minimize([f], 4)
    assert cover.proven_minimal and cover.method == "exact cover, proven minimal"
    assert minimize([f], 4, exact="yes").method == "exact cover, proven minimal"


def test_espresso_only_is_not_claimed_minimal():
    f = Function("f", frozenset({1, 3, 7, 11, 15}), frozenset({0, 2, 5}))
    cover = minimize([f], 4, exact="no")
    assert not cover.proven_minimal and cover.method == "heuristic cover"
    assert "best found" in cover.note


def test_beyond_the_automatic_limit_the_cover_says_best_found():
    nvars = AUTO_MAX_VARS + 1
    f = Function("gate", frozenset(range(100, 900)), frozenset(range(5000, 1 << nvars)))
    cover = minimize([f], nvars)
    assert not cover.proven_minimal
    assert "best found" in cover.note and f"{nvars} variables" in cover.note
    assert check_cover(cover, [f]) == []


def test_constants():
    never = Function("never", frozenset())
    always = Function("always", frozenset(range(8)))
    cover = minimize([never, always], 3)
    assert cover.outputs["never"] == ()
    assert cover.cubes("always") == ((0, 0),)
    assert to_text(cover, "never") == "0" and to_text(cover, "always") == "1"


def test_dont_care_wins_where_it_overlaps_the_on_set():
    f = Function("f", frozenset({0, 1}), frozenset({1}))
    cover = minimize([f], 2)
    assert check_cover(cover, [f]) == []
    assert cover.cost == (1, 1, 1)                  # Q2': state 1 free


@pytest.mark.parametrize("kwargs, message", [
    (dict(functions=[Function("a", frozenset({16}))], nvars=4), "expected minterms 0..15"),
    (dict(functions=[Function("a", frozenset()), Function("a", frozenset())], nvars=2),
     "distinct signal names"),
    (dict(functions=[], nvars=2, var_names=["A"]), "2 distinct variable names"),
    (dict(functions=[], nvars=2, exact="maybe"), "exact='auto', 'yes' or 'no'"),
    (dict(functions=[Function("a", frozenset())], nvars=2, free_phase={"b"}), "free_phase"),
])
def test_bad_arguments(kwargs, message):
    with pytest.raises(ValueError, match=message.replace("(", r"\(")):
        minimize(**kwargs)


# ---------------------------------------------------------------- rendering and checking

def test_trade_and_ascii_notation():
    names = ("Q1", "Q2", "Q3", "Q4", "Q5")
    cover = Cover(nvars=5, var_names=names, terms=((0b01101, 0b01001), (0b10000, 0)),
                  outputs={"x": (0, 1)}, phases={"x": "true"}, proven_minimal=False,
                  method="heuristic cover", cost=(2, 4, 2))
    assert to_text(cover, "x") == "Q4·Q3'·Q1 + Q5'"
    assert to_text(cover, "x", style="ascii") == "Q4 & ~Q3 & Q1 | ~Q5"


def test_check_cover_reports_each_wrong_minterm():
    f = Function("f", frozenset({3, 7}), frozenset({5}))
    wrong = Cover(nvars=3, var_names=("Q1", "Q2", "Q3"), terms=((0b001, 0b001),),
                  outputs={"f": (0,)}, phases={"f": "true"}, proven_minimal=False,
                  method="hand", cost=(1, 1, 1))
    assert check_cover(wrong, [f]) == [Mismatch("f", 1, wanted=False, got=True)]


@pytest.mark.parametrize("start, stop, nvars", [(0, 1, 3), (3, 9, 4), (1, 31, 5), (0, 64, 6), (17, 50, 6)])
def test_run_cubes_cover_exactly_the_run(start, stop, nvars):
    cubes = run_cubes(start, stop, nvars)
    for m in range(1 << nvars):
        assert sum(cube_contains(c, m) for c in cubes) == (1 if start <= m < stop else 0)


def test_multi_output_primes_match_their_definition():
    # Definition (brute force over all 3^n cubes): a cube is a multi-output
    # prime when it lies inside the upper set of at least one output and no
    # one-variable expansion lies inside all of the same outputs.
    rng = random.Random(4)
    for _ in range(20):
        n = rng.randint(1, 5)
        functions = [Function(f"f{i}", frozenset(m for m in range(1 << n) if rng.random() < 0.5),
                              frozenset(m for m in range(1 << n) if rng.random() < 0.15))
                     for i in range(rng.randint(1, 3))]
        space = _Space(n)
        variants = [_variant(space, i, f, "true") for i, f in enumerate(functions)]
        ours = {(cube, tag) for cube, _, tag in _multi_output_primes(space, variants, None)}

        def tag_of(cube, care=False):
            return sum(1 << i for i, v in enumerate(variants)
                       if all(v.upper >> m & 1 for m in range(1 << n) if cube_contains(cube, m))
                       and (not care or any(v.care >> m & 1 for m in range(1 << n)
                                            if cube_contains(cube, m))))

        expected = set()
        for levels in itertools.product((0, 1, None), repeat=n):
            mask = sum(1 << i for i, x in enumerate(levels) if x is not None)
            value = sum(1 << i for i, x in enumerate(levels) if x == 1)
            cube = (mask, value)
            tag = tag_of(cube)
            if not tag:
                continue
            bigger = [(mask & ~(1 << j), value & ~(1 << j)) for j in range(n) if mask >> j & 1]
            if all(tag_of(b) != tag for b in bigger) and tag_of(cube, care=True):
                expected.add((cube, tag_of(cube, care=True)))
        assert ours == expected


@examples(60)
@given(window_functions(max_bits=8))
def test_single_output_shortcuts_agree_with_the_sat_solver(case):
    # One signal is solved by essential primes or enumeration when few primes
    # stay open; the MaxSAT formulation must reach the same cost.
    nbits, f = case
    space = _Space(nbits)
    variants = [_variant(space, 0, f, "true")]
    primes = _multi_output_primes(space, variants, None)
    classes = [_coverage_classes(variants[0].care, [(p, b) for p, (_, b, _) in enumerate(primes)])]
    solution, _ = _maxsat_cover(variants, primes, classes, [], 1, limits=False)
    assert minimize([f], nbits, exact="yes").cost == _cost(solution)
