"""The stages of a plan, each a function from records to records.

Interface: ``counted_first(spec, stock, catalog) -> CounterPlan`` (every
shortage countable before mapping, at once), ``mapping_inputs(...)`` (the
library with the counters' and switches' chips reserved, and the polarities
the mapper sees), ``map_decode(...) -> Network``, ``add_analog_parts(plan,
spec, stock, catalog) -> Plan`` (a new plan: oscillator, power-on reset, staircases, re-checked),
``switch_polarity(spec)``, ``reserved_chips(...)``, ``switch_sections(...)`` and
``async_reset_names(counter_plan)``.

These are the steps; the order they run in is ``synth.flow``'s alone, and
re-planning (glitch remedies, what the bin lacks) asks ``flow`` to run them
again with changed inputs instead of calling them in its own order.
"""

from __future__ import annotations

import dataclasses

from .clocksource import add_oscillator
from .counter import CounterPlan, allocate
from .decode import Decode
from .errors import Shortage, ShortError
from .inventory import Bin, Catalog
from .mapper import Library, build_library, map_design
from .netlist import Plan, check_nets
from .network import Network
from .packing import refresh, working_copy
from .poweron import add_power_on_reset
from .spec import Spec
from .staircase import add_ladders


def switch_polarity(spec: Spec) -> dict[str, str]:
    """Each signal's polarity for the mapper: as the spec says.

    A signal that only drives a switch and says ``polarity: free`` may come
    out either way up: packing then swaps the switch's throws instead of
    spending an inverter.
    """
    return {name: sig.polarity for name, sig in spec.signals.items()}


def reserved_chips(counter_plan: CounterPlan, spec: Spec, stock: Bin, catalog: Catalog) -> dict[str, int]:
    """Chips the counters and the spec's switches take before logic is mapped."""
    reserved: dict[str, int] = {}
    for _, part in {(chip.ref, chip.part) for chip in counter_plan.chips}:
        reserved[part] = reserved.get(part, 0) + 1
    for part, count in _switch_chips(spec, stock, catalog).items():
        reserved[part] = reserved.get(part, 0) + count
    return {p: n for p, n in reserved.items() if n}


def _switch_chips(spec: Spec, stock: Bin, catalog: Catalog) -> dict[str, int]:
    """How many switch chips the spec's switches need (SPDT sections first)."""
    return {part: chips for part, (chips, _) in _switch_use(spec, stock, catalog).items()}


def switch_sections(spec: Spec, stock: Bin, catalog: Catalog) -> dict[str, int]:
    """SPDT sections the spec's switches take per part type (the rest may serve as logic)."""
    return {part: used for part, (_, used) in _switch_use(spec, stock, catalog).items()
            if catalog.parts[part].units_of("spdt")}


