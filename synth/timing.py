"""Timing truth: the planned circuit simulated with its chips' own delays.

Interface:

- ``simulate(counter_plan, network, catalog, supply, *, corner='typ',
  clock_period_ns=None, cycles=1, inertial=True, gate_names=None) -> Trace``:
  event-driven simulation of the counters and gates over whole cycles.
- ``Trace`` (per-net changes, tick times, reset pulses, settling, warnings),
  ``ResetPulse``; ``Trace.level_at``, ``Trace.sample``, ``Trace.window``.
- ``counter_models(counter_plan, network, catalog, supply, corner)`` and
  ``gate_models(network, catalog, supply, corner, gate_names)``: the delay
  model the simulator and the Verilog export share (``CounterModel``,
  ``CounterOutput``, ``GateModel``); ``stand_in_delay`` and
  ``stand_in_warnings`` for a part the catalog has no delay figures for.
- ``gate_names_of(plan)`` (gate id -> ``U2_A``), ``reset_net_of(counter_plan, network)``.
- ``glitches(trace, expected_levels=None) -> list[Glitch]``: every tick entry
  where a signal takes a wrong level for a moment, with cause, path, width;
  ``settle_mismatches(trace, expected_levels)`` (ticks that settle wrong: a
  clock too fast); ``merge_glitches(plan, expected, trace, run)`` (the union
  the plan reports).
- ``ripple_hazards(counter_plan, functions_or_network, catalog=None)
  -> list[RippleHazard]``: the exact state-based analysis (transient states
  of a ripple count), used to cross-check the event simulation.
- ``coincident_edges(delivered, cycle)`` and ``edge_skews(trace, records)``.
- ``remedies(glitch, plan, *, catalog=None, stock=None, spec=None) -> list[str]``;
  ``spare_input(gate)``.
- ``rc_filter_ns(network, net)``: the shortest delay of an applied RC delay the
  net is taken through (a runt shorter than it never reaches the output).
- ``timing_report(design) -> TimingReport``: the plan command's timing step,
  pure (glitches, coincident edges, register and pulse-width checks, warnings,
  the trace, remedies; the plan it reads is left unchanged).
- ``default_period_ns(...)``, ``nice_period_ns(ns)``.

The delay model (documented here once, used everywhere):

- Tick k's counting edge is at ``k * period`` (k >= 1); at time 0 every
  counter holds its all-zero state (tick 0) and every net its settled level.
  CLK sits at the level the counting edge leaves it in for the first half of
  each tick and at the other level for the second half.
- Ripple counters: stage k changes ``clock_to_q + (k - k0) * stage`` after
  the edge that clocks the unit, k0 being the first pinned-out stage (the
  catalog's ``clock_to_q`` is measured to that stage).  Synchronous and
  decoded (Johnson) counters change every output ``clock_to_q`` after it.
  A unit clocked from another unit's stage sees that stage's own edge.
- An asynchronous reset going active clears the state at once and moves the
  outputs to state 0 after the ``reset`` delay; clock edges are ignored while
  it is held.  A synchronous reset makes the next counting edge load 0.
  Counter outputs are transport delays: every scheduled change happens.
- Gates change their outputs ``tpd`` after an input change.  Inertial model
  (as a Verilog primitive with one delay): when a gate's computed value
  changes, any pending output change is cancelled and the new value is
  scheduled if it differs from the present output, so a pulse shorter than
  the gate's delay is swallowed.  ``inertial=False`` gives transport delays,
  which show every pulse a real, faster part may pass: the glitch report
  uses both.
- An applied RC delay (an ``rc`` gate, ``synth.rcdelay``) is a buffer with
  separate rising and falling delays (``Network.delays``: typical, or the
  longest of the spread at ``max``), always inertial: an RC swallows a pulse
  shorter than its delay, whatever the model of the gates.
- A carry-enabled 74HC161/163 (a synchronous cascade) counts only while its
  enable is high at the edge, and its TC is count 15 AND that enable: it
  follows the enable between edges, after the clock-to-output delay.
- Times are kept in whole picoseconds; catalog delays are rounded to 1 ps.
"""

from __future__ import annotations

import bisect
import dataclasses
import heapq
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Protocol

from .analog import Spread, with_tolerance
from .counter import CounterPlan, carry_nets
from .errors import InternalError
from .findings import (MODEL_NAMES, MODEL_TEXT, MODELS, CoincidentEdge, GlitchRecord, PulseWidth,  # noqa: F401
                       RegisterCheck)
from .harmless import check_slow_outputs, mark_harmless
from .inventory import Bin, Catalog, Part
from .netlist import Plan, delivered_sets, simulate_ticks
from .network import RAILS, Gate, Network, counting_words, evaluate_gate, evaluate_words
from .spec import Spec
from .packing import unit_logic_pins

__all__ = [
    "simulate", "Trace", "ResetPulse", "counter_models", "gate_models", "gate_names_of",
    "reset_net_of", "CounterModel", "CounterOutput", "GateModel", "glitches", "Glitch",
    "settle_mismatches", "merge_glitches", "ripple_hazards", "RippleHazard", "coincident_edges",
    "edge_skews", "remedies", "spare_input", "spare_input_place", "MODEL_NAMES", "MODEL_TEXT", "MODELS",
    "timing_report", "TimingReport", "PlannedDesign", "Remedies", "default_period_ns", "nice_period_ns",
    "ps", "expected_from_delivered", "registered_signals", "register_start_levels",
    "flipflop_requirement_ns", "register_checks", "pulse_width_checks", "pulse_warning_lines", "mark_races",
    "rc_filter_ns",
]

CORNERS = ("typ", "max")
PS_PER_NS = 1000
REPEAT_CYCLES = True    # copy a cycle that repeats the first exactly (``_Engine.run``); tests turn it off


def ps(ns: float) -> int:
    """Nanoseconds -> whole picoseconds (the simulator's time unit).

    >>> ps(66.6667), ps(105)
    (66667, 105000)
    """
    return int(round(float(ns) * PS_PER_NS))


def _ns(t_ps: int) -> float:
    return t_ps / PS_PER_NS


# ---------------------------------------------------------------- the delay model

@dataclass(frozen=True)
class CounterOutput:
    """One counter pin that drives a net: a stage, a decoded state or a carry."""

    net: str
    kind: str                 # 'stage' (bit index-1), 'decoded' (state == index), 'carry', 'tc'
    index: int
    pin: int
    pin_name: str
    delay_ps: int             # after the edge that clocks the unit


@dataclass
class CounterModel:
    """One counter unit as the simulator and the Verilog export model it."""

    ref: str
    unit: str
    part: str
    mode: str
    modulus: int
    synchronous: bool
    clock_net: str
    edge: str                 # edge of clock_net that advances the unit
    reset_net: str | None     # None: held inactive
    reset_high: bool
    reset_sync: bool
    reset_ps: int
    outputs: list[CounterOutput]
    notes: list[str] = field(default_factory=list)
    enable_net: str | None = None   # a count enable on a carry net: counts only while it is high
    enable_clocks: bool = False     # 4520/4518: ENABLE falling while CLOCK is low also counts

    def tc_follows_enable(self, output: CounterOutput) -> bool:
        """A carry-enabled unit's TC is its CET and count 15 (the enable is on CET too):
        it follows the enable net between clock edges."""
        return output.kind == "tc" and self.enable_net is not None and not self.enable_clocks

    def level(self, output: CounterOutput, state: int) -> bool:
        """The output's level in a counter state."""
        if output.kind == "stage":
            return bool((state >> (output.index - 1)) & 1)
        if output.kind == "decoded":
            return state == output.index
        if output.kind == "carry":
            return state < (self.modulus + 1) // 2
        if output.kind == "tc":
            return state == self.modulus - 1
        raise ValueError(f"expected a counter output kind, got {output.kind!r}")

    def next_state(self, state: int, reset_active: bool) -> int:
        if self.reset_sync and reset_active:
            return 0
        return (state + 1) % self.modulus


@dataclass(frozen=True)
class GateModel:
    """A gate with its delay and the physical name it has on the board (``U2_A``)."""

    gate: Gate
    name: str
    delay_ps: int
    also_op: str | None = None     # second output of the same inputs (4068 AND, 4078 OR)
    borrowed: str | None = None    # the warning when the delay is a stand-in (``stand_in_delay``)
    edge: str | None = None        # a flip-flop's clocking edge ('rising'/'falling'); None for gates
    fall_ps: int | None = None     # a different delay for a falling output (an applied RC delay)

    def delay_to(self, level: bool) -> int:
        """The delay of an output change to ``level``."""
        return self.fall_ps if self.fall_ps is not None and not level else self.delay_ps

    @property
    def clocked(self) -> bool:
        return self.gate.op == "flipflop"

    def evaluate(self, values: Mapping[str, bool]) -> dict[str, bool]:
        out = evaluate_gate(self.gate, values)
        if self.also_op and len(self.gate.outputs) > 1 and self.gate.outputs[1]:
            twin = Gate(self.gate.id, self.gate.part, self.also_op, self.gate.inputs,  # type: ignore[arg-type]
                        (self.gate.outputs[1],))
            out.update(evaluate_gate(twin, values))
        return {net: level for net, level in out.items() if net}


def _delay(part: Part, key: str, supply: float, corner: str) -> float | None:
    """A catalog delay at the corner, the other corner when only that one is given."""
    return part.delay_at_corner(key, supply, corner) if part is not None else None


def _gate_delay(part: Part, gate: Gate, supply: float, corner: str) -> float | None:
    """A gate's catalog delay; a switch section used as a 2:1 mux takes the slower of its
    select-to-output and in-to-out figures for every input (one delay per gate model)."""
    delay = _delay(part, "tpd", supply, corner)
    if gate.op == "mux" and part is not None and part.units_of("spdt"):
        select = _delay(part, "select", supply, corner)
        if select is not None:
            delay = select if delay is None else max(delay, select)
    return delay


def _chip_ref(counter_plan: CounterPlan, chip: int | str) -> str:
    if isinstance(chip, int) and not isinstance(chip, bool):
        return str(counter_plan.chips[chip].ref)
    return str(chip)


def reset_net_of(counter_plan: CounterPlan, network: Network) -> str | None:
    """The board net that carries the counter reset (the decode's net, as packing wires it)."""
    reset = counter_plan.reset
    if reset is None:
        return None
    if reset.direct and reset.direct_pin:
        ref, pin = reset.direct_pin
        for var in counter_plan.vars:
            if _chip_ref(counter_plan, var.chip) == ref and int(var.pin) == int(pin):
                return str(var.net)
        return str(reset.net)
    decoded = network.signals.get(reset.name)
    return str(decoded.net) if decoded is not None else str(reset.net)


