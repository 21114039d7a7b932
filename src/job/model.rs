//! One model of the job as checked: its roles, season, forecast and the
//! rules a model's roles follow.

use std::collections::HashSet;
use std::fmt;

use indexmap::IndexMap;

use super::scenarios::ScenarioSpec;
use super::terms::{EventSpec, FourierSpec, LagSpec};
use super::{Errors, ForecastFile, Robust, SeasonFile};
use crate::period::{Frequency, LabelRules, SeasonBy};

/// How a categorical predictor's baseline level was chosen.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Baseline {
    /// Named in the job file.
    Given(String),
    /// Not named: the first level in sorted order is used.
    FirstSorted,
}

/// A categorical predictor and its baseline.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CategoricalSpec {
    /// Column name.
    pub column: String,
    /// How the baseline is chosen.
    pub baseline: Baseline,
}

/// Seasonal indicators of a model.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SeasonSpec {
    /// The date column.
    pub column: String,
    /// What seasons are counted by.
    pub by: SeasonBy,
    /// The baseline season, counted from 1.
    pub baseline: u32,
    /// Whether the job named the baseline.
    pub baseline_given: bool,
}

/// A value held fixed in the forecast rows.
#[derive(Debug, Clone, PartialEq)]
pub enum HoldValue {
    /// A number, for a numeric or polynomial predictor.
    Number(f64),
    /// A level, for a categorical predictor.
    Level(String),
}

/// Where forecast rows come from.
#[derive(Debug, Clone, PartialEq)]
pub enum ForecastSpec {
    /// The next `horizon` periods, other predictors held at `hold`.
    Horizon {
        /// Number of periods.
        horizon: u32,
        /// Predictor values, by column.
        hold: IndexMap<String, HoldValue>,
    },
    /// Rows of a sheet of the input workbook.
    Plan {
        /// The sheet name.
        sheet: String,
        /// Its row of column names, counted from 1.
        header_row: u32,
    },
}

/// The highest polynomial degree accepted: beyond it the powers of any
/// real data are collinear to working precision.
pub const MAX_DEGREE: u32 = 12;

/// A polynomial predictor: a column and its powers 1..=degree.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PolySpec {
    /// Column name.
    pub column: String,
    /// Highest power, 1 to [`MAX_DEGREE`].
    pub degree: u32,
}

/// One checked model.
#[derive(Debug, Clone)]
pub struct ModelSpec {
    /// Unique name.
    pub name: String,
    /// Response column.
    pub response: String,
    /// Numeric predictors in job order.
    pub numeric: Vec<String>,
    /// Polynomial predictors in job order.
    pub poly: Vec<PolySpec>,
    /// Categorical predictors in job order.
    pub categorical: Vec<CategoricalSpec>,
    /// Whether an intercept is fitted.
    pub intercept: bool,
    /// Confidence level for intervals.
    pub confidence: f64,
    /// Date column of the trend term.
    pub trend: Option<String>,
    /// A date column that only orders the rows (`date`), for a model
    /// without a trend or seasons.
    pub date: Option<String>,
    /// Seasonal indicators.
    pub season: Option<SeasonSpec>,
    /// The period of the date column, when the job sets it.
    pub frequency: Option<Frequency>,
    /// Whether the response is fitted on the natural-log scale.
    pub log_response: bool,
    /// Back-test: number of final periods held out.
    pub backtest: Option<u32>,
    /// Back-test also from a rolling origin.
    pub backtest_rolling: bool,
    /// Forecast rows.
    pub forecast: Option<ForecastSpec>,
    /// Interactions between two predictors, in job order.
    pub interactions: Vec<(String, String)>,
    /// Heteroscedasticity-consistent standard errors, when asked for.
    pub standard_errors: Option<Robust>,
    /// The model of the errors: with AR(1) errors the model is also fitted
    /// by maximum likelihood.
    pub errors: Errors,
    /// Whether a suggested smaller model is searched for.
    pub suggest: bool,
    /// Most levels a categorical predictor (or a season) may have: the
    /// job's `max_levels` under [input].
    pub max_levels: usize,
    /// Whether levels that differ only in case or inner spaces are
    /// different levels (`case_sensitive_levels` under [input]); when
    /// false such levels stop the job.
    pub case_sensitive_levels: bool,
    /// How period labels read: `date_order` and `fiscal_year_start` under
    /// [input].
    pub labels: LabelRules,
    /// Predictors entered as their natural log, in job order.
    pub log: Vec<String>,
    /// Lagged predictors, in job order.
    pub lags: Vec<LagSpec>,
    /// Step, spike and ramp events.
    pub events: Vec<EventSpec>,
    /// Fourier seasons.
    pub fourier: Option<FourierSpec>,
    /// Rows to predict beside the forecast.
    pub scenarios: Option<ScenarioSpec>,
    /// The column naming each series of panel data.
    pub series: Option<String>,
    /// The column of weights, for weighted least squares.
    pub weights: Option<String>,
    /// The column whose levels each get their own fit of the model.
    pub by: Option<String>,
    /// The weight of a new row (forecast or scenario) in its prediction
    /// interval: `forecast.weight`, default 1.
    pub new_row_weight: f64,
}

