"""Packing: counters, gates and switch routes onto chip instances and pins.

Interface: ``pack(network, counter_plan, spec, bin, catalog) -> Plan`` (refs:
counter chips as the counter plan named them, then logic chips, then switch
chips; every unused input tied, unused outputs open, power and chip-level
ties wired, a 100 nF decoupling capacitor listed per chip; the plan passes
``check_nets`` and ``self_check`` before it is returned); ``unit_logic_pins(unit)``;
``spec_net(name)``; ``check_nets`` (re-exported from ``netlist``).
Later stages that add parts to a packed plan (the clock oscillator, the
ladders) use ``add_chip(plan, part, role, units, pins, notes)`` (a new chip,
finished like the others) and ``rewire_pin(plan, ref, pin, net, note)`` (a spare
unit's pin taken off its tie) on a ``working_copy(plan)``, then
``refresh(plan, bin) -> Plan`` (a new record: nets, BOM, decoupling and cautions
rebuilt from the chips and passives).

Switch routing, for each spec switch in turn: an SPDT section; else two SPST
sections with complementary controls (the complement comes from the network,
a spare inverting unit of a logic chip already used, or a new inverting chip
from the bin); else a channel pair of an analog mux.  The select's delivered
polarity decides which throw gets ``on``, so the common joins ``on`` exactly
while the select is asserted.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass, field

from .counter import CounterChip, CounterPlan, carry_nets
from .errors import InternalError, ShortError, SpecError
from .inventory import Bin, Catalog, Part, Unit
from .netlist import (CLOCK_NET, RAIL_NETS, BoardSignal, BoardSwitch, ChipInstance, Plan, SwitchPath, check_nets, is_passive, pin_direction,
                      pin_directions, ref_key, self_check)
from .network import Gate, Network, SignalOut, evaluate_gate, fresh_name
from .spec import Spec, SwitchSpec

__all__ = ["pack", "place_logic", "unit_logic_pins", "flipflop_controls", "spec_net", "check_nets", "add_chip", "rewire_pin", "refresh",
           "working_copy"]

# Common practice: an unused CMOS input is tied to a rail, never left floating;
# either rail is fine for a gate input, and binsynth always uses VSS.
UNUSED_INPUT_LEVEL = "VSS"
DECOUPLING = "100 nF ceramic"


# ---------------------------------------------------------------- unit pins

def unit_logic_pins(unit: Unit) -> tuple[list[int], list[int], dict[int, str]]:
    """A logic unit's input pins and output pins in the order ``Gate`` lists
    its nets, and the pins that must be held (a mux enable at its active level).
    """
    held: dict[int, str] = {}
    if unit.type in ("inverter", "buffer"):
        return list(unit.inputs), [unit.output], held
    if unit.type == "gate":
        outs = [unit.output] + ([unit.also.output] if unit.also else [])
        return list(unit.inputs), outs, held
    if unit.type == "mux":
        if unit.enable:
            held[unit.enable.pin] = _level(unit.enable.active)
        outs = [unit.output] + ([unit.output_inv] if unit.output_inv else [])
        return list(unit.data) + list(unit.selects), outs, held
    if unit.type == "decoder":
        enables = [e.pin for e in unit.enables]
        return list(unit.selects) + enables, list(unit.outputs), held
    if unit.type == "flipflop":
        controls = [c.pin for c in (unit.set, unit.reset) if c]
        outs = [unit.q] + ([unit.qn] if unit.qn else [])
        return [unit.d, unit.clock.pin] + controls, outs, held
    return [], [], held


def flipflop_controls(unit: Unit) -> tuple[str, ...]:
    """A flip-flop unit's set and reset pins as ``Gate.enables_active`` names them
    (``set:low``, ``reset:low``), in ``unit_logic_pins`` order."""
    return tuple(f"{name}:{control.active}" for name, control in (("set", unit.set), ("reset", unit.reset))
                 if control is not None)


def _level(active: str) -> str:
    return "VDD" if active == "high" else "VSS"


def spec_net(name: str) -> str:
    """The board net for a spec switch's ``on``/``off`` name (GND is VSS).

    >>> [spec_net(n) for n in ("GND", "gnd", "VDD", "ladder_out")]
    ['VSS', 'VSS', 'VDD', 'ladder_out']
    """
    upper = str(name).upper()
    if upper in ("GND", "VSS"):
        return "VSS"
    if upper == "VDD":
        return "VDD"
    return str(name)


# ---------------------------------------------------------------- the board being built

@dataclass
class _Chip:
    part: Part
    role: str
    ref: str | None = None
    pins: dict[int, str] = field(default_factory=dict)
    notes: dict[int, str] = field(default_factory=dict)
    units_used: dict[str, str] = field(default_factory=dict)

    def fits(self, assignment: dict[int, str]) -> bool:
        """Whether the pins are free or already carry the same net (shared selects)."""
        return all(self.pins.get(pin, net) == net for pin, net in assignment.items())

    def place(self, unit_id: str, purpose: str, assignment: dict[int, str],
              notes: dict[int, str] | None = None) -> None:
        self.units_used[unit_id] = purpose
        self.pins.update(assignment)
        for pin, note in (notes or {}).items():
            self.notes.setdefault(pin, note)

    def set_pin(self, pin: int, net: str, note: str) -> None:
        if self.pins.get(pin, net) != net:
            raise InternalError(f"{self.ref or self.part.type} pin {pin} would be on both "
                                f"{self.pins[pin]} and {net}")
        self.pins[pin] = net
        self.notes.setdefault(pin, note)


@dataclass
class _Board:
    catalog: Catalog
    bin: Bin
    chips: list[_Chip] = field(default_factory=list)
    added_gates: list[Gate] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    signal_nets: dict[str, str] = field(default_factory=dict)

    def net_for(self, value: str) -> str:
        """A switch's on/off name as a board net: a rail, a spec signal's net, or itself."""
        net = spec_net(value)
        return self.signal_nets.get(net, net)

    def spare(self, part_type: str) -> int:
        taken = sum(1 for c in self.chips if c.part.type == part_type)
        return self.bin.count(part_type) - taken

    def open(self, part: Part, role: str, ref: str | None = None) -> _Chip:
        if self.spare(part.type) <= 0:
            raise ShortError(f"the plan needs {self.bin.count(part.type) + 1} x {part.type} "
                             f"({part.function}) but the bin has {self.bin.count(part.type)}",
                             file=self.bin.path, hint=f"add one more {part.type} to the bin")
        chip = _Chip(part, role, ref)
        self.chips.append(chip)
        return chip

    def of_role(self, role: str) -> list[_Chip]:
        return [c for c in self.chips if c.role == role]

    def bin_parts(self, *unit_types: str) -> list[Part]:
        """Parts in the bin with a unit of one of these types, by type name."""
        return [self.catalog.parts[t] for t in sorted(self.bin.parts)
                if t in self.catalog.parts and self.catalog.parts[t].units_of(*unit_types)]


# ---------------------------------------------------------------- counters

def _place_counters(board: _Board, counter_plan: CounterPlan, network: Network) -> None:
    """Counter chips keep the refs the counter plan gave them; every pin it names is wired."""
    reset_net = _reset_net(counter_plan, network)
    decoded_enables = carry_nets(counter_plan, network)
    by_ref: dict[str, _Chip] = {}
    for cc in counter_plan.chips:
        part = _catalog_part(board.catalog, cc.part)
        chip = by_ref.get(cc.ref)
        if chip is None:
            chip = by_ref[cc.ref] = board.open(part, "counter", cc.ref)
        chip.units_used[str(cc.unit)] = "counter"
        chip.set_pin(int(cc.clock_pin), str(cc.clock_net), "counter clock input")
        if cc.reset_pin is not None:
            net = str(cc.reset_net or "VSS")
            if net in RAIL_NETS:
                chip.set_pin(int(cc.reset_pin), net, "reset held inactive (the count runs freely)")
            else:
                chip.set_pin(int(cc.reset_pin), reset_net.get(net, net), "counter reset")
        enable_pin, enable_net = cc.enable_pin, cc.enable_net
        carried = cc.count_enable_pins
        if enable_pin is not None and enable_net:
            note = ("enable held active for plain counting" if enable_net in RAIL_NETS
                    else "counts on this input")
            if _counts_on_carry(part, cc):
                note = "count enable from the unit below's carry (TC): a synchronous cascade"
            if enable_net in decoded_enables:
                enable_net = decoded_enables[enable_net]
                note = "count enable: every unit below at its last count (a synchronous cascade)"
            chip.set_pin(int(enable_pin), str(enable_net), note)
            for pin in carried:
                chip.set_pin(int(pin), str(enable_net), note)
        carry_net = cc.carry_net
        if carry_net:
            unit = next(u for u in part.units if str(u.id) == str(cc.unit))
            chip.set_pin(int(unit.carry_out), str(carry_net),
                         "carry out (TC) to the next unit's count enables")
        for pin, level in cc.ties.items():
            chip.set_pin(int(pin), str(level), f"held at {level} for plain counting")
    for var in counter_plan.vars:
        chip = by_ref.get(_chip_ref(counter_plan, var.chip))
        if chip is None:
            raise InternalError(f"counter variable {var.net} names chip {var.chip}, "
                                "which the counter plan does not list")
        chip.set_pin(int(var.pin), str(var.net), f"counter output {var.pin_name}".strip())
    reset = counter_plan.reset
    direct = reset.direct_pin if reset is not None and reset.direct else None
    if direct is not None:
        chip = by_ref[direct[0]]
        chip.set_pin(int(direct[1]), reset_net.get(reset.net, reset.net), "drives the counter reset")


def _counts_on_carry(part: Part, cc: CounterChip) -> bool:
    """Whether a counter unit's enable pin is one of its count enables on a carry net."""
    unit = next((u for u in part.units if str(u.id) == str(cc.unit)), None)
    pins = unit.count_enable if unit is not None else ()
    return cc.enable_pin in pins and str(cc.enable_net) not in RAIL_NETS


