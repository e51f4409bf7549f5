"""RC delays, Schmitt-trigger oscillators, the 4060 oscillator, resistor ladders.

Interface:

- ``rc_time(r, c, v_start, v_final, v_threshold) -> float`` and
  ``rc_formula(...) -> str`` (the same with the numbers written out)
- ``thresholds_at(part_thresholds, supply) -> dict`` (catalog table -> one supply)
- ``plain_input_thresholds(supply) -> dict`` (a non-Schmitt CMOS input)
- ``choose_receiver(bin_, catalog, wanted, supply) -> Receiver`` (the input an RC
  delay drives: a Schmitt part from the bin, the one asked for, or a plain input)
- ``rc_delay_design(wanted_s, *, supply, thresholds, resistors, capacitors,
  fixed_r=None, fixed_c=None, edge="rising") -> DelayDesign``
- ``schmitt_period(r, c, supply, vt_plus, vt_minus) -> float``
- ``schmitt_oscillator_design(freq_hz, *, supply, thresholds, resistors,
  capacitors, tolerance=None) -> OscillatorDesign``
- ``counter_oscillator_design(freq_hz, *, resistors, capacitors, k=2.3)
  -> CounterOscillatorDesign`` (the 4060's three-pin RC oscillator)
- ``r2r_ladder(bits, r, r2, supply, *, r_out_driver=0.0, r_load=None) -> Ladder``
- ``binary_weighted_ladder(bits, r, supply, *, r_out_driver=0.0, r_load=None) -> Ladder``
- ``ladder_levels(ladder, values=None) -> list[float]`` (nodal analysis)
- ``linearity(levels) -> Linearity`` (endpoint DNL / INL in LSB)
- ``worst_case_linearity(ladder, tolerance) -> WorstCase`` (corner search)
- ``monte_carlo(ladder, tolerance, trials, seed) -> LadderStats``
- ``choose_ladder_resistors(resistors, bits, *, r_out_driver=0.0) -> LadderChoice``
- ``solve_linear(matrix, rhs) -> list[float]`` (Gaussian elimination)
- ``with_tolerance(spread) -> Spread`` (an RC time's spread widened by
  ``R_TOLERANCE`` and ``C_TOLERANCE``, the parts' own tolerances)
- records: ``Spread``, ``RcOption``, ``DelayDesign``, ``OscillatorCorner``,
  ``OscillatorDesign``, ``CounterOscillatorDesign``, ``LadderElement``,
  ``Ladder``, ``Linearity``, ``WorstCase``, ``LadderStats``, ``LadderChoice``

Everything here is pure computation on numbers handed in: the thresholds come
from the catalog (``Part.thresholds``) through ``thresholds_at``, the passives
from the bin.  Nothing prints; impossible requests raise ``ShortError`` (the
bin lacks a value) or ``InputError`` (the request makes no sense).
"""

from __future__ import annotations

import itertools
import math
import random
from dataclasses import dataclass, field
from typing import NamedTuple

from .errors import CatalogError, InputError, ShortError, UsageError
from .inventory import Bin, Catalog
from .limits import shown
from .units import format_si

__all__ = [
    "Spread", "RcOption", "DelayDesign", "OscillatorCorner", "OscillatorDesign",
    "CounterOscillatorDesign", "LadderElement", "Ladder", "Linearity", "WorstCase",
    "LadderStats", "LadderChoice",
    "rc_time", "rc_formula", "thresholds_at", "plain_input_thresholds", "rc_delay_design",
    "schmitt_period", "schmitt_oscillator_design", "counter_oscillator_design",
    "r2r_ladder", "binary_weighted_ladder", "ladder_levels", "linearity",
    "worst_case_linearity", "monte_carlo", "choose_ladder_resistors", "solve_linear",
    "with_tolerance", "R_TOLERANCE", "C_TOLERANCE",
]

# Timing resistors between 10 kOhm and 1 MOhm suit CMOS (common practice): below
# about 10k the driving output's own resistance (hundreds of ohms for 4000B at
# 5 V, from memory) adds noticeably to R and loads the output; above about 1M
# the input leakage (up to 1 uA guaranteed for 74HC, 0.1-0.3 uA for 4000B,
# from memory) times R shifts the trip point and the node picks up hum.  The
# Philips 74HC/HCT4060 datasheet (Dec 1990, p. 11) recommends the same window,
# 10 kOhm < Rt < 1 MOhm, for its RC oscillator.
MID_RANGE_R = (10e3, 1e6)
# Below about 100 pF the input (5 pF typ, 7.5 pF max for 4000B, from memory)
# and stray capacitance are several percent of C (common practice).
MIN_TIMING_C = 100e-12
# A pair this close to the wanted value is "good enough" for the mid-range
# preference to decide (5 %: the tolerance of ordinary capacitors, common practice).
GOOD_ENOUGH = 0.05
# Plain CMOS inputs: VIL = 30 %, VIH = 70 % of VDD for 4000B (1.5 / 3.5 V at
# 5 V, Fairchild CD4050BC via cmos-4000b.md) and 74HC (1.35 / 3.15 V at 4.5 V,
# NXP 74HC02 via hc-74.md); the switching point is taken as VDD / 2 typical
# (common practice).
PLAIN_VIL_FRACTION = 0.3
PLAIN_VIH_FRACTION = 0.7
# Component tolerance for an RC time: carbon/metal film resistors +-5 %, small
# ceramic/film capacitors +-10 % (common practice; bins list values, not grades).
R_TOLERANCE = 0.05
C_TOLERANCE = 0.10


@dataclass(frozen=True)
class Spread:
    """A value at the minimum, typical and maximum of its datasheet spread."""

    min: float
    typ: float
    max: float


def with_tolerance(spread: Spread) -> Spread:
    """A threshold spread of an RC time widened by the R and C tolerances
    (``R_TOLERANCE``, ``C_TOLERANCE``): min at R and C low, max at both high.

    >>> s = with_tolerance(Spread(1.0, 2.0, 3.0))
    >>> round(s.min, 4), s.typ, round(s.max, 4)
    (0.855, 2.0, 3.465)
    """
    low, high = (1 - R_TOLERANCE) * (1 - C_TOLERANCE), (1 + R_TOLERANCE) * (1 + C_TOLERANCE)
    return Spread(spread.min * low, spread.typ, spread.max * high)


# ====================================================================== RC delay

def rc_time(r: float, c: float, v_start: float, v_final: float, v_threshold: float) -> float:
    """Time for an RC node heading from ``v_start`` to ``v_final`` to reach the threshold.

    t = R C ln((V_final - V_start) / (V_final - V_threshold)); works for rising
    and falling edges alike.

    >>> round(rc_time(10e3, 6.8e-9, 0.0, 5.0, 3.5) * 1e6, 2)
    81.87
    >>> round(rc_time(10e3, 1e-9, 5.0, 0.0, 2.5) * 1e6, 3)
    6.931
    >>> rc_time(10e3, 1e-9, 0.0, 5.0, 6.0)
    Traceback (most recent call last):
    ValueError: expected a threshold between 0 V and 5 V, got 6 V
    """
    if r <= 0 or c <= 0:
        raise ValueError(f"expected positive R and C, got R = {r!r}, C = {c!r}")
    low, high = sorted((v_start, v_final))
    if not low < v_threshold < high:
        raise ValueError(f"expected a threshold between {v_start:g} V and {v_final:g} V, "
                         f"got {v_threshold:g} V")
    return r * c * math.log((v_final - v_start) / (v_final - v_threshold))


