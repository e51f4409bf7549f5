"""What the timing checks found and what the remedies did, as frozen records.

Interface: the timing step's findings -- ``GlitchRecord`` (a signal briefly
wrong on a tick entry), ``CoincidentEdge`` (two signals switching on one clock
edge, with which settles first and whether it is a race), ``RegisterCheck``
(setup and hold of a registered output's flip-flop), ``PulseWidth`` (a clock,
reset or power-on reset pulse against its minimum width); the remedies'
records -- ``Cost`` (chips and gates added), ``Strobed`` (how a signal is
gated with the clock), ``Registered`` (how a signal is clocked into a
flip-flop), ``TriedRemedy`` and ``TimingFix`` (what ``--fix glitches`` tried
and applied per signal), ``RcOffer`` (an RC delay offered for a race or a
glitch); and the names of the glitch analyses (``MODELS``, ``MODEL_TEXT``,
``MODEL_NAMES``).

Why one module: the plan record (netlist), the timing step, the remedies and
the exports all read these; keeping them here, with nothing imported from the
stages, leaves the import graph acyclic.  Each record's ``to_json()`` is its
entry in the plan JSON (formats.md section 3), keys in the order the contract
has always printed them.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

__all__ = ["MODELS", "MODEL_TEXT", "MODEL_NAMES", "GlitchRecord", "CoincidentEdge", "RegisterCheck",
           "PulseWidth", "Cost", "Strobed", "Registered", "TriedRemedy", "TimingFix", "RcValues", "RcOffer"]

MODELS = ("transport_typ", "transport_max", "inertial_typ", "states")
MODEL_TEXT = {
    "transport_typ": "event simulation, typical catalog delays, every pulse passed (transport delays)",
    "transport_max": "event simulation, worst-case (max) catalog delays, every pulse passed",
    "inertial_typ": "event simulation, typical delays, a pulse shorter than a gate's delay swallowed "
                    "(as a Verilog primitive; what the exported Verilog shows)",
    "states": "the decode evaluated on every state the ripple count passes through, "
              "independent of gate delays",
}
"""The analyses behind a glitch report: the event simulation with transport
delays at typical and worst-case (max) catalog delays (every pulse a part may
pass), with inertial delays at typical (what a Verilog primitive and a real
gate of exactly that delay pass), and the state enumeration of the ripple
transients (the decode evaluated on every state the count passes through)."""
MODEL_NAMES = {
    "transport_typ": "typical_delays",
    "transport_max": "worst_case_delays",
    "inertial_typ": "short_pulses_swallowed",
    "states": "count_states",
}
"""What the output calls each analysis (plan JSON ``models``, the glitch table's
"found by" with ``_`` read as a space): plain words, not the ids above."""


def _with_optional(head: dict, tail: dict) -> dict:
    """``head`` followed by the entries of ``tail`` that are not None."""
    return {**head, **{k: v for k, v in tail.items() if v is not None}}


# ---------------------------------------------------------------- the timing step's findings

@dataclass(frozen=True)
class GlitchRecord:
    """A tick entry where a signal takes a wrong level for a moment, as reported.

    Widths are rounded to 0.1 ns as printed; ``wrong_level`` is ``'high'`` or
    ``'low'``; ``mechanism`` ``'transient_state'`` (the decode is wrong on a
    count passed through) or ``'gate_paths'``; ``models`` the analyses that
    found it (ids of ``MODELS``, in that order); ``harmless`` / ``harmless_why``
    are set for a ``feeds: slow`` output (``synth.harmless``), else None.
    """

    signal: str
    at_tick: int
    width_ns: float
    cause: str
    path: str
    kind: str
    wrong_level: str
    start_ns: float
    mechanism: str
    width_max_ns: float | None = None
    passes_gate_delay: bool | None = None
    transient_state: int | None = None
    models: tuple[str, ...] = ()
    harmless: bool | None = None
    harmless_why: str | None = None

    @property
    def widest_ns(self) -> float:
        """The worst-case width where the max corner shows it, else the typical one."""
        return self.width_max_ns or self.width_ns or 0.0

    def to_json(self) -> dict:
        record = {"signal": self.signal, "at_tick": self.at_tick, "width_ns": self.width_ns,
                  "cause": self.cause, "path": self.path, "kind": self.kind,
                  "wrong_level": self.wrong_level, "start_ns": self.start_ns}
        record = _with_optional(record, {"width_max_ns": self.width_max_ns,
                                         "passes_gate_delay": self.passes_gate_delay})
        record["mechanism"] = self.mechanism
        if self.transient_state is not None:
            record["transient_state"] = self.transient_state
        if self.models:
            record["models"] = [MODEL_NAMES.get(m, m) for m in self.models]
        return _with_optional(record, {"harmless": self.harmless, "harmless_why": self.harmless_why})


@dataclass(frozen=True)
class CoincidentEdge:
    """Two signals (sorted) with an edge on the same tick boundary.

    From the trace: ``first`` settles first, by ``skew_ns``; ``settle_ns`` is
    (signal, ns after the edge) for both.  ``relation`` is ``'gates'`` (one
    selects a switch that routes the other: a race), ``'complementary'`` or
    ``'independent'``; ``separated_by`` says which applied RC delay keeps a
    race's edges apart (``synth.rcdelay``).  None: not worked out.
    """

    signals: tuple[str, str]
    at_tick: int
    first: str | None = None
    skew_ns: float | None = None
    settle_ns: tuple[tuple[str, float], ...] | None = None
    relation: str | None = None
    race: bool | None = None
    separated_by: str | None = None

    def settle_of(self, signal: str) -> float | None:
        """How long after the edge ``signal`` settles (None when the trace does not show it)."""
        return dict(self.settle_ns or ()).get(signal)

    def to_json(self) -> dict:
        return _with_optional({"signals": list(self.signals), "at_tick": self.at_tick},
                              {"first": self.first, "skew_ns": self.skew_ns,
                               "settle_ns": None if self.settle_ns is None else dict(self.settle_ns),
                               "relation": self.relation, "race": self.race,
                               "separated_by": self.separated_by})


@dataclass(frozen=True)
class RegisterCheck:
    """Setup and hold of a registered output's flip-flop, measured on the traces
    (``timing.register_checks``); a slack of None means no edge was seen."""

    signal: str
    flipflop: str
    part: str
    clock: str
    edge: str
    d: str
    setup_needed_ns: float
    hold_needed_ns: float
    setup_slack_ns: float | None
    hold_margin_ns: float | None
    setup_ok: bool
    hold_ok: bool
    hold_basis: str

    def to_json(self) -> dict:
        return {"signal": self.signal, "flipflop": self.flipflop, "part": self.part, "clock": self.clock,
                "edge": self.edge, "d": self.d, "setup_needed_ns": self.setup_needed_ns,
                "hold_needed_ns": self.hold_needed_ns, "setup_slack_ns": self.setup_slack_ns,
                "hold_margin_ns": self.hold_margin_ns, "setup_ok": self.setup_ok, "hold_ok": self.hold_ok,
                "hold_basis": self.hold_basis}


_PULSE_KEYS = {
    "clock": ("what", "ref", "part", "width_ns", "needed_ns", "ok"),
    "reset": ("what", "ref", "part", "width_ns", "at_tick", "width_typ_ns", "width_max_ns", "corner",
              "basis", "needed_ns", "ok"),
    "power-on reset": ("what", "ref", "part", "width_ns", "width_typ_ns", "basis", "needed_ns", "ok"),
}
"""The keys each kind of pulse reports (a reset's ``width_max_ns`` is null when the
worst-case trace shows no pulse)."""


@dataclass(frozen=True)
class PulseWidth:
    """A clock, counter reset or power-on reset pulse against the catalog's minimum
    width at the plan's supply (``timing.pulse_width_checks``); ``ok`` is None
    when the catalog gives no minimum (not checked, never passed)."""

    what: str                       # 'clock', 'reset' or 'power-on reset'
    ref: str
    part: str
    width_ns: float
    needed_ns: float | None
    ok: bool | None
    at_tick: int | None = None
    width_typ_ns: float | None = None
    width_max_ns: float | None = None
    corner: str | None = None
    basis: str | None = None

    def to_json(self) -> dict:
        every = {"what": self.what, "ref": self.ref, "part": self.part, "width_ns": self.width_ns,
                 "at_tick": self.at_tick, "width_typ_ns": self.width_typ_ns, "width_max_ns": self.width_max_ns,
                 "corner": self.corner, "basis": self.basis, "needed_ns": self.needed_ns, "ok": self.ok}
        return {key: every[key] for key in _PULSE_KEYS[self.what]}


# ---------------------------------------------------------------- the remedies' records

@dataclass(frozen=True)
class Cost:
    """What a remedy added to the board."""

    chips: int
    gates: int

    def to_json(self) -> dict:
        return {"chips": self.chips, "gates": self.gates}


@dataclass(frozen=True)
class Strobed:
    """How a signal is gated with the clock's still half (``glitchfix.strobe_network``):
    ``how`` ``'spare_input'`` or ``'series_gate'``, the phase it is asserted in, its
    delivered polarity, the sentence for the report and what it cost."""

    how: str
    still_phase: str
    polarity: str
    detail: str
    cost: Cost | None = None

    def to_json(self) -> dict:
        record = {"how": self.how, "still_phase": self.still_phase, "polarity": self.polarity,
                  "detail": self.detail}
        if self.cost is not None:
            record["cost"] = self.cost.to_json()
        return record


@dataclass(frozen=True)
class Registered:
    """How a signal is clocked into a flip-flop (``glitchfix.register_records``)."""

    flipflop: str
    part: str
    d_net: str
    clock_net: str
    edge: str
    counter_clock: str
    detail: str

    def to_json(self) -> dict:
        return {"flipflop": self.flipflop, "part": self.part, "d_net": self.d_net,
                "clock_net": self.clock_net, "edge": self.edge, "counter_clock": self.counter_clock,
                "detail": self.detail}


@dataclass(frozen=True)
class TriedRemedy:
    """One remedy's outcome for a signal ("not applicable: why" or "tried: ...")."""

    remedy: str
    result: str

    def to_json(self) -> dict:
        return {"remedy": self.remedy, "result": self.result}


