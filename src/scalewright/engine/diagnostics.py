"""Per-column summary figures and a suggested method with a reason in plain words."""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from . import numerics
from .number_text import number_text


@dataclass(frozen=True)
class ColumnSummary:
    count: int  # finite values
    missing: int
    infinite: int
    min: float
    max: float
    mean: float
    sd: float  # sample sd (n-1)
    median: float
    q1: float
    q3: float
    skewness: float
    n_beyond_fences: int  # beyond q1 - 1.5 IQR or q3 + 1.5 IQR (Tukey's fences)
    share_zero: float
    share_negative: float

    def as_dict(self) -> dict:
        return asdict(self)


def describe(values: np.ndarray) -> ColumnSummary:
    """Summary of one column; NaN figures where there are too few values."""
    x = numerics.as_float_array(values)
    missing = int(np.count_nonzero(np.isnan(x)))
    infinite = int(np.count_nonzero(np.isinf(x)))
    f = x[np.isfinite(x)]
    n = int(f.size)
    if n == 0:
        nan = float("nan")
        return ColumnSummary(
            0, missing, infinite, nan, nan, nan, nan, nan, nan, nan, nan, 0, nan, nan
        )
    q1, median, q3 = numerics.quantiles(f, (0.25, 0.5, 0.75))
    iqr = q3 - q1
    beyond = int(np.count_nonzero((f < q1 - 1.5 * iqr) | (f > q3 + 1.5 * iqr)))
    m = numerics.mean(f)
    return ColumnSummary(
        count=n,
        missing=missing,
        infinite=infinite,
        min=float(np.min(f)),
        max=float(np.max(f)),
        mean=m,
        sd=numerics.sd(f, ddof=1, center=m),
        median=median,
        q1=q1,
        q3=q3,
        skewness=numerics.skewness(f),
        n_beyond_fences=beyond,
        share_zero=float(np.count_nonzero(f == 0)) / n,
        share_negative=float(np.count_nonzero(f < 0)) / n,
    )


@dataclass(frozen=True)
class Suggestion:
    method: str
    options: dict
    reason: str


# Thresholds (common practice): |skewness| above 1 is "strongly skewed", 0.5 to 1
# "moderately"; more than half zeros makes a column "mostly zeros".
STRONG_SKEW = 1.0
MOSTLY_ZEROS = 0.5
MANY_OUTLIERS = 0.01  # share of values beyond the 1.5 x IQR fences


def suggest(s: ColumnSummary) -> Suggestion:
    """A method for this column and a one-line reason a non-specialist understands."""
    if s.count < 2 or s.min == s.max:
        return Suggestion("none", {}, "too few different values to be worth scaling: leave as is")
    if s.share_zero > MOSTLY_ZEROS and s.min >= 0:
        return Suggestion(
            "maxabs",
            {},
            f"mostly zeros ({s.share_zero:.0%}): max-abs keeps zeros as zeros",
        )
    if abs(s.skewness) > STRONG_SKEW:
        side = "right" if s.skewness > 0 else "left"
        if s.min > 0:
            return Suggestion(
                "boxcox",
                {"standardize": True},
                f"strongly {side}-skewed (skewness {number_text(s.skewness, '.1f')}) and all positive: Box-Cox",
            )
        return Suggestion(
            "yeojohnson",
            {"standardize": True},
            f"strongly {side}-skewed (skewness {number_text(s.skewness, '.1f')}) with zeros or negatives: Yeo-Johnson",
        )
    if s.n_beyond_fences > MANY_OUTLIERS * s.count:
        return Suggestion(
            "robust",
            {},
            f"{s.n_beyond_fences} values lie far from the rest: robust scaling is not pulled by them",
        )
    return Suggestion(
        "zscore",
        {},
        f"roughly symmetric (skewness {number_text(s.skewness, '.1f')}) with few extreme values: z-score",
    )