def rc_formula(r: float, c: float, v_start: float, v_final: float, v_threshold: float) -> str:
    """``rc_time`` written out with its numbers, as a person checks it by hand.

    >>> rc_formula(10e3, 6.8e-9, 0, 5, 3.5)
    't = 10 kΩ × 6.8 nF × ln((5 − 0) / (5 − 3.5)) = 81.9 µs'
    """
    t = rc_time(r, c, v_start, v_final, v_threshold)
    return (f"t = {format_si(r, 'Ω')} × {format_si(c, 'F')} × "
            f"ln(({_v(v_final)} − {_v(v_start)}) / ({_v(v_final)} − {_v(v_threshold)}))"
            f" = {format_si(t, 's')}")


def _v(volts: float) -> str:
    return f"{volts:.3g}"


# ---------------------------------------------------------------- thresholds

def _spread_row(row: object, where: str) -> dict:
    """``{min, typ, max}`` with floats; a missing typ becomes the midpoint."""
    if not isinstance(row, dict) or "min" not in row or "max" not in row:
        raise CatalogError(f"expected {where} as {{min, typ, max}} volts, got {row!r}")
    lo, hi = float(row["min"]), float(row["max"])
    typ = float(row["typ"]) if row.get("typ") is not None else (lo + hi) / 2
    return {"min": lo, "typ": typ, "max": hi}


def _rows(part_thresholds: dict) -> list[tuple[float, dict]]:
    rows = []
    for volts, row in part_thresholds.items():
        if not isinstance(row, dict) or "vt_plus" not in row or "vt_minus" not in row:
            raise CatalogError(f"expected thresholds at {volts} V with vt_plus and vt_minus, got {row!r}")
        rows.append((float(volts), {key: _spread_row(row[key], f"{key} at {volts} V")
                                    for key in ("vt_plus", "vt_minus")}))
    return sorted(rows, key=lambda item: item[0])


def _blend(row0: dict, row1: dict, weight: float) -> dict:
    """row0 + weight * (row1 - row0), field by field."""
    return {key: {name: row0[key][name] + weight * (row1[key][name] - row0[key][name])
                  for name in ("min", "typ", "max")} for key in ("vt_plus", "vt_minus")}


def thresholds_at(part_thresholds: dict, supply: float) -> dict:
    """The Schmitt thresholds at ``supply`` from a catalog table keyed by supply volts.

    An exact row is used as printed; between rows each figure is interpolated
    linearly in the supply; outside the table the two nearest rows are
    extended (one row alone is scaled in proportion to the supply, since CMOS
    thresholds track VDD roughly ratiometrically, common practice).  The
    result carries ``method`` (``table``, ``interpolated``, ``extrapolated``)
    and a ``note`` for the user.

    >>> table = {5.0: {"vt_plus": {"min": 2.2, "typ": 2.9, "max": 3.6},
    ...                "vt_minus": {"min": 0.9, "typ": 1.9, "max": 2.8}},
    ...          10.0: {"vt_plus": {"min": 4.6, "typ": 5.9, "max": 7.1},
    ...                 "vt_minus": {"min": 2.5, "typ": 3.9, "max": 5.2}}}
    >>> t = thresholds_at(table, 7.5)
    >>> round(t["vt_plus"]["typ"], 3), t["method"]
    (4.4, 'interpolated')
    >>> thresholds_at(table, 3.0)["extrapolated"]
    True
    """
    rows = _rows(part_thresholds)
    if not rows:
        raise CatalogError("expected a thresholds table with at least one supply row, got none")
    for volts, row in rows:
        if abs(volts - supply) < 1e-9:
            return {**row, "supply": supply, "method": "table", "extrapolated": False,
                    "note": f"thresholds as printed for {volts:g} V"}
    if len(rows) == 1:
        volts, row = rows[0]
        scaled = {key: {name: value * supply / volts for name, value in row[key].items()}
                  for key in ("vt_plus", "vt_minus")}
        return {**scaled, "supply": supply, "method": "extrapolated", "extrapolated": True,
                "note": f"thresholds scaled from the only datasheet row ({volts:g} V) to "
                        f"{supply:g} V: outside the datasheet, check on the bench"}
    inside = rows[0][0] < supply < rows[-1][0]
    if inside:
        pair = next((a, b) for a, b in zip(rows, rows[1:]) if a[0] < supply < b[0])
    else:
        pair = (rows[0], rows[1]) if supply < rows[0][0] else (rows[-2], rows[-1])
    (v0, row0), (v1, row1) = pair
    blended = _blend(row0, row1, (supply - v0) / (v1 - v0))
    if inside:
        note = f"thresholds interpolated between the {v0:g} V and {v1:g} V rows"
    else:
        note = (f"thresholds extrapolated to {supply:g} V from the {v0:g} V and {v1:g} V rows: "
                "outside the datasheet, check on the bench")
    return {**blended, "supply": supply, "method": "interpolated" if inside else "extrapolated",
            "extrapolated": not inside, "note": note}


def plain_input_thresholds(supply: float, band: tuple[float, float, str] | None = None) -> dict:
    """A plain (non-Schmitt) CMOS input: trips at VDD/2 typ, anywhere in VIL..VIH.

    ``band`` is the catalog's guaranteed (VIL max, VIH min, source) at this
    supply (``Catalog.plain_input_levels``); without it the 30 % / 70 % of VDD
    rule is used, which the 4000B sheets keep at 5 and 10 V but not at 15 V
    (4.0 / 11.0 V there), so callers with a catalog pass the band.

    >>> plain_input_thresholds(5.0)["vt_plus"]
    {'min': 1.5, 'typ': 2.5, 'max': 3.5}
    >>> plain_input_thresholds(15.0, (4.0, 11.0, "4000B"))["vt_plus"]
    {'min': 4.0, 'typ': 7.5, 'max': 11.0}
    """
    if band is None:
        vil, vih = PLAIN_VIL_FRACTION * supply, PLAIN_VIH_FRACTION * supply
        where = "VIL = 30 % to VIH = 70 % of VDD (4000B / 74HC input spec, common practice)"
    else:
        vil, vih, source = band
        where = f"VIL = {vil:g} V to VIH = {vih:g} V at {supply:g} V ({source})"
    row = {"min": round(vil, 12), "typ": supply / 2, "max": round(vih, 12)}
    return {"vt_plus": dict(row), "vt_minus": dict(row), "supply": supply,
            "method": "plain-input", "extrapolated": False,
            "note": f"plain CMOS input: switching point taken as VDD/2, anywhere from {where}"}


