"""The on-board clock: which gate oscillates, which R and C set its frequency.

Interface:

- ``add_oscillator(plan, spec, bin, catalog) -> OscillatorPlan`` (places the
  oscillator on a packed plan: the gate unit, R, C, the 4060's Rs, and the
  nets; the caller then runs ``packing.refresh`` and ``check_nets``)
- ``find_sites(plan, bin, catalog) -> list[Site]`` (every place an oscillator
  could go, best first); ``spare_schmitt_sites`` (the Schmitt gates among them)
- ``place_schmitt(plan, site, part, net_in, net_out, role, note_in, note_out)``
  (a Schmitt inverter or NAND of a site wired between two nets; also used by
  the power-on reset)
- ``DEFAULT_TOLERANCE`` (assumed when the spec gives no ``clock.tolerance``)
- records: ``Site``, ``OscillatorPlan``

Where the oscillator goes, in order (each costs less than the next):

1. the 4060 that is the counter: its own three-pin RC stage (Rt, Ct, Rs);
2. a spare Schmitt inverter (40106, 74HC14) on a chip the plan already uses;
3. a spare Schmitt NAND (4093, 74HC132) on a chip already used, its other
   input tied to VDD (the catalog's 4093 thresholds are for that case);
4. a new Schmitt inverter chip from the bin, then a new Schmitt NAND chip;
5. a spare 4060 from the bin, its oscillator output (pin ``output``, the
   one that drives Ct) feeding the counter's clock.

The frequency is set with ``analog.schmitt_oscillator_design`` (thresholds
from the catalog at the spec supply) or ``analog.counter_oscillator_design``
(the part's ``oscillator_k``).  A pair that misses the wanted frequency by
more than a tolerance the spec sets is short (exit 3), as is a bin without
any site; without ``clock.tolerance`` the closest pair is built with a
warning that names the value that would hit it.
"""

from __future__ import annotations


from .analog import (CounterOscillatorDesign, OscillatorDesign, counter_oscillator_design,
                     schmitt_oscillator_design, thresholds_at)
from .analogparts import OscillatorPlan, Site
from .counter import counter_fmax_mhz
from .errors import ShortError
from .netlist import RAIL_NETS, Passive
from .packing import add_chip, rewire_pin, unit_logic_pins
from .units import format_si

__all__ = ["Site", "OscillatorPlan", "add_oscillator", "find_sites", "spare_schmitt_sites",
           "place_schmitt", "DEFAULT_TOLERANCE", "PERIOD_FORMULA"]

DEFAULT_TOLERANCE = 0.10
"""The frequency spread accepted when ``clock.tolerance`` is not given (10 %)."""

PERIOD_FORMULA = "T = R C [ln((VDD − VT−) / (VDD − VT+)) + ln(VT+ / VT−)]"
COUNTER_FORMULA = "f = 1 / (k Rt Ct), Rs about 2 Rt"
TIMING_NODE = "OSC_RC"
# 4060-type RC stages vary about +-10 % unit to unit (from memory; the
# datasheets give the formula, not its spread).
COUNTER_OSC_SPREAD = 0.10


# ---------------------------------------------------------------- where it can go

def _is_schmitt(unit, kind: str) -> bool:
    if not unit.schmitt:
        return False
    if kind == "inverter":
        return unit.type == "inverter"
    return unit.type == "gate" and unit.op == "nand" and len(unit.inputs) == 2


def _unit_is_spare(chip, unit) -> bool:
    """Not in use, inputs only tied to a rail, outputs open."""
    if unit.id in chip.units_used:
        return False
    ins, outs, _ = unit_logic_pins(unit)
    return all(chip.pins.get(p, "VSS") in RAIL_NETS for p in ins) and not any(p in chip.pins for p in outs)


def _spare_count(plan, bin, part_type: str) -> int:
    return bin.count(part_type) - sum(1 for c in plan.chips if c.part == part_type)


