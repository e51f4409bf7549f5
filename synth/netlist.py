"""The plan: chips, nets and pins, the hand-off from packing to checks and exports.

Interface: ``ChipInstance`` and ``Plan`` (records); ``pin_directions(part)``
(each package pin as ``in``/``out``/``analog``/``power``/``nc``/``other``, read
from the catalog); ``net_problems(plan)`` and ``check_nets(plan)`` (every
connected pin in exactly one net, no floating input, power on the rails, one
driver per net); ``counter_levels(counter, t)``, ``simulate_nets(plan)`` and
``simulate_ticks(plan)`` (zero-delay levels per tick); ``delivered_sets(plan)``;
``self_check(plan, spec_or_delivered)``; ``PinRow`` and ``pin_table(plan, ref)``;
``Wire`` and ``wire_list(plan)`` (what a person builds, one wire per pair of
endpoints); ``endpoint_text(plan, ref, pin)``; ``ref_key(ref)``;
``verilog_module_name(name)`` (kept here for the exports; owned by
``verilog_names``); ``Passive`` (a resistor or capacitor of the
plan: its ref ``R1``/``C1`` and the nets at its two ends, which appear in
``Plan.nets`` as pins 1 and 2 of that ref) and ``is_passive(ref)``.

A net is a list of ``(ref, pin)`` package pins.  ``VDD`` and ``VSS`` are the
rails; nets in ``Plan.external`` leave the board (the clock input, the spec
signals, the switch terminals) and say where to.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Literal, NamedTuple

from .analogparts import AppliedDelay, LadderPlan, OscillatorPlan, PowerOnReset
from .counter import CounterPlan
from .errors import InternalError
from .findings import (CoincidentEdge, GlitchRecord, PulseWidth, RcOffer, RegisterCheck, Registered, Strobed,
                       TimingFix)
from .inventory import Part
from .network import Network, evaluate_words
from .spec import SignalSpec, Spec
from .units import format_si
from .verilog_names import VERILOG_KEYWORDS, verilog_module_name  # noqa: F401 - re-exported

RAIL_NETS = ("VDD", "VSS")
CLOCK_NET = "CLK"          # the board's clock input (formats.md: the clock input is the net CLK)
Role = Literal["counter", "logic", "switch", "oscillator"]
Direction = Literal["in", "out", "analog", "power", "nc", "other"]


# ---------------------------------------------------------------- records

@dataclass(frozen=True)
class ChipInstance:
    """One physical chip on the board.

    ``units_used`` maps a unit id to the gate id or purpose it serves;
    ``pins`` maps every connected package pin to its net and ``notes`` says
    why a pin is tied or left open (shown in the wiring list).
    """

    ref: str
    part: str
    role: Role
    units_used: dict[str, str]
    pins: dict[int, str] = field(default_factory=dict)
    notes: dict[int, str] = field(default_factory=dict)


@dataclass(frozen=True)
class Passive:
    """One resistor or capacitor: ``ends`` are the nets at its end 1 and end 2.

    ``kind`` is ``resistor`` or ``capacitor``; ``value`` is in ohms or farads;
    ``purpose`` says what it does (shown in the wiring list).
    """

    ref: str
    kind: str
    value: float
    ends: tuple[str, str]
    purpose: str

    def label(self) -> str:
        return format_si(self.value, "Ω" if self.kind == "resistor" else "F")


@dataclass(frozen=True)
class BoardSignal:
    """One of the spec's signals as the board delivers it: the level at which it is
    asserted, its net and the chip pin driving it (None when no pin does: a constant)."""

    polarity: Literal["high", "low"]
    net: str
    source: tuple[str, int] | None

    def to_json(self) -> dict[str, object]:
        """The plan JSON entry (formats.md), keys in their published order."""
        source = None if self.source is None else {"ref": self.source[0], "pin": int(self.source[1])}
        return {"polarity": self.polarity, "source": source, "net": self.net}


@dataclass(frozen=True)
class SwitchPath:
    """One way a switch's common is joined: to ``joins`` while ``control_net`` is at
    ``closed_when`` (True: high)."""

    control_net: str
    closed_when: bool
    joins: str


@dataclass(frozen=True)
class BoardSwitch:
    """One of the spec's switches as wired on the board: which chip section, which
    nets its control, common and throws are on, and the paths the self-check follows.

    ``when_control_high`` is the spec value joined while the control is high;
    ``complement_net`` is the inverted select a pair of SPST sections needs ("" when none).
    """

    ref: str
    unit: str
    part: str
    kind: str
    when_control_high: str
    control_net: str
    control_pin: int
    common_pin: int
    common_net: str
    select: str
    on: str
    off: str
    on_net: str
    off_net: str
    complement_net: str
    sections: tuple[tuple[str, str], ...]
    paths: tuple[SwitchPath, ...]

    def to_json(self) -> dict[str, object]:
        """The plan JSON entry (formats.md), keys in their published order."""
        return {"ref": self.ref, "when_control_high": self.when_control_high, "unit": self.unit,
                "part": self.part, "kind": self.kind, "select": self.select, "on": self.on,
                "off": self.off, "control_net": self.control_net, "control_pin": self.control_pin,
                "common_pin": self.common_pin, "common_net": self.common_net,
                "complement_net": self.complement_net,
                "sections": [{"ref": r, "unit": u} for r, u in self.sections]}


def is_passive(ref: str) -> bool:
    """Resistors and capacitors have refs R1, C1...; chips U1...

    >>> is_passive("R3"), is_passive("C1"), is_passive("U2")
    (True, True, False)
    """
    return bool(re.fullmatch(r"[RC]\d+", ref))


@dataclass(frozen=True)
class Plan:
    """A packed design: everything the checks and the exports read.

    Frozen: a later stage builds a new record (``dataclasses.replace``).  The stages
    that add parts (the analog parts, an RC delay) fill the chips, nets and passives
    of a working copy (``packing.working_copy``) before they make the new record.
    """

    name: str
    spec_path: str
    bin_path: str
    supply: float
    chips: list[ChipInstance]
    nets: dict[str, list[tuple[str, int]]]
    signals: dict[str, BoardSignal]
    switches: dict[str, BoardSwitch]
    bom: dict[str, int]
    decoupling: tuple[tuple[str, str], ...]
    clock_edge: str
    counter: CounterPlan
    network: Network
    glitches: list[GlitchRecord] = field(default_factory=list)
    coincident_edges: list[CoincidentEdge] = field(default_factory=list)
    warnings: tuple[str, ...] = ()
    cautions: tuple[str, ...] = ()
    proven_minimal: bool = False
    lower_bound: int | None = None
    method: str = ""
    parts: dict[str, Part] = field(default_factory=dict)
    external: dict[str, str] = field(default_factory=dict)
    bin_lacks: dict[str, object] | None = None   # wishlist.BinLacks.to_json(), when the plan ran that search
    passives: list[Passive] = field(default_factory=list)
    oscillator: OscillatorPlan | None = None         # when the spec asks for one
    ladders: dict[str, LadderPlan] = field(default_factory=dict)   # by net name
    power_on_reset: PowerOnReset | None = None       # when the spec asks for one
    rc_delays: tuple[AppliedDelay, ...] = ()        # each RC delay built in
    # the timing step's results (timing.TimingReport) and the remedies' (glitchfix.FixReport)
    register_checks: list[RegisterCheck] = field(default_factory=list)
    pulse_widths: list[PulseWidth] = field(default_factory=list)
    strobed: dict[str, Strobed] = field(default_factory=dict)     # signal -> how it is gated with the clock
    strobe_skipped: dict[str, str] = field(default_factory=dict)  # signal -> why it could not be gated
    registered: dict[str, Registered] = field(default_factory=dict)   # signal -> its flip-flop
    rc_offers: list[RcOffer] = field(default_factory=list)
    timing_fixes: list[TimingFix] | None = None   # None: --fix glitches not asked (nor steady: true)

    def passive(self, ref: str) -> Passive:
        for item in self.passives:
            if item.ref == ref:
                return item
        raise KeyError(f"expected a resistor or capacitor ref of this plan, got {ref!r}")

    def chip(self, ref: str) -> ChipInstance:
        for chip in self.chips:
            if chip.ref == ref:
                return chip
        raise KeyError(f"expected a chip ref of this plan, got {ref!r}")

    def part_of(self, ref: str) -> Part:
        return self.parts[self.chip(ref).part]


def ref_key(ref: str) -> tuple[str, int, str]:
    """Sort key that puts U2 before U10.

    >>> sorted(["U10", "U2", "U1"], key=ref_key)
    ['U1', 'U2', 'U10']
    """
    match = re.fullmatch(r"([A-Za-z]*)(\d+)(.*)", ref)
    if not match:
        return (ref, 0, "")
    return (match.group(1), int(match.group(2)), match.group(3))


# ---------------------------------------------------------------- pin directions

_IN_HEADS = {"inputs", "input", "clock", "enable", "enables", "reset", "selects", "data", "count_enable",
             "d", "set", "control", "tie", "load", "clear"}
_OUT_HEADS = {"output", "also", "outputs", "stages", "decoded", "carry", "carry_out",
              "q", "qn", "output_inv"}
_ANALOG_HEADS = {"common", "throws", "terminals", "channels"}


def role_direction(role: str) -> Direction:
    """The direction of a unit pin from its role path in the catalog.

    >>> [role_direction(r) for r in ("inputs[1]", "also.output", "throws.low", "oscillator.input")]
    ['in', 'out', 'analog', 'in']
    """
    head = re.match(r"[A-Za-z_]+", role)
    name = head.group(0) if head else role
    if name == "oscillator":
        return "in" if role.endswith(".input") else "out"
    if name in _IN_HEADS:
        return "in"
    if name in _OUT_HEADS:
        return "out"
    if name in _ANALOG_HEADS:
        return "analog"
    return "other"


_DIRECTIONS: dict[int, tuple[Part, dict[int, Direction]]] = {}


def pin_directions(part: Part) -> dict[int, Direction]:
    """Every package pin of a part with its direction (power and ties included)."""
    cached = _DIRECTIONS.get(id(part))
    if cached is not None and cached[0] is part:
        return cached[1]
    dirs = _directions_of(part)
    _DIRECTIONS[id(part)] = (part, dirs)
    return dirs


def _directions_of(part: Part) -> dict[int, Direction]:
    dirs: dict[int, Direction] = {pin: "other" for pin in range(1, part.pin_count + 1)}
    for pin in part.nc:
        dirs[pin] = "nc"
    for pin in part.ties:
        dirs[pin] = "in"
    for unit in part.units:
        for pin, role in unit.pins():
            if dirs.get(pin) in (None, "other", "nc"):
                dirs[pin] = role_direction(role)
    for pin in part.power.values():
        dirs[pin] = "power"
    return dirs


# ---------------------------------------------------------------- net checks

def net_problems(plan: Plan) -> list[str]:
    """Everything wrong with the nets, as sentences (an empty list is a sound board)."""
    problems: list[str] = []
    seen: dict[tuple[str, int], str] = {}
    chips = {chip.ref: chip for chip in plan.chips}
    for net, pins in plan.nets.items():
        for ref, pin in pins:
            if (ref, pin) in seen:
                problems.append(f"{ref} pin {pin} is on net {seen[(ref, pin)]} and on net {net}")
            seen[(ref, pin)] = net
            if is_passive(ref):
                continue
            if ref not in chips:
                problems.append(f"net {net} names {ref}, which is not a chip of the plan")
                continue
            part = plan.parts[chips[ref].part]
            if not 1 <= pin <= part.pin_count:
                problems.append(f"net {net}: {ref} ({part.type}) has no pin {pin}")
            elif pin in part.nc:
                problems.append(f"net {net}: {ref} pin {pin} is not connected inside the chip (NC)")
    for chip in plan.chips:
        problems += _chip_problems(plan, chip, seen)
    problems += _passive_problems(plan, seen)
    problems += _driver_problems(plan)
    return problems


def _passive_problems(plan: Plan, seen: dict[tuple[str, int], str]) -> list[str]:
    """Both ends of every resistor and capacitor on the net the record names."""
    problems = []
    refs = {item.ref for item in plan.passives}
    for (ref, pin), net in seen.items():
        if is_passive(ref) and ref not in refs:
            problems.append(f"net {net} names {ref}, which is not a part of the plan")
    for item in plan.passives:
        for end, net in enumerate(item.ends, start=1):
            if seen.get((item.ref, end)) != net:
                problems.append(f"{item.ref} end {end} should be on net {net}, nets say "
                                f"{seen.get((item.ref, end)) or 'nothing'}")
        if item.ends[0] == item.ends[1]:
            problems.append(f"{item.ref} has both ends on net {item.ends[0]}")
    return problems


def _chip_problems(plan: Plan, chip: ChipInstance, seen: dict[tuple[str, int], str]) -> list[str]:
    part = plan.parts[chip.part]
    problems = []
    for name, pin in part.power.items():
        want = "VDD" if name == "VDD" else "VSS"
        got = seen.get((chip.ref, pin))
        if got != want:
            problems.append(f"{chip.ref} pin {pin} ({name}) must be on {want}, got {got or 'nothing'}")
    for pin, direction in pin_directions(part).items():
        if direction == "in" and (chip.ref, pin) not in seen:
            problems.append(f"{chip.ref} pin {pin} ({part.pins.get(pin, '?')}) is an input left "
                            "floating (never leave a CMOS input floating)")
    for pin, net in chip.pins.items():
        if seen.get((chip.ref, pin)) != net:
            problems.append(f"{chip.ref} pin {pin}: chip says net {net}, nets say "
                            f"{seen.get((chip.ref, pin)) or 'nothing'}")
    return problems


def _driver_problems(plan: Plan) -> list[str]:
    problems = []
    for net, pins in plan.nets.items():
        drivers = [p for p in pins if _direction(plan, *p) == "out"]
        inputs = [p for p in pins if _direction(plan, *p) == "in"]
        if net in RAIL_NETS:
            problems += [f"{ref} pin {pin} is an output wired to the {net} rail (a short)"
                         for ref, pin in drivers]
        elif len(drivers) > 1:
            names = ", ".join(f"{r} pin {p}" for r, p in drivers)
            problems.append(f"net {net} has {len(drivers)} outputs driving it: {names}")
        elif not drivers and inputs and net not in plan.external and \
                not any(is_passive(ref) for ref, _ in pins):
            problems.append(f"net {net} feeds inputs but nothing drives it (floating)")
    return problems


def check_nets(plan: Plan) -> None:
    """Raise InternalError when the nets break the formats.md rules."""
    problems = net_problems(plan)
    if problems:
        more = f" (and {len(problems) - 3} more)" if len(problems) > 3 else ""
        raise InternalError(f"net check failed for plan {plan.name}: {'; '.join(problems[:3])}{more}",
                            hint="a bug in binsynth's packing; no design was printed")


def pin_direction(plan: Plan, ref: str, pin: int) -> Direction:
    """A pin's direction; resistor and capacitor ends are ``analog``."""
    if is_passive(ref):
        return "analog"
    return _direction(plan, ref, pin)


