"""The sky each caster hides from one point, as outlines in azimuth and elevation.

The directions of a grid over the sky are ray-tested with the same exact tests the energy model
uses (:func:`layout.shading.hits.obstruction_hits`), and the blocked cells of each caster are
merged into outlines. The planner's sky chart and the shade report draw these outlines.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from ..sky.sun import sun_vectors
from .hits import obstruction_hits

__all__ = ["SkyRegion", "caster_kind", "caster_label", "skyline_regions"]


@dataclass(frozen=True)
class SkyRegion:
    """The part of the sky one caster hides from a point.

    Attributes
    ----------
    label : str
        The caster's name (or its kind).
    kind : str
        ``"tree"``, ``"block"``, ``"cylinder"``, ``"roof"`` or ``"horizon"``.
    outline : shapely geometry
        Hidden directions as polygons in (azimuth, elevation) [degrees].
    top_deg : float
        Highest hidden elevation [degrees].
    top_azimuth_deg : float
        Azimuth of that highest point [degrees].
    """

    label: str
    kind: str
    outline: object
    top_deg: float
    top_azimuth_deg: float


def caster_kind(caster) -> str:
    """Kind of a caster: ``"roof"``, ``"horizon"``, or its class name in lower case."""
    name = type(caster).__name__
    return {"Plate": "roof", "HorizonProfile": "horizon"}.get(name, name.lower())


def caster_label(caster, index: int) -> str:
    """Label of a caster: its name, else its kind and its index among the casters."""
    name = getattr(caster, "name", "") or ""
    kind = caster_kind(caster)
    if kind == "roof":
        return f"roof {name}".strip()
    if kind == "horizon":
        return name or "far horizon"
    return name or f"{kind} {index}"


def skyline_regions(point, casters, *, azimuth_step_deg: float = 2.0,
                    elevation_step_deg: float = 1.0) -> list[SkyRegion]:
    """Find the sky each caster hides from a point, by ray tests over a grid of directions.

    Every cell centre of an azimuth × elevation grid (0-360°, 0-90°) is a direction; the core's
    :func:`layout.shading.obstruction_hits` says which of them each caster blocks, and the
    blocked cells are merged into outlines.

    Parameters
    ----------
    point : array_like, shape (3,)
        The point seen from (a module's centre), site frame [m].
    casters : sequence
        Obstructions, roof plates and horizon profiles (:func:`layout.power.energy.scene_casters`).
    azimuth_step_deg, elevation_step_deg : float, keyword-only
        Grid spacing [degrees].

    Returns
    -------
    list of SkyRegion
        One per caster that hides any of the sky, in the casters' order.
    """
    da, de = float(azimuth_step_deg), float(elevation_step_deg)
    n_az, n_el = round(360.0 / da), round(90.0 / de)
    i, j = np.meshgrid(np.arange(n_az), np.arange(n_el), indexing="ij")
    azimuth = (i + 0.5) * da
    elevation = (j + 0.5) * de
    directions = sun_vectors(azimuth.ravel(), elevation.ravel())
    origin = np.asarray(point, dtype=float).reshape(1, 3)
    cells = shapely.box(i.ravel() * da, j.ravel() * de, (i.ravel() + 1) * da,
                        (j.ravel() + 1) * de)
    regions = []
    for index, caster in enumerate(casters):
        hits = obstruction_hits(origin, directions, caster)
        blocked = np.zeros(len(directions), dtype=bool)
        if hits.blocked_steps is not None:
            blocked |= np.asarray(hits.blocked_steps, dtype=bool)
        blocked[hits.step] = True
        if not blocked.any():
            continue
        outline = shapely.coverage_union_all(cells[blocked])
        top = int(np.argmax(np.where(blocked, elevation.ravel(), -1.0)))
        regions.append(SkyRegion(label=caster_label(caster, index), kind=caster_kind(caster),
                                 outline=outline, top_deg=float(elevation.ravel()[top] + de / 2),
                                 top_azimuth_deg=float(azimuth.ravel()[top])))
    return regions
