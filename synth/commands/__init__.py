"""Sub-commands of ``binsynth``: one module each, named by a registry.

``REGISTRY`` holds each command's name and one line of help, and names its
module instead of importing it (as ``synth.exports`` does for the writers):
``binsynth --help`` lists every command without loading one, and a run
imports only the command it runs.  Every module defines ``NAME``,
``add_arguments(parser)`` and ``run(args) -> int`` and imports what it uses
at the top.  Adding a command is one more entry here and one module.

Interface: ``Command`` (name, help, module; ``load()``), ``REGISTRY``,
``COMMANDS`` (the names, in the order ``--help`` lists them), ``command(name)``.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from types import ModuleType


@dataclass(frozen=True)
class Command:
    """One sub-command: ``binsynth NAME ...``; its options and work live in ``module``."""

    name: str
    help: str
    module: str

    def load(self) -> ModuleType:
        """The command's module (imported on first use)."""
        return importlib.import_module(f"{__name__}.{self.module}")


REGISTRY: tuple[Command, ...] = (
    Command("parts", "list the part catalog, or show one part's package, pins and datasheet facts",
            "parts"),
    Command("bin", "validate a bin file and show the gates, counters, switches and passives it provides",
            "bin"),
    Command("decode", "show the counter chips and stages chosen for a spec, and each signal's minimized "
            "decode in counter-pin names", "decode"),
    Command("plan", "plan the circuit for a spec from the chips in a bin: chips, pins, wiring list and "
            "checks", "plan"),
    Command("substitute", "the cheapest ways to build a gate the bin lacks (nand4, and8, xor2, nor3, "
            "inv) or a boolean expression ('a & ~b | c') from the bin's gates, with pin-level wiring",
            "substitute"),
    Command("delay", "choose R and C from the bin for an RC delay between two logic stages, with its "
            "spread over the input thresholds", "delay"),
    Command("demo", "plan the shipped sample-and-hold bench sequencer and write every output file "
            "into a folder", "demo"),
)

COMMANDS: tuple[str, ...] = tuple(entry.name for entry in REGISTRY)


def command(name: str) -> Command:
    """The registered command called ``name``."""
    for entry in REGISTRY:
        if entry.name == name:
            return entry
    raise KeyError(name)