def _direction(plan: Plan, ref: str, pin: int) -> Direction:
    try:
        part = plan.part_of(ref)
    except KeyError:
        return "other"
    direction = pin_directions(part).get(pin, "other")
    if direction == "analog":
        return _logic_section_direction(plan, ref, part, pin) or direction
    return direction


def _logic_section_direction(plan: Plan, ref: str, part: Part, pin: int) -> Direction | None:
    """A switch section used as a 2:1 mux gate: its common is the output, its throws inputs."""
    units_used = plan.chip(ref).units_used
    for unit in part.units_of("spdt"):
        purpose = units_used.get(unit.id)
        if not purpose or purpose.startswith("switch "):
            continue
        if pin == unit.common:
            return "out"
        if pin in (unit.throws.low, unit.throws.high):
            return "in"
    return None


# ---------------------------------------------------------------- zero-delay simulation

def tick_count(counter: CounterPlan) -> int:
    """Ticks in one cycle of the counter plan."""
    return len(counter.state_of_tick)


def counter_levels(counter: CounterPlan, t: int) -> dict[str, bool]:
    """The level of every counter net at tick t: bit ``var.index`` of the state."""
    states = counter.state_of_tick
    state = states(t) if callable(states) else states[t]
    levels = {}
    for var in counter.vars:
        if isinstance(state, Mapping):
            value = state[var.net] if var.net in state else state[var.index]
        elif isinstance(state, int):
            value = (state >> var.index) & 1
        else:
            value = state[var.index]
        levels[var.net] = bool(value)
    return levels


