"""Harmless glitches: a glitch on an output whose load the spec says is slow.

Interface: ``mark_harmless(glitch_records, spec) -> list[GlitchRecord]`` (the
records with ``harmless`` and ``harmless_why`` set on each ``feeds: slow`` one);
``check_slow_outputs(spec, plan)`` (a ``feeds: slow`` output that something
on this board reads is an input error); ``SLOW_LOAD_NS``.

Why it takes the spec's word: the plan sees where an output leaves the
board, never what reads it there.  A glitch matters only to a reader that
reacts within the glitch: an edge-triggered input (a counter, a flip-flop,
an interrupt) or a level-sensitive one that holds state (a latch, a
set/reset input).  The spec key ``feeds: slow`` says that nothing of the
kind reads the output: its load responds no faster than ``SLOW_LOAD_NS``
and holds no state (an LED, a lamp, a relay or motor coil, a meter, a
buzzer, a person watching).  A glitch on such an output is marked harmless
when its widest pulse over every model (transport and inertial delays at
typical and worst-case, the ripple states) is shorter than that; a wider one
is still a glitch.  ``feeds: logic`` (the default) says a logic input may
read it, and every glitch counts.

What the board itself reads is known: an output that selects one of the
spec's switches throws that switch for the length of the glitch and passes
a spike of the other throw to whatever reads the switch, so ``feeds: slow``
on it is refused (exit 2).  A harmless glitch is listed, with the reason,
and left alone by ``--fix glitches`` and ``steady``; ``steady: true`` with
``feeds: slow`` is refused when the spec is read (they contradict).
"""

from __future__ import annotations

from dataclasses import replace

from .errors import SpecError
from .findings import GlitchRecord

__all__ = ["mark_harmless", "check_slow_outputs", "SLOW_LOAD_NS"]

SLOW_LOAD_NS = 1000.0
"""A slow load does not respond to a pulse shorter than 1 us (LEDs, lamps, relays and
coils respond in microseconds to milliseconds; common practice)."""


def _slow(spec, name: str) -> bool:
    signal = spec.signals.get(name) if spec is not None else None
    return signal is not None and signal.feeds == "slow"


def mark_harmless(glitch_records: list[GlitchRecord], spec) -> list[GlitchRecord]:
    """The records, each glitch on a ``feeds: slow`` output narrower than ``SLOW_LOAD_NS``
    marked harmless (a wider one marked as counting, with the reason)."""
    return [_judged(rec) if _slow(spec, rec.signal) else rec for rec in glitch_records]


def _judged(rec: GlitchRecord) -> GlitchRecord:
    widest = max(float(rec.width_ns or 0.0), float(rec.width_max_ns or 0.0))
    if widest < SLOW_LOAD_NS:
        return replace(rec, harmless=True, harmless_why=(
            f"{rec.signal} feeds only a slow load (feeds: slow): its widest "
            f"pulse, {widest:.0f} ns, is shorter than the {SLOW_LOAD_NS:.0f} ns "
            "such a load needs to respond, and nothing on the board reads it"))
    return replace(rec, harmless=False, harmless_why=(
        f"{rec.signal} says feeds: slow, but this pulse lasts up to "
        f"{widest:.0f} ns, as long as a slow load's response: it counts"))


def check_slow_outputs(spec, plan) -> None:
    """A ``feeds: slow`` output that selects a switch of this board is refused (its glitches
    throw the switch)."""
    if spec is None:
        return
    for name, sw in sorted((plan.switches or {}).items()):
        select = sw.select
        if select is not None and _slow(spec, select):
            raise SpecError(f"signals.{select}.feeds: slow, but {select} selects switch {name} on this "
                            "board: a glitch on it throws the switch and passes a spike to what the "
                            "switch feeds", file=spec.path, line=spec.signals[select].line,
                            hint="drop feeds: slow (or say it on the signals the switch feeds)")
