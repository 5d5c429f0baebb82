"""What every scaling method is made of, and the base that all of them share.

A method describes itself once, here and in its own class: its options (with the words the
window shows for them), its fitted parameters (type, plain-words label, how a saved value is
checked), whether it is a straight line, whether its fit is slow, how to reverse it by
hand, and how its fitted parameters read in words. The project file's validation, the
command line's tables and help, the window's panels and the workbook's parameter sheet all
read these descriptions, so a new method is one module and one line in the registry.

A method object is stateless. ``fit`` takes the finite values of one column (missing and
infinite values already left out) and normalised options, and returns the fitted
parameters as a plain dict of JSON-ready values plus the warnings a user should see.
``forward`` and ``inverse`` take any float array (NaN passes through as NaN) and the
parameters. Every method is increasing, so bins, order and ranges map through it.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import OptionError, ScalewrightError
from .number_text import number_text

_YES = {"yes", "true", "1", "on"}
_NO = {"no", "false", "0", "off"}


@dataclass(frozen=True)
class OptionSpec:
    """One option of a method: its stored name, default, meaning and on-screen words."""

    name: str
    default: Any
    help: str
    choices: tuple[str, ...] = ()  # for text options
    kind: str = "text"  # "text", "number" or "yes/no"
    label: str = ""  # the words the window shows beside the option
    choice_labels: Mapping[str, str] = field(default_factory=dict)  # choice -> words

    @property
    def shown_label(self) -> str:
        return self.label or self.name

    def choice_words(self, choice: str) -> str:
        return self.choice_labels.get(choice, choice)


@dataclass(frozen=True)
class ParamSpec:
    """One fitted parameter: stored name, JSON type, plain words, and when it is present.

    ``kind`` is "number", "numbers" (a list), "int", "text" or "bool". ``label`` is what a person reads
    ("first quartile"); ``says`` turns a value into a whole phrase where a label and a
    number would read badly (``ddof`` 1 -> "sample sd (divides by n - 1)").
    ``present`` decides from the other parameters whether this one is stored (the power
    methods keep mean and sd only when standardized), and ``absent_when`` says so in words.
    ``brief`` parameters make up the short form the command line's table shows.
    """

    name: str
    kind: str
    label: str
    says: Callable[[Any], str] | None = None
    present: Callable[[Mapping[str, Any]], bool] | None = None
    brief: bool = True
    absent_when: str = ""  # words for when ``present`` is false, e.g. "standardize is false"


class FitError(ScalewrightError):
    """A method cannot be fitted to these values; the plan adds the column's name."""


class ParamError(ScalewrightError):
    """A saved parameter breaks the method's rules; the project loader adds the path.

    ``name`` is the parameter at fault; ``about_range`` marks an error about the fitted
    range (the saved min/max) rather than about a parameter.
    """

    def __init__(self, name: str, message: str, *, about_range: bool = False) -> None:
        super().__init__(message)
        self.name = name
        self.about_range = about_range


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


@dataclass(frozen=True)
class ValueSummary:
    """What a fit needs of a column's values when they are not all at hand (a file larger
    than memory, a table in a data platform): aggregates computed where the data lives.

    ``n``, ``min`` and ``max`` (finite values only) are always there; the rest only when
    the method's ``summary_needs`` asks for them.
    """

    n: int
    min: float
    max: float
    mean: float | None = None  # "moments": two-pass mean ...
    sq_dev: float | None = None  # ... and sum of squared deviations, in units of dev_scale
    dev_scale: float = 1.0
    quartiles: tuple[float, float, float] | None = None  # "quartiles": q1, median, q3 (type 7)
    lam: float | None = None  # "lambda": the power methods' maximum-likelihood lambda
    lam_constrained: bool = False
    t_mean: float | None = None  # "lambda" and standardized: moments of the transformed values
    t_sq_dev: float | None = None


def format_number(value: float, digits: int = 10) -> str:
    """A parameter for people: ``digits`` significant digits (``number_text``: never a
    negative zero), yes/no for switches."""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    return number_text(value, f".{digits}g")


