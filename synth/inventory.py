"""The part catalog and the user's bin: the only reader of ``inventory/``.

Interface: ``load_catalog(paths=None) -> Catalog``; ``Catalog.parts`` (generic
type -> ``Part``), ``Catalog.normalise(marking)``, ``Catalog.closest(marking)``;
``Part`` and ``Unit`` records; ``load_bin(path, catalog, supply=5.0) -> Bin``;
``data_path(*parts)`` and ``example_path(*parts)`` for shipped files.

Markings are normalised the way a technician reads a chip: maker prefixes
(CD, HEF, MC1, SN, HCF, TC, M, MM ...) and grade/package suffixes (B, BE, BP,
BCP, N, D, B1 ...) fall away, leaving the generic type; 74HC and 74HCT stay
distinct, since their supply ranges and input levels differ.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass, field, replace
from importlib import resources
from pathlib import Path
from typing import Any, Iterable, Literal

from .errors import BinError, CatalogError
from .limits import CHIPS_IN_ALL, CHIPS_PER_PART, PASSIVE_VALUES, check_at_most, describe, shown
from .units import parse_si
from .yamlsrc import MarkedDict, MarkedList, line_of, load_yaml

CATEGORIES = ("gate", "inverter", "buffer", "counter", "flipflop", "decoder", "mux", "switch")
UNIT_TYPES = ("gate", "inverter", "buffer", "counter", "flipflop", "decoder", "mux",
              "spdt", "spst", "analog_mux")


# ---------------------------------------------------------------- data files

def data_path(*parts: str) -> Path:
    """A path inside the shipped ``inventory/`` data (installed as ``synth._data``)."""
    return _shipped("synth._data", "inventory").joinpath(*parts)


def example_path(*parts: str) -> Path:
    """A path inside the shipped ``examples/`` specs (installed as ``synth._examples``)."""
    return _shipped("synth._examples", "examples").joinpath(*parts)


def _shipped(package: str, folder: str) -> Path:
    """The source tree's folder when run from a checkout (an editable install of
    another checkout must not hand over its data), else the installed data package."""
    checkout = Path(__file__).resolve().parent.parent
    if (checkout / "pyproject.toml").is_file() and (checkout / folder / "__init__.py").is_file():
        return checkout / folder
    try:
        return Path(str(resources.files(package)))
    except ModuleNotFoundError:
        return Path(__file__).resolve().parent.parent / folder


# ---------------------------------------------------------------- records

Level = Literal["high", "low"]
Edge = Literal["rising", "falling"]


@dataclass(frozen=True)
class PinControl:
    """A control input and the level at which it acts (reset, set, enable).

    A counter's enable may also say on which ``edge`` it counts and the level
    the clock is held at meanwhile (``clock_hold``), where the rule of
    ``counter`` (a rising-edge clock's enable counts on its falling edge with
    the clock held inactive) does not fit the part.
    """

    pin: int
    active: Level = "high"
    synchronous: bool = False
    edge: Edge | None = None
    clock_hold: Level | None = None


@dataclass(frozen=True)
class ClockPin:
    """A clock input: the edge that advances the unit, and a Schmitt input or not."""

    pin: int
    edge: Edge
    schmitt: bool = False


@dataclass(frozen=True)
class SecondOutput:
    """A gate's second output on the same inputs (the 4068's AND beside its NAND)."""

    op: str
    output: int


@dataclass(frozen=True)
class OscillatorPins:
    """The pins of a counter's built-in RC oscillator (4060)."""

    input: int
    output: int
    output_inv: int | None = None


@dataclass(frozen=True)
class Throws:
    """An SPDT section: the throw joined to the common at each control level."""

    low: int
    high: int


