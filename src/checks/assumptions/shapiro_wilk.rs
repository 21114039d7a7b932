//! The Shapiro-Wilk test of normality with Royston's approximation.

use super::*;

/// Fewest values [`shapiro_wilk`] accepts.
pub const SHAPIRO_WILK_MIN: usize = 3;
/// Most values [`shapiro_wilk`] accepts: the range over which Royston's
/// approximation was fitted.
pub const SHAPIRO_WILK_MAX: usize = 5000;

/// Shapiro-Wilk test of normality, W and its p-value by Royston's
/// approximation, for 3 ≤ n ≤ 5000.
///
/// W = (Σᵢ aᵢ x₍ᵢ₎)² / Σᵢ (xᵢ − x̄)², x₍ᵢ₎ the ordered values (Shapiro, S. S.
/// & Wilk, M. B. 1965, "An analysis of variance test for normality",
/// Biometrika 52). The coefficients follow Royston (1992, "Approximating the
/// Shapiro-Wilk W-test for non-normality", Statistics and Computing 2) and
/// his Algorithm AS R94 (1995, Applied Statistics 44(4)):
///
/// * normal scores mᵢ = Φ⁻¹((i − 3/8)/(n + 1/4)) and cᵢ = mᵢ/√(m'm);
/// * with u = 1/√n, the largest coefficient aₙ = cₙ + 0.221157u −
///   0.147981u² − 2.071190u³ + 4.434685u⁴ − 2.706056u⁵, and for n > 5 the
///   next, aₙ₋₁ = cₙ₋₁ + 0.042981u − 0.293762u² − 1.752461u³ +
///   5.682633u⁴ − 3.582633u⁵ (a₁ = −aₙ, a₂ = −aₙ₋₁);
/// * the others aᵢ = mᵢ/√φ, φ = (m'm − 2mₙ²)/(1 − 2aₙ²) for n ≤ 5 and
///   φ = (m'm − 2mₙ² − 2mₙ₋₁²)/(1 − 2aₙ² − 2aₙ₋₁²) for n > 5, so Σaᵢ² = 1;
/// * n = 3: a = (−√½, 0, √½), and the exact p-value
///   P = (6/π)(asin √W − asin √(3/4)).
///
/// The p-value for n ≥ 4 comes from a normal approximation to a transform
/// of 1 − W, P = 1 − Φ((y − μ)/σ):
///
/// * 4 ≤ n ≤ 11: y = −ln(γ − ln(1 − W)), γ = −2.273 + 0.459n,
///   μ = 0.5440 − 0.39978n + 0.025054n² − 0.0006714n³,
///   σ = exp(1.3822 − 0.77857n + 0.062767n² − 0.0020322n³);
/// * 12 ≤ n ≤ 5000: y = ln(1 − W), with v = ln n,
///   μ = −1.5861 − 0.31082v − 0.083751v² + 0.0038915v³,
///   σ = exp(−0.4803 − 0.082676v + 0.0030302v²).
///
/// 1 − W is computed as 1 − r² from the correlation r between the ordered
/// values and the coefficients, as (‖a‖‖x‖ − a·x)(‖a‖‖x‖ + a·x)/(‖a‖²‖x‖²)
/// on centred values, so it keeps its digits when W is near 1.
///
/// `None` outside 3 ≤ n ≤ 5000, for values that are not finite, or when
/// all values are equal. The p-value is `None` for n ≤ 11 if ln(1 − W) ≥ γ,
/// where the transform is undefined (W below the values it was fitted on).
pub fn shapiro_wilk(x: &[f64]) -> Option<TestResult> {
    let n = x.len();
    if !(SHAPIRO_WILK_MIN..=SHAPIRO_WILK_MAX).contains(&n) || !all_finite(x) {
        return None;
    }
    let mut sorted = x.to_vec();
    sorted.sort_by(f64::total_cmp);
    let range = sorted[n - 1] - sorted[0];
    if !is_positive(range) || !range.is_finite() {
        return None;
    }
    // Scaled by the range so that sums of squares cannot overflow.
    for v in &mut sorted {
        *v /= range;
    }
    let half = shapiro_wilk_coefficients(n)?;
    let mean = sorted.iter().sum::<f64>() / n as f64;
    let ss: f64 = sorted.iter().map(|v| (v - mean).powi(2)).sum();
    // a·x over the antisymmetric coefficient vector: aᵢ pairs x₍ₙ₊₁₋ᵢ₎ − x₍ᵢ₎.
    let ax: f64 = half
        .iter()
        .enumerate()
        .map(|(i, a)| a * (sorted[n - 1 - i] - sorted[i]))
        .sum();
    let aa: f64 = 2.0 * half.iter().map(|a| a * a).sum::<f64>();
    if !is_positive(ss) {
        return None;
    }
    let norms = (aa * ss).sqrt();
    let one_minus_w = ((norms - ax) * (norms + ax) / (aa * ss)).max(0.0);
    let w = 1.0 - one_minus_w;
    result(w, None, None, shapiro_wilk_p(n, w, one_minus_w))
}

