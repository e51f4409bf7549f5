"""Exact synthesis: the published SAT encoding of a k-gate circuit (gate types,
fan-in selection, simulation variables per cared-for state) over the bin's gate
types with per-part unit caps, rails, joined inputs, free phases and don't-cares,
for k = lower bound, lower bound + 1, ..., each also minimized for chips.  A size
not settled within its slice of the work is passed over and taken up again.
"""

from __future__ import annotations

from typing import Sequence

from ..effort import Meter
from ..network import Gate, SignalOut
from .bounds import SatKind, chip_capacities, chips_lower_bound, gate_lower_bound, sat_kinds
from .build import Emitter
from .library import AND_FORM, Cell, chips_from_units
from .problem import Problem, Result, Signal
from .satkit import Cnf, add_costing, new_solver, solve_within


EXACT_MAX_GATES = 12      # ... and circuits of at most this many gates


class _ExactInstance:
    """Is there a circuit of exactly k gates (every gate used) for all signals?"""

    def __init__(self, problem: Problem, cells: Sequence[Cell], kinds: Sequence[SatKind], k: int) -> None:
        self.problem, self.cells, self.kinds, self.k = problem, cells, kinds, k
        cnf = self.cnf = Cnf()
        n = problem.nvars
        self.minterms = problem.minterms
        M = range(len(self.minterms))
        W = max(kind.width for kind in kinds)
        base = 2 + n
        self.t = [[cnf.new() for _ in kinds] for _ in range(k)]
        self.sel = [[[cnf.new() for _ in range(base + i)] for _ in range(W)] for i in range(k)]
        self.v = [[cnf.new() for _ in M] for _ in range(k)]
        allowed_consts = set(c for kind in kinds for c in kind.consts)
        if any(kind.width < W for kind in kinds):
            allowed_consts.add(0)      # a narrower gate's unused slots read VSS

        def node_value(j: int, mi: int):
            """A constant (True/False) for rails and counter variables, else a variable."""
            if j < 2:
                return bool(j)
            if j < base:
                return bool(self.minterms[mi] >> (j - 2) & 1)
            return self.v[j - base][mi]

        for i in range(k):
            cnf.exactly_one(self.t[i])
            u = [[cnf.new() for _ in M] for _ in range(W)]
            for s in range(W):
                sel = self.sel[i][s]
                cnf.exactly_one(sel)
                for j in range(2):
                    if j not in allowed_consts:
                        cnf.add([-sel[j]])
                for j, lit in enumerate(sel):
                    for mi in M:
                        val = node_value(j, mi)
                        if isinstance(val, bool):
                            cnf.add([-lit, u[s][mi] if val else -u[s][mi]])
                        else:
                            cnf.add([-lit, -val, u[s][mi]])
                            cnf.add([-lit, val, -u[s][mi]])
            for c, kind in enumerate(kinds):
                tc = self.t[i][c]
                for s in range(W):
                    for j in range(2):
                        if s < kind.width and j not in kind.consts:
                            cnf.add([-tc, -self.sel[i][s][j]])
                    if s >= kind.width:
                        cnf.add([-tc, self.sel[i][s][0]])
                self._function(tc, kind, [u[s] for s in range(kind.width)], self.v[i], M)
                self._symmetry(tc, kind, self.sel[i])
        self._order_gates(base, W)
        users = [[self.sel[i2][s][base + i] for i2 in range(i + 1, k) for s in range(W)]
                 for i in range(k)]
        self.out: dict[str, list[int]] = {}
        self.phi: dict[str, int] = {}
        for sig in problem.signals:
            self._output(sig, base, node_value)
        for i in range(k):
            gate_outs = [self.out[sig.name][n + i] for sig in problem.signals]
            cnf.add(users[i] + gate_outs)
        unit_lits: dict[int, list[int]] = {}
        for i in range(k):
            for c, kind in enumerate(kinds):
                unit_lits.setdefault(kind.cell, []).append(self.t[i][c])
        self.costing = add_costing(cnf, cells, unit_lits)
        self.unit_lits = unit_lits

    def _order_gates(self, base: int, W: int) -> None:
        """Symmetry break: a gate that does not read the gate just before it has a
        first input no lower than that gate's.  Sound: list the gates greedily,
        always the ready gate with the lowest first input; two neighbours where
        the later does not read the earlier were both ready, so they obey it."""
        cnf = self.cnf
        for i in range(self.k - 1):
            reads = cnf.new()
            cnf.add([-reads] + [self.sel[i + 1][s][base + i] for s in range(W)])
            for s in range(W):
                cnf.add([reads, -self.sel[i + 1][s][base + i]])
            first, following = self.sel[i][0], self.sel[i + 1][0]
            for j, lit in enumerate(first):
                for j2 in range(min(j, len(following))):
                    cnf.add([-lit, -following[j2], reads])

    def _function(self, tc: int, kind: SatKind, u: list[list[int]], v: list[int], M) -> None:
        add = self.cnf.add
        op = kind.op
        for mi in M:
            ins = [u[s][mi] for s in range(kind.width)]
            out = v[mi]
            if op in ("and", "nand", "or", "nor"):
                inv = op in ("nand", "nor")
                y = -out if inv else out
                if op in ("and", "nand"):
                    add([-tc] + [-x for x in ins] + [y])
                    for x in ins:
                        add([-tc, x, -y])
                else:
                    add([-tc] + ins + [-y])
                    for x in ins:
                        add([-tc, -x, y])
            elif op in ("xor", "xnor"):
                a, b = ins
                y = out if op == "xor" else -out
                add([-tc, -a, -b, -y])
                add([-tc, a, b, -y])
                add([-tc, -a, b, y])
                add([-tc, a, -b, y])
            elif op == "not":
                add([-tc, -ins[0], -out])
                add([-tc, ins[0], out])
            else:
                d0, d1, s = ins
                add([-tc, s, -d0, out])
                add([-tc, s, d0, -out])
                add([-tc, -s, -d1, out])
                add([-tc, -s, d1, -out])

    def _symmetry(self, tc: int, kind: SatKind, sel: list[list[int]]) -> None:
        """Ordered inputs for symmetric gates; no gate that is a mere wire or constant."""
        add = self.cnf.add
        if kind.symmetric:
            for s in range(kind.width - 1):
                for j, lit in enumerate(sel[s]):
                    for j2 in range(min(j, len(sel[s + 1]))):
                        add([-tc, -lit, -sel[s + 1][j2]])
        if kind.op in ("and", "or", "xor", "xnor") and kind.width >= 2:
            last = kind.width - 1
            for j in range(len(sel[0])):
                add([-tc, -sel[0][j], -sel[last][j]])
        if kind.op == "mux":
            add([-tc, -sel[2][0]])
            add([-tc, -sel[2][1]])
            for j in range(len(sel[0])):
                add([-tc, -sel[0][j], -sel[1][j]])

    def _output(self, sig: Signal, base: int, node_value) -> None:
        cnf = self.cnf
        n = self.problem.nvars
        lits = [cnf.new() for _ in range(n + self.k)]
        cnf.exactly_one(lits)
        self.out[sig.name] = lits
        phi = None
        if sig.polarity == "free":
            phi = self.phi[sig.name] = cnf.new()
        fixed_low = sig.polarity == "low"
        for mi, m in enumerate(self.minterms):
            if m not in sig.care:
                continue
            want = m in sig.on
            for j, lit in enumerate(lits):
                val = node_value(2 + j, mi)
                if isinstance(val, bool):
                    if phi is None:
                        if val != (want ^ fixed_low):
                            cnf.add([-lit])
                    else:
                        cnf.add([-lit, phi if val != want else -phi])
                elif phi is None:
                    cnf.add([-lit, val if want ^ fixed_low else -val])
                else:
                    cnf.add([-lit, phi, val if want else -val])
                    cnf.add([-lit, -phi, -val if want else val])

    def chips(self, model: list[int]) -> int:
        truth = set(l for l in model if l > 0)
        units = {ci: sum(1 for lit in lits if lit in truth) for ci, lits in self.unit_lits.items()}
        return sum(chips_from_units(units, self.cells).values())

    def solve(self, deadline: int, meter: Meter, floor: float = 1, ceiling: int | None = None):
        """A k-gate circuit with the fewest chips: (model, finished, (chips, k)).

        ``floor``: no k-gate circuit can take fewer chips; ``ceiling``: only
        circuits of at most that many chips are of interest (the incumbent's).
        """
        solver = new_solver(self.cnf.clauses)
        try:
            counters = self.costing.chip_count
            cap = [-counters[ceiling]] if ceiling is not None and ceiling < len(counters) else []
            result = solve_within(solver, cap, deadline, meter)
            if not result:
                return None, result is False, None
            model = solver.get_model()
            chips = self.chips(model)
            done = True
            while chips > max(1, floor):
                answer = solve_within(solver, [-self.costing.chip_count[chips - 1]], deadline, meter)
                if answer is None:
                    done = False
                    break
                if not answer:
                    break
                model = solver.get_model()
                chips = self.chips(model)
            return set(l for l in model if l > 0), done, (chips, self.k)
        finally:
            solver.delete()

    def build(self, model: set[int]) -> tuple[list[Gate], dict[str, SignalOut]]:
        em = Emitter(self.cells, self.problem.var_nets)
        names: list[str] = ["VSS", "VDD"] + list(self.problem.var_nets)
        for i in range(self.k):
            c = next(c for c, lit in enumerate(self.t[i]) if lit in model)
            kind = self.kinds[c]
            nets = [names[next(j for j, lit in enumerate(self.sel[i][s]) if lit in model)]
                    for s in range(kind.width)]
            cell = self.cells[kind.cell]
            if kind.op in AND_FORM:
                out = em.logic(kind.cell, nets)
            elif kind.op in ("xor", "xnor"):
                out = em.gate(kind.cell, kind.op, tuple(nets) + ("VSS",) * (cell.width - 2))
            elif kind.op == "not":
                out = em.gate(kind.cell, "not", tuple(nets))
            else:
                out = em.mux(kind.cell, nets[:2], nets[2:])
            names.append(out)
        signals = {}
        for sig in self.problem.signals:
            j = next(j for j, lit in enumerate(self.out[sig.name]) if lit in model)
            low = (self.phi[sig.name] in model) if sig.name in self.phi else sig.polarity == "low"
            signals[sig.name] = SignalOut(names[2 + j], "low" if low else "high")
        return em.gates, signals


