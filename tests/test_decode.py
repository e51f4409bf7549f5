"""Per-signal decodes checked tick by tick against the spec, evaluated independently.

The decode's trade-notation expressions are read back into sympy.logic and
evaluated on counter levels computed here from the datasheet behaviour of
each counter (a binary counter's output k toggles every 2^(k-1) counts, a
decade counter's decoded output k is high in state k, a ripple counter
clocked from a stage counts that stage's falling edges), while the wanted
levels come from the spec's windows written again as Python conditions.
Nothing of the project's own tick model is reused for the expected side.
Sources: shared/reference/cmos-4000b.md and hc-74.md (keys named beside
each scenario), "common practice" for trade facts.
"""

import json

import pytest
import sympy

from synth.cli import main
from synth.counter import allocate
from synth.decode import derive
from synth.errors import SpecError
from synth.inventory import load_bin, load_catalog
from synth.spec import load_spec

CATALOG = load_catalog()


def write(tmp_path, cycle, parts, signals, clock=""):
    (tmp_path / "spec.yaml").write_text(f"name: bench\n{clock}cycle: {cycle}\nsignals:\n{signals}")
    (tmp_path / "bin.yaml").write_text("parts:\n" + "".join(f"  {p}: {n}\n" for p, n in parts.items()))
    return tmp_path / "spec.yaml", tmp_path / "bin.yaml"


def decode_for(tmp_path, cycle, parts, signals, clock=""):
    spec_path, bin_path = write(tmp_path, cycle, parts, signals, clock)
    spec = load_spec(spec_path)
    stock = load_bin(bin_path, CATALOG, spec.supply)
    return derive(spec, allocate(spec, stock, CATALOG))


def trade_to_sympy(text: str):
    """``Q4·Q3' + Q1`` -> sympy Or(And(Q4, Not(Q3)), Q1)."""
    if text in ("0", "1"):
        return sympy.true if text == "1" else sympy.false
    terms = []
    for term in text.split(" + "):
        literals = [sympy.Not(sympy.Symbol(lit[:-1])) if lit.endswith("'") else sympy.Symbol(lit)
                    for lit in term.split("·")]
        terms.append(sympy.And(*literals))
    return sympy.Or(*terms)


def evaluate(text: str, levels: dict[str, bool]) -> bool:
    expr = trade_to_sympy(text)
    return bool(expr.xreplace({sympy.Symbol(n): sympy.true if v else sympy.false
                               for n, v in levels.items()}))


# ---------------------------------------------------------------- counter models (datasheets)

def binary_q1_based(count: int, name: str) -> bool:
    """4000B naming ([isl4040] etc.): Qk = divide by 2^k, bit k-1 of the count."""
    k = int(name.lstrip("Q").rstrip("AB"))
    return bool(count >> (k - 1) & 1)


def binary_q0_based(count: int, name: str) -> bool:
    """74HC naming (hc-74.md, NXP): Qk (or 1Qk) = bit k of the count."""
    return bool(count >> int(name[-1]) & 1)


def ripple_levels(plan, t: int) -> dict[str, bool]:
    """Each counter net at tick t, from how each chip is wired (4000B Q1-based names).

    A chip on CLK holds the count t; a chip clocked by the falling edge of
    another chip's Qk counts once per 2^k ticks (common practice).
    """
    counts: dict[str, int] = {}
    for chip in plan.chips:
        if chip.clock_net == "CLK":
            counts[chip.ref] = t
        else:
            ref, name = chip.clock_net.split(".") if "." in chip.clock_net else (chip.ref, chip.clock_net)
            counts[chip.ref] = counts[ref] >> int(name.lstrip("Q").rstrip("AB"))
    return {v.net: binary_q1_based(counts[plan.chips[v.chip].ref], v.pin_name) for v in plan.vars}


