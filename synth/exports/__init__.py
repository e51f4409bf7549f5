"""Exports: one module per output file, each behind one small interface.

Interface: ``Exporter`` (option name, file suffix, demo file name, one-line
description; ``text(design)`` and ``write(design, path)`` with an atomic
replace); ``EXPORTERS`` (the registry, in the order options are listed);
``exporter(name)``; and from ``files``: ``atomic_write_text``,
``check_outputs``, ``OutputTransaction``, ``Output``, ``STDOUT``.

An exporter module offers ``design_text(design) -> str`` (and the JSON
module ``design_stdout_text`` for ``-``).  The registry names the module
instead of importing it, so ``binsynth --help`` builds its options without
loading the writers; adding an output is one more entry here and one module.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from pathlib import Path

from .files import STDOUT, Output, OutputTransaction, atomic_write_text, check_outputs

__all__ = ["Exporter", "EXPORTERS", "exporter", "atomic_write_text", "check_outputs",
           "OutputTransaction", "Output", "STDOUT"]


@dataclass(frozen=True)
class Exporter:
    """One output kind: ``--NAME FILE`` on the command line, ``file_name`` in the demo folder."""

    name: str
    suffix: str
    file_name: str
    description: str
    module: str
    stdout_function: str = "design_text"

    @property
    def option(self) -> str:
        return f"--{self.name}"

    def _writer(self):
        return importlib.import_module(f"{__name__}.{self.module}")

    def text(self, design) -> str:
        """The file's whole text."""
        return self._writer().design_text(design)

    def stdout_text(self, design) -> str:
        """The text for standard output (``-``); the file text unless the module says otherwise."""
        return vars(self._writer())[self.stdout_function](design)

    def write(self, design, path: str | Path) -> Path:
        """Write the file in one step (the old file stays until the new one is whole)."""
        return atomic_write_text(path, self.text(design))


EXPORTERS: tuple[Exporter, ...] = (
    Exporter("json", ".json", "plan.json", "write the plan as JSON ('-' for standard output)", "plan_json",
             stdout_function="design_stdout_text"),
    Exporter("wiring", ".md", "wiring.md", "write the wiring list as Markdown with checkboxes", "wiring"),
    Exporter("verilog", ".v", "plan.v", "write a structural Verilog model", "verilog"),
    Exporter("vcd", ".vcd", "plan.vcd", "write the simulated cycle as a VCD file", "vcd"),
    Exporter("svg", ".svg", "timing.svg", "write a timing diagram (SVG)", "svg"),
    Exporter("spice", ".cir", "analog.cir", "write the analog parts (oscillator, power-on reset, "
             "staircases, RC delays) as a plain SPICE deck", "spice"),
    Exporter("report", ".html", "report.html", "write one self-contained HTML page to build from: "
             "breadboard layout, wiring checklist, pin maps, gate diagrams, timing", "report"),
)


def exporter(name: str) -> Exporter:
    """The registered exporter called ``name`` (``json``, ``wiring``, ...)."""
    for entry in EXPORTERS:
        if entry.name == name:
            return entry
    raise KeyError(name)
