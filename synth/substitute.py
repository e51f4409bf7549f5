"""Building a gate the bin lacks out of the gates it has (``binsynth substitute``).

Interface: ``Target`` and ``parse_target(text) -> Target``; ``Way`` (one
construction, packed onto chips with pin numbers); ``substitute(target,
library, bin, *, either_polarity=False, limit=5, effort=None) ->
list[Way]`` ranked by chips, then gates, then depth; ``draw_way(way)`` (the
text cascade a person reads); ``way_json(way)``.

A target is a gate name -- ``and``, ``nand``, ``or``, ``nor``, ``xor``,
``xnor`` followed by a width 2..8 (``nand4``, ``xor3`` is odd parity), or
``inv``/``not`` -- or a boolean expression over up to 8 named inputs::

    ~a      !a      a'         NOT (prefix ~ or !, or a postfix quote)
    a & b   a·b   a * b        AND (the middle dot is how decode and plan print it)
    a ^ b                      XOR
    a | b   a + b              OR
    ( ... )   0   1            grouping, constants

NOT binds tightest, then AND, XOR, OR; names are letters, digits and ``_``
starting with a letter, or digits then a letter (counter pin names such as
``1Q3``).  Whatever ``decode`` and ``plan`` print as a decode reads back here.  Gate targets name their inputs a, b, c, ...

Every way is a mapper result (``mapper.map_design``: exact synthesis where
the size allows) over the whole bin or over one or two of its part types, so
the list shows genuinely different builds: the mapper's best first, then
cheaper-to-stock alternatives.  The first way carries the mapper's proof
("proven minimal") when its search finished; the others are the best with
their parts only.
"""

from __future__ import annotations

import difflib
import itertools
import re
from dataclasses import dataclass, field

from .effort import effort_named
from .errors import NotFoundError, SafetyCapError, ShortError, UsageError
from .limits import shown
from .mapper import map_design
from .minimize import Function
from .network import Network, SignalOut, evaluate_gate
from .packing import place_logic, unit_logic_pins

__all__ = ["Target", "parse_target", "Way", "substitute", "draw_way", "way_json", "GATE_NAMES"]

MAX_INPUTS = 8
GATE_OPS = ("and", "nand", "or", "nor", "xor", "xnor")
GATE_NAMES = tuple(f"{op}{w}" for op in GATE_OPS for w in range(2, MAX_INPUTS + 1)) + ("inv", "not")


@dataclass(frozen=True)
class Target:
    """What to build: a name for the output, its inputs (bit i = inputs[i]) and its on-set."""

    text: str
    inputs: tuple[str, ...]
    on: frozenset[int]

    @property
    def nvars(self) -> int:
        return len(self.inputs)


# ---------------------------------------------------------------- parsing

_TOKEN = re.compile(r"\s*(?:(?P<name>[A-Za-z][A-Za-z0-9_]*|\d+[A-Za-z_][A-Za-z0-9_]*)|(?P<const>[01])\b"
                    r"|(?P<op>[~!&|^+()'\u00b7\u22c5*])|(?P<bad>\S))")
_AND_SIGNS = ("&", "\u00b7", "\u22c5", "*")
"""AND as typed (&, *) and as the decode and plan print it (the middle dot ·, or ⋅)."""


def _gate_target(text: str) -> Target | None:
    """``nand4`` -> a 4-input NAND over a, b, c, d; ``inv`` -> NOT a; else None."""
    word = text.strip().lower()
    if word in ("inv", "not"):
        return Target(word, ("a",), frozenset({0}))
    match = re.fullmatch(r"(and|nand|or|nor|xor|xnor)(\d+)", word)
    if not match:
        return None
    op, width = match.group(1), int(match.group(2))
    if not 2 <= width <= MAX_INPUTS:
        raise UsageError(f"target {shown(text)}: expected a width from 2 to {MAX_INPUTS}, got {width}",
                         hint=f"try {op}{min(max(width, 2), MAX_INPUTS)}")
    inputs = tuple("abcdefgh"[:width])
    full = (1 << width) - 1
    value = {"and": lambda m: m == full, "or": lambda m: m != 0,
             "xor": lambda m: bin(m).count("1") % 2 == 1}
    base = {"and": "and", "nand": "and", "or": "or", "nor": "or", "xor": "xor", "xnor": "xor"}[op]
    invert = op in ("nand", "nor", "xnor")
    on = frozenset(m for m in range(1 << width) if value[base](m) != invert)
    return Target(word, inputs, on)


