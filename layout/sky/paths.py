"""Sun paths for charts: the sun's track across the sky on the 21st of every month.

The positions come from :func:`layout.sky.sun.solar_position`; this module only picks the days
and splits each path where it crosses north, so that a chart draws it without a jump. The
planner's sky chart and the shade report draw the same paths.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from .sun import TYPICAL_YEAR, solar_position

__all__ = ["KEY_PATHS", "MONTH_NAMES", "PATH_DAY", "SunPath", "sun_paths"]

#: Days whose sun path is drawn: the 21st of each month (common practice for sun-path charts).
PATH_DAY = 21
#: Paths drawn bold and labelled: the two solstices and the equinox (21 Jun, 21 Dec, 21 Mar;
#: within a day or two of the astronomical dates, from memory).
KEY_PATHS = {6: "21 Jun", 12: "21 Dec", 3: "21 Mar / Sep"}
MONTH_NAMES = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov",
               "Dec")


@dataclass(frozen=True)
class SunPath:
    """The sun's path over one day, above the horizon only.

    Attributes
    ----------
    label : str
        ``"21 Jun"`` ...
    month : int
        Calendar month 1-12.
    azimuth_deg, elevation_deg : numpy.ndarray
        Sun azimuth (clockwise from north) and apparent elevation [degrees]; NaN elevations
        split the path where it crosses north (azimuth 0 / 360).
    hours : numpy.ndarray
        Local clock hour of each point [h].
    """

    label: str
    month: int
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    hours: np.ndarray


def sun_paths(site, *, year: int = TYPICAL_YEAR, step_minutes: int = 10) -> list[SunPath]:
    """Sun paths of the 21st of every month at a site, from :func:`layout.sky.sun.solar_position`.

    Parameters
    ----------
    site : layout.scene.site.Site
        The site.
    year : int, keyword-only
        Calendar year of the dates [year].
    step_minutes : int, keyword-only, default 10
        Spacing of the points along each path [minutes].

    Returns
    -------
    list of SunPath
        January to December.
    """
    paths = []
    per_day = 24 * 60 // int(step_minutes)
    for month in range(1, 13):
        start = pd.Timestamp(year, month, PATH_DAY).tz_localize(site.timezone)
        times = pd.date_range(start, periods=per_day + 1, freq=f"{int(step_minutes)}min")
        position = solar_position(site, times)
        up = position["sun_up"].to_numpy()
        az = position["azimuth"].to_numpy()[up]
        el = position["apparent_elevation"].to_numpy()[up].copy()
        hours = (times.hour + times.minute / 60.0).to_numpy()[up]
        if len(az) > 1:  # break the line where it wraps across north
            wrap = np.flatnonzero(np.abs(np.diff(az)) > 180.0) + 1
            az = np.insert(az, wrap, np.nan)
            el = np.insert(el, wrap, np.nan)
            hours = np.insert(hours, wrap, np.nan)
        paths.append(SunPath(label=f"{PATH_DAY} {MONTH_NAMES[month - 1]}", month=month,
                             azimuth_deg=az, elevation_deg=el, hours=hours))
    return paths
