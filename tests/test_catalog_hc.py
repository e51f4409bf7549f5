"""Spot checks of the 74HC catalog against the datasheets it was written from.

The YAML is read directly with ``yaml.safe_load`` so these checks do not depend
on the loader.  Each expected value names the datasheet it was read from (the
page addresses are in shared/reference/hc-74.md).
"""

from pathlib import Path

import pytest
import yaml

CATALOG_FILE = Path(__file__).resolve().parent.parent / "inventory" / "catalog" / "hc74.yaml"
PARTS = yaml.safe_load(CATALOG_FILE.read_text())["parts"]


def _unit(part, unit_id):
    return next(u for u in PARTS[part]["units"] if u["id"] == unit_id)


PIN_NAMES = [
    # NXP 74HC02 data sheet: output-first pinout, nY on 1, 4, 10, 13.
    ("74HC02", {1: "1Y", 2: "1A", 3: "1B", 4: "2Y", 10: "3Y", 13: "4Y", 7: "GND", 14: "VCC"}),
    # NXP 74HC/HCT14 logic symbol: 1A 1 -> 1Y 2 ... 6A 13 -> 6Y 12.
    ("74HC14", {1: "1A", 2: "1Y", 9: "4A", 8: "4Y", 13: "6A", 12: "6Y"}),
    # Motorola MC74HC4040A pinout, renamed to NXP Q0..Q11 (Q1 -> Q0).
    ("74HC4040", {1: "Q11", 9: "Q0", 10: "CP", 11: "MR", 8: "GND", 16: "VCC"}),
    # NXP 74HC393D data sheet: nCP 1, 13; nMR 2, 12; 2Q0-2Q3 on 11, 10, 9, 8.
    ("74HC393", {1: "1CP", 2: "1MR", 3: "1Q0", 6: "1Q3", 11: "2Q0", 8: "2Q3", 12: "2MR", 13: "2CP"}),
    # Motorola MC74HC161A/163A pinout with NXP names (one data sheet for both parts).
    ("74HC161", {1: "MR_n", 2: "CP", 7: "CEP", 9: "PE_n", 10: "CET", 14: "Q0", 15: "TC"}),
    ("74HC163", {1: "MR_n", 2: "CP", 7: "CEP", 9: "PE_n", 10: "CET", 14: "Q0", 15: "TC"}),
    # NXP 74HC4053PW Rev 8 p.5 pin description.
    ("74HC4053", {6: "E_n", 7: "VEE", 8: "GND", 11: "S1", 10: "S2", 9: "S3", 14: "1Z", 15: "2Z", 4: "3Z"}),
    # Nexperia 74HC4066 Rev 10 logic symbol: control 1E is pin 13, not pin 1.
    ("74HC4066", {1: "1Y", 2: "1Z", 13: "1E", 5: "2E", 6: "3E", 12: "4E", 7: "GND"}),
    # Philips 74HC/HCT151 pin description.
    ("74HC151", {4: "I0", 12: "I7", 5: "Y", 6: "Y_n", 7: "E_n", 11: "S0", 9: "S2"}),
    # Philips 74HC/HCT138; circflow.com (secondary): A0-A2 on 1-3, enables on 4-6.
    ("74HC138", {1: "A0", 3: "A2", 4: "E1_n", 5: "E2_n", 6: "E3", 15: "Y0_n", 7: "Y7_n"}),
    # Philips 74HC/HCT4075 (the 4000B grouping, not the 74HC10 one).
    ("74HC4075", {3: "1A", 6: "1Y", 1: "2A", 8: "2C", 9: "2Y", 10: "3Y"}),
]


@pytest.mark.parametrize("part, names", PIN_NAMES)
def test_pin_names_match_datasheet(part, names):
    pins = PARTS[part]["pins"]
    assert {pin: pins[pin] for pin in names} == names


