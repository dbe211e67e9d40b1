"""Percentiles of a few draws and their distribution-free sampling error (order statistics).

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

import math

import numpy as np

from ...errors import InputError, check_range
from .records import whole_number

#: Default number of draws of the survey readings. 64 is the smallest power of two for which
#: the distribution-free 90 % confidence interval of the 5th and the 95th percentile is bounded
#: on both sides (that needs ``0.95**n <= 0.05``, n >= 59; see :func:`percentile_ranks`), and
#: it keeps the demo house to a few seconds (about 0.1 s an incremental evaluation). Ask for
#: more when the reported interval is wider than the decision at hand allows.
DEFAULT_SAMPLES = 64

#: Default confidence level of the sampling-error interval of a percentile [fraction].
DEFAULT_CONFIDENCE = 0.90


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
    n = whole_number("n", n, 1)
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


def percentile_interval(values: np.ndarray, percentile: float,
                        confidence: float) -> tuple[float, float]:
    """Return the distribution-free confidence interval of a percentile of ``values``."""
    ordered = np.sort(np.asarray(values, dtype=float))
    lo, hi = percentile_ranks(len(ordered), percentile, confidence=confidence)
    low = -math.inf if lo == 0 else float(ordered[lo - 1])
    high = math.inf if hi == len(ordered) + 1 else float(ordered[hi - 1])
    return low, high


def percentile_label(p: float) -> str:
    """Return the column label of a percentile in the range tables: 5 → ``"p5"``."""
    return f"p{p:g}"


def check_percentiles(percentiles) -> tuple[float, ...]:
    """Check percentiles, each 0 to 100 %; errors name the position."""
    pct = tuple(check_range(f"percentiles[{i}]", p, 0.0, 100.0, unit="%")
                for i, p in enumerate(percentiles))
    if not pct:
        raise InputError("percentiles", "is empty", allowed="one or more of 0 to 100")
    if len({percentile_label(p) for p in pct}) != len(pct):
        raise InputError("percentiles", "has a percentile twice", value=list(pct))
    return pct
