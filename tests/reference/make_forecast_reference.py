"""Reference fixture generator for sheetfit's trend, season, forecast and
back-test tests (tests/forecast.rs).

What it produces
----------------
Three cases in tests/fixtures/forecast/, each a CSV input and an expected
JSON (<case>.csv, <case>.json):

* monthly -- statsmodels.datasets.elnino (monthly sea surface temperature,
  Nino 1+2 region; wide YEAR + JAN..DEC, reshaped here to one row per month)
  from 1990-04 to 1999-09, with 1994-07 and 1994-08 dropped (a gap), an ISO
  text date column `date` ("1990-04-01") and response `y`.  Model
  y ~ trend + season(month, baseline Jan); forecast the 12 months after the
  last one; back-test the last 6 months, fixed origin and rolling origin.
* quarterly -- statsmodels.datasets.macrodata realgdp from 1990-Q1 to
  2008-Q4 with 1998-Q3 dropped, a period text column `quarter` ("1990-Q1").
  Model ln(realgdp) ~ trend + season(quarter, baseline Q1) (the job's
  transform = "log"); forecast 8 quarters; back-test the last 4 quarters.
  Forecasts and back-test values are on the original scale (exp of the
  log-scale values), with the smearing estimate of the mean
  exp(xb) * mean(exp(residuals)) (Duan 1983).
* panel -- statsmodels.datasets.macrodata realcons and realinv from 2000-Q1
  to 2008-Q4 stacked as two series (text column `series`: "consumption",
  then "investment"), ISO text dates of each quarter's first day in `date`
  and the job's frequency = "quarter".  Model
  y ~ trend + season(quarter) + series (baseline "consumption"); both rows
  of a quarter share one trend index; forecast 4 quarters holding
  series = "investment".

Each expected JSON holds the exact job text the Rust test runs, the
coefficients (estimate, standard error), r_squared and sigma, the period
index and label of every data row, the forecast rows and the back-test, in
the layout of sheetfit's results JSON.

Why
---
The expected values come from an independent, outside implementation
(statsmodels OLS and its get_prediction) so that sheetfit's Rust test suite
can check its own numbers against them.  The design matrix is built here by
hand in sheetfit's term order and naming (Intercept, numeric predictors,
trend, season, categorical predictors), so the reference library only does
the least squares and the intervals.  The CSV and JSON files are committed;
the Rust tests only read them and need no Python.  This script is kept so the
fixtures can be audited and regenerated.

How to rerun
------------
From the project root:

    pip install statsmodels==0.15.0 && python3 tests/reference/make_forecast_reference.py

The datasets ship with statsmodels, so rerunning with the same library
versions reproduces the same files.
"""

import json
import math
import os
import sys

import numpy as np
import pandas as pd
import patsy
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm
from statsmodels.datasets import elnino, macrodata

SCRIPT = "tests/reference/make_forecast_reference.py"
OUT_DIR = os.path.join("tests", "fixtures", "forecast")
CONFIDENCE = 0.95

MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun",
          "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]
QUARTERS = ["Q1", "Q2", "Q3", "Q4"]


# ---------------------------------------------------------------------------
# Periods: a period is an integer ordinal (year*12 + month - 1 for months,
# year*4 + quarter - 1 for quarters); the period index of the contract is
# ordinal - first ordinal + 1, so gaps keep their spacing.


def month_ordinal(year, month):
    return year * 12 + (month - 1)


def quarter_ordinal(year, quarter):
    return year * 4 + (quarter - 1)


def month_label(ordinal):
    return f"{ordinal // 12:04d}-{ordinal % 12 + 1:02d}"


def quarter_label(ordinal):
    return f"{ordinal // 4:04d}-Q{ordinal % 4 + 1}"


def season_of(ordinal, by):
    """Season label of a period: Jan..Dec or Q1..Q4."""
    if by == "month":
        return MONTHS[ordinal % 12]
    return QUARTERS[ordinal % 4]