def _check_thresholds(supply: float, thresholds: dict) -> None:
    for key in ("vt_plus", "vt_minus"):
        row = thresholds.get(key)
        if not isinstance(row, dict) or not all(k in row for k in ("min", "typ", "max")):
            raise InputError(f"expected thresholds['{key}'] with min, typ and max, got {row!r}")
        for name in ("min", "typ", "max"):
            if not 0 < row[name] < supply:
                raise InputError(f"expected {key} {name} between 0 V and the {supply:g} V supply, "
                                 f"got {row[name]:g} V", hint="check the supply or the catalog thresholds")


# ---------------------------------------------------------------- the receiving input

class Receiver(NamedTuple):
    """The input an RC delay drives: a part type (None: a plain CMOS input),
    its thresholds at the supply (``thresholds_at`` / ``plain_input_thresholds``)
    and notes for the user."""

    part: str | None
    thresholds: dict
    notes: list[str]


def choose_receiver(bin_: Bin, catalog: Catalog, wanted: str | None, supply: float) -> Receiver:
    """The input an RC delay should drive, from the bin.

    ``wanted`` is the user's choice (a marking or type, or ``plain``); without
    one a Schmitt part on hand is taken, inverters first, because a slow RC
    edge into a plain input makes it draw current and may oscillate (common
    practice).  Raises ``ShortError`` when nothing in the bin runs at the
    supply or the wanted part is missing, ``UsageError`` for an unknown part.
    """
    families = {catalog.parts[t].family for t in bin_.parts}
    band = catalog.plain_input_levels(families, supply)
    if not bin_.parts:
        raise ShortError(f"no part in the bin {bin_.path} runs at {supply:g} V to drive or "
                         "receive the delay", hint="check --supply, or add a part rated for it")
    if wanted and wanted.lower() == "plain":
        return Receiver(None, plain_input_thresholds(supply, band), [])
    if wanted:
        part_type = catalog.normalise(wanted)
        if part_type is None:
            close = catalog.closest(wanted)
            raise UsageError(f"--part: unknown part {shown(wanted)}",
                             hint=f"closest known types: {', '.join(close)}" if close else None)
        if bin_.count(part_type) == 0:
            raise ShortError(f"the bin {bin_.path} has no usable {part_type} at {supply:g} V",
                             hint="add it to the bin, or leave out --part to use what is there")
        part = catalog.parts[part_type]
        if part.thresholds:
            return Receiver(part_type, thresholds_at(part.thresholds, supply), [])
        return Receiver(part_type, plain_input_thresholds(supply, band), [
            f"{part_type} has no Schmitt thresholds in the catalog: treated as a plain CMOS input"])
    schmitt = [t for t in bin_.parts if catalog.parts[t].thresholds]
    if schmitt:
        part_type = min(schmitt, key=lambda t: (catalog.parts[t].category != "inverter", t))
        return Receiver(part_type, thresholds_at(catalog.parts[part_type].thresholds, supply), [])
    return Receiver(None, plain_input_thresholds(supply, band), [
        "no Schmitt-input part (40106, 74HC14, 4093, 74HC132) in the bin: the delay drives a "
        "plain CMOS input"])


# ---------------------------------------------------------------- choosing R and C

@dataclass(frozen=True)
class RcOption:
    """One resistor/capacitor pair tried for a wanted RC product."""

    r: float
    c: float
    needed_c: float      # the C that would hit the target exactly with this R
    needed_r: float      # the R that would hit it with this C
    error: float         # achieved / wanted - 1
    mid_range: bool      # R inside 10k..1M (see MID_RANGE_R) and C >= 100 pF


def _rc_options(rc_wanted: float, resistors, capacitors, *, fixed_r=None, fixed_c=None,
                r_range=MID_RANGE_R, c_min=MIN_TIMING_C) -> list[RcOption]:
    """Every candidate pair: for each R the nearest C (or, for a fixed C, each R)."""
    rs = [fixed_r] if fixed_r is not None else sorted(set(resistors))
    cs = [fixed_c] if fixed_c is not None else sorted(set(capacitors))
    if not rs:
        raise ShortError("the bin lists no resistors", hint="add e.g. 'resistors: [10k, 22k, 100k]'")
    if not cs:
        raise ShortError("the bin lists no capacitors", hint="add e.g. 'capacitors: [1n, 6n8, 10n]'")
    options = []
    for r in rs:
        needed_c = rc_wanted / r
        c = min(cs, key=lambda value: abs(math.log(value / needed_c)))
        options.append(RcOption(r, c, needed_c, rc_wanted / c, r * c / rc_wanted - 1,
                                r_range[0] <= r <= r_range[1] and c >= c_min))
    return options


def _pick(options: list[RcOption]) -> RcOption:
    """The closest pair, preferring mid-range R (and C >= 100 pF) when that costs little.

    Pairs within max(best error, 5 %) of the wanted value count as equally
    good; among those a mid-range pair wins, then the smaller error.  So a
    4k7 pair that is 1 % off loses to a 47k pair that is 3 % off, but not to
    one that is 20 % off.
    """
    best = min(abs(o.error) for o in options)
    good = [o for o in options if abs(o.error) <= max(best, GOOD_ENOUGH) + 1e-12]
    return min(good, key=lambda o: (not o.mid_range, abs(o.error)))


def _range_warnings(r: float, c: float) -> list[str]:
    warnings = []
    if r < MID_RANGE_R[0]:
        warnings.append(f"R = {format_si(r, 'Ω')} is below 10 kΩ: the driving output's own "
                        "resistance adds to it and the delay comes out longer")
    if r > MID_RANGE_R[1]:
        warnings.append(f"R = {format_si(r, 'Ω')} is above 1 MΩ: input leakage and hum pickup "
                        "shift the trip time; keep the node short")
    if c < MIN_TIMING_C:
        warnings.append(f"C = {format_si(c, 'F')} is below 100 pF: input and stray capacitance "
                        "(several pF) add to it")
    return warnings


# ---------------------------------------------------------------- the delay design

@dataclass
class DelayDesign:
    """An RC delay between two logic stages, with its spread over the thresholds."""

    wanted_s: float
    supply: float
    edge: str                     # the edge the values were chosen for
    r: float
    c: float
    needed_c: float               # C that gives the wanted delay with the chosen R
    needed_r: float               # R that gives it with the chosen C
    delay_typ: float              # the design edge at the typical threshold
    error: float                  # delay_typ / wanted - 1
    rising: Spread                # charging 0 -> VT+, at VT+ min / typ / max
    falling: Spread               # discharging VDD -> VT-, shortest .. longest
    thresholds: dict              # the thresholds used (vt_plus / vt_minus rows)
    formula: str                  # the design edge, typ threshold, numbers written out
    formulas: dict                # 'rising' and 'falling' at typ
    options: list[RcOption]       # one per resistor tried
    plain_input: bool
    warnings: list[str] = field(default_factory=list)


