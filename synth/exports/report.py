"""The build page (``--report FILE``): one self-contained HTML file to build the circuit from.

Interface: ``report_html(design) -> str``; ``write_report(design, path)`` (atomic);
``plan_hash(data) -> str`` (the key the page keeps its ticked boxes under).

Everything is inline (SVG, CSS, a little plain JavaScript): the page needs no
network, no fonts and no scripts from anywhere.  Sections: the next wire and
the cautions; the breadboard drawn to scale from the plan JSON's
``breadboard`` section (``synth.breadboard``); the wiring checklist in build
order (chips, rails and decoupling, ties, clock, counter outputs, gates in
signal order, outputs, analog parts), each box remembered in the browser's
local storage under a hash of the plan; per-chip pin maps; a gate diagram per
output signal; the timing diagram (``exports.svg``); parts with what is left
in the bin; remedies applied; how the board was laid out, with its figures.
Clicking any net (a wire, a strip, a pin, a name) marks it everywhere.
Elements that carry a net have ``data-net``; chips drawn on the board are
``g.bb-chip``, jumpers ``g.bb-jumper`` (one per jumper of the JSON), checklist
rows ``li.step`` with a ``data-step`` the board element shares.
"""

from __future__ import annotations

import base64
import hashlib
import json
import math
from html import escape
from pathlib import Path

from ..breadboard import BOARD_GAP, RAILS, Y, hole_xy, method_text, strip_of
from ..netlist import RAIL_NETS, ref_key
from ..packing import unit_logic_pins
from .plan_json import plan_to_json
from .files import atomic_write_text
from .svg import trace_to_svg

__all__ = ["report_html", "write_report", "plan_hash"]

P = 20.0                  # pixels per hole pitch in the board drawing
MARGIN_X, MARGIN_TOP, MARGIN_BOTTOM = 34.0, 64.0, 64.0
# Our own palette for signal wires: hues and lightness far apart, so that
# neighbours differ for colour-blind readers too; every wire also carries its name.
PALETTE = ("#1d5fa6", "#d4750b", "#178a6b", "#8a46c2", "#b0307a", "#5b7e14", "#0a8fb5", "#8c5a2b")
RAIL_COLOUR = {"VDD": "#c8102e", "VSS": "#1e1e1e"}
CAUTIONS = (
    "Handle CMOS chips with ESD care: grounded mat or wrist strap, touch ground first, fit parts "
    "with the power off.",
    "Never leave a CMOS input floating: every unused input is tied in this list; wire those ties too.",
    "Stay inside each part's supply range; no input above VDD or below VSS.",
    "Anything touching mains or high-energy equipment follows local codes and licensed practice.",
)


def plan_hash(data: dict) -> str:
    """A short hash of the plan JSON: ticked boxes belong to one plan only."""
    text = json.dumps(data, sort_keys=True, ensure_ascii=True)
    return hashlib.sha256(text.encode()).hexdigest()[:16]


# ---------------------------------------------------------------- board facts

class _Board:
    """What the drawing and the checklist read from the ``breadboard`` section."""

    def __init__(self, data: dict, plan):
        self.data = data
        self.bb = data["breadboard"]
        self.board_rows = self.bb["board_rows"]
        self.rail_holes = self.bb["rail_holes"]
        self.plan = plan
        self.occupant: dict[tuple, tuple[str, str]] = {}   # strip -> (what sits there, net)
        for chip in self.bb["chips"]:
            part = plan.parts[plan.chip(chip["ref"]).part]
            pins = plan.chip(chip["ref"]).pins
            row = int(chip["pin1"][1:])
            for pin in range(1, chip["pins"] + 1):
                hole = _chip_hole(pin, chip["pins"], row)
                name = part.pins.get(pin, "?")
                self.occupant[self.strip(hole)] = (f"{chip['ref']} pin {pin} ({name})", pins.get(pin, ""))
        for p in self.bb["parts"]:
            for end, hole in enumerate(p["holes"], 1):
                if hole[:2] not in RAILS:
                    self.occupant[self.strip(hole)] = (f"{p['ref']} end {end} ({p['value']})", p["nets"][end - 1])
        self.colours: dict[str, str] = {}
        for net in sorted({j["net"] for j in self.bb["jumpers"]} | {e["net"] for e in self.bb["external"]},
                          key=ref_key):
            self.colours[net] = RAIL_COLOUR.get(net) or PALETTE[len(self.colours) % len(PALETTE)]

    def strip(self, hole: str) -> tuple:
        return strip_of(hole, self.board_rows, self.rail_holes)

    def xy(self, hole: str) -> tuple[float, float]:
        x, y = hole_xy(hole, self.board_rows, self.rail_holes)
        return MARGIN_X + x * P + P / 2, MARGIN_TOP + y * P + P / 2

    def where(self, hole: str) -> str:
        """``d12 (U1 pin 7 (Q4))`` or ``B-3 (ground rail)``: a hole and what its strip holds."""
        if hole[:2] in RAILS:
            side = "top" if hole[0] == "T" else "bottom"
            return f"{hole} ({side} {'+ rail, VDD' if hole[1] == '+' else '- rail, VSS'})"
        who = self.occupant.get(self.strip(hole))
        return f"{hole} (row of {who[0]})" if who else hole

    def net_colour(self, net: str) -> str:
        return self.colours.get(net, "#555")


def _chip_hole(pin: int, pins: int, row: int) -> str:
    half = pins // 2
    return f"e{row + pin - 1}" if pin <= half else f"f{row + pins - pin}"


def _attr_net(net: str) -> str:
    return f' data-net="{escape(net)}"' if net else ""


# ---------------------------------------------------------------- the board drawing

def _board_svg(board: _Board, steps: dict[str, str]) -> str:
    bb = board.bb
    boards, rows = bb["boards"], bb["board_rows"]
    width_pitches = boards * rows + (boards - 1) * BOARD_GAP
    width = MARGIN_X * 2 + width_pitches * P
    height = MARGIN_TOP + (Y["B-"] + 1) * P + MARGIN_BOTTOM
    out = [f'<svg class="board" viewBox="0 0 {width:.0f} {height:.0f}" role="img" '
           f'aria-label="breadboard layout, {bb["board"]}" xmlns="http://www.w3.org/2000/svg">']
    for b in range(boards):
        out += _board_base(board, b)
    out += _strips(board)
    for part in bb["parts"]:
        out.append(_part_svg(board, part, steps))
    for chip in bb["chips"]:
        out.append(_chip_svg(board, chip, steps))
    taken: list[tuple[float, float, float, float]] = []
    for index, jumper in enumerate(bb["jumpers"]):
        out.append(_jumper_svg(board, index, jumper, steps, taken))
    for index, ext in enumerate(bb["external"]):
        out.append(_external_svg(board, index, ext, steps))
    for chip in bb["chips"]:
        row, pins = int(chip["pin1"][1:]), chip["pins"]
        (x1, ye), (x2, _) = board.xy(f"e{row}"), board.xy(f"f{row + pins // 2 - 1}")
        out.append(f'<text class="chip-tag" x="{(x1 + x2) / 2:.1f}" y="{ye - 1.35 * P:.1f}" '
                   f'text-anchor="middle">{escape(chip["ref"])} {escape(chip["part"])}</text>')
    out.append("</svg>")
    return "\n".join(out)


