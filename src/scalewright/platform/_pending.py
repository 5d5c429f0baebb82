"""TEMPORARY: per-method SQL until engine/methods.py's restructure lands (then moved there)."""

from __future__ import annotations

import math

from . import sqlexpr as S


def _linear(centre, scale):
    def fwd(x, p):
        c, s = centre(p), scale(p)
        if s == 0 or not math.isfinite(s):
            return None
        return S.div(S.sub(x, S.num(c)), S.num(s))

    def inv(y, p):
        c, s = centre(p), scale(p)
        return S.add(S.mul(y, S.num(s)), S.num(c))

    return fwd, inv


def minmax_cs(p):
    span = (p["max"] - p["min"]) / (p["high"] - p["low"])
    return p["min"] - p["low"] * span, span


FORWARD = {}
INVERSE = {}
for mid, (c, s) in {
    "zscore": (lambda p: p["mean"], lambda p: p["sd"]),
    "robust": (lambda p: p["median"], lambda p: p["scale"]),
    "maxabs": (lambda p: 0.0, lambda p: p["maxabs"]),
    "decimal": (lambda p: 0.0, lambda p: 10.0 ** p["j"]),
    "minmax": (lambda p: minmax_cs(p)[0], lambda p: minmax_cs(p)[1]),
}.items():
    FORWARD[mid], INVERSE[mid] = _linear(c, s)


_LN_BASE = {"e": None, "10": math.log(10.0), "2": math.log(2.0)}


def log_forward(x, p):
    shifted = S.add(x, S.num(p["shift"])) if p["shift"] else x
    out = S.ln(shifted)
    if p["base"] != "e":
        out = S.div(out, S.num(_LN_BASE[p["base"]]))
    return S.case((S.gt(shifted.copy(), S.num(0.0)), out))


def log_inverse(y, p):
    if p["base"] == "e":
        out = S.exp_(y)
    else:
        out = S.exp_(S.mul(y, S.num(_LN_BASE[p["base"]])))
    if p["shift"]:
        out = S.sub(out, S.num(p["shift"]))
    return out


def _standardize(t, p):
    if p.get("standardize"):
        return S.div(S.sub(t, S.num(p["mean"])), S.num(p["sd"]))
    return t


def _unstandardize(y, p):
    if p.get("standardize"):
        return S.add(S.mul(y, S.num(p["sd"])), S.num(p["mean"]))
    return y


def boxcox_forward(x, p):
    lam = p["lambda"]
    logs = S.ln(x)
    t = logs if lam == 0 else S.div(S.expm1(S.mul(S.num(lam), logs)), S.num(lam))
    return S.case((S.gt(x.copy(), S.num(0.0)), _standardize(t, p)))


def boxcox_inverse(y, p):
    lam = p["lambda"]
    y = _unstandardize(y, p)
    if lam == 0:
        return S.exp_(y)
    arg = S.mul(S.num(lam), y)
    out = S.exp_(S.div(S.log1p(arg), S.num(lam)))
    return S.case((S.gt(arg.copy(), S.num(-1.0)), out))


def yeojohnson_forward(x, p):
    lam = p["lambda"]
    pos_log = S.log1p(x)
    pos = pos_log if lam == 0 else S.div(S.expm1(S.mul(S.num(lam), pos_log)), S.num(lam))
    neg_log = S.log1p(S.neg(x.copy()))
    if lam == 2:
        neg = S.neg(neg_log)
    else:
        neg = S.neg(S.div(S.expm1(S.mul(S.num(2.0 - lam), neg_log)), S.num(2.0 - lam)))
    t = S.case((S.ge(x.copy(), S.num(0.0)), pos), default=neg)
    return _standardize(t, p)


def yeojohnson_inverse(y, p):
    lam = p["lambda"]
    y = _unstandardize(y, p)
    if lam == 0:
        pos = S.expm1(y)
    else:
        arg = S.mul(S.num(lam), y)
        pos = S.case(
            (S.gt(arg, S.num(-1.0)), S.expm1(S.div(S.log1p(arg.copy()), S.num(lam))))
        )
    if lam == 2:
        neg = S.neg(S.expm1(S.neg(y.copy())))
    else:
        arg = S.mul(S.num(-(2.0 - lam)), y.copy())
        neg = S.case(
            (
                S.gt(arg, S.num(-1.0)),
                S.neg(S.expm1(S.div(S.log1p(arg.copy()), S.num(2.0 - lam)))),
            )
        )
    return S.case((S.ge(y.copy(), S.num(0.0)), pos), default=neg)


FORWARD.update(
    {
        "none": lambda x, p: x,
        "log": log_forward,
        "boxcox": boxcox_forward,
        "yeojohnson": yeojohnson_forward,
    }
)
INVERSE.update(
    {
        "none": lambda y, p: y,
        "log": log_inverse,
        "boxcox": boxcox_inverse,
        "yeojohnson": yeojohnson_inverse,
    }
)
