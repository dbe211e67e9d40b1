"""InverterSpec and the module's electrical data: checks naming the field, round trips."""

from __future__ import annotations

import dataclasses

import pytest

from layout.errors import InputError
from layout.scene.inverter import InverterSpec, generic_inverter_7kw, generic_inverter_50kw
from layout.scene.modules import (
    ELECTRICAL_FIELDS,
    ModuleSpec,
    generic_60_cell,
    generic_72_cell,
    generic_108_half_cell,
)


def test_generic_inverters_are_valid_and_round_trip():
    for spec in (generic_inverter_7kw(), generic_inverter_50kw(count=3)):
        assert InverterSpec.from_dict(spec.to_dict()) == spec
        assert spec.mppt_min_v < spec.mppt_max_v <= spec.max_dc_voltage_v
    big = generic_inverter_50kw(count=3)
    assert big.total_inputs == 18 and big.total_ac_power_w == 150_000.0


@pytest.mark.parametrize("change, field", [
    ({"max_dc_voltage_v": 2000.0}, "max_dc_voltage_v"),
    ({"mppt_min_v": 700.0}, "mppt_min_v"),          # above the maximum DC input
    ({"mppt_max_v": 90.0}, "mppt_max_v"),           # below the window's bottom
    ({"start_voltage_v": 0.0}, "start_voltage_v"),
    ({"mppt_inputs": 0}, "mppt_inputs"),
    ({"mppt_inputs": 1.5}, "mppt_inputs"),
    ({"max_input_current_a": 0.1}, "max_input_current_a"),
    ({"max_strings_per_input": 21}, "max_strings_per_input"),
    ({"ac_power_w": -5.0}, "ac_power_w"),
    ({"count": True}, "count"),
])
def test_bad_inverter_fields_are_named(change, field):
    with pytest.raises(InputError) as info:
        dataclasses.replace(generic_inverter_7kw(), **change)
    assert info.value.field == field
    assert info.value.allowed


def test_inverter_document_errors():
    data = generic_inverter_7kw().to_dict()
    data["colour"] = "red"
    with pytest.raises(InputError, match="colour"):
        InverterSpec.from_dict(data)
    data = generic_inverter_7kw().to_dict()
    del data["ac_power_w"]
    with pytest.raises(InputError) as info:
        InverterSpec.from_dict(data)
    assert info.value.field == "ac_power_w"


@pytest.mark.parametrize("make", [generic_60_cell, generic_72_cell, generic_108_half_cell])
def test_generic_modules_carry_consistent_electrical_data(make):
    spec = make(400.0)
    assert spec.missing_electrical() == ()
    # Pmax = Vmp · Imp (definition of the maximum-power point), to the datasheet's rounding
    assert spec.vmp_v * spec.imp_a == pytest.approx(spec.power_w, rel=0.01)
    assert spec.vmp_v < spec.voc_v and spec.imp_a < spec.isc_a
    # plausible crystalline silicon (common practice): Vmp/Voc about 0.8, Imp/Isc about 0.94
    assert 0.75 < spec.vmp_v / spec.voc_v < 0.9
    assert 0.9 < spec.imp_a / spec.isc_a < 0.97
    assert ModuleSpec.from_dict(spec.to_dict()) == spec


def test_module_without_electrical_data_keeps_its_short_document():
    spec = ModuleSpec(1.7, 1.0, 350.0, cell_rows=10, cell_columns=6)
    assert spec.missing_electrical() == ELECTRICAL_FIELDS
    assert not set(ELECTRICAL_FIELDS) & set(spec.to_dict())
    assert ModuleSpec.from_dict(spec.to_dict()) == spec


@pytest.mark.parametrize("change, field", [
    ({"voc_v": -1.0}, "voc_v"),
    ({"vmp_v": 45.0}, "vmp_v"),                    # above Voc
    ({"imp_a": 11.0}, "imp_a"),                    # above Isc
    ({"imp_a": 9.0}, "imp_a"),                     # Vmp · Imp far from power_w
    ({"temp_coeff_voc_pct": 0.3}, "temp_coeff_voc_pct"),
    ({"temp_coeff_pmax_pct": -2.0}, "temp_coeff_pmax_pct"),
    ({"max_system_voltage_v": 5000.0}, "max_system_voltage_v"),
])
def test_bad_electrical_fields_are_named(change, field):
    with pytest.raises(InputError) as info:
        dataclasses.replace(generic_60_cell(350.0), **change)
    assert info.value.field == field
    assert info.value.allowed