def _board_base(board: _Board, b: int) -> list[str]:
    rows, rails = board.board_rows, board.rail_holes
    first_row = b * rows + 1
    x0 = MARGIN_X + b * (rows + BOARD_GAP) * P
    w = rows * P
    top, bottom = MARGIN_TOP - 0.6 * P, MARGIN_TOP + (Y["B-"] + 1.6) * P
    out = [f'<rect class="bb-body" x="{x0 - 0.4 * P:.1f}" y="{top:.1f}" width="{w + 0.8 * P:.1f}" '
           f'height="{bottom - top:.1f}" rx="6"/>',
           f'<rect class="bb-channel" x="{x0:.1f}" y="{MARGIN_TOP + (Y["f"] + 1.15) * P:.1f}" width="{w:.1f}" '
           f'height="{(Y["e"] - Y["f"] - 1.3) * P:.1f}"/>']
    for rail in RAILS:
        y = MARGIN_TOP + Y[rail] * P + P / 2
        stripe = y - 0.55 * P if rail in ("T+", "B-") else y + 0.55 * P
        if rail[0] == "T":
            stripe = y - 0.55 * P if rail == "T+" else y + 0.55 * P
        else:
            stripe = y - 0.55 * P if rail == "B+" else y + 0.55 * P
        cls = "plus" if rail[1] == "+" else "minus"
        out.append(f'<line class="bb-stripe {cls}" x1="{x0:.1f}" x2="{x0 + w:.1f}" y1="{stripe:.1f}" '
                   f'y2="{stripe:.1f}"/>')
        sign = "+" if rail[1] == "+" else "\u2212"
        for x in (x0 - 0.05 * P, x0 + w + 0.05 * P):
            out.append(f'<text class="bb-sign" x="{x:.1f}" y="{y + 4:.1f}" text-anchor="middle">{sign}</text>')
        for pos in range(b * rails + 1, (b + 1) * rails + 1):
            hx, hy = board.xy(f"{rail}{pos}")
            out.append(_hole(hx, hy))
    for row in range(first_row, first_row + rows):
        for col in "abcdefghij":
            hx, hy = board.xy(f"{col}{row}")
            out.append(_hole(hx, hy))
        local = row - first_row + 1
        if local == 1 or local % 5 == 0:
            hx, _ = board.xy(f"a{row}")
            for ycol, dy in (("j", -0.95), ("a", 1.35)):
                _, hy = board.xy(f"{ycol}{row}")
                out.append(f'<text class="bb-num" x="{hx:.1f}" y="{hy + dy * P:.1f}" '
                           f'text-anchor="middle">{row}</text>')
    for col in "abcdefghij":
        _, hy = board.xy(f"{col}{first_row}")
        for x in (x0 - 0.75 * P, x0 + w + 0.75 * P):
            out.append(f'<text class="bb-col" x="{x:.1f}" y="{hy + 4:.1f}" text-anchor="middle">{col}</text>')
    return out


def _hole(x: float, y: float) -> str:
    s = 0.36 * P
    return f'<rect class="hole" x="{x - s / 2:.1f}" y="{y - s / 2:.1f}" width="{s:.1f}" height="{s:.1f}" rx="1.2"/>'


def _strips(board: _Board) -> list[str]:
    """A clickable band over every strip that holds a lead: clicking it marks its net."""
    out = []
    for strip, (who, net) in sorted(board.occupant.items(), key=lambda kv: (kv[0][0], kv[0][1])):
        row, side = strip
        cols = "abcde" if side == "a-e" else "fghij"
        (x1, y1), (_, y2) = board.xy(f"{cols[0]}{row}"), board.xy(f"{cols[-1]}{row}")
        top, bottom = min(y1, y2) - 0.45 * P, max(y1, y2) + 0.45 * P
        out.append(f'<rect class="bb-strip"{_attr_net(net)} x="{x1 - 0.45 * P:.1f}" y="{top:.1f}" '
                   f'width="{0.9 * P:.1f}" height="{bottom - top:.1f}" rx="3">'
                   f'<title>row {row} {side}: {escape(who)}{", net " + escape(net) if net else ", open"}</title></rect>')
    return out


def _chip_svg(board: _Board, chip: dict, steps: dict[str, str]) -> str:
    row, pins = int(chip["pin1"][1:]), chip["pins"]
    (x1, ye), (x2, yf) = board.xy(f"e{row}"), board.xy(f"f{row + pins // 2 - 1}")
    left, right = x1 - 0.42 * P, x2 + 0.42 * P
    top, bottom = yf + 0.55 * P, ye - 0.55 * P
    mid = (top + bottom) / 2
    plan_chip = board.plan.chip(chip["ref"])
    part = board.plan.parts[plan_chip.part]
    out = [f'<g class="bb-chip" data-ref="{escape(chip["ref"])}" data-step="{steps.get("chip-" + chip["ref"], "")}">',
           f'<title>{escape(chip["ref"])} {escape(chip["part"])}: pin 1 at {chip["pin1"]}, notch toward row 1</title>',
           f'<rect class="chip-body" x="{left:.1f}" y="{top:.1f}" width="{right - left:.1f}" '
           f'height="{bottom - top:.1f}" rx="2"/>',
           f'<path class="chip-notch" d="M{left:.1f},{mid - 0.35 * P:.1f} a{0.35 * P:.1f},{0.35 * P:.1f} 0 0 1 0,{0.7 * P:.1f}"/>',
           f'<circle class="chip-dot" cx="{x1:.1f}" cy="{bottom - 0.3 * P:.1f}" r="{0.16 * P:.1f}"/>',
           f'<text class="chip-label" x="{(left + right) / 2:.1f}" y="{mid + 4:.1f}" text-anchor="middle">'
           f'{escape(chip["ref"])} {escape(chip["part"])}</text>']
    for pin in range(1, pins + 1):
        hx, hy = board.xy(_chip_hole(pin, pins, row))
        net = plan_chip.pins.get(pin, "")
        out.append(f'<rect class="chip-pin"{_attr_net(net)} x="{hx - 0.25 * P:.1f}" y="{hy - 0.25 * P:.1f}" '
                   f'width="{0.5 * P:.1f}" height="{0.5 * P:.1f}"><title>{escape(chip["ref"])} pin {pin} '
                   f'({escape(part.pins.get(pin, "?"))}){" net " + escape(net) if net else ", open"}</title></rect>')
    out.append(f'<text class="pin1" x="{x1:.1f}" y="{bottom - 0.65 * P:.1f}" text-anchor="middle">1</text>')
    out.append("</g>")
    return "\n".join(out)


