"""Reference fixture generator for sheetfit's forecaster's terms (tests/terms.rs):
logs and lags of predictors, step, spike and ramp events, Fourier seasons.

What it produces
----------------
tests/fixtures/terms/, from open datasets that ship with statsmodels:

* macro.csv -- statsmodels' `macrodata`, 1959Q1-2009Q3: quarter ("1959-Q1"),
  realcons, realgdp, realinv; the row of 1990Q3 left out (a missing
  period) and realcons blank in 1985Q2 (a row the fit cannot use, whose
  realinv still feeds the lags of the quarters after it).
* co2.csv -- statsmodels' weekly `co2` series, dated Saturdays, 1990-2001
  with its missing weeks left out (the file the period tests use).
* expected.json -- for each case the job text the Rust test runs, the
  coefficients (estimate, standard error, t, p, 95 % interval), n, the
  degrees of freedom, R², adjusted R², sigma, F, AIC and BIC (k counting
  sigma as well as the coefficients), and the
  forecast rows (estimate, interval of the mean, prediction interval).

The cases:

* macro -- ln(realcons) ~ ln(realgdp) + realinv lagged 1 and 2 quarters +
  trend + quarter indicators + a step from 1980Q1 + spikes in 1974Q1 and
  1975Q1 + a ramp from 2000Q1; forecast 4 quarters holding realgdp and
  realinv. Built here: lags by period on the full series (reindexed to
  every quarter, so the missing quarter gives blank lags), the trend
  counting quarters from the first quarter the fit uses, the events as
  0/1 and 0, 1, 2, ... columns; the forecast rows' lags from the data's
  last quarters and then from the held value.
* fourier -- co2 ~ trend + 3 Fourier pairs of the year (52.18 weeks: sin
  and cos of 2 pi k t / (365.25 / 7), t the trend index); forecast 8 weeks.
* panel -- statsmodels' `grunfeld` investment panel (11 firms, 1935-1954;
  the firms relabelled "firm 01" ... "firm 11" in order of first
  appearance), the row of firm 06 in 1945 left out: invest ~ value +
  capital + value lagged one year within each firm + trend + firm
  (baseline firm 01), `series = "firm"`; forecast 2 years for every firm,
  value and capital held, so the first year's lag is each firm's 1954 value
  and the second's the held value; and each year's forecast total over the
  firms (the summed design row, one error per firm in a new total).
* by_firm -- the same panel fitted separately for each firm (`by =
  "firm"`): invest ~ value + capital + trend, the trend counting years from
  each firm's first; each firm's coefficients, R² and sigma, and its
  forecast of 1955-1956 with value and capital held.
* scenarios -- the invented cross-section of tests/fixtures/categorical
  (data.csv): ln(revenue) ~ floor_area + staff_hours + region + format
  (baselines North and Garden shop) by the formula interface, and
  get_prediction for three scenarios, exp() of the limits.

Why
---
statsmodels fits the same least squares on columns built independently of
sheetfit, so the Rust tests can check the terms' construction and their
numbers; the JSON and CSV files are committed and the Rust tests need no
Python.

How to rerun
------------
From the project root:

    pip install statsmodels==0.15.0
    python3 tests/reference/make_terms_reference.py
"""

import json
import math
import os
import shutil
import sys

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm

OUT = os.path.join("tests", "fixtures", "terms")
SCRIPT = "tests/reference/make_terms_reference.py"


def f(x):
    x = float(x)
    assert math.isfinite(x), x
    return x


