"""The records of the analog parts added to a packed plan, below ``netlist`` so the plan
can name their types: the clock oscillator (``Site``, ``OscillatorPlan``; made by
``clocksource``), a staircase (``LadderPlan``; ``staircase``), the power-on reset
(``PowerOnReset``, its net ``POWER_ON_NET``; ``poweron``) and an RC delay built in
(``AppliedDelay``; ``rcdelay``).  Each is frozen; ``as_json`` gives its plan-JSON entry.
The modules that make them re-export them.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .analog import LadderStats, Linearity, WorstCase

__all__ = ["Site", "OscillatorPlan", "LadderPlan", "PowerOnReset", "AppliedDelay", "POWER_ON_NET"]

POWER_ON_NET = "POR"
"""The power-on reset's Schmitt output: the counters' reset net."""


# ---------------------------------------------------------------- the clock oscillator

@dataclass(frozen=True)
class Site:
    """A place the oscillator can go: a unit of a chip in the plan, or of a new chip."""

    kind: str            # "counter-stage" (a 4060's own), "inverter", "nand"
    part: str
    unit: str
    ref: str | None      # None: a new chip from the bin
    order: int           # the preference rank (1..5 in the module docstring)

    def describe(self) -> str:
        what = {"counter-stage": "the built-in RC oscillator stage",
                "inverter": f"Schmitt inverter {self.unit}",
                "nand": f"Schmitt NAND {self.unit} (other input tied to VDD)"}[self.kind]
        return f"{what} of a {self.part}"


@dataclass(frozen=True)
class OscillatorPlan:
    """The oscillator as planned: where, which values, and the numbers behind them."""

    site: Site
    ref: str
    opened: bool                      # a chip was opened for it (it joins the BOM)
    wanted_hz: float
    r: float
    c: float
    rs: float | None
    f_nom: float
    f_min: float | None
    f_max: float | None
    formula: str                      # the general formula
    worked: str                       # the formula with the numbers
    tolerance: float
    tolerance_given: bool
    thresholds: dict | None
    clock_net: str
    pins: dict[str, int]              # role -> pin of ``ref``
    passives: list[str]
    counter_fmax_mhz: float | None
    corners: list[tuple[str, float, float, float]] = field(default_factory=list)  # label, VT+, VT-, f
    warnings: list[str] = field(default_factory=list)

    def as_json(self) -> dict:
        return {
            "part": self.site.part, "ref": self.ref, "unit": self.site.unit, "kind": self.site.kind,
            "new_chip": self.opened, "r_ohm": self.r, "c_farad": self.c, "rs_ohm": self.rs,
            "formula": self.formula, "worked": self.worked,
            "wanted_hz": self.wanted_hz, "nominal_hz": self.f_nom, "min_hz": self.f_min, "max_hz": self.f_max,
            "tolerance": self.tolerance, "tolerance_default": not self.tolerance_given,
            "thresholds_v": self.thresholds, "clock_net": self.clock_net,
            "pins": dict(self.pins), "passives": list(self.passives),
            "counter_fmax_mhz": self.counter_fmax_mhz,
            "corners": [{"label": l, "vt_plus_v": p, "vt_minus_v": m, "frequency_hz": f}
                        for l, p, m, f in self.corners],
            "warnings": list(self.warnings),
        }


# ---------------------------------------------------------------- staircases

@dataclass(frozen=True)
class LadderPlan:
    """One staircase as planned."""

    name: str
    kind: str                         # "r-2r" or "binary-weighted"
    bits: tuple[int, ...]             # tick bits, ladder LSB first
    drivers: list[tuple[str, int, str]]   # (ref, pin, net) per ladder bit
    r: float
    r2: float | None
    construction: str
    why: str
    tolerance: float
    tolerance_given: bool
    load_ohms: float | None
    r_out_driver: float
    r_out_note: str
    ideal_levels: tuple[float, ...]
    levels: tuple[float, ...]         # with the driver resistance (and load)
    ideal_output_resistance: float
    output_resistance: float
    worst: WorstCase
    monte: LadderStats
    nominal: Linearity                # with the driver resistance
    passives: list[str]
    routed_by: list[str]
    warnings: list[str] = field(default_factory=list)

    @property
    def driver_error_lsb(self) -> float:
        """Largest departure from the ideal level caused by the drivers (and load), in LSB."""
        lsb = self.ideal_levels[1] - self.ideal_levels[0]
        return max(abs(a - b) for a, b in zip(self.levels, self.ideal_levels)) / lsb

    def as_json(self) -> dict:
        w, m = self.worst, self.monte
        return {
            "kind": self.kind, "bits": list(self.bits), "net": self.name,
            "drivers": [{"ref": r, "pin": p, "net": n} for r, p, n in self.drivers],
            "r_ohm": self.r, "r2_ohm": self.r2, "construction": self.construction,
            "tolerance": self.tolerance, "tolerance_default": not self.tolerance_given,
            "load_ohm": self.load_ohms,
            "driver_resistance_ohm": self.r_out_driver, "driver_resistance_source": self.r_out_note,
            "ideal_levels_v": list(self.ideal_levels), "levels_v": list(self.levels),
            "output_resistance_ideal_ohm": self.ideal_output_resistance,
            "output_resistance_ohm": self.output_resistance,
            "driver_error_lsb": self.driver_error_lsb,
            "nominal": {"dnl_lsb": self.nominal.worst_dnl, "inl_lsb": self.nominal.worst_inl},
            "worst_case": {"method": w.method, "corners": w.corners, "dnl_lsb": w.worst_dnl,
                           "dnl_code": w.worst_dnl_code, "inl_lsb": w.worst_inl,
                           "inl_code": w.worst_inl_code, "monotonic": w.monotonic},
            "monte_carlo": {"trials": m.trials, "seed": m.seed, "distribution": m.distribution,
                            "dnl_abs_p95_lsb": m.dnl_abs_p95, "dnl_abs_max_lsb": m.dnl_abs_max,
                            "inl_abs_p95_lsb": m.inl_abs_p95, "inl_abs_max_lsb": m.inl_abs_max,
                            "nonmonotonic_fraction": m.nonmonotonic_fraction},
            "passives": list(self.passives), "routed_by": list(self.routed_by),
            "warnings": list(self.warnings),
        }


# ---------------------------------------------------------------- the power-on reset

@dataclass(frozen=True)
class PowerOnReset:
    """The power-on reset as planned."""

    wanted_s: float
    active: str                      # the counters' reset level: "high" or "low"
    part: str
    ref: str
    unit: str
    opened: bool
    r: float
    c: float
    width_s: tuple[float, float, float]   # min, typ, max over the threshold spread
    formula: str
    thresholds: dict[str, dict[str, float]]   # vt_plus, vt_minus -> min, typ, max (V)
    resets: list[tuple[str, int]]    # (ref, pin) of every counter reset moved onto NET
    pins: dict[str, int]
    passives: list[str]
    warnings: list[str] = field(default_factory=list)

    def as_json(self) -> dict:
        return {"wanted_s": self.wanted_s, "active": self.active, "part": self.part, "ref": self.ref,
                "unit": self.unit, "new_chip": self.opened, "r_ohm": self.r, "c_farad": self.c,
                "width_s": {"min": self.width_s[0], "typ": self.width_s[1], "max": self.width_s[2]},
                "formula": self.formula, "thresholds_v": self.thresholds, "net": POWER_ON_NET,
                "resets": [{"ref": r, "pin": p} for r, p in self.resets],
                "pins": dict(self.pins), "passives": list(self.passives), "warnings": list(self.warnings)}


# ---------------------------------------------------------------- RC delays

@dataclass(frozen=True)
class AppliedDelay:
    """One RC delay built into the plan."""

    signal: str
    asked_by: str                         # "delay: <time>" (the spec) or "--fix races"
    wanted_s: float
    part: str                             # the Schmitt part of both stages
    stages: tuple[tuple[str, str], ...]   # (chip ref, unit) of stage 1 and stage 2
    new_chips: tuple[str, ...]            # refs opened from the bin for the stages
    r: float
    c: float
    nets: dict[str, str]                  # input, drive (stage 1 out), node, output
    rise_s: tuple[float, float, float]    # node charging to VT+: min, typ, max (thresholds + tolerance)
    fall_s: tuple[float, float, float]    # node discharging to VT-
    formula: str
    passives: tuple[str, str]             # R ref, C ref
    warnings: tuple[str, ...] = ()

    def as_json(self) -> dict:
        return {"signal": self.signal, "asked_by": self.asked_by, "wanted_s": self.wanted_s,
                "part": self.part, "stages": [{"ref": r, "unit": u} for r, u in self.stages],
                "new_chips": list(self.new_chips), "R": self.r, "C": self.c, "nets": dict(self.nets),
                "rise_s": dict(zip(("min", "typ", "max"), self.rise_s)),
                "fall_s": dict(zip(("min", "typ", "max"), self.fall_s)),
                "formula": self.formula, "passives": list(self.passives), "warnings": list(self.warnings)}