def _part_svg(board: _Board, part: dict, steps: dict[str, str]) -> str:
    (xa, ya), (xb, yb) = board.xy(part["holes"][0]), board.xy(part["holes"][1])
    step = steps.get("part-" + part["ref"], "")
    title = (f"{part['ref']} {part['value']} {part['kind']}: {part['holes'][0]} to {part['holes'][1]}, "
             f"nets {part['nets'][0]} and {part['nets'][1]}")
    if part.get("decouples"):
        x, y = (xa + xb) / 2, (ya + yb) / 2
        return (f'<g class="bb-part decoupling" data-step="{step}"><title>{escape(title)} '
                f'(decouples {escape(part["decouples"])})</title>'
                f'<line class="lead" x1="{xa:.1f}" y1="{ya:.1f}" x2="{xb:.1f}" y2="{yb:.1f}"/>'
                f'<rect class="cap-body" x="{x - 0.5 * P:.1f}" y="{y - 0.3 * P:.1f}" width="{1.0 * P:.1f}" '
                f'height="{0.6 * P:.1f}" rx="3"/></g>')
    cls = "res-body" if part["kind"] == "resistor" else "cap-body"
    lo, hi = min(ya, yb), max(ya, yb)
    cx = (xa + xb) / 2
    return (f'<g class="bb-part" data-step="{step}"><title>{escape(title)}</title>'
            f'<line class="lead" x1="{xa:.1f}" y1="{ya:.1f}" x2="{xb:.1f}" y2="{yb:.1f}"/>'
            f'<rect class="{cls}" x="{cx - 0.38 * P:.1f}" y="{lo + 0.6 * P:.1f}" width="{0.76 * P:.1f}" '
            f'height="{hi - lo - 1.2 * P:.1f}" rx="3"/>'
            f'<text class="part-label" transform="translate({cx + 3.5:.1f},{(lo + hi) / 2:.1f}) rotate(-90)" '
            f'text-anchor="middle">{escape(part["ref"])} {escape(part["value"].replace(" ", ""))}</text></g>')


def _jumper_curve(board: _Board, a: str, b: str) -> tuple[tuple[float, float], ...]:
    """A gentle arc from hole to hole (arcs keep jumpers along one column apart): its three points."""
    (x1, y1), (x2, y2) = board.xy(a), board.xy(b)
    dx, dy = x2 - x1, y2 - y1
    length = math.hypot(dx, dy) or 1.0
    bulge = min(0.12 * length, 2.2 * P) if length > 2.5 * P else 0.0
    side = -1.0 if (y1 + y2) / 2 < MARGIN_TOP + (Y["f"] + Y["e"]) / 2 * P else 1.0
    nx, ny = -dy / length, dx / length
    if ny * side < 0:
        nx, ny = -nx, -ny
    return (x1, y1), ((x1 + x2) / 2 + nx * bulge, (y1 + y2) / 2 + ny * bulge), (x2, y2)


def _on_curve(curve, t: float) -> tuple[float, float]:
    (x1, y1), (cx, cy), (x2, y2) = curve
    u = 1 - t
    return u * u * x1 + 2 * u * t * cx + t * t * x2, u * u * y1 + 2 * u * t * cy + t * t * y2


def _label_spot(curve, text: str, taken: list) -> tuple[float, float]:
    """The first point along the wire where its label overlaps no label drawn before."""
    w, h = 5.6 * len(text) + 4, 11.0
    first = None
    for t in (0.5, 0.38, 0.62, 0.28, 0.72, 0.2, 0.8):
        x, y = _on_curve(curve, t)
        box = (x - w / 2, y - h / 2, x + w / 2, y + h / 2)
        first = first or (x, y, box)
        if not any(box[0] < o[2] and o[0] < box[2] and box[1] < o[3] and o[1] < box[3] for o in taken):
            taken.append(box)
            return x, y
    taken.append(first[2])
    return first[0], first[1]


def _jumper_svg(board: _Board, index: int, jumper: dict, steps: dict[str, str], taken: list) -> str:
    net = jumper["net"]
    curve = _jumper_curve(board, jumper["from"], jumper["to"])
    (x1, y1), (cx, cy), (x2, y2) = curve
    path = f"M{x1:.1f},{y1:.1f} Q{cx:.1f},{cy:.1f} {x2:.1f},{y2:.1f}"
    colour = board.net_colour(net)
    dash = ' stroke-dasharray="5 3"' if net == "VSS" else ""
    length = f'{jumper["length_mm"]:g} mm'
    if jumper["kind"] == "signal":
        lx, ly = _label_spot(curve, f"{net} {length}", taken)
        text = (f'<text class="wire-label" x="{lx:.1f}" y="{ly + 3:.1f}" text-anchor="middle">{escape(net)} '
                f'<tspan class="mm">{length}</tspan></text>')
    else:
        lx, ly = _on_curve(curve, 0.5)
        sign = "+" if net == "VDD" else "\u2212"
        text = f'<text class="wire-label rail" x="{lx + 4:.1f}" y="{ly + 4:.1f}">{sign}</text>'
    return (f'<g class="bb-jumper {jumper["kind"]}"{_attr_net(net)} data-step="{steps.get(f"j-{index}", "")}">'
            f'<title>{escape(net)}: {escape(board.where(jumper["from"]))} to {escape(board.where(jumper["to"]))}, '
            f'{length}</title>'
            f'<path class="casing" d="{path}"/><path class="wire" d="{path}" stroke="{colour}"{dash}/>'
            f'<circle class="end" cx="{x1:.1f}" cy="{y1:.1f}" r="{0.2 * P:.1f}" fill="{colour}"/>'
            f'<circle class="end" cx="{x2:.1f}" cy="{y2:.1f}" r="{0.2 * P:.1f}" fill="{colour}"/>'
            f'{text}</g>')


def _external_svg(board: _Board, index: int, ext: dict, steps: dict[str, str]) -> str:
    x, y = board.xy(ext["hole"])
    net = ext["net"]
    reach = (1.8 + 0.8 * (index % 3)) * P      # staggered, so neighbouring names stay apart
    out_y = y + (reach if ext["hole"][0] in "abcdeB" else -reach)
    if ext["hole"][:2] in RAILS:
        out_y = y + (2.4 * P if ext["hole"][0] == "B" else -2.4 * P)
    colour = board.net_colour(net)
    return (f'<g class="bb-external"{_attr_net(net)} data-step="{steps.get(f"x-{index}", "")}">'
            f'<title>{escape(net)} leaves the board at {ext["hole"]}: {escape(ext["to"])}</title>'
            f'<line class="flying" x1="{x:.1f}" y1="{y:.1f}" x2="{x:.1f}" y2="{out_y:.1f}" stroke="{colour}"/>'
            f'<polygon class="arrow" fill="{colour}" points="{x - 4:.1f},{out_y:.1f} {x + 4:.1f},{out_y:.1f} '
            f'{x:.1f},{out_y + (5 if out_y > y else -5):.1f}"/>'
            f'<text class="ext-label" x="{x + (-6 if net == "VDD" else 6):.1f}" '
            f'y="{out_y + (15 if out_y > y else -8):.1f}" '
            f'text-anchor="{"end" if net == "VDD" else "middle" if net not in RAIL_NETS else "start"}">'
            f'{escape(net)}</text></g>')


# ---------------------------------------------------------------- the checklist

