"""Completing a tight bin with spare switch sections: Shannon expansion through a 2:1 mux.

A spec switch takes one section of a 4053; its other sections are on the board
anyway.  One of them, its control on a counter bit b, its low throw on f0 and
its high throw on f1, delivers f = b ? f1 : f0 (4053 function table: control
low joins the common to the low throw; TI CD4053B, catalog ``behaviour``
source).  When the gate-only mapping finds nothing, or leaves a gap to its
lower bound, each signal is split on a bit (``factor.splits``, the XOR case
first: f1 = NOT f0 costs one inverter) and the cofactors are mapped with the
rest of the signals by the gate engines (recursively, while spare sections
last).  Every split design goes through the same self-check as any other.

Interface: ``map_design`` (the package's entry: ``core.map_design``, then
the splits), ``SPLIT_TRIES``.
"""

from __future__ import annotations

from typing import Iterable, Mapping, Sequence

from ..effort import effort_named
from ..errors import InternalError, NotFoundError, SafetyCapError, ShortError
from ..minimize import Function
from ..network import Gate, Network, SignalOut
from .core import map_design as map_gates, verify_design
from .factor import Split, splits
from .library import Cell, Library, chips_of
from .problem import Signal, needed_support


SPLIT_TRIES = 6          # splits tried per mapping, in all (each a gate mapping of its own)
SPLIT_SHARE = 4          # each split's gate mapping gets 1/SPLIT_SHARE of the mapping's work


def map_design(functions, nvars: int, var_nets: Sequence[str], library: Library, *,
               polarity: Mapping[str, str], cover=None, exact: str = "auto", effort=None,
               steps: int | None = None, glitch_free: Iterable[str] = ()) -> Network:
    """``core.map_design``, completed by spare switch sections where it fails or leaves a gap.

    Same arguments, results and errors as ``core.map_design``; a split design
    is taken only when the gate-only one is missing or takes more chips (then
    gates), and is verified on every cared-for counter state.
    """
    glitch_free = tuple(glitch_free)
    budget = effort_named(effort).steps if steps is None else steps
    args = dict(polarity=polarity, exact=exact, effort=effort, glitch_free=glitch_free)
    try:
        network = map_gates(functions, nvars, var_nets, library, cover=cover, steps=budget, **args)
    except SafetyCapError:
        raise
    except (NotFoundError, ShortError):
        if not library.spare_switches():
            raise
        split = _best_split(functions, nvars, var_nets, library, args, budget, [SPLIT_TRIES], None)
        if split is None:
            raise
        return split
    if network.proven_minimal or not library.spare_switches() or \
            (network.lower_bound or 0) >= sum(network.chips.values()):
        return network
    split = _best_split(functions, nvars, var_nets, library, args, budget, [SPLIT_TRIES], _cost(network))
    return network if split is None else split


def _cost(network: Network) -> tuple[int, int]:
    """Chips taken from the bin, then gates (the mapper's objective)."""
    return sum(network.chips.values()), len(network.gates)


def _best_split(functions, nvars: int, var_nets: Sequence[str], library: Library, args: dict,
                budget: int, tries: list[int], beat: tuple[int, int] | None) -> Network | None:
    """The first split (in ``factor.splits`` order) whose design is found and beats ``beat``."""
    cell = library.spare_switches()[0]
    universe = frozenset(range(1 << nvars))
    signals = {f.name: Signal(f.name, frozenset(f.on) - frozenset(f.dc), universe - frozenset(f.dc),
                              args["polarity"].get(f.name, "high")) for f in functions}
    wanted = [f for f in functions if f.name not in args["glitch_free"]]
    for split in splits(wanted, nvars, lambda f: needed_support(signals[f.name], nvars)):
        if tries[0] <= 0:
            return None
        tries[0] -= 1
        network = _split_design(split, functions, nvars, var_nets, library, cell, args, budget, tries)
        if network is not None and (beat is None or _cost(network) < beat):
            return network
    return None


