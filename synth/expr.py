"""The tick-expression language of the spec (``high: "t % 32 == 20"``).

Interface: ``parse_expr(text) -> Expr``; ``Expr.evaluate(t) -> int | bool``,
``Expr.text``, ``Expr.is_condition``; ``ticks_where(text, cycle) ->
frozenset[int]``; ``ExprError(message, offset)`` (a ``ValueError``).

The language, and nothing more: the tick index ``t``, decimal integer
literals, ``+ - * // %``, unary minus, comparisons ``== != < <= > >=``
(chains such as ``0 <= t % 8 < 2`` mean ``0 <= t % 8 and t % 8 < 2``),
``and or not`` and parentheses.  Precedence, loosest first: ``or``, ``and``,
``not``, comparisons, ``+ -``, ``* // %``, unary minus; as in Python.

Decisions, written down so the language stays exactly ours:

- It is parsed by hand (a tokenizer and a recursive-descent parser) into a
  small tree and evaluated by closures built from that tree.  Nothing is ever
  handed to ``eval``, ``exec``, ``compile`` or Python's ``ast`` module.
- Two kinds of value, checked while parsing: numbers and conditions.
  Arithmetic and comparisons take numbers; ``and or not`` take conditions;
  a ``high:`` expression must be a condition.  ``(t < 3) + 1`` and ``t % 4 and
  t < 9`` are errors rather than Python's quiet bool/int mixing.
- ``//`` and ``%`` follow Python's integer semantics (floor division, the
  remainder takes the divisor's sign): ``(t - 1) // 32`` is -1 at t = 0.
- ``and``/``or`` and comparison chains short-circuit as in Python, so
  ``t != 3 and 12 // (t - 3) > 1`` never divides by zero.  A division by zero
  that does happen is an error naming t.
- Literals are decimal; a leading zero (``010``) is refused because C reads
  it as octal.  Parentheses, unary minus and ``not`` nest at most
  ``MAX_DEPTH`` deep, so no input can exhaust Python's stack.

Every error quotes the offending text and its column:

>>> parse_expr("t foo")
Traceback (most recent call last):
synth.expr.ExprError: expected an operator, got 'foo' at column 3
>>> parse_expr("abs(t) > 3")
Traceback (most recent call last):
synth.expr.ExprError: calls are not allowed: 'abs(t)' at column 1
>>> parse_expr("t.real == 0")
Traceback (most recent call last):
synth.expr.ExprError: attribute access is not allowed: 't.real' at column 1
"""

from __future__ import annotations

import dataclasses
import operator
from dataclasses import dataclass, field
from typing import Callable

__all__ = ["Expr", "ExprError", "MAX_DEPTH", "parse_expr", "ticks_where"]

MAX_DEPTH = 64
"""How deeply parentheses, unary minus and ``not`` may nest."""


class ExprError(ValueError):
    """A tick expression that cannot be read or evaluated.

    ``offset`` is the 0-based position of the offending text in the
    expression (the message names it as a 1-based column).
    """

    def __init__(self, message: str, offset: int = 0) -> None:
        super().__init__(message)
        self.message = message
        self.offset = offset


# --------------------------------------------------------------------------
# Tokens

@dataclass(frozen=True)
class Token:
    """One piece of the text: ``kind`` is int, name, op, keyword, bad or end."""

    kind: str
    text: str
    offset: int
    problem: str = ""     # for kind "bad": what is wrong with it


KEYWORDS = ("and", "or", "not")
OPERATORS = ("==", "!=", "<=", ">=", "//", "<", ">", "+", "-", "*", "%", "(", ")", "[", "]", ".", ",")
COMPARISONS = ("==", "!=", "<", "<=", ">", ">=")
DIGITS = "0123456789"
NAME_START = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ_"
NAME_CHARS = NAME_START + DIGITS

