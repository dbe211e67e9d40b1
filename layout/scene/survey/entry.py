"""One surveyed obstruction: :class:`SurveyEntry`, its readings checked on construction.

The entry is a plain value: a kind, the readings (each a :class:`Reading` with its tolerance),
the station and the exact fields, validated when it is made. What an entry gives is computed
by functions over entries in the module of each idea: its geometry and obstruction in
:mod:`layout.scene.survey.geometry`, draws from its tolerances in
:mod:`layout.scene.survey.sampling`, its row of a survey table in
:mod:`layout.scene.survey.table`. This module also holds its plain-data form
(:func:`entry_to_dict`, :func:`entry_from_dict`), which project files store.
"""

from __future__ import annotations

from dataclasses import KW_ONLY, dataclass, fields

import numpy as np

from ...errors import InputError, check_finite, check_range
from ..obstructions import CROWN_SHAPES, Block, Cylinder, Tree
from .geometry import _check_tolerance_box
from .growth import _check_growth
from .instruments import DEFAULT_EYE_HEIGHT_M, METHODS
from .kinds import BLOCK_KINDS, CYLINDER_KINDS, SURVEY_KINDS, obstruction_type
from .readings import _READINGS, Reading, _as_reading

__all__ = ["SurveyEntry", "entry_from_dict", "entry_to_dict"]

_TREE_ONLY = ("crown_radius_m", "crown_base_angle_deg", "crown_base_m", "trunk_radius_m",
              "crown_shape", "deciduous", "growth_m_per_yr", "mature_height_m")
_BLOCK_ONLY = ("width_m", "depth_m", "axis_deg")
_CYLINDER_ONLY = ("radius_m",)


