"""Checks of single JSON fields; a failure is ``Invalid`` with the dotted field path."""

from __future__ import annotations

import datetime as dt
import math
import re
from typing import Any


class Invalid(Exception):
    """A field failed validation: ``path`` is the dotted field name."""

    def __init__(self, path: str, message: str) -> None:
        super().__init__(message)
        self.path = path
        self.message = message


def obj(d: Any, path: str) -> dict[str, Any]:
    if not isinstance(d, dict):
        raise Invalid(path, "must be an object")
    return d


def get(d: dict[str, Any], key: str, path: str) -> Any:
    if key not in d:
        raise Invalid(f"{path}.{key}" if path else key, "is missing")
    return d[key]


def only(d: dict[str, Any], keys: set[str], path: str) -> None:
    unknown = sorted(set(d) - keys)
    if unknown:
        where = f"{path}.{unknown[0]}" if path else unknown[0]
        raise Invalid(where, "is not a field of this format version")


def text(v: Any, path: str, *, nullable: bool = False, nonempty: bool = False) -> str | None:
    if v is None and nullable:
        return None
    if not isinstance(v, str):
        raise Invalid(path, "must be text" + (" or null" if nullable else ""))
    if nonempty and not v.strip():
        raise Invalid(path, "must not be empty")
    return v


def whole(v: Any, path: str, *, minimum: int | None = None, nullable: bool = False) -> int | None:
    if v is None and nullable:
        return None
    if isinstance(v, bool) or not isinstance(v, int):
        raise Invalid(path, "must be a whole number" + (" or null" if nullable else ""))
    if minimum is not None and v < minimum:
        raise Invalid(path, f"must be {minimum} or more, not {v}")
    return v


def number(v: Any, path: str) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float):
        raise Invalid(path, "must be a number")
    try:
        value = float(v)
    except OverflowError:
        raise Invalid(path, "is too large for a number") from None
    if not math.isfinite(value):
        raise Invalid(path, "must be a finite number")
    return value


def numbers(v: Any, path: str) -> list[float]:
    """A non-empty list of finite numbers (a parameter such as fitted quantiles)."""
    if not isinstance(v, list) or not v:
        raise Invalid(path, "must be a non-empty list of numbers")
    return [number(item, f"{path}[{i}]") for i, item in enumerate(v)]


def yes_no(v: Any, path: str) -> bool:
    if not isinstance(v, bool):
        raise Invalid(path, "must be true or false")
    return v


def list_of_text(v: Any, path: str) -> list[str]:
    if not isinstance(v, list):
        raise Invalid(path, "must be a list")
    return [text(item, f"{path}[{i}]") for i, item in enumerate(v)]  # type: ignore[misc]


def timestamp(v: Any, path: str) -> str:
    stamp = text(v, path)
    try:
        dt.datetime.fromisoformat(stamp)  # type: ignore[arg-type]
    except ValueError:
        raise Invalid(path, f"'{stamp}' is not a date and time (ISO 8601)") from None
    return stamp  # type: ignore[return-value]


SHA256 = re.compile(r"[0-9a-f]{64}")