class Method:
    """Base class: subclasses set the class attributes and override fit/forward/inverse."""

    id: str = ""
    name: str = ""
    summary: str = ""  # one sentence: what it does, in plain words
    when_to_use: str = ""  # one sentence: when to choose it
    option_specs: tuple[OptionSpec, ...] = ()
    param_specs: tuple[ParamSpec, ...] = ()
    inverse_formula: str = ""  # how to reverse by hand, in terms of the parameter names

    #: A straight line y = a*x + b: scaled summary figures follow from the original ones.
    linear: bool = False
    #: The fit sorts or searches, or its scaled figures need a pass over every value: the
    #: window fits large columns in the background.
    slow_fit: bool = False
    #: True when ``fit`` may be given NaN among the values and leaves them out itself
    #: (the plan then need not copy the finite values out first).
    fit_ignores_nan: bool = False
    #: True when ``forward`` and ``inverse`` already keep NaN as NaN and pass infinities
    #: through unchanged (the straight lines with a positive scale), so that the whole
    #: array can be mapped in one go without masking.
    passes_nonfinite: bool = False

    # ------------------------------------------------------------------ options

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

    def options_example(self) -> str:
        """The options as the command line takes them, e.g. ``minmax:low=0,high=1``."""
        if not self.option_specs:
            return ""
        parts = []
        for spec in self.option_specs:
            value = spec.default
            if isinstance(value, bool):
                value = "yes" if value else "no"
            elif isinstance(value, float):
                value = format_number(value)
            parts.append(f"{spec.name}={value}")
        return f"{self.id}:{','.join(parts)}"

    # ------------------------------------------------------------------ parameters

    def params_present(self, params: Mapping[str, Any]) -> tuple[ParamSpec, ...]:
        """The parameter specs stored for these parameters (some depend on others)."""
        return tuple(s for s in self.param_specs if s.present is None or s.present(params))

    def param_words(
        self, params: Mapping[str, Any], *, digits: int = 10, brief: bool = False
    ) -> list[str]:
        """The fitted parameters as phrases a person reads: 'mean 75.5', 'sample sd (...)'.

        The one way parameters become words: the window, the command line's table, the
        dialogs and the report all call it.
        """
        words = []
        for spec in self.params_present(params):
            if spec.name not in params or (brief and not spec.brief):
                continue
            value = params[spec.name]
            if spec.says is not None:
                words.append(spec.says(value))
            else:
                text = format_number(value, digits) if not isinstance(value, str) else value
                words.append(f"{spec.label} {text}")
        return words

    def describe_params(
        self, params: Mapping[str, Any], *, digits: int = 10, brief: bool = False
    ) -> str:
        """``param_words`` in one line, e.g. 'mean 75.5, sd 36.7, sample sd (...)'."""
        return ", ".join(self.param_words(params, digits=digits, brief=brief))

    def check_saved(
        self, params: Mapping[str, Any], options: Mapping[str, Any], lo: float, hi: float
    ) -> None:
        """Relations saved parameters must satisfy with the options and the fitted range
        [lo, hi]: catches impossible or edited values. Raises ParamError."""

    # ------------------------------------------------------------------ mapping

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

    #: What ``fit_summary`` needs besides n, min and max: "moments", "quartiles", "lambda".
    summary_needs: frozenset[str] = frozenset()

    def fit_summary(self, summary: ValueSummary, options: dict[str, Any]) -> FitResult:
        """``fit`` from aggregates instead of the values, with the very same result.

        By default the fit depends only on the smallest and largest value (min-max,
        decimal scaling, max-abs, the log shift), so it is ``fit`` on those two.
        """
        result = self.fit(np.array([summary.min, summary.max]), options)
        result.data_range = (summary.min, summary.max)
        return result

    # SQL (sqlglot expressions; see engine.sql_terms and the platform package). Each takes
    # the expression of a finite value and returns that of its mapped value; the caller
    # passes NULL and infinities through and turns a non-finite result into NULL.
    def sql_forward(self, x, params: Mapping[str, Any]):
        """The scaled value of the SQL expression ``x``, with ``params`` as exact literals."""
        raise NotImplementedError

    def sql_inverse(self, y, params: Mapping[str, Any]):
        """The original value of the SQL expression ``y`` (a scaled value)."""
        raise NotImplementedError

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


