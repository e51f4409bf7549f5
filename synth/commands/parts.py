"""``binsynth parts [TYPE]``: the catalog, or one part drawn with its pins."""

from __future__ import annotations

import argparse

from ..errors import UsageError
from ..inventory import load_catalog
from ..limits import shown
from ..render import print_json, show, Table, Text

NAME = "parts"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("type", nargs="?", help="a part type or marking, e.g. 4040 or CD4011BE")
    parser.add_argument("--family", help="only this family: 4000B, 74HC or 74HCT")
    parser.add_argument("--function", help="only parts whose category or function contains this word "
                                           "(gate, nand, counter, switch, ...)")
    parser.add_argument("--json", action="store_true", help="print JSON for scripts")


def run(args: argparse.Namespace) -> int:

    catalog = load_catalog()
    if args.type:
        part_type = catalog.normalise(args.type)
        if part_type is None:
            close = catalog.closest(args.type)
            raise UsageError(f"unknown part {shown(args.type)}",
                             hint=f"closest known types: {', '.join(close)}" if close else None)
        part = catalog.parts[part_type]
        if args.json:
            print_json(part_json(part))
        else:
            show(part_blocks(part))
        return 0
    parts = filter_parts(catalog.parts.values(), args.family, args.function)
    if args.json:
        print_json([{"type": p.type, "family": p.family, "category": p.category,
                     "function": p.function, "pins": p.pin_count} for p in parts])
    else:
        show(list_blocks(parts))
    return 0


def filter_parts(parts, family: str | None, word: str | None) -> list:
    """Parts of a family whose category or function mentions ``word``."""
    chosen = []
    for part in parts:
        if family and part.family.lower() != family.lower():
            continue
        if word and word.lower() not in f"{part.category} {part.function}".lower():
            continue
        chosen.append(part)
    return sorted(chosen, key=lambda p: (p.family, _type_key(p.type)))


def _type_key(part_type: str) -> tuple:
    digits = "".join(ch for ch in part_type if ch.isdigit())
    return (int(digits) if digits else 0, part_type)


def list_blocks(parts) -> list:

    rows = [(p.type, p.family, p.category, p.function, p.pin_count,
             f"{p.supply[0]:g}-{p.supply[1]:g} V") for p in parts]
    return [Table(f"{len(rows)} part types", ("type", "family", "category", "function", "pins", "supply"),
                  rows)]


