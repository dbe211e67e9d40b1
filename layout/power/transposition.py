"""Unshaded light on a plane: pvlib's transposition into components, and incidence-angle losses.

1. **Transposition.** :func:`pvlib.irradiance.get_total_irradiance` (Perez 1990 by default,
   with ``diffuse_components=True``) splits the plane-of-array irradiance into beam
   (``poa_direct``), circumsolar, isotropic and horizon-band sky diffuse, and
   ground-reflected (``poa_ground_diffuse``) [W/m²] (:func:`plane_of_array`); the sun, the
   extraterrestrial DNI and the airmass come from :class:`layout.sky.weather.Weather`, computed
   there once per site. :func:`plane_insolation` sums many planes' yearly insolation at once.
2. **Incidence-angle losses** (IAM, :func:`iam_factors`): beam and circumsolar by the IAM at
   the angle of incidence, the isotropic, horizon and ground parts by Marion's (2017)
   integrated diffuse IAM of the same model for the plane's tilt
   (:func:`pvlib.iam.marion_diffuse`). The default is the ``"physical"`` model (Fresnel
   reflection and absorption in a 2 mm glass cover, n = 1.526; De Soto et al. 2006): it has
   physical parameters and no fitted coefficient, and is accurate up to grazing angles, where
   ``"ashrae"`` (b = 0.05) goes to zero too early (at 87.1°). ``iam_model=None`` skips IAM.

:func:`plane_components` gives both, per component, for :mod:`layout.power.irradiance` to shade.

References
----------
.. [1] R. Perez, P. Ineichen, R. Seals, J. Michalsky and R. Stewart, "Modeling daylight
   availability and irradiance components from direct and global irradiance", Solar Energy
   44(5):271-289, 1990.
.. [2] B. Marion, "Numerical method for angle-of-incidence correction factors for diffuse
   radiation incident photovoltaic modules", Solar Energy 147:344-348, 2017.
.. [3] W. De Soto, S. Klein and W. Beckman, "Improvement and validation of a model for
   photovoltaic array performance", Solar Energy 80(1):78-88, 2006.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pvlib

from ..errors import InputError, check_range
from ..sky.weather import Weather
from .diffuse_iam import marion_diffuse

__all__ = ["COMPONENTS", "IAM_MODELS", "SKY_MODELS", "iam_factors", "plane_components",
           "plane_insolation", "plane_of_array"]

#: Sky diffuse models offered, each splitting into the components shaded above.
SKY_MODELS = ("perez", "haydavies", "isotropic")

#: Incidence-angle models offered (None skips IAM).
IAM_MODELS = ("physical", "ashrae")

#: Component columns of :func:`plane_of_array`.
COMPONENTS = ("poa_direct", "poa_circumsolar", "poa_isotropic", "poa_horizon",
              "poa_ground_diffuse")


def _check_model(model: str) -> str:
    if model not in SKY_MODELS:
        raise InputError("model", "unknown sky diffuse model", value=model,
                         allowed=", ".join(SKY_MODELS))
    return model


def plane_of_array(weather: Weather, surface_tilt: float, surface_azimuth: float, *,
                   model: str = "perez") -> pd.DataFrame:
    """Return the unshaded plane-of-array components of one orientation, from pvlib.

    Parameters
    ----------
    weather : layout.sky.weather.Weather
        Irradiance, albedo and the sun (computed once per site).
    surface_tilt : float
        Tilt of the plane from horizontal [degrees], 0 to 90.
    surface_azimuth : float
        Direction the plane faces, clockwise from north [degrees].
    model : {"perez", "haydavies", "isotropic"}, keyword-only, default "perez"
        Sky diffuse model of :func:`pvlib.irradiance.get_total_irradiance`.

    Returns
    -------
    pandas.DataFrame
        Indexed by the weather's sun times: pvlib's ``poa_global``, ``poa_direct``,
        ``poa_sky_diffuse``, ``poa_ground_diffuse``, and ``poa_isotropic``,
        ``poa_circumsolar``, ``poa_horizon`` (zero where the model has no such part) [W/m²],
        and ``aoi`` [degrees].
    """
    if not isinstance(weather, Weather):
        raise InputError("weather", "must be a layout.sky.weather.Weather",
                         value=type(weather).__name__)
    tilt = _check_angle("surface_tilt", surface_tilt, 0.0, 90.0)
    azimuth = _check_angle("surface_azimuth", surface_azimuth, 0.0, 360.0)
    model = _check_model(model)
    sun, data = weather.solar_position, weather.data

    def column(frame, name):
        # pvlib's formulas on plain arrays: the same numbers as on Series, without pandas'
        # per-operation cost (a quarter of the time on a year of hours)
        return frame[name].to_numpy(dtype=float)

    kwargs = {}
    if model in ("perez", "haydavies"):
        kwargs["dni_extra"] = column(sun, "dni_extra")
    if model == "perez":
        kwargs["airmass"] = column(sun, "airmass_relative")
    zenith, sun_azimuth = column(sun, "apparent_zenith"), column(sun, "azimuth")
    result = pvlib.irradiance.get_total_irradiance(
        tilt, azimuth, zenith, sun_azimuth, column(data, "dni"), column(data, "ghi"),
        column(data, "dhi"), albedo=column(data, "albedo"), model=model,
        diffuse_components=True, **kwargs)
    steps = (len(data.index),)
    frame = pd.DataFrame({name: np.broadcast_to(np.asarray(values, dtype=float), steps)
                          for name, values in result.items()}, index=data.index)
    for name in ("poa_isotropic", "poa_circumsolar", "poa_horizon"):
        if name not in frame:
            frame[name] = 0.0
    # the Perez model is undefined with the sun down (airmass NaN): no sky there
    frame = frame.fillna(0.0)
    frame["aoi"] = pvlib.irradiance.aoi(tilt, azimuth, zenith, sun_azimuth)
    return frame


def plane_insolation(weather: Weather, surface_tilt, surface_azimuth, *,
                     model: str = "perez") -> np.ndarray:
    """Return the unshaded plane-of-array insolation of many planes at once [kWh/m²].

    The same sums as ``plane_of_array(...)["poa_global"]`` clipped at zero, one plane at a
    time, but pvlib's transposition runs once over a (steps, planes) array, and only on the
    steps that have some light (the others give exactly zero).

    Parameters
    ----------
    weather : layout.sky.weather.Weather
    surface_tilt, surface_azimuth : array_like, shape (K,)
        The planes [degrees]: tilt 0 to 90, azimuth 0 to 360.
    model : {"perez", "haydavies", "isotropic"}, keyword-only, default "perez"

    Returns
    -------
    numpy.ndarray, shape (K,)
        Insolation of each plane over the weather's period [kWh/m²].
    """
    if not isinstance(weather, Weather):
        raise InputError("weather", "must be a layout.sky.weather.Weather",
                         value=type(weather).__name__)
    tilt = np.atleast_1d(np.asarray(surface_tilt, dtype=float))
    azimuth = np.atleast_1d(np.asarray(surface_azimuth, dtype=float))
    if tilt.shape != azimuth.shape or tilt.ndim != 1:
        raise InputError("surface_azimuth", "needs one azimuth per tilt", value=azimuth.shape,
                         allowed=f"shape {tilt.shape}")
    for field, values, high in (("surface_tilt", tilt, 90.0), ("surface_azimuth", azimuth,
                                                                 360.0)):
        bad = ~((values >= 0.0) & (values <= high))
        if bad.any():
            raise InputError(field, "is out of range", value=float(values[bad][0]),
                             allowed=f"0 to {high:g} degrees")
    model = _check_model(model)
    sun, data = weather.solar_position, weather.data
    light = ((data["ghi"] > 0) | (data["dhi"] > 0) | (data["dni"] > 0)).to_numpy()

    def column(series):
        return series.to_numpy(dtype=float)[light][:, None]

    kwargs = {}
    if model in ("perez", "haydavies"):
        kwargs["dni_extra"] = column(sun["dni_extra"])
    if model == "perez":
        kwargs["airmass"] = column(sun["airmass_relative"])
    result = pvlib.irradiance.get_total_irradiance(
        tilt[None, :], azimuth[None, :], column(sun["apparent_zenith"]), column(sun["azimuth"]),
        column(data["dni"]), column(data["ghi"]), column(data["dhi"]),
        albedo=column(data["albedo"]), model=model, **kwargs)
    poa = np.nan_to_num(np.asarray(result["poa_global"], dtype=float), nan=0.0)
    poa = np.broadcast_to(poa, (int(light.sum()), len(tilt)))
    return np.clip(poa, 0.0, None).sum(axis=0) * weather.step_minutes / 60.0 / 1000.0


def _check_angle(field: str, value, low: float, high: float) -> float:
    return check_range(field, value, low, high, unit="degrees")


def iam_factors(aoi, surface_tilt: float, *, iam_model: str | None = "physical") -> dict:
    """Return the incidence-angle modifiers of each component for one plane.

    Parameters
    ----------
    aoi : numeric
        Angle of incidence of the beam [degrees].
    surface_tilt : float
        Tilt of the plane [degrees], for the integrated diffuse modifiers.
    iam_model : {"physical", "ashrae"} or None, keyword-only, default "physical"
        Model from :mod:`pvlib.iam`, with pvlib's default parameters; None gives 1 everywhere.

    Returns
    -------
    dict
        ``beam`` (numeric, like ``aoi``; used for beam and circumsolar), ``sky``, ``horizon``,
        ``ground`` (floats: :func:`pvlib.iam.marion_diffuse`'s values, from
        :func:`layout.power.diffuse_iam.marion_diffuse`) [fraction].
    """
    if iam_model is None:
        return {"beam": np.ones_like(np.asarray(aoi, dtype=float)), "sky": 1.0,
                "horizon": 1.0, "ground": 1.0}
    if iam_model not in IAM_MODELS:
        raise InputError("iam_model", "unknown incidence-angle model", value=iam_model,
                         allowed=", ".join(IAM_MODELS) + " or None")
    function = getattr(pvlib.iam, iam_model)
    beam = np.nan_to_num(np.asarray(function(np.asarray(aoi, dtype=float)), dtype=float))
    diffuse = marion_diffuse(iam_model, float(surface_tilt))  # pvlib's values, grids kept
    return {"beam": beam, **diffuse}


def plane_components(weather: Weather, surface_tilt: float, surface_azimuth: float, *,
                     model: str = "perez", iam_model: str | None = "physical") -> dict:
    """Unshaded irradiance components of one plane, before and after incidence-angle losses.

    Parameters
    ----------
    weather : layout.sky.weather.Weather
    surface_tilt, surface_azimuth : float
        The plane [degrees].
    model, iam_model : str
        As in :func:`layout.power.irradiance.module_irradiance`.

    Returns
    -------
    dict of str to numpy.ndarray, shape (T,)
        ``beam`` (direct + circumsolar), ``sky`` (isotropic + horizon band), ``ground``, each
        with an ``_eff`` twin after incidence-angle losses, and ``poa_global`` [W/m²].
    """
    frame = plane_of_array(weather, surface_tilt, surface_azimuth, model=model)
    iam = iam_factors(frame["aoi"].to_numpy(), surface_tilt, iam_model=iam_model)
    beam = frame["poa_direct"].to_numpy() + frame["poa_circumsolar"].to_numpy()
    iso = frame["poa_isotropic"].to_numpy()
    hor = frame["poa_horizon"].to_numpy()
    ground = frame["poa_ground_diffuse"].to_numpy()
    return {
        "beam": beam,
        "beam_eff": beam * iam["beam"],
        # isotropic and horizon band share one rule: both scale with the sky-view ratio
        "sky": iso + hor,
        "sky_eff": iso * iam["sky"] + hor * iam["horizon"],
        "ground": ground,
        "ground_eff": ground * iam["ground"],
        "poa_global": frame["poa_global"].to_numpy(),
    }
