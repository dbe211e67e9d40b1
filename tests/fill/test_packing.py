"""Exact sliding rows (layout.fill.packing): each row holds the most modules its free stretches do.

The outside reference is an independent per-row maximum computed here by a different method:
the fit of a module at a start is tested point by point with shapely's ``covers`` on a fine
sweep of starts, the edges of each feasible stretch are then found by bisection on the same
test, and a stretch of length L holds floor((L + gap) / (size + gap)) modules (closed form,
equal modules in a line with equal gaps).
"""

import math

import numpy as np
import pytest
import shapely

from layout.fill.packing import FIT_TOLERANCE_M, pack_rectangles, row_free_intervals

SIZE_U, SIZE_V, GAP_U, GAP_V = 1.722, 1.134, 0.02, 0.02  # a landscape 108 half-cell module


def _fits(region, u0, v0):
    tol = FIT_TOLERANCE_M
    return region.covers(shapely.box(u0 + tol, v0 + tol, u0 + SIZE_U - tol, v0 + SIZE_V - tol))


def _edge(region, v0, inside, outside):
    """Bisect between a start that fits and one that does not, to 1e-10 m."""
    for _ in range(60):
        mid = 0.5 * (inside + outside)
        if _fits(region, mid, v0):
            inside = mid
        else:
            outside = mid
    return inside


def brute_row_count(region, v0, step=2e-3):
    """Most modules in the row at ``v0``, from a sweep of starts refined by bisection."""
    u_lo, _, u_hi, _ = region.bounds
    starts = np.arange(u_lo - step, u_hi + step, step)
    ok = np.array([_fits(region, u, v0) for u in starts])
    count = 0
    edges = np.flatnonzero(np.diff(ok.astype(int)))
    runs = []
    begin = None
    for k in edges:
        if not ok[k]:  # k+1 starts a run
            begin = _edge(region, v0, starts[k + 1], starts[k])
        else:  # k ends a run
            runs.append((begin, _edge(region, v0, starts[k], starts[k + 1])))
    for first, last in runs:  # feasible starts first..last: the stretch is last + size - first
        length = last + SIZE_U - first
        count += math.floor((length + GAP_U + 1e-9) / (SIZE_U + GAP_U))
    return count


def _shapes(seed, n):
    rng = np.random.default_rng(seed)
    for _ in range(n):
        if rng.random() < 0.5:  # a trapezoid: a hip-roof face's usable area
            base = rng.uniform(4, 11)
            height = rng.uniform(1.3, 5)
            left, right = rng.uniform(0, base / 3, size=2)
            yield shapely.Polygon([(0, 0), (base, 0), (base - right, height), (left, height)])
        else:  # an L: a face with a notch cut out of one corner
            w, h = rng.uniform(5, 10), rng.uniform(2.5, 5)
            nw, nh = rng.uniform(1, w - 2), rng.uniform(0.8, h - 1.2)
            yield shapely.Polygon([(0, 0), (w, 0), (w, h - nh), (w - nw, h - nh), (w - nw, h),
                                   (0, h)])


@pytest.mark.parametrize("seed", range(4))
def test_each_row_holds_the_brute_force_maximum(seed):
    for region in _shapes(seed, 6):
        _, v_lo, _, v_hi = region.bounds
        rows = np.linspace(v_lo, v_hi - SIZE_V, 5)
        for v0, free in zip(rows, row_free_intervals(region, rows, SIZE_V), strict=True):
            width = free[:, 1] - free[:, 0]
            exact = int(np.floor((width + 2 * FIT_TOLERANCE_M + GAP_U) / (SIZE_U + GAP_U)).sum())
            assert exact == brute_row_count(region, v0), (region.wkt, v0)


@pytest.mark.parametrize("seed", range(4))
def test_sliding_modules_lie_inside_and_keep_their_gaps(seed):
    for region in _shapes(100 + seed, 6):
        rects = pack_rectangles(region, SIZE_U, SIZE_V, gap_u=GAP_U, gap_v=GAP_V,
                                rows="sliding", offset_steps=6)
        tol = FIT_TOLERANCE_M
        boxes = shapely.box(rects[:, 0] + tol, rects[:, 1] + tol, rects[:, 2] - tol,
                            rects[:, 3] - tol)
        assert shapely.covers(region, boxes).all()
        grown = shapely.box(rects[:, 0] - GAP_U / 2 + tol, rects[:, 1] - GAP_V / 2 + tol,
                            rects[:, 2] + GAP_U / 2 - tol, rects[:, 3] + GAP_V / 2 - tol)
        for k in range(len(grown)):  # no two modules closer than the gaps
            assert not shapely.intersects(grown[k], np.delete(grown, k)).any()
        # each row is the most its band holds (the rows' own v)
        for v0 in np.unique(np.round(rects[:, 1], 9)):
            in_row = int(np.sum(np.isclose(rects[:, 1], v0)))
            assert in_row == brute_row_count(region, v0)


