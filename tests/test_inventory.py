"""Markings, bin files and their error messages.

Markings follow the makers' part-numbering schemes (common practice): TI/RCA
"CD4011BE" (B series, E = plastic DIP), NXP "HEF4011BP" (P = DIP), ON/Motorola
"MC14011BCP" (the MC1 prefix adds a 1), ST "HCF4011BEY", Toshiba "TC4011BP",
TI "SN74HC00N" and "CD74HC00E", Nexperia "74HC00D" (SO), ST "M74HC00B1".
"""

import pytest

from synth.cli import main
from synth.inventory import load_catalog

CATALOG = load_catalog()

MARKINGS = [
    ("CD4011BE", "4011"), ("HEF4011BP", "4011"), ("MC14011BCP", "4011"), ("HCF4011BEY", "4011"),
    ("TC4011BP", "4011"), ("CD4011BM96", "4011"), ("4011", "4011"), ("CD4040BE", "4040"),
    ("HEF4040BP", "4040"), ("MC14040BCP", "4040"), ("CD40106BE", "40106"), ("HEF40106BP", "40106"),
    ("MC14093BCP", "4093"), ("CD4053BE", "4053"), ("HEF4066BP", "4066"), ("CD4017BE", "4017"),
    ("MC14520BCP", "4520"), ("SN74HC00N", "74HC00"), ("74HC00D", "74HC00"), ("M74HC00B1", "74HC00"),
    ("CD74HC00E", "74HC00"), ("MC74HC00AN", "74HC00"), ("74HCT00", "74HCT00"), ("SN74HCT00N", "74HCT00"),
    ("74HC4040N", "74HC4040"), ("SN74HC14N", "74HC14"), ("CD74HC4053E", "74HC4053"),
    ("74hc138d", "74HC138"), ("CD4069UBE", "4069"),
]


@pytest.mark.parametrize("marking, generic", MARKINGS)
def test_marking_normalises_to_generic_type(marking, generic):
    assert CATALOG.normalise(marking) == generic


@pytest.mark.parametrize("marking", ["CD40110BE", "7400", "SN74LS00N", "banana", "CD4999BE"])
def test_unknown_markings_are_not_guessed(marking):
    assert CATALOG.normalise(marking) is None


def _write(tmp_path, text, name="bin.yaml"):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_good_bin_loads_counts_and_passives(tmp_path):
    from synth.inventory import load_bin

    path = _write(tmp_path, "parts:\n  CD4011BE: 2\n  HEF4011BP: 1\n  4040: {count: 1}\n"
                            "resistors: [1k, 4k7, 10k]\ncapacitors: [6n8, 4.7nF, 100n]\n")
    stock = load_bin(path, CATALOG, 5.0)
    assert stock.parts == {"4011": 3, "4040": 1}
    assert stock.resistors == [1000.0, 4700.0, 10000.0]
    assert stock.capacitors == [4.7e-9, 6.8e-9, 1e-7]


def test_part_outside_supply_range_is_left_out_with_warning(tmp_path):
    from synth.inventory import load_bin

    # 74HC parts: 2-6 V recommended supply (TI SN74HC00 SCLS181E).
    path = _write(tmp_path, "parts:\n  74HC00: 1\n  CD4011BE: 1\n")
    stock = load_bin(path, CATALOG, 12.0)
    assert stock.parts == {"4011": 1}
    assert stock.excluded == {"74HC00": 1}
    assert "74HC00 left out" in stock.warnings[0] and ":2:" in stock.warnings[0]


BAD_BINS = [
    ("parts:\n  CD4011BE: 2\n   4040: 1\n", 3, "YAML syntax"),
    ("parts:\n  CD4011BE: [2\n", 3, "YAML syntax"),
    ("parts:\n  CD4011BE: 2\n  CD4999BE: 1\n", 3, "unknown part marking 'CD4999BE'"),
    ("parts:\n  CD4011BE: 0\n", 2, "positive whole number"),
    ("parts:\n  CD4011BE: -1\n", 2, "positive whole number"),
    ("parts:\n  CD4011BE: two\n", 2, "positive whole number"),
    ("parts:\n  CD4011BE: 1.5\n", 2, "positive whole number"),
    ("parts:\n  CD4011BE: {count: 0}\n", 2, "positive whole number"),
    ("parts:\n  CD4011BE: {cnt: 2}\n", 2, "unknown key 'cnt'"),
    ("parts:\n  CD4011BE: 2\nresistors: [1k, ten k]\n", 3, "resistors"),
    ("parts:\n  CD4011BE: 2\ncapacitors: 6n8\n", 3, "expected 'capacitors' to be a list"),
    ("parts:\n  CD4011BE: 2\nresistor: [1k]\n", 3, "unknown top-level key 'resistor'"),
    ("chips:\n  CD4011BE: 2\n", 1, "unknown top-level key 'chips'"),
    ("resistors: [1k]\n", 1, "expected a 'parts:' mapping"),
    ("- CD4011BE\n", 1, "expected a mapping"),
    ("", 1, "expected a mapping"),
    ("parts: [CD4011BE]\n", 1, "expected 'parts' to be a mapping"),
]


@pytest.mark.parametrize("text, line, words", BAD_BINS)
def test_bad_bin_gives_one_line_with_file_and_line(tmp_path, capsys, text, line, words):
    path = _write(tmp_path, text)
    assert main(["bin", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert f"{path}:{line}:" in err
    assert words in err


def test_unknown_marking_names_the_closest_types(tmp_path, capsys):
    path = _write(tmp_path, "parts:\n  CD4012BEX9: 1\n  CD4041BE: 1\n")
    assert main(["bin", str(path)]) == 2
    err = capsys.readouterr().err
    assert "closest known types" in err and "4040" in err


def test_missing_bin_file_is_exit_2(tmp_path, capsys):
    assert main(["bin", str(tmp_path / "nope.yaml")]) == 2
    assert "no such file" in capsys.readouterr().err


def test_bin_json_lists_counter_stages(tmp_path, capsys):
    import json

    path = _write(tmp_path, "parts:\n  CD4020BE: 1\n  CD4011BE: 2\n")
    assert main(["bin", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    # CD4020B: stages Q2 and Q3 are not pinned out (Intersil CD4020BMS, reference [isl4040]).
    counter = data["counters"][0]
    assert counter["part"] == "4020" and 2 not in counter["stages_pinned"] and 14 in counter["stages_pinned"]
    nand = [g for g in data["gates"] if g["op"] == "nand"][0]
    assert nand["units"] == 8 and nand["inputs"] == 2
