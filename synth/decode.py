"""Per-signal decode: each signal's asserted ticks as a minimized function of the counter outputs.

Interface: ``derive(spec, plan, *, exact='auto') -> Decode``; records
``SignalDecode`` and ``Decode``; ``tick_function(plan, asserted, dont_care,
name)`` (one signal's on/don't-care minterms) and ``asserted_ticks(cover,
name, plan)`` (the ticks a cover asserts).

Per signal, tick t stands for the counter state ``plan.state_of_tick[t]``;
asserted ticks are the on-set, ``dont_care`` ticks and the states the
counter never holds are don't-cares, and variables a signal does not depend
on drop out in the minimizer.  ``stretch`` is not a per-tick don't-care: the
run added after a window end must be contiguous, so the allowed run lengths
are searched (``spec.stretch_options``), the choices that meet every
``clear_of`` are kept and the one with the cheapest decode (minimizer cost)
is taken.  Don't-care ticks the cover asserts move edges too: where that
breaks a ``clear_of``, those ticks are pinned unasserted and the cover is
made again.  A decoded counter reset (``plan.reset``) joins the cover as the
internal function ``_reset``.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from .counter import CounterPlan
from .errors import InternalError, ShortError, SpecError
from .minimize import Cover, Function, minimize, to_text
from .spec import clear_of_violations, cyclic_distance, stretch_needed, stretch_options

COST_OPTIONS = 48            # stretch choices priced with the minimizer per signal
SCAN_OPTIONS = 4096          # stretch choices looked at for validity per signal
DC_ROUNDS = 4                # passes pinning don't-care ticks that broke a clear_of


# ---------------------------------------------------------------- records

@dataclass
class SignalDecode:
    """One signal's decode, as the decode command shows it."""

    name: str
    expression: str                   # trade notation over counter pins (NOT f when complement)
    phase: str                        # 'true' or 'complement' (the cover realises NOT f)
    polarity: str                     # delivered level while asserted: 'high' or 'low'
    literals: int
    terms: int
    proven_minimal: bool
    depends_on: tuple[str, ...]       # counter nets the expression uses
    delivered: frozenset[int]         # ticks asserted by the circuit
    stretch_added: frozenset[int]     # ticks the chosen stretch added after window ends
    dc_ticks_used: frozenset[int]     # dont_care ticks the cover asserts
    dc_states_used: frozenset[int]    # never-held counter states the cover asserts (minterms)


@dataclass(frozen=True)
class Decode:
    """The minimized decode of every signal (and of the counter reset)."""

    plan: CounterPlan
    functions: tuple[Function, ...]
    cover: Cover
    signals: dict[str, SignalDecode]
    reset: SignalDecode | None
    free_phase: frozenset[str]
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def delivered(self) -> dict[str, frozenset[int]]:
        return {name: s.delivered for name, s in self.signals.items()}

    @property
    def dont_cares_used(self) -> dict[str, frozenset[int]]:
        """Per signal, the dont_care ticks its cover asserts."""
        return {name: s.dc_ticks_used for name, s in self.signals.items()}

    @property
    def literals(self) -> dict[str, int]:
        return {name: s.literals for name, s in self.signals.items()}

    @property
    def terms(self) -> dict[str, int]:
        return {name: s.terms for name, s in self.signals.items()}

    @property
    def phase(self) -> dict[str, str]:
        return {name: s.phase for name, s in self.signals.items()}

    @property
    def proven_minimal(self) -> bool:
        return self.cover.proven_minimal


# ---------------------------------------------------------------- ticks <-> minterms

def tick_function(plan: CounterPlan, asserted: frozenset[int], dont_care: frozenset[int],
                  name: str) -> Function:
    """On-set and don't-cares over the counter variables for one signal.

    A state held at several ticks (stages not pinned out) must agree on all
    of them; the counter allocation made sure the spec's own sets do.  The
    never-held states the outputs show for an instant between two ticks
    (``plan.passing``: decoded outputs changing over, outputs of units
    clocked together) are given the signal's level where it is the same on
    both ticks and no other changeover asks the opposite, so the decode does
    not pulse there.  The state an asynchronous reset shows
    (``reset.transient``) lasts a whole reset delay, so its rule comes first:
    the level of the last tick when tick 0 has the same.
    """
    states = plan.state_of_tick
    on = {states[t] for t in asserted if t not in dont_care}
    off = {states[t] for t in range(plan.cycle) if t not in asserted and t not in dont_care}
    if on & off:
        raise _unheld(plan, name)
    transient = plan.reset.transient if plan.reset is not None else None
    last = plan.cycle - 1
    if transient is not None and last not in dont_care and 0 not in dont_care \
            and (last in asserted) == (0 in asserted) and transient not in on | off:
        (on if 0 in asserted else off).add(transient)     # lasts a reset delay: it comes first
    want_on: set[int] = set()
    want_off: set[int] = set()
    for t, shown in plan.passing.items():
        after = (t + 1) % plan.cycle
        if t in dont_care or after in dont_care or (t in asserted) != (after in asserted):
            continue
        (want_on if t in asserted else want_off).update(shown)
    on |= want_on - want_off - off
    off |= want_off - want_on - on
    dc = ({states[t] for t in dont_care} | plan.unreachable) - on - off
    return Function(name, frozenset(on), frozenset(dc))


