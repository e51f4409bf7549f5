"""Harmless glitches (synth/harmless.py): ``feeds: slow`` on an output.

The rule checked: a glitch narrower than a slow load's response (1 us; LEDs,
lamps, relays respond in microseconds or slower, common practice) on an
output nothing on the board reads is marked harmless, listed with its
reason, and left alone by --fix glitches; a switch select cannot be slow.
The glitch itself is the 74HC4040's ripple on the 7 -> 8 entry (Q2 falls
before Q3 rises: a ripple counter's stages change one after another, TI
CD74HC4040 SCHS203E, read; shared/reference/hc-74.md).
"""

from __future__ import annotations

import textwrap

import pytest

from synth.cli import main
from synth.commands.plan import glitch_rows
from synth.findings import GlitchRecord
from synth.harmless import SLOW_LOAD_NS, mark_harmless
from synth.inventory import load_catalog
from synth.pipeline import make_plan

CATALOG = load_catalog()
SPEC = """\
    name: hl
    cycle: 16
    clock: {frequency: 100 kHz}
    signals:
      lamp: {asserted: [[0, 4]], feeds: slow}
      frame: {asserted: [[0, 4]]}
    """
BIN = "parts: {74HC4040: 1, 74HC00: 2, 74HC04: 1, 74HC20: 1}\n"


def _write(folder, name, text):
    path = folder / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def plans(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hl")
    spec, stock = _write(folder, "s.yaml", SPEC), _write(folder, "b.yaml", BIN)
    return make_plan(spec, stock, catalog=CATALOG).plan, make_plan(spec, stock, catalog=CATALOG,
                                                                      fix=["glitches"]).plan


def test_a_short_glitch_on_a_slow_output_is_harmless(plans):
    plan, _ = plans
    lamp = [g for g in plan.glitches if g.signal == "lamp"]
    frame = [g for g in plan.glitches if g.signal == "frame"]
    assert lamp and frame and [g.at_tick for g in lamp] == [g.at_tick for g in frame]
    assert all(g.harmless and "feeds: slow" in g.harmless_why for g in lamp)
    assert not any(g.harmless for g in frame)
    row, = [r for r in glitch_rows(plan) if r[0] == "lamp"]
    assert row[4].startswith("harmless:")


def test_the_fix_leaves_a_harmless_glitch_alone(plans):
    _, fixed = plans
    assert {r.signal for r in fixed.timing_fixes} == {"frame"}


def test_a_wide_pulse_still_counts():
    spec = type("S", (), {})()
    spec.signals = {"lamp": type("G", (), {"feeds": "slow"})()}
    records = [GlitchRecord("lamp", 3, 12.0, "", "", "static", "high", 0.0, "gate_paths",
                            width_max_ns=SLOW_LOAD_NS + 1)]
    marked, = mark_harmless(records, spec)
    assert marked.harmless is False and "it counts" in marked.harmless_why


@pytest.mark.parametrize("body, words", [
    ("{asserted: [[0, 4]], feeds: fast}", "expected logic or slow"),
    ("{asserted: [[0, 4]], feeds: slow, steady: true}", "contradict"),
])
def test_bad_feeds_is_exit_2(tmp_path, capsys, body, words):
    spec = _write(tmp_path, "s.yaml", SPEC.replace("{asserted: [[0, 4]], feeds: slow}", body))
    assert main(["plan", str(spec), "--bin", str(_write(tmp_path, "b.yaml", BIN))]) == 2
    assert words in capsys.readouterr().err


def test_a_switch_select_cannot_be_slow(tmp_path, capsys):
    spec = _write(tmp_path, "s.yaml", SPEC + "switches:\n      sw: {select: lamp, on: frame, off: GND}\n")
    stock = _write(tmp_path, "b.yaml", BIN.replace("}", ", 74HC4053: 1}"))
    assert main(["plan", str(spec), "--bin", str(stock)]) == 2
    assert "selects switch sw" in capsys.readouterr().err
