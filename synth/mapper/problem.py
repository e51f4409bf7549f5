"""The mapping problem as the engines see it: the signals (on and care sets over
the counter variables, polarity) and a mapped result before it becomes a Network.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..network import Gate, SignalOut
from .objective import Cost


EXACT_MAX_VARS = 6        # exact synthesis in 'auto' mode: at most this many variables ...


@dataclass(frozen=True)
class Signal:
    """One signal to deliver: its asserted minterms, the ones it cares about."""

    name: str
    on: frozenset[int]
    care: frozenset[int]
    polarity: str

    def value(self, minterm: int) -> bool:
        return minterm in self.on


@dataclass
class Problem:
    nvars: int
    var_nets: tuple[str, ...]
    signals: list[Signal]

    @property
    def minterms(self) -> list[int]:
        """Every minterm some signal cares about (the simulation set)."""
        return sorted(set().union(*(s.care for s in self.signals))) if self.signals else []


def constant_level(sig: Signal) -> bool | None:
    """True/False when the signal is constant over its care set, else None."""
    if not sig.on:
        return False
    if sig.on >= sig.care:
        return True
    return None


def literal_of(sig: Signal, nvars: int) -> tuple[int, int] | None:
    """(variable, complemented) when the signal is one counter output (or its complement)."""
    for i in range(nvars):
        ones = {m for m in sig.care if m >> i & 1}
        if ones == sig.on:
            return i, 0
        if sig.care - ones == sig.on:
            return i, 1
    return None


def needed_support(sig: Signal, nvars: int) -> set[int]:
    """Variables every completion of the signal depends on (a lower bound)."""
    need = set()
    for i in range(nvars):
        bit = 1 << i
        if any((m ^ bit) in sig.care and ((m ^ bit) in sig.on) != (m in sig.on)
               for m in sig.care if not m & bit):
            need.add(i)
    return need


@dataclass
class Result:
    """A mapped design before it becomes a Network."""

    gates: list[Gate]
    signals: dict[str, SignalOut]
    cost: Cost
    proven: bool
    method: str
    lower_bound: int | None = None
