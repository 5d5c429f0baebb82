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

    def __init__(self, params: Mapping[str, Any], warnings: list[str] | None = None) -> None:
        super().__init__(params)
        self.warnings = list(warnings or [])


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

    def forward(self, x: np.ndarray, params: Mapping[str, Any]) -> np.ndarray:
        raise NotImplementedError

    def inverse(self, y: np.ndarray, params: Mapping[str, Any]) -> np.ndarray:
        raise NotImplementedError


class LeaveAsIs(Method):
    id = "none"
    name = "leave as is"
    summary = "Keeps the values exactly as they are."
    when_to_use = "For columns the model should see in their own units, and for codes."
    inverse_formula = "x = y"

    def fit(self, x, options):
        return FitResult({})

    def forward(self, x, params):
        return np.array(x, dtype=np.float64, copy=True)

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

    def fit(self, x, options):
        lo, hi = float(np.min(x)), float(np.max(x))
        warnings = []
        if lo == hi:
            warnings.append("all values are the same, so every value becomes 'low'")
        return FitResult(
            {"min": lo, "max": hi, "low": options["low"], "high": options["high"]}, warnings
        )

    def forward(self, x, params):
        span = params["max"] - params["min"]
        if span == 0:
            return np.where(np.isnan(x), np.nan, params["low"])
        return (x - params["min"]) * ((params["high"] - params["low"]) / span) + params["low"]

    def inverse(self, y, params):
        span = params["max"] - params["min"]
        return (y - params["low"]) * (span / (params["high"] - params["low"])) + params["min"]


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

    def fit(self, x, options):
        ddof = 1 if options["sd"] == "sample" else 0
        m = numerics.mean(x)
        s = numerics.sd(x, ddof=ddof, center=m)
        warnings = []
        if not s > 0:
            if x.size - ddof <= 0:
                warnings.append("too few values to measure a spread, so every value becomes 0")
            else:
                warnings.append("all values are the same, so every value becomes 0")
            s = 0.0
        return FitResult({"mean": m, "sd": s, "ddof": ddof}, warnings)

    def forward(self, x, params):
        if params["sd"] == 0:
            return np.where(np.isnan(x), np.nan, 0.0)
        return (x - params["mean"]) / params["sd"]

    def inverse(self, y, params):
        return y * params["sd"] + params["mean"]


class DecimalScaling(Method):
    id = "decimal"
    name = "decimal scaling"
    summary = "Moves the decimal point so that every value lies between -1 and 1."
    when_to_use = "When you want values below 1 in size while keeping them easy to read back."
    inverse_formula = "x = y * 10^j"

    def fit(self, x, options):
        biggest = float(np.max(np.abs(x)))
        if biggest == 0:
            return FitResult({"j": 0}, ["all values are zero, so nothing is moved (j = 0)"])
        # Smallest integer j with max|x| / 10^j < 1 (Han, Kamber and Pei, 3rd ed., 3.5.2).
        j = math.floor(math.log10(biggest)) + 1
        while biggest / 10.0**j >= 1:
            j += 1
        while biggest / 10.0 ** (j - 1) < 1:
            j -= 1
        return FitResult({"j": int(j)})

    def forward(self, x, params):
        return x / 10.0 ** params["j"]

    def inverse(self, y, params):
        return y * 10.0 ** params["j"]


class Robust(Method):
    id = "robust"
    name = "robust (median/IQR)"
    summary = "Subtracts the median and divides by the spread of the middle half (IQR)."
    when_to_use = "When a few extreme values would distort the mean and sd."
    inverse_formula = "x = y * scale + median   (scale = q3 - q1)"

    def fit(self, x, options):
        q1, median, q3 = numerics.quantiles(x, (0.25, 0.5, 0.75))
        scale = q3 - q1
        warnings = []
        if not scale > 0:
            warnings.append(
                "the middle half of the values is a single value (IQR 0); dividing by 1 instead"
            )
            scale = 1.0
        return FitResult(
            {
                "median": median,
                "q1": q1,
                "q3": q3,
                "scale": scale,
                "quantile_rule": numerics.QUANTILE_RULE,
            },
            warnings,
        )

    def forward(self, x, params):
        return (x - params["median"]) / params["scale"]

    def inverse(self, y, params):
        return y * params["scale"] + params["median"]


class MaxAbs(Method):
    id = "maxabs"
    name = "max-abs"
    summary = "Divides by the largest absolute value, so values lie between -1 and 1."
    when_to_use = "For columns with many zeros or meaningful signs: zeros stay zero."
    inverse_formula = "x = y * maxabs"

    def fit(self, x, options):
        biggest = float(np.max(np.abs(x)))
        if biggest == 0:
            return FitResult({"maxabs": 1.0}, ["all values are zero; dividing by 1 instead"])
        return FitResult({"maxabs": biggest})

    def forward(self, x, params):
        return x / params["maxabs"]

    def inverse(self, y, params):
        return y * params["maxabs"]


_LOG = {
    "e": (np.log, np.exp),
    "10": (np.log10, lambda y: np.power(10.0, y)),
    "2": (np.log2, np.exp2),
}


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
            # Common practice: shift so the smallest fitted value becomes 1 (its log is 0).
            shift = 1.0 - lo
            warnings.append(
                f"there are values of 0 or below; {shift!r} is added before the logarithm"
            )
        return FitResult({"base": options["base"], "shift": shift}, warnings)

    def forward(self, x, params):
        log, _ = _LOG[params["base"]]
        shifted = x + params["shift"]
        with np.errstate(invalid="ignore", divide="ignore"):
            out = log(shifted)
        out[~(shifted > 0)] = np.nan  # log of 0 or below has no real value
        return out

    def inverse(self, y, params):
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
        lam = power.boxcox_lambda(x)
        params: dict[str, Any] = {"lambda": lam}
        warnings: list[str] = []
        self._standardize(power.boxcox_forward(x, lam), options, params, warnings)
        return FitResult(params, warnings)

    def forward(self, x, params):
        return self._scale(power.boxcox_forward(x, params["lambda"]), params)

    def inverse(self, y, params):
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
        return FitResult(params, warnings)

    def forward(self, x, params):
        return self._scale(power.yeojohnson_forward(x, params["lambda"]), params)

    def inverse(self, y, params):
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