def _chip_ref(counter_plan: CounterPlan, chip: CounterChip) -> str:
    """A counter variable's chip: an index into ``counter_plan.chips`` or a ref."""
    if isinstance(chip, int) and not isinstance(chip, bool):
        return counter_plan.chips[chip].ref
    return str(chip)


def _reset_net(counter_plan: CounterPlan, network: Network) -> dict[str, str]:
    """The board net of the counter reset: the mapped reset decode's net, or the
    counter output that drives the reset pins directly."""
    reset = counter_plan.reset
    if reset is None:
        return {}
    if reset.direct and reset.direct_pin:
        ref, pin = reset.direct_pin
        for var in counter_plan.vars:
            if _chip_ref(counter_plan, var.chip) == ref and int(var.pin) == int(pin):
                return {reset.net: var.net}
        return {}
    decoded = network.signals.get(reset.name)
    if decoded is None:
        return {}
    if decoded.polarity != reset.active:
        raise InternalError(f"the counter reset decode {reset.name} is delivered active "
                            f"{decoded.polarity}, the reset pins want active {reset.active}")
    return {reset.net: decoded.net}


def _catalog_part(catalog: Catalog, part_type: str) -> Part:
    try:
        return catalog.parts[part_type]
    except KeyError:
        raise InternalError(f"part {part_type} is not in the catalog handed to packing") from None


