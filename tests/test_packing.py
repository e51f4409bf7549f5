"""Packing checked against datasheet pin maps and truth tables.

Pin facts come from shared/reference/cmos-4000b.md and hc-74.md (bracketed
source keys there give the datasheet); each check names its source.  The
networks and counter plans are built by hand here, so packing is tested on
its own; the catalog is the shipped one (plus one made-up part, clearly
marked, in a tiny catalog written to tmp_path).
"""

from __future__ import annotations


import pytest

from synth.counter import CounterChip, CounterPlan, CounterVar, ResetDecode
from synth.errors import InternalError, ShortError
from synth.inventory import load_bin, load_catalog
from synth.netlist import BoardSignal, net_problems, simulate_nets
from synth.network import Gate, Network, SignalOut
from synth.packing import pack, spec_net, unit_logic_pins
from synth.spec import load_spec

CATALOG = load_catalog()

# [isl4040] Intersil CD4040BMS / [nxp4040] NXP HEF4040B: CLOCK 10, RESET 11,
# Q1 9, Q2 7, Q3 6, Q4 5, VSS 8, VDD 16; counts on the falling clock edge.
PINS_4040 = {"clock": 10, "reset": 11, "Q1": 9, "Q2": 7, "Q3": 6, "Q4": 5, "VSS": 8, "VDD": 16}


def counter_4040(nbits: int, cycle: int | None = None, reset: ResetDecode | None = None) -> CounterPlan:
    """A 4040 counting CLK, its first ``nbits`` stages used, tick t = count t."""
    cycle = cycle or 1 << nbits
    chip = CounterChip("U1", "4040", "A", "CLK", PINS_4040["clock"], "falling", PINS_4040["reset"],
                       reset.net if reset else "VSS", ties={} if reset else {PINS_4040["reset"]: "VSS"},
                       stages=tuple(range(1, nbits + 1)))
    variables = [CounterVar(i, f"Q{i + 1}", 0, "A", PINS_4040[f"Q{i + 1}"], f"Q{i + 1}", 1 << i)
                 for i in range(nbits)]
    return CounterPlan([chip], variables, cycle, tuple(range(cycle)), frozenset(), "falling",
                       False, reset)


def scan_network() -> Network:
    """Five NAND gates over Q1..Q3: row3 low at tick 3, row7 low at tick 7, pair high at 3 and 7."""
    gates = [Gate("g1", "4011", "nand", ("Q1", "Q2"), ("n1",)),
             Gate("g2", "4011", "nand", ("Q3", "Q3"), ("nq3",)),
             Gate("g3", "4011", "nand", ("n1", "n1"), ("pair",)),
             Gate("g4", "4011", "nand", ("pair", "nq3"), ("row3",)),
             Gate("g5", "4011", "nand", ("pair", "Q3"), ("row7",))]
    signals = {"row3": SignalOut("row3", "low"), "row7": SignalOut("row7", "low"),
               "pair": SignalOut("pair", "high")}
    return Network(gates, signals, ("Q1", "Q2", "Q3"))


SCAN_SIGNALS = """\
  row3: {high: [[3, 4]], polarity: free}
  row7: {high: [[7, 8]], polarity: low}
  pair: {high: [[3, 4]], every: 4}
"""


def spec_text(signals: str = SCAN_SIGNALS, cycle: int = 8, switch: str | None = None) -> str:
    text = f"name: led-scan\ncycle: {cycle}\nsignals:\n{signals}"
    if switch:
        text += f"switches:\n  probe_in: {{select: {switch}, on: ladder_out, off: GND}}\n"
    return text


def make_bin(tmp_path, parts: dict[str, int], catalog=CATALOG):
    path = tmp_path / "bin.yaml"
    path.write_text("parts:\n" + "".join(f"  {k}: {v}\n" for k, v in parts.items())
                    + "capacitors: [100n]\n")
    return load_bin(path, catalog, 5.0)


def plan_for(tmp_path, parts, network=None, switch=None, signals=SCAN_SIGNALS, counter=None,
             catalog=CATALOG, cycle=8):
    spec = load_spec(tmp_path / "spec.yaml", text=spec_text(signals, cycle, switch))
    stock = make_bin(tmp_path, parts, catalog)
    return pack(network or scan_network(), counter or counter_4040(3), spec, stock, catalog)