def _edge_log(supply: float, vt: float, edge: str) -> float:
    """ln factor of rc_time for a full-swing edge from the rail."""
    return math.log(supply / (supply - vt)) if edge == "rising" else math.log(supply / vt)


def _delay_spread(r: float, c: float, supply: float, row: dict, edge: str) -> Spread:
    times = sorted(r * c * _edge_log(supply, row[name], edge) for name in ("min", "typ", "max"))
    return Spread(*times)


def rc_delay_design(wanted_s: float, *, supply: float, thresholds: dict, resistors, capacitors,
                    fixed_r: float | None = None, fixed_c: float | None = None,
                    edge: str = "rising") -> DelayDesign:
    """Pick R and C from the bin for a delay between a driving stage and a Schmitt input.

    The driving output swings rail to rail; the node charges from 0 V towards
    VDD until VT+ (``rising``) or discharges from VDD towards 0 V until VT-
    (``falling``).  The values are chosen for ``edge`` at the typical
    threshold; both edges are reported at the threshold's min, typ and max.
    With ``fixed_r`` (or ``fixed_c``) only the other value is chosen.  The
    delay excludes the stages' own propagation delays.
    """
    if wanted_s <= 0:
        raise InputError(f"expected a positive delay, got {wanted_s!r} s")
    if edge not in ("rising", "falling"):
        raise InputError(f"expected edge 'rising' or 'falling', got {edge!r}")
    if fixed_r is not None and fixed_c is not None:
        raise InputError("expected at most one of a fixed R and a fixed C, got both",
                         hint="fix one value and let binsynth pick the other")
    _check_thresholds(supply, thresholds)
    row = thresholds["vt_plus"] if edge == "rising" else thresholds["vt_minus"]
    rc_wanted = wanted_s / _edge_log(supply, row["typ"], edge)
    options = _rc_options(rc_wanted, resistors, capacitors, fixed_r=fixed_r, fixed_c=fixed_c)
    chosen = _pick(options)
    r, c = chosen.r, chosen.c
    vt_plus, vt_minus = thresholds["vt_plus"]["typ"], thresholds["vt_minus"]["typ"]
    formulas = {"rising": rc_formula(r, c, 0.0, supply, vt_plus),
                "falling": rc_formula(r, c, supply, 0.0, vt_minus)}
    plain = thresholds.get("method") == "plain-input"
    warnings = _range_warnings(r, c)
    if abs(chosen.error) > GOOD_ENOUGH and fixed_c is not None:
        warnings.append(f"the closest pair is {chosen.error:+.0%} off the wanted delay: "
                        f"{format_si(chosen.needed_r, 'Ω')} would be exact with "
                        f"{format_si(c, 'F')} (series resistors can make it)")
    elif abs(chosen.error) > GOOD_ENOUGH:
        warnings.append(f"the closest pair is {chosen.error:+.0%} off the wanted delay: "
                        f"{format_si(chosen.needed_c, 'F')} would be exact with "
                        f"{format_si(r, 'Ω')} (parallel capacitors can make it)")
    if fixed_r is not None and fixed_r not in resistors:
        warnings.append(f"R = {format_si(fixed_r, 'Ω')} is not in the bin's resistor list")
    if fixed_c is not None and fixed_c not in capacitors:
        warnings.append(f"C = {format_si(fixed_c, 'F')} is not in the bin's capacitor list")
    if plain:
        band = thresholds["vt_plus"]
        warnings.append(f"a plain CMOS input switches anywhere between {_v(band['min'])} V and "
                        f"{_v(band['max'])} V at {supply:g} V and a slow edge can make it chatter and "
                        "draw current; a Schmitt input (40106, 74HC14, 4093, 74HC132) is the safer receiver")
    if thresholds.get("extrapolated"):
        warnings.append(str(thresholds.get("note")))
    if wanted_s < 10e-6:
        warnings.append("short delay: the two stages' own propagation delays (tens to hundreds "
                        "of ns) add to it")
    return DelayDesign(
        wanted_s=wanted_s, supply=supply, edge=edge, r=r, c=c,
        needed_c=rc_wanted / r, needed_r=rc_wanted / c,
        delay_typ=r * c * _edge_log(supply, row["typ"], edge), error=chosen.error,
        rising=_delay_spread(r, c, supply, thresholds["vt_plus"], "rising"),
        falling=_delay_spread(r, c, supply, thresholds["vt_minus"], "falling"),
        thresholds={key: dict(thresholds[key]) for key in ("vt_plus", "vt_minus")},
        formula=formulas[edge], formulas=formulas, options=options, plain_input=plain,
        warnings=warnings)


# ====================================================================== oscillators

def schmitt_period(r: float, c: float, supply: float, vt_plus: float, vt_minus: float) -> float:
    """Period of the one-inverter Schmitt relaxation oscillator (R from output to input, C to VSS).

    T = R C [ln((VDD - VT-) / (VDD - VT+)) + ln(VT+ / VT-)]: the first term is
    the charge from VT- up to VT+ (output high), the second the discharge.

    >>> round(schmitt_period(10e3, 1e-9, 3.0, 2.0, 1.0) / (2 * math.log(2) * 1e-5), 12)
    1.0
    >>> schmitt_period(10e3, 1e-9, 5.0, 2.0, 2.5)
    Traceback (most recent call last):
    ValueError: expected 0 < VT- < VT+ < VDD, got VT- = 2.5 V, VT+ = 2 V, VDD = 5 V
    """
    if not 0 < vt_minus < vt_plus < supply:
        raise ValueError(f"expected 0 < VT- < VT+ < VDD, got VT- = {vt_minus:g} V, "
                         f"VT+ = {vt_plus:g} V, VDD = {supply:g} V")
    return r * c * (math.log((supply - vt_minus) / (supply - vt_plus)) + math.log(vt_plus / vt_minus))


def _period_factor(supply: float, vt_plus: float, vt_minus: float) -> float:
    return schmitt_period(1.0, 1.0, supply, vt_plus, vt_minus)


@dataclass(frozen=True)
class OscillatorCorner:
    """The frequency with VT+ and VT- each at one end of their datasheet range."""

    vt_plus: float
    vt_minus: float
    freq_hz: float
    label: str          # e.g. "VT+ max, VT- min"


@dataclass
class OscillatorDesign:
    """A Schmitt relaxation oscillator from the bin's passives."""

    wanted_hz: float
    supply: float
    r: float
    c: float
    needed_c: float
    freq_typ: float
    freq_min: float
    freq_max: float
    error: float                  # freq_typ / wanted - 1
    duty_typ: float               # output-high fraction of the period
    spread: float                 # largest relative departure of a corner from typ
    formula: str
    corners: list[OscillatorCorner]
    options: list[RcOption]
    tolerance: float | None = None
    warnings: list[str] = field(default_factory=list)


