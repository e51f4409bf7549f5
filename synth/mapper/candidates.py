"""Candidate structures: every signal's covers (both phases) as AND nodes with
complemented edges, literal-factored forms, common pairs extracted across
signals, and the options programmable units add (muxes, decoders with enables).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import Sequence

from .library import Cell
from .problem import EXACT_MAX_VARS, Problem, Signal


@dataclass(frozen=True)
class _Node:
    """An AND over literals of nets; the node's value is that AND XOR ``invert``.

    Net references: ``('v', i)`` counter variable i, ``('n', id)`` another
    node, ``('d', decoder, code)`` one decoder output (its minterm).
    """

    fanins: tuple[tuple[tuple, int], ...]
    invert: int


@dataclass(frozen=True)
class Option:
    """One way to deliver a signal.

    'sop' and 'dec': the signal equals the value of ``net`` XOR ``e``.
    'mux': one mux unit whose data pins hold rails or a literal, delivering
    the fixed ``polarity``.
    """

    signal: str
    kind: str
    net: tuple | None = None
    e: int = 0
    polarity: str | None = None
    cell: int | None = None
    data: tuple = ()
    selects: tuple = ()
    inverted_output: bool = False
    needs: tuple = ()


@dataclass
class Candidates:
    nodes: list[_Node] = field(default_factory=list)
    index: dict = field(default_factory=dict)
    options: dict[str, list[Option]] = field(default_factory=dict)
    decoders: list[tuple[int, tuple[int, ...]]] = field(default_factory=list)   # (cell, select vars)
    decoder_enables: list[tuple] = field(default_factory=list)   # per enable pin: a var or None
    decoder_index: dict = field(default_factory=dict)

    def node(self, key: tuple, fanins: tuple, invert: int) -> tuple:
        if key not in self.index:
            self.index[key] = len(self.nodes)
            self.nodes.append(_Node(fanins, invert))
        return ("n", self.index[key])

    def add_option(self, option: Option) -> None:
        options = self.options.setdefault(option.signal, [])
        if option not in options:
            options.append(option)


def _cube_vars(cube: tuple[int, int], nvars: int) -> list[int]:
    return [i for i in range(nvars) if cube[0] >> i & 1]


def _literal_net(cube: tuple[int, int], nvars: int) -> tuple[tuple, int]:
    """A one-literal cube as (net, complemented)."""
    (i,) = _cube_vars(cube, nvars)
    return ("v", i), 0 if cube[1] >> i & 1 else 1


NODE_FANIN_MAX = 16       # wider AND nodes are split into nodes of at most this many fan-ins


def _and_node(cands: Candidates, key: tuple, fanins: tuple, invert: int) -> tuple:
    """An AND node; past NODE_FANIN_MAX (16) fan-ins, an AND of AND nodes over balanced
    slices (the tree table then never grows past that width: a 38-term sum
    would take seconds to tabulate and gains nothing from one flat tree)."""
    if len(fanins) > NODE_FANIN_MAX:
        parts = -(-len(fanins) // NODE_FANIN_MAX)
        size = -(-len(fanins) // parts)
        slices = [fanins[i:i + size] for i in range(0, len(fanins), size)]
        fanins = tuple((_and_node(cands, ("a", piece), piece, 0), 0) for piece in slices)
    return cands.node(key, fanins, invert)


def _term(cands: Candidates, cube: tuple[int, int], nvars: int) -> tuple[tuple, int]:
    """The net (and complement flag) carrying one product term."""
    vars_ = _cube_vars(cube, nvars)
    if len(vars_) == 1:
        return _literal_net(cube, nvars)
    fanins = tuple((("v", i), 0 if cube[1] >> i & 1 else 1) for i in vars_)
    return _and_node(cands, ("t", cube), fanins, 0), 0


def _sum(cands: Candidates, terms: Sequence[tuple[tuple, int]]) -> tuple[tuple, int]:
    """OR of nets: as NOT AND of their complements (De Morgan)."""
    if len(terms) == 1:
        return terms[0]
    fanins = tuple(sorted((net, c ^ 1) for net, c in terms))
    return _and_node(cands, ("s", fanins), fanins, 1), 0


@dataclass(frozen=True)
class Form:
    """A signal's cover in one phase: the cubes realise f XOR k."""

    k: int
    cubes: tuple[tuple[int, int], ...]

    def support(self, nvars: int) -> list[int]:
        return sorted({i for c in self.cubes for i in _cube_vars(c, nvars)})

    def value(self, minterm: int) -> bool:
        return any((minterm & m) == (v & m) for m, v in self.cubes)


def cover_forms(problem: Problem, covers: Sequence) -> dict[str, list[Form]]:
    forms: dict[str, list[Form]] = {}
    for sig in problem.signals:
        for cover in covers:
            if sig.name not in cover.outputs:
                continue
            k = 1 if cover.phases.get(sig.name) == "complement" else 0
            form = Form(k, tuple(cover.cubes(sig.name)))
            if form.cubes and (0, 0) not in form.cubes and form not in forms.get(sig.name, []):
                forms.setdefault(sig.name, []).append(form)
    return forms


