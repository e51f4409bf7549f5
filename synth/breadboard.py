"""Breadboard placement: where every chip, part and wire goes on a solderless board.

Interface: ``BoardChip``, ``BoardPart``, ``BoardInput`` (what placement needs,
frozen, so tests can build one without a plan); ``board_input(plan)`` (a plan
-> its ``BoardInput``); ``Placement`` and ``Jumper`` (the result);
``place(board) -> Placement`` (cached: the same input gives the same object);
``placement_to_json(placement) -> dict`` (the plan JSON's ``breadboard``
section); ``hole_xy(name, placement)`` (a hole's position in pitches, for
drawings); ``strip_of(hole, board_rows, rail_holes)`` (which joined strip a
hole belongs to).

The board (formats.md v2 section 3): rows numbered from 1, columns a-e below
the centre channel and f-j above it; a-e of one row is one strip, f-j
another.  Four rails run along the long edges: ``T+`` and ``T-`` above
column j, ``B+`` and ``B-`` below column a; each rail is one strip along one
board, its holes numbered 1.. in groups of five, as printed boards have them
(50 per rail on an 830-point board, 25 on a 400-point board).  ``T+`` and
``B+`` carry VDD, ``T-`` and ``B-`` carry VSS.  When the plan needs more rows
than one board, boards sit end to end: row numbers and rail hole numbers run
on (the second 830-point board starts at row 64 and rail hole 51), and each
rail used on both boards is joined across the seam by a jumper.

Method: ordered placement, then a deterministic local search.
1. Order: chips in signal-flow order (counters first, then the oscillator,
   then logic chips by the mean depth of their gates, switches last), each
   resistor and capacitor in a free row beside the chip it shares most nets
   with, one spare row between chips while rows allow.
2. Routing (the same for every candidate layout): a chip pin or part lead
   sits in its strip; each strip on a rail net gets one short jumper to the
   nearest free hole of the rail on its own side; the strips of every other
   net are joined by a minimum spanning tree (Prim's method, lengths between
   strips, at most three jumpers per strip so every strip keeps a hole free);
   rails carrying the same supply are joined where both are used.
3. Cost: total jumper length in pitches plus ``CROSSING_WEIGHT`` per pair of
   crossing jumpers.  Local search moves a part to another free row, turns a
   part end for end, moves a spare row between gaps, and swaps two logic
   chips (any two of one length, else neighbours); the first move that
   lowers the cost is kept and the pass starts again; moves are
   tried in a fixed order until a whole pass keeps none or ``MOVE_BUDGET``
   candidate layouts have been routed.  Work is counted, never timed.
"""

from __future__ import annotations

import bisect
import functools
import math
from dataclasses import dataclass, field

from .netlist import RAIL_NETS, Plan, is_passive, ref_key

__all__ = ["BoardChip", "BoardPart", "BoardInput", "Jumper", "Placement", "board_input", "place",
           "placement_to_json", "plan_breadboard", "method_text", "hole_xy", "strip_of",
           "chip_pin_hole", "rail_x", "row_x", "PITCH_MM", "MOVE_BUDGET", "CROSSING_WEIGHT",
           "COLUMNS", "RAILS", "RAIL_NET", "BOARDS", "Y"]

PITCH_MM = 2.54            # hole spacing of solderless boards (common practice)
MOVE_BUDGET = 300          # candidate layouts routed by the local search, at most
CROSSING_WEIGHT = 4.0      # pitches of jumper length one crossing costs
MAX_TREE_DEGREE = 3        # jumpers per strip from one net's tree (a strip has 4 free holes)
COLUMNS = "abcdefghij"
RAILS = ("T+", "T-", "B+", "B-")
RAIL_NET = {"T+": "VDD", "T-": "VSS", "B+": "VDD", "B-": "VSS"}
BOARDS = {"400-point": (30, 25), "830-point": (63, 50)}   # rows, holes per rail (common practice)
BOARD_GAP = 4              # pitches between boards set end to end (for drawings and lengths)

# Vertical positions in pitches from the top edge (drawings and lengths use them).
Y = {"T+": 0.0, "T-": 1.0, "j": 2.5, "i": 3.5, "h": 4.5, "g": 5.5, "f": 6.5,
     "e": 9.5, "d": 10.5, "c": 11.5, "b": 12.5, "a": 13.5, "B+": 15.0, "B-": 16.0}