def find_sites(plan, bin, catalog) -> list[Site]:
    """Every place an oscillator could go, best first (see the module docstring)."""
    sites: list[Site] = []
    for chip in plan.chips:
        part = catalog.parts[chip.part]
        if chip.role == "counter" and _counter_stage(plan, chip, part) is not None:
            sites.append(Site("counter-stage", part.type, _counter_stage(plan, chip, part), chip.ref, 1))
    for order, kind in ((2, "inverter"), (3, "nand")):
        for chip in plan.chips:
            part = catalog.parts[chip.part]
            for unit in part.units:
                if _is_schmitt(unit, kind) and part.thresholds and _unit_is_spare(chip, unit):
                    sites.append(Site(kind, part.type, unit.id, chip.ref, order))
                    break
    for kind in ("inverter", "nand"):
        for part_type in sorted(bin.parts):
            part = catalog.parts[part_type]
            units = [u for u in part.units if _is_schmitt(u, kind)]
            if units and part.thresholds and _spare_count(plan, bin, part_type) > 0:
                sites.append(Site(kind, part_type, units[0].id, None, 4))
    for part_type in sorted(bin.parts):
        part = catalog.parts[part_type]
        units = [u for u in part.units_of("counter") if u.oscillator is not None]
        if units and part.oscillator_k and _spare_count(plan, bin, part_type) > 0:
            sites.append(Site("counter-stage", part_type, units[0].id, None, 5))
    return sites


def _counter_stage(plan, chip, part) -> str | None:
    """The unit id when this counter chip counts CLK on its oscillator input."""
    for cc in plan.counter.chips:
        if cc.ref != chip.ref or str(cc.clock_net) != "CLK":
            continue
        unit = next(u for u in part.units if str(u.id) == str(cc.unit))
        osc = unit.oscillator
        if osc and osc.input == int(cc.clock_pin) and part.oscillator_k:
            return unit.id
    return None


# ---------------------------------------------------------------- the values

def _short_values(design: OscillatorDesign | CounterOscillatorDesign, wanted: float, tolerance: float,
                  bin, given: bool) -> ShortError:
    said = f"{tolerance:.0%}" + ("" if given else " (the default: the spec gives no clock.tolerance)")
    if isinstance(design, OscillatorDesign):
        achieved, r, c, needed_c = design.freq_typ, design.r, design.c, design.needed_c
    else:
        achieved, r, c, needed_c = design.freq_hz, design.rt, design.ct, design.needed_ct
    needed_r = needed_c * r / c
    return ShortError(
        f"no resistor and capacitor in the bin set the oscillator within {said} of "
        f"{format_si(wanted, 'Hz')}: the closest, {format_si(r, 'Ω')} with {format_si(c, 'F')}, gives "
        f"{format_si(achieved, 'Hz')} ({achieved / wanted - 1:+.0%})", file=bin.path,
        hint=f"add a {format_si(needed_c, 'F')} capacitor (with {format_si(r, 'Ω')}) or a "
             f"{format_si(needed_r, 'Ω')} resistor (with {format_si(c, 'F')}) to the bin's lists")


def _check_error(design: OscillatorDesign | CounterOscillatorDesign, wanted: float, tolerance: float, bin, given: bool, warnings: list[str]) -> None:
    """Off by more than the tolerance: exit 3 when the spec set it, else plan and warn.

    With no ``clock.tolerance`` the 10 % is our assumption, not the user's
    limit: the closest pair on hand is built and the warning names the value
    that would hit the frequency (tick counts are unchanged, only time scales).
    """
    if abs(design.error) <= tolerance:
        return
    short = _short_values(design, wanted, tolerance, bin, given)
    if given:
        raise short
    warnings.append(f"{short.message}; built with the closest pair anyway (every time in the spec "
                    f"scales by the same factor); for the wanted frequency {short.hint}; set "
                    "clock.tolerance to make this an error")


def _schmitt_values(site: Site, part, spec, bin, tolerance: float, given: bool):
    thresholds = thresholds_at(part.thresholds, spec.supply)
    try:
        design = schmitt_oscillator_design(spec.clock.frequency_hz, supply=spec.supply,
                                           thresholds=thresholds, resistors=bin.resistors,
                                           capacitors=bin.capacitors, tolerance=tolerance)
    except ShortError as exc:
        raise ShortError(f"clock.source: oscillator needs R and C: {exc.message}", file=bin.path,
                         hint=exc.hint) from exc
    return design, thresholds


def _counter_values(part, spec, bin):
    try:
        return counter_oscillator_design(spec.clock.frequency_hz, resistors=bin.resistors,
                                         capacitors=bin.capacitors, k=part.oscillator_k)
    except ShortError as exc:
        raise ShortError(f"clock.source: oscillator needs R and C: {exc.message}", file=bin.path,
                         hint=exc.hint) from exc


def _no_site(spec, bin) -> ShortError:
    family = "40106 (hex Schmitt inverter)" if spec.supply > 6 else \
        "74HC14 or 40106 (hex Schmitt inverter)"
    return ShortError("clock.source: oscillator needs a Schmitt-trigger gate (40106, 74HC14, 4093, "
                      "74HC132) or a 4060, and the bin has none spare after the counters, logic and "
                      "switches", file=bin.path, hint=f"add one {family} to the bin, or give an "
                                                      "external clock (clock.source: external)")


