"""The stimulus spec (what is wanted) -> ``Spec``; knows nothing of parts.

Interface:

- ``load_spec(path, *, text=None) -> Spec`` (``text`` is YAML given directly;
  ``path`` then only names the file in messages).  Bad input raises
  ``SpecError`` (exit 2) naming file, line and the fix.
- Records (frozen dataclasses): ``Spec``, ``ClockSpec``, ``SignalSpec``,
  ``SwitchSpec``, ``LevelSpec``; ``ClearOfViolation`` (a named tuple).
- Pure helpers for later stages: ``edges(ticks, cycle)``,
  ``cyclic_distance(a, b, cycle)``, ``windows_of(ticks, cycle)``,
  ``cyclic_runs(ticks, cycle)``, ``time_to_ticks(seconds, frequency_hz,
  written, minimum=0)``, ``clear_of_violations(spec, delivered)``,
  ``stretch_options(signal, cycle, limit=STRETCH_OPTION_LIMIT)``,
  ``stretch_option_count(signal, cycle)``, ``clear_of_feasible(spec, signal,
  other, stretches=None)``, ``stretch_needed(spec, signal, other)``.

The format contract (formats.md section 2) is followed; where it leaves a
choice open, this module decides as follows.

- Ticks run 0 .. cycle-1.  A window ``[a, b]`` is a <= t < b; a bare value k
  is ``[k, k+1]``; 0 <= a < b <= P with P = ``every`` if given, else
  ``cycle``.  Windows may be listed in any order; touching windows
  (``[0, 4], [4, 8]``) are fine and merge; overlapping ones are an error
  naming both, on the line of the one listed later.
- An expression for ``asserted`` or ``dont_care`` is over t = 0 .. P-1: over the
  absolute tick when there is no ``every``, over the tick within one period
  when there is (the result repeats like windows do).
- Time values (``"40 us"``) are accepted for ``cycle``, window bounds,
  ``every``, ``stretch`` and ``clear_of`` when ``clock.frequency`` is given.
  A time that is not a whole number of ticks (to one part in 10^9) is an
  error naming the two nearest tick counts.  A plain integer, or a string of
  digits, is ticks.
- ``dont_care`` repeats with the same ``every`` as ``asserted`` and wins where
  both name a tick: ``SignalSpec.high`` and ``.dont_care`` are disjoint.
- ``SignalSpec.windows`` are the asserted runs of ``high`` over one whole
  cycle, half-open, sorted; a run that wraps the cycle end is split into
  ``(a, cycle)`` and ``(0, b)`` (``cyclic_runs`` gives it merged).  Edges are
  always cyclic, so the split is not an edge.
- A signal never or always asserted is legal (a constant decode).
- ``stretch: k``: after the end of each asserted run of the whole cycle (so
  per repetition) a run of 0..k extra ticks may be added.  An extra run never
  reaches the next run's start: at least one unasserted tick stays between
  them, so stretching never merges two pulses into one.  ``stretch_options``
  offers the uniform choices first (every run u = 0..k longer), then all
  combinations when there are at most ``limit`` (default
  ``STRETCH_OPTION_LIMIT``), else single-run variations of the uniform ones,
  never more than ``limit`` sets.
- ``clear_of`` must name other known signals, with distances >= 1 tick.
  ``load_spec`` proves each pair impossible or leaves it: a pair whose edges
  collide for every stretch choice is an error saying how much stretch would
  clear it (``stretch_needed``: the least stretch on either signal).  The
  search is exact, bounded by ``SEARCH_BUDGET`` steps; when the budget runs
  out the pair is let through.  Pairs where either signal has ``dont_care``
  ticks are left to the
  later stages (the minimizer decides those edges), as is the joint choice of
  one stretch for a signal clear of several others.
- ``clock``: ``source`` is ``external`` (default) or ``oscillator`` (which
  needs ``frequency``); ``tolerance`` is written as a percentage
  (``10 %``) and kept as a fraction (0.1).
- Signal names are Verilog port names: identifiers of ASCII letters, digits
  and ``_``, not a Verilog-2001 keyword, and not ``clk``, ``VDD``, ``VSS``
  or ``GND`` in any case (the clock port and the power nets).  Switch ``on``
  and ``off`` are net names (identifiers; ``GND``, ``VDD``, ``VSS`` in
  capitals), both required and different; the bare keys ``on:``/``off:``,
  which YAML 1.1 reads as booleans, are taken back as the words.  Every
  unknown key is an error naming the closest known one.
- ``steady: true`` says the signal must hold one level through every tick
  (no glitch, no pulse per tick): a plan whose timing shows a glitch on it
  registers it in a D flip-flop of the bin without ``--fix``.  ``steady:
  false`` says a pulse per tick is acceptable (clock gating may be used).
  Unset: clock gating is used only on a signal whose windows are all one
  tick long.
- ``clock.source: oscillator`` asks the plan for an on-board RC oscillator
  (a spare Schmitt gate or a 4060's own stage, R and C from the bin) at
  ``clock.frequency``; ``clock.tolerance`` is how far the frequency may move
  over the datasheet threshold spread (the plan assumes 10 % and says so
  when it is not given).
- ``asserted`` (earlier name ``high``) and ``staircases`` (earlier name
  ``levels``): the earlier names still read, each with a one-line note in
  ``Spec.notes``; a mapping with both names is an error; messages name the
  key as the file spells it.
- ``staircases``: analog staircases made from counter bits through a resistor
  ladder.  Each entry is named by the net its output gets (an identifier,
  not a signal, switch or power net name; a switch's ``on``/``off`` may
  name it) and has ``bits`` (required: tick bits, least significant first,
  each k with 2^k < cycle, no repeats; ladder bit i is driven by tick bit
  ``bits[i]``), ``kind`` (``r2r``, the default, or ``binary`` for
  binary-weighted resistors), ``tolerance`` (the resistors' tolerance as a
  percentage, default ``5 %``, below 50 %) and ``load`` (optional: a
  resistance from the output to VSS, e.g. ``100k``).  Whether the counter
  brings those bits out is checked when the plan is made (also exit 2,
  naming the ``bits`` line).
- ``power_on_reset``: ``true`` or a time (``5 ms``) asks for an RC into a
  Schmitt input that holds the counter reset that long after power-up, so
  the sequence starts at tick 0 (R and C from the bin; the counter's reset
  pin must be free, not used by the decode).
- ``delay`` (per signal): a time (``2 us``): the output goes through an RC
  delay between two Schmitt stages of about that length (R and C from the
  bin, a Schmitt part from the bin); needs ``clock.frequency`` (the delay is
  checked against the tick) and must stay under half a tick.
- ``feeds`` (per signal): ``logic`` (default) or ``slow``: nothing that
  latches, counts or reacts within 1 us reads the output (an LED, a lamp, a
  relay); a glitch on it narrower than that is marked harmless
  (``synth.harmless``).  ``steady: true`` with ``feeds: slow`` is refused.
- ``cycle`` is at most ``MAX_CYCLE`` ticks: tick sets are built in memory.
"""

from __future__ import annotations

import bisect
import difflib
import itertools
import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Iterator, NamedTuple

from .errors import InputError, SpecError
from .expr import ExprError, ticks_where
from .limits import (CYCLE_TICKS, NAME_CHARS, SIGNALS, TICK_CELLS, check_at_most, check_expression,
                     check_supply, describe, listed)
