"""The stimulus spec (synth/spec.py) against the format contract.

Every rule checked here is quoted from, or decided under, formats.md section 2
("The stimulus spec"), the project's contract; the module docstring of
synth/spec.py records the choices the contract leaves open.  Brute-force
references (plain loops over every tick, written in this file) stand beside
the checks of tick sets, edges and stretch choices.  Time conversions use
the definition of a clock tick: one tick lasts 1/f seconds.
"""

from __future__ import annotations

import itertools
import textwrap

import pytest
from hypothesis import given, settings, strategies as st

from synth.errors import InputError, SpecError
from synth.spec import (ClockSpec, SignalSpec, Spec, clear_of_feasible, clear_of_violations,
                        cyclic_distance, cyclic_runs, edges, load_spec, stretch_needed,
                        stretch_option_count, stretch_options, time_to_ticks, windows_of)


def load(text: str, path: str = "bench.yaml"):
    return load_spec(path, text=textwrap.dedent(text))


def refused(text: str, path: str = "bench.yaml") -> SpecError:
    with pytest.raises(SpecError) as caught:
        load(text, path)
    return caught.value


def signal(high, cycle, stretch=0, name="s") -> SignalSpec:
    high = frozenset(high)
    return SignalSpec(name, high, frozenset(), "high", None, windows_of(high, cycle), {},
                      stretch, 1)


# The example from formats.md section 2, without the frame/sample clear_of
# (as written there, frame and sample both rise at tick 0, which no stretch
# can separate; see test_contract_example_clear_of_collides_at_tick_0).
CONTRACT_EXAMPLE = """\
name: sh-bench
supply: 5 V
clock: {frequency: 50 kHz}
cycle: 256
signals:
  sample:
    high: [[0, 4]]
    every: 32
    polarity: free
  convert:
    high: "t % 32 == 20"
  frame:
    high: [[0, 128]]
    dont_care: [[126, 130]]
    stretch: 8
switches:
  probe_in:
    select: sample
    on: ladder_out
    off: GND
"""


# -- the contract example ---------------------------------------------------

def test_contract_example_reads_as_the_contract_says():
    spec = load(CONTRACT_EXAMPLE)
    assert spec.name == "sh-bench"
    assert spec.supply == 5.0
    assert spec.clock == ClockSpec(50e3, "external", None)
    assert spec.cycle == 256
    assert list(spec.signals) == ["sample", "convert", "frame"]
    sample = spec.signals["sample"]
    # "With every: P, tick t is asserted when t mod P lies in a window."
    assert sample.high == frozenset(t for t in range(256) if t % 32 < 4)
    assert sample.every == 32 and sample.polarity == "free"
    assert sample.windows == tuple((k, k + 4) for k in range(0, 256, 32))
    assert spec.signals["convert"].high == frozenset(t for t in range(256) if t % 32 == 20)
    frame = spec.signals["frame"]
    assert frame.dont_care == frozenset(range(126, 130))
    assert frame.high == frozenset(range(126))          # dont_care wins over high
    assert frame.stretch == 8
    assert spec.switches["probe_in"].select == "sample"
    assert (spec.switches["probe_in"].on, spec.switches["probe_in"].off) == ("ladder_out", "GND")
    assert spec.line_of_signal == {"sample": 6, "convert": 10, "frame": 12}
    assert spec.switches["probe_in"].line == 17
    assert spec.period_of("sample") == 32 and spec.period_of("frame") == 256


def test_contract_example_clear_of_collides_at_tick_0():
    # frame rises at boundary 0 and so does sample; a rise never moves.
    text = CONTRACT_EXAMPLE.replace("    dont_care: [[126, 130]]\n", "    clear_of: {sample: 1}\n")
    error = refused(text)
    assert error.line == 14
    assert "edges of frame at tick 0 and sample at 0 collide" in error.message
    assert "window starts never move" in error.hint


# -- defaults and top level -------------------------------------------------

def test_defaults():
    spec = load("""\
        cycle: 8
        signals:
          pulse: {high: [3]}
        """, path="benches/row-scan.yaml")
    assert spec.name == "row-scan"                 # "default: the file's stem"
    assert spec.supply == 5.0                      # "default 5 V"
    assert spec.clock == ClockSpec(None, "external", None)
    assert spec.switches == {} and spec.levels == {}
    pulse = spec.signals["pulse"]
    assert (pulse.polarity, pulse.every, pulse.stretch, pulse.clear_of) == ("high", None, 0, {})
    assert pulse.dont_care == frozenset() and pulse.line == 3


@pytest.mark.parametrize("written, volts", [("5 V", 5.0), ("5", 5.0), (5, 5.0), ("12V", 12.0),
                                            ("3.3 V", 3.3), (15, 15.0)])
def test_supply_forms(written, volts):
    spec = load(f"supply: {written!r}\ncycle: 4\nsignals: {{a: {{high: [0]}}}}\n"
                if isinstance(written, str) else
                f"supply: {written}\ncycle: 4\nsignals: {{a: {{high: [0]}}}}\n")
    assert spec.supply == volts


def test_clock_extensions():
    spec = load("""\
        clock: {frequency: 32.768 kHz, source: oscillator, tolerance: 10 %}
        cycle: 4
        signals: {a: {high: [0]}}
        """)
    assert spec.clock == ClockSpec(32768.0, "oscillator", 0.1)


