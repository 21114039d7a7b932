//! Regression with AR(1) errors by exact Gaussian maximum likelihood:
//! y = Xb + u, uₜ = φuₜ₋₁ + eₜ, eₜ ~ N(0, σ²) independent, |φ| < 1, with
//! the first error drawn from the stationary distribution N(0, σ²/(1 − φ²)).
//!
//! For a fixed φ the likelihood is that of least squares on transformed
//! rows: without gaps the Prais-Winsten transform (Prais & Winsten 1954),
//! the first row times √(1 − φ²), each later row less φ times the row
//! before; across d missing-free periods from the row before, that row
//! times φᵈ is taken off and the difference scaled to unit variance (the
//! error d periods on is φᵈ times the last plus d innovations), so gaps are
//! handled exactly. b and σ² are concentrated out, b(φ) the least-squares
//! solution of the transformed rows (by the model's own QR) and σ²(φ) =
//! S(φ)/n, S the transformed residual sum of squares, which leaves the
//! profile log-likelihood
//!
//! ℓ(φ) = −n/2·(ln 2π + 1 + ln(S(φ)/n)) − ½·Σ ln vₜ
//!
//! (vₜ each row's error variance over σ²; without gaps the sum is
//! −ln(1 − φ²); Beach & MacKinnon 1978, Econometrica 46(1)). It is
//! maximised over φ in one dimension: a grid brackets the maximum, then the
//! root of its derivative (by the envelope theorem, the partial derivative
//! at b(φ)) is found by the Illinois method to the last digits of φ.
//! Standard errors come from the observed information of (φ, b) with σ²
//! concentrated out, in closed form, inverted through (X̃ᵀX̃)⁻¹ from the QR
//! so that X̃ᵀX̃ is never formed.

use nalgebra::{DMatrix, DVector};

use crate::design::DesignMatrix;
use crate::fit::qr::{self, Columns, Leverage};
use crate::fit::{least_squares, Precision};

/// |φ| beyond which a maximum counts as the edge of stationarity: the
/// search runs on [−EDGE, EDGE] and an estimate this close to its end is
/// refused.
pub const EDGE: f64 = 0.999;

/// Points of the grid that brackets the maximum.
const GRID: usize = 81;

/// Iterations of the Illinois search before it counts as not converged.
const MAX_ITERATIONS: usize = 200;

/// Why a regression with AR(1) errors could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum Ar1Error {
    /// Too few rows for the coefficients, φ and σ².
    #[error("{rows} rows are too few for {coefficients} coefficients, φ and σ²")]
    TooFewRows {
        /// Rows.
        rows: usize,
        /// Regression coefficients.
        coefficients: usize,
    },
    /// The likelihood is largest at the edge of stationarity.
    #[error("the likelihood is largest at φ = {phi:.4}, the edge of stationarity (|φ| near 1): the errors wander like a random walk, so a regression with stationary AR(1) errors does not describe them; model the period-to-period changes instead, or add the trend or step the model is missing")]
    EdgeOfStationarity {
        /// Where the search ended.
        phi: f64,
    },
    /// The search for the maximum did not settle.
    #[error("the search for φ did not converge within {iterations} steps (last bracket {lower:.6} to {upper:.6})")]
    NotConverged {
        /// Steps taken.
        iterations: usize,
        /// Lower end of the last bracket.
        lower: f64,
        /// Upper end of the last bracket.
        upper: f64,
    },
    /// The likelihood is not finite (values that overflow, no spread left).
    #[error("the likelihood is not finite at φ = {phi}: the transformed residuals have no spread")]
    NotFinite {
        /// Where.
        phi: f64,
    },
}