impl ModelSpec {
    /// A model named `m` of `response` on nothing yet, with every default
    /// filled: the base the unit tests of later stages build on.
    #[cfg(test)]
    pub(crate) fn plain(response: &str) -> ModelSpec {
        ModelSpec {
            name: "m".into(),
            response: response.into(),
            numeric: vec![],
            poly: vec![],
            categorical: vec![],
            intercept: true,
            confidence: super::DEFAULT_CONFIDENCE,
            trend: None,
            date: None,
            season: None,
            frequency: None,
            log_response: false,
            backtest: None,
            backtest_rolling: false,
            forecast: None,
            interactions: vec![],
            standard_errors: None,
            errors: Errors::Independent,
            suggest: true,
            max_levels: super::DEFAULT_MAX_LEVELS,
            case_sensitive_levels: false,
            labels: LabelRules::default(),
            log: vec![],
            lags: vec![],
            events: vec![],
            fourier: None,
            scenarios: None,
            series: None,
            weights: None,
            by: None,
            new_row_weight: 1.0,
        }
    }

    /// The date column that orders the rows and counts periods: the trend
    /// column, else the season column, else the Fourier seasons' column,
    /// else the `date` column.
    pub fn date_column(&self) -> Option<&str> {
        self.trend
            .as_deref()
            .or(self.season.as_ref().map(|s| s.column.as_str()))
            .or(self.fourier.as_ref().map(|f| f.column.as_str()))
            .or(self.date.as_deref())
    }

    /// Whether the model reads the column `name` (a predictor, the
    /// response, the date column, the series or the weights column).
    pub fn reads(&self, name: &str) -> bool {
        self.columns().any(|c| c == name)
            || self.date_column() == Some(name)
            || self.series.as_deref() == Some(name)
            || self.weights.as_deref() == Some(name)
            || self.by.as_deref() == Some(name)
    }

    /// The columns a row to predict (a plan-sheet row or a scenario) gives:
    /// the series column first, when the model has one, then every
    /// predictor, each once.
    pub fn row_columns(&self) -> Vec<&str> {
        let series = self.series.as_deref();
        series
            .into_iter()
            .chain(self.columns().skip(1).filter(|c| Some(*c) != series))
            .collect()
    }

    /// The predictors a forecast row needs a value for: every predictor but
    /// the series column, which each series' rows take from the series.
    pub fn held_columns(&self) -> impl Iterator<Item = &str> {
        self.columns()
            .skip(1)
            .filter(move |c| self.series.as_deref() != Some(*c))
    }

    /// The columns whose cells must be numbers: the response, then the
    /// numeric and polynomial predictors.
    pub fn numeric_columns(&self) -> impl Iterator<Item = &str> {
        std::iter::once(self.response.as_str())
            .chain(self.numeric.iter().map(String::as_str))
            .chain(self.poly.iter().map(|p| p.column.as_str()))
    }

    /// Every column the model reads, each once: the response first, then
    /// predictors in job order (numeric, polynomial, categorical, logged,
    /// lagged).
    pub fn columns(&self) -> impl Iterator<Item = &str> {
        let mut seen = HashSet::new();
        std::iter::once(self.response.as_str())
            .chain(self.numeric.iter().map(String::as_str))
            .chain(self.poly.iter().map(|p| p.column.as_str()))
            .chain(self.categorical.iter().map(|c| c.column.as_str()))
            .chain(self.log.iter().map(String::as_str))
            .chain(self.lags.iter().map(|l| l.column.as_str()))
            .filter(move |c| seen.insert(*c))
    }
}

