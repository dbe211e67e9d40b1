"""The shade loss as a range over the survey's tolerances: :func:`shade_loss_range`.

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ...errors import InputError, check_fields, check_range
from .percentiles import (
    DEFAULT_CONFIDENCE,
    DEFAULT_SAMPLES,
    check_percentiles,
    percentile_interval,
    percentile_label,
)
from .projects import analysis_for, check_year, project_at_year, sampled_projects
from .records import (
    frame_from_dict,
    frame_to_dict,
    layout_figures,
    whole_number,
)

_QUANTITIES = ("shade_loss_pct", "energy_kwh", "energy_lost_kwh")


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
        return {"percentiles": list(self.percentiles), "modules": frame_to_dict(self.modules),
                "totals": frame_to_dict(totals),
                "totals_unbounded": [[bool(v) for v in np.isinf(self.totals[c].to_numpy())]
                                     for c in self.totals.columns],
                "draws": frame_to_dict(self.draws),
                "draw_energy_kwh": frame_to_dict(self.draw_energy_kwh),
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
        totals = frame_from_dict("totals", data["totals"])
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
        return cls(percentiles=check_percentiles(data["percentiles"]),
                   modules=frame_from_dict("modules", data["modules"]), totals=totals,
                   draws=frame_from_dict("draws", data["draws"]),
                   draw_energy_kwh=frame_from_dict("draw_energy_kwh", data["draw_energy_kwh"]),
                   samples=whole_number("samples", data["samples"], 1), seed=seed,
                   distribution=data["distribution"],
                   confidence=check_range("confidence", data["confidence"], 0.0, 1.0,
                                          low_open=True, high_open=True),
                   year=check_year("year", data["year"]), notes=tuple(notes))




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
    samples = whole_number("samples", samples, 2)
    pct = check_percentiles(percentiles)
    conf = check_range("confidence", confidence, 0.0, 1.0, low_open=True, high_open=True)
    year = check_year("year", year)
    drawn = sampled_projects(project, samples, seed=seed, distribution=distribution,
                             year=year, widen_crown=widen_crown)
    nominal_project = project if year == 0 else project_at_year(project, year,
                                                                 widen_crown=widen_crown)
    runner = analysis_for(drawn[0], analysis, base_dir)
    rows, energy, loss, notes = [], [], [], []
    changed_fill = 0
    for done, sampled in enumerate(drawn):
        if progress is not None:
            progress(done, samples + 1)
        runner.update(sampled, remember=False)
        result = runner.result
        rows.append(layout_figures(result))
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
    figures = layout_figures(nominal)
    table = {"nominal": [figures[q] for q in _QUANTITIES]}
    for p in pct:
        table[percentile_label(p)] = [float(np.percentile(draws[q], p)) for q in _QUANTITIES]
    for p in pct:
        bounds = [percentile_interval(draws[q].to_numpy(), p, conf) for q in _QUANTITIES]
        table[f"{percentile_label(p)}_low"] = [b[0] for b in bounds]
        table[f"{percentile_label(p)}_high"] = [b[1] for b in bounds]
    totals = pd.DataFrame(table, index=pd.Index(list(_QUANTITIES), name="quantity"))
    return ShadeLossRange(percentiles=pct, modules=modules, totals=totals, draws=draws,
                          draw_energy_kwh=energy_frame, samples=samples, seed=seed,
                          distribution=distribution, confidence=conf, year=year,
                          notes=tuple(notes))