/// The maximum-likelihood fit of a regression with AR(1) errors.
#[derive(Debug, Clone)]
pub struct Ar1Fit {
    /// The AR(1) coefficient φ.
    pub phi: f64,
    /// Regression coefficients, one per column of X given.
    pub beta: Vec<f64>,
    /// Maximum-likelihood innovation variance σ² = S/n.
    pub sigma2: f64,
    /// The log-likelihood at the maximum.
    pub log_likelihood: f64,
    /// Inverse observed information of (φ, b), φ first.
    pub covariance: DMatrix<f64>,
    /// Regression residuals u = y − Xb.
    pub residuals: Vec<f64>,
    /// One-step innovations, standardised as the likelihood uses them:
    /// √(1 − φ²)·u₁, then uₜ − φuₜ₋₁.
    pub innovations: Vec<f64>,
    /// Profile evaluations the search took.
    pub evaluations: usize,
    /// The arithmetic of the final solve.
    pub precision: Precision,
}

/// The profile at one φ: b(φ), the residuals and their sums.
struct Profile {
    phi: f64,
    beta: DVector<f64>,
    /// (X̃ᵀX̃)⁻¹ of the transformed rows.
    xtx_inv: DMatrix<f64>,
    /// ℓ(φ).
    loglik: f64,
    /// dℓ/dφ at b(φ).
    slope: f64,
}

/// How one row's error links to the row before it: with d periods between
/// them, uₜ = aₜuₜ₋₁ + (an error of variance vₜσ²), aₜ = φᵈ and
/// vₜ = 1 + φ² + … + φ²⁽ᵈ⁻¹⁾; the first row stands alone, a = 0 and
/// v = 1/(1 − φ²). Rows are scaled by wₜ = vₜ^(−1/2). Each comes with its
/// first two derivatives in φ, for the slope and the information.
#[derive(Debug, Clone, Copy)]
struct Link {
    a: [f64; 3],
    w: [f64; 3],
    /// ln vₜ and its derivatives.
    log_v: [f64; 3],
}

impl Link {
    /// The link of a row `gap` periods after the one before; 0 for the
    /// first row.
    fn new(phi: f64, gap: u32) -> Link {
        if gap == 0 {
            let q = 1.0 - phi * phi;
            return Link {
                a: [0.0; 3],
                w: [q.sqrt(), -phi / q.sqrt(), -1.0 / (q * q.sqrt())],
                log_v: [-q.ln(), 2.0 * phi / q, 2.0 * (1.0 + phi * phi) / (q * q)],
            };
        }
        let d = f64::from(gap);
        let a = [
            phi.powi(gap as i32),
            d * phi.powi(gap as i32 - 1),
            d * (d - 1.0) * phi.powi(gap as i32 - 2),
        ];
        // v = Σⱼ φ²ʲ over j < d, with its derivatives term by term.
        let mut v = [0.0; 3];
        for j in 0..gap as i32 {
            let k = f64::from(2 * j);
            v[0] += phi.powi(2 * j);
            if j > 0 {
                v[1] += k * phi.powi(2 * j - 1);
                v[2] += k * (k - 1.0) * phi.powi(2 * j - 2);
            }
        }
        let w0 = v[0].powf(-0.5);
        Link {
            a,
            w: [
                w0,
                -0.5 * w0 / v[0] * v[1],
                0.75 * w0 / (v[0] * v[0]) * v[1] * v[1] - 0.5 * w0 / v[0] * v[2],
            ],
            log_v: [v[0].ln(), v[1] / v[0], v[2] / v[0] - (v[1] / v[0]).powi(2)],
        }
    }
}

/// The links of the rows at `phi`, `gaps[t]` the periods between row t and
/// row t − 1 (`gaps[0]` is not read).
fn links(phi: f64, gaps: &[u32]) -> Vec<Link> {
    let mut cache: Vec<(u32, Link)> = Vec::new();
    (0..gaps.len())
        .map(|t| {
            let gap = if t == 0 { 0 } else { gaps[t] };
            if let Some((_, l)) = cache.iter().find(|(g, _)| *g == gap) {
                return *l;
            }
            let l = Link::new(phi, gap);
            cache.push((gap, l));
            l
        })
        .collect()
}

