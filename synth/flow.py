"""The sequencer: the only code that runs the stages in order.

Interface: ``make_plan(spec_path, bin_path, *, catalog=None, exact='auto',
fix=(), effort=None, lacks=False) -> Design``; ``Settings`` (the user's
choices that steer every stage: ``exact``, ``effort``, ``fix``, ``lacks``);
``Sequencer(settings)`` with ``plan(spec, stock, catalog) -> Design`` and the
re-planning calls a remedy makes (``decode_and_map``, ``pack``, ``replan``:
``model.Replanner``); ``with_timing(design, report)``.  No plan: the stages
raise ``ShortError`` (exit 3, proven, with ``short``) or ``NotFoundError``
(exit 4, the effort ran out).

The order, each step a function from records to records (``synth.stages``
and the stage modules)::

    spec, bin  --counted_first-->  CounterPlan      (every countable shortage at once)
    CounterPlan --decode.derive-->  Decode
    Decode     --map_decode-->      Network          (what the bin lacks starts beside it)
    Network    --packing.pack-->    Plan             (self-checked tick by tick)
    Plan       --add_analog_parts-> Plan             (oscillator, power-on reset, staircases)
    Design     --timing_report-->   TimingReport     (pure; written into a new Plan here)
    Design     --glitchfix.apply_fixes--> Design, FixReport   (remedies re-plan through us)
    Design     --rcdelay.apply_delays-->  Design     (RC delays asked for; timing again here)

A remedy never calls the stages itself: ``glitchfix`` is handed this
sequencer and asks it to run them again from the counter plan (or from
packing) with changed inputs, at the user's ``--exact`` and ``--effort``.
What the bin lacks re-maps the same decode in ``wishlist``.  Nothing is
returned that has not passed the zero-delay self-check tick by tick.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

from .decode import derive
from .effort import Effort, effort_named
from .findings import Registered, Strobed
from .glitchfix import apply_fixes
from .inventory import Bin, Catalog, load_bin, load_catalog
from .model import CounterPlan, Decode, Design, FixReport, Network, Plan, TimingReport
from .packing import pack
from .rcdelay import apply_delays
from .spec import Spec, load_spec
from .stages import add_analog_parts, async_reset_names, counted_first, map_decode, mapping_inputs
from .timing import timing_report
from .wishlist import Search, start_search

__all__ = ["make_plan", "Settings", "Sequencer", "with_timing", "with_fixes"]


@dataclass(frozen=True)
class Settings:
    """What the user chose that steers the stages.

    ``exact``: exact (proven) search where sizes allow (``auto``), always,
    never; ``effort``: an ``effort.EFFORTS`` level name (work budgets, never
    seconds), used by the plan's own mapping and by every re-mapping a remedy
    asks for; ``fix``: remedies to apply (``glitches``); ``lacks``: also find
    what the bin lacks (the quick effort skips it).
    """

    exact: str = "auto"
    effort: str | Effort | None = None
    fix: frozenset[str] = frozenset()
    lacks: bool = False


def make_plan(spec_path: str | Path, bin_path: str | Path, *, catalog: Catalog | None = None,
              exact: str = "auto", fix: Iterable[str] = (), effort: str | Effort | None = None,
              lacks: bool = False) -> Design:
    """Read the spec and the bin and run every stage; raise SynthError subclasses for the
    user's problems.  The answer of the what-the-bin-lacks search is ``design.lacks``
    and the plan's ``bin_lacks``."""
    catalog = catalog or load_catalog()
    spec = load_spec(spec_path)
    stock = load_bin(bin_path, catalog, spec.supply)
    settings = Settings(exact=exact, effort=effort, fix=frozenset(fix), lacks=lacks)
    return Sequencer(settings).plan(spec, stock, catalog)


