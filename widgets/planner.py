"""The planner: one project, one analysis, the plan beside a side panel, files and cautions.

:class:`Planner` owns a :class:`layout.project.Project` and one :class:`layout.study.analysis.
Analysis` of it. Every gesture becomes a new project (projects never change in place): a
dropped obstruction marker, a click on a module, an accepted form. The planner hands it to
:meth:`layout.study.analysis.Analysis.update`, which recomputes only what the edit touched, and
redraws from :attr:`layout.study.analysis.Analysis.result`. Nothing here computes geometry or
physics of its own.

The planner composes the plan, the timeline and one widget per side panel tab, each in its
own module; it hands them the project and the analysis's result, and takes back their edits
as callbacks. It handles the gestures on the plan itself (drags of obstruction markers, clicks
on modules) and keeps what is computed on request: the comparison and the loss range.

Side panel tabs
---------------
Module
    Module size and power, orientation, row mode, gaps, the setback preset and its values,
    and the refill; the module count, kWp and the rules in force are always shown
    (:class:`widgets.module_panel.ModulePanel`).
Objects
    The obstruction form (edit, add, delete; :class:`widgets.forms.ObstructionForm`).
Survey
    Field readings typed one obstruction at a time, each with its tolerance, with the height
    the core computes and its range (:class:`widgets.survey_panel.SurveyPanel`); the list of
    surveyed obstructions; a CSV import. Surveyed obstructions stand on the plan with a
    hollow ring and are not dragged: a click on the ring opens their readings here.
Sky
    Sun paths and the skyline seen from the selected module, with its monthly figures
    (:class:`widgets.sky_panel.SkyPanel`).
Hours
    Shade loss by month and hour for the selected module or the whole layout
    (:class:`widgets.hours_panel.HoursPanel`).
Compare
    Portrait, landscape and mixed fills, each with and without its worst modules
    (:func:`layout.study.compare.compare_layouts`), as a table and a bar chart
    (:class:`widgets.compare_panel.ComparePanel`).
Strings
    The design temperatures, Voc method and code limit typed; string sizing by NEC 690.7(A)
    and the stringings by rows, shade-aware and as drawn, side
    by side (:func:`layout.study.string_options.compare_stringing`,
    :class:`widgets.strings_panel.StringsPanel`); the chosen option's strings are drawn on the
    plan (:class:`widgets.string_lines.StringLines`), and while **Draw a string** is pressed a
    click on a module adds it to a new string.
File
    Save and load the project; export the module table (CSV) and outlines (GeoJSON)
    (:class:`widgets.file_panel.FilePanel`).
Elevation data
    Import a LiDAR tile (LAS/LAZ) about the site, preview the roof, chimneys, trees,
    neighbouring buildings and far horizon it holds, and keep the ticked ones, marked "from
    elevation data, not surveyed" (:class:`widgets.elevation_panel.ElevationPanel`).

Under the plan, :class:`widgets.totals.TotalsPanel` shows the module count and the annual
figures and :class:`widgets.status_line.StatusLine` what the planner is doing.

Loss range
----------
The **Loss range** button under the totals carries the tolerances of the survey readings to
the annual shade loss (:func:`layout.study.outlook.shade_loss_range`, run on the planner's own
analysis, so each draw ray-tests only the surveyed obstructions): the 5th to 95th percentile
band is shown beside the totals, and per module in the hover text and the selected module's
readout, with the number of draws and the seed. It is kept until the project changes (a change
of units alone keeps it); :mod:`widgets.loss_band` shows it.
"""

from __future__ import annotations

import html
import time
from pathlib import Path

import ipywidgets as w

from layout.edits import move_building
from layout.errors import InputError
from layout.history import ProjectHistory
from layout.project import ProjectFileError
from layout.project_imports import survey_against_elevation, with_obstructions
from layout.sky.sun import TYPICAL_YEAR
from layout.study.analysis import Analysis
from layout.study.compare import compare_layouts
from layout.units import INCH_M

