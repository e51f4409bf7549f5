"""Staircases: counter bits through a resistor ladder onto a net of the plan.

Interface:

- ``add_ladders(plan, spec, bin, catalog) -> dict[str, LadderPlan]`` (one per
  ``levels`` entry: its resistors join ``plan.passives``; the caller then runs
  ``packing.refresh`` and ``check_nets``)
- ``tick_bit_nets(counter_plan) -> dict[int, str]`` (tick bit k -> the counter
  net that carries it at every tick of the cycle)
- ``driver_resistance(part, supply) -> tuple[float | None, float | None, str]``
- ``MONTE_CARLO_TRIALS``, ``MONTE_CARLO_SEED``
- record: ``LadderPlan``

Each ladder is sized with ``analog.choose_ladder_resistors`` (R-2R: an exact
pair, R as two 2R in parallel, or 2R as two R in series) or, for ``kind:
binary``, from values R, 2R, 4R ... all on hand.  The counter's output
resistance (catalog ``r_out``, the source side, typical) sits in series
with every driven leg; the worst case over the resistor tolerance and a
seeded Monte Carlo give DNL and INL in LSB (endpoint fit, ``analog.linearity``).
Bits the counter does not bring out are a spec error naming the ``bits``
line (exit 2); a bin without usable resistor values is short (exit 3).
"""

from __future__ import annotations

import math

from .analog import (binary_weighted_ladder, choose_ladder_resistors, monte_carlo, r2r_ladder,
                     worst_case_linearity)
from .analogparts import LadderPlan
from .errors import ShortError, SpecError
from .netlist import Passive, counter_levels, pin_direction, tick_count
from .units import format_si

__all__ = ["LadderPlan", "add_ladders", "tick_bit_nets", "driver_resistance",
           "MONTE_CARLO_TRIALS", "MONTE_CARLO_SEED"]

MONTE_CARLO_TRIALS = 2000
MONTE_CARLO_SEED = 6      # fixed, so every run of a plan prints the same figures
RATIO_MATCH = 0.005       # a value counts as 2^k R when within 0.5 %


# ---------------------------------------------------------------- counter bits

def tick_bit_nets(counter_plan) -> dict[int, str]:
    """Tick bit k -> a counter net equal to bit k of the tick index at every tick."""
    cycle = tick_count(counter_plan)
    rows = [counter_levels(counter_plan, t) for t in range(cycle)]
    found: dict[int, str] = {}
    for k in range(max(1, (cycle - 1).bit_length())):
        for var in counter_plan.vars:
            if all(row[var.net] == bool((t >> k) & 1) for t, row in enumerate(rows)):
                found[k] = var.net
                break
    return found


def _driver_pin(plan, net: str) -> tuple[str, int]:
    pins = [p for p in plan.nets.get(net, []) if pin_direction(plan, *p) == "out"]
    return pins[0]


def driver_resistance(part, supply: float) -> tuple[float | None, float | None, str]:
    """(typ, max) output resistance in ohms at the supply: the nearest catalog row."""
    table = part.r_out
    if not table:
        return None, None, f"the catalog gives no output resistance for {part.type}"
    volts = min(table, key=lambda v: (abs(float(v) - supply), -float(v)))
    row = table[volts]
    typ, top = row.get("typ"), row.get("max")
    source = str((part.source or {}).get("r_out", ""))
    note = f"{part.type} output resistance at {float(volts):g} V (catalog row nearest {supply:g} V)"
    return (float(typ) if typ is not None else None, float(top) if top is not None else None,
            f"{note}; {source}" if source else note)


# ---------------------------------------------------------------- resistor values

