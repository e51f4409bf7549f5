"""Taking a plan's chips from the bin file, and ``binsynth bin BIN --diff OTHER``.

The written files are read back two ways: by binsynth's own loader and by
PyYAML's plain ``yaml.safe_load`` (the reference YAML reader, independent of
our line-keeping loader), and both must show the old counts minus the BOM.
Markings follow the makers' numbering schemes (common practice): TI/RCA
"CD4011BE" (E = plastic DIP), NXP "HEF4011BP" / "HEF4040BP" (P = DIP),
ON/Motorola "MC14073BCP" (MC1 prefix), Toshiba "TC4011BP", TI "SN74HC00N".
The bins are demo drawers of our own bench scenarios.
"""

from __future__ import annotations

import os

import pytest
import yaml

from synth.bintake import diff_bins, split_lines, take_from_bin
from synth.cli import main
from synth.errors import BinError, InputError, InternalError, ShortError
from synth.inventory import load_bin, load_catalog

CATALOG = load_catalog()

# The sample-and-hold bench drawer, every layout the bin format allows.
DRAWER = """\
# sample-and-hold bench drawer (shelf 3)
parts:                 # chips on hand
  CD4011BE: 1          # quad 2-input NAND, from the 2019 order
  HEF4011BP: 2         # same gates, NXP

  HEF4040BP:           # 12-stage ripple counter
    count: 2           # one has a bent pin 8
  MC14073BCP: {count: 3}   # triple 3-input AND
  CD4053BE: 1
resistors: [1k, 4k7, 10k]   # E12, 1 %
capacitors: [6n8, 100n]
"""


def _bin(tmp_path, text=DRAWER, name="drawer.yaml"):
    path = tmp_path / name
    path.write_bytes(text.encode("utf-8"))
    return path


def _file_counts(path) -> dict[str, int]:
    """Marking -> count as plain PyYAML reads the file (the independent reader)."""
    parts = yaml.safe_load(path.read_text(encoding="utf-8"))["parts"] or {}
    return {str(m): (v["count"] if isinstance(v, dict) else v) for m, v in parts.items()}


def _minus(counts: dict[str, int], bom: dict[str, int]) -> dict[str, int]:
    left = {p: n - bom.get(p, 0) for p, n in counts.items()}
    return {p: n for p, n in left.items() if n > 0}


def _all_counts(stock) -> dict[str, int]:
    return {**stock.parts, **stock.excluded}


# ---------------------------------------------------------------- the written file

# (what is taken, the drawer's part lines afterwards, written out literally)
TAKES = [
    pytest.param({"4053": 0, "4073": 1}, {
        "  MC14073BCP: {count: 2}   # triple 3-input AND\n"}, id="long-flow-form"),
    pytest.param({"4040": 1}, {
        "    count: 1           # one has a bent pin 8\n"}, id="block-form"),
    pytest.param({"4011": 1}, {
        "  # CD4011BE: 0 used up by sh-bench          # quad 2-input NAND, from the 2019 order\n"},
        id="short-form-used-up"),
    pytest.param({"4011": 2}, {
        "  # CD4011BE: 0 used up by sh-bench          # quad 2-input NAND, from the 2019 order\n",
        "  HEF4011BP: 1         # same gates, NXP\n"}, id="several-markings-in-file-order"),
    pytest.param({"4011": 3, "4040": 2, "4053": 1}, {
        "  # CD4011BE: 0 used up by sh-bench          # quad 2-input NAND, from the 2019 order\n",
        "  # HEF4011BP: 0 used up by sh-bench         # same gates, NXP\n",
        "  # HEF4040BP: used up by sh-bench           # 12-stage ripple counter\n",
        "    # count: 0           # one has a bent pin 8\n",
        "  # CD4053BE: 0 used up by sh-bench\n"}, id="used-up-block-and-short"),
]


@pytest.mark.parametrize("bom, new_lines", TAKES)
def test_written_bin_loads_back_as_old_minus_bom(tmp_path, bom, new_lines):
    path = _bin(tmp_path)
    before = load_bin(path, CATALOG)
    result = take_from_bin(path, bom, CATALOG, note="sh-bench")
    after = load_bin(path, CATALOG)
    assert result.written
    assert _all_counts(after) == _minus(_all_counts(before), bom)
    assert (after.resistors, after.capacitors) == (before.resistors, before.capacitors)
    # PyYAML alone must agree, read as generic types.
    by_type: dict[str, int] = {}
    for marking, count in _file_counts(path).items():
        by_type[CATALOG.normalise(marking)] = by_type.get(CATALOG.normalise(marking), 0) + count
    assert by_type == _minus(_all_counts(before), bom)
    old_lines, written = split_lines(DRAWER), split_lines(path.read_text(encoding="utf-8"))
    assert len(written) == len(old_lines)
    assert {line for line in written if line not in old_lines} == new_lines