from .units import format_si, parse_quantity
from .verilog_names import VERILOG_KEYWORDS
from .yamlsrc import MarkedDict, MarkedList, load_yaml, parse_yaml

__all__ = [
    "Spec", "ClockSpec", "SignalSpec", "SwitchSpec", "LevelSpec", "ClearOfViolation", "load_spec",
    "edges", "cyclic_distance", "windows_of", "cyclic_runs", "time_to_ticks",
    "clear_of_violations", "stretch_options", "stretch_option_count",
    "clear_of_feasible", "stretch_needed", "MAX_CYCLE", "STRETCH_OPTION_LIMIT",
]

MAX_CYCLE = CYCLE_TICKS.most
"""The longest cycle accepted, in ticks (tick sets are held in memory)."""

STRETCH_OPTION_LIMIT = 4096
"""How many delivered sets ``stretch_options`` offers at most by default."""

SEARCH_BUDGET = 200_000
"""Search steps ``clear_of_feasible`` may take before it answers 'unknown'."""

TOP_KEYS = ("name", "supply", "clock", "cycle", "signals", "switches", "staircases",
            "power_on_reset")
DEFAULT_POWER_ON_RESET_S = 10e-3
"""``power_on_reset: true`` holds the counter reset this long after power-up (10 ms: longer
than a bench supply's rise and an RC oscillator's start, common practice)."""
CLOCK_KEYS = ("frequency", "source", "tolerance")
LEVEL_KEYS = ("bits", "kind", "tolerance", "load")
LEVEL_KINDS = ("r2r", "binary")
DEFAULT_LADDER_TOLERANCE = 0.05
"""Resistor tolerance assumed when a ``levels`` entry gives none (5 %, common stock)."""
MIN_SIGNAL_DELAY_S = 100e-9
MAX_SIGNAL_DELAY_S = 1.0
"""``delay:`` bounds: below 100 ns the two stages' own delays dominate; above 1 s no
bin capacitor makes it (the RC sizing still checks the values on hand)."""
SIGNAL_KEYS = ("asserted", "every", "polarity", "dont_care", "clear_of", "stretch", "steady", "delay", "feeds")
FEEDS = ("logic", "slow")
"""``feeds:``: what reads the output (``synth.harmless``): a logic input (the default), or a
slow load that holds no state, on which a short glitch is harmless."""
SWITCH_KEYS = ("select", "on", "off")
POLARITIES = ("high", "low", "free")
CLOCK_SOURCES = ("external", "oscillator")
POWER_NETS = ("GND", "VDD", "VSS")
OLD_KEYS = {"high": "asserted", "levels": "staircases"}
"""Earlier key names still read (each with a one-line note): old name -> current name."""

_IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
_DIGITS = re.compile(r"[+-]?\d+\Z")
_PERCENT = re.compile(r"\s*(\d+(?:\.\d*)?|\.\d+)\s*%\s*\Z")
_TIME = re.compile(r".*\d\s*[pnuµμm]?(s|sec)\Z")

EXPR_HINT = "expressions use t, integers, + - * // %, comparisons, and, or, not, parentheses"


# --------------------------------------------------------------------------
# Records

@dataclass(frozen=True)
class ClockSpec:
    """The clock: ``frequency_hz`` (None if not given), source, tolerance (fraction)."""

    frequency_hz: float | None = None
    source: str = "external"
    tolerance: float | None = None


@dataclass(frozen=True)
class SignalSpec:
    """One wanted signal; tick sets cover the whole cycle (repetition applied)."""

    name: str
    high: frozenset[int]
    dont_care: frozenset[int]
    polarity: str
    every: int | None
    windows: tuple[tuple[int, int], ...]
    clear_of: dict[str, int]
    stretch: int
    line: int
    steady: bool | None = None   # True: must hold its level through every tick; False: a pulse per tick will do
    delay_s: float | None = None  # an RC delay between two Schmitt stages asked for on this output (seconds)
    feeds: str = "logic"          # "slow": nothing that latches, counts or reacts within 1 us reads it


@dataclass(frozen=True)
class SwitchSpec:
    """Analog routing: while ``select`` is asserted the common joins ``on``, else ``off``."""

    name: str
    select: str
    on: str
    off: str
    line: int


@dataclass(frozen=True)
class LevelSpec:
    """A staircase: counter tick bits (LSB first) through a resistor ladder onto net ``name``."""

    name: str
    bits: tuple[int, ...]
    kind: str
    tolerance: float
    tolerance_given: bool
    load_ohms: float | None
    line: int
    bit_lines: tuple[int, ...]
    section: str = "staircases"
    """The spec key the entry was read under (``levels`` is the earlier name), for messages."""


@dataclass(frozen=True)
class Spec:
    """The whole stimulus spec, checked and in ticks."""

    name: str
    path: Path
    supply: float
    clock: ClockSpec
    cycle: int
    signals: dict[str, SignalSpec]
    switches: dict[str, SwitchSpec]
    levels: dict[str, LevelSpec]
    line_of_signal: dict[str, int]
    power_on_reset: float | None = None    # seconds the counter is held reset after power-up
    notes: tuple[str, ...] = ()
    """One-line notes about how the file was read (an earlier key name, ...)."""

    def period_of(self, name: str) -> int:
        """The period the signal's windows repeat with (``every`` or the cycle)."""
        return self.signals[name].every or self.cycle


class ClearOfViolation(NamedTuple):
    """Edge ``edge`` of ``signal`` is ``distance`` ticks from edge ``other_edge`` of ``other``."""

    signal: str
    other: str
    edge: int
    other_edge: int
    distance: int
    needed: int


# --------------------------------------------------------------------------
# Pure tick helpers

def cyclic_distance(a: int, b: int, cycle: int) -> int:
    """Ticks between boundaries a and b going the shorter way round the cycle.

    >>> cyclic_distance(1, 255, 256)
    2
    >>> cyclic_distance(128, 128, 256)
    0
    """
    forward = (a - b) % cycle
    return min(forward, cycle - forward) if forward else 0


def edges(ticks: frozenset[int], cycle: int) -> tuple[int, ...]:
    """Boundaries b (between tick b-1 and b, cyclically) where the state changes.

    >>> edges(frozenset({0, 1, 2, 3}), 8)
    (0, 4)
    >>> edges(frozenset({6, 7, 0}), 8)
    (1, 6)
    >>> edges(frozenset(range(8)), 8)
    ()
    """
    runs = cyclic_runs(ticks, cycle)
    if runs == ((0, cycle),):
        return ()
    return tuple(sorted({start % cycle for start, _ in runs} | {end % cycle for _, end in runs}))


def windows_of(ticks: frozenset[int], cycle: int) -> tuple[tuple[int, int], ...]:
    """Asserted runs as sorted half-open windows, split at the cycle end.

    >>> windows_of(frozenset({0, 1, 6, 7}), 8)
    ((0, 2), (6, 8))
    """
    runs: list[list[int]] = []
    for t in sorted(t for t in ticks if 0 <= t < cycle):
        if runs and runs[-1][1] == t:
            runs[-1][1] = t + 1
        else:
            runs.append([t, t + 1])
    return tuple((start, end) for start, end in runs)


