"""The exact ray test of any solid obstruction, chosen by its type.

Every obstruction is tested exactly, in closed form, on numpy arrays, by the test of its family
(:mod:`layout.shading.blocks`, :mod:`layout.shading.plates`,
:mod:`layout.shading.round_solids`). :func:`_ray_effect` sends rays to that test and tells
rays that meet an opaque surface from rays that meet only a tree crown; :func:`_kernel_cost`
is the relative cost of testing one (point, step) pair, which sizes the batches tested at
once.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..scene.obstructions import Block, Cylinder, Plate, Tree
from .blocks import _block_planes, _hit_block
from .plate_sets import PlateSet, _hit_plate_set
from .plates import _hit_plate, _plate_geometry
from .round_solids import _hit_cone, _hit_spheroid, _hit_vertical_cylinder


def _ray_effect(obstruction, o, d, start) -> tuple[np.ndarray, np.ndarray]:
    """Return (opaque_hit, crown_only_hit) for rays ``o + s d``, ``s >= start``."""
    if isinstance(obstruction, Block):
        return _hit_block(obstruction, o, d, start), np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Plate):
        return _hit_plate(obstruction, o, d, start), np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, PlateSet):
        return _hit_plate_set(obstruction, o, d, start), np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Cylinder):
        (cx, cy) = obstruction.center
        hit = _hit_vertical_cylinder(cx, cy, obstruction.radius, obstruction.base,
                                     obstruction.top, o, d, start)
        return hit, np.zeros(len(o), dtype=bool)
    if isinstance(obstruction, Tree):
        (cx, cy) = obstruction.center
        ground = obstruction.ground_m
        if obstruction.crown_base > 0:
            trunk = _hit_vertical_cylinder(cx, cy, obstruction.trunk_radius, ground,
                                           ground + obstruction.crown_base, o, d, start)
        else:
            trunk = np.zeros(len(o), dtype=bool)
        if obstruction.crown_shape == "cone":
            crown = _hit_cone(cx, cy, obstruction.crown_radius, ground + obstruction.crown_base,
                              ground + obstruction.height, o, d, start)
        else:
            crown = _hit_spheroid(cx, cy, obstruction.crown_center_z, obstruction.crown_radius,
                                  obstruction.crown_semi_axis_z, o, d, start)
        return trunk, crown & ~trunk
    _check_solid(obstruction)
    raise AssertionError("unreachable")  # pragma: no cover


def _check_solid(obstruction) -> None:
    """Raise :class:`InputError` unless the obstruction is a solid :func:`_ray_effect` tests."""
    if not isinstance(obstruction, (Block, Plate, PlateSet, Cylinder, Tree)):
        raise InputError("obstructions", "contains an unknown obstruction",
                         value=type(obstruction).__name__,
                         allowed="Block, Cylinder, Tree, Plate or HorizonProfile")


def _kernel_cost(obstruction) -> int:
    if isinstance(obstruction, Block):
        normal, _ = _block_planes(obstruction)
        return 4 * normal.shape[0] * normal.shape[1] + 8
    if isinstance(obstruction, Plate):
        normal = _plate_geometry(obstruction)[4]
        return 2 * normal.shape[0] * normal.shape[1] + 16
    if isinstance(obstruction, PlateSet):  # a plate or two near each crossing, gathered terms
        return 16
    return 24