def schmitt_oscillator_design(freq_hz: float, *, supply: float, thresholds: dict, resistors,
                              capacitors, tolerance: float | None = None) -> OscillatorDesign:
    """Pick R and C for a Schmitt-inverter oscillator and bound its frequency.

    The corners set VT+ and VT- each to its min and max; combinations with
    VT+ <= VT- cannot occur on a real part and are skipped.  The period rises
    with VT+ and falls with VT-, so (VT+ max, VT- min) is always the slowest
    corner; when (VT+ min, VT- max) is impossible the fast side is bounded only
    by the part's minimum hysteresis, and a warning says so.  ``tolerance``
    (a fraction, 0.1 = 10 %) warns when the spread exceeds it.  The output is
    taken as rail to rail and the gate delay as negligible against the period.
    """
    if freq_hz <= 0:
        raise InputError(f"expected a positive frequency, got {freq_hz!r} Hz")
    _check_thresholds(supply, thresholds)
    vtp, vtm = thresholds["vt_plus"], thresholds["vt_minus"]
    if not vtm["typ"] < vtp["typ"]:
        raise InputError(f"expected VT+ above VT- for an oscillator, got VT+ {vtp['typ']:g} V, "
                         f"VT- {vtm['typ']:g} V", hint="a plain input has no hysteresis")
    k_typ = _period_factor(supply, vtp["typ"], vtm["typ"])
    rc_wanted = 1.0 / (freq_hz * k_typ)
    options = _rc_options(rc_wanted, resistors, capacitors)
    chosen = _pick(options)
    r, c = chosen.r, chosen.c
    freq_typ = 1.0 / (r * c * k_typ)
    corners, warnings = [], []
    for (p_name, p), (m_name, m) in itertools.product(
            (("min", vtp["min"]), ("max", vtp["max"])), (("min", vtm["min"]), ("max", vtm["max"]))):
        if p > m:
            corners.append(OscillatorCorner(p, m, 1.0 / (r * c * _period_factor(supply, p, m)),
                                            f"VT+ {p_name}, VT- {m_name}"))
    if not vtp["min"] > vtm["max"]:
        warnings.append(f"VT+ min ({vtp['min']:g} V) is not above VT- max ({vtm['max']:g} V): a part "
                        "with little hysteresis can run faster than every corner shown; only the "
                        "datasheet's minimum hysteresis bounds it")
    freqs = [corner.freq_hz for corner in corners] + [freq_typ]
    freq_min, freq_max = min(freqs), max(freqs)
    spread = max(freq_max / freq_typ - 1, 1 - freq_min / freq_typ)
    if tolerance is not None and spread > tolerance:
        warnings.append(f"threshold spread moves the frequency from {format_si(freq_min, 'Hz')} to "
                        f"{format_si(freq_max, 'Hz')} ({spread:.0%} from typical), more than the "
                        f"{tolerance:.0%} allowed: trim R on the bench, or use a crystal or the "
                        "counter's own oscillator and divide down")
    warnings.extend(_range_warnings(r, c))
    if thresholds.get("extrapolated"):
        warnings.append(str(thresholds.get("note")))
    t_high = r * c * math.log((supply - vtm["typ"]) / (supply - vtp["typ"]))
    formula = (f"T = {format_si(r, 'Ω')} × {format_si(c, 'F')} × [ln(({_v(supply)} − {_v(vtm['typ'])})"
               f" / ({_v(supply)} − {_v(vtp['typ'])})) + ln({_v(vtp['typ'])} / {_v(vtm['typ'])})]"
               f" = {format_si(1 / freq_typ, 's')}, f = {format_si(freq_typ, 'Hz')}")
    return OscillatorDesign(
        wanted_hz=freq_hz, supply=supply, r=r, c=c, needed_c=rc_wanted / r, freq_typ=freq_typ,
        freq_min=freq_min, freq_max=freq_max, error=freq_typ / freq_hz - 1,
        duty_typ=t_high * freq_typ, spread=spread, formula=formula, corners=corners,
        options=options, tolerance=tolerance, warnings=warnings)


# ---------------------------------------------------------------- the 4060's oscillator

@dataclass
class CounterOscillatorDesign:
    """Rt, Ct and Rs for the three-pin RC oscillator of a 4060-type counter."""

    wanted_hz: float
    k: float
    rt: float
    ct: float
    rs: float
    needed_ct: float
    freq_hz: float
    error: float
    formula: str
    wiring: list[str]
    options: list[RcOption]
    warnings: list[str] = field(default_factory=list)


def counter_oscillator_design(freq_hz: float, *, resistors, capacitors, k: float = 2.3,
                              ) -> CounterOscillatorDesign:
    """f = 1 / (k Rt Ct) with Rs about 2 to 10 times Rt.

    Sources: k = 2.3 for the 4000B oscillator: Motorola MC14541B datasheet,
    "Operating characteristics" (f = 1/(2.3 Rtc Ctc), Rs ~ 2 Rtc, Rs >= 10 k,
    stated for 1 kHz <= f <= 100 kHz; the same three-pin RS/RTC/CTC cell as
    the 4060), and the NXP HEF4060B datasheet as quoted on electronics.
    stackexchange.com question 643227 (f = 1/(2.3 Rt Ct)).  TI's CD4060B
    datasheet prints 1/(2.2 Rt Ct) (TI E2E thread 969400).  For the 74HC4060
    the Philips 74HC/HCT4060 datasheet (Dec 1990, p. 11) gives
    f = 1/(2.5 Rt Ct), R2 ~ 2 Rt, Ct > 50 pF, 10 k < Rt < 1 M: pass ``k=2.5``.
    The caller passes the family's constant (it belongs with the part data).
    """
    if freq_hz <= 0:
        raise InputError(f"expected a positive frequency, got {freq_hz!r} Hz")
    rc_wanted = 1.0 / (k * freq_hz)
    options = _rc_options(rc_wanted, resistors, capacitors, c_min=50e-12)
    chosen = _pick(options)
    rt, ct = chosen.r, chosen.c
    in_ratio = [value for value in resistors if 2 * rt * (1 - 1e-9) <= value <= 10 * rt * (1 + 1e-9)]
    warnings = []
    if in_ratio:
        rs = min(in_ratio, key=lambda value: abs(math.log(value / (2 * rt))))
    else:
        rs = min(resistors, key=lambda value: abs(math.log(value / (2 * rt))))
        warnings.append(f"no resistor between 2 × Rt and 10 × Rt ({format_si(2 * rt, 'Ω')} .. "
                        f"{format_si(10 * rt, 'Ω')}) in the bin; Rs = {format_si(rs, 'Ω')} used, "
                        "the frequency will be further off the formula")
    freq = 1.0 / (k * rt * ct)
    if abs(chosen.error) > GOOD_ENOUGH:
        warnings.append(f"the closest pair is {freq / freq_hz - 1:+.0%} off the wanted frequency")
    if not 1e3 <= freq <= 100e3:
        warnings.append("the formula is stated for 1 kHz .. 100 kHz (Motorola MC14541B); outside "
                        "that range expect a larger error")
    if not MID_RANGE_R[0] <= rt <= MID_RANGE_R[1]:
        warnings.append(f"Rt = {format_si(rt, 'Ω')} is outside the 10 kΩ .. 1 MΩ the datasheets "
                        "recommend")
    if ct < 50e-12:
        warnings.append(f"Ct = {format_si(ct, 'F')} is below 50 pF: stray capacitance dominates")
    warnings.append("RC oscillators of this kind vary by about ±10 % unit to unit and with "
                    "supply and temperature; use a crystal where the rate matters")
    formula = (f"f = 1 / ({k:g} × {format_si(rt, 'Ω')} × {format_si(ct, 'F')}) = "
               f"{format_si(freq, 'Hz')}")
    wiring = [f"Rs ({format_si(rs, 'Ω')}) from φI (RS input) to the timing node",
              f"Rt ({format_si(rt, 'Ω')}) from φO‾ (RTC) to the timing node",
              f"Ct ({format_si(ct, 'F')}) from φO (CTC) to the timing node",
              "RESET to VSS for free running"]
    return CounterOscillatorDesign(
        wanted_hz=freq_hz, k=k, rt=rt, ct=ct, rs=rs, needed_ct=rc_wanted / rt, freq_hz=freq,
        error=freq / freq_hz - 1, formula=formula, wiring=wiring, options=options,
        warnings=warnings)


