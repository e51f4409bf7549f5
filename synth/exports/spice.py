"""The plan's analog parts as a plain SPICE deck (``plan --spice FILE``).

Interface: ``plan_to_spice(plan, catalog, *, tick_ns=None) -> str``;
``write_spice(plan, catalog, path, *, tick_ns=None) -> Path``;
``spice_checks(plan, catalog, *, tick_ns=None) -> list[SpiceCheck]`` (what a
simulator should measure on the deck and what binsynth computed for it);
``measure_lines(checks) -> list[str]``; record ``SpiceCheck``.

What goes in: the clock oscillator (a Schmitt inverter with its R and C, or a
4060's three-pin stage with Rt, Ct and Rs), the power-on reset (its R, C and
Schmitt gate on a supply that ramps up at time 0), every staircase ladder exactly as
wired (the plan's own resistors, each counter output as a source behind the
catalog's output resistance, any load), every switch section that routes a
staircase or a rail (two switches of the catalog's on-resistance, their
control a PWL copy of the control net's level per tick), and every RC delay
the plan offers
(a step into R, C and a Schmitt receiver).  Digital logic is left out: the
Verilog export models it.

Only elements every SPICE simulator reads are used (the SPICE2 / SPICE3
common subset): ``R``, ``C`` (with ``IC=``), independent ``V`` sources
(``DC``, ``PULSE``, ``PWL``), and the SPICE3 voltage-controlled switch ``S`` with a
``SW`` model (``VT``, ``VH``, ``RON``, ``ROFF``).  A Schmitt inverter is two
such switches: one joins the output to VSS once the input rises above VT+
(and lets go below VT-), the other joins it to VDD in the opposite sense;
hysteresis switches turn on above VT + VH and off below VT - VH, so VT is
the middle of the two thresholds and VH half their gap.  One ``.tran ... UIC``
starts everything from 0 V, like power-up.  No ``.meas`` lines are in the
deck (SPICE3 lacks them); ``measure_lines`` gives them for ngspice and
others that read them, and the tests add them.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

from .. import __version__
from ..analog import thresholds_at
from ..analogparts import AppliedDelay, LadderPlan, OscillatorPlan
from ..findings import RcOffer, RcValues
from ..inventory import Catalog
from ..netlist import BoardSwitch, Plan, simulate_nets
from ..units import format_si
from .files import atomic_write_text

__all__ = ["SpiceCheck", "plan_to_spice", "write_spice", "spice_checks", "measure_lines"]

RON = 1.0            # switch on-resistance, ohms: small beside every timing R (>= 1 kOhm)
ROFF = 1e9           # switch off-resistance, ohms: large beside every timing R (<= 10 MOhm)
STEPS_PER_PERIOD = 1000   # the oscillator's largest time step is its period / this
PLAIN_HYSTERESIS = 0.01   # a plain CMOS input modelled with 1 % of VDD hysteresis (no chatter)


@dataclass(frozen=True)
class SpiceCheck:
    """One figure binsynth computed and how a simulator measures it on the deck."""

    name: str           # the .meas name
    measure: str        # the .meas statement without its leading ".meas tran name"
    expected: float     # binsynth's figure (seconds or volts)
    unit: str           # "s" or "V"
    tolerance: float    # allowed |simulated - expected|, absolute, same unit
    why: str            # where the tolerance comes from


@dataclass
class _Section:
    lines: list[str]
    checks: list[SpiceCheck]
    stop_s: float               # simulated time this part needs
    step_s: float | None        # the largest time step it allows (None: any)


# ---------------------------------------------------------------- small helpers

def _num(value: float) -> str:
    """A number every SPICE reads: plain or exponent form, never an SI suffix (m vs meg).

    >>> _num(47000.0), _num(2.2e-9), _num(5.0)
    ('47000', '2.2e-09', '5')
    """
    return f"{value:.7g}"


def _node(net: str) -> str:
    """A plan net as a SPICE node: VSS / GND is 0, otherwise lower case, safe characters.

    >>> _node("VSS"), _node("OSC_RC"), _node("ramp n0")
    ('0', 'osc_rc', 'ramp_n0')
    """
    if net in ("VSS", "GND"):
        return "0"
    if net == "VDD":
        return "vdd"
    return re.sub(r"[^A-Za-z0-9_]", "_", net).lower()


def _schmitt_models(name: str, vt_plus: float, vt_minus: float) -> list[str]:
    """Two SW models: ``<name>_lo`` pulls the output low above VT+, ``<name>_hi`` high below VT-."""
    vt, vh = (vt_plus + vt_minus) / 2, (vt_plus - vt_minus) / 2
    return [f".model {name}_lo SW(VT={_num(vt)} VH={_num(vh)} RON={_num(RON)} ROFF={_num(ROFF)})",
            f".model {name}_hi SW(VT={_num(-vt)} VH={_num(vh)} RON={_num(RON)} ROFF={_num(ROFF)})"]


def _inverter(tag: str, model: str, node_in: str, node_out: str, input_high: bool = False,
              supply: str = "vdd") -> list[str]:
    """An inverter as two switches (output to VSS / to ``supply``), controlled by the input;
    ``input_high`` sets the switches' starting state to match the input at time 0."""
    low, high = ("ON", "OFF") if input_high else ("OFF", "ON")
    return [f"S{tag}L {node_out} 0 {node_in} 0 {model}_lo {low}",
            f"S{tag}H {supply} {node_out} 0 {node_in} {model}_hi {high}"]


