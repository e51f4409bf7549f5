"""The three verdicts (formats.md sections 3 and 5): planned, impossible (exit 3, with a
reason a person can check), not_found (exit 4, what was proven and what to try).

Outside checks: the monotonicity argument behind "no inverting gate" is checked by a
brute force written here (AND and OR gates compose to monotone functions, a textbook
fact: a function that falls where no input falls needs an inversion); exit codes and
JSON keys are the ones formats.md names.
"""

from __future__ import annotations

import json
import re
import shutil

import pytest

from synth.cli import main

LOW_HALF = """\
name: low-half
cycle: 16
signals:
  early:
    high: [[0, 8]]
"""


def write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(text)
    return path


def falls_where_no_input_falls(on: set[int], nbits: int) -> tuple[int, int] | None:
    """Brute force: states a, b with every bit of a set in b, asserted at a and not at b."""
    for a in range(1 << nbits):
        for b in range(1 << nbits):
            if a & b == a and a in on and b not in on:
                return a, b
    return None


def test_a_bin_without_inverting_means_is_impossible_with_the_reason(tmp_path, capsys):
    spec = write(tmp_path, "spec.yaml", LOW_HALF)
    stock = write(tmp_path, "bin.yaml", "parts:\n  4040: 1\n  4081: 2\n  4071: 1\n")
    out = tmp_path / "plan.json"
    assert main(["plan", str(spec), "--bin", str(stock), "--json", str(out)]) == 3
    err = capsys.readouterr().err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1
    assert "inverts" in err
    doc = json.loads(out.read_text())
    assert doc["format"] == "binsynth-plan/2" and doc["verdict"] == "impossible"
    assert doc["short"] and doc["short"][0]["what"] == "inverting gate"
    assert doc["short"][0]["have"] == 0 and doc["short"][0]["fix"]
    # the two counter states the reason names really are a fall no monotone circuit makes
    a, b = map(int, re.search(r"state (\d+) and low at state (\d+)", doc["reason"]).groups())
    on = set(range(8))                       # asserted while t < 8 (4 counter bits)
    assert a & b == a and a in on and b not in on
    assert falls_where_no_input_falls(on, 4) is not None


def test_when_the_effort_runs_out_the_verdict_is_not_found(tmp_path, capsys):
    # a count of 15 needs an AND of four bits; with only 2-input NANDs and a tiny work
    # budget nothing may be found, but nothing is proven impossible either: exit 4 or a plan
    spec = write(tmp_path, "spec.yaml", "name: c15\ncycle: 16\nsignals:\n  s:\n    high: [15]\n")
    stock = write(tmp_path, "bin.yaml", "parts:\n  4040: 1\n  4011: 2\n")
    out = tmp_path / "plan.json"
    code = main(["plan", str(spec), "--bin", str(stock), "--json", str(out), "--effort", "quick"])
    doc = json.loads(out.read_text())
    assert code in (0, 4)
    assert doc["verdict"] == ("planned" if code == 0 else "not_found")


def test_a_planned_json_says_what_is_known_about_the_minimum(tmp_path, capsys):
    spec = write(tmp_path, "spec.yaml", "name: c15\ncycle: 16\nsignals:\n  s:\n    high: [15]\n")
    stock = write(tmp_path, "bin.yaml", "parts:\n  4040: 1\n  4082: 1\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-", "--effort", "quick"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["verdict"] == "planned" and doc["short"] == []
    # one 4-input AND of one 4082 is the only gate needed: one chip, proven by counting
    assert doc["reason"] == "1 logic chip: proven minimum"


def test_effort_names_are_checked(tmp_path, capsys):
    spec = write(tmp_path, "spec.yaml", LOW_HALF)
    stock = write(tmp_path, "bin.yaml", "parts:\n  4040: 1\n  4011: 1\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--effort", "forever"]) == 2
    assert "--effort" in capsys.readouterr().err


def parity_functions(nbits: int) -> set[frozenset[int]]:
    """Brute force: every XOR of some bits, maybe inverted, as its set of true states."""
    out = set()
    for mask in range(1 << nbits):
        for flip in (0, 1):
            out.add(frozenset(m for m in range(1 << nbits) if (bin(m & mask).count("1") + flip) % 2))
    return out


def test_xor_and_inverters_alone_make_only_parity_functions(tmp_path, capsys):
    # t < 15 over a 32-tick cycle is no XOR of counter bits (brute force below), and XOR
    # and NOT gates compose to parity functions only (linear algebra over GF(2))
    spec = write(tmp_path, "spec.yaml", "name: p\ncycle: 32\nsignals:\n  s0:\n    high: [[0, 15]]\n")
    stock = write(tmp_path, "bin.yaml", "parts:\n  4040: 1\n  4070: 2\n  4069: 1\n")
    assert frozenset(range(15)) not in parity_functions(5)
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-"]) == 3
    captured = capsys.readouterr()
    doc = json.loads(captured.out)
    assert doc["verdict"] == "impossible" and "parity" in doc["reason"]
    assert "cannot" in captured.err


