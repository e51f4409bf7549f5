"""The plan object: zero-delay simulation, the self-check, net checks, tables, wires.

Expected waveforms are written out by hand from the gate equations (NAND truth
table) and the 4040 count (tick t = count t, [isl4040]); pin names are the
datasheet's ([st4011] ST HCF4011B, [isl4040] Intersil CD4040BMS).
"""

from __future__ import annotations

import copy
import dataclasses
import re

import pytest

from synth.errors import InternalError
from synth.netlist import (VERILOG_KEYWORDS, check_nets, delivered_sets, net_problems, pin_table,
                           self_check, simulate_ticks, verilog_module_name, wire_list)
from synth.network import Network, SignalOut
from synth.spec import load_spec
from test_packing import counter_4040, plan_for, scan_network, spec_text


@pytest.fixture
def scan(tmp_path):
    return plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1})


@pytest.fixture
def switched(tmp_path):
    return plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4053BE": 1}, switch="row3")


# ---------------------------------------------------------------- simulation

def test_simulated_levels_per_tick(scan):
    T, F = True, False
    # row3 = NAND(Q1 Q2, not Q3): low only at count 3; row7 = NAND(Q1 Q2, Q3): low only at 7;
    # pair = Q1 AND Q2: high at 3 and 7.
    assert simulate_ticks(scan) == {
        "row3": (T, T, T, F, T, T, T, T),
        "row7": (T, T, T, T, T, T, T, F),
        "pair": (F, F, F, T, F, F, F, T),
    }
    assert delivered_sets(scan) == {"row3": {3}, "row7": {7}, "pair": {3, 7}}


def test_self_check_accepts_the_spec_and_the_exact_sets(scan, tmp_path):
    spec = load_spec(tmp_path / "spec.yaml", text=spec_text())
    self_check(scan, spec)
    self_check(scan, {"row3": {3}, "row7": {7}, "pair": {3, 7}})


def test_self_check_catches_a_broken_network(scan, tmp_path):
    spec = load_spec(tmp_path / "spec.yaml", text=spec_text())
    broken = [dataclasses.replace(g, op="and") if g.id == "g5" else g for g in scan.network.gates]
    scan = dataclasses.replace(scan, network=dataclasses.replace(scan.network, gates=broken))
    with pytest.raises(InternalError, match="row7 at tick 0"):
        self_check(scan, spec)


def test_self_check_catches_a_wrong_delivered_set(scan):
    with pytest.raises(InternalError, match="pair at tick 6"):
        self_check(scan, {"row3": {3}, "row7": {7}, "pair": {3, 6, 7}})


def q2_plan(tmp_path, signal: str):
    """The signal q2 is the counter's Q2 itself: asserted at ticks 2, 3, 6, 7."""
    network = Network([], {"q2": SignalOut("Q2", "high")}, ("Q1", "Q2", "Q3"))
    return plan_for(tmp_path, {"CD4040BE": 1}, network, signals=signal)


@pytest.mark.parametrize("signal", [
    "  q2: {high: [[2, 4]], every: 4}\n",
    "  q2: {high: [[2, 3]], every: 4, stretch: 1}\n",            # one extra tick after each window
    "  q2: {high: [[2, 3]], every: 4, dont_care: [[3, 4]]}\n",   # the extra tick does not matter
])
def test_self_check_honours_stretch_and_dont_care(tmp_path, signal):
    plan = q2_plan(tmp_path, signal)
    assert delivered_sets(plan) == {"q2": {2, 3, 6, 7}}


@pytest.mark.parametrize("signal, message", [
    ("  q2: {high: [[2, 3]], every: 4}\n", "q2 at tick 3: delivered asserted"),
    ("  q2: {high: [[2, 3]], every: 8, stretch: 1}\n", "q2 at tick 6: delivered asserted"),
    ("  q2: {high: [[2, 4]], every: 4, polarity: low}\n", "active low, the plan delivers it active high"),
])
def test_pack_refuses_a_plan_the_spec_does_not_allow(tmp_path, signal, message):
    with pytest.raises(InternalError, match=message):
        q2_plan(tmp_path, signal)


def test_self_check_enforces_clear_of(scan, tmp_path):
    # row3 (tick 3) and pair (ticks 3, 7) share the edges at boundaries 3 and 4
    text = spec_text("  row3: {high: [[3, 4]], dont_care: [[0, 1]], polarity: free, clear_of: {pair: 1}}\n"
                     "  row7: {high: [[7, 8]], polarity: low}\n  pair: {high: [[3, 4]], every: 4}\n")
    spec = load_spec(tmp_path / "spec.yaml", text=text)
    with pytest.raises(InternalError, match="0 ticks from an edge of pair"):
        self_check(scan, spec)


def test_self_check_follows_the_switch_throws(switched, tmp_path):
    spec = load_spec(tmp_path / "spec.yaml", text=spec_text(switch="row3"))
    self_check(switched, spec)
    sw = switched.switches["probe_in"]
    flipped = tuple(dataclasses.replace(p, closed_when=not p.closed_when) for p in sw.paths)
    switched = dataclasses.replace(switched, switches={"probe_in": dataclasses.replace(sw, paths=flipped)})
    with pytest.raises(InternalError, match="switch probe_in at tick 0: common joins ladder_out, wanted GND"):
        self_check(switched, spec)


# ---------------------------------------------------------------- net checks