@dataclass(frozen=True)
class SurveyEntry:
    """The field readings of one obstruction, each with its tolerance.

    Reading fields (``bearing_deg``, ``distance_m``, the angles and sizes) accept a
    :class:`Reading` or a bare number, which gets the default tolerance of its field
    (:mod:`layout.scene.survey.readings`); the stored entry always holds :class:`Reading`
    objects. Every other field is exact. What an entry gives is computed by functions over it:
    :func:`~layout.scene.survey.build_obstruction`, :func:`~layout.scene.survey.entry_geometry`,
    :func:`~layout.scene.survey.height_range`, :func:`~layout.scene.survey.sample_readings`,
    :func:`~layout.scene.survey.sample_entry`.

    Parameters
    ----------
    kind : str
        One of :data:`SURVEY_KINDS`: ``"tree"`` builds a :class:`~layout.scene.obstructions.Tree`,
        :data:`BLOCK_KINDS` a :class:`~layout.scene.obstructions.Block` (a rectangle in plan),
        :data:`CYLINDER_KINDS` a :class:`~layout.scene.obstructions.Cylinder`.
    bearing_deg : Reading or float
        Compass bearing from the station to the object's axis [degrees], 0 to below 360.
    distance_m : Reading or float
        ``"tangent"``: horizontal distance to the object's axis (trunk centre, footprint
        centre) [m]; ``"laser"``: slope distance along the line of sight to the top [m].
    top_angle_deg : Reading or float
        Elevation angle of the top [degrees], -90 to 90 open.
    base_angle_deg : Reading, float or None, keyword-only
        Elevation angle of the object's foot [degrees]. None: the foot is on the ground at the
        station's level (``station_z_m``).
    method : {"tangent", "laser"}, keyword-only
        How ``distance_m`` was measured (:mod:`layout.scene.survey.instruments`).
    station_x_m, station_y_m : float, keyword-only
        Where the observer stands, site frame [m].
    station_z_m : float, keyword-only
        Ground level at the station, site frame z [m].
    eye_height_m : float, keyword-only
        Eye (instrument) height above the station's ground [m], 0 to 10.
    declination_deg : float, keyword-only
        Magnetic declination [degrees], east positive, -180 to 180; 0 for true bearings.
    crown_radius_m : Reading, float or None, keyword-only
        Tree only, required: horizontal crown radius [m].
    crown_base_angle_deg, crown_base_m : Reading, float or None, keyword-only
        Tree only, exactly one required: elevation angle of the crown's lowest point
        [degrees], or its height above the tree's foot [m].
    trunk_radius_m : float or None, keyword-only
        Tree only: trunk radius [m]; None uses the Tree default (0.2 m).
    crown_shape : {"spheroid", "cone"}, keyword-only, default "spheroid"
        Tree only: a rounded broadleaf crown, or a conifer's cone from the crown base to the
        top (:class:`~layout.scene.obstructions.Tree`).
    mature_height_m : float or None, keyword-only
        Tree only: height it does not grow past [m] (``Tree.mature_height_m``); None: no cap.
    deciduous : bool, keyword-only
        Tree only: build with :meth:`Tree.deciduous` (leaf-on and leafless transmittance).
    growth_m_per_yr : str, float or None, keyword-only
        Tree only: ``"slow"``, ``"medium"``, ``"fast"`` or a rate [m/yr]; None: no growth.
    width_m, depth_m : Reading, float or None, keyword-only
        Block kinds, required: plan size of the rectangle centred on the sighted axis [m].
        ``width_m`` runs along ``axis_deg``, ``depth_m`` across it.
    axis_deg : float or None, keyword-only
        Block kinds: compass bearing of the width side [degrees], 0 to below 360, in the same
        reference as ``bearing_deg``. None: the width runs across the line of sight (what
        the observer sees face on) and the depth along it.
    radius_m : Reading, float or None, keyword-only
        Cylinder kinds, required: radius [m].
    name : str, keyword-only
        A label; becomes the obstruction's name.

    Raises
    ------
    InputError
        Naming the field and its allowed range, also when a reading's tolerance allows a shape
        that cannot exist (a top below the base somewhere in the tolerance ranges).

    Notes
    -----
    Blocks and cylinders keep the site-frame heights of their top and foot. A
    :class:`~layout.scene.obstructions.Tree` always stands at z = 0, so a tree keeps its own height
    (foot to top) but not the level of its foot: a tree on a bank above the house is placed
    as if it stood at z = 0.
    """

    kind: str
    bearing_deg: Reading
    distance_m: Reading
    top_angle_deg: Reading
    _: KW_ONLY
    base_angle_deg: Reading | None = None
    method: str = "tangent"
    station_x_m: float = 0.0
    station_y_m: float = 0.0
    station_z_m: float = 0.0
    eye_height_m: float = DEFAULT_EYE_HEIGHT_M
    declination_deg: float = 0.0
    crown_radius_m: Reading | None = None
    crown_base_angle_deg: Reading | None = None
    crown_base_m: Reading | None = None
    trunk_radius_m: float | None = None
    crown_shape: str = "spheroid"
    deciduous: bool = False
    growth_m_per_yr: str | float | None = None
    mature_height_m: float | None = None
    width_m: Reading | None = None
    depth_m: Reading | None = None
    axis_deg: float | None = None
    radius_m: Reading | None = None
    name: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        if self.kind not in SURVEY_KINDS:
            raise InputError("kind", "is not a survey kind", value=self.kind,
                             allowed=", ".join(SURVEY_KINDS))
        if self.method not in METHODS:
            raise InputError("method", "is not a measuring method", value=self.method,
                             allowed=", ".join(METHODS))
        for name in _READINGS:
            set_(self, name, _as_reading(name, getattr(self, name), self.method))
        for name in ("station_x_m", "station_y_m", "station_z_m"):
            set_(self, name, check_finite(name, getattr(self, name)))
        set_(self, "eye_height_m", check_range("eye_height_m", self.eye_height_m, 0.0, 10.0,
                                               unit="m"))
        set_(self, "declination_deg", check_range("declination_deg", self.declination_deg,
                                                  -180.0, 180.0, unit="degrees"))
        if self.trunk_radius_m is not None:
            set_(self, "trunk_radius_m", check_range("trunk_radius_m", self.trunk_radius_m,
                                                     0.0, 5.0, unit="m", low_open=True))
        if self.axis_deg is not None:
            set_(self, "axis_deg", check_range("axis_deg", self.axis_deg, 0.0, 360.0,
                                               unit="degrees", high_open=True))
        if self.crown_shape not in CROWN_SHAPES:
            raise InputError("crown_shape", "is not a known crown shape",
                             value=self.crown_shape, allowed=", ".join(CROWN_SHAPES))
        if not isinstance(self.deciduous, (bool, np.bool_)):
            raise InputError("deciduous", "must be true or false", value=self.deciduous)
        set_(self, "deciduous", bool(self.deciduous))
        set_(self, "growth_m_per_yr", _check_growth(self.growth_m_per_yr))
        if self.mature_height_m is not None:
            set_(self, "mature_height_m", check_range("mature_height_m", self.mature_height_m,
                                                      0.0, 200.0, unit="m", low_open=True))
        if not isinstance(self.name, str):
            raise InputError("name", "must be text", value=self.name)
        _check_kind_fields(self)
        _check_tolerance_box(self)

    def to_dict(self) -> dict:
        """Plain-data form: :func:`entry_to_dict` of this entry."""
        return entry_to_dict(self)

    @classmethod
    def from_dict(cls, data) -> SurveyEntry:
        """Inverse of :meth:`to_dict`: :func:`entry_from_dict` of ``data``."""
        return entry_from_dict(data)


