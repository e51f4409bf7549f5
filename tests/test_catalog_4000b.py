"""Spot checks of the 4000B catalog against the datasheets it was built from.

The family file is read with ``yaml.safe_load`` directly, so these checks hold
whatever the loader does.  Each row names its datasheet: a key of
shared/reference/cmos-4000b.md (whose source index gives the page) and the
vendor, or the stored datasheet page read for a fact the reference lacks.
"""

from pathlib import Path

import pytest
import yaml

CATALOG_FILE = Path(__file__).resolve().parent.parent / "inventory" / "catalog" / "cmos4000b.yaml"
PARTS = yaml.safe_load(CATALOG_FILE.read_text())["parts"]


def unit(part: str, unit_id: str) -> dict:
    """The unit with this id in a part's entry."""
    return next(u for u in PARTS[part]["units"] if u["id"] == unit_id)


def dig(node, path):
    """Follow a path of keys and indexes into the parsed YAML."""
    for step in path:
        node = node[step]
    return node


PINOUT_ROWS = [
    # [isl4040] Intersil CD4040BMS / [nxp4040] NXP HEF4040B: Q1 pin 9 ... Q12 pin 1
    ("4040", ("units", 0, "stages", 1), 9),
    ("4040", ("units", 0, "stages", 12), 1),
    ("4040", ("units", 0, "clock"), {"pin": 10, "edge": "falling", "schmitt": True}),
    ("4040", ("units", 0, "reset", "pin"), 11),
    # [isl4040] Intersil CD4020BMS: Q1 pin 9, Q4 pin 7, Q14 pin 3
    ("4020", ("units", 0, "stages", 1), 9),
    ("4020", ("units", 0, "stages", 4), 7),
    ("4020", ("units", 0, "stages", 14), 3),
    # [isl4040] Intersil CD4024BMS: clock 1, reset 2, Q1 12, Q7 3
    ("4024", ("units", 0, "clock", "pin"), 1),
    ("4024", ("units", 0, "stages", 1), 12),
    ("4024", ("units", 0, "stages", 7), 3),
    ("4024", ("nc",), [8, 10, 13]),
    # [tihc4060] TI SN74HC4060 / [mothc4060] Motorola MC74HC4060A (pin-compatible):
    # Q4 pin 7, Q14 pin 3, osc input 11, Osc Out 2 pin 9, Osc Out 1 (inverted) pin 10
    ("4060", ("units", 0, "stages", 4), 7),
    ("4060", ("units", 0, "stages", 14), 3),
    ("4060", ("units", 0, "oscillator"), {"input": 11, "output": 9, "output_inv": 10}),
    ("4060", ("units", 0, "reset", "pin"), 12),
    # [nxp4520] Nexperia HEF4520B: CLOCK A 1, ENABLE A 2, Q1A 3, RESET A 7, Q4B 14
    ("4520", ("units", 0, "clock"), {"pin": 1, "edge": "rising"}),
    ("4520", ("units", 0, "enable"), {"pin": 2, "active": "high"}),
    ("4520", ("units", 0, "reset", "pin"), 7),
    ("4520", ("units", 1, "stages", 4), 14),
    # [bp4017] TI CD4017B pin list (via breadpunk), [symlib]: Q0 pin 3, Q9 pin 11
    ("4017", ("units", 0, "decoded", 0), 3),
    ("4017", ("units", 0, "decoded", 5), 1),
    ("4017", ("units", 0, "decoded", 9), 11),
    ("4017", ("units", 0, "carry"), 12),
    ("4017", ("units", 0, "enable"), {"pin": 13, "active": "low"}),
    ("4017", ("units", 0, "clock", "pin"), 14),
    # ST HCF4022B pin description (manualmachine.com/st/hcf4022b): outputs 0-7 on
    # 2, 1, 3, 7, 11, 4, 5, 10; NC 6 and 9
    ("4022", ("units", 0, "decoded"), {0: 2, 1: 1, 2: 3, 3: 7, 4: 11, 5: 4, 6: 5, 7: 10}),
    ("4022", ("nc",), [6, 9]),
    # [nxp4013] Nexperia HEF4013B: 1Q 1, 1Q bar 2, 1CP 3, 1CD 4, 1D 5, 1SD 6
    # Philips HEF4013B (Jan 1995) / Nexperia HEF4013B Rev. 12: "Schmitt-trigger action in
    # the clock input makes the circuit highly tolerant to slower clock rise and fall times"
    ("4013", ("units", 0, "clock"), {"pin": 3, "edge": "rising", "schmitt": True}),
    ("4013", ("units", 1, "clock"), {"pin": 11, "edge": "rising", "schmitt": True}),
    ("4013", ("units", 0, "d"), 5),
    ("4013", ("units", 0, "reset"), {"pin": 4, "active": "high"}),
    ("4013", ("units", 1, "q"), 13),
    # [ti4049pins] TI CD4049UB: VCC pin 1, VSS pin 8, NC 13 and 16, 1A 3 -> 1Y 2
    ("4049", ("power",), {"VDD": 1, "VSS": 8}),
    ("4049", ("nc",), [13, 16]),
    ("4049", ("units", 0, "input"), 3),
    ("4049", ("units", 0, "output"), 2),
    # [ti40106] TI CD40106B: fourth inverter 9 -> 8
    ("40106", ("units", 3, "input"), 9),
    ("40106", ("units", 3, "output"), 8),
    # [nxp4093] NXP HEF4093B: gate 4 inputs 12, 13 -> 11
    ("4093", ("units", 3, "inputs"), [12, 13]),
    ("4093", ("units", 3, "output"), 11),
    # [nxp4073] Nexperia HEF4073B: 3, 4, 5 -> 6 (not the hobby-page grouping 1, 2, 5)
    ("4073", ("units", 0, "inputs"), [3, 4, 5]),
    ("4073", ("units", 1, "inputs"), [1, 2, 8]),
    # [doctronics4025], [symlib]: 4025 VSS on pin 7 (a distributor page's pin 8 is wrong)
    ("4025", ("power", "VSS"), 7),
    # [c101-4068] TI/RCA CD4068B: NAND on 13, AND on pin 1
    ("4068", ("units", 0, "output"), 13),
    ("4068", ("units", 0, "also"), {"op": "and", "output": 1}),
    # [st4078] ST HCF4078B: NOR on 13, OR on pin 1
    ("4078", ("units", 0, "also"), {"op": "or", "output": 1}),
    # [nxp4028] Nexperia HEF4028B: A0..A3 on 10, 13, 12, 11; Y0..Y9
    ("4028", ("units", 0, "selects"), [10, 13, 12, 11]),
    ("4028", ("units", 0, "outputs"), [3, 14, 2, 15, 1, 6, 7, 4, 9, 5]),
    # [ti4051pins] TI CD4051B: A 11 (lsb), B 10, C 9; CH0 13, CH7 4; COM 3
    ("4051", ("units", 0, "selects"), [11, 10, 9]),
    ("4051", ("units", 0, "channels"), [13, 14, 15, 12, 1, 5, 2, 4]),
    ("4051", ("power",), {"VDD": 16, "VSS": 8, "VEE": 7}),
    # [ti4051pins] TI CD4052B: Y common 3, Y0 1, Y3 4, shared selects A 10, B 9
    ("4052", ("units", 1, "common"), 3),
    ("4052", ("units", 1, "channels"), [1, 5, 2, 4]),
    ("4052", ("shared",), [9, 10]),
    # [ti4066pins] TI CD4066B: switch A 1-2 on control 13, D 11-10 on control 12
    ("4066", ("units", 0, "control"), 13),
    ("4066", ("units", 0, "terminals"), [1, 2]),
    ("4066", ("units", 3, "control"), 12),
    ("4066", ("units", 3, "terminals"), [11, 10]),
]


