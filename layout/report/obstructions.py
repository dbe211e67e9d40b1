"""Obstructions: each with its kind, place and height; surveyed ones with their readings.

A surveyed obstruction lists every reading with its tolerance, the instrument method, the
height range its tolerances allow (:func:`layout.scene.survey.height_range`), and, when the
report has one, the 5–95 % band of the annual shade loss over the tolerances
(:func:`layout.study.outlook.shade_loss_range`). A reading without a tolerance is said to be
taken as exact: a band cannot cover what it was not told could vary.
"""

from __future__ import annotations

from ..project_imports import survey_against_elevation
from ..scene.survey import height_range
from ..units import FOOT_M
from .blocks import DASH, Paragraph, Section, Table, number
from .plan import obstruction_rows

__all__ = ["METHOD_TEXT", "READING_NAMES", "obstructions_section", "range_table"]

#: How each instrument method measures (:mod:`layout.scene.survey.instruments`).
METHOD_TEXT = {
    "tangent": "tangent method: horizontal distance to the axis by tape, elevation angles by "
               "clinometer (H = d·tan θ + eye height)",
    "laser": "laser method: slope distance to the top by rangefinder, elevation angles by "
             "clinometer (H = s·sin θ + eye height)",
}

#: Reading fields in the order printed, with their names in the report.
READING_NAMES = {
    "bearing_deg": "bearing", "distance_m": "distance", "top_angle_deg": "top angle",
    "base_angle_deg": "base angle", "crown_base_angle_deg": "crown base angle",
    "crown_base_m": "crown base height", "crown_radius_m": "crown radius",
    "width_m": "width", "depth_m": "depth", "radius_m": "radius",
}


def _length(metres: float, units: str) -> str:
    factor = FOOT_M if units == "imperial" else 1.0
    return number(metres / factor, 1)


def _place(obstruction) -> tuple[float, float] | None:
    centre = getattr(obstruction, "center", None)
    if centre is not None:
        return float(centre[0]), float(centre[1])
    if hasattr(obstruction, "footprint_polygon"):
        point = obstruction.footprint_polygon.centroid
        return float(point.x), float(point.y)
    return None


def _heights(obstruction) -> tuple[float | None, float | None]:
    top = getattr(obstruction, "top", None)
    if top is None:
        top = getattr(obstruction, "height", None)
    return getattr(obstruction, "base", 0.0 if top is not None else None), top


def _kind(obstruction) -> str:
    if type(obstruction).__name__ == "Tree":
        return "tree"
    if type(obstruction).__name__ == "HorizonProfile":
        return "far horizon"
    return str(getattr(obstruction, "kind", type(obstruction).__name__.lower()))


def _readings_table(label: str, entry, units: str) -> tuple[Table, list[str]]:
    unit = "ft" if units == "imperial" else "m"
    rows, exact = [], []
    for name, text in READING_NAMES.items():
        reading = getattr(entry, name, None)
        if reading is None:
            continue
        if name.endswith("_deg"):
            value, tolerance, shown = number(reading.value), number(reading.tolerance), "°"
        else:
            value, tolerance = _length(reading.value, units), _length(reading.tolerance, units)
            shown = unit
        if reading.tolerance == 0:
            tolerance = "none given"
            exact.append(text)
        rows.append((text, f"{value} {shown}", tolerance if reading.tolerance == 0
                     else f"± {tolerance} {shown}"))
    low, high = height_range(entry)
    rows.append(("height from the readings", f"{_length(low, units)} to "
                 f"{_length(high, units)} {unit}", "over the tolerances"))
    table = Table(("reading", "value", "tolerance"), tuple(rows),
                  caption=f"{label}: readings from the station at "
                          f"({_length(entry.station_x_m, units)}, "
                          f"{_length(entry.station_y_m, units)}) {unit}, eye height "
                          f"{_length(entry.eye_height_m, units)} {unit}",
                  align="lll", key=f"readings:{label}")
    return table, exact


