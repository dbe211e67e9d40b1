"""Fire-access setbacks and clearances, code-edition presets, and the usable area of a face.

.. caution::
   The numbers here are defaults only. The authority having jurisdiction (the local fire
   marshal or building official) decides which code edition applies, with which local
   amendments, and may ask for more or allow less. Check the adopted code before a design
   goes out. :data:`CAUTION` holds this text for a user interface or a report.

What is modelled
----------------
A :class:`ClearanceRules` object is plain, editable data: one setback distance per edge kind
(eave, ridge, rake, hip, valley, wall, parapet; see :data:`layout.scene.roof.EDGE_KINDS`), a larger
ridge setback that takes over when the array covers more than a share of the plan-view roof
area (the "33 % rule"), a clear ring around roof-mounted obstructions, access pathways from
eave to ridge, and a pitch at or below which a face is exempt from the residential rules.

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
from dataclasses import dataclass, field, replace
from types import MappingProxyType

import numpy as np
import shapely
from shapely.geometry import mapping, shape

from ..errors import InputError, check_fields, check_nonnegative, check_positive, check_range
from ..scene.roof import EDGE_KINDS, MAX_PITCH_DEG
from ..units import FOOT_M, feet_to_m, inches_to_m, pitch_from_rise

__all__ = [
    "ARC_SIDES",
    "CAUTION",
    "PATHWAY_EDGE_KINDS",
    "ClearanceRules",
    "UsableArea",
    "array_share",
    "choose_pathway_faces",
    "ifc_2015_residential",
    "ifc_2021_commercial",
    "ifc_2021_residential",
    "no_setbacks",
    "ridge_setback_in_force",
    "roof_mounted",
    "usable_area",
    "usable_areas",
]

#: Caution shown with every setback result.
CAUTION = (
    "Setback and clearance values are defaults only. The authority having jurisdiction "
    "decides which fire code edition and local amendments apply; confirm the required "
    "setbacks, pathways and clearances with them before the design is submitted."
)

#: Sides of the polygon that stands in for a circle of radius d (circumscribed, flats facing
#: the edge normal). Multiple of 4, so the flats also face along the edge.
ARC_SIDES = 128

#: Edge kinds an access pathway may run along: edges that climb from eave to ridge.
PATHWAY_EDGE_KINDS = ("rake", "hip", "valley")

# Parts of a result thinner than this [m], or smaller than this area [m²], are floating-point
# slivers and are dropped.
_SLIVER_WIDTH_M = 1e-6
_SLIVER_AREA_M2 = 1e-9
# Grid that results are snapped to [m]: far below any tape reading, far above rounding noise.
_GRID_M = 1e-10
# Pitch comparison slack for the exemption [degrees].
_PITCH_TOL_DEG = 1e-9
# Height slack when deciding whether an obstruction stands on a face [m].
_HEIGHT_TOL_M = 1e-6

# Obstruction kinds never treated as roof-mounted, whatever their footprint: a crown that
# overhangs a roof is not a roof penetration.
_NOT_ROOF_MOUNTED = ("tree",)


# --------------------------------------------------------------------------- rules
def _check_optional(field_name: str, value, check, **kwargs):
    return None if value is None else check(field_name, value, **kwargs)


def _check_count(field_name: str, value) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        if isinstance(value, float) and value.is_integer() and value >= 0:
            return int(value)
        raise InputError(field_name, "must be a whole number", value=value, allowed="0, 1, 2, ...")
    if value < 0:
        raise InputError(field_name, "must not be negative", value=value, allowed="0, 1, 2, ...")
    return int(value)


def _check_setbacks(value) -> MappingProxyType:
    if not isinstance(value, Mapping):
        raise InputError("edge_setback_m", "must map edge kinds to distances",
                         value=type(value).__name__,
                         allowed="{kind: metres} for " + ", ".join(EDGE_KINDS))
    unknown = [k for k in value if k not in EDGE_KINDS]
    if unknown:
        raise InputError(f"edge_setback_m.{unknown[0]}", "is not an edge kind",
                         allowed=", ".join(EDGE_KINDS))
    missing = [k for k in EDGE_KINDS if k not in value]
    if missing:
        raise InputError("edge_setback_m", "needs a distance for every edge kind",
                         value=", ".join(missing) + " missing",
                         allowed="one entry each for " + ", ".join(EDGE_KINDS))
    return MappingProxyType({
        k: check_nonnegative(f"edge_setback_m.{k}", value[k], unit="m") for k in EDGE_KINDS})


@dataclass(frozen=True)
class ClearanceRules:
    """Setback, clearance and pathway rules for roof-mounted PV, all editable.

    Start from a preset (:func:`ifc_2021_residential`, :func:`ifc_2015_residential`,
    :func:`ifc_2021_commercial`, :func:`no_setbacks`) and change what the authority having
    jurisdiction asks for with :meth:`with_edge_setback` or :func:`dataclasses.replace`.

    Parameters
    ----------
    name : str
        Short label shown to the user.
    edge_setback_m : mapping of str to float
        Clear distance from each edge kind [m], on the roof surface: one entry for every kind
        in :data:`layout.scene.roof.EDGE_KINDS`. The ``ridge`` entry is the ridge setback while the
        array's share of the plan-view roof area is at or below ``share_threshold``.
    source : str, default ""
        Code edition and section the values follow, or where else they came from.
    ridge_setback_high_m : float or None, default None
        Ridge setback once the array covers more than ``share_threshold`` of the plan-view
        roof area [m]. None: the ridge setback does not change with coverage.
    share_threshold : float, default 0.33
        Array share of the plan-view roof area above which ``ridge_setback_high_m`` applies
        [fraction], more than 0 and at most 1.
    obstruction_clearance_m : float, default 0
        Width of the clear ring around each roof-mounted obstruction (chimney, vent,
        skylight, ...) [m], on the roof surface.
    pathway_width_m : float, default 0
        Width of each access pathway from eave to ridge [m].
    pathway_count : int, default 0
        Number of access pathways the building needs, each on a separate face.
    exempt_max_pitch_deg : float or None, default None
        Faces with a pitch at or below this [degrees] are exempt from the edge setbacks and
        pathways (the obstruction ring still applies). None: no exemption.
    ridge_source : str, default ""
        Code section of the ridge setback and its coverage switch, quoted in explanations;
        empty: ``source`` is quoted instead.
    """

    name: str
    edge_setback_m: Mapping[str, float]
    source: str = ""
    ridge_setback_high_m: float | None = None
    share_threshold: float = 0.33
    obstruction_clearance_m: float = 0.0
    pathway_width_m: float = 0.0
    pathway_count: int = 0
    exempt_max_pitch_deg: float | None = None
    ridge_source: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        for text in ("name", "source", "ridge_source"):
            if not isinstance(getattr(self, text), str):
                raise InputError(text, "must be text", value=getattr(self, text))
        set_(self, "edge_setback_m", _check_setbacks(self.edge_setback_m))
        set_(self, "ridge_setback_high_m", _check_optional(
            "ridge_setback_high_m", self.ridge_setback_high_m, check_nonnegative, unit="m"))
        set_(self, "share_threshold", check_range(
            "share_threshold", self.share_threshold, 0.0, 1.0, low_open=True))
        set_(self, "obstruction_clearance_m", check_nonnegative(
            "obstruction_clearance_m", self.obstruction_clearance_m, unit="m"))
        set_(self, "pathway_width_m", check_nonnegative(
            "pathway_width_m", self.pathway_width_m, unit="m"))
        set_(self, "pathway_count", _check_count("pathway_count", self.pathway_count))
        set_(self, "exempt_max_pitch_deg", _check_optional(
            "exempt_max_pitch_deg", self.exempt_max_pitch_deg, check_range,
            low=0.0, high=MAX_PITCH_DEG, unit="degrees"))

    def __hash__(self):
        return hash((self.name, tuple(self.edge_setback_m.items()), self.source,
                     self.ridge_setback_high_m, self.share_threshold,
                     self.obstruction_clearance_m, self.pathway_width_m, self.pathway_count,
                     self.exempt_max_pitch_deg, self.ridge_source))

    def __eq__(self, other):
        if not isinstance(other, ClearanceRules):
            return NotImplemented
        return self.to_dict() == other.to_dict()

    def setback_m(self, kind: str) -> float:
        """Setback from an edge of ``kind`` [m] (the low ridge setback for ``ridge``)."""
        if kind not in EDGE_KINDS:
            raise InputError("kind", "is not an edge kind", value=kind,
                             allowed=", ".join(EDGE_KINDS))
        return self.edge_setback_m[kind]

    def with_edge_setback(self, kind: str, metres: float) -> ClearanceRules:
        """Return a copy with the setback from edges of ``kind`` set to ``metres`` [m]."""
        if kind not in EDGE_KINDS:
            raise InputError("kind", "is not an edge kind", value=kind,
                             allowed=", ".join(EDGE_KINDS))
        setbacks = dict(self.edge_setback_m)
        setbacks[kind] = metres
        return replace(self, edge_setback_m=setbacks)

    def is_exempt(self, pitch_deg: float) -> bool:
        """Tell whether a face of ``pitch_deg`` [degrees] is exempt from edge setbacks."""
        limit = self.exempt_max_pitch_deg
        return limit is not None and float(pitch_deg) <= limit + _PITCH_TOL_DEG

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "name": self.name,
            "source": self.source,
            "edge_setback_m": dict(self.edge_setback_m),
            "ridge_setback_high_m": self.ridge_setback_high_m,
            "share_threshold": self.share_threshold,
            "obstruction_clearance_m": self.obstruction_clearance_m,
            "pathway_width_m": self.pathway_width_m,
            "pathway_count": self.pathway_count,
            "exempt_max_pitch_deg": self.exempt_max_pitch_deg,
            "ridge_source": self.ridge_source,
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> ClearanceRules:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        if not isinstance(data, Mapping):
            raise InputError("", "clearance rules must be a JSON object",
                             value=type(data).__name__)
        known = ("name", "source", "edge_setback_m", "ridge_setback_high_m", "share_threshold",
                 "obstruction_clearance_m", "pathway_width_m", "pathway_count",
                 "exempt_max_pitch_deg", "ridge_source")
        check_fields(data, known, required=("name", "edge_setback_m"), what="clearance rules")
        return cls(**{k: data[k] for k in known if k in data})


# --------------------------------------------------------------------------- presets
def ifc_2021_residential(*, sprinklered: bool = False) -> ClearanceRules:
    """Residential rules after the International Fire Code, 2021 edition, §1205.2.

    - Ridge: 18 in (457.2 mm) clear on each side of a horizontal ridge while the array
      covers at most 33 % of the plan-view roof area, 36 in (914.4 mm) above that
      (§1205.2.1.2). With an automatic sprinkler system the switch is at 66 % instead.
    - Two 36 in (914.4 mm) access pathways from the lowest roof edge to the ridge, on
      separate roof planes (§1205.2.1.1).
    - Roofs of 2:12 (9.46°) or less are exempt (§1205.2).
    - No setback from eaves, rakes, hips or valleys in this edition.

    Parameters
    ----------
    sprinklered : bool, default False
        The dwelling has an automatic sprinkler system.

    Returns
    -------
    ClearanceRules
    """
    # REFERENCES.md, 'Fire access setbacks': IFC 2021 §1205.2.1.2 (18 in / 36 in, 33 %);
    # the 66 % sprinklered threshold is recalled from memory, not checked in the primary text.
    threshold = 0.66 if sprinklered else 0.33
    ridge_source = "IFC 2021 §1205.2.1.2"
    if sprinklered:
        ridge_source += ", sprinklered 66 % threshold from memory"
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    setbacks["ridge"] = inches_to_m(18)
    return ClearanceRules(
        name="IFC 2021 residential" + (" (sprinklered)" if sprinklered else ""),
        source="IFC 2021 §1205.2 (exemption), §1205.2.1.1 (pathways), §1205.2.1.2 (ridge)",
        ridge_source=ridge_source,
        edge_setback_m=setbacks,
        ridge_setback_high_m=inches_to_m(36),
        share_threshold=threshold,
        # The IFC sets no ring around chimneys or vents for dwellings; the AHJ or the racking
        # manufacturer may: set obstruction_clearance_m when they do.
        obstruction_clearance_m=0.0,
        pathway_width_m=inches_to_m(36),
        pathway_count=2,
        exempt_max_pitch_deg=pitch_from_rise(2),
    )


def ifc_2015_residential() -> ClearanceRules:
    """Residential rules after the International Fire Code, 2015 edition, §605.11.3.2.

    - Hips and valleys: 18 in (457.2 mm) clear (§605.11.3.2.3, same in IFC 2012).
    - Ridge: modules no higher than 3 ft (914.4 mm) below the ridge (§605.11.3.2.4), with no
      change by array coverage.
    - 36 in (914.4 mm) access pathways from eave to ridge (§605.11.3.2.1–2).

    The hip and valley row is from REFERENCES.md; the ridge and pathway values are recalled
    from memory. This edition sets the pathways per roof slope (one on each slope with
    modules for hip roofs, two for single-ridge roofs), which :func:`choose_pathway_faces`
    does not model: its ``pathway_count`` of 2 is a building total. The edition applies the
    hip and valley setback only where modules sit on both sides; this preset applies it
    always. No low-slope exemption is set, since none is confirmed for this edition.

    Returns
    -------
    ClearanceRules
    """
    # REFERENCES.md, 'Fire access setbacks', older editions: IFC 2012/2015 §605.11, 18 in from
    # hips and valleys. Ridge 3 ft and 3 ft pathways: from memory (§605.11.3.2.1, .2, .4), not
    # confirmed against the primary text; the 2:12 exemption could not be confirmed for 2015.
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    setbacks["hip"] = inches_to_m(18)
    setbacks["valley"] = inches_to_m(18)
    setbacks["ridge"] = feet_to_m(3)
    return ClearanceRules(
        name="IFC 2015 residential",
        source=("IFC 2015 §605.11.3.2.3 (hips and valleys); §605.11.3.2.1–2 (pathways) and "
                "§605.11.3.2.4 (ridge) from memory"),
        edge_setback_m=setbacks,
        ridge_setback_high_m=None,
        obstruction_clearance_m=0.0,
        pathway_width_m=feet_to_m(3),
        pathway_count=2,
        exempt_max_pitch_deg=None,
        ridge_source="IFC 2015 §605.11.3.2.4, from memory",
    )


def ifc_2021_commercial(*, building_length_m: float, building_width_m: float) -> ClearanceRules:
    """Rules for buildings other than dwellings after the IFC 2021, §1205.3.1.

    A clear perimeter of 6 ft (1828.8 mm) along the roof's outer edges (eave, rake, parapet,
    wall), or 4 ft (1219.2 mm) where either axis of the building is 250 ft (76.2 m) or less.
    Ridges, hips and valleys are inside the roof and get no setback here. Interior pathways
    between array sections (§1205.3.2) are not modelled.

    Parameters
    ----------
    building_length_m, building_width_m : float
        Plan dimensions of the building along its two axes [m].

    Returns
    -------
    ClearanceRules
    """
    length = check_positive("building_length_m", building_length_m, unit="m")
    width = check_positive("building_width_m", building_width_m, unit="m")
    # REFERENCES.md, 'Fire access setbacks': IFC 2021 §1205.3.1, 6 ft perimeter; the 4 ft
    # rule for an axis of 250 ft or less is from memory.
    small = min(length, width) <= 250 * FOOT_M + 1e-9
    perimeter = feet_to_m(4) if small else feet_to_m(6)
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    for kind in ("eave", "rake", "parapet", "wall"):
        setbacks[kind] = perimeter
    return ClearanceRules(
        name="IFC 2021 commercial" + (" (axis ≤ 250 ft)" if small else ""),
        source="IFC 2021 §1205.3.1" + ("; 4 ft rule from memory" if small else ""),
        edge_setback_m=setbacks,
        obstruction_clearance_m=0.0,
        pathway_width_m=0.0,
        pathway_count=0,
    )


def no_setbacks() -> ClearanceRules:
    """Rules with no setbacks, clearances or pathways (every distance 0)."""
    return ClearanceRules(name="no setbacks", source="none",
                          edge_setback_m=dict.fromkeys(EDGE_KINDS, 0.0))


# --------------------------------------------------------------------------- 33 % rule
def array_share(module_plan_area_m2: float, roof_plan_area_m2: float) -> float:
    """Share of the plan-view roof area covered by the array.

    Parameters
    ----------
    module_plan_area_m2 : float
        Area of all modules seen from above [m²].
    roof_plan_area_m2 : float
        Plan-view area of the whole roof [m²], all faces of the building.

    Returns
    -------
    float
        ``module_plan_area_m2 / roof_plan_area_m2`` [fraction], 0 to 1.
    """
    modules = check_nonnegative("module_plan_area_m2", module_plan_area_m2, unit="m²")
    roof = check_positive("roof_plan_area_m2", roof_plan_area_m2, unit="m²")
    if modules > roof * (1 + 1e-9):
        raise InputError("module_plan_area_m2", "exceeds the plan-view roof area",
                         value=modules, allowed=f"at most {roof:g} m²")
    return min(modules / roof, 1.0)


def _length_text(metres: float) -> str:
    inches = round(metres / 0.0254, 2)
    return f"{inches:g} in ({metres * 1000:.0f} mm)"


def _percent_pair(share: float, threshold: float) -> tuple[str, str]:
    for digits in (0, 1, 2, 3):
        a, b = f"{share * 100:.{digits}f}", f"{threshold * 100:.{digits}f}"
        if a != b or share == threshold:
            return f"{a} %", f"{b} %"
    return f"{share * 100:g} %", f"{threshold * 100:g} %"


def ridge_setback_in_force(rules: ClearanceRules, share: float) -> tuple[float, str]:
    """Ridge setback that applies at a given array share, with the reason in words.

    The larger ``rules.ridge_setback_high_m`` applies when ``share`` is strictly above
    ``rules.share_threshold`` (IFC 2021 §1205.2.1.2: "more than 33 percent").

    Parameters
    ----------
    rules : ClearanceRules
    share : float
        Array share of the plan-view roof area [fraction], 0 to 1 (see :func:`array_share`).

    Returns
    -------
    metres : float
        Ridge setback [m].
    explanation : str
        Plain-language reason, naming the rule's source.
    """
    share = check_range("array_share", share, 0.0, 1.0)
    low = rules.edge_setback_m["ridge"]
    cited = rules.ridge_source or rules.source
    source = f" ({cited})" if cited else ""
    high = rules.ridge_setback_high_m
    if high is None:
        return low, f"ridge setback {_length_text(low)}{source}"
    a, b = _percent_pair(share, rules.share_threshold)
    if share > rules.share_threshold:
        return high, (f"ridge setback {_length_text(high)}: array covers {a} of the plan-view "
                      f"roof area, above {b}{source}")
    return low, (f"ridge setback {_length_text(low)}: array covers {a} of the plan-view roof "
                 f"area, not above {b}{source}")


# --------------------------------------------------------------------------- geometry
def _arc_polygons(centers: np.ndarray, radii: np.ndarray, angles: np.ndarray) -> np.ndarray:
    """Circumscribed ARC_SIDES-gons around discs, one flat facing each ``angles`` direction."""
    k = (np.arange(ARC_SIDES) + 0.5) * (2 * math.pi / ARC_SIDES)
    theta = angles[:, None] + k[None, :]
    r = (radii / math.cos(math.pi / ARC_SIDES))[:, None]
    ring = centers[:, None, :] + r[..., None] * np.stack([np.cos(theta), np.sin(theta)], -1)
    return shapely.polygons(ring)


def _segment_zones(starts, ends, distances) -> np.ndarray:
    """Polygons covering every point closer than ``distances[i]`` to segment ``i``.

    Returns an array of geometries, one per segment: a band of half-width ``d`` around the
    segment and a circumscribed disc of radius ``d`` at each end. Segments with ``d == 0``
    (or no length) give an empty polygon.
    """
    p0 = np.asarray(starts, dtype=float).reshape(-1, 2)
    p1 = np.asarray(ends, dtype=float).reshape(-1, 2)
    d = np.asarray(distances, dtype=float).reshape(-1)
    out = np.empty(len(d), dtype=object)
    out[:] = [shapely.Polygon() for _ in range(len(d))]
    delta = p1 - p0
    length = np.hypot(delta[:, 0], delta[:, 1])
    use = (d > 0) & (length > 0)
    if not use.any():
        return out
    p0, p1, d, delta, length = p0[use], p1[use], d[use], delta[use], length[use]
    t = delta / length[:, None]
    n = np.stack([-t[:, 1], t[:, 0]], axis=1) * d[:, None]
    band = shapely.polygons(np.stack([p0 + n, p1 + n, p1 - n, p0 - n], axis=1))
    angle = np.arctan2(t[:, 0], -t[:, 1])  # direction of the normal (-t_y, t_x)
    caps0 = _arc_polygons(p0, d, angle)
    caps1 = _arc_polygons(p1, d, angle)
    zones = shapely.union_all(np.stack([band, caps0, caps1], axis=1), axis=1)
    out[np.flatnonzero(use)] = zones
    return out


def _rings_of(geometry) -> list[np.ndarray]:
    """Coordinates of every ring (exterior and holes) of the polygons in ``geometry``."""
    return [np.asarray(ring.coords) for ring in shapely.get_rings(shapely.get_parts(geometry))]


def _grow(geometry, distance: float):
    """``geometry`` grown by ``distance`` [m] with rounded corners (conservative arcs)."""
    if distance <= 0:
        return geometry
    pieces = [geometry]
    for ring in _rings_of(geometry):
        pieces.extend(_segment_zones(ring[:-1], ring[1:], np.full(len(ring) - 1, distance)))
    return shapely.union_all(pieces)


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
        if isinstance(index, bool) or not isinstance(index, (int, np.integer)) \
                or not 0 <= index < n:
            raise InputError(f"pathway_edges[{i}]", "is not an edge of the face", value=index,
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
                notes.append(f"access pathway {_length_text(width)} wide along edge {index} "
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