@pytest.fixture
def scan(tmp_path):
    return plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1})


# ---------------------------------------------------------------- logic chips

# [st4011] ST HCF4011B / [isl4011]: gate 1 = 1, 2 -> 3; gate 2 = 5, 6 -> 4;
# gate 3 = 8, 9 -> 10; gate 4 = 12, 13 -> 11.
@pytest.mark.parametrize("ref, gate, inputs, output", [
    ("U2", "g1", (1, 2), 3), ("U2", "g2", (5, 6), 4), ("U2", "g3", (8, 9), 10),
    ("U2", "g4", (12, 13), 11), ("U3", "g5", (1, 2), 3)])
def test_gates_take_the_datasheet_pins_in_order(scan, ref, gate, inputs, output):
    g = next(g for g in scan.network.gates if g.id == gate)
    chip = scan.chip(ref)
    assert gate in chip.units_used.values()
    assert tuple(chip.pins[p] for p in inputs) == g.inputs
    assert chip.pins[output] == g.output


def test_a_partly_used_chip_is_filled_before_a_new_one(scan):
    assert scan.chip("U2").units_used == {"A": "g1", "B": "g2", "C": "g3", "D": "g4"}
    assert scan.chip("U3").units_used == {"A": "g5"}
    assert scan.bom == {"4011": 2, "4040": 1}


def test_unused_inputs_are_tied_to_vss_and_unused_outputs_left_open(scan):
    # [st4011]: gates 2..4 of the second 4011 are unused: inputs 5 6 8 9 12 13, outputs 4 10 11.
    chip = scan.chip("U3")
    assert {p: chip.pins[p] for p in (5, 6, 8, 9, 12, 13)} == dict.fromkeys((5, 6, 8, 9, 12, 13), "VSS")
    assert not {4, 10, 11} & set(chip.pins)
    assert all(p in chip.notes for p in (4, 10, 11))


@pytest.mark.parametrize("ref, vdd, vss", [
    ("U1", 16, 8),   # [isl4040] CD4040B: VDD 16, VSS 8
    ("U2", 14, 7),   # [st4011] HCF4011B: VDD 14, VSS 7
    ("U3", 14, 7)])
def test_power_pins_are_on_the_rails(scan, ref, vdd, vss):
    chip = scan.chip(ref)
    assert (chip.pins[vdd], chip.pins[vss]) == ("VDD", "VSS")


def test_counter_clock_reset_and_outputs(scan):
    chip = scan.chip("U1")
    assert chip.pins[PINS_4040["clock"]] == "CLK"          # [isl4040] CLOCK pin 10
    assert chip.pins[PINS_4040["reset"]] == "VSS"          # [isl4040] RESET high clears: held low
    assert [chip.pins[PINS_4040[q]] for q in ("Q1", "Q2", "Q3")] == ["Q1", "Q2", "Q3"]
    assert scan.clock_edge == "falling"                     # [isl4040] negative transition


def test_no_pin_is_in_two_nets_and_no_input_floats(scan):
    endpoints = [p for pins in scan.nets.values() for p in pins]
    assert len(endpoints) == len(set(endpoints))
    assert net_problems(scan) == []


def test_one_decoupling_capacitor_per_chip(scan):
    # common practice: 100 nF ceramic across each chip's supply pins
    assert [ref for ref, _ in scan.decoupling] == [c.ref for c in scan.chips]
    note = dict(scan.decoupling)["U2"]
    assert "100 nF" in note and "pin 14 (VDD)" in note and "pin 7 (VSS)" in note


def test_the_logic_needs_more_chips_than_the_bin_has(tmp_path):
    with pytest.raises(ShortError, match="4011"):
        plan_for(tmp_path, {"CD4011BE": 1, "CD4040BE": 1})


def test_signal_sources_are_the_driving_pins(scan):
    # [st4011]: U2 gate 4 output is pin 11; U3 gate 1 output is pin 3.
    assert scan.signals["row3"] == BoardSignal("low", "row3", ("U2", 11))
    assert scan.signals["row7"].source == ("U3", 3)
    assert scan.signals["pair"].source == ("U2", 10)


