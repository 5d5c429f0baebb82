"""Box-Cox and Yeo-Johnson power transforms, with lambda by maximum likelihood.

The profile log-likelihood of lambda (Box and Cox 1964; Yeo and Johnson 2000) is

    llf(lambda) = (lambda - 1) * sum(J) - n/2 * log(var(y_lambda))

where J is log(x) for Box-Cox and sign(x) * log1p(|x|) for Yeo-Johnson, and var is the
population variance of the transformed values. The logarithms are computed once; every
evaluation of the likelihood then costs one ``expm1`` and one variance over the data, which
is what makes this several times faster than calling scipy's fitter (which takes the
logarithms again on every evaluation). The optimiser (Brent's method) is scipy's, with the
same bracket and tolerance scipy uses, so the lambdas agree.
"""

from __future__ import annotations

import numpy as np
from scipy import optimize

_BRENT_TOL = 1.48e-8  # scipy.optimize.brent's default xtol


def _log_var_expm1(lam: float, logs: np.ndarray, center: float) -> float:
    """log(var(expm1(lam * (logs - center)) / lam)), accurate also for lambda near 0."""
    if lam == 0.0:
        d = logs - center
    else:
        d = np.expm1(lam * (logs - center))
        d /= lam
    v = float(np.var(d))
    return np.log(v) if v > 0 and np.isfinite(v) else -np.inf


class BoxCoxLikelihood:
    """Negative profile log-likelihood of Box-Cox lambda on precomputed logarithms."""

    def __init__(self, x: np.ndarray) -> None:
        self.logs = np.log(x)
        self.n = x.size
        self.sum_logs = float(np.sum(self.logs))
        self.center = float(np.mean(self.logs))

    def llf(self, lam: float) -> float:
        # var(y) = exp(2*lam*c) * var(expm1(lam*(L - c))/lam): shifting by c keeps exp in range.
        log_var = 2.0 * lam * self.center + _log_var_expm1(lam, self.logs, self.center)
        if not np.isfinite(log_var):
            return -np.inf
        return (lam - 1.0) * self.sum_logs - 0.5 * self.n * log_var

    def neg_llf(self, lam: float) -> float:
        value = self.llf(lam)
        return np.inf if not np.isfinite(value) else -value


def boxcox_lambda(x: np.ndarray) -> float:
    """Maximum-likelihood Box-Cox lambda for strictly positive finite ``x``."""
    like = BoxCoxLikelihood(x)
    # scipy.stats.boxcox_normmax(method="mle") uses optimize.brent with brack=(-2, 2).
    return float(optimize.brent(like.neg_llf, brack=(-2.0, 2.0), tol=_BRENT_TOL))


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
    """Negative profile log-likelihood of Yeo-Johnson lambda on precomputed logarithms."""

    def __init__(self, x: np.ndarray) -> None:
        pos = x >= 0
        self.log_pos = np.log1p(x[pos])
        self.log_neg = np.log1p(-x[~pos])
        self.n = x.size
        self.sum_signed_logs = float(np.sum(self.log_pos) - np.sum(self.log_neg))
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

    def neg_llf(self, lam: float) -> float:
        with np.errstate(over="ignore", invalid="ignore"):
            v = float(np.var(self.transformed(lam)))
        if not (v > 0 and np.isfinite(v)):
            return np.inf
        return -((lam - 1.0) * self.sum_signed_logs - 0.5 * self.n * np.log(v))


def yeojohnson_lambda(x: np.ndarray) -> float:
    """Maximum-likelihood Yeo-Johnson lambda for finite ``x`` (any sign)."""
    if np.all(x == 0):
        return 1.0  # every lambda fits equally; scipy returns 1 as well
    like = YeoJohnsonLikelihood(x)
    lb, ub = _yeojohnson_bounds(x)
    return float(optimize.fminbound(like.neg_llf, lb, ub, xtol=_BRENT_TOL))


def _yeojohnson_bounds(x: np.ndarray) -> tuple[float, float]:
    """Lambda bounds that keep the transform of values up to 20x the data's in range.

    The same bounds scipy.stats.yeojohnson_normmax uses (scipy PR 18852).
    """
    log1p_max_x = np.log1p(20 * np.max(np.abs(x)))
    eps = np.finfo(np.float64)
    log_eps = np.log(eps.eps)
    log_tiny = (np.log(eps.tiny) - log_eps) / 2
    log_max = (np.log(eps.max) + log_eps) / 2
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
