"""The scaling methods: options, fit, forward and inverse for each.

A method object is stateless. ``fit`` takes the finite values of one column (missing and
infinite values already left out) and normalised options, and returns the fitted
parameters as a plain dict of JSON-ready values plus the warnings a user should see.
``forward`` and ``inverse`` take any float array (NaN passes through as NaN) and the
parameters. Every method is increasing, so bins, order and ranges map through it.

The options a user types (``low=-1``, ``sd=population``, ``standardize=yes``) are
checked and normalised by ``Method.options``; the same call serves the command line and
the window.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import OptionError, ScalewrightError
from . import numerics, power


@dataclass(frozen=True)
class OptionSpec:
    """One option of a method: its name, allowed values or type, default and meaning."""

    name: str
    default: Any
    help: str
    choices: tuple[str, ...] = ()  # for text options
    kind: str = "text"  # "text", "number" or "yes/no"


class FitError(ScalewrightError):
    """A method cannot be fitted to these values; the plan adds the column's name."""


class FitResult(dict):
    """Fitted parameters (a plain dict) with the warnings raised while fitting."""

    def __init__(
        self,
        params: Mapping[str, Any],
        warnings: list[str] | None = None,
        data_range: tuple[float, float] | None = None,
    ) -> None:
        super().__init__(params)
        self.warnings = list(warnings or [])
        #: (min, max) of the fitted values when the method computed it anyway, so that
        #: the plan need not read the values again.
        self.data_range = data_range


_YES = {"yes", "true", "1", "on"}
_NO = {"no", "false", "0", "off"}


class Method:
    """Base class: subclasses set the class attributes and override fit/forward/inverse."""

    id: str = ""
    name: str = ""
    summary: str = ""  # one sentence: what it does, in plain words
    when_to_use: str = ""  # one sentence: when to choose it
    option_specs: tuple[OptionSpec, ...] = ()
    inverse_formula: str = ""  # how to reverse by hand, in terms of the parameter names

    def options(self, given: Mapping[str, Any] | None = None) -> dict[str, Any]:
        """Check user-given options and return them complete, defaults filled in."""
        given = dict(given or {})
        out: dict[str, Any] = {}
        specs = {s.name: s for s in self.option_specs}
        unknown = sorted(set(given) - set(specs))
        if unknown:
            allowed = ", ".join(specs) or "none"
            raise OptionError(f"{self.id} has no option '{unknown[0]}' (options: {allowed})")
        for spec in self.option_specs:
            value = given.get(spec.name, spec.default)
            out[spec.name] = self._coerce(spec, value)
        self.check_options(out)
        return out

    def _coerce(self, spec: OptionSpec, value: Any) -> Any:
        if spec.kind == "number":
            try:
                number = float(value)
            except (TypeError, ValueError):
                raise OptionError(
                    f"{self.id} option '{spec.name}' must be a number, not '{value}'"
                ) from None
            if not math.isfinite(number):
                raise OptionError(f"{self.id} option '{spec.name}' must be finite")
            return number
        if spec.kind == "yes/no":
            if isinstance(value, bool):
                return value
            text = str(value).strip().lower()
            if text in _YES:
                return True
            if text in _NO:
                return False
            raise OptionError(f"{self.id} option '{spec.name}' must be yes or no, not '{value}'")
        text = str(value).strip().lower()
        if spec.choices and text not in spec.choices:
            raise OptionError(
                f"{self.id} option '{spec.name}' must be one of "
                f"{', '.join(spec.choices)}, not '{value}'"
            )
        return text

    def check_options(self, options: dict[str, Any]) -> None:
        """Hook for checks across options (for example low < high)."""

    def fit(self, x: np.ndarray, options: dict[str, Any]) -> FitResult:
        raise NotImplementedError

    # ``forward`` and ``inverse`` take an optional ``out`` array of the same shape; the
    # methods that map in place (passes_nonfinite) write into it, the others may ignore it.
    # Always use the returned array.
    def forward(
        self, x: np.ndarray, params: Mapping[str, Any], out: np.ndarray | None = None
    ) -> np.ndarray:
        raise NotImplementedError

    def inverse(
        self, y: np.ndarray, params: Mapping[str, Any], out: np.ndarray | None = None
    ) -> np.ndarray:
        raise NotImplementedError

    #: True when ``fit`` may be given NaN among the values and leaves them out itself
    #: (the plan then need not copy the finite values out first).
    fit_ignores_nan: bool = False

    #: True when ``forward`` and ``inverse`` already keep NaN as NaN and pass infinities
    #: through unchanged (the affine methods with a positive scale), so that the whole
    #: array can be mapped in one go without masking.
    passes_nonfinite: bool = False

    def forward_all(
        self, x: np.ndarray, params: Mapping[str, Any], out: np.ndarray | None = None
    ) -> np.ndarray:
        """``forward`` on any float array: NaN stays NaN, infinities pass through unchanged."""
        return _through_nonfinite(x, self.forward, params, self.passes_nonfinite, out)

    def inverse_all(
        self, y: np.ndarray, params: Mapping[str, Any], out: np.ndarray | None = None
    ) -> np.ndarray:
        """``inverse`` on any float array: NaN stays NaN, infinities pass through unchanged."""
        return _through_nonfinite(y, self.inverse, params, self.passes_nonfinite, out)


