"""Applied RC delays: an output moved later by R and C between two Schmitt stages.

Interface:

- ``apply_delays(design, fix, retime) -> Design``: every signal the spec gives
  a ``delay:`` and, with ``races`` in ``fix``, every race the timing step
  found (one signal selects a switch that routes the other; the offer in
  ``plan.rc_offers`` names the signal that settles later) gets its delay
  built into a copy of the plan, which is then checked again (nets, the
  tick-by-tick self-check, and ``retime``: the sequencer's timing step).
- record ``AppliedDelay`` (``plan.rc_delays``; JSON ``rc_delays``).

The circuit (common practice for a CMOS delay): the decode's net drives
Schmitt stage 1 (an inverter, or a Schmitt NAND with its other inputs at
VDD); stage 1's output drives R into the delay node, C runs from the node to
VSS, and the node drives Schmitt stage 2, whose output is the delayed signal
the right way up (two inversions).  Stage 2's input switches when the node
crosses a threshold: charging from 0 V it reaches VT+ after
t = R C ln(VDD / (VDD - VT+)); discharging from VDD it reaches VT- after
t = R C ln(VDD / VT-) (the RC time constant law, common practice; any
circuits handbook).  R and C are picked from the bin with
``analog.rc_delay_design`` at the Schmitt part's catalog thresholds; each
time is given at min / typ / max over the threshold spread widened by the R
and C tolerances (``analog.with_tolerance``).

In the gate network the RC is an ``rc`` gate (no chip: a buffer at zero
delay) between the two Schmitt gates, with its times in ``Network.delays``;
the timing simulation gives it the rising and falling times (typical, or
the longest at the worst-case corner), inertially, so a pulse shorter than
the delay is swallowed as the RC swallows it.  The delayed output gets a new
net, ``<net>_dly``; the plan's output, the switch pins that read the signal
and the external connection move onto it, while the decode's own net still
feeds stage 1.  A delay must stay under half a tick (the level is sampled at
the end of each tick); a longer one is refused.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Iterable

from .analog import rc_delay_design, thresholds_at, with_tolerance
from .analogparts import AppliedDelay
from .clocksource import place_schmitt, spare_schmitt_sites
from .errors import ShortError, SpecError, SynthError
from .findings import CoincidentEdge
from .model import Design
from .network import Gate, RcTiming, SignalOut, fresh_name
from .netlist import Passive, Plan, check_nets, self_check
from .packing import refresh, rewire_pin, working_copy
from .units import format_si

__all__ = ["AppliedDelay", "apply_delays", "FIX"]

FIX = "races"
"""The ``--fix`` choice that applies an RC delay to every race found."""


def apply_delays(design: Design, fix: Iterable[str], retime: Callable[[Design], Design]) -> Design:
    """The design with the asked-for RC delays built into a new plan, checked again
    (see the module text); the same design when none is asked for."""
    wanted = _wanted(design, set(fix))
    if not wanted:
        return design
    design = dataclasses.replace(design, plan=working_copy(design.plan))
    period_ns = _period_ns(design)
    applied = []
    for name, (seconds, asked_by) in sorted(wanted.items()):
        design, delay = _apply_one(design, name, seconds, asked_by, period_ns)
        applied.append(delay)
    plan = refresh(design.plan, design.stock)
    check_nets(plan)
    self_check(plan, design.spec)
    plan = dataclasses.replace(
        plan, rc_delays=tuple(applied),
        warnings=(*plan.warnings, *(f"RC delay on {d.signal}: {w}" for d in applied for w in d.warnings)),
        rc_offers=[o.as_applied() if o.delayed in wanted else o for o in plan.rc_offers])
    design = retime(dataclasses.replace(design, plan=plan, network=plan.network))
    plan = dataclasses.replace(design.plan, warnings=tuple(dict.fromkeys(design.plan.warnings)))  # timing ran twice
    return dataclasses.replace(design, plan=_separated_races(plan, applied))


def _separated_races(plan: Plan, applied: list[AppliedDelay]) -> Plan:
    """The plan with a race whose later signal now goes through an RC delay kept in the list,
    marked separated (``race`` false, ``separated_by``) with the gap at the shortest delay."""
    shortest = {d.signal: (min(d.rise_s[0], d.fall_s[0]) * 1e9, d) for d in applied}
    return dataclasses.replace(plan, coincident_edges=[_separated(rec, shortest) for rec in plan.coincident_edges])


def _separated(rec: CoincidentEdge, shortest: dict[str, tuple[float, AppliedDelay]]) -> CoincidentEdge:
    if not rec.race:
        return rec
    delayed = [n for n in rec.signals if n in shortest]
    if len(delayed) != 1:
        return rec
    name = delayed[0]
    other = next(n for n in rec.signals if n != name)
    settle = rec.settle_of(other)
    low, d = shortest[name]
    if settle is None or low <= settle:
        return rec
    return dataclasses.replace(rec, race=False, separated_by=(
        f"RC delay on {name} ({', '.join(d.passives)}): its edge comes at least "
        f"{low - settle:.0f} ns after {other}'s at the shortest delay"))


def _wanted(design, fix: set[str]) -> dict[str, tuple[float, str]]:
    """Signal -> (seconds, who asked): the spec's ``delay:`` keys, then races under ``--fix races``."""
    spec = design.spec
    wanted = {name: (s.delay_s, f"delay: {format_si(s.delay_s, 's')}")
              for name, s in spec.signals.items() if s.delay_s}
    if FIX in fix:
        for offer in design.plan.rc_offers:
            if offer.problem == "race" and offer.applicable and offer.delayed not in wanted:
                wanted[offer.delayed] = (offer.wanted_ns * 1e-9, "--fix races")
    return wanted


