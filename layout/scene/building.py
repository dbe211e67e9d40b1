"""Buildings: named sets of roof faces, and builders for common roof shapes.

A :class:`Building` is a set of :class:`~layout.scene.roof.RoofFace` that belong to one roof: they
meet along shared edges and never overlap in plan. Its plan-view roof area (the union of the
face outlines seen from above) is the area the fire code's 33 % rule divides by.

Builders
--------
Each builder takes a rectangular (or L-shaped) footprint in the building's own axes, a pitch in
degrees (or ``rise_in_12=`` in the trade's notation) and the eave height, then places the
building on the site with ``rotation_deg`` and ``origin`` (see
:func:`layout.scene.roof.building_to_site`). Building axes: ``a`` along the local x axis (the
length), ``b`` along the local y axis (the width); the local origin is the corner at the lowest
``a`` and ``b``, which is the south-west corner of an unrotated building.

All faces of a pitched builder share one pitch and one eave height, so the roof is the one a
carpenter frames from level eaves: every internal edge is a ridge, hip or valley, and adjacent
faces share the plan coordinates of their common edge exactly (the site coordinates of every
corner are computed once and reused by every face that touches it).

Face names are read from the true compass direction a face slopes toward, on an 8-point rose
("south", "northeast"): ``"south"`` for the long side of a gable or hip roof, ``"east hip"``
for a triangular hip end, ``"wing west"`` for a face of the second leg of an L. A builder's
``name`` prefixes every face name (``"garage south"``) so that faces stay unique across the
buildings of a project.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import cached_property

import numpy as np
import shapely

from ..errors import (
    InputError,
    check_fields,
    check_finite,
    check_nonnegative,
    check_points,
    check_positive,
)
from ..units import pitch_from_rise
from .roof import MAX_PITCH_DEG, RoofFace, building_to_site

__all__ = [
    "Building",
    "compass_name",
    "flat_roof",
    "gable_roof",
    "hip_roof",
    "l_shaped_gable_roof",
    "l_shaped_hip_roof",
    "shed_roof",
]

#: Plan area two faces of one building may share before they count as overlapping [m²]. Faces
#: built from shared corners overlap by rounding noise only (~1e-12 m²); a real overlap from a
#: mistyped corner is far larger than a square centimetre.
OVERLAP_TOLERANCE_M2 = 1e-4

# Two lengths closer than this are taken as equal when a builder chooses its shape [m]; a
# pyramid instead of a hip roof with a ridge shorter than a micrometre, for instance.
_SAME_LENGTH_M = 1e-6

_COMPASS = ("north", "northeast", "east", "southeast", "south", "southwest", "west", "northwest")


def compass_name(azimuth_deg: float) -> str:
    """Name of the nearest of the 8 compass points to an azimuth.

    Parameters
    ----------
    azimuth_deg : float
        Direction clockwise from north [degrees].

    Returns
    -------
    str
        ``"north"``, ``"northeast"``, ``"east"``, ... ``"northwest"``. Each point owns the 45°
        sector centred on it; a direction on a sector boundary (22.5°) goes clockwise.
    """
    azimuth = check_finite("azimuth_deg", azimuth_deg) % 360.0
    return _COMPASS[math.floor(azimuth / 45.0 + 0.5) % 8]


# --------------------------------------------------------------------------- the building
@dataclass(frozen=True)
class Building:
    """The roof faces of one building.

    Parameters
    ----------
    faces : sequence of RoofFace
        The faces, at least one. They may touch along edges but must not overlap in plan
        (two faces over the same ground cannot belong to one roof). Names must be unique within
        the building; a face with an empty name is named ``"face N"`` after its position
        (1-based), so the stored building always has named faces.
    name : str, default ""
        A label for the user.
    parapet_height_m : float, default 0
        Height of a parapet wall above the roof surface along the building's edge [m]; 0 when
        there is none. Faces record the parapet as the ``parapet`` kind of their edges; this
        value gives its height for shading.

    Raises
    ------
    InputError
        On an empty face list, a face that is not a :class:`RoofFace`, a repeated face name,
        two faces that overlap in plan, or a negative parapet height.
    """

    faces: tuple[RoofFace, ...]
    name: str = ""
    parapet_height_m: float = 0.0

    def __post_init__(self):
        if isinstance(self.faces, RoofFace) or not hasattr(self.faces, "__iter__"):
            raise InputError("faces", "must be a list of roof faces", allowed="one or more faces")
        faces = tuple(self.faces)
        if not faces:
            raise InputError("faces", "needs at least one face", value=0, allowed=">= 1 face")
        named = []
        for i, face in enumerate(faces):
            if not isinstance(face, RoofFace):
                raise InputError(f"faces[{i}]", "must be a roof face",
                                 value=type(face).__name__, allowed="RoofFace")
            named.append(face if face.name else replace(face, name=f"face {i + 1}"))
        faces = tuple(named)
        seen: dict[str, int] = {}
        for i, face in enumerate(faces):
            if face.name in seen:
                raise InputError(f"faces[{i}].name",
                                 f"is already the name of faces[{seen[face.name]}]",
                                 value=face.name, allowed="a name unique within the building")
            seen[face.name] = i
        _check_no_overlap(faces)
        object.__setattr__(self, "faces", faces)
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)
        object.__setattr__(self, "parapet_height_m",
                           check_nonnegative("parapet_height_m", self.parapet_height_m, unit="m"))

    # ----------------------------------------------------------------- look-ups
    @property
    def face_names(self) -> tuple[str, ...]:
        """Names of the faces, in order."""
        return tuple(face.name for face in self.faces)

    def face(self, name: str) -> RoofFace:
        """Return the face called ``name``.

        Raises
        ------
        InputError
            If no face has that name; the message lists the names there are.
        """
        for face in self.faces:
            if face.name == name:
                return face
        raise InputError("face", "is not a face of this building", value=name,
                         allowed=", ".join(self.face_names))

    # ----------------------------------------------------------------- shapes and areas
    @cached_property
    def footprint(self) -> shapely.Polygon | shapely.MultiPolygon:
        """Union of the face outlines in plan [m]: the roof seen from above."""
        return shapely.union_all([face.plan_polygon for face in self.faces])

    @property
    def plan_area_m2(self) -> float:
        """Plan-view roof area [m²]: the area of :attr:`footprint`.

        This is the roof area the residential 33 % rule compares the array's plan area with
        (IFC 2021 §1205.2.1.2).
        """
        return float(self.footprint.area)

    @property
    def true_area_m2(self) -> float:
        """Sum of the faces' areas on their sloped surfaces [m²]."""
        return float(sum(face.true_area_m2 for face in self.faces))

    @property
    def ridge_height_m(self) -> float:
        """Height of the highest point of the roof above ground [m]."""
        return max(face.ridge_height_m for face in self.faces)

    # ----------------------------------------------------------------- data
    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "name": self.name,
            "parapet_height_m": self.parapet_height_m,
            "faces": [face.to_dict() for face in self.faces],
        }

    @classmethod
    def from_dict(cls, data: dict) -> Building:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field.

        A problem inside a face is reported under ``faces[i]`` (``faces[1].pitch_deg``).
        """
        check_fields(data, ("name", "parapet_height_m", "faces"), required=("faces",),
                     what="building")
        entries = data["faces"]
        if not isinstance(entries, list):
            raise InputError("faces", "must be a list of roof faces", value=type(entries).__name__)
        faces = []
        for i, entry in enumerate(entries):
            if not isinstance(entry, dict):
                raise InputError(f"faces[{i}]", "must be an object", value=type(entry).__name__)
            try:
                faces.append(RoofFace.from_dict(entry))
            except InputError as err:
                raise err.at(f"faces[{i}]") from None
        return cls(faces=tuple(faces), name=data.get("name", ""),
                   parapet_height_m=data.get("parapet_height_m", 0.0))


def _check_no_overlap(faces: tuple[RoofFace, ...]) -> None:
    """Raise naming the first two faces whose plan outlines overlap by more than a sliver."""
    polygons = np.array([face.plan_polygon for face in faces], dtype=object)
    for i in range(len(faces) - 1):
        shared = shapely.area(shapely.intersection(polygons[i], polygons[i + 1:]))
        over = np.flatnonzero(shared > OVERLAP_TOLERANCE_M2)
        if over.size:
            j = i + 1 + int(over[0])
            raise InputError(
                "faces",
                f"faces {faces[i].name!r} and {faces[j].name!r} overlap in plan by "
                f"{shared[over[0]]:.4g} m², so they cannot belong to one building",
                allowed="faces that meet only along their edges; put separate roofs in "
                        "separate buildings",
            )


# --------------------------------------------------------------------------- builder helpers
def _pitch(pitch_deg, rise_in_12) -> float:
    """Resolve a pitched roof's pitch, given in degrees or as rise in 12 (exactly one)."""
    if (pitch_deg is None) == (rise_in_12 is None):
        raise InputError("pitch_deg", "give the pitch either in degrees or as rise_in_12, "
                                      "exactly one of them", value=(pitch_deg, rise_in_12))
    if pitch_deg is None:
        field, given = "rise_in_12", rise_in_12
        pitch = pitch_from_rise(check_finite("rise_in_12", rise_in_12))
    else:
        field, given, pitch = "pitch_deg", pitch_deg, check_finite("pitch_deg", pitch_deg)
    if not 0.0 < pitch <= MAX_PITCH_DEG:
        problem = "must be above 0 for a pitched roof (use flat_roof for a flat one)" \
            if pitch == 0.0 else "is out of range"
        raise InputError(field, problem, value=given,
                         allowed=f"more than 0 up to {MAX_PITCH_DEG:g} degrees")
    return pitch


