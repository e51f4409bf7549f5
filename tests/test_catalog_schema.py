"""The catalog schema as typed records, checked once at load, errors with file and line.

Sources named beside each check: the pin tables in the project's reference
notes (/work/shared/reference/cmos-4000b.md: 4040 [isl4040] [nxp4040], 4053
[nxp74hc4053] [ti4053q1]); 74HCT inputs are TTL-compatible, VIL 0.8 V and
VIH 2.0 V over 4.5-5.5 V (common practice; from memory), where 74HC inputs
at 4.5 V are VIL 1.35 V / VIH 3.15 V (hc-74.md, NXP 74HC02 sheet).  The
broken catalogs below are invented for the tests.
"""

from __future__ import annotations

import textwrap

import pytest

from synth.analog import choose_receiver
from synth.errors import CatalogError
from synth.inventory import ClockPin, PinControl, Throws, load_bin, load_catalog

GOOD_GATE = """\
family: 4000B
parts:
  "4011":
    function: quad 2-input NAND
    category: gate
    package: {type: DIP, pins: 14}
    pins: {1: 1A, 2: 1B, 3: 1Y, 4: 2Y, 5: 2A, 6: 2B, 7: VSS,
           8: 3A, 9: 3B, 10: 3Y, 11: 4Y, 12: 4A, 13: 4B, 14: VDD}
    power: {VDD: 14, VSS: 7}
    supply: {min: 3, max: 18}
    units:
      - {id: A, type: gate, op: nand, inputs: [1, 2], output: 3}
      - {id: B, type: gate, op: nand, inputs: [5, 6], output: 4}
"""


def catalog_with(tmp_path, text: str):
    path = tmp_path / "family.yaml"
    path.write_text(textwrap.dedent(text))
    return path, lambda: load_catalog([path])


def test_the_shipped_catalog_reads_into_typed_units(catalog):
    counter = catalog.parts["4040"].units[0]
    # 4040: CLOCK pin 10, counts on the falling edge, Schmitt clock; RESET pin 11 active high
    assert counter.clock == ClockPin(10, "falling", True)
    assert counter.reset == PinControl(11, "high", False)
    assert counter.stages[1] == 9 and counter.stages[12] == 1 and counter.modulus == 4096
    switch = catalog.parts["4053"].units[0]
    # 4053 switch a: select A = 11, common 14, x throw (select 0) 12, y throw (select 1) 13
    assert (switch.control, switch.common, switch.throws) == (11, 14, Throws(low=12, high=13))


def test_a_derived_variant_names_its_original(catalog):
    assert catalog.parts["74HCT00"].variant_of == "74HC00"
    assert catalog.parts["74HC00"].variant_of is None
    assert catalog.parts["4060"].oscillator_k == 2.3


def test_hc_and_hct_input_levels_come_from_the_catalog(catalog):
    assert catalog.plain_input_levels({"74HCT"}, 5.0)[:2] == (0.8, 2.0)
    assert catalog.plain_input_levels({"74HC"}, 4.5)[:2] == (1.35, 3.15)


def test_an_rc_delay_into_an_hct_input_uses_ttl_levels(tmp_path, catalog):
    path = tmp_path / "bin.yaml"
    path.write_text("parts:\n  74HCT04: 1\nresistors: [10k]\ncapacitors: [10n]\n")
    receiver = choose_receiver(load_bin(path, catalog, 5.0), catalog, None, 5.0)
    assert receiver.part is None
    assert receiver.thresholds["vt_plus"]["min"] == 0.8 and receiver.thresholds["vt_plus"]["max"] == 2.0


def test_a_good_small_catalog_loads(tmp_path):
    _, load = catalog_with(tmp_path, GOOD_GATE)
    unit = load().parts["4011"].units[1]
    assert (unit.op, unit.inputs, unit.output) == ("nand", (5, 6), 4)


@pytest.mark.parametrize("old, new, line, words", [
    ("inputs: [1, 2], output: 3}", "inputs: [1, 2]}", 12, "the key 'output', got none"),
    ("inputs: [5, 6], output: 4}", "inputs: [5, 6], output: 40}", 13, "pin number 1-14"),
    ("op: nand, inputs: [5, 6]", "op: nandd, inputs: [5, 6]", 13, "and or nand"),
    ("output: 4}", "output: 4, inverts: true}", 13, "one of the gate keys"),             # unknown key
    ("supply: {min: 3, max: 18}", "supply: {min: 18, max: 3}", 10, "0 < min < max"),
    ("category: gate", "category: gates", 5, "gate or inverter"),
])
def test_every_schema_error_names_file_line_and_key(tmp_path, old, new, line, words):
    assert old in GOOD_GATE
    path, load = catalog_with(tmp_path, GOOD_GATE.replace(old, new, 1))
    with pytest.raises(CatalogError) as caught:
        load()
    error = caught.value
    assert error.file == str(path) and error.line == line, str(error)
    assert words in str(error) and "DEVELOPERS.md" in str(error)


def test_a_counter_without_outputs_is_refused(tmp_path):
    text = GOOD_GATE.replace(
        "      - {id: A, type: gate, op: nand, inputs: [1, 2], output: 3}\n",
        "      - {id: A, type: counter, mode: binary, modulus: 16, synchronous: false,\n"
        "         clock: {pin: 1, edge: falling}}\n")
    _, load = catalog_with(tmp_path, text)
    with pytest.raises(CatalogError, match="'stages' or 'decoded'"):
        load()


def test_a_clock_edge_must_be_rising_or_falling(tmp_path):
    text = GOOD_GATE.replace(
        "      - {id: A, type: gate, op: nand, inputs: [1, 2], output: 3}\n",
        "      - {id: A, type: counter, mode: binary, modulus: 16, synchronous: false,\n"
        "         clock: {pin: 1, edge: up}, stages: {1: 3}}\n")
    _, load = catalog_with(tmp_path, text)
    with pytest.raises(CatalogError, match="rising or falling") as caught:
        load()
    assert caught.value.line == 13          # the line the clock mapping is written on
