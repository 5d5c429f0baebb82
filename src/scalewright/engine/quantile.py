"""Quantile (rank) scaling: each value becomes its place among the fitted values.

Fitted on up to 1,000 quantiles of the column (type-7, linear interpolation), kept at full
precision. Forward interpolates linearly between them to a uniform 0..1 shape, or further
through the standard normal's quantile function to a bell shape; inverse interpolates
back. Both are non-decreasing and reverse each other within the fitted range; values
outside it are pressed to its ends (0 or 1) and reported by the plan like any value outside
the fitted range. Where several quantiles inside the range are equal (many tied values), a
value there maps to the middle of their ranks, as scikit-learn's ``QuantileTransformer``
does; the smallest and largest fitted values always map to 0 and 1.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .method_base import FitResult, Method, OptionSpec, ParamError, ParamSpec, format_number

MAX_QUANTILES = 1000
# The normal shape is cut at the ranks 1e-7 and 1 - 1e-7 (about -5.2 and 5.2 sd), so that
# the ends of the fitted range stay finite; scikit-learn's QuantileTransformer uses the same
# bound (common practice).
_EDGE = 1e-7 - np.spacing(1)


def _ranks(n: int) -> np.ndarray:
    return np.linspace(0.0, 1.0, n)


def _quantile_words(q: list[float]) -> str:
    return f"{len(q):,} fitted quantiles from {format_number(q[0])} to {format_number(q[-1])}"


class Quantile(Method):
    id = "quantile"
    name = "quantile (rank)"
    summary = (
        "Replaces each value by its rank among the fitted values, spread evenly from 0 to 1, "
        "or shaped like a bell curve (mean 0, sd 1)."
    )
    when_to_use = (
        "For columns with a strange shape or extreme outliers, when only the order of the "
        "values matters to the model; new values beyond the fitted range become 0 or 1."
    )
    option_specs = (
        OptionSpec(
            "shape",
            "uniform",
            "spread the ranks evenly from 0 to 1 (uniform) or as a bell curve (normal)",
            choices=("uniform", "normal"),
            label="Result shape",
            choice_labels={"uniform": "even, from 0 to 1", "normal": "bell curve (normal)"},
        ),
    )
    param_specs = (
        ParamSpec("shape", "text", "shaped", brief=False),
        ParamSpec("quantiles", "numbers", "fitted quantiles", says=_quantile_words),
    )
    assumes = (
        "Only the order of the values matters, and the fitted rows cover the range new "
        "values will have."
    )
    reverses = (
        "Within the fitted range, to floating-point rounding: a rank is turned back by "
        "interpolating between the saved quantiles. A value that was outside the fitted "
        "range comes back as its end, not as what it was."
    )
    changes_shape = True
    inverse_formula = (
        "find y (for the normal shape first take the normal distribution's probability "
        "of y) between the ranks i/(n-1) and (i+1)/(n-1), then interpolate linearly "
        "between quantiles[i] and quantiles[i+1]"
    )
    slow_fit = True  # the quantiles sort the values
    #: Up to 1,000 quantiles: not among what the aggregate query computes (yet).
    summary_needs = frozenset({"quantile points"})

    def fit_summary(self, summary, options):
        from .method_base import FitError

        raise FitError(
            "quantile scaling needs up to 1,000 quantiles of the values, which the aggregate "
            "query does not compute; fit it in memory (--engine memory)"
        )

    def fit(self, x, options):
        n = int(min(MAX_QUANTILES, max(x.size, 2)))
        q = np.quantile(x, _ranks(n))  # numpy's default "linear" is Hyndman-Fan type 7
        q = np.maximum.accumulate(q)  # rounding must not make the quantiles decrease
        warnings = []
        if q[0] == q[-1]:
            warnings.append("all values are the same, so every value becomes 0")
        params = {"shape": options["shape"], "quantiles": [float(v) for v in q]}
        return FitResult(params, warnings, data_range=(float(q[0]), float(q[-1])))

    def forward(self, x, params, out=None):  # out: see Method.forward (not used here)
        q = np.asarray(params["quantiles"], dtype=np.float64)
        r = _ranks(q.size)
        x = np.asarray(x, dtype=np.float64)
        # Interpolating from both ends and averaging puts a value that equals several tied
        # quantiles at the middle of their ranks (np.interp alone would take one end).
        u = 0.5 * (np.interp(x, q, r) - np.interp(-x, -q[::-1], -r[::-1]))
        # The ends are the ends, ties or not: the smallest fitted value (and anything
        # below) becomes rank 0, the largest rank 1; a constant column becomes 0, as
        # min-max makes it its 'low' (scikit-learn's QuantileTransformer does the same).
        u = np.where(x >= q[-1], 1.0, u)
        u = np.where(x <= q[0], 0.0, u)
        if params["shape"] == "normal":
            from scipy.special import ndtri

            u = np.clip(ndtri(u), ndtri(_EDGE), ndtri(1.0 - _EDGE))
        return np.where(np.isnan(x), np.nan, u)

    def inverse(self, y, params, out=None):  # out: see Method.forward (not used here)
        q = np.asarray(params["quantiles"], dtype=np.float64)
        y = np.asarray(y, dtype=np.float64)
        if params["shape"] == "normal":
            from scipy.special import ndtr

            u = ndtr(y)
        else:
            # A rank outside 0..1 has no value in original units.
            u = np.where((y >= 0.0) & (y <= 1.0), y, np.nan)
        return np.interp(u, _ranks(q.size), q)

    def check_saved(self, params: dict[str, Any], options, lo, hi):
        if params["shape"] != options["shape"]:
            raise ParamError("shape", f"does not match the option shape ({options['shape']})")
        q = np.asarray(params["quantiles"], dtype=np.float64)
        if not 2 <= q.size <= MAX_QUANTILES:
            raise ParamError("quantiles", f"must hold 2 to {MAX_QUANTILES} numbers, not {q.size}")
        if np.any(np.diff(q) < 0):
            raise ParamError("quantiles", "must never decrease")
        if q[0] != lo or q[-1] != hi:
            raise ParamError(
                "quantiles",
                f"must run from the smallest to the largest fitted value [{lo!r}, {hi!r}]",
            )

    # ------------------------------------------------------------------ SQL

    def sql_forward(self, x, params):
        """A piecewise-linear CASE through the fitted quantiles (uniform shape only: SQL
        dialects have no normal quantile function to shape it further)."""
        from . import sql_terms as S

        _uniform_only(params)
        q = np.asarray(params["quantiles"], dtype=np.float64)
        r = _ranks(q.size)
        if q[0] == q[-1]:
            return S.num(0.0)
        # Distinct quantiles with the first and last rank each holds (ties share a value).
        values, first = np.unique(q, return_index=True)
        last = np.append(first[1:] - 1, q.size - 1)
        whens = [
            (S.le(x, S.num(values[0])), S.num(0.0)),
            (S.ge(x.copy(), S.num(values[-1])), S.num(1.0)),
        ]
        for j in range(values.size - 1):
            if j > 0:  # a value equal to tied quantiles takes the middle of their ranks
                whens.append(
                    (S.eq(x.copy(), S.num(values[j])), S.num(0.5 * (r[first[j]] + r[last[j]])))
                )
            lo_x, hi_x = values[j], values[j + 1]
            lo_r, hi_r = r[last[j]], r[first[j + 1]]
            slope = (hi_r - lo_r) / (hi_x - lo_x)
            segment = S.add(S.mul(S.num(slope), S.sub(x.copy(), S.num(lo_x))), S.num(lo_r))
            whens.append((S.lt(x.copy(), S.num(hi_x)), segment))
        return S.case(*whens)

    def sql_inverse(self, y, params):
        from . import sql_terms as S

        _uniform_only(params)
        q = np.asarray(params["quantiles"], dtype=np.float64)
        r = _ranks(q.size)
        whens = [(S.or_(S.lt(y, S.num(0.0)), S.gt(y.copy(), S.num(1.0))), None)]
        for i in range(q.size - 1):
            slope = (q[i + 1] - q[i]) / (r[i + 1] - r[i])
            segment = S.add(S.mul(S.num(slope), S.sub(y.copy(), S.num(r[i]))), S.num(q[i]))
            whens.append((S.lt(y.copy(), S.num(r[i + 1])), segment))
        return S.case(*whens, default=S.num(q[-1]))


def _uniform_only(params) -> None:
    if params["shape"] != "uniform":
        from ..errors import ScalewrightError

        raise ScalewrightError(
            "quantile scaling with the normal shape has no SQL form (SQL dialects have no "
            "normal quantile function); choose the uniform shape for SQL"
        )