def sampled_clock_levels(counter: CounterPlan) -> dict[str, bool]:
    """The clock net at the level it has just before a counting edge, where ticks are
    sampled: a decode gated with the clock's still half reads its tick's level there."""
    var_nets = {str(v.net) for v in counter.vars}
    level = counter.edge == "falling"
    levels = {str(c.clock_net): level for c in counter.chips
              if str(c.clock_net) not in var_nets}
    if CLOCK_NET not in var_nets:        # the board clock, also where the counters take an inverted copy
        levels.setdefault(CLOCK_NET, level)
    return levels


class _TickLevels(Mapping):
    """One tick's net levels, read from whole-cycle words (bit t = tick t)."""

    __slots__ = ("_words", "_t")

    def __init__(self, words: Mapping[str, int], t: int) -> None:
        self._words, self._t = words, t

    def __getitem__(self, net: str) -> bool:
        return bool(self._words[net] >> self._t & 1)

    def __iter__(self):
        return iter(self._words)

    def __len__(self) -> int:
        return len(self._words)


def simulate_nets(plan: Plan) -> list[Mapping[str, bool]]:
    """Every net's zero-delay level at each tick of one cycle (rails included), the
    clock at its level just before the next counting edge."""
    clock = sampled_clock_levels(plan.counter)
    ticks = tick_count(plan.counter)
    inputs: dict[str, int] = {}
    try:
        for t in range(ticks):
            for net, level in {**clock, **counter_levels(plan.counter, t)}.items():
                inputs[net] = inputs.get(net, 0) | (int(level) << t)
        words = evaluate_words(plan.network, inputs, ticks)
    except (ValueError, KeyError) as exc:
        raise InternalError(f"self-check could not evaluate plan {plan.name}: {exc}",
                            hint="a bug in binsynth; no design was printed") from exc
    return [_TickLevels(words, t) for t in range(ticks)]