/// The transform of the columns of `x` and of `y` whose least squares is
/// the likelihood's: row t becomes wₜ(rowₜ − aₜ·rowₜ₋₁) (Prais & Winsten
/// 1954 without gaps).
fn transformed(x: &DMatrix<f64>, y: &[f64], links: &[Link]) -> (DMatrix<f64>, DVector<f64>) {
    let n = y.len();
    let row = |t: usize, now: f64, before: f64| {
        let l = &links[t];
        l.w[0] * (now - l.a[0] * before)
    };
    let xt = DMatrix::from_fn(n, x.ncols(), |i, j| {
        row(i, x[(i, j)], if i == 0 { 0.0 } else { x[(i - 1, j)] })
    });
    let yt = DVector::from_fn(n, |i, _| row(i, y[i], if i == 0 { 0.0 } else { y[i - 1] }));
    (xt, yt)
}

/// The innovations eₜ = wₜ(uₜ − aₜuₜ₋₁) of the regression residuals `u`
/// and their first two derivatives in φ (b fixed).
fn innovations(u: &[f64], links: &[Link]) -> Vec<[f64; 3]> {
    (0..u.len())
        .map(|t| {
            let l = &links[t];
            let before = if t == 0 { 0.0 } else { u[t - 1] };
            let r = u[t] - l.a[0] * before;
            [
                l.w[0] * r,
                l.w[1] * r - l.w[0] * l.a[1] * before,
                l.w[2] * r - 2.0 * l.w[1] * l.a[1] * before - l.w[0] * l.a[2] * before,
            ]
        })
        .collect()
}

/// S(φ), ℓ(φ) and its slope from the regression residuals `u` at φ.
fn likelihood(u: &[f64], links: &[Link]) -> (f64, f64, f64) {
    let n = u.len() as f64;
    let e = innovations(u, links);
    let s: f64 = e.iter().map(|e| e[0] * e[0]).sum();
    let ds: f64 = 2.0 * e.iter().map(|e| e[0] * e[1]).sum::<f64>();
    let log_v: f64 = links.iter().map(|l| l.log_v[0]).sum();
    let log_v1: f64 = links.iter().map(|l| l.log_v[1]).sum();
    let loglik = -n / 2.0 * ((2.0 * std::f64::consts::PI).ln() + 1.0 + (s / n).ln()) - 0.5 * log_v;
    let slope = -n / (2.0 * s) * ds - 0.5 * log_v1;
    (s, loglik, slope)
}

fn profile(x: &DMatrix<f64>, y: &[f64], gaps: &[u32], phi: f64) -> Result<Profile, Ar1Error> {
    let links = links(phi, gaps);
    let (xt, yt) = transformed(x, y, &links);
    let m = DesignMatrix::from_dense(&xt, None);
    let solved = qr::solve::<f64>(Columns::of(&m), &yt, Leverage::Skipped);
    // The columns were checked to be estimable before the search; a column
    // the transform makes aliased keeps a zero coefficient.
    let mut beta = DVector::zeros(x.ncols());
    for (k, &j) in solved.kept.iter().enumerate() {
        beta[j] = solved.beta[k];
    }
    let xb = x * &beta;
    let u: Vec<f64> = y.iter().zip(xb.iter()).map(|(a, b)| a - b).collect();
    let (s, loglik, slope) = likelihood(&u, &links);
    if !(loglik.is_finite() && slope.is_finite() && s > 0.0) {
        return Err(Ar1Error::NotFinite { phi });
    }
    Ok(Profile {
        phi,
        beta,
        xtx_inv: solved.xtx_inv,
        loglik,
        slope,
    })
}

