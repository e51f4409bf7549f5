"""Covers -> a gate network over the gates the bin really holds (the mapper).

Interface:

- ``Cell``: one usable unit kind of the bin (part type, unit op, width, units
  per chip, chips available, Schmitt flag, typical delay at the supply).
- ``Library``: the cells of one bin at one supply; ``build_library(bin,
  catalog, *, reserved=None) -> Library``; ``Library.restricted(parts)``,
  ``Library.with_extra(part, chips=1)``.
- ``map_design(functions, nvars, var_nets, library, *, polarity, cover=None,
  exact='auto', effort=None, steps=None, glitch_free=()) -> Network``;
  it raises ``ShortError`` (proven impossible, with a reason a person can
  check) or ``NotFoundError`` (the effort ran out; what was proven).
- ``chips_of(gates, library) -> dict[part, chips]``.
- ``parse_target(text) -> Target``; ``Construction``; ``substitute(target,
  library, *, either_polarity=False, limit=5, effort=None) ->
  list[Construction]`` (ranked by chips, then gates, then depth).

Objective everywhere: chips taken from the bin, then gates, then logic depth,
compared in that order, never more units of a part than the bin holds.

Two engines, both over python-sat:

1. Structure selection (every design).  The two-level covers of both phases
   of every signal (the given one and one minimized for the other phase) are
   read as AND nodes with complemented edges (a term is an AND of literals, a
   sum is NOT AND of NOT terms).  Each cover of three or more terms is also
   offered in literal-factored form (a window of a long count becomes two
   comparator chains instead of a quadratic sum of products), and designs
   past exact synthesis also get common pairs of literals extracted across
   all signals' terms, one shared node per pair.  Every node may be built by any gate tree the
   bin offers: a dynamic programme over the number of fan-ins enumerates the
   Pareto-best trees (units per cell, depth) mixing AND/NAND/OR/NOR of every
   width on hand, 2:1 muxes as AND2/OR2, and inverters (real ones, NAND/NOR
   with joined inputs, XOR tied high, XNOR tied low, a mux with its data pins
   on the rails).  That covers cascades (two 3-input ANDs for a 4-input AND),
   De Morgan forms (NAND-NAND, NOR-NOR from the complement's cover, NOR of
   NANDs) and alternating trees.  Programmable units add per-signal choices:
   a 2^s:1 mux realises any function of s select variables plus one literal
   on its data pins; a decoder's outputs are minterms, OR-ed by gates (one
   decoder shared by every signal over the same select variables and enable
   wiring; a cover's common literals may sit on the enable pins).  A SAT
   model then chooses, per signal, a phase and a structure, per node a tree,
   per complemented net one inverting unit, counts units per cell with
   totalizers and opens whole chips; the chips and then the gates are pushed
   down by bound tightening.  A finished search proves the minimum *over these
   candidate structures*; it is reported as such, never as a global proof.
2. Exact synthesis (small designs): the published SAT encoding of a k-gate
   circuit (gate types, fan-in selection and simulation variables per
   minterm), here over the bin's gate types with per-part unit caps, rails
   as constants for XOR/mux pins, joined inputs, free output phases and
   don't cares, for k = lower bound, lower bound + 1, ...; each k is also
   minimized for chips.  A size that cannot be settled within its slice of
   the work is passed over and taken up again at the end (the proof then
   waits on it), so a hard "no k-gate circuit" proof does not keep the
   search from the next size, which often has a circuit.  It finds multi-level optima such as XOR from four
   NANDs.  When it runs to its stopping rule the result is "proven minimal
   (chips, then gates) over all circuits of the bin's gates, inverters and
   2:1 muxes"; wider muxes and decoders are outside that claim.

Work, not time: every search here is bounded by steps on one ``effort.Meter``
per mapping (SAT conflicts and propagations, local-search evaluations), so
what it finds depends on the design and the effort level only, never on how
busy the machine is; a wall-clock safety cap (exit 4, said plainly) stops a
machine far slower than expected.

Depth is only a tie-break (the tree enumeration keeps the shallower of two
trees with equal units); it is reported, not proven.  The local search (for
designs too large for the SAT selection) starts from the cheapest option per
signal and trees fitted top-down to the phases their users ask for.  Both engines are capped
in work and size and fall back to "best found" with a lower bound.  The
finished network is simulated (zero delay, ``evaluate_words``) on every
minterm each signal cares about; a mismatch raises ``InternalError``.

Library rules (the mapper's choices):

- Chips ``reserved`` for counters or switches are not offered at all; their
  spare sections are not used for logic (a partly used 4053 keeps its spares).
- A 4068/4078 offers its main (NAND/NOR) output only; the second (AND/OR)
  output is not used, since the network's gate record carries one function.
- Mux units that share their select pins with other units of the chip (the
  74HC153, 74HC157) count as one logic element per chip.
- Analog switch sections (4053 SPDT) appear in the library and in
  ``substitute``, but ``map_design`` does not use them as logic (packing
  places them for spec switches only); a signal that only drives a switch is
  given polarity 'free' by the caller, and packing swaps the throws.
"""

from __future__ import annotations

import itertools
import threading
from dataclasses import dataclass, field, replace
from typing import Iterable, Literal, Mapping, Sequence

from .effort import PROPAGATIONS_PER_STEP, Effort, Meter, effort_named
from .errors import InternalError, NotFoundError, Shortage, ShortError, UsageError
from .inventory import Bin, Catalog, Part
from .network import Gate, Network, SignalOut, counting_words, evaluate_gate, evaluate_words

__all__ = ["Cell", "Library", "build_library", "map_design", "chips_of", "EXACT_MAX_VARS",
           "EXACT_MAX_GATES"]

Polarity = Literal["high", "low", "free"]

EXACT_MAX_VARS = 6        # exact synthesis in 'auto' mode: at most this many variables ...
EXACT_MAX_GATES = 12      # ... and circuits of at most this many gates
EXACT_MAX_OUTPUTS = 4     # ... and this many signals needing gates
TREE_KEEP = 3             # trees kept per (fan-ins, phase, complemented leaves)
GATE_OPS = ("and", "nand", "or", "nor")
# A gate op as an AND over its inputs: (input phase a, output phase b), so that
# op(x1..xk) = b XOR AND(x1^a, ..., xk^a).  De Morgan, common practice.
AND_FORM = {"and": (0, 0), "nand": (0, 1), "nor": (1, 0), "or": (1, 1)}
NEUTRAL_RAIL = {"and": "VDD", "nand": "VDD", "or": "VSS", "nor": "VSS",
                "xor": "VSS", "xnor": "VSS"}


# ---------------------------------------------------------------- the library

@dataclass(frozen=True)
class Cell:
    """One kind of usable unit in the bin, with how many the bin can give.

    ``op``: and nand or nor xor xnor not buf mux decoder spdt.  ``width`` is
    the number of logic inputs (data pins for a mux, selects for a decoder).
    """

    part: str
    op: str
    width: int
    units_per_chip: int
    chips: int
    schmitt: bool = False
    delay: float | None = None
    unit_ids: tuple[str, ...] = ()
    selects: int = 0
    output_inv: bool = False
    active: str = "high"
    enables: tuple[str, ...] = ()
    codes: int = 0
    shared_select: bool = False
    mapped: bool = True

    @property
    def capacity(self) -> int:
        """Units the bin can supply."""
        return self.units_per_chip * self.chips

    def label(self) -> str:
        """``4073 and3``, ``74HC151 mux8``, ``4069 not``."""
        if self.op in ("not", "buf"):
            kind = self.op + (" (Schmitt)" if self.schmitt else "")
        elif self.op == "decoder":
            kind = f"decoder {self.width}-to-{self.codes}"
        else:
            kind = f"{self.op}{self.width}" + (" (Schmitt)" if self.schmitt else "")
        return f"{self.part} {kind}"


@dataclass
class Library:
    """The logic cells of one bin at one supply (the mapper's whole world)."""

    cells: list[Cell]
    supply: float
    catalog: Catalog
    available: dict[str, int]
    reserved: dict[str, int] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    source: str = ""
    cache: dict = field(default_factory=dict, repr=False, compare=False)

    def parts(self) -> list[str]:
        return sorted({c.part for c in self.cells})

    def restricted(self, parts: Iterable[str]) -> "Library":
        """The same bin with only these part types."""
        keep = set(parts)
        return Library([c for c in self.cells if c.part in keep], self.supply, self.catalog,
                       {p: n for p, n in self.available.items() if p in keep},
                       dict(self.reserved), list(self.notes), self.source)

    def with_extra(self, part_type: str, chips: int = 1) -> "Library":
        """The bin with ``chips`` more of ``part_type`` (to test a suggested fix)."""
        available = dict(self.available)
        available[part_type] = available.get(part_type, 0) + chips
        cells = [c for c in self.cells if c.part != part_type]
        cells += cells_of_part(self.catalog.parts[part_type], available[part_type], self.supply)
        return Library(cells, self.supply, self.catalog, available, dict(self.reserved),
                       list(self.notes), self.source)

    def mapped(self) -> "Library":
        """Only the cells packing can place in a plan."""
        lib = Library([c for c in self.cells if c.mapped], self.supply, self.catalog,
                      dict(self.available), dict(self.reserved), list(self.notes), self.source)
        return lib


