"""The usable area of a roof face: what its setbacks, clearances and pathways leave for modules.

.. caution::
   The distances come from a :class:`~layout.fill.rules.ClearanceRules` object, whose presets
   are defaults only: the authority having jurisdiction decides (see :mod:`layout.fill.rules`).

What is modelled
----------------
:func:`usable_area` turns one :class:`layout.scene.roof.RoofFace` and a rules object into the area
left for modules, in the face's roof-plane frame (``u`` along the eave, ``v`` up the slope,
true lengths on the roof surface). Every distance is measured on the roof surface, so on a
45° face an eave setback ``d`` covers a plan depth of ``d · cos 45°``.

Geometry
--------
Each edge ``k`` with setback ``d_k > 0`` removes the set of points closer than ``d_k`` to that
edge segment: a band of half-width ``d_k`` on both sides of the segment plus a disc of radius
``d_k`` at each end. The straight parts are exact. The discs are drawn as regular polygons of
:data:`ARC_SIDES` sides that *circumscribe* the true circle, with flats facing the edge's
normal, so the usable area errs on the safe side only, and by at most
``d · (1 / cos(π / ARC_SIDES) − 1)`` (0.03 % of ``d``) next to a rounded corner. The same
construction gives the clear ring around an obstruction (its footprint grown by the clearance
``c``, with rounded outer corners) and the access pathways.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np
import shapely
from shapely.geometry import mapping, shape

from ..errors import InputError, check_fields, check_nonnegative, check_range, check_whole
from ..scene.roof import EDGE_KINDS
from .rules import (
    PATHWAY_EDGE_KINDS,
    ClearanceRules,
    ridge_setback_in_force,
    setback_length_text,
)

__all__ = [
    "ARC_SIDES",
    "UsableArea",
    "choose_pathway_faces",
    "roof_mounted",
    "usable_area",
    "usable_areas",
]

#: Sides of the polygon that stands in for a circle of radius d (circumscribed, flats facing
#: the edge normal). Multiple of 4, so the flats also face along the edge.
ARC_SIDES = 128

# Parts of a result thinner than this [m], or smaller than this area [m²], are floating-point
# slivers and are dropped.
_SLIVER_WIDTH_M = 1e-6
_SLIVER_AREA_M2 = 1e-9
# Grid that results are snapped to [m]: far below any tape reading, far above rounding noise.
_GRID_M = 1e-10
# Height slack when deciding whether an obstruction stands on a face [m].
_HEIGHT_TOL_M = 1e-6

# Obstruction kinds never treated as roof-mounted, whatever their footprint: a crown that
# overhangs a roof is not a roof penetration.
_NOT_ROOF_MOUNTED = ("tree",)


# --------------------------------------------------------------------------- geometry
def _arc_rings(centers: np.ndarray, radii: np.ndarray, angles: np.ndarray) -> np.ndarray:
    """Corners (n, ARC_SIDES, 2) of circumscribed ARC_SIDES-gons, one flat facing each angle."""
    k = (np.arange(ARC_SIDES) + 0.5) * (2 * math.pi / ARC_SIDES)
    theta = angles[:, None] + k[None, :]
    r = (radii / math.cos(math.pi / ARC_SIDES))[:, None]
    return centers[:, None, :] + r[..., None] * np.stack([np.cos(theta), np.sin(theta)], -1)


def _segment_pieces(starts, ends, distances):
    """Corners of each segment's band and end discs, for segments with ``d > 0`` and a length.

    Returns ``use`` (bool, one per segment: which segments have pieces), then for those the
    band's corners (k, 4, 2) of half-width ``d`` and the circumscribed discs' corners
    (k, ARC_SIDES, 2) at the start and at the end, one flat facing the band's normal [m].
    """
    p0 = np.asarray(starts, dtype=float).reshape(-1, 2)
    p1 = np.asarray(ends, dtype=float).reshape(-1, 2)
    d = np.asarray(distances, dtype=float).reshape(-1)
    delta = p1 - p0
    length = np.hypot(delta[:, 0], delta[:, 1])
    use = (d > 0) & (length > 0)
    p0, p1, d, delta, length = p0[use], p1[use], d[use], delta[use], length[use]
    t = delta / length[:, None]
    n = np.stack([-t[:, 1], t[:, 0]], axis=1) * d[:, None]
    band = np.stack([p0 + n, p1 + n, p1 - n, p0 - n], axis=1)
    angle = np.arctan2(t[:, 0], -t[:, 1])  # direction of the normal (-t_y, t_x)
    return use, band, _arc_rings(p0, d, angle), _arc_rings(p1, d, angle)


def _segment_zones(starts, ends, distances) -> np.ndarray:
    """Polygons covering every point closer than ``distances[i]`` to segment ``i``.

    Returns an array of geometries, one per segment: a band of half-width ``d`` around the
    segment and a circumscribed disc of radius ``d`` at each end. Segments with ``d == 0``
    (or no length) give an empty polygon.
    """
    use, band, caps0, caps1 = _segment_pieces(starts, ends, distances)
    out = np.empty(len(use), dtype=object)
    out[:] = [shapely.Polygon() for _ in range(len(use))]
    if not use.any():
        return out
    pieces = np.stack([shapely.polygons(band), shapely.polygons(caps0),
                       shapely.polygons(caps1)], axis=1)
    out[np.flatnonzero(use)] = shapely.union_all(pieces, axis=1)
    return out


def _rings_of(geometry) -> list[np.ndarray]:
    """Coordinates of every ring (exterior and holes) of the polygons in ``geometry``."""
    return [np.asarray(ring.coords) for ring in shapely.get_rings(shapely.get_parts(geometry))]


def _grow(geometry, distance: float):
    """``geometry`` grown by ``distance`` [m] with rounded corners (conservative arcs).

    The union of the geometry, a band of half-width ``distance`` along every edge and a
    circumscribed disc at both ends of every edge. A convex polygon (a vent's fine circle, a
    rectangular chimney) is grown at once as the convex hull of the same pieces' corners,
    which is their union up to notches between the neighbouring discs of at most
    ``distance × (1 / cos(π / ARC_SIDES) − 1)`` (0.09 mm on a 0.3 m ring): still a superset,
    and about thirty times quicker on a vent's 64 edges.
    """
    if distance <= 0:
        return geometry
    if isinstance(geometry, shapely.Polygon) and not geometry.interiors \
            and geometry.area >= shapely.convex_hull(geometry).area * (1.0 - 1e-12):
        return _grow_convex(np.asarray(geometry.exterior.coords), distance)
    pieces = [geometry]
    for ring in _rings_of(geometry):
        pieces.extend(_segment_zones(ring[:-1], ring[1:], np.full(len(ring) - 1, distance)))
    return shapely.union_all(pieces)


def _grow_convex(ring: np.ndarray, distance: float):
    """Convex hull of a convex ring's corners, its edge bands' and its end discs' [m]."""
    _, band, caps0, caps1 = _segment_pieces(ring[:-1], ring[1:],
                                            np.full(len(ring) - 1, float(distance)))
    corners = np.concatenate([ring, *(c.reshape(-1, 2) for c in (band, caps0, caps1))])
    return shapely.convex_hull(shapely.linestrings(corners))  # one geometry: quick