def package_drawing(part) -> str:
    """A DIP outline with pin numbers and datasheet names around it (top view)."""
    n = part.pin_count
    half = n // 2
    left = [(i, part.pins.get(i, "?")) for i in range(1, half + 1)]
    right = [(n + 1 - i, part.pins.get(n + 1 - i, "?")) for i in range(1, half + 1)]
    name_w = max(len(name) for _, name in left + right)
    body_w = max(12, len(part.type) + 4)
    pad = " " * (name_w + 5)
    lines = [pad + "+" + "-" * ((body_w - 2) // 2) + "\\/" + "-" * (body_w - 2 - (body_w - 2) // 2) + "+"]
    for row, ((lp, ln), (rp, rn)) in enumerate(zip(left, right)):
        label = part.type.center(body_w) if row == half // 2 else " " * body_w
        lines.append(f"{ln.rjust(name_w)} {lp:>2} -|{label}|- {rp:<2} {rn}")
    lines.append(pad + "+" + "-" * body_w + "+")
    return "\n".join(lines)


def pin_rows(part) -> list[tuple]:
    """(pin, datasheet name, unit, role) for every pin of the package."""
    roles = part.pin_roles()
    rows = []
    for pin in range(1, part.pin_count + 1):
        role = roles.get(pin, "")
        unit, _, what = role.partition(": ") if ": " in role else ("", "", role)
        rows.append((pin, part.pins.get(pin, "?"), unit, describe_role(part, unit, what)))
    return rows


def describe_role(part, unit_id: str, role: str) -> str:
    """Readable text for a schema role: ``stages.4`` -> ``stage 4 (divide by 16)``.

    >>> describe_role(None, "", "stages.4")
    'stage 4 (divide by 16)'
    >>> describe_role(None, "", "inputs[1]")
    'input'
    """
    head, _, tail = role.partition(".")
    base = head.split("[")[0]
    unit = next((u for u in part.units if u.id == unit_id), None) if part is not None else None
    if base == "stages":
        return f"stage {tail} (divide by {2 ** int(tail)})"
    if base == "decoded":
        return f"decoded output, high in state {tail}"
    if base in ("clock", "reset", "enable", "set") and tail == "pin":
        return f"{base} ({_control_words(unit, base)})" if unit is not None else base
    if base == "throws":
        return f"throw joined while control is {tail}"
    return {"inputs": "input", "input": "input", "output": "output", "selects": "select",
            "data": "data input", "outputs": "output", "channels": "channel",
            "terminals": "switch terminal", "control": "control", "common": "common",
            "also": "second output"}.get(base, role)


TIMING_WORDS = {
    "tpd": "propagation delay, input to output",
    "stage": "delay per counter stage",
    "clock_to_q": "clock to output delay",
    "clock_width": "shortest clock pulse",
    "fmax_mhz": "fastest clock",
    "setup": "setup time before the clock edge",
    "hold": "hold time after the clock edge",
    "reset": "reset to output delay",
    "reset_width": "shortest reset pulse",
    "select": "select to output delay",
}
"""The catalog's timing keys in the words the facts table prints (the keys stay in --json)."""
THRESHOLD_WORDS = {"vt_plus": "VT+ (rising)", "vt_minus": "VT- (falling)"}


def _control_words(unit, name: str) -> str:
    """``rising`` for a clock, ``active low`` for a reset, set or enable."""
    if name == "clock":
        return unit.clock.edge
    control = unit.control_of_role(name)
    return control.edge or f"active {control.active}"


def _facts(part) -> list[tuple]:
    rows = [("family", part.family), ("function", part.function),
            ("package", f"{part.package}-{part.pin_count}"),
            ("supply", f"{part.supply[0]:g} to {part.supply[1]:g} V")]
    for key, table in part.timing.items():
        if isinstance(table, dict):
            cells = []
            for volts, row in sorted(table.items()):
                if isinstance(row, dict):
                    cells.append(f"{volts:g} V: " + " / ".join(f"{k} {v:g}" for k, v in row.items()))
            unit = "MHz" if key.endswith("mhz") else "ns"
            rows.append((f"{TIMING_WORDS.get(key, key.replace('_', ' '))} ({unit})", "; ".join(cells)))
    for volts, row in sorted(part.thresholds.items()):
        text = "; ".join(f"{THRESHOLD_WORDS.get(k, k)} {v.get('min', '?')}/{v.get('typ', '?')}/"
                         f"{v.get('max', '?')} V" for k, v in row.items() if isinstance(v, dict))
        rows.append((f"Schmitt thresholds at {volts:g} V (min/typ/max)", text))
    for volts, row in sorted(part.r_on.items()):
        rows.append((f"switch on-resistance at {volts:g} V", " / ".join(f"{k} {v} Ω" for k, v in row.items())))
    for key, text in part.source.items():
        rows.append((f"source: {key}", text))
    if part.notes:
        rows.append(("notes", part.notes))
    return rows


def part_blocks(part) -> list:

    return [Text(f"{part.type}: {part.function} ({part.family}, {part.package}-{part.pin_count}, top view)"),
            Text(package_drawing(part)),
            Table("pins", ("pin", "name", "unit", "role"), pin_rows(part)),
            Table("datasheet facts", ("fact", "value"), _facts(part))]


def part_json(part) -> dict:
    return {"type": part.type, "family": part.family, "function": part.function,
            "category": part.category, "package": part.package, "pin_count": part.pin_count,
            "pins": {str(k): v for k, v in sorted(part.pins.items())},
            "power": part.power, "supply_v": {"min": part.supply[0], "max": part.supply[1]},
            "units": [{"id": u.id, "type": u.type, **{k: v for k, v in u.fields.items()
                                                      if k not in ("id", "type")}} for u in part.units],
            "timing": {k: ({str(v): r for v, r in t.items()} if isinstance(t, dict) else t)
                       for k, t in part.timing.items()},
            "thresholds_v": {str(v): r for v, r in part.thresholds.items()},
            "r_on_ohm": {str(v): r for v, r in part.r_on.items()},
            "source": part.source}
