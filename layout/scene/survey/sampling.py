"""Draws from the tolerances of one entry: sets of readings, and the obstructions they build.

:func:`sample_readings` draws readings from a **normal distribution truncated at the
tolerance**, with standard deviation half the tolerance: a reading error is the sum of several
small independent causes (sighting, reading the scale, hand tremor, tape sag), which tends to a
bell shape, and a stated "agreement within ±x" is read as about two standard deviations (95 %).
Truncating at ±tolerance keeps every draw inside the range the entry was validated over, so no
draw builds an impossible shape. ``distribution="uniform"`` draws uniformly over ±tolerance,
the cautious choice when only the bounds are known (the rectangular distribution of the GUM,
JCGM 100:2008, §4.3.7; from memory).
"""

from __future__ import annotations

import numpy as np

from ...errors import InputError, check_whole
from .geometry import _obstruction_from_geometry, _sighted_geometry
from .readings import _READINGS

__all__ = ["sample_entry", "sample_readings"]


def _check_count(field: str, n) -> int:
    return check_whole(field, n, 1, problem="must be a whole number of at least 1",
                       allowed=">= 1")


def _truncated_standard_normal(rng: np.random.Generator, n: int, bound: float) -> np.ndarray:
    """Draw standard normal values restricted to ±bound, redrawing those outside."""
    z = rng.standard_normal(n)
    outside = np.abs(z) > bound
    while outside.any():
        z[outside] = rng.standard_normal(int(outside.sum()))
        outside = np.abs(z) > bound
    return z


def sample_readings(entry, n: int, seed=None, *, distribution: str = "normal"
                    ) -> dict[str, np.ndarray]:
    """Draw ``n`` sets of readings of a survey entry from their tolerances.

    Parameters
    ----------
    entry : SurveyEntry
        The readings of one obstruction.
    n : int
        Number of draws, at least 1.
    seed : int, numpy.random.Generator or None
        Seed of a new :func:`numpy.random.default_rng`, or a generator to draw from.
    distribution : {"normal", "uniform"}, keyword-only
        ``"normal"``: standard deviation half the tolerance, truncated at ±tolerance;
        ``"uniform"``: uniform over ±tolerance (module notes).

    Returns
    -------
    dict of str to numpy.ndarray
        Each reading field present on the entry, shape (n,), in its unit.
    """
    n = _check_count("n", n)
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    if distribution not in ("normal", "uniform"):
        raise InputError("distribution", "is not a known distribution", value=distribution,
                         allowed="normal, uniform")
    out = {}
    for name in _READINGS:
        reading = getattr(entry, name)
        if reading is None:
            continue
        if reading.tolerance == 0:
            out[name] = np.full(n, reading.value)
            continue
        if distribution == "uniform":
            z = rng.uniform(-1.0, 1.0, n)
        else:
            z = _truncated_standard_normal(rng, n, 2.0) / 2.0
        out[name] = reading.value + reading.tolerance * z
    return out


def sample_entry(entry, n: int, seed=None, *, distribution: str = "normal",
                 hemisphere: str = "north") -> list:
    """Draw ``n`` obstructions from the tolerances of a survey entry's readings.

    Parameters
    ----------
    entry, n, seed, distribution
        As in :func:`sample_readings`.
    hemisphere : {"north", "south"}, keyword-only
        As in :func:`~layout.scene.survey.geometry.build_obstruction`.

    Returns
    -------
    list of Tree, Block or Cylinder
        ``n`` obstructions of this entry's type.
    """
    g = _sighted_geometry(entry, sample_readings(entry, n, seed, distribution=distribution))
    return [_obstruction_from_geometry(entry, g, i, hemisphere) for i in range(n)]