@pytest.mark.parametrize("part, path, expected", PINOUT_ROWS)
def test_pinout_matches_datasheet(part, path, expected):
    assert dig(PARTS[part], path) == expected


# [nxp74hc4053] NXP 74HC4053 (pin-compatible), [ti4053q1] TI CD4053B-Q1, [symlib]:
# section, control, common, throw at control low (x), throw at control high (y)
SWITCH_4053_ROWS = [
    ("A", 11, 14, 12, 13),
    ("B", 10, 15, 2, 1),
    ("C", 9, 4, 5, 3),
]


@pytest.mark.parametrize("section, control, common, low, high", SWITCH_4053_ROWS)
def test_4053_sections(section, control, common, low, high):
    sw = unit("4053", section)
    assert (sw["type"], sw["control"], sw["common"]) == ("spdt", control, common)
    assert sw["throws"] == {"low": low, "high": high}


def test_4053_inhibit_is_tied_low():
    # [ti4053q1] TI CD4053B-Q1: INH pin 6 (high turns every switch off), VEE pin 7
    assert PARTS["4053"]["ties"] == {6: "VSS"}
    assert PARTS["4053"]["power"]["VEE"] == 7


def test_4020_has_no_q2_q3_and_4060_no_q1_q3_q11():
    # [isl4040] Intersil CD4020BMS: Q2, Q3 internal only
    assert set(unit("4020", "A")["stages"]) == {1} | set(range(4, 15))
    # [on4060] ON MC14060B, [phil4060] Philips HEF4060B: Q4-Q10 and Q12-Q14 pinned out
    assert set(unit("4060", "A")["stages"]) == set(range(4, 11)) | {12, 13, 14}


