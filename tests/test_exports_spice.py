"""The SPICE deck of a plan's analog parts (synth/exports/spice.py), run in ngspice.

ngspice (Debian package ``ngspice``; .ci/run installs it) is the outside
reference: each deck is simulated in batch mode (``ngspice -b``) with the
``.meas`` lines of ``spice_checks`` added, and every figure binsynth computed
must come back within the tolerance the check states, derived from the
method:

- the Schmitt oscillator's period and every RC delay follow the RC time
  constant law V(t) = V_end + (V_start - V_end) exp(-t / RC) (common
  practice; any circuits handbook, e.g. Horowitz & Hill, The Art of
  Electronics, ch. 1, from memory); the simulator places each threshold
  crossing within one time step, which the deck sets to period / 1000 and
  RC / 1000: 0.5 % allowed;
- a ladder, and a switch section routing it with no load, is a linear
  resistor network, solved by the simulator to its convergence tolerance (ngspice defaults RELTOL 1e-3, VNTOL 1 uV): 0.1 % of
  the level + 10 uV allowed;
- the 4060 stage's f = 1 / (k Rt Ct) uses the datasheet's k (2.3, NXP
  HEF4060B / Motorola MC14541B); ideal inverters at VDD/2 give 2 ln 3 = 2.197:
  15 % allowed (see ``synth/exports/spice.py``).

Only the SPICE3 common subset may appear in a deck (R, C, V with DC,
PULSE or PWL, S with SW models, .model / .ic / .tran / .end); a test reads every
line to hold that.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import textwrap

import pytest

from synth.cli import main
from synth.exports.spice import measure_lines, plan_to_spice, spice_checks
from synth.inventory import data_path, example_path, load_catalog
from synth.pipeline import make_plan

CATALOG = load_catalog()

needs_ngspice = pytest.mark.skipif(
    shutil.which("ngspice") is None,
    reason="ngspice is not installed (Debian package ngspice; .ci/run installs it)")


@pytest.fixture(scope="module")
def example():
    return make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml"),
                     catalog=CATALOG)


def _write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def _simulate(tmp_path, deck: str, checks) -> dict[str, float]:
    """Run the deck with the checks' .meas lines in ngspice; name -> measured value."""
    lines = measure_lines(checks) or [".meas tran supply FIND v(vdd) AT=1e-6"]
    body = deck.rsplit(".end", 1)[0] + "\n".join(lines) + "\n.end\n"
    path = tmp_path / "deck.cir"
    path.write_text(body, encoding="utf-8")
    run = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=300)
    wanted = {line.split()[2] for line in lines}
    values = {}
    for line in run.stdout.splitlines():
        match = re.match(r"\s*(\w+)\s*=\s*([-+0-9.eE]+)", line)
        if match and match.group(1).lower() in wanted:
            values[match.group(1).lower()] = float(match.group(2))
    assert run.returncode == 0, run.stdout[-2000:] + run.stderr[-2000:]
    return values


def _assert_agrees(values: dict[str, float], checks) -> None:
    misses = []
    for check in checks:
        got = values.get(check.name)
        if got is None or abs(got - check.expected) > check.tolerance:
            misses.append(f"{check.name}: binsynth {check.expected:.6g} {check.unit}, ngspice {got}, "
                          f"allowed ±{check.tolerance:.3g} ({check.why})")
    assert not misses, "\n".join(misses)


# ---------------------------------------------------------------- the example

@needs_ngspice
def test_example_deck_agrees_with_ngspice(example, tmp_path):
    plan = example.plan
    deck = plan_to_spice(plan, CATALOG)
    checks = spice_checks(plan, CATALOG)
    names = [c.name for c in checks]
    # the 40106 oscillator, all 16 levels of the ramp ladder, and the offered RC delay
    assert "osc_three_periods" in names
    assert [n for n in names if n.startswith("lad_ramp_c")] == [f"lad_ramp_c{k}" for k in range(16)]
    assert {"dly1_rise", "dly1_fall"} <= set(names)
    # the 4053 section routes the ramp while sweep is asserted (ticks 0-63), else GND
    switch = {int(c.name.rsplit("_t", 1)[1]): c.expected for c in checks if c.name.startswith("sw_adc_in_t")}
    assert {63, 64} <= set(switch) and switch[64] == 0.0
    assert switch[63] == plan.ladders["ramp"].levels[15]
    values = _simulate(tmp_path, deck, checks)
    _assert_agrees(values, checks)
    # the figures compared are binsynth's own: the oscillator's period and the ladder's levels
    osc = next(c for c in checks if c.name == "osc_three_periods")
    assert osc.expected == pytest.approx(3 / plan.oscillator.f_nom)
    ladder = plan.ladders["ramp"]
    assert [c.expected for c in checks if c.name.startswith("lad_ramp_c")] == list(ladder.levels)
    offer = next(o for o in plan.rc_offers if o.applicable)
    rise = next(c for c in checks if c.name == "dly1_rise")
    assert rise.expected * 1e9 == pytest.approx(offer.rising_ns[1], abs=0.1)