def _eave(eave_height_m) -> float:
    if eave_height_m is None:
        raise InputError("eave_height_m", "is missing", allowed="a height in metres, >= 0")
    return check_nonnegative("eave_height_m", eave_height_m, unit="m")


def _placement(rotation_deg, origin) -> tuple[float, tuple[float, float]]:
    rotation = check_finite("rotation_deg", rotation_deg)
    point = check_points("origin", [origin], dims=2)[0]
    return rotation, (float(point[0]), float(point[1]))


@dataclass(frozen=True)
class _Plane:
    """A face of a builder in building axes: outline, local azimuth and a name pattern."""

    outline: tuple[tuple[float, float], ...]
    azimuth_deg: float
    label: str  # "{c}" is replaced by the compass name of the true azimuth


def _assemble(planes: list[_Plane], pitch: float, eave: float, rotation: float,
              origin: tuple[float, float], name: str, *, parapet_height_m: float = 0.0,
              override: str | None = None) -> Building:
    """Place faces given in building axes on the site and wrap them in a :class:`Building`.

    Every distinct local corner is mapped to the site once, so faces that share a corner share
    its site coordinates bit for bit.
    """
    if not isinstance(name, str):
        raise InputError("name", "must be text", value=name)
    corners: dict[tuple[float, float], int] = {}
    for plane in planes:
        for point in plane.outline:
            corners.setdefault(point, len(corners))
    local = np.array(list(corners), dtype=float)
    site = [tuple(map(float, p)) for p in building_to_site(local, rotation, origin)]
    faces = []
    for plane in planes:
        outline = [site[corners[p]] for p in _drop_repeats(plane.outline)]
        azimuth = (plane.azimuth_deg + rotation) % 360.0
        label = plane.label.replace("{c}", compass_name(azimuth))
        overrides = (override,) * len(outline) if override else None
        faces.append(RoofFace(outline, pitch, azimuth, eave,
                              name=f"{name} {label}" if name else label,
                              edge_overrides=overrides))
    return Building(faces=tuple(faces), name=name, parapet_height_m=parapet_height_m)