def test_levels_read_with_defaults():
    spec = load("""\
        cycle: 64
        signals: {a: {high: [0]}}
        levels:
          ramp: {bits: [2, 3, 4, 5]}
          coarse: {bits: [4, 5], kind: binary, tolerance: 1 %, load: 100k}
        """)
    ramp, coarse = spec.levels["ramp"], spec.levels["coarse"]
    assert (ramp.bits, ramp.kind, ramp.tolerance, ramp.tolerance_given, ramp.load_ohms) == \
        ((2, 3, 4, 5), "r2r", 0.05, False, None)
    assert (coarse.kind, coarse.tolerance, coarse.load_ohms, coarse.line) == ("binary", 0.01, 100e3, 5)


@pytest.mark.parametrize("entry, line, message", [
    ("ramp: {bits: [0, 1], gain: 2}", 4, "levels.ramp: unknown key 'gain'"),
    ("ramp: {bits: [0, 6]}", 4, "levels.ramp.bits: bit 6 is out of range for a cycle of 64 ticks"),
    ("ramp: {bits: [0, 0]}", 4, "levels.ramp.bits: bit 0 is listed twice"),
    ("ramp: {bits: []}", 4, "levels.ramp.bits: expected a list of tick bits"),
    ("ramp: {bits: [0.5]}", 4, "levels.ramp.bits: expected whole numbers"),
    ("ramp: {kind: r2r}", 4, "levels.ramp: missing 'bits'"),
    ("ramp: {bits: [0], kind: weighted}", 4, "levels.ramp.kind: expected r2r or binary"),
    ("ramp: {bits: [0], tolerance: 5}", 4, "levels.ramp.tolerance: expected a percentage"),
    ("ramp: {bits: [0], tolerance: 60 %}", 4, "expected a tolerance above 0 % and below 50 %"),
    ("ramp: {bits: [0], tolerance: 0 %}", 4, "expected a tolerance above 0 % and below 50 %"),
    ("ramp: {bits: [0], load: lots}", 4, "levels.ramp.load: expected a resistance"),
    ("a: {bits: [0]}", 4, "levels: the name 'a' is already a signal or a switch"),
    ("VDD: {bits: [0]}", 4, "levels: the name 'VDD' is taken by a power net"),
    ("ramp: [0, 1]", 4, "levels.ramp: expected a mapping"),
])
def test_bad_levels_name_the_line(entry, line, message):
    with pytest.raises(SpecError) as caught:
        load(f"""\
            cycle: 64
            signals: {{a: {{high: [0]}}}}
            levels:
              {entry}
            """, path="bench.yaml")
    assert caught.value.line == line and caught.value.file == "bench.yaml"
    assert message in caught.value.message


def test_reads_a_file_and_names_it(tmp_path):
    path = tmp_path / "stepper-exerciser.yaml"
    path.write_text("cycle: 16\nsignals:\n  step: {high: [[0, 2]], every: 4}\n", encoding="utf-8")
    spec = load_spec(path)
    assert spec.name == "stepper-exerciser" and spec.path == path
    assert spec.signals["step"].high == frozenset({0, 1, 4, 5, 8, 9, 12, 13})
    with pytest.raises(SpecError) as caught:
        load_spec(tmp_path / "missing.yaml")
    assert "no such file" in str(caught.value) and "missing.yaml" in str(caught.value)


# -- windows ----------------------------------------------------------------

def test_window_is_half_open_and_may_end_at_the_cycle_end():
    spec = load("""\
        cycle: 256
        signals:
          tail: {high: [[250, 256]]}
          last: {high: [255]}
          first: {high: [0]}
        """)
    assert spec.signals["tail"].high == frozenset(range(250, 256))
    assert spec.signals["last"].high == frozenset({255})          # bare k = [k, k+1]
    assert spec.signals["first"].high == frozenset({0})
    assert spec.signals["tail"].windows == ((250, 256),)


def test_windows_any_order_touching_ones_merge():
    spec = load("""\
        cycle: 32
        signals:
          a: {high: [[8, 12], 3, [0, 2], [4, 8]]}
        """)
    a = spec.signals["a"]
    assert a.high == frozenset({0, 1, 3, 4, 5, 6, 7, 8, 9, 10, 11})
    assert a.windows == ((0, 2), (3, 12))


def test_run_across_the_cycle_end_is_split_in_windows():
    spec = load("""\
        cycle: 16
        signals:
          wrap: {high: [[14, 16], [0, 3]]}
        """)
    wrap = spec.signals["wrap"]
    assert wrap.windows == ((0, 3), (14, 16))                       # split at the cycle end
    assert cyclic_runs(wrap.high, 16) == ((14, 19),)                # merged when asked
    assert edges(wrap.high, 16) == (3, 14)                          # the split is no edge


def test_every_repeats_windows_and_dont_care():
    spec = load("""\
        cycle: 64
        signals:
          burst:
            every: 16
            high: [[0, 3], 15]
            dont_care: [3]
        """)
    burst = spec.signals["burst"]
    assert burst.high == frozenset(t for t in range(64) if t % 16 in (0, 1, 2, 15))
    # "dont_care repeats with the same every as high"
    assert burst.dont_care == frozenset(t for t in range(64) if t % 16 == 3)
    # a run crossing a period boundary (15, then 0..2 of the next) is one run
    assert burst.windows == ((0, 3), (15, 19), (31, 35), (47, 51), (63, 64))


