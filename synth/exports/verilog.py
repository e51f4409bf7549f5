"""Structural Verilog (IEEE 1364-2001) of a plan, as formats.md section 4 fixes it.

Interface: ``plan_to_verilog(plan, catalog) -> str``; ``write_verilog(plan,
catalog, path) -> Path``; ``verilog_names(plan, catalog)`` (net -> the
identifier used in the file, for test benches and waveform readers).

What the file holds: `` `timescale 1ns/1ps``; one module named as the plan
JSON's ``verilog_module``, with ports exactly ``input clk`` and one output per
spec signal at its delivered polarity.  Each counter unit is a block of its
own, modelled as the catalog describes it: its counting edge on the net that
clocks it, the delay of each pinned-out stage it drives (ripple: clock to the
first pinned stage, then one stage delay per stage; synchronous: clock to
output), its reset (asynchronous: clears at once, outputs follow after the
reset delay, counting held off; synchronous: the next edge loads zero); the
count starts from all zeros in an ``initial`` block, with no reset input.
Only a clean 0->1 or 1->0 change counts as an edge, so the unknown level at
time 0 never counts.  Every physical gate is one primitive (``and nand or nor
xor xnor not buf``) named after its chip and unit (``U2_A``) with the
catalog's typical delay at the plan's supply (a decoder or multiplexer output
is a delayed continuous assignment).  Delays are the ones ``synth.timing``
simulates with, so Icarus Verilog and binsynth agree event for event.
The analog parts are internal ``real`` variables (IEEE 1364-2001 section
4.2.2; a real cannot be a port): each staircase's voltage is a ``case`` on
its driving counter outputs giving the ladder's level for every code (with
the drivers' resistance, as the plan prints it), and each switch has a
``<name>_on`` wire (1 while its common joins the ``on`` net) and, where both
nets it joins have known voltages, a real for its common terminal.  A
driving output or control the model does not carry becomes a comment.
"""

from __future__ import annotations

import re
from pathlib import Path

from ..inventory import Catalog
from ..netlist import VERILOG_KEYWORDS, Plan, verilog_module_name
from ..network import RAILS, Gate
from ..timing import (CounterModel, CounterOutput, GateModel, counter_models, gate_models, gate_names_of,
                      register_start_levels)
from .files import atomic_write_text

__all__ = ["plan_to_verilog", "write_verilog", "verilog_names", "spec_signals", "delay_text"]

PRIMITIVES = ("and", "nand", "or", "nor", "xor", "xnor", "not", "buf")
_SIMPLE = re.compile(r"[A-Za-z_][A-Za-z0-9_$]*\Z")


def delay_text(delay_ps: int) -> str:
    """A delay in ns at 1 ps precision, as few digits as it needs.

    >>> delay_text(55000), delay_text(66667), delay_text(0)
    ('55', '66.667', '0')
    """
    whole, frac = divmod(int(delay_ps), 1000)
    return f"{whole}" if not frac else f"{whole}.{frac:03d}".rstrip("0")


def spec_signals(plan: Plan) -> list[str]:
    """The plan's spec signals in plan order (the counter's own reset decode left out)."""
    reset = plan.counter.reset
    skip = {reset.name} if reset is not None else set()
    return [name for name in plan.signals if name not in skip]


def _legal(name: str, taken: set[str]) -> str:
    """A simple identifier for a net name, unique among ``taken``.

    >>> _legal("U1.Q4", set()), _legal("4x", set()), _legal("wire", set()), _legal("a", {"a"})
    ('U1_Q4', 'n_4x', 'n_wire', 'a_2')
    """
    text = re.sub(r"[^A-Za-z0-9_]", "_", name) or "n"
    if text[0].isdigit() or text in VERILOG_KEYWORDS:
        text = f"n_{text}"
    base, k = text, 2
    while text in taken:
        text = f"{base}_{k}"
        k += 1
    return text


def _port_name(name: str) -> str:
    """A spec signal as a port: itself, or an escaped identifier when it is not simple."""
    return name if _SIMPLE.match(name) and name not in VERILOG_KEYWORDS else f"\\{name} "


def verilog_names(plan: Plan, catalog: Catalog) -> dict[str, str]:
    """Every net of the simulated circuit -> its identifier in the exported file."""
    counters, gates = _models(plan, catalog)
    return _identifiers(plan, counters, gates)


def _models(plan: Plan, catalog: Catalog) -> tuple[list[CounterModel], list[GateModel]]:
    counters = counter_models(plan.counter, plan.network, catalog, plan.supply, "typ")
    gates = gate_models(plan.network, catalog, plan.supply, "typ", gate_names_of(plan))
    return counters, gates


