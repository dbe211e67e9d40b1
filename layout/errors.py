"""Errors raised for bad input, and the small checks that raise them.

Every check names the field it looked at and the range it allows, so that a form or a
project loader can put the message beside the value the user typed, and nothing the user
entered is thrown away.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

import numpy as np
import shapely

__all__ = [
    "InputError",
    "check_fields",
    "check_finite",
    "check_nonnegative",
    "check_outline",
    "check_points",
    "check_positive",
    "check_range",
]


class InputError(ValueError):
    """A value given by the user is outside what eaveline can work with.

    Parameters
    ----------
    field : str
        Name of the offending field, as the user sees it (``"pitch_deg"``,
        ``"faces[2].outline"``).
    problem : str
        What is wrong, in plain words.
    value : object, optional
        The value the user gave, echoed back in the message.
    allowed : str, optional
        The allowed range or form, e.g. ``"0 to 75 degrees"``.
    """

    def __init__(self, field: str, problem: str, *, value=None, allowed: str | None = None):
        self.field = field
        self.problem = problem
        self.value = value
        self.allowed = allowed
        text = f"{field}: {problem}"
        details = []
        if value is not None:
            details.append(f"got {value!r}")
        if allowed:
            details.append(f"allowed: {allowed}")
        if details:
            text += " (" + "; ".join(details) + ")"
        super().__init__(text)

    def at(self, prefix: str) -> InputError:
        """Return the same error with its field placed under ``prefix``.

        Used by containers (a building, a project) to report where in the document the
        value sits: ``err.at("faces[1]")`` turns field ``pitch_deg`` into
        ``faces[1].pitch_deg``.
        """
        field = f"{prefix}.{self.field}" if self.field else prefix
        return InputError(field, self.problem, value=self.value, allowed=self.allowed)


def check_finite(field: str, value) -> float:
    """Return ``value`` as a float, or raise if it is not a finite real number."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(
            field, "must be a number", value=value, allowed="a finite number"
        ) from None
    if not math.isfinite(number):
        raise InputError(field, "must be a finite number", value=value, allowed="a finite number")
    return number


def check_range(
    field: str,
    value,
    low: float,
    high: float,
    *,
    unit: str = "",
    low_open: bool = False,
    high_open: bool = False,
) -> float:
    """Return ``value`` as a float, or raise if it lies outside ``low``..``high``.

    ``low_open`` and ``high_open`` exclude the end points.
    """
    number = check_finite(field, value)
    below = number <= low if low_open else number < low
    above = number >= high if high_open else number > high
    if below or above:
        left = "more than" if low_open else "from"
        right = "less than" if high_open else "to"
        suffix = f" {unit}" if unit else ""
        allowed = f"{left} {low:g} {right} {high:g}{suffix}"
        raise InputError(field, "is out of range", value=value, allowed=allowed)
    return number


def check_whole(field: str, value, low: int = 0, high: int | None = None, *,
                problem: str = "must be a whole number", allowed: str | None = None) -> int:
    """Return ``value`` as an int, or raise unless it is a whole number from ``low`` to ``high``.

    A whole number is an ``int`` or a numpy integer, never a bool (``True`` is not 1 row or
    1 day) and never a float; ``high`` None leaves the range open above. ``problem`` and
    ``allowed`` word the error (``allowed`` defaults to the range).
    """
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < low \
            or (high is not None and value > high):
        if allowed is None:
            allowed = f"{low} or more" if high is None else f"{low} to {high}"
        raise InputError(field, problem, value=value, allowed=allowed)
    return int(value)


def check_positive(field: str, value, *, unit: str = "") -> float:
    """Return ``value`` as a float, or raise unless it is finite and greater than zero."""
    number = check_finite(field, value)
    if number <= 0:
        suffix = f" {unit}" if unit else ""
        raise InputError(field, "must be greater than zero", value=value, allowed=f"> 0{suffix}")
    return number