def _period_ns(design) -> float | None:
    freq = design.spec.clock.frequency_hz
    return 1e9 / freq if freq else None


def _fail(design, name: str, message: str, short: bool = False, hint: str | None = None):
    spec = design.spec
    line = spec.signals[name].line if name in spec.signals else None
    if short:
        return ShortError(message, file=design.stock.path, hint=hint)
    return SpecError(message, file=spec.path, line=line, hint=hint)


def _apply_one(design: Design, name: str, seconds: float, asked_by: str,
               period_ns: float | None) -> tuple[Design, AppliedDelay]:
    """One RC delay built into the design's working plan: the design with the new plan
    record, and the delay."""
    plan, stock, catalog = design.plan, design.stock, design.catalog
    if period_ns is None:
        raise _fail(design, name, f"signals.{name}.delay: an RC delay needs clock.frequency (it must stay "
                                  "under half a tick)", hint="add clock: {frequency: ...} to the spec")
    sites = spare_schmitt_sites(plan, stock, catalog)
    if len(sites) < 1:
        raise _fail(design, name, f"the RC delay on {name} needs two Schmitt-trigger stages (40106, 74HC14, "
                                  "4093, 74HC132) and the bin has none spare", short=True,
                    hint="add a 40106 or 74HC14 to the bin")
    part = catalog.parts[sites[0].part]
    thresholds = thresholds_at(part.thresholds, plan.supply)
    try:
        sized = rc_delay_design(seconds, supply=plan.supply, thresholds=thresholds,
                                resistors=stock.resistors, capacitors=stock.capacitors)
    except SynthError as exc:
        raise _fail(design, name, f"the RC delay on {name} needs R and C: {exc.args[0] if exc.args else exc}",
                    short=True, hint="list resistors and capacitors in the bin, e.g. "
                                     "'resistors: [10k, 47k]' and 'capacitors: [1n, 10n]'") from None
    rise = with_tolerance(sized.rising)
    fall = with_tolerance(sized.falling)
    longest_ns = max(rise.max, fall.max) * 1e9
    if longest_ns >= period_ns / 2:
        raise _fail(design, name, f"the RC delay on {name} ({format_si(sized.r, 'Ω')}, "
                                  f"{format_si(sized.c, 'F')}) may last {longest_ns:.0f} ns, not under half "
                                  f"the {period_ns:.0f} ns tick: the level sampled at the end of a tick "
                                  "would be late", hint="a shorter delay, or a slower clock")
    signal = plan.network.signals[name]
    early, out = signal.net, _fresh(plan, f"{signal.net}_dly")
    drive, node = _fresh(plan, f"{signal.net}_rcdrv"), _fresh(plan, f"{signal.net}_rc")
    gid = _fresh_gate(plan, f"dly_{name}")
    ref1, unit1, new1, plan = _place(plan, stock, catalog, sites[0], early, drive, f"{gid}_1",
                               f"RC delay on {name}, stage 1 input: the decoded {name}",
                               f"RC delay on {name}, stage 1 output: drives R")
    sites = [s for s in spare_schmitt_sites(plan, stock, catalog) if s.part == part.type] or \
        spare_schmitt_sites(plan, stock, catalog)
    if not sites or catalog.parts[sites[0].part].type != part.type:
        raise _fail(design, name, f"the RC delay on {name} needs a second Schmitt stage of the {part.type} "
                                  "and the bin has none spare", short=True, hint=f"add a {part.type}")
    ref2, unit2, new2, plan = _place(plan, stock, catalog, sites[0], node, out, f"{gid}_2",
                               f"RC delay on {name}, stage 2 input: the delay node (R and C)",
                               f"RC delay on {name}, stage 2 output: the delayed {name}")
    r_ref, c_ref = _next_ref(plan, "R"), _next_ref(plan, "C")
    plan.passives.append(Passive(r_ref, "resistor", sized.r, (drive, node),
                                 f"RC delay on {name}: R from {ref1} pin {_pin(plan, ref1, drive)} to the "
                                 "delay node"))
    plan.passives.append(Passive(c_ref, "capacitor", sized.c, (node, "VSS"),
                                 f"RC delay on {name}: C from the delay node ({ref2} pin "
                                 f"{_pin(plan, ref2, node)}) to VSS, short leads"))
    plan = _add_gates(plan, part, gid, (unit1, unit2), early, drive, node, out, rise, fall)
    plan = _move_readers(plan, name, early, out, ref2)
    return dataclasses.replace(design, plan=plan), AppliedDelay(
        signal=name, asked_by=asked_by, wanted_s=seconds, part=part.type,
        stages=((ref1, unit1), (ref2, unit2)), new_chips=tuple(r for r, new in ((ref1, new1), (ref2, new2)) if new),
        r=sized.r, c=sized.c, nets={"input": early, "drive": drive, "node": node, "output": out},
        rise_s=(rise.min, rise.typ, rise.max), fall_s=(fall.min, fall.typ, fall.max),
        formula=sized.formulas["rising"], passives=(r_ref, c_ref), warnings=tuple(sized.warnings))


