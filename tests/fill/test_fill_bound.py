"""The fill's upper bound, and the fill against an optimum found by a general solver.

Outside references:

* HiGHS, the mixed-integer solver behind ``scipy.optimize.milp``, finds the most modules on a
  grid of positions (:func:`layout.fill.grid_optimum.grid_optimum`); its placements are checked
  here with shapely (inside the region, gaps kept), so they are real placements that no upper
  bound may be below, and a fill that reaches them is as good as any grid arrangement.
* Closed forms: a rectangle whose sides are whole numbers of module pitches (less one gap)
  holds exactly that many modules; a line of length ``L`` holds
  ``floor((L + gap) / (size + gap))`` modules side by side.
"""

import math

import numpy as np
import pytest
import shapely

from layout import FillOptions, generic_60_cell
from layout.errors import InputError
from layout.fill.faces import fill_area, fill_bound
from layout.fill.grid_optimum import grid_optimum
from layout.fill.packing import FIT_TOLERANCE_M, line_capacity, pack_rectangles, rectangle_bound
from layout.fill.racking import fill_racks, rack_bound
from layout.scene.building import flat_roof

W, L, GAP = 1.134, 1.722, 0.02  # a 108 half-cell module, portrait (along eave × up slope)


def _region(rng):
    """A face of our own: trapezoid, L shape, irregular convex or a trapezoid with a ring cut."""
    kind = rng.integers(4)
    w, h = rng.uniform(4.5, 8.0), rng.uniform(3.0, 5.0)
    if kind == 0:
        a, b = rng.uniform(0.2, 0.45, 2) * w
        return shapely.Polygon([(0, 0), (w, 0), (w - b, h), (a, h)])
    if kind == 1:
        cw, ch = rng.uniform(0.3, 0.6) * w, rng.uniform(0.3, 0.6) * h
        return shapely.Polygon([(0, 0), (w, 0), (w, h - ch), (w - cw, h - ch), (w - cw, h),
                                (0, h)])
    if kind == 2:
        return shapely.MultiPoint(rng.uniform(0, 1, (8, 2)) * (w, h + 1)).convex_hull
    ring = shapely.Point(rng.uniform(0.3, 0.7) * w, rng.uniform(0.3, 0.7) * h).buffer(0.5)
    return shapely.Polygon([(0, 0), (w, 0), (0.8 * w, h), (0.2 * w, h)]).difference(ring)


def _assert_placement(region, rects, gap_u, gap_v):
    tol = FIT_TOLERANCE_M
    inner = shapely.box(rects[:, 0] + tol, rects[:, 1] + tol, rects[:, 2] - tol, rects[:, 3] - tol)
    assert shapely.covers(region, inner).all()
    for i in range(len(rects)):
        for j in range(i):
            du = max(rects[i, 0], rects[j, 0]) - min(rects[i, 2], rects[j, 2])
            dv = max(rects[i, 1], rects[j, 1]) - min(rects[i, 3], rects[j, 3])
            assert du >= gap_u - 1e-9 or dv >= gap_v - 1e-9


def test_a_line_holds_the_closed_form_count():
    # closed form: floor((L + gap) / (size + gap)) per stretch; the L shape's lower lines run
    # 8 m inside it, its upper ones 3 m, and a line above it none
    region = shapely.Polygon([(0, 0), (8, 0), (8, 3), (3, 3), (3, 7), (0, 7)])
    got = line_capacity(region, [1.0, 5.0, 9.0], W, GAP)
    assert list(got) == [math.floor((8 + GAP) / (W + GAP)), math.floor((3 + GAP) / (W + GAP)), 0]
    # a U: the upper line crosses two stretches of 2.5 m each
    u_shape = shapely.box(0, 0, 7, 4).difference(shapely.box(2.5, 2, 4.5, 5))
    assert line_capacity(u_shape, [3.0], W, GAP)[0] == 2 * math.floor((2.5 + GAP) / (W + GAP))


@pytest.mark.parametrize("columns, rows", [(4, 3), (1, 1), (6, 2)])
def test_the_bound_is_reached_on_whole_multiples(columns, rows):
    # closed form: columns × rows modules tile the rectangle with the gaps between them
    region = shapely.box(0, 0, columns * (W + GAP) - GAP, rows * (L + GAP) - GAP)
    assert rectangle_bound(region, W, L, gap_u=GAP, gap_v=GAP) == columns * rows
    assert len(pack_rectangles(region, W, L, gap_u=GAP, gap_v=GAP, rows="sliding")) == \
        columns * rows


def test_the_lines_bound_a_triangle_far_below_its_area():
    # A hip triangle and 1.0 × 1.7 m modules: area alone allows 11; the lines every module
    # crosses allow 6, and the fill places 6, so here the fill is the most that fits in any
    # arrangement (HiGHS finds no more on its grid either).
    triangle = shapely.Polygon([(0, 0), (10, 0), (5, 4)])
    by_area = math.floor(triangle.area / 1.7)
    bound = rectangle_bound(triangle, 1.0, 1.7, gap_u=GAP, gap_v=GAP)
    assert by_area == 11 and bound == 6
    assert len(pack_rectangles(triangle, 1.0, 1.7, gap_u=GAP, gap_v=GAP, rows="sliding")) == 6
    assert grid_optimum(triangle, 1.0, 1.7, gap_u=GAP, gap_v=GAP, per_pitch=16).count == 6


