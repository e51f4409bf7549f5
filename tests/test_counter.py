"""Counter allocation against datasheet facts and trade practice.

Pin numbers and counting behaviour come from the datasheets summarised in
shared/reference/cmos-4000b.md and hc-74.md (the reference key is named
beside each check); "common practice" marks what every counter tutorial
teaches (a ripple binary divider's stage k divides by 2^k, a cycle that is
not a power of two is cut short by decoding its end state into the reset).
Specs and bins are our own small bench scenarios, written inline.
"""

import pytest

from synth.cli import main
from synth.counter import allocate, bits_for
from synth.errors import ShortError
from synth.inventory import load_bin, load_catalog
from synth.spec import load_spec

CATALOG = load_catalog()


def plan_for(tmp_path, cycle, parts, signals=None, clock="", supply=5):
    """Allocate counters for a small spec and bin written to tmp_path."""
    signals = signals or "  gate: {high: [[0, 1]]}\n"
    spec_text = f"name: bench\nsupply: {supply} V\n{clock}cycle: {cycle}\nsignals:\n{signals}"
    (tmp_path / "spec.yaml").write_text(spec_text)
    (tmp_path / "bin.yaml").write_text("parts:\n" + "".join(f"  {p}: {n}\n" for p, n in parts.items()))
    spec = load_spec(tmp_path / "spec.yaml")
    stock = load_bin(tmp_path / "bin.yaml", CATALOG, spec.supply)
    return allocate(spec, stock, CATALOG)


# ---------------------------------------------------------------- binary dividers

@pytest.mark.parametrize("n", [1, 4, 8, 12])
def test_divide_by_two_to_the_n_needs_n_stages(tmp_path, n):
    # common practice: a divide-by-2^n chain needs n binary stages, Q1 = /2 ... Qn = /2^n,
    # and wraps by itself (no reset)
    plan = plan_for(tmp_path, 1 << n, {"4040": 1})
    assert [v.pin_name for v in plan.vars] == [f"Q{k}" for k in range(1, n + 1)]
    assert [v.weight for v in plan.vars] == [1 << k for k in range(n)]
    assert plan.reset is None
    assert plan.chips[0].reset_net == "VSS"   # [isl4040]: RESET high clears, so held low


def test_4040_pins_come_from_the_datasheet_pinout(tmp_path):
    # [isl4040] Intersil CD4040BMS / [nxp4040] NXP HEF4040B pinout:
    # Q1 9, Q2 7, Q3 6, Q4 5, Q5 3, Q6 2, Q7 4, Q8 13, Q9 12, Q10 14, Q11 15, Q12 1; CLOCK 10, RESET 11
    plan = plan_for(tmp_path, 4096, {"4040": 1})
    assert [v.pin for v in plan.vars] == [9, 7, 6, 5, 3, 2, 4, 13, 12, 14, 15, 1]
    assert [v.net for v in plan.vars] == [f"Q{k}" for k in range(1, 13)]
    chip = plan.chips[0]
    assert (chip.ref, chip.clock_pin, chip.reset_pin) == ("U1", 10, 11)
    # [isl4040]: the 4040 advances on the negative clock transition
    assert plan.edge == "falling" and chip.clock_edge == "falling"
    assert not plan.synchronous


def test_binary_count_equals_the_tick(tmp_path):
    # formats.md section 2: the counter starts from all zeros at tick 0 and counts up,
    # so the weights of the outputs that are high at tick t add up to t
    plan = plan_for(tmp_path, 100, {"4040": 1})
    for t, state in enumerate(plan.state_of_tick):
        assert sum(v.weight for v in plan.vars if state >> v.index & 1) == t


def test_cycle_100_resets_at_state_100(tmp_path):
    # common practice: a mod-100 ripple counter decodes 100 = 64 + 32 + 4 into its reset;
    # the states 101..127 of the seven stages are never held
    plan = plan_for(tmp_path, 100, {"4040": 1, "4081": 1})
    reset = plan.reset
    assert (reset.state, reset.active, reset.synchronous, reset.net) == (100, "high", False, "RST")
    assert reset.on == frozenset({100})
    assert plan.unreachable == frozenset(range(100, 128))
    assert reset.dc == frozenset(range(101, 128))
    assert plan.chips[0].reset_net == "RST"
    assert plan.transient_states == 1
    # [phil4020] HEF4020B (same die family as the 4040): RESET -> Q 180 ns typ at 5 V
    assert "180 ns" in reset.caution and "state 100" in reset.caution


def test_cascade_of_two_4040s_ripples_from_the_last_used_stage(tmp_path):
    # common practice: cascade ripple counters by clocking the second from the first's
    # top stage, which falls when the next stage should count ([isl4040]: falling edge)
    plan = plan_for(tmp_path, 8192, {"4040": 2})
    assert [c.ref for c in plan.chips] == ["U1", "U2"]
    assert plan.chips[1].clock_net == "U1.Q12" and plan.chips[1].clock_edge == "falling"
    assert plan.vars[-1].net == "U2.Q1" and plan.vars[-1].weight == 4096
    assert plan.vars[0].net == "U1.Q1"