# ---------------------------------------------------------------- logic gates

def _matches(unit: Unit, gate: Gate) -> bool:
    ins, outs, _ = unit_logic_pins(unit)
    return (unit.op == gate.op and len(ins) == len(gate.inputs) and 0 < len(gate.outputs) <= len(outs))


def _gate_assignment(unit: Unit, gate: Gate) -> tuple[dict[int, str], dict[int, str]]:
    ins, outs, held = unit_logic_pins(unit)
    assignment: dict[int, str] = {}
    notes: dict[int, str] = {}
    controls = flipflop_controls(unit) if unit.type == "flipflop" else ()
    for index, (pin, net) in enumerate(zip(ins, gate.inputs)):
        if not net:
            raise InternalError(f"gate {gate.id} leaves an input without a net")
        assignment[pin] = net
        if index >= 2 and controls and net in RAIL_NETS:
            notes[pin] = f"{controls[index - 2].split(':')[0]} held inactive ({net})"
        elif net in RAIL_NETS:
            notes[pin] = f"input held at {net} (part of gate {gate.id}'s function)"
    for pin, net in zip(outs, gate.outputs):
        if net:
            assignment[pin] = net
        else:
            notes[pin] = "output not needed, left open"
    for pin, level in held.items():
        assignment[pin] = level
        notes[pin] = f"enable held active ({level})"
    return assignment, notes


def _place_gate(board: _Board, gate: Gate) -> None:
    """Put a gate on the first free matching unit, opening a chip only when none is left."""
    part = _catalog_part(board.catalog, gate.part)
    units = [u for u in part.units if _matches(u, gate)]
    if not units:
        raise InternalError(f"gate {gate.id}: part {gate.part} has no {gate.op} unit with "
                            f"{len(gate.inputs)} inputs")
    for chip in board.of_role("logic"):
        if chip.part.type == gate.part and _try_units(chip, units, gate):
            return
    chip = board.open(part, "logic")
    if not _try_units(chip, units, gate):
        raise InternalError(f"gate {gate.id} fits no unit of an empty {gate.part}")


def _try_units(chip: _Chip, units: list[Unit], gate: Gate) -> bool:
    for unit in units:
        if unit.id in chip.units_used:
            continue
        assignment, notes = _gate_assignment(unit, gate)
        if chip.fits(assignment):
            chip.place(unit.id, gate.id, assignment, notes)
            return True
    return False


# ---------------------------------------------------------------- switches

@dataclass
class _Route:
    """One spec switch as the packing wires it (before refs are known)."""

    name: str
    spec: SwitchSpec
    kind: str
    sections: list[tuple[_Chip, str]]
    control_net: str
    common_net: str
    when_control_high: str
    paths: list[SwitchPath]
    complement_net: str = ""


def _route_switches(board: _Board, network: Network, spec: Spec, internal_nets: set[str]) -> list[_Route]:
    routes = []
    for name, sw in spec.switches.items():
        select = network.signals.get(sw.select)
        if select is None:
            raise InternalError(f"switch {name}: its select signal {sw.select} was not mapped")
        _check_switch_names(name, sw, spec, internal_nets)
        route = (_route_spdt(board, name, sw, select)
                 or _route_spst_pair(board, network, name, sw, select)
                 or _route_mux(board, name, sw, select))
        if route is None:
            raise ShortError(f"switch {name} needs an analog switch section and the bin has none free",
                             file=board.bin.path,
                             hint="add a 4053 (triple SPDT), or a 4066 with a spare inverter, "
                                  "or a 4051/4052 analog mux")
        routes.append(route)
    return routes


def _check_switch_names(name: str, sw: SwitchSpec, spec: Spec, internal_nets: set[str]) -> None:
    """A switch's outside nets must not collide with the board's own net names."""
    signals = set(spec.signals)
    for label, net in (("name", name), ("on", sw.on), ("off", sw.off)):
        board_net = spec_net(net) if label != "name" else name
        if board_net in RAIL_NETS or (label != "name" and board_net in signals):
            continue
        if board_net in internal_nets:
            raise SpecError(f"switch {name}: {label} net {net!r} has the name of an internal net "
                            "of the plan", file=spec.path, line=sw.line,
                            hint="rename it, e.g. with an '_ext' ending")


