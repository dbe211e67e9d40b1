"""Shade loss as a range over the survey tolerances, over the years of tree growth, by leaf.

A small invented project (one gable house at 40° N, five modules on the south face, one
surveyed tree south of it, hourly clear sky) keeps the suite fast; one Analysis is shared by
every test so that only the trees are ray-tested again.
"""

import itertools
import json
import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from layout import FillOptions, Project, Site, Tree, gable_roof, generic_60_cell, no_setbacks
from layout.errors import InputError
from layout.power.electrical import ElectricalOptions
from layout.power.energy import EnergyOptions
from layout.scene.obstructions import LEAF_OFF_TRANSMITTANCE, LEAF_ON_TRANSMITTANCE
from layout.scene.survey import (
    GROWTH_CLASS_LIMITS_M_PER_YR,
    GROWTH_CLASS_RATES_M_PER_YR,
    Reading,
    SurveyEntry,
    entry_geometry,
    loss_range,
)
from layout.study.analysis import Analysis, evaluate
from layout.study.outlook import (
    DEFAULT_SAMPLES,
    GrowthOutlook,
    LeafEffect,
    ShadeLossRange,
    growth_outlook,
    leaf_effect,
    percentile_ranks,
    project_at_year,
    sampled_projects,
    shade_loss_range,
    with_surveyed,
)

SAMPLES = 24  # modest: the range tests check structure and consistency, not precision
SITE = Site(40.0, -105.0, "America/Denver", altitude_m=1600.0, name="outlook test site")


def oak(**changes):
    # A tree 9 m south of a station 1 m south of the eave, sighted at 40° (tangent method):
    # 9.15 m tall with a 1.6 m eye height; crown base 2 m (below half the height).
    readings = dict(kind="tree", bearing_deg=180.0, distance_m=9.0, top_angle_deg=40.0,
                    station_x_m=3.0, station_y_m=-1.0, crown_radius_m=2.5, crown_base_m=2.0,
                    growth_m_per_yr="medium", name="oak")
    readings.update(changes)
    return SurveyEntry(**readings)


def small_project(survey=(), obstructions=(), energy=None):
    house = gable_roof(6.0, 6.0, 25.0, 3.0, name="")
    return Project(site=SITE, buildings=(house,), module=generic_60_cell(400.0),
                   clearance=no_setbacks(), fill=FillOptions(), array_faces=("south",),
                   survey=tuple(survey), obstructions=tuple(obstructions),
                   energy=energy or EnergyOptions(sky_directions=256))


@pytest.fixture(scope="module")
def project():
    return small_project(survey=(oak(),))


@pytest.fixture(scope="module")
def analysis(project):
    return Analysis(project)


@pytest.fixture(scope="module")
def spread(project, analysis):
    return shade_loss_range(project, samples=SAMPLES, seed=7, analysis=analysis)


@pytest.fixture(scope="module")
def outlook(project, analysis):
    return growth_outlook(project, analysis=analysis)


# --------------------------------------------------------------------------- the range
def test_sampled_projects_put_the_draws_where_the_survey_stood(project):
    # The nominal scene of the flattened project is the project's own scene, in order.
    flat = with_surveyed(project)
    assert flat.survey == () and flat.scene_obstructions == project.scene_obstructions
    drawn = sampled_projects(project, 3, seed=1)
    assert all(len(q.scene_obstructions) == len(project.scene_obstructions) for q in drawn)
    assert len({q.obstructions[-1] for q in drawn}) == 3  # three different trees


def test_the_band_brackets_the_nominal(spread):
    # Quantiles are equivariant under monotone maps (basic probability): with readings drawn
    # symmetrically about their values and a loss that rises with the tree's size, the
    # nominal loss sits near the median of the draws, inside the 5–95 % band.
    totals = spread.totals
    for quantity in ("shade_loss_pct", "energy_kwh", "energy_lost_kwh"):
        low, nominal, high = totals.loc[quantity, ["p5", "nominal", "p95"]]
        assert low < nominal < high, quantity
    table = spread.modules
    assert (table["shade_loss_pct_p5"] <= table["shade_loss_pct"]).all()
    assert (table["shade_loss_pct"] <= table["shade_loss_pct_p95"]).all()
    assert (table["energy_kwh_p5"] <= table["energy_kwh_p95"]).all()
    assert spread.samples == SAMPLES and spread.seed == 7 and spread.distribution == "normal"


