"""The records that pass between the stages are frozen, name their field types, and a stage
that adds to a plan returns a new record instead of changing the one it was given
(DEVELOPERS.md, "What is still loose"; issue 13)."""

from __future__ import annotations

import copy
import dataclasses
import typing

import pytest

from synth.analogparts import AppliedDelay, LadderPlan, OscillatorPlan, PowerOnReset, Site
from synth.counter import CounterChip, CounterPlan, ResetDecode
from synth.decode import Decode, derive
from synth.inventory import data_path, example_path, load_bin, load_catalog
from synth.model import Design
from synth.netlist import BoardSignal, BoardSwitch, ChipInstance, Plan, SwitchPath
from synth.network import Network
from synth.packing import pack
from synth.spec import load_spec
from synth.stages import add_analog_parts, counted_first, map_decode, mapping_inputs
from synth.timing import Trace
from synth.wishlist import BinLacks

RECORDS = (Plan, ChipInstance, CounterPlan, CounterChip, ResetDecode, Decode, Network, Trace, BinLacks,
           Design, Site, OscillatorPlan, LadderPlan, PowerOnReset, AppliedDelay, BoardSignal, BoardSwitch,
           SwitchPath)


@pytest.mark.parametrize("record", RECORDS, ids=lambda r: r.__name__)
def test_stage_records_are_frozen(record):
    assert dataclasses.is_dataclass(record) and record.__dataclass_params__.frozen


@pytest.mark.parametrize("record", (Plan, CounterPlan, Decode, Network, Trace, BinLacks, Design),
                         ids=lambda r: r.__name__)
def test_stage_records_name_every_field_type(record):
    # get_type_hints resolves every annotation, so each named type is importable where the record lives
    hints = typing.get_type_hints(record)
    loose = [name for name, hint in hints.items() if "Any" in repr(hint)]
    assert not loose, loose


def test_plan_refuses_an_attribute_set_from_outside():
    plan = Plan(name="p", spec_path="", bin_path="", supply=5.0, chips=[], nets={}, signals={}, switches={},
                bom={}, decoupling=(), clock_edge="rising", counter=CounterPlan(
                    (), (), 1, (0,), frozenset(), "rising", True, None), network=Network([], {}, ()))
    with pytest.raises(dataclasses.FrozenInstanceError):
        plan.oscillator = None   # type: ignore[misc]


def _packed_example(name: str):
    catalog = load_catalog()
    spec = load_spec(example_path(f"{name}.yaml"))
    stock = load_bin(data_path("bins", f"{name}.yaml"), catalog, spec.supply)
    counter_plan = counted_first(spec, stock, catalog)
    decode = derive(spec, counter_plan)
    library, polarity = mapping_inputs(spec, stock, catalog, counter_plan, decode)
    network = map_decode(decode, counter_plan, library, polarity, "auto", "quick")
    return pack(network, counter_plan, spec, stock, catalog), spec, stock, catalog


def test_adding_the_analog_parts_leaves_the_packed_plan_as_it_was():
    # adc_staircase asks for an RC clock oscillator and a staircase: chips, passives, pins and
    # nets are added, all in a new record.
    plan, spec, stock, catalog = _packed_example("adc_staircase")
    before = copy.deepcopy(plan)
    added = add_analog_parts(plan, spec, stock, catalog)
    assert plan == before
    assert plan.oscillator is None and not plan.ladders and not plan.passives
    assert added.oscillator is not None and added.ladders
    assert {p.ref for p in added.passives} >= set(added.oscillator.passives)
    assert all(ref in {p.ref for p in added.passives} for lad in added.ladders.values() for ref in lad.passives)


@pytest.mark.parametrize("record", (BoardSignal, BoardSwitch, SwitchPath), ids=lambda r: r.__name__)
def test_plan_entries_annotate_every_field(record):
    hints = typing.get_type_hints(record)
    assert set(hints) == {f.name for f in dataclasses.fields(record)}
    assert not [name for name, hint in hints.items() if "Any" in repr(hint) or hint is dict]


def test_plan_holds_its_signals_and_switches_as_records():
    # adc_staircase routes one switch (adc_in) between the staircase and a rail
    hints = typing.get_type_hints(Plan)
    assert hints["signals"] == dict[str, BoardSignal] and hints["switches"] == dict[str, BoardSwitch]
    plan, _spec, _stock, _catalog = _packed_example("adc_staircase")
    assert plan.signals and all(isinstance(s, BoardSignal) for s in plan.signals.values())
    assert plan.switches and all(isinstance(s, BoardSwitch) for s in plan.switches.values())
    sw = next(iter(plan.switches.values()))
    assert all(isinstance(p, SwitchPath) for p in sw.paths)
    with pytest.raises(dataclasses.FrozenInstanceError):
        sw.on_net = "elsewhere"   # type: ignore[misc]
    # the plan JSON's key order (formats.md) comes from to_json()
    assert list(sw.to_json()) == ["ref", "when_control_high", "unit", "part", "kind", "select", "on", "off",
                                  "control_net", "control_pin", "common_pin", "common_net", "complement_net",
                                  "sections"]
    assert list(next(iter(plan.signals.values())).to_json()) == ["polarity", "source", "net"]