def _through_nonfinite(x, func, params, passes_nonfinite: bool, out=None) -> np.ndarray:
    x = np.asarray(x, dtype=np.float64)
    if passes_nonfinite:
        with np.errstate(all="ignore"):
            return np.asarray(func(x, params, out=out), dtype=np.float64)
    with np.errstate(all="ignore"):
        out = np.asarray(func(x, params), dtype=np.float64)
    if out is x or np.may_share_memory(out, x):
        out = out.copy()
    nonfinite = ~np.isfinite(x)
    if nonfinite.any():
        np.copyto(out, x, where=nonfinite)
    return out


def _finite_range(x: np.ndarray) -> tuple[float, float]:
    """min and max, NaN left out (np.fmin/np.fmax skip NaN without copying)."""
    return float(np.fmin.reduce(x)), float(np.fmax.reduce(x))


def _largest_size(x: np.ndarray) -> tuple[float, tuple[float, float]]:
    """max |x| with NaN left out, and the (min, max) it came from."""
    lo, hi = _finite_range(x)
    return max(abs(lo), abs(hi)), (lo, hi)


def _keep_nonfinite(x: np.ndarray, value: float, out: np.ndarray | None = None) -> np.ndarray:
    """``value`` where ``x`` is finite; NaN and infinities of ``x`` kept as they are."""
    result = np.where(np.isfinite(x), value, x)
    if out is None:
        return result
    out[...] = result
    return out


def _begin(x, out: np.ndarray | None) -> tuple[np.ndarray, np.ndarray]:
    """``x`` as float64 and the array to write the result into (``out`` or a new one)."""
    x = np.asarray(x, dtype=np.float64)
    return x, (np.empty_like(x) if out is None else out)


class LeaveAsIs(Method):
    id = "none"
    name = "leave as is"
    summary = "Keeps the values exactly as they are."
    when_to_use = "For columns the model should see in their own units, and for codes."
    inverse_formula = "x = y"
    passes_nonfinite = True

    def fit(self, x, options):
        return FitResult({})

    def forward(self, x, params, out=None):
        x, out = _begin(x, out)
        np.copyto(out, x)
        return out

    inverse = forward


class MinMax(Method):
    id = "minmax"
    name = "min-max"
    summary = "Stretches the values so the smallest becomes 'low' and the largest 'high'."
    when_to_use = (
        "When the model needs a fixed range (often 0 to 1) and there are no extreme outliers."
    )
    option_specs = (
        OptionSpec("low", 0.0, "the value the smallest number becomes", kind="number"),
        OptionSpec("high", 1.0, "the value the largest number becomes", kind="number"),
    )
    inverse_formula = "x = (y - low) / (high - low) * (max - min) + min"

    def check_options(self, options):
        if not options["low"] < options["high"]:
            raise OptionError("minmax needs low < high")

    passes_nonfinite = True
    fit_ignores_nan = True

    def fit(self, x, options):
        lo, hi = _finite_range(x)
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

    def forward(self, x, params, out=None):
        # (x - min) / (max - min) * (high - low) + low, in this order (the design's formula):
        # dividing first keeps tiny and huge spans in range, where (high-low)/span would not.
        lo, hi, low, high = params["min"], params["max"], params["low"], params["high"]
        x, out = _begin(x, out)
        if lo == hi:
            return _keep_nonfinite(x, low, out)
        span = hi - lo
        if math.isfinite(span):
            np.subtract(x, lo, out=out)
            out /= span
        else:
            # The data span more than the largest float: work on halves (exact) instead.
            np.multiply(x, 0.5, out=out)
            out -= lo * 0.5
            out /= hi * 0.5 - lo * 0.5
        if high - low != 1.0:
            out *= high - low
        if low != 0.0:
            out += low
        return out

    def inverse(self, y, params, out=None):
        lo, hi, low, high = params["min"], params["max"], params["low"], params["high"]
        y, out = _begin(y, out)
        np.subtract(y, low, out=out)
        if high - low != 1.0:
            out /= high - low
        span = hi - lo
        if math.isfinite(span):
            out *= span
            out += lo
        else:
            out *= hi * 0.5 - lo * 0.5
            out += lo * 0.5
            out *= 2.0
        return out