def test_every_equal_to_cycle_is_allowed():
    spec = load("cycle: 8\nsignals:\n  a: {high: [[2, 8]], every: 8}\n")
    assert spec.signals["a"].high == frozenset(range(2, 8))


def test_dont_care_wins_over_high():
    spec = load("""\
        cycle: 16
        signals:
          a: {high: [[0, 8]], dont_care: [[6, 10]]}
        """)
    a = spec.signals["a"]
    assert a.high == frozenset(range(6)) and a.dont_care == frozenset(range(6, 10))
    assert not a.high & a.dont_care


def test_constant_signals_are_legal():
    spec = load("""\
        cycle: 8
        signals:
          never: {high: []}
          steady: {high: [[0, 8]]}
          steady_expr: {high: "t >= 0"}
        """)
    assert spec.signals["never"].high == frozenset() and spec.signals["never"].windows == ()
    assert spec.signals["steady"].high == frozenset(range(8))
    assert spec.signals["steady_expr"].high == frozenset(range(8))
    assert edges(spec.signals["steady"].high, 8) == ()


# -- expressions ------------------------------------------------------------

@pytest.mark.parametrize("windows, expression", [
    ("[[0, 4]]\n    every: 32", '"t % 32 < 4"'),
    ("[[0, 4]]\n    every: 32", '"t < 4"\n    every: 32'),       # over 0..every-1 with every
    ("[20]\n    every: 32", '"t % 32 == 20"'),
    ("[[100, 110], [200, 256]]", '"100 <= t < 110 or t >= 200"'),
    ("[[0, 2], [4, 6], [8, 10]]\n    every: 16", '"t % 4 < 2 and t < 10"\n    every: 16'),
    ("[]", '"t < 0"'),
])
def test_expression_equals_windows(windows, expression):
    by_windows = load(f"cycle: 256\nsignals:\n  a:\n    high: {windows}\n")
    by_expression = load(f"cycle: 256\nsignals:\n  a:\n    high: {expression}\n")
    assert by_windows.signals["a"].high == by_expression.signals["a"].high


def test_expression_without_every_is_over_the_absolute_tick():
    spec = load('cycle: 64\nsignals:\n  a: {high: "t // 16 == 2"}\n')
    assert spec.signals["a"].high == frozenset(range(32, 48))


def test_dont_care_as_expression():
    spec = load('cycle: 64\nsignals:\n  a: {high: [[0, 4]], dont_care: "t % 2 == 1", every: 8}\n')
    a = spec.signals["a"]
    assert a.dont_care == frozenset(t for t in range(64) if t % 2 == 1)
    assert a.high == frozenset(t for t in range(64) if t % 8 in (0, 2))


# -- time values ------------------------------------------------------------

def test_times_in_whole_ticks():
    # At 50 kHz one tick lasts 1 / 50e3 s = 20 us.
    spec = load("""\
        clock: {frequency: 50 kHz}
        cycle: 5.12 ms
        signals:
          sample:
            high: [["0 us", "80 us"], "200 us"]
            every: 640 us
            stretch: 40 us
          frame:
            high: [[6, 120]]
            clear_of: {sample: 20 us}
        """)
    assert spec.cycle == 256
    sample = spec.signals["sample"]
    assert sample.every == 32 and sample.stretch == 2
    assert sample.high == frozenset(t for t in range(256) if t % 32 in (0, 1, 2, 3, 10))
    assert spec.signals["frame"].clear_of == {"sample": 1}


def test_time_to_ticks_names_the_nearest_counts():
    # 40 us at 49.5 kHz = 40e-6 * 49.5e3 = 1.98 ticks; 2 ticks = 40.4 us, 1 tick = 20.2 us.
    with pytest.raises(ValueError) as caught:
        time_to_ticks(40e-6, 49.5e3, "40 us")
    assert str(caught.value) == ("40 us is 1.98 ticks at 49.5 kHz; use 2 ticks (40.4 µs) "
                                 "or 1 tick (20.2 µs)")
    assert time_to_ticks(1e-3, 1e3, "1 ms") == 1
    assert time_to_ticks(0.1, 30.0, "100 ms") == 3        # 3.0000000000000004 is whole


def test_inexact_time_is_refused_with_the_nearest_ticks():
    error = refused("""\
        clock: {frequency: 49.5 kHz}
        cycle: 256
        signals:
          sample:
            high: [[0, 4]]
            every: 40 us
        """)
    assert error.line == 6
    assert error.message == ("signals.sample.every: 40 us is 1.98 ticks at 49.5 kHz; "
                             "use 2 ticks (40.4 µs) or 1 tick (20.2 µs)")


def test_inexact_time_offers_only_allowed_counts():
    # 10 us at 50 kHz is 0.5 ticks; a period of 0 ticks is no choice.
    error = refused("clock: {frequency: 50 kHz}\ncycle: 8\nsignals:\n  a: {high: [0], every: 10 us}\n")
    assert error.message.endswith("use 1 tick (20 µs)")


def test_time_without_a_clock_frequency():
    error = refused("""\
        cycle: 256
        signals:
          sample:
            high: [[0, "40 us"]]
        """)
    assert error.line == 4
    assert "'40 us' is a time, but the spec gives no clock frequency" in error.message
    assert "clock: {frequency: 50 kHz}" in error.hint


# -- polarity, clear_of, switches -------------------------------------------

