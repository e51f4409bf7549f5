"""Timing simulation, glitch analysis and coincident edges against outside facts.

Sources named beside each check: the catalog's datasheet delays (each entry's
``source`` names the sheet), the ripple-counter behaviour every digital
handbook describes (common practice: the low stage toggles first and each
stage clocks the next, so 0111 -> 0110 -> 0100 -> 0000 -> 1000), and the
Verilog inertial-delay rule for primitives (IEEE 1364-2001 section 7.14,
from memory: a pulse shorter than the gate delay does not reach the output).
Counter plans are small stand-ins with the fields ``synth.counter`` hands on.
"""

from __future__ import annotations

from dataclasses import dataclass

import pytest
from conftest import Chip, CounterPlan, Reset, Var

from synth.errors import InternalError
from synth.findings import CoincidentEdge
from synth.netlist import BoardSignal
from synth.network import Gate, Network, SignalOut
from synth import timing


# ---------------------------------------------------------------- stand-ins

STAGE_PINS = {  # stage k -> package pin, as in the catalog (datasheet pinouts)
    "4040": {1: 9, 2: 7, 3: 6, 4: 5},
    "74HC4040": {1: 9, 2: 7, 3: 6, 4: 5},
    "74HC393": {1: 3, 2: 4, 3: 5, 4: 6},
    "74HC161": {1: 14, 2: 13, 3: 12, 4: 11},
}
EDGE = {"4040": "falling", "74HC4040": "falling", "74HC393": "falling", "74HC161": "rising"}
SYNC = {"74HC161"}


def counter(part: str, bits: int = 4, cycle: int | None = None, reset: Reset | None = None) -> CounterPlan:
    pins = STAGE_PINS[part]
    vars_ = [Var(i, f"Q{i + 1}", 0, "A", pins[i + 1], f"Q{i + 1}", 1 << i) for i in range(bits)]
    cycle = cycle or 1 << bits
    rail = "VDD" if part == "74HC161" else "VSS"
    chip = Chip("U1", part, "A", "CLK", 1, EDGE[part], 2, reset.net if reset else rail)
    unreachable = frozenset(range(cycle, 1 << bits))
    return CounterPlan([chip], vars_, cycle, tuple(range(cycle)), EDGE[part], part in SYNC, reset, unreachable)


def decode(*gates: Gate, signals: dict[str, str] | None = None) -> Network:
    outs = signals or {g.output: "high" for g in gates}
    return Network(list(gates), {n: SignalOut(n, p) for n, p in outs.items()}, ("Q1", "Q2", "Q3", "Q4"))


def expected(cp: CounterPlan, fn) -> list[bool]:
    """Independent reference: tick t shows count t, the decode is fn(count)."""
    return [bool(fn(t)) for t in range(cp.cycle)]


# ---------------------------------------------------------------- counter timing

@pytest.mark.parametrize("part, supply, first, stage", [
    ("4040", 5.0, 105.0, 80.0),       # Philips HEF4040B / HEF4020B AC table (catalog source)
    ("4040", 10.0, 45.0, 30.0),
    ("74HC4040", 5.0, 14.0, 8.0),     # Philips 74HC4040 quick reference, 15 pF
    ("74HC393", 5.0, 12.0, 5.0),      # NXP 74HC393 quick reference
])
def test_ripple_stage_k_follows_clock_to_q_plus_stage_delays(catalog, part, supply, first, stage):
    cp = counter(part)
    net = decode(Gate("g", "4001" if part == "4040" else "74HC02", "nor", ("Q1", "Q2"), ("y",)))
    trace = timing.simulate(cp, net, catalog, supply, cycles=1)
    edge_8 = 8 * trace.period_ns         # count 7 -> 8: every stage moves
    for k in range(1, 5):
        (t, level), = trace.window(f"Q{k}", 8)
        assert t - edge_8 == pytest.approx(first + (k - 1) * stage)
        assert level == (k == 4)


def test_counting_edge_is_the_catalog_edge(catalog):
    # 4040 counts on the falling clock edge ([isl4040]); 74HC161 on the rising one (Motorola sheet).
    for part, after in (("4040", False), ("74HC161", True)):
        cp = counter(part)
        trace = timing.simulate(cp, decode(Gate("g", "74HC08", "and", ("Q1", "Q2"), ("y",))), catalog, 5.0)
        t, level = trace.window("CLK", 1)[0]
        assert t == trace.period_ns and level == after
        assert trace.window("Q1", 1)[0][0] > t


