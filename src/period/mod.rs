//! Calendar periods: reading dates and period labels from cells, telling
//! the frequency of a series, and counting periods for trends and seasons.
//!
//! A date column becomes a sequence of [`Period`]s of one [`Frequency`].
//! The trend index of a row is the number of periods from the first period,
//! plus one, so gaps keep their spacing and rows in the same period share an
//! index. Seasons (month, quarter, weekday) come from the period too.

use std::fmt;

use chrono::{Datelike, NaiveDate, Weekday};

mod labels;

pub use labels::{
    has_two_digit_year, month_of_name, order_of, read_label, DateOrder, LabelRules, StampError,
};

/// How often a series is observed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Frequency {
    /// One row (or one group of rows) per day.
    Day,
    /// Per ISO week (Monday to Sunday).
    Week,
    /// Per calendar month.
    Month,
    /// Per calendar quarter.
    Quarter,
    /// Per calendar year.
    Year,
}

impl Frequency {
    /// Parses `day`, `week`, `month`, `quarter` or `year`.
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "day" | "daily" => Some(Frequency::Day),
            "week" | "weekly" => Some(Frequency::Week),
            "month" | "monthly" => Some(Frequency::Month),
            "quarter" | "quarterly" => Some(Frequency::Quarter),
            "year" | "yearly" | "annual" => Some(Frequency::Year),
            _ => None,
        }
    }

    /// The frequency's name in words.
    pub fn name(self) -> &'static str {
        match self {
            Frequency::Day => "day",
            Frequency::Week => "week",
            Frequency::Month => "month",
            Frequency::Quarter => "quarter",
            Frequency::Year => "year",
        }
    }
}

/// One period of a given frequency, as a count from a fixed origin: days
/// since 0001-01-01 (day), ISO weeks since the week of 0001-01-01 (week),
/// months since January of year 0 (month), quarters since year 0 (quarter),
/// or the year itself.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct Period {
    /// The frequency.
    pub frequency: Frequency,
    /// Periods since the frequency's origin. Months and quarters count
    /// calendar months and quarters whatever the fiscal year; a year is the
    /// fiscal year's number when there is one.
    pub ordinal: i64,
    /// The month the fiscal year starts in (2-12), or 0 for the calendar
    /// year: it decides how the period is labelled ("FY2025 P01") and how
    /// its seasons are counted.
    pub fiscal: u8,
    /// For weeks, the weekday they start on, 1 (Monday) to 7 (Sunday), as
    /// the series' own dates fall: a week is then labelled by its first day
    /// and its month and quarter are that day's. 0 for ISO weeks (from
    /// Monday), labelled "2024-W05", as weeks written that way are read.
    pub week_start: u8,
}

/// A period is written as its label ("2024-03", "2024-Q1", ...).
impl serde::Serialize for Period {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

impl Period {
    /// The period of `frequency` holding `date`, in the calendar year (ISO
    /// weeks for weeks).
    pub fn of_date(date: NaiveDate, frequency: Frequency) -> Self {
        Period::first_of(frequency).holding(date)
    }

    /// The period of `frequency` with ordinal 0, in the calendar year (ISO
    /// weeks for weeks): a calendar to which other settings are added.
    pub fn first_of(frequency: Frequency) -> Self {
        Period {
            frequency,
            ordinal: 0,
            fiscal: 0,
            week_start: 0,
        }
    }

    /// The period of this period's calendar (its frequency, fiscal year and
    /// week start) that holds `date`. A fiscal year is named by the calendar
    /// year it ends in: with `fiscal` = 4, FY2025 runs from April 2024 to
    /// March 2025.
    pub fn holding(self, date: NaiveDate) -> Self {
        let days = i64::from(date.num_days_from_ce());
        let fiscal = self.fiscal;
        let ordinal = match self.frequency {
            Frequency::Day => days,
            // Day 1 of the common era was a Monday.
            Frequency::Week => (days - 1 - self.week_offset()).div_euclid(7),
            Frequency::Month => i64::from(date.year()) * 12 + i64::from(date.month0()),
            Frequency::Quarter => i64::from(date.year()) * 4 + i64::from(date.month0() / 3),
            Frequency::Year => {
                i64::from(date.year()) + i64::from(fiscal > 1 && date.month() >= u32::from(fiscal))
            }
        };
        Period { ordinal, ..self }
    }