# ---------------------------------------------------------------- stages not pinned out

def test_4020_cannot_provide_bits_1_and_2(tmp_path):
    # [isl4040] Intersil CD4020BMS: stages Q2 and Q3 are not brought out
    signals = "  step: {high: \"t % 8 < 4\"}\n"          # needs the /8 stage Q3
    with pytest.raises(ShortError, match="Q2, Q3 not brought out"):
        plan_for(tmp_path, 16384, {"4020": 1}, signals)


def test_4020_alone_serves_signals_that_do_not_need_q2_q3(tmp_path):
    # [isl4040]: the 4020 brings out Q1 and Q4..Q14 only
    signals = "  half: {high: [[0, 8192]]}\n"
    plan = plan_for(tmp_path, 16384, {"4020": 1}, signals)
    assert [v.pin_name for v in plan.vars] == ["Q1"] + [f"Q{k}" for k in range(4, 15)]
    assert 2 not in {v.weight for v in plan.vars} and 4 not in {v.weight for v in plan.vars}


def test_a_4024_supplies_the_4020s_missing_stages(tmp_path):
    # [isl4040] CD4024BMS brings out all 7 stages; clocked from the 4020's Q1 (falling edge,
    # /2) its Q1, Q2 carry the /4 and /8 the 4020 keeps inside (common practice)
    signals = "  step: {high: \"t % 8 < 4\"}\n  frame: {high: [0]}\n"    # frame needs every stage
    plan = plan_for(tmp_path, 16384, {"4020": 1, "4024": 1}, signals)
    assert sorted(v.weight for v in plan.vars) == [1 << k for k in range(14)]
    by_weight = {v.weight: v.net for v in plan.vars}
    assert (by_weight[2], by_weight[4]) == ("U2.Q1", "U2.Q2")
    assert plan.chips[1].clock_net == "U1.Q1"


# ---------------------------------------------------------------- synchronous parts

def test_4520_halves_cascade_through_enable(tmp_path):
    # [nxp4520] HEF4520B: counts on CLOCK rising with ENABLE high, or on ENABLE falling with
    # CLOCK low; pins CLOCK A 1, ENABLE A 2, Q1A-Q4A 3-6, CLOCK B 9, ENABLE B 10, Q1B-Q4B 11-14
    plan = plan_for(tmp_path, 256, {"4520": 1})
    a, b = plan.chips
    assert (a.ref, b.ref) == ("U1", "U1")       # both halves of one chip
    assert (a.clock_pin, a.clock_edge, a.ties[2]) == (1, "rising", "VDD")
    assert (b.clock_pin, b.clock_net, b.clock_edge, b.ties[9]) == (10, "Q4A", "falling", "VSS")
    assert [v.pin for v in plan.vars] == [3, 4, 5, 6, 11, 12, 13, 14]
    assert plan.edge == "rising"


@pytest.mark.parametrize("part, state, synchronous", [
    ("74HC161", 12, False),   # hc-74.md: 74HC161 MR_n asynchronous (Nexperia) -> decode the cycle
    ("74HC163", 11, True),    # hc-74.md: 74HC163 reset synchronous (Motorola MC74HC161A/163A)
])
def test_161_and_163_clear_decode_different_states(tmp_path, part, state, synchronous):
    # an asynchronous clear acts on reaching state 12 (a transient state); a synchronous
    # clear acts on the edge after state 11 (common practice)
    plan = plan_for(tmp_path, 12, {part: 1})
    reset = plan.reset
    assert (reset.state, reset.synchronous, reset.active) == (state, synchronous, "low")
    assert reset.on == frozenset({state})
    assert reset.net == "RST_n" and plan.chips[0].reset_pin == 1   # hc-74.md: MR_n pin 1
    assert plan.transient_states == (0 if synchronous else 1)
    # hc-74.md: PE_n (9), CEP (7), CET (10) held high, D0-D3 (3-6) low for plain counting
    assert plan.chips[0].ties == {9: "VDD", 7: "VDD", 10: "VDD", 3: "VSS", 4: "VSS", 5: "VSS", 6: "VSS"}


def test_synchronous_clear_is_preferred_over_asynchronous(tmp_path):
    # the selection rule: fewest chips, then synchronous, then fewest transient states
    plan = plan_for(tmp_path, 12, {"74HC161": 1, "74HC163": 1, "4040": 1})
    assert plan.chips[0].part == "74HC163" and plan.synchronous


def test_4518_pair_counts_bcd_to_100(tmp_path):
    # [mot4520] MC14518B: dual BCD up-counter, Q4 falls on 9 -> 0, so the second decade
    # counts on ENABLE falling with CLOCK low; two decades wrap at 100 by themselves
    plan = plan_for(tmp_path, 100, {"4518": 1})
    assert [v.weight for v in plan.vars] == [1, 2, 4, 8, 10, 20, 40, 80]
    assert plan.reset is None
    for t, state in enumerate(plan.state_of_tick):
        assert sum(v.weight for v in plan.vars if state >> v.index & 1) == t


