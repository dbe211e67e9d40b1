import math

import numpy as np
import pandas as pd
import pytest
import shapely
import trimesh
from hypothesis import given, settings
from hypothesis import strategies as st

from layout.errors import InputError
from layout.obstructions import Block, Cylinder, HorizonProfile, Tree
from layout.shading import (
    RAY_START_M,
    ShadeCache,
    _hit_cone,
    _hit_spheroid,
    _hit_vertical_cylinder,
    group_mean,
    obstruction_hits,
    shaded,
    transmitted,
)
from layout.site import Site
from layout.sun import solar_position, sun_vectors


def direction(azimuth_deg, elevation_deg):
    return sun_vectors([azimuth_deg], [elevation_deg])


# ------------------------------------------------------------------ closed-form geometry
def test_pole_shadow_reaches_height_over_tan_elevation():
    # REFERENCES.md (geometry; Duffie & Beckman declination): at solar noon on the winter
    # solstice at 40° N the sun stands 26.56° high and a vertical pole's shadow is 2.00 × its
    # height. Sun from our own sun module (pvlib SPA), geometric elevation.
    site = Site(40.0, 0.0, "UTC")
    times = pd.date_range("2023-12-21 11:30", "2023-12-21 12:30", freq="1min", tz="UTC")
    pos = solar_position(site, times)
    noon = pos["elevation"].idxmax()
    az, el = pos.loc[noon, "azimuth"], pos.loc[noon, "elevation"]
    sun = direction(az, el)
    height, radius = 4.0, 0.005
    pole = Cylinder((0.0, 0.0), radius, height, kind="pole")
    away = -np.array([sun[0, 0], sun[0, 1]]) / math.hypot(sun[0, 0], sun[0, 1])

    def is_shaded(dist):
        return shaded([[*(away * dist), 0.0]], sun, [pole])[0, 0]

    lo, hi = 1.0, 20.0  # shaded at lo, lit at hi: bisect for the shadow tip
    assert is_shaded(lo) and not is_shaded(hi)
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        lo, hi = (mid, hi) if is_shaded(mid) else (lo, mid)
    # the ray from the tip grazes the pole's near rim: tip = h / tan(el) + radius
    assert lo == pytest.approx(height / math.tan(math.radians(el)) + radius, abs=1e-9)
    assert (lo - radius) / height == pytest.approx(2.00, abs=0.005)


def test_cone_apex_grazing():
    # closed form: a ray aimed 1e-4° below the apex of a cone (55 µm at 32 m) passes through
    # the crown; 1e-4° above it misses.
    tree = Tree((0.0, 0.0), 10.0, 2.0, 2.0, crown_shape="cone")
    far = 30.0
    apex_el = math.degrees(math.atan2(10.0, far))
    point = [[0.0, -far, 0.0]]
    for delta, expect in ((-1e-4, True), (1e-4, False)):
        hits = obstruction_hits(point, direction(0.0, apex_el + delta), tree)
        assert (len(hits) == 1) == expect
        if expect:
            assert hits.crown_only[0]
    # the crown's widest disc sits at crown_base; 1 cm outside it at that height is lit
    side = [[2.01, -5.0, 2.0 + 1e-9], [1.99, -5.0, 2.0 + 1e-9]]
    assert shaded(side, direction(0.0, 0.0), [tree])[0].tolist() == [False, True]


def test_spheroid_matches_its_equation():
    # closed form: a horizontal ray northward at x = 0.5, height z meets the spheroid iff
    # (x / a)² + ((z - zc) / c)² <= 1, i.e. z within 8 ± 4·sqrt(1 - 1/36) = 8 ± 3.94405
    tree = Tree((0.0, 0.0), 12.0, 3.0, 4.0, 0.1)  # centre 8, semi-axes a = 3, c = 4
    zs = np.array([4.0559, 4.0560, 8.0, 11.9440, 11.9441])
    pts = np.column_stack([np.full(5, 0.5), np.full(5, -20.0), zs])
    got = shaded(pts, direction(0.0, 0.0), [tree])[0]
    assert got.tolist() == [False, True, True, True, False]
    # below the crown the trunk (radius 0.1, up to crown_base) is opaque
    trunk = transmitted([[0.05, -20.0, 3.99], [0.15, -20.0, 3.99]], direction(0.0, 0.0), [tree])
    assert trunk[0].tolist() == [0.0, 1.0]


