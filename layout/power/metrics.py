"""What a designer quotes: energy, shade loss and the trade's solar-resource figures.

All figures come from arrays the rest of the core computed (power and irradiance per step and
module); this module only sums, divides and tabulates. Tables are pandas DataFrames with the
unit in every column name.

Definitions
-----------
energy
    Sum of power over the steps times the step length [kWh]; AC when the electrical options
    set an inverter efficiency, DC otherwise (the table's ``attrs["energy_basis"]`` says which).
shade loss
    ``1 − energy / unshaded energy`` [%], where the unshaded energy is the same module's energy
    with every obstruction removed (same plane, same weather, same electrical model).
solar access
    Plane-of-array insolation with shade over the same without shade, on the module's own
    plane [%] (before incidence-angle losses, as the trade measures it with a sky camera).
TOF (tilt and orientation factor)
    Unshaded plane-of-array insolation on the module's plane over that on the best plane at
    the site [%]; the best tilt and azimuth are found by search (:func:`best_orientation`).
TSRF (total solar resource fraction)
    ``solar access × TOF`` [%]: the share of the best unshaded resource the module receives.
    Incentive programmes commonly require 75–80 % per module or face (common practice).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import InputError, check_nonnegative, check_range
from ..sky.weather import Weather
from .transposition import plane_insolation, plane_of_array

__all__ = [
    "COMPARISON_COLUMNS",
    "DEFAULT_TSRF_THRESHOLD_PCT",
    "BestOrientation",
    "best_orientation",
    "comparison_table",
    "empty_module_table",
    "energy_kwh",
    "face_table",
    "layout_totals",
    "module_table",
    "month_hour_loss",
    "monthly_solar_access",
    "monthly_table",
    "worst_modules",
]

#: TSRF below which a module is flagged [%] (incentive programmes ask 75–80 %; common practice).
DEFAULT_TSRF_THRESHOLD_PCT = 75.0


@dataclass(frozen=True)
class BestOrientation:
    """The unshaded plane that collects the most insolation over the weather's period.

    Attributes
    ----------
    surface_tilt, surface_azimuth : float
        The best plane [degrees].
    insolation_kwh_m2 : float
        Its plane-of-array insolation over the period [kWh/m²].
    """

    surface_tilt: float
    surface_azimuth: float
    insolation_kwh_m2: float


def _insolation(weather: Weather, tilt: float, azimuth: float, model: str) -> float:
    frame = plane_of_array(weather, tilt, azimuth, model=model)
    return float(frame["poa_global"].clip(lower=0).sum()) * weather.step_minutes / 60.0 / 1000.0


#: Grid spacings (tilt, azimuth) [degrees] of the refinement steps of the best-plane search,
#: each a 5 × 5 grid around the best plane so far.
_SEARCH_STEPS = ((5.0, 12.0), (2.0, 5.0), (0.8, 2.0), (0.3, 0.8), (0.12, 0.3), (0.05, 0.12))


def best_orientation(weather: Weather, *, model: str = "perez") -> BestOrientation:
    """Find the tilt and azimuth that collect the most unshaded plane-of-array insolation.

    A coarse scan (tilt every 10°, azimuth every 30° over the equator-facing half) picks the
    start; then 5 × 5 grids of ever finer spacing, each centred on the best plane so far,
    refine it to about 0.05° in tilt and 0.1° in azimuth. Every grid is one vectorised call
    of pvlib's transposition (:func:`layout.power.transposition.plane_insolation`).

    Parameters
    ----------
    weather : layout.sky.weather.Weather
        Weather and sun of the site.
    model : str, keyword-only, default "perez"
        Sky diffuse model, as in :func:`layout.power.transposition.plane_of_array`.

    Returns
    -------
    BestOrientation
    """
    if not isinstance(weather, Weather):
        raise InputError("weather", "must be a layout.sky.weather.Weather",
                         value=type(weather).__name__)
    equator = 180.0 if weather.site.latitude >= 0 else 0.0
    tilts, azimuths = np.meshgrid(np.arange(0.0, 81.0, 10.0),
                                  (equator + np.arange(-60.0, 61.0, 30.0)) % 360.0)
    tilts, azimuths = tilts.ravel(), azimuths.ravel()
    values = plane_insolation(weather, tilts, azimuths, model=model)
    best = int(np.argmax(values))
    tilt, azimuth, insolation = tilts[best], azimuths[best], values[best]
    offsets = np.arange(-2.0, 3.0)
    for d_tilt, d_azimuth in _SEARCH_STEPS:
        grid_t, grid_a = np.meshgrid(np.clip(tilt + d_tilt * offsets, 0.0, 90.0),
                                     (azimuth + d_azimuth * offsets) % 360.0)
        grid_t, grid_a = grid_t.ravel(), grid_a.ravel()
        values = plane_insolation(weather, grid_t, grid_a, model=model)
        best = int(np.argmax(values))
        if values[best] > insolation:
            tilt, azimuth, insolation = grid_t[best], grid_a[best], values[best]
    return BestOrientation(float(tilt), float(azimuth), float(insolation))


def energy_kwh(power_w, step_minutes: float, *, axis: int = 0) -> np.ndarray:
    """Sum power over steps into energy.

    Parameters
    ----------
    power_w : array_like
        Power per step [W].
    step_minutes : float
        Length of a step [minutes].
    axis : int, keyword-only, default 0
        The time axis.

    Returns
    -------
    numpy.ndarray
        Energy [kWh].
    """
    step = check_range("step_minutes", step_minutes, 0, 1440, low_open=True)
    power = np.asarray(power_w, dtype=float)
    # a plain sum, the very sum nansum takes where nothing is missing (nansum copies the
    # array first); nansum only where some step is missing (NaN counts as no power)
    total = np.sum(power, axis=axis)
    if not np.isnan(total).any():
        return total * step / 60.0 / 1000.0
    if power.ndim == 2 and axis in (0, -2) and power.size > _SUM_BLOCK:
        # column by column block (each column's sum is the same), so that nansum's copy
        # without NaN is one block, not the whole (T, M) array
        block = max(1, _SUM_BLOCK // len(power))
        total = np.concatenate([np.nansum(power[:, lo:lo + block], axis=0)
                                for lo in range(0, power.shape[1], block)])
    else:
        total = np.nansum(power, axis=axis)
    return total * step / 60.0 / 1000.0


#: Values summed at once by :func:`energy_kwh` (nansum copies what it sums).
_SUM_BLOCK = 1 << 23


def _energy_arrays(power):
    if power.ac_w is not None:
        return power.ac_w, power.ac_unshaded_w, "AC"
    return power.dc_w, power.dc_unshaded_w, "DC"


def _percent(numerator, denominator):
    numerator = np.asarray(numerator, dtype=float)
    denominator = np.asarray(denominator, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(denominator > 0, 100.0 * numerator / denominator, np.nan)


def module_table(power, irradiance, modules, *, step_minutes: float,
                 best: BestOrientation) -> pd.DataFrame:
    """Per-module annual figures.

    Parameters
    ----------
    power : layout.power.electrical.DcPower
        Power per step and module, with and without shade.
    irradiance : layout.power.irradiance.ModuleIrradiance
        Plane-of-array irradiance per step and module, with and without shade.
    modules : sequence of layout.fill.placed.PlacedModule
        The modules, in the column order of ``power`` and ``irradiance``.
    step_minutes : float, keyword-only
        Length of a step [minutes].
    best : BestOrientation, keyword-only
        The site's best unshaded plane, for TOF.

    Returns
    -------
    pandas.DataFrame
        Indexed by module id: ``face``, ``row``, ``column`` (counted from the eave and from
        the left, as :class:`~layout.fill.placed.PlacedModule` numbers them), ``orientation``,
        ``surface_tilt``,
        ``surface_azimuth`` [degrees], ``energy_kwh``, ``energy_unshaded_kwh``,
        ``shade_loss_pct``, ``poa_kwh_m2``, ``poa_unshaded_kwh_m2``, ``solar_access_pct``,
        ``tof_pct``, ``tsrf_pct``. ``attrs["energy_basis"]`` is "AC" or "DC".
    """
    modules = tuple(modules)
    shaded_w, basis = (power.dc_w, "DC") if power.ac_w is None else (power.ac_w, "AC")
    if shaded_w.shape[1] != len(modules):
        raise InputError("modules", "must match the power columns", value=len(modules),
                         allowed=str(shaded_w.shape[1]))
    energy = energy_kwh(shaded_w, step_minutes)
    if basis == "DC" and power.group is not None:
        # per plane, then per module: the sums of dc_unshaded_w's columns (laid out column
        # by column, each its plane's), without gathering a (T, M) array
        unshaded = energy_kwh(np.asfortranarray(power.unshaded_w), step_minutes)[power.group]
    else:
        unshaded = energy_kwh(_energy_arrays(power)[1], step_minutes)
    poa = energy_kwh(irradiance.poa_global, step_minutes)
    # per plane, then per module: the same sums without a (T, M) array of the planes' values
    poa_unshaded = energy_kwh(np.asfortranarray(irradiance.plane_poa_global),
                              step_minutes)[irradiance.group]
    access = _percent(poa, poa_unshaded)
    tof = _percent(poa_unshaded, best.insolation_kwh_m2)
    table = pd.DataFrame({
        "face": [m.face for m in modules],
        "row": np.array([m.row for m in modules], dtype=int),
        "column": np.array([m.column for m in modules], dtype=int),
        "orientation": [m.orientation for m in modules],
        "surface_tilt": [m.tilt_deg for m in modules],
        "surface_azimuth": [m.azimuth_deg for m in modules],
        "energy_kwh": energy,
        "energy_unshaded_kwh": unshaded,
        "shade_loss_pct": 100.0 - _percent(energy, unshaded),
        "poa_kwh_m2": poa,
        "poa_unshaded_kwh_m2": poa_unshaded,
        "solar_access_pct": access,
        "tof_pct": tof,
        "tsrf_pct": access * tof / 100.0,
    }, index=pd.Index([m.id for m in modules], name="module_id"))
    table.attrs["energy_basis"] = basis
    return table


_TABLE_COLUMNS = ("face", "row", "column", "orientation", "surface_tilt", "surface_azimuth",
                  "energy_kwh", "energy_unshaded_kwh", "shade_loss_pct", "poa_kwh_m2",
                  "poa_unshaded_kwh_m2", "solar_access_pct", "tof_pct", "tsrf_pct")


def empty_module_table() -> pd.DataFrame:
    """Return the per-module table of a layout without modules: the columns, no rows."""
    kinds = {"face": object, "orientation": object, "row": int, "column": int}
    table = pd.DataFrame({c: pd.Series(dtype=kinds.get(c, float)) for c in _TABLE_COLUMNS},
                         index=pd.Index([], name="module_id", dtype=object))
    table.attrs["energy_basis"] = "DC"
    return table


def layout_totals(table: pd.DataFrame, *, power_w: float,
                  tsrf_threshold_pct: float = DEFAULT_TSRF_THRESHOLD_PCT) -> dict:
    """Totals of a per-module table for the whole layout.

    Parameters
    ----------
    table : pandas.DataFrame
        From :func:`module_table`.
    power_w : float, keyword-only
        STC power of one module [W].
    tsrf_threshold_pct : float, keyword-only
        TSRF below which a module is counted as poor [%].

    Returns
    -------
    dict
        ``modules``, ``power_kwp``, ``energy_kwh``, ``energy_unshaded_kwh``,
        ``shade_loss_pct``, ``specific_yield_kwh_per_kwp``, ``solar_access_pct`` (mean),
        ``tsrf_pct`` (mean), ``modules_below_tsrf``, ``tsrf_threshold_pct``,
        ``energy_basis``.
    """
    n = len(table)
    kwp = n * power_w / 1000.0
    # numpy on the columns, as pandas' own sum and mean reduce them (NaN skipped), without
    # its per-call overhead: the totals are remade on every edit and drop
    energy = float(np.nansum(table["energy_kwh"].to_numpy()))
    unshaded = float(np.nansum(table["energy_unshaded_kwh"].to_numpy()))
    tsrf = table["tsrf_pct"].to_numpy()
    return {
        "modules": n,
        "power_kwp": kwp,
        "energy_kwh": energy,
        "energy_unshaded_kwh": unshaded,
        "shade_loss_pct": float(100.0 * (1.0 - energy / unshaded)) if unshaded > 0 else 0.0,
        "specific_yield_kwh_per_kwp": energy / kwp if kwp > 0 else 0.0,
        "solar_access_pct": _mean(table["solar_access_pct"].to_numpy()),
        "tsrf_pct": _mean(tsrf),
        "modules_below_tsrf": int(np.count_nonzero(tsrf < tsrf_threshold_pct)),
        "tsrf_threshold_pct": tsrf_threshold_pct,
        "energy_basis": table.attrs.get("energy_basis", "DC"),
    }


def _mean(values: np.ndarray) -> float:
    """Mean of the values that are not NaN, as pandas' ``Series.mean`` takes it; NaN if none."""
    missing = np.isnan(values)
    count = len(values) - int(np.count_nonzero(missing))
    if not count:
        return float("nan")
    return float(np.sum(np.where(missing, 0.0, values)) / count)


