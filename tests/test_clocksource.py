"""The on-board clock oscillator chosen from the bin (synth/clocksource.py).

Sources beside each check.  The Schmitt relaxation period is the RC charging
law V(t) = V_end + (V_start - V_end) exp(-t / RC) (the RC time constant;
any circuits text, from memory) applied to the charge from VT- to VT+ and the
discharge back: T = RC [ln((VDD - VT-) / (VDD - VT+)) + ln(VT+ / VT-)]; the
test also integrates the RC node numerically with scipy.  The thresholds are
the catalog's (UTC CD40106 / RCA-TI limits at 5 V: VT+ 2.2 / 2.9 / 3.6 V,
VT- 0.9 / 1.9 / 2.8 V).  The 4060 formula f = 1 / (2.3 Rt Ct) is the NXP
HEF4060B / Motorola MC14541B one (see synth/analog.py).
"""

from __future__ import annotations

import shutil
import json
import textwrap

import pytest
from scipy.integrate import solve_ivp

from synth.cli import main
from synth.inventory import data_path, example_path, load_bin, load_catalog
from synth.pipeline import make_plan

CATALOG = load_catalog()


def _write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


SPEC = """\
    name: osc-check
    supply: 5 V
    clock: {frequency: 12 kHz, source: oscillator, tolerance: 10 %}
    cycle: 16
    signals:
      strobe: {high: "t % 4 == 1"}
    """


@pytest.fixture(scope="module")
def example():
    return make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml"),
                     catalog=CATALOG)


# ---------------------------------------------------------------- the example's oscillator

def test_example_puts_the_oscillator_on_a_40106_and_picks_47k_with_2n2(example):
    # the decode's 40106 has a spare Schmitt inverter (a spare 4053 section took one
    # signal's join), so the oscillator shares that package instead of opening one
    osc = example.plan.oscillator
    assert (osc.site.part, osc.site.kind, osc.opened, osc.r, osc.c) == ("40106", "inverter", False,
                                                                        47e3, 2.2e-9)
    # Hand calculation with the typical thresholds at 5 V:
    # ln((5 - 1.9) / (5 - 2.9)) = ln(1.47619) = 0.389465
    # ln(2.9 / 1.9)             = ln(1.52632) = 0.422857
    # T = 47k * 2.2n * 0.812322 = 103.4 us * 0.812322 = 83.993 us -> f = 11.906 kHz
    assert 1 / osc.f_nom == pytest.approx(83.993e-6, rel=1e-4)
    assert osc.f_nom == pytest.approx(11906, rel=1e-4)
    # Slow corner (VT+ 3.6, VT- 0.9): ln(4.1 / 1.4) + ln(4) = 1.074515 + 1.386294 = 2.460809
    assert osc.f_min == pytest.approx(1 / (103.4e-6 * 2.460809), rel=1e-5)       # 3.930 kHz
    # Fast corner (VT+ 3.6, VT- 2.8): ln(2.2 / 1.4) + ln(3.6 / 2.8) = 0.451985 + 0.251314
    assert osc.f_max == pytest.approx(1 / (103.4e-6 * 0.703299), rel=1e-5)       # 13.75 kHz
    assert any("more than the 10% allowed" in w for w in osc.warnings)
    assert "T = 47 kΩ × 2.2 nF × [ln((5 − 1.9) / (5 − 2.9)) + ln(2.9 / 1.9)]" in osc.worked


def test_example_period_agrees_with_a_numerical_integration(example):
    osc = example.plan.oscillator
    rc, vdd, vtp, vtm = osc.r * osc.c, 5.0, 2.9, 1.9

    def phase(v0, rail, threshold):
        event = lambda t, v: v[0] - threshold  # noqa: E731
        event.terminal = True
        sol = solve_ivp(lambda t, v: [(rail - v[0]) / rc], (0, 20 * rc), [v0], events=event,
                        rtol=1e-10, atol=1e-12, max_step=rc / 50)
        return sol.t_events[0][0]

    period = phase(vtm, vdd, vtp) + phase(vtp, 0.0, vtm)
    assert 1 / osc.f_nom == pytest.approx(period, rel=0.002)


def test_example_wires_the_oscillator_into_the_clock_net(example):
    plan = example.plan
    osc = plan.oscillator
    assert plan.chip(osc.ref).role == "logic" and plan.bom["40106"] == 1
    clk = set(plan.nets["CLK"])
    counter = next(c for c in plan.counter.chips if c.clock_net == "CLK")
    assert {(osc.ref, osc.pins["output"]), (counter.ref, counter.clock_pin), ("R1", 1)} <= clk
    assert set(plan.nets["OSC_RC"]) == {(osc.ref, osc.pins["input"]), ("R1", 2), ("C1", 1)}
    assert ("C1", 2) in plan.nets["VSS"]
    assert "CLK" not in plan.external          # the clock is made on the board now


def test_example_json_and_wiring_carry_the_oscillator(example, tmp_path):
    from synth.exports.plan_json import plan_to_json
    from synth.exports.wiring import wiring_markdown

    doc = plan_to_json(example.plan)
    osc = doc["oscillator"]
    assert (osc["part"], osc["R"], osc["C"], osc["new_chip"]) == ("40106", 47e3, 2.2e-9, False)
    assert osc["f_min"] < osc["f_nom"] < osc["f_max"] and osc["tolerance"] == 0.1
    refs = {p["ref"] for w in doc["wires"] for p in w["pins"]}
    assert {"R1", "C1"} <= refs
    text = wiring_markdown(example.plan)
    assert "## Clock oscillator" in text
    assert "- [ ] U2 pin 6 (3Y) -> R1 end 1 (47 kΩ) [net CLK]" in text
    assert "- [ ] C1 end 2 (2.2 nF) -> VSS rail [net VSS]" in text


