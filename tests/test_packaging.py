"""The installed package holds every subpackage and data folder of the source tree.

Tests run from the checkout (pytest's ``pythonpath = ["."]``), so a subpackage left out
of pyproject's hand-written ``packages`` list would pass here and break ``pip install .``;
this compares the list with the tree (PEP 621 / setuptools configuration, common practice).
"""

from __future__ import annotations

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _config() -> dict:
    return tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def test_every_subpackage_is_installed():
    listed = set(_config()["tool"]["setuptools"]["packages"])
    tree = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "synth").rglob("__init__.py")}
    assert tree - listed == set(), "add these to [tool.setuptools] packages in pyproject.toml"


def test_every_data_folder_is_installed():
    globs = _config()["tool"]["setuptools"]["package-data"]["synth._data"]
    folders = {Path(g).parent.as_posix() for g in globs}
    on_disk = {p.parent.relative_to(ROOT / "inventory").as_posix()
               for p in (ROOT / "inventory").rglob("*.yaml")}
    assert on_disk <= folders