# ---------------------------------------------------------------- input records

@dataclass(frozen=True)
class BoardChip:
    """A DIP chip: ``pins`` are (pin, net) for every connected pin; ``rank`` orders signal flow."""

    ref: str
    part: str
    pin_count: int
    pins: tuple[tuple[int, str], ...]
    rank: float
    role: str = "logic"


@dataclass(frozen=True)
class BoardPart:
    """A two-lead part: ``nets`` at lead 1 and lead 2; ``decoupling`` for a chip's 100 nF."""

    ref: str
    kind: str
    label: str
    nets: tuple[str, str]
    near: str = ""
    decoupling: bool = False


@dataclass(frozen=True)
class BoardInput:
    """Everything placement needs; ``external`` names the nets that leave the board."""

    chips: tuple[BoardChip, ...]
    parts: tuple[BoardPart, ...]
    external: tuple[tuple[str, str], ...] = ()


# ---------------------------------------------------------------- result records

@dataclass(frozen=True)
class Jumper:
    """One wire: ``kind`` is ``signal``, ``rail`` (a pin's strip to a rail) or ``tie`` (rail to rail)."""

    net: str
    frm: str
    to: str
    kind: str
    length: float          # pitches, hole centre to hole centre


@dataclass(frozen=True)
class Placement:
    """A routed board: holes of chips and parts, jumpers, external holes and the figures."""

    board: str
    boards: int
    board_rows: int
    rail_holes: int
    chips: tuple[tuple[BoardChip, int], ...]          # (chip, row of pin 1)
    parts: tuple[tuple[BoardPart, str, str], ...]      # (part, lead 1 hole, lead 2 hole)
    jumpers: tuple[Jumper, ...]
    external: tuple[tuple[str, str, str], ...]         # (net, hole, where it goes)
    crossings: int
    start_cost: tuple[float, int]                      # (length, crossings) of the ordered layout
    moves_tried: int
    moves_kept: int

    @property
    def rows(self) -> int:
        return self.board_rows * self.boards

    @property
    def length(self) -> float:
        return sum(j.length for j in self.jumpers)


# ---------------------------------------------------------------- geometry

