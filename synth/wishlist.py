"""What the bin lacks: the one extra chip type that would shrink a finished plan.

Interface: ``Suggestion`` (one re-planned alternative), ``BinLacks`` (the
answer and how far the search went), ``start_search(..., steps) -> Search``
(begun before the plan's own mapping, on the machine's other core) with
``Search.finish(design) -> BinLacks``, and ``bin_lacks(design, *, effort)``
(the same search run in this process, after the fact).

The answer is never guessed from part names: every candidate part type is
added to the bin (one chip of it) and the plan's decode is mapped again by
the mapper's gate engines (``mapper.core``), which check their result on
every counter state.  The saving is the logic-chip count of the plan minus that of the
re-mapped design (the added chip counted), then gates.  Counters and switch
chips are left as planned: a different counter chip changes the decode
itself and is outside this search.

Candidates are the logic part types (gates, inverters, muxes, decoders) of
the bin's own families that suit the supply, one per distinct set of units
(a 4011 and a 74HC00 offer the same four NAND2 at 5 V), kinds the bin lacks
first; types the plan leaves chips of unused cannot help and are not judged.
Every candidate gets the same work budget (the effort level's
``lacks_steps``: solver conflicts and search steps, never seconds), and the
whole candidate list is always re-planned, so the advice is the same on an
idle or a busy machine.  A candidate's mapping is a quick one (the gate
engines only: no exact search, no split on a spare switch section), so a
reported saving is real but a missed one is possible.  Where the platform
can fork, a child process starts on the list before the plan's own mapping
and the planning process joins in from the other end of the list once its
plan is done, so both cores map candidates; each candidate's mapping depends
on that candidate alone, so who maps which does not change the answer.  The
effort's wall-clock safety cap stops the search (said plainly) on a machine
far slower than expected.
"""

from __future__ import annotations

import multiprocessing
import time
from dataclasses import dataclass
from typing import Protocol

from .counter import CounterPlan
from .decode import Decode
from .effort import Effort, effort_named
from .errors import SafetyCapError, SynthError
from .inventory import Bin, Catalog
from .mapper import Library, cells_of_part
from .mapper.core import map_design as map_gates
from .mapper.objective import Cost
from .minimize import Cover, Function
from .network import Network
from .stages import async_reset_names, mapping_inputs
from .timing import PlannedDesign

LOGIC_CATEGORIES = ("gate", "inverter", "mux", "decoder")


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


@dataclass(frozen=True)
class BinLacks:
    """The best suggestion (None: no single chip type helps) and the search's reach."""

    best: Suggestion | None
    tried: int
    candidates: int
    seconds: float
    total_chips: int
    others: tuple[Suggestion, ...] = ()
    skipped: str = ""

    @property
    def complete(self) -> bool:
        return self.tried == self.candidates

    def text(self) -> str:
        if self.skipped:
            return f"what the bin lacks: {self.skipped}"
        cut = (f"{self.tried} of {self.candidates} candidate part types re-planned before the "
               f"safety time cap stopped the search (the machine is much slower or busier than "
               f"expected)")
        if self.best is None and self.complete:
            return ("what the bin lacks: no single extra chip type would shrink this plan "
                    f"(all {self.candidates} candidate part types re-planned)")
        if self.best is None:
            return f"what the bin lacks: no saving found ({cut})"
        reach = f"all {self.candidates} candidate part types re-planned" if self.complete else cut
        return f"what the bin lacks: {self.best.sentence(self.total_chips)} ({reach})"

    def to_json(self) -> dict:
        return {"best": self.best.to_json(self.total_chips) if self.best else None,
                "others": [s.to_json(self.total_chips) for s in self.others],
                "tried": self.tried, "candidates": self.candidates, "complete": self.complete,
                "skipped": self.skipped or None}


@dataclass(frozen=True)
class _Inputs:
    """What the plan's mapper saw, so a candidate is mapped exactly as the plan was."""

    functions: tuple[Function, ...]
    nvars: int
    var_nets: tuple[str, ...]
    library: Library
    polarity: dict[str, str]
    cover: Cover
    glitch_free: tuple[str, ...]
    candidates: tuple[str, ...]


class _SafetyCap(Exception):
    """The wall-clock safety cap stopped a candidate's mapping."""


def _remap(inputs: _Inputs, part: str, effort: Effort) -> tuple[dict, int] | None:
    """(logic chips by part, gates) with one more ``part`` chip; None if it cannot map."""
    try:
        network = map_gates(inputs.functions, inputs.nvars, list(inputs.var_nets),
                             inputs.library.with_extra(part), polarity=inputs.polarity,
                             cover=inputs.cover, exact="no", effort=effort, steps=effort.lacks_steps,
                             glitch_free=inputs.glitch_free, advise=False)
    except SafetyCapError:
        raise _SafetyCap(part) from None
    except SynthError:
        return None
    return dict(network.chips), len(network.gates)