    /// Days from Monday to the weekday weeks start on.
    fn week_offset(self) -> i64 {
        i64::from(self.week_start.saturating_sub(1))
    }

    /// The period `n` periods after this one.
    pub fn plus(self, n: i64) -> Self {
        Period {
            ordinal: self.ordinal + n,
            ..self
        }
    }

    /// The fiscal year (named by the year it ends in) and the month of it
    /// (from 1) that this period's first day falls in.
    fn fiscal_year_and_month(self) -> (i64, u32) {
        let start = self.start();
        let fiscal = u32::from(self.fiscal);
        let (y, m) = (i64::from(start.year()), start.month());
        if fiscal <= 1 {
            return (y, m);
        }
        let year = y + i64::from(m >= fiscal);
        (year, (m + 12 - fiscal) % 12 + 1)
    }

    /// The first day of the period.
    pub fn start(self) -> NaiveDate {
        let from_days = |d: i64| {
            i32::try_from(d)
                .ok()
                .and_then(NaiveDate::from_num_days_from_ce_opt)
                .unwrap_or(NaiveDate::MIN)
        };
        let ymd = |y: i64, m: i64| {
            i32::try_from(y)
                .ok()
                .and_then(|y| NaiveDate::from_ymd_opt(y, m as u32 + 1, 1))
                .unwrap_or(NaiveDate::MIN)
        };
        match self.frequency {
            Frequency::Day => from_days(self.ordinal),
            Frequency::Week => from_days(self.ordinal * 7 + 1 + self.week_offset()),
            Frequency::Month => ymd(self.ordinal.div_euclid(12), self.ordinal.rem_euclid(12)),
            Frequency::Quarter => ymd(self.ordinal.div_euclid(4), self.ordinal.rem_euclid(4) * 3),
            Frequency::Year if self.fiscal > 1 => ymd(self.ordinal - 1, i64::from(self.fiscal) - 1),
            Frequency::Year => ymd(self.ordinal, 0),
        }
    }

    /// The season of this period, counted from 1 (January, Q1, Monday), or
    /// `None` when the period is too coarse for it (a month has no weekday).
    pub fn season(self, by: SeasonBy) -> Option<u32> {
        let start = self.start();
        let (_, fiscal_month) = self.fiscal_year_and_month();
        match (by, self.frequency) {
            (SeasonBy::FiscalMonth, Frequency::Day | Frequency::Week | Frequency::Month) => {
                Some(fiscal_month)
            }
            (SeasonBy::FiscalQuarter, Frequency::Day | Frequency::Week | Frequency::Month) => {
                Some((fiscal_month - 1) / 3 + 1)
            }
            // A calendar quarter lies in one fiscal quarter only when the
            // fiscal year starts with a calendar quarter.
            (SeasonBy::FiscalQuarter, Frequency::Quarter) if (fiscal_month - 1) % 3 == 0 => {
                Some((fiscal_month - 1) / 3 + 1)
            }
            (SeasonBy::FiscalMonth | SeasonBy::FiscalQuarter, _) => None,
            (SeasonBy::Month, Frequency::Day | Frequency::Week | Frequency::Month) => {
                Some(start.month())
            }
            (SeasonBy::Quarter, Frequency::Year) | (SeasonBy::Month, _) => None,
            (SeasonBy::Quarter, _) => Some(start.month0() / 3 + 1),
            (SeasonBy::Weekday, Frequency::Day) => Some(start.weekday().number_from_monday()),
            (SeasonBy::Weekday, _) => None,
        }
    }
}

impl fmt::Display for Period {
    /// "2024-07-15" (day, and a week by its first day), "2024-W05" (ISO
    /// week), "2024-07" (month),
    /// "2024-Q3" (quarter), "2024" (year).
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let start = self.start();
        if self.fiscal > 1 {
            let (year, month) = self.fiscal_year_and_month();
            match self.frequency {
                Frequency::Month => return write!(f, "FY{year} P{month:02}"),
                Frequency::Quarter if (month - 1) % 3 == 0 => {
                    return write!(f, "FY{year} Q{}", (month - 1) / 3 + 1)
                }
                Frequency::Year => return write!(f, "FY{}", self.ordinal),
                _ => {}
            }
        }
        match self.frequency {
            Frequency::Day => write!(f, "{start}"),
            Frequency::Week if self.week_start > 0 => write!(f, "{start}"),
            Frequency::Week => {
                let w = start.iso_week();
                write!(f, "{}-W{:02}", w.year(), w.week())
            }
            Frequency::Month => write!(f, "{}-{:02}", start.year(), start.month()),
            Frequency::Quarter => write!(f, "{}-Q{}", start.year(), start.month0() / 3 + 1),
            Frequency::Year => write!(f, "{}", start.year()),
        }
    }
}