@dataclass(frozen=True)
class Unit:
    """One functional unit of a part (a gate, a counter, a switch section).

    The typed fields below are validated when the catalog is loaded (which
    ones a unit type carries: DEVELOPERS.md, "The catalog schema"); those a
    type does not use keep their empty defaults.  ``fields`` is the entry as
    written (plain dicts and lists), for printing it and for looking up a
    role by its schema name; code that decides anything reads the typed
    fields (modules not yet moved still read ``fields``).
    """

    id: str
    type: str
    fields: dict = field(compare=False, repr=False)
    op: str = ""                              # gate op; 'not' inverter, 'buf' buffer, else the type
    inputs: tuple[int, ...] = ()              # gate inputs; an inverter's or buffer's one input
    output: int | None = None                 # gate, inverter, buffer, digital mux
    schmitt: bool = False
    unbuffered: bool = False
    also: SecondOutput | None = None
    # counters and flip-flops
    mode: str = ""                            # binary, bcd, johnson
    modulus: int = 0
    synchronous: bool = False
    clock: ClockPin | None = None
    enable: PinControl | None = None          # counters, digital muxes
    reset: PinControl | None = None
    set: PinControl | None = None
    stages: dict[int, int] = field(default_factory=dict)    # stage k -> pin
    decoded: dict[int, int] = field(default_factory=dict)   # state n -> pin (johnson)
    carry: int | None = None
    carry_out: int | None = None
    count_enable: tuple[int, ...] = ()        # pins that must all be high to count (CEP, CET)
    ties: dict[int, str] = field(default_factory=dict)      # pin -> VDD / VSS
    oscillator: OscillatorPins | None = None
    kind: str = ""                            # flip-flop kind ('d')
    d: int | None = None
    q: int | None = None
    qn: int | None = None
    # decoders, muxes, analog switches
    selects: tuple[int, ...] = ()             # least significant first
    outputs: tuple[int, ...] = ()             # decoder output for code 0, 1, ...
    active: Level | None = None               # decoder outputs
    enables: tuple[PinControl, ...] = ()
    data: tuple[int, ...] = ()                # digital mux input for code 0, 1, ...
    output_inv: int | None = None
    control: int | None = None
    common: int | None = None
    throws: Throws | None = None
    terminals: tuple[int, ...] = ()
    on_when: Level = "high"
    channels: tuple[int, ...] = ()

    def pins(self) -> list[tuple[int, str]]:
        """Every package pin this unit uses, with the role it plays."""
        return list(_unit_pins(self.fields))

    @property
    def synchronous_binary_or_bcd(self) -> bool:
        """A counter with coded outputs that change together on the clock edge
        (4520, 74HC161): no ripple.  A Johnson counter's outputs are decoded states."""
        return self.type == "counter" and self.synchronous and self.mode != "johnson"

    def outputs_by_count(self) -> dict[int, int]:
        """Stage k -> pin, or for a Johnson counter decoded state n -> pin."""
        return dict(self.decoded if self.mode == "johnson" else self.stages)

    def control_of_role(self, role: str) -> PinControl | None:
        """The control a role of ``pins()`` belongs to (``reset.pin`` -> the reset,
        ``enables[1].pin`` -> the second enable); None for a role that is no control."""
        head, _, index = role.split(".")[0].partition("[")
        if head == "enables" and index:
            position = int(index.rstrip("]"))
            return self.enables[position] if position < len(self.enables) else None
        return {"reset": self.reset, "set": self.set, "enable": self.enable}.get(head)


def _unit_pins(fields: dict, role: str = "") -> Iterable[tuple[int, str]]:
    """Walk a unit's fields and yield (pin, role) for every pin number in them."""
    skip = {"id", "type", "op", "mode", "modulus", "synchronous", "edge", "active",
            "schmitt", "unbuffered", "on_when", "kind"}
    for key, value in fields.items():
        if key in skip:
            continue
        name = f"{role}.{key}" if role else str(key)
        if key == "ties" and isinstance(value, dict):
            yield from ((int(pin), f"tie.{level}") for pin, level in value.items())
        elif isinstance(value, bool):
            continue
        elif isinstance(value, int):
            yield value, name
        elif isinstance(value, dict):
            yield from _unit_pins(value, name)
        elif isinstance(value, list):
            for i, item in enumerate(value):
                if isinstance(item, dict):
                    yield from _unit_pins(item, f"{name}[{i}]")
                elif isinstance(item, int) and not isinstance(item, bool):
                    yield item, f"{name}[{i}]"


@dataclass(frozen=True)
class Part:
    """A generic part type from the catalog (``4011``, ``74HC00``, ``74HCT00``)."""

    type: str
    family: str
    function: str
    category: str
    pin_count: int
    package: str
    pins: dict[int, str]
    power: dict[str, int]
    units: tuple[Unit, ...]
    supply: tuple[float, float]
    timing: dict
    source: dict
    nc: tuple[int, ...] = ()
    ties: dict[int, str] = field(default_factory=dict)
    shared: tuple[int, ...] = ()
    thresholds: dict = field(default_factory=dict)
    r_on: dict = field(default_factory=dict)
    r_out: dict = field(default_factory=dict)   # output resistance, ohms, by supply
    notes: str = ""
    oscillator_k: float | None = None           # f = 1 / (k Rt Ct) of a built-in RC oscillator
    variant_of: str | None = None               # the part a derived variant copies (74HCT00 <- 74HC00)
    raw: dict = field(default_factory=dict, compare=False, repr=False)   # the entry as written

    def units_of(self, *types: str) -> list[Unit]:
        return [u for u in self.units if u.type in types]

    def suits(self, supply: float) -> bool:
        """Whether the part may run at this supply voltage (its datasheet range)."""
        lo, hi = self.supply
        return lo - 1e-9 <= supply <= hi + 1e-9

    def delay_ns(self, key: str = "tpd", supply: float = 5.0, which: str = "typ") -> float | None:
        """A timing figure at ``supply``, interpolated in 1/V between datasheet points.

        CMOS delays fall roughly as 1/V over the supply range (common practice),
        so interpolation is done in 1/V; outside the table the nearest point is used.
        """
        table = self.timing.get(key)
        if not table:
            return None
        points = sorted((float(v), row[which]) for v, row in table.items()
                        if isinstance(row, dict) and which in row)
        if not points:
            return None
        return interpolate_inverse_v(points, supply)

    def delay_at_corner(self, key: str, supply: float, corner: str) -> float | None:
        """A timing figure at the corner ('typ' or 'max'), the other corner's
        where the catalog gives only that one."""
        value = self.delay_ns(key, supply, corner)
        if value is None:
            value = self.delay_ns(key, supply, "max" if corner == "typ" else "typ")
        return value

    def pin_roles(self) -> dict[int, str]:
        """Pin -> 'unit A: inputs[0]' style role text, power and ties included."""
        roles: dict[int, str] = {}
        for name, pin in self.power.items():
            roles[pin] = name
        for pin in self.nc:
            roles[pin] = "NC"
        for pin, level in self.ties.items():
            roles[pin] = f"tie {level}"
        for unit in self.units:
            for pin, role in unit.pins():
                roles.setdefault(pin, f"{unit.id}: {role}")
        return roles

    def unit_of_pin(self) -> dict[int, str]:
        owners: dict[int, str] = {}
        for unit in self.units:
            for pin, _ in unit.pins():
                owners[pin] = f"{owners[pin]},{unit.id}" if pin in owners and unit.id not in owners[pin] else unit.id
        return owners


