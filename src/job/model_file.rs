//! One `[[model]]` table exactly as written, before any checks.

use indexmap::IndexMap;
use serde::Deserialize;

use super::input;

/// One `[[model]]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelFile {
    /// Name shown in the report; unique within the job.
    pub name: String,
    /// The response column.
    pub response: String,
    /// Numeric predictor columns, each entering as one term.
    #[serde(default, deserialize_with = "column_names")]
    pub numeric: Vec<String>,
    /// Polynomial predictors, as a table `column = degree`: the column and
    /// its powers up to the degree, each with a coefficient, tested as one
    /// term. Powers are formed in double-double precision.
    #[serde(default)]
    pub poly: IndexMap<String, u32>,
    /// Categorical predictor columns: a list of names (baseline = first
    /// level in sorted order) or a table `column = "baseline level"`.
    #[serde(default)]
    pub categorical: Option<CategoricalFile>,
    /// Fit an intercept; default true.
    pub intercept: Option<bool>,
    /// Confidence level for intervals, strictly between 0 and 1; default 0.95.
    pub confidence: Option<f64>,
    /// A date column: the model gains a `trend` term, the period index
    /// 1, 2, … counted in periods from the first one; rows are sorted by it.
    pub trend: Option<String>,
    /// A date column that only orders the rows and counts periods, for a
    /// model without a trend or seasons (events, lags, AR(1) errors).
    pub date: Option<String>,
    /// Seasonal indicators from a date column.
    pub season: Option<SeasonFile>,
    /// The period of the date column: day, week, month, quarter or year;
    /// told from the data when absent.
    pub frequency: Option<String>,
    /// `"log"` to fit the natural log of the response.
    pub transform: Option<String>,
    /// Refit without the last K periods and forecast them.
    pub backtest: Option<u32>,
    /// With `backtest`: also refit at each of the last K periods in turn and
    /// forecast one period ahead (rolling origin).
    pub backtest_rolling: Option<bool>,
    /// `false`: no suggested smaller model for this model.
    pub suggest: Option<bool>,
    /// Forecast rows for the periods after the data.
    pub forecast: Option<ForecastFile>,
    /// Pairs of predictors (numeric or categorical) whose product enters
    /// the model, e.g. `[["region", "floor_area"]]`.
    #[serde(default)]
    pub interactions: Vec<[String; 2]>,
    /// `"HC3"` or `"HC1"` for heteroscedasticity-consistent standard
    /// errors of the coefficients; default the classical ones.
    pub standard_errors: Option<String>,
    /// Predictors entered as their natural log, each a term `ln(column)`.
    #[serde(default, deserialize_with = "column_names")]
    pub log: Vec<String>,
    /// Lags of predictors by period: `column = [1, 2]` (or one number).
    #[serde(default)]
    pub lag: IndexMap<String, OneOrMany<u32>>,
    /// Step events: `name = "period"`, 0 before that period and 1 from it.
    #[serde(default)]
    pub step: IndexMap<String, String>,
    /// Spike events: `name = ["period", ...]`, 1 in those periods only.
    #[serde(default)]
    pub spike: IndexMap<String, OneOrMany<String>>,
    /// Ramp events: `name = "period"`, 0 before, then 1, 2, 3, ...
    #[serde(default)]
    pub ramp: IndexMap<String, String>,
    /// Fourier seasons: sine and cosine pairs of the date column's cycle.
    pub fourier: Option<FourierFile>,
    /// Predictions for rows the job or a sheet describes.
    pub scenarios: Option<ScenariosFile>,
    /// The column naming each series of panel data (one row per series
    /// and period): lags are taken within a series, and forecasts made for
    /// each.
    pub series: Option<String>,
    /// A column of positive weights: weighted least squares.
    pub weights: Option<String>,
    /// A column whose levels each get their own fit of the model.
    pub by: Option<String>,
    /// With `standard_errors = "HAC"`: the lags of the Newey-West
    /// estimator; default floor(4 (n/100)^(2/9)).
    pub hac_lags: Option<u32>,
    /// `"ar1"`: also fit the model with AR(1) errors by exact maximum
    /// likelihood.
    pub errors: Option<String>,
}

/// The `[model.scenarios]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScenariosFile {
    /// A sheet of the input with one row per scenario: a `name` column and
    /// every predictor.
    pub sheet: Option<String>,
    /// With `sheet`: its row of column names, counted from 1; default 1.
    #[serde(default, deserialize_with = "input::row_number")]
    pub header_row: Option<u32>,
    /// Scenarios written in the job: `{ name = "...", column = value, ... }`.
    #[serde(default)]
    pub rows: Vec<IndexMap<String, toml::Value>>,
    /// With `weights`: the weight of a scenario in its prediction interval,
    /// as `forecast.weight`; default 1.
    pub weight: Option<f64>,
}

/// The `fourier` table of a model.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FourierFile {
    /// The date column.
    pub column: String,
    /// The cycle: `year` (or `week`, for daily data).
    pub period: String,
    /// How many sine and cosine pairs.
    pub pairs: u32,
}

/// One value or a list of them.
#[derive(Debug, Deserialize)]
#[serde(untagged)]
pub enum OneOrMany<T> {
    /// `x = 1`
    One(T),
    /// `x = [1, 2]`
    Many(Vec<T>),
}

impl<T> OneOrMany<T> {
    /// The values as a list.
    pub fn into_vec(self) -> Vec<T> {
        match self {
            OneOrMany::One(v) => vec![v],
            OneOrMany::Many(v) => v,
        }
    }
}

/// The `season` table of a model.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SeasonFile {
    /// The date column seasons are read from.
    pub column: String,
    /// `month`, `quarter` or `weekday`.
    pub by: String,
    /// The baseline season, by label (`"Jan"`, `"Q1"`, `"Mon"`) or number
    /// (1 = the first); default the first.
    pub baseline: Option<toml::Value>,
}

/// The `[model.forecast]` table.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ForecastFile {
    /// Forecast this many periods after the last one in the data.
    pub horizon: Option<u32>,
    /// Read the forecast rows (date column and predictors) from this sheet
    /// of the input workbook instead.
    pub plan_sheet: Option<String>,
    /// With `plan_sheet`: the plan sheet's row of column names, counted
    /// from 1; default 1.
    #[serde(default, deserialize_with = "input::row_number")]
    pub plan_header_row: Option<u32>,
    /// With `horizon`: the value of each predictor in the forecast rows.
    #[serde(default)]
    pub hold: IndexMap<String, toml::Value>,
    /// With `weights`: the weight of a new row in its prediction interval;
    /// default 1.
    pub weight: Option<f64>,
}

/// `numeric = [...]`: a list of column names; any other shape is refused
/// with a message saying what to write.
fn column_names<'de, D: serde::Deserializer<'de>>(d: D) -> Result<Vec<String>, D::Error> {
    #[derive(Deserialize)]
    #[serde(untagged, expecting = "a list of column names, such as [\"price\"]")]
    enum Names {
        List(Vec<String>),
    }
    let Names::List(names) = Names::deserialize(d)?;
    Ok(names)
}

/// The two spellings of `categorical`.
#[derive(Debug, Deserialize)]
#[serde(
    untagged,
    expecting = "a list of column names, such as [\"region\"], or a table of baselines, such as { region = \"North\" }"
)]
pub enum CategoricalFile {
    /// `categorical = ["region", "format"]`
    Names(Vec<String>),
    /// `categorical = { region = "North" }`
    Baselines(IndexMap<String, String>),
}
