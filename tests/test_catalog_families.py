"""Family facts as catalog data, and every unit read into typed records.

Sources named beside each check:
- [ti4001]: cmos-4000b.md, 4001 section, "Supply (TI) 3-18 V" (TI CD4001B).
- [fc4049]: cmos-4000b.md, 4050 section, Fairchild CD4050BC input levels at
  5 V: VIL <= 1.5 V, VIH >= 3.5 V.
- [hc-common]: hc-74.md, the common facts above its part sections: "VCC
  recommended range 2.0-6.0 V; inputs CMOS levels (VIH >= 3.15 V, VIL <=
  1.35 V at VCC = 4.5 V" (NXP 74HC02 sheet).
- [hc14-on]: hc-74.md, 74HC14 section, ON MC74HC14A: VT+ at 4.5 V at most 3.15 V.
- [hc138]: hc-74.md, 74HC138 pin table: A0-A2 on 1-3, E1_n 4, E2_n 5, E3 6.
- 74HCT: TTL-compatible inputs, VIL 0.8 V / VIH 2.0 V, supply 4.5-5.5 V
  (common practice; from memory).
The broken family files below are invented for the tests.
"""

from __future__ import annotations

import textwrap

import pytest

from synth.errors import CatalogError, InputError
from synth.inventory import Family, PinControl, load_catalog
from synth.limits import check_supply
from synth.packing import unit_logic_pins

FAMILY_FILE = """\
family: 74ZZ
supply: {min: 3, max: 18}
inputs: cmos
offered_for_empty_bin: true
input_levels:
  source: invented for the test
  rows:
    5: {vil: 1.5, vih: 3.5}
variants:
  X:
    family: 74ZZX
    inputs: ttl
    keeps_thresholds: false
    source: invented
parts:
  74ZZ00:
    function: quad 2-input NAND
    category: gate
    package: {type: DIP, pins: 14}
    pins: {1: 1A, 2: 1B, 3: 1Y, 4: 2Y, 5: 2A, 6: 2B, 7: VSS,
           8: 3A, 9: 3B, 10: 3Y, 11: 4Y, 12: 4A, 13: 4B, 14: VDD}
    power: {VDD: 14, VSS: 7}
    supply: {min: 3, max: 18}
    x: true
    units:
      - {id: A, type: gate, op: nand, inputs: [1, 2], output: 3}
      - {id: B, type: gate, op: nand, inputs: [5, 6], output: 4}
"""


def load_text(tmp_path, text: str):
    path = tmp_path / "family.yaml"
    path.write_text(textwrap.dedent(text))
    return path, load_catalog([path])


# ---------------------------------------------------------------- the shipped families

def test_4000b_family_facts(catalog):
    family = catalog.families["4000B"]
    assert family.supply == (3.0, 18.0)                         # [ti4001]
    assert family.input_levels.band_at(5.0) == (1.5, 3.5)       # [fc4049]
    assert not family.ttl_inputs and family.variant_of is None


def test_74hc_family_facts(catalog):
    family = catalog.families["74HC"]
    assert family.supply == (2.0, 6.0)                          # [hc-common]
    assert family.input_levels.band_at(4.5) == (1.35, 3.15)     # [hc-common]
    assert not family.ttl_inputs


def test_74hct_family_facts(catalog):
    family = catalog.families["74HCT"]
    # TTL-compatible inputs over 4.5-5.5 V (common practice; from memory)
    assert family.ttl_inputs and family.variant_of == "74HC"
    assert family.supply == (4.5, 5.5)
    assert family.input_levels.band_at(5.0) == (0.8, 2.0)
    assert all(catalog.parts[t].supply == (4.5, 5.5) for t in catalog.parts if t.startswith("74HCT"))


def test_schmitt_inputs_are_unit_data_and_hct_twins_do_not_borrow_hc_levels(catalog):
    hc14, hct14 = catalog.parts["74HC14"], catalog.parts["74HCT14"]
    assert all(u.schmitt for u in hc14.units_of("inverter"))
    assert hc14.thresholds[4.5]["vt_plus"]["max"] <= 3.15        # [hc14-on]
    assert hct14.thresholds == {}                                # keeps_thresholds: false
    assert not catalog.families["74HCT"].keeps_thresholds


def test_every_part_belongs_to_a_described_family(catalog):
    assert {p.family for p in catalog.parts.values()} <= set(catalog.families)
    for part in catalog.parts.values():
        assert catalog.family_of(part).name == part.family


def test_an_empty_bin_is_offered_the_family_the_catalog_names(catalog):
    assert catalog.families_or_default([]) == {"4000B"}
    assert catalog.families_or_default(["74HC00", "74HCT04"]) == {"74HC", "74HCT"}


def test_a_family_without_a_file_gets_a_bare_record(catalog):
    part = catalog.parts["4011"]
    assert catalog.family_of(part) == catalog.families["4000B"]
    assert Family("9000Z") == Family("9000Z", None, None, False, None, True, False, "")


# ---------------------------------------------------------------- every unit, typed

def test_every_unit_pin_is_reachable_through_the_typed_fields(catalog):
    """The typed fields cover every pin the entry as written names (no pin lost)."""
    for part in catalog.parts.values():
        for unit in part.units:
            typed: set[int] = set(unit.inputs) | set(unit.selects) | set(unit.outputs) \
                | set(unit.data) | set(unit.terminals) | set(unit.channels) | set(unit.count_enable) \
                | set(unit.stages.values()) | set(unit.decoded.values()) | set(unit.ties)
            typed |= {c.pin for c in (unit.clock, unit.reset, unit.set, unit.enable, *unit.enables) if c}
            typed |= {p for p in (unit.output, unit.carry, unit.carry_out, unit.d, unit.q, unit.qn,
                                  unit.output_inv, unit.control, unit.common) if p is not None}
            if unit.also:
                typed.add(unit.also.output)
            if unit.throws:
                typed |= {unit.throws.low, unit.throws.high}
            if unit.oscillator:
                typed |= {p for p in (unit.oscillator.input, unit.oscillator.output,
                                      unit.oscillator.output_inv) if p}
            written = {pin for pin, _ in unit.pins()}
            assert written == typed, (part.type, unit.id)


