"""One timeline control, and the shadows on the roof faces at the moment it names.

The control has a button for each solstice and equinox, a clock slider and a play button. At
the chosen moment the sun's position comes from :func:`layout.sky.sun.solar_position`, and the
shadows are found with the core's exact ray test, :func:`layout.shading.shaded`, on a fine grid
of points lying on the roof faces (lifted with :meth:`layout.scene.roof.RoofFace.plan_to_3d`): a
grid cell is drawn dark when the ray from its centre toward the sun meets an obstruction or another
roof face. Nothing here computes geometry of its own; the shaded cells are only merged into
outlines for drawing.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import ipywidgets as w
import numpy as np
import pandas as pd
import shapely

from layout.power.energy import scene_casters
from layout.shading import shaded
from layout.sky.sun import TYPICAL_YEAR, solar_position, sun_vectors

__all__ = ["KEY_DAYS", "Shadows", "Timeline", "roof_shadows"]

#: The buttons of the timeline: the equinoxes and solstices (dates within a day of the
#: astronomical ones in most years, from memory).
KEY_DAYS = {"21 Mar": (3, 21), "21 Jun": (6, 21), "23 Sep": (9, 23), "21 Dec": (12, 21)}
#: Clock range and step of the slider [minutes after midnight].
FIRST_MINUTE, LAST_MINUTE, STEP_MINUTES = 4 * 60, 21 * 60, 15
#: Grid spacing of the shadow test on the roof faces [m].
SHADOW_GRID_M = 0.1


@dataclass(frozen=True)
class Shadows:
    """Shadows on the roof faces at one moment.

    Attributes
    ----------
    when : pandas.Timestamp
        The moment, in the site's time zone.
    azimuth_deg, elevation_deg : float
        The sun's azimuth and apparent elevation [degrees].
    outline : shapely geometry
        Shaded parts of the roof faces in plan [m]; empty when the sun is down.
    """

    when: pd.Timestamp
    azimuth_deg: float
    elevation_deg: float
    outline: object

    @property
    def sun_up(self) -> bool:
        """True when the sun is above the horizon."""
        return self.elevation_deg > 0


def roof_shadows(project, when, *, spacing_m: float = SHADOW_GRID_M) -> Shadows:
    """Where the roof faces lie in shadow at one moment.

    Parameters
    ----------
    project : layout.project.Project
        Its faces, obstructions, far horizon and site.
    when : pandas.Timestamp
        Tz-aware moment.
    spacing_m : float, keyword-only
        Grid spacing of the ray test on the faces, in plan [m].

    Returns
    -------
    Shadows
    """
    position = solar_position(project.site, pd.DatetimeIndex([when]))
    azimuth = float(position["azimuth"].iloc[0])
    elevation = float(position["apparent_elevation"].iloc[0])
    if elevation <= 0:
        return Shadows(when, azimuth, elevation, shapely.Polygon())
    sun = sun_vectors([azimuth], [elevation])
    casters = scene_casters(project)
    step = float(spacing_m)
    points, cells, faces = [], [], []
    for face in project.faces:
        polygon = face.plan_polygon
        x0, y0, x1, y1 = polygon.bounds
        i, j = np.meshgrid(np.arange(int(np.floor(x0 / step)), int(np.ceil(x1 / step))),
                           np.arange(int(np.floor(y0 / step)), int(np.ceil(y1 / step))),
                           indexing="ij")
        i, j = i.ravel(), j.ravel()
        inside = shapely.contains_xy(polygon, (i + 0.5) * step, (j + 0.5) * step)
        if not inside.any():
            continue
        i, j = i[inside], j[inside]
        points.append(face.plan_to_3d(np.column_stack([(i + 0.5) * step, (j + 0.5) * step])))
        cells.append(shapely.box(i * step, j * step, (i + 1) * step, (j + 1) * step))
        faces.append(polygon)
    if not points:
        return Shadows(when, azimuth, elevation, shapely.Polygon())
    dark = shaded(np.vstack(points), sun, casters)[0]
    parts, start = [], 0
    for boxes, polygon in zip(cells, faces, strict=True):
        mine = dark[start:start + len(boxes)]
        start += len(boxes)
        if mine.any():  # the cells tile the grid exactly, so a coverage union is enough
            parts.append(shapely.intersection(shapely.coverage_union_all(boxes[mine]),
                                              polygon))
    outline = shapely.union_all(parts) if parts else shapely.Polygon()
    return Shadows(when, azimuth, elevation, outline)


def _clock(minute: int) -> str:
    return f"{minute // 60:02d}:{minute % 60:02d}"


class Timeline(w.VBox):
    """Day buttons (solstices, equinoxes), a clock slider and a play button.

    Parameters
    ----------
    year : int, keyword-only
        Calendar year of the days.

    Notes
    -----
    :meth:`on_change` callbacks get the chosen moment (a naive :class:`pandas.Timestamp`, the
    site's clock) or None when shadows are switched off.
    """

    def __init__(self, *, year: int = TYPICAL_YEAR):
        self.year = int(year)
        self._changed: list[Callable] = []
        self.enabled = w.ToggleButton(value=False, description="Shadows",
                                      tooltip="Draw the shadows on the roof at this moment",
                                      layout=w.Layout(width="90px"))
        self.day = w.ToggleButtons(options=list(KEY_DAYS), value="21 Dec",
                                   style={"button_width": "64px"})
        minutes = list(range(FIRST_MINUTE, LAST_MINUTE + 1, STEP_MINUTES))
        self.clock = w.SelectionSlider(options=[(_clock(m), m) for m in minutes], value=9 * 60,
                                       description="", continuous_update=False,
                                       layout=w.Layout(width="260px"))
        self.play = w.Play(min=0, max=len(minutes) - 1, step=1, interval=700,
                           value=minutes.index(9 * 60), description="Play the day",
                           layout=w.Layout(width="auto"))
        w.jslink((self.play, "value"), (self.clock, "index"))
        self.readout = w.HTML()
        self.readout.add_class("eaveline-sun-readout")
        self.enabled.observe(self._changed_any, names="value")
        self.day.observe(self._day_chosen, names="value")
        self.clock.observe(self._clock_moved, names="value")
        self.play.observe(self._played, names="playing")
        self.add_class("eaveline-timeline")
        super().__init__([w.HBox([self.enabled, self.day, self.play, self.clock],
                                 layout=w.Layout(align_items="center")), self.readout])

    def on_change(self, callback: Callable) -> None:
        """Call ``callback(moment)`` when the moment changes or shadows are switched."""
        self._changed.append(callback)

    @property
    def moment(self) -> pd.Timestamp | None:
        """The chosen moment on the site's clock (naive), or None when shadows are off."""
        if not self.enabled.value:
            return None
        month, day = KEY_DAYS[self.day.value]
        minute = int(self.clock.value)
        return pd.Timestamp(self.year, month, day, minute // 60, minute % 60)

    def choose(self, day: str, clock: str) -> None:
        """Switch shadows on at ``day`` (a key of :data:`KEY_DAYS`) and ``clock`` ("09:00")."""
        hours, minutes = (int(part) for part in clock.split(":"))
        with self.hold_trait_notifications():
            self._quiet = True
            try:
                self.day.value = day
                self.clock.value = hours * 60 + minutes
                self.enabled.value = True
            finally:
                self._quiet = False
        self._emit()

    _quiet = False

    def _emit(self) -> None:
        if self._quiet:
            return
        for callback in self._changed:
            callback(self.moment)

    def _changed_any(self, change) -> None:
        self._emit()

    def _day_chosen(self, change) -> None:
        if not self.enabled.value:
            self.enabled.value = True  # emits
        else:
            self._emit()

    def _clock_moved(self, change) -> None:
        if self.enabled.value:
            self._emit()

    def _played(self, change) -> None:
        if change["new"] and not self.enabled.value:
            self.enabled.value = True

    def show_sun(self, shadows: Shadows | None) -> None:
        """Say where the sun stands at the moment drawn."""
        if shadows is None:
            self.readout.value = ("<span style='font-size:12px;color:#5d6b6a'>Pick a day or "
                                  "press play to draw the shadows on the roof.</span>")
        elif not shadows.sun_up:
            self.readout.value = (f"<span style='font-size:12px;color:#5d6b6a'>"
                                  f"{shadows.when:%d %b %H:%M}: the sun is down.</span>")
        else:
            self.readout.value = (
                f"<span style='font-size:12px;color:#5d6b6a'>{shadows.when:%d %b %H:%M}: sun "
                f"at azimuth {shadows.azimuth_deg:.0f}°, elevation "
                f"{shadows.elevation_deg:.0f}°; shadows on the roof faces drawn dark.</span>")
