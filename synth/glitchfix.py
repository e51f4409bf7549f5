"""Applying the glitch remedies (``plan --fix glitches``) and offering RC delays.

Interface:

- ``apply_fixes(design, fix, replanner) -> (Design, FixReport)``: with
  ``'glitches'`` in ``fix``, tries the remedies for every signal that the
  timing step reported glitches on and returns the design that keeps the
  cheapest one that removes them (the plan passes the tick-by-tick self-check
  again and is re-analysed).  Every remedy that changes the counter, the
  decode or the network asks ``replanner`` (the sequencer, ``synth.flow``) to
  run the stages again with that input changed, at the user's ``--exact`` and
  ``--effort``; nothing here calls the stages in its own order.  The
  ``model.FixReport`` always holds ``rc_offers`` and ``strobed`` (signal ->
  how it is gated with the clock), and ``timing_fixes`` when asked to fix:
  one record per glitching signal with ``glitches_before``,
  ``remedies_applied``, ``remedy`` (the last one, or ``note``), ``applied``,
  ``cost`` ({chips, gates} added), ``glitches_after`` (re-analysed),
  ``detail`` and ``tried`` (every remedy's outcome, "not applicable: why").
- ``rc_offers(design, widths=None) -> list[dict]``: an RC delay between two
  Schmitt stages (two spare inverting gates when the bin has no Schmitt part),
  sized with ``analog.rc_delay_design`` from the bin's passives and the
  catalog thresholds, for each race (coincident edges) and, once the fixes
  were tried, each glitching signal whose logic fix took a new chip or failed.
  Offered with values, spread and wiring; never applied (no ``--fix`` choice
  applies them: the netlist and the Verilog model hold no passives).
- ``strobe_network(network, signal, plan, stock, catalog, spec)``: the
  clock-gating rewrite on its own (raises ``NotApplicable`` with the reason).

The order the remedies are tried in, and why:

1. another decode choice (``decode_choice``): the ripple transient states of
   the glitching entries are handed to the decode as states passed on the way
   (``CounterPlan.passing``), so where they are don't-cares the decode is
   re-derived with them at the steady level; free, kept when it adds no chip;
2. a synchronous counter from the bin (``synchronous_counter``): the counter
   re-allocated without the bin's ripple counters, the decode re-derived;
3. gating with the clock's still half (``clock_gating``): the signal is ANDed
   (in its polarity's sense) with the clock phase in which the counter does
   not move, using a spare input of the signal's last gate, else a spare gate
   (a new chip from the bin if need be, costed), an inverter on the clock when
   the phase is the wrong way up (the fastest on hand: it must switch before
   the counter's first output does).  Never for a switch select, which would
   then throw over twice a tick.
   This changes the waveform inside a tick: the signal is asserted only in the
   second half of each asserted tick (a window of n ticks becomes n pulses).
   The tick-sampled check samples just before each counting edge, where the
   clock is in its still half (``netlist.sampled_clock_levels``), and the
   Verilog export carries the gate like any other, so both agree with it;
4. otherwise a note: a level-sensitive consumer slower than the pulse will not
   see it.

2 and 3 are compared as whole candidates (3 alone, or 2 then 3 for what
remains): fewest glitches left, then fewest chips, then fewest gates.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Iterable

from .analog import plain_input_thresholds, rc_delay_design, thresholds_at
from .counter import CounterPlan, allocate
from .errors import ShortError, SynthError
from .findings import CoincidentEdge, Cost, RcOffer, RcValues, Registered, Strobed, TimingFix, TriedRemedy
from .inventory import Bin, Catalog, Part, Unit
from .model import Design, FixReport, Replanner, Spec
from .netlist import Plan
from .network import RAILS, Gate, Network, SignalOut
from .packing import unit_logic_pins
from .registers import COUNTER_CLOCK_NET, Registering, prepare_registering, pulse_per_tick_ok, with_flipflops
from .timing import (counter_models, entry_sequence, gate_names_of, registered_signals, spare_input,
                     spare_input_place, synchronous_counter_parts, var_roles)
from .units import format_si

__all__ = ["apply_fixes", "rc_offers", "strobe_network", "FIXES", "NotApplicable"]

FIXES = ("glitches",)
_CONTROLLING = {"and": False, "nand": False, "or": True, "nor": True}
"""op -> the input level that decides the output (AND/NAND: low, OR/NOR: high)."""
_KEEPS_LEVEL = {"and": True, "or": True, "nand": False, "nor": False}
"""op -> whether the output follows the other input (non-inverting) in the still half."""


class NotApplicable(Exception):
    """A remedy this plan and bin cannot use; the message says why (``per_signal``: why,
    signal by signal, when the reasons differ)."""

    def __init__(self, message: str, per_signal: dict[str, str] | None = None) -> None:
        super().__init__(message)
        self.per_signal = per_signal or {}


# ---------------------------------------------------------------- the fixing loop

def apply_fixes(design: Design, fix: Iterable[str], replanner: Replanner) -> tuple[Design, FixReport]:
    """The design with the glitch remedies applied, and what they did (see the module text)."""
    fix = set(fix)
    widths = _widest(design.plan.glitches)
    if "glitches" in fix:
        design, fixes = _fix_glitches(design, replanner)
    else:
        design, fixes = _steady_signals(design, replanner)
    plan = dataclasses.replace(design.plan, timing_fixes=fixes)
    design = dataclasses.replace(design, plan=plan)
    return design, FixReport(dict(plan.strobed), tuple(rc_offers(design, widths)),
                             tuple(fixes) if fixes is not None else None, dict(plan.strobe_skipped),
                             dict(plan.registered))


def _steady_signals(design: Design, replanner: Replanner) -> tuple[Design, list[TimingFix] | None]:
    """Signals the spec marks ``steady: true`` that glitch are registered without ``--fix``;
    a bin that cannot register them is short (exit 3), never a silent glitch."""
    spec = design.spec
    wanted = sorted(s for s in _by_signal(design.plan.glitches)
                    if _steady(spec, s))
    if not wanted:
        return design, design.plan.timing_fixes
    before = _by_signal(design.plan.glitches)
    try:
        new = _register(design, wanted, replanner)
    except NotApplicable as exc:
        raise ShortError(f"{', '.join(wanted)} must hold a steady level (steady: true) but glitch; "
                         f"registering failed: {exc}", hint="add a 74HC74 or 74HC174 (4013 or 40174 "
                         "at 4000B supplies), or drop steady: true") from None
    after = _by_signal(new.plan.glitches)
    return new, [
        TimingFix(s, tuple(before[s]), (), tuple(after.get(s, [])), ("registered",), "registered", True,
                  Cost(_chips(new) - _chips(design), _gates(new) - _gates(design)),
                  new.plan.registered[s].detail,
                  cost_shared="the decode was re-derived for the early signals: its change counts for "
                              "every signal",
                  asked_by="steady: true")
        for s in wanted]


def _steady(spec: Spec, signal: str) -> bool:
    """Whether the spec says ``signal`` must hold its level through every tick."""
    sig = spec.signals.get(signal)
    return sig is not None and bool(sig.steady)


def _widest(glitch_records) -> dict[str, float]:
    """Signal -> its widest glitch (worst-case width where the max corner shows it)."""
    out: dict[str, float] = {}
    for g in glitch_records:
        out[g.signal] = max(out.get(g.signal, 0.0), float(g.widest_ns))
    return out


def _fix_glitches(design: Design, replanner: Replanner) -> tuple[Design, list[TimingFix]]:
    before = _by_signal(design.plan.glitches)
    records = {s: _Attempts(s, tuple(ticks)) for s, ticks in before.items()}
    if not before:
        return design, []
    current, fixed_by = design, {}
    choice = _attempt(records, "decode_choice", lambda: _decode_choice(current, replanner), current)
    if choice is not None and _chips(choice) <= _chips(current) and \
            _count(choice) < _count(current):
        _credit(fixed_by, current, choice, "decode_choice")
        current = choice
    elif choice is not None:
        _note_all(records, "decode_choice", "re-derived, but it removed no glitch without a new chip")
    remaining = sorted(_by_signal(current.plan.glitches))
    if remaining:
        best = _best_plan(records, current, remaining, replanner)
        if best is not None and _key(best[-1][1], current.spec) < _key(current, current.spec):
            previous = current
            for name, step in best:
                _credit(fixed_by, previous, step, name, only_strobed=name == "clock_gating")
                previous = step
            current = best[-1][1]
    fixes = _finish_records(records, fixed_by, design, current)
    unsteady = sorted(s for s in _by_signal(current.plan.glitches)
                      if _steady(current.spec, s))
    if unsteady:
        tried = "; ".join(f"{t.remedy.replace('_', ' ')}: {t.result}"
                          for t in records[unsteady[0]].tried if "not applicable" in t.result)
        raise ShortError(f"{', '.join(unsteady)} must hold a steady level (steady: true) but still "
                         f"glitch after every remedy the bin allows ({tried or 'none removed them'})",
                         hint="add a 74HC74 or 74HC174 (4013 or 40174 at 4000B supplies), or drop "
                              "steady: true")
    return current, fixes


def _key(design: Design, spec: Spec) -> tuple:
    """How good a fixed design is: glitches left on signals that must hold their level
    (no pulse per tick acceptable), glitches left, chips, gates."""
    left = _by_signal(design.plan.glitches)
    strobed = design.plan.strobed
    must_hold = sum(len(t) for s, t in left.items() if not pulse_per_tick_ok(spec, s))
    chopped = sum(1 for s in strobed if not pulse_per_tick_ok(spec, s))
    return (must_hold + chopped, _count(design), _chips(design), _gates(design))


def _best_plan(records: dict, current: Design, remaining: list[str], replanner: Replanner):
    """The remedies compared per signal: a signal for which a pulse per tick is acceptable
    (``registers.pulse_per_tick_ok``) may be gated with the clock; every other one is
    registered in a flip-flop of the bin; a synchronous counter is tried first where
    the bin has one.  Returns the cheapest sequence of (remedy, design) steps."""
    spec = current.spec
    gateable = [s for s in remaining if pulse_per_tick_ok(spec, s)]
    for signal in remaining:
        if signal not in gateable:
            records[signal].tried.append(TriedRemedy("clock_gating", (
                f"not applicable: {signal} has windows of several ticks; gated with the clock it would "
                "pulse once per tick instead of holding its level (say steady: false to allow it)")))
    candidates: list[list[tuple[str, Design]]] = []

    def extend(base: Design, steps: list, left: list[str]) -> None:
        steps = list(steps)
        hold = [s for s in left if s not in gateable]
        gate = [s for s in left if s in gateable]
        if hold:
            reg = _attempt(records, "registered", lambda: _register(base, hold, replanner), base)
            if reg is not None:
                steps.append(("registered", reg))
                base = reg
                gate = [s for s in gate if s in _by_signal(reg.plan.glitches)]
        if gate:
            gated = _attempt(records, "clock_gating", lambda: _strobe_all(base, gate, replanner), base)
            if gated is not None:
                steps.append(("clock_gating", gated))
        if steps:
            candidates.append(steps)

    extend(current, [], remaining)
    sync = _attempt(records, "synchronous_counter", lambda: _synchronous(current, replanner), current)
    if sync is not None:
        extend(sync, [("synchronous_counter", sync)], sorted(_by_signal(sync.plan.glitches)))
    if not candidates:
        return None
    return min(candidates, key=lambda steps: _key(steps[-1][1], spec))


def _attempt(records: dict, remedy: str, build: Callable[[], Design], base: Design) -> Design | None:
    """Run one remedy; note its outcome for every signal; None when it does not apply."""
    try:
        result = build()
    except NotApplicable as exc:
        if exc.per_signal:
            for signal, rec in records.items():
                rec.tried.append(TriedRemedy(remedy, f"not applicable: {exc.per_signal.get(signal, exc)}"))
        else:
            _note_all(records, remedy, f"not applicable: {exc}")
        return None
    except SynthError as exc:
        _note_all(records, remedy, f"not applicable: {exc.args[0] if exc.args else exc}")
        return None
    _note_all(records, remedy, f"tried: {_count(result)} glitches left (was {_count(base)}), "
                               f"{_chips(result) - _chips(base):+d} chips, "
                               f"{_gates(result) - _gates(base):+d} gates")
    return result


def _note_all(records: dict, remedy: str, text: str) -> None:
    for rec in records.values():
        rec.tried.append(TriedRemedy(remedy, text))


def _credit(fixed_by: dict, old: Design, new: Design, remedy: str, only_strobed: bool = False) -> None:
    """Signals whose glitches this step reduced are credited to the remedy (in order)."""
    was, now = _by_signal(old.plan.glitches), _by_signal(new.plan.glitches)
    strobed = new.plan.strobed
    for signal, ticks in was.items():
        if only_strobed and signal not in strobed:
            continue
        if only_strobed or len(now.get(signal, ())) < len(ticks):
            fixed_by.setdefault(signal, []).append((remedy, old, new))


@dataclasses.dataclass
class _Attempts:
    """A signal's glitch ticks and the remedies tried on it so far (the fixing loop's
    working state; ``_finish_records`` turns it into a ``TimingFix``)."""

    signal: str
    glitches_before: tuple[int, ...]
    tried: list[TriedRemedy] = dataclasses.field(default_factory=list)


def _finish_records(records: dict[str, _Attempts], fixed_by: dict, start: Design,
                    final: Design) -> list[TimingFix]:
    """The per-signal records of what was tried and applied, finished against ``final``."""
    return [_finished(records[s], fixed_by.get(s, []), final) for s in sorted(records)]


def _finished(rec: _Attempts, steps: list, final: Design) -> TimingFix:
    signal = rec.signal
    after = _by_signal(final.plan.glitches).get(signal, [])
    strobed = final.plan.strobed
    skipped = final.plan.strobe_skipped
    if signal in skipped:
        rec.tried.append(TriedRemedy("clock_gating", f"not applicable to {signal}: {skipped[signal]}"))
    chips = gates = 0
    details = []
    shared = None
    registered = final.plan.registered
    for remedy, old, new in steps:
        if remedy == "clock_gating" and signal in strobed:
            chips += strobed[signal].cost.chips
            gates += strobed[signal].cost.gates
            details.append(strobed[signal].detail + _pulse_reason(final.spec, signal))
        elif remedy == "registered" and signal in registered:
            chips += _chips(new) - _chips(old)
            gates += _gates(new) - _gates(old)
            details.append(registered[signal].detail)
            shared = ("the flip-flops and the early decode are shared by the "
                      "registered signals: the change counts for every one")
        else:
            chips += _chips(new) - _chips(old)
            gates += _gates(new) - _gates(old)
            details.append(_global_detail(remedy, new))
            shared = "the whole design was re-derived: its change counts for every signal"
    return TimingFix(signal, rec.glitches_before, tuple(rec.tried), tuple(after),
                     tuple(remedy for remedy, _, _ in steps), steps[-1][0] if steps else "note", bool(steps),
                     Cost(chips, gates), "; then ".join(details) if details else _note_text(final, signal),
                     cost_shared=shared, note=_note_text(final, signal) if after and steps else None)


def _pulse_reason(spec: Spec | None, signal: str) -> str:
    """Why a pulse per tick is acceptable for a gated signal (said with the remedy)."""
    sig = spec.signals.get(signal) if spec is not None else None
    if sig is not None and sig.steady is False:
        return "; a pulse per tick is acceptable here: the spec says steady: false"
    return "; a pulse per tick is acceptable here: each of its windows is one tick long"


def _note_text(design: Design, signal: str) -> str:
    widths = [g.widest_ns for g in design.plan.glitches if g.signal == signal]
    widest = max(widths, default=0)
    switches = [n for n, sw in design.spec.switches.items() if sw.select == signal]
    if switches:
        return (f"{signal} selects switch {', '.join(switches)}: for up to {widest:.0f} ns it conducts the "
                "wrong way; a slow analog stage averages that away, a sample-and-hold or a "
                "charge-sensitive node does not")
    return (f"a level-sensitive consumer slower than {widest:.0f} ns (an LED, a relay or motor driver, "
            "an RC-filtered input) will not see what remains; an edge-triggered input will")


def _global_detail(remedy: str, design: Design) -> str:
    if remedy == "decode_choice":
        return ("the transient states of the glitching entries, where they are don't-cares, were "
                "given the steady level and the decode re-derived")
    parts = sorted({c.part for c in design.counter.chips})
    return f"counter re-allocated as a synchronous counter ({', '.join(parts)}); the decode re-derived"


def _by_signal(glitch_records) -> dict[str, list[int]]:
    """Signal -> its glitch ticks (a glitch marked harmless, ``synth.harmless``, left out)."""
    out: dict[str, list[int]] = {}
    for g in glitch_records:
        if g.harmless:
            continue
        out.setdefault(g.signal, []).append(int(g.at_tick))
    return {s: sorted(t) for s, t in out.items()}


def _count(design: Design) -> int:
    return len(design.plan.glitches)


def _chips(design: Design) -> int:
    return len(design.plan.chips)


def _gates(design: Design) -> int:
    return len(design.plan.network.gates)


# ---------------------------------------------------------------- (d) registering

def _register(design: Design, signals, replanner: Replanner) -> Design:
    """The design with ``signals`` decoded one tick early and clocked into D flip-flops
    (``synth.registers``); packed, self-checked and re-analysed like the others."""
    if design.plan.strobed:
        raise NotApplicable("the plan already gates signals with the clock")
    names = [s for s in signals if s not in design.plan.registered]
    if not names:
        raise NotApplicable("already registered")
    try:
        reg = prepare_registering(design, names)
    except ShortError as exc:
        raise NotApplicable(exc.args[0] if exc.args else str(exc)) from None
    try:
        decode, network = replanner.decode_and_map(reg.spec, design.stock, design.catalog, reg.counter)
        network = with_flipflops(network, reg, design.catalog)
        new = replanner.replan(design, counter_plan=reg.counter, network=network, decode=decode)
    except ShortError as exc:
        raise NotApplicable(f"no room on the board or in the bin ({exc.args[0]})") from None
    registered = {**design.plan.registered, **register_records(new.plan, reg)}
    return dataclasses.replace(new, plan=dataclasses.replace(new.plan, registered=registered))


def register_records(plan: Plan, reg: Registering) -> dict[str, Registered]:
    """Signal -> how it is registered (flip-flop, its clock, the counter's clock), for the report."""
    names = gate_names_of(plan)
    flops = registered_signals(plan.network)
    inverter = next((g for g in plan.network.gates if g.outputs and g.outputs[0] == "CLK_n"), None)
    out = {}
    for signal in reg.signals:
        gate = flops.get(signal)
        if gate is None:
            continue
        name = names.get(gate.id, gate.id)
        how = (f"decoded one tick early into D of flip-flop {name} ({gate.part}), clocked on the "
               f"{plan.clock_edge} edge of CLK: {signal} changes once per counting edge and holds its "
               "level through every tick")
        counter_clock = ""
        if inverter is not None:
            counter_clock = (f"the counter takes CLK through {names.get(inverter.id, inverter.id)} "
                             f"({inverter.part}), so it advances on CLK's {plan.clock_edge} edge one gate "
                             "delay after the flip-flops have sampled (their D cannot change before "
                             "their own edge)")
        out[signal] = Registered(name, gate.part, gate.inputs[0], gate.inputs[1], plan.clock_edge,
                                 counter_clock, how)
    return out


# ---------------------------------------------------------------- (a) another decode choice

def _decode_choice(design: Design, replanner: Replanner) -> Design:
    """Re-derive with the glitching entries' transient states passed at the steady level."""
    cp = design.counter
    functions = {f.name: f for f in design.decode.functions}
    roles = var_roles(cp, design.catalog)
    async_reset = cp.reset is not None and not cp.reset.synchronous
    states = [int(s) for s in cp.state_of_tick]
    passing = {t: frozenset(s) for t, s in (cp.passing or {}).items()}
    usable = False
    for g in design.plan.glitches:
        k = int(g.at_tick)
        seq = entry_sequence(states[k - 1], states[k], roles, async_reset)
        shown = frozenset(seq[1:-1])
        function = functions.get(g.signal)
        if function is not None and shown & function.dc:
            usable = True
        t = (k - 1) % cp.cycle
        passing[t] = passing.get(t, frozenset()) | shown
    if not usable:
        raise NotApplicable("no transient state of a glitching entry is a don't-care of its signal "
                            "(each is a count the signal is specified on)")
    return replanner.replan(design, counter_plan=dataclasses.replace(cp, passing=passing),
                            strobed=design.plan.strobed)


# ---------------------------------------------------------------- (b) a synchronous counter

def _is_ripple(part: Part) -> bool:
    return any(u.type == "counter" and not u.synchronous and u.mode != "johnson" for u in part.units)


def _synchronous(design: Design, replanner: Replanner) -> Design:
    """The counter re-allocated from the bin's synchronous (or Johnson) counters only:
    first with 4520/4518 units cascaded through a decoded enable (every output on one
    edge; the decode takes gates), then, when the bin cannot map that, as allocated
    without it."""
    if design.counter.synchronous:
        raise NotApplicable("the counter is already synchronous")
    stock, catalog = design.stock, design.catalog
    if not synchronous_counter_parts(catalog, stock):
        raise NotApplicable("the bin has no synchronous counter (e.g. 4520, 74HC161, 74HC163)")
    parts = {t: n for t, n in stock.parts.items() if not _is_ripple(catalog.parts[t])}
    why = "without the ripple counters the allocation comes out the same"
    for decoded in (True, False):
        try:
            cp = allocate(design.spec, dataclasses.replace(stock, parts=parts), catalog, decoded_carry=decoded)
        except SynthError as exc:
            why = f"the synchronous counters on hand cannot count the cycle: {exc.args[0]}"
            continue
        if sorted(c.part for c in cp.chips) == sorted(c.part for c in design.counter.chips) \
                and cp.synchronous == design.counter.synchronous:
            continue
        try:
            return replanner.replan(design, counter_plan=cp)
        except SynthError as exc:
            why = str(exc.args[0] if exc.args else exc)
    raise NotApplicable(why)


# ---------------------------------------------------------------- (c) gating with the clock

def _strobe_all(design: Design, signals: list[str], replanner: Replanner) -> Design:
    """Gate each signal in turn; a signal that cannot be gated keeps its decode."""
    network = design.network
    strobed = dict(design.plan.strobed)
    plan, applied = design.plan, 0
    skipped = []
    for signal in signals:
        if signal in strobed:
            continue
        try:
            new_net, info = strobe_network(network, signal, plan, design.stock, design.catalog,
                                           design.spec)
            new_plan = _pack(design, new_net, replanner)
        except NotApplicable as exc:
            skipped.append(f"{signal}: {exc}")
            continue
        except SynthError as exc:          # the re-packed plan failed a check: keep the decode
            skipped.append(f"{signal}: the gated plan failed a check ({exc.args[0] if exc.args else exc})")
            continue
        strobed[signal] = dataclasses.replace(info, cost=Cost(len(new_plan.chips) - len(plan.chips),
                                                              len(new_plan.network.gates) - len(plan.network.gates)))
        network, plan, applied = new_net, new_plan, applied + 1
    if not applied:
        raise NotApplicable("; ".join(skipped) or "no signal to gate",
                            per_signal=dict(item.split(": ", 1) for item in skipped))
    new = replanner.replan(design, network=network, strobed=strobed)
    skipped_by_signal = dict(s.split(": ", 1) for s in skipped)
    return dataclasses.replace(new, plan=dataclasses.replace(new.plan, strobe_skipped=skipped_by_signal))


def _pack(design: Design, network: Network, replanner: Replanner):
    """Re-pack a changed network; the oscillator and staircases go on it as in the plan."""
    try:
        return replanner.pack(design, network)
    except ShortError as exc:
        raise NotApplicable(f"no gate of the kind left in the bin ({exc.args[0]})") from None


def strobe_network(network: Network, signal: str, plan: Plan, stock: Bin, catalog: Catalog,
                   spec: Spec | None = None) -> tuple[Network, Strobed]:
    """The network with ``signal`` held inactive while the clock is in the counter's
    moving half; returns it and a record (how, which gate, which clock phase)."""
    out = network.signals.get(signal)
    if out is None or out.net in RAILS:
        raise NotApplicable("the signal is constant")
    clock = _clock_net(plan.counter)
    settle = str(plan.counter.edge) == "rising"     # CLK's level in the half the count moves in
    others = [n for n, s in network.signals.items() if s.net == out.net and n != signal]
    if others:
        raise NotApplicable(f"its net also carries {', '.join(others)}")
    switches = [n for n, sw in (spec.switches if spec is not None else {}).items() if sw.select == signal]
    if switches:
        raise NotApplicable(f"it selects switch {', '.join(switches)}, which would then throw over "
                            "twice in every tick of the window")
    free = spec is not None and signal in spec.signals and spec.signals[signal].polarity == "free"
    spare = _spare_input_rewrite(network, signal, out, clock, settle, plan, stock, catalog)
    if spare is not None:
        return spare
    return _series_gate_rewrite(network, signal, out, clock, settle, free, plan, stock, catalog)


def _clock_net(counter: CounterPlan) -> str:
    """The board clock: the counters' clock net, or CLK where they take an inverted copy."""
    var_nets = {str(v.net) for v in counter.vars}
    net = next((str(c.clock_net) for c in counter.chips if str(c.clock_net) not in var_nets), "CLK")
    return "CLK" if net == COUNTER_CLOCK_NET else net


def _phase_text(clock: str, level: bool) -> str:
    return f"{clock} {'high' if level else 'low'}"


def _spare_input_rewrite(network, signal, out, clock, settle, plan, stock, catalog):
    """Use a spare input of the signal's last gate when its controlling level is the inactive one."""
    gate = next((g for g in network.gates if out.net in g.outputs), None)
    if gate is None or gate.op not in _CONTROLLING or len(gate.outputs) != 1:
        return None
    if any(out.net in g.inputs for g in network.gates):
        return None             # the net feeds other gates: gating it would change them too
    index = spare_input(gate)
    controlling = _CONTROLLING[gate.op]
    forced = controlling ^ (not _KEEPS_LEVEL[gate.op])
    if index is None or forced == (out.polarity == "high"):
        return None
    gates, phase_net, added = _phase(network, clock, settle, controlling, plan, stock, catalog)
    inputs = list(gate.inputs)
    inputs[index] = phase_net
    gates = [dataclasses.replace(g, inputs=tuple(inputs)) if g.id == gate.id else g for g in gates]
    return (dataclasses.replace(network, gates=gates),
            _record("spare_input", signal, out.polarity, clock, settle,
                    f"{spare_input_place(plan, gate, index)} wired to "
                    f"{_phase_wording(clock, settle, controlling)}",
                    added))


def _series_gate_rewrite(network, signal, out, clock, settle, free, plan, stock, catalog):
    """A new gate after the decode: op(decode, clock phase), from a spare unit or a new chip;
    an inverting gate is followed by an inverter when the signal's polarity is fixed."""
    active_high = out.polarity == "high"
    choices = []
    for op in ("and", "nand", "or", "nor"):
        controlling = _CONTROLLING[op]
        forced = controlling ^ (not _KEEPS_LEVEL[op])
        gate_high = active_high if _KEEPS_LEVEL[op] else not active_high
        if forced == gate_high:
            continue
        restore = gate_high != active_high and not free
        for part, width, new_chip in _unit_options(plan, stock, catalog, op, min_inputs=2):
            choices.append((restore, new_chip, width, op, part, controlling, gate_high))
    if not choices:
        need = "an AND or a NAND" if active_high else "an OR or a NOR"
        raise NotApplicable(f"gating an active-{out.polarity} output needs {need} with a spare unit "
                            "or a chip left in the bin, and there is none")
    restore, new_chip, width, op, part, controlling, gate_high = min(choices)
    gates, phase_net, added = _phase(network, clock, settle, controlling, plan, stock, catalog,
                                     avoid_part=part if new_chip else None)
    taken = {n for g in gates for n in (*g.inputs, *g.outputs)}
    if not any(out.net in g.outputs for g in gates):       # a counter output used as it is
        source, target, body = out.net, _fresh(signal, taken), gates
    else:                                                   # the decode keeps its gates on a new net
        source = _fresh(f"{out.net}_decode", taken)
        target = out.net
        body = [dataclasses.replace(g, inputs=tuple(source if n == out.net else n for n in g.inputs),
                                    outputs=tuple(source if n == out.net else n for n in g.outputs))
                for g in gates]
    taken |= {source, target}
    ids = {g.id for g in gates}
    fill = "VSS" if controlling else "VDD"
    gated = _fresh(f"{signal}_gated", taken) if restore else target
    new_gates = [Gate(_fresh(f"strobe_{signal}", ids), part, op,
                      (source, phase_net) + (fill,) * (width - 2), (gated,),
                      schmitt=bool(catalog.parts[part].thresholds))]
    article = "an" if op in ("and", "or") else "a"
    how = (f"{article} {op.upper()} gate ({part}{', a new chip from the bin' if new_chip else ', a spare unit'}) "
           f"after the decode, its other input on {_phase_wording(clock, settle, controlling)}")
    if restore:
        inv_part, inv_width, inv_op = _restoring_inverter(plan, stock, catalog, part, signal)
        new_gates.append(Gate(_fresh(f"strobe_{signal}_inv", ids), inv_part, inv_op,
                              (gated,) * inv_width, (target,),
                              schmitt=bool(catalog.parts[inv_part].thresholds)))
        how += f", then an inverter ({inv_part} {inv_op.upper()}) to keep {signal} active {out.polarity}"
    new_high = gate_high if not restore else active_high
    signals = dict(network.signals)
    signals[signal] = SignalOut(target, "high" if new_high else "low")
    if new_high != active_high:
        how += f"; {signal} is now delivered active {'high' if new_high else 'low'}"
    return (dataclasses.replace(network, gates=body + new_gates, signals=signals),
            _record("series_gate", signal, "high" if new_high else "low", clock, settle, how, added))


def _restoring_inverter(plan, stock, catalog, gate_part: str, signal: str) -> tuple[str, int, str]:
    """An inverter (or a NAND/NOR with its inputs joined) after an inverting gating gate."""
    options = [(o, op) for op in ("not", "nand", "nor") for o in _unit_options(plan, stock, catalog, op, 1)]
    if not options:
        raise NotApplicable(f"{signal} would need an inverter after the gating gate and none is left")
    (part, width, _), op = min(options, key=lambda x: (x[0][2] and x[0][0] != gate_part, x[0][1]))
    return part, width, op


def _phase_wording(clock: str, settle: bool, controlling: bool) -> str:
    return clock if controlling == settle else f"{clock} inverted"


def _phase(network, clock, settle, controlling, plan, stock, catalog, avoid_part=None):
    """The gates, the net carrying the clock phase that is at ``controlling`` while the
    count moves, and the gates added for it (an inverter when the clock is the wrong way up)."""
    if controlling == settle:
        return list(network.gates), clock, []
    for g in network.gates:
        if g.op in ("not", "nand", "nor") and set(g.inputs) == {clock}:
            return list(network.gates), g.output, []
    options = _unit_options(plan, stock, catalog, "not", min_inputs=1)
    options += [o for op in ("nand", "nor") for o in _unit_options(plan, stock, catalog, op, min_inputs=2)]
    if not options:
        raise NotApplicable(f"{clock} is needed inverted and no inverter or NAND/NOR is left in the bin")
    part, width, _new = min(options, key=lambda o: (_too_slow(catalog, o[0], plan),
                                                    o[2], o[0] == avoid_part,
                                                    _delay_ns(catalog, o[0], plan.supply), o[1]))
    op = next(u.op for u in catalog.parts[part].units if u.op in ("not", "nand", "nor"))
    taken = {n for g in network.gates for n in (*g.inputs, *g.outputs)}
    net = _fresh(f"{clock}_inv", taken)
    inv = Gate(_fresh("strobe_clock_inv", {g.id for g in network.gates}), part, op,
               (clock,) * width, (net,), schmitt=bool(catalog.parts[part].thresholds))
    return list(network.gates) + [inv], net, [inv]


def _delay_ns(catalog, part_type: str, supply: float, corner: str = "typ") -> float:
    return catalog.parts[part_type].delay_at_corner("tpd", supply, corner) or 0.0


def _too_slow(catalog, part_type: str, plan) -> bool:
    """Whether an inverter on the clock is slower than the counter's first output change
    at either corner: the gate would then open while the count is still moving."""
    return any(_delay_ns(catalog, part_type, plan.supply, corner) >= _first_counter_move_ns(plan, catalog, corner)
               for corner in ("typ", "max"))


def _first_counter_move_ns(plan, catalog, corner: str = "typ") -> float:
    """The earliest a counter output moves after a counting edge."""
    models = counter_models(plan.counter, plan.network, catalog, plan.supply, corner)
    return min((o.delay_ps / 1000 for c in models for o in c.outputs), default=0.0)


def _unit_options(plan, stock, catalog, op: str, min_inputs: int) -> list[tuple[str, int, bool]]:
    """(part, inputs, needs a new chip) for every unit of ``op`` the board or the bin has spare."""
    out = []
    for part_type in sorted(stock.parts):
        part = catalog.parts.get(part_type)
        if part is None:
            continue
        units = [u for u in part.units if u.type in ("gate", "inverter") and u.op == op
                 and u.also is None and len(unit_logic_pins(u)[0]) >= min_inputs]
        if not units:
            continue
        width = min(len(unit_logic_pins(u)[0]) for u in units)
        spare = any(u.id not in chip.units_used for chip in plan.chips
                    if chip.part == part_type and chip.role == "logic" for u in units)
        left = stock.count(part_type) - plan.bom.get(part_type, 0)
        if spare:
            out.append((part_type, width, False))
        elif left > 0:
            out.append((part_type, width, True))
    return out


def _fresh(base: str, taken: set[str]) -> str:
    name, k = base, 2
    while name in taken:
        name, k = f"{base}_{k}", k + 1
    return name


def _record(how: str, signal: str, polarity: str, clock: str, settle: bool, text: str,
            added: list[Gate]) -> Strobed:
    still = _phase_text(clock, not settle)
    if added:
        inv = added[0]
        text += f" (the inverted clock from a {inv.part} {inv.op.upper()} unit)"
    return Strobed(how, still, polarity,
                   f"{text}: {signal} is asserted only while {still} (the second half of each "
                   "asserted tick, when the counter is still), so a window of several ticks "
                   "becomes one pulse per tick; sampled just before each counting edge it "
                   "matches the spec tick by tick")


# ---------------------------------------------------------------- RC delay offers

def rc_offers(design: Design, widths: dict[str, float] | None = None) -> list[RcOffer]:
    """RC delays between Schmitt stages for races and for glitches a logic fix cannot
    remove without a new chip; offered with values, spread and wiring, never applied.

    One race offer per signal to delay (the one of each coincident pair that
    settles later, so the gap only grows); ``widths`` are the glitch widths
    found before any fix (signal -> widest, ns)."""
    plan = design.plan
    period = _period_ns(design)
    widths = dict(widths if widths is not None else _widest(plan.glitches))
    offers = []
    races: dict[str, list[CoincidentEdge]] = {}
    for edge in plan.coincident_edges:
        if edge.relation == "complementary":
            continue            # one edge seen twice: nothing to delay
        a, b = edge.signals
        races.setdefault(b if edge.first == a else a, []).append(edge)
    for signal, edges in sorted(races.items()):
        offers.append(_race_offer(design, signal, edges, period))
    fixes = plan.timing_fixes
    if fixes is None:
        costly = set()          # the costs are known once --fix glitches has tried the remedies
    else:
        costly = {r.signal for r in fixes if r.glitches_after or r.cost.chips > 0}
    for signal in sorted(costly):
        offers.append(_glitch_offer(design, signal, widths.get(signal, 0.0), period))
    return [o for o in offers if o is not None]


def _period_ns(design: Design) -> float | None:
    freq = design.spec.clock.frequency_hz
    if freq:
        return 1e9 / freq
    return design.trace.period_ns if design.trace is not None else None


def _race_offer(design: Design, later: str, edges: list[CoincidentEdge], period: float | None) -> RcOffer | None:
    if period is None:
        return None
    others = sorted({n for e in edges for n in e.signals if n != later})
    ticks = sorted({e.at_tick for e in edges})
    offer = _rc_design(design, later, period / 4, period)
    race = any(e.race is not False for e in edges)
    condition = "" if race else (" (needed only if your circuit clocks, resets or gates one of them "
                                 "with the other: on this board neither reads the other)")
    return dataclasses.replace(
        offer, problem="race" if race else "coincident", signals=(later, *others), at_ticks=tuple(ticks),
        why=(f"{later} switches on the same clock edge as {', '.join(others)} (ticks "
             f"{', '.join(map(str, ticks))}); delayed by about a quarter tick its edges "
             "come clear of theirs and the level sampled at the end of each tick is "
             f"unchanged{condition}"))


def _glitch_offer(design: Design, signal: str, width_ns: float, period: float | None) -> RcOffer | None:
    if period is None:
        return None
    wanted_ns = max(4 * width_ns, 1000.0)
    if wanted_ns > period / 4:
        return RcOffer("glitch", signal, False, signal=signal,
                       why=f"a filter slower than the {width_ns:.0f} ns pulse would take more than a "
                           f"quarter of the {period:.0f} ns tick")
    offer = _rc_design(design, signal, wanted_ns, period)
    fixed = next((r for r in design.plan.timing_fixes or [] if r.signal == signal
                  and r.applied and not r.glitches_after), None)
    instead = (f"instead of the {fixed.remedy.replace('_', ' ')} applied, which took "
               f"{fixed.cost.chips} new chip(s): " if fixed else "")
    why = (f"{instead}an RC low-pass between two Schmitt stages swallows a pulse shorter than its "
           f"delay: the {width_ns:.0f} ns (worst case) pulse never charges C to the "
           "threshold, while each real edge arrives one RC delay later")
    if offer.receiver == "plain-input":
        why = why.replace("two Schmitt stages", "two inverting stages (the bin has no "
                          "Schmitt part; a Schmitt second stage is the better receiver)")
    applicable = offer.applicable
    if applicable and min(offer.rising_ns[0], offer.falling_ns[0]) <= width_ns:
        applicable = False
        why += "; the shortest delay over the threshold spread is not longer than the pulse"
    return dataclasses.replace(offer, problem="glitch", signal=signal, why=why, applicable=applicable)


def _rc_design(design: Design, signal: str, wanted_ns: float, period: float) -> RcOffer:
    """The RC delay for ``signal`` sized from the bin (``problem`` and ``why`` left for the caller)."""
    plan, stock, catalog = design.plan, design.stock, design.catalog
    try:
        receiver, where = _schmitt_pair(plan, stock, catalog)
    except NotApplicable as exc:
        return RcOffer("", signal, False, "", wanted_ns=round(wanted_ns, 1), why_not=str(exc))
    thresholds = (thresholds_at(catalog.parts[receiver].thresholds, plan.supply) if receiver
                  else plain_input_thresholds(plan.supply, design.catalog.plain_input_levels(
                      {p.family for p in plan.parts.values()}, plan.supply)))
    base = RcOffer("", signal, False, "", wanted_ns=round(wanted_ns, 1), receiver=receiver or "plain-input",
                   stages=tuple(where))
    try:
        d = rc_delay_design(wanted_ns * 1e-9, supply=plan.supply, thresholds=thresholds,
                            resistors=stock.resistors, capacitors=stock.capacitors)
    except SynthError as exc:
        return dataclasses.replace(base, why_not=str(exc.args[0] if exc.args else exc))
    info = plan.signals.get(signal)
    source = info.source if info is not None else None
    src = f"{source[0]} pin {source[1]}" if source else signal
    r, c = format_si(d.r, "Ω"), format_si(d.c, "F")
    wiring = [f"{src} ({signal}) -> stage 1 input ({where[0]})",
              f"stage 1 output -> R {r} -> delay node",
              f"C {c} from the delay node to VSS, short leads",
              f"delay node -> stage 2 input ({where[1]}); stage 2 output is the delayed {signal}, "
              "same polarity (two inversions); move its loads there"]
    values = RcValues(d.r, d.c, r, c, tuple(round(x * 1e9, 1) for x in (d.rising.min, d.rising.typ, d.rising.max)),
                      tuple(round(x * 1e9, 1) for x in (d.falling.min, d.falling.typ, d.falling.max)),
                      d.formula, tuple(wiring), tuple(d.warnings), round(period, 1))
    longest = max(d.rising.max, d.falling.max) * 1e9
    fits = longest < period / 2
    why_not = None if fits else (f"the nearest values on hand ({r}, {c}) give up to {longest:.0f} ns, more "
                                 f"than half the {period:.0f} ns tick: the delayed level would be sampled late")
    return dataclasses.replace(base, applicable=fits, why_not=why_not, values=values)


def _schmitt_pair(plan: Plan, stock: Bin, catalog: Catalog) -> tuple[str | None, list[str]]:
    """A Schmitt inverting part for the two stages: spare units on the board, else a chip
    from the bin, else a plain CMOS input (said so)."""
    schmitt = [t for t in sorted(stock.parts) if catalog.parts[t].thresholds
               and any(u.type in ("inverter", "gate") for u in catalog.parts[t].units)]
    schmitt.sort(key=lambda t: catalog.parts[t].category != "inverter")
    for part_type in schmitt:
        part = catalog.parts[part_type]
        units = [u for u in part.units if u.type in ("inverter", "gate")]
        for chip in plan.chips:
            if chip.part != part_type:
                continue
            free = [u for u in units if u.id not in chip.units_used]
            if len(free) >= 2:
                return part_type, [_unit_text(chip.ref, u) for u in free[:2]]
        if stock.count(part_type) - plan.bom.get(part_type, 0) > 0:
            return part_type, [_unit_text(f"a new {part_type}", u) for u in units[:2]]
    for op in ("not", "nand", "nor"):
        for part_type, _width, new_chip in _unit_options(plan, stock, catalog, op, 1):
            part = catalog.parts[part_type]
            units = [u for u in part.units if u.op == op]
            chip = next((c for c in plan.chips if c.part == part_type and not new_chip
                         and sum(u.id not in c.units_used for u in units) >= 2), None)
            if chip is not None:
                free = [u for u in units if u.id not in chip.units_used]
                return None, [_unit_text(chip.ref, u, joined=True) for u in free[:2]]
            if new_chip or stock.count(part_type) - plan.bom.get(part_type, 0) > 0:
                return None, [_unit_text(f"a new {part_type}", u, joined=True) for u in units[:2]]
    raise NotApplicable("no Schmitt part and no two spare inverting gates on the board or in the bin")


def _unit_text(ref: str, unit: Unit, joined: bool = False) -> str:
    ins = unit.inputs
    if len(ins) > 1 and joined:
        tie = f", its other inputs joined to pin {ins[0]} (plain CMOS threshold, not Schmitt)"
    elif len(ins) > 1:
        tie = ", other inputs to VDD"
    else:
        tie = ""
    return f"{ref} unit {unit.id}: in pin {ins[0]}, out pin {unit.output}{tie}"