def _clock_net(counters: list[CounterModel], gates: list[GateModel]) -> str:
    driven = {o.net for c in counters for o in c.outputs} | {n for g in gates for n in g.gate.outputs}
    return next((c.clock_net for c in counters if c.clock_net not in driven), "CLK")


def _identifiers(plan: Plan, counters: list[CounterModel], gates: list[GateModel]) -> dict[str, str]:
    ports = {name: _port_name(name) for name in spec_signals(plan)}
    taken = {"clk", *ports.values()}
    names = {_clock_net(counters, gates): "clk"}
    counter_nets = {o.net for c in counters for o in c.outputs}
    # A gate output that carries a spec signal of the same name is the port itself.
    for name in spec_signals(plan):
        net = plan.signals[name].net
        if net == name and net not in counter_nets and any(net in g.gate.outputs for g in gates):
            names[net] = ports[name]
    nets = [o.net for c in counters for o in c.outputs]
    nets += [n for g in gates for n in (*g.gate.inputs, *g.gate.outputs) if n]
    nets += [c.reset_net for c in counters if c.reset_net]
    nets += [c.enable_net for c in counters if c.enable_net]
    nets += [plan.signals[n].net for n in spec_signals(plan)]
    for net in dict.fromkeys(nets):
        if net in names or net in RAILS:
            continue
        names[net] = _legal(net, taken)
        taken.add(names[net])
    return names


def _ref(names: dict[str, str], net: str) -> str:
    if net in RAILS:
        return "1'b1" if RAILS[net] else "1'b0"
    return names[net]


# ---------------------------------------------------------------- counters

def _width(modulus: int) -> int:
    return max(1, (modulus - 1).bit_length())


def _counter_comment(plan: Plan, c: CounterModel, catalog: Catalog) -> list[str]:
    part = catalog.parts[c.part]
    lines = [f"  // {c.ref} unit {c.unit}: {c.part} {part.function}; counts on the {c.edge} edge of "
             f"{c.clock_net}, modulus {c.modulus}"]
    for o in c.outputs:
        lines.append(f"  //   {o.pin_name or o.kind} (pin {o.pin}) -> {o.net}: {delay_text(o.delay_ps)} ns "
                     "after the counting edge")
    if c.enable_net:
        lines.append(f"  //   counts only while {c.enable_net} is high (count enables on the carry of the unit below)")
    if c.reset_net:
        kind = "synchronous" if c.reset_sync else "asynchronous"
        lines.append(f"  //   reset from {c.reset_net}, active {'high' if c.reset_high else 'low'}, {kind}"
                     + ("" if c.reset_sync else f", outputs clear {delay_text(c.reset_ps)} ns later"))
    return lines


def _output_value(c: CounterModel, o: CounterOutput, state: str) -> str:
    if o.kind == "stage":
        return f"{state}[{o.index - 1}]"
    if o.kind == "decoded":
        return f"({state} == {o.index})"
    if o.kind == "carry":
        return f"({state} < {(c.modulus + 1) // 2})"
    return f"({state} == {c.modulus - 1})"


def _zero_value(c: CounterModel, o: CounterOutput) -> str:
    return "1'b1" if c.level(o, 0) else "1'b0"


