"""Obstructions that cast shadows: blocks, cylinders, trees, and the far horizon.

Frame
-----
Site frame, metres: x east, y north, z up, as everywhere in eaveline. Heights (``top``,
``base``, a tree's ``height`` and ``crown_base``) are z coordinates of the site frame; a tree
stands on the ground at z = 0.

Solids
------
:class:`Block`
    A vertical prism: a simple plan polygon (convex or not) extruded from ``base`` to ``top``.
    Chimneys, dormers, walls, parapets, neighbouring buildings.
:class:`Cylinder`
    A finite vertical circular cylinder from ``base`` to ``top``. Vents, pipes, poles.
:class:`Tree`
    A trunk (vertical cylinder from the ground to ``crown_base``) and a crown above it: by
    default the spheroid centred on the trunk axis at mid-height between ``crown_base`` and
    ``height``, with horizontal semi-axis ``crown_radius`` and vertical semi-axis
    ``(height - crown_base) / 2``; optionally a cone (conifers) with its base disc of radius
    ``crown_radius`` at ``crown_base`` and its apex at ``height``. The crown lets through a
    monthly fraction of the beam (its transmittance); the trunk is opaque.

Thin plates
-----------
:class:`Plate` is a planar polygon in 3D with no thickness: a roof face of the building itself
(a dormer, the other wing of an L-shaped house, a higher roof beside a lower one) or a placed
module (tilted rows on a flat roof shade the row behind). Build one from a roof face or a
placed module with :meth:`Plate.from_face` and :meth:`Plate.from_module`.

*Self-shading rule.* A plate never shades a point that lies in its own plane: every point
within :data:`PLANE_TOLERANCE_M` (1 mm) of the plate's plane, on either side, is skipped by that
plate. Geometrically this is exact for a point truly in the plane (a ray that starts in a plane
leaves it at once and never meets it again), so it covers a module's own sample points, the
points of modules flush on a face (the face does not shade them), and the other modules of the
same rack row when they share one plane. A point off the plane by less than the tolerance is
treated as on it; the only rays this changes leave the point within about 1 mm of the plane and
would meet the plate far away at grazing incidence.

Far horizon
-----------
:class:`HorizonProfile` is the skyline of hills and distant buildings: horizon elevation as a
piecewise-linear, periodic function of azimuth. It shades every point alike.

All solids are closed: a ray that touches a surface meets the solid.
"""

from __future__ import annotations

from dataclasses import KW_ONLY, dataclass, replace
from functools import cached_property

import numpy as np
import shapely

from ..errors import (
    InputError,
    check_finite,
    check_outline,
    check_points,
    check_positive,
    check_range,
    check_whole,
)

__all__ = [
    "CROWN_SHAPES",
    "DECIDUOUS_LEAF_ON_MONTHS",
    "LEAF_OFF_TRANSMITTANCE",
    "LEAF_ON_TRANSMITTANCE",
    "OBSTRUCTION_KINDS",
    "PLANE_TOLERANCE_M",
    "PLATE_KINDS",
    "Block",
    "Cylinder",
    "HorizonProfile",
    "Plate",
    "Tree",
    "deciduous_transmittance",
    "obstruction_from_dict",
]

#: Labels a :class:`Block` or :class:`Cylinder` may carry. The label tells a user (and the plan
#: view) what the solid is; it never changes the geometry or the shading.
OBSTRUCTION_KINDS = (
    "block", "chimney", "vent", "skylight", "dormer", "wall", "building", "pipe", "pole", "other",
)

#: Crown shapes a :class:`Tree` may have. The spheroid is the default.
CROWN_SHAPES = ("spheroid", "cone")

#: Crown transmittance of a deciduous tree without leaves [fraction]. Heisler (1986), Urban
#: Ecology 9:337-359, sugar maple, leafless: about 0.6 (REFERENCES.md, survey table).
LEAF_OFF_TRANSMITTANCE = 0.6
#: Crown transmittance of a deciduous tree in leaf [fraction]. Heisler (1986), sugar maple in
#: leaf: about 0.2.
LEAF_ON_TRANSMITTANCE = 0.2
#: Months (1 = January) a deciduous tree is taken to be in leaf in the northern hemisphere,
#: May to October. Common practice for mid-latitude broadleaf trees; local phenology differs.
DECIDUOUS_LEAF_ON_MONTHS = (5, 6, 7, 8, 9, 10)

