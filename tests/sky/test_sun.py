import math

import numpy as np
import pandas as pd
import pvlib
import pytest

from layout.errors import InputError
from layout.scene.site import Site
from layout.sky.sun import (
    solar_position,
    sun_above_horizon,
    sun_vectors,
    typical_year_index,
)

# Reda & Andreas (2004), NREL/TP-560-34302, worked example (REFERENCES.md)
SPA_SITE = Site(39.742476, -105.1786, "UTC-07:00", 1830.14)
SPA_TIME = pd.DatetimeIndex([pd.Timestamp("2003-10-17 12:30:30", tz=SPA_SITE.tzinfo)])


def test_spa_worked_example():
    # Reda & Andreas (2004): topocentric zenith 50.11162°, azimuth 194.34024°, printed to 5
    # decimals; inputs 820 mbar, 11 °C, ΔT 67 s
    pos = solar_position(SPA_SITE, SPA_TIME, pressure=82_000, temperature=11, delta_t=67)
    assert pos["apparent_zenith"].iloc[0] == pytest.approx(50.11162, abs=1e-5)
    assert pos["azimuth"].iloc[0] == pytest.approx(194.34024, abs=1e-5)
    assert pos["apparent_elevation"].iloc[0] == pytest.approx(90 - 50.11162, abs=1e-5)
    assert bool(pos["sun_up"].iloc[0])
    # same example: incidence on a 30° slope rotated 10° east of south (pvlib azimuth 170°)
    # is 25.18700°; this checks our sun-vector convention (x east, y north, z up)
    sun = sun_vectors(pos["azimuth"], pos["apparent_elevation"])[0]
    tilt, surf_az = math.radians(30), math.radians(170)
    normal = np.array([math.sin(tilt) * math.sin(surf_az), math.sin(tilt) * math.cos(surf_az),
                       math.cos(tilt)])
    assert math.degrees(math.acos(sun @ normal)) == pytest.approx(25.18700, abs=1e-4)


def test_spa_example_with_site_defaults():
    # Without the measured 820 mbar the pressure comes from the site altitude (pvlib alt2pres,
    # ~815 hPa at 1830 m); refraction changes by well under 0.001° at this zenith.
    pos = solar_position(SPA_SITE, SPA_TIME, temperature=11, delta_t=67)
    assert pos["apparent_zenith"].iloc[0] == pytest.approx(50.11162, abs=1e-3)


def test_winter_solstice_noon_at_40_north():
    # Geometry with declination −23.44° (Duffie & Beckman), REFERENCES.md: elevation 26.56° at
    # solar noon, and a vertical pole casts a shadow 2.00 × its height.
    site = Site(40.0, 0.0, "UTC")
    times = pd.date_range("2023-12-21 11:00", "2023-12-21 13:00", freq="1min", tz="UTC")
    pos = solar_position(site, times)
    noon = pos["elevation"].idxmax()
    elevation = pos["elevation"].max()  # geometric elevation, as in the textbook figure
    assert elevation == pytest.approx(26.56, abs=0.01)
    assert 1 / math.tan(math.radians(elevation)) == pytest.approx(2.00, abs=0.005)
    assert pos.loc[noon, "azimuth"] == pytest.approx(180.0, abs=0.3)  # one-minute steps


def test_nine_am_solar_time_winter_solstice():
    # REFERENCES.md (geometry, recomputed): 9:00 solar time, 21 Dec, 40° N → altitude 13.96°,
    # azimuth 41.95° east of south (declination −23.44°; 2023 has −23.43°, hence 0.05°).
    site = Site(40.0, 0.0, "UTC")
    day = pd.Timestamp("2023-12-21", tz="UTC")
    eot_min = float(pvlib.solarposition.equation_of_time_spencer71(day.day_of_year))
    at = pd.DatetimeIndex([day + pd.Timedelta(hours=9) - pd.Timedelta(minutes=eot_min)])
    pos = solar_position(site, at)
    assert pos["elevation"].iloc[0] == pytest.approx(13.96, abs=0.05)
    assert 180 - pos["azimuth"].iloc[0] == pytest.approx(41.95, abs=0.05)


def test_sun_vectors_frame():
    v = sun_vectors([180, 90, 0, 270, 123], [0, 0, 0, 0, 90])
    assert np.allclose(v[:4], [[0, -1, 0], [1, 0, 0], [0, 1, 0], [-1, 0, 0]], atol=1e-12)
    assert np.allclose(v[4], [0, 0, 1])
    rng = np.random.default_rng(1)
    w = sun_vectors(rng.uniform(0, 360, 50), rng.uniform(-90, 90, 50))
    assert np.allclose(np.linalg.norm(w, axis=1), 1.0)
    with pytest.raises(InputError):
        sun_vectors([1, 2], [3])


def test_typical_year_index_mid_interval():
    site = Site(40, -105, "America/Denver")
    hourly = typical_year_index(site)
    assert len(hourly) == 8760 and str(hourly.tz) == "America/Denver"
    assert hourly[0] == pd.Timestamp("2023-01-01 00:30", tz="America/Denver")
    assert hourly[-1] == pd.Timestamp("2023-12-31 23:30", tz="America/Denver")
    # uniform in absolute time across daylight saving changes
    assert (np.diff(hourly.asi8) == np.diff(hourly.asi8)[0]).all()
    assert len(typical_year_index(site, 15)) == 4 * 8760
    q = typical_year_index(site, 15)
    assert q[0].minute == 7 and q[0].second == 30
    assert len(typical_year_index(site, 60, year=2024)) == 8784  # leap year
    for bad in (0, 7, 90.0, True, 2000):
        with pytest.raises(InputError) as info:
            typical_year_index(site, bad)
        assert info.value.field == "step_minutes"
    with pytest.raises(InputError) as info:
        typical_year_index(site, year=1800)
    assert info.value.field == "year"


def test_naive_times_rejected():
    with pytest.raises(InputError) as info:
        solar_position(SPA_SITE, pd.date_range("2023-01-01", periods=3, freq="h"))
    assert info.value.field == "times"


def test_sun_above_horizon_keeps_day_steps():
    site = Site(40, -105, "America/Denver", 1600)
    times = typical_year_index(site)
    sample = sun_above_horizon(site, times)
    pos = solar_position(site, times)
    assert sample.up.sum() == len(sample.vectors) == len(sample.month)
    assert (sample.elevation_deg > 0).all() and (sample.vectors[:, 2] > 0).all()
    # roughly half the hours of a year are daylight at 40° N
    assert 0.48 < sample.up.mean() < 0.53
    assert np.array_equal(sample.expand(sample.elevation_deg, fill=np.nan)[sample.up],
                          pos["apparent_elevation"].to_numpy()[sample.up])
    full = sample.expand(np.ones(len(sample.vectors)))
    assert full.shape == (8760,) and full.sum() == sample.up.sum()
    assert set(np.unique(sample.month)) == set(range(1, 13))
