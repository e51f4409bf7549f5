"""Breadboard placement, checked hole by hole against the plan's own nets.

The check rebuilds the circuit from the plan JSON's ``breadboard`` section
alone, using nothing but how a solderless board is made (common practice,
and formats.md v2 section 3): holes a-e of one row are one strip, f-j
another, each rail one strip along one board, and a jumper joins the two
strips it lands in.  It then asks whether the strips group the component
pins exactly as ``wires`` does, whether any hole holds two leads, and
whether every hole exists on the board.  The rebuild here is written apart
from ``synth.breadboard`` on purpose: it shares no code with the placer.
"""

from __future__ import annotations

import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from synth.breadboard import BoardChip, BoardInput, BoardPart, board_input, place, placement_to_json
from synth.exports.plan_json import plan_to_json
from synth.inventory import data_path, example_path
from synth.pipeline import make_plan

PLANNED_EXAMPLES = ["sample_hold", "stepper", "adc_staircase", "ultrasonic_burst", "led_scanner"]

TERMINAL = re.compile(r"([a-j])(\d+)")
RAIL = re.compile(r"([TB][+-])(\d+)")


class Strips:
    """Union-find over the strips of a board, built from holes only."""

    def __init__(self, board: dict):
        self.board = board
        self.parent: dict = {}

    def strip(self, hole: str) -> tuple:
        rows, per_board = self.board["rows"], self.board.get("board_rows", self.board["rows"])
        rail_holes = self.board["rail_holes"]
        boards = self.board.get("boards", 1)
        if m := RAIL.fullmatch(hole):
            pos = int(m.group(2))
            assert 1 <= pos <= rail_holes * boards, f"rail hole {hole} is not on the board"
            return (m.group(1), (pos - 1) // rail_holes)
        m = TERMINAL.fullmatch(hole)
        assert m, f"{hole!r} is not a hole name"
        row = int(m.group(2))
        assert 1 <= row <= rows, f"row {row} of {hole} is not on the board ({rows} rows)"
        assert per_board * boards == rows
        return (row, "a-e" if m.group(1) in "abcde" else "f-j")

    def find(self, s):
        self.parent.setdefault(s, s)
        while self.parent[s] != s:
            self.parent[s] = self.parent[self.parent[s]]
            s = self.parent[s]
        return s

    def join(self, a, b):
        self.parent[self.find(a)] = self.find(b)


def chip_hole(pin: int, pins: int, pin1: str) -> str:
    """formats.md v2: pins 1..n/2 down column e from pin 1's row, n/2+1..n back up column f."""
    row = int(pin1[1:])
    assert pin1[0] == "e"
    half = pins // 2
    return f"e{row + pin - 1}" if pin <= half else f"f{row + pins - pin}"


def check_board(data: dict) -> dict:
    """Every normative property of the ``breadboard`` section; returns the figures it counted."""
    board = data["breadboard"]
    strips = Strips(board)
    leads: dict[str, str] = {}

    def lead(hole: str, what: str) -> tuple:
        assert hole not in leads, f"hole {hole} holds {leads[hole]} and {what}"
        leads[hole] = what
        return strips.find(strips.strip(hole))

    part_pins = {c["ref"]: c for c in data["chips"]}
    pin_strip: dict[tuple[str, int], tuple] = {}
    for chip in board["chips"]:
        pins = chip.get("pins") or part_pins[chip["ref"]].get("pins")
        assert pins % 2 == 0 and int(chip["pin1"][1:]) + pins // 2 - 1 <= board["rows"]
        for pin in range(1, pins + 1):
            pin_strip[(chip["ref"], pin)] = lead(chip_hole(pin, pins, chip["pin1"]), f"{chip['ref']} pin {pin}")
    extra_parts = []
    for part in board["parts"]:
        assert len(part["holes"]) == 2
        for end, hole in enumerate(part["holes"], 1):
            pin_strip[(part["ref"], end)] = lead(hole, f"{part['ref']} lead {end}")
        if part.get("decouples"):
            extra_parts.append(part)
    for jumper in board["jumpers"]:
        a = lead(jumper["from"], f"jumper {jumper['net']}")
        b = lead(jumper["to"], f"jumper {jumper['net']}")
        strips.join(a, b)
    for ext in board["external"]:
        lead(ext["hole"], f"outside lead {ext['net']}")
    group_of_net: dict[str, object] = {}
    for wire in data["wires"]:
        groups = {strips.find(pin_strip[(p["ref"], p["pin"])]) for p in wire["pins"]}
        assert len(groups) == 1, f"net {wire['net']} is split over {len(groups)} groups of strips"
        group_of_net[wire["net"]] = groups.pop()
    by_group: dict[object, str] = {}
    for net, group in group_of_net.items():
        assert group not in by_group, f"nets {by_group[group]} and {net} are joined on the board"
        by_group[group] = net
    connected = {(p["ref"], p["pin"]) for w in data["wires"] for p in w["pins"]}
    for (ref, pin), strip in pin_strip.items():
        if (ref, pin) not in connected and not ref.startswith("CD"):
            assert strips.find(strip) not in by_group, f"{ref} pin {pin} (open) sits on net {by_group[strips.find(strip)]}"
    for part in extra_parts:
        nets = {by_group.get(strips.find(strips.strip(h))) for h in part["holes"]}
        assert nets == {"VDD", "VSS"}, f"{part['ref']} should sit across VDD and VSS, sits on {nets}"
        assert part["decouples"] in part_pins
    for ext in board["external"]:
        got = by_group.get(strips.find(strips.strip(ext["hole"])))
        assert got == ext["net"], f"outside lead {ext['net']} at {ext['hole']} is on {got}"
    outside = set(data.get("nets_external", {})) - {"VDD", "VSS"}
    placed = {e["net"] for e in board["external"]}
    missing = {n for n in outside if any(w["net"] == n and w["pins"] for w in data["wires"])} - placed
    assert not missing, f"outside nets with no hole: {missing}"
    return {"chips": len(board["chips"]), "jumpers": len(board["jumpers"])}


@pytest.fixture(scope="module", params=PLANNED_EXAMPLES)
def example_json(request) -> dict:
    name = request.param
    design = make_plan(example_path(f"{name}.yaml"), data_path("bins", f"{name}.yaml"), lacks=0)
    return plan_to_json(design.plan)


def test_example_board_rebuilds_the_wires(example_json):
    figures = check_board(example_json)
    assert figures["chips"] == len(example_json["chips"])


def test_example_chips_in_signal_flow_order_with_decoupling(example_json):
    board = example_json["breadboard"]
    roles = {c["ref"]: c["role"] for c in example_json["chips"]}
    first = min(board["chips"], key=lambda c: int(c["pin1"][1:]))
    assert roles[first["ref"]] == "counter"
    switch_rows = [int(c["pin1"][1:]) for c in board["chips"] if roles[c["ref"]] == "switch"]
    logic_rows = [int(c["pin1"][1:]) for c in board["chips"] if roles[c["ref"]] == "logic"]
    assert not switch_rows or not logic_rows or min(switch_rows) > max(logic_rows)
    decoupled = sorted(p["decouples"] for p in board["parts"] if p.get("decouples"))
    assert decoupled == sorted(roles)
    assert board["rows"] in (30, 63) or board["boards"] > 1


def test_example_figures_agree_with_the_jumpers(example_json):
    board = example_json["breadboard"]
    figures = board["figures"]
    assert figures["jumpers"] == len(board["jumpers"])
    total = sum(j["length_mm"] for j in board["jumpers"])
    assert abs(total - figures["length_mm"]) < 0.05 * len(board["jumpers"]) + 0.1
    start = figures["ordered_start"]
    assert figures["length_mm"] + 4 * 2.54 * figures["crossings"] <= (
        start["length_mm"] + 4 * 2.54 * start["crossings"] + 1e-6)


def test_placement_is_deterministic():
    """A second placement, computed afresh (not the cached one), is the same hole for hole."""
    plan = make_plan(example_path("stepper.yaml"), data_path("bins", "stepper.yaml"), lacks=0).plan
    board = board_input(plan)
    assert placement_to_json(place.__wrapped__(board)) == placement_to_json(place(board))


# ---------------------------------------------------------------- random boards

PIN_COUNTS = st.sampled_from([8, 14, 16])


@st.composite
def board_inputs(draw) -> tuple[BoardInput, dict]:
    """Random chips whose pins land on random nets, random two-lead parts, outside nets."""
    n_chips = draw(st.integers(1, 12))
    nets = [f"n{i}" for i in range(draw(st.integers(1, 20)))]
    chips, wires = [], {}
    for i in range(n_chips):
        count = draw(PIN_COUNTS)
        pins = []
        for pin in range(1, count + 1):
            if pin == count:
                net = "VDD"
            elif pin == count // 2:
                net = "VSS"
            else:
                net = draw(st.sampled_from(nets + ["VDD", "VSS", ""]))
            if net:
                pins.append((pin, net))
                wires.setdefault(net, []).append({"ref": f"U{i + 1}", "pin": pin})
        role = "counter" if i == 0 else draw(st.sampled_from(["logic", "logic", "switch"]))
        chips.append(BoardChip(f"U{i + 1}", f"P{count}", count, tuple(pins), float(i), role))
    parts = []
    for k in range(draw(st.integers(0, 8))):
        a, b = draw(st.lists(st.sampled_from(nets + ["VDD", "VSS"]), min_size=2, max_size=2, unique=True))
        ref = f"R{k + 1}"
        parts.append(BoardPart(ref, "resistor", "10 kΩ", (a, b), chips[draw(st.integers(0, n_chips - 1))].ref))
        wires.setdefault(a, []).append({"ref": ref, "pin": 1})
        wires.setdefault(b, []).append({"ref": ref, "pin": 2})
    parts += [BoardPart(f"CD{i + 1}", "capacitor", "100 nF", ("VDD", "VSS"), c.ref, True)
              for i, c in enumerate(chips)]
    outside = draw(st.lists(st.sampled_from(nets), unique=True, max_size=4))
    external = tuple((n, f"output {n}") for n in outside)
    data = {"chips": [{"ref": c.ref, "pins": c.pin_count} for c in chips],
            "wires": [{"net": n, "pins": p} for n, p in wires.items()],
            "nets_external": {n: w for n, w in external}}
    return BoardInput(tuple(chips), tuple(parts), external), data


@settings(max_examples=30, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(board_inputs())
def test_random_boards_rebuild_their_nets(case):
    board, data = case
    data["breadboard"] = placement_to_json(place(board, budget=8))   # routing is checked, not the search
    check_board(data)
    assert data["breadboard"]["board"] == ("400-point" if sum(c.pin_count // 2 for c in board.chips) + sum(
        1 for p in board.parts if not p.decoupling) <= 30 else "830-point")


def test_two_boards_end_to_end_join_their_rails():
    """Ten 16-pin chips need 80 rows: two 830-point boards, rails joined across the seam."""
    chips = tuple(BoardChip(f"U{i}", "P16", 16, ((8, "VSS"), (16, "VDD"), (1, "a"), (9, f"b{i}"),
                                                 (10, f"b{i + 1}")), float(i), "logic")
                  for i in range(1, 11))
    parts = tuple(BoardPart(f"CD{i}", "capacitor", "100 nF", ("VDD", "VSS"), f"U{i}", True) for i in range(1, 11))
    data = {"chips": [{"ref": c.ref, "pins": 16} for c in chips],
            "wires": [], "nets_external": {}}
    nets: dict = {}
    for c in chips:
        for pin, net in c.pins:
            nets.setdefault(net, []).append({"ref": c.ref, "pin": pin})
    data["wires"] = [{"net": n, "pins": p} for n, p in nets.items()]
    data["breadboard"] = placement_to_json(place(BoardInput(chips, parts)))
    check_board(data)
    board = data["breadboard"]
    assert (board["boards"], board["rows"], board["board_rows"]) == (2, 126, 63)
    seam = [j for j in board["jumpers"] if j["kind"] == "tie"
            and (int(j["from"][2:]) - 1) // 50 != (int(j["to"][2:]) - 1) // 50]
    assert {j["net"] for j in seam} == {"VDD", "VSS"}
