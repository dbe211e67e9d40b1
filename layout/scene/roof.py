"""Roof faces: a plan outline on a tilted plane, and the maps between its three frames.

Frames
------
plan
    Site frame seen from above: x east, y north, metres. Outlines are entered here.
roof plane
    ``u`` runs along the eave (horizontal), ``v`` runs up the slope, both in true length on
    the roof surface. Looking at the face from below (standing downhill, facing uphill), ``u``
    grows to the right. The origin is at the face's lowest, left-most extent, so every point
    of the face has ``u >= 0`` and ``v >= 0``. Modules are placed in this frame.
3D
    Site frame with z up: (x, y, z) metres.

A face's azimuth is the compass direction its slope faces (downhill), clockwise from north,
as pvlib uses for ``surface_azimuth``. Its pitch is the angle from horizontal, which pvlib calls
``surface_tilt``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property

import numpy as np
import shapely

from ..errors import (
    InputError,
    check_fields,
    check_finite,
    check_outline,
    check_points,
    check_range,
)
from ..units import pitch_from_rise

__all__ = [
    "EDGE_KINDS",
    "Edge",
    "RoofFace",
    "building_to_site",
    "classify_edges",
]

#: Edge kinds a face edge can carry. ``wall`` (the face meets a wall rising above it, such as a
#: dormer cheek or an upper storey) and ``parapet`` are never inferred from geometry; set them
#: with an override.
EDGE_KINDS = ("eave", "ridge", "rake", "hip", "valley", "wall", "parapet")

#: Largest pitch the roof model accepts [degrees]; steeper surfaces are walls.
MAX_PITCH_DEG = 75.0

# An edge counts as level (eave or ridge) or as running straight up the slope (rake) when its
# direction is within this angle of the ideal, measured in the roof plane [degrees].
_EDGE_ANGLE_TOL_DEG = 1.0


def building_to_site(points, rotation_deg: float = 0.0, origin=(0.0, 0.0)) -> np.ndarray:
    """Map points from a building's own axes into the site frame (x east, y north).

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Points in the building's axes [m]: ``a`` along its local x axis, ``b`` along its local
        y axis.
    rotation_deg : float, default 0
        Compass direction of the building's local y axis, clockwise from true north
        [degrees]. A building whose front wall faces 20° west of south, drawn with its local y
        axis pointing to the back, has ``rotation_deg = -20``.
    origin : (float, float)
        Site coordinates of the building's local origin [m].

    Returns
    -------
    numpy.ndarray, shape (n, 2)
        Points in the site frame [m]. A local azimuth becomes ``local + rotation_deg``.
    """
    pts = np.asarray(points, dtype=float)
    theta = math.radians(rotation_deg)
    c, s = math.cos(theta), math.sin(theta)
    x = origin[0] + pts[..., 0] * c + pts[..., 1] * s
    y = origin[1] - pts[..., 0] * s + pts[..., 1] * c
    return np.stack([x, y], axis=-1)


@dataclass(frozen=True)
class Edge:
    """One edge of a face outline, from vertex ``index`` to the next vertex."""

    index: int
    start: tuple[float, float]
    end: tuple[float, float]
    kind: str
    overridden: bool
    true_length_m: float
    plan_length_m: float


@dataclass(frozen=True)
class RoofFace:
    """One plane of a roof: a plan outline lifted onto a tilted plane.

    Parameters
    ----------
    outline : sequence of (x, y)
        Corners in plan, site frame [m], in either winding, not closed (a repeated first
        corner at the end is dropped). Edge ``i`` runs from corner ``i`` to corner ``i + 1``.
    pitch_deg : float
        Slope from horizontal [degrees], 0 to 75. Use :func:`layout.units.pitch_from_rise` or
        :meth:`from_rise` for rise-in-12.
    azimuth_deg : float
        Compass direction the slope faces (downhill), clockwise from north [degrees], 0 to
        360. For a flat face it only orients the roof-plane axes.
    eave_height_m : float
        Height above ground of the face's lowest point [m], at least 0.
    name : str
        Label shown to the user; unique within a project.
    edge_overrides : tuple of str or None, optional
        One entry per edge: an edge kind from :data:`EDGE_KINDS` to use instead of the
        geometric one, or None to keep the geometric kind.
    """

    outline: tuple[tuple[float, float], ...]
    pitch_deg: float
    azimuth_deg: float
    eave_height_m: float = 0.0
    name: str = ""
    edge_overrides: tuple[str | None, ...] | None = field(default=None)

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "outline", check_outline("outline", self.outline))
        set_(self, "pitch_deg", check_range("pitch_deg", self.pitch_deg, 0, MAX_PITCH_DEG,
                                            unit="degrees"))
        set_(self, "azimuth_deg", check_range("azimuth_deg", self.azimuth_deg, 0, 360,
                                              unit="degrees"))
        set_(self, "eave_height_m", check_range("eave_height_m", self.eave_height_m, 0, 1000,
                                                unit="m"))
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)
        if self.edge_overrides is not None:
            overrides = tuple(self.edge_overrides)
            if len(overrides) != len(self.outline):
                raise InputError("edge_overrides", "needs one entry per edge",
                                 value=len(overrides), allowed=f"{len(self.outline)} entries")
            for i, kind in enumerate(overrides):
                if kind is not None and kind not in EDGE_KINDS:
                    raise InputError(f"edge_overrides[{i}]", "unknown edge kind", value=kind,
                                     allowed=", ".join(EDGE_KINDS) + " or null")
            set_(self, "edge_overrides", None if all(k is None for k in overrides) else overrides)

    # ----------------------------------------------------------------- constructors
    @classmethod
    def from_rise(cls, outline, rise_in_12: float, azimuth_deg: float, eave_height_m: float = 0.0,
                  **kwargs) -> RoofFace:
        """Build a face whose pitch is given as rise in 12 (6 for a 6:12 roof)."""
        return cls(outline, pitch_from_rise(rise_in_12), azimuth_deg, eave_height_m, **kwargs)

    @classmethod
    def from_building_axes(cls, outline, pitch_deg: float, azimuth_deg: float,
                           eave_height_m: float = 0.0, *, rotation_deg: float = 0.0,
                           origin=(0.0, 0.0), **kwargs) -> RoofFace:
        """Build a face from an outline and azimuth given in the building's own axes.

        ``rotation_deg`` and ``origin`` are as in :func:`building_to_site`; the stored face is in
        the site frame with a true azimuth.
        """
        pts = check_points("outline", outline, dims=2, min_count=3)
        azimuth = check_range("azimuth_deg", azimuth_deg, 0, 360, unit="degrees")
        rotation_deg = check_finite("rotation_deg", rotation_deg)
        origin = check_points("origin", [origin], dims=2)[0]
        return cls(building_to_site(pts, rotation_deg, origin), pitch_deg,
                   (azimuth + rotation_deg) % 360.0, eave_height_m, **kwargs)

    def with_edge_kind(self, index: int, kind: str | None) -> RoofFace:
        """Return a copy with edge ``index`` overridden to ``kind`` (None restores geometry)."""
        n = len(self.outline)
        if not 0 <= index < n:
            raise InputError("edge index", "is out of range", value=index, allowed=f"0 to {n - 1}")
        overrides = list(self.edge_overrides or (None,) * n)
        overrides[index] = kind
        return replace(self, edge_overrides=tuple(overrides))

    # ----------------------------------------------------------------- frame
    @cached_property
    def downslope(self) -> np.ndarray:
        """Unit plan vector pointing downhill, toward the azimuth (x east, y north)."""
        az = math.radians(self.azimuth_deg)
        return np.array([math.sin(az), math.cos(az)])

    @cached_property
    def along_eave(self) -> np.ndarray:
        """Unit plan vector of the roof-plane ``u`` axis (to the right when facing uphill)."""
        d = self.downslope
        return np.array([-d[1], d[0]])

    @cached_property
    def _offsets(self) -> tuple[float, float]:
        pts = np.asarray(self.outline)
        u = pts @ self.along_eave
        s = -(pts @ self.downslope)
        return float(u.min()), float(s.min())

    @property
    def cos_pitch(self) -> float:
        """Cosine of the pitch."""
        return math.cos(math.radians(self.pitch_deg))

    @property
    def sin_pitch(self) -> float:
        """Sine of the pitch."""
        return math.sin(math.radians(self.pitch_deg))

    @cached_property
    def normal(self) -> np.ndarray:
        """Upward unit normal of the face in 3D (x east, y north, z up)."""
        d = self.downslope
        return np.array([d[0] * self.sin_pitch, d[1] * self.sin_pitch, self.cos_pitch])

    def plan_to_roof(self, xy) -> np.ndarray:
        """Map plan points (..., 2) [m] to roof-plane (u, v) [m, true length]."""
        p = np.asarray(xy, dtype=float)
        u0, s0 = self._offsets
        u = p @ self.along_eave - u0
        v = (-(p @ self.downslope) - s0) / self.cos_pitch
        return np.stack([u, v], axis=-1)

    def roof_to_plan(self, uv) -> np.ndarray:
        """Map roof-plane points (..., 2) [m] to plan (x, y) [m]."""
        q = np.asarray(uv, dtype=float)
        u0, s0 = self._offsets
        s = q[..., 1] * self.cos_pitch + s0
        along = q[..., 0] + u0
        return along[..., None] * self.along_eave - s[..., None] * self.downslope

    def roof_to_3d(self, uv) -> np.ndarray:
        """Map roof-plane points (..., 2) to 3D site points (..., 3) [m]."""
        q = np.asarray(uv, dtype=float)
        xy = self.roof_to_plan(q)
        z = self.eave_height_m + q[..., 1] * self.sin_pitch
        return np.concatenate([xy, z[..., None]], axis=-1)

    def plan_to_3d(self, xy) -> np.ndarray:
        """Lift plan points (..., 2) onto the face's plane, giving (..., 3) [m]."""
        return self.roof_to_3d(self.plan_to_roof(xy))

    def height_at(self, xy) -> np.ndarray:
        """Height of the face's plane above ground at plan points (..., 2) [m]."""
        return self.plan_to_3d(xy)[..., 2]

    # ----------------------------------------------------------------- shapes and areas
    @cached_property
    def plan_polygon(self) -> shapely.Polygon:
        """Outline in plan as a shapely polygon (counter-clockwise)."""
        return shapely.orient_polygons(shapely.Polygon(self.outline))

    @cached_property
    def roof_polygon(self) -> shapely.Polygon:
        """Outline in the roof-plane frame (u, v) as a shapely polygon (counter-clockwise)."""
        return shapely.orient_polygons(shapely.Polygon(self.plan_to_roof(np.asarray(self.outline))))

    @cached_property
    def corners_3d(self) -> np.ndarray:
        """Outline corners in 3D, shape (n, 3) [m], in the order given."""
        return self.plan_to_3d(np.asarray(self.outline))

    @property
    def plan_area_m2(self) -> float:
        """Area seen from above [m²]."""
        return float(self.plan_polygon.area)

    @property
    def true_area_m2(self) -> float:
        """Area on the sloped surface [m²]; plan area = true area × cos(pitch)."""
        return float(self.roof_polygon.area)

    @property
    def ridge_height_m(self) -> float:
        """Height of the face's highest point above ground [m]."""
        return float(self.corners_3d[:, 2].max())

    # ----------------------------------------------------------------- edges
    @cached_property
    def geometric_edge_kinds(self) -> tuple[str, ...]:
        """Edge kinds inferred from the face's geometry alone, one per edge."""
        return classify_edges(self.plan_to_roof(np.asarray(self.outline)), self.pitch_deg)

    @property
    def edge_kinds(self) -> tuple[str, ...]:
        """Edge kinds in force: overrides where given, geometry elsewhere."""
        overrides = self.edge_overrides or (None,) * len(self.outline)
        geometric = self.geometric_edge_kinds
        return tuple(o if o is not None else g for o, g in zip(overrides, geometric, strict=True))

    @property
    def edges(self) -> list[Edge]:
        """All edges with their kinds and lengths."""
        pts = self.outline
        uv = self.plan_to_roof(np.asarray(pts))
        n = len(pts)
        kinds = self.edge_kinds
        overrides = self.edge_overrides or (None,) * n
        out = []
        for i in range(n):
            j = (i + 1) % n
            out.append(Edge(
                index=i, start=pts[i], end=pts[j], kind=kinds[i],
                overridden=overrides[i] is not None,
                true_length_m=float(np.hypot(*(uv[j] - uv[i]))),
                plan_length_m=float(math.dist(pts[i], pts[j])),
            ))
        return out

    # ----------------------------------------------------------------- data
    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        data = {
            "name": self.name,
            "outline": [list(p) for p in self.outline],
            "pitch_deg": self.pitch_deg,
            "azimuth_deg": self.azimuth_deg,
            "eave_height_m": self.eave_height_m,
        }
        if self.edge_overrides is not None:
            data["edge_overrides"] = list(self.edge_overrides)
        return data

    @classmethod
    def from_dict(cls, data: dict) -> RoofFace:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("name", "outline", "pitch_deg", "azimuth_deg", "eave_height_m", "edge_overrides")
        check_fields(data, known, required=("outline", "pitch_deg", "azimuth_deg"),
                     what="roof face")
        overrides = data.get("edge_overrides")
        return cls(
            outline=data["outline"], pitch_deg=data["pitch_deg"], azimuth_deg=data["azimuth_deg"],
            eave_height_m=data.get("eave_height_m", 0.0), name=data.get("name", ""),
            edge_overrides=tuple(overrides) if overrides is not None else None,
        )


