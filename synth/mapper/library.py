"""The mapper's world: the bin's usable units as cells, at one supply.

Interface: ``Cell``, ``Library``, ``build_library(bin, catalog, *, reserved=None,
switch_sections=None)``, ``Library.spare_switches()``,
``cells_of_part(part, chips, supply)``, ``chips_of(gates, library)``, the gate kinds
(``AND_FORM``: each AND-like op as an AND with input and output phases, De Morgan,
common practice) and the inverting kinds.  Part data come from the catalog, never
from code.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Iterable, Literal, Mapping, Sequence

from ..errors import InternalError
from ..inventory import Bin, Catalog, Part
from ..network import Gate


Polarity = Literal["high", "low", "free"]


GATE_OPS = ("and", "nand", "or", "nor")


# A gate op as an AND over its inputs: (input phase a, output phase b), so that
# op(x1..xk) = b XOR AND(x1^a, ..., xk^a).  De Morgan, common practice.
AND_FORM = {"and": (0, 0), "nand": (0, 1), "nor": (1, 0), "or": (1, 1)}


NEUTRAL_RAIL = {"and": "VDD", "nand": "VDD", "or": "VSS", "nor": "VSS",
                "xor": "VSS", "xnor": "VSS"}


@dataclass(frozen=True)
class Cell:
    """One kind of usable unit in the bin, with how many the bin can give.

    ``op``: and nand or nor xor xnor not buf mux decoder spdt.  ``width`` is
    the number of logic inputs (data pins for a mux, selects for a decoder).
    ``prepaid``: spare sections of a chip the spec's switches already take
    (``units_per_chip`` of them, on ``chips`` chips): using one opens no chip.
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
    prepaid: bool = False

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

    def spare_switches(self) -> list[Cell]:
        """Spare SPDT sections on switch chips the plan already holds (2:1 muxes, no new chip)."""
        return [c for c in self.cells if c.prepaid and c.op == "spdt" and c.capacity > 0]

    def less_spare(self, cell: Cell) -> "Library":
        """The same bin with one spare section of ``cell`` taken."""
        fewer = replace(cell, units_per_chip=cell.units_per_chip - 1) if cell.chips == 1 else \
            replace(cell, chips=cell.chips - 1)
        cells = [fewer if c is cell else c for c in self.cells]
        return Library(cells, self.supply, self.catalog, dict(self.available), dict(self.reserved),
                       list(self.notes), self.source)

    def less_chips(self, chips: Mapping[str, int]) -> "Library":
        """The same bin with these whole chips set aside (for logic mapped separately)."""
        available = {p: n - chips.get(p, 0) for p, n in self.available.items()}
        cells = [c if c.prepaid or not chips.get(c.part) else replace(c, chips=available[c.part])
                 for c in self.cells]
        return Library([c for c in cells if c.chips > 0], self.supply, self.catalog,
                       {p: n for p, n in available.items() if n > 0}, dict(self.reserved),
                       list(self.notes), self.source)

    def mapped(self) -> "Library":
        """Only the cells packing can place in a plan."""
        lib = Library([c for c in self.cells if c.mapped], self.supply, self.catalog,
                      dict(self.available), dict(self.reserved), list(self.notes), self.source)
        return lib


def build_library(bin: Bin, catalog: Catalog, *, reserved: Mapping[str, int] | None = None,
                  switch_sections: Mapping[str, int] | None = None) -> Library:
    """Every logic unit kind of the bin's parts, minus the chips already reserved.

    ``switch_sections``: SPDT sections the spec's switches take per part type;
    the rest of the reserved switch chips' sections come as prepaid cells (a
    spare section used as a 2:1 mux shares the package, opening no chip).
    """
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
    cells[:0] = _spare_sections(bin, catalog, reserved, switch_sections or {})
    return Library(cells, bin.supply, catalog, available, reserved, notes, bin.path)