@pytest.mark.parametrize("polarity", ["high", "low", "free"])
def test_polarity(polarity):
    spec = load(f"cycle: 4\nsignals:\n  a: {{high: [0], polarity: {polarity}}}\n")
    assert spec.signals["a"].polarity == polarity


def test_edges_and_cyclic_distance_across_the_cycle_end():
    # a: ticks 0,1 -> edges at 0 and 2; b: tick 14 -> edges at 14 and 15 (cycle 16).
    a, b = frozenset({0, 1}), frozenset({14})
    assert edges(a, 16) == (0, 2) and edges(b, 16) == (14, 15)
    assert cyclic_distance(0, 15, 16) == 1 and cyclic_distance(15, 0, 16) == 1
    assert cyclic_distance(2, 14, 16) == 4


@settings(max_examples=200, deadline=None)
@given(st.integers(1, 40).flatmap(lambda c: st.tuples(st.just(c), st.frozensets(st.integers(0, c - 1)))))
def test_edges_match_the_definition(case):
    cycle, ticks = case
    # "An edge of s is a boundary b (between tick b-1 and tick b, cyclically)
    #  where the asserted state changes."
    expected = [b for b in range(cycle)
                if (((b - 1) % cycle) in ticks) != (b in ticks)]
    assert list(edges(ticks, cycle)) == expected
    assert len(expected) % 2 == 0
    assert edges(frozenset(range(cycle)) - ticks, cycle) == edges(ticks, cycle)


def test_clear_of_distances_are_cyclic():
    # gate edges 0, 2; strobe edges 14, 15; 15 -> 0 is 1 tick across the cycle end.
    # Neither edge can move (no stretch): a sure collision, refused at load.
    error = refused("""\
        cycle: 16
        signals:
          gate:
            high: [[0, 2]]
            clear_of: {strobe: 2}
          strobe: {high: [14]}
        """)
    assert error.line == 5
    assert error.message == ("signals.gate.clear_of.strobe: edges of gate at tick 0 and strobe "
                             "at 15 are 1 tick apart, clear_of needs 2")
    # one tick less asked for, and the same spec loads
    spec = load("cycle: 16\nsignals:\n  gate: {high: [[0, 2]], clear_of: {strobe: 1}}\n"
                "  strobe: {high: [14]}\n")
    assert clear_of_violations(spec, {}) == []


def test_clear_of_violations_lists_every_close_pair():
    spec = load("""\
        cycle: 16
        signals:
          gate: {high: [[0, 2]], dont_care: [5]}
          strobe: {high: [14], clear_of: {gate: 2}}
        """)
    found = clear_of_violations(spec, {})
    assert [tuple(v) for v in found] == [("strobe", "gate", 15, 0, 1, 2)]
    # delivered sets replace the written ones: move the strobe to tick 8
    assert clear_of_violations(spec, {"strobe": frozenset({8})}) == []


def test_clear_of_with_dont_care_is_left_to_later_stages():
    spec = load("""\
        cycle: 16
        signals:
          a: {high: [[0, 4]], dont_care: [8], clear_of: {b: 1}}
          b: {high: [[0, 2]]}
        """)
    assert clear_of_violations(spec, {})[0][:3] == ("a", "b", 0)


def test_clear_of_within_stretch_loads():
    spec = load("""\
        cycle: 256
        signals:
          sample: {high: [[128, 130]]}
          frame:
            high: [[4, 128]]
            clear_of: {sample: 1}
            stretch: 2
        """)
    assert clear_of_feasible(spec, "frame", "sample") is True
    # the written set collides; one stretched choice clears it
    assert clear_of_violations(spec, {}) != []
    frame = spec.signals["frame"]
    clear = [option for option in stretch_options(frame, 256)
             if not clear_of_violations(spec, {"frame": option})]
    assert clear == [frozenset(range(4, 129))]


def test_clear_of_beyond_stretch_says_how_much_would_do():
    error = refused("""\
        cycle: 256
        signals:
          sample: {high: [[128, 130]]}
          frame:
            high: [[4, 128]]
            clear_of: {sample: 1}
        """)
    assert error.line == 6
    assert error.message == ("signals.frame.clear_of.sample: edges of frame at tick 128 and "
                             "sample at 128 collide")
    assert error.hint == "stretch: 1 on frame would clear them"


def test_stretch_needed_picks_the_signal_whose_end_can_move():
    spec_text = """\
        cycle: 64
        signals:
          a: {high: [[10, 20]], clear_of: {b: 3}, stretch: 1}
          b: {high: [[20, 30]]}
        """
    # a's end (20) meets b's start (20): b's start never moves; a's end must reach 23
    # and stay 3 from 30 too (so 23..27).  Stretch 3 on a is the least.
    error = refused(spec_text)
    assert error.hint == "stretch: 3 on a would clear them"


def test_stretch_needed_none_when_starts_collide():
    spec = load("""\
        cycle: 64
        signals:
          a: {high: [[10, 20]], dont_care: [40]}
          b: {high: [[10, 30]], clear_of: {a: 1}}
        """)
    assert stretch_needed(spec, "b", "a") is None
    assert clear_of_feasible(spec, "b", "a") is False


