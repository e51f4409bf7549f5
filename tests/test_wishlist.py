"""What the bin lacks, checked on cases whose answer the trade knows.

The gate counts behind the expected answers are common practice (any
digital-design textbook's NAND-only constructions): a 4-input AND from
2-input NANDs alone takes 6 gates (two quad 4011 chips), while a 4082 (dual
4-input AND) does it with one gate of one chip, and a 4012 (dual 4-input
NAND) with one NAND4 plus its second NAND4 as the inverter.
"""

from __future__ import annotations

import json

import pytest

from synth.cli import main
from synth.pipeline import make_plan
from synth import wishlist
from synth.wishlist import bin_lacks, candidate_parts

SPEC = """\
name: count15
cycle: 16
signals:
  strobe:
    high: [15]
"""


def write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(text)
    return path


@pytest.fixture()
def nand_only(tmp_path):
    """A counter and two quad 2-input NANDs: the AND4 of count 15 takes both 4011s."""
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    return make_plan(spec, stock)


def test_nand_only_plan_needs_two_logic_chips(nand_only):
    # common practice: AND4 from NAND2 alone = 6 gates, more than one quad chip holds
    assert sum(nand_only.network.chips.values()) == 2
    assert len(nand_only.network.gates) == 6


def test_a_wide_and_is_what_the_bin_lacks(nand_only):
    lacks = bin_lacks(nand_only)
    assert lacks.complete
    best = lacks.best
    assert best is not None
    # one 4082 gate (dual 4-input AND) replaces all six NANDs: one logic chip instead of two
    assert best.part == "4082"
    assert (best.logic_chips_now, best.logic_chips_with) == (2, 1)
    assert (best.gates_now, best.gates_with) == (6, 1)
    assert "instead of 3" in lacks.text()      # 4520 + two 4011 -> 4520 + 4082


def test_the_4012_is_also_offered_with_its_own_cost(nand_only):
    lacks = bin_lacks(nand_only)
    offered = {s.part: s for s in [lacks.best, *lacks.others]}
    assert "4012" in offered
    # NAND4 then the other NAND4 with joined inputs as the inverter (common practice)
    assert offered["4012"].gates_with == 2 and offered["4012"].logic_chips_with == 1


def test_candidates_are_one_per_unit_set_kinds_the_bin_lacks_first(nand_only):
    from synth.wishlist import _mapping_inputs

    library, _ = _mapping_inputs(nand_only)
    parts = candidate_parts(nand_only.stock, nand_only.catalog, library)
    assert len(parts) == len(set(parts))
    assert all(nand_only.catalog.parts[p].family == "4000B" for p in parts)
    # the 4011 is fully used, so one more of it is a candidate; kinds the bin lacks come first
    assert "4011" in parts and parts.index("4082") < parts.index("4011")


def test_a_plan_with_nothing_to_gain_says_so(tmp_path):
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "and4.yaml", "parts:\n  4520: 1\n  4082: 1\n")
    lacks = bin_lacks(make_plan(spec, stock))
    assert lacks.best is None
    assert "no single extra chip type would shrink" in lacks.text()


def test_plan_json_carries_the_answer(tmp_path, capsys):
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["bin_lacks"]["best"]["part"] == "4082"
    assert data["bin_lacks"]["best"]["chips_with"] == 2


def test_the_search_beside_the_plan_finds_the_same_answer(tmp_path):
    # the forked search started before the plan's own mapping; it always finishes its list
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    design = make_plan(spec, stock, lacks=True)
    assert design.lacks.complete and design.lacks.best.part == "4082"
    assert design.plan.bin_lacks["best"]["logic_chips_with"] == 1


def test_a_spare_chip_type_is_never_the_answer(tmp_path):
    # a third 4011 is left unused by the plan: one more 4011 cannot help and is not judged
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 3\n")
    lacks = bin_lacks(make_plan(spec, stock))
    assert all(s.part != "4011" for s in [lacks.best, *lacks.others] if s)


@pytest.mark.parametrize("argv", [["--lacks", "0"], ["--effort", "quick"]])
def test_lacks_zero_or_quick_effort_skips_the_search(tmp_path, capsys, argv):
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-", *argv]) == 0
    assert json.loads(capsys.readouterr().out)["bin_lacks"] is None


def test_the_old_seconds_option_still_reads_with_a_note(tmp_path, capsys):
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-", "--lacks", "5"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert any("--lacks no longer takes seconds" in w for w in data["warnings"])
    assert data["bin_lacks"]["complete"]


def test_a_negative_budget_is_a_usage_error(tmp_path, capsys):
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--lacks", "-1"]) == 2
    assert "argument --lacks: expected a number of seconds from 0 up" in capsys.readouterr().err


def test_the_answer_does_not_depend_on_which_process_maps_which_candidate(tmp_path, monkeypatch):
    # both cores share the list (a worker from the front, the planning process from the
    # back); where the platform cannot fork, this process maps it all: the same answer
    spec = write(tmp_path, "count15.yaml", SPEC)
    stock = write(tmp_path, "nands.yaml", "parts:\n  4520: 1\n  4011: 2\n  4069: 1\n")
    design = make_plan(spec, stock)
    shared = bin_lacks(design).to_json()

    def no_fork(method):
        raise ValueError(method)

    monkeypatch.setattr(wishlist.multiprocessing, "get_context", no_fork)
    alone = bin_lacks(design).to_json()
    assert shared == alone and shared["complete"] and shared["best"]["part"] == "4082"