#: Distance from a :class:`Plate`'s plane within which a point counts as lying on the plate's
#: plane and is never shaded by it [m]; also twice the largest corner deviation from a plane
#: that a plate accepts.
PLANE_TOLERANCE_M = 1e-3

#: Labels a :class:`Plate` may carry: a roof face, a placed module, anything else. A label only.
PLATE_KINDS = ("roof", "module", "other")

#: Number of segments a full circle gets in plan polygons (footprints of cylinders and crowns).
CIRCLE_SEGMENTS = 64


def deciduous_transmittance(*, hemisphere: str = "north",
                            leaf_on_months=DECIDUOUS_LEAF_ON_MONTHS,
                            leaf_on: float = LEAF_ON_TRANSMITTANCE,
                            leaf_off: float = LEAF_OFF_TRANSMITTANCE) -> tuple[float, ...]:
    """Return twelve monthly crown transmittances of a deciduous tree.

    Parameters
    ----------
    hemisphere : {"north", "south"}, default "north"
        In the southern hemisphere the leaf-on months are shifted by six months.
    leaf_on_months : sequence of int, default May to October
        Months (1-12) the tree is in leaf, given for the northern hemisphere.
    leaf_on, leaf_off : float
        Crown transmittance in leaf and leafless [fraction, 0 to 1]; defaults from Heisler
        (1986).

    Returns
    -------
    tuple of 12 float
        Transmittance for January to December [fraction].
    """
    if hemisphere not in ("north", "south"):
        raise InputError("hemisphere", "is not a hemisphere", value=hemisphere,
                         allowed="'north' or 'south'")
    leaf_on = check_range("leaf_on", leaf_on, 0, 1)
    leaf_off = check_range("leaf_off", leaf_off, 0, 1)
    months = set()
    for i, m in enumerate(leaf_on_months):
        check_whole(f"leaf_on_months[{i}]", m, 1, 12, problem="is not a month number",
                    allowed="whole numbers 1 to 12")
        months.add(int(m) if hemisphere == "north" else (int(m) + 5) % 12 + 1)
    return tuple(leaf_on if m in months else leaf_off for m in range(1, 13))


# --------------------------------------------------------------------------- helpers
def _check_text(field: str, value) -> str:
    if not isinstance(value, str):
        raise InputError(field, "must be text", value=value)
    return value


def _check_kind(value) -> str:
    if value not in OBSTRUCTION_KINDS:
        raise InputError("kind", "is not a known obstruction kind", value=value,
                         allowed=", ".join(OBSTRUCTION_KINDS))
    return value


def _check_center(value) -> tuple[float, float]:
    pts = check_points("center", [value] if np.ndim(value) == 1 else value, dims=2)
    if len(pts) != 1:
        raise InputError("center", "must be one (x, y) point", allowed="two numbers [m]")
    return float(pts[0, 0]), float(pts[0, 1])


def _check_top_base(top, base) -> tuple[float, float]:
    base = check_finite("base", base)
    top = check_finite("top", top)
    if top <= base:
        raise InputError("top", "must be above base", value=top, allowed=f"> {base:g} m")
    return top, base