def _throw_nets(sw: SwitchSpec, active_high: bool) -> tuple[str, str]:
    """(spec net joined while the control is high, spec net joined while low)."""
    return (sw.on, sw.off) if active_high else (sw.off, sw.on)


def _route_spdt(board: _Board, name: str, sw: SwitchSpec, select: SignalOut) -> _Route | None:
    high, low = _throw_nets(sw, select.polarity == "high")

    def assignment(unit: Unit) -> dict[int, str]:
        return {unit.control: select.net, unit.common: name,
                unit.throws.high: board.net_for(high), unit.throws.low: board.net_for(low)}

    placed = _place_section(board, ("spdt",), name, assignment)
    if placed is None:
        return None
    unit = _unit(*placed)
    _note(placed[0], {unit.throws.high: f"switch {name}: joins the common while the control is high ({high})",
                      unit.throws.low: f"switch {name}: joins the common while the control is low ({low})",
                      unit.common: f"switch {name} common"})
    paths = [SwitchPath(select.net, True, high), SwitchPath(select.net, False, low)]
    return _Route(name, sw, "spdt", [placed], select.net, name, high, paths)


def _route_spst_pair(board: _Board, network: Network, name: str, sw: SwitchSpec,
                     select: SignalOut) -> _Route | None:
    if _free_sections(board, "spst") < 2:
        return None
    complement = _complement_net(board, network, select.net, name)
    active_high = select.polarity == "high"
    sections, paths = [], []
    for joins, closed_while_asserted in ((sw.on, True), (sw.off, False)):
        def assignment(unit: Unit, joins: str = joins, closed: bool = closed_while_asserted) -> dict[int, str]:
            closes_high = unit.on_when == "high"
            # The section must close exactly while (select asserted) == closed.
            follow_select = closes_high == (active_high == closed)
            control = select.net if follow_select else complement
            first, second = unit.terminals
            return {unit.control: control, first: name, second: board.net_for(joins)}

        placed = _place_section(board, ("spst",), name, assignment)
        if placed is None:
            raise InternalError(f"switch {name}: counted two free SPST sections but found one")
        chip, unit_id = placed
        unit = _unit(*placed)
        control = chip.pins[unit.control]
        _note(chip, {unit.terminals[1]: f"switch {name}: joins the common while "
                                        f"{'asserted' if closed_while_asserted else 'not asserted'} ({joins})",
                     unit.terminals[0]: f"switch {name} common"})
        paths.append(SwitchPath(control, unit.on_when == "high", joins))
        sections.append(placed)
    high, _ = _throw_nets(sw, active_high)
    board.warnings.append(
        f"switch {name} uses two SPST sections with complementary controls (no SPDT section left "
        f"in the bin): for about one gate delay at each change of {sw.select} both sections may "
        f"conduct at once, joining {sw.on} to {sw.off} through two on-resistances (common practice)")
    return _Route(name, sw, "spst pair", sections, select.net, name, high, paths, complement)


def _route_mux(board: _Board, name: str, sw: SwitchSpec, select: SignalOut) -> _Route | None:
    high, low = _throw_nets(sw, select.polarity == "high")

    def assignment(unit: Unit) -> dict[int, str]:
        selects, channels = unit.selects, unit.channels
        pins = {selects[0]: select.net, unit.common: name,
                channels[0]: board.net_for(low), channels[1]: board.net_for(high)}
        pins.update({pin: "VSS" for pin in selects[1:]})
        pins.update({pin: "VSS" for pin in channels[2:]})
        return pins

    placed = _place_section(board, ("analog_mux",), name, assignment)
    if placed is None:
        return None
    unit = _unit(*placed)
    channels = unit.channels
    _note(placed[0], {channels[1]: f"switch {name}: joins the common while the select is high ({high})",
                      channels[0]: f"switch {name}: joins the common while the select is low ({low})",
                      unit.common: f"switch {name} common"})
    _note(placed[0], {pin: "select held at VSS: only channels 0 and 1 are used" for pin in unit.selects[1:]})
    paths = [SwitchPath(select.net, True, high), SwitchPath(select.net, False, low)]
    board.warnings.append(f"switch {name} uses channels 0 and 1 of an analog mux "
                          "(no SPDT or SPST sections left in the bin)")
    return _Route(name, sw, "mux channel", [placed], select.net, name, high, paths)


def _unit(chip: _Chip, unit_id: str) -> Unit:
    return next(u for u in chip.part.units if u.id == unit_id)


def _note(chip: _Chip, notes: dict[int, str]) -> None:
    for pin, note in notes.items():
        chip.notes.setdefault(pin, note)


def _place_section(board: _Board, types: tuple[str, ...], purpose: str,
                   assignment_of: Callable[[Unit], dict[int, str]]) -> tuple[_Chip, str] | None:
    """Fill switch chips already opened before opening a new one."""
    for chip in board.of_role("switch"):
        placed = _try_section(chip, types, purpose, assignment_of)
        if placed:
            return placed
    for part in board.bin_parts(*types):
        if board.spare(part.type) > 0:
            chip = board.open(part, "switch")
            placed = _try_section(chip, types, purpose, assignment_of)
            if placed:
                return placed
            board.chips.remove(chip)
    return None