def _passive_line(p, nodes: dict[str, str] | None = None) -> str:
    nodes = nodes or {}
    a, b = (nodes.get(end, _node(end)) for end in p.ends)
    if p.kind == "capacitor":
        return f"{p.ref} {a} {b} {_num(p.value)} IC=0"
    return f"{p.ref} {a} {b} {_num(p.value)}"


def _tick_s(plan: Plan, tick_ns: float | None) -> float:
    if tick_ns:
        return tick_ns * 1e-9
    osc = plan.oscillator
    if osc is not None and osc.f_nom:
        return 1.0 / osc.f_nom
    return 1e-6


# ---------------------------------------------------------------- the oscillator

def _oscillator(plan: Plan) -> _Section | None:
    osc = plan.oscillator
    if osc is None:
        return None
    if osc.site.kind == "counter-stage":
        return _counter_oscillator(plan, osc)
    vtp, vtm = osc.thresholds["vt_plus"]["typ"], osc.thresholds["vt_minus"]["typ"]
    period = 1.0 / osc.f_nom
    inp, out = _node("OSC_RC"), _node(osc.clock_net)
    lines = [f"* oscillator: {osc.site.describe()} on {osc.ref}, pin {osc.pins['input']} in, "
             f"pin {osc.pins['output']} out; typical thresholds VT+ {vtp:g} V, VT- {vtm:g} V",
             f"* binsynth: {osc.worked}"]
    lines += [_passive_line(plan.passive(ref)) for ref in osc.passives]
    lines += _inverter("OSC", "osc_schmitt", inp, out)
    lines += _schmitt_models("osc_schmitt", vtp, vtm)
    step = period / STEPS_PER_PERIOD
    check = SpiceCheck(
        "osc_three_periods",
        f"TRIG v({out}) VAL={_num(plan.supply / 2)} RISE=2 TARG v({out}) VAL={_num(plan.supply / 2)} RISE=5",
        3 * period, "s", 3 * period * 0.005,
        "three periods after the first (which starts from 0 V, not from VT-); each of the six "
        f"threshold crossings is placed to within one time step (period / {STEPS_PER_PERIOD}), "
        "and the switches' 1 ohm against R adds under 0.01 %: 0.5 % allowed")
    return _Section(lines, [check], 6 * period, step)


