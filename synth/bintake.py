"""Taking a plan's chips out of the user's bin file, and comparing two bins.

Interface: ``take_from_bin(path, bom, catalog, *, supply=5.0, note=None,
dry_run=False) -> TakeResult``; ``TakeResult`` and ``EntryChange`` records;
``diff_bins(old, new) -> BinDiff``, ``BinDiff.parts`` as ``(part, old_count,
new_count)`` rows plus the passives added and removed, ``BinDiff.as_dict()``.

A bin is the user's own notebook: comments, order and spacing matter to them,
and PyYAML drops all of that.  So the file's text is edited in place, at the
lines the loader recorded, and the result is parsed again and compared with
the old counts minus the plan's BOM before anything is written.

Decisions:

- A count is rewritten where it stands: ``CD4011BE: 2`` -> ``CD4011BE: 1``,
  ``4040: {count: 2}`` -> ``4040: {count: 1}``, a block ``count: 2`` line
  likewise.  Every other byte of the line stays as it was.
- A part used up entirely is commented out in place, so the line and its
  comment survive as a record and a restock is one edit away::

      CD4011BE: 2        # quad 2-input NAND
      # CD4011BE: 0 used up by sh-bench        # quad 2-input NAND

  (`` by NOTE`` only when ``note`` is given).  In a flow mapping
  (``parts: {CD4011BE: 2, 4040: 1}``) the entry is removed instead.
  When every part is used up, ``parts:`` becomes ``parts: {}`` so the
  file still loads.
- One generic type under several markings (``CD4011BE: 1``, ``HEF4011BP: 2``)
  is taken in file order.
- Counts only come from the parts usable at ``supply`` (as ``load_bin``
  reports them); taking more than that is a ``ShortError`` and nothing is
  written.
- Writing: under an exclusive lock on the bin (``fcntl.flock``, taken again
  if another take replaced the file while this one waited), the bin is read
  afresh; if ``expect`` (the bytes the plan was made from) is given and the
  bin differs, nothing is written.  The old bytes go to ``<file>.bak``
  (atomically), then the new text replaces the bin atomically
  (``synth.exports.files.atomic_write_text``: temp file in the same folder,
  fsync, ``os.replace``).  A crash at any point leaves either the old bin or
  the new one, never half of one; temporaries a killed take left behind are
  removed by the next take, inside the lock.
"""

from __future__ import annotations

import fcntl
import os
import re
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping

from .errors import BinError, InputError, InternalError, ShortError, SynthError
from .exports.files import atomic_write_text, remove_stray_temps
from .inventory import Bin, Catalog, bin_from_yaml
from .limits import os_reason
from .yamlsrc import MarkedDict, parse_yaml, read_source

__all__ = ["take_from_bin", "TakeResult", "EntryChange", "diff_bins", "BinDiff"]


# ---------------------------------------------------------------- records

@dataclass(frozen=True)
class EntryChange:
    """One bin entry whose count the take changed (line is where its count sits)."""

    marking: str
    part: str
    line: int
    old: int
    new: int

    @property
    def used_up(self) -> bool:
        return self.new == 0


@dataclass
class TakeResult:
    """What a take did: the bins before and after, the entries changed, the files."""

    path: Path
    backup: Path | None
    old: Bin
    new: Bin
    changes: list[EntryChange]
    text: str
    written: bool

    @property
    def used_up(self) -> list[str]:
        """Markings whose chips the plan used up entirely."""
        return [c.marking for c in self.changes if c.used_up]


@dataclass
class BinDiff:
    """How a second bin differs from a first: part counts and passive values."""

    parts: list[tuple[str, int, int]] = field(default_factory=list)
    resistors_added: list[float] = field(default_factory=list)
    resistors_removed: list[float] = field(default_factory=list)
    capacitors_added: list[float] = field(default_factory=list)
    capacitors_removed: list[float] = field(default_factory=list)

    @property
    def changed(self) -> bool:
        return bool(self.parts or self.resistors_added or self.resistors_removed
                    or self.capacitors_added or self.capacitors_removed)

    def as_dict(self) -> dict:
        return {"parts": [{"part": p, "old": a, "new": b, "change": b - a} for p, a, b in self.parts],
                "resistors_added_ohm": self.resistors_added,
                "resistors_removed_ohm": self.resistors_removed,
                "capacitors_added_f": self.capacitors_added,
                "capacitors_removed_f": self.capacitors_removed}


