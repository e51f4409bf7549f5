"""Fuzzing the command line with bad specs, bins and arguments, in-process through ``main(argv)``.

Hypothesis (a general-purpose property-testing library) makes the inputs:
a small valid spec and bin with one value swapped for an odd one (nothing, a
list, a mapping, a date, huge and non-finite numbers, long text, control
characters, stray expression text), raw bytes spliced into the files, and
odd command-line values.  Whatever comes in, the contract of the command
line holds (exit 0, or 2 for bad input / 3 or 4 for a bin that falls short,
with one ``binsynth:`` line and never a traceback), and no message repeats
a long piece of the input.

CI runs a bounded, derandomized budget (the same examples on every machine);
``BINSYNTH_FUZZ_EXAMPLES=5000 python -m pytest tests/test_fuzz_inputs.py``
runs a longer search (see DEVELOPERS.md).  The catalog is read once for the
whole run: it is the same file every time, and reading it dominates a run.
"""

from __future__ import annotations

import contextlib
import io
import os
import tempfile
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import synth.inventory
from synth.cli import main
from synth.spec import SIGNAL_KEYS

ASSERTED = "asserted" if "asserted" in SIGNAL_KEYS else "high"
EXAMPLES = int(os.environ.get("BINSYNTH_FUZZ_EXAMPLES", "100"))
FUZZ = settings(max_examples=EXAMPLES, derandomize=True, deadline=None, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

LONG = "L0ng" * 40           # 160 characters: a message may quote at most ~60 of it
SPEC = {"name": "fuzz-bench", "supply": "5 V", "clock": {"frequency": "10 kHz"}, "cycle": 16,
        "signals": {"gate": {ASSERTED: [[0, 4]], "polarity": "low"},
                    "mark": {ASSERTED: "t % 8 == 3", "clear_of": {"gate": 1}},
                    "wide": {ASSERTED: [[2, 12]], "dont_care": [[12, 13]], "stretch": 1}},
        "switches": {"route": {"select": "gate", "on": "probe", "off": "GND"}}}
BIN = {"parts": {"CD4011BE": 2, "CD4040BE": 1, "CD4069UBE": 1, "CD4001BE": 1, "CD4053BE": 1},
       "resistors": ["1k", "10k", "100k"], "capacitors": ["1n", "10n"]}

ODD = st.one_of(
    st.none(), st.booleans(), st.integers(min_value=-2 ** 70, max_value=2 ** 70),
    st.sampled_from([0, -1, 1, 10 ** 6, 2 ** 64 + 1, 16777216, 1e308, float("inf"), float("nan"), 0.5]),
    st.sampled_from(["", " ", LONG, "5 mV", "-5 V", "1e400", "2001-12-14", "~" * 300, "((((t))))",
                     "t % 0 == 1", "t ** 99", "__import__('os')", "a\x07b", "caf\u00e9", "\u202e",
                     "[0, 4]", "{x: 1}", "*alias", "t == " + "9" * 400]),
    st.text(max_size=30),
    st.lists(st.integers(min_value=-5, max_value=40), max_size=4),
    st.lists(st.lists(st.integers(min_value=-5, max_value=40), max_size=3), max_size=3),
    st.dictionaries(st.sampled_from(["count", "x", "high", "asserted"]), st.integers(-3, 3), max_size=2),
)


def _paths(doc: object, prefix: tuple = ()) -> list[tuple]:
    """Every key path into a nested dict (lists are left whole)."""
    found = [prefix] if prefix else []
    if isinstance(doc, dict):
        for key, value in doc.items():
            found += _paths(value, prefix + (key,))
    return found


def _replaced(doc: dict, path: tuple, value: object) -> dict:
    copy = yaml.safe_load(yaml.safe_dump(doc))
    target = copy
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    return copy


@pytest.fixture(scope="module", autouse=True)
def catalog_read_once():
    catalog = synth.inventory.load_catalog()
    real = synth.inventory.load_catalog
    synth.inventory.load_catalog = lambda paths=None: catalog if paths is None else real(paths)
    yield
    synth.inventory.load_catalog = real


@pytest.fixture(scope="module")
def workdir():
    with tempfile.TemporaryDirectory(prefix="binsynth-fuzz-") as folder:
        yield Path(folder)


def _run(argv: list[str], *inputs: str) -> tuple[int, str]:
    """Run the command line; check the contract; return the exit code and stderr."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    text = err.getvalue()
    assert code in (0, 2, 3, 4), (argv, code, text)
    assert "Traceback" not in text, text
    if code:
        lines = [line for line in text.splitlines() if line.startswith("binsynth:")]
        assert len(lines) == 1, text
        for item in inputs:
            if len(item) > 80:
                assert item not in text, f"the message repeats {len(item)} characters of input"
    return code, text


def _dump(doc: object) -> str:
    return yaml.safe_dump(doc, allow_unicode=True, sort_keys=False, width=10 ** 6)


@FUZZ
@given(data=st.data())
def test_specs_with_one_odd_value(workdir, data):
    path = data.draw(st.sampled_from(_paths(SPEC)), label="key")
    value = data.draw(ODD, label="value")
    spec = workdir / "spec.yaml"
    spec.write_text(_dump(_replaced(SPEC, path, value)), encoding="utf-8")
    (workdir / "bin.yaml").write_text(_dump(BIN), encoding="utf-8")
    _run(["decode", str(spec), "--bin", str(workdir / "bin.yaml")], str(value))


@FUZZ
@given(data=st.data())
def test_bins_with_one_odd_value(workdir, data):
    path = data.draw(st.sampled_from(_paths(BIN) + [("parts", "CD4012BE"), ("notes",)]), label="key")
    value = data.draw(ODD, label="value")
    stock = workdir / "fuzz-bin.yaml"
    stock.write_text(_dump(_replaced(BIN, path, value)), encoding="utf-8")
    supply = data.draw(st.sampled_from(["5 V", "12", "3.3 V"]), label="supply")
    _run(["bin", str(stock), "--supply", supply], str(value))


@FUZZ
@given(data=st.data())
def test_bytes_spliced_into_the_files(workdir, data):
    which = data.draw(st.sampled_from(["spec", "bin"]), label="file")
    text = _dump(SPEC if which == "spec" else BIN).encode("utf-8")
    at = data.draw(st.integers(0, len(text)), label="at")
    cut = data.draw(st.integers(0, 8), label="cut")
    junk = data.draw(st.binary(max_size=12) | st.sampled_from(
        [b"\xff\xfe", b"\x00", b"&a ", b"*a", b"<<: ", b"\t", b"!!python/object:os.system ", b"{", b"]"]),
        label="junk")
    spec, stock = workdir / "spec.yaml", workdir / "bin.yaml"
    spec.write_bytes(text[:at] + junk + text[at + cut:] if which == "spec" else _dump(SPEC).encode())
    stock.write_bytes(text[:at] + junk + text[at + cut:] if which == "bin" else _dump(BIN).encode())
    _run(["decode", str(spec), "--bin", str(stock)])


COMMANDS = st.sampled_from([
    ["bin", "{bin}", "--supply", "{x}"],
    ["bin", "{x}"],
    ["bin", "{bin}", "--diff", "{x}"],
    ["decode", "{x}", "--bin", "{bin}"],
    ["decode", "{spec}", "--bin", "{x}"],
    ["substitute", "{x}", "--bin", "{bin}"],
    ["substitute", "nand2", "--bin", "{bin}", "--supply", "{x}"],
    ["substitute", "and3", "--bin", "{bin}", "--limit", "{x}"],
    ["parts", "{x}"],
    ["delay", "{x}", "--bin", "{bin}"],
    ["delay", "50us", "--bin", "{bin}", "--supply", "{x}"],
    ["delay", "50us", "--bin", "{bin}", "--r", "{x}"],
    ["delay", "50us", "--bin", "{bin}", "--part", "{x}"],
    ["plan", "{spec}", "--bin", "{bin}", "--lacks", "{x}", "--json", ""],
    ["plan", "{spec}", "--bin", "{bin}", "--json", "{x}", "--svg", "{x}"],
    ["plan", "{spec}", "--bin", "{bin}", "--wiring", "{spec}", "--vcd", "{x}"],
    ["demo", "--out", "{spec}", "{x}"],
])
ARGUMENT = st.one_of(st.sampled_from(["", "-", "--", "nan", "inf", "-5", "1e308", "0", LONG, "a & (",
                                      "~" * 90 + "a", "(" * 70 + "a" + ")" * 70, "and9", "xor1",
                                      "/", "/dev/null", ".", "no/such/file.yaml", "5 mV", "\x07", "1e400",
                                      "1e-30", "4k7", "plain", "CD40106BE"]),
                     st.text(alphabet=st.characters(blacklist_categories=["Cs"],
                                                    blacklist_characters="\x00"), max_size=40))


@FUZZ
@given(template=COMMANDS, value=ARGUMENT)
def test_odd_command_line_arguments(workdir, template, value):
    spec, stock = workdir / "args-spec.yaml", workdir / "args-bin.yaml"
    spec.write_text(_dump(SPEC), encoding="utf-8")
    stock.write_text(_dump(BIN), encoding="utf-8")
    argv = [part.format(spec=spec, bin=stock, x=value) if "{" in part else part for part in template]
    if argv[0] == "plan" and value not in ("", "-"):
        argv = argv + ["--wiring", ""]          # a plan is only run up to the path check
    as_path = template[-1] == "{x}" and template[-2] in ("--bin", "--diff") or template[:2] == ["bin", "{x}"] \
        or template[1] == "{x}" and template[0] == "decode" or "--json" in template
    _run(argv, *([] if as_path else [value]))       # a file's path is named in full, as given
    assert spec.read_text(encoding="utf-8") == _dump(SPEC)
