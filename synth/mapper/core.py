"""``map_design``: covers -> a verified gate network over the bin's gates, fewest
chips, then gates, then depth; exact synthesis for small designs, structure
selection otherwise, every result simulated on every cared-for state.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, replace
from typing import Iterable, Mapping, Sequence

from ..effort import Effort, Meter, effort_named
from ..errors import InternalError, UsageError
from ..minimize import Function, minimize
from ..network import Gate, Network, SignalOut, counting_words, evaluate_gate, evaluate_words
from .bounds import counting_bounds, exact_complete
from .candidates import cover_forms
from .exact import exact_search
from .library import Library, chips_of
from .problem import EXACT_MAX_VARS, Problem, Signal, constant_level, literal_of
from .shortage import Failure
from .structure import select_structure


EXACT_MAX_OUTPUTS = 4     # ... and this many signals needing gates


def _problem(functions, nvars: int, var_nets: Sequence[str], polarity: Mapping[str, str]
             ) -> tuple[Problem, dict[str, SignalOut], list[Signal]]:
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
        sig = Signal(f.name, frozenset(f.on) & care, care, pol)
        every.append(sig)
        level = constant_level(sig)
        if level is not None:
            low = pol == "low"
            direct[f.name] = SignalOut("VDD" if level != low else "VSS", "low" if low else "high")
            continue
        literal = literal_of(sig, nvars)
        if literal is not None:
            i, comp = literal
            if pol == "free" or (pol == "low") == bool(comp):
                direct[f.name] = SignalOut(var_nets[i], "low" if comp else "high")
                continue
        needing.append(sig)
    return Problem(nvars, tuple(var_nets), needing), direct, every


def _covers(problem: Problem, functions, cover, nvars: int, exact: str) -> list:
    """Two covers per signal, one per phase: the given (or minimized) one and its opposite."""
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


def _solo_covers(problem: Problem, by_name, nvars: int, mode: str) -> list:
    """Each signal minimized on its own, both phases: a shared multi-output cover
    can give one signal terms that only pay off for others (``(Q0+Q1+Q2+Q3)'``
    is one OR, not five shared terms)."""
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
               glitch_free: Iterable[str] = (), advise: bool = True) -> Network:
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
    selection's two-level-derived one.  ``advise=False``: a caller that only asks
    whether a design exists (what the bin lacks) gets a ``NotFoundError`` without
    the search for one part that would make it easy.
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
    forms = cover_forms(problem, _covers(problem, functions, cover, nvars, exact))
    run_exact = _exact_wanted(problem, exact)
    failure = Failure(problem, forms, lib, meter, level, budget, advise=advise)
    result, finished = select_structure(problem, forms, lib, int(budget * (0.45 if run_exact else 0.95)), meter)
    notes = []
    if result is not None:
        notes.append("structure selection: " + (
            "minimal chips, then gates, over the candidate structures considered" if finished
            else f"best found within the search effort ({level.name})"))
    lower: float = 1
    if run_exact:
        incumbent = result.cost if result else None
        exact_result, proven, lower = exact_search(problem, lib.cells, int(budget * 0.95), meter, incumbent)
        if exact_result is not None and glitch_free and _static_hazards(
                exact_result.gates, exact_result.signals, glitch_free, every, var_nets):
            if result is None:
                raise failure.error(lower)
            notes.append("exact synthesis: its circuit could pulse " + ", ".join(sorted(glitch_free)) +
                         " on a single counter step; the glitch-free structure is used")
            exact_result, proven = None, False
        if exact_result is not None:
            result = exact_result
        if result is not None and proven and exact_complete(lib.cells):
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
    chip_floor, gate_floor = counting_bounds(problem, lib.cells)
    if not result.proven and result.cost.chips <= chip_floor and result.cost.gates <= gate_floor:
        result.proven = True
        notes.append("counting bound: no circuit of the bin has fewer chips or gates "
                     "(fan-in, distinct outputs, inversion)")
    # an exact search that found nothing among plain gates may bound at infinity
    lb = result.cost.chips if result.proven else max(1, int(min(max(lower, chip_floor), result.cost.chips)))
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
                    every: Sequence[Signal], var_nets: Sequence[str]) -> list[str]:
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


def _exact_wanted(problem: Problem, exact: str) -> bool:
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


def verify_design(network: Network, functions, var_nets: Sequence[str], library: Library,
                  polarity: Mapping[str, str]) -> None:
    """The self-check of ``map_design`` for a network built elsewhere (a decomposition):
    every cared-for minterm of every function, the bin's limits, no loops."""
    _, _, every = _problem(functions, len(var_nets), var_nets, polarity)
    _verify(network, every, len(var_nets), library)


def _verify(network: Network, signals: Sequence[Signal], nvars: int, lib: Library) -> None:
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