def _check_kind_fields(entry: SurveyEntry) -> None:
    """Raise :class:`InputError` for a field the entry's kind needs and lacks, or cannot use."""
    cls = obstruction_type(entry.kind)
    required = {Tree: ("crown_radius_m",), Block: ("width_m", "depth_m"),
                Cylinder: ("radius_m",)}[cls]
    for name in required:
        if getattr(entry, name) is None:
            raise InputError(name, f"is needed for a {entry.kind}")
    unused = {Tree: _BLOCK_ONLY + _CYLINDER_ONLY, Block: _TREE_ONLY + _CYLINDER_ONLY,
              Cylinder: _TREE_ONLY + _BLOCK_ONLY}[cls]
    defaults = {"deciduous": False, "crown_shape": "spheroid"}
    for name in unused:
        value = getattr(entry, name)
        if value != defaults.get(name):
            owner = ("trees" if name in _TREE_ONLY else
                     "blocks (" + ", ".join(BLOCK_KINDS) + ")" if name in _BLOCK_ONLY else
                     "cylinders (" + ", ".join(CYLINDER_KINDS) + ")")
            raise InputError(name, f"does not apply to a {entry.kind}",
                             value=value.value if isinstance(value, Reading) else value,
                             allowed=f"only for {owner}")
    if cls is Tree:
        has_angle = entry.crown_base_angle_deg is not None
        has_height = entry.crown_base_m is not None
        if has_angle == has_height:
            raise InputError("crown_base_m" if has_height else "crown_base_angle_deg",
                             "give the crown base either as an angle or as a height",
                             allowed="exactly one of crown_base_angle_deg, crown_base_m")


def _check_entries(entries) -> list[SurveyEntry]:
    entries = list(entries)
    for i, e in enumerate(entries):
        if not isinstance(e, SurveyEntry):
            raise InputError(f"entries[{i}]", "is not a survey entry", value=type(e).__name__)
    return entries


def entry_to_dict(entry: SurveyEntry) -> dict:
    """Return the plain-data form of a survey entry, as project files store it.

    Readings become ``{"value", "tolerance"}`` objects, absent ones None. ``crown_shape`` is
    written only for a cone and ``mature_height_m`` only when set, so files without them stay
    as they were.

    Parameters
    ----------
    entry : SurveyEntry
        The entry to write.

    Returns
    -------
    dict
        One item per field of the entry.
    """
    out = {}
    for f in fields(entry):
        value = getattr(entry, f.name)
        if (f.name, value) in (("crown_shape", "spheroid"), ("mature_height_m", None)):
            continue
        out[f.name] = value.to_dict() if isinstance(value, Reading) else value
    return out


def entry_from_dict(data) -> SurveyEntry:
    """Return the survey entry of a plain-data form; the inverse of :func:`entry_to_dict`.

    A reading may also be a bare number, which gets its field's default tolerance.

    Parameters
    ----------
    data : dict
        Fields of the entry by name.

    Returns
    -------
    SurveyEntry

    Raises
    ------
    InputError
        Naming the bad field.
    """
    if not isinstance(data, dict):
        raise InputError("", "a survey entry must be an object of named fields",
                         value=type(data).__name__)
    known = [f.name for f in fields(SurveyEntry)]
    unknown = sorted(set(data) - set(known))
    if unknown:
        raise InputError(unknown[0], "is not a survey entry field",
                         allowed=", ".join(known))
    for key in ("kind", "bearing_deg", "distance_m", "top_angle_deg"):
        if key not in data:
            raise InputError(key, "is missing")
    rest = {k: v for k, v in data.items()
            if k not in ("kind", "bearing_deg", "distance_m", "top_angle_deg")}
    return SurveyEntry(data["kind"], data["bearing_deg"], data["distance_m"],
                       data["top_angle_deg"], **rest)