# Operators people may try, and what to say instead.
REFUSED_OPERATORS = {
    "**": "powers '**' are not allowed (write t * t)",
    "<<": "shifts '<<' are not allowed (multiply by a power of two)",
    ">>": "shifts '>>' are not allowed (use // with a power of two)",
    "/": "'/' is not allowed: ticks are whole numbers, write '//'",
    "&": "operator '&' is not allowed (use and, or, not)",
    "|": "operator '|' is not allowed (use and, or, not)",
    "^": "operator '^' is not allowed (use and, or, not)",
    "~": "operator '~' is not allowed (use not)",
    "=": "expected '==' to compare, got '='",
    "!": "expected '!=' or not, got '!'",
    ":": "':' is not allowed (no lambdas, slices or assignments)",
    "@": "operator '@' is not allowed",
}


def _scan_number(text: str, start: int) -> Token:
    """An integer literal; floats, hex and ``010`` come back as bad tokens."""
    end = start
    while end < len(text) and text[end] in DIGITS:
        end += 1
    if text.startswith(".", end) or (end < len(text) and text[end] in NAME_START):
        while end < len(text) and (text[end] in NAME_CHARS or text[end] == "."):
            end += 1
        word = text[start:end]
        return Token("bad", word, start, f"expected an integer, got {word!r}")
    word = text[start:end]
    if len(word) > 1 and word[0] == "0":
        octal = f"; C would read it as octal {int(word, 8)}" if set(word) <= set("01234567") else ""
        return Token("bad", word, start,
                     f"leading zeros are ambiguous: {word!r} (write {int(word)}{octal})")
    return Token("int", word, start)


def _scan_string(text: str, start: int) -> Token:
    """A quoted string, always refused, quoted whole in the message."""
    quote = text[start]
    end = text.find(quote, start + 1)
    end = len(text) if end < 0 else end + 1
    word = text[start:end]
    return Token("bad", word, start, f"strings are not allowed: {word!r}")


def tokenize(text: str) -> list[Token]:
    """Split ``text`` into tokens; refused pieces become ``bad`` tokens.

    Bad tokens are reported by the parser when it reaches them, so the first
    problem from the left is the one the user hears about.

    >>> [(tok.kind, tok.text) for tok in tokenize("t%32==20")]
    [('name', 't'), ('op', '%'), ('int', '32'), ('op', '=='), ('int', '20'), ('end', '')]
    >>> tokenize("t / 2")[1].problem
    "'/' is not allowed: ticks are whole numbers, write '//'"
    """
    tokens: list[Token] = []
    pos = 0
    while pos < len(text):
        char = text[pos]
        if char.isspace():
            pos += 1
        elif char in DIGITS or (char == "." and text[pos + 1:pos + 2] in tuple(DIGITS)):
            tokens.append(_scan_number(text, pos))
            pos += len(tokens[-1].text)
        elif char in NAME_START:
            end = pos
            while end < len(text) and text[end] in NAME_CHARS:
                end += 1
            word = text[pos:end]
            tokens.append(Token("keyword" if word in KEYWORDS else "name", word, pos))
            pos = end
        elif char in "'\"":
            tokens.append(_scan_string(text, pos))
            pos += len(tokens[-1].text)
        else:
            tokens.append(_scan_operator(text, pos))
            pos += len(tokens[-1].text)
    tokens.append(Token("end", "", len(text)))
    return tokens


def _scan_operator(text: str, pos: int) -> Token:
    """The longest operator at ``pos``, ours or a refused one, else a bad character."""
    for candidate in sorted((*OPERATORS, *REFUSED_OPERATORS), key=len, reverse=True):
        if text.startswith(candidate, pos):
            if candidate in REFUSED_OPERATORS:
                return Token("bad", candidate, pos, REFUSED_OPERATORS[candidate])
            return Token("op", candidate, pos)
    char = text[pos]
    return Token("bad", char, pos, f"unexpected character {char!r}")


# --------------------------------------------------------------------------
# The tree

Fn = Callable[[int], "int | bool"]


@dataclass(frozen=True)
class Node:
    """A piece of the tree; ``start``/``end`` index its text."""

    start: int
    end: int

    is_condition = False

    def compile(self, text: str) -> Fn:  # pragma: no cover - every kind overrides
        raise NotImplementedError


@dataclass(frozen=True)
class Number(Node):
    value: int = 0

    def compile(self, text: str) -> Fn:
        value = self.value
        return lambda t: value


