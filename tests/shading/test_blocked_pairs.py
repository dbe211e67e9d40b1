"""Rack rows tested together (layout.shading.cache.ShadeCache): each skips what others block.

A layout's module casters change together, so only the union of their hits matters. Tested
one after another, each row skips the (step, point) pairs the rows before it blocked. The
outside reference for the union is the direct path of ``module_shade`` (no cache, every row
tested on its own), whose agreement with trimesh's ray caster is checked in
``test_shading.py``.
"""

from __future__ import annotations

import numpy as np
import pytest

from layout.scene.modules import generic_60_cell
from layout.shading import ShadeCache, module_samples, module_shade
from layout.shading.hits import BlockedPairs
from layout.shading.plate_sets import PlateSet, module_casters
from layout.sky.sun import sun_vectors
from tests.shading.test_shading import _rack_modules


def _rows_scene(seed: int, facing_sun: float = 180.0):
    """Four rack rows of three modules; 150 random suns within 80° of ``facing_sun``."""
    spec = generic_60_cell(330.0)
    mods = _rack_modules(spec, "portrait", 20.0, 2.4, n_rows=4, n_cols=3)
    rng = np.random.default_rng(seed)
    azimuth = rng.uniform(facing_sun - 80, facing_sun + 80, 150) % 360
    sun = sun_vectors(azimuth, rng.uniform(2, 45, 150))
    return spec, mods, sun


def _pairs(hits) -> set:
    return set(zip(hits.step.tolist(), hits.point.tolist(), strict=True))


@pytest.mark.parametrize("facing_sun", [180.0, 100.0])  # suns around south, around east-south-east
def test_rows_together_keep_the_union_of_their_hits_and_skip_the_rest(facing_sun):
    spec, mods, sun = _rows_scene(4, facing_sun)
    samples = module_samples(mods, spec)
    rows = module_casters(mods)
    assert len(rows) >= 3 and all(isinstance(row, PlateSet) for row in rows)
    together = ShadeCache(samples.points, sun, rows, normals=samples.normals)
    alone = {row: ShadeCache(samples.points, sun, [row], normals=samples.normals).hits(row)
             for row in rows}
    union = set().union(*(_pairs(together.hits(row)) for row in rows))
    assert union == set().union(*(_pairs(hits) for hits in alone.values()))
    for row in rows:  # each row keeps some of its own hits, never another's
        assert _pairs(together.hits(row)) <= _pairs(alone[row])
    assert sum(map(len, map(together.hits, rows))) < sum(map(len, alone.values()))
    # the module shade: as the direct path, which tests every row on its own
    cached = module_shade(mods, spec, sun, [], cache=ShadeCache(samples.points, sun,
                                                                normals=samples.normals))
    direct = module_shade(mods, spec, sun, [], max_rays=3000)
    assert cached.mean_rows.any()
    assert np.array_equal(cached.cell, direct.cell)


def test_one_row_changed_tests_every_row_again():
    # a row's hits leave out what the rows before it blocked: when any row changes, none of
    # the others' hits can be kept, and none is kept aside for an undo either
    spec, mods, sun = _rows_scene(5)
    samples = module_samples(mods, spec)
    rows = list(module_casters(mods))
    cache = ShadeCache(samples.points, sun, rows, normals=samples.normals)
    assert cache.update(rows) == 0
    moved = PlateSet(tuple(plate.translated(0.0, 0.7) for plate in rows[0].plates))
    changed = [moved, *rows[1:]]
    assert cache.update(changed) == len(rows)
    fresh = ShadeCache(samples.points, sun, changed, normals=samples.normals)
    assert np.array_equal(cache.shaded(), fresh.shaded())
    assert cache.update(rows) == len(rows)  # back again: every row tested again
    assert np.array_equal(cache.shaded(), ShadeCache(samples.points, sun, rows,
                                                      normals=samples.normals).shaded())


def test_blocked_pairs_hold_exactly_the_pairs_added():
    rng = np.random.default_rng(8)
    blocked = BlockedPairs.none(37, 1001)
    step, point = rng.integers(0, 37, 5000), rng.integers(0, 1001, 5000)
    blocked.add(step[:2500], point[:2500])
    expected = np.zeros((37, 1001), dtype=bool)
    expected[step[:2500], point[:2500]] = True
    assert np.array_equal(blocked.free(step, point), ~expected[step, point])
    assert blocked.bits.nbytes == -(-37 * 1001 // 8)