def _counter_oscillator(plan: Plan, osc: OscillatorPlan) -> _Section:
    """A 4060-type stage: two inverters (pin 11 -> pin 10 -> pin 9) with Rs, Rt and Ct."""
    chip = plan.chip(osc.ref)
    net_in, net_ct, net_rt = (chip.pins[osc.pins[k]] for k in ("input", "output", "output_inv"))
    period = 1.0 / osc.f_nom
    half = plan.supply / 2
    gap = PLAIN_HYSTERESIS * plan.supply
    lines = [f"* oscillator: {osc.site.describe()} on {osc.ref}: pin {osc.pins['input']} (input, "
             f"through Rs) -> inverter -> pin {osc.pins['output_inv']} (drives Rt) -> inverter -> "
             f"pin {osc.pins['output']} (drives Ct); plain inputs switching at VDD/2",
             f"* binsynth: {osc.worked} (k is the datasheet's; ideal inverters give k = 2 ln 3 = 2.197)"]
    lines += [_passive_line(plan.passive(ref)) for ref in osc.passives]
    lines += _inverter("OSC1", "osc_plain", _node(net_in), _node(net_rt))
    lines += _inverter("OSC2", "osc_plain", _node(net_rt), _node(net_ct), input_high=True)
    lines.append(f".ic v({_node(net_rt)})={_num(plan.supply)} v({_node(net_ct)})=0")
    lines += _schmitt_models("osc_plain", half + gap / 2, half - gap / 2)
    out = _node(net_ct)
    check = SpiceCheck(
        "osc_three_periods",
        f"TRIG v({out}) VAL={_num(half)} RISE=2 TARG v({out}) VAL={_num(half)} RISE=5",
        3 * period, "s", 3 * period * 0.15,
        "the datasheet's f = 1 / (k Rt Ct) (k = 2.3 for 4000B, 2.5 for 74HC) is fitted to real "
        "chips (thresholds, delays, protection diodes); ideal inverters at VDD/2 give k = 2 ln 3 "
        "= 2.197, 4.5 % and 12 % from those k: 15 % allowed, which still catches a stage that "
        "does not oscillate or is wired to the wrong pins")
    return _Section(lines, [check], 6 * period, period / STEPS_PER_PERIOD)


# ---------------------------------------------------------------- the ladders

def _ladder(plan: Plan, name: str, lad: LadderPlan, tick: float, driven: set[str]) -> _Section:
    """The ladder's resistors as wired; each counter output a source behind its resistance
    (a net shared by two ladders is driven once)."""
    supply = plan.supply
    tag = _node(name)
    edge = tick / 1000
    lines = [f"* staircase {name}: {lad.kind} ladder, {lad.construction}; each driver is its "
             f"counter output (a source) behind {format_si(lad.r_out_driver, 'Ω')} "
             f"({lad.r_out_note.split(';')[0]}); one tick = {format_si(tick, 's')}"]
    for k, (bit, (ref, pin, net)) in enumerate(zip(lad.bits, lad.drivers)):
        high = (1 << bit) * tick
        src, node = f"{_node(net)}_src", _node(net)
        if net in driven:
            continue
        driven.add(net)
        lines.append(f"* tick bit {bit} = {net} ({ref} pin {pin})")
        lines.append(f"V{tag}_{k} {src} 0 PULSE(0 {_num(supply)} {_num(high)} {_num(edge)} "
                     f"{_num(edge)} {_num(high - edge)} {_num(2 * high)})")
        lines.append(f"R{tag}_out{k} {src} {node} {_num(lad.r_out_driver or RON)}")
    lines += [_passive_line(plan.passive(ref)) for ref in lad.passives]
    if lad.load_ohms:
        lines.append(f"R{tag}_load {_node(name)} 0 {_num(lad.load_ohms)}")
    span = (1 << (max(lad.bits) + 1)) * tick
    checks = []
    for code, level in enumerate(lad.levels):
        t = sum(((code >> k) & 1) << bit for k, bit in enumerate(lad.bits))
        checks.append(SpiceCheck(
            f"lad_{_node(name)}_c{code}", f"FIND v({_node(name)}) AT={_num((t + 0.5) * tick)}",
            level, "V", 1e-3 * abs(level) + 1e-5,
            "a resistor network is linear: the simulator solves it exactly up to its convergence "
            "tolerance (RELTOL 1e-3 of the value, VNTOL 1 µV, ngspice defaults), sampled mid-tick "
            "where every source is flat"))
    return _Section(lines, checks, span, None)