def _binary_values(resistors, bits: int, bin_path) -> tuple[float, list[float]]:
    """Base R with R, 2R, ... 2^(n-1) R all on hand; the LSB leg is the largest."""
    values = sorted(set(v for v in resistors if v > 0))

    def on_hand(target: float) -> bool:
        return any(abs(v / target - 1) <= RATIO_MATCH for v in values)

    bases = [a for a in values if all(on_hand(a * 2 ** k) for k in range(bits))]
    if not bases:
        best = max(values, key=lambda a: sum(on_hand(a * 2 ** k) for k in range(bits)), default=None)
        if best is None:
            raise ShortError("the bin lists no resistors for the ladder", file=bin_path,
                             hint="add e.g. 'resistors: [10k, 20k]'")
        missing = [format_si(best * 2 ** k, "Ω") for k in range(bits) if not on_hand(best * 2 ** k)]
        raise ShortError(f"a binary-weighted ladder of {bits} bits needs R, 2R .. {2 ** (bits - 1)}R "
                         f"on hand; from {format_si(best, 'Ω')} the bin lacks {', '.join(missing)}",
                         file=bin_path, hint=f"add {', '.join(missing)}, or use kind: r2r")
    centre = math.sqrt(10e3 * 100e3)
    base = min(bases, key=lambda a: (not 10e3 <= a <= 100e3, abs(math.log(a / centre))))
    return base, [base * 2 ** k for k in range(bits)]


# ---------------------------------------------------------------- passives

def _next(plan, letter: str) -> str:
    numbers = [int(p.ref[1:]) for p in plan.passives if p.ref[0] == letter]
    return f"{letter}{max(numbers, default=0) + 1}"


def _resistor(plan, ohms: float, a: str, b: str, purpose: str, refs: list[str]) -> None:
    ref = _next(plan, "R")
    plan.passives.append(Passive(ref, "resistor", ohms, (a, b), purpose))
    refs.append(ref)


def _element(plan, name: str, ohms: float, a: str, b: str, how: str, piece: float,
             refs: list[str], role: str, tag: str) -> None:
    """One ladder element, built as one resistor, two in series, or two in parallel."""
    if how == "series":
        mid = f"{name}_{tag}_m"
        _resistor(plan, piece, a, mid, f"staircase {name}: {role} (half 1 of 2 in series)", refs)
        _resistor(plan, piece, mid, b, f"staircase {name}: {role} (half 2 of 2 in series)", refs)
    elif how == "parallel":
        for _ in (1, 2):
            _resistor(plan, piece, a, b, f"staircase {name}: {role} (one of 2 in parallel)", refs)
    else:
        _resistor(plan, ohms, a, b, f"staircase {name}: {role}", refs)


def _wire_r2r(plan, name: str, nets: list[str], r: float, r2: float, construction: str) -> list[str]:
    n, refs = len(nets), []
    node = [f"{name}_tap{k}" if k < n - 1 else name for k in range(n)]
    two_r = ("series", r) if construction == "series" else ("one", r2)
    one_r = ("parallel", r2) if construction == "parallel" else ("one", r)
    _element(plan, name, r2, node[0], "VSS", two_r[0], two_r[1], refs, "2R termination", "t")
    for k in range(n):
        _element(plan, name, r2, nets[k], node[k], two_r[0], two_r[1], refs, f"2R leg b{k}", f"b{k}")
        if k + 1 < n:
            _element(plan, name, r, node[k], node[k + 1], one_r[0], one_r[1], refs,
                     f"R {k}-{k + 1}", f"r{k}")
    return refs


def _wire_binary(plan, name: str, nets: list[str], legs: list[float]) -> list[str]:
    refs: list[str] = []
    n = len(nets)
    for k in range(n):
        _resistor(plan, legs[n - 1 - k], nets[k], name, f"staircase {name}: leg b{k} "
                  f"({2 ** (n - 1 - k)}R)", refs)
    return refs


# ---------------------------------------------------------------- the whole step

def _check_names(plan, spec, level, routed: list[str]) -> None:
    taken = set(plan.nets)
    if level.name in taken and not routed:
        raise SpecError(f"{level.section}.{level.name}: the name is already a net of the plan", file=spec.path,
                        line=level.line, hint="name the staircase e.g. ramp_out")
    clash = [n for n in taken if n.startswith(f"{level.name}_")]
    if clash:
        raise SpecError(f"{level.section}.{level.name}: the ladder's node names clash with net {clash[0]}",
                        file=spec.path, line=level.line, hint="rename the staircase")


