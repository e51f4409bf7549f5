"""The error tree of binsynth.

Interface: ``SynthError`` (base), ``InputError`` (bad user input, exit 2) with
``BinError``, ``SpecError``, ``UsageError``; ``CatalogError`` (broken catalog
data); ``ShortError`` (the bin cannot realise the request, proven, exit 3;
verdict ``impossible``, with ``short``: every countable shortage as
``Shortage`` records); ``NotFoundError`` (no design within the search
effort and no proof that none exists, exit 4; verdict ``not_found``) and its
``SafetyCapError`` (the wall-clock safety net fired); ``InternalError`` (a
self-check failed, exit 1).

Every error renders as one line: ``file:line: message (hint)``.  The CLI turns
them into that line and the exit code; nothing else in the package prints.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path


class SynthError(Exception):
    """Base of every error binsynth raises on purpose."""

    exit_code = 2

    def __init__(self, message: str, *, file: str | Path | None = None,
                 line: int | None = None, hint: str | None = None) -> None:
        super().__init__(message)
        self.message = message
        self.file = str(file) if file is not None else None
        self.line = line
        self.hint = hint

    def where(self) -> str:
        """``file:line`` (or just ``file``) for the start of the message."""
        if self.file is None:
            return ""
        return f"{self.file}:{self.line}" if self.line is not None else self.file

    def __str__(self) -> str:
        head = self.where()
        text = f"{head}: {self.message}" if head else self.message
        if self.hint:
            text += f" ({self.hint})"
        return text


class InputError(SynthError):
    """Bad user input (a spec, a bin, a command-line argument): exit 2."""


class BinError(InputError):
    """A bin file that cannot be read as written."""


class SpecError(InputError):
    """A stimulus spec that cannot be read, or that contradicts itself."""


class UsageError(InputError):
    """A command-line argument that makes no sense."""


class CatalogError(SynthError):
    """The shipped or a user-supplied catalog is inconsistent."""


@dataclass(frozen=True)
class Shortage:
    """One countable thing the bin lacks: what, how many needed and on hand, what fills it."""

    what: str
    need: int | None = None
    have: int | None = None
    fix: str = ""

    def to_json(self) -> dict:
        return {"what": self.what, "need": self.need, "have": self.have, "fix": self.fix or None}


class ShortError(SynthError):
    """Proven: the bin cannot realise the request (exit 3, verdict ``impossible``).

    ``message`` is the reason a person can check (a counting argument or a
    completed exhaustive search); ``short`` lists every countable shortage.
    """

    exit_code = 3
    verdict = "impossible"

    def __init__(self, message: str, *, file: str | Path | None = None, line: int | None = None,
                 hint: str | None = None, short: tuple[Shortage, ...] = ()) -> None:
        super().__init__(message, file=file, line=line, hint=hint)
        self.short = tuple(short)


class NotFoundError(SynthError):
    """No design within the search effort and no proof that none exists (exit 4).

    The message says what was proven; the hint, how to search further.
    """

    exit_code = 4
    verdict = "not_found"

    def __init__(self, message: str, *, file: str | Path | None = None, line: int | None = None,
                 hint: str | None = None, short: tuple[Shortage, ...] = ()) -> None:
        super().__init__(message, file=file, line=line, hint=hint)
        self.short = tuple(short)


class SafetyCapError(NotFoundError):
    """The wall-clock safety cap stopped a search before its work budget ran out (exit 4)."""


class InternalError(SynthError):
    """A self-check failed: a bug in binsynth, never a printed design."""

    exit_code = 1