_GROUPS = ("Chips", "Rails and decoupling", "Ties (unused and held inputs)", "Clock", "Counter outputs",
           "Gates, in signal order", "Outputs and outside leads", "Analog parts")


def _steps(board: _Board) -> list[tuple[str, str, str, str]]:
    """(group, step id, net, text) in build order."""
    plan, bb = board.plan, board.bb
    levels = _levels(plan)
    counter_nets = {v["net"] for v in board.data["counter"]["variables"]}
    clock_nets = {"CLK"} | ({plan.oscillator.clock_net} if plan.oscillator is not None else set())
    passive_nets = {n for p in plan.passives for n in p.ends} - set(RAIL_NETS)
    power_pins = set()
    for chip in plan.chips:
        for pin in plan.parts[chip.part].power.values():
            power_pins.add((chip.ref, pin))
    rows: list[tuple[int, float, str, str, str, str]] = []   # group, order, ref-key, id, net, text
    for n, chip in enumerate(sorted(bb["chips"], key=lambda c: int(c["pin1"][1:]))):
        part = plan.parts[plan.chip(chip["ref"]).part]
        last = int(chip["pin1"][1:]) + chip["pins"] // 2 - 1
        rows.append((0, n, "", f"chip-{chip['ref']}", "",
                     f"Fit {chip['ref']} ({chip['part']}, {part.function}) across the channel: pin 1 in "
                     f"{chip['pin1']}, pins along column e to row {last}, the notch toward row 1."))
    for p in bb["parts"]:
        if p.get("decouples"):
            rows.append((1, 50, p["ref"], f"part-{p['ref']}", "VDD",
                         f"{p['ref']}: {p['value']} capacitor from {p['holes'][0]} to {p['holes'][1]} "
                         f"(decouples {p['decouples']}, across its nearest + and \u2212 rails)."))
        else:
            rows.append((7, 0, p["ref"], f"part-{p['ref']}", p["nets"][0],
                         f"{p['ref']}: {p['value']} {p['kind']} from {board.where(p['holes'][0])} to "
                         f"{board.where(p['holes'][1])} (nets {p['nets'][0]} and {p['nets'][1]})."))
    for i, j in enumerate(bb["jumpers"]):
        text = f"{j['net']}: {board.where(j['from'])} to {board.where(j['to'])}, {j['length_mm']:g} mm"
        net = j["net"]
        if j["kind"] == "tie":
            group, order = 1, 0
            text = f"Rail join {j['net']}: {j['from']} to {j['to']}, {j['length_mm']:g} mm"
        elif j["kind"] == "rail":
            who = board.occupant.get(board.strip(j["from"])) or board.occupant.get(board.strip(j["to"]))
            is_power = who is not None and any(who[0].startswith(f"{r} pin {p} ") for r, p in power_pins)
            group, order = (1, 10) if is_power else (2, 0)
        elif net in clock_nets:
            group, order = 3, 0
        elif net in counter_nets:
            group, order = 4, 0
        elif net in passive_nets and net not in levels:
            group, order = 7, 1
        else:
            group, order = 5, levels.get(net, 99)
        rows.append((group, order, net, f"j-{i}", net, text))
    for i, e in enumerate(bb["external"]):
        group = 1 if e["net"] in RAIL_NETS else (3 if e["net"] in clock_nets else 6)
        rows.append((group, 100, e["net"], f"x-{i}", e["net"],
                     f"Outside lead {e['net']} at {board.where(e['hole'])}: {e['to']}."))
    rows.sort(key=lambda r: (r[0], r[1], ref_key(r[2]) if r[2] else ("", 0, ""), _step_index(r[3])))
    return [(_GROUPS[g], sid, net, text) for g, _, _, sid, net, text in rows]


def _step_index(step: str) -> tuple[str, int]:
    head, _, tail = step.partition("-")
    return (head, int(tail) if tail.isdigit() else 0)


def _levels(plan) -> dict[str, int]:
    by_output = {n: g for g in plan.network.gates for n in g.outputs if n}
    memo: dict[str, int] = {}

    def level(net: str, depth: int = 0) -> int:
        if net in memo:
            return memo[net]
        gate = by_output.get(net)
        if gate is None or depth > 64:
            return 0
        memo[net] = 1 + max((level(n, depth + 1) for n in gate.inputs), default=0)
        return memo[net]

    return {net: level(net) for net in by_output}


def _checklist(steps: list[tuple[str, str, str, str]]) -> str:
    out, group = ['<div class="checklist">'], None
    for n, (g, sid, net, text) in enumerate(steps, 1):
        if g != group:
            if group is not None:
                out.append("</ol>")
            out.append(f"<h3>{escape(g)}</h3><ol start=\"{n}\">")
            group = g
        chip = f' <button class="net" type="button"{_attr_net(net)}>{escape(net)}</button>' if net else ""
        out.append(f'<li class="step" data-step="{sid}"{_attr_net(net)}><label><input type="checkbox" '
                   f'value="{sid}"> {escape(text)}</label>{chip}</li>')
    out.append("</ol></div>")
    return "\n".join(out)


# ---------------------------------------------------------------- pin maps

def _pin_map(plan, ref: str) -> str:
    chip = plan.chip(ref)
    part = plan.parts[chip.part]
    n = part.pin_count
    half = n // 2
    pitch, body_w, label_w = 22, 150, 150
    height = half * pitch + 30
    width = 2 * label_w + body_w + 40
    bx = label_w + 20
    out = [f'<figure class="pinmap"><figcaption>{escape(ref)}: {escape(chip.part)} ({escape(part.function)}), '
           f'{escape(chip.role)}</figcaption>',
           f'<svg viewBox="0 0 {width} {height}" xmlns="http://www.w3.org/2000/svg" role="img" '
           f'aria-label="{escape(ref)} pin map">',
           f'<rect class="pm-body" x="{bx}" y="10" width="{body_w}" height="{half * pitch + 6}" rx="4"/>',
           f'<path class="pm-notch" d="M{bx + body_w / 2 - 9},10 a9,9 0 0 0 18,0"/>',
           f'<circle class="pm-dot" cx="{bx + 9}" cy="{10 + pitch / 2 + 3}" r="3.5"/>',
           f'<text class="pm-ref" x="{bx + body_w / 2}" y="{10 + half * pitch / 2 + 8}" text-anchor="middle">'
           f'{escape(chip.part)}</text>']
    for pin in range(1, n + 1):
        left = pin <= half
        index = pin - 1 if left else n - pin
        y = 10 + index * pitch + pitch / 2 + 3
        net = chip.pins.get(pin, "NC" if pin in part.nc else "")
        func = part.pins.get(pin, "?")
        shown = net or "open"
        if left:
            out.append(f'<g class="pm-pin"{_attr_net(net if net != "NC" else "")}>'
                       f'<line x1="{bx - 14}" x2="{bx}" y1="{y}" y2="{y}"/>'
                       f'<text class="pm-num" x="{bx - 3}" y="{y - 3}" text-anchor="end">{pin}</text>'
                       f'<text class="pm-func" x="{bx + 18}" y="{y + 4}">{escape(func)}</text>'
                       f'<text class="pm-net" x="{bx - 20}" y="{y + 4}" text-anchor="end">{escape(shown)}</text></g>')
        else:
            rx = bx + body_w
            out.append(f'<g class="pm-pin"{_attr_net(net if net != "NC" else "")}>'
                       f'<line x1="{rx}" x2="{rx + 14}" y1="{y}" y2="{y}"/>'
                       f'<text class="pm-num" x="{rx + 3}" y="{y - 3}">{pin}</text>'
                       f'<text class="pm-func" x="{rx - 6}" y="{y + 4}" text-anchor="end">{escape(func)}</text>'
                       f'<text class="pm-net" x="{rx + 20}" y="{y + 4}">{escape(shown)}</text></g>')
    out.append("</svg></figure>")
    return "\n".join(out)