GATES = [
    # NXP 74HC02: gates (2,3 -> 1), (5,6 -> 4), (8,9 -> 10), (11,12 -> 13).
    ("74HC02", "nor", [([2, 3], 1), ([5, 6], 4), ([8, 9], 10), ([11, 12], 13)]),
    # NXP 74HC10: (1,2,13 -> 12), (3,4,5 -> 6), (9,10,11 -> 8).
    ("74HC10", "nand", [([1, 2, 13], 12), ([3, 4, 5], 6), ([9, 10, 11], 8)]),
    # Philips 74HC/HCT4075: (3,4,5 -> 6), (1,2,8 -> 9), (11,12,13 -> 10).
    ("74HC4075", "or", [([3, 4, 5], 6), ([1, 2, 8], 9), ([11, 12, 13], 10)]),
    # TI CD74HC7266 SCHS219 functional diagram: 4077-style layout, not the 74HC86 one.
    ("74HC7266", "xnor", [([1, 2], 3), ([5, 6], 4), ([8, 9], 10), ([12, 13], 11)]),
]


@pytest.mark.parametrize("part, op, wiring", GATES)
def test_gate_wiring_matches_datasheet(part, op, wiring):
    units = PARTS[part]["units"]
    assert all(u["op"] == op for u in units)
    assert sorted((sorted(u["inputs"]), u["output"]) for u in units) == \
        sorted((sorted(i), o) for i, o in wiring)


def test_4078_has_nor_and_or_outputs():
    # ST M74HC4078 pin description: X (NOR) on 13, Y (OR) on 1; inputs 2-5, 9-12.
    (unit,) = PARTS["74HC4078"]["units"]
    assert (unit["op"], unit["output"], unit["also"]) == ("nor", 13, {"op": "or", "output": 1})
    assert sorted(unit["inputs"]) == [2, 3, 4, 5, 9, 10, 11, 12]


COUNTERS = [
    # Philips 74HC4040 and Motorola MC74HC4040A: falling CP, MR high async, all 12 stages.
    ("74HC4040", "A", 10, "falling", (11, "high", False),
     {1: 9, 2: 7, 3: 6, 4: 5, 5: 3, 6: 2, 7: 4, 8: 13, 9: 12, 10: 14, 11: 15, 12: 1}),
    # NXP 74HC393 p.2: falling nCP, nMR active high, asynchronous; Q0 = divide by 2.
    ("74HC393", "A", 1, "falling", (2, "high", False), {1: 3, 2: 4, 3: 5, 4: 6}),
    ("74HC393", "B", 13, "falling", (12, "high", False), {1: 11, 2: 10, 3: 9, 4: 8}),
    # Nexperia 74HC161: rising CP, MR_n low clears asynchronously.
    ("74HC161", "A", 2, "rising", (1, "low", False), {1: 14, 2: 13, 3: 12, 4: 11}),
    # Motorola MC74HC161A/163A: the 163's reset is low and synchronous.
    ("74HC163", "A", 2, "rising", (1, "low", True), {1: 14, 2: 13, 3: 12, 4: 11}),
    # Philips 74HC4060: negative RS edge; Q3 (divide by 16) on 7; Q0-Q2 and Q10 not pinned.
    ("74HC4060", "A", 11, "falling", (12, "high", False),
     {4: 7, 5: 5, 6: 4, 7: 6, 8: 14, 9: 13, 10: 15, 12: 1, 13: 2, 14: 3}),
]


@pytest.mark.parametrize("part, unit_id, clock, edge, reset, stages", COUNTERS)
def test_counter_facts_match_datasheet(part, unit_id, clock, edge, reset, stages):
    unit = _unit(part, unit_id)
    assert (unit["clock"]["pin"], unit["clock"]["edge"]) == (clock, edge)
    r = unit["reset"]
    assert (r["pin"], r["active"], r["synchronous"]) == reset
    assert unit["stages"] == stages


