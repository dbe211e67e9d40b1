"""The planner: one project, one analysis, the plan beside a side panel, files and cautions.

:class:`Planner` owns a :class:`layout.project.Project` and one :class:`layout.study.analysis.
Analysis` of it. Every gesture becomes a new project (projects never change in place): a
dropped obstruction marker, a click on a module, an accepted form. The planner hands it to
:meth:`layout.study.analysis.Analysis.update`, which recomputes only what the edit touched, and
redraws from :attr:`layout.study.analysis.Analysis.result`. Nothing here computes geometry or
physics of its own.

Side panel tabs
---------------
Module
    Module size and power, orientation, row mode, gaps, the setback preset and its values,
    and the refill; the module count, kWp and the rules in force are always shown.
Objects
    The obstruction form (edit, add, delete).
Survey
    Field readings typed one obstruction at a time, each with its tolerance, with the height
    the core computes and its range (:class:`widgets.survey_panel.SurveyPanel`); the list of
    surveyed obstructions; a CSV import. Surveyed obstructions stand on the plan with a
    hollow ring and are not dragged: a click on the ring opens their readings here.
Sky
    Sun paths and the skyline seen from the selected module, with its monthly figures.
Hours
    Shade loss by month and hour for the selected module or the whole layout.
Compare
    Portrait, landscape and mixed fills, each with and without its worst modules
    (:func:`layout.study.compare.compare_layouts`), as a table and a bar chart.
File
    Save and load the project; export the module table (CSV) and outlines (GeoJSON).

Loss range
----------
The **Loss range** button under the totals carries the tolerances of the survey readings to
the annual shade loss (:func:`layout.study.outlook.shade_loss_range`, run on the planner's own
analysis, so each draw ray-tests only the surveyed obstructions): the 5th to 95th percentile
band is shown beside the totals, and per module in the hover text and the selected module's
readout, with the number of draws and the seed. It is kept until the project changes (a change
of units alone keeps it).
"""

from __future__ import annotations

import html
import time
from dataclasses import replace
from pathlib import Path

import bqplot as bq
import ipywidgets as w
import numpy as np

from layout.errors import InputError
from layout.fill.clearance import (
    ClearanceRules,
    ifc_2015_residential,
    ifc_2021_residential,
    no_setbacks,
)
from layout.fill.faces import FILL_ORIENTATIONS
from layout.power.energy import scene_casters
from layout.project import FILE_SUFFIX, ProjectFileError, load_project, save_project
from layout.sky.sun import TYPICAL_YEAR
from layout.study.analysis import Analysis
from layout.study.compare import compare_layouts
from layout.study.outlook import DEFAULT_SAMPLES, percentile_label, shade_loss_range
from layout.units import INCH_M

from . import style
from .charts import HoursHeatMap
from .export import write_layout_geojson, write_module_table
from .forms import FieldRow, ObstructionForm, error_text, length_text, read_length
from .plan_view import PlanView, obstruction_anchor, obstruction_label, plan_scene
from .sky_chart import SkyChart
from .survey_panel import SurveyPanel
from .timeline import Timeline, roof_shadows

__all__ = [
    "CAUTIONS",
    "FIGURES",
    "SETBACK_PRESETS",
    "TAB_NAMES",
    "Planner",
    "band_text",
    "module_note",
    "snap_length",
    "totals_text",
]

#: The cautions shown in the app: short, calm, and always visible.
CAUTIONS = (
    "Setbacks and pathways are defaults: the authority having jurisdiction decides which fire "
    "code and local amendments apply.",
    "Wiring, rapid shutdown and interconnection are licensed electrical work; added roof load "
    "needs a structural review by a licensed person.",
    "Work on a roof only with fall protection; measure from the ground where you can.",
)

#: Setback presets offered in the Module tab (label → rules factory).
SETBACK_PRESETS = {
    "IFC 2021 residential": ifc_2021_residential,
    "IFC 2021 residential, sprinklered": lambda: ifc_2021_residential(sprinklered=True),
    "IFC 2015 residential": ifc_2015_residential,
    "no setbacks": no_setbacks,
}
_AS_IN_PROJECT = "as in the project"

#: Figures the modules can be coloured by: column of the per-module table → (name in the
#: menu, label on the colour bar, lower end of the scale or None for the smallest value shown).
FIGURES = {
    "shade_loss_pct": ("annual shade loss [%]", "shade loss %", 0.0),
    "tsrf_pct": ("TSRF [%]", "TSRF %", None),
    "energy_kwh": ("annual energy [kWh]", "kWh a year", None),
    "solar_access_pct": ("solar access [%]", "solar access %", None),
}

#: Side panel tabs, in order.
TAB_NAMES = ("Module", "Objects", "Survey", "Sky", "Hours", "Compare", "File")

#: Drag positions snap to this grid [m]: 1 cm, or a quarter inch in imperial projects.
SNAP_M = {"metric": 0.01, "imperial": INCH_M / 4}


def snap_length(metres: float, units: str) -> float:
    """Round a dragged position [m] to 1 cm (metric) or 1/4 in (imperial)."""
    step = SNAP_M.get(units, 0.01)
    return round(metres / step) * step


def totals_text(totals: dict) -> str:
    """Return the layout's annual figures as one line of HTML (from :attr:`Evaluation.totals`).

    Shade loss is shown to 0.01 %, TSRF to 0.1 %, energy to 1 kWh.
    """
    basis = html.escape(str(totals.get("energy_basis", "DC")))
    below = totals["modules_below_tsrf"]
    threshold = totals["tsrf_threshold_pct"]
    tsrf = totals["tsrf_pct"]
    tsrf_text = "–" if not np.isfinite(tsrf) else f"{tsrf:.1f}"
    return (
        f"<span style='font-size:14px;color:{style.INK}'>"
        f"<b>{totals['energy_kwh']:,.0f}</b> kWh a year ({basis}) · "
        f"shade loss <b class='eaveline-shade-loss'>{totals['shade_loss_pct']:.2f}</b> % · "
        f"mean TSRF <b>{tsrf_text}</b> %</span>"
        f"<span style='font-size:12px;color:#5d6b6a'> · {below} "
        f"{'module' if below == 1 else 'modules'} below {threshold:g} % TSRF "
        f"(thick outline)</span>")


