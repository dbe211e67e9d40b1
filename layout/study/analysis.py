"""One object that holds a project's computed state and recomputes only what an edit touched.

:class:`Analysis` runs the stages of :mod:`layout.power.energy` for a project and keeps every
intermediate result. :meth:`Analysis.update` takes the edited project and compares it with the
one it holds:

======================================  ==================================================
what changed                            what is recomputed
======================================  ==================================================
back to a recent project (undo, redo)   nothing: its state is recalled from a small cache
site, weather file, time step           everything
roofs, module, rules, fill, removals,   the fill; when the active modules changed, their
an obstruction standing on the roof     sample points and all their ray tests
an obstruction (moved, resized, added)  the ray tests of that obstruction only, for the sun
                                        and for the sky view (the others' hits are kept per
                                        obstruction), then irradiance, power and tables
energy settings (models, strings)       irradiance or power, and tables
======================================  ==================================================

The combined answer is always the same as a fresh evaluation of the edited project (the tests
check it). A few recent projects' states are kept, keyed by the project object itself (a
project is immutable, so undo and redo hand back the very objects evaluated before), within a
memory budget; a drag's previews pass ``remember=False`` so they do not push those out. The
front end keeps one Analysis and redraws from :attr:`Analysis.result`.
"""

from __future__ import annotations

import time
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass, fields, is_dataclass
from functools import cached_property

import numpy as np
import pandas as pd

from ..errors import InputError, check_positive, check_whole
from ..fill.placed import Layout, PlacedModule
from ..fill.usable import roof_mounted
from ..power.electrical import DcPower, dc_power
from ..power.energy import SunSteps, building_casters, load_weather, sky_view_ratio, sun_steps
from ..power.irradiance import ModuleIrradiance, module_irradiance
from ..power.metrics import (
    BestOrientation,
    best_orientation,
    empty_module_table,
    layout_totals,
    module_table,
    month_hour_loss,
    monthly_table,
)
from ..shading import ModuleShade, ShadeCache, module_casters, module_samples, module_shade
from ..shading.skyview import SkyViewCache
from ..sky.weather import Weather

__all__ = ["Analysis", "Evaluation", "evaluate"]


@dataclass(frozen=True, eq=False)
class Evaluation:
    """Everything one evaluation of a project computed. Never saved; rebuilt from the project.

    Attributes
    ----------
    project : layout.project.Project
        The project evaluated.
    layout : layout.fill.placed.Layout
        The fill, removed modules included.
    areas : dict of str to layout.fill.usable.UsableArea
        Usable area of each array face.
    modules : tuple of PlacedModule
        The active modules, in the row order of :attr:`table` and the column order of the
        arrays below.
    weather : layout.sky.weather.Weather
        Weather of the evaluation; its ``caveat`` says what clear sky means for shade loss.
    best : layout.power.metrics.BestOrientation
        Best unshaded plane at the site (for TOF).
    shade : layout.shading.ModuleShade or None
        Beam shaded fraction per sun-up step, module, cell and substring.
    sky_view : numpy.ndarray, shape (M,)
        Sky-view ratio of each module (1 = open sky).
    irradiance : layout.power.irradiance.ModuleIrradiance or None
    power : layout.power.electrical.DcPower or None
    table : pandas.DataFrame
        Per-module figures (:func:`layout.power.metrics.module_table`).
    totals : dict
        Layout totals (:func:`layout.power.metrics.layout_totals`).
    monthly : pandas.DataFrame
        Energy and shade loss by month (summed when first read: a drag's previews never read
        it).
    month_hour : pandas.DataFrame
        Shade loss by month (rows) and hour (columns), summed when first read.
    """

    project: object
    layout: Layout
    areas: dict
    modules: tuple[PlacedModule, ...]
    weather: Weather
    best: BestOrientation
    shade: ModuleShade | None
    sky_view: np.ndarray
    irradiance: ModuleIrradiance | None
    power: DcPower | None
    table: pd.DataFrame
    totals: dict

    @cached_property
    def monthly(self) -> pd.DataFrame:
        """Energy and shade loss by month for the whole layout."""
        if self.power is None:
            return pd.DataFrame({"energy_kwh": 0.0, "energy_unshaded_kwh": 0.0,
                                 "shade_loss_pct": np.nan},
                                index=pd.RangeIndex(1, 13, name="month"))
        return monthly_table(self.power, step_minutes=self.weather.step_minutes)

    @cached_property
    def month_hour(self) -> pd.DataFrame:
        """Shade loss by month (rows) and hour (columns) for the whole layout."""
        if self.power is None:
            return pd.DataFrame(np.nan, index=pd.RangeIndex(1, 13, name="month"),
                                columns=pd.RangeIndex(0, 24, name="hour"))
        return month_hour_loss(self.power)

    def module_monthly(self, module_id: str) -> pd.DataFrame:
        """Energy and shade loss by month for one module."""
        return monthly_table(self.power, step_minutes=self.weather.step_minutes,
                             columns=[self._column(module_id)])

    def module_month_hour(self, module_id: str) -> pd.DataFrame:
        """Shade loss by month and hour for one module."""
        return month_hour_loss(self.power, columns=[self._column(module_id)])

    def _column(self, module_id: str) -> int:
        ids = [m.id for m in self.modules]
        if module_id not in ids:
            raise InputError("module_id", "is not an active module of this layout",
                             value=module_id)
        return ids.index(module_id)