def interpolate_inverse_v(points: list[tuple[float, float]], supply: float) -> float:
    """Interpolate (volts, value) points linearly in 1/V.

    >>> round(interpolate_inverse_v([(5.0, 100.0), (10.0, 50.0)], 7.5), 3)
    66.667
    >>> interpolate_inverse_v([(5.0, 100.0)], 12.0)
    100.0
    """
    if supply <= points[0][0]:
        return points[0][1]
    if supply >= points[-1][0]:
        return points[-1][1]
    for (v0, y0), (v1, y1) in zip(points, points[1:]):
        if v0 <= supply <= v1:
            x0, x1, x = 1 / v0, 1 / v1, 1 / supply
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    return points[-1][1]


# ---------------------------------------------------------------- catalog

# Maker prefixes seen on 4000-series chips (common practice); "MC1" is
# Motorola/ON's MC14xxx, whose extra 1 `_four_thousand` drops.
MAKER_PREFIXES = ("HCF", "HEF", "HEC", "MC", "CD", "SN", "TC", "MM", "NTE", "BU",
                  "M", "LC", "HD", "IW", "KF", "UTC", "U", "F", "SNJ", "TP")


@dataclass(frozen=True)
class InputLevels:
    """The guaranteed switching band of a family's plain (non-Schmitt) inputs."""

    rows: dict[float, tuple[float, float]]    # supply volts -> (VIL max, VIH min)
    source: str

    def band_at(self, supply: float) -> tuple[float, float]:
        """VIL and VIH at ``supply``: linear between rows, proportional to the supply outside them."""
        points = sorted(self.rows)
        if supply <= points[0] or supply >= points[-1]:
            edge = points[0] if supply <= points[0] else points[-1]
            scale = supply / edge
            return self.rows[edge][0] * scale, self.rows[edge][1] * scale
        hi = next(v for v in points if v >= supply)
        lo = max(v for v in points if v <= supply)
        w = 0.0 if hi == lo else (supply - lo) / (hi - lo)
        return tuple(self.rows[lo][k] + w * (self.rows[hi][k] - self.rows[lo][k]) for k in (0, 1))


@dataclass(frozen=True)
class Family:
    """What every part of a family shares, read from the family file's top level
    (or from a variant such as the 74HC file's HCT): code asks these facts
    instead of testing part names."""

    name: str                                   # '4000B', '74HC', '74HCT'
    supply: tuple[float, float] | None = None   # the family's recommended range, volts
    input_levels: InputLevels | None = None
    ttl_inputs: bool = False                    # VIL 0.8 / VIH 2.0 V, not a fraction of VDD
    variant_of: str | None = None               # the family a derived variant copies
    keeps_thresholds: bool = True               # a variant's Schmitt levels are its original's
    offered_for_empty_bin: bool = False         # the family to suggest from when the bin gives none
    source: str = ""


@dataclass
class Catalog:
    """All known part types, with the marking rules that reach them."""

    parts: dict[str, Part]
    files: tuple[Path, ...] = ()
    families: dict[str, Family] = field(default_factory=dict)

    def family_of(self, part: Part) -> Family:
        """The family record of a part (a bare record when no file describes its family)."""
        return self.families.get(part.family) or Family(part.family)

    def families_or_default(self, part_types: Iterable[str]) -> set[str]:
        """The families of these parts; when there are none, the family the
        catalog offers for an empty bin."""
        found = {self.parts[p].family for p in part_types}
        return found or {f.name for f in self.families.values() if f.offered_for_empty_bin}

    def plain_input_levels(self, families: Iterable[str], supply: float) -> tuple[float, float, str] | None:
        """The guaranteed switching band (VIL max, VIH min) of a plain input at ``supply``.

        Linear between the family file's supply rows (held proportional to the
        supply outside them); with several families the widest band is taken,
        since the receiving input could be any of them.  None when no family
        file gives ``input_levels``.
        """
        bands = []
        for family in sorted(set(families)):
            levels = self.families[family].input_levels if family in self.families else None
            if levels is not None:
                vil, vih = levels.band_at(supply)
                bands.append((vil, vih, f"{family}: {levels.source}"))
        if not bands:
            return None
        return (min(b[0] for b in bands), max(b[1] for b in bands), "; ".join(b[2] for b in bands))

    def normalise(self, marking: str) -> str | None:
        """The generic type for a chip marking, or None when it is not known.

        >>> cat = load_catalog()
        >>> [cat.normalise(m) for m in ("CD4011BE", "MC14011BCP", "SN74HC00N", "74HCT00")]
        ['4011', '4011', '74HC00', '74HCT00']
        """
        text = re.sub(r"[\s\-_/]", "", str(marking)).upper()
        if text in self.parts:
            return text
        for candidate in _marking_candidates(text):
            if candidate in self.parts:
                return candidate
        return None

    def closest(self, marking: str, n: int = 3) -> list[str]:
        """Known types that look most like an unknown marking (for the error)."""
        text = re.sub(r"[\s\-_/]", "", str(marking)).upper()
        digits = re.findall(r"\d+", text)
        keys = list(self.parts)
        guesses = difflib.get_close_matches(text, keys, n=n, cutoff=0.3)
        for d in digits:
            guesses += difflib.get_close_matches(d, keys, n=n, cutoff=0.5)
        seen: list[str] = []
        for g in guesses:
            if g not in seen:
                seen.append(g)
        return seen[:n]

    def by_family(self, family: str | None = None) -> list[Part]:
        return [p for p in self.parts.values() if family is None or p.family.lower() == family.lower()]


