"""Where the sun is: solar positions for a site and period, and unit vectors toward it.

Positions come from pvlib's implementation of the NREL Solar Position Algorithm (Reda & Andreas
2004) with the site's altitude and the matching standard pressure passed in, so that pvlib never
looks either up on its own. Angles are degrees; azimuth is clockwise from north (180 = south),
as pvlib gives it.

Vectors are in the site frame: x east, y north, z up. The unit vector toward a sun at azimuth
``A`` and elevation ``e`` is ``(cos e · sin A, cos e · cos A, sin e)``.

Time: a tz-aware :class:`pandas.DatetimeIndex`. For interval data the sun is taken at the middle
of the interval; :func:`typical_year_index` builds such mid-interval times directly.

References
----------
.. [1] I. Reda and A. Andreas, "Solar position algorithm for solar radiation applications",
   Solar Energy 76(5):577-589, 2004; NREL/TP-560-34302.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pvlib

from ..errors import InputError, check_range, check_whole
from ..scene.site import Site

__all__ = [
    "SunSample",
    "solar_position",
    "sun_above_horizon",
    "sun_vectors",
    "typical_year_index",
]

#: Year used for a typical year unless told otherwise: a common (non-leap) year, 8760 hours.
TYPICAL_YEAR = 2023


def _check_times(times) -> pd.DatetimeIndex:
    if not isinstance(times, pd.DatetimeIndex):
        raise InputError("times", "must be a pandas DatetimeIndex", value=type(times).__name__,
                         allowed="a tz-aware DatetimeIndex")
    if times.tz is None:
        # pvlib would silently take naive times as UTC (REFERENCES.md, pvlib gotchas)
        raise InputError("times", "has no time zone", allowed="a tz-aware DatetimeIndex")
    return times


def solar_position(site: Site, times, *, temperature: float = 12.0, pressure: float | None = None,
                   delta_t: float | None = None) -> pd.DataFrame:
    """Compute the sun's position seen from a site at each time.

    Parameters
    ----------
    site : layout.scene.site.Site
        Latitude, longitude and altitude of the site.
    times : pandas.DatetimeIndex
        Tz-aware times at which to take the sun (the middle of each interval for interval data).
    temperature : float, default 12
        Annual mean air temperature for the refraction correction [°C].
    pressure : float, optional
        Annual mean air pressure for the refraction correction [Pa]. Default: the standard
        pressure at the site's altitude, :func:`pvlib.atmosphere.alt2pres`.
    delta_t : float, optional
        Difference between terrestrial and universal time [s]; default: pvlib's estimate for
        the year.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``times``, with pvlib's columns ``apparent_elevation``, ``apparent_zenith``,
        ``elevation``, ``zenith`` and ``azimuth`` [degrees], and ``sun_up`` (bool): True where
        the apparent elevation is above zero.
    """
    times = _check_times(times)
    if not isinstance(site, Site):
        raise InputError("site", "must be a layout.scene.site.Site", value=type(site).__name__)
    temperature = check_range("temperature", temperature, -90, 60, unit="°C")
    if pressure is None:
        pressure = float(pvlib.atmosphere.alt2pres(site.altitude_m))
    else:
        pressure = check_range("pressure", pressure, 30_000, 110_000, unit="Pa")
    kwargs = {} if delta_t is None else {"delta_t": check_range("delta_t", delta_t, -1e4, 1e4,
                                                                unit="s")}
    frame = pvlib.solarposition.get_solarposition(
        times, site.latitude, site.longitude, altitude=site.altitude_m, pressure=pressure,
        method="nrel_numpy", temperature=temperature, **kwargs,
    )
    out = frame[["apparent_elevation", "apparent_zenith", "elevation", "zenith", "azimuth"]].copy()
    out["sun_up"] = out["apparent_elevation"].to_numpy() > 0.0
    return out


def typical_year_index(site: Site, step_minutes: int = 60, *,
                       year: int = TYPICAL_YEAR) -> pd.DatetimeIndex:
    """Build the mid-interval times of one whole year at a fixed step, in the site's time zone.

    Interval ``i`` covers ``[start + i·step, start + (i + 1)·step)`` where ``start`` is local
    midnight on 1 January; its timestamp is the middle of the interval (00:30, 01:30, ... for
    hourly steps), where the sun is taken. The index is uniform in absolute time, so a zone
    with daylight saving still gets exactly 365 (or 366) days of steps.

    Parameters
    ----------
    site : layout.scene.site.Site
        Gives the time zone.
    step_minutes : int, default 60
        Length of each interval [minutes]; must divide a day (e.g. 60, 30, 15, 10, 5, 1).
    year : int, keyword-only, default 2023
        Calendar year, 1901 to 2099. The default is a common year (8760 hourly steps).

    Returns
    -------
    pandas.DatetimeIndex
        Tz-aware mid-interval times with ``freq`` equal to the step.
    """
    if isinstance(step_minutes, bool) or not isinstance(step_minutes, (int, np.integer)) \
            or not 1 <= step_minutes <= 1440 or 1440 % step_minutes:
        raise InputError("step_minutes", "must be whole minutes that divide a day",
                         value=step_minutes, allowed="1 to 1440, a divisor of 1440 (60, 30, 15)")
    year = check_whole("year", year, 1901, 2099, problem="is out of range")
    tz = site.tzinfo
    start = pd.Timestamp(int(year), 1, 1).tz_localize(tz)
    end = pd.Timestamp(int(year) + 1, 1, 1).tz_localize(tz)
    step = pd.Timedelta(minutes=int(step_minutes))
    periods = int((end - start) / step)
    return pd.date_range(start + step / 2, periods=periods, freq=step)


def sun_vectors(azimuth_deg, elevation_deg) -> np.ndarray:
    """Return unit vectors toward the sun in the site frame (x east, y north, z up).

    Parameters
    ----------
    azimuth_deg : array_like, shape (T,)
        Sun azimuth, clockwise from north [degrees].
    elevation_deg : array_like, shape (T,)
        Sun elevation above the horizon [degrees] (use the apparent elevation).

    Returns
    -------
    numpy.ndarray, shape (T, 3)
        ``(cos e · sin A, cos e · cos A, sin e)`` per row.
    """
    az = np.radians(np.atleast_1d(np.asarray(azimuth_deg, dtype=float)))
    el = np.radians(np.atleast_1d(np.asarray(elevation_deg, dtype=float)))
    if az.shape != el.shape or az.ndim != 1:
        raise InputError("elevation_deg", "must match azimuth_deg in length",
                         value=el.shape, allowed=f"shape {az.shape}")
    cos_el = np.cos(el)
    return np.column_stack([cos_el * np.sin(az), cos_el * np.cos(az), np.sin(el)])


@dataclass(frozen=True)
class SunSample:
    """The sun-up steps of a period, ready for ray tests. Computed, never saved.

    Attributes
    ----------
    times : pandas.DatetimeIndex
        The whole period, night included.
    up : numpy.ndarray of bool, shape (len(times),)
        True where the sun's apparent elevation is above zero.
    azimuth_deg, elevation_deg : numpy.ndarray, shape (T,)
        Azimuth and apparent elevation of the sun-up steps only [degrees].
    vectors : numpy.ndarray, shape (T, 3)
        Unit vectors toward the sun for the sun-up steps, site frame.
    month : numpy.ndarray of int, shape (T,)
        Local calendar month (1-12) of each sun-up step, for monthly tree transmittance.
    """

    times: pd.DatetimeIndex
    up: np.ndarray
    azimuth_deg: np.ndarray
    elevation_deg: np.ndarray
    vectors: np.ndarray
    month: np.ndarray

    @property
    def up_times(self) -> pd.DatetimeIndex:
        """Times of the sun-up steps."""
        return self.times[self.up]

    def expand(self, values, *, fill=0.0) -> np.ndarray:
        """Spread per-sun-up-step ``values`` (T, ...) over the whole period, ``fill`` at night."""
        values = np.asarray(values)
        out = np.full((len(self.times), *values.shape[1:]), fill, dtype=np.result_type(values,
                                                                                        fill))
        out[self.up] = values
        return out


def sun_above_horizon(site: Site, times, **kwargs) -> SunSample:
    """Compute solar positions and keep the steps with the sun above the horizon.

    Parameters
    ----------
    site : layout.scene.site.Site
        The site.
    times : pandas.DatetimeIndex
        Tz-aware times (mid-interval for interval data), e.g. from :func:`typical_year_index`.
    **kwargs
        ``temperature``, ``pressure``, ``delta_t`` as in :func:`solar_position`.

    Returns
    -------
    SunSample
        The sun-up steps with their unit vectors.
    """
    position = solar_position(site, times, **kwargs)
    up = position["sun_up"].to_numpy()
    az = position["azimuth"].to_numpy()[up]
    el = position["apparent_elevation"].to_numpy()[up]
    return SunSample(times=times, up=up, azimuth_deg=az, elevation_deg=el,
                     vectors=sun_vectors(az, el), month=np.asarray(times.month)[up])
