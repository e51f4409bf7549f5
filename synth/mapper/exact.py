"""Exact synthesis: the published SAT encoding of a gate circuit (gate types,
which nodes each gate reads, simulation variables per cared-for state) over the
bin's gate types with per-part unit caps, joined inputs, free phases and
don't-cares.  One encoding per problem holds every circuit of up to K gates in
one incremental solver; a gate count is chosen by assumptions (the gates in use
come first), so learnt clauses carry over from one size to the next.  The sizes
are tried from the lower bound up, each also minimized for chips; a size not
settled within its slice of the work is passed over and taken up again.

AND-like gates (AND, NAND, OR, NOR, inverters) are encoded by the set of nodes
they read (inputs tied together or to the neutral rail are the same set, so no
input order has to be broken); XOR/XNOR and 2:1 muxes keep one selector per
input pin, as their pins are not interchangeable.
"""

from __future__ import annotations

from typing import Sequence

from ..effort import Meter
from ..network import Gate, SignalOut
from .bounds import SatKind, chip_capacities, chips_lower_bound, gate_lower_bound, sat_kinds
from .build import Emitter
from .library import AND_FORM, Cell, chips_from_units
from .objective import Cost, could_beat as size_could_beat, depth_of
from .problem import Problem, Result, Signal
from .satkit import Cnf, add_costing, new_solver, solve_within


EXACT_MAX_GATES = 12      # ... and circuits of at most this many gates

SET_OPS = ("and", "nand", "or", "nor", "not")     # encoded by the set of nodes read


