//! The errors that stop one model: its columns do not fit its roles. Each
//! names the model, the file and sheet, the cell and its value, and what to
//! write in the job or the sheet.

use crate::source::CellRef;

/// An error that stops one model: its columns do not fit its roles.
#[derive(Debug, thiserror::Error)]
pub enum DesignError {
    /// A column named in the job is not in the table.
    #[error("model '{model}': {place} has no column '{column}'{suggestion}; its columns are: {available}")]
    NoSuchColumn {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The missing column.
        column: String,
        /// ", did you mean 'x'?" or nothing.
        suggestion: String,
        /// The table's column names.
        available: String,
    },
    /// A cell in a numeric column holds something that is not a number.
    #[error("model '{model}': {place}, cell {cell} in numeric column '{column}' holds {kind} '{value}', not a number{hint}; correct the cell, clear it to leave the row out, or list the column under `categorical`")]
    NotANumber {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The kind of value found.
        kind: &'static str,
        /// The value as text.
        value: String,
        /// A hint when the text looks like a number stored as text.
        hint: &'static str,
    },
    /// A cell holds an error value such as `#N/A`.
    #[error("model '{model}': {place}, cell {cell} in column '{column}' holds the error value {value}; fix the formula or clear the cell to leave the row out")]
    ErrorCell {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The error text.
        value: String,
    },
    /// A number that is not finite.
    #[error("model '{model}': {place}, cell {cell} in column '{column}' holds {value}, which is not a finite number; correct the cell, or clear it to leave the row out")]
    NotFinite {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value.
        value: f64,
    },
    /// The baseline named in the job is not a level of the column.
    #[error("model '{model}': baseline '{baseline}' is not a level of column '{column}' in the rows used; its levels are: {levels}")]
    NoSuchBaseline {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// The baseline asked for.
        baseline: String,
        /// The levels found, quoted.
        levels: String,
    },
    /// A cell of the date column is not a date or period.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds {kind} '{value}', not a date; use a date cell, an ISO date such as 2024-07-01, a period such as 2024-07, Jan-2024, 2024M01, 2024-Q3 or Q3 2024, or a year such as 1935")]
    NotADate {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The kind of value found.
        kind: &'static str,
        /// The value as text.
        value: String,
    },
    /// A fiscal label the job cannot read.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which {why}")]
    FiscalLabel {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The text.
        value: String,
        /// Why and what to do.
        why: &'static str,
    },
    /// Two-digit years that cannot be one series.
    #[error("model '{model}': {place}, date column '{column}' writes years with two digits, read as 1970 to 2069: {low} is {low_year} and {high} is {high_year}, too far apart to be one series; write the years with four digits")]
    TwoDigitYears {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The earliest label and its cell.
        low: String,
        /// Its year.
        low_year: i64,
        /// The latest label and its cell.
        high: String,
        /// Its year.
        high_year: i64,
    },
    /// A date written with slashes reads both ways round.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which reads as {day_first} (day first) or as {month_first} (month first), and no date of the column tells which; write `date_order = \"dmy\"` or `date_order = \"mdy\"` under [input]")]
    AmbiguousDate {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The text.
        value: String,
        /// The reading with the day first, in words.
        day_first: String,
        /// The reading with the month first, in words.
        month_first: String,
    },
    /// The dates fit no frequency.
    #[error("model '{model}': cannot tell the period of date column '{column}': the smallest gap between dates is {gap} days; set `frequency` (day, week, month, quarter or year) in the model")]
    UnknownFrequency {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// Smallest gap in days.
        gap: i64,
    },
    /// A period label of another frequency than the series.
    #[error("model '{model}': {place}, cell {cell} in date column '{column}' holds '{value}', which is not a {frequency}; the series is by {frequency}, so write every period in the same way")]
    MixedFrequency {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value as text.
        value: String,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// A single series with two rows in one period.
    #[error("model '{model}': {place}: cells {first} and {second} are both in period {period}; a single series has one row per period (remove the duplicate, or set `frequency` if the dates are finer than it)")]
    DuplicatePeriod {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The period label.
        period: String,
        /// The first cell.
        first: CellRef,
        /// The second cell.
        second: CellRef,
    },
    /// A season finer than the data.
    #[error("model '{model}': seasons by {by} need dates finer than a {frequency}; use a coarser season or daily dates")]
    SeasonTooFine {
        /// The model.
        model: String,
        /// The season.
        by: &'static str,
        /// The series' frequency.
        frequency: &'static str,
    },
    /// A predictor listed under `log` with a value at or below zero.
    #[error("model '{model}': {place}, cell {cell} in '{column}' holds {value}, and {count} cells of the column are at or below zero; `log` needs every value above zero: correct or clear those cells, or take '{column}' off `log`")]
    LogNotPositive {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The first such cell.
        cell: CellRef,
        /// Its value.
        value: f64,
        /// How many cells of the rows used are at or below zero.
        count: usize,
    },
    /// An event's period is of another frequency than the date column.
    #[error("model '{model}', key `{key}`: '{written}' is not a {frequency} like the periods of the date column; write a {frequency} such as {example}")]
    EventPeriod {
        /// The model.
        model: String,
        /// The job key, e.g. `step.new_law`.
        key: String,
        /// The period as written.
        written: String,
        /// The date column's frequency.
        frequency: &'static str,
        /// A period of that frequency, written as the tool writes it.
        example: String,
    },
    /// Fourier seasons whose cycle is not longer than a period, or with
    /// more pairs than the cycle has room for.
    #[error("model '{model}', key `fourier`: {why}")]
    Fourier {
        /// The model.
        model: String,
        /// What is wrong and what to write.
        why: String,
    },
    /// Lags of a sheet with several rows in one period.
    #[error("model '{model}': lags need one row per period, but period {period} has several rows ({first} and {second}); fit one series per model (filter the sheet), or leave out `lag`")]
    LagsOfPanel {
        /// The model.
        model: String,
        /// The period.
        period: String,
        /// One of its rows.
        first: CellRef,
        /// Another.
        second: CellRef,
    },
    /// A weight that is not a number above zero.
    #[error("model '{model}': {place}, cell {cell} in weights column '{column}' holds '{value}'; weights must be numbers above zero: correct the cell, or clear it to leave the row out")]
    NotAWeight {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value as text.
        value: String,
    },
    /// Newey-West standard errors of panel data.
    #[error("model '{model}': standard_errors = \"HAC\" needs one series in period order, but several rows share a period (panel data), whose correlation across series Newey-West does not cover; fit one series per model (`by`), or use \"HC3\"")]
    HacOfPanel {
        /// The model.
        model: String,
    },
    /// AR(1) errors of panel data.
    #[error("model '{model}': errors = \"ar1\" needs one series in period order, but several rows share a period (panel data); fit one series per model with `by`, or leave `errors` out")]
    Ar1OfPanel {
        /// The model.
        model: String,
    },
    /// A response that cannot be logged.
    #[error("model '{model}': {place}, cell {cell} in response '{column}' holds {value}; `transform = \"log\"` needs every response value above zero")]
    NotPositive {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The cell.
        cell: CellRef,
        /// The value.
        value: f64,
    },
    /// Every row has a blank in at least one used column.
    #[error("model '{model}': no usable rows in {place}: every row has a blank cell in at least one of the columns {columns}")]
    NoUsableRows {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The columns the model uses, quoted.
        columns: String,
    },
    /// A categorical column has more levels than a regression can use.
    #[error("model '{model}': categorical column '{column}' in {place} has {levels} levels in the {rows} rows used, {why}; a predictor with that many levels is an identifier rather than a category (list it nowhere, or group its levels into fewer), or raise `max_levels` under [input] if the levels are genuine")]
    TooManyLevels {
        /// The model.
        model: String,
        /// Where the column is, in words.
        place: String,
        /// The column.
        column: String,
        /// Its level count.
        levels: usize,
        /// Rows used.
        rows: usize,
        /// Which limit, in words.
        why: String,
    },
    /// Two levels differ only in case or inner spaces.
    #[error("model '{model}': {place}, categorical column '{column}' has the levels {first} and {second}, which differ only in case or spaces; write them alike in the sheet, or write `case_sensitive_levels = true` under [input] if they are truly different levels")]
    LevelsDifferInCase {
        /// The model.
        model: String,
        /// Sheet and file.
        place: String,
        /// The column.
        column: String,
        /// The first label and its first cell.
        first: String,
        /// The other label and its first cell.
        second: String,
    },
    /// A categorical column has a single level in the rows used.
    #[error("model '{model}': categorical column '{column}' has only one level ('{level}') in the rows used; a categorical predictor needs two or more levels")]
    OneLevel {
        /// The model.
        model: String,
        /// The column.
        column: String,
        /// Its only level.
        level: String,
    },
}