@dataclass(frozen=True)
class Steps:
    """A straight line as the four steps it is computed in: ``((x - subtract) / divide)
    * multiply + add``. Steps equal to 0 (subtract, add) or 1 (divide, multiply) are
    skipped, so each method keeps the exact rounding of its published formula. A divisor of
    0 means every value becomes ``add`` (a constant column)."""

    subtract: float = 0.0
    divide: float = 1.0
    multiply: float = 1.0
    add: float = 0.0


class LinearMethod(Method):
    """A straight-line method: min-max, z-score, decimal scaling, robust, max-abs.

    Each says only how its parameters make the four ``Steps``; mapping forward and back,
    for arrays and (elsewhere) for SQL, is done once, here.
    """

    linear = True
    passes_nonfinite = True

    def steps(self, params: Mapping[str, Any]) -> Steps:
        raise NotImplementedError

    def forward(self, x, params, out=None):
        s = self.steps(params)
        x, out = _begin(x, out)
        if s.divide == 0:
            return _keep_nonfinite(x, s.add, out)
        ops = [(np.subtract, s.subtract, 0.0), (np.divide, s.divide, 1.0)]
        ops += [(np.multiply, s.multiply, 1.0), (np.add, s.add, 0.0)]
        return _in_steps(x, out, ops)

    def inverse(self, y, params, out=None):
        s = self.steps(params)
        y, out = _begin(y, out)
        # A divisor of 0 (a constant column) turns every value back to ``subtract``.
        ops = [(np.subtract, s.add, 0.0), (np.divide, s.multiply, 1.0)]
        ops += [(np.multiply, s.divide, 1.0), (np.add, s.subtract, 0.0)]
        return _in_steps(y, out, ops)

    def sql_forward(self, x, params):
        from . import sql_terms as S

        s = self.steps(params)
        if s.divide == 0:
            return S.num(s.add)
        out = S.sub(x, S.num(s.subtract)) if s.subtract != 0.0 else x
        if s.divide != 1.0:
            out = S.div(out, S.num(s.divide))
        if s.multiply != 1.0:
            out = S.mul(out, S.num(s.multiply))
        if s.add != 0.0:
            out = S.add(out, S.num(s.add))
        return out

    def sql_inverse(self, y, params):
        from . import sql_terms as S

        s = self.steps(params)
        out = S.sub(y, S.num(s.add)) if s.add != 0.0 else y
        if s.multiply != 1.0:
            out = S.div(out, S.num(s.multiply))
        if s.divide != 1.0:
            out = S.mul(out, S.num(s.divide))
        if s.subtract != 0.0:
            out = S.add(out, S.num(s.subtract))
        return out


def _in_steps(x: np.ndarray, out: np.ndarray, ops) -> np.ndarray:
    """Apply ``(ufunc, constant, identity)`` steps in order, skipping a step whose constant
    is its identity; the first step reads ``x``, the rest work in place (one pass each)."""
    source = x
    for ufunc, constant, identity in ops:
        if constant == identity:
            continue
        ufunc(source, constant, out=out)
        source = out
    if source is x:
        np.copyto(out, x)
    return out


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


def finite_range(x: np.ndarray) -> tuple[float, float]:
    """min and max, NaN left out (np.fmin/np.fmax skip NaN without copying)."""
    return float(np.fmin.reduce(x)), float(np.fmax.reduce(x))


def largest_size(x: np.ndarray) -> tuple[float, tuple[float, float]]:
    """max |x| with NaN left out, and the (min, max) it came from."""
    lo, hi = finite_range(x)
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


def near(a: float, lo: float, hi: float) -> bool:
    """``a`` lies in [lo, hi], allowing for the rounding of a mean."""
    slack = 1e-9 * max(abs(lo), abs(hi), hi - lo, 1e-300)
    return lo - slack <= a <= hi + slack