# ---------------------------------------------------------------- gate diagrams

def _gate_sites(plan) -> dict[str, tuple[str, list[int], list[int]]]:
    """Gate id -> (chip ref + unit, input pins in the gate's order, output pins)."""
    sites = {}
    for chip in plan.chips:
        part = plan.parts[chip.part]
        units = {u.id: u for u in part.units}
        for unit_id, gate_id in chip.units_used.items():
            unit = units.get(unit_id)
            if unit is None:
                continue
            ins, outs, _ = unit_logic_pins(unit)
            sites[gate_id] = (f"{chip.ref}{unit_id}", ins, outs)
    return sites


def _gate_diagram(plan, name: str, sig: dict, sites: dict) -> str:
    by_output = {n: g for g in plan.network.gates for n in g.outputs if n}
    net = sig["net"]
    cone: list = []
    seen: set[str] = set()

    def visit(n: str, depth: int = 0) -> None:
        gate = by_output.get(n)
        if gate is None or gate.id in seen or depth > 64:
            return
        seen.add(gate.id)
        for i in gate.inputs:
            visit(i, depth + 1)
        cone.append(gate)

    visit(net)
    if not cone:
        return (f'<figure class="gates"><figcaption>{escape(name)}: delivered straight from net '
                f'{escape(net)} (no gate)</figcaption></figure>')
    level: dict[str, int] = {}
    for gate in cone:
        level[gate.id] = 1 + max((level[by_output[i].id] for i in gate.inputs
                                  if i in by_output and by_output[i].id in level), default=0)
    columns: dict[int, list] = {}
    for gate in cone:
        columns.setdefault(level[gate.id], []).append(gate)
    leaves = []
    for gate in cone:
        for i in gate.inputs:
            if (i not in by_output or by_output[i].id not in seen) and i not in leaves:
                leaves.append(i)
    leaves.sort(key=lambda n: (n in RAIL_NETS, ref_key(n)))
    col_w, row_h, left = 200, 24, 150
    gate_h = {g.id: max(2, len(g.inputs)) * row_h for g in cone}
    first = [leaf for leaf in leaves if any(leaf in g.inputs for g in columns.get(1, []))]
    y_of: dict[str, float] = {leaf: 30 + k * row_h for k, leaf in enumerate(first)}
    col_of: dict[str, int] = {leaf: 0 for leaf in first}
    boxes: list[tuple] = []
    bottom = 30 + len(first) * row_h
    for col in sorted(columns):
        y = 24.0
        x = left + (col - 1) * col_w + 60
        for gate in columns[col]:
            h = gate_h[gate.id]
            wanted = [y_of[i] for i in gate.inputs if i in y_of]
            top = max(y, (sum(wanted) / len(wanted) - h / 2) if wanted else y)
            boxes.append((gate, x, top, h))
            y_of[gate.output] = top + h / 2
            col_of[gate.output] = col
            y = top + h + 26
            bottom = max(bottom, y)
    width = left + len(columns) * col_w + 170
    out = [f'<figure class="gates"><figcaption>{escape(name)}: asserted {escape(sig["polarity"])}, '
           f'from {escape(str(sig["source"]["ref"]) + " pin " + str(sig["source"]["pin"]) if sig.get("source") else net)}'
           f'</figcaption><svg width="{width}" viewBox="0 0 {width} {bottom + 10:.0f}" xmlns="http://www.w3.org/2000/svg" role="img" '
           f'aria-label="gate diagram for {escape(name)}">']
    for leaf in first:
        out.append(f'<text class="gd-in"{_attr_net(leaf)} x="{left - 8}" y="{y_of[leaf] + 4}" text-anchor="end">'
                   f'{escape(_leaf_text(plan, leaf))}</text>')
    for gate, x, top, h in boxes:
        out.append(_gate_shape(plan, gate, x, top, h, sites.get(gate.id), y_of, col_of, left, col_w))
    out.append(f'<text class="gd-out"{_attr_net(net)} x="{left + len(columns) * col_w + 20}" '
               f'y="{y_of.get(net, 30) + 4}">\u2192 {escape(name)}</text>')
    out.append("</svg></figure>")
    return "\n".join(out)


def _leaf_text(plan, net: str) -> str:
    if net in RAIL_NETS:
        return f"{net} (held)"
    for ref, pin in plan.nets.get(net, []):
        if any(c.ref == ref and c.role == "counter" for c in plan.chips):
            return f"{net} ({ref} pin {pin})"
    return net


def _gate_shape(plan, gate, x: float, top: float, h: float, site, y_of: dict, col_of: dict,
                left: float, col_w: float) -> str:
    """One gate: its body (shape by function, a bubble when it inverts), pin numbers and input wires.

    An input comes as a wire from the column just before; from further back it is a name tag.
    """
    w = 56
    op = gate.op
    inverted = op in ("nand", "nor", "not", "xnor")
    mid = top + h / 2
    if op in ("and", "nand"):
        body = f'M{x},{top} h{w / 2} a{w / 2},{h / 2} 0 0 1 0,{h} h{-w / 2} z'
    elif op in ("or", "nor", "xor", "xnor"):
        body = (f'M{x},{top} Q{x + w * 0.7},{top} {x + w},{mid} Q{x + w * 0.7},{top + h} {x},{top + h} '
                f'Q{x + w * 0.3},{mid} {x},{top} z')
        if op in ("xor", "xnor"):
            body += f' M{x - 6},{top} Q{x + w * 0.3 - 6},{mid} {x - 6},{top + h}'
    elif op in ("not", "buf"):
        body = f'M{x},{mid - 14} L{x + w - 10},{mid} L{x},{mid + 14} z'
    else:
        body = f'M{x},{top} h{w} v{h} h{-w} z'
    tip = x + w + (8 if inverted else 0) if op not in ("not", "buf") else x + w - 10 + (8 if inverted else 0)
    parts = [f'<g class="gd-gate"><title>{escape(gate.id)}: {escape(op)} ({escape(gate.part)})</title>'
             f'<path class="gd-body" d="{body}"/>']
    if inverted:
        parts.append(f'<circle class="gd-body" cx="{tip - 4}" cy="{mid}" r="4"/>')
    label = site[0] if site else gate.id
    parts.append(f'<text class="gd-ref" x="{x + w / 2}" y="{top - 5}" text-anchor="middle">{escape(label)} '
                 f'{escape(op.upper())}</text>')
    n = len(gate.inputs)
    col = col_of[gate.output]
    for k, net in enumerate(gate.inputs):
        iy = top + (k + 0.5) * h / n if op not in ("not", "buf") else mid - 6 + 12 * k / max(1, n - 1) if n > 1 else mid
        pin = site[1][k] if site and k < len(site[1]) else ""
        parts.append(f'<text class="gd-pin" x="{x - 3}" y="{iy - 3}" text-anchor="end">{pin}</text>')
        src_col = col_of.get(net)
        if src_col is not None and src_col == col - 1:
            sx = left - 4 if src_col == 0 else left + (src_col - 1) * col_w + 60 + w + 26
            bend = x - 22 - 5 * k
            parts.append(f'<path class="gd-wire"{_attr_net(net)} d="M{sx},{y_of[net]} H{bend} V{iy} H{x}"/>')
        else:
            tag = _leaf_text(plan, net) if net not in col_of or col_of[net] == 0 else net
            parts.append(f'<path class="gd-wire"{_attr_net(net)} d="M{x - 18},{iy} H{x}"/>'
                         f'<text class="gd-tag"{_attr_net(net)} x="{x - 20}" y="{iy + 4}" text-anchor="end">'
                         f'{escape(tag)}</text>')
    pin_out = site[2][0] if site and site[2] else ""
    parts.append(f'<path class="gd-wire"{_attr_net(gate.output)} d="M{tip},{mid} H{x + w + 26}"/>'
                 f'<text class="gd-pin" x="{tip + 3}" y="{mid - 4}">{pin_out}</text>'
                 f'<text class="gd-net"{_attr_net(gate.output)} x="{tip + 2}" y="{mid + 13}">{escape(gate.output)}</text></g>')
    return "".join(parts)


