"""The sun steps binned by azimuth sector and sorted by elevation within each, for culling.

The sun steps are binned once into 128 azimuth sectors and sorted by elevation within each, so
the steps inside any azimuth window and elevation band are one contiguous run per sector the
window spans, found by binary search (:mod:`layout.shading.culling`). Steps with the sun
straight up or down have no azimuth and are kept apart.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Number of equal azimuth sectors the sun steps are binned into for culling (a power of two:
#: sector numbers wrap by a bit mask).
_SECTORS = 128
_EL_SHIFT = 2.0  # [rad] elevation + 2 lies in (0, 4): sector · 4 + it is a sortable key


@dataclass(frozen=True)
class _SunOrder:
    """Sun steps binned by azimuth sector and sorted by elevation within each sector.

    A point's candidate steps for an obstruction (an azimuth window times an elevation band)
    are then one contiguous run per sector the window spans, found by binary search on
    ``key``, with no step outside the elevation band.
    """

    order: np.ndarray  # sorted position -> original step
    key: np.ndarray  # sorted keys: sector * 4 + elevation + 2
    elevation: np.ndarray  # per original step [rad]
    zenith_steps: np.ndarray  # steps with an undefined azimuth (sun straight up or down)
    range_low: np.ndarray  # (S, S): lowest elevation + 2 over sectors s .. s + n (circular)
    range_high: np.ndarray  # (S, S): highest elevation + 2 over the same sectors
    sector_start: np.ndarray  # (S + 1,): sorted position of each sector's first step


def _sector(angle):
    """Azimuth sector of angles in [-pi, pi] [rad]."""
    return np.clip(((angle + math.pi) * (_SECTORS / (2 * math.pi))).astype(np.intp), 0,
                   _SECTORS - 1)


def _sun_order(sun: np.ndarray) -> _SunOrder:
    horizontal = np.hypot(sun[:, 0], sun[:, 1])
    azimuth = np.arctan2(sun[:, 0], sun[:, 1])
    elevation = np.arcsin(np.clip(sun[:, 2], -1.0, 1.0))
    defined = horizontal > 1e-12
    steps = np.flatnonzero(defined)
    sector = _sector(azimuth[steps])
    shifted = elevation[steps] + _EL_SHIFT
    key = sector * 4.0 + shifted
    sort = np.argsort(key, kind="stable")
    low = np.full(_SECTORS, np.inf)
    high = np.full(_SECTORS, -np.inf)
    np.minimum.at(low, sector, shifted)
    np.maximum.at(high, sector, shifted)
    # range tables over circular runs of sectors: [s, n] covers sectors s .. s + n
    index = (np.arange(_SECTORS)[:, None] + np.arange(_SECTORS)[None, :]) % _SECTORS
    range_low = np.minimum.accumulate(low[index], axis=1)
    range_high = np.maximum.accumulate(high[index], axis=1)
    key = key[sort]
    sector_start = np.searchsorted(key, 4.0 * np.arange(_SECTORS + 1), side="left")
    return _SunOrder(steps[sort], key, elevation, np.flatnonzero(~defined), range_low,
                     range_high, sector_start)