def test_the_analysis_is_left_holding_the_nominal_project(project, analysis, spread):
    assert analysis.project is project
    assert analysis.result.totals["energy_kwh"] == pytest.approx(
        spread.totals.loc["energy_kwh", "nominal"], rel=1e-12)


def test_draws_equal_a_fresh_evaluation_of_the_sampled_project(project, spread):
    # Consistency with the core: the incremental analysis must give what evaluate() gives
    # from scratch for the same sampled project (layout.study.analysis contract).
    drawn = sampled_projects(project, SAMPLES, seed=7)
    for k in (0, SAMPLES - 1):
        fresh = evaluate(drawn[k])
        assert spread.draws.loc[k, "energy_kwh"] == pytest.approx(
            fresh.totals["energy_kwh"], rel=1e-9)
        assert spread.draws.loc[k, "shade_loss_pct"] == pytest.approx(
            fresh.totals["shade_loss_pct"], rel=1e-9)
        np.testing.assert_allclose(spread.draw_energy_kwh.loc[k].to_numpy(),
                                   fresh.table["energy_kwh"].to_numpy(), rtol=1e-9)


def test_percentiles_equal_the_survey_loss_range_with_the_same_seed(project, analysis):
    # layout.scene.survey.loss_range draws the same sets from the same seed; evaluating each set
    # through the plain project route (with_surveyed, Analysis.update) must give the same
    # percentiles of the total loss.
    result = shade_loss_range(project, samples=8, seed=11, analysis=analysis)

    def total_loss(obstructions):
        analysis.update(with_surveyed(project, obstructions))
        return analysis.result.totals["shade_loss_pct"]

    reference = loss_range(project.survey, total_loss, samples=8, seed=11)
    np.testing.assert_allclose(result.totals.loc["shade_loss_pct", ["p5", "p95"]],
                               reference.values, rtol=1e-9)
    assert result.totals.loc["shade_loss_pct", "nominal"] == pytest.approx(reference.nominal,
                                                                           rel=1e-9)


def test_zero_tolerances_collapse_the_band_to_the_nominal(analysis):
    exact = oak(bearing_deg=Reading(180.0, 0.0), distance_m=Reading(9.0, 0.0),
                top_angle_deg=Reading(40.0, 0.0), crown_radius_m=Reading(2.5, 0.0),
                crown_base_m=Reading(2.0, 0.0))
    result = shade_loss_range(small_project(survey=(exact,)), samples=4, analysis=analysis)
    for quantity in ("shade_loss_pct", "energy_kwh"):
        row = result.totals.loc[quantity]
        assert row["p5"] == pytest.approx(row["nominal"], rel=1e-12, abs=1e-12)
        assert row["p95"] == pytest.approx(row["nominal"], rel=1e-12, abs=1e-12)
    np.testing.assert_allclose(result.modules["energy_kwh_p95"], result.modules["energy_kwh"],
                               rtol=1e-12)


def test_percentile_ranks_match_the_binomial_distribution():
    # Order-statistic confidence interval of a quantile (Conover 1999, §3.2, from memory):
    # coverage = F(hi - 1) - F(lo - 1), F the binomial(n, p) CDF, here from scipy.
    for n, pct in ((64, 5), (64, 95), (64, 50), (200, 5), (1000, 90)):
        lo, hi = percentile_ranks(n, pct, confidence=0.9)
        p = pct / 100
        lower_tail = stats.binom.cdf(lo - 1, n, p) if lo > 0 else 0.0
        upper_tail = stats.binom.sf(hi - 1, n, p) if hi <= n else 0.0
        assert lower_tail <= 0.05 + 1e-12 and upper_tail <= 0.05 + 1e-12
        # and neither end could move inward without breaking its tail
        assert lo == n or stats.binom.cdf(lo, n, p) > 0.05
        assert hi == 1 or stats.binom.sf(hi - 2, n, p) > 0.05
    # The default sample count is the first power of two with both ends bounded at 90 %:
    # 0.95 ** n <= 0.05 needs n >= 59.
    assert percentile_ranks(58, 5)[0] == 0 and percentile_ranks(59, 5)[0] == 1
    assert percentile_ranks(DEFAULT_SAMPLES, 95)[1] <= DEFAULT_SAMPLES


