"""Turning a choice of structures and trees into gates on named nets.
"""

from __future__ import annotations

from typing import Sequence

from ..errors import InternalError
from ..network import Gate, SignalOut
from .candidates import Candidates
from .library import AND_FORM, AndKind, Cell, InvKind, NEUTRAL_RAIL
from .problem import Problem, Signal
from .selection import Chosen
from .trees import TreeTable


class Emitter:
    """Gate records with every pin's net, named nets, tie-offs as the trade does them."""

    def __init__(self, cells: Sequence[Cell], var_nets: Sequence[str]) -> None:
        self.cells, self.var_nets = cells, tuple(var_nets)
        self.gates: list[Gate] = []
        self.count = 0
        self.names = set(var_nets) | {"VDD", "VSS"}

    def fresh(self, stem: str = "n") -> str:
        i = len(self.names)
        while f"{stem}{i}" in self.names:
            i += 1
        self.names.add(f"{stem}{i}")
        return f"{stem}{i}"

    def gate(self, cell_index: int, op: str, inputs: Sequence[str], outputs: Sequence[str] | None = None,
             **extra) -> str:
        cell = self.cells[cell_index]
        self.count += 1
        outs = tuple(outputs) if outputs is not None else (self.fresh(),)
        self.gates.append(Gate(f"g{self.count}", cell.part, op, tuple(inputs), outs,
                               schmitt=cell.schmitt, **extra))
        return next((o for o in outs if o), "")

    def logic(self, cell_index: int, nets: Sequence[str]) -> str:
        """An AND/NAND/OR/NOR/XOR/XNOR unit over these nets (unused pins tied or joined)."""
        cell = self.cells[cell_index]
        return self.gate(cell_index, cell.op, _pin_nets(cell, nets))

    def and_kind(self, kind: AndKind, nets: Sequence[str]) -> str:
        if kind.form == "gate":
            return self.logic(kind.cell, nets)
        x, y = nets
        data = ("VSS", x) if kind.form == "mux_and" else (x, "VDD")
        return self.mux(kind.cell, data, (y,))

    def mux(self, cell_index: int, data: Sequence[str], selects: Sequence[str],
            inverted: bool = False) -> str:
        cell = self.cells[cell_index]
        data = tuple(data) + ("VSS",) * (cell.width - len(data))
        selects = tuple(selects) + ("VSS",) * (cell.selects - len(selects))
        out = self.fresh()
        outputs = ("", out) if inverted else (out,)
        return self.gate(cell_index, "mux", data + selects, outputs)

    def inverter(self, kind: InvKind, net: str) -> str:
        cell = self.cells[kind.cell]
        if kind.form == "not":
            return self.gate(kind.cell, "not", (net,))
        if kind.form == "joined":
            return self.gate(kind.cell, cell.op, (net,) * cell.width)
        if kind.form in ("xor_high", "xnor_low"):
            tie = "VDD" if kind.form == "xor_high" else "VSS"
            return self.gate(kind.cell, cell.op, (net, tie) + ("VSS",) * (cell.width - 2))
        return self.mux(kind.cell, ("VDD", "VSS"), (net,))

    def decoder(self, cell_index: int, selects: Sequence[str], outputs: Sequence[str],
                enable_nets: Sequence[str | None] = ()) -> None:
        """A decoder unit; enable pins without a net are tied to their active rail."""
        cell = self.cells[cell_index]
        selects = tuple(selects) + ("VSS",) * (cell.width - len(selects))
        nets = list(enable_nets) + [None] * (len(cell.enables) - len(enable_nets))
        enables = tuple(net if net is not None else "VDD" if a == "high" else "VSS"
                        for net, a in zip(nets, cell.enables))
        self.count += 1
        self.gates.insert(0, Gate(f"g{self.count}", cell.part, "decoder", selects + enables,
                                  tuple(outputs), active=cell.active, enables_active=cell.enables))


