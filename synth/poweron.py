"""The power-on reset: an RC into a Schmitt input, holding the counter reset after power-up.

Interface:

- ``add_power_on_reset(plan, spec, bin, catalog) -> PowerOnReset`` (places the
  RC and the Schmitt gate on a packed plan and moves the counters' reset
  pins from their rail onto the new net; the caller then runs
  ``packing.refresh`` and ``check_nets``)
- ``NET``, ``NODE`` (the net names it adds)
- record: ``PowerOnReset``

At power-up C is empty.  For an active-high reset (4040, 4060, 4520) R runs
from VDD to the node and C from the node to VSS: the node starts at 0 V, the
inverter's output holds the reset high until the node charges past VT+, so
the pulse lasts t = R C ln(VDD / (VDD - VT+)).  For an active-low reset
(74HC161 CLR) C runs from VDD to the node and R to VSS: the node starts at
VDD and the output holds the reset low until it falls below VT-,
t = R C ln(VDD / VT-) (the RC time constant law, common practice).  R and C
come from the bin through ``analog.rc_delay_design`` at the Schmitt part's
catalog thresholds; the pulse is reported at the thresholds' min, typ and
max.  A counter whose reset pin the decode already drives (a cycle shorter
than the counter) cannot take it: that is an input error naming the spec line.
"""

from __future__ import annotations


from .analog import rc_delay_design, thresholds_at
from .analogparts import POWER_ON_NET, PowerOnReset
from .clocksource import place_schmitt, spare_schmitt_sites
from .errors import ShortError, SpecError
from .netlist import RAIL_NETS, Passive
from .packing import rewire_pin
from .units import format_si

__all__ = ["PowerOnReset", "add_power_on_reset", "NET", "NODE"]

NET = POWER_ON_NET   # the Schmitt output: the counters' reset
NODE = "POR_RC"      # the RC node: the Schmitt input


def _resets(plan, spec) -> tuple[str, list[tuple[str, int, str]]]:
    """Every counter reset pin (ref, pin, rail it is tied to) and their common active level."""
    found, levels = [], set()
    for cc in plan.counter.chips:
        if cc.reset_pin is None:
            continue
        net = plan.chip(cc.ref).pins.get(int(cc.reset_pin))
        if net not in RAIL_NETS:
            raise SpecError(f"power_on_reset: {cc.ref} ({cc.part})'s reset pin {cc.reset_pin} is already "
                            f"driven by the decode (net {net}) to shorten its count",
                            file=spec.path, hint="drop power_on_reset, or use a counter whose own "
                                                 "length is the cycle")
        unit = next(u for u in plan.part_of(cc.ref).units_of("counter") if str(u.id) == str(cc.unit))
        levels.add(unit.reset.active)
        found.append((cc.ref, int(cc.reset_pin), net))
    if not found:
        raise SpecError("power_on_reset: the plan's counters have no reset pin to hold", file=spec.path,
                        hint="drop power_on_reset")
    if len(levels) > 1:
        raise SpecError("power_on_reset: the counters' resets are active high and low at once",
                        file=spec.path, hint="drop power_on_reset, or use counters of one kind")
    return levels.pop(), found


def _next_ref(plan, letter: str) -> str:
    numbers = [int(p.ref[1:]) for p in plan.passives if p.ref[0] == letter]
    return f"{letter}{max(numbers, default=0) + 1}"


def add_power_on_reset(plan, spec, bin, catalog) -> PowerOnReset:
    """Put the power-on reset on the plan; raise ShortError when the bin cannot."""
    active, resets = _resets(plan, spec)
    sites = spare_schmitt_sites(plan, bin, catalog)
    if not sites:
        raise ShortError("power_on_reset needs a Schmitt-trigger gate (40106, 74HC14, 4093, 74HC132) "
                         "and the bin has none spare", file=bin.path,
                         hint="add a 40106 or 74HC14 to the bin, or drop power_on_reset")
    site = sites[0]
    part = catalog.parts[site.part]
    thresholds = thresholds_at(part.thresholds, spec.supply)
    edge = "rising" if active == "high" else "falling"
    try:
        design = rc_delay_design(spec.power_on_reset, supply=spec.supply, thresholds=thresholds,
                                 resistors=bin.resistors, capacitors=bin.capacitors, edge=edge)
    except ShortError as exc:
        raise ShortError(f"power_on_reset needs R and C: {exc.message}", file=bin.path,
                         hint=exc.hint) from exc
    ref, opened, ins, outs = place_schmitt(
        plan, site, part, NODE, NET, "power-on reset",
        "power-on reset input: the RC node", f"power-on reset output: holds the counter reset {active}")
    r_ref, c_ref = _next_ref(plan, "R"), _next_ref(plan, "C")
    if active == "high":
        r_ends, c_ends = ("VDD", NODE), (NODE, "VSS")
        how = "R from VDD, C to VSS: the node charges from 0 V"
    else:
        r_ends, c_ends = (NODE, "VSS"), ("VDD", NODE)
        how = "C from VDD, R to VSS: the node starts at VDD and discharges"
    plan.passives.append(Passive(r_ref, "resistor", design.r, r_ends, f"power-on reset R ({how})"))
    plan.passives.append(Passive(c_ref, "capacitor", design.c, c_ends,
                                 f"power-on reset C, at {ref} pin {ins[0]} ({how})"))
    for chip_ref, pin, _ in resets:
        rewire_pin(plan, chip_ref, pin, NET, f"reset: held {active} by the power-on reset for "
                                             f"{format_si(design.delay_typ, 's')} after power-up")
    spread = design.rising if edge == "rising" else design.falling
    warnings = list(design.warnings)
    warnings.append("a power-on reset restarts cleanly only after C has emptied: after switching "
                    "off, wait several R C (a diode across R, cathode to VDD, empties it at once; "
                    "common practice)")
    plan.external.pop(NET, None)
    return PowerOnReset(
        wanted_s=spec.power_on_reset, active=active, part=part.type, ref=ref, unit=site.unit,
        opened=opened, r=design.r, c=design.c, width_s=(spread.min, spread.typ, spread.max),
        formula=design.formula, thresholds={k: dict(thresholds[k]) for k in ("vt_plus", "vt_minus")},
        resets=[(r, p) for r, p, _ in resets],
        pins={"input": ins[0], "output": outs[0], **{f"tied_{i}": p for i, p in enumerate(ins[1:])}},
        passives=[r_ref, c_ref], warnings=warnings)
