"""Every limit on what a user may hand binsynth, written down in one place.

Interface: the limit constants below; ``check_at_most(value, limit, what, *,
error, file, line)``, ``check_expression(text, what, *, error, file, line)``,
``check_supply(volts, what, *, error, file, line)``, ``check_seconds(text)``,
``check_file_size(path, error)``; ``describe(value)`` (a value in words, for
"got ..." messages) and ``shown(text)`` (user text cut to ``ECHO_CHARS``).

Why a limit at all: the work and memory of a plan grow with these numbers
(tick sets grow with the cycle, the mapper with the gates offered, the
decode with the signals), so an absurd value would run for minutes or fill
memory before failing.  Each limit sits well past what a person builds on a
bench or a breadboard, and each is checked before any work that grows with
it.  A message names the limit and how to get under it.

>>> check_at_most(150, CHIPS_PER_PART, "chips of CD4011BE")
>>> check_at_most(10_000, CHIPS_PER_PART, "chips of CD4011BE")
Traceback (most recent call last):
synth.errors.InputError: expected at most 200 chips of CD4011BE, got 10000 (binsynth plans for a bench or breadboard build: at most 200 chips of one type; write the chips you really have)
>>> describe(None), describe([1, 2]), describe({"a": 1}), describe("x" * 100)[:12]
('nothing', 'a list [1, 2]', 'a mapping', "'xxxxxxxxxxx")
"""

from __future__ import annotations

import datetime
import math
import re
from dataclasses import dataclass
from pathlib import Path

from .errors import InputError
from .expr import MAX_DEPTH

__all__ = ["Limit", "FILE_BYTES", "EXPRESSION_CHARS", "EXPRESSION_NESTING", "EXPRESSION_OPERATORS",
           "CYCLE_BITS", "CYCLE_TICKS", "SIGNALS", "TICK_CELLS", "NAME_CHARS", "CHIPS_PER_PART",
           "CHIPS_IN_ALL", "PASSIVE_VALUES", "SUPPLY_MIN_V", "SUPPLY_MAX_V", "SEARCH_SECONDS",
           "ECHO_CHARS", "check_at_most", "check_expression", "check_supply", "check_seconds",
           "check_file_size", "describe", "shown", "expression_shape", "os_reason", "listed"]


@dataclass(frozen=True)
class Limit:
    """A number a value may not exceed, why it is there, and how to get under it."""

    most: int
    fix: str


FILE_BYTES = Limit(1_000_000, "a spec or bin a person writes is a few kilobytes; split the file or "
                              "remove what the plan does not read")
EXPRESSION_CHARS = Limit(1000, "write a shorter expression, or list the ticks as windows")
EXPRESSION_NESTING = Limit(MAX_DEPTH, "remove parentheses or negations that cancel out")
EXPRESSION_OPERATORS = Limit(256, "write a shorter expression, or list the ticks as windows")
CYCLE_BITS = 20
CYCLE_TICKS = Limit(1 << CYCLE_BITS, f"a sequence longer than {CYCLE_BITS} counter stages is beyond "
                                     "what the decode handles; use a slower clock or a shorter cycle")
SIGNALS = Limit(128, "a bench sequencer has a few dozen outputs; split the spec into several")
TICK_CELLS = Limit(1 << 22, "every tick of every signal is held in memory; use fewer signals or a "
                            "shorter cycle")
NAME_CHARS = Limit(64, "use a shorter name")
CHIPS_PER_PART = Limit(200, "binsynth plans for a bench or breadboard build: at most 200 chips of "
                            "one type; write the chips you really have")
CHIPS_IN_ALL = Limit(500, "binsynth plans for a bench or breadboard build: at most 500 chips in all; "
                          "list only the drawer you build from")
PASSIVE_VALUES = Limit(200, "list each value on hand once")
SUPPLY_MIN_V = 1.5
SUPPLY_MAX_V = 20.0
SEARCH_SECONDS = Limit(600, "give at most 600 seconds")
ECHO_CHARS = 60
"""How much of a user's own text a message repeats (the rest is cut with '...')."""