def _try_section(chip: _Chip, types: tuple[str, ...], purpose: str,
                 assignment_of: Callable[[Unit], dict[int, str]]) -> tuple[_Chip, str] | None:
    for unit in chip.part.units_of(*types):
        if unit.id in chip.units_used:
            continue
        if unit.type == "analog_mux" and len(unit.channels) < 2:
            continue
        assignment = assignment_of(unit)
        if chip.fits(assignment):
            chip.place(unit.id, f"switch {purpose}", assignment)
            return chip, unit.id
    return None


def _free_sections(board: _Board, unit_type: str) -> int:
    free = sum(len([u for u in c.part.units_of(unit_type) if u.id not in c.units_used])
               for c in board.of_role("switch"))
    return free + sum(board.spare(p.type) * len(p.units_of(unit_type)) for p in board.bin_parts(unit_type))


# ---------------------------------------------------------------- switch sections as logic

def is_switch_gate(gate: Gate, catalog: Catalog) -> bool:
    """A 2:1 mux gate the mapper put on an analog switch's SPDT section."""
    part = catalog.parts.get(gate.part)
    return gate.op == "mux" and part is not None and bool(part.units_of("spdt")) \
        and not any(u.type == "mux" for u in part.units)


def _place_switch_gate(board: _Board, gate: Gate) -> None:
    """A switch section as a 2:1 mux: control on the select, the low throw on data 0,
    the high throw on data 1, the common is the output (4053 function table: control
    low joins the common to the low throw).  Switch chips the spec's switches opened
    come first, so the section shares their package."""
    d0, d1, select = gate.inputs
    notes_of = {}

    def assignment(unit: Unit) -> dict[int, str]:
        notes_of[unit.id] = {unit.control: f"gate {gate.id}: control (select {select})",
                             unit.throws.low: f"gate {gate.id}: joins the output while the control is low",
                             unit.throws.high: f"gate {gate.id}: joins the output while the control is high",
                             unit.common: f"gate {gate.id}: output (drive CMOS inputs only)"}
        return {unit.control: select, unit.throws.low: d0, unit.throws.high: d1, unit.common: gate.output}

    part = _catalog_part(board.catalog, gate.part)
    chips = [c for c in board.of_role("switch") if c.part.type == part.type]
    for chip in chips + [None]:
        if chip is None:
            chip = board.open(part, "switch")
        for unit in chip.part.units_of("spdt"):
            if unit.id in chip.units_used:
                continue
            wiring = assignment(unit)
            if chip.fits(wiring):
                chip.place(unit.id, gate.id, wiring, notes_of[unit.id])
                return
    raise InternalError(f"gate {gate.id} fits no SPDT section of a {gate.part}")


# ---------------------------------------------------------------- complements for SPST pairs

def _inverts(gate: Gate, net: str) -> bool:
    """Whether a gate's first output is the complement of ``net`` alone."""
    if any(n != net and n not in RAIL_NETS for n in gate.inputs) or net not in gate.inputs:
        return False
    try:
        return all(evaluate_gate(gate, {net: level})[gate.output] == (not level) for level in (False, True))
    except (KeyError, ValueError, IndexError):
        return False


def _complement_net(board: _Board, network: Network, net: str, switch: str) -> str:
    """A net that is the complement of ``net``: found in the network, or made
    from a spare inverting unit (a used logic chip first, then a new chip)."""
    for gate in list(network.gates) + board.added_gates:
        if gate.outputs and _inverts(gate, net):
            return gate.output
    taken = {n for g in list(network.gates) + board.added_gates for n in (*g.inputs, *g.outputs)}
    out = fresh_name(f"{net}_n", taken | {c for chip in board.chips for c in chip.pins.values()})
    gate_id = f"inv_{switch}"
    for chip in board.of_role("logic"):
        if _place_inverter(board, chip, net, out, gate_id):
            return out
    for part in sorted(board.bin_parts("inverter", "gate"),
                       key=lambda p: (p.category != "inverter", p.type)):
        if board.spare(part.type) <= 0:
            continue
        chip = board.open(part, "logic")
        if _place_inverter(board, chip, net, out, gate_id):
            return out
        board.chips.remove(chip)
    raise ShortError(f"switch {switch}: two SPST sections need the complement of net {net}, "
                     "and no inverting gate is spare", file=board.bin.path,
                     hint="add a 4053 (triple SPDT), or a 4069 inverter or a 4011 NAND for the complement")


def _place_inverter(board: _Board, chip: _Chip, net: str, out: str, gate_id: str) -> bool:
    for unit in chip.part.units:
        if unit.id in chip.units_used or unit.type not in ("gate", "inverter"):
            continue
        ins, _, _ = unit_logic_pins(unit)
        if not ins:
            continue
        fill = {"xor": "VDD", "xnor": "VSS"}.get(unit.op, net)
        gate = Gate(gate_id, chip.part.type, unit.op, (net,) + (fill,) * (len(ins) - 1), (out,),
                    schmitt=unit.schmitt)
        if not _inverts(gate, net):
            continue
        assignment, notes = _gate_assignment(unit, gate)
        if chip.fits(assignment):
            chip.place(unit.id, gate_id, assignment, notes)
            board.added_gates.append(gate)
            return True
    return False


# ---------------------------------------------------------------- finishing each chip

