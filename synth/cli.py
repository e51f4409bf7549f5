"""The ``binsynth`` command line.

Interface: ``main(argv=None) -> int``.  Errors raised on purpose
(``SynthError``) become one line on stderr and their exit code (2 bad input,
3 the bin is short, 1 a failed self-check); nothing here prints a traceback
for them.  A stray exception is reported as an internal error, exit 1.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from types import ModuleType

from . import __version__
from .commands import COMMANDS
from .errors import SynthError


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as InputError-style exit 2 lines."""

    def error(self, message: str) -> None:  # noqa: D401 - argparse API
        self.print_usage(sys.stderr)
        sys.stderr.write(f"binsynth: error: {message}\n")
        raise SystemExit(2)


def _command_modules() -> dict[str, ModuleType]:
    modules = {}
    for name in COMMANDS:
        try:
            modules[name] = importlib.import_module(f"synth.commands.{name}")
        except ModuleNotFoundError as exc:
            if exc.name != f"synth.commands.{name}":
                raise
    return modules


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="binsynth", description=(
        "Waveforms in clock ticks + the chips in your drawer -> a circuit you can build."))
    parser.add_argument("--version", action="version", version=f"binsynth {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, module in _command_modules().items():
        child = sub.add_parser(name, help=module.HELP, description=module.HELP)
        module.add_arguments(child)
        child.set_defaults(_run=module.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:
        return int(exc.code or 0)
    if not getattr(args, "_run", None):
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
        where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
        sys.stderr.write(f"binsynth: {where}{exc.strerror or exc} (check the path and its permissions)\n")
        return 2
    except BrokenPipeError:
        return 0


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