# ---------------------------------------------------------------- diff

def all_counts(stock: Bin) -> dict[str, int]:
    """Every chip the file lists, usable at the bin's supply or not."""
    return {**stock.parts, **stock.excluded}


def diff_bins(old: Bin, new: Bin) -> BinDiff:
    """Changed part counts (sorted by type) and passives added or removed.

    Counts include parts left out at the chosen supply: the diff is of the
    files, whatever the supply.
    """
    before, after = all_counts(old), all_counts(new)
    rows = [(p, before.get(p, 0), after.get(p, 0)) for p in sorted(set(before) | set(after))
            if before.get(p, 0) != after.get(p, 0)]
    return BinDiff(rows,
                   sorted(set(new.resistors) - set(old.resistors)),
                   sorted(set(old.resistors) - set(new.resistors)),
                   sorted(set(new.capacitors) - set(old.capacitors)),
                   sorted(set(old.capacitors) - set(new.capacitors)))


# ---------------------------------------------------------------- text helpers

# PyYAML counts these as line breaks (its Reader/Scanner), so line numbers agree.
_LINE = re.compile(r"[^\r\n\x85\u2028\u2029]*(?:\r\n|[\r\n\x85\u2028\u2029]|\Z)")
_BREAKS = "\r\n\x85\u2028\u2029"
_TOKEN = r"(?P<tok>[^\s,{}\[\]#]+)"


def split_lines(text: str) -> list[str]:
    """Lines with their own line ends, the way PyYAML numbers them.

    >>> split_lines("a: 1\\r\\nb: 2\\n# end")
    ['a: 1\\r\\n', 'b: 2\\n', '# end']
    >>> split_lines("")
    []
    """
    lines = _LINE.findall(text)
    if lines and lines[-1] == "":
        lines.pop()
    return lines


def comment_start(body: str) -> int:
    """Where a line's comment begins (a ``#`` after a space, outside quotes), else its length.

    >>> comment_start("  CD4011BE: 2   # quad NAND"), comment_start("'a#b': 1"), comment_start("x: 1")
    (16, 8, 4)
    """
    quote = None
    for i, ch in enumerate(body):
        if quote:
            if ch == quote:
                quote = None
        elif ch in "\"'" and (i == 0 or body[i - 1] in " \t{[,"):
            quote = ch
        elif ch == "#" and (i == 0 or body[i - 1] in " \t"):
            return i
    return len(body)


def _split_end(line: str) -> tuple[str, str]:
    body = line.rstrip(_BREAKS)
    return body, line[len(body):]


def _key_pattern(key_text: str) -> re.Pattern:
    return re.compile(r"(?<![^\s{,])(?P<q>[\"']?)" + re.escape(key_text) + r"(?P=q)\s*:(?=\s|$)")


# ---------------------------------------------------------------- entries

@dataclass
class _Entry:
    """Where one bin entry sits in the text (lines 1-based, spans within a line's body)."""

    marking: str
    part: str
    count: int
    key_line: int
    key_start: int
    value_end: int          # end of the value on the key line (flow removal)
    count_line: int
    count_span: tuple[int, int]
    last_line: int


def _unsupported(path: str, line: int, marking: str, what: str) -> BinError:
    return BinError(f"cannot rewrite the entry for {marking} in place: {what}", file=path, line=line,
                    hint=f"write it as '{marking}: N' or '{marking}: {{count: N}}' on one line")