def _clean(geometry):
    """Polygonal part of ``geometry`` without floating-point slivers: Polygon or MultiPolygon.

    Coordinates are snapped to a grid of :data:`_GRID_M`, which collapses the zero-width spikes
    and strips that rounding leaves where two zones meet a face edge; parts and holes thinner
    than the sliver width are then dropped.
    """
    polygons = [p for p in shapely.get_parts(geometry)
                if isinstance(p, (shapely.Polygon, shapely.MultiPolygon)) and not p.is_empty]
    if not polygons:
        return shapely.Polygon()
    snapped = shapely.set_precision(shapely.union_all(polygons), _GRID_M)
    kept = []
    for part in shapely.get_parts(snapped):
        if not isinstance(part, shapely.Polygon) or part.is_empty:
            continue
        area = part.area
        if area < _SLIVER_AREA_M2 or 2 * area / part.length < _SLIVER_WIDTH_M:
            continue
        holes = [h for h in part.interiors
                 if (a := shapely.Polygon(h).area) >= _SLIVER_AREA_M2
                 and 2 * a / h.length >= _SLIVER_WIDTH_M]
        if len(holes) != len(part.interiors):
            part = shapely.Polygon(part.exterior, holes)
        kept.append(shapely.orient_polygons(part))
    if not kept:
        return shapely.Polygon()
    if len(kept) == 1:
        return kept[0]
    return shapely.MultiPolygon(kept)


