"""``binsynth plan SPEC --bin BIN``: the main job, printed for a person.

Interface: ``NAME``, ``add_arguments(parser)``, ``run(args) -> int``,
``plan_blocks(design)`` (what the terminal shows), ``requested_outputs(args)``
and ``write_outputs(design, requests, take=..., bin_before=...)`` (the files
asked for, as one transaction), shared with ``binsynth demo``.

The output options come from the exporter registry (``synth.exports``); every
path is checked before the plan is made, and nothing is written unless the
whole run, the take from the bin included, succeeded.
"""

from __future__ import annotations

import argparse
import dataclasses
import sys
from pathlib import Path

from ..bintake import take_from_bin
from ..errors import NotFoundError, ShortError, UsageError
from ..exports import EXPORTERS, Exporter, Output, OutputTransaction, check_outputs
from ..exports.plan_json import failure_to_json, verdict_reason, write_failure_json
from ..exports.wiring import driver_first
from ..findings import MODEL_NAMES, GlitchRecord, RcOffer
from ..flow import make_plan
from ..limits import check_seconds, os_reason
from ..netlist import endpoint_text, pin_table, wire_list
from ..render import counted, print_json, progress, show, Table, Text
from ..units import format_si
from .options import add_effort_argument

NAME = "plan"

SAFETY = ("Cautions: handle CMOS chips with ESD care (grounded mat or wrist strap); never leave a "
          "CMOS input floating (every unused input is tied in this list); stay inside each part's "
          "supply range; decouple every chip with 100 nF; anything touching mains or high-energy "
          "equipment follows local codes and licensed practice.")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("spec", help="the stimulus spec (YAML)")
    parser.add_argument("--bin", required=True, metavar="BIN", help="the bin file (YAML)")
    add_output_arguments(parser)


def add_output_arguments(parser: argparse.ArgumentParser) -> None:
    for entry in EXPORTERS:
        parser.add_argument(entry.option, metavar="FILE", help=entry.description)
    parser.add_argument("--take", action="store_true",
                        help="write the bin back with the parts this plan uses removed (keeps a .bak)")
    parser.add_argument("--fix", action="append", choices=["glitches", "races"], default=[],
                        help="apply remedies: 'glitches' tries another decode choice, a synchronous "
                             "counter, then gating with the clock's still half (the signal is then "
                             "asserted only in the second half of each tick), and says what it did; "
                             "'races' builds the offered RC delay (two Schmitt stages) into each race")
    add_effort_argument(parser)
    # the former seconds option: 0 still skips what-the-bin-lacks, other values only warn
    parser.add_argument("--lacks", type=seconds, default=None, metavar="SECONDS", help=argparse.SUPPRESS)
    parser.add_argument("--exact", choices=["auto", "yes", "no"], default="auto",
                        help="exact (proven) search where sizes allow (auto), always, or never")


LACKS_NOTE = ("--lacks no longer takes seconds: what the bin lacks is searched by work, "
              "at the --effort level (quick skips it, so does --lacks 0)")


def run(args: argparse.Namespace) -> int:
    requests = requested_outputs(args)
    bin_path = Path(args.bin)
    protected = {"the bin's backup": bin_path.with_name(bin_path.name + ".bak")} if args.take else {}
    check_outputs([output for _, output in requests],
                  {"the spec": Path(args.spec), "the bin": bin_path}, protected)
    bin_before = read_bin_bytes(bin_path) if args.take else None
    try:
        with progress(f"planning {Path(args.spec).name}"):
            design = make_plan(args.spec, args.bin, exact=args.exact, fix=args.fix, effort=args.effort,
                               lacks=args.lacks != 0)
    except (ShortError, NotFoundError) as exc:
        _write_verdict(exc, args.json)
        raise
    if args.lacks:
        design = dataclasses.replace(design, plan=dataclasses.replace(
            design.plan, warnings=(*design.plan.warnings, LACKS_NOTE)))
    show_spec_notes(design.spec)
    if not any(output.to_stdout for _, output in requests):
        show(plan_blocks(design))
    write_outputs(design, requests, take=args.take, bin_before=bin_before)
    return 0


