"""Plan JSON against formats.md section 3, the wiring Markdown, and atomic writes.

The key list below is copied from the contract (shared/design/formats.md,
section 3); pin names in the expected wiring line are the datasheets'
([st4011] ST HCF4011B pin 1 = 1A, [isl4040] Intersil CD4040BMS pin 9 = Q1).
"""

from __future__ import annotations

import dataclasses
import json
import os
import re

import pytest

from synth.exports import atomic_write_text
from synth.exports.plan_json import FORMAT, plan_to_json, write_json
from synth.findings import CoincidentEdge, GlitchRecord
from synth.exports.wiring import driver_first, wire_line, wiring_markdown, write_wiring
from synth.netlist import wire_list
from test_packing import plan_for

# formats.md section 3: "Plan JSON, the keys other programs rely on"
CONTRACT_KEYS = {"format", "name", "clock_edge", "verilog_module", "signals", "switches", "bom",
                 "chips", "wires", "glitches", "coincident_edges", "warnings"}


@pytest.fixture
def plan(tmp_path):
    return plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4053BE": 1}, switch="row3")


def test_json_has_every_contract_key_with_its_shape(plan):
    doc = plan_to_json(plan)
    assert CONTRACT_KEYS <= set(doc)
    assert doc["format"] == FORMAT == "binsynth-plan/2"
    assert doc["verdict"] == "planned" and doc["short"] == []
    # the first line's words: "N logic chips: proven minimum" or "...: best found[, at least M needed]"
    assert re.fullmatch(r"\d+ logic chips?: (proven minimum.*|best found(, at least \d+ needed)?)",
                        doc["reason"]), doc["reason"]
    assert (doc["name"], doc["verilog_module"], doc["clock_edge"]) == ("led-scan", "led_scan", "falling")
    for sig in doc["signals"].values():
        assert sig["polarity"] in ("high", "low") and set(sig["source"]) == {"ref", "pin"}
    assert doc["switches"]["probe_in"]["ref"] == "U4"
    assert doc["switches"]["probe_in"]["when_control_high"] == "GND"   # row3 is delivered active low
    assert doc["bom"] == [{"part": "4011", "count": 2}, {"part": "4040", "count": 1},
                          {"part": "4053", "count": 1}]
    assert [(c["ref"], c["part"]) for c in doc["chips"]] == [("U1", "4040"), ("U2", "4011"),
                                                             ("U3", "4011"), ("U4", "4053")]
    assert all(set(w) == {"net", "pins"} and all(set(p) == {"ref", "pin"} for p in w["pins"])
               for w in doc["wires"])
    assert doc["glitches"] == [] and doc["coincident_edges"] == [] and isinstance(doc["warnings"], list)


def test_json_signal_sources_and_power_nets(plan):
    doc = plan_to_json(plan)
    # [st4011]: gate 4 output is pin 11 (row3), gate 1 output pin 3 (row7 on the second 4011)
    assert doc["signals"]["row3"]["source"] == {"ref": "U2", "pin": 11}
    assert doc["signals"]["row7"]["source"] == {"ref": "U3", "pin": 3}
    wires = {w["net"]: w["pins"] for w in doc["wires"]}
    assert {"ref": "U1", "pin": 10} in wires["CLK"]           # [isl4040] CLOCK pin 10
    assert {"ref": "U4", "pin": 7} in wires["VSS"]            # [ti4053q1] VEE pin 7, single supply
    assert {"ref": "U4", "pin": 16} in wires["VDD"]


def test_json_wires_hold_each_pin_once(plan):
    doc = plan_to_json(plan)
    pins = [(p["ref"], p["pin"]) for w in doc["wires"] for p in w["pins"]]
    assert len(pins) == len(set(pins))
    assert set(pins) == {(c.ref, pin) for c in plan.chips for pin in c.pins}


def test_json_round_trips(plan):
    doc = plan_to_json(plan)
    assert json.loads(json.dumps(doc)) == doc