def _locate_entries(lines: list[str], raw_parts: MarkedDict, catalog: Catalog, path: str) -> list[_Entry]:
    """Find each marking's key and count token in the text, in file order."""
    entries = []
    for marking, value in raw_parts.items():
        key_line = raw_parts.line_of(marking)
        body, _ = _split_end(lines[key_line - 1])
        key = _key_pattern(str(marking)).search(body[:comment_start(body)])
        if key is None:
            raise _unsupported(path, key_line, str(marking), "its key is not on the line the parser gave")
        if isinstance(value, MarkedDict):
            count, count_line = value["count"], value.line_of("count")
            count_body = _split_end(lines[count_line - 1])[0]
            start = key.end() if count_line == key_line else 0
            match = re.compile(r"(?<![^\s{,])count\s*:\s*" + _TOKEN).search(count_body, start)
            last_line = max(value.key_lines.values(), default=key_line)
        else:
            count, count_line, count_body = value, key_line, body
            match = re.compile(r"\s*" + _TOKEN).match(count_body, key.end())
            last_line = key_line
        if match is None or not _token_is(match.group("tok"), count):
            raise _unsupported(path, count_line, str(marking), "its count is not a plain number there")
        value_end = match.end("tok")
        if count_line == key_line and isinstance(value, MarkedDict):
            close = body.find("}", value_end)
            value_end = close + 1 if close >= 0 else value_end
        entries.append(_Entry(str(marking), catalog.normalise(str(marking)) or "", count,
                              key_line, key.start(), value_end, count_line, match.span("tok"), last_line))
    return entries


def _token_is(token: str, count: int) -> bool:
    """Whether the text found is the count the parser read (so rewriting it is safe)."""
    try:
        return parse_yaml(token) == count
    except InputError:
        return False


def _is_flow(lines: list[str], doc: MarkedDict) -> bool:
    """Whether ``parts`` is written ``{A: 1, B: 2}`` rather than one entry a line."""
    raw_parts = doc["parts"]
    body = _split_end(lines[raw_parts.line - 1])[0]
    if raw_parts.line == doc.line_of("parts"):
        head = re.search(r"(?<![^\s{,])[\"']?parts[\"']?\s*:", body)
        body = body[head.end():] if head else body
    return body.lstrip().startswith("{")


# ---------------------------------------------------------------- allocation

def _part_type(name: str, catalog: Catalog) -> str:
    return name if name in catalog.parts else (catalog.normalise(name) or name)


def _allocate(bom: Mapping[str, int], entries: list[_Entry], stock: Bin, catalog: Catalog,
              path: str) -> dict[int, int]:
    """New count per entry index, taking each type from its entries in file order."""
    wanted: dict[str, int] = {}
    for name, count in bom.items():
        if isinstance(count, bool) or not isinstance(count, int) or count < 0:
            raise InternalError(f"BOM count for {name} must be a whole number >= 0, got {count!r}")
        if count:
            part = _part_type(str(name), catalog)
            wanted[part] = wanted.get(part, 0) + count
    short = []
    for part, need in wanted.items():
        have = stock.parts.get(part, 0)
        if need > have:
            listed = ", ".join(f"{e.marking}: {e.count}" for e in entries if e.part == part)
            why = f"on hand {have} ({listed})" if have else (
                f"left out at {stock.supply:g} V" if part in stock.excluded else "none in the bin")
            short.append(f"{part} needed {need}, {why}")
    if short:
        first = next((stock.lines[p] for p in wanted if p in stock.lines), None)
        raise ShortError(f"the bin holds too few chips for this take: {'; '.join(short)}; "
                         "nothing was written", file=path, line=first,
                         hint="add the chips to the bin, or take against the bin the plan was made for")
    new_counts = {}
    for index, entry in enumerate(entries):
        need = wanted.get(entry.part, 0)
        if need:
            taken = min(need, entry.count)
            wanted[entry.part] = need - taken
            new_counts[index] = entry.count - taken
    return new_counts


# ---------------------------------------------------------------- editing