/// Fits y = Xb + u with AR(1) errors by exact maximum likelihood; the
/// columns of `x` must be estimable (the least-squares fit's kept columns)
/// and the rows in period order, `gaps[t]` (at least 1) the periods from
/// row t − 1 to row t (`gaps[0]` is not read). Missing periods between
/// rows are handled exactly: the error d periods on is φᵈ times the last
/// plus the d innovations since.
///
/// # Errors
/// [`Ar1Error`] when there are too few rows, the maximum lies at the edge
/// of stationarity, the search does not converge, or the likelihood is not
/// finite.
pub fn fit_ar1(x: &DesignMatrix, y: &[f64], gaps: &[u32]) -> Result<Ar1Fit, Ar1Error> {
    let (n, p) = (y.len(), x.ncols());
    if n < p + 3 {
        return Err(Ar1Error::TooFewRows {
            rows: n,
            coefficients: p,
        });
    }
    let dense = x.to_dense();
    let mut evaluations = 0;
    let mut at = |phi: f64| {
        evaluations += 1;
        profile(&dense, y, gaps, phi)
    };
    let step = 2.0 * EDGE / (GRID - 1) as f64;
    let grid: Vec<f64> = (0..GRID).map(|k| -EDGE + step * k as f64).collect();
    let mut best: Option<(usize, Profile)> = None;
    for (k, &phi) in grid.iter().enumerate() {
        let here = at(phi)?;
        if best.as_ref().is_none_or(|(_, b)| here.loglik > b.loglik) {
            best = Some((k, here));
        }
    }
    let Some((k, best)) = best else {
        return Err(Ar1Error::NotFinite { phi: 0.0 });
    };
    if k == 0 || k == GRID - 1 {
        return Err(Ar1Error::EdgeOfStationarity { phi: best.phi });
    }
    let optimum = if best.slope == 0.0 {
        best
    } else {
        let (lower, upper) = (at(grid[k - 1])?, at(grid[k + 1])?);
        illinois(lower, upper, &mut at)?
    };
    if optimum.phi.abs() > EDGE - 1e-4 {
        return Err(Ar1Error::EdgeOfStationarity { phi: optimum.phi });
    }
    Ok(finish(&dense, x, y, gaps, optimum, evaluations))
}

/// The root of the profile's slope between `lower` (slope ≥ 0) and `upper`
/// (slope ≤ 0) by the Illinois variant of regula falsi (Dowell & Jarratt
/// 1971), to the resolution of φ.
fn illinois(
    mut lower: Profile,
    mut upper: Profile,
    at: &mut impl FnMut(f64) -> Result<Profile, Ar1Error>,
) -> Result<Profile, Ar1Error> {
    if lower.slope < 0.0 || upper.slope > 0.0 {
        return Err(Ar1Error::NotConverged {
            iterations: 0,
            lower: lower.phi,
            upper: upper.phi,
        });
    }
    let (mut fl, mut fu) = (lower.slope, upper.slope);
    let mut side = 0i8;
    for _ in 0..MAX_ITERATIONS {
        let width = upper.phi - lower.phi;
        let mut phi = lower.phi + width * fl / (fl - fu);
        if !(phi > lower.phi && phi < upper.phi) {
            phi = 0.5 * (lower.phi + upper.phi);
        }
        let here = at(phi)?;
        if here.slope == 0.0 || width <= 4.0 * f64::EPSILON * phi.abs().max(1e-3) {
            return Ok(here);
        }
        if here.slope > 0.0 {
            fl = here.slope;
            lower = here;
            if side == 1 {
                fu /= 2.0;
            }
            side = 1;
        } else {
            fu = here.slope;
            upper = here;
            if side == -1 {
                fl /= 2.0;
            }
            side = -1;
        }
        if upper.phi - lower.phi <= 4.0 * f64::EPSILON * lower.phi.abs().max(1e-3) {
            return Ok(if lower.loglik >= upper.loglik {
                lower
            } else {
                upper
            });
        }
    }
    Err(Ar1Error::NotConverged {
        iterations: MAX_ITERATIONS,
        lower: lower.phi,
        upper: upper.phi,
    })
}