# ---------------------------------------------------------------- switches

# [ti405xtt] TI CD405xB truth table: A=0 -> ax, A=1 -> ay; [nxp74hc4053]/[symlib]
# switch a: select A pin 11, common 14, x throw 12, y throw 13; INH 6, VEE 7.
TRUTH_4053_A = {False: 12, True: 13}


@pytest.mark.parametrize("select, when_high", [("row3", "GND"), ("pair", "ladder_out")])
def test_spdt_throws_follow_the_select_polarity(tmp_path, select, when_high):
    plan = plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4053BE": 1}, switch=select)
    sw = plan.switches["probe_in"]
    assert (sw.ref, sw.unit, sw.kind) == ("U4", "A", "spdt")
    assert sw.when_control_high == when_high
    chip = plan.chip("U4")
    assert chip.pins[11] == plan.signals[select].net and chip.pins[14] == "probe_in"
    asserted_level = plan.signals[select].polarity == "high"
    for t, levels in enumerate(simulate_nets(plan)):
        control = levels[chip.pins[11]]
        joined = chip.pins[TRUTH_4053_A[control]]
        want = "ladder_out" if (control == asserted_level) else "VSS"   # GND is VSS
        assert joined == want, f"tick {t}"


def test_4053_chip_ties_and_unused_sections(tmp_path):
    plan = plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4053BE": 1}, switch="row3")
    chip = plan.chip("U4")
    # [ti4053q1]: INH 6 low for plain use, VEE 7 to VSS on a single supply, VSS 8, VDD 16
    assert [chip.pins[p] for p in (6, 7, 8, 16)] == ["VSS", "VSS", "VSS", "VDD"]
    # [ti4053q1]/[nxp74hc4053]: sections b (B 10, com 15, 2, 1) and c (C 9, com 4, 5, 3) unused
    assert all(chip.pins[p] == "VSS" for p in (10, 15, 2, 1, 9, 4, 5, 3))
    assert net_problems(plan) == []


def spst_network(with_inverter: bool) -> Network:
    """The signal ``half`` is Q3 itself (ticks 4..7), active high."""
    gates = [Gate("g2", "4011", "nand", ("Q3", "Q3"), ("nq3",))] if with_inverter else []
    signals = {"half": SignalOut("Q3", "high")}
    if with_inverter:
        signals["low_half"] = SignalOut("nq3", "high")
    return Network(gates, signals, ("Q1", "Q2", "Q3"))


HALF = "  half: {high: [[4, 8]]}\n"
HALF_AND_LOW = HALF + "  low_half: {high: [[0, 4]]}\n"


def closed_sections(plan, levels):
    """(ref, unit) of each 4066 section whose control is high: on when HIGH ([ti4066pins], from memory)."""
    out = []
    for chip in plan.chips:
        if chip.part != "4066":
            continue
        for unit in plan.parts["4066"].units:
            f = unit.fields
            if unit.id in chip.units_used and levels[chip.pins[f["control"]]]:
                out.append(chip.pins[f["terminals"][1]])
    return out


def test_spst_pair_uses_the_networks_own_inverter(tmp_path):
    plan = plan_for(tmp_path, {"CD4011BE": 1, "CD4040BE": 1, "CD4066BE": 1}, spst_network(True),
                    switch="half", signals=HALF_AND_LOW)
    sw = plan.switches["probe_in"]
    assert sw.kind == "spst pair" and sw.complement_net == "nq3"
    assert len(plan.network.gates) == 1
    # [ti4066pins] CD4066B: switch A terminals 1-2, control 13; switch B 4-3, control 5
    chip = plan.chip("U3")
    assert (chip.pins[13], chip.pins[1], chip.pins[2]) == ("Q3", "probe_in", "ladder_out")
    assert (chip.pins[5], chip.pins[4], chip.pins[3]) == ("nq3", "probe_in", "VSS")
    for t, levels in enumerate(simulate_nets(plan)):
        assert closed_sections(plan, levels) == (["ladder_out"] if t >= 4 else ["VSS"]), f"tick {t}"