def fitted(y, X):
    fit = sm.OLS(y, X).fit()
    ci = fit.conf_int(0.05)
    return fit, {
        "n": int(fit.nobs),
        "df_model": int(round(fit.df_model)),
        "df_resid": int(round(fit.df_resid)),
        "coefficients": [
            {
                "term": name,
                "estimate": f(fit.params[name]),
                "std_error": f(fit.bse[name]),
                "t_stat": f(fit.tvalues[name]),
                "p_value": f(fit.pvalues[name]),
                "ci_lower": f(ci.loc[name, 0]),
                "ci_upper": f(ci.loc[name, 1]),
            }
            for name in X.columns
        ],
        "fit": {
            "r_squared": f(fit.rsquared),
            "adj_r_squared": f(fit.rsquared_adj),
            "sigma": f(math.sqrt(fit.scale)),
            "f_stat": f(fit.fvalue),
            # k = coefficients + 1 (sigma counted, as R's AIC() and the
            # results JSON's contract do); statsmodels' own aic and bic
            # count the coefficients only.
            "aic": f(-2 * fit.llf + 2 * (fit.df_model + fit.k_constant + 1)),
            "bic": f(-2 * fit.llf + math.log(fit.nobs) * (fit.df_model + fit.k_constant + 1)),
        },
    }


def forecast_rows(fit, new, labels, indexes, back=lambda v: v):
    frame = fit.get_prediction(new).summary_frame(alpha=0.05)
    return [
        {
            "period": label,
            "index": int(t),
            "estimate": f(back(r["mean"])),
            "mean_lower": f(back(r["mean_ci_lower"])),
            "mean_upper": f(back(r["mean_ci_upper"])),
            "pred_lower": f(back(r["obs_ci_lower"])),
            "pred_upper": f(back(r["obs_ci_upper"])),
        }
        for label, t, (_, r) in zip(labels, indexes, frame.iterrows())
    ]


