"""Regenerate README.md's tour of the commands from real runs.

Usage: python tools/readme_tour.py   (from the repository root)

Runs each command of the tour with ``python -m synth`` in the repository
root (plain output, as when piped), pastes the output between the README's
``<!-- tour -->`` and ``<!-- /tour -->`` marks and replaces README.md in one
step.  Long outputs are shortened: the first lines, then the lines that
carry the plan's conclusions (what the bin lacks, warnings).
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

BAD_BIN = "# a bin with a typo in a marking\nparts:\n  CD4999BE: 1\n  4040: 1\n"

GLITCH_PROSE = (
    "Glitches: a ripple counter's outputs change one after another, so a decode can spike for"
    ' a moment on a tick entry.  `plan` lists every such entry with its width, its cause and '
    'the analyses that found it (`found by`: the event simulation with transport delays at '
    'typical and worst-case catalog delays, with inertial delays, and the enumeration of the '
    'states the count passes through).  `--fix glitches` applies the remedies in order '
    "(another decode choice where a passed-through state is a don't-care, registering the "
    "signal in a D flip-flop from the bin (decoded one tick early, so it changes once per "
    "edge), a synchronous counter from the bin, and gating with the clock's still half only "
    "where a pulse per tick is acceptable: `steady: false` or one-tick windows; never for a "
    'switch select), re-checks the plan tick by tick, re-analyses it, and says per signal '
    'what it did and what it cost; what no remedy removes gets a note; a glitch on an output '
    'the spec marks `feeds: slow` (an LED, a lamp, a relay: nothing that latches or counts) '
    'narrower than 1 µs is listed as harmless and left alone.  RC delays between two Schmitt '
    "stages are offered; `--fix races` builds one into each race, and a signal's `delay: 2 us` "
    'asks for one (R and C from the bin, both stages packed, wired, simulated and checked '
    'again; shortened here):')

# (prose, shown command, argv after 'binsynth', head lines kept or None (or the titles of
# the output blocks to keep), tail prefixes kept)
TOUR = [
    ("Look a part up: the package drawing, every pin and the datasheet facts with their sources.",
     "binsynth parts 4040", ["parts", "4040"], 34, ()),
    ("List the catalog, filtered by family or function (`--json` for scripts).",
     "binsynth parts --family 4000B --function counter",
     ["parts", "--family", "4000B", "--function", "counter"], None, ()),
    ("Check a bin and see what it can provide (markings as printed on the chips are accepted).",
     "binsynth bin inventory/bins/sample_hold.yaml", ["bin", "inventory/bins/sample_hold.yaml"], None, ()),
    ("Decode: the counter stages chosen and each signal's minimized decode in the counter's pin names.",
     "binsynth decode examples/sample_hold.yaml --bin inventory/bins/sample_hold.yaml",
     ["decode", "examples/sample_hold.yaml", "--bin", "inventory/bins/sample_hold.yaml"], None, ()),
    ("Plan: the whole circuit, chip by chip and wire by wire (shortened here; `--json`, `--wiring`, "
     "`--verilog`, `--vcd`, `--svg`, `--spice`, `--report` (the HTML build page) write files, `--take` takes the parts out of the bin file, "
     "`--effort quick|normal|thorough` sets how much search work (counted, never timed) goes into the mapping "
     "and the re-planning that finds what the bin lacks).",
     "binsynth plan examples/stepper.yaml --bin inventory/bins/stepper.yaml",
     ["plan", "examples/stepper.yaml", "--bin", "inventory/bins/stepper.yaml"], 62,
     ("what the bin lacks", "warning:", "remedy:")),
    (GLITCH_PROSE,
     "binsynth plan examples/sample_hold.yaml --bin inventory/bins/sample_hold.yaml --fix glitches",
     ["plan", "examples/sample_hold.yaml", "--bin", "inventory/bins/sample_hold.yaml", "--fix", "glitches"],
     ("signals", "glitches", "glitch fixes", "offer"), ()),
    ("Substitute: the cheapest ways to build a gate the bin lacks from the gates it has, ranked by "
     "chips, then gates, then depth; each way is drawn as a cascade from the output back to the "
     "inputs with the chip pin on every arrow, then wired net by net. A target is a gate name "
     "(`and2`..`and8`, `nand..`, `or..`, `nor..`, `xor..`, `xnor..`, `inv`) or an expression over "
     "named inputs: `~a`, `!a` or `a'` (not), `&` (and), `^` (xor), `|` or `+` (or), parentheses, "
     "`0`/`1`; NOT binds tightest, then AND, XOR, OR. `--free-polarity` (the spec's `polarity: free`) accepts the complement, "
     "`--json` is for scripts; a misspelt gate gets the closest valid name (exit 2), a bin that "
     "cannot build it says what is short (exit 3).",
     "binsynth substitute nand4 --bin inventory/bins/stepper.yaml --limit 2",
     ["substitute", "nand4", "--bin", "inventory/bins/stepper.yaml", "--limit", "2"], 40, ()),
    ("Delay: size an RC delay between two stages from the passives on hand.",
     "binsynth delay 50us --bin inventory/bins/sample_hold.yaml",
     ["delay", "50us", "--bin", "inventory/bins/sample_hold.yaml"], None, ()),
]


def run(argv: list[str], cwd: Path) -> tuple[str, int]:
    """One binsynth run, plain output (not a terminal), stdout and stderr together."""
    env = dict(os.environ, PYTHONPATH=str(ROOT), COLUMNS="110", NO_COLOR="1")
    done = subprocess.run([sys.executable, "-m", "synth", *argv], cwd=cwd, env=env,
                          capture_output=True, text=True)
    return (done.stdout + done.stderr).rstrip("\n"), done.returncode


def keep_blocks(text: str, titles: tuple[str, ...], lines_per_block: int = 6, width: int = 120) -> str:
    """Only the output blocks (blank-line separated) whose first line starts with a title."""
    kept = []
    for block in text.split("\n\n"):
        lines = block.splitlines()
        if not lines or not lines[0].startswith(titles):
            continue
        short = [line if len(line) <= width else line[: width - 4] + " ..." for line in lines]
        kept.append("\n".join(short[:lines_per_block] + (["..."] if len(short) > lines_per_block else [])))
    return "\n\n".join(kept)


def shorten(text: str, head, tail_prefixes: tuple[str, ...]) -> str:
    if isinstance(head, tuple):
        return keep_blocks(text, head)
    lines = text.splitlines()
    if head is None or len(lines) <= head:
        return text
    kept = lines[:head] + ["..."]
    kept += [line for line in lines[head:] if line.startswith(tail_prefixes)]
    return "\n".join(kept)


def tour_text() -> str:
    parts = []
    for prose, shown, argv, head, tails in TOUR:
        if argv[0] == "substitute" and not (ROOT / "synth" / "commands" / "substitute.py").exists():
            continue
        out, code = run(argv, ROOT)
        if code != 0:
            raise SystemExit(f"tour command failed ({code}): {shown}\n{out}")
        parts.append(f"{prose}\n\n```\n$ {shown}\n{shorten(out, head, tails)}\n```\n")
    with tempfile.TemporaryDirectory() as tmp:
        Path(tmp, "bad_bin.yaml").write_text(BAD_BIN)
        out, code = run(["bin", "bad_bin.yaml"], Path(tmp))
    parts.append("Bad input names the file, line and fix, with exit code 2:\n\n```\n"
                 f"$ binsynth bin bad_bin.yaml   # a bin with an unknown marking on line 3\n{out}\n"
                 f"exit {code}\n```\n")
    return "\n".join(parts)


def main() -> int:
    from synth.exports import atomic_write_text

    readme = ROOT / "README.md"
    text = readme.read_text()
    start, end = "<!-- tour -->\n", "<!-- /tour -->"
    before, rest = text.split(start, 1)
    _, after = rest.split(end, 1)
    atomic_write_text(readme, before + start + "\n" + tour_text() + "\n" + end + after)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
