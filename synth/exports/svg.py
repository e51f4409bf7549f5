"""A timing diagram a person reads in a browser: one cycle, and a close-up of every marked tick.

Interface: ``trace_to_svg(trace, plan, glitches=None, coincident=None, *,
max_panels=12) -> str``; ``write_svg(trace, plan, path, glitches=None,
coincident=None) -> Path``.  ``glitches`` and ``coincident`` default to the
plan's ``glitches`` and ``coincident_edges`` (records or ``Glitch`` objects).

Layout (self-contained SVG 1.1, no script): a title line; the main diagram
over one cycle with a tick ruler on top and one labelled trace per row (the
clock, each counter output used by the decode, lowest weight first, then each
spec signal with its asserted ticks shaded, then each staircase and switch
common voltage from 0 V to VDD in a taller row and each switch position,
``analogwave.analog_waves``); red marks where a signal can
glitch on a tick entry and amber lines where two signals switch on the same
boundary.  Below it, one close-up panel per marked tick with a nanosecond
ruler, drawn from the simulated changes themselves.  Each mark links to its
panel, and each panel is also an SVG ``<view>`` (open ``file.svg#tick-8`` to
see just that panel, zoomed).  Main-diagram rows are ``<g class="trace ...">``
elements inside ``<g id="main">``, one per counter output and per signal.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

from ..analogwave import analog_waves
from ..findings import CoincidentEdge, GlitchRecord
from ..netlist import Plan
from ..timing import Glitch, Trace, nice_period_ns
from ..units import format_si
from .files import atomic_write_text

__all__ = ["trace_to_svg", "write_svg"]

WIDTH = 1180
LABEL = 170
RIGHT = 24
ROW = 24
WAVE = 14
ANALOG = 40          # height of a staircase row, 0 V at its foot, VDD at its top
PLOT = WIDTH - LABEL - RIGHT

STYLE = """
svg { background: #f7f5ef; }
text { font-family: 'DejaVu Sans Mono', Menlo, Consolas, monospace; font-size: 11px; fill: #3d3a33; }
.title { font-size: 15px; font-weight: bold; fill: #22201b; }
.sub { fill: #6b665a; }
.ruler line { stroke: #8a8474; stroke-width: 1; }
.grid { stroke: #e2ddd0; stroke-width: 1; }
.wave { fill: none; stroke-width: 1.6; stroke-linejoin: miter; }
.clock .wave { stroke: #8a8474; stroke-width: 1; }
.counter .wave { stroke: #2a7f62; }
.signal .wave { stroke: #1d4e89; }
.analog .wave { stroke: #7a3e9d; stroke-width: 1.4; }
.switch .wave { stroke: #7a3e9d; }
.asserted { fill: #1d4e89; fill-opacity: 0.12; }
.glitch { fill: #c8102e; }
.glitchband { fill: #c8102e; fill-opacity: 0.22; stroke: #c8102e; stroke-width: 0.8; }
.race { stroke: #e39b00; stroke-width: 1.6; stroke-dasharray: 4 3; }
.racedot { fill: #e39b00; }
.panel { fill: #fffdf8; stroke: #cfc9b8; stroke-width: 1; }
.legend .glitch, .legend .racedot { stroke: none; }
"""


# ---------------------------------------------------------------- marks

def _record(item: GlitchRecord | CoincidentEdge | Glitch | dict) -> dict:
    """A glitch or coincident-edge record as the plan JSON gives it (a dict passes as it is)."""
    if isinstance(item, Glitch):
        return item.record().to_json()
    if isinstance(item, (GlitchRecord, CoincidentEdge)):
        return item.to_json()
    return dict(item)


def _marks(trace: Trace, glitches: list[dict], coincident: list[dict]) -> list[int]:
    ticks = {int(g["at_tick"]) for g in glitches} | {int(c["at_tick"]) for c in coincident}
    return sorted(ticks)


# ---------------------------------------------------------------- drawing helpers

def _time(ns: float) -> str:
    """A time for people: ``5 us``, ``1 ms``, ``160 ns``."""
    return format_si(ns * 1e-9, "s")


def _step_path(points: list[tuple[float, bool]], x_end: float, y: float) -> str:
    """A digital waveform: (x, level) pairs in order, drawn to x_end; high is up."""
    hi, lo = y - WAVE, y
    x0, level = points[0]
    d = [f"M{x0:.2f},{hi if level else lo:.2f}"]
    for x, new in points[1:]:
        if new == level:
            continue
        d.append(f"H{x:.2f}V{hi if new else lo:.2f}")
        level = new
    d.append(f"H{x_end:.2f}")
    return "".join(d)


def _label(x: float, y: float, text: str, cls: str = "") -> str:
    attr = f' class="{cls}"' if cls else ""
    return f'<text x="{x:.1f}" y="{y:.1f}"{attr}>{escape(text)}</text>'


def _ruler_step(span: float, pixels: float, min_gap: float = 48) -> float:
    """A 1-2-5 step so that labels stand at least ``min_gap`` pixels apart."""
    if span <= 0:
        return 1.0
    return nice_period_ns(span * min_gap / pixels)


def _tick_step(cycle: int) -> int:
    """Ticks between ruler labels: a power of two, labels >= 40 px apart.

    >>> _tick_step(16), _tick_step(1024)
    (1, 64)
    """
    per_tick = PLOT / cycle
    step = 1
    while step * per_tick < 40:
        step *= 2
    return step


# ---------------------------------------------------------------- the main diagram

def _rows(trace: Trace, plan: Plan) -> list[tuple[str, str, str, str]]:
    """(css class, label, net, signal name) for each trace row, in drawing order."""
    rows = [("clock", trace.clock_net, trace.clock_net, "")]
    rows += [("counter", net, net, "") for net in trace.counter_nets]
    for name, (net, polarity) in trace.signals.items():
        rows.append(("signal", f"{name} ({'active ' + polarity})", net, name))
    return rows


def _main(trace: Trace, plan: Plan, glitches: list[dict], coincident: list[dict],
          top: float) -> tuple[list[str], float]:
    cycle = trace.cycle
    x = lambda t: LABEL + t * PLOT / cycle  # noqa: E731
    out = ['<g id="main">']
    ruler_y = top + 18
    step = _tick_step(cycle)
    out.append('<g class="ruler">')
    out.append(f'<line x1="{x(0):.1f}" y1="{ruler_y:.1f}" x2="{x(cycle):.1f}" y2="{ruler_y:.1f}"/>')
    for t in range(0, cycle + 1):
        major = t % step == 0
        if not major and PLOT / cycle < 4:
            continue
        length = 6 if major else 3
        out.append(f'<line x1="{x(t):.2f}" y1="{ruler_y:.1f}" x2="{x(t):.2f}" y2="{ruler_y - length:.1f}"/>')
        if major:
            out.append(_label(x(t) - 3 * len(str(t)), ruler_y - 8, str(t)))
    out.append("</g>")
    out.append(_label(8, ruler_y - 4, "tick"))
    rows = _rows(trace, plan)
    y0 = ruler_y + 8
    row_y: dict[str, float] = {}
    for i, (cls, label, net, name) in enumerate(rows):
        y = y0 + (i + 1) * ROW
        row_y[name or net] = y
        out.append(f'<line class="grid" x1="{LABEL}" y1="{y + 4:.1f}" x2="{x(cycle):.1f}" y2="{y + 4:.1f}"/>')
        attrs = f'class="trace {cls}" data-net={quoteattr(net)}'
        if name:
            attrs += f" data-signal={quoteattr(name)}"
        out.append(f"<g {attrs}>")
        out.append(_label(8, y - 2, label))
        levels = trace.sample(net)[:cycle]
        if cls == "signal":
            active = trace.signals[name][1] == "high"
            for t, level in enumerate(levels):
                if level == active:
                    out.append(f'<rect class="asserted" x="{x(t):.2f}" y="{y - WAVE:.1f}" '
                               f'width="{PLOT / cycle:.2f}" height="{WAVE}"/>')
        if cls == "clock":
            out.append(f'<path class="wave" d="{_clock_path(trace, x, y)}"/>')
        else:
            points = [(x(t), level) for t, level in enumerate(levels)]
            out.append(f'<path class="wave" d="{_step_path(points, x(cycle), y)}"/>')
        out.append("</g>")
    out += _glitch_marks(glitches, row_y, x, cycle)
    out += _race_marks(coincident, row_y, x)
    bottom = y0 + (len(rows) + 1) * ROW
    analog, bottom = _analog_rows(trace, plan, bottom - ROW + 4)
    out += analog
    out.append("</g>")
    return out, bottom


def _analog_rows(trace: Trace, plan: Plan, top: float) -> tuple[list[str], float]:
    """Each staircase and switch common voltage (0 V .. VDD in a taller row, its levels
    drawn from the simulated codes, ripple steps included), each switch position as a level."""
    cycle_ns = trace.cycle * trace.period_ns
    x = lambda t: LABEL + min(t, cycle_ns) * PLOT / cycle_ns  # noqa: E731
    out, y = [], top
    supply = float(plan.supply or trace.supply)
    for wave in analog_waves(trace, plan):
        height = WAVE if wave.kind == "switch" else ANALOG
        y += height + ROW - WAVE
        cls = "switch" if wave.kind == "switch" else "analog"
        out.append(f'<line class="grid" x1="{LABEL}" y1="{y + 4:.1f}" x2="{x(cycle_ns):.1f}" y2="{y + 4:.1f}"/>')
        out.append(f'<g class="trace {cls}" data-net={quoteattr(wave.name)} data-kind="{wave.kind}">')
        label = wave.name + (" (position)" if wave.kind == "switch" else f" (0 .. {supply:g} V)")
        out.append(f"<title>{escape(wave.detail)}</title>")
        out.append(_label(8, y - 2, label))
        points = [(0.0, wave.initial)] + [(t, v) for t, v in wave.changes if t < cycle_ns]
        if wave.kind == "switch":
            steps = [(x(t), bool(v)) for t, v in points]
            out.append(f'<path class="wave" d="{_step_path(steps, x(cycle_ns), y)}"/>')
        else:
            scale = lambda v: y - ANALOG * max(0.0, min(1.0, v / supply))  # noqa: E731
            d = [f"M{x(0):.2f},{scale(points[0][1]):.2f}"]
            d += [f"H{x(t):.2f}V{scale(v):.2f}" for t, v in points[1:]]
            d.append(f"H{x(cycle_ns):.2f}")
            out.append(f'<path class="wave" d="{"".join(d)}"/>')
        out.append("</g>")
    return out, y + ROW


def _clock_path(trace: Trace, x: Callable[[float], float], y: float) -> str:
    after = trace.edge == "rising"
    if PLOT / trace.cycle < 4:
        return f"M{x(0):.2f},{y - WAVE / 2:.2f}H{x(trace.cycle):.2f}"
    points = []
    for t in range(trace.cycle):
        points += [(x(t), after), (x(t + 0.5), not after)]
    return _step_path(points, x(trace.cycle), y)


def _glitch_marks(glitches: list[dict], row_y: dict[str, float], x: Callable[[float], float], cycle: int) -> list[str]:
    out = []
    for g in glitches:
        y = row_y.get(g["signal"])
        if y is None:
            continue
        tick = int(g["at_tick"])
        cx = x(tick)
        tip = (f"{g['signal']}: glitch on the entry to tick {tick}, {g.get('width_ns', 0):g} ns; "
               f"{g.get('cause', '')}")
        out.append(f'<a href="#tick-{tick}"><g class="mark"><title>{escape(tip)}</title>'
                   f'<path class="glitch" d="M{cx - 5:.2f},{y - WAVE - 9:.2f}h10l-5,8z"/>'
                   f'<rect class="glitch" x="{cx - 0.8:.2f}" y="{y - WAVE:.1f}" width="1.6" height="{WAVE}"/>'
                   "</g></a>")
    return out


def _race_marks(coincident: list[dict], row_y: dict[str, float], x: Callable[[float], float]) -> list[str]:
    out = []
    for c in coincident:
        a, b = c["signals"]
        if a not in row_y or b not in row_y:
            continue
        tick = int(c["at_tick"])
        ya, yb = sorted((row_y[a], row_y[b]))
        cx = x(tick)
        skew = f", {c['first']} first by {c['skew_ns']:g} ns" if "skew_ns" in c else ""
        tip = f"{a} and {b} both switch on the entry to tick {tick}{skew}"
        out.append(f'<a href="#tick-{tick}"><g class="mark"><title>{escape(tip)}</title>'
                   f'<line class="race" x1="{cx:.2f}" y1="{ya - WAVE:.1f}" x2="{cx:.2f}" y2="{yb:.1f}"/>'
                   f'<circle class="racedot" cx="{cx:.2f}" cy="{ya - WAVE / 2:.1f}" r="3"/>'
                   f'<circle class="racedot" cx="{cx:.2f}" cy="{yb - WAVE / 2:.1f}" r="3"/>'
                   "</g></a>")
    return out


# ---------------------------------------------------------------- close-up panels

def _panel(trace: Trace, plan: Plan, tick: int, glitches: list[dict], coincident: list[dict],
           top: float) -> tuple[list[str], float]:
    k = tick if tick else trace.cycle
    edge = k * trace.period_ns
    here_g = [g for g in glitches if int(g["at_tick"]) == tick]
    here_c = [c for c in coincident if int(c["at_tick"]) == tick]
    names = list(dict.fromkeys([g["signal"] for g in here_g] + [s for c in here_c for s in c["signals"]]))
    names = [n for n in names if n in trace.signals]
    nets = [trace.clock_net] + trace.counter_nets + [trace.signals[n][0] for n in names]
    last = max((t - edge for n in nets for t, _ in trace.window(n, k) if n != trace.clock_net), default=0.0)
    last = max([last] + [float(g.get("start_ns", 0)) + float(g.get("width_ns", 0)) for g in here_g])
    span = nice_period_ns(max(last * 1.2, 50.0))
    pre = span * 0.08
    x = lambda t: LABEL + (t + pre) * PLOT / (span + pre)  # noqa: E731
    rows = [("clock", trace.clock_net, trace.clock_net, "")]
    rows += [("counter", n, n, "") for n in trace.counter_nets]
    rows += [("signal", f"{n} ({'active ' + trace.signals[n][1]})", trace.signals[n][0], n) for n in names]
    height = 58 + (len(rows) + 1) * ROW
    count_from = trace.count_value(edge - 1e-3)
    count_to = trace.count_value(edge + trace.period_ns - 1e-3)
    out = [f'<g class="zoom" id="panel-{tick}">',
           f'<rect class="panel" x="4" y="{top:.1f}" width="{WIDTH - 8}" height="{height - 6:.1f}" rx="6"/>',
           _label(14, top + 18, f"tick {tick} entry: count {count_from} -> {count_to}, counting edge at "
                                f"{_time(edge)}; times after the edge", "title"),
           ]
    notes = [f"glitch on {g['signal']}: {g.get('width_ns', 0):g} ns"
             + ("" if g.get("passes_gate_delay", True) else " (the gate delay swallows it here)")
             + f", {g.get('cause', '')}" for g in here_g]
    notes += [f"{c['signals'][0]} and {c['signals'][1]} switch together" +
              (f", {c['first']} first by {c['skew_ns']:g} ns" if "skew_ns" in c else "") for c in here_c]
    out.append(_label(14, top + 34, "; ".join(notes)[:170], "sub"))
    ruler_y = top + 52
    step = _ruler_step(span + pre, PLOT)
    out.append('<g class="ruler">')
    t = 0.0
    while t <= span + 1e-9:
        out.append(f'<line x1="{x(t):.2f}" y1="{ruler_y:.1f}" x2="{x(t):.2f}" y2="{ruler_y - 5:.1f}"/>')
        out.append(_label(x(t) - 10, ruler_y - 8, f"{t:g} ns"))
        t += step
    out.append("</g>")
    row_y = {}
    for i, (cls, label, net, name) in enumerate(rows):
        y = ruler_y + 8 + (i + 1) * ROW
        row_y[name or net] = y
        points = [(x(-pre), trace.before(net, edge - pre))]
        points += [(x(tc - edge), level) for tc, level in trace.changes.get(net, [])
                   if edge - pre <= tc <= edge + span]
        out.append(f'<g class="zoomtrace {cls}" data-net={quoteattr(net)}>')
        out.append(_label(14, y - 2, label))
        out.append(f'<path class="wave" d="{_step_path(points, x(span), y)}"/>')
        out.append("</g>")
    for g in here_g:
        y = row_y.get(g["signal"])
        if y is None:
            continue
        x0 = x(float(g.get("start_ns", 0)))
        w = max(1.5, x(float(g.get("start_ns", 0)) + float(g.get("width_ns", 0))) - x0)
        note = "" if g.get("passes_gate_delay", True) else \
            " (shorter than the gate delay: the model swallows it, a faster part may pass it)"
        out.append(f'<rect class="glitchband" x="{x0:.2f}" y="{y - WAVE - 2:.1f}" width="{w:.2f}" '
                   f'height="{WAVE + 4}"><title>{escape(g.get("cause", "") + note)}</title></rect>')
    for c in here_c:
        for name in c["signals"]:
            settle = (c.get("settle_ns") or {}).get(name)
            if settle is None or name not in row_y:
                continue
            y = row_y[name]
            out.append(f'<line class="race" x1="{x(settle):.2f}" y1="{y - WAVE - 3:.1f}" '
                       f'x2="{x(settle):.2f}" y2="{y + 3:.1f}"/>')
    out.append("</g>")
    out.append(f'<view id="tick-{tick}" viewBox="0 {top - 4:.1f} {WIDTH} {height + 4:.1f}"/>')
    return out, top + height + 6


# ---------------------------------------------------------------- the document

def trace_to_svg(trace: Trace, plan: Plan, glitches: list | None = None, coincident: list | None = None,
                 *, max_panels: int = 12) -> str:
    """The whole diagram as SVG text."""
    glitches = [_record(g) for g in (plan.glitches if glitches is None else glitches)]
    coincident = [_record(c) for c in (plan.coincident_edges if coincident is None else coincident)]
    name = plan.name or "plan"
    body = [_label(12, 24, f"{name}: {trace.cycle} ticks per cycle, clock period {_time(trace.period_ns)}, "
                           f"{trace.corner} delays at {trace.supply:g} V", "title"),
            _legend(36, len(glitches), len(coincident))]
    main, y = _main(trace, plan, glitches, coincident, 48)
    body += main
    marks = _marks(trace, glitches, coincident)
    for tick in marks[:max_panels]:
        panel, y = _panel(trace, plan, tick, glitches, coincident, y + 8)
        body += panel
    if len(marks) > max_panels:
        rest = ", ".join(map(str, marks[max_panels:]))
        body.append(_label(12, y + 18, f"more marked ticks without a close-up: {rest}"[:180], "sub"))
        y += 26
    height = math.ceil(y + 12)
    head = (f'<?xml version="1.0" encoding="UTF-8"?>\n'
            f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{WIDTH}" height="{height}" '
            f'viewBox="0 0 {WIDTH} {height}">\n<title>{escape(name)} timing diagram</title>\n'
            f"<style>{STYLE}</style>\n"
            f'<rect x="0" y="0" width="{WIDTH}" height="{height}" fill="#f7f5ef"/>\n')
    return head + "\n".join(body) + "\n</svg>\n"


def _legend(y: float, n_glitches: int, n_races: int) -> str:
    x = LABEL
    return (f'<g class="legend"><path class="glitch" d="M{x:.1f},{y - 8:.1f}h10l-5,8z"/>'
            f'{_label(x + 14, y, f"glitch ({n_glitches})")}'
            f'<circle class="racedot" cx="{x + 130:.1f}" cy="{y - 4:.1f}" r="3.5"/>'
            f'{_label(x + 140, y, f"edges on the same boundary ({n_races})")}'
            f'{_label(x + 420, y, "click a mark for its close-up; shaded: asserted", "sub")}</g>')


def write_svg(trace: Trace, plan: Plan, path: str | Path, glitches: list | None = None,
              coincident: list | None = None) -> Path:
    """Write ``trace_to_svg`` to ``path`` atomically."""
    return atomic_write_text(path, trace_to_svg(trace, plan, glitches, coincident))


def design_text(design) -> str:
    """The ``--svg`` text of a finished design (the exporter interface)."""
    return trace_to_svg(design.trace, design.plan)
