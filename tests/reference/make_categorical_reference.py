"""Reference fixture generator for sheetfit's categorical-predictor tests.

What it produces
----------------
* tests/fixtures/categorical/data.csv -- a small invented dataset (30 rows)
  with a numeric response, two numeric predictors and two text predictors:
  revenue, floor_area, staff_hours, region, format.
* tests/fixtures/categorical/expected.json -- the ordinary least squares fit
  of  revenue ~ floor_area + staff_hours + region + format  using baseline
  (treatment) coding with "North" and "Garden shop" as the baseline levels:
  coefficients with standard errors, t statistics, p-values and 95%
  confidence intervals, overall fit statistics, sequential and
  each-term-last ANOVA tables, and per-row residual diagnostics.

Why
---
The expected values come from an independent, outside implementation
(statsmodels) so that sheetfit's Rust test suite can check its own numbers
against them.  The JSON and CSV are committed; the Rust tests only read them
and need no Python at all.  This script is kept so the fixtures can be
audited and regenerated.

How to rerun
------------
From the project root:

    pip install statsmodels==0.15.0
    python3 tests/reference/make_categorical_reference.py

The data are generated from a fixed seed, so rerunning with the same library
versions reproduces the same files.  All names and values are invented.
"""

import json
import math
import os
import re
import sys

import numpy as np
import pandas as pd
import patsy
import scipy
import scipy.stats
import statsmodels
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm
from statsmodels.stats.outliers_influence import OLSInfluence

SEED = 20261202
N_ROWS = 30
SCRIPT = "tests/reference/make_categorical_reference.py"
OUT_DIR = os.path.join("tests", "fixtures", "categorical")
CSV_PATH = os.path.join(OUT_DIR, "data.csv")
JSON_PATH = os.path.join(OUT_DIR, "expected.json")

REGIONS = ["North", "South", "East", "West"]
REGION_EFFECT = {"North": 0.0, "South": 40.0, "East": -25.0, "West": 15.0}
FORMATS = ["Garden shop", "Retail park"]
FORMAT_EFFECT = {"Garden shop": 0.0, "Retail park": 60.0}

REGION_BASE = "North"
FORMAT_BASE = "Garden shop"
FORMULA = (
    'revenue ~ floor_area + staff_hours'
    ' + C(region, Treatment("North"))'
    ' + C(format, Treatment("Garden shop"))'
)
COLUMNS = ["revenue", "floor_area", "staff_hours", "region", "format"]


def make_data(rng):
    """Invent the dataset; values are rounded before anything is fitted."""
    floor_area = np.round(rng.uniform(400.0, 1600.0, N_ROWS), 1)
    staff_hours = np.round(rng.uniform(200.0, 900.0, N_ROWS), 1)

    # Every region appears at least 4 times: 4 of each, the rest random.
    region = np.array(
        REGIONS * 4 + list(rng.choice(REGIONS, N_ROWS - 4 * len(REGIONS)))
    )
    rng.shuffle(region)
    # Both formats appear at least 6 times.
    fmt = np.array(FORMATS * 6 + list(rng.choice(FORMATS, N_ROWS - 12)))
    rng.shuffle(fmt)

    noise = rng.normal(0.0, 30.0, N_ROWS)
    revenue = (
        50.0
        + 0.8 * floor_area
        + 0.3 * staff_hours
        + np.array([REGION_EFFECT[r] for r in region])
        + np.array([FORMAT_EFFECT[f] for f in fmt])
        + noise
    )
    revenue = np.round(revenue, 2)

    return pd.DataFrame(
        {
            "revenue": [float(v) for v in revenue],
            "floor_area": [float(v) for v in floor_area],
            "staff_hours": [float(v) for v in staff_hours],
            "region": [str(v) for v in region],
            "format": [str(v) for v in fmt],
        },
        columns=COLUMNS,
    )


def write_csv(df, path):
    """Write floats with repr so the file round-trips to the same doubles."""
    with open(path, "w", newline="\n", encoding="utf-8") as fh:
        fh.write(",".join(COLUMNS) + "\n")
        for row in df.itertuples(index=False):
            cells = []
            for value in row:
                if isinstance(value, float):
                    cells.append(repr(value))
                else:
                    assert "," not in value and '"' not in value
                    cells.append(value)
            fh.write(",".join(cells) + "\n")


