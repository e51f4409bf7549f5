"""The error tree of binsynth.

Interface: ``SynthError`` (base), ``InputError`` (bad user input, exit 2) with
``BinError``, ``SpecError``, ``UsageError``; ``CatalogError`` (broken catalog
data); ``ShortError`` (the bin cannot realise the request, exit 3);
``InternalError`` (a self-check failed, exit 1).

Every error renders as one line: ``file:line: message (hint)``.  The CLI turns
them into that line and the exit code; nothing else in the package prints.
"""

from __future__ import annotations

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


class ShortError(SynthError):
    """The bin lacks what the request needs: exit 3, saying what is short."""

    exit_code = 3


class InternalError(SynthError):
    """A self-check failed: a bug in binsynth, never a printed design."""

    exit_code = 1
