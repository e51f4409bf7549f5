"""Names a practitioner reads: spec keys, their earlier names, and retired output labels.

Sources: formats.md v2 section 2 (the project's contract: ``asserted:`` replaces
``high:``, the old name still read with a one-line note, both given is an error;
a bare integer k is the window [k, k+1], also on its own); the project's
originality rule (output labels in plain words of our own, never the name of
an existing minimizer program).
"""

from __future__ import annotations

import contextlib
import io
import json
import re
import textwrap
import threading
import tomllib
from pathlib import Path

import pytest

from synth.cli import main
from synth.commands.decode import decode_blocks
from synth.counter import allocate
from synth.decode import derive
from synth.errors import SpecError
from synth.exports.wiring import driver_first, wiring_markdown
from synth.inventory import data_path, example_path, load_bin, load_catalog
from synth.netlist import pin_direction, wire_list
from synth.pipeline import make_plan
from synth.render import progress, to_plain
from synth.spec import OLD_KEYS, SIGNAL_KEYS, TOP_KEYS, load_spec
from synth.substitute import parse_target

EXAMPLES = ("sample_hold", "stepper", "led_scanner", "ultrasonic_burst", "adc_staircase")


def load(text: str, path: str = "bench.yaml"):
    return load_spec(path, text=textwrap.dedent(text))


# ---------------------------------------------------------------- asserted / high

def test_asserted_and_the_earlier_high_read_the_same():
    new = load("cycle: 16\nsignals:\n  s: {asserted: [[2, 5]], polarity: low}\n")
    old = load("cycle: 16\nsignals:\n  s: {high: [[2, 5]], polarity: low}\n")
    assert new.signals["s"].high == old.signals["s"].high == frozenset({2, 3, 4})
    assert new.notes == ()
    assert old.notes == ("bench.yaml:3: note: 'high:' is the earlier name of 'asserted:' and reads "
                         "the same; write asserted: from now on",)


def test_the_note_is_given_once_per_line_not_per_signal_set():
    spec = load("""\
        cycle: 16
        signals:
          a: {high: [0]}
          b: {high: [1]}
        """)
    assert [n.split(": note")[0] for n in spec.notes] == ["bench.yaml:3", "bench.yaml:4"]


def test_asserted_and_high_together_are_refused_on_the_line():
    with pytest.raises(SpecError) as caught:
        load("cycle: 16\nsignals:\n  s:\n    asserted: [0]\n    high: [1]\n")
    error = caught.value
    assert error.line == 5 and error.exit_code == 2
    assert "signals.s: both 'high' and 'asserted' are given" in error.message
    assert "keep only asserted:" in error.hint


def test_messages_name_the_key_as_the_file_spells_it():
    with pytest.raises(SpecError) as caught:
        load("cycle: 8\nsignals:\n  a: {high: [[0, 9]]}\n")
    assert caught.value.message.startswith("signals.a.high: window [0, 9] goes past")
    with pytest.raises(SpecError) as caught:
        load("cycle: 8\nsignals:\n  a: {asserted: [[0, 9]]}\n")
    assert caught.value.message.startswith("signals.a.asserted: window [0, 9] goes past")


@pytest.mark.parametrize("written, ticks", [
    ("9", {9}),                       # formats.md: `asserted: 9` is `asserted: [9]`
    ("[9]", {9}),
    ("[[9, 10]]", {9}),
    ("[3, [9, 11]]", {3, 9, 10}),
    ("0", {0}),
])
def test_a_bare_integer_is_one_tick(written, ticks):
    spec = load(f"cycle: 16\nsignals:\n  s: {{asserted: {written}}}\n")
    assert spec.signals["s"].high == frozenset(ticks)


def test_a_bare_integer_repeats_with_every_and_stays_inside_the_period():
    spec = load("cycle: 32\nsignals:\n  s: {asserted: 3, every: 8}\n")
    assert spec.signals["s"].high == frozenset({3, 11, 19, 27})
    with pytest.raises(SpecError) as caught:
        load("cycle: 32\nsignals:\n  s: {asserted: 8, every: 8}\n")
    assert "goes past every: 8" in caught.value.message and caught.value.line == 3