_CALENDAR: list = []  # one entry: (times, month from 0, hour), the last index asked about


def _calendar(times) -> tuple[np.ndarray, np.ndarray]:
    """Month (0-11) and hour (0-23) of each step on the site's clock, kept for the last index.

    Every edit of a project tables the same weather steps; reading the calendar fields of a
    time-zone-aware index takes about a millisecond each, so the last answer is kept.
    """
    if _CALENDAR and _CALENDAR[0][0] is times:
        return _CALENDAR[0][1], _CALENDAR[0][2]
    month = np.asarray(times.month) - 1
    hour = np.asarray(times.hour)
    month.flags.writeable = hour.flags.writeable = False
    _CALENDAR[:] = [(times, month, hour)]
    return month, hour


def _sums_by(index: np.ndarray, size: int, shaded_w, unshaded_w) -> tuple[np.ndarray, ...]:
    """Sum module power over steps that share ``index`` (0 … size-1) [W·steps]."""
    shaded = np.bincount(index, weights=np.nansum(shaded_w, axis=1), minlength=size)
    unshaded = np.bincount(index, weights=np.nansum(unshaded_w, axis=1), minlength=size)
    return shaded, unshaded


def monthly_table(power, *, step_minutes: float, columns=None) -> pd.DataFrame:
    """Energy with and without shade and the shade loss, month by month.

    Parameters
    ----------
    power : layout.power.electrical.DcPower
        Power per step and module.
    step_minutes : float, keyword-only
        Length of a step [minutes].
    columns : array_like of int or bool, keyword-only, optional
        Modules (columns of ``power``) to include; default all.

    Returns
    -------
    pandas.DataFrame
        Indexed by month 1–12: ``energy_kwh``, ``energy_unshaded_kwh``, ``shade_loss_pct``.
    """
    shaded_w, unshaded_w, basis = _energy_arrays(power)
    if columns is not None:
        shaded_w, unshaded_w = shaded_w[:, columns], unshaded_w[:, columns]
    month, _ = _calendar(power.times)
    shaded, unshaded = _sums_by(month, 12, shaded_w, unshaded_w)
    scale = check_range("step_minutes", step_minutes, 0, 1440, low_open=True) / 60.0 / 1000.0
    monthly = pd.DataFrame({"energy_kwh": shaded * scale, "energy_unshaded_kwh": unshaded * scale},
                           index=pd.RangeIndex(1, 13, name="month"))
    monthly["shade_loss_pct"] = 100.0 - _percent(monthly["energy_kwh"],
                                                 monthly["energy_unshaded_kwh"])
    monthly.attrs["energy_basis"] = basis
    return monthly


