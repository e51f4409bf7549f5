"""Counter allocation from the bin: which chips count, and what each tick looks like on their pins.

Interface: ``allocate(spec, bin, catalog, *, decoded_carry=False) -> CounterPlan``;
``carry_nets(counter_plan, network)`` (a decoded count enable's board net); the records
``CarryDecode`` (a 4520/4518 cascade's decoded count enable),
``CounterVar`` (one counter output the decode may use), ``CounterChip`` (one
counter unit as wired), ``ResetDecode`` (the state that cuts a cycle short)
and ``CounterPlan``; ``bits_for(cycle)``; ``counter_fmax_mhz(part, supply)``;
``RESET_NAME``, ``MAX_VARIABLES``.

The count starts from all zeros at tick 0 (the format contract), so tick t is
count t until the cycle's end state is decoded into the reset.  Candidate
chains are built from the bin's counter units: ripple cascades (each unit
clocked from a pinned-out stage of an earlier one, on its CLOCK when that
counts on a falling edge, else on the ENABLE of a 4520/4518 with CLOCK held
low), units counting beside another to supply stages a long counter does not
pin out (a 4024 clocked from a 4020's Q1 gives its missing Q2 and Q3), BCD
decades, and decoded Johnson counters (4017, 4022) for short cycles.  The
choice: fewest chips, then synchronous, then fewest transient states, then
no reset gate, then the shortest settling time after the counting edge;
chains are checked tick by tick only in that order, until one works.

A cycle that is not the chain's natural period is cut short: an
asynchronous reset decodes the state ``cycle`` (shown for a moment, its
length given in ``ResetDecode.caution``), a synchronous clear (74HC163)
decodes ``cycle - 1``, a decoded counter wires output ``cycle`` to RESET.

Counter variable ``index`` is the bit of the minterm (variable 0 lowest
weight); nets are the datasheet pin names, prefixed with the chip's ref
(``U1.Q4``) when more than one counter chip is used (the two halves of a
dual counter share one ref and have distinct pin names).  Synchronous carry
cascades: a 74HC161/163 counts on CLK while the unit below's TC is high
(TC -> CEP and CET, the datasheet's synchronous cascade), so all outputs
change on one edge; any number of units (three 74HC163 count 4096), each
unit's TC high only while its own CET is (the TCs ripple up the chain).
Units with a count ENABLE but no carry pin (4520, 4518) cascade
synchronously when ``decoded_carry`` asks for it: every unit on CLK, each
upper unit's ENABLE on a decode (``CarryDecode``: every unit below at its last
count; the mapper builds it from the bin's gates, hazard-free, like the reset
decode).  The 4520 also counts when ENABLE falls while CLOCK is low, so the
decode must settle while CLOCK is still high after the counting edge; the
timing simulation models that.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Literal

from .errors import ShortError, SpecError
from .inventory import Bin, Catalog, Part, Unit
from .limits import CYCLE_BITS

Edge = Literal["rising", "falling"]
MAX_VARIABLES = CYCLE_BITS  # 1M minterms: the largest decode (the one cycle limit, limits.CYCLE_TICKS)
MAX_CHIPS = 6
RESET_NAME = "_reset"


# ---------------------------------------------------------------- records

@dataclass(frozen=True)
class CounterVar:
    """One counter output as a decode variable (bit ``index`` of a minterm)."""

    index: int
    net: str
    chip: int                 # index into CounterPlan.chips
    unit: str
    pin: int
    pin_name: str
    weight: int | None        # binary/BCD weight in the count; None for a decoded output


@dataclass(frozen=True)
class CounterChip:
    """One counter unit as wired: what clocks it, what resets it, what is held."""

    ref: str
    part: str
    unit: str
    clock_net: str            # 'CLK' or the net of the stage that clocks it
    clock_pin: int            # the pin that receives clock_net
    clock_edge: Edge          # edge of clock_net that advances this unit
    reset_pin: int | None
    reset_net: str            # 'VSS'/'VDD' when held inactive, else the reset net
    enable_pin: int | None = None
    enable_net: str | None = None   # its tie ('VDD'/'VSS'), or the clock when it counts there
    ties: dict[int, str] = field(default_factory=dict)
    stages: tuple[int, ...] = ()    # stages (or decoded outputs) used by the plan
    divisor: int = 1                # ticks per count of this unit
    how: str = ""                   # one sentence for people
    carry_net: str | None = None    # the net on its carry output (TC) when a later unit counts on it
    count_enable_pins: tuple[int, ...] = ()   # pins joined to enable_net (CEP, CET of a carry cascade)


@dataclass(frozen=True)
class ResetDecode:
    """The counter state decoded into the reset pins to cut a cycle short.

    ``on``/``dc`` are minterm sets over the plan variables, like a
    ``minimize.Function``; ``net`` is the reset net.  ``direct`` when a
    counter output drives the reset pins itself (4017 Qn -> RESET).
    """

    name: str
    on: frozenset[int]
    dc: frozenset[int]
    state: int                # the count decoded: cycle (asynchronous) or cycle-1 (synchronous)
    active: Literal["high", "low"]
    synchronous: bool
    net: str
    direct: bool = False
    direct_pin: tuple[str, int] | None = None   # (ref, pin) of the output wired to reset
    pulse_ns: tuple[float | None, float | None] | None = None  # (typ, max) life of the transient state
    caution: str = ""
    warnings: list[str] = field(default_factory=list)
    transient: int | None = None    # minterm of the state shown while an asynchronous reset acts


@dataclass(frozen=True)
class CarryDecode:
    """A decoded count enable of a synchronous cascade without carry pins (4520, 4518):
    high exactly at the ticks after which the unit ``chip`` must count (every unit below
    at its last count), mapped onto the bin's gates like the reset decode; ``net`` is
    the name the counter plan gives the enable pin until the decode's net is known."""

    name: str
    on: frozenset[int]
    dc: frozenset[int]
    net: str
    chip: int


@dataclass(frozen=True)
class CounterPlan:
    """The counter chips and the tick <-> minterm map the decode works over (frozen)."""

    chips: tuple[CounterChip, ...]
    vars: tuple[CounterVar, ...]
    cycle: int
    state_of_tick: tuple[int, ...]
    unreachable: frozenset[int]
    edge: Edge
    synchronous: bool
    reset: ResetDecode | None
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    settle_ns: float | None = None
    transient_states: int = 0
    passing: dict[int, frozenset[int]] = field(default_factory=dict)  # tick -> states shown on the way to the next
    carries: tuple[CarryDecode, ...] = ()   # decoded count enables (4520/4518 synchronous cascades)

    @property
    def nvars(self) -> int:
        return len(self.vars)

    @property
    def var_names(self) -> list[str]:
        return [v.net for v in self.vars]

    @property
    def refs(self) -> list[str]:
        """Counter chip refs in allocation order, each once (dual units share one)."""
        seen: list[str] = []
        for chip in self.chips:
            if chip.ref not in seen:
                seen.append(chip.ref)
        return seen


# ---------------------------------------------------------------- small helpers

