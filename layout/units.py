"""Length and slope conversions between the trade's units and the core's metres and degrees.

The core works in metres and degrees. US setbacks are written in inches and feet, survey tapes
read feet and inches, and roofers give pitch as rise in 12. These helpers let a user type either.
"""

from __future__ import annotations

import math
import re

import numpy as np

from .errors import InputError, check_range

__all__ = [
    "FOOT_M",
    "INCH_M",
    "feet_inches_to_m",
    "feet_to_m",
    "format_length",
    "inches_to_m",
    "m_to_feet",
    "m_to_inches",
    "parse_coordinate",
    "parse_length",
    "parse_pitch",
    "pitch_from_rise",
    "rise_from_pitch",
    "slope_length_factor",
]

FOOT_M = 0.3048  # exact, international foot (1959 agreement)
INCH_M = 0.0254  # exact


def feet_to_m(feet):
    """Convert feet to metres. Works on scalars and arrays."""
    return np.asarray(feet, dtype=float) * FOOT_M if np.ndim(feet) else float(feet) * FOOT_M


def inches_to_m(inches):
    """Convert inches to metres. Works on scalars and arrays."""
    return np.asarray(inches, dtype=float) * INCH_M if np.ndim(inches) else float(inches) * INCH_M


def m_to_feet(metres):
    """Convert metres to feet. Works on scalars and arrays."""
    return np.asarray(metres, dtype=float) / FOOT_M if np.ndim(metres) else float(metres) / FOOT_M


def m_to_inches(metres):
    """Convert metres to inches. Works on scalars and arrays."""
    return np.asarray(metres, dtype=float) / INCH_M if np.ndim(metres) else float(metres) / INCH_M


def feet_inches_to_m(feet: float, inches: float = 0.0) -> float:
    """Convert a tape reading of feet and inches, e.g. 11 ft 6 in, to metres."""
    return float(feet) * FOOT_M + float(inches) * INCH_M


_UNIT_M = {
    "m": 1.0, "metre": 1.0, "metres": 1.0, "meter": 1.0, "meters": 1.0,
    "cm": 0.01, "mm": 0.001,
    "ft": FOOT_M, "foot": FOOT_M, "feet": FOOT_M, "'": FOOT_M, "’": FOOT_M,
    "in": INCH_M, "inch": INCH_M, "inches": INCH_M, '"': INCH_M, "”": INCH_M, "''": INCH_M,
}
# a number: a mixed number of inches as a tape reads ("6 3/4", "6-3/4"), a fraction ("3/4")
# or a decimal; then its unit, if any
_PART = re.compile(
    r"\s*([-+]?(?:\d+[ \t-]+\d+/\d+|\d+/\d+|\d+(?:\.\d*)?|\.\d+))\s*(''|[a-zA-Z]+|['\"’”])?")


def _number(text: str) -> float:
    """Value of a decimal, a fraction ("3/4") or a mixed number ("6 3/4", "6-3/4")."""
    text = text.strip()
    if "/" not in text:
        return float(text)
    head, _, fraction = text.rpartition(" ") if " " in text else text.rpartition("-")
    numerator, denominator = fraction.split("/")
    if float(denominator) == 0:
        raise ValueError("a fraction over zero")
    head = head.strip(" -\t+")
    return (float(head) if head else 0.0) + float(numerator) / float(denominator)


