"""What the plan shows, as plain data in the site frame, and the geometry the plan draws with.

:func:`plan_scene` gathers the faces, edges, zones, usable areas, modules and obstructions of a
project's layout; the helpers turn shapely geometry into the rings and hatches bqplot draws and
find free spots for click targets. :mod:`widgets.plan_view` draws from them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np
import shapely
from shapely.ops import polylabel

from layout.report.plan import zone_category
from layout.scene.provenance import PROVENANCE
from layout.units import FOOT_M

__all__ = [
    "PlanScene",
    "data_rings",
    "edge_label_rotation",
    "exteriors",
    "footprint_rings",
    "free_spot",
    "hatch_lines",
    "obstruction_anchor",
    "obstruction_label",
    "padded_rings",
    "plan_scene",
    "polygon_rings",
    "unit_factor",
]


def unit_factor(units: str) -> float:
    """Return display units per metre: 1 for ``"metric"``, 1 / 0.3048 for ``"imperial"``."""
    return 1.0 / FOOT_M if units == "imperial" else 1.0


def obstruction_anchor(obstruction) -> tuple[float, float]:
    """Plan point [m] where an obstruction's drag marker sits.

    The centre of a cylinder or a tree, the centroid of any other footprint.
    """
    centre = getattr(obstruction, "center", None)
    if centre is not None:
        return float(centre[0]), float(centre[1])
    point = obstruction.footprint_polygon.centroid
    return float(point.x), float(point.y)


def obstruction_label(obstruction, index: int) -> str:
    """Short label of an obstruction: its name, or its kind and number."""
    name = getattr(obstruction, "name", "")
    if name:
        return name
    kind = getattr(obstruction, "kind", type(obstruction).__name__.lower())
    return f"{kind} {index}"


def _is_drawn(obstruction) -> bool:
    """Obstructions with a plan footprint that can be moved (not a far horizon)."""
    return hasattr(obstruction, "footprint_polygon") and hasattr(obstruction, "translated")


@dataclass(frozen=True)
class PlanScene:
    """What the plan shows, as plain data in the site frame [m].

    Attributes
    ----------
    faces : tuple of (str, numpy.ndarray)
        Face name and plan outline (n, 2) [m].
    edges : tuple of (str, int, str, numpy.ndarray)
        Face name, edge index, edge kind and the two end points (2, 2) [m].
    zones : tuple of (str, str, str, shapely geometry)
        Face name, zone key (as :attr:`layout.fill.usable.UsableArea.zones`), zone category
        (setback, pathway, clearance, obstruction) and the zone in plan [m].
    usable : tuple of (str, shapely geometry)
        Face name and usable area in plan [m].
    modules : tuple of (str, numpy.ndarray, bool)
        Module id, plan corners (4, 2) [m] and whether it is active (not removed).
    obstructions : tuple of (int, str, bool, shapely geometry, (float, float))
        Index in the project, label, whether it is a tree, plan footprint [m] and marker
        anchor [m].
    surveyed : tuple of (int, str, bool, shapely geometry, (float, float), (float, float))
        Index in ``project.survey``, label, whether it is a tree, plan footprint [m], the
        sighted axis [m] and the station the readings were taken from [m].
    from_data : tuple of (str, shapely geometry)
        Name and plan outline [m] of each roof face and obstruction the project holds "from
        elevation data, not surveyed" (its ``sources``), as the data gave it.
    """

    faces: tuple
    edges: tuple
    zones: tuple
    usable: tuple
    modules: tuple
    obstructions: tuple
    surveyed: tuple = ()
    from_data: tuple = ()

    def bounds(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of everything drawn [m]."""
        return self._bounds

    @cached_property
    def _bounds(self) -> tuple[float, float, float, float]:
        geoms = [shapely.Polygon(ring) for _, ring in self.faces]
        geoms += [footprint for _, _, _, footprint, _ in self.obstructions]
        geoms += [footprint for _, _, _, footprint, _, _ in self.surveyed]
        if not geoms:  # a new project: 20 m around the site's origin
            return (-10.0, -10.0, 10.0, 10.0)
        return tuple(float(b) for b in shapely.total_bounds(geoms))