def _common_cube(cubes: Sequence[tuple[int, int]]) -> tuple[int, int]:
    """The literals every cube has, as a cube (mask, value)."""
    mask, value = ~0, cubes[0][1]
    for m, v in cubes:
        mask &= m & ~(v ^ value)
    return mask, value & mask


FACTOR_MIN_CUBES = 3      # covers of at least this many cubes are also offered in factored form


def _factored(cands: Candidates, cubes: Sequence[tuple[int, int]], nvars: int) -> tuple[tuple, int]:
    """A sum of products as a multi-level AND/OR form by literal factoring
    (divide by the most frequent literal and its common cube, recurse on the
    quotient and the remainder; Brayton's algebraic factoring).  A window of
    counter states, whose two-level cover grows with the square of the bits,
    becomes a comparator chain of about two gates per bit; identical
    sub-forms of different signals are one node."""
    terms: list[tuple[tuple, int]] = []
    rest = list(cubes)
    while True:
        counts: dict[tuple[int, int], int] = {}
        for m, v in rest:
            for i in _cube_vars((m, v), nvars):
                lit = (i, v >> i & 1)
                counts[lit] = counts.get(lit, 0) + 1
        if not counts or max(counts.values()) < 2:
            break
        (i, bit), _ = max(counts.items(), key=lambda kv: (kv[1], -kv[0][0], kv[0][1]))
        having = [c for c in rest if c[0] >> i & 1 and (c[1] >> i & 1) == bit]
        rest = [c for c in rest if c not in having]
        common = _common_cube(having)
        common_mask = common[0]
        quotient = sorted({(m & ~common_mask, v & ~common_mask) for m, v in having})
        fanins = [(("v", j), 0 if common[1] >> j & 1 else 1) for j in _cube_vars(common, nvars)]
        if all(m for m, _ in quotient):          # an empty quotient cube would absorb the rest
            fanins.append(_factored(cands, quotient, nvars))
        if len(fanins) == 1:
            terms.append(fanins[0])
        else:
            key = ("fp", common, tuple(quotient))
            terms.append((_and_node(cands, key, tuple(sorted(fanins)), 0), 0))
    terms += [_term(cands, cube, nvars) for cube in rest]
    return _sum(cands, terms)


EXTRACT_MAX_CUBES = 400   # distinct cubes up to which common pairs are extracted across signals


def _extracted_terms(cands: Candidates, cubes: Sequence[tuple[int, int]], nvars: int
                     ) -> dict[tuple[int, int], tuple[tuple, int]]:
    """Each cube as a net after common-cube extraction across every signal's
    terms: while some pair of fan-ins (literals or extracted pairs) occurs in
    two or more terms, it becomes one AND node used by all of them (greedy
    algebraic cube extraction, most frequent pair first).  ``x3' x2 x1`` and
    ``x3 x2 x1`` then share the gate for ``x2 x1``."""
    rows = {cube: [(("v", i), 0 if cube[1] >> i & 1 else 1) for i in _cube_vars(cube, nvars)]
            for cube in cubes}
    while True:
        counts: dict[tuple, int] = {}
        for items in rows.values():
            if len(items) < 3:
                continue                  # a pair that is the whole term gains nothing
            for a, b in itertools.combinations(sorted(items), 2):
                counts[(a, b)] = counts.get((a, b), 0) + 1
        if not counts:
            break
        pair, count = max(counts.items(), key=lambda kv: (kv[1], kv[0]))
        if count < 2:
            break
        divisor = (_and_node(cands, ("x", pair), pair, 0), 0)
        for cube, items in rows.items():
            if len(items) >= 3 and pair[0] in items and pair[1] in items:
                rows[cube] = [it for it in items if it not in pair] + [divisor]
    out = {}
    for cube, items in rows.items():
        if len(items) == 1:
            out[cube] = items[0]
        else:
            fanins = tuple(sorted(items))
            out[cube] = (_and_node(cands, ("xt", fanins), fanins, 0), 0)
    return out


def candidate_structures(problem: Problem, forms: dict[str, list[Form]], cells: Sequence[Cell]) -> Candidates:
    cands = Candidates()
    n = problem.nvars
    for sig in problem.signals:
        for form in forms.get(sig.name, []):
            net, c = _sum(cands, [_term(cands, cube, n) for cube in form.cubes])
            cands.add_option(Option(sig.name, "sop", net, c ^ form.k))
            if len(form.cubes) >= FACTOR_MIN_CUBES:
                net, c = _factored(cands, form.cubes, n)
                cands.add_option(Option(sig.name, "sop", net, c ^ form.k))
    every_cube = sorted({cube for fs in forms.values() for f in fs for cube in f.cubes})
    if len(problem.signals) > 1 and problem.nvars > EXACT_MAX_VARS and len(every_cube) <= EXTRACT_MAX_CUBES:
        # over few variables exact synthesis shares sub-terms by itself, and the
        # extra options make the structure selection's proof many times slower
        terms = _extracted_terms(cands, every_cube, n)
        for sig in problem.signals:
            for form in forms.get(sig.name, []):
                net, c = _sum(cands, [terms[cube] for cube in form.cubes])
                cands.add_option(Option(sig.name, "sop", net, c ^ form.k))
    for ci, cell in enumerate(cells):
        if cell.op == "mux" and cell.mapped:
            for sig in problem.signals:
                for option in _mux_options(sig, forms.get(sig.name, []), ci, cell, n):
                    cands.add_option(option)
        elif cell.op == "decoder":
            _decoder_options(cands, problem, forms, ci, cell)
    return cands


