"""Applied RC delays (synth/rcdelay.py): R and C between two Schmitt stages, built in.

Outside references: the RC charging law V(t) = VDD (1 - e^(-t / RC)) solved
for the Schmitt threshold, t = RC ln(VDD / (VDD - VT+)) charging and
t = RC ln(VDD / VT-) discharging (textbook: Horowitz & Hill, The Art of
Electronics, 3rd ed., section 1.4, from memory; common practice), computed
here by hand from the catalog's 74HC14 thresholds (NXP 74HC1G14 data sheet,
as the catalog's source says); ngspice (``ngspice -b``) simulating the
plan's own R, C and Schmitt stages; Icarus Verilog running the exported
model (the delayed output must still match the spec tick by tick, its edges
later by the RC time and the two stages' catalog delays).
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
import textwrap

import pytest

from cosim import needs_iverilog, run_plan
from synth.analog import thresholds_at
from synth.cli import main
from synth.exports.spice import measure_lines, plan_to_spice, spice_checks
from synth.exports.verilog import verilog_names
from synth.inventory import load_catalog
from synth.netlist import simulate_ticks
from synth.pipeline import make_plan

CATALOG = load_catalog()
needs_ngspice = pytest.mark.skipif(shutil.which("ngspice") is None,
                                   reason="ngspice is not installed (Debian package ngspice)")


def _write(folder, name, text):
    path = folder / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


SPEC = """\
    name: dly
    cycle: 16
    clock: {frequency: 100 kHz}
    signals:
      frame: {asserted: [[0, 4]], delay: 1 us}
      strobe: {asserted: "t % 4 == 1"}
    """
BIN = """\
    parts: {74HC4040: 1, 74HC00: 2, 74HC04: 1, 74HC14: 1, 74HC20: 1}
    resistors: [1k, 4k7, 10k, 47k]
    capacitors: [100p, 1n, 10n]
    """


@pytest.fixture(scope="module")
def design(tmp_path_factory):
    folder = tmp_path_factory.mktemp("dly")
    return make_plan(_write(folder, "s.yaml", SPEC), _write(folder, "b.yaml", BIN), catalog=CATALOG)


def _by_hand(r, c, supply=5.0):
    row = thresholds_at(CATALOG.parts["74HC14"].thresholds, supply)
    vtp, vtm = row["vt_plus"]["typ"], row["vt_minus"]["typ"]
    return r * c * math.log(supply / (supply - vtp)), r * c * math.log(supply / vtm)


def test_the_delay_is_built_from_the_bin(design):
    plan = design.plan
    d, = plan.rc_delays
    assert d.signal == "frame" and d.asked_by.startswith("delay:") and d.part == "74HC14"
    assert d.r in (1e3, 4.7e3, 10e3, 47e3) and d.c in (100e-12, 1e-9, 10e-9)
    r, c = plan.passive(d.passives[0]), plan.passive(d.passives[1])
    assert (r.kind, r.value, r.ends) == ("resistor", d.r, (d.nets["drive"], d.nets["node"]))
    assert (c.kind, c.value, c.ends) == ("capacitor", d.c, (d.nets["node"], "VSS"))
    assert plan.bom.get("74HC14") == 1                       # the stages' chip is taken from the bin
    (ref1, unit1), (ref2, unit2) = d.stages
    assert plan.chip(ref1).units_used[unit1] != plan.chip(ref2).units_used[unit2]
    assert plan.signals["frame"].net == d.nets["output"]
    assert plan.signals["frame"].source == (ref2, 4)      # 74HC14 2Y
    assert [g.op for g in plan.network.gates if g.id.startswith("dly_frame")] == ["not", "rc", "not"]


def test_the_times_follow_the_rc_law(design):
    d, = design.plan.rc_delays
    charge, discharge = _by_hand(d.r, d.c)
    assert d.rise_s[1] == pytest.approx(charge, rel=1e-9)
    assert d.fall_s[1] == pytest.approx(discharge, rel=1e-9)
    assert d.rise_s[0] < d.rise_s[1] < d.rise_s[2] and d.fall_s[0] < d.fall_s[1] < d.fall_s[2]


def test_the_simulation_delays_the_output(design):
    """On the typical trace the delayed output changes one Schmitt delay + the RC time +
    one Schmitt delay after the decoded net."""
    d, = design.plan.rc_delays
    trace = design.trace
    tpd = CATALOG.parts["74HC14"].delay_ns("tpd", 5.0, "typ")
    charge, discharge = _by_hand(d.r, d.c)
    early = _without_runts(trace.changes[d.nets["input"]], d.rise_s[0] * 1e9)
    late = trace.changes[d.nets["output"]]
    assert len(early) == len(late) and early
    for (t0, level0), (t1, level1) in zip(early, late):
        assert level0 == level1
        rc = discharge if level0 else charge      # rising input: stage 1 falls, the node discharges
        assert t1 - t0 == pytest.approx(2 * tpd + rc * 1e9, abs=0.01)


def _without_runts(changes, shortest_ns):
    """The changes with every pulse shorter than ``shortest_ns`` taken out (what an RC swallows)."""
    out = list(changes)
    i = 0
    while i + 1 < len(out):
        if out[i + 1][0] - out[i][0] < shortest_ns:
            del out[i:i + 2]
            i = max(i - 1, 0)
        else:
            i += 1
    return out


def test_a_runt_on_the_decode_is_swallowed(design):
    """The decode passes count 0 on the 7 -> 8 ripple for a few ns (a runt on the early
    net); the RC never brings its node to a threshold, so the output shows nothing."""
    d, = design.plan.rc_delays
    early = design.trace.changes[d.nets["input"]]
    runts = [(a, b) for a, b in zip(early, early[1:]) if b[0] - a[0] < 100]
    assert runts
    late = design.trace.changes[d.nets["output"]]
    assert not [(a, b) for a, b in zip(late, late[1:]) if b[0] - a[0] < 1000]


def test_the_tick_by_tick_levels_are_unchanged(design):
    levels = simulate_ticks(design.plan)
    assert [t for t, v in enumerate(levels["frame"]) if v] == [0, 1, 2, 3]
    assert design.trace.sample(design.plan.signals["frame"].net)[:16] == list(levels["frame"])
    assert not [g for g in design.plan.glitches if g.signal == "frame"]


@needs_ngspice
def test_ngspice_measures_the_rc_law(design, tmp_path):
    d, = design.plan.rc_delays
    checks = [c for c in spice_checks(design.plan, CATALOG, tick_ns=design.trace.period_ns)
              if c.name.startswith("app")]
    deck = plan_to_spice(design.plan, CATALOG, tick_ns=design.trace.period_ns)
    assert f"{d.passives[0]} frame_rcdrv frame_rc" in deck            # the plan's own R between its nets
    deck = deck.replace(".end\n", "\n".join(measure_lines(checks)) + "\n.end\n")
    (tmp_path / "d.cir").write_text(deck)
    out = subprocess.run(["ngspice", "-b", str(tmp_path / "d.cir")], capture_output=True, text=True,
                         timeout=300).stdout
    charge, discharge = _by_hand(d.r, d.c)
    for name, by_hand in (("app1_charge", charge), ("app1_discharge", discharge)):
        got = float(re.search(rf"{name}\s*=\s*([-+0-9.eE]+)", out).group(1))
        assert got == pytest.approx(by_hand, rel=0.005), name


@needs_iverilog
def test_icarus_matches_the_spec_and_the_delay(design, tmp_path):
    plan = design.plan
    period = round(design.trace.period_ns * 1000)
    samples, waves = run_plan(plan, CATALOG, period, 32, tmp_path)
    want = [t % 16 in (0, 1, 2, 3) for t in range(32)]
    assert samples["frame"] == want
    d, = plan.rc_delays
    names = verilog_names(plan, CATALOG)
    early = [t for t, v in waves[names[d.nets["input"]]] if v in "01"][1:]
    late = [t for t, v in waves[names[d.nets["output"]]] if v in "01"][1:]
    early = [t for t, _ in _without_runts([(t, 0) for t in early], d.rise_s[0] * 1e12)]
    tpd = CATALOG.parts["74HC14"].delay_ns("tpd", 5.0, "typ")
    charge, discharge = _by_hand(d.r, d.c)
    assert late and len(late) == len(early)
    gaps = sorted({round((b - a) / 1000, 1) for a, b in zip(early, late)})
    assert gaps == sorted({round(2 * tpd + charge * 1e9, 1), round(2 * tpd + discharge * 1e9, 1)})


def test_json_and_text(design, tmp_path):
    spec, stock = tmp_path / "s.yaml", tmp_path / "b.yaml"
    _write(tmp_path, "s.yaml", SPEC)
    _write(tmp_path, "b.yaml", BIN)
    assert main(["plan", str(spec), "--bin", str(stock), "--json", str(tmp_path / "p.json")]) == 0
    data = json.loads((tmp_path / "p.json").read_text())
    rec, = data["rc_delays"]
    assert rec["signal"] == "frame" and rec["nets"]["output"] == "frame_dly"
    assert data["signals"]["frame"]["net"] == "frame_dly"


RACE = """\
    name: race
    cycle: 16
    clock: {frequency: 50 kHz}
    signals:
      sel: {asserted: [[4, 8]]}
      pulse: {asserted: [[4, 12]]}
    switches:
      sw: {select: sel, on: pulse, off: GND}
    """
RACE_BIN = BIN.replace("74HC20: 1}", "74HC20: 1, 74HC4053: 1}")


def test_fix_races_applies_the_offered_delay(tmp_path):
    spec, stock = _write(tmp_path, "s.yaml", RACE), _write(tmp_path, "b.yaml", RACE_BIN)
    offered = make_plan(spec, stock, catalog=CATALOG).plan
    offer, = [o for o in offered.rc_offers if o.problem == "race"]
    assert offer.delayed == "sel" and not offered.rc_delays
    fixed = make_plan(spec, stock, catalog=CATALOG, fix=["races"]).plan
    d, = fixed.rc_delays
    assert d.signal == "sel" and d.asked_by == "--fix races" and (d.r, d.c) == (offer.values.r_ohm, offer.values.c_farad)
    assert fixed.switches["sw"].control_net == d.nets["output"]
    pin = fixed.switches["sw"].control_pin
    assert fixed.chip(fixed.switches["sw"].ref).pins[pin] == d.nets["output"]
    edge, = fixed.coincident_edges
    assert edge.race is False and "RC delay on sel" in edge.separated_by


@pytest.mark.parametrize("edit, code, words", [
    ("    clock: {frequency: 100 kHz}\n", 2, "needs clock.frequency"),
    ("delay: 1 us", 2, "not under half"),
])
def test_refusals(tmp_path, capsys, edit, code, words):
    text = SPEC.replace(edit, "") if "clock" in edit else SPEC.replace(edit, "delay: 20 us")
    spec, stock = _write(tmp_path, "s.yaml", text), _write(tmp_path, "b.yaml", BIN)
    assert main(["plan", str(spec), "--bin", str(stock)]) == code
    assert words in capsys.readouterr().err


def test_no_schmitt_part_is_short(tmp_path, capsys):
    spec = _write(tmp_path, "s.yaml", SPEC)
    stock = _write(tmp_path, "b.yaml", BIN.replace(" 74HC14: 1,", ""))
    assert main(["plan", str(spec), "--bin", str(stock)]) == 3
    assert "Schmitt" in capsys.readouterr().err
