"""VCD and SVG exports, read back by general-purpose readers.

The VCD is parsed by two readers from PyPI, vcdvcd and pyvcd's tokenizer
(``vcd.reader``), both written against IEEE 1364-2001 section 18, and must
give back exactly the simulated changes.  The SVG must be well-formed XML
(Python's ``xml.etree``), with one trace per counter output and per signal,
a mark per reported glitch and an SVG ``<view>`` per marked tick (SVG 1.1,
section 5.10: a view element's id is a fragment a browser can open).
"""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET
from types import SimpleNamespace

import pytest
from conftest import Chip, CounterPlan, Var

from synth import timing
from synth.exports.svg import trace_to_svg, write_svg
from synth.exports.vcd import trace_to_vcd, vcd_scopes, write_vcd
from synth.netlist import BoardSignal
from synth.network import Gate, Network, SignalOut

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def design(catalog):
    """A 4040 counting 16 ticks with three decodes: one spikes wider than its gate."""
    pins = {1: 9, 2: 7, 3: 6, 4: 5}
    vars_ = [Var(i, f"U1.Q{i + 1}", 0, "A", pins[i + 1], f"Q{i + 1}", 1 << i) for i in range(4)]
    cp = CounterPlan([Chip("U1", "4040", "A", "CLK", 10, "falling", 11, "VSS")], vars_, 16,
                     tuple(range(16)), "falling", False)
    net = Network([Gate("g1", "4002", "nor", tuple(v.net for v in vars_), ("zero",)),
                   Gate("g2", "4001", "nor", ("U1.Q1", "U1.Q3"), ("z13",)),
                   Gate("g3", "4081", "and", ("U1.Q3", "U1.Q4"), ("late",))],
                  {"zero": SignalOut("zero", "high"), "z13": SignalOut("z13", "high"),
                   "late": SignalOut("late", "low")}, ())
    plan = SimpleNamespace(name="bench-seq", supply=5.0, counter=cp, network=net, clock_edge="falling",
                           signals={n: BoardSignal(s.polarity, s.net, None) for n, s in net.signals.items()},
                           chips=[SimpleNamespace(ref="U2", units_used={"A": "g1"}),
                                  SimpleNamespace(ref="U3", units_used={"A": "g2"}),
                                  SimpleNamespace(ref="U4", units_used={"A": "g3"})], switches={},
                           strobed={}, ladders={})
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=2, gate_names=timing.gate_names_of(plan))
    run = dict(catalog=catalog, supply=5.0, clock_period_ns=None, cycles=2,
               gate_names=timing.gate_names_of(plan))
    found = timing.merge_glitches(plan, None, trace, run)
    plan.glitches = [g.record() for g in found]
    delivered = {n: frozenset(t for t in range(16) if trace.sample(s.net)[t] == (s.polarity == "high"))
                 for n, s in net.signals.items()}
    plan.coincident_edges = timing.edge_skews(trace, timing.coincident_edges(delivered, 16))
    return plan, trace


# ---------------------------------------------------------------- VCD

def test_vcd_read_by_vcdvcd_gives_back_every_change(design, tmp_path):
    from vcdvcd import VCDVCD

    plan, trace = design
    path = write_vcd(trace, plan, tmp_path / "cycle.vcd")
    dump = VCDVCD(str(path))
    assert dump.timescale["unit"] == "ps" and int(dump.timescale["magnitude"]) == 1
    for scope, rows in vcd_scopes(trace, plan).items():
        for name, net in rows:
            got = [(int(t), v) for t, v in dump[f"bench_seq.{scope}.{name}"].tv]
            want = [(0, "1" if trace.initial[net] else "0")]
            want += [(timing.ps(t), "1" if v else "0") for t, v in trace.changes.get(net, [])]
            assert got == want, f"{scope}.{name}"


def test_vcd_declares_counter_bits_and_every_signal(design):
    plan, trace = design
    scopes = vcd_scopes(trace, plan)
    assert [n for n, _ in scopes["counter"]] == ["CLK", "U1_Q1", "U1_Q2", "U1_Q3", "U1_Q4"]
    assert [n for n, _ in scopes["signals"]] == ["zero", "z13", "late"]


