//! Period labels as people type them: "Jan-2024", "January 2024",
//! "Jan-24", "2024M01", "2024-M01", "Q3 2024", "2024 Q3", "Q3-24", and
//! dates written with slashes ("15/03/2024", "03/15/2024", "2024/03/15").
//!
//! A two-digit year is read as 2000–2069 for 00–69 and 1970–1999 for
//! 70–99 (the pivot POSIX `strptime` uses for `%y`; common practice). A
//! slash date whose day and month could be swapped ("03/04/2024") is
//! ambiguous unless the job says which order its dates are written in.

use chrono::NaiveDate;

use super::{Frequency, Period, Stamp};

/// Which comes first in a date written with slashes or dots.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DateOrder {
    /// Day, month, year: 03/04/2024 is 3 April 2024.
    Dmy,
    /// Month, day, year: 03/04/2024 is 4 March 2024.
    Mdy,
}

impl DateOrder {
    /// Parses "dmy" or "mdy".
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "dmy" => Some(DateOrder::Dmy),
            "mdy" => Some(DateOrder::Mdy),
            _ => None,
        }
    }
}

/// How a job reads period labels: the order of slash dates and the month
/// its fiscal year starts in.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct LabelRules {
    /// How dates with slashes read; told from the column when `None`.
    pub date_order: Option<DateOrder>,
    /// The month the fiscal year starts in (2-12), or 0 for none.
    pub fiscal_start: u8,
}

/// Why a cell's text is not a date or period.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StampError {
    /// It reads as no date or period.
    Unknown,
    /// A fiscal label ("FY2024 P03") in a job without `fiscal_year_start`.
    NoFiscalYear,
    /// A fiscal quarter label when the fiscal year does not start with a
    /// calendar quarter.
    FiscalQuarter,
    /// Day and month could be either way round.
    Ambiguous {
        /// The reading with the day first.
        day_first: NaiveDate,
        /// The reading with the month first.
        month_first: NaiveDate,
    },
}

/// Month names in English, full and abbreviated, for January to December.
const MONTH_NAMES: [[&str; 2]; 12] = [
    ["JAN", "JANUARY"],
    ["FEB", "FEBRUARY"],
    ["MAR", "MARCH"],
    ["APR", "APRIL"],
    ["MAY", "MAY"],
    ["JUN", "JUNE"],
    ["JUL", "JULY"],
    ["AUG", "AUGUST"],
    ["SEP", "SEPTEMBER"],
    ["OCT", "OCTOBER"],
    ["NOV", "NOVEMBER"],
    ["DEC", "DECEMBER"],
];

/// The month (1–12) a name or abbreviation ("Sept" too) stands for.
pub fn month_of_name(name: &str) -> Option<u32> {
    let upper = name.to_ascii_uppercase();
    if upper == "SEPT" {
        return Some(9);
    }
    MONTH_NAMES
        .iter()
        .position(|names| names.contains(&upper.as_str()))
        .map(|i| i as u32 + 1)
}

/// A year of four digits, or of two read with the 1970–2069 pivot.
fn year(token: &str) -> Option<i64> {
    if !token.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let y: i64 = token.parse().ok()?;
    match token.len() {
        4 => Some(y),
        2 if y < 70 => Some(2000 + y),
        2 => Some(1900 + y),
        _ => None,
    }
}

/// Whether `text` is a label with a two-digit year ("Jan-24", "Q3-24").
pub fn has_two_digit_year(text: &str) -> bool {
    let Some(tokens) = tokens(text.trim()) else {
        return false;
    };
    let t: Vec<&str> = tokens.iter().map(String::as_str).collect();
    let two_digits = |y: &str| y.len() == 2 && y.bytes().all(|b| b.is_ascii_digit());
    match t.as_slice() {
        [name, y] => name.bytes().all(|b| b.is_ascii_alphabetic()) && two_digits(y),
        ["Q", _, y] => two_digits(y),
        _ => false,
    }
}