TIMING_ROWS = [
    # [phil4040] Philips HEF4040B CP -> Q1 tPHL, 5 V
    ("4040", "clock_to_q", 5, {"typ": 105, "max": 210}),
    # [phil4020] Philips HEF4020B On -> On+1 tPHL, 10 V
    ("4020", "stage", 10, {"typ": 30, "max": 60}),
    # [phil4020] Philips HEF4020B fmax, 15 V
    ("4020", "fmax_mhz", 15, {"min": 18, "typ": 35}),
    # [phil4024] Philips HEF4024B CP -> O0 tPLH (the larger), 5 V
    ("4024", "clock_to_q", 5, {"typ": 105, "max": 210}),
    # [phil4520] Philips HEF4520B CP0/CP1 -> On, 10 V; MR -> On, 5 V
    ("4520", "clock_to_q", 10, {"typ": 50, "max": 100}),
    ("4520", "reset", 5, {"typ": 75, "max": 150}),
    # Philips HEF4017B AC table (manualmachine.com hef4017bpb): CP -> O5-9 tPHL, 5 V
    ("4017", "clock_to_q", 5, {"typ": 145, "max": 290}),
    # [phil4011] Philips HEF4011B, 5 V
    ("4011", "tpd", 5, {"typ": 55, "max": 110}),
    # [ti4069] TI CD4069UB, 15 V
    ("4069", "tpd", 15, {"typ": 25, "max": 50}),
    # [ti4093q1] TI CD4093B-Q1, 10 V
    ("4093", "tpd", 10, {"typ": 90, "max": 180}),
    # [phil40106ac] Philips HEF40106B tPHL (the larger), 5 V
    ("40106", "tpd", 5, {"typ": 90, "max": 180}),
    # [phil4053ac] Philips HEF4053B Sn -> Vos tPLH (the larger), 5 V
    ("4053", "select", 5, {"typ": 275, "max": 555}),
    # TI CD4066B switching characteristics (ti.com SCHS051J): signal in -> out, 5 V
    ("4066", "tpd", 5, {"typ": 20, "max": 40}),
]


@pytest.mark.parametrize("part, key, volts, expected", TIMING_ROWS)
def test_timing_matches_datasheet(part, key, volts, expected):
    assert PARTS[part]["timing"][key][volts] == expected


THRESHOLD_ROWS = [
    # [utc40106] RCA/TI CD40106B limits as printed by UTC: VT+ and VT- min/typ/max
    ("40106", 5, "vt_plus", {"min": 2.2, "typ": 2.9, "max": 3.6}),
    ("40106", 5, "vt_minus", {"min": 0.9, "typ": 1.9, "max": 2.8}),
    ("40106", 15, "vt_plus", {"min": 6.6, "typ": 8.8, "max": 10.8}),
    # [st4093] ST HCF4093B (RCA/TI limits), one input switching
    ("4093", 10, "vt_plus", {"min": 4.6, "typ": 5.9, "max": 7.1}),
    ("4093", 15, "vt_minus", {"min": 4.0, "typ": 5.8, "max": 7.4}),
]


