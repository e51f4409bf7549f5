"""The mapper checked against constructions from outside the project.

Sources, beside each check:

- Known constructions (common practice, any logic handbook's chapter on
  NAND/NOR realisations): a 4-input AND as two 3-input ANDs of one chip; XOR
  from four 2-input NANDs (the standard textbook circuit); NAND-only AND4 as
  two NAND2 + two inverting NANDs + NAND2 + inverting NAND (6 gates), 5 when
  the complement may be delivered; a NAND with joined inputs as an inverter.
- Minimality: a brute-force enumeration written here (breadth-first over
  every circuit of k two-input NAND or NOR gates, sets of truth tables) gives
  each 3-input function's fewest gates; the mapper must match it.
- Plans: an evaluator written here reads the plan JSON's wires and the
  catalog YAML's unit pin lists (datasheet data, not project code) and
  simulates every tick; the spec's windows are expanded here, not by the
  project's spec loader.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from synth.cli import main
from synth.inventory import Bin, load_catalog
from synth.minimize import Function
from synth.mapper import build_library, map_design

ROOT = Path(__file__).resolve().parent.parent
CATALOG = load_catalog()


def library(parts: dict[str, int], supply: float = 5.0):
    return build_library(Bin("test-bin", supply, dict(parts), [], [], [], {}, {}), CATALOG)


def map_one(parts, on, nvars, polarity="high", exact="auto"):
    """Map one signal asserted on the minterms ``on`` over x0..x{n-1}."""
    return map_design([Function("f", frozenset(on))], nvars, [f"x{i}" for i in range(nvars)],
                      library(parts), polarity={"f": polarity}, exact=exact)


# ---------------------------------------------------------------- known constructions

AND4 = [15]                      # x0 x1 x2 x3
XOR2 = [1, 2]


@pytest.mark.parametrize("part, on, nvars, polarity, gates, chips, source", [
    ("4073", AND4, 4, "high", 2, 1, "common practice: cascade two ANDs of a 4073 (triple AND3)"),
    ("74HC11", AND4, 4, "high", 2, 1, "common practice: cascade two ANDs of a 74HC11 (triple AND3)"),
    ("4011", XOR2, 2, "high", 4, 1, "standard textbook: XOR from four NAND2"),
    ("74HC00", XOR2, 2, "high", 4, 1, "standard textbook: XOR from four NAND2"),
    ("4011", AND4, 4, "high", 6, 2, "common practice: NAND-NAND AND4 needs 6 NAND2"),
    ("4011", AND4, 4, "free", 5, 2, "common practice: NAND4 as NAND2 pair, two inverters, NAND2"),
    ("4011", [0], 1, "high", 1, 1, "common practice: NAND with joined inputs inverts"),
    ("4001", [0], 1, "high", 1, 1, "common practice: NOR with joined inputs inverts"),
    ("4001", [0], 2, "high", 1, 1, "De Morgan: x0' x1' is one NOR2"),
])
def test_known_construction(part, on, nvars, polarity, gates, chips, source):
    net = map_one({part: 3}, on, nvars, polarity)
    assert len(net.gates) == gates, source
    assert sum(net.chips.values()) == chips, source
    assert net.proven_minimal, source


def test_inverter_is_a_nand_with_joined_inputs():
    # common practice: both inputs of the NAND on the signal (never one floating)
    net = map_one({"4011": 1}, [0], 1)
    (gate,) = net.gates
    assert gate.op == "nand" and gate.inputs == ("x0", "x0")


def test_and4_cascade_uses_one_chip_and_ties_nothing_floating():
    net = map_one({"74HC11": 1}, AND4, 4)
    assert net.chips == {"74HC11": 1}
    assert all(len(g.inputs) == 3 for g in net.gates)   # every pin of each AND3 has a net


# ---------------------------------------------------------------- minimality by brute force

def _input_tables(nvars: int) -> list[int]:
    return [sum(1 << m for m in range(1 << nvars) if m >> i & 1) for i in range(nvars)]


def brute_force_sizes(nvars: int, op, depth: int) -> dict[int, int]:
    """Fewest 2-input gates (``op`` on truth tables) computing each function, up to ``depth``.

    Breadth first over the sets of functions a circuit has computed so far:
    a circuit of k gates is its inputs plus k gate outputs, each gate taking
    two (possibly equal) earlier nodes.  Sets that repeat are explored once.
    """
    full = (1 << (1 << nvars)) - 1
    start = frozenset(_input_tables(nvars))
    best = {f: 0 for f in start}
    level = {start}
    for k in range(1, depth + 1):
        following = set()
        for nodes in level:
            ordered = sorted(nodes)
            for i, a in enumerate(ordered):
                for b in ordered[i:]:
                    f = op(a, b) & full
                    if f in nodes:
                        continue
                    best.setdefault(f, k)
                    if k < depth:
                        following.add(nodes | {f})
        level = following
    return best


NAND = lambda a, b: ~(a & b)   # noqa: E731
NOR = lambda a, b: ~(a | b)    # noqa: E731
BRUTE_DEPTH = {"4011": 7, "4001": 6}   # NAND2 to 7 gates (~3 s), NOR2 to 6 (~0.3 s)


@pytest.fixture(scope="module")
def brute_tables():
    return {"4011": brute_force_sizes(3, NAND, BRUTE_DEPTH["4011"]),
            "4001": brute_force_sizes(3, NOR, BRUTE_DEPTH["4001"])}


def test_brute_force_agrees_with_the_textbook():
    # standard textbook: XOR2 takes four NAND2; NOT takes one; AND2 two.
    sizes = brute_force_sizes(2, NAND, 5)
    assert sizes[0b0110] == 4 and sizes[0b0101] == 1 and sizes[0b1000] == 2


@pytest.mark.parametrize("part", ["4011", "4001"])
def test_every_three_input_function_is_mapped_in_the_fewest_gates(part, brute_tables):
    """All 256 functions of 3 variables (constants and plain variables need no gate)."""
    sizes = brute_tables[part]
    lib = library({part: 4})
    depth = BRUTE_DEPTH[part]
    wrong = []
    for table in range(256):
        on = frozenset(m for m in range(8) if table >> m & 1)
        net = map_design([Function("f", on)], 3, ["x0", "x1", "x2"], lib, polarity={"f": "high"})
        got = len(net.gates)
        if table in (0, 255):
            ok = got == 0
        elif table in sizes:
            ok = got == sizes[table] and net.proven_minimal
        else:                      # the brute force stopped: the optimum is deeper
            ok = got > depth
        if not ok:
            wrong.append((table, got, sizes.get(table)))
    assert not wrong, f"(truth table, mapper gates, brute-force gates): {wrong}"


# ---------------------------------------------------------------- windows of a long count

def network_as_sympy(network):
    """The mapped gates read into sympy.logic (written here from the gate ops'
    textbook meanings; mux: data[code of the selects])."""
    import sympy

    values = {net: sympy.Symbol(net) for net in network.inputs}
    values.update({"VDD": sympy.true, "VSS": sympy.false})
    ops = {"and": sympy.And, "or": sympy.Or, "xor": sympy.Xor}
    pending = list(network.gates)
    while pending:
        gate = next(g for g in pending if all(n in values for n in g.inputs))
        pending.remove(gate)
        ins = [values[n] for n in gate.inputs]
        base = gate.op.removeprefix("n").replace("xnor", "xor") if gate.op != "not" else "not"
        if gate.op in ("not", "buf"):
            out = sympy.Not(ins[0]) if gate.op == "not" else ins[0]
        elif gate.op == "xnor":
            out = sympy.Not(sympy.Xor(*ins))
        else:
            out = ops[base](*ins)
            out = sympy.Not(out) if gate.op in ("nand", "nor") else out
        values[gate.outputs[0]] = out
    return values


@pytest.mark.parametrize("lo, hi", [(341, 682), (1, 1023), (300, 301), (512, 640)])
def test_a_ten_bit_window_maps_as_comparator_chains(lo, hi):
    """A window lo <= x < hi of a 10-bit count needs two comparisons with
    constants, each a chain of at most one 2-input gate per bit (common
    practice: x >= a is x_i AND (x >= a below i) where a_i = 1, x_i OR (...)
    where a_i = 0).  The flat two-level cover of (341, 682) has 18 terms and
    about 90 gates; the mapper must find a multi-level form within 3 gates per
    bit, and the circuit must equal the window (checked in sympy.logic)."""
    import sympy

    nvars = 10
    on = frozenset(range(lo, hi))
    network = map_design([Function("w", on)], nvars, [f"x{i}" for i in range(nvars)],
                         library({"74HC00": 20, "74HC02": 20, "74HC04": 10}), polarity={"w": "high"})
    assert len(network.gates) <= 3 * nvars
    expr = network_as_sympy(network)[network.signals["w"].net]
    symbols = [sympy.Symbol(f"x{i}") for i in range(nvars)]
    truth = sympy.lambdify(symbols, expr, modules="math")
    for m in range(1 << nvars):
        level = bool(truth(*[bool(m >> i & 1) for i in range(nvars)]))
        asserted = level if network.signals["w"].polarity == "high" else not level
        assert asserted == (lo <= m < hi), m


def test_signals_sharing_a_sub_product_build_it_once():
    """Five 7-bit decodes x6 x5 x4 * (one code of x2 x1 x0): each alone is a
    six-input AND (5 AND2 each, 25 in all, plus 3 inverters); with the common
    sub-product x6 x5 x4 built once (common practice: share common terms) at
    most 2 + 5 * 3 AND2 and 3 inverters remain.  Each output is checked
    against the decode in sympy.logic."""
    import sympy

    nvars = 7
    codes = [0, 1, 2, 5, 7]
    funcs = [Function(f"s{i}", frozenset(m for m in range(128) if m >> 4 == 7 and m & 7 == code))
             for i, code in enumerate(codes)]
    network = map_design(funcs, nvars, [f"x{i}" for i in range(nvars)],
                         library({"74HC08": 10, "74HC04": 3}), polarity={f.name: "high" for f in funcs})
    assert len(network.gates) <= 2 + 5 * 3 + 3
    values = network_as_sympy(network)
    symbols = [sympy.Symbol(f"x{i}") for i in range(nvars)]
    for f in funcs:
        truth = sympy.lambdify(symbols, values[network.signals[f.name].net], modules="math")
        for m in range(1 << nvars):
            level = bool(truth(*[bool(m >> i & 1) for i in range(nvars)]))
            assert (level if network.signals[f.name].polarity == "high" else not level) == (m in f.on)


# ---------------------------------------------------------------- plans simulated from their JSON

CATALOG_DOCS = {}
for _path in sorted((ROOT / "inventory" / "catalog").glob("*.yaml")):
    CATALOG_DOCS.update(yaml.safe_load(_path.read_text())["parts"])

OPS = {"and": all, "nand": lambda v: not all(v), "or": any, "nor": lambda v: not any(v),
       "xor": lambda v: sum(v) % 2 == 1, "xnor": lambda v: sum(v) % 2 == 0,
       "not": lambda v: not v[0], "buf": lambda v: bool(v[0])}


def unit_inputs(unit: dict) -> list[int]:
    """A catalog unit's input pins (gates list them, inverters name one)."""
    return list(unit["inputs"]) if "inputs" in unit else [unit["input"]] if "input" in unit else []