def simulate_ticks(plan: Plan) -> dict[str, tuple[bool, ...]]:
    """The electrical level of each signal's net per tick (zero-delay)."""
    rows = simulate_nets(plan)
    return {name: tuple(row[sig.net] for row in rows) for name, sig in plan.signals.items()}


def delivered_sets(plan: Plan, levels: Mapping[str, tuple[bool, ...]] | None = None
                   ) -> dict[str, frozenset[int]]:
    """The ticks at which each signal is asserted, as the plan delivers it."""
    levels = simulate_ticks(plan) if levels is None else levels
    return {name: frozenset(t for t, level in enumerate(levels[name])
                            if level == (plan.signals[name].polarity == "high"))
            for name in plan.signals}


# ---------------------------------------------------------------- self-check

def self_check(plan: Plan, spec_or_delivered: Spec | Mapping[str, frozenset[int]]) -> None:
    """Evaluate the plan over every tick; any mismatch is an InternalError.

    ``spec_or_delivered`` is either a Spec (checked with its don't-care
    ticks, ``stretch`` and ``clear_of`` rules and its polarity) or a mapping
    signal -> the exact asserted ticks the pipeline meant to deliver.
    """
    rows = simulate_nets(plan)
    levels = {name: tuple(row[sig.net] for row in rows) for name, sig in plan.signals.items()}
    delivered = delivered_sets(plan, levels)
    cycle = len(rows)
    if isinstance(spec_or_delivered, Mapping):
        mismatches = _exact_mismatches(delivered, spec_or_delivered)
    else:
        mismatches = _spec_mismatches(plan, delivered, spec_or_delivered, cycle)
    mismatches += _switch_mismatches(plan, rows, delivered)
    if mismatches:
        more = f" (and {len(mismatches) - 3} more)" if len(mismatches) > 3 else ""
        raise InternalError(f"self-check failed for plan {plan.name}: {'; '.join(mismatches[:3])}{more}",
                            hint="a bug in binsynth; no design was printed")