def bits_for(cycle: int) -> int:
    """Binary stages needed to count ``cycle`` distinct states.

    >>> [bits_for(n) for n in (1, 2, 16, 17, 100, 8192)]
    [0, 1, 4, 5, 7, 13]
    """
    if cycle < 1:
        raise ValueError(f"expected a cycle of at least 1 tick, got {cycle}")
    return (cycle - 1).bit_length()


def _article(word: str) -> str:
    """'a 4020', 'an 8-stage ...' (part numbers read digit by digit).

    >>> _article("4020"), _article("74HC4040"), _article("8-bit")
    ('a 4020', 'a 74HC4040', 'an 8-bit')
    """
    return f"an {word}" if word[:1] in "8aeiouAEIOU" or word.startswith("11") or word.startswith("18") \
        else f"a {word}"


def _or_list(words: list[str]) -> str:
    """'x', 'x or y', 'x, y or z'.

    >>> _or_list(["a 4020"]), _or_list(["a", "b", "c"])
    ('a 4020', 'a, b or c')
    """
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + f" or {words[-1]}"


def _ns(value: float | None) -> str:
    return "?" if value is None else f"{value:.0f}"


def _duration(times: tuple[float | None, float | None], supply: float) -> str:
    """'about 200 ns typ (400 ns max) at 5 V', or why no figure can be given.

    >>> _duration((200.0, 400.0), 5.0)
    'about 200 ns typ (400 ns max) at 5 V'
    >>> _duration((None, None), 5.0)
    'for a time the catalog gives no reset delay for'
    """
    typ, worst = times
    if typ is None and worst is None:
        return "for a time the catalog gives no reset delay for"
    text = f"about {_ns(typ if typ is not None else worst)} ns {'typ' if typ is not None else 'max'}"
    if typ is not None and worst is not None:
        text += f" ({_ns(worst)} ns max)"
    return text + f" at {supply:g} V"


# ---------------------------------------------------------------- unit kinds

@dataclass(frozen=True)
class _Kind:
    """A counter part type on hand, with its units (both halves of a dual counter)."""

    part: Part
    units: tuple[Unit, ...]
    count: int                # chips on hand

    @property
    def mode(self) -> str:
        return self.units[0].mode

    @property
    def modulus(self) -> int:
        return self.units[0].modulus

    @property
    def width(self) -> int:
        """Internal binary stages (a 4020 has 14, pinned out or not)."""
        return (self.modulus - 1).bit_length()

    @property
    def synchronous(self) -> bool:
        return self.units[0].synchronous

    def outputs(self, slot: int) -> dict[int, int]:
        """Stage k (or decoded n) -> pin for the unit in ``slot``."""
        return self.units[slot % len(self.units)].outputs_by_count()

    @property
    def visible(self) -> frozenset[int]:
        return frozenset(self.outputs(0))

    def clocking(self, source_edge_needed: Edge) -> str | None:
        """How the unit counts on the wanted edge of its driving net: 'clock', 'enable' or None.

        A counter with a rising-edge CLOCK and an ENABLE (4520, 4518, 4017)
        also counts on a falling edge at ENABLE with CLOCK held (4520:
        "ENABLE falling while CLOCK LOW"; 4017: "INHIBIT falling while CLOCK
        HIGH"; cmos-4000b.md [nxp4520], [isl4017]).  An ``edge`` key on the
        enable overrides that rule; units with a carry output use their
        enable for carry cascades instead.
        """
        unit = self.units[0]
        if unit.clock is not None and unit.clock.edge == source_edge_needed:
            return "clock"
        if _enable_edge(unit) == source_edge_needed:
            return "enable"
        return None

    def fmax_mhz(self, supply: float) -> tuple[float | None, str]:
        """The clock rate the unit can be trusted with at the supply, and how it was had.

        The guaranteed (min) figure where the catalog has one at or below
        the supply.  Otherwise a typical figure halved (the catalog's 4000B
        entries guarantee half their typical fmax: 4040 5/10, 4520 8/16 MHz),
        and below the lowest tabled supply scaled with the voltage, since
        CMOS speed falls roughly in proportion to it (common practice).
        """
        table = self.part.timing.get("fmax_mhz") or {}
        for which in ("min", "typ"):
            points = sorted((float(v), row[which]) for v, row in table.items()
                            if isinstance(row, dict) and which in row)
            if not points:
                continue
            value = self.part.delay_ns("fmax_mhz", supply, which)
            how = "guaranteed"
            if which == "typ":
                value, how = value / 2, "half the typical"
            if supply < points[0][0]:
                value, how = value * supply / points[0][0], how + f" scaled from {points[0][0]:g} V"
            return value, how
        return None, "none"


def _enable_edge(unit: Unit) -> Edge | None:
    enable = unit.enable
    if enable is None:
        return None
    if enable.edge is not None:
        return enable.edge
    if unit.carry_out is not None or unit.clock is None or unit.clock.edge != "rising":
        return None
    return "falling"


def _clock_hold(unit: Unit) -> str:
    """The rail CLOCK is held at while ENABLE counts (low for an active-high enable)."""
    enable = unit.enable
    if enable.clock_hold is not None:
        return "VDD" if enable.clock_hold == "high" else "VSS"
    return "VSS" if enable.active == "high" else "VDD"


def counter_fmax_mhz(part: Part, supply: float) -> tuple[float | None, str]:
    """The clock rate a counter part can be trusted with at the supply, and how it was had
    (the rule of ``_Kind.fmax_mhz``), for stages that pick a clock after allocation."""
    return _Kind(part, tuple(part.units_of("counter")), 1).fmax_mhz(supply)


def _kinds(stock: Bin, catalog: Catalog) -> list[_Kind]:
    kinds = []
    for part_type, count in sorted(stock.parts.items()):
        part = catalog.parts[part_type]
        units = tuple(part.units_of("counter"))
        if units:
            kinds.append(_Kind(part, units, count))
    return kinds


# ---------------------------------------------------------------- chains

@dataclass(frozen=True)
class _Element:
    """One counter unit placed in a chain."""

    kind: _Kind
    slot: int                 # which unit of this part type (0, 1, ...) in allocation order
    divisor: int              # ticks per count
    source: tuple[int, int] | None   # None = CLK, else (element, stage) that clocks it
    via: str                  # 'clock', 'enable', or 'carry' (clocked by CLK, counting while
                              # element ``carry_from``'s TC is high: a synchronous cascade), or
                              # 'decoded' (clocked by CLK, its ENABLE on a gate decoding every
                              # unit below at its last count: 4520/4518 synchronous cascade)
    offset: int = 0           # binary chains: the bit of stage 1
    carry_from: int | None = None


@dataclass(frozen=True)
class _VarSource:
    element: int
    stage: int                # stage k, or decoded output n
    weight: int | None


@dataclass
class _Chain:
    elements: tuple[_Element, ...]
    sources: tuple[_VarSource, ...]
    style: str                # 'binary', 'bcd', 'johnson'

    def chips(self) -> int:
        return _chips_of(self.elements)


def _used(elements: tuple[_Element, ...], kind: _Kind) -> int:
    return sum(1 for e in elements if e.kind is kind)


