"""Exports: one module per output file, each reading a finished ``Plan``.

Interface: ``atomic_write_text(path, text)`` (the one way every export writes
a file: a temporary file in the same folder, flushed and fsynced, then
``os.replace``d over the target, so a reader never sees half a file).
Modules: ``plan_json`` (``--json``), ``wiring`` (``--wiring``, Markdown), and
the Verilog, VCD and SVG writers.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

__all__ = ["atomic_write_text"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def atomic_write_text(path: str | Path, text: str, encoding: str = "utf-8") -> Path:
    """Write ``text`` to ``path`` all at once; the old file stays until the new one is whole."""
    from ..errors import UsageError

    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if target.is_dir():
        raise UsageError(f"cannot write {target}: it is a folder", hint="give a file name")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise UsageError(f"cannot write {target}: {exc.strerror or exc}",
                         hint=f"check that the folder {folder} exists and is writable") from None
    try:
        with os.fdopen(fd, "w", encoding=encoding, newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        mode = target.stat().st_mode & 0o777 if target.exists() else 0o666 & ~_umask()
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return target
