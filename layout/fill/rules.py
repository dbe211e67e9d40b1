"""Fire-access setback and clearance rules, the code-edition presets, and the 33 % rule.

.. caution::
   The numbers here are defaults only. The authority having jurisdiction (the local fire
   marshal or building official) decides which code edition applies, with which local
   amendments, and may ask for more or allow less. Check the adopted code before a design
   goes out. :data:`CAUTION` holds this text for a user interface or a report.

A :class:`ClearanceRules` object is plain, editable data: one setback distance per edge kind
(eave, ridge, rake, hip, valley, wall, parapet; see :data:`layout.scene.roof.EDGE_KINDS`), a
larger ridge setback that takes over when the array covers more than a share of the plan-view
roof area (the "33 % rule", :func:`ridge_setback_in_force`), a clear ring around roof-mounted
obstructions, access pathways from eave to ridge, and a pitch at or below which a face is
exempt from the residential rules. The presets cite the code sections they follow; turning
rules into the area left for modules is the work of :mod:`layout.fill.usable`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace
from types import MappingProxyType

import numpy as np

from ..errors import InputError, check_fields, check_nonnegative, check_positive, check_range
from ..scene.roof import EDGE_KINDS, MAX_PITCH_DEG
from ..units import FOOT_M, feet_to_m, inches_to_m, pitch_from_rise

__all__ = [
    "CAUTION",
    "PATHWAY_EDGE_KINDS",
    "ClearanceRules",
    "array_share",
    "ifc_2015_residential",
    "ifc_2021_commercial",
    "ifc_2021_residential",
    "no_setbacks",
    "ridge_setback_in_force",
    "setback_length_text",
]

#: Caution shown with every setback result.
CAUTION = (
    "Setback and clearance values are defaults only. The authority having jurisdiction "
    "decides which fire code edition and local amendments apply; confirm the required "
    "setbacks, pathways and clearances with them before the design is submitted."
)

# Pitch comparison slack for the exemption [degrees].
_PITCH_TOL_DEG = 1e-9

#: Edge kinds an access pathway may run along: edges that climb from eave to ridge.
PATHWAY_EDGE_KINDS = ("rake", "hip", "valley")


# --------------------------------------------------------------------------- rules
def _check_optional(field_name: str, value, check, **kwargs):
    return None if value is None else check(field_name, value, **kwargs)


def _check_count(field_name: str, value) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        if isinstance(value, float) and value.is_integer() and value >= 0:
            return int(value)
        raise InputError(field_name, "must be a whole number", value=value, allowed="0, 1, 2, ...")
    if value < 0:
        raise InputError(field_name, "must not be negative", value=value, allowed="0, 1, 2, ...")
    return int(value)


def _check_setbacks(value) -> MappingProxyType:
    if not isinstance(value, Mapping):
        raise InputError("edge_setback_m", "must map edge kinds to distances",
                         value=type(value).__name__,
                         allowed="{kind: metres} for " + ", ".join(EDGE_KINDS))
    unknown = [k for k in value if k not in EDGE_KINDS]
    if unknown:
        raise InputError(f"edge_setback_m.{unknown[0]}", "is not an edge kind",
                         allowed=", ".join(EDGE_KINDS))
    missing = [k for k in EDGE_KINDS if k not in value]
    if missing:
        raise InputError("edge_setback_m", "needs a distance for every edge kind",
                         value=", ".join(missing) + " missing",
                         allowed="one entry each for " + ", ".join(EDGE_KINDS))
    return MappingProxyType({
        k: check_nonnegative(f"edge_setback_m.{k}", value[k], unit="m") for k in EDGE_KINDS})


@dataclass(frozen=True)
class ClearanceRules:
    """Setback, clearance and pathway rules for roof-mounted PV, all editable.

    Start from a preset (:func:`ifc_2021_residential`, :func:`ifc_2015_residential`,
    :func:`ifc_2021_commercial`, :func:`no_setbacks`) and change what the authority having
    jurisdiction asks for with :meth:`with_edge_setback` or :func:`dataclasses.replace`.

    Parameters
    ----------
    name : str
        Short label shown to the user.
    edge_setback_m : mapping of str to float
        Clear distance from each edge kind [m], on the roof surface: one entry for every kind
        in :data:`layout.scene.roof.EDGE_KINDS`. The ``ridge`` entry is the ridge setback while the
        array's share of the plan-view roof area is at or below ``share_threshold``.
    source : str, default ""
        Code edition and section the values follow, or where else they came from.
    ridge_setback_high_m : float or None, default None
        Ridge setback once the array covers more than ``share_threshold`` of the plan-view
        roof area [m]. None: the ridge setback does not change with coverage.
    share_threshold : float, default 0.33
        Array share of the plan-view roof area above which ``ridge_setback_high_m`` applies
        [fraction], more than 0 and at most 1.
    obstruction_clearance_m : float, default 0
        Width of the clear ring around each roof-mounted obstruction (chimney, vent,
        skylight, ...) [m], on the roof surface.
    pathway_width_m : float, default 0
        Width of each access pathway from eave to ridge [m].
    pathway_count : int, default 0
        Number of access pathways the building needs, each on a separate face.
    exempt_max_pitch_deg : float or None, default None
        Faces with a pitch at or below this [degrees] are exempt from the edge setbacks and
        pathways (the obstruction ring still applies). None: no exemption.
    ridge_source : str, default ""
        Code section of the ridge setback and its coverage switch, quoted in explanations;
        empty: ``source`` is quoted instead.
    """

    name: str
    edge_setback_m: Mapping[str, float]
    source: str = ""
    ridge_setback_high_m: float | None = None
    share_threshold: float = 0.33
    obstruction_clearance_m: float = 0.0
    pathway_width_m: float = 0.0
    pathway_count: int = 0
    exempt_max_pitch_deg: float | None = None
    ridge_source: str = ""

    def __post_init__(self):
        set_ = object.__setattr__
        for text in ("name", "source", "ridge_source"):
            if not isinstance(getattr(self, text), str):
                raise InputError(text, "must be text", value=getattr(self, text))
        set_(self, "edge_setback_m", _check_setbacks(self.edge_setback_m))
        set_(self, "ridge_setback_high_m", _check_optional(
            "ridge_setback_high_m", self.ridge_setback_high_m, check_nonnegative, unit="m"))
        set_(self, "share_threshold", check_range(
            "share_threshold", self.share_threshold, 0.0, 1.0, low_open=True))
        set_(self, "obstruction_clearance_m", check_nonnegative(
            "obstruction_clearance_m", self.obstruction_clearance_m, unit="m"))
        set_(self, "pathway_width_m", check_nonnegative(
            "pathway_width_m", self.pathway_width_m, unit="m"))
        set_(self, "pathway_count", _check_count("pathway_count", self.pathway_count))
        set_(self, "exempt_max_pitch_deg", _check_optional(
            "exempt_max_pitch_deg", self.exempt_max_pitch_deg, check_range,
            low=0.0, high=MAX_PITCH_DEG, unit="degrees"))

    def __hash__(self):
        return hash((self.name, tuple(self.edge_setback_m.items()), self.source,
                     self.ridge_setback_high_m, self.share_threshold,
                     self.obstruction_clearance_m, self.pathway_width_m, self.pathway_count,
                     self.exempt_max_pitch_deg, self.ridge_source))

    def __eq__(self, other):
        if not isinstance(other, ClearanceRules):
            return NotImplemented
        return self.to_dict() == other.to_dict()

    def setback_m(self, kind: str) -> float:
        """Setback from an edge of ``kind`` [m] (the low ridge setback for ``ridge``)."""
        if kind not in EDGE_KINDS:
            raise InputError("kind", "is not an edge kind", value=kind,
                             allowed=", ".join(EDGE_KINDS))
        return self.edge_setback_m[kind]

    def with_edge_setback(self, kind: str, metres: float) -> ClearanceRules:
        """Return a copy with the setback from edges of ``kind`` set to ``metres`` [m]."""
        if kind not in EDGE_KINDS:
            raise InputError("kind", "is not an edge kind", value=kind,
                             allowed=", ".join(EDGE_KINDS))
        setbacks = dict(self.edge_setback_m)
        setbacks[kind] = metres
        return replace(self, edge_setback_m=setbacks)

    def is_exempt(self, pitch_deg: float) -> bool:
        """Tell whether a face of ``pitch_deg`` [degrees] is exempt from edge setbacks."""
        limit = self.exempt_max_pitch_deg
        return limit is not None and float(pitch_deg) <= limit + _PITCH_TOL_DEG

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "name": self.name,
            "source": self.source,
            "edge_setback_m": dict(self.edge_setback_m),
            "ridge_setback_high_m": self.ridge_setback_high_m,
            "share_threshold": self.share_threshold,
            "obstruction_clearance_m": self.obstruction_clearance_m,
            "pathway_width_m": self.pathway_width_m,
            "pathway_count": self.pathway_count,
            "exempt_max_pitch_deg": self.exempt_max_pitch_deg,
            "ridge_source": self.ridge_source,
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> ClearanceRules:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        if not isinstance(data, Mapping):
            raise InputError("", "clearance rules must be a JSON object",
                             value=type(data).__name__)
        known = ("name", "source", "edge_setback_m", "ridge_setback_high_m", "share_threshold",
                 "obstruction_clearance_m", "pathway_width_m", "pathway_count",
                 "exempt_max_pitch_deg", "ridge_source")
        check_fields(data, known, required=("name", "edge_setback_m"), what="clearance rules")
        return cls(**{k: data[k] for k in known if k in data})


# --------------------------------------------------------------------------- presets
def ifc_2021_residential(*, sprinklered: bool = False) -> ClearanceRules:
    """Residential rules after the International Fire Code, 2021 edition, §1205.2.

    - Ridge: 18 in (457.2 mm) clear on each side of a horizontal ridge while the array
      covers at most 33 % of the plan-view roof area, 36 in (914.4 mm) above that
      (§1205.2.1.2). With an automatic sprinkler system the switch is at 66 % instead.
    - Two 36 in (914.4 mm) access pathways from the lowest roof edge to the ridge, on
      separate roof planes (§1205.2.1.1).
    - Roofs of 2:12 (9.46°) or less are exempt (§1205.2).
    - No setback from eaves, rakes, hips or valleys in this edition.

    Parameters
    ----------
    sprinklered : bool, default False
        The dwelling has an automatic sprinkler system.

    Returns
    -------
    ClearanceRules
    """
    # REFERENCES.md, 'Fire access setbacks': IFC 2021 §1205.2.1.2 (18 in / 36 in, 33 %);
    # the 66 % sprinklered threshold is recalled from memory, not checked in the primary text.
    threshold = 0.66 if sprinklered else 0.33
    ridge_source = "IFC 2021 §1205.2.1.2"
    if sprinklered:
        ridge_source += ", sprinklered 66 % threshold from memory"
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    setbacks["ridge"] = inches_to_m(18)
    return ClearanceRules(
        name="IFC 2021 residential" + (" (sprinklered)" if sprinklered else ""),
        source="IFC 2021 §1205.2 (exemption), §1205.2.1.1 (pathways), §1205.2.1.2 (ridge)",
        ridge_source=ridge_source,
        edge_setback_m=setbacks,
        ridge_setback_high_m=inches_to_m(36),
        share_threshold=threshold,
        # The IFC sets no ring around chimneys or vents for dwellings; the AHJ or the racking
        # manufacturer may: set obstruction_clearance_m when they do.
        obstruction_clearance_m=0.0,
        pathway_width_m=inches_to_m(36),
        pathway_count=2,
        exempt_max_pitch_deg=pitch_from_rise(2),
    )


def ifc_2015_residential() -> ClearanceRules:
    """Residential rules after the International Fire Code, 2015 edition, §605.11.3.2.

    - Hips and valleys: 18 in (457.2 mm) clear (§605.11.3.2.3, same in IFC 2012).
    - Ridge: modules no higher than 3 ft (914.4 mm) below the ridge (§605.11.3.2.4), with no
      change by array coverage.
    - 36 in (914.4 mm) access pathways from eave to ridge (§605.11.3.2.1–2).

    The hip and valley row is from REFERENCES.md; the ridge and pathway values are recalled
    from memory. This edition sets the pathways per roof slope (one on each slope with
    modules for hip roofs, two for single-ridge roofs), which :func:`choose_pathway_faces`
    does not model: its ``pathway_count`` of 2 is a building total. The edition applies the
    hip and valley setback only where modules sit on both sides; this preset applies it
    always. No low-slope exemption is set, since none is confirmed for this edition.

    Returns
    -------
    ClearanceRules
    """
    # REFERENCES.md, 'Fire access setbacks', older editions: IFC 2012/2015 §605.11, 18 in from
    # hips and valleys. Ridge 3 ft and 3 ft pathways: from memory (§605.11.3.2.1, .2, .4), not
    # confirmed against the primary text; the 2:12 exemption could not be confirmed for 2015.
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    setbacks["hip"] = inches_to_m(18)
    setbacks["valley"] = inches_to_m(18)
    setbacks["ridge"] = feet_to_m(3)
    return ClearanceRules(
        name="IFC 2015 residential",
        source=("IFC 2015 §605.11.3.2.3 (hips and valleys); §605.11.3.2.1–2 (pathways) and "
                "§605.11.3.2.4 (ridge) from memory"),
        edge_setback_m=setbacks,
        ridge_setback_high_m=None,
        obstruction_clearance_m=0.0,
        pathway_width_m=feet_to_m(3),
        pathway_count=2,
        exempt_max_pitch_deg=None,
        ridge_source="IFC 2015 §605.11.3.2.4, from memory",
    )


def ifc_2021_commercial(*, building_length_m: float, building_width_m: float) -> ClearanceRules:
    """Rules for buildings other than dwellings after the IFC 2021, §1205.3.1.

    A clear perimeter of 6 ft (1828.8 mm) along the roof's outer edges (eave, rake, parapet,
    wall), or 4 ft (1219.2 mm) where either axis of the building is 250 ft (76.2 m) or less.
    Ridges, hips and valleys are inside the roof and get no setback here. Interior pathways
    between array sections (§1205.3.2) are not modelled.

    Parameters
    ----------
    building_length_m, building_width_m : float
        Plan dimensions of the building along its two axes [m].

    Returns
    -------
    ClearanceRules
    """
    length = check_positive("building_length_m", building_length_m, unit="m")
    width = check_positive("building_width_m", building_width_m, unit="m")
    # REFERENCES.md, 'Fire access setbacks': IFC 2021 §1205.3.1, 6 ft perimeter; the 4 ft
    # rule for an axis of 250 ft or less is from memory.
    small = min(length, width) <= 250 * FOOT_M + 1e-9
    perimeter = feet_to_m(4) if small else feet_to_m(6)
    setbacks = dict.fromkeys(EDGE_KINDS, 0.0)
    for kind in ("eave", "rake", "parapet", "wall"):
        setbacks[kind] = perimeter
    return ClearanceRules(
        name="IFC 2021 commercial" + (" (axis ≤ 250 ft)" if small else ""),
        source="IFC 2021 §1205.3.1" + ("; 4 ft rule from memory" if small else ""),
        edge_setback_m=setbacks,
        obstruction_clearance_m=0.0,
        pathway_width_m=0.0,
        pathway_count=0,
    )


def no_setbacks() -> ClearanceRules:
    """Rules with no setbacks, clearances or pathways (every distance 0)."""
    return ClearanceRules(name="no setbacks", source="none",
                          edge_setback_m=dict.fromkeys(EDGE_KINDS, 0.0))


# --------------------------------------------------------------------------- 33 % rule
def array_share(module_plan_area_m2: float, roof_plan_area_m2: float) -> float:
    """Share of the plan-view roof area covered by the array.

    Parameters
    ----------
    module_plan_area_m2 : float
        Area of all modules seen from above [m²].
    roof_plan_area_m2 : float
        Plan-view area of the whole roof [m²], all faces of the building.

    Returns
    -------
    float
        ``module_plan_area_m2 / roof_plan_area_m2`` [fraction], 0 to 1.
    """
    modules = check_nonnegative("module_plan_area_m2", module_plan_area_m2, unit="m²")
    roof = check_positive("roof_plan_area_m2", roof_plan_area_m2, unit="m²")
    if modules > roof * (1 + 1e-9):
        raise InputError("module_plan_area_m2", "exceeds the plan-view roof area",
                         value=modules, allowed=f"at most {roof:g} m²")
    return min(modules / roof, 1.0)


def setback_length_text(metres: float) -> str:
    """Write a setback as the code gives it, in inches with millimetres: "18 in (457 mm)"."""
    inches = round(metres / 0.0254, 2)
    return f"{inches:g} in ({metres * 1000:.0f} mm)"


def _percent_pair(share: float, threshold: float) -> tuple[str, str]:
    for digits in (0, 1, 2, 3):
        a, b = f"{share * 100:.{digits}f}", f"{threshold * 100:.{digits}f}"
        if a != b or share == threshold:
            return f"{a} %", f"{b} %"
    return f"{share * 100:g} %", f"{threshold * 100:g} %"


def ridge_setback_in_force(rules: ClearanceRules, share: float) -> tuple[float, str]:
    """Ridge setback that applies at a given array share, with the reason in words.

    The larger ``rules.ridge_setback_high_m`` applies when ``share`` is strictly above
    ``rules.share_threshold`` (IFC 2021 §1205.2.1.2: "more than 33 percent").

    Parameters
    ----------
    rules : ClearanceRules
    share : float
        Array share of the plan-view roof area [fraction], 0 to 1 (see :func:`array_share`).

    Returns
    -------
    metres : float
        Ridge setback [m].
    explanation : str
        Plain-language reason, naming the rule's source.
    """
    share = check_range("array_share", share, 0.0, 1.0)
    low = rules.edge_setback_m["ridge"]
    cited = rules.ridge_source or rules.source
    source = f" ({cited})" if cited else ""
    high = rules.ridge_setback_high_m
    if high is None:
        return low, f"ridge setback {setback_length_text(low)}{source}"
    a, b = _percent_pair(share, rules.share_threshold)
    if share > rules.share_threshold:
        return high, (f"ridge setback {setback_length_text(high)}: array covers {a} of the "
                      f"plan-view roof area, above {b}{source}")
    return low, (f"ridge setback {setback_length_text(low)}: array covers {a} of the plan-view "
                 f"roof area, not above {b}{source}")