# ---------------------------------------------------------------- the other sections

def _bom(design, data: dict) -> str:
    plan = design.plan
    on_hand = dict(design.stock.parts)
    rows = []
    for part in sorted(set(plan.bom) | set(on_hand)):
        used = plan.bom.get(part, 0)
        have = on_hand.get(part, used)
        fn = plan.parts[part].function if part in plan.parts else ""
        rows.append(f"<tr><td>{escape(part)}</td><td>{escape(fn)}</td><td>{used}</td><td>{have}</td>"
                    f"<td>{have - used}</td></tr>")
    values: dict[tuple[str, str], int] = {}
    for item in plan.passives:
        key = (item.kind, item.label())
        values[key] = values.get(key, 0) + 1
    for (kind, label), count in sorted(values.items()):
        rows.append(f"<tr><td>{escape(label)}</td><td>{escape(kind)}</td><td>{count}</td>"
                    f"<td colspan=\"2\">value on hand in the bin</td></tr>")
    rows.append(f"<tr><td>100 nF</td><td>ceramic capacitor, decoupling</td><td>{len(plan.decoupling)}</td>"
                f"<td colspan=\"2\">one per chip (common practice)</td></tr>")
    jumpers = data["breadboard"]["jumpers"]
    rows.append(f"<tr><td>jumper wire</td><td>solid hook-up wire</td><td>{len(jumpers)}</td>"
                f"<td colspan=\"2\">{sum(j['length_mm'] for j in jumpers):.0f} mm hole to hole in all</td></tr>")
    return ("<table><thead><tr><th>part</th><th>what</th><th>used</th><th>on hand</th><th>left in the bin</th>"
            "</tr></thead><tbody>" + "".join(rows) + "</tbody></table>")


def _remedies(design) -> str:
    plan = design.plan
    items = []
    for fix in plan.timing_fixes or ():
        applied = " + ".join(fix.remedies_applied or ["note"]).replace("_", " ")
        items.append(f"<li>{escape(fix.signal)}: {escape(applied)} (+{fix.cost.chips} chips, "
                     f"+{fix.cost.gates} gates): {escape(fix.detail)}</li>")
    for text in design.remedies.text if design.remedies else ():
        items.append(f"<li>{escape(text)}</li>")
    if not items:
        return "<p>No remedies were applied to this plan.</p>"
    return "<ul>" + "".join(items) + "</ul>"


def _timing(design) -> str:
    if design.trace is None:
        return "<p>No timing trace was made for this plan.</p>"
    svg = trace_to_svg(design.trace, design.plan)
    encoded = base64.b64encode(svg.encode()).decode()
    return f'<img class="timing" alt="timing diagram" src="data:image/svg+xml;base64,{encoded}">'


def _signals_table(data: dict) -> str:
    rows = []
    for name, sig in data["signals"].items():
        src = sig.get("source")
        where = f"{src['ref']} pin {src['pin']}" if src else "constant"
        rows.append(f'<tr{_attr_net(sig["net"])}><td>{escape(name)}</td><td>{escape(sig["polarity"])}</td>'
                    f'<td>{escape(where)}</td><td><button class="net" type="button"{_attr_net(sig["net"])}>'
                    f'{escape(sig["net"])}</button></td></tr>')
    return ("<table><thead><tr><th>signal</th><th>asserted level</th><th>chip pin</th><th>net</th></tr>"
            "</thead><tbody>" + "".join(rows) + "</tbody></table>")


def _net_buttons(board: _Board) -> str:
    nets = sorted(board.colours, key=lambda n: (n not in RAIL_NETS, ref_key(n)))
    return "".join(f'<button class="net" type="button"{_attr_net(n)} style="border-color:{board.net_colour(n)}">'
                   f"{escape(n)}</button>" for n in nets)


# ---------------------------------------------------------------- the page