def test_a_bare_integer_dont_care_is_one_tick():
    spec = load("cycle: 16\nsignals:\n  s: {asserted: [[0, 4]], dont_care: 3}\n")
    assert spec.signals["s"].dont_care == frozenset({3})
    assert spec.signals["s"].high == frozenset({0, 1, 2})


# ---------------------------------------------------------------- staircases / levels

LADDER = """\
cycle: 16
signals:
  s: {asserted: [0]}
%s:
  ramp: {bits: [0, 1], colour: red}
"""


def test_staircases_is_the_key_and_levels_still_reads():
    good = LADDER.replace(", colour: red", "")
    new = load(good % "staircases")
    old = load(good % "levels")
    assert set(new.levels) == set(old.levels) == {"ramp"}
    assert new.levels["ramp"].bits == old.levels["ramp"].bits == (0, 1)
    assert (new.levels["ramp"].section, old.levels["ramp"].section) == ("staircases", "levels")
    assert new.notes == ()
    assert old.notes == ("bench.yaml:4: note: 'levels:' is the earlier name of 'staircases:' and "
                         "reads the same; write staircases: from now on",)


@pytest.mark.parametrize("key", ["staircases", "levels"])
def test_staircase_messages_name_the_key_as_written(key):
    with pytest.raises(SpecError) as caught:
        load(LADDER % key)
    assert caught.value.message == f"{key}.ramp: unknown key 'colour'"


def test_every_earlier_name_maps_to_a_current_key():
    assert OLD_KEYS == {"high": "asserted", "levels": "staircases"}
    assert OLD_KEYS["high"] in SIGNAL_KEYS and OLD_KEYS["levels"] in TOP_KEYS
    assert not set(OLD_KEYS) & (set(SIGNAL_KEYS) | set(TOP_KEYS))


def test_the_cli_prints_the_note_once_on_stderr(tmp_path, capsys):
    spec = tmp_path / "old.yaml"
    spec.write_text("cycle: 8\nsignals:\n  s: {high: [[0, 4]]}\n")
    assert main(["decode", str(spec), "--bin", str(data_path("bins", "sample_hold.yaml"))]) == 0
    err = capsys.readouterr().err
    assert err == (f"binsynth: {spec}:3: note: 'high:' is the earlier name of 'asserted:' and "
                   "reads the same; write asserted: from now on\n")


def test_shipped_examples_use_the_current_names():
    for name in EXAMPLES:
        text = example_path(f"{name}.yaml").read_text()
        for old in OLD_KEYS:
            assert f"{old}:" not in text.replace("polarity: high", ""), (name, old)
        assert load_spec(example_path(f"{name}.yaml")).notes == ()


# ---------------------------------------------------------------- retired labels in output

RETIRED = {
    "espresso": "the name of an existing minimizer program (the method is named in docs only)",
    "pyeda": "a library name, not a label",
    "either-polarity": "the spec's word is 'free' (--free-polarity)",
    "minterm": "the glitch table and remedies say 'count 28'",
    "transport_typ": "an internal analysis id: the output says 'typical delays'",
    "transport_max": "an internal analysis id: the output says 'worst case delays'",
    "inertial_typ": "an internal analysis id: the output says 'short pulses swallowed'",
    "spare input (input": "a spare input is named by chip and pin ('U5 pin 11')",
    "pair(s)": "counted nouns agree with their number (render.counted)",
    "way(s)": "counted nouns agree with their number (render.counted)",
    "[structure selection": "the first line says '4 logic chips: best found, at least 3 needed'",
}
"""Case-insensitive text no output may contain (why, beside each)."""

RETIRED_KEYS = {
    "supply": "supply_v (a number names its unit)",
    "vars": "variables (words spelled out, as the plan JSON has it)",
    "levels": "staircases (the spec's word), levels_v inside a staircase",
    "R": "r_ohm", "C": "c_farad", "2R": "r2_ohm", "Rs": "rs_ohm",
    "f_wanted": "wanted_hz", "f_nom": "nominal_hz", "f_min": "min_hz", "f_max": "max_hz",
    "load_ohms": "load_ohm", "driver_resistance": "driver_resistance_ohm",
    "thresholds": "thresholds_v", "r_on": "r_on_ohm", "delay_typ": "delay_typ_s",
}
"""JSON keys of an earlier style (docs/reading-a-plan.md, "Key style"), each with its successor."""

