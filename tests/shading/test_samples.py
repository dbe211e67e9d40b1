"""module_samples: every module's cell points at once, as each module places its own."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from layout.errors import InputError
from layout.scene.modules import generic_60_cell
from layout.shading import module_samples
from tests.shading.test_shading import _rack_modules


@pytest.mark.parametrize("per_cell", [1, 4])
def test_module_samples_equal_each_modules_own_cell_points(per_cell):
    # portrait and landscape modules, tilted two ways: the points, cells, substrings and
    # normals are those of PlacedModule.cell_points and .normal, module by module, bit for bit
    spec = generic_60_cell(330.0)
    mods = [*_rack_modules(spec, "portrait", 20.0, 2.4, n_rows=2, n_cols=3),
            *_rack_modules(spec, "landscape", 35.0, 3.0, n_rows=2, n_cols=2)]
    samples = module_samples(mods, spec, samples_per_cell=per_cell)
    per = spec.cell_count * per_cell
    for k, m in enumerate(mods):
        points, cell, substring = m.cell_points(spec, per_cell)
        part = slice(k * per, (k + 1) * per)
        assert np.array_equal(samples.points[part], points)
        assert np.array_equal(samples.cell[part], cell)
        assert np.array_equal(samples.substring[part], substring)
        assert (samples.module[part] == k).all()
        assert np.array_equal(samples.normals[part], np.broadcast_to(m.normal, (per, 3)))
    assert samples.module_ids == tuple(m.id for m in mods)
    assert samples.points.shape == (len(mods) * per, 3)


def test_module_samples_name_what_is_wrong():
    spec = generic_60_cell(330.0)
    mods = _rack_modules(spec, "portrait", 20.0, 2.4, n_rows=1, n_cols=2)
    longer = dataclasses.replace(spec, length_m=spec.length_m + 0.1)
    with pytest.raises(InputError) as info:  # the modules were placed for the shorter one
        module_samples(mods, longer)
    assert info.value.field == "spec.length_m"
    with pytest.raises(InputError) as info:
        module_samples([mods[0], "not a module"], spec)
    assert info.value.field == "modules[1]"
    with pytest.raises(InputError) as info:
        module_samples([], spec)
    assert info.value.field == "modules"