def _switch_use(spec: Spec, stock: Bin, catalog: Catalog) -> dict[str, tuple[int, int]]:
    """Per switch part type: (chips, sections) the spec's switches take, SPDT sections first."""
    wanted = len(spec.switches)
    if not wanted:
        return {}
    taken: dict[str, tuple[int, int]] = {}
    for unit_types, per_switch in ((("spdt",), 1), (("spst",), 2), (("analog_mux",), 1)):
        for part_type, count in sorted(stock.parts.items()):
            part = catalog.parts[part_type]
            sections = len(part.units_of(*unit_types))
            if not sections or wanted <= 0:
                continue
            per_chip = sections // per_switch
            if not per_chip:
                continue
            need = min(count, -(-wanted // per_chip))
            taken[part_type] = (need, min(wanted, need * per_chip) * per_switch)
            wanted -= need * per_chip
    return taken


def counted_first(spec: Spec, stock: Bin, catalog: Catalog) -> CounterPlan:
    """Every shortage that can be counted before mapping, reported at once.

    Counter stages (the counter allocation), analog switch sections, resistors
    for the staircases, and resistors and capacitors for the clock oscillator:
    one ``ShortError`` naming each missing item and what fills it, so a user
    does not fix one and meet the next.  Returns the counter plan.
    """
    found: list[tuple[str, Shortage]] = []
    counter_plan = None
    try:
        counter_plan = allocate(spec, stock, catalog)
    except ShortError as exc:
        if not _other_shortages(spec, stock, catalog):
            raise
        found.append((exc.message, Shortage("counter stages", None, None, exc.hint or "")))
    found += _other_shortages(spec, stock, catalog)
    if not found:
        return counter_plan
    message = "; ".join(text for text, _ in found)
    fixes = "; ".join(item.fix for _, item in found if item.fix)
    raise ShortError(f"the bin lacks {len(found)} thing(s) this spec needs: {message}" if len(found) > 1
                     else message, file=stock.path, hint=fixes or None,
                     short=tuple(item for _, item in found))


def _other_shortages(spec: Spec, stock: Bin, catalog: Catalog) -> list[tuple[str, Shortage]]:
    """Switch sections, ladder resistors, oscillator R and C: (text, Shortage) each."""
    found = []
    wanted = len(spec.switches)
    if wanted:
        have = _switch_sections(stock, catalog)
        if have < wanted:
            found.append((f"{wanted} switch(es) need {wanted} analog switch section(s) and the bin has "
                          f"{have}", Shortage("analog switch section", wanted, have,
                                              f"{-(-(wanted - have) // 3)} x 4053 (triple SPDT)")))
    users = [f"the staircase(s) {', '.join(sorted(spec.levels))}"] if spec.levels else []
    if spec.clock.source == "oscillator":
        users.append("the clock oscillator")
        if not stock.capacitors:
            found.append(("the clock oscillator needs a capacitor and the bin lists none",
                          Shortage("capacitor", 1, 0, "capacitors such as 'capacitors: [1n, 10n]'")))
    if users and not stock.resistors:
        found.append((f"{' and '.join(users)} need resistors and the bin lists none",
                      Shortage("resistor", None, 0, "resistors such as 'resistors: [10k, 22k, 47k, 100k]'")))
    return found


def _switch_sections(stock: Bin, catalog: Catalog) -> int:
    """Spec switches the bin's analog switch chips can serve (SPDT, SPST pairs, muxes)."""
    total = 0
    for part_type, count in stock.parts.items():
        part = catalog.parts[part_type]
        total += count * (len(part.units_of("spdt")) + len(part.units_of("spst")) // 2
                          + len(part.units_of("analog_mux")))
    return total


def mapping_inputs(spec: Spec, stock: Bin, catalog: Catalog, counter_plan: CounterPlan,
                   decode: Decode) -> tuple[Library, dict[str, str]]:
    """The library (counter and switch chips reserved) and polarities the mapper sees."""
    library = build_library(stock, catalog, reserved=reserved_chips(counter_plan, spec, stock, catalog),
                            switch_sections=switch_sections(spec, stock, catalog))
    polarity = switch_polarity(spec)
    for function in decode.functions:
        polarity.setdefault(function.name, _internal_polarity(counter_plan, function.name))
    return library, polarity


def map_decode(decode: Decode, counter_plan: CounterPlan, library: Library, polarity: dict[str, str], exact: str,
               effort: str | None = None) -> Network:
    """The decode mapped onto the library; an async reset decode must be hazard-free."""
    return map_design(decode.functions, len(counter_plan.vars), [v.net for v in counter_plan.vars],
                      library, polarity=polarity, cover=decode.cover, exact=exact, effort=effort,
                      glitch_free=async_reset_names(counter_plan))


def add_analog_parts(plan: Plan, spec: Spec, stock: Bin, catalog: Catalog) -> Plan:
    """A new plan: the packed one with the clock oscillator, the power-on reset and the
    staircases added, re-checked (the plan given stays as it was)."""
    wants_oscillator = spec.clock.source == "oscillator"
    if wants_oscillator and not plan.counter.chips:
        plan = dataclasses.replace(plan, warnings=(*plan.warnings, "clock.source: oscillator, but a cycle "
                                                   "of 1 tick needs no clock"))
        wants_oscillator = False
    wants_reset = bool(spec.power_on_reset) and bool(plan.counter.chips)
    if not wants_oscillator and not spec.levels and not wants_reset:
        return plan
    plan = working_copy(plan)
    if wants_oscillator:
        oscillator = add_oscillator(plan, spec, stock, catalog)
        plan = refresh(dataclasses.replace(plan, oscillator=oscillator), stock)
        plan = dataclasses.replace(plan, warnings=(*plan.warnings, *(f"oscillator: {w}" for w in oscillator.warnings)))
    if wants_reset:
        reset = add_power_on_reset(plan, spec, stock, catalog)
        plan = refresh(dataclasses.replace(plan, power_on_reset=reset), stock)
        plan = dataclasses.replace(plan, warnings=(*plan.warnings, *(f"power-on reset: {w}" for w in reset.warnings)))
    if spec.levels:
        ladders = add_ladders(plan, spec, stock, catalog)
        plan = dataclasses.replace(plan, ladders=ladders, warnings=(
            *plan.warnings, *(w for ladder in ladders.values() for w in ladder.warnings)))
    plan = refresh(plan, stock)
    if plan.power_on_reset is not None:
        cautions = [c for c in plan.cautions if not c.startswith("At power-up the counter starts")]
        cautions.append("At power-up the power-on reset holds the counter at tick 0 for about "
                        f"{plan.power_on_reset.width_s[1] * 1e3:.3g} ms; after switching off, wait "
                        "a few seconds before switching on again so its capacitor can empty.")
        plan = dataclasses.replace(plan, cautions=tuple(cautions))
    check_nets(plan)
    return plan


def async_reset_names(counter_plan: CounterPlan) -> tuple[str, ...]:
    """A decoded asynchronous reset must not pulse on a counter step (it would clear the count)."""
    carries = tuple(c.name for c in counter_plan.carries)   # a decoded count enable must not pulse either
    reset = counter_plan.reset
    if reset is None or reset.synchronous or reset.direct:
        return carries
    return (reset.name, *carries)


def _internal_polarity(counter_plan: CounterPlan, name: str) -> str:
    """The counter reset decode must meet the reset pin's active level."""
    reset = counter_plan.reset
    if reset is not None and reset.name == name:
        return reset.active
    return "high"


