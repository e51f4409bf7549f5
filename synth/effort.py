"""How hard the searches try: named effort levels and the work meter.

Interface: ``Effort`` (one level: the mapping's work budget, each
what-the-bin-lacks candidate's budget, the wall-clock safety cap),
``EFFORTS`` (``quick``, ``normal``, ``thorough``), ``DEFAULT_EFFORT``,
``effort_named(name) -> Effort`` and ``Meter`` (the work one search has
spent; its safety cap raises ``errors.SafetyCapError``, exit 4).

Why work and not seconds: a search cut by the wall clock finds a different
design (or none) when the machine is busy.  Every search limit here counts
*steps*: one SAT conflict, ``PROPAGATIONS_PER_STEP`` unit propagations, or
one candidate design judged by the local search.  Those counts depend on the
problem only, so the same spec and bin give the same plan on any machine,
idle or loaded.  A wall-clock cap stays as a safety net against a machine
far slower than expected; when it fires the search stops with exit 4 and
says so, and nothing is reported as short.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

from .errors import SafetyCapError, UsageError

__all__ = ["Effort", "EFFORTS", "DEFAULT_EFFORT", "effort_named", "Meter",
           "PROPAGATIONS_PER_STEP", "STEPS_PER_JUDGED_DESIGN"]

PROPAGATIONS_PER_STEP = 2_000    # unit propagations charged as one step (about one conflict's worth)
STEPS_PER_JUDGED_DESIGN = 10     # one local-search evaluation of a whole design


@dataclass(frozen=True)
class Effort:
    """One named effort level.

    ``steps``: the work one mapping may spend (exact synthesis, structure
    selection, the local search and the shortage advice share it).
    ``lacks_steps``: the work each candidate part of what-the-bin-lacks gets
    (0 skips that search).  ``wall_cap``: seconds after which a search is
    stopped as a safety net (exit 4), never part of the result.
    """

    name: str
    steps: int
    lacks_steps: int
    wall_cap: float
    summary: str


EFFORTS: dict[str, Effort] = {
    "quick": Effort("quick", 2_000, 0, 120.0,
                    "a short search; what the bin lacks is not searched"),
    "normal": Effort("normal", 5_000, 3_000, 300.0,
                     "the default"),
    "thorough": Effort("thorough", 1_000_000, 30_000, 1800.0,
                       "two hundred times the search of normal, for proofs and tight bins"),
}
# Why these numbers: at 5,000 steps every shipped example plans the same design as at
# 50,000, and a step is about 50 microseconds of solver work, so normal maps in a
# fraction of a second.  What the bin lacks keeps 3,000 steps per candidate: at 1,000
# its advice got worse on two shipped examples (stepper, ultrasonic_burst).
DEFAULT_EFFORT = "normal"


def effort_named(name: str | Effort | None) -> Effort:
    """The level of that name (an ``Effort`` passes through; None is the default)."""
    if isinstance(name, Effort):
        return name
    if name is None:
        return EFFORTS[DEFAULT_EFFORT]
    try:
        return EFFORTS[name]
    except KeyError:
        raise UsageError(f"effort must be one of {', '.join(EFFORTS)}, got {name!r}") from None


class Meter:
    """Work spent by one search, in steps; deadlines are step counts on it.

    ``wall_cap`` seconds from creation, ``check_wall`` raises ``SafetyCapError``.
    """

    def __init__(self, wall_cap: float, what: str = "the search") -> None:
        self.spent = 0
        self.wall_cap = wall_cap
        self.what = what
        self.wall_end = time.monotonic() + wall_cap

    def now(self) -> int:
        return self.spent

    def charge(self, steps: int) -> None:
        self.spent += steps

    def wall_left(self) -> float:
        return self.wall_end - time.monotonic()

    def check_wall(self) -> None:
        """Stop (exit 4) when the safety cap has passed."""
        if self.wall_left() <= 0:
            raise self.cap_error()

    def cap_error(self) -> SafetyCapError:
        return SafetyCapError(
            f"{self.what} was stopped by the safety time cap ({self.wall_cap:g} s of wall time) "
            f"before its work budget ran out, after {self.spent} steps: this machine is much slower "
            f"or busier than expected, and nothing was proven",
            hint="run it again on a less busy machine, or with --effort quick")