class ExactEncoding:
    """Every circuit of at most ``size`` gates for all signals (each gate used).

    Nodes: 0 VSS, 1 VDD, 2 .. 2+n-1 the counter variables, 2+n+i gate i.
    ``act[i]``: gate i is in the circuit; gates in use come first, so "exactly
    k gates" is the two assumptions ``act[k-1]`` and ``-act[k]``.
    """

    def __init__(self, problem: Problem, cells: Sequence[Cell], kinds: Sequence[SatKind], size: int) -> None:
        self.problem, self.cells, self.kinds, self.size = problem, cells, kinds, size
        cnf = self.cnf = Cnf()
        n = self.n = problem.nvars
        self.minterms = problem.minterms
        self.bits = [[bool(m >> b & 1) for m in self.minterms] for b in range(n)]
        M = len(self.minterms)
        K = size
        self.set_kinds = [c for c, kind in enumerate(kinds) if kind.op in SET_OPS]
        self.slot_kinds = [c for c, kind in enumerate(kinds) if kind.op not in SET_OPS]
        slots = max((kinds[c].width for c in self.slot_kinds), default=0)
        self.act = [cnf.new() for _ in range(K)]
        self.t = [[cnf.new() for _ in kinds] for _ in range(K)]
        self.v = [[cnf.new() for _ in range(M)] for _ in range(K)]
        self.read = [[cnf.new() for _ in range(n + i)] if self.set_kinds else [] for i in range(K)]
        self.sel = [[[cnf.new() for _ in range(2 + n + i)] for _ in range(slots)] for i in range(K)]
        for i in range(K):
            self._gate(i, slots)
        self._order_gates()
        self.out: dict[str, list[int]] = {}
        self.phi: dict[str, int] = {}
        for sig in problem.signals:
            self._output(sig)
        self._every_gate_used()
        unit_lits: dict[int, list[int]] = {}
        for c, kind in enumerate(kinds):
            unit_lits.setdefault(kind.cell, []).extend(self.t[i][c] for i in range(K))
        self.costing = add_costing(cnf, cells, unit_lits)
        self.unit_lits = unit_lits

    # -- one gate -------------------------------------------------------------

    def _gate(self, i: int, slots: int) -> None:
        cnf, add = self.cnf, self.cnf.add
        act, t = self.act[i], self.t[i]
        if i + 1 < self.size:
            add([-self.act[i + 1], act])                 # gates in use come first
        add([-act] + t)
        cnf.at_most_one(t)
        for tc in t:
            add([-tc, act])
        for x in self.v[i]:
            add([act, -x])                               # an unused gate is pinned low
        if self.set_kinds:
            self._read_set(i)
        if slots:
            self._slot_inputs(i, slots)

    def _node_lits(self, i: int, j: int, mi: int):
        """Node j (counter variable or gate, j < n + i) at minterm mi: a bool or a literal."""
        if j < self.n:
            return self.bits[j][mi]
        return self.v[j - self.n][mi]

    def _read_set(self, i: int) -> None:
        """AND-like gates: p = AND of the nodes read, q = OR of them; v follows by kind."""
        cnf, add = self.cnf, self.cnf.add
        kinds, t, read, v = self.kinds, self.t[i], self.read[i], self.v[i]
        set_t = [t[c] for c in self.set_kinds]
        for r in read:
            add([-r] + set_t)                            # only an AND-like gate reads a set
        nodes = len(read)
        ops = {kinds[c].op for c in self.set_kinds}
        need_p = bool(ops & {"and", "nand", "not"})
        need_q = bool(ops & {"or", "nor"})
        for c in self.set_kinds:
            kind, tc = kinds[c], t[c]
            add([-tc] + read)                            # reads at least one node
            if kind.op in ("and", "or"):                 # ... two: one would be a mere wire
                for j in range(nodes):
                    add([-tc, -read[j]] + read[:j] + read[j + 1:])
        widths = sorted({kinds[c].width for c in self.set_kinds if kinds[c].width < nodes})
        if widths:
            count = cnf.counter(read, ubound=widths[-1])
            for c in self.set_kinds:
                w = kinds[c].width
                if w < nodes and w < len(count):
                    add([-t[c], -count[w]])
        M = len(self.minterms)
        p = [cnf.new() for _ in range(M)] if need_p else None
        q = [cnf.new() for _ in range(M)] if need_q else None
        self._read_set_values(nodes, read, p, q, v, [(kinds[c].op, t[c]) for c in self.set_kinds])

    def _read_set_values(self, nodes: int, read: list[int], p: list[int] | None, q: list[int] | None,
                         v: list[int], set_ops: list[tuple[str, int]]) -> None:
        """Per minterm: p (AND of the nodes read), q (OR of them), and v by the gate's kind.
        The hot loop of the encoding: clauses appended directly, fresh variables
        numbered as ``Cnf.new`` would number them."""
        cnf = self.cnf
        append = cnf.clauses.append
        n, bits, values = self.n, self.bits, self.v
        top = cnf.top
        for mi in range(len(self.minterms)):
            if p is not None:
                pm = p[mi]
                some_false = [pm]
                for j in range(nodes):
                    r = read[j]
                    if j < n:
                        if not bits[j][mi]:
                            append([-r, -pm])
                            some_false.append(r)
                    else:
                        x = values[j - n][mi]
                        append([-r, x, -pm])
                        top += 1
                        append([-top, r])
                        append([-top, -x])
                        some_false.append(top)
                append(some_false)
            if q is not None:
                qm = q[mi]
                some_true = [-qm]
                for j in range(nodes):
                    r = read[j]
                    if j < n:
                        if bits[j][mi]:
                            append([-r, qm])
                            some_true.append(r)
                    else:
                        x = values[j - n][mi]
                        append([-r, -x, qm])
                        top += 1
                        append([-top, r])
                        append([-top, x])
                        some_true.append(top)
                append(some_true)
            vm = v[mi]
            for op, tc in set_ops:
                y = p[mi] if op in ("and", "nand", "not") else q[mi]
                if op in ("nand", "not", "nor"):
                    y = -y
                append([-tc, -vm, y])
                append([-tc, vm, -y])
        cnf.top = top

    def _slot_inputs(self, i: int, slots: int) -> None:
        """XOR/XNOR and 2:1 muxes: one selector per input pin, the pin's value per minterm."""
        cnf, add = self.cnf, self.cnf.add
        kinds, t, sel = self.kinds, self.t[i], self.sel[i]
        M = len(self.minterms)
        slot_t = [t[c] for c in self.slot_kinds]
        u = [[cnf.new() for _ in range(M)] for _ in range(slots)]
        for s in range(slots):
            cnf.exactly_one(sel[s])
            add([sel[s][0]] + slot_t)                    # pins of other gates are parked on VSS
            for j, lit in enumerate(sel[s]):
                for mi in range(M):
                    val = bool(j) if j < 2 else self._node_lits(i, j - 2, mi)
                    if val is True:
                        add([-lit, u[s][mi]])
                    elif val is False:
                        add([-lit, -u[s][mi]])
                    else:
                        add([-lit, -val, u[s][mi]])
                        add([-lit, val, -u[s][mi]])
        for c in self.slot_kinds:
            kind, tc = kinds[c], t[c]
            for s in range(slots):
                if s < kind.width:
                    for j in range(2):
                        if j not in kind.consts:
                            add([-tc, -sel[s][j]])
                else:
                    add([-tc, sel[s][0]])
            self._function(tc, kind, [u[s] for s in range(kind.width)], self.v[i])
            self._symmetry(tc, kind, sel)

    def _function(self, tc: int, kind: SatKind, u: list[list[int]], v: list[int]) -> None:
        add = self.cnf.add
        for mi in range(len(self.minterms)):
            ins = [u[s][mi] for s in range(kind.width)]
            out = v[mi]
            if kind.op in ("xor", "xnor"):
                a, b = ins
                y = out if kind.op == "xor" else -out
                add([-tc, -a, -b, -y])
                add([-tc, a, b, -y])
                add([-tc, -a, b, y])
                add([-tc, a, -b, y])
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
        if kind.op in ("xor", "xnor") and kind.width >= 2:
            last = kind.width - 1
            for j in range(len(sel[0])):
                add([-tc, -sel[0][j], -sel[last][j]])
        if kind.op == "mux":
            add([-tc, -sel[2][0]])
            add([-tc, -sel[2][1]])
            for j in range(len(sel[0])):
                add([-tc, -sel[0][j], -sel[1][j]])

    # -- the circuit as a whole -----------------------------------------------

    def _mentions(self, i: int) -> list[int]:
        """Per non-rail node j: a literal true exactly when gate i reads it."""
        read, sel = self.read[i], self.sel[i]
        if not sel:
            return list(read)
        cnf, add = self.cnf, self.cnf.add
        lits = []
        for j in range(self.n + i):
            sources = ([read[j]] if read else []) + [pins[2 + j] for pins in sel]
            m = cnf.new()
            add([-m] + sources)
            for src in sources:
                add([-src, m])
            lits.append(m)
        return lits

    def _order_gates(self) -> None:
        """Symmetry break: a gate that does not read the gate just before it reads
        no node lower than that gate's lowest.  Sound: list the gates greedily,
        always the ready gate whose lowest node read is lowest; two neighbours
        where the later does not read the earlier were both ready, so they obey it."""
        add = self.cnf.add
        mentions = [self._mentions(i) for i in range(self.size)]
        n = self.n
        for i in range(self.size - 1):
            later = mentions[i + 1]
            reads = later[n + i]
            for j in range(n + i):
                add([-self.act[i + 1], reads, -later[j]] + mentions[i][:j + 1])

    def _output(self, sig: Signal) -> None:
        cnf, add = self.cnf, self.cnf.add
        n, K = self.n, self.size
        lits = [cnf.new() for _ in range(n + K)]
        cnf.exactly_one(lits)
        self.out[sig.name] = lits
        for i in range(K):
            add([self.act[i], -lits[n + i]])
        phi = None
        if sig.polarity == "free":
            phi = self.phi[sig.name] = cnf.new()
        fixed_low = sig.polarity == "low"
        for mi, m in enumerate(self.minterms):
            if m not in sig.care:
                continue
            want = m in sig.on
            for j, lit in enumerate(lits):
                val = self.bits[j][mi] if j < n else self.v[j - n][mi]
                if isinstance(val, bool):
                    if phi is None:
                        if val != (want ^ fixed_low):
                            add([-lit])
                    else:
                        add([-lit, phi if val != want else -phi])
                elif phi is None:
                    add([-lit, val if want ^ fixed_low else -val])
                else:
                    add([-lit, phi, val if want else -val])
                    add([-lit, -phi, -val if want else val])

    def _every_gate_used(self) -> None:
        """A gate in use feeds a later gate or delivers a signal."""
        n = self.n
        for i in range(self.size):
            users = [self.read[i2][n + i] for i2 in range(i + 1, self.size) if self.read[i2]]
            users += [pins[2 + n + i] for i2 in range(i + 1, self.size) for pins in self.sel[i2]]
            users += [lits[n + i] for lits in self.out.values()]
            self.cnf.add([-self.act[i]] + users)

    # -- solving --------------------------------------------------------------

    def gates_exactly(self, k: int) -> list[int]:
        """Assumptions for a circuit of exactly k gates."""
        return ([self.act[k - 1]] if k else []) + ([-self.act[k]] if k < self.size else [])

    def chips_at_most(self, chips: int) -> list[int]:
        counters = self.costing.chip_count
        return [-counters[chips]] if 0 <= chips < len(counters) else []

    def chips(self, model: set[int]) -> int:
        units = {ci: sum(1 for lit in lits if lit in model) for ci, lits in self.unit_lits.items()}
        return sum(chips_from_units(units, self.cells).values())

    def build(self, model: set[int]) -> tuple[list[Gate], dict[str, SignalOut]]:
        em = Emitter(self.cells, self.problem.var_nets)
        names: list[str] = ["VSS", "VDD"] + list(self.problem.var_nets)
        for i in range(self.size):
            if self.act[i] not in model:
                break
            c = next(c for c, lit in enumerate(self.t[i]) if lit in model)
            kind = self.kinds[c]
            cell = self.cells[kind.cell]
            if kind.op in SET_OPS:
                nets = [names[2 + j] for j, lit in enumerate(self.read[i]) if lit in model]
                out = em.gate(kind.cell, "not", tuple(nets)) if kind.op == "not" else em.logic(kind.cell, nets)
            else:
                nets = [names[next(j for j, lit in enumerate(self.sel[i][s]) if lit in model)]
                        for s in range(kind.width)]
                if kind.op in ("xor", "xnor"):
                    out = em.gate(kind.cell, kind.op, tuple(nets) + ("VSS",) * (cell.width - 2))
                else:
                    out = em.mux(kind.cell, nets[:2], nets[2:])
            names.append(out)
        signals = {}
        for sig in self.problem.signals:
            j = next(j for j, lit in enumerate(self.out[sig.name]) if lit in model)
            low = (self.phi[sig.name] in model) if sig.name in self.phi else sig.polarity == "low"
            signals[sig.name] = SignalOut(names[2 + j], "low" if low else "high")
        return em.gates, signals


