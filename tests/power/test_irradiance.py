"""layout.power.irradiance against pvlib called directly and a textbook angle of incidence."""

from __future__ import annotations

import os

import numpy as np
import pandas as pd
import pvlib
import pytest

from layout.errors import InputError
from layout.fill.racking import sun_from_hour_angle
from layout.power.irradiance import module_irradiance, orientation_groups, substring_shade
from layout.power.transposition import iam_factors, plane_insolation, plane_of_array
from layout.runtime import THREADS_VARIABLE
from layout.scene.site import Site
from layout.sky.weather import Weather, clear_sky, read_weather_file

GREENSBORO = os.path.join(os.path.dirname(pvlib.__file__), "data", "723170TYA.CSV")


@pytest.fixture(scope="module")
def tmy3() -> Weather:
    return read_weather_file(GREENSBORO)


@pytest.fixture(scope="module")
def clear() -> Weather:
    return clear_sky(Site(36.1, -79.95, "UTC-05:00", altitude_m=273.0))


def _pvlib_direct(weather: Weather, tilt, azimuth, model="perez") -> pd.DataFrame:
    """pvlib alone: its own solar position, extra radiation and airmass at the sun times."""
    site = weather.site
    sp = pvlib.solarposition.get_solarposition(
        weather.times, site.latitude, site.longitude, altitude=site.altitude_m,
        pressure=pvlib.atmosphere.alt2pres(site.altitude_m), temperature=12.0)
    return pvlib.irradiance.get_total_irradiance(
        tilt, azimuth, sp["apparent_zenith"], sp["azimuth"], weather.data["dni"],
        weather.data["ghi"], weather.data["dhi"],
        dni_extra=pvlib.irradiance.get_extra_radiation(weather.times),
        airmass=pvlib.atmosphere.get_relative_airmass(sp["apparent_zenith"]),
        albedo=weather.data["albedo"], model=model, diffuse_components=True)


@pytest.mark.parametrize("model", ["perez", "haydavies", "isotropic"])
def test_unshaded_module_equals_pvlib_poa_global(tmy3, model):
    tilts = np.array([26.565, 26.565, 10.0])
    azimuths = np.array([180.0, 180.0, 95.0])
    result = module_irradiance(tmy3, tilts, azimuths, model=model, iam_model=None)
    for m, (tilt, azimuth) in enumerate(zip(tilts, azimuths, strict=True)):
        expected = _pvlib_direct(tmy3, tilt, azimuth, model)["poa_global"].to_numpy()
        ok = np.isfinite(expected)  # pvlib's Perez is NaN where GHI = 0 with the sun up
        assert ok.sum() > 8700
        np.testing.assert_allclose(result.poa_global_unshaded[ok, m], expected[ok],
                                   rtol=1e-9, atol=1e-6)
        np.testing.assert_allclose(result.poa_global[:, m], result.poa_global_unshaded[:, m])
        # without IAM the irradiance on the cells is the plane-of-array irradiance
        np.testing.assert_allclose(result.effective_unshaded[:, m],
                                   result.poa_global_unshaded[:, m], atol=1e-9)
    assert len(result.orientations) == 2  # two modules share a plane: transposed once


def test_clear_sky_year_plane_of_array_total_against_pvlib(clear):
    # the check: a clear-sky year's plane-of-array total against pvlib directly
    frame = plane_of_array(clear, 36.0, 180.0)
    expected = _pvlib_direct(clear, 36.0, 180.0)["poa_global"]
    total = frame["poa_global"].sum() / 1000.0
    assert total == pytest.approx(np.nansum(expected) / 1000.0, rel=1e-9)
    assert total > clear.annual_kwh_m2("ghi")  # a south plane at latitude tilt gains


def test_components_add_up(tmy3):
    frame = plane_of_array(tmy3, 30.0, 200.0)
    parts = (frame["poa_direct"] + frame["poa_circumsolar"] + frame["poa_isotropic"]
             + frame["poa_horizon"] + frame["poa_ground_diffuse"])
    np.testing.assert_allclose(parts, frame["poa_global"], atol=1e-9)