@pytest.mark.parametrize("part", ["74HC161", "74HC163"])
def test_synchronous_counter_ties_for_plain_counting(part):
    # Philips 74HC161 description: PE_n HIGH disables load, CEP = CET = HIGH to count;
    # TC (pin 15) is the terminal count output.
    unit = _unit(part, "A")
    assert unit["ties"] == {9: "VDD", 7: "VDD", 10: "VDD", 3: "VSS", 4: "VSS", 5: "VSS", 6: "VSS"}
    assert unit["carry_out"] == 15


def test_4060_oscillator_pins():
    # Motorola MC74HC4060: Osc In 11, Osc Out 1 (inverted) 10, Osc Out 2 9.
    assert _unit("74HC4060", "A")["oscillator"] == {"input": 11, "output": 9, "output_inv": 10}


def test_4053_switch_sections():
    # NXP 74HC4053 Rev 8 table 3: Sn LOW joins nY0 to nZ, Sn HIGH joins nY1; E_n tied LOW.
    units = {u["id"]: (u["control"], u["common"], u["throws"]) for u in PARTS["74HC4053"]["units"]}
    assert units == {"A": (11, 14, {"low": 12, "high": 13}),
                     "B": (10, 15, {"low": 2, "high": 1}),
                     "C": (9, 4, {"low": 5, "high": 3})}
    assert PARTS["74HC4053"]["ties"] == {6: "VSS"}
    assert PARTS["74HC4053"]["power"] == {"VDD": 16, "VSS": 8, "VEE": 7}


def test_4066_switches_on_when_control_high():
    # Nexperia 74HC4066 Rev 10: nE HIGH joins nY and nZ.
    units = {u["id"]: (u["control"], sorted(u["terminals"]), u["on_when"])
             for u in PARTS["74HC4066"]["units"]}
    assert units == {"A": (13, [1, 2], "high"), "B": (5, [3, 4], "high"),
                     "C": (6, [8, 9], "high"), "D": (12, [10, 11], "high")}


def test_138_enables_and_outputs():
    # Philips 74HC/HCT138: outputs active LOW, enabled only when E1 = E2 = LOW and E3 = HIGH.
    (unit,) = PARTS["74HC138"]["units"]
    assert unit["active"] == "low"
    assert unit["selects"] == [1, 2, 3]
    assert unit["outputs"] == [15, 14, 13, 12, 11, 10, 9, 7]
    assert unit["enables"] == [{"pin": 4, "active": "low"}, {"pin": 5, "active": "low"},
                               {"pin": 6, "active": "high"}]


def test_151_mux_data_order():
    # Philips 74HC/HCT151: I0-I7 on 4,3,2,1,15,14,13,12; S0-S2 on 11,10,9; E_n active LOW.
    (unit,) = PARTS["74HC151"]["units"]
    assert unit["data"] == [4, 3, 2, 1, 15, 14, 13, 12]
    assert unit["selects"] == [11, 10, 9]
    assert (unit["output"], unit["output_inv"], unit["enable"]) == (5, 6, {"pin": 7, "active": "low"})