/// The fit at the maximum: b by the model's own least squares on the
/// transformed rows (in double-double when their condition calls for it),
/// and the inverse observed information.
fn finish(
    dense: &DMatrix<f64>,
    x: &DesignMatrix,
    y: &[f64],
    gaps: &[u32],
    optimum: Profile,
    evaluations: usize,
) -> Ar1Fit {
    let phi = optimum.phi;
    let links = links(phi, gaps);
    let (xt, yt) = transformed(dense, y, &links);
    let solution = least_squares(&DesignMatrix::from_dense(&xt, None), &yt);
    let mut beta = optimum.beta.clone();
    for (k, &j) in solution.kept.iter().enumerate() {
        beta[j] = solution.beta[k];
    }
    let xb = dense * &beta;
    let u: Vec<f64> = y.iter().zip(xb.iter()).map(|(a, b)| a - b).collect();
    let (s, loglik, _) = likelihood(&u, &links);
    let sigma2 = s / y.len() as f64;
    let e = innovations(&u, &links);
    let covariance = inverse_information(x, &u, &e, &links, sigma2, &optimum.xtx_inv);
    Ar1Fit {
        phi,
        beta: beta.iter().copied().collect(),
        sigma2,
        log_likelihood: loglik,
        covariance,
        residuals: u,
        innovations: e.iter().map(|e| e[0]).collect(),
        evaluations,
        precision: solution.precision,
    }
}