/// Royston's coefficients aₙ, aₙ₋₁, … for the upper half of the ordered
/// sample (n/2 of them, largest first); see [`shapiro_wilk`].
pub(super) fn shapiro_wilk_coefficients(n: usize) -> Option<Vec<f64>> {
    let half = n / 2;
    if n == 3 {
        return Some(vec![std::f64::consts::FRAC_1_SQRT_2]);
    }
    let normal = Normal::new(0.0, 1.0).ok()?;
    let nf = n as f64;
    // mₙ₊₁₋ᵢ = −mᵢ = −Φ⁻¹((i − 3/8)/(n + 1/4)) for i = 1..n/2, largest first.
    let m: Vec<f64> = (1..=half)
        .map(|i| -normal.inverse_cdf((i as f64 - 0.375) / (nf + 0.25)))
        .collect();
    let mm = 2.0 * m.iter().map(|v| v * v).sum::<f64>();
    let root = mm.sqrt();
    let u = 1.0 / nf.sqrt();
    let a_n = m[0] / root
        + polynomial(
            &[0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056],
            u,
        );
    let mut a = Vec::with_capacity(half);
    let (phi, first_plain) = if n > 5 {
        let a_n1 = m[1] / root
            + polynomial(
                &[0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633],
                u,
            );
        a.push(a_n);
        a.push(a_n1);
        (
            (mm - 2.0 * m[0] * m[0] - 2.0 * m[1] * m[1])
                / (1.0 - 2.0 * a_n * a_n - 2.0 * a_n1 * a_n1),
            2,
        )
    } else {
        a.push(a_n);
        ((mm - 2.0 * m[0] * m[0]) / (1.0 - 2.0 * a_n * a_n), 1)
    };
    if !is_positive(phi) {
        return None;
    }
    let scale = phi.sqrt();
    a.extend(m[first_plain..].iter().map(|v| v / scale));
    all_finite(&a).then_some(a)
}

/// Royston's p-value for W (see [`shapiro_wilk`]).
pub(super) fn shapiro_wilk_p(n: usize, w: f64, one_minus_w: f64) -> Option<f64> {
    if n == 3 {
        let p = 6.0 / std::f64::consts::PI * (w.sqrt().asin() - (0.75f64).sqrt().asin());
        return Some(p.clamp(0.0, 1.0));
    }
    if !is_positive(one_minus_w) {
        return Some(1.0);
    }
    let nf = n as f64;
    let log = one_minus_w.ln();
    let (y, mu, sigma) = if n <= 11 {
        let gamma = polynomial(&[-2.273, 0.459], nf);
        if log >= gamma {
            return None;
        }
        (
            -(gamma - log).ln(),
            polynomial(&[0.5440, -0.39978, 0.025054, -6.714e-4], nf),
            polynomial(&[1.3822, -0.77857, 0.062767, -0.0020322], nf).exp(),
        )
    } else {
        let v = nf.ln();
        (
            log,
            polynomial(&[-1.5861, -0.31082, -0.083751, 0.0038915], v),
            polynomial(&[-0.4803, -0.082676, 0.0030302], v).exp(),
        )
    };
    let normal = Normal::new(0.0, 1.0).ok()?;
    let p = normal.sf((y - mu) / sigma);
    p.is_finite().then_some(p)
}