def _commented(line: str, span: tuple[int, int] | None, note: str | None) -> str:
    """A used-up entry line as a comment; its count (if here) becomes 0, the note follows the value."""
    body, end = _split_end(line)
    if span:
        body = body[:span[0]] + "0" + body[span[1]:]
    indent = len(body) - len(body.lstrip(" "))
    cut = comment_start(body)
    code = body[:cut].rstrip()
    gap_and_comment = body[len(code):]
    marker = "" if note is None else (f" used up by {note}" if note else " used up")
    return f"{body[:indent]}# {code[indent:]}{marker}{gap_and_comment}{end}"


def _remove_span(body: str, start: int, end: int) -> str:
    """Remove a flow-mapping entry and one comma next to it."""
    after = re.match(r"\s*,\s*", body[end:])
    if after:
        return body[:start] + body[end + after.end():]
    before = re.search(r",\s*$", body[:start])
    return (body[:before.start()] if before else body[:start]) + body[end:]


def _edit_text(lines: list[str], doc: MarkedDict, entries: list[_Entry], new_counts: dict[int, int],
               note: str | None) -> str:
    """The bin's text with the new counts written in and used-up entries handled."""
    flow = _is_flow(lines, doc)
    out = list(lines)
    span_ops: dict[int, list[tuple[int, int, str | None]]] = {}   # line -> (start, end, text|None=remove)
    for index, new in new_counts.items():
        entry = entries[index]
        if new > 0:
            span_ops.setdefault(entry.count_line, []).append((*entry.count_span, str(new)))
        elif flow:
            span_ops.setdefault(entry.key_line, []).append((entry.key_start, entry.value_end, None))
        else:
            for line in range(entry.key_line, entry.last_line + 1):
                span = entry.count_span if line == entry.count_line else None
                first_note = (note or "") if line == entry.key_line else None
                out[line - 1] = _commented(lines[line - 1], span, first_note)
    for line, ops in span_ops.items():
        body, end = _split_end(out[line - 1])
        for start, stop, text in sorted(ops, reverse=True):
            body = _remove_span(body, start, stop) if text is None else body[:start] + text + body[stop:]
        out[line - 1] = body + end
    remaining = [e for i, e in enumerate(entries) if new_counts.get(i, e.count) > 0]
    if not flow and entries and not remaining:
        out[doc.line_of("parts") - 1] = _empty_parts(out[doc.line_of("parts") - 1])
    return "".join(out)


def _empty_parts(line: str) -> str:
    """``parts:  # on hand`` -> ``parts: {}  # on hand`` (a bare ``parts:`` would load as null)."""
    body, end = _split_end(line)
    head = re.search(r"(?<![^\s{,])[\"']?parts[\"']?\s*:", body)
    cut = head.end() if head else len(body)
    return body[:cut] + " {}" + body[cut:] + end


# ---------------------------------------------------------------- the take

@contextmanager
def _locked(path: Path):
    """Hold an exclusive lock on the bin file itself (the file at ``path`` now, not a replaced one)."""
    while True:
        try:
            fd = os.open(path, os.O_RDONLY)
        except FileNotFoundError:
            raise InputError("no such file", file=path, hint="check the path") from None
        except OSError as exc:
            raise InputError(f"cannot open it to take parts: {os_reason(exc)}", file=path,
                             hint="check the path and its permissions") from None
        try:
            fcntl.flock(fd, fcntl.LOCK_EX)
            if os.path.exists(path) and os.path.samestat(os.fstat(fd), os.stat(path)):
                break
        except BaseException:
            os.close(fd)
            raise
        os.close(fd)            # another take replaced the file while we waited: lock the new one
    try:
        yield
    finally:
        os.close(fd)            # closing releases the lock


def _expected_markings(entries: list[_Entry], new_counts: dict[int, int]) -> dict[str, int]:
    return {e.marking: new_counts.get(i, e.count) for i, e in enumerate(entries)
            if new_counts.get(i, e.count) > 0}