@dataclass(frozen=True)
class Tick(Node):
    def compile(self, text: str) -> Fn:
        return lambda t: t


@dataclass(frozen=True)
class Negate(Node):
    operand: Node = None

    def compile(self, text: str) -> Fn:
        inner = self.operand.compile(text)
        return lambda t: -inner(t)


ARITHMETIC = {"+": operator.add, "-": operator.sub, "*": operator.mul,
              "//": operator.floordiv, "%": operator.mod}


@dataclass(frozen=True)
class Arithmetic(Node):
    """``first op x op y ...`` at one precedence level, folded left to right."""

    first: Node = None
    rest: tuple = ()          # ((op, operand), ...)

    def compile(self, text: str) -> Fn:
        first = self.first.compile(text)
        steps = [(ARITHMETIC[op], op in ("//", "%"), operand.compile(text),
                  text[self.start:operand.end]) for op, operand in self.rest]

        def run(t: int) -> int:
            value = first(t)
            for function, divides, operand, shown in steps:
                right = operand(t)
                if divides and right == 0:
                    raise ExprError(f"division by zero at t = {t} in {shown!r}", self.start)
                value = function(value, right)
            return value
        return run


COMPARE = {"==": operator.eq, "!=": operator.ne, "<": operator.lt,
           "<=": operator.le, ">": operator.gt, ">=": operator.ge}


@dataclass(frozen=True)
class Comparison(Node):
    """``a < b <= c``: every neighbouring pair holds; stops at the first false."""

    first: Node = None
    rest: tuple = ()          # ((op, operand), ...)
    is_condition = True

    def compile(self, text: str) -> Fn:
        first = self.first.compile(text)
        steps = [(COMPARE[op], operand.compile(text)) for op, operand in self.rest]

        def run(t: int) -> bool:
            left = first(t)
            for function, operand in steps:
                right = operand(t)
                if not function(left, right):
                    return False
                left = right
            return True
        return run


@dataclass(frozen=True)
class Logic(Node):
    """``a and b and c`` or ``a or b or c``, short-circuited."""

    op: str = "and"
    operands: tuple = ()
    is_condition = True

    def compile(self, text: str) -> Fn:
        parts = [operand.compile(text) for operand in self.operands]
        if self.op == "and":
            return lambda t: all(part(t) for part in parts)
        return lambda t: any(part(t) for part in parts)


@dataclass(frozen=True)
class Not(Node):
    operand: Node = None
    is_condition = True

    def compile(self, text: str) -> Fn:
        inner = self.operand.compile(text)
        return lambda t: not inner(t)


# --------------------------------------------------------------------------
# The parser

def _at(offset: int) -> str:
    return f" at column {offset + 1}"


def _shown(token: Token) -> str:
    return "the end of the expression" if token.kind == "end" else repr(token.text)


