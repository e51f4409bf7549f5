"""Gate trees: the Pareto-best ways (units per cell, depth) to build an AND node of
n fan-ins from the bin's AND/NAND/OR/NOR of every width, 2:1 muxes and inverters, by
a dynamic programme over the number of fan-ins.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from operator import add, le
from typing import Iterable, Sequence

from .library import AndKind, Cell, InvKind, and_kinds, inv_kinds


TREE_KEEP = 3             # trees kept per (fan-ins, phase, complemented leaves)


@dataclass(frozen=True)
class Tree:
    """A gate tree realising AND of k leaves: ``units`` per cell, leaves to complement."""

    units: tuple[int, ...]
    n1: int
    depth: int
    b: int
    shape: tuple         # ('leaf', q) | ('gate', kind, children) | ('inv', kind, child)

    @property
    def gates(self) -> int:
        return sum(self.units)


def _dominates(x: tuple, y: tuple) -> bool:
    """Entry x = (units, n1, depth, shape) is no worse than y in every unit and depth."""
    return x[2] <= y[2] and all(map(le, x[0], y[0]))


def _pareto(entries: Iterable[tuple], keep: int) -> list[tuple]:
    best: list[tuple] = []
    for e in sorted(entries, key=lambda e: (sum(e[0]), e[2], e[0])):
        if not any(_dominates(o, e) for o in best):
            best.append(e)
            if len(best) >= keep:
                break
    return best


def _bump(units: tuple[int, ...], index: int) -> tuple[int, ...]:
    return units[:index] + (units[index] + 1,) + units[index + 1:]


def _add(u: tuple[int, ...], v: tuple[int, ...]) -> tuple[int, ...]:
    return tuple(map(add, u, v))


class TreeTable:
    """Pareto-best gate trees for an AND of k leaves, built once per library.

    ``table[k][b][n1]`` lists entries (units, n1, depth, shape): trees whose
    output is AND(leaves) XOR b, with n1 of the leaves fed complemented.
    """

    def __init__(self, ncells: int, kinds: list[AndKind], invs: list[InvKind]) -> None:
        self.ncells, self.kinds, self.invs = ncells, kinds, invs
        zero = (0,) * ncells
        self.table: dict[int, dict[int, dict[int, list]]] = {
            1: {0: {0: [(zero, 0, 0, ("leaf", 0))]}, 1: {1: [(zero, 1, 0, ("leaf", 1))]}}}
        # fold[g][i][s]: dict n1 -> entries (units, n1, depth, children) of i children, s leaves
        self.fold = [{1: {1: {kind.a: [(zero, kind.a, 0, (("leaf", kind.a),))]}}} for kind in kinds]
        self.top = 1
        self.listed: dict[int, tuple[Tree, ...]] = {}

    def trees(self, k: int) -> list[Tree]:
        """Every kept tree for an AND of k fan-ins, both output phases (listed once per k)."""
        while self.top < k:
            self._grow()
        if k not in self.listed:
            out = []
            for b, by_n1 in self.table[k].items():
                for n1, entries in by_n1.items():
                    out.extend(Tree(e[0], n1, e[2], b, e[3]) for e in entries)
            self.listed[k] = tuple(out)
        return list(self.listed[k])

    def _grow(self) -> None:
        s = self.top + 1
        gate_entries: dict[int, dict[int, list]] = {0: {}, 1: {}}
        for g, kind in enumerate(self.kinds):
            fold = self.fold[g]
            for i in range(2, min(kind.width, s) + 1):
                bucket: dict[int, list] = {}
                for s1 in range(i - 1, s):
                    left = fold.get(i - 1, {}).get(s1)
                    right = self.table[s - s1].get(kind.a)
                    if not left or not right:
                        continue
                    for ln1, lentries in left.items():
                        for rn1, rentries in right.items():
                            for le in lentries:
                                for re_ in rentries:
                                    bucket.setdefault(ln1 + rn1, []).append(
                                        (_add(le[0], re_[0]), ln1 + rn1, max(le[2], re_[2]),
                                         le[3] + (re_[3],)))
                pruned = {n1: _pareto(v, TREE_KEEP) for n1, v in bucket.items()}
                fold.setdefault(i, {})[s] = pruned
                for n1, entries in pruned.items():
                    for units, _, depth, children in entries:
                        gate_entries[kind.b].setdefault(n1, []).append(
                            (_bump(units, kind.cell), n1, depth + 1, ("gate", g, children)))
        final: dict[int, dict[int, list]] = {0: {}, 1: {}}
        for b in (0, 1):
            for n1, entries in gate_entries[b].items():
                final[b].setdefault(n1, []).extend(entries)
            for n1, entries in gate_entries[1 - b].items():
                for units, _, depth, shape in _pareto(entries, TREE_KEEP):
                    for v, inv in enumerate(self.invs):
                        final[b].setdefault(n1, []).append(
                            (_bump(units, inv.cell), n1, depth + 1, ("inv", v, shape)))
        self.table[s] = {b: {n1: _pareto(v, TREE_KEEP) for n1, v in by.items()} for b, by in final.items()}
        for g, kind in enumerate(self.kinds):
            self.fold[g].setdefault(1, {})[s] = {
                n1: [(e[0], n1, e[2], (e[3],)) for e in entries]
                for n1, entries in self.table[s][kind.a].items()}
        self.top = s


_TREE_TABLES: dict[tuple, TreeTable] = {}


def tree_table(library_cells: Sequence[Cell], cache: dict) -> TreeTable:
    """One table per list of cell kinds (how many chips the bin holds does not matter)."""
    key = ("trees", tuple(replace(c, chips=0) for c in library_cells))
    if key not in _TREE_TABLES:
        if len(_TREE_TABLES) > 32:
            _TREE_TABLES.clear()
        _TREE_TABLES[key] = TreeTable(len(library_cells), and_kinds(library_cells),
                                       inv_kinds(library_cells))
    return _TREE_TABLES[key]