# --------------------------------------------------------------------------- obstructions
def roof_mounted(face, obstruction) -> bool:
    """Whether ``obstruction`` stands on ``face``.

    True when its plan footprint overlaps the face's plan outline with some area, its base is
    at or below the roof surface there and its top is above it. Trees never count (a crown
    that overhangs a roof is not a roof penetration), nor does anything without a ``top``.

    Parameters
    ----------
    face : layout.scene.roof.RoofFace
    obstruction : object
        Anything with ``footprint_polygon`` (shapely polygon in plan, site frame [m]) and
        ``top`` [m]; ``base`` [m] is taken as 0 and ``kind`` as its class name when missing.

    Returns
    -------
    bool
    """
    kind = str(getattr(obstruction, "kind", type(obstruction).__name__)).lower()
    top = getattr(obstruction, "top", None)
    if kind in _NOT_ROOF_MOUNTED or top is None:
        return False
    overlap = shapely.intersection(obstruction.footprint_polygon, face.plan_polygon)
    if overlap.area <= _SLIVER_AREA_M2:
        return False
    heights = face.height_at(np.asarray(shapely.get_coordinates(overlap)))
    base = float(getattr(obstruction, "base", 0.0))
    return float(top) > heights.min() + _HEIGHT_TOL_M and base <= heights.max() + _HEIGHT_TOL_M


# --------------------------------------------------------------------------- usable area
def _geometry_to_data(geometry) -> dict:
    def lists(value):
        if isinstance(value, (list, tuple)):
            return [lists(v) for v in value]
        return float(value)

    data = mapping(geometry)
    return {"type": data["type"], "coordinates": lists(data["coordinates"])}


def _geometry_from_data(field_name: str, data):
    try:
        return shape(data)
    except Exception as err:  # shapely raises several types for malformed GeoJSON
        raise InputError(field_name, f"is not a GeoJSON-like geometry: {err}",
                         allowed="{'type': 'Polygon' or 'MultiPolygon', 'coordinates': [...]}"
                         ) from None