def plan_scene(project, layout, areas: dict) -> PlanScene:
    """Collect the plan drawing of a project from the core's results.

    Parameters
    ----------
    project : layout.project.Project
        The project drawn.
    layout : layout.fill.placed.Layout
        Its modules and removals, as the core filled them.
    areas : dict of str to layout.fill.usable.UsableArea
        Usable area of each array face, in roof-plane coordinates (mapped to plan here with
        :meth:`layout.scene.roof.RoofFace.roof_to_plan`).

    Returns
    -------
    PlanScene
    """
    faces, edges, zones, usable = [], [], [], []
    by_name = {}
    for face in project.faces:
        by_name[face.name] = face
        faces.append((face.name, np.asarray(face.outline, dtype=float)))
        for edge in face.edges:
            edges.append((face.name, edge.index, edge.kind,
                          np.array([edge.start, edge.end], dtype=float)))
    for name, area in areas.items():
        face = by_name[name]
        usable.append((name, shapely.transform(area.polygon, face.roof_to_plan)))
        for key, zone in area.zones.items():
            zones.append((name, key, zone_category(key),
                          shapely.transform(zone, face.roof_to_plan)))
    removed = {m.id for m in layout.removed_modules}
    modules = tuple((m.id, np.asarray(m.corners_3d, dtype=float)[:, :2], m.id not in removed)
                    for m in layout.modules)
    obstructions = tuple(
        (i, obstruction_label(o, i), type(o).__name__ == "Tree", o.footprint_polygon,
         obstruction_anchor(o))
        for i, o in enumerate(project.obstructions) if _is_drawn(o))
    built = project.scene_obstructions[len(project.obstructions):]
    surveyed = tuple(
        (i, obstruction_label(o, i) if o.name else f"{entry.kind} {i + 1} (surveyed)",
         type(o).__name__ == "Tree", o.footprint_polygon, obstruction_anchor(o),
         (float(entry.station_x_m), float(entry.station_y_m)))
        for i, (entry, o) in enumerate(zip(project.survey, built, strict=True)))
    return PlanScene(faces=tuple(faces), edges=tuple(edges), zones=tuple(zones),
                     usable=tuple(usable), modules=modules, obstructions=obstructions,
                     surveyed=surveyed, from_data=project.outlines_noted(PROVENANCE))


def footprint_rings(scene: PlanScene) -> tuple[list, list]:
    """Rings of the solid obstructions and of the tree crowns, surveyed ones included [m]."""
    every = [(tree, fp) for _, _, tree, fp, _ in scene.obstructions]
    every += [(tree, fp) for _, _, tree, fp, _, _ in scene.surveyed]
    solids = [r for tree, fp in every if not tree for r in polygon_rings(fp)]
    crowns = [r for tree, fp in every if tree for r in polygon_rings(fp)]
    return solids, crowns


def data_rings(scene: PlanScene) -> list[np.ndarray]:
    """Outer rings of the faces and obstructions from elevation data [m]."""
    return [ring for _, outline in scene.from_data for ring in exteriors(outline)]


# --------------------------------------------------------------------------- drawing helpers
def polygon_rings(geometry) -> list[np.ndarray]:
    """Every ring (exteriors and holes) of a polygonal geometry, as (n, 2) arrays."""
    return [np.asarray(ring.coords) for ring in shapely.get_rings(shapely.get_parts(geometry))]


def exteriors(geometry) -> list[np.ndarray]:
    """Return the outer rings of the polygons of a geometry, each (n, 2) [m]."""
    return [np.asarray(p.exterior.coords) for p in shapely.get_parts(geometry)
            if isinstance(p, shapely.Polygon) and not p.is_empty]