def period_index(ordinals):
    first = min(ordinals)
    return [o - first + 1 for o in ordinals]


# ---------------------------------------------------------------------------
# Small helpers


def f(x):
    """Plain Python float (full precision through json)."""
    x = float(x)
    assert math.isfinite(x), x
    return x


def whole(x):
    x = float(x)
    assert x == round(x), x
    return int(round(x))


def write_csv(path, columns, rows):
    """Write floats with repr so the file round-trips to the same doubles."""
    with open(path, "w", newline="\n", encoding="utf-8") as fh:
        fh.write(",".join(columns) + "\n")
        for row in rows:
            cells = []
            for value in row:
                if isinstance(value, float):
                    cells.append(repr(value))
                else:
                    assert isinstance(value, str)
                    assert "," not in value and '"' not in value
                    cells.append(value)
            fh.write(",".join(cells) + "\n")


def check_csv(path, columns, rows):
    """Read the CSV back and check it holds exactly the values written."""
    back = pd.read_csv(path, dtype=str, keep_default_na=False)
    assert list(back.columns) == columns, back.columns
    assert len(back) == len(rows)
    for i, row in enumerate(rows):
        for col, value in zip(columns, row):
            cell = back[col].iloc[i]
            if isinstance(value, float):
                assert float(cell) == value, (path, i, col, cell, value)
            else:
                assert cell == value, (path, i, col, cell, value)


def design(ordinals, first, by, season_baseline, categorical=None):
    """The design matrix in sheetfit's term order and naming.

    ordinals: the period ordinal of each row; first: the ordinal of the
    data's first period (index 1); by: "month" | "quarter";
    categorical: None or (column, baseline, levels of each row, all levels).
    Columns: Intercept, trend, season[...] (calendar order, baseline left
    out), column[level] (sorted level order, baseline left out).
    """
    cols = {"Intercept": [1.0] * len(ordinals)}
    cols["trend"] = [float(o - first + 1) for o in ordinals]
    labels = MONTHS if by == "month" else QUARTERS
    for label in labels:
        if label == season_baseline:
            continue
        cols[f"season[{label}]"] = [
            1.0 if season_of(o, by) == label else 0.0 for o in ordinals
        ]
    if categorical is not None:
        column, baseline, row_levels, all_levels = categorical
        for level in sorted(all_levels):
            if level == baseline:
                continue
            cols[f"{column}[{level}]"] = [
                1.0 if lv == level else 0.0 for lv in row_levels
            ]
    return pd.DataFrame(cols)


def ols(y, X):
    """The reference fit, with its coefficients cross-checked against a
    second least-squares solve (numpy's lstsq) so that the reference itself
    is known to be far more accurate than the tolerances of the Rust test."""
    fit = sm.OLS(np.asarray(y, dtype=float), X).fit()
    assert list(fit.params.index) == list(X.columns)
    assert np.linalg.matrix_rank(np.asarray(X)) == X.shape[1]
    other = np.linalg.lstsq(np.asarray(X), np.asarray(y, dtype=float), rcond=None)[0]
    scale = max(1.0, float(np.max(np.abs(other))))
    assert np.max(np.abs(np.asarray(fit.params) - other)) <= 1e-11 * scale
    return fit


def interval_frame(fit, exog):
    """The reference library's prediction table at the job's confidence."""
    frame = fit.get_prediction(exog).summary_frame(alpha=1 - CONFIDENCE)
    return frame


