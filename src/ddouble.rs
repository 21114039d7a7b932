//! Double-double arithmetic: a number as an unevaluated sum `hi + lo` of two
//! doubles, about 32 significant digits.
//!
//! The error-free transformations are Knuth's TwoSum and Dekker's TwoProduct
//! with Veltkamp splitting (Dekker 1971, "A floating-point technique for
//! extending the available precision", Numer. Math. 18); division follows
//! the long-division scheme of Hida, Li & Bailey's QD library (2001), and the
//! square root one Newton step from the double root (Karp & Markstein 1997).
//!
//! Written here rather than taken from a crate: the double-double crate
//! available when this was written (twofloat 0.8.4) divides two
//! double-double values with only double accuracy — (1/3)·3 − 1 came out
//! −5.6e-17 instead of about 1e-33 — which would defeat the purpose.

use std::cmp::Ordering;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// A double-double number `hi + lo`, with |lo| ≤ ½ ulp(hi).
#[derive(Debug, Clone, Copy, Default)]
pub struct DoubleDouble {
    hi: f64,
    lo: f64,
}

impl DoubleDouble {
    /// The exact value of a double.
    pub const fn from_f64(x: f64) -> Self {
        DoubleDouble { hi: x, lo: 0.0 }
    }

    /// The leading double (the value rounded to double precision).
    pub fn hi(self) -> f64 {
        self.hi
    }

    /// The trailing double: what rounding to `hi` left over.
    pub fn lo(self) -> f64 {
        self.lo
    }

    /// Square root; NaN for negative values.
    pub fn sqrt(self) -> Self {
        if self.hi <= 0.0 {
            return DoubleDouble::from_f64(if self.hi == 0.0 { 0.0 } else { f64::NAN });
        }
        let y = self.hi.sqrt();
        let (sq, sq_err) = two_prod(y, y);
        let rest = (self - DoubleDouble { hi: sq, lo: sq_err }).hi;
        quick_two_sum(y, rest / (2.0 * y))
    }

    /// Absolute value.
    pub fn abs(self) -> Self {
        if self.hi < 0.0 || (self.hi == 0.0 && self.lo < 0.0) {
            -self
        } else {
            self
        }
    }
}

/// a + b = s + e exactly, for any doubles (Knuth's TwoSum).
fn two_sum(a: f64, b: f64) -> (f64, f64) {
    let s = a + b;
    let bb = s - a;
    (s, (a - (s - bb)) + (b - bb))
}

/// a + b = s + e exactly, when |a| ≥ |b| (Dekker's FastTwoSum).
fn quick_two_sum(a: f64, b: f64) -> DoubleDouble {
    let s = a + b;
    DoubleDouble {
        hi: s,
        lo: b - (s - a),
    }
}

/// Veltkamp's split of a double into two 26-bit halves.
fn split(a: f64) -> (f64, f64) {
    const SPLITTER: f64 = 134_217_729.0; // 2^27 + 1
    let t = SPLITTER * a;
    let hi = t - (t - a);
    (hi, a - hi)
}

/// a · b = p + e exactly (Dekker's TwoProduct).
fn two_prod(a: f64, b: f64) -> (f64, f64) {
    let p = a * b;
    let (ah, al) = split(a);
    let (bh, bl) = split(b);
    (p, ((ah * bh - p) + ah * bl + al * bh) + al * bl)
}

impl From<f64> for DoubleDouble {
    fn from(x: f64) -> Self {
        DoubleDouble::from_f64(x)
    }
}

impl From<DoubleDouble> for f64 {
    fn from(x: DoubleDouble) -> f64 {
        x.hi + x.lo
    }
}

impl Neg for DoubleDouble {
    type Output = Self;
    fn neg(self) -> Self {
        DoubleDouble {
            hi: -self.hi,
            lo: -self.lo,
        }
    }
}

