"""Local search over the candidate structures (designs too large for the SAT
selection): a greedy cheapest start, phase-fitted trees, a repair of overflow,
then hill climbing on (overflow, chips, gates, depth); every evaluation is
charged to the work meter.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping, Sequence

from ..effort import Meter
from .candidates import Candidates
from .library import Cell, chips_from_units
from .objective import Cost
from .problem import Problem
from .satkit import NODES_PER_STEP
from .selection import Chosen
from .trees import Tree, TreeTable


LOCAL_TREES = 12          # trees per node the local search tries

MOVABLE_ALL_NODES = 150   # designs of more nodes climb only where inverters or loose chips are


@dataclass
class _Eval:
    key: tuple
    cost: Cost
    nodes: list[int]
    z: dict[int, tuple[int, ...]]
    inverters: dict[tuple, int]
    units: tuple[int, ...] = ()


def _tree_menu(trees: Sequence[Tree], ncells: int) -> list[Tree]:
    """Trees worth trying: the fewest gates, and for each cell the ones sparing it most."""
    by_gates = sorted(trees, key=lambda t: (t.gates, t.depth))
    menu = by_gates[:LOCAL_TREES]
    for c in range(ncells):
        for b in (0, 1):
            spare = sorted((t for t in trees if t.b == b), key=lambda t: (t.units[c], t.gates, t.depth))[:2]
            menu += [t for t in spare if t not in menu]
    return menu


def _part_way(meter: Meter, deadline: int, share: float) -> int:
    """A deadline ``share`` of the way from now to ``deadline`` (in steps)."""
    now = meter.now()
    return now + int(max(0, deadline - now) * share)


class LocalSearch:
    """Hill climbing over the same candidates: options, trees, inverter units.

    For designs too large for the SAT selection; every move is judged on the
    whole design's (overflow, chips, gates, depth), spare units included.
    """

    def __init__(self, problem: Problem, cands: Candidates, cells: Sequence[Cell],
                 table: TreeTable, meter: Meter) -> None:
        self.problem, self.cands, self.cells, self.table = problem, cands, cells, table
        self.meter = meter
        menus: dict[int, list[Tree]] = {}      # one menu per fan-in count, shared by its nodes
        for node in cands.nodes:
            if len(node.fanins) not in menus:
                menus[len(node.fanins)] = _tree_menu(table.trees(len(node.fanins)), len(cells))
        self.trees = {n: menus[len(node.fanins)] for n, node in enumerate(cands.nodes)}
        # each menu tree's (cell, units) pairs with units, for evaluate's hot loop
        self.used_units = {id(t): [(c, u) for c, u in enumerate(t.units) if u]
                           for menu in menus.values() for t in menu}
        self.natural_dec = {d: 1 if cells[ci].active == "low" else 0
                            for d, (ci, _) in enumerate(cands.decoders)}
        self.opt = {s.name: 0 for s in problem.signals}
        self.phi = {s.name: 0 for s in problem.signals if s.polarity == "free"}
        self.tree = {n: 0 for n in self.trees}
        self.inv_cells = sorted({k.cell for k in table.invs},
                                key=lambda c: -cells[c].units_per_chip)

    def natural(self, net: tuple, tree: Mapping[int, int]) -> int:
        if net[0] == "v":
            return 0
        if net[0] == "n":
            return self.trees[net[1]][tree[net[1]]].b ^ self.cands.nodes[net[1]].invert
        return self.natural_dec[net[1]]

    def evaluate(self, opt, phi, tree) -> _Eval | None:
        """The whole design's key with these choices (charged to the work meter)."""
        self.meter.charge(1 + len(self.cands.nodes) // NODES_PER_STEP)
        cells = self.cells
        units = [0] * len(cells)
        complements: dict[tuple, int] = {}
        depth_of: dict[int, int] = {}
        z: dict[int, tuple[int, ...]] = {}
        order: list[int] = []
        decs: set[int] = set()
        nodes = self.cands.nodes
        menus = self.trees
        natural_dec = self.natural_dec
        chosen: dict[int, Tree] = {}         # filled for the nodes the design reaches
        used_units = self.used_units

        def tree_of(n: int) -> Tree:
            t = chosen.get(n)
            if t is None:
                t = chosen[n] = menus[n][tree[n]]
            return t

        def natural(net: tuple) -> int:
            kind = net[0]
            if kind == "v":
                return 0
            if kind == "n":
                return tree_of(net[1]).b ^ nodes[net[1]].invert
            return natural_dec[net[1]]

        def require(net: tuple, q: int) -> int:
            kind = net[0]
            if kind == "v":
                d, p = 0, 0
            elif kind == "n":
                d = visit(net[1])
                p = chosen[net[1]].b ^ nodes[net[1]].invert
            else:
                decs.add(net[1])
                d, p = 1, natural_dec[net[1]]
            if q != p:
                if net not in complements:
                    complements[net] = len(complements)
                d += 1
            return d

        def visit(n: int) -> int:
            if n in depth_of:
                return depth_of[n]
            depth_of[n] = 0
            t = tree_of(n)
            for c, u in used_units[id(t)]:
                units[c] += u
            fanins = nodes[n].fanins
            # fan-ins whose natural phase differs from the wanted one take the
            # tree's complemented leaves first, then the others, in fan-in order
            differ, same = [], []
            for j, (net, c) in enumerate(fanins):
                (differ if natural(net) != c else same).append(j)
            flips = [0] * len(fanins)
            for j in (differ + same)[:t.n1]:
                flips[j] = 1
            z[n] = tuple(flips)
            deepest = 0
            for (net, c), f in zip(fanins, flips):
                d = require(net, c ^ f)
                if d > deepest:
                    deepest = d
            order.append(n)
            depth_of[n] = deepest + t.depth
            return depth_of[n]

        depth = 0
        for sig in self.problem.signals:
            options = self.cands.options[sig.name]
            option = options[opt[sig.name]]
            if option.kind == "mux":
                if sig.polarity != "free" and option.polarity != sig.polarity:
                    return None
                units[option.cell] += 1
                for net, q in option.needs:
                    require(net, q)
                depth = max(depth, 2 if option.needs else 1)
                continue
            low = phi[sig.name] if sig.polarity == "free" else int(sig.polarity == "low")
            depth = max(depth, require(option.net, option.e ^ low))
        for d in decs:
            units[self.cands.decoders[d][0]] += 1
        inverters = self._place_inverters(units, list(complements))
        if inverters is None:
            return None
        overflow = sum(max(0, u - c.capacity) for u, c in zip(units, cells))
        chips = sum(chips_from_units(dict(enumerate(units)), cells).values())
        gates = sum(units)
        cost = Cost(chips, gates, depth)
        return _Eval((overflow, *cost), cost, order, z, inverters, tuple(units))

    def _place_inverters(self, units: list[int], nets: list[tuple]) -> dict[tuple, int] | None:
        """Spare units of chips already opened first, then the cell that opens fewest chips."""
        if not nets:
            return {}
        if not self.inv_cells:
            return None
        kind_of = {k.cell: v for v, k in reversed(list(enumerate(self.table.invs)))}
        placed: dict[tuple, int] = {}
        todo = list(nets)
        for c in self.inv_cells:
            cell = self.cells[c]
            if units[c]:
                spare = -(-units[c] // cell.units_per_chip) * cell.units_per_chip - units[c]
                spare = min(spare, cell.capacity - units[c])
                while spare > 0 and todo:
                    placed[todo.pop()] = kind_of[c]
                    units[c] += 1
                    spare -= 1
        while todo:
            room = [c for c in self.inv_cells if self.cells[c].capacity > units[c]]
            c = min(room or self.inv_cells,
                    key=lambda c: (-(-len(todo) // self.cells[c].units_per_chip), -self.cells[c].units_per_chip))
            take = max(1, min(len(todo), self.cells[c].capacity - units[c])) if room else len(todo)
            for _ in range(take):
                placed[todo.pop()] = kind_of[c]
                units[c] += 1
        return placed

    def run(self, deadline: int) -> tuple[Chosen | None, int]:
        """The best selection found, and how far it overflows the bin (0 = fits).

        First climbs as if the bin were unlimited (the structure), then with
        the bin's limits first (the repair).  A node no gate of the bin can
        build (no AND-like gate at all) leaves only the options without it.
        """
        if any(not menu for menu in self.trees.values()):
            return None, 0
        best = self._initial()
        if best is None:
            return None, 0
        if best.key[0]:            # over the bin from the start: repair first, then refine
            best = self._climb(best, lambda e: e.key, _part_way(self.meter, deadline, 0.5))
        if best.key[0]:
            best = self._climb(best, lambda e: e.key[1:], _part_way(self.meter, deadline, 0.5))
        best = self._climb(best, lambda e: e.key, deadline)
        return self._chosen(best), best.key[0]

    def _climb(self, best: _Eval, score, deadline: int) -> _Eval:
        improved = True
        large = len(best.nodes) > MOVABLE_ALL_NODES
        while improved and self.meter.now() < deadline:
            self.meter.check_wall()
            improved = False
            start = best.key
            best, improved = self._option_pass(best, score)
            for n in self._movable(best):
                if self.meter.now() >= deadline:
                    break
                for ti in range(len(self.trees[n])):
                    if ti == self.tree[n]:
                        continue
                    for trial_tree, result in self._tree_moves(n, ti):
                        if result and score(result) < score(best):
                            self.tree, best, improved = trial_tree, result, True
            if large and improved and start[2] - best.key[2] < max(1, start[2] // 50):
                break       # a large design's pass that saved under 2 % of its gates: settled
        return best

    def _movable(self, best: _Eval) -> list[int]:
        """The nodes whose tree the climb tries to change.  On a large design that
        fits the bin, only nodes next to a complemented net (an inverter in the
        way) and nodes of cells that open a chip for a few gates: elsewhere the
        phase-fitted start already holds the fewest gates per node."""
        if len(best.nodes) <= MOVABLE_ALL_NODES or best.key[0]:
            return list(best.nodes)
        complemented = {net[1] for net in best.inverters if net[0] == "n"}
        cells = self.cells
        loose = {c for c, u in enumerate(best.units)
                 if 0 < u % cells[c].units_per_chip <= cells[c].units_per_chip // 2}
        movable = []
        for n in best.nodes:
            fanins = self.cands.nodes[n].fanins
            tree = self.trees[n][self.tree[n]]
            if n in complemented or any(net in best.inverters for net, _ in fanins) or \
                    any(tree.units[c] for c in loose):
                movable.append(n)
        return movable

    def _tree_moves(self, n: int, ti: int) -> list[tuple[dict[int, int], _Eval | None]]:
        """The node on another tree, alone and with its fan-in nodes re-phased to
        suit it, each with its evaluation."""
        plain = {**self.tree, n: ti}
        result = self.evaluate(self.opt, self.phi, plain)
        moves = [(plain, result)]
        if result is None or n not in result.z:
            return moves
        fitted = dict(plain)
        for (net, c), f in zip(self.cands.nodes[n].fanins, result.z[n]):
            if net[0] == "n":
                want = c ^ f
                m = net[1]
                inv = self.cands.nodes[m].invert
                fits = [i for i, t in enumerate(self.trees[m]) if t.b ^ inv == want]
                if fits:
                    fitted[m] = fits[0]
        if fitted != plain:
            moves.append((fitted, self.evaluate(self.opt, self.phi, fitted)))
        return moves

    def _initial(self) -> _Eval | None:
        best = None
        for sig in self.problem.signals:
            options = self.cands.options[sig.name]
            if sig.polarity != "free":
                self.opt[sig.name] = next((i for i, o in enumerate(options)
                                           if o.kind != "mux" or o.polarity == sig.polarity), 0)
        best = self.evaluate(self.opt, self.phi, self.tree)
        if best is not None:
            best = self._cheapest_options(best)
            fitted = self._phase_fitted_trees()
            trial = self.evaluate(self.opt, self.phi, fitted)
            if trial is not None and trial.key < best.key:
                self.tree, best = fitted, trial
        if best is not None and best.key[0]:
            best = self._relieve(best)
        return best

    def _phase_fitted_trees(self) -> dict[int, int]:
        """Trees chosen top-down, parents before fan-ins: each node takes the tree
        whose output phase suits what its users ask for and whose complemented
        leaves fall on complemented literals (free) or on fan-in nodes (which
        then pick their own phase), so few inverters are needed.  A starting
        point for the climb, where one tree move at a time cannot flip a chain
        of phases."""
        nodes = self.cands.nodes
        demand: dict[int, list[int]] = {}
        inverted_vars: set[int] = set()

        def ask(net: tuple, q: int) -> None:
            if net[0] == "n":
                demand.setdefault(net[1], [0, 0])[q] += 1
            elif net[0] == "v" and q:
                inverted_vars.add(net[1])

        for sig in self.problem.signals:
            option = self.cands.options[sig.name][self.opt[sig.name]]
            if option.kind == "mux":
                for net, q in option.needs:
                    ask(net, q)
                continue
            low = self.phi.get(sig.name, 0) if sig.polarity == "free" else int(sig.polarity == "low")
            ask(option.net, option.e ^ low)
        tree = dict(self.tree)
        for n in range(len(nodes) - 1, -1, -1):      # a node's fan-ins come before it
            if n not in demand:
                continue
            wants = demand[n]
            fanins = nodes[n].fanins
            # leaves to complement, best first: complemented literals (free), fan-in
            # nodes (they pick their phase), true literals (an inverter each)
            free = [j for j, (net, c) in enumerate(fanins) if net[0] == "v" and c]
            neutral = [j for j, (net, c) in enumerate(fanins) if net[0] != "v"]
            costly = [j for j, (net, c) in enumerate(fanins) if net[0] == "v" and not c]
            preference = free + neutral + costly
            best_key, best_pick = None, None
            for ti, t in enumerate(self.trees[n]):
                natural = t.b ^ nodes[n].invert
                cost = t.gates + (1 if wants[1 - natural] else 0)
                flipped = set(preference[:t.n1])
                for j, (net, c) in enumerate(fanins):
                    if net[0] == "v" and (c ^ (j in flipped)) and net[1] not in inverted_vars:
                        cost += 1
                key = (cost, t.depth)
                if best_key is None or key < best_key:
                    best_key, best_pick = key, (ti, flipped)
            ti, flipped = best_pick
            tree[n] = ti
            for j, (net, c) in enumerate(fanins):
                ask(net, c ^ (j in flipped))
        return tree

    def _cheapest_options(self, best: _Eval) -> _Eval:
        """One greedy pass, signal by signal: the option (and phase) that gives the
        whole design the fewest gates, overflow first.  A start from the first
        option of every signal can be the flat two-level one, several times the
        gates of a factored one, and the repair cannot climb out of that."""
        best, _ = self._option_pass(best, lambda e: (e.key[0], e.key[2], e.key[1]))
        return best

    def _option_pass(self, best: _Eval, score) -> tuple[_Eval, bool]:
        """Each signal on each of its options (and phases), kept where ``score`` drops;
        (the best evaluation, whether any move was kept)."""
        improved = False
        for sig in self.problem.signals:
            for i in range(len(self.cands.options[sig.name])):
                for p in ((0, 1) if sig.name in self.phi else (None,)):
                    trial_opt = {**self.opt, sig.name: i}
                    trial_phi = {**self.phi, **({sig.name: p} if p is not None else {})}
                    result = self.evaluate(trial_opt, trial_phi, self.tree)
                    if result and score(result) < score(best):
                        self.opt, self.phi, best, improved = trial_opt, trial_phi, result, True
        return best, improved

    def _relieve(self, best: _Eval) -> _Eval:
        """Greedy repair of a design over the bin: node by node, the tree that most
        lowers the summed overflow at the running unit counts, then one evaluation
        (one move per evaluation is too slow when a design overflows by hundreds)."""
        caps = [c.capacity for c in self.cells]
        for _ in range(3):
            if not best.key[0]:
                break
            units = list(best.units)

            def overflow_with(old: tuple, new: tuple) -> int:
                return sum(max(0, u - o + w - cap) - max(0, u - cap)
                           for u, o, w, cap in zip(units, old, new, caps) if o != w)

            trial = dict(self.tree)
            for n in best.nodes:
                menu = self.trees[n]
                current = menu[trial[n]]
                if not any(u > cap for u, w, cap in zip(units, current.units, caps) if w):
                    continue
                pick = min(range(len(menu)), key=lambda i: (
                    overflow_with(current.units, menu[i].units), menu[i].b != current.b, menu[i].gates))
                if overflow_with(current.units, menu[pick].units) < 0:
                    units = [u - o + w for u, o, w in zip(units, current.units, menu[pick].units)]
                    trial[n] = pick
            result = self.evaluate(self.opt, self.phi, trial)
            if result is None or result.key >= best.key:
                break
            self.tree, best = trial, result
        return best

    def _chosen(self, best: _Eval) -> Chosen:
        options = {name: self.cands.options[name][i] for name, i in self.opt.items()}
        trees = {n: self.trees[n][self.tree[n]] for n in best.nodes}
        return Chosen(options, dict(self.phi), trees, {n: best.z[n] for n in best.nodes},
                       best.inverters, best.cost)