def test_switch_on_off_are_read_despite_yaml_booleans():
    # YAML 1.1 reads the bare keys on/off as booleans; they still mean on/off here.
    spec = load("""\
        cycle: 8
        signals: {probe: {high: [1]}}
        switches:
          probe_in: {select: probe, on: ladder_out, off: GND}
          tap: {select: probe, "on": VDD, "off": ref_2v5}
        """)
    assert spec.switches["probe_in"].on == "ladder_out"
    assert spec.switches["probe_in"].off == "GND"
    assert (spec.switches["tap"].on, spec.switches["tap"].off) == ("VDD", "ref_2v5")


# -- stretch options ----------------------------------------------------------

def _brute_force_stretch(high: frozenset[int], cycle: int, k: int) -> set[frozenset[int]]:
    """Every superset of ``high`` that adds 0..k ticks right after each run's end.

    Checked directly on each candidate: the same runs in the same places (same
    starts, so no pulse merged into another or appeared), each at most k longer.
    """
    rest = sorted(set(range(cycle)) - high)
    allowed = set()
    for size in range(len(rest) + 1):
        for added in itertools.combinations(rest, size):
            candidate = high | frozenset(added)
            if len(candidate) == cycle and len(high) < cycle:
                continue                    # the last gap filled: no pulse left
            old, new = cyclic_runs(high, cycle), cyclic_runs(candidate, cycle)
            starts = {s % cycle: e - s for s, e in old}
            if len(new) != len(old) or any(s % cycle not in starts for s, _ in new):
                continue
            if all(0 <= (e - s) - starts[s % cycle] <= k for s, e in new):
                allowed.add(candidate)
    return allowed


def test_stretch_options_small_example():
    # runs [0, 2) and [5, 6) in a cycle of 8, stretch 2: first run may grow
    # by 0..2 (gap 3), second by 0..1 (gap 2 before the wrap to tick 0).
    options = list(stretch_options(signal({0, 1, 5}, 8, stretch=2), 8))
    assert options[:3] == [frozenset({0, 1, 5}), frozenset({0, 1, 2, 5, 6}),
                           frozenset({0, 1, 2, 3, 5, 6})]   # uniform choices first
    assert set(options) == {frozenset({0, 1, 5}) | frozenset(range(2, 2 + a))
                            | frozenset(range(6, 6 + b)) for a in range(3) for b in range(2)}
    assert len(options) == len(set(options)) == 6


@settings(max_examples=150, deadline=None)
@given(st.integers(2, 10).flatmap(lambda c: st.tuples(
    st.just(c), st.frozensets(st.integers(0, c - 1)), st.integers(0, 4))))
def test_stretch_options_equal_the_brute_force_set(case):
    cycle, high, k = case
    sig = signal(high, cycle, stretch=k)
    options = list(stretch_options(sig, cycle))
    assert len(options) == len(set(options)) == stretch_option_count(sig, cycle)
    assert options[0] == high
    assert set(options) == _brute_force_stretch(high, cycle, k)


def test_stretch_options_cap_and_order():
    # 8 pulses of 1 tick every 8 ticks, stretch 3: 4^8 = 65536 choices.
    high = frozenset(range(0, 64, 8))
    sig = signal(high, 64, stretch=3)
    assert stretch_option_count(sig, 64) == 4 ** 8
    options = list(stretch_options(sig, 64, limit=100))
    assert len(options) == len(set(options)) == 100
    assert options[:4] == [frozenset(t for t in range(64) if t % 8 <= u) for u in range(4)]
    allowed = {frozenset(t for t in range(64) if t % 8 == 0)}
    for option in options:          # each one is a legal stretch (runs differ per repetition)
        runs = cyclic_runs(option, 64)
        assert [s for s, _ in runs] == list(range(0, 64, 8))
        assert all(1 <= e - s <= 4 for s, e in runs)
    assert options[4] not in allowed and len({len(o) for o in options[4:]}) > 1


def test_stretch_never_merges_pulses():
    # gap of 2 ticks: at most 1 extra tick, whatever the stretch.
    sig = signal({0, 1, 4, 5}, 8, stretch=5)
    options = set(stretch_options(sig, 8))
    assert frozenset(range(8)) not in options
    assert all(len(cyclic_runs(option, 8)) == 2 for option in options)
    assert len(options) == 4


def test_stretch_of_constant_signals():
    assert list(stretch_options(signal(set(), 8, stretch=3), 8)) == [frozenset()]
    assert list(stretch_options(signal(range(8), 8, stretch=3), 8)) == [frozenset(range(8))]


# -- random windows -------------------------------------------------------------

@st.composite
def window_lists(draw):
    period = draw(st.integers(1, 40))
    repeats = draw(st.integers(1, 4))
    items = draw(st.lists(st.tuples(st.integers(0, period - 1), st.integers(1, period)).map(
        lambda p: (p[0], max(p[0] + 1, p[1]))), max_size=6))
    bare = draw(st.lists(st.booleans(), min_size=len(items), max_size=len(items)))
    return period, repeats, items, bare


def _yaml_windows(items, bare):
    return "[" + ", ".join(str(a) if flag and b == a + 1 else f"[{a}, {b}]"
                           for (a, b), flag in zip(items, bare)) + "]"