def _marking_candidates(text: str) -> Iterable[str]:
    """Generic types a marking may stand for, most specific first."""
    hc = re.search(r"74(HCT|HC|AHCT|AHC|LV|VHC)(\d{2,5})", text)
    if hc:
        family, number = hc.groups()
        # An HCT part absent from the catalog must not silently become HC.
        yield f"74{family}{number}"
        return
    for prefix in sorted(set(MAKER_PREFIXES), key=len, reverse=True):
        if text.startswith(prefix):
            yield from _four_thousand(text[len(prefix):])
    yield from _four_thousand(text)


def _four_thousand(rest: str) -> Iterable[str]:
    """The whole digit run after the maker prefix: ``40106`` is never ``4010``.

    >>> list(_four_thousand("40106BP")), list(_four_thousand("14011BCP"))
    (['40106'], ['4011'])
    """
    match = re.match(r"1?(4\d{3,4})(?!\d)", rest)
    if match:
        yield match.group(1)


def load_catalog(paths: Iterable[str | Path] | None = None) -> Catalog:
    """Read the family files (the shipped ones unless ``paths`` is given)."""
    files = tuple(Path(p) for p in paths) if paths is not None else \
        tuple(sorted(data_path("catalog").glob("*.yaml")))
    parts: dict[str, Part] = {}
    families: dict[str, Family] = {}
    for path in files:
        doc = load_yaml(path)
        file_families = _families_of_file(path, doc)
        for part in _parts_of_file(path, doc, file_families):
            if part.type in parts:
                raise CatalogError(f"part {part.type} defined twice", file=path)
            parts[part.type] = part
        for family in file_families.values():
            if family.name in families:
                raise CatalogError(f"family {family.name} described twice", file=path)
            families[family.name] = family
    return Catalog(parts, files, families)


FILE_KEYS = ("family", "supply", "inputs", "offered_for_empty_bin", "input_levels", "source",
             "variants", "sources", "parts")
VARIANT_KEYS = ("family", "supply", "inputs", "keeps_thresholds", "note", "input_levels", "source")


def _families_of_file(path: Path, doc: Any) -> dict[str, Family]:
    """The file's family and its variants (key: the variant's name in the file, '' for the family)."""
    if not isinstance(doc, dict) or "parts" not in doc or "family" not in doc:
        raise CatalogError("expected a mapping with 'family' and 'parts'", file=path,
                           line=doc.line if isinstance(doc, MarkedDict) else None, hint=SCHEMA_HINT)
    top = _Entry(path, f"family {doc['family']}", doc)
    top.only(FILE_KEYS)
    family = _family(top, str(doc["family"]))
    found = {"": family}
    variants = top.inner("variants", required=False)
    for name in variants.data if variants is not None else ():
        variant = variants.inner(name)
        variant.only(VARIANT_KEYS)
        found[str(name)] = replace(_family(variant, str(variant.get("family"))), variant_of=family.name,
                                   keeps_thresholds=variant.flag("keeps_thresholds", default=True))
    return found


def _family(entry: _Entry, name: str) -> Family:
    """A family's shared facts from a family file's top level or from one of its variants."""
    return Family(name=name, supply=entry.supply_range(required=False),
                  input_levels=_input_levels(entry),
                  ttl_inputs=entry.choice("inputs", ("cmos", "ttl"), False, "cmos") == "ttl",
                  offered_for_empty_bin=entry.flag("offered_for_empty_bin"),
                  source=str(entry.get("source", required=False) or ""))


def _input_levels(entry: _Entry) -> InputLevels | None:
    """Guaranteed VIL max / VIH min of plain inputs by supply (``input_levels``)."""
    table = entry.inner("input_levels", required=False)
    if table is None:
        return None
    rows = table.inner("rows")
    if not rows.data:
        raise table.fail("rows", "rows of {vil, vih} by supply", rows.data)
    levels = {}
    for supply, row in rows.data.items():
        ok = isinstance(supply, (int, float)) and not isinstance(supply, bool) and supply > 0 \
            and isinstance(row, dict) and set(row) == {"vil", "vih"} \
            and all(isinstance(row[k], (int, float)) and not isinstance(row[k], bool) for k in row) \
            and 0 <= row["vil"] < row["vih"] <= supply
        if not ok:
            raise rows.fail(supply, "{vil: V, vih: V} with 0 <= vil < vih <= the row's supply", _plain(row))
        levels[float(supply)] = (float(row["vil"]), float(row["vih"]))
    return InputLevels(levels, str(table.get("source")))


