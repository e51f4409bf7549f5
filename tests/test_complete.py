"""Completeness on tight bins: spare switch sections as 2:1 muxes, Shannon / XOR splits
of a signal joined by a section or by gates.

Outside checks: a 2:1 multiplexer's truth table (textbook definition: y = s ? d1 : d0);
the 4053 function table and pinout from the datasheets (TI CD4053B function table:
control low joins the common to the x throw; pins per TI CD4053B-Q1 and NXP 74HC4053,
as in /work/shared/reference/cmos-4000b.md); every split and every split design
checked by a brute force over all ticks of the cycle written here.
"""

from __future__ import annotations

import itertools

import pytest

from synth.inventory import Bin
from synth.mapper import build_library, map_design
from synth.mapper.cutsplit import joining_function
from synth.mapper.factor import cofactor, splits
from synth.minimize import Function
from synth.network import Gate, counting_words, evaluate_gate, evaluate_words


def window(t: int) -> bool:
    return 17 <= t % 64 < 49


def strobe(t: int) -> bool:
    return t % 16 == 15


def test_a_mux_gate_has_the_truth_table_of_a_2_to_1_multiplexer():
    # textbook: y = d0 while s is low, d1 while s is high
    gate = Gate("m", "4053", "mux", ("d0", "d1", "s"), ("y",))
    for d0, d1, s in itertools.product((False, True), repeat=3):
        assert evaluate_gate(gate, {"d0": d0, "d1": d1, "s": s})["y"] == (d1 if s else d0)


def test_the_4053_sections_follow_the_datasheet_function_table(catalog):
    # TI CD4053B: A = 0 joins a-common (14) to ax (12), A = 1 to ay (13); b: 10, 15, 2, 1;
    # c: 9, 4, 5, 3; INH is pin 6 (tied to VSS for plain use), VEE pin 7 (to VSS, single supply)
    part = catalog.parts["4053"]
    got = {u.id: (u.control, u.common, u.throws.low, u.throws.high) for u in part.units_of("spdt")}
    assert got == {"A": (11, 14, 12, 13), "B": (10, 15, 2, 1), "C": (9, 4, 5, 3)}
    assert part.ties == {6: "VSS"} and part.power["VEE"] == 7


def test_spare_sections_are_prepaid_cells_with_exact_caps(catalog):
    stock = Bin("b", 5.0, {"4053": 1, "4011": 1}, [], [], [], {}, {})
    lib = build_library(stock, catalog, reserved={"4053": 1}, switch_sections={"4053": 1})
    spare = lib.spare_switches()
    assert [(c.part, c.capacity, c.prepaid, c.mapped) for c in spare] == [("4053", 2, True, False)]
    one_taken = lib.less_spare(spare[0])
    assert one_taken.spare_switches()[0].capacity == 1
    assert not one_taken.less_spare(one_taken.spare_switches()[0]).spare_switches()
    assert "4053" not in {c.part for c in lib.mapped().cells}      # the gate engines never see them


@pytest.mark.parametrize("f", [window, strobe])
def test_every_split_recombines_to_the_signal_at_every_tick(f):
    on = frozenset(t for t in range(256) if f(t))
    fn = Function("f", on, frozenset())
    found = splits([fn], 8, lambda _: range(8))
    assert len(found) == 8
    for split in found:
        assert all(split.value(t) == f(t) for t in range(256))
        for level, (half_on, _) in ((0, (split.on0, split.dc0)), (1, (split.on1, split.dc1))):
            # a cofactor is the signal with the bit held, whatever the bit reads
            bit = 1 << split.var
            assert all((t in half_on) == f((t | bit) if level else (t & ~bit)) for t in range(256))


def test_the_window_splits_first_on_bit_5_as_an_xor():
    # 17 <= t % 64 < 49 is b5 XOR (b4 AND (b0|b1|b2|b3)): the split on bit 5 is the XOR case
    fn = Function("reset", frozenset(t for t in range(256) if window(t)), frozenset())
    first = splits([fn], 8, lambda _: range(6))[0]
    assert (first.var, first.xor) == (5, True)
    for t in range(256):
        b = [(t >> i) & 1 for i in range(8)]
        assert (t in first.on0) == bool(b[4] & (b[0] | b[1] | b[2] | b[3]))


def test_cofactor_keeps_dont_cares():
    on, dc = cofactor({3}, {1}, 2, 1, False)
    assert on == frozenset() and dc == frozenset({1, 3})


def tight_design(catalog, switches_used: int):
    """The tight drawer's decode (counter bits Q1..Q8 = b0..b7) over its logic parts, the
    4053 reserved for the spec's switches (``switches_used`` of its three sections)."""
    stock = Bin("tight", 5.0, {"4073": 1, "4011": 2, "40106": 1, "4053": 1}, [], [], [], {}, {})
    lib = build_library(stock, catalog, reserved={"4053": 1}, switch_sections={"4053": switches_used})
    nets = [f"Q{i + 1}" for i in range(8)]
    functions = [Function("strobe", frozenset(t for t in range(256) if strobe(t)), frozenset()),
                 Function("reset", frozenset(t for t in range(256) if window(t)), frozenset())]
    return map_design(functions, 8, nets, lib, polarity={"strobe": "high", "reset": "high"}), nets


def assert_meets_the_spec_at_every_tick(network, nets):
    values = evaluate_words(network, dict(zip(nets, counting_words(8))), 256)
    for name, f in (("strobe", strobe), ("reset", window)):
        out = network.signals[name]
        for t in range(256):                              # brute force over all ticks
            level = bool(values[out.net] >> t & 1)
            assert level == (f(t) == (out.polarity == "high")), (name, t)


def test_a_tight_bin_is_completed_by_a_spare_section_and_matches_every_tick(catalog):
    # one section for the spec's switch: the gate-only mapping finds nothing, a split
    # joined by a spare section does
    network, nets = tight_design(catalog, 1)
    muxes = [g for g in network.gates if g.part == "4053"]
    assert len(muxes) == 1 and muxes[0].op == "mux"
    assert "4053" not in network.chips                    # the switch's package: no new chip
    assert_meets_the_spec_at_every_tick(network, nets)


def test_without_a_spare_section_the_xor_split_is_joined_by_gates(catalog):
    # all three sections taken by switches: reset = Q6 XOR (its cofactor), the XOR made of
    # the bin's NAND gates (4011) since the bin has no XOR gate
    network, nets = tight_design(catalog, 3)
    assert not any(g.part == "4053" for g in network.gates)
    assert sum(network.chips.values()) <= 4 and all(network.chips[p] <= n for p, n in
                                                     {"4073": 1, "4011": 2, "40106": 1}.items())
    assert any("XOR case" in note for note in network.notes)
    assert_meets_the_spec_at_every_tick(network, nets)


@pytest.mark.parametrize("xor", [True, False])
def test_the_joining_function_is_an_xor_or_a_2_to_1_mux(xor):
    # bit 0 of a code is the split bit b, bit 1 the cofactor f0, bit 2 the cofactor f1
    join = joining_function("f", xor)
    for code in range(4 if xor else 8):
        b, f0, f1 = code & 1, code >> 1 & 1, code >> 2 & 1
        assert (code in join.on) == bool(b ^ f0 if xor else (f1 if b else f0))
