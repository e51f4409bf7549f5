"""``binsynth substitute`` against constructions from outside the project.

Expected gate counts, each with its source:

- common practice (De Morgan): NAND4 from 2-input NANDs is NAND(AND(a,b),
  AND(c,d)), each AND a NAND plus a NAND with joined inputs: 5 gates, 2 chips
  of a quad NAND; the brute force below (every circuit of up to 5 NAND2)
  confirms no 4-gate circuit exists;
- standard textbook: XOR from four NAND2 (1 chip of a 4011);
- common practice: NOR3 from NOR2 = NOR(NOT NOR(a, b), c): 3 gates, 1 chip;
- common practice: a 4-input AND as two cascaded 3-input ANDs of one 4073;
- common practice (De Morgan): AND8 = NOR of two NAND4 (one 4012, one 4001
  gate): 3 gates, 2 chips;
- common practice: OR2 from NAND2 = NAND(NOT a, NOT b): 3 gates;
  ``a & ~b`` from NAND2 takes 3 (brute force below);
- an inverter is one NAND with its inputs joined.

Pin numbers are checked against the catalog's 4011 pin map ([st4011] ST
HCF4011B datasheet: gate A 1, 2 -> 3; B 5, 6 -> 4; C 8, 9 -> 10; D 12, 13 -> 11).
"""

from __future__ import annotations

import json

import pytest

from synth.cli import main
from synth.errors import UsageError
from synth.substitute import parse_target
from test_techmap import NAND, brute_force_sizes


def brute_nand_size(on: set[int], nvars: int, depth: int) -> int | None:
    """Fewest NAND2 computing the function (test_techmap's breadth-first search)."""
    return brute_force_sizes(nvars, NAND, depth).get(sum(1 << m for m in on))


def test_brute_force_nand4_takes_five_nand2():
    assert brute_nand_size({m for m in range(16) if m != 15}, 4, 5) == 5


def test_brute_force_a_and_not_b_takes_three_nand2():
    assert brute_nand_size({1}, 2, 4) == 3        # a = bit 0, b = bit 1: a & ~b is minterm 1


def write_bin(tmp_path, parts: dict[str, int]):
    path = tmp_path / "bin.yaml"
    path.write_text("parts:\n" + "".join(f"  {p}: {n}\n" for p, n in parts.items()))
    return str(path)


def run_json(tmp_path, capsys, target, parts, *extra):
    code = main(["substitute", target, "--bin", write_bin(tmp_path, parts), "--json", *extra])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


@pytest.mark.parametrize("target, parts, chips, gates, source", [
    ("nand4", {"4011": 2}, 2, 5, "common practice + brute force"),
    ("xor2", {"4011": 1}, 1, 4, "standard textbook"),
    ("nor3", {"4001": 1}, 1, 3, "common practice"),
    ("and4", {"4073": 1}, 1, 2, "common practice: cascade of two AND3"),
    ("and8", {"4012": 1, "4001": 1}, 2, 3, "De Morgan: NOR of two NAND4"),
    ("or2", {"4011": 1}, 1, 3, "De Morgan: NAND of inverted inputs"),
    ("a & ~b", {"4011": 1}, 1, 3, "brute force"),
    ("inv", {"4011": 1}, 1, 1, "common practice: NAND with joined inputs"),
])
def test_cheapest_way_matches_the_known_count(tmp_path, capsys, target, parts, chips, gates, source):
    doc = run_json(tmp_path, capsys, target, parts)
    best = doc["ways"][0]
    assert (best["chips"], best["gates"]) == (chips, gates), source
    assert best["proven_minimal"], source


def test_ways_are_ranked_by_chips_then_gates(tmp_path, capsys):
    doc = run_json(tmp_path, capsys, "xor2", {"74HC00": 2, "74HC02": 1, "74HC04": 1}, "--limit", "5")
    keys = [(w["chips"], w["gates"], w["depth"]) for w in doc["ways"]]
    assert keys == sorted(keys) and len(keys) >= 2


def test_either_polarity_accepts_the_complement(tmp_path, capsys):
    # AND4 from NAND2 needs 6 gates; delivered low it is NAND4: 5 (common practice)
    fixed = run_json(tmp_path, capsys, "and4", {"4011": 2})["ways"][0]
    free = run_json(tmp_path, capsys, "and4", {"4011": 2}, "--either-polarity")["ways"][0]
    assert fixed["gates"] == 6 and free["gates"] == 5 and free["output"]["polarity"] == "low"


def test_xor_from_nands_is_wired_on_datasheet_pins(tmp_path, capsys):
    way = run_json(tmp_path, capsys, "xor2", {"4011": 1})["ways"][0]
    pins_on = {w["net"]: sorted(p["pin"] for p in w["pins"]) for w in way["wires"]}
    assert pins_on["VDD"] == [14] and pins_on["VSS"] == [7]          # [st4011] supply pins
    outputs = {3, 4, 10, 11}                                         # [st4011] gate outputs
    used = sorted(p for pins in pins_on.values() for p in pins)
    assert used == list(range(1, 15)), "every pin of the 4011 on exactly one net"
    assert way["output"]["source"]["pin"] in outputs
    assert len(pins_on["a"]) == 2 and len(pins_on["b"]) == 2         # the textbook fan-out


def test_text_output_draws_the_cascade(tmp_path, capsys):
    code = main(["substitute", "nand4", "--bin", write_bin(tmp_path, {"4011": 2})])
    out = capsys.readouterr().out
    assert code == 0
    assert "way 1: 2 chips (2 x 4011), 5 gates" in out and "proven minimal" in out
    assert "inputs joined or tied: inverts" in out and "pin 1  <= input a" in out


@pytest.mark.parametrize("text, on, inputs", [
    ("a & b | ~c", {0b011, 0b000, 0b001, 0b010, 0b111}, ("a", "b", "c")),
    ("a ^ b", {1, 2}, ("a", "b")),
    ("(a + b)'", {0}, ("a", "b")),
    ("!x & y", {2}, ("x", "y")),
])
def test_expressions_follow_python_boolean_semantics(text, on, inputs):
    # reference: Python's own and/or/not/!= on the same assignments
    target = parse_target(text)
    assert target.inputs == inputs and target.on == frozenset(on)


@pytest.mark.parametrize("text, words", [
    ("nadn4", "nand4"), ("xro2", "xor2"), ("nand9", "width from 2 to 8"),
    ("a & (b", "')'"), ("a && b", "column"), ("a # b", "column 3"), ("", "nothing"),
])
def test_bad_targets_exit_2_with_the_closest_spelling(tmp_path, capsys, text, words):
    code = main(["substitute", text, "--bin", write_bin(tmp_path, {"4011": 1})])
    err = capsys.readouterr().err
    assert code == 2 and words in err and "Traceback" not in err


def test_parse_target_raises_usage_error():
    with pytest.raises(UsageError):
        parse_target("nand1")


def test_impossible_bin_exits_3_saying_what_is_short(tmp_path, capsys):
    code = main(["substitute", "xor2", "--bin", write_bin(tmp_path, {"4081": 2})])
    err = capsys.readouterr().err
    assert code == 3 and "cannot build xor2" in err and "invert" in err and "Traceback" not in err


def test_bad_supply_exits_2(tmp_path, capsys):
    code = main(["substitute", "xor2", "--bin", write_bin(tmp_path, {"4011": 1}), "--supply", "fast"])
    assert code == 2 and "--supply" in capsys.readouterr().err
