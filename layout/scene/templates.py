"""Roof templates: a common roof shape from a few typed values, as a form gives them.

A :class:`RoofTemplate` holds what a designer types to sketch a roof (the shape, the footprint
sizes, the pitch, the eave height, where the building stands and how it is turned) and builds
the :class:`~layout.scene.building.Building` with the builders of
:mod:`layout.scene.building`. Lengths and pitches may be given as text in the trade's units
("38 ft 6 in", "6/12") through :func:`template_from_text`, which reads every field and reports
each bad one by name, so that a form can show all of its problems at once.
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace

from ..errors import InputError, check_fields
from ..units import parse_length, parse_pitch
from .building import (
    Building,
    flat_roof,
    gable_roof,
    hip_roof,
    l_shaped_gable_roof,
    l_shaped_hip_roof,
    shed_roof,
)

__all__ = ["TEMPLATE_KINDS", "RoofTemplate", "template_from_text"]

#: Roof shapes a template can build, with the words a form shows for them.
TEMPLATE_KINDS = {
    "gable": "gable",
    "hip": "hip",
    "shed": "shed (one slope)",
    "flat": "flat, with or without a parapet",
    "l_gable": "L-shaped gable",
    "l_hip": "L-shaped hip",
}
_WINGED = ("l_gable", "l_hip")


@dataclass(frozen=True)
class RoofTemplate:
    """A common roof shape, from the values a designer types.

    Parameters
    ----------
    kind : str
        One of :data:`TEMPLATE_KINDS`.
    length_m, width_m : float
        Footprint along the building's own x axis (the ridge of a gable or hip) and y axis [m].
    pitch_deg : float
        Pitch of every sloped face [degrees], more than 0 up to 75 (ignored for ``"flat"``).
    eave_height_m : float
        Height of the eaves above ground [m].
    rotation_deg : float, default 0
        Compass direction of the building's own y axis, clockwise from north [degrees]: 0
        puts the length east-west, so a gable's long faces face south and north.
    east_m, north_m : float, default 0
        Where the building's own origin (its first corner) stands on the plan [m].
    wing_length_m, wing_width_m : float, default 0
        The second leg of an L (``"l_gable"``, ``"l_hip"``) [m].
    parapet_height_m : float, default 0
        Parapet of a flat roof [m].
    name : str, default ""
        The building's name; it prefixes its face names ("garage south").
    """

    kind: str
    length_m: float
    width_m: float
    pitch_deg: float
    eave_height_m: float
    rotation_deg: float = 0.0
    east_m: float = 0.0
    north_m: float = 0.0
    wing_length_m: float = 0.0
    wing_width_m: float = 0.0
    parapet_height_m: float = 0.0
    name: str = ""

    def __post_init__(self):
        if self.kind not in TEMPLATE_KINDS:
            raise InputError("kind", "unknown roof template", value=self.kind,
                             allowed=", ".join(TEMPLATE_KINDS))

    def build(self) -> Building:
        """Return the building; raises :class:`InputError` naming the field at fault."""
        place = {"rotation_deg": self.rotation_deg, "origin": (self.east_m, self.north_m),
                 "name": self.name}
        if self.kind == "flat":
            return flat_roof(self.length_m, self.width_m, self.eave_height_m,
                             parapet_height_m=self.parapet_height_m, **place)
        if self.kind in _WINGED:
            builder = l_shaped_gable_roof if self.kind == "l_gable" else l_shaped_hip_roof
            return builder(self.length_m, self.width_m, self.wing_length_m, self.wing_width_m,
                           self.pitch_deg, self.eave_height_m, **place)
        if self.kind == "shed":  # the shed builder is turned by the direction it faces
            place["facing_azimuth_deg"] = (180.0 + place.pop("rotation_deg")) % 360.0
            return shed_roof(self.length_m, self.width_m, self.pitch_deg, self.eave_height_m,
                             **place)
        builder = gable_roof if self.kind == "gable" else hip_roof
        return builder(self.length_m, self.width_m, self.pitch_deg, self.eave_height_m, **place)

    def to_dict(self) -> dict:
        """Plain data, for a form's state or a file."""
        return {f.name: getattr(self, f.name) for f in fields(self)}

    @classmethod
    def from_dict(cls, data: dict) -> RoofTemplate:
        """Inverse of :meth:`to_dict`."""
        names = tuple(f.name for f in fields(cls))
        check_fields(data, names, required=("kind", "length_m", "width_m", "pitch_deg",
                                            "eave_height_m"), what="roof template")
        return cls(**data)

    def moved(self, east_m: float, north_m: float) -> RoofTemplate:
        """Return the same template standing elsewhere on the plan."""
        return replace(self, east_m=east_m, north_m=north_m)


_LENGTHS = ("length_m", "width_m", "eave_height_m", "east_m", "north_m", "wing_length_m",
            "wing_width_m", "parapet_height_m")


def template_from_text(kind: str, values: dict, *, default_unit: str = "m"
                       ) -> tuple[RoofTemplate | None, dict[str, str]]:
    """Read a template form's typed text; return the template and every field's problem.

    Parameters
    ----------
    kind : str
        One of :data:`TEMPLATE_KINDS`.
    values : dict of str to str
        Typed text per field of :class:`RoofTemplate` (lengths as "38 ft 6 in" or "11.7",
        the pitch as "26.6" or "6/12", the rotation in degrees); missing optional fields keep
        their defaults.
    default_unit : str, default "m"
        Unit of a bare number typed in a length field (m or ft, as the project's units).

    Returns
    -------
    template : RoofTemplate or None
        The template, or None when a field is bad or the builder rejects the values.
    problems : dict of str to str
        Field name to its message; empty when the template builds. Nothing typed is changed.
    """
    problems: dict[str, str] = {}
    read: dict = {"kind": kind, "name": str(values.get("name", "")).strip()}
    if kind not in TEMPLATE_KINDS:
        problems["kind"] = f"unknown roof template {kind!r}; one of {', '.join(TEMPLATE_KINDS)}"
    needed = {"length_m", "width_m", "eave_height_m"} | (
        set() if kind == "flat" else {"pitch_deg"}) | (
        {"wing_length_m", "wing_width_m"} if kind in _WINGED else set())
    for name in (*_LENGTHS, "pitch_deg", "rotation_deg"):
        text = values.get(name, "")
        if text is None or str(text).strip() == "":
            if name in needed:
                problems[name] = "is missing"
            continue
        try:
            if name == "pitch_deg":
                read[name] = parse_pitch(text, field=name)
            elif name == "rotation_deg":
                read[name] = float(str(text).strip().rstrip("°"))
            else:
                read[name] = parse_length(text, default_unit=default_unit, field=name)
        except InputError as err:
            problems[name] = _without_field(err)
        except ValueError:
            problems[name] = f"is not a number (got {text!r}; allowed: degrees such as 20)"
    read.setdefault("pitch_deg", 0.0)
    if problems:
        return None, problems
    try:
        template = RoofTemplate(**read)
        template.build()
    except InputError as err:
        problems[err.field or "kind"] = _without_field(err)
        return None, problems
    return template, problems


def _without_field(err: InputError) -> str:
    """Return the error text without its leading field name (the form shows it by the field)."""
    text = str(err)
    head = f"{err.field}: "
    return text[len(head):] if text.startswith(head) else text
