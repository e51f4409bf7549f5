"""SAT helpers shared by both engines: the clause store with cardinality
counters, the costing of units and chips, and solving within a work budget.

Every solve is bounded by steps on an ``effort.Meter`` (conflicts and
propagations, never seconds), so the answer does not depend on machine load;
the wall-clock safety cap only stops a solve that outlives it (exit 4).
"""

from __future__ import annotations

import itertools
import threading
from dataclasses import dataclass, field
from typing import Iterable, Sequence

from ..effort import Meter, PROPAGATIONS_PER_STEP
from .library import Cell
from .objective import Cost


class Cnf:
    """Clauses and fresh variables, with the counters both engines use."""

    def __init__(self) -> None:
        self.top = 0
        self.clauses: list[list[int]] = []

    def new(self) -> int:
        self.top += 1
        return self.top

    def add(self, clause: Iterable[int]) -> None:
        self.clauses.append(list(clause))

    def exactly_one(self, lits: Sequence[int]) -> None:
        self.add(lits)
        self.at_most_one(lits)

    def at_most_one(self, lits: Sequence[int]) -> None:
        """Sequential (ladder) encoding: linear in the number of literals."""
        if len(lits) <= 4:
            for a, b in itertools.combinations(lits, 2):
                self.add([-a, -b])
            return
        prev = None
        for i, lit in enumerate(lits):
            if prev is not None:
                self.add([-lit, -prev])
            if i < len(lits) - 1:
                cur = self.new()
                self.add([-lit, cur])
                if prev is not None:
                    self.add([-prev, cur])
                prev = cur

    def counter(self, lits: Sequence[int], ubound: int | None = None, exact: bool = False) -> list[int]:
        """Unary count of ``lits`` (a totalizer): out[t] is true when at least t+1 are.

        With ``exact`` the outputs are also forced false below the count, so
        they pin it from both sides; with ``ubound`` outputs stop at ubound+1.
        """
        lits = list(lits)
        if not lits:
            return []
        if len(lits) == 1:
            return lits
        mid = len(lits) // 2
        a = self.counter(lits[:mid], ubound, exact)
        b = self.counter(lits[mid:], ubound, exact)
        n = len(a) + len(b)
        if ubound is not None and not exact:
            n = min(n, ubound + 1)
        out = list(range(self.top + 1, self.top + n + 1))
        self.top += n
        append = self.clauses.append
        for i in range(len(a) + 1):
            for j in range(len(b) + 1):
                if i + j:
                    last = out[min(i + j, n) - 1]
                    if i and j:
                        append([-a[i - 1], -b[j - 1], last])
                    else:
                        append([-a[i - 1], last] if i else [-b[j - 1], last])
                if exact and i + j < n:
                    append(([a[i]] if i < len(a) else []) + ([b[j]] if j < len(b) else [])
                           + [-out[i + j]])
        return out


NODES_PER_STEP = 8   # a local-search evaluation is charged one step per this many nodes (and one more)


def solve_within(solver, assumptions: Sequence[int], deadline: int, meter: Meter) -> bool | None:
    """Solve within the work left before ``deadline`` (steps on ``meter``): a
    conflict and a propagation budget, both counted, so the answer does not
    depend on the machine's speed or load.  None when the work ran out.  The
    wall-clock safety cap interrupts a solve that outlives it (exit 4)."""
    remaining = deadline - meter.now()
    if remaining <= 0:
        return None
    solver.conf_budget(remaining)
    solver.prop_budget(remaining * PROPAGATIONS_PER_STEP)
    stats = solver.accum_stats()
    before = stats.get("conflicts", 0), stats.get("propagations", 0)
    wall = meter.wall_left()
    if wall <= 0:
        raise meter.cap_error()
    timer = threading.Timer(wall, solver.interrupt)
    timer.start()
    try:
        result = solver.solve_limited(assumptions=list(assumptions), expect_interrupt=True)
    finally:
        timer.cancel()
        solver.clear_interrupt()
    stats = solver.accum_stats()
    meter.charge(stats.get("conflicts", 0) - before[0]
                 + (stats.get("propagations", 0) - before[1]) // PROPAGATIONS_PER_STEP)
    if result is None:
        meter.check_wall()
    return result


def new_solver(clauses: list[list[int]]):
    from pysat.solvers import Glucose4

    return Glucose4(bootstrap_with=clauses)


@dataclass
class _Costing:
    """Units per cell, chips per part and the two objective counters of one model."""

    unit_lits: dict[int, list[int]] = field(default_factory=dict)
    chip_count: list[int] = field(default_factory=list)
    gate_count: list[int] = field(default_factory=list)


def add_costing(cnf: Cnf, cells: Sequence[Cell], unit_lits: dict[int, list[int]]) -> _Costing:
    """Bin limits per cell, a chip variable per chip that may be opened, both counters."""
    chip_vars: dict[str, list[int]] = {}
    unary_units: list[int] = []
    for index, lits in unit_lits.items():
        if not lits:
            continue
        cell = cells[index]
        cap = cell.capacity
        out = cnf.counter(lits, ubound=cap)
        if len(out) > cap:
            cnf.add([-out[cap]])
            out = out[:cap]
        unary_units.extend(out)
        ys = chip_vars.setdefault(cell.part, [cnf.new() for _ in range(cell.chips)])
        for c in range(cell.chips):
            t = c * cell.units_per_chip
            if t < len(out):
                cnf.add([-out[t], ys[c]])
    all_chips = [y for ys in chip_vars.values() for y in ys]
    return _Costing(unit_lits, cnf.counter(all_chips), cnf.counter(unary_units))


def minimise(solver, costing: _Costing, deadline: int, meter: Meter, count_chips, count_gates,
              fixed: Sequence[int] = (), incumbent: Cost | None = None
              ) -> tuple[list[int] | None, bool, Cost | None]:
    """Chips first, then gates, by bound tightening.

    Returns (model, proven, (chips, gates)); proven means both minima were
    closed by an UNSAT answer before the deadline.  With an ``incumbent``
    (a solution known from elsewhere) the search starts below it and a None
    model with proven=True means the incumbent is minimal.
    """
    if incumbent is None:
        result = solve_within(solver, fixed, deadline, meter)
        if not result:
            return None, result is False, None
        model = solver.get_model()
        chips, gates = count_chips(model), count_gates(model)
    else:
        model, chips, gates = None, incumbent.chips, incumbent.gates
    proven = True
    while 0 < chips <= len(costing.chip_count):
        result = solve_within(solver, list(fixed) + [-costing.chip_count[chips - 1]], deadline, meter)
        if result is None:
            return model, False, Cost(chips, gates)
        if not result:
            break
        model = solver.get_model()
        chips, gates = count_chips(model), count_gates(model)
    keep = list(fixed) + ([-costing.chip_count[chips]] if chips < len(costing.chip_count) else [])
    while 0 < gates <= len(costing.gate_count):
        result = solve_within(solver, keep + [-costing.gate_count[gates - 1]], deadline, meter)
        if result is None:
            proven = False
            break
        if not result:
            break
        model = solver.get_model()
        gates = count_gates(model)
    return model, proven, Cost(chips, gates)