/// `text` split into runs of letters and runs of digits, upper-cased; any
/// other character separates runs. `None` when it holds anything but
/// letters, digits, spaces, dashes, slashes, dots and commas.
fn tokens(text: &str) -> Option<Vec<String>> {
    let mut out: Vec<String> = Vec::new();
    let mut kind = 0u8; // 0 none, 1 letters, 2 digits
    for c in text.chars() {
        let k = if c.is_ascii_alphabetic() {
            1
        } else if c.is_ascii_digit() {
            2
        } else if matches!(c, ' ' | '-' | '/' | '.' | ',' | '_') {
            0
        } else {
            return None;
        };
        if k == 0 {
            kind = 0;
            continue;
        }
        if k != kind {
            out.push(String::new());
            kind = k;
        }
        if let Some(last) = out.last_mut() {
            last.push(c.to_ascii_uppercase());
        }
    }
    Some(out)
}

fn label(frequency: Frequency, ordinal: i64) -> Result<Stamp, StampError> {
    Ok(Stamp::Label(Period {
        frequency,
        ordinal,
        fiscal: 0,
        week_start: 0,
    }))
}

/// A fiscal label's period: `FY{year}` alone, with `P{month}` or with
/// `Q{quarter}`, the year named by the calendar year the fiscal year ends
/// in.
fn fiscal_label(
    rules: &LabelRules,
    y: &str,
    part: Option<(&str, &str)>,
) -> Result<Stamp, StampError> {
    let start = i64::from(rules.fiscal_start);
    if start < 2 {
        return Err(StampError::NoFiscalYear);
    }
    let year = year(y).ok_or(StampError::Unknown)?;
    // The calendar month ordinal of the fiscal year's first month.
    let first = (year - 1) * 12 + start - 1;
    let period = |frequency, ordinal| {
        Ok(Stamp::Label(Period {
            frequency,
            ordinal,
            fiscal: rules.fiscal_start,
            week_start: 0,
        }))
    };
    match part {
        None => period(Frequency::Year, year),
        Some(("P", p)) => {
            let p = p.parse::<i64>().ok().filter(|p| (1..=12).contains(p));
            period(Frequency::Month, first + p.ok_or(StampError::Unknown)? - 1)
        }
        Some(("Q", q)) => {
            let q = q.parse::<i64>().ok().filter(|q| (1..=4).contains(q));
            if (start - 1) % 3 != 0 {
                return Err(StampError::FiscalQuarter);
            }
            period(
                Frequency::Quarter,
                (first + 3 * (q.ok_or(StampError::Unknown)? - 1)) / 3,
            )
        }
        _ => Err(StampError::Unknown),
    }
}

/// The period label or slash date in `text`, read under `rules`.
pub fn read_label(text: &str, rules: &LabelRules) -> Result<Stamp, StampError> {
    if let Some(stamp) = slash_date(text, rules.date_order)? {
        return Ok(stamp);
    }
    let tokens = tokens(text.trim()).ok_or(StampError::Unknown)?;
    let t: Vec<&str> = tokens.iter().map(String::as_str).collect();
    let number = |s: &str, range: std::ops::RangeInclusive<i64>| {
        s.parse::<i64>().ok().filter(|n| range.contains(n))
    };
    match t.as_slice() {
        // FY2024, FY24 P03, FY2024 Q1
        ["FY", y] => fiscal_label(rules, y, None),
        ["FY", y, part, n] => fiscal_label(rules, y, Some((part, n))),
        // 2024Q3, 2024-Q3, 2024 Q3
        [y, "Q", q] if y.len() == 4 => {
            let (y, q) = (year(y).ok_or(StampError::Unknown)?, number(q, 1..=4));
            label(
                Frequency::Quarter,
                y * 4 + q.ok_or(StampError::Unknown)? - 1,
            )
        }
        // Q3 2024, Q3-24
        ["Q", q, y] => {
            let (y, q) = (year(y).ok_or(StampError::Unknown)?, number(q, 1..=4));
            label(
                Frequency::Quarter,
                y * 4 + q.ok_or(StampError::Unknown)? - 1,
            )
        }
        // 2024M01, 2024-M01
        [y, "M", m] if y.len() == 4 => {
            let (y, m) = (year(y).ok_or(StampError::Unknown)?, number(m, 1..=12));
            label(Frequency::Month, y * 12 + m.ok_or(StampError::Unknown)? - 1)
        }
        // Jan-2024, Jan 2024, January 2024, Jan-24
        [name, y] if name.bytes().all(|b| b.is_ascii_alphabetic()) => {
            let m = i64::from(month_of_name(name).ok_or(StampError::Unknown)?);
            let y = year(y).ok_or(StampError::Unknown)?;
            label(Frequency::Month, y * 12 + m - 1)
        }
        _ => Err(StampError::Unknown),
    }
}