def check_interval_by_hand(fit, exog, frame):
    """Recompute the first row of a prediction table from the formulas
    xb +- t * s * sqrt(x'(X'X)^-1 x) and xb +- t * s * sqrt(1 + x'(X'X)^-1 x)."""
    x = np.asarray(exog, dtype=float)[0]
    cov = np.asarray(fit.cov_params())  # s^2 (X'X)^-1
    xb = float(x @ np.asarray(fit.params))
    se_mean = math.sqrt(float(x @ cov @ x))
    se_obs = math.sqrt(se_mean**2 + fit.scale)
    t = scipy.stats.t.ppf(0.5 + CONFIDENCE / 2, fit.df_resid)
    row = frame.iloc[0]
    for got, want in [
        (row["mean"], xb),
        (row["mean_ci_lower"], xb - t * se_mean),
        (row["mean_ci_upper"], xb + t * se_mean),
        (row["obs_ci_lower"], xb - t * se_obs),
        (row["obs_ci_upper"], xb + t * se_obs),
    ]:
        assert abs(got - want) <= 1e-10 * max(1.0, abs(want)), (got, want)


def forecast_rows(fit, exog, ordinals, first, label, log, smear):
    frame = interval_frame(fit, exog)
    check_interval_by_hand(fit, exog, frame)
    rows = []
    back = math.exp if log else (lambda v: v)
    for (_, r), o in zip(frame.iterrows(), ordinals):
        row = {
            "period": label(o),
            "index": o - first + 1,
            "estimate": f(back(r["mean"])),
            "mean_lower": f(back(r["mean_ci_lower"])),
            "mean_upper": f(back(r["mean_ci_upper"])),
            "pred_lower": f(back(r["obs_ci_lower"])),
            "pred_upper": f(back(r["obs_ci_upper"])),
        }
        if log:
            row["smeared_mean"] = f(math.exp(r["mean"]) * smear)
        rows.append(row)
    return rows


def metrics(points):
    actual = np.array([p["actual"] for p in points])
    est = np.array([p["estimate"] for p in points])
    lo = np.array([p["pred_lower"] for p in points])
    hi = np.array([p["pred_upper"] for p in points])
    err = actual - est
    return {
        "mae": f(np.mean(np.abs(err))),
        "rmse": f(math.sqrt(np.mean(err**2))),
        "mape": f(np.mean(np.abs(err) / np.abs(actual)) * 100.0),
        "coverage": f(np.mean((actual >= lo) & (actual <= hi))),
    }


def backtest_points(y, actual, X, ordinals, train, test, label, log):
    """Refit on the `train` rows, predict the `test` rows (original scale:
    `actual` holds the data values, `y` what is fitted)."""
    fit = ols(np.asarray(y)[train], X.iloc[train])
    assert fit.df_resid > 0
    frame = interval_frame(fit, X.iloc[test])
    check_interval_by_hand(fit, X.iloc[test], frame)
    back = math.exp if log else (lambda v: v)
    points = []
    for (_, r), i in zip(frame.iterrows(), test):
        points.append(
            {
                "period": label(ordinals[i]),
                "actual": f(actual[i]),
                "estimate": f(back(r["mean"])),
                "pred_lower": f(back(r["obs_ci_lower"])),
                "pred_upper": f(back(r["obs_ci_upper"])),
            }
        )
    return points


def backtest(y, actual, X, ordinals, k, rolling, label, log):
    """Back-test over the last k periods present in the data.

    Fixed origin: refit on the rows whose period is not among the last k
    periods, predict the rows of those periods.  Rolling origin: for each of
    the last k periods in turn, refit on all rows of earlier periods and
    predict the rows of that period.
    """
    periods = sorted(set(ordinals))
    last = periods[-k:]
    # The back-test windows here are whole calendar runs without gaps, so
    # "one period ahead" of each origin is the next calendar period.
    assert last == list(range(last[0], last[0] + k)), last
    order = range(len(ordinals))
    train = [i for i in order if ordinals[i] not in last]
    test = [i for i in order if ordinals[i] in last]
    points = backtest_points(y, actual, X, ordinals, train, test, label, log)
    out = {"holdout": k, **metrics(points), "points": points}
    if rolling:
        rpoints = []
        for p in last:
            tr = [i for i in order if ordinals[i] < p]
            te = [i for i in order if ordinals[i] == p]
            rpoints.extend(backtest_points(y, actual, X, ordinals, tr, te, label, log))
        # The first rolling origin trains on exactly the fixed-origin rows,
        # so its forecast must be the fixed-origin forecast of that period.
        first_rows = sum(1 for i in test if ordinals[i] == last[0])
        for a, b in zip(rpoints[:first_rows], points[:first_rows]):
            assert a["period"] == b["period"]
            assert abs(a["estimate"] - b["estimate"]) <= 1e-12 * abs(b["estimate"])
        out["rolling"] = {**metrics(rpoints), "points": rpoints}
    else:
        out["rolling"] = None
    return out