def _counter_block(plan: Plan, c: CounterModel, names: dict[str, str], catalog: Catalog,
                   taken: set[str]) -> list[str]:
    tag = _legal(f"{c.ref}_{c.unit}", taken)
    taken.update({f"{tag}_count", f"{tag}_next", f"{tag}_clk_was"})
    count, nxt, was = f"{tag}_count", f"{tag}_next", f"{tag}_clk_was"
    width = _width(c.modulus)
    clock = _ref(names, c.clock_net)
    lines = _counter_comment(plan, c, catalog)
    lines.append(f"  reg [{width - 1}:0] {count}, {nxt};")
    lines.append(f"  reg {was};")
    lines.append("  initial begin")
    lines.append(f"    {count} = 0;")
    lines += [f"    {names[o.net]} = {_zero_value(c, o)};" for o in c.outputs]
    lines.append("  end")
    now = "1'b1" if c.edge == "rising" else "1'b0"
    before = "1'b0" if c.edge == "rising" else "1'b1"
    active = "1'b1" if c.reset_high else "1'b0"
    condition = f"{was} === {before} && {clock} === {now}"
    if c.reset_net and not c.reset_sync:
        condition += f" && {names[c.reset_net]} !== {active}"
    if c.enable_clocks:
        lines.append("  // its ENABLE falling while CLOCK is low would also count (4520/4518); the timing "
                     "check keeps the enable decode settling while CLOCK is high, so this model leaves it out")
    if c.enable_net:        # a synchronous cascade: count only while the unit below's TC is high
        enabled = f"{names[c.enable_net]} === 1'b1"
        if c.reset_net and c.reset_sync:
            enabled = f"({enabled} || {names[c.reset_net]} === {active})"
        condition += f" && {enabled}"
    lines.append(f"  always @({clock}) begin")
    lines.append(f"    if ({condition}) begin")
    step = f"({count} == {c.modulus - 1}) ? {width}'d0 : {count} + {width}'d1"
    if c.reset_net and c.reset_sync:
        step = f"({names[c.reset_net]} === {active}) ? {width}'d0 : {step}"
    lines.append(f"      {nxt} = {step};")
    for o in c.outputs:
        if c.tc_follows_enable(o):
            continue
        new, old = _output_value(c, o, nxt), _output_value(c, o, count)
        lines.append(f"      if ({new} != {old}) {names[o.net]} <= #({delay_text(o.delay_ps)}) {new};")
    lines.append(f"      {count} = {nxt};")
    lines.append("    end")
    lines.append(f"    {was} = {clock};")
    lines.append("  end")
    for o in c.outputs:
        if c.tc_follows_enable(o):      # TC = CET and count 15: it follows the enable between edges
            enable = names[c.enable_net]    # type: ignore[index]
            lines.append(f"  always @({count} or {enable}) {names[o.net]} <= #({delay_text(o.delay_ps)}) "
                         f"{_output_value(c, o, count)} && {enable} === 1'b1;")
    if c.reset_net and not c.reset_sync:
        reset = names[c.reset_net]
        lines.append(f"  always @({reset}) if ({reset} === {active}) begin")
        lines.append(f"    {count} = 0;")
        lines += [f"    {names[o.net]} <= #({delay_text(c.reset_ps)}) {_zero_value(c, o)};"
                  for o in c.outputs]
        lines.append("  end")
    return lines


# ---------------------------------------------------------------- gates

def _gate_lines(g: GateModel, names: dict[str, str], taken: set[str]) -> list[str]:
    gate = g.gate
    delay = delay_text(g.delay_ps)
    ins = [_ref(names, n) for n in gate.inputs]
    label = _legal(g.name, taken)
    taken.add(label)
    comment = f"  // {g.name}: {gate.part} {gate.op}, {delay} ns (gate {gate.id})"
    if gate.op in PRIMITIVES:
        lines = [comment, f"  {gate.op} #({delay}) {label} ({names[gate.output]}, {', '.join(ins)});"]
        if g.also_op and len(gate.outputs) > 1 and gate.outputs[1]:
            twin = _legal(f"{label}_{g.also_op}", taken)
            taken.add(twin)
            lines.append(f"  {g.also_op} #({delay}) {twin} ({names[gate.outputs[1]]}, {', '.join(ins)});")
        return lines
    if gate.op == "mux":
        return [comment] + _mux_lines(gate, ins, names, delay)
    if gate.op == "decoder":
        return [comment] + _decoder_lines(gate, ins, names, delay)
    if gate.op == "flipflop":
        return _flipflop_lines(g, names, label, delay)
    if gate.op == "rc":
        fall = delay_text(g.fall_ps if g.fall_ps is not None else g.delay_ps)
        return [f"  // {g.name}: applied RC delay (R and C, no chip), {delay} ns rising to the Schmitt "
                f"VT+, {fall} ns falling to VT- (typical)",
                f"  buf #({delay}, {fall}) {label} ({names[gate.output]}, {', '.join(ins)});"]
    raise ValueError(f"expected a gate op Verilog can model, got {gate.op!r}")


def _flipflop_lines(g: GateModel, names: dict[str, str], label: str, delay: str) -> list[str]:
    """A D flip-flop as the catalog describes it: on its clocking edge D (as it was just
    before the edge) reaches Q, and its complement Q-bar, after the clock-to-output
    delay; set and reset are tied inactive.  Only a clean 0->1 (or 1->0) change clocks,
    as for the counters.  Its output starts at the level the plan gives tick 0."""
    gate = g.gate
    d, clock = _ref(names, gate.inputs[0]), _ref(names, gate.inputs[1])
    was = f"{label}_clk_was"
    now = "1'b1" if g.edge == "rising" else "1'b0"
    before = "1'b0" if g.edge == "rising" else "1'b1"
    outs = [(names[n], invert) for n, invert in zip(gate.outputs, (False, True)) if n]
    lines = [f"  // {g.name}: {gate.part} D flip-flop, {g.edge} edge of {gate.inputs[1]}, clock to output "
             f"{delay} ns (gate {gate.id}); set and reset held inactive",
             f"  reg {was};",
             f"  always @({clock}) begin",
             f"    if ({was} === {before} && {clock} === {now}) begin"]
    lines += [f"      {q} <= #({delay}) {'!' if invert else ''}{d};" for q, invert in outs]
    lines += ["    end", f"    {was} = {clock};", "  end"]
    return lines