def monthly_solar_access(irradiance, *, columns=None) -> pd.Series:
    """Solar access month by month: insolation with shade over the same without [%].

    By the definition of this module (plane-of-array insolation before incidence-angle
    losses, on each module's own plane), summed over the chosen modules and the month's steps.

    Parameters
    ----------
    irradiance : layout.power.irradiance.ModuleIrradiance
        Plane-of-array irradiance per step and module, with and without shade.
    columns : array_like of int or bool, keyword-only, optional
        Modules (columns of ``irradiance``) to include; default all.

    Returns
    -------
    pandas.Series
        ``solar_access_pct`` indexed by month 1–12 [%]; NaN in a month without light.
    """
    shaded = np.asarray(irradiance.poa_global, dtype=float)
    unshaded = np.asarray(irradiance.poa_global_unshaded, dtype=float)
    if columns is not None:
        shaded, unshaded = shaded[:, columns], unshaded[:, columns]
    month, _ = _calendar(irradiance.times)
    sums, sums_unshaded = _sums_by(month, 12, shaded, unshaded)
    return pd.Series(_percent(sums, sums_unshaded), index=pd.RangeIndex(1, 13, name="month"),
                     name="solar_access_pct")


def month_hour_loss(power, *, columns=None) -> pd.DataFrame:
    """Shade loss by month and hour of day: the table behind a heat map.

    Parameters
    ----------
    power : layout.power.electrical.DcPower
        Power per step and module.
    columns : array_like of int or bool, keyword-only, optional
        Modules to include; default all.

    Returns
    -------
    pandas.DataFrame
        Shade loss [%], rows month 1–12, columns hour 0–23 of the site's clock (the hour in
        which each step's middle falls); NaN where the unshaded energy is zero (night).
    """
    shaded_w, unshaded_w, _ = _energy_arrays(power)
    if columns is not None:
        shaded_w, unshaded_w = shaded_w[:, columns], unshaded_w[:, columns]
    times = power.times
    month, hour = _calendar(times)
    cell = month * 24 + hour
    shaded, unshaded = _sums_by(cell, 12 * 24, shaded_w, unshaded_w)
    loss = 100.0 - _percent(shaded, unshaded)
    table = pd.DataFrame(loss.reshape(12, 24), index=pd.RangeIndex(1, 13),
                         columns=pd.RangeIndex(0, 24))
    table.index.name = "month"
    table.columns.name = "hour"
    return table


