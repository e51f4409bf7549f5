"""Analog values along a simulated trace: each staircase's voltage and each switch's position.

Interface:

- ``analog_waves(trace, plan) -> list[AnalogWave]`` (every staircase, then
  every switch's position and, where the nets it joins have known voltages,
  the voltage at its common terminal)
- ``AnalogWave.value_at(time_ns) -> float``
- record: ``AnalogWave``

A staircase's voltage at any instant is the ladder's level (with the
drivers' resistance, ``LadderPlan.levels``) for the code its driving counter
outputs show at that instant in the trace, so the ripple counter's passing
codes appear between steps just as they do on a scope.  A driving output the
trace does not carry (no decode reads it) is taken from the tick count,
changing exactly on each tick boundary.  A switch's position is 1 while its
common terminal joins the spec's ``on`` net.  Nothing here prints; the VCD
and SVG exports draw these.
"""

from __future__ import annotations

import bisect
from dataclasses import dataclass

from .analogparts import LadderPlan
from .netlist import BoardSwitch, Plan
from .timing import Trace

__all__ = ["AnalogWave", "analog_waves"]

RAIL_VOLTS = {"GND": 0.0, "VSS": 0.0}


@dataclass(frozen=True)
class AnalogWave:
    """One analog quantity over the trace: a level at time 0, then (time_ns, value) changes."""

    name: str
    kind: str                                 # "staircase", "switch" (position) or "common" (volts)
    unit: str                                 # "V" or "" for a position
    initial: float
    changes: tuple[tuple[float, float], ...]
    detail: str

    def value_at(self, time_ns: float) -> float:
        """The value after every change at or before ``time_ns``."""
        i = bisect.bisect_right(self.changes, (time_ns, float("inf")))
        return self.changes[i - 1][1] if i else self.initial

    @property
    def low(self) -> float:
        return min([self.initial, *(v for _, v in self.changes)])

    @property
    def high(self) -> float:
        return max([self.initial, *(v for _, v in self.changes)])


def _bit_changes(trace: Trace, net: str, bit: int) -> tuple[bool, list[tuple[float, bool]]]:
    """A driving output's level: from the trace, or from the tick count when the trace lacks it."""
    if net in trace.initial:
        return bool(trace.initial[net]), list(trace.changes.get(net, []))
    times = trace.tick_times_ns
    changes = []
    for k in range(1, len(times)):
        tick = k % trace.cycle
        before, now = bool(((tick - 1) % trace.cycle >> bit) & 1), bool((tick >> bit) & 1)
        if before != now:
            changes.append((times[k], now))
    return False, changes


def _compress(initial: float, points: list[tuple[float, float]]) -> tuple[tuple[float, float], ...]:
    """Changes in time order, each kept only where the value really changes (last one wins at a time)."""
    by_time: dict[float, float] = {}
    for t, v in points:
        by_time[t] = v
    out, last = [], initial
    for t in sorted(by_time):
        if by_time[t] != last:
            out.append((t, by_time[t]))
            last = by_time[t]
    return tuple(out)


def _staircase(trace: Trace, name: str, lad: LadderPlan) -> AnalogWave:
    bits = [_bit_changes(trace, net, bit) for bit, (_, _, net) in zip(lad.bits, lad.drivers)]
    state = [start for start, _ in bits]
    events = sorted((t, k, level) for k, (_, changes) in enumerate(bits) for t, level in changes)

    def level() -> float:
        return float(lad.levels[sum(int(b) << k for k, b in enumerate(state))])

    initial, points = level(), []
    for t, k, value in events:
        state[k] = value
        points.append((t, level()))
    return AnalogWave(name, "staircase", "V", initial, _compress(initial, points),
                      f"{lad.kind} ladder on tick bits {', '.join(map(str, lad.bits))}")


def _switch(trace: Trace, plan: Plan, name: str, sw: BoardSwitch, volts: dict[str, AnalogWave]) -> list[AnalogWave]:
    control = sw.control_net
    if not control or control not in trace.initial:
        return []
    high_joins = sw.when_control_high
    on_net, off_net = sw.on, sw.off

    def position(level: bool) -> float:
        joined = high_joins if level else (off_net if high_joins == on_net else on_net)
        return 1.0 if joined == on_net else 0.0

    initial = position(bool(trace.initial[control]))
    changes = [(t, position(level)) for t, level in trace.changes.get(control, [])]
    waves = [AnalogWave(f"{name}_on", "switch", "", initial, _compress(initial, changes),
                        f"1 while switch {name} joins {on_net}, 0 while it joins {off_net}")]
    known = {net: wave for net, wave in volts.items()}

    def voltage(net: str | None, time_ns: float) -> float | None:
        if net in RAIL_VOLTS:
            return RAIL_VOLTS[net]
        if net == "VDD":
            return float(plan.supply)
        if net in known:
            return known[net].value_at(time_ns)
        return None

    if voltage(on_net, 0.0) is None or voltage(off_net, 0.0) is None:
        return waves
    times = sorted({0.0, *(t for t, _ in changes), *(t for net in (on_net, off_net) if net in known
                                                      for t, _ in known[net].changes)})
    pos = waves[0]
    values = [(t, voltage(on_net if pos.value_at(t) else off_net, t)) for t in times]
    start = values[0][1]
    waves.append(AnalogWave(str(sw.common_net or name), "common", "V", start,
                            _compress(start, values[1:]),
                            f"switch {name}'s common terminal: {on_net} or {off_net}"))
    return waves


def analog_waves(trace: Trace, plan: Plan) -> list[AnalogWave]:
    """Every staircase, then every switch's position (and common voltage where known)."""
    waves = [_staircase(trace, name, lad) for name, lad in sorted(plan.ladders.items())]
    volts = {wave.name: wave for wave in waves}
    for name, sw in sorted(plan.switches.items()):
        waves += _switch(trace, plan, name, sw, volts)
    return waves
