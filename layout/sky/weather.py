"""Weather for a site: pvlib's clear sky by default, or a typical-year weather file.

Every source ends up as one :class:`Weather`: a table of ``ghi``, ``dni``, ``dhi`` [W/m²],
``temp_air`` [°C], ``wind_speed`` [m/s] and ``albedo`` [fraction], indexed by **sun time**:
the tz-aware middle of each interval, where the sun is taken (see :mod:`layout.sky.sun`). The solar
position at those times is computed once, here, and kept beside the table, so that clear sky,
transposition and shading all use the same sun.

Timestamp labels
----------------
Weather files label each hourly interval differently. Each label is converted once, on
reading, and never again:

========  =========================================  ==========================
format    label of the interval 00:00-01:00          sun time
========  =========================================  ==========================
TMY3      01:00 (end of the hour), kept by pvlib      pvlib index - 30 min
TMY2      hour 1, relabelled by pvlib to 00:00        pvlib index + 30 min
EPW       hour 1, relabelled by pvlib to 00:00        pvlib index + 30 min
========  =========================================  ==========================

Typical-year files stitch months of different years together; every timestamp is moved into
one calendar year (``year``, default 2023, a common year). Files are kept in the fixed UTC
offset of their header (local standard time); when a project site overrides the file's site,
the index is converted to the site's zone (the same instants).

Clear sky
---------
Without a file, the clear sky of Ineichen and Perez (2002) with the monthly Linke turbidity
table pvlib ships (Remund et al. 2003) gives ``ghi``, ``dni`` and ``dhi``; it needs no network.
A clear sky every day overstates the beam and therefore the shade loss: a typical-year file
gives the realistic figure (:data:`CLEAR_SKY_CAVEAT`).

References
----------
.. [1] P. Ineichen and R. Perez, "A new airmass independent formulation for the Linke
   turbidity coefficient", Solar Energy 73(3):151-157, 2002.
.. [2] J. Remund, L. Wald, M. Lefèvre, T. Ranchin and J. Page, "Worldwide Linke turbidity
   information", Proc. ISES Solar World Congress, Göteborg, 2003.
.. [3] S. Wilcox and W. Marion, "Users Manual for TMY3 Data Sets", NREL/TP-581-43156, 2008.
.. [4] W. Marion and K. Urban, "User's Manual for TMY2s", NREL, 1995.
.. [5] EnergyPlus, "Auxiliary Programs", chapter "Weather Converter Program" (EPW format).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pvlib

from ..errors import InputError, check_range, check_whole
from ..scene.site import Site
from .sun import TYPICAL_YEAR, solar_position, typical_year_index

__all__ = [
    "CLEAR_SKY_CAVEAT",
    "DEFAULT_ALBEDO",
    "DEFAULT_TEMP_AIR",
    "DEFAULT_WIND_SPEED",
    "FILE_CAVEAT",
    "FILE_KINDS",
    "LABEL_SHIFT",
    "MAX_STATION_DISTANCE_KM",
    "Weather",
    "clear_sky",
    "read_weather_file",
]

#: Ground albedo used where a source gives none [fraction]: pvlib's default in
#: :func:`pvlib.irradiance.get_total_irradiance`, a value for grass and mixed ground
#: (common practice).
DEFAULT_ALBEDO = 0.25

#: Air temperature used where a source gives none [°C]: pvlib's ModelChain default.
DEFAULT_TEMP_AIR = 20.0

#: Wind speed used where a source gives none [m/s]: pvlib's ModelChain default (still air,
#: the warm side for cell temperature).
DEFAULT_WIND_SPEED = 0.0

#: File formats read, with the pvlib reader of each.
FILE_KINDS = ("tmy3", "tmy2", "epw")

#: Shift from the pvlib reader's index to the sun time (middle of the interval), per format.
LABEL_SHIFT = {
    "tmy3": pd.Timedelta(minutes=-30),  # labelled at the end of the hour [3]
    "tmy2": pd.Timedelta(minutes=30),  # pvlib relabels hour h to h - 1, the start
    "epw": pd.Timedelta(minutes=30),  # pvlib relabels hour h to h - 1, the start
}

#: Said beside every clear-sky result.
CLEAR_SKY_CAVEAT = (
    "Clear sky every day (Ineichen model, pvlib's Linke turbidity table): it overstates the "
    "direct beam and therefore the shade loss; a typical-year weather file (TMY3, TMY2 or EPW) "
    "gives the realistic figure."
)

#: Said beside every result from a weather file.
FILE_CAVEAT = (
    "Typical-year weather file: a typical year, not a forecast; single years vary by several "
    "percent around it."
)

_COLUMNS = ("ghi", "dni", "dhi", "temp_air", "wind_speed", "albedo")
_EXTENSIONS = {".csv": "tmy3", ".tm2": "tmy2", ".epw": "epw"}


@dataclass(frozen=True, eq=False)
class Weather:
    """Weather and sun for one site and one year. Computed, never saved.

    Attributes
    ----------
    data : pandas.DataFrame
        Indexed by sun time (tz-aware, middle of each interval), columns ``ghi``, ``dni``,
        ``dhi`` [W/m²], ``temp_air`` [°C], ``wind_speed`` [m/s], ``albedo`` [fraction].
    solar_position : pandas.DataFrame
        Same index: ``apparent_zenith``, ``zenith``, ``apparent_elevation``, ``azimuth``
        [degrees], ``sun_up`` (bool), ``dni_extra`` [W/m²] and ``airmass_relative`` (NaN with
        the sun down), from :func:`layout.sky.sun.solar_position` and pvlib.
    site : layout.scene.site.Site
        The site the sun was computed for.
    source : str
        Where the data came from, for the report (``"clear sky (Ineichen)"`` or the file).
    is_clear_sky : bool
        True for the default clear sky.
    step_minutes : int or float
        Length of each interval [minutes]; the time each step stands for in a sample of the
        year (:meth:`sampled`, not a whole number).
    notes : tuple of str
        What was converted or assumed while reading (label shift, defaults filled in).
    """

    data: pd.DataFrame
    solar_position: pd.DataFrame
    site: Site
    source: str
    is_clear_sky: bool
    step_minutes: int
    notes: tuple[str, ...] = field(default=())

    @property
    def times(self) -> pd.DatetimeIndex:
        """Sun times: the tz-aware middle of each interval."""
        return self.data.index

    @property
    def caveat(self) -> str:
        """What the user must know about this source before quoting a figure."""
        return CLEAR_SKY_CAVEAT if self.is_clear_sky else FILE_CAVEAT

    def annual_kwh_m2(self, column: str = "ghi") -> float:
        """Total of an irradiance column over the data [kWh/m²]."""
        if column not in ("ghi", "dni", "dhi"):
            raise InputError("column", "is not an irradiance column", value=column,
                             allowed="ghi, dni, dhi")
        return float(self.data[column].sum()) * self.step_minutes / 60.0 / 1000.0

    def sampled(self, every_days: int) -> Weather:
        """Return one day in ``every_days`` of this weather, each step standing for that many.

        The days kept are those whose day of the year is a multiple of ``every_days`` (Jan 1
        is day 0), whole, at every step; :attr:`step_minutes` becomes the time each kept step
        stands for, the year's steps over the steps kept (about ``every_days`` times the
        step, and not a whole number), so that energy summed over the sample estimates the
        whole year's. A quick approximation for live previews, never for a quoted figure:
        the source says so.

        Parameters
        ----------
        every_days : int
            1 to 24 (one day in 24 still spreads 15 days over the year).
        """
        every_days = check_whole("every_days", every_days, 1, 24,
                                 problem="must be a whole number of days")
        if every_days == 1:
            return self
        keep = (self.data.index.dayofyear.to_numpy() - 1) % int(every_days) == 0
        return Weather(data=self.data[keep], solar_position=self.solar_position[keep],
                       site=self.site,
                       source=f"{self.source}, one day in {int(every_days)} (a preview)",
                       is_clear_sky=self.is_clear_sky,
                       step_minutes=self.step_minutes * len(keep) / int(keep.sum()),
                       notes=self.notes)

    def summary(self) -> dict:
        """Plain-data description for a report: source, site, caveat, totals."""
        return {
            "source": self.source, "is_clear_sky": self.is_clear_sky,
            "site": self.site.to_dict(), "step_minutes": self.step_minutes,
            "steps": len(self.data), "ghi_kwh_m2": self.annual_kwh_m2("ghi"),
            "dni_kwh_m2": self.annual_kwh_m2("dni"), "dhi_kwh_m2": self.annual_kwh_m2("dhi"),
            "caveat": self.caveat, "notes": list(self.notes),
        }


# --------------------------------------------------------------------------- sun
def _sun(site: Site, times: pd.DatetimeIndex) -> pd.DataFrame:
    """Solar position, extraterrestrial DNI and relative airmass at the sun times."""
    position = solar_position(site, times)
    position["dni_extra"] = pvlib.irradiance.get_extra_radiation(times).to_numpy()
    zenith = position["apparent_zenith"].to_numpy()
    with np.errstate(invalid="ignore"):
        airmass = pvlib.atmosphere.get_relative_airmass(zenith)
    position["airmass_relative"] = np.where(position["sun_up"].to_numpy(), airmass, np.nan)
    return position


# --------------------------------------------------------------------------- clear sky
def clear_sky(site: Site, *, step_minutes: int = 60, year: int = TYPICAL_YEAR,
              temp_air: float = DEFAULT_TEMP_AIR, wind_speed: float = DEFAULT_WIND_SPEED,
              albedo: float = DEFAULT_ALBEDO) -> Weather:
    """Return a clear-sky year at the site (Ineichen, pvlib's Linke turbidity table).

    Parameters
    ----------
    site : layout.scene.site.Site
        The site; its altitude sets the pressure of the clear-sky model.
    step_minutes : int, keyword-only, default 60
        Interval length [minutes], a divisor of a day.
    year : int, keyword-only, default 2023
        Calendar year (a common year by default).
    temp_air : float, keyword-only, default 20
        Air temperature used all year [°C] (pvlib's ModelChain default).
    wind_speed : float, keyword-only, default 0
        Wind speed used all year [m/s] (pvlib's ModelChain default).
    albedo : float, keyword-only, default 0.25
        Ground albedo [fraction].

    Returns
    -------
    Weather
        ``is_clear_sky=True``; see :data:`CLEAR_SKY_CAVEAT`.
    """
    if not isinstance(site, Site):
        raise InputError("site", "must be a layout.scene.site.Site", value=type(site).__name__)
    temp_air = check_range("temp_air", temp_air, -60, 60, unit="°C")
    wind_speed = check_range("wind_speed", wind_speed, 0, 60, unit="m/s")
    albedo = check_range("albedo", albedo, 0, 1)
    times = typical_year_index(site, step_minutes, year=year)
    sun = _sun(site, times)
    # the zone only matters for naive times; ours are tz-aware
    location = pvlib.location.Location(site.latitude, site.longitude, tz="UTC",
                                       altitude=site.altitude_m)
    # one solar position for everything: pvlib takes apparent_zenith from it
    sky = location.get_clearsky(times, model="ineichen", solar_position=sun,
                                dni_extra=sun["dni_extra"])
    data = pd.DataFrame({
        "ghi": sky["ghi"].to_numpy(), "dni": sky["dni"].to_numpy(),
        "dhi": sky["dhi"].to_numpy(), "temp_air": temp_air, "wind_speed": wind_speed,
        "albedo": albedo,
    }, index=times)
    notes = (f"air temperature {temp_air:g} °C and wind {wind_speed:g} m/s all year "
             "(no weather file)",)
    return Weather(data=data, solar_position=sun, site=site, source="clear sky (Ineichen)",
                   is_clear_sky=True, step_minutes=int(step_minutes), notes=notes)


# --------------------------------------------------------------------------- files
def _offset_name(hours: float) -> str:
    """Return a fixed-offset zone name for :class:`Site` from a header offset in hours."""
    total = round(hours * 60)
    sign = "-" if total < 0 else "+"
    h, m = divmod(abs(total), 60)
    return f"UTC{sign}{h:02d}:{m:02d}"


def _one_year(index: pd.DatetimeIndex, year: int) -> pd.DatetimeIndex:
    """Move every timestamp into ``year``, keeping month, day and clock time and the zone."""
    naive = index.tz_localize(None)
    moved = pd.to_datetime(pd.DataFrame({
        "year": year, "month": naive.month, "day": naive.day, "hour": naive.hour,
        "minute": naive.minute,
    }))
    return pd.DatetimeIndex(moved).tz_localize(index.tz)


def _read_raw(path: str, kind: str, year: int):
    """Read with pvlib; return (frame with our columns, header site dict, pvlib index)."""
    if kind == "tmy3":
        raw, meta = pvlib.iotools.read_tmy3(path, coerce_year=year, map_variables=True)
        frame = pd.DataFrame({"ghi": raw["ghi"], "dni": raw["dni"], "dhi": raw["dhi"],
                              "temp_air": raw["temp_air"], "wind_speed": raw["wind_speed"],
                              "albedo": raw["albedo"]})
        header = {"latitude": meta["latitude"], "longitude": meta["longitude"],
                  "altitude_m": meta["altitude"], "tz": meta["TZ"],
                  "name": str(meta.get("Name", "")).strip('"')}
    elif kind == "tmy2":
        raw, meta = pvlib.iotools.read_tmy2(path)
        # TMY2 stores temperature and wind speed in tenths [4]; pvlib keeps them as read
        frame = pd.DataFrame({"ghi": raw["GHI"], "dni": raw["DNI"], "dhi": raw["DHI"],
                              "temp_air": raw["DryBulb"] / 10.0, "wind_speed": raw["Wspd"] / 10.0,
                              "albedo": np.nan}, index=raw.index)
        frame.index = _one_year(raw.index, year)
        header = {"latitude": meta["latitude"], "longitude": meta["longitude"],
                  "altitude_m": meta["altitude"], "tz": meta["TZ"],
                  "name": str(meta.get("City", "")).strip()}
    else:
        raw, meta = pvlib.iotools.read_epw(path, coerce_year=year)
        frame = pd.DataFrame({"ghi": raw["ghi"], "dni": raw["dni"], "dhi": raw["dhi"],
                              "temp_air": raw["temp_air"], "wind_speed": raw["wind_speed"],
                              "albedo": raw["albedo"]})
        header = {"latitude": meta["latitude"], "longitude": meta["longitude"],
                  "altitude_m": meta["altitude"], "tz": meta["TZ"],
                  "name": str(meta.get("city", "")).strip()}
    return frame, header


def read_weather_file(path, *, kind: str | None = None, site: Site | None = None,
                      year: int = TYPICAL_YEAR, albedo: float | None = None) -> Weather:
    """Read a TMY3, TMY2 or EPW file with pvlib's reader and convert its labels once.

    Parameters
    ----------
    path : str or os.PathLike
        The weather file.
    kind : {"tmy3", "tmy2", "epw"}, keyword-only, optional
        File format; default from the extension (``.csv`` TMY3, ``.tm2`` TMY2, ``.epw``).
    site : layout.scene.site.Site, keyword-only, optional
        Overrides the site of the file's header (latitude, longitude, altitude, zone). The
        weather values are used as they are; a note warns when the station is more than
        100 km away, and a station beyond :data:`MAX_STATION_DISTANCE_KM` is refused.
    year : int, keyword-only, default 2023
        Calendar year every timestamp is moved into (typical-year files mix years).
    albedo : float, keyword-only, optional
        Ground albedo for every step [fraction]; default: the file's own values where they lie
        in 0-1, else :data:`DEFAULT_ALBEDO`.

    Returns
    -------
    Weather
        Indexed by sun time (middle of each interval); see the module docstring for the
        shift applied to each format.

    Raises
    ------
    InputError
        If the file is missing, of an unknown kind, or cannot be read.
    """
    text = os.fspath(path)
    if kind is None:
        kind = _EXTENSIONS.get(os.path.splitext(text)[1].lower())
        if kind is None:
            raise InputError("weather", "cannot tell the file format from the extension",
                             value=text, allowed="a .csv (TMY3), .tm2 (TMY2) or .epw file, "
                             "or give kind")
    if kind not in FILE_KINDS:
        raise InputError("kind", "unknown weather file format", value=kind,
                         allowed=", ".join(FILE_KINDS))
    if not os.path.isfile(text):
        raise InputError("weather", "file not found", value=text)
    year = check_whole("year", year, 1901, 2099, problem="is out of range")
    if albedo is not None:
        albedo = check_range("albedo", albedo, 0, 1)
    try:
        frame, header = _read_raw(text, kind, int(year))
    except (ValueError, KeyError, IndexError, UnicodeDecodeError) as err:
        raise InputError("weather", f"is not a readable {kind.upper()} file ({err})",
                         value=text) from None

    file_site = Site(latitude=header["latitude"], longitude=header["longitude"],
                     timezone=_offset_name(header["tz"]),
                     altitude_m=min(max(header["altitude_m"], -500.0), 9000.0),
                     name=header["name"])
    notes = [f"{kind.upper()} labels moved by {LABEL_SHIFT[kind].total_seconds() / 60:+.0f} min "
             "to the middle of each hour (sun time)",
             f"timestamps moved into {int(year)} (typical-year months come from several years)"]
    if site is None:
        site = file_site
    else:
        if not isinstance(site, Site):
            raise InputError("site", "must be a layout.scene.site.Site", value=type(site).__name__)
        distance_km = _distance_km(site, file_site)
        if distance_km > MAX_STATION_DISTANCE_KM:
            raise InputError(
                "weather_file",
                f"its station ({file_site.name or 'unnamed'}) is {distance_km:.0f} km from the "
                "site, so its hours of sun and the site's would be out of step",
                value=text,
                allowed=f"a file whose station lies within {MAX_STATION_DISTANCE_KM:.0f} km of "
                        "the site, or the file's own site")
        if distance_km > 100.0:
            notes.append(f"the weather file's station ({file_site.name}) is {distance_km:.0f} km "
                         "from the site")
    frame.index = frame.index + LABEL_SHIFT[kind]
    frame = frame[~frame.index.duplicated(keep="first")].sort_index()
    frame.index = frame.index.tz_convert(site.tzinfo)
    frame.index.freq = None

    for column in ("ghi", "dni", "dhi"):
        values = frame[column].to_numpy(dtype=float)
        bad = ~np.isfinite(values) | (values < 0)
        if bad.any():
            notes.append(f"{int(bad.sum())} missing or negative {column} values set to 0")
            frame[column] = np.where(bad, 0.0, values)
    if albedo is None:
        values = frame["albedo"].to_numpy(dtype=float)
        valid = np.isfinite(values) & (values > 0) & (values < 1)
        if not valid.all():
            notes.append(f"albedo {DEFAULT_ALBEDO:g} where the file gives none "
                         f"({int((~valid).sum())} steps)")
        frame["albedo"] = np.where(valid, values, DEFAULT_ALBEDO)
    else:
        frame["albedo"] = albedo
    for column, default, low, high in (("temp_air", DEFAULT_TEMP_AIR, -90, 70),
                                       ("wind_speed", DEFAULT_WIND_SPEED, 0, 100)):
        values = frame[column].to_numpy(dtype=float)
        bad = ~np.isfinite(values) | (values < low) | (values > high)
        if bad.any():
            notes.append(f"{int(bad.sum())} missing {column} values set to {default:g}")
            frame[column] = np.where(bad, default, values)
    frame = frame[list(_COLUMNS)].astype(float)
    sun = _sun(site, frame.index)
    step = frame.index.to_series().diff().median()
    step_minutes = 60 if pd.isna(step) else round(step.total_seconds() / 60)
    source = f"{kind.upper()} file {os.path.basename(text)}"
    if header["name"]:
        source += f" ({header['name']})"
    return Weather(data=frame, solar_position=sun, site=site, source=source,
                   is_clear_sky=False, step_minutes=step_minutes, notes=tuple(notes))


#: Farthest a weather file's station may lie from the site it is used for [km]. Beyond it the
#: file's hourly sun (its local solar time moves 4 minutes per degree of longitude) and the
#: site's drift apart by more than a quarter of an hour at mid-latitudes, and the climate is
#: another one (our rule; typical-year stations are rarely farther apart than this).
MAX_STATION_DISTANCE_KM = 250.0


def _distance_km(a: Site, b: Site) -> float:
    """Great-circle distance between two sites [km] (haversine, mean Earth radius 6371 km)."""
    p1, p2 = math.radians(a.latitude), math.radians(b.latitude)
    dp, dl = p2 - p1, math.radians(b.longitude - a.longitude)
    h = math.sin(dp / 2) ** 2 + math.cos(p1) * math.cos(p2) * math.sin(dl / 2) ** 2
    return 2 * 6371.0 * math.asin(min(1.0, math.sqrt(h)))

