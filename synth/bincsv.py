"""A bin from a spreadsheet: CSV rows of part and count -> the bin file's YAML text.

Interface: ``bin_text_from_csv(path, catalog) -> BinFromCsv`` (the YAML text
and what was read).  Bad rows raise ``BinError`` naming the CSV file and line,
as a bin file's own errors do.

The CSV has a header row naming the columns ``part`` and ``count`` (any case,
in any order; comma-separated, or semicolon or tab as some spreadsheets save); other columns (a description, a drawer number) are read past
and named in ``ignored``.  A part is a marking as printed on the chip
(``CD4011BE``, ``74HC00N``): the catalog's marking rules apply, unknown ones are
refused with the closest known types.  Rows with the same marking add up; blank
rows are skipped.  The markings are kept as written, so the bin file reads like
the drawer.
"""

from __future__ import annotations

import csv
import io
import json
import re
from dataclasses import dataclass
from pathlib import Path

from .errors import BinError

__all__ = ["BinFromCsv", "bin_text_from_csv"]

COLUMNS = ("part", "count")
_PLAIN_KEY = re.compile(r"[A-Za-z0-9][A-Za-z0-9_.-]*\Z")


@dataclass(frozen=True)
class BinFromCsv:
    """The bin file text, the chip counts by marking, and the columns read past."""

    text: str
    counts: dict[str, int]
    rows: int
    ignored: tuple[str, ...]


def _read(path: Path) -> str:
    try:
        return path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise BinError("no such file", file=path, hint="check the path") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise BinError(f"cannot read: {exc}", file=path) from exc


def _header(row: list[str], path: Path, line: int) -> dict[str, int]:
    names = [cell.strip().lower() for cell in row]
    missing = [c for c in COLUMNS if c not in names]
    if missing:
        raise BinError(f"expected a header row naming the columns part and count, got "
                       f"{', '.join(cell.strip() for cell in row) or 'an empty row'}",
                       file=path, line=line, hint="make the first row: part,count")
    return {c: names.index(c) for c in COLUMNS}


def _count(text: str, marking: str, path: Path, line: int) -> int:
    cell = text.strip()
    if not re.fullmatch(r"\d+", cell) or int(cell) <= 0:
        raise BinError(f"expected a positive whole number of chips for {marking} in column count, "
                       f"got {cell!r}", file=path, line=line, hint="write how many chips are on hand, e.g. 2")
    return int(cell)


def _delimiter(text: str) -> str:
    """Comma, or the semicolon or tab some spreadsheets save with (judged by the first line)."""
    first = text.split("\n", 1)[0]
    if "," not in first:
        for other in (";", "\t"):
            if other in first:
                return other
    return ","


def _key(marking: str) -> str:
    return marking if _PLAIN_KEY.match(marking) else json.dumps(marking)


def bin_text_from_csv(path: str | Path, catalog) -> BinFromCsv:
    """Read the CSV and check every row against the catalog; the bin YAML to write."""
    path = Path(path)
    text = _read(path)
    rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=_delimiter(text)))
    numbered = [(line, row) for line, row in enumerate(rows, start=1) if any(c.strip() for c in row)]
    if not numbered:
        raise BinError("expected a header row (part,count) and one row per chip type, got an empty file",
                       file=path, line=1)
    header_line, header = numbered[0]
    column = _header(header, path, header_line)
    ignored = tuple(c.strip() for c in header if c.strip().lower() not in COLUMNS and c.strip())
    counts: dict[str, int] = {}
    for line, row in numbered[1:]:
        cells = row + [""] * (len(header) - len(row))
        marking = cells[column["part"]].strip()
        if not marking:
            raise BinError("expected a part marking in column part, got an empty cell", file=path,
                           line=line, hint="write the marking as printed, e.g. CD4011BE")
        if catalog.normalise(marking) is None:
            close = catalog.closest(marking)
            hint = f"closest known types: {', '.join(close)}" if close else "see 'binsynth parts'"
            raise BinError(f"unknown part marking {marking!r}", file=path, line=line, hint=hint)
        counts[marking] = counts.get(marking, 0) + _count(cells[column["count"]], marking, path, line)
    if not counts:
        raise BinError("expected at least one part row under the header, got none", file=path,
                       line=header_line, hint="add rows such as CD4011BE,2")
    lines = [f"# bin made by binsynth from {path.name}", "parts:"]
    lines += [f"  {_key(marking)}: {count}" for marking, count in counts.items()]
    return BinFromCsv("\n".join(lines) + "\n", counts, len(numbered) - 1, ignored)