def _one_step_weather(zenith, azimuth, dni=800.0, dhi=100.0, ghi=None) -> Weather:
    """A one-step Weather with a given sun, built by hand (no file, no clock)."""
    index = pd.DatetimeIndex([pd.Timestamp("2023-02-13 10:30", tz="UTC")])
    if ghi is None:
        ghi = dni * np.cos(np.radians(zenith)) + dhi
    data = pd.DataFrame({"ghi": ghi, "dni": dni, "dhi": dhi, "temp_air": 10.0,
                         "wind_speed": 1.0, "albedo": 0.2}, index=index)
    sun = pd.DataFrame({"apparent_zenith": zenith, "zenith": zenith,
                        "apparent_elevation": 90 - zenith, "azimuth": azimuth,
                        "sun_up": zenith < 90, "dni_extra": 1400.0,
                        "airmass_relative": pvlib.atmosphere.get_relative_airmass(zenith)},
                       index=index)
    return Weather(data=data, solar_position=sun, site=Site(43.0, 0.0, "UTC"),
                   source="test", is_clear_sky=False, step_minutes=60)


def test_angle_of_incidence_duffie_beckman_example():
    # Duffie & Beckman, Solar Engineering of Thermal Processes, worked example (from memory;
    # recomputed 35.2°, REFERENCES.md): 43° N, 13 Feb, 10:30 solar time (hour angle -22.5°),
    # declination -14°, tilt 45°, surface azimuth 15° west of south (195° from north)
    altitude, azimuth = sun_from_hour_angle(43.0, -14.0, -22.5)
    weather = _one_step_weather(90.0 - altitude, azimuth)
    frame = plane_of_array(weather, 45.0, 195.0)
    assert frame["aoi"].iloc[0] == pytest.approx(35.2, abs=0.05)
    assert frame["poa_direct"].iloc[0] == pytest.approx(800.0 * np.cos(np.radians(35.2)),
                                                         rel=2e-3)


def test_shade_rules_per_component():
    weather = _one_step_weather(40.0, 170.0)
    frame = plane_of_array(weather, 30.0, 180.0).iloc[0]
    beam = frame["poa_direct"] + frame["poa_circumsolar"]
    sky = frame["poa_isotropic"] + frame["poa_horizon"]
    ground = frame["poa_ground_diffuse"]
    # module 0 unshaded; module 1 beam half shaded on average, one cell fully; module 2 sees
    # 60 % of the sky dome and no beam
    f = np.zeros((1, 3, 4))
    f[0, 1] = [1.0, 0.0, 0.5, 0.5]
    f[0, 2] = 1.0
    result = module_irradiance(weather, [30.0] * 3, [180.0] * 3, beam_shaded=f,
                               cell_substring=[0, 0, 1, 1], sky_view=[1.0, 1.0, 0.6],
                               iam_model=None)
    np.testing.assert_allclose(result.poa_global[0], [beam + sky + ground,
                                                      0.5 * beam + sky + ground,
                                                      0.6 * sky + ground])
    # substrings follow their most shaded cell: (1.0, 0.0) → 1.0 and (0.5, 0.5) → 0.5
    np.testing.assert_allclose(result.substring_effective[0, 1],
                               [sky + ground, 0.5 * beam + sky + ground], rtol=1e-6)
    np.testing.assert_allclose(result.substring_effective[0, 0], beam + sky + ground,
                               rtol=1e-6)


def test_iam_factors_are_pvlibs():
    aoi = np.array([0.0, 35.2, 60.0, 85.0, 95.0])
    factors = iam_factors(aoi, 30.0)
    np.testing.assert_allclose(factors["beam"], np.nan_to_num(pvlib.iam.physical(aoi)))
    diffuse = pvlib.iam.marion_diffuse("physical", 30.0)
    for region in ("sky", "horizon", "ground"):
        assert factors[region] == pytest.approx(float(diffuse[region]))
    ashrae = iam_factors(aoi, 30.0, iam_model="ashrae")
    np.testing.assert_allclose(ashrae["beam"], pvlib.iam.ashrae(aoi))
    with pytest.raises(InputError, match="iam_model"):
        iam_factors(aoi, 30.0, iam_model="fresnel")