def _parts_of_file(path: Path, doc: Any, families: dict[str, Family]) -> list[Part]:
    family = families[""].name
    variants = doc.get("variants") or {}
    parts = []
    for name, entry in (doc["parts"] or {}).items():
        where = line_of(doc["parts"], name)
        try:
            part = _part_from_entry(str(name), family, entry, path)
        except (KeyError, TypeError, ValueError) as exc:
            raise CatalogError(f"part {name}: expected the schema of DEVELOPERS.md, got {exc!r}",
                               file=path, line=where) from exc
        parts.append(part)
        for variant_name, variant in variants.items():
            if entry.get(str(variant_name).lower()):
                if not part.type.startswith(family):
                    raise CatalogError(f"part {name}: a variant ({variant_name}) needs a part name that "
                                       f"starts with the family name {family}", file=path, line=where,
                                       hint=SCHEMA_HINT)
                parts.append(_variant_twin(part, str(variant_name), families[variant_name], variant))
    return parts


def _voltage_table(table: Any) -> dict:
    """YAML keys such as 5 or 4.5 -> float keys, nested rows kept as dicts."""
    if not isinstance(table, dict):
        return {}
    return {float(k): dict(v) if isinstance(v, dict) else v for k, v in table.items()}


GATE_OPS = ("and", "nand", "or", "nor", "xor", "xnor")
UNIT_KEYS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    # unit type: (keys it must have, keys it may have), besides id and type
    "gate": (("op", "inputs", "output"), ("schmitt", "also")),
    "inverter": (("input", "output"), ("schmitt", "unbuffered")),
    "buffer": (("input", "output"), ()),
    "counter": (("mode", "modulus", "synchronous", "clock"),
                ("enable", "reset", "stages", "decoded", "carry", "carry_out", "count_enable", "ties",
                 "oscillator")),
    "flipflop": (("kind", "clock", "d", "q"), ("qn", "set", "reset")),
    "decoder": (("selects", "outputs", "active"), ("enables",)),
    "mux": (("selects", "data", "output"), ("output_inv", "enable")),
    "spdt": (("control", "common", "throws"), ()),
    "spst": (("control", "terminals"), ("on_when",)),
    "analog_mux": (("selects", "common", "channels"), ()),
}
PART_KEYS = ("function", "category", "package", "pins", "power", "supply", "units")
SCHEMA_HINT = "see DEVELOPERS.md, 'The catalog schema'"


@dataclass(frozen=True)
class _Entry:
    """One mapping of a catalog file being read: where it is, for the errors."""

    path: Path
    what: str                 # 'part 4011' or 'part 4011 unit B'
    data: dict
    pin_count: int = 0

    def fail(self, key: str | None, expected: str, got: object) -> CatalogError:
        marked = isinstance(self.data, (MarkedDict, MarkedList))
        line = line_of(self.data, key) if key is not None else (self.data.line if marked else None)
        where = f"'{key}'" if key is not None else "the entry"
        return CatalogError(f"{self.what}: expected {expected} for {where}, got {got!r}",
                            file=self.path, line=line, hint=SCHEMA_HINT)

    def get(self, key: str, required: bool = True) -> Any:
        if key not in self.data:
            if required:
                marked = isinstance(self.data, (MarkedDict, MarkedList))
                raise CatalogError(f"{self.what}: expected the key '{key}', got none",
                                   file=self.path, line=self.data.line if marked else None, hint=SCHEMA_HINT)
            return None
        return self.data[key]

    def pin(self, key: str, value: Any = None, required: bool = True) -> int | None:
        value = self.get(key, required) if value is None else value
        if value is None:
            return None
        if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= self.pin_count:
            raise self.fail(key, f"a pin number 1-{self.pin_count}", value)
        return value

    def pins(self, key: str, required: bool = True) -> tuple[int, ...]:
        value = self.get(key, required)
        if value is None:
            return ()
        if not isinstance(value, list) or not value:
            raise self.fail(key, "a list of pin numbers", value)
        return tuple(self.pin(key, v) for v in value)

    def only(self, keys: tuple[str, ...]) -> None:
        """Refuse a key the schema does not know (a misspelt key would otherwise be ignored)."""
        for key in self.data:
            if key not in keys:
                raise self.fail(key, f"one of the keys {', '.join(keys)}", key)

    def supply_range(self, required: bool = True) -> tuple[float, float] | None:
        """``{min: V, max: V}`` with 0 < min < max."""
        value = self.get("supply", required)
        if value is None:
            return None
        low, high = (value.get("min"), value.get("max")) if isinstance(value, dict) else (None, None)
        if not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in (low, high)) \
                or not 0 < low < high:
            raise self.fail("supply", "{min: V, max: V} with 0 < min < max", _plain(value))
        return float(low), float(high)

    def flag(self, key: str, default: bool = False) -> bool:
        value = self.get(key, required=False)
        if value is None:
            return default
        if not isinstance(value, bool):
            raise self.fail(key, "true or false", value)
        return value

    def choice(self, key: str, options: tuple[str, ...], required: bool = True, default: str = "") -> str:
        value = self.get(key, required)
        if value is None:
            return default
        if value not in options:
            raise self.fail(key, " or ".join(options), value)
        return str(value)

    def number(self, key: str, required: bool = True) -> int:
        value = self.get(key, required)
        if value is None:
            return 0
        if isinstance(value, bool) or not isinstance(value, int) or value < 1:
            raise self.fail(key, "a positive whole number", value)
        return value

    def inner(self, key: str, required: bool = True) -> _Entry | None:
        value = self.get(key, required)
        if value is None:
            return None
        if not isinstance(value, dict):
            raise self.fail(key, "a mapping", value)
        return _Entry(self.path, f"{self.what} {key}", value, self.pin_count)

    def control(self, key: str, counts: bool = False) -> PinControl | None:
        sub = self.inner(key, required=False)
        return sub.as_control(counts) if sub is not None else None

    def as_control(self, counts: bool = False) -> PinControl:
        """``{pin, active, synchronous}``; a counter's enable (``counts``) may add
        ``edge`` and ``clock_hold``."""
        self.only(("pin", "active", "synchronous") + (("edge", "clock_hold") if counts else ()))
        return PinControl(self.pin("pin"), self.choice("active", ("high", "low"), False, "high"),
                          self.flag("synchronous"),
                          self.choice("edge", ("rising", "falling"), False) or None,
                          self.choice("clock_hold", ("high", "low"), False) or None)

    def pin_map(self, key: str) -> dict[int, int]:
        value = self.get(key, required=False)
        if value is None:
            return {}
        if not isinstance(value, dict) or not value or \
                not all(isinstance(k, int) and not isinstance(k, bool) for k in value):
            raise self.fail(key, "a mapping of numbers to pins", value)
        return {int(k): self.pin(key, v) for k, v in value.items()}