@settings(max_examples=300, deadline=None)
@given(window_lists())
def test_random_windows_equal_the_brute_force_set(case):
    period, repeats, items, bare = case
    cycle = period * repeats
    text = (f"cycle: {cycle}\nsignals:\n  a:\n    high: {_yaml_windows(items, bare)}\n"
            f"    every: {period}\n")
    overlapping = any(a1 < b2 and a2 < b1
                      for (i, (a1, b1)), (j, (a2, b2)) in itertools.combinations(enumerate(items), 2))
    if overlapping:
        error = refused(text)
        assert "overlap" in error.message and error.line == 4
        return
    spec = load(text)
    # brute force: tick t is asserted when t mod P lies in some window [a, b)
    expected = frozenset(t for t in range(cycle) if any(a <= t % period < b for a, b in items))
    assert spec.signals["a"].high == expected
    assert windows_of(expected, cycle) == spec.signals["a"].windows
    assert frozenset(t for a, b in spec.signals["a"].windows for t in range(a, b)) == expected


@settings(max_examples=100, deadline=None)
@given(st.integers(1, 30), st.integers(0, 35), st.integers(0, 35))
def test_random_single_window_range_check(period, a, b):
    text = f"cycle: {period * 2}\nsignals:\n  a:\n    every: {period}\n    high: [[{a}, {b}]]\n"
    if 0 <= a < b <= period:
        assert load(text).signals["a"].high == frozenset(
            t for t in range(period * 2) if a <= t % period < b)
    else:
        error = refused(text)
        assert error.line == 5 and f"window [{a}, {b}]" in error.message


# -- bad specs: the line and a helpful message --------------------------------