def _driver_nets(plan, spec, level) -> list[str]:
    available = tick_bit_nets(plan.counter)
    nets = []
    for bit, line in zip(level.bits, level.bit_lines):
        if bit not in available:
            parts = ", ".join(sorted({c.part for c in plan.counter.chips})) or "no counter"
            have = ", ".join(str(k) for k in sorted(available))
            hint = (f"the counter's pins carry tick bits {have}" if have else
                    "this counter brings out no binary tick bits (a decoded or BCD count); a binary "
                    "counter such as a 4040 does")
            raise SpecError(f"{level.section}.{level.name}.bits: tick bit {bit} is not brought out by the "
                            f"counter ({parts})", file=spec.path, line=line, hint=hint)
        nets.append(available[bit])
    return nets


def _plan_one(plan, spec, bin, catalog, level) -> LadderPlan:
    routed = [name for name, sw in spec.switches.items() if level.name in (sw.on, sw.off)]
    _check_names(plan, spec, level, routed)
    nets = _driver_nets(plan, spec, level)
    drivers = [(*_driver_pin(plan, net), net) for net in nets]
    parts = [catalog.parts[t] for t in sorted({plan.chip(ref).part for ref, _, _ in drivers})]
    warnings: list[str] = []
    r_typ, notes = 0.0, []
    for part in parts:
        typ, top, note = driver_resistance(part, spec.supply)
        value = typ if typ is not None else top
        if value is None:
            warnings.append(f"{note}: the ladder is computed with ideal drivers (0 Ω)")
        else:
            r_typ = max(r_typ, value)
        notes.append(note)
    n, supply = len(nets), spec.supply
    if level.kind == "binary":
        base, legs = _binary_values(bin.resistors, n, bin.path)
        ladder = binary_weighted_ladder(n, base, supply, r_out_driver=r_typ, r_load=level.load_ohms)
        ideal = binary_weighted_ladder(n, base, supply)
        r, r2, construction = base, None, "binary-weighted (R, 2R, 4R ... on hand)"
        why = "kind: binary asks for binary-weighted resistors"
        refs = _wire_binary(plan, level.name, nets, legs)
    else:
        try:
            choice = choose_ladder_resistors(bin.resistors, n, r_out_driver=r_typ, supply=supply)
        except ShortError as exc:
            raise ShortError(f"{level.section}.{level.name}: {exc.message}", file=bin.path, hint=exc.hint) from exc
        r, r2 = choice.r, choice.r2
        ladder = r2r_ladder(n, r, r2, supply, r_out_driver=r_typ, r_load=level.load_ohms)
        ideal = r2r_ladder(n, r, r2, supply)
        construction, why = choice.description, choice.why
        refs = _wire_r2r(plan, level.name, nets, r, r2, choice.construction)
        if choice.construction in ("series", "parallel"):
            made = "2R is two R in series" if choice.construction == "series" else "R is two 2R in parallel"
            warnings.append(f"staircase {level.name}: each {made}; the tolerance analysis treats "
                            "each such pair as one resistor of the marked tolerance (the worst case "
                            "is the same, the Monte Carlo a little pessimistic)")
    _refuse_driver_dominated(level, ladder, r, r_typ, n, supply, bin.path,
                             ", ".join(part.type for part in parts))
    worst = worst_case_linearity(ladder, level.tolerance)
    monte = monte_carlo(ladder, level.tolerance, MONTE_CARLO_TRIALS, MONTE_CARLO_SEED)
    if not routed:
        plan.external[level.name] = (f"staircase {level.name} output (source resistance "
                                     f"{format_si(ladder.output_resistance, 'Ω')}: buffer it before a load)")
    elif plan.external.get(level.name, "").endswith("(your circuit)"):
        plan.external.pop(level.name)
    where = f"through switch {', '.join(routed)} " if routed else ""
    warnings.append(f"staircase {level.name}: the ladder's source resistance is "
                    f"{format_si(ladder.output_resistance, 'Ω')} {where}(plus any switch on-resistance): "
                    "buffer it (an op-amp follower) before a load or a sampling ADC input "
                    "(common practice)")
    if not level.tolerance_given:
        warnings.append(f"staircase {level.name}: no tolerance given, 5 % resistors assumed")
    if not worst.monotonic:
        warnings.append(f"staircase {level.name}: with {level.tolerance:.0%} resistors the staircase "
                        "may step backwards at a code change (worst-case DNL below -1 LSB); "
                        + _tolerance_remedy(level, ladder, r, r_typ, n, supply))
    return LadderPlan(
        name=level.name, kind=ladder.kind, bits=tuple(level.bits), drivers=drivers, r=r, r2=r2,
        construction=construction, why=why, tolerance=level.tolerance,
        tolerance_given=level.tolerance_given, load_ohms=level.load_ohms, r_out_driver=r_typ,
        r_out_note="; ".join(notes), ideal_levels=tuple(ideal.ideal_levels),
        levels=tuple(ladder.levels), ideal_output_resistance=ideal.ideal_output_resistance,
        output_resistance=ladder.output_resistance, worst=worst, monte=monte,
        nominal=ladder.nominal, passives=refs, routed_by=routed, warnings=warnings)


