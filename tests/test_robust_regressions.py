"""Bad and odd input found by a fuzz run: each case, by name, ends in one clear line and exit 2.

Every case runs in-process through ``synth.cli.main(argv)``.  The rule each
one checks is the command-line contract of binsynth (exit 2 for bad input,
one line naming file and line and the fix, never a traceback); the outside
facts are the YAML 1.1 specification (its printable character set, 5.1, and
its aliases and merge keys) and UTF-8 as RFC 3629 defines it.  The cases
fail before any work that grows with the bad value, so each takes a moment;
timing is left to bench/, never asserted here.
"""

from __future__ import annotations

import datetime
import os
import threading

import pytest

from synth import limits
from synth.bintake import take_from_bin
from synth.cli import main
from synth.errors import InputError
from synth.inventory import data_path, example_path, load_catalog
from synth.spec import SIGNAL_KEYS

ASSERTED = "asserted" if "asserted" in SIGNAL_KEYS else "high"
DRAWER = "parts:\n  CD4011BE: 2\n  CD4040BE: 1\n  CD4069UBE: 1\n"


def _error_line(capsys, code: int, expected_exit: int = 2) -> str:
    """The one message line; checks exit code, no traceback, and a bounded echo."""
    out, err = capsys.readouterr()
    assert code == expected_exit, err
    assert "Traceback" not in err and "Error:" not in err.replace("error:", "")
    lines = [line for line in err.splitlines() if line.startswith("binsynth:")]
    assert len(lines) == 1, err
    assert len(lines[0]) < 400, lines[0]
    for bad in ("Marked", "NoneType", "datetime", "Errno", "<unicode string>", "codec"):
        assert bad not in lines[0]
    return lines[0]


def _spec(tmp_path, text: str, name: str = "spec.yaml"):
    path = tmp_path / name
    path.write_text(text.replace("ASSERTED", ASSERTED), encoding="utf-8")
    return str(path)


