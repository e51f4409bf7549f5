"""Regenerate the golden outputs of the shipped examples (tests/golden/).

Usage: python tools/golden.py [--check] [NAME ...]   (from anywhere; paths are the repository's)

Every shipped example (examples/NAME.yaml with inventory/bins/NAME.yaml) is
planned twice, in-process through ``synth.cli.main`` from the repository root:

- ``default``: ``plan SPEC --bin BIN`` as a user runs it (what the bin lacks
  searched at the default effort);
- ``fix``: ``plan SPEC --bin BIN --fix glitches --lacks 0`` (the glitch
  remedies and their re-planning; what the bin lacks skipped).

Each run keeps four files under tests/golden/NAME/CASE/: ``plan.json``,
``wiring.md``, ``plan.v`` and ``output.txt`` (standard error, then standard
output, then ``exit N`` when the exit code is not 0; the temporary output
folder shown as ``out``).  tests/test_golden.py compares them byte for byte,
so a refactor that moves any output fails there.  An output change that is
intended is regenerated with this tool and committed with the change (say so
in the commit message); on a merge conflict in a golden file, regenerate
instead of merging by hand.

``--check`` writes nothing and exits 1 when a file would change; NAMEs limit
the run to those examples.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import os
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
GOLDEN = ROOT / "tests" / "golden"
FILES = (("--json", "plan.json"), ("--wiring", "wiring.md"), ("--verilog", "plan.v"))
OUTPUT = "output.txt"
CASES: dict[str, tuple[str, ...]] = {
    "default": (),
    "fix": ("--fix", "glitches", "--lacks", "0"),
}


@dataclass(frozen=True)
class Case:
    """One example planned one way: where its golden files live and the command that makes them."""

    example: str
    name: str

    @property
    def folder(self) -> Path:
        return GOLDEN / self.example / self.name

    def argv(self, out: str) -> list[str]:
        argv = ["plan", f"examples/{self.example}.yaml", "--bin", f"inventory/bins/{self.example}.yaml",
                *CASES[self.name]]
        for option, file_name in FILES:
            argv += [option, str(Path(out) / file_name)]
        return argv


def examples() -> list[str]:
    """The shipped examples that have a bin of the same name."""
    return sorted(p.stem for p in (ROOT / "examples").glob("*.yaml")
                  if (ROOT / "inventory" / "bins" / p.name).is_file())


def all_cases(names: list[str] | None = None) -> list[Case]:
    return [Case(example, name) for example in (names or examples()) for name in CASES]


def outputs(case: Case) -> dict[str, str]:
    """The case's files and printed text as the command makes them now."""
    sys.path.insert(0, str(ROOT))
    from synth.cli import main

    with tempfile.TemporaryDirectory(prefix="binsynth-golden-") as out:
        stdout, stderr = io.StringIO(), io.StringIO()
        here = os.getcwd()
        os.chdir(ROOT)
        try:
            with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
                code = main(case.argv(out))
        finally:
            os.chdir(here)
        made = {name: Path(out, name).read_text(encoding="utf-8")
                for _, name in FILES if Path(out, name).is_file()}
        text = stderr.getvalue() + stdout.getvalue() + (f"exit {code}\n" if code else "")
        made[OUTPUT] = text.replace(out, "out")
    return made


def stored(case: Case) -> dict[str, str]:
    """The case's golden files as committed."""
    if not case.folder.is_dir():
        return {}
    return {p.name: p.read_text(encoding="utf-8") for p in sorted(case.folder.iterdir()) if p.is_file()}


def write(case: Case, made: dict[str, str]) -> None:
    case.folder.mkdir(parents=True, exist_ok=True)
    for old in case.folder.iterdir():
        if old.name not in made:
            old.unlink()
    for name, text in made.items():
        (case.folder / name).write_text(text, encoding="utf-8", newline="")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="write nothing; exit 1 if a file would change")
    parser.add_argument("names", nargs="*", help="only these examples")
    args = parser.parse_args(argv)
    changed = []
    for case in all_cases(args.names):
        made = outputs(case)
        if made != stored(case):
            changed.append(f"{case.example}/{case.name}")
            if not args.check:
                write(case, made)
    verb = "would change" if args.check else "regenerated"
    print(f"{verb}: {', '.join(changed)}" if changed else "golden outputs unchanged")
    return 1 if args.check and changed else 0


if __name__ == "__main__":
    raise SystemExit(main())