def _exact_mismatches(delivered: dict[str, frozenset[int]], wanted: Mapping) -> list[str]:
    problems = []
    for name, ticks in wanted.items():
        if name not in delivered:
            problems.append(f"signal {name} is not in the plan")
            continue
        wrong = sorted(set(ticks) ^ delivered[name])
        if wrong:
            t = wrong[0]
            state = "asserted" if t in delivered[name] else "not asserted"
            problems.append(f"signal {name} at tick {t}: delivered {state}, wanted the opposite")
    return problems


def _spec_mismatches(plan: Plan, delivered: dict[str, frozenset[int]], spec: Spec,
                     cycle: int) -> list[str]:
    if spec.cycle != cycle:
        return [f"the counter runs {cycle} ticks per cycle, the spec wants {spec.cycle}"]
    problems = []
    for name, sig in spec.signals.items():
        if name not in delivered:
            problems.append(f"signal {name} is not in the plan")
            continue
        polarity = sig.polarity
        if polarity in ("high", "low") and plan.signals[name].polarity != polarity:
            problems.append(f"signal {name}: the spec wants it active {polarity}, "
                            f"the plan delivers it active {plan.signals[name].polarity}")
        problems += _level_mismatches(name, delivered[name], sig, cycle)
    for name, sig in spec.signals.items():
        for other, gap in sig.clear_of.items():
            if name in delivered and other in delivered:
                problems += _clear_of_mismatches(name, other, int(gap), delivered, cycle)
    return problems