def report_html(design) -> str:
    """The whole build page as one HTML document."""
    plan = design.plan
    data = plan_to_json(plan)
    board = _Board(data, plan)
    steps = _steps(board)
    step_of = {sid: sid for _, sid, _, _ in steps}
    bb = data["breadboard"]
    fig = bb["figures"]
    sites = _gate_sites(plan)
    key = plan_hash(data)
    cautions = list(plan.cautions) or list(CAUTIONS)
    title = f"binsynth build page: {plan.name}"
    chips = sorted(plan.chips, key=lambda c: ref_key(c.ref))
    body = [
        f"<header><h1>{escape(title)}</h1>",
        f"<p>{len(plan.chips)} chips, {len(plan.passives)} resistors and capacitors, {len(bb['jumpers'])} jumpers on "
        f"{'one ' + bb['board'] if bb['boards'] == 1 else str(bb['boards']) + ' ' + bb['board'] + ' boards'} "
        f"board ({bb['joins']}). Supply {plan.supply:g} V; the counter advances on the {escape(plan.clock_edge)} "
        f"edge of CLK.</p>",
        '<nav class="noprint"><a href="#board">board</a> <a href="#checklist">checklist</a> '
        '<a href="#pins">pin maps</a> <a href="#gates">gate diagrams</a> <a href="#timing">timing</a> '
        '<a href="#parts">parts</a> <a href="#cautions">cautions</a> <a href="#method">layout method</a></nav>',
        '<section id="cautions" class="cautions"><h2>Cautions</h2><ul>'
        + "".join(f"<li>{escape(c)}</li>" for c in cautions) + "</ul></section></header>",
        '<section id="board"><h2>Breadboard</h2>',
        '<div class="next noprint" id="next-box"><strong>Next:</strong> <span id="next-text"></span> '
        '<button type="button" id="next-done">done</button> <span id="progress"></span> '
        '<label><input type="checkbox" id="focus"> show only what is built and the next step</label></div>',
        '<p class="legend">Drawn to scale (one square = one hole, 2.54 mm apart). Rows are numbered and columns '
        'lettered as printed on the board; a-e of one row are joined, so are f-j; each rail runs the board\'s '
        'length (<span class="plus-key">+ rail = VDD</span>, <span class="minus-key">\u2212 rail = VSS</span>, '
        'ground jumpers dashed). Every jumper is labelled with its net and its length hole to hole; the dot '
        'marks pin 1 and the half circle the notch. Click a wire, a strip, a pin or a name to mark that net '
        'everywhere; click again to clear.</p>',
        f'<div class="board-wrap">{_board_svg(board, step_of)}</div>',
        f'<div class="nets">Nets: {_net_buttons(board)}</div></section>',
        f'<section id="checklist"><h2>Wiring checklist ({len(steps)} steps, in build order)</h2>'
        '<p class="noprint">Ticks stay in this browser for this plan. <button type="button" id="clear-ticks">'
        'clear all ticks</button></p>' + _checklist(steps) + "</section>",
        '<section id="signals"><h2>Signals</h2>' + _signals_table(data) + "</section>",
        '<section id="pins"><h2>Pin maps</h2><div class="pinmaps">'
        + "".join(_pin_map(plan, c.ref) for c in chips) + "</div></section>",
        '<section id="gates"><h2>Gate diagrams</h2><p class="legend">From the counter pins to each output pin; '
        'each gate names its chip and unit, with pin numbers at its inputs and output.</p>'
        + "".join(_gate_diagram(plan, name, sig, sites) for name, sig in data["signals"].items()) + "</section>",
        '<section id="timing"><h2>Timing diagram</h2>' + _timing(design) + "</section>",
        '<section id="parts"><h2>Parts and what is left in the bin</h2>' + _bom(design, data) + "</section>",
        '<section id="remedies"><h2>Remedies applied</h2>' + _remedies(design) + "</section>",
        '<section id="warnings"><h2>Warnings</h2>' + ("<ul>" + "".join(f"<li>{escape(w)}</li>" for w in plan.warnings)
                                                      + "</ul>" if plan.warnings else "<p>None.</p>") + "</section>",
        '<section id="method"><h2>How the board was laid out</h2>'
        f"<p>{escape(method_text())}.</p>"
        f"<p>Figures: {fig['jumpers']} jumpers, {fig['length_mm']:g} mm of wire hole to hole, {fig['crossings']} "
        f"crossings; the ordered start had {fig['ordered_start']['length_mm']:g} mm and "
        f"{fig['ordered_start']['crossings']} crossings; {fig['layouts_tried']} layouts routed, "
        f"{fig['moves_kept']} moves kept.</p></section>",
        f'<footer>Made by binsynth from {escape(str(plan.spec_path))} and {escape(str(plan.bin_path))}. '
        f"Plan key {key}.</footer>",
    ]
    return (f'<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">\n'
            f'<meta name="viewport" content="width=device-width, initial-scale=1">\n'
            f"<title>{escape(title)}</title>\n<style>{CSS}</style></head>\n"
            f'<body data-plan="{key}">\n' + "\n".join(body) + f"\n<script>{JS}</script>\n</body></html>\n")


def write_report(design, path: str | Path) -> Path:
    """Write the build page, replacing any old file in one step."""
    return atomic_write_text(path, report_html(design))


