"""Completing a tight bin with spare switch sections: Shannon expansion through a 2:1 mux.

A spec switch takes one section of a 4053; its other sections are on the board
anyway.  One of them, its control on a counter bit b, its low throw on f0 and
its high throw on f1, delivers f = b ? f1 : f0 (4053 function table: control
low joins the common to the low throw; TI CD4053B, catalog ``behaviour``
source).  When the gate-only mapping finds nothing, or leaves a gap to its
lower bound, ``complete`` splits a signal on a bit (``factor.splits``, the XOR
case first: f1 = NOT f0 costs one inverter); here the cofactors are mapped with
the rest of the signals and joined by the section.  Every split design goes
through the same self-check as any other.

Interface: ``switch_split(split, functions, nvars, var_nets, library, args,
map_piece)`` (called by ``complete``).
"""

from __future__ import annotations

from typing import Callable, Mapping, Sequence

from ..errors import InternalError
from ..minimize import Function
from ..network import Gate, Network, SignalOut, fresh_name
from .core import verify_design
from .factor import Split
from .library import Cell, Library, chips_of
from .problem import Signal, needed_support


def switch_split(split: Split, functions, nvars: int, var_nets: Sequence[str], library: Library,
                 args: dict, map_piece: Callable) -> Network | None:
    """The design with ``split.name`` = mux(bit; f0, f1) on one spare section, or None
    (no spare section, or no design for the cofactors with the other signals).

    ``map_piece(functions, library, polarity)`` maps the pieces (or None)."""
    spare = library.spare_switches()
    if not spare:
        return None
    cell = spare[0]
    low = args["polarity"].get(split.name, "high") == "low"
    names = {f.name for f in functions}
    bit = var_nets[split.var]
    halves = []
    for level, on, dc in (("lo", split.on0, split.dc0), ("hi", split.on1, split.dc1)):
        name = fresh_name(f"{split.name}_{bit}{level}", names)
        names.add(name)
        delivered = (frozenset(range(1 << nvars)) - on - dc) if low else on
        halves.append(Function(name, delivered, dc))
    rest = [f for f in functions if f.name != split.name] + halves
    polarity = dict(args["polarity"])
    polarity.update({h.name: "high" for h in halves})
    sub = map_piece(rest, library.less_spare(cell), polarity)
    if sub is None:
        return None
    network = _joined(sub, split, halves, cell, var_nets, low, library, functions)
    verify_design(network, functions, var_nets, library, args["polarity"])
    return network


def _joined(sub: Network, split: Split, halves: Sequence[Function], cell: Cell,
            var_nets: Sequence[str], low: bool, library: Library, functions) -> Network:
    """The sub-design plus the mux section: its two throws on the cofactors' nets."""
    data = []
    signals = dict(sub.signals)
    for half in halves:
        out = signals.pop(half.name)
        if out.polarity != "high":
            raise InternalError(f"cofactor {half.name} came out active low")
        data.append(out.net)
    taken = {n for g in sub.gates for n in (*g.inputs, *g.outputs)} | set(var_nets)
    taken |= {s.net for s in signals.values()}
    out_net = fresh_name(f"{split.name}_n" if low else split.name, taken)
    ids = {g.id for g in sub.gates}
    gate_id = next(f"sw{k}" for k in range(1, len(ids) + 2) if f"sw{k}" not in ids)
    mux = Gate(gate_id, cell.part, "mux", (data[0], data[1], var_nets[split.var]), (out_net,))
    gates = list(sub.gates) + [mux]
    signals[split.name] = SignalOut(out_net, "low" if low else "high")
    bit = var_nets[split.var]
    note = (f"{split.name}: a spare {cell.part} section selects by {bit} (Shannon expansion"
            + (", the XOR case: one half is the other inverted" if split.xor else "") + ")")
    return Network(gates, signals, tuple(var_nets), chips_of(gates, library), False,
                   _chip_floor(signals, var_nets, functions, library),
                   "spare switch section split: best found", list(sub.notes) + [note])


def _chip_floor(signals: Mapping[str, SignalOut], var_nets: Sequence[str], functions,
                library: Library) -> int:
    """1 when the spare sections alone cannot be the whole design, else 0 (a sound floor):
    each distinct output needs its own unit, and a signal on k bits needs a tree of
    units of fan-in 3 (a 2:1 mux) or less, at least (k - 1) / 2 of them."""
    spare = sum(c.capacity for c in library.spare_switches())
    outputs = len({s.net for s in signals.values()} - {"VDD", "VSS", *var_nets})
    nvars = len(var_nets)
    universe = frozenset(range(1 << nvars))
    widest = max(len(needed_support(Signal(f.name, frozenset(f.on) - frozenset(f.dc),
                                           universe - frozenset(f.dc), "high"), nvars))
                 for f in functions)
    return 1 if outputs > spare or -(-(widest - 1) // 2) > spare else 0