def test_vcd_tokens_by_pyvcd(design):
    from vcd.reader import TokenKind, tokenize

    plan, trace = design
    text = trace_to_vcd(trace, plan, date="2026-01-01")
    tokens = list(tokenize(io.BytesIO(text.encode())))
    kinds = [t.kind for t in tokens]
    assert kinds[:2] == [TokenKind.DATE, TokenKind.VERSION]
    timescale = next(t.data for t in tokens if t.kind is TokenKind.TIMESCALE)
    assert int(timescale.magnitude) == 1 and timescale.unit.value == "ps"
    declared = [t.data for t in tokens if t.kind is TokenKind.VAR]
    assert all(d.size == 1 and d.type_.value == "wire" for d in declared)
    assert len(declared) == 1 + 4 + 3          # clock, counter bits, signals (no internal nets here)
    times = [t.data for t in tokens if t.kind is TokenKind.CHANGE_TIME]
    assert times == sorted(times) and times[-1] == timing.ps(trace.end_ns)
    values = {t.data.value for t in tokens if t.kind is TokenKind.CHANGE_SCALAR}
    assert values <= {"0", "1"}
    # Count the changes of z13 and compare with the trace.
    code = next(d.id_code for d in declared if d.reference == "z13")
    changes = [t for t in tokens if t.kind is TokenKind.CHANGE_SCALAR and t.data.id_code == code]
    assert len(changes) == 1 + len(trace.changes["z13"])


# ---------------------------------------------------------------- SVG

def _svg(plan, trace):
    return ET.fromstring(trace_to_svg(trace, plan).encode())


def _main(root):
    return next(g for g in root.iter(f"{SVG}g") if g.get("id") == "main")


def test_svg_is_well_formed_with_one_trace_per_row(design, tmp_path):
    plan, trace = design
    root = ET.parse(write_svg(trace, plan, tmp_path / "t.svg")).getroot()
    assert root.tag == f"{SVG}svg"
    main = _main(root)
    traces = [g for g in main.iter(f"{SVG}g") if "trace" in (g.get("class") or "").split()]
    signals = [g.get("data-signal") for g in traces if "signal" in g.get("class").split()]
    counters = [g.get("data-net") for g in traces if "counter" in g.get("class").split()]
    assert signals == ["zero", "z13", "late"]
    assert counters == ["U1.Q1", "U1.Q2", "U1.Q3", "U1.Q4"]
    for g in traces:
        assert len(g.findall(f"{SVG}path")) == 1 and g.find(f"{SVG}text") is not None
    assert not list(root.iter(f"{SVG}script"))


def test_svg_marks_each_glitch_and_offers_a_view_per_marked_tick(design):
    plan, trace = design
    root = _svg(plan, trace)
    main = _main(root)
    marks = [a for a in main.iter(f"{SVG}a") if a.find(f"{SVG}g/{SVG}path[@class='glitch']") is not None]
    assert len(marks) == len(plan.glitches)
    ticks = sorted({g.at_tick for g in plan.glitches} | {c.at_tick for c in plan.coincident_edges})
    views = [v.get("id") for v in root.iter(f"{SVG}view")]
    assert views == [f"tick-{t}" for t in ticks]
    links = {a.get("href") for a in main.iter(f"{SVG}a")}
    assert links == {f"#tick-{t}" for t in ticks}
    # The known 160 ns spike of NOR(Q1, Q3) on the way from 3 to 4 is in its close-up.
    band = [r for r in root.iter(f"{SVG}rect") if r.get("class") == "glitchband"]
    assert any("count 3->4 passes through 2 and 0" in (r.findtext(f"{SVG}title") or "") for r in band)


def test_svg_shades_asserted_ticks_by_polarity(design):
    plan, trace = design
    main = _main(_svg(plan, trace))
    late = next(g for g in main.iter(f"{SVG}g") if g.get("data-signal") == "late")
    # late is active low: asserted where AND(Q3, Q4) is low, ticks 0..11.
    assert len([r for r in late.findall(f"{SVG}rect") if r.get("class") == "asserted"]) == 12