@pytest.mark.parametrize("seed", range(6))
def test_no_fill_and_no_solver_placement_exceeds_the_bound(seed):
    rng = np.random.default_rng(100 + seed)
    module = generic_60_cell(330)
    for _ in range(3):
        region = _region(rng)
        for orientation in ("portrait", "landscape", "mixed"):
            options = FillOptions(orientation=orientation, rows="sliding")
            bound = fill_bound(region, module, options)
            for rows in ("grid", "sliding"):
                fill = fill_area(region, module, FillOptions(orientation=orientation, rows=rows))
                assert fill.count <= bound
        # a general solver's best grid placement (HiGHS), checked real, stays under it too
        best = grid_optimum(region, W, L, gap_u=GAP, gap_v=GAP, per_pitch=6, time_limit_s=30)
        _assert_placement(region, best.rects, GAP, GAP)
        assert best.count <= rectangle_bound(region, W, L, gap_u=GAP, gap_v=GAP)


@pytest.mark.parametrize("seed", range(4))
def test_sliding_rows_reach_the_solver_optimum_and_stay_valid(seed):
    # The target is measured on 24 faces in benchmarks/placement.py; here a few faces
    # per seed, each a real placement: inside, gaps kept, and at least the solver's count
    # less one (the fill is rows; the solver may stagger modules freely on its grid).
    rng = np.random.default_rng(200 + seed)
    for _ in range(2):
        region = _region(rng)
        rects = pack_rectangles(region, W, L, gap_u=GAP, gap_v=GAP, rows="sliding")
        _assert_placement(region, rects, GAP, GAP)
        best = grid_optimum(region, W, L, gap_u=GAP, gap_v=GAP, per_pitch=8, time_limit_s=30)
        assert len(rects) >= best.count - 1


def test_a_pocket_above_a_ring_gets_its_own_module():
    # A hip trapezoid with a chimney's clearance ring: rows that share their heights leave a
    # pocket above the ring; the solver (HiGHS) puts a seventh module there, and so does the
    # fill, at a height of its own.
    region = shapely.Polygon([(0, 0), (8.6, 0), (5.6, 4.3), (2.9, 4.3)]).difference(
        shapely.Point(4.36, 1.81).buffer(0.6))
    rects = pack_rectangles(region, W, L, gap_u=GAP, gap_v=GAP, rows="sliding", columns=False)
    best = grid_optimum(region, W, L, gap_u=GAP, gap_v=GAP)
    assert best.proven and best.count == 7
    assert len(rects) == 7
    _assert_placement(region, rects, GAP, GAP)
    assert len(np.unique(np.round(rects[:, 1], 6))) == 3  # two rows and the pocket's module


def test_columns_win_on_a_long_diagonal_face():
    # A strip rising at 45°: rows of portrait modules hold 3, columns sliding up the slope 5,
    # as many as the solver (HiGHS) finds on its grid.
    region = shapely.Polygon([(0, 0), (3.5, 0), (9.5, 6), (6, 6)])
    rows_only = pack_rectangles(region, W, L, gap_u=GAP, gap_v=GAP, rows="sliding",
                                columns=False)
    both = pack_rectangles(region, W, L, gap_u=GAP, gap_v=GAP, rows="sliding")
    best = grid_optimum(region, W, L, gap_u=GAP, gap_v=GAP)
    assert len(rows_only) == 3 and len(both) == 5 == best.count
    _assert_placement(region, both, GAP, GAP)


def test_rack_rows_stay_under_their_bound():
    module = generic_60_cell(330)
    building = flat_roof(22.0, 14.0, 8.0)
    face = building.faces[0]
    region = shapely.box(1.2, 1.2, 20.8, 12.8).difference(shapely.Point(9.0, 7.0).buffer(1.5))
    for orientation, pitch in (("portrait", 2.4), ("landscape", 1.5)):
        placed = fill_racks(face, region, module, tilt_deg=10.0, rack_azimuth_deg=180.0,
                            row_pitch_m=pitch, orientation=orientation, rows="sliding")
        bound = rack_bound(face, region, module, tilt_deg=10.0, rack_azimuth_deg=180.0,
                           row_pitch_m=pitch, orientation=orientation)
        assert 0 < len(placed) <= bound


def test_bad_input_names_the_field():
    region = shapely.box(0, 0, 5, 5)
    with pytest.raises(InputError, match="per_pitch"):
        grid_optimum(region, W, L, per_pitch=0)
    with pytest.raises(InputError, match="size_v"):
        rectangle_bound(region, W, 0.0)
    assert rectangle_bound(shapely.Polygon(), W, L) == 0
    assert grid_optimum(shapely.box(0, 0, 0.5, 0.5), W, L).count == 0


def test_a_missing_solver_is_a_clear_error(monkeypatch):
    import scipy.optimize

    monkeypatch.delattr(scipy.optimize, "milp")
    with pytest.raises(InputError, match=r"SciPy 1\.9"):
        grid_optimum(shapely.box(0, 0, 5, 5), W, L)


def test_the_comparison_table_sets_each_fill_beside_its_bound():
    from layout import load_demo_project
    from layout.fill.placement import compare_orientations

    project = load_demo_project()
    (building,) = project.buildings
    table = compare_orientations(building, project.module, rules=project.clearance,
                                 options=project.fill, obstructions=project.scene_obstructions,
                                 latitude=project.site.latitude,
                                 array_faces=project.array_faces_of(building))
    assert (table["modules"] <= table["bound"]).all()
    single = table["orientation"] != "mixed"
    assert (table.loc[single, "bound"] <= table.loc[single, "area_bound"]).all()