def test_percentile_interval_covers_the_true_quantile_of_a_uniform_distribution():
    # The 5th percentile of U(0, 1) is 0.05 (closed form). Over many sets of 64 draws the
    # interval must contain it at least 90 % of the time (less three binomial standard errors).
    rng = np.random.default_rng(3)
    trials, n = 4000, 64
    lo, hi = percentile_ranks(n, 5, confidence=0.9)
    ordered = np.sort(rng.uniform(size=(trials, n)), axis=1)
    covered = (ordered[:, lo - 1] <= 0.05) & (ordered[:, hi - 1] >= 0.05)
    assert covered.mean() >= 0.9 - 3 * math.sqrt(0.9 * 0.1 / trials)


def test_sampling_error_interval_encloses_the_percentile(spread):
    totals = spread.totals
    for p in ("p5", "p95"):
        assert (totals[f"{p}_low"] <= totals[p]).all() and (totals[p] <= totals[f"{p}_high"]).all()


def test_range_round_trips_through_plain_data(spread):
    data = json.loads(json.dumps(spread.to_dict()))
    back = ShadeLossRange.from_dict(data)
    for name in ("modules", "totals", "draws", "draw_energy_kwh"):
        pd.testing.assert_frame_equal(getattr(back, name), getattr(spread, name),
                                      check_exact=True)
    assert back.to_dict() == spread.to_dict()
    data.pop("seed")
    with pytest.raises(InputError) as err:
        ShadeLossRange.from_dict(data)
    assert err.value.field == "seed"


def test_bad_requests_name_the_field(project, analysis):
    with pytest.raises(InputError) as err:
        shade_loss_range(small_project(), analysis=analysis)
    assert err.value.field == "project.survey"
    with pytest.raises(InputError) as err:
        shade_loss_range(project, samples=1, analysis=analysis)
    assert err.value.field == "samples"
    with pytest.raises(InputError) as err:
        growth_outlook(project, life_years=0, analysis=analysis)
    assert err.value.field == "life_years"
    with pytest.raises(InputError) as err:
        growth_outlook(project, degradation_pct_per_yr=-0.5, analysis=analysis)
    assert err.value.field == "degradation_pct_per_yr"


# --------------------------------------------------------------------------- growth
def test_heights_grow_by_rate_times_years(project, outlook):
    # Medium growth class: 0.30–0.61 m/yr (REFERENCES.md, state forestry extension tables,
    # common practice); the class rate is 18 in/yr = 0.4572 m/yr.
    rate = GROWTH_CLASS_RATES_M_PER_YR["medium"]
    assert GROWTH_CLASS_LIMITS_M_PER_YR[0] < rate < GROWTH_CLASS_LIMITS_M_PER_YR[1]
    assert rate == pytest.approx(18 * 0.0254, abs=1e-12)
    height = entry_geometry(project.survey[0])["height_m"]
    row = outlook.tree_heights_m.loc["oak"]
    assert row["growth_m_per_yr"] == pytest.approx(rate)
    for year in (0, 1, 10, 25):
        assert row[year] == pytest.approx(height + rate * year, rel=1e-12)
    grown = project_at_year(project, 10).obstructions[-1]
    assert grown.crown_radius == pytest.approx(2.5 * grown.height / height, rel=1e-12)


def test_a_tree_that_only_grows_never_lowers_the_loss(project, outlook):
    # Geometry: with the crown base below half the height, each year's spheroid crown holds
    # the previous one (checked on points of its surface below), the trunk stays, so every
    # ray blocked one year is blocked the next and the loss can only rise.
    trees = [project_at_year(project, y).obstructions[-1] for y in (0, 1, 10, 25)]
    angle = np.linspace(0, np.pi, 41)
    for small, large in itertools.pairwise(trees):
        assert small.crown_base <= small.height / 2
        r = small.crown_radius * np.sin(angle)
        z = small.crown_center_z + small.crown_semi_axis_z * np.cos(angle)
        inside = (r / large.crown_radius) ** 2 + \
            ((z - large.crown_center_z) / large.crown_semi_axis_z) ** 2
        assert (inside <= 1 + 1e-9).all()
    lost = outlook.yearly["energy_lost_kwh"].to_numpy()
    assert (np.diff(lost) >= -1e-6 * lost.max()).all()
    assert lost[-1] > lost[0]
    per_module = outlook.module_loss_pct
    assert (per_module[10] >= per_module[1] - 1e-4).all()
    assert (per_module[25] >= per_module[10] - 1e-4).all()


