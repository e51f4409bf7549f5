"""Pulse widths at worst case and the power-on reset against the minimum reset width.

Outside references: the 4040's minimum RESET pulse, 140 ns guaranteed at 5 V
(catalog, from memory of the 4000B ripple counter tables, as its source says);
the 74HC4040's minimum MR pulse 16 ns at 4.5 V (TI CD74HC4040 SCHS203E, read;
shared/reference/hc-74.md).  The power-on pulse is the RC time constant law
t = R C ln(VDD / (VDD - VT+)) (common practice, any circuits handbook), its
shortest case with R -5 % and C -10 % (ordinary part tolerances, common practice).
"""

from __future__ import annotations

import dataclasses
import math
import textwrap

import pytest

from synth.analog import C_TOLERANCE, R_TOLERANCE
from synth.inventory import load_catalog
from synth.pipeline import make_plan
from synth.timing import pulse_warning_lines, pulse_width_checks

CATALOG = load_catalog()


def _write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


CUT = """\
    name: cut
    cycle: 100
    clock: {frequency: 10 kHz}
    signals:
      s: {high: [[0, 10]]}
    """


@pytest.fixture(scope="module")
def cut(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cut")
    return make_plan(_write(folder, "s.yaml", CUT),
                     _write(folder, "b.yaml", "parts: {74HC4040: 1, 74HC00: 3, 74HC04: 1, 74HC20: 2}\n"),
                     catalog=CATALOG)


def test_reset_width_measured_at_both_corners(cut):
    reset, = [c for c in cut.plan.pulse_widths if c.what == "reset"]
    assert reset.width_typ_ns > 0 and reset.width_max_ns > 0
    assert reset.width_ns == min(reset.width_typ_ns, reset.width_max_ns)
    assert reset.corner in ("typ", "max") and "no minimum delays" in reset.basis
    assert reset.needed_ns == 16 and reset.ok


def test_the_narrower_corner_decides(cut):
    """Called with the typical trace alone the figure is the typical one; with the
    worst-case trace too, never wider."""
    alone, = [c for c in pulse_width_checks(cut.plan, cut.trace, CATALOG) if c.what == "reset"]
    assert alone.width_max_ns is None and alone.width_ns == alone.width_typ_ns
    both, = [c for c in cut.plan.pulse_widths if c.what == "reset"]
    assert both.width_ns <= alone.width_ns


POR = """\
    name: por
    supply: 5 V
    cycle: 16
    power_on_reset: WIDTH
    signals:
      strobe: {high: "t % 4 == 1"}
    """
POR_BIN = """\
    parts: {CD4040BE: 1, CD4081BE: 1, CD40106BE: 1}
    resistors: [1k, 10k, 47k, 100k]
    capacitors: [100p, 1n, 10n, 100n]
    """


def _por(tmp_path, width):
    return make_plan(_write(tmp_path, "s.yaml", POR.replace("WIDTH", width)),
                     _write(tmp_path, "b.yaml", POR_BIN), catalog=CATALOG)


def test_power_on_reset_checked_against_the_minimum_reset_width(tmp_path):
    design = _por(tmp_path, "10 ms")
    por = design.plan.power_on_reset
    rec, = [c for c in design.plan.pulse_widths if c.what == "power-on reset"]
    low = (1 - R_TOLERANCE) * (1 - C_TOLERANCE)
    vt_min = por.thresholds["vt_plus"]["min"]
    shortest = por.r * por.c * math.log(5.0 / (5.0 - vt_min)) * low * 1e9
    assert rec.width_ns == pytest.approx(shortest, rel=1e-3)
    assert rec.needed_ns == 140 and rec.ok is True and rec.part == "4040"


def test_a_short_power_on_pulse_is_a_runt(tmp_path):
    """The shortest power_on_reset the spec allows (1 us) against a catalog whose
    4040 would need 5 us: a warning with the remedy."""
    design = _por(tmp_path, "1 us")
    part = CATALOG.parts["4040"]
    slow = dataclasses.replace(part, timing={**part.timing, "reset_width": {5: {"typ": 2500, "max": 5000}}})
    catalog = dataclasses.replace(CATALOG, parts={**CATALOG.parts, "4040": slow})
    rec, = [c for c in pulse_width_checks(design.plan, design.trace, catalog) if c.what == "power-on reset"]
    assert rec.ok is False and rec.needed_ns == 5000
    text = " ".join(pulse_warning_lines(rec))
    assert "shorter than the 5000 ns minimum" in text and "remedy" in text