def _circle(center, radius: float) -> shapely.Polygon:
    return shapely.Point(center).buffer(radius, quad_segs=CIRCLE_SEGMENTS // 4)


def _read(cls_name: str, data, known: set[str], required: tuple[str, ...], type_name: str):
    """Check a plain-data dict for from_dict: right type tag, no unknown and no missing keys."""
    if not isinstance(data, dict):
        raise InputError("", f"a {cls_name} must be a JSON object", value=type(data).__name__)
    if data.get("type", type_name) != type_name:
        raise InputError("type", f"is not '{type_name}'", value=data.get("type"),
                         allowed=type_name)
    unknown = sorted(set(data) - known - {"type"})
    if unknown:
        raise InputError(unknown[0], f"is not a {cls_name} field",
                         allowed=", ".join(sorted(known | {"type"})))
    for key in required:
        if key not in data:
            raise InputError(key, "is missing")


# --------------------------------------------------------------------------- solids
@dataclass(frozen=True)
class Block:
    """A vertical prism: a plan footprint extruded from ``base`` up to ``top``.

    Parameters
    ----------
    footprint : sequence of (x, y)
        Corners of a simple polygon in plan, site frame [m], either winding, not closed (a
        repeated first corner at the end is dropped). Concave outlines are allowed.
    top : float
        Height of the top face [m], above ``base``.
    base : float, default 0
        Height of the bottom face [m].
    kind : str, default "block"
        One of :data:`OBSTRUCTION_KINDS`; a label only.
    name : str, default ""
        A label for the user.
    """

    footprint: tuple[tuple[float, float], ...]
    top: float
    base: float = 0.0
    _: KW_ONLY
    kind: str = "block"
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "footprint", check_outline("footprint", self.footprint))
        top, base = _check_top_base(self.top, self.base)
        set_(self, "top", top)
        set_(self, "base", base)
        set_(self, "kind", _check_kind(self.kind))
        set_(self, "name", _check_text("name", self.name))

    @cached_property
    def footprint_polygon(self) -> shapely.Polygon:
        """The footprint as a shapely Polygon in plan, site frame [m]."""
        return shapely.Polygon(self.footprint)

    @property
    def bounds(self) -> tuple[float, float, float, float, float, float]:
        """Axis-aligned box ``(xmin, ymin, zmin, xmax, ymax, zmax)`` [m]."""
        xmin, ymin, xmax, ymax = self.footprint_polygon.bounds
        return (xmin, ymin, self.base, xmax, ymax, self.top)

    def translated(self, dx: float = 0.0, dy: float = 0.0, dz: float = 0.0) -> Block:
        """Return a copy moved by ``(dx, dy, dz)`` [m]."""
        return replace(self, footprint=tuple((x + dx, y + dy) for x, y in self.footprint),
                       top=self.top + dz, base=self.base + dz)

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {"type": "block", "footprint": [list(p) for p in self.footprint],
                "top": self.top, "base": self.base, "kind": self.kind, "name": self.name}

    @classmethod
    def from_dict(cls, data: dict) -> Block:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        _read("block", data, {"footprint", "top", "base", "kind", "name"},
              ("footprint", "top"), "block")
        return cls(data["footprint"], data["top"], data.get("base", 0.0),
                   kind=data.get("kind", "block"), name=data.get("name", ""))


@dataclass(frozen=True)
class Cylinder:
    """A finite vertical circular cylinder from ``base`` up to ``top``.

    Parameters
    ----------
    center : (float, float)
        Axis position in plan, site frame [m].
    radius : float
        Radius [m], above zero.
    top : float
        Height of the top disc [m], above ``base``.
    base : float, default 0
        Height of the bottom disc [m].
    kind : str, default "vent"
        One of :data:`OBSTRUCTION_KINDS`; a label only.
    name : str, default ""
        A label for the user.
    """

    center: tuple[float, float]
    radius: float
    top: float
    base: float = 0.0
    _: KW_ONLY
    kind: str = "vent"
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "center", _check_center(self.center))
        set_(self, "radius", check_positive("radius", self.radius, unit="m"))
        top, base = _check_top_base(self.top, self.base)
        set_(self, "top", top)
        set_(self, "base", base)
        set_(self, "kind", _check_kind(self.kind))
        set_(self, "name", _check_text("name", self.name))

    @cached_property
    def footprint_polygon(self) -> shapely.Polygon:
        """The footprint as a fine inscribed polygon in plan, site frame [m]."""
        return _circle(self.center, self.radius)

    @property
    def bounds(self) -> tuple[float, float, float, float, float, float]:
        """Axis-aligned box ``(xmin, ymin, zmin, xmax, ymax, zmax)`` [m]."""
        (x, y), r = self.center, self.radius
        return (x - r, y - r, self.base, x + r, y + r, self.top)

    def translated(self, dx: float = 0.0, dy: float = 0.0, dz: float = 0.0) -> Cylinder:
        """Return a copy moved by ``(dx, dy, dz)`` [m]."""
        return replace(self, center=(self.center[0] + dx, self.center[1] + dy),
                       top=self.top + dz, base=self.base + dz)

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {"type": "cylinder", "center": list(self.center), "radius": self.radius,
                "top": self.top, "base": self.base, "kind": self.kind, "name": self.name}

    @classmethod
    def from_dict(cls, data: dict) -> Cylinder:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        _read("cylinder", data, {"center", "radius", "top", "base", "kind", "name"},
              ("center", "radius", "top"), "cylinder")
        return cls(data["center"], data["radius"], data["top"], data.get("base", 0.0),
                   kind=data.get("kind", "vent"), name=data.get("name", ""))