def cyclic_runs(ticks: frozenset[int], cycle: int) -> tuple[tuple[int, int], ...]:
    """Asserted runs as (start, end) with a run wrapping the cycle end kept whole.

    ``end`` may then exceed ``cycle`` (ticks are taken mod cycle); a signal
    asserted at every tick is one run ``(0, cycle)``.

    >>> cyclic_runs(frozenset({0, 1, 6, 7}), 8)
    ((6, 10),)
    >>> cyclic_runs(frozenset({2, 3, 5}), 8)
    ((2, 4), (5, 6))
    """
    windows = list(windows_of(ticks, cycle))
    if len(windows) > 1 and windows[0][0] == 0 and windows[-1][1] == cycle:
        first = windows.pop(0)
        last = windows.pop()
        windows.append((last[0], cycle + first[1]))
    return tuple(windows)


def _plural(count: int) -> str:
    return f"{count} tick" if count == 1 else f"{count} ticks"


def _ticks_shown(value: float) -> str:
    """``1.98``, never a rounding that looks whole (1.9999 is not '2.00')."""
    for digits in range(2, 10):
        text = f"{value:.{digits}f}".rstrip("0").rstrip(".")
        if float(text) != round(value):
            return text
    return repr(value)


def time_to_ticks(seconds: float, frequency_hz: float, written: str, minimum: int = 0) -> int:
    """A time as a whole number of clock ticks; ValueError naming the nearest counts.

    >>> time_to_ticks(80e-6, 50e3, "80 us")
    4
    >>> time_to_ticks(40e-6, 49.5e3, "40 us")
    Traceback (most recent call last):
    ValueError: 40 us is 1.98 ticks at 49.5 kHz; use 2 ticks (40.4 µs) or 1 tick (20.2 µs)
    """
    exact = seconds * frequency_hz
    whole = round(exact)
    if abs(exact - whole) <= 1e-9 * max(1.0, abs(exact)):
        return int(whole)
    below, above = math.floor(exact), math.ceil(exact)
    choices = [n for n in sorted((below, above), key=lambda n: abs(n - exact)) if n >= minimum]
    said = f"{written} is {_ticks_shown(exact)} ticks at {format_si(frequency_hz, 'Hz')}"
    if not choices:
        raise ValueError(f"{said}; expected at least {_plural(minimum)}")
    offers = " or ".join(f"{_plural(n)} ({format_si(n / frequency_hz, 's')})" for n in choices)
    raise ValueError(f"{said}; use {offers}")


# --------------------------------------------------------------------------
# Stretch and clear_of

def _run_room(high: frozenset[int], cycle: int, stretch: int) -> list[tuple[int, int, int]]:
    """(start, end, most extra ticks) for every asserted run; none for a constant."""
    runs = cyclic_runs(high, cycle)
    if not runs or runs == ((0, cycle),):
        return []
    room = []
    for index, (start, end) in enumerate(runs):
        if len(runs) == 1:
            gap = cycle - (end - start)          # a lone run: the rest of the cycle
        else:
            gap = (runs[(index + 1) % len(runs)][0] - end) % cycle
        room.append((start, end, min(stretch, gap - 1)))
    return room


def stretch_option_count(signal: SignalSpec, cycle: int) -> int:
    """How many delivered sets ``stretch`` allows in all (before any cap).

    >>> sig = SignalSpec("s", frozenset({0, 1, 8, 9}), frozenset(), "high", None,
    ...                  ((0, 2), (8, 10)), {}, 2, 1)
    >>> stretch_option_count(sig, 16)
    9
    """
    return math.prod(extra + 1 for _, _, extra in _run_room(signal.high, cycle, signal.stretch))


def _with_extras(high: frozenset[int], room, extras, cycle: int) -> frozenset[int]:
    added = {(end + x) % cycle for (_, end, _), count in zip(room, extras) for x in range(count)}
    return high | added


def stretch_options(signal: SignalSpec, cycle: int,
                    limit: int = STRETCH_OPTION_LIMIT) -> Iterator[frozenset[int]]:
    """The delivered asserted sets that ``stretch`` allows, at most ``limit``, no repeats.

    Order: first the uniform choices (every run stretched by u = 0, 1, .. k,
    clipped where a gap is short; u = 0 is the set as written).  Then, if all
    combinations number at most ``limit``, every combination, fewest extra
    ticks first; otherwise the choices that differ from a uniform one in a
    single run, until ``limit`` sets have been given.

    >>> sig = SignalSpec("s", frozenset({0, 1}), frozenset(), "high", None, ((0, 2),), {}, 2, 1)
    >>> [sorted(option) for option in stretch_options(sig, 8)]
    [[0, 1], [0, 1, 2], [0, 1, 2, 3]]
    """
    room = _run_room(signal.high, cycle, signal.stretch)
    seen: set[tuple[int, ...]] = set()

    def offer(extras: tuple[int, ...]):
        if extras not in seen and len(seen) < limit:
            seen.add(extras)
            return _with_extras(signal.high, room, extras, cycle)
        return None

    most = max((extra for _, _, extra in room), default=0)
    uniform = [tuple(min(u, extra) for _, _, extra in room) for u in range(most + 1)]
    for extras in uniform:
        option = offer(extras)
        if option is not None:
            yield option
    if stretch_option_count(signal, cycle) <= limit:
        every = itertools.product(*(range(extra + 1) for _, _, extra in room))
        later = sorted(every, key=lambda extras: (max(extras, default=0), sum(extras), extras))
    else:
        later = (base[:index] + (value,) + base[index + 1:]
                 for base in uniform for index, (_, _, extra) in enumerate(room)
                 for value in range(extra + 1))
    for extras in later:
        if len(seen) >= limit:
            return
        option = offer(tuple(extras))
        if option is not None:
            yield option


@dataclass(frozen=True)
class _EdgeFreedom:
    """Where one signal's edges may lie under its stretch (positions mod cycle)."""

    fixed: tuple[int, ...]
    movable: tuple[tuple[int, ...], ...]   # one tuple of possible positions per run end


def _edge_freedom(high: frozenset[int], cycle: int, stretch: int) -> _EdgeFreedom:
    fixed, movable = [], []
    for start, end, extra in _run_room(high, cycle, stretch):
        fixed.append(start % cycle)
        if extra == 0:
            fixed.append(end % cycle)
        else:
            movable.append(tuple((end + x) % cycle for x in range(extra + 1)))
    return _EdgeFreedom(tuple(fixed), tuple(movable))


def _near(position: int, others: list[int], needed: int, cycle: int) -> bool:
    """Is some boundary in the sorted list ``others`` closer than ``needed``?"""
    if not others:
        return False
    index = bisect.bisect_left(others, position)
    neighbours = (others[index % len(others)], others[index - 1])
    return any(cyclic_distance(position, other, cycle) < needed for other in neighbours)


def _span_distance(a: tuple[int, ...], b: tuple[int, ...], cycle: int) -> int:
    """Least cyclic distance between two runs of consecutive boundaries."""
    if (b[0] - a[0]) % cycle < len(a) or (a[0] - b[0]) % cycle < len(b):
        return 0
    return min(cyclic_distance(x, y, cycle) for x in (a[0], a[-1]) for y in (b[0], b[-1]))


