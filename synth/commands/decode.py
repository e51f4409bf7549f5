"""``binsynth decode SPEC --bin BIN``: the counter chosen and each signal's decode.

Interface: ``NAME``, ``add_arguments(parser)``, ``run(args) ->
int``; ``decode_blocks(spec, decode)`` (what a person sees), ``decode_json(spec,
stock, decode)`` (what a script reads), and the picture helpers ``tick_strip``
and ``runs_text``.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from ..counter import allocate
from ..decode import derive
from ..inventory import load_bin, load_catalog
from ..render import print_json, progress, show, Table, Text
from ..spec import cyclic_runs, load_spec, windows_of
from .plan import show_spec_notes

NAME = "decode"

DECODE_FORMAT = "binsynth-decode/2"
"""/2: ``counter.vars`` became ``counter.variables`` (the plan JSON's word); the key
style is the plan JSON's (docs/reading-a-plan.md, "Key style")."""

STRIP_WIDTH = 64
HIGH, LOW, MIXED = "‾", "_", "|"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("spec", help="the stimulus spec (YAML)")
    parser.add_argument("--bin", required=True, metavar="BIN", help="the bin file (YAML)")
    parser.add_argument("--json", action="store_true", help="print JSON for scripts")
    parser.add_argument("--exact", choices=["auto", "yes", "no"], default="auto",
                        help="exact (proven) minimization where sizes allow (auto), always, or never")


def run(args: argparse.Namespace) -> int:

    catalog = load_catalog()
    spec = load_spec(args.spec)
    show_spec_notes(spec)
    stock = load_bin(args.bin, catalog, spec.supply)
    plan = allocate(spec, stock, catalog)
    with progress(f"minimizing the decode of {Path(args.spec).name}"):
        decode = derive(spec, plan, exact=args.exact)
    if args.json:
        print_json(decode_json(spec, stock, decode))
    else:
        show(decode_blocks(spec, stock, decode))
    return 0


# ---------------------------------------------------------------- pictures

def tick_strip(ticks: frozenset[int], cycle: int, width: int = STRIP_WIDTH) -> str:
    """One cycle as a strip: one mark per tick, or per group of ticks when long.

    ``‾`` asserted, ``_`` not, ``|`` a group with an edge inside.

    >>> tick_strip(frozenset({0, 1, 2, 3}), 8)
    '‾‾‾‾____'
    >>> tick_strip(frozenset(range(0, 64)), 256, width=8)
    '‾‾______'
    >>> tick_strip(frozenset({5}), 256, width=8)
    '|_______'
    """
    if cycle <= width:
        return "".join(HIGH if t in ticks else LOW for t in range(cycle))
    marks = []
    for b in range(width):
        lo, hi = b * cycle // width, (b + 1) * cycle // width
        inside = sum(1 for t in range(lo, hi) if t in ticks)
        marks.append(HIGH if inside == hi - lo else LOW if inside == 0 else MIXED)
    return "".join(marks)


def runs_text(ticks: frozenset[int], cycle: int, shown: int = 4) -> str:
    """The asserted runs as inclusive tick ranges (``28-29`` is ticks 28 and 29), repeats folded.

    >>> runs_text(frozenset({0, 1, 2, 3}), 16)
    '0-3'
    >>> runs_text(frozenset({14, 15, 0, 1}), 16)
    '14-1 (through 0)'
    >>> runs_text(frozenset(t for t in range(256) if t % 32 < 4), 256)
    '0-3 every 32 (8 times)'
    >>> runs_text(frozenset({0, 5, 9, 12, 20, 30}), 32)
    '0, 5, 9, 12, ... (6 runs)'
    >>> runs_text(frozenset(), 8), runs_text(frozenset(range(8)), 8)
    ('never', 'always')
    """

    if not ticks:
        return "never"
    if len(ticks) == cycle:
        return "always"
    runs = list(cyclic_runs(ticks, cycle))
    runs.sort()

    def one(start: int, end: int) -> str:
        last = (end - 1) % cycle
        if end - start == 1:
            return f"{start}"
        through = " (through 0)" if end > cycle else ""
        return f"{start}-{last}{through}"

    if len(runs) >= 3:
        lengths = {end - start for start, end in runs}
        steps = {runs[i + 1][0] - runs[i][0] for i in range(len(runs) - 1)}
        if len(lengths) == 1 and len(steps) == 1:
            step = steps.pop()
            if step * len(runs) == cycle:
                return f"{one(*runs[0])} every {step} ({len(runs)} times)"
    text = ", ".join(one(*r) for r in runs[:shown])
    if len(runs) > shown:
        text += f", ... ({len(runs)} runs)"
    return text


# ---------------------------------------------------------------- for people

def _reset_text(plan) -> str:
    reset = plan.reset
    if reset is None:
        return "none (free running)"
    if reset.direct:
        return f"{reset.net} wired to RESET at state {reset.state}"
    return f"{reset.net} (active {reset.active}, {'synchronous' if reset.synchronous else 'asynchronous'})"


def _chip_rows(plan) -> list[tuple]:
    rows = []
    for chip in plan.chips:
        used = [v.pin_name for v in plan.vars if plan.chips[v.chip] is chip]
        rows.append((chip.ref, chip.part, chip.unit, f"{chip.clock_edge} edge of {chip.clock_net} "
                     f"(pin {chip.clock_pin})", chip.reset_net, ", ".join(used) or "-"))
    return rows


def _var_rows(plan) -> list[tuple]:
    return [(v.index, v.net, plan.chips[v.chip].ref, v.pin, v.pin_name,
             "decoded" if v.weight is None else v.weight) for v in plan.vars]


def _dc_text(decode, name: str) -> str:
    s = decode.signals[name]
    parts = []
    if s.dc_ticks_used:
        parts.append(f"ticks {runs_text(s.dc_ticks_used, decode.plan.cycle)}")
    if s.dc_states_used:
        parts.append(f"{len(s.dc_states_used)} never-held state{'s' if len(s.dc_states_used) != 1 else ''}")
    if s.stretch_added:
        parts.append(f"stretch +{len(s.stretch_added)}")
    return "; ".join(parts) or "none"


def decode_blocks(spec, stock, decode) -> list:

    plan, cover = decode.plan, decode.cover
    head = (f"{spec.name}: cycle {plan.cycle} ticks, counting on the {plan.edge} edge of CLK, "
            f"{'synchronous' if plan.synchronous else 'ripple'} counter; reset: {_reset_text(plan)}")
    blocks = [Text(head)]
    if plan.chips:
        blocks.append(Table("counter chips", ("ref", "part", "unit", "clocked by", "reset", "outputs used"),
                            _chip_rows(plan)))
        blocks.append(Table("counter variables", ("bit", "net", "chip", "pin", "pin name", "weight"),
                            _var_rows(plan)))
    strip_note = "" if plan.cycle <= STRIP_WIDTH else \
        f" (each mark {plan.cycle / STRIP_WIDTH:g} ticks; {MIXED} = an edge inside)"
    blocks.append(Table(f"waveforms over one cycle{strip_note}", ("signal", "ticks", "asserted"),
                        [(name, tick_strip(s.delivered, plan.cycle), runs_text(s.delivered, plan.cycle))
                         for name, s in decode.signals.items()]))
    entries = list(decode.signals.items()) + ([(decode.reset.name, decode.reset)] if decode.reset else [])
    blocks.append(Table(f"decode in counter pins ({cover.method}; {cover.cost[0]} terms, "
                        f"{cover.cost[1]} literals in all)", ("signal", "active", "decode"),
                        [(name, d.polarity, d.expression if d.phase == "true" else f"({d.expression})'")
                         for name, d in entries]))
    blocks.append(Table("cost and freedom", ("signal", "literals", "terms", "minimal", "phase",
                                             "don't-cares used"),
                        [(name, d.literals, d.terms, "proven" if d.proven_minimal else "best found",
                          d.phase, _dc_text(decode, name) if name in decode.signals
                          else f"{len(d.dc_states_used)} never-held states") for name, d in entries]))
    notes = [f"note: {n}" for n in plan.notes + decode.notes]
    notes += [f"warning: {w}" for w in (*stock.warnings, *plan.warnings, *decode.warnings)]
    if notes:
        blocks.append(Text("\n".join(notes)))
    return blocks


# ---------------------------------------------------------------- for scripts

def decode_json(spec, stock, decode) -> dict:

    plan, cover = decode.plan, decode.cover
    reset = plan.reset
    return {
        "format": DECODE_FORMAT,
        "name": spec.name,
        "spec": str(spec.path),
        "bin": stock.path,
        "supply_v": spec.supply,
        "cycle": plan.cycle,
        "clock_edge": plan.edge,
        "synchronous": plan.synchronous,
        "counter": {
            "chips": [{"ref": c.ref, "part": c.part, "unit": c.unit, "clock_net": c.clock_net,
                       "clock_pin": c.clock_pin, "clock_edge": c.clock_edge, "reset_pin": c.reset_pin,
                       "reset_net": c.reset_net, "enable_pin": c.enable_pin, "enable_net": c.enable_net,
                       "ties": {str(p): v for p, v in sorted(c.ties.items())}, "stages": list(c.stages),
                       "divisor": c.divisor, "how": c.how} for c in plan.chips],
            "variables": [{"index": v.index, "net": v.net, "ref": plan.chips[v.chip].ref, "unit": v.unit,
                      "pin": v.pin, "pin_name": v.pin_name, "weight": v.weight} for v in plan.vars],
            "reset": None if reset is None else {
                "state": reset.state, "net": reset.net, "active": reset.active,
                "synchronous": reset.synchronous, "direct": reset.direct,
                "expression": decode.reset.expression if decode.reset else None,
                "pulse_ns": list(reset.pulse_ns) if reset.pulse_ns else None, "caution": reset.caution},
            "never_held_states": len(plan.unreachable),
            "settle_ns": plan.settle_ns,
        },
        "signals": {name: {
            "expression": s.expression, "phase": s.phase, "polarity": s.polarity,
            "literals": s.literals, "terms": s.terms, "proven_minimal": s.proven_minimal,
            "depends_on": list(s.depends_on),
            "delivered": [list(w) for w in windows_of(s.delivered, plan.cycle)],
            "stretch_added": sorted(s.stretch_added),
            "dont_care_ticks_used": sorted(s.dc_ticks_used),
            "never_held_states_used": len(s.dc_states_used)} for name, s in decode.signals.items()},
        "cover": {"method": cover.method, "proven_minimal": cover.proven_minimal,
                  "cost": {"terms": cover.cost[0], "literals": cover.cost[1], "connections": cover.cost[2]},
                  "note": cover.note},
        "notes": [*plan.notes, *decode.notes],
        "warnings": [*stock.warnings, *plan.warnings, *decode.warnings],
    }