PLAN_FILES = ("json", "wiring", "verilog", "vcd", "svg", "spice", "report")


@pytest.fixture(scope="module")
def shipped_outputs(tmp_path_factory) -> dict[str, str]:
    """Every shipped example through plan (text and JSON) and decode, and the other commands."""
    out = tmp_path_factory.mktemp("outputs")
    texts: dict[str, str] = {}

    def run(key: str, argv: list[str], codes=(0,)) -> None:
        stdout, stderr = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
            code = main(argv)
        assert code in codes, (argv, stderr.getvalue())
        texts[key] = stdout.getvalue() + stderr.getvalue()

    for name in EXAMPLES:
        spec, stock = str(example_path(f"{name}.yaml")), str(data_path("bins", f"{name}.yaml"))
        files = {kind: out / f"{name}.{kind}" for kind in PLAN_FILES}
        run(f"plan {name}", ["plan", spec, "--bin", stock, "--lacks", "0",
                             *[arg for kind, path in files.items() for arg in (f"--{kind}", str(path))]],
            codes=(0, 3, 4))     # a bin that is short still prints what it says
        for kind, path in files.items():
            if path.exists():
                texts[f"plan {name} {kind}"] = path.read_text(encoding="utf-8")
        run(f"decode {name}", ["decode", spec, "--bin", stock])
        run(f"decode {name} json", ["decode", spec, "--bin", stock, "--json"])
        run(f"bin {name}", ["bin", stock])
    sample = str(data_path("bins", "stepper.yaml"))
    run("substitute", ["substitute", "nand4", "--bin", sample, "--limit", "1"])
    run("substitute json", ["substitute", "a & ~b", "--bin", sample, "--free-polarity", "--json"])
    run("delay", ["delay", "50us", "--bin", str(data_path("bins", "sample_hold.yaml"))])
    run("delay json", ["delay", "50us", "--bin", str(data_path("bins", "adc_staircase.yaml")), "--json"])
    run("parts", ["parts", "4040"])
    run("parts schmitt", ["parts", "4093"])
    run("parts switch", ["parts", "4066"])
    run("parts json", ["parts", "4093", "--json"])
    run("parts list", ["parts"])
    run("bin json", ["bin", sample, "--json"])
    return texts


@pytest.mark.parametrize("label", sorted(RETIRED))
def test_no_output_carries_a_retired_label(shipped_outputs, label):
    found = [key for key, text in shipped_outputs.items() if label.lower() in text.lower()]
    assert not found, f"{label!r} ({RETIRED[label]}) printed by: {', '.join(found)}"


def _keys(value, names_below: bool = False) -> set[str]:
    """Every key of a JSON document, except the names a user or the catalog chose
    (signals, switches, staircases, nets, refs, pins, parts) -- those are data, not keys."""
    found: set[str] = set()
    if isinstance(value, dict):
        for key, item in value.items():
            if not names_below:
                found.add(key)
            found |= _keys(item, key in NAMED_BY_DATA)
    elif isinstance(value, list):
        for item in value:
            found |= _keys(item)
    return found


NAMED_BY_DATA = {"signals", "switches", "staircases", "nets_external", "pin_notes", "units", "pins",
                 "rails", "settle_ns", "logic_chips_by_part", "parts", "ties", "power", "thresholds_v",
                 "r_on_ohm", "timing", "glitch_models", "glitches_by_model",
                 "source"}   # parts --json: which catalog section each source backs


def test_no_json_output_uses_a_key_of_the_earlier_style(shipped_outputs):
    """Plan, decode, delay, parts and bin JSON keep one key style (docs/reading-a-plan.md)."""
    docs = {key: json.loads(text) for key, text in shipped_outputs.items()
            if key.endswith("json") and text.lstrip().startswith(("{", "["))}
    assert {"plan sample_hold json", "decode sample_hold json", "delay json", "parts json", "bin json"} <= set(docs)
    for key, doc in docs.items():
        old = _keys(doc) & set(RETIRED_KEYS)
        assert not old, f"{key}: {', '.join(f'{k} (now {RETIRED_KEYS[k]})' for k in sorted(old))}"
    plan = docs["plan sample_hold json"]
    assert plan["supply_v"] == 5.0 and "staircases" in plan and "variables" in plan["counter"]
    assert json.loads(shipped_outputs["decode sample_hold json"])["format"] == "binsynth-decode/2"


