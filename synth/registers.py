"""Registered outputs: a signal decoded one tick early and clocked into a D flip-flop.

Interface: ``flipflop_options(stock, catalog) -> list[FlipFlopOption]`` (the bin's
D flip-flop parts, best first), ``pulse_per_tick_ok(spec, name)`` (whether a
pulse per tick may stand for the signal's level),
``prepare_registering(design, signals) -> Registering`` (the early spec and the
counter plan to derive and map the decode from, the flip-flop part, the clock
inverter) and ``with_flipflops(network, registering, catalog) -> Network`` (the
mapped early decode with the flip-flops and the inverter added); ``glitchfix``
maps, packs and checks the result like any other remedy.

Why it works: the flip-flop's output at tick t is its D input sampled at the
counting edge that starts tick t, so a D decoded one tick early (its asserted
ticks are the signal's, each one tick sooner) puts the spec's level on the
output for the whole of tick t, changing once per edge, whatever the counter
outputs do on the way between two counts.

The flip-flop must be clocked by the same edge that moves the counter, and
before the counter moves (hold): where the bin's flip-flops count on the
other edge of CLK than the counter, the counter's clock is taken through an
inverter from the bin, so the flip-flops sample on CLK itself and the counter
advances one inverter delay later (D cannot change before the flip-flop's own
edge).  The plan's tick edge becomes the flip-flops' edge of CLK.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterable
from dataclasses import dataclass

from .counter import CounterPlan
from .errors import ShortError
from .inventory import Bin, Catalog
from .model import Design
from .netlist import CLOCK_NET, delivered_sets
from .packing import flipflop_controls
from .network import RAILS, Gate, Network, SignalOut
from .spec import Spec, windows_of

__all__ = ["FlipFlopOption", "Registering", "flipflop_options", "pulse_per_tick_ok",
           "prepare_registering", "with_flipflops", "COUNTER_CLOCK_NET"]

COUNTER_CLOCK_NET = "CLK_n"
"""The inverted clock the counters take when the flip-flops count on CLK's other edge."""


@dataclass(frozen=True)
class FlipFlopOption:
    """A D flip-flop part the bin has: units per chip, chips on hand, clocking edge."""

    part: str
    units: int
    chips: int
    edge: str
    controls: tuple[str, ...]
    has_qn: bool = False


@dataclass(frozen=True)
class Registering:
    """What registering changes: the spec the decode is derived from (registered
    signals one tick early), the counter plan (its clock inverted, or as it was),
    the flip-flop part, and the part that inverts the counters' clock ('' if none)."""

    spec: Spec
    counter: CounterPlan
    option: FlipFlopOption
    clock_inverter: tuple[str, str, int] | None     # (part, op, inputs)
    signals: tuple[str, ...]
    polarity: dict[str, str]                        # each signal's delivered level before


def flipflop_options(stock: Bin, catalog: Catalog) -> list[FlipFlopOption]:
    """Every D flip-flop part in the bin (usable at its supply), most units per chip first."""
    out = []
    for part_type in sorted(stock.parts):
        part = catalog.parts.get(part_type)
        units = [u for u in part.units if u.type == "flipflop"] if part is not None else []
        if not units or stock.count(part_type) <= 0:
            continue
        unit = units[0]
        out.append(FlipFlopOption(part_type, len(units), stock.count(part_type), unit.clock.edge,
                                  flipflop_controls(unit), unit.qn is not None))
    return out


def pulse_per_tick_ok(spec: Spec, name: str) -> bool:
    """Whether clock gating (one pulse per asserted tick) may stand for this signal:
    the spec says ``steady: false``, or says nothing and every window is one tick."""
    sig = spec.signals.get(name)
    if sig is None:
        return False
    if sig.steady is not None:
        return not sig.steady
    return all(b - a == 1 for a, b in sig.windows)