class ZScore(Method):
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
        ),
    )
    inverse_formula = "x = y * sd + mean"

    passes_nonfinite = True

    def fit(self, x, options):
        ddof = 1 if options["sd"] == "sample" else 0
        lo, hi = float(np.min(x)), float(np.max(x))
        if lo == hi:
            # Exactly constant: the mean is that value and the spread exactly 0 (rounding
            # in the sums must not turn it into a tiny positive sd).
            m, s = float(x[0]), 0.0
        else:
            m, s = numerics.mean_sd(x, ddof=ddof)
        if math.isinf(s):
            raise FitError("the values are too far apart to measure their spread in floating point")
        warnings = []
        if not s > 0:
            if x.size - ddof <= 0:
                warnings.append("too few values to measure a spread, so every value becomes 0")
            else:
                warnings.append("all values are the same, so every value becomes 0")
            s = 0.0
        return FitResult({"mean": m, "sd": s, "ddof": ddof}, warnings, data_range=(lo, hi))

    def forward(self, x, params, out=None):
        x, out = _begin(x, out)
        if params["sd"] == 0:
            return _keep_nonfinite(x, 0.0, out)
        np.subtract(x, params["mean"], out=out)
        out /= params["sd"]
        return out

    def inverse(self, y, params, out=None):
        y, out = _begin(y, out)
        np.multiply(y, params["sd"], out=out)
        out += params["mean"]
        return out


class DecimalScaling(Method):
    id = "decimal"
    name = "decimal scaling"
    summary = "Moves the decimal point so that every value lies between -1 and 1."
    when_to_use = "When you want values below 1 in size while keeping them easy to read back."
    inverse_formula = "x = y * 10^j"

    passes_nonfinite = True
    fit_ignores_nan = True

    def fit(self, x, options):
        biggest, data_range = _largest_size(x)
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

    def forward(self, x, params, out=None):
        x, out = _begin(x, out)
        return _shift_decimal(x, params["j"], out)

    def inverse(self, y, params, out=None):
        y, out = _begin(y, out)
        return _shift_decimal(y, -params["j"], out)


_MAX_POW10 = 308  # 10.0**308 is the largest power of ten a float holds


def _shift_decimal(x, j: int, out=None):
    """``x / 10**j`` with one rounding: 10**k is exact in floating point for k <= 22, so
    dividing (j > 0) or multiplying (j < 0) by it is correctly rounded there."""
    if j >= 0:
        return np.divide(x, 10.0**j, out=out)
    return np.multiply(x, 10.0 ** (-j), out=out)


class Robust(Method):
    id = "robust"
    name = "robust (median/IQR)"
    summary = "Subtracts the median and divides by the spread of the middle half (IQR)."
    when_to_use = "When a few extreme values would distort the mean and sd."
    inverse_formula = "x = y * scale + median   (scale = q3 - q1)"

    def fit(self, x, options):
        q1, median, q3 = numerics.quantiles(x, (0.25, 0.5, 0.75))
        lo, hi = _finite_range(x)
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

    passes_nonfinite = True

    def forward(self, x, params, out=None):
        x, out = _begin(x, out)
        np.subtract(x, params["median"], out=out)
        out /= params["scale"]
        return out

    def inverse(self, y, params, out=None):
        y, out = _begin(y, out)
        np.multiply(y, params["scale"], out=out)
        out += params["median"]
        return out


def robust_scale(q1: float, median: float, q3: float, lo: float, hi: float) -> float:
    """What robust scaling divides by: the IQR ``q3 - q1``, or 1 when the IQR is 0 or so
    small that the values from ``lo`` to ``hi`` would scale beyond the float range.

    The fit and the project file's validation both call this, so they always agree.
    """
    scale = q3 - q1
    if not scale > 0:
        return 1.0
    with np.errstate(over="ignore"):
        widest = max(median - lo, hi - median) / scale
    return scale if math.isfinite(widest) else 1.0


