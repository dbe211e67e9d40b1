"""A loss as a range over the survey tolerances: :func:`loss_range` and its :class:`LossRange`.

The readings of every entry are drawn from their tolerances
(:func:`~layout.scene.survey.obstruction_sets.sample_obstructions`), the caller's loss is
evaluated on each drawn set, and percentiles of the losses are reported beside the loss of the
nominal readings.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ...errors import InputError, check_fields, check_range
from .entry import _check_entries
from .obstruction_sets import _check_year, _grow_set, obstructions_at_year, sample_obstructions
from .sampling import _check_count

__all__ = ["LossRange", "loss_range"]


@dataclass(frozen=True, eq=False)
class LossRange:
    """Percentiles of a loss over obstruction sets drawn from the survey tolerances.

    Parameters
    ----------
    percentiles : tuple of float
        The percentiles asked for [%].
    values : numpy.ndarray
        The loss at each percentile: shape (P,) for a scalar loss, (P, M) for M per-module
        losses [the evaluate function's unit].
    nominal : float or numpy.ndarray
        The loss with the nominal readings.
    samples : int
        Number of obstruction sets drawn.
    seed : int or None
        Seed of the generator (report it beside the range to make it repeatable).
    distribution : str
        How readings were drawn.
    year : int
        Years of tree growth applied to every set.
    """

    percentiles: tuple[float, ...]
    values: np.ndarray
    nominal: Any
    samples: int
    seed: int | None
    distribution: str
    year: int

    def to_dict(self) -> dict:
        """Plain-data form (lists and floats) for reports."""
        nominal = self.nominal.tolist() if isinstance(self.nominal, np.ndarray) else \
            self.nominal
        return {"percentiles": list(self.percentiles), "values": self.values.tolist(),
                "nominal": nominal, "samples": self.samples, "seed": self.seed,
                "distribution": self.distribution, "year": self.year}

    @classmethod
    def from_dict(cls, data) -> LossRange:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("percentiles", "values", "nominal", "samples", "seed", "distribution", "year")
        check_fields(data, known, required=known, what="loss range")
        nominal = data["nominal"]
        try:
            values = np.array(data["values"], dtype=float)
            nominal = float(nominal) if np.ndim(nominal) == 0 else np.array(nominal, float)
        except (TypeError, ValueError):
            raise InputError("values", "must be numbers") from None
        return cls(percentiles=tuple(float(p) for p in data["percentiles"]), values=values,
                   nominal=nominal, samples=_check_count("samples", data["samples"]),
                   seed=data["seed"], distribution=str(data["distribution"]),
                   year=_check_year(data["year"]))


def _as_loss(value):
    array = np.asarray(value, dtype=float)
    if array.ndim > 1:
        raise InputError("evaluate", "must return a number or a 1-D array", value=array.shape)
    return array


def loss_range(entries, evaluate: Callable[[list], Any], *, samples: int = 200,
               seed: int | None = 0, percentiles: Sequence[float] = (5, 95),
               distribution: str = "normal", year: int = 0, widen_crown: bool = True,
               hemisphere: str = "north") -> LossRange:
    """Propagate the survey tolerances to a loss: percentiles over sampled obstruction sets.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.
    evaluate : callable
        Takes a list of obstructions (one per entry, in order) and returns the loss: a number
        (annual loss in total) or a 1-D array (per module). Fixed obstructions the survey does
        not cover belong inside the callable.
    samples : int, keyword-only, default 200
        Number of obstruction sets drawn.
    seed : int or None, keyword-only, default 0
        Seed of :func:`numpy.random.default_rng`; reported in the result.
    percentiles : sequence of float, keyword-only, default (5, 95)
        Percentiles to report [%], 0 to 100.
    distribution : {"normal", "uniform"}, keyword-only
        As in :func:`~layout.scene.survey.sampling.sample_readings`.
    year : int, keyword-only, default 0
        Years of tree growth after the survey applied to every set
        (:func:`~layout.scene.survey.obstruction_sets.obstructions_at_year`).
    widen_crown : bool, keyword-only, default True
        Grow crown radii in proportion to the height
        (:func:`~layout.scene.survey.growth.grown_tree`).
    hemisphere : {"north", "south"}, keyword-only
        For deciduous trees.

    Returns
    -------
    LossRange
    """
    entries = _check_entries(entries)
    samples = _check_count("samples", samples)
    pct = tuple(check_range(f"percentiles[{i}]", p, 0.0, 100.0, unit="%")
                for i, p in enumerate(percentiles))
    if not pct:
        raise InputError("percentiles", "is empty", allowed="one or more of 0 to 100")
    year = _check_year(year)
    rng = np.random.default_rng(seed)
    sets = sample_obstructions(entries, samples, rng, distribution=distribution,
                               hemisphere=hemisphere)
    losses = np.array([_as_loss(evaluate(_grow_set(entries, s, year, widen_crown)))
                       for s in sets])
    nominal = _as_loss(evaluate(obstructions_at_year(entries, year, widen_crown=widen_crown,
                                                     hemisphere=hemisphere)))
    values = np.percentile(losses, pct, axis=0)
    return LossRange(percentiles=pct, values=values,
                     nominal=float(nominal) if nominal.ndim == 0 else nominal,
                     samples=samples, seed=seed, distribution=distribution, year=year)