impl fmt::Display for Baseline {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Baseline::Given(level) => write!(f, "'{level}' (given in the job)"),
            Baseline::FirstSorted => f.write_str("the first level in sorted order"),
        }
    }
}

/// The season of a model, counted in the fiscal year starting in month
/// `fiscal` when there is one (months and quarters become P01..P12 and
/// FQ1..FQ4).
pub(super) fn season_spec(s: SeasonFile, fiscal: u8) -> Result<SeasonSpec, (&'static str, String)> {
    let by = SeasonBy::parse(&s.by)
        .ok_or_else(|| {
            (
                "by",
                format!("'{}' is not a season; use month, quarter or weekday", s.by),
            )
        })?
        .in_fiscal_year(fiscal);
    let labels = by.labels().join(", ");
    let baseline = match &s.baseline {
        None => 1,
        Some(v) => {
            let text = match v {
                toml::Value::String(t) => t.clone(),
                toml::Value::Integer(i) => i.to_string(),
                other => other.to_string(),
            };
            by.season_of(&text).ok_or_else(|| {
                (
                    "baseline",
                    format!(
                        "'{text}' is not a {} season; use one of {labels} or its number",
                        by.name()
                    ),
                )
            })?
        }
    };
    Ok(SeasonSpec {
        column: s.column,
        by,
        baseline,
        baseline_given: s.baseline.is_some(),
    })
}

pub(super) fn forecast_spec(f: ForecastFile) -> Result<ForecastSpec, (&'static str, String)> {
    if f.plan_header_row.is_some() && f.plan_sheet.is_none() {
        return Err((
            "plan_header_row",
            "goes with `plan_sheet`; remove it, or name the plan sheet".into(),
        ));
    }
    match (f.horizon, f.plan_sheet) {
        (Some(_), Some(_)) => Err((
            "plan_sheet",
            "give either `horizon` (with `hold`) or `plan_sheet`, not both".into(),
        )),
        (None, None) => Err((
            "horizon",
            "is missing; give `horizon` (periods after the data, with `hold` values) or `plan_sheet`"
                .into(),
        )),
        (None, Some(sheet)) => {
            if !f.hold.is_empty() {
                return Err((
                    "hold",
                    "is used with `horizon`; with `plan_sheet` the sheet gives the predictor values"
                        .into(),
                ));
            }
            let header_row = f.plan_header_row.unwrap_or(1);
            if header_row == 0 {
                return Err((
                    "plan_header_row",
                    "rows are counted from 1; use 1 for the first row".into(),
                ));
            }
            Ok(ForecastSpec::Plan { sheet, header_row })
        }
        (Some(0), None) => Err(("horizon", "must be at least 1".into())),
        (Some(horizon), None) => {
            let mut hold = IndexMap::new();
            for (column, value) in f.hold {
                let v = hold_value(&column, value).map_err(|message| ("hold", message))?;
                hold.insert(column, v);
            }
            Ok(ForecastSpec::Horizon { horizon, hold })
        }
    }
}

/// A predictor's value written in the job: a number (true and false as 1
/// and 0) or a level in quotes.
pub(super) fn hold_value(column: &str, value: toml::Value) -> Result<HoldValue, String> {
    match value {
        toml::Value::Integer(i) => Ok(HoldValue::Number(i as f64)),
        toml::Value::Float(x) => Ok(HoldValue::Number(x)),
        toml::Value::String(t) => Ok(HoldValue::Level(t)),
        toml::Value::Boolean(b) => Ok(HoldValue::Number(f64::from(u8::from(b)))),
        other => Err(format!(
            "the value for '{column}' ({other}) must be a number or a level in quotes"
        )),
    }
}