def _chips_of(elements: tuple[_Element, ...]) -> int:
    used: dict[int, tuple[_Kind, int]] = {}
    for e in elements:
        kind, n = used.get(id(e.kind), (e.kind, 0))
        used[id(e.kind)] = (kind, n + 1)
    return sum(-(-n // len(kind.units)) for kind, n in used.values())


def _binary_chains(kinds: list[_Kind], n: int, max_chips: int, decoded: bool = False) -> list[_Chain]:
    """Binary chains covering bits 0..n-1: ripple cascades and parallel fill-ins."""
    binary = [k for k in kinds if k.mode == "binary"]
    found: dict[tuple, _Chain] = {}

    def providers(elements) -> dict[int, tuple[int, int]]:
        seen: dict[int, tuple[int, int]] = {}
        for i, e in enumerate(elements):
            for stage in sorted(e.kind.visible):
                bit = e.offset + stage - 1
                if bit < n:
                    seen.setdefault(bit, (i, stage))
        return seen

    def top_of(elements) -> int:
        return max((e.offset + e.kind.width for e in elements), default=0)

    def grow(elements: tuple[_Element, ...], edge: Edge | None) -> None:
        top = top_of(elements)
        seen = providers(elements)
        hidden = [b for b in range(min(top, n)) if b not in seen]
        if elements and top >= n:
            key = tuple(sorted((e.kind.part.type, e.offset, e.via, e.source is None) for e in elements))
            found.setdefault(key, _binary_chain(elements, seen, n))
            if not hidden:
                return
        for kind in binary:
            if _used(elements, kind) >= kind.count * len(kind.units):
                continue
            trial_chips = _chips_of(elements + (_Element(kind, 0, 1, None, "clock"),))
            if trial_chips > max_chips:
                continue
            for offset, source, needed in _binary_sources(elements, top, seen, hidden, n, edge):
                via = kind.clocking(needed)
                if via is None:
                    continue
                adds_cover = offset + kind.width > top
                fills = {offset + k - 1 for k in kind.visible} & set(hidden)
                if not (adds_cover or fills):
                    continue
                element = _Element(kind, _used(elements, kind), 1 << offset, source, via, offset)
                grow(elements + (element,), edge if edge is not None else needed)
            carry = _carry_source(elements, kind, top, n)
            if carry is not None:
                element = _Element(kind, _used(elements, kind), 1 << top, None, "carry", top, carry)
                grow(elements + (element,), edge)
            below = _decoded_source(elements, kind, top, n) if decoded else None
            if below is not None:
                element = _Element(kind, _used(elements, kind), 1 << top, None, "decoded", top, below)
                grow(elements + (element,), edge)

    grow((), None)
    return list(found.values())


def _carries(kind: _Kind) -> bool:
    """A synchronous binary unit with a carry output (TC) and count-enable inputs
    (74HC161/163: TC = CET and count 15; CEP, CET high to count)."""
    unit = kind.units[0]
    return kind.synchronous and kind.mode == "binary" and unit.carry_out is not None \
        and bool(unit.count_enable) and set(kind.visible) == set(range(1, kind.width + 1))


def _carry_source(elements, kind: _Kind, top: int, n: int) -> int | None:
    """The element whose TC can enable ``kind`` as the next unit of a synchronous
    cascade: the top unit, clocked by CLK, counting freely or itself carry-enabled
    (its TC is then CET and count 15, so the TCs ripple up: 74HC161 datasheet,
    TC = CET . Q0 . Q1 . Q2 . Q3; ``timing`` models a TC that follows its CET)."""
    if not elements or top >= n or not _carries(kind):
        return None
    for i, e in enumerate(elements):
        if e.offset + e.kind.width == top and e.source is None and e.via in ("clock", "carry") \
                and _carries(e.kind) \
                and _unit(e).clock.edge == kind.units[0].clock.edge:
            return i
    return None


def _enable_counts(kind: _Kind) -> bool:
    """A synchronous unit with a count ENABLE beside its CLOCK and every stage pinned out
    (4520, 4518: counts on CLOCK rising while ENABLE is high), so a gate can decode its
    enable from the units below: the data sheets' synchronous cascade."""
    f = kind.units[0].fields
    return kind.synchronous and kind.mode in ("binary", "bcd") and bool(f.get("enable")) \
        and f.get("enable", {}).get("active", "high") == "high" and f["clock"]["edge"] == "rising" \
        and set(kind.visible) == set(range(1, kind.width + 1))


def _decoded_source(elements, kind: _Kind, top: int, n: int) -> int | None:
    """The top element when ``kind`` can follow it in a decoded-enable synchronous cascade
    (both on CLK, the same kind of counting unit)."""
    if not elements or top >= n or not _enable_counts(kind):
        return None
    for i, e in enumerate(elements):
        if e.offset + e.kind.width == top and e.source is None and e.via in ("clock", "decoded") \
                and _enable_counts(e.kind) and e.kind.mode == kind.mode:
            return i
    return None


def _binary_sources(elements, top, seen, hidden, n, edge):
    """Where the next unit may take its clock: (offset, source, edge it must count on)."""
    options = []
    clk_edges = [edge] if edge is not None else ["falling", "rising"]
    if not elements or (hidden and hidden[0] == 0):
        options += [(0, None, e) for e in clk_edges]
    if elements and top < n and (top - 1) in seen:
        options.append((top, seen[top - 1], "falling"))
    if hidden and hidden[0] >= 1 and (hidden[0] - 1) in seen:
        options.append((hidden[0], seen[hidden[0] - 1], "falling"))
    return options


def _binary_chain(elements, seen: dict[int, tuple[int, int]], n: int) -> _Chain:
    sources = tuple(_VarSource(i, stage, 1 << bit) for bit, (i, stage) in sorted(seen.items()))
    return _Chain(tuple(elements), sources, "binary")


def _bcd_chains(kinds: list[_Kind], cycle: int, max_chips: int, decoded: bool = False) -> list[_Chain]:
    """BCD decades cascaded from Q4 (it falls on 9 -> 0), with an optional binary tail."""
    bcd = [k for k in kinds if k.mode == "bcd" and {1, 2, 3, 4} <= k.visible]
    binary = [k for k in kinds if k.mode == "binary"]
    chains = []

    def grow(elements: tuple[_Element, ...], capacity: int, edge: Edge | None) -> None:
        if capacity >= cycle:
            chains.append(_bcd_chain(elements))
            return
        if _chips_of(elements) > max_chips:
            return
        needed_edge = "falling" if elements else None
        source = (len(elements) - 1, 4) if elements else None
        for kind in bcd:
            if _used(elements, kind) >= kind.count * len(kind.units):
                continue
            if decoded and elements and all(e.source is None for e in elements) and _enable_counts(kind) \
                    and all(_enable_counts(e.kind) for e in elements):
                e = _Element(kind, _used(elements, kind), capacity, None, "decoded", 0, len(elements) - 1)
                if _chips_of(elements + (e,)) <= max_chips:
                    grow(elements + (e,), capacity * 10, edge)
            for want in ([needed_edge] if needed_edge else ["rising", "falling"]):
                via = kind.clocking(want)
                if via:
                    e = _Element(kind, _used(elements, kind), capacity, source, via)
                    if _chips_of(elements + (e,)) <= max_chips:
                        grow(elements + (e,), capacity * 10, edge or want)
                    break
        if elements:
            for kind in binary:
                if _used(elements, kind) >= kind.count * len(kind.units) or kind.clocking("falling") is None:
                    continue
                stages = bits_for(-(-cycle // capacity))
                if stages <= kind.width and set(range(1, stages + 1)) <= kind.visible:
                    e = _Element(kind, _used(elements, kind), capacity, source, kind.clocking("falling"))
                    if _chips_of(elements + (e,)) <= max_chips:
                        chains.append(_bcd_chain(elements + (e,), tail_stages=stages))

    grow((), 1, None)
    return chains


def _bcd_chain(elements, tail_stages: int = 0) -> _Chain:
    sources = []
    for i, e in enumerate(elements):
        stages = range(1, 5) if e.kind.mode == "bcd" else range(1, tail_stages + 1)
        sources += [_VarSource(i, k, e.divisor << (k - 1)) for k in stages]
    return _Chain(tuple(elements), tuple(sources), "bcd")


def _johnson_chains(kinds: list[_Kind], cycle: int) -> list[_Chain]:
    """A decoded counter alone: outputs Q0..Q(cycle-1), reset from Q(cycle) when short."""
    chains = []
    for kind in kinds:
        if kind.mode != "johnson" or cycle > kind.modulus:
            continue
        outputs = kind.visible
        if not set(range(cycle)) <= outputs or (cycle < kind.modulus and cycle not in outputs):
            continue
        element = _Element(kind, 0, 1, None, "clock")
        chains.append(_Chain((element,), tuple(_VarSource(0, k, None) for k in range(cycle)), "johnson"))
    return chains


# ---------------------------------------------------------------- evaluation

@dataclass
class _Verdict:
    chain: _Chain
    ok: bool
    reason: str = ""
    kind: str = ""            # 'fmax', 'hidden', 'reset' when not ok
    edge: Edge = "rising"
    synchronous: bool = False
    reset_mode: str = "none"  # 'none', 'async', 'sync', 'direct'
    held: range | list[int] | None = None
    reset_state: int | None = None
    settle_ns: float | None = None
    fmax_notes: list[str] = field(default_factory=list)

    def key(self) -> tuple:
        transients = 1 if self.reset_mode in ("async", "direct") else 0
        return (self.chain.chips(), not self.synchronous, transients,
                self.reset_mode not in ("none", "direct"),
                self.settle_ns if self.settle_ns is not None else 1e9,
                sum(e.via != "clock" for e in self.chain.elements), len(self.chain.elements), len(self.chain.sources),
                tuple(e.kind.part.type for e in self.chain.elements))


def _runs(chain: _Chain) -> list[tuple[int, int, int, int, int]]:
    """(divisor, modulus, shift, mask, first index): consecutive stages on consecutive bits."""
    runs: list[list[int]] = []
    for index, src in enumerate(chain.sources):
        last = runs[-1] if runs else None
        if last and last[0] == src.element and last[1] + last[2] == src.stage and last[3] + last[2] == index:
            last[2] += 1
        else:
            runs.append([src.element, src.stage, 1, index])
    return [(chain.elements[e].divisor, chain.elements[e].kind.modulus, k0 - 1, (1 << n) - 1, i0)
            for e, k0, n, i0 in runs]


def _state_function(chain: _Chain):
    """Tick -> minterm of the natural count (no reset), for any chain."""
    if chain.style == "johnson":
        e, width = chain.elements[0], len(chain.sources)

        def decoded(t: int) -> int:
            count = t // e.divisor % e.kind.modulus
            return 1 << count if count < width else 0
        return decoded
    runs = _runs(chain)

    def counted(t: int) -> int:
        state = 0
        for divisor, modulus, shift, mask, first in runs:
            state |= ((t // divisor % modulus) >> shift & mask) << first
        return state
    return counted


def _held_states(chain: _Chain, cycle: int) -> range | list[int]:
    """Minterm at each tick 0..cycle-1 (the count equals the tick: the format contract).

    A binary chain whose outputs are every bit of the count in order holds
    minterm t at tick t: then the states are the range itself.
    """
    if chain.style == "binary" and [src.weight for src in chain.sources] == \
            [1 << i for i in range(len(chain.sources))] and cycle <= 1 << len(chain.sources):
        return range(cycle)
    state = _state_function(chain)
    return [state(t) for t in range(cycle)]


def _period(chain: _Chain) -> int:
    """Ticks after which every used output repeats when nothing resets the count."""
    period = 1
    for src in chain.sources:
        e = chain.elements[src.element]
        if e.kind.mode == "binary":
            period = math.lcm(period, e.divisor << src.stage)
        else:
            period = math.lcm(period, e.divisor * e.kind.modulus)
    return period


def _element_edge(e: _Element) -> Edge:
    """The edge of its input net that advances a unit."""
    unit = _unit(e)
    if e.via in ("clock", "carry", "decoded"):
        return unit.clock.edge
    return _enable_edge(unit) or "falling"


def _edge_of(chain: _Chain) -> Edge:
    return _element_edge(chain.elements[0])


def _unit(e: _Element) -> Unit:
    return e.kind.units[e.slot % len(e.kind.units)]


def _is_synchronous(chain: _Chain) -> bool:
    return all(e.source is None and e.kind.synchronous for e in chain.elements)


def _assess(chain: _Chain, spec, supply: float, frequency: float | None) -> _Verdict:
    """Everything about a chain that needs no tick-by-tick look: edges, fmax, reset, speed."""
    cycle = spec.cycle
    verdict = _Verdict(chain, True, edge=_edge_of(chain), synchronous=_is_synchronous(chain))
    verdict.settle_ns = _settle_ns(chain, supply)
    problem = _fmax_problem(chain, supply, frequency, verdict)
    if problem:
        verdict.ok, verdict.kind, verdict.reason = False, "fmax", problem
    elif cycle % _period(chain):
        reason = _choose_reset(chain, verdict, cycle)
        if reason:
            verdict.ok, verdict.kind, verdict.reason = False, "reset", reason
    return verdict


def _validate(verdict: _Verdict, spec) -> None:
    """The tick-by-tick checks: outputs pinned out tell apart what must be told apart."""
    chain, cycle = verdict.chain, spec.cycle
    held = _held_states(chain, cycle)
    verdict.held = held
    distinct = isinstance(held, range) or len(set(held)) == cycle
    if not distinct:
        clash = _hidden_clash(chain, spec, held)
        if clash:
            verdict.ok, verdict.kind, verdict.reason = False, "hidden", clash
            return
    reason = ""
    if verdict.reset_mode == "sync" and held.count(held[cycle - 1]) > 1:
        reason = f"state {cycle - 1} cannot be told apart on the stages pinned out"
    elif verdict.reset_mode == "async" and not distinct and _state_function(chain)(cycle) in set(held):
        reason = f"the reset state {cycle} looks like a held state on the stages pinned out"
    if reason:
        verdict.ok, verdict.kind, verdict.reason = False, "reset", reason


def _fmax_problem(chain: _Chain, supply: float, frequency: float | None, verdict: _Verdict) -> str:
    if not frequency:
        return ""
    for e in chain.elements:
        f_in = frequency / (1 if e.via in ("carry", "decoded") else e.divisor) / 1e6
        fmax, how = e.kind.fmax_mhz(supply)
        if fmax is None:
            verdict.fmax_notes.append(f"{e.kind.part.type}: no fmax in the catalog; "
                                      f"{f_in:g} MHz at its clock input is not checked")
            continue
        if f_in > fmax:
            return (f"{e.kind.part.type} would be clocked at {f_in:g} MHz, above its fmax of "
                    f"{fmax:g} MHz at {supply:g} V ({how} figure)")
        if how != "guaranteed":
            verdict.fmax_notes.append(f"{e.kind.part.type}: no guaranteed fmax at {supply:g} V in the "
                                      f"catalog; {f_in:g} MHz checked against {fmax:g} MHz ({how} figure)")
    return ""


def _hidden_clash(chain: _Chain, spec, held: list[int]) -> str:
    """Why a chain with stages not pinned out cannot tell apart ticks a signal separates."""
    for name, signal in spec.signals.items():
        seen: dict[int, tuple[bool, int]] = {}
        for t, state in enumerate(held):
            if t in signal.dont_care:
                continue
            level = t in signal.high
            first = seen.setdefault(state, (level, t))
            if first[0] != level:
                t_on, t_off = (first[1], t) if first[0] else (t, first[1])
                return (f"signal {name!r} differs between ticks {t_on} and {t_off}, which look alike "
                        f"on the stages pinned out ({_missing_stages(chain)} not brought out)")
    return ""


def _missing_stages(chain: _Chain) -> str:
    parts = []
    for e in chain.elements:
        missing = [k for k in range(1, e.kind.width + 1) if k not in e.kind.visible]
        if missing:
            parts.append(f"{e.kind.part.type} " + ", ".join(f"Q{k}" for k in missing))
    return "; ".join(parts) or "some stages"


def _choose_reset(chain: _Chain, verdict: _Verdict, cycle: int) -> str:
    """Pick how the cycle is cut short; return why it cannot be, or ''."""
    resets = [_unit(e).reset for e in chain.elements]
    if any(r is None for r in resets):
        return "a counter in the chain has no reset input to cut the cycle short"
    if len({(r.active, r.synchronous) for r in resets}) > 1:
        return "the counters in the chain have different reset inputs (level or clocking)"
    if chain.style == "johnson":
        if resets[0].active != "high":
            return "the decoded output cannot drive an active-low reset without an inverter"
        verdict.reset_mode, verdict.reset_state = "direct", cycle
    elif resets[0].synchronous:
        if not verdict.synchronous:
            return "a synchronous clear needs every counter clocked by CLK"
        verdict.reset_mode, verdict.reset_state = "sync", cycle - 1
    else:
        verdict.reset_mode, verdict.reset_state = "async", cycle
    return ""


def _settle_ns(chain: _Chain, supply: float) -> float | None:
    """Latest typical time after the counting edge at which a used output settles."""
    arrival: dict[tuple[int, int], float] = {}
    start: list[float] = []
    worst = 0.0
    for i, e in enumerate(chain.elements):
        t0 = 0.0 if e.source is None else arrival.get(e.source, 0.0)
        start.append(t0)
        clock_q = e.kind.part.delay_ns("clock_to_q", supply) or 0.0
        stage = e.kind.part.delay_ns("stage", supply)
        for k in sorted(e.kind.visible):
            ripple = (k - 1) * stage if (stage and not e.kind.synchronous and e.kind.mode != "johnson") else 0.0
            arrival[(i, k)] = t0 + clock_q + ripple
    for src in chain.sources:
        worst = max(worst, arrival.get((src.element, src.stage), 0.0))
    return worst


# ---------------------------------------------------------------- allocation

def allocate(spec, stock: Bin, catalog: Catalog, *, decoded_carry: bool = False) -> CounterPlan:
    """Choose counter chips and stages for the spec's cycle from what is on hand.

    ``decoded_carry``: also build synchronous cascades of 4520 / 4518 units whose
    ENABLE a gate decodes from the units below (a decode the mapper must then place:
    the glitch fix's synchronous-counter remedy asks for it)."""
    cycle = int(spec.cycle)
    if cycle == 1:
        return CounterPlan((), (), 1, (0,), frozenset(), "rising", True, None,
                           notes=("a cycle of 1 tick needs no counter: every signal is constant",))
    n = bits_for(cycle)
    if n > MAX_VARIABLES:
        raise SpecError(f"expected a cycle of at most {1 << MAX_VARIABLES} ticks, got {cycle} "
                        f"({n} counter stages to decode)", file=spec.path,
                        hint="split the sequence, or lower the clock and use fewer ticks")
    supply = float(spec.supply)
    frequency = _frequency(spec)
    best, rejected = _search(spec, _kinds(stock, catalog), supply, frequency, decoded_carry)
    if best is None:
        raise _shortage(spec, stock, catalog, rejected, supply, frequency)
    return _plan_of(best, spec, stock, catalog, supply, frequency)


def _frequency(spec) -> float | None:
    return spec.clock.frequency_hz


def _search(spec, kinds: list[_Kind], supply: float, frequency: float | None, decoded: bool = False):
    """The best chain by the selection rule, and the verdicts that failed."""
    cycle = spec.cycle
    n = bits_for(cycle)
    rejected: list[_Verdict] = []
    for max_chips in range(1, MAX_CHIPS + 1):
        chains = _binary_chains(kinds, n, max_chips, decoded) + _bcd_chains(kinds, cycle, max_chips, decoded)
        if max_chips == 1:
            chains += _johnson_chains(kinds, cycle)
        verdicts = [_assess(c, spec, supply, frequency) for c in chains if c.chips() == max_chips]
        for verdict in sorted(verdicts, key=_Verdict.key):
            if verdict.ok:
                _validate(verdict, spec)
            if verdict.ok:
                return verdict, rejected
            rejected.append(verdict)
    return None, rejected


# ---------------------------------------------------------------- shortage messages

def _binary_stage_total(stock: Bin, catalog: Catalog) -> tuple[int, str]:
    total, parts = 0, []
    for kind in _kinds(stock, catalog):
        if kind.mode == "binary":
            units = kind.count * len(kind.units)
            total += units * kind.width
            parts.append(f"{kind.count} x {kind.part.type}")
    return total, ", ".join(parts)


def _shortage(spec, stock: Bin, catalog: Catalog, rejected: list[_Verdict], supply: float,
              frequency: float | None) -> ShortError:
    cycle, n = spec.cycle, bits_for(spec.cycle)
    fixes = _fixes(spec, stock, catalog, supply, frequency)
    fix = f"add {_or_list([_article(p) for p in fixes])}" if fixes else \
        "no single counter from the catalog fixes this at this supply and clock"
    kinds = _kinds(stock, catalog)
    if not kinds:
        return ShortError(f"the cycle of {cycle} ticks needs {n} binary counter stages and the bin "
                          "has no counter chip", file=stock.path, hint=fix)
    reasons = {v.kind for v in rejected}
    if rejected and reasons == {"fmax"}:
        return ShortError(f"the clock is too fast for the bin's counters: "
                          f"{min(rejected, key=_Verdict.key).reason}", file=stock.path, hint=fix)
    total, listing = _binary_stage_total(stock, catalog)
    unchainable = _unchainable(kinds, n)
    if total >= n and unchainable and not rejected:
        return ShortError(f"the cycle of {cycle} ticks needs {n} binary stages; the bin's binary counters "
                          f"have {total} ({listing}) but cannot be chained: {unchainable}",
                          file=stock.path, hint=fix)
    if not rejected or total < n:
        short = max(n - total, 1)
        have = f"{total} ({listing})" if listing else "none"
        decoded = [f"the {k.part.type} counts at most {k.modulus} states" for k in kinds
                   if k.mode in ("johnson", "bcd") and k.modulus < cycle]
        also = f"; {', '.join(decoded)}" if decoded and not rejected else ""
        return ShortError(f"the cycle of {cycle} ticks needs {n} binary stages; the bin's binary "
                          f"counters have {have}: {short} short{also}", file=stock.path, hint=fix)
    worst = min(rejected, key=_Verdict.key)
    return ShortError(f"the bin's counters cannot count a cycle of {cycle} ticks: {worst.reason}",
                      file=stock.path, hint=fix)


def _unchainable(kinds: list[_Kind], n: int) -> str:
    """Why the bin's short binary counters cannot follow one another ('' if they can)."""
    short = [k for k in kinds if k.mode == "binary" and k.width < n]
    stuck = [k.part.type for k in short if k.clocking("falling") is None and not _carries(k)]
    carry = sorted({k.part.type for k in short if k.clocking("falling") is None and _carries(k)})
    if carry and len(stuck) + len(carry) == len(short):
        return (f"the {_or_list(carry)} counts only on a rising clock edge; a synchronous carry "
                "cascade needs enough of them on one clock edge")
    if not stuck or len(stuck) < len(short):
        return ""
    names = _or_list(sorted(set(stuck)))
    return (f"the {names} counts only on a rising clock edge and has no falling-edge enable, so it "
            "cannot be clocked from another counter's stage and has no carry output for a "
            "synchronous cascade")


def _fixes(spec, stock: Bin, catalog: Catalog, supply: float, frequency: float | None,
           limit: int = 3) -> list[str]:
    """Catalog counters that, one chip added to the bin, make the allocation work.

    Fewest chips in the result first, then parts of the bin's own family.  Parts
    of a family with TTL-level inputs are not offered: their twins with CMOS
    inputs count the same, and nothing in a plan drives TTL levels.
    """
    families = [catalog.parts[p].family for p in stock.parts]
    usual = max(set(families), key=families.count) if families else ""
    options = []
    for part_type, part in sorted(catalog.parts.items()):
        if not part.units_of("counter") or not part.suits(supply) or catalog.family_of(part).ttl_inputs:
            continue
        trial = replace(stock, parts={**stock.parts, part_type: stock.parts.get(part_type, 0) + 1})
        best, _ = _search(spec, _kinds(trial, catalog), supply, frequency)
        if best is not None and part_type in {e.kind.part.type for e in best.chain.elements}:
            options.append(((best.chain.chips(), part.family != usual, part_type), part_type))
    return [p for _, p in sorted(options)[:limit]]


# ---------------------------------------------------------------- the plan

def _plan_of(verdict: _Verdict, spec, stock: Bin, catalog: Catalog, supply: float,
             frequency: float | None) -> CounterPlan:
    chain, cycle = verdict.chain, spec.cycle
    refs = _refs(chain)
    prefix = len(set(refs)) > 1
    vars_ = []
    for index, src in enumerate(chain.sources):
        e = chain.elements[src.element]
        pin = e.kind.outputs(e.slot)[src.stage]
        name = e.kind.part.pins[pin]
        vars_.append(CounterVar(index, f"{refs[src.element]}.{name}" if prefix else name,
                                src.element, _unit_id(e), pin, name, src.weight))
    state_of_tick = tuple(verdict.held)
    if isinstance(verdict.held, range):
        held = verdict.held
        unreachable = frozenset(range(cycle, 1 << len(vars_)))
    else:
        held = set(state_of_tick)
        unreachable = frozenset(set(range(1 << len(vars_))) - held)
    reset = _reset_decode(verdict, chain, vars_, refs, held, unreachable, stock, catalog, supply) \
        if verdict.reset_mode != "none" else None
    chips = _chips(chain, vars_, refs, reset, prefix)
    plan = CounterPlan(tuple(chips), tuple(vars_), cycle, state_of_tick, unreachable, verdict.edge,
                       verdict.synchronous, reset, settle_ns=verdict.settle_ns,
                       passing=_passing(chain, verdict, reset.transient if reset else None),
                       transient_states=1 if verdict.reset_mode in ("async", "direct") else 0,
                       carries=_carry_decodes(chain, state_of_tick, unreachable, cycle))
    notes, warnings = _explain(plan, verdict, frequency)
    return replace(plan, warnings=(*verdict.fmax_notes, *warnings), notes=(*(c.how for c in chips), *notes))


def _refs(chain: _Chain) -> list[str]:
    """Ref of each element: U1, U2 ... in order; the halves of a dual counter share one."""
    refs, chip_of = [], {}
    for e in chain.elements:
        key = (e.kind.part.type, e.slot // len(e.kind.units))
        if key not in chip_of:
            chip_of[key] = f"U{len(chip_of) + 1}"
        refs.append(chip_of[key])
    return refs


def _unit_id(e: _Element) -> str:
    return e.kind.units[e.slot % len(e.kind.units)].id


def _chips(chain: _Chain, vars_: list[CounterVar], refs: list[str], reset: ResetDecode | None,
           prefix: bool) -> list[CounterChip]:
    used: dict[int, set[int]] = {i: set() for i in range(len(chain.elements))}
    for src in chain.sources:
        used[src.element].add(src.stage)
    if reset is not None and reset.direct:
        used[0].add(reset.state)
    net_of = {(src.element, src.stage): vars_[i].net for i, src in enumerate(chain.sources)}
    chips = []
    for i, e in enumerate(chain.elements):
        unit = _unit(e)
        part = e.kind.part
        ties = {int(p): str(v) for p, v in part.ties.items()}
        ties.update(unit.ties)
        if e.source is None:
            clock_net, edge = "CLK", _element_edge(e)
        else:
            clock_net, edge = net_of[e.source], "falling"
            used[e.source[0]].add(e.source[1])
        enable = unit.enable
        enable_pin = enable.pin if enable else None
        count_enable: tuple[int, ...] = ()
        if e.via == "decoded":
            clock_pin = unit.clock.pin
            enable_net = _carry_placeholder(i)
            ties.pop(enable_pin, None)
        elif e.via == "carry":
            count_enable = unit.count_enable
            clock_pin = unit.clock.pin
            enable_pin, enable_net = count_enable[0], _carry_net(chain, e, refs, prefix)
            for pin in count_enable:
                ties.pop(pin, None)
        elif e.via == "enable":
            clock_pin = enable_pin
            ties[unit.clock.pin] = _clock_hold(unit)
            enable_net = clock_net
        else:
            clock_pin = unit.clock.pin
            enable_net = None
            if enable:
                enable_net = "VDD" if enable.active == "high" else "VSS"
                ties[enable_pin] = enable_net
        reset_pin = unit.reset.pin if unit.reset else None
        if reset is not None:
            reset_net = reset.net
        else:
            reset_net = "VSS" if unit.reset is None or unit.reset.active == "high" else "VDD"
            if reset_pin is not None:
                ties[reset_pin] = reset_net
        for pin in (clock_pin, enable_pin if e.via in ("enable", "decoded") else None,
                    reset_pin if reset else None):
            ties.pop(pin, None)
        chip = CounterChip(refs[i], part.type, _unit_id(e), clock_net, clock_pin, edge, reset_pin,
                           reset_net, enable_pin, enable_net, ties, tuple(sorted(used[i])), e.divisor,
                           count_enable_pins=count_enable[1:])
        chips.append(chip)
    for i, e in enumerate(chain.elements):
        if e.carry_from is not None and e.via == "carry":
            chips[e.carry_from] = replace(chips[e.carry_from], carry_net=chips[i].enable_net)
    return [replace(chip, how=_how(chip, e.kind.part, e, _unit(e))) for chip, e in zip(chips, chain.elements)]


def _carry_placeholder(index: int) -> str:
    return f"_carry{index + 1}"


def _carry_decodes(chain: _Chain, states: tuple[int, ...], unreachable: frozenset[int],
                   cycle: int) -> tuple[CarryDecode, ...]:
    """One decoded enable per 'decoded' unit: high at the ticks t with t + 1 a multiple of
    the unit's divisor (every unit below at its last count, so the next edge carries)."""
    out = []
    for i, e in enumerate(chain.elements):
        if e.via != "decoded":
            continue
        on = frozenset(states[t] for t in range(cycle) if (t + 1) % e.divisor == 0)
        name = _carry_placeholder(i)
        out.append(CarryDecode(name, on, frozenset(unreachable), name, i))
    return tuple(out)


def carry_nets(counter_plan: CounterPlan, network) -> dict[str, str]:
    """Each decoded enable's name in the counter plan -> the board net the mapping gave it."""
    out = {}
    for carry in counter_plan.carries:
        decoded = network.signals.get(carry.name)
        if decoded is not None:
            out[carry.net] = str(decoded.net)
    return out


def _carry_net(chain: _Chain, e: _Element, refs: list[str], prefix: bool) -> str:
    """The net from the earlier unit's TC pin to this unit's count enables."""
    source = chain.elements[e.carry_from]          # type: ignore[index]
    pin = _unit(source).carry_out
    name = source.kind.part.pins.get(pin, "TC")
    return f"{refs[e.carry_from]}.{name}" if prefix else name     # type: ignore[index]


def _how(chip: CounterChip, part: Part, e: _Element, counter: Unit) -> str:
    name = part.pins
    unit = f" unit {chip.unit}" if len(e.kind.units) > 1 else ""
    text = (f"{chip.ref} {part.type}{unit} counts on the {chip.clock_edge} edge of {chip.clock_net} "
            f"at {name.get(chip.clock_pin, chip.clock_pin)} (pin {chip.clock_pin})")
    if e.via == "decoded":
        text += (f" while its {name.get(chip.enable_pin)} (pin {chip.enable_pin}) is high: a gate decodes "
                 "every unit below at its last count (a synchronous cascade, every output changes on "
                 "the same clock edge)")
    elif e.via == "carry":
        pins = ", ".join(f"{name.get(p, p)} (pin {p})" for p in (chip.enable_pin, *chip.count_enable_pins))
        text += (f" while {chip.enable_net} is high ({pins} on it): a synchronous cascade, every "
                 "output of the cascade changes on the same clock edge")
    elif e.via == "enable":
        clock_pin = counter.clock.pin
        level = "low" if chip.ties.get(clock_pin) == "VSS" else "high"
        text += f", {name.get(clock_pin, clock_pin)} (pin {clock_pin}) held {level}"
    elif chip.enable_pin is not None:
        text += f", {name.get(chip.enable_pin)} (pin {chip.enable_pin}) tied {chip.enable_net}"
    stages = [name.get(e.kind.outputs(e.slot)[k], f"Q{k}") for k in chip.stages]
    if chip.carry_net:
        text += f"; its {chip.carry_net.split('.')[-1]} drives {chip.carry_net}"
    if stages:
        text += "; uses " + ", ".join(stages)
    if e.divisor > 1:
        text += f" (one count every {e.divisor} ticks)"
    return text


def _reset_decode(verdict: _Verdict, chain: _Chain, vars_: list[CounterVar], refs: list[str],
                  held: set[int], unreachable: frozenset[int], stock: Bin, catalog: Catalog,
                  supply: float) -> ResetDecode:
    first = chain.elements[0]
    active = _unit(first).reset.active
    state = verdict.reset_state
    if verdict.reset_mode == "direct":
        pin = first.kind.outputs(first.slot)[state]
        net = first.kind.part.pins[pin]
        t_reset = _reset_times(chain, supply)
        caution = (f"asynchronous reset: {net} (pin {pin}) drives RESET, so state {state} lasts only until "
                   f"the reset propagates, {_duration(t_reset, supply)}; the reset pulse is as short, "
                   f"and {net} shows a pulse of that width")
        return ResetDecode(RESET_NAME, frozenset(), frozenset(), state, "high", False, net, True,
                           (refs[0], pin), t_reset, caution, transient=0)
    minterm = _state_function(chain)(state) if verdict.reset_mode == "async" else verdict.held[state]
    off = set(held) - {minterm}
    warnings = []
    if verdict.reset_mode == "async":
        passing = _passing(chain, verdict, minterm)
        hazard = _reset_hazard(passing, minterm, state, len(verdict.held))
        if hazard:
            warnings.append(hazard)     # unavoidable: narrowing the decode would not cure it
        else:                           # the reset must not fire while the count passes
            off |= {m for t, shown in passing.items() if t < len(verdict.held) - 1 for m in shown}
    dc = frozenset(m for m in unreachable if m not in off and m != minterm)
    net = "RST" if active == "high" else "RST_n"
    if verdict.reset_mode == "sync":
        caution = (f"synchronous clear: state {state} is decoded into {net} and the next counting edge "
                   f"clears the count, so no transient state appears")
        pulse = None
    else:
        gate = _gate_estimate(stock, catalog, supply, active, bin(state).count("1"))
        t_reset = _reset_times(chain, supply)
        typ = None if t_reset[0] is None else t_reset[0] + gate[0]
        worst = None if t_reset[1] is None else t_reset[1] + gate[1]
        pulse = (typ, worst)
        caution = (f"asynchronous reset: on reaching state {state} the decode drives {net} "
                   f"{active}; state {state} lasts only until the reset has propagated, "
                   f"{_duration(pulse, supply)} (reset to output {_ns(t_reset[0])} ns typ plus the "
                   f"decode, {gate[2]}); the reset pulse is as short and ends as soon as the first "
                   "decoded stage clears")
    return ResetDecode(RESET_NAME, frozenset({minterm}), dc, state, active,
                       verdict.reset_mode == "sync", net, pulse_ns=pulse, caution=caution,
                       warnings=warnings, transient=None if verdict.reset_mode == "sync" else minterm)


def _reset_times(chain: _Chain, supply: float) -> tuple[float | None, float | None]:
    """Fastest typical and slowest maximum reset-to-output delay of the chain's units."""
    typs = [e.kind.part.delay_ns("reset", supply, "typ") for e in chain.elements]
    maxes = [e.kind.part.delay_ns("reset", supply, "max") for e in chain.elements]
    typs = [t for t in typs if t is not None]
    maxes = [t for t in maxes if t is not None]
    return (min(typs) if typs else None, max(maxes) if maxes else None)


def _gate_estimate(stock: Bin, catalog: Catalog, supply: float, active: str,
                   literals: int) -> tuple[float, float, str]:
    """Delay of the reset decode, typical and max: a tree of the bin's widest AND
    (NAND for an active-low reset) over ``literals`` inputs, plus an inverter level
    when only the other kind is on hand."""
    want = "and" if active == "high" else "nand"
    best = None
    for part_type in stock.parts:
        part = catalog.parts[part_type]
        for unit in part.units_of("gate"):
            ops = {unit.op} | ({unit.also.op} if unit.also else set())
            typ = part.delay_ns("tpd", supply, "typ")
            if not ops & {"and", "nand"} or typ is None:
                continue
            worst = part.delay_ns("tpd", supply, "max") or typ
            width = max(len(unit.inputs), 2)
            levels = max(1, math.ceil(math.log(max(literals, 1), width) - 1e-9)) + (want not in ops)
            entry = (typ * levels, worst * levels,
                     f"about {levels} gate delay{'s' if levels > 1 else ''} of a {part_type}")
            if best is None or entry[0] < best[0]:
                best = entry
    return best or (0.0, 0.0, "gate delays not known: no AND or NAND gate in the bin")


def _between(a: int, b: int, before: list[set[int]] | None, nvars: int) -> set[int]:
    """States shown for an instant while the outputs go from ``a`` to ``b``.

    ``before[v]``: outputs that always change before output v (None: any order).
    """
    changed = [i for i in range(nvars) if (a ^ b) >> i & 1]
    if len(changed) > 12:
        return set()
    shown = set()
    for mask in range(1, (1 << len(changed)) - 1):
        flipped = {i for j, i in enumerate(changed) if mask >> j & 1}
        if before is not None and any(before[v] & set(changed) - flipped for v in flipped):
            continue            # an output changed before one it must follow
        state = a
        for i in flipped:
            state ^= 1 << i
        shown.add(state)
    return shown


def _total_order(before: list[set[int]]) -> bool:
    n = len(before)
    return all(u == v or u in before[v] or v in before[u] for u in range(n) for v in range(n))


def _passing(chain: _Chain, verdict: _Verdict, transient: int | None) -> dict[int, frozenset[int]]:
    """Per tick t, the never-held states shown between tick t and the next.

    Which output may change before which follows the wiring: a ripple unit
    changes its stages from the lowest up; a unit clocked from a stage
    changes after that stage (and, for a synchronous source, after all of
    that unit's outputs); outputs of one synchronous unit, and units clocked
    together from CLK, may change in any order; a reset clears them in any
    order.  A plain ripple chain only passes through smaller counts, which
    are held states: then nothing is returned.  The last entry (t = cycle-1)
    includes the state an asynchronous reset shows for a moment.
    """
    before = _precedence(chain)
    nvars = len(chain.sources)
    held = verdict.held
    cycle = len(held)
    ordered = _total_order(before)
    if ordered and transient is None and verdict.reset_mode != "sync":
        return {}
    held_set = held if isinstance(held, range) else set(held)
    found: dict[int, frozenset[int]] = {}
    for t in (range(cycle - 1, cycle) if ordered else range(cycle)):
        a, b = held[t], held[(t + 1) % cycle]
        if t < cycle - 1:
            shown = set() if ordered else _between(a, b, before, nvars)
        elif transient is not None:
            shown = ({transient} | _between(transient, b, None, nvars)
                     | (set() if ordered else _between(a, transient, before, nvars)))
        else:
            clocked_clear = verdict.reset_mode == "sync"
            shown = set() if ordered and not clocked_clear else \
                _between(a, b, None if clocked_clear else before, nvars)
        shown = {m for m in shown if m not in held_set}
        if shown:
            found[t] = frozenset(shown)
    return found


def _reset_hazard(passing: dict[int, frozenset[int]], reset_minterm: int, state: int,
                  cycle: int) -> str:
    """A counting step that shows the reset state for an instant would fire an asynchronous reset."""
    for t, shown in sorted(passing.items()):
        if t < cycle - 1 and reset_minterm in shown:
            return (f"the count passing from {t} to {t + 1} can show state {state} for an instant "
                    "(outputs that change together) and fire the asynchronous reset; a counter "
                    "with a synchronous clear avoids this")
    return ""


def _precedence(chain: _Chain) -> list[set[int]]:
    """For each variable, the variables that always change before it on one count."""
    def ancestors(element: int) -> list[tuple[int, int]]:
        found, e = [], chain.elements[element]
        while e.source is not None:
            found.append(e.source)
            e = chain.elements[e.source[0]]
        return found

    before: list[set[int]] = []
    for v, sv in enumerate(chain.sources):
        ev = chain.elements[sv.element]
        ripple = not ev.kind.synchronous and ev.kind.mode != "johnson"
        lineage = ancestors(sv.element)
        first: set[int] = set()
        for u, su in enumerate(chain.sources):
            if su.element == sv.element:
                if ripple and su.stage < sv.stage:
                    first.add(u)
                continue
            for p, k in lineage:
                pe = chain.elements[p]
                if su.element == p and (pe.kind.synchronous or su.stage <= k):
                    first.add(u)
        before.append(first)
    return before


def _explain(plan: CounterPlan, verdict: _Verdict, frequency: float | None) -> tuple[list[str], list[str]]:
    """Notes and warnings a person should read beside the counter choice."""
    cycle = plan.cycle
    notes: list[str] = []
    warnings: list[str] = []
    if plan.reset is not None:
        notes.append(plan.reset.caution)
        warnings += plan.reset.warnings
        if plan.reset.direct:
            notes.append(f"cycle {cycle}: {plan.reset.net} resets the count to 0")
    elif verdict.chain.style == "johnson":
        notes.append(f"cycle {cycle}: the decoded counter wraps by itself")
    else:
        notes.append(f"cycle {cycle}: the used stages wrap by themselves, no reset needed")
    never = len(plan.unreachable)
    if never:
        notes.append(f"{never} of the {1 << plan.nvars} output states are never held: don't-cares")
    if not plan.synchronous:
        notes.append("ripple counting: the outputs change one after another after each "
                     f"counting edge (all settled after about {_ns(plan.settle_ns)} ns typ)")
    if frequency and plan.settle_ns:
        period_ns = 1e9 / frequency
        if plan.settle_ns > period_ns:
            warnings.append(f"the counter outputs settle about {plan.settle_ns:.0f} ns after the "
                            f"counting edge, longer than the {period_ns:.0f} ns clock period")
    if any(e.kind.mode == "binary" and not set(range(1, e.kind.width + 1)) <= e.kind.visible
           for e in verdict.chain.elements):
        missing = _missing_stages(verdict.chain)
        notes.append(f"stages not brought out ({missing}) are not used by the decode")
    return notes, warnings
