import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.scene.modules import (
    MAX_EFFICIENCY,
    ModuleSpec,
    generic_60_cell,
    generic_72_cell,
    generic_108_half_cell,
)


def test_generic_sizes_match_typical_module_sizes():
    # REFERENCES.md "typical module sizes" (common practice): 1650 × 991, 1956 × 991,
    # 1722 × 1134 mm
    assert (generic_60_cell(330).length_m, generic_60_cell(330).width_m) == (1.650, 0.991)
    assert (generic_72_cell(400).length_m, generic_72_cell(400).width_m) == (1.956, 0.991)
    half = generic_108_half_cell(410)
    assert (half.length_m, half.width_m) == (1.722, 1.134)
    assert generic_60_cell(330).cell_count == 60
    assert generic_72_cell(400).cell_count == 72
    assert half.cell_count == 108


def test_area_and_efficiency():
    spec = generic_60_cell(330)
    assert spec.area_m2 == pytest.approx(1.650 * 0.991)
    # efficiency = P / (A · 1000 W/m²), STC irradiance of ASTM G173 AM1.5 (REFERENCES.md)
    assert spec.efficiency == pytest.approx(330 / (1.650 * 0.991 * 1000))


def test_efficiency_above_single_junction_limit_is_refused():
    # Shockley & Queisser (1961): single-junction limit about 33 % (REFERENCES.md). A 1.65 m ×
    # 0.991 m module at 600 W would be 36.7 % efficient.
    with pytest.raises(InputError) as err:
        ModuleSpec(1.650, 0.991, 600, 10, 6)
    assert err.value.field == "power_w"
    limit = MAX_EFFICIENCY * 1.650 * 0.991 * 1000
    assert f"{limit:.0f} W" in str(err.value)
    assert "1.65 m × 0.991 m" in str(err.value)
    # just below the limit is accepted, the limit itself is not
    ModuleSpec(1.650, 0.991, limit * 0.999, 10, 6)
    with pytest.raises(InputError):
        ModuleSpec(1.650, 0.991, limit, 10, 6)
    assert 0.33 <= MAX_EFFICIENCY < 0.34


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"length_m": 0}, "length_m"),
        ({"width_m": -1}, "width_m"),
        ({"width_m": 2.0}, "width_m"),  # wider than long
        ({"power_w": 0}, "power_w"),
        ({"cell_rows": 0}, "cell_rows"),
        ({"cell_columns": 2.5}, "cell_columns"),
        ({"cell_columns": 5}, "cell_columns"),  # 5 columns cannot split over 3 diodes
        ({"substring_axis": "width", "cell_rows": 10}, "cell_rows"),
        ({"bypass_diodes": 0}, "bypass_diodes"),
        ({"substring_axis": "diagonal"}, "substring_axis"),
        ({"name": 3}, "name"),
    ],
)
def test_validation_names_the_field(kwargs, field):
    base = {"length_m": 1.65, "width_m": 0.991, "power_w": 330, "cell_rows": 10,
            "cell_columns": 6}
    with pytest.raises(InputError) as err:
        ModuleSpec(**{**base, **kwargs})
    assert err.value.field == field


def test_cell_centres_even_grid():
    spec = generic_60_cell(330)
    centres = spec.cell_centres()
    assert centres.shape == (60, 2)
    # cell k: row k // 6 along the length, column k % 6 across the width
    assert centres[0] == pytest.approx([1.650 / 20, 0.991 / 12])
    assert centres[7] == pytest.approx([1.5 * 1.650 / 10, 1.5 * 0.991 / 6])
    assert centres.mean(axis=0) == pytest.approx([1.650 / 2, 0.991 / 2])


def test_substrings_are_column_bands_along_the_length():
    # REFERENCES.md: 3 bypass diodes, each across one third of the cells (common practice)
    spec = generic_60_cell(330)
    sub = spec.substring_of_cell(np.arange(60))
    assert np.bincount(sub).tolist() == [20, 20, 20]
    columns = np.arange(60) % 6
    assert (sub == columns // 2).all()  # 2 columns per substring, each the full length
    assert spec.substring_of_cell(59) == 2
    across = ModuleSpec(1.65, 0.991, 330, 12, 6, substring_axis="width")
    sub_w = across.substring_of_cell(np.arange(72))
    assert (sub_w == (np.arange(72) // 6) // 4).all()
    with pytest.raises(InputError):
        spec.substring_of_cell(60)


def test_sample_points_per_cell():
    spec = generic_60_cell(330)
    ab, cell = spec.cell_sample_points(4)
    assert ab.shape == (240, 2)
    assert np.bincount(cell).tolist() == [4] * 60
    da, db = spec.cell_size_m
    # each sample lies inside its own cell
    row, col = np.divmod(cell, 6)
    assert ((ab[:, 0] > row * da) & (ab[:, 0] < (row + 1) * da)).all()
    assert ((ab[:, 1] > col * db) & (ab[:, 1] < (col + 1) * db)).all()
    with pytest.raises(InputError) as err:
        spec.cell_sample_points(3)
    assert err.value.field == "samples_per_cell"


def test_round_trip_exact():
    spec = ModuleSpec(1.722, 1.134, 410.5, 18, 6, name="half-cut test")
    data = json.loads(json.dumps(spec.to_dict()))
    assert ModuleSpec.from_dict(data) == spec
    assert ModuleSpec.from_dict(data).to_dict() == spec.to_dict()


def test_from_dict_errors():
    with pytest.raises(InputError) as err:
        ModuleSpec.from_dict({"length_m": 1.6, "width_m": 1.0, "power_w": 300, "cell_rows": 10})
    assert err.value.field == "cell_columns"
    with pytest.raises(InputError) as err:
        ModuleSpec.from_dict({**generic_60_cell(330).to_dict(), "colour": "black"})
    assert err.value.field == "colour"


@settings(max_examples=40, deadline=None)
@given(
    length=st.floats(0.5, 2.5), aspect=st.floats(0.3, 1.0), eff=st.floats(0.05, 0.3),
    rows=st.integers(1, 24), diodes=st.sampled_from([1, 2, 3]),
)
def test_random_valid_modules_round_trip(length, aspect, eff, rows, diodes):
    width = length * aspect
    spec = ModuleSpec(length, width, eff * length * width * 1000, rows, 2 * diodes,
                      bypass_diodes=diodes)
    assert spec.efficiency == pytest.approx(eff)
    assert ModuleSpec.from_dict(json.loads(json.dumps(spec.to_dict()))) == spec
    counts = np.bincount(spec.substring_of_cell(np.arange(spec.cell_count)))
    assert (counts == spec.cells_per_substring).all()