def _level_mismatches(name: str, got: frozenset[int], sig: SignalSpec, cycle: int) -> list[str]:
    high = frozenset(sig.high)
    dont_care = sig.dont_care
    stretch = sig.stretch
    for t in range(cycle):
        if t in dont_care or (t in high) == (t in got):
            continue
        if t in high:
            return [f"signal {name} at tick {t}: delivered not asserted, wanted asserted"]
        if not _within_stretch(t, high, got, stretch, cycle):
            return [f"signal {name} at tick {t}: delivered asserted, wanted not asserted"
                    + (f" (beyond its stretch of {stretch})" if stretch else "")]
    return []


def _within_stretch(t: int, high: frozenset[int], got: frozenset[int], stretch: int,
                    cycle: int) -> bool:
    """Whether tick t extends a window's end by a run of at most ``stretch`` ticks
    that stops short of the next window (stretching never merges two pulses).

    >>> _within_stretch(5, frozenset({3}), frozenset({3, 4, 5}), 2, 8)
    True
    >>> _within_stretch(5, frozenset({3}), frozenset({3, 5}), 2, 8)
    False
    >>> _within_stretch(4, frozenset({3, 6}), frozenset({3, 4, 5, 6}), 3, 8)
    False
    """
    for back in range(1, stretch + 1):
        earlier = (t - back) % cycle
        if earlier in high:
            return not _runs_into_window(t, high, got, cycle)
        if earlier not in got:
            return False
    return False


def _runs_into_window(t: int, high: frozenset[int], got: frozenset[int], cycle: int) -> bool:
    """Whether the asserted run through tick t reaches the start of a window."""
    for step in range(1, cycle):
        later = (t + step) % cycle
        if later in high:
            return True
        if later not in got:
            return False
    return False


def edges(ticks: frozenset[int], cycle: int) -> list[int]:
    """Boundaries b (between tick b-1 and b, cyclically) where the state changes.

    >>> edges(frozenset({2, 3}), 8)
    [2, 4]
    """
    return [b for b in range(cycle) if ((b - 1) % cycle in ticks) != (b in ticks)]