def test_concave_footprint_notch_is_open():
    # An L-shaped block: a ray through the notch (outside the polygon, inside its convex hull)
    # must pass. Closed-form: the notch is x in (1, 4), y in (1, 3).
    block = Block([(0, 0), (4, 0), (4, 1), (1, 1), (1, 3), (0, 3)], 3.0)
    sun = direction(0.0, 30.0)  # due north, 30° up
    below_notch = [[2.5, 1.5, 0.0], [2.5, -0.5, 0.0], [0.5, 2.0, 0.0]]
    got = shaded(below_notch, sun, [block])[0]
    assert got.tolist() == [False, True, True]


def test_far_horizon():
    # A uniform horizon at 10° blocks exactly the suns below 10° (definition of the profile).
    horizon = HorizonProfile.uniform(10.0)
    sun = sun_vectors([100, 200, 300, 45], [9.99, 10.01, 5.0, 60.0])
    got = shaded(np.zeros((3, 3)), sun, [horizon])
    assert got[:, 0].tolist() == [True, False, True, False]
    assert (got == got[:, :1]).all()


# ------------------------------------------------------------------ ray start convention
def test_points_on_a_roof_are_not_shaded_by_it():
    roof = Block([(0, 0), (10, 0), (10, 6), (0, 6)], 5.0, 0.0, kind="building")
    rng = np.random.default_rng(3)
    n = 400
    pts = np.column_stack([rng.uniform(0, 10, n), rng.uniform(0, 6, n),
                           5.0 - rng.uniform(0, 1e-12, n)])  # on the roof, with noise
    sun = sun_vectors(rng.uniform(0, 360, 200), rng.uniform(0.5, 90, 200))
    assert not shaded(pts, sun, [roof]).any()
    # on the south wall: lit by a southern sun, shaded when the sun is behind the wall
    wall_pts = np.column_stack([rng.uniform(0.1, 9.9, 50), np.zeros(50), rng.uniform(0, 5, 50)])
    got = shaded(wall_pts, sun_vectors([180.0, 0.0], [20.0, 20.0]), [roof])
    assert not got[0].any() and got[1].all()
    with pytest.raises(InputError) as info:
        shaded(pts, sun, [roof], ray_start=0.0)
    assert info.value.field == "ray_start"
    assert RAY_START_M == 1e-6


# ------------------------------------------------------------------ trimesh
def _block_mesh(block):
    ring = np.asarray(block.footprint)
    n = len(ring)
    index = {tuple(p): i for i, p in enumerate(ring.tolist())}
    faces = []
    parts = shapely.get_parts(shapely.constrained_delaunay_triangles(block.footprint_polygon))
    for tri in parts:
        ids = [index[tuple(p)] for p in shapely.get_coordinates(tri)[:-1].tolist()]
        faces += [ids, [i + n for i in ids]]
    for i in range(n):
        j = (i + 1) % n
        faces += [[i, j, j + n], [i, j + n, i + n]]
    vertices = np.vstack([np.column_stack([ring, np.full(n, block.base)]),
                          np.column_stack([ring, np.full(n, block.top)])])
    return trimesh.Trimesh(vertices, np.array(faces), process=False)


def _cylinder_mesh(center, radius, base, top, sections):
    mesh = trimesh.creation.cylinder(radius=radius, height=top - base, sections=sections)
    mesh.apply_translation([center[0], center[1], 0.5 * (base + top)])
    return mesh


SECTIONS = 96
SUBDIVISIONS = 4
_ico = trimesh.creation.icosphere(subdivisions=SUBDIVISIONS)
# the inscribed icosphere contains the sphere of radius = its smallest face distance
ICO_INNER = float(np.abs(np.einsum("ij,ij->i", _ico.face_normals, _ico.triangles[:, 0])).min())
RING_INNER = math.cos(math.pi / SECTIONS)  # inscribed polygon contains r cos(π/n)