class MaxAbs(Method):
    id = "maxabs"
    name = "max-abs"
    summary = "Divides by the largest absolute value, so values lie between -1 and 1."
    when_to_use = "For columns with many zeros or meaningful signs: zeros stay zero."
    inverse_formula = "x = y * maxabs"

    fit_ignores_nan = True

    def fit(self, x, options):
        biggest, data_range = _largest_size(x)
        if biggest == 0:
            return FitResult(
                {"maxabs": 1.0}, ["all values are zero; dividing by 1 instead"], data_range
            )
        return FitResult({"maxabs": biggest}, data_range=data_range)

    passes_nonfinite = True

    def forward(self, x, params, out=None):
        x, out = _begin(x, out)
        return np.divide(x, params["maxabs"], out=out)

    def inverse(self, y, params, out=None):
        y, out = _begin(y, out)
        return np.multiply(y, params["maxabs"], out=out)


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
    project file's validation both call this. FitError when no float shift can do it.
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
    option_specs = (OptionSpec("base", "e", "the base of the logarithm", choices=("e", "10", "2")),)
    inverse_formula = "x = base^y - shift"

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


class _PowerMethod(Method):
    option_specs = (
        OptionSpec(
            "standardize",
            False,
            "also subtract the mean and divide by the sd afterwards",
            kind="yes/no",
        ),
    )

    def _standardize(
        self, transformed: np.ndarray, options: dict, params: dict, warnings: list
    ) -> None:
        params["standardize"] = bool(options["standardize"])
        if options["standardize"]:
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
                    f"turning scaled values back is only accurate to about {err:.0e} of the "
                    "largest value"
                )
            )
            warnings.append(f"lambda {params['lambda']:.4g} is extreme for these values: {lost}")

    def _scale(self, t: np.ndarray, params) -> np.ndarray:
        if params.get("standardize"):
            return (t - params["mean"]) / params["sd"]
        return t

    def _unscale(self, y: np.ndarray, params) -> np.ndarray:
        if params.get("standardize"):
            return y * params["sd"] + params["mean"]
        return y


class BoxCox(_PowerMethod):
    id = "boxcox"
    name = "Box-Cox"
    summary = "A power transform that makes skewed positive values more bell-shaped."
    when_to_use = "For strictly positive, skewed columns (for other signs use Yeo-Johnson)."
    inverse_formula = "x = (lambda * y' + 1)^(1/lambda), or exp(y') if lambda = 0; y' = y * sd + mean if standardized"

    def fit(self, x, options):
        if np.any(x <= 0):
            raise FitError(
                "Box-Cox needs values above 0, and this column has values of 0 or below; "
                "choose Yeo-Johnson, which accepts any sign"
            )
        if np.min(x) == np.max(x):
            raise FitError("all values are the same, so Box-Cox cannot be fitted")
        lam, constrained = power.boxcox_lambda(x, report_constrained=True)
        params: dict[str, Any] = {"lambda": lam}
        warnings: list[str] = []
        if constrained:
            warnings.append(
                f"the best lambda would push values beyond what floating point can hold; "
                f"lambda {lam!r} was used instead (as scipy does)"
            )
        self._standardize(power.boxcox_forward(x, lam), options, params, warnings)
        self._check_reversible(x, params, warnings)
        return FitResult(params, warnings)

    def forward(self, x, params, out=None):  # out: see Method.forward (not used here)
        return self._scale(power.boxcox_forward(x, params["lambda"]), params)

    def inverse(self, y, params, out=None):  # out: see Method.forward (not used here)
        return power.boxcox_inverse(self._unscale(y, params), params["lambda"])


class YeoJohnson(_PowerMethod):
    id = "yeojohnson"
    name = "Yeo-Johnson"
    summary = "A power transform like Box-Cox that also accepts zero and negative values."
    when_to_use = "For skewed columns that contain zeros or negative values."
    inverse_formula = (
        "for y' >= 0: x = (lambda * y' + 1)^(1/lambda) - 1; "
        "for y' < 0: x = 1 - (1 - (2 - lambda) * y')^(1/(2 - lambda)); "
        "y' = y * sd + mean if standardized"
    )

    def fit(self, x, options):
        if np.min(x) == np.max(x):
            raise FitError("all values are the same, so Yeo-Johnson cannot be fitted")
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
    )
}


def get_method(method_id: str) -> Method:
    """The method with this id, or an OptionError listing the ids there are."""
    try:
        return METHODS[method_id.strip().lower()]
    except (KeyError, AttributeError):
        raise OptionError(f"unknown method '{method_id}' (methods: {', '.join(METHODS)})") from None
