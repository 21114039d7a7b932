"""Reference fixture generator for the precision of sheetfit's RESET test
(tests/reset_precision.rs).

What it produces
----------------
tests/fixtures/reset/expected.json: three regressions whose RESET statistic
is hard to compute in double precision, with RESET (Ramsey 1969; the
squared and cubed fitted values added, F on (2, n - p - 2)) computed by
mpmath at 60 significant digits from the data as the doubles the tests
read:

* longley -- statsmodels' `longley` (the Longley 1967 data of NIST's StRD),
  TOTEMP ~ GNPDEFL + GNP + UNEMP + ARMED + POP + YEAR: a design whose
  condition number is near 10^8.
* offset_driver -- invented: a driver near one million that moves by a few
  units (x = 1,000,000 + t + noise, t = 1..40), y ~ x; the intercept and x
  are nearly parallel.
* large_level -- invented: a well-conditioned driver t = 0..39 and a
  response near one million with a slight curve, y ~ t; the fitted values
  are near 10^6 and vary by about 150, so their squares and cubes are
  nearly parallel to the intercept unless they are centred.

Each case holds the data (y and the predictor columns), the F statistic,
its degrees of freedom and p-value (mpmath's regularized incomplete beta),
and the two residual sums of squares.

Why
---
A double-precision solve of the augmented regression loses digits on such
designs; the reference shows what the exact answer is. The JSON is
committed; the Rust tests only read it. This script is kept so the fixture
can be audited and regenerated.

How to rerun
------------
From the project root:

    pip install mpmath==1.3.0 statsmodels==0.15.0
    python3 tests/reference/make_reset_reference.py
"""

import json
import os
import sys

import mpmath
import numpy as np
import statsmodels
import statsmodels.api as sm
from mpmath import mp, mpf

mp.dps = 60
SEED = 20261205
SCRIPT = "tests/reference/make_reset_reference.py"
OUT = os.path.join("tests", "fixtures", "reset", "expected.json")


def least_squares(columns, y):
    """Residual sum of squares and fitted values of y on the columns (an
    intercept first), by the normal equations at 60 digits: the squared
    condition number (at most about 10^20 here) leaves 40 digits."""
    n, p = len(y), len(columns)
    X = mpmath.matrix(n, p)
    for j, col in enumerate(columns):
        for i, v in enumerate(col):
            X[i, j] = v
    Y = mpmath.matrix([[v] for v in y])
    b = mpmath.lu_solve(X.T * X, X.T * Y)
    fitted = X * b
    sse = sum((Y[i] - fitted[i]) ** 2 for i in range(n))
    return sse, [fitted[i] for i in range(n)]


def reset(predictors, y):
    n = len(y)
    ones = [mpf(1)] * n
    x = [ones] + [[mpf(v) for v in col] for col in predictors]
    yy = [mpf(v) for v in y]
    sse0, fitted = least_squares(x, yy)
    powers = [[f**2 for f in fitted], [f**3 for f in fitted]]
    sse1, _ = least_squares(x + powers, yy)
    df1, df2 = 2, n - len(x) - 2
    f = ((sse0 - sse1) / df1) / (sse1 / df2)
    # P(F > f) = I_{df2 / (df2 + df1 f)}(df2 / 2, df1 / 2).
    p = mpmath.betainc(mpf(df2) / 2, mpf(df1) / 2, 0, df2 / (df2 + df1 * f), regularized=True)
    return {
        "statistic": float(f),
        "df1": df1,
        "df2": df2,
        "p_value": float(p),
        "sse_without": float(sse0),
        "sse_with": float(sse1),
    }


def case(names, columns, y, response, description):
    return {
        "description": description,
        "response": response,
        "y": [float(v) for v in y],
        "predictors": {name: [float(v) for v in col] for name, col in zip(names, columns)},
        "reset": reset(columns, y),
    }


def main():
    rng = np.random.default_rng(SEED)
    cases = {}

    longley = sm.datasets.longley.load_pandas().data
    names = ["GNPDEFL", "GNP", "UNEMP", "ARMED", "POP", "YEAR"]
    cases["longley"] = case(
        names,
        [longley[c].to_numpy() for c in names],
        longley["TOTEMP"].to_numpy(),
        "TOTEMP",
        "statsmodels.datasets.longley: TOTEMP ~ GNPDEFL + GNP + UNEMP + ARMED + POP + YEAR",
    )

    t = np.arange(1, 41, dtype=float)
    x = np.round(1_000_000 + t + rng.normal(0, 0.3, t.size), 3)
    y = np.round(50 + 0.8 * (x - 1_000_000) + 0.01 * (x - 1_000_020) ** 2 + rng.normal(0, 0.5, t.size), 3)
    cases["offset_driver"] = case(
        ["x"], [x], y, "y", "invented: x = 1e6 + t + noise, y ~ x with a slight curve"
    )

    t = np.arange(0, 40, dtype=float)
    y = np.round(1_000_000 + 3 * t + 0.02 * t**2 + rng.normal(0, 1.0, t.size), 2)
    cases["large_level"] = case(
        ["t"], [t], y, "y", "invented: y near 1e6 with a slight curve in t = 0..39, y ~ t"
    )

    out = {
        "source": "mpmath %s at %d digits (statsmodels %s for the longley data, numpy %s), Python %s"
        % (mpmath.__version__, mp.dps, statsmodels.__version__, np.__version__, sys.version.split()[0]),
        "script": SCRIPT,
        "cases": cases,
    }
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")
    print("wrote", OUT)
    for name, c in cases.items():
        print(name, c["reset"])


if __name__ == "__main__":
    main()