def test_spst_pair_fills_a_used_nand_chip_first(tmp_path):
    network = Network([Gate("g1", "4011", "nand", ("Q1", "Q2"), ("n1",))],
                      {"sel": SignalOut("n1", "low")}, ("Q1", "Q2", "Q3"))
    plan = plan_for(tmp_path, {"CD4011BE": 1, "CD4040BE": 1, "CD4066BE": 1}, network,
                    switch="sel", signals="  sel: {high: [[3, 4]], every: 4, polarity: free}\n")
    chip = plan.chip("U2")
    # [st4011]: gate 2 (5, 6 -> 4) becomes the inverter, both inputs on the select net
    assert chip.units_used["B"] == "inv_probe_in"
    assert (chip.pins[5], chip.pins[6]) == ("n1", "n1")
    assert plan.bom == {"4011": 1, "4040": 1, "4066": 1}
    for t, levels in enumerate(simulate_nets(plan)):
        assert closed_sections(plan, levels) == (["ladder_out"] if t % 4 == 3 else ["VSS"]), f"tick {t}"


def test_spst_pair_opens_an_inverter_chip(tmp_path):
    plan = plan_for(tmp_path, {"CD4040BE": 1, "CD4066BE": 1, "CD4069UBE": 1}, spst_network(False),
                    switch="half", signals=HALF)
    # [nxp4069] HEF4069UB: inverter 1 is input 1 -> output 2; refs: counter, logic, switch
    assert [(c.ref, c.part, c.role) for c in plan.chips] == [
        ("U1", "4040", "counter"), ("U2", "4069", "logic"), ("U3", "4066", "switch")]
    chip = plan.chip("U2")
    assert chip.pins[1] == "Q3" and chip.pins[2] == plan.switches["probe_in"].complement_net
    assert net_problems(plan) == []


def test_spst_pair_without_any_inverter_is_short(tmp_path):
    with pytest.raises(ShortError, match="complement"):
        plan_for(tmp_path, {"CD4040BE": 1, "CD4066BE": 1}, spst_network(False), switch="half",
                 signals=HALF)


# [ti4051pins] TI CD4051B: A 11, B 10, C 9; COM 3; CH0 13, CH1 14; INH 6.
# [ti405xtt]: CBA = n joins CHn to COM.
def test_mux_channel_when_no_switch_sections(tmp_path):
    plan = plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4051BE": 1}, switch="row3")
    chip = plan.chip("U4")
    sw = plan.switches["probe_in"]
    assert sw.kind == "mux channel" and sw.when_control_high == "GND"
    assert (chip.pins[11], chip.pins[10], chip.pins[9], chip.pins[6]) == ("row3", "VSS", "VSS", "VSS")
    assert chip.pins[3] == "probe_in"
    channels = {0: 13, 1: 14, 2: 15, 3: 12, 4: 1, 5: 5, 6: 2, 7: 4}
    assert all(chip.pins[channels[n]] == "VSS" for n in range(2, 8))
    for t, levels in enumerate(simulate_nets(plan)):
        code = levels[chip.pins[11]] + 2 * levels[chip.pins[10]] + 4 * levels[chip.pins[9]]
        assert chip.pins[channels[code]] == ("ladder_out" if t == 3 else "VSS"), f"tick {t}"
    assert any("analog mux" in w for w in plan.warnings)


def test_a_switch_without_any_switch_part_is_short(tmp_path):
    with pytest.raises(ShortError, match="probe_in"):
        plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1}, switch="row3")


def test_spdt_is_preferred_over_spst(tmp_path):
    plan = plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1, "CD4066BE": 1, "CD4053BE": 1},
                    switch="row3")
    assert plan.switches["probe_in"].part == "4053" and "4066" not in plan.bom


@pytest.mark.parametrize("name, net", [("GND", "VSS"), ("VDD", "VDD"), ("ladder_out", "ladder_out")])
def test_spec_nets_on_the_board(name, net):
    assert spec_net(name) == net   # formats.md section 3: GND is VSS


