"""``binsynth delay TIME --bin BIN``: R and C from the bin for an RC delay between two stages.

Interface: ``NAME``, ``add_arguments(parser)``, ``run(args) -> int``;
``delay_blocks(...)`` / ``delay_json(...)`` for the two ways of printing.  The
receiving input is chosen by ``analog.choose_receiver``.

The receiving stage is a Schmitt input from the bin (any part whose catalog
entry has ``thresholds``: 40106, 74HC14, 4093, 74HC132 ...), inverters first;
without one the delay drives a plain CMOS input, which works but is the
weaker choice (the design says why).
"""

from __future__ import annotations

import argparse
import re
from dataclasses import asdict

from ..analog import choose_receiver, rc_delay_design
from ..errors import UsageError
from ..inventory import load_bin, load_catalog
from ..limits import check_supply, shown
from ..render import print_json, show, Table, Text
from ..units import format_si, parse_quantity

NAME = "delay"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("delay", help="the wanted delay, e.g. 50us, 1.5ms, '40 us'")
    parser.add_argument("--bin", required=True, metavar="BIN", help="the bin file (YAML)")
    parser.add_argument("--supply", default="5", help="supply voltage, e.g. 5 or '10 V' (default 5)")
    parser.add_argument("--part", help="the receiving part, e.g. 40106 or CD40106BE (default: a "
                                       "Schmitt part from the bin); 'plain' for a plain CMOS input")
    fixed = parser.add_mutually_exclusive_group()
    fixed.add_argument("--r", metavar="OHMS", help="use this resistor (e.g. 10k) and choose C")
    fixed.add_argument("--c", metavar="FARADS", help="use this capacitor (e.g. 6n8) and choose R")
    parser.add_argument("--edge", choices=("rising", "falling"), default="rising",
                        help="the edge the values are chosen for (default rising: from 0 V up to "
                             "the input's threshold)")
    parser.add_argument("--json", action="store_true", help="print JSON for scripts")


def run(args: argparse.Namespace) -> int:
    wanted = _time(args.delay)
    supply = check_supply(_quantity(args.supply, "V", "--supply"), "--supply", error=UsageError)
    fixed_r = _quantity(args.r, "ohm", "--r") if args.r else None
    fixed_c = _quantity(args.c, "F", "--c") if args.c else None
    catalog = load_catalog()
    bin_ = load_bin(args.bin, catalog, supply)
    part_type, thresholds, notes = choose_receiver(bin_, catalog, args.part, supply)
    design = rc_delay_design(wanted, supply=supply, thresholds=thresholds,
                             resistors=bin_.resistors, capacitors=bin_.capacitors,
                             fixed_r=fixed_r, fixed_c=fixed_c, edge=args.edge)
    part = catalog.parts.get(part_type) if part_type else None
    warnings = list(bin_.warnings) + notes + design.warnings
    if args.json:
        print_json(delay_json(design, part_type, thresholds, wiring_hint(design, part), warnings))
    else:
        show(delay_blocks(design, part_type, thresholds, wiring_hint(design, part), warnings))
    return 0


def _time(text: str) -> float:
    """The wanted delay; a bare number is refused, since 50 could mean 50 s or 50 us."""
    if re.fullmatch(r"\s*[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?\s*", text):
        raise UsageError(f"delay: expected a time with its unit, got the bare number {shown(text.strip())}",
                         hint=f"write the unit: {text.strip()}us, {text.strip()}ms or '{text.strip()} s'")
    return _quantity(text, "s", "delay")


def _quantity(text: str, unit: str, what: str) -> float:
    try:
        value = parse_quantity(text, unit)
    except ValueError as exc:
        raise UsageError(f"{what}: {exc}") from None
    if not 0 < value < float("inf"):
        raise UsageError(f"{what}: expected a positive value, got {shown(text)}")
    return value


def _unit_pins(part, index: int):
    """(input pins, output pin, unit id) of the part's index-th logic unit, if it has one."""
    units = [u for u in part.units if u.type in ("inverter", "gate")]
    if len(units) <= index:
        return None
    unit = units[index]
    return unit.inputs, unit.output, unit.id


