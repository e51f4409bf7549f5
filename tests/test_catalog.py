"""Integrity of every catalog entry, and the parts the project must carry.

The power-pin rule is common practice for the 4000B and 74HC families: VDD/VCC
on the highest pin, VSS/GND on the last pin of the first row (pin N/2).
Exceptions are listed with the datasheet that shows them.
"""

from collections import Counter

import pytest

from synth.inventory import load_catalog

CATALOG = load_catalog()
PARTS = sorted(CATALOG.parts)

REQUIRED_4000B = ("4001 4002 4011 4012 4023 4025 4068 4069 4070 4071 4072 4073 4075 4077 4078 "
                  "4081 4082 4093 40106 4049 4050 4013 4017 4020 4022 4024 4040 4060 4520 4518 "
                  "4028 4051 4052 4053 4066").split()
REQUIRED_74HC = ["74HC" + n for n in ("00 02 04 08 10 11 14 20 21 27 30 32 86 132 4002 4075 4078 "
                                      "74 138 151 153 157 161 163 393 4040 4060 4051 4053 4066").split()]

# Exceptions to "VDD on pin N, VSS on pin N/2", each with its source.
POWER_EXCEPTIONS = {
    # TI CD4049UB/CD4050B pin diagram: VCC pin 1, VSS pin 8, pins 13 and 16 NC
    # (shared/reference/cmos-4000b.md [ti4049pins], [ti4050pins]).
    "4049": (1, 8),
    "4050": (1, 8),
}


@pytest.mark.parametrize("part_type", REQUIRED_4000B + REQUIRED_74HC)
def test_required_part_is_in_catalog(part_type):
    assert part_type in CATALOG.parts


@pytest.mark.parametrize("part_type", PARTS)
def test_every_pin_is_named_once(part_type):
    part = CATALOG.parts[part_type]
    assert sorted(part.pins) == list(range(1, part.pin_count + 1))
    assert part.pin_count in (8, 14, 16, 20, 24)


@pytest.mark.parametrize("part_type", PARTS)
def test_every_pin_has_exactly_one_owner(part_type):
    part = CATALOG.parts[part_type]
    owners = Counter()
    for pin in part.power.values():
        owners[pin] += 1
    for pin in part.nc:
        owners[pin] += 1
    for pin in part.ties:
        owners[pin] += 1
    for unit in part.units:
        for pin in {p for p, _ in unit.pins()}:
            if pin not in part.shared:
                owners[pin] += 1
    for pin in part.shared:
        owners[pin] += 1
    unknown = set(owners) - set(part.pins)
    assert not unknown, f"{part_type}: units name pins {sorted(unknown)} the package lacks"
    doubled = sorted(p for p, n in owners.items() if n > 1)
    assert not doubled, f"{part_type}: pins {doubled} belong to two units or roles"
    orphans = sorted(set(part.pins) - set(owners))
    assert not orphans, f"{part_type}: pins {orphans} belong to no unit, power, tie or NC"


@pytest.mark.parametrize("part_type", PARTS)
def test_power_pins_where_the_family_puts_them(part_type):
    part = CATALOG.parts[part_type]
    base = part_type.replace("74HCT", "").replace("74HC", "")
    expected = POWER_EXCEPTIONS.get(base, (part.pin_count, part.pin_count // 2))
    assert (part.power["VDD"], part.power["VSS"]) == expected


@pytest.mark.parametrize("part_type", PARTS)
def test_units_are_well_formed(part_type):
    part = CATALOG.parts[part_type]
    assert part.units, f"{part_type} has no units"
    ids = [u.id for u in part.units]
    assert len(ids) == len(set(ids))
    for unit in part.units:
        if unit.type == "gate":
            assert unit.fields["op"] in ("and", "nand", "or", "nor", "xor", "xnor")
            assert len(unit.inputs) >= 2 and isinstance(unit.output, int)
        if unit.type == "counter":
            fields = unit.fields
            assert fields["clock"]["edge"] in ("rising", "falling")
            assert fields["reset"]["active"] in ("high", "low")
            assert fields.get("stages") or fields.get("decoded")
            assert fields["modulus"] >= 2
        if unit.type == "spdt":
            assert set(unit.fields["throws"]) == {"low", "high"}


@pytest.mark.parametrize("part_type", PARTS)
def test_supply_timing_and_sources_are_sane(part_type):
    part = CATALOG.parts[part_type]
    lo, hi = part.supply
    assert 1.5 <= lo < hi <= 20
    for key, table in part.timing.items():
        if not isinstance(table, dict):
            continue
        for volts, row in table.items():
            if isinstance(row, dict) and "typ" in row and "max" in row:
                assert row["typ"] <= row["max"], f"{part_type} {key} at {volts} V"
    assert part.source.get("pinout"), f"{part_type} lacks a pinout source"


@pytest.mark.parametrize("part_type", [p for p in PARTS if CATALOG.parts[p].thresholds])
def test_schmitt_thresholds_are_ordered(part_type):
    for volts, row in CATALOG.parts[part_type].thresholds.items():
        up, down = row["vt_plus"], row["vt_minus"]
        assert down["min"] <= down["typ"] <= down["max"] and up["min"] <= up["typ"] <= up["max"]
        assert down["typ"] < up["typ"] < volts