def test_the_first_line_says_the_logic_chips_in_plain_words(shipped_outputs):
    """'4 logic chips: best found, at least 3 needed' -- the same words in the JSON reason."""
    for name in EXAMPLES:
        text, doc = shipped_outputs[f"plan {name}"], json.loads(shipped_outputs[f"plan {name} json"])
        first = text.splitlines()[0]
        logic = sum(1 for chip in doc["chips"] if chip["role"] == "logic")
        assert doc["reason"].startswith(f"{logic} logic chip{'' if logic == 1 else 's'}: "), doc["reason"]
        assert f"; {doc['reason']}; " in first, first
        assert re.search(r": (proven minimum|best found)(, at least \d+ needed)?", doc["reason"])


def test_glitch_table_names_each_analysis_in_plain_words(shipped_outputs):
    doc = json.loads(shipped_outputs["plan sample_hold json"])
    assert set(doc["glitch_models"]) == {"typical_delays", "worst_case_delays", "short_pulses_swallowed",
                                         "count_states"}
    assert {m for g in doc["glitches"] for m in g["models"]} <= set(doc["glitch_models"])
    table = shipped_outputs["plan sample_hold"].split("found by", 1)[1].split("\n\n", 1)[0]
    assert "count states, typical delays, worst case delays" in table


def test_oscillator_is_named_only_in_a_plan_that_has_one(shipped_outputs):
    for name in EXAMPLES:
        has = json.loads(shipped_outputs[f"plan {name} json"])["oscillator"] is not None
        for kind in ("", " wiring", " spice"):
            text = shipped_outputs[f"plan {name}{kind}"].lower()
            assert ("oscillator" in text) == has, (name, kind)


def test_the_spare_input_is_named_by_chip_and_pin(shipped_outputs):
    """The gate is a 4078 (8-input NOR/OR): its inputs A-H, pin 11 is G, pin 7 is VSS
    (TI CD4078B pinout, from memory; the catalog's pin table says the same)."""
    text = shipped_outputs["plan sample_hold"]
    assert re.search(r"wire U\d+ pin 11 \(G, a spare input of U\d+ gate A\) to CLK", text)


def test_a_note_explains_a_delivered_level_the_decode_shows_otherwise(shipped_outputs):
    """sample_hold's track has polarity: free; the decode's cheapest cover is its low form,
    the plan delivers it high: the plan says why, once."""
    decode = shipped_outputs["decode sample_hold"]
    plan = shipped_outputs["plan sample_hold"]
    assert re.search(r"^track\s+low\s", decode, re.M) and re.search(r"^track\s+high\s", plan, re.M)
    assert plan.count("note: track is delivered active high, while 'binsynth decode' shows it active low: "
                      "its polarity is free in the spec") == 1
    assert "note: convert is delivered" not in plan      # same level in both: no note


def test_cover_method_is_in_plain_words(shipped_outputs):
    methods = {json.loads(shipped_outputs[f"decode {name} json"])["cover"]["method"]
               for name in EXAMPLES}
    assert methods <= {"exact cover, proven minimal", "heuristic cover"}
    assert "(exact cover, proven minimal;" in shipped_outputs["decode sample_hold"]


# ---------------------------------------------------------------- one expression notation

@pytest.mark.parametrize("example", ["sample_hold", "stepper"])
def test_substitute_reads_back_every_decode_decode_prints(example):
    """Each printed decode, parsed by substitute, is the cover's own function at every count."""
    catalog = load_catalog()
    spec = load_spec(example_path(f"{example}.yaml"))
    stock = load_bin(data_path("bins", f"{example}.yaml"), catalog, spec.supply)
    decode = derive(spec, allocate(spec, stock, catalog))
    cover = decode.cover
    shown = to_plain(decode_blocks(spec, stock, decode))
    index = {name: i for i, name in enumerate(cover.var_names)}
    for name, signal in decode.signals.items():
        printed = signal.expression if signal.phase == "true" else f"({signal.expression})'"
        assert printed in shown
        target = parse_target(printed)
        for count in range(1 << cover.nvars):
            code = sum((count >> index[var] & 1) << i for i, var in enumerate(target.inputs))
            assert (code in target.on) == cover.signal_value(name, count), (name, printed, count)


