"""Output for people: rich tables in a terminal, plain aligned text when piped.

Interface: ``Table(title, columns, rows)``, ``Text(body)``, ``show(blocks,
stream=None)``, ``to_plain(blocks) -> str``, ``print_json(obj, stream=None)``,
``progress(what, stream=None, after=PROGRESS_AFTER)`` (a context manager),
``counted(n, noun) -> str`` (``1 chip``, ``2 chips``: no ``chip(s)`` in output).

Commands build a list of blocks and hand it to ``show``; they never decide
how a terminal draws.  Plain text is what scripts, files and tests see.
"""

from __future__ import annotations

import contextlib
import json
import sys
import threading
from dataclasses import dataclass, field
from typing import IO, Iterator, Sequence

PROGRESS_AFTER = 1.0
"""Seconds of work before ``progress`` shows its line (a quick command shows nothing)."""


@dataclass
class Table:
    """A titled table of strings (cells are converted with ``str``)."""

    title: str
    columns: Sequence[str]
    rows: list[Sequence[object]] = field(default_factory=list)


@dataclass
class Text:
    """A paragraph or pre-formatted block (drawings keep their spacing)."""

    body: str
    style: str = ""


Block = Table | Text


def _plain_table(table: Table) -> str:
    cells = [[str(c) for c in row] for row in table.rows]
    header = [str(c) for c in table.columns]
    widths = [max([len(header[i])] + [len(r[i]) for r in cells if i < len(r)])
              for i in range(len(header))]
    lines = [table.title] if table.title else []
    lines.append("  ".join(h.ljust(w) for h, w in zip(header, widths)).rstrip())
    lines.append("  ".join("-" * w for w in widths))
    for row in cells:
        lines.append("  ".join(c.ljust(w) for c, w in zip(row, widths)).rstrip())
    return "\n".join(lines)


def to_plain(blocks: Sequence[Block]) -> str:
    """All blocks as plain text, separated by blank lines."""
    parts = [_plain_table(b) if isinstance(b, Table) else b.body for b in blocks]
    return "\n\n".join(parts) + "\n"


def show(blocks: Sequence[Block], stream: IO[str] | None = None) -> None:
    """Print blocks: rich when ``stream`` is a terminal, plain text otherwise."""
    stream = stream or sys.stdout
    if not stream.isatty():
        stream.write(to_plain(blocks))
        return
    from rich.console import Console
    from rich.table import Table as RichTable
    from rich.text import Text as RichText

    console = Console(file=stream, highlight=False)
    for block in blocks:
        if isinstance(block, Table):
            rich_table = RichTable(title=block.title or None, title_justify="left")
            for column in block.columns:
                rich_table.add_column(str(column))
            for row in block.rows:
                rich_table.add_row(*(str(c) for c in row))
            console.print(rich_table)
        else:
            console.print(RichText(block.body, style=block.style))
        console.print()


def counted(n: int, noun: str) -> str:
    """A count with its noun agreeing, for the nouns output counts (regular plurals only).

    >>> counted(1, "chip"), counted(3, "pair"), counted(0, "gate")
    ('1 chip', '3 pairs', '0 gates')
    """
    return f"{n} {noun}{'' if n == 1 else 's'}"


def print_json(obj: object, stream: IO[str] | None = None) -> None:
    """JSON for scripts: indented, keys in the order the code built them."""
    (stream or sys.stdout).write(json.dumps(obj, indent=2, ensure_ascii=False) + "\n")


@contextlib.contextmanager
def progress(what: str, stream: IO[str] | None = None,
             after: float = PROGRESS_AFTER) -> Iterator[None]:
    """A spinner line on stderr while a long search runs, only when stderr is a terminal.

    Nothing is shown for the first ``after`` seconds, nothing at all when the
    stream is piped or redirected (scripts and files see no progress text), and
    the line is erased when the work ends.  It only displays: results never
    depend on it.
    """
    stream = stream or sys.stderr
    if not (hasattr(stream, "isatty") and stream.isatty()):
        yield
        return
    from rich.console import Console

    status = Console(file=stream, highlight=False).status(f"binsynth: {what} ...", spinner="line")
    lock = threading.Lock()
    state = {"shown": False, "done": False}

    def start() -> None:
        with lock:
            if not state["done"]:
                status.start()
                state["shown"] = True

    timer = threading.Timer(after, start)
    timer.daemon = True
    timer.start()
    try:
        yield
    finally:
        timer.cancel()
        with lock:
            state["done"] = True
            if state["shown"]:
                status.stop()