def test_synchronous_counter_moves_every_output_together(catalog):
    cp = counter("74HC161")
    trace = timing.simulate(cp, decode(Gate("g", "74HC02", "nor", ("Q1", "Q2"), ("y",))), catalog, 5.0)
    times = {trace.window(f"Q{k}", 8)[0][0] - 8 * trace.period_ns for k in range(1, 5)}
    assert times == {17.0}             # Motorola MC74HC161A: one clock-to-Q for all outputs (typ from memory)


def test_max_corner_uses_the_maximum_delays(catalog):
    cp = counter("4040")
    net = decode(Gate("g", "4001", "nor", ("Q1", "Q2"), ("y",)))
    trace = timing.simulate(cp, net, catalog, 5.0, corner="max", clock_period_ns=10_000)
    (t, _), = trace.window("Q4", 8)
    assert t - 8 * trace.period_ns == pytest.approx(210 + 3 * 160)   # HEF4040B max figures


def test_settled_levels_match_the_counting_reference(catalog):
    cp = counter("4040")
    net = decode(Gate("g1", "4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)),
                 Gate("g2", "4081", "and", ("Q2", "Q3"), ("six",)))
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=2)
    zero = expected(cp, lambda t: t == 0)
    six = expected(cp, lambda t: t & 6 == 6)
    assert trace.sample("zero") == (zero * 2) + zero[:1]
    assert trace.sample("six") == (six * 2) + six[:1]
    assert timing.settle_mismatches(trace, {"zero": zero, "six": six}) == []


def test_a_clock_too_fast_is_reported(catalog):
    cp = counter("4040")
    net = decode(Gate("g2", "4081", "and", ("Q3", "Q4"), ("y",)))
    trace = timing.simulate(cp, net, catalog, 5.0, clock_period_ns=400)   # Q4 needs 345 ns + 160 ns
    problems = timing.settle_mismatches(trace, {"y": expected(cp, lambda t: t >= 12)})
    assert problems and "the design says" in problems[0]


# ---------------------------------------------------------------- the known glitch cases

ZERO_SPIKES = [2, 4, 8]     # common practice: a ripple count shows 0 on its way to 2, 4 and 8