impl Add for DoubleDouble {
    type Output = Self;
    fn add(self, b: Self) -> Self {
        let (s, e) = two_sum(self.hi, b.hi);
        let (t, f) = two_sum(self.lo, b.lo);
        let r = quick_two_sum(s, e + t);
        quick_two_sum(r.hi, r.lo + f)
    }
}

impl Sub for DoubleDouble {
    type Output = Self;
    fn sub(self, b: Self) -> Self {
        self + (-b)
    }
}

impl Mul for DoubleDouble {
    type Output = Self;
    fn mul(self, b: Self) -> Self {
        let (p, e) = two_prod(self.hi, b.hi);
        quick_two_sum(p, e + (self.hi * b.lo + self.lo * b.hi))
    }
}

impl Mul<f64> for DoubleDouble {
    type Output = Self;
    fn mul(self, b: f64) -> Self {
        let (p, e) = two_prod(self.hi, b);
        quick_two_sum(p, e + self.lo * b)
    }
}

impl Div for DoubleDouble {
    type Output = Self;
    fn div(self, b: Self) -> Self {
        let q1 = self.hi / b.hi;
        let r = self - b * q1;
        let q2 = r.hi / b.hi;
        let r = r - b * q2;
        let q3 = r.hi / b.hi;
        quick_two_sum(q1, q2) + DoubleDouble::from_f64(q3)
    }
}

impl PartialEq for DoubleDouble {
    fn eq(&self, other: &Self) -> bool {
        self.hi == other.hi && self.lo == other.lo
    }
}

impl PartialOrd for DoubleDouble {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        match self.hi.partial_cmp(&other.hi) {
            Some(Ordering::Equal) => self.lo.partial_cmp(&other.lo),
            order => order,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dd(x: f64) -> DoubleDouble {
        DoubleDouble::from_f64(x)
    }

    /// |a − b| as a double, computed in double-double.
    fn gap(a: DoubleDouble, b: DoubleDouble) -> f64 {
        f64::from((a - b).abs())
    }

    #[test]
    fn division_keeps_double_double_digits() {
        let third = dd(1.0) / dd(3.0);
        assert!(gap(third * dd(3.0), dd(1.0)) < 1e-31);
        let x = dd(7.0) / dd(10.0);
        assert!(gap(x * dd(10.0), dd(7.0)) < 1e-30);
    }

    #[test]
    fn square_root_keeps_double_double_digits() {
        let r = dd(2.0).sqrt();
        assert!(gap(r * r, dd(2.0)) < 1e-31);
        // The low word carries the digits past double precision:
        // √2 − fl(√2) = −9.667293313452913e-17 (Python's decimal module at
        // 50 digits, `Decimal(2).sqrt() - Decimal(math.sqrt(2))`).
        assert_eq!(r.hi(), std::f64::consts::SQRT_2);
        assert!(
            (r.lo() / -9.667293313452913e-17 - 1.0).abs() < 1e-15,
            "{:e}",
            r.lo()
        );
        // Likewise 1/3 − fl(1/3) = 1.850371707708594e-17 (same source).
        let third = dd(1.0) / dd(3.0);
        assert!((third.lo() / 1.850371707708594e-17 - 1.0).abs() < 1e-15);
    }

    #[test]
    fn products_are_exact_beyond_double_precision() {
        // (1 + 2⁻³⁰)² = 1 + 2⁻²⁹ + 2⁻⁶⁰: the last term is below double
        // precision and must survive in the low word.
        let a = dd(1.0 + 2f64.powi(-30));
        let sq = a * a;
        assert_eq!(sq.hi(), 1.0 + 2f64.powi(-29));
        assert_eq!(sq.lo(), 2f64.powi(-60));
    }

    #[test]
    fn sums_cancel_exactly() {
        let big = dd(1e16) + dd(1.0);
        assert_eq!(f64::from(big - dd(1e16)), 1.0);
        assert!(dd(-2.0).abs() == dd(2.0));
        assert!(dd(1.0) < dd(1.0) + dd(1e-30));
        assert!(dd(-1.0).sqrt().hi().is_nan());
    }
}