DRIVER_ERROR_LIMIT_LSB = 0.5
"""The most the drivers' own resistance may move a level (in LSB) before larger values are asked for."""

_DECADE = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)   # E12 (IEC 60063)


def _ladder_with(level, r: float, r_typ: float, bits: int, supply: float):
    if level.kind == "binary":
        return binary_weighted_ladder(bits, r, supply, r_out_driver=r_typ, r_load=level.load_ohms)
    return r2r_ladder(bits, r, 2 * r, supply, r_out_driver=r_typ, r_load=level.load_ohms)


def _driver_error_lsb(ladder) -> float:
    lsb = ladder.ideal_levels[1] - ladder.ideal_levels[0]
    return max(abs(a - b) for a, b in zip(ladder.levels, ladder.ideal_levels)) / lsb


def smallest_r_for_drivers(level, r_typ: float, bits: int, supply: float) -> float | None:
    """The smallest E12 value of R (1 kΩ .. 1 MΩ) whose ladder the drivers move by at most
    ``DRIVER_ERROR_LIMIT_LSB`` and which stays monotonic with exact resistors; None if none."""
    for decade in (1e3, 1e4, 1e5):
        for step in _DECADE:
            r = decade * step
            ladder = _ladder_with(level, r, r_typ, bits, supply)
            if ladder.nominal.monotonic and _driver_error_lsb(ladder) <= DRIVER_ERROR_LIMIT_LSB:
                return r
    return None


def _larger_values_text(level, r_typ: float, bits: int, supply: float) -> str:
    least = smallest_r_for_drivers(level, r_typ, bits, supply)
    if least is None:
        return "buffer each bit (a 4050 or 74HC244 between the counter and the ladder)"
    pair = f"R of {format_si(least, 'Ω')} or more" + ("" if level.kind == "binary" else
                                                    " with 2R twice that")
    return f"use larger resistors, {pair}, or buffer each bit"


def _refuse_driver_dominated(level, ladder, r: float, r_typ: float, bits: int, supply: float,
                             bin_path: str, driver_parts: str) -> None:
    """Exit 3 when the counter outputs' resistance, not the resistors, breaks the staircase.

    With exact resistor values the ladder must still step up at every code;
    if it does not, better tolerances cannot help: the remedy is larger values
    (or a buffer per bit), and the bin is short of them.
    """
    if ladder.nominal.monotonic:
        return
    raise ShortError(
        f"{level.section}.{level.name}: the counter outputs' own resistance "
        f"({driver_parts}, {format_si(r_typ, 'Ω')} each) is too large against R = {format_si(r, 'Ω')}: "
        f"even with exact resistors the staircase steps backwards (DNL {ladder.nominal.worst_dnl:+.2f} "
        f"LSB, the drivers move a level by {_driver_error_lsb(ladder):.2f} LSB)",
        file=bin_path, hint=_larger_values_text(level, r_typ, bits, supply))


def _tolerance_remedy(level, ladder, r: float, r_typ: float, bits: int, supply: float) -> str:
    """What helps a ladder that may step backwards with the resistors' tolerance."""
    if _driver_error_lsb(ladder) > DRIVER_ERROR_LIMIT_LSB:
        return ("the drivers' own resistance takes most of the margin: "
                + _larger_values_text(level, r_typ, bits, supply))
    return "use 1 % resistors or fewer bits"


def add_ladders(plan, spec, bin, catalog) -> dict[str, LadderPlan]:
    """Every ``levels`` entry as a ladder on the plan's counter outputs."""
    return {name: _plan_one(plan, spec, bin, catalog, level) for name, level in spec.levels.items()}