TIMING = [
    # (part, key, supply, field, value, source)
    ("74HC14", "tpd", 5, "max", 27),      # TI CD74HC14 SCHS129: 4.5 V / 50 pF, 25 C
    ("74HC14", "tpd", 6, "max", 23),      # TI CD74HC14 SCHS129: 6 V / 50 pF
    ("74HC86", "tpd", 5, "max", 24),      # NXP 74HC86 Rev 4 table 7, 4.5 V
    ("74HC132", "tpd", 2, "max", 125),    # NXP 74HC132 Rev 4 table 7, 2 V
    ("74HC30", "tpd", 5, "max", 26),      # Philips 74HC/HCT30 AC characteristics, 4.5 V
    ("74HC04", "tpd", 5, "max", 17),      # NXP 74HC04-Q100, 4.5 V / 50 pF, 25 C
    ("74HC138", "tpd", 5, "typ", 12),     # Philips 74HC/HCT138 quick reference, An->Yn
    ("74HC151", "tpd", 5, "typ", 19),     # Philips 74HC/HCT151 quick reference, Sn->Y
    ("74HC153", "tpd", 5, "max", 32),     # TI CD74HC153 switching specs, S->Y, 4.5 V
    ("74HC393", "clock_to_q", 5, "typ", 12),   # NXP 74HC393 quick reference, CP->Q0
    ("74HC393", "clock_to_q", 5, "max", 30),   # TI CD74HC393, CP->Q0, 4.5 V, 25 C
    ("74HC4040", "clock_to_q", 5, "max", 28),  # TI CD74HC4040, CP->Q1 (first stage), 4.5 V
    ("74HC4040", "stage", 5, "typ", 8),        # Philips 74HC4040 quick reference, Qn->Qn+1
    ("74HC4040", "fmax_mhz", 5, "min", 30),    # TI CD74HC4040 fMAX at 4.5 V
    ("74HC161", "clock_to_q", 5, "max", 22),   # ON MC74HC161A, CP->Q tPHL at 4.5 V
    ("74HC161", "reset", 5, "max", 20),        # ON MC74HC161A, Reset->Q at 4.5 V
    ("74HC163", "fmax_mhz", 5, "min", 30),     # ON MC74HC161A/163A, fmax at 4.5 V
    ("74HC4060", "clock_to_q", 5, "typ", 31),  # Philips 74HC4060 quick reference, RS->Q3
    ("74HC4066", "select", 5, "max", 38),      # NXP 74HC4066 Rev 7 table 9, toff at 4.5 V
]


@pytest.mark.parametrize("part, key, supply, field, value", TIMING)
def test_timing_matches_datasheet(part, key, supply, field, value):
    assert PARTS[part]["timing"][key][supply][field] == value


def test_schmitt_thresholds_at_4v5():
    # 74HC14: NXP 74HC1G14 (same HC Schmitt family) -40..85 C limits at 4.5 V.
    t14 = PARTS["74HC14"]["thresholds"][4.5]
    assert t14["vt_plus"] == {"min": 1.7, "typ": 2.36, "max": 3.15}
    assert t14["vt_minus"] == {"min": 0.9, "typ": 1.53, "max": 2.0}
    # 74HC132: NXP 74HC132 Rev 3 table 10 at 4.5 V.
    t132 = PARTS["74HC132"]["thresholds"][4.5]
    assert t132["vt_plus"] == {"min": 1.7, "typ": 2.38, "max": 3.15}
    assert t132["vt_minus"] == {"min": 0.9, "typ": 1.67, "max": 2.2}


@pytest.mark.parametrize("part, supply, field, ohms", [
    ("74HC4051", 4.5, "max", 180),   # Nexperia 74HC4051D p.7, RON(peak) 25 C, VCC 4.5 V, VEE 0
    ("74HC4051", 9, "typ", 70),      # same table, VCC 4.5 V, VEE -4.5 V
    ("74HC4053", 4.5, "typ", 80),    # Nexperia 74HC4053 Rev 9 features
    ("74HC4066", 4.5, "max", 85),    # TI SN74HC4066 SCLS325G, 25 C
])
def test_switch_on_resistance(part, supply, field, ohms):
    assert PARTS[part]["r_on"][supply][field] == ohms


@pytest.mark.parametrize("part, top", [
    ("74HC00", 6), ("74HC14", 6), ("74HC4040", 6),  # TI / NXP: 2-6 V logic range
    ("74HC4051", 10), ("74HC4053", 10),              # NXP 74HC4051/4053: VCC-GND up to 10 V
    ("74HC4066", 10),                                # TI CD74HC4066 (Harris): 2-10 V
])
def test_supply_ceiling(part, top):
    assert PARTS[part]["supply"] == {"min": 2, "max": top}