def test_a_row_whose_span_holds_three_with_millimetres_to_spare_gets_three():
    # The row's exact free span is 5.217 m; three landscape modules with two gaps take
    # 3 × 1.722 + 2 × 0.020 = 5.206 m. A lattice anchored at the face's bounding box found
    # only two whenever none of its starts fell in the 11 mm window.
    for x_top in (0.5, 1.1, 1.7, 2.6):
        left = x_top * SIZE_V / 1.2  # where the slanted edge crosses the row's top
        region = shapely.Polygon([(0, 0), (left + 5.217, 0), (left + 5.217, 1.2), (x_top, 1.2)])
        rects = pack_rectangles(region, SIZE_U, SIZE_V, gap_u=GAP_U, gap_v=GAP_V,
                                rows="sliding", offset_steps=8)
        assert len(rects) == 3
        # centred in the row's free stretch, whichever height the row was given
        (free,) = row_free_intervals(region, [rects[0, 1]], SIZE_V)
        assert len(free) == 1
        assert rects[0, 0] - free[0, 0] == pytest.approx(free[0, 1] - rects[-1, 2], abs=1e-9)


def test_rows_outside_the_region_have_no_free_stretch():
    region = shapely.box(0, 0, 6, 3)
    free = row_free_intervals(region, [-2.0, 0.0, 2.5], SIZE_V)
    assert len(free[0]) == 0 and len(free[2]) == 0
    np.testing.assert_allclose(free[1], [[0.0, 6.0]], atol=1e-12)


def test_the_area_bound_holds_and_is_reached_where_modules_tile_the_area():
    from layout import FillOptions, RoofFace, compare_orientations, generic_60_cell
    from layout.fill.placement import area_bound

    module = generic_60_cell(330)
    # a rectangle of exactly 4 × 3 portrait modules: with no gaps they tile it (closed form)
    w, h = 4 * module.width_m, 3 * module.length_m
    face = RoofFace(outline=[(0, 0), (w, 0), (w, h), (0, h)], pitch_deg=20, azimuth_deg=180,
                    eave_height_m=3, name="tiled")
    table = compare_orientations(face, module, usable=shapely.box(0, 0, w, h),
                                 options=FillOptions(gap_along_eave_m=0, gap_up_slope_m=0))
    assert (table["area_bound"] == 12).all()
    assert table.set_index("option").loc["portrait, grid", "modules"] == 12
    # anywhere else the fill stays at or under the bound
    for region in _shapes(7, 6):
        bound = area_bound(region.area, module)
        for rows in ("grid", "sliding"):
            rects = pack_rectangles(region, module.width_m, module.length_m, gap_u=0.02,
                                    gap_v=0.02, rows=rows)
            assert len(rects) <= bound


def test_rows_find_a_band_that_only_one_height_fits():
    # A strip exactly one module high, 5 cm above the region's lowest point (a narrow spike
    # reaches down there): only rows starting at v = 0.05 m hold modules. Row starts on a
    # lattice of 1/8 pitch from the lowest point (0, 0.144, ... m) miss it; the offsets where
    # a row's edge touches a corner of the region include it.
    strip = shapely.box(0, 0.05, 6, 0.05 + SIZE_V)
    spike = shapely.box(6, 0, 6.1, 0.05 + SIZE_V)
    region = shapely.union(strip, spike)
    rects = pack_rectangles(region, SIZE_U, SIZE_V, gap_u=GAP_U, gap_v=GAP_V, rows="sliding",
                            offset_steps=8)
    assert len(rects) == 3  # floor((6 + 0.02) / 1.742)
    np.testing.assert_allclose(rects[:, 1], 0.05, atol=1e-9)


def _with_holes(seed, n):
    """The random faces of :func:`_shapes` with up to three rectangular holes (vents)."""
    rng = np.random.default_rng(100 + seed)
    for region in _shapes(seed, n):
        u_lo, v_lo, u_hi, v_hi = region.bounds
        for _ in range(rng.integers(0, 4)):
            u, v = rng.uniform(u_lo, u_hi), rng.uniform(v_lo, v_hi)
            region = region.difference(shapely.box(u, v, u + rng.uniform(0.2, 1.5),
                                                   v + rng.uniform(0.2, 1.5)))
        yield region


@pytest.mark.parametrize("seed", range(3))
def test_grid_lattice_fits_are_shapely_covers_candidate_by_candidate(seed):
    # the grid mode's fit test works a row band at a time (row_free_intervals); the outside
    # reference is shapely's covers (GEOS) on each candidate rectangle, the test the grid
    # mode made before; exact-fit rectangles too, where candidates touch the outline
    from layout.fill.packing import _lattice_fits

    regions = list(_with_holes(seed, 6))
    regions.append(shapely.box(0.3, 0.7, 0.3 + 3 * SIZE_U + 2 * GAP_U, 0.7 + 2 * SIZE_V + GAP_V))
    tol = FIT_TOLERANCE_M
    for region in regions:
        steps = 4
        fits, u0, v0, du, dv = _lattice_fits(region, SIZE_U, SIZE_V, SIZE_U + GAP_U,
                                             SIZE_V + GAP_V, steps)
        rows, cols = np.indices(fits.shape)
        us, vs = u0 + cols * du, v0 + rows * dv
        expected = shapely.covers(region, shapely.box(us + tol, vs + tol, us + SIZE_U - tol,
                                                      vs + SIZE_V - tol))
        np.testing.assert_array_equal(fits, expected)
    assert fits.sum() > 0
