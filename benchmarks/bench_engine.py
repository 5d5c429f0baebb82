"""Speed of the scaling engine against a plain numpy pass and the reference libraries.

A script, not a test: ``python benchmarks/bench_engine.py [--rows N] [--repeat R]``.

The table: 1,000,000 rows x 20 numeric columns (fixed seed): ten normal columns and ten
lognormal (right-skewed, positive) columns, each with about 1% of its cells missing (NaN).

Every time is the best of ``--repeat`` runs (best-of-N: the least disturbed run), and every
ratio compares two calls measured in this same process on this same data:

* floor: one plain numpy subtract-and-divide pass over the same values as a 2-D array,
  ``(a - c) / s`` with the per-column constants ``c`` and ``s`` computed beforehand. It
  reads every value once and writes a new array once: no real scaling can cost less.
* reference: the matching scikit-learn scaler (``fit_transform`` and
  ``inverse_transform`` on the same 2-D array, missing values included, which
  scikit-learn ignores in fitting as we do); for Box-Cox ``scipy.stats.boxcox`` per column
  on the column's finite values and ``scipy.special.inv_boxcox`` to restore; for
  Yeo-Johnson scikit-learn's PowerTransformer (standardize=False); for the logarithm
  numpy's ``log`` and ``exp`` over the array.
* engine: ``scalewright.engine.fit`` + ``apply`` on the DataFrame (fit+apply), and
  ``restore`` of the scaled DataFrame (restore).

The logarithm, Box-Cox and Yeo-Johnson are measured on the ten positive (lognormal)
columns only, since Box-Cox needs positive values; their floor and reference runs use the
same ten columns. Decimal scaling has no reference library call.
Last, the Box-Cox lambda fit alone on 1,000,000 positive values against
``scipy.stats.boxcox_normmax(method="mle")``.
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable

import numpy as np
import pandas as pd
from scipy import special, stats
from sklearn import preprocessing

from scalewright.engine import ColumnChoice, apply, fit, power, restore

SEED = 20260402


def make_table(rows: int, cols: int = 20) -> pd.DataFrame:
    rng = np.random.default_rng(SEED)
    data = {}
    for i in range(cols):
        if i % 2 == 0:
            x = rng.normal(50.0 + i, 10.0 + i, rows)
            name = f"normal_{i:02d}"
        else:
            x = rng.lognormal(1.0 + 0.1 * i, 0.8, rows)
            name = f"lognormal_{i:02d}"
        x[rng.random(rows) < 0.01] = np.nan
        data[name] = x
    return pd.DataFrame(data)


def best_of(repeat: int, func: Callable[[], object]) -> float:
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


def floor_pass(a: np.ndarray) -> Callable[[], np.ndarray]:
    """The memory floor: one subtract-and-divide pass, constants computed beforehand."""
    c = np.nanmean(a, axis=0)
    s = np.nanstd(a, axis=0)
    return lambda: (a - c) / s


METHOD_IDS = [
    "minmax",
    "zscore",
    "decimal",
    "robust",
    "maxabs",
    "log",
    "boxcox",
    "yeojohnson",
    "quantile",
]
# The references transform without standardizing; so do we here (our default standardizes).
OPTIONS = {"boxcox": {"standardize": "no"}, "yeojohnson": {"standardize": "no"}}
POSITIVE_ONLY = {"log", "boxcox", "yeojohnson"}


SKLEARN = {
    "minmax": preprocessing.MinMaxScaler,
    "zscore": preprocessing.StandardScaler,
    "robust": preprocessing.RobustScaler,
    "maxabs": preprocessing.MaxAbsScaler,
}


def boxcox_per_column(a: np.ndarray) -> list:
    """scipy.stats.boxcox (lambda by maximum likelihood + transform) on each column."""
    out = []
    for j in range(a.shape[1]):
        col = a[:, j]
        out.append(stats.boxcox(col[np.isfinite(col)]))
    return out


def inv_boxcox_per_column(a: np.ndarray, lambdas: list[float]) -> list:
    return [special.inv_boxcox(a[:, j], lam) for j, lam in enumerate(lambdas)]


def reference_calls(method: str, a: np.ndarray):
    """(name, fit+apply call, restore call) of the reference for ``method``, or None."""
    if method in SKLEARN:
        scaler = SKLEARN[method]()
        scaled = scaler.fit_transform(a)
        return (
            f"sklearn {SKLEARN[method].__name__}",
            lambda: SKLEARN[method]().fit_transform(a),
            lambda: scaler.inverse_transform(scaled),
        )
    if method == "boxcox":
        lambdas = [lam for _, lam in boxcox_per_column(a)]
        scaled = np.column_stack([special.boxcox(a[:, j], lam) for j, lam in enumerate(lambdas)])
        return (
            "scipy.stats.boxcox / special.inv_boxcox per column",
            lambda: boxcox_per_column(a),
            lambda: inv_boxcox_per_column(scaled, lambdas),
        )
    if method == "yeojohnson":
        transformer = preprocessing.PowerTransformer(method="yeo-johnson", standardize=False)
        scaled = transformer.fit_transform(a)
        return (
            "sklearn PowerTransformer(yeo-johnson)",
            lambda: preprocessing.PowerTransformer(standardize=False).fit_transform(a),
            lambda: transformer.inverse_transform(scaled),
        )
    if method == "quantile":
        qt = preprocessing.QuantileTransformer(n_quantiles=1000, subsample=None)
        scaled = qt.fit_transform(a)
        return (
            "sklearn QuantileTransformer(1000)",
            lambda: preprocessing.QuantileTransformer(
                n_quantiles=1000, subsample=None
            ).fit_transform(a),
            lambda: qt.inverse_transform(scaled),
        )
    if method == "log":
        logs = np.log(a)
        return ("numpy log / exp", lambda: np.log(a), lambda: np.exp(logs))
    return None


def measure(method: str, data: pd.DataFrame, repeat: int) -> dict:
    a = data.to_numpy()
    floor = best_of(repeat, floor_pass(a))
    choices = {c: ColumnChoice(method, OPTIONS.get(method, {})) for c in data.columns}
    plan = fit(data, choices)
    scaled = apply(data, plan)[0]
    row = {
        "method": method,
        "cols": a.shape[1],
        "floor": floor,
        "fit_apply": best_of(repeat, lambda: apply(data, fit(data, choices))),
        "restore": best_of(repeat, lambda: restore(scaled, plan)),
        "ref": "-",
        "ref_fit_apply": float("nan"),
        "ref_restore": float("nan"),
    }
    ref = reference_calls(method, a)
    if ref is not None:
        slow = method in ("boxcox", "yeojohnson", "quantile")
        row["ref"] = ref[0]
        row["ref_fit_apply"] = best_of(min(repeat, 2) if slow else repeat, ref[1])
        row["ref_restore"] = best_of(repeat, ref[2])
    return row


def main() -> None:
    parser = argparse.ArgumentParser(description=(__doc__ or "").splitlines()[0])
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--methods", default=",".join(METHOD_IDS))
    args = parser.parse_args()

    table = make_table(args.rows)
    positive = table[[c for c in table.columns if c.startswith("lognormal")]]
    print(
        f"table: {args.rows:,} rows x {table.shape[1]} columns, "
        f"{int(table.isna().to_numpy().sum()):,} missing cells; best of {args.repeat} runs"
    )
    head = (
        f"{'method':<11}{'cols':>5}{'fit+apply s':>12}{'/floor':>8}{'/ref':>7}"
        f"{'restore s':>11}{'/floor':>8}{'/ref':>7}  reference"
    )
    print(head)
    print("-" * len(head))
    for method in args.methods.split(","):
        data = positive if method in POSITIVE_ONLY else table
        r = measure(method, data, args.repeat)
        print(
            f"{method:<11}{r['cols']:>5}{r['fit_apply']:>12.3f}{r['fit_apply'] / r['floor']:>8.2f}"
            f"{r['fit_apply'] / r['ref_fit_apply']:>7.2f}{r['restore']:>11.3f}"
            f"{r['restore'] / r['floor']:>8.2f}{r['restore'] / r['ref_restore']:>7.2f}  {r['ref']}"
        )
    x = positive.iloc[:, 0].to_numpy()
    x = x[np.isfinite(x)]
    t_ours = best_of(args.repeat, lambda: power.boxcox_lambda(x))
    t_scipy = best_of(3, lambda: stats.boxcox_normmax(x, method="mle"))
    lam_ours, lam_scipy = power.boxcox_lambda(x), stats.boxcox_normmax(x, method="mle")
    print()
    print(
        f"Box-Cox lambda on {x.size:,} values: engine {t_ours:.3f} s, "
        f"scipy.stats.boxcox_normmax {t_scipy:.3f} s: {t_scipy / t_ours:.1f}x faster "
        f"(lambda {lam_ours:.10f} vs {lam_scipy:.10f})"
    )
    print(
        "/floor: engine time over the plain numpy pass on the same columns; "
        "/ref: engine time over the reference call (below 1 = faster)."
    )


if __name__ == "__main__":
    main()