SCENARIOS = {
    # sample-and-hold bench sequencer on a 4040 ([isl4040]: 12-stage ripple, Q1 = /2)
    "sample-hold": dict(
        cycle=64, parts={"4040": 1, "4011": 2},
        signals=("  track: {high: [[0, 24]], polarity: free}\n"
                 "  convert: {high: [[28, 30]], polarity: low, clear_of: {track: 2}}\n"
                 "  frame: {high: [0]}\n"
                 "  ready: {high: [[40, 64]], dont_care: [[38, 40]]}\n"),
        wanted={"track": lambda t: t < 24, "convert": lambda t: 28 <= t < 30,
                "frame": lambda t: t == 0, "ready": lambda t: None if 38 <= t < 40 else t >= 40},
        levels=lambda plan, t: ripple_levels(plan, t)),
    # ultrasonic burst gate with a cycle of 100 cut short by the reset ([isl4040], common practice)
    "burst-100": dict(
        cycle=100, parts={"4040": 1, "4081": 1},
        signals=("  burst: {high: \"t % 10 < 3\"}\n"
                 "  listen: {high: [[50, 100]]}\n"),
        wanted={"burst": lambda t: t % 10 < 3, "listen": lambda t: t >= 50},
        levels=lambda plan, t: ripple_levels(plan, t)),
    # LED row chaser on a 4017 reset from Q6 ([bp4017]: decoded outputs Q0..Q9)
    "chaser-6": dict(
        cycle=6, parts={"4017": 1},
        signals=("  left: {high: [[0, 2]]}\n"
                 "  right: {high: [[3, 5]]}\n"),
        wanted={"left": lambda t: t < 2, "right": lambda t: 3 <= t < 5},
        levels=lambda plan, t: {v.net: int(v.pin_name[1:]) == t for v in plan.vars}),
    # stepper exerciser on a 74HC393 (hc-74.md: dual 4-bit ripple, 1Q0 = /2)
    "stepper": dict(
        cycle=16, parts={"74HC393": 1},
        signals=("  phase_a: {high: [[0, 3]]}\n  phase_b: {high: [[4, 7]]}\n"
                 "  phase_c: {high: [[8, 11]]}\n  phase_d: {high: [[12, 15]]}\n"),
        wanted={"phase_a": lambda t: t < 3, "phase_b": lambda t: 4 <= t < 7,
                "phase_c": lambda t: 8 <= t < 11, "phase_d": lambda t: 12 <= t < 15},
        levels=lambda plan, t: {v.net: binary_q0_based(t, v.pin_name) for v in plan.vars}),
    # scope timebase on a 4518 pair ([mot4520]: BCD decades, Q1 = 1 ... Q4 = 8)
    "bcd-100": dict(
        cycle=100, parts={"4518": 1},
        signals=("  tens_even: {high: \"(t // 10) % 2 == 0\"}\n"
                 "  units_low: {high: \"t % 10 < 5\"}\n"),
        wanted={"tens_even": lambda t: (t // 10) % 2 == 0, "units_low": lambda t: t % 10 < 5},
        levels=lambda plan, t: {v.net: binary_q1_based((t % 10) if v.pin_name.endswith("A") else (t // 10),
                                                       v.pin_name) for v in plan.vars}),
    # long frame on a 4020 with a 4024 for the stages it keeps inside ([isl4040])
    "frame-16k": dict(
        cycle=16384, parts={"4020": 1, "4024": 1},
        signals=("  frame: {high: [0]}\n"
                 "  step: {high: \"t % 8 < 4\"}\n"),
        wanted={"frame": lambda t: t == 0, "step": lambda t: t % 8 < 4},
        levels=lambda plan, t: ripple_levels(plan, t)),
    # mod-12 sequencer on a 74HC161, asynchronous clear (hc-74.md)
    "mod12-161": dict(
        cycle=12, parts={"74HC161": 1, "74HC00": 1},
        signals="  first_half: {high: [[0, 6]]}\n  last: {high: [11]}\n",
        wanted={"first_half": lambda t: t < 6, "last": lambda t: t == 11},
        levels=lambda plan, t: {v.net: binary_q0_based(t, v.pin_name) for v in plan.vars}),
}


@pytest.mark.parametrize("name", sorted(SCENARIOS))
def test_every_decode_equals_the_spec_on_every_tick(tmp_path, name):
    scenario = SCENARIOS[name]
    decode = decode_for(tmp_path, scenario["cycle"], scenario["parts"], scenario["signals"])
    plan = decode.plan
    ticks = range(scenario["cycle"]) if scenario["cycle"] <= 1024 else \
        [t for t in range(scenario["cycle"]) if t % 97 < 9 or t < 64]      # a sample of the long one
    for t in ticks:
        levels = scenario["levels"](plan, t)
        for signal, wanted in scenario["wanted"].items():
            want = wanted(t)
            if want is None:
                continue
            s = decode.signals[signal]
            got = evaluate(s.expression, levels) != (s.phase == "complement")
            assert got == want, f"{signal} at tick {t}: decode {s.expression} ({s.phase}) gives {got}"


def test_reset_decode_fires_only_on_the_cut_state(tmp_path):
    # common practice: the reset decode is 0 in every held state and 1 in the state the cycle
    # ends at (asynchronous clear: the state `cycle` itself)
    decode = decode_for(tmp_path, 100, {"4040": 1, "4081": 1}, "  frame: {high: [0]}\n")
    plan = decode.plan
    for t in range(101):
        counts = {v.net: binary_q1_based(t, v.pin_name) for v in plan.vars}
        assert evaluate(decode.reset.expression, counts) == (t == 100)


def test_cycle_100_reset_decodes_q7_q6_q3(tmp_path):
    # common practice: 100 = 0b1100100 = 64 + 32 + 4, so the 4040's Q7, Q6 and Q3 ANDed
    # (states above 100 are never reached) make the mod-100 reset
    decode = decode_for(tmp_path, 100, {"4040": 1, "4081": 1}, "  frame: {high: [0]}\n")
    assert decode.reset.expression == "Q7·Q6·Q3"
    assert decode.functions[-1].name == "_reset"
    assert (decode.reset.literals, decode.reset.terms, decode.reset.polarity) == (3, 1, "high")


@pytest.mark.parametrize("cycle", [3, 10, 12])
def test_synchronous_clear_decodes_the_last_held_state(tmp_path, cycle):
    # Motorola MC74HC161A/163A data sheet (hc-74.md): the 163's reset is synchronous, so a
    # mod-N count decodes state N-1 into it and the next rising clock edge clears to 0;
    # the decode must fire on N-1 (a held state) and on no other held state
    decode = decode_for(tmp_path, cycle, {"74HC163": 1, "74HC00": 2, "74HC04": 1},
                        "  frame: {high: [0]}\n")
    plan = decode.plan
    assert plan.reset is not None
    for t in range(cycle):
        counts = {v.net: binary_q0_based(t, v.pin_name) for v in plan.vars}
        assert evaluate(decode.reset.expression, counts) == (t == cycle - 1)


def test_and_of_the_four_lowest_outputs_asserts_one_tick_in_sixteen(tmp_path):
    # common practice: Q1·Q2·Q3·Q4 of a binary divider is high in one count of every 16
    # (count 15), a 6.25 % duty cycle
    decode = decode_for(tmp_path, 256, {"4040": 1}, "  strobe: {high: \"t % 16 == 15\"}\n")
    strobe = decode.signals["strobe"]
    assert strobe.expression == "Q4·Q3·Q2·Q1"
    assert (strobe.literals, strobe.terms, strobe.depends_on) == (4, 1, ("Q4", "Q3", "Q2", "Q1"))
    assert len(strobe.delivered) / 256 == 0.0625
    assert decode.cover.proven_minimal


def test_decoded_counter_outputs_are_ored(tmp_path):
    # [bp4017]: one decoded output high per state, so ticks 1 and 2 are Q1 + Q2 (common practice)
    decode = decode_for(tmp_path, 6, {"4017": 1}, "  pair: {high: [[1, 3]]}\n")
    pair = decode.signals["pair"]
    assert set(pair.expression.split(" + ")) == {"Q1", "Q2"}
    assert pair.literals == 2 and decode.reset is None     # Q6 drives RESET directly
    assert pair.dc_states_used            # the never-held output mixes were don't-cares


def test_stretch_takes_the_cheapest_run(tmp_path):
    # common practice: an aligned run of 2^k ticks is one product term; [0, 3) stretched by one
    # tick is [0, 4) = Q4'·Q3' on a 4-stage count
    decode = decode_for(tmp_path, 16, {"4040": 1}, "  load: {high: [[0, 3]], stretch: 1}\n")
    load = decode.signals["load"]
    assert load.expression == "Q4'·Q3'"
    assert load.delivered == frozenset(range(4)) and load.stretch_added == frozenset({3})


def test_stretch_moves_an_edge_clear_of_another(tmp_path):
    # formats.md section 2: stretch adds a contiguous run after the window end; clear_of asks
    # every edge of b to be 2 ticks from every edge of a: a's end at 6 is 1 tick from b's at 7,
    # ends 7 and 8 are no better, end 9 is 2 ticks away
    signals = "  a: {high: [[0, 6]], stretch: 3}\n  b: {high: [[2, 7]], clear_of: {a: 2}}\n"
    decode = decode_for(tmp_path, 16, {"4040": 1}, signals)
    assert decode.delivered["a"] == frozenset(range(9))
    assert decode.signals["a"].stretch_added == frozenset({6, 7, 8})


def test_dont_care_ticks_that_break_clear_of_stay_unasserted(tmp_path):
    # [0, 8) is the cheapest cover of a (Q4' alone) but puts its edge 1 tick from b's at 9;
    # with the don't-cares kept low the edge stays at 6, 3 ticks away (formats.md clear_of)
    signals = ("  a: {high: [[0, 6]], dont_care: [[6, 8]]}\n"
               "  b: {high: [[9, 12]], clear_of: {a: 2}}\n")
    decode = decode_for(tmp_path, 16, {"4040": 1}, signals)
    assert decode.delivered["a"] == frozenset(range(6))
    assert decode.dont_cares_used["a"] == frozenset()


def test_clear_of_that_no_choice_meets_is_bad_input(tmp_path, capsys):
    # a's edge can sit at 4, 5 or 6 (don't-cares) and b's is fixed at 5: always < 2 ticks apart
    signals = ("  a: {high: [[0, 4]], dont_care: [[4, 6]]}\n"
               "  b: {high: [[5, 8]], clear_of: {a: 2}}\n")
    spec_path, bin_path = write(tmp_path, 16, {"4040": 1}, signals)
    spec = load_spec(spec_path)
    with pytest.raises(SpecError, match="clear_of"):
        derive(spec, allocate(spec, load_bin(bin_path, CATALOG), CATALOG))
    assert main(["decode", str(spec_path), "--bin", str(bin_path)]) == 2
    assert "clear_of" in capsys.readouterr().err


def test_free_polarity_reports_the_delivered_level(tmp_path):
    # formats.md section 2: a free signal may come out either way up and must say which
    decode = decode_for(tmp_path, 64, {"4040": 1},
                        "  track: {high: [[0, 24]], polarity: free}\n")
    track = decode.signals["track"]
    assert track.polarity == ("high" if track.phase == "true" else "low")
    assert "track" in decode.free_phase


# ---------------------------------------------------------------- the command

def test_decode_command_prints_counter_pins_and_pictures(tmp_path, capsys):
    spec_path, bin_path = write(tmp_path, 16, {"CD4040BE": 1}, "  load: {high: [[0, 4]]}\n")
    assert main(["decode", str(spec_path), "--bin", str(bin_path)]) == 0
    out = capsys.readouterr().out
    assert "‾‾‾‾____________" in out            # ticks 0-3 asserted of 16
    assert "Q4'·Q3'" in out and "4040" in out and "falling edge of CLK" in out


def test_decode_command_json(tmp_path, capsys):
    spec_path, bin_path = write(tmp_path, 256, {"4040": 1}, "  strobe: {high: \"t % 16 == 15\"}\n")
    assert main(["decode", str(spec_path), "--bin", str(bin_path), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["clock_edge"] == "falling"        # [isl4040]: negative clock transition
    assert doc["counter"]["chips"][0]["part"] == "4040"
    assert [v["pin"] for v in doc["counter"]["variables"][:4]] == [9, 7, 6, 5]   # [isl4040] Q1-Q4
    strobe = doc["signals"]["strobe"]
    assert strobe["expression"] == "Q4·Q3·Q2·Q1" and strobe["literals"] == 4
    assert strobe["delivered"][:2] == [[15, 16], [31, 32]]