def test_several_markings_are_taken_in_file_order(tmp_path):
    path = _bin(tmp_path)
    result = take_from_bin(path, {"4011": 2}, CATALOG)
    assert [(c.marking, c.old, c.new) for c in result.changes] == [("CD4011BE", 1, 0), ("HEF4011BP", 2, 1)]
    assert _file_counts(path) == {"HEF4011BP": 1, "HEF4040BP": 2, "MC14073BCP": 3, "CD4053BE": 1}
    assert result.used_up == ["CD4011BE"]


def test_comments_blank_lines_and_order_are_kept(tmp_path):
    path = _bin(tmp_path)
    take_from_bin(path, {"4011": 3, "4040": 1, "4073": 2}, CATALOG)
    text = path.read_text(encoding="utf-8")
    old_lines, new_lines = split_lines(DRAWER), split_lines(text)
    assert len(new_lines) == len(old_lines)
    for old, new in zip(old_lines, new_lines):
        if "#" in old:   # each DRAWER line's first '#' starts its comment
            assert new.endswith(old[old.index("#"):]), (old, new)
        else:
            assert new == old   # blank lines, CD4053BE, capacitors untouched
    order = [text.index(m) for m in ("CD4011BE", "HEF4011BP", "HEF4040BP", "MC14073BCP", "CD4053BE")]
    assert order == sorted(order)


def test_every_part_used_up_leaves_a_bin_that_loads(tmp_path):
    path = _bin(tmp_path)
    take_from_bin(path, {"4011": 3, "4040": 2, "4073": 3, "4053": 1}, CATALOG)
    lines = split_lines(path.read_text(encoding="utf-8"))
    assert lines[1] == "parts: {}                 # chips on hand\n"
    assert load_bin(path, CATALOG).parts == {}
    assert _file_counts(path) == {}


def test_flow_mapping_drops_entries_used_up(tmp_path):
    path = _bin(tmp_path, "parts: {TC4011BP: 2, HEF4040BP: 1, '4073': {count: 1}}  # bench spares\n")
    take_from_bin(path, {"4011": 1, "4040": 1}, CATALOG)
    assert path.read_text() == "parts: {TC4011BP: 1, '4073': {count: 1}}  # bench spares\n"


def test_windows_line_ends_are_kept(tmp_path):
    path = tmp_path / "crlf.yaml"
    path.write_bytes(b"parts:\r\n  CD4011BE: 2   # NAND\r\n  HEF4040BP: 1\r\n")
    take_from_bin(path, {"4011": 1, "4040": 1}, CATALOG)
    assert path.read_bytes() == b"parts:\r\n  CD4011BE: 1   # NAND\r\n  # HEF4040BP: 0 used up\r\n"


def test_backup_holds_the_old_file_byte_for_byte(tmp_path):
    path = _bin(tmp_path)
    result = take_from_bin(path, {"4011": 1}, CATALOG)
    assert result.backup == tmp_path / "drawer.yaml.bak"
    assert result.backup.read_bytes() == DRAWER.encode("utf-8")
    second_before = path.read_bytes()
    take_from_bin(path, {"4011": 1}, CATALOG)
    assert result.backup.read_bytes() == second_before   # the .bak is the state before the latest take


def test_dry_run_writes_nothing(tmp_path):
    path = _bin(tmp_path)
    result = take_from_bin(path, {"4011": 1}, CATALOG, dry_run=True)
    assert not result.written and result.backup is None
    assert path.read_bytes() == DRAWER.encode("utf-8")
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml"]
    assert result.new.parts["4011"] == 2


# ---------------------------------------------------------------- refusals

@pytest.mark.parametrize("bom, supply, says", [
    ({"4011": 4}, 5.0, "4011 needed 4, on hand 3 (CD4011BE: 1, HEF4011BP: 2)"),
    ({"4011": 1, "4017": 1}, 5.0, "4017 needed 1, none in the bin"),
    # 74HC parts: 2-6 V recommended supply (TI SN74HC00 datasheet SCLS181E).
    ({"74HC00": 1}, 12.0, "74HC00 needed 1, left out at 12 V"),
])
def test_taking_too_much_raises_and_leaves_the_file_alone(tmp_path, bom, supply, says):
    text = DRAWER.replace("  CD4053BE: 1\n", "  CD4053BE: 1\n  SN74HC00N: 1\n")
    path = _bin(tmp_path, text)
    with pytest.raises(ShortError) as caught:
        take_from_bin(path, bom, CATALOG, supply=supply)
    assert says in str(caught.value)
    assert caught.value.exit_code == 3
    assert path.read_bytes() == text.encode("utf-8")
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml"]


def test_count_on_its_own_line_is_refused_with_the_fix(tmp_path):
    path = _bin(tmp_path, "parts:\n  CD4011BE:\n    2\n")
    with pytest.raises(BinError) as caught:
        take_from_bin(path, {"4011": 1}, CATALOG)
    assert str(caught.value).startswith(f"{path}:2: cannot rewrite the entry for CD4011BE")
    assert path.read_bytes() == b"parts:\n  CD4011BE:\n    2\n"