def _drop_repeats(points):
    """Drop corners equal to the one before (degenerate ridges of zero length)."""
    out = [p for i, p in enumerate(points) if p != points[i - 1]]
    return out if out else list(points[:1])


# --------------------------------------------------------------------------- rectangles
def gable_roof(length_m, width_m, pitch_deg=None, eave_height_m=None, *, rise_in_12=None,
               ridge_axis: str = "x", rotation_deg: float = 0.0, origin=(0.0, 0.0),
               name: str = "") -> Building:
    """Build a gable roof over a rectangle: two faces meeting at a level ridge.

    Parameters
    ----------
    length_m, width_m : float
        Footprint along the building's local x and y axes [m].
    pitch_deg : float, optional
        Pitch of both faces [degrees], more than 0 up to 75. Give this or ``rise_in_12``.
    eave_height_m : float
        Height of both eaves above ground [m].
    rise_in_12 : float, optional
        Pitch as rise per 12 of run (6 for a 6:12 roof), instead of ``pitch_deg``.
    ridge_axis : {"x", "y"}, default "x"
        The local axis the ridge runs along. With ``"x"`` the faces slope toward local south
        and north, with ``"y"`` toward local east and west.
    rotation_deg : float, default 0
        Compass direction of the building's local y axis [degrees]; see
        :func:`layout.scene.roof.building_to_site`.
    origin : (float, float), default (0, 0)
        Site coordinates of the local origin corner [m].
    name : str, default ""
        Building name, also used as a prefix of the face names.

    Returns
    -------
    Building
        Two faces. The ridge stands at ``eave_height_m + span / 2 · tan(pitch)``, where the
        span is the side across the ridge. The ends are rakes (gable walls below them).
    """
    length = check_positive("length_m", length_m, unit="m")
    width = check_positive("width_m", width_m, unit="m")
    pitch = _pitch(pitch_deg, rise_in_12)
    eave = _eave(eave_height_m)
    rotation, at = _placement(rotation_deg, origin)
    if ridge_axis == "x":
        h = width / 2.0
        planes = [_Plane(((0.0, 0.0), (length, 0.0), (length, h), (0.0, h)), 180.0, "{c}"),
                  _Plane(((0.0, h), (length, h), (length, width), (0.0, width)), 0.0, "{c}")]
    elif ridge_axis == "y":
        h = length / 2.0
        planes = [_Plane(((0.0, 0.0), (h, 0.0), (h, width), (0.0, width)), 270.0, "{c}"),
                  _Plane(((h, 0.0), (length, 0.0), (length, width), (h, width)), 90.0, "{c}")]
    else:
        raise InputError("ridge_axis", "must name a local axis", value=ridge_axis,
                         allowed="'x' or 'y'")
    return _assemble(planes, pitch, eave, rotation, at, name)