/// What a date cell says: a calendar date, or a period written as text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stamp {
    /// A calendar day.
    Date(NaiveDate),
    /// A period label such as "2024-Q3" or "2024-07".
    Label(Period),
}

impl Stamp {
    /// The period of the stamp in the calendar of `like` (its frequency,
    /// fiscal year and week start); `None` for a period label of any other
    /// frequency (a quarter label in a monthly series, or a month label in
    /// a quarterly one). A yearly label read as a calendar year stays that
    /// year's number; an ISO week label in a series of weeks from another
    /// weekday is the week holding its Monday.
    pub fn period_like(self, like: Period) -> Option<Period> {
        match self {
            Stamp::Date(d) => Some(like.holding(d)),
            Stamp::Label(p) if p.frequency != like.frequency => None,
            Stamp::Label(p)
                if p.frequency == Frequency::Week && p.week_start != like.week_start =>
            {
                Some(like.holding(p.start()))
            }
            Stamp::Label(p) => Some(Period {
                fiscal: like.fiscal,
                week_start: like.week_start,
                ..p
            }),
        }
    }
}

/// Reads a date from cell text: ISO dates ("2024-07-15", optionally with a
/// time), ISO weeks ("2024-W05"), months ("2024-07"), quarters ("2024-Q3",
/// "2024Q3"), years ("2024"), and the labels [`read_label`] reads; `None`
/// for anything else, an ambiguous slash date included.
pub fn parse_stamp(text: &str) -> Option<Stamp> {
    read_stamp(text, &LabelRules::default()).ok()
}

/// [`parse_stamp`] under the job's `rules` (the order of an ambiguous
/// slash date such as "03/04/2024", and the fiscal year of labels such as
/// "FY2025 P03"), saying why a text is not a date.
pub fn read_stamp(text: &str, rules: &LabelRules) -> Result<Stamp, StampError> {
    let t = text.trim();
    let date_part = t.split(['T', ' ']).next().unwrap_or(t);
    if let Ok(d) = NaiveDate::parse_from_str(date_part, "%Y-%m-%d") {
        return Ok(Stamp::Date(d));
    }
    let upper = t.to_ascii_uppercase();
    let label = |frequency, ordinal| {
        Some(Stamp::Label(Period {
            frequency,
            ordinal,
            fiscal: 0,
            week_start: 0,
        }))
    };
    let iso = || -> Option<Stamp> {
        if let Some((y, q)) = upper.split_once('Q') {
            let y: i64 = y.trim_end_matches('-').parse().ok()?;
            let q: i64 = q.parse().ok().filter(|q| (1..=4).contains(q))?;
            return label(Frequency::Quarter, y * 4 + q - 1);
        }
        if let Some((y, w)) = upper.split_once("-W") {
            let y: i32 = y.parse().ok()?;
            let w: u32 = w.parse().ok()?;
            let monday = NaiveDate::from_isoywd_opt(y, w, Weekday::Mon)?;
            return Some(Stamp::Label(Period::of_date(monday, Frequency::Week)));
        }
        if let Some((y, m)) = t.split_once('-') {
            let y: i64 = y.parse().ok()?;
            let m: i64 = m.parse().ok().filter(|m| (1..=12).contains(m))?;
            return label(Frequency::Month, y * 12 + m - 1);
        }
        if t.len() == 4 {
            let y: i64 = t.parse().ok()?;
            return label(Frequency::Year, y);
        }
        None
    };
    match iso() {
        Some(stamp) => Ok(stamp),
        None => read_label(t, rules),
    }
}

/// A whole number of four digits in a cell, read as a year (1935 for
/// yearly data); `None` for any other number.
pub fn year_of_number(x: f64) -> Option<Stamp> {
    (x.fract() == 0.0 && (1000.0..=9999.0).contains(&x)).then_some(Stamp::Label(Period {
        frequency: Frequency::Year,
        ordinal: x as i64,
        fiscal: 0,
        week_start: 0,
    }))
}