def face_table(table: pd.DataFrame, *, power_w: float,
               tsrf_threshold_pct: float = DEFAULT_TSRF_THRESHOLD_PCT) -> pd.DataFrame:
    """Totals of each roof face, by the same definitions as :func:`layout_totals`.

    Parameters
    ----------
    table : pandas.DataFrame
        From :func:`module_table`.
    power_w : float, keyword-only
        STC power of one module [W].
    tsrf_threshold_pct : float, keyword-only
        TSRF below which a module is counted as poor [%].

    Returns
    -------
    pandas.DataFrame
        Indexed by face name (in order of first appearance): ``modules``, ``power_kwp``,
        ``energy_kwh``, ``energy_unshaded_kwh``, ``shade_loss_pct``,
        ``specific_yield_kwh_per_kwp``, ``solar_access_pct`` and ``tsrf_pct`` (means over the
        face's modules), ``modules_below_tsrf``.
    """
    columns = ("modules", "power_kwp", "energy_kwh", "energy_unshaded_kwh", "shade_loss_pct",
               "specific_yield_kwh_per_kwp", "solar_access_pct", "tsrf_pct",
               "modules_below_tsrf")
    rows = {}
    for face in dict.fromkeys(table["face"]):
        part = table[table["face"] == face]
        part.attrs = dict(table.attrs)
        totals = layout_totals(part, power_w=power_w, tsrf_threshold_pct=tsrf_threshold_pct)
        rows[face] = [totals[c] for c in columns]
    frame = pd.DataFrame.from_dict(rows, orient="index", columns=list(columns))
    frame = frame.astype({"modules": int, "modules_below_tsrf": int})
    frame.index.name = "face"
    frame.attrs["energy_basis"] = table.attrs.get("energy_basis", "DC")
    return frame