def test_json_takes_glitch_records(plan):
    plan = dataclasses.replace(plan, glitches=[GlitchRecord(
        "row3", 4, 120.0, "count 3->4", "Q1 -> g1 -> row3", "static", "high", 12.5, "transient_state",
        width_max_ns=180.0, transient_state=3, models=("states", "transport_typ"))],
        coincident_edges=[CoincidentEdge(("pair", "row3"), 3, relation="independent", race=False)])
    doc = plan_to_json(plan)
    assert doc["glitches"] == [{"signal": "row3", "at_tick": 4, "width_ns": 120.0, "cause": "count 3->4",
                                "path": "Q1 -> g1 -> row3", "kind": "static", "wrong_level": "high",
                                "start_ns": 12.5, "width_max_ns": 180.0, "mechanism": "transient_state",
                                "transient_state": 3, "models": ["count_states", "typical_delays"]}]
    assert doc["glitches_by_model"]["count_states"] == [["row3", 4]]
    assert doc["coincident_edges"] == [{"signals": ["pair", "row3"], "at_tick": 3, "relation": "independent",
                                        "race": False}]


def test_json_extras(plan):
    doc = plan_to_json(plan)
    assert len(doc["decoupling"]) == 4 and doc["decoupling"][1]["across"] == [
        {"ref": "U2", "pin": 14}, {"ref": "U2", "pin": 7}]    # [st4011] VDD 14, VSS 7
    assert doc["supply_v"] == 5.0 and doc["counter"]["cycle"] == 8
    assert doc["counter"]["variables"][0] == {"index": 0, "net": "Q1", "ref": "U1", "pin": 9,
                                              "pin_name": "Q1", "weight": 1}


def test_write_json_replaces_the_file_whole(plan, tmp_path):
    out = tmp_path / "out" / "plan.json"
    out.parent.mkdir()
    out.write_text("old")
    write_json(plan, out)
    assert json.loads(out.read_text()) == plan_to_json(plan)
    assert os.listdir(out.parent) == ["plan.json"]


def test_atomic_write_keeps_the_old_file_when_replace_fails(tmp_path, monkeypatch):
    target = tmp_path / "wiring.md"
    target.write_text("old text")

    def refuse(src, dst):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(OSError):
        atomic_write_text(target, "new text")
    assert target.read_text() == "old text"
    assert os.listdir(tmp_path) == ["wiring.md"]


# ---------------------------------------------------------------- wiring Markdown

def test_wiring_has_one_checkbox_per_wire(plan):
    text = wiring_markdown(plan)
    wires = driver_first(wire_list(plan))
    assert text.count("- [ ] ") == len(wires)
    for wire in wires:
        assert wire_line(plan, wire) in text
    assert "- [ ] U1 pin 9 (Q1) -> U2 pin 1 (1A) [net Q1]" in text


@pytest.mark.parametrize("phrase", ["ESD", "floating", "supply limits", "mains", "licensed practice"])
def test_wiring_states_the_cautions(plan, phrase):
    assert phrase in wiring_markdown(plan)


def test_wiring_lists_parts_chips_in_order_and_nets(plan):
    text = wiring_markdown(plan)
    assert text.startswith("# Wiring list: led-scan\n")
    assert "| 4011 | 2 | quad 2-input NAND |" in text
    assert "| 100 nF ceramic capacitor | 4 |" in text
    heads = [text.index(f"### {ref}: ") for ref in ("U1", "U2", "U3", "U4")]
    assert heads == sorted(heads)
    u3 = text[heads[2]:heads[3]]
    # [st4011] pins in order inside a chip's section; pin 4 (2Y) of the second 4011 is unused
    assert [u3.index(f"U3 pin {p} (") for p in range(1, 15)] == sorted(u3.index(f"U3 pin {p} (") for p in range(1, 15))
    assert "- U3 pin 4 (2Y): open (unused output, left open)" in u3
    assert "## Wires by net" in text and "- **CLK** (1 pin): U1 pin 10 (CLOCK)" in text


def test_write_wiring(plan, tmp_path):
    path = write_wiring(plan, tmp_path / "wiring.md")
    assert path.read_text() == wiring_markdown(plan)


def test_an_output_file_in_a_missing_folder_is_bad_input_not_a_traceback(tmp_path, capsys):
    from synth.cli import main
    from synth.inventory import data_path, example_path

    target = tmp_path / "no" / "such" / "plan.json"
    code = main(["plan", str(example_path("stepper.yaml")), "--bin", str(data_path("bins", "stepper.yaml")),
                 "--json", str(target), "--lacks", "0"])
    err = capsys.readouterr().err
    assert code == 2 and "cannot write" in err and "Traceback" not in err
    assert not target.exists()


def test_an_output_path_that_is_a_folder_is_refused(tmp_path):
    from synth.errors import UsageError

    with pytest.raises(UsageError, match="it is a folder"):
        atomic_write_text(tmp_path, "x")