/// What seasons are counted by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SeasonBy {
    /// Twelve months, labelled Jan..Dec.
    Month,
    /// Four quarters, Q1..Q4.
    Quarter,
    /// Seven days, Mon..Sun.
    Weekday,
    /// The twelve months of a fiscal year, P01..P12 (P01 its first month).
    FiscalMonth,
    /// The four quarters of a fiscal year, FQ1..FQ4.
    FiscalQuarter,
}

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];
const QUARTERS: [&str; 4] = ["Q1", "Q2", "Q3", "Q4"];
const WEEKDAYS: [&str; 7] = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];
const FISCAL_MONTHS: [&str; 12] = [
    "P01", "P02", "P03", "P04", "P05", "P06", "P07", "P08", "P09", "P10", "P11", "P12",
];
const FISCAL_QUARTERS: [&str; 4] = ["FQ1", "FQ2", "FQ3", "FQ4"];

impl SeasonBy {
    /// Parses `month`, `quarter` or `weekday`.
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "month" => Some(SeasonBy::Month),
            "quarter" => Some(SeasonBy::Quarter),
            "weekday" | "day" => Some(SeasonBy::Weekday),
            _ => None,
        }
    }

    /// The season labels in cycle order.
    pub fn labels(self) -> &'static [&'static str] {
        match self {
            SeasonBy::Month => &MONTHS,
            SeasonBy::Quarter => &QUARTERS,
            SeasonBy::Weekday => &WEEKDAYS,
            SeasonBy::FiscalMonth => &FISCAL_MONTHS,
            SeasonBy::FiscalQuarter => &FISCAL_QUARTERS,
        }
    }

    /// This season counted within a fiscal year starting in month `fiscal`
    /// (months and quarters become fiscal periods; 0 or 1 leaves it).
    pub fn in_fiscal_year(self, fiscal: u8) -> Self {
        match self {
            SeasonBy::Month if fiscal > 1 => SeasonBy::FiscalMonth,
            SeasonBy::Quarter if fiscal > 1 => SeasonBy::FiscalQuarter,
            other => other,
        }
    }

    /// The season (from 1) named by `text`: its label in any case
    /// ("jan", "Q3", "Mon") or its number ("1", "3").
    pub fn season_of(self, text: &str) -> Option<u32> {
        let labels = self.labels();
        let t = text.trim();
        if let Ok(n) = t.parse::<u32>() {
            return (1..=labels.len() as u32).contains(&n).then_some(n);
        }
        labels
            .iter()
            .position(|l| l.eq_ignore_ascii_case(t))
            .map(|i| i as u32 + 1)
    }

    /// The season's name in words.
    pub fn name(self) -> &'static str {
        match self {
            SeasonBy::Month => "month",
            SeasonBy::Quarter => "quarter",
            SeasonBy::Weekday => "weekday",
            SeasonBy::FiscalMonth => "fiscal month",
            SeasonBy::FiscalQuarter => "fiscal quarter",
        }
    }
}