def _marking_counts(doc: object) -> dict[str, int]:
    parts = doc.get("parts") if isinstance(doc, dict) else None
    return {str(m): (v["count"] if isinstance(v, dict) else v) for m, v in (parts or {}).items()}


def _verify(text: str, old: Bin, expected: dict[str, int], bom_types: dict[str, int],
            catalog: Catalog, path: str) -> Bin:
    """Parse the new text again; it must hold exactly the old counts minus the BOM."""
    try:
        doc = parse_yaml(text, path)
        new = bin_from_yaml(doc, catalog, old.supply, path)
    except SynthError as exc:
        raise InternalError(f"the rewritten bin would not load ({exc}); nothing was written") from exc
    want = {p: n - bom_types.get(p, 0) for p, n in all_counts(old).items()}
    want = {p: n for p, n in want.items() if n > 0}
    got_markings = _marking_counts(doc)
    same_passives = (new.resistors, new.capacitors) == (old.resistors, old.capacitors)
    if all_counts(new) != want or got_markings != expected or not same_passives:
        raise InternalError(f"the rewritten bin would hold {all_counts(new)}, expected {want}; "
                            "nothing was written")
    return new


def take_from_bin(path: str | Path, bom: Mapping[str, int], catalog: Catalog, *,
                  supply: float = 5.0, note: str | None = None, dry_run: bool = False,
                  expect: bytes | None = None) -> TakeResult:
    """Remove a plan's chips (``bom``: generic type or marking -> count) from the bin file.

    ``note`` (e.g. the plan's name) is written beside entries used up.
    ``dry_run`` computes and checks the new text but writes nothing.
    ``expect``: the bin's bytes when the plan was made; a bin changed since
    then (another take, an edit) is refused and left as it is.
    """
    path = Path(path)
    if dry_run:
        return _take(path, bom, catalog, supply, note, True, expect)
    with _locked(path):
        remove_stray_temps(path)
        remove_stray_temps(path.with_name(path.name + ".bak"))
        return _take(path, bom, catalog, supply, note, False, expect)


def _take(path: Path, bom: Mapping[str, int], catalog: Catalog, supply: float, note: str | None,
          dry_run: bool, expect: bytes | None) -> TakeResult:
    """The take itself (inside the lock unless it is a dry run)."""
    where = str(path)
    data, text = read_source(path)
    if expect is not None and data != expect:
        raise InputError("the bin changed after the plan read it (another take or an edit); "
                         "nothing was written", file=path, hint="plan again from the bin as it is now")
    doc = parse_yaml(text, path)
    old = bin_from_yaml(doc, catalog, supply, where)
    lines = split_lines(text)
    entries = _locate_entries(lines, doc["parts"], catalog, where)
    new_counts = _allocate(bom, entries, old, catalog, where)
    note = None if note is None else " ".join(str(note).split())
    new_text = _edit_text(lines, doc, entries, new_counts, note) if new_counts else text
    bom_types: dict[str, int] = {}
    for name, count in bom.items():
        part = _part_type(str(name), catalog)
        bom_types[part] = bom_types.get(part, 0) + count
    new = _verify(new_text, old, _expected_markings(entries, new_counts), bom_types, catalog, where)
    changes = [EntryChange(entries[i].marking, entries[i].part, entries[i].count_line,
                           entries[i].count, n) for i, n in sorted(new_counts.items())
               if n != entries[i].count]
    backup = path.with_name(path.name + ".bak")
    if dry_run or not changes:
        return TakeResult(path, None, old, new, changes, new_text, False)
    try:
        atomic_write_text(backup, text)
        if path.read_bytes() != data:
            raise InputError("the bin changed while it was being rewritten; nothing was written",
                             file=path, hint="run the take again")
        atomic_write_text(path.resolve(), new_text)
    except OSError as exc:
        raise InputError(f"cannot write: {os_reason(exc)}; the bin is unchanged", file=path,
                         hint="check that the folder is writable") from None
    return TakeResult(path, backup, old, new, changes, new_text, True)