def _band_columns(band) -> tuple[str, str]:
    """Labels of the lowest and highest percentile of a loss range: ``("p5", "p95")``."""
    return percentile_label(min(band.percentiles)), percentile_label(max(band.percentiles))


def module_note(module_id: str, row, band: tuple[float, float] | None = None) -> str:
    """Hover text of one module: its id and annual figures (a row of the module table).

    ``band`` is the module's shade loss range [%] over the survey tolerances (low, high),
    shown after its shade loss when given.
    """
    loss = f"shade loss {row.shade_loss_pct:.1f} %"
    if band is not None:
        loss += f" (range {band[0]:.1f} to {band[1]:.1f} %)"
    return f"{module_id}: {row.energy_kwh:.0f} kWh, {loss}, TSRF {row.tsrf_pct:.1f} %"


def band_text(band) -> str:
    """One line of HTML with a layout's shade loss range (a :class:`ShadeLossRange`).

    The band is the lowest to the highest percentile asked for (5th to 95th by default)
    around the nominal readings' loss, with the energy lost, the draws and the seed.
    """
    low, high = _band_columns(band)
    loss = band.totals.loc["shade_loss_pct"]
    lost = band.totals.loc["energy_lost_kwh"]
    seed = "none" if band.seed is None else str(band.seed)
    notes = "".join(f"<br>{html.escape(n)}" for n in band.notes)
    return (f"<span style='font-size:13px;color:{style.INK}'>Over the survey tolerances: "
            f"shade loss <b class='eaveline-band'>{loss[low]:.2f} to {loss[high]:.2f}</b> % "
            f"({low}–{high}) around {loss['nominal']:.2f} %; energy lost {lost[low]:,.1f} to "
            f"{lost[high]:,.1f} kWh a year</span>"
            f"<span style='font-size:12px;color:#5d6b6a'> · {band.samples} draws of the "
            f"readings, seed {seed}, {band.distribution} errors{notes}</span>")


def _html_lines(lines, *, colour: str = "#34403f") -> str:
    items = "".join(f"<li>{html.escape(line)}</li>" for line in lines)
    return f"<ul style='margin:2px 0 0 16px;padding:0;color:{colour};font-size:12px'>{items}</ul>"