def quarter_label(ordinal):
    return "%d-Q%d" % (ordinal // 4, ordinal % 4 + 1)


def macro_case():
    raw = sm.datasets.macrodata.load_pandas().data
    data = pd.DataFrame(
        {
            "ordinal": (raw["year"].astype(int) * 4 + raw["quarter"].astype(int) - 1).to_numpy(),
            "realcons": raw["realcons"].to_numpy(),
            "realgdp": raw["realgdp"].to_numpy(),
            "realinv": raw["realinv"].to_numpy(),
        }
    )
    missing = 1990 * 4 + 2
    blank = 1985 * 4 + 1
    data = data[data["ordinal"] != missing].reset_index(drop=True)
    data.loc[data["ordinal"] == blank, "realcons"] = np.nan
    with open(os.path.join(OUT, "macro.csv"), "w", newline="\n") as fh:
        fh.write("quarter,realcons,realgdp,realinv\n")
        for r in data.itertuples(index=False):
            cons = "" if math.isnan(r.realcons) else repr(float(r.realcons))
            fh.write(f"{quarter_label(r.ordinal)},{cons},{float(r.realgdp)!r},{float(r.realinv)!r}\n")

    # Lags by period: the series on every quarter, so a missing quarter
    # gives a blank lag.
    full = data.set_index("ordinal").reindex(range(data["ordinal"].min(), data["ordinal"].max() + 1))
    lag1 = full["realinv"].shift(1)
    lag2 = full["realinv"].shift(2)
    rows = data.set_index("ordinal").copy()
    rows["lag1"] = lag1
    rows["lag2"] = lag2
    rows = rows.dropna()
    first = rows.index.min()
    step, spikes, ramp = 1980 * 4, [1974 * 4, 1975 * 4], 2000 * 4

    def design(ordinals, realgdp, lag1, lag2):
        ordinals = np.asarray(ordinals)
        X = pd.DataFrame(
            {
                "Intercept": 1.0,
                "ln(realgdp)": np.log(np.asarray(realgdp, dtype=float)),
                "realinv (lag 1)": np.asarray(lag1, dtype=float),
                "realinv (lag 2)": np.asarray(lag2, dtype=float),
                "trend": (ordinals - first + 1).astype(float),
            }
        )
        for q in (2, 3, 4):
            X[f"season[Q{q}]"] = (ordinals % 4 == q - 1).astype(float)
        X["new_policy"] = (ordinals >= step).astype(float)
        X["oil_shock"] = np.isin(ordinals, spikes).astype(float)
        X["recovery"] = np.where(ordinals >= ramp, ordinals - ramp + 1, 0).astype(float)
        return X

    X = design(rows.index.to_numpy(), rows["realgdp"], rows["lag1"], rows["lag2"])
    fit, case = fitted(np.log(rows["realcons"].to_numpy()), X)

    last = int(data["ordinal"].max())
    hold_gdp, hold_inv = 13500.0, 1800.0
    ahead = np.arange(last + 1, last + 5)
    inv = dict(zip(full.index, full["realinv"]))
    for o in ahead:
        inv[o] = hold_inv
    new = design(ahead, [hold_gdp] * 4, [inv[o - 1] for o in ahead], [inv[o - 2] for o in ahead])
    case["forecast"] = forecast_rows(
        fit, new, [quarter_label(o) for o in ahead], ahead - first + 1, back=np.exp
    )
    case["job"] = (
        'title = "Terms: macro"\n[input]\nworkbook = "data.csv"\n[output]\nworkbook = "report.xlsx"\n'
        "[[model]]\nname = \"macro\"\nresponse = \"realcons\"\ntransform = \"log\"\n"
        'log = ["realgdp"]\nlag = { realinv = [1, 2] }\n'
        'trend = "quarter"\nseason = { column = "quarter", by = "quarter" }\n'
        'step = { new_policy = "1980-Q1" }\nspike = { oil_shock = ["1974-Q1", "1975-Q1"] }\n'
        'ramp = { recovery = "2000-Q1" }\n'
        f"[model.forecast]\nhorizon = 4\nhold = {{ realgdp = {hold_gdp}, realinv = {hold_inv} }}\n"
    )
    case["data"] = "macro.csv"
    case["dropped_rows"] = sorted(
        int(i) + 2 for i in data.index[~data["ordinal"].isin(rows.index)]
    )
    return case


def fourier_case():
    src = os.path.join("tests", "fixtures", "periods", "co2_weekly.csv")
    shutil.copyfile(src, os.path.join(OUT, "co2.csv"))
    data = pd.read_csv(src)
    stamps = pd.to_datetime(data["date"])
    t = ((stamps - stamps.iloc[0]).dt.days // 7 + 1).to_numpy()
    m = 365.25 / 7.0

    def design(t):
        t = np.asarray(t, dtype=float)
        X = pd.DataFrame({"Intercept": 1.0, "trend": t})
        for k in (1, 2, 3):
            X[f"fourier sin {k}"] = np.sin(2 * np.pi * k * t / m)
            X[f"fourier cos {k}"] = np.cos(2 * np.pi * k * t / m)
        return X

    fit, case = fitted(data["co2"].to_numpy(), design(t))
    ahead_days = pd.date_range(stamps.iloc[-1] + pd.Timedelta(days=7), periods=8, freq="7D")
    ahead = t[-1] + np.arange(1, 9)
    case["forecast"] = forecast_rows(
        fit, design(ahead), [d.strftime("%Y-%m-%d") for d in ahead_days], ahead
    )
    case["job"] = (
        'title = "Terms: fourier"\n[input]\nworkbook = "data.csv"\n[output]\nworkbook = "report.xlsx"\n'
        '[[model]]\nname = "fourier"\nresponse = "co2"\ntrend = "date"\n'
        'fourier = { column = "date", period = "year", pairs = 3 }\n'
        "[model.forecast]\nhorizon = 8\n"
    )
    case["data"] = "co2.csv"
    return case


def panel_case():
    raw = sm.datasets.grunfeld.load_pandas().data
    names = {firm: "firm %02d" % (k + 1) for k, firm in enumerate(dict.fromkeys(raw["firm"]))}
    data = pd.DataFrame(
        {
            "year": raw["year"].astype(int),
            "firm": raw["firm"].map(names),
            "invest": raw["invest"].astype(float),
            "value": raw["value"].astype(float),
            "capital": raw["capital"].astype(float),
        }
    )
    data = data[~((data["firm"] == "firm 06") & (data["year"] == 1945))].reset_index(drop=True)
    data.to_csv(os.path.join(OUT, "grunfeld.csv"), index=False)
    # The lag by year within each firm, on every year, so the missing year
    # gives blank lags.
    lags = {}
    for firm, rows in data.groupby("firm"):
        full = rows.set_index("year")["value"].reindex(range(1935, 1955))
        for year, v in full.shift(1).items():
            lags[(firm, year)] = v
    data["value_lag1"] = [lags[(f, y)] for f, y in zip(data["firm"], data["year"])]
    used = data.dropna().copy()
    first = used["year"].min()
    firms = sorted(used["firm"].unique())

    def design(rows):
        X = pd.DataFrame(
            {
                "Intercept": 1.0,
                "value": rows["value"].to_numpy(dtype=float),
                "capital": rows["capital"].to_numpy(dtype=float),
                "value (lag 1)": rows["value_lag1"].to_numpy(dtype=float),
                "trend": (rows["year"].to_numpy() - first + 1).astype(float),
            }
        )
        for firm in firms[1:]:
            X[f"firm[{firm}]"] = (rows["firm"].to_numpy() == firm).astype(float)
        return X

    fit, case = fitted(used["invest"].to_numpy(), design(used))
    hold_value, hold_capital = 1500.0, 400.0
    last = {firm: rows.set_index("year")["value"][1954] for firm, rows in data.groupby("firm")}
    new_rows = []
    for year in (1955, 1956):
        for firm in firms:
            new_rows.append(
                {
                    "year": year,
                    "firm": firm,
                    "value": hold_value,
                    "capital": hold_capital,
                    "value_lag1": last[firm] if year == 1955 else hold_value,
                }
            )
    new = pd.DataFrame(new_rows)
    case["forecast"] = forecast_rows(fit, design(new), [str(y) for y in new["year"]], new["year"] - first + 1)
    for row, firm in zip(case["forecast"], new["firm"]):
        row["firm"] = firm
    # Each year's total over the firms: the summed design row, its new
    # value carrying one error per firm (weights 1/k in get_prediction).
    X_new = design(new)
    totals = []
    for year in (1955, 1956):
        rows = X_new[(new["year"] == year).to_numpy()]
        k = len(rows)
        x_tot = rows.sum(axis=0).to_frame().T
        frame = fit.get_prediction(x_tot, weights=np.array([1.0 / k])).summary_frame(alpha=0.05)
        r = frame.iloc[0]
        totals.append(
            {
                "period": str(year),
                "series": k,
                "estimate": f(r["mean"]),
                "mean_lower": f(r["mean_ci_lower"]),
                "mean_upper": f(r["mean_ci_upper"]),
                "pred_lower": f(r["obs_ci_lower"]),
                "pred_upper": f(r["obs_ci_upper"]),
            }
        )
    case["forecast_totals"] = totals
    case["job"] = (
        'title = "Terms: panel"\n[input]\nworkbook = "data.csv"\n[output]\nworkbook = "report.xlsx"\n'
        '[[model]]\nname = "panel"\nresponse = "invest"\nnumeric = ["value", "capital"]\n'
        'lag = { value = 1 }\ntrend = "year"\ncategorical = { firm = "firm 01" }\nseries = "firm"\n'
        f"[model.forecast]\nhorizon = 2\nhold = {{ value = {hold_value}, capital = {hold_capital} }}\n"
    )
    case["data"] = "grunfeld.csv"
    return case


def by_firm_case():
    data = pd.read_csv(os.path.join(OUT, "grunfeld.csv"))
    hold_value, hold_capital = 1500.0, 400.0
    levels = []
    for firm, rows in sorted(data.groupby("firm"), key=lambda kv: kv[0]):
        first = rows["year"].min()

        def design(years, value, capital):
            return pd.DataFrame(
                {
                    "Intercept": 1.0,
                    "value": np.asarray(value, dtype=float),
                    "capital": np.asarray(capital, dtype=float),
                    "trend": (np.asarray(years) - first + 1).astype(float),
                }
            )

        fit, case = fitted(rows["invest"].to_numpy(), design(rows["year"], rows["value"], rows["capital"]))
        years = np.array([1955, 1956])
        case["forecast"] = forecast_rows(
            fit, design(years, [hold_value] * 2, [hold_capital] * 2), [str(y) for y in years], years - first + 1
        )
        case["level"] = firm
        levels.append(case)
    return {
        "levels": levels,
        "data": "grunfeld.csv",
        "job": (
            'title = "Terms: by firm"\nsuggest = false\n[input]\nworkbook = "data.csv"\n'
            '[output]\nworkbook = "report.xlsx"\n[[model]]\nname = "per firm"\nresponse = "invest"\nnumeric = ["value", "capital"]\n'
            'trend = "year"\nby = "firm"\n'
            f"[model.forecast]\nhorizon = 2\nhold = {{ value = {hold_value}, capital = {hold_capital} }}\n"
        ),
    }


SCENARIOS = [
    {"name": "East 1500", "floor_area": 1500.0, "staff_hours": 600.0, "region": "East", "format": "Retail park"},
    {"name": "North small", "floor_area": 450.0, "staff_hours": 250.0, "region": "North", "format": "Garden shop"},
    {"name": "West mid", "floor_area": 900.0, "staff_hours": 480.0, "region": "West", "format": "Garden shop"},
]


def scenarios_case():
    import statsmodels.formula.api as smf

    data = pd.read_csv(os.path.join("tests", "fixtures", "categorical", "data.csv"))
    formula = (
        'np.log(revenue) ~ floor_area + staff_hours + C(region, Treatment("North"))'
        ' + C(format, Treatment("Garden shop"))'
    )
    fit = smf.ols(formula, data=data).fit()
    frame = fit.get_prediction(pd.DataFrame(SCENARIOS)).summary_frame(alpha=0.05)
    rows = []
    for s, (_, r) in zip(SCENARIOS, frame.iterrows()):
        rows.append(
            {
                "name": s["name"],
                "estimate": f(np.exp(r["mean"])),
                "mean_lower": f(np.exp(r["mean_ci_lower"])),
                "mean_upper": f(np.exp(r["mean_ci_upper"])),
                "pred_lower": f(np.exp(r["obs_ci_lower"])),
                "pred_upper": f(np.exp(r["obs_ci_upper"])),
                "smeared_mean": f(np.exp(r["mean"]) * np.mean(np.exp(fit.resid))),
            }
        )
    inline = ", ".join(
        "{ name = \"%s\", floor_area = %s, staff_hours = %s, region = \"%s\", format = \"%s\" }"
        % (s["name"], s["floor_area"], s["staff_hours"], s["region"], s["format"])
        for s in SCENARIOS
    )
    return {
        "formula": formula,
        "scenarios": rows,
        "data": "../categorical/data.csv",
        "job": (
            'title = "Terms: scenarios"\n[input]\nworkbook = "data.csv"\n[output]\nworkbook = "report.xlsx"\n'
            '[[model]]\nname = "stores"\nresponse = "revenue"\ntransform = "log"\n'
            'numeric = ["floor_area", "staff_hours"]\n'
            'categorical = { region = "North", format = "Garden shop" }\n'
            f"[model.scenarios]\nrows = [{inline}]\n"
        ),
        "inputs": SCENARIOS,
    }


def main():
    os.makedirs(OUT, exist_ok=True)
    out = {
        "source": "statsmodels %s OLS and get_prediction (numpy %s, pandas %s), Python %s"
        % (statsmodels.__version__, np.__version__, pd.__version__, sys.version.split()[0]),
        "script": SCRIPT,
        "cases": {
            "macro": macro_case(),
            "fourier": fourier_case(),
            "panel": panel_case(),
            "by_firm": by_firm_case(),
            "scenarios": scenarios_case(),
        },
    }
    with open(os.path.join(OUT, "expected.json"), "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")
    print("wrote", OUT)


if __name__ == "__main__":
    main()
