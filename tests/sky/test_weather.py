"""Tests of layout.sky.weather against pvlib's shipped weather files and pvlib's own functions."""

from __future__ import annotations

import csv
import os

import numpy as np
import pandas as pd
import pvlib
import pytest

from layout.errors import InputError
from layout.scene.site import Site
from layout.sky.weather import (
    CLEAR_SKY_CAVEAT,
    LABEL_SHIFT,
    Weather,
    clear_sky,
    read_weather_file,
)

DATA = os.path.join(os.path.dirname(pvlib.__file__), "data")
GREENSBORO = os.path.join(DATA, "723170TYA.CSV")  # NREL TMY3, shipped with pvlib
MIAMI = os.path.join(DATA, "12839.tm2")  # NREL TMY2, shipped with pvlib


@pytest.fixture(scope="module")
def tmy3() -> Weather:
    return read_weather_file(GREENSBORO)


def _raw_tmy3_rows():
    """The file's own rows, read with the csv module, independent of pvlib."""
    with open(GREENSBORO, newline="") as handle:
        reader = csv.reader(handle)
        header = next(reader)
        columns = next(reader)
        rows = list(reader)
    return header, columns, rows


def _ghi_weighted_hour_angle(weather_index, ghi, longitude) -> float:
    """GHI-weighted mean hour angle [degrees] at the given times (solar noon is 0).

    The sun is symmetric about solar noon, so over a year the irradiance-weighted hour angle
    is near zero when the sun times are right; a label off by 30 min shifts it by 7.5°.
    """
    eot = pvlib.solarposition.equation_of_time_spencer71(weather_index.day_of_year)
    hour_angle = pvlib.solarposition.hour_angle(weather_index, longitude, eot)
    return float(np.sum(hour_angle * ghi) / np.sum(ghi))


def test_tmy3_site_from_header(tmy3):
    # header line of the TMY3 file (NREL TMY3 users manual: station, name, state, TZ, lat,
    # lon, elevation)
    header, _, _ = _raw_tmy3_rows()
    assert tmy3.site.latitude == pytest.approx(float(header[4]))
    assert tmy3.site.longitude == pytest.approx(float(header[5]))
    assert tmy3.site.altitude_m == pytest.approx(float(header[6]))
    assert tmy3.site.timezone == "UTC-05:00"
    assert "GREENSBORO" in tmy3.site.name
    assert not tmy3.is_clear_sky
    assert "typical year" in tmy3.caveat.lower()


def test_tmy3_annual_totals_match_the_files_own_sums(tmy3):
    # the check: annual GHI of the shipped Greensboro TMY3 through our reader equals the
    # file's own column sums (read here with the csv module, not pvlib)
    _, columns, rows = _raw_tmy3_rows()
    for ours, name in (("ghi", "GHI (W/m^2)"), ("dni", "DNI (W/m^2)"), ("dhi", "DHI (W/m^2)")):
        j = columns.index(name)
        total_kwh = sum(float(r[j]) for r in rows) / 1000.0
        assert tmy3.annual_kwh_m2(ours) == pytest.approx(total_kwh, rel=1e-12)
    assert len(tmy3.data) == 8760
    assert tmy3.annual_kwh_m2("ghi") == pytest.approx(1566.203)


def test_tmy3_label_shift_puts_the_sun_mid_hour(tmy3):
    # TMY3 labels the end of each hour (NREL TMY3 manual): 01:00 → sun at 00:30
    assert tmy3.times[0] == pd.Timestamp("2023-01-01 00:30", tz="UTC-05:00")
    assert tmy3.times[-1] == pd.Timestamp("2023-12-31 23:30", tz="UTC-05:00")
    assert (tmy3.times.minute == 30).all()
    assert tmy3.times.is_monotonic_increasing and tmy3.times.is_unique
    # irradiance is centred on solar noon (pvlib's equation of time and hour angle)
    ghi = tmy3.data["ghi"].to_numpy()
    centred = _ghi_weighted_hour_angle(tmy3.times, ghi, tmy3.site.longitude)
    raw, _ = pvlib.iotools.read_tmy3(GREENSBORO, coerce_year=2023)
    as_labelled = _ghi_weighted_hour_angle(raw.index, raw["ghi"].to_numpy(),
                                           tmy3.site.longitude)
    assert abs(centred) < 2.5  # weather asymmetry (afternoon clouds) stays within ~2°
    assert as_labelled - centred == pytest.approx(7.5, abs=0.01)  # 30 min = 7.5°


