"""Staircases from counter bits through resistor ladders (synth/staircase.py).

Sources: an R-2R ladder driven from VDD-switching bits gives VDD * code / 2^n
with output resistance R (stored page lahirunirmalx.github.io/resistornetwork,
"output voltage = Vref x (digital value) / 2^n", read; Horowitz & Hill, The
Art of Electronics, DAC section, from memory).  A binary-weighted network
into one node gives VDD * code / (2^n - 1) (Millman's theorem on the node,
from memory).  Every level is also checked against a nodal analysis solved
here with numpy from the plan's own resistors and nets, so the wiring and
the values are checked together.  The 4040's output resistance (1.14 kOhm
typical at 5 V) is the catalog's, from the National CD4008BC DC table.
"""

from __future__ import annotations

import json
import textwrap

import numpy as np
import pytest

from synth.cli import main
from synth.exports.plan_json import plan_to_json
from synth.exports.wiring import wiring_markdown
from synth.inventory import data_path, example_path, load_catalog
from synth.pipeline import make_plan

CATALOG = load_catalog()


@pytest.fixture(scope="module")
def example():
    return make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml"),
                     catalog=CATALOG)


def _write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def _nodal(plan, ladder, code: int | None, r_drive: float) -> dict[str, float]:
    """Node voltages from the plan's resistors: drivers are ideal sources behind r_drive.

    ``code`` None: every driver at 0 V and 1 A into the output (its resistance).
    """
    mine = [p for p in plan.passives if p.ref in ladder.passives]
    driver_nets = [net for _, _, net in ladder.drivers]
    nodes = sorted({n for p in mine for n in p.ends if n != "VSS"})
    index = {n: i for i, n in enumerate(nodes)}
    g = np.zeros((len(nodes), len(nodes)))
    i = np.zeros(len(nodes))
    for p in mine:
        a, b = p.ends
        for x, y in ((a, b), (b, a)):
            if x in index:
                g[index[x], index[x]] += 1 / p.value
                if y in index:
                    g[index[x], index[y]] -= 1 / p.value
    for bit, net in enumerate(driver_nets):
        g[index[net], index[net]] += 1 / r_drive
        if code is not None and (code >> bit) & 1:
            i[index[net]] += plan.supply / r_drive
    if code is None:
        i[index[ladder.name]] += 1.0
    return dict(zip(nodes, np.linalg.solve(g, i)))


# ---------------------------------------------------------------- the example's ladder

def test_example_builds_r_as_two_2r_in_parallel(example):
    lad = example.plan.ladders["ramp"]
    # The bin has 10k, 47k, 100k but no R / 2R pair: R = 100k || 100k = 50k, 2R = 100k.
    assert (lad.kind, lad.r, lad.r2) == ("r-2r", 50e3, 100e3)
    assert "two 100 kΩ in parallel" in lad.construction
    parts = [p for p in example.plan.passives if p.ref in lad.passives]
    assert len(parts) == 3 * 4 - 1 and {p.value for p in parts} == {100e3}
    assert [net for _, _, net in lad.drivers] == ["Q3", "Q4", "Q5", "Q6"]   # tick bits 2..5
    assert lad.r_out_driver == 1140                                        # catalog, 4040 at 5 V


def test_example_ideal_levels_are_vdd_code_over_16(example):
    lad = example.plan.ladders["ramp"]
    assert lad.ideal_levels == pytest.approx([5.0 * code / 16 for code in range(16)], abs=1e-12)
    assert lad.ideal_output_resistance == pytest.approx(50e3)               # = R


@pytest.mark.parametrize("code", range(16))
def test_example_levels_match_a_numpy_nodal_solve_of_the_wired_resistors(example, code):
    lad = example.plan.ladders["ramp"]
    volts = _nodal(example.plan, lad, code, lad.r_out_driver)
    assert lad.levels[code] == pytest.approx(volts["ramp"], abs=1e-9)


def test_example_output_resistance_with_the_drivers(example):
    lad = example.plan.ladders["ramp"]
    assert lad.output_resistance == pytest.approx(_nodal(example.plan, lad, None, lad.r_out_driver)["ramp"],
                                                  rel=1e-9)
    # Ideal drivers (0 ohm, taken as 1 mOhm here) bring it back to R.
    assert _nodal(example.plan, lad, None, 1e-3)["ramp"] == pytest.approx(50e3, rel=1e-6)


def test_example_linearity_figures_are_reproducible_and_bounded(example):
    lad = example.plan.ladders["ramp"]
    again = make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml"),
                      catalog=CATALOG).plan.ladders["ramp"]
    assert (again.monte.dnl_abs_p95, again.monte.inl_abs_max) == (lad.monte.dnl_abs_p95,
                                                                  lad.monte.inl_abs_max)
    assert lad.worst.method == "exhaustive" and lad.worst.corners == 2 ** 8
    assert lad.monte.dnl_abs_max <= abs(lad.worst.worst_dnl) + 1e-9
    assert lad.monte.inl_abs_max <= abs(lad.worst.worst_inl) + 1e-9