def parse_target(text: str) -> Target:
    """A gate name or an expression; a ``UsageError`` (exit 2) says what was expected."""
    if not text or not text.strip():
        raise UsageError("target: expected a gate name (e.g. nand4) or an expression (e.g. 'a & ~b'), got nothing")
    gate = _gate_target(text)
    if gate is not None:
        return gate
    tokens = _tokens(text)
    if all(kind == "name" for kind, _, _ in tokens) and len(tokens) == 1:
        close = difflib.get_close_matches(text.strip().lower(), GATE_NAMES, n=1, cutoff=0.5)
        hint = f"did you mean {close[0]}?" if close else \
            "gate names: and2..and8, nand2..nand8, or2.., nor2.., xor2.., xnor2.., inv; or an expression such as 'a & ~b'"
        raise UsageError(f"target {shown(text)}: expected a gate name or an expression, got a single name", hint=hint)
    parser = _Parser(text, tokens)
    tree = parser.parse()
    names = tuple(sorted(parser.names))
    if len(names) > MAX_INPUTS:
        raise UsageError(f"target {shown(text)}: expected at most {MAX_INPUTS} inputs, got {len(names)}")
    if not names:
        raise UsageError(f"target {shown(text)}: expected at least one input name, got only constants")
    on = frozenset(m for m in range(1 << len(names))
                   if _value(tree, {n: bool(m >> i & 1) for i, n in enumerate(names)}))
    return Target(text.strip(), names, on)


def _tokens(text: str) -> list[tuple[str, str, int]]:
    tokens = []
    for match in _TOKEN.finditer(text):
        kind = match.lastgroup
        if kind is None:
            continue
        value = match.group(kind)
        column = match.start(kind) + 1
        if kind == "bad":
            raise UsageError(f"target {shown(text)}: expected a name, 0, 1, ~ ! ' & · * | + ^ or parentheses, "
                             f"got {value!r} at column {column}")
        tokens.append((kind, value, column))
    return tokens


class _Parser:
    """Recursive descent: or := xor (('|'|'+') xor)*; xor := and ('^' and)*;
    and := unary ('&' unary)*; unary := ('~'|'!') unary | atom "'"*."""

    def __init__(self, text: str, tokens: list[tuple[str, str, int]]) -> None:
        self.text, self.tokens, self.i = text, tokens, 0
        self.names: set[str] = set()

    def peek(self) -> str | None:
        return self.tokens[self.i][1] if self.i < len(self.tokens) else None

    def fail(self, expected: str):
        if self.i < len(self.tokens):
            _, value, column = self.tokens[self.i]
            got = f"{shown(value)} at column {column}"
        else:
            got = "the end of the expression"
        raise UsageError(f"target {shown(self.text)}: expected {expected}, got {got}",
                         hint="operators: ~ ! ' (not), & · * (and), ^ (xor), | + (or), parentheses")

    def take(self) -> tuple[str, str, int]:
        token = self.tokens[self.i]
        self.i += 1
        return token

    def parse(self):
        tree = self.or_()
        if self.i != len(self.tokens):
            self.fail("an operator or the end of the expression")
        return tree

    def or_(self):
        node = self.xor()
        while self.peek() in ("|", "+"):
            self.take()
            node = ("or", node, self.xor())
        return node

    def xor(self):
        node = self.and_()
        while self.peek() == "^":
            self.take()
            node = ("xor", node, self.and_())
        return node

    def and_(self):
        node = self.unary()
        while self.peek() in _AND_SIGNS:
            self.take()
            node = ("and", node, self.unary())
        return node

    def unary(self):
        if self.peek() in ("~", "!"):
            self.take()
            return ("not", self.unary())
        node = self.atom()
        while self.peek() == "'":
            self.take()
            node = ("not", node)
        return node

    def atom(self):
        if self.i >= len(self.tokens):
            self.fail("a name, a constant or '('")
        kind, value, _ = self.tokens[self.i]
        if kind == "name":
            self.take()
            self.names.add(value)
            return ("var", value)
        if kind == "const":
            self.take()
            return ("const", value == "1")
        if value == "(":
            self.take()
            node = self.or_()
            if self.peek() != ")":
                self.fail("')'")
            self.take()
            return node
        self.fail("a name, a constant or '('")


