"""The simulated cycles as an IEEE 1364 value change dump (VCD).

Interface: ``trace_to_vcd(trace, plan, *, date=None) -> str``; ``write_vcd(trace,
plan, path) -> Path``; ``vcd_scopes(trace, plan)`` (scope -> [(name, net)],
what the file declares, for readers and tests).

The dump follows IEEE 1364-2001 section 18 (four-state VCD): ``$date``,
``$version``, ``$timescale 1 ps`` (the simulator's own unit, so every time is
exact), one ``$scope module`` named as the Verilog module with three
sub-scopes, ``counter`` (the clock and each counter output used by the
decode, lowest weight first), ``signals`` (each spec signal by its name, at
its electrical level) and ``internal`` (every other gate net, the counter
reset included), each a ``$var wire 1``, and, when the plan has staircases
or switches, ``analog``: each staircase's voltage and each switch's common
voltage as a ``$var real 64`` (IEEE 1364 section 18.2.3, values written
``r<volts>``) and each switch's position (1 while it joins its ``on`` net)
as a ``$var wire 1`` (``analogwave.analog_waves``).  ``$dumpvars`` gives the
levels at time 0; then one ``#time`` line per instant something changes.
"""

from __future__ import annotations

import re
from pathlib import Path

from .. import __version__
from ..analogwave import analog_waves
from ..netlist import Plan, verilog_module_name
from ..timing import Trace, ps
from .files import atomic_write_text

__all__ = ["trace_to_vcd", "write_vcd", "vcd_scopes", "vcd_name", "identifier_code"]


def identifier_code(n: int) -> str:
    """The n-th short VCD identifier code (printable ASCII ``!`` to ``~``).

    >>> [identifier_code(i) for i in (0, 1, 93, 94)]
    ['!', '"', '~', '!!']
    """
    chars = [chr(c) for c in range(33, 127)]
    code = ""
    n += 1
    while n:
        n, r = divmod(n - 1, len(chars))
        code = chars[r] + code
    return code


def vcd_name(name: str) -> str:
    """A net name as a VCD reference: no white space, no dots (readers take dots for scopes).

    >>> vcd_name("U1.Q4"), vcd_name("row 0")
    ('U1_Q4', 'row_0')
    """
    return re.sub(r"[\s.:\[\]]", "_", name) or "_"


def vcd_scopes(trace: Trace, plan: Plan) -> dict[str, list[tuple[str, str]]]:
    """Each sub-scope with its (reference name, net) pairs, in file order."""
    counter = [(vcd_name(trace.clock_net), trace.clock_net)]
    counter += [(vcd_name(n), n) for n in trace.counter_nets]
    signals = [(vcd_name(name), net) for name, (net, _) in trace.signals.items()]
    internal = [(vcd_name(n), n) for n in trace.internal_nets]
    return {"counter": _unique(counter), "signals": _unique(signals), "internal": _unique(internal)}


def _unique(rows: list[tuple[str, str]], seen: set[str] | None = None) -> list[tuple[str, str]]:
    """The rows with a ``_2``, ``_3`` ... suffix on each name already in ``seen`` or earlier."""
    seen = set() if seen is None else set(seen)
    out = []
    for name, net in rows:
        base, k = name, 2
        while name in seen:
            name = f"{base}_{k}"
            k += 1
        seen.add(name)
        out.append((name, net))
    return out


def trace_to_vcd(trace: Trace, plan: Plan, *, date: str | None = None) -> str:
    """The trace as VCD text (times in picoseconds)."""
    # No wall-clock date: the same inputs must give the same file on any machine.
    when = date or "not recorded (the file depends only on the spec and the bin)"
    module = verilog_module_name(plan.name or "binsynth_plan")
    lines = [
        f"$date {when} $end",
        f"$version binsynth {__version__} $end",
        f"$comment plan {plan.name}: {trace.cycles} cycle(s) of {trace.cycle} ticks, "
        f"clock period {trace.period_ns:g} ns, {trace.corner} delays at {trace.supply:g} V, "
        f"{'inertial' if trace.inertial else 'transport'} gate model $end",
        "$timescale 1 ps $end",
        f"$scope module {module} $end",
    ]
    codes: dict[str, str] = {}
    for scope, rows in vcd_scopes(trace, plan).items():
        lines.append(f"$scope module {scope} $end")
        for name, net in rows:
            if net not in codes:
                codes[net] = identifier_code(len(codes))
            lines.append(f"$var wire 1 {codes[net]} {name} $end")
        lines.append("$upscope $end")
    waves = analog_waves(trace, plan)
    wave_codes = []
    if waves:
        lines.append("$scope module analog $end")
        for wave, name in zip(waves, _unique_names(waves, codes, trace, plan)):
            code = identifier_code(len(codes) + len(wave_codes))
            wave_codes.append((wave, code))
            kind = "wire 1" if wave.kind == "switch" else "real 64"
            lines.append(f"$var {kind} {code} {name} $end")
        lines.append("$upscope $end")
    lines += ["$upscope $end", "$enddefinitions $end", "#0", "$dumpvars"]
    lines += [f"{int(_initial(trace, net))}{code}" for net, code in codes.items()]
    lines += [_value(wave, wave.initial, code) for wave, code in wave_codes]
    lines.append("$end")
    events: dict[int, list[str]] = {}
    for net, code in codes.items():
        for t, level in trace.changes.get(net, []):
            events.setdefault(ps(t), []).append(f"{int(level)}{code}")
    for wave, code in wave_codes:
        for t, value in wave.changes:
            events.setdefault(ps(t), []).append(_value(wave, value, code))
    for t in sorted(events):
        if t == 0:
            continue
        lines.append(f"#{t}")
        lines += events[t]
    lines.append(f"#{ps(trace.end_ns)}")
    return "\n".join(lines) + "\n"


def _value(wave, value: float, code: str) -> str:
    """A VCD value change: ``0!`` / ``1!`` for a switch position, ``r2.5 !`` for volts."""
    if wave.kind == "switch":
        return f"{int(value)}{code}"
    return f"r{value:.6g} {code}"


def _unique_names(waves, codes, trace, plan) -> list[str]:
    taken = {name for rows in vcd_scopes(trace, plan).values() for name, _ in rows}
    rows = _unique([(vcd_name(w.name), w.name) for w in waves])
    return [name for name, _ in _unique(rows, taken)]


def _initial(trace: Trace, net: str) -> bool:
    """The level at time 0 (the simulator changes nothing at 0: the clock moves first at half a period)."""
    return trace.level_at(net, 0.0)


def write_vcd(trace: Trace, plan: Plan, path: str | Path) -> Path:
    """Write ``trace_to_vcd`` to ``path`` atomically."""
    return atomic_write_text(path, trace_to_vcd(trace, plan))


def design_text(design) -> str:
    """The ``--vcd`` text of a finished design (the exporter interface)."""
    return trace_to_vcd(design.trace, design.plan)
