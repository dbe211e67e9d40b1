"""Convex parts of many polygons at once equal those of each polygon alone."""

from __future__ import annotations

import numpy as np
import shapely

from layout.shading.convex import _convex_parts, _convex_parts_many


def test_convex_parts_of_many_polygons_equal_each_ones_bit_for_bit():
    # random convex quadrilaterals, either winding: the same normals and offsets as
    # _convex_parts polygon by polygon (a half-plane test by hand checks one)
    rng = np.random.default_rng(2)
    angle = np.sort(rng.uniform(0, 2 * np.pi, (200, 4)), axis=1)
    radius = rng.uniform(0.5, 2.0, (200, 1))
    rings = np.stack([radius * np.cos(angle), radius * np.sin(angle)], axis=2) \
        + rng.uniform(-20, 20, (200, 1, 2))
    rings[::2] = rings[::2, ::-1]  # half of them clockwise
    polygons = shapely.polygons(rings)
    normal, offset = _convex_parts_many(polygons)
    assert normal.shape == (200, 4, 2) and offset.shape == (200, 4)
    for k, polygon in enumerate(polygons):
        one_normal, one_offset = _convex_parts(polygon)
        assert np.array_equal(normal[k], one_normal[0])
        assert np.array_equal(offset[k], one_offset[0])
    centre = rings[0].mean(axis=0)  # inside a convex polygon: inside every edge
    assert (normal[0] @ centre <= offset[0]).all()
    assert not (normal[0] @ (centre + 100.0) <= offset[0]).all()


def test_convex_parts_of_many_decline_concave_or_mixed_polygons():
    square = shapely.Polygon([(0, 0), (1, 0), (1, 1), (0, 1)])
    notch = shapely.Polygon([(0, 0), (2, 0), (2, 2), (1, 1), (0, 2)])
    triangle = shapely.Polygon([(0, 0), (1, 0), (0, 1)])
    assert _convex_parts_many([square, notch]) is None
    assert _convex_parts_many([square, triangle]) is None
    assert _convex_parts_many([]) is None