# ---------------------------------------------------------------- muxes and resets

# hc-74.md (NXP 74HCT157): S 1; 1I0 2, 1I1 3, 1Y 4; 2I0 5, 2I1 6, 2Y 7; E_n 15 (active LOW).
def test_digital_mux_units_share_the_select_and_hold_enable_active(tmp_path):
    gates = [Gate("m1", "74HC157", "mux", ("Q1", "Q2", "Q3"), ("y1",)),
             Gate("m2", "74HC157", "mux", ("Q2", "Q1", "Q3"), ("y2",)),
             Gate("m3", "74HC157", "mux", ("Q1", "Q2", "Q2"), ("y3",))]
    network = Network(gates, {"y1": SignalOut("y1", "high"), "y2": SignalOut("y2", "high"),
                              "y3": SignalOut("y3", "high")}, ("Q1", "Q2", "Q3"))
    # S LOW -> nI0, S HIGH -> nI1 (hc-74.md, NXP 74HCT157 function table)
    y1 = [(t >> 1) & 1 if t & 4 else t & 1 for t in range(8)]
    y2 = [t & 1 if t & 4 else (t >> 1) & 1 for t in range(8)]
    y3 = [(t >> 1) & 1 if t & 2 else t & 1 for t in range(8)]
    signals = "".join(f"  {name}: {{high: {[[t, t + 1] for t in range(8) if bits[t]]}}}\n"
                      for name, bits in (("y1", y1), ("y2", y2), ("y3", y3)))
    plan = plan_for(tmp_path, {"74HC157": 2, "CD4040BE": 1}, network, signals=signals)
    first, second = plan.chip("U2"), plan.chip("U3")
    assert first.units_used == {"A": "m1", "B": "m2"} and second.units_used == {"A": "m3"}
    assert (first.pins[2], first.pins[3], first.pins[1], first.pins[4]) == ("Q1", "Q2", "Q3", "y1")
    assert (second.pins[1], second.pins[15]) == ("Q2", "VSS")
    assert first.pins[15] == "VSS"
    assert net_problems(plan) == []


def test_the_reset_decode_drives_the_counter_reset(tmp_path):
    # cycle 6 on a 4040: state 6 (Q2 and Q3 high) is decoded into RESET (active high, [isl4040])
    reset = ResetDecode("_reset", frozenset({6}), frozenset({7}), 6, "high", False, "RST")
    counter = counter_4040(3, cycle=6, reset=reset)
    gates = [Gate("r1", "4011", "nand", ("Q2", "Q3"), ("r_n",)),
             Gate("r2", "4011", "nand", ("r_n", "r_n"), ("reset_decode",))]
    network = Network(gates, {"_reset": SignalOut("reset_decode", "high"), "half": SignalOut("Q3", "high")},
                      ("Q1", "Q2", "Q3"))
    plan = plan_for(tmp_path, {"CD4011BE": 1, "CD4040BE": 1}, network, signals="  half: {high: [[4, 6]]}\n",
                    counter=counter, cycle=6)
    assert plan.chip("U1").pins[PINS_4040["reset"]] == "reset_decode"
    assert set(plan.signals) == {"half"}
    assert net_problems(plan) == []


def test_a_gate_of_an_unknown_shape_is_an_internal_error(tmp_path):
    network = Network([Gate("g1", "4011", "nand", ("Q1", "Q2", "Q3"), ("x",))],
                      {"x": SignalOut("x", "low")}, ("Q1", "Q2", "Q3"))
    with pytest.raises(InternalError, match="no nand unit with 3 inputs"):
        plan_for(tmp_path, {"CD4011BE": 1, "CD4040BE": 1}, network, signals="  x: {high: [[7, 8]]}\n")


def test_pack_refuses_a_plan_that_misses_the_spec(tmp_path):
    # row7 delivered at tick 3 instead of 7: the self-check stops it before anything is printed
    network = scan_network()
    network.signals["row7"] = SignalOut("row3", "low")
    with pytest.raises(InternalError, match="row7"):
        plan_for(tmp_path, {"CD4011BE": 2, "CD4040BE": 1}, network)


# ---------------------------------------------------------------- catalog shapes