def _links(mine: tuple[tuple[int, ...], ...], theirs: tuple[tuple[int, ...], ...],
           needed: int, cycle: int) -> list[list[int]]:
    """For each movable edge of mine, the movable edges of theirs it could come near."""
    order = sorted(range(len(theirs)), key=lambda j: theirs[j][0])
    starts = [theirs[j][0] for j in order]
    longest = max(len(span) for span in theirs)
    links = []
    for span in mine:
        reach = needed + longest + len(span)
        if 2 * reach >= cycle:
            candidates = order
        else:
            low = (span[0] - reach) % cycle
            high = (span[0] + reach) % cycle
            if low <= high:
                picked = order[bisect.bisect_left(starts, low):bisect.bisect_right(starts, high)]
            else:
                picked = order[bisect.bisect_left(starts, low):] + \
                    order[:bisect.bisect_right(starts, high)]
            candidates = picked
        links.append(sorted(j for j in candidates
                            if _span_distance(span, theirs[j], cycle) < needed))
    return links


def _components(links: list[list[int]]) -> list[list[int]]:
    """Groups of my movable edges tied together through shared edges of theirs."""
    parent = list(range(len(links)))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    owner: dict[int, int] = {}
    for i, linked in enumerate(links):
        for j in linked:
            if j in owner:
                parent[root(i)] = root(owner[j])
            else:
                owner[j] = i
    groups: dict[int, list[int]] = {}
    for i, linked in enumerate(links):
        if linked:
            groups.setdefault(root(i), []).append(i)
    return list(groups.values())


def _search(group: list[int], links: list[list[int]], mine: list[list[int]],
            theirs: list[list[int]], needed: int, cycle: int, budget: list[int]) -> bool | None:
    """Backtracking (iterative) over my edges in ``group``, narrowing theirs."""
    position = [0] * len(group)
    undo: list[list[tuple[int, list[int]]]] = []
    level = 0
    while level < len(group):
        i = group[level]
        placed = False
        while position[level] < len(mine[i]):
            value = mine[i][position[level]]
            position[level] += 1
            budget[0] -= 1
            if budget[0] < 0:
                return None
            changes = []
            fits = True
            for j in links[i]:
                kept = [w for w in theirs[j] if cyclic_distance(value, w, cycle) >= needed]
                if len(kept) != len(theirs[j]):
                    changes.append((j, theirs[j]))
                    theirs[j] = kept
                    if not kept:
                        fits = False
                        break
            if fits:
                undo.append(changes)
                placed = True
                break
            for j, old in changes:
                theirs[j] = old
        if placed:
            level += 1
            continue
        position[level] = 0
        if level == 0:
            return False
        level -= 1
        for j, old in undo.pop():
            theirs[j] = old
    return True


def _pair_feasible(mine: _EdgeFreedom, theirs: _EdgeFreedom, needed: int, cycle: int,
                   budget: int = SEARCH_BUDGET) -> bool | None:
    """Can every edge of one be kept ``needed`` ticks from every edge of the other?

    True, False, or None when the search ran out of ``budget`` steps.  Fixed
    edges are checked first; movable ones that meet only fixed edges are
    independent; the rest are searched group by group.
    """
    my_fixed, their_fixed = sorted(set(mine.fixed)), sorted(set(theirs.fixed))
    if any(_near(a, their_fixed, needed, cycle) for a in my_fixed):
        return False
    my_domains = [[v for v in options if not _near(v, their_fixed, needed, cycle)]
                  for options in mine.movable]
    their_domains = [[v for v in options if not _near(v, my_fixed, needed, cycle)]
                     for options in theirs.movable]
    if any(not domain for domain in (*my_domains, *their_domains)):
        return False
    if not my_domains or not their_domains:
        return True
    links = _links(mine.movable, theirs.movable, needed, cycle)
    left = [budget]
    answers = [_search(group, links, my_domains, their_domains, needed, cycle, left)
               for group in _components(links)]
    if False in answers:
        return False
    return None if None in answers else True


def clear_of_feasible(spec: Spec, signal: str, other: str,
                      stretches: dict[str, int] | None = None) -> bool | None:
    """Whether some stretch choice keeps ``signal`` clear of ``other`` (None: unknown).

    ``stretches`` overrides the signals' own ``stretch`` (used to ask "how much
    would do").  Don't-care ticks are taken as unasserted.
    """
    stretches = stretches or {}
    needed = spec.signals[signal].clear_of[other]

    def freedom(name: str) -> _EdgeFreedom:
        sig = spec.signals[name]
        return _edge_freedom(sig.high, spec.cycle, stretches.get(name, sig.stretch))

    return _pair_feasible(freedom(signal), freedom(other), needed, spec.cycle)


def _least_stretch(spec: Spec, signal: str, other: str, name: str) -> int | None:
    """The least stretch on ``name`` that clears the pair (known not clear as is)."""
    own = spec.signals[name].stretch
    most = max((extra for _, _, extra in _run_room(spec.signals[name].high, spec.cycle,
                                                   spec.cycle)), default=0)

    def clears(k: int) -> bool:
        return clear_of_feasible(spec, signal, other, {name: k}) is not False

    # Gallop up (cheap while k is small), then bisect; not clear at `bad`, clear at `good`.
    bad, probe = own, own + 1
    while probe <= most:
        if clears(probe):
            good = probe
            break
        bad, probe = probe, (most if probe == most else min(most, 2 * probe))
        if probe == bad:
            return None
    else:
        return None
    while good - bad > 1:
        middle = (bad + good) // 2
        bad, good = (bad, middle) if clears(middle) else (middle, good)
    return good


def stretch_needed(spec: Spec, signal: str, other: str) -> tuple[str, int] | None:
    """The least stretch, on ``signal`` or on ``other``, that clears the pair.

    Returns ``(name, k)`` (``signal`` preferred on a tie; ``signal`` and its
    own stretch when the pair is clear already), or None when no stretch
    clears them (window starts never move; an end moves at most to one tick
    short of the next start).  More stretch only adds choices, so each
    signal's least k is found by galloping and bisection.
    """
    if clear_of_feasible(spec, signal, other) is not False:
        return signal, spec.signals[signal].stretch
    best: tuple[str, int] | None = None
    for name in (signal, other):
        least = _least_stretch(spec, signal, other, name)
        if least is not None and (best is None or least < best[1]):
            best = (name, least)
    return best


def clear_of_violations(spec: Spec, delivered: dict[str, frozenset[int]]) -> list[ClearOfViolation]:
    """Every pair of edges closer than ``clear_of`` asks, in the delivered sets.

    A signal missing from ``delivered`` counts as its ``high`` set.
    """
    found = []
    for name, signal in spec.signals.items():
        mine = edges(delivered.get(name, signal.high), spec.cycle)
        for other, needed in signal.clear_of.items():
            theirs = edges(delivered.get(other, spec.signals[other].high), spec.cycle)
            for b in mine:
                for c in theirs:
                    distance = cyclic_distance(b, c, spec.cycle)
                    if distance < needed:
                        found.append(ClearOfViolation(name, other, b, c, distance, needed))
    return found


# --------------------------------------------------------------------------
# Reading the YAML

def _closest(word: object, known: tuple[str, ...]) -> str:
    """' (did you mean 'x'?)'-style hint text listing the known words."""
    close = difflib.get_close_matches(str(word), known, n=1, cutoff=0.5)
    listed = ", ".join(known)
    return f"did you mean {close[0]!r}? known: {listed}" if close else f"known: {listed}"