/// The inverse of the observed information of (φ, b), σ² concentrated
/// out, by blocks: with the information [[a, cᵀ], [c, D]], D = X̃ᵀX̃/σ²,
/// var(φ) = 1/(a − cᵀD⁻¹c), and D⁻¹ = σ²(X̃ᵀX̃)⁻¹ from the QR.
///
/// From ℓ = −n/2·ln S − ½·Σ ln vₜ + const, S = Σ eₜ², with ∂S/∂b = 0 at
/// the maximum: a = n/(2S)·∂²S/∂φ² − n/(2S²)·(∂S/∂φ)² + ½·Σ (ln vₜ)″ and
/// cⱼ = n/(2S)·∂²S/∂φ∂bⱼ, where ∂²S/∂φ² = 2Σ(eₜ′² + eₜeₜ″) and
/// ∂²S/∂φ∂bⱼ = 2Σ(−x̃ₜⱼeₜ′ + eₜ·∂eₜ′/∂bⱼ), ∂eₜ′/∂bⱼ =
/// −wₜ′(xₜⱼ − aₜxₜ₋₁,ⱼ) + wₜaₜ′xₜ₋₁,ⱼ (′ a derivative in φ).
fn inverse_information(
    x: &DesignMatrix,
    u: &[f64],
    e: &[[f64; 3]],
    links: &[Link],
    sigma2: f64,
    xtx_inv: &DMatrix<f64>,
) -> DMatrix<f64> {
    let n = u.len();
    let nf = n as f64;
    let s = sigma2 * nf;
    let p = x.ncols();
    let ds = 2.0 * e.iter().map(|e| e[0] * e[1]).sum::<f64>();
    let d2s = 2.0 * e.iter().map(|e| e[1] * e[1] + e[0] * e[2]).sum::<f64>();
    let a = nf / (2.0 * s) * d2s - nf / (2.0 * s * s) * ds * ds
        + 0.5 * links.iter().map(|l| l.log_v[2]).sum::<f64>();
    let c = DVector::from_fn(p, |j, _| {
        let column = x.column(j);
        let cross: f64 = (0..n)
            .map(|t| {
                let l = &links[t];
                let before = if t == 0 { 0.0 } else { column[t - 1] };
                let r = column[t] - l.a[0] * before;
                let de_db = -l.w[1] * r + l.w[0] * l.a[1] * before;
                -l.w[0] * r * e[t][1] + e[t][0] * de_db
            })
            .sum();
        nf / s * cross
    });
    let d_inv = xtx_inv * sigma2;
    let d_inv_c = &d_inv * &c;
    let schur = a - c.dot(&d_inv_c);
    let mut cov = DMatrix::zeros(p + 1, p + 1);
    cov[(0, 0)] = 1.0 / schur;
    for i in 0..p {
        cov[(0, i + 1)] = -d_inv_c[i] / schur;
        cov[(i + 1, 0)] = cov[(0, i + 1)];
        for j in 0..p {
            cov[(i + 1, j + 1)] = d_inv[(i, j)] + d_inv_c[i] * d_inv_c[j] / schur;
        }
    }
    cov
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::DesignColumn;

    /// An AR(1) series about a line, from a fixed linear congruential
    /// sequence (no randomness between runs).
    fn series(n: usize, phi: f64) -> (DesignMatrix, Vec<f64>) {
        let mut state: u64 = 12345;
        let mut uniform = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let mut u = 0.0;
        let y: Vec<f64> = (0..n)
            .map(|t| {
                // Sum of 12 uniforms less 6: mean 0, variance 1.
                let e: f64 = (0..12).map(|_| uniform()).sum::<f64>() - 6.0;
                u = phi * u + e;
                10.0 + 0.5 * t as f64 + u
            })
            .collect();
        let x = DesignMatrix::new(
            n,
            vec![
                DesignColumn::values(vec![1.0; n]),
                DesignColumn::values((0..n).map(|t| t as f64).collect()),
            ],
        );
        (x, y)
    }

    #[test]
    fn the_estimate_is_the_maximum_of_the_exact_likelihood() {
        let (x, y) = series(200, 0.6);
        let fit = fit_ar1(&x, &y, &vec![1; y.len()]).expect("fits");
        // Direct evaluation of the full Gaussian log-likelihood (the
        // stationary first term plus the conditional ones) at the
        // estimate, and a profile that is lower on either side.
        let dense = x.to_dense();
        let n = y.len() as f64;
        let u = &fit.residuals;
        let s2 = fit.sigma2;
        let mut direct = -0.5
            * ((2.0 * std::f64::consts::PI * s2 / (1.0 - fit.phi.powi(2))).ln()
                + u[0] * u[0] * (1.0 - fit.phi.powi(2)) / s2);
        for t in 1..u.len() {
            let e = u[t] - fit.phi * u[t - 1];
            direct -= 0.5 * ((2.0 * std::f64::consts::PI * s2).ln() + e * e / s2);
        }
        assert!((direct - fit.log_likelihood).abs() < 1e-9 * n);
        for d in [-1e-3, 1e-3] {
            let other = profile(&dense, &y, &vec![1; y.len()], fit.phi + d).expect("profile");
            assert!(other.loglik < fit.log_likelihood);
        }
        assert!((fit.phi - 0.6).abs() < 0.15, "phi {}", fit.phi);
        assert!(fit.covariance[(0, 0)] > 0.0);
    }

    /// Checks the standard errors of `fit` against the inverse of a
    /// central-difference Hessian of `ell`, the profile in (φ, b).
    fn assert_hessian_matches(fit: &Ar1Fit, ell: impl Fn(&[f64]) -> f64) {
        let mut theta = vec![fit.phi];
        theta.extend(&fit.beta);
        let k = theta.len();
        let mut h = DMatrix::zeros(k, k);
        for i in 0..k {
            for j in 0..k {
                let (di, dj) = (
                    1e-4 * theta[i].abs().max(1e-2),
                    1e-4 * theta[j].abs().max(1e-2),
                );
                let at = |si: f64, sj: f64| {
                    let mut v = theta.clone();
                    v[i] += si * di;
                    v[j] += sj * dj;
                    ell(&v)
                };
                h[(i, j)] = (at(1.0, 1.0) - at(1.0, -1.0) - at(-1.0, 1.0) + at(-1.0, -1.0))
                    / (4.0 * di * dj);
            }
        }
        let numeric = (-h).try_inverse().expect("invertible");
        for i in 0..k {
            let (a, b) = (fit.covariance[(i, i)].sqrt(), numeric[(i, i)].sqrt());
            assert!((a - b).abs() < 1e-4 * b, "se {i}: {a} vs {b}");
        }
    }

    #[test]
    fn the_standard_errors_match_a_numerical_hessian() {
        let (x, y) = series(120, 0.4);
        let fit = fit_ar1(&x, &y, &vec![1; y.len()]).expect("fits");
        let dense = x.to_dense();
        // ℓ(φ, b) with σ² concentrated out, differentiated numerically.
        let ell = |v: &[f64]| {
            let b = DVector::from_column_slice(&v[1..]);
            let xb = &dense * b;
            let u: Vec<f64> = y.iter().zip(xb.iter()).map(|(a, c)| a - c).collect();
            likelihood(&u, &links(v[0], &vec![1; u.len()])).1
        };
        assert_hessian_matches(&fit, ell);
    }

    /// A series with missing periods: the gaps after rows 5, 6 and 20.
    fn gapped(n: usize) -> (DesignMatrix, Vec<f64>, Vec<u32>) {
        let (x, y) = series(n, 0.5);
        let gaps = (0..n)
            .map(|t| match t {
                6 => 3,
                7 => 2,
                21 => 4,
                _ => 1,
            })
            .collect();
        (x, y, gaps)
    }

    #[test]
    fn with_gaps_the_likelihood_is_the_joint_density_of_the_rows_observed() {
        let (x, y, gaps) = gapped(40);
        let fit = fit_ar1(&x, &y, &gaps).expect("fits");
        // The Gaussian log-density of u under cov(uᵢ, uⱼ) =
        // σ²φ^|tᵢ − tⱼ|/(1 − φ²), by a dense Cholesky factor: no
        // transform, no recursion.
        let times: Vec<i32> = gaps
            .iter()
            .scan(0i32, |t, &g| {
                *t += g as i32;
                Some(*t)
            })
            .collect();
        let n = y.len();
        let (phi, s2) = (fit.phi, fit.sigma2);
        let cov = DMatrix::from_fn(n, n, |i, j| {
            s2 * phi.powi((times[i] - times[j]).abs()) / (1.0 - phi * phi)
        });
        let chol = cov.cholesky().expect("positive definite");
        let u = DVector::from_column_slice(&fit.residuals);
        let z = chol.l().solve_lower_triangular(&u).expect("solve");
        let log_det: f64 = chol.l().diagonal().iter().map(|d| 2.0 * d.ln()).sum();
        let direct =
            -0.5 * (n as f64 * (2.0 * std::f64::consts::PI).ln() + log_det + z.norm_squared());
        assert!(
            (direct - fit.log_likelihood).abs() < 1e-9 * direct.abs(),
            "{direct} vs {}",
            fit.log_likelihood
        );
    }

    #[test]
    fn with_gaps_the_standard_errors_match_a_numerical_hessian() {
        let (x, y, gaps) = gapped(60);
        let fit = fit_ar1(&x, &y, &gaps).expect("fits");
        let dense = x.to_dense();
        let ell = |v: &[f64]| {
            let b = DVector::from_column_slice(&v[1..]);
            let xb = &dense * b;
            let u: Vec<f64> = y.iter().zip(xb.iter()).map(|(a, c)| a - c).collect();
            likelihood(&u, &links(v[0], &gaps)).1
        };
        assert_hessian_matches(&fit, ell);
    }

    #[test]
    fn a_random_walk_is_refused_at_the_edge_of_stationarity() {
        let (x, _) = series(150, 0.0);
        // A random walk without drift about a constant: φ → 1.
        let (_, walk) = series(150, 1.0);
        let x = x.select_columns(&[0]);
        let err = fit_ar1(&x, &walk, &vec![1; walk.len()]).expect_err("refused");
        assert!(matches!(err, Ar1Error::EdgeOfStationarity { .. }), "{err}");
    }

    #[test]
    fn too_few_rows_are_an_error_value() {
        let (x, y) = series(3, 0.2);
        assert_eq!(
            fit_ar1(&x, &y, &[1, 1, 1]).expect_err("refused"),
            Ar1Error::TooFewRows {
                rows: 3,
                coefficients: 2
            }
        );
    }

    #[test]
    fn a_bracket_without_a_sign_change_is_not_convergence() {
        let (x, y) = series(60, 0.3);
        let dense = x.to_dense();
        let ones = vec![1; y.len()];
        let mut at = |phi: f64| profile(&dense, &y, &ones, phi);
        let (a, b) = (at(0.9).expect("a"), at(0.95).expect("b"));
        // Both points lie beyond the maximum, where the slope is negative.
        assert!(matches!(
            illinois(a, b, &mut at),
            Err(Ar1Error::NotConverged { .. })
        ));
    }
}
