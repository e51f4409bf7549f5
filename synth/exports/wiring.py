"""The wiring list (``--wiring FILE``): printable Markdown, one checkbox per wire.

Interface: ``wiring_markdown(plan) -> str``; ``wire_line(plan, wire) -> str``;
``driver_first(wires) -> list[Wire]``; ``write_wiring(plan, path)`` (atomic).

Layout: title, supply, cautions, parts with their decoupling capacitors,
signals and switches, then every chip in ref order with its pins in pin
order (a checkbox for each wire that starts at the pin -- a wire runs from the
net's driver to a load, the way a signal is traced -- a plain line for a
pin that only receives wires, is left open or is not connected), then every
net with its pins.  Each wire appears exactly once, so ticking every box
means the board is built.
"""

from __future__ import annotations

from pathlib import Path

from ..netlist import Plan, Wire, endpoint_text, is_passive, pin_table, ref_key, wire_list
from ..units import format_si
from .files import atomic_write_text


def driver_first(wires: list[Wire]) -> list[Wire]:
    """Each pin-to-pin wire turned to run from the net's driver to its load, sorted by driver.

    ``netlist.wire_list`` joins every pin of a net to the net's driver (or
    first pin); a person traces a signal from where it comes from, so the list
    reads driver -> load.  Rail ties and wires leaving the board keep their ends.
    """
    turned = [Wire(w.net, w.to, w.frm) if isinstance(w.to, tuple) else w for w in wires]
    return sorted(turned, key=lambda w: (ref_key(w.frm[0]), w.frm[1], _end_key(w.to)))


def _end_key(end: tuple[str, int] | str) -> tuple:
    """Loads in chip and pin order (U4 pin 2 before U4 pin 12), outside ends last."""
    return (0, ref_key(end[0]), end[1], "") if isinstance(end, tuple) else (1, (), 0, end)


def _end_text(plan: Plan, end: tuple[str, int] | str) -> str:
    return end if isinstance(end, str) else endpoint_text(plan, *end)


def wire_line(plan: Plan, wire: Wire) -> str:
    """``- [ ] U1 pin 9 (Q1) -> U2 pin 1 (1A) [net Q1]``, with the pin's note if any."""
    text = f"- [ ] {endpoint_text(plan, *wire.frm)} -> {_end_text(plan, wire.to)} [net {wire.net}]"
    if is_passive(wire.frm[0]):
        return text
    note = plan.chip(wire.frm[0]).notes.get(wire.frm[1])
    if note and (wire.net in ("VDD", "VSS") or " joins the common" in note) and not note.startswith("supply"):
        text += f": {note}"
    return text


def _header(plan: Plan) -> list[str]:
    lines = [f"# Wiring list: {plan.name}", ""]
    sources = ", ".join(x for x in (f"spec {plan.spec_path}" if plan.spec_path else "",
                                    f"bin {plan.bin_path}" if plan.bin_path else "") if x)
    if sources:
        lines += [f"Made by binsynth from {sources}.", ""]
    lines += ["Tick each box as the wire goes in. Every wire is listed once, under the chip "
              "and pin where it starts.", "", "## Supply", "",
              f"- VDD = {plan.supply:g} V, VSS = 0 V (ground).",
              f"- The counter advances on the {plan.clock_edge} edge of the clock input.", ""]
    lines += ["## Cautions", ""] + [f"- {c}" for c in plan.cautions] + [""]
    return lines


def _parts(plan: Plan) -> list[str]:
    lines = ["## Parts", "", "| Part | Count | Function |", "|---|---|---|"]
    for part, count in sorted(plan.bom.items()):
        lines.append(f"| {part} | {count} | {plan.parts[part].function} |")
    lines.append(f"| 100 nF ceramic capacitor | {len(plan.decoupling)} | decoupling, one per chip "
                 "across its supply pins (common practice) |")
    values: dict[tuple[str, str], int] = {}
    uses: dict[tuple[str, str], set[str]] = {}
    section = _passive_sections(plan)
    for item in plan.passives:
        key = (item.kind, item.label())
        values[key] = values.get(key, 0) + 1
        uses.setdefault(key, set()).add(section.get(item.ref, item.purpose))
    for (kind, label), count in sorted(values.items()):
        lines.append(f"| {label} {kind} | {count} | {', '.join(sorted(uses[(kind, label)]))} (below) |")
    return lines + [""]


def _passive_sections(plan: Plan) -> dict[str, str]:
    """Resistor/capacitor ref -> the part of the plan it belongs to: only what the plan has
    (no "oscillator" on a plan without one)."""
    found: dict[str, str] = {}
    if plan.oscillator is not None:
        found.update({ref: "clock oscillator" for ref in plan.oscillator.passives})
    if plan.power_on_reset is not None:
        found.update({ref: "power-on reset" for ref in plan.power_on_reset.passives})
    for name, ladder in plan.ladders.items():
        found.update({ref: f"staircase {name}" for ref in ladder.passives})
    return found