def _kind(value: object) -> str:
    """How a YAML value reads to a person, for 'got ...' messages (``limits.describe``)."""
    return describe(value)


class _Reader:
    """Turns the parsed YAML into records; knows the file for every message."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.frequency: float | None = None
        self.notes: list[str] = []
        self.written_as: dict[str, str] = {}    # today's key -> the earlier name the file used

    def fail(self, message: str, line: int | None, hint: str | None = None):
        raise SpecError(message, file=self.path, line=line, hint=hint)

    def renamed(self, mapping: MarkedDict, known: tuple[str, ...], where: str) -> MarkedDict:
        """``mapping`` with earlier key names (``OLD_KEYS``) read as today's, noted once each."""
        old = [key for key in mapping if OLD_KEYS.get(key) in known]
        if not old:
            return mapping
        fixed = MarkedDict()
        fixed.line = mapping.line
        fixed.key_lines = {}
        for key, value in mapping.items():
            new = OLD_KEYS.get(key) if key in old else key
            if key in old and new in mapping:
                self.fail(f"{where}: both {key!r} and {new!r} are given", mapping.line_of(key),
                          f"{key!r} is the earlier name of {new!r}; keep only {new}:")
            fixed[new] = value
            fixed.key_lines[new] = mapping.line_of(key)
            if key in old:
                self.written_as[new] = key
        for key in old:
            note = (f"{self.path}:{mapping.line_of(key)}: note: '{key}:' is the earlier name of "
                    f"'{OLD_KEYS[key]}:' and reads the same; write {OLD_KEYS[key]}: from now on")
            if note not in self.notes:
                self.notes.append(note)
        return fixed

    def check_keys(self, mapping: dict, known: tuple[str, ...], where: str) -> None:
        for key in mapping:
            if key not in known:
                self.fail(f"{where}: unknown key {describe(key)}", mapping.line_of(key),
                          _closest(key, known))

    def mapping(self, value: object, where: str, line: int, example: str) -> MarkedDict:
        if not isinstance(value, MarkedDict):
            self.fail(f"{where}: expected a mapping such as {example}, got {_kind(value)}", line)
        return value

    # -- ticks and times
    def ticks(self, value: object, where: str, line: int, minimum: int | None = None,
              what: str = "ticks") -> int:
        """An integer tick count, or a time converted with the clock frequency."""
        if isinstance(value, bool) or not isinstance(value, (int, str)):
            self.fail(f"{where}: expected a whole number of ticks or a time such as '40 us', "
                      f"got {_kind(value)}", line)
        if isinstance(value, str) and _DIGITS.match(value.strip()):
            value = int(value)
        if isinstance(value, int):
            count = value
        else:
            count = self.time(value, where, line, minimum or 0)
        if minimum is not None and count < minimum:
            self.fail(f"{where}: expected {what} of at least {_plural(minimum)}, got {count}", line)
        return count

    def time(self, text: str, where: str, line: int, minimum: int) -> int:
        if not _TIME.match(text.strip()):
            self.fail(f"{where}: expected a whole number of ticks or a time such as '40 us', "
                      f"got {describe(text)}", line)
        try:
            seconds = parse_quantity(text, "s")
        except ValueError:
            self.fail(f"{where}: expected a whole number of ticks or a time such as '40 us', "
                      f"got {describe(text)}", line)
        if self.frequency is None:
            self.fail(f"{where}: {describe(text)} is a time, but the spec gives no clock frequency", line,
                      "add clock: {frequency: 50 kHz}, or write the value in ticks")
        try:
            return time_to_ticks(seconds, self.frequency, text.strip(), minimum)
        except ValueError as exc:
            self.fail(f"{where}: {exc}", line)

    # -- top level
    def spec(self, data: object) -> Spec:
        if data is None:
            self.fail("the spec is empty; expected at least cycle and signals", 1,
                      "cycle: 256 and signals: {...}")
        if not isinstance(data, MarkedDict):
            self.fail(f"expected a mapping of spec keys (cycle, signals, ...), got {_kind(data)}",
                      data.line if isinstance(data, MarkedList) else 1)
        data = self.renamed(data, TOP_KEYS, "spec")
        self.check_keys(data, TOP_KEYS, "spec")
        name = self.name(data)
        supply = self.supply(data)
        clock = self.clock(data)
        self.frequency = clock.frequency_hz
        cycle = self.cycle(data)
        signals = self.signals(data, cycle)
        levels = self.levels(data, cycle, signals)
        switches = self.switches(data, signals)
        spec = Spec(name=name, path=self.path, supply=supply, clock=clock, cycle=cycle,
                    signals=signals, switches=switches, levels=levels,
                    line_of_signal={n: s.line for n, s in signals.items()},
                    power_on_reset=self.power_on_reset(data), notes=tuple(self.notes))
        self.check_clear_of(spec, data)
        return spec

    def power_on_reset(self, data: MarkedDict) -> float | None:
        """``true`` (the default length), ``false`` / absent (none), or a time such as '5 ms'."""
        if "power_on_reset" not in data or data["power_on_reset"] in (None, False):
            return None
        value, line = data["power_on_reset"], data.line_of("power_on_reset")
        if value is True:
            return DEFAULT_POWER_ON_RESET_S
        expected = "power_on_reset: expected true or a time such as '10 ms'"
        if not isinstance(value, str):
            self.fail(f"{expected}, got {_kind(value)}", line)
        try:
            seconds = parse_quantity(value, "s")
        except ValueError:
            self.fail(f"{expected}, got {describe(value)}", line)
        if not 1e-6 <= seconds <= 10.0:
            self.fail(f"power_on_reset: expected between 1 us and 10 s, got {describe(value)}", line)
        return seconds

    def name(self, data: MarkedDict) -> str:
        if "name" not in data:
            return self.path.stem
        value = data["name"]
        if not isinstance(value, str) or not value.strip():
            self.fail(f"name: expected a text name such as 'sh-bench', got {_kind(value)}",
                      data.line_of("name"), "quote it if it looks like a number")
        return value.strip()

    def supply(self, data: MarkedDict) -> float:
        if "supply" not in data:
            return 5.0
        line = data.line_of("supply")
        try:
            volts = parse_quantity(data["supply"], "V")
        except ValueError:
            self.fail(f"supply: expected a voltage such as '5 V', got {_kind(data['supply'])}", line)
        if not math.isfinite(volts) or volts <= 0:
            self.fail(f"supply: expected a positive voltage such as '5 V', got {describe(data['supply'])}",
                      line)
        return check_supply(volts, "supply", error=SpecError, file=self.path, line=line)

    def clock(self, data: MarkedDict) -> ClockSpec:
        if "clock" not in data:
            return ClockSpec()
        body = self.mapping(data["clock"], "clock", data.line_of("clock"), "{frequency: 50 kHz}")
        self.check_keys(body, CLOCK_KEYS, "clock")
        frequency = None
        if "frequency" in body:
            line = body.line_of("frequency")
            try:
                frequency = parse_quantity(body["frequency"], "Hz")
            except ValueError:
                self.fail(f"clock.frequency: expected a frequency such as '50 kHz', got "
                          f"{_kind(body['frequency'])}", line)
            if not math.isfinite(frequency) or frequency <= 0:
                self.fail(f"clock.frequency: expected a positive frequency, got "
                          f"{describe(body['frequency'])}", line)
        source = body.get("source", "external")
        if source not in CLOCK_SOURCES:
            self.fail(f"clock.source: expected external or oscillator, got {_kind(source)}",
                      body.line_of("source"), _closest(source, CLOCK_SOURCES))
        if source == "oscillator" and frequency is None:
            self.fail("clock.source: an oscillator needs clock.frequency", body.line_of("source"),
                      "add frequency: 50 kHz")
        tolerance = None
        if "tolerance" in body:
            tolerance = self.tolerance(body, frequency)
        return ClockSpec(frequency, source, tolerance)

    def tolerance(self, body: MarkedDict, frequency: float | None) -> float:
        line = body.line_of("tolerance")
        value = body["tolerance"]
        match = _PERCENT.match(value) if isinstance(value, str) else None
        if match is None:
            self.fail(f"clock.tolerance: expected a percentage such as '10 %', got {_kind(value)}",
                      line, "write it with a % sign")
        fraction = float(match.group(1)) / 100
        if fraction >= 1:
            self.fail(f"clock.tolerance: expected less than 100 %, got {describe(value)}", line)
        if frequency is None:
            self.fail("clock.tolerance: a tolerance needs clock.frequency", line,
                      "add frequency: 50 kHz")
        return fraction

    def cycle(self, data: MarkedDict) -> int:
        if "cycle" not in data:
            self.fail("missing required key 'cycle'", data.line,
                      "add cycle: N, the clock ticks in one full sequence, e.g. cycle: 256")
        line = data.line_of("cycle")
        cycle = self.ticks(data["cycle"], "cycle", line, minimum=1, what="a cycle")
        check_at_most(cycle, CYCLE_TICKS, "ticks", where="cycle", error=SpecError, file=self.path, line=line)
        return cycle

    # -- signals
    def signals(self, data: MarkedDict, cycle: int) -> dict[str, SignalSpec]:
        if "signals" not in data:
            self.fail("missing required key 'signals'", data.line,
                      "add signals: {name: {asserted: [[0, 4]]}}")
        body = self.mapping(data["signals"], "signals", data.line_of("signals"),
                            "{sample: {asserted: [[0, 4]]}}")
        if not body:
            self.fail("signals: expected at least one signal, got none", data.line_of("signals"))
        self.check_size(len(body), cycle, data.line_of("signals"))
        for name in body:
            self.signal_name(name, body.line_of(name))
        return {name: self.signal(name, body[name], body.line_of(name), cycle, tuple(body))
                for name in body}

    def check_size(self, count: int, cycle: int, line: int) -> None:
        """The signal count and the ticks held in memory, before any tick set is built."""
        check_at_most(count, SIGNALS, "signals", where="signals", error=SpecError, file=self.path, line=line)
        check_at_most(count * cycle, TICK_CELLS, f"signal ticks in all ({count} signals x cycle {cycle})",
                      where="signals", error=SpecError, file=self.path, line=line)

    def signal_name(self, name: object, line: int) -> None:
        if isinstance(name, str):
            check_at_most(len(name), NAME_CHARS, "characters in a signal name", where="signals",
                          error=SpecError,
                          file=self.path, line=line)
        if not isinstance(name, str) or not _IDENTIFIER.match(name):
            self.fail(f"signals: expected a signal name usable as a Verilog port, got {describe(name)}",
                      line, "letters, digits and _, not starting with a digit, e.g. sample_gate")
        if name.lower() == "clk":
            self.fail(f"signals: the name {describe(name)} is taken by the clock input", line,
                      "rename the signal, e.g. clk_out")
        if name.upper() in POWER_NETS:
            self.fail(f"signals: the name {describe(name)} is taken by a power net", line,
                      "rename the signal")
        if name in VERILOG_KEYWORDS:
            self.fail(f"signals: the name {describe(name)} is a Verilog keyword", line,
                      f"rename it, e.g. {name}_sig")

    def signal(self, name: str, body: object, line: int, cycle: int,
               names: tuple[str, ...]) -> SignalSpec:
        where = f"signals.{name}"
        body = self.mapping(body, where, line, "{asserted: [[0, 4]]}")
        written = "high" if "high" in body and "asserted" not in body else "asserted"
        body = self.renamed(body, SIGNAL_KEYS, where)
        self.check_keys(body, SIGNAL_KEYS, where)
        every = None
        if "every" in body:
            every = self.every(body, where, cycle)
        period = every or cycle
        if "asserted" not in body:
            self.fail(f"{where}: missing 'asserted' (the ticks the signal is asserted)", line,
                      "add asserted: [[start, end]], asserted: 9 or asserted: \"t % 32 == 0\"")
        high = self.tick_set(body, "asserted", where, period, cycle, written)
        dont_care = frozenset()
        if "dont_care" in body:
            dont_care = self.tick_set(body, "dont_care", where, period, cycle)
        high = high - dont_care
        polarity = body.get("polarity", "high")
        if polarity not in POLARITIES:
            self.fail(f"{where}.polarity: expected high, low or free, got {_kind(polarity)}",
                      body.line_of("polarity"), _closest(polarity, POLARITIES))
        stretch = 0
        if "stretch" in body:
            stretch = self.ticks(body["stretch"], f"{where}.stretch", body.line_of("stretch"),
                                 minimum=0, what="a stretch")
        clear_of = self.clear_of(body, name, where, names) if "clear_of" in body else {}
        steady = None
        if "steady" in body:
            steady = body["steady"]
            if not isinstance(steady, bool):
                self.fail(f"{where}.steady: expected true or false, got {_kind(steady)}",
                          body.line_of("steady"), "steady: true (hold the level through every tick)")
        delay = self.signal_delay(body, where) if "delay" in body else None
        feeds = body.get("feeds", "logic")
        if feeds not in FEEDS:
            self.fail(f"{where}.feeds: expected logic or slow, got {_kind(feeds)}", body.line_of("feeds"),
                      "feeds: slow (an LED, lamp, relay, meter: nothing that latches or counts)")
        if feeds == "slow" and steady is True:
            self.fail(f"{where}: steady: true and feeds: slow contradict (a slow load needs no steady level)",
                      body.line_of("feeds"), "keep one of them")
        return SignalSpec(name=name, high=high, dont_care=dont_care, polarity=polarity,
                          every=every, windows=windows_of(high, cycle), clear_of=clear_of,
                          stretch=stretch, line=line, steady=steady, delay_s=delay, feeds=feeds)

    def signal_delay(self, body: MarkedDict, where: str) -> float:
        """``delay: 2 us``: the output goes through an RC delay of about this long."""
        value, line = body["delay"], body.line_of("delay")
        expected = f"{where}.delay: expected a time such as '2 us'"
        if not isinstance(value, str):
            self.fail(f"{expected}, got {_kind(value)}", line)
        try:
            seconds = parse_quantity(value, "s")
        except ValueError:
            self.fail(f"{expected}, got {describe(value)}", line)
        if not MIN_SIGNAL_DELAY_S <= seconds <= MAX_SIGNAL_DELAY_S:
            self.fail(f"{where}.delay: expected between 100 ns and 1 s, got {describe(value)}", line,
                      "a delay the passives of a bin can make, e.g. '2 us'")
        return seconds

    def every(self, body: MarkedDict, where: str, cycle: int) -> int:
        line = body.line_of("every")
        every = self.ticks(body["every"], f"{where}.every", line, minimum=1, what="a period")
        if cycle % every:
            divisors = [d for d in range(1, cycle + 1) if cycle % d == 0]
            below = max((d for d in divisors if d < every), default=None)
            above = min((d for d in divisors if d > every), default=None)
            near = " or ".join(str(d) for d in (below, above) if d is not None)
            self.fail(f"{where}.every: expected a divisor of cycle {cycle}, got {every}", line,
                      f"nearest divisors: {near}")
        return every

    def tick_set(self, body: MarkedDict, key: str, where: str, period: int,
                 cycle: int, written: str | None = None) -> frozenset[int]:
        """Windows, one tick or an expression over 0..period-1, repeated over the cycle.

        ``written`` is the key as the file spells it (an earlier name), for messages.
        """
        value = body[key]
        line = body.line_of(key)
        where = f"{where}.{written or key}"
        if isinstance(value, str):
            check_expression(value, where, error=SpecError, file=self.path, line=line)
            try:
                base = ticks_where(value, period)
            except ExprError as exc:
                self.fail(f"{where}: {exc.message}", line, EXPR_HINT)
        elif isinstance(value, MarkedList):
            base = self.windows(value, where, period, cycle)
        elif isinstance(value, int) and not isinstance(value, bool):
            start, end = self.window(value, where, line, period, cycle)
            base = frozenset(range(start, end))
        else:
            self.fail(f"{where}: expected a list of windows [[start, end], ...], one tick, or an "
                      f"expression over t such as \"t % 32 == 20\", got {_kind(value)}", line)
        if period == cycle:
            return base
        return frozenset(r + t for r in range(0, cycle, period) for t in base)

    def windows(self, items: MarkedList, where: str, period: int, cycle: int) -> frozenset[int]:
        spans = []
        for index, item in enumerate(items):
            line = items.line_of(index)
            start, end = self.window(item, where, line, period, cycle)
            spans.append((start, end, line))
        self.check_overlaps(spans, where)
        return frozenset(t for start, end, _ in spans for t in range(start, end))

    def window(self, item: object, where: str, line: int, period: int,
               cycle: int) -> tuple[int, int]:
        if isinstance(item, MarkedList):
            if len(item) != 2:
                self.fail(f"{where}: expected a window [start, end], got {_kind(item)}", line,
                          "[a, b] means ticks a <= t < b")
            start = self.ticks(item[0], f"{where} (window start)", item.line_of(0))
            end = self.ticks(item[1], f"{where} (window end)", item.line_of(1))
        elif isinstance(item, (int, str)) and not isinstance(item, bool):
            start = self.ticks(item, f"{where} (tick)", line)
            end = start + 1
        else:
            self.fail(f"{where}: expected a window [start, end] or a tick, got {_kind(item)}", line)
        shown = f"[{start}, {end}]"
        if start >= end:
            self.fail(f"{where}: window {shown} is empty; expected start < end", line,
                      "[a, b] means ticks a <= t < b")
        if start < 0:
            self.fail(f"{where}: window {shown} starts before tick 0", line)
        if end > period:
            limit = f"every: {period}" if period != cycle else f"the cycle of {cycle} ticks"
            self.fail(f"{where}: window {shown} goes past {limit}", line,
                      f"keep 0 <= start < end <= {period}")
        return start, end

    def check_overlaps(self, spans: list[tuple[int, int, int]], where: str) -> None:
        reach = None      # the listed window reaching furthest so far
        for start, end, line in sorted(spans):
            if reach is not None and start < reach[1]:
                first, last = start, min(end, reach[1]) - 1
                both = f"tick {first}" if first == last else f"ticks {first}-{last}"
                self.fail(f"{where}: windows [{reach[0]}, {reach[1]}] and [{start}, {end}] overlap "
                          f"at {both}", max(line, reach[2]),
                          "merge them into one window")
            if reach is None or end > reach[1]:
                reach = (start, end, line)

    def clear_of(self, body: MarkedDict, name: str, where: str,
                 names: tuple[str, ...]) -> dict[str, int]:
        where = f"{where}.clear_of"
        value = self.mapping(body["clear_of"], where, body.line_of("clear_of"), "{sample: 1}")
        result = {}
        for other, distance in value.items():
            line = value.line_of(other)
            if other == name:
                self.fail(f"{where}: a signal cannot be clear of itself ({describe(name)})", line)
            if other not in names:
                others = listed(n for n in names if n != name)
                self.fail(f"{where}: unknown signal {describe(other)}", line,
                          f"known signals: {others}")
            result[other] = self.ticks(distance, f"{where}.{other}", line, minimum=1,
                                       what="a distance")
        return result

    def check_clear_of(self, spec: Spec, data: MarkedDict) -> None:
        """Refuse pairs that no stretch choice can clear (see the module docstring)."""
        for name, signal in spec.signals.items():
            for other, needed in signal.clear_of.items():
                if signal.dont_care or spec.signals[other].dont_care:
                    continue
                if clear_of_feasible(spec, name, other) is not False:
                    continue
                line = data["signals"][name]["clear_of"].line_of(other)
                message, hint = _clear_of_message(spec, name, other, needed)
                self.fail(message, line, hint)

    # -- levels (staircases)
    def levels(self, data: MarkedDict, cycle: int, signals: dict) -> dict[str, LevelSpec]:
        if "staircases" not in data or data["staircases"] is None:
            return {}
        example = "{ramp: {bits: [0, 1, 2, 3]}}"
        section = self.written_as.get("staircases", "staircases")
        body = self.mapping(data["staircases"], section, data.line_of("staircases"), example)
        switch_names = set(data.get("switches") or ()) if isinstance(data.get("switches"), dict) else set()
        result = {}
        for name, entry in body.items():
            line = body.line_of(name)
            if not isinstance(name, str) or not _IDENTIFIER.match(name):
                self.fail(f"{section}: expected a net name (letters, digits, _), got {describe(name)}", line)
            if name.upper() in POWER_NETS or name.lower() == "clk":
                self.fail(f"{section}: the name {describe(name)} is taken by a power net or the clock", line,
                          "name the staircase, e.g. ramp")
            if name in signals or name in switch_names:
                self.fail(f"{section}: the name {describe(name)} is already a signal or a switch", line,
                          "a staircase needs a net name of its own, e.g. ramp")
            result[name] = self.level(name, entry, line, cycle, section)
        return result

    def level(self, name: str, entry: object, line: int, cycle: int,
              section: str = "staircases") -> LevelSpec:
        where = f"{section}.{name}"
        entry = self.mapping(entry, where, line, "{bits: [0, 1, 2, 3], kind: r2r, tolerance: 5 %}")
        self.check_keys(entry, LEVEL_KEYS, where)
        if "bits" not in entry:
            self.fail(f"{where}: missing 'bits' (the counter tick bits driving the ladder)", line,
                      "add bits: [0, 1, 2, 3], least significant first")
        bits, bit_lines = self.level_bits(entry, where, cycle)
        kind = entry.get("kind", "r2r")
        if kind not in LEVEL_KINDS:
            self.fail(f"{where}.kind: expected r2r or binary, got {_kind(kind)}",
                      entry.line_of("kind"), _closest(kind, LEVEL_KINDS))
        tolerance, given = DEFAULT_LADDER_TOLERANCE, "tolerance" in entry
        if given:
            tolerance = self.level_tolerance(entry["tolerance"], f"{where}.tolerance",
                                             entry.line_of("tolerance"))
        load = None
        if "load" in entry:
            load = self.resistance(entry["load"], f"{where}.load", entry.line_of("load"))
        return LevelSpec(name, bits, kind, tolerance, given, load, line, bit_lines, section)

    def level_bits(self, entry: MarkedDict, where: str, cycle: int) -> tuple[tuple[int, ...], tuple[int, ...]]:
        value = entry["bits"]
        line = entry.line_of("bits")
        if not isinstance(value, MarkedList) or not value:
            self.fail(f"{where}.bits: expected a list of tick bits such as [0, 1, 2, 3], got "
                      f"{_kind(value)}", line)
        width = max(1, (cycle - 1).bit_length())
        seen: dict[int, int] = {}
        for index, bit in enumerate(value):
            at = value.line_of(index)
            if isinstance(bit, bool) or not isinstance(bit, int):
                self.fail(f"{where}.bits: expected whole numbers (tick bit k has weight 2^k), got "
                          f"{_kind(bit)}", at)
            if not 0 <= bit < width:
                self.fail(f"{where}.bits: bit {bit} is out of range for a cycle of {cycle} ticks",
                          at, f"the tick bits are 0 .. {width - 1}")
            if bit in seen:
                self.fail(f"{where}.bits: bit {bit} is listed twice", at)
            seen[bit] = at
        if len(value) > 16:
            self.fail(f"{where}.bits: expected at most 16 bits, got {len(value)}", line)
        return tuple(value), tuple(value.line_of(i) for i in range(len(value)))

    def level_tolerance(self, value: object, where: str, line: int) -> float:
        match = _PERCENT.match(value) if isinstance(value, str) else None
        if match is None:
            self.fail(f"{where}: expected a percentage such as '5 %', got {_kind(value)}", line,
                      "write it with a % sign")
        fraction = float(match.group(1)) / 100
        if not 0 < fraction < 0.5:
            self.fail(f"{where}: expected a tolerance above 0 % and below 50 %, got {describe(value)}", line,
                      "resistors are marked 1 %, 2 %, 5 %, 10 % or 20 %")
        return fraction

    def resistance(self, value: object, where: str, line: int) -> float:
        try:
            ohms = parse_quantity(value, "ohm")
        except (ValueError, TypeError):
            ohms = None
        if ohms is None or not math.isfinite(ohms) or ohms <= 0:
            self.fail(f"{where}: expected a resistance such as '100k', got {_kind(value)}", line)
        return ohms

    # -- switches
    def switches(self, data: MarkedDict, signals: dict[str, SignalSpec]) -> dict[str, SwitchSpec]:
        if "switches" not in data or data["switches"] is None:
            return {}
        body = self.mapping(data["switches"], "switches", data.line_of("switches"),
                            "{probe_in: {select: sample, on: ladder_out, off: GND}}")
        result = {}
        for name, entry in body.items():
            line = body.line_of(name)
            if not isinstance(name, str) or not _IDENTIFIER.match(name):
                self.fail(f"switches: expected a switch name (letters, digits, _), got {describe(name)}",
                          line)
            result[name] = self.switch(name, entry, line, signals)
        return result

    def switch(self, name: str, entry: object, line: int,
               signals: dict[str, SignalSpec]) -> SwitchSpec:
        where = f"switches.{name}"
        entry = _yaml11_keys(self.mapping(entry, where, line,
                                          "{select: sample, on: ladder_out, off: GND}"))
        self.check_keys(entry, SWITCH_KEYS, where)
        for key in SWITCH_KEYS:
            if key not in entry:
                self.fail(f"{where}: missing {key!r}", line,
                          "a switch needs select (a signal), on and off (net names)")
        select = entry["select"]
        if not isinstance(select, str):
            self.fail(f"{where}.select: expected the name of one signal, got {describe(select)}",
                      entry.line_of("select"), f"known signals: {listed(signals)}")
        if select not in signals:
            self.fail(f"{where}.select: unknown signal {describe(select)}", entry.line_of("select"),
                      f"known signals: {listed(signals)}")
        nets = {key: self.net_name(entry[key], f"{where}.{key}", entry.line_of(key))
                for key in ("on", "off")}
        if nets["on"] == nets["off"]:
            self.fail(f"{where}: on and off are the same net {describe(nets['on'])}",
                      entry.line_of("off"))
        return SwitchSpec(name=name, select=select, on=nets["on"], off=nets["off"], line=line)

    def net_name(self, value: object, where: str, line: int) -> str:
        if isinstance(value, bool):
            self.fail(f"{where}: expected a net name, got {describe(value)}", line,
                      "quote words such as 'on', 'off', 'yes', 'no'")
        if not isinstance(value, str) or not _IDENTIFIER.match(value):
            self.fail(f"{where}: expected a net name (letters, digits, _) or GND, got "
                      f"{_kind(value)}", line)
        if value.upper() in POWER_NETS and value != value.upper():
            self.fail(f"{where}: power nets are written in capitals, got {describe(value)}", line,
                      f"write {value.upper()}")
        return value