def parse_length(text, *, default_unit: str = "m", field: str = "length") -> float:
    r"""Read a length typed by a user and return metres.

    Accepts a bare number (in ``default_unit``), a number with a unit (``"3.2 m"``,
    ``"457 mm"``, ``"18 in"``, ``"36\""``), or feet and inches together (``"11 ft 6 in"``,
    ``"11' 6\""``, ``"11 ft 6"``: a bare number after feet is inches). Inches may be written
    with fractions as a tape reads them: ``"6 3/4 in"``, ``"6-3/4 in"``, ``"3/4 in"``,
    ``"11 ft 6 3/4 in"``. A leading minus
    applies to the whole length.

    Parameters
    ----------
    text : str or float
        What the user typed.
    default_unit : str, default "m"
        Unit of a bare number: one of m, cm, mm, ft, in.
    field : str
        Field name used in the error message.

    Returns
    -------
    float
        Length [m].

    Raises
    ------
    InputError
        If the text is not a length.
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        if not math.isfinite(text):
            raise InputError(field, "must be a finite length", value=text)
        return float(text) * _UNIT_M[default_unit]
    source = str(text).strip()
    if not source:
        raise InputError(field, "is empty", allowed="a length such as 3.2 m or 11 ft 6 in")
    if source[0] in "-\u2212" and len(source) > 1 and source[1:].strip()[:1] not in "-+\u2212":
        # a leading minus applies to the whole length: "-3 ft 3.75 in" (a coordinate west or
        # south of the origin) is minus three feet three and three quarter inches
        return -parse_length(source[1:].strip(), default_unit=default_unit, field=field)
    total = 0.0
    position = 0
    parts = 0
    last_unit_m = 0.0
    while position < len(source):
        match = _PART.match(source, position)
        if not match or match.end() == position:
            break
        number, unit = match.groups()
        if unit is None:
            # A bare number after a feet part is inches, as a tape reads: "11 ft 6".
            if parts and last_unit_m != FOOT_M:
                raise InputError(field, "has a number without a unit after a length",
                                 value=text, allowed="a length such as 3.2 m or 11 ft 6 in")
            unit = "in" if parts else default_unit
        elif unit not in ("'", '"', "’", "”", "''"):
            unit = unit.lower()
        if unit not in _UNIT_M:
            raise InputError(
                field, f"unknown unit {unit!r}", value=text, allowed="m, cm, mm, ft, in, ' or \""
            )
        last_unit_m = _UNIT_M[unit]
        try:
            total += _number(number) * last_unit_m
        except ValueError:
            raise InputError(field, "has a fraction over zero", value=text,
                             allowed="a length such as 3.2 m or 11 ft 6 3/4 in") from None
        position = match.end()
        parts += 1
    if parts == 0 or source[position:].strip():
        raise InputError(
            field, "is not a length", value=text, allowed="a length such as 3.2 m or 11 ft 6 in"
        )
    return total


def format_length(metres: float, system: str = "metric", *, digits: int = 2) -> str:
    """Format a length for display: ``"1.83 m"``, ``"6 ft 0 in"`` or ``"11 ft 6 3/4 in"``.

    Parameters
    ----------
    metres : float
        Length [m].
    system : {"metric", "imperial"}
        Unit system to show.
    digits : int
        Decimals for metres. Imperial lengths are rounded to the nearest sixteenth of an inch
        and written as a tape reads: ``"11 ft 6 3/4 in"``, ``"3/4 in"`` (no feet under a foot),
        ``"6 ft 0 in"``.
    """
    if system == "metric":
        return f"{metres:.{digits}f} m"
    if system != "imperial":
        raise InputError("system", "unknown unit system", value=system, allowed="metric, imperial")
    sixteenths = round(abs(metres) / INCH_M * 16)
    feet, rest = divmod(sixteenths, 12 * 16)
    whole, part = divmod(rest, 16)
    step = math.gcd(part, 16)
    fraction = f" {part // step}/{16 // step}" if part else ""
    sign = "-" if sixteenths and metres < 0 else ""
    if feet:
        return f"{sign}{int(feet)} ft {whole}{fraction} in"
    if part and not whole:  # under an inch: "3/4 in", not "0 3/4 in"
        return f"{sign}{fraction.strip()} in"
    return f"{sign}{whole}{fraction} in"


def pitch_from_rise(rise, run: float = 12.0):
    """Roof pitch in degrees from the trade's rise-in-12 notation.

    Parameters
    ----------
    rise : numeric
        Rise per ``run`` of horizontal run (4 for a 4:12 roof).
    run : float, default 12
        Horizontal run in the same unit as ``rise``.

    Returns
    -------
    numeric
        Pitch from horizontal [degrees]: 4:12 gives 18.435, 6:12 gives 26.565.
    """
    if np.ndim(rise) == 0:
        value = check_rise(rise)
        return math.degrees(math.atan2(value, run))
    return np.degrees(np.arctan2(np.asarray(rise, dtype=float), run))


def check_rise(rise) -> float:
    """Validate a rise-in-12 value (0 to 44.8, the 75° limit of the roof model)."""
    return check_range("rise_in_12", rise, 0.0, 12.0 * math.tan(math.radians(75.0)))


def rise_from_pitch(pitch_deg, run: float = 12.0):
    """Rise per ``run`` from a pitch in degrees (inverse of :func:`pitch_from_rise`)."""
    return np.tan(np.radians(pitch_deg)) * run if np.ndim(pitch_deg) else math.tan(
        math.radians(pitch_deg)
    ) * run


def slope_length_factor(pitch_deg):
    """Return the true length up the slope per unit of horizontal run: 1 / cos(pitch).

    Equal to sqrt(1 + (rise/12)²); 6:12 gives 1.1180.
    """
    return 1.0 / np.cos(np.radians(pitch_deg))


_HEMISPHERES = {"latitude": {"N": 1.0, "S": -1.0}, "longitude": {"E": 1.0, "W": -1.0}}
_COORDINATE_LIMIT = {"latitude": 90.0, "longitude": 180.0}
_DMS = re.compile(
    r"""^\s*(?P<h1>[NSEW])?\s*(?P<sign>[-+−])?\s*
    (?P<deg>\d+(?:\.\d*)?|\.\d+)\s*(?:°|º|deg|d|\s)?\s*
    (?:(?P<min>\d+(?:\.\d*)?|\.\d+)\s*(?:['′’]|min|m|\s)?\s*)?
    (?:(?P<sec>\d+(?:\.\d*)?|\.\d+)\s*(?:"|″|”|''|sec|s)?\s*)?
    (?P<h2>[NSEW])?\s*$""",
    re.IGNORECASE | re.VERBOSE,
)


def parse_coordinate(text, axis: str = "latitude", *, field: str | None = None) -> float:
    r"""Read a latitude or longitude typed in decimal degrees or degrees, minutes and seconds.

    Accepts ``"40.0150"``, ``"-105.2705"``, ``"40.0150 N"``, ``"105°16'13.8\" W"``,
    ``"40 0 54 N"``, ``"40d 0m 54s N"`` and degrees with decimal minutes (``"40° 0.9' N"``).
    A hemisphere letter (N or S for a latitude, E or W for a longitude) may stand before or
    after the value; south and west are negative.

    Parameters
    ----------
    text : str or float
        What the user typed.
    axis : {"latitude", "longitude"}
        Which coordinate it is: sets the hemisphere letters and the range (±90° or ±180°).
    field : str, optional
        Field name for errors; defaults to ``axis``.

    Returns
    -------
    float
        Decimal degrees, north and east positive.

    Raises
    ------
    InputError
        If the text is not a coordinate, minutes or seconds reach 60, the hemisphere letter
        belongs to the other axis, a sign and a letter are both given, or the value is out of
        range.
    """
    if axis not in _HEMISPHERES:
        raise InputError("axis", "unknown coordinate axis", value=axis,
                         allowed="latitude, longitude")
    field = field or axis
    limit = _COORDINATE_LIMIT[axis]
    example = "40.0150 N or 40° 0' 54\" N" if axis == "latitude" else "-105.27 or 105° 16' W"
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value = float(text)
    else:
        match = _DMS.match(str(text))
        if not match or (match["h1"] and match["h2"]):
            raise InputError(field, "is not a coordinate", value=text,
                             allowed=f"decimal degrees or degrees minutes seconds, e.g. {example}")
        letter = (match["h1"] or match["h2"] or "").upper()
        if letter and letter not in _HEMISPHERES[axis]:
            raise InputError(field, f"{letter} is not a hemisphere of a {axis}", value=text,
                             allowed=" or ".join(_HEMISPHERES[axis]))
        if letter and match["sign"]:
            raise InputError(field, "has both a sign and a hemisphere letter", value=text,
                             allowed="one of them")
        minutes = float(match["min"] or 0.0)
        seconds = float(match["sec"] or 0.0)
        for name, part in (("minutes", minutes), ("seconds", seconds)):
            if part >= 60:
                raise InputError(field, f"{name} must be under 60", value=text)
        value = float(match["deg"]) + minutes / 60.0 + seconds / 3600.0
        if match["sign"] in ("-", "−"):
            value = -value
        value *= _HEMISPHERES[axis].get(letter, 1.0)
    return check_range(field, value, -limit, limit, unit="degrees")


#: Steepest pitch a face may have [degrees]; the roof model's limit (layout.scene.roof).
MAX_PITCH_DEG = 75.0
#: Steepest rise in 12 accepted: 44 in 12 is about 74.7°, just under the pitch limit.
MAX_RISE_IN_12 = 44.0
_RISE = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*(?:/|:|in|-in-|\s+in\s+)\s*12\s*$",
                   re.IGNORECASE)
_DEGREES = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*(?:°|º|deg|degrees?)?\s*$",
                      re.IGNORECASE)


def parse_pitch(text, *, field: str = "pitch") -> float:
    """Read a roof pitch typed in degrees or in rise in 12 and return degrees.

    Accepts ``"26.6"``, ``"26.6°"``, ``"26.6 deg"``, and ``"6/12"``, ``"6:12"``, ``"6 in 12"``.

    Raises
    ------
    InputError
        If the text is neither, or the pitch is outside 0 to 75° (a rise outside 0 to 44 in 12).
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        return check_range(field, float(text), 0, MAX_PITCH_DEG, unit="degrees")
    source = str(text)
    rise = _RISE.match(source)
    if rise:
        value = check_range(field, float(rise[1]), 0, MAX_RISE_IN_12, unit="in 12")
        return float(pitch_from_rise(value))
    degrees = _DEGREES.match(source)
    if not degrees:
        raise InputError(field, "is not a pitch", value=text,
                         allowed="degrees (26.6) or rise in 12 (6/12, 6:12, 6 in 12)")
    return check_range(field, float(degrees[1]), 0, MAX_PITCH_DEG, unit="degrees")