def test_a_wrong_rewrite_is_caught_before_writing(tmp_path, monkeypatch):
    import synth.bintake as bintake

    path = _bin(tmp_path)
    monkeypatch.setattr(bintake, "_edit_text", lambda *a: DRAWER.replace("HEF4011BP: 2", "HEF4011BP: 7"))
    with pytest.raises(InternalError):
        take_from_bin(path, {"4011": 1}, CATALOG)
    assert path.read_bytes() == DRAWER.encode("utf-8")
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml"]


# ---------------------------------------------------------------- interruptions

def _fail_on(real, nth: int, error: BaseException):
    calls = {"n": 0}

    def wrapper(*args, **kwargs):
        calls["n"] += 1
        if calls["n"] == nth:
            raise error
        return real(*args, **kwargs)
    return wrapper


# os.replace: call 1 puts the .bak in place, call 2 the new bin.
# os.fsync: call 1 flushes the .bak's temp file, call 2 the new bin's temp file.
@pytest.mark.parametrize("name, nth, error, backup_done", [
    ("replace", 1, OSError(28, "No space left on device"), False),
    ("replace", 2, OSError(28, "No space left on device"), True),
    ("replace", 2, KeyboardInterrupt(), True),
    ("fsync", 1, KeyboardInterrupt(), False),
    ("fsync", 2, KeyboardInterrupt(), True),
    ("fsync", 2, OSError(5, "Input/output error"), True),
])
def test_interrupted_write_leaves_the_old_bin_intact(tmp_path, monkeypatch, name, nth, error, backup_done):
    path = _bin(tmp_path)
    monkeypatch.setattr(os, name, _fail_on(getattr(os, name), nth, error))
    with pytest.raises((type(error), InputError)):
        take_from_bin(path, {"4011": 2, "4040": 1}, CATALOG)
    monkeypatch.undo()
    assert path.read_bytes() == DRAWER.encode("utf-8")
    assert load_bin(path, CATALOG).parts == {"4011": 3, "4040": 2, "4073": 3, "4053": 1}
    left = sorted(os.listdir(tmp_path))
    assert left == (["drawer.yaml", "drawer.yaml.bak"] if backup_done else ["drawer.yaml"])
    if backup_done:
        assert (tmp_path / "drawer.yaml.bak").read_bytes() == DRAWER.encode("utf-8")


def test_write_failure_is_a_one_line_input_error(tmp_path, monkeypatch):
    path = _bin(tmp_path)
    monkeypatch.setattr(os, "replace", _fail_on(os.replace, 2, OSError(28, "No space left on device")))
    with pytest.raises(InputError) as caught:
        take_from_bin(path, {"4011": 1}, CATALOG)
    assert str(caught.value) == (f"{path}: cannot write: no space left on device; the bin is unchanged "
                                 "(check that the folder is writable)")
    assert caught.value.exit_code == 2


# ---------------------------------------------------------------- diff

def test_diff_bins_lists_changed_counts_and_passives(tmp_path):
    old = load_bin(_bin(tmp_path), CATALOG)
    new_text = (DRAWER.replace("HEF4011BP: 2", "HEF4011BP: 1").replace("count: 2 ", "count: 5 ")
                .replace("[1k, 4k7, 10k]", "[1k, 10k, 22k]").replace("  CD4053BE: 1\n", ""))
    new = load_bin(_bin(tmp_path, new_text, "after.yaml"), CATALOG)
    diff = diff_bins(old, new)
    assert diff.parts == [("4011", 3, 2), ("4040", 2, 5), ("4053", 1, 0)]
    assert (diff.resistors_added, diff.resistors_removed) == ([22000.0], [4700.0])
    assert (diff.capacitors_added, diff.capacitors_removed) == ([], [])


def test_bin_diff_command_prints_the_changed_counts(tmp_path, capsys):
    path = _bin(tmp_path)
    take_from_bin(path, {"4011": 2, "4040": 1}, CATALOG)
    backup = f"{path}.bak"
    assert main(["bin", str(path), "--diff", backup]) == 0
    assert capsys.readouterr().out == (
        f"changes in {path} since {backup} (+ added to the bin, - taken out)\n\n"
        "parts\n"
        "part  before  now  change\n"
        "----  ------  ---  ------\n"
        "4011  3       1    -2\n"
        "4040  2       1    -1\n")


def test_bin_diff_json_and_no_change(tmp_path, capsys):
    import json

    path = _bin(tmp_path)
    take_from_bin(path, {"4073": 1}, CATALOG)
    assert main(["bin", str(path), "--diff", f"{path}.bak", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["parts"] == [{"part": "4073", "old": 3, "new": 2, "change": -1}]
    assert data["other"] == f"{path}.bak"
    assert main(["bin", str(path), "--diff", str(path)]) == 0
    assert capsys.readouterr().out == f"{path} and {path} hold the same parts and passives\n"