def _split_design(split: Split, functions, nvars: int, var_nets: Sequence[str], library: Library,
                  cell: Cell, args: dict, budget: int, tries: list[int]) -> Network | None:
    """The design with ``split.name`` = mux(bit; f0, f1) on one spare section, or None."""
    low = args["polarity"].get(split.name, "high") == "low"
    names = {f.name for f in functions}
    bit = var_nets[split.var]
    halves = []
    for level, on, dc in (("lo", split.on0, split.dc0), ("hi", split.on1, split.dc1)):
        name = _fresh(f"{split.name}_{bit}{level}", names)
        names.add(name)
        delivered = (frozenset(range(1 << nvars)) - on - dc) if low else on
        halves.append(Function(name, delivered, dc))
    rest = [f for f in functions if f.name != split.name] + halves
    polarity = dict(args["polarity"])
    polarity.update({h.name: "high" for h in halves})
    fewer = library.less_spare(cell)
    sub_args = dict(args, polarity=polarity)
    try:
        if fewer.spare_switches() and tries[0] > 0:
            sub = _map_or_split(rest, nvars, var_nets, fewer, sub_args, budget // SPLIT_SHARE, tries)
        else:
            sub = map_gates(rest, nvars, var_nets, fewer, steps=budget // SPLIT_SHARE, **sub_args)
    except SafetyCapError:
        raise
    except (NotFoundError, ShortError):
        return None
    network = _joined(sub, split, halves, cell, var_nets, low, library)
    verify_design(network, functions, var_nets, library, args["polarity"])
    return network


def _map_or_split(functions, nvars: int, var_nets: Sequence[str], library: Library, args: dict,
                  budget: int, tries: list[int]) -> Network:
    """A gate mapping, or (when it fails) one more split while spare sections and tries last."""
    try:
        return map_gates(functions, nvars, var_nets, library, steps=budget, **args)
    except SafetyCapError:
        raise
    except (NotFoundError, ShortError):
        found = _best_split(functions, nvars, var_nets, library, args, budget, tries, None)
        if found is None:
            raise
        return found


def _joined(sub: Network, split: Split, halves: Sequence[Function], cell: Cell,
            var_nets: Sequence[str], low: bool, library: Library) -> Network:
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
    out_net = _fresh(f"{split.name}_n" if low else split.name, taken)
    ids = {g.id for g in sub.gates}
    gate_id = _fresh("sw1", ids) if "sw1" in ids else "sw1"
    mux = Gate(gate_id, cell.part, "mux", (data[0], data[1], var_nets[split.var]), (out_net,))
    gates = list(sub.gates) + [mux]
    signals[split.name] = SignalOut(out_net, "low" if low else "high")
    bit = var_nets[split.var]
    note = (f"{split.name}: a spare {cell.part} section selects by {bit} (Shannon expansion"
            + (", the XOR case: one half is the other inverted" if split.xor else "") + ")")
    return Network(gates, signals, tuple(var_nets), chips_of(gates, library), False,
                   _chip_floor(signals, var_nets, split, library),
                   "spare switch section split: best found", list(sub.notes) + [note])


def _chip_floor(signals: Mapping[str, SignalOut], var_nets: Sequence[str], split: Split,
                library: Library) -> int:
    """1 when the spare sections alone cannot be the whole design, else 0 (a sound floor):
    each distinct output needs its own unit, and a unit of fan-in 3 joins at most 2 more bits."""
    spare = sum(c.capacity for c in library.spare_switches())
    outputs = len({s.net for s in signals.values()} - {"VDD", "VSS", *var_nets})
    nvars = len(var_nets)
    universe = frozenset(range(1 << nvars))
    support = {split.var}
    for on, dc in ((split.on0, split.dc0), (split.on1, split.dc1)):
        support |= needed_support(Signal(split.name, on, universe - dc, "high"), nvars)
    support = len(support)
    return 1 if outputs > spare or -(-(support - 1) // 2) > spare else 0


def _fresh(base: str, taken: set[str]) -> str:
    """``base``, or ``base2``, ``base3``... when taken."""
    if base not in taken:
        return base
    k = 2
    while f"{base}{k}" in taken:
        k += 1
    return f"{base}{k}"
