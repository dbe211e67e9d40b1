"""Neighbouring buildings as Blocks: their footprints traced from the points, a flat top.

A neighbour casts its shadow from its highest part, so its Block's top is the 95th percentile
of its points' heights (the ridge of a pitched roof, the parapet of a flat one, without the odd
stray point above), a conservative prism for shading. Its base is the ground at its footprint.
"""

from __future__ import annotations

import numpy as np
import shapely

from ..scene.obstructions import Block
from .footprints import footprints_from_points

__all__ = ["neighbour_blocks"]


def neighbour_blocks(x, y, z, *, density: float, ground_m=None, exclude=None,
                     min_area_m2: float = 6.0) -> list[Block]:
    """Blocks for the buildings among the points, except where ``exclude`` covers them.

    Parameters
    ----------
    x, y : array_like
        Building points, site frame [m].
    z : array_like
        Their heights above the site's z = 0 [m].
    density : float
        Points per m².
    ground_m : array_like, optional
        Ground under each point above the site's z = 0 [m]; 0 when not given.
    exclude : shapely geometry, optional
        The buildings already described (the user's roof): points inside are skipped.
    min_area_m2 : float, default 6
        Smallest building kept [m²].

    Returns
    -------
    list of Block
        Kind ``"building"``, named "building 1", ... largest first.
    """
    x, y, z = (np.asarray(a, dtype=float) for a in (x, y, z))
    g = np.zeros_like(x) if ground_m is None else np.asarray(ground_m, dtype=float)
    if exclude is not None and not exclude.is_empty:
        out = ~shapely.contains_xy(exclude.buffer(0.5), x, y)
        x, y, z, g = x[out], y[out], z[out], g[out]
    blocks = []
    for outline in footprints_from_points(x, y, density=density, min_area_m2=min_area_m2):
        inside = shapely.contains_xy(outline, x, y)
        if inside.sum() < 5:
            continue
        top = float(np.percentile(z[inside], 95))
        base = float(np.median(g[inside]))
        if top <= base + 0.5:
            continue
        corners = [tuple(map(float, c)) for c in np.asarray(outline.exterior.coords)[:-1]]
        blocks.append(Block(corners, top, base, kind="building",
                            name=f"building {len(blocks) + 1}"))
    return blocks
