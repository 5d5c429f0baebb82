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


def _dot(a: np.ndarray, b: np.ndarray) -> float:
    """Sum of products without BLAS (the BLAS ``dot`` can be several times slower here)."""
    return float(np.einsum("i,i->", a, b))


def mean(x: np.ndarray) -> float:
    """Mean with a correction pass.

    ``np.mean`` uses pairwise summation; adding the mean of the residuals removes most of
    what is left of the rounding error (the certified NIST StRD means are reached to
    15 digits this way).
    """
    return mean_sd(x, ddof=None)[0]


def mean_sd(x: np.ndarray, ddof: int | None = 1) -> tuple[float, float]:
    """Corrected mean and standard deviation in two passes over ``x`` (one subtraction).

    The mean is ``m + mean(x - m)`` with ``m`` the pairwise-summed mean; the variance is
    Chan, Golub and LeVeque (1983), "Algorithms for computing the sample variance",
    eq. 1.7: ``sum((x-m)^2) - (sum(x-m))^2/n``. Unlike the one-pass sum of squares it
    stays accurate when the mean is large and the spread tiny (NIST StRD NumAcc3/NumAcc4).
    Values so large that their squares overflow are scaled by a power of two first (exact).
    ``ddof=None`` skips the sd (returned as NaN).
    """
    n = x.size
    if n == 0:
        return float("nan"), float("nan")
    with np.errstate(over="ignore", invalid="ignore"):
        m = float(np.mean(x))
        s, ss = _residual_sums(x, m, squares=ddof is not None)
    if np.isinf(m) or (np.isfinite(m) and not np.isfinite(s)):
        # The sum or the residuals overflow: halve every value (exact) and double back.
        half_m, half_sd = mean_sd(x * 0.5, ddof)
        return half_m * 2.0, half_sd * 2.0
    m_corrected = m + s / n
    if ddof is None or n - ddof <= 0:
        return m_corrected, float("nan")
    return m_corrected, _sd_from_sums(x, m, s, ss, n, ddof)


_CHUNK = 1 << 16  # values per block: the residuals of one block stay in the CPU cache


def _residual_sums(x: np.ndarray, m: float, squares: bool = True) -> tuple[float, float]:
    """sum(x - m) and sum((x - m)**2), block by block so that no full-size copy is made."""
    s = ss = 0.0
    buf = np.empty(min(_CHUNK, x.size))
    for start in range(0, x.size, _CHUNK):
        block = x[start : start + _CHUNK]
        d = buf[: block.size]
        np.subtract(block, m, out=d)
        s += float(np.sum(d))
        if squares:
            ss += _dot(d, d)
    return s, ss


def _sd_from_sums(x: np.ndarray, m: float, s: float, ss: float, n: int, ddof: int) -> float:
    with np.errstate(over="ignore", invalid="ignore"):
        var_sum = ss - s * s / n
    if not np.isfinite(var_sum) or var_sum < 1e-280:
        # Squares overflow (or underflow): scale by 2**-k (exact), take the sd, scale back.
        with np.errstate(over="ignore", invalid="ignore"):
            d = x - m
        biggest = float(np.max(np.abs(d)))
        if np.isfinite(biggest) and biggest != 0.0 and not 0.25 <= biggest <= 1.0:
            k = int(np.frexp(biggest)[1])
            scaled = np.ldexp(d, -k)
            s_scaled, ss_scaled = _residual_sums(scaled, 0.0)
            with np.errstate(over="ignore"):  # an sd beyond the float range is inf
                return float(np.ldexp(_sd_from_sums(scaled, 0.0, s_scaled, ss_scaled, n, ddof), k))
    return float(np.sqrt(max(var_sum, 0.0) / (n - ddof)))


def sd(x: np.ndarray, ddof: int = 1, center: float | None = None) -> float:
    """Standard deviation by the two-pass, corrected sums algorithm (see ``mean_sd``).

    ``center``, if given, is the first-pass centre to use instead of the mean (the
    corrected formula stays exact for any centre close to the mean).
    """
    if center is None:
        return mean_sd(x, ddof)[1]
    n = x.size
    if n - ddof <= 0:
        return float("nan")
    with np.errstate(over="ignore", invalid="ignore"):
        s, ss = _residual_sums(x, center)
    if not np.isfinite(s):
        return mean_sd(x, ddof)[1]
    return _sd_from_sums(x, center, s, ss, n, ddof)


def quantiles(x: np.ndarray, probs: tuple[float, ...]) -> tuple[float, ...]:
    """Quantiles by linear interpolation between order statistics (type 7)."""
    # numpy's default method "linear" is Hyndman and Fan's definition 7.
    return tuple(float(q) for q in np.quantile(x, probs, method="linear"))


def skewness(x: np.ndarray) -> float:
    """Sample skewness g1 = m3 / m2**1.5 (moment estimator, no small-sample correction)."""
    if x.size < 3:
        return float("nan")
    if np.min(x) == np.max(x):
        return 0.0
    d = x - mean(x)
    m2 = _dot(d, d) / x.size
    if m2 == 0.0:
        return 0.0
    m3 = _dot(d * d, d) / x.size
    return m3 / m2**1.5