def test_tmy3_sun_matches_pvlib_solar_position(tmy3):
    sp = pvlib.solarposition.get_solarposition(
        tmy3.times, tmy3.site.latitude, tmy3.site.longitude, altitude=tmy3.site.altitude_m,
        pressure=pvlib.atmosphere.alt2pres(tmy3.site.altitude_m), temperature=12.0)
    np.testing.assert_allclose(tmy3.solar_position["apparent_zenith"], sp["apparent_zenith"],
                               atol=1e-6)
    np.testing.assert_allclose(tmy3.solar_position["azimuth"], sp["azimuth"], atol=1e-6)


def test_epw_and_tmy3_of_the_same_data_give_the_same_sun_times(tmp_path, tmy3):
    # EPW hour h covers (h-1):00 to h:00 (EnergyPlus Auxiliary Programs, weather converter);
    # TMY3's h:00 label covers the same hour. Written from the TMY3 rows, both readings must
    # land on the same sun times with the same values.
    header, columns, rows = _raw_tmy3_rows()
    col = {name: columns.index(name) for name in columns}
    lines = [f"LOCATION,Greensboro,NC,USA,TMY3,723170,{header[4]},{header[5]},{header[3]},"
             f"{header[6]}"]
    lines += ["DESIGN CONDITIONS,0", "TYPICAL/EXTREME PERIODS,0", "GROUND TEMPERATURES,0",
              "HOLIDAYS/DAYLIGHT SAVINGS,No,0,0,0", "COMMENTS 1,test", "COMMENTS 2,test",
              "DATA PERIODS,1,1,Data,Sunday, 1/ 1,12/31"]
    for r in rows:
        month, day, year = r[0].split("/")
        hour = int(r[1].split(":")[0])
        fields = [year, str(int(month)), str(int(day)), str(hour), "60", "?",
                  r[col["Dry-bulb (C)"]], "0", "50", "100000", "0", "0", "0",
                  r[col["GHI (W/m^2)"]], r[col["DNI (W/m^2)"]], r[col["DHI (W/m^2)"]],
                  "0", "0", "0", "0", "0", r[col["Wspd (m/s)"]], "0", "0", "0", "0", "9",
                  "0", "0", "0", "0", "0", "999", "0", "0"]
        lines.append(",".join(fields))
    path = tmp_path / "greensboro.epw"
    path.write_text("\n".join(lines) + "\n")
    epw = read_weather_file(path)
    assert LABEL_SHIFT["epw"] == -LABEL_SHIFT["tmy3"]
    pd.testing.assert_index_equal(epw.times, tmy3.times)
    for column in ("ghi", "dni", "dhi", "temp_air", "wind_speed"):
        np.testing.assert_allclose(epw.data[column], tmy3.data[column])
    assert epw.site.latitude == pytest.approx(36.1)


def test_tmy2_reader_units_site_and_shift():
    weather = read_weather_file(MIAMI)
    # TMY2 header: Miami, 25° 48' N, 80° 16' W, 2 m (NREL TMY2 manual: tenths of °C and m/s)
    assert weather.site.latitude == pytest.approx(25.8)
    assert weather.site.longitude == pytest.approx(-(80 + 16 / 60))
    assert weather.site.altitude_m == pytest.approx(2.0)
    assert weather.data["temp_air"].between(0, 40).all()  # Miami in °C, not tenths
    assert weather.data["wind_speed"].max() < 20
    assert len(weather.data) == 8760 and (weather.times.year == 2023).all()
    assert weather.times[0] == pd.Timestamp("2023-01-01 00:30", tz="UTC-05:00")
    centred = _ghi_weighted_hour_angle(weather.times, weather.data["ghi"].to_numpy(),
                                       weather.site.longitude)
    assert abs(centred) < 2.5