def check_nonnegative(field: str, value, *, unit: str = "") -> float:
    """Return ``value`` as a float, or raise unless it is finite and at least zero."""
    number = check_finite(field, value)
    if number < 0:
        suffix = f" {unit}" if unit else ""
        raise InputError(field, "must not be negative", value=value, allowed=f">= 0{suffix}")
    return number


def check_points(field: str, points: Iterable, *, dims: int = 2, min_count: int = 1) -> np.ndarray:
    """Return ``points`` as a float array of shape (n, dims), or raise naming the bad entry."""
    try:
        array = np.asarray(points, dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            field, "must be a list of coordinate pairs", allowed="(x, y) pairs in metres"
        ) from None
    if array.ndim != 2 or array.shape[1] != dims:
        raise InputError(
            field,
            f"must be a list of {dims}-number points",
            value=np.asarray(points, dtype=object).tolist() if array.size < 50 else None,
            allowed=f"{dims} numbers per point",
        )
    if len(array) < min_count:
        raise InputError(
            field, f"needs at least {min_count} points", value=len(array), allowed=f">= {min_count}"
        )
    bad = ~np.isfinite(array).all(axis=1)
    if bad.any():
        index = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"{field}[{index}]", "must be finite numbers", value=array[index].tolist(),
            allowed="finite numbers",
        )
    return array


def check_fields(data, known, *, required=(), what: str) -> None:
    """Check the keys of a plain-data mapping read from a document.

    Parameters
    ----------
    data : object
        What the document holds where a ``what`` is expected.
    known : sequence of str
        Every field a ``what`` may have.
    required : sequence of str
        Fields that must be present.
    what : str
        Name of the thing, for messages ("roof face", "module").

    Raises
    ------
    InputError
        If ``data`` is not a mapping, has a field not in ``known`` (named, with the allowed
        fields), or lacks a required field.
    """
    if not isinstance(data, dict):
        raise InputError(what, "must be an object of named fields", value=type(data).__name__)
    unknown = sorted(set(data) - set(known))
    if unknown:
        raise InputError(unknown[0], f"is not a {what} field", allowed=", ".join(known))
    for key in required:
        if key not in data:
            raise InputError(key, "is missing")


def check_outline(field: str, points) -> tuple[tuple[float, float], ...]:
    """Check a plan outline typed by a user and return it as a tuple of float pairs.

    A repeated first corner at the end (a closed ring as typed) is dropped. The outline must
    have at least 3 corners, each corner once, edges that do not cross, and some area.

    Parameters
    ----------
    field : str
        Field name for messages ("outline", "footprint").
    points : sequence of (x, y)
        Corners [m].

    Returns
    -------
    tuple of (float, float)
        The corners, not closed.

    Raises
    ------
    InputError
        Naming the field (or the repeated corner) and what an outline needs.
    """
    pts = check_points(field, points, dims=2, min_count=3)
    if len(pts) > 3 and np.allclose(pts[0], pts[-1], atol=1e-9, rtol=0):
        pts = pts[:-1]
    if len(pts) < 3:
        raise InputError(field, "needs at least 3 distinct corners", value=len(pts),
                         allowed=">= 3 corners")
    _, first, counts = np.unique(np.round(pts, 9), axis=0, return_index=True, return_counts=True)
    if (counts > 1).any():
        dup = int(first[np.flatnonzero(counts > 1)[0]])
        raise InputError(f"{field}[{dup}]", "corner is repeated", value=pts[dup].tolist(),
                         allowed="each corner once")
    polygon = shapely.Polygon(pts)
    if not polygon.is_valid:
        raise InputError(field, f"is not a simple polygon: {shapely.is_valid_reason(polygon)}",
                         allowed="an outline whose edges do not cross")
    if polygon.area < 1e-6:
        raise InputError(field, "encloses no area", value=polygon.area,
                         allowed="an area above 0 m²")
    return tuple((float(x), float(y)) for x, y in pts)