def hip_roof(length_m, width_m, pitch_deg=None, eave_height_m=None, *, rise_in_12=None,
             rotation_deg: float = 0.0, origin=(0.0, 0.0), name: str = "") -> Building:
    """Build a hip roof over a rectangle: eaves on all four sides.

    The ridge runs along the longer side. Two trapezoids slope across it, two triangles (the
    hip ends) slope along it; all four share the pitch, so the hips run at 45° in plan. A
    square footprint gives a pyramid of four triangles.

    Parameters
    ----------
    length_m, width_m : float
        Footprint along the building's local x and y axes [m].
    pitch_deg : float, optional
        Pitch of every face [degrees], more than 0 up to 75. Give this or ``rise_in_12``.
    eave_height_m : float
        Height of the eaves above ground [m].
    rise_in_12 : float, optional
        Pitch as rise per 12 of run, instead of ``pitch_deg``.
    rotation_deg, origin, name
        As in :func:`gable_roof`.

    Returns
    -------
    Building
        Four faces. The ridge stands at ``eave_height_m + min(length, width) / 2 · tan(pitch)``.
    """
    length = check_positive("length_m", length_m, unit="m")
    width = check_positive("width_m", width_m, unit="m")
    pitch = _pitch(pitch_deg, rise_in_12)
    eave = _eave(eave_height_m)
    rotation, at = _placement(rotation_deg, origin)
    if abs(length - width) <= _SAME_LENGTH_M:
        apex = (length / 2.0, width / 2.0)
        sw, se, ne, nw = (0.0, 0.0), (length, 0.0), (length, width), (0.0, width)
        planes = [_Plane((sw, se, apex), 180.0, "{c}"), _Plane((se, ne, apex), 90.0, "{c}"),
                  _Plane((ne, nw, apex), 0.0, "{c}"), _Plane((nw, sw, apex), 270.0, "{c}")]
    elif length > width:
        h = width / 2.0
        sw, se, ne, nw = (0.0, 0.0), (length, 0.0), (length, width), (0.0, width)
        r0, r1 = (h, h), (length - h, h)
        planes = [_Plane((sw, se, r1, r0), 180.0, "{c}"), _Plane((se, ne, r1), 90.0, "{c} hip"),
                  _Plane((ne, nw, r0, r1), 0.0, "{c}"), _Plane((nw, sw, r0), 270.0, "{c} hip")]
    else:
        h = length / 2.0
        sw, se, ne, nw = (0.0, 0.0), (length, 0.0), (length, width), (0.0, width)
        r0, r1 = (h, h), (h, width - h)
        planes = [_Plane((sw, se, r0), 180.0, "{c} hip"), _Plane((se, ne, r1, r0), 90.0, "{c}"),
                  _Plane((ne, nw, r1), 0.0, "{c} hip"), _Plane((nw, sw, r0, r1), 270.0, "{c}")]
    return _assemble(planes, pitch, eave, rotation, at, name)