def test_lifetime_energy_lost_is_the_sum_of_every_year(outlook):
    yearly = outlook.yearly
    assert outlook.lifetime_energy_lost_kwh == pytest.approx(
        yearly.loc[1:25, "energy_lost_kwh"].sum(), rel=1e-12)
    assert outlook.lifetime_growth_lost_kwh == pytest.approx(
        (yearly.loc[1:25, "energy_lost_kwh"] - yearly.loc[0, "energy_lost_kwh"]).sum(),
        rel=1e-12)
    # year 0 is the project as surveyed: what a plain evaluation of it gives
    assert yearly.loc[0, "energy_kwh"] == pytest.approx(
        outlook.yearly.loc[0, "energy_unshaded_kwh"] - yearly.loc[0, "energy_lost_kwh"])


def test_a_mature_height_caps_the_growth(project, analysis):
    # the oak grows 0.4572 m/yr (medium class, as above) until it reaches the mature height
    # the surveyor gave; past it the years shade alike
    height = entry_geometry(project.survey[0])["height_m"]
    capped = small_project(survey=(oak(mature_height_m=height + 2.0),))
    result = growth_outlook(capped, years=(1, 4, 10, 25), life_years=25, analysis=analysis)
    row = result.tree_heights_m.loc["oak"]
    rate = GROWTH_CLASS_RATES_M_PER_YR["medium"]
    assert row[1] == pytest.approx(height + rate, rel=1e-12)
    assert row[4] == pytest.approx(height + 4 * rate, rel=1e-12)  # 1.83 m: still below
    assert row[10] == pytest.approx(height + 2.0, rel=1e-12)
    assert row[25] == pytest.approx(height + 2.0, rel=1e-12)
    energy = result.yearly["energy_unshaded_kwh"] - result.yearly["energy_lost_kwh"]
    shade = result.yearly["energy_lost_kwh"] / result.yearly["degradation_factor"]
    assert shade[10] == pytest.approx(shade[25], rel=1e-12)
    assert (energy > 0).all()


def test_a_tree_without_growth_gives_identical_years(analysis):
    still = small_project(survey=(oak(growth_m_per_yr=None),))
    result = growth_outlook(still, years=(1, 10), life_years=10, analysis=analysis)
    energy = result.yearly["energy_kwh"].to_numpy()
    np.testing.assert_array_equal(energy, energy[0])
    pd.testing.assert_series_equal(result.module_loss_pct[1], result.module_loss_pct[10],
                                   check_names=False)
    assert result.lifetime_growth_lost_kwh == 0.0


def test_optional_degradation_scales_each_year_linearly(project, analysis, outlook):
    # Linear degradation as module power warranties state it (common practice, 0.5 %/yr):
    # year y yields 1 - 0.005 (y - 1) of year 1; the shade loss in percent is unchanged.
    aged = growth_outlook(project, life_years=25, degradation_pct_per_yr=0.5,
                          analysis=analysis)
    years = np.arange(1, 26)
    factor = 1 - 0.005 * (years - 1)
    np.testing.assert_allclose(aged.yearly.loc[1:25, "degradation_factor"], factor, rtol=1e-12)
    assert aged.lifetime_energy_kwh == pytest.approx(
        (outlook.yearly.loc[1:25, "energy_kwh"].to_numpy() * factor).sum(), rel=1e-9)
    np.testing.assert_allclose(aged.yearly["shade_loss_pct"], outlook.yearly["shade_loss_pct"],
                               rtol=1e-9)


def test_outlook_round_trips_through_plain_data(outlook):
    data = json.loads(json.dumps(outlook.to_dict()))
    back = GrowthOutlook.from_dict(data)
    for name in ("yearly", "module_loss_pct", "module_energy_kwh", "tree_heights_m"):
        pd.testing.assert_frame_equal(getattr(back, name), getattr(outlook, name),
                                      check_exact=True)
    assert back.to_dict() == outlook.to_dict()
    data["life_years"] = 0
    with pytest.raises(InputError) as err:
        GrowthOutlook.from_dict(data)
    assert err.value.field == "life_years"