def _unit_from_entry(part: _Entry, index: int, raw: Any) -> Unit:
    """One unit, every field checked against its type's schema."""
    if not isinstance(raw, dict) or "id" not in raw or "type" not in raw:
        raise CatalogError(f"{part.what}: expected units with 'id' and 'type', got {raw!r}",
                           file=part.path, line=line_of(part.data.get("units"), index), hint=SCHEMA_HINT)
    unit = _Entry(part.path, f"{part.what} unit {raw['id']}", raw, part.pin_count)
    kind = unit.choice("type", UNIT_TYPES)
    required, optional = UNIT_KEYS[kind]
    for key in raw:
        if key not in ("id", "type", *required, *optional):
            raise unit.fail(key, f"one of the {kind} keys {', '.join(required + optional)}", key)
    for key in required:
        unit.get(key)
    typed: dict[str, Any] = {}
    if kind == "gate":
        also = unit.inner("also", required=False)
        typed = dict(op=unit.choice("op", GATE_OPS), inputs=unit.pins("inputs"), output=unit.pin("output"),
                     schmitt=unit.flag("schmitt"),
                     also=SecondOutput(also.choice("op", GATE_OPS), also.pin("output")) if also else None)
    elif kind in ("inverter", "buffer"):
        typed = dict(op="not" if kind == "inverter" else "buf", inputs=(unit.pin("input"),),
                     output=unit.pin("output"), schmitt=unit.flag("schmitt"), unbuffered=unit.flag("unbuffered"))
    elif kind in ("counter", "flipflop"):
        clock = unit.inner("clock")
        typed = dict(clock=ClockPin(clock.pin("pin"), clock.choice("edge", ("rising", "falling")),
                                    clock.flag("schmitt")),
                     reset=unit.control("reset"))
        if kind == "counter":
            osc = unit.inner("oscillator", required=False)
            typed.update(mode=unit.choice("mode", ("binary", "bcd", "johnson")), modulus=unit.number("modulus"),
                         synchronous=unit.flag("synchronous"), enable=unit.control("enable", counts=True),
                         stages=unit.pin_map("stages"), decoded=unit.pin_map("decoded"),
                         carry=unit.pin("carry", required=False), carry_out=unit.pin("carry_out", required=False),
                         count_enable=unit.pins("count_enable", required=False),
                         ties=_ties(unit), oscillator=OscillatorPins(
                             osc.pin("input"), osc.pin("output"), osc.pin("output_inv", required=False))
                         if osc else None)
            if not typed["stages"] and not typed["decoded"]:
                raise unit.fail(None, "'stages' or 'decoded' (the outputs pinned out)", "neither")
        else:
            typed.update(kind=unit.choice("kind", ("d",)), d=unit.pin("d"), q=unit.pin("q"),
                         qn=unit.pin("qn", required=False), set=unit.control("set"))
    elif kind == "decoder":
        enables = unit.get("enables", required=False) or []
        if not isinstance(enables, list) or not all(isinstance(e, dict) for e in enables):
            raise unit.fail("enables", "a list of {pin, active}", enables)
        typed = dict(selects=unit.pins("selects"), outputs=unit.pins("outputs"),
                     active=unit.choice("active", ("high", "low")),
                     enables=tuple(_Entry(unit.path, f"{unit.what} enables", e, unit.pin_count).as_control()
                                   for e in enables))
    elif kind == "mux":
        typed = dict(selects=unit.pins("selects"), data=unit.pins("data"), output=unit.pin("output"),
                     output_inv=unit.pin("output_inv", required=False), enable=unit.control("enable"))
    elif kind == "spdt":
        throws = unit.inner("throws")
        typed = dict(control=unit.pin("control"), common=unit.pin("common"),
                     throws=Throws(throws.pin("low"), throws.pin("high")))
    elif kind == "spst":
        typed = dict(control=unit.pin("control"), terminals=unit.pins("terminals"),
                     on_when=unit.choice("on_when", ("high", "low"), False, "high"))
        if len(typed["terminals"]) != 2:
            raise unit.fail("terminals", "two pins", list(typed["terminals"]))
    elif kind == "analog_mux":
        typed = dict(selects=unit.pins("selects"), common=unit.pin("common"), channels=unit.pins("channels"))
    typed.setdefault("op", kind)
    return Unit(str(raw["id"]), kind, _plain(raw), **typed)


