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
    fn rows_are_listed_as_ranges() {
        assert_eq!(row_ranges(&[4, 9, 10, 11, 20]), "4, 9–11, 20");
        assert_eq!(row_ranges(&[]), "");
        let every_other: Vec<u32> = (0..100).map(|i| 2 * i).collect();
        let summary = row_ranges(&every_other);
        assert!(summary.starts_with("0, 2, 4"), "{summary}");
        assert!(summary.ends_with("58, … and 70 more rows"), "{summary}");
    }
}