def worst_modules(table: pd.DataFrame, *, min_tsrf_pct: float | None = None,
                  min_energy_kwh: float | None = None,
                  max_shade_loss_pct: float | None = None) -> tuple[str, ...]:
    """Ids of the modules that fail any of the given limits ("the worst modules").

    Parameters
    ----------
    table : pandas.DataFrame
        From :func:`module_table`, indexed by module id.
    min_tsrf_pct : float, keyword-only, optional
        A module with TSRF below this is worst [%], 0 to 100.
    min_energy_kwh : float, keyword-only, optional
        A module whose annual energy is below this is worst [kWh], 0 or more.
    max_shade_loss_pct : float, keyword-only, optional
        A module whose shade loss is above this is worst [%], 0 to 100.

    Returns
    -------
    tuple of str
        Module ids in table order. A limit left as None is not applied; a module whose figure
        is undefined (NaN: no light at all on its plane) fails the limit.
    """
    fails = np.zeros(len(table), dtype=bool)
    if min_tsrf_pct is not None:
        limit = check_range("min_tsrf_pct", min_tsrf_pct, 0, 100, unit="%")
        fails |= ~(table["tsrf_pct"].to_numpy(dtype=float) >= limit)
    if min_energy_kwh is not None:
        limit = check_nonnegative("min_energy_kwh", min_energy_kwh, unit="kWh")
        fails |= ~(table["energy_kwh"].to_numpy(dtype=float) >= limit)
    if max_shade_loss_pct is not None:
        limit = check_range("max_shade_loss_pct", max_shade_loss_pct, 0, 100, unit="%")
        fails |= ~(table["shade_loss_pct"].to_numpy(dtype=float) <= limit)
    return tuple(str(i) for i in table.index[fails])