class _Ladder:
    """One solver over one encoding; each size asked by assumptions."""

    def __init__(self, encoding: ExactEncoding) -> None:
        self.encoding = encoding
        self.solver = new_solver(encoding.cnf.clauses)

    def settle(self, k: int, deadline: int, meter: Meter, floor: float, ceiling: int | None
               ) -> tuple[set[int] | None, bool, Cost | None]:
        """A k-gate circuit of at most ``ceiling`` chips with the fewest chips:
        (model, finished, cost); ``floor``: no k-gate circuit takes fewer chips."""
        enc = self.encoding
        size = enc.gates_exactly(k)
        cap = enc.chips_at_most(ceiling) if ceiling is not None else []
        result = solve_within(self.solver, size + cap, deadline, meter)
        if not result:
            return None, result is False, None
        model = set(l for l in self.solver.get_model() if l > 0)
        chips = enc.chips(model)
        done = True
        while chips > max(1, floor):
            answer = solve_within(self.solver, size + enc.chips_at_most(chips - 1), deadline, meter)
            if answer is None:
                done = False
                break
            if not answer:
                break
            model = set(l for l in self.solver.get_model() if l > 0)
            chips = enc.chips(model)
        return model, done, Cost(chips, k)

    def close(self) -> None:
        self.solver.delete()


