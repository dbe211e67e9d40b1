"""Shade loss as a range and over the years: survey tolerances, tree growth, leaves.

Three questions a surveyor's numbers leave open, answered through one
:class:`layout.study.analysis.Analysis` that is kept across the evaluations, so that each one only
ray-tests the obstructions that changed:

:func:`shade_loss_range`
    How much do the tolerances of the field readings move the annual shade loss? The surveyed
    obstructions are drawn from their tolerances (:func:`layout.scene.survey.sample_obstructions`),
    every draw is evaluated, and the percentiles per module and in total are reported with the
    sample count, the seed and the sampling error of the percentiles.
:func:`growth_outlook`
    How does the loss grow as the trees grow over the system's life? Every year of the life is
    evaluated with every tree grown by its own rate, and the energy lost to shade is summed.
:func:`leaf_effect`
    What do the leafless months of deciduous trees give back? Month by month, the loss as
    modelled beside the loss with see-through crowns made opaque all year and made clear.

How a sampled project is built
------------------------------
A project's surveyed obstructions stand in its scene after its own obstructions
(:attr:`layout.project.Project.scene_obstructions`). A *sampled project* is the project with
the survey readings replaced by the obstructions one draw gives: those obstructions are
appended to :attr:`~layout.project.Project.obstructions` and the survey is emptied, so each one
stands in the scene exactly once, in the same place of the caster order as the nominal one
(:func:`with_surveyed`). With the nominal obstructions (no draw) this scene is the project's
own, so the nominal figures are those of the project itself. The sampled project keeps
everything else (roofs, modules, removals, energy options); it is built only to be evaluated,
and its document would lose the readings, so it is never saved in place of the project.

Year convention
---------------
Operating year ``y`` (1 = the first year after the survey) is evaluated with every tree as it
stands ``y`` years after the survey (:func:`layout.scene.survey.grown_tree`, each tree's own
``growth_m_per_yr``), held for the whole year: a conservative choice by half a year of growth.
Year 0 is the scene as surveyed. Module degradation is not modelled unless asked for
(``degradation_pct_per_yr``, off by default).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from ..errors import InputError, check_fields, check_range
from ..scene.obstructions import Tree
from ..scene.survey import (
    PROJECTION_YEARS,
    SYSTEM_LIFE_YEARS,
    grown_tree,
    sample_obstructions,
)
from .analysis import Analysis

__all__ = [
    "DEFAULT_CONFIDENCE",
    "DEFAULT_SAMPLES",
    "GrowthOutlook",
    "LeafEffect",
    "ShadeLossRange",
    "growth_outlook",
    "leaf_effect",
    "percentile_label",
    "percentile_ranks",
    "project_at_year",
    "sampled_projects",
    "shade_loss_range",
    "with_surveyed",
]

#: Default number of draws of the survey readings. 64 is the smallest power of two for which
#: the distribution-free 90 % confidence interval of the 5th and the 95th percentile is bounded
#: on both sides (that needs ``0.95**n <= 0.05``, n >= 59; see :func:`percentile_ranks`), and
#: it keeps the demo house to a few seconds (about 0.1 s an incremental evaluation). Ask for
#: more when the reported interval is wider than the decision at hand allows.
DEFAULT_SAMPLES = 64

#: Default confidence level of the sampling-error interval of a percentile [fraction].
DEFAULT_CONFIDENCE = 0.90

_QUANTITIES = ("shade_loss_pct", "energy_kwh", "energy_lost_kwh")


# --------------------------------------------------------------------------- plain data
def _plain_number(value):
    if isinstance(value, (str, bool)) or value is None:
        return value
    if isinstance(value, (int, np.integer)):
        return int(value)
    number = float(value)
    return None if math.isnan(number) else number


def _frame_to_dict(frame: pd.DataFrame) -> dict:
    """Return a DataFrame of numbers (or text) with a flat index as plain lists."""
    return {
        "index_name": frame.index.name,
        "columns_name": frame.columns.name,
        "index": [_plain_number(v) for v in frame.index],
        "columns": [_plain_number(c) for c in frame.columns],
        "data": [[_plain_number(v) for v in frame[c].tolist()] for c in frame.columns],
    }


def _frame_from_dict(field: str, data) -> pd.DataFrame:
    try:
        check_fields(data, ("index_name", "columns_name", "index", "columns", "data"),
                     required=("index", "columns", "data"), what="table")
    except InputError as err:
        raise err.at(field) from None
    index, columns, values = data["index"], data["columns"], data["data"]
    if not (isinstance(index, list) and isinstance(columns, list) and isinstance(values, list)):
        raise InputError(field, "index, columns and data must be lists")
    if len(values) != len(columns) or any(not isinstance(v, list) or len(v) != len(index)
                                          for v in values):
        raise InputError(f"{field}.data", "needs one list per column, one value per row",
                         allowed=f"{len(columns)} lists of {len(index)} values")
    out = {}
    for c, column in zip(columns, values, strict=True):
        if column and all(isinstance(v, str) for v in column):
            out[c] = pd.Series(column, dtype=object).astype("str")
            continue
        try:
            out[c] = np.array([np.nan if v is None else v for v in column], dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{field}.data", "must hold numbers or null", value=c) from None
    frame = pd.DataFrame(out, columns=pd.Index(columns) if columns else None)
    frame.index = pd.Index(index, name=data.get("index_name"))
    if not columns:
        frame = pd.DataFrame(index=frame.index)
    frame.columns.name = data.get("columns_name")
    return frame


def _float_or_none(field: str, value):
    if value is None:
        return math.nan
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(field, "must be a number or null", value=value)
    return float(value)


def _whole(field: str, value, low: int) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < low:
        raise InputError(field, "must be a whole number", value=value, allowed=f">= {low}")
    return int(value)


# --------------------------------------------------------------------------- projects
def _hemisphere(project) -> str:
    return "north" if project.site.latitude >= 0 else "south"


def with_surveyed(project, surveyed=None):
    """Return the project with its surveyed obstructions made plain obstructions.

    Parameters
    ----------
    project : layout.project.Project
    surveyed : sequence or None
        One obstruction per survey entry, in the order of ``project.survey`` (a draw from
        :func:`layout.scene.survey.sample_obstructions`); None takes the nominal ones.

    Returns
    -------
    layout.project.Project
        ``obstructions`` = the project's obstructions followed by ``surveyed``, ``survey``
        empty: the same scene order as the project's own
        :attr:`~layout.project.Project.scene_obstructions`.
    """
    if surveyed is None:
        surveyed = project.scene_obstructions[len(project.obstructions):]
    surveyed = tuple(surveyed)
    if len(surveyed) != len(project.survey):
        raise InputError("surveyed", "needs one obstruction per survey entry",
                         value=len(surveyed), allowed=str(len(project.survey)))
    return project.with_changes(obstructions=project.obstructions + surveyed, survey=())


def _grow_all(obstructions, year: float, widen_crown: bool) -> tuple:
    return tuple(grown_tree(ob, year, widen_crown=widen_crown)
                 if isinstance(ob, Tree) and ob.growth_m_per_yr > 0 and year > 0 else ob
                 for ob in obstructions)


def _check_year(field: str, year) -> int:
    if isinstance(year, bool) or not isinstance(year, (int, np.integer)) or not 0 <= year <= 100:
        raise InputError(field, "must be a whole number of years", value=year,
                         allowed="0 to 100")
    return int(year)


def project_at_year(project, year: int, *, widen_crown: bool = True, surveyed=None):
    """Return the project as it stands ``year`` years after the survey.

    Every :class:`~layout.scene.obstructions.Tree` of the scene, surveyed or entered, grows by its
    own ``growth_m_per_yr`` (:func:`layout.scene.survey.grown_tree`); other obstructions stay.

    Parameters
    ----------
    project : layout.project.Project
    year : int
        Years after the survey, 0 to 100.
    widen_crown : bool, keyword-only, default True
        Crowns widen in proportion to the height.
    surveyed : sequence or None, keyword-only
        As in :func:`with_surveyed`.

    Returns
    -------
    layout.project.Project
        Survey made plain obstructions (:func:`with_surveyed`), trees grown.
    """
    year = _check_year("year", year)
    flat = with_surveyed(project, surveyed)
    if year == 0:
        return flat
    return flat.with_changes(obstructions=_grow_all(flat.obstructions, year, widen_crown))


def sampled_projects(project, samples: int = DEFAULT_SAMPLES, *, seed: int | None = 0,
                     distribution: str = "normal", year: int = 0,
                     widen_crown: bool = True) -> list:
    """Return the projects of ``samples`` draws of the survey readings.

    The draws are those of :func:`layout.scene.survey.loss_range` with the same seed: one generator
    ``numpy.random.default_rng(seed)`` serves every entry in order
    (:func:`layout.scene.survey.sample_obstructions`).

    Parameters
    ----------
    project : layout.project.Project
        With at least one survey entry.
    samples : int, default :data:`DEFAULT_SAMPLES`
        Number of draws, at least 1.
    seed : int or None, keyword-only, default 0
        Seed of the generator.
    distribution : {"normal", "uniform"}, keyword-only
        As in :func:`layout.scene.survey.sample_readings`.
    year : int, keyword-only, default 0
        Years of tree growth applied to every draw (:func:`project_at_year`).
    widen_crown : bool, keyword-only, default True
        As in :func:`project_at_year`.

    Returns
    -------
    list of layout.project.Project
    """
    if not project.survey:
        raise InputError("project.survey", "has no entries to sample",
                         allowed="one or more survey entries")
    rng = np.random.default_rng(seed)
    sets = sample_obstructions(project.survey, samples, rng, distribution=distribution,
                               hemisphere=_hemisphere(project))
    return [project_at_year(project, year, widen_crown=widen_crown, surveyed=s) for s in sets]


def _analysis(project, analysis, base_dir):
    if analysis is None:
        return Analysis(project, base_dir=base_dir)
    if not isinstance(analysis, Analysis):
        raise InputError("analysis", "is not an Analysis", value=type(analysis).__name__)
    return analysis


# --------------------------------------------------------------------------- percentiles
def _binomial_cdf(n: int, p: float) -> np.ndarray:
    """``P(B <= k)`` for k = 0..n of a binomial(n, p), summed from log-space terms."""
    k = np.arange(n + 1)
    if p <= 0.0:
        return np.ones(n + 1)
    if p >= 1.0:
        return np.where(k == n, 1.0, 0.0)
    log_pmf = np.array([math.lgamma(n + 1) - math.lgamma(i + 1) - math.lgamma(n - i + 1)
                        for i in range(n + 1)]) + k * math.log(p) + (n - k) * math.log1p(-p)
    return np.minimum(np.cumsum(np.exp(log_pmf)), 1.0)


def percentile_ranks(n: int, percentile: float, *, confidence: float = DEFAULT_CONFIDENCE
                     ) -> tuple[int, int]:
    """Return the order statistics that bracket a percentile with a given confidence.

    Distribution-free: for any continuous distribution, the ``lo``-th and ``hi``-th smallest
    of ``n`` independent draws enclose the true ``percentile`` with probability at least
    ``confidence``. The number of draws below the true p-quantile is binomial(n, p), so
    ``P(X_(lo) <= ξ_p <= X_(hi)) = F(hi - 1) - F(lo - 1)`` with F the binomial CDF; each tail
    is kept at or below ``(1 - confidence) / 2``.

    Parameters
    ----------
    n : int
        Number of draws, at least 1.
    percentile : float
        The percentile [%], 0 to 100.
    confidence : float, keyword-only, default 0.9
        Coverage probability [fraction], more than 0 and less than 1.

    Returns
    -------
    lo, hi : int
        1-based ranks. ``lo = 0`` means there is no lower bound at this ``n`` (too few draws),
        ``hi = n + 1`` no upper bound.

    References
    ----------
    Confidence intervals for quantiles from order statistics: e.g. Conover (1999), Practical
    Nonparametric Statistics, 3rd ed., §3.2; Hahn & Meeker (1991), Statistical Intervals,
    §5.2 (both from memory).
    """
    n = _whole("n", n, 1)
    p = check_range("percentile", percentile, 0.0, 100.0, unit="%") / 100.0
    conf = check_range("confidence", confidence, 0.0, 1.0, low_open=True, high_open=True)
    tail = (1.0 - conf) / 2.0
    cdf = _binomial_cdf(n, p)
    eps = 1e-12
    # lo: largest rank with P(B <= lo - 1) <= tail, i.e. P(X_(lo) > ξ_p) <= tail
    fits = np.flatnonzero(cdf[:n] <= tail + eps)  # index lo - 1 = 0..n-1
    lo = int(fits[-1]) + 1 if fits.size else 0
    # hi: smallest rank with P(B <= hi - 1) >= 1 - tail, i.e. P(X_(hi) < ξ_p) <= tail
    fits = np.flatnonzero(cdf[:n] >= 1.0 - tail - eps)
    hi = int(fits[0]) + 1 if fits.size else n + 1
    return lo, hi


def _interval(values: np.ndarray, percentile: float, confidence: float) -> tuple[float, float]:
    ordered = np.sort(np.asarray(values, dtype=float))
    lo, hi = percentile_ranks(len(ordered), percentile, confidence=confidence)
    low = -math.inf if lo == 0 else float(ordered[lo - 1])
    high = math.inf if hi == len(ordered) + 1 else float(ordered[hi - 1])
    return low, high


def percentile_label(p: float) -> str:
    """Return the column label of a percentile in the range tables: 5 → ``"p5"``."""
    return f"p{p:g}"


def _check_percentiles(percentiles) -> tuple[float, ...]:
    pct = tuple(check_range(f"percentiles[{i}]", p, 0.0, 100.0, unit="%")
                for i, p in enumerate(percentiles))
    if not pct:
        raise InputError("percentiles", "is empty", allowed="one or more of 0 to 100")
    if len({percentile_label(p) for p in pct}) != len(pct):
        raise InputError("percentiles", "has a percentile twice", value=list(pct))
    return pct


# --------------------------------------------------------------------------- the range
@dataclass(frozen=True, eq=False)
class ShadeLossRange:
    """Annual shade loss and energy over draws of the survey readings.

    Attributes
    ----------
    percentiles : tuple of float
        Percentiles reported [%].
    modules : pandas.DataFrame
        Indexed by module id (the nominal layout's modules): ``shade_loss_pct`` and
        ``energy_kwh`` of the nominal readings, then ``shade_loss_pct_p5``, ...,
        ``energy_kwh_p95`` (one column per percentile, labelled ``p`` + the percentile).
    totals : pandas.DataFrame
        Rows ``shade_loss_pct`` [%], ``energy_kwh`` and ``energy_lost_kwh`` [kWh/yr] of the
        whole layout; columns ``nominal``, one per percentile (``p5``, ``p95``), and for each
        percentile its sampling-error interval ``p5_low``, ``p5_high`` (distribution-free, at
        :attr:`confidence`; ±inf when too few draws bound it, see :func:`percentile_ranks`).
        The percentiles of the totals are taken over the draws' totals, not summed from the
        modules' percentiles.
    draws : pandas.DataFrame
        One row per draw: ``energy_kwh``, ``energy_unshaded_kwh``, ``energy_lost_kwh``,
        ``shade_loss_pct`` of the layout.
    draw_energy_kwh : pandas.DataFrame
        Energy of each module [kWh/yr], one row per draw, one column per module id.
    samples : int
        Number of draws.
    seed : int or None
        Seed of the generator; with it the draws repeat exactly.
    distribution : str
        How the readings were drawn ("normal" or "uniform").
    confidence : float
        Confidence level of the sampling-error intervals [fraction].
    year : int
        Years of tree growth applied (0: as surveyed).
    notes : tuple of str
        Anything the reader must know (a draw that changed the fill, say).
    """

    percentiles: tuple[float, ...]
    modules: pd.DataFrame
    totals: pd.DataFrame
    draws: pd.DataFrame
    draw_energy_kwh: pd.DataFrame
    samples: int
    seed: int | None
    distribution: str
    confidence: float
    year: int
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        """Plain-data form (lists, floats, text, None; infinite bounds as None)."""
        totals = self.totals.replace([np.inf, -np.inf], np.nan)
        return {"percentiles": list(self.percentiles), "modules": _frame_to_dict(self.modules),
                "totals": _frame_to_dict(totals),
                "totals_unbounded": [[bool(v) for v in np.isinf(self.totals[c].to_numpy())]
                                     for c in self.totals.columns],
                "draws": _frame_to_dict(self.draws),
                "draw_energy_kwh": _frame_to_dict(self.draw_energy_kwh),
                "samples": self.samples, "seed": self.seed, "distribution": self.distribution,
                "confidence": self.confidence, "year": self.year, "notes": list(self.notes)}

    @classmethod
    def from_dict(cls, data) -> ShadeLossRange:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("percentiles", "modules", "totals", "totals_unbounded", "draws",
                 "draw_energy_kwh", "samples", "seed", "distribution", "confidence", "year",
                 "notes")
        check_fields(data, known, required=known, what="shade loss range")
        if not isinstance(data["percentiles"], list):
            raise InputError("percentiles", "must be a list of numbers")
        totals = _frame_from_dict("totals", data["totals"])
        unbounded = data["totals_unbounded"]
        if (not isinstance(unbounded, list) or len(unbounded) != totals.shape[1]
                or any(not isinstance(c, list) or len(c) != len(totals) for c in unbounded)):
            raise InputError("totals_unbounded", "needs one list of flags per totals column")
        for c, flags in zip(totals.columns, unbounded, strict=True):
            sign = -1.0 if str(c).endswith("_low") else 1.0
            column = totals[c].to_numpy(copy=True)
            column[np.array(flags, dtype=bool)] = sign * np.inf
            totals[c] = column
        seed = data["seed"]
        if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int)):
            raise InputError("seed", "must be a whole number or null", value=seed)
        if data["distribution"] not in ("normal", "uniform"):
            raise InputError("distribution", "is not a known distribution",
                             value=data["distribution"], allowed="normal, uniform")
        notes = data["notes"]
        if not isinstance(notes, list) or not all(isinstance(n, str) for n in notes):
            raise InputError("notes", "must be a list of text")
        return cls(percentiles=_check_percentiles(data["percentiles"]),
                   modules=_frame_from_dict("modules", data["modules"]), totals=totals,
                   draws=_frame_from_dict("draws", data["draws"]),
                   draw_energy_kwh=_frame_from_dict("draw_energy_kwh", data["draw_energy_kwh"]),
                   samples=_whole("samples", data["samples"], 1), seed=seed,
                   distribution=data["distribution"],
                   confidence=check_range("confidence", data["confidence"], 0.0, 1.0,
                                          low_open=True, high_open=True),
                   year=_check_year("year", data["year"]), notes=tuple(notes))


def _layout_figures(result) -> dict:
    totals = result.totals
    energy, unshaded = totals["energy_kwh"], totals["energy_unshaded_kwh"]
    return {"energy_kwh": energy, "energy_unshaded_kwh": unshaded,
            "energy_lost_kwh": unshaded - energy, "shade_loss_pct": totals["shade_loss_pct"]}


def shade_loss_range(project, *, samples: int = DEFAULT_SAMPLES, seed: int | None = 0,
                     percentiles: Sequence[float] = (5, 95), distribution: str = "normal",
                     confidence: float = DEFAULT_CONFIDENCE, year: int = 0,
                     widen_crown: bool = True, analysis=None, base_dir=None,
                     progress=None) -> ShadeLossRange:
    """Carry the tolerances of the survey readings to the annual shade loss.

    Draws ``samples`` sets of surveyed obstructions from the readings' tolerances
    (:func:`sampled_projects`), evaluates each through one
    :class:`~layout.study.analysis.Analysis` (only the surveyed obstructions change, so only they
    are ray-tested again), and reports percentiles per module and in total.

    Parameters
    ----------
    project : layout.project.Project
        With at least one survey entry.
    samples : int, keyword-only, default :data:`DEFAULT_SAMPLES` (64)
        Number of draws, at least 2.
    seed : int or None, keyword-only, default 0
        Seed of ``numpy.random.default_rng``; report it beside the range.
    percentiles : sequence of float, keyword-only, default (5, 95)
        Percentiles to report [%], 0 to 100.
    distribution : {"normal", "uniform"}, keyword-only, default "normal"
        As in :func:`layout.scene.survey.sample_readings`.
    confidence : float, keyword-only, default 0.9
        Confidence level of each percentile's sampling-error interval [fraction].
    year : int, keyword-only, default 0
        Years of tree growth applied to the nominal scene and to every draw.
    widen_crown : bool, keyword-only, default True
        As in :func:`project_at_year`.
    analysis : layout.study.analysis.Analysis or None, keyword-only
        An analysis to reuse (the planner's); it is left holding ``project`` (at ``year``).
        None builds one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, when ``analysis`` is None.
    progress : callable, keyword-only, optional
        Called as ``progress(done, total)`` before each evaluation: the draws, then the
        nominal readings (``total = samples + 1``).

    Returns
    -------
    ShadeLossRange
    """
    samples = _whole("samples", samples, 2)
    pct = _check_percentiles(percentiles)
    conf = check_range("confidence", confidence, 0.0, 1.0, low_open=True, high_open=True)
    year = _check_year("year", year)
    drawn = sampled_projects(project, samples, seed=seed, distribution=distribution,
                             year=year, widen_crown=widen_crown)
    nominal_project = project if year == 0 else project_at_year(project, year,
                                                                 widen_crown=widen_crown)
    runner = _analysis(drawn[0], analysis, base_dir)
    rows, energy, loss, notes = [], [], [], []
    changed_fill = 0
    for done, sampled in enumerate(drawn):
        if progress is not None:
            progress(done, samples + 1)
        runner.update(sampled)
        result = runner.result
        rows.append(_layout_figures(result))
        energy.append(result.table["energy_kwh"])
        loss.append(result.table["shade_loss_pct"])
    if progress is not None:
        progress(samples, samples + 1)
    runner.update(nominal_project)  # last, so the analysis is left at the nominal project
    nominal = runner.result
    ids = nominal.table.index
    for series in energy:
        if not series.index.equals(ids):
            changed_fill += 1
    if changed_fill:
        notes.append(f"{changed_fill} of {samples} draws changed the fill (a surveyed "
                     f"obstruction on the roof); module percentiles use the draws in which "
                     f"the module exists, totals use every draw")
    energy_frame = pd.DataFrame([s.reindex(ids).to_numpy() for s in energy], columns=ids,
                                index=pd.RangeIndex(samples, name="draw"))
    loss_frame = np.array([s.reindex(ids).to_numpy() for s in loss], dtype=float)
    modules = pd.DataFrame({"shade_loss_pct": nominal.table["shade_loss_pct"].to_numpy(),
                            "energy_kwh": nominal.table["energy_kwh"].to_numpy()}, index=ids)
    with np.errstate(all="ignore"):
        for name, values in (("shade_loss_pct", loss_frame),
                             ("energy_kwh", energy_frame.to_numpy(dtype=float))):
            if values.shape[1]:
                bands = np.nanpercentile(values, pct, axis=0)
            else:
                bands = np.zeros((len(pct), 0))
            for p, band in zip(pct, bands, strict=True):
                modules[f"{name}_{percentile_label(p)}"] = band
    draws = pd.DataFrame(rows, index=pd.RangeIndex(samples, name="draw"),
                         columns=["energy_kwh", "energy_unshaded_kwh", "energy_lost_kwh",
                                  "shade_loss_pct"])
    figures = _layout_figures(nominal)
    table = {"nominal": [figures[q] for q in _QUANTITIES]}
    for p in pct:
        table[percentile_label(p)] = [float(np.percentile(draws[q], p)) for q in _QUANTITIES]
    for p in pct:
        bounds = [_interval(draws[q].to_numpy(), p, conf) for q in _QUANTITIES]
        table[f"{percentile_label(p)}_low"] = [b[0] for b in bounds]
        table[f"{percentile_label(p)}_high"] = [b[1] for b in bounds]
    totals = pd.DataFrame(table, index=pd.Index(list(_QUANTITIES), name="quantity"))
    return ShadeLossRange(percentiles=pct, modules=modules, totals=totals, draws=draws,
                          draw_energy_kwh=energy_frame, samples=samples, seed=seed,
                          distribution=distribution, confidence=conf, year=year,
                          notes=tuple(notes))


# --------------------------------------------------------------------------- growth
@dataclass(frozen=True, eq=False)
class GrowthOutlook:
    """Shade loss and energy year by year as the trees grow.

    Attributes
    ----------
    yearly : pandas.DataFrame
        Indexed by ``year``, 0 (as surveyed) to the last year evaluated: ``energy_kwh``,
        ``energy_unshaded_kwh``, ``energy_lost_kwh`` [kWh/yr, after degradation],
        ``shade_loss_pct`` [%] and ``degradation_factor`` [fraction of year-1 output].
    module_loss_pct : pandas.DataFrame
        Shade loss [%] per module (rows, by id) in each year of :attr:`years` (columns).
    module_energy_kwh : pandas.DataFrame
        Energy [kWh/yr] per module in each year of :attr:`years`, after degradation.
    tree_heights_m : pandas.DataFrame
        Height [m] of every tree of the scene (rows, by a label: its name, or
        ``tree <position in the scene>``) as surveyed (column 0) and in each year of
        :attr:`years`; column ``growth_m_per_yr`` holds its rate [m/yr].
    years : tuple of int
        Years reported per module.
    life_years : int
        Years of the system's life summed into the lifetime figures.
    widen_crown : bool
        Whether crowns widened in proportion to the height.
    degradation_pct_per_yr : float
        Module output lost per year, linear [%/yr]; 0 = not modelled.
    lifetime_energy_kwh, lifetime_energy_unshaded_kwh, lifetime_energy_lost_kwh : float
        Sums over years 1 to :attr:`life_years` [kWh].
    lifetime_growth_lost_kwh : float
        The part of :attr:`lifetime_energy_lost_kwh` due to growth: the sum over the years
        of the loss above the year-0 loss (with the same degradation) [kWh].
    """

    yearly: pd.DataFrame
    module_loss_pct: pd.DataFrame
    module_energy_kwh: pd.DataFrame
    tree_heights_m: pd.DataFrame
    years: tuple[int, ...]
    life_years: int
    widen_crown: bool
    degradation_pct_per_yr: float
    lifetime_energy_kwh: float
    lifetime_energy_unshaded_kwh: float
    lifetime_energy_lost_kwh: float
    lifetime_growth_lost_kwh: float

    _FRAMES = ("yearly", "module_loss_pct", "module_energy_kwh", "tree_heights_m")
    _NUMBERS = ("degradation_pct_per_yr", "lifetime_energy_kwh", "lifetime_energy_unshaded_kwh",
                "lifetime_energy_lost_kwh", "lifetime_growth_lost_kwh")

    def to_dict(self) -> dict:
        """Plain-data form (lists, floats, text, None)."""
        out = {name: _frame_to_dict(getattr(self, name)) for name in self._FRAMES}
        out.update({"years": list(self.years), "life_years": self.life_years,
                    "widen_crown": self.widen_crown})
        out.update({name: _plain_number(getattr(self, name)) for name in self._NUMBERS})
        return out

    @classmethod
    def from_dict(cls, data) -> GrowthOutlook:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = (*cls._FRAMES, "years", "life_years", "widen_crown", *cls._NUMBERS)
        check_fields(data, known, required=known, what="growth outlook")
        if not isinstance(data["years"], list):
            raise InputError("years", "must be a list of whole numbers")
        if not isinstance(data["widen_crown"], bool):
            raise InputError("widen_crown", "must be true or false", value=data["widen_crown"])
        frames = {name: _frame_from_dict(name, data[name]) for name in cls._FRAMES}
        numbers = {name: _float_or_none(name, data[name]) for name in cls._NUMBERS}
        return cls(**frames, **numbers,
                   years=tuple(_check_year(f"years[{i}]", y) for i, y in enumerate(data["years"])),
                   life_years=_whole("life_years", data["life_years"], 1),
                   widen_crown=data["widen_crown"])


def _tree_labels(obstructions) -> list[tuple[int, str]]:
    trees = [(i, ob) for i, ob in enumerate(obstructions) if isinstance(ob, Tree)]
    names = [ob.name for _, ob in trees]
    return [(i, ob.name if ob.name and names.count(ob.name) == 1 else f"tree {i}")
            for i, ob in trees]


def growth_outlook(project, *, years: Sequence[int] = PROJECTION_YEARS,
                   life_years: int = SYSTEM_LIFE_YEARS, widen_crown: bool = True,
                   degradation_pct_per_yr: float = 0.0, analysis=None, base_dir=None
                   ) -> GrowthOutlook:
    """Project the shade loss over the system's life as every tree grows at its own rate.

    Every year from 0 (as surveyed) to ``max(life_years, max(years))`` is evaluated through
    one :class:`~layout.study.analysis.Analysis` (:func:`project_at_year`; only the growing trees
    are ray-tested again each year, so no interpolation between years is needed). Trees
    without a growth rate, and every other obstruction, stay as they are. Year ``y`` uses the
    trees grown ``y`` years (module notes).

    Parameters
    ----------
    project : layout.project.Project
    years : sequence of int, keyword-only, default (1, 10, 25)
        Years reported per module and per tree, 0 to 100.
    life_years : int, keyword-only, default 25
        Life of the system [years], 1 to 100 (common practice: the power warranty).
    widen_crown : bool, keyword-only, default True
        Crowns widen in proportion to the height (:func:`layout.scene.survey.grown_tree`).
        With False the spheroid crown keeps its radius and base, so it grows slimmer near
        its base, and the loss in some hours can fall as the tree grows.
    degradation_pct_per_yr : float, keyword-only, default 0
        Optional module degradation [%/yr], 0 to 5, linear: year ``y`` yields
        ``1 - rate · (y - 1)`` of year 1, as power warranties are written (common practice:
        about 0.5 %/yr). It scales energy and energy lost alike; the shade loss in percent
        does not change. 0 (the default) leaves degradation out.
    analysis : layout.study.analysis.Analysis or None, keyword-only
        An analysis to reuse; it is left holding ``project`` as surveyed. None builds one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, when ``analysis`` is None.

    Returns
    -------
    GrowthOutlook
    """
    years = tuple(_check_year(f"years[{i}]", y) for i, y in enumerate(years))
    if not years:
        raise InputError("years", "is empty", allowed="one or more whole numbers 0 to 100")
    life = _whole("life_years", life_years, 1)
    if life > 100:
        raise InputError("life_years", "is out of range", value=life_years, allowed="1 to 100")
    rate = check_range("degradation_pct_per_yr", degradation_pct_per_yr, 0.0, 5.0,
                       unit="%/yr") / 100.0
    last = max(life, *years)
    flat = with_surveyed(project)
    runner = _analysis(flat, analysis, base_dir)
    rows, loss, energy = [], {}, {}
    labels = _tree_labels(flat.obstructions)
    heights = {label: {"growth_m_per_yr": flat.obstructions[i].growth_m_per_yr}
               for i, label in labels}
    ids = None
    for year in range(last + 1):
        at_year = project_at_year(project, year, widen_crown=widen_crown)
        runner.update(at_year)
        result = runner.result
        factor = max(1.0 - rate * (year - 1), 0.0) if year >= 1 else 1.0
        figures = _layout_figures(result)
        rows.append({"energy_kwh": figures["energy_kwh"] * factor,
                     "energy_unshaded_kwh": figures["energy_unshaded_kwh"] * factor,
                     "energy_lost_kwh": figures["energy_lost_kwh"] * factor,
                     "shade_loss_pct": figures["shade_loss_pct"],
                     "degradation_factor": factor})
        if ids is None:
            ids = result.table.index
        if year == 0 or year in years:
            for i, label in labels:
                heights[label][year] = at_year.obstructions[i].height
        if year in years:
            loss[year] = result.table["shade_loss_pct"].reindex(ids).to_numpy()
            energy[year] = result.table["energy_kwh"].reindex(ids).to_numpy() * factor
    runner.update(project)
    yearly = pd.DataFrame(rows, index=pd.RangeIndex(last + 1, name="year"))
    wanted = sorted(set(years))
    module_loss = pd.DataFrame({y: loss[y] for y in wanted}, index=ids)
    module_energy = pd.DataFrame({y: energy[y] for y in wanted}, index=ids)
    tree_columns = ["growth_m_per_yr", *sorted({0, *years})]
    tree_heights = pd.DataFrame([[heights[label][c] for c in tree_columns]
                                 for _, label in labels],
                                index=pd.Index([label for _, label in labels], name="tree"),
                                columns=tree_columns, dtype=float)
    span = yearly.loc[1:life]
    lost0 = yearly.loc[0, "energy_lost_kwh"]
    growth_lost = float((span["energy_lost_kwh"] - lost0 * span["degradation_factor"]).sum())
    return GrowthOutlook(
        yearly=yearly, module_loss_pct=module_loss, module_energy_kwh=module_energy,
        tree_heights_m=tree_heights, years=years, life_years=life, widen_crown=widen_crown,
        degradation_pct_per_yr=rate * 100.0,
        lifetime_energy_kwh=float(span["energy_kwh"].sum()),
        lifetime_energy_unshaded_kwh=float(span["energy_unshaded_kwh"].sum()),
        lifetime_energy_lost_kwh=float(span["energy_lost_kwh"].sum()),
        lifetime_growth_lost_kwh=growth_lost)


# --------------------------------------------------------------------------- leaves
@dataclass(frozen=True, eq=False)
class LeafEffect:
    """Month by month: see-through crowns as modelled, made opaque, and made clear.

    Attributes
    ----------
    monthly : pandas.DataFrame
        Indexed by month 1–12: ``crown_transmittance`` (mean over the see-through crowns)
        [fraction], ``leaf_off`` (True where that mean is above its lowest value of the year),
        ``energy_unshaded_kwh``, then ``energy_kwh`` and ``shade_loss_pct`` as modelled,
        ``energy_opaque_kwh`` and ``shade_loss_opaque_pct`` with those crowns opaque all year,
        ``energy_clear_kwh`` and ``shade_loss_clear_pct`` with them fully transparent (trunks
        and every other obstruction kept).
    trees : tuple of str
        Labels of the see-through crowns (name, or ``tree <position in the scene>``).
    leaf_off_loss_pct, leaf_on_loss_pct : float
        Shade loss over the leaf-off and the leaf-on months, as modelled [%].
    leaf_off_loss_opaque_pct, leaf_on_loss_opaque_pct : float
        The same with the crowns opaque [%].
    energy_gain_kwh : float
        Annual energy as modelled minus with the crowns opaque [kWh/yr]: what the light
        through the crowns gives back.
    """

    monthly: pd.DataFrame
    trees: tuple[str, ...]
    leaf_off_loss_pct: float
    leaf_on_loss_pct: float
    leaf_off_loss_opaque_pct: float
    leaf_on_loss_opaque_pct: float
    energy_gain_kwh: float

    _NUMBERS = ("leaf_off_loss_pct", "leaf_on_loss_pct", "leaf_off_loss_opaque_pct",
                "leaf_on_loss_opaque_pct", "energy_gain_kwh")

    def to_dict(self) -> dict:
        """Plain-data form (lists, floats, text, None); ``leaf_off`` as 1.0 / 0.0."""
        out = {"monthly": _frame_to_dict(self.monthly.astype(float)),
               "trees": list(self.trees)}
        out.update({name: _plain_number(getattr(self, name)) for name in self._NUMBERS})
        return out

    @classmethod
    def from_dict(cls, data) -> LeafEffect:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("monthly", "trees", *cls._NUMBERS)
        check_fields(data, known, required=known, what="leaf effect")
        monthly = _frame_from_dict("monthly", data["monthly"])
        if "leaf_off" not in monthly:
            raise InputError("monthly", "has no leaf_off column")
        monthly["leaf_off"] = monthly["leaf_off"].astype(bool)
        trees = data["trees"]
        if not isinstance(trees, list) or not all(isinstance(t, str) for t in trees):
            raise InputError("trees", "must be a list of text")
        return cls(monthly=monthly, trees=tuple(trees),
                   **{name: _float_or_none(name, data[name]) for name in cls._NUMBERS})


def _loss_pct(energy, unshaded) -> float:
    energy, unshaded = float(np.sum(energy)), float(np.sum(unshaded))
    return 100.0 * (1.0 - energy / unshaded) if unshaded > 0 else math.nan


def leaf_effect(project, *, analysis=None, base_dir=None) -> LeafEffect:
    """Compare the loss month by month with see-through crowns as modelled, opaque and clear.

    A see-through crown is a :class:`~layout.scene.obstructions.Tree` with a ``transmittance``
    (a deciduous tree: :meth:`~layout.scene.obstructions.Tree.deciduous`, 0.2 in leaf and 0.6
    leafless after Heisler 1986). Three evaluations through one
    :class:`~layout.study.analysis.Analysis`: as modelled, with those crowns opaque all year (the
    counterfactual of treating deciduous trees as evergreen), and with them fully
    transparent (their trunks still cast shade). Every other obstruction is unchanged.

    Parameters
    ----------
    project : layout.project.Project
        With at least one see-through crown, entered or surveyed.
    analysis : layout.study.analysis.Analysis or None, keyword-only
        An analysis to reuse; it is left holding ``project``. None builds one.
    base_dir : str or os.PathLike, keyword-only, optional
        Folder a relative weather file is read from, when ``analysis`` is None.

    Returns
    -------
    LeafEffect
    """
    flat = with_surveyed(project)
    see_through = [i for i, ob in enumerate(flat.obstructions)
                   if isinstance(ob, Tree) and ob.transmittance is not None]
    if not see_through:
        raise InputError("project.obstructions", "has no tree with a crown transmittance",
                         allowed="a deciduous tree (Tree.deciduous, or deciduous in the survey)")
    labels = dict(_tree_labels(flat.obstructions))

    def variant(transmittance):
        obs = list(flat.obstructions)
        for i in see_through:
            obs[i] = replace(obs[i], transmittance=transmittance)
        return flat.with_changes(obstructions=tuple(obs))

    runner = _analysis(flat, analysis, base_dir)
    monthly = {}
    for key, scene in (("opaque", variant(None)), ("clear", variant((1.0,) * 12)),
                       ("modelled", project)):
        runner.update(scene)
        monthly[key] = runner.result.monthly
    mean_t = np.mean([flat.obstructions[i].monthly_transmittance for i in see_through], axis=0)
    leaf_off = mean_t > mean_t.min() + 1e-12
    modelled, opaque, clear = monthly["modelled"], monthly["opaque"], monthly["clear"]
    table = pd.DataFrame({
        "crown_transmittance": mean_t, "leaf_off": leaf_off,
        "energy_unshaded_kwh": modelled["energy_unshaded_kwh"].to_numpy(),
        "energy_kwh": modelled["energy_kwh"].to_numpy(),
        "shade_loss_pct": modelled["shade_loss_pct"].to_numpy(),
        "energy_opaque_kwh": opaque["energy_kwh"].to_numpy(),
        "shade_loss_opaque_pct": opaque["shade_loss_pct"].to_numpy(),
        "energy_clear_kwh": clear["energy_kwh"].to_numpy(),
        "shade_loss_clear_pct": clear["shade_loss_pct"].to_numpy(),
    }, index=pd.RangeIndex(1, 13, name="month"))
    unshaded = table["energy_unshaded_kwh"]
    return LeafEffect(
        monthly=table, trees=tuple(labels[i] for i in see_through),
        leaf_off_loss_pct=_loss_pct(table["energy_kwh"][leaf_off], unshaded[leaf_off]),
        leaf_on_loss_pct=_loss_pct(table["energy_kwh"][~leaf_off], unshaded[~leaf_off]),
        leaf_off_loss_opaque_pct=_loss_pct(table["energy_opaque_kwh"][leaf_off],
                                           unshaded[leaf_off]),
        leaf_on_loss_opaque_pct=_loss_pct(table["energy_opaque_kwh"][~leaf_off],
                                          unshaded[~leaf_off]),
        energy_gain_kwh=float(table["energy_kwh"].sum() - table["energy_opaque_kwh"].sum()))