def test_example_wiring_list_has_every_ladder_resistor_with_both_ends(example):
    plan = example.plan
    lad = plan.ladders["ramp"]
    text = wiring_markdown(plan)
    doc = plan_to_json(plan)
    pins = [(p["ref"], p["pin"]) for w in doc["wires"] for p in w["pins"]]
    for ref in lad.passives:
        item = plan.passive(ref)
        assert f"### {ref}: 100 kΩ resistor, {item.purpose}" in text
        assert f"End 1 on net {item.ends[0]}, end 2 on net {item.ends[1]}." in text
        assert pins.count((ref, 1)) == 1 and pins.count((ref, 2)) == 1
    # counter Q pin -> leg resistor -> node: tick bit 2 drives R3 from U1 pin 6 (Q3)
    assert "- [ ] U1 pin 6 (Q3) -> R3 end 1 (100 kΩ) [net Q3]" in text
    assert doc["staircases"]["ramp"]["routed_by"] == ["adc_in"]
    json.dumps(doc)                                         # plain JSON all the way down


def test_example_switch_routes_the_ladder_net(example):
    plan = example.plan
    sw = plan.switches["adc_in"]
    assert sw.on_net == "ramp"
    assert any(pin_net == "ramp" for pin_net in plan.chip(sw.ref).pins.values())
    assert "ramp" not in plan.external                       # it stays on the board


# ---------------------------------------------------------------- other bins and specs

SPEC = """\
    cycle: 16
    signals:
      strobe: {high: "t % 4 == 1"}
    levels:
      ramp: {bits: [0, 1, 2], kind: KIND}
    """


@pytest.mark.parametrize("values, legs", [("[10k, 20k, 40k]", (40e3, 20e3, 10e3))])
def test_binary_weighted_ladder_from_values_on_hand(tmp_path, values, legs):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("KIND", "binary"))
    stock = _write(tmp_path, "bin.yaml", f"parts: {{CD4040BE: 1, CD4011BE: 1}}\nresistors: {values}\n")
    plan = make_plan(spec, stock, catalog=CATALOG).plan
    lad = plan.ladders["ramp"]
    assert lad.kind == "binary-weighted"
    assert tuple(plan.passive(ref).value for ref in lad.passives) == legs   # LSB leg is 4R
    assert lad.ideal_levels == pytest.approx([5.0 * code / 7 for code in range(8)])
    for code in range(8):
        assert lad.levels[code] == pytest.approx(_nodal(plan, lad, code, lad.r_out_driver)["ramp"])
    assert plan.external["ramp"].startswith("staircase ramp output")       # not routed: leaves the board


def test_binary_weighted_without_the_values_is_short(tmp_path, capsys):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("KIND", "binary"))
    stock = _write(tmp_path, "bin.yaml", "parts: {CD4040BE: 1, CD4011BE: 1}\nresistors: [10k, 20k]\n")
    assert main(["plan", str(spec), "--bin", str(stock)]) == 3
    err = capsys.readouterr().err
    assert "the bin lacks 40 kΩ" in err and "Traceback" not in err


def test_r2r_with_an_exact_pair_on_hand(tmp_path):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("KIND", "r2r"))
    stock = _write(tmp_path, "bin.yaml", "parts: {74HC4040: 1, 74HC00: 1}\nresistors: [10k, 20k]\n")
    plan = make_plan(spec, stock, catalog=CATALOG).plan
    lad = plan.ladders["ramp"]
    assert (lad.r, lad.r2, len(lad.passives)) == (10e3, 20e3, 2 * 3)     # n - 1 of R, n + 1 of 2R
    assert lad.r_out_driver == 45                       # catalog 74HC row at 4.5 V (typ, from memory)
    for code in range(8):
        assert lad.levels[code] == pytest.approx(_nodal(plan, lad, code, 45)["ramp"])


def test_bits_the_counter_does_not_bring_out_are_a_spec_error(tmp_path, capsys):
    # The 4060 pins out Q4..Q10 and Q12..Q14 only: tick bits 0..2 and 10 are hidden.
    spec = _write(tmp_path, "spec.yaml", """\
        cycle: 16384
        signals:
          half: {high: [[0, 8192]]}
        levels:
          ramp:
            bits: [3, 4, 10]
        """)
    stock = _write(tmp_path, "bin.yaml", "parts: {CD4060BE: 1, CD4011BE: 1}\nresistors: [10k]\n")
    assert main(["plan", str(spec), "--bin", str(stock)]) == 2
    err = capsys.readouterr().err
    assert f"{spec}:6: levels.ramp.bits: tick bit 10 is not brought out by the counter (4060)" in err
    assert "Traceback" not in err


@pytest.mark.parametrize("entry, line, message", [
    ("ramp: {bits: [0, 1], colour: red}", 5, "levels.ramp: unknown key 'colour'"),
    ("ramp: {bits: [0, 4]}", 5, "levels.ramp.bits: bit 4 is out of range for a cycle of 16 ticks"),
    ("ramp: {bits: [0], tolerance: 5 ohm}", 5, "levels.ramp.tolerance: expected a percentage"),
])
def test_bad_levels_exit_2_with_file_and_line(tmp_path, capsys, entry, line, message):
    spec = _write(tmp_path, "spec.yaml", f"""\
        cycle: 16
        signals:
          strobe: {{high: [1]}}
        levels:
          {entry}
        """)
    stock = data_path("bins", "adc_staircase.yaml")
    assert main(["plan", str(spec), "--bin", str(stock)]) == 2
    err = capsys.readouterr().err
    assert f"{spec}:{line}: {message}" in err.replace("binsynth: ", "") and "Traceback" not in err