@dataclass(frozen=True)
class TimingFix:
    """What the glitch remedies did for one signal: its glitch ticks before and after
    (re-analysed), the remedies applied (``remedy`` the last one, or ``'note'``),
    what they cost, the sentence saying how, and every remedy's outcome
    (``tried``); ``asked_by`` is ``'steady: true'`` when the spec, not ``--fix``,
    asked for it."""

    signal: str
    glitches_before: tuple[int, ...]
    tried: tuple[TriedRemedy, ...]
    glitches_after: tuple[int, ...]
    remedies_applied: tuple[str, ...]
    remedy: str
    applied: bool
    cost: Cost
    detail: str
    cost_shared: str | None = None
    note: str | None = None
    asked_by: str | None = None

    def to_json(self) -> dict:
        record = {"signal": self.signal, "glitches_before": list(self.glitches_before),
                  "tried": [t.to_json() for t in self.tried], "glitches_after": list(self.glitches_after),
                  "remedies_applied": list(self.remedies_applied), "remedy": self.remedy,
                  "applied": self.applied}
        cost = {"cost": self.cost.to_json()}
        shared = {} if self.cost_shared is None else {"cost_shared": self.cost_shared}
        # a steady: true record has always said its cost before the sharing, a --fix one after
        record.update({**cost, **shared} if self.asked_by is not None else {**shared, **cost})
        record["detail"] = self.detail
        return _with_optional(record, {"note": self.note, "asked_by": self.asked_by})