def shed_roof(length_m, width_m, pitch_deg=None, eave_height_m=None, *, rise_in_12=None,
              facing_azimuth_deg: float = 180.0, origin=(0.0, 0.0), name: str = "") -> Building:
    """Build a shed (mono-pitch) roof over a rectangle: one face.

    The eave runs along ``length_m`` on the low side; ``width_m`` is the horizontal run up the
    slope. The building is turned so that the face slopes toward ``facing_azimuth_deg``, which
    is the same as ``rotation_deg = facing_azimuth_deg - 180`` in the other builders.

    The high edge is classified ``ridge`` from geometry. Where it meets a wall that rises above
    the roof (a lean-to against a house), override it:
    ``face.with_edge_kind(2, "wall")`` (edge 2 is the high edge).

    Parameters
    ----------
    length_m : float
        Length of the eave [m].
    width_m : float
        Horizontal run from the eave to the high edge [m].
    pitch_deg : float, optional
        Pitch [degrees], more than 0 up to 75. Give this or ``rise_in_12``.
    eave_height_m : float
        Height of the low edge above ground [m].
    rise_in_12 : float, optional
        Pitch as rise per 12 of run, instead of ``pitch_deg``.
    facing_azimuth_deg : float, default 180
        Compass direction the face slopes toward [degrees], 0 to 360.
    origin : (float, float), default (0, 0)
        Site coordinates of the left end of the eave, seen from below facing uphill [m].
    name : str, default ""
        Building name, also used as a prefix of the face name.

    Returns
    -------
    Building
        One face with edges eave (0), rake (1), ridge (2), rake (3); the high edge stands at
        ``eave_height_m + width_m · tan(pitch)``.
    """
    length = check_positive("length_m", length_m, unit="m")
    width = check_positive("width_m", width_m, unit="m")
    pitch = _pitch(pitch_deg, rise_in_12)
    eave = _eave(eave_height_m)
    facing = check_finite("facing_azimuth_deg", facing_azimuth_deg)
    if not 0.0 <= facing <= 360.0:
        raise InputError("facing_azimuth_deg", "is out of range", value=facing_azimuth_deg,
                         allowed="from 0 to 360 degrees")
    rotation, at = _placement(facing - 180.0, origin)
    planes = [_Plane(((0.0, 0.0), (length, 0.0), (length, width), (0.0, width)), 180.0, "{c}")]
    return _assemble(planes, pitch, eave, rotation, at, name)