# ---------------------------------------------------------------- the analog switches

def _on_resistance(catalog: Catalog, part_type: str | None, supply: float) -> float:
    part = catalog.parts.get(part_type) if part_type else None
    table = part.r_on if part is not None else {}
    if not table:
        return RON
    volts = min(table, key=lambda v: abs(float(v) - supply))
    row = table[volts]
    return float(row.get("typ") or row.get("max") or RON)


def _net_volts(plan: Plan, net: str, tick: int) -> float | None:
    """A net's voltage in the middle of ``tick``: a rail, or a staircase's level."""
    if net in ("GND", "VSS"):
        return 0.0
    if net == "VDD":
        return float(plan.supply)
    lad = plan.ladders.get(net)
    if lad is None:
        return None
    return float(lad.levels[sum(((tick >> bit) & 1) << k for k, bit in enumerate(lad.bits))])


def _switch(plan: Plan, catalog: Catalog, name: str, sw: BoardSwitch, tick: float) -> _Section | None:
    """A switch section routing rails or staircases: two SPICE switches of the catalog's
    on-resistance, their control a PWL copy of the control net's level tick by tick."""
    on, off, control = sw.on, sw.off, sw.control_net
    if _net_volts(plan, on, 0) is None or _net_volts(plan, off, 0) is None:
        return None
    rows = simulate_nets(plan)
    if not rows or control not in rows[0]:
        return None
    levels = [bool(row[control]) for row in rows]
    supply, edge, tag = plan.supply, tick / 1000, _node(name)
    high_net = sw.when_control_high
    low_net = off if high_net == on else on
    points = [(0.0, levels[0])]
    for k in range(1, len(levels)):
        if levels[k] != levels[k - 1]:
            points += [(k * tick, levels[k - 1]), (k * tick + edge, levels[k])]
    pwl = " ".join(f"{_num(t)} {_num(supply if level else 0.0)}" for t, level in points)
    r_on = _on_resistance(catalog, sw.part, supply)
    common = _node(str(sw.common_net or name))
    node = lambda net: {"GND": "0", "VSS": "0", "VDD": "vdd"}.get(net, _node(net))  # noqa: E731
    lines = [f"* switch {name}: {sw.ref} ({sw.part}) section {sw.unit}, on-resistance "
             f"{format_si(r_on, 'Ω')}; the common joins {high_net} while control {control} is high, "
             f"{low_net} while it is low (the control copied tick by tick from the plan's logic)",
             f"V{tag}_ctl {tag}_ctl 0 PWL({pwl})",
             f"S{tag}_H {common} {node(high_net)} {tag}_ctl 0 {tag}_sw_hi {'ON' if levels[0] else 'OFF'}",
             f"S{tag}_L {common} {node(low_net)} 0 {tag}_ctl {tag}_sw_lo {'OFF' if levels[0] else 'ON'}",
             f".model {tag}_sw_hi SW(VT={_num(supply / 2)} VH={_num(PLAIN_HYSTERESIS * supply)} "
             f"RON={_num(r_on)} ROFF={_num(ROFF)})",
             f".model {tag}_sw_lo SW(VT={_num(-supply / 2)} VH={_num(PLAIN_HYSTERESIS * supply)} "
             f"RON={_num(r_on)} ROFF={_num(ROFF)})"]
    cycle = len(levels)
    changes = [k for k in range(1, cycle) if levels[k] != levels[k - 1]]
    ticks = sorted({*changes, *(k - 1 for k in changes), *range(0, cycle, max(1, cycle // 16))})
    checks = []
    for k in ticks:
        joined = high_net if levels[k] else low_net
        volts = _net_volts(plan, joined, k)
        checks.append(SpiceCheck(
            f"sw_{tag}_t{k}", f"FIND v({common}) AT={_num((k + 0.5) * tick)}", volts, "V",
            1e-3 * abs(volts) + 1e-5,
            f"with no load the common carries the joined net ({joined}) exactly: the simulator's "
            "RELTOL 1e-3 and VNTOL 1 µV; a wrong throw shows as the other net's voltage"))
    return _Section(lines, checks, cycle * tick, None)


# ---------------------------------------------------------------- the RC delays offered

def _receiver_thresholds(catalog: Catalog, receiver: str, supply: float) -> tuple[float, float]:
    part = catalog.parts.get(receiver) if receiver and receiver != "plain-input" else None
    if part is None or not part.thresholds:
        gap = PLAIN_HYSTERESIS * supply
        return supply / 2 + gap / 2, supply / 2 - gap / 2
    row = thresholds_at(part.thresholds, supply)
    return row["vt_plus"]["typ"], row["vt_minus"]["typ"]


def _is_schmitt(catalog: Catalog, receiver: str | None) -> bool:
    part = catalog.parts.get(receiver) if receiver and receiver != "plain-input" else None
    return part is not None and bool(part.thresholds)


def _delay(plan: Plan, catalog: Catalog, index: int, offer: RcOffer, values: RcValues) -> _Section:
    supply = plan.supply
    r, c = float(values.r_ohm), float(values.c_farad)
    vtp, vtm = _receiver_thresholds(catalog, offer.receiver or "", supply)
    rc = r * c
    start, width, edge = 2 * rc, 12 * rc, rc * 1e-4
    tag = f"d{index}"
    src, mid, out = f"{tag}_in", f"{tag}_node", f"{tag}_out"
    state = "applied" if offer.applied else "offered"
    receiver = offer.receiver
    schmitt = _is_schmitt(catalog, receiver)
    into = (f"{receiver} input (VT+ {vtp:.4g} V, VT- {vtm:.4g} V typical)" if schmitt
            else f"a plain CMOS input (modelled as switching at {vtp:.4g} V rising, {vtm:.4g} V falling)")
    model = f"{tag}_{'schmitt' if schmitt else 'plain'}"
    lines = [f"* RC delay {state} on {offer.delayed} ({offer.problem}): stage 1's output "
             f"(a step) -> R -> node, C to VSS, node -> {into}; stage 2's output inverts",
             f"* binsynth: {values.formula}",
             f"V{tag} {src} 0 PULSE(0 {_num(supply)} {_num(start)} {_num(edge)} {_num(edge)} "
             f"{_num(width)} {_num(4 * width)})",
             f"R{tag} {src} {mid} {_num(r)}",
             f"C{tag} {mid} 0 {_num(c)} IC=0"]
    lines += _inverter(tag.upper(), model, mid, out)
    lines += _schmitt_models(model, vtp, vtm)
    rising = rc * math.log(supply / (supply - vtp))
    falling = rc * math.log(supply / vtm)
    why = ("the RC time constant law t = RC ln((V_final - V_start) / (V_final - V_threshold)) "
           "(common practice; any circuits handbook) at the typical threshold; the crossing is "
           "placed to within one time step (RC / 1000) and the step's own 1e-4 RC ramp shifts it "
           "by half that: 0.5 % allowed")
    half = _num(supply / 2)
    checks = [SpiceCheck(f"dly{index}_rise", f"TRIG v({src}) VAL={half} RISE=1 TARG v({out}) VAL={half} FALL=1",
                         rising, "s", rising * 0.005, why),
              SpiceCheck(f"dly{index}_fall", f"TRIG v({src}) VAL={half} FALL=1 TARG v({out}) VAL={half} "
                         f"TD={_num(start + width)} RISE=1",
                         falling, "s", falling * 0.005, why)]
    return _Section(lines, checks, start + width + 6 * rc, rc / 1000)


def _applied_delay(plan: Plan, catalog: Catalog, index: int, d: AppliedDelay) -> _Section:
    """An RC delay built into the plan, from the plan's own R, C and nets: a step on the
    decoded net into Schmitt stage 1, its output through R to the node (C to VSS), the
    node into Schmitt stage 2.  Checked: stage 2's output edges against the RC law."""
    supply = plan.supply
    r, c = plan.passive(d.passives[0]).value, plan.passive(d.passives[1]).value
    vtp, vtm = _receiver_thresholds(catalog, d.part, supply)
    rc = r * c
    start, width, edge = 10 * rc, 12 * rc, rc * 1e-4     # the node is full (within e^-10) before the step
    nets = {k: _node(v) for k, v in d.nets.items()}
    tag = f"a{index}"
    lines = [f"* RC delay applied on {d.signal} ({d.asked_by}): {nets['input']} (a step here) -> Schmitt "
             f"{d.part} stage 1 -> {nets['drive']} -> {d.passives[0]} -> {nets['node']} ({d.passives[1]} to "
             f"VSS) -> Schmitt stage 2 -> {nets['output']} (VT+ {vtp:.4g} V, VT- {vtm:.4g} V typical)",
             f"* binsynth: {d.formula}",
             f"V{tag} {nets['input']} 0 PULSE(0 {_num(supply)} {_num(start)} {_num(edge)} {_num(edge)} "
             f"{_num(width)} {_num(4 * width)})"]
    lines += _inverter(f"{tag.upper()}1", f"{tag}_schmitt", nets["input"], nets["drive"])
    lines += [_passive_line(plan.passive(ref)) for ref in d.passives]
    lines += _inverter(f"{tag.upper()}2", f"{tag}_schmitt", nets["node"], nets["output"], input_high=False)
    lines += _schmitt_models(f"{tag}_schmitt", vtp, vtm)
    half = _num(supply / 2)
    why = ("the RC time constant law t = RC ln(VDD / (VDD - VT+)) charging and RC ln(VDD / VT-) "
           "discharging (common practice; any circuits handbook) at the typical thresholds; the crossing "
           "is placed to within one time step (RC / 1000) and the step's 1e-4 RC ramp shifts it: 0.5 % allowed")
    # the input falls -> stage 1's output rises -> the node charges to VT+ -> the output falls
    charging, discharging = d.rise_s[1], d.fall_s[1]
    checks = [SpiceCheck(f"app{index}_charge", f"TRIG v({nets['input']}) VAL={half} FALL=1 "
                         f"TARG v({nets['output']}) VAL={half} TD={_num(start + width)} FALL=1", charging, "s",
                         charging * 0.005, why),
              SpiceCheck(f"app{index}_discharge", f"TRIG v({nets['input']}) VAL={half} RISE=1 "
                         f"TARG v({nets['output']}) VAL={half} TD={_num(start)} RISE=1", discharging, "s",
                         discharging * 0.005, why)]
    return _Section(lines, checks, start + width + 6 * rc, rc / 1000)


# ---------------------------------------------------------------- the power-on reset

def _power_on(plan: Plan) -> _Section | None:
    """The POR's R, C and Schmitt gate on a supply of their own that ramps up at time 0."""
    por = plan.power_on_reset
    if por is None:
        return None
    supply, ramp = plan.supply, 1e-6
    vtp, vtm = por.thresholds["vt_plus"]["typ"], por.thresholds["vt_minus"]["typ"]
    nodes = {"VDD": "por_vdd"}
    node_in, node_out = _node("POR_RC"), _node("POR")
    low, typ, high = por.width_s
    lines = [f"* power-on reset: Schmitt {por.part} unit {por.unit} on {por.ref} holds the counter reset "
             f"{por.active}; its own supply rises from 0 to {supply:g} V in {_num(ramp)} s at time 0",
             f"* binsynth: {por.formula}",
             f"VPOR por_vdd 0 PULSE(0 {_num(supply)} 0 {_num(ramp)} {_num(ramp)} 1e3 2e3)"]
    lines += [_passive_line(plan.passive(ref), nodes) for ref in por.passives]
    lines += _inverter("POR", "por_schmitt", node_in, node_out, supply="por_vdd")
    lines += _schmitt_models("por_schmitt", vtp, vtm)
    half, skip = _num(supply / 2), _num(10 * ramp)
    release = "FALL=1" if por.active == "high" else "RISE=1"
    rc = por.r * por.c
    check = SpiceCheck(
        "por_width", f"TRIG v(por_vdd) VAL={half} RISE=1 TARG v({node_out}) VAL={half} TD={skip} {release}",
        typ, "s", typ * 0.005 + ramp,
        "the RC time constant law at the typical threshold (common practice); the release is placed "
        "to within one time step (R C / 1000) and the supply's 1 us ramp shifts the start: "
        "0.5 % + 1 us allowed")
    return _Section(lines, [check], 1.5 * high + 2 * ramp, rc / 1000)


# ---------------------------------------------------------------- the deck

def _sections(plan: Plan, catalog: Catalog, tick_ns: float | None) -> list[_Section]:
    sections = []
    osc = _oscillator(plan)
    if osc is not None:
        sections.append(osc)
    por = _power_on(plan)
    if por is not None:
        sections.append(por)
    tick = _tick_s(plan, tick_ns)
    driven: set[str] = set()
    for name, lad in sorted(plan.ladders.items()):
        sections.append(_ladder(plan, name, lad, tick, driven))
    for name, sw in sorted(plan.switches.items()):
        section = _switch(plan, catalog, name, sw, tick)
        if section is not None:
            sections.append(section)
    offers = [o for o in plan.rc_offers if o.applicable and o.values is not None and not o.applied]
    for index, offer in enumerate(offers, 1):
        sections.append(_delay(plan, catalog, index, offer, offer.values))
    for index, applied in enumerate(plan.rc_delays, 1):
        sections.append(_applied_delay(plan, catalog, index, applied))
    return sections


def spice_checks(plan: Plan, catalog: Catalog, *, tick_ns: float | None = None) -> list[SpiceCheck]:
    """Every figure of the deck a simulator can check, with binsynth's value and tolerance."""
    return [check for section in _sections(plan, catalog, tick_ns) for check in section.checks]


def measure_lines(checks: list[SpiceCheck]) -> list[str]:
    """``.meas tran`` statements for ``checks`` (ngspice, and most others, read them)."""
    return [f".meas tran {check.name} {check.measure}" for check in checks]


def plan_to_spice(plan: Plan, catalog: Catalog, *, tick_ns: float | None = None) -> str:
    """The deck as text; a plan without analog parts gives a deck that says so."""
    sections = _sections(plan, catalog, tick_ns)
    lines = [f"* binsynth {__version__}: analog parts of plan {plan.name} at {plan.supply:g} V",
             "* elements: R, C, V (DC, PULSE, PWL), S with SW models (VT, VH, RON, ROFF): the SPICE3 "
             "subset; a Schmitt or plain input is two switches with hysteresis",
             "* to look: ngspice FILE, then 'plot v(clk)' (or any node named below)",
             f"VDD vdd 0 DC {_num(plan.supply)}"]
    if not sections:
        lines += ["* this plan has no resistors or capacitors to simulate (its logic is in the Verilog export)",
                  "RIDLE vdd 0 1e6", ".tran 1e-6 1e-5", ".end"]
        return "\n".join(lines) + "\n"
    for section in sections:
        lines.append("")
        lines += section.lines
    stop = max(s.stop_s for s in sections)
    steps = [s.step_s for s in sections if s.step_s]
    step = min(steps) if steps else stop / 1000
    expected = [f"*   {c.name}: {_num(c.expected)} {c.unit}" for s in sections for c in s.checks]
    lines += ["", "* binsynth's figures (a .meas of the same name measures each: see the tests):",
              *expected,
              "", f".tran {_num(step)} {_num(stop)} 0 {_num(step)} UIC", ".end"]
    return "\n".join(lines) + "\n"


def write_spice(plan: Plan, catalog: Catalog, path: str | Path, *, tick_ns: float | None = None) -> Path:
    """Write ``plan_to_spice`` to ``path`` atomically."""
    return atomic_write_text(path, plan_to_spice(plan, catalog, tick_ns=tick_ns))


def design_text(design) -> str:
    """The ``--spice`` deck of a finished design (the exporter interface)."""
    tick_ns = design.trace.period_ns if design.trace is not None else None
    return plan_to_spice(design.plan, design.catalog, tick_ns=tick_ns)