def expand_windows(windows, cycle: int) -> set[int]:
    """Ticks asserted by a list of half-open windows / single ticks (formats.md section 2)."""
    ticks = set()
    for w in windows:
        a, b = (w, w + 1) if isinstance(w, int) else w
        ticks.update(range(a, b))
    return {t for t in ticks if t < cycle}


def simulate_plan(plan: dict, cycle: int) -> dict[str, set[int]]:
    """Ticks at which each plan signal is asserted, from wires + catalog unit pins only."""
    net_of = {}
    for wire in plan["wires"]:
        for pin in wire["pins"]:
            key = (pin["ref"], pin["pin"])
            assert key not in net_of, f"pin {key} is in two nets"
            net_of[key] = wire["net"]
    parts = {chip["ref"]: CATALOG_DOCS[chip["part"]] for chip in plan["chips"]}
    asserted = {name: set() for name in plan["signals"]}
    counters = [ref for ref, doc in parts.items() if doc["category"] == "counter"]
    assert len(counters) == 1, "the test's bins hold one 4040"
    stages = parts[counters[0]]["units"][0]["stages"]
    reset_pin = parts[counters[0]]["units"][0]["reset"]["pin"]
    for count in range(cycle + 1):          # count == cycle: the state the reset clears
        values = {"VDD": True, "VSS": False}
        for stage, pin in stages.items():
            net = net_of.get((counters[0], pin))
            if net:
                values[net] = bool(count >> (stage - 1) & 1)
        changed = True
        while changed:
            changed = False
            for ref, doc in parts.items():
                if doc["category"] == "counter":
                    continue
                for unit in doc["units"]:
                    if unit["type"] == "decoder":
                        changed |= decoder_step(ref, unit, net_of, values)
                        continue
                    out = net_of.get((ref, unit["output"]))
                    ins = [net_of.get((ref, p)) for p in unit_inputs(unit)]
                    if out is None or any(n is None for n in ins):
                        continue
                    if all(n in values for n in ins):
                        op = unit.get("op") or {"inverter": "not", "buffer": "buf"}[unit["type"]]
                        level = OPS[op]([values[n] for n in ins])
                        if values.get(out) != level:
                            assert out not in values, f"net {out} driven twice"
                            values[out] = level
                            changed = True
        reset_net = net_of.get((counters[0], reset_pin))
        reset_level = values.get(reset_net, False)
        if count == cycle:         # a power of two wraps by itself; else the reset must clear it
            assert reset_level or cycle & (cycle - 1) == 0, "the count is not cleared at the cycle"
            break
        assert not reset_level, f"reset asserted during tick {count}"
        for name, sig in plan["signals"].items():
            src = sig["source"]
            net = net_of[(src["ref"], src["pin"])] if src else sig["net"]   # None: a rail
            level = values[net]
            if level == (sig["polarity"] == "high"):
                asserted[name].add(count)
    return asserted