class _Claims:
    """Which candidates are taken: the worker claims from the front of the list, the
    planning process (once its own plan is done) from the back, so both cores map
    candidates until the two meet.  ``skip`` marks candidates the finished plan shows
    cannot help (types it leaves chips of unused); whoever claims one passes it over.

    Each candidate's mapping depends on the candidate alone, so the answer is the
    same whichever process maps which candidate, and however busy the machine is.
    """

    def __init__(self, count: int, ctx=None) -> None:
        if ctx is None:
            self.bounds, self.skip, self.lock = [0, count], [0] * count, None
        else:
            self.bounds = ctx.Array("i", [0, count], lock=False)
            self.skip = ctx.Array("b", count, lock=False)
            self.lock = ctx.Lock()

    def _take(self, front: bool) -> int | None:
        if self.bounds[0] >= self.bounds[1]:
            return None
        if front:
            self.bounds[0] += 1
            return self.bounds[0] - 1
        self.bounds[1] -= 1
        return self.bounds[1]

    def take(self, front: bool) -> int | None:
        """The next unclaimed candidate's index from the front (or back); None when none is left."""
        if self.lock is None:
            return self._take(front)
        with self.lock:
            return self._take(front)


def _map_claimed(inputs: _Inputs, effort: Effort, claims: _Claims, front: bool):
    """(index, part, result) for each candidate this process claims, until none is left;
    skipped candidates are passed over (never judged, so never mapped)."""
    while True:
        index = claims.take(front)
        if index is None:
            return
        if claims.skip[index]:
            continue
        part = inputs.candidates[index]
        yield index, part, _remap(inputs, part, effort)


def _child(conn, inputs: _Inputs, effort: Effort, claims: _Claims) -> None:
    """The forked worker: one message per candidate it maps, then None."""
    try:
        for message in _map_claimed(inputs, effort, claims, front=True):
            conn.send(message)
    except Exception:          # the parent treats a dead worker as the end of its share
        pass
    finally:
        try:
            conn.send(None)
        finally:
            conn.close()


class FinishedDesign(PlannedDesign, Protocol):
    """What the search reads of a finished design (``model.Design``, which cannot be
    imported here: model imports this module for ``BinLacks``): the timing step's
    fields and the stage records below."""

    @property
    def counter(self) -> CounterPlan: ...
    @property
    def decode(self) -> Decode: ...
    @property
    def network(self) -> Network: ...


class Search:
    """A what-the-bin-lacks search under way (in a child process, or deferred)."""

    def __init__(self, inputs: _Inputs, decode: Decode, effort: Effort) -> None:
        self.inputs, self.decode, self.effort = inputs, decode, effort
        self.start = time.monotonic()
        self.results: dict[int, tuple[str, tuple[dict, int] | None]] = {}
        self.process = self.conn = None
        try:
            ctx = multiprocessing.get_context("fork")
        except ValueError:
            self.claims = _Claims(len(inputs.candidates))
            return                          # no fork here: all in finish()
        self.claims = _Claims(len(inputs.candidates), ctx)
        receiver, sender = ctx.Pipe(duplex=False)
        self.process = ctx.Process(target=_child, args=(sender, inputs, self.effort, self.claims),
                                   daemon=True)
        self.process.start()
        sender.close()
        self.conn = receiver

    def _collect(self, spare: set[str]) -> None:
        """Every candidate's result, this process mapping from the back of the list while
        the worker maps from the front; only the wall-clock safety cap cuts it short."""
        deadline = self.start + self.effort.wall_cap
        for index, part in enumerate(self.inputs.candidates):
            if part in spare:
                self.claims.skip[index] = 1
        try:
            for index, part, outcome in _map_claimed(self.inputs, self.effort, self.claims, front=False):
                self.results[index] = (part, outcome)
                if time.monotonic() >= deadline:
                    break
        except _SafetyCap:
            pass
        if self.process is None:
            return
        try:
            while True:
                left = deadline - time.monotonic()
                if left <= 0 or not self.conn.poll(left):
                    break
                message = self.conn.recv()
                if message is None:
                    break
                index, part, outcome = message
                self.results[index] = (part, outcome)
        except (EOFError, OSError):
            pass
        finally:
            self.conn.close()
            if self.process.is_alive():
                self.process.terminate()
            self.process.join(1.0)

    def cancel(self) -> None:
        """Stop the worker (the plan failed; nothing to judge)."""
        if self.process is not None and self.process.is_alive():
            self.process.terminate()
            self.process.join(1.0)
        if self.conn is not None:
            self.conn.close()

    def finish(self, design: FinishedDesign) -> "BinLacks":
        """Gather what the search found in its budget and judge it against the plan."""
        total = len(design.plan.chips)
        n = len(self.inputs.candidates)
        if design.plan.strobed or design.decode is not self.decode:
            # --fix glitches re-derived the decode or added gating gates: no like-for-like baseline
            self.cancel()
            return BinLacks(None, 0, n, time.monotonic() - self.start, total, (),
                            skipped="not searched: --fix glitches changed the design")
        spare = _spare_part_types(design, self.inputs.library)
        if not design.network.gates:
            spare = set(self.inputs.candidates)      # nothing to shrink: no candidate is mapped
        self._collect(spare)
        results = [self.results[i] for i in sorted(self.results)]
        return _judge(design, self.inputs, results, time.monotonic() - self.start)


