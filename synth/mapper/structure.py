"""Structure selection as one step: the local search, then the SAT selection
where it is small enough, then the chosen structures built into tidy gates.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Sequence

from ..effort import Meter
from ..network import Gate, SignalOut
from .build import Builder
from .candidates import Candidates, Form, candidate_structures
from .library import Library, cell_of_gate, chips_from_units
from .local import LocalSearch
from .objective import Cost, depth_of
from .problem import Problem, Result
from .selection import Selection
from .trees import TreeTable, tree_table


def select_structure(problem: Problem, forms: dict[str, list[Form]], lib: Library,
            deadline: int, meter: Meter) -> tuple[Result | None, bool]:
    """Structure selection over the candidates; (result, search finished)."""
    cells = lib.cells
    table = tree_table(cells, lib.cache)
    cands = candidate_structures(problem, forms, cells)
    if any(not cands.options.get(s.name) for s in problem.signals):
        return None, True
    local, overflow = LocalSearch(problem, cands, cells, table, meter).run(deadline)
    chosen = local if local is not None and not overflow else None
    proven = False
    if _selection_is_small(cands, table) and meter.now() < deadline:
        selection = Selection(problem, cands, cells, table)
        exact_choice, proven = selection.solve(deadline, meter, chosen)
        if exact_choice is not None:
            chosen = exact_choice
    if chosen is None:
        return None, proven
    builder = Builder(problem, cands, cells, table, chosen)
    signals = {sig.name: builder.signal(sig) for sig in problem.signals}
    gates = _tidy(builder.finish(), signals)
    units = _units_of(gates, lib)
    cost = Cost(sum(chips_from_units(units, cells).values()), len(gates), depth_of(gates))
    return Result(gates, signals, cost, False, "structure selection"), proven


SYMMETRIC_OPS = ("and", "nand", "or", "nor", "xor", "xnor")


def _inverted_net(gate: Gate) -> str | None:
    """The net a gate merely inverts (NOT, NAND/NOR with joined or neutral-tied inputs)."""
    if gate.op == "not":
        return gate.inputs[0]
    if gate.op in ("nand", "nor") and len(gate.outputs) == 1:
        neutral = "VDD" if gate.op == "nand" else "VSS"
        live = {n for n in gate.inputs if n != neutral}
        if len(live) == 1 and live != {"VDD", "VSS"} and not live & {"VDD", "VSS"}:
            return next(iter(live))
    return None


def _tidy(gates: list[Gate], signals: dict[str, SignalOut]) -> list[Gate]:
    """Structural clean-up of a built network: one gate per distinct (part, op,
    inputs), a double inversion read from its source, no gate nobody reads.
    Each step keeps every net's logic value, so the verification still holds."""
    gates = list(gates)
    while True:
        rename: dict[str, str] = {}
        seen: dict[tuple, str] = {}
        driver = {g.outputs[0]: g for g in gates if len(g.outputs) == 1 and g.outputs[0]}
        for g in gates:
            if len(g.outputs) != 1 or not g.outputs[0]:
                continue
            key = (g.part, g.op, tuple(sorted(g.inputs)) if g.op in SYMMETRIC_OPS else g.inputs)
            if key in seen:
                rename[g.outputs[0]] = seen[key]
                continue
            seen[key] = g.outputs[0]
            source = _inverted_net(g)
            inner = driver.get(source) if source else None
            if inner is not None and _inverted_net(inner) is not None:
                rename[g.outputs[0]] = _inverted_net(inner)
        if rename:
            def final(net: str) -> str:
                while net in rename:
                    net = rename[net]
                return net
            gates = [replace(g, inputs=tuple(final(n) for n in g.inputs)) for g in gates
                     if not (len(g.outputs) == 1 and g.outputs[0] in rename)]
            for name, out in list(signals.items()):
                signals[name] = SignalOut(final(out.net), out.polarity)
        read = {n for g in gates for n in g.inputs} | {s.net for s in signals.values()}
        alive = [g for g in gates if any(n and n in read for n in g.outputs)]
        if not rename and len(alive) == len(gates):
            return gates
        gates = alive


SELECTION_MAX_TREES = 6000   # tree variables beyond which only the local search runs


def _selection_is_small(cands: Candidates, table: TreeTable) -> bool:
    trees = sum(len(table.trees(len(node.fanins))) for node in cands.nodes)
    return trees <= SELECTION_MAX_TREES


def _units_of(gates: Sequence[Gate], lib: Library) -> dict[int, int]:
    units: dict[int, int] = {}
    for gate in gates:
        index = cell_of_gate(gate, lib)
        units[index] = units.get(index, 0) + 1
    return units