def decoder_step(ref: str, unit: dict, net_of: dict, values: dict) -> bool:
    """A decoder unit per the Philips 74HC/HCT138 function table (outputs HIGH
    unless every enable is at its active level; then the output numbered by the
    selects, A0 the lsb, goes to its active level)."""
    sel = [net_of.get((ref, p)) for p in unit["selects"]]
    ens = [(net_of.get((ref, e["pin"])), e["active"]) for e in unit.get("enables", [])]
    if not all(n in values for n in sel + [n for n, _ in ens]):
        return False
    enabled = all(values[n] == (active == "high") for n, active in ens)
    code = sum(1 << i for i, n in enumerate(sel) if values[n])
    changed = False
    for k, pin in enumerate(unit["outputs"]):
        net = net_of.get((ref, pin))
        if net is None:
            continue
        level = (enabled and k == code) == (unit.get("active", "high") == "high")
        if values.get(net) != level:
            assert net not in values, f"net {net} driven twice"
            values[net] = level
            changed = True
    return changed


def test_decoder_enables_take_the_common_literals(tmp_path, capsys):
    """f = Q4 Q3' (Q0 xor Q1 xor Q2) from a 74HC138 and a 74HC20: Q4 on the
    active-high enable, Q3 on an active-low one, the four odd-parity outputs
    into one NAND4 (active-low outputs OR-ed by a NAND, De Morgan).  2 chips;
    the plan is simulated from its wires with the datasheet function table."""
    ticks = [t for t in range(32) if t >> 4 & 1 and not t >> 3 & 1 and bin(t & 7).count("1") % 2]
    spec = {"name": "dec", "cycle": 32, "signals": {"f": {"high": ticks, "polarity": "high"}}}
    parts = {"74HC4040": 1, "74HC138": 1, "74HC20": 1}
    out = tmp_path / "plan.json"
    code = main(["plan", str(write(tmp_path, "spec.yaml", spec)), "--bin",
                 str(write(tmp_path, "bin.yaml", {"parts": parts})), "--json", str(out), "--lacks", "0"])
    assert code == 0, capsys.readouterr().err
    plan = json.loads(out.read_text())
    check_plan_against_bin(plan, parts)
    assert {row["part"]: row["count"] for row in plan["bom"]} == parts
    assert simulate_plan(plan, 32)["f"] == set(ticks)


