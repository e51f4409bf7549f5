"""The exporter registry and the output transaction (``synth.exports``).

The registry must not change a byte of any output: each entry's text is
compared with the export module's own function on the same plan (the VCD's
``$date`` line, the time of writing per IEEE 1364-2001 section 18, aside).
"""

from __future__ import annotations

import os
import signal

import pytest

from synth.cli import build_parser
from synth.exports import EXPORTERS, Output, OutputTransaction, exporter
from synth.exports.plan_json import plan_to_text
from synth.exports.spice import plan_to_spice
from synth.exports.svg import trace_to_svg
from synth.exports.vcd import trace_to_vcd
from synth.exports.verilog import plan_to_verilog
from synth.exports.wiring import wiring_markdown
from synth.inventory import data_path, example_path
from synth.pipeline import make_plan


@pytest.fixture(scope="module")
def design():
    return make_plan(example_path("stepper.yaml"), data_path("bins", "stepper.yaml"))


def _undated(text: str) -> str:
    return "\n".join(line for line in text.splitlines() if not line.startswith("$date"))


def test_every_exporter_writes_what_its_module_writes(design):
    plan = design.plan
    expected = {"json": plan_to_text(plan), "wiring": wiring_markdown(plan),
                "verilog": plan_to_verilog(plan, design.catalog),
                "vcd": _undated(trace_to_vcd(design.trace, plan)), "svg": trace_to_svg(design.trace, plan),
                "spice": plan_to_spice(plan, design.catalog, tick_ns=design.trace.period_ns)}
    for name, text in expected.items():
        got = exporter(name).text(design)
        assert (_undated(got) if name == "vcd" else got) == text, name


def test_every_exporter_has_an_option_a_suffix_and_a_line_of_help():
    plan_options = {action.option_strings[0]: action for action in
                    build_parser()._subparsers._group_actions[0].choices["plan"]._actions
                    if action.option_strings}
    names = [entry.name for entry in EXPORTERS]
    assert len(set(names)) == len(names)
    assert len({entry.file_name for entry in EXPORTERS}) == len(EXPORTERS)
    for entry in EXPORTERS:
        assert entry.option in plan_options and entry.description in plan_options[entry.option].help
        assert entry.suffix.startswith(".") and entry.file_name.endswith(entry.suffix)
        assert "\n" not in entry.description


def test_exporter_write_replaces_in_one_step(design, tmp_path):
    target = tmp_path / "plan.json"
    target.write_text("old")
    exporter("json").write(design, target)
    assert target.read_text() == plan_to_text(design.plan)
    assert os.listdir(tmp_path) == ["plan.json"]


def test_a_transaction_left_without_commit_writes_nothing(tmp_path):
    (tmp_path / "a.md").write_text("old")
    with pytest.raises(RuntimeError):
        with OutputTransaction() as transaction:
            transaction.stage(Output("--wiring", str(tmp_path / "a.md")), "new")
            transaction.stage(Output("--svg", str(tmp_path / "b.svg")), "<svg/>")
            raise RuntimeError("a later step failed")
    assert sorted(os.listdir(tmp_path)) == ["a.md"] and (tmp_path / "a.md").read_text() == "old"


def test_sigterm_while_outputs_are_staged_removes_them(tmp_path):
    before = signal.getsignal(signal.SIGTERM)
    with pytest.raises(SystemExit) as stopped:
        with OutputTransaction() as transaction:
            transaction.stage(Output("--json", str(tmp_path / "p.json")), "{}")
            os.kill(os.getpid(), signal.SIGTERM)   # handled at the next bytecode: SystemExit
            transaction.commit()
    assert stopped.value.code == 128 + signal.SIGTERM
    assert os.listdir(tmp_path) == []
    assert signal.getsignal(signal.SIGTERM) == before


def test_commit_puts_everything_in_place_and_prints_standard_output(tmp_path, capsys):
    with OutputTransaction() as transaction:
        transaction.stage(Output("--wiring", str(tmp_path / "w.md")), "wires\n")
        transaction.stage(Output("--json", "-"), "{}\n")
        written = transaction.commit()
    assert written == [str(tmp_path / "w.md")] and (tmp_path / "w.md").read_text() == "wires\n"
    assert capsys.readouterr().out == "{}\n"
