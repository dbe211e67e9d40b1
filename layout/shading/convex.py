"""Convex parts of a polygon as edge half-planes: the shapes the block and plate tests clip to.

A block's footprint or a plate's outline is used as it is when convex, otherwise split into
the triangles of a constrained Delaunay triangulation; a point lies inside the polygon when it
lies inside every edge of some part.
"""

from __future__ import annotations

import numpy as np
import shapely


def _convex_parts(polygon: shapely.Polygon) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of a polygon's convex parts.

    The polygon itself when convex, otherwise its constrained Delaunay triangles; a point
    ``x`` is inside part ``p`` when ``normal[p] @ x <= offset[p]`` for every edge.
    """
    if polygon.area >= polygon.convex_hull.area * (1 - 1e-12):
        rings = [shapely.get_coordinates(polygon.exterior)[:-1]]
    else:
        parts = shapely.get_parts(shapely.constrained_delaunay_triangles(polygon))
        rings = [shapely.get_coordinates(p)[:-1] for p in parts]
    return _edge_planes(np.stack(rings))


def _edge_planes(ring: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Outward edge normals (P, K, 2) and offsets (P, K) of convex rings (P, K, 2)."""
    nxt = np.roll(ring, -1, axis=1)
    edge = nxt - ring
    # shoelace: positive for counter-clockwise parts
    area2 = np.sum(ring[..., 0] * nxt[..., 1] - nxt[..., 0] * ring[..., 1], axis=1)
    sign = np.where(area2 > 0, 1.0, -1.0)[:, None]
    normal = np.stack([edge[..., 1] * sign, -edge[..., 0] * sign], axis=-1)
    offset = np.sum(normal * ring, axis=-1)
    return normal, offset


def _convex_outlines(polygons) -> tuple[np.ndarray, np.ndarray] | None:
    """Edge normals (M, K, 2) and offsets (M, K) of many convex polygons of K corners each.

    For each polygon the same values as its one part from :func:`_convex_parts`, computed at
    once (the same sums over the same axes); None unless every polygon is convex and all
    have the same number of corners.
    """
    polygons = np.asarray(polygons, dtype=object)
    if not (shapely.area(polygons) >= shapely.area(shapely.convex_hull(polygons))
            * (1 - 1e-12)).all():
        return None
    exteriors = shapely.get_exterior_ring(polygons)
    sizes = shapely.get_num_coordinates(exteriors)
    if len(set(sizes.tolist())) != 1:
        return None
    ring = shapely.get_coordinates(exteriors).reshape(len(polygons), int(sizes[0]), 2)[:, :-1]
    return _edge_planes(np.ascontiguousarray(ring))
