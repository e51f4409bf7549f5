"""A signal split on a counter bit and joined again by gates, synthesised exactly over the cut.

The joining logic is a function of a few nets only: the bit and the cofactors'
nets (one cofactor in the XOR case, f = b XOR f0; two for the 2:1 mux
b ? f1 : f0).  It is mapped first by the gate engines over stand-in nets (exact
synthesis on a function this small, so the join is a proven-minimal circuit of
the bin's gates), then the cofactors are mapped with the other signals on the
chips the join leaves.  17 <= t % 64 < 49 becomes
b4 AND (b0 OR b1 OR b2 OR b3), then one XOR with b5 (four NAND gates where
the bin has no XOR gate).

Interface: ``gate_split(split, functions, nvars, var_nets, library, args,
map_piece)`` (called by ``complete``), ``joining_function(name, xor)``.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Callable, Sequence

from ..minimize import Function
from ..network import Network, SignalOut, fresh_name
from .core import verify_design
from .factor import Split
from .library import Library, chips_of


def gate_split(split: Split, functions, nvars: int, var_nets: Sequence[str], library: Library,
               args: dict, map_piece: Callable) -> Network | None:
    """The design with ``split.name`` joined from its cofactors by gates, or None.

    The joining logic (b XOR f0, or b ? f1 : f0) is mapped first, over stand-in
    nets; its whole chips are set aside while the cofactors are mapped with the
    other signals, so the two fit in the bin together.
    """
    names = {f.name for f in functions}
    bit = var_nets[split.var]
    halves = []
    parts = (("lo", split.on0, split.dc0),) if split.xor else \
        (("lo", split.on0, split.dc0), ("hi", split.on1, split.dc1))
    for level, on, dc in parts:
        name = fresh_name(f"{split.name}_{bit}{level}", names)
        names.add(name)
        halves.append(Function(name, on, dc))
    cut = [bit] + [h.name for h in halves]
    pol = args["polarity"].get(split.name, "high")
    joined = map_piece([joining_function(split.name, split.xor)], library, {split.name: pol},
                       len(cut), cut)
    if joined is None:
        return None
    rest = [f for f in functions if f.name != split.name] + halves
    polarity = dict(args["polarity"])
    polarity.update({h.name: "high" for h in halves})
    sub = map_piece(rest, library.less_chips(joined.chips), polarity)
    if sub is None:
        return None
    if any(sub.signals[h.name].net in ("VDD", "VSS") for h in halves):
        return None
    network = _merged(sub, joined, split, halves, var_nets, library)
    if any(n > library.available.get(p, 0) for p, n in network.chips.items()):
        return None
    verify_design(network, functions, var_nets, library, args["polarity"])
    return network


def joining_function(name: str, xor: bool) -> Function:
    """The join over the cut (bit 0 = the split bit, bit 1 = f0, bit 2 = f1):
    b XOR f0 in the XOR case, else the 2:1 mux b ? f1 : f0."""
    if xor:
        return Function(name, frozenset(c for c in range(4) if (c & 1) != (c >> 1 & 1)), frozenset())
    return Function(name, frozenset(c for c in range(8) if c >> (2 if c & 1 else 1) & 1), frozenset())


def _merged(sub: Network, joined: Network, split: Split, halves: Sequence[Function],
            var_nets: Sequence[str], library: Library) -> Network:
    """The pieces as one network: the joining gates' ids and inner nets made fresh."""
    taken = {n for g in sub.gates for n in (*g.inputs, *g.outputs)} | set(var_nets)
    taken |= {h.name for h in halves}
    ids = {g.id for g in sub.gates}
    rename: dict[str, str] = {}
    for gate in joined.gates:
        for net in gate.outputs:
            if net and net not in rename:
                wanted = net if net not in taken else f"{split.name}_j"
                rename[net] = fresh_name(wanted, taken)
                taken.add(rename[net])
    for half in halves:
        rename[half.name] = sub.signals[half.name].net
    gates = list(sub.gates)
    for gate in joined.gates:
        gate_id = next(f"g{k}" for k in range(len(ids) + 1, 2 * len(ids) + len(joined.gates) + 2)
                       if f"g{k}" not in ids)
        ids.add(gate_id)
        gates.append(replace(gate, id=gate_id, inputs=tuple(rename.get(n, n) for n in gate.inputs),
                             outputs=tuple(rename.get(n, n) for n in gate.outputs)))
    signals: dict[str, SignalOut] = {k: v for k, v in sub.signals.items()
                                     if k not in {h.name for h in halves}}
    out = joined.signals[split.name]
    signals[split.name] = SignalOut(rename.get(out.net, out.net), out.polarity)
    note = (f"{split.name}: split on {var_nets[split.var]} (Shannon expansion"
            + (", the XOR case" if split.xor else "") + "), joined by gates synthesised over "
            "the bit and the halves' nets")
    return Network(gates, signals, tuple(var_nets), chips_of(gates, library), False, 1,
                   "split on a counter bit, joined by gates: best found", list(sub.notes) + [note])

