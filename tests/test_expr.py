"""Tick expressions (synth/expr.py) against Python's own integer semantics.

The reference for every value check is Python itself: each expression is
written a second time as a plain Python lambda in this file, and Python's
int operators (floor ``//``, ``%`` with the divisor's sign, chained
comparisons, short-circuit ``and``/``or``) compute the expected value.  The
language rules come from the format contract, formats.md section 2
("Expressions: t, integers, + - * // %, comparisons (chains allowed), and or
not, parentheses. Parsed, never evaluated with eval/exec. Anything else is an
error with the offending text.").
"""

from __future__ import annotations

import ast
import operator
from pathlib import Path

import pytest
from hypothesis import given, settings, strategies as st

import synth.expr
from synth.expr import MAX_DEPTH, ExprError, parse_expr, ticks_where

TICKS = range(0, 300)

# (expression, the same thing as a Python lambda: the reference)
REFERENCE = [
    ("t", lambda t: t),
    ("42", lambda t: 42),
    ("t % 32 == 20", lambda t: t % 32 == 20),
    ("t // 8", lambda t: t // 8),
    ("t // 8 % 4", lambda t: t // 8 % 4),
    ("t % 8 // 3", lambda t: t % 8 // 3),
    ("t + 3 * 2", lambda t: t + 3 * 2),
    ("(t + 3) * 2", lambda t: (t + 3) * 2),
    ("t - 5 - 2", lambda t: t - 5 - 2),
    ("t - (5 - 2)", lambda t: t - (5 - 2)),
    ("2 * t // 3", lambda t: 2 * t // 3),
    ("2 * (t // 3)", lambda t: 2 * (t // 3)),
    ("-t", lambda t: -t),
    ("- -t", lambda t: - -t),
    ("-t % 7", lambda t: -t % 7),              # unary minus binds tighter than %
    ("-(t % 7)", lambda t: -(t % 7)),
    ("(t - 150) // 32", lambda t: (t - 150) // 32),   # floor division of negatives
    ("(t - 150) % 32", lambda t: (t - 150) % 32),     # remainder takes the divisor's sign
    ("t % -7", lambda t: t % -7),
    ("t // -7", lambda t: t // -7),
    ("3 - -t * 2", lambda t: 3 - -t * 2),
    ("t < 10", lambda t: t < 10),
    ("t <= 10", lambda t: t <= 10),
    ("t > 10", lambda t: t > 10),
    ("t >= 10", lambda t: t >= 10),
    ("t != 10", lambda t: t != 10),
    ("3 < t < 7", lambda t: 3 < t < 7),
    ("0 <= t % 8 < 2", lambda t: 0 <= t % 8 < 2),
    ("10 > t // 4 >= 2 != t", lambda t: 10 > t // 4 >= 2 != t),
    ("t == t == t", lambda t: t == t == t),
    ("t + 1 > 5 * 2", lambda t: t + 1 > 5 * 2),
    ("t < 2 or t > 5 and t < 8", lambda t: t < 2 or t > 5 and t < 8),   # and binds tighter
    ("(t < 2 or t > 5) and t < 8", lambda t: (t < 2 or t > 5) and t < 8),
    ("not t < 3 and t < 10", lambda t: not t < 3 and t < 10),           # not binds tighter than and
    ("not (t < 3 and t < 10)", lambda t: not (t < 3 and t < 10)),
    ("not not t % 5 == 0", lambda t: not not t % 5 == 0),
    ("t % 64 < 4 or t % 64 == 40 or 100 <= t < 110",
     lambda t: t % 64 < 4 or t % 64 == 40 or 100 <= t < 110),
    ("t*t % 17 == 4", lambda t: t * t % 17 == 4),
    ("  t\t%\n32 == 0  ", lambda t: t % 32 == 0),
    ("((((t))))", lambda t: t),
    ("123456789012345678901234567890 // (t + 1) > 0",
     lambda t: 123456789012345678901234567890 // (t + 1) > 0),
]


@pytest.mark.parametrize("text, reference", REFERENCE, ids=[text for text, _ in REFERENCE])
def test_value_matches_python_reference(text, reference):
    expr = parse_expr(text)
    got = [expr.evaluate(t) for t in TICKS]
    expected = [reference(t) for t in TICKS]
    assert got == expected
    assert [type(v) for v in got] == [type(v) for v in expected]   # bool stays bool, int int


@pytest.mark.parametrize("text, reference", [(x, f) for x, f in REFERENCE if parse_expr(x).is_condition])
def test_ticks_where_is_the_brute_force_set(text, reference):
    assert ticks_where(text, 256) == frozenset(t for t in range(256) if reference(t))


def test_ticks_where_accepts_a_parsed_expr():
    assert ticks_where(parse_expr("t % 32 == 20"), 256) == frozenset(range(20, 256, 32))


def test_short_circuit_and_avoids_the_division():
    # Python's and short-circuits: the right side is not evaluated at t = 3.
    expr = parse_expr("t != 3 and 12 // (t - 3) > 1")
    assert [expr.evaluate(t) for t in range(8)] == \
        [t != 3 and 12 // (t - 3) > 1 for t in range(8)]


def test_short_circuit_or_and_chain():
    expr = parse_expr("t == 0 or 100 // t > 10")
    assert ticks_where(expr, 20) == frozenset(t for t in range(20) if t == 0 or 100 // t > 10)
    chain = parse_expr("0 < t < 100 // t")     # 100 // t is skipped where 0 < t fails
    assert [chain.evaluate(t) for t in range(12)] == [0 < t < 100 // t if t else False
                                                      for t in range(12)]


@pytest.mark.parametrize("text, at_t, quoted", [
    ("64 // (t - 3) > 1", 3, "64 // (t - 3)"),
    ("t % (t // 10) == 0", 0, "t % (t // 10)"),
    ("1 + t // 0 == 1", 0, "t // 0"),
])
def test_division_by_zero_names_t(text, at_t, quoted):
    with pytest.raises(ExprError) as caught:
        ticks_where(text, 50)
    assert str(caught.value) == f"division by zero at t = {at_t} in {quoted!r}"


# (expression, the message, the 0-based offset of the offending text)
BAD = [
    ("", "expected an expression, got nothing", 0),
    ("   ", "expected an expression, got nothing", 0),
    ("t foo", "expected an operator, got 'foo' at column 3", 2),
    ("t.__class__", "attribute access is not allowed: 't.__class__' at column 1", 0),
    ("t.real == 0", "attribute access is not allowed: 't.real' at column 1", 0),
    ("(t).real", "attribute access is not allowed: '(t).real' at column 1", 0),
    ("abs(t) > 3", "calls are not allowed: 'abs(t)' at column 1", 0),
    ("t == __import__('os')", "calls are not allowed: \"__import__('os')\" at column 6", 5),
    ("t(3)", "calls are not allowed: 't(3)' at column 1", 0),
    ("t[0] == 1", "subscripts are not allowed: 't[0]' at column 1", 0),
    ("[1, 2]", "lists are not allowed: '[1, 2]' at column 1", 0),
    ("lambda t: t", "lambda is not allowed: 'lambda t: t' at column 1", 0),
    ("t == 'a'", "strings are not allowed: \"'a'\" at column 6", 5),
    ('"t % 2"', "strings are not allowed: '\"t % 2\"' at column 1", 0),
    ("x > 1", "unknown name 'x' (only t is defined) at column 1", 0),
    ("True", "unknown name 'True' (only t is defined) at column 1", 0),
    ("t + 1.5 > 2", "expected an integer, got '1.5' at column 5", 4),
    ("t > 0x10", "expected an integer, got '0x10' at column 5", 4),
    ("t == 010", "leading zeros are ambiguous: '010' (write 10; C would read it as octal 8) "
                 "at column 6", 5),
    ("t / 2 == 0", "'/' is not allowed: ticks are whole numbers, write '//' at column 3", 2),
    ("t ** 2 > 3", "powers '**' are not allowed (write t * t) at column 3", 2),
    ("t & 1", "operator '&' is not allowed (use and, or, not) at column 3", 2),
    ("t = 3", "expected '==' to compare, got '=' at column 3", 2),
    ("t < 3 )", "unbalanced ')' at column 7", 6),
    ("(t < 3", "expected ')' to close the '(' at column 1, got the end of the expression "
               "at column 7", 6),
    ("()", "expected an expression inside '()', got nothing at column 1", 0),
    ("t ==", "expected a number, t or '(', got the end of the expression at column 5", 4),
    ("t < < 3", "expected a number, t or '(', got '<' at column 5", 4),
    ("t if t else 3", "expected an operator, got 'if' at column 3", 2),
    ("t; 1", "unexpected character ';' at column 2", 1),
    ("t ≤ 3", "unexpected character '≤' at column 3", 2),
    ("(t < 3) + 1 > 0", "expected a number, got the condition '(t < 3)' at column 1", 0),
    ("-(t < 3)", "expected a number, got the condition '(t < 3)' at column 2", 1),
    ("t % 4 and t < 9", "expected a condition such as 't % 32 == 20', got the number "
                        "'t % 4' at column 1", 0),
    ("not t", "expected a condition such as 't % 32 == 20', got the number 't' at column 5", 4),
]


@pytest.mark.parametrize("text, message, offset", BAD, ids=[repr(text) for text, _, _ in BAD])
def test_bad_expression_is_refused_with_its_text(text, message, offset):
    with pytest.raises(ExprError) as caught:
        parse_expr(text)
    assert str(caught.value) == message
    assert caught.value.offset == offset
    assert isinstance(caught.value, ValueError)


def test_high_must_be_a_condition():
    with pytest.raises(ExprError, match="expected a condition .* got the number 't % 32'"):
        ticks_where("t % 32", 64)


def test_nesting_is_bounded_not_a_crash():
    ok = "(" * MAX_DEPTH + "t" + ")" * MAX_DEPTH + " == 1"
    assert ticks_where(ok, 4) == frozenset({1})
    deep = "(" * (MAX_DEPTH + 1) + "t" + ")" * (MAX_DEPTH + 1)
    with pytest.raises(ExprError, match="nested too deeply"):
        parse_expr(deep)
    with pytest.raises(ExprError, match="nested too deeply"):
        parse_expr("-" * 5000 + "t")
    with pytest.raises(ExprError, match="nested too deeply"):
        parse_expr("not " * 5000 + "t < 1")


def test_long_flat_chains_do_not_recurse():
    # 5000 terms at one precedence level are folded in a loop, not a deep tree.
    text = " + ".join(["t"] * 5000) + " == 0"
    assert ticks_where(text, 3) == frozenset({0})
    text = " or ".join(f"t == {k}" for k in range(3000, 0, -1))
    assert ticks_where(text, 40) == frozenset(range(1, 40))


def test_module_never_evaluates_python():
    """The parser is our own: no eval/exec/compile builtins, no ast module.

    Checked by reading synth/expr.py with Python's ast module (here, in the
    test, as an outside inspector).
    """
    tree = ast.parse(Path(synth.expr.__file__).read_text(encoding="utf-8"))
    called = {node.func.id for node in ast.walk(tree)
              if isinstance(node, ast.Call) and isinstance(node.func, ast.Name)}
    assert not called & {"eval", "exec", "compile", "__import__"}
    imported = {alias.name for node in ast.walk(tree) if isinstance(node, ast.Import)
                for alias in node.names}
    imported |= {node.module for node in ast.walk(tree) if isinstance(node, ast.ImportFrom)}
    assert not imported & {"ast", "builtins", "importlib"}


# -- random expressions: each drawn as a pair (text, Python function) -------
# The text is fully parenthesised, so this checks values, not precedence
# (the table above checks precedence).  The function is built from Python's
# operator module: the reference.

NUMBER_OPS = [("+", operator.add), ("-", operator.sub), ("*", operator.mul),
              ("//", operator.floordiv), ("%", operator.mod)]
COMPARE_OPS = [("==", operator.eq), ("!=", operator.ne), ("<", operator.lt),
               ("<=", operator.le), (">", operator.gt), (">=", operator.ge)]

numbers_leaf = st.one_of(
    st.just(("t", lambda t: t)),
    st.integers(min_value=0, max_value=40).map(lambda k: (str(k), lambda t, k=k: k)),
)


def _number_step(children):
    binary = st.tuples(children, st.sampled_from(NUMBER_OPS), children).map(
        lambda p: (f"({p[0][0]} {p[1][0]} {p[2][0]})",
                   lambda t, a=p[0][1], f=p[1][1], b=p[2][1]: f(a(t), b(t))))
    negated = children.map(lambda c: (f"(-{c[0]})", lambda t, a=c[1]: -a(t)))
    return st.one_of(binary, negated)


numbers = st.recursive(numbers_leaf, _number_step, max_leaves=8)

comparisons = st.tuples(numbers, st.sampled_from(COMPARE_OPS), numbers).map(
    lambda p: (f"{p[0][0]} {p[1][0]} {p[2][0]}",
               lambda t, a=p[0][1], f=p[1][1], b=p[2][1]: f(a(t), b(t))))


def _condition_step(children):
    both = st.tuples(children, st.sampled_from(["and", "or"]), children).map(
        lambda p: (f"({p[0][0]} {p[1]} {p[2][0]})",
                   (lambda t, a=p[0][1], b=p[2][1]: a(t) and b(t)) if p[1] == "and"
                   else (lambda t, a=p[0][1], b=p[2][1]: a(t) or b(t))))
    negated = children.map(lambda c: (f"(not {c[0]})", lambda t, a=c[1]: not a(t)))
    return st.one_of(both, negated)


conditions = st.recursive(comparisons, _condition_step, max_leaves=6)


def _python_ticks(function, cycle):
    """The reference set, or ZeroDivisionError if Python divides by zero first."""
    return frozenset(t for t in range(cycle) if function(t))


@settings(max_examples=300, deadline=None)
@given(conditions, st.integers(min_value=1, max_value=70))
def test_random_conditions_match_python(pair, cycle):
    text, function = pair
    try:
        expected = _python_ticks(function, cycle)
    except ZeroDivisionError:
        with pytest.raises(ExprError, match=r"division by zero at t = \d+"):
            ticks_where(text, cycle)
        return
    assert ticks_where(text, cycle) == expected


@settings(max_examples=300, deadline=None)
@given(numbers)
def test_random_numbers_match_python(pair):
    text, function = pair
    expr = parse_expr(text)
    for t in range(25):
        try:
            expected = function(t)
        except ZeroDivisionError:
            with pytest.raises(ExprError, match=f"division by zero at t = {t} "):
                expr.evaluate(t)
            continue
        assert expr.evaluate(t) == expected