/// What a text of the shape d/m/y, m/d/y or y/m/d (slashes or dots)
/// holds.
enum SlashDate {
    /// Year first: one reading.
    YearFirst(Option<NaiveDate>),
    /// Year last: the reading with the day first and with the month first.
    YearLast(Option<NaiveDate>, Option<NaiveDate>),
}

/// The readings of `text` as a date with slashes or dots; `None` when it
/// is not of that shape.
fn slash_readings(text: &str) -> Option<SlashDate> {
    let t = text.trim();
    let separator = if t.contains('/') {
        '/'
    } else if t.matches('.').count() == 2 {
        '.'
    } else {
        return None;
    };
    let parts: Vec<&str> = t.split(separator).collect();
    let [a, b, c] = parts.as_slice() else {
        return None;
    };
    let all_digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if !(all_digits(a) && all_digits(b) && all_digits(c)) {
        return None;
    }
    let n = |s: &str| s.parse::<u32>().unwrap_or(0);
    if a.len() == 4 {
        return Some(SlashDate::YearFirst(NaiveDate::from_ymd_opt(
            n(a) as i32,
            n(b),
            n(c),
        )));
    }
    if c.len() != 4 {
        return Some(SlashDate::YearLast(None, None));
    }
    let y = n(c) as i32;
    Some(SlashDate::YearLast(
        NaiveDate::from_ymd_opt(y, n(b), n(a)),
        NaiveDate::from_ymd_opt(y, n(a), n(b)),
    ))
}

/// A date written with slashes or dots, read in `order` when it could be
/// either way round; `None` when `text` is not of that shape.
fn slash_date(text: &str, order: Option<DateOrder>) -> Result<Option<Stamp>, StampError> {
    let date = match slash_readings(text) {
        None => return Ok(None),
        Some(SlashDate::YearFirst(date)) => date.ok_or(StampError::Unknown)?,
        Some(SlashDate::YearLast(day_first, month_first)) => {
            match (day_first, month_first, order) {
                (Some(d), Some(m), _) if d == m => d,
                (Some(d), None, _) | (Some(d), Some(_), Some(DateOrder::Dmy)) => d,
                (None, Some(m), _) | (Some(_), Some(m), Some(DateOrder::Mdy)) => m,
                (Some(day_first), Some(month_first), None) => {
                    return Err(StampError::Ambiguous {
                        day_first,
                        month_first,
                    })
                }
                (None, None, _) => return Err(StampError::Unknown),
            }
        }
    };
    Ok(Some(Stamp::Date(date)))
}