# ---------------------------------------------------------------- wiring it in

def _next_ref(plan, letter: str) -> str:
    numbers = [int(p.ref[1:]) for p in plan.passives if p.ref[0] == letter]
    return f"{letter}{max(numbers, default=0) + 1}"


def _add_passive(plan, kind: str, value: float, ends: tuple[str, str], purpose: str) -> str:
    ref = _next_ref(plan, "R" if kind == "resistor" else "C")
    plan.passives.append(Passive(ref, kind, value, ends, purpose))
    return ref


def place_schmitt(plan, site: Site, part, net_in: str, net_out: str, role: str, note_in: str,
                  note_out: str) -> tuple[str, bool, list[int], list[int]]:
    """Put a Schmitt inverter (or a NAND with its other inputs at VDD) of ``site`` between
    two nets: on a chip of the plan, or on a new chip from the bin.  Returns (ref, opened,
    input pins, output pins)."""
    unit = next(u for u in part.units if u.id == site.unit)
    ins, outs, _ = unit_logic_pins(unit)
    pins = {ins[0]: net_in, outs[0]: net_out}
    notes = {ins[0]: note_in, outs[0]: note_out}
    for extra in ins[1:]:
        pins[extra] = "VDD"
        notes[extra] = "held at VDD: the NAND works as a Schmitt inverter"
    if site.ref is None:
        chip = add_chip(plan, part, role, {unit.id: role}, pins, notes)
        return chip.ref, True, list(ins), list(outs)
    plan.chip(site.ref).units_used[unit.id] = role
    for pin, net in pins.items():
        rewire_pin(plan, site.ref, pin, net, notes[pin])
    return site.ref, False, list(ins), list(outs)


def spare_schmitt_sites(plan, bin, catalog) -> list[Site]:
    """The places a Schmitt inverter can go, best first: a spare unit on the board, then a new chip."""
    return [site for site in find_sites(plan, bin, catalog) if site.kind != "counter-stage"]


def _wire_schmitt(plan, site: Site, part, bin, design) -> tuple[str, bool, dict[str, int]]:
    ref, opened, ins, outs = place_schmitt(
        plan, site, part, TIMING_NODE, "CLK", "oscillator",
        "oscillator input: the timing node (R from the output, C to VSS)", "oscillator output: the clock")
    r_ref = _add_passive(plan, "resistor", design.r, ("CLK", TIMING_NODE),
                         f"oscillator timing R, from {ref} pin {outs[0]} (output) to pin {ins[0]} (input)")
    c_ref = _add_passive(plan, "capacitor", design.c, (TIMING_NODE, "VSS"),
                         f"oscillator timing C, from {ref} pin {ins[0]} (input) to VSS")
    return ref, opened, {"input": ins[0], "output": outs[0], "R": r_ref, "C": c_ref,
                         **{f"tied_{i}": p for i, p in enumerate(ins[1:])}}


def _wire_counter_stage(plan, site: Site, part, design) -> tuple[str, bool, dict[str, int]]:
    unit = next(u for u in part.units if u.id == site.unit)
    osc = unit.oscillator
    rs_in, ct_out, rt_out = osc.input, osc.output, osc.output_inv
    if site.ref is None:
        # A spare 4060: its in-phase output (the one driving Ct) clocks the counter.
        pins = {rs_in: "OSC_RS", ct_out: "CLK", rt_out: "OSC_RT"}
        notes = {rs_in: "oscillator input (through Rs to the timing node)",
                 ct_out: "oscillator output driving Ct; also the clock of the counter",
                 rt_out: "oscillator output driving Rt"}
        chip = add_chip(plan, part, "oscillator", {unit.id: "oscillator"}, pins, notes)
        ref, opened, input_net, ct_net = chip.ref, True, "OSC_RS", "CLK"
    else:
        ref, opened, input_net, ct_net = site.ref, False, "CLK", "OSC_CT"
        rewire_pin(plan, ref, ct_out, ct_net, "oscillator output driving Ct")
        rewire_pin(plan, ref, rt_out, "OSC_RT", "oscillator output driving Rt")
        plan.chip(ref).notes[rs_in] = "counter clock and oscillator input (Rs to the timing node)"
    rs = _add_passive(plan, "resistor", design.rs, (input_net, TIMING_NODE),
                      f"oscillator Rs, from {ref} pin {rs_in} to the timing node")
    rt = _add_passive(plan, "resistor", design.rt, ("OSC_RT", TIMING_NODE),
                      f"oscillator Rt, from {ref} pin {rt_out} to the timing node")
    ct = _add_passive(plan, "capacitor", design.ct, (ct_net, TIMING_NODE),
                      f"oscillator Ct, from {ref} pin {ct_out} to the timing node")
    return ref, opened, {"input": rs_in, "output": ct_out, "output_inv": rt_out,
                         "Rs": rs, "Rt": rt, "Ct": ct}


