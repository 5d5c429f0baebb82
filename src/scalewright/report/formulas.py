"""The formula to reverse a column's scaling, with its fitted numbers in place.

Written as a person would type it into a calculator or a spreadsheet: ``^`` for a power,
``exp()`` for e to a power, full-precision numbers (Python's ``repr``, which reads back bit
for bit) and negative numbers in parentheses. Straight-line methods are written from the
method's own four steps (``LinearMethod.steps``), so a new straight-line method needs
nothing here.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..engine import get_method
from ..engine.method_base import LinearMethod, Steps
from ..engine.number_text import number_text


def _num(value: float) -> str:
    """A number as a person would type it in a formula; negatives in parentheses."""
    text = number_text(float(value), "r") if not isinstance(value, int) else str(value)
    if text.endswith(".0"):
        text = text[:-2]
    return f"({text})" if text.startswith("-") else text


def _straight_line(steps: Steps) -> str:
    """``x`` from ``y`` for ``y = ((x - subtract) / divide) * multiply + add``, skipping the
    steps that do nothing, as the engine's inverse does."""
    if steps.divide == 0:  # a constant column: every value became ``add``
        return f"x = {_num(steps.subtract)}"
    text = "y"
    if steps.add != 0.0:
        text = f"(y - {_num(steps.add)})"
    if steps.multiply != 1.0:
        text = f"{text} / {_num(steps.multiply)}"
    if steps.divide != 1.0:
        text = f"{text} * {_num(steps.divide)}"
    if steps.subtract != 0.0:
        text = f"{text} + {_num(steps.subtract)}"
    if text.startswith("(y - ") and text.endswith(")"):
        text = text[1:-1]
    return f"x = {text}"


def reverse_formula(method_id: str, params: Mapping[str, Any]) -> str:
    """The formula to turn a scaled value y back into x, with the fitted numbers in place."""
    method = get_method(method_id)
    p = params
    if isinstance(method, LinearMethod):
        return _straight_line(method.steps(p))
    if method_id == "log":
        power = "exp(y)" if p["base"] == "e" else f"{p['base']}^y"
        return f"x = {power} - {_num(p['shift'])}" if p["shift"] else f"x = {power}"
    if method_id in ("boxcox", "yeojohnson"):
        lam = float(p["lambda"])
        # Standardized: first undo the standardizing (y'), then the power transform.
        first, y = "", "y"
        if p.get("standardize"):
            first, y = f"y' = y * {_num(p['sd'])} + {_num(p['mean'])}; ", "y'"
        if method_id == "boxcox":
            if lam == 0.0:
                return f"{first}x = exp({y})"
            return f"{first}x = ({_num(lam)} * {y} + 1)^(1 / {_num(lam)})"
        up = f"exp({y}) - 1" if lam == 0.0 else f"({_num(lam)} * {y} + 1)^(1 / {_num(lam)}) - 1"
        rest = 2.0 - lam
        down = (
            f"1 - exp(-{y})" if rest == 0.0 else f"1 - (1 - {_num(rest)} * {y})^(1 / {_num(rest)})"
        )
        return f"{first}where {y} >= 0: x = {up}; where {y} < 0: x = {down}"
    if method_id == "quantile":
        n = len(p["quantiles"])
        rank = "u = y" if p["shape"] == "uniform" else "u = the standard normal probability of y"
        return (
            f"{rank}; then x = quantile[i] + (u * {n - 1} - i) * (quantile[i+1] - quantile[i]) "
            f"with i = the whole part of u * {n - 1}, using the {n} fitted quantiles listed below "
            "(quantile[0] first)"
        )
    return "x = y"
