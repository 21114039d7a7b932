//! Numbers and sheet rows as short text, for messages, notes and verdicts.
//!
//! A foundation module: it imports nothing from the crate, so every stage
//! may use it.

/// `x` rounded to `digits` significant digits, in plain or scientific
/// notation, whichever reads better.
pub fn significant(x: f64, digits: usize) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let exponent = x.abs().log10().floor() as i32;
    if !(-4..=9).contains(&exponent) {
        return format!("{:.*e}", digits.saturating_sub(1), x);
    }
    let decimals = (digits as i32 - 1 - exponent).max(0) as usize;
    format!("{x:.decimals$}")
}

/// `x` as a reader would write it in a sentence: three significant digits
/// without trailing zeros, whole numbers with thousands separators from
/// 1,000 on ("0.045", "12.3", "4,518", "-1,200,000").
pub fn plain(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x.abs() >= 1000.0 {
        let whole = format!("{:.0}", x.abs());
        let mut grouped = String::new();
        for (k, c) in whole.chars().enumerate() {
            if k > 0 && (whole.len() - k) % 3 == 0 {
                grouped.push(',');
            }
            grouped.push(c);
        }
        return if x < 0.0 {
            format!("-{grouped}")
        } else {
            grouped
        };
    }
    let text = significant(x, 3);
    if text.contains('e') || !text.contains('.') {
        return text;
    }
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Ranges [`row_ranges`] spells out before it summarises the rest.
const MAX_RANGES: usize = 30;

/// Sheet rows as compact ranges: `[4, 9, 10, 11, 20]` → "4, 9–11, 20".
/// Past [`MAX_RANGES`] ranges the rest is counted ("… and 812 more rows"),
/// so a message stays readable and fits in one cell.
pub fn row_ranges(rows: &[u32]) -> String {
    let mut parts = Vec::new();
    let mut i = 0;
    while i < rows.len() {
        if parts.len() == MAX_RANGES {
            parts.push(format!("… and {} more rows", rows.len() - i));
            break;
        }
        let start = rows[i];
        let mut end = start;
        while i + 1 < rows.len() && rows[i + 1] == end + 1 {
            i += 1;
            end = rows[i];
        }
        parts.push(if start == end {
            start.to_string()
        } else {
            format!("{start}–{end}")
        });
        i += 1;
    }
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn significant_switches_to_scientific_for_extremes() {
        assert_eq!(significant(3.16081871345e-15, 4), "3.161e-15");
        assert_eq!(significant(1829.15146, 4), "1829");
        assert_eq!(significant(0.00073206, 4), "0.0007321");
    }

    #[test]
    fn plain_numbers_read_as_written() {
        assert_eq!(plain(0.045), "0.045");
        assert_eq!(plain(0.0450001), "0.045");
        assert_eq!(plain(12.34), "12.3");
        assert_eq!(plain(4518.2), "4,518");
        assert_eq!(plain(-1_200_000.0), "-1,200,000");
        assert_eq!(plain(100.0), "100");
        assert_eq!(plain(0.5), "0.5");
        assert_eq!(plain(-0.00012345), "-0.000123");
    }

    #[test]
    fn rows_are_listed_as_ranges() {
        assert_eq!(row_ranges(&[4, 9, 10, 11, 20]), "4, 9–11, 20");
        assert_eq!(row_ranges(&[]), "");
        let every_other: Vec<u32> = (0..100).map(|i| 2 * i).collect();
        let summary = row_ranges(&every_other);
        assert!(summary.starts_with("0, 2, 4"), "{summary}");
        assert!(summary.ends_with("58, … and 70 more rows"), "{summary}");
    }
}
