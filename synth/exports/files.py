"""Writing output files: one atomic file, and a whole run's outputs as one transaction.

Interface: ``atomic_write_text(path, text)`` (a temporary file in the same
folder, flushed and fsynced, then ``os.replace``d over the target, so a
reader never sees half a file); ``check_outputs(outputs, inputs, protected)``
(every output path checked before any work); ``OutputTransaction`` (stage
texts, then ``commit()`` puts them all in place, or nothing is written);
``STDOUT`` (the path ``-``); ``TEMP_SUFFIX`` and ``remove_stray_temps(path)``.

Decisions:

- An output never replaces an input or another output, and ``-`` means
  standard output for every text output; an empty path is an error.  These
  are checked before the plan is made, so a typo costs no waiting.
- Staged texts go to temporary files in their target folders (so the final
  ``os.replace`` is a rename on one file system).  The run's last step puts
  them in place one after the other; until then an error, Ctrl-C or SIGTERM
  removes every temporary file and leaves the old outputs untouched.
- Temporary files are named ``.NAME.XXXX.binsynth-tmp``: a kill -9 can still
  leave one behind, and the name says whose it is.  The bin's own stray
  temporaries are removed by the next take, under the bin's lock.
"""

from __future__ import annotations

import os
import signal
import sys
import tempfile
import threading
from dataclasses import dataclass, field
from pathlib import Path
from typing import IO

from ..errors import UsageError
from ..limits import os_reason, shown

__all__ = ["atomic_write_text", "check_outputs", "OutputTransaction", "Output", "STDOUT",
           "TEMP_SUFFIX", "remove_stray_temps"]

STDOUT = "-"
TEMP_SUFFIX = ".binsynth-tmp"


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _folder_of(target: Path) -> Path:
    return target.parent if str(target.parent) else Path(".")


