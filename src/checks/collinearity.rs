//! Collinearity of each model term: the generalized variance inflation
//! factor.
//!
//! How far a term's estimates are inflated by its correlation with the other
//! terms. A numeric predictor gets the classical variance inflation factor
//! VIF = 1/(1 − R²ⱼ) (Marquardt 1970); a term of several columns (a factor's
//! indicators, a polynomial's powers, seasons) gets the generalized VIF of
//! Fox & Monette (1992), which does not depend on how the term is coded.
//!
//! References:
//! * Fox, J. & Monette, G. (1992). Generalized collinearity diagnostics.
//!   *Journal of the American Statistical Association* 87(417), 178–183.
//! * Marquardt, D. W. (1970). Generalized inverses, ridge regression, biased
//!   linear estimation, and nonlinear estimation. *Technometrics* 12(3),
//!   591–612.
//! * Golub, G. H. & Van Loan, C. F. (2013). *Matrix Computations*, 4th ed.,
//!   §5.2 (Householder QR) — how the determinants are computed.

use nalgebra::DMatrix;

use crate::design::{Design, DesignMatrix, TermKind};
use crate::fit::auxiliary_least_squares;

/// Collinearity of one term.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TermCollinearity {
    /// The term's name, as in [`crate::design::Term::name`].
    pub term: String,
    /// Degrees of freedom of the term: its estimable (kept) columns.
    pub df: usize,
    /// Generalized variance inflation factor
    /// GVIF = det(R₁₁)·det(R₂₂)/det(R) (Fox & Monette 1992), R the
    /// correlation matrix of the non-intercept kept columns, R₁₁ the block
    /// of this term's columns and R₂₂ that of the others. For a one-column
    /// term it is the classical VIF 1/(1 − R²ⱼ) (Marquardt 1970). At least 1;
    /// infinite when the other terms determine this one exactly.
    pub gvif: f64,
    /// GVIF^(1/(2·df)) (Fox & Monette 1992): the factor by which the
    /// radius of the term's confidence region is inflated, comparable across
    /// terms of different df; √VIF for a one-column term.
    pub gvif_adjusted: f64,
}

/// The generalized variance inflation factor of every term of `design`
/// other than the intercept, over the estimable columns `kept` (indices
/// into the columns of `design.x`, as in
/// [`crate::fit::LeastSquares::kept`]).
///
/// Formula (Fox & Monette 1992): with R the correlation matrix of all
/// non-intercept kept columns, R₁₁ the block of the term's kept columns and
/// R₂₂ the block of the rest,
///
/// GVIF = det(R₁₁)·det(R₂₂)/det(R),  GVIF_adj = GVIF^(1/(2·df)),
///
/// df the number of the term's kept columns. For one column this is
/// 1/(1 − R²ⱼ), R²ⱼ from regressing that column on the others.
///
/// Computation: the columns are centred and scaled to unit length (Z, so
/// that R = Z'Z). Since det(R) = det(R₂₂)·det(R₁₁ − R₁₂R₂₂⁻¹R₂₁) (the Schur
/// complement), GVIF = det(Z₁'Z₁)/det(E'E), E the part of the term's columns
/// Z₁ orthogonal to the other columns Z₂. Both determinants come from
/// Householder QR factors — of Z₁ alone, and of [Z₂ Z₁], whose trailing
/// diagonal block belongs to E — as squared products of diagonals, summed as
/// logarithms. Z is factored once, Z = QR; the factors of its column
/// subsets are those of the same columns of R, which has as many rows as
/// Z has columns. Neither R nor its inverse is formed, so the digits lost are
/// those of the design, not of its square.
///
/// Terms whose columns were all aliased are left out; a partly aliased
/// term counts only its kept columns. Values are from the design as held in
/// double precision (`design.x`; the low parts of polynomial powers are
/// below what correlations can resolve).
///
/// The statistic is only meaningful with an intercept and at least two
/// terms besides it, and needs more rows than columns and a finite design
/// whose kept columns vary; otherwise the result is empty. A term that the
/// others determine exactly (to working precision) gets an infinite GVIF.
pub fn collinearity(design: &Design, kept: &[usize]) -> Vec<TermCollinearity> {
    let x = &design.x;
    let (n, ncols) = (x.nrows(), x.ncols());
    if kept.iter().any(|&j| j >= ncols) {
        return Vec::new();
    }
    let intercept_kept = design.intercept
        && design
            .terms
            .iter()
            .any(|t| t.kind == TermKind::Intercept && t.columns.clone().any(|j| kept.contains(&j)));
    if !intercept_kept {
        return Vec::new();
    }
    // The non-intercept terms with their kept columns, in model order, and
    // the positions of those columns in Z.
    let mut columns: Vec<usize> = Vec::new();
    let mut terms: Vec<(&str, Vec<usize>)> = Vec::new();
    for term in design
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Intercept)
    {
        let own: Vec<usize> = term.columns.clone().filter(|j| kept.contains(j)).collect();
        if own.is_empty() {
            continue;
        }
        let positions = (columns.len()..columns.len() + own.len()).collect();
        columns.extend(own);
        terms.push((term.name.as_str(), positions));
    }
    let m = columns.len();
    if terms.len() < 2 || n <= m {
        return Vec::new();
    }
    let Some(r) = centred_factor(design, kept, &columns) else {
        return Vec::new();
    };
    terms
        .into_iter()
        .map(|(name, own)| {
            let gvif = gvif(&r, &own);
            let df = own.len();
            TermCollinearity {
                term: name.to_string(),
                df,
                gvif,
                gvif_adjusted: gvif.powf(1.0 / (2.0 * df as f64)),
            }
        })
        .collect()
}

