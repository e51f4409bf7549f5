"""``binsynth bin BIN --from-csv FILE``: a bin from a spreadsheet (synth/bincsv.py).

The CSV reading follows RFC 4180 as Python's csv module implements it (quoted
cells, commas inside quotes); the markings follow the catalog's marking rules,
the same as a bin file (formats.md section 1).
"""

from __future__ import annotations

import pytest

from synth.bincsv import bin_text_from_csv
from synth.cli import main
from synth.errors import BinError
from synth.inventory import load_bin, load_catalog

CATALOG = load_catalog()


def write(tmp_path, text: str, name: str = "drawer.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_rows_become_a_bin_that_loads_with_the_same_counts(tmp_path):
    csv_path = write(tmp_path, 'Part,Count,Where\nCD4011BE,2,"drawer 1, left"\n74HC00N,1,A3\n\n'
                               "CD4011BE,1,B1\n")
    made = bin_text_from_csv(csv_path, CATALOG)
    assert made.counts == {"CD4011BE": 3, "74HC00N": 1}
    assert made.rows == 3 and made.ignored == ("Where",)
    bin_path = tmp_path / "drawer.yaml"
    bin_path.write_text(made.text)
    assert load_bin(bin_path, CATALOG).parts == {"4011": 3, "74HC00": 1}


@pytest.mark.parametrize("text", ["part;count\nCD4011BE;2\n", "part\tcount\nCD4011BE\t2\n",
                                  "\ufeffPART,COUNT\r\nCD4011BE,2\r\n", "count,part\n2,CD4011BE\n"])
def test_spreadsheet_dialects_read_the_same(tmp_path, text):
    assert bin_text_from_csv(write(tmp_path, text), CATALOG).counts == {"CD4011BE": 2}


@pytest.mark.parametrize("text, line, message", [
    ("part,count\nCD4011BE,2\nCD4999BE,1\n", 3, "unknown part marking 'CD4999BE'"),
    ("part,count\nCD4011BE,two\n", 2, "expected a positive whole number of chips for CD4011BE"),
    ("part,count\nCD4011BE,0\n", 2, "expected a positive whole number of chips"),
    ("part,count\n,3\n", 2, "expected a part marking in column part"),
    ("CD4011BE,2\n", 1, "expected a header row naming the columns part and count"),
    ("part,count\n", 1, "expected at least one part row"),
    ("", 1, "got an empty file"),
])
def test_bad_rows_name_the_file_and_line(tmp_path, text, line, message):
    path = write(tmp_path, text)
    with pytest.raises(BinError) as caught:
        bin_text_from_csv(path, CATALOG)
    assert caught.value.line == line and caught.value.file == str(path)
    assert message in caught.value.message


def test_the_command_writes_the_bin_and_never_replaces_a_file(tmp_path, capsys):
    csv_path = write(tmp_path, "part,count\nCD4040BE,1\nCD4011BE,2\n")
    bin_path = tmp_path / "new.yaml"
    assert main(["bin", str(bin_path), "--from-csv", str(csv_path)]) == 0
    out = capsys.readouterr().out
    assert out.startswith(f"wrote {bin_path} from {csv_path}: 2 rows, 2 markings\n")
    assert bin_path.read_text() == "# bin made by binsynth from drawer.csv\nparts:\n  CD4040BE: 1\n  CD4011BE: 2\n"
    assert main(["bin", str(bin_path), "--from-csv", str(csv_path)]) == 2
    assert "the file exists" in capsys.readouterr().err
    assert main(["bin", str(tmp_path / "x.yaml"), "--from-csv", str(write(tmp_path, "part,count\nX1,1\n", "b.csv"))]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"binsynth: {tmp_path / 'b.csv'}:2: unknown part marking 'X1'")
    assert not (tmp_path / "x.yaml").exists()