# --------------------------------------------------------------------------- leaves
@pytest.fixture(scope="module")
def leaves(analysis):
    # A deciduous tree west of the array shades the afternoons all year. The irradiance-only
    # electrical model without a temperature coefficient makes the power linear in the light.
    maple = Tree.deciduous((-4.0, 1.0), 9.0, 2.5, 2.0, name="maple")
    energy = EnergyOptions(sky_directions=256,
                           electrical=ElectricalOptions(shade_model="irradiance", gamma_pdc=0.0))
    return leaf_effect(small_project(obstructions=(maple,), energy=energy), analysis=analysis)


def test_leaf_off_months_use_heisler_transmittances(leaves):
    # Heisler (1986), Urban Ecology 9:337: sugar maple about 0.6 leafless, 0.2 in leaf;
    # northern hemisphere leaf-on May to October (common practice).
    expected = [LEAF_OFF_TRANSMITTANCE] * 4 + [LEAF_ON_TRANSMITTANCE] * 6 + \
        [LEAF_OFF_TRANSMITTANCE] * 2
    assert expected[0] == 0.6 and expected[5] == 0.2
    np.testing.assert_allclose(leaves.monthly["crown_transmittance"], expected)
    assert list(leaves.monthly["leaf_off"]) == [t == 0.6 for t in expected]
    assert leaves.trees == ("maple",)


def test_deciduous_loss_lies_between_clear_and_opaque_month_by_month(leaves):
    m = leaves.monthly
    assert (m["shade_loss_clear_pct"] <= m["shade_loss_pct"] + 1e-6).all()
    assert (m["shade_loss_pct"] <= m["shade_loss_opaque_pct"] + 1e-6).all()
    assert (m["shade_loss_opaque_pct"] > m["shade_loss_clear_pct"] + 0.1).all()
    assert leaves.energy_gain_kwh > 0
    assert leaves.leaf_off_loss_pct < leaves.leaf_off_loss_opaque_pct


def test_deciduous_loss_interpolates_linearly_in_transmittance(leaves):
    # With power proportional to the light let through, the crown passes a fraction T of
    # the beam it covers: lost(T) = lost_opaque - T (lost_opaque - lost_clear), T = 0.6
    # leafless and 0.2 in leaf (Heisler 1986). The fixture sets no temperature coefficient:
    # with one, cell heating makes power quadratic in irradiance and bends the line by a few
    # per cent (gamma ≈ -0.4 %/K times ≈ 0.03 K per W/m² times a beam of ≈ 700 W/m²).
    m = leaves.monthly
    lost = {k: m["energy_unshaded_kwh"] - m[c] for k, c in
            (("modelled", "energy_kwh"), ("opaque", "energy_opaque_kwh"),
             ("clear", "energy_clear_kwh"))}
    line = lost["opaque"] - m["crown_transmittance"] * (lost["opaque"] - lost["clear"])
    np.testing.assert_allclose(lost["modelled"], line, rtol=1e-5)


def test_leaf_effect_round_trips_and_needs_a_see_through_crown(leaves, project, analysis):
    back = LeafEffect.from_dict(json.loads(json.dumps(leaves.to_dict())))
    pd.testing.assert_frame_equal(back.monthly, leaves.monthly, check_exact=True)
    assert back.to_dict() == leaves.to_dict()
    with pytest.raises(InputError) as err:
        leaf_effect(project, analysis=analysis)  # the oak is opaque
    assert err.value.field == "project.obstructions"


def test_a_surveyed_deciduous_tree_counts(project, analysis):
    leafy = project.with_changes(survey=(replace(project.survey[0], deciduous=True),))
    result = leaf_effect(leafy, analysis=analysis)
    assert result.trees == ("oak",)
    # the oak stands south: in December (leafless, T = 0.6) it lets light through
    assert result.monthly.loc[12, "shade_loss_pct"] < result.monthly.loc[12,
                                                                         "shade_loss_opaque_pct"]
