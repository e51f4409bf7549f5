"""The shipped examples' outputs, byte for byte against tests/golden/.

Each example with its bin is planned as a user plans it (and once more with
``--fix glitches``); the plan JSON, wiring list, Verilog and printed text must
equal the committed golden files.  A refactor must not move any of them.  An
output change that is intended regenerates them: ``python tools/golden.py``
(see its docstring).
"""

from __future__ import annotations

import difflib
import importlib.util
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def _tool():
    loader = importlib.util.spec_from_file_location("golden_tool", ROOT / "tools" / "golden.py")
    module = importlib.util.module_from_spec(loader)
    sys.modules["golden_tool"] = module          # its dataclasses look their module up
    loader.loader.exec_module(module)
    return module


TOOL = _tool()
CASES = TOOL.all_cases()


def test_every_example_has_goldens():
    assert CASES, "no shipped examples found"
    for case in CASES:
        assert case.folder.is_dir(), f"{case.folder}: missing; run python tools/golden.py"


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c.example}-{c.name}")
def test_outputs_match_goldens(case):
    made, kept = TOOL.outputs(case), TOOL.stored(case)
    assert sorted(made) == sorted(kept), f"{case.folder}: files differ; run python tools/golden.py"
    for name in sorted(made):
        if made[name] != kept[name]:
            diff = "".join(list(difflib.unified_diff(kept[name].splitlines(True), made[name].splitlines(True),
                                                     f"golden/{name}", f"now/{name}"))[:40])
            pytest.fail(f"{case.example}/{case.name}/{name} moved (intended? run python tools/golden.py):\n{diff}")
