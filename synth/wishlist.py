"""What the bin lacks: the one extra chip type that would shrink a finished plan.

Interface: ``Suggestion`` (one re-planned alternative), ``BinLacks`` (the
answer and how far the search went) and ``bin_lacks(design, *, budget=...)``.

The answer is never guessed from part names: every candidate part type is
added to the bin (one chip of it) and the plan's decode is mapped again by
the same mapper the plan used, which checks its result on every counter
state.  The saving is the logic-chip count of the plan minus that of the
re-mapped design (the added chip counted), then gates.  Counters and switch
chips are left as planned: a different counter chip changes the decode
itself and is outside this search.

Candidates are the logic part types (gates, inverters, muxes, decoders) of
the bin's own families that suit the supply, one per distinct set of units
(a 4011 and a 74HC00 offer the same four NAND2 at 5 V), kinds the bin lacks
first.  The search stops at ``budget`` seconds and says how many candidate
types it tried; a candidate's mapping is a quick one (no exact search), so a
reported saving is real but a missed one is possible.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

LOGIC_CATEGORIES = ("gate", "inverter", "mux", "decoder")
DEFAULT_BUDGET = 3.0     # seconds for the whole search (plan's default)
PER_TRY = 0.35           # seconds of structure search per candidate


@dataclass(frozen=True)
class Suggestion:
    """One extra chip type and the plan it allows."""

    part: str
    function: str
    logic_chips_now: int
    logic_chips_with: int
    gates_now: int
    gates_with: int
    chips_with: dict

    @property
    def saving(self) -> tuple[int, int]:
        return (self.logic_chips_now - self.logic_chips_with, self.gates_now - self.gates_with)

    def sentence(self, total_now: int) -> str:
        chips, gates = self.saving
        total_with = total_now - chips
        if chips > 0:
            return (f"with one {self.part} ({self.function}) on hand this plan would need "
                    f"{total_with} chips instead of {total_now} ({self.gates_with} gates instead of "
                    f"{self.gates_now})")
        return (f"with one {self.part} ({self.function}) on hand this plan would need "
                f"{self.gates_with} gates instead of {self.gates_now} (still {total_now} chips)")

    def to_json(self, total_now: int) -> dict:
        return {"part": self.part, "function": self.function,
                "chips_now": total_now, "chips_with": total_now - self.saving[0],
                "logic_chips_now": self.logic_chips_now, "logic_chips_with": self.logic_chips_with,
                "gates_now": self.gates_now, "gates_with": self.gates_with,
                "logic_chips_by_part": dict(self.chips_with)}


@dataclass
class BinLacks:
    """The best suggestion (None: no single chip type helps) and the search's reach."""

    best: Suggestion | None
    tried: int
    candidates: int
    seconds: float
    total_chips: int
    others: list[Suggestion] = field(default_factory=list)
    skipped: str = ""

    @property
    def complete(self) -> bool:
        return self.tried == self.candidates

    def text(self) -> str:
        if self.skipped:
            return f"what the bin lacks: {self.skipped}"
        reach = ("every candidate part type" if self.complete
                 else f"{self.tried} of {self.candidates} candidate part types (time budget)")
        if self.best is None:
            return f"what the bin lacks: no single extra chip type would shrink this plan ({reach} re-planned)"
        return f"what the bin lacks: {self.best.sentence(self.total_chips)} ({reach} re-planned)"

    def to_json(self) -> dict:
        return {"best": self.best.to_json(self.total_chips) if self.best else None,
                "others": [s.to_json(self.total_chips) for s in self.others],
                "tried": self.tried, "candidates": self.candidates, "complete": self.complete,
                "skipped": self.skipped or None}


def bin_lacks(design, *, budget: float = DEFAULT_BUDGET, per_try: float = PER_TRY) -> BinLacks:
    """Re-map the plan's decode with each candidate part type added; keep the best saving."""
    from .errors import SynthError
    from .techmap import map_design

    start = time.monotonic()
    library, polarity = _mapping_inputs(design)
    now_chips = sum(design.network.chips.values())
    now_gates = len(design.network.gates)
    total_chips = len(design.plan.chips)
    candidates = candidate_parts(design, library)
    found: list[Suggestion] = []
    tried = 0
    if getattr(design.plan, "strobed", None):
        # clock gating added gates the decode alone does not have: no like-for-like baseline
        return BinLacks(None, 0, len(candidates), time.monotonic() - start, total_chips, [],
                        skipped="not searched: --fix glitches gated signals with the clock")
    if design.network.gates:
        for part in candidates:
            if time.monotonic() - start >= budget:
                break
            tried += 1
            try:
                network = map_design(design.decode.functions, len(design.counter.vars),
                                     [v.net for v in design.counter.vars], library.with_extra(part),
                                     polarity=polarity, cover=design.decode.cover, exact="no",
                                     time_limit=per_try)
            except SynthError:
                continue
            with_chips, with_gates = sum(network.chips.values()), len(network.gates)
            if (with_chips, with_gates) < (now_chips, now_gates) and part in network.chips:
                found.append(Suggestion(part, design.catalog.parts[part].function, now_chips, with_chips,
                                        now_gates, with_gates, dict(network.chips)))
    else:
        tried = len(candidates)
    found.sort(key=lambda s: (-s.saving[0], -s.saving[1], s.part))
    return BinLacks(found[0] if found else None, tried, len(candidates), time.monotonic() - start,
                    total_chips, found[1:4])


def _mapping_inputs(design):
    """The library and polarities the plan's mapper saw (same reservations)."""
    from .pipeline import _internal_polarity, reserved_chips, switch_polarity
    from .techmap import build_library

    reserved = reserved_chips(design.counter, design.spec, design.stock, design.catalog)
    library = build_library(design.stock, design.catalog, reserved=reserved)
    polarity = switch_polarity(design.spec)
    for function in design.decode.functions:
        polarity.setdefault(function.name, _internal_polarity(design.counter, function.name))
    return library, polarity


def candidate_parts(design, library) -> list[str]:
    """Logic part types worth adding: one per distinct unit set, kinds the bin lacks first."""
    from .techmap import cells_of_part

    catalog, supply = design.catalog, design.stock.supply
    families = {catalog.parts[p].family for p in design.stock.parts} or {"4000B"}
    have = {(c.op, c.width, c.schmitt) for c in library.cells}
    spare = _spare_part_types(design, library)
    seen: dict[tuple, str] = {}
    for part in sorted(catalog.parts.values(), key=lambda p: (p.family not in families, p.type)):
        if part.family not in families or part.category not in LOGIC_CATEGORIES or not part.suits(supply):
            continue
        if part.type in spare:
            continue
        cells = cells_of_part(part, 1, supply)
        if not any(c.mapped for c in cells):
            continue
        signature = tuple(sorted((c.op, c.width, c.units_per_chip, c.schmitt, c.selects) for c in cells))
        seen.setdefault(signature, part.type)
    order = sorted(seen.values(), key=lambda p: (_is_known_kind(p, catalog, supply, have), p))
    return order


def _spare_part_types(design, library) -> set[str]:
    """Types of which the bin still holds unused chips: one more of them cannot help."""
    used = design.network.chips
    return {p for p, n in library.available.items() if n > used.get(p, 0)}


def _is_known_kind(part_type: str, catalog, supply: float, have: set) -> bool:
    """True when every unit kind of the part is already in the bin (less likely to help)."""
    from .techmap import cells_of_part

    kinds = {(c.op, c.width, c.schmitt) for c in cells_of_part(catalog.parts[part_type], 1, supply)}
    return kinds <= have