def test_site_override_keeps_instants_and_warns_when_far():
    site = Site(36.1, -79.95, "America/New_York", altitude_m=273.0)
    weather = read_weather_file(GREENSBORO, site=site)
    base = read_weather_file(GREENSBORO)
    assert str(weather.times.tz) == "America/New_York"
    assert (weather.times == base.times).all()  # same instants, another zone
    assert not any("km" in n for n in weather.notes)
    # about 150 km west of the station (1.67° of longitude at 36° N): used, with a note
    near = read_weather_file(GREENSBORO, site=Site(36.1, -81.6, "America/New_York"))
    assert any("km from the site" in n for n in near.notes)
    assert near.site.longitude == -81.6
    # half a continent away: the file's hours of sun would not be the site's; refused
    with pytest.raises(InputError, match=r"weather_file.*km from the site"):
        read_weather_file(GREENSBORO, site=Site(40.0, -105.0, "America/Denver"))


def test_clear_sky_equals_pvlib_ineichen_directly():
    site = Site(36.1, -79.95, "UTC-05:00", altitude_m=273.0)
    weather = clear_sky(site)
    assert weather.is_clear_sky and weather.caveat == CLEAR_SKY_CAVEAT
    assert "overstates" in weather.caveat
    assert len(weather.data) == 8760 and (weather.times.minute == 30).all()
    # pvlib alone: its own solar position and Linke turbidity lookup at the same times
    location = pvlib.location.Location(36.1, -79.95, tz="Etc/GMT+5", altitude=273.0)
    expected = location.get_clearsky(weather.times, model="ineichen")
    for column in ("ghi", "dni", "dhi"):
        np.testing.assert_allclose(weather.data[column], expected[column], atol=0.05)
    # clear sky is the upper envelope over a year: more than the typical year's total
    assert weather.annual_kwh_m2("ghi") > read_weather_file(GREENSBORO).annual_kwh_m2("ghi")


def test_clear_sky_noon_at_summer_solstice_is_plausible():
    # Ineichen at 36° N near sea level in June: GHI near 1000 W/m² at solar noon (pvlib's
    # model; a clear-sky noon GHI well above 1100 or below 850 would be a wiring error)
    weather = clear_sky(Site(36.1, -79.95, "UTC-05:00"), step_minutes=15)
    june = weather.data.loc["2023-06-21", "ghi"]
    assert 850 < june.max() < 1100
    assert weather.data["ghi"].min() >= 0


@pytest.mark.parametrize("kwargs, field", [
    ({"path": "weather.txt"}, "weather"),
    ({"path": "missing.csv"}, "weather"),
    ({"path": GREENSBORO, "kind": "tmy4"}, "kind"),
    ({"path": GREENSBORO, "year": 1800}, "year"),
    ({"path": GREENSBORO, "albedo": 1.5}, "albedo"),
    ({"path": MIAMI, "kind": "tmy3"}, "weather"),
])
def test_bad_input_names_the_field(kwargs, field):
    path = kwargs.pop("path")
    with pytest.raises(InputError) as info:
        read_weather_file(path, **kwargs)
    assert info.value.field == field


def test_clear_sky_rejects_bad_input():
    site = Site(0.0, 0.0, "UTC")
    with pytest.raises(InputError, match="step_minutes"):
        clear_sky(site, step_minutes=7)
    with pytest.raises(InputError, match="albedo"):
        clear_sky(site, albedo=-0.1)


def test_one_day_in_n_keeps_whole_days_and_stands_for_the_year(tmy3):
    # the file's own annual sum (TMY3 from pvlib's data folder) is the outside reference:
    # a fifth of its days, each step standing for the year's steps over the steps kept,
    # estimates it within 5 % (3.4 % here: a typical year's days differ from one another)
    sample = tmy3.sampled(5)
    days = sample.data.index.dayofyear.to_numpy()
    assert set(np.unique(days)) == set(range(1, 366, 5))
    every = tmy3.data.index.dayofyear.to_numpy()
    assert len(sample.data) == np.isin(every, range(1, 366, 5)).sum()  # whole days
    assert sample.step_minutes * len(sample.data) == pytest.approx(60 * len(tmy3.data))
    assert sample.solar_position.index.equals(sample.data.index)
    assert sample.annual_kwh_m2("ghi") == pytest.approx(tmy3.annual_kwh_m2("ghi"), rel=0.05)
    assert "one day in 5" in sample.source
    assert tmy3.sampled(1) is tmy3


@pytest.mark.parametrize("days", [0, 25, 2.5, True])
def test_one_day_in_n_names_the_field(tmy3, days):
    with pytest.raises(InputError, match="every_days"):
        tmy3.sampled(days)
