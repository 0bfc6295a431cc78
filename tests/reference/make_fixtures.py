#!/usr/bin/env python3
"""Reference fixtures for forebear's unit tests, computed by SciPy (a general-purpose library).

Run from the project root:  python3 tests/reference/make_fixtures.py
Writes tests/reference/xi_scipy.json and tests/reference/chi2_scipy.json. The Rust tests read the
committed JSON files; they never run Python.

- xi_scipy.json: scipy.stats.chatterjeexi(x, y, y_continuous=False) statistic and p-value
  (Chatterjee, JASA 2021; tie-corrected variance of Theorem 2.2) on seeded random data. x has no
  ties (SciPy breaks ties in x by argsort order, not at random); y has ties in some cases.
- chi2_scipy.json: upper quantiles of the chi-square distribution, scipy.stats.chi2.ppf.
"""
import json
import pathlib

import numpy as np
import scipy
from scipy import stats

OUT = pathlib.Path(__file__).resolve().parent


def xi_cases():
    rng = np.random.default_rng(20211)
    cases = []
    for n in (20, 100, 1000, 5000):
        for kind in ("independent", "linear", "quadratic", "discrete_y", "binary_y"):
            x = rng.permutation(n).astype(float) + rng.uniform(0, 0.5, n)
            noise = rng.standard_normal(n)
            if kind == "independent":
                y = rng.standard_normal(n)
            elif kind == "linear":
                y = 0.3 * x / n + noise * 0.5
            elif kind == "quadratic":
                y = (x / n - 0.5) ** 2 + 0.05 * noise
            elif kind == "discrete_y":
                y = np.floor(3 * x / n + noise).clip(-2, 5)
            else:
                y = (noise + x / n > 0.8).astype(float)
            y = np.round(y, 6)
            res = stats.chatterjeexi(x, y, y_continuous=False)
            cases.append({
                "name": f"{kind}_n{n}",
                "x": x.round(9).tolist(),
                "y": y.tolist(),
                "statistic": float(res.statistic),
                "pvalue": float(res.pvalue),
            })
    # Recompute on the rounded x actually written, so the fixture is exactly reproducible.
    for case in cases:
        res = stats.chatterjeexi(np.array(case["x"]), np.array(case["y"]), y_continuous=False)
        case["statistic"] = float(res.statistic)
        case["pvalue"] = float(res.pvalue)
    return cases


def main():
    meta = {"scipy": scipy.__version__, "numpy": np.__version__,
            "generator": "tests/reference/make_fixtures.py"}
    (OUT / "xi_scipy.json").write_text(json.dumps({"meta": meta, "cases": xi_cases()}) + "\n")
    quantiles = [{"df": df, "upper": q, "critical": float(stats.chi2.ppf(1 - q, df))}
                 for df in (1, 2, 3, 4, 5, 7, 9, 15) for q in (0.001, 0.01)]
    (OUT / "chi2_scipy.json").write_text(json.dumps({"meta": meta, "quantiles": quantiles}, indent=1) + "\n")


if __name__ == "__main__":
    main()