def _choose(options: list[FlipFlopOption], wanted: int, counter_edge: str) -> FlipFlopOption:
    """Fewest chips for the signals, then no clock inverter, then the part name."""
    fits = [o for o in options if o.units * o.chips >= wanted]
    if not fits:
        have = ", ".join(f"{o.chips} x {o.part} ({o.units * o.chips} flip-flops)" for o in options)
        raise ShortError(f"registering {wanted} signals needs {wanted} D flip-flops; the bin has {have}",
                         hint="add a 74HC174 (six flip-flops) or another 74HC74")
    return min(fits, key=lambda o: (-(-wanted // o.units), o.edge != counter_edge, o.part))


def _inverter_part(stock: Bin, catalog: Catalog, supply: float) -> tuple[str, str, int]:
    """The bin's fastest inverting unit for the counters' clock: an inverter, else a
    NAND or NOR with its inputs joined."""
    choices = []
    for part_type in sorted(stock.parts):
        part = catalog.parts.get(part_type)
        for unit in part.units if part is not None else ():
            if unit.type not in ("inverter", "gate") or unit.op not in ("not", "nand", "nor") \
                    or unit.also is not None:
                continue
            width = len(unit.inputs)
            delay = part.delay_ns("tpd", supply, "typ") or 1e9
            choices.append((unit.op != "not", delay, part_type, unit.op, width))
            break
    if not choices:
        raise ShortError("the flip-flops count on the other clock edge than the counter, and the bin has "
                         "no inverter (nor a NAND or NOR) to turn the counter's clock round",
                         hint="add a 74HC04 (or 4069)")
    _, _, part_type, op, width = min(choices)
    return part_type, op, width


def _counter_edge(counter: CounterPlan) -> str:
    """The edge of CLK the counter advances on."""
    return str(counter.edge)


def _invert_counter_clock(counter: CounterPlan, ff_edge: str) -> CounterPlan:
    """The counter plan with every unit that counts on CLK moved onto the inverted
    clock: it advances on the flip-flops' edge of CLK, one inverter delay later."""
    chips = []
    for chip in counter.chips:
        changes = {}
        if str(chip.clock_net) == CLOCK_NET:
            changes["clock_net"] = COUNTER_CLOCK_NET
        if chip.enable_net == CLOCK_NET:
            changes["enable_net"] = COUNTER_CLOCK_NET
        chips.append(dataclasses.replace(chip, **changes) if changes else chip)
    return dataclasses.replace(counter, chips=tuple(chips), edge=ff_edge)


def _early_spec(spec: Spec, delivered: dict[str, frozenset[int]], polarity: dict[str, str],
                signals: tuple[str, ...], either_way: bool = False) -> Spec:
    """The spec with each registered signal asserted one tick sooner (exactly the ticks the
    plan delivered, so its stretch and don't-care choices stay as they were); signals
    with a ``clear_of`` tie to one of them keep their delivered ticks too."""
    cycle = spec.cycle
    tied = set(signals)
    for name, sig in spec.signals.items():
        if set(sig.clear_of) & set(signals) or (name in signals and sig.clear_of):
            tied |= {name, *sig.clear_of}
    new = {}
    for name, sig in spec.signals.items():
        if name not in tied:
            new[name] = sig
            continue
        ticks = delivered[name]
        if name in signals:
            ticks = frozenset((t - 1) % cycle for t in ticks)
        level = polarity.get(name, sig.polarity)
        if name in signals and either_way:
            level = "free"       # the flip-flop's Q-bar gives the other level for nothing
        new[name] = dataclasses.replace(sig, high=ticks, dont_care=frozenset(), every=None,
                                        windows=windows_of(ticks, cycle), clear_of={}, stretch=0,
                                        polarity=level)
    return dataclasses.replace(spec, signals=new)


def _fresh(base: str, taken: set[str]) -> str:
    name, k = base, 2
    while name in taken:
        name, k = f"{base}_{k}", k + 1
    return name


def _with_flipflops(network: Network, signals: tuple[str, ...], option: FlipFlopOption,
                    clock: str, wanted: dict[str, str]) -> Network:
    """The decode's signal nets renamed to D nets, each signal now on a flip-flop's Q, or
    on its Q-bar where the early decode came out the other way up from ``wanted``."""
    gates = list(network.gates)
    outs = dict(network.signals)
    taken = {n for g in gates for n in (*g.inputs, *g.outputs)} | {s.net for s in outs.values()}
    driven = {n for g in gates for n in g.outputs if n}
    inactive = tuple("VDD" if c.endswith(":low") else "VSS" for c in option.controls)
    by_net: dict[str, list[str]] = {}
    for name in signals:
        by_net.setdefault(outs[name].net, []).append(name)
    for net, names in by_net.items():
        if net in RAILS:
            continue
        if net in driven:
            d = _fresh(f"{names[0]}_next", taken)
            q = net
            gates = [dataclasses.replace(g, inputs=tuple(d if n == net else n for n in g.inputs),
                                         outputs=tuple(d if n == net else n for n in g.outputs))
                     for g in gates]
            for other, sig in outs.items():
                if sig.net == net and other not in names:
                    outs[other] = SignalOut(d, sig.polarity)
        else:
            d, q = net, _fresh(names[0], taken)
        taken |= {d, q}
        level = outs[names[0]].polarity
        flip = option.has_qn and wanted.get(names[0], level) != level
        gates.append(Gate(_fresh(f"register_{names[0]}", {g.id for g in gates}), option.part, "flipflop",
                          (d, clock, *inactive), ("", q) if flip else (q,), enables_active=option.controls))
        if flip:
            level = "high" if level == "low" else "low"
        for name in names:
            outs[name] = SignalOut(q, level)
    return dataclasses.replace(network, gates=gates, signals=outs)


def prepare_registering(design: Design, signals: Iterable[str]) -> Registering:
    """The early spec and the counter plan for registering ``signals`` (see the module
    text).  Raises ``ShortError`` when the bin lacks the flip-flops or the clock inverter."""
    plan, spec, stock, catalog = design.plan, design.spec, design.stock, design.catalog
    names = tuple(sorted(s for s in signals if plan.signals[s].net not in RAILS))
    if not names:
        raise ShortError("no signal to register (each is constant)")
    options = flipflop_options(stock, catalog)
    if not options:
        raise ShortError(f"{', '.join(names)} must hold a steady level through every tick; that needs "
                         "a D flip-flop to register it and the bin has none",
                         hint="add a 74HC74 (or 74HC174, 4013, 40174)")
    counter = design.counter
    option = _choose(options, len(names), _counter_edge(counter))
    inverter = None
    if option.edge != _counter_edge(counter):
        inverter = _inverter_part(stock, catalog, plan.supply)
        counter = _invert_counter_clock(counter, option.edge)
    polarity = {n: s.polarity for n, s in plan.signals.items()}
    early = _early_spec(spec, delivered_sets(plan), polarity, names, option.has_qn)
    return Registering(early, counter, option, inverter, names, polarity)


def with_flipflops(network: Network, reg: Registering, catalog: Catalog) -> Network:
    """The mapped early decode with each registered signal moved onto a flip-flop's Q
    (D on the early decode, clocked by CLK) and, where needed, the counters' clock inverter."""
    network = _with_flipflops(network, reg.signals, reg.option, CLOCK_NET, reg.polarity)
    if reg.clock_inverter is None:
        return network
    part, op, width = reg.clock_inverter
    ids = {g.id for g in network.gates}
    return dataclasses.replace(network, gates=list(network.gates) + [
        Gate(_fresh("counter_clock_inv", ids), part, op, (CLOCK_NET,) * width,  # type: ignore[arg-type]
             (COUNTER_CLOCK_NET,), schmitt=bool(catalog.parts[part].thresholds))])