def _pin_nets(cell: Cell, nets: Sequence[str]) -> tuple[str, ...]:
    """Every input pin's net: one net joined to all pins, else unused pins tied neutral.

    Common practice: unused AND/NAND inputs to VDD, OR/NOR inputs to VSS (so
    they do not change the function); a single-input NAND/NOR use has all its
    inputs joined (the textbook inverter); an XOR's spare input goes to VSS.
    """
    distinct = tuple(dict.fromkeys(nets))
    if len(distinct) > cell.width:
        raise InternalError(f"{cell.label()} given {len(distinct)} inputs")
    if len(distinct) == 1 and cell.op in AND_FORM:
        return distinct * cell.width
    return distinct + (NEUTRAL_RAIL[cell.op],) * (cell.width - len(distinct))


class Builder:
    """A chosen selection -> gates, emitting each node and complement once."""

    def __init__(self, problem: Problem, cands: Candidates, cells: Sequence[Cell],
                 table: TreeTable, chosen: Chosen) -> None:
        self.problem, self.cands, self.cells, self.table, self.chosen = problem, cands, cells, table, chosen
        self.em = Emitter(cells, problem.var_nets)
        self.node_net: dict[int, str] = {}
        self.complement: dict[tuple, str] = {}
        self.dec_out: dict[int, dict[int, str]] = {}

    def phys(self, net: tuple, p: int) -> str:
        """The net name carrying the logical value of ``net`` XOR p."""
        if net[0] == "v":
            natural, name = 0, self.problem.var_nets[net[1]]
        elif net[0] == "n":
            name = self.emit_node(net[1])
            natural = self.chosen.trees[net[1]].b ^ self.cands.nodes[net[1]].invert
        else:
            ci = self.cands.decoders[net[1]][0]
            outs = self.dec_out.setdefault(net[1], {})
            if net[2] not in outs:
                outs[net[2]] = self.em.fresh("y")
            name, natural = outs[net[2]], 1 if self.cells[ci].active == "low" else 0
        if p == natural:
            return name
        if net not in self.complement:
            if net not in self.chosen.inverters:
                raise InternalError(f"the selection needs the complement of {net} but chose no inverter")
            self.complement[net] = self.em.inverter(self.table.invs[self.chosen.inverters[net]], name)
        return self.complement[net]

    def emit_node(self, n: int) -> str:
        if n in self.node_net:
            return self.node_net[n]
        node, tree, z = self.cands.nodes[n], self.chosen.trees[n], self.chosen.z[n]
        queues = {0: [], 1: []}
        for (net, c), flip in zip(node.fanins, z):
            queues[flip].append(self.phys(net, c ^ flip))
        self.node_net[n] = self._emit_shape(tree.shape, queues)
        if queues[0] or queues[1]:
            raise InternalError(f"node {n}: leaves left over after building its tree")
        return self.node_net[n]

    def _emit_shape(self, shape: tuple, queues: dict[int, list[str]]) -> str:
        if shape[0] == "leaf":
            return queues[shape[1]].pop(0)
        if shape[0] == "inv":
            return self.em.inverter(self.table.invs[shape[1]], self._emit_shape(shape[2], queues))
        nets = [self._emit_shape(child, queues) for child in shape[2]]
        return self.em.and_kind(self.table.kinds[shape[1]], nets)

    def signal(self, sig: Signal) -> SignalOut:
        option = self.chosen.options[sig.name]
        if option.kind == "mux":
            data = [d if isinstance(d, str) else self.phys(("v", d[1]), d[2]) for d in option.data]
            selects = [self.problem.var_nets[v] for v in option.selects]
            net = self.em.mux(option.cell, data, selects, option.inverted_output)
            return SignalOut(net, option.polarity)
        if sig.polarity == "free":
            low = self.chosen.phi[sig.name]
        else:
            low = int(sig.polarity == "low")
        return SignalOut(self.phys(option.net, option.e ^ low), "low" if low else "high")

    def finish(self) -> list[Gate]:
        for d, outs in self.dec_out.items():
            ci, key = self.cands.decoders[d]
            outputs = [outs.get(code, "") for code in range(self.cells[ci].codes)]
            enables = [None if v is None else self.problem.var_nets[v] for v in self.cands.decoder_enables[d]]
            self.em.decoder(ci, [self.problem.var_nets[v] for v in key], outputs, enables)
        return self.em.gates
