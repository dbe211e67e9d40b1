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