def counter_models(counter_plan: CounterPlan, network: Network, catalog: Catalog, supply: float,
                   corner: str = "typ") -> list[CounterModel]:
    """Every counter unit of the plan with its outputs and delays at the corner."""
    if corner not in CORNERS:
        raise ValueError(f"expected a corner in {CORNERS}, got {corner!r}")
    reset = counter_plan.reset
    board_reset = reset_net_of(counter_plan, network)
    decoded_enables = carry_nets(counter_plan, network)
    models = []
    for index, cc in enumerate(counter_plan.chips):
        part = catalog.parts[cc.part]
        unit = next(u for u in part.units if str(u.id) == str(cc.unit))
        stages = {pin: k for k, pin in unit.stages.items()}
        decoded = {pin: n for n, pin in unit.decoded.items()}
        k0 = min(unit.stages, default=1)
        tcq = _delay(part, "clock_to_q", supply, corner) or 0.0
        stage = _delay(part, "stage", supply, corner) or 0.0
        t_reset = _delay(part, "reset", supply, corner)
        notes = []
        async_reset = not (unit.reset is not None and unit.reset.synchronous) and \
            str(cc.reset_net or "VSS") not in RAILS
        if t_reset is None:
            t_reset = tcq
            if async_reset:
                notes.append(f"{cc.ref}: the catalog gives no reset delay for {part.type}; "
                             "clock-to-output used")
        pins: dict[int, str] = {}
        for var in counter_plan.vars:
            if _chip_ref(counter_plan, var.chip) == str(cc.ref) and \
                    str(var.unit) == str(cc.unit):
                if int(var.pin) in stages or int(var.pin) in decoded or \
                        int(var.pin) in (unit.carry, unit.carry_out):
                    pins[int(var.pin)] = str(var.net)
        if reset is not None and reset.direct and reset.direct_pin:
            ref, pin = reset.direct_pin
            if ref == cc.ref and (int(pin) in stages or int(pin) in decoded):
                pins.setdefault(int(pin), str(board_reset))
        if cc.carry_net and unit.carry_out is not None:
            pins[unit.carry_out] = str(cc.carry_net)
        carry_in = None
        if cc.enable_pin in unit.count_enable and str(cc.enable_net or "VDD") not in RAILS:
            carry_in = str(cc.enable_net)
        enable_clocks = False
        if str(cc.enable_net) in decoded_enables:
            carry_in, enable_clocks = decoded_enables[str(cc.enable_net)], True
        outputs = []
        synchronous = unit.synchronous
        for pin, net in sorted(pins.items()):
            if pin in stages:
                k = stages[pin]
                delay = tcq if synchronous else tcq + (k - k0) * stage
                outputs.append(CounterOutput(net, "stage", k, pin, part.pins.get(pin, ""), ps(delay)))
            elif pin in decoded:
                outputs.append(CounterOutput(net, "decoded", decoded[pin], pin, part.pins.get(pin, ""),
                                             ps(tcq)))
            elif pin == unit.carry:
                outputs.append(CounterOutput(net, "carry", 0, pin, part.pins.get(pin, ""), ps(tcq)))
            else:
                outputs.append(CounterOutput(net, "tc", 0, pin, part.pins.get(pin, ""), ps(tcq)))
        if carry_in is not None and any(o.kind == "tc" for o in outputs):
            notes.append(f"{cc.ref}: its TC follows its count enable (TC = CET and count "
                         f"{2 ** len(stages) - 1}); the catalog gives no CET-to-TC delay for {part.type}, "
                         "clock-to-output used")
        net = str(cc.reset_net) if cc.reset_net else None
        if net is not None and net not in RAILS and reset is not None and net == str(reset.net):
            net = board_reset
        reset_high = unit.reset is None or unit.reset.active == "high"
        if net in RAILS:
            if RAILS[net] == reset_high:
                raise InternalError(f"{cc.ref}: its reset is tied to {net}, its active level")
            net = None
        edge = str(cc.clock_edge or (unit.clock.edge if unit.clock else "rising"))
        models.append(CounterModel(
            ref=str(cc.ref), unit=str(cc.unit), part=part.type, mode=unit.mode,
            modulus=unit.modulus,
            synchronous=synchronous or unit.mode == "johnson",
            clock_net=str(cc.clock_net), edge=edge, reset_net=net, reset_high=reset_high,
            reset_sync=unit.reset is not None and unit.reset.synchronous, reset_ps=ps(t_reset),
            outputs=outputs, notes=notes, enable_net=carry_in, enable_clocks=enable_clocks))
    return models


def gate_names_of(plan: Plan) -> dict[str, str]:
    """Gate id -> its physical name, chip ref and unit (``U2_A``)."""
    names = {}
    for chip in plan.chips:
        for unit, purpose in (chip.units_used or {}).items():
            names.setdefault(str(purpose), f"{chip.ref}_{unit}")
    return names


def _also_op(part: Part, gate: Gate) -> str | None:
    if part is None or len(gate.outputs) < 2:
        return None
    for unit in part.units:
        if unit.also is not None and unit.op == gate.op and len(unit.inputs) == len(gate.inputs):
            return unit.also.op
    return None


def gate_models(network: Network, catalog: Catalog, supply: float, corner: str = "typ",
                gate_names: Mapping[str, str] | None = None) -> list[GateModel]:
    """Each gate with its catalog delay (``tpd``) at the supply and corner."""
    models = []
    for gate in network.gates:
        part = catalog.parts.get(gate.part)
        if gate.op == "flipflop":
            models.append(_flipflop_model(gate, part, supply, corner, gate_names))
            continue
        if gate.op == "rc":
            models.append(_rc_model(gate, network, corner, gate_names))
            continue
        delay, borrowed = _gate_delay(part, gate, supply, corner), None
        if delay is None:
            delay, borrowed = stand_in_delay(catalog, gate, supply, corner)
            borrowed = borrowed if corner == "typ" else None     # said once, at the typical corner
        if delay is None:
            raise InternalError(f"gate {gate.id}: the catalog gives no delay for part {gate.part}")
        name = (gate_names or {}).get(gate.id, gate.id)
        models.append(GateModel(gate, name, ps(delay), _also_op(part, gate), borrowed))
    return models


def _rc_model(gate: Gate, network: Network, corner: str,
              gate_names: Mapping[str, str] | None) -> GateModel:
    """An applied RC delay: a buffer whose rising and falling delays are the RC
    times to the Schmitt thresholds (typical, or the longest of the spread at
    ``max``); inertial like a gate, as an RC swallows a pulse shorter than its delay."""
    times = network.delays.get(gate.id)
    if times is None:
        raise InternalError(f"RC delay {gate.id}: the network gives no times for it")
    pick = 1 if corner == "typ" else 2
    name = (gate_names or {}).get(gate.id, gate.id)
    return GateModel(gate, name, ps(times.rise[pick]), fall_ps=ps(times.fall[pick]))


def _flipflop_model(gate: Gate, part: Part, supply: float, corner: str,
                    gate_names: Mapping[str, str] | None) -> GateModel:
    """A D flip-flop: clock-to-output delay, the unit's clocking edge; its set and
    reset must be held inactive (they are, as packing ties them)."""
    if part is None:
        raise InternalError(f"flip-flop {gate.id}: part {gate.part} is not in the catalog")
    delay = _delay(part, "clock_to_q", supply, corner)
    if delay is None:
        raise InternalError(f"flip-flop {gate.id}: the catalog gives no clock_to_q for {gate.part}")
    for net, control in zip(gate.inputs[2:], gate.enables_active):
        active = control.partition(":")[2] == "high"
        if net not in RAILS or RAILS[net] == active:
            raise InternalError(f"flip-flop {gate.id}: its {control.partition(':')[0]} is not held "
                                "inactive (only tied set/reset inputs are modelled)")
    unit = next(u for u in part.units if u.type == "flipflop")
    edge = unit.clock.edge
    name = (gate_names or {}).get(gate.id, gate.id)
    return GateModel(gate, name, ps(delay), edge=edge)


def flipflop_requirement_ns(part: Part, key: str, supply: float) -> float | None:
    """A flip-flop's setup, hold or minimum pulse width at the supply: the
    guaranteed figure (``max`` row) where the catalog gives one, else typical."""
    if part is None:
        return None
    return part.delay_ns(key, supply, "max") or part.delay_ns(key, supply, "typ")


def stand_in_delay(catalog: Catalog, gate: Gate, supply: float, corner: str) -> tuple[float | None, str | None]:
    """For a part the catalog has no delay figures for: the slowest delay of the
    family's parts with a unit of the same function (a 4030 XOR takes the
    4070's), and the warning that says so.  Slowest, so a timing margin found
    with it is not an optimistic guess."""
    part = catalog.parts.get(gate.part)
    family = part.family if part is not None else None
    best, source = None, None
    for other in catalog.parts.values():
        if other is part or other.family != family:
            continue
        if not any(u.type == "gate" and u.op == gate.op for u in other.units) and \
                not any(u.type in ("inverter", "buffer") and gate.op in ("not", "buf") for u in other.units):
            continue
        d = _delay(other, "tpd", supply, corner)
        if d is not None and (best is None or d > best):
            best, source = d, other.type
    if best is None:
        return None, None
    return best, (f"the catalog has no delay figures for the {gate.part}; the timing checks use the "
                  f"{source}'s ({best:.0f} ns {corner} at {supply:g} V, the slowest {gate.op} of its "
                  "family), an assumption: check the part's datasheet")


def stand_in_warnings(network: Network, catalog: Catalog, supply: float) -> list[str]:
    """One warning per part whose delays were borrowed by ``stand_in_delay``."""
    return _borrowed_notes(gate_models(network, catalog, supply, "typ"))


def _borrowed_notes(models: Sequence[GateModel]) -> list[str]:
    return list(dict.fromkeys(m.borrowed for m in models if m.borrowed))


# ---------------------------------------------------------------- the trace

@dataclass(frozen=True)
class ResetPulse:
    """One assertion of a counter's asynchronous reset."""

    ref: str
    start_ns: float
    width_ns: float
    at_tick: int


@dataclass(frozen=True)
class Trace:
    """Every net's level changes over the simulated cycles.

    ``changes[net]`` lists ``(time_ns, level)`` after the level in
    ``initial[net]``; ``tick_times_ns[k]`` is the start of tick k (its counting
    edge for k >= 1).  ``signals`` maps each spec signal to its net and
    delivered polarity; ``counter_nets`` are the decode variables, lowest
    weight first.
    """

    period_ns: float
    cycle: int
    cycles: int
    corner: str
    supply: float
    inertial: bool
    clock_net: str
    edge: str
    initial: dict[str, bool]
    changes: dict[str, list[tuple[float, bool]]]
    signals: dict[str, tuple[str, str]]
    counter_nets: list[str]
    counter_weights: dict[str, int | None]
    var_index: dict[str, int]
    internal_nets: list[str]
    drivers: dict[str, str]
    resets: list[ResetPulse]
    warnings: list[str]
    end_ns: float
    settle_ns: float
    causes: dict[tuple[str, int], tuple[str, int] | None] = field(default_factory=dict, repr=False)
    gate_outputs: dict[str, str] = field(default_factory=dict, repr=False)

    @property
    def ticks(self) -> int:
        """Tick windows in the trace: every tick of the cycles, then tick 0 once more."""
        return self.cycles * self.cycle + 1

    @property
    def tick_times_ns(self) -> list[float]:
        return [k * self.period_ns for k in range(self.ticks)]

    def nets(self) -> list[str]:
        return list(self.initial)

    def level_at(self, net: str, time_ns: float) -> bool:
        """The level after every change at or before ``time_ns``."""
        if net in RAILS:
            return RAILS[net]
        changes = self.changes.get(net, [])
        i = bisect.bisect_right(changes, (time_ns, True))
        return changes[i - 1][1] if i else self.initial[net]

    def before(self, net: str, time_ns: float) -> bool:
        """The level just before ``time_ns`` (changes at exactly that time excluded)."""
        if net in RAILS:
            return RAILS[net]
        changes = self.changes.get(net, [])
        i = bisect.bisect_left(changes, (time_ns, False))
        return changes[i - 1][1] if i else self.initial[net]

    def sample(self, net: str) -> list[bool]:
        """The net's level just before each counting edge: one value per tick window."""
        return [self.before(net, (k + 1) * self.period_ns) for k in range(self.ticks - 1)] + \
            [self.level_at(net, self.end_ns)]

    def window(self, net: str, k: int) -> list[tuple[float, bool]]:
        """The net's changes during tick window k (from its counting edge to the next)."""
        changes = self.changes.get(net, [])
        lo = bisect.bisect_left(changes, (k * self.period_ns, False))
        hi = bisect.bisect_left(changes, ((k + 1) * self.period_ns, False))
        return changes[lo:hi]

    def counter_state(self, time_ns: float) -> int:
        """The decode variables' levels as a minterm (bit ``index`` = variable)."""
        return sum(1 << self.var_index[n] for n in self.counter_nets if self.level_at(n, time_ns))

    def count_value(self, time_ns: float) -> int:
        """The count the counter outputs show (sum of stage weights)."""
        return sum(self.counter_weights.get(n) or 0 for n in self.counter_nets
                   if self.level_at(n, time_ns))


# ---------------------------------------------------------------- the simulator

