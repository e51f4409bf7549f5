"""``binsynth substitute TARGET --bin BIN``: build a gate the bin lacks from what it has.

Interface: ``NAME``, ``add_arguments(parser)``, ``run(args) -> int``;
``substitute_blocks(target, ways, bin_path)`` (what a person sees) and
``substitute_json(target, ways)`` (what a script reads).  The logic lives in
``synth.substitute``.
"""

from __future__ import annotations

import argparse

from ..errors import UsageError
from ..inventory import load_bin, load_catalog
from ..limits import check_expression, check_supply
from ..mapper import build_library
from ..render import counted, print_json, progress, show, Table, Text
from ..substitute import draw_way, parse_target, substitute, way_json, wiring_rows
from ..units import parse_quantity
from .options import add_effort_argument

NAME = "substitute"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("target", help="a gate name (and2..and8, nand.., or.., nor.., xor.., xnor.., inv) "
                                       "or an expression: ~ ! ' not, & and, ^ xor, | + or, parentheses")
    parser.add_argument("--bin", required=True, metavar="BIN", help="the bin file (YAML)")
    parser.add_argument("--supply", default="5", help="supply voltage, e.g. 5 or '10 V' (default 5)")
    parser.add_argument("--free-polarity", dest="either_polarity", action="store_true",
                        help="polarity free, as in the spec: accept the complement of the target "
                             "(e.g. NAND4 where AND4 was asked)")
    parser.add_argument("--either-polarity", dest="either_polarity", action="store_true",
                        help=argparse.SUPPRESS)   # the earlier name, still read
    parser.add_argument("--limit", type=int, default=3, help="how many ways to show (default 3)")
    parser.add_argument("--json", action="store_true", help="print JSON for scripts")
    add_effort_argument(parser)


def run(args: argparse.Namespace) -> int:
    check_expression(args.target, "target", error=UsageError,
                     fix="a gate of at most 8 inputs needs a short expression; write a shorter one")
    target = parse_target(args.target)
    try:
        supply = parse_quantity(args.supply, "V")
    except ValueError as exc:
        raise UsageError(f"--supply: {exc}") from None
    check_supply(supply, "--supply", error=UsageError)
    if args.limit < 1:
        raise UsageError(f"--limit: expected at least 1, got {args.limit}")
    catalog = load_catalog()
    stock = load_bin(args.bin, catalog, supply)
    library = build_library(stock, catalog)
    with progress(f"searching ways to build {target.text}"):
        ways = substitute(target, library, stock, either_polarity=args.either_polarity, limit=args.limit,
                          effort=args.effort)
    if args.json:
        print_json(substitute_json(target, ways))
    else:
        show(substitute_blocks(target, ways, args.bin))
    return 0


def substitute_blocks(target, ways, bin_path: str) -> list:

    inputs = ", ".join(f"{name} = bit {i}" for i, name in enumerate(target.inputs))
    blocks: list = [Text(f"{target.text} from {bin_path}: {counted(len(ways), 'way')}, cheapest first "
                         f"(chips, then gates, then depth); inputs {inputs}")]
    for rank, way in enumerate(ways, start=1):
        parts = ", ".join(f"{n} x {p}" for p, n in sorted(way.network.chips.items())) or "none"
        proof = "proven minimal (chips, then gates)" if way.proven else \
            f"best found with {', '.join(way.parts_offered)}"
        blocks.append(Text(f"way {rank}: {counted(way.chip_count, 'chip')} ({parts}), {counted(way.gates, 'gate')}, "
                           f"depth {way.depth}; {proof}\n\n" + draw_way(way, target)))
        blocks.append(Table(f"way {rank} wiring (every pin on a net; unused inputs tied)", ("net", "pins"),
                            [list(row) for row in wiring_rows(way)]))
    blocks.append(Text("caution: CMOS inputs must never float (every unused input above is tied); "
                       "handle CMOS chips with ESD care; decouple each chip with 100 nF; stay inside "
                       "the supply limits."))
    return blocks


def substitute_json(target, ways) -> dict:

    return {"format": "binsynth-substitute/1", "target": target.text, "inputs": list(target.inputs),
            "ways": [way_json(way, target, rank) for rank, way in enumerate(ways, start=1)]}