BAD_SPECS = [
    ("unknown top-level key",
     "cycle: 8\ncycel: 3\nsignals: {a: {high: [1]}}\n",
     2, "spec: unknown key 'cycel'", "did you mean 'cycle'?"),
    ("unknown signal key",
     "cycle: 8\nsignals:\n  a:\n    high: [1]\n    strech: 2\n",
     5, "signals.a: unknown key 'strech'", "did you mean 'stretch'?"),
    ("unknown clock key",
     "clock:\n  frequncy: 5 kHz\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     2, "clock: unknown key 'frequncy'", "did you mean 'frequency'?"),
    ("unknown switch key",
     "cycle: 8\nsignals: {a: {high: [1]}}\nswitches:\n  p:\n    select: a\n    on: x\n"
     "    off: GND\n    of: y\n",
     8, "switches.p: unknown key 'of'", "did you mean"),
    ("overlapping windows",
     "cycle: 16\nsignals:\n  a:\n    high:\n      - [0, 8]\n      - [4, 12]\n",
     6, "signals.a.high: windows [0, 8] and [4, 12] overlap at ticks 4-7", "merge"),   # inclusive: 4, 5, 6, 7
    ("overlapping bare tick",
     "cycle: 16\nsignals:\n  a:\n    high:\n      - 5\n      - [4, 12]\n",
     6, "windows [4, 12] and [5, 6] overlap at tick 5", None),   # the later line
    ("window past the cycle",
     "cycle: 16\nsignals:\n  a: {high: [[10, 17]]}\n",
     3, "window [10, 17] goes past the cycle of 16 ticks", "<= 16"),
    ("window past every",
     "cycle: 256\nsignals:\n  a:\n    every: 32\n    high: [[30, 40]]\n",
     5, "window [30, 40] goes past every: 32", "<= 32"),
    ("empty window",
     "cycle: 16\nsignals:\n  a: {high: [[4, 4]]}\n",
     3, "window [4, 4] is empty; expected start < end", "a <= t < b"),
    ("negative window start",
     "cycle: 16\nsignals:\n  a: {high: [[-2, 4]]}\n",
     3, "window [-2, 4] starts before tick 0", None),
    ("window with three numbers",
     "cycle: 16\nsignals:\n  a: {high: [[1, 2, 3]]}\n",
     3, "expected a window [start, end], got a list [1, 2, 3]", None),
    ("bare tick at the cycle end",
     "cycle: 16\nsignals:\n  a: {high: [16]}\n",
     3, "window [16, 17] goes past the cycle of 16 ticks", None),
    ("every not dividing cycle",
     "cycle: 256\nsignals:\n  a:\n    high: [[0, 4]]\n    every: 48\n",
     5, "signals.a.every: expected a divisor of cycle 256, got 48", "32 or 64"),
    ("malformed expression",
     "cycle: 8\nsignals:\n  a:\n    high: \"t % 32 = 20\"\n",
     4, "signals.a.high: expected '==' to compare, got '=' at column 8", "expressions use t"),
    ("attribute access",
     "cycle: 8\nsignals:\n  a: {high: 't.__class__ == 0'}\n",
     3, "attribute access is not allowed: 't.__class__'", None),
    ("call",
     "cycle: 8\nsignals:\n  a: {high: 'abs(t) > 2'}\n",
     3, "calls are not allowed: 'abs(t)'", None),
    ("subscript",
     "cycle: 8\nsignals:\n  a: {high: 't[0] == 1'}\n",
     3, "subscripts are not allowed: 't[0]'", None),
    ("lambda",
     "cycle: 8\nsignals:\n  a:\n    high: 'lambda: 1'\n",
     4, "lambda is not allowed: 'lambda: 1'", None),
    ("string inside expression",
     "cycle: 8\nsignals:\n  a: {high: \"t == 'x'\"}\n",
     3, "strings are not allowed: \"'x'\"", None),
    ("number instead of condition",
     "cycle: 8\nsignals:\n  a: {high: 't % 4'}\n",
     3, "expected a condition such as 't % 32 == 20', got the number 't % 4'", None),
    ("unknown signal in clear_of",
     "cycle: 8\nsignals:\n  a:\n    high: [1]\n    clear_of:\n      b: 1\n  c: {high: [2]}\n"
     "  d: {high: [3]}\n",
     6, "signals.a.clear_of: unknown signal 'b'", "known signals: c, d"),
    ("clear_of itself",
     "cycle: 8\nsignals:\n  a:\n    high: [1]\n    clear_of: {a: 1}\n",
     5, "a signal cannot be clear of itself", None),
    ("clear_of zero",
     "cycle: 8\nsignals:\n  a: {high: [1], clear_of: {b: 0}}\n  b: {high: [5]}\n",
     3, "signals.a.clear_of.b: expected a distance of at least 1 tick, got 0", None),
    ("time not whole ticks",
     "clock: {frequency: 50 kHz}\ncycle: 256\nsignals:\n  a:\n    high: [[0, 30 us]]\n",
     5, "30 us is 1.5 ticks at 50 kHz; use 1 tick (20 µs) or 2 ticks (40 µs)", None),
    ("time without clock",
     "cycle: 256\nsignals:\n  a:\n    high: [[0, 4]]\n    stretch: 40 us\n",
     5, "signals.a.stretch: '40 us' is a time, but the spec gives no clock frequency",
     "clock: {frequency: 50 kHz}"),
    ("missing cycle",
     "name: bench\nsignals: {a: {high: [1]}}\n",
     1, "missing required key 'cycle'", "cycle: 256"),
    ("zero cycle",
     "cycle: 0\nsignals: {a: {high: []}}\n",
     1, "cycle: expected a cycle of at least 1 tick, got 0", None),
    ("fractional cycle",
     "cycle: 25.5\nsignals: {a: {high: []}}\n",
     1, "cycle: expected a whole number of ticks or a time such as '40 us', got 25.5", None),
    ("huge cycle",
     "cycle: 100000000\nsignals: {a: {high: []}}\n",
     1, "cycle: expected at most 1048576 ticks, got 100000000", None),
    ("missing signals",
     "cycle: 8\n",
     1, "missing required key 'signals'", None),
    ("no signals",
     "cycle: 8\nsignals: {}\n",
     2, "signals: expected at least one signal, got none", None),
    ("signal without asserted",
     "cycle: 8\nsignals:\n  a: {polarity: low}\n",
     3, "signals.a: missing 'asserted'", None),
    ("asserted of the wrong kind",
     "cycle: 8\nsignals:\n  a: {asserted: {from: 5}}\n",
     3, "signals.a.asserted: expected a list of windows [[start, end], ...], one tick, or an "
        "expression", None),
    ("negative stretch",
     "cycle: 8\nsignals:\n  a:\n    high: [1]\n    stretch: -1\n",
     5, "signals.a.stretch: expected a stretch of at least 0 ticks, got -1", None),
    ("bad polarity",
     "cycle: 8\nsignals:\n  a:\n    high: [1]\n    polarity: hgih\n",
     5, "signals.a.polarity: expected high, low or free, got 'hgih'", "did you mean 'high'?"),
    ("switch with unknown select",
     "cycle: 8\nsignals: {sample: {high: [1]}}\nswitches:\n  probe_in:\n    select: smaple\n"
     "    on: ladder_out\n    off: GND\n",
     5, "switches.probe_in.select: unknown signal 'smaple'", "known signals: sample"),
    ("switch missing off",
     "cycle: 8\nsignals: {a: {high: [1]}}\nswitches:\n  p: {select: a, on: x}\n",
     4, "switches.p: missing 'off'", None),
    ("switch net in lower case",
     "cycle: 8\nsignals: {a: {high: [1]}}\nswitches:\n  p:\n    select: a\n    on: x\n"
     "    off: gnd\n",
     7, "power nets are written in capitals, got 'gnd'", "write GND"),
    ("switch on equals off",
     "cycle: 8\nsignals: {a: {high: [1]}}\nswitches:\n  p: {select: a, on: x, off: x}\n",
     4, "on and off are the same net 'x'", None),
    ("switch net as YAML boolean",
     "cycle: 8\nsignals: {a: {high: [1]}}\nswitches:\n  p: {select: a, on: x, off: no}\n",
     4, "expected a net name, got the yes/no value false", "quote"),
    ("YAML syntax error",
     "cycle: 8\nsignals:\n  a: {high: [1]\n",
     4, "YAML syntax", "check indentation"),
    ("duplicate key",
     "cycle: 8\ncycle: 9\nsignals: {a: {high: [1]}}\n",
     2, "duplicate key 'cycle'", None),
    ("signal named clk",
     "cycle: 8\nsignals:\n  clk: {high: [1]}\n",
     3, "the name 'clk' is taken by the clock input", "clk_out"),
    ("signal named CLK",
     "cycle: 8\nsignals:\n  CLK: {high: [1]}\n",
     3, "the name 'CLK' is taken by the clock input", None),
    ("signal named after a power net",
     "cycle: 8\nsignals:\n  vdd: {high: [1]}\n",
     3, "the name 'vdd' is taken by a power net", None),
    ("signal named as a Verilog keyword",
     "cycle: 8\nsignals:\n  output: {high: [1]}\n",
     3, "the name 'output' is a Verilog keyword", "output_sig"),
    ("signal name not an identifier",
     "cycle: 8\nsignals:\n  sample-gate: {high: [1]}\n",
     3, "expected a signal name usable as a Verilog port, got 'sample-gate'", "letters, digits"),
    ("signal name starting with a digit",
     "cycle: 8\nsignals:\n  2nd: {high: [1]}\n",
     3, "got '2nd'", None),
    ("signal not a mapping",
     "cycle: 8\nsignals:\n  a: [[0, 4]]\n",
     3, "signals.a: expected a mapping such as {asserted: [[0, 4]]}, got a list [[0, 4]]", None),
    ("bad supply",
     "supply: five volts\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "supply: expected a voltage such as '5 V', got 'five volts'", None),
    ("negative supply",
     "supply: -5 V\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "supply: expected a positive voltage", None),
    ("bad clock frequency",
     "clock: {frequency: fast}\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "clock.frequency: expected a frequency such as '50 kHz', got 'fast'", None),
    ("oscillator without frequency",
     "clock: {source: oscillator}\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "clock.source: an oscillator needs clock.frequency", None),
    ("unknown clock source",
     "clock:\n  frequency: 1 kHz\n  source: crystl\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     3, "clock.source: expected external or oscillator, got 'crystl'", None),
    ("tolerance without a percent sign",
     "clock: {frequency: 1 kHz, tolerance: 0.1}\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "clock.tolerance: expected a percentage such as '10 %', got 0.1", "% sign"),
    ("name not text",
     "name: [a, b]\ncycle: 8\nsignals: {a: {high: [1]}}\n",
     1, "name: expected a text name such as 'sh-bench', got a list [a, b]", None),
    ("spec is a list",
     "- cycle: 8\n",
     1, "expected a mapping of spec keys (cycle, signals, ...), got a list", None),
    ("empty spec",
     "",
     1, "the spec is empty", None),
    ("dont_care overlapping itself",
     "cycle: 16\nsignals:\n  a:\n    high: [1]\n    dont_care: [[2, 6], [5, 9]]\n",
     5, "signals.a.dont_care: windows [2, 6] and [5, 9] overlap", None),
    ("bad tick string",
     "cycle: 16\nsignals:\n  a: {high: [[0, soon]]}\n",
     3, "expected a whole number of ticks or a time such as '40 us', got 'soon'", None),
]


@pytest.mark.parametrize("text, line, message, hint", [case[1:] for case in BAD_SPECS],
                         ids=[case[0] for case in BAD_SPECS])
def test_bad_spec_names_the_line_and_the_fix(text, line, message, hint):
    error = refused(text, path="specs/bench.yaml")
    assert isinstance(error, InputError) and error.exit_code == 2
    assert error.file == "specs/bench.yaml"
    assert error.line == line, str(error)
    assert message in error.message, str(error)
    if hint is not None:
        assert error.hint is not None and hint in error.hint, str(error)
    rendered = str(error)
    assert rendered.startswith(f"specs/bench.yaml:{line}: ") and "\n" not in rendered


def test_enough_kinds_of_bad_spec():
    assert len(BAD_SPECS) >= 15


# -- clear_of feasibility against exhaustive search ----------------------------

def _pair_spec(cycle, a_high, a_stretch, b_high, b_stretch, needed):
    a = SignalSpec("a", frozenset(a_high), frozenset(), "high", None,
                   windows_of(frozenset(a_high), cycle), {"b": needed}, a_stretch, 1)
    b = SignalSpec("b", frozenset(b_high), frozenset(), "high", None,
                   windows_of(frozenset(b_high), cycle), {}, b_stretch, 2)
    return Spec("pair", None, 5.0, ClockSpec(), cycle, {"a": a, "b": b}, {}, None,
                {"a": 1, "b": 2})


@settings(max_examples=300, deadline=None)
@given(st.integers(2, 14).flatmap(lambda c: st.tuples(
    st.just(c), st.frozensets(st.integers(0, c - 1)), st.integers(0, 3),
    st.frozensets(st.integers(0, c - 1)), st.integers(0, 3), st.integers(1, 4))))
def test_clear_of_feasible_equals_exhaustive_search(case):
    cycle, a_high, a_stretch, b_high, b_stretch, needed = case
    spec = _pair_spec(cycle, a_high, a_stretch, b_high, b_stretch, needed)
    # reference: try every stretch choice of both signals (small, so complete)
    exhaustive = any(not clear_of_violations(spec, {"a": x, "b": y})
                     for x in stretch_options(spec.signals["a"], cycle, limit=10 ** 6)
                     for y in stretch_options(spec.signals["b"], cycle, limit=10 ** 6))
    assert clear_of_feasible(spec, "a", "b") is exhaustive


@settings(max_examples=100, deadline=None)
@given(st.integers(4, 14).flatmap(lambda c: st.tuples(
    st.just(c), st.frozensets(st.integers(0, c - 1), min_size=1, max_size=c - 1),
    st.frozensets(st.integers(0, c - 1), min_size=1, max_size=c - 1), st.integers(1, 3))))
def test_stretch_needed_is_the_least_that_works(case):
    cycle, a_high, b_high, needed = case
    spec = _pair_spec(cycle, a_high, 0, b_high, 0, needed)
    answer = stretch_needed(spec, "a", "b")
    for name in ("a", "b"):
        works = [k for k in range(cycle + 1) if clear_of_feasible(spec, "a", "b", {name: k})]
        if answer is not None and answer[0] == name:
            assert works and works[0] == answer[1]
        if answer is None:
            assert works == []
        elif works:
            assert answer[1] <= works[0]