def tessellate(obstructions):
    """Meshes of the scene, and per curved part a pair (true solid, inner solid) of ray tests.

    Every tessellated curved surface is inscribed: it lies between the inner solid and the true
    one, so a ray on which the engine and trimesh disagree must meet the true solid and miss
    the inner one for some curved part (it passes within the tessellation tolerance).
    """
    meshes, shells = [], []

    def cylinder(center, radius, base, top):
        meshes.append(_cylinder_mesh(center, radius, base, top, SECTIONS))
        for r in (radius, radius * RING_INNER):
            shells.append(lambda o, d, r=r: _hit_vertical_cylinder(*center, r, base, top, o, d,
                                                                   RAY_START_M))

    for ob in obstructions:
        if isinstance(ob, Block):
            meshes.append(_block_mesh(ob))
        elif isinstance(ob, Cylinder):
            cylinder(ob.center, ob.radius, ob.base, ob.top)
        else:
            if ob.crown_base > 0:
                cylinder(ob.center, ob.trunk_radius, 0.0, ob.crown_base)
            if ob.crown_shape == "cone":
                mesh = trimesh.creation.cone(radius=ob.crown_radius,
                                             height=ob.height - ob.crown_base, sections=SECTIONS)
                mesh.apply_translation([*ob.center, ob.crown_base])
                for r in (ob.crown_radius, ob.crown_radius * RING_INNER):
                    shells.append(lambda o, d, r=r, t=ob: _hit_cone(
                        *t.center, r, t.crown_base, t.height, o, d, RAY_START_M))
            else:
                mesh = trimesh.creation.icosphere(subdivisions=SUBDIVISIONS)
                mesh.apply_scale([ob.crown_radius, ob.crown_radius, ob.crown_semi_axis_z])
                mesh.apply_translation([*ob.center, ob.crown_center_z])
                for k in (1.0, ICO_INNER):
                    shells.append(lambda o, d, k=k, t=ob: _hit_spheroid(
                        *t.center, t.crown_center_z, k * t.crown_radius,
                        k * t.crown_semi_axis_z, o, d, RAY_START_M))
            meshes.append(mesh)
    return trimesh.util.concatenate(meshes), shells


def random_scene(rng):
    scene = []
    for _ in range(3):
        w, d = rng.uniform(0.5, 4, 2)
        box = shapely.affinity.rotate(shapely.box(-w / 2, -d / 2, w / 2, d / 2),
                                      rng.uniform(0, 90))
        ring = shapely.get_coordinates(box)[:-1] + rng.uniform(-8, 8, 2)
        base = rng.choice([0.0, rng.uniform(0, 4)])
        scene.append(Block(ring, base + rng.uniform(0.5, 5), base))
    x, y = rng.uniform(-6, 6, 2)
    scene.append(Block([(x, y), (x + 4, y), (x + 4, y + 1), (x + 1, y + 1), (x + 1, y + 3),
                        (x, y + 3)], rng.uniform(1, 4)))  # concave L
    for _ in range(2):
        base = rng.uniform(0, 4)
        scene.append(Cylinder(rng.uniform(-8, 8, 2), rng.uniform(0.05, 0.6),
                              base + rng.uniform(0.3, 3), base))
    for shape in ("spheroid", "cone"):
        height = rng.uniform(5, 12)
        scene.append(Tree(rng.uniform(-9, 9, 2), height, rng.uniform(1, 3.5),
                          height * rng.uniform(0.1, 0.5), rng.uniform(0.1, 0.4),
                          crown_shape=shape))
    return scene


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_agrees_with_trimesh_ray_caster(seed):
    # Independent check: trimesh's pure-numpy ray caster (trimesh.ray.ray_triangle
    # .RayMeshIntersector, a general-purpose library) on a tessellated copy of a random scene.
    # Issue 3 asks for >= 99.5 % agreement with every disagreement within the tessellation
    # tolerance of a curved surface.
    rng = np.random.default_rng(seed)
    scene = random_scene(rng)
    n_points, n_sun = 80, 40
    pts = np.column_stack([rng.uniform(-10, 10, n_points), rng.uniform(-10, 10, n_points),
                           rng.uniform(0, 5, n_points)])
    sun = sun_vectors(rng.uniform(0, 360, n_sun), np.degrees(np.arcsin(rng.uniform(0.03, 1,
                                                                                   n_sun))))
    ours = shaded(pts, sun, scene)
    mesh, shells = tessellate(scene)
    origins = np.repeat(pts[None], n_sun, axis=0).reshape(-1, 3)
    dirs = np.repeat(sun, n_points, axis=0)
    caster = trimesh.ray.ray_triangle.RayMeshIntersector(mesh)
    theirs = caster.intersects_any(origins + RAY_START_M * dirs, dirs).reshape(n_sun, n_points)
    assert 0.05 < ours.mean() < 0.95  # the scene actually shades something
    assert (ours == theirs).mean() >= 0.995
    bad = np.flatnonzero((ours != theirs).ravel())
    if len(bad):
        o, d = origins[bad], dirs[bad]
        near_curve = np.zeros(len(bad), dtype=bool)
        for true_solid, inner_solid in zip(shells[::2], shells[1::2], strict=True):
            near_curve |= true_solid(o, d) & ~inner_solid(o, d)
        assert near_curve.all()


