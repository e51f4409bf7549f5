"""Every command through ``main(argv)``, with its values checked against outside facts.

Sources named beside each check:
- pinouts and gate functions: the datasheet tables in the project's reference
  notes (/work/shared/reference/hc-74.md: 74HC00, 74HC02, 74HC04, 74HC393;
  cmos-4000b.md: 4011 [st4011], 40106 [utc40106]); the wiring the commands
  print is evaluated here with those tables, not with binsynth's catalog;
- binary ripple counting (common practice: output Qk of a binary counter
  carries bit k-1 of the count, so tick t shows count t);
- the RC charging law v(t) = V (1 - exp(-t / RC)) (any circuits textbook):
  a step into RC reaches a threshold VT at t = RC ln(V / (V - VT));
- Boolean algebra by sympy.logic (a general-purpose library): the printed
  decode expressions are parsed and evaluated by sympy;
- exit codes from the format contract (section 5): 0 done, 2 bad input,
  3 the bin is short, 70 an internal error.
"""

from __future__ import annotations

import json
import math
import shutil
import subprocess
from pathlib import Path

import pytest
import sympy
from sympy.logic.boolalg import And, Not, Or

from synth import cli
from synth.commands import COMMANDS
from synth.exports import EXPORTERS
from synth.inventory import data_path, example_path

# (inputs, output) of each gate, by datasheet pinout (reference notes, see above)
GATES = {
    "74HC00": ("nand", [((1, 2), 3), ((4, 5), 6), ((9, 10), 8), ((12, 13), 11)]),
    "74HC02": ("nor", [((2, 3), 1), ((5, 6), 4), ((8, 9), 10), ((11, 12), 13)]),
    "74HC04": ("not", [((1,), 2), ((3,), 4), ((5,), 6), ((9,), 8), ((11,), 10), ((13,), 12)]),
}
OPS = {"nand": lambda xs: not all(xs), "nor": lambda xs: not any(xs), "not": lambda xs: not xs[0]}
HC393_FIRST_COUNTER = {3: 0, 4: 1, 5: 2, 6: 3}   # 1Q0..1Q3 on pins 3-6: count bit 0..3


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = cli.main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def evaluate_wiring(wires: list[dict], parts: dict[str, str], inputs: dict[str, bool]) -> dict[str, bool]:
    """Net levels of a gate wiring, each gate's function and pins taken from the datasheet tables."""
    net_of = {(p["ref"], p["pin"]): w["net"] for w in wires for p in w["pins"]}
    levels = {"VDD": True, "VSS": False, **inputs}
    for _ in range(len(net_of)):          # settle: at most one pass per net
        for (ref, pin), net in net_of.items():
            if parts.get(ref) not in GATES:
                continue
            op, units = GATES[parts[ref]]
            for ins, out in units:
                if pin == out and all(net_of.get((ref, i)) in levels for i in ins):
                    levels[net] = OPS[op]([levels[net_of[(ref, i)]] for i in ins])
    return levels


# ---------------------------------------------------------------- every command is registered

def test_every_command_has_a_test_here():
    tested = {"parts", "bin", "decode", "plan", "substitute", "delay", "demo"}
    assert set(COMMANDS) == tested


def test_no_command_prints_help_and_exits_2(capsys):
    code, out, _ = run(capsys)
    assert code == 2 and "COMMAND" in out


def test_unknown_option_is_exit_2(capsys):
    code, _, err = run(capsys, "plan", "x.yaml")          # --bin is required
    assert code == 2 and "--bin" in err


# ---------------------------------------------------------------- parts

def test_parts_shows_the_4011_pinout(capsys):
    code, out, _ = run(capsys, "parts", "4011")
    rows = {line.split()[0]: line.split()[1:] for line in out.splitlines()
            if line[:1].isdigit() and len(line.split()) >= 3}
    assert code == 0
    # [st4011]: gate A is pins 1, 2 -> 3; VSS 7, VDD 14
    assert rows["1"][:3] == ["1A", "A", "input"] and rows["3"][:3] == ["1Y", "A", "output"]
    assert rows["7"][0] == "VSS" and rows["14"][0] == "VDD"


def test_parts_lists_a_family_by_function(capsys):
    code, out, _ = run(capsys, "parts", "--family", "4000B", "--function", "counter")
    assert code == 0
    assert "4040" in out and "12-stage binary ripple counter" in out   # the catalog title (our own style)
    assert "74HC" not in out