def _spare_sections(bin: Bin, catalog: Catalog, reserved: Mapping[str, int],
                    used: Mapping[str, int]) -> list[Cell]:
    """Prepaid SPDT cells: the sections of reserved switch chips the spec's switches leave."""
    cells = []
    for part_type, taken in sorted(used.items()):
        chips = reserved.get(part_type, 0)
        part = catalog.parts[part_type]
        per_chip = len(part.units_of("spdt"))
        spare = chips * per_chip - taken
        if spare <= 0 or not per_chip:
            continue
        for cell in cells_of_part(part, 1, bin.supply):
            if cell.op == "spdt":
                cells.append(replace(cell, units_per_chip=spare, chips=1, prepaid=True, mapped=False))
    return cells


def cells_of_part(part: Part, chips: int, supply: float) -> list[Cell]:
    """The logic cells one part type offers (identical units grouped)."""
    groups: dict[tuple, list] = {}
    for unit in part.units:
        if unit.type == "gate" and unit.op in AND_FORM or (unit.type == "gate" and unit.op in ("xor", "xnor")):
            key = (unit.op, len(unit.inputs), unit.schmitt, False, 0, "high", (), False)
        elif unit.type == "inverter":
            key = ("not", 1, unit.schmitt, False, 0, "high", (), False)
        elif unit.type == "buffer":
            key = ("buf", 1, False, False, 0, "high", (), False)
        elif unit.type == "mux":
            shared = any(p in part.shared for p in unit.selects)
            key = ("mux", len(unit.data), False, unit.output_inv is not None, len(unit.selects),
                   "high", (), shared)
        elif unit.type == "decoder":
            shared = any(p in part.shared for p in unit.selects)
            enables = tuple(e.active for e in unit.enables)
            key = ("decoder", len(unit.selects), False, False, len(unit.outputs),
                   unit.active or "high", enables, shared)
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
        index = cell_of_gate(gate, library)
        units[index] = units.get(index, 0) + 1
    return chips_from_units(units, library.cells)


def cell_of_gate(gate: Gate, library: Library) -> int:
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


def chips_from_units(units: Mapping[int, int], cells: Sequence[Cell]) -> dict[str, int]:
    chips: dict[str, int] = {}
    for index, count in units.items():
        if count <= 0 or cells[index].prepaid:
            continue
        cell = cells[index]
        need = -(-count // cell.units_per_chip)
        chips[cell.part] = max(chips.get(cell.part, 0), need)
    return dict(sorted(chips.items()))


@dataclass(frozen=True)
class AndKind:
    """A cell used as an AND with input phase ``a`` and output phase ``b``."""

    cell: int
    a: int
    b: int
    width: int
    form: str            # 'gate', 'mux_and', 'mux_or'


@dataclass(frozen=True)
class InvKind:
    """A cell used as an inverter, and how its other pins are held."""

    cell: int
    form: str            # 'not', 'joined', 'xor_high', 'xnor_low', 'mux_rails'


def and_kinds(cells: Sequence[Cell]) -> list[AndKind]:
    kinds = []
    for i, c in enumerate(cells):
        if c.op in AND_FORM and c.width >= 2:
            a, b = AND_FORM[c.op]
            kinds.append(AndKind(i, a, b, c.width, "gate"))
        elif c.op in ("mux", "spdt") and c.width == 2:
            kinds.append(AndKind(i, 0, 0, 2, "mux_and"))
            kinds.append(AndKind(i, 1, 1, 2, "mux_or"))
    return kinds


def inv_kinds(cells: Sequence[Cell]) -> list[InvKind]:
    forms = {"not": "not", "nand": "joined", "nor": "joined", "xor": "xor_high",
             "xnor": "xnor_low", "mux": "mux_rails", "spdt": "mux_rails"}
    return [InvKind(i, forms[c.op]) for i, c in enumerate(cells)
            if c.op in forms and not (c.op in ("xor", "xnor") and c.width < 2)]
