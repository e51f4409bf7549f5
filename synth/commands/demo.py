"""``binsynth demo``: plan the shipped sample-and-hold example into a folder."""

from __future__ import annotations

import argparse
from pathlib import Path

NAME = "demo"
HELP = "plan the shipped sample-and-hold bench sequencer and write every output file into a folder"

EXAMPLE = "sample_hold"


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--out", default="binsynth-demo", metavar="DIR",
                        help="folder for the output files (default ./binsynth-demo)")


def run(args: argparse.Namespace) -> int:
    from ..inventory import data_path, example_path
    from ..pipeline import make_plan
    from ..render import Text, progress, show
    from .plan import plan_blocks, write_outputs

    spec = example_path(f"{EXAMPLE}.yaml")
    stock = data_path("bins", f"{EXAMPLE}.yaml")
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    with progress(f"planning {spec.name}"):
        design = make_plan(spec, stock, lacks=True)
    files = argparse.Namespace(json=str(out / "plan.json"), wiring=str(out / "wiring.md"),
                               verilog=str(out / "plan.v"), vcd=str(out / "plan.vcd"),
                               svg=str(out / "timing.svg"), report=str(out / "report.html"),
                               take=False)
    written = write_outputs(design, files)
    blocks = [Text(f"demo: {spec.name} planned from the bin {stock.name}")] + plan_blocks(design)
    blocks.append(Text("files written: " + ", ".join(written)))
    show(blocks)
    return 0