def _ties(unit: _Entry) -> dict[int, str]:
    value = unit.get("ties", required=False)
    if value is None:
        return {}
    if not isinstance(value, dict) or any(level not in ("VDD", "VSS") for level in value.values()):
        raise unit.fail("ties", "a mapping of pins to VDD or VSS", value)
    return {unit.pin("ties", int(pin)): str(level) for pin, level in value.items()}


def _check_part(part: _Entry) -> None:
    """The part-level keys every entry needs, before any is read."""
    for key in PART_KEYS:
        part.get(key)
    part.choice("category", CATEGORIES)
    package = part.inner("package")
    package.number("pins")
    part.supply_range()
    if not isinstance(part.data["units"], list) or not part.data["units"]:
        raise part.fail("units", "a list of units", part.data["units"])


def _part_from_entry(name: str, family: str, entry: Any, path: Path = Path("<catalog>")) -> Part:
    if not isinstance(entry, dict):
        raise CatalogError(f"part {name}: expected a mapping of the part's facts, got {entry!r}",
                           file=path, hint=SCHEMA_HINT)
    checked = _Entry(path, f"part {name}", entry)
    _check_part(checked)
    package = entry["package"]
    checked = _Entry(path, f"part {name}", entry, int(package["pins"]))
    units = tuple(_unit_from_entry(checked, i, u) for i, u in enumerate(entry["units"]))
    timing = {key: (_voltage_table(tab) if key != "notes" else tab)
              for key, tab in (entry.get("timing") or {}).items()}
    supply = entry["supply"]
    return Part(
        type=name, family=family, function=str(entry["function"]),
        category=str(entry["category"]), pin_count=int(package["pins"]),
        package=str(package.get("type", "DIP")),
        pins={int(k): str(v) for k, v in entry["pins"].items()},
        power={str(k): checked.pin("power", v) for k, v in entry["power"].items()},
        units=units, supply=(float(supply["min"]), float(supply["max"])),
        timing=timing, source=_plain(entry.get("source") or {}),
        nc=tuple(int(p) for p in entry.get("nc") or ()),
        ties={int(k): str(v) for k, v in (entry.get("ties") or {}).items()},
        shared=tuple(int(p) for p in entry.get("shared") or ()),
        thresholds=_voltage_table(entry.get("thresholds")),
        r_on=_voltage_table(entry.get("r_on")),
        r_out=_voltage_table(entry.get("r_out")),
        notes=str(entry.get("notes") or ""),
        oscillator_k=float(entry["oscillator_k"]) if entry.get("oscillator_k") is not None else None,
        raw=_plain(entry),
    )


def _plain(value: Any) -> Any:
    """Marked YAML containers -> plain dicts and lists (records stay simple)."""
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_plain(v) for v in value]
    return value


def _variant_twin(part: Part, key: str, family: Family, variant: dict) -> Part:
    """The variant's part (74HCT00) that shares an original's (74HC00) pins and function;
    ``key`` is the variant's name in the file (``HCT``, flagged ``hct: true`` on a part)."""
    source = dict(part.source)
    source[key.lower()] = family.source or "from memory"
    return Part(
        type=part.type.replace(part.family, family.name, 1), family=family.name, function=part.function,
        category=part.category, pin_count=part.pin_count, package=part.package, pins=part.pins,
        power=part.power, units=part.units,
        supply=family.supply or part.supply, timing=part.timing,
        source=source, nc=part.nc, ties=part.ties, shared=part.shared,
        thresholds=part.thresholds if family.keeps_thresholds else {}, r_on=part.r_on, r_out=part.r_out,
        notes=(part.notes + " " if part.notes else "") + f"{key}: {variant.get('note', 'TTL input levels')}",
        oscillator_k=part.oscillator_k, variant_of=part.type,
        raw=part.raw,
    )


# ---------------------------------------------------------------- the bin

BIN_KEYS = ("parts", "resistors", "capacitors", "supply", "name", "notes")


@dataclass
class Bin:
    """What is on hand: usable parts at the chosen supply, and passives."""

    path: str
    supply: float
    parts: dict[str, int]
    resistors: list[float]
    capacitors: list[float]
    warnings: list[str]
    markings: dict[str, list[str]]
    lines: dict[str, int]
    excluded: dict[str, int] = field(default_factory=dict)

    def count(self, part_type: str) -> int:
        return self.parts.get(part_type, 0)


def load_bin(path: str | Path, catalog: Catalog, supply: float = 5.0) -> Bin:
    """Read and check a bin file; every problem names the file and line."""
    doc = load_yaml(path)
    return bin_from_yaml(doc, catalog, supply, str(path))


