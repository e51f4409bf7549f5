"""The gate network: what the mapper hands to packing.

Interface: ``Gate`` (one physical unit of a catalog part, with the net on each
of its input and output pins), ``SignalOut`` (which net carries a spec signal
and at which electrical level it is asserted), ``Network`` (gates, signals,
cost and proof), ``evaluate_gate`` and ``evaluate_network`` (zero-delay logic
values, the reference for every self-check).

Nets are strings.  ``VDD`` and ``VSS`` are the rails (a tied input); any other
name is a counter output, a gate output or a primary input.  A gate's
``inputs`` list every input pin of the unit in catalog order, so an input
joined to another carries the same net twice and an unused one is a rail:
packing never has to guess how a unit is used.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal, Mapping

Op = Literal["and", "nand", "or", "nor", "xor", "xnor", "not", "buf", "mux", "decoder", "flipflop", "rc"]
RAILS = {"VDD": True, "VSS": False}


@dataclass(frozen=True)
class Gate:
    """One unit of a chip as used in the design.

    ``op`` is the unit's own function as the catalog gives it.  For ``mux``
    units ``inputs`` are the data pins (code 0, 1, ...) followed by the
    selects (least significant first); for ``decoder`` units the selects
    (lsb first) followed by the enables, with ``outputs`` one net per code
    ('' = pin left open) and ``active`` saying their asserted level.  A
    ``flipflop`` unit (a D flip-flop, edge-triggered) has ``inputs`` D, the
    clock, then its set and reset pins where the unit has them (their active
    levels in ``enables_active``), and ``outputs`` Q and, where pinned, Q-bar.
    Its output at tick t is its D at tick t-1: only tick-indexed words
    (``evaluate_words`` over a whole cycle) can evaluate it.  An ``rc`` gate
    is no chip: it is an applied RC delay (R from its input net to its output
    net, C from there to VSS, ``synth.rcdelay``), a buffer at zero delay
    whose timing ``Network.delays`` gives.
    """

    id: str
    part: str
    op: Op
    inputs: tuple[str, ...]
    outputs: tuple[str, ...]
    schmitt: bool = False
    active: Literal["high", "low"] = "high"
    enables_active: tuple[str, ...] = ()

    @property
    def output(self) -> str:
        return self.outputs[0]


@dataclass(frozen=True)
class SignalOut:
    """The net that carries a signal and its level while asserted."""

    net: str
    polarity: Literal["high", "low"]


@dataclass(frozen=True)
class RcTiming:
    """An applied RC delay's times (ns) from its input edge to the Schmitt input's switching:
    ``rise`` charging to VT+, ``fall`` discharging to VT-, each (min, typ, max) over the
    threshold spread and the R and C tolerances."""

    rise: tuple[float, float, float]
    fall: tuple[float, float, float]


@dataclass(frozen=True)
class Network:
    """A mapped design: gates over counter nets, before packing into chips."""

    gates: list[Gate]
    signals: dict[str, SignalOut]
    inputs: tuple[str, ...]
    chips: dict[str, int] = field(default_factory=dict)
    proven_minimal: bool = False
    lower_bound: int | None = None
    method: str = ""
    notes: list[str] = field(default_factory=list)
    delays: dict[str, RcTiming] = field(default_factory=dict)   # rc gate id -> its timing

    def depth(self) -> int:
        """Logic depth: the longest chain of gates from an input to a signal."""
        by_output = {net: gate for gate in self.gates for net in gate.outputs if net}
        memo: dict[str, int] = {}

        def level(net: str) -> int:
            if net in memo:
                return memo[net]
            gate = by_output.get(net)
            memo[net] = 0 if gate is None else 1 + max((level(n) for n in gate.inputs), default=0)
            return memo[net]

        return max((level(s.net) for s in self.signals.values()), default=0)


def _value(net: str, values: Mapping[str, bool]) -> bool:
    return RAILS[net] if net in RAILS else values[net]


def evaluate_gate(gate: Gate, values: Mapping[str, bool]) -> dict[str, bool]:
    """Zero-delay output levels of one gate, given the levels of its input nets.

    >>> g = Gate("g1", "4011", "nand", ("a", "a"), ("y",))
    >>> evaluate_gate(g, {"a": True})
    {'y': False}
    """
    ins = [_value(n, values) for n in gate.inputs]
    op = gate.op
    if op in ("and", "nand"):
        out = all(ins) ^ (op == "nand")
    elif op in ("or", "nor"):
        out = any(ins) ^ (op == "nor")
    elif op in ("xor", "xnor"):
        out = (sum(ins) % 2 == 1) ^ (op == "xnor")
    elif op in ("not", "buf", "rc"):
        out = ins[0] ^ (op == "not")
    elif op == "mux":
        nsel = _select_count(len(ins))
        data, sel = ins[: len(ins) - nsel], ins[len(ins) - nsel:]
        code = sum(1 << i for i, s in enumerate(sel) if s)
        return {gate.outputs[0]: data[code], **({gate.outputs[1]: not data[code]}
                                                  if len(gate.outputs) > 1 and gate.outputs[1] else {})}
    elif op == "decoder":
        return _evaluate_decoder(gate, ins)
    elif op == "flipflop":
        raise ValueError(f"{gate.id}: a flip-flop has no zero-delay value of its inputs alone "
                         "(its output is the previous tick's D; evaluate it over a whole cycle)")
    else:
        raise ValueError(f"expected a known gate op, got {op!r}")
    return {gate.outputs[0]: out}


def _select_count(n_inputs: int) -> int:
    """A mux with 2^k data pins and k selects has n = 2^k + k inputs."""
    for k in range(1, 5):
        if (1 << k) + k == n_inputs:
            return k
    raise ValueError(f"expected 2^k data pins plus k selects, got {n_inputs} inputs")


def _evaluate_decoder(gate: Gate, ins: list[bool]) -> dict[str, bool]:
    nsel = len(ins) - len(gate.enables_active)
    sel, enables = ins[:nsel], ins[nsel:]
    enabled = all(level == (active == "high") for level, active in zip(enables, gate.enables_active))
    code = sum(1 << i for i, s in enumerate(sel) if s)
    asserted = gate.active == "high"
    return {net: (enabled and k == code) == asserted
            for k, net in enumerate(gate.outputs) if net}


def gate_order(gates) -> list[Gate]:
    """The gates so that each comes after the gates driving its inputs (one pass
    per evaluation instead of sweeping the list until nothing is pending)."""
    by_output = {net: g for g in gates for net in g.outputs if net}
    placed: set[int] = set()
    visiting: set[int] = set()
    order: list[Gate] = []
    for root in gates:
        stack = [(root, False)]
        while stack:
            gate, expanded = stack.pop()
            key = id(gate)
            if key in placed:
                continue
            if expanded:
                visiting.discard(key)
                placed.add(key)
                order.append(gate)
                continue
            if key in visiting:
                raise ValueError(f"expected a loop-free network, got a loop through {gate.id}")
            visiting.add(key)
            stack.append((gate, True))
            for net in gate.inputs:
                driver = by_output.get(net)
                if driver is not None and id(driver) not in placed:
                    stack.append((driver, False))
    return order


def evaluate_network(network: Network, inputs: Mapping[str, bool]) -> dict[str, bool]:
    """Every net's level for one input assignment (gates in any order, no loops).

    The rails are included, so a signal tied to VDD or VSS reads like any other.
    """
    values = dict(RAILS)
    values.update(inputs)
    for gate in _driven_order(network, values):
        values.update(evaluate_gate(gate, values))
    return values


def _driven_order(network: Network, values: Mapping):
    """The gates in ``gate_order``, each checked to have every input net known by
    the time it comes (``values`` grows as the caller evaluates)."""
    for gate in gate_order(network.gates):
        missing = [n for n in gate.inputs if n not in values]
        if missing:
            raise ValueError(f"expected a loop-free network, got undriven nets {sorted(set(missing))}")
        yield gate


def counting_words(nvars: int) -> list[int]:
    """Variable i's word over all 2**nvars assignments (bit m set where bit i of m
    is): the inputs that make ``evaluate_words`` evaluate every minterm at once."""
    width = 1 << nvars
    return [sum(1 << m for m in range(width) if m >> i & 1) for i in range(nvars)]


def evaluate_words(network: Network, inputs: Mapping[str, int], width: int) -> dict[str, int]:
    """Every net's levels over ``width`` input assignments at once: bit t of a net's
    word is its level in assignment t (the same logic as ``evaluate_gate``, one
    Python integer operation per gate instead of one call per gate and tick).

    A flip-flop reads the assignments as the ticks of one cycle in order: its Q
    in assignment t is its D in assignment t-1 (cyclically), clocked once per tick.
    """
    full = (1 << width) - 1
    values = {"VDD": full, "VSS": 0, **inputs}
    for gate in _driven_order(network, values):
        values.update(_gate_words(gate, [values[n] for n in gate.inputs], full))
    return values


def _gate_words(gate: Gate, ins: list[int], full: int) -> dict[str, int]:
    op = gate.op
    if op in ("and", "nand", "or", "nor", "xor", "xnor", "not", "buf", "rc"):
        if op in ("and", "nand"):
            out = full
            for w in ins:
                out &= w
        elif op in ("or", "nor"):
            out = 0
            for w in ins:
                out |= w
        elif op in ("xor", "xnor"):
            out = 0
            for w in ins:
                out ^= w
        else:
            out = ins[0]
        if op in ("nand", "nor", "xnor", "not"):
            out ^= full
        return {gate.outputs[0]: out}
    if op == "mux":
        nsel = _select_count(len(ins))
        data, sel = ins[: len(ins) - nsel], ins[len(ins) - nsel:]
        out = 0
        for code, word in enumerate(data):
            out |= word & _code_match(sel, code, full)
        result = {gate.outputs[0]: out}
        if len(gate.outputs) > 1 and gate.outputs[1]:
            result[gate.outputs[1]] = out ^ full
        return result
    if op == "decoder":
        nsel = len(ins) - len(gate.enables_active)
        sel, enables = ins[:nsel], ins[nsel:]
        enabled = full
        for word, active in zip(enables, gate.enables_active):
            enabled &= word if active == "high" else word ^ full
        flip = 0 if gate.active == "high" else full
        return {net: (enabled & _code_match(sel, k, full)) ^ flip
                for k, net in enumerate(gate.outputs) if net}
    if op == "flipflop":
        return _flipflop_words(gate, ins, full)
    raise ValueError(f"expected a known gate op, got {op!r}")


def _code_match(selects: list[int], code: int, full: int) -> int:
    """The assignments in which the select words spell ``code`` (lsb first)."""
    match = full
    for b, word in enumerate(selects):
        match &= word if code >> b & 1 else word ^ full
    return match


def _flipflop_words(gate: Gate, ins: list[int], full: int) -> dict[str, int]:
    """Q over a cycle of ticks: D one tick earlier (bit t of Q = bit t-1 of D,
    bit 0 from the cycle's last tick); an active set forces Q high, an active
    reset low, both together both outputs high (the 74HC74 and 4013 function
    tables).  ``enables_active`` names each control ``set:high``, ``reset:low``...

    >>> g = Gate("f", "74HC74", "flipflop", ("d", "CLK", "VDD", "VDD"), ("q", "qn"),
    ...          enables_active=("set:low", "reset:low"))
    >>> w = _flipflop_words(g, [0b0011, 0, 0b1111, 0b1111], 0b1111)
    >>> bin(w["q"]), bin(w["qn"])
    ('0b110', '0b1001')
    """
    width = full.bit_length()
    d = ins[0]
    q = ((d << 1) | (d >> (width - 1))) & full
    forced = {"set": 0, "reset": 0}
    for word, control in zip(ins[2:], gate.enables_active):
        kind, _, active = control.partition(":")
        forced[kind] |= word if active == "high" else word ^ full
    both = forced["set"] & forced["reset"]
    q = (q | forced["set"]) & ~(forced["reset"] & ~forced["set"]) & full
    qn = (q ^ full) | both
    out = {gate.outputs[0]: q} if gate.outputs and gate.outputs[0] else {}
    if len(gate.outputs) > 1 and gate.outputs[1]:
        out[gate.outputs[1]] = qn
    return out


def fresh_name(base: str, taken) -> str:
    """``base``, or ``base2``, ``base3``... when taken (a net or gate name not yet in use).

    >>> fresh_name("sel_n", {"sel_n"})
    'sel_n2'
    """
    if base not in taken:
        return base
    k = 2
    while f"{base}{k}" in taken:
        k += 1
    return f"{base}{k}"
