"""Splitting one signal on one counter bit (Shannon expansion), the XOR case first.

f = b ? f1 : f0, where the cofactors f0 and f1 no longer depend on b.  When f1
is the complement of f0 wherever both are cared for, f = b XOR f0: a window that
starts part-way through a count is often one bit XOR a smaller product
(17 <= t % 64 < 49 is b5 XOR (b4 AND (b0 OR b1 OR b2 OR b3))).  The splits are
plain set arithmetic over the counter states, so a test can check each one
against the spec tick by tick.

Interface: ``Split`` (one split: the signal, the bit, both cofactors as on /
don't-care sets, whether it is the XOR case), ``cofactor(on, dc, nvars, bit,
level)``, ``splits(functions, nvars, support)`` (every split worth trying,
best first, deterministic).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Iterable, Sequence


@dataclass(frozen=True)
class Split:
    """``name`` = bit ``var`` ? (on1, dc1) : (on0, dc0), over all ``nvars`` bits."""

    name: str
    var: int
    on0: frozenset[int]
    dc0: frozenset[int]
    on1: frozenset[int]
    dc1: frozenset[int]
    xor: bool

    def value(self, minterm: int) -> bool:
        """The recombined function at one counter state (don't cares read as off)."""
        return minterm in (self.on1 if minterm >> self.var & 1 else self.on0)


def cofactor(on: Iterable[int], dc: Iterable[int], nvars: int, bit: int, level: bool
             ) -> tuple[frozenset[int], frozenset[int]]:
    """(on, don't care) of f with bit ``bit`` held at ``level``, as a function of
    all ``nvars`` bits that ignores that bit (Shannon cofactor)."""
    on_set, dc_set = set(on), set(dc)
    mask = 1 << bit
    ones, cares = set(), set()
    for m in range(1 << nvars):
        source = (m | mask) if level else (m & ~mask)
        if source in dc_set:
            cares.add(m)
        elif source in on_set:
            ones.add(m)
    return frozenset(ones), frozenset(cares)


def _is_complement(on0: frozenset[int], dc0: frozenset[int], on1: frozenset[int],
                   dc1: frozenset[int], nvars: int) -> bool:
    """Whether f1 = NOT f0 wherever both are cared for."""
    return all((m in on0) != (m in on1) for m in range(1 << nvars) if m not in dc0 and m not in dc1)


def splits(functions: Sequence, nvars: int, support: Callable[[object], Iterable[int]]) -> list[Split]:
    """Every split of every function on a bit it depends on.

    Order (deterministic): the XOR case first (one sub-function and its
    complement), then the fewest bits the two cofactors depend on together,
    then the higher counter bit (slower, so the switch changes less often).
    ``support(function)`` names the bits a function depends on.
    """
    found: list[tuple[tuple, Split]] = []
    for f in functions:
        bits = sorted(support(f))
        for var in bits:
            on0, dc0 = cofactor(f.on, f.dc, nvars, var, False)
            on1, dc1 = cofactor(f.on, f.dc, nvars, var, True)
            xor = _is_complement(on0, dc0, on1, dc1, nvars)
            split = Split(f.name, var, on0, dc0, on1, dc1, xor)
            rest = len(set(bits) - {var})
            found.append(((not xor, rest, -var, f.name), split))
    return [split for _, split in sorted(found, key=lambda item: item[0])]