#: Columns of :func:`comparison_table`, in order.
COMPARISON_COLUMNS = ("modules", "power_kwp", "energy_kwh", "specific_yield_kwh_per_kwp",
                      "shade_loss_pct", "tsrf_mean_pct", "modules_below_tsrf",
                      "energy_unshaded_kwh", "solar_access_mean_pct")


def comparison_table(totals_by_option) -> pd.DataFrame:
    """Layouts side by side, one row per option, from each option's :func:`layout_totals`.

    Parameters
    ----------
    totals_by_option : mapping of str to dict
        Option name → the option's totals (from :func:`layout_totals`).

    Returns
    -------
    pandas.DataFrame
        Indexed by ``option``: ``modules``, ``power_kwp``, ``energy_kwh`` (annual),
        ``specific_yield_kwh_per_kwp``, ``shade_loss_pct``, ``tsrf_mean_pct``,
        ``modules_below_tsrf``, ``energy_unshaded_kwh``, ``solar_access_mean_pct``.
        ``attrs`` carries ``tsrf_threshold_pct`` and ``energy_basis`` when every option
        shares them.
    """
    names = {"tsrf_mean_pct": "tsrf_pct", "solar_access_mean_pct": "solar_access_pct"}
    rows = {str(option): [totals[names.get(c, c)] for c in COMPARISON_COLUMNS]
            for option, totals in totals_by_option.items()}
    frame = pd.DataFrame.from_dict(rows, orient="index", columns=list(COMPARISON_COLUMNS))
    if len(frame):
        frame = frame.astype({"modules": int, "modules_below_tsrf": int})
    frame.index.name = "option"
    for key in ("tsrf_threshold_pct", "energy_basis"):
        values = {totals.get(key) for totals in totals_by_option.values()}
        if len(values) == 1:
            frame.attrs[key] = values.pop()
    return frame