def _bin(tmp_path, text: str = DRAWER, name: str = "bin.yaml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


SMALL = "cycle: 8\nsignals:\n  a: {ASSERTED: [[0, 2]]}\n"


# ---------------------------------------------------------------- command-line values

def test_demo_out_naming_an_existing_file(tmp_path, capsys):
    target = tmp_path / "taken"
    target.write_text("mine")
    line = _error_line(capsys, main(["demo", "--out", str(target)]))
    assert "is a file, not a folder" in line
    assert target.read_text() == "mine"


@pytest.mark.parametrize("target, words", [
    ("(" * 200 + "a" + ")" * 200, "nested at most 64 deep, got 200"),
    ("~" * 2000 + "a", "at most 1000 characters, got 2001"),
    ("&".join(["a"] * 1500), "at most 1000 characters"),
    ("&".join(["a"] * 300), "at most 256 operators"),
])
def test_substitute_expression_caps(tmp_path, capsys, target, words):
    line = _error_line(capsys, main(["substitute", target, "--bin", _bin(tmp_path)]))
    assert words in line and "target" in line


@pytest.mark.parametrize("value", ["1e308", "inf", "nan", "-1", "1e7"])
def test_plan_search_seconds_must_be_finite_and_bounded(tmp_path, capsys, value):
    code = main(["plan", _spec(tmp_path, SMALL), "--bin", _bin(tmp_path), "--lacks", value])
    out, err = capsys.readouterr()
    assert code == 2 and "Traceback" not in err
    assert err.strip().splitlines()[-1].startswith("binsynth: error: argument --lacks")


@pytest.mark.parametrize("supply", ["-5 V", "5 mV", "0", "1e9 V", "nan"])
def test_bin_supply_outside_what_logic_runs_from(tmp_path, capsys, supply):
    line = _error_line(capsys, main(["bin", _bin(tmp_path), "--supply", supply]))
    assert "--supply" in line


# ---------------------------------------------------------------- bins

@pytest.mark.parametrize("count", ["10000", "1000000", "1000000000", str(2 ** 64 + 1)])
def test_chip_counts_past_what_a_person_builds(tmp_path, capsys, count):
    path = _bin(tmp_path, f"parts:\n  CD4011BE: {count}\n  CD4040BE: 1\n")
    line = _error_line(capsys, main(["bin", path]))
    assert f"{path}:2: parts: expected at most {limits.CHIPS_PER_PART.most} chips of 4011" in line
    assert len(count) <= 20 or "digits" in line


def test_chip_count_in_all_is_limited(tmp_path, capsys):
    parts = "".join(f"  {p}: 150\n" for p in ("CD4011BE", "CD4001BE", "CD4069UBE", "CD4040BE"))
    line = _error_line(capsys, main(["bin", _bin(tmp_path, "parts:\n" + parts)]))
    assert f"at most {limits.CHIPS_IN_ALL.most} chips in all, got 600" in line


def test_chip_counts_passed_to_decode_too(tmp_path, capsys):
    path = _bin(tmp_path, f"parts:\n  CD4011BE: {2 ** 64 + 1}\n  CD4040BE: 1\n")
    line = _error_line(capsys, main(["decode", _spec(tmp_path, SMALL), "--bin", path]))
    assert "at most 200 chips" in line


def test_a_folder_as_the_bin(tmp_path, capsys):
    line = _error_line(capsys, main(["bin", str(tmp_path)]))
    assert "this is a folder, not a file" in line


# ---------------------------------------------------------------- YAML

_BOMB = "a: &a [x,x,x,x,x,x,x,x,x]\n" + "".join(
    f"{c}: &{c} [*{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}]\n"
    for p, c in zip("abcdefgh", "bcdefghi"))


def test_alias_bomb_in_a_bin_is_refused_without_expanding(tmp_path, capsys):
    text = "notes:\n  " + _BOMB.replace("\n", "\n  ") + "\nparts:\n  CD4011BE: *i\n"
    line = _error_line(capsys, main(["bin", _bin(tmp_path, text)]))
    assert "alias" in line and ":2:" in line


def test_alias_bomb_in_a_spec_is_refused_without_expanding(tmp_path, capsys):
    text = "levels:\n  " + _BOMB.replace("\n", "\n  ") + "\ncycle: 8\nsignals: {a: {ASSERTED: [0], polarity: *i}}\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "alias" in line


def test_merge_keys_are_refused(tmp_path, capsys):
    text = "cycle: 8\nsignals:\n  a: &base {ASSERTED: [0]}\n  b:\n    <<: *base\n    polarity: low\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "alias" in line or "merge key" in line


def test_invalid_utf8_names_the_line_and_the_fix(tmp_path, capsys):
    path = tmp_path / "spec.yaml"
    path.write_bytes(b"cycle: 8\nname: caf\xe9\nsignals: {a: {high: [0]}}\n")
    line = _error_line(capsys, main(["decode", str(path), "--bin", _bin(tmp_path)]))
    assert f"{path}:2:" in line and "save the file as UTF-8" in line


def test_a_control_character_names_the_line(tmp_path, capsys):
    path = _spec(tmp_path, "cycle: 8\nsignals:\n  a: {ASSERTED: [0]}\nname: bell\x07\n")
    line = _error_line(capsys, main(["decode", path, "--bin", _bin(tmp_path)]))
    assert f"{path}:4: a control character" in line


def test_a_huge_file_is_refused_before_reading(tmp_path, capsys):
    path = _spec(tmp_path, SMALL + "# " + "x" * limits.FILE_BYTES.most + "\n")
    line = _error_line(capsys, main(["decode", path, "--bin", _bin(tmp_path)]))
    assert f"at most {limits.FILE_BYTES.most} bytes" in line


def test_deep_yaml_nesting_is_one_line(tmp_path, capsys):
    path = _spec(tmp_path, "cycle: 8\nsignals: " + "[" * 5000 + "]" * 5000 + "\n")
    _error_line(capsys, main(["decode", path, "--bin", _bin(tmp_path)]))


# ---------------------------------------------------------------- specs

def test_select_written_as_a_list(tmp_path, capsys):
    text = ("cycle: 8\nsignals:\n  a: {ASSERTED: [0]}\nswitches:\n"
            "  s: {select: [a], 'on': x, 'off': GND}\n")
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "select: expected the name of one signal, got a list [a]" in line


def test_cycle_past_the_one_limit_fails_before_the_expression_runs(tmp_path, capsys):
    text = "cycle: 16777216\nsignals:\n  a: {ASSERTED: 't % 2 == 0'}\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert f"cycle: expected at most {limits.CYCLE_TICKS.most} ticks, got 16777216" in line


def _many(n: int) -> str:
    return "cycle: 4096\nsignals:\n" + "".join(f"  s{i}: {{ASSERTED: [[{i}, {i + 3}]]}}\n" for i in range(n))


@pytest.mark.parametrize("count", [500, 3000])
def test_signal_count_limit(tmp_path, capsys, count):
    line = _error_line(capsys, main(["plan", _spec(tmp_path, _many(count)), "--bin", _bin(tmp_path)]))
    assert f"signals: expected at most {limits.SIGNALS.most} signals, got {count}" in line


def test_signals_times_cycle_limit(tmp_path, capsys):
    text = "cycle: 1048576\nsignals:\n" + "".join(f"  s{i}: {{ASSERTED: [{i}]}}\n" for i in range(8))
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "signal ticks in all (8 signals x cycle 1048576)" in line


def test_a_long_spec_expression_is_refused_before_parsing(tmp_path, capsys):
    text = "cycle: 64\nsignals:\n  a: {ASSERTED: '" + " or ".join(["t == 1"] * 400) + "'}\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "at most 1000 characters" in line


@pytest.mark.parametrize("value, words", [
    ("[a, b]", "got a list [a, b]"),
    ("", "got nothing"),
    ("2001-12-14", "got a date"),
    ("{x: 1}", "got a mapping"),
    ("yes", "got the yes/no value true"),
])
def test_values_are_described_in_words(tmp_path, capsys, value, words):
    text = f"name: {value}\ncycle: 8\nsignals:\n  a: {{ASSERTED: [0]}}\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert words in line and f"{tmp_path / 'spec.yaml'}:1:" in line


def test_bin_values_are_described_in_words(tmp_path, capsys):
    line = _error_line(capsys, main(["bin", _bin(tmp_path, "parts:\n  CD4011BE: [1, 2]\n")]))
    assert "got a list [1, 2]" in line
    line = _error_line(capsys, main(["bin", _bin(tmp_path, "parts:\n  CD4011BE:\n")]))
    assert "got nothing" in line
    line = _error_line(capsys, main(["bin", _bin(tmp_path, "- parts\n")]))
    assert "got a list" in line


def test_no_message_echoes_more_than_a_few_dozen_characters_of_input(tmp_path, capsys):
    text = f"cycle: 8\nsignals:\n  a: {{ASSERTED: [0], polarity: {'x' * 100_000}}}\n"
    line = _error_line(capsys, main(["decode", _spec(tmp_path, text), "--bin", _bin(tmp_path)]))
    assert "x" * (limits.ECHO_CHARS + 1) not in line and "(100000 characters)" in line
    line = _error_line(capsys, main(["bin", _bin(tmp_path, f"parts:\n  {'Q' * 5000}: 1\n")]))
    assert "Q" * (limits.ECHO_CHARS + 1) not in line


def test_describe_never_names_a_python_type():
    for value in (None, [], {}, datetime.date(2001, 12, 14), datetime.datetime(2001, 1, 1), b"x",
                  1.5, float("inf"), object(), "x" * 500):
        text = limits.describe(value)
        assert "<" not in text and "object" not in text and len(text) < 100


# ---------------------------------------------------------------- outputs

@pytest.fixture(scope="module")
def stepper():
    return str(example_path("stepper.yaml")), data_path("bins", "stepper.yaml").read_text()


def _plan_args(tmp_path, stepper, *extra):
    spec, drawer = stepper
    bin_path = tmp_path / "drawer.yaml"
    if not bin_path.exists():
        bin_path.write_text(drawer)
    return ["plan", spec, "--bin", str(bin_path), "--lacks", "0", *extra], bin_path


def test_no_output_is_written_when_one_path_is_bad(tmp_path, capsys, stepper):
    (tmp_path / "out.json").write_text("old json")
    (tmp_path / "out.md").write_text("old md")
    argv, _ = _plan_args(tmp_path, stepper, "--json", str(tmp_path / "out.json"),
                         "--wiring", str(tmp_path / "out.md"), "--verilog", str(tmp_path / "nodir" / "out.v"))
    line = _error_line(capsys, main(argv))
    assert "--verilog" in line and "does not exist" in line
    assert (tmp_path / "out.json").read_text() == "old json"
    assert (tmp_path / "out.md").read_text() == "old md"


def test_an_output_never_replaces_the_bin(tmp_path, capsys, stepper):
    argv, bin_path = _plan_args(tmp_path, stepper, "--json", None, "--take")
    before = bin_path.read_bytes()
    argv[argv.index(None)] = str(bin_path)
    line = _error_line(capsys, main(argv))
    assert "is the bin; an output never replaces it" in line
    assert bin_path.read_bytes() == before
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml"]


def test_an_output_never_replaces_the_spec(tmp_path, capsys, stepper):
    spec = tmp_path / "spec.yaml"
    spec.write_text(SMALL.replace("ASSERTED", ASSERTED))
    line = _error_line(capsys, main(["plan", str(spec), "--bin", _bin(tmp_path), "--wiring", str(spec)]))
    assert "is the spec" in line


def test_empty_output_path_and_two_standard_outputs(tmp_path, capsys, stepper):
    argv, _ = _plan_args(tmp_path, stepper, "--wiring", "")
    assert "got nothing" in _error_line(capsys, main(argv))
    argv, _ = _plan_args(tmp_path, stepper, "--wiring", "-", "--svg", "-")
    assert "standard output" in _error_line(capsys, main(argv))


def test_dash_means_standard_output_for_every_text_output(tmp_path, capsys, stepper):
    argv, _ = _plan_args(tmp_path, stepper, "--wiring", "-", "--json", str(tmp_path / "p.json"))
    assert main(argv) == 0
    out = capsys.readouterr().out
    assert out.startswith("# Wiring list: ")
    assert not (tmp_path / "-").exists() and (tmp_path / "p.json").exists()
    assert not [n for n in os.listdir(tmp_path) if n.endswith(".binsynth-tmp")]


def test_a_failed_take_writes_no_output(tmp_path, capsys, stepper, monkeypatch):
    """The bin changes while the plan is made: the take refuses, and no output is replaced."""
    import synth.commands.plan

    argv, bin_path = _plan_args(tmp_path, stepper, "--json", str(tmp_path / "p.json"), "--take")
    (tmp_path / "p.json").write_text("old")
    real = synth.commands.plan.make_plan

    def plan_then_edit(*args, **kwargs):
        design = real(*args, **kwargs)
        bin_path.write_text(bin_path.read_text() + "# edited meanwhile\n")
        return design

    monkeypatch.setattr(synth.commands.plan, "make_plan", plan_then_edit)   # as plan's run calls it
    line = _error_line(capsys, main(argv))
    assert "the bin changed after the plan read it" in line
    assert (tmp_path / "p.json").read_text() == "old"
    assert bin_path.read_text().endswith("# edited meanwhile\n")
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml", "p.json"]


def test_a_take_writes_outputs_and_a_backup(tmp_path, capsys, stepper):
    argv, bin_path = _plan_args(tmp_path, stepper, "--json", str(tmp_path / "p.json"), "--take")
    before = bin_path.read_bytes()
    assert main(argv) == 0
    assert (tmp_path / "drawer.yaml.bak").read_bytes() == before
    assert bin_path.read_bytes() != before and (tmp_path / "p.json").exists()
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml", "drawer.yaml.bak", "p.json"]


def test_two_takes_at_once_never_lose_one(tmp_path):
    """Both takes start from the same bin: the lock lets one through, the other is refused."""
    catalog = load_catalog()
    path = tmp_path / "drawer.yaml"
    path.write_text("parts:\n  CD4011BE: 4\n  CD4040BE: 2\n")
    before = path.read_bytes()
    results: list[object] = []

    def take():
        try:
            results.append(take_from_bin(path, {"4011": 1}, catalog, expect=before).written)
        except InputError as exc:
            results.append(str(exc))

    threads = [threading.Thread(target=take) for _ in range(2)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert results.count(True) == 1, results
    assert any("changed after the plan read it" in str(r) for r in results)
    assert "CD4011BE: 3" in path.read_text()


def test_stray_temporaries_of_a_killed_take_are_removed(tmp_path):
    path = tmp_path / "drawer.yaml"
    path.write_text("parts:\n  CD4011BE: 4\n  CD4040BE: 2\n")
    stray = tmp_path / ".drawer.yaml.abc123.binsynth-tmp"
    stray.write_text("half a bin")
    take_from_bin(path, {"4011": 1}, load_catalog())
    assert not stray.exists()
    assert sorted(os.listdir(tmp_path)) == ["drawer.yaml", "drawer.yaml.bak"]
