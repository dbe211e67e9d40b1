"""Marion's integrated diffuse incidence-angle modifiers, with the angle grids built once.

:func:`pvlib.iam.marion_diffuse` integrates an incidence-angle model over the sky dome, the
horizon band and the ground for one plane tilt. It rebuilds its grid of solid-angle elements
(about 82,000 of them) and their sines and cosines at every call, which is most of the 18 ms a
call takes; only the angle of incidence of each element depends on the tilt. A face edit in
the planner makes a plane at a new tilt, so that time was spent on every edit.

:func:`marion_diffuse` here keeps each region's grid and the tilt-free terms, and for a tilt
evaluates pvlib's own discretisation with the very same operations in the same order, so its
values equal pvlib's bit for bit (the tests compare them with ``==``). Tilts already seen are
answered from a small memo.

References
----------
.. [1] B. Marion, "Numerical method for angle-of-incidence correction factors for diffuse
   radiation incident photovoltaic modules", Solar Energy 147:344-348, 2017.
"""

from __future__ import annotations

from functools import cache, lru_cache

import numpy as np
import pvlib

__all__ = ["marion_diffuse"]

#: The regions Marion integrates over, with pvlib's number of steps per half turn.
REGIONS = {"sky": 180, "horizon": 1800, "ground": 180}


@cache
def _region_grid(region: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Return the tilt-free terms of one region's grid.

    As :func:`pvlib.iam.marion_integrate` builds them: ``cos(phi_avg)``, ``sin(phi_avg)``,
    ``cos(psi_avg)`` and the element areas ``dAs``, each (K, 1).
    """
    num = REGIONS[region]
    ai = np.pi / num
    phi_range = np.linspace(0, np.pi, num, endpoint=False)
    psi_range = np.linspace(0, 2 * np.pi, 2 * num, endpoint=False)
    if region == "sky":
        mask = phi_range + ai <= np.pi / 2
    elif region == "horizon":
        mask = (89.5 * np.pi / 180 <= phi_range) & (phi_range + ai <= np.pi / 2)
    else:
        mask = phi_range >= np.pi / 2
    phi_range = phi_range[mask]
    angles = np.array(np.meshgrid(phi_range, psi_range)).T.reshape(-1, 2)
    phi_1 = angles[:, [0]]
    psi_1 = angles[:, [1]]
    phi_2 = phi_1 + ai
    phi_avg = phi_1 + 0.5 * ai
    psi_avg = psi_1 + 0.5 * ai
    dAs = ai * (np.cos(phi_1) - np.cos(phi_2))
    terms = (np.cos(phi_avg), np.sin(phi_avg), np.cos(psi_avg), dAs)
    for array in terms:
        array.flags.writeable = False
    return terms


def _integrate(function, surface_tilt: float, region: str) -> float:
    """Marion's modifier of one region for one tilt (pvlib's ``marion_integrate``, scalar)."""
    cos_phi, sin_phi, cos_psi, dAs = _region_grid(region)
    beta = np.radians(surface_tilt)
    cosaoi = np.cos(beta) * cos_phi + np.sin(beta) * sin_phi * cos_psi
    aoi = np.arccos(cosaoi)
    cosaoi_dAs = np.where(aoi < np.pi / 2, cosaoi * dAs, 0)
    numerator = np.sum(function(np.degrees(aoi)) * cosaoi_dAs, axis=0)
    denominator = np.sum(cosaoi_dAs, axis=0)
    with np.errstate(invalid="ignore"):
        value = np.where((denominator != 0) | ~np.isfinite(beta), numerator / denominator, 0)
    return value.item()


def marion_diffuse(model: str, surface_tilt: float) -> dict[str, float]:
    """Integrated diffuse incidence-angle modifiers of one plane (Marion 2017).

    The same values as ``pvlib.iam.marion_diffuse(model, surface_tilt)`` with the model's
    default parameters, a few times quicker, and instant for a tilt already asked for.

    Parameters
    ----------
    model : {"physical", "ashrae"}
        Incidence-angle model of :mod:`pvlib.iam`.
    surface_tilt : float
        Tilt of the plane [degrees].

    Returns
    -------
    dict of str to float
        ``sky`` (sky dome), ``horizon`` (the band 89.5°-90° from the zenith) and ``ground``
        modifiers [fraction].

    References
    ----------
    .. [1] B. Marion, "Numerical method for angle-of-incidence correction factors for
       diffuse radiation incident photovoltaic modules", Solar Energy 147:344-348, 2017.
    """
    return dict(zip(REGIONS, _modifiers(model, float(surface_tilt)), strict=True))


@lru_cache(maxsize=256)
def _modifiers(model: str, surface_tilt: float) -> tuple[float, ...]:
    function = getattr(pvlib.iam, model)
    return tuple(_integrate(function, surface_tilt, region) for region in REGIONS)
