"""The simulator copies a counter cycle that starts from exactly the state the first
one started from instead of simulating it again (``timing.REPEAT_CYCLES``).  An
event-driven simulation is deterministic, so the copy must equal what simulating
gives: every change, every cause link and every reset pulse, at both corners and
in both delay models.  Checked here against the simulation with the copy turned off
(the simulator's own rules are checked against datasheets in test_timing.py).
"""

from __future__ import annotations

from pathlib import Path

import pytest

from synth import timing
from synth.inventory import load_catalog
from synth.pipeline import make_plan

ROOT = Path(__file__).resolve().parent.parent

WINDOWS = """\
name: repeat-check
cycle: 256
signals:
  a: {asserted: [[17, 49], [130, 170]]}
  b: {asserted: [[100, 101]]}
  c: {asserted: [[3, 200]]}
"""

BIN = """\
parts:
  74HC393: 1
  74HC00: 6
  74HC02: 6
  74HC04: 4
  74HC08: 4
  74HC32: 4
"""


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


def _record(trace: timing.Trace) -> tuple:
    return (trace.changes, sorted(trace.causes.items(), key=repr), trace.resets, trace.warnings,
            trace.settle_ns)


def _traces(plan, catalog, monkeypatch, repeat: bool, **run) -> list[tuple]:
    monkeypatch.setattr(timing, "REPEAT_CYCLES", repeat)
    return [_record(timing.simulate(plan.counter, plan.network, catalog, plan.supply, corner=corner,
                                    inertial=inertial, **run))
            for corner in ("typ", "max") for inertial in (True, False)]


@pytest.mark.parametrize("cycles", [2, 3])
def test_copied_cycles_equal_simulated_ones(catalog, tmp_path, monkeypatch, cycles):
    spec, stock = tmp_path / "spec.yaml", tmp_path / "bin.yaml"
    spec.write_text(WINDOWS)
    stock.write_text(BIN)
    plan = make_plan(spec, stock, catalog=catalog).plan
    copied = _traces(plan, catalog, monkeypatch, True, cycles=cycles)
    simulated = _traces(plan, catalog, monkeypatch, False, cycles=cycles)
    assert copied == simulated


def test_stepper_example_copies_equal_simulation(catalog, monkeypatch):
    """A shipped example whose second cycle the simulator copies (a plain ripple count)."""
    plan = make_plan(ROOT / "examples/stepper.yaml", ROOT / "inventory/bins/stepper.yaml",
                     catalog=catalog).plan
    assert _traces(plan, catalog, monkeypatch, True, cycles=2) == \
        _traces(plan, catalog, monkeypatch, False, cycles=2)
