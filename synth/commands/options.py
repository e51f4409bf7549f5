"""Options more than one command offers, in one place (not a command itself).

Interface: ``add_effort_argument(parser)``.  Kept apart from the command
modules so that a command imports only what it runs (``plan`` does not load
``substitute``'s engine to offer ``--effort``).
"""

from __future__ import annotations

import argparse

from ..effort import DEFAULT_EFFORT, EFFORTS


def add_effort_argument(parser: argparse.ArgumentParser) -> None:
    """``--effort LEVEL``: how much search work (counted, never timed) the mapper may spend."""
    levels = "; ".join(f"{e.name}: {e.summary}" for e in EFFORTS.values())
    parser.add_argument("--effort", choices=list(EFFORTS), default=DEFAULT_EFFORT,
                        help=f"how hard the search tries, counted in work so every run gives the same "
                             f"answer ({levels}; default {DEFAULT_EFFORT})")