def _finish_chip(chip: _Chip) -> None:
    """Power, chip-level ties, unit ties, and a rail on every input still free."""
    part = chip.part
    for name, pin in part.power.items():
        rail = "VDD" if name == "VDD" else "VSS"
        note = "VEE to VSS: single supply, analog signals stay between VSS and VDD" \
            if name == "VEE" else f"supply {rail}"
        chip.set_pin(pin, rail, note)
    for pin, level in part.ties.items():
        chip.set_pin(pin, level, f"tied {level} for plain use (datasheet)")
    dirs = pin_directions(part)
    for unit in part.units:
        used = unit.id in chip.units_used
        for pin, level in unit.ties.items():
            if chip.role == "counter" and pin in chip.pins:
                continue        # the counter plan wired it (a count enable on a carry net)
            chip.set_pin(pin, level, f"held at {level} for plain use (datasheet)")
        for pin, role in unit.pins():
            if pin in chip.pins:
                continue
            direction = dirs.get(pin)
            if direction == "in":
                level, note = _free_input_level(unit, role, used)
                chip.set_pin(pin, level, note)
            elif direction == "analog":
                chip.set_pin(pin, "VSS", "unused switch terminal tied to VSS (common practice)")
            elif direction == "out":
                chip.notes.setdefault(pin, "unused output, left open")


def _free_input_level(unit: Unit, role: str, used: bool) -> tuple[str, str]:
    """The rail for an input nothing else drives, and why."""
    head = role.split(".")[0].split("[")[0]
    control = unit.control_of_role(role)
    active = control.active if control is not None else "high"
    if not used and unit.type == "flipflop" and head in ("set", "reset"):
        inactive = "VSS" if active == "high" else "VDD"
        return inactive, f"unused flip-flop's {head} held inactive ({inactive})"
    if not used:
        return UNUSED_INPUT_LEVEL, ("unused input tied to VSS (common practice: never leave "
                                    "a CMOS input floating)")
    if head in ("enable", "enables"):
        return _level(active), f"enable held active ({_level(active)}) for plain use"
    if head in ("reset", "set", "load", "clear"):
        inactive = "VSS" if active == "high" else "VDD"
        return inactive, f"{head} held inactive ({inactive})"
    return UNUSED_INPUT_LEVEL, f"input not used by the plan, tied to {UNUSED_INPUT_LEVEL}"


# ---------------------------------------------------------------- the plan

def pack(network: Network, counter_plan: CounterPlan, spec: Spec, bin: Bin, catalog: Catalog) -> Plan:
    """Chips, pins and nets for a mapped network; checked before it is returned."""
    board = _Board(catalog, bin, signal_nets={n: s.net for n, s in network.signals.items()})
    _place_counters(board, counter_plan, network)
    switch_gates = [g for g in network.gates if is_switch_gate(g, catalog)]
    for gate in network.gates:
        if gate not in switch_gates:
            _place_gate(board, gate)
    internal = {n for g in network.gates for n in (*g.inputs, *g.outputs) if n}
    internal |= {v.net for v in counter_plan.vars} | {str(c.clock_net) for c in counter_plan.chips}
    routes = _route_switches(board, network, spec, internal)
    for gate in switch_gates:
        _place_switch_gate(board, gate)
    if board.added_gates:
        network = dataclasses.replace(network, gates=list(network.gates) + board.added_gates)
    _assign_refs(board)
    for chip in board.chips:
        _finish_chip(chip)
    plan = _build_plan(board, network, counter_plan, spec, routes)
    check_nets(plan)
    self_check(plan, spec)
    return plan


def place_logic(network: Network, bin: Bin, catalog: Catalog) -> list[_Chip]:
    """Gates onto chip units and pins, unused inputs tied, as ``pack`` places them
    (without counters or switches): how ``substitute`` shows a way on real chips."""
    board = _Board(catalog, bin)
    for gate in network.gates:
        _place_gate(board, gate)
    _assign_refs(board)
    for chip in board.chips:
        _finish_chip(chip)
    return board.chips


def _assign_refs(board: _Board) -> None:
    """Counters keep their refs; logic chips follow, then switch chips."""
    numbers = [ref_key(c.ref)[1] for c in board.of_role("counter") if c.ref]
    n = max(numbers, default=0)
    for role in ("logic", "switch"):
        for chip in board.of_role(role):
            n += 1
            chip.ref = f"U{n}"
    order = {"counter": 0, "logic": 1, "switch": 2}
    board.chips.sort(key=lambda c: (order[c.role], ref_key(c.ref or "")))


def _build_plan(board: _Board, network: Network, counter_plan: CounterPlan, spec: Spec,
                routes: list[_Route]) -> Plan:
    chips = [ChipInstance(c.ref or "", c.part.type, c.role, dict(c.units_used), dict(sorted(c.pins.items())),
                          dict(sorted(c.notes.items()))) for c in board.chips]
    nets = _collect_nets(chips, counter_plan)
    parts = {c.part.type: c.part for c in board.chips}
    plan = Plan(
        name=str(spec.name or "plan"), spec_path=str(spec.path or ""),
        bin_path=str(board.bin.path), supply=float(board.bin.supply),
        chips=chips, nets=nets, signals={}, switches={},
        bom=_bom(chips), decoupling=tuple((c.ref, _decoupling_note(parts[c.part])) for c in chips),
        clock_edge=str(counter_plan.edge), counter=counter_plan, network=network,
        warnings=tuple(board.warnings), proven_minimal=bool(network.proven_minimal),
        lower_bound=network.lower_bound, method=network.method, parts=parts)
    signals, constant = _signals(plan, network, spec)
    plan = dataclasses.replace(plan, signals=signals, warnings=(*plan.warnings, *constant),
                               switches={r.name: _switch_record(r, board.net_for) for r in routes})
    plan = dataclasses.replace(plan, external=_external_nets(plan, routes, board.net_for))
    return dataclasses.replace(plan, cautions=tuple(_cautions(plan, counter_plan)),
                               warnings=(*plan.warnings, *_capacitor_warnings(board.bin, len(chips))))


