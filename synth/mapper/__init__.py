"""The mapper: covers -> a gate network over the gates the bin really holds.

Interface (re-exported here; one module per method: ``library`` the gate
library, ``trees`` gate trees, ``candidates`` the candidate structures,
``selection`` / ``local`` / ``structure`` structure selection by SAT and by
local search, ``exact`` exact synthesis, ``bounds`` lower bounds and counting
arguments, ``shortage`` the impossible / not-found verdicts and the advice,
``satkit`` the SAT helpers and work-bounded solving, ``core`` map_design):

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

- Chips ``reserved`` for counters or switches are not offered to the gate
  engines; the spare SPDT sections of reserved switch chips are offered to
  the splits only (below).
- A 4068/4078 offers its main (NAND/NOR) output only; the second (AND/OR)
  output is not used, since the network's gate record carries one function.
- Mux units that share their select pins with other units of the chip (the
  74HC153, 74HC157) count as one logic element per chip.
- Analog switch sections (4053 SPDT) appear in the library and in
  ``substitute``.  Sections of a switch chip the spec's switches already take
  are prepaid cells (``build_library(switch_sections=...)``): the gate
  engines do not see them; ``complete`` (the package's ``map_design``) splits
  a signal on a counter bit (Shannon expansion, the XOR case first:
  ``factor``) when the gate-only mapping fails, or leaves a gap to its lower
  bound while spare sections exist, and joins the halves with a spare
  section as a 2:1 mux (``switchmux``) or with gates synthesised exactly
  over the cut's nets (``cutsplit``); the cofactors are mapped by the
  engines and the whole is verified.  Packing puts such
  a section on the switch chip beside the spec's switch.  A signal that only
  drives a switch is given polarity 'free' by the caller, and packing swaps
  the throws.
"""

from __future__ import annotations

from .core import EXACT_MAX_VARS
from .exact import EXACT_MAX_GATES
from .library import Cell, Library, build_library, cells_of_part, chips_of
from .complete import map_design

__all__ = ["Cell", "Library", "build_library", "cells_of_part", "chips_of", "map_design",
           "EXACT_MAX_VARS", "EXACT_MAX_GATES"]