def crosscheck_table(checks, units: str) -> Table:
    """Return each survey entry against the items found in elevation data (table)."""
    unit = "ft" if units == "imperial" else "m"
    rows = []
    for check in checks:
        name = check.entry_name or f"entry {check.entry_index + 1}"
        if check.matched is None:
            rows.append((name, "nothing matches", DASH, DASH, DASH, DASH, "check on site"))
            continue
        rows.append((
            name, check.matched, _length(check.surveyed_height_m, units),
            _length(check.detected_height_m, units),
            f"{_length(check.height_low_m, units)} to {_length(check.height_high_m, units)}",
            f"{_length(check.position_error_m, units)} (± "
            f"{_length(check.position_tolerance_m, units)})",
            "differs: check on site" if check.flagged else "agrees"))
    return Table(("surveyed", "in the data", f"height surveyed [{unit}]",
                  f"height in the data [{unit}]", f"surveyed range [{unit}]",
                  f"positions apart [{unit}]",
                  "verdict"), tuple(rows),
                 caption="The survey against the elevation data: a height outside the "
                         "surveyed range or a position farther apart than its tolerance "
                         "is flagged (elevation data can be years old)",
                 align="llrrrrl", key="crosscheck")


def range_table(loss_range, basis: str) -> Table:
    """Return the layout's shade loss and energy over the survey's tolerances (table)."""
    totals = loss_range.totals
    labels = [c for c in totals.columns if c == "nominal" or (c.startswith("p")
              and not c.endswith(("_low", "_high")))]
    names = {"shade_loss_pct": "shade loss %", "energy_kwh": f"energy kWh/yr {basis}",
             "energy_lost_kwh": "energy lost kWh/yr"}
    rows = []
    for quantity, text in names.items():
        decimals = 1 if quantity == "shade_loss_pct" else 0
        rows.append((text, *(number(totals.loc[quantity, c], decimals,
                                    thousands=decimals == 0) for c in labels)))
    headings = ["nominal" if c == "nominal" else f"{c[1:]} %" for c in labels]
    return Table(("quantity", *headings), tuple(rows),
                 caption=f"The layout over {loss_range.samples} draws of the survey readings "
                         f"(seed {loss_range.seed}, {loss_range.distribution} distribution)",
                 key="loss_range")


def obstructions_section(evaluation, *, loss_range=None, range_asked: bool = False) -> Section:
    """Every obstruction; the survey's readings and tolerances; the shade-loss band.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
    loss_range : layout.study.outlook.ShadeLossRange, keyword-only, optional
        The band over the survey's tolerances, when one was computed.
    range_asked : bool, keyword-only
        The user asked for a band: say why there is none when the project has no survey.
    """
    project = evaluation.project
    units = project.units
    unit = "ft" if units == "imperial" else "m"
    rows = []
    entries = []
    for label, source, ob, entry in obstruction_rows(project):
        place = _place(ob)
        base, top = _heights(ob)
        rows.append((label, _kind(ob), source,
                     DASH if place is None else f"{_length(place[0], units)}, "
                                                f"{_length(place[1], units)}",
                     DASH if base is None else _length(base, units),
                     DASH if top is None else _length(top, units)))
        if entry is not None:
            entries.append((label, entry))
    blocks = []
    if not rows:
        blocks.append(Paragraph("The project has no obstructions: nothing but the roof faces "
                                "themselves and the far horizon shades the modules."))
    else:
        blocks.append(Table(("obstruction", "kind", "from", f"position x, y [{unit}]",
                     f"base [{unit}]", f"top [{unit}]"), tuple(rows),
                            caption="Obstructions (site frame: x east, y north; heights "
                                    "above the site's zero)", align="lllrrr",
                            key="obstructions"))
    if entries:
        blocks.append(Paragraph("Surveyed obstructions stand where their nominal readings put "
                                "them; each reading carries a tolerance, the half-width of the "
                                "range a repeated reading would fall in."))
        for label, entry in entries:
            table, exact = _readings_table(label, entry, units)
            blocks.append(Paragraph(f"{label} ({entry.kind}): {METHOD_TEXT[entry.method]}.",
                                    style="note"))
            blocks.append(table)
            if exact:
                blocks.append(Paragraph(f"{label}: no tolerance was given for "
                                        f"{', '.join(exact)}; taken as exact, so the shade "
                                        f"loss band does not cover it.", style="note"))
    checks = survey_against_elevation(project)
    if checks:
        blocks.append(crosscheck_table(checks, units))
    if loss_range is not None:
        blocks.append(range_table(loss_range, evaluation.totals["energy_basis"]))
        blocks.extend(Paragraph(note, style="note") for note in loss_range.notes)
    elif range_asked:
        blocks.append(Paragraph("A shade loss band was asked for, but the project has no "
                                "surveyed obstruction whose tolerances could give one.",
                                style="note"))
    return Section("obstructions", "Obstructions", tuple(blocks), new_page=True)