def wiring_hint(design, part) -> list[str]:
    """Where R and C go, with real pins when the receiving part is known."""
    r, c = format_si(design.r, "Ω"), format_si(design.c, "F")
    lines = [f"stage 1 output → R ({r}) → delay node",
             f"C ({c}) from the delay node to VSS, leads short",
             "delay node → stage 2 input (nothing else on the node)"]
    if part is None:
        return lines
    first, second = _unit_pins(part, 0), _unit_pins(part, 1)
    vss = part.power.get("VSS")
    if first and second:
        (_, out1, id1), (ins2, _, id2) = first, second
        example = (f"e.g. on one {part.type}: pin {out1} (unit {id1} output) → R → node → "
                   f"pin {ins2[0]} (unit {id2} input); C from the node to pin {vss} (VSS)")
        if len(ins2) > 1:
            others = ", ".join(str(p) for p in ins2[1:])
            example += (f"; tie unit {id2}'s other input (pin {others}) to VDD (Schmitt NAND "
                        "thresholds are specified with one input switching; tying both inputs "
                        "together shifts them)")
        lines.append(example)
    if part.category in ("inverter", "gate"):
        lines.append("stage 2 inverts: its output carries the delayed edge the other way up")
    return lines


def delay_blocks(design, part_type, thresholds, wiring, warnings) -> list:
    """The design as render blocks: values, formula, spread, wiring, warnings."""
    receiver = part_type or "a plain CMOS input"
    head = Text(f"RC delay of {format_si(design.wanted_s, 's')} into {receiver} at "
                f"{design.supply:g} V, chosen for the {design.edge} edge\n{thresholds.get('note', '')}")
    values = Table("values", ("", "needed", "chosen"), [
        ("R", format_si(design.needed_r, "Ω") + f" (with {format_si(design.c, 'F')})",
         format_si(design.r, "Ω")),
        ("C", format_si(design.needed_c, "F") + f" (with {format_si(design.r, 'Ω')})",
         format_si(design.c, "F")),
        ("delay", format_si(design.wanted_s, "s"),
         f"{format_si(design.delay_typ, 's')} ({design.error:+.1%})"),
    ])
    up, down = ("VT+", "VT−") if part_type else ("VDD/2", "VDD/2")   # VT+/VT- name Schmitt thresholds
    labels = (f"rising  (0 → {up}):", f"falling (VDD → {down}):")
    width = max(len(label) for label in labels) + 1
    formula = Text("formula (typical thresholds):\n"
                   f"  {labels[0].ljust(width)}{design.formulas['rising']}\n"
                   f"  {labels[1].ljust(width)}{design.formulas['falling']}")
    th = design.thresholds
    spread = Table("delay over the threshold spread", ("edge", "threshold min / typ / max",
                                                       "delay min", "typ", "max"), [
        ("rising", _row_text(th["vt_plus"]), format_si(design.rising.min, "s"),
         format_si(design.rising.typ, "s"), format_si(design.rising.max, "s")),
        ("falling", _row_text(th["vt_minus"]), format_si(design.falling.min, "s"),
         format_si(design.falling.typ, "s"), format_si(design.falling.max, "s")),
    ])
    blocks = [head, values, formula, spread, Text("wiring:\n" + "\n".join(f"  {w}" for w in wiring))]
    if warnings:
        blocks.append(Text("warnings:\n" + "\n".join(f"  - {w}" for w in warnings), style="yellow"))
    return blocks


def _row_text(row: dict) -> str:
    return f"{row['min']:.3g} / {row['typ']:.3g} / {row['max']:.3g} V"


def delay_json(design, part_type, thresholds, wiring, warnings) -> dict:
    """A JSON object for scripts, in the plan JSON's key style: each number names its
    unit (``_s``, ``_v``, ``_ohm``, ``_farad``).  /2: the keys of /1 gained their units."""
    d = design
    return {"format": "binsynth-delay/2", "receiver": part_type or "plain-input",
            "thresholds_method": thresholds.get("method"), "thresholds_note": thresholds.get("note"),
            "wanted_s": d.wanted_s, "supply_v": d.supply, "edge": d.edge, "r_ohm": d.r, "c_farad": d.c,
            "needed_c_farad": d.needed_c, "needed_r_ohm": d.needed_r, "delay_typ_s": d.delay_typ,
            "error": d.error, "rising_s": asdict(d.rising), "falling_s": asdict(d.falling),
            "thresholds_v": d.thresholds, "formula": d.formula, "formulas": dict(d.formulas),
            "options": [{"r_ohm": o.r, "c_farad": o.c, "needed_c_farad": o.needed_c,
                         "needed_r_ohm": o.needed_r, "error": o.error, "mid_range": o.mid_range}
                        for o in d.options],
            "plain_input": d.plain_input, "wiring": wiring, "warnings": warnings}
