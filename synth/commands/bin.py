"""``binsynth bin BIN``: check a bin and show what it can provide."""

from __future__ import annotations

import argparse
from collections import defaultdict
from pathlib import Path

from ..bincsv import bin_text_from_csv
from ..bintake import diff_bins
from ..errors import UsageError
from ..exports import atomic_write_text
from ..inventory import bin_from_yaml, load_bin, load_catalog
from ..limits import check_supply
from ..render import print_json, show, Table, Text
from ..units import format_si, parse_quantity
from ..yamlsrc import parse_yaml

NAME = "bin"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("bin", help="the bin file (YAML); with --from-csv, the bin file to write")
    parser.add_argument("--supply", default="5 V", help="supply voltage the circuit will run at (default 5 V)")
    parser.add_argument("--json", action="store_true", help="print JSON for scripts")
    parser.add_argument("--diff", metavar="OTHER",
                        help="show what changed in BIN since the bin file OTHER (e.g. BIN.bak after "
                             "a take): '+' was added to BIN, '-' taken out")
    parser.add_argument("--from-csv", metavar="FILE",
                        help="write BIN from a spreadsheet saved as CSV with the columns part and "
                             "count (markings as printed), then check it; BIN must not exist yet")


def run(args: argparse.Namespace) -> int:
    try:
        supply = parse_quantity(args.supply, "V")
    except ValueError as exc:
        raise UsageError(f"--supply: {exc}") from None
    check_supply(supply, "--supply", error=UsageError)
    catalog = load_catalog()
    if args.from_csv:
        return run_from_csv(args, catalog, supply)
    stock = load_bin(args.bin, catalog, supply)
    if args.diff:
        return run_diff(stock, load_bin(args.diff, catalog, supply), args.json)
    summary = provides(stock, catalog)
    if args.json:
        print_json(summary)
    else:
        show(summary_blocks(stock, summary))
    return 0


def run_from_csv(args: argparse.Namespace, catalog, supply: float) -> int:
    """``--from-csv FILE``: the bin file written from the spreadsheet, then shown as checked."""
    target = Path(args.bin)
    if target.exists() or target.resolve() == Path(args.from_csv).resolve():
        raise UsageError(f"{args.bin}: the file exists; --from-csv writes a new bin and never "
                         "replaces a file", hint="name a new file, or move the old one away first")
    made = bin_text_from_csv(args.from_csv, catalog)
    stock = bin_from_yaml(parse_yaml(made.text, args.bin), catalog, supply, args.bin)
    atomic_write_text(target, made.text)
    summary = provides(stock, catalog)
    if args.json:
        print_json({"written": args.bin, "from_csv": args.from_csv, "rows": made.rows,
                    "ignored_columns": list(made.ignored), **summary})
        return 0
    head = (f"wrote {args.bin} from {args.from_csv}: {made.rows} row{'s' if made.rows != 1 else ''}, "
            f"{len(made.counts)} marking{'s' if len(made.counts) != 1 else ''}")
    if made.ignored:
        head += f" (columns read past: {', '.join(made.ignored)})"
    show([Text(head)] + summary_blocks(stock, summary))
    return 0


def run_diff(stock, other, as_json: bool) -> int:
    """``--diff OTHER``: what changed in BIN since OTHER; '+' is added to the bin."""
    diff = diff_bins(other, stock)
    if as_json:
        print_json({"bin": stock.path, "other": other.path, **diff.as_dict()})
    else:
        show(diff_blocks(stock, other, diff))
    return 0


def diff_blocks(stock, other, diff) -> list:
    if not diff.changed:
        return [Text(f"{stock.path} and {other.path} hold the same parts and passives")]
    blocks = [Text(f"changes in {stock.path} since {other.path} (+ added to the bin, - taken out)")]
    if diff.parts:
        blocks.append(Table("parts", ("part", "before", "now", "change"),
                            [(p, a, b, f"{b - a:+d}") for p, a, b in diff.parts]))
    passives = [(kind, ", ".join(format_si(v, unit) for v in added) or "-",
                 ", ".join(format_si(v, unit) for v in removed) or "-")
                for kind, unit, added, removed in (
                    ("resistors", "Ω", diff.resistors_added, diff.resistors_removed),
                    ("capacitors", "F", diff.capacitors_added, diff.capacitors_removed))
                if added or removed]
    if passives:
        blocks.append(Table("passives", ("kind", "added", "taken out"), passives))
    return blocks