/// A triangular factor R whose Gram matrix R'R is that of the columns
/// `columns` of `design.x` centred on their means (up to the scaling of
/// each column, which GVIF does not see); `None` when a value is not finite
/// or a column does not vary.
///
/// When the intercept is the first of the `kept` columns (as the design
/// builds it) and a blocked double-precision solve keeps the same columns,
/// R is the trailing block of the factor of [1 X]: for X = QR with the
/// intercept first, that block's Gram matrix is X'(I − 11'/n)X, the centred
/// one. The design is then read in blocks and never copied. Otherwise the
/// centred, unit-length columns are formed and factored directly.
fn centred_factor(design: &Design, kept: &[usize], columns: &[usize]) -> Option<DMatrix<f64>> {
    let x = &design.x;
    for &j in columns {
        let column = x.column(j);
        if column.iter().any(|v| !v.is_finite()) || column.iter().all(|&v| v == column[0]) {
            return None;
        }
    }
    let intercept_first = design
        .terms
        .iter()
        .find(|t| t.kind == TermKind::Intercept)
        .is_some_and(|t| kept.first().is_some_and(|j| t.columns.contains(j)));
    if intercept_first {
        let solved = auxiliary_least_squares(x, &vec![0.0; x.nrows()]);
        if solved.kept == kept && solved.kept.len() == columns.len() + 1 {
            let m = columns.len();
            return Some(solved.r.view((1, 1), (m, m)).into_owned());
        }
    }
    Some(standardized(x, columns)?.qr().r())
}

/// The columns `columns` of `x`, each centred on its mean and scaled to
/// unit length; `None` when a value is not finite or a column does not vary.
fn standardized(x: &DesignMatrix, columns: &[usize]) -> Option<DMatrix<f64>> {
    let n = x.nrows();
    let mut z = DMatrix::zeros(n, columns.len());
    for (k, &j) in columns.iter().enumerate() {
        let column = x.column(j);
        if column.iter().any(|v| !v.is_finite()) {
            return None;
        }
        // Two passes: the mean, then the mean of what is left, so that
        // centring loses no more than rounding.
        let mean = column.iter().sum::<f64>() / n as f64;
        let correction = column.iter().map(|v| v - mean).sum::<f64>() / n as f64;
        let mean = mean + correction;
        let mut out = z.column_mut(k);
        for (o, v) in out.iter_mut().zip(column.iter()) {
            *o = v - mean;
        }
        let norm = out.norm();
        if !(norm > 0.0 && norm.is_finite()) {
            return None;
        }
        out /= norm;
    }
    Some(z)
}

