"""The mapper's objective, written once: fewest chips, then fewest gates, then
the shallowest circuit.  Every engine (exact synthesis, structure selection,
local search) and every comparison of two designs uses ``Cost``.
"""

from __future__ import annotations

from typing import Iterable, NamedTuple

from ..network import Gate


class Cost(NamedTuple):
    """A design's cost in the order it is minimized (a tuple compares the same way).

    ``depth``: gates on the longest path from a counter output to a signal,
    the last tie-break; 0 where it was not measured (a SAT engine's bound).
    """

    chips: int
    gates: int
    depth: int = 0

    @classmethod
    def of(cls, value: Iterable[int]) -> "Cost":
        """A Cost from any (chips, gates[, depth]) sequence."""
        return cls(*value)

    def better_than(self, other: "Cost | None") -> bool:
        """Strictly better than ``other`` (anything beats no design at all)."""
        return other is None or tuple(self) < tuple(other)

    def beats_on_size(self, other: "Cost | None") -> bool:
        """Fewer chips, or as many chips and fewer gates (depth not looked at)."""
        return other is None or (self.chips, self.gates) < (other.chips, other.gates)


def could_beat(chips_floor: int, gates: int, bound: Cost | None) -> bool:
    """Whether a design of ``gates`` gates needing at least ``chips_floor`` chips
    could be better than ``bound`` on chips, then gates."""
    return Cost(chips_floor, gates).beats_on_size(bound)


def depth_of(gates: Iterable[Gate]) -> int:
    """Gates on the longest path through the network (gates listed in any order)."""
    gates = list(gates)
    driver = {net: g for g in gates for net in g.outputs if net}
    memo: dict[str, int] = {}

    def level(net: str) -> int:
        if net not in driver:
            return 0
        if net not in memo:
            memo[net] = 0            # a loop (never in a verified network) counts once
            memo[net] = 1 + max((level(n) for n in driver[net].inputs), default=0)
        return memo[net]

    return max((level(net) for g in gates for net in g.outputs if net), default=0)
