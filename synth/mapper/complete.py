"""Completeness on tight bins: when the gate-only mapping finds nothing (or, with spare
switch sections, leaves a gap to its lower bound), split a signal on a counter bit
(Shannon expansion, the XOR case first: ``factor``) and map the pieces.

Two ways to join a split signal again: a spare section of a switch chip the plan
already holds, as a 2:1 mux (``switchmux``), or gates synthesised exactly over the
cut's nets (``cutsplit``: the bit and the cofactors' nets as the only inputs).  The
pieces are mapped by the gate engines, recursively while spare sections and tries
last.  Every split design passes the same self-check as any other mapping
(``core.verify_design``), so it matches the spec on every cared-for counter state.

Interface: ``map_design`` (the package's entry: ``core.map_design``, then the
splits; same arguments, results and errors), ``SPLIT_TRIES``, ``GAP_TRIES``, ``SPLIT_SHARE``.
"""

from __future__ import annotations

from typing import Callable, Iterable, Mapping, Sequence

from ..effort import effort_named
from ..errors import NotFoundError, SafetyCapError, ShortError
from ..network import Network
from .core import map_design as map_gates
from .cutsplit import gate_split
from .factor import splits
from .library import Library
from .problem import Signal, needed_support
from .switchmux import switch_split


SPLIT_TRIES = 6          # splits tried per mapping, in all (each one or two gate mappings)
GAP_TRIES = 4            # ... when a gate-only design exists and only a gap to its bound is left
SPLIT_SHARE = 4          # each piece's gate mapping gets 1/SPLIT_SHARE of the mapping's work


def map_design(functions, nvars: int, var_nets: Sequence[str], library: Library, *,
               polarity: Mapping[str, str], cover=None, exact: str = "auto", effort=None,
               steps: int | None = None, glitch_free: Iterable[str] = ()) -> Network:
    """``core.map_design``, completed by splits where it fails or leaves a gap.

    A split design is taken only when the gate-only one is missing, or takes
    more chips (then gates) than its lower bound while a spare switch section
    could help (``GAP_TRIES`` splits; skipped with ``exact='no'``, the quick
    search what-the-bin-lacks runs for each candidate part).
    """
    glitch_free = tuple(glitch_free)
    budget = effort_named(effort).steps if steps is None else steps
    args = dict(polarity=polarity, exact=exact, effort=effort, glitch_free=glitch_free)
    try:
        network = map_gates(functions, nvars, var_nets, library, cover=cover, steps=budget, **args)
    except SafetyCapError:
        raise
    except (NotFoundError, ShortError):
        found = best_split(functions, nvars, var_nets, library, args, budget, [SPLIT_TRIES], None)
        if found is None:
            raise
        return found
    if network.proven_minimal or not library.spare_switches() or exact == "no" or \
            (network.lower_bound or 0) >= sum(network.chips.values()):
        return network
    found = best_split(functions, nvars, var_nets, library, args, budget, [GAP_TRIES], cost(network),
                       gates_too=False)
    return network if found is None else found


def cost(network: Network) -> tuple[int, int]:
    """Chips taken from the bin, then gates (the mapper's objective)."""
    return sum(network.chips.values()), len(network.gates)


def best_split(functions, nvars: int, var_nets: Sequence[str], library: Library, args: dict,
               budget: int, tries: list[int], beat: tuple[int, int] | None, *,
               gates_too: bool = True) -> Network | None:
    """The first split (in ``factor.splits`` order) whose design is found and beats
    ``beat``: joined by a spare switch section where one is left, else (``gates_too``)
    by gates.  ``tries`` is shared by the whole search (a list, counted down)."""
    universe = frozenset(range(1 << nvars))
    signals = {f.name: Signal(f.name, frozenset(f.on) - frozenset(f.dc), universe - frozenset(f.dc),
                              args["polarity"].get(f.name, "high")) for f in functions}
    wanted = [f for f in functions if f.name not in args["glitch_free"]]
    map_piece = _piece_mapper(nvars, var_nets, args, budget // SPLIT_SHARE, tries)
    joiners = ([switch_split] if library.spare_switches() else []) + ([gate_split] if gates_too else [])
    for join in joiners:
        for split in splits(wanted, nvars, lambda f: needed_support(signals[f.name], nvars)):
            if tries[0] <= 0:
                return None
            tries[0] -= 1
            network = join(split, functions, nvars, var_nets, library, args, map_piece)
            if network is not None and (beat is None or cost(network) < beat):
                return network
    return None


def _piece_mapper(nvars: int, var_nets: Sequence[str], args: dict, budget: int, tries: list[int]
                  ) -> Callable:
    """Maps the pieces of a split: the gate engines, then (while spare sections and
    tries last) one more split; None when neither finds a design."""
    def map_piece(functions, library: Library, polarity: Mapping[str, str],
                  piece_nvars: int = nvars, piece_nets: Sequence[str] = var_nets) -> Network | None:
        piece_args = dict(args, polarity=polarity)
        try:
            return map_gates(functions, piece_nvars, piece_nets, library, steps=budget, **piece_args)
        except SafetyCapError:
            raise
        except (NotFoundError, ShortError):
            if piece_nvars != nvars or not library.spare_switches() or tries[0] <= 0:
                return None
            return best_split(functions, nvars, var_nets, library, piece_args, budget, tries, None,
                              gates_too=False)
    return map_piece
