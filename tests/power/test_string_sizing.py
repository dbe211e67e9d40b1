"""String sizing against NEC 690.7(A) worked examples, Table 690.7(A) and the Sandia model."""

from __future__ import annotations

import dataclasses
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.power.string_sizing import (
    StringDesign,
    cell_temperature_rise,
    size_strings,
    voc_correction_factor,
)
from layout.scene.inverter import InverterSpec, generic_inverter_7kw
from layout.scene.modules import generic_60_cell

# An inverter whose only binding limit is its maximum DC input (a wide tracking window).
WIDE = InverterSpec(max_dc_voltage_v=500.0, mppt_min_v=50.0, mppt_max_v=500.0,
                    start_voltage_v=50.0, mppt_inputs=2, max_input_current_a=30.0,
                    max_strings_per_input=2, ac_power_w=5000.0)


def _module(voc, beta, *, vmp=None, gamma=-0.37, max_v=1000.0):
    vmp = vmp or round(voc * 0.82, 2)
    return dataclasses.replace(generic_60_cell(300.0), voc_v=voc, vmp_v=vmp,
                               imp_a=round(300.0 / vmp, 2), isc_a=round(300.0 / vmp * 1.06, 2),
                               temp_coeff_voc_pct=beta, temp_coeff_pmax_pct=gamma,
                               max_system_voltage_v=max_v)


def test_coefficient_method_against_published_worked_examples():
    # SurgePV, "Solar String Voltage Calculator: NEC 690.7 Temperature-Corrected Method",
    # worked example "400W Residential Module, Los Angeles": Voc 45.0 V, -0.28 %/°C,
    # T_min 3 °C -> factor 1.0616 (printed to 4 decimals)
    factor = voc_correction_factor(3.0, method="coefficient", temp_coeff_voc_pct=-0.28)
    assert factor == pytest.approx(1.0616, abs=5e-5)
    assert 45.0 * factor == pytest.approx(47.772, abs=5e-4)
    # maker-label-studio, "NEC 690 Solar PV String Sizing Guide", worked example: Voc 40 V,
    # -0.30 %/°C, record cold -10 °C -> 44.2 V per module; with a 500 V inverter at most
    # 11 modules in series (486.2 V)
    sizing = size_strings(_module(40.0, -0.30), WIDE,
                          StringDesign(record_low_c=-10.0, design_high_c=30.0))
    assert sizing.voc_cold_v == pytest.approx(44.2, abs=0.05)
    assert sizing.max_length == 11
    assert 11 * sizing.voc_cold_v == pytest.approx(486.2, abs=0.05)
    assert "inverter maximum DC input 500 V" in sizing.max_length_limit


# NFPA 70 Table 690.7(A), crystalline and multicrystalline silicon: factors at a few lowest
# expected ambient temperatures, from memory of the 2017-2023 editions (no copy at hand).
@pytest.mark.parametrize("temp_c, factor", [
    (25.0, 1.00), (24.0, 1.02), (20.0, 1.02), (19.5, 1.04), (10.0, 1.06), (0.0, 1.10),
    (-0.5, 1.12), (-5.0, 1.12), (-10.0, 1.14), (-18.0, 1.18), (-25.0, 1.20), (-26.0, 1.21),
    (-35.0, 1.23), (-40.0, 1.25),
])
def test_table_690_7_a_factors(temp_c, factor):
    assert voc_correction_factor(temp_c, method="table") == factor


def test_table_method_refuses_temperatures_below_the_table():
    with pytest.raises(InputError) as info:
        voc_correction_factor(-41.0, method="table")
    assert info.value.field == "record_low_c" and "-40" in info.value.allowed
    with pytest.raises(InputError):
        StringDesign(record_low_c=-45.0, design_high_c=30.0, voc_method="table")


def test_table_method_sets_the_longest_string():
    design = StringDesign(record_low_c=-26.0, design_high_c=30.0, voc_method="table")
    sizing = size_strings(_module(40.0, -0.30), WIDE, design)
    assert sizing.voc_factor == 1.21
    assert sizing.max_length == math.floor(500.0 / (40.0 * 1.21))  # 10


def test_roof_rise_is_the_sandia_model_at_1000_w_m2():
    # King, Boyson & Kratochvil (2004), SAND2004-3535, Eq. 11-12 and Table 1 (close mount,
    # glass/glass: a = -2.98, b = -0.0471, ΔT = 1 °C; from memory): at E = 1000 W/m² and
    # 1 m/s, T_cell - T_air = E·exp(a + b·WS) + E/1000·ΔT
    expected = 1000.0 * math.exp(-2.98 - 0.0471 * 1.0) + 1.0
    assert cell_temperature_rise("close_mount_glass_glass") == pytest.approx(expected,
                                                                              abs=1e-9)
    # open racks run cooler than close roof mounts
    assert cell_temperature_rise("open_rack_glass_glass") < expected