def _value(node, env: dict[str, bool]) -> bool:
    kind = node[0]
    if kind == "var":
        return env[node[1]]
    if kind == "const":
        return node[1]
    if kind == "not":
        return not _value(node[1], env)
    a, b = _value(node[1], env), _value(node[2], env)
    return a and b if kind == "and" else a or b if kind == "or" else a != b


# ---------------------------------------------------------------- the ways

@dataclass
class Way:
    """One construction: the mapped gates, placed on chips with pins."""

    network: Network
    chips: list = field(default_factory=list)      # packing's chip records (ref, part, pins, notes)
    parts_offered: tuple[str, ...] = ()
    proven: bool = False

    @property
    def chip_count(self) -> int:
        return sum(self.network.chips.values())

    @property
    def gates(self) -> int:
        return len(self.network.gates)

    @property
    def depth(self) -> int:
        return self.network.depth()

    @property
    def output(self) -> SignalOut:
        return self.network.signals["y"]

    def rank_key(self) -> tuple:
        return (self.chip_count, self.gates, self.depth, sorted(self.network.chips.items()))

    def signature(self) -> tuple:
        return (tuple(sorted((g.part, g.op, len(g.inputs)) for g in self.network.gates)),
                self.output.polarity)


def _part_groups(library) -> list[tuple[str, ...]]:
    """The whole bin first, then each part type alone, then each pair."""
    parts = library.parts()
    groups = [tuple(parts)]
    groups += [(p,) for p in parts]
    groups += [pair for pair in itertools.combinations(parts, 2)]
    return list(dict.fromkeys(groups))


def substitute(target: Target, library, bin, *, either_polarity: bool = False, limit: int = 5,
               effort: str | None = None) -> list[Way]:
    """The cheapest ways to build ``target`` from the bin; ``ShortError`` when there is none.

    The whole bin gets half of the effort level's work, each smaller group of
    part types a twentieth, until the work is spent (work, not seconds, so the
    answer is the same on a busy machine)."""
    total = effort_named(effort).steps
    left = total
    function = Function("y", target.on)
    polarity = {"y": "free" if either_polarity else "high"}
    inputs = list(target.inputs)
    ways: dict[tuple, Way] = {}
    first_error: ShortError | NotFoundError | None = None
    for index, group in enumerate(_part_groups(library)):
        share = total // 2 if index == 0 else total // 20
        if index and left < share:
            break
        left -= share
        try:
            network = map_design([function], target.nvars, inputs, library.restricted(group),
                                 polarity=polarity, exact="auto", effort=effort, steps=share)
        except SafetyCapError:
            raise
        except (ShortError, NotFoundError) as exc:
            if index == 0:
                first_error = exc
                break
            continue
        way = Way(network, [], group, network.proven_minimal and index == 0)
        key = way.signature()
        if key not in ways or way.rank_key() < ways[key].rank_key():
            ways[key] = way
    if first_error is not None:
        raise type(first_error)(f"the bin cannot build {target.text}: {first_error.message}"
                                if isinstance(first_error, ShortError) else
                                f"no way to build {target.text} found: {first_error.message}",
                                file=first_error.file, hint=first_error.hint, short=first_error.short)
    ranked = sorted(ways.values(), key=Way.rank_key)[:limit]
    best_cost = ranked[0].rank_key()[:2] if ranked else None
    for way in ranked:
        way.proven = way.proven or (any(w.proven for w in ways.values()) and way.rank_key()[:2] == best_cost)
        way.chips = place_logic(way.network, bin, library.catalog)
    return ranked


# ---------------------------------------------------------------- pictures

def _drivers(way: Way) -> dict[str, tuple[str, int]]:
    """Which chip pin drives each net."""
    driver: dict[str, tuple[str, int]] = {}
    for chip in way.chips:
        for unit in chip.part.units:
            if unit.id not in chip.units_used:
                continue
            _, outs, _ = unit_logic_pins(unit)
            for pin in outs:
                net = chip.pins.get(pin)
                if net and net not in ("VDD", "VSS"):
                    driver.setdefault(net, (chip.ref, pin))
    return driver


def _unit_of_gate(way: Way, gate_id: str):
    """The chip, unit and pins a gate was placed on."""
    for chip in way.chips:
        for unit in chip.part.units:
            if chip.units_used.get(unit.id) == gate_id:
                ins, outs, _ = unit_logic_pins(unit)
                return chip, unit, ins, outs
    raise KeyError(gate_id)