def _consistent(plan: CounterPlan, asserted: frozenset[int], dont_care: frozenset[int]) -> bool:
    states = plan.state_of_tick
    on = {states[t] for t in asserted if t not in dont_care}
    return not any(states[t] in on for t in range(plan.cycle)
                   if t not in asserted and t not in dont_care)


def _unheld(plan: CounterPlan, name: str) -> ShortError:
    return ShortError(f"signal {name!r} cannot be decoded from the counter stages pinned out: "
                      "two ticks it tells apart look alike on them",
                      hint="add a counter that brings out every low stage (4040, 4024, 74HC393)")


def _var_patterns(nvars: int) -> list[int]:
    """Bitset over all minterms of each variable being 1 (bit m set where bit i of m is).

    >>> [bin(p) for p in _var_patterns(2)]
    ['0b1010', '0b1100']
    """
    full = 1 << nvars
    patterns = []
    for i in range(nvars):
        block, length = ((1 << (1 << i)) - 1) << (1 << i), 2 << i
        while length < full:
            block |= block << length
            length *= 2
        patterns.append(block)
    return patterns


def _cover_bits(cover: Cover, name: str, patterns: list[int]) -> int:
    """Bitset of the minterms at which the signal is asserted (the phase undone)."""
    everything = (1 << (1 << cover.nvars)) - 1
    bits = 0
    for mask, value in cover.cubes(name):
        cube = everything
        for i in range(cover.nvars):
            if mask >> i & 1:
                cube &= patterns[i] if value >> i & 1 else ~patterns[i]
        bits |= cube
    return everything & ~bits if cover.phases[name] == "complement" else bits


