"""Ray tests on threads give the very hits of one thread (layout.runtime.parallel_map)."""

from __future__ import annotations

import numpy as np
import pytest

from layout.runtime import THREADS_VARIABLE
from layout.shading import ShadeCache, module_samples, module_shade
from layout.shading import cache as cache_module
from tests.shading.test_shading import _small_rack_scene


@pytest.fixture
def threaded(monkeypatch):
    """Threads for every size of input: two of them."""
    monkeypatch.setattr(cache_module, "THREADED_RAYS", 0)
    monkeypatch.setattr("layout.shading.per_module.THREADED_RAYS", 0)
    monkeypatch.setenv(THREADS_VARIABLE, "2")


def _shade(mods, spec, sun, scene, month, **kwargs):
    samples = module_samples(mods, spec)
    cache = ShadeCache(samples.points, sun, month=month, normals=samples.normals)
    cached = module_shade(mods, spec, sun, scene, month=month, cache=cache, **kwargs)
    direct = module_shade(mods, spec, sun, scene, month=month, max_rays=3000, **kwargs)
    return cache, cached, direct


def test_threaded_ray_tests_equal_one_thread(threaded, monkeypatch):
    spec, mods, sun, month, _, scene = _small_rack_scene(5, 80, 3)
    cache, cached, direct = _shade(mods, spec, sun, scene, month)
    monkeypatch.setenv(THREADS_VARIABLE, "1")
    one_cache, one_cached, one_direct = _shade(mods, spec, sun, scene, month)
    assert cache.obstructions == one_cache.obstructions and len(cache.obstructions) > 2
    for ob in cache.obstructions:
        a, b = cache.hits(ob), one_cache.hits(ob)
        assert np.array_equal(a.step, b.step) and np.array_equal(a.point, b.point)
    for got, want in ((cached, one_cached), (direct, one_direct)):
        assert np.array_equal(got.steps, want.steps)
        assert np.array_equal(got.mean_rows, want.mean_rows)
        assert np.array_equal(got.worst_rows, want.worst_rows)
    assert np.array_equal(cached.cell, direct.cell)  # the direct path holds every step
    assert cached.mean_rows.any()


def test_a_failing_ray_test_on_a_thread_leaves_the_cache_as_it_was(threaded, monkeypatch):
    spec, mods, sun, month, tree, scene = _small_rack_scene(6, 40, 5)
    samples = module_samples(mods, spec)
    cache = ShadeCache(samples.points, sun, scene, month=month, normals=samples.normals)
    before = cache.obstructions

    def broken(self, obstruction):
        raise RuntimeError("ray test failed")

    monkeypatch.setattr(ShadeCache, "_test", broken)
    with pytest.raises(RuntimeError, match="ray test failed"):
        cache.update([tree.translated(2.0, 0.0), tree.translated(4.0, 0.0)])
    assert cache.obstructions == before
    assert cache.update(scene) == 0  # the hits kept are still there


@pytest.mark.parametrize("steps_a_block", [3, 7])  # 27 blocks (sorted hits), 12 (masks)
def test_tile_blocks_on_threads_equal_one_thread(steps_a_block, monkeypatch):
    # the blocks of module tiles reduced on two threads at a time: every figure the same as
    # on one thread, bit for bit (each block writes only its own rows)
    from layout.shading import groups, module_tiles
    from layout.shading.per_module import _reduce_shade, _Reductions
    from layout.shading.plate_sets import module_casters

    spec, mods, sun, month, _, scene = _small_rack_scene(8, 80, 3)
    monkeypatch.setattr(groups, "_DENSE_BLOCK", 6 * spec.cell_count * steps_a_block)
    monkeypatch.setattr(module_tiles, "_TILE_ROWS", 1)
    monkeypatch.setattr(module_tiles, "THREADED_VALUES", 0)
    samples = module_samples(mods, spec)
    cell_substring = np.asarray(spec.substring_of_cell(np.arange(spec.cell_count)),
                                dtype=np.intp)
    cache = ShadeCache(samples.points, sun, [*scene, *module_casters(mods)], month=month,
                       normals=samples.normals)
    found = {}
    for threads in ("1", "2"):
        monkeypatch.setenv(THREADS_VARIABLE, threads)
        sums = _Reductions(len(mods), cell_substring, True)
        rows = _reduce_shade(len(sun), cache.prepared_hits(), samples.cell_group,
                             len(samples.points), sums, 0)
        found[threads] = (rows, sums)
    (rows_1, one), (rows_2, two) = found["1"], found["2"]
    assert np.array_equal(rows_1, rows_2) and len(rows_1) > 3 * steps_a_block
    for name in ("mean", "worst", "substring", "by_cell"):
        assert np.array_equal(getattr(one, name), getattr(two, name))
    assert one.mean.any()


def test_a_cache_told_one_thread_keeps_to_it_whatever_the_size(threaded, monkeypatch):
    # the sky view's caches test on one thread (many small array operations, which two
    # threads contend for); threads=1 overrides the size rule, with the same hits
    spec, mods, sun, month, _, scene = _small_rack_scene(5, 80, 3)
    samples = module_samples(mods, spec)
    seen = []
    real_map = cache_module.parallel_map

    def spy(function, items, *, threads=None):
        seen.append(threads)
        return real_map(function, items, threads=threads)

    monkeypatch.setattr(cache_module, "parallel_map", spy)
    one = ShadeCache(samples.points, sun, scene, month=month, threads=1)
    by_size = ShadeCache(samples.points, sun, scene, month=month)
    assert seen == [1, None]  # threaded by size (THREADED_RAYS 0 here) unless told
    for ob in scene:
        a, b = one.hits(ob), by_size.hits(ob)
        assert np.array_equal(a.step, b.step) and np.array_equal(a.point, b.point)
