"""A reading and its tolerance: the reading fields of a survey entry, their limits and defaults.

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
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ...errors import InputError, check_finite, check_range

__all__ = [
    "ANGLE_TOLERANCE_DEG",
    "BEARING_TOLERANCE_DEG",
    "BRACK_WOOD_RELATIVE_AGREEMENT",
    "CROWN_TOLERANCE_M",
    "LASER_DISTANCE_TOLERANCE_M",
    "SIZE_TOLERANCE_M",
    "TAPE_DISTANCE_TOLERANCE_M",
    "Reading",
    "default_tolerance",
]

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

#: Reading fields of a :class:`~layout.scene.survey.SurveyEntry`, in sampling order, with their
#: limits.
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


def default_tolerance(field: str, method: str = "tangent") -> float:
    """Return the default tolerance of a reading typed without one.

    Parameters
    ----------
    field : str
        A reading field of :class:`~layout.scene.survey.SurveyEntry` (``"distance_m"``,
        ``"top_angle_deg"`` ...).
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