def test_parts_unknown_type_is_one_line_exit_2(capsys):
    code, out, err = run(capsys, "parts", "ZZZ9")
    assert code == 2 and err.count("\n") == 1 and "ZZZ9" in err


# ---------------------------------------------------------------- bin

def test_bin_counts_the_chips_and_gates(capsys):
    code, out, _ = run(capsys, "bin", str(data_path("bins", "sample_hold.yaml")))
    assert code == 0
    # the bin file lists 9 chips; a 4011 holds four 2-input NANDs (datasheet), two of them: 8
    assert "9 usable chips at 5 V" in out
    assert any(line.split()[:4] == ["2-input", "NAND", "8", "2"] for line in out.splitlines())


def test_bin_with_an_unknown_marking_names_file_and_line(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text("parts:\n  CD4011BE: 1\n  XQ9999: 2\n")
    code, _, err = run(capsys, "bin", str(bad))
    assert code == 2 and err.startswith(f"binsynth: {bad}:3") and err.count("\n") == 1


def test_missing_file_is_exit_2(tmp_path, capsys):
    code, _, err = run(capsys, "bin", str(tmp_path / "nowhere.yaml"))
    assert code == 2 and "nowhere.yaml" in err and err.count("\n") == 1


# ---------------------------------------------------------------- decode

def _sympy_expr(text: str, names: list[str]):
    """A printed decode (Q6'·Q5 + Q6) as a sympy expression."""
    symbols = {n: sympy.Symbol(n) for n in names}
    terms = []
    for term in text.split(" + "):
        literals = []
        for lit in term.split("·"):
            literals.append(Not(symbols[lit[:-1]]) if lit.endswith("'") else symbols[lit])
        terms.append(And(*literals))
    return Or(*terms)


def test_decode_expressions_give_the_spec_waveforms(capsys):
    code, out, _ = run(capsys, "decode", str(example_path("sample_hold.yaml")),
                       "--bin", str(data_path("bins", "sample_hold.yaml")), "--json")
    assert code == 0
    body = json.loads(out)
    names = [v["net"] for v in body["counter"]["variables"]]
    # examples/sample_hold.yaml, written out: asserted ticks (ready has don't-cares at 38, 39)
    wanted = {"track": set(range(0, 24)), "convert": {28, 29}, "frame": {0}, "ready": set(range(40, 64))}
    dont_care = {"ready": {38, 39}}
    for signal, ticks in wanted.items():
        entry = body["signals"][signal]
        expr = _sympy_expr(entry["expression"], names)
        for t in range(64):
            bits = {sympy.Symbol(n): bool(t >> i & 1) for i, n in enumerate(names)}   # binary count
            level = bool(expr.subs(bits))
            if entry["phase"] == "complement":
                level = not level
            if t not in dont_care.get(signal, ()):
                assert level == (t in ticks), (signal, t)


# ---------------------------------------------------------------- plan

@pytest.fixture(scope="module")
def stepper_plan(tmp_path_factory):
    out = tmp_path_factory.mktemp("stepper")
    argv = ["plan", str(example_path("stepper.yaml")), "--bin", str(data_path("bins", "stepper.yaml")),
            "--lacks", "0", "--json", str(out / "plan.json"), "--verilog", str(out / "plan.v"),
            "--wiring", str(out / "wiring.md")]
    code = cli.main(argv)
    return code, out


def test_plan_wiring_drives_the_stepper_phases(stepper_plan):
    code, out = stepper_plan
    assert code == 0
    plan = json.loads((out / "plan.json").read_text())
    parts = {c["ref"]: c["part"] for c in plan["chips"]}
    counter = [ref for ref, part in parts.items() if part == "74HC393"]
    assert len(counter) == 1
    net_of = {(p["ref"], p["pin"]): w["net"] for w in plan["wires"] for p in w["pins"]}
    # examples/stepper.yaml, written out (a range [a, b] is ticks a..b-1): three ticks per
    # phase and one tick of dead time after each, index at tick 0
    wanted = {"phase_a": range(0, 3), "phase_b": range(4, 7), "phase_c": range(8, 11),
              "phase_d": range(12, 15), "index": range(0, 1)}
    for t in range(16):
        count = {net_of[(counter[0], pin)]: bool(t >> bit & 1)
                 for pin, bit in HC393_FIRST_COUNTER.items() if (counter[0], pin) in net_of}
        levels = evaluate_wiring(plan["wires"], parts, count)
        for name, ticks in wanted.items():
            signal = plan["signals"][name]
            level = levels[signal["net"]]
            asserted = level if signal["polarity"] == "high" else not level
            assert asserted == (t in ticks), (name, t)


def test_plan_powers_every_chip_on_its_datasheet_pins(stepper_plan):
    _, out = stepper_plan
    plan = json.loads((out / "plan.json").read_text())
    rails = {w["net"]: {(p["ref"], p["pin"]) for p in w["pins"]} for w in plan["wires"]
             if w["net"] in ("VDD", "VSS")}
    for chip in plan["chips"]:   # every part here is a 14-pin 74HC: VCC 14, GND 7 (hc-74.md)
        assert (chip["ref"], 14) in rails["VDD"] and (chip["ref"], 7) in rails["VSS"]


def test_plan_wiring_list_has_a_checkbox_per_wire_and_the_cautions(stepper_plan):
    _, out = stepper_plan
    text = (out / "wiring.md").read_text()
    assert "- [ ]" in text
    assert "ESD" in text or "static" in text


@pytest.mark.skipif(shutil.which("iverilog") is None, reason="Icarus Verilog is not installed")
def test_plan_verilog_compiles_in_icarus(stepper_plan):
    _, out = stepper_plan
    result = subprocess.run(["iverilog", "-g2001", "-o", "/dev/null", str(out / "plan.v")],
                            capture_output=True, text=True, check=False)
    assert result.returncode == 0, result.stderr


def test_plan_prints_the_cautions(capsys):
    code, out, _ = run(capsys, "plan", str(example_path("stepper.yaml")),
                       "--bin", str(data_path("bins", "stepper.yaml")), "--lacks", "0")
    assert code == 0
    assert "ESD" in out and "floating" in out


def test_plan_short_bin_is_exit_3(capsys, tmp_path):
    # no part of this bin inverts, and row0 (asserted at tick 1, not at tick 17, whose
    # counter outputs include tick 1's) needs an inversion: provably short
    stock = tmp_path / "and_or.yaml"
    stock.write_text("parts:\n  74HC4040: 1\n  74HC08: 4\n  74HC32: 4\n")
    code, _, err = run(capsys, "plan", str(example_path("led_scanner.yaml")),
                       "--bin", str(stock), "--lacks", "0", "--fix", "glitches")
    assert code == 3 and "cannot realise" in err and err.count("\n") == 1


def test_plan_negative_lacks_is_exit_2(capsys):
    code, _, err = run(capsys, "plan", "x.yaml", "--bin", "y.yaml", "--lacks", "-1")
    assert code == 2 and "--lacks" in err


# ---------------------------------------------------------------- substitute

def test_substitute_nand4_wiring_is_a_4_input_nand(capsys):
    code, out, _ = run(capsys, "substitute", "nand4", "--bin", str(data_path("bins", "stepper.yaml")),
                       "--limit", "2", "--json")
    assert code == 0
    body = json.loads(out)
    assert body["inputs"] == ["a", "b", "c", "d"] and len(body["ways"]) == 2
    for way in body["ways"]:
        parts = {u["ref"]: u["part"] for u in way["units"]}
        for n in range(16):
            inputs = {name: bool(n >> i & 1) for i, name in enumerate("abcd")}
            levels = evaluate_wiring(way["wires"], parts, inputs)
            assert levels[way["output"]["net"]] == (not all(inputs.values())), (way["rank"], n)
    first = body["ways"][0]
    # two 2-input NAND packages cannot make NAND4 from one chip; 4 gates is the textbook minimum
    # with 2-input gates (NAND-NAND-NOR-invert tree): De Morgan, NOT(abcd) = NOT(ab) + NOT(cd)
    assert (first["chips"], first["gates"]) == (2, 4)


# ---------------------------------------------------------------- delay

def test_delay_into_a_plain_input_is_rc_ln2(capsys):
    code, out, _ = run(capsys, "delay", "50us", "--bin", str(data_path("bins", "stepper.yaml")), "--json")
    body = json.loads(out)
    assert code == 0 and body["receiver"] == "plain-input"
    # a plain CMOS input switches near VDD/2: t = RC ln(5 / (5 - 2.5)) = RC ln 2
    assert body["delay_typ_s"] == pytest.approx(body["r_ohm"] * body["c_farad"] * math.log(2), rel=1e-12)
    # inventory/bins/stepper.yaml holds 1k, 10k, 47k and 10n, 100n, 1u
    assert body["r_ohm"] in (1e3, 10e3, 47e3) and body["c_farad"] in (10e-9, 100e-9, 1e-6)


def test_delay_into_the_bins_schmitt_inverter(capsys):
    code, out, _ = run(capsys, "delay", "100us", "--bin", str(data_path("bins", "adc_staircase.yaml")),
                       "--json")
    body = json.loads(out)
    assert code == 0 and body["receiver"] == "40106"
    # 40106 VT+ at 5 V: 2.2 / 2.9 / 3.6 V (RCA/TI limits as printed by UTC CD40106, [utc40106])
    assert body["thresholds_v"]["vt_plus"] == {"min": 2.2, "typ": 2.9, "max": 3.6}
    rc = body["r_ohm"] * body["c_farad"]
    assert body["rising_s"]["typ"] == pytest.approx(rc * math.log(5 / (5 - 2.9)), rel=1e-12)
    assert body["rising_s"]["min"] == pytest.approx(rc * math.log(5 / (5 - 2.2)), rel=1e-12)
    # the adc bin's values (inventory/bins/adc_staircase.yaml)
    assert body["r_ohm"] in (1e3, 4.7e3, 10e3, 47e3, 100e3)
    assert body["c_farad"] in (100e-12, 1e-9, 2.2e-9, 4.7e-9, 10e-9, 100e-9)


def test_delay_plain_text_names_the_values(capsys):
    code, out, _ = run(capsys, "delay", "50us", "--bin", str(data_path("bins", "stepper.yaml")))
    assert code == 0 and "10 kΩ" in out and "10 nF" in out and "ln" in out


def test_delay_with_a_bad_time_is_exit_2(capsys):
    code, _, err = run(capsys, "delay", "fast", "--bin", str(data_path("bins", "stepper.yaml")))
    assert code == 2 and err.startswith("binsynth: delay:") and err.count("\n") == 1


# ---------------------------------------------------------------- demo

def test_demo_writes_every_output(tmp_path, capsys):
    code, out, _ = run(capsys, "demo", "--out", str(tmp_path / "demo"))
    assert code == 0
    folder = tmp_path / "demo"
    names = sorted(p.name for p in folder.iterdir())
    assert names == sorted(entry.file_name for entry in EXPORTERS)
    assert names == ["analog.cir", "plan.json", "plan.v", "plan.vcd", "report.html", "timing.svg", "wiring.md"]
    plan = json.loads((folder / "plan.json").read_text())
    assert plan["name"] == "sh-bench" and plan["counter"]["cycle"] == 64
    assert "files written:" in out
    # VCD header per IEEE 1364-2001 section 18: $timescale ... $enddefinitions
    vcd = (folder / "plan.vcd").read_text()
    assert "$timescale" in vcd and "$enddefinitions" in vcd


# ---------------------------------------------------------------- internal errors

@pytest.fixture
def broken_parts(monkeypatch, tmp_path):
    """``parts`` made to fail with a bug; reports land in a temporary cache folder."""
    from synth.commands import parts

    def explode(args):
        raise ZeroDivisionError("a stand-in bug")

    monkeypatch.setattr(parts, "run", explode)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    return tmp_path / "cache" / "binsynth"


def test_internal_error_is_one_line_exit_70_with_a_saved_report(broken_parts, capsys):
    code, out, err = run(capsys, "parts", "4011")
    assert code == 70 and out == ""
    assert err.count("\n") == 1
    assert err.startswith("binsynth: internal error; details saved to ")
    assert err.endswith(", please attach it to a report\n")
    saved = Path(err.split("details saved to ")[1].split(", please")[0])
    assert saved.parent == broken_parts
    text = saved.read_text()
    assert "ZeroDivisionError: a stand-in bug" in text and "Traceback" in text
    assert "command: binsynth parts 4011" in text


@pytest.mark.parametrize("argv", [["--debug", "parts", "4011"], ["parts", "4011", "--debug"]])
def test_debug_lets_the_traceback_through(broken_parts, argv):
    with pytest.raises(ZeroDivisionError):
        cli.main(argv)
    assert not broken_parts.exists() or not any(broken_parts.iterdir())


def test_unwritable_cache_falls_back_to_the_temp_folder(broken_parts, monkeypatch, tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("")
    monkeypatch.setenv("XDG_CACHE_HOME", str(blocker))        # a file: no folder can be made in it
    monkeypatch.setenv("TMPDIR", str(tmp_path))
    monkeypatch.setattr("tempfile.tempdir", None)
    code, _, err = run(capsys, "parts", "4011")
    assert code == 70 and f"details saved to {tmp_path}" in err