def _flipflop_start(plan: Plan, gates: list[GateModel], names: dict[str, str]) -> list[str]:
    """The flip-flop outputs' levels at time 0 (tick 0), as the simulator starts them."""
    if not any(g.clocked for g in gates):
        return []
    clock_level = plan.counter.edge == "falling"
    levels = register_start_levels(plan.counter, plan.network, clock_level)
    lines = ["  initial begin"]
    for g in gates:
        if not g.clocked:
            continue
        for net, invert in zip(g.gate.outputs, (False, True)):
            if net:
                level = levels[g.gate.outputs[0]] if g.gate.outputs[0] else not levels[net]
                lines.append(f"    {names[net]} = 1'b{int(level != invert)};")
    return lines + ["  end"]


def _select_code(sel: list[str]) -> str:
    return "{" + ", ".join(reversed(sel)) + "}" if len(sel) > 1 else sel[0]


def _mux_lines(gate: Gate, ins: list[str], names: dict[str, str], delay: str) -> list[str]:
    k = next(k for k in range(1, 5) if (1 << k) + k == len(ins))
    data, sel = ins[: 1 << k], ins[1 << k:]
    code = _select_code(sel)
    expr = data[-1]
    for i in range(len(data) - 2, -1, -1):
        expr = f"({code} == {i}) ? {data[i]} : {expr}"
    lines = []
    if gate.outputs[0]:           # a mux used only through its inverted output leaves Y open
        lines.append(f"  assign #({delay}) {names[gate.outputs[0]]} = {expr};")
    if len(gate.outputs) > 1 and gate.outputs[1]:
        lines.append(f"  assign #({delay}) {names[gate.outputs[1]]} = !({expr});")
    return lines


def _decoder_lines(gate: Gate, ins: list[str], names: dict[str, str], delay: str) -> list[str]:
    nen = len(gate.enables_active)
    sel, enables = ins[: len(ins) - nen], ins[len(ins) - nen:]
    terms = [e if a == "high" else f"!{e}" for e, a in zip(enables, gate.enables_active)]
    enabled = " && ".join(terms) if terms else "1'b1"
    code = _select_code(sel)
    lines = []
    for n, net in enumerate(gate.outputs):
        if not net:
            continue
        hit = f"({enabled} && {code} == {n})"
        lines.append(f"  assign #({delay}) {names[net]} = {hit if gate.active == 'high' else '!' + hit};")
    return lines


# ---------------------------------------------------------------- the module

def _volts(value: float) -> str:
    """A real literal Verilog reads (digits on both sides of the point).

    >>> _volts(0.0), _volts(2.4904841)
    ('0.000000', '2.490484')
    """
    return f"{value:.6f}"


def _staircase_lines(plan: Plan, names: dict[str, str], taken: set[str],
                     reals: dict[str, str]) -> list[str]:
    lines = []
    for name, lad in sorted(plan.ladders.items()):
        nets = [net for _, _, net in lad.drivers]
        head = (f"  // staircase {name}: {lad.kind} ladder on "
                + ", ".join(f"{net} (tick bit {bit})" for bit, net in zip(lad.bits, nets))
                + f"; volts at {plan.supply:g} V with the drivers' {lad.r_out_driver:g} ohm")
        missing = [net for net in nets if net not in names]
        if missing:
            lines += [head, f"  // (not modelled: the model does not carry {', '.join(missing)})"]
            continue
        ident = _legal(name, taken)
        taken.add(ident)
        reals[name] = ident
        bits = ", ".join(names[net] for net in reversed(nets))
        width = len(nets)
        lines += [head, f"  real {ident};", f"  always @({' or '.join(names[n] for n in nets)})",
                  f"    case ({{{bits}}})"]
        lines += [f"      {width}'d{code}: {ident} = {_volts(level)};" for code, level in enumerate(lad.levels)]
        lines += [f"      default: {ident} = 0.0;  // a bit still unknown (x) before the count starts",
                  "    endcase"]
    return lines