def bin_from_yaml(doc: object, catalog: Catalog, supply: float, path: str) -> Bin:
    """Validate a parsed bin document (split from ``load_bin`` for tests)."""
    if not isinstance(doc, MarkedDict):
        raise BinError("expected a mapping with a 'parts:' key, got "
                       f"{describe(doc) if doc is not None else 'an empty file'}",
                       file=path, line=doc.line if isinstance(doc, MarkedList) else 1,
                       hint="start the file with 'parts:' and one 'MARKING: COUNT' line per chip type")
    for key in doc:
        if key not in BIN_KEYS:
            close = difflib.get_close_matches(str(key), BIN_KEYS, n=1)
            hint = f"did you mean '{close[0]}'?" if close else f"known keys: {', '.join(BIN_KEYS)}"
            raise BinError(f"unknown top-level key {describe(key)}", file=path, line=doc.line_of(key), hint=hint)
    if "parts" not in doc:
        raise BinError("expected a 'parts:' mapping, got none", file=path, line=doc.line,
                       hint="add 'parts:' with one 'MARKING: COUNT' line per chip type")
    raw_parts = doc["parts"]
    if not isinstance(raw_parts, MarkedDict):
        raise BinError("expected 'parts' to be a mapping of marking -> count, got "
                       f"{describe(raw_parts)}", file=path, line=doc.line_of("parts"),
                       hint="write e.g. 'CD4011BE: 2' on its own line under 'parts:'")
    counts: dict[str, int] = {}
    markings: dict[str, list[str]] = {}
    lines: dict[str, int] = {}
    for marking, value in raw_parts.items():
        line = raw_parts.line_of(marking)
        part_type = catalog.normalise(str(marking))
        if part_type is None:
            close = catalog.closest(str(marking))
            hint = f"closest known types: {', '.join(close)}" if close else "see 'binsynth parts'"
            raise BinError(f"unknown part marking {describe(marking)}", file=path, line=line, hint=hint)
        counts[part_type] = counts.get(part_type, 0) + _count_of(value, marking, path, line)
        check_at_most(counts[part_type], CHIPS_PER_PART, f"chips of {part_type}", where="parts",
                      error=BinError, file=path, line=line)
        markings.setdefault(part_type, []).append(str(marking))
        lines.setdefault(part_type, line)
    check_at_most(sum(counts.values()), CHIPS_IN_ALL, "chips in all", where="parts", error=BinError,
                  file=path, line=doc.line_of("parts"))
    resistors = _passives(doc, "resistors", "ohm", path)
    capacitors = _passives(doc, "capacitors", "F", path)
    usable, excluded, warnings = {}, {}, []
    for part_type, count in counts.items():
        part = catalog.parts[part_type]
        if part.suits(supply):
            usable[part_type] = count
        else:
            excluded[part_type] = count
            lo, hi = part.supply
            warnings.append(f"{path}:{lines[part_type]}: {part_type} left out: its supply range is "
                            f"{lo:g}-{hi:g} V and the design runs at {supply:g} V")
    return Bin(path, supply, usable, resistors, capacitors, warnings, markings, lines, excluded)


def _count_of(value: object, marking: object, path: str, line: int) -> int:
    """A chip count: a positive integer, or ``{count: N}``."""
    if isinstance(value, MarkedDict):
        unknown = [k for k in value if k != "count"]
        if unknown:
            raise BinError(f"unknown key {describe(unknown[0])} for {shown(marking)}", file=path,
                           line=value.line_of(unknown[0]), hint="the long form is '{count: N}'")
        if "count" not in value:
            raise BinError(f"expected 'count' for {shown(marking)}, got none", file=path, line=line,
                           hint="write '{count: 2}' or just '2'")
        line, value = value.line_of("count"), value["count"]
    if isinstance(value, bool) or not isinstance(value, int) or value <= 0:
        raise BinError(f"expected a positive whole number of chips for {shown(marking)}, got "
                       f"{describe(value)}",
                       file=path, line=line, hint="write how many chips are on hand, e.g. '2'")
    return value


def _passives(doc: MarkedDict, key: str, unit: str, path: str) -> list[float]:
    """A list of values on hand (``[1k, 4k7, 10k]``); each must parse."""
    if key not in doc or doc[key] is None:
        return []
    values = doc[key]
    if not isinstance(values, MarkedList):
        raise BinError(f"expected '{key}' to be a list such as [1k, 4k7, 10k], got {describe(values)}",
                       file=path, line=doc.line_of(key), hint=f"write {key}: [value, value, ...]")
    check_at_most(len(values), PASSIVE_VALUES, "values", where=key, error=BinError, file=path,
                  line=doc.line_of(key))
    result = []
    for i, text in enumerate(values):
        try:
            number = parse_si(str(text), unit)
        except ValueError as exc:
            raise BinError(f"{key}: {exc}", file=path, line=values.line_of(i),
                           hint="values are written like 4k7, 10k, 6n8, 100n or 4.7nF") from None
        if not 0 < number < float("inf"):
            raise BinError(f"{key}: expected a positive value, got {describe(text)}", file=path,
                           line=values.line_of(i))
        result.append(number)
    return sorted(set(result))