def flat_roof(length_m, width_m, eave_height_m=None, *, parapet_height_m: float = 0.0,
              rotation_deg: float = 0.0, origin=(0.0, 0.0), name: str = "") -> Building:
    """Build a flat roof over a rectangle: one face with pitch 0.

    The face's azimuth is the local south (180 + ``rotation_deg``), so its roof-plane ``u``
    axis runs along the building's length. With a parapet, every edge is overridden to the
    ``parapet`` kind and the building records the parapet's height.

    Parameters
    ----------
    length_m, width_m : float
        Footprint along the building's local x and y axes [m].
    eave_height_m : float
        Height of the roof surface above ground [m].
    parapet_height_m : float, default 0
        Height of the parapet wall above the roof surface [m]; 0 for none.
    rotation_deg, origin, name
        As in :func:`gable_roof`.

    Returns
    -------
    Building
        One face of pitch 0; its edges are ``eave`` without a parapet, ``parapet`` with one.
    """
    length = check_positive("length_m", length_m, unit="m")
    width = check_positive("width_m", width_m, unit="m")
    eave = _eave(eave_height_m)
    parapet = check_nonnegative("parapet_height_m", parapet_height_m, unit="m")
    rotation, at = _placement(rotation_deg, origin)
    planes = [_Plane(((0.0, 0.0), (length, 0.0), (length, width), (0.0, width)), 180.0, "flat")]
    return _assemble(planes, 0.0, eave, rotation, at, name, parapet_height_m=parapet,
                     override="parapet" if parapet > 0 else None)


# --------------------------------------------------------------------------- L shapes
def _l_dimensions(length_m, width_m, wing_length_m, wing_width_m):
    """Validate the two legs of an L and return (L1, W1, L2, W2) [m]."""
    length = check_positive("length_m", length_m, unit="m")
    width = check_positive("width_m", width_m, unit="m")
    wing_length = check_positive("wing_length_m", wing_length_m, unit="m")
    wing_width = check_positive("wing_width_m", wing_width_m, unit="m")
    if abs(width - wing_width) <= _SAME_LENGTH_M:
        wing_width = width  # equal widths: one ridge height, valleys meet the ridge exactly
    if not wing_length > width:
        raise InputError("wing_length_m", "must exceed width_m, or the wing does not stand out "
                                          "of the main block", value=wing_length_m,
                         allowed=f"> {width:g} m")
    if not length > wing_width:
        raise InputError("length_m", "must exceed wing_width_m, or the main block does not "
                                     "stand out of the wing", value=length_m,
                         allowed=f"> {wing_width:g} m")
    return length, width, wing_length, wing_width


def _mirror(planes: list[_Plane]) -> list[_Plane]:
    """Swap the local x and y axes: the legs trade places, azimuths reflect about 45°."""
    out = []
    for plane in planes:
        label = plane.label
        if label.startswith("wing "):
            label = label[len("wing "):]
        else:
            label = "wing " + label
        out.append(_Plane(tuple((y, x) for x, y in plane.outline),
                          (90.0 - plane.azimuth_deg) % 360.0, label))
    return sorted(out, key=lambda plane: plane.label.startswith("wing "))  # main leg first


