"""Numerically careful building blocks shared by the methods and the diagnostics.

Everything here takes a 1-D float64 array of *finite* values (the callers drop missing and
infinite values first) and returns plain Python floats, so that fitted parameters are
JSON-ready and keep full precision.
"""

from __future__ import annotations

import numpy as np

#: How quartiles are computed everywhere (recorded in fitted parameters).
QUANTILE_RULE = "linear interpolation (Hyndman-Fan type 7)"


def as_float_array(values: object) -> np.ndarray:
    """Return ``values`` as a 1-D float64 array, missing values (None, NA) as NaN."""
    arr = np.asarray(values, dtype=np.float64)
    if arr.ndim != 1:
        arr = arr.reshape(-1)
    return arr


def mean(x: np.ndarray) -> float:
    """Mean with a correction pass.

    ``np.mean`` uses pairwise summation; adding the mean of the residuals removes most of
    what is left of the rounding error (the certified NIST StRD means are reached to
    15 digits this way).
    """
    m = float(np.mean(x))
    return m + float(np.mean(x - m))


def sd(x: np.ndarray, ddof: int = 1, center: float | None = None) -> float:
    """Standard deviation by the two-pass, corrected sums algorithm.

    Chan, Golub and LeVeque (1983), "Algorithms for computing the sample variance",
    eq. 1.7: sum((x-m)^2) - (sum(x-m))^2/n. Unlike the one-pass sum of squares it stays
    accurate when the mean is large and the spread tiny (NIST StRD NumAcc3/NumAcc4).
    """
    n = x.size
    if n - ddof <= 0:
        return float("nan")
    m = mean(x) if center is None else center
    d = x - m
    ss = float(np.dot(d, d)) - float(np.sum(d)) ** 2 / n
    return float(np.sqrt(max(ss, 0.0) / (n - ddof)))


def quantiles(x: np.ndarray, probs: tuple[float, ...]) -> tuple[float, ...]:
    """Quantiles by linear interpolation between order statistics (type 7)."""
    # numpy's default method "linear" is Hyndman and Fan's definition 7.
    return tuple(float(q) for q in np.quantile(x, probs, method="linear"))


def skewness(x: np.ndarray) -> float:
    """Sample skewness g1 = m3 / m2**1.5 (moment estimator, no small-sample correction)."""
    if x.size < 3:
        return float("nan")
    d = x - mean(x)
    m2 = float(np.dot(d, d)) / x.size
    if m2 == 0.0:
        return 0.0
    m3 = float(np.dot(d * d, d)) / x.size
    return m3 / m2**1.5