def test_iam_lowers_effective_irradiance(tmy3):
    result = module_irradiance(tmy3, [30.0], [180.0])
    annual_poa = result.poa_global_unshaded.sum()
    annual_eff = result.effective_unshaded.sum()
    # physical IAM on a south plane at 30°: a few percent a year (De Soto et al. 2006 glass)
    assert 0.93 < annual_eff / annual_poa < 0.99


def test_cell_temperature_is_pvlib_sapm_close_mount(tmy3):
    result = module_irradiance(tmy3, [30.0], [180.0])
    params = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]["close_mount_glass_glass"]
    expected = pvlib.temperature.sapm_cell(result.poa_global[:, 0], tmy3.data["temp_air"],
                                           tmy3.data["wind_speed"], **params)
    np.testing.assert_allclose(result.temp_cell[:, 0], expected)


def test_sun_up_steps_only_expand_with_zero_at_night(clear):
    up = clear.solar_position["sun_up"].to_numpy()
    rng = np.random.default_rng(4)
    f_up = rng.random((int(up.sum()), 2, 3))
    f_all = np.zeros((len(up), 2, 3))
    f_all[up] = f_up
    a = module_irradiance(clear, [20.0, 20.0], [90.0, 270.0], beam_shaded=f_up)
    b = module_irradiance(clear, [20.0, 20.0], [90.0, 270.0], beam_shaded=f_all)
    np.testing.assert_allclose(a.effective, b.effective)
    np.testing.assert_allclose(a.substring_effective, b.substring_effective)
    with pytest.raises(InputError, match="time steps"):
        module_irradiance(clear, [20.0, 20.0], [90.0, 270.0], beam_shaded=f_up[:-1])


def test_shade_held_at_some_steps_equals_the_dense_array(clear):
    # the row form (only the steps with shade, cell-major, as ModuleShade holds it) gives the
    # same irradiance as the dense (time, module, cell) array with zeros elsewhere
    rng = np.random.default_rng(7)
    n_all = len(clear.data)
    steps = np.sort(rng.choice(np.flatnonzero(clear.solar_position["sun_up"]), 300,
                               replace=False))
    by_cell = (rng.random((2, 6, len(steps))) * (rng.random((2, 6, len(steps))) < 0.5))
    by_cell = by_cell.astype(np.float32)
    dense = np.zeros((n_all, 2, 6), dtype=np.float32)
    dense[steps] = by_cell.transpose(2, 0, 1)
    labels = [0, 1, 2, 0, 1, 2]
    a = module_irradiance(clear, [20.0, 35.0], [180.0, 200.0], shade_rows=(steps, by_cell),
                          cell_substring=labels, n_substrings=3)
    b = module_irradiance(clear, [20.0, 35.0], [180.0, 200.0], beam_shaded=dense,
                          cell_substring=labels, n_substrings=3)
    np.testing.assert_allclose(a.effective, b.effective)
    np.testing.assert_array_equal(a.substring_effective, b.substring_effective)
    np.testing.assert_allclose(a.temp_cell_unshaded, b.temp_cell_unshaded)
    # already reduced to the module mean and each substring's worst cell: the same figures
    worst = np.stack([by_cell[:, [s, s + 3], :].max(axis=1) for s in range(3)], axis=1)
    c = module_irradiance(clear, [20.0, 35.0], [180.0, 200.0],
                          shade_rows=(steps, by_cell.sum(axis=1, dtype=np.float64) / 6, worst),
                          n_substrings=3)
    for field in ("poa_global", "effective", "substring_effective", "temp_cell",
                  "effective_unshaded"):
        np.testing.assert_array_equal(getattr(c, field), getattr(a, field))
    with pytest.raises(InputError, match="module, substring, step"):
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0],
                          shade_rows=(steps, worst[:, 0], worst[:1]))
    with pytest.raises(InputError, match="0 to 1"):
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0],
                          shade_rows=(steps, worst[:, 0], worst + 1))
    with pytest.raises(InputError) as info:
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0], shade_rows=(steps, by_cell),
                          beam_shaded=dense)
    assert info.value.field == "shade_rows"
    with pytest.raises(InputError, match="increasing"):
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0],
                          shade_rows=(steps[::-1], by_cell))
    with pytest.raises(InputError, match="0 to 1"):
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0], shade_rows=(steps, -by_cell))
    with pytest.raises(InputError, match="module, cell, step"):
        module_irradiance(clear, [20.0, 35.0], [180.0, 200.0],
                          shade_rows=(steps[:-1], by_cell))


