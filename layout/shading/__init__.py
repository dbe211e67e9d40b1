"""Beam shading by exact ray tests: which points see the sun, and how much of it.

A point sees the sun at a step when the ray from it toward the sun meets no obstruction.
Every obstruction (block, cylinder, tree, plate, far horizon) is tested exactly, in closed
form, on numpy arrays, and culling by angular bounds keeps the work to the rays that can meet
it. Hits stay sparse (step, point) lists per obstruction until they are combined into shade
per point, per group of points or per module cell and substring.

This package gathers the public names; the work lives in its modules, listed here in the
order they build on each other (each imports only from those above it):

``rays``
    The site frame, the ray start convention (:data:`RAY_START_M`), checks on points and sun
    vectors, and the stretch of a ray between two heights.
``convex``
    Convex parts of a polygon as edge half-planes, for the block and plate tests.
``blocks``
    Exact ray test of a block (prism), by Cyrus-Beck clipping, and its tabulated kernel.
``plates``
    Exact ray test of a plate (a roof face, a module) and its tabulated kernel.
``round_solids``
    Exact ray tests of vertical cylinders, spheroid and cone crowns, and the tree kernels.
``plate_sets``
    Plates in one plane cast as one (:class:`PlateSet`, the modules of a rack row) and
    :func:`module_casters`, exact as the plates one by one.
``ray_tests``
    The exact test of any solid obstruction, chosen by its type, and its cost.
``sun_sectors``
    The sun steps binned by azimuth sector and sorted by elevation.
``culling``
    Angular windows of each obstruction seen from each point, as runs of candidate sun steps.
``point_groups``
    Points bucketed in space, so that groups out of an obstruction's reach are dropped first.
``hits``
    One obstruction's hits (:func:`obstruction_hits`, :class:`ShadeHits`) and which steps
    light the front of a surface (:class:`Facing`).
``combine``
    Hits of every obstruction combined per point: :func:`shaded`, :func:`transmitted`.
``groups``
    Shade per group of points from sparse hits, and :func:`group_mean`.
``cache``
    :class:`ShadeCache`, the per-obstruction hit cache that recomputes only what changed.
``per_module``
    Beam shade of placed modules by cell and substring: :func:`module_shade`.
``skyview``
    Sky-view factors for isotropic diffuse light (imported as ``layout.shading.skyview``).
"""

from __future__ import annotations

from .cache import ShadeCache
from .combine import shaded, transmitted
from .groups import group_mean
from .hits import DEFAULT_MAX_PAIRS as DEFAULT_MAX_PAIRS
from .hits import Facing, ShadeHits, obstruction_hits
from .per_module import DEFAULT_MAX_RAYS as DEFAULT_MAX_RAYS
from .per_module import ModuleSamples, ModuleShade, module_samples, module_shade
from .plate_sets import PlateSet, module_casters
from .rays import RAY_START_M

__all__ = [
    "RAY_START_M",
    "Facing",
    "ModuleSamples",
    "ModuleShade",
    "PlateSet",
    "ShadeCache",
    "ShadeHits",
    "group_mean",
    "module_casters",
    "module_samples",
    "module_shade",
    "obstruction_hits",
    "shaded",
    "transmitted",
]