def nice_period_ns(ns: float) -> float:
    """The next 1-2-5 round figure at or above ``ns``.

    >>> nice_period_ns(730), nice_period_ns(2000), nice_period_ns(2001)
    (1000.0, 2000.0, 5000.0)
    """
    if ns <= 0:
        return 1000.0
    decade = 10 ** math.floor(math.log10(ns))
    for step in (1, 2, 5, 10):
        if step * decade >= ns - 1e-9:
            return float(step * decade)
    return float(10 * decade)


def default_period_ns(counters: Sequence[CounterModel], gates: Sequence[GateModel]) -> float:
    """A clock period long enough for every net to settle four times over."""
    ripple = sum(max((o.delay_ps for o in c.outputs), default=0) for c in counters)
    resets = max((c.reset_ps for c in counters if c.reset_net), default=0)
    depth = _depth(gates)
    slowest = max((max(g.delay_ps, g.fall_ps or 0) for g in gates), default=0)
    settle = ripple + resets + 3 * depth * slowest
    return max(1000.0, nice_period_ns(4 * _ns(settle)))


def _depth(gates: Sequence[GateModel]) -> int:
    by_out = {n: g for g in gates for n in g.gate.outputs if n}
    memo: dict[str, int] = {}

    def level(net: str, seen: frozenset = frozenset()) -> int:
        if net in memo:
            return memo[net]
        g = by_out.get(net)
        if g is None or net in seen:
            return 0
        memo[net] = 1 + max((level(i, seen | {net}) for i in g.gate.inputs), default=0)
        return memo[net]

    return max((level(n) for n in by_out), default=0)


# An event is the tuple (time, seq, net, level, cause, kind): the heap orders by
# time, then by seq (unique, so nothing after it is compared); kind is 'clock',
# 'counter' or 'gate'.  Tuples, not objects: a long cycle queues a million events.
_Event = tuple