# ====================================================================== ladders

def solve_linear(matrix: list[list[float]], rhs: list[float]) -> list[float]:
    """Solve A x = b by Gaussian elimination with partial pivoting (small dense systems).

    >>> [round(v, 12) for v in solve_linear([[2.0, 1.0], [1.0, 3.0]], [3.0, 5.0])]
    [0.8, 1.4]
    >>> solve_linear([[1.0, 2.0], [2.0, 4.0]], [1.0, 2.0])
    Traceback (most recent call last):
    ValueError: expected a non-singular matrix, got a singular one (column 1)
    """
    n = len(matrix)
    a = [list(map(float, row)) + [float(b)] for row, b in zip(matrix, rhs)]
    scale = max((abs(v) for row in a for v in row[:n]), default=1.0) or 1.0
    for col in range(n):
        pivot = max(range(col, n), key=lambda i: abs(a[i][col]))
        if abs(a[pivot][col]) <= 1e-13 * scale:
            raise ValueError(f"expected a non-singular matrix, got a singular one (column {col})")
        a[col], a[pivot] = a[pivot], a[col]
        for i in range(col + 1, n):
            factor = a[i][col] / a[col][col]
            if factor:
                for j in range(col, n + 1):
                    a[i][j] -= factor * a[col][j]
    x = [0.0] * n
    for i in range(n - 1, -1, -1):
        x[i] = (a[i][n] - sum(a[i][j] * x[j] for j in range(i + 1, n))) / a[i][i]
    return x


@dataclass(frozen=True)
class LadderElement:
    """One resistor: between ``node`` and ``other`` (a node index) or, when
    ``other`` is None, to the far end that is a bit driver (``bit``) or VSS."""

    name: str
    ohms: float
    node: int
    other: int | None = None
    bit: int | None = None


@dataclass
class Ladder:
    """A resistor DAC driven by CMOS outputs: its network, ideal and solved levels."""

    kind: str                       # "r-2r" or "binary-weighted"
    bits: int
    supply: float
    r: float
    r2: float | None
    r_out_driver: float
    r_load: float | None
    elements: tuple[LadderElement, ...]
    nodes: int
    output_node: int
    ideal_levels: tuple[float, ...]
    ideal_output_resistance: float
    levels: tuple[float, ...] = ()   # nodal analysis with the nominal values
    output_resistance: float = 0.0   # nodal analysis, drivers at 0 V
    nominal: Linearity | None = None  # DNL / INL of ``levels``


def _network(ladder: Ladder, values: list[float] | None):
    """Bit weights (fractions of VDD) and output resistance by nodal analysis.

    One solve suffices: with x = G^-1 e_out (a 1 A test current into the
    output with every driver at 0 V), x_out is the output resistance and,
    because G is symmetric, bit k's weight is the sum of g_leg * x_node over
    its legs (reciprocity).
    """
    values = [e.ohms for e in ladder.elements] if values is None else values
    g = [[0.0] * ladder.nodes for _ in range(ladder.nodes)]
    legs = []
    for element, ohms in zip(ladder.elements, values):
        if ohms <= 0:
            raise ValueError(f"expected a positive resistance for {element.name}, got {ohms!r}")
        driven = element.bit is not None
        conductance = 1.0 / (ohms + (ladder.r_out_driver if driven else 0.0))
        a = element.node
        g[a][a] += conductance
        if element.other is not None:
            b = element.other
            g[b][b] += conductance
            g[a][b] -= conductance
            g[b][a] -= conductance
        if driven:
            legs.append((element.bit, conductance, a))
    if ladder.r_load is not None:
        g[ladder.output_node][ladder.output_node] += 1.0 / ladder.r_load
    unit = [0.0] * ladder.nodes
    unit[ladder.output_node] = 1.0
    x = solve_linear(g, unit)
    weights = [0.0] * ladder.bits
    for bit, conductance, node in legs:
        weights[bit] += conductance * x[node]
    return weights, x[ladder.output_node]


def _levels_from_weights(weights: list[float], supply: float) -> list[float]:
    levels = [0.0] * (1 << len(weights))
    for code in range(1, len(levels)):
        low = code & -code
        levels[code] = levels[code ^ low] + supply * weights[low.bit_length() - 1]
    return levels


def ladder_levels(ladder: Ladder, values: list[float] | None = None) -> list[float]:
    """Output voltage for every code (bit = 1: its driver at VDD), by nodal analysis.

    ``values`` gives each element's resistance in ``ladder.elements`` order
    (default: nominal); the driver output resistance is added to every leg
    that a bit drives.
    """
    weights, _ = _network(ladder, values)
    return _levels_from_weights(weights, ladder.supply)


@dataclass(frozen=True)
class Linearity:
    """Endpoint-fit DNL and INL in LSB (LSB = (top - bottom) / (2^n - 1))."""

    lsb: float
    dnl: tuple[float, ...]      # dnl[i]: the step from code i to i + 1
    inl: tuple[float, ...]      # inl[code]
    worst_dnl: float            # signed, largest magnitude
    worst_dnl_code: int         # the upper code of that step
    worst_inl: float
    worst_inl_code: int
    monotonic: bool


