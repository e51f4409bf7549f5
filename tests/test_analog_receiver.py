"""``analog.choose_receiver``: which input an RC delay drives, from small bins.

Sources: 40106 thresholds at 5 V, VT+ 2.2 / 2.9 / 3.6 V and VT- 0.9 / 1.9 /
2.8 V (RCA/TI limits as printed by UTC CD40106, [utc40106] in
/work/shared/reference/cmos-4000b.md); a plain 4000B input at 5 V is only
guaranteed low below VIL = 1.5 V and high above VIH = 3.5 V (4000B family
input spec, common practice), so its switching point is taken as VDD / 2
inside that band.  Preferring a Schmitt receiver for a slow RC edge is
common practice.
"""

from __future__ import annotations

import pytest

from synth.analog import Receiver, choose_receiver
from synth.errors import ShortError, UsageError
from synth.inventory import load_bin


def bin_of(tmp_path, parts: dict[str, int], supply: float = 5.0, catalog=None):
    body = "parts:\n" + "".join(f"  {marking}: {n}\n" for marking, n in parts.items())
    path = tmp_path / "bin.yaml"
    path.write_text(body + "resistors: [10k]\ncapacitors: [10n]\n")
    return load_bin(path, catalog, supply)


def test_a_schmitt_inverter_is_preferred(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD4011BE": 1, "CD4093BE": 1, "CD40106BE": 1}, catalog=catalog)
    receiver = choose_receiver(stock, catalog, None, 5.0)
    assert isinstance(receiver, Receiver)
    assert receiver.part == "40106" and receiver.notes == []
    assert receiver.thresholds["vt_plus"] == {"min": 2.2, "typ": 2.9, "max": 3.6}
    assert receiver.thresholds["vt_minus"] == {"min": 0.9, "typ": 1.9, "max": 2.8}


def test_a_schmitt_nand_when_no_schmitt_inverter(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD4011BE": 1, "CD4093BE": 1}, catalog=catalog)
    assert choose_receiver(stock, catalog, None, 5.0).part == "4093"


def test_no_schmitt_part_means_a_plain_input_with_a_note(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD4011BE": 1}, catalog=catalog)
    receiver = choose_receiver(stock, catalog, None, 5.0)
    assert receiver.part is None
    assert receiver.thresholds["vt_plus"] == {"min": 1.5, "typ": 2.5, "max": 3.5}
    assert "no Schmitt-input part" in receiver.notes[0]


def test_plain_on_request_even_with_a_schmitt_part(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD40106BE": 1}, catalog=catalog)
    receiver = choose_receiver(stock, catalog, "plain", 5.0)
    assert receiver.part is None and receiver.thresholds["method"] == "plain-input"


def test_a_named_plain_part_is_treated_as_a_plain_input(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD4011BE": 1, "CD40106BE": 1}, catalog=catalog)
    receiver = choose_receiver(stock, catalog, "CD4011BE", 5.0)
    assert receiver.part == "4011" and receiver.thresholds["vt_plus"]["typ"] == 2.5
    assert "no Schmitt thresholds" in receiver.notes[0]


def test_unknown_and_missing_parts_are_refused(tmp_path, catalog):
    stock = bin_of(tmp_path, {"CD4011BE": 1}, catalog=catalog)
    with pytest.raises(UsageError, match="unknown part"):
        choose_receiver(stock, catalog, "QQ123", 5.0)
    with pytest.raises(ShortError, match="no usable 40106"):
        choose_receiver(stock, catalog, "40106", 5.0)


def test_nothing_usable_at_the_supply_is_short(tmp_path, catalog):
    # 74HC parts are rated 2 to 6 V (74HC family datasheets): none runs at 12 V
    stock = bin_of(tmp_path, {"74HC14": 1}, supply=12.0, catalog=catalog)
    with pytest.raises(ShortError, match="no part in the bin"):
        choose_receiver(stock, catalog, None, 12.0)