def source(dataset):
    py = ".".join(str(p) for p in sys.version_info[:3])
    return (
        f"statsmodels {statsmodels.__version__} OLS and get_prediction "
        f"(numpy {np.__version__}, pandas {pd.__version__}, "
        f"scipy {scipy.__version__}, patsy {patsy.__version__}), "
        f"Python {py}; data: statsmodels.datasets.{dataset}"
    )


def coefficient_rows(fit):
    return [
        {
            "term": name,
            "estimate": f(fit.params[name]),
            "std_error": f(fit.bse[name]),
        }
        for name in fit.params.index
    ]


def write_case(case, expected, columns, rows):
    csv_path = os.path.join(OUT_DIR, f"{case}.csv")
    json_path = os.path.join(OUT_DIR, f"{case}.json")
    write_csv(csv_path, columns, rows)
    check_csv(csv_path, columns, rows)
    with open(json_path, "w", encoding="utf-8") as fh:
        json.dump(expected, fh, indent=2, allow_nan=False)
        fh.write("\n")
    first = expected["forecast"][0]
    print(
        f"{case}: n={expected['n']}, coefficients={len(expected['coefficients'])}, "
        f"first forecast {first['period']} (index {first['index']}) "
        f"estimate={first['estimate']:.10g} "
        f"pred=[{first['pred_lower']:.10g}, {first['pred_upper']:.10g}]"
    )


def job_text(case, model_lines, forecast_lines):
    lines = [
        f'title = "Forecast reference: {case}"',
        "[input]",
        f'workbook = "{case}.csv"',
        "[output]",
        'workbook = "report.xlsx"',
        "[[model]]",
        f'name = "{case}"',
        *model_lines,
        "[model.forecast]",
        *forecast_lines,
    ]
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------------------
# Case (a): monthly


def monthly_case():
    wide = elnino.load_pandas().data
    months = [m.upper() for m in MONTHS]
    records = []
    for _, r in wide.iterrows():
        year = whole(r["YEAR"])
        for m, name in enumerate(months, start=1):
            records.append((year, m, float(r[name])))
    start, end = month_ordinal(1990, 4), month_ordinal(1999, 9)
    dropped = {month_ordinal(1994, 7), month_ordinal(1994, 8)}
    data = [
        (y, m, v)
        for (y, m, v) in records
        if start <= month_ordinal(y, m) <= end
        and month_ordinal(y, m) not in dropped
    ]
    ordinals = [month_ordinal(y, m) for (y, m, _) in data]
    assert ordinals == sorted(ordinals)
    index = period_index(ordinals)
    # The index counts months from the first month, cross-checked with
    # pandas' own calendar arithmetic, and the gap keeps its spacing.
    p0 = pd.Period(year=1990, month=4, freq="M")
    for (y, m, _), ix in zip(data, index):
        assert (pd.Period(year=y, month=m, freq="M") - p0).n + 1 == ix
    jumps = [b - a for a, b in zip(index, index[1:])]
    assert sorted(set(jumps)) == [1, 3] and jumps.count(3) == 1, jumps
    assert len(data) == 114 - 2

    y = np.array([v for (_, _, v) in data])
    X = design(ordinals, ordinals[0], "month", "Jan")
    fit = ols(y, X)

    horizon = 12
    fut = [ordinals[-1] + h for h in range(1, horizon + 1)]
    Xf = design(fut, ordinals[0], "month", "Jan")
    forecast = forecast_rows(fit, Xf, fut, ordinals[0], month_label, False, None)
    assert [r["index"] for r in forecast] == list(range(index[-1] + 1, index[-1] + 13))
    assert forecast[0]["period"] == "1999-10" and forecast[-1]["period"] == "2000-09"

    bt = backtest(y, y, X, ordinals, 6, True, month_label, False)

    job = job_text(
        "monthly",
        [
            'response = "y"',
            'trend = "date"',
            'season = { column = "date", by = "month", baseline = "Jan" }',
            "backtest = 6",
            "backtest_rolling = true",
        ],
        ["horizon = 12"],
    )
    rows = [(f"{yy:04d}-{mm:02d}-01", v) for (yy, mm, v) in data]
    expected = {
        "source": source("elnino"),
        "script": SCRIPT,
        "dataset": (
            "statsmodels.datasets.elnino: monthly sea surface temperature "
            "(degrees C), reshaped from YEAR + JAN..DEC to one row per month; "
            "1990-04 to 1999-09, with 1994-07 and 1994-08 left out"
        ),
        "job": job,
        "n": len(data),
        "df_resid": whole(fit.df_resid),
        "coefficients": coefficient_rows(fit),
        "fit": {"r_squared": f(fit.rsquared), "sigma": f(math.sqrt(fit.scale))},
        "residual_index": index,
        "residual_period": [month_label(o) for o in ordinals],
        "forecast": forecast,
        "backtest": bt,
    }
    write_case("monthly", expected, ["date", "y"], rows)


