"""Values with SI prefixes and units, as people write them on the bench.

Interface: ``parse_si(text, unit=None) -> float``, ``parse_quantity(value,
unit) -> float`` (accepts numbers too), ``format_si(value, unit) -> str``,
``nearest(value, choices) -> float``.

The trade writes component values with the prefix in place of the decimal
point (``4k7`` = 4.7 kOhm, ``6n8`` = 6.8 nF, ``4R7`` = 4.7 Ohm); both that and
the plain form (``4.7nF``, ``50 kHz``, ``40 us``) are accepted.

>>> parse_si("4k7")
4700.0
>>> parse_si("6n8")
6.8e-09
>>> parse_si("4.7nF", "F")
4.7e-09
>>> parse_quantity("50 kHz", "Hz")
50000.0
>>> parse_quantity("40 us", "s")
4e-05
>>> parse_si("4R7", "ohm")
4.7
>>> parse_si("ten k")
Traceback (most recent call last):
ValueError: expected a value such as 4k7, 10k, 6n8 or 4.7nF, got 'ten k'
"""

from __future__ import annotations

import math
import re

from .limits import describe, shown

PREFIX_EXPONENTS = {"p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3,
                    "": 0, "R": 0, "r": 0, "k": 3, "K": 3, "M": 6, "G": 9}


def _scaled(number: str, prefix: str) -> float:
    """``number`` times the prefix, rounded as the decimal text says (6n8 -> 6.8e-09)."""
    return float(f"{float(number)!r}e{PREFIX_EXPONENTS[prefix]}")

UNIT_ALIASES = {
    "ohm": ("ohm", "ohms", "Ω", "Ohm", "R"),
    "F": ("F",),
    "Hz": ("Hz", "hz"),
    "s": ("s", "sec"),
    "V": ("V", "v"),
}

_PLAIN = re.compile(r"^([+-]?\d+(?:\.\d*)?(?:[eE][+-]?\d+)?|\.\d+)\s*([pnuµμmkKMG]?)$")
_INFIX = re.compile(r"^(\d+)([pnuµμmkKMGRr])(\d+)$")

_EXPECTED = "a value such as 4k7, 10k, 6n8 or 4.7nF"


def _strip_unit(text: str, unit: str | None) -> str:
    """Remove a trailing unit symbol (``nF`` -> ``n``) when one is expected."""
    if unit is None:
        for symbols in UNIT_ALIASES.values():
            for symbol in sorted(symbols, key=len, reverse=True):
                if symbol != "R" and text.endswith(symbol) and len(text) > len(symbol):
                    return text[: -len(symbol)].rstrip()
        return text
    for symbol in sorted(UNIT_ALIASES.get(unit, (unit,)), key=len, reverse=True):
        if symbol == "R":
            continue
        if text.endswith(symbol):
            return text[: -len(symbol)].rstrip()
    return text


def parse_si(text: str, unit: str | None = None) -> float:
    """Parse ``4k7``, ``6n8``, ``4.7nF``, ``100n``, ``1M``; raise ValueError.

    >>> parse_si("100n")
    1e-07
    >>> parse_si("1M")
    1000000.0
    >>> parse_si("22k", "ohm")
    22000.0
    """
    raw = str(text).strip()
    body = _strip_unit(raw, unit)
    match = _INFIX.match(body)
    if match:
        whole, prefix, frac = match.groups()
        return _scaled(f"{whole}.{frac}", prefix)
    match = _PLAIN.match(body)
    if match:
        number, prefix = match.groups()
        return _scaled(number, prefix)
    raise ValueError(f"expected {_EXPECTED}, got {shown(raw)}")


def parse_quantity(value: object, unit: str) -> float:
    """A number as-is, or a string with prefix and unit (``"40 us"``, ``"5 V"``).

    >>> parse_quantity(5, "V")
    5.0
    >>> parse_quantity("12V", "V")
    12.0
    >>> parse_quantity("fast", "Hz")
    Traceback (most recent call last):
    ValueError: expected a value in Hz such as '50 kHz', got 'fast'
    """
    if isinstance(value, bool):
        raise ValueError(f"expected a value in {unit}, got {describe(value)}")
    if isinstance(value, (int, float)):
        return float(value)
    try:
        return parse_si(str(value), unit)
    except ValueError:
        example = {"Hz": "50 kHz", "s": "40 us", "V": "5 V", "F": "6n8", "ohm": "4k7"}.get(unit, "1k")
        raise ValueError(f"expected a value in {unit} such as {example!r}, got {describe(value)}") from None


def format_si(value: float, unit: str = "", digits: int = 3) -> str:
    """Engineering notation with a prefix: 4700 -> ``4.7 k`` + unit.

    >>> format_si(4700, "Ω")
    '4.7 kΩ'
    >>> format_si(6.8e-9, "F")
    '6.8 nF'
    >>> format_si(0, "s")
    '0 s'
    """
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}".rstrip()
    exponent = int(math.floor(math.log10(abs(value)) / 3) * 3)
    exponent = max(-12, min(9, exponent))
    prefix = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}[exponent]
    scaled = value / 10 ** exponent
    text = f"{scaled:.{digits}g}"
    return f"{text} {prefix}{unit}".rstrip()


def nearest(value: float, choices: list[float]) -> float:
    """The choice closest to ``value`` on a log scale (how parts are picked).

    >>> nearest(7.2e-9, [4.7e-9, 6.8e-9, 10e-9])
    6.8e-09
    """
    if not choices:
        raise ValueError("expected at least one value to choose from, got none")
    return min(choices, key=lambda c: abs(math.log(c / value)))
