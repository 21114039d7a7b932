"""Reference fixture generator for sheetfit's period-label tests.

What it produces
----------------
tests/fixtures/periods/ holds three open series from statsmodels' datasets
and the ordinary least squares fits the tests compare with:

* nile.csv -- yearly flow of the Nile at Aswan, 1871-1970 (statsmodels'
  `nile`, from R's datasets): volume ~ trend, trend = 1, 2, ... by year.
* macro.csv -- US quarterly consumption and output, 1959Q1-2009Q3
  (statsmodels' `macrodata`): realcons ~ realgdp + trend + quarter
  indicators (Q1 the baseline).
* elnino.csv -- monthly sea surface temperature, 1950-2010 (statsmodels'
  `elnino`, reshaped to one row a month): temperature ~ trend + month
  indicators (January the baseline).
* co2_weekly.csv -- weekly atmospheric CO2 at Mauna Loa, dated Saturdays,
  1990-01-06 to 2001-12-29 with its missing weeks left out (statsmodels'
  `co2`): co2 ~ trend + month indicators (January the baseline), the month
  taken by pandas from each row's own date (1994-01-01, a Saturday, is in
  January, though its ISO week starts in December), the trend counting
  weeks from the first; and get_prediction for the six Saturdays after the
  data.
* expected.json -- for each: coefficients (estimate, standard error) in the
  order sheetfit reports them (intercept, predictors, trend, seasons).

Why
---
The tests write these series into workbooks and CSV files with period labels
as people type them (a year as a number, "Q3 1959", "Jan-1950", ...) and
check that sheetfit reads the periods right by comparing its coefficients with
these, computed by an outside library. The Rust tests read only the committed
files.

How to rerun
------------
    pip install statsmodels==0.15.0
    python3 tests/reference/make_period_reference.py
"""

import json
import os
import sys

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm
import statsmodels.formula.api as smf

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "fixtures", "periods")
MONTHS = ["JAN", "FEB", "MAR", "APR", "MAY", "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC"]


def coefficients(fit):
    """The coefficients in sheetfit's order: intercept, numeric predictors,
    trend, then the season indicators."""

    def rank(name):
        if name == "Intercept":
            return 0
        if name.startswith("C("):
            return 3
        return 2 if name == "trend" else 1

    names = sorted(fit.params.index, key=rank)
    return [
        {"term": name, "estimate": float(fit.params[name]), "std_error": float(fit.bse[name])}
        for name in names
    ]


def main():
    os.makedirs(OUT, exist_ok=True)
    expected = {
        "source": "statsmodels %s OLS (numpy %s, pandas %s), Python %s"
        % (statsmodels.__version__, np.__version__, pd.__version__, sys.version.split()[0]),
        "script": "tests/reference/make_period_reference.py",
    }

    nile = sm.datasets.nile.load_pandas().data
    nile = pd.DataFrame({"year": nile["year"].astype(int), "volume": nile["volume"]})
    nile["trend"] = np.arange(1, len(nile) + 1)
    nile[["year", "volume"]].to_csv(os.path.join(OUT, "nile.csv"), index=False)
    fit = smf.ols("volume ~ trend", data=nile).fit()
    expected["nile"] = {"formula": "volume ~ trend", "n": int(fit.nobs), "coefficients": coefficients(fit)}

    macro = sm.datasets.macrodata.load_pandas().data
    macro = pd.DataFrame(
        {
            "year": macro["year"].astype(int),
            "quarter": macro["quarter"].astype(int),
            "realgdp": macro["realgdp"],
            "realcons": macro["realcons"],
        }
    )
    macro["trend"] = np.arange(1, len(macro) + 1)
    macro[["year", "quarter", "realgdp", "realcons"]].to_csv(os.path.join(OUT, "macro.csv"), index=False)
    fit = smf.ols("realcons ~ realgdp + trend + C(quarter, Treatment(1))", data=macro).fit()
    expected["macro"] = {
        "formula": "realcons ~ realgdp + trend + C(quarter, Treatment(1))",
        "n": int(fit.nobs),
        "coefficients": coefficients(fit),
    }

    wide = sm.datasets.elnino.load_pandas().data
    rows = []
    for _, r in wide.iterrows():
        for m, name in enumerate(MONTHS, start=1):
            rows.append({"year": int(r["YEAR"]), "month": m, "temperature": float(r[name])})
    elnino = pd.DataFrame(rows)
    elnino["trend"] = np.arange(1, len(elnino) + 1)
    elnino[["year", "month", "temperature"]].to_csv(os.path.join(OUT, "elnino.csv"), index=False)
    fit = smf.ols("temperature ~ trend + C(month, Treatment(1))", data=elnino).fit()
    expected["elnino"] = {
        "formula": "temperature ~ trend + C(month, Treatment(1))",
        "n": int(fit.nobs),
        "coefficients": coefficients(fit),
    }

    # The same series in a fiscal year starting in April: the season
    # baseline is April (P01) and the indicators run May (P02) to March
    # (P12).
    fit = smf.ols("temperature ~ trend + C(month, Treatment(4))", data=elnino).fit()
    fiscal_order = [5, 6, 7, 8, 9, 10, 11, 12, 1, 2, 3]
    by_name = {c["term"]: c for c in coefficients(fit)}
    expected["elnino_fiscal_april"] = {
        "formula": "temperature ~ trend + C(month, Treatment(4)), indicators in fiscal order May..Mar",
        "n": int(fit.nobs),
        "coefficients": [by_name["Intercept"], by_name["trend"]]
        + [by_name["C(month, Treatment(4))[T.%d]" % m] for m in fiscal_order],
    }

    co2 = sm.datasets.co2.load_pandas().data
    co2 = co2.loc["1990-01-01":"2001-12-31"].dropna()
    weekly = pd.DataFrame({"date": co2.index.strftime("%Y-%m-%d"), "co2": co2["co2"].to_numpy()})
    stamps = pd.to_datetime(weekly["date"])
    assert (stamps.dt.day_of_week == 5).all(), "Saturdays"
    weekly["trend"] = ((stamps - stamps.iloc[0]).dt.days // 7 + 1).astype(float)
    weekly["month"] = stamps.dt.month
    weekly[["date", "co2"]].to_csv(os.path.join(OUT, "co2_weekly.csv"), index=False)
    formula = "co2 ~ trend + C(month, Treatment(1))"
    fit = smf.ols(formula, data=weekly).fit()
    ahead = pd.date_range(stamps.iloc[-1] + pd.Timedelta(days=7), periods=6, freq="7D")
    new = pd.DataFrame(
        {
            "trend": ((ahead - stamps.iloc[0]).days // 7 + 1).astype(float),
            "month": ahead.month,
        }
    )
    frame = fit.get_prediction(new).summary_frame(alpha=0.05)
    expected["co2_weekly"] = {
        "formula": formula + ", month and trend from each row's own date",
        "n": int(fit.nobs),
        "coefficients": coefficients(fit),
        "first_row_of_1994": {"date": "1994-01-01", "month": 1},
        "forecast": [
            {
                "period": day.strftime("%Y-%m-%d"),
                "index": int(t),
                "estimate": float(r["mean"]),
                "pred_lower": float(r["obs_ci_lower"]),
                "pred_upper": float(r["obs_ci_upper"]),
            }
            for day, t, (_, r) in zip(ahead, new["trend"], frame.iterrows())
        ],
    }

    with open(os.path.join(OUT, "expected.json"), "w") as f:
        json.dump(expected, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