def rail_x(position: int, rail_holes: int) -> float:
    """A rail hole's position along the board in row pitches (row 1 at 0).

    Rail holes come in groups of five with a one-hole gap; on an 830-point
    board hole 1 sits beside row 3 and hole 50 beside row 61 (common practice).

    >>> rail_x(1, 50), rail_x(5, 50), rail_x(6, 50), rail_x(50, 50)
    (2.0, 6.0, 8.0, 60.0)
    """
    index = (position - 1) % rail_holes
    board = (position - 1) // rail_holes
    start = 2 if rail_holes == 50 else 1
    rows = BOARDS["830-point"][0] if rail_holes == 50 else BOARDS["400-point"][0]
    return float(board * (rows + BOARD_GAP) + start + (index // 5) * 6 + index % 5)


@functools.lru_cache(maxsize=8)
def _rail_positions(rail_holes: int, boards: int) -> tuple[float, ...]:
    return tuple(rail_x(p, rail_holes) for p in range(1, rail_holes * boards + 1))


def row_x(row: int, board_rows: int) -> float:
    board = (row - 1) // board_rows
    return board * (board_rows + BOARD_GAP) + (row - 1) % board_rows


def hole_xy(name: str, board_rows: int, rail_holes: int) -> tuple[float, float]:
    """``e10`` or ``T+12`` -> (x, y) in pitches from the board's top left hole."""
    if name[:2] in RAILS:
        return rail_x(int(name[2:]), rail_holes), Y[name[:2]]
    return row_x(int(name[1:]), board_rows), Y[name[0]]


def strip_of(hole: str, board_rows: int, rail_holes: int) -> tuple:
    """The joined strip a hole belongs to: (rail, board) or (row, 'a-e' | 'f-j').

    >>> strip_of("c12", 63, 50), strip_of("h12", 63, 50), strip_of("B-51", 63, 50)
    ((12, 'a-e'), (12, 'f-j'), ('B-', 1))
    """
    if hole[:2] in RAILS:
        return hole[:2], (int(hole[2:]) - 1) // rail_holes
    return int(hole[1:]), "a-e" if hole[0] in "abcde" else "f-j"


def chip_pin_hole(pin: int, pin_count: int, row: int) -> str:
    """Pin 1 in column e at ``row``; pins run down e, then back up f (formats.md v2).

    >>> [chip_pin_hole(p, 14, 10) for p in (1, 7, 8, 14)]
    ['e10', 'e16', 'f16', 'f10']
    """
    half = pin_count // 2
    if pin <= half:
        return f"e{row + pin - 1}"
    return f"f{row + pin_count - pin}"


# ---------------------------------------------------------------- from a plan

def board_input(plan: Plan) -> BoardInput:
    """The plan's chips in signal-flow order, its parts and decoupling capacitors, its outside nets."""
    levels = _net_levels(plan)
    chips = []
    for chip in plan.chips:
        part = plan.parts[chip.part]
        chips.append(BoardChip(chip.ref, chip.part, part.pin_count,
                               tuple(sorted((int(p), n) for p, n in chip.pins.items()
                                            if n and n != "NC")),
                               _rank(plan, chip, levels), chip.role))
    chips.sort(key=lambda c: (c.rank, ref_key(c.ref)))
    parts = [BoardPart(p.ref, p.kind, p.label(), (p.ends[0], p.ends[1])) for p in plan.passives]
    parts = _with_neighbours(parts, chips)
    decoupling = [BoardPart(f"CD{i}", "capacitor", "100 nF", ("VDD", "VSS"), ref, True)
                  for i, (ref, _) in enumerate(sorted(plan.decoupling, key=lambda d: ref_key(d[0])), 1)]
    external = tuple((net, where) for net, where in plan.external.items())
    return BoardInput(tuple(chips), tuple(parts + decoupling), external)


def _net_levels(plan: Plan) -> dict[str, int]:
    """Logic depth of each net: counter outputs 0, a gate output one more than its deepest input."""
    by_output = {n: g for g in plan.network.gates for n in g.outputs if n}
    memo: dict[str, int] = {}

    def level(net: str, seen: frozenset = frozenset()) -> int:
        if net in memo:
            return memo[net]
        gate = by_output.get(net)
        if gate is None or net in seen:
            return 0
        value = 1 + max((level(n, seen | {net}) for n in gate.inputs), default=0)
        memo[net] = value
        return value

    return {net: level(net) for net in by_output}


def _rank(plan: Plan, chip, levels: dict[str, int]) -> float:
    """Signal-flow rank: counter 0, oscillator 1, logic 2 + mean depth, switch 100."""
    if chip.role == "counter":
        return 0.0
    if chip.role == "oscillator":
        return 1.0
    if chip.role == "switch":
        return 100.0
    depths = [levels[n] for n in chip.pins.values() if n in levels]
    return 2.0 + (sum(depths) / len(depths) if depths else 0.0)


def _with_neighbours(parts: list[BoardPart], chips: list[BoardChip]) -> list[BoardPart]:
    """Each part's ``near`` chip: the one it shares most nets with, else a neighbour part's."""
    nets_of_chip = {c.ref: {n for _, n in c.pins if n not in RAIL_NETS} for c in chips}
    near: dict[str, str] = {}
    for part in parts:
        scores = [(sum(n in nets_of_chip[c.ref] for n in part.nets), -i, c.ref) for i, c in enumerate(chips)]
        best = max(scores, default=(0, 0, ""))
        if best[0] > 0:
            near[part.ref] = best[2]
    for _ in range(len(parts)):
        for part in parts:
            if part.ref in near:
                continue
            for other in parts:
                if other.ref in near and set(other.nets) & set(part.nets) - set(RAIL_NETS):
                    near[part.ref] = near[other.ref]
                    break
    fallback = chips[-1].ref if chips else ""
    return [BoardPart(p.ref, p.kind, p.label, p.nets, near.get(p.ref, fallback)) for p in parts]


# ---------------------------------------------------------------- layout

@dataclass(frozen=True)
class _Layout:
    order: tuple[str, ...]          # chips and non-decoupling parts along the board
    gaps: tuple[int, ...]           # spare rows before each item
    flipped: frozenset[str] = frozenset()
    chip_gap: int = 0               # spare rows a chip (other than the first) always keeps before it


def _size(item: BoardChip | BoardPart) -> int:
    return item.pin_count // 2 if isinstance(item, BoardChip) else 1


def _board_choice(items: list) -> tuple[str, int, int, int]:
    """The smallest board that holds every item (boards end to end when one is not enough)."""
    need = sum(_size(i) for i in items)
    for name in ("400-point", "830-point"):
        rows, rails = BOARDS[name]
        if need <= rows:
            return name, 1, rows, rails
    rows, rails = BOARDS["830-point"]
    boards = 1
    while _rows_of(items, [0] * len(items), rows, boards) is None:
        boards += 1
    return "830-point", boards, rows, rails


def _rows_of(items: list, gaps, board_rows: int, boards: int) -> list[int] | None:
    """First row of each item in order; an item never crosses from one board to the next."""
    rows, row = [], 1
    for item, gap in zip(items, gaps):
        row += gap
        size = _size(item)
        board_end = ((row - 1) // board_rows + 1) * board_rows
        if row + size - 1 > board_end:
            row = board_end + 1
        rows.append(row)
        row += size
    if row - 1 > board_rows * boards:
        return None
    return rows


def _start_layout(board: BoardInput, spare: int) -> _Layout:
    """Chips in signal-flow order, each chip's parts right after it, a spare row between chips."""
    order: list[str] = []
    gaps: list[int] = []
    loose = [p for p in board.parts if not p.decoupling]
    for n, chip in enumerate(board.chips):
        gap = 1 if n and spare > 0 else 0
        spare -= gap
        order.append(chip.ref)
        gaps.append(gap)
        for part in loose:
            if part.near == chip.ref:
                order.append(part.ref)
                gaps.append(0)
    placed = set(order)
    for part in loose:
        if part.ref not in placed:
            order.append(part.ref)
            gaps.append(0)
    chip_refs = {c.ref for c in board.chips}
    chip_gaps = [g for ref, g in zip(order[1:], gaps[1:]) if ref in chip_refs]
    chip_gap = 1 if chip_gaps and all(chip_gaps) else 0
    return _Layout(tuple(order), tuple(gaps), frozenset(), chip_gap)


# ---------------------------------------------------------------- routing

@dataclass
class _Board:
    """Hole bookkeeping while one layout is routed."""

    board_rows: int
    rail_holes: int
    boards: int
    used: set[str] = field(default_factory=set)
    jumpers: list[Jumper] = field(default_factory=list)
    net_holes: dict[str, list[str]] = field(default_factory=dict)

    def xy(self, hole: str) -> tuple[float, float]:
        return hole_xy(hole, self.board_rows, self.rail_holes)

    def take(self, hole: str) -> str:
        if hole in self.used:
            raise ValueError(f"hole {hole} taken twice")
        self.used.add(hole)
        return hole

    def free_rail_hole(self, rail: str, x: float, board: int | None = None) -> str:
        """The free hole of ``rail`` nearest to ``x`` (on ``board`` when given)."""
        first, last = 1, self.rail_holes * self.boards
        if board is not None:
            first, last = board * self.rail_holes + 1, (board + 1) * self.rail_holes
        xs = _rail_positions(self.rail_holes, self.boards)
        at = bisect.bisect_left(xs, x, first - 1, last)
        low, high = at - 1, at
        while low >= first - 1 or high < last:
            left = x - xs[low] if low >= first - 1 else math.inf
            right = xs[high] - x if high < last else math.inf
            if left <= right:
                position, low = low + 1, low - 1
            else:
                position, high = high + 1, high + 1
            if f"{rail}{position}" not in self.used:
                return self.take(f"{rail}{position}")
        raise ValueError(f"rail {rail} is full")

    def strip_hole(self, row: int, side: str, prefer: str) -> str:
        """A free hole of a terminal strip, first in ``prefer``'s column order."""
        for col in prefer:
            name = f"{col}{row}"
            if name not in self.used:
                return self.take(name)
        raise ValueError(f"strip {side} of row {row} is full")

    def add(self, net: str, a: str, b: str, kind: str) -> None:
        (x1, y1), (x2, y2) = self.xy(a), self.xy(b)
        self.jumpers.append(Jumper(net, a, b, kind, round(math.hypot(x2 - x1, y2 - y1), 3)))


# column orders: toward the channel first (to another strip), toward the rail first (to a rail)
_TO_STRIP = {"a-e": "dcba", "f-j": "ghij"}
_TO_RAIL = {"a-e": "abcd", "f-j": "jihg"}


def _lead_sites(board: BoardInput, layout: _Layout, rows: list[int], bd: _Board):
    """Every lead's hole: (net, hole) per chip pin and part lead; returns the parts' holes."""
    by_ref = {c.ref: c for c in board.chips} | {p.ref: p for p in board.parts}
    sites: list[tuple[str, str]] = []
    chip_rows: dict[str, int] = {}
    part_holes: dict[str, tuple[str, str]] = {}
    for ref, row in zip(layout.order, rows):
        item = by_ref[ref]
        if isinstance(item, BoardChip):
            chip_rows[ref] = row
            for pin in range(1, item.pin_count + 1):
                bd.take(chip_pin_hole(pin, item.pin_count, row))
            sites += [(net, chip_pin_hole(pin, item.pin_count, row)) for pin, net in item.pins]
        else:
            holes = (f"e{row}", f"f{row}")
            if ref in layout.flipped:
                holes = holes[::-1]
            for hole in holes:
                bd.take(hole)
            part_holes[ref] = holes
            sites += list(zip(item.nets, holes))
    return sites, chip_rows, part_holes


def _decoupling_holes(board: BoardInput, chip_rows: dict[str, int], bd: _Board) -> dict[str, tuple[str, str]]:
    """Each chip's 100 nF across T+ and T- at the rail holes nearest its VDD pin's row."""
    holes = {}
    chips = {c.ref: c for c in board.chips}
    for part in board.parts:
        if not part.decoupling or part.near not in chip_rows:
            continue
        chip = chips[part.near]
        vdd = [p for p, n in chip.pins if n == "VDD"]
        row = chip_rows[part.near]
        hole_row = int(chip_pin_hole(vdd[0], chip.pin_count, row)[1:]) if vdd else row
        x = row_x(hole_row, bd.board_rows)
        board_no = (hole_row - 1) // bd.board_rows
        plus = _shared_rail_position(bd, x, board_no)
        holes[part.ref] = (bd.take(f"T+{plus}"), bd.take(f"T-{plus}"))
    return holes


def _shared_rail_position(bd: _Board, x: float, board: int) -> int:
    """A rail position free on both T+ and T- (a capacitor's leads side by side)."""
    first, last = board * bd.rail_holes + 1, (board + 1) * bd.rail_holes
    return min((abs(rail_x(p, bd.rail_holes) - x), p) for p in range(first, last + 1)
               if f"T+{p}" not in bd.used and f"T-{p}" not in bd.used)[1]


def _route(board: BoardInput, layout: _Layout, dims: tuple[str, int, int, int]):
    """Route one layout; None when it does not fit the boards."""
    name, boards, board_rows, rail_holes = dims
    by_ref = {c.ref: c for c in board.chips} | {p.ref: p for p in board.parts}
    rows = _rows_of([by_ref[r] for r in layout.order], layout.gaps, board_rows, boards)
    if rows is None:
        return None
    bd = _Board(board_rows, rail_holes, boards)
    sites, chip_rows, part_holes = _lead_sites(board, layout, rows, bd)
    part_holes.update(_decoupling_holes(board, chip_rows, bd))
    by_net: dict[str, list[str]] = {}
    for net, hole in sites:
        by_net.setdefault(net, []).append(hole)
    rails_used: set[tuple[str, int]] = {strip_of(h, board_rows, rail_holes)
                                        for hs in part_holes.values() for h in hs if h[:2] in RAILS}
    # rail nets: each strip to the nearest rail of its net on its own side
    for net in RAIL_NETS:
        for hole in sorted(by_net.get(net, ()), key=_hole_key):
            row, side = strip_of(hole, board_rows, rail_holes)
            rail = ("T" if side == "f-j" else "B") + ("+" if net == "VDD" else "-")
            near = bd.strip_hole(row, side, _TO_RAIL[side])
            target = bd.free_rail_hole(rail, row_x(row, board_rows), (row - 1) // board_rows)
            bd.add(net, near, target, "rail")
            rails_used.add((rail, (row - 1) // board_rows))
    external = _external_holes(board, by_net, bd, rails_used)
    _tie_rails(rails_used, bd)
    for net in sorted(by_net, key=_net_key):
        if net in RAIL_NETS:
            continue
        _route_net(net, by_net[net], bd)
    external = _strip_externals(external, bd)
    return bd, rows, chip_rows, part_holes, external, dims


def _hole_key(hole: str) -> tuple:
    return (hole[:2] in RAILS, int(hole[2:] if hole[:2] in RAILS else hole[1:]), hole)


def _net_key(net: str) -> tuple:
    return ref_key(net)


def _external_holes(board: BoardInput, by_net: dict[str, list[str]], bd: _Board, rails_used: set):
    """Supply leads on the rails of board 1; the other outside nets wait for a free strip hole."""
    ext: list[tuple[str, str | tuple, str]] = []
    for net, rail in (("VDD", "B+"), ("VSS", "B-")):
        if net in by_net or any(r[0] == rail for r in rails_used):
            hole = bd.free_rail_hole(rail, 0.0, 0)
            rails_used.add((rail, 0))
            ext.append((net, hole, "supply " + ("positive" if net == "VDD" else "ground (0 V)")))
    for net, where in board.external:
        if net in RAIL_NETS or not by_net.get(net):
            continue
        ext.append((net, ("strip", net), where))
    return ext


def _strip_externals(ext, bd: _Board):
    """Outside nets leave from the free hole nearest the rail of their first strip."""
    out = []
    for net, hole, where in ext:
        if isinstance(hole, tuple):
            holes = bd.net_holes[net]
            row, side = strip_of(holes[0], bd.board_rows, bd.rail_holes)
            hole = bd.strip_hole(row, side, _TO_RAIL[side])
        out.append((net, hole, where))
    return out


def _tie_rails(rails_used: set[tuple[str, int]], bd: _Board) -> None:
    """Join rails of one supply: top to bottom on each board, and each board to the next."""
    for net, (top, bottom) in (("VDD", ("T+", "B+")), ("VSS", ("T-", "B-"))):
        strips = sorted(s for s in rails_used if s[0] in (top, bottom))
        if len(strips) < 2:
            continue
        by_board: dict[int, list[str]] = {}
        for rail, board in strips:
            by_board.setdefault(board, []).append(rail)
        previous: tuple[str, int] | None = None
        for board in sorted(by_board):
            rails = sorted(by_board[board])
            if len(rails) == 2:
                x = rail_x(board * bd.rail_holes + 1, bd.rail_holes)
                a = bd.free_rail_hole(rails[0], x, board)
                b = bd.free_rail_hole(rails[1], x, board)
                bd.add(net, a, b, "tie")
            if previous is not None:
                rail = rails[0] if previous[0] not in rails else previous[0]
                end = rail_x((previous[1] + 1) * bd.rail_holes, bd.rail_holes)
                a = bd.free_rail_hole(previous[0], end, previous[1])
                b = bd.free_rail_hole(rail, end, board)
                bd.add(net, a, b, "tie")
            previous = (rails[0], board)


def _route_net(net: str, holes: list[str], bd: _Board) -> None:
    """Join the net's strips by a degree-capped minimum spanning tree (Prim's method)."""
    strips: list[tuple] = []
    for hole in sorted(holes, key=_hole_key):
        strip = strip_of(hole, bd.board_rows, bd.rail_holes)
        if strip not in strips:
            strips.append(strip)
    bd.net_holes[net] = holes
    if len(strips) < 2:
        return
    centre = {s: bd.xy(f"{'e' if s[1] == 'a-e' else 'f'}{s[0]}") for s in strips}
    degree = {s: 0 for s in strips}
    tree = [strips[0]]
    rest = strips[1:]
    while rest:
        best = None
        for a in tree:
            if degree[a] >= MAX_TREE_DEGREE:
                continue
            for b in rest:
                d = math.dist(centre[a], centre[b])
                key = (d, strips.index(a), strips.index(b))
                if best is None or key < best[0]:
                    best = (key, a, b)
        assert best is not None
        _, a, b = best
        degree[a] += 1
        degree[b] += 1
        tree.append(b)
        rest.remove(b)
        bd.add(net, _toward(a, b, bd), _toward(b, a, bd), "signal")


def _toward(strip: tuple, other: tuple, bd: _Board) -> str:
    """A free hole of ``strip`` for a jumper to ``other``: near the channel if it crosses it."""
    row, side = strip
    order = _TO_STRIP[side] if other[1] != side else (_TO_STRIP[side][1:] + _TO_STRIP[side][0])
    return bd.strip_hole(row, side, order)


# ---------------------------------------------------------------- cost and search

def _crossings(jumpers: list[Jumper], bd: _Board) -> int:
    """Pairs of jumpers that cross (a sweep along the board, so short jumpers meet few others)."""
    segs = []
    for j in jumpers:
        (x1, y1), (x2, y2) = bd.xy(j.frm), bd.xy(j.to)
        segs.append((min(x1, x2), max(x1, x2), min(y1, y2), max(y1, y2), x1, y1, x2, y2))
    segs.sort()
    count = 0
    for i, a in enumerate(segs):
        for b in segs[i + 1:]:
            if b[0] > a[1]:
                break
            if a[3] < b[2] or b[3] < a[2]:
                continue
            if _segments_cross(a[4:], b[4:]):
                count += 1
    return count


def _segments_cross(a, b) -> bool:
    """Proper crossing of two segments (touching ends and overlaps on a line do not count)."""
    def orient(px, py, qx, qy, rx, ry):
        v = (qx - px) * (ry - py) - (qy - py) * (rx - px)
        return (v > 1e-9) - (v < -1e-9)

    o1 = orient(a[0], a[1], a[2], a[3], b[0], b[1])
    o2 = orient(a[0], a[1], a[2], a[3], b[2], b[3])
    o3 = orient(b[0], b[1], b[2], b[3], a[0], a[1])
    o4 = orient(b[0], b[1], b[2], b[3], a[2], a[3])
    return o1 * o2 < 0 and o3 * o4 < 0


def _evaluate(board: BoardInput, layout: _Layout, dims):
    try:
        routed = _route(board, layout, dims)
    except ValueError:
        return None, math.inf
    if routed is None:
        return None, math.inf
    bd = routed[0]
    length = sum(j.length for j in bd.jumpers)
    crossings = _crossings(bd.jumpers, bd)
    return (routed, length, crossings), length + CROSSING_WEIGHT * crossings


def _moves(board: BoardInput, layout: _Layout):
    """Every candidate neighbour of a layout, in a fixed order (chips keep their spare row)."""
    chips = {c.ref: c for c in board.chips}
    for candidate in _all_moves(board, layout, chips):
        if all(gap >= layout.chip_gap for ref, gap in zip(candidate.order[1:], candidate.gaps[1:])
               if ref in chips):
            yield candidate


def _all_moves(board: BoardInput, layout: _Layout, chips: dict):
    order, gaps = list(layout.order), list(layout.gaps)
    parts = [r for r in order if r not in chips]
    for ref in parts:
        yield _Layout(layout.order, layout.gaps, layout.flipped ^ {ref}, layout.chip_gap)
    for ref in parts:
        i = order.index(ref)
        rest_order = order[:i] + order[i + 1:]
        rest_gaps = gaps[:i] + gaps[i + 1:]
        if i < len(rest_gaps):
            rest_gaps[i] += gaps[i]
        elif rest_gaps:
            rest_gaps[-1] += gaps[i]
        for j in range(len(rest_order) + 1):
            if j == i:
                continue
            yield _Layout(tuple(rest_order[:j] + [ref] + rest_order[j:]),
                          tuple(rest_gaps[:j] + [0] + rest_gaps[j:]), layout.flipped, layout.chip_gap)
    for i in range(len(order)):
        if not gaps[i]:
            continue
        for j in range(len(order)):
            if j != i:
                moved = list(gaps)
                moved[i] -= 1
                moved[j] += 1
                yield _Layout(layout.order, tuple(moved), layout.flipped, layout.chip_gap)
    logic = [i for i, ref in enumerate(order) if ref in chips and chips[ref].role == "logic"]
    for n, i in enumerate(logic):
        for j in logic[n + 1:]:
            if chips[order[i]].pin_count != chips[order[j]].pin_count and j != logic[n + 1]:
                continue        # chips of one length trade places anywhere; others only with a neighbour
            swapped = list(order)
            swapped[i], swapped[j] = order[j], order[i]
            yield _Layout(tuple(swapped), layout.gaps, layout.flipped, layout.chip_gap)


def _spare_rows(board: BoardInput, dims) -> int:
    _, boards, board_rows, _ = dims
    return boards * board_rows - sum(_size(c) for c in board.chips) - sum(
        1 for p in board.parts if not p.decoupling)


@functools.lru_cache(maxsize=16)
def place(board: BoardInput, budget: int = MOVE_BUDGET) -> Placement:
    """Place and route ``board``, routing at most ``budget`` candidate layouts (deterministic)."""
    items = list(board.chips) + [p for p in board.parts if not p.decoupling]
    dims = _board_choice(items)
    result = None
    while result is None:       # a rail can run out of holes before the rows do: one more board
        layout = _start_layout(board, _spare_rows(board, dims))
        result, cost = _evaluate(board, layout, dims)
        if result is None:
            layout = _Layout(layout.order, tuple(0 for _ in layout.gaps))
            result, cost = _evaluate(board, layout, dims)
        if result is None:
            dims = ("830-point", dims[1] + (dims[0] == "830-point"), *BOARDS["830-point"])
    start = (result[1], result[2])
    tried = kept = 0
    improved = True
    while improved and tried < budget:
        improved = False
        for candidate in _moves(board, layout):
            if tried >= budget:
                break
            tried += 1
            found, value = _evaluate(board, candidate, dims)
            if found is not None and value < cost - 1e-9:
                layout, result, cost = candidate, found, value
                kept += 1
                improved = True
                break
    return _placement(board, result, start, tried, kept)


def _placement(board: BoardInput, result, start, tried: int, kept: int) -> Placement:
    (bd, rows, chip_rows, part_holes, external, dims), length, crossings = result
    name, boards, board_rows, rail_holes = dims
    chips = tuple((c, chip_rows[c.ref]) for c in board.chips)
    parts = tuple((p, *part_holes[p.ref]) for p in board.parts if p.ref in part_holes)
    return Placement(name, boards, board_rows, rail_holes, chips, parts, tuple(bd.jumpers),
                     tuple(external), crossings, (round(start[0], 3), start[1]), tried, kept)


# ---------------------------------------------------------------- JSON

def method_text() -> str:
    return ("ordered placement (chips in signal-flow order, counter first; parts in free rows beside "
            "the chip they share most nets with), then a deterministic local search (move a part, turn "
            "it end for end, move a spare row, swap two logic chips; a move is kept when it "
            f"lowers jumper length + {CROSSING_WEIGHT:g} pitches per crossing; at most {MOVE_BUDGET} "
            "layouts routed); nets joined by a minimum spanning tree of their strips")


def placement_to_json(placement: Placement) -> dict:
    """The ``breadboard`` section of the plan JSON (formats.md v2 section 3, plus figures)."""
    mm = lambda pitches: round(pitches * PITCH_MM, 1)  # noqa: E731
    joins = ("one board" if placement.boards == 1 else
             f"{placement.boards} boards end to end; rows and rail holes number on from one board "
             "to the next, and each rail used on both sides of a seam is joined by a jumper across it")
    return {
        "board": placement.board,
        "boards": placement.boards,
        "rows": placement.rows,
        "board_rows": placement.board_rows,
        "rail_holes": placement.rail_holes,
        "rails": dict(RAIL_NET),
        "joins": joins,
        "chips": [{"ref": c.ref, "part": c.part, "pin1": f"e{row}", "pins": c.pin_count,
                   "rows": [row, row + c.pin_count // 2 - 1],
                   "orientation": "pin 1 in column e at the lower row number, notch toward row 1"}
                  for c, row in placement.chips],
        "parts": [{"ref": p.ref, "kind": p.kind, "value": p.label, "holes": [h1, h2],
                   "nets": list(p.nets),
                   **({"decouples": p.near} if p.decoupling else {})}
                  for p, h1, h2 in placement.parts],
        "jumpers": [{"net": j.net, "from": j.frm, "to": j.to, "kind": j.kind,
                     "length_mm": mm(j.length)} for j in placement.jumpers],
        "external": [{"net": net, "hole": hole, "to": where} for net, hole, where in placement.external],
        "method": method_text(),
        "figures": {"jumpers": len(placement.jumpers), "length_mm": mm(placement.length),
                    "crossings": placement.crossings,
                    "ordered_start": {"length_mm": mm(placement.start_cost[0]),
                                      "crossings": placement.start_cost[1]},
                    "layouts_tried": placement.moves_tried, "moves_kept": placement.moves_kept},
    }


def plan_breadboard(plan: Plan) -> dict:
    """The plan's ``breadboard`` section in one call."""
    return placement_to_json(place(board_input(plan)))