CSS = """
:root { --ink:#1b1b1b; --paper:#fdfcf8; --mark:#ffd21f; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, sans-serif; color: var(--ink); background: var(--paper); margin: 0 auto;
       max-width: 1400px; padding: 12px 18px; }
h1 { font-size: 1.45em; margin: 0.2em 0; } h2 { font-size: 1.2em; border-bottom: 2px solid #ccc; margin-top: 1.4em; }
h3 { font-size: 1em; margin: 0.8em 0 0.2em; }
nav a { margin-right: 0.8em; }
.cautions { background: #fff4d6; border-left: 5px solid #b07800; padding: 4px 12px; }
.cautions h2 { border: 0; margin: 0.3em 0; }
.board-wrap { overflow-x: auto; border: 1px solid #ddd; background: #fff; }
svg.board { width: 100%; min-width: 1300px; height: auto; display: block; }
.bb-body { fill: #f1efe8; stroke: #b9b4a6; }
.bb-channel { fill: #dcd8cc; }
.hole { fill: #8f8a7d; }
.bb-stripe { stroke-width: 2.5; } .bb-stripe.plus { stroke: #c8102e; } .bb-stripe.minus { stroke: #1e1e1e; stroke-dasharray: 6 3; }
.bb-sign { font: bold 13px sans-serif; fill: #333; }
.bb-num, .bb-col { font: 9px sans-serif; fill: #555; }
.bb-strip { fill: transparent; cursor: pointer; }
.bb-strip.hl { fill: var(--mark); fill-opacity: 0.55; }
.chip-body { fill: #2d2d33; } .chip-notch { fill: #f1efe8; } .chip-dot { fill: #f1efe8; }
.chip-label { font: bold 11px sans-serif; fill: #fff; pointer-events: none; }
.chip-tag { font: bold 12px sans-serif; fill: #fff; paint-order: stroke; stroke: #2d2d33; stroke-width: 4px;
            pointer-events: none; }
.pin1 { font: bold 8px sans-serif; fill: #fff; pointer-events: none; }
.chip-pin { fill: #c9c9c9; stroke: #555; stroke-width: 0.6; cursor: pointer; }
.chip-pin.hl { fill: var(--mark); stroke: #000; stroke-width: 1.5; }
.lead { stroke: #777; stroke-width: 1.6; }
.res-body { fill: #e2c99a; stroke: #7a5d2a; } .cap-body { fill: #e6b24a; stroke: #7a5d2a; }
.part-label { font: 8px sans-serif; fill: #222; pointer-events: none; }
.bb-jumper { cursor: pointer; }
.bb-jumper .wire { fill: none; stroke-width: 3.2; stroke-linecap: round; }
.bb-jumper .casing { fill: none; stroke: #fff; stroke-width: 5.5; stroke-linecap: round; }
.bb-jumper.rail .wire, .bb-jumper.tie .wire { stroke-width: 2.6; }
.wire-label { font: bold 9px sans-serif; fill: #111; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
.wire-label .mm { font-weight: normal; font-size: 7.5px; }
.wire-label.rail { font-size: 10px; }
.bb-jumper.hl .casing { stroke: var(--mark); stroke-width: 9; }
.bb-jumper.next .casing, .bb-chip.next .chip-body, .bb-part.next rect, .bb-external.next line { stroke: #00a3ff; stroke-width: 10; }
.bb-chip.next .chip-body { stroke-width: 4; }
body.focus .bb-jumper:not(.built):not(.next), body.focus .bb-part:not(.built):not(.next),
body.focus .bb-external:not(.built):not(.next) { opacity: 0.1; }
body.focus .bb-chip:not(.built):not(.next) { opacity: 0.35; }
.bb-external .flying { stroke-width: 3; stroke-dasharray: 2 2; }
.ext-label { font: bold 9px sans-serif; paint-order: stroke; stroke: #fff; stroke-width: 3px; }
.bb-external.hl .flying { stroke-width: 6; }
.nets { margin: 6px 0; }
button.net { font: 12px sans-serif; border: 2px solid #888; background: #fff; border-radius: 4px; margin: 1px;
             padding: 0 5px; cursor: pointer; }
button.net.hl { background: var(--mark); font-weight: bold; }
.next { position: sticky; top: 0; z-index: 2; background: #e5f5ff; border: 2px solid #00a3ff; padding: 5px 10px;
        margin: 6px 0; }
.checklist ol { margin: 0; padding-left: 2.6em; }
li.step { margin: 2px 0; padding: 1px 4px; border-radius: 3px; }
li.step.done label { color: #777; text-decoration: line-through; }
li.step.next { background: #e5f5ff; outline: 2px solid #00a3ff; }
li.step.hl { background: #fff3b0; }
input[type=checkbox] { width: 1.05em; height: 1.05em; vertical-align: -2px; }
.pinmaps { display: flex; flex-wrap: wrap; gap: 10px; }
figure { margin: 6px 0; break-inside: avoid; page-break-inside: avoid; }
figure.pinmap svg { width: 470px; max-width: 100%; height: auto; }
figcaption { font-weight: bold; }
.pm-body { fill: #2d2d33; } .pm-notch { fill: #fdfcf8; } .pm-dot { fill: #fdfcf8; }
.pm-ref { font: bold 12px sans-serif; fill: #fff; }
.pm-pin line { stroke: #555; stroke-width: 2; }
.pm-num { font: 9px sans-serif; fill: #333; } .pm-func { font: 10px sans-serif; fill: #fff; }
.pm-net { font: 11px sans-serif; fill: #111; cursor: pointer; }
.pm-pin.hl .pm-net { font-weight: bold; fill: #000; paint-order: stroke; stroke: var(--mark); stroke-width: 6px; }
figure.gates svg { max-width: 100%; height: auto; }
.gd-body { fill: #fff; stroke: #222; stroke-width: 1.6; }
.gd-wire { fill: none; stroke: #333; stroke-width: 1.4; }
.gd-wire.hl { stroke: #e0a800; stroke-width: 4; }
.gd-in, .gd-out, .gd-net, .gd-tag { font: 11px sans-serif; cursor: pointer; } .gd-out { font-weight: bold; }
.gd-tag { fill: #1d5fa6; font-style: italic; }
.gd-ref { font: 10px sans-serif; fill: #333; } .gd-pin { font: 9px sans-serif; fill: #666; }
.gd-tag.hl, .gd-net.hl, .gd-out.hl, .gd-in.hl { font-weight: bold; fill: #000; paint-order: stroke; stroke: var(--mark); stroke-width: 5px; }
img.timing { max-width: 100%; height: auto; border: 1px solid #ddd; }
table { border-collapse: collapse; margin: 4px 0; } td, th { border: 1px solid #ccc; padding: 2px 8px; text-align: left; }
tr.hl td { background: #fff3b0; }
.plus-key { color: #c8102e; font-weight: bold; } .minus-key { font-weight: bold; }
.legend { color: #333; font-size: 0.95em; }
footer { margin-top: 2em; color: #666; font-size: 0.9em; }
@media print {
  @page { margin: 10mm; }
  body { max-width: none; padding: 0; font-size: 10.5pt; background: #fff; }
  .noprint, nav { display: none !important; }
  .board-wrap { overflow: visible; border: 0; }
  svg.board { min-width: 0; width: 100%; }
  section { break-inside: auto; }
  #board { break-after: page; page: wide; }
  @page wide { size: landscape; margin: 8mm; }
  .bb-chip.next .chip-body, .bb-part.next rect, .bb-external.next line { stroke: none; }
  li.step { break-inside: avoid; }
  li.step.next { outline: 0; background: none; }
  .bb-jumper.next .casing { stroke: #fff; stroke-width: 5.5; }
}
"""

JS = r"""
(function () {
  'use strict';
  var key = 'binsynth-report:' + document.body.getAttribute('data-plan');
  var boxes = Array.prototype.slice.call(document.querySelectorAll('li.step input[type=checkbox]'));
  function load() {
    try { return JSON.parse(window.localStorage.getItem(key) || '[]'); } catch (e) { return []; }
  }
  function save() {
    var done = boxes.filter(function (b) { return b.checked; }).map(function (b) { return b.value; });
    try { window.localStorage.setItem(key, JSON.stringify(done)); } catch (e) { /* storage off: ticks last this visit */ }
  }
  function mark(step, cls, on) {
    document.querySelectorAll('[data-step="' + step + '"]').forEach(function (el) { el.classList.toggle(cls, on); });
  }
  function refresh() {
    var next = null, count = 0;
    boxes.forEach(function (b) {
      b.closest('li').classList.toggle('done', b.checked);
      mark(b.value, 'next', false);
      mark(b.value, 'built', b.checked);
      if (b.checked) { count += 1; } else if (next === null) { next = b; }
    });
    var text = document.getElementById('next-text');
    document.getElementById('progress').textContent = '(' + count + ' of ' + boxes.length + ' done)';
    if (next) {
      mark(next.value, 'next', true);
      text.textContent = next.closest('li').textContent.trim();
    } else {
      text.textContent = 'every step is ticked: check the board against the pin maps, then power up.';
    }
  }
  var done = load();
  boxes.forEach(function (b) {
    b.checked = done.indexOf(b.value) >= 0;
    b.addEventListener('change', function () { save(); refresh(); });
  });
  document.getElementById('next-done').addEventListener('click', function () {
    var next = boxes.filter(function (b) { return !b.checked; })[0];
    if (next) { next.checked = true; save(); refresh(); }
  });
  document.getElementById('focus').addEventListener('change', function (ev) {
    document.body.classList.toggle('focus', ev.target.checked);
  });
  document.getElementById('clear-ticks').addEventListener('click', function () {
    boxes.forEach(function (b) { b.checked = false; }); save(); refresh();
  });
  var current = null;
  function highlight(net) {
    document.querySelectorAll('.hl').forEach(function (el) { el.classList.remove('hl'); });
    if (net === current || !net) { current = null; return; }
    current = net;
    document.querySelectorAll('[data-net]').forEach(function (el) {
      if (el.getAttribute('data-net') === net) { el.classList.add('hl'); }
    });
  }
  document.addEventListener('click', function (ev) {
    if (ev.target.closest('input, label')) { return; }
    var el = ev.target.closest('[data-net]');
    if (el) { highlight(el.getAttribute('data-net')); }
  });
  refresh();
})();
"""


def design_text(design) -> str:
    """The ``--report`` page of a finished design (the exporter interface)."""
    return report_html(design)
