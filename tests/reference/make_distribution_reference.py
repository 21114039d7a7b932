"""Reference fixture generator for sheetfit's distribution-function tests.

What it produces
----------------
tests/fixtures/distributions.json, holding three lists of reference values
for the functions in sheetfit::fit:

* t_quantiles    -- {prob, df, value}: the Student t quantile
                    scipy.stats.t.ppf(prob, df), for prob in 0.9 .. 0.9995
                    and df from 1 to 1e7 (checks fit::t_quantile);
* t_two_sided_p  -- {t, df, value}: the two-sided p-value
                    2 * scipy.stats.t.sf(|t|, df) (checks fit::t_two_sided_p);
* f_sf           -- {f, d1, d2, value}: the upper tail
                    scipy.stats.f.sf(f, d1, d2) (checks fit::f_sf).

Tail values that underflow in the reference library (value <= 1e-300) are
left out, so every entry is a number with its full relative accuracy. The
"source" field records the scipy, numpy and Python versions.

Why
---
Confidence limits, coefficient p-values and the overall F test all rest on
these three functions, so they are checked on their own, against an
independent outside implementation, over a grid that reaches very large
degrees of freedom and tiny tail probabilities. The JSON is committed; the
Rust test (tests/distributions.rs) only reads it and needs no Python. This
script is kept so the fixture can be audited and regenerated.

How to rerun
------------
From the project root:

    python3 tests/reference/make_distribution_reference.py

with scipy 1.17.1 and numpy installed. The grid is fixed, so rerunning with
the same library versions reproduces the same file.
"""

import json
import os
import sys

import numpy as np
import scipy
import scipy.stats

SCRIPT = "tests/reference/make_distribution_reference.py"
JSON_PATH = os.path.join("tests", "fixtures", "distributions.json")

# Smallest value kept: anything at or below this has underflowed (or is
# about to) in the reference library and carries no reliable digits.
FLOOR = 1e-300

T_PROBS = [0.9, 0.95, 0.975, 0.995, 0.9995]
T_QUANTILE_DFS = [1, 2, 3, 5, 10, 30, 100, 1000, 1e4, 1e5, 1e6, 1e7]

T_STATS = [0.5, 1, 2, 5, 10, 40, 100]
T_P_DFS = [1, 5, 10, 30, 100, 1000]

F_STATS = [0.5, 1, 3, 10, 100, 1e4]
F_DFS = [(1, 10), (3, 20), (6, 23), (3, 100), (10, 1000)]


def real(x):
    """A plain Python float (repr round-trips to the same double)."""
    v = float(x)
    assert np.isfinite(v), x
    return v


def t_quantiles():
    out = []
    for prob in T_PROBS:
        for df in T_QUANTILE_DFS:
            value = real(scipy.stats.t.ppf(prob, df))
            out.append({"prob": real(prob), "df": real(df), "value": value})
    return out


def t_two_sided_p():
    out = []
    for t in T_STATS:
        for df in T_P_DFS:
            value = real(2.0 * scipy.stats.t.sf(abs(t), df))
            if value > FLOOR:
                out.append({"t": real(t), "df": real(df), "value": value})
    return out


def f_sf():
    out = []
    for f in F_STATS:
        for d1, d2 in F_DFS:
            value = real(scipy.stats.f.sf(f, d1, d2))
            if value > FLOOR:
                out.append(
                    {"f": real(f), "d1": real(d1), "d2": real(d2), "value": value}
                )
    return out


def main():
    py = ".".join(str(p) for p in sys.version_info[:3])
    fixture = {
        "source": (
            f"scipy {scipy.__version__} (scipy.stats.t.ppf, scipy.stats.t.sf, "
            f"scipy.stats.f.sf), numpy {np.__version__}, Python {py}"
        ),
        "script": SCRIPT,
        "floor": FLOOR,
        "t_quantiles": t_quantiles(),
        "t_two_sided_p": t_two_sided_p(),
        "f_sf": f_sf(),
    }
    os.makedirs(os.path.dirname(JSON_PATH), exist_ok=True)
    with open(JSON_PATH, "w", encoding="utf-8") as fh:
        json.dump(fixture, fh, indent=2, allow_nan=False)
        fh.write("\n")
    print(
        f"wrote {JSON_PATH}: {len(fixture['t_quantiles'])} t quantiles, "
        f"{len(fixture['t_two_sided_p'])} t p-values, "
        f"{len(fixture['f_sf'])} F tails"
    )


if __name__ == "__main__":
    main()