@dataclass(frozen=True)
class RcValues:
    """The sized RC delay of an offer: the values on hand, the delay spread (ns, min
    typ max, rising and falling), the wiring steps and the tick it must fit in."""

    r_ohm: float
    c_farad: float
    r: str
    c: str
    rising_ns: tuple[float, float, float]
    falling_ns: tuple[float, float, float]
    formula: str
    wiring: tuple[str, ...]
    warnings: tuple[str, ...]
    tick_ns: float

    def to_json(self) -> dict:
        return {"r_ohm": self.r_ohm, "c_farad": self.c_farad, "r": self.r, "c": self.c,
                "delay_ns": {"rising": list(self.rising_ns), "falling": list(self.falling_ns)},
                "formula": self.formula, "wiring": list(self.wiring), "warnings": list(self.warnings),
                "tick_ns": self.tick_ns}


@dataclass(frozen=True)
class RcOffer:
    """An RC delay between two Schmitt stages offered for a race (``problem``
    ``'race'`` or ``'coincident'``, ``signals`` the delayed one first, ``at_ticks``)
    or a glitch (``'glitch'``, ``signal``); never applied unless ``--fix races``
    or the spec asks (``applied``, ``synth.rcdelay``).

    ``values`` is None when no delay could be sized (``why_not`` says why);
    ``wanted_ns`` None for a glitch whose filter would not fit a quarter tick.
    """

    problem: str
    delayed: str
    applicable: bool
    why: str
    applied: bool = False
    wanted_ns: float | None = None
    receiver: str | None = None
    stages: tuple[str, ...] | None = None
    why_not: str | None = None
    values: RcValues | None = None
    signal: str | None = None
    signals: tuple[str, ...] | None = None
    at_ticks: tuple[int, ...] | None = None

    @property
    def rising_ns(self) -> tuple[float, float, float]:
        return self.values.rising_ns if self.values is not None else (0.0, 0.0, 0.0)

    @property
    def falling_ns(self) -> tuple[float, float, float]:
        return self.values.falling_ns if self.values is not None else (0.0, 0.0, 0.0)

    def as_applied(self) -> RcOffer:
        return replace(self, applied=True)

    def to_json(self) -> dict:
        if self.wanted_ns is None:
            return {"problem": self.problem, "signal": self.signal, "delayed": self.delayed,
                    "applicable": self.applicable, "applied": self.applied, "why": self.why}
        record = _with_optional({"delayed": self.delayed, "wanted_ns": self.wanted_ns},
                                {"receiver": self.receiver,
                                 "stages": None if self.stages is None else list(self.stages)})
        record["applied"] = self.applied
        if self.values is not None:        # sized: why it does not fit comes before the verdict
            record = _with_optional(record, {"why_not": self.why_not})
            record["applicable"] = self.applicable
            record.update(self.values.to_json())
        else:
            record["applicable"] = self.applicable
            record = _with_optional(record, {"why_not": self.why_not})
        record["problem"] = self.problem
        if self.signals is not None:
            record.update({"signals": list(self.signals), "at_ticks": list(self.at_ticks or ())})
        else:
            record["signal"] = self.signal
        record["why"] = self.why
        return record