def build_library(bin: Bin, catalog: Catalog, *, reserved: Mapping[str, int] | None = None) -> Library:
    """Every logic unit kind of the bin's parts, minus the chips already reserved."""
    reserved = dict(reserved or {})
    cells: list[Cell] = []
    available: dict[str, int] = {}
    notes: list[str] = []
    for part_type, count in sorted(bin.parts.items()):
        chips = count - reserved.get(part_type, 0)
        part = catalog.parts[part_type]
        kinds = cells_of_part(part, max(chips, 0), bin.supply)
        if not kinds:
            continue
        if chips <= 0:
            notes.append(f"{part_type}: all {count} reserved for counters or switches")
            continue
        available[part_type] = chips
        cells.extend(kinds)
    return Library(cells, bin.supply, catalog, available, reserved, notes, bin.path)


def cells_of_part(part: Part, chips: int, supply: float) -> list[Cell]:
    """The logic cells one part type offers (identical units grouped)."""
    groups: dict[tuple, list] = {}
    for unit in part.units:
        f = unit.fields
        if unit.type == "gate" and f.get("op") in AND_FORM or (unit.type == "gate" and f.get("op") in ("xor", "xnor")):
            key = (f["op"], len(f["inputs"]), bool(f.get("schmitt")), False, 0, "high", (), False)
        elif unit.type == "inverter":
            key = ("not", 1, bool(f.get("schmitt")), False, 0, "high", (), False)
        elif unit.type == "buffer":
            key = ("buf", 1, False, False, 0, "high", (), False)
        elif unit.type == "mux":
            shared = any(p in part.shared for p in f["selects"])
            key = ("mux", len(f["data"]), False, bool(f.get("output_inv")), len(f["selects"]),
                   "high", (), shared)
        elif unit.type == "decoder":
            shared = any(p in part.shared for p in f["selects"])
            enables = tuple(str(e.get("active", "high")) for e in f.get("enables") or ())
            key = ("decoder", len(f["selects"]), False, False, len(f["outputs"]),
                   str(f.get("active", "high")), enables, shared)
        elif unit.type == "spdt":
            key = ("spdt", 2, False, False, 1, "high", (), False)
        else:
            continue
        groups.setdefault(key, []).append(unit.id)
    cells = []
    for (op, width, schmitt, inv, extra, active, enables, shared), ids in groups.items():
        timing_key = "select" if op == "spdt" and part.timing.get("select") else "tpd"
        cells.append(Cell(
            part=part.type, op=op, width=width,
            units_per_chip=1 if shared else len(ids), chips=chips, schmitt=schmitt,
            delay=part.delay_ns(timing_key, supply), unit_ids=tuple(ids),
            selects=extra if op in ("mux", "spdt") else width if op == "decoder" else 0,
            output_inv=inv, active=active, enables=enables,
            codes=extra if op == "decoder" else 0, shared_select=shared,
            mapped=op != "spdt"))
    return cells


def chips_of(gates: Sequence[Gate], library: Library) -> dict[str, int]:
    """Whole chips per part that these gates take (units shared across signals)."""
    units: dict[int, int] = {}
    for gate in gates:
        index = _cell_of_gate(gate, library)
        units[index] = units.get(index, 0) + 1
    return _chips_from_units(units, library.cells)


def _cell_of_gate(gate: Gate, library: Library) -> int:
    width = _gate_width(gate)
    for i, cell in enumerate(library.cells):
        op = "mux" if cell.op == "spdt" else cell.op
        if cell.part == gate.part and op == gate.op and cell.width == width:
            return i
    raise InternalError(f"gate {gate.id} ({gate.part} {gate.op}) matches no cell of the library")


def _gate_width(gate: Gate) -> int:
    if gate.op == "mux":
        for k in range(1, 5):
            if (1 << k) + k == len(gate.inputs):
                return 1 << k
    if gate.op == "decoder":
        return len(gate.inputs) - len(gate.enables_active)
    return len(gate.inputs)