def test_logic_pins_come_from_the_typed_fields(catalog):
    ins, outs, _ = unit_logic_pins(catalog.parts["74HC138"].units[0])
    assert ins == [1, 2, 3, 4, 5, 6] and outs == [15, 14, 13, 12, 11, 10, 9, 7]     # [hc138]


def test_a_role_finds_its_control(catalog):
    decoder = catalog.parts["74HC138"].units[0]
    # [hc138]: E1_n (pin 4) and E2_n (pin 5) active low, E3 (pin 6) active high
    assert decoder.control_of_role("enables[0].pin") == PinControl(4, "low")
    assert decoder.control_of_role("enables[2].pin") == PinControl(6, "high")
    counter = catalog.parts["4040"].units[0]
    assert counter.control_of_role("reset.pin") == counter.reset
    assert counter.control_of_role("stages.1") is None


def test_synchronous_binary_counters_are_told_apart(catalog):
    assert catalog.parts["74HC161"].units[0].synchronous_binary_or_bcd
    assert not catalog.parts["4040"].units[0].synchronous_binary_or_bcd        # ripple
    assert not catalog.parts["4017"].units[0].synchronous_binary_or_bcd        # Johnson


# ---------------------------------------------------------------- family files that are wrong

def test_a_small_family_file_loads_with_its_variant(tmp_path):
    _, catalog = load_text(tmp_path, FAMILY_FILE)
    assert catalog.families["74ZZX"].ttl_inputs and catalog.families["74ZZX"].variant_of == "74ZZ"
    assert catalog.parts["74ZZX00"].variant_of == "74ZZ00"
    assert catalog.parts["74ZZX00"].supply == (3.0, 18.0)       # the variant gives none: the part's
    assert catalog.families_or_default([]) == {"74ZZ"}


@pytest.mark.parametrize("old, new, line, words", [
    ("inputs: cmos\n", "inputs: cmos\nspeed: fast\n", 4, "one of the keys family"),
    ("inputs: cmos\n", "inputs: ecl\n", 3, "cmos or ttl"),
    ("supply: {min: 3, max: 18}\ninputs", "supply: {min: 18, max: 3}\ninputs", 2, "0 < min < max"),
    ("5: {vil: 1.5, vih: 3.5}", "5: {vil: 3.5, vih: 1.5}", 8, "vil < vih"),
    ("    family: 74ZZX\n", "", 11, "the key 'family', got none"),
    ("    inputs: ttl\n", "    inputs: ttl\n    colour: blue\n", 13, "one of the keys family"),
    ("    keeps_thresholds: false", "    keeps_thresholds: no way", 13, "true or false"),
    ("offered_for_empty_bin: true", "offered_for_empty_bin: 1", 4, "true or false"),
])
def test_a_wrong_family_fact_names_file_and_line(tmp_path, old, new, line, words):
    assert old in FAMILY_FILE
    path = tmp_path / "family.yaml"
    path.write_text(FAMILY_FILE.replace(old, new, 1))
    with pytest.raises(CatalogError) as caught:
        load_catalog([path])
    error = caught.value
    assert error.file == str(path) and error.line == line, str(error)
    assert words in str(error), str(error)


@pytest.mark.parametrize("control, words", [
    ("reset: {pin: 3, active: high, edge: rising}", "one of the keys pin, active, synchronous"),
    ("enable: {pin: 2, active: high, clock_hold: middle}", "high or low"),
])
def test_a_wrong_control_key_names_file_and_line(tmp_path, control, words):
    text = FAMILY_FILE.replace(
        "      - {id: A, type: gate, op: nand, inputs: [1, 2], output: 3}\n",
        "      - {id: A, type: counter, mode: binary, modulus: 16, synchronous: false,\n"
        f"         clock: {{pin: 1, edge: falling}}, stages: {{1: 3}}, {control}}}\n")
    path = tmp_path / "family.yaml"
    path.write_text(text)
    with pytest.raises(CatalogError) as caught:
        load_catalog([path])
    assert caught.value.file == str(path) and caught.value.line == 27, str(caught.value)
    assert words in str(caught.value)


def test_a_family_described_in_two_files_is_refused(tmp_path):
    first, second = tmp_path / "a.yaml", tmp_path / "b.yaml"
    first.write_text(FAMILY_FILE)
    second.write_text(FAMILY_FILE.replace("  74ZZ00:", "  74ZZ02:").replace("family: 74ZZX", "family: 74ZZY"))
    with pytest.raises(CatalogError, match="family 74ZZ described twice") as caught:
        load_catalog([first, second])
    assert caught.value.file == str(second)


def test_the_supply_hint_agrees_with_the_family_facts(catalog):
    """limits.check_supply runs before any catalog is read, so its hint names the
    family ranges in words; they must stay what the catalog says ([hc-common], [ti4001])."""
    with pytest.raises(InputError) as caught:
        check_supply(40.0, "supply")
    hc, cmos = catalog.families["74HC"].supply, catalog.families["4000B"].supply
    assert f"74HC parts run from {hc[0]:g} to {hc[1]:g} V, 4000B parts from {cmos[0]:g} to {cmos[1]:g} V" \
        in caught.value.hint
