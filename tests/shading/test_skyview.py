import math

import numpy as np
import pytest
import trimesh

from layout.errors import InputError
from layout.fill.placed import PlacedModule
from layout.power.energy import sky_view_ratio
from layout.scene.obstructions import Block, Cylinder, HorizonProfile, Plate, Tree
from layout.shading import RAY_START_M
from layout.shading.skyview import (
    SkyViewCache,
    hemisphere_directions,
    module_sky_view,
    sky_directions,
    sky_view_factor,
)

UP = [0.0, 0.0, 1.0]
# Tolerance of the default 1024-direction set against closed forms: the largest error over
# sweeps of wall angle and tilt measured 0.0048 (0.0019 with 4096 directions, falling about
# as n^(-2/3)); horizons of uniform elevation are resolved to 5e-4 because the spiral's radii
# are evenly stratified.
TOL_1024 = 0.006


def test_direction_set_is_cosine_weighted():
    # Malley's method: with a cosine-weighted set, E[cos θ] = 2/3 and E[cos² θ] = 1/2
    # (moments of the density cos θ / π over the hemisphere, closed form).
    d = sky_directions(4096)
    assert np.allclose(np.linalg.norm(d, axis=1), 1.0)
    assert d[:, 2].mean() == pytest.approx(2 / 3, abs=1e-3)
    assert (d[:, 2] ** 2).mean() == pytest.approx(0.5, abs=1e-3)
    turned = hemisphere_directions([1.0, 0.0, 0.0], 4096)
    assert turned[:, 0].min() > 0 and turned[:, 0].mean() == pytest.approx(2 / 3, abs=1e-3)
    with pytest.raises(InputError) as info:
        sky_directions(3)
    assert info.value.field == "n_directions"
    with pytest.raises(InputError):
        hemisphere_directions([0, 0, 0])


@pytest.mark.parametrize("h", [5.0, 15.0, 30.0, 50.0])
def test_uniform_horizon_blocks_sin_squared(h):
    # REFERENCES.md (pvlib gotchas): a uniform horizon at h blocks sin² h of isotropic
    # diffuse on a horizontal surface.
    f = sky_view_factor([[0.0, 0.0, 0.0]], UP, [HorizonProfile.uniform(h)])[0]
    assert 1 - f == pytest.approx(math.sin(math.radians(h)) ** 2, abs=1e-3)


@pytest.mark.parametrize("beta", [10.0, 30.0, 45.0, 70.0])
def test_long_wall_gives_one_plus_cos_over_two(beta):
    # REFERENCES.md (view-factor algebra): a horizontal point beside an infinite vertical wall
    # rising β above its horizon sees (1 + cos β) / 2 of the sky. Wall 4 km long at 3 m: the
    # missing ends subtend under 0.1°.
    height = 3.0 * math.tan(math.radians(beta))
    wall = Block([(-2000, 3.0), (2000, 3.0), (2000, 3.2), (-2000, 3.2)], height, kind="wall")
    expected = (1 + math.cos(math.radians(beta))) / 2
    f = sky_view_factor([[0.0, 0.0, 0.0]], UP, [wall])[0]
    assert f == pytest.approx(expected, abs=TOL_1024)
    fine = sky_view_factor([[0.0, 0.0, 0.0]], UP, [wall], n_directions=4096)[0]
    assert fine == pytest.approx(expected, abs=0.0025)


@pytest.mark.parametrize("tilt", [0.0, 20.0, 45.0, 75.0, 90.0])
def test_tilted_surface_in_the_open(tilt):
    # closed form: a plane tilted β sees (1 + cos β) / 2 of the sky, the ground below the
    # horizon filling the rest (the isotropic factor of pvlib.irradiance.isotropic)
    t = math.radians(tilt)
    normal = [math.sin(t) * math.sin(math.radians(200)), math.sin(t) * math.cos(math.radians(200)),
              math.cos(t)]
    f = sky_view_factor([[3.0, 1.0, 7.0]], normal, [])[0]
    assert f == pytest.approx((1 + math.cos(t)) / 2, abs=TOL_1024)


def _mesh(scene):
    from test_shading import tessellate

    return tessellate(scene)[0]


def test_agrees_with_trimesh_ray_casting():
    # Independent check: trimesh's ray caster (a general-purpose library) on the tessellated
    # scene, same direction set. Sky view differs only through the tessellation of curved
    # surfaces (0.2 % of directions allowed) and the factor within that share.
    scene = [Block([(2, -1), (4, -1), (4, 3), (2, 3)], 4.0),
             Cylinder((-2.0, 1.0), 0.4, 3.0),
             Tree((0.5, -4.0), 9.0, 2.5, 3.0, 0.3),
             Tree((-4.0, -3.0), 8.0, 2.0, 2.0, crown_shape="cone")]
    pts = np.array([[0.0, 0.0, 0.5], [1.0, 1.5, 1.0], [-1.0, -1.0, 0.2]])
    t = math.radians(25.0)
    normal = np.array([0.0, -math.sin(t), math.cos(t)])
    ours = sky_view_factor(pts, normal, scene)
    dirs = hemisphere_directions(normal)
    mesh = _mesh(scene)
    caster = trimesh.ray.ray_triangle.RayMeshIntersector(mesh)
    theirs = []
    for p in pts:
        origins = np.repeat(p[None], len(dirs), axis=0) + RAY_START_M * dirs
        hit = caster.intersects_any(origins, dirs)
        theirs.append(((dirs[:, 2] > 0) & ~hit).mean())
    assert 0.3 < ours.min() and ours.max() < (1 + math.cos(t)) / 2 - 0.02  # scene matters
    assert np.allclose(ours, theirs, atol=0.002)


