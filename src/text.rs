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

/// How a spreadsheet number format shows a value's unit: the currency or
/// other text before and after the digits, and whether thousands are
/// grouped.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NumberStyle {
    /// Text before the digits, e.g. `$` or `€ `.
    pub prefix: String,
    /// Text after the digits, e.g. ` kr`.
    pub suffix: String,
    /// Whether thousands are separated.
    pub grouped: bool,
}

/// The [`NumberStyle`] of a format code such as `"$"#,##0.00`,
/// `[$€-407] #,##0` or `#,##0 "kr"` (its first section); `None` when it
/// shows neither a unit nor grouped thousands, or is a percentage, date or
/// text format.
pub fn number_style(code: &str) -> Option<NumberStyle> {
    let section = code.split(';').next().unwrap_or_default();
    let (mut prefix, mut suffix) = (String::new(), String::new());
    let (mut digits, mut grouped) = (false, false);
    let mut chars = section.chars().peekable();
    let mut push = |text: &str, digits: bool| {
        if digits {
            suffix.push_str(text);
        } else {
            prefix.push_str(text);
        }
    };
    while let Some(c) = chars.next() {
        match c {
            '"' => {
                let quoted: String = chars.by_ref().take_while(|&q| q != '"').collect();
                push(&quoted, digits);
            }
            '\\' => {
                if let Some(next) = chars.next() {
                    push(&next.to_string(), digits);
                }
            }
            '[' => {
                let inner: String = chars.by_ref().take_while(|&q| q != ']').collect();
                if let Some(currency) = inner.strip_prefix('$') {
                    push(currency.split('-').next().unwrap_or_default(), digits);
                }
            }
            // Padding to the width of a character, and fill characters.
            '_' | '*' => {
                chars.next();
            }
            '0' | '#' | '?' | '.' => digits = true,
            ',' if digits => grouped = true,
            '%' | 'y' | 'm' | 'd' | 'h' | 's' | '@' | 'E' | 'e' => return None,
            '(' | ')' | '-' | '+' => {}
            other => push(&other.to_string(), digits),
        }
    }
    let (prefix, suffix) = (
        prefix.trim_start().to_string(),
        suffix.trim_end().to_string(),
    );
    (!prefix.is_empty() || !suffix.is_empty() || grouped).then_some(NumberStyle {
        prefix,
        suffix,
        grouped,
    })
}

/// `x` as [`plain`] writes it, in `style`: "$1,200", "-€4.5", "12 kr".
pub fn styled(x: f64, style: Option<&NumberStyle>) -> String {
    let Some(style) = style else {
        return plain(x);
    };
    let digits = plain(x.abs());
    let digits = if style.grouped {
        digits
    } else {
        digits.replace(',', "")
    };
    format!(
        "{}{}{digits}{}",
        if x < 0.0 { "-" } else { "" },
        style.prefix,
        style.suffix
    )
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
    fn number_formats_give_their_currency_and_grouping() {
        let dollars = number_style("\"$\"#,##0.00").expect("a style");
        assert_eq!(styled(-1234.6, Some(&dollars)), "-$1,235");
        assert_eq!(styled(0.046, Some(&dollars)), "$0.046");
        let euros = number_style("[$€-407] #,##0;-[$€-407] #,##0").expect("a style");
        assert_eq!(euros.prefix, "€ ");
        let crowns = number_style("#,##0 \"kr\"").expect("a style");
        assert_eq!(styled(12.0, Some(&crowns)), "12 kr");
        let builtin = number_style("$#,##0_);($#,##0)").expect("a style");
        assert_eq!(styled(4518.0, Some(&builtin)), "$4,518");
        assert_eq!(number_style("General"), None);
        assert_eq!(number_style("0.00%"), None);
        assert_eq!(number_style("yyyy-mm-dd"), None);
        assert_eq!(number_style("0.0"), None);
        assert_eq!(
            number_style("#,##0"),
            Some(NumberStyle {
                prefix: String::new(),
                suffix: String::new(),
                grouped: true
            })
        );
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