def _switch_lines(plan: Plan, names: dict[str, str], taken: set[str], reals: dict[str, str]) -> list[str]:
    lines = []
    for name, sw in sorted(plan.switches.items()):
        control, on, off = sw.control_net, sw.on, sw.off
        lines.append(f"  // switch {name}: {sw.ref} ({sw.part}) section {sw.unit}, "
                     f"control {control}; common joins {sw.when_control_high} while the control is high")
        if control not in names:
            lines.append("  // (position not modelled: the model does not carry its control)")
            continue
        ident = _legal(f"{name}_on", taken)
        taken.add(ident)
        level = "1'b1" if sw.when_control_high == on else "1'b0"
        other = "1'b0" if level == "1'b1" else "1'b1"
        lines.append(f"  wire {ident} = {names[control]} ? {level} : {other};  // 1 while it joins {on}")
        sources = {net: reals.get(net) or {"GND": "0.0", "VSS": "0.0", "VDD": _volts(plan.supply)}.get(net)
                   for net in (on, off)}
        if all(sources.values()):
            common = _legal(str(sw.common_net or name), taken)
            taken.add(common)
            lines += [f"  real {common};  // the common terminal's volts",
                      f"  always @* {common} = {ident} ? {sources[on]} : {sources[off]};"]
    return lines


def plan_to_verilog(plan: Plan, catalog: Catalog) -> str:
    """The plan as one self-contained structural Verilog-2001 file."""
    counters, gates = _models(plan, catalog)
    names = _identifiers(plan, counters, gates)
    module = verilog_module_name(plan.name)
    signals = spec_signals(plan)
    ports = {name: _port_name(name) for name in signals}
    taken = set(names.values()) | {module}
    head = [
        f"// binsynth structural model of plan {plan.name!r}: {len(counters)} counter unit(s), "
        f"{len(gates)} gate(s), typical delays at {plan.supply:g} V.",
        f"// Counting edge: {plan.clock_edge} edge of clk. The count starts from all zeros; "
        "sample the outputs just before each counting edge.",
    ]
    osc = plan.oscillator
    if osc is not None:
        # The RC oscillator is analog: the model keeps clk a port, so a testbench
        # drives it at the oscillator's nominal frequency (formats.md: ports are clk
        # and the signals).
        head.append(f"// clk is made on the board by an RC oscillator ({osc.site.part} {osc.ref}, "
                    f"nominal {osc.f_nom:.6g} Hz); it stays an input here: drive it from the testbench.")
    por = plan.power_on_reset
    if por is not None:
        head.append(f"// A power-on reset ({por.part} {por.ref}, R {por.r:g} ohm, C {por.c:g} F) holds the "
                    f"counter reset for about {por.width_s[1]:.3g} s after power-up; the model simply "
                    "starts from zero.")
    head += [
        "`timescale 1ns/1ps",
        f"module {module} ({', '.join(['clk', *ports.values()])});",
        "  input clk;",
    ]
    head += [f"  output {ports[n]};" for n in signals]
    counter_nets = list(dict.fromkeys(names[o.net] for c in counters for o in c.outputs))
    counter_nets += [names[n] for g in gates if g.clocked for n in g.gate.outputs
                     if n and names[n] not in counter_nets]
    port_idents = set(ports.values())
    wires = list(dict.fromkeys(names[n] for g in gates if not g.clocked for n in g.gate.outputs
                               if n and names[n] not in port_idents))
    body = []
    if counter_nets:
        body.append(f"  reg {', '.join(counter_nets)};")
    if wires:
        body.append(f"  wire {', '.join(wires)};")
    for c in counters:
        body.append("")
        body += _counter_block(plan, c, names, catalog, taken)
    if gates:
        body.append("")
        body.append("  // decode logic: one primitive per physical gate, named chip_unit")
    body += _flipflop_start(plan, gates, names)
    for g in gates:
        body += _gate_lines(g, names, taken)
    body.append("")
    for n in signals:
        net = plan.signals[n].net
        polarity = plan.signals[n].polarity
        source = _ref(names, net)
        note = f"  // {n}: active {polarity}"
        if source != ports[n]:
            body.append(f"  assign {ports[n]} = {source};{note}")
        else:
            body.append(note + " (driven by its gate)")
    reals: dict[str, str] = {}
    for analog in (_staircase_lines(plan, names, taken, reals), _switch_lines(plan, names, taken, reals)):
        if analog:
            body.append("")
            body += analog
    return "\n".join(head + body + ["endmodule", ""])


def write_verilog(plan: Plan, catalog: Catalog, path: str | Path) -> Path:
    """Write ``plan_to_verilog`` to ``path`` atomically."""
    return atomic_write_text(path, plan_to_verilog(plan, catalog))


def design_text(design) -> str:
    """The ``--verilog`` text of a finished design (the exporter interface)."""
    return plan_to_verilog(design.plan, design.catalog)
