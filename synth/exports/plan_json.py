"""The plan as JSON (``--json``): formats.md section 3, format ``binsynth-plan/2``.

Interface: ``FORMAT``; ``verdict_reason(plan) -> str`` ("2 logic chips: proven
minimum" or "4 logic chips: best found, at least 3 needed"; also the plan's first line); ``failure_to_json(error) ->
dict`` and ``write_failure_json(error, path)`` (the file written when no plan
was made: ``verdict`` impossible or not_found, ``reason``, ``short``);
``plan_to_json(plan) -> dict`` (``verdict`` planned, ``reason``, ``short``
empty, every key of the
contract, plus ``proven_minimal``, ``lower_bound``, ``method``, ``supply_v``,
``decoupling``, ``cautions``, ``counter``, ``nets_external``, per-chip pin
notes, ``passives`` (every resistor and capacitor: ref, value, the net at
each end; their ends appear in ``wires`` as pins 1 and 2 of refs R1, C1 ...),
``oscillator`` (null unless ``clock.source: oscillator``), ``power_on_reset``
(null unless the spec asks for one), ``staircases`` (one entry per staircase) and ``breadboard`` (where
each chip, part, jumper and outside lead goes on a solderless board, ``synth.breadboard``));
``plan_to_text(plan) -> str``; ``write_json(plan, path)`` (atomic).

Key style (docs/reading-a-plan.md, "Key style"): snake_case words spelled out
(``variables``, not ``vars``); a number with a physical unit names the unit
as its last word (``supply_v``, ``width_ns``, ``r_ohm``, ``wanted_hz``); a
text value that spells its unit (``"10 kΩ"``) has no suffix; analyses and
kinds are plain words of ours (``typical_delays``), not internal ids.
"""

from __future__ import annotations

import json
from pathlib import Path

from ..breadboard import plan_breadboard
from ..errors import NotFoundError, ShortError
from ..netlist import Plan, ref_key, verilog_module_name
from ..findings import MODEL_NAMES, MODEL_TEXT, MODELS
from .files import atomic_write_text

FORMAT = "binsynth-plan/2"


def _endpoint(ref_pin: tuple[str, int] | None) -> dict | None:
    return None if ref_pin is None else {"ref": ref_pin[0], "pin": int(ref_pin[1])}


def _counter(plan: Plan) -> dict:
    counter = plan.counter
    chips = [{"ref": c.ref, "part": c.part, "unit": str(c.unit), "clock_net": str(c.clock_net),
              "clock_pin": int(c.clock_pin), "reset_net": str(c.reset_net or ""),
              "reset_pin": c.reset_pin} for c in counter.chips]
    refs = [c.ref for c in counter.chips]
    variables = [{"index": v.index, "net": v.net,
                  "ref": refs[v.chip] if isinstance(v.chip, int) else str(v.chip), "pin": int(v.pin),
                  "pin_name": v.pin_name, "weight": v.weight}
                 for v in counter.vars]
    return {"edge": str(counter.edge), "cycle": int(counter.cycle), "chips": chips,
            "variables": variables}


def _decoupling(plan: Plan) -> list[dict]:
    rows = []
    for ref, note in plan.decoupling:
        part = plan.part_of(ref)
        rows.append({"ref": ref, "value": "100 nF", "across": [
            {"ref": ref, "pin": part.power["VDD"]}, {"ref": ref, "pin": part.power["VSS"]}],
            "note": note})
    return rows


def _glitch_models() -> dict:
    """What each name in a glitch record's ``models`` list means."""
    return {MODEL_NAMES[model]: text for model, text in MODEL_TEXT.items()}


def _glitches(glitches) -> list[dict]:
    """Glitch records with each analysis under its plain name (``typical_delays`` ...)."""
    return [g.to_json() for g in glitches]


def _glitches_by_model(glitches) -> dict:
    """Analysis -> the (signal, at_tick) entries it found, so each can be compared alone."""
    return {MODEL_NAMES[model]: [[g["signal"], g["at_tick"]] for g in glitches
                                 if MODEL_NAMES[model] in g.get("models", ())]
            for model in MODELS}


def logic_chip_count(plan: Plan) -> int:
    return sum(1 for chip in plan.chips if chip.role == "logic")


