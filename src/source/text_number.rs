//! Numbers stored as text, as people type them: "1,234.50", "$ 1 200",
//! "(12)", "12-", "12.5%", "€-3".

/// Currency signs that may lead or trail a number.
const CURRENCY: [char; 6] = ['$', '€', '£', '¥', '₹', '¤'];

/// The number `text` reads as, once spaces, thousands separators, one
/// currency sign, a percent sign (divided by 100) and an accounting
/// negative (brackets or a trailing minus) are handled; `None` for anything
/// else. The decimal mark is a dot and a comma separates thousands, or the
/// other way round with `decimal_comma`; a separator that does not stand
/// between groups of three digits ("1,5" with a decimal dot) is not
/// guessed at.
pub fn read_number(text: &str, decimal_comma: bool) -> Option<f64> {
    let mut s: String = text
        .chars()
        .filter(|c| !c.is_whitespace() && *c != '\u{a0}' && *c != '\u{202f}')
        .collect();
    let mut negative = false;
    if s.starts_with('(') && s.ends_with(')') && s.len() > 2 {
        negative = true;
        s = s[1..s.len() - 1].to_string();
    } else if s.len() > 1 && s.ends_with('-') {
        negative = true;
        s.pop();
    }
    let percent = s.ends_with('%');
    if percent {
        s.pop();
    }
    if let Some(rest) = s.strip_prefix(CURRENCY) {
        s = rest.to_string();
    } else if let Some(rest) = s.strip_suffix(CURRENCY) {
        s = rest.to_string();
    }
    // A sign may sit before or after the currency sign: "-$5", "$-5".
    let mut sign = 1.0;
    if let Some(rest) = s.strip_prefix('-') {
        sign = -1.0;
        s = rest.to_string();
    } else if let Some(rest) = s.strip_prefix('+') {
        s = rest.to_string();
    }
    if let Some(rest) = s.strip_prefix(CURRENCY) {
        s = rest.to_string();
    }
    let digits = plain_digits(&s, decimal_comma)?;
    if !digits.starts_with(|c: char| c.is_ascii_digit() || c == '.')
        || !digits.bytes().any(|b| b.is_ascii_digit())
    {
        return None;
    }
    if !digits.bytes().all(|b| {
        b.is_ascii_digit() || b == b'.' || b == b'e' || b == b'E' || b == b'-' || b == b'+'
    }) {
        return None;
    }
    let value: f64 = digits.parse().ok()?;
    if !value.is_finite() || (negative && sign < 0.0) {
        return None;
    }
    let value = if negative { -value } else { sign * value };
    Some(if percent { value / 100.0 } else { value })
}

/// A number written plainly, as a CSV field holds it: digits, a sign, a
/// decimal mark and an exponent, with thousands separators between groups
/// of three digits when `decimal_comma` (then "1.234,5" is 1234.5); `None`
/// for anything else. With a decimal dot this is Rust's own reading.
pub fn plain_number(text: &str, decimal_comma: bool) -> Option<f64> {
    if !decimal_comma {
        return text.parse().ok();
    }
    let (sign, rest) = match text.strip_prefix('-') {
        Some(rest) => (-1.0, rest),
        None => (1.0, text.strip_prefix('+').unwrap_or(text)),
    };
    let digits = plain_digits(rest, true)?;
    if !digits.starts_with(|c: char| c.is_ascii_digit() || c == '.')
        || !digits
            .bytes()
            .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'e' | b'E' | b'-' | b'+'))
    {
        return None;
    }
    digits.parse::<f64>().ok().map(|v| sign * v)
}

/// `s` with a dot for its decimal mark and without its thousands
/// separators, when every separator stands between groups of three digits
/// before the decimal mark; `None` when one stands anywhere else.
fn plain_digits(s: &str, decimal_comma: bool) -> Option<String> {
    let (thousands, decimal) = if decimal_comma {
        ('.', ',')
    } else {
        (',', '.')
    };
    let (whole, fraction) = match s.split_once(decimal) {
        Some((w, f)) => (w, Some(f)),
        None => (s, None),
    };
    if fraction.is_some_and(|f| f.contains([thousands, decimal])) {
        return None;
    }
    if !whole.contains(thousands) {
        return Some(match fraction {
            Some(f) => format!("{whole}.{f}"),
            None => whole.to_string(),
        });
    }
    let groups: Vec<&str> = whole.split(thousands).collect();
    let first = groups[0];
    if first.is_empty() || first.len() > 3 || !first.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    if !groups[1..]
        .iter()
        .all(|g| g.len() == 3 && g.bytes().all(|b| b.is_ascii_digit()))
    {
        return None;
    }
    let mut out = groups.concat();
    if let Some(f) = fraction {
        out.push('.');
        out.push_str(f);
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_as_people_type_them() {
        let cases = [
            ("1,234", 1234.0),
            ("1,234,567.5", 1_234_567.5),
            (" 12 ", 12.0),
            ("$1,200", 1200.0),
            ("1 200 €", 1200.0),
            ("(12)", -12.0),
            ("(1,234.50)", -1234.5),
            ("12-", -12.0),
            ("-$5", -5.0),
            ("$-5", -5.0),
            ("12.5%", 0.125),
            ("+3", 3.0),
            ("1e3", 1000.0),
            ("0.5", 0.5),
        ];
        for (text, want) in cases {
            assert_eq!(read_number(text, false), Some(want), "{text}");
        }
    }

    #[test]
    fn a_decimal_comma_swaps_the_marks() {
        for (text, want) in [
            ("1.234,5", 1234.5),
            ("12,5 %", 0.125),
            ("(1.000)", -1000.0),
            ("€ 3,20", 3.2),
        ] {
            assert_eq!(read_number(text, true), Some(want), "{text}");
        }
        for text in ["1.5", "1,234,567", "1,2,3"] {
            assert_eq!(read_number(text, true), None, "{text}");
        }
        for (text, want) in [
            ("12,5", 12.5),
            ("-1.234,5", -1234.5),
            ("1e3", 1000.0),
            ("0,001", 0.001),
        ] {
            assert_eq!(plain_number(text, true), Some(want), "{text}");
        }
        for text in ["1.5", "12.50", "n/a", "1,2,3", "--1"] {
            assert_eq!(plain_number(text, true), None, "{text}");
        }
        assert_eq!(plain_number("1.5", false), Some(1.5));
    }

    #[test]
    fn text_that_is_not_a_number_is_not_guessed() {
        for text in [
            "1,5", "12,34", "1,2345", "EUR", "n/a", "", "-", "()", "1.2.3", "--5", "(-5)", "12a",
            "1,234,56", "$", "%", "inf", "NaN",
        ] {
            assert_eq!(read_number(text, false), None, "{text}");
        }
    }
}
