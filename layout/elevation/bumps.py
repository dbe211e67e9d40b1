"""Chimneys and other bumps on a roof: points standing above the fitted faces.

A point of the roof that stands above the face under it by more than ``min_height_m`` belongs
to something on the roof. Such points are grouped by plan distance; each group of enough points
becomes a :class:`~layout.scene.obstructions.Block` whose footprint is the rectangle fitted to
the group's points (pushed out by half a point spacing, since the outermost point falls short
of the edge), whose top is the median height of its points (a chimney's cap is flat, so the
median keeps the noise out) and whose base is the face's height at the lowest corner.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree

from ..scene.building import Building
from ..scene.obstructions import Block

__all__ = ["RoofBump", "roof_bumps"]

#: Height above the face from which a point belongs to a bump [m]: well above the 5 cm
#: vertical noise of aerial LiDAR and below the lowest vent stack (common practice).
MIN_BUMP_HEIGHT_M = 0.3


@dataclass(frozen=True)
class RoofBump:
    """A bump found on a roof.

    Parameters
    ----------
    block : Block
        The bump as a prism (top and base in site z) [m].
    height_above_roof_m : float
        Top of the bump above the face at its centre [m].
    face_name : str
        The face it stands on.
    """

    block: Block
    height_above_roof_m: float
    face_name: str


def _face_under(building: Building, x, y):
    """Index of the face over each plan point, -1 outside the roof."""
    index = np.full(len(x), -1, dtype=int)
    for i, face in enumerate(building.faces):
        index[shapely.contains_xy(face.plan_polygon, x, y) & (index < 0)] = i
    return index


def roof_bumps(building: Building, x, y, z, *, spacing_m: float,
               min_height_m: float = MIN_BUMP_HEIGHT_M, min_points: int = 3) -> list[RoofBump]:
    """Find bumps on the roof of ``building`` among the points given.

    Parameters
    ----------
    building : Building
        The fitted roof.
    x, y, z : array_like
        Points over the roof, site frame [m] (z above the site's ground).
    spacing_m : float
        Mean point spacing [m].
    min_height_m : float, default 0.3
        Least height above the face [m].
    min_points : int, default 3
        Fewest points a bump needs.

    Returns
    -------
    list of RoofBump
        Largest first.
    """
    x, y, z = (np.asarray(a, dtype=float) for a in (x, y, z))
    face = _face_under(building, x, y)
    above = np.full(len(x), -np.inf)
    for i, f in enumerate(building.faces):
        on = face == i
        above[on] = z[on] - f.height_at(np.column_stack([x[on], y[on]]))
    pick = np.flatnonzero(above > min_height_m)
    if len(pick) < min_points:
        return []
    pts = np.column_stack([x[pick], y[pick]])
    pairs = cKDTree(pts).query_pairs(2.5 * spacing_m, output_type="ndarray")
    n = len(pts)
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    bumps = []
    for k in np.unique(labels):
        members = pick[labels == k]
        if len(members) < min_points:
            continue
        group = np.column_stack([x[members], y[members]])
        rect = shapely.minimum_rotated_rectangle(shapely.MultiPoint(group))
        rect = rect.buffer(spacing_m / 2, join_style="mitre")
        if not isinstance(rect, shapely.Polygon) or rect.area <= 0:
            continue
        top = float(np.median(z[members]))
        # the cap's points spread evenly over it: their mean is its centre
        centre = group.mean(axis=0)
        f = building.faces[int(np.bincount(face[members]).argmax())]
        corners = np.asarray(rect.exterior.coords)[:-1]
        base = float(np.min(f.height_at(corners)))
        height = top - float(f.height_at(centre))
        if top <= base:
            continue
        block = Block([tuple(map(float, c)) for c in corners], top, max(0.0, base),
                      kind="chimney", name=f"roof bump {len(bumps) + 1}")
        bumps.append(RoofBump(block, height, f.name))
    bumps.sort(key=lambda b: -b.block.footprint_polygon.area)
    return bumps
