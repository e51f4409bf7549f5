"""The sequencer (``synth.flow``): one order of stages, re-planning through it, pure timing.

Outside references: the ripple-counter behaviour every digital handbook
describes (common practice: a 4-bit ripple count decoded for the all-zero
state spikes on the entries to counts 2, 4 and 8, because the low stages
clear before the next one sets), an independent tick-counting reference
written here (tick t shows count t, so "zero" is asserted exactly on tick
0), and Python's own ``ast`` module for which module calls which stage.
The shipped examples' outputs before and after the sequencer was introduced
are compared byte for byte by tests/test_golden.py.
"""

from __future__ import annotations

import ast
import dataclasses
from pathlib import Path

import pytest

import synth.flow as flow
from synth import model, pipeline, stages
from synth.exports.plan_json import design_text
from synth.netlist import simulate_ticks
from synth.timing import timing_report

PACKAGE = Path(__file__).resolve().parent.parent / "synth"
SPEC = "name: zero-strobe\nsupply: 5 V\nclock: {frequency: 100 kHz}\ncycle: 16\nsignals:\n  zero: {high: [0]}\n"
ZERO_SPIKES = [2, 4, 8]          # common practice (see the module text)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("flow")
    spec, stock = folder / "zero.yaml", folder / "bin.yaml"
    spec.write_text(SPEC)
    stock.write_text("parts:\n  74HC4040: 1\n  74HC4002: 1\n  74HC08: 1\n")
    return spec, stock


@pytest.fixture(scope="module")
def plain(files, catalog):
    return flow.make_plan(*files, catalog=catalog)


def _zero_ticks(design) -> list[bool]:
    return list(simulate_ticks(design.plan)["zero"])


def test_the_plan_matches_an_independent_tick_count(plain):
    assert _zero_ticks(plain) == [t == 0 for t in range(16)]
    assert sorted(g.at_tick for g in plain.plan.glitches) == ZERO_SPIKES


def test_the_design_record_is_frozen(plain):
    with pytest.raises(dataclasses.FrozenInstanceError):
        plain.trace = None
    assert isinstance(plain, model.Design) and plain.trace is not None


def test_timing_analysis_changes_nothing(plain):
    before = design_text(plain)
    report = timing_report(plain)
    assert design_text(plain) == before
    assert list(report.glitches) == plain.plan.glitches
    assert list(report.coincident_edges) == plain.plan.coincident_edges
    assert report.warnings == plain.plan.warnings


def test_replanning_with_unchanged_inputs_gives_the_same_plan(plain):
    again = flow.Sequencer().replan(plain)
    assert again is not plain and again.plan is not plain.plan
    assert design_text(dataclasses.replace(again, lacks=plain.lacks)) == design_text(plain)


def test_the_remedies_remap_at_the_users_effort(tmp_path, catalog, monkeypatch):
    """``--effort quick`` reaches every re-mapping the glitch remedies ask for.

    s is asserted at tick 14 only, tick 6 does not matter: the cheapest decode
    Q3.Q2.Q1' spikes on the entry to 8 (the ripple passes 0111 -> 0110 -> 0100
    -> 0000 -> 1000, common practice), so the remedy "another decode choice"
    re-derives and re-maps the decode."""
    spec, stock = tmp_path / "s.yaml", tmp_path / "b.yaml"
    spec.write_text("name: dc-try\nsupply: 5 V\nclock: {frequency: 100 kHz}\ncycle: 16\n"
                    "signals:\n  s: {high: [14], dont_care: [6]}\n")
    stock.write_text("parts:\n  74HC4040: 1\n  74HC21: 1\n  74HC04: 1\n")
    seen = []
    real = flow.map_decode

    def counting(*args, **kwargs):
        seen.append(args[5] if len(args) > 5 else kwargs.get("effort"))
        return real(*args, **kwargs)

    monkeypatch.setattr(flow, "map_decode", counting)
    fixed = flow.make_plan(spec, stock, catalog=catalog, fix=["glitches"], effort="quick")
    assert len(seen) > 1 and set(seen) == {"quick"}, seen
    record, = fixed.plan.timing_fixes
    assert record.remedies_applied[0] == "decode_choice"
    got = simulate_ticks(fixed.plan)["s"]
    assert [got[t] for t in range(16) if t != 6] == [t == 14 for t in range(16) if t != 6]


def test_without_fix_the_plan_says_no_fix_was_asked(plain):
    assert plain.plan.timing_fixes is None and plain.plan.strobed == {}


def test_the_old_names_are_the_same_objects():
    assert pipeline.make_plan is flow.make_plan and pipeline.Design is model.Design
    assert pipeline.mapping_inputs is stages.mapping_inputs


def _calls(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    return {node.func.id if isinstance(node.func, ast.Name) else node.func.attr
            for node in ast.walk(tree) if isinstance(node, ast.Call)
            and isinstance(node.func, (ast.Name, ast.Attribute))}


def test_only_the_sequencer_runs_the_stage_order():
    """Timing analysis and the analog parts are called from flow.py only."""
    callers = {path.relative_to(PACKAGE).as_posix() for path in PACKAGE.rglob("*.py")
               if {"timing_report", "add_analog_parts"} & _calls(path)}
    assert callers == {"flow.py"}, callers


def test_glitchfix_and_wishlist_do_not_import_the_sequencer():
    for name in ("glitchfix.py", "wishlist.py", "stages.py", "model.py"):
        tree = ast.parse((PACKAGE / name).read_text(encoding="utf-8"))
        imported = {node.module for node in ast.walk(tree) if isinstance(node, ast.ImportFrom)}
        assert not imported & {"flow", "pipeline"}, (name, imported)
