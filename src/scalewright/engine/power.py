"""Box-Cox and Yeo-Johnson power transforms, with lambda by maximum likelihood.

The profile log-likelihood of lambda (Box and Cox 1964; Yeo and Johnson 2000) is

    llf(lambda) = (lambda - 1) * sum(J) - n/2 * log(var(y_lambda))

where J is log(x) for Box-Cox and sign(x) * log1p(|x|) for Yeo-Johnson, and var is the
population variance of the transformed values. The logarithms are computed once; every
evaluation of the likelihood then costs one ``expm1`` and one variance over the data, which
is what makes this several times faster than calling scipy's fitter (which takes the
logarithms again on every evaluation). The optimiser (Brent's method) is scipy's, with the
same bracket and tolerance scipy uses, so the lambdas agree.

scipy is imported inside the fitting functions, not here: it costs most of a second at
start-up, and only fitting a lambda needs it (applying and restoring do not).
"""

from __future__ import annotations

import numpy as np

_BRENT_TOL = 1.48e-8  # scipy.optimize.brent's default xtol


class BoxCoxLikelihood:
    """Negative profile log-likelihood of Box-Cox lambda on precomputed logarithms.

    With L = log(x), c = mean(L) and v(lambda) = var(expm1(lambda * (L - c)) / lambda),
    var(y_lambda) = exp(2 * lambda * c) * v(lambda), so that

        llf(lambda) = (lambda - 1) * sum(L) - n/2 * (2 * lambda * c + log v(lambda))
                    = lambda * sum(L - c) - sum(L) - n/2 * log v(lambda).

    The second form has no large terms that cancel (sum(L - c) is about 0), so the
    likelihood is evaluated to nearly full precision even where it is very flat, which
    keeps the maximum where it truly is.

    With ``counts``, ``x`` holds distinct values and ``counts`` how often each occurs: the
    same sums, weighted (see ``distinct_values``).
    """

    def __init__(self, x: np.ndarray, counts: np.ndarray | None = None) -> None:
        logs = np.log(x)
        self.counts = counts
        self.n = x.size if counts is None else float(np.sum(counts))
        self.sum_logs = self._sum(logs)
        self.center = self.sum_logs / self.n if counts is not None else float(np.mean(logs))
        logs -= self.center  # centred logarithms, computed once
        self.centered = logs
        self.sum_centered = self._sum(logs)
        self._buffer = np.empty_like(logs)

    def _sum(self, v: np.ndarray) -> float:
        return float(np.sum(v)) if self.counts is None else float(np.dot(self.counts, v))

    def _log_var(self, lam: float) -> float:
        """log(var(expm1(lam * (L - c)) / lam)), accurate also for lambda near 0."""
        if lam == 0.0:
            d = self.centered
        else:
            d = self._buffer
            np.multiply(self.centered, lam, out=d)
            np.expm1(d, out=d)
        # population variance of d without a full-size temporary: mean, subtract, squares
        m = float(np.mean(d)) if self.counts is None else self._sum(d) / self.n
        centred = np.subtract(d, m, out=self._buffer)
        if self.counts is None:
            v = float(np.einsum("i,i->", centred, centred)) / self.n
        else:
            v = float(np.einsum("i,i,i->", self.counts, centred, centred)) / self.n
        if lam != 0.0:
            v /= lam * lam
        return np.log(v) if v > 0 and np.isfinite(v) else -np.inf

    def llf(self, lam: float) -> float:
        with np.errstate(over="ignore", invalid="ignore"):
            log_var = self._log_var(lam)
        if not np.isfinite(log_var):
            return -np.inf
        return lam * self.sum_centered - self.sum_logs - 0.5 * self.n * log_var

    def neg_llf(self, lam: float) -> float:
        value = self.llf(lam)
        return np.inf if not np.isfinite(value) else -value


#: From this many values on, the lambda search first looks for repeated values.
DISTINCT_FROM = 50_000


