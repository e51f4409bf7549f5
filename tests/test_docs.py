"""docs/: every key the loaders accept is in the reference, every command and
option is on the commands page, and every command shown prints what the page shows.

The outputs on the pages are made by tools/docs_tour.py; this test runs each
command again in-process (``synth.cli.main``) and compares the text, only the
temporary output folder normalised (shown as ``out``).  After a change that
moves an output, regenerate with ``python tools/docs_tour.py``.
"""

from __future__ import annotations

import argparse
import importlib
import importlib.util
import re
import sys
from pathlib import Path

import pytest

from synth import spec as spec_module
from synth.cli import build_parser
from synth.commands import COMMANDS
from synth.inventory import BIN_KEYS

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"


def _tool():
    loader = importlib.util.spec_from_file_location("docs_tour", ROOT / "tools" / "docs_tour.py")
    module = importlib.util.module_from_spec(loader)
    sys.modules["docs_tour"] = module          # its dataclasses look their module up
    loader.loader.exec_module(module)
    return module


TOUR = _tool()


def section(page: str, heading: str) -> str:
    """The text of one ``## heading`` section of a docs page."""
    text = (DOCS / page).read_text(encoding="utf-8")
    start = text.index(f"\n## {heading}\n")
    end = text.find("\n## ", start + 1)
    return text[start:end if end >= 0 else None]


@pytest.mark.parametrize("heading, keys", [
    ("Top level", spec_module.TOP_KEYS),
    ("`clock`", spec_module.CLOCK_KEYS + spec_module.CLOCK_SOURCES),
    ("`signals`", spec_module.SIGNAL_KEYS + spec_module.POLARITIES),
    ("`switches`", spec_module.SWITCH_KEYS),
    ("`staircases`", spec_module.LEVEL_KEYS + spec_module.LEVEL_KINDS),
    ("Earlier key names", tuple(spec_module.OLD_KEYS) + tuple(spec_module.OLD_KEYS.values())),
])
def test_every_spec_key_the_loader_accepts_is_in_the_reference(heading, keys):
    text = section("spec-file.md", heading)
    missing = [key for key in keys if f"`{key}" not in text]
    assert not missing, f"spec-file.md section {heading!r} lacks {missing}"


def test_every_bin_key_the_loader_accepts_is_in_the_reference():
    text = (DOCS / "bin-file.md").read_text(encoding="utf-8")
    missing = [key for key in BIN_KEYS + ("count",) if f"| `{key}` |" not in text]
    assert not missing, f"bin-file.md lacks {missing}"


def _options(name: str) -> set[str]:
    """The options ``binsynth NAME --help`` lists (an earlier name kept hidden is not listed)."""
    parser = argparse.ArgumentParser(prog=f"binsynth {name}")
    importlib.import_module(f"synth.commands.{name}").add_arguments(parser)
    return set(re.findall(r"(?<![\w-])(--[a-z][a-z-]*)", parser.format_help())) - {"--help"}


@pytest.mark.parametrize("name", COMMANDS)
def test_every_command_and_option_is_on_the_commands_page(name):
    text = (DOCS / "commands.md").read_text(encoding="utf-8")
    assert f"\n## {name}\n" in text, name
    missing = sorted(o for o in _options(name) if o not in section("commands.md", name))
    assert not missing, f"commands.md section {name!r} lacks {missing}"


def test_the_options_of_every_command_are_on_the_commands_page():
    text = section("commands.md", "Options for every command")
    help_text = build_parser().format_help()
    options = set(re.findall(r"(?<![\w-])(--[a-z][a-z-]*)", help_text)) - {"--help"}
    assert options and all(option in text for option in options), options


def test_the_guide_is_linked_from_the_readme():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "docs/README.md" in readme
    index = (DOCS / "README.md").read_text(encoding="utf-8")
    for page in sorted(DOCS.glob("*.md")):
        if page.name != "README.md":
            assert f"({page.name})" in index, page.name


def _marks() -> list[tuple[str, str, str, str]]:
    found = []
    for page in sorted(DOCS.glob("*.md")):
        for kind, spec, body in TOUR.marks(page.read_text(encoding="utf-8")):
            found.append((page.name, kind, spec, body))
    return found


MARKS = _marks()


def test_the_pages_show_commands():
    assert sum(kind == "run" for _, kind, _, _ in MARKS) >= 20


@pytest.mark.parametrize("page, kind, spec, body", MARKS,
                         ids=[f"{page}:{spec[:60]}" for page, _, spec, _ in MARKS])
def test_each_command_shown_prints_what_the_page_shows(page, kind, spec, body):
    made = TOUR.run_block(spec) if kind == "run" else TOUR.show_block(spec)
    assert made == body, f"{page}: regenerate with python tools/docs_tour.py"