def _chips_from_units(units: Mapping[int, int], cells: Sequence[Cell]) -> dict[str, int]:
    chips: dict[str, int] = {}
    for index, count in units.items():
        if count <= 0:
            continue
        cell = cells[index]
        need = -(-count // cell.units_per_chip)
        chips[cell.part] = max(chips.get(cell.part, 0), need)
    return dict(sorted(chips.items()))


# ---------------------------------------------------------------- gate kinds

@dataclass(frozen=True)
class _AndKind:
    """A cell used as an AND with input phase ``a`` and output phase ``b``."""

    cell: int
    a: int
    b: int
    width: int
    form: str            # 'gate', 'mux_and', 'mux_or'


@dataclass(frozen=True)
class _InvKind:
    """A cell used as an inverter, and how its other pins are held."""

    cell: int
    form: str            # 'not', 'joined', 'xor_high', 'xnor_low', 'mux_rails'


def _and_kinds(cells: Sequence[Cell]) -> list[_AndKind]:
    kinds = []
    for i, c in enumerate(cells):
        if c.op in AND_FORM and c.width >= 2:
            a, b = AND_FORM[c.op]
            kinds.append(_AndKind(i, a, b, c.width, "gate"))
        elif c.op in ("mux", "spdt") and c.width == 2:
            kinds.append(_AndKind(i, 0, 0, 2, "mux_and"))
            kinds.append(_AndKind(i, 1, 1, 2, "mux_or"))
    return kinds


def _inv_kinds(cells: Sequence[Cell]) -> list[_InvKind]:
    forms = {"not": "not", "nand": "joined", "nor": "joined", "xor": "xor_high",
             "xnor": "xnor_low", "mux": "mux_rails", "spdt": "mux_rails"}
    return [_InvKind(i, forms[c.op]) for i, c in enumerate(cells)
            if c.op in forms and not (c.op in ("xor", "xnor") and c.width < 2)]


# ---------------------------------------------------------------- gate trees

@dataclass(frozen=True)
class _Tree:
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
    return x[2] <= y[2] and all(a <= b for a, b in zip(x[0], y[0]))


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
    return tuple(a + b for a, b in zip(u, v))


class _TreeTable:
    """Pareto-best gate trees for an AND of k leaves, built once per library.

    ``table[k][b][n1]`` lists entries (units, n1, depth, shape): trees whose
    output is AND(leaves) XOR b, with n1 of the leaves fed complemented.
    """

    def __init__(self, ncells: int, kinds: list[_AndKind], invs: list[_InvKind]) -> None:
        self.ncells, self.kinds, self.invs = ncells, kinds, invs
        zero = (0,) * ncells
        self.table: dict[int, dict[int, dict[int, list]]] = {
            1: {0: {0: [(zero, 0, 0, ("leaf", 0))]}, 1: {1: [(zero, 1, 0, ("leaf", 1))]}}}
        # fold[g][i][s]: dict n1 -> entries (units, n1, depth, children) of i children, s leaves
        self.fold = [{1: {1: {kind.a: [(zero, kind.a, 0, (("leaf", kind.a),))]}}} for kind in kinds]
        self.top = 1

    def trees(self, k: int) -> list[_Tree]:
        """Every kept tree for an AND of k fan-ins, both output phases."""
        while self.top < k:
            self._grow()
        out = []
        for b, by_n1 in self.table[k].items():
            for n1, entries in by_n1.items():
                out.extend(_Tree(e[0], n1, e[2], b, e[3]) for e in entries)
        return out

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


_TREE_TABLES: dict[tuple, _TreeTable] = {}


def _tree_table(library_cells: Sequence[Cell], cache: dict) -> _TreeTable:
    """One table per list of cell kinds (how many chips the bin holds does not matter)."""
    key = ("trees", tuple(replace(c, chips=0) for c in library_cells))
    if key not in _TREE_TABLES:
        if len(_TREE_TABLES) > 32:
            _TREE_TABLES.clear()
        _TREE_TABLES[key] = _TreeTable(len(library_cells), _and_kinds(library_cells),
                                       _inv_kinds(library_cells))
    return _TREE_TABLES[key]


# ---------------------------------------------------------------- the problem

@dataclass(frozen=True)
class _Signal:
    """One signal to deliver: its asserted minterms, the ones it cares about."""

    name: str
    on: frozenset[int]
    care: frozenset[int]
    polarity: str

    def value(self, minterm: int) -> bool:
        return minterm in self.on


@dataclass
class _Problem:
    nvars: int
    var_nets: tuple[str, ...]
    signals: list[_Signal]

    @property
    def minterms(self) -> list[int]:
        """Every minterm some signal cares about (the simulation set)."""
        return sorted(set().union(*(s.care for s in self.signals))) if self.signals else []


def _constant_level(sig: _Signal) -> bool | None:
    """True/False when the signal is constant over its care set, else None."""
    if not sig.on:
        return False
    if sig.on >= sig.care:
        return True
    return None


def _literal_of(sig: _Signal, nvars: int) -> tuple[int, int] | None:
    """(variable, complemented) when the signal is one counter output (or its complement)."""
    for i in range(nvars):
        ones = {m for m in sig.care if m >> i & 1}
        if ones == sig.on:
            return i, 0
        if sig.care - ones == sig.on:
            return i, 1
    return None


def _needed_support(sig: _Signal, nvars: int) -> set[int]:
    """Variables every completion of the signal depends on (a lower bound)."""
    need = set()
    for i in range(nvars):
        bit = 1 << i
        if any((m ^ bit) in sig.care and ((m ^ bit) in sig.on) != (m in sig.on)
               for m in sig.care if not m & bit):
            need.add(i)
    return need


# ---------------------------------------------------------------- SAT helpers

class _Cnf:
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
        out = [self.new() for _ in range(n)]
        for i in range(len(a) + 1):
            for j in range(len(b) + 1):
                if i + j:
                    k = min(i + j, n)
                    self.add(([-a[i - 1]] if i else []) + ([-b[j - 1]] if j else []) + [out[k - 1]])
                if exact and i + j < n:
                    self.add(([a[i]] if i < len(a) else []) + ([b[j]] if j < len(b) else [])
                             + [-out[i + j]])
        return out


NODES_PER_STEP = 8   # a local-search evaluation is charged one step per this many nodes (and one more)


def _solve(solver, assumptions: Sequence[int], deadline: int, meter: Meter) -> bool | None:
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


def _new_solver(clauses: list[list[int]]):
    from pysat.solvers import Glucose4

    return Glucose4(bootstrap_with=clauses)


@dataclass
class _Costing:
    """Units per cell, chips per part and the two objective counters of one model."""

    unit_lits: dict[int, list[int]] = field(default_factory=dict)
    chip_count: list[int] = field(default_factory=list)
    gate_count: list[int] = field(default_factory=list)


def _add_costing(cnf: _Cnf, cells: Sequence[Cell], unit_lits: dict[int, list[int]]) -> _Costing:
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


def _minimise(solver, costing: _Costing, deadline: int, meter: Meter, count_chips, count_gates,
              fixed: Sequence[int] = (), incumbent: tuple[int, int] | None = None
              ) -> tuple[list[int] | None, bool, tuple[int, int] | None]:
    """Chips first, then gates, by bound tightening.

    Returns (model, proven, (chips, gates)); proven means both minima were
    closed by an UNSAT answer before the deadline.  With an ``incumbent``
    (a solution known from elsewhere) the search starts below it and a None
    model with proven=True means the incumbent is minimal.
    """
    if incumbent is None:
        result = _solve(solver, fixed, deadline, meter)
        if not result:
            return None, result is False, None
        model = solver.get_model()
        chips, gates = count_chips(model), count_gates(model)
    else:
        model, (chips, gates) = None, incumbent
    proven = True
    while 0 < chips <= len(costing.chip_count):
        result = _solve(solver, list(fixed) + [-costing.chip_count[chips - 1]], deadline, meter)
        if result is None:
            return model, False, (chips, gates)
        if not result:
            break
        model = solver.get_model()
        chips, gates = count_chips(model), count_gates(model)
    keep = list(fixed) + ([-costing.chip_count[chips]] if chips < len(costing.chip_count) else [])
    while 0 < gates <= len(costing.gate_count):
        result = _solve(solver, keep + [-costing.gate_count[gates - 1]], deadline, meter)
        if result is None:
            proven = False
            break
        if not result:
            break
        model = solver.get_model()
        gates = count_gates(model)
    return model, proven, (chips, gates)


# ---------------------------------------------------------------- candidate structures

@dataclass(frozen=True)
class _Node:
    """An AND over literals of nets; the node's value is that AND XOR ``invert``.

    Net references: ``('v', i)`` counter variable i, ``('n', id)`` another
    node, ``('d', decoder, code)`` one decoder output (its minterm).
    """

    fanins: tuple[tuple[tuple, int], ...]
    invert: int


@dataclass(frozen=True)
class _Option:
    """One way to deliver a signal.

    'sop' and 'dec': the signal equals the value of ``net`` XOR ``e``.
    'mux': one mux unit whose data pins hold rails or a literal, delivering
    the fixed ``polarity``.
    """

    signal: str
    kind: str
    net: tuple | None = None
    e: int = 0
    polarity: str | None = None
    cell: int | None = None
    data: tuple = ()
    selects: tuple = ()
    inverted_output: bool = False
    needs: tuple = ()


@dataclass
class _Candidates:
    nodes: list[_Node] = field(default_factory=list)
    index: dict = field(default_factory=dict)
    options: dict[str, list[_Option]] = field(default_factory=dict)
    decoders: list[tuple[int, tuple[int, ...]]] = field(default_factory=list)   # (cell, select vars)
    decoder_enables: list[tuple] = field(default_factory=list)   # per enable pin: a var or None
    decoder_index: dict = field(default_factory=dict)

    def node(self, key: tuple, fanins: tuple, invert: int) -> tuple:
        if key not in self.index:
            self.index[key] = len(self.nodes)
            self.nodes.append(_Node(fanins, invert))
        return ("n", self.index[key])

    def add_option(self, option: _Option) -> None:
        options = self.options.setdefault(option.signal, [])
        if option not in options:
            options.append(option)


def _cube_vars(cube: tuple[int, int], nvars: int) -> list[int]:
    return [i for i in range(nvars) if cube[0] >> i & 1]


def _literal_net(cube: tuple[int, int], nvars: int) -> tuple[tuple, int]:
    """A one-literal cube as (net, complemented)."""
    (i,) = _cube_vars(cube, nvars)
    return ("v", i), 0 if cube[1] >> i & 1 else 1


NODE_FANIN_MAX = 16       # wider AND nodes are split into nodes of at most this many fan-ins


def _and_node(cands: _Candidates, key: tuple, fanins: tuple, invert: int) -> tuple:
    """An AND node; past NODE_FANIN_MAX (16) fan-ins, an AND of AND nodes over balanced
    slices (the tree table then never grows past that width: a 38-term sum
    would take seconds to tabulate and gains nothing from one flat tree)."""
    if len(fanins) > NODE_FANIN_MAX:
        parts = -(-len(fanins) // NODE_FANIN_MAX)
        size = -(-len(fanins) // parts)
        slices = [fanins[i:i + size] for i in range(0, len(fanins), size)]
        fanins = tuple((_and_node(cands, ("a", piece), piece, 0), 0) for piece in slices)
    return cands.node(key, fanins, invert)


def _term(cands: _Candidates, cube: tuple[int, int], nvars: int) -> tuple[tuple, int]:
    """The net (and complement flag) carrying one product term."""
    vars_ = _cube_vars(cube, nvars)
    if len(vars_) == 1:
        return _literal_net(cube, nvars)
    fanins = tuple((("v", i), 0 if cube[1] >> i & 1 else 1) for i in vars_)
    return _and_node(cands, ("t", cube), fanins, 0), 0


def _sum(cands: _Candidates, terms: Sequence[tuple[tuple, int]]) -> tuple[tuple, int]:
    """OR of nets: as NOT AND of their complements (De Morgan)."""
    if len(terms) == 1:
        return terms[0]
    fanins = tuple(sorted((net, c ^ 1) for net, c in terms))
    return _and_node(cands, ("s", fanins), fanins, 1), 0


@dataclass(frozen=True)
class _Form:
    """A signal's cover in one phase: the cubes realise f XOR k."""

    k: int
    cubes: tuple[tuple[int, int], ...]

    def support(self, nvars: int) -> list[int]:
        return sorted({i for c in self.cubes for i in _cube_vars(c, nvars)})

    def value(self, minterm: int) -> bool:
        return any((minterm & m) == (v & m) for m, v in self.cubes)


def _forms(problem: _Problem, covers: Sequence) -> dict[str, list[_Form]]:
    forms: dict[str, list[_Form]] = {}
    for sig in problem.signals:
        for cover in covers:
            if sig.name not in cover.outputs:
                continue
            k = 1 if cover.phases.get(sig.name) == "complement" else 0
            form = _Form(k, tuple(cover.cubes(sig.name)))
            if form.cubes and (0, 0) not in form.cubes and form not in forms.get(sig.name, []):
                forms.setdefault(sig.name, []).append(form)
    return forms


def _common_cube(cubes: Sequence[tuple[int, int]]) -> tuple[int, int]:
    """The literals every cube has, as a cube (mask, value)."""
    mask, value = ~0, cubes[0][1]
    for m, v in cubes:
        mask &= m & ~(v ^ value)
    return mask, value & mask


FACTOR_MIN_CUBES = 3      # covers of at least this many cubes are also offered in factored form


def _factored(cands: _Candidates, cubes: Sequence[tuple[int, int]], nvars: int) -> tuple[tuple, int]:
    """A sum of products as a multi-level AND/OR form by literal factoring
    (divide by the most frequent literal and its common cube, recurse on the
    quotient and the remainder; Brayton's algebraic factoring).  A window of
    counter states, whose two-level cover grows with the square of the bits,
    becomes a comparator chain of about two gates per bit; identical
    sub-forms of different signals are one node."""
    terms: list[tuple[tuple, int]] = []
    rest = list(cubes)
    while True:
        counts: dict[tuple[int, int], int] = {}
        for m, v in rest:
            for i in _cube_vars((m, v), nvars):
                lit = (i, v >> i & 1)
                counts[lit] = counts.get(lit, 0) + 1
        if not counts or max(counts.values()) < 2:
            break
        (i, bit), _ = max(counts.items(), key=lambda kv: (kv[1], -kv[0][0], kv[0][1]))
        having = [c for c in rest if c[0] >> i & 1 and (c[1] >> i & 1) == bit]
        rest = [c for c in rest if c not in having]
        common = _common_cube(having)
        common_mask = common[0]
        quotient = sorted({(m & ~common_mask, v & ~common_mask) for m, v in having})
        fanins = [(("v", j), 0 if common[1] >> j & 1 else 1) for j in _cube_vars(common, nvars)]
        if all(m for m, _ in quotient):          # an empty quotient cube would absorb the rest
            fanins.append(_factored(cands, quotient, nvars))
        if len(fanins) == 1:
            terms.append(fanins[0])
        else:
            key = ("fp", common, tuple(quotient))
            terms.append((_and_node(cands, key, tuple(sorted(fanins)), 0), 0))
    terms += [_term(cands, cube, nvars) for cube in rest]
    return _sum(cands, terms)


EXTRACT_MAX_CUBES = 400   # distinct cubes up to which common pairs are extracted across signals


def _extracted_terms(cands: _Candidates, cubes: Sequence[tuple[int, int]], nvars: int
                     ) -> dict[tuple[int, int], tuple[tuple, int]]:
    """Each cube as a net after common-cube extraction across every signal's
    terms: while some pair of fan-ins (literals or extracted pairs) occurs in
    two or more terms, it becomes one AND node used by all of them (greedy
    algebraic cube extraction, most frequent pair first).  ``x3' x2 x1`` and
    ``x3 x2 x1`` then share the gate for ``x2 x1``."""
    rows = {cube: [(("v", i), 0 if cube[1] >> i & 1 else 1) for i in _cube_vars(cube, nvars)]
            for cube in cubes}
    while True:
        counts: dict[tuple, int] = {}
        for items in rows.values():
            if len(items) < 3:
                continue                  # a pair that is the whole term gains nothing
            for a, b in itertools.combinations(sorted(items), 2):
                counts[(a, b)] = counts.get((a, b), 0) + 1
        if not counts:
            break
        pair, count = max(counts.items(), key=lambda kv: (kv[1], kv[0]))
        if count < 2:
            break
        divisor = (_and_node(cands, ("x", pair), pair, 0), 0)
        for cube, items in rows.items():
            if len(items) >= 3 and pair[0] in items and pair[1] in items:
                rows[cube] = [it for it in items if it not in pair] + [divisor]
    out = {}
    for cube, items in rows.items():
        if len(items) == 1:
            out[cube] = items[0]
        else:
            fanins = tuple(sorted(items))
            out[cube] = (_and_node(cands, ("xt", fanins), fanins, 0), 0)
    return out


def _candidates(problem: _Problem, forms: dict[str, list[_Form]], cells: Sequence[Cell]) -> _Candidates:
    cands = _Candidates()
    n = problem.nvars
    for sig in problem.signals:
        for form in forms.get(sig.name, []):
            net, c = _sum(cands, [_term(cands, cube, n) for cube in form.cubes])
            cands.add_option(_Option(sig.name, "sop", net, c ^ form.k))
            if len(form.cubes) >= FACTOR_MIN_CUBES:
                net, c = _factored(cands, form.cubes, n)
                cands.add_option(_Option(sig.name, "sop", net, c ^ form.k))
    every_cube = sorted({cube for fs in forms.values() for f in fs for cube in f.cubes})
    if len(problem.signals) > 1 and problem.nvars > EXACT_MAX_VARS and len(every_cube) <= EXTRACT_MAX_CUBES:
        # over few variables exact synthesis shares sub-terms by itself, and the
        # extra options make the structure selection's proof many times slower
        terms = _extracted_terms(cands, every_cube, n)
        for sig in problem.signals:
            for form in forms.get(sig.name, []):
                net, c = _sum(cands, [terms[cube] for cube in form.cubes])
                cands.add_option(_Option(sig.name, "sop", net, c ^ form.k))
    for ci, cell in enumerate(cells):
        if cell.op == "mux" and cell.mapped:
            for sig in problem.signals:
                for option in _mux_options(sig, forms.get(sig.name, []), ci, cell, n):
                    cands.add_option(option)
        elif cell.op == "decoder":
            _decoder_options(cands, problem, forms, ci, cell)
    return cands


def _mux_options(sig: _Signal, forms: Sequence[_Form], ci: int, cell: Cell, nvars: int) -> list[_Option]:
    """A 2^s:1 mux as a function generator: s select variables, one literal on the data pins."""
    best: dict[str, _Option] = {}
    targets = ("high", "low") if sig.polarity == "free" else (sig.polarity,)
    for form in forms:
        supp = form.support(nvars)
        if len(supp) > cell.selects + 1:
            continue
        residuals = [None] if len(supp) <= cell.selects else supp
        for r in residuals:
            sels = tuple(v for v in supp if v != r)
            for target in targets:
                for inverted in ((False, True) if cell.output_inv else (False,)):
                    flip = form.k ^ (target == "low") ^ inverted
                    data = []
                    for code in range(cell.width):
                        if code >> len(sels):
                            data.append("VSS")
                            continue
                        m = sum(1 << v for b, v in enumerate(sels) if code >> b & 1)
                        v0 = form.value(m) ^ flip
                        if r is None:
                            data.append("VDD" if v0 else "VSS")
                            continue
                        v1 = form.value(m | 1 << r) ^ flip
                        data.append("VDD" if v0 and v1 else "VSS" if not (v0 or v1)
                                    else ("v", r, 0) if v1 else ("v", r, 1))
                    needs = ((("v", r), 1),) if ("v", r, 1) in data else ()
                    option = _Option(sig.name, "mux", polarity=target, cell=ci, data=tuple(data),
                                     selects=sels, inverted_output=inverted, needs=needs)
                    if target not in best or len(needs) < len(best[target].needs):
                        best[target] = option
    return list(best.values())


def _decoder_options(cands: _Candidates, problem: _Problem, forms: dict[str, list[_Form]],
                     ci: int, cell: Cell) -> None:
    """Decoder outputs as minterms, OR-ed by gates; one decoder per set of select
    variables and enable wiring.  A cover whose terms share literals may put them
    on the enables (a 74HC138's G1 takes a true literal, G2A/G2B complemented
    ones): its outputs are then minterms of the selects ANDed with that cube."""
    n = problem.nvars
    keys = sorted({tuple(f.support(n)) for fs in forms.values() for f in fs
                   if len(f.support(n)) <= cell.width}, key=lambda k: (-len(k), k))[:6]
    plain = (None,) * len(cell.enables)
    for sig in problem.signals:
        for form in forms.get(sig.name, []):
            supp = set(form.support(n))
            for key in keys:
                if supp <= set(key):
                    _add_decoder_option(cands, sig, form, ci, cell, key, plain)
            wired = _enable_wiring(form, cell, n)
            if wired is not None:
                key, enables = wired
                _add_decoder_option(cands, sig, form, ci, cell, key, enables)


def _enable_wiring(form: _Form, cell: Cell, nvars: int) -> tuple[tuple[int, ...], tuple] | None:
    """The cover's common cube on the decoder's enable pins and the rest of its
    support on the selects, or None when the pins cannot take it."""
    if not cell.enables:
        return None
    mask, value = _common_cube(form.cubes)
    common = [(i, value >> i & 1) for i in range(nvars) if mask >> i & 1]
    if not common:
        return None
    pins: list[int | None] = [None] * len(cell.enables)
    for var, bit in common:
        wanted = "high" if bit else "low"
        free = [j for j, active in enumerate(cell.enables) if active == wanted and pins[j] is None]
        if not free:
            return None
        pins[free[0]] = var
    key = tuple(v for v in form.support(nvars) if not mask >> v & 1)
    if not key or len(key) > cell.width:
        return None
    return key, tuple(pins)


def _add_decoder_option(cands: _Candidates, sig: _Signal, form: _Form, ci: int, cell: Cell,
                        key: tuple[int, ...], enables: tuple) -> None:
    """One option: the form's codes over ``key`` read off the decoder's outputs.
    Enable literals are the form's common cube (``_enable_wiring``), so the form
    is false wherever an enable is off, as the outputs are."""
    fixed_value = sum(1 << v for j, v in enumerate(enables) if v is not None
                      and cell.enables[j] == "high")       # the enable literals, asserted
    on = [code for code in range(1 << len(key))
          if form.value(fixed_value | sum(1 << v for b, v in enumerate(key) if code >> b & 1))]
    if not on or any(code >= cell.codes for code in on):
        return
    index = (ci, key, enables)
    if index not in cands.decoder_index:
        cands.decoder_index[index] = len(cands.decoders)
        cands.decoders.append((ci, key))
        cands.decoder_enables.append(enables)
    d = cands.decoder_index[index]
    net, c = _sum(cands, [(("d", d, code), 0) for code in on])
    cands.add_option(_Option(sig.name, "dec", net, c ^ form.k))


# ---------------------------------------------------------------- structure selection (SAT)

TRUE = 0  # a "need" that is always met (a counter output in its true form)


@dataclass
class _Chosen:
    """A decoded selection: what to build, before nets get names."""

    options: dict[str, _Option]
    phi: dict[str, int]
    trees: dict[int, _Tree]
    z: dict[int, tuple[int, ...]]
    inverters: dict[tuple, int]          # net -> inverter kind index
    cost: tuple[int, int]


class _Selection:
    """The SAT model over candidate structures (see the module docstring)."""

    def __init__(self, problem: _Problem, cands: _Candidates, cells: Sequence[Cell],
                 table: _TreeTable) -> None:
        self.problem, self.cands, self.cells, self.table = problem, cands, cells, table
        self.cnf = _Cnf()
        self.unit_lits: dict[int, list[int]] = {}
        self.needs: dict[tuple, int] = {}
        self.inv: dict[tuple, int] = {}
        self.iota: dict[tuple, list[tuple[int, int]]] = {}
        self.used = [self.cnf.new() for _ in cands.nodes]
        self.dl = [self.cnf.new() for _ in cands.nodes]
        self.dec_used = [self.cnf.new() for _ in cands.decoders]
        for d, (ci, _) in enumerate(cands.decoders):
            self.unit_lits.setdefault(ci, []).append(self.dec_used[d])
        self.x: dict[int, list[tuple[int, _Tree]]] = {}
        self.zs: dict[int, list[int]] = {}
        self.opt: dict[str, list[tuple[int, _Option]]] = {}
        self.phi: dict[str, int] = {}
        for n in range(len(cands.nodes)):
            self._encode_node(n)
        for sig in problem.signals:
            self._encode_signal(sig)
        self.costing = _add_costing(self.cnf, cells, self.unit_lits)

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
        xs: list[tuple[int, _Tree]] = []
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

    def _encode_signal(self, sig: _Signal) -> None:
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
        return sum(_chips_from_units(units, self.cells).values()), sum(units.values())

    def hints(self) -> list[int]:
        """Preferred phases: the cheapest tree per node, the cheapest option per signal."""
        def tree_key(tree: _Tree) -> tuple:
            return (tree.gates, tree.depth, tree.n1)

        best_tree = {n: min(xs, key=lambda xt: tree_key(xt[1]))[0] for n, xs in self.x.items() if xs}
        cheapest = {n: min(tree.gates for _, tree in xs) for n, xs in self.x.items() if xs}
        lits: list[int] = []
        wanted_nodes: set[int] = set()
        for name, options in self.opt.items():
            def cost(option: _Option) -> float:
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

    def seed(self, chosen: _Chosen) -> list[int]:
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
              incumbent: _Chosen | None = None) -> tuple[_Chosen | None, bool]:
        solver = _new_solver(self.cnf.clauses)
        solver.set_phases(self.seed(incumbent) if incumbent else self.hints())
        try:
            model, proven, cost = _minimise(
                solver, self.costing, deadline, meter,
                lambda m: self.chips_and_gates(m)[0], lambda m: self.chips_and_gates(m)[1],
                incumbent=incumbent.cost if incumbent else None)
        finally:
            solver.delete()
        if model is None:
            return None, proven
        return self._decode(set(l for l in model if l > 0), cost), proven

    def _decode(self, model: set[int], cost: tuple[int, int]) -> _Chosen:
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
        return _Chosen(options, phi, trees, z, inverters, cost)


# ---------------------------------------------------------------- building gates

class _Emitter:
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

    def and_kind(self, kind: _AndKind, nets: Sequence[str]) -> str:
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

    def inverter(self, kind: _InvKind, net: str) -> str:
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


class _Builder:
    """A chosen selection -> gates, emitting each node and complement once."""

    def __init__(self, problem: _Problem, cands: _Candidates, cells: Sequence[Cell],
                 table: _TreeTable, chosen: _Chosen) -> None:
        self.problem, self.cands, self.cells, self.table, self.chosen = problem, cands, cells, table, chosen
        self.em = _Emitter(cells, problem.var_nets)
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

    def signal(self, sig: _Signal) -> SignalOut:
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


# ---------------------------------------------------------------- exact synthesis (SAT)

@dataclass(frozen=True)
class _SatKind:
    """A cell as a gate type of the exact encoding (``width`` input slots)."""

    cell: int
    op: str
    width: int
    consts: tuple[int, ...]      # rail nodes its pins may take (0 = VSS, 1 = VDD)
    symmetric: bool


def _sat_kinds(cells: Sequence[Cell]) -> list[_SatKind]:
    kinds = []
    for i, c in enumerate(cells):
        if c.op in AND_FORM:
            kinds.append(_SatKind(i, c.op, c.width, (), True))
        elif c.op in ("xor", "xnor") and c.width >= 2:
            kinds.append(_SatKind(i, c.op, 2, (1,) if c.op == "xor" else (0,), True))
        elif c.op == "not":
            kinds.append(_SatKind(i, "not", 1, (), True))
        elif c.op in ("mux", "spdt"):
            kinds.append(_SatKind(i, "mux", 3, (0, 1), False))
    return kinds


def _distinct_inputs(kind: _SatKind) -> int:
    return {"not": 1, "xor": 2, "xnor": 2, "mux": 3}.get(kind.op, kind.width)


def _chip_capacities(cells: Sequence[Cell]) -> list[int]:
    """Units per chip for every chip the bin could open, largest first."""
    per_part: dict[str, tuple[int, int]] = {}
    for c in cells:
        upc, chips = per_part.get(c.part, (0, c.chips))
        per_part[c.part] = (max(upc, c.units_per_chip), chips)
    return sorted((upc for upc, chips in per_part.values() for _ in range(chips)), reverse=True)


def _chips_lower_bound(k: int, capacities: Sequence[int]) -> float:
    """Fewest chips that can hold k units (inf when the bin cannot)."""
    total = 0
    for c, cap in enumerate(capacities, start=1):
        total += cap
        if total >= k:
            return c
    return 0 if k == 0 else float("inf")


def _gate_lower_bound(problem: _Problem, kinds: Sequence[_SatKind]) -> float:
    """Gates any circuit needs: a signal over s variables needs a tree joining them."""
    widest = max((_distinct_inputs(k) for k in kinds), default=0)
    bound = 1
    for sig in problem.signals:
        s = len(_needed_support(sig, problem.nvars))
        if s >= 2:
            if widest <= 1:
                return float("inf")
            bound = max(bound, -(-(s - 1) // (widest - 1)))
    return bound


def _monotone_possible(sig: _Signal, nvars: int, low: bool) -> bool:
    """Whether some completion of the delivered level is monotone increasing in the
    counter bits (all a bin without any inverting unit can make from them)."""
    on = sig.care - sig.on if low else sig.on
    off = sig.care - on
    covered = bytearray(1 << nvars)
    for m in on:
        covered[m] = 1
    for i in range(nvars):
        bit = 1 << i
        for m in range(1 << nvars):
            if m & bit and covered[m ^ bit]:
                covered[m] = 1
    return not any(covered[m] for m in off)


def _part_profiles(cells: Sequence[Cell]) -> dict[str, tuple[int, float, bool, int]]:
    """Per part type: (logic units per chip, widest fan-in, can invert, chips on hand)."""
    profiles: dict[str, tuple[int, float, bool, int]] = {}
    for c in cells:
        if c.op in AND_FORM:
            width: float = c.width
        elif c.op in ("xor", "xnor"):
            width = 2
        elif c.op in ("not", "buf"):
            width = 1
        else:                      # wide muxes and decoders: no fan-in argument applies
            width = float("inf")
        inverts = c.op in ("not", "nand", "nor", "xor", "xnor", "mux", "decoder", "spdt") or c.output_inv
        upc, w, inv, chips = profiles.get(c.part, (0, 0, False, c.chips))
        profiles[c.part] = (max(upc, c.units_per_chip), max(w, width), inv or inverts, chips)
    return profiles


def _counting_bounds(problem: _Problem, cells: Sequence[Cell], max_chips: int = 6) -> tuple[float, float]:
    """Lower bounds on (chips, gates) for any circuit of the bin, by counting.

    A signal that depends on s counter bits needs a tree of gates joining
    them (at least ceil((s-1)/(w-1)) gates of fan-in <= w), distinct signals
    need distinct output gates, and a signal no monotone function delivers
    needs an inverting unit.  The chip bound is the fewest chips of which some
    choice from the bin passes all three tests.
    """
    profiles = _part_profiles(cells)
    if not profiles:
        return float("inf"), float("inf")
    n = problem.nvars
    distinct = len({(s.on, s.care) for s in problem.signals})
    widest_support = max((len(_needed_support(s, n)) for s in problem.signals), default=0)
    needs_inversion = any(
        not any(_monotone_possible(s, n, low) for low in ((False, True) if s.polarity == "free"
                                                          else (s.polarity == "low",)))
        for s in problem.signals)

    def gates_needed(width: float) -> float:
        if widest_support <= 1:
            return max(distinct, 1)
        if width <= 1:
            return float("inf")
        tree = 1 if width == float("inf") else -(-(widest_support - 1) // int(width - 1))
        return max(distinct, tree)

    overall_gates = gates_needed(max(p[1] for p in profiles.values()))
    types = sorted(profiles)
    for count in range(1, max_chips + 1):
        for combo in itertools.combinations_with_replacement(types, count):
            if any(combo.count(t) > profiles[t][3] for t in set(combo)):
                continue
            units = sum(profiles[t][0] for t in combo)
            width = max(profiles[t][1] for t in combo)
            if needs_inversion and not any(profiles[t][2] for t in combo):
                continue
            if units >= gates_needed(width):
                return count, overall_gates
    return max_chips + 1, overall_gates


class _ExactInstance:
    """Is there a circuit of exactly k gates (every gate used) for all signals?"""

    def __init__(self, problem: _Problem, cells: Sequence[Cell], kinds: Sequence[_SatKind], k: int) -> None:
        self.problem, self.cells, self.kinds, self.k = problem, cells, kinds, k
        cnf = self.cnf = _Cnf()
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
        self.costing = _add_costing(cnf, cells, unit_lits)
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

    def _function(self, tc: int, kind: _SatKind, u: list[list[int]], v: list[int], M) -> None:
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

    def _symmetry(self, tc: int, kind: _SatKind, sel: list[list[int]]) -> None:
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

    def _output(self, sig: _Signal, base: int, node_value) -> None:
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
        return sum(_chips_from_units(units, self.cells).values())

    def solve(self, deadline: int, meter: Meter, floor: float = 1, ceiling: int | None = None):
        """A k-gate circuit with the fewest chips: (model, finished, (chips, k)).

        ``floor``: no k-gate circuit can take fewer chips; ``ceiling``: only
        circuits of at most that many chips are of interest (the incumbent's).
        """
        solver = _new_solver(self.cnf.clauses)
        try:
            counters = self.costing.chip_count
            cap = [-counters[ceiling]] if ceiling is not None and ceiling < len(counters) else []
            result = _solve(solver, cap, deadline, meter)
            if not result:
                return None, result is False, None
            model = solver.get_model()
            chips = self.chips(model)
            done = True
            while chips > max(1, floor):
                answer = _solve(solver, [-self.costing.chip_count[chips - 1]], deadline, meter)
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
        em = _Emitter(self.cells, self.problem.var_nets)
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


@dataclass
class _Result:
    """A mapped design before it becomes a Network."""

    gates: list[Gate]
    signals: dict[str, SignalOut]
    cost: tuple[int, int]
    proven: bool
    method: str
    lower_bound: int | None = None


LADDER_SLICE = 0.25     # of the work left, the most one circuit size gets before the next is tried
LADDER_MIN_SLICE = 20_000   # steps every circuit size gets at least (within the deadline)


def _exact_search(problem: _Problem, cells: Sequence[Cell], deadline: int, meter: Meter,
                  incumbent: tuple[int, int] | None, max_gates: int = EXACT_MAX_GATES
                  ) -> tuple[_Result | None, bool, float]:
    """Exact synthesis for k = lower bound, ... until no better (chips, gates) can exist.

    Proving that no k-gate circuit exists gets hard just below the optimum,
    so each size first gets a slice of the time; a size left open is passed
    over (the next may have a circuit, found in a fraction of the time) and
    taken up again with the time that remains.  Proven only when every size
    that could beat the result was settled.  Returns (best result or None,
    proven, chip lower bound); proven with no result means no circuit of the
    bin's gate types fits the bin at all.
    """
    kinds = _sat_kinds(cells)
    if not kinds:
        return None, True, float("inf")
    capacities = _chip_capacities([cells[k.cell] for k in kinds])
    k0 = _gate_lower_bound(problem, kinds)
    if k0 == float("inf"):
        return None, True, float("inf")
    state = {"best": None, "bound": incumbent}

    def could_beat(k: int) -> bool:
        lb, bound = _chips_lower_bound(k, capacities), state["bound"]
        return bound is None or lb < bound[0] or (lb == bound[0] and k < bound[1])

    def settle(k: int, until: int) -> bool:
        instance = _ExactInstance(problem, cells, kinds, k)
        bound = state["bound"]
        model, done, cost = instance.solve(until, meter, floor=_chips_lower_bound(k, capacities),
                                           ceiling=bound[0] if bound else None)
        if model is not None and (bound is None or cost < bound):
            gates, signals = instance.build(model)
            state["best"], state["bound"] = _Result(gates, signals, cost, False, "exact synthesis"), cost
        return bool(done)

    open_sizes: list[int] = []
    k, complete = int(k0), True
    while _chips_lower_bound(k, capacities) != float("inf") and could_beat(k):
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
        last = _chips_lower_bound(k, capacities)
        return best, True, last if bound is None else min(bound[0], last)
    floor = min(_chips_lower_bound(size, capacities) for size in open_sizes)
    return best, False, floor if bound is None else min(bound[0], floor)


# ---------------------------------------------------------------- structure selection (local search)

LOCAL_TREES = 12          # trees per node the local search tries
MOVABLE_ALL_NODES = 150   # designs of more nodes climb only where inverters or loose chips are


@dataclass
class _Eval:
    key: tuple
    cost: tuple[int, int]
    nodes: list[int]
    z: dict[int, tuple[int, ...]]
    inverters: dict[tuple, int]
    units: tuple[int, ...] = ()


def _tree_menu(trees: Sequence[_Tree], ncells: int) -> list[_Tree]:
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


class _LocalSearch:
    """Hill climbing over the same candidates: options, trees, inverter units.

    For designs too large for the SAT selection; every move is judged on the
    whole design's (overflow, chips, gates, depth), spare units included.
    """

    def __init__(self, problem: _Problem, cands: _Candidates, cells: Sequence[Cell],
                 table: _TreeTable, meter: Meter) -> None:
        self.problem, self.cands, self.cells, self.table = problem, cands, cells, table
        self.meter = meter
        self.trees = {n: _tree_menu(table.trees(len(node.fanins)), len(cells))
                      for n, node in enumerate(cands.nodes)}
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
        chosen: dict[int, _Tree] = {}         # filled for the nodes the design reaches

        def tree_of(n: int) -> _Tree:
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
            d = 0
            if net[0] == "n":
                d = visit(net[1])
            elif net[0] == "d":
                decs.add(net[1])
                d = 1
            if q != natural(net):
                if net not in complements:
                    complements[net] = len(complements)
                d += 1
            return d

        def visit(n: int) -> int:
            if n in depth_of:
                return depth_of[n]
            depth_of[n] = 0
            t = tree_of(n)
            for c, u in enumerate(t.units):
                if u:
                    units[c] += u
            fanins = nodes[n].fanins
            first, middle, last = [], [], []
            for j, (net, c) in enumerate(fanins):
                p = natural(net)
                (first if p != c else middle if p == c ^ 1 else last).append(j)
            flips = [0] * len(fanins)
            for j in (first + middle + last)[:t.n1]:
                flips[j] = 1
            z[n] = tuple(flips)
            deepest = 0
            for (net, c), f in zip(fanins, flips):
                deepest = max(deepest, require(net, c ^ f))
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
        chips = sum(_chips_from_units(dict(enumerate(units)), cells).values())
        gates = sum(units)
        return _Eval((overflow, chips, gates, depth), (chips, gates), order, z, inverters, tuple(units))

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

    def run(self, deadline: int) -> tuple[_Chosen | None, int]:
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

    def _chosen(self, best: _Eval) -> _Chosen:
        options = {name: self.cands.options[name][i] for name, i in self.opt.items()}
        trees = {n: self.trees[n][self.tree[n]] for n in best.nodes}
        return _Chosen(options, dict(self.phi), trees, {n: best.z[n] for n in best.nodes},
                       best.inverters, best.cost)


# ---------------------------------------------------------------- the mapper

def _select(problem: _Problem, forms: dict[str, list[_Form]], lib: Library,
            deadline: int, meter: Meter) -> tuple[_Result | None, bool]:
    """Structure selection over the candidates; (result, search finished)."""
    cells = lib.cells
    table = _tree_table(cells, lib.cache)
    cands = _candidates(problem, forms, cells)
    if any(not cands.options.get(s.name) for s in problem.signals):
        return None, True
    local, overflow = _LocalSearch(problem, cands, cells, table, meter).run(deadline)
    chosen = local if local is not None and not overflow else None
    proven = False
    if _selection_is_small(cands, table) and meter.now() < deadline:
        selection = _Selection(problem, cands, cells, table)
        exact_choice, proven = selection.solve(deadline, meter, chosen)
        if exact_choice is not None:
            chosen = exact_choice
    if chosen is None:
        return None, proven
    builder = _Builder(problem, cands, cells, table, chosen)
    signals = {sig.name: builder.signal(sig) for sig in problem.signals}
    gates = _tidy(builder.finish(), signals)
    units = _units_of(gates, lib)
    cost = (sum(_chips_from_units(units, cells).values()), len(gates))
    return _Result(gates, signals, cost, False, "structure selection"), proven


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


def _selection_is_small(cands: _Candidates, table: _TreeTable) -> bool:
    trees = sum(len(table.trees(len(node.fanins))) for node in cands.nodes)
    return trees <= SELECTION_MAX_TREES


def _units_of(gates: Sequence[Gate], lib: Library) -> dict[int, int]:
    units: dict[int, int] = {}
    for gate in gates:
        index = _cell_of_gate(gate, lib)
        units[index] = units.get(index, 0) + 1
    return units


def _problem(functions, nvars: int, var_nets: Sequence[str], polarity: Mapping[str, str]
             ) -> tuple[_Problem, dict[str, SignalOut], list[_Signal]]:
    """Signals needing gates, and the ones a rail or a counter output already delivers."""
    if len(var_nets) != nvars:
        raise InternalError(f"expected {nvars} counter nets, got {len(var_nets)}")
    universe = frozenset(range(1 << nvars))
    every, needing, direct = [], [], {}
    for f in functions:
        pol = polarity.get(f.name, "high")
        if pol not in ("high", "low", "free"):
            raise UsageError(f"signal {f.name}: expected polarity high, low or free, got {pol!r}")
        care = universe - frozenset(f.dc)
        sig = _Signal(f.name, frozenset(f.on) & care, care, pol)
        every.append(sig)
        level = _constant_level(sig)
        if level is not None:
            low = pol == "low"
            direct[f.name] = SignalOut("VDD" if level != low else "VSS", "low" if low else "high")
            continue
        literal = _literal_of(sig, nvars)
        if literal is not None:
            i, comp = literal
            if pol == "free" or (pol == "low") == bool(comp):
                direct[f.name] = SignalOut(var_nets[i], "low" if comp else "high")
                continue
        needing.append(sig)
    return _Problem(nvars, tuple(var_nets), needing), direct, every


def _covers(problem: _Problem, functions, cover, nvars: int, exact: str) -> list:
    """Two covers per signal, one per phase: the given (or minimized) one and its opposite."""
    from .minimize import Function, minimize

    names = {s.name for s in problem.signals}
    if not names:
        return []
    by_name = {f.name: f for f in functions if f.name in names}
    sigs = {s.name: s for s in problem.signals}
    mode = {"auto": "auto", "yes": "yes", "no": "no"}[exact]
    if cover is None or not names <= set(cover.outputs):
        first = minimize([by_name[n] for n in sorted(names)], nvars, exact=mode)
    else:
        first = cover
    others = []
    for name in sorted(names):
        sig, f = sigs[name], by_name[name]
        if first.phases.get(name) == "complement":
            others.append(Function(name, sig.on, frozenset(f.dc)))
        else:
            others.append(Function(name, sig.care - sig.on, frozenset(f.dc)))
    second = minimize(others, nvars, exact=mode)
    flipped = {n for n in names if first.phases.get(n) != "complement"}
    covers = [first, _Flipped(second, flipped)]
    if 1 < len(names) <= SOLO_COVERS_MAX:
        covers += _solo_covers(problem, by_name, nvars, mode)
    return covers


SOLO_COVERS_MAX = 8     # signals up to which each is also minimized alone, in both phases


def _solo_covers(problem: _Problem, by_name, nvars: int, mode: str) -> list:
    """Each signal minimized on its own, both phases: a shared multi-output cover
    can give one signal terms that only pay off for others (``(Q0+Q1+Q2+Q3)'``
    is one OR, not five shared terms)."""
    from .minimize import Function, minimize

    covers = []
    for sig in problem.signals:
        dc = frozenset(by_name[sig.name].dc)
        covers.append(minimize([Function(sig.name, sig.on, dc)], nvars, exact=mode))
        complement = minimize([Function(sig.name, sig.care - sig.on, dc)], nvars, exact=mode)
        covers.append(_Flipped(complement, frozenset({sig.name})))
    return covers


@dataclass(frozen=True)
class _Flipped:
    """A cover of complemented functions, read so that phases refer to the originals."""

    cover: object
    flipped: frozenset[str] | set

    @property
    def outputs(self):
        return self.cover.outputs

    @property
    def phases(self) -> dict[str, str]:
        result = {}
        for name, phase in self.cover.phases.items():
            comp = (phase == "complement") != (name in self.flipped)
            result[name] = "complement" if comp else "true"
        return result

    def cubes(self, name: str):
        return self.cover.cubes(name)


def map_design(functions, nvars: int, var_nets: Sequence[str], library: Library, *,
               polarity: Mapping[str, str], cover=None, exact: str = "auto",
               effort: str | Effort | None = None, steps: int | None = None,
               glitch_free: Iterable[str] = ()) -> Network:
    """Cover the decode functions with the bin's gates: fewest chips, then gates, then depth.

    ``exact``: 'auto' runs exact synthesis on small designs, 'yes' on any
    design (within the effort), 'no' never.  ``effort`` (a level name of
    ``effort.EFFORTS``) or ``steps`` (its work budget, overriding the
    level's) bound the search by work, never by seconds.  Raises
    ``ShortError`` (exit 3) only with a reason a person can check, when the
    bin cannot realise a signal, and ``NotFoundError`` (exit 4) when the
    effort ran out without a design, saying what was proven and what to try
    (a higher effort, one part that makes it easy).  ``glitch_free`` names signals (an asynchronous counter
    reset) that must not pulse while a single counter bit changes: an exact
    synthesis circuit with such a static hazard gives way to the structure
    selection's two-level-derived one.
    """
    if exact not in ("auto", "yes", "no"):
        raise UsageError(f"expected exact to be auto, yes or no, got {exact!r}")
    level = effort_named(effort)
    budget = level.steps if steps is None else steps
    meter = Meter(level.wall_cap, "the mapping search")
    lib = library.mapped()
    problem, direct, every = _problem(functions, nvars, var_nets, polarity)
    if not problem.signals:
        network = Network([], dict(direct), tuple(var_nets), {}, True, 0,
                          "no gates needed", ["every signal is a rail or a counter output"])
        _verify(network, every, nvars, lib)
        return network
    forms = _forms(problem, _covers(problem, functions, cover, nvars, exact))
    run_exact = _exact_wanted(problem, exact)
    failure = _Failure(problem, forms, lib, meter, level, budget)
    result, finished = _select(problem, forms, lib, int(budget * (0.45 if run_exact else 0.95)), meter)
    notes = []
    if result is not None:
        notes.append("structure selection: " + (
            "minimal chips, then gates, over the candidate structures considered" if finished
            else f"best found within the search effort ({level.name})"))
    lower: float = 1
    if run_exact:
        incumbent = result.cost if result else None
        exact_result, proven, lower = _exact_search(problem, lib.cells, int(budget * 0.95), meter, incumbent)
        if exact_result is not None and glitch_free and _static_hazards(
                exact_result.gates, exact_result.signals, glitch_free, every, var_nets):
            if result is None:
                raise failure.error(lower)
            notes.append("exact synthesis: its circuit could pulse " + ", ".join(sorted(glitch_free)) +
                         " on a single counter step; the glitch-free structure is used")
            exact_result, proven = None, False
        if exact_result is not None:
            result = exact_result
        if result is not None and proven and _exact_complete(lib.cells):
            result.proven = True
            notes.append("exact synthesis: proven minimal (chips, then gates) over every circuit of "
                         "the bin's gates, inverters and 2:1 muxes")
        elif result is not None and proven:
            notes.append("exact synthesis: no circuit of the bin's gates, inverters and 2:1 muxes does "
                         "better; wider muxes and decoders are outside that proof")
        elif result is not None:
            notes.append(f"exact synthesis stopped (effort or size cap): best found, at least "
                         f"{int(lower)} chip(s)")
        elif proven:
            raise failure.error(lower, searched_all=True)
    if result is None:
        raise failure.error(lower)
    signals = dict(direct)
    signals.update(result.signals)
    gates = _name_signal_nets(result.gates, signals, set(var_nets))
    chips = chips_of(gates, lib)
    chip_floor, gate_floor = _counting_bounds(problem, lib.cells)
    if not result.proven and result.cost[0] <= chip_floor and result.cost[1] <= gate_floor:
        result.proven = True
        notes.append("counting bound: no circuit of the bin has fewer chips or gates "
                     "(fan-in, distinct outputs, inversion)")
    # an exact search that found nothing among plain gates may bound at infinity
    lb = result.cost[0] if result.proven else max(1, int(min(max(lower, chip_floor), result.cost[0])))
    method = ("exact synthesis" if result.method == "exact synthesis" else "structure selection") + \
        (": proven minimal" if result.proven else ": best found")
    network = Network(gates, signals, tuple(var_nets), chips, result.proven, lb, method, notes)
    _verify(network, every, nvars, lib)
    return network


def _ternary_levels(gates: Sequence[Gate], inputs: Mapping[str, bool | None]) -> dict[str, bool | None]:
    """Every net's level with some inputs unknown (None): a gate whose output the
    unknown inputs can move is unknown (Eichelberger's ternary simulation)."""
    values: dict[str, bool | None] = {"VDD": True, "VSS": False, **inputs}
    pending = list(gates)
    while pending:
        rest = []
        for gate in pending:
            if not all(n in values for n in gate.inputs):
                rest.append(gate)
                continue
            unknown = sorted({n for n in gate.inputs if values[n] is None})
            outcomes: dict[str, set] = {}
            for bits in itertools.product((False, True), repeat=len(unknown)):
                trial = {n: values[n] for n in gate.inputs}
                trial.update(zip(unknown, bits))
                for net, level in evaluate_gate(gate, trial).items():
                    outcomes.setdefault(net, set()).add(level)
            for net, levels in outcomes.items():
                values[net] = levels.pop() if len(levels) == 1 else None
        if len(rest) == len(pending):
            raise InternalError("the mapped network has a loop")
        pending = rest
    return values


def _static_hazards(gates: Sequence[Gate], signals: Mapping[str, SignalOut], names: Iterable[str],
                    every: Sequence[_Signal], var_nets: Sequence[str]) -> list[str]:
    """Signals that may pulse to their asserted level while one counter bit changes
    between two cared-for states where they stay unasserted (a reset would fire)."""
    by_name = {s.name: s for s in every}
    found = []
    for name in names:
        sig, out = by_name.get(name), signals.get(name)
        if sig is None or out is None or out.net in ("VDD", "VSS") or out.net in var_nets:
            continue
        quiet = sorted(sig.care - sig.on)
        quiet_set = set(quiet)
        for m in quiet:
            for i in range(len(var_nets)):
                other = m ^ (1 << i)
                if other < m or other not in quiet_set:
                    continue
                inputs = {net: (None if j == i else bool(m >> j & 1)) for j, net in enumerate(var_nets)}
                if _ternary_levels(gates, inputs).get(out.net, False) is None:
                    found.append(name)
                    break
            if found and found[-1] == name:
                break
    return found


def _exact_complete(cells: Sequence[Cell]) -> bool:
    """Whether exact synthesis sees every way the cells can be used."""
    return all(c.op in AND_FORM or c.op in ("not", "buf") or (c.op in ("xor", "xnor") and c.width == 2)
               or (c.op in ("mux", "spdt") and c.width == 2) for c in cells)


def _exact_wanted(problem: _Problem, exact: str) -> bool:
    if exact == "no":
        return False
    if exact == "yes":
        return True
    return problem.nvars <= EXACT_MAX_VARS and len(problem.signals) <= EXACT_MAX_OUTPUTS


def _name_signal_nets(gates: list[Gate], signals: dict[str, SignalOut], fixed: set[str]) -> list[Gate]:
    """Give each signal's gate output the signal's name (``_n`` when delivered low)."""
    driven = {net for g in gates for net in g.outputs if net}
    taken = fixed | driven | {"VDD", "VSS"}
    rename: dict[str, str] = {}
    for name, out in sorted(signals.items()):
        if out.net in driven and out.net not in rename:
            wanted = name if out.polarity == "high" else f"{name}_n"
            candidate, i = wanted, 1
            while candidate in taken or candidate in rename.values():
                i += 1
                candidate = f"{wanted}{i}"
            rename[out.net] = candidate
    for name, out in list(signals.items()):
        if out.net in rename:
            signals[name] = SignalOut(rename[out.net], out.polarity)
    return [replace(g, inputs=tuple(rename.get(n, n) for n in g.inputs),
                    outputs=tuple(rename.get(n, n) for n in g.outputs)) for g in gates]


def _verify(network: Network, signals: Sequence[_Signal], nvars: int, lib: Library) -> None:
    """Zero-delay simulation on every cared-for minterm; bin limits; loop freedom."""
    for part, chips in network.chips.items():
        if chips > lib.available.get(part, 0):
            raise InternalError(f"the network takes {chips} x {part}, the bin offers "
                                f"{lib.available.get(part, 0)}")
    width = 1 << nvars
    full = (1 << width) - 1
    inputs = dict(zip(network.inputs, counting_words(nvars)))
    try:
        values = evaluate_words(network, inputs, width)
    except ValueError as exc:
        raise InternalError(f"the mapped network does not simulate: {exc}") from exc
    for sig in signals:
        out = network.signals[sig.name]
        asserted = values[out.net] if out.polarity == "high" else values[out.net] ^ full
        wrong = (asserted ^ _word(sig.on)) & _word(sig.care)
        if wrong:
            m = (wrong & -wrong).bit_length() - 1
            raise InternalError(f"mapped signal {sig.name} is wrong at minterm {m}: "
                                f"expected {'asserted' if m in sig.on else 'not asserted'}")


def _word(minterms: Iterable[int]) -> int:
    """A set of minterms as one integer, bit m set for minterm m."""
    word = 0
    for m in minterms:
        word |= 1 << m
    return word


# ---------------------------------------------------------------- when the bin is short

FIX_TRIES = 10            # candidate parts tried for "one more X would make it easy"
FIX_SHARE = 0.02          # of the mapping's budget, the work each of them gets
INVERTING_OPS = ("not", "nand", "nor", "xor", "xnor", "mux", "decoder", "spdt")


def _can_invert(cells: Sequence[Cell]) -> bool:
    return bool(_inv_kinds(cells))


class _Failure:
    """Why no design came out: proven impossible (exit 3, with a reason a person
    can check) or not found within the effort (exit 4, what was proven and
    what to try next)."""

    def __init__(self, problem: _Problem, forms, lib: Library, meter: Meter, level: Effort,
                 budget: int) -> None:
        self.problem, self.forms, self.lib, self.meter = problem, forms, lib, meter
        self.level, self.budget = level, budget

    def error(self, exact_lower: float = 1, searched_all: bool = False) -> ShortError | NotFoundError:
        names = ", ".join(s.name for s in self.problem.signals)
        proof = self.impossible_reason(searched_all)
        where = self.lib.source or None
        if proof is not None:
            reason, shortage = proof
            return ShortError(f"the bin cannot realise {names}: {reason}", file=where,
                              hint=f"add {shortage.fix}" if shortage.fix else None, short=(shortage,))
        chips, gates = _counting_bounds(self.problem, self.lib.cells)
        floor = max(1, int(min(max(chips, exact_lower), 10 ** 6))) if chips != float("inf") else 1
        proven = f"proven: any design needs at least {floor} logic chip(s)"
        if gates != float("inf"):
            proven += f" and {int(gates)} gate(s)"
        unused = self.spare_switch_note()
        fix = self.one_part_fix()
        steps = []
        if self.level.name != "thorough":
            steps.append("--effort thorough searches longer")
        if fix:
            steps.append(f"with one more {fix} ({self.lib.catalog.parts[fix].function}) a design "
                         f"is found at once")
        hint = "; ".join(steps) or "no single extra chip makes it easy; add gates of the kinds used"
        return NotFoundError(f"no design for {names} found within the bin at effort "
                             f"{self.level.name}; {proven}{unused}", file=where, hint=hint)

    def impossible_reason(self, searched_all: bool) -> tuple[str, Shortage] | None:
        """A counting argument or a finished exhaustive search, or None."""
        lib, problem = self.lib, self.problem
        if self.spare_switch_note():
            return None            # spare switch sections are not searched: no proof
        if not lib.cells:
            return ("the bin holds no logic gates besides the counter and switch chips",
                    Shortage("logic gate", None, 0, self.named_fix(prefer_inverting=True)))
        profiles = _part_profiles(lib.cells)
        if not any(p[2] for p in profiles.values()):
            witness = _inversion_witness(problem)
            if witness is not None:
                return (witness + "; only an inverting gate can do that and no part in the bin "
                        "inverts (no inverter, NAND, NOR, XOR or switch section)",
                        Shortage("inverting gate", 1, 0, self.named_fix(prefer_inverting=True)))
        if all(c.op in ("xor", "xnor", "not", "buf") for c in lib.cells):
            odd = next((s.name for s in problem.signals if not _affine_possible(s, problem.nvars)), None)
            if odd is not None:
                return (f"the bin's gates are only XOR/XNOR and inverters, which together make "
                        f"nothing but parity functions (an XOR of some counter outputs, maybe "
                        f"inverted), and {odd} is not one",
                        Shortage("AND/OR-type gate", 1, 0, self.named_fix(prefer_inverting=False)))
        gates_floor = _counting_bounds(problem, lib.cells)[1]
        units = sum(upc * chips for upc, _, _, chips in profiles.values())
        if gates_floor != float("inf") and gates_floor > units:
            return (f"any circuit needs at least {int(gates_floor)} gates (one per distinct signal, "
                    f"and a tree joining every counter output a signal depends on) and the bin "
                    f"has {units}", Shortage("gate", int(gates_floor), units,
                                             self.named_fix(prefer_inverting=False)))
        if gates_floor == float("inf"):
            return ("a signal depends on several counter outputs and the bin has no gate with "
                    "two or more inputs", Shortage("gate with two or more inputs", 1, 0,
                                                  self.named_fix(prefer_inverting=False)))
        if searched_all and _exact_complete(lib.cells):
            return ("a search over every circuit the bin's gates, inverters and 2:1 switches allow "
                    "(every size up to all units on hand) found none",
                    Shortage("gate", None, units, self.named_fix(prefer_inverting=False)))
        return None

    def spare_switch_note(self) -> str:
        """The reserved switch chips' other sections are not used as logic (yet): say so."""
        catalog = self.lib.catalog
        parts = sorted(p for p in self.lib.reserved
                       if catalog.parts[p].units_of("spdt", "spst", "analog_mux"))
        if not parts:
            return ""
        return (f"; spare sections of the {', '.join(parts)} kept for the spec's switches were "
                f"not searched as logic")

    def named_fix(self, prefer_inverting: bool) -> str:
        candidates = _fix_candidates(self.lib, prefer_inverting)
        if not candidates:
            return ""
        part = candidates[0]
        return f"one {part} ({self.lib.catalog.parts[part].function})"

    def one_part_fix(self) -> str | None:
        """The first single extra chip (likeliest first) with which the signals map."""
        has_gates = any(c.op in AND_FORM and c.width >= 2 for c in self.lib.cells)
        share = max(1, int(self.budget * FIX_SHARE))
        for part in _fix_candidates(self.lib, prefer_inverting=has_gates)[:FIX_TRIES]:
            trial = self.lib.with_extra(part).mapped()
            result, _ = _select(self.problem, self.forms, trial, self.meter.now() + share, self.meter)
            if result is not None:
                return part
        return None


def _affine_possible(sig: _Signal, nvars: int) -> bool:
    """Whether some XOR of counter bits (maybe inverted) matches the signal where it is
    cared for: Gaussian elimination over GF(2), rows (1, bits of m | level at m)."""
    pivots: dict[int, int] = {}        # leading bit -> row (bit nvars+1 is the level)
    for m in sorted(sig.care):
        row = ((m << 1) | 1) | ((1 << (nvars + 1)) if m in sig.on else 0)
        while row:
            lead = (row & ((1 << (nvars + 1)) - 1)).bit_length() - 1
            if lead < 0:
                return False          # 0 = 1: inconsistent
            if lead not in pivots:
                pivots[lead] = row
                break
            row ^= pivots[lead]
    return True


def _inversion_witness(problem: _Problem) -> str | None:
    """A signal no monotone circuit delivers, in words: two counter states where it
    must fall although no counter output falls (None: every signal is monotone)."""
    n = problem.nvars
    for sig in problem.signals:
        lows = (False, True) if sig.polarity == "free" else (sig.polarity == "low",)
        if any(_monotone_possible(sig, n, low) for low in lows):
            continue
        low = lows[0]
        on = sig.care - sig.on if low else sig.on
        off = sig.care - on
        for a in sorted(on):
            above = next((b for b in sorted(off) if b & a == a), None)
            if above is not None:
                sense = " (it is active low)" if low else ""
                return (f"the output for {sig.name} must be high at counter state {a} and low at "
                        f"state {above}{sense}, though every counter output high at {a} is also "
                        f"high at {above}")
        return (f"{sig.name} must fall where no counter output falls (it is not a monotone "
                f"function of the counter outputs)")
    return None


def _fix_candidates(lib: Library, prefer_inverting: bool) -> list[str]:
    """Parts to try adding: more of what the bin has, inverters, NANDs, the rest of the family."""
    catalog = lib.catalog
    families = {catalog.parts[p].family for p in lib.available} or {"4000B"}
    usable = [p for p in catalog.parts.values()
              if p.family in families and p.suits(lib.supply)
              and p.category in ("gate", "inverter", "mux", "decoder")]

    def rank(part: Part) -> tuple:
        cells = cells_of_part(part, 1, lib.supply)
        inverting = _can_invert(cells)
        ops = {c.op for c in cells}
        kind = 0 if "not" in ops and not any(c.schmitt for c in cells) else \
            1 if ops & {"nand", "nor"} else 2 if inverting else 3
        in_bin = part.type in lib.available
        if not prefer_inverting and not any(c.op in AND_FORM and c.width >= 2 for c in lib.cells):
            # no multi-input gate at all: a NAND/NOR chip both combines and inverts
            return (0 if ops & {"nand", "nor"} else 1, not in_bin, part.type)
        if prefer_inverting:
            return (kind, not in_bin, part.type)
        return (not in_bin, kind, part.type)

    return [p.type for p in sorted(usable, key=rank)]