def requested_outputs(args: argparse.Namespace) -> list[tuple[Exporter, Output]]:
    """The registered outputs the command line asked for, in registry order."""
    given = vars(args)
    return [(entry, Output(entry.option, given[entry.name])) for entry in EXPORTERS
            if given.get(entry.name) is not None]


def read_bin_bytes(path: Path) -> bytes:
    """The bin as the plan reads it, so the take can tell whether it changed meanwhile."""
    try:
        return path.read_bytes()
    except OSError as exc:
        raise UsageError(f"--bin: cannot read {path}: {os_reason(exc)}",
                         hint="check the path and its permissions") from None


def _write_verdict(error, target: str | None) -> None:
    """``--json`` when no plan was made: the verdict, the reason and everything short."""
    if not target:
        return
    if target == "-":
        print_json(failure_to_json(error))
    else:
        write_failure_json(error, target)


def show_spec_notes(spec) -> None:
    """How the spec was read (an earlier key name, ...), one line each on stderr."""
    for note in spec.notes:
        sys.stderr.write(f"binsynth: {note}\n")


def seconds(text: str) -> float:
    """A number of seconds from 0 to ``limits.SEARCH_SECONDS`` (argparse turns the ValueError
    into exit 2)."""
    try:
        return check_seconds(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(f"{exc}, got {text[:40]!r}") from None


def write_outputs(design, requests: list[tuple[Exporter, Output]], *, take: bool = False,
                  bin_before: bytes | None = None) -> list[str]:
    """Every output asked for, as one transaction; the paths written.

    Texts are staged as temporary files first; the take from the bin (under
    its lock, refused if the bin changed since ``bin_before`` was read) comes
    next; only then are the files put in place.  Any failure writes nothing.
    """
    plan = design.plan
    with OutputTransaction() as transaction:
        for entry, output in requests:
            transaction.stage(output, entry.stdout_text(design) if output.to_stdout else entry.text(design))
        taken = None
        if take:
            taken = take_from_bin(plan.bin_path, plan.bom, design.catalog, supply=plan.supply,
                                  note=plan.name, expect=bin_before)
        written = transaction.commit()
    if taken is not None:
        written.append(str(taken.path))
    return written


def _gate_count(plan) -> int:
    """Gates on chips (an applied RC delay's R and C are no gate)."""
    return len([g for g in plan.network.gates if g.op != "rc"])


def summary_text(design) -> str:
    """The plan's first line: chips by role, gates, and the logic chip count in plain words."""
    plan = design.plan
    roles = {}
    for chip in plan.chips:
        roles[chip.role] = roles.get(chip.role, 0) + 1
    parts = ", ".join(f"{n} {role}" for role, n in sorted(roles.items()))
    gates = _gate_count(plan)
    return (f"plan {plan.name}: {counted(len(plan.chips), 'chip')} ({parts}), {counted(gates, 'gate')}; "
            f"{verdict_reason(plan)}; supply {plan.supply:g} V, "
            f"counting on the {plan.clock_edge} edge of CLK")


def bin_rows(design) -> list[tuple]:
    plan, stock = design.plan, design.stock
    rows = []
    for part, on_hand in sorted(stock.parts.items()):
        used = plan.bom.get(part, 0)
        rows.append((part, used, on_hand, on_hand - used))
    return rows


def signal_rows(design) -> list[tuple]:
    plan, decode = design.plan, design.decode
    rows = []
    for name, info in plan.signals.items():
        source = info.source
        where = f"{source[0]} pin {source[1]}" if source else "-"
        expression = _asserted_expression(decode.signals[name]) if name in decode.signals else ""
        gated = plan.strobed.get(name)
        if gated:
            expression = f"({expression}) and {gated.still_phase} (gated with the clock)"
        registered = plan.registered.get(name)
        if registered:
            expression = (f"registered in {registered.flipflop} ({registered.part}): its D is "
                          f"{expression}, one tick early")
        rows.append((name, info.polarity, where, expression))
    return rows


def polarity_notes(design) -> list[str]:
    """A note for each signal the plan delivers at another level than ``binsynth decode``
    shows, saying why, so the two printouts do not seem to disagree."""
    plan, decode, spec = design.plan, design.decode, design.spec
    notes = []
    for name, info in plan.signals.items():
        if name not in decode.signals or name not in spec.signals:
            continue
        shown, delivered = decode.signals[name].polarity, info.polarity
        if delivered is None or shown == delivered:
            continue
        if spec.signals[name].polarity == "free":
            drives = [s for s, sw in plan.switches.items() if sw.select == name]
            wired = f"; switch {', '.join(drives)} is wired to match" if drives else ""
            notes.append(f"note: {name} is delivered active {delivered}, while 'binsynth decode' shows it "
                         f"active {shown}: its polarity is free in the spec, the decode picks the level with "
                         f"the fewest terms and literals, the plan the level the bin's gates build with the "
                         f"fewest chips, then gates{wired}")
        else:
            notes.append(f"note: {name} is delivered active {delivered}, as the spec asks, while "
                         f"'binsynth decode' shows the cover of its active-{shown} form; the last gate "
                         "inverts it")
    return notes


def _asserted_expression(signal) -> str:
    """The decode as the function that is true while the signal is asserted."""
    if signal.phase == "true":
        return signal.expression
    return f"({signal.expression})'"


def plan_blocks(design) -> list:
    plan = design.plan
    blocks = [Text(summary_text(design)),
              Table("taken from the bin", ("part", "used", "on hand", "left"), bin_rows(design)),
              Table("signals", ("signal", "delivered active", "from", "asserted when (counter pins)"),
                    signal_rows(design))]
    blocks += [Text(line) for line in polarity_notes(design)]
    for name, sw in plan.switches.items():
        blocks.append(Text(f"switch {name}: {sw.ref} section {sw.unit}; common joins "
                           f"{sw.when_control_high} while its control is high"))
    blocks += oscillator_blocks(plan) + power_on_blocks(plan) + rc_delay_blocks(plan) + ladder_blocks(plan) \
        + passive_blocks(plan)
    for chip in plan.chips:
        part = plan.part_of(chip.ref)
        rows = [(r.pin, r.function, r.net or "(open)", ", ".join(r.goes_to)) for r in pin_table(plan, chip.ref)]
        blocks.append(Table(f"{chip.ref}  {part.type}  {part.function}", ("pin", "function", "net", "goes to"),
                            rows))
    if plan.decoupling:
        blocks.append(Table("decoupling (add one per chip, close to its supply pins)", ("chip", "capacitor"),
                            list(plan.decoupling)))
    wires = driver_first(wire_list(plan))
    blocks.append(Table(f"wiring list, driver to load ({len(wires)} wires)", ("net", "from", "to"),
                        [(w.net, _end(plan, w.frm), _end(plan, w.to)) for w in wires]))
    if plan.glitches:
        blocks.append(Table("glitches (a signal briefly wrong on a tick entry; one line per signal and cause)",
                            ("signal", "ticks", "widest ns", "found by", "cause (first entry)"),
                            glitch_rows(plan)))
    blocks += _fix_blocks(plan)
    races = [e for e in plan.coincident_edges if e.race is not False]
    if races:
        blocks.append(Table("races (one signal gates what the other drives, and both switch on one clock edge)",
                            ("signals", "tick"), [(" & ".join(e.signals), e.at_tick) for e in races]))
    separated = [e for e in plan.coincident_edges if e.separated_by]
    for e in separated:
        blocks.append(Text(f"race {' & '.join(e.signals)} at tick {e.at_tick}: separated, {e.separated_by}"))
    others = len(plan.coincident_edges) - len(races) - len(separated)
    if others:
        blocks.append(Text(f"{counted(others, 'pair')} of outputs switch on the same clock edge without one gating "
                           "the other (complementary or independent): no race on this board; see "
                           "coincident_edges in the plan JSON"))
    for remedy in remedy_lines(design):
        blocks.append(Text(f"remedy: {remedy}"))
    if design.lacks is not None:
        blocks.append(Text(design.lacks.text()))
    for warning in plan.warnings:
        blocks.append(Text(f"warning: {warning}"))
    for caution in dict.fromkeys(plan.cautions):
        blocks.append(Text(f"caution: {caution}"))
    if not plan.cautions:
        blocks.append(Text(SAFETY))
    return blocks


def glitch_rows(plan) -> list[tuple]:
    """The glitches grouped: one row per signal and mechanism (a transient state of the
    count, or unequal gate paths), its ticks listed together, the widest pulse."""
    groups: dict[tuple, list[GlitchRecord]] = {}
    for g in plan.glitches:
        groups.setdefault((g.signal, g.mechanism, bool(g.harmless)), []).append(g)
    rows = []
    for (signal, _, _), items in groups.items():
        ticks = ", ".join(str(g.at_tick) for g in sorted(items, key=lambda g: g.at_tick))
        widest = max(float(g.widest_ns) for g in items)
        models = sorted({MODEL_NAMES.get(m, m).replace("_", " ") for g in items for m in g.models})
        cause = items[0].cause
        if all(g.harmless for g in items):
            cause = f"harmless: {items[0].harmless_why}; {cause}"
        rows.append((signal, ticks, round(widest, 1), ", ".join(models), cause))
    return rows


def remedy_lines(design) -> list[str]:
    """Each remedy once per signal, with the ticks it applies to (not once per tick)."""
    by_glitch = design.remedies.by_glitch if design.remedies else {}
    lines: dict[tuple[str, str], list[int]] = {}
    for (signal, tick), texts in sorted(by_glitch.items()):
        for text in texts:
            if not text.startswith("note:"):
                lines.setdefault((signal, text), []).append(tick)
    if not by_glitch:
        return list(design.remedies.text) if design.remedies else []
    return [f"{signal} (tick{'s' if len(ticks) > 1 else ''} {', '.join(map(str, ticks))}): {text}"
            for (signal, text), ticks in lines.items()]


def _fix_blocks(plan) -> list:
    """What ``--fix glitches`` did per signal, and the RC delays offered (glitchfix)."""
    blocks = []
    fixes = plan.timing_fixes or []
    if fixes:
        asked = " or steady: true" if any(r.asked_by for r in fixes) else ""
        blocks.append(Table(f"glitch fixes (--fix glitches{asked}; glitches re-analysed after the fix)",
                            ("signal", "fix applied", "cost", "glitch ticks before", "after", "how"),
                            [(r.signal, " + ".join(r.remedies_applied or ["note"]).replace("_", " "),
                              f"+{counted(r.cost.chips, 'chip')}, +{counted(r.cost.gates, 'gate')}",
                              ", ".join(map(str, r.glitches_before)),
                              ", ".join(map(str, r.glitches_after)) or "none",
                              r.detail + ("".join(f"; {t.remedy.replace('_', ' ')}: {t.result}"
                                                  for t in r.tried if "not applicable" in t.result)
                                          if not r.applied else ""))
                             for r in fixes]))
    offers = [o for o in plan.rc_offers if not o.applied]
    races = [o for o in offers if o.problem in ("race", "coincident") and o.applicable]
    if races:
        blocks.append(Text(_race_offers_text(races)))
    refused: dict[str, list[str]] = {}
    for offer in offers:
        if not offer.applicable:
            why = offer.why_not or offer.why
            refused.setdefault(why, []).append(f"{offer.delayed} ({offer.problem})")
        elif offer not in races:
            blocks.append(Text(_offer_text(offer)))
    for why, names in refused.items():
        blocks.append(Text(f"RC delay on {', '.join(names)}: not offered, {why}"))
    if plan.glitches and plan.timing_fixes is None:
        blocks.append(Text("glitches: --fix glitches tries the remedies, says what each costs, and "
                           "offers an RC delay where a logic fix would take a new chip"))
    return blocks


def _race_offers_text(races: list[RcOffer]) -> str:
    """The race offers share one R and C (a quarter tick): one block for all of them."""
    first = races[0]
    values = first.values
    rise, fall = values.rising_ns, values.falling_ns
    names = ", ".join(o.delayed for o in races)
    only_if = "" if any(o.problem == "race" for o in races) else (
        "; needed only if your circuit clocks, resets or gates one of these with the other")
    return "\n".join([
        f"offer (not applied): an RC delay of about a quarter tick on {names}, each of which switches "
        "on the same clock edge as another signal: its edges then come clear "
        f"of the other's and the level sampled at the end of each tick is unchanged{only_if}",
        f"  R {values.r}, C {values.c} into {_receiver(first)}: {values.formula}; delay min / typ / "
        f"max rising {rise[0]:g} / {rise[1]:g} / {rise[2]:g} ns, falling {fall[0]:g} / {fall[1]:g} / "
        f"{fall[2]:g} ns",
        "  wiring: " + "; ".join(values.wiring) + (
            "; likewise for the others from their own source pins" if len(races) > 1 else "")])


def _offer_text(offer: RcOffer) -> str:
    head = f"offer (not applied): an RC delay on {offer.delayed} for the {offer.problem}"
    if not offer.applicable or offer.values is None:
        return f"{head}: not applicable, {offer.why_not or offer.why}"
    values = offer.values
    rise, fall = values.rising_ns, values.falling_ns
    return "\n".join([
        f"{head}: {offer.why}",
        f"  R {values.r}, C {values.c} into {_receiver(offer)}: {values.formula}; delay min / typ / "
        f"max rising {rise[0]:g} / {rise[1]:g} / {rise[2]:g} ns, falling {fall[0]:g} / {fall[1]:g} / "
        f"{fall[2]:g} ns",
        "  wiring: " + "; ".join(values.wiring)])


def _receiver(offer: RcOffer) -> str:
    return "a plain CMOS input" if offer.receiver == "plain-input" else f"a {offer.receiver} Schmitt input"


def oscillator_blocks(plan) -> list:
    """The on-board clock: where, the formula with its numbers, the frequency spread."""
    osc = plan.oscillator
    if osc is None:
        return []
    hz = lambda f: format_si(f, "Hz") if f is not None else "-"  # noqa: E731
    if osc.opened:
        where = "a new chip from the bin"
    elif osc.site.kind == "counter-stage":
        where = "the counter chip itself"
    else:
        where = "a spare unit of a chip already in the plan"
    parts = ", ".join(f"{ref} = {plan.passive(ref).label()}" for ref in osc.passives)
    clock_pins = ", ".join(f"{r} pin {p}" for r, p in plan.nets.get(osc.clock_net, [])
                           if not r.startswith(("R", "C")))
    tol = f"{osc.tolerance:.0%}" + ("" if osc.tolerance_given else " (default: the spec sets none)")
    fmax = (f"; counter maximum clock {osc.counter_fmax_mhz:g} MHz at {plan.supply:g} V"
            if osc.counter_fmax_mhz else "")
    blocks = [Text(f"oscillator: {osc.site.describe()} on {osc.ref} ({where}); {parts}; "
                   f"net {osc.clock_net} joins {clock_pins}"),
              Text(f"oscillator formula: {osc.formula}"),
              Text(f"oscillator numbers: {osc.worked}")]
    rows = [("typical thresholds", "", "", hz(osc.f_nom))]
    rows += [(label, f"{p:g}", f"{m:g}", hz(f)) for label, p, m, f in osc.corners]
    blocks.append(Table(f"oscillator frequency: wanted {hz(osc.wanted_hz)}, nominal {hz(osc.f_nom)}, "
                        f"range {hz(osc.f_min)} .. {hz(osc.f_max)}, tolerance {tol}{fmax}",
                        ("thresholds", "VT+ V", "VT- V", "frequency"), rows))
    return blocks


def power_on_blocks(plan) -> list:
    """The power-on reset: where, R and C, and the pulse over the threshold spread."""
    por = plan.power_on_reset
    if por is None:
        return []
    where = "a new chip from the bin" if por.opened else "a spare unit of a chip already in the plan"
    resets = ", ".join(f"{r} pin {p}" for r, p in por.resets)
    low, typ, high = (format_si(t, "s") for t in por.width_s)
    return [Text(f"power-on reset: Schmitt {por.part} unit {por.unit} on {por.ref} ({where}); "
                 f"{', '.join(f'{ref} = {plan.passive(ref).label()}' for ref in por.passives)}; holds "
                 f"{resets} {por.active} for {typ} after power-up ({low} .. {high} over the threshold "
                 f"spread; wanted {format_si(por.wanted_s, 's')}): {por.formula}")]


def rc_delay_blocks(plan) -> list:
    """Each RC delay built into the plan: who asked, stages, R and C, and its times."""
    blocks = []
    for d in plan.rc_delays:
        stages = " and ".join(f"{ref} unit {unit}" for ref, unit in d.stages)
        new = f" ({', '.join(d.new_chips)} new from the bin)" if d.new_chips else ""
        rise = " .. ".join(format_si(t, "s") for t in (d.rise_s[0], d.rise_s[2]))
        fall = " .. ".join(format_si(t, "s") for t in (d.fall_s[0], d.fall_s[2]))
        blocks.append(Text(
            f"RC delay on {d.signal} ({d.asked_by}): Schmitt {d.part} stages {stages}{new}; "
            f"{', '.join(f'{ref} = {plan.passive(ref).label()}' for ref in d.passives)}; the delayed "
            f"output is net {d.nets['output']}; rising edge {format_si(d.rise_s[1], 's')} ({rise}), "
            f"falling {format_si(d.fall_s[1], 's')} ({fall}) over the threshold spread and R, C "
            f"tolerance: {d.formula}"))
    return blocks


def ladder_blocks(plan) -> list:
    """Each staircase: values, every code's level, output resistance, DNL / INL."""
    blocks = []
    for name, lad in plan.ladders.items():
        drivers = ", ".join(f"tick bit {b} = {net} ({ref} pin {pin})"
                            for b, (ref, pin, net) in zip(lad.bits, lad.drivers))
        ohm = lambda v: format_si(v, "Ω")  # noqa: E731
        routed = f"; routed by switch {', '.join(lad.routed_by)}" if lad.routed_by else ""
        blocks.append(Text(f"staircase {name}: {lad.kind} ladder, {lad.construction} ({lad.why}); "
                           f"driven by {drivers}; output on net {name}{routed}"))
        blocks.append(Text(f"staircase {name} output resistance: {ohm(lad.ideal_output_resistance)} "
                           f"ideal, {ohm(lad.output_resistance)} with the drivers' "
                           f"{ohm(lad.r_out_driver)} each ({lad.r_out_note.split(';')[0]}); the drivers move a "
                           f"level by at most {lad.driver_error_lsb:.3f} LSB"))
        rows = [(code, format(code, f"0{len(lad.bits)}b"), f"{ideal:.4f}", f"{level:.4f}",
                 f"{(level - ideal) * 1000:+.2f}")
                for code, (ideal, level) in enumerate(zip(lad.ideal_levels, lad.levels))]
        blocks.append(Table(f"staircase {name} levels at {plan.supply:g} V "
                            f"(ideal = VDD x code / {len(lad.ideal_levels) if lad.kind == 'r-2r' else len(lad.ideal_levels) - 1})",
                            ("code", "bits", "ideal V", "with drivers V", "difference mV"), rows))
        w, m = lad.worst, lad.monte
        tol = f"{lad.tolerance:.0%}" + ("" if lad.tolerance_given else " (default)")
        blocks.append(Text(
            f"staircase {name} linearity (endpoint fit, LSB) with {tol} resistors: nominal DNL "
            f"{lad.nominal.worst_dnl:+.4f}, INL {lad.nominal.worst_inl:+.4f}; worst case "
            f"({w.method}, {w.corners} corners) DNL {w.worst_dnl:+.3f} at code {w.worst_dnl_code}, "
            f"INL {w.worst_inl:+.3f} at code {w.worst_inl_code}, "
            f"{'monotonic' if w.monotonic else 'NOT monotonic'}; Monte Carlo ({m.trials} trials, "
            f"seed {m.seed}, {m.distribution}) |DNL| p95 {m.dnl_abs_p95:.3f} max {m.dnl_abs_max:.3f}, "
            f"|INL| p95 {m.inl_abs_p95:.3f} max {m.inl_abs_max:.3f}"))
    return blocks


def passive_blocks(plan) -> list:
    """Every resistor and capacitor with the nets at its two ends."""
    if not plan.passives:
        return []
    return [Table(f"resistors and capacitors ({len(plan.passives)})",
                  ("ref", "value", "end 1", "end 2", "purpose"),
                  [(p.ref, p.label(), p.ends[0], p.ends[1], p.purpose) for p in plan.passives])]


def _end(plan, end) -> str:
    if isinstance(end, str):
        return end
    return endpoint_text(plan, *end)