def _geometry_key(modules) -> tuple:
    return tuple((m.id, m.corners_3d, m.orientation) for m in modules)


def _roof_mounted(project) -> tuple:
    """Return the obstructions that stand on a roof face: only these change the fill."""
    return tuple(ob for ob in project.scene_obstructions
                 if any(roof_mounted(face, ob) for face in project.faces))


def _needs_module_casters(modules) -> bool:
    """Modules on racks can shade each other; flush modules lie in their face's plane."""
    return any(m.uv_corners is not None for m in modules)


class Analysis:
    """A project's computed state, kept up to date edit by edit.

    Parameters
    ----------
    project : layout.project.Project
        The project to evaluate.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from (the project file's folder).
    progress : callable, keyword-only, optional
        Called as ``progress(stage, done, total)`` before each stage runs, so a front end can
        say what is being computed; ``stage`` is a short plain-language label.
    recent : int, keyword-only, default 4
        How many recent projects' computed states are kept for recall (0 keeps none).
    recent_mb : float, keyword-only, default 600
        Memory budget of those states [MB] (their arrays, counted roughly); the oldest go
        first, and a state larger than the budget is not kept.
    sample_days : int, keyword-only, default 1
        Evaluate one day in ``sample_days`` of the weather (:meth:`Weather.sampled`), each
        standing for that many: a quick estimate for live previews (about ``sample_days``
        times less ray testing and irradiance work), never for quoted figures. 1 (the
        default) evaluates every step.
    weather : layout.sky.weather.Weather, keyword-only, optional
        The weather already read for this project (another analysis's
        :attr:`Evaluation.weather`, every step of it), used instead of reading the file
        again while the project's site, weather file and step stay those it was read for.

    Attributes
    ----------
    result : Evaluation
        The current evaluation.
    recomputed : tuple of str
        Stages the last :meth:`update` ran ("weather", "fill", "points", "rays", "sky",
        "irradiance", "power", "tables"), or ``("recalled",)`` when the project's state came
        from the cache of recent projects.
    timings : dict of str to float
        Seconds each stage of the last update took.
    rays_tested : int
        Casters the last update had to ray-test (the rest came from the per-obstruction cache).
    """

    _STAGES = ("weather", "fill", "points", "rays", "sky", "irradiance", "power", "tables")

    def __init__(self, project, *, base_dir=None,
                 progress: Callable[[str, int, int], None] | None = None,
                 recent: int = 4, recent_mb: float = 600.0, sample_days: int = 1,
                 weather: Weather | None = None):
        self.base_dir = base_dir
        self.progress = progress
        self.sample_days = check_whole("sample_days", sample_days, 1, 24,
                                       problem="must be a whole number of days")
        # (weather key, weather) read by someone else, for this project's first evaluation
        self._given_weather = None if weather is None else (
            self._weather_key_of(project), weather)
        self.recent = check_whole("recent", recent, 0,
                                  problem="must be a whole number of projects")
        self.recent_bytes = check_positive("recent_mb", recent_mb, unit="MB") * 1e6
        # id(project) -> (project, its state, its size [bytes]); the project is held so that
        # its id is not reused while the entry stands
        self._recent: OrderedDict[int, tuple] = OrderedDict()
        self._project = None
        self._weather_key = None
        self._weather: Weather | None = None
        self._sun: SunSteps | None = None
        self._best: BestOrientation | None = None
        self._best_model: str | None = None
        self._geometry = None
        self._cache: ShadeCache | None = None
        self._samples = None
        self._sky_cache: SkyViewCache | None = None
        self._casters = None
        self._module_plates: tuple = ()
        self._buildings = None  # (project.buildings, their casters), kept while they stand
        self._shade: ModuleShade | None = None
        self._sky: np.ndarray | None = None
        self._irradiance_key = None
        self._irradiance: ModuleIrradiance | None = None
        self._planes: dict = {}
        self._fill_key = None
        self._fill = None
        self._power_key = None
        self._power: DcPower | None = None
        self.result: Evaluation | None = None
        self.recomputed: tuple[str, ...] = ()
        self.timings: dict[str, float] = {}
        self.rays_tested = 0
        self.update(project)

    @property
    def project(self):
        """The project the current result belongs to."""
        return self._project

    def _stage(self, name: str, started: float) -> float:
        now = time.perf_counter()
        self.timings[name] = now - started
        return now

    def _say(self, label: str, step: int) -> None:
        if self.progress is not None:
            self.progress(label, step, len(self._STAGES))

    def update(self, project, *, remember: bool = True) -> tuple[str, ...]:
        """Bring the result up to date with ``project`` and return the stages that ran.

        The project is only read. On an error (a weather file that cannot be read, say) the
        previous result stays in place and the error is raised.

        Parameters
        ----------
        project : layout.project.Project
            The project to evaluate.
        remember : bool, keyword-only, default True
            Keep this project's state among the recent ones, for an instant return to it
            (undo, redo). A passing project (a drag's live preview) passes False.
        """
        self.timings = {}
        clock = time.perf_counter()
        kept = self._recent.get(id(project))
        if project is not self._project and kept is not None \
                and kept[1]["_weather_key"] == self._weather_key_of(project):
            self._recall(project)
            self.timings["recalled"] = time.perf_counter() - clock
            self.recomputed = ("recalled",)
            return self.recomputed
        ran = self._run(project, clock)
        self._project = project
        self.recomputed = tuple(ran)
        if remember:
            self._remember(project)
        return self.recomputed

    # the attributes that make up a project's computed state (see _remember and _recall)
    _STATE = ("_weather_key", "_weather", "_sun", "_best", "_best_model", "_geometry",
              "_cache", "_samples", "_sky_cache", "_casters", "_module_plates", "_buildings",
              "_shade", "_sky", "_irradiance_key", "_irradiance", "_planes", "_fill_key",
              "_fill", "_power_key", "_power", "result")

    def _remember(self, project) -> None:
        """Keep the current state for a later :meth:`update` with the same project object.

        The hit caches (:class:`ShadeCache`, :class:`SkyViewCache`) are shared with later
        states, not copied: they hold hits keyed by obstruction and are brought up to the
        obstructions in hand before every use, so a recalled state stays exact.
        """
        self._recent.pop(id(project), None)
        if self.recent == 0:
            return
        size = _array_bytes(self.result)
        if size > self.recent_bytes:
            return
        state = {name: getattr(self, name) for name in self._STATE}
        self._recent[id(project)] = (project, state, size)
        while len(self._recent) > self.recent \
                or sum(entry[2] for entry in self._recent.values()) > self.recent_bytes:
            self._recent.popitem(last=False)

    def _recall(self, project) -> None:
        _, state, _ = self._recent[id(project)]
        self._recent.move_to_end(id(project))
        for name, value in state.items():
            setattr(self, name, value)
        self._project = project
        self.rays_tested = 0  # nothing was ray-tested to come back here

    def _weather_key_of(self, project) -> tuple:
        """Return what the weather and the sun path depend on, the folder of a relative file too.

        A kept state is recalled only where it would read the same weather file.
        """
        energy = project.energy
        return (project.site, energy.weather_file, energy.step_minutes, str(self.base_dir))

    def _run(self, project, clock: float) -> list[str]:
        """Run the stages an edit touched, from the state held, and return their names."""
        ran: list[str] = []
        energy = project.energy

        weather_key = self._weather_key_of(project)
        if weather_key != self._weather_key:
            self._say("reading the weather and the sun path", 0)
            given = self._given_weather
            weather = given[1] if given is not None and given[0] == weather_key \
                else load_weather(project.site, energy, base_dir=self.base_dir)
            weather = weather.sampled(self.sample_days)
            self._sun = sun_steps(weather)
            self._best = best_orientation(weather, model=energy.sky_model)
            self._weather, self._weather_key = weather, weather_key
            self._planes = {}
            self._geometry = self._cache = self._irradiance_key = None
            ran.append("weather")
            clock = self._stage("weather", clock)
        elif self._best is not None and self._best_model != energy.sky_model:
            self._best = best_orientation(self._weather, model=energy.sky_model)
            self._irradiance_key = None
        self._best_model = energy.sky_model

        fill_key = (project.buildings, project.module, project.clearance, project.fill,
                    project.array_faces, project.removed, project.pathways,
                    project.site.latitude, _roof_mounted(project))
        if fill_key != self._fill_key:
            self._say("filling the roof faces", 1)
            self._fill = project.fill_with_areas()
            self._fill_key = fill_key
            ran.append("fill")
            clock = self._stage("fill", clock)
        layout, areas = self._fill
        modules = layout.active_modules

        geometry = (_geometry_key(modules), project.module, energy.samples_per_cell)
        if geometry != self._geometry:
            self._say("placing sample points on the cells", 2)
            self._cache = self._samples = self._sky_cache = None
            if modules:
                samples = module_samples(modules, project.module,
                                         samples_per_cell=energy.samples_per_cell)
                self._cache = ShadeCache(samples.points, self._sun.vectors,
                                         month=self._sun.month, normals=samples.normals)
                self._samples = samples
            self._module_plates = module_casters(modules) \
                if _needs_module_casters(modules) else ()
            self._geometry, self._casters = geometry, None
            ran.append("points")
            clock = self._stage("points", clock)

        if self._buildings is None or self._buildings[0] != project.buildings:
            self._buildings = (project.buildings, building_casters(project))
        casters = tuple(project.scene_obstructions) + self._buildings[1]  # scene_casters
        if (casters, energy.sky_directions) != self._casters:
            if modules:
                self._say("tracing the sun past every obstruction", 3)
                every = casters + self._module_plates
                self.rays_tested = self._cache.update(every)  # only new or changed casters
                self._shade = module_shade(
                    modules, project.module, self._sun.vectors, every,
                    samples_per_cell=energy.samples_per_cell, include_modules=False,
                    cache=self._cache, samples=self._samples, keep_cells=False)
                ran.append("rays")
                clock = self._stage("rays", clock)
                self._say("measuring how much sky each module sees", 4)
                if self._sky_cache is None \
                        or self._sky_cache.n_directions != energy.sky_directions:
                    self._sky_cache = SkyViewCache(modules, n_directions=energy.sky_directions)
                self._sky = sky_view_ratio(modules, casters, n_directions=energy.sky_directions,
                                           include_modules=_needs_module_casters(modules),
                                           cache=self._sky_cache)
                ran.append("sky")
                clock = self._stage("sky", clock)
            else:
                self._shade, self._sky, self.rays_tested = None, np.zeros(0), 0
            self._casters = (casters, energy.sky_directions)
            self._irradiance_key = None

        irradiance_key = (self._geometry, self._casters, energy.sky_model, energy.iam_model,
                          energy.mount)
        if irradiance_key != self._irradiance_key:
            self._irradiance = None
            if modules:
                self._say("computing irradiance on each module", 5)
                spec = project.module
                self._irradiance = module_irradiance(
                    self._weather, [m.tilt_deg for m in modules],
                    [m.azimuth_deg for m in modules],
                    shade_rows=(np.flatnonzero(self._sun.up)[self._shade.steps],
                                self._shade.mean_rows, self._shade.worst_rows),
                    cell_substring=spec.substring_of_cell(np.arange(spec.cell_count)),
                    n_substrings=spec.bypass_diodes, sky_view=self._sky,
                    model=energy.sky_model, iam_model=energy.iam_model, mount=energy.mount,
                    plane_cache=self._planes)
            self._irradiance_key, self._power_key = irradiance_key, None
            ran.append("irradiance")
            clock = self._stage("irradiance", clock)

        power_key = (irradiance_key, energy.electrical, project.module)
        if power_key != self._power_key:
            self._power = None
            if modules:
                self._say("turning light into power", 6)
                self._power = dc_power(self._irradiance, project.module, energy.electrical,
                                       modules=modules)
            self._power_key = power_key
            ran.append("power")
            clock = self._stage("power", clock)

        self._say("adding up the tables", 7)
        self.result = self._tables(project, layout, areas, modules)
        ran.append("tables")
        self._stage("tables", clock)
        return ran

    def _tables(self, project, layout, areas, modules) -> Evaluation:
        step = self._weather.step_minutes
        energy = project.energy
        table = module_table(self._power, self._irradiance, modules, step_minutes=step,
                             best=self._best) if modules else empty_module_table()
        totals = layout_totals(table, power_w=project.module.power_w,
                               tsrf_threshold_pct=energy.tsrf_threshold_pct)
        return Evaluation(project=project, layout=layout, areas=areas, modules=tuple(modules),
                          weather=self._weather, best=self._best, shade=self._shade,
                          sky_view=self._sky if self._sky is not None else np.zeros(0),
                          irradiance=self._irradiance, power=self._power, table=table,
                          totals=totals)


def _array_bytes(item, depth: int = 2) -> int:
    """Return roughly the bytes the arrays of an evaluation hold (dataclass fields, two deep)."""
    if isinstance(item, np.ndarray):
        return item.nbytes
    if isinstance(item, pd.DataFrame):
        return 8 * item.size  # 8 bytes a value: pandas' memory_usage takes milliseconds
    if depth and is_dataclass(item) and not isinstance(item, type):
        return sum(_array_bytes(getattr(item, f.name), depth - 1) for f in fields(item))
    return 0


def evaluate(project, *, base_dir=None) -> Evaluation:
    """Evaluate a project once, from scratch (what :class:`Analysis` keeps up to date)."""
    return Analysis(project, base_dir=base_dir).result