def start_search(decode: Decode, counter_plan: CounterPlan, library: Library, polarity: dict[str, str],
                 stock: Bin, catalog: Catalog, *, glitch_free: tuple[str, ...] = (),
                 effort: str | Effort | None = None) -> Search:
    """Begin re-mapping the decode with each candidate part added (see the module text)."""
    inputs = _Inputs(decode.functions, len(counter_plan.vars), tuple(v.net for v in counter_plan.vars),
                     library, dict(polarity), decode.cover, tuple(glitch_free),
                     tuple(candidate_parts(stock, catalog, library)))
    return Search(inputs, decode, effort_named(effort))


def bin_lacks(design: FinishedDesign, *, effort: str | Effort | None = None) -> BinLacks:
    """The same search for a finished design, run here and now (tests, scripts)."""
    library, polarity = _mapping_inputs(design)
    search = start_search(design.decode, design.counter, library, polarity, design.stock,
                          design.catalog, glitch_free=async_reset_names(design.counter),
                          effort=effort)
    return search.finish(design)


def _judge(design: FinishedDesign, inputs: _Inputs, results, seconds: float) -> BinLacks:
    """Savings of each re-mapped candidate over the plan's own logic chips, then gates."""
    now_chips = sum(design.network.chips.values())
    now_gates = len(design.network.gates)
    spare = _spare_part_types(design, inputs.library)
    found = []
    for part, outcome in results:
        if outcome is None or part in spare or not design.network.gates:
            continue
        chips, gates = outcome
        if Cost(sum(chips.values()), gates).beats_on_size(Cost(now_chips, now_gates)) and part in chips:
            found.append(Suggestion(part, design.catalog.parts[part].function, now_chips,
                                    sum(chips.values()), now_gates, gates, chips))
    found.sort(key=lambda s: (-s.saving[0], -s.saving[1], s.part))
    judged = [p for p in inputs.candidates if p not in spare]
    tried = len(judged) if not design.network.gates else \
        len([p for p, _ in results if p not in spare])
    return BinLacks(found[0] if found else None, tried, len(judged), seconds,
                    len(design.plan.chips), tuple(found[1:4]))


def _mapping_inputs(design: FinishedDesign) -> tuple[Library, dict[str, str]]:
    """The library and polarities the plan's mapper saw (same reservations)."""
    return mapping_inputs(design.spec, design.stock, design.catalog, design.counter, design.decode)


def candidate_parts(stock, catalog, library) -> list[str]:
    """Logic part types worth adding: one per distinct unit set, kinds the bin lacks first."""
    supply = stock.supply
    families = catalog.families_or_default(stock.parts)
    have = {(c.op, c.width, c.schmitt) for c in library.cells}
    seen: dict[tuple, tuple[bool, str]] = {}
    for part in sorted(catalog.parts.values(), key=lambda p: (p.family not in families, p.type)):
        if part.family not in families or part.category not in LOGIC_CATEGORIES or not part.suits(supply):
            continue
        cells = cells_of_part(part, 1, supply)
        if not any(c.mapped for c in cells):
            continue
        signature = tuple(sorted((c.op, c.width, c.units_per_chip, c.schmitt, c.selects) for c in cells))
        known = {(c.op, c.width, c.schmitt) for c in cells} <= have   # every kind already on hand
        seen.setdefault(signature, (known, part.type))
    return [part_type for _, part_type in sorted(seen.values())]


def _spare_part_types(design: FinishedDesign, library: Library) -> set[str]:
    """Types of which the bin still holds unused chips: one more of them cannot help."""
    used = design.network.chips
    return {p for p, n in library.available.items() if n > used.get(p, 0)}
