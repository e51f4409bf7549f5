"""``binsynth demo``: plan the shipped sample-and-hold example into a folder.

Every exporter of the registry writes its file into the folder (under the
exporter's ``file_name``), as one transaction: the folder is checked before
the plan is made and created only once the plan is.
"""

from __future__ import annotations

import argparse
import os
from pathlib import Path

from ..errors import UsageError
from ..exports import EXPORTERS, Output, check_outputs
from ..flow import make_plan
from ..inventory import data_path, example_path
from ..limits import shown
from ..render import Text, progress, show
from .plan import plan_blocks, write_outputs

NAME = "demo"

EXAMPLE = "sample_hold"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--out", default="binsynth-demo", metavar="DIR",
                        help="folder for the output files (default ./binsynth-demo)")


def check_folder(text: str) -> Path:
    """The output folder, or the nearest folder above it that would hold it, must be writable."""
    if not text.strip():
        raise UsageError("--out: expected a folder name, got nothing")
    out = Path(text)
    if out.exists() and not out.is_dir():
        raise UsageError(f"--out: {shown(text)} is a file, not a folder",
                         hint="give a new folder or an existing one")
    above = out
    while not above.exists() and above != above.parent:
        above = above.parent
    if not above.is_dir():
        raise UsageError(f"--out: cannot make {shown(text)}: {shown(above)} is a file, not a folder",
                         hint="give another folder")
    if not os.access(above, os.W_OK | os.X_OK):
        raise UsageError(f"--out: cannot write into {shown(above)}: the folder is not writable",
                         hint="give another folder")
    return out


def run(args: argparse.Namespace) -> int:
    spec = example_path(f"{EXAMPLE}.yaml")
    stock = data_path("bins", f"{EXAMPLE}.yaml")
    out = check_folder(args.out)
    requests = [(entry, Output(entry.option, str(out / entry.file_name))) for entry in EXPORTERS]
    if out.is_dir():
        check_outputs([output for _, output in requests])
    with progress(f"planning {spec.name}"):
        design = make_plan(spec, stock, lacks=True)
    out.mkdir(parents=True, exist_ok=True)
    written = write_outputs(design, requests)
    blocks = [Text(f"demo: {spec.name} planned from the bin {stock.name}")] + plan_blocks(design)
    blocks.append(Text("files written: " + ", ".join(written)))
    show(blocks)
    return 0