def _clear_of_mismatches(name: str, other: str, gap: int, delivered: dict[str, frozenset[int]],
                         cycle: int) -> list[str]:
    for b in edges(delivered[name], cycle):
        for c in edges(delivered[other], cycle):
            distance = min((b - c) % cycle, (c - b) % cycle)
            if distance < gap:
                return [f"signal {name} has an edge at tick {b}, {distance} ticks from an edge of "
                        f"{other} at tick {c}; the spec wants at least {gap}"]
    return []


def _switch_mismatches(plan: Plan, rows: list[dict[str, bool]],
                       delivered: dict[str, frozenset[int]]) -> list[str]:
    """Each switch's common must join ``on`` exactly while its select is asserted."""
    problems = []
    for name, sw in plan.switches.items():
        for t, row in enumerate(rows):
            joined = {p.joins for p in sw.paths if row[p.control_net] == p.closed_when}
            want = {sw.on} if t in delivered.get(sw.select, frozenset()) else {sw.off}
            if joined != want:
                got = ", ".join(sorted(joined)) or "nothing"
                problems.append(f"switch {name} at tick {t}: common joins {got}, "
                                f"wanted {next(iter(want))}")
                break
    return problems


# ---------------------------------------------------------------- tables and wires

class PinRow(NamedTuple):
    """One line of a chip's pin table."""

    pin: int
    function: str
    net: str
    goes_to: tuple[str, ...]


def endpoint_text(plan: Plan, ref: str, pin: int) -> str:
    """``U1 pin 9 (Q1)``: a pin as a person finds it on the chip; ``R1 end 2 (10 kΩ)``."""
    if is_passive(ref):
        return f"{ref} end {pin} ({plan.passive(ref).label()})"
    name = plan.part_of(ref).pins.get(pin, "?")
    return f"{ref} pin {pin} ({name})"


def pin_table(plan: Plan, ref: str) -> list[PinRow]:
    """Every package pin of one chip in pin order: function, net, where it goes.

    An open pin has net ``''``; a not-connected pin has net ``'NC'``.
    """
    chip = plan.chip(ref)
    part = plan.parts[chip.part]
    rows = []
    for pin in range(1, part.pin_count + 1):
        net = chip.pins.get(pin, "NC" if pin in part.nc else "")
        if net in RAIL_NETS:
            goes: tuple[str, ...] = (f"{net} rail",)
        elif pin in chip.pins:
            others = [endpoint_text(plan, r, p) for r, p in plan.nets.get(net, []) if (r, p) != (ref, pin)]
            if net in plan.external:
                others.append(plan.external[net])
            goes = tuple(others)
        else:
            goes = ()
        rows.append(PinRow(pin, part.pins.get(pin, "?"), net, goes))
    return rows


@dataclass(frozen=True)
class Wire:
    """One wire to place: from a chip pin to another pin, a rail or an outside point."""

    net: str
    frm: tuple[str, int]
    to: tuple[str, int] | str

    def is_external(self) -> bool:
        return isinstance(self.to, str)


def wire_list(plan: Plan) -> list[Wire]:
    """The wires a person builds, sorted by chip and pin of their first end.

    Rails: every pin gets a wire to its rail.  Other nets: every pin is
    wired to the net's driver (or, with no driver, its first pin), and a
    net that leaves the board gets one more wire from there to the outside.
    """
    wires = []
    for net, pins in plan.nets.items():
        if not pins:
            continue
        if net in RAIL_NETS:
            wires += [Wire(net, p, f"{net} rail") for p in pins]
            continue
        drivers = [p for p in pins if _direction(plan, *p) == "out"]
        on_chips = [p for p in pins if not is_passive(p[0])]
        anchor = drivers[0] if drivers else (on_chips or pins)[0]
        wires += [Wire(net, p, anchor) for p in pins if p != anchor]
        if net in plan.external:
            wires.append(Wire(net, anchor, plan.external[net]))
    return sorted(wires, key=lambda w: (ref_key(w.frm[0]), w.frm[1], str(w.to)))
