"""Zero-delay evaluation checked against datasheet function tables.

Sources: the 74HC151 function table (Philips 74HC/HCT151: Y follows the data
input numbered by S2 S1 S0, S0 the lsb; W is its complement) and the 74HC138
function table (Philips 74HC/HCT138: outputs HIGH unless E1 = E2 = LOW and
E3 = HIGH, then the output numbered by A2 A1 A0 goes LOW); textbook truth
tables of NAND, NOR and XOR (common practice).  ``evaluate_words`` evaluates
every assignment at once and must agree with the tables on each of them.
"""

from __future__ import annotations


import pytest

from synth.network import Gate, Network, evaluate_network, evaluate_words

NETS = ["a", "b", "c", "d", "e", "f"]


def words_of(nets):
    """Bit t of net i's word = bit i of t: every assignment of the nets at once."""
    width = 1 << len(nets)
    return {n: sum(1 << t for t in range(width) if t >> i & 1) for i, n in enumerate(nets)}, width


MUX = Gate("u1", "74HC151", "mux", ("a", "b", "VDD", "VSS", "c", "d", "a", "b", "d", "e", "f"), ("y", "w"))
DECODER = Gate("u2", "74HC138", "decoder", ("a", "b", "c", "d", "e", "f"),
               tuple(f"y{k}" for k in range(8)), active="low", enables_active=("low", "low", "high"))


def mux_table(levels):
    data = [levels["a"], levels["b"], True, False, levels["c"], levels["d"], levels["a"], levels["b"]]
    code = levels["d"] | levels["e"] << 1 | levels["f"] << 2
    return {"y": data[code], "w": not data[code]}


def decoder_table(levels):
    enabled = not levels["d"] and not levels["e"] and levels["f"]
    code = levels["a"] | levels["b"] << 1 | levels["c"] << 2
    return {f"y{k}": not (enabled and k == code) for k in range(8)}


@pytest.mark.parametrize("gates, table", [
    ([Gate("g1", "74HC00", "nand", ("a", "b"), ("y",))], lambda v: {"y": not (v["a"] and v["b"])}),
    ([Gate("g1", "74HC02", "nor", ("a", "c"), ("y",))], lambda v: {"y": not (v["a"] or v["c"])}),
    ([Gate("g1", "74HC86", "xor", ("b", "VDD"), ("y",))], lambda v: {"y": not v["b"]}),
    ([MUX], mux_table),
    ([DECODER], decoder_table),
    ([Gate("g2", "74HC00", "nand", ("n", "c"), ("y",)), Gate("g1", "74HC02", "nor", ("a", "b"), ("n",))],
     lambda v: {"y": not ((not (v["a"] or v["b"])) and v["c"])}),
])
def test_words_follow_the_function_tables(gates, table):
    network = Network(gates, {}, tuple(NETS))
    inputs, width = words_of(NETS)
    words = evaluate_words(network, inputs, width)
    for t in range(width):
        levels = {n: bool(t >> i & 1) for i, n in enumerate(NETS)}
        expected = table(levels)
        single = evaluate_network(network, levels)
        for net, level in expected.items():
            assert bool(words[net] >> t & 1) == level, (net, levels)
            assert single[net] == level, (net, levels)


def test_a_loop_is_refused():
    loop = [Gate("g1", "74HC00", "nand", ("a", "y2"), ("y1",)), Gate("g2", "74HC00", "nand", ("y1", "b"), ("y2",))]
    with pytest.raises(ValueError, match="loop"):
        evaluate_words(Network(loop, {}, ("a", "b")), {"a": 1, "b": 0}, 1)