def distinct_values(x: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
    """(distinct values, how often each occurs) when ``x`` repeats its values a lot, else
    None.

    Measurements are mostly written to a fixed number of decimals, so a million of them
    often hold only a few thousand different values. The likelihood is then a weighted
    sum over those: every evaluation of the search touches thousands of numbers instead
    of a million, and the lambda is the same maximum to rounding (the sums are only added
    up in another order). One look at a strided sample decides whether counting is worth
    it; the counting is one hashing pass, no sort.
    """
    if x.size < DISTINCT_FROM:
        return None
    sample = x[:: x.size // 4096]
    if np.unique(sample).size > sample.size // 2:
        return None  # mostly different values: count nothing
    import pandas as pd

    codes, uniques = pd.factorize(x)
    if uniques.size > x.size // 8:
        return None
    return np.asarray(uniques, dtype=np.float64), np.bincount(codes).astype(np.float64)


#: scipy.stats.boxcox_normmax's default ``ymax``: the largest float over a safety factor
#: of 10000; lambdas that would send a transformed value beyond it are constrained.
BOXCOX_YMAX = float(np.finfo(np.float64).max) / 10000


def boxcox_lambda(x: np.ndarray, report_constrained: bool = False):
    """Maximum-likelihood Box-Cox lambda for strictly positive finite ``x``.

    As in scipy.stats.boxcox_normmax (method "mle"), when the best lambda would send the
    most extreme value beyond ``BOXCOX_YMAX`` in size, lambda is moved to the value that
    sends it exactly there. With ``report_constrained`` the result is (lambda, constrained).
    """
    from scipy import optimize

    distinct = distinct_values(x)
    like = BoxCoxLikelihood(x) if distinct is None else BoxCoxLikelihood(*distinct)
    # scipy.stats.boxcox_normmax(method="mle") uses optimize.brent with brack=(-2, 2).
    with np.errstate(all="ignore"):  # brent's arithmetic on infinite llf values warns
        lam = float(optimize.brent(like.neg_llf, brack=(-2.0, 2.0), tol=_BRENT_TOL))
    lam, constrained = constrain_boxcox_lambda(lam, float(np.min(x)), float(np.max(x)))
    return (lam, constrained) if report_constrained else lam


def constrain_boxcox_lambda(lam: float, xmin: float, xmax: float) -> tuple[float, bool]:
    """``lam`` moved, as scipy does, when it would send the most extreme of the values
    (between ``xmin`` and ``xmax``) beyond ``BOXCOX_YMAX``; and whether it was moved."""
    constrained = False
    if xmin >= 1:
        extreme = xmax
    elif xmax <= 1:
        extreme = xmin
    else:
        extreme = xmax if _boxcox_scalar(xmax, lam) > abs(_boxcox_scalar(xmin, lam)) else xmin
    if abs(_boxcox_scalar(extreme, lam)) > BOXCOX_YMAX:
        from scipy import special

        y = BOXCOX_YMAX * np.sign(extreme - 1)
        # Solve boxcox(extreme, lam) = y for lam with the Lambert W function (as scipy does).
        w = special.lambertw(-(extreme ** (-1 / y)) * np.log(extreme) / y, k=-1)
        lam = float(np.real(-w / np.log(extreme) - 1 / y))
        constrained = True
    return lam, constrained


def _boxcox_scalar(x: float, lam: float) -> float:
    from scipy import special

    with np.errstate(over="ignore"):
        return float(special.boxcox(x, lam))


def boxcox_forward(x: np.ndarray, lam: float) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        logs = np.log(np.where(x > 0, x, np.nan))
        if lam == 0.0:
            return logs
        return np.expm1(lam * logs) / lam


def boxcox_inverse(y: np.ndarray, lam: float) -> np.ndarray:
    """Inverse Box-Cox; NaN where lam*y + 1 <= 0 (no real original value exists)."""
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if lam == 0.0:
            return np.exp(y)
        base = np.log1p(lam * y)  # NaN/-inf where lam*y <= -1
        out = np.exp(base / lam)
        out[~(lam * y > -1.0)] = np.nan
        return out


class YeoJohnsonLikelihood:
    """Negative profile log-likelihood of Yeo-Johnson lambda on precomputed logarithms.

    With ``counts``, ``x`` holds distinct values and ``counts`` how often each occurs (see
    ``distinct_values``)."""

    def __init__(self, x: np.ndarray, counts: np.ndarray | None = None) -> None:
        pos = x >= 0
        self.log_pos = np.log1p(x[pos])
        self.log_neg = np.log1p(-x[~pos])
        if counts is None:
            self.counts = None
            self.n = x.size
            self.sum_signed_logs = float(np.sum(self.log_pos) - np.sum(self.log_neg))
        else:
            self.counts = np.concatenate([counts[pos], counts[~pos]])
            self.n = float(np.sum(counts))
            self.sum_signed_logs = float(
                np.dot(counts[pos], self.log_pos) - np.dot(counts[~pos], self.log_neg)
            )
        self._buffer = np.empty(x.size)

    def transformed(self, lam: float) -> np.ndarray:
        out = self._buffer
        k = self.log_pos.size
        if lam == 0.0:
            out[:k] = self.log_pos
        else:
            np.multiply(self.log_pos, lam, out=out[:k])
            np.expm1(out[:k], out=out[:k])
            out[:k] /= lam
        if lam == 2.0:
            np.negative(self.log_neg, out=out[k:])
        else:
            np.multiply(self.log_neg, 2.0 - lam, out=out[k:])
            np.expm1(out[k:], out=out[k:])
            out[k:] /= -(2.0 - lam)
        return out

    def _variance(self, t: np.ndarray) -> float:
        if self.counts is None:
            return float(np.var(t))
        d = t - float(np.dot(self.counts, t)) / self.n
        return float(np.einsum("i,i,i->", self.counts, d, d)) / self.n

    def neg_llf(self, lam: float) -> float:
        with np.errstate(over="ignore", invalid="ignore"):
            v = self._variance(self.transformed(lam))
        if not (v > 0 and np.isfinite(v)):
            return np.inf
        return -((lam - 1.0) * self.sum_signed_logs - 0.5 * self.n * np.log(v))


def yeojohnson_lambda(x: np.ndarray) -> float:
    """Maximum-likelihood Yeo-Johnson lambda for finite ``x`` (any sign)."""
    if np.all(x == 0):
        return 1.0  # every lambda fits equally; scipy returns 1 as well
    lb, ub = _yeojohnson_bounds(x)
    if not (np.isfinite(lb) and np.isfinite(ub)):
        # log1p(20 * max|x|) is 0: the values are so close to 0 that every lambda gives
        # the same transform to working precision (scipy's fitter raises here).
        return 1.0
    from scipy import optimize

    distinct = distinct_values(x)
    like = YeoJohnsonLikelihood(x) if distinct is None else YeoJohnsonLikelihood(*distinct)
    with np.errstate(all="ignore"):
        return float(optimize.fminbound(like.neg_llf, lb, ub, xtol=_BRENT_TOL))


def yeojohnson_bounds(lo: float, hi: float) -> tuple[float, float] | None:
    """The bounds ``yeojohnson_lambda`` searches in for finite values from ``lo`` to ``hi``
    (they depend on nothing else); None where it returns 1 without a search."""
    if lo == 0.0 and hi == 0.0:
        return None
    lb, ub = _yeojohnson_bounds(np.array([lo, hi]))
    if not (np.isfinite(lb) and np.isfinite(ub)):
        return None
    return lb, ub


def _yeojohnson_bounds(x: np.ndarray) -> tuple[float, float]:
    """Lambda bounds that keep the transform of values up to 20x the data's in range.

    The same bounds scipy.stats.yeojohnson_normmax uses (scipy PR 18852).
    """
    log1p_max_x = np.log1p(20 * np.max(np.abs(x)))
    if log1p_max_x == 0:
        return float("-inf"), float("inf")
    eps = np.finfo(np.float64)
    log_eps = np.log(eps.eps)
    log_tiny = (np.log(eps.tiny) - log_eps) / 2
    log_max = (np.log(eps.max) + log_eps) / 2
    with np.errstate(over="ignore", divide="ignore"):
        lb, ub = log_tiny / log1p_max_x, log_max / log1p_max_x
    if np.all(x < 0):
        lb, ub = 2 - ub, 2 - lb
    elif np.any(x < 0):
        lb, ub = max(2 - ub, lb), min(2 - lb, ub)
    return float(lb), float(ub)


def yeojohnson_forward(x: np.ndarray, lam: float) -> np.ndarray:
    out = np.full(x.shape, np.nan)
    pos = x >= 0
    neg = x < 0
    with np.errstate(over="ignore"):
        if lam == 0.0:
            out[pos] = np.log1p(x[pos])
        else:
            out[pos] = np.expm1(lam * np.log1p(x[pos])) / lam
        if lam == 2.0:
            out[neg] = -np.log1p(-x[neg])
        else:
            out[neg] = -np.expm1((2.0 - lam) * np.log1p(-x[neg])) / (2.0 - lam)
    return out


def yeojohnson_inverse(y: np.ndarray, lam: float) -> np.ndarray:
    """Inverse Yeo-Johnson; NaN where no real original value maps to ``y``."""
    out = np.full(y.shape, np.nan)
    pos = y >= 0
    neg = y < 0
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        if lam == 0.0:
            out[pos] = np.expm1(y[pos])
        else:
            arg = lam * y[pos]
            vals = np.expm1(np.log1p(arg) / lam)
            vals[~(arg > -1.0)] = np.nan
            out[pos] = vals
        if lam == 2.0:
            out[neg] = -np.expm1(-y[neg])
        else:
            arg = -(2.0 - lam) * y[neg]
            vals = -np.expm1(np.log1p(arg) / (2.0 - lam))
            vals[~(arg > -1.0)] = np.nan
            out[neg] = vals
    return out
