"""The ``binsynth`` command line.

Interface: ``main(argv=None) -> int``.  Errors raised on purpose
(``SynthError``) become one line on stderr and their exit code (2 bad input,
3 the bin is short, 1 a failed self-check); nothing here prints a traceback
for them.  Any other exception is a bug: one line names the file its
traceback was saved to (``save_crash_report``) and the exit code is 70
(``EXIT_INTERNAL``, the format contract's internal error; BSD sysexits.h
calls it EX_SOFTWARE).  ``--debug`` lets the traceback through instead.
"""

from __future__ import annotations

import argparse
import os
import platform
import re
import sys
import tempfile
import traceback
from pathlib import Path

from . import __version__
from .commands import REGISTRY
from .errors import SynthError
from .limits import ECHO_CHARS, shown

EXIT_INTERNAL = 70
"""Exit code of an unexpected exception (format contract section 5)."""

DEBUG_HELP = "on an internal error, show the Python traceback instead of saving it to a file"


_LONG_QUOTE = re.compile("'([^']{%d,})'" % (ECHO_CHARS + 1))
_LONG_WORD = re.compile("[^\\s']{%d,}" % (ECHO_CHARS + 1))
"""A value argparse quotes (or lists bare) whole in its message; cut to what ``limits.shown`` repeats."""


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as InputError-style exit 2 lines."""

    def error(self, message: str) -> None:  # noqa: D401 - argparse API
        self.print_usage(sys.stderr)
        message = _LONG_QUOTE.sub(lambda match: shown(match.group(1)), message)
        message = _LONG_WORD.sub(lambda match: match.group()[:ECHO_CHARS] + "...", message)
        sys.stderr.write(f"binsynth: error: {message}\n")
        raise SystemExit(2)


def command_named(argv: list[str]) -> str | None:
    """The command word of a command line, as argparse will read it: the first
    word that is not an option (no top-level option takes a value); '' when
    there is none (``binsynth --help``), None when unsure (every command is built)."""
    for word in argv:
        if word == "--":
            return None
        if not word.startswith("-"):
            return word
    return ""


def build_parser(wanted: str | None = None) -> argparse.ArgumentParser:
    """The whole command line; with ``wanted`` (a name, or '' for none) only that
    command's options are built, so a run imports the one command module it
    needs (the others are listed by name and help from the registry)."""
    parser = _Parser(prog="binsynth", description=(
        "Waveforms in clock ticks + the chips in your drawer -> a circuit you can build."))
    parser.add_argument("--version", action="version", version=f"binsynth {__version__}")
    parser.add_argument("--debug", action="store_true", help=DEBUG_HELP)
    parser.set_defaults(_run=None)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for entry in REGISTRY:
        child = sub.add_parser(entry.name, help=entry.help, description=entry.help)
        if wanted is None or wanted == entry.name:
            module = entry.load()
            module.add_arguments(child)
            child.set_defaults(_run=module.run)
        # accepted after the command too; SUPPRESS keeps a flag given before it
        child.add_argument("--debug", action="store_true", default=argparse.SUPPRESS, help=DEBUG_HELP)
    return parser


def crash_folder() -> Path:
    """Where tracebacks go: ``$XDG_CACHE_HOME/binsynth`` (XDG Base Directory
    specification; ``~/.cache`` when unset), or the system temp folder when
    that cannot be created."""
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    folder = Path(base) / "binsynth"
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError:
        return Path(tempfile.gettempdir())
    return folder


def save_crash_report(exc: BaseException, argv: list[str]) -> Path:
    """Write the traceback, version and command line to a new file; return its path."""
    text = "".join([
        f"binsynth {__version__}, Python {platform.python_version()} on {platform.platform()}\n",
        f"command: binsynth {' '.join(argv)}\n\n",
        *traceback.format_exception(exc),
    ])
    for folder in (crash_folder(), Path(tempfile.gettempdir())):
        try:
            handle, name = tempfile.mkstemp(prefix="binsynth-internal-error-", suffix=".txt",
                                            dir=folder)
        except OSError:
            continue
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(text)
        return Path(name)
    raise OSError("no writable folder for the error report")


def report_internal_error(exc: BaseException, argv: list[str]) -> int:
    """One line on stderr saying where the details are; the internal-error exit code."""
    try:
        saved = save_crash_report(exc, argv)
    except OSError as save_error:
        sys.stderr.write(f"binsynth: internal error ({type(exc).__name__}); details could not be "
                         f"saved ({save_error}); run again with --debug to see them\n")
    else:
        sys.stderr.write(f"binsynth: internal error; details saved to {saved}, "
                         "please attach it to a report\n")
    return EXIT_INTERNAL


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser(command_named(argv))
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:
        return int(exc.code or 0)
    if args._run is None:
        parser.print_help()
        return 2
    try:
        return int(args._run(args) or 0)
    except SynthError as exc:
        sys.stderr.write(f"binsynth: {exc}\n")
        return exc.exit_code
    except KeyboardInterrupt:
        sys.stderr.write("binsynth: interrupted\n")
        return 130
    except (FileNotFoundError, PermissionError, IsADirectoryError, NotADirectoryError) as exc:
        where = f"{exc.filename}: " if exc.filename else ""
        sys.stderr.write(f"binsynth: {where}{exc.strerror or exc} (check the path and its permissions)\n")
        return 2
    except BrokenPipeError:
        return 0
    except Exception as exc:  # noqa: BLE001 - every other exception is a bug to report
        if args.debug:
            raise
        return report_internal_error(exc, argv)


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
