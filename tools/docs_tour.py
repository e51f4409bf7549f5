"""Regenerate the command outputs and file listings shown in docs/ from real runs.

Usage: python tools/docs_tour.py [--check]   (from anywhere; paths are the repository's)

A page marks what the tool fills in; everything between a mark and its end is
replaced:

    <!-- run: plan examples/stepper.yaml --bin inventory/bins/stepper.yaml | blocks: signals -->
    ...the command and its output, in a fenced block...
    <!-- /run -->

    <!-- show: examples/stepper.yaml -->
    ...the file, in a fenced block...
    <!-- /show -->

A run's words after ``run:`` are the arguments after ``binsynth``; options after
``|``: ``blocks: A; B`` keeps the output's paragraphs and tables whose first line
starts with A or B (in order, a ``...`` line between kept and dropped parts);
``head: N`` keeps the first N lines; ``file: NAME`` shows the file the command
wrote as ``out/NAME`` instead of its standard output.  ``{out}`` in the
arguments is a fresh folder, printed as ``out``.  Commands run in-process
(``synth.cli.main``) from the repository root, standard error before standard
output (a note is printed before the tables), and a non-zero exit code is shown as ``exit N``.

``--check`` changes nothing and exits 1 when a page would change (the tests
run the same comparison).
"""

from __future__ import annotations

import contextlib
import io
import os
import re
import shlex
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"
HELP_WIDTH = 100

_RUN = re.compile(r"<!-- run: (?P<spec>.*?) -->\n(?P<body>.*?)<!-- /run -->\n", re.S)
_SHOW = re.compile(r"<!-- show: (?P<spec>.*?) -->\n(?P<body>.*?)<!-- /show -->\n", re.S)


@dataclass(frozen=True)
class Run:
    """One ``<!-- run: ... -->`` mark: the arguments and how the output is cut."""

    args: tuple[str, ...]
    blocks: tuple[str, ...] = ()
    head: int | None = None
    file: str | None = None

    @property
    def shown(self) -> str:
        return "binsynth " + " ".join(_quoted(a.replace("{out}", "out")) for a in self.args)


def _quoted(word: str) -> str:
    """A shell word as a person types it: double quotes around a word with a prime in it."""
    plain = shlex.quote(word)
    if plain == word or "'" not in word or any(c in word for c in '"$`\\!'):
        return plain
    return f'"{word}"'


def parse_run(spec: str) -> Run:
    """``ARGS | blocks: A; B | head: N | file: NAME`` -> Run."""
    words, *options = [part.strip() for part in spec.split(" | ")]
    fields: dict = {}
    for option in options:
        key, _, value = option.partition(":")
        key, value = key.strip(), value.strip()
        if key == "blocks":
            fields["blocks"] = tuple(v.strip() for v in value.split(";") if v.strip())
        elif key == "head":
            fields["head"] = int(value)
        elif key == "file":
            fields["file"] = value
        else:
            raise ValueError(f"docs mark {spec!r}: expected blocks, head or file, got {key!r}")
    return Run(tuple(shlex.split(words)), **fields)


def run_command(run: Run) -> str:
    """The command's output as the page shows it (before cutting); one run per command."""
    key = (run.args, run.file)
    if key not in _OUTPUTS:
        _OUTPUTS[key] = _run_fresh(run)
    return _OUTPUTS[key]


_OUTPUTS: dict[tuple, str] = {}


def _run_fresh(run: Run) -> str:
    sys.path.insert(0, str(ROOT))
    from synth.cli import main

    with tempfile.TemporaryDirectory(prefix="binsynth-docs-") as out:
        argv = [a.replace("{out}", out) for a in run.args]
        stdout, stderr = io.StringIO(), io.StringIO()
        here, columns = os.getcwd(), os.environ.get("COLUMNS")
        os.chdir(ROOT)
        os.environ["COLUMNS"] = str(HELP_WIDTH)      # argparse wraps --help to this width
        try:
            with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
                code = main(argv)
        finally:
            os.chdir(here)
            if columns is None:
                os.environ.pop("COLUMNS", None)
            else:
                os.environ["COLUMNS"] = columns
        if run.file:
            text = Path(out, run.file).read_text(encoding="utf-8")
        else:
            text = stderr.getvalue() + stdout.getvalue()   # notes come before the tables
        if code:
            text += f"exit {code}\n"
        return text.replace(out, "out")


def cut(text: str, run: Run) -> str:
    """Keep the blocks and lines the mark asks for; say where something was left out."""
    if run.blocks:
        chunks = text.rstrip("\n").split("\n\n")
        kept, skipped = [], False
        for chunk in chunks:
            if any(chunk.startswith(prefix) for prefix in run.blocks):
                if skipped and kept:
                    kept.append("...")
                kept.append(chunk)
                skipped = False
            else:
                skipped = True
        text = "\n\n".join(kept) + ("\n\n..." if skipped else "") + "\n"
    if run.head is not None:
        lines = text.rstrip("\n").split("\n")
        if len(lines) > run.head:
            text = "\n".join(lines[:run.head] + ["..."]) + "\n"
    return text


def run_block(spec: str) -> str:
    """The fenced block for one run mark (the command line, then its output)."""
    run = parse_run(spec)
    output = cut(run_command(run), run)
    return f"```text\n$ {run.shown}\n{output}```\n"


def show_block(spec: str) -> str:
    """The fenced block for one show mark (the file as it is in the repository)."""
    path = spec.strip()
    text = (ROOT / path).read_text(encoding="utf-8")
    kind = "yaml" if path.endswith((".yaml", ".yml")) else "text"
    return f"```{kind}\n{text}```\n"


def marks(text: str) -> list[tuple[str, str, str]]:
    """Every (kind, spec, body) mark on a page, in order."""
    found = [(m.start(), "run", m.group("spec"), m.group("body")) for m in _RUN.finditer(text)]
    found += [(m.start(), "show", m.group("spec"), m.group("body")) for m in _SHOW.finditer(text)]
    return [(kind, spec, body) for _, kind, spec, body in sorted(found)]


def regenerate(text: str) -> str:
    """The page with every mark filled from real runs."""
    text = _RUN.sub(lambda m: f"<!-- run: {m.group('spec')} -->\n{run_block(m.group('spec'))}"
                              f"<!-- /run -->\n", text)
    return _SHOW.sub(lambda m: f"<!-- show: {m.group('spec')} -->\n{show_block(m.group('spec'))}"
                               f"<!-- /show -->\n", text)


def pages() -> list[Path]:
    return sorted(DOCS.glob("*.md"))


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    check = "--check" in argv
    stale = []
    for page in pages():
        old = page.read_text(encoding="utf-8")
        new = regenerate(old)
        if new != old:
            stale.append(page)
            if not check:
                page.write_text(new, encoding="utf-8")
    for page in stale:
        print(f"{'stale' if check else 'updated'}: {page.relative_to(ROOT)}")
    return 1 if check and stale else 0


if __name__ == "__main__":
    raise SystemExit(main())