def _clear_of_message(spec: Spec, name: str, other: str, needed: int) -> tuple[str, str]:
    """Why ``name`` cannot be clear of ``other``, and what would help."""
    delivered = {n: s.high for n, s in spec.signals.items()}
    pairs = [v for v in clear_of_violations(spec, delivered) if (v.signal, v.other) == (name, other)]
    where = f"signals.{name}.clear_of.{other}"
    if pairs:
        worst = min(pairs, key=lambda v: (v.distance, v.edge))
        if worst.distance == 0:
            what = (f"edges of {name} at tick {worst.edge} and {other} at {worst.other_edge} "
                    f"collide")
        else:
            what = (f"edges of {name} at tick {worst.edge} and {other} at {worst.other_edge} "
                    f"are {_plural(worst.distance)} apart, clear_of needs {needed}")
    else:
        what = f"no stretch choice keeps every edge of {name} {_plural(needed)} from {other}"
    fix = stretch_needed(spec, name, other)
    if fix is None:
        hint = "no stretch clears them: window starts never move, so move a window"
    else:
        hint = f"stretch: {fix[1]} on {fix[0]} would clear them"
    return f"{where}: {what}", hint


def _yaml11_keys(entry: MarkedDict) -> MarkedDict:
    """YAML 1.1 reads the keys ``on``/``off`` as True/False; take them back."""
    fixed = MarkedDict()
    fixed.line = entry.line
    fixed.key_lines = {}
    for key, value in entry.items():
        word = {True: "on", False: "off"}.get(key, key) if isinstance(key, bool) else key
        fixed[word] = value
        fixed.key_lines[word] = entry.line_of(key)
    return fixed


# --------------------------------------------------------------------------
# Entry point

def load_spec(path: str | Path, *, text: str | None = None) -> Spec:
    """Read and check a spec file (or ``text``, with ``path`` naming it)."""
    path = Path(path)
    try:
        data = load_yaml(path) if text is None else parse_yaml(text, path)
    except SpecError:
        raise
    except InputError as exc:
        raise SpecError(exc.message, file=exc.file, line=exc.line, hint=exc.hint) from exc
    return _Reader(path).spec(data)