/// GVIF of the columns `own` of the standardized matrix Z against the
/// rest: det(Z₁'Z₁)/det(E'E), from the diagonals of two Householder QR
/// factors, in logarithms. `r` is the R factor of Z = QR, whose columns
/// have the same Gram matrix as Z's.
fn gvif(r: &DMatrix<f64>, own: &[usize]) -> f64 {
    let rest: Vec<usize> = (0..r.ncols()).filter(|j| !own.contains(j)).collect();
    let ordered: Vec<usize> = rest.iter().chain(own).copied().collect();
    let log_det_own = log_det_gram(&r.select_columns(own), 0);
    let log_det_orthogonal = log_det_gram(&r.select_columns(&ordered), rest.len());
    if log_det_orthogonal == f64::NEG_INFINITY {
        return f64::INFINITY;
    }
    // Rounding can leave a perfectly uncorrelated term a hair below 1.
    (log_det_own - log_det_orthogonal).exp().max(1.0)
}

/// ln det of the Gram matrix of the trailing columns of `a` (from column
/// `from`) after projecting out the leading ones: 2·Σ ln |rₖₖ| over the
/// trailing diagonal of the R factor of a = QR. −∞ when a diagonal is zero.
/// `a` has at least as many rows as columns.
fn log_det_gram(a: &DMatrix<f64>, from: usize) -> f64 {
    let r = a.clone().qr().r();
    (from..a.ncols()).map(|k| 2.0 * r[(k, k)].abs().ln()).sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::Term;
    use nalgebra::DVector;

    fn design(x: DMatrix<f64>, terms: Vec<(&str, TermKind, std::ops::Range<usize>)>) -> Design {
        let intercept = terms.first().is_some_and(|t| t.1 == TermKind::Intercept);
        Design {
            response: "y".into(),
            y: DVector::zeros(x.nrows()),
            names: (0..x.ncols()).map(|j| format!("c{j}")).collect(),
            x: DesignMatrix::from_dense(&x, None),
            terms: terms
                .into_iter()
                .map(|(name, kind, columns)| Term {
                    name: name.into(),
                    column: name.into(),
                    kind,
                    columns,
                })
                .collect(),
            intercept,
            rows: Vec::new(),
            dropped: Vec::new(),
            timing: None,
            log_response: false,
            lag_history: Default::default(),
            series: None,
            weights: None,
        }
    }

    /// Intercept, a, b with a and b over six rows.
    fn two_numeric(a: [f64; 6], b: [f64; 6]) -> Design {
        let mut x = DMatrix::from_element(6, 3, 1.0);
        for i in 0..6 {
            x[(i, 1)] = a[i];
            x[(i, 2)] = b[i];
        }
        design(
            x,
            vec![
                ("Intercept", TermKind::Intercept, 0..1),
                ("a", TermKind::Numeric, 1..2),
                ("b", TermKind::Numeric, 2..3),
            ],
        )
    }

    #[test]
    fn two_predictors_get_one_over_one_minus_their_squared_correlation() {
        let a = [1.0, 2.0, 3.0, 4.0, 5.0, 7.0];
        let b = [2.0, 1.0, 4.0, 3.0, 7.0, 5.0];
        let d = two_numeric(a, b);
        let out = collinearity(&d, &[0, 1, 2]);
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let (ma, mb) = (mean(&a), mean(&b));
        let sab: f64 = a.iter().zip(&b).map(|(x, y)| (x - ma) * (y - mb)).sum();
        let saa: f64 = a.iter().map(|x| (x - ma).powi(2)).sum();
        let sbb: f64 = b.iter().map(|y| (y - mb).powi(2)).sum();
        let r2 = sab * sab / (saa * sbb);
        assert_eq!(out.len(), 2);
        for t in &out {
            assert_eq!(t.df, 1);
            assert!((t.gvif / (1.0 / (1.0 - r2)) - 1.0).abs() < 1e-13, "{t:?}");
            assert!((t.gvif_adjusted - t.gvif.sqrt()).abs() < 1e-13);
        }
    }

    #[test]
    fn uncorrelated_predictors_get_one() {
        let d = two_numeric(
            [1.0, -1.0, 1.0, -1.0, 0.0, 0.0],
            [1.0, 1.0, -1.0, -1.0, 0.0, 0.0],
        );
        let out = collinearity(&d, &[0, 1, 2]);
        assert!(out.iter().all(|t| t.gvif == 1.0), "{out:?}");
    }

    #[test]
    fn no_intercept_or_one_term_gives_nothing() {
        let d = two_numeric(
            [1.0, 2.0, 3.0, 4.0, 5.0, 7.0],
            [2.0, 1.0, 4.0, 3.0, 7.0, 5.0],
        );
        // Intercept aliased away (or not fitted): no intercept among kept.
        assert!(collinearity(&d, &[1, 2]).is_empty());
        // One term besides the intercept.
        assert!(collinearity(&d, &[0, 1]).is_empty());
        let mut no_intercept = d.clone();
        no_intercept.intercept = false;
        assert!(collinearity(&no_intercept, &[0, 1, 2]).is_empty());
    }

    #[test]
    fn degenerate_designs_give_nothing_rather_than_panicking() {
        let d = two_numeric(
            [1.0, 2.0, 3.0, 4.0, 5.0, 7.0],
            [2.0, 1.0, 4.0, 3.0, 7.0, 5.0],
        );
        // An index past the design.
        assert!(collinearity(&d, &[0, 1, 5]).is_empty());
        // A column that does not vary.
        let constant = two_numeric([3.0; 6], [2.0, 1.0, 4.0, 3.0, 7.0, 5.0]);
        assert!(collinearity(&constant, &[0, 1, 2]).is_empty());
        // A value that is not finite.
        let mut nan = d.clone();
        let mut x = nan.x.to_dense();
        x[(2, 1)] = f64::NAN;
        nan.x = DesignMatrix::from_dense(&x, None);
        assert!(collinearity(&nan, &[0, 1, 2]).is_empty());
        // As many columns as rows.
        let short = design(
            DMatrix::from_row_slice(2, 3, &[1.0, 1.0, 2.0, 1.0, 2.0, 1.0]),
            vec![
                ("Intercept", TermKind::Intercept, 0..1),
                ("a", TermKind::Numeric, 1..2),
                ("b", TermKind::Numeric, 2..3),
            ],
        );
        assert!(collinearity(&short, &[0, 1, 2]).is_empty());
        // No rows at all.
        let empty = design(
            DMatrix::zeros(0, 3),
            vec![
                ("Intercept", TermKind::Intercept, 0..1),
                ("a", TermKind::Numeric, 1..2),
                ("b", TermKind::Numeric, 2..3),
            ],
        );
        assert!(collinearity(&empty, &[0, 1, 2]).is_empty());
    }

    #[test]
    fn exactly_collinear_columns_get_an_infinite_factor() {
        // b = 2a exactly: were it kept, neither could be told apart.
        let a = [1.0, 2.0, 3.0, 4.0, 5.0, 7.0];
        let d = two_numeric(a, a.map(|v| 2.0 * v));
        let out = collinearity(&d, &[0, 1, 2]);
        assert_eq!(out.len(), 2);
        assert!(out.iter().all(|t| t.gvif > 1e12), "{out:?}");
    }

    #[test]
    fn fully_aliased_terms_are_left_out() {
        let mut x = DMatrix::from_element(6, 4, 1.0);
        let a = [1.0, 2.0, 3.0, 4.0, 5.0, 7.0];
        let b = [2.0, 1.0, 4.0, 3.0, 7.0, 5.0];
        for i in 0..6 {
            x[(i, 1)] = a[i];
            x[(i, 2)] = b[i];
            x[(i, 3)] = a[i] + b[i];
        }
        let d = design(
            x,
            vec![
                ("Intercept", TermKind::Intercept, 0..1),
                ("a", TermKind::Numeric, 1..2),
                ("b", TermKind::Numeric, 2..3),
                ("sum", TermKind::Numeric, 3..4),
            ],
        );
        let out = collinearity(&d, &[0, 1, 2]);
        let names: Vec<&str> = out.iter().map(|t| t.term.as_str()).collect();
        assert_eq!(names, ["a", "b"]);
    }
}