def check_plan_against_bin(plan: dict, bin_parts: dict[str, int]) -> None:
    """No part beyond the bin; every input pin of every chip on a net (never floating)."""
    used = {row["part"]: row["count"] for row in plan["bom"]}
    for part, count in used.items():
        assert count <= bin_parts.get(part, 0), f"{part}: {count} used, bin has {bin_parts.get(part, 0)}"
    wired = {(p["ref"], p["pin"]) for w in plan["wires"] for p in w["pins"]}
    for chip in plan["chips"]:
        doc = CATALOG_DOCS[chip["part"]]
        for unit in doc["units"]:
            for pin in unit_inputs(unit):
                assert (chip["ref"], pin) in wired, f"{chip['ref']} pin {pin} floats"
        for pin in doc["power"].values():
            assert (chip["ref"], pin) in wired


GATE_PARTS_4000 = ["4011", "4001", "4081", "4071", "4069", "4023", "4025", "4012", "4073", "4070"]


def write(tmp: Path, name: str, doc: dict) -> Path:
    path = tmp / name
    path.write_text(yaml.safe_dump(doc, sort_keys=False))
    return path


@st.composite
def spec_and_bin(draw):
    bits = draw(st.integers(3, 8))
    cycle = draw(st.one_of(st.just(1 << bits), st.integers((1 << (bits - 1)) + 1, 1 << bits)))
    signals = {}
    for i in range(draw(st.integers(1, 3))):
        a = draw(st.integers(0, cycle - 1))
        b = draw(st.integers(a + 1, cycle))
        windows = [[a, b]]
        outside = [t for t in range(cycle) if not a - 1 <= t <= b]
        if outside and draw(st.booleans()):
            windows.append(draw(st.sampled_from(outside)))
        signals[f"s{i}"] = {"high": windows,
                            "polarity": draw(st.sampled_from(["high", "low", "free"]))}
    gates = draw(st.lists(st.sampled_from(GATE_PARTS_4000), min_size=1, max_size=2, unique=True))
    if not any(g in ("4011", "4001", "4069", "4023", "4025", "4012") for g in gates):
        gates.append("4011")                 # keep most draws realisable: something inverts
    parts = {"4040": 1}
    parts.update({g: draw(st.integers(1, 4)) for g in gates})
    return {"name": "prop", "cycle": cycle, "signals": signals}, parts