@pytest.mark.parametrize("part, volts, edge, expected", THRESHOLD_ROWS)
def test_schmitt_thresholds_match_datasheet(part, volts, edge, expected):
    assert PARTS[part]["thresholds"][volts][edge] == expected


ON_RESISTANCE_ROWS = [
    # [ti405xron] TI CD4051B/52B/53B, VEE = VSS = 0, 25 C
    ("4053", 5, {"typ": 470, "max": 1050}),
    ("4051", 15, {"typ": 125, "max": 240}),
    # Philips HEF4066B DC characteristics (manualmachine.com hef4066bu), Vis = VSS to VDD
    ("4066", 10, {"typ": 80, "max": 245}),
]


@pytest.mark.parametrize("part, volts, expected", ON_RESISTANCE_ROWS)
def test_on_resistance_matches_datasheet(part, volts, expected):
    assert PARTS[part]["r_on"][volts] == expected


SUPPLY_ROWS = [
    # [ti4001] TI CD4001B 3-18 V
    ("4001", {"min": 3, "max": 18}),
    # [nxp4520] Nexperia HEF4520B 3.0-15.0 V
    ("4520", {"min": 3, "max": 15}),
    # [ti405x] TI CD4053B single supply 3-20 V
    ("4053", {"min": 3, "max": 20}),
]


@pytest.mark.parametrize("part, expected", SUPPLY_ROWS)
def test_supply_matches_datasheet(part, expected):
    assert PARTS[part]["supply"] == expected


def test_4066_switches_turn_on_with_control_high():
    # TI CD4066B functional block diagram note (ti.com SCHS051J): switch on when VC = VDD
    assert [sw["on_when"] for sw in PARTS["4066"]["units"]] == ["high"] * 4


# Facts read in the "from memory" clean-up; each row: part, fact path, value, source.
READ_FACTS = [
    # TI SN74LV4052A pin functions (SCLS429K), the same 4052 layout: 1Y0 12, 1-COM 13,
    # 1Y1 14, 1Y2 15, 1Y3 11 (CD4052B pins 1-11 from [ti4051pins]).
    ("4052", ("units", 0, "common"), 13),
    ("4052", ("units", 0, "channels"), [12, 14, 15, 11]),
    ("4052", ("power", "VDD"), 16),
    ("4052", ("pins", 13), "X_COM"),
]


@pytest.mark.parametrize("part, path, expected", READ_FACTS)
def test_read_facts(part, path, expected):
    assert dig(PARTS[part], path) == expected


def test_4060_clock_rate_is_given_per_supply_and_used_at_the_plan_supply():
    """The 4060's maximum clock is a min / typ per supply, not one 15 V figure.

    15 V minimum 12 MHz: TI CD4060B product page ('12 MHz clock rate at 15 V') and
    Intersil CD4060BMS FN3317 ('12MHz Clock Rate at 15V'), both read; 3.5 MHz at 5 V:
    a secondary source only (see the catalog's source note); 10 V and the typicals
    from memory (TI CD4060B).  A 5 V plan trusts the guaranteed 3.5 MHz, not a
    scaled-down 15 V figure.
    """
    from synth.counter import counter_fmax_mhz
    from synth.inventory import load_catalog

    assert PARTS["4060"]["timing"]["fmax_mhz"] == {5: {"min": 3.5, "typ": 7}, 10: {"min": 8, "typ": 16},
                                                   15: {"min": 12, "typ": 24}}
    part = load_catalog().parts["4060"]
    assert counter_fmax_mhz(part, 5.0) == (3.5, "guaranteed")
    assert counter_fmax_mhz(part, 10.0) == (8.0, "guaranteed")
    assert counter_fmax_mhz(part, 15.0) == (12.0, "guaranteed")