def test_shortest_string_from_vmp_at_the_hot_cell_temperature():
    module = _module(40.0, -0.30, vmp=33.0, gamma=-0.40)
    inverter = dataclasses.replace(WIDE, mppt_min_v=200.0, start_voltage_v=150.0)
    sizing = size_strings(module, inverter,
                          StringDesign(record_low_c=-10.0, design_high_c=40.0, roof_rise_c=30.0))
    vmp_hot = 33.0 * (1 - 0.004 * (70.0 - 25.0))  # 27.06 V at a 70 °C cell
    assert sizing.cell_temp_hot_c == 70.0 and sizing.roof_rise_source == "typed by the user"
    assert sizing.vmp_hot_v == pytest.approx(vmp_hot)
    assert sizing.min_length == math.ceil(200.0 / vmp_hot)  # 8
    assert "tracking window bottom 200 V" in sizing.min_length_limit
    lines = "\n".join(sizing.lines())
    assert "-10 °C" in lines and "40 °C" in lines and "typed by the user" in lines


def test_strings_per_input_from_current_and_count():
    module = generic_60_cell(350.0)  # Isc = 1.06 · 350 / 33 = 11.24 A
    sizing = size_strings(module, generic_inverter_7kw(),
                          StringDesign(record_low_c=-10.0, design_high_c=35.0))
    assert sizing.strings_per_input == 1  # 2 × 11.24 A > 20 A
    assert "20 A" in sizing.strings_per_input_limit
    roomy = dataclasses.replace(generic_inverter_7kw(), max_input_current_a=40.0)
    sizing = size_strings(module, roomy, StringDesign(record_low_c=-10.0, design_high_c=35.0))
    assert sizing.strings_per_input == 2
    assert sizing.strings_per_input_limit == "inverter's most strings per input"
    assert sizing.dc_ac_ratio(20) == pytest.approx(20 * 350.0 / 7600.0)


def test_code_limit_and_module_rating_bind():
    module = _module(40.0, -0.30, max_v=600.0)
    inverter = dataclasses.replace(WIDE, max_dc_voltage_v=1000.0, mppt_max_v=1000.0)
    design = StringDesign(record_low_c=-10.0, design_high_c=30.0, code_max_voltage_v=1000.0)
    sizing = size_strings(module, inverter, design)
    assert sizing.max_length == 13 and "module maximum system voltage 600 V" in \
        sizing.max_length_limit
    design = dataclasses.replace(design, code_max_voltage_v=600.0)
    module = _module(40.0, -0.30, max_v=1000.0)
    sizing = size_strings(module, inverter, design)
    assert sizing.max_length == 13 and "NEC 690.7" in sizing.max_length_limit


def test_bad_input_names_the_field_value_and_limit():
    design = StringDesign(record_low_c=-10.0, design_high_c=30.0)
    bare = dataclasses.replace(generic_60_cell(300.0), voc_v=None)
    with pytest.raises(InputError) as info:
        size_strings(bare, WIDE, design)
    assert info.value.field == "module.voc_v"
    with pytest.raises(InputError) as info:
        StringDesign(record_low_c=30.0, design_high_c=20.0)
    assert info.value.field == "record_low_c" and "20" in info.value.allowed
    with pytest.raises(InputError) as info:
        size_strings(generic_60_cell(300.0), WIDE, StringDesign(design_high_c=30.0))
    assert info.value.field == "strings.record_low_c"
    narrow = dataclasses.replace(WIDE, mppt_min_v=480.0, start_voltage_v=50.0)
    with pytest.raises(InputError) as info:
        size_strings(generic_60_cell(300.0), narrow, design)
    assert info.value.field == "string length"
    with pytest.raises(InputError) as info:
        StringDesign(record_low_c=-10.0, design_high_c=30.0, code_max_voltage_v=800.0)
    assert info.value.field == "code_max_voltage_v"


@settings(max_examples=60, deadline=None)
@given(voc=st.floats(20.0, 60.0), beta=st.floats(-0.5, -0.1), low=st.floats(-40.0, 20.0),
       top=st.floats(300.0, 1000.0))
def test_longest_string_is_the_largest_within_every_voltage_limit(voc, beta, low, top):
    module = _module(voc, beta)
    inverter = dataclasses.replace(WIDE, max_dc_voltage_v=top, mppt_max_v=top)
    design = StringDesign(record_low_c=low, design_high_c=45.0, code_max_voltage_v=1000.0)
    try:
        sizing = size_strings(module, inverter, design)
    except InputError:
        return  # no length fits this window: refused, never a wrong answer
    limit = min(top, 1000.0)
    assert sizing.max_length * sizing.voc_cold_v <= limit + 1e-6
    assert (sizing.max_length + 1) * sizing.voc_cold_v > limit - 1e-6 or \
        (sizing.max_length + 1) * sizing.vmp_cold_v > inverter.mppt_max_v - 1e-6
    assert sizing.min_length * sizing.vmp_hot_v >= inverter.mppt_min_v - 1e-6
