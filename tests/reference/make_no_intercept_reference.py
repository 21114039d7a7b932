"""Reference fixture generator for sheetfit's tests of models without an
intercept (tests/no_intercept.rs).

What it produces
----------------
tests/fixtures/no_intercept/expected.json, three cases fitted with
statsmodels' formula interface, so that the formula engine (patsy), not this
script, decides how the factors are coded without an intercept: the first
factor gets an indicator for every level, later factors and interactions keep
treatment coding.

* factors -- tests/fixtures/categorical/data.csv (invented, 30 rows),
  revenue ~ 0 + floor_area + staff_hours + C(region) + C(format), baselines
  North and Garden shop.
* interaction -- the same data,
  revenue ~ 0 + floor_area + C(region) + C(region):floor_area.
* seasons -- tests/fixtures/forecast/monthly.csv (statsmodels' El Nino
  series, as make_forecast_reference.py writes it),
  y ~ 0 + trend + C(month), with the 12 months after the data forecast by
  get_prediction (estimate, interval of the mean, prediction interval).

Each case holds the job text the Rust test runs, the coefficients (estimate,
standard error, t, p, 95 % interval), n, the degrees of freedom, R², F and
its p-value and sigma (about zero, as a fit without a constant measures
them), and for the seasons case the forecast rows.

Why
---
The expected values come from an independent, outside implementation, so
that sheetfit's Rust tests can check its coding and numbers against the
standard one. The JSON is committed; the Rust tests only read it and need no
Python. This script is kept so the fixture can be audited and regenerated.

How to rerun
------------
From the project root:

    pip install statsmodels==0.15.0
    python3 tests/reference/make_no_intercept_reference.py
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
import statsmodels
import statsmodels.formula.api as smf

SCRIPT = "tests/reference/make_no_intercept_reference.py"
OUT = os.path.join("tests", "fixtures", "no_intercept", "expected.json")
MONTHS = "Jan Feb Mar Apr May Jun Jul Aug Sep Oct Nov Dec".split()


def f(x):
    x = float(x)
    assert math.isfinite(x), x
    return x


def whole(x):
    x = float(x)
    assert x == round(x), x
    return int(round(x))


def sheetfit_name(raw):
    """The library's term label in sheetfit's naming: `column[level]`,
    `column[level]:other` and `season[Feb]`."""
    parts = []
    for part in raw.split(":"):
        m = re.fullmatch(r'C\((\w+)(?:, Treatment\("[^"]*"\))?\)\[(?:T\.)?(.+)\]', part)
        if m:
            column, level = m.group(1), m.group(2)
            parts.append(f"season[{level}]" if column == "month" else f"{column}[{level}]")
        else:
            parts.append(part)
    return ":".join(parts)


def coding(raw):
    """'every level' for a full-rank indicator, 'contrast' for a treatment
    contrast, as the formula engine labels them."""
    return "contrast" if "[T." in raw else "every level"


def fitted(df, formula):
    fit = smf.ols(formula, data=df).fit()
    assert "Intercept" not in fit.params.index, "the formula has no intercept"
    ci = fit.conf_int(0.05)
    coefficients = [
        {
            "term": sheetfit_name(name),
            "coding": coding(name) if "[" in name else "numeric",
            "estimate": f(fit.params[name]),
            "std_error": f(fit.bse[name]),
            "t_stat": f(fit.tvalues[name]),
            "p_value": f(fit.pvalues[name]),
            "ci_lower": f(ci.loc[name, 0]),
            "ci_upper": f(ci.loc[name, 1]),
        }
        for name in fit.params.index
    ]
    return fit, {
        "formula": formula,
        "n": whole(fit.nobs),
        "df_model": whole(fit.df_model),
        "df_resid": whole(fit.df_resid),
        "coefficients": coefficients,
        "fit": {
            "r_squared": f(fit.rsquared),
            "adj_r_squared": f(fit.rsquared_adj),
            "sigma": f(math.sqrt(fit.scale)),
            "f_stat": f(fit.fvalue),
            "f_p_value": f(fit.f_pvalue),
        },
    }


def job(name, body):
    return (
        f'title = "No intercept: {name}"\n[input]\nworkbook = "data.csv"\n'
        f'[output]\nworkbook = "report.xlsx"\n[[model]]\nname = "{name}"\n'
        f"intercept = false\n{body}"
    )


def factor_cases():
    df = pd.read_csv(os.path.join("tests", "fixtures", "categorical", "data.csv"))
    cases = {}
    _, cases["factors"] = fitted(
        df,
        'revenue ~ 0 + floor_area + staff_hours + C(region, Treatment("North"))'
        ' + C(format, Treatment("Garden shop"))',
    )
    cases["factors"]["job"] = job(
        "factors",
        'response = "revenue"\nnumeric = ["floor_area", "staff_hours"]\n'
        'categorical = { region = "North", format = "Garden shop" }\n',
    )
    _, cases["interaction"] = fitted(
        df,
        'revenue ~ 0 + floor_area + C(region, Treatment("North"))'
        ' + C(region, Treatment("North")):floor_area',
    )
    cases["interaction"]["job"] = job(
        "interaction",
        'response = "revenue"\nnumeric = ["floor_area"]\n'
        'categorical = { region = "North" }\n'
        'interactions = [["region", "floor_area"]]\n',
    )
    return cases


def seasons_case():
    df = pd.read_csv(os.path.join("tests", "fixtures", "forecast", "monthly.csv"))
    stamp = pd.to_datetime(df["date"])
    ordinal = stamp.dt.year * 12 + stamp.dt.month - 1
    first = int(ordinal.min())
    df["trend"] = (ordinal - first + 1).astype(float)
    df["month"] = pd.Categorical(
        [MONTHS[m - 1] for m in stamp.dt.month], categories=MONTHS
    )
    fit, case = fitted(df, "y ~ 0 + trend + C(month)")
    last = int(ordinal.max())
    ahead = range(last + 1, last + 13)
    new = pd.DataFrame(
        {
            "trend": [float(o - first + 1) for o in ahead],
            "month": pd.Categorical([MONTHS[o % 12] for o in ahead], categories=MONTHS),
        }
    )
    frame = fit.get_prediction(new).summary_frame(alpha=0.05)
    case["forecast"] = [
        {
            "period": f"{o // 12}-{o % 12 + 1:02d}",
            "index": o - first + 1,
            "estimate": f(row["mean"]),
            "mean_lower": f(row["mean_ci_lower"]),
            "mean_upper": f(row["mean_ci_upper"]),
            "pred_lower": f(row["obs_ci_lower"]),
            "pred_upper": f(row["obs_ci_upper"]),
        }
        for o, (_, row) in zip(ahead, frame.iterrows())
    ]
    case["job"] = job(
        "seasons",
        'response = "y"\ntrend = "date"\n'
        'season = { column = "date", by = "month", baseline = "Jan" }\n'
        "[model.forecast]\nhorizon = 12\n",
    )
    return case


def main():
    cases = factor_cases()
    cases["seasons"] = seasons_case()
    out = {
        "source": (
            f"statsmodels {statsmodels.__version__} formula OLS and get_prediction "
            f"(patsy {patsy.__version__}, numpy {np.__version__}, pandas {pd.__version__}, "
            f"scipy {scipy.__version__}), Python {sys.version.split()[0]}"
        ),
        "script": SCRIPT,
        "cases": cases,
    }
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