@pytest.mark.parametrize("threads", ["1", "2"])
def test_modules_worked_a_block_at_a_time_give_the_same_figures(clear, threads, monkeypatch):
    # every figure is the module's own: one module a block equals all modules at once, bit
    # for bit, on planes in any order, with shade and sky-view ratios of their own, the
    # blocks worked on one thread or two
    from layout.power import irradiance

    rng = np.random.default_rng(11)
    tilt, azimuth = [20.0, 35.0, 20.0, 10.0, 35.0], [180.0, 200.0, 180.0, 90.0, 200.0]
    shade = (rng.random((len(clear.data), 5, 3)) < 0.2) * rng.random((len(clear.data), 5, 3))
    kwargs = {"beam_shaded": shade, "sky_view": rng.uniform(0.7, 1.0, 5)}
    whole = module_irradiance(clear, tilt, azimuth, **kwargs)
    monkeypatch.setattr(irradiance, "_BLOCK_VALUES", len(clear.data))
    monkeypatch.setenv(THREADS_VARIABLE, threads)
    one_by_one = module_irradiance(clear, tilt, azimuth, **kwargs)
    for field in ("poa_global", "poa_global_unshaded", "effective", "effective_unshaded",
                  "substring_effective", "temp_cell", "temp_cell_unshaded"):
        np.testing.assert_array_equal(getattr(one_by_one, field), getattr(whole, field))


def test_substring_shade_reduction():
    f = np.array([[[0.0, 1.0, 0.2, 0.4, 0.0, 0.0]]])
    mean, worst = substring_shade(f, cell_substring=[0, 1, 0, 1, 2, 2])
    assert mean[0, 0] == pytest.approx(1.6 / 6)
    np.testing.assert_allclose(worst[0, 0], [0.2, 1.0, 0.0])
    with pytest.raises(InputError, match="cell_substring"):
        substring_shade(f, cell_substring=[0, 0, 0, 0, 2, 2])
    with pytest.raises(InputError, match="beam_shaded"):
        substring_shade(f * 2)


def test_orientation_groups():
    orientations, group = orientation_groups([30, 30.0000000001, 10], [180, 180, 360])
    assert len(orientations) == 2
    assert group[0] == group[1] != group[2]
    np.testing.assert_allclose(orientations[group[2]], [10.0, 0.0])


@pytest.mark.parametrize("kwargs, field", [
    ({"sky_view": [1.2]}, "sky_view"),
    ({"sky_view": [1.0, 1.0]}, "sky_view"),
    ({"model": "klucher"}, "model"),
    ({"mount": "rooftop"}, "mount"),
    ({"beam_shaded": np.zeros((5, 1, 3))}, "beam_shaded"),
])
def test_bad_input_names_the_field(clear, kwargs, field):
    with pytest.raises(InputError) as info:
        module_irradiance(clear, [30.0], [180.0], **kwargs)
    assert info.value.field == field
    with pytest.raises(InputError, match="surface_tilt"):
        plane_of_array(clear, 95.0, 180.0)


@pytest.mark.parametrize("model", ["perez", "haydavies", "isotropic"])
def test_many_planes_at_once_equal_pvlib_plane_by_plane(tmy3, model):
    # pvlib's get_total_irradiance on one plane at a time (plane_of_array), summed over the
    # Greensboro TMY3 year, against the one vectorised call the best-plane search makes
    tilts = np.array([0.0, 15.0, 36.1, 60.0, 90.0, 30.0])
    azimuths = np.array([180.0, 135.0, 180.0, 225.0, 90.0, 0.0])
    got = plane_insolation(tmy3, tilts, azimuths, model=model)
    for k, (tilt, azimuth) in enumerate(zip(tilts, azimuths, strict=True)):
        poa = plane_of_array(tmy3, tilt, azimuth, model=model)["poa_global"].clip(lower=0)
        assert got[k] == pytest.approx(poa.sum() * tmy3.step_minutes / 60 / 1000, rel=1e-12)
    with pytest.raises(InputError) as info:
        plane_insolation(tmy3, [95.0], [180.0])
    assert info.value.field == "surface_tilt"
    with pytest.raises(InputError) as info:
        plane_insolation(tmy3, [30.0, 20.0], [180.0])
    assert info.value.field == "surface_azimuth"