def check_at_most(value: int, limit: Limit, what: str, *, where: str = "",
                  error: type[InputError] = InputError, file: str | Path | None = None,
                  line: int | None = None) -> None:
    """Refuse ``value`` above ``limit.most``, naming the limit and the fix (``where`` leads)."""
    if value > limit.most:
        head = f"{where}: " if where else ""
        raise error(f"{head}expected at most {limit.most} {what}, got {_number(value)}", file=file,
                    line=line, hint=limit.fix)


def _number(value: int) -> str:
    text = str(value)
    return text if len(text) <= 20 else f"a number of {len(text)} digits"


def expression_shape(text: str) -> tuple[int, int]:
    """(deepest nesting, operator count) of an expression, counted on its characters.

    Nesting counts open parentheses plus the run of prefix negations before an
    operand (``~~~a`` is three deep), the way a recursive reader descends.

    >>> expression_shape("((a & ~b) | c)")
    (3, 3)
    >>> expression_shape("t % 32 == 20 and not t < 4")
    (1, 5)
    """
    depth = deepest = operators = negations = 0
    for part in _TOKENS.findall(text):
        if part == "(":
            depth += 1
        elif part == ")":
            depth -= 1
        elif part in ("~", "!", "not"):
            negations += 1
            operators += 1
        elif part in _OPERATORS:
            operators += 1
            negations = 0
        else:
            negations = 0
        deepest = max(deepest, depth + negations)
    return deepest, operators


_TOKENS = re.compile(r"==|!=|<=|>=|//|[~!&|^+\-*/%'=<>()]|[A-Za-z_][A-Za-z0-9_]*|\d+|\S")
_OPERATORS = frozenset({"&", "|", "^", "+", "-", "*", "/", "//", "%", "'", "==", "!=", "<", "<=",
                        ">", ">=", "=", "and", "or"})


def check_expression(text: str, what: str, *, error: type[InputError] = InputError,
                     file: str | Path | None = None, line: int | None = None,
                     fix: str | None = None) -> None:
    """Length, nesting and operator count of an expression, before anything parses it."""
    if len(text) > EXPRESSION_CHARS.most:
        raise error(f"{what}: expected an expression of at most {EXPRESSION_CHARS.most} characters, "
                    f"got {len(text)}", file=file, line=line, hint=fix or EXPRESSION_CHARS.fix)
    nesting, operators = expression_shape(text)
    if nesting > EXPRESSION_NESTING.most:
        raise error(f"{what}: expected parentheses and negations nested at most "
                    f"{EXPRESSION_NESTING.most} deep, got {nesting}", file=file, line=line,
                    hint=EXPRESSION_NESTING.fix)
    if operators > EXPRESSION_OPERATORS.most:
        raise error(f"{what}: expected at most {EXPRESSION_OPERATORS.most} operators, got {operators}",
                    file=file, line=line, hint=fix or EXPRESSION_OPERATORS.fix)


def check_supply(volts: float, what: str, *, error: type[InputError] = InputError,
                 file: str | Path | None = None, line: int | None = None) -> float:
    """A supply voltage inside what CMOS logic runs from (1.5 V to 20 V, common practice)."""
    if not math.isfinite(volts) or not SUPPLY_MIN_V <= volts <= SUPPLY_MAX_V:
        shown_volts = f"{volts:g} V" if math.isfinite(volts) else "no finite voltage"
        raise error(f"{what}: expected a supply from {SUPPLY_MIN_V:g} V to {SUPPLY_MAX_V:g} V, got "
                    f"{shown_volts}", file=file, line=line,
                    hint="74HC parts run from 2 to 6 V, 4000B parts from 3 to 18 V; write e.g. '5 V'")
    return volts