/// Which order the slash dates among `texts` must be in: `Dmy` when some
/// read only day first and none only month first, `Mdy` the other way
/// round, `None` when none tells (or they disagree, which the cells then
/// report).
pub fn order_of(texts: impl Iterator<Item = impl AsRef<str>>) -> Option<DateOrder> {
    let (mut dmy, mut mdy) = (false, false);
    for text in texts {
        if let Some(SlashDate::YearLast(day_first, month_first)) = slash_readings(text.as_ref()) {
            match (day_first, month_first) {
                (Some(_), None) => dmy = true,
                (None, Some(_)) => mdy = true,
                _ => {}
            }
        }
    }
    match (dmy, mdy) {
        (true, false) => Some(DateOrder::Dmy),
        (false, true) => Some(DateOrder::Mdy),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rules(date_order: Option<DateOrder>, fiscal_start: u8) -> LabelRules {
        LabelRules {
            date_order,
            fiscal_start,
        }
    }

    #[test]
    fn fiscal_labels_name_the_year_they_end_in() {
        let april = rules(None, 4);
        let read = |text: &str| match read_label(text, &april).unwrap() {
            Stamp::Label(p) => (p.to_string(), p.start().to_string()),
            Stamp::Date(d) => (d.to_string(), String::new()),
        };
        assert_eq!(
            read("FY2025 P01"),
            ("FY2025 P01".into(), "2024-04-01".into())
        );
        assert_eq!(read("FY25 P12"), ("FY2025 P12".into(), "2025-03-01".into()));
        assert_eq!(read("FY2025 Q2"), ("FY2025 Q2".into(), "2024-07-01".into()));
        assert_eq!(read("FY2025"), ("FY2025".into(), "2024-04-01".into()));
        assert_eq!(
            read_label("FY2025 P01", &LabelRules::default()),
            Err(StampError::NoFiscalYear)
        );
        assert_eq!(
            read_label("FY2025 Q1", &rules(None, 2)),
            Err(StampError::FiscalQuarter)
        );
        let p = match read_label("FY2025 P10", &april).unwrap() {
            Stamp::Label(p) => p,
            Stamp::Date(_) => unreachable!(),
        };
        // P10 of FY2025 is January 2025: fiscal month 10, fiscal quarter 4.
        assert_eq!(p.season(super::super::SeasonBy::FiscalMonth), Some(10));
        assert_eq!(p.season(super::super::SeasonBy::FiscalQuarter), Some(4));
        assert_eq!(p.season(super::super::SeasonBy::Month), Some(1));
        assert_eq!(p.plus(3).to_string(), "FY2026 P01");
    }

    fn shown(text: &str) -> String {
        match read_label(text, &LabelRules::default()).unwrap_or_else(|e| panic!("{text}: {e:?}")) {
            Stamp::Label(p) => p.to_string(),
            Stamp::Date(d) => d.to_string(),
        }
    }

    #[test]
    fn labels_people_type_read_as_periods() {
        for (text, want) in [
            ("Jan-2024", "2024-01"),
            ("Jan 2024", "2024-01"),
            ("January 2024", "2024-01"),
            ("jan-24", "2024-01"),
            ("Sept 1999", "1999-09"),
            ("Dec-85", "1985-12"),
            ("2024M01", "2024-01"),
            ("2024-M12", "2024-12"),
            ("Q3 2024", "2024-Q3"),
            ("2024 Q3", "2024-Q3"),
            ("Q3-24", "2024-Q3"),
            ("15/03/2024", "2024-03-15"),
            ("03/15/2024", "2024-03-15"),
            ("2024/03/15", "2024-03-15"),
            ("15.03.2024", "2024-03-15"),
            ("04/04/2024", "2024-04-04"),
        ] {
            assert_eq!(shown(text), want, "{text}");
        }
        for text in [
            "Total 2024",
            "Jan",
            "Q5 2024",
            "2024M13",
            "Foo-24",
            "1/2/24",
            "32/01/2024",
        ] {
            assert!(read_label(text, &LabelRules::default()).is_err(), "{text}");
        }
    }

    #[test]
    fn only_labels_with_a_two_digit_year_say_so() {
        for text in ["Jan-24", "Q3-24", "q1 99"] {
            assert!(has_two_digit_year(text), "{text}");
        }
        for text in ["2023-01", "Jan-2024", "Q3 2024", "2024Q3", "2024M01"] {
            assert!(!has_two_digit_year(text), "{text}");
        }
    }

    #[test]
    fn a_slash_date_that_reads_both_ways_is_ambiguous_until_told() {
        assert_eq!(
            read_label("03/04/2024", &LabelRules::default()),
            Err(StampError::Ambiguous {
                day_first: NaiveDate::from_ymd_opt(2024, 4, 3).unwrap(),
                month_first: NaiveDate::from_ymd_opt(2024, 3, 4).unwrap(),
            })
        );
        assert_eq!(
            read_label("03/04/2024", &rules(Some(DateOrder::Dmy), 0)),
            Ok(Stamp::Date(NaiveDate::from_ymd_opt(2024, 4, 3).unwrap()))
        );
        assert_eq!(
            read_label("03/04/2024", &rules(Some(DateOrder::Mdy), 0)),
            Ok(Stamp::Date(NaiveDate::from_ymd_opt(2024, 3, 4).unwrap()))
        );
        assert_eq!(
            order_of(["03/04/2024", "25/04/2024"].iter()),
            Some(DateOrder::Dmy)
        );
        assert_eq!(
            order_of(["03/04/2024", "04/25/2024"].iter()),
            Some(DateOrder::Mdy)
        );
        assert_eq!(order_of(["03/04/2024"].iter()), None);
    }
}