@settings(max_examples=15, deadline=None)
@given(st.integers(0, 10_000), st.sampled_from([64, 1000, 1 << 19]))
def test_culling_and_chunking_do_not_change_the_answer(seed, max_pairs):
    rng = np.random.default_rng(seed)
    scene = random_scene(rng)
    pts = np.column_stack([rng.uniform(-10, 10, 30), rng.uniform(-10, 10, 30),
                           rng.uniform(0, 5, 30)])
    sun = sun_vectors(rng.uniform(0, 360, 50), rng.uniform(-10, 90, 50))
    sun[0] = [0.0, 0.0, 1.0]  # the zenith has no azimuth: must still be tested
    full = shaded(pts, sun, scene, cull=False)
    assert np.array_equal(shaded(pts, sun, scene, max_pairs=max_pairs), full)


# ------------------------------------------------------------------ transmittance
def test_crown_transmittance_by_month():
    # Heisler (1986) deciduous values through the preset: 0.6 leafless (January), 0.2 in leaf
    # (July); trunks are opaque; two crowns in a row multiply.
    near = Tree.deciduous((0.0, 5.0), 10.0, 2.0, 4.0)
    far = Tree.deciduous((0.0, 15.0), 10.0, 2.0, 4.0)
    pts = np.array([[0.0, 0.0, 7.0], [0.0, 0.0, 2.0], [3.0, 0.0, 7.0]])  # crown, trunk, clear
    sun = direction(0.0, 0.0).repeat(2, axis=0)
    month = np.array([1, 7])
    got = transmitted(pts, sun, [near], month=month)
    assert np.allclose(got, [[0.6, 0.0, 1.0], [0.2, 0.0, 1.0]])
    both = transmitted(pts, sun, [near, far], month=month)
    assert np.allclose(both[:, 0], [0.36, 0.04])
    assert shaded(pts, sun, [near])[:, :2].all()  # a crown counts as met for shaded()
    opaque = Tree((0.0, 5.0), 10.0, 2.0, 4.0)
    assert np.allclose(transmitted(pts, sun, [opaque]), [[0, 0, 1], [0, 0, 1]])
    with pytest.raises(InputError) as info:
        transmitted(pts, sun, [near])
    assert info.value.field == "month"


def test_group_mean_closed_form():
    values = np.array([[1.0, 0.0, 0.5, 1.0], [0.0, 0.0, 1.0, 1.0]])
    labels = np.array([2, 0, 2, 0])
    got = group_mean(values, labels, n_groups=4)
    assert np.allclose(got[:, [0, 2]], [[0.5, 0.75], [0.5, 0.5]])
    assert np.isnan(got[:, [1, 3]]).all()
    with pytest.raises(InputError):
        group_mean(values, [0, 1])


# ------------------------------------------------------------------ incremental cache
def test_cache_moves_one_obstruction_and_matches_full_recompute():
    rng = np.random.default_rng(5)
    scene = [*random_scene(rng), Tree.deciduous((2.0, -7.0), 9.0, 2.5, 3.0),
             HorizonProfile((0.0, 180.0), (3.0, 8.0))]
    pts = np.column_stack([rng.uniform(-10, 10, 60), rng.uniform(-10, 10, 60),
                           rng.uniform(0, 5, 60)])
    sun = sun_vectors(rng.uniform(0, 360, 80), rng.uniform(1, 90, 80))
    month = rng.integers(1, 13, 80)
    cache = ShadeCache(pts, sun, scene, month=month)
    assert np.array_equal(cache.shaded(), shaded(pts, sun, scene))
    moved = list(scene)
    moved[0] = scene[0].translated(1.5, -0.5)
    moved[-2] = scene[-2].translated(0.0, 4.0)
    assert cache.update(moved) == 2
    assert np.array_equal(cache.shaded(), shaded(pts, sun, moved))
    assert np.array_equal(cache.transmitted(), transmitted(pts, sun, moved, month=month))
    fewer = moved[1:]
    assert cache.update(fewer) == 0
    assert np.array_equal(cache.transmitted(), transmitted(pts, sun, fewer, month=month))
    assert cache.update([*fewer, Cylinder((0, 0), 0.3, 2.0)]) == 1