def _mux_options(sig: Signal, forms: Sequence[Form], ci: int, cell: Cell, nvars: int) -> list[Option]:
    """A 2^s:1 mux as a function generator: s select variables, one literal on the data pins."""
    best: dict[str, Option] = {}
    targets = ("high", "low") if sig.polarity == "free" else (sig.polarity,)
    for form in forms:
        supp = form.support(nvars)
        if len(supp) > cell.selects + 1:
            continue
        residuals = [None] if len(supp) <= cell.selects else supp
        for r in residuals:
            sels = tuple(v for v in supp if v != r)
            for target in targets:
                for inverted in ((False, True) if cell.output_inv else (False,)):
                    flip = form.k ^ (target == "low") ^ inverted
                    data = []
                    for code in range(cell.width):
                        if code >> len(sels):
                            data.append("VSS")
                            continue
                        m = sum(1 << v for b, v in enumerate(sels) if code >> b & 1)
                        v0 = form.value(m) ^ flip
                        if r is None:
                            data.append("VDD" if v0 else "VSS")
                            continue
                        v1 = form.value(m | 1 << r) ^ flip
                        data.append("VDD" if v0 and v1 else "VSS" if not (v0 or v1)
                                    else ("v", r, 0) if v1 else ("v", r, 1))
                    needs = ((("v", r), 1),) if ("v", r, 1) in data else ()
                    option = Option(sig.name, "mux", polarity=target, cell=ci, data=tuple(data),
                                     selects=sels, inverted_output=inverted, needs=needs)
                    if target not in best or len(needs) < len(best[target].needs):
                        best[target] = option
    return list(best.values())


def _decoder_options(cands: Candidates, problem: Problem, forms: dict[str, list[Form]],
                     ci: int, cell: Cell) -> None:
    """Decoder outputs as minterms, OR-ed by gates; one decoder per set of select
    variables and enable wiring.  A cover whose terms share literals may put them
    on the enables (a 74HC138's G1 takes a true literal, G2A/G2B complemented
    ones): its outputs are then minterms of the selects ANDed with that cube."""
    n = problem.nvars
    keys = sorted({tuple(f.support(n)) for fs in forms.values() for f in fs
                   if len(f.support(n)) <= cell.width}, key=lambda k: (-len(k), k))[:6]
    plain = (None,) * len(cell.enables)
    for sig in problem.signals:
        for form in forms.get(sig.name, []):
            supp = set(form.support(n))
            for key in keys:
                if supp <= set(key):
                    _add_decoder_option(cands, sig, form, ci, cell, key, plain)
            wired = _enable_wiring(form, cell, n)
            if wired is not None:
                key, enables = wired
                _add_decoder_option(cands, sig, form, ci, cell, key, enables)


def _enable_wiring(form: Form, cell: Cell, nvars: int) -> tuple[tuple[int, ...], tuple] | None:
    """The cover's common cube on the decoder's enable pins and the rest of its
    support on the selects, or None when the pins cannot take it."""
    if not cell.enables:
        return None
    mask, value = _common_cube(form.cubes)
    common = [(i, value >> i & 1) for i in range(nvars) if mask >> i & 1]
    if not common:
        return None
    pins: list[int | None] = [None] * len(cell.enables)
    for var, bit in common:
        wanted = "high" if bit else "low"
        free = [j for j, active in enumerate(cell.enables) if active == wanted and pins[j] is None]
        if not free:
            return None
        pins[free[0]] = var
    key = tuple(v for v in form.support(nvars) if not mask >> v & 1)
    if not key or len(key) > cell.width:
        return None
    return key, tuple(pins)


def _add_decoder_option(cands: Candidates, sig: Signal, form: Form, ci: int, cell: Cell,
                        key: tuple[int, ...], enables: tuple) -> None:
    """One option: the form's codes over ``key`` read off the decoder's outputs.
    Enable literals are the form's common cube (``_enable_wiring``), so the form
    is false wherever an enable is off, as the outputs are."""
    fixed_value = sum(1 << v for j, v in enumerate(enables) if v is not None
                      and cell.enables[j] == "high")       # the enable literals, asserted
    on = [code for code in range(1 << len(key))
          if form.value(fixed_value | sum(1 << v for b, v in enumerate(key) if code >> b & 1))]
    if not on or any(code >= cell.codes for code in on):
        return
    index = (ci, key, enables)
    if index not in cands.decoder_index:
        cands.decoder_index[index] = len(cands.decoders)
        cands.decoders.append((ci, key))
        cands.decoder_enables.append(enables)
    d = cands.decoder_index[index]
    net, c = _sum(cands, [(("d", d, code), 0) for code in on])
    cands.add_option(Option(sig.name, "dec", net, c ^ form.k))
