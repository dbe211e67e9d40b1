"""The whole import: a point cloud (and a surface raster) to roof faces and obstructions.

Each step that can fail on the data (no building at the site, no vegetation, no raster) is
recorded in ``missing`` with the reason, and the others go on: a partial import says what it
found and what it could not. Everything found is data, not a survey: the import's ``notes``
say so, with the file's acquisition date when it holds one (trees grow, buildings change).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
import shapely

from ..errors import InputError
from ..scene.building import Building
from ..scene.obstructions import Block, HorizonProfile, Tree
from ..scene.provenance import PROVENANCE
from .bumps import RoofBump, roof_bumps
from .classify import classify_points
from .faces import faces_from_planes, level_eaves
from .footprints import fit_sides_to_classes, footprints_from_points, rectangle_from_points
from .neighbours import neighbour_blocks
from .planes import segment_planes
from .pointcloud import (
    CLASS_BUILDING,
    CLASS_GROUND,
    CLASS_VEGETATION,
    PointCloud,
    read_points,
)
from .terrain import ground_model
from .trees import find_trees

__all__ = ["PROVENANCE", "ElevationScene", "import_elevation", "scene_from_points"]

@dataclass(frozen=True, eq=False)
class ElevationScene:
    """What an import found, in the site frame (z = 0 at the ground at the site).

    Parameters
    ----------
    building : Building or None
        The roof at the site, faces fitted to the points.
    bumps : tuple of RoofBump
        Chimneys and other bumps on that roof.
    trees : tuple of Tree
    neighbours : tuple of Block
        Other buildings within the radius.
    horizon : HorizonProfile or None
        The far skyline, when a raster was given.
    footprint : shapely.Polygon or None
        The building's plan outline used (given or found).
    ground_level_m : float
        Height of the ground at the site above the file's datum [m].
    density : float
        Points per m² within the radius.
    source, crs : str
        The file and its CRS.
    acquired : datetime.date or None
        When the data were taken, if the file says; ``acquired_from`` says how.
    acquired_from : str
    found : tuple of str
        One line per kind of thing found.
    missing : tuple of str
        One line per step that found nothing, with the reason.
    notes : tuple of str
        What the reader dropped, the coverage, the age of the data.
    """

    building: Building | None
    bumps: tuple[RoofBump, ...]
    trees: tuple[Tree, ...]
    neighbours: tuple[Block, ...]
    horizon: HorizonProfile | None
    footprint: shapely.Polygon | None
    ground_level_m: float
    density: float
    source: str = ""
    crs: str = ""
    acquired: object = None
    acquired_from: str = ""
    found: tuple[str, ...] = field(default=())
    missing: tuple[str, ...] = field(default=())
    notes: tuple[str, ...] = field(default=())

    def obstructions(self) -> tuple:
        """Chimneys, trees, neighbouring buildings and the horizon, as scene obstructions."""
        items = [b.block for b in self.bumps] + list(self.trees) + list(self.neighbours)
        if self.horizon is not None:
            items.append(self.horizon)
        return tuple(items)

    def summary(self) -> list[str]:
        """Plain lines for a person: source, date, what was found and what was not."""
        when = (f"acquired {self.acquired.isoformat()} ({self.acquired_from})"
                if self.acquired else "acquisition date not in the file")
        lines = [f"{self.source} ({self.crs}), {when}; {self.density:.1f} points/m²",
                 f"everything below is {PROVENANCE}"]
        lines += [f"found: {line}" for line in self.found]
        lines += [f"not found: {line}" for line in self.missing]
        lines += [f"note: {line}" for line in self.notes]
        return lines


def _density(cloud: PointCloud) -> float:
    if math.isfinite(cloud.radius_m):
        area = math.pi * cloud.radius_m ** 2 * max(cloud.coverage, 1e-6)
    else:
        area = max(np.ptp(cloud.x) * np.ptp(cloud.y), 1.0)
    return len(cloud) / area


def _pick_footprint(candidates, max_distance_m: float = 10.0):
    """Pick the outline at the site origin, else the nearest within ``max_distance_m``."""
    origin = shapely.Point(0.0, 0.0)
    near = [(p.distance(origin), -p.area, i) for i, p in enumerate(candidates)]
    near = [n for n in near if n[0] <= max_distance_m]
    return candidates[min(near)[2]] if near else None


def scene_from_points(cloud: PointCloud, *, footprint=None, name: str = "house",
                      ) -> ElevationScene:
    """Find the roof at the site and the obstructions around it.

    Parameters
    ----------
    cloud : PointCloud
        Points in the site frame (:func:`~layout.elevation.pointcloud.read_points`).
    footprint : sequence of (x, y) or shapely.Polygon, optional
        The building's plan outline [m]; found from the building points when not given.
    name : str, default "house"
        Name of the building.

    Returns
    -------
    ElevationScene
    """
    found, missing = [], []
    notes = list(cloud.notes)
    ground = ground_model(cloud)
    level = ground.site_level_m
    hag = ground.above_ground(cloud)
    if cloud.has_classes:
        cls = cloud.classification
    else:
        cls = classify_points(cloud.x, cloud.y, cloud.z, hag)
        notes.append("the file has no point classes: ground, buildings and vegetation were "
                     "told apart by height and flatness")
    density = _density(cloud)
    spacing = 1.0 / math.sqrt(density)
    z_site = cloud.z - level
    ground_site = cloud.z - hag - level
    is_building = cls == CLASS_BUILDING
    is_veg = np.isin(cls, CLASS_VEGETATION)

    outline = None
    if footprint is not None:
        outline = footprint if isinstance(footprint, shapely.Polygon) else shapely.Polygon(
            footprint)
        if not outline.is_valid or outline.area <= 0:
            raise InputError("footprint", "is not a valid polygon",
                             value=shapely.is_valid_reason(outline))
    elif is_building.any():
        outline = _pick_footprint(footprints_from_points(cloud.x[is_building],
                                                         cloud.y[is_building],
                                                         density=density))
    building, bumps = None, []
    if outline is None:
        missing.append("no building at the site: no building points within 10 m of it")
    else:
        on_roof = is_building & shapely.contains_xy(outline, cloud.x, cloud.y)
        rx, ry, rz = cloud.x[on_roof], cloud.y[on_roof], z_site[on_roof]
        planes, labels = segment_planes(rx, ry, rz, density=density)
        if footprint is None and planes and len(outline.exterior.coords) == 5 and (
                planes[0].pitch_deg >= 5.0):
            # a found rectangle turned to the largest face's eave, which the plane fit
            # knows to a few tenths of a degree, better than the outline's own edges
            near = is_building & shapely.contains_xy(outline.buffer(1.0), cloud.x, cloud.y)
            outline = rectangle_from_points(cloud.x[near], cloud.y[near],
                                            90.0 - planes[0].azimuth_deg)
            # each side where roof points give way to ground points (a probit fit), which
            # places it twice as well as the roof points' quantiles alone
            outline = fit_sides_to_classes(outline, cloud.x, cloud.y, is_building,
                                           cls == CLASS_GROUND)
            on_roof = is_building & shapely.contains_xy(outline, cloud.x, cloud.y)
            rx, ry, rz = cloud.x[on_roof], cloud.y[on_roof], z_site[on_roof]
            planes, labels = segment_planes(rx, ry, rz, density=density)
            outline = level_eaves(outline, planes)
        if not planes:
            missing.append(f"no roof face: {int(on_roof.sum())} building points inside the "
                           "footprint, too few or not on planes")
        else:
            try:
                building = faces_from_planes(planes, labels, rx, ry, rz, outline,
                                             spacing_m=spacing, name=name)
            except InputError as err:
                missing.append(f"no roof face: {err.problem}")
        if building is not None:
            found.append(f"{len(building.faces)} roof faces: " + ", ".join(
                f"{f.name} {f.pitch_deg:.1f}° facing {round(f.azimuth_deg) % 360}°"
                for f in building.faces))
            bumps = roof_bumps(building, rx, ry, rz, spacing_m=spacing)
            if bumps:
                found.append(f"{len(bumps)} roof bumps (chimneys, vents): " + ", ".join(
                    f"{b.height_above_roof_m:.2f} m above {b.face_name}" for b in bumps))
    trees = find_trees(cloud.x[is_veg], cloud.y[is_veg], hag[is_veg],
                       ground_m=ground_site[is_veg]) if is_veg.any() else []
    if trees:
        found.append(f"{len(trees)} trees: " + ", ".join(
            f"{t.height:.1f} m (crown {t.crown_radius:.1f} m)" for t in trees))
    else:
        missing.append("no tree: no vegetation points taller than 2 m")
    others = neighbour_blocks(cloud.x[is_building], cloud.y[is_building], z_site[is_building],
                              density=density, ground_m=ground_site[is_building],
                              exclude=outline) if is_building.any() else []
    if others:
        found.append(f"{len(others)} neighbouring buildings: " + ", ".join(
            f"{b.top:.1f} m tall" for b in others))
    if cloud.acquired is not None:
        notes.append(f"the data are from {cloud.acquired.isoformat()}: trees may have grown "
                     "and buildings changed since")
    return ElevationScene(building, tuple(bumps), tuple(trees), tuple(others), None,
                          outline, level, density, cloud.source, cloud.crs, cloud.acquired,
                          cloud.acquired_from, tuple(found), tuple(missing), tuple(notes))


def import_elevation(path, *, site_latitude: float, site_longitude: float,
                     radius_m: float = 40.0, crs=None, footprint=None, name: str = "house",
                     surface=None, horizon_options: dict | None = None) -> ElevationScene:
    """Read a LAS/LAZ tile (and optionally a surface raster) and find the scene at the site.

    Parameters
    ----------
    path : str or pathlib.Path
        The point cloud.
    site_latitude, site_longitude : float
        The site [degrees]: the origin of the site frame, at the building.
    radius_m : float, default 40
        Radius of the crop [m].
    crs : str, optional
        CRS of the point cloud when the file has none.
    footprint : sequence of (x, y) or shapely.Polygon, optional
        The building's plan outline in the site frame [m].
    name : str, default "house"
    surface : str or pathlib.Path, optional
        A GeoTIFF surface or terrain model for the far horizon.
    horizon_options : dict, optional
        Keyword arguments of :func:`layout.elevation.horizon.horizon_from_raster`.

    Returns
    -------
    ElevationScene
    """
    cloud = read_points(path, site_latitude=site_latitude, site_longitude=site_longitude,
                        radius_m=radius_m, crs=crs)
    scene = scene_from_points(cloud, footprint=footprint, name=name)
    if surface is None:
        return scene
    from .horizon import horizon_from_raster
    from .raster import read_raster

    options = dict(horizon_options or {})
    raster = read_raster(surface, site_latitude=site_latitude, site_longitude=site_longitude,
                         radius_m=options.pop("max_distance_m", 5000.0))
    if options.get("observer_height_m") is None:
        options["observer_height_m"] = (scene.building.ridge_height_m if scene.building
                                        else 5.0)
    horizon = horizon_from_raster(raster, ground_level_m=scene.ground_level_m,
                                  near_radius_m=options.pop("near_radius_m", radius_m),
                                  **options)
    peak = int(np.argmax(horizon.elevation_deg))
    line = (f"far horizon beyond {radius_m:g} m: highest {horizon.elevation_deg[peak]:.1f}° "
            f"at azimuth {horizon.azimuth_deg[peak]:.0f}°")
    return replace(scene, horizon=horizon, found=(*scene.found, line),
                   notes=scene.notes + tuple(raster.notes))