def _place(plan, stock, catalog, site, net_in: str, net_out: str, gate_id: str, note_in: str,
           note_out: str) -> tuple[str, str, bool, Plan]:
    """A Schmitt stage on a spare unit or a new chip; its unit named by the gate id; and the
    plan record with its nets made again."""
    part = catalog.parts[site.part]
    ref, opened, _ins, _outs = place_schmitt(plan, site, part, net_in, net_out, "RC delay", note_in, note_out)
    plan.chip(ref).units_used[site.unit] = gate_id
    return ref, site.unit, opened, refresh(plan, stock)


def _add_gates(plan, part, gid: str, units: tuple[str, str], early: str, drive: str, node: str,
               out: str, rise, fall) -> Plan:
    """The plan with the two Schmitt gates and the ``rc`` gate between them (with its times)
    in its network."""
    gates = []
    for unit_id, gate_id, net_in, net_out in ((units[0], f"{gid}_1", early, drive),
                                                (units[1], f"{gid}_2", node, out)):
        unit = next(u for u in part.units if u.id == unit_id)
        width = len(unit.inputs)
        gates.append(Gate(gate_id, part.type, unit.op, (net_in,) + ("VDD",) * (width - 1), (net_out,),
                          schmitt=True))
    rc = Gate(f"{gid}_rc", "RC", "rc", (drive,), (node,))
    timing = RcTiming(rise=tuple(x * 1e9 for x in (rise.min, rise.typ, rise.max)),  # type: ignore[arg-type]
                      fall=tuple(x * 1e9 for x in (fall.min, fall.typ, fall.max)))  # type: ignore[arg-type]
    network = plan.network
    return dataclasses.replace(plan, network=dataclasses.replace(
        network, gates=[*network.gates, gates[0], rc, gates[1]], delays={**network.delays, rc.id: timing}))


def _moved(net: str, early: str, out: str) -> str:
    """``out`` where ``net`` is the early net, else ``net``."""
    return out if net == early else net


def _move_readers(plan, name: str, early: str, out: str, stage2: str) -> Plan:
    """The output, its external connection and every switch pin that read the signal
    move onto the delayed net; the decode's gates keep the early net."""
    signal = plan.network.signals[name]
    plan = dataclasses.replace(plan, network=dataclasses.replace(
        plan.network, signals={**plan.network.signals, name: SignalOut(out, signal.polarity)}))
    plan.signals[name] = dataclasses.replace(plan.signals[name], net=out, source=(stage2, _pin(plan, stage2, out)))
    label = plan.external.pop(early, None)
    if label is not None:
        plan.external[out] = label
    for switch, sw in list(plan.switches.items()):
        plan.switches[switch] = dataclasses.replace(
            sw, control_net=_moved(sw.control_net, early, out), on_net=_moved(sw.on_net, early, out),
            off_net=_moved(sw.off_net, early, out))
        for ref, _unit in sw.sections:
            chip = plan.chip(ref)
            for pin, net in list(chip.pins.items()):
                if net == early:
                    rewire_pin(plan, ref, pin, out, chip.notes.get(pin, "") + f" (the delayed {name})")
    return plan


def _pin(plan, ref: str, net: str) -> int:
    return next(p for p, n in plan.chip(ref).pins.items() if n == net)


def _fresh(plan, base: str) -> str:
    taken = {n for c in plan.chips for n in c.pins.values()} | set(plan.nets) | \
        {n for g in plan.network.gates for n in (*g.inputs, *g.outputs)}
    return fresh_name(base, taken)


def _fresh_gate(plan, base: str) -> str:
    taken = {g.id for g in plan.network.gates}
    k, name = 2, base
    while any(t.startswith(name + "_") for t in taken):
        name, k = f"{base}{k}", k + 1
    return name


def _next_ref(plan, letter: str) -> str:
    numbers = [int(p.ref[1:]) for p in plan.passives if p.ref[0] == letter and p.ref[1:].isdigit()]
    return f"{letter}{max(numbers, default=0) + 1}"
