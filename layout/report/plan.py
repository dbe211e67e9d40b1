"""The report's plan: roof faces, setback and clearance zones, numbered modules, obstructions.

:func:`plan_drawing` gathers, from an evaluation, everything the plan shows as plain data in
the site frame [m] (x east, y north); :mod:`layout.report.drawing` draws it to scale with a
north arrow and a scale bar in the project's units. Modules are numbered in the order of the
evaluation's module table (the appendix lists each number with its module id) and coloured by
one of the table's figures on the planner's colour scale (:mod:`layout.report.colours`).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import shapely

from ..scene.provenance import PROVENANCE
from ..units import FOOT_M
from .blocks import Figure, Paragraph, Section, number
from .colours import figure_colours
from .options import PLAN_METRICS

__all__ = [
    "PLAN_WIDTH_MM",
    "PlanDrawing",
    "layout_section",
    "number_font",
    "obstruction_rows",
    "plan_drawing",
    "zone_category",
]

#: Width the plan is drawn at [mm] (fits A4 and Letter inside 15 mm margins).
PLAN_WIDTH_MM = 178.0


def zone_category(key: str) -> str:
    """Category of a usable-area zone key: setback, pathway, clearance or obstruction."""
    if key.endswith("setback"):
        return "setback"
    if key.startswith("pathway"):
        return "pathway"
    if key.endswith("clearance"):
        return "clearance"
    return "obstruction"


@dataclass(frozen=True)
class PlanDrawing:
    """What the report's plan shows, in the site frame [m].

    Attributes
    ----------
    faces : tuple of (str, numpy.ndarray)
        Face name and plan outline (n, 2) [m].
    zones : tuple of (str, shapely geometry)
        Zone category (:func:`zone_category`) and the zone in plan [m].
    modules : tuple of (int, str, numpy.ndarray, str or None)
        Number, module id, plan corners (4, 2) [m] and fill colour (None: no figure).
    removed : tuple of numpy.ndarray
        Plan corners (4, 2) of modules the user took out [m].
    obstructions : tuple of (str, bool, shapely geometry)
        Label, whether it is a tree, plan footprint [m].
    units : str
        ``"metric"`` or ``"imperial"``: the scale bar's unit.
    metric_label : str
        What the module colours show.
    vmin, vmax : float
        Ends of the colour scale (NaN when no module has a figure).
    numbered : bool
        Whether the modules' numbers fit inside them at :data:`PLAN_WIDTH_MM`.
    from_data : tuple of (str, shapely geometry)
        Name and plan outline [m] of each face and obstruction from elevation data, not
        surveyed (:data:`layout.scene.provenance.PROVENANCE`), outlined apart on the plan.
    """

    faces: tuple
    zones: tuple
    modules: tuple
    removed: tuple
    obstructions: tuple
    units: str
    metric_label: str
    vmin: float
    vmax: float
    numbered: bool = True
    from_data: tuple = ()

    @property
    def unit(self) -> tuple[str, float]:
        """The scale bar's unit name and its length [m]."""
        return ("ft", FOOT_M) if self.units == "imperial" else ("m", 1.0)

    def bounds(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of everything drawn [m]."""
        geoms = [shapely.Polygon(ring) for _, ring in self.faces]
        geoms += [footprint for _, _, footprint in self.obstructions]
        if not geoms:
            return (0.0, 0.0, 10.0, 10.0)
        return tuple(float(b) for b in shapely.total_bounds(geoms))


def number_font(drawing: PlanDrawing, *, width_in: float) -> float | None:
    """Font size [pt] of the modules' numbers on a plan ``width_in`` wide; None if none fit.

    The drawing spans its bounds plus 1 m on each side; a number fits when its digits, at
    about 0.65 of the font size each, fit across the module's shorter side.
    """
    x0, _, x1, _ = drawing.bounds()
    per_m = width_in * 72.0 * 0.98 / (x1 - x0 + 2.0)  # points of paper per metre
    sides = [np.linalg.norm(np.diff(np.vstack([c, c[:1]]), axis=0), axis=1)[:2].min()
             for _, _, c, _ in drawing.modules]
    if not sides:
        return 6.0
    font = float(np.clip(min(sides) * per_m * 0.3, 3.0, 7.0))
    digits = len(str(len(sides)))
    return font if min(sides) * per_m >= digits * font * 0.65 + 1.0 else None


def obstruction_rows(project) -> list[tuple[str, str, object, object]]:
    """Every obstruction of the scene with its label and where it came from.

    Returns
    -------
    list of (str, str, obstruction, SurveyEntry or None)
        Label, ``"entered"`` or ``"surveyed"``, the obstruction (surveyed ones as their
        nominal readings build them) and the survey entry it came from.
    """
    rows = []
    for i, ob in enumerate(project.obstructions):
        label = getattr(ob, "name", "") or f"{getattr(ob, 'kind', type(ob).__name__.lower())} {i}"
        rows.append((label, "entered", ob, None))
    built = project.scene_obstructions[len(project.obstructions):]
    for i, (entry, ob) in enumerate(zip(project.survey, built, strict=True)):
        label = getattr(ob, "name", "") or f"{entry.kind} {i + 1} (surveyed)"
        rows.append((label, "surveyed", ob, entry))
    return rows


def plan_drawing(evaluation, *, metric: str = "shade_loss_pct") -> PlanDrawing:
    """Collect the plan of an evaluation.

    Parameters
    ----------
    evaluation : layout.study.analysis.Evaluation
        Its project, fill, usable areas and module table.
    metric : str, keyword-only, default "shade_loss_pct"
        Column of the module table the modules are coloured by (a key of
        :data:`layout.report.options.PLAN_METRICS`).

    Returns
    -------
    PlanDrawing
    """
    project = evaluation.project
    by_name = {face.name: face for face in project.faces}
    faces = tuple((face.name, np.asarray(face.outline, dtype=float)) for face in project.faces)
    zones = []
    for name, area in evaluation.areas.items():
        face = by_name[name]
        for key, zone in area.zones.items():
            zones.append((zone_category(key), shapely.transform(zone, face.roof_to_plan)))
    values = evaluation.table[metric].to_numpy(dtype=float) if len(evaluation.table) \
        else np.zeros(0)
    colours = figure_colours(values) if len(values) else []
    modules = tuple((k + 1, m.id, np.asarray(m.corners_3d, dtype=float)[:, :2], colours[k])
                    for k, m in enumerate(evaluation.modules))
    removed = tuple(np.asarray(m.corners_3d, dtype=float)[:, :2]
                    for m in evaluation.layout.removed_modules)
    obstructions = tuple((label, type(ob).__name__ == "Tree", ob.footprint_polygon)
                         for label, _, ob, _ in obstruction_rows(project)
                         if hasattr(ob, "footprint_polygon"))
    from_data = project.outlines_noted(PROVENANCE)
    finite = values[np.isfinite(values)]
    low = float(finite.min()) if len(finite) else float("nan")
    high = float(finite.max()) if len(finite) else float("nan")
    drawing = PlanDrawing(faces=faces, zones=tuple(zones), modules=modules, removed=removed,
                          obstructions=obstructions, units=project.units,
                          metric_label=PLAN_METRICS[metric], vmin=low, vmax=high,
                          from_data=from_data)
    fits = number_font(drawing, width_in=PLAN_WIDTH_MM / 25.4) is not None
    return replace(drawing, numbered=fits)


def layout_section(evaluation, *, metric: str = "shade_loss_pct") -> Section:
    """Return the layout section: the plan and what it shows."""
    drawing = plan_drawing(evaluation, metric=metric)
    unit, _ = drawing.unit
    if drawing.modules:
        decimals = 0 if metric == "energy_kwh" else 1
        numbers = ("numbered as in the appendix" if drawing.numbered else "too small at this "
                   "scale to carry their numbers (the appendix lists them by row and column)")
        scale = (f"Modules are {numbers} and coloured by "
                 f"{drawing.metric_label}, from {number(drawing.vmin, decimals)} (lightest) to "
                 f"{number(drawing.vmax, decimals)} (darkest).")
    else:
        scale = "This layout has no modules: the plan shows the roof faces and zones only."
    caption = (f"Plan of the roof faces seen from above, north up; scale bar in {unit}. "
               "Hatched: setbacks, access pathways and clearances; grey: obstructions; dashed: "
               "modules taken out.")
    if drawing.from_data:
        caption += (f" Dotted umber outline: {PROVENANCE} ("
                    + ", ".join(name for name, _ in drawing.from_data) + ").")
    return Section("layout", "The layout", (
        Figure("plan", drawing, caption=caption, key="plan"),
        Paragraph(scale),
    ))