def linearity(levels: list[float]) -> Linearity:
    """DNL and INL against the straight line through the end codes.

    >>> lin = linearity([0.0, 1.0, 2.5, 3.0])
    >>> lin.worst_dnl, lin.worst_dnl_code, lin.monotonic
    (0.5, 2, True)
    """
    top = len(levels) - 1
    lsb = (levels[-1] - levels[0]) / top
    if lsb == 0:
        raise ValueError("expected distinct end levels, got a flat ladder")
    dnl = tuple((levels[i + 1] - levels[i]) / lsb - 1 for i in range(top))
    inl = tuple((levels[i] - levels[0] - i * lsb) / lsb for i in range(top + 1))
    d_index = max(range(top), key=lambda i: abs(dnl[i]))
    i_index = max(range(top + 1), key=lambda i: abs(inl[i]))
    return Linearity(lsb, dnl, inl, dnl[d_index], d_index + 1, inl[i_index], i_index,
                     all(levels[i + 1] > levels[i] for i in range(top)))


def _finish(kind, bits, supply, r, r2, r_out_driver, r_load, elements, nodes, ideal,
            ideal_rout) -> Ladder:
    ladder = Ladder(kind, bits, supply, r, r2, r_out_driver, r_load, tuple(elements), nodes,
                    nodes - 1, tuple(ideal), ideal_rout)
    weights, r_out = _network(ladder, None)
    ladder.levels = tuple(_levels_from_weights(weights, supply))
    ladder.output_resistance = r_out
    ladder.nominal = linearity(list(ladder.levels))
    return ladder


def _check_ladder_args(bits: int, r: float, supply: float) -> None:
    if not isinstance(bits, int) or not 1 <= bits <= 16:
        raise InputError(f"expected 1 to 16 ladder bits, got {bits!r}")
    if r <= 0 or supply <= 0:
        raise InputError(f"expected positive R and supply, got R = {r!r}, supply = {supply!r}")


def r2r_ladder(bits: int, r: float, r2: float, supply: float, *, r_out_driver: float = 0.0,
               r_load: float | None = None) -> Ladder:
    """An R-2R voltage-mode ladder: bit k drives a 2R leg into node k, nodes
    joined by R, node 0 (LSB end) terminated by 2R to VSS, output at the MSB node.

    Ideal levels VDD * code / 2^n; ideal output resistance R.  ``r_out_driver``
    is the CMOS output resistance in series with each driven 2R leg (the
    termination is a plain resistor); ``r_load`` a load from the output to VSS.
    """
    _check_ladder_args(bits, r, supply)
    elements = [LadderElement("2R term", r2, 0)]
    for k in range(bits):
        elements.append(LadderElement(f"2R b{k}", r2, k, bit=k))
        if k + 1 < bits:
            elements.append(LadderElement(f"R {k}-{k + 1}", r, k, other=k + 1))
    ideal = [supply * code / (1 << bits) for code in range(1 << bits)]
    return _finish("r-2r", bits, supply, r, r2, r_out_driver, r_load, elements, bits, ideal, r)


def binary_weighted_ladder(bits: int, r: float, supply: float, *, r_out_driver: float = 0.0,
                           r_load: float | None = None) -> Ladder:
    """Binary-weighted resistors into one node: bit k through R * 2^(n-1-k).

    Fewer joints but a 2^(n-1) spread of values; ideal levels
    VDD * code / (2^n - 1), output resistance R * 2^(n-1) / (2^n - 1).
    """
    _check_ladder_args(bits, r, supply)
    elements = [LadderElement(f"R b{k}", r * (1 << (bits - 1 - k)), 0, bit=k) for k in range(bits)]
    top = (1 << bits) - 1
    ideal = [supply * code / top for code in range(top + 1)]
    return _finish("binary-weighted", bits, supply, r, None, r_out_driver, r_load, elements, 1,
                   ideal, r * (1 << (bits - 1)) / top)


# ---------------------------------------------------------------- tolerance analysis

@dataclass
class WorstCase:
    """Worst DNL / INL with every resistor somewhere in nominal * (1 ± tolerance)."""

    tolerance: float
    method: str                   # "exhaustive" or "sensitivity"
    corners: int                  # corners evaluated
    dnl_max: float
    dnl_min: float
    inl_max: float
    inl_min: float
    worst_dnl: float              # signed, largest magnitude
    worst_dnl_code: int
    worst_dnl_corner: dict        # element name -> +1 / -1
    worst_inl: float
    worst_inl_code: int
    monotonic: bool               # monotonic at every corner evaluated


def _corner_values(ladder: Ladder, signs, tolerance: float) -> list[float]:
    return [e.ohms * (1 + s * tolerance) for e, s in zip(ladder.elements, signs)]


def _sensitivity_corners(ladder: Ladder, tolerance: float) -> set[tuple[int, ...]]:
    """For each DNL step and INL code, the corners that push it up and down.

    Each resistor goes to the end of its tolerance that moves the figure the
    same way as a small increase does at nominal (first-order sign of the
    derivative, by finite differences).
    """
    base = [e.ohms for e in ladder.elements]
    nominal = linearity(ladder_levels(ladder, base))
    slopes = []
    for j in range(len(base)):
        bumped = list(base)
        bumped[j] *= 1 + 1e-6
        lin = linearity(ladder_levels(ladder, bumped))
        slopes.append(([a - b for a, b in zip(lin.dnl, nominal.dnl)],
                       [a - b for a, b in zip(lin.inl, nominal.inl)]))
    corners = set()
    for which in (0, 1):
        for index in range(len(slopes[0][which])):
            up = tuple(1 if slopes[j][which][index] >= 0 else -1 for j in range(len(base)))
            corners.add(up)
            corners.add(tuple(-s for s in up))
    return corners


def worst_case_linearity(ladder: Ladder, tolerance: float, *, exhaustive_limit: int = 10) -> WorstCase:
    """Worst DNL and INL over resistor-tolerance corners.

    Method: each resistor is set to nominal * (1 + tolerance) or
    nominal * (1 - tolerance).  Ladders with at most ``exhaustive_limit``
    resistors try all 2^m corners.  Larger ones use sensitivity-directed
    corners: for every step (DNL) and code (INL) the sign of its derivative
    with respect to each resistor at nominal picks the corner that pushes it
    furthest up and the one that pushes it furthest down (2 corners per
    figure).  That is exact when each figure is monotone in each resistor,
    which holds for these ladders to first order; tests compare both methods.
    """
    if not 0 <= tolerance < 1:
        raise InputError(f"expected a tolerance fraction such as 0.01, got {tolerance!r}")
    m = len(ladder.elements)
    if m <= exhaustive_limit:
        corners, method = itertools.product((-1, 1), repeat=m), "exhaustive"
    else:
        corners, method = sorted(_sensitivity_corners(ladder, tolerance)), "sensitivity"
    count = 0
    dnl_max = dnl_min = inl_max = inl_min = 0.0
    worst_dnl, worst_dnl_code, worst_corner = 0.0, 0, ()
    worst_inl, worst_inl_code = 0.0, 0
    monotonic = True
    for signs in corners:
        count += 1
        lin = linearity(ladder_levels(ladder, _corner_values(ladder, signs, tolerance)))
        dnl_max, dnl_min = max(dnl_max, max(lin.dnl)), min(dnl_min, min(lin.dnl))
        inl_max, inl_min = max(inl_max, max(lin.inl)), min(inl_min, min(lin.inl))
        monotonic = monotonic and lin.monotonic
        if abs(lin.worst_dnl) > abs(worst_dnl):
            worst_dnl, worst_dnl_code, worst_corner = lin.worst_dnl, lin.worst_dnl_code, signs
        if abs(lin.worst_inl) > abs(worst_inl):
            worst_inl, worst_inl_code = lin.worst_inl, lin.worst_inl_code
    return WorstCase(tolerance, method, count, dnl_max, dnl_min, inl_max, inl_min, worst_dnl,
                     worst_dnl_code, {e.name: s for e, s in zip(ladder.elements, worst_corner)},
                     worst_inl, worst_inl_code, monotonic)


