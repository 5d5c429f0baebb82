"""Saved parameter sets: their fields and types come from each method's own description
(``Method.param_specs``), their rules from ``Method.check_saved``; nothing here knows a
method by name."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from ..engine import Method, ParamError, ParamSet
from .fields import Invalid, get, number, numbers, obj, only, text, whole, yes_no

_READERS = {"number": number, "numbers": numbers, "int": whole, "bool": yes_no, "text": text}


def param_kinds(method: Method, params: Mapping[str, Any] | None = None) -> dict[str, str]:
    """The parameters ``method`` stores for ``params`` (name -> "number", "numbers",
    "int", "text" or "bool"); parameters that depend on others (a power method's mean and sd when
    standardized) are read from ``params`` first."""
    return {s.name: s.kind for s in method.params_present(params or {})}


def param_set(
    d: Any, path: str, method: Method, options: dict[str, Any], keys: set[str]
) -> ParamSet:
    """A ``{"params", "n", "min", "max"}`` object, every field checked."""
    d = obj(d, path)
    only(d, keys, path)
    n = whole(get(d, "n", path), f"{path}.n", minimum=1)
    lo = number(get(d, "min", path), f"{path}.min")
    hi = number(get(d, "max", path), f"{path}.max")
    if lo > hi:
        raise Invalid(f"{path}.min", f"is larger than max ({lo!r} > {hi!r})")
    raw = obj(get(d, "params", path), f"{path}.params")
    params = _params(raw, f"{path}.params", method, options, lo, hi)
    return ParamSet(params, n, lo, hi)  # type: ignore[arg-type]


def _params(
    raw: dict[str, Any], path: str, method: Method, options: dict[str, Any], lo: float, hi: float
) -> dict[str, Any]:
    # Parameters that decide which others are present (yes/no switches) are read first.
    switches = {
        s.name: yes_no(raw[s.name], f"{path}.{s.name}")
        for s in method.param_specs
        if s.kind == "bool" and s.name in raw
    }
    kinds = param_kinds(method, {**raw, **switches})
    unknown = sorted(set(raw) - set(kinds))
    if unknown:
        absent = {s.name: s.absent_when for s in method.param_specs if s.absent_when}
        hint = f" when {absent[unknown[0]]}" if unknown[0] in absent else ""
        raise Invalid(f"{path}.{unknown[0]}", f"is not a parameter of {method.id}{hint}")
    params: dict[str, Any] = {}
    for key, kind in kinds.items():
        if key not in raw:
            raise Invalid(f"{path}.{key}", f"is missing ({method.id} needs {', '.join(kinds)})")
        params[key] = _READERS[kind](raw[key], f"{path}.{key}")
    try:
        method.check_saved(params, options, lo, hi)
    except ParamError as err:
        if err.about_range:
            raise Invalid(f"{path.removesuffix('.params')}.{err.name}", str(err)) from None
        raise Invalid(f"{path}.{err.name}", str(err)) from None
    return params