@pytest.mark.parametrize("text, same", [
    ("a·b + c'", "a & b | ~c"),
    ("1Q3'·1Q2", "x & ~y"),        # inputs in name order: 1Q2 then 1Q3
    ("(a·b)'", "~(a & b)"),
    ("a * b", "a & b"),
])
def test_printed_and_typed_notations_mean_the_same(text, same):
    assert parse_target(text).on == parse_target(same).on


# ---------------------------------------------------------------- bin --diff sign

def test_bin_diff_plus_means_added_to_the_bin(tmp_path, capsys):
    older = tmp_path / "older.yaml"
    older.write_text("parts:\n  4011: 1\nresistors: [10k]\n")
    now = tmp_path / "now.yaml"
    now.write_text("parts:\n  4011: 3\n  4069: 1\nresistors: [10k, 22k]\n")
    assert main(["bin", str(now), "--diff", str(older)]) == 0
    out = capsys.readouterr().out
    assert out.splitlines()[0] == f"changes in {now} since {older} (+ added to the bin, - taken out)"
    assert "4011  1       3    +2" in out and "4069  0       1    +1" in out
    assert "resistors  22 kΩ  -" in out


# ---------------------------------------------------------------- delay needs units

@pytest.mark.parametrize("bare", ["50", "0.5", "1e-5"])
def test_delay_refuses_a_bare_number_and_asks_for_units(bare, capsys):
    stock = str(data_path("bins", "sample_hold.yaml"))
    assert main(["delay", bare, "--bin", stock]) == 2
    err = capsys.readouterr().err
    assert err == (f"binsynth: delay: expected a time with its unit, got the bare number {bare!r} "
                   f"(write the unit: {bare}us, {bare}ms or '{bare} s')\n")


def test_delay_with_units_still_plans():
    stock = str(data_path("bins", "sample_hold.yaml"))
    assert main(["delay", "50us", "--bin", stock]) == 0
    assert main(["delay", "0.05 ms", "--bin", stock]) == 0


# ---------------------------------------------------------------- part titles and pin names

def test_part_titles_follow_one_style_of_our_own():
    """'quad 2-input NAND': count word, what it is, gate names in capitals, no vendor phrasing."""
    catalog = load_catalog()
    for part_type, part in catalog.parts.items():
        title = part.function
        assert title == title.strip() and title[0].islower() or title[0].isdigit() or \
            title.startswith("BCD"), (part_type, title)
        for vendor_phrase in ("demultiplexer", ";", "trigger", "EXCLUSIVE", "bilateral", "converter", "up-counter"):
            assert vendor_phrase not in title, (part_type, title)
    assert catalog.parts["4011"].function == catalog.parts["74HC00"].function == "quad 2-input NAND"
    assert catalog.parts["4093"].function == catalog.parts["74HC132"].function == \
        "quad 2-input Schmitt NAND"
    assert catalog.parts["4040"].function == catalog.parts["74HC4040"].function == \
        "12-stage binary ripple counter"


def test_74hc393_pins_are_named_as_the_datasheet_prints_them():
    """NXP 74HC393 pin description: 1CP 1, 1MR 2, 1Q0-1Q3 3-6, GND 7 (datasheet, from memory)."""
    part = load_catalog().parts["74HC393"]
    names = dict(part.pins)
    assert [names[n] for n in range(1, 8)] == ["1CP", "1MR", "1Q0", "1Q1", "1Q2", "1Q3", "GND"]


# ---------------------------------------------------------------- wiring list direction

