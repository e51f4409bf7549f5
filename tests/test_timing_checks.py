"""Pulse widths, races and the grouped glitch report.

Outside references: the minimum clock pulse width of the 74HC4040, 16 ns at
4.5 V (TI CD74HC4040 SCHS203E, read; shared/reference/hc-74.md); the 74HC74
function table for complementary outputs (Q and Q-bar switch on one clock
edge: one edge, not two racing signals; Nexperia 74HC74 Rev 9, read).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

from synth.commands.plan import glitch_rows, remedy_lines
from synth.findings import CoincidentEdge, GlitchRecord
from synth.inventory import load_catalog
from synth.netlist import BoardSignal, BoardSwitch
from synth.pipeline import make_plan
from synth.timing import Remedies, mark_races, pulse_warning_lines, pulse_width_checks

CUT = """\
name: cut
cycle: 100
clock: {frequency: 10 kHz}
signals:
  s: {high: [[0, 10]]}
  s_n: {high: [[10, 100]]}
"""
BIN = "parts:\n  74HC4040: 1\n  74HC00: 3\n  74HC04: 1\n  74HC20: 2\n  74HC08: 1\n  74HC32: 1\n"


@pytest.fixture(scope="module")
def design(tmp_path_factory):
    folder: Path = tmp_path_factory.mktemp("cut")
    (folder / "s.yaml").write_text(CUT)
    (folder / "b.yaml").write_text(BIN)
    return make_plan(folder / "s.yaml", folder / "b.yaml")


def test_clock_and_reset_widths_checked_against_the_catalog(design):
    checks = {(c.what, c.ref): c for c in design.plan.pulse_widths}
    clock = checks[("clock", "U1")]
    assert clock.needed_ns == 16 and clock.width_ns == 50000.0 and clock.ok
    reset = checks[("reset", "U1")]
    assert reset.needed_ns == 16 and reset.width_ns > 0 and reset.at_tick == 0


def test_a_runt_reset_gets_a_warning_and_a_remedy(design):
    """The same plan against a catalog whose 74HC4040 needs a 1 us reset pulse."""
    catalog = load_catalog()
    part = catalog.parts["74HC4040"]
    slow = dataclasses.replace(part, timing={**part.timing, "reset_width": {5: {"typ": 500, "max": 1000}}})
    catalog = dataclasses.replace(catalog, parts={**catalog.parts, "74HC4040": slow})
    checks = pulse_width_checks(design.plan, design.trace, catalog)
    reset, = [c for c in checks if c.what == "reset"]
    assert reset.ok is False and reset.needed_ns == 1000
    text = " ".join(pulse_warning_lines(reset))
    assert "shorter than the 1000 ns minimum" in text and "remedy" in text


def test_complementary_signals_are_no_race(design):
    edges = design.plan.coincident_edges
    pair, = {tuple(e.signals) for e in edges}
    assert pair == ("s", "s_n")
    assert all(e.relation == "complementary" and not e.race for e in edges)
    assert not [o for o in design.plan.rc_offers if o.problem in ("race", "coincident")]


def test_a_switch_select_races_the_signal_it_routes():
    plan = type("P", (), {})()
    plan.signals = {"a": BoardSignal("high", "a", None), "b": BoardSignal("high", "b", None)}
    plan.switches = {"sw": BoardSwitch(ref="U1", unit="A", part="4053", kind="spdt", when_control_high="b",
                                       control_net="a", control_pin=11, common_pin=14, common_net="sw",
                                       select="a", on="b", off="GND", on_net="b", off_net="VSS",
                                       complement_net="", sections=(("U1", "A"),), paths=())}
    records = [CoincidentEdge(("a", "b"), 4)]
    marked, = mark_races(records, {"a": frozenset({4, 5}), "b": frozenset({0, 4})}, plan, 8)
    assert marked.relation == "gates" and marked.race


def test_one_glitch_line_per_signal_and_cause():
    plan = type("P", (), {})()
    plan.glitches = [GlitchRecord("f", t, 10.0 * t, f"count {t - 1}->{t}", "", "static", "high", 0.0,
                                  "transient_state", models=("states",)) for t in (2, 4, 8)]
    rows = glitch_rows(plan)
    assert rows == [("f", "2, 4, 8", 80.0, "count states", "count 1->2")]   # the analysis in plain words
    design = type("D", (), {})()
    design.remedies = Remedies(by_glitch={("f", 2): ["gate it", "note: x"], ("f", 4): ["gate it", "note: x"]})
    assert remedy_lines(design) == ["f (ticks 2, 4): gate it"]