# ---------------------------------------------------------------- decoded counters

def test_4017_with_cycle_6_resets_from_q6(tmp_path):
    # [bp4017] 4017 pinout: Q0 3, Q1 2, Q2 4, Q3 7, Q4 10, Q5 1, Q6 5, CLOCK 14, INHIBIT 13, RESET 15;
    # common practice: Q6 wired to RESET makes a divide-by-6 with one output high per tick
    plan = plan_for(tmp_path, 6, {"4017": 1, "4040": 1})
    assert plan.chips[0].part == "4017"
    assert [(v.pin_name, v.pin, v.weight) for v in plan.vars] == [
        ("Q0", 3, None), ("Q1", 2, None), ("Q2", 4, None), ("Q3", 7, None), ("Q4", 10, None), ("Q5", 1, None)]
    assert plan.state_of_tick == (1, 2, 4, 8, 16, 32)
    reset = plan.reset
    assert reset.direct and reset.net == "Q6" and reset.direct_pin == ("U1", 5)
    assert plan.chips[0].reset_pin == 15 and plan.chips[0].reset_net == "Q6"
    # [isl4017]: counts on CLOCK rising while CLOCK INHIBIT is low
    assert plan.edge == "rising" and plan.chips[0].ties[13] == "VSS"


def test_4017_full_decade_needs_no_reset(tmp_path):
    # [bp4017] [nxp4017]: the 4017 steps through Q0..Q9 and back to Q0
    plan = plan_for(tmp_path, 10, {"4017": 1})
    assert plan.reset is None and len(plan.vars) == 10
    assert plan.chips[0].reset_net == "VSS"


# ---------------------------------------------------------------- what the bin lacks

def test_not_enough_stages_says_how_many_and_what_fixes_it(tmp_path):
    # common practice: 8192 = 2^13 ticks need 13 binary stages; a 4040 has 12 ([isl4040])
    with pytest.raises(ShortError) as caught:
        plan_for(tmp_path, 8192, {"4040": 1})
    text = str(caught.value)
    assert "13 binary stages" in text and "have 12" in text and "1 short" in text
    assert "4020" in text                       # [isl4040]: 14 stages, one chip would do
    assert caught.value.exit_code == 3


def test_not_enough_stages_exits_3_through_the_cli(tmp_path, capsys):
    (tmp_path / "spec.yaml").write_text("cycle: 8192\nsignals:\n  frame: {high: [0]}\n")
    (tmp_path / "bin.yaml").write_text("parts:\n  CD4040BE: 1\n  CD4081BE: 1\n")
    code = main(["decode", str(tmp_path / "spec.yaml"), "--bin", str(tmp_path / "bin.yaml")])
    err = capsys.readouterr().err
    assert code == 3
    assert "13 binary stages" in err and "1 short" in err and "add a" in err
    assert "Traceback" not in err


def test_rising_edge_counters_chain_through_their_carries(tmp_path):
    # Motorola MC74HC161A/163A data sheet (hc-74.md): the 163 counts on the rising clock edge, no
    # falling-edge enable; two or more chain through TC -> CEP/CET (the data sheet's synchronous
    # multistage counting: TC = CET . Q0 . Q1 . Q2 . Q3, so the carries ripple up the units)
    cp = plan_for(tmp_path, 100, {"74HC163": 2})
    assert [c.part for c in cp.chips] == ["74HC163", "74HC163"] and cp.synchronous
    cp = plan_for(tmp_path, 1000, {"74HC163": 3})
    assert [c.part for c in cp.chips] == ["74HC163"] * 3 and cp.synchronous
    assert cp.chips[1].enable_net == "U1.TC" and cp.chips[2].enable_net == "U2.TC"
    assert cp.chips[1].carry_net == "U2.TC"


def test_clock_above_fmax_names_a_faster_part(tmp_path):
    # [phil4020] HEF4020B (used for the 4040): fmax 5 MHz min at 5 V; hc-74.md: 74HC4040
    # is specified far faster (30 MHz min at 5 V in the catalog)
    with pytest.raises(ShortError) as caught:
        plan_for(tmp_path, 256, {"4040": 1}, clock="clock: {frequency: 8 MHz}\n")
    text = str(caught.value)
    assert "5 MHz" in text and "74HC4040" in text


def test_empty_bin_of_counters_is_short(tmp_path):
    with pytest.raises(ShortError, match="no counter chip"):
        plan_for(tmp_path, 64, {"4011": 1})


@pytest.mark.parametrize("cycle, bits", [(2, 1), (3, 2), (64, 6), (65, 7), (1000, 10)])
def test_bits_for(cycle, bits):
    # common practice: n stages count 2^n states
    assert bits_for(cycle) == bits