@dataclass(frozen=True)
class UsableArea:
    """The area of one face left for modules after setbacks, clearances and pathways.

    Parameters
    ----------
    face_name : str
        Name of the face.
    polygon : shapely.Polygon or shapely.MultiPolygon
        Usable area in the face's roof-plane frame (u, v) [m, true length]; may be empty, may
        have several parts and holes where obstructions stand.
    zones : dict of str to shapely geometry
        Each setback, clearance and pathway zone, clipped to the face, in roof-plane
        coordinates [m]; for hatching in a drawing. Keys like ``"ridge setback"``,
        ``"pathway along edge 1"``, ``"chimney 0"`` and ``"chimney 0 clearance"``.
    ridge_setback_m : float
        Ridge setback in force on this face [m] (0 when the face is exempt).
    notes : tuple of str
        Plain-language remarks: which ridge setback applies and why, exemptions, obstructions
        found on the face, a face left with no usable area.
    """

    face_name: str
    polygon: object
    zones: Mapping[str, object] = field(default_factory=dict)
    ridge_setback_m: float = 0.0
    notes: tuple[str, ...] = ()

    def __post_init__(self):
        object.__setattr__(self, "zones", MappingProxyType(dict(self.zones)))
        object.__setattr__(self, "notes", tuple(self.notes))

    def __hash__(self):
        return hash((self.face_name, self.polygon.wkb, self.ridge_setback_m, self.notes))

    def __eq__(self, other):
        if not isinstance(other, UsableArea):
            return NotImplemented
        return self.to_dict() == other.to_dict()

    @property
    def area_m2(self) -> float:
        """Usable area on the roof surface (true area) [m²]."""
        return float(self.polygon.area)

    @property
    def is_empty(self) -> bool:
        """True when no usable area is left."""
        return bool(self.polygon.is_empty)

    def to_dict(self) -> dict:
        """Plain-data form; geometries as GeoJSON-like dicts in roof-plane coordinates."""
        return {
            "face_name": self.face_name,
            "polygon": _geometry_to_data(self.polygon),
            "zones": {k: _geometry_to_data(v) for k, v in self.zones.items()},
            "ridge_setback_m": self.ridge_setback_m,
            "notes": list(self.notes),
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> UsableArea:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("face_name", "polygon", "zones", "ridge_setback_m", "notes")
        check_fields(data, known, required=known, what="usable area")
        if not isinstance(data["face_name"], str):
            raise InputError("face_name", "must be text", value=data["face_name"])
        notes = data["notes"]
        if not isinstance(notes, (list, tuple)) or not all(isinstance(n, str) for n in notes):
            raise InputError("notes", "must be a list of text", value=notes)
        return cls(
            face_name=data["face_name"],
            polygon=_geometry_from_data("polygon", data["polygon"]),
            zones={k: _geometry_from_data(f"zones.{k}", v) for k, v in data["zones"].items()},
            ridge_setback_m=check_nonnegative("ridge_setback_m", data["ridge_setback_m"],
                                              unit="m"),
            notes=tuple(notes),
        )


def _check_pathway_edges(face, pathway_edges) -> list[int]:
    n = len(face.outline)
    kinds = face.edge_kinds
    out = []
    for i, index in enumerate(pathway_edges):
        check_whole(f"pathway_edges[{i}]", index, 0, n - 1, problem="is not an edge of the face",
                    allowed=f"whole numbers 0 to {n - 1}")
        if kinds[index] not in PATHWAY_EDGE_KINDS:
            raise InputError(f"pathway_edges[{i}]", f"edge {index} is a {kinds[index]} edge; "
                             "a pathway runs along an edge that climbs from eave to ridge",
                             value=int(index), allowed=", ".join(PATHWAY_EDGE_KINDS) + " edges")
        if int(index) not in out:
            out.append(int(index))
    return out


def usable_area(face, rules: ClearanceRules, obstructions: Iterable = (), *,
                array_share: float = 0.0, pathway_edges: Sequence[int] = ()) -> UsableArea:
    """Area of one roof face left for modules, in the face's roof-plane frame.

    Every point of the result is at least ``d_k`` from each edge ``k`` of the face, where
    ``d_k`` is the setback for that edge's kind, measured on the roof surface; at least
    ``rules.obstruction_clearance_m`` from every roof-mounted obstruction's footprint; and at
    least ``rules.pathway_width_m`` from each edge listed in ``pathway_edges`` (a clear strip
    from eave to ridge along that edge). Rounded corners are drawn as circumscribed polygons
    (see the module notes), so the result is exact along straight setback lines and errs on
    the safe side by at most 0.03 % of the distance next to a corner arc.

    Parameters
    ----------
    face : layout.scene.roof.RoofFace
        The face.
    rules : ClearanceRules
        Setback rules.
    obstructions : iterable, optional
        Obstructions of the scene; those standing on this face (see :func:`roof_mounted`)
        are cut out with their clear ring, the others are ignored. Each needs a
        ``footprint_polygon`` (plan, site frame [m]), ``top`` and ``base`` [m] and ``kind``.
    array_share : float, default 0
        Share of the plan-view roof area the array covers [fraction]; picks the ridge setback
        (see :func:`ridge_setback_in_force`). Fill once, compute the share, and call again.
    pathway_edges : sequence of int, optional
        Indices of this face's edges (rake, hip or valley) along which an access pathway runs;
        :func:`choose_pathway_faces` proposes them.

    Returns
    -------
    UsableArea
        Never raises for a face the setbacks use up: the polygon is then empty and a note
        says so.
    """
    if not isinstance(rules, ClearanceRules):
        raise InputError("rules", "must be a ClearanceRules object", value=type(rules).__name__)
    share = check_range("array_share", array_share, 0.0, 1.0)
    pathways = _check_pathway_edges(face, pathway_edges)
    label = face.name or "unnamed"
    face_poly = face.roof_polygon
    uv = face.plan_to_roof(np.asarray(face.outline))
    starts, ends = uv, np.roll(uv, -1, axis=0)
    kinds = face.edge_kinds
    notes: list[str] = []
    zones: dict[str, object] = {}

    exempt = rules.is_exempt(face.pitch_deg)
    ridge_m, ridge_text = ridge_setback_in_force(rules, share)
    if exempt:
        ridge_m = 0.0
        notes.append(f"face exempt: pitch {face.pitch_deg:.2f}° ≤ "
                     f"{rules.exempt_max_pitch_deg:.2f}°; no edge setbacks or pathways required"
                     + (f" ({rules.source})" if rules.source else ""))
    else:
        distances = np.array([ridge_m if k == "ridge" else rules.edge_setback_m[k]
                              for k in kinds])
        edge_zones = _segment_zones(starts, ends, distances)
        for kind in EDGE_KINDS:
            picked = [zone for zone, k in zip(edge_zones, kinds, strict=True)
                      if k == kind and not zone.is_empty]
            if picked:
                zones[f"{kind} setback"] = shapely.union_all(picked)
        if "ridge" in kinds and ridge_m > 0:
            notes.append(ridge_text)

    if pathways:
        width = rules.pathway_width_m
        if width <= 0:
            notes.append("pathways requested but the rules give a pathway width of 0")
        else:
            strips = _segment_zones(starts[pathways], ends[pathways], np.full(len(pathways), width))
            for index, strip in zip(pathways, strips, strict=True):
                zones[f"pathway along edge {index}"] = strip
                notes.append(f"access pathway {setback_length_text(width)} wide along edge {index} "
                             f"({kinds[index]})")
            if exempt:
                notes.append("pathways kept on this exempt face because they were asked for")

    ring = rules.obstruction_clearance_m
    for j, obstruction in enumerate(obstructions):
        if not roof_mounted(face, obstruction):
            continue
        kind = str(getattr(obstruction, "kind", type(obstruction).__name__)).lower()
        footprint = shapely.transform(obstruction.footprint_polygon, face.plan_to_roof)
        zones[f"{kind} {j}"] = footprint
        name = getattr(obstruction, "name", "")
        called = f"{kind} {j}" + (f' ("{name}")' if name else "")
        if ring > 0:
            zones[f"{kind} {j} clearance"] = shapely.difference(_grow(footprint, ring), footprint)
            notes.append(f"{called} stands on this face: clear ring {ring:g} m around it")
        else:
            notes.append(f"{called} stands on this face: its footprint is cut out")

    taken = shapely.union_all(list(zones.values())) if zones else shapely.Polygon()
    usable = _clean(shapely.difference(face_poly, taken))
    for key, zone in list(zones.items()):
        clipped = _clean(shapely.intersection(zone, face_poly))
        if clipped.is_empty:
            del zones[key]
        else:
            zones[key] = clipped
    if usable.is_empty:
        notes.append(f'setbacks leave no usable area on face "{label}"')
    return UsableArea(face_name=face.name, polygon=usable, zones=zones, ridge_setback_m=ridge_m,
                      notes=tuple(notes))


# --------------------------------------------------------------------------- pathways
def _azimuth_gap(azimuth_deg: float, target_deg: float) -> float:
    """Angle between two compass directions [degrees], 0 to 180."""
    return abs((azimuth_deg - target_deg + 180.0) % 360.0 - 180.0)


def choose_pathway_faces(faces: Sequence, rules: ClearanceRules, *,
                         latitude: float) -> dict[str, int]:
    """Propose where the access pathways go when the user has not placed them.

    The rule: pathways take the faces least useful for PV. A face qualifies when it is not
    exempt (see ``rules.exempt_max_pitch_deg``) and has an edge that climbs from eave to
    ridge (kind rake, hip or valley). Qualifying faces are ranked by how far their azimuth
    turns away from the equator (south at ``latitude >= 0``, north below), farthest first;
    ties go to the smaller face, then to the order given. The first ``rules.pathway_count``
    faces each get one pathway, so all pathways are on separate faces. On each chosen face the
    pathway runs along the climbing edge that spans the most of the face's height (eave to
    ridge), a rake before a hip before a valley, then the lowest index.

    Parameters
    ----------
    faces : sequence of layout.scene.roof.RoofFace
        All faces of the building, with unique names.
    rules : ClearanceRules
        Supplies ``pathway_count`` and the exemption.
    latitude : float
        Site latitude [degrees], −90 to 90.

    Returns
    -------
    dict of str to int
        Face name → index of the edge the pathway strip runs along. Fewer entries than
        ``rules.pathway_count`` when too few faces qualify: compare the lengths.
    """
    latitude = check_range("latitude", latitude, -90.0, 90.0, unit="degrees")
    names = [f.name for f in faces]
    for i, name in enumerate(names):
        if names.index(name) != i:
            raise InputError(f"faces[{i}].name", "is used by another face", value=name,
                             allowed="a unique name per face")
    if rules.pathway_count == 0 or rules.pathway_width_m <= 0:
        return {}
    equator = 180.0 if latitude >= 0 else 0.0
    candidates = []
    for order, face in enumerate(faces):
        if rules.is_exempt(face.pitch_deg):
            continue
        uv = face.plan_to_roof(np.asarray(face.outline))
        height = float(np.ptp(uv[:, 1]))
        best = None
        for index, kind in enumerate(face.edge_kinds):
            if kind not in PATHWAY_EDGE_KINDS:
                continue
            span = abs(float(uv[(index + 1) % len(uv), 1] - uv[index, 1]))
            key = (-round(span / height, 9), PATHWAY_EDGE_KINDS.index(kind), index)
            if best is None or key < best[0]:
                best = (key, index)
        if best is not None:
            rank = (-_azimuth_gap(face.azimuth_deg, equator), face.true_area_m2, order)
            candidates.append((rank, face.name, best[1]))
    candidates.sort(key=lambda c: c[0])
    return {name: index for _, name, index in candidates[: rules.pathway_count]}


def usable_areas(faces: Sequence, rules: ClearanceRules, obstructions: Iterable = (), *,
                 array_share: float = 0.0, pathways: Mapping | None = None,
                 latitude: float | None = None) -> dict[str, UsableArea]:
    """Usable area of every face of a building, with the pathways placed once for all.

    Parameters
    ----------
    faces : sequence of layout.scene.roof.RoofFace
        All faces of the building, with unique names.
    rules : ClearanceRules
        Setback rules.
    obstructions : iterable, optional
        Obstructions of the scene (see :func:`usable_area`).
    array_share : float, default 0
        Array share of the plan-view roof area [fraction] (see :func:`array_share`).
    pathways : mapping of str to int or sequence of int, optional
        Face name → edge index (or indices) of the pathways the user placed. None: proposed by
        :func:`choose_pathway_faces`, which needs ``latitude``.
    latitude : float, optional
        Site latitude [degrees]; needed only when ``pathways`` is None and the rules ask for
        pathways.

    Returns
    -------
    dict of str to UsableArea
        One entry per face, in the order given.
    """
    obstructions = list(obstructions)
    names = [f.name for f in faces]
    if pathways is None:
        if rules.pathway_count > 0 and rules.pathway_width_m > 0:
            if latitude is None:
                raise InputError("latitude", "is needed to place the access pathways",
                                 allowed="-90 to 90 degrees, or give pathways yourself")
            pathways = choose_pathway_faces(faces, rules, latitude=latitude)
        else:
            pathways = {}
    for name in pathways:
        if name not in names:
            raise InputError(f"pathways.{name}", "is not the name of a face",
                             allowed=", ".join(map(repr, names)))
    out = {}
    for i, face in enumerate(faces):
        edges = pathways.get(face.name, ())
        edges = [edges] if isinstance(edges, (int, np.integer)) else list(edges)
        try:
            out[face.name] = usable_area(face, rules, obstructions, array_share=array_share,
                                         pathway_edges=edges)
        except InputError as err:
            raise err.at(f"faces[{i}]") from None
    return out