def test_example_deck_is_built_from_the_wiring(example):
    deck = plan_to_spice(example.plan, CATALOG)
    # every resistor and capacitor of the plan, on the nets of the wiring list
    for p in example.plan.passives:
        a, b = ("0" if n in ("VSS", "GND") else n.lower() for n in p.ends)
        assert re.search(rf"^{p.ref} {a} {b} ", deck, re.M), p.ref
    # the 40106's typical thresholds 2.9 / 1.9 V as switch hysteresis: VT 2.4, VH 0.5
    assert ".model osc_schmitt_lo SW(VT=2.4 VH=0.5 RON=1 ROFF=1e+09)" in deck
    # the 4040's output resistance (1.14 kOhm, catalog) behind every driving bit
    assert deck.count("Rramp_out") == 4 and "q3_src q3 1140" in deck


def test_deck_keeps_to_the_common_subset(example):
    deck = plan_to_spice(example.plan, CATALOG)
    lines = [line for line in deck.splitlines() if line.strip() and not line.startswith("*")]
    for line in lines:
        head = line.split()[0].lower()
        if head.startswith("."):
            assert head in {".model", ".ic", ".tran", ".end"}, line
            if head == ".model":
                assert re.fullmatch(r"\.model \w+ SW\(VT=\S+ VH=\S+ RON=\S+ ROFF=\S+\)", line), line
        else:
            assert head[0] in "rcvs", line
            if head[0] == "v":
                assert re.search(r" (DC \S+|PULSE\([^)]*\)|PWL\([^)]*\))$", line), line
    assert lines[-1] == ".end" and lines[-2].startswith(".tran ") and lines[-2].endswith(" UIC")
    # numbers never use SI suffixes (a SPICE reads 1M as milli)
    assert not re.search(r"\s\d+(\.\d+)?(k|m|meg|u|n|p)\b", deck, re.I)


# ---------------------------------------------------------------- other circuits

@needs_ngspice
def test_4060_stage_deck_agrees_with_ngspice(tmp_path):
    spec = _write(tmp_path, "spec.yaml", """\
        clock: {frequency: 20 kHz, source: oscillator}
        cycle: 16384
        signals:
          half: {high: [[0, 8192]]}
        """)
    stock = _write(tmp_path, "bin.yaml", """\
        parts: {CD4060BE: 1, CD4011BE: 1}
        resistors: [10k, 22k, 47k, 100k]
        capacitors: [1n, 2n2, 10n]
        """)
    plan = make_plan(spec, stock, catalog=CATALOG).plan
    assert plan.oscillator.site.kind == "counter-stage"
    checks = spice_checks(plan, CATALOG)
    assert [c.name for c in checks] == ["osc_three_periods"]
    values = _simulate(tmp_path, plan_to_spice(plan, CATALOG), checks)
    _assert_agrees(values, checks)
    # the ideal-inverter stage runs at T = 2 ln 3 Rt Ct (two RC swings from VDD/2 to
    # 1.5 VDD or -0.5 VDD back to VDD/2), within 2 % (the 1 % hysteresis of the model)
    osc = plan.oscillator
    assert values["osc_three_periods"] / 3 == pytest.approx(2 * 1.0986123 * osc.r * osc.c, rel=0.02)


@needs_ngspice
def test_binary_weighted_ladder_with_a_load_agrees_with_ngspice(tmp_path):
    spec = _write(tmp_path, "spec.yaml", """\
        cycle: 16
        signals:
          strobe: {high: "t % 4 == 1"}
        levels:
          ramp: {bits: [0, 1, 2], kind: binary, load: 100k}
        """)
    stock = _write(tmp_path, "bin.yaml", "parts: {CD4040BE: 1, CD4011BE: 1}\nresistors: [10k, 20k, 40k]\n")
    plan = make_plan(spec, stock, catalog=CATALOG).plan
    checks = spice_checks(plan, CATALOG)
    assert len([c for c in checks if c.name.startswith("lad_")]) == 8
    deck = plan_to_spice(plan, CATALOG)
    assert "Rramp_load ramp 0 100000" in deck
    _assert_agrees(_simulate(tmp_path, deck, checks), checks)


@needs_ngspice
def test_plan_writes_the_deck_and_a_plan_without_analog_parts_says_so(tmp_path, capsys):
    out = tmp_path / "adc.cir"
    code = main(["plan", str(example_path("adc_staircase.yaml")), "--bin",
                 str(data_path("bins", "adc_staircase.yaml")), "--spice", str(out), "--lacks", "0"])
    assert code == 0 and out.read_text().startswith("* binsynth")
    spec = _write(tmp_path, "spec.yaml", """\
        cycle: 8
        signals:
          strobe: {high: [[1, 3]]}
        """)
    stock = _write(tmp_path, "bin.yaml", "parts: {CD4040BE: 1, CD4081BE: 1, CD4069UBE: 1}\n")
    plain = tmp_path / "plain.cir"
    assert main(["plan", str(spec), "--bin", str(stock), "--spice", str(plain), "--lacks", "0"]) == 0
    text = plain.read_text()
    assert "has no resistors or capacitors to simulate" in text and "oscillator" not in text
    values = _simulate(tmp_path, text, [])
    assert values == {"supply": 5.0}
