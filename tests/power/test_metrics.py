"""layout.power.metrics: energy sums."""

from __future__ import annotations

import numpy as np
import pytest

from layout.power import metrics
from layout.power.metrics import energy_kwh


@pytest.mark.parametrize("order", ["C", "F"])
def test_energy_summed_a_block_of_columns_at_a_time_equals_nansum(order, monkeypatch):
    # numpy's nansum over the whole array is the reference; summing blocks of columns (so
    # that nansum's copy stays small on thousands of modules) gives the same sums, bit for
    # bit, in either memory order, NaN steps counted as no power
    rng = np.random.default_rng(3)
    power = np.asarray(rng.uniform(0, 400, (500, 37)), order=order)
    power[rng.random(power.shape) < 0.05] = np.nan
    expected = np.nansum(power, axis=0) * 60 / 60.0 / 1000.0
    monkeypatch.setattr(metrics, "_SUM_BLOCK", 500 * 4)  # four modules a block
    np.testing.assert_array_equal(energy_kwh(power, 60), expected)
    np.testing.assert_array_equal(energy_kwh(power[:, :3], 60), expected[:3])
    np.testing.assert_array_equal(energy_kwh(power.T, 60, axis=1), expected)


@pytest.mark.parametrize("order", ["C", "F"])
def test_energy_without_missing_steps_is_numpys_nansum_bit_for_bit(order):
    # without NaN a plain sum is taken (nansum copies the array first): the same sums as
    # numpy's nansum, bit for bit, in either memory order and along either axis; one NaN in
    # one column falls back to nansum for all
    rng = np.random.default_rng(4)
    power = np.asarray(rng.uniform(0, 400, (700, 23)), order=order)
    expected = np.nansum(power, axis=0) * 15 / 60.0 / 1000.0
    np.testing.assert_array_equal(energy_kwh(power, 15), expected)
    np.testing.assert_array_equal(energy_kwh(power.T, 15, axis=1), expected)
    power[5, 7] = np.nan
    expected = np.nansum(power, axis=0) * 15 / 60.0 / 1000.0
    assert np.isfinite(expected).all()
    np.testing.assert_array_equal(energy_kwh(power, 15), expected)


@pytest.mark.parametrize("missing", [0.0, 0.3, 1.0])
def test_layout_totals_equal_pandas_sums_and_means_bit_for_bit(missing):
    # the totals sum and average the table's columns with numpy; pandas' own Series.sum and
    # Series.mean (NaN skipped) are the reference, bit for bit, with some or every access
    # figure missing (a module whose plane gets no light)
    import pandas as pd

    from layout.power.metrics import layout_totals

    rng = np.random.default_rng(6)
    n = 57
    access = rng.uniform(40, 100, n)
    access[rng.random(n) < missing] = np.nan
    table = pd.DataFrame({"energy_kwh": rng.uniform(100, 500, n),
                          "energy_unshaded_kwh": rng.uniform(500, 600, n),
                          "solar_access_pct": access, "tsrf_pct": access * 0.9})
    totals = layout_totals(table, power_w=400.0, tsrf_threshold_pct=75.0)
    assert totals["energy_kwh"] == float(table["energy_kwh"].sum())
    assert totals["energy_unshaded_kwh"] == float(table["energy_unshaded_kwh"].sum())
    for column in ("solar_access_pct", "tsrf_pct"):
        expected = float(table[column].mean())
        assert totals[column] == expected or (np.isnan(expected) and np.isnan(totals[column]))
    assert totals["modules_below_tsrf"] == int((table["tsrf_pct"] < 75.0).sum())


def test_unshaded_energy_summed_per_plane_equals_the_per_module_sums_bit_for_bit():
    # module_table sums each plane's unshaded power and hands the sum to the plane's modules;
    # DcPower.dc_unshaded_w gathers the same columns per module only when read, laid out
    # column by column: its sums over the steps are the same floats (the demo: four faces)
    from layout import load_demo_project
    from layout.study.analysis import Analysis

    result = Analysis(load_demo_project()).result
    power = result.power
    assert power.group is not None and power.unshaded_w.shape[1] < power.dc_w.shape[1]
    assert "dc_unshaded_w" not in vars(power)  # the evaluation never gathered it
    per_module = power.dc_unshaded_w
    assert per_module.flags.f_contiguous
    assert np.array_equal(per_module, power.unshaded_w[:, power.group])
    step = result.weather.step_minutes
    assert np.array_equal(result.table["energy_unshaded_kwh"].to_numpy(),
                          energy_kwh(per_module, step))
    monthly = metrics.monthly_table(power, step_minutes=step)
    assert monthly["energy_unshaded_kwh"].sum() == pytest.approx(
        result.table["energy_unshaded_kwh"].sum(), rel=1e-12)