from .charts import reveal_figures
from .compare_panel import ComparePanel
from .elevation_panel import ElevationPanel
from .file_panel import FilePanel
from .forms import ObstructionForm, length_text
from .history_bar import HistoryBar
from .hours_panel import HoursPanel
from .loss_band import LossRangePanel
from .module_panel import ModulePanel
from .page_style import page_style
from .plan_view import PlanView, obstruction_anchor, obstruction_label, plan_scene
from .planner_outputs import LossRangeAndReport
from .planner_previews import LivePreviews
from .planner_strings import StringsWiring
from .roof_panel import RoofPanel
from .sky_panel import SkyPanel
from .status_line import StatusLine
from .string_lines import StringLines
from .strings_panel import StringsPanel
from .survey_panel import SurveyPanel
from .timeline import Timeline, roof_shadows
from .totals import NOTE_COLUMNS, NoteRow, TotalsPanel, module_note
from .undo_keys import UndoKeys

__all__ = [
    "CAUTIONS",
    "FIGURES",
    "TAB_NAMES",
    "Planner",
    "snap_length",
]

#: The cautions shown in the app: short, calm, and always visible.
CAUTIONS = (
    "Setbacks and pathways are defaults: the authority having jurisdiction decides which fire "
    "code and local amendments apply.",
    "Wiring, rapid shutdown and interconnection are licensed electrical work; added roof load "
    "needs a structural review by a licensed person.",
    "Work on a roof only with fall protection; measure from the ground where you can.",
)

#: Figures the modules can be coloured by: column of the per-module table → (name in the
#: menu, label on the colour bar, lower end of the scale or None for the smallest value shown).
FIGURES = {
    "shade_loss_pct": ("annual shade loss [%]", "shade loss %", 0.0),
    "tsrf_pct": ("TSRF [%]", "TSRF %", None),
    "energy_kwh": ("annual energy [kWh]", "kWh a year", None),
    "solar_access_pct": ("solar access [%]", "solar access %", None),
}

#: Side panel tabs, in order.
TAB_NAMES = ("Roof", "Module", "Objects", "Survey", "Sky", "Hours", "Compare", "Strings",
             "File", "Elevation data")

#: Drag positions snap to this grid [m]: 1 cm, or a quarter inch in imperial projects.
SNAP_M = {"metric": 0.01, "imperial": INCH_M / 4}


def snap_length(metres: float, units: str) -> float:
    """Round a dragged position [m] to 1 cm (metric) or 1/4 in (imperial)."""
    step = SNAP_M.get(units, 0.01)
    return round(metres / step) * step


def _origins(project) -> dict[str, str]:
    """Return obstruction name → where it came from, for the imported ones."""
    return {o.name: project.source_of(o.name) for o in project.obstructions
            if project.source_of(o.name)}