@pytest.mark.parametrize("part, nor4", [("4040", "4002"), ("74HC4040", "74HC4002"), ("74HC393", "74HC4002")])
def test_all_zero_decode_spikes_on_entries_to_2_4_8_only(catalog, part, nor4):
    cp = counter(part)
    net = decode(Gate("g1", nor4, "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)))
    hazards = timing.ripple_hazards(cp, net, catalog)
    assert sorted({h.at_tick for h in hazards}) == ZERO_SPIKES
    assert {h.transient for h in hazards} == {0}
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=2, inertial=False)
    found = timing.glitches(trace, {"zero": expected(cp, lambda t: t == 0)})
    assert [g.at_tick for g in found] == ZERO_SPIKES
    for g in found:
        # The spike lasts from stage k-1 falling to stage k rising: one stage delay.
        assert g.width_ns == pytest.approx(catalog.parts[part].delay_ns("stage", 5.0, "typ"))
        assert g.wrong_level is True and g.transient_count == 0
        assert "passes through 0" in g.cause


def test_all_zero_spike_cause_names_the_transient_and_the_order(catalog):
    cp = counter("4040")
    net = decode(Gate("g1", "4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)))
    trace = timing.simulate(cp, net, catalog, 5.0, inertial=False, gate_names={"g1": "U2_A"})
    by_tick = {g.at_tick: g for g in timing.glitches(trace)}
    assert by_tick[2].cause == "count 1->2 passes through 0 (Q1 falls, then Q2 rises)"
    assert by_tick[8].cause == "count 7->8 passes through 0 (Q3 falls, then Q4 rises)"
    assert by_tick[2].path == "Q1 -> U2_A -> zero"


@pytest.mark.parametrize("part, and4", [("4040", "4082"), ("74HC393", "74HC21"), ("74HC161", "74HC21")])
def test_decoding_count_15_never_spikes(catalog, part, and4):
    cp = counter(part)
    net = decode(Gate("g1", and4, "and", ("Q1", "Q2", "Q3", "Q4"), ("top",)))
    assert timing.ripple_hazards(cp, net, catalog) == []
    assert timing.ripple_hazards(cp, {"top": {15}}) == []
    for inertial in (True, False):
        trace = timing.simulate(cp, net, catalog, 5.0, cycles=2, inertial=inertial)
        assert timing.glitches(trace, {"top": expected(cp, lambda t: t == 15)}) == []


def test_synchronous_counter_has_no_transient_states(catalog):
    cp = counter("74HC161")
    net = decode(Gate("g1", "74HC4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)))
    assert timing.ripple_hazards(cp, net, catalog) == []
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=2, inertial=False)
    assert timing.glitches(trace) == []


def test_ripple_transient_sequence_low_stages_first():
    cp = counter("4040")
    hazards = timing.ripple_hazards(cp, {"zero": {0}})
    entry_8 = next(h for h in hazards if h.at_tick == 8)
    assert entry_8.states == (0b0111, 0b0110, 0b0100, 0b0000, 0b1000)
    assert entry_8.order == "Q1 falls, then Q2 falls, then Q3 falls, then Q4 rises"


def test_inertial_gate_swallows_a_pulse_shorter_than_its_delay(catalog):
    # The 80 ns all-zero state is shorter than the 4002's 160 ns: gone in the inertial model.
    # NOR(Q1, Q3) is wrongly high from Q1 falling to Q3 rising, 2 x 80 = 160 ns > 120 ns: it passes.
    cp = counter("4040")
    net = decode(Gate("g1", "4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)),
                 Gate("g2", "4001", "nor", ("Q1", "Q3"), ("z13",)))
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=1, inertial=True)
    found = {(g.signal, g.at_tick): g for g in timing.glitches(trace)}
    assert not any(s == "zero" for s, _ in found)
    assert set(found) == {("z13", 4), ("z13", 12)}
    assert found[("z13", 4)].width_ns == pytest.approx(160.0)
    assert found[("z13", 4)].start_ns == pytest.approx(105 + 120)
    assert found[("z13", 4)].cause == "count 3->4 passes through 2 and 0 (Q1 falls, Q2 falls, then Q3 rises)"


def test_logic_hazard_from_unequal_paths(catalog):
    # y = Q1 AND NOT Q1 through an inverter: static-0 hazard as wide as the inverter delay
    # (a textbook logic hazard, common practice), seen only with transport delays below 160 ns.
    cp = counter("4040")
    net = Network([Gate("inv", "4069", "not", ("Q1",), ("q1n",)),
                   Gate("and", "4081", "and", ("Q1", "q1n"), ("y",))],
                  {"y": SignalOut("y", "high")}, ("Q1",))
    trace = timing.simulate(cp, net, catalog, 5.0, inertial=False)
    found = timing.glitches(trace)
    assert [g.at_tick for g in found] == [1, 3, 5, 7, 9, 11, 13, 15]     # Q1 rising only
    assert all(g.width_ns == pytest.approx(55.0) for g in found)    # the 4069's typ delay
    assert all("unequal delay" in g.cause and g.transient_state is None for g in found)
    assert timing.ripple_hazards(cp, net, catalog) == []     # no transient state: a path effect


# ---------------------------------------------------------------- reset decode

def test_async_reset_shows_the_reset_state_and_its_pulse(catalog):
    # Cycle 10 on a 4040: AND(Q2, Q4) into RESET.  State 10 appears when Q2 rises (105 + 80 ns
    # after the edge), the 4081 raises RST 160 ns later, the outputs clear 180 ns after that
    # (HEF4040B MR -> Qn), and RST falls one AND delay later: a 180 + 160 = 340 ns pulse.
    rst = Reset("_reset", "RST", 10, "high")
    cp = counter("4040", cycle=10, reset=rst)
    net = Network([Gate("g1", "4081", "and", ("Q2", "Q4"), ("RSTd",)),
                   Gate("g2", "4001", "nor", ("Q1", "Q4"), ("s",))],
                  {"_reset": SignalOut("RSTd", "high"), "s": SignalOut("s", "high")}, ())
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=2)
    assert list(trace.signals) == ["s"]
    assert [(r.at_tick, r.width_ns) for r in trace.resets] == [(0, 340.0), (0, 340.0)]
    edge = 10 * trace.period_ns
    assert trace.window("Q2", 10) == [(edge + 185.0, True), (edge + 525.0, False)]
    assert trace.sample("s") == [(t % 10) in (0, 2, 4, 6) for t in range(21)]
    assert trace.warnings == []


def test_direct_ripple_hazard_through_reset_state():
    # A decode true on state 10 (a don't-care the minimizer may use) spikes on the wrap.
    rst = Reset("_reset", "RST", 10, "high")
    cp = counter("4040", cycle=10, reset=rst)
    hazards = timing.ripple_hazards(cp, {"wide": {2, 3, 6, 7, 10, 11, 14, 15}})   # Q2 alone
    wrap = [h for h in hazards if h.at_tick == 0]
    assert [h.transient for h in wrap] == [10]
    assert wrap[0].states == (9, 8, 10, 0)


# ---------------------------------------------------------------- coincident edges

def test_coincident_edges_every_pair_on_the_same_boundary():
    delivered = {"phase_a": frozenset({0, 1, 2}), "index": frozenset({0}),
                 "phase_b": frozenset({4, 5, 6})}
    got = timing.coincident_edges(delivered, 16)
    assert got == [CoincidentEdge(("index", "phase_a"), 0)]


def test_coincident_edges_cyclic_boundary_and_skew(catalog):
    cp = counter("4040")
    net = decode(Gate("g1", "4081", "and", ("Q3", "Q4"), ("late",)),
                 Gate("g2", "4001", "nor", ("Q3", "Q4"), ("early",)))
    delivered = {"late": frozenset({12, 13, 14, 15}), "early": frozenset({0, 1, 2, 3})}
    records = timing.coincident_edges(delivered, 16)
    assert records == [CoincidentEdge(("early", "late"), 0)]
    trace = timing.simulate(cp, net, catalog, 5.0)
    skewed, = timing.edge_skews(trace, records)
    # late falls with Q3 (105 + 2 x 80 ns) through the 4081 (160 ns): 425 ns;
    # early rises with Q4 (105 + 3 x 80 ns) through the 4001 (120 ns): 465 ns.
    assert skewed.first == "late" and skewed.skew_ns == 40.0
    assert skewed.to_json()["settle_ns"] == {"early": 465.0, "late": 425.0}


# ---------------------------------------------------------------- remedies

@dataclass
class Stock:
    parts: dict


@dataclass
class _Chip:
    ref: str
    part: str
    units_used: dict


class _Plan:
    def __init__(self, cp, net, switches=None, catalog=None):
        self.counter, self.network = cp, net
        self.signals = {n: BoardSignal(s.polarity, s.net, None) for n, s in net.signals.items()}
        # each gate on unit A of its own chip U2, U3 ... (as packing would place it)
        self.chips = [_Chip(f"U{i}", g.part, {"A": g.id}) for i, g in enumerate(net.gates, start=2)]
        self.parts = {g.part: catalog.parts[g.part] for g in net.gates} if catalog else {}
        self.switches = switches or {}
        self.clock_edge = cp.edge
        self.registered: dict = {}
        self.strobed: dict = {}


def _zero_glitch(catalog, gate: Gate, cp=None):
    cp = cp or counter("4040")
    net = decode(gate)
    trace = timing.simulate(cp, net, catalog, 5.0, inertial=False)
    return cp, net, {g.at_tick: g for g in timing.glitches(trace)}


def test_remedies_offer_only_what_the_bin_allows(catalog):
    cp, net, found = _zero_glitch(catalog, Gate("g1", "4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)))
    plan = _Plan(cp, net)
    plain = timing.remedies(found[4], plan, catalog=catalog, stock=Stock({"4040": 1, "4002": 1}))
    assert len(plain) == 1 and plain[0].startswith("note:")
    richer = timing.remedies(found[4], plan, catalog=catalog, stock=Stock({"4040": 1, "4520": 1}))
    assert any(r.startswith("a synchronous counter: the bin has 4520") for r in richer)


def test_clock_gating_remedy_needs_a_spare_input_of_the_right_kind(catalog):
    # A 3-input AND with one input at VDD: the spare input can take CLK (low while a
    # falling-edge counter settles), holding an active-high output inactive.
    gate = Gate("g1", "4073", "and", ("Q1", "Q3", "VDD"), ("y",))
    cp, net, found = _zero_glitch(catalog, Gate("n", "4025", "nor", ("Q1", "Q3", "VSS"), ("y",)))
    # The spare input is named by chip and package pin: the 4073's gate A has inputs on
    # pins 3, 4, 5 (1A, 1B, 1C), the 4025's gate A on pins 1, 2, 8 (1A, 1B, 1C), so the
    # third input of the NOR is pin 8, not pin 3 (TI CD4073B / CD4025B pinouts, from memory;
    # the catalog's pin tables say the same).
    plan = _Plan(cp, Network([gate], {"y": SignalOut("y", "high")}, ()), catalog=catalog)
    text = timing.remedies(found[4], plan)
    assert any("wire U2 pin 5 (1C, a spare input of U2 gate A) to CLK;" in r for r in text)
    # A NOR forces its output low with a high input: that needs the clock inverted.
    nor_text = timing.remedies(found[4], _Plan(cp, net, catalog=catalog))
    assert any("wire U2 pin 8 (1C, a spare input of U2 gate A) to CLK through a spare inverter" in r
               for r in nor_text)
    # A NAND forces its output high: no use for an active-high signal.
    nand = Gate("g1", "4023", "nand", ("Q1", "Q3", "VDD"), ("y",))
    nand_plan = _Plan(cp, Network([nand], {"y": SignalOut("y", "high")}, ()))
    assert not any("gate the decode" in r for r in timing.remedies(found[4], nand_plan))


def test_decode_choice_remedy_when_the_transient_is_a_dont_care(catalog):
    rst = Reset("_reset", "RST", 10, "high")
    cp = counter("4040", cycle=10, reset=rst)
    net = Network([Gate("g1", "4081", "and", ("Q2", "Q4"), ("RSTd",)),
                   Gate("inv", "4069", "not", ("Q4",), ("q4n",)),
                   Gate("g2", "4081", "and", ("Q2", "VDD"), ("w",))],
                  {"_reset": SignalOut("RSTd", "high"), "w": SignalOut("w", "high")}, ())
    glitch = timing.Glitch("w", 0, 340.0, "", "", wrong_level=True, transient_state=10, transient_count=10)
    text = timing.remedies(glitch, _Plan(cp, net))
    assert text[0].startswith("another decode choice: count 10 is never held for w")


def test_spare_input_rules():
    assert timing.spare_input(Gate("g", "4023", "nand", ("a", "a", "b"), ("y",))) == 1
    assert timing.spare_input(Gate("g", "4025", "nor", ("a", "VSS", "b"), ("y",))) == 1
    assert timing.spare_input(Gate("g", "4025", "nor", ("a", "VDD", "b"), ("y",))) is None


def test_reset_tied_to_its_active_level_is_refused(catalog):
    cp = counter("4040")
    cp.chips[0].reset_net = "VDD"
    with pytest.raises(InternalError):
        timing.simulate(cp, decode(Gate("g", "4001", "nor", ("Q1", "Q2"), ("y",))), catalog, 5.0)


# ---------------------------------------------------------------- the plan command's step

def test_timing_report_of_a_stand_in_design(catalog):
    from types import SimpleNamespace

    from synth.netlist import ChipInstance, Plan

    cp = counter("4040")
    net = decode(Gate("g1", "4002", "nor", ("Q1", "Q2", "Q3", "Q4"), ("zero",)),
                 Gate("g2", "4001", "nor", ("Q1", "Q3"), ("z13",)))
    plan = Plan(name="bench", spec_path="", bin_path="", supply=5.0,
                chips=[ChipInstance("U2", "4002", "logic", {"A": "g1"}),
                       ChipInstance("U3", "4001", "logic", {"A": "g2"})],
                nets={}, signals={n: BoardSignal(s.polarity, s.net, None) for n, s in net.signals.items()},
                switches={}, bom={}, decoupling=[], clock_edge="falling", counter=cp, network=net)
    spec = SimpleNamespace(clock=SimpleNamespace(frequency_hz=100e3), signals={})
    design = SimpleNamespace(plan=plan, catalog=catalog, spec=spec, stock=Stock({"4040": 1, "4520": 1}))
    report = timing.timing_report(design)
    got = {(g.signal, g.at_tick): g for g in report.glitches}
    assert sorted(got) == [("z13", 4), ("z13", 12), ("zero", 2), ("zero", 4), ("zero", 8)]
    assert got[("z13", 4)].passes_gate_delay is True and got[("z13", 4)].width_ns == 160.0
    assert got[("zero", 2)].passes_gate_delay is False and got[("zero", 2)].width_max_ns == 160.0
    assert got[("zero", 2)].path == "Q1 -> U2_A -> zero"
    # zero rises on boundary 0 and falls on 1; z13 switches on both too (ticks 0, 2, 8, 10 high).
    assert [(c.signals, c.at_tick) for c in report.coincident_edges] == [
        (("z13", "zero"), 0), (("z13", "zero"), 1)]
    assert report.coincident_edges[1].first == "z13"     # 4001 (120 ns) beats 4002 (160 ns)
    assert report.trace.period_ns == 10_000 and report.trace.cycles == 2
    assert any("a synchronous counter: the bin has 4520" in line for line in report.remedies.text)
    # Each record names the analyses that found it (formats.md section 3 `glitches`).
    assert got[("zero", 2)].models == ("transport_typ", "transport_max", "states")
    assert got[("z13", 4)].models == ("transport_typ", "transport_max", "inertial_typ", "states")
    assert {g.mechanism for g in report.glitches} == {"transient_state"}
    assert plan.glitches == []          # the report is new records; the plan given is not changed


def test_state_analysis_and_event_simulation_agree(catalog):
    # Multi-level decodes over a 6-bit 4040 count: every transient-state hazard the
    # enumeration finds is a pulse in the transport simulation, and every simulated
    # pulse that the trace blames on a transient state is one the enumeration finds.
    pins = {1: 9, 2: 7, 3: 6, 4: 5, 5: 3, 6: 2}
    vars_ = [Var(i, f"Q{i + 1}", 0, "A", pins[i + 1], f"Q{i + 1}", 1 << i) for i in range(6)]
    cp = CounterPlan([Chip("U1", "4040", "A", "CLK", 10, "falling", 11, "VSS")], vars_, 64,
                     tuple(range(64)), "falling", False)
    gates = [Gate("g1", "4081", "and", ("Q6", "Q5"), ("a",)),
             Gate("g2", "4071", "or", ("a", "Q4"), ("b",)),
             Gate("g3", "4069", "not", ("Q3",), ("c",)),
             Gate("g4", "4081", "and", ("b", "c"), ("d",)),
             Gate("g5", "4023", "nand", ("Q1", "Q2", "Q3"), ("e",)),
             Gate("g6", "4071", "or", ("e", "d"), ("f",)),
             Gate("g7", "4025", "nor", ("Q2", "Q4", "Q6"), ("g",))]
    net = Network(gates, {"d": SignalOut("d", "high"), "f": SignalOut("f", "high"),
                          "g": SignalOut("g", "high")}, ())
    hazards = {(h.signal, h.at_tick) for h in timing.ripple_hazards(cp, net, catalog)}
    trace = timing.simulate(cp, net, catalog, 5.0, cycles=1, inertial=False)
    pulses = timing.glitches(trace)
    assert hazards and hazards <= {(g.signal, g.at_tick) for g in pulses}
    assert {(g.signal, g.at_tick) for g in pulses if g.transient_state is not None} <= hazards


def test_a_part_without_delay_figures_borrows_its_family_slowest(catalog):
    """The catalog enters no delay for the 4030 (its datasheet source gives only a
    15 pF figure, see the catalog entry); the timing check then uses the slowest
    4000B XOR with figures, the 4070 (Philips HEF4070B: 85 ns typ at 5 V), and
    says so instead of stopping."""
    gate = Gate("g1", "4030", "xor", ("a", "b"), ("y",))
    assert catalog.parts["4030"].delay_ns("tpd", 5.0, "typ") is None
    delay, note = timing.stand_in_delay(catalog, gate, 5.0, "typ")
    assert delay == catalog.parts["4070"].delay_ns("tpd", 5.0, "typ") == 85
    assert "4030" in note and "4070" in note
    network = Network([gate], {"y": SignalOut("y", "high")}, ("a", "b"))
    assert timing.stand_in_warnings(network, catalog, 5.0) == [note]
