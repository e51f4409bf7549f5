"""The power-on reset (synth/poweron.py): RC into a Schmitt input onto the counter reset.

Sources: the pulse is the RC time constant law t = R C ln((V_final - V_start)
/ (V_final - V_threshold)) (common practice; any circuits handbook), worked
by hand below with the catalog's typical thresholds (UTC CD40106 at 5 V:
VT+ 2.9 V, VT- 1.9 V); ngspice (``ngspice -b``) simulates the deck's R, C
and Schmitt switches from a supply ramping up at time 0 and must give the
same pulse within the 0.5 % + 1 us the check states.  Reset polarities: 4040
RESET active high (Philips HEF4040B), 74HC161 MR active low (catalog).
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
import textwrap

import pytest

from synth.cli import main
from synth.exports.spice import measure_lines, plan_to_spice, spice_checks
from synth.inventory import load_catalog
from synth.pipeline import make_plan

CATALOG = load_catalog()

needs_ngspice = pytest.mark.skipif(
    shutil.which("ngspice") is None,
    reason="ngspice is not installed (Debian package ngspice; .ci/run installs it)")


def _write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


SPEC = """\
    name: por-bench
    supply: 5 V
    cycle: 16
    power_on_reset: WIDTH
    signals:
      strobe: {high: "t % 4 == 1"}
    """


def _plan(tmp_path, bin_text: str, width: str = "10 ms"):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("WIDTH", width))
    stock = _write(tmp_path, "bin.yaml", bin_text)
    return make_plan(spec, stock, catalog=CATALOG).plan


HIGH_BIN = """\
    parts: {CD4040BE: 1, CD4081BE: 1, CD40106BE: 1}
    resistors: [10k, 47k, 100k]
    capacitors: [10n, 100n]
    """

LOW_BIN = """\
    parts: {74HC161: 1, 74HC08: 1, 74HC14: 1}
    resistors: [10k, 47k, 100k]
    capacitors: [10n, 100n]
    """


def _measure(tmp_path, plan) -> tuple[dict[str, float], list]:
    checks = spice_checks(plan, CATALOG)
    deck = plan_to_spice(plan, CATALOG)
    path = tmp_path / "deck.cir"
    path.write_text(deck.rsplit(".end", 1)[0] + "\n".join(measure_lines(checks)) + "\n.end\n")
    run = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stdout[-2000:]
    names = {c.name for c in checks}
    values = {}
    for line in run.stdout.splitlines():
        match = re.match(r"\s*(\w+)\s*=\s*([-+0-9.eE]+)", line)
        if match and match.group(1).lower() in names:
            values[match.group(1).lower()] = float(match.group(2))
    return values, checks


def test_active_high_reset_charges_from_zero(tmp_path):
    plan = _plan(tmp_path, HIGH_BIN)
    por = plan.power_on_reset
    assert (por.part, por.active, por.r, por.c) == ("40106", "high", 100e3, 100e-9)
    # t = 100k * 100n * ln(5 / (5 - 2.9)) = 10 ms * 0.867501 = 8.675 ms
    assert por.width_s[1] == pytest.approx(10e-3 * math.log(5 / 2.1), rel=1e-9)
    # VT+ from 2.2 to 3.6 V: ln(5 / 2.8) and ln(5 / 1.4)
    assert por.width_s[0] == pytest.approx(10e-3 * math.log(5 / 2.8), rel=1e-9)
    assert por.width_s[2] == pytest.approx(10e-3 * math.log(5 / 1.4), rel=1e-9)
    counter = plan.counter.chips[0]
    assert plan.chip(counter.ref).pins[counter.reset_pin] == "POR"
    assert set(plan.nets["POR"]) == {(counter.ref, counter.reset_pin), (por.ref, por.pins["output"])}
    r, c = (plan.passive(ref) for ref in por.passives)
    assert r.ends == ("VDD", "POR_RC") and c.ends == ("POR_RC", "VSS")
    assert not any(x.startswith("At power-up the counter starts at an arbitrary") for x in plan.cautions)
    assert any("power-on reset holds the counter at tick 0" in x for x in plan.cautions)


def test_active_low_reset_discharges_from_vdd(tmp_path):
    plan = _plan(tmp_path, LOW_BIN, "2 ms")
    por = plan.power_on_reset
    assert por.active == "low" and por.part == "74HC14"
    r, c = (plan.passive(ref) for ref in por.passives)
    assert c.ends == ("VDD", "POR_RC") and r.ends == ("POR_RC", "VSS")
    vtm = por.thresholds["vt_minus"]["typ"]
    assert por.width_s[1] == pytest.approx(r.value * c.value * math.log(5 / vtm), rel=1e-9)


@needs_ngspice
@pytest.mark.parametrize("bin_text, width", [(HIGH_BIN, "10 ms"), (LOW_BIN, "2 ms")])
def test_ngspice_agrees_with_the_reset_pulse(tmp_path, bin_text, width):
    plan = _plan(tmp_path, bin_text, width)
    values, checks = _measure(tmp_path, plan)
    check = next(c for c in checks if c.name == "por_width")
    assert check.expected == plan.power_on_reset.width_s[1]
    assert abs(values["por_width"] - check.expected) <= check.tolerance, (values, check.why)


def test_json_and_plan_text_carry_it(tmp_path, capsys):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("WIDTH", "true"))
    stock = _write(tmp_path, "bin.yaml", HIGH_BIN)
    out = tmp_path / "plan.json"
    assert main(["plan", str(spec), "--bin", str(stock), "--json", str(out), "--lacks", "0"]) == 0
    doc = json.loads(out.read_text())
    assert doc["power_on_reset"]["active"] == "high" and doc["power_on_reset"]["wanted_s"] == 10e-3
    assert "power-on reset: Schmitt 40106" in capsys.readouterr().out


def test_a_reset_pin_the_decode_drives_is_refused(tmp_path, capsys):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("cycle: 16", "cycle: 12").replace("WIDTH", "true"))
    stock = _write(tmp_path, "bin.yaml", HIGH_BIN)
    assert main(["plan", str(spec), "--bin", str(stock), "--lacks", "0"]) == 2
    err = capsys.readouterr().err
    assert "power_on_reset" in err and "already driven by the decode" in err


@pytest.mark.parametrize("value, words", [("'soon'", "expected true or a time"),
                                          ("'100 s'", "between 1 us and 10 s"), ("3", "got")])
def test_bad_values_are_exit_2(tmp_path, capsys, value, words):
    spec = _write(tmp_path, "spec.yaml", SPEC.replace("WIDTH", value))
    stock = _write(tmp_path, "bin.yaml", HIGH_BIN)
    assert main(["plan", str(spec), "--bin", str(stock), "--lacks", "0"]) == 2
    err = capsys.readouterr().err
    assert "power_on_reset" in err and words in err and "Traceback" not in err
