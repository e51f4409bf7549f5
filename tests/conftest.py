"""Shared test fixtures and stand-in records.

Fixtures: ``catalog`` (the shipped catalog, loaded once per run),
``shipped_examples`` (every ``examples/*.yaml`` with the bin of the same name
under ``inventory/bins/``, as ``(name, spec path, bin path)``).

Stand-ins: ``Var``, ``Chip``, ``Reset`` and ``CounterPlan`` carry the fields
``synth.counter`` hands on (``CounterVar``, ``CounterChip``, ``ResetDecode``,
``CounterPlan``) and nothing else, so timing and export tests can describe a
small counter without running counter allocation.  Test modules import them
with ``from conftest import ...`` (pytest puts this folder on ``sys.path``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import pytest

from synth.inventory import Catalog, data_path, example_path, load_catalog


def shipped_example_names() -> list[str]:
    """The example specs that ship with a bin of the same name."""
    return sorted(p.stem for p in example_path().glob("*.yaml")
                  if data_path("bins", p.name).exists())


@pytest.fixture(scope="session")
def catalog() -> Catalog:
    return load_catalog()


@pytest.fixture(scope="session")
def shipped_examples() -> list[tuple[str, Path, Path]]:
    return [(name, example_path(f"{name}.yaml"), data_path("bins", f"{name}.yaml"))
            for name in shipped_example_names()]


# ---------------------------------------------------------------- stand-in counter records

@dataclass
class Var:
    index: int
    net: str
    chip: int
    unit: str
    pin: int
    pin_name: str
    weight: int | None


@dataclass
class Chip:
    ref: str
    part: str
    unit: str
    clock_net: str
    clock_pin: int
    clock_edge: str
    reset_pin: int | None
    reset_net: str
    enable_pin: int | None = None
    enable_net: str | None = None
    ties: dict = field(default_factory=dict)
    carry_net: str | None = None
    count_enable_pins: tuple = ()


@dataclass
class Reset:
    name: str
    net: str
    state: int
    active: str
    synchronous: bool = False
    direct: bool = False
    direct_pin: tuple | None = None


@dataclass
class CounterPlan:
    chips: list
    vars: list
    cycle: int
    state_of_tick: tuple
    edge: str
    synchronous: bool
    reset: object = None
    unreachable: frozenset = frozenset()
    carries: tuple = ()
