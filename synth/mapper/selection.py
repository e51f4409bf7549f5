"""Structure selection by SAT: per signal a phase and a structure, per node a
tree, per complemented net an inverting unit; units and chips counted with
totalizers, chips and then gates pushed down by bound tightening.  A finished
search proves the minimum over these candidate structures only.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

from ..effort import Meter
from .candidates import Candidates, Option
from .library import Cell, chips_from_units
from .objective import Cost
from .problem import Problem, Signal
from .satkit import Cnf, add_costing, minimise, new_solver
from .trees import Tree, TreeTable


TRUE = 0  # a "need" that is always met (a counter output in its true form)


@dataclass
class Chosen:
    """A decoded selection: what to build, before nets get names."""

    options: dict[str, Option]
    phi: dict[str, int]
    trees: dict[int, Tree]
    z: dict[int, tuple[int, ...]]
    inverters: dict[tuple, int]          # net -> inverter kind index
    cost: Cost


class Selection:
    """The SAT model over candidate structures (see the module docstring)."""

    def __init__(self, problem: Problem, cands: Candidates, cells: Sequence[Cell],
                 table: TreeTable) -> None:
        self.problem, self.cands, self.cells, self.table = problem, cands, cells, table
        self.cnf = Cnf()
        self.unit_lits: dict[int, list[int]] = {}
        self.needs: dict[tuple, int] = {}
        self.inv: dict[tuple, int] = {}
        self.iota: dict[tuple, list[tuple[int, int]]] = {}
        self.used = [self.cnf.new() for _ in cands.nodes]
        self.dl = [self.cnf.new() for _ in cands.nodes]
        self.dec_used = [self.cnf.new() for _ in cands.decoders]
        for d, (ci, _) in enumerate(cands.decoders):
            self.unit_lits.setdefault(ci, []).append(self.dec_used[d])
        self.x: dict[int, list[tuple[int, Tree]]] = {}
        self.zs: dict[int, list[int]] = {}
        self.opt: dict[str, list[tuple[int, Option]]] = {}
        self.phi: dict[str, int] = {}
        for n in range(len(cands.nodes)):
            self._encode_node(n)
        for sig in problem.signals:
            self._encode_signal(sig)
        self.costing = add_costing(self.cnf, cells, self.unit_lits)

    # ---- nets and their phases

    def need(self, net: tuple, q: int) -> int:
        """A variable meaning: net is wanted at logical level XOR q."""
        if net[0] == "v" and q == 0:
            return TRUE
        key = (net, q)
        if key in self.needs:
            return self.needs[key]
        var = self.needs[key] = self.cnf.new()
        if net[0] == "v":
            self.cnf.add([-var, self.inverter(net)])
        elif net[0] == "n":
            n = net[1]
            self.cnf.add([-var, self.used[n]])
            self.cnf.add([-var, -self.dl[n] if q == 0 else self.dl[n], self.inverter(net)])
        else:
            d = net[1]
            self.cnf.add([-var, self.dec_used[d]])
            natural = 1 if self.cells[self.cands.decoders[d][0]].active == "low" else 0
            if q != natural:
                self.cnf.add([-var, self.inverter(net)])
        return var

    def inverter(self, net: tuple) -> int:
        if net in self.inv:
            return self.inv[net]
        var = self.inv[net] = self.cnf.new()
        choices = []
        for v, kind in enumerate(self.table.invs):
            lit = self.cnf.new()
            self.unit_lits.setdefault(kind.cell, []).append(lit)
            self.cnf.add([-lit, var])
            choices.append((lit, v))
        self.iota[net] = choices
        self.cnf.add([-var] + [lit for lit, _ in choices])
        self.cnf.at_most_one([lit for lit, _ in choices])
        return var

    def _require(self, guard: Sequence[int], var: int) -> None:
        if var != TRUE:
            self.cnf.add([-g for g in guard] + [var])

    # ---- nodes and signals

    def _encode_node(self, n: int) -> None:
        node = self.cands.nodes[n]
        k = len(node.fanins)
        used = self.used[n]
        trees = self.table.trees(k)
        xs: list[tuple[int, Tree]] = []
        slots: dict[int, list[int]] = {}
        zs = [self.cnf.new() for _ in range(k)]
        count = self.cnf.counter(zs, exact=True)
        for tree in trees:
            x = self.cnf.new()
            xs.append((x, tree))
            self.cnf.add([-x, self.dl[n] if tree.b ^ node.invert else -self.dl[n]])
            for ci, units in enumerate(tree.units):
                lits = slots.setdefault(ci, [])
                while len(lits) < units:
                    lit = self.cnf.new()
                    lits.append(lit)
                    self.unit_lits.setdefault(ci, []).append(lit)
                for t in range(units):
                    self.cnf.add([-x, lits[t]])
            if tree.n1 >= 1:
                self.cnf.add([-x, count[tree.n1 - 1]])
            if tree.n1 < k:
                self.cnf.add([-x, -count[tree.n1]])
        self.cnf.add([-used] + [x for x, _ in xs])
        self.x[n], self.zs[n] = xs, zs
        for j, (net, c) in enumerate(node.fanins):
            plain, flipped = self.need(net, c), self.need(net, c ^ 1)
            if plain != TRUE:
                self.cnf.add([-used, zs[j], plain])
            if flipped != TRUE:
                self.cnf.add([-used, -zs[j], flipped])

    def _encode_signal(self, sig: Signal) -> None:
        options = self.cands.options.get(sig.name, [])
        if sig.polarity == "free":
            self.phi[sig.name] = self.cnf.new()
        phi = self.phi.get(sig.name)
        lits = []
        for option in options:
            x = self.cnf.new()
            lits.append((x, option))
            if option.kind == "mux":
                self.unit_lits.setdefault(option.cell, []).append(x)
                for net, q in option.needs:
                    self._require([x], self.need(net, q))
                if phi is not None:
                    self.cnf.add([-x, phi if option.polarity == "low" else -phi])
                continue
            if phi is None:
                q = option.e ^ (sig.polarity == "low")
                self._require([x], self.need(option.net, q))
            else:
                self._require([x, -phi], self.need(option.net, option.e))
                self._require([x, phi], self.need(option.net, option.e ^ 1))
        self.opt[sig.name] = lits
        self.cnf.exactly_one([x for x, _ in lits]) if lits else self.cnf.add([])

    # ---- solving and reading the answer

    def _units(self, model: set[int]) -> dict[int, int]:
        return {ci: sum(1 for lit in lits if lit in model) for ci, lits in self.unit_lits.items()}

    def chips_and_gates(self, model_list: list[int]) -> tuple[int, int]:
        units = self._units(set(l for l in model_list if l > 0))
        return sum(chips_from_units(units, self.cells).values()), sum(units.values())

    def hints(self) -> list[int]:
        """Preferred phases: the cheapest tree per node, the cheapest option per signal."""
        def tree_key(tree: Tree) -> tuple:
            return (tree.gates, tree.depth, tree.n1)

        best_tree = {n: min(xs, key=lambda xt: tree_key(xt[1]))[0] for n, xs in self.x.items() if xs}
        cheapest = {n: min(tree.gates for _, tree in xs) for n, xs in self.x.items() if xs}
        lits: list[int] = []
        wanted_nodes: set[int] = set()
        for name, options in self.opt.items():
            def cost(option: Option) -> float:
                if option.kind == "mux":
                    return 1 + len(option.needs)
                nodes = self._nodes_under(option.net)
                return sum(cheapest.get(n, 99) for n in nodes)
            if not options:
                continue
            pick = min(options, key=lambda xo: cost(xo[1]))[0]
            lits += [x if x == pick else -x for x, _ in options]
            if self._option_net(options, pick) is not None:
                wanted_nodes |= self._nodes_under(self._option_net(options, pick))
        for n, xs in self.x.items():
            lits.append(self.used[n] if n in wanted_nodes else -self.used[n])
            lits += [x if x == best_tree.get(n) else -x for x, _ in xs]
            lits += [-z for z in self.zs[n]]
        for lits_of_cell in self.unit_lits.values():
            lits += [-l for l in lits_of_cell if l not in lits]
        return lits

    def _option_net(self, options, pick) -> tuple | None:
        option = next(o for x, o in options if x == pick)
        return option.net

    def _nodes_under(self, net: tuple | None) -> set[int]:
        found: set[int] = set()
        stack = [net] if net else []
        while stack:
            ref = stack.pop()
            if ref[0] == "n" and ref[1] not in found:
                found.add(ref[1])
                stack.extend(f for f, _ in self.cands.nodes[ref[1]].fanins)
        return found

    def seed(self, chosen: Chosen) -> list[int]:
        """Phases that reproduce a known selection (the local search's)."""
        lits: list[int] = []
        for name, options in self.opt.items():
            lits += [x if option == chosen.options.get(name) else -x for x, option in options]
        for name, var in self.phi.items():
            lits.append(var if chosen.phi.get(name) else -var)
        for n, xs in self.x.items():
            tree = chosen.trees.get(n)
            lits.append(self.used[n] if tree is not None else -self.used[n])
            lits += [x if t == tree else -x for x, t in xs]
            flips = chosen.z.get(n, (0,) * len(self.zs[n]))
            lits += [v if f else -v for v, f in zip(self.zs[n], flips)]
        for net, var in self.inv.items():
            kind = chosen.inverters.get(net)
            lits.append(var if kind is not None else -var)
            lits += [lit if v == kind else -lit for lit, v in self.iota[net]]
        return lits

    def solve(self, deadline: int, meter: Meter,
              incumbent: Chosen | None = None) -> tuple[Chosen | None, bool]:
        solver = new_solver(self.cnf.clauses)
        solver.set_phases(self.seed(incumbent) if incumbent else self.hints())
        try:
            model, proven, cost = minimise(
                solver, self.costing, deadline, meter,
                lambda m: self.chips_and_gates(m)[0], lambda m: self.chips_and_gates(m)[1],
                incumbent=incumbent.cost if incumbent else None)
        finally:
            solver.delete()
        if model is None:
            return None, proven
        return self._decode(set(l for l in model if l > 0), cost), proven

    def _decode(self, model: set[int], cost: Cost) -> Chosen:
        options = {}
        for name, lits in self.opt.items():
            options[name] = next(option for x, option in lits if x in model)
        phi = {name: int(var in model) for name, var in self.phi.items()}
        trees = {n: next(tree for x, tree in xs if x in model)
                 for n, xs in self.x.items() if self.used[n] in model}
        z = {n: tuple(int(v in model) for v in self.zs[n]) for n in trees}
        inverters = {}
        for net, var in self.inv.items():
            if var in model:
                inverters[net] = next(v for lit, v in self.iota[net] if lit in model)
        return Chosen(options, phi, trees, z, inverters, cost)
