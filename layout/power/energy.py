"""From a filled layout to energy: the settings and the stages of one evaluation.

The stages run in this order, each a plain function of the one before:

1. :func:`load_weather`: clear sky at the site (default, offline) or a weather file.
2. :func:`sun_steps`: the sun-up steps of the weather, as unit vectors and months.
3. :func:`scene_casters`: everything that can shade a module: the obstructions, the far
   horizon and the roof faces of every building (as plates). The modules themselves are added
   by the shading engine, which never lets a module shade itself.
4. beam shade per cell (:func:`layout.shading.module_shade`) and the sky-view ratio per
   module (:func:`sky_view_ratio`).
5. irradiance with shade per component (:func:`layout.power.irradiance.module_irradiance`) and power
   with the chosen bypass-diode model (:func:`layout.power.electrical.dc_power`).
6. tables (:mod:`layout.power.metrics`).

:class:`layout.study.analysis.Analysis` runs these stages and keeps each result, so that an edit
recomputes only the stages it touches.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import InputError, check_fields, check_range, check_whole
from ..scene.obstructions import Plate
from ..scene.site import Site
from ..shading.skyview import SkyViewCache
from ..sky.sun import sun_vectors
from ..sky.weather import Weather, clear_sky, read_weather_file
from .electrical import ElectricalOptions
from .irradiance import MOUNTS
from .metrics import DEFAULT_TSRF_THRESHOLD_PCT
from .transposition import IAM_MODELS, SKY_MODELS

__all__ = [
    "EnergyOptions",
    "SunSteps",
    "building_casters",
    "load_weather",
    "parapet_walls",
    "scene_casters",
    "sky_view_ratio",
    "sun_steps",
]

_STEPS = (5, 10, 15, 20, 30, 60)


@dataclass(frozen=True)
class EnergyOptions:
    """How a project's energy is evaluated. Saved in the project file.

    Parameters
    ----------
    weather_file : str, os.PathLike or None, default None
        A TMY3 (``.csv``), TMY2 (``.tm2``) or EPW (``.epw``) file, absolute or relative to
        the project file's folder; None uses clear sky at the site (Ineichen with pvlib's
        Linke turbidity table), which overstates beam light and so the shade loss.
    step_minutes : int, default 60
        Time step of the clear-sky year [minutes]: 5, 10, 15, 20, 30 or 60. Weather files
        keep their own step.
    sky_model : {"perez", "haydavies", "isotropic"}, default "perez"
        Sky diffuse transposition model.
    iam_model : {"physical", "ashrae"} or None, default "physical"
        Incidence-angle loss model; None skips incidence-angle losses.
    mount : str, default "close_mount_glass_glass"
        SAPM cell-temperature parameter set (:data:`layout.power.irradiance.MOUNTS`).
    electrical : ElectricalOptions
        Bypass-diode shade model, temperature coefficient, strings, inverter.
    samples_per_cell : int, default 1
        Ray-test points per cell: 1, 4 or 9.
    sky_directions : int, default 1024
        Directions of the sky-view integral, 64 to 16384.
    tsrf_threshold_pct : float, default 75
        TSRF below which a module is flagged [%], 0 to 100 (75–80 % is common practice in
        incentive programmes).
    """

    weather_file: str | None = None
    step_minutes: int = 60
    sky_model: str = "perez"
    iam_model: str | None = "physical"
    mount: str = "close_mount_glass_glass"
    electrical: ElectricalOptions = field(default_factory=ElectricalOptions)
    samples_per_cell: int = 1
    sky_directions: int = 1024
    tsrf_threshold_pct: float = DEFAULT_TSRF_THRESHOLD_PCT

    def __post_init__(self):
        set_ = object.__setattr__
        if isinstance(self.weather_file, os.PathLike):
            set_(self, "weather_file", os.fspath(self.weather_file))
        if self.weather_file is not None and (not isinstance(self.weather_file, str)
                                              or not self.weather_file.strip()):
            raise InputError("weather_file", "must be a file path or null",
                             value=self.weather_file, allowed="a .csv, .tm2 or .epw path")
        if self.step_minutes not in _STEPS or isinstance(self.step_minutes, bool):
            raise InputError("step_minutes", "is not a supported step", value=self.step_minutes,
                             allowed=", ".join(map(str, _STEPS)))
        if self.sky_model not in SKY_MODELS:
            raise InputError("sky_model", "unknown sky model", value=self.sky_model,
                             allowed=", ".join(SKY_MODELS))
        if self.iam_model is not None and self.iam_model not in IAM_MODELS:
            raise InputError("iam_model", "unknown incidence-angle model", value=self.iam_model,
                             allowed=", ".join(IAM_MODELS) + " or null")
        if self.mount not in MOUNTS:
            raise InputError("mount", "unknown cell-temperature mount", value=self.mount,
                             allowed=", ".join(MOUNTS))
        if not isinstance(self.electrical, ElectricalOptions):
            raise InputError("electrical", "must be electrical options",
                             value=type(self.electrical).__name__)
        if self.samples_per_cell not in (1, 4, 9) or isinstance(self.samples_per_cell, bool):
            raise InputError("samples_per_cell", "is not supported", value=self.samples_per_cell,
                             allowed="1, 4 or 9")
        directions = self.sky_directions
        check_whole("sky_directions", directions, 64, 16384, problem="is out of range",
                    allowed="a whole number from 64 to 16384")
        set_(self, "tsrf_threshold_pct", check_range("tsrf_threshold_pct",
                                                     self.tsrf_threshold_pct, 0, 100, unit="%"))

    def to_dict(self) -> dict:
        """Plain-data form used by the project file."""
        return {
            "weather_file": self.weather_file, "step_minutes": self.step_minutes,
            "sky_model": self.sky_model, "iam_model": self.iam_model, "mount": self.mount,
            "electrical": self.electrical.to_dict(), "samples_per_cell": self.samples_per_cell,
            "sky_directions": self.sky_directions,
            "tsrf_threshold_pct": self.tsrf_threshold_pct,
        }

    @classmethod
    def from_dict(cls, data: dict) -> EnergyOptions:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("weather_file", "step_minutes", "sky_model", "iam_model", "mount",
                 "electrical", "samples_per_cell", "sky_directions", "tsrf_threshold_pct")
        check_fields(data, known, what="energy option")
        values = dict(data)
        if "electrical" in values:
            try:
                values["electrical"] = ElectricalOptions.from_dict(values["electrical"])
            except InputError as err:
                raise err.at("electrical") from None
        return cls(**values)


def load_weather(site: Site, options: EnergyOptions, *, base_dir=None) -> Weather:
    """Return the weather of an evaluation: the file named in ``options`` or clear sky.

    Parameters
    ----------
    site : layout.scene.site.Site
        The project's site. It overrides the file header's site (the weather values are used
        as they are; the weather's notes warn when the two are far apart).
    options : EnergyOptions
        Names the weather file and the clear-sky step.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder that a relative ``weather_file`` is relative to (the project file's folder);
        default the working directory.

    Returns
    -------
    layout.sky.weather.Weather
    """
    if options.weather_file is None:
        return clear_sky(site, step_minutes=options.step_minutes)
    path = Path(options.weather_file).expanduser()
    if not path.is_absolute() and base_dir is not None:
        path = Path(base_dir) / path
    if not path.is_file():
        raise InputError("weather_file", "no such file", value=os.fspath(path),
                         allowed="a TMY3 .csv, TMY2 .tm2 or EPW .epw file")
    return read_weather_file(path, site=site)


@dataclass(frozen=True, eq=False)
class SunSteps:
    """The sun-up steps of a weather period, for ray tests. Computed, never saved.

    Attributes
    ----------
    up : numpy.ndarray of bool, shape (T_all,)
        Which steps of the weather have the sun above the horizon.
    vectors : numpy.ndarray, shape (T, 3)
        Unit vectors toward the sun at the sun-up steps, site frame (x east, y north, z up).
    month : numpy.ndarray of int, shape (T,)
        Calendar month of each sun-up step, for monthly tree transmittance.
    """

    up: np.ndarray
    vectors: np.ndarray
    month: np.ndarray


def sun_steps(weather: Weather) -> SunSteps:
    """Take the sun-up steps of ``weather`` as vectors (the weather's own solar position).

    Using the weather's solar position keeps the ray-test steps identical to the steps
    :func:`layout.power.irradiance.module_irradiance` expands sun-up arrays onto.
    """
    position = weather.solar_position
    up = position["sun_up"].to_numpy()
    vectors = sun_vectors(position["azimuth"].to_numpy()[up],
                          position["apparent_elevation"].to_numpy()[up])
    return SunSteps(up=up, vectors=vectors, month=np.asarray(weather.data.index.month)[up])


def scene_casters(project) -> tuple:
    """Everything that can shade the project's modules, modules excepted.

    The obstructions as entered and as surveyed (a far horizon included), every roof face of
    every building as a plate (the other wing of an L, a higher roof beside a lower one, the
    far slope behind a ridge), and the parapet walls (:func:`parapet_walls`). A face never
    shades the points in its own plane, so the modules mounted flush on it are not shaded by
    it.

    Parameters
    ----------
    project : layout.project.Project

    Returns
    -------
    tuple
        Obstructions, horizon profiles and :class:`~layout.scene.obstructions.Plate` objects.
    """
    return tuple(project.scene_obstructions) + building_casters(project)


def building_casters(project) -> tuple:
    """Return the buildings' casters: every roof face as a plate, then the parapet walls.

    They depend on ``project.buildings`` only, so a caller may keep them while obstructions
    move; :func:`scene_casters` puts them after the obstructions.

    Parameters
    ----------
    project : layout.project.Project

    Returns
    -------
    tuple of layout.scene.obstructions.Plate
    """
    faces = tuple(Plate.from_face(face) for face in project.faces)
    return faces + parapet_walls(project)


def parapet_walls(project) -> tuple:
    """Thin vertical walls standing on every parapet edge, ``parapet_height_m`` tall.

    A building's ``parapet_height_m`` marks its parapet edges (edge kind ``parapet``, which
    sets the setback); here the wall itself becomes a caster, a vertical plate from the roof
    surface along the edge up by the parapet height, so that it shades the modules near it.

    Parameters
    ----------
    project : layout.project.Project

    Returns
    -------
    tuple of layout.scene.obstructions.Plate
    """
    walls = []
    for building in project.buildings:
        height = building.parapet_height_m
        if height <= 0:
            continue
        for face in building.faces:
            for edge in face.edges:
                if edge.kind != "parapet":
                    continue
                (x0, y0), (x1, y1) = edge.start, edge.end
                z0, z1 = face.height_at(np.array([edge.start, edge.end]))
                walls.append(Plate(((x0, y0, z0), (x1, y1, z1), (x1, y1, z1 + height),
                                    (x0, y0, z0 + height)), kind="other",
                                   name=f"parapet of {face.name}, edge {edge.index}"))
    return tuple(walls)


def sky_view_ratio(modules, casters, *, n_directions: int = 1024,
                   include_modules: bool = True, cache: SkyViewCache | None = None) -> np.ndarray:
    """Sky-view ratio of each module: its isotropic sky with the scene over without.

    Both factors are integrated on the same fixed set of directions
    (:func:`layout.shading.skyview.module_sky_view`), so an open module has a ratio of exactly 1 and
    the direction set's small sampling error cancels; the unobstructed factor of a plane tilted
    ``β`` is ``(1 + cos β) / 2`` to within that error (view-factor algebra).

    Parameters
    ----------
    modules : sequence of layout.fill.placed.PlacedModule
    casters : sequence
        As from :func:`scene_casters`.
    n_directions : int, keyword-only, default 1024
    include_modules : bool, keyword-only, default True
        Let the modules hide each other's sky (tilted racks); flush modules lie in their
        face's plane and cannot, so the caller may skip them.
    cache : layout.shading.skyview.SkyViewCache, keyword-only, optional
        A cache on the same ``modules`` and ``n_directions``, kept between calls so that only
        new or moved casters are ray-tested again.

    Returns
    -------
    numpy.ndarray, shape (M,)
        Ratio from 0 to 1.
    """
    modules = tuple(modules)
    if not modules:
        return np.zeros(0)
    if cache is None:
        cache = SkyViewCache(modules, n_directions=n_directions)
    elif cache.modules != modules or cache.n_directions != n_directions:
        raise InputError("cache", "was built for other modules or another direction count",
                         allowed="SkyViewCache(modules, n_directions=n_directions)")
    scene = cache.factors(casters, include_modules=include_modules)
    open_sky = cache.open_factors()
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(open_sky > 0, scene / open_sky, 0.0)
    return np.clip(ratio, 0.0, 1.0)