def verdict_reason(plan: Plan) -> str:
    """The plan's logic chips and what is known about their number, in plain words:
    ``4 logic chips: best found, at least 3 needed`` or ``2 logic chips: proven minimum``."""
    count = logic_chip_count(plan)
    head = f"{count} logic chip{'' if count == 1 else 's'}"
    if plan.proven_minimal:
        return f"{head}: proven minimum"
    if plan.lower_bound is not None and plan.lower_bound == count:
        return f"{head}: proven minimum (the lower bound is met); gates best found"
    if plan.lower_bound is not None:
        return f"{head}: best found, at least {plan.lower_bound} needed"
    return f"{head}: best found"


def failure_to_json(error: ShortError | NotFoundError) -> dict:
    """No plan: the verdict (``impossible`` exit 3, ``not_found`` exit 4), why, what is short."""
    reason = error.message + (f" ({error.hint})" if error.hint else "")
    return {"format": FORMAT, "verdict": error.verdict, "reason": reason,
            "short": [s.to_json() for s in error.short]}


def write_failure_json(error: ShortError | NotFoundError, path: str | Path) -> Path:
    """Write the no-plan verdict file, replacing any old file in one step."""
    return atomic_write_text(path, json.dumps(failure_to_json(error), indent=2) + "\n")


def plan_to_json(plan: Plan) -> dict:
    """The plan as a JSON-ready dict, keys as formats.md section 3 names them."""
    chips = sorted(plan.chips, key=lambda c: ref_key(c.ref))
    return {
        "format": FORMAT,
        "verdict": "planned",
        "reason": verdict_reason(plan),
        "short": [],
        "name": plan.name,
        "clock_edge": plan.clock_edge,
        "verilog_module": verilog_module_name(plan.name),
        "signals": {name: sig.to_json() for name, sig in plan.signals.items()},
        "switches": {name: sw.to_json() for name, sw in plan.switches.items()},
        "bom": [{"part": part, "count": count} for part, count in sorted(plan.bom.items())],
        "chips": [{"ref": c.ref, "part": c.part, "role": c.role, "function": plan.parts[c.part].function,
                   "units": dict(c.units_used),
                   "pin_notes": {str(pin): note for pin, note in c.notes.items()}} for c in chips],
        "wires": [{"net": net, "pins": [_endpoint(p) for p in pins]} for net, pins in plan.nets.items()],
        "glitches": _glitches(plan.glitches),
        "glitch_models": _glitch_models(),
        "glitches_by_model": _glitches_by_model(_glitches(plan.glitches)),
        "coincident_edges": [e.to_json() for e in plan.coincident_edges],
        "timing_fixes": [f.to_json() for f in plan.timing_fixes or ()],
        "clock_gated": {name: s.to_json() for name, s in plan.strobed.items()},
        "rc_offers": [o.to_json() for o in plan.rc_offers],
        "rc_delays": [d.as_json() for d in plan.rc_delays],
        "registered": {name: r.to_json() for name, r in plan.registered.items()},
        "register_checks": [r.to_json() for r in plan.register_checks],
        "pulse_widths": [p.to_json() for p in plan.pulse_widths],
        "warnings": list(plan.warnings),
        "supply_v": plan.supply,
        "spec": plan.spec_path,
        "bin": plan.bin_path,
        "proven_minimal": bool(plan.proven_minimal),
        "lower_bound": plan.lower_bound,
        "method": plan.method,
        "decoupling": _decoupling(plan),
        "cautions": list(plan.cautions),
        "nets_external": dict(plan.external),
        "counter": _counter(plan),
        "bin_lacks": plan.bin_lacks,
        "passives": [{"ref": p.ref, "kind": p.kind, "value": p.value, "label": p.label(),
                      "ends": [{"end": 1, "net": p.ends[0]}, {"end": 2, "net": p.ends[1]}],
                      "purpose": p.purpose} for p in plan.passives],
        "oscillator": plan.oscillator.as_json() if plan.oscillator is not None else None,
        "power_on_reset": plan.power_on_reset.as_json() if plan.power_on_reset is not None else None,
        "staircases": {name: ladder.as_json() for name, ladder in plan.ladders.items()},
        "breadboard": plan_breadboard(plan),
    }


def plan_to_text(plan: Plan) -> str:
    return json.dumps(plan_to_json(plan), indent=2) + "\n"


def write_json(plan: Plan, path: str | Path) -> Path:
    """Write the plan JSON, replacing any old file in one step."""
    return atomic_write_text(path, plan_to_text(plan))


def design_text(design) -> str:
    """The ``--json FILE`` text of a finished design (the exporter interface)."""
    return plan_to_text(design.plan)


def design_stdout_text(design) -> str:
    """``--json -``: the same plan, non-ASCII characters kept as they are."""
    return json.dumps(plan_to_json(design.plan), indent=2, ensure_ascii=False) + "\n"