# ---------------------------------------------------------------- other sites

def test_spare_schmitt_nand_on_a_used_chip_is_taken_first(tmp_path):
    # The 4093's only logic job is one NAND; a spare section oscillates with its
    # other input at VDD (the catalog's 4093 thresholds are for that case, ST HCF4093B).
    spec = _write(tmp_path, "spec.yaml", SPEC)
    stock = _write(tmp_path, "bin.yaml", """\
        parts: {CD4040BE: 1, CD4093BE: 1}
        resistors: [10k, 47k, 100k]
        capacitors: [1n, 2n2, 10n]
        """)
    plan = make_plan(spec, stock, catalog=CATALOG).plan
    osc = plan.oscillator
    assert (osc.site.part, osc.site.kind, osc.opened) == ("4093", "nand", False)
    chip = plan.chip(osc.ref)
    assert chip.role == "logic" and plan.bom == {"4040": 1, "4093": 1}
    tied = osc.pins["tied_0"]
    assert chip.pins[tied] == "VDD" and chip.pins[osc.pins["input"]] == "OSC_RC"


def test_the_4060_counter_uses_its_own_stage(tmp_path):
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
    osc = plan.oscillator
    assert (osc.site.kind, osc.ref, osc.opened) == ("counter-stage", "U1", False)
    # HEF4060B: f = 1 / (2.3 Rt Ct); Rt = 10k, Ct = 2.2n -> 1 / 50.6 us = 19.763 kHz
    assert (osc.r, osc.c, osc.rs) == (10e3, 2.2e-9, 22e3)
    assert osc.f_nom == pytest.approx(19763, rel=1e-4)
    # Pins from the catalog: Rs to pin 11 (clock in), Rt to pin 10, Ct to pin 9.
    by_purpose = {p.ref: p for p in plan.passives}
    assert by_purpose["R1"].ends == ("CLK", "OSC_RC") and ("U1", 11) in plan.nets["CLK"]
    assert set(plan.nets["OSC_RT"]) == {("U1", 10), ("R2", 1)}
    assert set(plan.nets["OSC_CT"]) == {("U1", 9), ("C1", 1)}
    assert any("clock.tolerance not given: 10% assumed" in w for w in osc.warnings)


# ---------------------------------------------------------------- short bins (exit 3)

def test_no_schmitt_gate_is_short_and_says_what_to_add(tmp_path, capsys):
    spec = _write(tmp_path, "spec.yaml", SPEC)
    stock = _write(tmp_path, "bin.yaml", """\
        parts: {CD4040BE: 1, CD4011BE: 1}
        resistors: [47k]
        capacitors: [2n2]
        """)
    assert main(["plan", str(spec), "--bin", str(stock)]) == 3
    err = capsys.readouterr().err
    assert "needs a Schmitt-trigger gate" in err and "add one 74HC14 or 40106" in err
    assert "Traceback" not in err


def test_no_rc_pair_in_reach_is_short_and_names_the_value(tmp_path, capsys):
    spec = _write(tmp_path, "spec.yaml", SPEC)
    stock = _write(tmp_path, "bin.yaml", """\
        parts: {CD4040BE: 1, CD40106BE: 1, CD4011BE: 1}
        resistors: [10k]
        capacitors: [10n]
        """)
    # 10k with 10n: T = 0.1 ms * 0.812322 -> 12.31 kHz, far from the 3 kHz asked for.
    spec.write_text(textwrap.dedent(SPEC).replace("12 kHz", "3 kHz"), encoding="utf-8")
    assert main(["plan", str(spec), "--bin", str(stock)]) == 3
    err = capsys.readouterr().err
    # Needed C with 10k: 1 / (3 kHz * 0.812322 * 10k) = 41.0 nF
    assert "within 10% of 3 kHz" in err and "add a 41 nF capacitor (with 10 kΩ)" in err


def test_without_a_tolerance_the_closest_pair_is_built_with_a_warning(tmp_path, capsys):
    # the same bin as above, but the spec sets no clock.tolerance: the 10 % is our assumption,
    # so the plan is built with 10k and 10n (12.31 kHz, hand calculation above) and says so
    spec = _write(tmp_path, "spec.yaml", SPEC)
    spec.write_text(textwrap.dedent(SPEC).replace("12 kHz", "3 kHz").replace(", tolerance: 10 %", ""),
                    encoding="utf-8")
    stock = _write(tmp_path, "bin.yaml", """\
        parts: {CD4040BE: 1, CD40106BE: 1, CD4011BE: 1}
        resistors: [10k]
        capacitors: [10n]
        """)
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-", "--lacks", "0"]) == 0
    data = json.loads(capsys.readouterr().out)
    osc = data["oscillator"]
    assert osc["f_nom"] == pytest.approx(1 / (10e3 * 10e-9 * 0.812322), rel=1e-4)
    assert any("built with the closest pair anyway" in w and "41 nF" in w for w in osc["warnings"])


def test_plan_take_removes_the_newly_opened_oscillator_chip(tmp_path):
    stock = tmp_path / "bin.yaml"
    shutil.copy(data_path("bins", "adc_staircase.yaml"), stock)
    assert load_bin(stock, CATALOG).parts["40106"] == 1
    assert main(["plan", str(example_path("adc_staircase.yaml")), "--bin", str(stock), "--take"]) == 0
    after = load_bin(stock, CATALOG)
    assert after.parts.get("40106", 0) == 0
    assert after.parts.get("4011", 0) == 1          # two on hand, the plan took one