def test_far_horizon_and_plates():
    # the highest skyline wins; a plate in the point's own plane never hides its sky
    low, high = HorizonProfile.uniform(5.0), HorizonProfile.uniform(20.0)
    f = sky_view_factor([[0.0, 0.0, 0.0]], UP, [low, high])[0]
    assert f == pytest.approx(math.cos(math.radians(20.0)) ** 2, abs=1e-3)
    floor = Plate([(-5, -5, 0), (5, -5, 0), (5, 5, 0), (-5, 5, 0)])
    assert sky_view_factor([[0.0, 0.0, 0.0]], UP, [floor])[0] == 1.0
    # a horizontal roof of 10 m × 10 m 1 m above the point hides the disc r < 5 m: on a
    # horizontal point the cosine-weighted share of a centred disc of half-angle α is sin² α
    # (closed form, the same algebra as the horizon), α = atan(5 / 1) for a disc; the square
    # hides more, a disc of radius 5·√2 hides less
    roof = Plate([(-5, -5, 1), (5, -5, 1), (5, 5, 1), (-5, 5, 1)])
    hidden = 1 - sky_view_factor([[0.0, 0.0, 0.0]], UP, [roof])[0]
    assert math.sin(math.atan(5.0)) ** 2 < hidden < math.sin(math.atan(5 * math.sqrt(2))) ** 2


def _module(mid, x0, y0, z0, tilt, slant=1.7, width=1.0):
    t = math.radians(tilt)
    corners = [(x0, y0, z0), (x0 + width, y0, z0),
               (x0 + width, y0 + slant * math.cos(t), z0 + slant * math.sin(t)),
               (x0, y0 + slant * math.cos(t), z0 + slant * math.sin(t))]
    return PlacedModule(id=mid, face="flat", row=0, column=0, orientation="portrait",
                        uv_rect=(x0, y0, x0 + width, y0 + slant * math.cos(t)),
                        corners_3d=corners, tilt_deg=tilt, azimuth_deg=180.0)


def test_module_sky_view_rows_hide_sky():
    # A lone tilted module sees (1 + cos tilt) / 2 (closed form); a module with a row in front
    # and behind sees less; its own plate never hides its sky.
    lone = _module("a", 0.0, 0.0, 3.0, 30.0)
    f = module_sky_view([lone], [])
    assert f[0] == pytest.approx((1 + math.cos(math.radians(30))) / 2, abs=TOL_1024)
    rows = [_module(f"r{r}", 0.0, 2.0 * r, 3.0, 30.0, width=20.0) for r in range(3)]
    g = module_sky_view(rows, [])
    assert g[1] < g[0] - 0.01 and g[1] < f[0] - 0.01
    assert np.array_equal(module_sky_view(rows, [], include_modules=False),
                          np.full(3, module_sky_view([rows[0]], [], include_modules=False)[0]))
    with pytest.raises(InputError) as info:
        module_sky_view(rows, [], grid=0)
    assert info.value.field == "grid"


def test_sky_view_cache_re_tests_only_what_moved():
    # the cache gives module_sky_view's factors for every scene it is shown, and a moved
    # obstruction is the only one ray-tested again (its new place matches a fresh computation)
    rows = [_module(f"r{r}", 0.0, 2.0 * r, 3.0, 30.0, width=6.0) for r in range(3)]
    tree = Tree((1.0, -6.0), 9.0, 2.5, 2.0)
    block = Block([(-4.0, 7.0), (-2.0, 7.0), (-2.0, 9.0), (-4.0, 9.0)], 6.0)
    far = HorizonProfile([0.0, 90.0, 180.0, 270.0], [4.0, 8.0, 12.0, 2.0])
    cache = SkyViewCache(rows)
    for scene in ([tree, block], [tree.translated(2.0, 1.0), block],
                  [tree.translated(2.0, 1.0), block, far], [block]):
        assert np.array_equal(cache.factors(scene), module_sky_view(rows, scene))
    moved = tree.translated(-1.0, 0.5)
    assert np.array_equal(cache.factors([moved, block]), module_sky_view(rows, [moved, block]))
    assert cache.tested == 1  # one orientation, one obstruction moved
    assert np.array_equal(cache.open_factors(), module_sky_view(rows, [], include_modules=False))
    ratio = sky_view_ratio(rows, [moved, block], cache=cache)
    assert np.array_equal(ratio, sky_view_ratio(rows, [moved, block]))
    with pytest.raises(InputError) as info:
        sky_view_ratio(rows[:2], [block], cache=cache)
    assert info.value.field == "cache"