def _bitset(minterms, nvars: int) -> int:
    raw = bytearray(((1 << nvars) + 7) // 8)
    for m in minterms:
        raw[m >> 3] |= 1 << (m & 7)
    return int.from_bytes(raw, "little")


def _members(bits: int) -> frozenset[int]:
    """The set bits of a bitset.

    >>> sorted(_members(0b100101))
    [0, 2, 5]
    """
    raw = bits.to_bytes((bits.bit_length() + 7) // 8, "little")
    return frozenset(8 * i + j for i, byte in enumerate(raw) if byte for j in range(8) if byte >> j & 1)


def _ticks_in(bits: int, plan: CounterPlan) -> frozenset[int]:
    raw = bits.to_bytes(((1 << plan.nvars) + 7) // 8, "little")
    return frozenset(t for t, m in enumerate(plan.state_of_tick) if raw[m >> 3] >> (m & 7) & 1)


def asserted_ticks(cover: Cover, name: str, plan: CounterPlan) -> frozenset[int]:
    """The ticks of one cycle at which the cover asserts the signal."""
    return _ticks_in(_cover_bits(cover, name, _var_patterns(plan.nvars)), plan)


# ---------------------------------------------------------------- stretch choice

def _cost(plan: CounterPlan, name: str, asserted: frozenset[int], dont_care: frozenset[int],
          free: bool) -> tuple:
    """What one signal's decode costs alone (the minimizer's own cost order)."""
    function = tick_function(plan, asserted, dont_care, name)
    cover = minimize([function], plan.nvars, plan.var_names, exact="no",
                     free_phase={name} if free else frozenset())
    return cover.cost


def _pairs(spec, name: str) -> list[tuple[str, str]]:
    """Every clear_of pair that involves the signal, as (signal, other)."""
    pairs = [(name, other) for other in spec.signals[name].clear_of]
    pairs += [(other, name) for other, sig in spec.signals.items() if name in sig.clear_of]
    return pairs


def _meets(spec, delivered: dict[str, frozenset[int]], pairs: list[tuple[str, str]]) -> bool:
    wanted = set(pairs)
    return not any((v.signal, v.other) in wanted for v in clear_of_violations(spec, delivered))


def _choose_stretches(spec, plan: CounterPlan, free: frozenset[str]) -> dict[str, frozenset[int]]:
    """One delivered asserted set per signal: its ``high``, or the best stretch choice."""
    chosen = {name: sig.high for name, sig in spec.signals.items()}
    distinct = len(set(plan.state_of_tick)) == plan.cycle
    for name in sorted(n for n, s in spec.signals.items() if s.stretch):
        sig = spec.signals[name]
        pairs = _pairs(spec, name)
        valid = []
        for scanned, option in enumerate(stretch_options(sig, spec.cycle, SCAN_OPTIONS)):
            if scanned >= SCAN_OPTIONS or len(valid) >= COST_OPTIONS:
                break
            trial = {**chosen, name: option}
            if _meets(spec, trial, pairs) and (distinct or _consistent(plan, option, sig.dont_care)):
                valid.append(option)
        if not valid:
            raise _no_stretch(spec, plan, name, chosen)
        if len(valid) == 1:
            chosen[name] = valid[0]
            continue
        priced = [(_cost(plan, name, option, sig.dont_care, name in free), i, option)
                  for i, option in enumerate(valid)]
        chosen[name] = min(priced)[2]
    return chosen


def _no_stretch(spec, plan: CounterPlan, name: str, chosen: dict[str, frozenset[int]]) -> Exception:
    """Which edges collide, and how much stretch would clear them (exit 2)."""
    sig = spec.signals[name]
    violations = [v for v in clear_of_violations(spec, chosen) if name in (v.signal, v.other)]
    if not violations:
        return _unheld(plan, name)
    worst = min(violations, key=lambda v: (v.distance, v.edge))
    fix = stretch_needed(spec, worst.signal, worst.other)
    hint = ("no stretch clears them: window starts never move, so move a window" if fix is None
            else f"stretch: {fix[1]} on {fix[0]} would clear them")
    distance = "collide" if worst.distance == 0 else \
        f"are {worst.distance} tick{'s' if worst.distance != 1 else ''} apart"
    return SpecError(f"signals.{worst.signal}.clear_of.{worst.other}: no stretch choice of {name} "
                     f"(up to {sig.stretch}) meets it; edges of {worst.signal} at tick {worst.edge} and "
                     f"{worst.other} at tick {worst.other_edge} {distance}, clear_of needs {worst.needed}",
                     file=spec.path, line=sig.line, hint=hint)


# ---------------------------------------------------------------- the cover

def _functions(spec, plan: CounterPlan, chosen: dict[str, frozenset[int]],
               dont_care: dict[str, frozenset[int]]) -> list[Function]:
    functions = [tick_function(plan, chosen[name], dont_care[name], name) for name in spec.signals]
    reset = plan.reset
    if reset is not None and not reset.direct:
        functions.append(Function(reset.name, reset.on, reset.dc))
    functions += [Function(carry.name, carry.on, carry.dc) for carry in plan.carries]
    return functions


def _pin_dont_cares(spec, plan: CounterPlan, cover: Cover, chosen, dont_care) -> dict | None:
    """Don't-care ticks to pin unasserted because the cover moved an edge too near another.

    Returns the new dont_care map, or None when no clear_of is broken.
    """
    delivered = {name: asserted_ticks(cover, name, plan) for name in spec.signals}
    broken = clear_of_violations(spec, delivered)
    if not broken:
        return None
    fixed = dict(dont_care)
    cycle = spec.cycle
    for v in broken:
        for name, edge in ((v.signal, v.edge), (v.other, v.other_edge)):
            used = delivered[name] & dont_care[name]
            near = {t for t in used if min(cyclic_distance(t, edge, cycle),
                                           cyclic_distance(t + 1, edge, cycle)) <= v.needed}
            fixed[name] = fixed[name] - (near or used)
    if fixed == dont_care:
        fixed = {name: frozenset() if any(name in (v.signal, v.other) for v in broken) else dc
                 for name, dc in dont_care.items()}
        if fixed == dont_care:
            v = broken[0]
            raise SpecError(f"signals.{v.signal}.clear_of.{v.other}: edges at tick {v.edge} and "
                            f"{v.other_edge} are {v.distance} ticks apart, clear_of needs {v.needed}",
                            file=spec.path, line=spec.signals[v.signal].line,
                            hint="move a window or allow stretch")
    return fixed


def derive(spec, plan: CounterPlan, *, exact: str = "auto") -> Decode:
    """Minimized decode of every signal over the plan's counter variables."""
    free = frozenset(name for name, sig in spec.signals.items() if sig.polarity == "free")
    chosen = _choose_stretches(spec, plan, free)
    dont_care = {name: sig.dont_care for name, sig in spec.signals.items()}
    for _ in range(DC_ROUNDS + 1):
        functions = _functions(spec, plan, chosen, dont_care)
        cover = minimize(functions, plan.nvars, plan.var_names, exact=exact, free_phase=free)
        pinned = _pin_dont_cares(spec, plan, cover, chosen, dont_care)
        if pinned is None:
            break
        dont_care = pinned
    else:
        raise InternalError("don't-care ticks kept breaking a clear_of after pinning",
                            hint="a bug in binsynth; no design was printed")
    patterns = _var_patterns(plan.nvars)
    unreachable = _bitset(plan.unreachable, plan.nvars)
    signals = {name: _signal_decode(cover, name, plan, patterns, unreachable, sig, chosen[name])
               for name, sig in spec.signals.items()}
    reset = _reset_decode(cover, plan, patterns) if plan.reset is not None and not plan.reset.direct else None
    decode = Decode(plan, tuple(functions), cover, signals, reset, free)
    return dataclasses.replace(decode, notes=tuple(_notes(spec, decode, dont_care)))


def _signal_decode(cover: Cover, name: str, plan: CounterPlan, patterns: list[int],
                   unreachable: int, sig, chosen: frozenset[int]) -> SignalDecode:
    bits = _cover_bits(cover, name, patterns)
    delivered = _ticks_in(bits, plan)
    wrong = [t for t in range(plan.cycle) if t not in sig.dont_care and (t in chosen) != (t in delivered)]
    if wrong:
        raise InternalError(f"decode of {name!r} is wrong at tick {wrong[0]} "
                            f"({len(wrong)} ticks)", hint="a bug in binsynth; no design was printed")
    phase = cover.phases[name]
    polarity = sig.polarity if sig.polarity != "free" else ("high" if phase == "true" else "low")
    return SignalDecode(
        name=name, expression=to_text(cover, name), phase=phase, polarity=polarity,
        literals=cover.literals(name), terms=cover.term_count(name),
        proven_minimal=cover.proven_minimal, depends_on=_depends_on(cover, name),
        delivered=delivered, stretch_added=frozenset(chosen - sig.high),
        dc_ticks_used=delivered & sig.dont_care, dc_states_used=_members(bits & unreachable))


def _reset_decode(cover: Cover, plan: CounterPlan, patterns: list[int]) -> SignalDecode:
    reset = plan.reset
    fires = _members(_cover_bits(cover, reset.name, patterns))
    # a synchronous clear decodes the last held state itself (reset.on); nothing else held may fire
    if (fires - reset.on) & set(plan.state_of_tick) or not reset.on <= fires:
        raise InternalError("the reset decode fires on a held state or misses its own",
                            hint="a bug in binsynth; no design was printed")
    return SignalDecode(
        name=reset.name, expression=to_text(cover, reset.name), phase=cover.phases[reset.name],
        polarity=reset.active, literals=cover.literals(reset.name),
        terms=cover.term_count(reset.name), proven_minimal=cover.proven_minimal,
        depends_on=_depends_on(cover, reset.name), delivered=frozenset(),
        stretch_added=frozenset(), dc_ticks_used=frozenset(), dc_states_used=fires - reset.on)


def _depends_on(cover: Cover, name: str) -> tuple[str, ...]:
    mask = 0
    for cube_mask, _ in cover.cubes(name):
        mask |= cube_mask
    return tuple(cover.var_names[i] for i in reversed(range(cover.nvars)) if mask >> i & 1)


def _notes(spec, decode: Decode, dont_care: dict[str, frozenset[int]]) -> list[str]:
    notes = []
    for name, sig in spec.signals.items():
        s = decode.signals[name]
        if s.stretch_added:
            notes.append(f"{name}: stretch adds {len(s.stretch_added)} tick(s) after its window ends "
                         "(the cheapest choice that meets every clear_of)")
        pinned = sig.dont_care - dont_care[name]
        if pinned:
            notes.append(f"{name}: {len(pinned)} dont_care tick(s) kept unasserted so its edges stay "
                         "clear of the signals clear_of names")
    note = decode.cover.note
    if note:
        notes.append(f"minimizer: {note}")
    return notes