def _collect_nets(chips: list[ChipInstance], counter_plan: CounterPlan,
                  passives: tuple = ()) -> dict[str, list[tuple[str, int]]]:
    """Net -> pins; rails first, then the clock, the counter outputs, the rest by first pin."""
    nets: dict[str, list[tuple[str, int]]] = {}
    for chip in chips:
        for pin, net in chip.pins.items():
            nets.setdefault(net, []).append((chip.ref, pin))
    for item in passives:
        for end, net in enumerate(item.ends, start=1):
            nets.setdefault(net, []).append((item.ref, end))
    for pins in nets.values():
        pins.sort(key=lambda p: (ref_key(p[0]), p[1]))
    first = [n for n in RAIL_NETS if n in nets]
    first += [str(c.clock_net) for c in counter_plan.chips if str(c.clock_net) in nets]
    first += [v.net for v in counter_plan.vars if v.net in nets]
    first = list(dict.fromkeys(first))
    rest = sorted((n for n in nets if n not in first), key=lambda n: _net_order(nets[n]))
    return {n: nets[n] for n in first + rest}


def _net_order(pins: list[tuple[str, int]]) -> tuple:
    """Nets sort by their first chip pin; nets of resistors and capacitors only go last."""
    chip_pins = [p for p in pins if not is_passive(p[0])]
    first = (chip_pins or pins)[0]
    return (not chip_pins, ref_key(first[0]), first[1])


def _bom(chips: list[ChipInstance]) -> dict[str, int]:
    bom: dict[str, int] = {}
    for chip in chips:
        bom[chip.part] = bom.get(chip.part, 0) + 1
    return dict(sorted(bom.items()))


def _decoupling_note(part: Part) -> str:
    vdd, vss = part.power["VDD"], part.power["VSS"]
    return (f"{DECOUPLING} from pin {vdd} (VDD) to pin {vss} (VSS), as close to the chip as "
            "the board allows (common practice)")


def _signals(plan: Plan, network: Network, spec: Spec) -> tuple[dict[str, BoardSignal], list[str]]:
    """The spec's signals (internal decodes such as the counter reset stay out), and a
    warning for each one no chip pin carries."""
    wanted = set(spec.signals or network.signals)
    out: dict[str, BoardSignal] = {}
    warnings = []
    for name, sig in network.signals.items():
        if name not in wanted:
            continue
        drivers = [(r, p) for r, p in plan.nets.get(sig.net, [])
                   if pin_direction(plan, r, p) == "out"]
        if not drivers:
            warnings.append(f"signal {name} is constant ({sig.net}); no chip pin carries it")
        out[name] = BoardSignal(sig.polarity, sig.net, drivers[0] if drivers else None)
    return out, warnings


def _switch_record(route: _Route, net_for: Callable[[str], str]) -> BoardSwitch:
    chip, unit_id = route.sections[0]
    unit = _unit(chip, unit_id)
    common = unit.common if unit.common is not None else unit.terminals[0]
    control = unit.control if unit.control is not None else unit.selects[0]
    return BoardSwitch(
        ref=chip.ref, unit=unit_id, part=chip.part.type, kind=route.kind,
        when_control_high=route.when_control_high, control_net=route.control_net,
        control_pin=control, common_pin=common, common_net=route.common_net,
        select=route.spec.select, on=route.spec.on, off=route.spec.off,
        on_net=net_for(route.spec.on), off_net=net_for(route.spec.off),
        complement_net=route.complement_net,
        sections=tuple((c.ref, u) for c, u in route.sections), paths=tuple(route.paths))


def _external_nets(plan: Plan, routes: list[_Route], net_for: Callable[[str], str]) -> dict[str, str]:
    """Nets that leave the board, with where they go."""
    external: dict[str, str] = {}
    for net, pins in plan.nets.items():
        if net in RAIL_NETS:
            continue
        dirs = [pin_direction(plan, r, p) for r, p in pins]
        if "out" not in dirs and (net == CLOCK_NET or any(
                c.clock_net == net for c in plan.counter.chips)):
            external[net] = "clock source (a square wave from VSS to VDD)"
    for name, sig in plan.signals.items():
        if sig.net not in RAIL_NETS and sig.net in plan.nets:
            label = external.get(sig.net)
            external[sig.net] = f"{label}, output {name}" if label else f"output {name}"
    for route in routes:
        external[route.common_net] = f"switch {route.name} common (to your circuit)"
        for value in (route.spec.on, route.spec.off):
            net = net_for(value)
            if net not in RAIL_NETS and net not in external:
                external[net] = f"{value} (your circuit)"
    return external