LADDER_SLICE = 0.25     # of the work left, the most one circuit size gets before the next is tried

LADDER_MIN_SLICE = 20_000   # steps every circuit size gets at least (within the deadline)


def exact_search(problem: Problem, cells: Sequence[Cell], deadline: int, meter: Meter,
                  incumbent: tuple[int, int] | None, max_gates: int = EXACT_MAX_GATES
                  ) -> tuple[Result | None, bool, float]:
    """Exact synthesis for k = lower bound, ... until no better (chips, gates) can exist.

    Proving that no k-gate circuit exists gets hard just below the optimum,
    so each size first gets a slice of the time; a size left open is passed
    over (the next may have a circuit, found in a fraction of the time) and
    taken up again with the time that remains.  Proven only when every size
    that could beat the result was settled.  Returns (best result or None,
    proven, chip lower bound); proven with no result means no circuit of the
    bin's gate types fits the bin at all.
    """
    kinds = sat_kinds(cells)
    if not kinds:
        return None, True, float("inf")
    capacities = chip_capacities([cells[k.cell] for k in kinds])
    k0 = gate_lower_bound(problem, kinds)
    if k0 == float("inf"):
        return None, True, float("inf")
    state = {"best": None, "bound": incumbent}

    def could_beat(k: int) -> bool:
        lb, bound = chips_lower_bound(k, capacities), state["bound"]
        return bound is None or lb < bound[0] or (lb == bound[0] and k < bound[1])

    def settle(k: int, until: int) -> bool:
        instance = _ExactInstance(problem, cells, kinds, k)
        bound = state["bound"]
        model, done, cost = instance.solve(until, meter, floor=chips_lower_bound(k, capacities),
                                           ceiling=bound[0] if bound else None)
        if model is not None and (bound is None or cost < bound):
            gates, signals = instance.build(model)
            state["best"], state["bound"] = Result(gates, signals, cost, False, "exact synthesis"), cost
        return bool(done)

    open_sizes: list[int] = []
    k, complete = int(k0), True
    while chips_lower_bound(k, capacities) != float("inf") and could_beat(k):
        if k > max_gates or meter.now() >= deadline:
            open_sizes.append(k)
            complete = False
            break
        until = min(deadline, meter.now() + max(LADDER_MIN_SLICE, int((deadline - meter.now()) * LADDER_SLICE)))
        if not settle(k, until):
            open_sizes.append(k)
        k += 1
    retry = open_sizes if complete else open_sizes[:-1]     # the last one was never tried
    settled = {size for size in retry
               if could_beat(size) and meter.now() < deadline and settle(size, deadline)}
    open_sizes = [size for size in open_sizes if size not in settled and could_beat(size)]
    best, bound = state["best"], state["bound"]
    if not open_sizes:
        last = chips_lower_bound(k, capacities)
        return best, True, last if bound is None else min(bound[0], last)
    floor = min(chips_lower_bound(size, capacities) for size in open_sizes)
    return best, False, floor if bound is None else min(bound[0], floor)