@pytest.mark.parametrize("model", ["physical", "ashrae"])
def test_marion_diffuse_with_kept_grids_equals_pvlibs_bit_for_bit(model):
    # outside reference: pvlib.iam.marion_diffuse (Marion 2017), called afresh at each tilt;
    # the kept grids must give exactly its floats, tilts 0 and 90 included
    from layout.power.diffuse_iam import marion_diffuse

    for tilt in [0.0, 0.5, 7.3, 18.4349, 30.0, 31.25, 45.0001, 63.4, 89.9, 90.0]:
        ours = marion_diffuse(model, tilt)
        theirs = pvlib.iam.marion_diffuse(model, tilt)
        assert ours == {region: float(value) for region, value in theirs.items()}, tilt


def test_only_lit_steps_are_worked_and_dark_steps_are_exact(clear):
    # module_irradiance works only the steps where some plane has light; every other step
    # must hold what the formulas of the module docstring give there: no irradiance (even with
    # shade held at a sun-up step whose sky is dark) and the cells at the air temperature
    # (pvlib's SAPM at zero irradiance). Checked against the formulas over every step, in
    # the same order of operations, bit for bit.
    import dataclasses

    from layout.power.transposition import plane_components

    data = clear.data.copy()
    up = np.flatnonzero(clear.solar_position["sun_up"].to_numpy())
    dark_day = up[::97]  # sun up, but no light at all (a dark sky: snow on the sensor, say)
    data.iloc[dark_day, [data.columns.get_loc(c) for c in ("ghi", "dni", "dhi")]] = 0.0
    weather = dataclasses.replace(clear, data=data)
    rng = np.random.default_rng(3)
    steps = np.sort(np.r_[dark_day, rng.choice(np.setdiff1d(up, dark_day), 400,
                                                replace=False)])
    mean = rng.random((2, len(steps)))
    worst = rng.random((2, 3, len(steps))).astype(np.float32)
    svf = np.array([0.8, 0.95])
    result = module_irradiance(weather, [25.0, 25.0], [170.0, 170.0],
                               shade_rows=(steps, mean, worst), n_substrings=3, sky_view=svf)
    plane = plane_components(weather, 25.0, 170.0)
    assert (plane["beam"][dark_day] == 0).all() and (plane["sky"][dark_day] == 0).all()
    f = np.zeros((len(data), 2))
    f[steps] = mean.T
    w = np.zeros((len(data), 2, 3), dtype=np.float32)
    w[steps] = worst.transpose(2, 0, 1)
    lit = 1.0 - f
    poa = plane["beam"][:, None] * lit + plane["sky"][:, None] * svf + plane["ground"][:, None]
    diffuse = plane["sky_eff"][:, None] * svf + plane["ground_eff"][:, None]
    effective = plane["beam_eff"][:, None] * lit + diffuse
    substring = (np.float32(1.0) - w) * plane["beam_eff"][:, None, None].astype(np.float32) \
        + diffuse[:, :, None].astype(np.float32)
    params = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]["close_mount_glass_glass"]
    temp = pvlib.temperature.sapm_cell(poa, data["temp_air"].to_numpy()[:, None],
                                       data["wind_speed"].to_numpy()[:, None], **params)
    np.testing.assert_array_equal(result.poa_global, poa)
    np.testing.assert_array_equal(result.effective, effective)
    np.testing.assert_array_equal(result.substring_effective, substring)
    np.testing.assert_array_equal(result.temp_cell, temp)
    assert (result.substring_effective[dark_day] == 0).all()
    np.testing.assert_array_equal(result.temp_cell[dark_day, 0],
                                  data["temp_air"].to_numpy()[dark_day])