def padded_rings(rings: list[np.ndarray], k: float) -> tuple[list, list]:
    """Rings as equal-length x and y lists for one bqplot ``Lines`` mark (display units).

    Shorter rings are padded by repeating their last point, which draws nothing extra.
    """
    if not rings:
        return [], []
    padded = np.empty((len(rings), max(len(r) for r in rings), 2))
    for row, ring in zip(padded, rings, strict=True):
        row[:len(ring)] = ring
        row[len(ring):] = ring[-1]
    padded *= k
    return padded[:, :, 0].tolist(), padded[:, :, 1].tolist()


def free_spot(region, scene: PlanScene | None) -> np.ndarray:
    """Return a point of ``region`` [m] clear of the modules, where a click target can sit.

    The pole of inaccessibility of the region less the modules (grown by 0.2 m), so a face's
    or a building's handle does not cover a module's click; the centroid when modules cover
    it all. Spots already found for the same region and modules are remembered (an undo
    draws a plan seen before).
    """
    corners = tuple(np.asarray(c, dtype=float).tobytes()
                    for _, c, _ in (scene.modules if scene else ()))
    return np.array(_free_spot(shapely.to_wkb(region), corners))


@lru_cache(maxsize=64)
def _free_spot(region_wkb: bytes, corners: tuple[bytes, ...]) -> tuple[float, float]:
    region = shapely.from_wkb(region_wkb)
    free = region
    if corners:
        free = shapely.difference(region, _grown_modules(corners))
    if free.is_empty or free.area < 0.05:
        return tuple(region.centroid.coords[0])
    parts = sorted(shapely.get_parts(free), key=lambda g: g.area, reverse=True)
    return tuple(polylabel(parts[0], tolerance=0.05).coords[0])


@lru_cache(maxsize=8)
def _grown_modules(corners: tuple[bytes, ...]):
    """Return the modules' union grown by 0.2 m, once for all the faces and buildings."""
    modules = [shapely.Polygon(np.frombuffer(c).reshape(-1, 2)) for c in corners]
    return shapely.buffer(shapely.union_all(modules), 0.2)


def hatch_lines(geometry, spacing: float) -> list[np.ndarray]:
    """45° hatch segments clipped to a plan geometry [m] (remembered for the last few)."""
    if geometry.is_empty:
        return []
    return list(_hatch_lines(shapely.to_wkb(geometry), float(spacing)))


@lru_cache(maxsize=128)
def _hatch_lines(geometry_wkb: bytes, spacing: float) -> tuple[np.ndarray, ...]:
    geometry = shapely.from_wkb(geometry_wkb)
    x0, y0, x1, y1 = geometry.bounds
    offsets = np.arange(math.floor((x0 - y1) / spacing), math.ceil((x1 - y0) / spacing) + 1)
    c = offsets * spacing  # lines x - y = c
    starts = np.stack([c + y0 - 1, np.full_like(c, y0 - 1)], axis=1)
    ends = np.stack([c + y1 + 1, np.full_like(c, y1 + 1)], axis=1)
    lines = shapely.linestrings(np.stack([starts, ends], axis=1))
    clipped = shapely.intersection(lines, geometry)
    out = []
    for part in shapely.get_parts(clipped):
        if isinstance(part, shapely.LineString) and not part.is_empty:
            segment = np.asarray(part.coords)[[0, -1]]
            segment.flags.writeable = False  # shared by every draw of this geometry
            out.append(segment)
    return tuple(out)


def edge_label_rotation(start: np.ndarray, end: np.ndarray) -> float:
    """Screen rotation [degrees] that lays a label along an edge, kept upright."""
    angle = -math.degrees(math.atan2(end[1] - start[1], end[0] - start[0]))
    if angle > 90:
        angle -= 180
    elif angle < -90:
        angle += 180
    return angle


# --------------------------------------------------------------------------- the widget