def test_every_countable_shortage_comes_at_once_before_mapping(tmp_path, capsys):
    # counted from the catalog: a 4520 holds two 4-stage binary counters (8 stages, a
    # 4096-tick cycle needs 12); two switches need two analog switch sections (none on
    # hand); a ladder and an RC oscillator need resistors, the oscillator a capacitor
    spec = write(tmp_path, "spec.yaml", """\
name: short-everything
clock: {frequency: 20 kHz, source: oscillator}
cycle: 4096
signals:
  strobe:
    high: "t % 16 == 15"
levels:
  stair:
    bits: [4, 5, 6, 7]
    kind: r2r
switches:
  a_in: {select: strobe, on: stair, off: GND}
  b_in: {select: strobe, on: stair, off: GND}
""")
    stock = write(tmp_path, "bin.yaml", "parts:\n  4520: 1\n  4011: 2\n  40106: 1\n")
    assert main(["plan", str(spec), "--bin", str(stock), "--json", "-"]) == 3
    captured = capsys.readouterr()
    doc = json.loads(captured.out)
    assert doc["verdict"] == "impossible"
    assert sorted(item["what"] for item in doc["short"]) == [
        "analog switch section", "capacitor", "counter stages", "resistor"]
    assert all(item["fix"] for item in doc["short"])
    switch = next(item for item in doc["short"] if item["what"] == "analog switch section")
    assert (switch["need"], switch["have"]) == (2, 0)
    assert len(captured.err.strip().splitlines()) == 1


TIGHT_SPEC = """\
name: tight-drawer
supply: 5 V
clock: {frequency: 20 kHz}
cycle: 256
signals:
  strobe:
    high: "t % 16 == 15"
  reset:
    high: "17 <= t % 64 < 49"
levels:
  stair:
    bits: [4, 5, 6, 7]
    kind: r2r
switches:
  dut_in:
    select: strobe
    on: stair
    off: GND
"""
TIGHT_BIN = """\
parts:
  4040: 1
  4073: 1
  4011: 2
  40106: 1
  4053: 1
resistors: [1k, 1k2, 1k5, 1k8, 2k2, 2k7, 3k3, 3k9, 4k7, 5k6, 6k8, 8k2, 10k, 12k, 15k, 18k, 22k,
            27k, 33k, 39k, 47k, 56k, 68k, 82k, 100k]
"""


def test_the_window_is_one_bit_xor_a_small_product():
    # brute force over every tick: 17 <= t % 64 < 49 is b5 XOR (b4 AND (b0|b1|b2|b3))
    for t in range(256):
        b = [(t >> i) & 1 for i in range(8)]
        assert (17 <= t % 64 < 49) == bool(b[5] ^ (b[4] & (b[0] | b[1] | b[2] | b[3])))


def hand_design(t: int) -> tuple[bool, bool]:
    """The hand design the tight drawer fits (written here, not the mapper's): strobe =
    AND3(AND3(b0, b1, b2), b3, b3); o = NAND(AND3(~b0, ~b1, ~b2), ~b3) (four Schmitt
    inverters); e = NAND(b4, o); reset = a spare 4053 section selecting e or ~e by b5."""
    b = [bool((t >> i) & 1) for i in range(8)]
    strobe = (b[0] and b[1] and b[2]) and b[3]
    o = not ((not b[0]) and (not b[1]) and (not b[2]) and (not b[3]))
    e = not (b[4] and o)
    reset = (not e) if not b[5] else e      # select low: the inverted net, high: e itself
    return strobe, reset


def test_the_hand_design_for_the_tight_drawer_meets_the_spec():
    # unit count: AND3 x3 (one 4073), NAND2 x2 (of 8 on two 4011), Schmitt inverters x5
    # (of 6 on one 40106), one spare SPDT of the 4053 (one of three; dut_in takes one)
    for t in range(256):
        assert hand_design(t) == (t % 16 == 15, 17 <= t % 64 < 49)


def test_a_tight_drawer_plans_and_cosimulates(tmp_path, capsys, catalog):
    # The case: it plans (exit 0) with a spare 4053 section as a 2:1 mux on the
    # switch's own package, and the exported Verilog run in Icarus Verilog (an outside
    # simulator) meets the spec tick by tick over two cycles.
    spec = write(tmp_path, "spec.yaml", TIGHT_SPEC)
    stock = write(tmp_path, "bin.yaml", TIGHT_BIN)
    code = main(["plan", str(spec), "--bin", str(stock), "--json", "-", "--lacks", "0"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 0 and doc["verdict"] == "planned"
    from synth.pipeline import make_plan

    plan = make_plan(spec, stock, catalog=catalog).plan
    switches = [c for c in plan.chips if c.role == "switch"]
    assert len(switches) == 1 and switches[0].part == "4053"      # one package for both
    purposes = sorted(switches[0].units_used.values())
    assert "switch dut_in" in purposes and any(not p.startswith("switch ") for p in purposes)
    assert sum(c.startswith("A switch section used as logic") for c in plan.cautions) == 1
    # TI CD4053B: INH (pin 6) high turns every switch off, so it is held at VSS; VEE (pin 7)
    # at VSS for a single supply; control low joins the common to the x throw (data 0)
    chip = switches[0]
    assert chip.pins[6] == "VSS" and chip.pins[7] == "VSS"
    mux = next(g for g in plan.network.gates if g.part == "4053")
    unit_id = next(u for u, purpose in chip.units_used.items() if purpose == mux.id)
    pins = {"A": (11, 12, 13, 14), "B": (10, 2, 1, 15), "C": (9, 5, 3, 4)}[unit_id]
    d0, d1, select = mux.inputs
    assert [chip.pins[p] for p in pins] == [select, d0, d1, mux.output]
    if shutil.which("iverilog") is None or shutil.which("vvp") is None:
        pytest.skip("Icarus Verilog is not installed (Debian package iverilog)")
    from cosim import run_plan

    period = 50_000_000        # 20 kHz in ps
    samples, _ = run_plan(plan, catalog, period, 512, tmp_path)
    for name, want in (("strobe", lambda t: t % 16 == 15), ("reset", lambda t: 17 <= t % 64 < 49)):
        high = plan.signals[name].polarity == "high"
        assert samples[name] == [want(t % 256) == high for t in range(512)], name
