"""The Survey tab's fields: their names, labels and types, and the reading of typed text.

What a survey form holds, with no widget in it: the reading fields shown with a tolerance
(:data:`READING_FIELDS`), the plain ones, which fields each class of obstruction shows and
needs, the hints shown in empty boxes, and the helpers that turn one field's value into the
text shown (:func:`format_value`) and typed text back into a value (:func:`parse_text`, with
:func:`read_angle` for angles). :func:`height_text` shows a computed height.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from layout.errors import InputError
from layout.scene.survey import (
    BLOCK_KINDS,
    CYLINDER_KINDS,
    DEFAULT_EYE_HEIGHT_M,
    GROWTH_CLASS_RATES_M_PER_YR,
    SurveyEntry,
)
from layout.units import FOOT_M, format_length

from .forms import error_text, length_text, read_length

__all__ = [
    "READING_FIELDS",
    "error_label",
    "field_type",
    "format_value",
    "height_text",
    "more_errors",
    "parse_text",
    "read_angle",
    "read_fields",
    "visible_fields",
]

#: Reading fields of a survey entry shown with a tolerance: key → (label, "angle" or "length").
READING_FIELDS = {
    "bearing_deg": ("Bearing", "angle"),
    "distance_m": ("Distance", "length"),
    "top_angle_deg": ("Angle to the top", "angle"),
    "base_angle_deg": ("Angle to the foot", "angle"),
    "crown_radius_m": ("Crown radius", "length"),
    "crown_base_m": ("Crown base height", "length"),
    "crown_base_angle_deg": ("or crown base angle", "angle"),
    "width_m": ("Width", "length"),
    "depth_m": ("Depth", "length"),
    "radius_m": ("Radius", "length"),
}

#: Plain fields (no tolerance): key → (label, type).
_PLAIN_FIELDS = {
    "name": ("Name", "text"),
    "kind": ("Kind", "kind"),
    "method": ("Distance measured by", "method"),
    "station_x_m": ("Station x (east)", "length"),
    "station_y_m": ("Station y (north)", "length"),
    "station_z_m": ("Station ground z", "length"),
    "eye_height_m": ("Eye height", "length"),
    "declination_deg": ("Declination, east +", "angle"),
    "trunk_radius_m": ("Trunk radius", "length"),
    "crown_shape": ("Crown", "crown"),
    "growth_m_per_yr": ("Growth a year", "growth"),
    "mature_height_m": ("Mature height", "length"),
    "deciduous": ("Loses its leaves", "bool"),
    "axis_deg": ("Width side bearing", "angle"),
}

#: Field types shown as a choice (dropdown or checkbox) rather than typed text.
_CHOICE_TYPES = ("kind", "method", "crown", "bool")

_COMMON = ("name", "kind", "method", "station_x_m", "station_y_m", "station_z_m",
           "eye_height_m", "declination_deg", "bearing_deg", "distance_m", "top_angle_deg",
           "base_angle_deg")
_BY_CLASS = {
    "tree": ("crown_radius_m", "crown_base_m", "crown_base_angle_deg", "trunk_radius_m",
             "crown_shape", "growth_m_per_yr", "mature_height_m", "deciduous"),
    "block": ("width_m", "depth_m", "axis_deg"),
    "cylinder": ("radius_m",),
}
_REQUIRED = {"tree": ("crown_radius_m",), "block": ("width_m", "depth_m"),
             "cylinder": ("radius_m",)}
_OPTIONAL = ("base_angle_deg", "crown_base_m", "crown_base_angle_deg", "trunk_radius_m",
             "growth_m_per_yr", "mature_height_m", "axis_deg")
_HINTS = {
    "base_angle_deg": "blank: foot on the station's ground",
    "crown_base_m": "give this or the angle below",
    "trunk_radius_m": "blank: 0.2 m",
    "growth_m_per_yr": "slow, medium, fast or a height a year",
    "mature_height_m": "blank: no cap on the growth",
    "axis_deg": "blank: face on to you",
    "declination_deg": "0 when bearings are true",
}


def _class_of(kind: str) -> str:
    if kind == "tree":
        return "tree"
    return "cylinder" if kind in CYLINDER_KINDS else "block"


def _kind_label(kind: str) -> str:
    if kind in BLOCK_KINDS:
        return f"{kind} (box)"
    if kind in CYLINDER_KINDS:
        return f"{kind} (cylinder)"
    return kind


def read_angle(text, *, field: str) -> float:
    """Read a typed angle [degrees]: a number, optionally followed by ``°`` or ``deg``."""
    source = str(text).strip()
    for suffix in ("°", "degrees", "deg"):
        if source.lower().endswith(suffix):
            source = source[: -len(suffix)].strip()
            break
    if not source:
        raise InputError(field, "is empty", allowed="an angle in degrees, such as 17 or -3.5")
    try:
        number = float(source.replace("\u2212", "-"))
    except ValueError:
        raise InputError(field, "is not an angle", value=text,
                         allowed="an angle in degrees, such as 17 or -3.5") from None
    if not math.isfinite(number):
        raise InputError(field, "must be a finite angle", value=text)
    return number


def height_text(metres: float, units: str) -> str:
    """Show a computed height: ``"6.34 m"``, or ``"20.79 ft (20 ft 9.5 in)"`` in imperial."""
    if units == "imperial":
        return f"{metres / FOOT_M:.2f} ft ({format_length(metres, 'imperial')})"
    return f"{metres:.2f} m"


def _angle_text(value: float) -> str:
    return f"{value:.6g}"


def field_type(key: str) -> str:
    """Return the type of a field or of a reading's tolerance (``"<reading>.tolerance"``).

    Parameters
    ----------
    key : str
        A field name, or a reading's name followed by ``.tolerance``.

    Returns
    -------
    str
        ``"length"``, ``"angle"``, ``"growth"``, ``"text"`` or a choice type
        (``"kind"``, ``"method"``, ``"crown"``, ``"bool"``).
    """
    if key.endswith(".tolerance"):
        return READING_FIELDS[key[: -len(".tolerance")]][1]
    if key in READING_FIELDS:
        return READING_FIELDS[key][1]
    return _PLAIN_FIELDS[key][1]


def format_value(key: str, value, units: str):
    """Return the text shown for a field's value in ``units`` (``""`` for None).

    Parameters
    ----------
    key : str
        The field, as :func:`field_type` takes it.
    value : object
        The value; a choice field's value is returned as it is.
    units : str
        ``"metric"`` or ``"imperial"``.

    Returns
    -------
    str or object
        The text for the field's box.
    """
    kind = field_type(key)
    if value is None:
        return ""
    if kind == "length":
        return length_text(value, units)
    if kind == "angle":
        return f"{value:.3g}" if key.endswith(".tolerance") else _angle_text(value)
    if kind == "growth":
        return value if isinstance(value, str) else length_text(value, units)
    return value


def parse_text(key: str, text: str, units: str):
    """Read the text typed in a field's box (not a choice field); None when it is blank.

    Parameters
    ----------
    key : str
        The field, as :func:`field_type` takes it; also the field an error names.
    text : str
        The text typed.
    units : str
        ``"metric"`` or ``"imperial"``: what a bare length is in.

    Returns
    -------
    object
        A float, a growth class name, the text itself (a text field) or None.

    Raises
    ------
    InputError
        When the text is not a value of the field's type.
    """
    kind = field_type(key)
    field = key
    if not text.strip():
        return None
    if kind == "length":
        return read_length(text, units, field=field)
    if kind == "angle":
        return read_angle(text, field=field)
    if kind == "growth":
        word = text.strip().lower()
        if word in GROWTH_CLASS_RATES_M_PER_YR:
            return word
        try:
            return read_length(text, units, field=field)
        except InputError:
            raise InputError(field, "is not a growth class or a rate", value=text,
                             allowed="slow, medium, fast, or a height a year such as "
                                     "0.4 m or 1 ft 6 in") from None
    return text


def more_errors(kwargs: dict, errors: list[InputError], fallback: dict) -> None:
    """Add the core's refusals of the other fields to ``errors``.

    The core names one field at a time; each bad field takes the value of ``fallback`` (the
    entry last accepted, as :meth:`layout.scene.survey.SurveyEntry.to_dict` gives it) and the
    entry is tried again, so every wrong field gets its message.

    Parameters
    ----------
    kwargs : dict
        The keywords read from the form.
    errors : list of InputError
        The refusals found so far; extended in place.
    fallback : dict
        The keywords of the entry last accepted.
    """
    trial = dict(kwargs)
    done = {e.field.split(".")[0] for e in errors}
    for root in done:
        if root in fallback:
            trial[root] = fallback[root]
    for _ in range(len(fallback)):
        try:
            SurveyEntry.from_dict(trial)
            return
        except InputError as err:
            root = err.field.split(".")[0]
            if root in done or root not in fallback:
                return
            errors.append(err)
            done.add(root)
            trial[root] = fallback[root]


def visible_fields(kind: str) -> tuple[str, ...]:
    """Return the fields the form shows for an obstruction ``kind``, in order.

    Parameters
    ----------
    kind : str
        One of :data:`layout.scene.survey.SURVEY_KINDS`.

    Returns
    -------
    tuple of str
        The common fields, then those of the kind's class (tree, block or cylinder).
    """
    return _COMMON + _BY_CLASS[_class_of(kind)]


def read_fields(kind: str, method: str, parse: Callable,
                defaulted: Callable) -> tuple[dict, list[str], list[InputError]]:
    """Turn the fields of ``kind`` into SurveyEntry keywords, the missing and the bad fields.

    Parameters
    ----------
    kind : str
        The obstruction kind chosen; its fields are read (:func:`visible_fields`).
    method : str
        The distance method chosen: ``"tangent"`` or ``"laser"``.
    parse : callable
        ``parse(key)`` returns the value in a field or a reading's tolerance
        (``"<reading>.tolerance"``), None when blank; it raises InputError when the text is
        not a value.
    defaulted : callable
        ``defaulted(key)`` is True when a reading's tolerance is still the default it was
        given; the core then applies its documented default.

    Returns
    -------
    kwargs : dict
        The keywords of :meth:`layout.scene.survey.SurveyEntry.from_dict`.
    missing : list of str
        The fields needed but blank.
    errors : list of InputError
        The fields refused.
    """
    kwargs: dict = {}
    missing: list[str] = []
    errors: list[InputError] = []
    for key in visible_fields(kind):
        try:
            value = parse(key)
        except InputError as err:
            errors.append(err)
            continue
        if key in READING_FIELDS:
            if value is None:
                if key not in _OPTIONAL:
                    missing.append(key)
                continue
            tol_key = f"{key}.tolerance"
            if defaulted(key):
                kwargs[key] = value  # the core applies its documented default
                continue
            try:
                tolerance = parse(tol_key)
            except InputError as err:
                errors.append(InputError(tol_key, err.problem, value=err.value,
                                         allowed=err.allowed))
                continue
            if tolerance is None:
                kwargs[key] = value
            else:
                kwargs[key] = {"value": value, "tolerance": tolerance}
        elif value is None:
            if key in ("station_x_m", "station_y_m", "station_z_m", "declination_deg"):
                kwargs[key] = 0.0  # blank: the documented default
            elif key == "eye_height_m":
                kwargs[key] = DEFAULT_EYE_HEIGHT_M
            elif key == "name":
                kwargs[key] = ""
        else:
            kwargs[key] = value
    if (_class_of(kind) == "tree" and "crown_base_m" not in kwargs
            and "crown_base_angle_deg" not in kwargs and not any(
                e.field.split(".")[0].startswith("crown_base") for e in errors)):
        missing.append("crown_base_m")
    for key in _REQUIRED[_class_of(kind)]:
        if key not in kwargs and key not in missing and not any(
                e.field.split(".")[0] == key for e in errors):
            missing.append(key)
    if method not in ("tangent", "laser"):
        errors.append(InputError("method", "is not a measuring method", value=method))
    return kwargs, missing, errors


def error_label(err: InputError) -> str:
    """Return the message shown for a refused field, naming the part of a reading it is about.

    Parameters
    ----------
    err : InputError
        The refusal; its field may be ``"<reading>.tolerance"`` or ``"<reading>.<part>"``.

    Returns
    -------
    str
        The message, such as ``"tolerance must be positive"``.
    """
    _, _, part = err.field.partition(".")
    text = error_text(err)
    if part == "tolerance":
        return f"tolerance {text}"
    if part and part != "value":
        return f"{part}: {text}"
    return text