# ---------------------------------------------------------------------------
# Case (b): quarterly, log transform


def quarterly_case():
    mac = macrodata.load_pandas().data
    start, end = quarter_ordinal(1990, 1), quarter_ordinal(2008, 4)
    dropped = {quarter_ordinal(1998, 3)}
    data = []
    for _, r in mac.iterrows():
        o = quarter_ordinal(whole(r["year"]), whole(r["quarter"]))
        if start <= o <= end and o not in dropped:
            data.append((o, float(r["realgdp"])))
    ordinals = [o for (o, _) in data]
    assert ordinals == sorted(ordinals)
    assert len(data) == 76 - 1
    index = period_index(ordinals)
    p0 = pd.Period(year=1990, quarter=1, freq="Q")
    for o, ix in zip(ordinals, index):
        p = pd.Period(year=o // 4, quarter=o % 4 + 1, freq="Q")
        assert (p - p0).n + 1 == ix
    jumps = [b - a for a, b in zip(index, index[1:])]
    assert sorted(set(jumps)) == [1, 2] and jumps.count(2) == 1, jumps

    level = np.array([v for (_, v) in data])
    y = np.log(level)
    X = design(ordinals, ordinals[0], "quarter", "Q1")
    fit = ols(y, X)
    # Duan (1983) smearing factor: the mean of exp(residual) over the fit.
    smear = float(np.mean(np.exp(np.asarray(fit.resid))))
    assert smear > 1.0

    horizon = 8
    fut = [ordinals[-1] + h for h in range(1, horizon + 1)]
    Xf = design(fut, ordinals[0], "quarter", "Q1")
    forecast = forecast_rows(fit, Xf, fut, ordinals[0], quarter_label, True, smear)
    assert forecast[0]["period"] == "2009-Q1" and forecast[-1]["period"] == "2010-Q4"
    assert [r["index"] for r in forecast] == list(range(index[-1] + 1, index[-1] + 9))

    bt = backtest(y, level, X, ordinals, 4, False, quarter_label, True)
    for p, (o, v) in zip(bt["points"], data[-4:]):
        assert p["period"] == quarter_label(o)
        assert p["actual"] == v

    job = job_text(
        "quarterly",
        [
            'response = "realgdp"',
            'trend = "quarter"',
            'season = { column = "quarter", by = "quarter", baseline = "Q1" }',
            'transform = "log"',
            "backtest = 4",
        ],
        ["horizon = 8"],
    )
    rows = [(quarter_label(o), v) for (o, v) in data]
    expected = {
        "source": source("macrodata"),
        "script": SCRIPT,
        "dataset": (
            "statsmodels.datasets.macrodata: realgdp (real gross domestic "
            "product, quarterly); 1990-Q1 to 2008-Q4, with 1998-Q3 left out"
        ),
        "job": job,
        "n": len(data),
        "df_resid": whole(fit.df_resid),
        "coefficients": coefficient_rows(fit),
        "fit": {"r_squared": f(fit.rsquared), "sigma": f(math.sqrt(fit.scale))},
        "smearing_factor": f(smear),
        "residual_index": index,
        "residual_period": [quarter_label(o) for o in ordinals],
        "forecast": forecast,
        "backtest": bt,
    }
    write_case("quarterly", expected, ["quarter", "realgdp"], rows)


# ---------------------------------------------------------------------------
# Case (c): panel, two series per quarter


def panel_case():
    mac = macrodata.load_pandas().data
    start, end = quarter_ordinal(2000, 1), quarter_ordinal(2008, 4)
    by_series = {"consumption": "realcons", "investment": "realinv"}
    data = []  # (ordinal, series, value), one block per series
    for series, column in by_series.items():
        for _, r in mac.iterrows():
            o = quarter_ordinal(whole(r["year"]), whole(r["quarter"]))
            if start <= o <= end:
                data.append((o, series, float(r[column])))
    assert len(data) == 2 * 36
    ordinals = [o for (o, _, _) in data]
    index = period_index(ordinals)
    # Both rows of a quarter share one index; the blocks restart at 1.
    assert index[:36] == list(range(1, 37)) and index[36:] == list(range(1, 37))

    y = np.array([v for (_, _, v) in data])
    levels = [s for (_, s, _) in data]
    X = design(
        ordinals,
        min(ordinals),
        "quarter",
        "Q1",
        ("series", "consumption", levels, set(levels)),
    )
    fit = ols(y, X)

    horizon = 4
    last = max(ordinals)
    fut = [last + h for h in range(1, horizon + 1)]
    Xf = design(
        fut,
        min(ordinals),
        "quarter",
        "Q1",
        ("series", "consumption", ["investment"] * horizon, set(levels)),
    )
    assert list(Xf["series[investment]"]) == [1.0] * horizon
    forecast = forecast_rows(fit, Xf, fut, min(ordinals), quarter_label, False, None)
    assert [r["period"] for r in forecast] == ["2009-Q1", "2009-Q2", "2009-Q3", "2009-Q4"]

    job = job_text(
        "panel",
        [
            'response = "y"',
            'trend = "date"',
            'season = { column = "date", by = "quarter" }',
            'frequency = "quarter"',
            'categorical = { series = "consumption" }',
        ],
        ["horizon = 4", 'hold = { series = "investment" }'],
    )

    def iso(o):
        return f"{o // 4:04d}-{3 * (o % 4) + 1:02d}-01"

    rows = [(iso(o), s, v) for (o, s, v) in data]
    expected = {
        "source": source("macrodata"),
        "script": SCRIPT,
        "dataset": (
            "statsmodels.datasets.macrodata: realcons (series "
            '"consumption") and realinv (series "investment"), quarterly, '
            "2000-Q1 to 2008-Q4, stacked one series after the other; dates "
            "are each quarter's first day"
        ),
        "job": job,
        "n": len(data),
        "df_resid": whole(fit.df_resid),
        "coefficients": coefficient_rows(fit),
        "fit": {"r_squared": f(fit.rsquared), "sigma": f(math.sqrt(fit.scale))},
        "residual_index": index,
        "residual_period": [quarter_label(o) for o in ordinals],
        "forecast": forecast,
        "backtest": None,
    }
    write_case("panel", expected, ["date", "series", "y"], rows)


def main():
    os.makedirs(OUT_DIR, exist_ok=True)
    monthly_case()
    quarterly_case()
    panel_case()


if __name__ == "__main__":
    main()
