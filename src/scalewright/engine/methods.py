"""The scaling methods, each described once in its own class, and the registry.

See ``method_base`` for what a method is made of. A new method is a module of its own
(``quantile.py`` is one) and one line in ``METHODS`` below.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import OptionError
from . import numerics, power, quantile
from .method_base import (
    FitError,
    FitResult,
    LinearMethod,
    Method,
    OptionSpec,
    ParamError,
    ParamSpec,
    Steps,
    finite_range,
    largest_size,
    near,
)
from .number_text import number_text


def _sd_words(ddof: Any) -> str:
    return "sample sd (divides by n-1)" if ddof == 1 else "population sd (divides by n)"


def _standardized(params) -> bool:
    return bool(params.get("standardize"))


_UNSTANDARDIZED = "standardize is false"


class LeaveAsIs(LinearMethod):
    id = "none"
    name = "leave as is"
    summary = "Keeps the values exactly as they are."
    when_to_use = "For columns the model should see in their own units, and for codes."
    assumes = "Nothing: any numbers are kept."
    reverses = "Nothing to reverse: the values are the original ones."
    inverse_formula = "x = y"

    def fit(self, x, options):
        return FitResult({})

    def steps(self, params):
        return Steps()


class MinMax(LinearMethod):
    id = "minmax"
    name = "min-max"
    summary = (
        "Stretches the values so the smallest becomes the number in 'Smallest becomes' "
        "(0 unless you change it) and the largest the number in 'Largest becomes' (1)."
    )
    when_to_use = (
        "When the model needs a fixed range (often 0 to 1) and there are no extreme outliers."
    )
    option_specs = (
        OptionSpec(
            "low",
            0.0,
            "the value the smallest number becomes",
            kind="number",
            label="Smallest becomes",
        ),
        OptionSpec(
            "high",
            1.0,
            "the value the largest number becomes",
            kind="number",
            label="Largest becomes",
        ),
    )
    param_specs = (
        ParamSpec("min", "number", "smallest"),
        ParamSpec("max", "number", "largest"),
        ParamSpec("low", "number", "smallest becomes"),
        ParamSpec("high", "number", "largest becomes"),
    )
    assumes = (
        "The fitted rows hold the smallest and largest values the column will ever have; "
        "one extreme value squeezes all the others together."
    )
    reverses = (
        "Fully, to floating-point rounding, by stretching back with the saved smallest and largest values; a "
        "clipped value comes back as the end of the fitted range, not as what it was."
    )
    inverse_formula = "x = (y - low) / (high - low) * (max - min) + min"
    fit_ignores_nan = True

    def check_options(self, options):
        if not options["low"] < options["high"]:
            raise OptionError("minmax needs low < high")

    def fit(self, x, options):
        lo, hi = finite_range(x)
        warnings = []
        if lo == hi:
            warnings.append("all values are the same, so every value becomes 'low'")
        if not math.isfinite(options["high"] - options["low"]):
            raise FitError("the target range high - low is too wide for floating-point numbers")
        return FitResult(
            {"min": lo, "max": hi, "low": options["low"], "high": options["high"]},
            warnings,
            data_range=(lo, hi),
        )

    def steps(self, params):
        # (x - min) / (max - min) * (high - low) + low, in this order (the design's formula):
        # dividing first keeps tiny and huge spans in range, where (high-low)/span would not.
        lo, hi, low, high = params["min"], params["max"], params["low"], params["high"]
        return Steps(lo, hi - lo, high - low, low)

    def forward(self, x, params, out=None):
        if math.isfinite(params["max"] - params["min"]):
            return super().forward(x, params, out)
        # The data span more than the largest float: work on halves (exact) instead.
        return super().forward(np.multiply(x, 0.5), _halved(params), out)

    def inverse(self, y, params, out=None):
        if math.isfinite(params["max"] - params["min"]):
            return super().inverse(y, params, out)
        out = super().inverse(y, _halved(params), out)
        out *= 2.0
        return out

    def sql_forward(self, x, params):
        if math.isfinite(params["max"] - params["min"]):
            return super().sql_forward(x, params)
        from . import sql_terms as S

        return super().sql_forward(S.mul(x, S.num(0.5)), _halved(params))

    def sql_inverse(self, y, params):
        if math.isfinite(params["max"] - params["min"]):
            return super().sql_inverse(y, params)
        from . import sql_terms as S

        return S.mul(super().sql_inverse(y, _halved(params)), S.num(2.0))

    def check_saved(self, params, options, lo, hi):
        for key, value in (("low", options["low"]), ("high", options["high"])):
            if params[key] != value:
                raise ParamError(key, f"does not match the option {key} ({value!r})")
        if params["min"] != lo:
            raise ParamError("min", f"does not match the smallest fitted value ({lo!r})")
        if params["max"] != hi:
            raise ParamError("max", f"does not match the largest fitted value ({hi!r})")


def _halved(params):
    """Min-max parameters for halved values (data spanning more than the largest float)."""
    return {**params, "min": params["min"] * 0.5, "max": params["max"] * 0.5}


class ZScore(LinearMethod):
    id = "zscore"
    name = "z-score"
    summary = "Subtracts the mean and divides by the standard deviation (sd)."
    when_to_use = "For roughly bell-shaped columns; the result has mean 0 and sd 1."
    option_specs = (
        OptionSpec(
            "sd",
            "sample",
            "sample sd (divide by n-1) or population sd (divide by n)",
            choices=("sample", "population"),
            label="Standard deviation",
            choice_labels={
                "sample": "sample (n-1)",
                "population": "population (n)",
            },
        ),
    )
    param_specs = (
        ParamSpec("mean", "number", "mean"),
        ParamSpec("sd", "number", "sd"),
        ParamSpec("ddof", "int", "sd divides by n minus", says=_sd_words, brief=False),
    )
    assumes = (
        "The mean and sd describe the column well: roughly symmetric values without "
        "extreme outliers."
    )
    reverses = "Fully, to floating-point rounding: multiply by the saved sd and add the saved mean."
    inverse_formula = "x = y * sd + mean"

    summary_needs = frozenset({"moments"})

    def fit(self, x, options):
        ddof = 1 if options["sd"] == "sample" else 0
        lo, hi = float(np.min(x)), float(np.max(x))
        if lo == hi:
            # Exactly constant: the mean is that value and the spread exactly 0 (rounding
            # in the sums must not turn it into a tiny positive sd).
            m, s = float(x[0]), 0.0
        else:
            m, s = numerics.mean_sd(x, ddof=ddof)
        return self._result(m, s, ddof, x.size, lo, hi)

    def fit_summary(self, summary, options):
        ddof = 1 if options["sd"] == "sample" else 0
        lo, hi, n = summary.min, summary.max, summary.n
        if lo == hi:
            m, s = lo, 0.0
        else:
            m = summary.mean
            spread = math.sqrt(max(summary.sq_dev, 0.0) / (n - ddof)) if n - ddof > 0 else math.nan
            s = summary.dev_scale * spread
        return self._result(m, s, ddof, n, lo, hi)

    def _result(self, m, s, ddof, n, lo, hi):
        if math.isinf(s):
            raise FitError("the values are too far apart to measure their spread in floating point")
        warnings = []
        if not s > 0:
            if n - ddof <= 0:
                warnings.append("too few values to measure a spread, so every value becomes 0")
            else:
                warnings.append("all values are the same, so every value becomes 0")
            s = 0.0
        return FitResult({"mean": m, "sd": s, "ddof": ddof}, warnings, data_range=(lo, hi))

    def steps(self, params):
        return Steps(params["mean"], params["sd"])

    def check_saved(self, params, options, lo, hi):
        if params["ddof"] not in (0, 1):
            raise ParamError("ddof", "must be 0 (population sd) or 1 (sample sd)")
        if params["ddof"] != (1 if options["sd"] == "sample" else 0):
            raise ParamError("ddof", f"does not match the option sd ({options['sd']})")
        if params["sd"] < 0:
            raise ParamError("sd", "must be 0 or more")
        if not near(params["mean"], lo, hi):
            raise ParamError("mean", f"lies outside the fitted range [{lo!r}, {hi!r}]")


_MAX_POW10 = 308  # 10.0**308 is the largest power of ten a float holds


def _shift_decimal(x: float, j: int) -> float:
    """``x / 10**j`` with one rounding, as decimal scaling's steps compute it: 10**k is
    exact in floating point for k <= 22, so dividing (j > 0) or multiplying (j < 0) by it
    is correctly rounded there."""
    return x / 10.0**j if j >= 0 else x * 10.0 ** (-j)


class DecimalScaling(LinearMethod):
    id = "decimal"
    name = "decimal scaling"
    summary = "Moves the decimal point so that every value lies between -1 and 1."
    when_to_use = "When you want values below 1 in size while keeping them easy to read back."
    param_specs = (ParamSpec("j", "int", "divided by 10 to the power"),)
    assumes = (
        "Nothing about the shape; the fitted rows hold the largest size the column will "
        "have, or later values can exceed 1 in size."
    )
    reverses = (
        "Fully, to floating-point rounding: move the decimal point back by the saved power of ten."
    )
    inverse_formula = "x = y * 10^j"
    fit_ignores_nan = True

    def fit(self, x, options):
        biggest, data_range = largest_size(x)
        if biggest == 0:
            return FitResult(
                {"j": 0}, ["all values are zero, so nothing is moved (j = 0)"], data_range
            )
        # Smallest integer j with max|x| / 10^j < 1 (Han, Kamber and Pei, 3rd ed., 3.5.2),
        # checked with the same floating-point operation that forward uses.
        j = math.floor(math.log10(biggest)) + 1
        lowest, highest = -_MAX_POW10 + 1, _MAX_POW10
        if lowest <= j <= highest:
            while j < highest and _shift_decimal(biggest, j) >= 1:
                j += 1
            while j > lowest and _shift_decimal(biggest, j - 1) < 1:
                j -= 1
        if not (lowest <= j <= highest and _shift_decimal(biggest, j) < 1):
            raise FitError(
                f"the largest size, {biggest!r}, is too close to the limits of floating-point "
                "numbers for decimal scaling; choose max-abs instead"
            )
        return FitResult({"j": int(j)}, data_range=data_range)

    def steps(self, params):
        j = params["j"]
        return Steps(divide=10.0**j) if j >= 0 else Steps(multiply=10.0 ** (-j))

    def check_saved(self, params, options, lo, hi):
        j = params["j"]
        if not -_MAX_POW10 <= j <= _MAX_POW10:  # 10.0 ** |j| must be a finite double
            raise ParamError("j", f"must be between {-_MAX_POW10} and {_MAX_POW10}")
        biggest = max(abs(lo), abs(hi))
        if biggest == 0:
            if j != 0:
                raise ParamError("j", "must be 0 when every fitted value is 0")
        elif not (_shift_decimal(biggest, j) < 1 <= _shift_decimal(biggest, j - 1)):
            raise ParamError("j", f"is not the power of ten for the fitted range [{lo!r}, {hi!r}]")


def robust_scale(q1: float, median: float, q3: float, lo: float, hi: float) -> float:
    """What robust scaling divides by: the IQR ``q3 - q1``, or 1 when the IQR is 0 or so
    small that the values from ``lo`` to ``hi`` would scale beyond the float range.

    The fit and the saved-value check both call this, so they always agree.
    """
    scale = q3 - q1
    if not scale > 0:
        return 1.0
    with np.errstate(over="ignore"):
        widest = max(median - lo, hi - median) / scale
    return scale if math.isfinite(widest) else 1.0


class Robust(LinearMethod):
    id = "robust"
    name = "robust (median/IQR)"
    summary = "Subtracts the median and divides by the spread of the middle half (IQR)."
    when_to_use = "When a few extreme values would distort the mean and sd."
    param_specs = (
        ParamSpec("median", "number", "median"),
        ParamSpec("q1", "number", "first quartile"),
        ParamSpec("q3", "number", "third quartile"),
        ParamSpec("scale", "number", "spread (third quartile minus first)"),
        ParamSpec("quantile_rule", "text", "quartiles by", brief=False),
    )
    assumes = (
        "The middle half of the values is spread out (a column that is mostly one value "
        "has an IQR of 0)."
    )
    reverses = "Fully, to floating-point rounding: multiply by the saved spread (q3 - q1) and add the saved median."
    inverse_formula = "x = y * scale + median   (scale = q3 - q1)"
    slow_fit = True  # quartiles sort the values

    summary_needs = frozenset({"quartiles"})

    def fit(self, x, options):
        q1, median, q3 = numerics.quantiles(x, (0.25, 0.5, 0.75))
        return self._result(q1, median, q3, *finite_range(x))

    def fit_summary(self, summary, options):
        return self._result(*summary.quartiles, summary.min, summary.max)

    def _result(self, q1, median, q3, lo, hi):
        scale = robust_scale(q1, median, q3, lo, hi)
        warnings = []
        if not q3 - q1 > 0:
            warnings.append(
                "the middle half of the values is a single value (IQR 0); dividing by 1 instead"
            )
        elif scale != q3 - q1:
            warnings.append(
                f"the middle half of the values is so narrow (IQR {q3 - q1!r}) that the "
                "other values would scale beyond the range of floating-point numbers; "
                "dividing by 1 instead"
            )
        return FitResult(
            {
                "median": median,
                "q1": q1,
                "q3": q3,
                "scale": scale,
                "quantile_rule": numerics.QUANTILE_RULE,
            },
            warnings,
            data_range=(lo, hi),
        )

    def steps(self, params):
        return Steps(params["median"], params["scale"])

    def check_saved(self, params, options, lo, hi):
        q1, median, q3 = params["q1"], params["median"], params["q3"]
        if not lo <= q1 <= median <= q3 <= hi:
            raise ParamError(
                "median", "the quartiles must satisfy min <= q1 <= median <= q3 <= max"
            )
        expected = robust_scale(q1, median, q3, lo, hi)
        if params["scale"] != expected:
            if expected == q3 - q1:
                raise ParamError("scale", f"must be q3 - q1 ({expected!r})")
            why = "q1 equals q3" if not q3 > q1 else "the IQR is too narrow to divide by"
            raise ParamError("scale", f"must be 1 ({why})")


class MaxAbs(LinearMethod):
    id = "maxabs"
    name = "max-abs"
    summary = "Divides by the largest absolute value, so values lie between -1 and 1."
    when_to_use = "For columns with many zeros or meaningful signs: zeros stay zero."
    param_specs = (ParamSpec("maxabs", "number", "largest size"),)
    assumes = 'Zero means "none" and the sign matters; the fitted rows hold the largest size.'
    reverses = "Fully, to floating-point rounding: multiply by the saved largest size."
    inverse_formula = "x = y * maxabs"
    fit_ignores_nan = True

    def fit(self, x, options):
        biggest, data_range = largest_size(x)
        if biggest == 0:
            return FitResult(
                {"maxabs": 1.0}, ["all values are zero; dividing by 1 instead"], data_range
            )
        return FitResult({"maxabs": biggest}, data_range=data_range)

    def steps(self, params):
        return Steps(divide=params["maxabs"])

    def check_saved(self, params, options, lo, hi):
        biggest = max(abs(lo), abs(hi))
        expected = biggest if biggest > 0 else 1.0
        if params["maxabs"] != expected:
            raise ParamError("maxabs", f"must be the largest absolute fitted value ({expected!r})")


_LOG = {
    "e": (np.log, np.exp),
    "10": (np.log10, lambda y: np.power(10.0, y)),
    "2": (np.log2, np.exp2),
}


def log_shift(lo: float) -> float:
    """The shift the logarithm adds when the smallest fitted value ``lo`` is 0 or below.

    Common practice: ``1 - lo``, so that the smallest value becomes 1 (its log is 0). When
    ``lo`` is so large in size that ``1 - lo`` rounds to ``-lo`` (from about -9e15 on), the
    shift is raised to the next floats until ``lo + shift`` is above 0. The fit and the
    saved-value check both call this. FitError when no float shift can do it.
    """
    shift = 1.0 - lo
    for _ in range(4):  # one step is enough: lo + shift is then one unit in the last place
        if lo + shift > 0 or not math.isfinite(shift):
            break
        with np.errstate(over="ignore"):  # past the largest float: inf, refused below
            shift = float(np.nextafter(shift, math.inf))
    if not (math.isfinite(shift) and lo + shift > 0):
        raise FitError(
            f"the smallest value, {lo!r}, is too far below 0 to shift above 0 for the "
            "logarithm; choose Yeo-Johnson, which accepts any sign"
        )
    return shift


class Logarithm(Method):
    id = "log"
    name = "logarithm"
    summary = "Takes the logarithm of each value (after adding a shift if needed)."
    when_to_use = "For positive values spread over several orders of magnitude."
    changes_shape = True
    option_specs = (
        OptionSpec(
            "base",
            "e",
            "the base of the logarithm",
            choices=("e", "10", "2"),
            label="Logarithm base",
            choice_labels={"e": "e (natural logarithm)"},
        ),
    )
    param_specs = (
        ParamSpec("base", "text", "logarithm base", brief=False),
        ParamSpec("shift", "number", "shift"),  # the summary says it is added first
    )
    assumes = (
        "Values above 0 (or a shift that lifts them above 0) whose ratios matter more "
        "than their differences."
    )
    reverses = (
        "Fully, to floating-point rounding: raise the base to the scaled value and "
        "take off the shift."
    )
    inverse_formula = "x = base^y - shift"
    slow_fit = True  # the scaled figures need a pass over every value

    def fit(self, x, options):
        lo = float(np.min(x))
        warnings = []
        shift = 0.0
        if lo <= 0:
            shift = log_shift(lo)
            warnings.append(
                f"there are values of 0 or below; {shift!r} is added before the logarithm"
            )
        return FitResult({"base": options["base"], "shift": shift}, warnings)

    def forward(self, x, params, out=None):  # out: see Method.forward (not used here)
        log, _ = _LOG[params["base"]]
        x = np.asarray(x, dtype=np.float64)
        shifted = x + params["shift"] if params["shift"] else x
        with np.errstate(invalid="ignore", divide="ignore"):
            out = log(shifted)  # NaN below 0
        if out.size and np.fmin.reduce(out) == -np.inf:
            out[out == -np.inf] = np.nan  # log(0) has no real value either
        return out

    def inverse(self, y, params, out=None):  # out: see Method.forward (not used here)
        _, exp = _LOG[params["base"]]
        with np.errstate(over="ignore"):
            return exp(y) - params["shift"]

    def sql_forward(self, x, params):
        from . import sql_terms as S

        shifted = S.add(x, S.num(params["shift"])) if params["shift"] else x
        out = S.ln(shifted)
        if params["base"] != "e":
            out = S.div(out, S.num(math.log(float(params["base"]))))
        return S.case((S.gt(shifted.copy(), S.num(0.0)), out))  # no log of 0 or below

    def sql_inverse(self, y, params):
        from . import sql_terms as S

        if params["base"] == "e":
            out = S.exp_(y)
        else:
            out = S.exp_(S.mul(y, S.num(math.log(float(params["base"])))))
        return S.sub(out, S.num(params["shift"])) if params["shift"] else out

    def check_saved(self, params, options, lo, hi):
        if params["base"] != options["base"]:
            raise ParamError("base", f"does not match the option base ({options['base']})")
        shift = params["shift"]
        try:
            fit_shift: float | None = log_shift(lo)
        except FitError:
            fit_shift = None
        if shift != 0.0 and shift != fit_shift:
            if fit_shift is None:
                raise ParamError(
                    "shift", "must be 0 (no shift can lift the smallest fitted value above 0)"
                )
            if fit_shift == 1.0 - lo:
                raise ParamError("shift", f"must be 0 or 1 - min ({fit_shift!r})")
            raise ParamError(
                "shift", f"must be 0 or 1 - min made just large enough ({fit_shift!r})"
            )
        if not lo + shift > 0:
            raise ParamError("shift", "must make every fitted value above 0")


class _PowerMethod(Method):
    """Box-Cox and Yeo-Johnson: a lambda found by maximum likelihood, then (by default,
    the same everywhere) standardized to mean 0 and sd 1."""

    option_specs = (
        OptionSpec(
            "standardize",
            True,
            "also subtract the mean and divide by the sd afterwards (the default)",
            kind="yes/no",
            label="Standardize (mean 0, sd 1)",
        ),
    )
    param_specs = (
        ParamSpec("lambda", "number", "lambda"),
        ParamSpec(
            "standardize",
            "bool",
            "standardized",
            says=lambda v: (
                "standardized afterwards (mean 0, sd 1)" if v else "not standardized afterwards"
            ),
            brief=False,
        ),
        ParamSpec("mean", "number", "mean", present=_standardized, absent_when=_UNSTANDARDIZED),
        ParamSpec("sd", "number", "sd", present=_standardized, absent_when=_UNSTANDARDIZED),
        ParamSpec(
            "ddof",
            "int",
            "sd divides by n minus",
            says=_sd_words,
            present=_standardized,
            brief=False,
            absent_when=_UNSTANDARDIZED,
        ),
    )
    slow_fit = True  # a search for lambda

    summary_needs = frozenset({"lambda"})

    def _standardize(
        self,
        transformed: np.ndarray | None,
        options: dict,
        params: dict,
        warnings: list,
        moments: tuple[float, float] | None = None,
    ) -> None:
        """Add mean and sd of the transformed values (or ``moments``, their mean and sd
        computed elsewhere) when standardizing."""
        params["standardize"] = bool(options["standardize"])
        if options["standardize"]:
            if moments is not None:
                m, s = moments
            else:
                m = numerics.mean(transformed)
                s = numerics.sd(transformed, ddof=1, center=m)
            if not s > 0:
                warnings.append("the transformed values have no spread; dividing by 1 instead")
                s = 1.0
            params.update({"mean": m, "sd": s, "ddof": 1})

    def _check_reversible(self, x: np.ndarray, params: dict, warnings: list) -> None:
        """Warn when the fitted transform cannot be turned back to 1e-9 of the values.

        An extreme lambda squeezes the values against the transform's asymptote, where
        distinct values become nearly equal and their digits are lost. Checked on the
        fitted values themselves (at most about 10,000 of them, the extremes included).
        """
        sample = (
            x
            if x.size <= 10_000
            else np.concatenate([x[:: x.size // 10_000], [np.min(x), np.max(x)]])
        )
        with np.errstate(all="ignore"):
            back = self.inverse(self.forward(sample, params), params)
            err = float(np.max(np.abs(back - sample))) / float(np.max(np.abs(sample)))
        if not err <= 1e-9:
            lost = (
                "some values cannot be turned back at all"
                if not np.isfinite(err)
                else (
                    f"turning scaled values back is only accurate to about {number_text(err, '.0e')} of the "
                    "largest value"
                )
            )
            warnings.append(
                f"lambda {number_text(params['lambda'], '.4g')} is extreme for these values: {lost}"
            )

    def fit_summary(self, summary, options):
        x = np.array([summary.min, summary.max])
        self._check_values(x)
        params: dict[str, Any] = {"lambda": summary.lam}
        warnings = self._lambda_warnings(summary.lam, summary.lam_constrained)
        moments = None
        if options["standardize"]:
            n = summary.n
            sd = math.sqrt(max(summary.t_sq_dev, 0.0) / (n - 1)) if n > 1 else math.nan
            moments = (summary.t_mean, sd)
        self._standardize(None, options, params, warnings, moments)
        self._check_reversible(x, params, warnings)  # checked on the extremes
        return FitResult(params, warnings)

    # The lambda search where the values are not at hand (see platform.power_search): the
    # profile log-likelihood is ``coef(lambda) * sum(linear) - n/2 * log(var(value))``, with
    # ``base`` the per-row quantity the search works on (centred by its mean when
    # ``search_centred``), and ``value`` the transform at a candidate lambda (an SQL
    # expression, one per candidate), so that one pass evaluates many candidates.
    search_centred = False

    def sql_search_base(self, x):
        return x

    def sql_search_linear(self, base):
        raise NotImplementedError

    def sql_search_value(self, base, lam):
        raise NotImplementedError

    def llf_coef(self, lam: float) -> float:
        raise NotImplementedError

    def lambda_bounds(self, lo: float, hi: float) -> tuple[float, float] | None:
        """The bounds the in-memory fit keeps lambda in (None: Brent from (-2, 2), free)."""
        return None

    def finish_lambda(self, lam: float, lo: float, hi: float) -> tuple[float, bool]:
        """The lambda the in-memory fit would end with, and whether it was constrained."""
        return lam, False

    def _check_values(self, x: np.ndarray) -> None:
        if np.min(x) == np.max(x):
            raise FitError(f"all values are the same, so {self.name} cannot be fitted")

    def _lambda_warnings(self, lam: float, constrained: bool) -> list[str]:
        return []

    def _scale(self, t: np.ndarray, params) -> np.ndarray:
        if params.get("standardize"):
            return (t - params["mean"]) / params["sd"]
        return t

    def _unscale(self, y: np.ndarray, params) -> np.ndarray:
        if params.get("standardize"):
            return y * params["sd"] + params["mean"]
        return y

    def _sql_scale(self, t, params):
        from . import sql_terms as S

        if params.get("standardize"):
            return S.div(S.sub(t, S.num(params["mean"])), S.num(params["sd"]))
        return t

    def _sql_unscale(self, y, params):
        from . import sql_terms as S

        if params.get("standardize"):
            return S.add(S.mul(y, S.num(params["sd"])), S.num(params["mean"]))
        return y

    def check_saved(self, params, options, lo, hi):
        if params["standardize"] != options["standardize"]:
            raise ParamError("standardize", "does not match the option standardize")
        if params["standardize"]:
            if not params["sd"] > 0:
                raise ParamError("sd", "must be above 0")
            if params["ddof"] != 1:
                raise ParamError("ddof", "must be 1 (sample sd)")


class BoxCox(_PowerMethod):
    id = "boxcox"
    name = "Box-Cox"
    summary = (
        "A power transform that makes skewed positive values more bell-shaped, then "
        "standardizes them (mean 0, sd 1) unless you switch that off."
    )
    when_to_use = "For strictly positive, skewed columns (for other signs use Yeo-Johnson)."
    assumes = (
        "Every value is above 0; a single best power (lambda) makes the column roughly bell-shaped."
    )
    reverses = (
        "Fully, to floating-point rounding: undo the standardizing with the saved mean "
        "and sd, then the power with the saved lambda (the fit warns when an extreme lambda "
        "makes this inexact)."
    )
    changes_shape = True
    inverse_formula = "x = (lambda * y' + 1)^(1/lambda), or exp(y') if lambda = 0; y' = y * sd + mean if standardized"

    def _check_values(self, x):
        if np.any(x <= 0):
            raise FitError(
                "Box-Cox needs values above 0, and this column has values of 0 or below; "
                "choose Yeo-Johnson, which accepts any sign"
            )
        super()._check_values(x)

    search_centred = True  # the centred logarithms, as BoxCoxLikelihood works on

    def sql_search_base(self, x):
        from . import sql_terms as S

        return S.case((S.gt(x, S.num(0.0)), S.ln(x.copy())))

    def sql_search_linear(self, base):
        return base

    def sql_search_value(self, base, lam):
        from . import sql_terms as S

        # lambda * sum(L - c) - n/2 * log(var(expm1(lambda * (L - c)) / lambda)), as in
        # power.BoxCoxLikelihood (the constant -sum(L) left out).
        return S.case(
            (S.eq(lam, S.num(0.0)), base),
            default=S.div(S.expm1(S.mul(lam.copy(), base.copy())), lam.copy()),
        )

    def llf_coef(self, lam):
        return lam

    def finish_lambda(self, lam, lo, hi):
        return power.constrain_boxcox_lambda(lam, lo, hi)

    def _lambda_warnings(self, lam, constrained):
        if not constrained:
            return []
        return [
            f"the best lambda would push values beyond what floating point can hold; "
            f"lambda {lam!r} was used instead (as scipy does)"
        ]

    def fit(self, x, options):
        self._check_values(x)
        lam, constrained = power.boxcox_lambda(x, report_constrained=True)
        params: dict[str, Any] = {"lambda": lam}
        warnings = self._lambda_warnings(lam, constrained)
        self._standardize(power.boxcox_forward(x, lam), options, params, warnings)
        self._check_reversible(x, params, warnings)
        return FitResult(params, warnings)

    def forward(self, x, params, out=None):  # out: see Method.forward (not used here)
        return self._scale(power.boxcox_forward(x, params["lambda"]), params)

    def inverse(self, y, params, out=None):  # out: see Method.forward (not used here)
        return power.boxcox_inverse(self._unscale(y, params), params["lambda"])

    def sql_forward(self, x, params):
        from . import sql_terms as S

        lam = params["lambda"]
        t = S.ln(x) if lam == 0 else S.div(S.expm1(S.mul(S.num(lam), S.ln(x))), S.num(lam))
        return S.case((S.gt(x.copy(), S.num(0.0)), self._sql_scale(t, params)))

    def sql_inverse(self, y, params):
        from . import sql_terms as S

        lam = params["lambda"]
        y = self._sql_unscale(y, params)
        if lam == 0:
            return S.exp_(y)
        arg = S.mul(S.num(lam), y)  # no original value where lambda * y <= -1
        out = S.exp_(S.div(S.log1p(arg), S.num(lam)))
        return S.case((S.gt(arg.copy(), S.num(-1.0)), out))

    def check_saved(self, params, options, lo, hi):
        super().check_saved(params, options, lo, hi)
        if not lo > 0:
            raise ParamError("min", "Box-Cox needs values above 0", about_range=True)


class YeoJohnson(_PowerMethod):
    id = "yeojohnson"
    name = "Yeo-Johnson"
    summary = (
        "A power transform like Box-Cox that also accepts zero and negative values, then "
        "standardizes them (mean 0, sd 1) unless you switch that off."
    )
    when_to_use = "For skewed columns that contain zeros or negative values."
    assumes = "Any sign is fine; a single best power (lambda) makes the column roughly bell-shaped."
    reverses = (
        "Fully, to floating-point rounding: undo the standardizing with the saved mean "
        "and sd, then the power with the saved lambda, separately for values below and "
        "above 0 (the fit warns when an extreme lambda makes this inexact)."
    )
    changes_shape = True
    inverse_formula = (
        "for y' >= 0: x = (lambda * y' + 1)^(1/lambda) - 1; "
        "for y' < 0: x = 1 - (1 - (2 - lambda) * y')^(1/(2 - lambda)); "
        "y' = y * sd + mean if standardized"
    )

    def sql_search_base(self, x):
        """The signed logarithm: log1p(x) for x >= 0, -log1p(-x) below (as the in-memory
        YeoJohnsonLikelihood keeps them), so the candidates' transforms name one column."""
        from . import sql_terms as S

        return S.case(
            (S.ge(x, S.num(0.0)), S.log1p(x.copy())),
            default=S.neg(S.log1p(S.neg(x.copy()))),
        )

    def sql_search_linear(self, base):
        return base

    def sql_search_value(self, base, lam):
        from . import sql_terms as S

        pos = S.case(
            (S.eq(lam, S.num(0.0)), base),
            default=S.div(S.expm1(S.mul(lam.copy(), base.copy())), lam.copy()),
        )
        two_less = S.sub(S.num(2.0), lam.copy())
        neg = S.case(
            (S.eq(lam.copy(), S.num(2.0)), base.copy()),
            default=S.neg(S.div(S.expm1(S.mul(two_less, S.neg(base.copy()))), two_less.copy())),
        )
        return S.case((S.ge(base.copy(), S.num(0.0)), pos), default=neg)

    def llf_coef(self, lam):
        return lam - 1.0

    def lambda_bounds(self, lo, hi):
        return power.yeojohnson_bounds(lo, hi)

    def fit(self, x, options):
        self._check_values(x)
        lam = power.yeojohnson_lambda(x)
        params: dict[str, Any] = {"lambda": lam}
        warnings: list[str] = []
        self._standardize(power.yeojohnson_forward(x, lam), options, params, warnings)
        self._check_reversible(x, params, warnings)
        return FitResult(params, warnings)

    def forward(self, x, params, out=None):  # out: see Method.forward (not used here)
        return self._scale(power.yeojohnson_forward(x, params["lambda"]), params)

    def inverse(self, y, params, out=None):  # out: see Method.forward (not used here)
        return power.yeojohnson_inverse(self._unscale(y, params), params["lambda"])

    def sql_forward(self, x, params):
        from . import sql_terms as S

        lam = params["lambda"]
        pos = S.log1p(x)
        if lam != 0:
            pos = S.div(S.expm1(S.mul(S.num(lam), pos)), S.num(lam))
        neg = S.log1p(S.neg(x.copy()))
        if lam == 2:
            neg = S.neg(neg)
        else:
            neg = S.neg(S.div(S.expm1(S.mul(S.num(2.0 - lam), neg)), S.num(2.0 - lam)))
        t = S.case((S.ge(x.copy(), S.num(0.0)), pos), default=neg)
        return self._sql_scale(t, params)

    def sql_inverse(self, y, params):
        from . import sql_terms as S

        lam = params["lambda"]
        y = self._sql_unscale(y, params)
        if lam == 0:
            pos = S.expm1(y)
        else:
            arg = S.mul(S.num(lam), y)
            pos = S.case((S.gt(arg, S.num(-1.0)), S.expm1(S.div(S.log1p(arg.copy()), S.num(lam)))))
        if lam == 2:
            neg = S.neg(S.expm1(S.neg(y.copy())))
        else:
            arg = S.mul(S.num(-(2.0 - lam)), y.copy())
            back = S.neg(S.expm1(S.div(S.log1p(arg.copy()), S.num(2.0 - lam))))
            neg = S.case((S.gt(arg, S.num(-1.0)), back))
        return S.case((S.ge(y.copy(), S.num(0.0)), pos), default=neg)


METHODS: dict[str, Method] = {
    m.id: m
    for m in (
        LeaveAsIs(),
        MinMax(),
        ZScore(),
        DecimalScaling(),
        Robust(),
        MaxAbs(),
        Logarithm(),
        BoxCox(),
        YeoJohnson(),
        quantile.Quantile(),
    )
}


def get_method(method_id: str) -> Method:
    """The method with this id, or an OptionError listing the ids there are."""
    try:
        return METHODS[method_id.strip().lower()]
    except (KeyError, AttributeError):
        raise OptionError(f"unknown method '{method_id}' (methods: {', '.join(METHODS)})") from None