# Facts read in the "from memory" clean-up; each row: part, fact, value, source.
READ_PIN_NAMES = [
    # TI SN74LV4052A pin functions (SCLS429K), the same 4052 layout in the LV family;
    # NXP 74HC/HCT4052 Rev 06 states it is pin compatible with the HEF4052B.
    ("74HC4052", {1: "2Y0", 2: "2Y2", 3: "2Z", 4: "2Y3", 5: "2Y1", 6: "E_n", 9: "S1", 10: "S0",
                  11: "1Y3", 12: "1Y0", 13: "1Z", 14: "1Y1", 15: "1Y2", 16: "VCC"}),
    # TI CD4052B pin functions ([ti4051pins]): VEE on pin 7, VSS (GND) on pin 8.
    ("74HC4052", {7: "VEE", 8: "GND"}),
    # TI SN74LV4051A pin functions (JAJSUR3J), same 4051 layout: Y0-Y7 on 13, 14, 15, 12, 1, 5, 2, 4.
    ("74HC4051", {13: "Y0", 14: "Y1", 15: "Y2", 12: "Y3", 1: "Y4", 5: "Y5", 2: "Y6", 4: "Y7",
                  3: "Z", 6: "E_n", 11: "S0", 10: "S1", 9: "S2", 16: "VCC"}),
    # TI CD74HC138 SCHS147J pin functions (1-7) and TI SN74AHCT138 SCLS266N (8-16).
    ("74HC138", {2: "A1", 7: "Y7_n", 8: "GND", 9: "Y6_n", 12: "Y3_n", 14: "Y1_n", 16: "VCC"}),
    # TI SN74AHC74 / SN74LV2T74-EP pin tables (same '74 layout; no HC74 table read).
    ("74HC74", {1: "1RD_n", 2: "1D", 3: "1CP", 4: "1SD_n", 5: "1Q", 6: "1Q_n", 7: "GND",
                8: "2Q_n", 9: "2Q", 10: "2SD_n", 11: "2CP", 12: "2D", 13: "2RD_n", 14: "VCC"}),
]


@pytest.mark.parametrize("part, names", READ_PIN_NAMES)
def test_read_pin_names(part, names):
    pins = PARTS[part]["pins"]
    assert {pin: pins[pin] for pin in names} == names


READ_FACTS = [
    # (part, fact path, value) -- source beside each row.
    # TI SN74LV4052A pin table: port 1 (X) common 13, channels 0-3 on 12, 14, 15, 11; A (S0) 10, B (S1) 9.
    ("74HC4052", ("units", 0), {"id": "A", "type": "analog_mux", "selects": [10, 9], "common": 13,
                                "channels": [12, 14, 15, 11]}),
    # TI SN74LV4052A pin table: port 2 (Y) common 3, channels 0-3 on 1, 5, 2, 4.
    ("74HC4052", ("units", 1), {"id": "B", "type": "analog_mux", "selects": [10, 9], "common": 3,
                                "channels": [1, 5, 2, 4]}),
    # NXP 74HC/HCT4052 Rev 06 (2010): VCC to GND 2.0-10.0 V for the 74HC4052.
    ("74HC4052", ("supply",), {"min": 2, "max": 10}),
    # TI CD54HC4017 SGDS011 function table: MR HIGH regardless of CP and CE (asynchronous), CE active LOW.
    ("74HC4017", ("units", 0, "reset"), {"pin": 15, "active": "high", "synchronous": False}),
    ("74HC4017", ("units", 0, "enable"), {"pin": 13, "active": "low"}),
    # TI SN74HC4060 SCLS161D: a HIGH-to-LOW transition on CLKI (pin 11) increments the counter.
    ("74HC4060", ("units", 0, "clock", "edge"), "falling"),
]


@pytest.mark.parametrize("part, path, expected", READ_FACTS)
def test_read_facts(part, path, expected):
    node = PARTS[part]
    for step in path:
        node = node[step]
    assert node == expected