@dataclass(frozen=True)
class Tree:
    """A tree: an opaque trunk and a crown that lets through a monthly share of the beam.

    Parameters
    ----------
    center : (float, float)
        Trunk position in plan, site frame [m]. The tree stands on the ground at its foot,
        ``ground_m`` above the site's z = 0 (0 unless it stands on a bank or a slope).
    height : float
        Height of the crown top above the tree's foot [m], above zero.
    crown_radius : float
        Horizontal radius of the crown [m], above zero.
    crown_base : float
        Height of the lowest point of the crown [m], at least 0 and below ``height``; the
        trunk runs from the ground to here.
    trunk_radius : float, default 0.2
        Radius of the trunk [m], above zero.
    crown_shape : {"spheroid", "cone"}, default "spheroid"
        ``"spheroid"``: centred at ``(crown_base + height) / 2`` on the trunk axis, horizontal
        semi-axis ``crown_radius``, vertical semi-axis ``(height - crown_base) / 2``.
        ``"cone"``: base disc of radius ``crown_radius`` at ``crown_base``, apex at ``height``.
    transmittance : sequence of 12 float or None, default None
        Fraction of the beam the crown lets through in each month, January first [fraction,
        0 to 1]. None means opaque all year. See :meth:`deciduous` for a preset.
    name : str, default ""
        A label for the user.
    ground_m : float, default 0
        Height of the ground at the trunk above the site's z = 0 [m], -100 to 1000: a tree on
        a bank above the house, as a surveyor measures it with a base angle. ``height`` and
        ``crown_base`` are measured from this foot.
    growth_m_per_yr : float, default 0
        How fast the tree grows taller [m/yr], 0 to 3; used to project its shade over the
        system's life (:func:`layout.scene.survey.grown_tree`). State forestry extension tables
        class 0.30 m/yr or less as slow and 0.61 m/yr or more as fast (common practice).
    mature_height_m : float or None, default None
        Height the tree does not grow past [m], above 0 and up to 200 (what the surveyor
        knows of the species on that site); None: no cap. A tree already taller keeps its
        height.
    """

    center: tuple[float, float]
    height: float
    crown_radius: float
    crown_base: float
    trunk_radius: float = 0.2
    _: KW_ONLY
    crown_shape: str = "spheroid"
    transmittance: tuple[float, ...] | None = None
    name: str = ""
    growth_m_per_yr: float = 0.0
    ground_m: float = 0.0
    mature_height_m: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "center", _check_center(self.center))
        set_(self, "height", check_positive("height", self.height, unit="m"))
        set_(self, "crown_radius", check_positive("crown_radius", self.crown_radius, unit="m"))
        set_(self, "crown_base", check_range("crown_base", self.crown_base, 0, self.height,
                                             unit="m (below height)", high_open=True))
        set_(self, "trunk_radius", check_positive("trunk_radius", self.trunk_radius, unit="m"))
        if self.crown_shape not in CROWN_SHAPES:
            raise InputError("crown_shape", "is not a known crown shape", value=self.crown_shape,
                             allowed=", ".join(CROWN_SHAPES))
        if self.transmittance is not None:
            values = self.transmittance
            if isinstance(values, (str, bytes)) or np.ndim(values) != 1 or len(values) != 12:
                raise InputError("transmittance", "needs one value per month",
                                 allowed="12 numbers from 0 to 1, January first, or null")
            set_(self, "transmittance", tuple(
                check_range(f"transmittance[{i}]", v, 0, 1) for i, v in enumerate(values)))
        set_(self, "name", _check_text("name", self.name))
        set_(self, "growth_m_per_yr", check_range("growth_m_per_yr", self.growth_m_per_yr,
                                                  0, 3, unit="m/yr"))
        set_(self, "ground_m", check_range("ground_m", self.ground_m, -100, 1000, unit="m"))
        if self.mature_height_m is not None:
            set_(self, "mature_height_m", check_range("mature_height_m", self.mature_height_m,
                                                      0, 200, unit="m", low_open=True))

    @classmethod
    def deciduous(cls, center, height: float, crown_radius: float, crown_base: float,
                  trunk_radius: float = 0.2, *, hemisphere: str = "north",
                  leaf_on_months=DECIDUOUS_LEAF_ON_MONTHS, name: str = "",
                  growth_m_per_yr: float = 0.0, ground_m: float = 0.0,
                  crown_shape: str = "spheroid", mature_height_m: float | None = None) -> Tree:
        """Build a deciduous tree: crown transmittance 0.2 in leaf, 0.6 leafless.

        Values from Heisler (1986) for sugar maple; see :func:`deciduous_transmittance` for the
        months and the hemisphere.
        """
        return cls(center, height, crown_radius, crown_base, trunk_radius,
                   crown_shape=crown_shape,
                   transmittance=deciduous_transmittance(hemisphere=hemisphere,
                                                         leaf_on_months=leaf_on_months),
                   name=name, growth_m_per_yr=growth_m_per_yr, ground_m=ground_m,
                   mature_height_m=mature_height_m)

    @property
    def monthly_transmittance(self) -> np.ndarray:
        """Crown transmittance for January to December, shape (12,) [fraction]."""
        if self.transmittance is None:
            return np.zeros(12)
        return np.array(self.transmittance, dtype=float)

    @property
    def crown_center_z(self) -> float:
        """Height of the spheroid crown's centre in the site frame [m]."""
        return self.ground_m + 0.5 * (self.crown_base + self.height)

    @property
    def crown_semi_axis_z(self) -> float:
        """Vertical semi-axis of the spheroid crown [m]."""
        return 0.5 * (self.height - self.crown_base)

    @cached_property
    def footprint_polygon(self) -> shapely.Polygon:
        """Outline of crown and trunk seen from above, a fine polygon, site frame [m]."""
        return _circle(self.center, max(self.crown_radius, self.trunk_radius))

    @property
    def bounds(self) -> tuple[float, float, float, float, float, float]:
        """Axis-aligned box ``(xmin, ymin, zmin, xmax, ymax, zmax)`` [m]."""
        (x, y), r = self.center, max(self.crown_radius, self.trunk_radius)
        return (x - r, y - r, self.ground_m, x + r, y + r, self.ground_m + self.height)

    def translated(self, dx: float = 0.0, dy: float = 0.0) -> Tree:
        """Return a copy moved by ``(dx, dy)`` in plan [m] (a tree stays on the ground)."""
        return replace(self, center=(self.center[0] + dx, self.center[1] + dy))

    def to_dict(self) -> dict:
        """Plain-data form used by the project file (``mature_height_m`` only when set)."""
        out = {"type": "tree", "center": list(self.center), "height": self.height,
               "crown_radius": self.crown_radius, "crown_base": self.crown_base,
               "trunk_radius": self.trunk_radius, "crown_shape": self.crown_shape,
               "transmittance": None if self.transmittance is None else list(self.transmittance),
               "name": self.name, "growth_m_per_yr": self.growth_m_per_yr,
               "ground_m": self.ground_m}
        if self.mature_height_m is not None:
            out["mature_height_m"] = self.mature_height_m
        return out

    @classmethod
    def from_dict(cls, data: dict) -> Tree:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = {"center", "height", "crown_radius", "crown_base", "trunk_radius",
                 "crown_shape", "transmittance", "name", "growth_m_per_yr", "ground_m",
                 "mature_height_m"}
        _read("tree", data, known, ("center", "height", "crown_radius", "crown_base"), "tree")
        return cls(data["center"], data["height"], data["crown_radius"], data["crown_base"],
                   data.get("trunk_radius", 0.2), crown_shape=data.get("crown_shape", "spheroid"),
                   transmittance=data.get("transmittance"), name=data.get("name", ""),
                   growth_m_per_yr=data.get("growth_m_per_yr", 0.0),
                   ground_m=data.get("ground_m", 0.0),
                   mature_height_m=data.get("mature_height_m"))