def test_unit_logic_pins_follow_the_catalog():
    # [st4011] gate 1: inputs 1, 2, output 3; [nxp4069] inverter 4: 9 -> 8
    assert unit_logic_pins(CATALOG.parts["4011"].units[0]) == ([1, 2], [3], {})
    assert unit_logic_pins(CATALOG.parts["4069"].units[3]) == ([9], [8], {})
    # hc-74.md 74HC157: data 2, 3 then select 1; output 4; E_n 15 held LOW (active)
    assert unit_logic_pins(CATALOG.parts["74HC157"].units[0]) == ([2, 3, 1], [4], {15: "VSS"})


TINY = """\
family: test
parts:
  X66:
    function: made-up dual switch that closes on a LOW control (test only, not a real part)
    category: switch
    package: {type: DIP, pins: 8}
    pins: {1: A1, 2: A2, 3: ACTL, 4: VSS, 5: BCTL, 6: B1, 7: B2, 8: VDD}
    power: {VDD: 8, VSS: 4}
    supply: {min: 3, max: 15}
    units:
      - {id: A, type: spst, control: 3, terminals: [1, 2], on_when: low}
      - {id: B, type: spst, control: 5, terminals: [6, 7], on_when: low}
    source: {pinout: "made up for this test"}
  "4040": {function: 12-stage ripple binary counter, category: counter, package: {type: DIP, pins: 16},
           pins: {1: Q12, 2: Q6, 3: Q5, 4: Q7, 5: Q4, 6: Q3, 7: Q2, 8: VSS, 9: Q1, 10: CLOCK, 11: RESET,
                  12: Q9, 13: Q8, 14: Q10, 15: Q11, 16: VDD},
           power: {VDD: 16, VSS: 8}, supply: {min: 3, max: 18},
           units: [{id: A, type: counter, mode: binary, modulus: 4096, synchronous: false,
                    clock: {pin: 10, edge: falling}, reset: {pin: 11, active: high},
                    stages: {1: 9, 2: 7, 3: 6, 4: 5, 5: 3, 6: 2, 7: 4, 8: 13, 9: 12, 10: 14, 11: 15, 12: 1}}],
           source: {pinout: "[isl4040]"}}
  "4069": {function: hex inverter, category: inverter, package: {type: DIP, pins: 14},
           pins: {1: 1A, 2: 1Y, 3: 2A, 4: 2Y, 5: 3A, 6: 3Y, 7: VSS, 8: 4Y, 9: 4A, 10: 5Y, 11: 5A, 12: 6Y,
                  13: 6A, 14: VDD},
           power: {VDD: 14, VSS: 7}, supply: {min: 3, max: 15},
           units: [{id: A, type: inverter, input: 1, output: 2}, {id: B, type: inverter, input: 3, output: 4},
                   {id: C, type: inverter, input: 5, output: 6}, {id: D, type: inverter, input: 9, output: 8},
                   {id: E, type: inverter, input: 11, output: 10}, {id: F, type: inverter, input: 13, output: 12}],
           source: {pinout: "[nxp4069]"}}
"""


def test_low_closing_spst_sections_get_swapped_controls(tmp_path):
    (tmp_path / "tiny.yaml").write_text(TINY)
    catalog = load_catalog([tmp_path / "tiny.yaml"])
    plan = plan_for(tmp_path, {"X66": 1, "4040": 1, "4069": 1}, spst_network(False), switch="half",
                    signals=HALF, catalog=catalog)
    chip = plan.chip("U3")
    complement = plan.switches["probe_in"].complement_net
    # section A joins `on` (ladder_out) and must close while half (Q3) is high: control = not Q3
    assert (chip.pins[3], chip.pins[2]) == (complement, "ladder_out")
    assert (chip.pins[5], chip.pins[7]) == ("Q3", "VSS")
    for t, levels in enumerate(simulate_nets(plan)):
        closed = [chip.pins[2]] if not levels[chip.pins[3]] else []
        closed += [chip.pins[7]] if not levels[chip.pins[5]] else []
        assert closed == (["ladder_out"] if t >= 4 else ["VSS"]), f"tick {t}"