def classify_edges(roof_uv, pitch_deg: float) -> tuple[str, ...]:
    """Classify each edge of a face outline from its direction in the roof plane.

    The outward normal of each edge, in the roof-plane frame (u along the eave, v up the slope),
    decides its kind:

    - pointing straight down the slope: ``eave``; straight up: ``ridge`` (level edges);
    - pointing sideways (the edge runs straight up the slope): ``rake``;
    - pointing partly up the slope (the face narrows toward the top): ``hip``;
    - pointing partly down the slope (the face widens toward the top): ``valley``.

    A flat face (pitch 0) has only ``eave`` edges.

    Parameters
    ----------
    roof_uv : array_like, shape (n, 2)
        Outline corners in the roof-plane frame [m].
    pitch_deg : float
        Pitch of the face [degrees].

    Returns
    -------
    tuple of str
        One kind per edge; edge ``i`` runs from corner ``i`` to ``i + 1``.
    """
    pts = np.asarray(roof_uv, dtype=float)
    n = len(pts)
    if pitch_deg == 0:
        return ("eave",) * n
    # Signed area tells the winding; outward normal of edge (dx, dy) is (dy, -dx) for CCW.
    x, y = pts[:, 0], pts[:, 1]
    signed = 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
    delta = np.roll(pts, -1, axis=0) - pts
    normal = np.stack([delta[:, 1], -delta[:, 0]], axis=1)
    if signed < 0:
        normal = -normal
    normal /= np.linalg.norm(normal, axis=1, keepdims=True)
    tol = math.sin(math.radians(_EDGE_ANGLE_TOL_DEG))
    kinds = []
    for nu, nv in normal:
        if abs(nu) <= tol:
            kinds.append("ridge" if nv > 0 else "eave")
        elif abs(nv) <= tol:
            kinds.append("rake")
        else:
            kinds.append("hip" if nv > 0 else "valley")
    return tuple(kinds)