def _logic_sections(chip: ChipInstance) -> list[str]:
    """Units of a switch chip serving as logic gates (not as one of the spec's switches)."""
    return [u for u, purpose in (chip.units_used or {}).items()
            if chip.role == "switch" and not str(purpose).startswith("switch ")]


def _cautions(plan: Plan, counter_plan: CounterPlan) -> list[str]:
    lo = max(p.supply[0] for p in plan.parts.values()) if plan.parts else 3.0
    hi = min(p.supply[1] for p in plan.parts.values()) if plan.parts else 15.0
    cautions = [
        "CMOS chips are damaged by static (ESD): keep them in conductive foam until fitted, "
        "touch ground first, handle them by the body, and fit them with the power off.",
        "Never leave a CMOS input floating: every unused input in this list is tied to VSS or "
        "VDD; wire those ties too.",
        f"Stay inside the supply limits: this plan runs at {plan.supply:g} V and its chips allow "
        f"{lo:g} V to {hi:g} V; no input may go below VSS or above VDD.",
        "Equipment on mains or with high energy follows local codes and licensed practice; this "
        "list covers the low-voltage logic only.",
    ]
    if any(c.role == "switch" for c in plan.chips):
        cautions.append("Analog switch signals must stay between VSS and VDD (VEE is tied to VSS "
                        "for a single supply).")
    if any(_logic_sections(c) for c in plan.chips):
        cautions.append("A switch section used as logic passes the level of its selected input "
                        "through its on-resistance: let its output drive CMOS inputs only (common "
                        "practice), never a load or a long line.")
    if all(c.reset_net in RAIL_NETS for c in counter_plan.chips):
        cautions.append("At power-up the counter starts at an arbitrary count: tick 0 is the "
                        "all-zero count, and the sequence repeats from wherever it starts.")
    return cautions


def _capacitor_warnings(bin: Bin, chips: int) -> list[str]:
    near = [c for c in bin.capacitors if 47e-9 <= c <= 220e-9]
    if bin.capacitors and not near:
        return [f"the bin lists no capacitor near 100 nF; decoupling wants {chips} x 100 nF "
                "ceramic, one per chip (common practice)"]
    return []


# ---------------------------------------------------------------- later additions

def add_chip(plan: Plan, part: Part, role: str, units: dict[str, str], pins: dict[int, str],
             notes: dict[int, str]) -> ChipInstance:
    """A chip opened after packing (an oscillator's Schmitt gate): next free ref,
    power, ties and every unused input tied as ``pack`` does."""
    numbers = [ref_key(c.ref)[1] for c in plan.chips]
    chip = _Chip(part, role, f"U{max(numbers, default=0) + 1}")
    chip.units_used.update(units)
    for pin, net in pins.items():
        chip.set_pin(pin, net, notes.get(pin, ""))
    _finish_chip(chip)
    instance = ChipInstance(chip.ref, part.type, role, dict(chip.units_used), dict(sorted(chip.pins.items())),
                            dict(sorted(chip.notes.items())))
    plan.chips.append(instance)
    plan.parts[part.type] = part
    return instance


def rewire_pin(plan: Plan, ref: str, pin: int, net: str | None, note: str) -> None:
    """Move a pin of a spare unit (tied or open after packing) onto ``net`` (None: open):
    a new chip record in the chips of a ``working_copy``."""
    index = next(i for i, chip in enumerate(plan.chips) if chip.ref == ref)
    chip = plan.chips[index]
    pins = {p: n for p, n in chip.pins.items() if p != pin}
    if net is not None:
        pins[pin] = net
    plan.chips[index] = dataclasses.replace(chip, pins=dict(sorted(pins.items())),
                                            notes=dict(sorted({**chip.notes, pin: note}.items())))


def refresh(plan: Plan, bin: Bin) -> Plan:
    """A new plan record with nets, BOM, decoupling and cautions made again after chips or
    passives were added (to a ``working_copy``)."""
    stale = [w for w in plan.warnings if w.startswith("the bin lists no capacitor near 100 nF")]
    warnings = [w for w in plan.warnings if w not in stale]
    if stale:
        warnings += _capacitor_warnings(bin, len(plan.chips))
    return dataclasses.replace(
        plan, nets=_collect_nets(plan.chips, plan.counter, tuple(plan.passives)), bom=_bom(plan.chips),
        decoupling=tuple((c.ref, _decoupling_note(plan.parts[c.part])) for c in plan.chips),
        cautions=tuple(_cautions(plan, plan.counter)), warnings=tuple(warnings))


def working_copy(plan: Plan) -> Plan:
    """A new plan record whose chips (pins, notes, units), passives, parts, signals, switches,
    external nets are copies: a stage that adds parts fills these
    (``add_chip``, ``rewire_pin``) and the record it was given stays as it was."""
    chips = [dataclasses.replace(c, pins=dict(c.pins), notes=dict(c.notes), units_used=dict(c.units_used))
             for c in plan.chips]
    return dataclasses.replace(
        plan, chips=chips, passives=list(plan.passives), signals=dict(plan.signals),
        switches=dict(plan.switches), external=dict(plan.external),
        parts=dict(plan.parts), ladders=dict(plan.ladders),
        rc_offers=list(plan.rc_offers))
