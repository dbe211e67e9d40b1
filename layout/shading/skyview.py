"""Sky-view factors for isotropic diffuse light: how much of its sky a point or module sees.

Definition
----------
The sky-view factor ``F`` of a small flat surface is the share of isotropic sky radiance it
receives compared with a horizontal surface under a full, open sky:

    F = (1 / π) ∫ over the surface's front hemisphere of  V(ω) cos θ dω,

where ``θ`` is the angle between direction ``ω`` and the surface normal and ``V(ω)`` is 1 when
``ω`` reaches the sky and 0 otherwise. The isotropic diffuse on the surface is then
``F × dhi``. With nothing around, a surface tilted ``β`` sees ``(1 + cos β) / 2`` (the ground
below the horizon fills the rest of its hemisphere); that is the factor of pvlib's isotropic
transposition model, which this one generalises.

What counts as sky
------------------
A direction reaches the sky when it is above the skyline and meets no solid obstruction
(:class:`~layout.scene.obstructions.Block`, :class:`~layout.scene.obstructions.Cylinder`,
:class:`~layout.scene.obstructions.Tree`, :class:`~layout.scene.obstructions.Plate`). The skyline is
the highest :class:`~layout.scene.obstructions.HorizonProfile` at the direction's azimuth, or the
horizontal (elevation 0, the ground) when there is none. A tree crown counts as opaque here
(its transmittance is a beam quantity; diffuse through crowns is left out, a conservative
choice).

Directions
----------
The integral is a mean over a fixed, deterministic set of ``n`` directions, equal in weight
and spread with density proportional to ``cos θ`` over the hemisphere: the points of Vogel's
sunflower spiral on the unit disc, ``r_i = sqrt((i + 0.5) / n)``, ``φ_i = i · 137.507...°``,
lifted to the hemisphere as ``(r cos φ, r sin φ, sqrt(1 - r²))`` (Malley's method: a uniform
density on the disc becomes a cosine-weighted one on the hemisphere [1]). So
``F ≈ (number of sky directions) / n``. The spiral covers the disc evenly; with the default
``n = 1024`` the error for the smooth skylines of real scenes stays within about 0.005 (the
tests measure it against closed forms).

References
----------
.. [1] M. Pharr, W. Jakob and G. Humphreys, Physically Based Rendering, 3rd ed., §13.6.3
   (cosine-weighted hemisphere sampling by Malley's method), 2016 (from memory).
.. [2] H. Vogel, "A better way to construct the sunflower head", Mathematical Biosciences
   44(3-4):179-189, 1979.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import InputError, check_points, check_positive, check_whole
from ..scene.obstructions import HorizonProfile
from .cache import ShadeCache
from .hits import DEFAULT_MAX_PAIRS, _obstruction_hits
from .plate_sets import module_casters
from .rays import RAY_START_M, _check_points
from .sun_sectors import _sun_order

__all__ = [
    "DEFAULT_SKY_DIRECTIONS",
    "SkyViewCache",
    "hemisphere_directions",
    "module_sky_view",
    "sky_directions",
    "sky_view_factor",
]

#: Number of directions in the default set.
DEFAULT_SKY_DIRECTIONS = 1024

_GOLDEN_ANGLE = math.pi * (3.0 - math.sqrt(5.0))  # [rad], 137.507...°


def sky_directions(n: int = DEFAULT_SKY_DIRECTIONS) -> np.ndarray:
    """Return the fixed cosine-weighted set of directions about the local z axis.

    Parameters
    ----------
    n : int, default :data:`DEFAULT_SKY_DIRECTIONS`
        Number of directions, 16 to 1,000,000.

    Returns
    -------
    numpy.ndarray, shape (n, 3)
        Unit vectors with z > 0; each stands for ``1 / n`` of the cosine-weighted hemisphere.
    """
    n = check_whole("n_directions", n, 16, 1_000_000,
                    problem="must be a whole number of directions")
    i = np.arange(int(n))
    r = np.sqrt((i + 0.5) / n)  # Vogel's spiral [2]
    phi = i * _GOLDEN_ANGLE
    return np.column_stack([r * np.cos(phi), r * np.sin(phi), np.sqrt(1.0 - r * r)])  # [1]


def _check_normal(normal) -> np.ndarray:
    n = check_points("normal", [normal] if np.ndim(normal) == 1 else normal, dims=3)
    if len(n) != 1 or np.linalg.norm(n[0]) == 0:
        raise InputError("normal", "must be one non-zero (x, y, z) vector",
                         allowed="three numbers, not all 0")
    return n[0] / np.linalg.norm(n[0])


def hemisphere_directions(normal, n: int = DEFAULT_SKY_DIRECTIONS) -> np.ndarray:
    """Return the direction set of :func:`sky_directions` turned about a surface normal.

    Parameters
    ----------
    normal : array_like, shape (3,)
        Front normal of the surface, site frame (x east, y north, z up).
    n : int, default :data:`DEFAULT_SKY_DIRECTIONS`
        Number of directions.

    Returns
    -------
    numpy.ndarray, shape (n, 3)
        Unit vectors in the site frame on the front side of the surface.
    """
    w = _check_normal(normal)
    helper = np.array([0.0, 0.0, 1.0]) if abs(w[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
    a = np.cross(helper, w)
    a /= np.linalg.norm(a)
    b = np.cross(w, a)
    local = sky_directions(n)
    return local[:, :1] * a + local[:, 1:2] * b + local[:, 2:] * w


def _above_skyline(directions: np.ndarray, obstructions) -> np.ndarray:
    horizons = [ob for ob in obstructions if isinstance(ob, HorizonProfile)]
    if not horizons:
        return directions[:, 2] > 0.0
    azimuth = np.degrees(np.arctan2(directions[:, 0], directions[:, 1]))
    elevation = np.degrees(np.arcsin(np.clip(directions[:, 2], -1.0, 1.0)))
    skyline = np.max([h.elevation_at(azimuth) for h in horizons], axis=0)
    return elevation > skyline


def sky_view_factor(points, normal, obstructions, *, n_directions: int = DEFAULT_SKY_DIRECTIONS,
                    ray_start: float = RAY_START_M,
                    max_pairs: int = DEFAULT_MAX_PAIRS) -> np.ndarray:
    """Compute the isotropic sky-view factor of surface points that share one normal.

    Parameters
    ----------
    points : array_like, shape (N, 3)
        Points on the surface, site frame [m].
    normal : array_like, shape (3,)
        Front normal of the surface (normalised here).
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
        The scene. Plates in the surface's own plane never block its points.
    n_directions : int, keyword-only, default :data:`DEFAULT_SKY_DIRECTIONS`
        Size of the direction set (see the module notes).
    ray_start, max_pairs
        As in :func:`layout.shading.shaded`.

    Returns
    -------
    numpy.ndarray, shape (N,)
        Sky-view factor of each point [fraction, 0 to 1]; ``(1 + cos tilt) / 2`` in the open.
    """
    pts = _check_points(points)
    start = check_positive("ray_start", ray_start, unit="m")
    obstructions = tuple(obstructions)
    dirs = hemisphere_directions(normal, n_directions)
    open_ = dirs[_above_skyline(dirs, obstructions)]
    blocked = np.zeros((len(open_), len(pts)), dtype=bool)
    if len(open_) and len(pts):
        order = _sun_order(open_)
        for ob in obstructions:
            if isinstance(ob, HorizonProfile):
                continue
            hits = _obstruction_hits(pts, open_, ob, start, int(max_pairs), True, order)
            blocked[hits.step, hits.point] = True
    return (len(open_) - blocked.sum(axis=0)) / len(dirs)


def _module_grid_points(modules, grid: int) -> np.ndarray:
    """``grid × grid`` points at the centres of equal parts of each module's quadrilateral.

    Returns an array (len(modules) · grid², 3), module by module.
    """
    c = np.array([m.corners_3d for m in modules], dtype=float)[:, None]  # (M, 1, 4, 3)
    f = (np.arange(grid) + 0.5) / grid
    a, b = np.meshgrid(f, f, indexing="ij")
    a, b = a.ravel()[:, None], b.ravel()[:, None]
    return ((1 - a) * (1 - b) * c[..., 0, :] + a * (1 - b) * c[..., 1, :]
            + a * b * c[..., 2, :] + (1 - a) * b * c[..., 3, :]).reshape(-1, 3)


def module_sky_view(modules, obstructions, *, grid: int = 3, include_modules: bool = True,
                    n_directions: int = DEFAULT_SKY_DIRECTIONS, ray_start: float = RAY_START_M,
                    max_pairs: int = DEFAULT_MAX_PAIRS) -> np.ndarray:
    """Compute the isotropic sky-view factor of each placed module.

    The factor is the mean over a ``grid × grid`` set of points on the module (centres of
    equal parts of its quadrilateral), each integrated over the module's own front hemisphere.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
        The modules; their ``corners_3d`` give the points and their ``normal`` the front.
    obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
        The scene, roof faces of the building included (as plates).
    grid : int, keyword-only, default 3
        Points per module side, 1 to 10.
    include_modules : bool, keyword-only, default True
        Add every module as a plate, so neighbouring rows hide part of each other's sky.
    n_directions, ray_start, max_pairs
        As in :func:`sky_view_factor`.

    Returns
    -------
    numpy.ndarray, shape (M,)
        Sky-view factor of each module [fraction, 0 to 1].
    """
    cache = SkyViewCache(modules, grid=grid, n_directions=n_directions, ray_start=ray_start,
                         max_pairs=max_pairs)
    return cache.factors(obstructions, include_modules=include_modules)


class SkyViewCache:
    """Sky-view factors of a fixed set of placed modules, kept obstruction by obstruction.

    The same computation as :func:`module_sky_view`, but the ray tests of each obstruction
    against the modules' points and directions are kept (:class:`layout.shading.ShadeCache`),
    so when one obstruction moves only it is tested again.

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
    grid : int, keyword-only, default 3
    n_directions, ray_start, max_pairs
        As in :func:`module_sky_view`.

    Attributes
    ----------
    n_directions : int
        Size of the direction set.
    tested : int
        Obstructions the last :meth:`factors` call had to ray-test (over all orientations).
    """

    def __init__(self, modules, *, grid: int = 3, n_directions: int = DEFAULT_SKY_DIRECTIONS,
                 ray_start: float = RAY_START_M, max_pairs: int = DEFAULT_MAX_PAIRS):
        modules = tuple(modules)
        grid = check_whole("grid", grid, 1, 10, problem="must be a whole number of points per side")
        self.modules = modules
        self.grid = int(grid)
        self.n_directions = int(n_directions)
        self.ray_start = check_positive("ray_start", ray_start, unit="m")
        self.max_pairs = int(max_pairs)
        # modules facing the same way share one direction set
        keys: dict[tuple[float, float], list[int]] = {}
        for k, m in enumerate(modules):
            keys.setdefault((round(m.tilt_deg, 6), round(m.azimuth_deg % 360.0, 6)),
                            []).append(k)
        self._groups = []
        for index in keys.values():
            pts = _module_grid_points([modules[k] for k in index], self.grid)
            normal = np.asarray(modules[index[0]].normal, dtype=float)
            dirs = hemisphere_directions(normal, n_directions)
            self._groups.append((np.array(index), _check_points(pts), dirs, normal))
        self._caches: dict = {}
        self._module_plates: tuple | None = None  # built once: the modules never change
        self.tested = 0

    def factors(self, obstructions, *, include_modules: bool = True) -> np.ndarray:
        """Return the sky-view factor of each module with ``obstructions`` around it.

        Parameters
        ----------
        obstructions : sequence of Block, Cylinder, Tree, Plate or HorizonProfile
            The scene, as in :func:`module_sky_view`.
        include_modules : bool, keyword-only, default True
            Add every module as a plate.

        Returns
        -------
        numpy.ndarray, shape (M,)
            Sky-view factor of each module [fraction, 0 to 1].
        """
        scene = tuple(obstructions)
        if include_modules:
            if self._module_plates is None:
                self._module_plates = module_casters(self.modules)
            scene += self._module_plates
        horizons = tuple(ob for ob in scene if isinstance(ob, HorizonProfile))
        solids = tuple(ob for ob in scene if not isinstance(ob, HorizonProfile))
        out = np.empty(len(self.modules))
        kept = {}
        self.tested = 0
        for g, (index, pts, dirs, normal) in enumerate(self._groups):
            key = (g, horizons)  # the skyline decides which directions are tested at all
            cache = self._caches.get(key)
            if cache is None:
                open_ = dirs[_above_skyline(dirs, horizons)]
                # every direction is in front of the modules' plane: with their normal the
                # cache skips what stands wholly behind it (the same rays, Facing)
                front = (np.tile(normal, (len(pts), 1))
                         if len(open_) and (open_ @ np.round(normal, 9) > 0.0).all() else None)
                # on one thread: a direction set is a quarter of a year's sun steps, and
                # each obstruction's work is many small array operations, which two
                # threads contend for (on the 4,930-module warehouse of
                # benchmarks/warehouse.py, 1.2-1.45 s on one thread, 2.0-2.4 s on two)
                cache = ShadeCache(pts, open_, ray_start=self.ray_start,
                                   max_pairs=self.max_pairs, normals=front, threads=1) \
                    if len(open_) else None
            kept[key] = cache
            if cache is None:
                f = np.zeros(len(pts))
            else:
                self.tested += cache.update(solids)
                f = (len(cache.sun) - cache.shaded().sum(axis=0)) / len(dirs)
            out[index] = f.reshape(len(index), self.grid ** 2).mean(axis=1)
        self._caches = kept
        return out

    def open_factors(self) -> np.ndarray:
        """Return the sky-view factor of each module with nothing around it (ground only)."""
        out = np.empty(len(self.modules))
        for index, _, dirs, _ in self._groups:
            out[index] = np.count_nonzero(dirs[:, 2] > 0.0) / len(dirs)
        return out
