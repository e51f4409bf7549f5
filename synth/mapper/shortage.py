"""When no design comes out: proven impossible (exit 3, with a counting
argument or a finished exhaustive search a person can check, and what is short)
or not found within the effort (exit 4, what was proven and what to try: a higher
effort, one part that makes it easy).
"""

from __future__ import annotations

from ..effort import Effort, Meter
from ..errors import NotFoundError, ShortError, Shortage
from ..inventory import Part
from .bounds import (affine_possible, can_invert, counting_bounds, exact_complete,
                     inversion_witness, part_profiles)
from .library import AND_FORM, Library, cells_of_part
from .problem import Problem
from .structure import select_structure


FIX_TRIES = 10            # candidate parts tried for "one more X would make it easy"

FIX_SHARE = 0.02          # of the mapping's budget, the work each of them gets

INVERTING_OPS = ("not", "nand", "nor", "xor", "xnor", "mux", "decoder", "spdt")


class Failure:
    """Why no design came out: proven impossible (exit 3, with a reason a person
    can check) or not found within the effort (exit 4, what was proven and
    what to try next).  ``advise=False`` leaves out the search for one extra part
    that would make it easy (a mapping per part tried), for callers that only ask
    whether a design exists and never show the message."""

    def __init__(self, problem: Problem, forms, lib: Library, meter: Meter, level: Effort,
                 budget: int, *, advise: bool = True) -> None:
        self.problem, self.forms, self.lib, self.meter = problem, forms, lib, meter
        self.level, self.budget, self.advise = level, budget, advise

    def error(self, exact_lower: float = 1, searched_all: bool = False) -> ShortError | NotFoundError:
        names = ", ".join(s.name for s in self.problem.signals)
        proof = self.impossible_reason(searched_all)
        where = self.lib.source or None
        if proof is not None:
            reason, shortage = proof
            return ShortError(f"the bin cannot realise {names}: {reason}", file=where,
                              hint=f"add {shortage.fix}" if shortage.fix else None, short=(shortage,))
        chips, gates = counting_bounds(self.problem, self.lib.cells)
        floor = max(1, int(min(max(chips, exact_lower), 10 ** 6))) if chips != float("inf") else 1
        proven = f"proven: any design needs at least {floor} logic chip(s)"
        if gates != float("inf"):
            proven += f" and {int(gates)} gate(s)"
        unused = self.spare_switch_note()
        fix = self.one_part_fix() if self.advise else None
        steps = []
        if self.level.name != "thorough":
            steps.append("--effort thorough searches longer")
        if fix:
            steps.append(f"with one more {fix} ({self.lib.catalog.parts[fix].function}) a design "
                         f"is found at once")
        hint = "; ".join(steps) or ("no single extra chip makes it easy; add gates of the kinds used"
                                    if self.advise else None)
        return NotFoundError(f"no design for {names} found within the bin at effort "
                             f"{self.level.name}; {proven}{unused}", file=where, hint=hint)

    def impossible_reason(self, searched_all: bool) -> tuple[str, Shortage] | None:
        """A counting argument or a finished exhaustive search, or None."""
        lib, problem = self.lib, self.problem
        if self.spare_switch_note():
            return None            # spare switch sections are not searched exhaustively: no proof
        if not lib.cells:
            return ("the bin holds no logic gates besides the counter and switch chips",
                    Shortage("logic gate", None, 0, self.named_fix(prefer_inverting=True)))
        profiles = part_profiles(lib.cells)
        if not any(p[2] for p in profiles.values()):
            witness = inversion_witness(problem)
            if witness is not None:
                return (witness + "; only an inverting gate can do that and no part in the bin "
                        "inverts (no inverter, NAND, NOR, XOR or switch section)",
                        Shortage("inverting gate", 1, 0, self.named_fix(prefer_inverting=True)))
        if all(c.op in ("xor", "xnor", "not", "buf") for c in lib.cells):
            odd = next((s.name for s in problem.signals if not affine_possible(s, problem.nvars)), None)
            if odd is not None:
                return (f"the bin's gates are only XOR/XNOR and inverters, which together make "
                        f"nothing but parity functions (an XOR of some counter outputs, maybe "
                        f"inverted), and {odd} is not one",
                        Shortage("AND/OR-type gate", 1, 0, self.named_fix(prefer_inverting=False)))
        gates_floor = counting_bounds(problem, lib.cells)[1]
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
        if searched_all and exact_complete(lib.cells):
            return ("a search over every circuit the bin's gates, inverters and 2:1 switches allow "
                    "(every size up to all units on hand) found none",
                    Shortage("gate", None, units, self.named_fix(prefer_inverting=False)))
        return None

    def spare_switch_note(self) -> str:
        """The reserved switch chips' other sections are no part of a proof: say how far
        they were searched (SPDT sections only as the 2:1 mux of a split on a counter bit)."""
        catalog = self.lib.catalog
        parts = sorted(p for p in self.lib.reserved
                       if catalog.parts[p].units_of("spdt", "spst", "analog_mux"))
        if not parts:
            return ""
        split = [p for p in parts if catalog.parts[p].units_of("spdt")]
        other = [p for p in parts if p not in split]
        said = []
        if split:
            said.append(f"spare sections of the {', '.join(split)} kept for the spec's switches were "
                        f"tried as logic only as the 2:1 mux of a signal split on a counter bit")
        if other:
            said.append(f"spare sections of the {', '.join(other)} kept for the spec's switches were "
                        f"not searched as logic")
        return "; " + "; ".join(said)

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
            result, _ = select_structure(self.problem, self.forms, trial, self.meter.now() + share, self.meter)
            if result is not None:
                return part
        return None


def _fix_candidates(lib: Library, prefer_inverting: bool) -> list[str]:
    """Parts to try adding: more of what the bin has, inverters, NANDs, the rest of the family."""
    catalog = lib.catalog
    families = catalog.families_or_default(lib.available)
    usable = [p for p in catalog.parts.values()
              if p.family in families and p.suits(lib.supply)
              and p.category in ("gate", "inverter", "mux", "decoder")]

    def rank(part: Part) -> tuple:
        cells = cells_of_part(part, 1, lib.supply)
        inverting = can_invert(cells)
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