@dataclass(frozen=True)
class Sequencer:
    """The stages in order, at one set of ``Settings`` (also what a remedy re-plans with)."""

    settings: Settings = Settings()

    def plan(self, spec: Spec, stock: Bin, catalog: Catalog) -> Design:
        """Spec and bin -> the finished, checked design (remedies and what the bin lacks
        included, as the settings ask)."""
        counter_plan = counted_first(spec, stock, catalog)
        decode = derive(spec, counter_plan, exact=self.settings.exact)
        library, polarity = mapping_inputs(spec, stock, catalog, counter_plan, decode)
        search = self._start_lacks(decode, counter_plan, library, polarity, stock, catalog)
        try:
            network = map_decode(decode, counter_plan, library, polarity, self.settings.exact,
                                 self.settings.effort)
            design = self._through_timing(spec, stock, catalog, counter_plan, decode, network)
            design = self._remedies(design)
            design = apply_delays(design, self.settings.fix, retime)
        except BaseException:
            if search is not None:
                search.cancel()
            raise
        if search is None:
            return design
        lacks = search.finish(design)
        return dataclasses.replace(design, plan=dataclasses.replace(design.plan, bin_lacks=lacks.to_json()),
                                   lacks=lacks)

    # ------------------------------------------------------------ re-planning (model.Replanner)

    def decode_and_map(self, spec: Spec, stock: Bin, catalog: Catalog,
                       counter_plan: CounterPlan) -> tuple[Decode, Network]:
        """The decode derived for ``counter_plan`` and mapped at the user's effort."""
        decode = derive(spec, counter_plan, exact=self.settings.exact)
        library, polarity = mapping_inputs(spec, stock, catalog, counter_plan, decode)
        return decode, map_decode(decode, counter_plan, library, polarity, self.settings.exact,
                                  self.settings.effort)

    def pack(self, design: Design, network: Network) -> Plan:
        """A changed network packed with the analog parts added, as in ``plan`` (no timing)."""
        plan = pack(network, design.counter, design.spec, design.stock, design.catalog)
        return add_analog_parts(plan, design.spec, design.stock, design.catalog)

    def replan(self, design: Design, *, counter_plan: CounterPlan | None = None,
               decode: Decode | None = None, network: Network | None = None,
               strobed: dict[str, Strobed] | None = None,
               registered: dict[str, Registered] | None = None) -> Design:
        """The stages again from the counter plan on (from packing on, given a network),
        then the timing analysis; the plan keeps the design's registered outputs unless
        ``registered`` says otherwise.  Raises what the stages raise."""
        spec, stock, catalog = design.spec, design.stock, design.catalog
        counter_plan = counter_plan if counter_plan is not None else design.counter
        decode = decode if decode is not None else design.decode
        if network is None:
            decode, network = self.decode_and_map(spec, stock, catalog, counter_plan)
        kept = registered if registered is not None else design.plan.registered
        return self._through_timing(spec, stock, catalog, counter_plan, decode, network,
                                    strobed=strobed, registered=kept)

    # ------------------------------------------------------------ the steps after mapping

    def _through_timing(self, spec: Spec, stock: Bin, catalog: Catalog, counter_plan: CounterPlan,
                        decode: Decode, network: Network, *, strobed: dict[str, Strobed] | None = None,
                        registered: dict[str, Registered] | None = None) -> Design:
        """Packing, the analog parts, then the timing analysis written into a new plan."""
        plan = pack(network, counter_plan, spec, stock, catalog)
        plan = dataclasses.replace(plan, warnings=(*stock.warnings, *counter_plan.warnings, *plan.warnings))
        plan = add_analog_parts(plan, spec, stock, catalog)
        plan = dataclasses.replace(plan, strobed=dict(strobed or {}), registered=dict(registered or {}))
        design = Design(plan, spec, stock, catalog, counter_plan, decode, network)
        return with_timing(design, timing_report(design))

    def _remedies(self, design: Design) -> Design:
        """``--fix glitches`` / ``steady: true`` and the RC offers (glitchfix), re-planned here."""
        fixed, report = apply_fixes(design, self.settings.fix, self)
        return with_fixes(fixed, report)

    def _start_lacks(self, decode: Decode, counter_plan: CounterPlan, library, polarity: dict[str, str],
                     stock: Bin, catalog: Catalog) -> Search | None:
        """The what-the-bin-lacks search, begun before the mapping so the two overlap."""
        if not self.settings.lacks or not effort_named(self.settings.effort).lacks_steps:
            return None
        return start_search(decode, counter_plan, library, polarity, stock, catalog,
                            glitch_free=async_reset_names(counter_plan), effort=self.settings.effort)


def retime(design: Design) -> Design:
    """The timing step again on a changed plan (an RC delay built in)."""
    return with_timing(design, timing_report(design))


def with_timing(design: Design, report: TimingReport) -> Design:
    """The design with the timing results in a new plan record (and its trace, remedies)."""
    plan = dataclasses.replace(design.plan, glitches=list(report.glitches),
                               coincident_edges=list(report.coincident_edges),
                               register_checks=list(report.register_checks),
                               pulse_widths=list(report.pulse_widths), warnings=report.warnings)
    return dataclasses.replace(design, plan=plan, trace=report.trace, remedies=report.remedies)


def with_fixes(design: Design, report: FixReport) -> Design:
    """The design with what the remedies did in a new plan record."""
    fixes = list(report.timing_fixes) if report.timing_fixes is not None else None
    plan = dataclasses.replace(design.plan, strobed=dict(report.strobed), rc_offers=list(report.rc_offers),
                               timing_fixes=fixes, strobe_skipped=dict(report.strobe_skipped),
                               registered=dict(report.registered))
    return dataclasses.replace(design, plan=plan)