def test_every_wire_runs_from_the_driver_to_a_load():
    plan = make_plan(example_path("stepper.yaml"), data_path("bins", "stepper.yaml")).plan
    wires = driver_first(wire_list(plan))
    pin_wires = [w for w in wires if isinstance(w.to, tuple)]
    assert pin_wires
    for wire in pin_wires:
        drivers = [p for p in plan.nets[wire.net] if pin_direction(plan, *p) == "out"]
        if drivers:
            assert wire.frm == drivers[0] and pin_direction(plan, *wire.to) != "out", wire
    text = wiring_markdown(plan)
    assert "- [ ] U1 pin 3 (1Q0) -> " in text     # the counter output starts its wires


# ---------------------------------------------------------------- progress line

class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_shows_nothing_when_piped_and_nothing_for_quick_work():
    piped = io.StringIO()
    with progress("planning", stream=piped, after=0.0):
        pass
    assert piped.getvalue() == ""
    quick = _Terminal()
    with progress("planning", stream=quick, after=60.0):
        pass
    assert quick.getvalue() == ""


def test_progress_shows_a_line_on_a_terminal_for_long_work():
    terminal = _Terminal()
    shown = threading.Event()
    with progress("planning sh-bench", stream=terminal, after=0.0):
        for _ in range(200):
            if "planning sh-bench" in terminal.getvalue():
                shown.set()
                break
            threading.Event().wait(0.01)
    assert shown.is_set()


def test_commands_print_no_progress_text_when_stderr_is_piped(capsys):
    stock = str(data_path("bins", "sample_hold.yaml"))
    assert main(["decode", str(example_path("sample_hold.yaml")), "--bin", stock]) == 0
    assert capsys.readouterr().err == ""


# ---------------------------------------------------------------- dependencies

def test_sympy_is_a_test_dependency_only():
    """sympy is the tests' reference (sympy.logic); the package never imports it."""
    root = Path(__file__).resolve().parent.parent
    project = tomllib.loads((root / "pyproject.toml").read_text())["project"]
    assert not any(d.startswith("sympy") for d in project["dependencies"])
    assert any(d.startswith("sympy") for d in project["optional-dependencies"]["test"])
    for source in (root / "synth").rglob("*.py"):
        assert "sympy" not in source.read_text(encoding="utf-8"), source


def test_ladder_nodes_carry_no_inverted_style_suffix():
    """'_n' marks an inverted net (index_n); a ladder's inner nodes are taps, not inversions."""
    plan = make_plan(example_path("adc_staircase.yaml"), data_path("bins", "adc_staircase.yaml")).plan
    ladder_nets = {net for net in plan.nets if net.startswith("ramp")}
    assert ladder_nets == {"ramp", "ramp_tap0", "ramp_tap1", "ramp_tap2"}


def test_vt_plus_is_named_only_for_a_schmitt_input(capsys):
    """VT+ and VT- are the Schmitt thresholds (74HC14 / 40106 datasheets); a plain input switches
    near VDD/2 (common practice)."""
    assert main(["delay", "50us", "--bin", str(data_path("bins", "sample_hold.yaml"))]) == 0
    plain = capsys.readouterr().out
    assert "rising  (0 → VDD/2):" in plain and "VT+" not in plain.split("warnings:")[0]
    assert main(["delay", "50us", "--bin", str(data_path("bins", "adc_staircase.yaml"))]) == 0
    assert "rising  (0 → VT+):" in capsys.readouterr().out


def test_vt_plus_is_named_only_where_a_schmitt_input_is(shipped_outputs):
    """sample_hold's offered RC delays feed a plain CMOS input (its bin has no Schmitt part):
    no VT+ there, in the plan text or the SPICE deck; adc_staircase's oscillator is a 40106
    Schmitt inverter, whose VT+ / VT- the 40106 datasheet prints (UTC CD40106, [utc40106])."""
    for kind in ("", " spice", " wiring"):
        assert "VT+" not in shipped_outputs[f"plan sample_hold{kind}"], kind
    assert "a plain CMOS input (modelled as switching at" in shipped_outputs["plan sample_hold spice"]
    assert "_plain_lo SW(" in shipped_outputs["plan sample_hold spice"]
    assert "VT+" in shipped_outputs["plan adc_staircase"] and "VT+" in shipped_outputs["plan adc_staircase spice"]