class Planner(LivePreviews, StringsWiring, LossRangeAndReport, w.VBox):
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
    areas : dict of str to layout.fill.usable.UsableArea
        Usable area of each array face.
    selected_id : str or None
        The module shown in the Sky and Hours tabs.
    last_recompute_s : float
        Seconds the last accepted edit took on the Python side (analysis and redraw).
    preview_interval_s : float
        Least time between two live previews while an obstruction is dragged [s]
        (:attr:`PREVIEW_INTERVAL_S` by default).
    preview_sample_days : int
        Live previews evaluate one day in this many of the weather
        (:attr:`PREVIEW_SAMPLE_DAYS` by default; 1 makes them exact, and slower).
    first_preview_s : float
        How long a drag lasts before its first live preview [s] (:attr:`FIRST_PREVIEW_S` by
        default).
    compare_result : pandas.DataFrame or None
        The last comparison's table (Compare tab), None before the tab was opened.
    loss_range : layout.study.outlook.ShadeLossRange or None
        The last loss range run (:meth:`run_loss_range`).
    roof_panel, module_panel, objects, survey, sky_panel, hours_panel, compare_panel, file_panel
        The side panel's tabs, in the order of :data:`TAB_NAMES`.
    history : layout.history.ProjectHistory
        Every accepted version of the project, for :meth:`undo` and :meth:`redo`.
    totals_panel : widgets.totals.TotalsPanel
        The figures under the plan, with the loss range controls (``loss_panel``).
    status_line : widgets.status_line.StatusLine
        What the planner is doing or did.

    Notes
    -----
    While an obstruction marker is dragged, the plan shows a live preview: from
    :attr:`first_preview_s` into the drag, as often as the analysis keeps up (one preview at
    least :attr:`preview_interval_s` after the last), a preview analysis (one day in
    :attr:`preview_sample_days` of the same weather) is brought up to date for the marker's
    place and the module colours, footprints and totals follow (estimates, marked as a
    preview in the status line). The project itself changes only at the drop, which brings
    the exact figures; a drag that ends where it began puts the figures back.
    """

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
        self._init_previews()
        self.progress_after_s = self.PROGRESS_AFTER_S
        self._busy_since = 0.0
        self.compare_result = None
        self._compare_for = None
        self._base_dir = Path(path).expanduser().resolve().parent if path else None
        self._shadow_key = None
        self.shadows = None
        self.loss_range = None
        self._range_key = None
        self.history: ProjectHistory | None = None
        self.plan_buildings = tuple(b.name for b in project.buildings)
        self.history_bar = HistoryBar()
        self.history_bar.on_undo(self.undo)
        self.history_bar.on_redo(self.redo)

        self.plan = PlanView()
        self.undo_keys = UndoKeys(self.plan.figure, self.undo, self.redo)
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
        self.status_line = StatusLine()
        self.timeline = Timeline(year=TYPICAL_YEAR)
        self.timeline.on_change(lambda _: self._draw_shadows())

        self.objects = ObstructionForm()
        self.objects.on_change(self._obstructions_edited)
        self.survey = SurveyPanel()
        self.survey.base_dir = self._base_dir
        self.survey.on_change(self._survey_edited)
        self.plan.on_surveyed_clicked(self._surveyed_clicked)
        self.loss_panel = LossRangePanel()
        self.loss_panel.on_run(self.run_loss_range)
        self.totals_panel = TotalsPanel(self.loss_panel)
        self.module_panel = ModulePanel()
        self.module_panel.on_change(self._module_tab_edited)
        self.sky_panel = SkyPanel()
        self.sky_panel.on_module_chosen(self._sky_module_chosen)
        self.hours_panel = HoursPanel()
        self.hours_panel.on_scope_changed(self._refresh_tab)
        self.compare_panel = ComparePanel()
        self.compare_panel.on_run(lambda: self._run_compare(force=True))
        self.strings_panel = StringsPanel()
        self.strings_panel.on_use(self._use_stringing)
        self.strings_panel.on_strings(self._strings_drawn)
        self.strings_panel.on_redraw(self._draw_strings)
        self.strings_panel.on_design(self._design_typed)
        self.string_lines = StringLines(self.plan)
        self._strings_for = None
        self.file_panel = FilePanel(path)
        self.file_panel.on_load(self._file_loaded)
        self.file_panel.on_saved(self._saved)
        self.file_panel.on_report(self.write_report)
        self.roof_panel = RoofPanel()
        self.roof_panel.on_change(self._roof_edited)
        self.roof_panel.on_preview(self.plan.show_preview)
        self.roof_panel.on_drawing(self._outline_drawn)
        self.plan.on_corner_added(self.roof_panel.add_corner)
        self.plan.on_first_corner_clicked(self.roof_panel.close_outline)
        self.plan.on_face_clicked(self._face_clicked)
        self.plan.on_building_moved(self._building_dragged)
        self.elevation_panel = ElevationPanel()
        self.elevation_panel.on_keep(
            lambda project: self.set_project(project, message="Items from elevation data "
                                                              "added"))
        self.tabs = w.Tab(children=[self.roof_panel, self.module_panel, self.objects, self.survey,
                                    self.sky_panel, self.hours_panel, self.compare_panel,
                                    self.strings_panel, self.file_panel, self.elevation_panel],
                          titles=TAB_NAMES,
                          layout=w.Layout(flex="1 1 480px", min_width="460px",
                                          max_width="760px"))
        self.tabs.add_class("eaveline-side")
        self.tabs.observe(self._tab_changed, names="selected_index")
        self.cautions = w.HTML(
            "<div style='color:#5d6b6a;font-size:12px;line-height:1.5'>"
            + "<br>".join(html.escape(c) for c in CAUTIONS) + "</div>")
        self.cautions.add_class("eaveline-cautions")

        figures = w.VBox([self.totals_panel, self.status_line],
                         layout=w.Layout(width=f"{self.plan.width_px}px"))
        tools = w.HBox([self.colour_by, w.Label("Click a module to"), self.click_mode],
                       layout=w.Layout(align_items="center"))
        super().__init__([
            w.HBox([self.title, w.HBox([self.history_bar, self.units_toggle])],
                   layout=w.Layout(justify_content="space-between", align_items="center")),
            # the side panel beside the plan on a wide screen, below it on a narrow one
            w.HBox([w.VBox([tools, self.plan, self.timeline, figures],
                           layout=w.Layout(flex=f"0 1 {self.plan.width_px + 80}px",
                                           min_width=f"{self.plan.width_px + 20}px")),
                    self.tabs],
                   layout=w.Layout(flex_flow="row wrap", align_items="flex-start")),
            self.cautions, page_style(),
        ])
        self.add_class("eaveline-planner")
        self.set_project(project)
        if self.array_layout is None:
            raise InputError("project", self.status_line.message.value)
        self.show_tab("Module" if project.buildings else "Roof")
        self.timeline.show_sun(None)

    # ================================================================= project changes
    def set_project(self, project, *, message: str = "", label: str = "",
                    record: bool = True, key=None) -> bool:
        """Show a new project: bring the analysis up to date and redraw from its result.

        Parameters
        ----------
        project : layout.project.Project
            The project to show.
        message : str, optional
            The status line's text once it is shown.
        label : str, optional
            What the edit was, for the undo button (the message when not given).
        record : bool, default True
            Make it a step of the undo history (undo and redo themselves pass False).
        key : object, optional
            What the edit worked on; edits of the same thing in a row are one undo step.

        Returns
        -------
        bool
            False when the core refused the project; the previous one then stays shown and
            the status line says why.
        """
        self._status("Recomputing…", busy=True)
        self._previewed = False  # what is shown from now on is this project's
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
        # the same fill object (not refilled, or recalled from a state that shared it) and the
        # same faces: the plan keeps its static drawing and redraws the obstructions only
        keep = (previous is not None and result.layout is self.array_layout
                and result.areas is self.areas and previous.faces == project.faces)
        self.project, self.array_layout, self.areas = project, result.layout, result.areas
        active = [m.id for m in result.modules]
        if self.selected_id not in active:
            table = result.table
            self.selected_id = (str(table["shade_loss_pct"].idxmax())
                                if len(table) and table["shade_loss_pct"].notna().any()
                                else (active[0] if active else None))
        # the figures go out first: the browser shows them while it redraws the plan
        self._show_figures()
        self._set_module_figures(redraw=False)
        self.plan.draw(plan_scene(project, result.layout, result.areas), units=project.units,
                       keep_static=keep)
        self.plan.show_buildings([b.name for b in project.buildings],
                                 [b.footprint for b in project.buildings])
        self.file_panel.show(project, result.layout)
        self.elevation_panel.show(project)
        self._quiet_units(project.units)
        self._draw_shadows()
        self.objects.show(project.obstructions, units=project.units,
                          new_position=self._roof_middle(), origins=_origins(project))
        self.survey.show(project.survey, units=project.units)
        self.survey.show_crosscheck(survey_against_elevation(project))
        self._show_band()
        self.module_panel.show(project)
        self.roof_panel.show(project)
        self._refresh_tab()
        self._draw_strings()
        if self.history is None:
            self.history = ProjectHistory(project)
        elif record:
            self.history.record(project, label or message.rstrip(".") or "edit", key=key)
        self.history_bar.show(self.history)
        self.last_recompute_s = time.perf_counter() - start
        self.last_timings = dict(self.analysis.timings)
        self._status(message or f"Ready (updated in {self.last_recompute_s * 1000:.0f} ms).")
        return True

    def undo(self) -> bool:
        """Go back to the project as it was before the last edit; False when there is none."""
        return self._step(self.history.undo if self.history.can_undo else None, "undo")

    def redo(self) -> bool:
        """Bring back the last edit undone; False when there is none."""
        return self._step(self.history.redo if self.history.can_redo else None, "redo")

    def _step(self, move, action: str) -> bool:
        if move is None:
            self._status(f"Nothing to {action}.")
            return False
        if action == "undo":
            message = f"Undone: {self.history.undo_label}."
        else:
            message = f"Redone: {self.history.redo_label}."
        return self.set_project(move(), message=message, record=False)

    @property
    def result(self):
        """The analysis's current :class:`layout.study.analysis.Evaluation`."""
        return self.analysis.result

    def _progress(self, stage: str, done: int, total: int) -> None:
        if time.perf_counter() - self._busy_since < self.progress_after_s:
            return  # quick so far: no stages to flicker past
        self.status_line.show_progress(done, total)
        self._status(f"Recomputing: {stage}…", busy=True)

    def _progress_done(self) -> None:
        self.status_line.hide_progress()

    def _status(self, text: str, *, busy: bool = False, error: bool = False) -> None:
        self.status_line.say(text, busy=busy, error=error)

    def _roof_middle(self) -> tuple[float, float]:
        if not self.project.buildings:  # a new project: the site's origin
            return 0.0, 0.0
        point = self.project.buildings[0].footprint.centroid
        return float(point.x), float(point.y)

    def _set_module_figures(self, *, redraw: bool = True, result=None) -> None:
        result = self.analysis.result if result is None else result
        table = result.table
        key = self.colour_by.value
        values = label = vmin = None
        if key and len(table):
            _, label, vmin = FIGURES[key]
            values = table[key]
        threshold = self.project.energy.tsrf_threshold_pct
        flagged = table.index[table["tsrf_pct"] < threshold] if len(table) else []
        bands = self._module_bands()
        rows = zip(*(table[column].to_numpy() for column in NOTE_COLUMNS),  # what notes read
                   strict=True)
        notes = {mid: module_note(mid, NoteRow(*row), bands.get(mid))
                 for mid, row in zip(table.index, rows, strict=True)}
        self.plan.set_module_figures(values, label=label or "", vmin=vmin, flagged=flagged,
                                     notes=notes, selected=self.selected_id, redraw=redraw)

    def _paint(self) -> None:
        if self.analysis is not None:
            self._set_module_figures()

    def _show_figures(self) -> None:
        name = self.project.name or "untitled project"
        self.title.value = f"<b style='font-size:15px;color:#34403f'>{html.escape(name)}</b>"
        self.totals_panel.show(self.project, self.analysis.result)
        self.module_panel.show_rules(self.project, self.array_layout)
        self._show_selected()

    def _show_selected(self, result=None) -> None:
        table = (self.analysis.result if result is None else result).table
        if self.selected_id is None or self.selected_id not in table.index:
            self.totals_panel.show_selected(None)
            return
        self.totals_panel.show_selected(self.selected_id, table.loc[self.selected_id],
                                        self._module_bands().get(self.selected_id))

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
        return (with_obstructions(self.project, obstructions),
                obstruction_label(old, index), place)

    def _obstruction_moved(self, index: int, x_m: float, y_m: float) -> None:
        project, label, place = self._moved_project(index, x_m, y_m)
        if self.set_project(project):
            self.totals_panel.show_move(f"{label} moved to {place}")
        else:  # put the marker back where the project still has it
            self.plan.draw(plan_scene(self.project, self.array_layout, self.areas),
                           units=self.project.units)

    def _module_clicked(self, module_id: str) -> None:
        if self.strings_panel.drawing:
            if module_id in self.analysis.result.table.index:
                self.strings_panel.add_module(module_id)
            else:
                self._status(f"Module {module_id} is taken out: it cannot join a string.")
            return
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

    # ----------------------------------------------------------------- panel edits
    def _roof_edited(self, project, label: str) -> bool:
        accepted = self.set_project(project, message=label[0].upper() + label[1:] + ".",
                                    label=label)
        if accepted and len(project.buildings) != len(self.plan_buildings):
            self.plan.fit()  # a building came or went: show the whole site again
        self.plan_buildings = tuple(b.name for b in project.buildings)
        return accepted

    def _outline_drawn(self, drawing: bool, corners, closed: bool) -> None:
        self.plan.set_drawing(drawing)
        self.plan.show_drawing(corners, closed=closed)

    def _building_dragged(self, name: str, east_m: float, north_m: float) -> None:
        units = self.project.units
        east, north = snap_length(east_m, units), snap_length(north_m, units)
        try:
            project = move_building(self.project, name, east_m=east, north_m=north)
        except InputError as err:
            project = None
            self._status(f"Not moved: {err}", error=True)
        label = (f"moved {name} {length_text(abs(east), units)} "
                 f"{'east' if east >= 0 else 'west'}, {length_text(abs(north), units)} "
                 f"{'north' if north >= 0 else 'south'}")
        if project is None or not self.set_project(project, message=label[0].upper() + label[1:]
                                                   + ".", label=label):
            # put the handle back where the project still has the building
            self.plan.show_buildings([b.name for b in self.project.buildings],
                                     [b.footprint for b in self.project.buildings])

    def _face_clicked(self, name: str) -> None:
        self.show_tab("Roof")
        self.roof_panel.select_face(name)

    def _module_tab_edited(self, *, module, fill, clearance) -> bool:
        return self.set_project(
            self.project.with_changes(module=module, fill=fill, clearance=clearance),
            message="Refilled with the Module tab's values.")

    def _obstructions_edited(self, obstructions, index) -> None:
        project = with_obstructions(self.project, obstructions)
        if self.set_project(project, label="obstruction typed in Objects",
                            key=("objects", index, len(obstructions))):
            self.objects.show(self.project.obstructions, units=self.project.units, index=index,
                              new_position=self._roof_middle(),
                              origins=_origins(self.project))

    def _survey_edited(self, entries, index) -> bool:
        try:
            project = self.project.with_changes(survey=tuple(entries))
        except (InputError, ProjectFileError) as err:
            self._status(f"Survey not changed: {err}", error=True)
            return False
        count = len(project.survey)
        noun = "obstruction" if count == 1 else "obstructions"
        known = isinstance(index, int) and 0 <= index < count
        name = (project.survey[index].name or f"{index + 1}") if known else ""
        # fields of one entry typed in a row are one undo step; an entry added or deleted
        # changes the count and starts a new one
        if not self.set_project(project, message=f"Survey updated: {count} surveyed {noun}.",
                                label=f"survey entry {name}" if name else "survey",
                                key=("survey", index, count)):
            return False
        self.survey.show(self.project.survey, units=self.project.units, index=index)
        return True

    def _surveyed_clicked(self, index: int) -> None:
        self.show_tab("Survey")
        self.survey.select(index)

    def _sky_module_chosen(self, module_id: str) -> None:
        if module_id != self.selected_id:
            self.select_module(module_id)

    def _saved(self, project) -> None:
        if project is self.project:
            self.history.mark_saved()

    def _file_loaded(self, project, path_text: str) -> bool:
        return self.set_project(project, message=f"Loaded {path_text}")

    def refill(self) -> bool:
        """Read the Module tab, and refill when every field is valid.

        Returns
        -------
        bool
            True when the project changed or was already as typed.
        """
        return self.module_panel.refill()

    def _units_changed(self, change) -> None:
        if self.project is not None and change["new"] != self.project.units:
            shown = "feet and inches" if change["new"] == "imperial" else "metres"
            self.set_project(self.project.with_changes(units=change["new"]),
                             message=f"Lengths now shown and typed in {shown}.")

    def _quiet_units(self, units: str) -> None:
        self.units_toggle.unobserve(self._units_changed, names="value")
        self.units_toggle.value = units
        self.units_toggle.observe(self._units_changed, names="value")

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

    # ================================================================= side panel
    def _tab_changed(self, change) -> None:
        index = change["new"]
        if index is not None:
            reveal_figures(self.tabs.children[index])  # charts drawn only once visible
        self._refresh_tab(opened=True)

    def _refresh_tab(self, *, opened: bool = False) -> None:
        index = self.tabs.selected_index
        name = TAB_NAMES[index] if index is not None else ""
        if name == "Sky":
            self.sky_panel.show(self.project, self.analysis.result, self.selected_id)
        elif name == "Hours":
            self.hours_panel.show(self.analysis.result, self.selected_id)
        elif name == "Strings":
            self._run_strings()
        elif name == "Compare":
            if opened:
                self._run_compare()
            elif self._compare_for is not self.project:  # a second or more: on request only
                self.compare_panel.show_stale()

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
        self._compare_for = self.project
        self.compare_panel.show(comparison, current=self.project.fill.orientation)
        self.compare_result = comparison.table
        self.comparison = comparison
        self._status("Ready.")

    # ================================================================= File tab
    def save(self) -> Path | None:
        """Save the project to the path in the File tab; return the path written."""
        return self.file_panel.save()

    def load(self) -> bool:
        """Load the project named in the File tab; on problems keep the current one."""
        return self.file_panel.load()

    def export_csv(self) -> Path:
        """Write the module table next to the export path; return the path."""
        return self.file_panel.export_csv()

    def export_geojson(self) -> Path:
        """Write the module outlines as GeoJSON; return the path."""
        return self.file_panel.export_geojson()