def term_name(raw):
    """Map the library's term labels to sheetfit's `column[level]` form."""
    if raw == "Intercept":
        return "Intercept"
    m = re.fullmatch(r'C\((\w+), Treatment\("[^"]*"\)\)(?:\[T\.(.+)\])?', raw)
    if m:
        column, level = m.group(1), m.group(2)
        return column if level is None else f"{column}[{level}]"
    return raw


def f(x):
    """Plain Python float (full precision through json)."""
    x = float(x)
    assert math.isfinite(x), x
    return x


def whole(x):
    """A degrees-of-freedom value as a JSON integer (it must be whole)."""
    x = float(x)
    assert x == round(x), x
    return int(round(x))


def anova_rows(table, order):
    rows_by_name = {term_name(idx): row for idx, row in table.iterrows()}
    out = []
    for name in order:
        row = rows_by_name[name]
        out.append(
            {
                "term": name,
                "df": whole(row["df"]),
                "sum_sq": f(row["sum_sq"]),
                "mean_sq": f(row["sum_sq"] / row["df"]),
                "f_stat": f(row["F"]),
                "p_value": f(row["PR(>F)"]),
            }
        )
    res = rows_by_name["Residual"]
    out.append(
        {
            "term": "Residual",
            "df": whole(res["df"]),
            "sum_sq": f(res["sum_sq"]),
            "mean_sq": f(res["sum_sq"] / res["df"]),
        }
    )
    return out


def sequential_rows(df, order, full):
    """Sequential ANOVA with the terms added in `order` (the job's order).

    anova_lm(fit, typ=1) follows the formula engine's own term order, which
    puts categorical terms before numeric ones; comparing the chain of nested
    fits 1, +floor_area, +staff_hours, +region, +format instead tests each
    term given the ones before it in the order the tool uses. F is taken
    against the largest model's residual mean square, as anova_lm does for a
    chain of models.
    """
    rhs = {
        "floor_area": "floor_area",
        "staff_hours": "staff_hours",
        "region": 'C(region, Treatment("North"))',
        "format": 'C(format, Treatment("Garden shop"))',
    }
    formulas = ["revenue ~ 1"]
    for name in order:
        formulas.append(formulas[-1] + " + " + rhs[name])
    fits = [smf.ols(fml, data=df).fit() for fml in formulas]
    assert abs(fits[-1].ssr - full.ssr) <= 1e-9 * full.ssr
    table = anova_lm(*fits)
    out = []
    for name, (_, row) in zip(order, list(table.iterrows())[1:]):
        out.append(
            {
                "term": name,
                "df": whole(row["df_diff"]),
                "sum_sq": f(row["ss_diff"]),
                "mean_sq": f(row["ss_diff"] / row["df_diff"]),
                "f_stat": f(row["F"]),
                # anova_lm's Pr(>F) for a chain of models uses each
                # smaller pair's residual df; the sequential test uses the
                # full model's, so the tail is taken here with scipy.
                "p_value": f(scipy.stats.f.sf(row["F"], row["df_diff"], full.df_resid)),
            }
        )
    out.append(
        {
            "term": "Residual",
            "df": whole(full.df_resid),
            "sum_sq": f(full.ssr),
            "mean_sq": f(full.ssr / full.df_resid),
        }
    )
    return out


