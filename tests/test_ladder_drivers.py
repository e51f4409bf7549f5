"""A staircase whose counter outputs' resistance dominates the ladder gets the right remedy.

Reference: Kirchhoff's current law solved directly (numpy) for an R-2R
ladder whose 2R legs are each driven through the output resistance of a CMOS
output (a textbook nodal analysis, independent of synth.analog).  The 4000B
output resistance (about 1.1 kOhm at 5 V) is the catalog's figure for a
4040; with R = 500 Ohm (two 1 kOhm in parallel) the ladder steps backwards
even with exact resistors, so better tolerances cannot help: the remedy is
larger values or a buffer per bit, and a bin with only 1 kOhm is short (exit 3).
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.cli import main
from synth.inventory import data_path, example_path
from synth.spec import load_spec
from synth.staircase import DRIVER_ERROR_LIMIT_LSB, smallest_r_for_drivers


def r2r_levels(bits: int, r: float, r_driver: float, supply: float = 5.0) -> list[float]:
    """Output level of every code: node k gets bit k through r_driver + 2R, nodes joined by R,
    node 0 to VSS through 2R, output at node bits-1 (no load)."""
    levels = []
    for code in range(1 << bits):
        g = np.zeros((bits, bits))
        i = np.zeros(bits)
        leg = 1 / (r_driver + 2 * r)
        for k in range(bits):
            g[k, k] += leg
            i[k] += leg * (supply if code >> k & 1 else 0.0)
            if k + 1 < bits:
                g[k, k] += 1 / r
                g[k + 1, k + 1] += 1 / r
                g[k, k + 1] -= 1 / r
                g[k + 1, k] -= 1 / r
        g[0, 0] += 1 / (2 * r)
        levels.append(float(np.linalg.solve(g, i)[-1]))
    return levels


def test_the_reference_solver_gives_the_ideal_staircase_with_ideal_drivers():
    levels = r2r_levels(4, 10e3, 0.0)
    assert levels == pytest.approx([5.0 * code / 16 for code in range(16)])


def test_a_1k_only_ladder_on_4000b_outputs_steps_backwards():
    levels = r2r_levels(4, 500.0, 1140.0)
    assert any(b < a for a, b in zip(levels, levels[1:]))


def test_the_plan_refuses_it_with_larger_values_as_the_remedy(tmp_path, capsys):
    text = data_path("bins", "adc_staircase.yaml").read_text()
    lines = [line if not line.startswith("resistors:") else "resistors: [1k]" for line in text.splitlines()]
    stock = tmp_path / "one_value.yaml"
    stock.write_text("\n".join(lines) + "\n")
    code = main(["plan", str(example_path("adc_staircase.yaml")), "--bin", str(stock), "--lacks", "0"])
    err = capsys.readouterr().err
    assert code == 3, err
    assert "staircases.ramp: the counter outputs' own resistance (4040" in err
    assert "even with exact resistors the staircase steps backwards" in err
    assert "use larger resistors, R of 3.3 kΩ or more with 2R twice that, or buffer each bit" in err
    assert "1 % resistors" not in err


def test_the_suggested_value_is_the_first_that_the_reference_solver_accepts():
    level = load_spec(example_path("adc_staircase.yaml")).levels["ramp"]
    least = smallest_r_for_drivers(level, 1140.0, 4, 5.0)
    assert least == 3300.0

    def good(r: float) -> bool:
        levels = r2r_levels(4, r, 1140.0)
        ideal = [5.0 * code / 16 for code in range(16)]
        lsb = 5.0 / 16
        return (all(b > a for a, b in zip(levels, levels[1:]))
                and max(abs(x - y) for x, y in zip(levels, ideal)) / lsb <= DRIVER_ERROR_LIMIT_LSB)

    assert good(3300.0) and not good(2700.0)