def check_seconds(text: str) -> float:
    """A search time in seconds: finite, not negative, at most ``SEARCH_SECONDS``.

    Raises ValueError, which argparse reports as an invalid value (exit 2).

    >>> check_seconds("2.5")
    2.5
    >>> check_seconds("1e308")
    Traceback (most recent call last):
    ValueError: expected at most 600 seconds
    """
    value = float(text)
    if not math.isfinite(value) or value < 0:
        raise ValueError("expected a number of seconds from 0 up")
    if value > SEARCH_SECONDS.most:
        raise ValueError(f"expected at most {SEARCH_SECONDS.most} seconds")
    return value


def check_file_size(path: Path, error: type[InputError] = InputError) -> None:
    """Refuse a file past ``FILE_BYTES`` before reading it (and a folder given as a file)."""
    if path.is_dir():
        raise error("this is a folder, not a file", file=path, hint="give the path of the YAML file")
    try:
        size = path.stat().st_size
    except FileNotFoundError:
        raise error("no such file", file=path, hint="check the path") from None
    except OSError as exc:
        raise error(f"cannot read it: {os_reason(exc)}", file=path,
                    hint="check the path and its permissions") from None
    if size > FILE_BYTES.most:
        raise error(f"expected a file of at most {FILE_BYTES.most} bytes, got {size}", file=path,
                    hint=FILE_BYTES.fix)


def os_reason(exc: OSError) -> str:
    """An operating-system error in words, without its number (``permission denied``)."""
    reason = exc.strerror or "the system refused"
    return reason[:1].lower() + reason[1:]


def shown(text: object) -> str:
    """User text quoted, cut to ``ECHO_CHARS`` characters.

    >>> shown("abc")
    "'abc'"
    >>> shown("y" * 70)
    "'yyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyyy...' (70 characters)"
    """
    text = str(text)
    if len(text) <= ECHO_CHARS:
        return repr(text)
    return f"{text[:ECHO_CHARS]!r}"[:-1] + f"...' ({len(text)} characters)"


def listed(words, room: int = ECHO_CHARS) -> str:
    """Names joined with commas, cut after about ``room`` characters.

    >>> listed(["a", "b"]), listed([f"signal{i}" for i in range(20)])[-11:]
    ('a, b', '(20 in all)')
    """
    words = [str(w) for w in words]
    shown_words, used = [], 0
    for word in words:
        if used + len(word) > room and shown_words:
            return ", ".join(shown_words) + f", ... ({len(words)} in all)"
        shown_words.append(word[:room])
        used += len(word) + 2
    return ", ".join(shown_words)


def describe(value: object) -> str:
    """A YAML value in words for a 'got ...' message: never a Python type name.

    >>> describe(True), describe(datetime.date(2001, 12, 14)), describe(float("nan"))
    ('the yes/no value true', 'a date', 'not a number')
    """
    if value is None:
        return "nothing"
    if isinstance(value, bool):
        return f"the yes/no value {str(value).lower()}"
    if isinstance(value, int):
        return _number(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "not a number"
        return "infinity" if math.isinf(value) else f"{value:g}"
    if isinstance(value, str):
        return shown(value)
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        flow = _flow(value, ECHO_CHARS)
        return f"a list {flow}" if flow else "a list"
    if isinstance(value, datetime.datetime):
        return "a date and time"
    if isinstance(value, datetime.date):
        return "a date"
    if isinstance(value, (bytes, bytearray)):
        return "binary data"
    return "a value of another kind"


def _flow(value: list, room: int) -> str:
    """``[a, [1, 2]]`` for a short list of plain items, else '' (never longer than ``room``)."""
    parts = []
    for item in value:
        if isinstance(item, list):
            text = _flow(item, room)
            if not text:
                return ""
        elif isinstance(item, (dict, datetime.date)) or item is None:
            return ""
        else:
            text = str(item)
        parts.append(text)
        if sum(len(p) + 2 for p in parts) > room:
            return ""
    return "[" + ", ".join(parts) + "]"

