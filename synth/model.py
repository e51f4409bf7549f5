"""The records that pass between the stages, in one place.

Interface: ``Design`` (the finished plan and every stage's result that led to
it, frozen), ``FixReport`` (what the glitch remedies did, frozen; the
sequencer writes it into the plan), ``Replanner`` (what a remedy may ask of
the sequencer: run the stages again with changed inputs), and, re-exported
from the module that makes each, the stage records: ``Spec`` (spec), ``Bin``
and ``Catalog`` (inventory), ``CounterPlan`` (counter), ``Decode`` (decode),
``Network`` (network: the mapped gates), ``Plan`` (netlist: the packed
plan), ``TimingReport``, ``Remedies`` and ``Trace`` (timing), ``OscillatorPlan``,
``LadderPlan``, ``PowerOnReset``, ``AppliedDelay`` (analogparts; made by clocksource,
staircase, poweron, rcdelay),
``BinLacks`` (wishlist); the mapper's verdicts when no plan exists are the
errors ``ShortError`` (proven impossible, with ``short``) and
``NotFoundError`` (the effort ran out), re-exported from errors.

Data flow (``synth.flow`` runs it; DEVELOPERS.md draws it)::

    Spec + Bin -> CounterPlan -> Decode -> Network -> Plan (+ analog parts)
               -> TimingReport -> (remedies: FixReport) -> Design

This module imports the stage modules and none of them imports it back,
except the remedies (``glitchfix``), which read ``Design`` and return a
``FixReport``; so the import graph stays acyclic.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Protocol

from .analogparts import AppliedDelay, LadderPlan, OscillatorPlan, PowerOnReset
from .counter import CounterPlan
from .decode import Decode
from .errors import NotFoundError, ShortError
from .findings import RcOffer, Registered, Strobed, TimingFix
from .inventory import Bin, Catalog
from .netlist import Plan
from .network import Network
from .spec import Spec
from .timing import Remedies, TimingReport, Trace
from .wishlist import BinLacks

__all__ = ["Design", "FixReport", "Replanner", "Spec", "Bin", "Catalog", "CounterPlan", "Decode",
           "Network", "Plan", "TimingReport", "Remedies", "Trace", "OscillatorPlan", "LadderPlan", "PowerOnReset",
           "AppliedDelay",
           "BinLacks", "ShortError", "NotFoundError"]


@dataclass(frozen=True)
class Design:
    """A finished plan with the intermediate results the reports show.

    ``trace`` and ``remedies`` come from the timing step (``TimingReport``);
    ``lacks`` is the what-the-bin-lacks answer when the plan searched it.
    """

    plan: Plan
    spec: Spec
    stock: Bin
    catalog: Catalog
    counter: CounterPlan
    decode: Decode
    network: Network
    trace: Trace | None = None
    remedies: Remedies | None = None
    lacks: BinLacks | None = None


@dataclass(frozen=True)
class FixReport:
    """What the remedies did to a design, for the plan record (JSON keys in brackets).

    ``strobed`` (clock_gated): signal -> how it is gated with the clock;
    ``rc_offers``: the RC delays offered, never applied; ``timing_fixes``:
    one record per glitching signal, or None when no fix was asked for;
    ``strobe_skipped``: signal -> why it could not be gated; ``registered``:
    signal -> its flip-flop.
    """

    strobed: dict[str, Strobed] = field(default_factory=dict)
    rc_offers: tuple[RcOffer, ...] = ()
    timing_fixes: tuple[TimingFix, ...] | None = None
    strobe_skipped: dict[str, str] = field(default_factory=dict)
    registered: dict[str, Registered] = field(default_factory=dict)


class Replanner(Protocol):
    """The sequencer as a remedy sees it: the same stages, run again with changed inputs,
    at the user's ``--exact`` and ``--effort``."""

    def decode_and_map(self, spec: Spec, stock: Bin, catalog: Catalog,
                       counter_plan: CounterPlan) -> tuple[Decode, Network]:
        """The decode derived for ``counter_plan`` and mapped onto the bin."""
        ...

    def pack(self, design: Design, network: Network) -> Plan:
        """``network`` packed onto chips with the analog parts added (no timing)."""
        ...

    def replan(self, design: Design, *, counter_plan: CounterPlan | None = None,
               decode: Decode | None = None, network: Network | None = None,
               strobed: dict[str, Strobed] | None = None,
               registered: dict[str, Registered] | None = None) -> Design:
        """The stages again from the counter plan on (from packing on, given a network),
        timing included."""
        ...