@settings(max_examples=int(__import__('os').environ.get('TECHMAP_EXAMPLES', 12)), deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(case=spec_and_bin())
def test_random_specs_plan_tick_by_tick(case, tmp_path, capsys):
    spec, parts = case
    spec_path = write(tmp_path, "spec.yaml", spec)
    bin_path = write(tmp_path, "bin.yaml", {"parts": parts})
    out = tmp_path / "plan.json"
    out.unlink(missing_ok=True)
    code = main(["plan", str(spec_path), "--bin", str(bin_path), "--json", str(out)])
    err = capsys.readouterr().err
    assert "Traceback" not in err
    if code == 3:
        assert "cannot" in err or "short" in err, err
        assert json.loads(out.read_text())["verdict"] == "impossible"
        return
    if code == 4:                        # the effort ran out: no plan, nothing claimed
        assert "no design" in err and "proven" in err, err
        assert json.loads(out.read_text())["verdict"] == "not_found"
        return
    assert code == 0, err
    plan = json.loads(out.read_text())
    check_plan_against_bin(plan, parts)
    got = simulate_plan(plan, spec["cycle"])
    for name, sig in spec["signals"].items():
        assert got[name] == expand_windows(sig["high"], spec["cycle"]), name


# ---------------------------------------------------------------- bad input, short bins

SPEC = {"name": "t", "cycle": 16, "signals": {"a": {"high": [[3, 7]]}, "b": {"high": [[0, 12]]}}}


def run_cli(args, capsys):
    code = main(args)
    return code, capsys.readouterr().err


def test_bin_without_inverting_gate_exits_3_naming_a_fix(tmp_path, capsys):
    spec = write(tmp_path, "s.yaml", SPEC)
    bin_path = write(tmp_path, "b.yaml", {"parts": {"4040": 1, "4081": 4}})
    code, err = run_cli(["plan", str(spec), "--bin", str(bin_path)], capsys)
    assert code == 3 and "Traceback" not in err
    assert "invert" in err and "(add one 40" in err


def test_bin_with_too_few_gates_exits_3(tmp_path, capsys):
    spec = {"name": "t", "cycle": 64, "signals": {f"s{i}": {"high": [[i * 7, i * 7 + 3]]} for i in range(6)}}
    spec_path = write(tmp_path, "s.yaml", spec)
    bin_path = write(tmp_path, "b.yaml", {"parts": {"4040": 1, "4011": 1}})
    code, err = run_cli(["plan", str(spec_path), "--bin", str(bin_path)], capsys)
    # six distinct signals need six distinct output gates; one 4011 holds four (counting)
    assert code == 3 and "needs at least 6 gates" in err and "has 4" in err and "Traceback" not in err


def test_bin_without_logic_exits_3(tmp_path, capsys):
    spec = write(tmp_path, "s.yaml", SPEC)
    bin_path = write(tmp_path, "b.yaml", {"parts": {"4040": 1}})
    code, err = run_cli(["plan", str(spec), "--bin", str(bin_path)], capsys)
    assert code == 3 and "Traceback" not in err


def test_unknown_part_in_bin_exits_2_with_file_and_line(tmp_path, capsys):
    spec = write(tmp_path, "s.yaml", SPEC)
    bin_path = tmp_path / "b.yaml"
    bin_path.write_text("parts:\n  4040: 1\n  ZQ9911: 2\n")
    code, err = run_cli(["plan", str(spec), "--bin", str(bin_path)], capsys)
    assert code == 2 and "b.yaml:3" in err and "ZQ9911" in err and "Traceback" not in err


def test_bad_exact_option_exits_2(tmp_path, capsys):
    spec = write(tmp_path, "s.yaml", SPEC)
    bin_path = write(tmp_path, "b.yaml", {"parts": {"4040": 1, "4011": 2}})
    code, err = run_cli(["plan", str(spec), "--bin", str(bin_path), "--exact", "maybe"], capsys)
    assert code == 2 and "Traceback" not in err


def test_short_bin_through_a_fresh_process(tmp_path):
    spec = write(tmp_path, "s.yaml", SPEC)
    bin_path = write(tmp_path, "b.yaml", {"parts": {"4040": 1, "4071": 2}})
    proc = subprocess.run([sys.executable, "-m", "synth", "plan", str(spec), "--bin", str(bin_path)],
                          capture_output=True, text=True, cwd=ROOT)
    assert proc.returncode == 3 and "Traceback" not in proc.stderr and proc.stderr.strip()