LADDER_SLICE = 0.25     # of the work left, the most one circuit size gets before the next is tried

LADDER_MIN_SLICE = 20_000   # steps every circuit size gets at least (within the deadline)

LADDER_GROWTH = 3     # sizes beyond the one asked that an encoding holds (built again when outgrown)


def exact_search(problem: Problem, cells: Sequence[Cell], deadline: int, meter: Meter,
                  incumbent: Cost | None, max_gates: int = EXACT_MAX_GATES
                  ) -> tuple[Result | None, bool, float]:
    """Exact synthesis for k = lower bound, ... until no better (chips, gates) can exist.

    Proving that no k-gate circuit exists gets hard just below the optimum,
    so each size first gets a slice of the work; a size left open is passed
    over (the next may have a circuit, found in a fraction of the work) and
    taken up again with the work that remains.  Proven only when every size
    that could beat the result was settled by a finished search.  Returns
    (best result or None, proven, chip lower bound); proven with no result
    means no circuit of the bin's gate types fits the bin at all.
    """
    kinds = sat_kinds(cells)
    if not kinds:
        return None, True, float("inf")
    capacities = chip_capacities([cells[k.cell] for k in kinds])
    k0 = gate_lower_bound(problem, kinds)
    if k0 == float("inf"):
        return None, True, float("inf")
    state: dict = {"best": None, "bound": Cost.of(incumbent) if incumbent is not None else None}

    def could_beat(k: int) -> bool:
        lb = chips_lower_bound(k, capacities)
        return lb != float("inf") and size_could_beat(int(lb), k, state["bound"])

    top = int(k0)
    while top < max_gates and could_beat(top + 1):
        top += 1
    ladder: _Ladder | None = None

    def settle(k: int, until: int) -> bool:
        nonlocal ladder
        if ladder is None or ladder.encoding.size < k:
            if ladder is not None:
                ladder.close()
            ladder = _Ladder(ExactEncoding(problem, cells, kinds, min(top, k + LADDER_GROWTH)))
        bound = state["bound"]
        ceiling = None if bound is None else bound.chips if k < bound.gates else bound.chips - 1
        model, done, cost = ladder.settle(k, until, meter, floor=chips_lower_bound(k, capacities),
                                          ceiling=ceiling)
        if model is not None and cost.beats_on_size(bound):
            gates, signals = ladder.encoding.build(model)
            cost = cost._replace(depth=depth_of(gates))
            state["best"], state["bound"] = Result(gates, signals, cost, False, "exact synthesis"), cost
        return bool(done)

    try:
        open_sizes: list[int] = []
        k, complete = int(k0), True
        while could_beat(k):
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
    finally:
        if ladder is not None:
            ladder.close()
    open_sizes = [size for size in open_sizes if size not in settled and could_beat(size)]
    best, bound = state["best"], state["bound"]
    if not open_sizes:
        last = chips_lower_bound(k, capacities)
        return best, True, last if bound is None else min(bound.chips, last)
    floor = min(chips_lower_bound(size, capacities) for size in open_sizes)
    return best, False, floor if bound is None else min(bound.chips, floor)