# --------------------------------------------------------------------------- thin plates
def _newell_normal(corners: np.ndarray) -> np.ndarray:
    """Newell's normal of a 3D polygon: twice its area times the unit normal."""
    nxt = np.concatenate([corners[1:], corners[:1]])  # the next corner of each
    # the three sums as rows of one (3, n) array, each row summed as np.sum sums it
    a = corners[:, [1, 2, 0]].T
    b = nxt[:, [1, 2, 0]].T
    c = corners[:, [2, 0, 1]].T
    d = nxt[:, [2, 0, 1]].T
    return np.add.reduce((a - b) * (c + d), axis=1)


def _plate_frame(pts: np.ndarray, origin: np.ndarray, newell: np.ndarray):
    """``(origin, e1, e2, normal)`` of a plate (see :attr:`Plate.frame`) from its corners."""
    normal = newell / np.linalg.norm(newell)
    edge = pts[np.argmax(np.linalg.norm(pts - pts[0], axis=1))] - pts[0]
    e1 = edge - (edge @ normal) * normal
    e1 /= np.linalg.norm(e1)
    # normal × e1, term by term as np.cross computes it
    e2 = np.array([normal[1] * e1[2] - normal[2] * e1[1],
                   normal[2] * e1[0] - normal[0] * e1[2],
                   normal[0] * e1[1] - normal[1] * e1[0]])
    return origin, e1, e2, normal