class _Parser:
    """Recursive descent over the token list, one method per precedence level."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.tokens = tokenize(text)
        self.pos = 0
        self.depth = 0

    # -- token helpers
    @property
    def token(self) -> Token:
        return self.tokens[self.pos]

    def advance(self) -> Token:
        token = self.tokens[self.pos]
        self.pos += 1
        return token

    def at_op(self, *texts: str) -> bool:
        return self.token.kind == "op" and self.token.text in texts

    def at_keyword(self, word: str) -> bool:
        return self.token.kind == "keyword" and self.token.text == word

    def fail_if_bad(self) -> None:
        if self.token.kind == "bad":
            raise ExprError(self.token.problem + _at(self.token.offset), self.token.offset)

    def deeper(self, token: Token) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise ExprError(f"expression nested too deeply (more than {MAX_DEPTH} levels)"
                            + _at(token.offset), token.offset)

    def span_to_close(self, index: int) -> int:
        """End offset of the bracket group opening at token ``index``."""
        depth = 0
        for token in self.tokens[index:]:
            if token.kind == "op" and token.text in "([":
                depth += 1
            elif token.kind == "op" and token.text in ")]":
                depth -= 1
                if depth == 0:
                    return token.offset + 1
        return len(self.text)

    # -- type checks
    def need_number(self, node: Node) -> Node:
        if node.is_condition:
            shown = self.text[node.start:node.end]
            raise ExprError(f"expected a number, got the condition {shown!r}" + _at(node.start),
                            node.start)
        return node

    def need_condition(self, node: Node) -> Node:
        if not node.is_condition:
            shown = self.text[node.start:node.end]
            raise ExprError(f"expected a condition such as 't % 32 == 20', got the number "
                            f"{shown!r}" + _at(node.start), node.start)
        return node

    # -- grammar
    def parse(self) -> Node:
        if self.token.kind == "end":
            raise ExprError("expected an expression, got nothing", 0)
        node = self.parse_or()
        self.fail_if_bad()
        if self.token.kind != "end":
            token = self.token
            if token.kind == "op" and token.text == ")":
                raise ExprError("unbalanced ')'" + _at(token.offset), token.offset)
            raise ExprError(f"expected an operator, got {_shown(token)}" + _at(token.offset),
                            token.offset)
        return node

    def parse_logic(self, word: str, parse_operand: Callable[[], Node]) -> Node:
        first = parse_operand()
        if not self.at_keyword(word):
            return first
        operands = [self.need_condition(first)]
        while self.at_keyword(word):
            self.advance()
            operands.append(self.need_condition(parse_operand()))
        return Logic(first.start, operands[-1].end, op=word, operands=tuple(operands))

    def parse_or(self) -> Node:
        return self.parse_logic("or", self.parse_and)

    def parse_and(self) -> Node:
        return self.parse_logic("and", self.parse_not)

    def parse_not(self) -> Node:
        if self.at_keyword("not"):
            token = self.advance()
            self.deeper(token)
            operand = self.need_condition(self.parse_not())
            self.depth -= 1
            return Not(token.offset, operand.end, operand=operand)
        return self.parse_comparison()

    def parse_comparison(self) -> Node:
        first = self.parse_sum()
        if not self.at_op(*COMPARISONS):
            return first
        rest = []
        self.need_number(first)
        while self.at_op(*COMPARISONS):
            op = self.advance().text
            rest.append((op, self.need_number(self.parse_sum())))
        return Comparison(first.start, rest[-1][1].end, first=first, rest=tuple(rest))

    def parse_chain(self, ops: tuple[str, ...], parse_operand: Callable[[], Node]) -> Node:
        first = parse_operand()
        if not self.at_op(*ops):
            return first
        rest = []
        self.need_number(first)
        while self.at_op(*ops):
            op = self.advance().text
            rest.append((op, self.need_number(parse_operand())))
        return Arithmetic(first.start, rest[-1][1].end, first=first, rest=tuple(rest))

    def parse_sum(self) -> Node:
        return self.parse_chain(("+", "-"), self.parse_product)

    def parse_product(self) -> Node:
        return self.parse_chain(("*", "//", "%"), self.parse_unary)

    def parse_unary(self) -> Node:
        if self.at_op("-"):
            token = self.advance()
            self.deeper(token)
            operand = self.need_number(self.parse_unary())
            self.depth -= 1
            return Negate(token.offset, operand.end, operand=operand)
        return self.parse_postfix()

    def parse_postfix(self) -> Node:
        """An atom, refusing calls, attribute access and subscripts after it."""
        index = self.pos
        node = self.parse_atom()
        start = self.tokens[index].offset
        if self.at_op("("):
            end = self.span_to_close(self.pos)
            raise ExprError(f"calls are not allowed: {self.text[start:end]!r}" + _at(start), start)
        if self.at_op("["):
            end = self.span_to_close(self.pos)
            raise ExprError(f"subscripts are not allowed: {self.text[start:end]!r}" + _at(start),
                            start)
        if self.at_op("."):
            self.advance()
            end = self.token.offset + len(self.token.text) if self.token.kind == "name" \
                else self.token.offset
            raise ExprError(f"attribute access is not allowed: {self.text[start:end].strip()!r}"
                            + _at(start), start)
        return node

    def parse_atom(self) -> Node:
        self.fail_if_bad()
        token = self.token
        if token.kind == "int":
            self.advance()
            return Number(token.offset, token.offset + len(token.text), value=int(token.text))
        if token.kind == "name":
            return self.parse_name()
        if self.at_op("("):
            return self.parse_parenthesised()
        if self.at_op("["):
            end = self.span_to_close(self.pos)
            raise ExprError(f"lists are not allowed: {self.text[token.offset:end]!r}"
                            + _at(token.offset), token.offset)
        raise ExprError(f"expected a number, t or '(', got {_shown(token)}" + _at(token.offset),
                        token.offset)

    def parse_name(self) -> Node:
        token = self.advance()
        end = token.offset + len(token.text)
        if token.text == "t" or self.at_op("(", "[", "."):
            return Tick(token.offset, end)    # postfix checks refuse abs(t), x.y, x[0]
        if token.text == "lambda":
            raise ExprError(f"lambda is not allowed: {self.text[token.offset:].strip()!r}"
                            + _at(token.offset), token.offset)
        raise ExprError(f"unknown name {token.text!r} (only t is defined)" + _at(token.offset),
                        token.offset)

    def parse_parenthesised(self) -> Node:
        opening = self.advance()
        self.deeper(opening)
        if self.at_op(")"):
            raise ExprError("expected an expression inside '()', got nothing"
                            + _at(opening.offset), opening.offset)
        inner = self.parse_or()
        self.fail_if_bad()
        if not self.at_op(")"):
            raise ExprError(f"expected ')' to close the '(' at column {opening.offset + 1}, "
                            f"got {_shown(self.token)}" + _at(self.token.offset), self.token.offset)
        closing = self.advance()
        self.depth -= 1
        # Keep the inner node but widen its span so messages quote the parentheses.
        return _widened(inner, opening.offset, closing.offset + 1)


def _widened(node: Node, start: int, end: int) -> Node:
    """``node`` with its text span covering the surrounding parentheses."""
    return dataclasses.replace(node, start=start, end=end)


# --------------------------------------------------------------------------
# The public face

@dataclass(frozen=True)
class Expr:
    """A parsed tick expression; ``evaluate(t)`` gives its value at tick t."""

    text: str
    root: Node
    _function: Fn = field(repr=False, compare=False, default=None)

    @property
    def is_condition(self) -> bool:
        """True when the expression is true/false (a comparison or logic)."""
        return self.root.is_condition

    def evaluate(self, t: int) -> int | bool:
        """The value at tick ``t``; ExprError on a division by zero.

        >>> parse_expr("t % 32 == 20").evaluate(52)
        True
        >>> parse_expr("(t - 1) // 32").evaluate(0)
        -1
        >>> parse_expr("64 // (t - 3)").evaluate(3)
        Traceback (most recent call last):
        synth.expr.ExprError: division by zero at t = 3 in '64 // (t - 3)'
        """
        return self._function(t)


def parse_expr(text: str) -> Expr:
    """Parse ``text`` into an ``Expr``; ExprError says what and where.

    >>> parse_expr("0 <= t % 8 < 2 and not t == 0").is_condition
    True
    >>> parse_expr("t % (4")
    Traceback (most recent call last):
    synth.expr.ExprError: expected ')' to close the '(' at column 5, got the end of the expression at column 7
    """
    if not isinstance(text, str):
        raise ExprError(f"expected an expression in text, got {text!r}", 0)
    root = _Parser(text).parse()
    return Expr(text, root, root.compile(text))


def ticks_where(text: str | Expr, cycle: int) -> frozenset[int]:
    """The ticks 0 .. cycle-1 where the condition ``text`` holds.

    >>> sorted(ticks_where("t % 32 == 20", 100))
    [20, 52, 84]
    >>> ticks_where("t % 32", 100)
    Traceback (most recent call last):
    synth.expr.ExprError: expected a condition such as 't % 32 == 20', got the number 't % 32' at column 1
    """
    expr = text if isinstance(text, Expr) else parse_expr(text)
    if not expr.is_condition:
        raise ExprError(f"expected a condition such as 't % 32 == 20', got the number "
                        f"{expr.text.strip()!r}" + _at(expr.root.start), expr.root.start)
    holds = expr._function
    return frozenset(t for t in range(cycle) if holds(t))
