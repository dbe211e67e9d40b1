"""Field readings to obstructions: heights, positions, tolerances, sampling and tree growth.

A surveyor does not know how tall a tree is. They stand at a known point (the *station*),
sight the object with a compass, measure a distance with a tape or a laser rangefinder, and
read elevation angles with a clinometer. This module turns those readings into the
obstructions of :mod:`layout.scene.obstructions`, keeps each reading's tolerance, draws obstruction
sets from the tolerances for uncertainty ranges, and projects tree growth over the years.

Frame and sign conventions
--------------------------
Site frame, metres: x east, y north (true north), z up, as everywhere in eaveline.

* **Elevation angles** [degrees] are from the horizontal at the observer's eye, positive up,
  negative down (the base of a tree below eye level reads negative), strictly between -90 and
  90.
* **Bearings** [degrees] are clockwise from north, 0 to below 360, as a compass reads them.
* **Magnetic declination** [degrees] is the angle from true north to magnetic north, **east
  positive, west negative**: ``true bearing = magnetic bearing + declination``. A compass in a
  place with 10° W declination (-10) that reads 200° points along true 190°. With declination 0
  bearings are taken as true. Every direction in one survey entry (the bearing to the object
  and the optional footprint axis) is read in the same reference and converted alike.
* **Station**: the known point where the observer stands, ``(station_x_m, station_y_m)`` in
  the site frame, with the ground there at ``station_z_m`` and the eye ``eye_height_m`` above
  it.

Measuring methods
-----------------
``"tangent"``
    ``distance_m`` is the horizontal distance from the observer to the object's axis (trunk
    centre, chimney centre), by tape or by a rangefinder's horizontal-distance mode. The top is
    at ``d · tan θ_top`` above (or below) the eye. Without a base angle the object stands on
    level ground with the observer, so its height is ``d · tan θ_top + eye height``; with a
    base angle (a tree on a slope, a wall or a chimney above the ground) its height is
    ``d · (tan θ_top − tan θ_base)``. Forestry mensuration, e.g. USDA Forest Service field
    guides; REFERENCES.md "Survey".
``"laser"``
    ``distance_m`` is the slope distance along the line of sight to the top, from a laser
    rangefinder; the top is at ``s · sin θ_top`` above the eye and the horizontal distance is
    ``s · cos θ_top``, which then serves the base and crown-base angles as in the tangent
    method.

Tolerances and sampling
-----------------------
Each reading is a :class:`Reading`: a value and a tolerance, the half-width of the range a
repeated reading would fall in. Defaults (used when a reading is typed as a bare number):

* elevation angles: :data:`ANGLE_TOLERANCE_DEG` ≈ 0.72°. Brack & Wood (1998), Forest
  Mensuration, give agreement between clinometer heights of about ±2.5 % (~1 m on a 40 m tree).
  A height read at angle θ from distance d, ``H ≈ d tan θ``, changes by
  ``dH / H = δθ / (sin θ cos θ)``; standing about one tree height away (θ ≈ 45°, the usual
  field advice, common practice) that is ``2 δθ``, so ±2.5 % is δθ = 0.0125 rad = 0.716°.
* horizontal distance by tape: :data:`TAPE_DISTANCE_TOLERANCE_M` = 0.1 m (common practice: a
  tape over yard ground to an estimated trunk or chimney centre).
* slope distance by laser: :data:`LASER_DISTANCE_TOLERANCE_M` = 0.3 m (hand-held
  rangefinders; maker specifications of about ±0.1–0.3 m on a hard target, more on foliage;
  from memory).
* compass bearing: :data:`BEARING_TOLERANCE_DEG` = 2° (hand compass near a house, its steel
  and its cars; common practice).
* sizes by tape (width, depth, cylinder radius): :data:`SIZE_TOLERANCE_M` = 0.1 m; crown radius
  and a crown-base height judged by eye: :data:`CROWN_TOLERANCE_M` = 0.5 m (common practice).
  A default never exceeds half of a size or distance (a 5 cm vent radius gets ±2.5 cm), nor a
  crown-base height itself (a crown down to the ground stays there).

Eye height, station and declination are taken as exact.

:meth:`SurveyEntry.sample` draws readings from a **normal distribution truncated at the
tolerance**, with standard deviation half the tolerance: a reading error is the sum of several
small independent causes (sighting, reading the scale, hand tremor, tape sag), which tends to a
bell shape, and a stated "agreement within ±x" is read as about two standard deviations (95 %).
Truncating at ±tolerance keeps every draw inside the range the entry was validated over, so no
draw builds an impossible shape. ``distribution="uniform"`` draws uniformly over ±tolerance,
the cautious choice when only the bounds are known (the rectangular distribution of the GUM,
JCGM 100:2008, §4.3.7; from memory).

Tree growth
-----------
Growth classes (REFERENCES.md "tree growth classes", state forestry extension tables, common
practice): slow ≤ 0.30 m/yr (12 in), medium 0.30–0.61 m/yr (12–24 in), fast ≥ 0.61 m/yr
(24 in). :data:`GROWTH_CLASS_RATES_M_PER_YR` takes the middle of a one-foot-wide band for each
class: 6, 18 and 30 inches a year (0.152, 0.457, 0.762 m/yr); the fast class has no upper
limit, so its band is taken as wide as the others. Give a number for a known species. Growth is
linear over the years asked for, optionally capped at a mature height.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import KW_ONLY, dataclass, fields, replace
from typing import Any

import numpy as np
import pandas as pd

from ..errors import InputError, check_fields, check_finite, check_range
from ..units import FOOT_M, INCH_M, parse_length
from .obstructions import CROWN_SHAPES, Block, Cylinder, Tree

__all__ = [
    "ANGLE_TOLERANCE_DEG",
    "BEARING_TOLERANCE_DEG",
    "BLOCK_KINDS",
    "BRACK_WOOD_RELATIVE_AGREEMENT",
    "COMPUTED_COLUMNS",
    "CROWN_TOLERANCE_M",
    "CYLINDER_KINDS",
    "DEFAULT_EYE_HEIGHT_M",
    "GROWTH_CLASS_LIMITS_M_PER_YR",
    "GROWTH_CLASS_RATES_M_PER_YR",
    "LASER_DISTANCE_TOLERANCE_M",
    "LENGTH_UNITS",
    "METHODS",
    "PROJECTION_YEARS",
    "SIZE_TOLERANCE_M",
    "SURVEY_COLUMNS",
    "SURVEY_KINDS",
    "SYSTEM_LIFE_YEARS",
    "TAPE_DISTANCE_TOLERANCE_M",
    "LossRange",
    "Reading",
    "SurveyEntry",
    "SurveyProblem",
    "default_tolerance",
    "elevation_tangent",
    "entries_from_table",
    "grown_tree",
    "growth_class",
    "growth_rate",
    "height_error_from_angle",
    "height_laser",
    "height_per_degree",
    "height_tangent",
    "laser_horizontal_distance",
    "loss_range",
    "obstructions_at_year",
    "position_from_bearing",
    "projected_trees",
    "read_survey_csv",
    "sample_obstructions",
    "survey_table",
    "true_bearing",
]

# --------------------------------------------------------------------------- constants
#: Eye height of a standing adult [m] when none is given (common practice; measure your own).
DEFAULT_EYE_HEIGHT_M = 1.6

#: Agreement between clinometer height readings [fraction]: about ±2.5 %, ~1 m on a 40 m tree.
#: Brack & Wood (1998), Forest Mensuration (REFERENCES.md "Survey").
BRACK_WOOD_RELATIVE_AGREEMENT = 0.025

#: Default elevation-angle tolerance [degrees]: the angle error that moves a height read at 45°
#: (observer about one height away) by ±2.5 %: δθ = 0.025 / 2 rad = 0.716°. See module notes.
ANGLE_TOLERANCE_DEG = math.degrees(BRACK_WOOD_RELATIVE_AGREEMENT / 2.0)

#: Default tolerance of a horizontal distance by tape [m] (common practice).
TAPE_DISTANCE_TOLERANCE_M = 0.1

#: Default tolerance of a laser slope distance [m] (hand-held rangefinders; from memory).
LASER_DISTANCE_TOLERANCE_M = 0.3

#: Default tolerance of a hand-compass bearing [degrees] (common practice).
BEARING_TOLERANCE_DEG = 2.0

#: Default tolerance of a width, depth or cylinder radius by tape [m] (common practice).
SIZE_TOLERANCE_M = 0.1

#: Default tolerance of a crown radius or crown-base height judged by eye [m] (common practice).
CROWN_TOLERANCE_M = 0.5

#: Life of a PV system over which tree growth is projected [years] (common practice: the usual
#: module power warranty).
SYSTEM_LIFE_YEARS = 25

#: Years after the survey at which trees are projected by default.
PROJECTION_YEARS = (1, 10, SYSTEM_LIFE_YEARS)

#: Class limits of tree growth [m/yr]: slow up to 1 ft/yr, fast from 2 ft/yr (REFERENCES.md
#: "tree growth classes": 0.30 and 0.61 m/yr, state forestry extension tables).
GROWTH_CLASS_LIMITS_M_PER_YR = (1.0 * FOOT_M, 2.0 * FOOT_M)

#: Representative growth rate per class [m/yr]: the middle of a one-foot band, 6, 18, 30 in/yr.
GROWTH_CLASS_RATES_M_PER_YR = {"slow": 6.0 * INCH_M, "medium": 18.0 * INCH_M,
                               "fast": 30.0 * INCH_M}

#: Survey kinds built as a :class:`layout.scene.obstructions.Block` (a rectangle in plan).
BLOCK_KINDS = ("chimney", "wall", "building", "dormer", "block", "other")
#: Survey kinds built as a :class:`layout.scene.obstructions.Cylinder`.
CYLINDER_KINDS = ("pole", "vent", "pipe")
#: Every kind a survey entry may have.
SURVEY_KINDS = ("tree", *BLOCK_KINDS, *CYLINDER_KINDS)
#: Measuring methods (see the module notes).
METHODS = ("tangent", "laser")
#: Units a survey table's ``length_unit`` column may name.
LENGTH_UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "ft": FOOT_M, "in": INCH_M}

_MAX_GROWTH_M_PER_YR = 3.0


# --------------------------------------------------------------------------- field formulas
def _scalar_or_array(value):
    return float(value) if np.ndim(value) == 0 else value


def elevation_tangent(distance_m, angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M):
    """Return the height of a sighted point above the observer's ground (tangent method).

    ``z = d · tan θ + eye height``.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance from the observer to the point [m].
    angle_deg : numeric
        Elevation angle of the point seen from the eye [degrees], positive up.
    eye_height_m : numeric, keyword-only
        Eye height above the observer's ground [m].

    Returns
    -------
    numeric
        Height of the point above the observer's ground [m].
    """
    d = np.asarray(distance_m, dtype=float)
    z = d * np.tan(np.radians(angle_deg)) + np.asarray(eye_height_m, dtype=float)
    return _scalar_or_array(z)


def height_tangent(distance_m, top_angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M,
                   base_angle_deg=None):
    """Return an object's height by the tangent method.

    Without ``base_angle_deg``: ``H = d · tan θ_top + eye height`` (the object stands on level
    ground with the observer). With it: ``H = d · (tan θ_top − tan θ_base)`` (a tree on a
    slope, a wall or chimney whose foot is above the observer's ground); the eye height then
    cancels.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance to the object's axis [m].
    top_angle_deg : numeric
        Elevation angle of the top [degrees].
    eye_height_m : numeric, keyword-only
        Eye height above the observer's ground [m]; unused with a base angle.
    base_angle_deg : numeric or None, keyword-only
        Elevation angle of the object's foot [degrees], negative below eye level.

    Returns
    -------
    numeric
        Height from the object's foot to its top [m].

    References
    ----------
    Forestry mensuration, e.g. USDA Forest Service field guides (REFERENCES.md "Survey").
    """
    d = np.asarray(distance_m, dtype=float)
    top = np.tan(np.radians(top_angle_deg))
    if base_angle_deg is None:
        h = d * top + np.asarray(eye_height_m, dtype=float)
    else:
        h = d * (top - np.tan(np.radians(base_angle_deg)))
    return _scalar_or_array(h)


def laser_horizontal_distance(slope_distance_m, angle_deg):
    """Return the horizontal distance of a laser shot: ``s · cos θ`` [m].

    Parameters
    ----------
    slope_distance_m : numeric
        Distance along the line of sight [m].
    angle_deg : numeric
        Elevation angle of the line of sight [degrees].
    """
    s = np.asarray(slope_distance_m, dtype=float)
    return _scalar_or_array(s * np.cos(np.radians(angle_deg)))


def height_laser(slope_distance_m, top_angle_deg, *, eye_height_m=DEFAULT_EYE_HEIGHT_M,
                 base_angle_deg=None):
    """Return an object's height from a laser shot to its top.

    The top is ``s · sin θ_top`` above the eye. Without ``base_angle_deg`` the object stands on
    level ground with the observer: ``H = s · sin θ_top + eye height``. With it, the base is
    found on the horizontal distance ``d = s · cos θ_top``:
    ``H = s · sin θ_top − d · tan θ_base``.

    Parameters
    ----------
    slope_distance_m : numeric
        Laser distance along the line of sight to the top [m].
    top_angle_deg : numeric
        Elevation angle of that line of sight [degrees].
    eye_height_m : numeric, keyword-only
        Eye (instrument) height above the observer's ground [m]; unused with a base angle.
    base_angle_deg : numeric or None, keyword-only
        Elevation angle of the object's foot [degrees].

    Returns
    -------
    numeric
        Height from the object's foot to its top [m].
    """
    s = np.asarray(slope_distance_m, dtype=float)
    top = np.radians(top_angle_deg)
    rise = s * np.sin(top)
    if base_angle_deg is None:
        h = rise + np.asarray(eye_height_m, dtype=float)
    else:
        h = rise - s * np.cos(top) * np.tan(np.radians(base_angle_deg))
    return _scalar_or_array(h)


def height_error_from_angle(distance_m, angle_deg, error_deg):
    """Return the change in a tangent-method height when the angle is off by ``error_deg``.

    ``ΔH = d · (tan(θ + δθ) − tan θ)``.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    angle_deg : numeric
        True elevation angle [degrees].
    error_deg : numeric
        Angle error [degrees].

    Returns
    -------
    numeric
        Height error [m].
    """
    d = np.asarray(distance_m, dtype=float)
    a = np.radians(angle_deg)
    dh = d * (np.tan(a + np.radians(error_deg)) - np.tan(a))
    return _scalar_or_array(dh)


def height_per_degree(distance_m, angle_deg):
    """Return the sensitivity of a tangent-method height to its angle, ``d · sec² θ`` per degree.

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    angle_deg : numeric
        Elevation angle [degrees].

    Returns
    -------
    numeric
        ``dH/dθ`` [m per degree]; times a small angle error [degrees] it gives the height error.
    """
    d = np.asarray(distance_m, dtype=float)
    return _scalar_or_array(d / np.cos(np.radians(angle_deg)) ** 2 * (math.pi / 180.0))


def true_bearing(magnetic_bearing_deg, declination_deg):
    """Return the true bearing: ``magnetic bearing + declination``, wrapped to 0..360.

    Parameters
    ----------
    magnetic_bearing_deg : numeric
        Compass bearing, clockwise from magnetic north [degrees].
    declination_deg : numeric
        Magnetic declination [degrees], **east positive, west negative**.

    Returns
    -------
    numeric
        Bearing clockwise from true north [degrees], 0 to below 360.
    """
    b = np.mod(np.asarray(magnetic_bearing_deg, dtype=float)
               + np.asarray(declination_deg, dtype=float), 360.0)
    return _scalar_or_array(b)


def position_from_bearing(distance_m, bearing_deg, *, origin=(0.0, 0.0), declination_deg=0.0):
    """Return the plan position of a point a distance and a bearing away from a known point.

    ``x = x₀ + d · sin β``, ``y = y₀ + d · cos β`` with ``β`` the true bearing
    (:func:`true_bearing`).

    Parameters
    ----------
    distance_m : numeric
        Horizontal distance [m].
    bearing_deg : numeric
        Compass bearing from the known point, clockwise from north [degrees].
    origin : (float, float), keyword-only
        The known point, site frame [m] (x east, y north).
    declination_deg : numeric, keyword-only
        Magnetic declination [degrees], east positive; 0 when the bearing is already true.

    Returns
    -------
    (x, y) : tuple of numeric
        Position in the site frame [m].
    """
    d = np.asarray(distance_m, dtype=float)
    b = np.radians(true_bearing(bearing_deg, declination_deg))
    x = origin[0] + d * np.sin(b)
    y = origin[1] + d * np.cos(b)
    return _scalar_or_array(x), _scalar_or_array(y)


# --------------------------------------------------------------------------- readings
@dataclass(frozen=True)
class Reading:
    """A measured value and its tolerance, in the unit of the field that holds it.

    Parameters
    ----------
    value : float
        The reading [the field's unit: m or degrees].
    tolerance : float
        Half-width of the range repeated readings fall in [same unit], at least 0.
    """

    value: float
    tolerance: float

    def __post_init__(self):
        object.__setattr__(self, "value", check_finite("value", self.value))
        tol = check_finite("tolerance", self.tolerance)
        if tol < 0:
            raise InputError("tolerance", "must not be negative", value=self.tolerance,
                             allowed=">= 0")
        object.__setattr__(self, "tolerance", tol)

    @property
    def low(self) -> float:
        """``value - tolerance``."""
        return self.value - self.tolerance

    @property
    def high(self) -> float:
        """``value + tolerance``."""
        return self.value + self.tolerance

    def to_dict(self) -> dict:
        """Plain-data form: ``{"value": ..., "tolerance": ...}``."""
        return {"value": self.value, "tolerance": self.tolerance}

    @classmethod
    def from_dict(cls, data) -> Reading:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        if not isinstance(data, dict):
            raise InputError("", "a reading must be an object with value and tolerance",
                             value=type(data).__name__)
        unknown = sorted(set(data) - {"value", "tolerance"})
        if unknown:
            raise InputError(unknown[0], "is not a reading field", allowed="value, tolerance")
        for key in ("value", "tolerance"):
            if key not in data:
                raise InputError(key, "is missing")
        return cls(data["value"], data["tolerance"])


@dataclass(frozen=True)
class _ReadingSpec:
    tol_column: str
    unit: str
    low: float
    high: float
    low_open: bool
    high_open: bool
    tol_max: float | None  # None: tolerance must stay below the value


_ANGLE = dict(unit="degrees", low=-90.0, high=90.0, low_open=True, high_open=True, tol_max=10.0)
_SIZE = dict(unit="m", low=0.0, high=200.0, low_open=True, high_open=False, tol_max=None)

#: Reading fields of a :class:`SurveyEntry`, in sampling order, with their limits.
_READINGS: dict[str, _ReadingSpec] = {
    "bearing_deg": _ReadingSpec("bearing_tol_deg", "degrees", 0.0, 360.0, False, True, 45.0),
    "distance_m": _ReadingSpec("distance_tol_m", "m", 0.0, 1000.0, True, False, None),
    "top_angle_deg": _ReadingSpec("top_angle_tol_deg", **_ANGLE),
    "base_angle_deg": _ReadingSpec("base_angle_tol_deg", **_ANGLE),
    "crown_base_angle_deg": _ReadingSpec("crown_base_angle_tol_deg", **_ANGLE),
    "crown_base_m": _ReadingSpec("crown_base_tol_m", "m", 0.0, 200.0, False, False, 50.0),
    "crown_radius_m": _ReadingSpec("crown_radius_tol_m", **_SIZE),
    "width_m": _ReadingSpec("width_tol_m", **_SIZE),
    "depth_m": _ReadingSpec("depth_tol_m", **_SIZE),
    "radius_m": _ReadingSpec("radius_tol_m", **_SIZE),
}

_TREE_ONLY = ("crown_radius_m", "crown_base_angle_deg", "crown_base_m", "trunk_radius_m",
              "crown_shape", "deciduous", "growth_m_per_yr", "mature_height_m")
_BLOCK_ONLY = ("width_m", "depth_m", "axis_deg")
_CYLINDER_ONLY = ("radius_m",)


def default_tolerance(field: str, method: str = "tangent") -> float:
    """Return the default tolerance of a reading typed without one.

    Parameters
    ----------
    field : str
        A reading field of :class:`SurveyEntry` (``"distance_m"``, ``"top_angle_deg"`` ...).
    method : {"tangent", "laser"}, default "tangent"
        How the distance is measured: a tape (or a rangefinder's horizontal mode) or a laser
        slope distance.

    Returns
    -------
    float
        Half-width of the range [degrees for angles, m for lengths]: angles
        :data:`ANGLE_TOLERANCE_DEG` (Brack & Wood 1998), bearings
        :data:`BEARING_TOLERANCE_DEG`, a taped distance :data:`TAPE_DISTANCE_TOLERANCE_M`, a
        laser distance :data:`LASER_DISTANCE_TOLERANCE_M`, crown sizes
        :data:`CROWN_TOLERANCE_M`, other sizes :data:`SIZE_TOLERANCE_M`.
    """
    if field not in _READINGS:
        raise InputError("field", "is not a survey reading", value=field,
                         allowed=", ".join(_READINGS))
    if field == "distance_m":
        return LASER_DISTANCE_TOLERANCE_M if method == "laser" else TAPE_DISTANCE_TOLERANCE_M
    if field == "bearing_deg":
        return BEARING_TOLERANCE_DEG
    if field.endswith("angle_deg"):
        return ANGLE_TOLERANCE_DEG
    if field in ("crown_radius_m", "crown_base_m"):
        return CROWN_TOLERANCE_M
    return SIZE_TOLERANCE_M


def _as_reading(field: str, value, method: str) -> Reading | None:
    if value is None:
        return None
    if isinstance(value, Reading):
        reading = value
    elif isinstance(value, dict):
        try:
            reading = Reading.from_dict(value)
        except InputError as err:
            raise err.at(field) from None
    else:
        if isinstance(value, bool):
            raise InputError(field, "must be a number", value=value)
        number = check_finite(field, value)
        tol = default_tolerance(field, method)
        if _READINGS[field].tol_max is None:
            tol = min(tol, abs(number) / 2.0)  # a small size: at most half of it
        elif field == "crown_base_m":
            tol = min(tol, abs(number))  # a crown down to the ground stays there
        reading = Reading(number, tol)
    spec = _READINGS[field]
    try:
        Reading(reading.value, reading.tolerance)
    except InputError as err:
        raise err.at(field) from None
    check_range(field, reading.value, spec.low, spec.high, unit=spec.unit,
                low_open=spec.low_open, high_open=spec.high_open)
    if spec.tol_max is None:
        if reading.tolerance >= reading.value:
            raise InputError(f"{field}.tolerance", "must be smaller than the reading",
                             value=reading.tolerance,
                             allowed=f"0 to below {reading.value:g} {spec.unit}")
    elif reading.tolerance > spec.tol_max:
        raise InputError(f"{field}.tolerance", "is out of range", value=reading.tolerance,
                         allowed=f"from 0 to {spec.tol_max:g} {spec.unit}")
    if spec.unit == "degrees" and field != "bearing_deg" and abs(reading.value) + \
            reading.tolerance >= 90.0:
        raise InputError(f"{field}.tolerance", "reaches the vertical",
                         value=reading.tolerance,
                         allowed=f"below {90.0 - abs(reading.value):g} degrees for this angle")
    return reading


def _check_growth(value):
    if value is None:
        return None
    if isinstance(value, str):
        key = value.strip().lower()
        if key not in GROWTH_CLASS_RATES_M_PER_YR:
            raise InputError("growth_m_per_yr", "is not a growth class or a rate", value=value,
                             allowed="slow, medium, fast, or 0 to 3 m/yr")
        return key
    if isinstance(value, bool):
        raise InputError("growth_m_per_yr", "must be a number or a class", value=value,
                         allowed="slow, medium, fast, or 0 to 3 m/yr")
    return check_range("growth_m_per_yr", value, 0.0, _MAX_GROWTH_M_PER_YR, unit="m/yr")


def growth_rate(growth) -> float:
    """Return a growth rate in m/yr from a class name or a number.

    Parameters
    ----------
    growth : {"slow", "medium", "fast"} or float
        A growth class (:data:`GROWTH_CLASS_RATES_M_PER_YR`) or a rate [m/yr], 0 to 3.

    Returns
    -------
    float
        Height growth [m/yr].
    """
    value = _check_growth(growth)
    if value is None:
        raise InputError("growth_m_per_yr", "is missing", allowed="slow, medium, fast, or m/yr")
    return GROWTH_CLASS_RATES_M_PER_YR[value] if isinstance(value, str) else value


def growth_class(rate_m_per_yr) -> str:
    """Return the growth class of a rate: ``"slow"``, ``"medium"`` or ``"fast"``.

    Slow up to 1 ft/yr (0.3048 m), fast from 2 ft/yr (0.6096 m), medium between
    (:data:`GROWTH_CLASS_LIMITS_M_PER_YR`).

    Parameters
    ----------
    rate_m_per_yr : float
        Height growth [m/yr].
    """
    rate = growth_rate(rate_m_per_yr)
    slow_max, fast_min = GROWTH_CLASS_LIMITS_M_PER_YR
    if rate <= slow_max:
        return "slow"
    return "fast" if rate >= fast_min else "medium"


# --------------------------------------------------------------------------- entries
@dataclass(frozen=True)
class SurveyEntry:
    """The field readings of one obstruction, each with its tolerance.

    Reading fields (``bearing_deg``, ``distance_m``, the angles and sizes) accept a
    :class:`Reading` or a bare number, which gets the default tolerance of its field (module
    notes); the stored entry always holds :class:`Reading` objects. Every other field is exact.

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
        How ``distance_m`` was measured (module notes).
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
        self._check_kind_fields()
        self._check_tolerance_box()

    # ----------------------------------------------------------------- validation
    @property
    def obstruction_type(self) -> type:
        """The :mod:`layout.scene.obstructions` class this entry builds."""
        if self.kind == "tree":
            return Tree
        return Cylinder if self.kind in CYLINDER_KINDS else Block

    def _check_kind_fields(self):
        cls = self.obstruction_type
        required = {Tree: ("crown_radius_m",), Block: ("width_m", "depth_m"),
                    Cylinder: ("radius_m",)}[cls]
        for name in required:
            if getattr(self, name) is None:
                raise InputError(name, f"is needed for a {self.kind}")
        unused = {Tree: _BLOCK_ONLY + _CYLINDER_ONLY, Block: _TREE_ONLY + _CYLINDER_ONLY,
                  Cylinder: _TREE_ONLY + _BLOCK_ONLY}[cls]
        defaults = {"deciduous": False, "crown_shape": "spheroid"}
        for name in unused:
            value = getattr(self, name)
            if value != defaults.get(name):
                owner = ("trees" if name in _TREE_ONLY else
                         "blocks (" + ", ".join(BLOCK_KINDS) + ")" if name in _BLOCK_ONLY else
                         "cylinders (" + ", ".join(CYLINDER_KINDS) + ")")
                raise InputError(name, f"does not apply to a {self.kind}",
                                 value=value.value if isinstance(value, Reading) else value,
                                 allowed=f"only for {owner}")
        if cls is Tree:
            has_angle = self.crown_base_angle_deg is not None
            has_height = self.crown_base_m is not None
            if has_angle == has_height:
                raise InputError("crown_base_m" if has_height else "crown_base_angle_deg",
                                 "give the crown base either as an angle or as a height",
                                 allowed="exactly one of crown_base_angle_deg, crown_base_m")

    def _corner_values(self) -> tuple[dict[str, np.ndarray], bool]:
        """Return the readings at every corner of the box of values ± tolerances, and a flag.

        The flag is False when no reading has a tolerance (the box is one point).
        """
        names = [n for n in _READINGS if getattr(self, n) is not None
                 and getattr(self, n).tolerance > 0]
        values = {n: np.atleast_1d(v) for n, v in self._values().items()}
        if names:
            grid = np.array(np.meshgrid(*[[-1.0, 1.0]] * len(names), indexing="ij")).reshape(
                len(names), -1)
            for i, n in enumerate(names):
                values[n] = values[n] + grid[i] * getattr(self, n).tolerance
        return values, bool(names)

    def _check_tolerance_box(self):
        values, spread_any = self._corner_values()
        g = self._geometry(values)
        spread = "over the tolerance ranges of the readings" if spread_any else "as read"
        if self.obstruction_type is Tree:
            height = g["top_z"] - g["base_z"]
            if np.any(height <= 0):
                raise InputError("top_angle_deg", f"puts the top at or below the foot {spread}",
                                 value=self.top_angle_deg.value,
                                 allowed="a top above the tree's foot")
            cb = g["crown_base"]
            field = ("crown_base_angle_deg" if self.crown_base_angle_deg is not None
                     else "crown_base_m")
            if np.any(cb < 0) or np.any(cb >= height):
                raise InputError(field, f"puts the crown base outside the tree {spread}",
                                 value=getattr(self, field).value,
                                 allowed="between the tree's foot and its top")
        elif np.any(g["top_z"] <= g["base_z"]):
            raise InputError("top_angle_deg", f"puts the top at or below the base {spread}",
                             value=self.top_angle_deg.value, allowed="a top above the base")

    # ----------------------------------------------------------------- geometry
    def _geometry(self, v: Mapping[str, Any]) -> dict[str, np.ndarray]:
        """Site-frame geometry from reading values (scalars or equal-shaped arrays)."""
        eye_z = self.station_z_m + self.eye_height_m
        top = np.asarray(v["top_angle_deg"], dtype=float)
        if self.method == "laser":
            s = np.asarray(v["distance_m"], dtype=float)
            d = np.asarray(laser_horizontal_distance(s, top), dtype=float)
            top_z = eye_z + s * np.sin(np.radians(top))
        else:
            d = np.asarray(v["distance_m"], dtype=float)
            top_z = eye_z + d * np.tan(np.radians(top))
        if self.base_angle_deg is not None:
            base_z = eye_z + d * np.tan(np.radians(v["base_angle_deg"]))
        else:
            base_z = np.full(np.shape(top_z), self.station_z_m)
        bearing = np.asarray(true_bearing(v["bearing_deg"], self.declination_deg), dtype=float)
        x, y = position_from_bearing(d, bearing, origin=(self.station_x_m, self.station_y_m))
        out = {"x": np.asarray(x), "y": np.asarray(y), "distance": d, "bearing": bearing,
               "top_z": np.asarray(top_z), "base_z": np.asarray(base_z)}
        if self.crown_base_angle_deg is not None:
            out["crown_base"] = eye_z + d * np.tan(np.radians(v["crown_base_angle_deg"])) \
                - base_z
        elif self.crown_base_m is not None:
            out["crown_base"] = np.asarray(v["crown_base_m"], dtype=float) + 0.0 * base_z
        for name in ("crown_radius_m", "width_m", "depth_m", "radius_m"):
            if name in v:
                out[name] = np.asarray(v[name], dtype=float)
        return out

    def _build(self, g: Mapping[str, np.ndarray], index, hemisphere: str):
        def at(key):
            return float(np.asarray(g[key])[index])

        x, y = at("x"), at("y")
        if self.kind == "tree":
            height = at("top_z") - at("base_z")
            args = ((x, y), height, at("crown_radius_m"), at("crown_base"))
            if self.trunk_radius_m is not None:
                args = (*args, self.trunk_radius_m)
            growth = 0.0 if self.growth_m_per_yr is None else growth_rate(self.growth_m_per_yr)
            ground = at("base_z")  # the foot, on a bank or slope when a base angle was read
            if self.deciduous:
                return Tree.deciduous(*args, hemisphere=hemisphere, name=self.name,
                                      growth_m_per_yr=growth, ground_m=ground,
                                      crown_shape=self.crown_shape,
                                      mature_height_m=self.mature_height_m)
            return Tree(*args, name=self.name, growth_m_per_yr=growth, ground_m=ground,
                        crown_shape=self.crown_shape, mature_height_m=self.mature_height_m)
        if self.kind in CYLINDER_KINDS:
            return Cylinder((x, y), at("radius_m"), at("top_z"), at("base_z"), kind=self.kind,
                            name=self.name)
        if self.axis_deg is None:
            axis = at("bearing") + 90.0
        else:
            axis = float(true_bearing(self.axis_deg, self.declination_deg))
        a = math.radians(axis)
        u = np.array([math.sin(a), math.cos(a)]) * (at("width_m") / 2.0)  # along the width
        w = np.array([math.cos(a), -math.sin(a)]) * (at("depth_m") / 2.0)  # across it
        c = np.array([x, y])
        footprint = [c - u - w, c + u - w, c + u + w, c - u + w]
        return Block(footprint, at("top_z"), at("base_z"), kind=self.kind, name=self.name)

    def _values(self) -> dict[str, float]:
        return {n: getattr(self, n).value for n in _READINGS if getattr(self, n) is not None}

    def geometry(self) -> dict[str, float]:
        """Return the nominal computed geometry.

        Returns
        -------
        dict
            ``x_m``, ``y_m`` (plan position of the axis, site frame [m]), ``top_z_m`` and
            ``base_z_m`` (site-frame heights of top and foot [m]), ``height_m`` (top minus
            foot [m]), ``horizontal_distance_m`` [m], ``true_bearing_deg`` [degrees], and for
            a tree ``crown_base_m`` (above the tree's foot [m]).
        """
        g = self._geometry(self._values())
        out = {"x_m": float(g["x"]), "y_m": float(g["y"]), "top_z_m": float(g["top_z"]),
               "base_z_m": float(g["base_z"]),
               "height_m": float(g["top_z"] - g["base_z"]),
               "horizontal_distance_m": float(g["distance"]),
               "true_bearing_deg": float(g["bearing"])}
        if "crown_base" in g:
            out["crown_base_m"] = float(g["crown_base"])
        return out

    def height_range(self) -> tuple[float, float]:
        """Return the least and greatest height [m] over the tolerance ranges of the readings.

        Found at the corners of the box of readings ± tolerances; every height formula here
        is monotonic in each reading over such a box, so the corners hold the extremes.
        """
        g = self._geometry(self._corner_values()[0])
        h = np.atleast_1d(g["top_z"] - g["base_z"])
        return float(h.min()), float(h.max())

    def obstruction(self, *, hemisphere: str = "north"):
        """Build the obstruction from the nominal readings.

        Parameters
        ----------
        hemisphere : {"north", "south"}, keyword-only
            For a deciduous tree: the hemisphere its leaf-on months belong to.

        Returns
        -------
        Tree, Block or Cylinder
        """
        return self._build(self._geometry(self._values()), (), hemisphere)

    def sample_readings(self, n: int, seed=None, *, distribution: str = "normal"
                        ) -> dict[str, np.ndarray]:
        """Draw ``n`` sets of readings from the tolerances.

        Parameters
        ----------
        n : int
            Number of draws, at least 1.
        seed : int, numpy.random.Generator or None
            Seed of a new :func:`numpy.random.default_rng`, or a generator to draw from.
        distribution : {"normal", "uniform"}, keyword-only
            ``"normal"``: standard deviation half the tolerance, truncated at ±tolerance;
            ``"uniform"``: uniform over ±tolerance (module notes).

        Returns
        -------
        dict of str to numpy.ndarray
            Each reading field present on the entry, shape (n,), in its unit.
        """
        n = _check_count("n", n)
        rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
        if distribution not in ("normal", "uniform"):
            raise InputError("distribution", "is not a known distribution", value=distribution,
                             allowed="normal, uniform")
        out = {}
        for name in _READINGS:
            reading = getattr(self, name)
            if reading is None:
                continue
            if reading.tolerance == 0:
                out[name] = np.full(n, reading.value)
                continue
            if distribution == "uniform":
                z = rng.uniform(-1.0, 1.0, n)
            else:
                z = _truncated_standard_normal(rng, n, 2.0) / 2.0
            out[name] = reading.value + reading.tolerance * z
        return out

    def sample(self, n: int, seed=None, *, distribution: str = "normal",
               hemisphere: str = "north") -> list:
        """Draw ``n`` obstructions from the tolerances of the readings.

        Parameters
        ----------
        n : int
            Number of draws, at least 1.
        seed : int, numpy.random.Generator or None
            As in :meth:`sample_readings`.
        distribution : {"normal", "uniform"}, keyword-only
            As in :meth:`sample_readings`.
        hemisphere : {"north", "south"}, keyword-only
            As in :meth:`obstruction`.

        Returns
        -------
        list of Tree, Block or Cylinder
            ``n`` obstructions of this entry's type.
        """
        g = self._geometry(self.sample_readings(n, seed, distribution=distribution))
        return [self._build(g, i, hemisphere) for i in range(n)]

    # ----------------------------------------------------------------- plain data
    def to_dict(self) -> dict:
        """Plain-data form: readings as ``{"value", "tolerance"}`` objects, absent ones None.

        ``crown_shape`` is written only for a cone and ``mature_height_m`` only when set, so
        files without them stay as they were.
        """
        out = {}
        for f in fields(self):
            value = getattr(self, f.name)
            if (f.name, value) in (("crown_shape", "spheroid"), ("mature_height_m", None)):
                continue
            out[f.name] = value.to_dict() if isinstance(value, Reading) else value
        return out

    @classmethod
    def from_dict(cls, data) -> SurveyEntry:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field.

        A reading may also be a bare number, which gets its field's default tolerance.
        """
        if not isinstance(data, dict):
            raise InputError("", "a survey entry must be an object of named fields",
                             value=type(data).__name__)
        known = [f.name for f in fields(cls)]
        unknown = sorted(set(data) - set(known))
        if unknown:
            raise InputError(unknown[0], "is not a survey entry field",
                             allowed=", ".join(known))
        for key in ("kind", "bearing_deg", "distance_m", "top_angle_deg"):
            if key not in data:
                raise InputError(key, "is missing")
        rest = {k: v for k, v in data.items()
                if k not in ("kind", "bearing_deg", "distance_m", "top_angle_deg")}
        return cls(data["kind"], data["bearing_deg"], data["distance_m"],
                   data["top_angle_deg"], **rest)


def _check_count(field: str, n) -> int:
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 1:
        raise InputError(field, "must be a whole number of at least 1", value=n, allowed=">= 1")
    return int(n)


def _truncated_standard_normal(rng: np.random.Generator, n: int, bound: float) -> np.ndarray:
    """Draw standard normal values restricted to ±bound, redrawing those outside."""
    z = rng.standard_normal(n)
    outside = np.abs(z) > bound
    while outside.any():
        z[outside] = rng.standard_normal(int(outside.sum()))
        outside = np.abs(z) > bound
    return z


# --------------------------------------------------------------------------- sets and ranges
def _check_entries(entries) -> list[SurveyEntry]:
    entries = list(entries)
    for i, e in enumerate(entries):
        if not isinstance(e, SurveyEntry):
            raise InputError(f"entries[{i}]", "is not a survey entry", value=type(e).__name__)
    return entries


def sample_obstructions(entries, n: int, seed=None, *, distribution: str = "normal",
                        hemisphere: str = "north") -> list[list]:
    """Draw ``n`` obstruction sets, one obstruction per entry in each set.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    n : int
        Number of sets, at least 1.
    seed : int, numpy.random.Generator or None
        One generator serves all entries, in order, so a seed gives the same sets every time.
    distribution, hemisphere
        As in :meth:`SurveyEntry.sample`.

    Returns
    -------
    list of n lists
        Set ``k`` holds the ``k``-th draw of every entry, in the order of ``entries``.
    """
    entries = _check_entries(entries)
    n = _check_count("n", n)
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    per_entry = [e.sample(n, rng, distribution=distribution, hemisphere=hemisphere)
                 for e in entries]
    return [[draws[k] for draws in per_entry] for k in range(n)]


@dataclass(frozen=True, eq=False)
class LossRange:
    """Percentiles of a loss over obstruction sets drawn from the survey tolerances.

    Parameters
    ----------
    percentiles : tuple of float
        The percentiles asked for [%].
    values : numpy.ndarray
        The loss at each percentile: shape (P,) for a scalar loss, (P, M) for M per-module
        losses [the evaluate function's unit].
    nominal : float or numpy.ndarray
        The loss with the nominal readings.
    samples : int
        Number of obstruction sets drawn.
    seed : int or None
        Seed of the generator (report it beside the range to make it repeatable).
    distribution : str
        How readings were drawn.
    year : int
        Years of tree growth applied to every set.
    """

    percentiles: tuple[float, ...]
    values: np.ndarray
    nominal: Any
    samples: int
    seed: int | None
    distribution: str
    year: int

    def to_dict(self) -> dict:
        """Plain-data form (lists and floats) for reports."""
        nominal = self.nominal.tolist() if isinstance(self.nominal, np.ndarray) else \
            self.nominal
        return {"percentiles": list(self.percentiles), "values": self.values.tolist(),
                "nominal": nominal, "samples": self.samples, "seed": self.seed,
                "distribution": self.distribution, "year": self.year}

    @classmethod
    def from_dict(cls, data) -> LossRange:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("percentiles", "values", "nominal", "samples", "seed", "distribution", "year")
        check_fields(data, known, required=known, what="loss range")
        nominal = data["nominal"]
        try:
            values = np.array(data["values"], dtype=float)
            nominal = float(nominal) if np.ndim(nominal) == 0 else np.array(nominal, float)
        except (TypeError, ValueError):
            raise InputError("values", "must be numbers") from None
        return cls(percentiles=tuple(float(p) for p in data["percentiles"]), values=values,
                   nominal=nominal, samples=_check_count("samples", data["samples"]),
                   seed=data["seed"], distribution=str(data["distribution"]),
                   year=_check_year(data["year"]))


def _as_loss(value):
    array = np.asarray(value, dtype=float)
    if array.ndim > 1:
        raise InputError("evaluate", "must return a number or a 1-D array", value=array.shape)
    return array


def loss_range(entries, evaluate: Callable[[list], Any], *, samples: int = 200,
               seed: int | None = 0, percentiles: Sequence[float] = (5, 95),
               distribution: str = "normal", year: int = 0, widen_crown: bool = True,
               hemisphere: str = "north") -> LossRange:
    """Propagate the survey tolerances to a loss: percentiles over sampled obstruction sets.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    evaluate : callable
        Takes a list of obstructions (one per entry, in order) and returns the loss: a number
        (annual loss in total) or a 1-D array (per module). Fixed obstructions the survey does
        not cover belong inside the callable.
    samples : int, keyword-only, default 200
        Number of obstruction sets drawn.
    seed : int or None, keyword-only, default 0
        Seed of :func:`numpy.random.default_rng`; reported in the result.
    percentiles : sequence of float, keyword-only, default (5, 95)
        Percentiles to report [%], 0 to 100.
    distribution : {"normal", "uniform"}, keyword-only
        As in :meth:`SurveyEntry.sample_readings`.
    year : int, keyword-only, default 0
        Years of tree growth after the survey applied to every set
        (:func:`obstructions_at_year`).
    widen_crown : bool, keyword-only, default True
        Grow crown radii in proportion to the height (:func:`grown_tree`).
    hemisphere : {"north", "south"}, keyword-only
        For deciduous trees.

    Returns
    -------
    LossRange
    """
    entries = _check_entries(entries)
    samples = _check_count("samples", samples)
    pct = tuple(check_range(f"percentiles[{i}]", p, 0.0, 100.0, unit="%")
                for i, p in enumerate(percentiles))
    if not pct:
        raise InputError("percentiles", "is empty", allowed="one or more of 0 to 100")
    year = _check_year(year)
    rng = np.random.default_rng(seed)
    sets = sample_obstructions(entries, samples, rng, distribution=distribution,
                               hemisphere=hemisphere)
    losses = np.array([_as_loss(evaluate(_grow_set(entries, s, year, widen_crown)))
                       for s in sets])
    nominal = _as_loss(evaluate(obstructions_at_year(entries, year, widen_crown=widen_crown,
                                                     hemisphere=hemisphere)))
    values = np.percentile(losses, pct, axis=0)
    return LossRange(percentiles=pct, values=values,
                     nominal=float(nominal) if nominal.ndim == 0 else nominal,
                     samples=samples, seed=seed, distribution=distribution, year=year)


# --------------------------------------------------------------------------- growth
def _check_year(year) -> int:
    if isinstance(year, bool) or not isinstance(year, (int, np.integer)) or not 0 <= year <= 100:
        raise InputError("year", "must be a whole number of years", value=year,
                         allowed="0 to 100")
    return int(year)


def grown_tree(tree: Tree, years, *, growth=None, widen_crown: bool = True,
               max_height_m: float | None = None) -> Tree:
    """Return a tree as it stands ``years`` after it was surveyed.

    The height grows linearly by ``rate · years``, up to ``max_height_m`` if given; the crown
    radius grows in proportion to the height (the tree keeps its width-to-height ratio) unless
    ``widen_crown`` is False; the crown base, trunk, position, transmittance and name stay.

    Parameters
    ----------
    tree : Tree
        The tree as surveyed.
    years : float
        Years after the survey, 0 to 100.
    growth : {"slow", "medium", "fast"} or float or None, keyword-only
        Growth class or rate [m/yr] (:func:`growth_rate`); None (the default) takes the
        tree's own ``growth_m_per_yr``.
    widen_crown : bool, keyword-only, default True
        Scale the crown radius with the height.
    max_height_m : float or None, keyword-only
        Mature height the tree does not outgrow [m]; a tree already taller keeps its height.
        None takes the tree's own ``mature_height_m`` (no cap when that is None too).

    Returns
    -------
    Tree
    """
    if not isinstance(tree, Tree):
        raise InputError("tree", "is not a Tree", value=type(tree).__name__)
    years = check_range("years", years, 0.0, 100.0, unit="years")
    rate = tree.growth_m_per_yr if growth is None else growth_rate(growth)
    height = tree.height + rate * years
    if max_height_m is None:
        max_height_m = tree.mature_height_m
    if max_height_m is not None:
        cap = check_range("max_height_m", max_height_m, 0.0, 200.0, unit="m", low_open=True)
        height = min(height, max(cap, tree.height))
    radius = tree.crown_radius * height / tree.height if widen_crown else tree.crown_radius
    return replace(tree, height=height, crown_radius=radius)


def projected_trees(tree: Tree, *, growth, years: Sequence[int] = PROJECTION_YEARS,
                    widen_crown: bool = True, max_height_m: float | None = None
                    ) -> dict[int, Tree]:
    """Return the tree at each of ``years`` after the survey (default 1, 10 and 25).

    Parameters
    ----------
    tree : Tree
        The tree as surveyed.
    growth : {"slow", "medium", "fast"} or float, keyword-only
        Growth class or rate [m/yr].
    years : sequence of int, keyword-only
        Years after the survey.
    widen_crown, max_height_m
        As in :func:`grown_tree`.

    Returns
    -------
    dict of int to Tree
    """
    return {int(y): grown_tree(tree, y, growth=growth, widen_crown=widen_crown,
                               max_height_m=max_height_m) for y in years}


def _grow_set(entries: list[SurveyEntry], obstructions: list, year: int,
              widen_crown: bool = True) -> list:
    if year == 0:
        return list(obstructions)
    return [grown_tree(ob, year, growth=e.growth_m_per_yr, widen_crown=widen_crown)
            if e.kind == "tree" and e.growth_m_per_yr is not None else ob
            for e, ob in zip(entries, obstructions, strict=True)]


def obstructions_at_year(entries, year: int = 0, *, widen_crown: bool = True,
                         hemisphere: str = "north") -> list:
    """Build the nominal obstructions with every tree grown ``year`` years by its own rate.

    Trees without a growth rate, and every other kind, stay as surveyed.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    year : int, default 0
        Years after the survey, 0 to 100.
    widen_crown : bool, keyword-only, default True
        Grow crown radii in proportion to the height (:func:`grown_tree`).
    hemisphere : {"north", "south"}, keyword-only
        For deciduous trees.

    Returns
    -------
    list
        One obstruction per entry, in order.
    """
    entries = _check_entries(entries)
    year = _check_year(year)
    return _grow_set(entries, [e.obstruction(hemisphere=hemisphere) for e in entries], year,
                     widen_crown)


# --------------------------------------------------------------------------- survey table
def _column_docs() -> dict[str, str]:
    docs = {
        "name": "label of the obstruction (text)",
        "kind": "one of " + ", ".join(SURVEY_KINDS),
        "method": "tangent (horizontal distance) or laser (slope distance to the top); "
                  "blank = tangent",
        "length_unit": "unit of bare numbers in the length columns of the row: "
                       + ", ".join(LENGTH_UNITS) + "; blank = m",
        "station_x_m": "observer's position, east [m]; blank = 0",
        "station_y_m": "observer's position, north [m]; blank = 0",
        "station_z_m": "ground level at the observer, site frame z [m]; blank = 0",
        "eye_height_m": f"eye height above the ground [m]; blank = {DEFAULT_EYE_HEIGHT_M}",
        "declination_deg": "magnetic declination, east positive [degrees]; blank = 0 (true)",
        "trunk_radius_m": "tree trunk radius [m]; blank = 0.2",
        "crown_shape": "tree crown: spheroid (rounded, broadleaf) or cone (conifer); "
                       "blank = spheroid",
        "axis_deg": "compass bearing of a block's width side [degrees]; blank = across the "
                    "line of sight",
        "deciduous": "tree loses its leaves: true/false; blank = false",
        "growth_m_per_yr": "tree growth: slow, medium, fast, or a rate [m/yr]; blank = none",
        "mature_height_m": "height the tree does not grow past [m]; blank = no cap",
    }
    for name, spec in _READINGS.items():
        docs[name] = f"reading [{spec.unit}]"
        docs[spec.tol_column] = f"tolerance of {name}, ± [{spec.unit}]; blank = default"
    return docs


_COLUMN_DOCS = _column_docs()

#: Input columns of a survey table, in order; each maps to its meaning and unit. Length
#: columns (``..._m``) hold metres unless the row's ``length_unit`` says otherwise; a text cell
#: with its own unit ("36 ft", "11 ft 6 in") is read in that unit.
SURVEY_COLUMNS: dict[str, str] = {
    name: _COLUMN_DOCS[name] for name in (
        "name", "kind", "method", "length_unit", "station_x_m", "station_y_m", "station_z_m",
        "eye_height_m", "declination_deg", "bearing_deg", "bearing_tol_deg", "distance_m",
        "distance_tol_m", "top_angle_deg", "top_angle_tol_deg", "base_angle_deg",
        "base_angle_tol_deg", "crown_radius_m", "crown_radius_tol_m", "crown_base_angle_deg",
        "crown_base_angle_tol_deg", "crown_base_m", "crown_base_tol_m", "trunk_radius_m",
        "crown_shape", "deciduous", "growth_m_per_yr", "mature_height_m", "width_m",
        "width_tol_m", "depth_m", "depth_tol_m", "axis_deg", "radius_m", "radius_tol_m",
    )
}

#: Columns :func:`survey_table` adds, computed from the nominal readings; ignored on reading.
COMPUTED_COLUMNS: dict[str, str] = {
    "x_m": "plan position of the object's axis, east [m]",
    "y_m": "plan position of the object's axis, north [m]",
    "top_z_m": "height of the top, site frame z [m]",
    "base_z_m": "height of the foot, site frame z [m]",
    "height_m": "top minus foot [m]",
    "height_min_m": "least height over the reading tolerances [m]",
    "height_max_m": "greatest height over the reading tolerances [m]",
}

_REQUIRED_COLUMNS = ("kind", "bearing_deg", "distance_m", "top_angle_deg")
_LENGTH_COLUMNS = {name for name in SURVEY_COLUMNS if name.endswith("_m")}
_TOL_TO_FIELD = {spec.tol_column: name for name, spec in _READINGS.items()}


@dataclass(frozen=True)
class SurveyProblem:
    """A bad cell or row of a survey table.

    Parameters
    ----------
    row : int
        Row number as in the file: the header is row 1, the first data row 2.
    column : str
        Column name ("" when the problem is the row as a whole).
    message : str
        What is wrong.
    value : str
        The cell as read ("" when blank or not applicable).
    allowed : str
        The allowed range or form.
    """

    row: int
    column: str
    message: str
    value: str = ""
    allowed: str = ""

    def __str__(self) -> str:
        text = f"row {self.row}, {self.column or 'row'}: {self.message}"
        details = [f"got {self.value!r}"] if self.value else []
        if self.allowed:
            details.append(f"allowed: {self.allowed}")
        return text + (f" ({'; '.join(details)})" if details else "")

    def to_dict(self) -> dict:
        """Plain-data form."""
        return {"row": self.row, "column": self.column, "message": self.message,
                "value": self.value, "allowed": self.allowed}

    @classmethod
    def from_dict(cls, data) -> SurveyProblem:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("row", "column", "message", "value", "allowed")
        check_fields(data, known, required=("row", "column", "message"), what="survey problem")
        row = data["row"]
        if isinstance(row, bool) or not isinstance(row, int) or row < 1:
            raise InputError("row", "must be a row number", value=row, allowed=">= 1")
        for key in known[1:]:
            if not isinstance(data.get(key, ""), str):
                raise InputError(key, "must be text", value=data[key])
        return cls(row, data["column"], data["message"], data.get("value", ""),
                   data.get("allowed", ""))


def _blank(cell) -> bool:
    if cell is None:
        return True
    if isinstance(cell, float) and math.isnan(cell):
        return True
    return isinstance(cell, str) and not cell.strip()


def _parse_number(column: str, cell) -> float:
    if isinstance(cell, str):
        text = cell.strip()
        for suffix in ("°", "deg", "degrees"):
            if text.lower().endswith(suffix):
                text = text[: -len(suffix)].strip()
                break
        try:
            number = float(text)
        except ValueError:
            raise InputError(column, "must be a number", value=cell,
                             allowed="a number") from None
        return check_finite(column, number)
    if isinstance(cell, bool):
        raise InputError(column, "must be a number", value=cell)
    return check_finite(column, cell)


def _parse_length_cell(column: str, cell, unit: str) -> float:
    """Read a length cell: a plain number (also 1e-05) in ``unit``, or text with its unit."""
    if isinstance(cell, str):
        try:
            number = float(cell.strip())
        except ValueError:
            return parse_length(cell, default_unit=unit, field=column)
        cell = check_finite(column, number)
    if unit == "m":
        return check_finite(column, cell)  # exact: no multiplication by 1.0 needed
    return parse_length(cell, default_unit=unit, field=column)


def _parse_bool(column: str, cell) -> bool:
    if isinstance(cell, (bool, np.bool_)):
        return bool(cell)
    text = str(cell).strip().lower()
    if text in ("true", "yes", "y", "1"):
        return True
    if text in ("false", "no", "n", "0"):
        return False
    raise InputError(column, "must be true or false", value=cell, allowed="true/false, yes/no")


def _parse_row(cells: Mapping[str, Any]) -> dict:
    """Turn one row's cells into SurveyEntry keywords; collects every bad cell."""
    problems: list[InputError] = []
    unit = "m"
    if not _blank(cells.get("length_unit")):
        unit = str(cells["length_unit"]).strip().lower()
        if unit not in LENGTH_UNITS:
            problems.append(InputError("length_unit", "is not a length unit",
                                       value=cells["length_unit"],
                                       allowed=", ".join(LENGTH_UNITS)))
            unit = "m"
    values: dict[str, Any] = {}
    for column, cell in cells.items():
        if column == "name" and isinstance(cell, str) and cell:
            values[column] = cell  # a name is kept as typed, spaces and all
            continue
        if column == "length_unit" or column in COMPUTED_COLUMNS or _blank(cell):
            continue
        try:
            if column in ("kind", "method", "crown_shape"):
                values[column] = str(cell).strip().lower()
            elif column == "name":
                values[column] = str(cell)
            elif column == "deciduous":
                values[column] = _parse_bool(column, cell)
            elif column == "growth_m_per_yr":
                text = str(cell).strip().lower() if isinstance(cell, str) else None
                if text in GROWTH_CLASS_RATES_M_PER_YR:
                    values[column] = text
                else:
                    try:
                        values[column] = _parse_length_cell(column, cell, "m")
                    except InputError:
                        raise InputError(column, "is not a growth class or a rate", value=cell,
                                         allowed="slow, medium, fast, or 0 to 3 m/yr"
                                         ) from None
            elif column in _LENGTH_COLUMNS:
                values[column] = _parse_length_cell(column, cell, unit)
            else:
                values[column] = _parse_number(column, cell)
        except InputError as err:
            problems.append(err)
    kwargs: dict[str, Any] = {}
    method = values.get("method", "tangent")
    for name in _READINGS:
        tol_col = _READINGS[name].tol_column
        if name in values:
            if tol_col in values:
                kwargs[name] = {"value": values[name], "tolerance": values[tol_col]}
            else:
                kwargs[name] = values[name]  # the entry gives it the default tolerance
            try:  # check each reading on its own, so that every bad cell is reported
                _as_reading(name, kwargs[name], method if method in METHODS else "tangent")
            except InputError as err:
                problems.append(err)
        elif tol_col in values:
            problems.append(InputError(tol_col, "has no reading to belong to",
                                       value=values[tol_col], allowed=f"blank, or fill {name}"))
    if problems:
        raise _RowProblems(problems)
    for key, value in values.items():
        if key not in _READINGS and key not in _TOL_TO_FIELD:
            kwargs[key] = value
    return kwargs


class _RowProblems(Exception):
    def __init__(self, errors: list[InputError]):
        super().__init__(errors)
        self.errors = errors


def _column_of(field: str) -> str:
    head, _, rest = field.partition(".")
    if rest == "tolerance" and head in _READINGS:
        return _READINGS[head].tol_column
    return head


def _problem(row: int, err: InputError, cells: Mapping[str, Any] | None = None
             ) -> SurveyProblem:
    column = _column_of(err.field)
    if cells is not None and column in cells and not _blank(cells[column]):
        value = str(cells[column])  # the cell as in the file
    else:
        value = "" if err.value is None else str(err.value)
    return SurveyProblem(row, column, err.problem, value, err.allowed or "")


def _entries_from_records(header: list[str], records) -> tuple[list[SurveyEntry],
                                                                list[SurveyProblem]]:
    problems: list[SurveyProblem] = []
    allowed = ", ".join([*SURVEY_COLUMNS, *COMPUTED_COLUMNS])
    use = []
    seen = set()
    for name in header:
        key = str(name).strip()
        if key in seen:
            problems.append(SurveyProblem(1, key, "column appears twice", key, "each once"))
            use.append(None)
        elif key not in SURVEY_COLUMNS and key not in COMPUTED_COLUMNS:
            problems.append(SurveyProblem(1, key, "is not a survey column", key, allowed))
            use.append(None)
        else:
            use.append(key)
        seen.add(key)
    missing = [c for c in _REQUIRED_COLUMNS if c not in seen]
    for c in missing:
        problems.append(SurveyProblem(1, c, "required column is missing", "",
                                      ", ".join(_REQUIRED_COLUMNS)))
    if missing:
        return [], problems
    entries = []
    for row, cells in records:
        if all(_blank(c) for c in cells):
            continue
        if len(cells) != len(header):
            problems.append(SurveyProblem(row, "", "has a different number of cells than the "
                                          "header", str(len(cells)), f"{len(header)} cells"))
            continue
        mapping = {key: cell for key, cell in zip(use, cells, strict=True) if key is not None}
        try:
            kwargs = _parse_row(mapping)
        except _RowProblems as bad:
            found = [_problem(row, err, mapping) for err in bad.errors]
            order = {key: i for i, key in enumerate(use) if key is not None}
            problems.extend(sorted(found, key=lambda p: order.get(p.column, len(order))))
            continue
        for key in _REQUIRED_COLUMNS:
            if key not in kwargs:
                problems.append(SurveyProblem(row, key, "is empty", "",
                                              _COLUMN_DOCS[key]))
        if any(key not in kwargs for key in _REQUIRED_COLUMNS):
            continue
        try:
            entries.append(SurveyEntry.from_dict(kwargs))
        except InputError as err:
            problems.append(_problem(row, err, mapping))
    return entries, problems


def entries_from_table(table: pd.DataFrame) -> tuple[list[SurveyEntry], list[SurveyProblem]]:
    """Read survey entries from a DataFrame with the columns of :data:`SURVEY_COLUMNS`.

    Cells may be numbers or text (text lengths may carry a unit, "36 ft"); blank cells (NaN,
    None, "") take their defaults. Rows are numbered as if the table were written to CSV with
    its header: the first data row is row 2.

    Parameters
    ----------
    table : pandas.DataFrame
        One row per obstruction.

    Returns
    -------
    entries : list of SurveyEntry
        The good rows, in order.
    problems : list of SurveyProblem
        Every bad cell or row, with its row number and column.
    """
    if not isinstance(table, pd.DataFrame):
        raise InputError("table", "must be a pandas DataFrame", value=type(table).__name__)
    header = [str(c) for c in table.columns]
    records = [(i + 2, list(row)) for i, row in enumerate(table.itertuples(index=False))]
    return _entries_from_records(header, records)


def read_survey_csv(path_or_buffer) -> tuple[list[SurveyEntry], list[SurveyProblem]]:
    """Read a survey table from CSV; keep the good rows and report every bad one.

    The first line is the header (row 1) with columns from :data:`SURVEY_COLUMNS` (the
    required ones: kind, bearing_deg, distance_m, top_angle_deg) and optionally
    :data:`COMPUTED_COLUMNS`, which are ignored, so the output of :func:`survey_table`
    written with ``DataFrame.to_csv(index=False)`` reads back. Blank lines are skipped.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or text file object
        The CSV file (UTF-8, a byte-order mark is allowed) or an open text stream.

    Returns
    -------
    entries : list of SurveyEntry
        The good rows, in file order.
    problems : list of SurveyProblem
        Every bad cell with its row number (header = row 1) and column, and the allowed
        range; every row with a wrong number of cells; unknown or missing columns (row 1).
    """
    if hasattr(path_or_buffer, "read"):
        text = path_or_buffer.read()
    else:
        with open(path_or_buffer, newline="", encoding="utf-8-sig") as handle:
            text = handle.read()
    if isinstance(text, bytes):
        text = text.decode("utf-8-sig")
    reader = csv.reader(io.StringIO(text.lstrip("\ufeff"), newline=""))
    try:
        header = next(reader)
    except StopIteration:
        return [], [SurveyProblem(1, "", "the file is empty", "",
                                  "a header row: " + ", ".join(_REQUIRED_COLUMNS) + ", ...")]
    records = []
    row = 1
    for cells in reader:
        row += 1
        records.append((row, cells))
    return _entries_from_records(header, records)


def survey_table(entries) -> pd.DataFrame:
    """Return the survey table of ``entries``: readings, tolerances and computed heights.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.

    Returns
    -------
    pandas.DataFrame
        One row per entry; the columns of :data:`SURVEY_COLUMNS` (lengths in metres,
        ``length_unit`` "m", every tolerance written out, absent readings as None) followed by
        :data:`COMPUTED_COLUMNS`. ``to_csv(index=False)`` of it reads back with
        :func:`read_survey_csv` to the same entries.
    """
    entries = _check_entries(entries)
    rows = []
    for e in entries:
        row: dict[str, Any] = {}
        for column in SURVEY_COLUMNS:
            if column == "length_unit":
                row[column] = "m"
            elif column in _READINGS:
                reading = getattr(e, column)
                row[column] = None if reading is None else reading.value
            elif column in _TOL_TO_FIELD:
                reading = getattr(e, _TOL_TO_FIELD[column])
                row[column] = None if reading is None else reading.tolerance
            else:
                row[column] = getattr(e, column)
        g = e.geometry()
        low, high = e.height_range()
        row.update({"x_m": g["x_m"], "y_m": g["y_m"], "top_z_m": g["top_z_m"],
                    "base_z_m": g["base_z_m"], "height_m": g["height_m"],
                    "height_min_m": low, "height_max_m": high})
        rows.append(row)
    columns = [*SURVEY_COLUMNS, *COMPUTED_COLUMNS]
    frame = pd.DataFrame(rows, columns=columns)
    return frame.astype(object).where(frame.notna(), None) if len(frame) else frame