def main():
    rng = np.random.default_rng(SEED)
    df = make_data(rng)

    os.makedirs(OUT_DIR, exist_ok=True)
    write_csv(df, CSV_PATH)

    # Fit exactly what the CSV holds: read it back and check it is identical.
    back = pd.read_csv(CSV_PATH)
    for col in ["revenue", "floor_area", "staff_hours"]:
        assert [float(v) for v in back[col]] == list(df[col]), col
    for col in ["region", "format"]:
        assert [str(v) for v in back[col]] == list(df[col]), col
    counts = df["region"].value_counts()
    assert all(counts[r] >= 4 for r in REGIONS), counts

    fit = smf.ols(FORMULA, data=df).fit()

    wanted = [
        "Intercept",
        "floor_area",
        "staff_hours",
        "region[East]",
        "region[South]",
        "region[West]",
        "format[Retail park]",
    ]
    raw_names = list(fit.params.index)
    by_name = {term_name(r): r for r in raw_names}
    assert sorted(by_name) == sorted(wanted), raw_names

    ci = fit.conf_int(0.05)
    coefficients = []
    for name in wanted:
        raw = by_name[name]
        coefficients.append(
            {
                "term": name,
                "estimate": f(fit.params[raw]),
                "std_error": f(fit.bse[raw]),
                "t_stat": f(fit.tvalues[raw]),
                "p_value": f(fit.pvalues[raw]),
                "ci_lower": f(ci.loc[raw, 0]),
                "ci_upper": f(ci.loc[raw, 1]),
            }
        )

    n = int(fit.nobs)
    k = len(fit.params) + 1  # coefficients plus the error variance
    llf = f(fit.llf)
    fit_stats = {
        "r_squared": f(fit.rsquared),
        "adj_r_squared": f(fit.rsquared_adj),
        "sigma": f(math.sqrt(fit.scale)),
        "f_stat": f(fit.fvalue),
        "f_p_value": f(fit.f_pvalue),
        "log_likelihood": llf,
        "aic": -2.0 * llf + 2.0 * k,
        "bic": -2.0 * llf + k * math.log(n),
        "aic_bic_convention": (
            "aic = -2*log_likelihood + 2*k and bic = -2*log_likelihood + "
            "k*ln(n), where k = number of coefficients + 1 (the +1 counts the "
            "error variance); this is statsmodels' own aic/bic with one extra "
            "parameter, whose values are given as statsmodels_aic and "
            "statsmodels_bic"
        ),
        "statsmodels_aic": f(fit.aic),
        "statsmodels_bic": f(fit.bic),
    }

    terms = ["floor_area", "staff_hours", "region", "format"]
    anova1 = sequential_rows(df, terms, fit)
    anova2 = anova_rows(anova_lm(fit, typ=2), terms)

    infl = OLSInfluence(fit)
    stud = np.asarray(infl.resid_studentized_internal)
    hat = np.asarray(infl.hat_matrix_diag)
    cooks = np.asarray(infl.cooks_distance[0])
    fitted = np.asarray(fit.fittedvalues)
    resid = np.asarray(fit.resid)
    residuals = []
    for i in range(n):
        residuals.append(
            {
                "row": i + 1,
                "actual": f(df["revenue"].iloc[i]),
                "fitted": f(fitted[i]),
                "residual": f(resid[i]),
                "standardized_residual": f(stud[i]),
                "leverage": f(hat[i]),
                "cooks_distance": f(cooks[i]),
            }
        )

    py = ".".join(str(p) for p in sys.version_info[:3])
    expected = {
        "source": (
            f"statsmodels {statsmodels.__version__} OLS "
            f"(numpy {np.__version__}, pandas {pd.__version__}, "
            f"scipy {scipy.__version__}, patsy {patsy.__version__}), "
            f"Python {py}"
        ),
        "script": SCRIPT,
        "model": {
            "response": "revenue",
            "numeric": ["floor_area", "staff_hours"],
            "categorical": {"region": REGION_BASE, "format": FORMAT_BASE},
        },
        "n": n,
        "df_model": whole(fit.df_model),
        "df_resid": whole(fit.df_resid),
        "coefficients": coefficients,
        "fit": fit_stats,
        "anova_sequential": anova1,
        "anova_each_term_last": anova2,
        "residuals": residuals,
    }

    with open(JSON_PATH, "w", encoding="utf-8") as fh:
        json.dump(expected, fh, indent=2, allow_nan=False)
        fh.write("\n")

    est = ", ".join(f"{c['term']}={c['estimate']:.4g}" for c in coefficients)
    print(
        f"wrote {CSV_PATH} and {JSON_PATH}: n={n}, "
        f"R^2={fit.rsquared:.4f}, {est}"
    )


if __name__ == "__main__":
    main()