def _l_gable_planes(l1, w1, l2, w2) -> list[_Plane]:
    """Faces of a gable L whose first leg (along x) is at least as wide as the second."""
    o, a, b, c = (0.0, 0.0), (l1, 0.0), (l1, w1), (w2, w1)
    d, e, f = (w2, l2), (0.0, l2), (0.0, w1)
    m0, m1 = (0.0, w1 / 2.0), (l1, w1 / 2.0)
    p = (w2 / 2.0, w1 - w2 / 2.0)  # where the wing's ridge meets the main roof
    r = (w2 / 2.0, l2)
    wing = [_Plane((f, p, r, e), 270.0, "wing {c}"), _Plane((c, d, r, p), 90.0, "wing {c}")]
    if w2 == w1:
        # The wing's ridge meets the main ridge: the main's far slope splits in two, and the
        # near slope carries the meeting point as a corner so that no edge is shared in part.
        main = [_Plane((o, a, m1, p, m0), 180.0, "{c}"), _Plane((m1, b, c, p), 0.0, "{c}"),
                _Plane((p, f, m0), 0.0, "{c} corner")]
    else:
        main = [_Plane((o, a, m1, m0), 180.0, "{c}"), _Plane((m1, b, c, p, f, m0), 0.0, "{c}")]
    return main + wing


def _l_hip_planes(l1, w1, l2, w2) -> list[_Plane]:
    """Faces of a hipped L whose first leg (along x) is at least as wide as the second."""
    o, a, b, c = (0.0, 0.0), (l1, 0.0), (l1, w1), (w2, w1)
    d, e = (w2, l2), (0.0, l2)
    q = (w1 / 2.0, w1 / 2.0)  # the outer corner's hip meets the main ridge
    r1 = (l1 - w1 / 2.0, w1 / 2.0)  # the main's end hips meet
    p = (w2 / 2.0, w1 - w2 / 2.0)  # the valley meets the wing's ridge (equals q for equal widths)
    r2 = (w2 / 2.0, l2 - w2 / 2.0)  # the wing's end hips meet
    return [
        _Plane((o, a, r1, q), 180.0, "{c}"),
        _Plane((a, b, r1), 90.0, "{c} hip"),
        _Plane((b, c, p, q, r1), 0.0, "{c}"),
        _Plane((o, q, p, r2, e), 270.0, "wing {c}"),
        _Plane((c, d, r2, p), 90.0, "wing {c}"),
        _Plane((d, e, r2), 0.0, "wing {c} hip"),
    ]


def l_shaped_gable_roof(length_m, width_m, wing_length_m, wing_width_m, pitch_deg=None,
                        eave_height_m=None, *, rise_in_12=None, rotation_deg: float = 0.0,
                        origin=(0.0, 0.0), name: str = "") -> Building:
    """Build a gable roof over an L-shaped footprint: two gabled legs meeting in valleys.

    The wider leg's roof runs through the shared corner square to a gable on the outer wall;
    the narrower leg's ridge runs into the wider roof, with a valley on each side. With equal
    widths the main (first) leg runs through, the two ridges meet at one height, and the main
    roof's inner slope is split by the wing into a long face and a small triangle at the outer
    corner (named ``"... corner"``).

    Footprint, in the building's axes: the main leg ``[0, length_m] × [0, width_m]`` along
    local x, and the wing ``[0, wing_width_m] × [0, wing_length_m]`` along local y. They share
    the square at the local origin, which is the outer corner of the L; the inner (re-entrant)
    corner is at ``(wing_width_m, width_m)``. Turn the L with ``rotation_deg``; a mirrored L is
    the same L with its legs exchanged and turned.

    Parameters
    ----------
    length_m, width_m : float
        Outer length and width of the main leg, along local x and y [m].
    wing_length_m, wing_width_m : float
        Outer length (along local y, including the shared corner) and width (along local x) of
        the wing [m]. ``wing_length_m > width_m`` and ``length_m > wing_width_m``.
    pitch_deg : float, optional
        Pitch of every face [degrees], more than 0 up to 75. Give this or ``rise_in_12``.
    eave_height_m : float
        Height of the eaves above ground [m].
    rise_in_12 : float, optional
        Pitch as rise per 12 of run, instead of ``pitch_deg``.
    rotation_deg, origin, name
        As in :func:`gable_roof`.

    Returns
    -------
    Building
        Four faces, or five with equal widths. Each leg's ridge stands at
        ``eave_height_m + its width / 2 · tan(pitch)``.
    """
    l1, w1, l2, w2 = _l_dimensions(length_m, width_m, wing_length_m, wing_width_m)
    pitch = _pitch(pitch_deg, rise_in_12)
    eave = _eave(eave_height_m)
    rotation, at = _placement(rotation_deg, origin)
    if w2 <= w1:
        planes = _l_gable_planes(l1, w1, l2, w2)
    else:
        planes = _mirror(_l_gable_planes(l2, w2, l1, w1))
    return _assemble(planes, pitch, eave, rotation, at, name)