# ---------------------------------------------------------------- the whole step

def _fmax_check(plan, catalog, spec, f_top: float, warnings: list[str], bin) -> float | None:
    """The first counter's fmax at the supply against the fastest corner."""
    first = next((c for c in plan.counter.chips if str(c.clock_net) == "CLK"), None)
    if first is None:
        return None
    fmax, how = counter_fmax_mhz(catalog.parts[first.part], spec.supply)
    if fmax is None:
        warnings.append(f"{first.part}: the catalog gives no maximum clock rate; "
                        f"{format_si(f_top, 'Hz')} is not checked")
        return None
    if f_top > fmax * 1e6:
        raise ShortError(f"the oscillator may run at up to {format_si(f_top, 'Hz')}, above the "
                         f"{first.part}'s maximum clock of {fmax:g} MHz at {spec.supply:g} V ({how})",
                         file=bin.path, hint="lower clock.frequency or use a faster counter")
    return fmax


def add_oscillator(plan, spec, bin, catalog) -> OscillatorPlan:
    """Put the clock oscillator on the plan; raise ShortError when the bin cannot."""
    wanted = float(spec.clock.frequency_hz)
    given = spec.clock.tolerance is not None
    tolerance = spec.clock.tolerance if given else DEFAULT_TOLERANCE
    sites = find_sites(plan, bin, catalog)
    if not sites:
        raise _no_site(spec, bin)
    site = sites[0]
    part = catalog.parts[site.part]
    warnings: list[str] = []
    if site.kind == "counter-stage":
        design = _counter_values(part, spec, bin)
        _check_error(design, wanted, tolerance, bin, given, warnings)
        ref, opened, pins = _wire_counter_stage(plan, site, part, design)
        r, c, rs, f_nom, thresholds = design.rt, design.ct, design.rs, design.freq_hz, None
        corners = []
        f_min, f_max = f_nom * (1 - COUNTER_OSC_SPREAD), f_nom * (1 + COUNTER_OSC_SPREAD)
        formula = COUNTER_FORMULA
        worked = design.formula + f", Rs = {format_si(design.rs, 'Ω')}"
        warnings += design.warnings
        if COUNTER_OSC_SPREAD > tolerance:
            warnings.append(f"a {part.type} RC oscillator varies about ±10 % unit to unit (from "
                            f"memory), more than the {tolerance:.0%} allowed: trim Rt on the bench")
        if site.ref is None:
            warnings.append(f"the spare {part.type} only oscillates: its output pin "
                            f"{pins['output']} (the one driving Ct) clocks the counter "
                            "(a square wave from VSS to VDD, from memory: check on the bench)")
    else:
        design, thresholds = _schmitt_values(site, part, spec, bin, tolerance, given)
        _check_error(design, wanted, tolerance, bin, given, warnings)
        ref, opened, pins = _wire_schmitt(plan, site, part, bin, design)
        r, c, rs = design.r, design.c, None
        f_nom, f_min, f_max = design.freq_typ, design.freq_min, design.freq_max
        formula, worked = PERIOD_FORMULA, design.formula
        corners = [(k.label, k.vt_plus, k.vt_minus, k.freq_hz) for k in design.corners]
        warnings += design.warnings
    if not given:
        warnings.append(f"clock.tolerance not given: {DEFAULT_TOLERANCE:.0%} assumed for the "
                        "oscillator's frequency spread")
    fmax = _fmax_check(plan, catalog, spec, f_max or f_nom, warnings, bin)
    plan.external.pop("CLK", None)
    passives = [v for k, v in pins.items() if isinstance(v, str)]
    oscillator = OscillatorPlan(
        site=site, ref=ref, opened=opened, wanted_hz=wanted, r=r, c=c, rs=rs, f_nom=f_nom,
        f_min=f_min, f_max=f_max, formula=formula, worked=worked, tolerance=tolerance,
        tolerance_given=given,
        thresholds={k: dict(thresholds[k]) for k in ("vt_plus", "vt_minus")} if thresholds else None,
        clock_net="CLK", pins={k: v for k, v in pins.items() if isinstance(v, int)},
        passives=passives, counter_fmax_mhz=fmax, corners=corners, warnings=warnings)
    return oscillator