def draw_way(way: Way, target: Target) -> str:
    """The cascade from the output back to the inputs, every arrow a pin number.

    ``y <= U2.3 NAND 4011`` then one line per input pin, ``pin 1 <= ...``;
    a gate already drawn is named, not drawn again.
    """
    by_output = {net: g for g in way.network.gates for net in g.outputs if net}
    seen: set[str] = set()
    lines: list[str] = []
    out = way.output
    level = "high" if out.polarity == "high" else "low (the complement)"

    def label(gate) -> str:
        chip, unit, _, outs = _unit_of_gate(way, gate.id)
        width = len(gate.inputs) if gate.op not in ("not", "buf") else ""
        signals = set(gate.inputs) - {"VDD", "VSS"}
        how = ""
        if len(gate.inputs) > 1 and len(signals) == 1:
            how = ", inputs joined or tied: inverts" if gate.op in ("nand", "nor", "xor", "xnor") \
                and _inverts(gate) else ", inputs joined or tied: passes"
        return f"{chip.ref}.{outs[0]}  {gate.op.upper()}{width} of {chip.part.type} (unit {unit.id}{how})"

    def walk(net: str, prefix: str) -> None:
        gate = by_output.get(net)
        if gate is None:
            return
        if gate.id in seen:
            return
        seen.add(gate.id)
        chip, unit, ins, _ = _unit_of_gate(way, gate.id)
        for k, (pin, src) in enumerate(zip(ins, gate.inputs)):
            last = k == len(ins) - 1
            branch, carry = ("└─", "   ") if last else ("├─", "│  ")
            feeder = by_output.get(src)
            if feeder is None:
                what = {"VDD": "VDD (tied)", "VSS": "VSS (tied)"}.get(src, f"input {src}")
                lines.append(f"{prefix}{branch} pin {pin:<2} <= {what}")
            elif feeder.id in seen:
                fchip, _, _, fouts = _unit_of_gate(way, feeder.id)
                lines.append(f"{prefix}{branch} pin {pin:<2} <= {fchip.ref}.{fouts[0]} (drawn above)")
            else:
                lines.append(f"{prefix}{branch} pin {pin:<2} <= {label(feeder)}")
                walk(src, prefix + carry + "   ")

    if out.net in by_output:
        lines.append(f"{target.text} ({level}) <= {label(by_output[out.net])}")
        walk(out.net, "   ")
    else:
        lines.append(f"{target.text} ({level}) <= input {out.net}: no gate needed")
    return "\n".join(lines)


def _inverts(gate) -> bool:
    """Whether a gate with one signal on all its used inputs inverts that signal."""
    net = next(n for n in gate.inputs if n not in ("VDD", "VSS"))
    levels = [evaluate_gate(gate, {net: v})[gate.outputs[0]] for v in (False, True)]
    return levels == [True, False]


def wiring_rows(way: Way) -> list[tuple[str, str]]:
    """Each net and the chip pins on it (power and ties included), inputs first."""
    nets: dict[str, list[str]] = {}
    for chip in way.chips:
        for pin, net in sorted(chip.pins.items()):
            nets.setdefault(net, []).append(f"{chip.ref}.{pin}")
    order = lambda n: (n not in ("VDD", "VSS"), n)   # noqa: E731
    return [(net, ", ".join(pins)) for net, pins in sorted(nets.items(), key=lambda kv: order(kv[0]))]


def way_json(way: Way, target: Target, rank: int) -> dict:
    """One way for scripts: cost, proof, chips with every used pin, and the nets."""
    driver = _drivers(way)
    out = way.output
    source = driver.get(out.net)
    return {
        "rank": rank,
        "chips": way.chip_count,
        "gates": way.gates,
        "depth": way.depth,
        "proven_minimal": way.proven,
        "parts": dict(sorted(way.network.chips.items())),
        "output": {"polarity": out.polarity, "net": out.net,
                   "source": {"ref": source[0], "pin": source[1]} if source else None},
        "units": [{"ref": chip.ref, "part": chip.part.type, "unit": uid, "gate": gid}
                  for chip in way.chips for uid, gid in sorted(chip.units_used.items())],
        "wires": [{"net": net, "pins": [{"ref": p.split(".")[0], "pin": int(p.split(".")[1])}
                                        for p in pins.split(", ")]} for net, pins in wiring_rows(way)],
    }