@dataclass
class LadderStats:
    """Monte Carlo summary: each trial draws every resistor within its tolerance."""

    trials: int
    seed: int
    tolerance: float
    distribution: str
    dnl_abs_mean: float
    dnl_abs_p95: float
    dnl_abs_max: float
    inl_abs_mean: float
    inl_abs_p95: float
    inl_abs_max: float
    nonmonotonic_fraction: float
    level_sigma: tuple[float, ...]      # standard deviation of each code's level, volts


def _p95(values: list[float]) -> float:
    ordered = sorted(values)
    return ordered[max(0, math.ceil(0.95 * len(ordered)) - 1)]


def monte_carlo(ladder: Ladder, tolerance: float, trials: int, seed: int, *,
                distribution: str = "uniform") -> LadderStats:
    """Reproducible Monte Carlo of the ladder's linearity (``random.Random(seed)``).

    ``uniform``: each resistor uniform in nominal * (1 ± tolerance), which
    never leaves the marked band; ``normal``: Gaussian with sigma =
    tolerance / 3 (an assumption: makers do not publish the distribution).
    """
    if trials < 1:
        raise InputError(f"expected at least one trial, got {trials!r}")
    if distribution not in ("uniform", "normal"):
        raise InputError(f"expected distribution 'uniform' or 'normal', got {distribution!r}")
    rng = random.Random(seed)
    dnls, inls, bad = [], [], 0
    sums = [0.0] * len(ladder.levels)
    squares = [0.0] * len(ladder.levels)
    for _ in range(trials):
        if distribution == "uniform":
            values = [e.ohms * (1 + rng.uniform(-tolerance, tolerance)) for e in ladder.elements]
        else:
            values = [e.ohms * (1 + rng.gauss(0.0, tolerance / 3)) for e in ladder.elements]
        levels = ladder_levels(ladder, values)
        lin = linearity(levels)
        dnls.append(abs(lin.worst_dnl))
        inls.append(abs(lin.worst_inl))
        bad += not lin.monotonic
        for i, level in enumerate(levels):
            sums[i] += level
            squares[i] += level * level
    sigma = tuple(math.sqrt(max(0.0, sq / trials - (s / trials) ** 2)) for s, sq in zip(sums, squares))
    return LadderStats(trials, seed, tolerance, distribution, sum(dnls) / trials, _p95(dnls),
                       max(dnls), sum(inls) / trials, _p95(inls), max(inls), bad / trials, sigma)


# ---------------------------------------------------------------- choosing ladder resistors

@dataclass
class LadderChoice:
    """R and 2R for an R-2R ladder and how they are made from the bin's values."""

    r: float
    r2: float
    construction: str            # "pair", "series" (2R = R + R) or "parallel" (R = 2R ∥ 2R)
    description: str
    resistors_needed: dict       # bin value (ohms) -> pieces needed
    ratio_error: float           # r2 / (2 r) - 1
    in_preferred_range: bool
    nominal_worst_inl: float     # with the driver resistance, LSB
    why: str


LADDER_RANGE = (10e3, 100e3)


def choose_ladder_resistors(resistors, bits: int, *, r_out_driver: float = 0.0,
                            ratio_tolerance: float = 0.005, supply: float = 5.0) -> LadderChoice:
    """Pick R and 2R from the bin for an R-2R ladder of ``bits`` bits.

    Constructions, in order of preference: an exact pair on hand (ratio within
    ``ratio_tolerance``; n - 1 of R and n + 1 of 2R), R = two equal resistors
    in parallel (3n - 1 pieces of one value), 2R = two in series (3n + 1
    pieces).  R between 10 k and 100 k is preferred first (common practice: a
    2R leg of 20 k or more keeps a CMOS output's resistance, tens to hundreds
    of ohms, under about 1 % of it, and the output resistance R stays low
    enough to drive a buffer input); ties go to the smallest nominal INL with
    ``r_out_driver`` in each leg, then to R nearest the middle of that range.
    """
    values = sorted(set(v for v in resistors if v > 0))
    if not values:
        raise ShortError("the bin lists no resistors for the ladder",
                         hint="add e.g. 'resistors: [10k, 20k]' (or just 10k: 2R = two in series)")
    n = bits
    candidates = []
    for a in values:
        for b in values:
            if abs(b / (2 * a) - 1) <= ratio_tolerance:
                candidates.append((a, b, "pair", f"R = {format_si(a, 'Ω')}, 2R = {format_si(b, 'Ω')} "
                                   "(both on hand)", {a: n - 1, b: n + 1}))
        candidates.append((a / 2, a, "parallel", f"R = two {format_si(a, 'Ω')} in parallel, "
                           f"2R = {format_si(a, 'Ω')}", {a: 3 * n - 1}))
        candidates.append((a, 2 * a, "series", f"R = {format_si(a, 'Ω')}, 2R = two "
                           f"{format_si(a, 'Ω')} in series", {a: 3 * n + 1}))
    rank = {"pair": 0, "parallel": 1, "series": 2}
    scored = []
    for r, r2, construction, text, needed in candidates:
        inside = LADDER_RANGE[0] <= r <= LADDER_RANGE[1]
        ladder = r2r_ladder(bits, r, r2, supply, r_out_driver=r_out_driver)
        centre = abs(math.log(r / math.sqrt(LADDER_RANGE[0] * LADDER_RANGE[1])))
        scored.append(((not inside, rank[construction], round(abs(ladder.nominal.worst_inl), 6), centre),
                       r, r2, construction, text, needed, inside, ladder.nominal.worst_inl))
    key, r, r2, construction, text, needed, inside, inl = min(scored, key=lambda item: item[0])
    why = {"pair": "an R and a 2R value are both on hand: fewest pieces",
           "parallel": "no exact R / 2R pair on hand; paralleling two equal resistors makes R "
                       "with fewer pieces than series 2R",
           "series": "no exact R / 2R pair on hand; two equal resistors in series make 2R"}[construction]
    if not inside:
        why += "; no choice puts R inside 10 kΩ .. 100 kΩ"
    return LadderChoice(r, r2, construction, text, needed, r2 / (2 * r) - 1, inside, inl, why)