/// Each column plays one role in a model; a model needs a predictor or an
/// intercept.
pub(super) fn check_roles(spec: &ModelSpec) -> Result<(), (&'static str, String)> {
    if spec.response.trim().is_empty() {
        return Err(("response", "is empty; name the response column".into()));
    }
    let mut seen: HashSet<&str> = HashSet::new();
    seen.insert(&spec.response);
    for (key, col) in spec
        .numeric
        .iter()
        .map(|c| ("numeric", c))
        .chain(spec.poly.iter().map(|p| ("poly", &p.column)))
        .chain(spec.categorical.iter().map(|c| ("categorical", &c.column)))
    {
        if *col == spec.response {
            return Err((
                key,
                format!("'{col}' is the response; a column cannot also be a predictor"),
            ));
        }
        if !seen.insert(col) {
            return Err((
                key,
                format!("'{col}' is listed twice; list each predictor once, under one role"),
            ));
        }
    }
    let mut logged: HashSet<&str> = HashSet::new();
    for col in &spec.log {
        if *col == spec.response {
            return Err((
                "log",
                format!("'{col}' is the response; for a log response write transform = \"log\""),
            ));
        }
        if spec.categorical.iter().any(|c| c.column == *col) {
            return Err((
                "log",
                format!("'{col}' is a categorical predictor; only numbers have logs"),
            ));
        }
        if !logged.insert(col) {
            return Err(("log", format!("'{col}' is listed twice")));
        }
    }
    for lag in &spec.lags {
        if lag.column == spec.response {
            return Err((
                "lag",
                format!("'{}' is the response; a lag of the response is not a predictor here (its forecasts would feed on themselves); use trend and seasons, or lags of the drivers", lag.column),
            ));
        }
        if spec.categorical.iter().any(|c| c.column == lag.column) {
            return Err((
                "lag",
                format!(
                    "'{}' is a categorical predictor; lags are of numeric columns",
                    lag.column
                ),
            ));
        }
    }
    let time: Vec<&str> = spec
        .trend
        .iter()
        .map(String::as_str)
        .chain(spec.season.iter().map(|s| s.column.as_str()))
        .collect();
    if let (Some(date), Some(&other)) = (&spec.date, time.first()) {
        if date != other {
            return Err((
                "date",
                format!("'{date}' differs from the date column '{other}' of the trend or season; read them from one date column (or leave `date` out)"),
            ));
        }
    }
    if let [trend, season] = time[..] {
        if trend != season {
            return Err((
                "season",
                format!("the season column '{season}' differs from the trend column '{trend}'; read both from one date column"),
            ));
        }
    }
    if let (Some(fourier), Some(&date)) = (&spec.fourier, time.first()) {
        if fourier.column != date {
            return Err((
                "fourier.column",
                format!("'{}' differs from the date column '{date}' of the trend or season; read them from one date column", fourier.column),
            ));
        }
    }
    let time: Vec<&str> = spec.date_column().into_iter().collect();
    if time.is_empty() {
        if !spec.lags.is_empty() {
            return Err((
                "lag",
                "needs periods to count back: add `trend` or `season` with the date column (or `date` alone)".into(),
            ));
        }
        if let Some(event) = spec.events.first() {
            return Err((
                event.kind.key(),
                "needs periods: add `trend` or `season` with the date column (or `date` alone)"
                    .into(),
            ));
        }
    }
    if let Some(&date) = time.first() {
        if seen.contains(date)
            || logged.contains(date)
            || spec.lags.iter().any(|l| l.column == date)
        {
            return Err((
                if spec.trend.is_some() {
                    "trend"
                } else if spec.season.is_some() {
                    "season"
                } else {
                    "fourier.column"
                },
                format!("'{date}' is already the response or a predictor; the date column plays no other role"),
            ));
        }
    }
    if time.is_empty() {
        if spec.backtest.is_some() {
            return Err((
                "backtest",
                "needs periods: add `trend` or `season` with the date column (or `date` alone)"
                    .into(),
            ));
        }
        if matches!(spec.forecast, Some(ForecastSpec::Horizon { .. })) {
            return Err((
                "forecast.horizon",
                "needs periods to advance: add `trend` or `season` with the date column (or `date` alone), or use `plan_sheet`".into(),
            ));
        }
    }
    let mut pairs = HashSet::new();
    for (a, b) in &spec.interactions {
        for side in [a, b] {
            let known =
                spec.numeric.contains(side) || spec.categorical.iter().any(|c| c.column == *side);
            if !known {
                return Err((
                    "interactions",
                    format!("'{side}' is not a numeric or categorical predictor of this model; list it there first (an interaction needs its main effects)"),
                ));
            }
        }
        if a == b {
            return Err((
                "interactions",
                format!("['{a}', '{b}'] pairs a predictor with itself; use `poly` for powers"),
            ));
        }
        let key = if a < b { (a, b) } else { (b, a) };
        if !pairs.insert(key) {
            return Err(("interactions", format!("['{a}', '{b}'] is listed twice")));
        }
    }
    if spec.backtest == Some(0) {
        return Err(("backtest", "must be at least 1 period".into()));
    }
    if let Some(series) = &spec.series {
        if time.is_empty() {
            return Err((
                "series",
                "needs periods: add `trend` or `season` with the date column (or `date` alone)"
                    .into(),
            ));
        }
        if *series == spec.response || time.contains(&series.as_str()) {
            return Err((
                "series",
                format!("'{series}' is the response or the date column; name the column that identifies each series, such as store"),
            ));
        }
    }
    if let Some(crate::job::Robust::Hac(_)) = spec.standard_errors {
        if spec.date_column().is_none() {
            return Err((
                "standard_errors",
                "\"HAC\" (Newey-West) needs the rows in period order: add `trend` or `season` with the date column (or `date` alone), or use \"HC3\"".into(),
            ));
        }
    }
    if spec.errors == Errors::Ar1 {
        if spec.date_column().is_none() {
            return Err((
                "errors",
                "\"ar1\" needs the rows in period order: add `trend` or `season` with the date column (or `date` alone)".into(),
            ));
        }
        if spec.weights.is_some() {
            return Err((
                "errors",
                "\"ar1\" is not combined with `weights`: the errors' variance would change from row to row; remove one of the two".into(),
            ));
        }
        if spec.series.is_some() && spec.by.is_none() {
            return Err((
                "errors",
                "\"ar1\" fits one series of errors, but `series` names several; add `by` with the series column to fit each series on its own".into(),
            ));
        }
    }
    if let Some(by) = &spec.by {
        if spec.columns().any(|c| c == by) || spec.date_column() == Some(by.as_str()) {
            return Err((
                "by",
                format!("'{by}' is the response, a predictor or the date column; within one of its levels it would not vary: name a column that only splits the rows, such as store"),
            ));
        }
    }
    if let Some(weights) = &spec.weights {
        if *weights == spec.response || spec.date_column() == Some(weights.as_str()) {
            return Err((
                "weights",
                format!("'{weights}' is the response or the date column; name a column of positive weights"),
            ));
        }
    }
    if !(spec.new_row_weight > 0.0 && spec.new_row_weight.is_finite()) {
        return Err((
            "forecast.weight",
            format!(
                "{} is not a positive number; a new row's weight is above zero (default 1)",
                spec.new_row_weight
            ),
        ));
    }
    if spec.weights.is_none() && spec.new_row_weight != 1.0 {
        return Err((
            "forecast.weight",
            "goes with `weights`; without weights every row weighs 1".into(),
        ));
    }
    if let Some(ForecastSpec::Horizon { hold, .. }) = &spec.forecast {
        if let Some(series) = spec.series.as_ref().filter(|s| hold.contains_key(*s)) {
            return Err((
                "forecast.hold",
                format!("gives '{series}', the series column: the forecast has rows for each series; remove it"),
            ));
        }
        let predictors: Vec<&str> = spec.held_columns().collect();
        if let Some(missing) = predictors.iter().find(|c| !hold.contains_key(**c)) {
            return Err((
                "forecast.hold",
                format!("has no value for the predictor '{missing}'; give every predictor a value, e.g. hold = {{ {missing} = ... }}"),
            ));
        }
        if let Some(extra) = hold.keys().find(|k| !predictors.contains(&k.as_str())) {
            return Err((
                "forecast.hold",
                format!(
                    "'{extra}' is not a predictor of this model; the predictors are: {}",
                    predictors.join(", ")
                ),
            ));
        }
    }
    if spec.columns().nth(1).is_none()
        && spec.events.is_empty()
        && time.is_empty()
        && !spec.intercept
    {
        return Err((
            "intercept",
            "the model has no predictors and no intercept; add a predictor".into(),
        ));
    }
    Ok(())
}