@dataclass(frozen=True)
class Plate:
    """A thin planar polygon in 3D that casts shadows: a roof face or a module.

    Parameters
    ----------
    corners : sequence of (x, y, z)
        Corners of a simple planar polygon, site frame [m], in order (either winding), not
        closed (a repeated first corner at the end is dropped). Concave outlines are allowed.
        Corners must lie within ``PLANE_TOLERANCE_M / 2`` of one plane.
    kind : str, default "roof"
        One of :data:`PLATE_KINDS`; a label only.
    name : str, default ""
        A label for the user (the face name, the module id).

    Notes
    -----
    A plate never shades points within :data:`PLANE_TOLERANCE_M` of its own plane; see the
    module notes ("Self-shading rule").
    """

    corners: tuple[tuple[float, float, float], ...]
    _: KW_ONLY
    kind: str = "roof"
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        pts = check_points("corners", self.corners, dims=3, min_count=3)
        if len(pts) > 3 and np.abs(pts[0] - pts[-1]).max() <= 1e-9:  # closed: drop the end
            pts = pts[:-1]
        rounded = np.round(pts, 9)
        if len({tuple(row) for row in rounded.tolist()}) < len(pts):  # quick check first
            _, first, counts = np.unique(rounded, axis=0, return_index=True, return_counts=True)
            dup = int(first[np.flatnonzero(counts > 1)[0]])
            raise InputError(f"corners[{dup}]", "corner is repeated", value=pts[dup].tolist(),
                             allowed="each corner once")
        origin = pts.mean(axis=0)
        newell = _newell_normal(pts - origin)
        area = 0.5 * float(np.linalg.norm(newell))
        if area < 1e-6:
            raise InputError("corners", "enclose no area", value=area,
                             allowed="a polygon of area above 0 m²")
        normal = newell / (2 * area)
        deviation = np.abs((pts - pts.mean(axis=0)) @ normal)
        if deviation.max() > 0.5 * PLANE_TOLERANCE_M:
            worst = int(np.argmax(deviation))
            raise InputError(f"corners[{worst}]", "is off the plane of the other corners",
                             value=float(deviation[worst]),
                             allowed=f"within {0.5 * PLANE_TOLERANCE_M * 1e3:g} mm of one plane")
        set_(self, "corners", tuple(tuple(float(v) for v in p) for p in pts))
        # the frame from the same origin and Newell normal (what the property computes)
        self.__dict__["frame"] = _plate_frame(pts, origin, newell)
        polygon = self.plane_polygon
        if not polygon.is_valid:
            raise InputError("corners",
                             f"is not a simple polygon: {shapely.is_valid_reason(polygon)}",
                             allowed="an outline whose edges do not cross")
        if self.kind not in PLATE_KINDS:
            raise InputError("kind", "is not a known plate kind", value=self.kind,
                             allowed=", ".join(PLATE_KINDS))
        set_(self, "name", _check_text("name", self.name))

    @classmethod
    def from_face(cls, face, *, name: str | None = None) -> Plate:
        """Build the plate of a roof face (:class:`layout.scene.roof.RoofFace`), named after it."""
        return cls(np.asarray(face.corners_3d), kind="roof",
                   name=face.name if name is None else name)

    @classmethod
    def from_module(cls, module, *, name: str | None = None) -> Plate:
        """Build the plate of a placed module (:class:`layout.fill.placed.PlacedModule`)."""
        return cls(module.corners_3d, kind="module", name=module.id if name is None else name)

    @cached_property
    def frame(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """``(origin, e1, e2, normal)``: a point of the plane [m] and an orthonormal frame.

        ``e1`` and ``e2`` span the plane, ``normal`` is the unit normal (right-handed with
        the corner order); in-plane coordinates of a point ``x`` are ``(x - origin) · e1``
        and ``(x - origin) · e2`` [m].
        """
        pts = np.asarray(self.corners)
        origin = pts.mean(axis=0)
        return _plate_frame(pts, origin, _newell_normal(pts - origin))

    @cached_property
    def plane_polygon(self) -> shapely.Polygon:
        """The outline in in-plane coordinates (see :attr:`frame`) as a shapely polygon [m]."""
        origin, e1, e2, _ = self.frame
        rel = np.asarray(self.corners) - origin
        return shapely.Polygon(np.column_stack([rel @ e1, rel @ e2]))

    @cached_property
    def footprint_polygon(self) -> shapely.Geometry:
        """Convex hull of the corners seen from above, site frame [m]; a line if vertical."""
        return shapely.convex_hull(shapely.multipoints(np.asarray(self.corners)[:, :2]))

    @property
    def area_m2(self) -> float:
        """True area of the plate [m²]."""
        return float(self.plane_polygon.area)

    @property
    def bounds(self) -> tuple[float, float, float, float, float, float]:
        """Axis-aligned box ``(xmin, ymin, zmin, xmax, ymax, zmax)`` [m]."""
        pts = np.asarray(self.corners)
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        return (float(lo[0]), float(lo[1]), float(lo[2]), float(hi[0]), float(hi[1]),
                float(hi[2]))

    def translated(self, dx: float = 0.0, dy: float = 0.0, dz: float = 0.0) -> Plate:
        """Return a copy moved by ``(dx, dy, dz)`` [m]."""
        return replace(self, corners=tuple((x + dx, y + dy, z + dz) for x, y, z in self.corners))

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {"type": "plate", "corners": [list(p) for p in self.corners], "kind": self.kind,
                "name": self.name}

    @classmethod
    def from_dict(cls, data: dict) -> Plate:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        _read("plate", data, {"corners", "kind", "name"}, ("corners",), "plate")
        return cls(data["corners"], kind=data.get("kind", "roof"), name=data.get("name", ""))


# --------------------------------------------------------------------------- far horizon
@dataclass(frozen=True)
class HorizonProfile:
    """The far skyline: horizon elevation by azimuth, piecewise linear and periodic.

    Between two given azimuths the elevation is interpolated linearly; past the last azimuth it
    runs linearly back to the first one plus 360°. One point gives a uniform horizon.

    Parameters
    ----------
    azimuth_deg : sequence of float
        Azimuths, clockwise from north [degrees], 0 to below 360, strictly increasing.
    elevation_deg : sequence of float
        Horizon elevation at each azimuth [degrees], -90 to 90.
    name : str, default ""
        A label for the user.
    """

    azimuth_deg: tuple[float, ...]
    elevation_deg: tuple[float, ...]
    _: KW_ONLY
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        az = self.azimuth_deg
        el = self.elevation_deg
        for field, values in (("azimuth_deg", az), ("elevation_deg", el)):
            if isinstance(values, (str, bytes)) or np.ndim(values) != 1 or len(values) == 0:
                raise InputError(field, "must be a list of numbers", allowed="one or more numbers")
        if len(az) != len(el):
            raise InputError("elevation_deg", "needs one value per azimuth", value=len(el),
                             allowed=f"{len(az)} values")
        az = tuple(check_range(f"azimuth_deg[{i}]", v, 0, 360, unit="degrees", high_open=True)
                   for i, v in enumerate(az))
        el = tuple(check_range(f"elevation_deg[{i}]", v, -90, 90, unit="degrees")
                   for i, v in enumerate(el))
        for i in range(1, len(az)):
            if az[i] <= az[i - 1]:
                raise InputError(f"azimuth_deg[{i}]", "must be larger than the one before",
                                 value=az[i], allowed=f"> {az[i - 1]:g} degrees")
        set_(self, "azimuth_deg", az)
        set_(self, "elevation_deg", el)
        set_(self, "name", _check_text("name", self.name))

    @classmethod
    def uniform(cls, elevation_deg: float, *, name: str = "") -> HorizonProfile:
        """Build a horizon at the same elevation [degrees] all round."""
        return cls((0.0,), (elevation_deg,), name=name)

    @classmethod
    def from_series(cls, series, *, name: str = "") -> HorizonProfile:
        """Build from a pandas Series of elevation [degrees] indexed by azimuth [degrees]."""
        s = series.sort_index()
        return cls(tuple(float(a) % 360.0 for a in s.index), tuple(float(v) for v in s), name=name)

    def elevation_at(self, azimuth_deg):
        """Horizon elevation [degrees] at ``azimuth_deg`` [degrees]; scalar or array."""
        az = np.asarray(azimuth_deg, dtype=float)
        if len(self.azimuth_deg) == 1:
            out = np.full(az.shape, self.elevation_deg[0])
        else:
            out = np.interp(np.mod(az, 360.0), self.azimuth_deg, self.elevation_deg, period=360.0)
        return float(out) if out.ndim == 0 else out

    def blocks(self, azimuth_deg, elevation_deg):
        """Return True where a sun at ``(azimuth_deg, elevation_deg)`` lies below the skyline."""
        return np.asarray(elevation_deg) < self.elevation_at(azimuth_deg)

    def blocks_vectors(self, sun) -> np.ndarray:
        """Return True for each sun unit vector (T, 3; x east, y north, z up) below the skyline."""
        sun = np.asarray(sun, dtype=float)
        azimuth = np.degrees(np.arctan2(sun[:, 0], sun[:, 1]))
        elevation = np.degrees(np.arcsin(np.clip(sun[:, 2], -1.0, 1.0)))
        return self.blocks(azimuth, elevation)

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {"type": "horizon", "azimuth_deg": list(self.azimuth_deg),
                "elevation_deg": list(self.elevation_deg), "name": self.name}

    @classmethod
    def from_dict(cls, data: dict) -> HorizonProfile:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        _read("horizon", data, {"azimuth_deg", "elevation_deg", "name"},
              ("azimuth_deg", "elevation_deg"), "horizon")
        return cls(data["azimuth_deg"], data["elevation_deg"], name=data.get("name", ""))


_TYPES = {"block": Block, "cylinder": Cylinder, "tree": Tree, "plate": Plate,
          "horizon": HorizonProfile}


def obstruction_from_dict(data: dict):
    """Build a :class:`Block`, :class:`Cylinder`, :class:`Tree`, :class:`Plate` or horizon.

    Parameters
    ----------
    data : dict
        Output of one of their ``to_dict`` methods; its ``"type"`` key picks the class.

    Raises
    ------
    InputError
        If the type is missing or unknown, or a field is bad (the error names the field).
    """
    if not isinstance(data, dict):
        raise InputError("", "an obstruction must be a JSON object", value=type(data).__name__)
    if "type" not in data:
        raise InputError("type", "is missing", allowed=", ".join(_TYPES))
    cls = _TYPES.get(data["type"])
    if cls is None:
        raise InputError("type", "is not a known obstruction type", value=data["type"],
                         allowed=", ".join(_TYPES))
    return cls.from_dict(data)