/// Tells the frequency of a series from its stamps: the most common
/// frequency of its period labels (so one odd label is the one reported),
/// or from the smallest gap between distinct dates (1 day, 7 days, 28–31,
/// 89–92, 365–366). `Err` holds the smallest gap in days when it fits no
/// frequency.
pub fn detect_frequency(stamps: &[Stamp]) -> Result<Option<Frequency>, i64> {
    let mut counts = std::collections::BTreeMap::<Frequency, usize>::new();
    for s in stamps {
        if let Stamp::Label(p) = s {
            *counts.entry(p.frequency).or_default() += 1;
        }
    }
    if let Some((f, _)) = counts.iter().max_by_key(|(_, n)| **n) {
        return Ok(Some(*f));
    }
    let mut days: Vec<i64> = stamps
        .iter()
        .filter_map(|s| match s {
            Stamp::Date(d) => Some(i64::from(d.num_days_from_ce())),
            Stamp::Label(_) => None,
        })
        .collect();
    days.sort_unstable();
    days.dedup();
    let Some(gap) = days.windows(2).map(|w| w[1] - w[0]).min() else {
        return Ok(None);
    };
    match gap {
        1..=6 => Ok(Some(Frequency::Day)),
        7 => Ok(Some(Frequency::Week)),
        28..=31 => Ok(Some(Frequency::Month)),
        89..=92 => Ok(Some(Frequency::Quarter)),
        365..=366 => Ok(Some(Frequency::Year)),
        other => Err(other),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn date(y: i32, m: u32, d: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, d).unwrap()
    }

    #[test]
    fn labels_round_trip_through_periods() {
        for (text, label) in [
            ("2024-07-15", "2024-07-15"),
            ("2024-07", "2024-07"),
            ("2024-Q3", "2024-Q3"),
            ("2024q3", "2024-Q3"),
            ("2024-W05", "2024-W05"),
            ("2024", "2024"),
        ] {
            let stamp = parse_stamp(text).unwrap_or_else(|| panic!("{text}"));
            let period = match stamp {
                Stamp::Date(d) => Period::of_date(d, Frequency::Day),
                Stamp::Label(p) => p,
            };
            assert_eq!(period.to_string(), label, "{text}");
        }
        assert_eq!(parse_stamp("2024-13"), None);
        assert_eq!(parse_stamp("n/a"), None);
        assert_eq!(parse_stamp("2024-Q5"), None);
    }

    #[test]
    fn periods_advance_across_year_ends() {
        let dec = Period::of_date(date(2025, 12, 1), Frequency::Month);
        assert_eq!(dec.plus(1).to_string(), "2026-01");
        assert_eq!(dec.plus(14).to_string(), "2027-02");
        let q4 = Period::of_date(date(2025, 11, 30), Frequency::Quarter);
        assert_eq!(q4.to_string(), "2025-Q4");
        assert_eq!(q4.plus(1).to_string(), "2026-Q1");
        let week = Period::of_date(date(2025, 12, 29), Frequency::Week);
        assert_eq!(week.to_string(), "2026-W01");
        assert_eq!(week.start(), date(2025, 12, 29));
    }

    #[test]
    fn weeks_from_a_weekday_start_on_it_and_take_its_month() {
        // Weeks from Sunday: Sunday 2023-01-01 starts a January week, whose
        // ISO week started on Monday 2022-12-26.
        let sundays = Period {
            week_start: 7,
            ..Period::first_of(Frequency::Week)
        };
        let week = sundays.holding(date(2023, 1, 1));
        assert_eq!(week.start(), date(2023, 1, 1));
        assert_eq!(week.to_string(), "2023-01-01");
        assert_eq!(week.season(SeasonBy::Month), Some(1));
        assert_eq!(
            Period::of_date(date(2023, 1, 1), Frequency::Week).season(SeasonBy::Month),
            Some(12)
        );
        // The next Saturday is in the same week; the next Sunday starts the
        // next one.
        assert_eq!(sundays.holding(date(2023, 1, 7)), week);
        assert_eq!(sundays.holding(date(2023, 1, 8)), week.plus(1));
        assert_eq!(week.plus(9).start(), date(2023, 3, 5));
        // An ISO week label read into the Sunday calendar: the week holding
        // its Monday.
        let iso = parse_stamp("2023-W01").and_then(|s| s.period_like(sundays));
        assert_eq!(iso.map(Period::start), Some(date(2023, 1, 1)));
    }

    #[test]
    fn seasons_follow_the_calendar() {
        let m = Period::of_date(date(2024, 8, 10), Frequency::Month);
        assert_eq!(m.season(SeasonBy::Month), Some(8));
        assert_eq!(m.season(SeasonBy::Quarter), Some(3));
        assert_eq!(m.season(SeasonBy::Weekday), None);
        // 2024-08-10 was a Saturday.
        let d = Period::of_date(date(2024, 8, 10), Frequency::Day);
        assert_eq!(d.season(SeasonBy::Weekday), Some(6));
        assert_eq!(SeasonBy::Month.season_of("aug"), Some(8));
        assert_eq!(SeasonBy::Quarter.season_of("2"), Some(2));
        assert_eq!(SeasonBy::Quarter.season_of("5"), None);
    }

    #[test]
    fn frequency_is_told_from_the_smallest_gap() {
        let months: Vec<Stamp> = [(2024, 1), (2024, 2), (2024, 4)]
            .iter()
            .map(|&(y, m)| Stamp::Date(date(y, m, 1)))
            .collect();
        assert_eq!(detect_frequency(&months), Ok(Some(Frequency::Month)));
        let quarters = [Stamp::Date(date(2024, 1, 1)), Stamp::Date(date(2024, 4, 1))];
        assert_eq!(detect_frequency(&quarters), Ok(Some(Frequency::Quarter)));
        let odd = [
            Stamp::Date(date(2024, 1, 1)),
            Stamp::Date(date(2024, 1, 15)),
        ];
        assert_eq!(detect_frequency(&odd), Err(14));
    }
}