def l_shaped_hip_roof(length_m, width_m, wing_length_m, wing_width_m, pitch_deg=None,
                      eave_height_m=None, *, rise_in_12=None, rotation_deg: float = 0.0,
                      origin=(0.0, 0.0), name: str = "") -> Building:
    """Build a hip roof over an L-shaped footprint, with one valley at the inner corner.

    Every face rises at the same pitch from a level eave, so the roof is the straight skeleton
    of the L lifted by ``tan(pitch)``: a hip from the outer corner, a valley from the inner
    corner, a ridge along each leg ending in a hip end. With unequal widths the narrower leg's
    ridge is lower, and a hip climbs from the end of its ridge to the wider leg's ridge.

    Footprint, in the building's axes: the main leg ``[0, length_m] × [0, width_m]`` along
    local x, and the wing ``[0, wing_width_m] × [0, wing_length_m]`` along local y. They share
    the square at the local origin, which is the outer corner of the L; the inner (re-entrant)
    corner is at ``(wing_width_m, width_m)``. Turn the L with ``rotation_deg``; a mirrored L is
    the same L with its legs exchanged and turned.

    Parameters
    ----------
    length_m, width_m, wing_length_m, wing_width_m : float
        The two legs [m], as in :func:`l_shaped_gable_roof`. In addition the wider leg must be at
        least as long as it is wide (a stubbier leg needs a roof of a different shape).
    pitch_deg : float, optional
        Pitch of every face [degrees], more than 0 up to 75. Give this or ``rise_in_12``.
    eave_height_m : float
        Height of the eaves above ground [m].
    rise_in_12 : float, optional
        Pitch as rise per 12 of run, instead of ``pitch_deg``.
    rotation_deg, origin, name
        As in :func:`gable_roof`.

    Returns
    -------
    Building
        Six faces: a long slope, an inner slope and a hip end on each leg.

    Raises
    ------
    InputError
        If the legs do not form an L, or the wider leg is shorter than it is wide.
    """
    l1, w1, l2, w2 = _l_dimensions(length_m, width_m, wing_length_m, wing_width_m)
    if w2 <= w1 and not l1 >= w1:
        raise InputError("length_m", "a hipped L needs the wider leg at least as long as it is "
                                     "wide", value=length_m, allowed=f">= width_m = {w1:g} m")
    if w2 > w1 and not l2 >= w2:
        raise InputError("wing_length_m", "a hipped L needs the wider leg at least as long as it "
                                          "is wide", value=wing_length_m,
                         allowed=f">= wing_width_m = {w2:g} m")
    pitch = _pitch(pitch_deg, rise_in_12)
    eave = _eave(eave_height_m)
    rotation, at = _placement(rotation_deg, origin)
    if w2 <= w1:
        planes = _l_hip_planes(l1, w1, l2, w2)
    else:
        planes = _mirror(_l_hip_planes(l2, w2, l1, w1))
    return _assemble(planes, pitch, eave, rotation, at, name)