def _write_temp(target: Path, text: str, encoding: str) -> str:
    """``text`` in a fresh temporary file beside ``target``, with the target's mode; its path."""
    folder = _folder_of(target)
    if target.is_dir():
        raise UsageError(f"cannot write {shown(target)}: it is a folder", hint="give a file name")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=TEMP_SUFFIX, dir=folder)
    except OSError as exc:
        raise UsageError(f"cannot write {shown(target)}: {os_reason(exc)}",
                         hint=f"check that the folder {shown(folder)} exists and is writable") from None
    try:
        with os.fdopen(fd, "w", encoding=encoding, newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        mode = target.stat().st_mode & 0o777 if target.exists() else 0o666 & ~_umask()
        os.chmod(tmp, mode)
    except BaseException:
        _unlink(tmp)
        raise
    return tmp


def _unlink(path: str) -> None:
    try:
        os.unlink(path)
    except FileNotFoundError:
        pass


def atomic_write_text(path: str | Path, text: str, encoding: str = "utf-8") -> Path:
    """Write ``text`` to ``path`` all at once; the old file stays until the new one is whole."""
    target = Path(path)
    tmp = _write_temp(target, text, encoding)
    try:
        os.replace(tmp, target)
    except BaseException:
        _unlink(tmp)
        raise
    return target


def remove_stray_temps(path: str | Path) -> list[Path]:
    """Delete temporaries a killed run left beside ``path`` (call only under the file's lock)."""
    target = Path(path)
    removed = []
    for stray in _folder_of(target).glob(f".{target.name}.*{TEMP_SUFFIX}"):
        try:
            stray.unlink()
            removed.append(stray)
        except OSError:
            pass
    return removed


# ---------------------------------------------------------------- checking paths

@dataclass(frozen=True)
class Output:
    """One requested output: the option that asked for it and its path (``-``: standard output)."""

    option: str
    path: str

    @property
    def to_stdout(self) -> bool:
        return self.path == STDOUT


def _same_file(a: Path, b: Path) -> bool:
    try:
        if a.resolve() == b.resolve():
            return True
        return a.exists() and b.exists() and os.path.samefile(a, b)
    except OSError:
        return False


def check_outputs(outputs: list[Output], inputs: dict[str, Path] | None = None,
                  protected: dict[str, Path] | None = None) -> None:
    """Refuse, before any work, an output that cannot be written or would destroy something.

    ``inputs`` and ``protected`` map a description (``the spec``, ``the bin's
    backup``) to a path no output may replace.
    """
    keep = {**(inputs or {}), **(protected or {})}
    to_stdout = [o.option for o in outputs if o.to_stdout]
    if len(to_stdout) > 1:
        raise UsageError(f"{' and '.join(to_stdout)} both ask for standard output ('-')",
                         hint="send at most one output to standard output, the others to files")
    seen: dict[Path, str] = {}
    for output in outputs:
        if output.to_stdout:
            continue
        _check_one(output, keep)
        for path, option in seen.items():
            if _same_file(path, Path(output.path)):
                raise UsageError(f"{option} and {output.option} name the same file {shown(output.path)}",
                                 hint="give each output its own file")
        seen[Path(output.path)] = output.option


def _check_one(output: Output, keep: dict[str, Path]) -> None:
    option, text = output.option, output.path
    if not text.strip():
        raise UsageError(f"{option}: expected a file name or '-' for standard output, got nothing")
    target = Path(text)
    folder = _folder_of(target)
    if target.is_dir():
        raise UsageError(f"{option}: cannot write {shown(text)}: it is a folder", hint="give a file name")
    if not folder.is_dir():
        what = "is not a folder" if folder.exists() else "does not exist"
        raise UsageError(f"{option}: cannot write {shown(text)}: the folder {shown(folder)} {what}",
                         hint="create the folder first, or write somewhere else")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise UsageError(f"{option}: cannot write {shown(text)}: the folder {shown(folder)} is not writable",
                         hint="write somewhere else, or change the folder's permissions")
    for what, path in keep.items():
        if _same_file(target, path):
            raise UsageError(f"{option}: {shown(text)} is {what}; an output never replaces it",
                             hint="give the output another file name")


# ---------------------------------------------------------------- the transaction

@dataclass
class OutputTransaction:
    """Outputs staged as temporary files, put in place together by ``commit()``.

    Use as a context manager: leaving it without ``commit()`` (an error, an
    interrupt, SIGTERM) removes every staged file and writes nothing.
    """

    stdout: IO[str] | None = None
    _staged: list[tuple[str, Path]] = field(default_factory=list)
    _printed: list[str] = field(default_factory=list)
    _old_handler: object = None
    _handler_set: bool = False

    def stage(self, output: Output, text: str) -> None:
        """Hold ``text`` for ``output``: a temporary file, or text for standard output."""
        if output.to_stdout:
            self._printed.append(text)
            return
        target = Path(output.path)
        self._staged.append((_write_temp(target, text, "utf-8"), target))

    def commit(self) -> list[str]:
        """Put every staged file in place, then print the standard-output text; the paths."""
        written = []
        while self._staged:
            tmp, target = self._staged[0]
            os.replace(tmp, target)
            self._staged.pop(0)
            written.append(str(target))
        stream = self.stdout or sys.stdout
        for text in self._printed:
            stream.write(text)
        self._printed.clear()
        return written

    def abort(self) -> None:
        """Remove every staged temporary file."""
        for tmp, _ in self._staged:
            _unlink(tmp)
        self._staged.clear()
        self._printed.clear()

    def __enter__(self) -> "OutputTransaction":
        if threading.current_thread() is threading.main_thread():
            self._old_handler = signal.signal(signal.SIGTERM, _terminate)
            self._handler_set = True
        return self

    def __exit__(self, *exc_info) -> None:
        self.abort()
        if self._handler_set:
            signal.signal(signal.SIGTERM, self._old_handler or signal.SIG_DFL)
            self._handler_set = False


def _terminate(signum, frame) -> None:
    """SIGTERM while outputs are staged: unwind (the transaction cleans up), exit 143."""
    raise SystemExit(128 + signum)