def test_check_nets_passes_a_packed_plan(switched):
    assert net_problems(switched) == []
    check_nets(switched)


def _move(plan, ref, pin, net):
    for pins in plan.nets.values():
        if (ref, pin) in pins:
            pins.remove((ref, pin))
    plan.nets.setdefault(net, []).append((ref, pin))
    plan.chip(ref).pins[pin] = net


@pytest.mark.parametrize("mutate, message", [
    (lambda p: p.nets["Q1"].append(("U2", 5)), "U2 pin 5 is on net"),
    (lambda p: (p.nets["VSS"].remove(("U3", 12)), p.chip("U3").pins.pop(12)), "U3 pin 12 (4A) is an input left floating"),
    (lambda p: _move(p, "U3", 10, "VSS"), "U3 pin 10 is an output wired to the VSS rail"),
    (lambda p: _move(p, "U2", 14, "Q1"), "U2 pin 14 (VDD) must be on VDD, got Q1"),
    (lambda p: _move(p, "U3", 3, "row3"), "net row3 has 2 outputs"),
    (lambda p: _move(p, "U3", 12, "loose"), "net loose feeds inputs but nothing drives it"),
])
def test_check_nets_finds_each_fault(scan, mutate, message):
    plan = copy.deepcopy(scan)
    mutate(plan)
    assert any(message in problem for problem in net_problems(plan)), net_problems(plan)
    with pytest.raises(InternalError):
        check_nets(plan)


# ---------------------------------------------------------------- tables and wires

def test_pin_table_lists_every_pin_in_order(scan):
    rows = pin_table(scan, "U2")
    # [st4011] HCF4011B pin names
    assert [r.function for r in rows] == ["1A", "1B", "1Y", "2Y", "2A", "2B", "VSS",
                                          "3A", "3B", "3Y", "4Y", "4A", "4B", "VDD"]
    assert rows[0] == (1, "1A", "Q1", ("U1 pin 9 (Q1)",))     # [isl4040] Q1 is pin 9
    assert rows[6].goes_to == ("VSS rail",)
    assert rows[10].goes_to == ("output row3",)
    open_pins = [r.pin for r in pin_table(scan, "U3") if r.net == ""]
    assert open_pins == [4, 10, 11]


def test_wire_list_builds_each_net_once(switched):
    wires = wire_list(switched)
    expected = 0
    for net, pins in switched.nets.items():
        if net in ("VDD", "VSS"):
            expected += len(pins)                     # one wire from each pin to its rail
        else:
            expected += len(pins) - 1 + (net in switched.external)
    assert len(wires) == expected
    touched = {w.frm for w in wires} | {w.to for w in wires if not isinstance(w.to, str)}
    assert touched == {p for pins in switched.nets.values() for p in pins}
    q1 = [w for w in wires if w.net == "Q1"]
    assert [(w.frm, w.to) for w in q1] == [(("U2", 1), ("U1", 9))]   # the input goes to its driver


# ---------------------------------------------------------------- names

# IEEE 1364-2001 section 3.7.1 (from memory): a simple identifier is letters,
# digits, $ and _, not starting with a digit or $; keywords are reserved.
IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_$]*")


@pytest.mark.parametrize("name, expected", [
    ("sh-bench", "sh_bench"),                 # formats.md section 3 example
    ("stepper exerciser", "stepper_exerciser"),
    ("2-phase", "m_2_phase"),
    ("wire", "wire_"),
    ("Ultrasonic Burst/Gate", "Ultrasonic_Burst_Gate"),
    ("", "binsynth_plan"),
])
def test_verilog_module_names(name, expected):
    result = verilog_module_name(name)
    assert result == expected
    assert IDENTIFIER.fullmatch(result) and result not in VERILOG_KEYWORDS


def test_plan_records_the_counter_and_network(scan):
    assert scan.counter.cycle == 8 and len(scan.network.gates) == 5
    assert scan.network.signals == scan_network().signals
    assert counter_4040(3).vars[0].pin == 9


# ---------------------------------------------------------------- resistors and capacitors

def _with_pullup(plan, ends=("VDD", "Q1"), listed=True):
    """A 100k from VDD to the counter's Q1 net (a made-up part, only for the checks)."""
    from synth.netlist import Passive
    from synth.packing import refresh

    plan = copy.deepcopy(plan)
    plan.passives.append(Passive("R1", "resistor", 100e3, ends, "test"))
    stock = type("Stock", (), {"capacitors": [], "path": "bin.yaml"})()
    plan = refresh(plan, stock)
    if not listed:
        plan.passives.clear()
    return plan


def test_passive_ends_join_the_nets_and_pass_the_check(scan):
    plan = _with_pullup(scan)
    assert ("R1", 1) in plan.nets["VDD"] and ("R1", 2) in plan.nets["Q1"]
    assert net_problems(plan) == []
    ends = [w for w in wire_list(plan) if w.frm[0] == "R1" or w.to == ("R1", 2)]
    assert {w.net for w in ends} == {"VDD", "Q1"}


def test_a_resistor_not_in_the_record_or_on_one_net_is_a_problem(scan):
    assert any("names R1, which is not a part of the plan" in p
               for p in net_problems(_with_pullup(scan, listed=False)))
    assert any("has both ends on net Q1" in p for p in net_problems(_with_pullup(scan, ("Q1", "Q1"))))