class _Engine:
    """The event queue, net levels and the recorded changes."""

    def __init__(self, counters: list[CounterModel], gates: list[GateModel], clock_net: str,
                 inertial: bool, initial: dict[str, bool]) -> None:
        self.counters = counters
        self.gates = gates
        self.inertial = inertial
        self.clock_net = clock_net
        self.levels = {**initial, **RAILS}
        self.compiled = [_compiled(g) for g in gates]
        self.plain = [_plain(g, inertial) for g in gates]
        self.outputs: list[bool | None] = [initial[p[2]] if p else None for p in self.plain]
        self.changes: dict[str, list[tuple[int, bool]]] = {n: [] for n in initial}
        self.causes: dict[tuple[str, int], tuple[str, int] | None] = {}
        self.queue: list[_Event] = []
        self.seq = 0
        self.steps = 0
        self.pending: dict[str, int] = {}
        self.cancelled: set[int] = set()
        self.computed: dict[tuple[int, str], bool] = {}
        self.fanout: dict[str, list[int]] = {}
        self.clocked: dict[str, list[int]] = {}
        for i, g in enumerate(gates):
            if g.clocked:
                self.clocked.setdefault(g.gate.inputs[1], []).append(i)
            else:
                for net in set(g.gate.inputs):
                    self.fanout.setdefault(net, []).append(i)
            for net in g.gate.outputs:
                if net:
                    self.computed[(i, net)] = initial[net]
        self.state = [0 for _ in counters]
        self.busy_until = [0 for _ in counters]
        self.reset_started: list[int | None] = [None for _ in counters]
        self.reset_pulses: list[tuple[int, int, int]] = []
        self.warnings: list[str] = []
        self.tc_levels: dict[tuple[int, str], bool] = {}      # a gated TC's last scheduled level
        self.gated_by: dict[str, list[int]] = {}
        for i, c in enumerate(counters):
            if c.enable_net is not None and any(c.tc_follows_enable(o) for o in c.outputs):
                self.gated_by.setdefault(c.enable_net, []).append(i)

    def schedule(self, time: int, net: str, level: bool, cause: tuple[str, int] | None,
                 kind: str) -> int:
        self.seq += 1
        heapq.heappush(self.queue, (time, self.seq, net, level, cause, kind))
        return self.seq

    def last_change(self, net: str) -> tuple[str, int] | None:
        n = len(self.changes.get(net, ()))
        return (net, n - 1) if n else None

    def run(self, end: int, period: int, cycle_ps: int = 0) -> None:
        """Every event up to ``end``.  With ``cycle_ps`` (one counter cycle), when the
        whole state at the second counting edge of a cycle equals the state one cycle
        earlier, the later cycles are the first one again, shifted: they are copied
        instead of simulated (same changes, causes and reset pulses as simulating)."""
        limit = 200_000 + 400 * len(self.gates) * (end // max(period, 1) + 1)
        self.steps = 0
        start = period
        if cycle_ps and (end + 1 - start) % cycle_ps == 0 and end + 1 - start >= 2 * cycle_ps:
            self._advance(start - 1, limit)
            first = self._snapshot(start)
            marks = (len(self.causes), {n: len(r) for n, r in self.changes.items()}, self.steps,
                     len(self.reset_pulses), len(self.warnings))
            self._advance(start + cycle_ps - 1, limit)
            if first is not None and self._snapshot(start + cycle_ps) == first \
                    and len(self.warnings) == marks[4] \
                    and self._repeat(start, cycle_ps, (end + 1 - start) // cycle_ps - 1, marks):
                if self.steps > limit:
                    raise InternalError("timing simulation did not settle (an oscillating loop?)",
                                        hint="a bug in binsynth or a feedback loop in the plan")
                return
        self._advance(end, limit)

    def _snapshot(self, at: int) -> tuple | None:
        """Everything that decides what happens from time ``at`` on, times taken relative
        to ``at``; None when an event other than the clock is still queued."""
        if self.pending or self.cancelled or any(e[5] != "clock" for e in self.queue):
            return None
        return (dict(self.levels), list(self.state), [max(b - at, 0) for b in self.busy_until],
                list(self.reset_started), list(self.outputs), dict(self.computed), dict(self.tc_levels))

    def _repeat(self, start: int, cycle_ps: int, copies: int, marks: tuple) -> bool:
        """Append ``copies`` shifted copies of the cycle simulated from ``start``; False
        (nothing appended) when a cause reaches back before it."""
        n_causes, first_index, steps, n_pulses, _ = marks
        entries = list(self.causes.items())[n_causes:]
        if any(c is not None and c[1] < first_index.get(c[0], 0) for _, c in entries):
            return False
        rows = {n: r[first_index.get(n, 0):] for n, r in self.changes.items()}
        pulses = self.reset_pulses[n_pulses:]
        seg_steps = self.steps - steps
        for m in range(1, copies + 1):
            shift = m * cycle_ps
            base = {n: len(r) - first_index.get(n, 0) for n, r in self.changes.items()}
            for (net, i), c in entries:
                self.causes[(net, i + base[net])] = None if c is None else (c[0], c[1] + base[c[0]])
            for net, seg in rows.items():
                if seg:
                    self.changes[net].extend((t + shift, v) for t, v in seg)
            self.reset_pulses += [(i, t + shift, w) for i, t, w in pulses]
            self.steps += seg_steps
        self.queue[:] = []
        return True

    def _advance(self, end: int, limit: int) -> None:
        """Process every queued event up to time ``end``."""
        steps = self.steps
        queue, levels, changes, causes = self.queue, self.levels, self.changes, self.causes
        cancelled, pending = self.cancelled, self.pending
        pop = heapq.heappop
        while queue and queue[0][0] <= end:
            t = queue[0][0]
            changed: dict[str, bool] = {}
            while queue and queue[0][0] == t:
                _, seq, net, level, cause, _kind = pop(queue)
                steps += 1
                if cancelled and seq in cancelled:
                    cancelled.discard(seq)
                    continue
                if pending and pending.get(net) == seq:
                    del pending[net]
                was = levels[net]
                if was != level:
                    levels[net] = level
                    rows = changes[net]
                    causes[(net, len(rows))] = cause
                    rows.append((t, level))
                    if net not in changed:
                        changed[net] = was
            if steps > limit:
                raise InternalError("timing simulation did not settle (an oscillating loop?)",
                                    hint="a bug in binsynth or a feedback loop in the plan")
            self.steps = steps
            self._react(t, changed)
        self.steps = steps

    def _react(self, t: int, changed: dict[str, bool]) -> None:
        levels = self.levels
        if self.gated_by:
            for net in [n for n in changed if n in self.gated_by]:
                for i in self.gated_by[net]:
                    self._gate_tc(i, self.counters[i], t, self.last_change(net))
        for i, c in enumerate(self.counters):
            if c.enable_clocks and c.enable_net in changed and changed[c.enable_net] \
                    and not levels[c.enable_net] and not levels[c.clock_net]:
                self._count(i, c, t, by_enable=True)     # ENABLE fell while CLOCK was low: it counts
            if c.reset_net is not None and c.reset_net in changed:
                self._reset_changed(i, c, t)
            if c.clock_net in changed:
                was, now = changed[c.clock_net], levels[c.clock_net]
                if was != now and now == (c.edge == "rising"):
                    self._count(i, c, t)
        if self.clocked:
            for net in [n for n in changed if n in self.clocked]:
                if changed[net] != levels[net]:
                    for gi in self.clocked[net]:
                        if levels[net] == (self.gates[gi].edge == "rising"):
                            self._clock_flipflop(gi, t, changed)
        fanout = self.fanout
        if len(changed) == 1:
            touched = fanout.get(next(iter(changed)), ())     # already ascending, no repeats
        else:
            touched = sorted({g for net in changed for g in fanout.get(net, ())})
        plain, outputs, changes, pending = self.plain, self.outputs, self.changes, self.pending
        push, queue = heapq.heappush, self.queue
        for gi in touched:
            fast = plain[gi]
            if fast is None:
                self._evaluate(gi, t, changed)
                continue
            op, ins, net, flip, inert, rise, fall = fast
            if op == _AND:
                value = True
                for n in ins:
                    if not levels[n]:
                        value = False
                        break
            elif op == _OR:
                value = False
                for n in ins:
                    if levels[n]:
                        value = True
                        break
            else:
                value = levels[ins[0]]
            value = value != flip
            if outputs[gi] == value:
                continue
            # the computed output changed: schedule it by ``_evaluate``'s rule, inline
            cause = None
            for n in ins:
                if n in changed:
                    rows = changes.get(n)
                    if rows:
                        cause = (n, len(rows) - 1)
                    break
            outputs[gi] = value
            if inert:
                was = pending.pop(net, None)
                if was is not None:
                    self.cancelled.add(was)
                if value == levels[net]:
                    continue
            self.seq += 1
            push(queue, (t + (rise if value else fall), self.seq, net, value, cause, "gate"))
            if inert:
                pending[net] = self.seq

    def _clock_flipflop(self, gi: int, t: int, changed: dict[str, bool]) -> None:
        """A flip-flop's clocking edge: D as it was just before the edge goes to Q
        (and its complement to Q-bar) after the clock-to-output delay."""
        g = self.gates[gi]
        d = g.gate.inputs[0]
        value = RAILS[d] if d in RAILS else changed.get(d, self.levels[d])
        cause = self.last_change(g.gate.inputs[1])
        for net, level in zip(g.gate.outputs, (value, not value)):
            if net and self.computed[(gi, net)] != level:
                self.computed[(gi, net)] = level
                self.schedule(t + g.delay_ps, net, level, cause, "gate")

    def _reset_active(self, c: CounterModel) -> bool:
        return c.reset_net is not None and self.levels[c.reset_net] == c.reset_high

    def _count(self, i: int, c: CounterModel, t: int, by_enable: bool = False) -> None:
        if self._reset_active(c) and not c.reset_sync:
            self.warnings.append(f"{c.ref}: a counting edge at {_ns(t):.3f} ns came while the "
                                 "reset was still held; the count was lost")
            return
        old = self.state[i]
        if c.enable_net is not None and not by_enable and not self.levels[c.enable_net] and \
                not (c.reset_sync and self._reset_active(c)):
            return          # a carry-enabled unit holds its count while the unit below is not at 15
        new = c.next_state(old, self._reset_active(c))
        cause = self.last_change(c.enable_net if by_enable else c.clock_net)   # type: ignore[arg-type]
        self.state[i] = new
        for out in c.outputs:
            if c.tc_follows_enable(out):
                continue
            before, after = c.level(out, old), c.level(out, new)
            if before != after:
                self.schedule(t + out.delay_ps, out.net, after, cause, "counter")
                self.busy_until[i] = max(self.busy_until[i], t + out.delay_ps)
        self._gate_tc(i, c, t, cause)

    def _gate_tc(self, i: int, c: CounterModel, t: int, cause: tuple[str, int] | None) -> None:
        """A carry-enabled unit's TC: count 15 and its enable high, after the output delay."""
        for out in c.outputs:
            if not c.tc_follows_enable(out):
                continue
            level = c.level(out, self.state[i]) and bool(self.levels[c.enable_net])   # type: ignore[index]
            if self.tc_levels.get((i, out.net), False) != level:
                self.tc_levels[(i, out.net)] = level
                self.schedule(t + out.delay_ps, out.net, level, cause, "counter")

    def _reset_changed(self, i: int, c: CounterModel, t: int) -> None:
        if c.reset_sync:
            return
        if self._reset_active(c):
            if self.reset_started[i] is None:
                self.reset_started[i] = t
            if t < self.busy_until[i]:
                self.warnings.append(f"{c.ref}: the reset went active at {_ns(t):.3f} ns while its "
                                     "stages were still changing; a real chip holds them at 0, "
                                     "the model lets the pending changes finish (check the reset decode)")
            self.state[i] = 0
            cause = self.last_change(c.reset_net)  # type: ignore[arg-type]
            for out in c.outputs:
                self.schedule(t + c.reset_ps, out.net, c.level(out, 0), cause, "counter")
                if c.tc_follows_enable(out):
                    self.tc_levels[(i, out.net)] = False
        elif self.reset_started[i] is not None:
            self.reset_pulses.append((i, self.reset_started[i], t - self.reset_started[i]))
            self.reset_started[i] = None

    def _evaluate(self, gi: int, t: int, changed: dict[str, bool]) -> None:
        g = self.gates[gi]
        out = self.compiled[gi](self.levels)
        cause: tuple[str, int] | None = None
        for net, value in out:
            if self.computed[(gi, net)] == value:
                continue
            if cause is None:        # only a changing output needs to know which input moved it
                trigger = next((n for n in g.gate.inputs if n in changed), None)
                cause = self.last_change(trigger) if trigger else None
            self.computed[(gi, net)] = value
            if self.inertial or g.gate.op == "rc":     # an RC swallows a pulse shorter than its delay
                pending = self.pending.pop(net, None)
                if pending is not None:
                    self.cancelled.add(pending)
                if value != self.levels[net]:
                    self.pending[net] = self.schedule(t + g.delay_to(value), net, value, cause, "gate")
            else:
                self.schedule(t + g.delay_to(value), net, value, cause, "gate")


def _compiled(model: GateModel):
    """A gate's evaluation as a closure over its input nets: the simulator's inner
    loop runs it a million times on a long cycle; other ops take ``evaluate``
    (a flip-flop is not evaluated: its clock edge moves it)."""
    gate = model.gate
    if model.clocked:
        return lambda v: ()
    ins, out = tuple(gate.inputs), gate.outputs[0] if gate.outputs else ""
    simple = not model.also_op and out and len([n for n in gate.outputs if n]) == 1
    if simple and gate.op in ("and", "nand"):
        flip = gate.op == "nand"
        return lambda v: ((out, all(v[n] for n in ins) ^ flip),)
    if simple and gate.op in ("or", "nor"):
        flip = gate.op == "nor"
        return lambda v: ((out, any(v[n] for n in ins) ^ flip),)
    if simple and gate.op in ("not", "buf", "rc"):
        only, flip = ins[0], gate.op == "not"
        return lambda v: ((out, v[only] ^ flip),)
    return lambda v: tuple(model.evaluate(v).items())


_AND, _OR, _WIRE = 0, 1, 2


def _plain(model: GateModel, inertial: bool) -> tuple | None:
    """A one-output AND/NAND/OR/NOR/NOT/buffer/RC as (op, inputs, output, invert, inertial,
    rise delay, fall delay): the simulator evaluates these inline, the rest by ``_evaluate``."""
    gate = model.gate
    outs = [n for n in gate.outputs if n]
    if model.clocked or model.also_op or len(outs) != 1 or gate.outputs[0] != outs[0]:
        return None
    ops = {"and": (_AND, False), "nand": (_AND, True), "or": (_OR, False), "nor": (_OR, True),
           "not": (_WIRE, True), "buf": (_WIRE, False), "rc": (_WIRE, False)}
    if gate.op not in ops or not gate.inputs:
        return None
    op, flip = ops[gate.op]
    return (op, tuple(gate.inputs), outs[0], flip, inertial or gate.op == "rc",
            model.delay_to(True), model.delay_to(False))


def _settled_levels(counters: list[CounterModel], gates: list[GateModel], clock_net: str,
                    clock_level: bool, extra_inputs: Sequence[str],
                    registers: Mapping[str, bool] | None = None) -> dict[str, bool]:
    """Every net's zero-delay level with the counters at zero (the state at time 0);
    ``registers`` gives each flip-flop output its tick-0 level."""
    levels: dict[str, bool] = {clock_net: clock_level, **(registers or {})}
    for c in counters:
        for out in c.outputs:
            levels[out.net] = c.level(out, 0)
    for net in extra_inputs:
        levels.setdefault(net, False)
    pending = [g for g in gates if not g.clocked]
    while pending:
        ready = [g for g in pending if all(n in levels or n in RAILS for n in g.gate.inputs)]
        if not ready:
            missing = sorted({n for g in pending for n in g.gate.inputs
                              if n not in levels and n not in RAILS})
            if not missing:
                raise InternalError("timing: a gate loop without a counter in it")
            # A loop through a counter reset (decode -> reset -> counter) starts inactive.
            levels[missing[0]] = False
            continue
        for g in ready:
            values = {**levels, **RAILS}
            levels.update(g.evaluate(values))
            pending.remove(g)
    return levels


def simulate(counter_plan: CounterPlan, network: Network, catalog: Catalog, supply: float, *,
             corner: str = "typ", clock_period_ns: float | None = None, cycles: int = 1,
             inertial: bool = True, gate_names: Mapping[str, str] | None = None) -> Trace:
    """Simulate the counters and gates over ``cycles`` whole cycles (see the module text)."""
    counters = counter_models(counter_plan, network, catalog, supply, corner)
    gates = gate_models(network, catalog, supply, corner, gate_names)
    cycle = int(counter_plan.cycle)
    edge = str(counter_plan.edge or (counters[0].edge if counters else "rising"))
    driven = {o.net for c in counters for o in c.outputs} | {n for g in gates for n in g.gate.outputs if n}
    clock_nets = [c.clock_net for c in counters if c.clock_net not in driven]
    clock_net = clock_nets[0] if clock_nets else "CLK"
    period = ps(clock_period_ns) if clock_period_ns else ps(default_period_ns(counters, gates))
    period += period % 2
    half = period // 2
    after_edge = edge == "rising"
    undriven = [n for g in gates for n in g.gate.inputs
                if n not in driven and n not in RAILS and n != clock_net]
    registers = register_start_levels(counter_plan, network, not after_edge)
    initial = _settled_levels(counters, gates, clock_net, after_edge, undriven, registers)
    engine = _Engine(counters, gates, clock_net, inertial, initial)
    engine.warnings += _borrowed_notes(gates)
    ticks = cycles * cycle
    end = (ticks + 1) * period
    for k in range(ticks + 1):
        engine.schedule(k * period + half, clock_net, not after_edge, None, "clock")
        if k:
            engine.schedule(k * period, clock_net, after_edge, None, "clock")
    engine.run(end - 1, period, cycle * period if REPEAT_CYCLES else 0)
    return _trace_of(engine, counter_plan, network, counters, gates, period, cycle, cycles,
                     corner, supply, inertial, clock_net, edge, initial, end)


def register_start_levels(counter_plan: CounterPlan, network: Network, sampled_clock: bool) -> dict[str, bool]:
    """Each flip-flop output's level at tick 0: its D at the cycle's last tick (the
    zero-delay network evaluated over one cycle, the clock at ``sampled_clock``,
    its level just before a counting edge)."""
    if not any(g.op == "flipflop" for g in network.gates):
        return {}
    states = [int(s) for s in counter_plan.state_of_tick]
    width = len(states)
    full = (1 << width) - 1
    inputs = {str(v.net): sum(((s >> int(v.index)) & 1) << t for t, s in enumerate(states))
              for v in counter_plan.vars}
    driven = {n for g in network.gates for n in g.outputs if n}
    for g in network.gates:
        for n in g.inputs:
            if n not in driven and n not in RAILS and n not in inputs:
                inputs[n] = full if sampled_clock else 0
    words = evaluate_words(network, inputs, width)
    return {n: bool(words[n] & 1) for g in network.gates if g.op == "flipflop"
            for n in g.outputs if n}


def _trace_of(engine: _Engine, counter_plan: CounterPlan, network: Network, counters: list[CounterModel],
              gates: list[GateModel], period: int, cycle: int, cycles: int, corner: str,
              supply: float, inertial: bool, clock_net: str, edge: str,
              initial: dict[str, bool], end: int) -> Trace:
    reset = counter_plan.reset
    internal_names = {reset.name} if reset is not None else set()
    signals = {name: (s.net, s.polarity) for name, s in network.signals.items()
               if name not in internal_names}
    counter_nets = [str(v.net) for v in sorted(counter_plan.vars, key=lambda v: v.index)]
    weights = {str(v.net): v.weight for v in counter_plan.vars}
    var_index = {str(v.net): int(v.index) for v in counter_plan.vars}
    shown = {clock_net, *counter_nets, *(n for n, _ in signals.values())}
    internal = [n for n in initial if n not in shown and n not in RAILS]
    drivers = {o.net: c.ref for c in counters for o in c.outputs}
    drivers.update({n: g.name for g in gates for n in g.gate.outputs if n})
    changes = {net: [(t / PS_PER_NS, v) for t, v in rows] for net, rows in engine.changes.items()}
    resets = [ResetPulse(counters[i].ref, _ns(start), _ns(width), (start // period) % cycle)
              for i, start, width in engine.reset_pulses]
    warnings = list(dict.fromkeys(engine.warnings + [n for c in counters for n in c.notes]))
    settle = _settle(engine.changes, _clock_fed(gates, clock_net), period, end)
    if settle >= period // 2 and any(c.clock_net == clock_net for c in counters):
        warnings.append(f"nets are still changing {_ns(settle):.0f} ns after a counting edge, "
                        f"more than half the {_ns(period):.0f} ns clock period")
    gate_outputs = {n: g.name for g in gates for n in g.gate.outputs if n}
    return Trace(
        period_ns=_ns(period), cycle=cycle, cycles=cycles, corner=corner, supply=supply,
        inertial=inertial, clock_net=clock_net, edge=edge, initial=dict(initial),
        changes=changes, signals=signals, counter_nets=counter_nets, counter_weights=weights,
        var_index=var_index, internal_nets=internal, drivers=drivers, resets=resets,
        warnings=warnings, end_ns=_ns(end), settle_ns=_ns(settle), causes=dict(engine.causes),
        gate_outputs=gate_outputs)


def _clock_fed(gates: Sequence[GateModel], clock_net: str) -> set[str]:
    """The clock and every net a gate drives from it (a decode gated with the clock
    changes at mid-tick by design)."""
    fed = {clock_net}
    grew = True
    while grew:
        grew = False
        for g in gates:
            if fed & set(g.gate.inputs):
                for n in g.gate.outputs:
                    if n and n not in fed:
                        fed.add(n)
                        grew = True
    return fed


def _settle(changes: dict[str, list[tuple[int, bool]]], skip: set[str], period: int, end: int) -> int:
    """The longest time from a counting edge to the last change it causes (the clock and
    the nets it gates excluded)."""
    worst = 0
    for net, rows in changes.items():
        if net in skip:
            continue
        if rows:
            worst = max(worst, max(t % period for t, _ in rows))
    return worst


# ---------------------------------------------------------------- glitches

@dataclass
class Glitch:
    """A tick entry where a signal takes a wrong level for a moment.

    ``width_ns`` is the longest wrong-level pulse; ``cause`` names the
    transient counter state (or the unequal gate paths) behind it and
    ``path`` the chain from the counter output to the signal.
    """

    signal: str
    at_tick: int
    width_ns: float
    cause: str
    path: str
    kind: str = "static"          # 'static': should not move; 'dynamic': moves more than once
    wrong_level: bool = False     # the electrical level it wrongly takes
    start_ns: float = 0.0         # after the counting edge
    transient_state: int | None = None    # the decode variables' minterm
    transient_count: int | None = None
    from_count: int | None = None
    to_count: int | None = None
    source_net: str = ""
    gates: tuple[str, ...] = ()
    corner: str = "typ"
    seen_inertial: bool | None = None   # kept by the inertial (Verilog-like) model at typ delays
    width_max_ns: float | None = None
    models: set[str] = field(default_factory=set)   # which analyses found it (MODELS)

    @property
    def mechanism(self) -> str:
        """'transient_state': the decode is wrong on a state the count passes through;
        'gate_paths': every state is right, unequal gate delays make the pulse."""
        return "transient_state" if self.transient_state is not None else "gate_paths"

    def record(self) -> GlitchRecord:
        """The glitch as reported (widths rounded to 0.1 ns, the models in ``MODELS`` order)."""
        return GlitchRecord(self.signal, self.at_tick, round(self.width_ns, 1), self.cause, self.path,
                            self.kind, "high" if self.wrong_level else "low", round(self.start_ns, 1),
                            self.mechanism,
                            width_max_ns=None if self.width_max_ns is None else round(self.width_max_ns, 1),
                            passes_gate_delay=self.seen_inertial, transient_state=self.transient_state,
                            models=tuple(m for m in MODELS if m in self.models))


def expected_from_delivered(delivered: Mapping[str, frozenset[int]], polarity: Mapping[str, str],
                            cycle: int) -> dict[str, list[bool]]:
    """Asserted tick sets -> electrical levels per tick (the form ``glitches`` takes).

    >>> expected_from_delivered({"s": frozenset({1})}, {"s": "low"}, 3)
    {'s': [True, False, True]}
    """
    return {name: [(t in ticks) == (polarity[name] == "high") for t in range(cycle)]
            for name, ticks in delivered.items()}


def glitches(trace: Trace, expected_levels: Mapping[str, Sequence[bool]] | None = None,
             *, signals: Sequence[str] | None = None,
             strobed: Mapping[str, bool] | None = None) -> list[Glitch]:
    """Every (signal, tick entry) whose net takes a wrong level for a moment.

    ``expected_levels[name][t]`` is the electrical level of tick t over one
    cycle (the trace's own settled levels when not given).  A static entry
    (same level before and after) may not move at all; a dynamic one moves
    once.  Entries repeat every cycle: each (signal, tick) is reported once,
    with its widest pulse.  A tick that settles at the wrong level is not a
    glitch: ``settle_mismatches`` reports it.

    ``strobed[name]`` is the inactive electrical level of a signal gated with
    the clock's still half (``synth.glitchfix``): it is meant to sit at that
    level for the first half of every tick and at the tick's level for the
    second, so each half is checked on its own.
    """
    found: dict[tuple[str, int], Glitch] = {}
    names = list(signals) if signals is not None else list(trace.signals)
    for name in names:
        net = trace.signals[name][0]
        if net in RAILS:
            continue
        inactive = (strobed or {}).get(name)
        for k in _busy_windows(trace, net):
            glitch = _glitch_at(trace, name, net, k, expected_levels, inactive)
            if glitch is None:
                continue
            key = (name, glitch.at_tick)
            if key not in found or glitch.width_ns > found[key].width_ns:
                found[key] = glitch
    return sorted(found.values(), key=lambda g: (g.signal, g.at_tick))


def _busy_windows(trace: Trace, net: str) -> list[int]:
    """The tick windows k (1 <= k < ticks) in which the net changes at least twice, in
    order: a pulse needs two changes in one window, so the others cannot hold a glitch."""
    changes = trace.changes.get(net, [])
    period = trace.period_ns
    found: list[int] = []
    last = None
    for i in range(len(changes) - 1):
        k = _window_of(changes[i][0], period)
        if k == _window_of(changes[i + 1][0], period) and k != last and 1 <= k < trace.ticks:
            found.append(k)
            last = k
    return found


def _window_of(time_ns: float, period_ns: float) -> int:
    """The k with k * period <= time < (k + 1) * period, by the products ``_glitch_at`` uses."""
    k = int(time_ns // period_ns)
    while k * period_ns > time_ns:
        k -= 1
    while (k + 1) * period_ns <= time_ns:
        k += 1
    return k


def settle_mismatches(trace: Trace, expected_levels: Mapping[str, Sequence[bool]]) -> list[str]:
    """Ticks where a signal's net, sampled just before the next counting edge, is not
    at the expected level (a clock too fast for the chips, or a bug)."""
    problems = []
    for name, levels in expected_levels.items():
        if name not in trace.signals:
            continue
        got = trace.sample(trace.signals[name][0])
        for k, level in enumerate(got):
            if level != levels[k % trace.cycle]:
                problems.append(f"signal {name} is {'high' if level else 'low'} at the end of tick "
                                f"{k % trace.cycle} (cycle {k // trace.cycle + 1}), the design says "
                                f"{'high' if levels[k % trace.cycle] else 'low'}")
                break
    return problems


def _glitch_at(trace: Trace, name: str, net: str, k: int,
               expected: Mapping[str, Sequence[bool]] | None,
               inactive: bool | None = None) -> Glitch | None:
    """The widest wrong-level pulse of tick window k (each half on its own when strobed)."""
    tick = k % trace.cycle
    want = expected[name][tick] if expected is not None and name in expected else None
    edge = k * trace.period_ns
    end = (k + 1) * trace.period_ns
    if inactive is None:
        return _glitch_in(trace, name, net, k, edge, end, want)
    middle = edge + trace.period_ns / 2
    found = [g for g in (_glitch_in(trace, name, net, k, edge, middle, inactive),
                         _glitch_in(trace, name, net, k, middle, end, want)) if g is not None]
    return max(found, key=lambda g: g.width_ns) if found else None


def _glitch_in(trace: Trace, name: str, net: str, k: int, lo_ns: float, hi_ns: float,
               want: bool | None) -> Glitch | None:
    """Pulses between lo_ns and hi_ns of tick window k, on a net meant to end at ``want``."""
    changes = trace.changes.get(net, [])
    lo = bisect.bisect_left(changes, (lo_ns, False))
    hi = bisect.bisect_left(changes, (hi_ns, False))
    rows = changes[lo:hi]
    before = trace.before(net, lo_ns)
    settled = rows[-1][1] if rows else before
    if want is not None and want != settled:
        return None
    if before == settled:
        pulses = [(i, rows[i][0], rows[i + 1][0]) for i in range(0, len(rows) - 1, 2)]
    else:
        pulses = [(i, rows[i][0], rows[i + 1][0]) for i in range(1, len(rows) - 1, 2)]
    if not pulses:
        return None
    edge = k * trace.period_ns
    i, t0, t1 = max(pulses, key=lambda p: (p[2] - p[1], -p[1]))
    wrong = rows[i][1]
    why = _explain(trace, net, lo + i, k, name, t1)
    return Glitch(signal=name, at_tick=k % trace.cycle, width_ns=round(t1 - t0, 3), cause=why.cause,
                  path=why.path, kind="static" if before == settled else "dynamic",
                  wrong_level=wrong, start_ns=round(t0 - edge, 3), transient_state=why.state,
                  transient_count=why.count, from_count=why.frm, to_count=why.to,
                  source_net=why.source, gates=why.gates, corner=trace.corner)


@dataclass(frozen=True)
class _Why:
    cause: str
    path: str
    source: str
    gates: tuple[str, ...]
    state: int | None
    count: int | None
    frm: int
    to: int


def _origin(trace: Trace, net: str, index: int) -> tuple[str, int, list[str]]:
    """Follow the causes of a change back to a counter output (or the clock)."""
    gates: list[str] = []
    seen = 0
    while seen < 64:
        seen += 1
        if net in trace.gate_outputs:
            gates.append(trace.gate_outputs[net])
        cause = trace.causes.get((net, index))
        if cause is None or net in trace.counter_nets or net == trace.clock_net:
            break
        net, index = cause
    return net, index, gates[::-1]


def _explain(trace: Trace, net: str, index: int, k: int, name: str, t1: float) -> _Why:
    """The cause sentence and the path of the pulse from change ``index`` to time t1.

    The pulse is traced back to the counter output change that set it off;
    the counter states it shows are those from that change until the change
    that ends it, shifted by the same path delay.
    """
    source, sindex, gates = _origin(trace, net, index)
    path = " -> ".join([source, *gates, name])
    edge = k * trace.period_ns
    frm = trace.count_value(edge - 1e-3)
    to = trace.count_value((k + 1) * trace.period_ns - 1e-3)
    if source not in trace.counter_nets or sindex >= len(trace.changes.get(source, ())):
        what = "the clock" if source == trace.clock_net else source
        return _Why(f"count {frm}->{to}: {what} reaches {name} through gates of unequal delay",
                    path, source, tuple(gates), None, None, frm, to)
    t_src = trace.changes[source][sindex][0]
    t_end = t1 - (trace.changes[net][index][0] - t_src)
    moves = sorted((t, n, v) for n in trace.counter_nets for t, v in trace.window(n, k)
                   if t >= t_src - 1e-6)
    inside = [m for m in moves if m[0] < t_end - 1e-6]
    after = [m for m in moves if m[0] >= t_end - 1e-6]
    if not after:
        last = inside[-1] if inside else (t_src, source, trace.changes[source][sindex][1])
        return _Why(f"count {frm}->{to}: {last[1]} {'rises' if last[2] else 'falls'} last and reaches "
                    f"{name} through gates of unequal delay (a logic hazard)",
                    path, source, tuple(gates), None, None, frm, to)
    counts = list(dict.fromkeys(trace.count_value(t) for t, _, _ in inside))
    steps = [f"{n} {'rises' if v else 'falls'}" for _, n, v in inside]
    end = after[0]
    ending = ("until the reset clears it" if _reset_between(trace, t_src, end[0])
              else f"then {end[1]} {'rises' if end[2] else 'falls'}")
    cause = (f"count {frm}->{to} passes through {' and '.join(map(str, counts))} "
             f"({', '.join(steps)}, {ending})")
    state = trace.counter_state(t_src)
    return _Why(cause, path, source, tuple(gates), state, trace.count_value(t_src), frm, to)


def _reset_between(trace: Trace, t0: float, t1: float) -> bool:
    return any(t0 <= r.start_ns <= t1 for r in trace.resets)


# ---------------------------------------------------------------- state-based ripple analysis

@dataclass(frozen=True)
class RippleHazard:
    """A decode that is wrong on a transient state of one count.

    ``states`` is the sequence of minterms the counter outputs pass through on
    the entry to ``at_tick``, held states first and last; ``transient`` is the
    wrong one, ``order`` says which outputs move in which order.
    """

    signal: str
    at_tick: int
    transient: int
    wrong_level: bool
    states: tuple[int, ...]
    order: str


@dataclass(frozen=True)
class _VarRole:
    index: int
    net: str
    weight: int | None
    decoded: int | None       # the state a decoded (Johnson) output shows, else None
    rank: int                 # order of change after a counting edge (equal: together)


def var_roles(counter_plan: CounterPlan, catalog: Catalog | None) -> list[_VarRole]:
    """Each decode variable with the order in which it can change after an edge.

    A ripple unit's stages change one after another from the lowest; a
    synchronous or decoded unit's outputs together; a unit clocked from a
    stage of another changes after that stage.  Without a catalog: lowest
    weight first, or all together for a synchronous plan.
    """
    vars_ = sorted(counter_plan.vars, key=lambda v: v.index)
    if catalog is None:
        sync = bool(counter_plan.synchronous)
        order = sorted(vars_, key=lambda v: (v.weight if v.weight is not None else 0, v.index))
        return [_VarRole(v.index, str(v.net), v.weight, None, 0 if sync else order.index(v))
                for v in vars_]
    chips = list(counter_plan.chips)
    var_nets = {str(v.net) for v in vars_}
    net_rank: dict[str, int] = {}
    roles: dict[int, _VarRole] = {}
    pending = list(range(len(chips)))
    for _ in range(len(chips) + 1):
        for ci in list(pending):
            cc = chips[ci]
            clock = str(cc.clock_net)
            if clock in var_nets and clock not in net_rank:
                continue
            base = net_rank[clock] + 1 if clock in net_rank else 0
            part = catalog.parts[cc.part]
            unit = next(u for u in part.units if str(u.id) == str(cc.unit))
            together = unit.synchronous or unit.mode == "johnson"
            stages = {p: k for k, p in unit.stages.items()}
            decoded = {p: n for n, p in unit.decoded.items()}
            for v in vars_:
                if _chip_ref(counter_plan, v.chip) != cc.ref or str(v.unit) != str(cc.unit):
                    continue
                rank = base if together else base + stages.get(int(v.pin), 1) - 1
                roles[v.index] = _VarRole(v.index, str(v.net), v.weight, decoded.get(int(v.pin)), rank)
                net_rank[str(v.net)] = rank
            pending.remove(ci)
    return [roles.get(v.index, _VarRole(v.index, str(v.net), v.weight, None, 0)) for v in vars_]


def _transients(a: int, b: int, roles: list[_VarRole]) -> list[int]:
    """The minterms the outputs pass through from a to b, a and b included.

    >>> roles = [_VarRole(i, f"Q{i + 1}", 1 << i, None, i) for i in range(4)]
    >>> [bin(s) for s in _transients(0b0111, 0b1000, roles)]
    ['0b111', '0b110', '0b100', '0b0', '0b1000']
    """
    changed = [r for r in roles if (a ^ b) >> r.index & 1]
    states = [a]
    s = a
    for rank in sorted({r.rank for r in changed}):
        for r in changed:
            if r.rank == rank:
                s ^= 1 << r.index
        states.append(s)
    return _squash(states)


def _squash(states: list[int]) -> list[int]:
    out = [states[0]]
    for s in states[1:]:
        if s != out[-1]:
            out.append(s)
    return out


def _natural_next(a: int, roles: list[_VarRole]) -> int | None:
    """The minterm one count after minterm a, before any reset acts.

    Weights are binary or BCD (1 2 4 8 10 20 40 80 ...): the next count is
    spelt out greedily from the largest weight down.

    >>> bcd = [_VarRole(i, f"v{i}", w, None, i) for i, w in enumerate((1, 2, 4, 8, 10, 20))]
    >>> _natural_next(0b001001, bcd)    # 9 -> 10
    16
    """
    if all(r.weight is not None for r in roles):
        count = sum(r.weight for r in roles if a >> r.index & 1) + 1  # type: ignore[misc]
        out = 0
        for r in sorted(roles, key=lambda r: -r.weight):  # type: ignore[operator]
            if r.weight <= count:  # type: ignore[operator]
                count -= r.weight  # type: ignore[operator]
                out |= 1 << r.index
        return out if count == 0 else None
    high = [r.decoded for r in roles if a >> r.index & 1 and r.decoded is not None]
    if len(high) == 1:
        return sum(1 << r.index for r in roles if r.decoded == high[0] + 1)
    return None


def _function_values(counter_plan: CounterPlan, functions_or_network: Any) -> Callable[[str, int], bool]:
    if isinstance(functions_or_network, Network):
        net = functions_or_network
        if any(g.op == "flipflop" for g in net.gates):     # registered outputs follow no transient
            net = Network([g for g in net.gates if g.op != "flipflop"], net.signals, net.inputs)
        driven = {n for g in net.gates for n in g.outputs}
        free = {n for g in net.gates for n in g.inputs if n not in RAILS and n not in driven}
        clock_level = counter_plan.edge == "rising"
        nvars = max((v.index + 1 for v in counter_plan.vars), default=0)
        width = 1 << nvars
        full = (1 << width) - 1
        inputs = {n: full if clock_level else 0 for n in free}
        words = counting_words(nvars)
        inputs.update({str(v.net): words[v.index] for v in counter_plan.vars})
        words = evaluate_words(net, inputs, width)      # every minterm at once

        def value(name: str, minterm: int) -> bool:
            return bool(words.get(net.signals[name].net, 0) >> minterm & 1)
        return value

    def value_of(name: str, minterm: int) -> bool:
        f = functions_or_network[name]
        return bool(f(minterm)) if callable(f) else minterm in f
    return value_of


def ripple_hazards(counter_plan: CounterPlan, functions_or_network: Any, catalog: Catalog | None = None,
                   signals: Sequence[str] | None = None) -> list[RippleHazard]:
    """Enumerate each tick entry's transient states and the decodes wrong on them.

    ``functions_or_network``: a ``Network`` (the levels of its signal nets), or
    a mapping name -> set of minterms where the decode is high, or name ->
    callable(minterm).  A decode true on a transient state but false before
    and after spikes; one that changes and changes back is a dynamic hazard.
    With an asynchronous reset the count passes through the reset state too.
    """
    value = _function_values(counter_plan, functions_or_network)
    if signals is None:
        if isinstance(functions_or_network, Network):
            skip = {counter_plan.reset.name if counter_plan.reset is not None else None}
            signals = [n for n in functions_or_network.signals if n not in skip]
        else:
            signals = list(functions_or_network)
    roles = var_roles(counter_plan, catalog)
    states = [int(s) for s in counter_plan.state_of_tick]
    reset = counter_plan.reset
    async_reset = reset is not None and not reset.synchronous
    hazards = []
    for k in range(len(states)):
        a, b = states[k - 1], states[k]
        seq = entry_sequence(a, b, roles, async_reset)
        if len(seq) < 3:
            continue
        order = _order_text(roles, seq)
        for name in signals:
            levels = [value(name, s) for s in seq]
            for j in _wrong_positions(levels):
                hazards.append(RippleHazard(name, k, seq[j], levels[j], tuple(seq), order))
    return hazards


def entry_sequence(a: int, b: int, roles: list[_VarRole], async_reset: bool) -> list[int]:
    """Held state a, the transients, held state b; an asynchronous reset cuts the
    natural count short, so its state shows and then every output clears at once."""
    natural = _natural_next(a, roles) if async_reset else None
    if natural is not None and natural != b:
        return _squash(_transients(a, natural, roles) + [b])
    return _transients(a, b, roles)


def _wrong_positions(levels: list[bool]) -> list[int]:
    """Positions of the transient states whose level is wrong.

    >>> _wrong_positions([False, False, True, False])   # a spike
    [2]
    >>> _wrong_positions([False, True, False, True])    # changes, changes back, changes again
    [2]
    >>> _wrong_positions([False, False, True])          # one clean edge
    []
    """
    first, last = levels[0], levels[-1]
    inner = range(1, len(levels) - 1)
    if first == last:
        return [j for j in inner if levels[j] != last]
    moved = False
    wrong = []
    for j in inner:
        if levels[j] == last:
            moved = True
        elif moved:
            wrong.append(j)
    return wrong


def _order_text(roles: list[_VarRole], seq: list[int]) -> str:
    steps = []
    for s0, s1 in zip(seq, seq[1:]):
        moved = [f"{r.net} {'rises' if s1 >> r.index & 1 else 'falls'}" for r in roles
                 if (s0 ^ s1) >> r.index & 1]
        steps.append(" and ".join(moved))
    return ", then ".join(steps)


# ---------------------------------------------------------------- coincident edges

def _edges(ticks: frozenset[int], cycle: int) -> list[int]:
    return [b for b in range(cycle) if ((b - 1) % cycle in ticks) != (b in ticks)]


def coincident_edges(delivered: Mapping[str, frozenset[int]], cycle: int) -> list[CoincidentEdge]:
    """Every pair of signals with an edge on the same boundary (between tick b-1 and b).

    >>> [(e.signals, e.at_tick) for e in
    ...  coincident_edges({"a": frozenset({0, 1}), "b": frozenset({2}), "c": frozenset({1})}, 4)]
    [(('a', 'b'), 2), (('a', 'c'), 2), (('b', 'c'), 2)]
    """
    edges = {name: set(_edges(frozenset(t), cycle)) for name, t in delivered.items()}
    names = sorted(edges)
    out = []
    for i, a in enumerate(names):
        for b in names[i + 1:]:
            out += [CoincidentEdge((a, b), tick) for tick in sorted(edges[a] & edges[b])]
    return out


def mark_races(records: Sequence[CoincidentEdge], delivered: Mapping[str, frozenset[int]], plan: Plan,
               cycle: int) -> list[CoincidentEdge]:
    """Each coincident pair with ``relation`` and ``race``: a race only where one signal
    gates what the other drives on the board (it selects a switch that routes the
    other); complementary signals (one asserted exactly when the other is not) are
    two views of one edge; other pairs are independent outputs, listed, not raced."""
    routes: dict[str, set[str]] = {}
    nets = {name: info.net for name, info in plan.signals.items()}
    for sw in plan.switches.values():
        routed = {sw.on, sw.off, sw.on_net, sw.off_net}
        routes.setdefault(sw.select, set()).update(
            n for n, net in nets.items() if n in routed or net in routed)
    everything = frozenset(range(cycle))
    out = []
    for rec in records:
        a, b = rec.signals
        if frozenset(delivered.get(a, ())) == everything - frozenset(delivered.get(b, ())):
            relation = "complementary"
        elif b in routes.get(a, ()) or a in routes.get(b, ()):
            relation = "gates"
        else:
            relation = "independent"
        out.append(dataclasses.replace(rec, relation=relation, race=relation == "gates"))
    return out


def edge_skews(trace: Trace, records: Sequence[CoincidentEdge]) -> list[CoincidentEdge]:
    """Each coincident pair with, from the trace, which signal settles first and by how much."""
    out = []
    for rec in records:
        a, b = rec.signals
        k = rec.at_tick or trace.cycle
        entry = rec
        times = {}
        for name in (a, b):
            net = trace.signals.get(name, ("",))[0]
            rows = trace.window(net, k) if net and k < trace.ticks else []
            times[name] = rows[-1][0] - k * trace.period_ns if rows else None
        if times[a] is not None and times[b] is not None:
            entry = dataclasses.replace(rec, first=a if times[a] <= times[b] else b,
                                        skew_ns=round(abs(times[a] - times[b]), 1),
                                        settle_ns=((a, round(times[a], 1)), (b, round(times[b], 1))))
        out.append(entry)
    return out


# ---------------------------------------------------------------- remedies

_CONTROLLING = {"and": (False, False), "nand": (False, True), "or": (True, True), "nor": (True, False)}
"""op -> (controlling input level, the output level it forces)."""


def spare_input(gate: Gate) -> int | None:
    """An input that does not shape the gate's function: held at the
    non-controlling level, or a second copy of another input.

    >>> spare_input(Gate("g", "4073", "and", ("a", "b", "VDD"), ("y",)))
    2
    >>> spare_input(Gate("g", "4011", "nand", ("a", "b"), ("y",))) is None
    True
    """
    if gate.op not in _CONTROLLING:
        return None
    controlling, _ = _CONTROLLING[gate.op]
    for i, net in enumerate(gate.inputs):
        if net in RAILS and RAILS[net] != controlling:
            return i
        if net not in RAILS and gate.inputs.index(net) != i:
            return i
    return None


def spare_input_place(plan: Plan, gate: Gate, index: int) -> str:
    """Where a gate's spare input is on the board, ``U5 pin 11 (G, a spare input of U5 gate A)``:
    the package pin a person finds, not the input's place in the gate's list."""
    for chip in plan.chips:
        unit_id = next((u for u, purpose in (chip.units_used or {}).items() if str(purpose) == gate.id), None)
        if unit_id is None:
            continue
        part = plan.parts.get(chip.part)
        unit = next((u for u in part.units if u.id == unit_id), None) if part is not None else None
        if unit is None:
            return f"a spare input of {chip.ref} gate {unit_id}"
        pin = unit_logic_pins(unit)[0][index]
        return f"{chip.ref} pin {pin} ({part.pins.get(pin, '?')}, a spare input of {chip.ref} gate {unit_id})"
    return f"a spare input of gate {gate.id}"


def _driver(network: Network, net: str) -> Gate | None:
    return next((g for g in network.gates if net in g.outputs), None)


def _ticks_of_state(counter_plan: CounterPlan, state: int) -> list[int]:
    """The ticks at which the counter shows ``state``, in order."""
    return [t for t, s in enumerate(counter_plan.state_of_tick) if int(s) == state]


def synchronous_counter_parts(catalog: Catalog, stock: Bin) -> list[str]:
    """The bin's counter parts whose coded outputs change together (no ripple)."""
    found = []
    for part_type in sorted(stock.parts):
        part = catalog.parts.get(part_type)
        if part is not None and any(u.synchronous_binary_or_bcd for u in part.units):
            found.append(part_type)
    return found


def remedies(glitch: Glitch, plan: Plan, *, catalog: Catalog | None = None, stock: Bin | None = None,
             spec: Spec | None = None) -> list[str]:
    """What would stop this glitch, as sentences: only the remedies this plan and bin allow.

    Reads ``plan.counter`` (state_of_tick, unreachable, synchronous),
    ``plan.network`` and ``plan.signals`` (the last gate, its spare input),
    ``plan.chips`` (the gate's name), ``plan.switches``; ``spec`` for the
    signal's don't-care ticks; ``stock`` (the Bin) with ``catalog`` for a
    synchronous counter on hand.  The last sentence is always a note on
    who can see the glitch.
    """
    out = []
    counter = plan.counter
    state = glitch.transient_state
    if state is not None:
        out += _decode_choice_remedy(glitch, counter, spec)
        if not counter.synchronous and catalog is not None and stock is not None:
            parts = synchronous_counter_parts(catalog, stock)
            if parts:
                shown = (glitch.transient_count if glitch.transient_count is not None
                         else f"count {state}")
                out.append(f"a synchronous counter: the bin has {', '.join(parts)}, whose outputs change "
                           "together on the clock edge, so the count never shows "
                           f"{shown} on the way")
    out += _register_remedy(glitch, plan, catalog, stock)
    if spec is None or _pulse_per_tick_ok(spec, glitch.signal):
        out += _clock_gating_remedy(glitch, plan)
    switch = [n for n, s in plan.switches.items() if s.select == glitch.signal]
    if switch:
        out.append(f"note: {glitch.signal} drives switch {', '.join(switch)}: for {glitch.width_ns:.0f} ns "
                   "the switch conducts the wrong way; a slow analog stage averages that away, a "
                   "sample-and-hold or a charge-sensitive node does not")
    else:
        out.append(f"note: a level-sensitive consumer slower than {glitch.width_ns:.0f} ns (an LED, a relay "
                   "or motor driver, an RC-filtered input) will not see it; an edge-triggered input "
                   "(a counter clock, a flip-flop, an interrupt pin) will")
    return out


def _pulse_per_tick_ok(spec: Spec, name: str) -> bool:
    """As ``registers.pulse_per_tick_ok`` (steady: false, or unset with one-tick windows)."""
    sig = spec.signals.get(name)
    if sig is None:
        return True
    if sig.steady is not None:
        return not sig.steady
    return all(b - a == 1 for a, b in sig.windows)


def _register_remedy(glitch: Glitch, plan: Plan, catalog: Catalog | None, stock: Bin | None) -> list[str]:
    """Registering: the bin's D flip-flops, the signal decoded one tick early."""
    if glitch.signal in plan.registered or catalog is None or stock is None:
        return []
    parts = [t for t in sorted(stock.parts)
             if catalog.parts.get(t) is not None and catalog.parts[t].units_of("flipflop")]
    if not parts:
        return []
    return [f"register it: the bin has {', '.join(parts)}; decoded one tick early and clocked into a "
            f"D flip-flop on the counting edge, {glitch.signal} changes once per edge and holds its "
            "level through every tick (steady: true in the spec, or --fix glitches)"]


def _decode_choice_remedy(glitch: Glitch, counter: CounterPlan, spec: Spec | None) -> list[str]:
    """Remedy 1: the transient state is a don't-care for this signal."""
    state = glitch.transient_state
    ticks = _ticks_of_state(counter, int(state))  # type: ignore[arg-type]
    sig = spec.signals.get(glitch.signal) if spec is not None else None
    dont_care = set(sig.dont_care) if sig is not None else set()
    never_held = not ticks and int(state) in counter.unreachable  # type: ignore[arg-type]
    if not never_held and not (ticks and all(t in dont_care for t in ticks)):
        return []
    level = "low" if glitch.wrong_level else "high"
    where = (f"count {glitch.transient_count} is never held" if never_held
             else f"ticks {', '.join(map(str, ticks))} are don't-cares")
    return [f"another decode choice: {where} for {glitch.signal}, so the decode may read {level} "
            f"there, the level on both sides of tick {glitch.at_tick}'s entry; that removes this "
            "spike at no extra cost"]


def _clock_gating_remedy(glitch: Glitch, plan: Plan) -> list[str]:
    """Remedy 3: a spare input of the signal's last gate, driven from the clock phase
    in which the counter is still, holds the output inactive while the count settles."""
    info = plan.signals.get(glitch.signal)
    gate = _driver(plan.network, info.net) if info is not None else None
    spare = spare_input(gate) if gate is not None else None
    if info is None or gate is None or spare is None:
        return []
    controlling, forced = _CONTROLLING[gate.op]
    if forced == (info.polarity == "high"):
        return []        # gating would force the asserted level: no use
    after_edge = plan.clock_edge == "rising"
    phase = "CLK" if controlling == after_edge else "CLK through a spare inverter"
    return [f"gate the decode with the clock: wire {spare_input_place(plan, gate, spare)} to {phase}; "
            f"{glitch.signal} is then held inactive in the first half of every tick while the counter "
            "settles, and asserted only in the second half of each asserted tick (so a window of "
            "several ticks becomes one pulse per tick)"]


# ---------------------------------------------------------------- the plan command's timing step

def _period_of(spec: Spec | None) -> float | None:
    freq = spec.clock.frequency_hz if spec is not None else None
    return 1e9 / freq if freq else None


class PlannedDesign(Protocol):
    """What the timing step reads of a design (``model.Design`` has it; model imports this
    module, so the step names the fields instead of the class)."""

    @property
    def plan(self) -> Plan: ...

    @property
    def spec(self) -> Spec: ...

    @property
    def stock(self) -> Bin: ...

    @property
    def catalog(self) -> Catalog: ...


@dataclass(frozen=True)
class Remedies:
    """The remedies the timing step names per glitch (``remedies``): ``text`` one line per
    glitch and remedy, ``by_glitch`` (signal, tick) -> its sentences, ``glitches`` the
    glitches found."""

    text: tuple[str, ...] = ()
    by_glitch: dict[tuple[str, int], list[str]] = field(default_factory=dict)
    glitches: tuple[Glitch, ...] = ()


@dataclass(frozen=True)
class TimingReport:
    """What the timing analysis found; the plan it read is left as it was.

    ``glitches`` are ``Glitch.record()`` records, ``coincident_edges`` the
    pairs with ``relation`` and ``race``, ``warnings`` the plan's warnings
    with the timing ones added (in order), ``trace`` the typical-delay
    inertial simulation of two cycles (what the VCD and SVG show) and
    ``remedies`` the remedies named per glitch (``Remedies``).
    """

    glitches: tuple[GlitchRecord, ...]
    coincident_edges: tuple[CoincidentEdge, ...]
    register_checks: tuple[RegisterCheck, ...]
    pulse_widths: tuple[PulseWidth, ...]
    warnings: tuple[str, ...]
    trace: Trace
    remedies: Remedies


def timing_report(design: PlannedDesign) -> TimingReport:
    """Simulate the plan at typical and worst-case delays; the results, nothing changed.

    Glitches (what the transport and inertial models show at both corners,
    and the state-based ripple analysis), coincident edges (with which side
    settles first), warnings (a clock too fast, setup / hold of registered
    outputs, runt clock and reset pulses) and the remedies per glitch.
    """
    catalog = design.catalog
    plan = dataclasses.replace(design.plan, warnings=list(design.plan.warnings))   # read, never written
    spec = design.spec
    period = _period_of(spec)
    run = dict(catalog=catalog, supply=plan.supply, clock_period_ns=period, cycles=2,
               gate_names=gate_names_of(plan))
    levels = simulate_ticks(plan)
    typ = simulate(plan.counter, plan.network, **run, corner="typ")
    expected = {n: list(levels[n]) for n in typ.signals if n in levels}
    problems = settle_mismatches(typ, expected)
    worst = simulate(plan.counter, plan.network, **run, corner="max")
    problems_max = settle_mismatches(worst, expected)
    if (problems or problems_max) and period is None:
        raise InternalError(f"timing: {(problems or problems_max)[0]}",
                            hint="a bug in binsynth; no design was printed")
    if problems:
        plan.warnings.append(f"the clock is too fast for these chips at typical delays: {problems[0]}")
    elif problems_max:
        plan.warnings.append(f"at worst-case delays the clock is too fast: {problems_max[0]}")
    found = merge_glitches(plan, expected, typ, run)
    check_slow_outputs(spec, plan)
    plan = dataclasses.replace(plan, glitches=mark_harmless([g.record() for g in found], spec))
    harmless = {(g.signal, g.at_tick) for g in plan.glitches if g.harmless}
    delivered = {n: t for n, t in delivered_sets(plan, levels).items() if n in typ.signals}
    plan = dataclasses.replace(plan, coincident_edges=mark_races(edge_skews(typ, coincident_edges(delivered, typ.cycle)),
                                       delivered, plan, typ.cycle))
    plan = dataclasses.replace(plan, register_checks=register_checks(plan, [typ, worst], catalog))
    for rec in plan.register_checks:
        if not rec.setup_ok:
            plan.warnings.append(f"{rec.signal}: flip-flop {rec.flipflop} ({rec.part}) sees D settle "
                                 f"{-rec.setup_slack_ns:.0f} ns too late for its {rec.setup_needed_ns:g} ns "
                                 "setup time at worst-case delays; slow the clock")
        if not rec.hold_ok:
            plan.warnings.append(f"{rec.signal}: flip-flop {rec.flipflop} ({rec.part}) sees D change "
                                 f"{rec.hold_margin_ns:g} ns after its clock edge, inside its "
                                 f"{rec.hold_needed_ns:g} ns hold time")
    plan = dataclasses.replace(plan, pulse_widths=pulse_width_checks(plan, typ, catalog, worst))
    for rec in plan.pulse_widths:
        plan.warnings.extend(pulse_warning_lines(rec))
    plan.warnings.extend([w for w in dict.fromkeys(typ.warnings + worst.warnings) if w not in plan.warnings])
    stock = design.stock
    by_glitch = {(g.signal, g.at_tick): remedies(g, plan, catalog=catalog, stock=stock, spec=spec)
                 for g in found if (g.signal, g.at_tick) not in harmless}
    text: list[str] = []
    for g in found:
        for line in by_glitch.get((g.signal, g.at_tick), ()):
            entry = f"{g.signal} tick {g.at_tick}: {line}"
            if not line.startswith("note:") and entry not in text:
                text.append(entry)
    return TimingReport(tuple(plan.glitches), tuple(plan.coincident_edges), tuple(plan.register_checks),
                        tuple(plan.pulse_widths), tuple(plan.warnings), typ,
                        Remedies(tuple(text), by_glitch, tuple(found)))


def pulse_warning_lines(rec: PulseWidth) -> list[str]:
    """A runt clock or reset pulse, said once, with the remedy; a reset pulse the
    catalog has no figure for is said to be unchecked."""
    if rec.what == "reset" and rec.ok is None:
        return [f"the counter reset pulse on {rec.ref} lasts {rec.width_ns:.0f} ns at its narrowest "
                f"(the catalog gives no minimum reset pulse width for {rec.part} to check)"]
    if rec.ok is not False:
        return []
    if rec.what == "power-on reset":
        return [f"the power-on reset pulse on {rec.ref} ({rec.part}) may be as short as "
                f"{rec.width_ns:.0f} ns, shorter than the {rec.needed_ns:g} ns minimum reset pulse "
                "at this supply; remedy: a longer power_on_reset time"]
    if rec.what == "reset":
        return [f"the counter reset pulse on {rec.ref} ({rec.part}) lasts {rec.width_ns:.0f} ns, "
                f"shorter than the {rec.needed_ns:g} ns minimum at this supply: the count may not "
                "clear every time; remedy: a counter with a synchronous clear (74HC163) or a reset "
                "stretched by an RC delay between two Schmitt stages, or a higher supply"]
    return [f"the clock's {rec.width_ns:.0f} ns half period is shorter than the {rec.needed_ns:g} ns "
            f"minimum clock pulse of {rec.ref} ({rec.part}) at this supply; remedy: a slower "
            "clock or a higher supply"]


def merge_glitches(plan: Plan, expected: Mapping[str, Sequence[bool]], typ: Trace,
                   run: Mapping[str, Any]) -> list[Glitch]:
    """The union of the glitches the models show (``MODELS``), each record naming
    the models that found it: transport delays at both corners (what a faster
    part may pass; ``width_ns`` at typ, ``width_max_ns`` at max), the inertial
    model at typ (``passes_gate_delay``) and the state-based ripple analysis.
    Signals gated with the clock (``plan.strobed``) are checked half by half."""
    strobed = _strobed_levels(plan)
    inertial = {(g.signal, g.at_tick): g for g in glitches(typ, expected, strobed=strobed)}
    merged: dict[tuple[str, int], Glitch] = {}
    for corner in CORNERS:
        trace = simulate(plan.counter, plan.network, **run, corner=corner, inertial=False)
        for g in glitches(trace, expected, strobed=strobed):
            key = (g.signal, g.at_tick)
            if key in merged:
                merged[key].width_max_ns = g.width_ns
                merged[key].models.add(f"transport_{corner}")
                continue
            g.seen_inertial = key in inertial
            if corner == "max":
                g.width_max_ns = g.width_ns
            g.models.add(f"transport_{corner}")
            merged[key] = g
    for key, g in inertial.items():
        if key not in merged:
            g.seen_inertial = True
            merged[key] = g
        merged[key].models.add("inertial_typ")
    registered = set(registered_signals(plan.network))
    for h in ripple_hazards(plan.counter, plan.network, run["catalog"],
                            signals=[s for s in typ.signals if s not in registered]):
        key = (h.signal, h.at_tick)
        if key not in merged:
            lasts = _state_duration(typ, h.at_tick or typ.cycle, h.transient)
            if lasts < rc_filter_ns(plan.network, typ.signals[h.signal][0]):
                continue        # an applied RC delay on the output swallows a pulse this short
            merged[key] = Glitch(h.signal, h.at_tick, lasts,
                                 f"the counter outputs pass through count {h.transient} for {lasts:g} ns "
                                 f"({h.order}); at the catalog's delays the gate paths smooth it away, "
                                 "a faster part may not", "", wrong_level=h.wrong_level,
                                 transient_state=h.transient, seen_inertial=False)
        elif merged[key].transient_state is None:
            merged[key].transient_state = h.transient
        merged[key].models.add("states")
    return sorted(merged.values(), key=lambda g: (g.signal, g.at_tick))


def rc_filter_ns(network: Network, net: str) -> float:
    """The shortest delay of an applied RC delay the net is taken through (through
    single-input stages such as its Schmitt gates), 0 when none: a pulse shorter
    than that never brings the RC node to a threshold."""
    by_output = {n: g for g in network.gates for n in g.outputs if n}
    seen = set()
    while net in by_output and net not in seen:
        seen.add(net)
        gate = by_output[net]
        if gate.op == "rc" and gate.id in network.delays:
            times = network.delays[gate.id]
            return min(times.rise[0], times.fall[0])
        inputs = [n for n in gate.inputs if n not in RAILS]
        if gate.op == "flipflop" or len(set(inputs)) != 1:
            return 0.0
        net = inputs[0]
    return 0.0


def registered_signals(network: Network) -> dict[str, Gate]:
    """Signal -> the flip-flop whose output carries it (registered outputs)."""
    by_output = {n: g for g in network.gates if g.op == "flipflop" for n in g.outputs if n}
    return {name: by_output[sig.net] for name, sig in network.signals.items() if sig.net in by_output}


def register_checks(plan: Plan, traces: Sequence[Trace], catalog: Catalog) -> list[RegisterCheck]:
    """Setup and hold of every registered output's flip-flop, measured on the traces.

    Setup: the last change of D before each clocking edge, at the slowest
    trace, must come at least the catalog's setup time (guaranteed figure)
    before the edge.  Hold: D's first change after the edge must come at least
    the hold time after it; the datasheets give no minimum delays, so the hold
    margin is the simulated one (typical and worst-case traces) and the record
    says what it rests on.
    """
    out = []
    for signal, gate in sorted(registered_signals(plan.network).items()):
        part = catalog.parts.get(gate.part)
        d, clock = gate.inputs[0], gate.inputs[1]
        setup = flipflop_requirement_ns(part, "setup", plan.supply) or 0.0
        hold = flipflop_requirement_ns(part, "hold", plan.supply) or 0.0
        edge = next((u.clock.edge for u in part.units if u.type == "flipflop"), "rising")
        setup_slack, hold_margin = math.inf, math.inf
        for trace in traces:
            d_times = [t for t, _ in trace.changes.get(d, [])]
            for te, level in trace.changes.get(clock, []):
                if level != (edge == "rising") or te <= 0:
                    continue
                i = bisect.bisect_right(d_times, te)
                before = [t for t in d_times[:i] if t > te - trace.period_ns]
                if before:
                    setup_slack = min(setup_slack, te - before[-1] - setup)
                if i < len(d_times) and d_times[i] < te + trace.period_ns:
                    hold_margin = min(hold_margin, d_times[i] - te)
        names = gate_names_of(plan)
        slack = None if setup_slack == math.inf else round(setup_slack, 1)
        margin = None if hold_margin == math.inf else round(hold_margin, 1)
        out.append(RegisterCheck(
            signal, names.get(gate.id, gate.id), gate.part, clock, edge, d, round(setup, 1), round(hold, 1),
            slack, margin, setup_ok=slack is None or slack >= 0, hold_ok=margin is None or margin >= hold,
            hold_basis=("the simulated margin at typical and worst-case delays; the datasheets give "
                        "no minimum delays, so it rests on D being decoded from outputs that "
                        "change only after this flip-flop's own clocking edge")))
    return out


def pulse_width_checks(plan: Plan, trace: Trace, catalog: Catalog, worst: Trace | None = None) -> list[PulseWidth]:
    """Every clock input, every asynchronous reset pulse and the power-on reset
    against the catalog's minimum width at the plan's supply (``clock_width``,
    ``reset_width``).

    The clock's narrower half is half the period (the simulator's square wave);
    a counter reset decoded from a count lasts as long as that count shows, and
    is measured on the typical trace and on ``worst`` (worst-case delays); the
    narrower of the two is checked (``width_ns``; ``width_typ_ns`` and
    ``width_max_ns`` beside it).  The catalog has no minimum delays, so the
    corner that would make a self-ending pulse narrower still (faster parts)
    cannot be simulated: the record's ``basis`` says so.  The power-on reset is
    checked at its shortest over the threshold spread and the R and C
    tolerances.  A part with no width figure is listed as not checked, never as
    passed.
    """
    out = []
    half = trace.period_ns / 2
    clocked = [(c.ref, c.part) for c in counter_models(plan.counter, plan.network, catalog, plan.supply)]
    clocked += [(name, g.part) for name, g in
                ((gate_names_of(plan).get(g.id, g.id), g) for g in plan.network.gates if g.op == "flipflop")]
    for ref, part_type in dict.fromkeys(clocked):
        need = flipflop_requirement_ns(catalog.parts.get(part_type), "clock_width", plan.supply)
        out.append(PulseWidth("clock", ref, part_type, round(half, 1),
                              needed_ns=None if need is None else round(need, 1),
                              ok=None if need is None else half >= need))
    out += _reset_pulse_checks(plan, trace, worst, catalog)
    out += _power_on_checks(plan, catalog)
    return out


def _narrowest_resets(trace: Trace | None) -> dict[str, ResetPulse]:
    """Counter ref -> its narrowest reset pulse on the trace."""
    found: dict[str, ResetPulse] = {}
    for pulse in trace.resets if trace is not None else ():
        if pulse.ref not in found or pulse.width_ns < found[pulse.ref].width_ns:
            found[pulse.ref] = pulse
    return found


def _reset_pulse_checks(plan: Plan, typ: Trace, worst: Trace | None, catalog: Catalog) -> list[PulseWidth]:
    at_typ, at_max = _narrowest_resets(typ), _narrowest_resets(worst)
    out = []
    for ref, pulse in at_typ.items():
        other = at_max.get(ref)
        narrow = other if other is not None and other.width_ns < pulse.width_ns else pulse
        part_type = next((c.part for c in plan.counter.chips if c.ref == ref), "")
        need = flipflop_requirement_ns(catalog.parts.get(part_type), "reset_width", plan.supply)
        out.append(PulseWidth(
            "reset", ref, part_type, round(narrow.width_ns, 1),
            needed_ns=None if need is None else round(need, 1),
            ok=None if need is None else narrow.width_ns >= need, at_tick=narrow.at_tick,
            width_typ_ns=round(pulse.width_ns, 1),
            width_max_ns=None if other is None else round(other.width_ns, 1),
            corner="max" if narrow is other else "typ",
            basis="the narrower of the pulses simulated at typical and at worst-case (max) "
                  "delays; the catalog gives no minimum delays to simulate faster parts"))
    return out


def _power_on_checks(plan: Plan, catalog: Catalog) -> list[PulseWidth]:
    """The power-on reset pulse, at its shortest, against each held counter's minimum reset width."""
    por = plan.power_on_reset
    if por is None:
        return []
    shortest_ns = with_tolerance(Spread(*por.width_s)).min * 1e9
    out = []
    for ref, _pin in por.resets:
        part_type = next((c.part for c in plan.counter.chips if c.ref == ref), "")
        need = flipflop_requirement_ns(catalog.parts.get(part_type), "reset_width", plan.supply)
        out.append(PulseWidth(
            "power-on reset", ref, part_type, round(shortest_ns, 1),
            needed_ns=None if need is None else round(need, 1),
            ok=None if need is None else shortest_ns >= need, width_typ_ns=round(por.width_s[1] * 1e9, 1),
            basis="the shortest pulse over the Schmitt threshold spread and the R and C "
                  "tolerances (R_TOLERANCE, C_TOLERANCE: common practice)"))
    return out


def _strobed_levels(plan: Plan) -> dict[str, bool]:
    """Signal -> its inactive electrical level, for signals gated with the clock."""
    return {name: info.polarity != "high" for name, info in plan.signals.items()
            if name in plan.strobed}


def _state_duration(trace: Trace, k: int, minterm: int) -> float:
    """How long the decode variables show ``minterm`` during tick window k (0 if never)."""
    moves = sorted({t for n in trace.counter_nets for t, _ in trace.window(n, k)})
    for t0, t1 in zip(moves, moves[1:]):
        if trace.counter_state(t0) == minterm:
            return round(t1 - t0, 3)
    return 0.0