class Planner(w.VBox):
    """The composite planner widget: plan, side panel, figures, timeline and cautions.

    Parameters
    ----------
    project : layout.project.Project
        The project to plan.
    path : str or pathlib.Path, optional
        File the project came from; the File tab saves there by default, and a relative
        weather file is read from its folder.

    Attributes
    ----------
    project : layout.project.Project
        The project shown now.
    analysis : layout.study.analysis.Analysis
        The one analysis of the project; every edit goes through its ``update``.
    array_layout : layout.fill.placed.Layout
        Its modules as the core placed them (``analysis.result.layout``).
    areas : dict of str to layout.fill.clearance.UsableArea
        Usable area of each array face.
    selected_id : str or None
        The module shown in the Sky and Hours tabs.
    last_recompute_s : float
        Seconds the last accepted edit took on the Python side (analysis and redraw).
    preview_interval_s : float
        Least time between two live previews while an obstruction is dragged [s]
        (:attr:`PREVIEW_INTERVAL_S` by default).

    Notes
    -----
    While an obstruction marker is dragged, the plan shows a live preview: from
    :attr:`preview_interval_s` into the drag and at most that often, the analysis is brought
    up to date for the marker's place and the module colours, footprints and totals follow
    (exact figures, marked as a preview in the status line). The project itself changes only
    at the drop; a drag that ends where it began puts the figures back.
    """

    #: Least time between two previews during a drag [s]: the kernel stays free most of
    #: the time, so the drop is handled at once.
    PREVIEW_INTERVAL_S = 0.25
    #: A recompute shows its stages once it has run this long [s]; a quicker one (a drag of
    #: a tree) only says "Recomputing…" and then "Ready", without a flicker of stages.
    PROGRESS_AFTER_S = 0.15

    def __init__(self, project, *, path=None):
        self.project = None
        self.analysis: Analysis | None = None
        self.array_layout = None
        self.areas: dict = {}
        self.selected_id: str | None = None
        self.last_recompute_s = 0.0
        self.last_timings: dict = {}
        self.preview_interval_s = self.PREVIEW_INTERVAL_S
        self.progress_after_s = self.PROGRESS_AFTER_S
        self._busy_since = 0.0
        self._preview_done = 0.0
        self._previewing = False
        self.compare_result = None
        self._compare_for = None
        self._base_dir = Path(path).expanduser().resolve().parent if path else None
        self._shadow_key = None
        self.shadows = None

        self.plan = PlanView()
        self.plan.on_obstruction_moved(self._obstruction_moved)
        self.plan.on_obstruction_drag_start(self._drag_started)
        self.plan.on_obstruction_dragging(self._obstruction_dragging)
        self.plan.on_obstruction_drag_end(self._drag_ended)
        self.plan.on_module_clicked(self._module_clicked)
        self.colour_by = w.Dropdown(
            options=[(menu, key) for key, (menu, _, _) in FIGURES.items()] + [("plain", "")],
            value="shade_loss_pct", description="Colour by",
            layout=w.Layout(width="270px"))
        self.colour_by.add_class("eaveline-colour-by")
        self.colour_by.observe(lambda _: self._paint(), names="value")
        self.click_mode = w.ToggleButtons(
            options=[("take out / put back", "toggle"), ("select", "select")], value="toggle",
            tooltip="What a click on a module does", style={"button_width": "130px"})
        self.click_mode.add_class("eaveline-click-mode")

        self.title = w.HTML()
        self.units_toggle = w.ToggleButtons(options=[("metres", "metric"), ("feet", "imperial")],
                                            value=project.units, tooltip="Units shown and typed",
                                            style={"button_width": "70px"})
        self.units_toggle.observe(self._units_changed, names="value")
        self.status = w.HTML()
        self.status.add_class("eaveline-status")
        self.progress = w.IntProgress(value=0, min=0, max=8, bar_style="",
                                      layout=w.Layout(width="160px", visibility="hidden"))
        self.progress.add_class("eaveline-progress")
        self.count_label = w.HTML()
        self.count_label.add_class("eaveline-count")
        self.totals_label = w.HTML()
        self.totals_label.add_class("eaveline-totals")
        self.caveat_label = w.HTML()
        self.caveat_label.add_class("eaveline-caveat")
        self.module_readout = w.HTML()
        self.module_readout.add_class("eaveline-module-readout")
        self.last_move = w.HTML()
        self.last_move.add_class("eaveline-last-move")
        self.timeline = Timeline(year=TYPICAL_YEAR)
        self.timeline.on_change(lambda _: self._draw_shadows())

        self.objects = ObstructionForm()
        self.objects.on_change(self._obstructions_edited)
        self.survey = SurveyPanel()
        self.survey.base_dir = self._base_dir
        self.survey.on_change(self._survey_edited)
        self.plan.on_surveyed_clicked(self._surveyed_clicked)
        self.loss_range = None
        self._range_key = None
        self.range_button = w.Button(description="Loss range", layout=w.Layout(width="auto"),
                                     tooltip="Draw the survey readings from their tolerances "
                                             "and evaluate each draw: the 5th to 95th "
                                             "percentile of the shade loss")
        self.range_button.add_class("eaveline-loss-range")
        self.range_button.on_click(lambda _: self.run_loss_range())
        self.range_samples = w.BoundedIntText(value=DEFAULT_SAMPLES, min=2, max=5000,
                                              description="Draws",
                                              layout=w.Layout(width="150px"))
        self.range_seed = w.IntText(value=0, description="Seed", layout=w.Layout(width="140px"))
        self.band_label = w.HTML()
        self.band_label.add_class("eaveline-loss-band")
        self._build_module_tab()
        self._build_sky_tab()
        self._build_hours_tab()
        self._build_compare_tab()
        self._build_file_tab(path)
        self.tabs = w.Tab(children=[self.module_tab, self.objects, self.survey, self.sky_tab,
                                    self.hours_tab, self.compare_tab, self.file_tab],
                          titles=TAB_NAMES,
                          layout=w.Layout(width="600px", min_width="480px"))
        self.tabs.add_class("eaveline-side")
        self.tabs.observe(self._tab_changed, names="selected_index")
        self.cautions = w.HTML(
            "<div style='color:#5d6b6a;font-size:12px;line-height:1.5'>"
            + "<br>".join(html.escape(c) for c in CAUTIONS) + "</div>")
        self.cautions.add_class("eaveline-cautions")

        figures = w.VBox([self.count_label, self.totals_label,
                          w.HBox([self.range_button, self.range_samples, self.range_seed],
                                 layout=w.Layout(align_items="center")),
                          self.band_label, self.module_readout,
                          self.caveat_label, self.last_move,
                          w.HBox([self.progress, self.status],
                                 layout=w.Layout(align_items="center"))],
                         layout=w.Layout(width=f"{self.plan.width_px}px"))
        tools = w.HBox([self.colour_by, w.Label("Click a module to"), self.click_mode],
                       layout=w.Layout(align_items="center"))
        super().__init__([
            w.HBox([self.title, self.units_toggle],
                   layout=w.Layout(justify_content="space-between", align_items="center")),
            w.HBox([w.VBox([tools, self.plan, self.timeline, figures]), self.tabs]),
            self.cautions,
        ])
        self.add_class("eaveline-planner")
        self.set_project(project)
        if self.array_layout is None:
            raise InputError("project", self.status.value)
        self.timeline.show_sun(None)

    # ================================================================= project changes
    def set_project(self, project, *, message: str = "") -> bool:
        """Show a new project: bring the analysis up to date and redraw from its result.

        Returns
        -------
        bool
            False when the core refused the project; the previous one then stays shown and
            the status line says why.
        """
        self._status("Recomputing…", busy=True)
        start = self._busy_since = time.perf_counter()
        try:
            if self.analysis is None:
                self.analysis = Analysis(project, base_dir=self._base_dir,
                                         progress=self._progress)
            else:
                self.analysis.update(project)
        except (InputError, ProjectFileError, OSError, ValueError) as err:
            self._progress_done()
            self._status(f"Not changed: {err}", error=True)
            return False
        self._progress_done()
        result = self.analysis.result
        previous = self.project
        self.project, self.array_layout, self.areas = project, result.layout, result.areas
        self._quiet_units(project.units)
        active = [m.id for m in result.modules]
        if self.selected_id not in active:
            table = result.table
            self.selected_id = (str(table["shade_loss_pct"].idxmax())
                                if len(table) and table["shade_loss_pct"].notna().any()
                                else (active[0] if active else None))
        self._set_module_figures(redraw=False)
        keep = (previous is not None and "fill" not in self.analysis.recomputed
                and previous.faces == project.faces)
        self.plan.draw(plan_scene(project, result.layout, result.areas), units=project.units,
                       keep_static=keep)
        self._show_figures()
        self._draw_shadows()
        self.objects.show(project.obstructions, units=project.units,
                          new_position=self._roof_middle())
        self.survey.show(project.survey, units=project.units)
        self._show_band()
        self._show_module_fields()
        self._refresh_tab()
        self.last_recompute_s = time.perf_counter() - start
        self.last_timings = dict(self.analysis.timings)
        self._status(message or f"Ready (updated in {self.last_recompute_s * 1000:.0f} ms).")
        return True

    @property
    def result(self):
        """The analysis's current :class:`layout.study.analysis.Evaluation`."""
        return self.analysis.result

    def _progress(self, stage: str, done: int, total: int) -> None:
        if time.perf_counter() - self._busy_since < self.progress_after_s:
            return  # quick so far: no stages to flicker past
        with self.progress.hold_sync():
            self.progress.max = total
            self.progress.value = done + 1
            self.progress.layout.visibility = "visible"
        self._status(f"Recomputing: {stage}…", busy=True)

    def _progress_done(self) -> None:
        self.progress.layout.visibility = "hidden"

    def _roof_middle(self) -> tuple[float, float]:
        point = self.project.buildings[0].footprint.centroid
        return float(point.x), float(point.y)

    def _status(self, text: str, *, busy: bool = False, error: bool = False) -> None:
        colour = "#8a2d2d" if error else ("#2b7c79" if busy else "#5d6b6a")
        self.status.value = (f"<span style='color:{colour};font-size:12px'>"
                             f"{html.escape(text)}</span>")

    def _set_module_figures(self, *, redraw: bool = True) -> None:
        result = self.analysis.result
        table = result.table
        key = self.colour_by.value
        values = label = vmin = None
        if key and len(table):
            _, label, vmin = FIGURES[key]
            values = table[key]
        threshold = self.project.energy.tsrf_threshold_pct
        flagged = table.index[table["tsrf_pct"] < threshold] if len(table) else []
        bands = self._module_bands()
        notes = {mid: module_note(mid, row, bands.get(mid)) for mid, row in zip(
            table.index, table.itertuples(index=False), strict=True)}
        self.plan.set_module_figures(values, label=label or "", vmin=vmin, flagged=flagged,
                                     notes=notes, selected=self.selected_id, redraw=redraw)

    def _paint(self) -> None:
        if self.analysis is not None:
            self._set_module_figures()

    def _show_figures(self) -> None:
        p, layout = self.project, self.array_layout
        result = self.analysis.result
        name = p.name or "untitled project"
        self.title.value = f"<b style='font-size:15px;color:#34403f'>{html.escape(name)}</b>"
        self.count_label.value = (
            f"<span style='font-size:14px;color:#34403f'><b>{layout.count}</b> modules · "
            f"<b>{layout.kwp(p.module):.2f}</b> kWp</span>")
        self.totals_label.value = totals_text(result.totals)
        caveat = result.weather.caveat if p.energy.weather_file is None else ""
        self.caveat_label.value = ("" if not caveat else
                                   f"<div style='font-size:11px;color:#5d6b6a;max-width:620px'>"
                                   f"{html.escape(caveat)}</div>")
        rules = [n for n in layout.notes if n.startswith("ridge setback")]
        others = [n for n in layout.notes if not n.startswith("ridge setback")]
        self.rule_label.value = (
            f"<div style='font-size:13px;color:#34403f'><b>{layout.count}</b> modules · "
            f"<b>{layout.kwp(p.module):.2f}</b> kWp · {html.escape(p.clearance.name)}</div>"
            + _html_lines(rules or ["no ridge setback applies to these faces"])
            + (_html_lines(others, colour="#5d6b6a") if others else ""))
        self._show_selected()

    def _show_selected(self) -> None:
        table = self.analysis.result.table
        if self.selected_id is None or self.selected_id not in table.index:
            self.module_readout.value = ""
            return
        r = table.loc[self.selected_id]
        band = self._module_bands().get(self.selected_id)
        band_part = ("" if band is None else
                     f" <span class='eaveline-module-band'>(range {band[0]:.2f} to "
                     f"{band[1]:.2f} %)</span>")
        self.module_readout.value = (
            f"<span style='font-size:12px;color:{style.INK}'>Selected module "
            f"<b>{html.escape(self.selected_id)}</b> (diamond): {r.energy_kwh:.0f} kWh · "
            f"shade loss {r.shade_loss_pct:.2f} %{band_part} · solar access "
            f"{r.solar_access_pct:.1f} % · TOF {r.tof_pct:.1f} % · TSRF {r.tsrf_pct:.1f} %"
            f"</span>")

    def select_module(self, module_id: str) -> None:
        """Show one active module in the Sky and Hours tabs and mark it on the plan."""
        if module_id not in self.analysis.result.table.index:
            raise InputError("module_id", "is not an active module", value=module_id)
        self.selected_id = module_id
        self._set_module_figures()
        self._show_selected()
        self._refresh_tab()

    def show_tab(self, name: str) -> None:
        """Open a side-panel tab by its name (one of :data:`TAB_NAMES`)."""
        self.tabs.selected_index = TAB_NAMES.index(name)

    # ----------------------------------------------------------------- gestures
    def _moved_project(self, index: int, x_m: float, y_m: float):
        """Return the project with obstruction ``index`` moved to put its marker at (x, y) [m]."""
        units = self.project.units
        x, y = snap_length(x_m, units), snap_length(y_m, units)
        old = self.project.obstructions[index]
        ax, ay = obstruction_anchor(old)
        obstructions = list(self.project.obstructions)
        obstructions[index] = old.translated(x - ax, y - ay)
        place = f"x = {length_text(x, units)}, y = {length_text(y, units)}"
        return (self.project.with_changes(obstructions=tuple(obstructions)),
                obstruction_label(old, index), place)

    def _obstruction_dragging(self, index: int, x_m: float, y_m: float) -> None:
        if time.perf_counter() - self._preview_done < self.preview_interval_s \
                or not 0 <= index < len(self.project.obstructions):
            return
        try:
            preview, label, place = self._moved_project(index, x_m, y_m)
            self._busy_since = time.perf_counter()
            self.analysis.update(preview)
        except (InputError, ProjectFileError, OSError, ValueError):
            self._progress_done()
            return  # the analysis keeps its last result; the drop will say what is wrong
        self._progress_done()
        result = self.analysis.result
        self._previewing = True
        try:
            if "fill" not in self.analysis.recomputed:  # same modules: recolour them
                self._set_module_figures(redraw=False)
                self.plan.draw(plan_scene(preview, result.layout, result.areas),
                               units=preview.units, preview=True)
            self.totals_label.value = totals_text(result.totals)
            self._show_selected()
        finally:
            self._previewing = False
        self._status(f"Preview with {label} at {place}: drop it to keep it there.",
                     busy=True)
        self._preview_done = time.perf_counter()

    def _drag_started(self) -> None:
        # the first preview comes one interval into the drag: a quick drag goes straight to
        # its drop, with the kernel free
        self._preview_done = time.perf_counter()

    def _drag_ended(self) -> None:
        if self.analysis is not None and self.analysis.project is not self.project:
            # a preview was shown and no drop moved the obstruction: show the project again
            self.set_project(self.project, message="The obstruction stays where it was.")

    def _obstruction_moved(self, index: int, x_m: float, y_m: float) -> None:
        project, label, place = self._moved_project(index, x_m, y_m)
        text = f"{label} moved to {place}"
        if self.set_project(project):
            self.last_move.value = (f"<span style='font-size:12px;color:#5d6b6a'>"
                                    f"{html.escape(text)}</span>")
        else:  # put the marker back where the project still has it
            self.plan.draw(plan_scene(self.project, self.array_layout, self.areas),
                           units=self.project.units)

    def _module_clicked(self, module_id: str) -> None:
        if self.click_mode.value == "select":
            if module_id in self.analysis.result.table.index:
                self.select_module(module_id)
            else:
                self._status(f"Module {module_id} is taken out; put it back to see its "
                             "figures.")
            return
        module = self.array_layout.module(module_id)
        taken_out = self.array_layout.is_removed(module)
        current = self.array_layout
        edited = current.restore(module_id) if taken_out else current.remove(module_id)
        verb = "put back" if taken_out else "taken out"
        self.set_project(self.project.with_changes(removed=edited.removed),
                         message=f"Module {module_id} {verb}.")

    def _obstructions_edited(self, obstructions, index) -> None:
        if self.set_project(self.project.with_changes(obstructions=tuple(obstructions))):
            self.objects.show(self.project.obstructions, units=self.project.units, index=index,
                              new_position=self._roof_middle())

    def _survey_edited(self, entries, index) -> bool:
        try:
            project = self.project.with_changes(survey=tuple(entries))
        except (InputError, ProjectFileError) as err:
            self._status(f"Survey not changed: {err}", error=True)
            return False
        count = len(project.survey)
        noun = "obstruction" if count == 1 else "obstructions"
        if not self.set_project(project, message=f"Survey updated: {count} surveyed {noun}."):
            return False
        self.survey.show(self.project.survey, units=self.project.units, index=index)
        return True

    def _surveyed_clicked(self, index: int) -> None:
        self.show_tab("Survey")
        self.survey.select(index)

    # ----------------------------------------------------------------- loss range
    @staticmethod
    def _range_key_of(project) -> tuple:
        """Return what a loss range depends on: all but the units, name and notes."""
        return (project.site, project.buildings, project.module, project.clearance,
                project.fill, project.array_faces, project.obstructions, project.survey,
                project.removed, project.pathways, project.energy)

    def _range_current(self) -> bool:
        return self.loss_range is not None and self._range_key == self._range_key_of(
            self.project)

    def _module_bands(self) -> dict:
        """Shade loss range [%] (low, high) per module id, when the loss range is current."""
        if self._previewing or not self._range_current():
            return {}
        low, high = _band_columns(self.loss_range)
        modules = self.loss_range.modules
        return {mid: (float(a), float(b)) for mid, a, b in zip(
            modules.index, modules[f"shade_loss_pct_{low}"],
            modules[f"shade_loss_pct_{high}"], strict=True) if np.isfinite(a)}

    def _show_band(self) -> None:
        p = self.project
        self.range_button.disabled = not p.survey
        if self._range_current():
            self.band_label.value = band_text(self.loss_range)
        elif self.loss_range is not None and p.survey:
            self.band_label.value = (
                "<span style='font-size:12px;color:#2b7c79'>The project changed since the "
                "loss range: press <b>Loss range</b> to draw the readings again.</span>")
        elif p.survey:
            self.band_label.value = (
                "<span style='font-size:12px;color:#5d6b6a'>Press <b>Loss range</b> for the "
                "5th to 95th percentile of the shade loss over the survey tolerances.</span>")
        else:
            self.band_label.value = (
                "<span style='font-size:12px;color:#5d6b6a'>A loss range needs surveyed "
                "obstructions (Survey tab).</span>")

    def run_loss_range(self, *, samples: int | None = None, seed: int | None = ...):
        """Carry the survey tolerances to the shade loss and show the band.

        Runs :func:`layout.study.outlook.shade_loss_range` on the planner's analysis (it is left
        holding the project shown), with the progress line counting the draws.

        Parameters
        ----------
        samples : int, keyword-only, optional
            Draws of the readings, at least 2; default the "Draws" box.
        seed : int or None, keyword-only, optional
            Seed of the generator; default the "Seed" box.

        Returns
        -------
        layout.study.outlook.ShadeLossRange or None
            None when the project has no survey or the core refused.
        """
        p = self.project
        if not p.survey:
            self._show_band()
            self._status("A loss range needs surveyed obstructions (Survey tab).")
            return None
        samples = self.range_samples.value if samples is None else samples
        seed = self.range_seed.value if seed is ... else seed
        def progress(done: int, total: int) -> None:
            with self.progress.hold_sync():
                self.progress.max = total
                self.progress.value = done + 1
                self.progress.layout.visibility = "visible"
            what = f"draw {done + 1} of {total - 1}" if done < total - 1 else "the nominal readings"
            self._status(f"Loss range: {what}…", busy=True)

        start = time.perf_counter()
        try:
            band = shade_loss_range(p, samples=samples, seed=seed, analysis=self.analysis,
                                    progress=progress)
        except (InputError, ProjectFileError, OSError, ValueError) as err:
            self.analysis.update(p)  # back to the project shown
            self._progress_done()
            self._status(f"No loss range: {err}", error=True)
            return None
        self._progress_done()
        self.loss_range, self._range_key = band, self._range_key_of(p)
        self._show_band()
        self._set_module_figures()
        self._show_selected()
        self._status(f"Loss range over {band.samples} draws (seed {band.seed}) in "
                     f"{time.perf_counter() - start:.1f} s.")
        return band

    def _units_changed(self, change) -> None:
        if self.project is not None and change["new"] != self.project.units:
            shown = "feet and inches" if change["new"] == "imperial" else "metres"
            self.set_project(self.project.with_changes(units=change["new"]),
                             message=f"Lengths now shown and typed in {shown}.")

    def show_module_figure(self, values=None, *, label: str = "") -> None:
        """Colour the modules by any per-module figure (a Series by module id), or clear it.

        The next edit colours them again by the figure chosen in "Colour by".
        """
        self.plan.show_module_values(values, label=label)

    # ----------------------------------------------------------------- timeline
    def _draw_shadows(self) -> None:
        moment = self.timeline.moment
        if moment is None:
            if self.shadows is not None:
                self.shadows, self._shadow_key = None, None
                self.plan.show_shadows(None)
                self.timeline.show_sun(None)
            return
        p = self.project
        key = (moment, p.site, p.faces, p.obstructions, p.survey)
        if key == self._shadow_key:
            return
        when = moment.tz_localize(p.site.timezone)
        self.shadows = roof_shadows(p, when)
        self._shadow_key = key
        self.plan.show_shadows(self.shadows.outline)
        self.timeline.show_sun(self.shadows)

    # ================================================================= Sky and Hours tabs
    def _build_sky_tab(self) -> None:
        self.sky_module = w.Dropdown(description="Module", layout=w.Layout(width="300px"))
        self.sky_module.observe(self._sky_module_chosen, names="value")
        self.sky_chart = SkyChart(width_px=400, height_px=300)
        self.sky_tab = w.VBox([
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>Choose a module here, or switch "
                   "clicks to <i>select</i> and click it on the plan.</div>"),
            self.sky_module, self.sky_chart])

    def _build_hours_tab(self) -> None:
        self.hours_scope = w.ToggleButtons(options=[("selected module", "module"),
                                                    ("whole layout", "layout")],
                                           value="module", style={"button_width": "120px"})
        self.hours_scope.observe(lambda _: self._refresh_tab(), names="value")
        self.heat_map = HoursHeatMap()
        self.hours_tab = w.VBox([self.hours_scope, self.heat_map])

    def _sky_module_chosen(self, change) -> None:
        if self._quiet_sky or change["new"] is None or change["new"] == self.selected_id:
            return
        self.select_module(change["new"])

    _quiet_sky = False

    def _sync_module_choice(self) -> None:
        ids = list(self.analysis.result.table.index)
        self._quiet_sky = True
        try:
            if list(self.sky_module.options) != ids:
                self.sky_module.options = ids
            self.sky_module.value = self.selected_id if self.selected_id in ids else None
        finally:
            self._quiet_sky = False

    def _refresh_tab(self, *, opened: bool = False) -> None:
        index = self.tabs.selected_index
        name = TAB_NAMES[index] if index is not None else ""
        if name == "Sky":
            self._show_sky()
        elif name == "Hours":
            self._show_hours()
        elif name == "Compare":
            if opened:
                self._run_compare()
            elif self._compare_for is not self.project:  # a second or more: on request only
                self.compare_note.value = (
                    "<span style='font-size:12px;color:#2b7c79'>The project changed: press "
                    "<b>Compare again</b> to refill and evaluate every option.</span>")

    def _show_sky(self) -> None:
        self._sync_module_choice()
        result = self.analysis.result
        if self.selected_id is None:
            return
        module = next(m for m in result.modules if m.id == self.selected_id)
        self.sky_chart.show(site=self.project.site, casters=scene_casters(self.project),
                            point=module.centre_3d, module_id=module.id,
                            monthly=result.module_monthly(module.id),
                            year=int(result.weather.data.index[0].year),
                            basis=result.table.attrs.get("energy_basis", "DC"))

    def _show_hours(self) -> None:
        result = self.analysis.result
        if self.hours_scope.value == "module" and self.selected_id is not None:
            self.heat_map.show(result.module_month_hour(self.selected_id),
                               what=f"module {self.selected_id}")
        else:
            self.heat_map.show(result.month_hour, what="the whole layout")

    # ================================================================= Module tab
    def _build_module_tab(self) -> None:
        def text():
            return w.Text(continuous_update=False)

        self.module_rows = {
            "length_m": FieldRow("length_m", "Module long side", text()),
            "width_m": FieldRow("width_m", "Module short side", text()),
            "power_w": FieldRow("power_w", "Power at STC [W]", text()),
            "gap_along_eave_m": FieldRow("gap_along_eave_m", "Gap in a row", text()),
            "gap_up_slope_m": FieldRow("gap_up_slope_m", "Gap between rows", text()),
        }
        self.orientation = w.ToggleButtons(options=list(FILL_ORIENTATIONS),
                                           style={"button_width": "90px"})
        self.rows_mode = w.ToggleButtons(options=[("one grid", "grid"),
                                                  ("sliding rows", "sliding")],
                                         style={"button_width": "110px"})
        self.preset = w.Dropdown(options=[_AS_IN_PROJECT, *SETBACK_PRESETS],
                                 value=_AS_IN_PROJECT, description="Setbacks",
                                 layout=w.Layout(width="360px"))
        self.preset.observe(self._preset_chosen, names="value")
        self.setback_rows = {
            "ridge": FieldRow("ridge", "Ridge", text()),
            "ridge_setback_high_m": FieldRow("ridge_setback_high_m", "Ridge, large array",
                                             text()),
            "eave": FieldRow("eave", "Eave", text()),
            "rake": FieldRow("rake", "Rake", text()),
            "hip": FieldRow("hip", "Hip", text()),
            "valley": FieldRow("valley", "Valley", text()),
            "obstruction_clearance_m": FieldRow("obstruction_clearance_m",
                                                "Ring around objects", text()),
            "pathway_width_m": FieldRow("pathway_width_m", "Pathway width", text()),
            "pathway_count": FieldRow("pathway_count", "Pathways needed", text()),
        }
        self.refill_button = w.Button(description="Refill", button_style="",
                                      tooltip="Fill the roof again with these values")
        self.refill_button.add_class("eaveline-refill")
        self.refill_button.on_click(lambda _: self.refill())
        self.rule_label = w.HTML()
        self.rule_label.add_class("eaveline-rules")
        self.module_message = w.HTML()
        self._quiet_fields = False
        for row in [*self.module_rows.values(), *self.setback_rows.values()]:
            row.input.observe(self._field_edited, names="value")
        self.orientation.observe(self._field_edited, names="value")
        self.rows_mode.observe(self._field_edited, names="value")
        heading = "<div style='margin-top:8px;color:#34403f'><b>{}</b></div>".format
        self.module_tab = w.VBox([
            self.rule_label,
            w.HTML(heading("Module")), *self.module_rows.values(),
            w.HBox([w.Label("Orientation", layout=w.Layout(width="150px")), self.orientation]),
            w.HBox([w.Label("Rows", layout=w.Layout(width="150px")), self.rows_mode]),
            w.HTML(heading("Setbacks and clearances (on the roof surface)")),
            self.preset, *self.setback_rows.values(),
            w.HBox([self.refill_button, self.module_message],
                   layout=w.Layout(align_items="center")),
        ])

    def _field_edited(self, change) -> None:
        if not self._quiet_fields:
            self.refill()

    def _show_module_fields(self, rules: ClearanceRules | None = None) -> None:
        p = self.project
        rules = rules or p.clearance
        units = p.units
        values = {
            "length_m": length_text(p.module.length_m, units),
            "width_m": length_text(p.module.width_m, units),
            "power_w": f"{p.module.power_w:g}",
            "gap_along_eave_m": length_text(p.fill.gap_along_eave_m, units),
            "gap_up_slope_m": length_text(p.fill.gap_up_slope_m, units),
        }
        setbacks = {kind: length_text(rules.edge_setback_m[kind], units)
                    for kind in ("ridge", "eave", "rake", "hip", "valley")}
        setbacks["ridge_setback_high_m"] = ("" if rules.ridge_setback_high_m is None
                                            else length_text(rules.ridge_setback_high_m, units))
        setbacks["obstruction_clearance_m"] = length_text(rules.obstruction_clearance_m, units)
        setbacks["pathway_width_m"] = length_text(rules.pathway_width_m, units)
        setbacks["pathway_count"] = str(rules.pathway_count)
        self._quiet_fields = True
        try:
            for key, value in values.items():
                self.module_rows[key].input.value = value
                self.module_rows[key].set_error(None)
            for key, value in setbacks.items():
                self.setback_rows[key].input.value = value
                self.setback_rows[key].set_error(None)
            self.orientation.value = p.fill.orientation
            self.rows_mode.value = p.fill.rows
        finally:
            self._quiet_fields = False
        self._base_rules = rules
        self._shown_module = dict(values)
        self._shown_setbacks = dict(setbacks)

    def _preset_chosen(self, change) -> None:
        if change["new"] == _AS_IN_PROJECT:
            self._show_module_fields()
        else:
            self._show_module_fields(SETBACK_PRESETS[change["new"]]())
        self.refill()

    def _length(self, rows, shown, key, exact):
        text = rows[key].input.value
        if text == shown[key]:
            return exact
        return read_length(text, self.project.units, field=key)

    def refill(self) -> bool:
        """Read the Module tab, and refill when every field is valid.

        Returns
        -------
        bool
            True when the project changed or was already as typed.
        """
        p = self.project
        rows, setback_rows = self.module_rows, self.setback_rows
        for row in [*rows.values(), *setback_rows.values()]:
            row.set_error(None)
        bad = False

        def attempt(row_map, key, make):
            nonlocal bad
            try:
                return make()
            except InputError as err:
                target = row_map.get(err.field.split(".")[-1], row_map.get(key))
                target.set_error(error_text(err))
                bad = True
                return None

        sm, ss = self._shown_module, self._shown_setbacks
        base = self._base_rules
        length = attempt(rows, "length_m",
                         lambda: self._length(rows, sm, "length_m", p.module.length_m))
        width = attempt(rows, "width_m",
                        lambda: self._length(rows, sm, "width_m", p.module.width_m))
        power = attempt(rows, "power_w", lambda: _number(rows["power_w"].input.value,
                                                         "power_w"))
        gap_u = attempt(rows, "gap_along_eave_m", lambda: self._length(
            rows, sm, "gap_along_eave_m", p.fill.gap_along_eave_m))
        gap_v = attempt(rows, "gap_up_slope_m", lambda: self._length(
            rows, sm, "gap_up_slope_m", p.fill.gap_up_slope_m))
        edge = {}
        for kind in ("ridge", "eave", "rake", "hip", "valley"):
            edge[kind] = attempt(setback_rows, kind, lambda k=kind: self._length(
                setback_rows, ss, k, base.edge_setback_m[k]))
        high_text = setback_rows["ridge_setback_high_m"].input.value.strip()
        high = None if not high_text else attempt(
            setback_rows, "ridge_setback_high_m", lambda: self._length(
                setback_rows, ss, "ridge_setback_high_m", base.ridge_setback_high_m))
        ring = attempt(setback_rows, "obstruction_clearance_m", lambda: self._length(
            setback_rows, ss, "obstruction_clearance_m", base.obstruction_clearance_m))
        path_w = attempt(setback_rows, "pathway_width_m", lambda: self._length(
            setback_rows, ss, "pathway_width_m", base.pathway_width_m))
        path_n = attempt(setback_rows, "pathway_count", lambda: _whole(
            setback_rows["pathway_count"].input.value, "pathway_count"))
        if bad:
            self.module_message.value = ""
            return False
        module = attempt(rows, "length_m", lambda: replace(
            p.module, length_m=length, width_m=width, power_w=power))
        fill = attempt(rows, "gap_along_eave_m", lambda: replace(
            p.fill, gap_along_eave_m=gap_u, gap_up_slope_m=gap_v,
            orientation=self.orientation.value, rows=self.rows_mode.value))
        setbacks = dict(base.edge_setback_m)
        setbacks.update(edge)
        rules = attempt(setback_rows, "ridge", lambda: replace(
            base, edge_setback_m=setbacks, ridge_setback_high_m=high,
            obstruction_clearance_m=ring, pathway_width_m=path_w, pathway_count=path_n))
        if bad:
            return False
        if rules != base and not rules.name.endswith("(edited)"):
            rules = replace(rules, name=f"{rules.name} (edited)")
        if rules == p.clearance and module == p.module and fill == p.fill:
            return True
        return self.set_project(p.with_changes(module=module, fill=fill, clearance=rules),
                                message="Refilled with the Module tab's values.")

    # ================================================================= Compare tab
    def _build_compare_tab(self) -> None:
        self.compare_html = w.HTML()
        self.compare_html.add_class("eaveline-compare-table")
        x = bq.OrdinalScale()
        y = bq.LinearScale(min=0.0)
        self.compare_bars = bq.Bars(x=[], y=[], scales={"x": x, "y": y},
                                    colors=[style.FIGURE_SCALE[4]], padding=0.25)
        self.compare_figure = bq.Figure(
            marks=[self.compare_bars],
            axes=[bq.Axis(scale=x, label="layout", tick_rotate=-25),
                  bq.Axis(scale=y, side="left", orientation="vertical",
                          label="annual energy [kWh]", tick_format=",.0f")],
            fig_margin={"top": 16, "bottom": 96, "left": 72, "right": 16},
            display_toolbar=False,
            layout=w.Layout(width="560px", height="300px"))
        self.compare_figure.add_class("eaveline-compare-chart")
        self.compare_button = w.Button(description="Compare again")
        self.compare_button.on_click(lambda _: self._run_compare(force=True))
        self.compare_note = w.HTML()
        self.compare_tab = w.VBox([
            w.HTML("<div style='font-size:12px;color:#5d6b6a'>The same faces, setbacks, gaps "
                   "and removals filled in each orientation, each also without its modules "
                   "below the TSRF threshold; every option evaluated like the plan.</div>"),
            self.compare_html, self.compare_figure,
            w.HBox([self.compare_button, self.compare_note],
                   layout=w.Layout(align_items="center"))])

    def _tab_changed(self, change) -> None:
        self._refresh_tab(opened=True)

    def _run_compare(self, *, force: bool = False) -> None:
        if self._compare_for is self.project and not force:
            return
        self._status("Filling and evaluating every orientation for the comparison…", busy=True)
        try:
            comparison = compare_layouts(self.project, analysis=self.analysis,
                                         progress=self._progress)
        except InputError as err:
            self._progress_done()
            self._status(f"Comparison not made: {err}", error=True)
            return
        finally:
            self._progress_done()
        table = comparison.table
        self._compare_for = self.project
        current = self.project.fill.orientation
        rows = []
        for option, r in table.iterrows():
            weight = "bold" if option == current else "normal"
            rows.append(
                f"<tr style='font-weight:{weight}'><td>{html.escape(option)}</td>"
                f"<td style='text-align:right'>{int(r.modules)}</td>"
                f"<td style='text-align:right'>{r.power_kwp:.2f}</td>"
                f"<td style='text-align:right'>{r.energy_kwh:,.0f}</td>"
                f"<td style='text-align:right'>{r.specific_yield_kwh_per_kwp:,.0f}</td>"
                f"<td style='text-align:right'>{r.shade_loss_pct:.2f}</td>"
                f"<td style='text-align:right'>{r.tsrf_mean_pct:.1f}</td>"
                f"<td style='text-align:right'>{int(r.dropped)}</td></tr>")
        basis = html.escape(str(table.attrs.get("energy_basis", "DC")))
        self.compare_html.value = (
            "<table style='font-size:12px;border-collapse:collapse'>"
            "<tr><th style='text-align:left'>layout</th><th>modules</th><th>kWp</th>"
            f"<th>kWh a year ({basis})</th><th>kWh/kWp</th><th>shade loss %</th>"
            "<th>mean TSRF %</th><th>dropped</th></tr>" + "".join(rows) + "</table>")
        with self.compare_bars.hold_sync():
            self.compare_bars.x = list(table.index)
            self.compare_bars.y = table["energy_kwh"].astype(float).tolist()
        threshold = comparison.limits.get("min_tsrf_pct")
        self.compare_note.value = (
            f"<span style='font-size:11px;color:#5d6b6a'>Dropped: modules below "
            f"{threshold:g} % TSRF. {html.escape(comparison.caveat)}</span>"
            if threshold is not None else "")
        self.compare_result = table
        self.comparison = comparison
        self._status("Ready.")

    # ================================================================= File tab
    def _build_file_tab(self, path) -> None:
        default = Path(path) if path else Path.home() / "eaveline" / f"project{FILE_SUFFIX}"
        self.project_path = w.Text(value=str(default), description="Project file",
                                   layout=w.Layout(width="500px"))
        self.save_button = w.Button(description="Save")
        self.load_button = w.Button(description="Load")
        self.save_button.on_click(lambda _: self.save())
        self.load_button.on_click(lambda _: self.load())
        base = default.name[: -len(FILE_SUFFIX)] if default.name.endswith(FILE_SUFFIX) \
            else default.stem
        self.export_path = w.Text(value=str(default.with_name(f"{base}-modules")),
                                  description="Export to", layout=w.Layout(width="500px"))
        self.csv_button = w.Button(description="Module table (CSV)",
                                   layout=w.Layout(width="auto"))
        self.geojson_button = w.Button(description="Outlines (GeoJSON)",
                                       layout=w.Layout(width="auto"))
        self.csv_button.on_click(lambda _: self.export_csv())
        self.geojson_button.on_click(lambda _: self.export_geojson())
        self.file_message = w.HTML()
        self.file_tab = w.VBox([
            self.project_path, w.HBox([self.save_button, self.load_button]),
            w.HTML("<div style='font-size:12px;color:#5d6b6a;margin-top:8px'>Exports use the "
                   "site frame in metres (x east, y north, z up).</div>"),
            self.export_path, w.HBox([self.csv_button, self.geojson_button]),
            self.file_message])

    def _file_note(self, text: str, *, error: bool = False) -> None:
        colour = "#8a2d2d" if error else "#34403f"
        self.file_message.value = (f"<pre style='font-size:12px;color:{colour};"
                                   f"white-space:pre-wrap'>{html.escape(text)}</pre>")

    def save(self) -> Path | None:
        """Save the project to the path in the File tab; return the path written."""
        try:
            written = save_project(self.project, self.project_path.value)
        except OSError as err:
            self._file_note(f"Not saved: {err}", error=True)
            return None
        self.project_path.value = str(written)
        self._file_note(f"Saved {written}")
        return written

    def load(self) -> bool:
        """Load the project named in the File tab; on problems keep the current one."""
        try:
            project = load_project(self.project_path.value)
        except ProjectFileError as err:
            self._file_note(str(err), error=True)
            return False
        if not self.set_project(project, message=f"Loaded {self.project_path.value}"):
            self._file_note("The file was read but the roof cannot be filled; see the status "
                            "line.", error=True)
            return False
        self._file_note(f"Loaded {self.project_path.value}")
        return True

    def _quiet_units(self, units: str) -> None:
        self.units_toggle.unobserve(self._units_changed, names="value")
        self.units_toggle.value = units
        self.units_toggle.observe(self._units_changed, names="value")

    def export_csv(self) -> Path:
        """Write the module table next to the export path; return the path."""
        target = write_module_table(self.array_layout, self.export_path.value)
        self._file_note(f"Wrote {target}")
        return target

    def export_geojson(self) -> Path:
        """Write the module outlines as GeoJSON; return the path."""
        target = write_layout_geojson(self.array_layout, self.export_path.value,
                                      name=self.project.name)
        self._file_note(f"Wrote {target}")
        return target


def _number(text: str, field: str) -> float:
    try:
        return float(str(text).strip())
    except ValueError:
        raise InputError(field, "must be a number", value=text) from None


def _whole(text: str, field: str) -> int:
    number = _number(text, field)
    if not number.is_integer() or number < 0:
        raise InputError(field, "must be a whole number", value=text, allowed="0, 1, 2, ...")
    return int(number)