def _analog(plan: Plan) -> list[str]:
    """The oscillator and the staircases in words, before the wires."""
    lines: list[str] = []
    osc = plan.oscillator
    if osc is not None:
        lines += ["## Clock oscillator", "",
                  f"- {osc.site.describe()} on {osc.ref}; its output is net {osc.clock_net}, the "
                  "counter clock.",
                  f"- {osc.formula}", f"- {osc.worked}"]
        if osc.f_min is not None:
            lines.append(f"- Over the datasheet thresholds: {format_si(osc.f_min, 'Hz')} .. "
                         f"{format_si(osc.f_max, 'Hz')} (nominal {format_si(osc.f_nom, 'Hz')}, wanted "
                         f"{format_si(osc.wanted_hz, 'Hz')}).")
        lines.append("")
    for name, lad in plan.ladders.items():
        lines += [f"## Staircase {name}", "",
                  f"- {lad.kind} ladder: {lad.construction}; output on net {name}, source "
                  f"resistance {format_si(lad.output_resistance, 'Ω')}.",
                  "- Levels at the supply: " + ", ".join(f"{code}: {v:.3f} V"
                                                          for code, v in enumerate(lad.levels)), ""]
    return lines


def _passives(plan: Plan, wires: list[Wire]) -> list[str]:
    """Each resistor and capacitor with a box for every wire that starts at one of its ends."""
    if not plan.passives:
        return []
    starts: dict[tuple[str, int], list[Wire]] = {}
    for wire in wires:
        starts.setdefault(wire.frm, []).append(wire)
    lines = ["## Resistors and capacitors", ""]
    for item in plan.passives:
        lines += [f"### {item.ref}: {item.label()} {item.kind}, {item.purpose}", "",
                  f"End 1 on net {item.ends[0]}, end 2 on net {item.ends[1]}.", ""]
        for end in (1, 2):
            here = starts.get((item.ref, end), [])
            if here:
                lines += [wire_line(plan, w) for w in here]
            else:
                lines.append(f"- {item.ref} end {end}: net {item.ends[end - 1]}, its wire is listed "
                             "at the other end")
        lines.append("")
    return lines


def _signals(plan: Plan) -> list[str]:
    lines = ["## Signals", "", "| Signal | Asserted level | Chip pin | Net |", "|---|---|---|---|"]
    for name, sig in plan.signals.items():
        source = endpoint_text(plan, *sig.source) if sig.source else f"constant ({sig.net})"
        lines.append(f"| {name} | {sig.polarity} | {source} | {sig.net} |")
    lines.append("")
    if plan.switches:
        lines += ["## Switches", "", "| Switch | Chip | Common | Joins while control high | "
                  "Joins while control low |", "|---|---|---|---|---|"]
        for name, sw in plan.switches.items():
            low = sw.off if sw.when_control_high == sw.on else sw.on
            lines.append(f"| {name} | {sw.ref} ({sw.part}, {sw.kind}) | "
                         f"{endpoint_text(plan, sw.ref, sw.common_pin)} | "
                         f"{sw.when_control_high} | {low} |")
        lines.append("")
    return lines


def _chips(plan: Plan, wires: list[Wire]) -> list[str]:
    starts: dict[tuple[str, int], list[Wire]] = {}
    for wire in wires:
        starts.setdefault(wire.frm, []).append(wire)
    decoupling = dict(plan.decoupling)
    lines = ["## Wires by chip", ""]
    for chip in sorted(plan.chips, key=lambda c: ref_key(c.ref)):
        part = plan.parts[chip.part]
        lines += [f"### {chip.ref}: {chip.part} ({part.function}), {chip.role}", ""]
        if chip.ref in decoupling:
            lines += [f"Decoupling: {decoupling[chip.ref]}.", ""]
        for row in pin_table(plan, chip.ref):
            here = starts.get((chip.ref, row.pin), [])
            if here:
                lines += [wire_line(plan, w) for w in here]
            elif row.net == "NC":
                lines.append(f"- {chip.ref} pin {row.pin} ({row.function}): not connected inside the chip")
            elif not row.net:
                note = chip.notes.get(row.pin, "not used, left open")
                lines.append(f"- {chip.ref} pin {row.pin} ({row.function}): open ({note})")
            else:
                lines.append(f"- {chip.ref} pin {row.pin} ({row.function}): net {row.net}, "
                             "its wires are listed at their other ends")
        lines.append("")
    return lines


def _nets(plan: Plan) -> list[str]:
    lines = ["## Wires by net", ""]
    for net, pins in plan.nets.items():
        ends = ", ".join(endpoint_text(plan, r, p) for r, p in pins)
        outside = f"; leaves the board to {plan.external[net]}" if net in plan.external else ""
        count = f"{len(pins)} pin" + ("s" if len(pins) != 1 else "")
        lines.append(f"- **{net}** ({count}): {ends}{outside}")
    return lines + [""]


def wiring_markdown(plan: Plan) -> str:
    """The whole wiring list as one Markdown document."""
    wires = driver_first(wire_list(plan))
    lines = (_header(plan) + _parts(plan) + _signals(plan) + _analog(plan) + _chips(plan, wires)
             + _passives(plan, wires) + _nets(plan))
    lines += [f"{len(wires)} wires in all."]
    return "\n".join(lines) + "\n"


def write_wiring(plan: Plan, path: str | Path) -> Path:
    """Write the wiring list, replacing any old file in one step."""
    return atomic_write_text(path, wiring_markdown(plan))


def design_text(design) -> str:
    """The ``--wiring`` text of a finished design (the exporter interface)."""
    return wiring_markdown(design.plan)