def provides(stock, catalog) -> dict:
    """What the bin's usable chips offer, by kind of unit."""
    gates: dict[tuple, dict] = defaultdict(lambda: {"units": 0, "chips": []})
    counters, switches, programmable, flipflops = [], [], [], []
    for part_type, count in sorted(stock.parts.items()):
        part = catalog.parts[part_type]
        for kind, units in _units_by_kind(part).items():
            entry = gates[kind]
            entry["units"] += len(units) * count
            entry["chips"].append(f"{count} x {part_type}")
        for unit in part.units_of("counter"):
            counters.append(_counter_row(part, unit, count))
        for unit_type in ("spdt", "spst", "analog_mux"):
            units = part.units_of(unit_type)
            if units:
                switches.append({"part": part_type, "chips": count, "kind": unit_type,
                                 "sections": len(units) * count})
        for unit_type in ("decoder", "mux"):
            units = part.units_of(unit_type)
            if units:
                programmable.append({"part": part_type, "chips": count, "kind": unit_type,
                                     "units": len(units) * count,
                                     "width": len(units[0].selects)})
        if part.units_of("flipflop"):
            flipflops.append({"part": part_type, "chips": count,
                              "units": len(part.units_of("flipflop")) * count})
    gate_rows = [{"kind": _kind_name(kind), "op": kind[0], "inputs": kind[1], "schmitt": kind[2],
                  "units": entry["units"], "from": ", ".join(entry["chips"])}
                 for kind, entry in sorted(gates.items())]
    return {"bin": stock.path, "supply_v": stock.supply,
            "parts": dict(sorted(stock.parts.items())),
            "left_out": dict(sorted(stock.excluded.items())),
            "gates": gate_rows, "counters": counters, "switches": switches,
            "decoders_and_muxes": programmable, "flipflops": flipflops,
            "resistors_ohm": stock.resistors, "capacitors_f": stock.capacitors,
            "warnings": list(stock.warnings)}


def _units_by_kind(part) -> dict[tuple, list]:
    kinds: dict[tuple, list] = defaultdict(list)
    for unit in part.units_of("gate", "inverter", "buffer"):
        kinds[(unit.op, len(unit.inputs), unit.schmitt)].append(unit)
    return kinds


def _kind_name(kind: tuple) -> str:
    op, width, schmitt = kind
    name = {"not": "inverter", "buf": "buffer"}.get(op, f"{width}-input {op.upper()}")
    return name + (" (Schmitt)" if schmitt else "")


def _counter_row(part, unit, count: int) -> dict:
    return {"part": part.type, "unit": unit.id, "chips": count, "mode": unit.mode,
            "modulus": unit.modulus, "synchronous": unit.synchronous,
            "edge": unit.clock.edge if unit.clock else None,
            "stages_pinned": sorted(unit.stages), "decoded_outputs": sorted(unit.decoded),
            "reset": unit.reset.active if unit.reset else None}


def _stage_text(stages: list[int]) -> str:
    """``[1, 4, 5, 6]`` -> ``Q1, Q4-Q6`` (stage numbers, Q1 = divide by 2)."""
    runs, start = [], None
    for i, s in enumerate(stages):
        if start is None:
            start = s
        if i + 1 == len(stages) or stages[i + 1] != s + 1:
            runs.append(f"Q{start}" if start == s else f"Q{start}-Q{s}")
            start = None
    return ", ".join(runs)


def summary_blocks(stock, summary: dict) -> list:
    blocks = [Text(f"bin {stock.path}: {sum(stock.parts.values())} usable chips at {stock.supply:g} V")]
    blocks.append(Table("gates, inverters and buffers", ("kind", "units", "from"),
                        [(g["kind"], g["units"], g["from"]) for g in summary["gates"]]))
    if summary["counters"]:
        blocks.append(Table("counters", ("part", "unit", "chips", "mode", "clocking", "stages pinned out"), [
            (c["part"], c["unit"], c["chips"], f"{c['mode']} /{c['modulus']}",
             ("synchronous" if c["synchronous"] else "ripple") + f", {c['edge']} edge",
             _stage_text(c["stages_pinned"]) if c["stages_pinned"]
             else f"decoded 0-{max(c['decoded_outputs'])}") for c in summary["counters"]]))
    if summary["switches"]:
        blocks.append(Table("analog switches", ("part", "chips", "kind", "sections"),
                            [(s["part"], s["chips"], s["kind"], s["sections"]) for s in summary["switches"]]))
    if summary["decoders_and_muxes"]:
        blocks.append(Table("decoders and multiplexers", ("part", "chips", "kind", "select bits", "units"),
                            [(d["part"], d["chips"], d["kind"], d["width"], d["units"])
                             for d in summary["decoders_and_muxes"]]))
    if summary["flipflops"]:
        blocks.append(Table("flip-flops", ("part", "chips", "flip-flops"),
                            [(f["part"], f["chips"], f["units"]) for f in summary["flipflops"]]))
    passives = [("resistors", ", ".join(format_si(r, "Ω") for r in stock.resistors) or "none"),
                ("capacitors", ", ".join(format_si(c, "F") for c in stock.capacitors) or "none")]
    blocks.append(Table("passives", ("kind", "values on hand"), passives))
    for warning in stock.warnings:
        blocks.append(Text(f"warning: {warning}"))
    return blocks
