//! Tests and diagnostics computed from a fitted model: the ANOVA tables,
//! per-row influence measures and the model checks.
//!
//! Every function here reads a [`Fit`] (and its [`Design`]) and returns new
//! values; nothing is stored back into the fit.

pub mod assumptions;
pub mod collinearity;

use assumptions::{
    breusch_godfrey, breusch_pagan, durbin_watson, jarque_bera, reset_or_why, shapiro_wilk,
    TestResult,
};

use crate::design::{Design, Term, TermKind};
use crate::fit::{f_sf, least_squares, Fit, Precision, EXTENDED_ABOVE};
use crate::period::Period;

/// One row of an ANOVA table: a term's sum of squares and its F test
/// against the full model's residual mean square.
#[derive(Debug, Clone, serde::Serialize)]
pub struct AnovaRow {
    /// The term (a column name, not an indicator), or `Residual`.
    pub term: String,
    /// Degrees of freedom: the term's estimable columns.
    pub df: usize,
    /// Sum of squares.
    pub sum_sq: f64,
    /// Mean square SS/df.
    pub mean_sq: f64,
    /// F = mean square / residual mean square; absent for the residual row.
    pub f_stat: Option<f64>,
    /// P(F > f) with (df, df_resid) degrees of freedom.
    pub p_value: Option<f64>,
}

/// Sequential ANOVA: each term's sum of squares given the terms listed before
/// it, from the QR effects (the squared entries of Qᵀy), then the residual
/// row. The intercept is not a row: sums are about the mean.
pub fn sequential_anova(design: &Design, fit: &Fit) -> Vec<AnovaRow> {
    let ls = &fit.solution;
    let rows = design
        .terms
        .iter()
        .filter(|t| t.kind != TermKind::Intercept)
        .map(|term| {
            let (df, sum_sq) = ls
                .kept
                .iter()
                .zip(&ls.effects)
                .filter(|(j, _)| term.columns.contains(j))
                .fold((0, 0.0), |(df, ss), (_, e)| (df + 1, ss + e * e));
            term_row(term, df, sum_sq, fit)
        })
        .collect();
    with_residual(rows, fit)
}

/// Each term given all the others, respecting marginality (Type II; Fox
/// 2016, *Applied Regression Analysis*, §8.2.5): a term's sum of squares is
/// the rise in residual sum of squares when it is dropped from the model
/// without the interactions that contain it; an interaction (contained in no
/// other term) is dropped from the full model. F is taken against the full
/// model's residual mean square. For a categorical predictor this is the
/// joint test of all its indicators together.
pub fn each_term_last_anova(design: &Design, fit: &Fit) -> Vec<AnovaRow> {
    let rows = design
        .terms
        .iter()
        .enumerate()
        .filter(|(_, t)| t.kind != TermKind::Intercept)
        .map(|(k, term)| {
            let higher = design.interaction_columns_of(k);
            // The rank without the dropped columns and the rise in residual
            // sum of squares over the full model: from the fit's own QR
            // factor when it can tell, otherwise by a refit.
            let without = |drop: &dyn Fn(usize) -> bool| {
                fit.solution.sse_rise_without(drop).unwrap_or_else(|| {
                    let cols: Vec<usize> = (0..design.x.ncols()).filter(|&j| !drop(j)).collect();
                    let refit = least_squares(&design.x.select_columns(&cols), &design.y);
                    (
                        refit.kept.len(),
                        refit.residuals.norm_squared() - fit.quality.sse,
                    )
                })
            };
            let (reduced_rank, reduced_rise) =
                without(&|j| term.columns.contains(&j) || higher.contains(&j));
            let (base_rank, base_rise) = if higher.is_empty() {
                (fit.solution.kept.len(), 0.0)
            } else {
                without(&|j| higher.contains(&j))
            };
            let df = base_rank - reduced_rank;
            let sum_sq = (reduced_rise - base_rise).max(0.0);
            term_row(term, df, sum_sq, fit)
        })
        .collect();
    with_residual(rows, fit)
}

fn term_row(term: &Term, df: usize, sum_sq: f64, fit: &Fit) -> AnovaRow {
    let residual_ms = fit.quality.sse / fit.df_resid as f64;
    let (mean_sq, f_stat) = if df == 0 {
        (f64::NAN, None)
    } else {
        let ms = sum_sq / df as f64;
        (ms, (residual_ms > 0.0).then(|| ms / residual_ms))
    };
    AnovaRow {
        term: term.name.clone(),
        df,
        sum_sq,
        mean_sq,
        f_stat,
        p_value: f_stat.and_then(|f| f_sf(f, df as f64, fit.df_resid as f64)),
    }
}

fn with_residual(mut rows: Vec<AnovaRow>, fit: &Fit) -> Vec<AnovaRow> {
    rows.push(AnovaRow {
        term: "Residual".into(),
        df: fit.df_resid,
        sum_sq: fit.quality.sse,
        mean_sq: fit.quality.sse / fit.df_resid as f64,
        f_stat: None,
        p_value: None,
    });
    rows
}

/// The outcome of one model check, in numbers and in words.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Check {
    /// What is checked, e.g. `condition number`.
    pub name: String,
    /// The statistic the check rests on.
    pub statistic: Option<f64>,
    /// Its p-value, for checks that are tests.
    pub p_value: Option<f64>,
    /// The rule applied, with its source.
    pub rule: String,
    /// Whether the rule flags a problem.
    pub flagged: bool,
    /// What the result means, in plain words.
    pub verdict: String,
}

/// Condition number above which collinearity is worth a look, and above
/// which it is strong (Belsley, Kuh & Welsch 1980, *Regression
/// Diagnostics*, ch. 3; rules of thumb for unit-length-scaled columns).
pub const CONDITION_MODERATE: f64 = 30.0;
/// See [`CONDITION_MODERATE`].
pub const CONDITION_STRONG: f64 = 1000.0;

/// Judges the condition number of the scaled design (see
/// [`crate::fit::FitQuality::condition_number`]).
pub fn condition_check(fit: &Fit) -> Check {
    let kappa = fit.quality.condition_number;
    let (flagged, mut verdict) = if kappa > CONDITION_STRONG {
        (true, "strong collinearity: some predictors are nearly combinations of others, so their separate coefficients are unstable and their standard errors large; consider dropping or combining predictors".to_string())
    } else if kappa > CONDITION_MODERATE {
        (true, "moderate collinearity: predictors overlap; read the separate coefficients of related predictors with care".to_string())
    } else {
        (false, "no sign of collinearity".to_string())
    };
    if fit.quality.precision == Precision::DoubleDouble {
        verdict.push_str(&format!(
            "; solved in double-double arithmetic (condition number above {}) so the reported digits hold",
            EXTENDED_ABOVE
        ));
    }
    Check {
        name: "condition number".into(),
        statistic: Some(kappa),
        p_value: None,
        rule: format!(
            "above {CONDITION_MODERATE}: moderate, above {CONDITION_STRONG}: strong collinearity \
             (Belsley, Kuh & Welsch 1980; rule of thumb, columns scaled to unit length)"
        ),
        flagged,
        verdict,
    }
}

/// With robust standard errors, the rows of leverage 1 and what they do to
/// them: the fit passes through such a row whatever its value, so its own
/// error variance cannot be estimated (MacKinnon & White 1985; Long &
/// Ervin 2000). HC3's standard errors of the coefficients such rows move
/// are undefined (left blank); HC1's are too small. `None` without robust
/// standard errors or without such rows.
pub fn robust_check(design: &Design, fit: &Fit) -> Option<Check> {
    let kind = fit.standard_errors?;
    let ls = &fit.solution;
    let rows = crate::fit::robust::unit_leverage_rows(&ls.leverage);
    if rows.is_empty() {
        return None;
    }
    let moved: Vec<String> = crate::fit::robust::moved_by_unit_leverage_rows(
        &design.x,
        &ls.kept,
        &ls.xtx_inv,
        &ls.leverage,
    )
    .into_iter()
    .filter_map(|k| fit.coefficients.get(k).map(|c| c.term.clone()))
    .collect();
    let sheet_rows: Vec<u32> = rows
        .iter()
        .filter_map(|&i| design.rows.get(i).copied())
        .collect();
    let which = if sheet_rows.len() == 1 {
        format!(
            "sheet row {} has leverage 1 (the fit passes through it whatever its value, as the only row of a level), so its own error variance cannot be estimated",
            sheet_rows[0]
        )
    } else {
        format!(
            "sheet rows {} have leverage 1 (the fit passes through them whatever their values, as the only rows of their levels), so their own error variance cannot be estimated",
            crate::text::row_ranges(&sheet_rows)
        )
    };
    let coefficients = moved.join(", ");
    Some(Check {
        name: "robust standard errors".into(),
        statistic: Some(rows.len() as f64),
        p_value: None,
        rule: "rows of leverage 1 (to within 1e-10) among the rows used; HC3 weights such a row 0/0, HC1 by its zero residual (MacKinnon & White 1985; Long & Ervin 2000)".into(),
        flagged: true,
        verdict: match kind {
            crate::job::Robust::Hc3 => format!(
                "{which}: the HC3 standard errors of {coefficients} are undefined and left blank, with their t, p and intervals; the other coefficients' do not depend on those rows. HC1 would give these coefficients standard errors that are too small"
            ),
            crate::job::Robust::Hc1 | crate::job::Robust::Hac(_) => format!(
                "{which}: the {} standard errors of {coefficients} leave that variance out and are too small (HC3 reports them as undefined); read those coefficients with care",
                kind.label()
            ),
        },
    })
}

/// The level at which the assumption tests flag a problem.
pub const TEST_LEVEL: f64 = 0.05;

/// A test result as a check: flagged when p < [`TEST_LEVEL`].
fn test_check(name: &str, result: Option<TestResult>, rule: &str, good: &str, bad: &str) -> Check {
    let result = result.ok_or("too few rows, or no variation in the residuals");
    test_check_or_why(name, result, rule, good, bad)
}

/// [`test_check`] of a test that says why it was not computed.
fn test_check_or_why(
    name: &str,
    result: Result<TestResult, &str>,
    rule: &str,
    good: &str,
    bad: &str,
) -> Check {
    let p = result.as_ref().ok().and_then(|r| r.p_value);
    let flagged = p.is_some_and(|p| p < TEST_LEVEL);
    Check {
        name: name.into(),
        statistic: result.as_ref().ok().map(|r| r.statistic),
        p_value: p,
        rule: format!("{rule}; flagged when p < {TEST_LEVEL}"),
        flagged,
        verdict: match (&result, flagged) {
            (Err(why), _) => format!("not computed: {why}"),
            (Ok(_), true) => bad.into(),
            (Ok(_), false) => good.into(),
        },
    }
}

/// The assumption checks of a fit: independence (Durbin-Watson, and
/// Breusch-Godfrey when the model has periods), constant spread
/// (Breusch-Pagan, Koenker's studentized form), normality (Jarque-Bera,
/// Shapiro-Wilk) and missing curvature (RESET).
pub fn assumption_checks(design: &Design, fit: &Fit) -> Vec<Check> {
    if !(fit.quality.sigma > 0.0 && fit.quality.sigma.is_finite()) {
        return vec![Check {
            name: "residual checks".into(),
            statistic: None,
            p_value: None,
            rule: "the tests of independence, spread, normality and curvature need residual variation".into(),
            flagged: true,
            verdict: "not computed: the model fits every row exactly (or the values are too large to square); check that the response is not a copy or a sum of the predictors".into(),
        }];
    }
    let e = fit.solution.residuals.as_slice();
    let y = design.y.as_slice();
    let order_words = if design.timing.is_some() {
        "rows in period order"
    } else {
        "rows in sheet order; meaningful only when that order is time"
    };
    let durbin_watson_check = test_check(
        "durbin-watson",
        durbin_watson(e, &design.x),
        &format!("Durbin & Watson (1950, 1971); p for positive autocorrelation, exact below 100 rows, else normal approximation; {order_words}"),
        "residuals look independent from one row to the next",
        "residuals of neighbouring rows move together (positive autocorrelation): standard errors and p-values are too optimistic; consider a trend, seasons or fewer, longer periods",
    );
    // Without a date column the rows have no time order: the statistic
    // describes the sheet's order only, which is no ground for a flag.
    let durbin_watson_check = match (&design.timing, durbin_watson_check.statistic) {
        (None, Some(_)) => Check {
            flagged: false,
            verdict: "not a test of time dependence: the model has no date column, so the statistic only describes how rows next to each other in the sheet move together; it is not flagged".into(),
            ..durbin_watson_check
        },
        _ => durbin_watson_check,
    };
    let mut checks = vec![durbin_watson_check];
    if let Some(timing) = &design.timing {
        let order = design
            .terms
            .iter()
            .find_map(|t| match t.kind {
                TermKind::Season { by, .. } => Some(by.labels().len()),
                _ => None,
            })
            .unwrap_or(2);
        checks.push(test_check(
            "breusch-godfrey",
            breusch_godfrey(e, &design.x, order),
            &format!(
                "Breusch (1978), Godfrey (1978): autocorrelation up to lag {order} ({} periods); chi-square LM form",
                timing.frequency.name()
            ),
            "no sign of autocorrelation up to that lag",
            "residuals are correlated across periods: standard errors are too optimistic and forecasts' intervals too narrow",
        ));
    }
    checks.push(test_check(
        "breusch-pagan",
        breusch_pagan(e, &design.x),
        "Breusch & Pagan (1979), studentized by Koenker (1981): does the spread of the residuals change with the predictors?",
        "spread looks constant",
        "spread changes with the predictors: consider robust standard errors (standard_errors = \"HC3\") or a log response",
    ));
    checks.push(test_check(
        "jarque-bera",
        jarque_bera(e),
        "Jarque & Bera (1980): skewness and kurtosis of the residuals against the normal",
        "residuals look normal in shape",
        "residuals are skewed or heavy-tailed: p-values and intervals are approximate; look at the flagged rows and the normal plot",
    ));
    checks.push(test_check(
        "shapiro-wilk",
        shapiro_wilk(e),
        "Shapiro & Wilk (1965), Royston's (1995) algorithm, 3 to 5000 rows",
        "residuals look normal",
        "residuals depart from the normal: p-values and intervals are approximate; look at the normal plot",
    ));
    checks.push(test_check_or_why(
        "reset",
        reset_or_why(y, &design.x, &fit.solution),
        "Ramsey (1969) RESET: do the squared and cubed fitted values add anything?",
        "no sign of missing curvature",
        "the relation looks curved: consider a polynomial term, an interaction or a log response",
    ));
    checks
}

/// A GVIF^(1/(2·df)) above this flags a term: for one-column terms that is
/// a VIF above 10, a common rule of thumb (e.g. Kutner et al., *Applied
/// Linear Statistical Models*, 5th ed., §10.5), on the scale Fox & Monette
/// (1992) make comparable across terms of different df.
pub const VIF_LIMIT: f64 = 10.0;

/// One check per term from its (generalized) variance inflation factor; for
/// a model of several terms without an intercept, one check saying why there
/// are none.
pub fn collinearity_checks(
    design: &Design,
    terms: &[collinearity::TermCollinearity],
) -> Vec<Check> {
    if design.weights.is_some() && design.terms.len() > 1 {
        return vec![Check {
            name: "variance inflation".into(),
            statistic: None,
            p_value: None,
            rule: "variance inflation factors compare each term with the others about their means (Fox & Monette 1992)".into(),
            flagged: false,
            verdict: "not computed for a weighted fit: its predictors overlap as weighted, which the condition number describes".into(),
        }];
    }
    if !design.intercept && design.terms.len() > 1 {
        return vec![Check {
            name: "variance inflation".into(),
            statistic: None,
            p_value: None,
            rule: "variance inflation factors compare each term with the others about their means, which needs an intercept (Fox & Monette 1992)".into(),
            flagged: false,
            verdict: "not computed: without an intercept the predictors are not centred, so a variance inflation factor would mix their overlap with their distance from zero; the condition number describes collinearity instead".into(),
        }];
    }
    let limit = VIF_LIMIT.sqrt();
    terms
        .iter()
        .map(|t| {
            let flagged = t.gvif_adjusted > limit;
            Check {
                name: format!("variance inflation: {}", t.term),
                statistic: Some(t.gvif),
                p_value: None,
                rule: format!(
                    "GVIF^(1/(2 df)) above √{VIF_LIMIT} ≈ {limit:.2}, i.e. a VIF above {VIF_LIMIT} for a one-column term (Fox & Monette 1992; a rule of thumb); here {} on {} df",
                    crate::text::significant(t.gvif_adjusted, 3),
                    t.df
                ),
                flagged,
                verdict: if flagged {
                    format!("{} overlaps strongly with the other predictors: its standard errors are inflated; consider dropping or combining it", t.term)
                } else {
                    format!("{} is not much explained by the other predictors", t.term)
                },
            }
        })
        .collect()
}

/// Per-row values for the residual sheet.
#[derive(Debug, Clone, serde::Serialize)]
pub struct RowDiagnostics {
    /// Sheet row of the observation, counted from 1.
    pub row: u32,
    /// The period, written as its label, when the model has a date column.
    pub period: Option<crate::period::Period>,
    /// Trend index of the period.
    pub index: Option<i64>,
    /// Observed response.
    pub actual: f64,
    /// Fitted value.
    pub fitted: f64,
    /// Residual e = actual − fitted.
    pub residual: f64,
    /// Standardized (internally studentized) residual e / (s·√(1 − h));
    /// absent when h = 1 or s = 0.
    pub standardized_residual: Option<f64>,
    /// Leverage h, the diagonal of the hat matrix X(X'X)⁻¹X'.
    pub leverage: f64,
    /// Cook's distance r²·h / (p·(1 − h)), r the standardized residual
    /// (Cook 1977); absent where the standardized residual is.
    pub cooks_distance: Option<f64>,
    /// Externally studentized residual t = r·√((n − p − 1)/(n − p − r²)):
    /// the residual scaled by s estimated without the row (Belsley, Kuh &
    /// Welsch 1980, §2.1).
    pub studentized_residual: Option<f64>,
    /// DFFITS t·√(h/(1 − h)): the change in the row's own fitted value, in
    /// standard errors, when the row is left out (Belsley, Kuh & Welsch 1980).
    pub dffits: Option<f64>,
    /// The rules of thumb this row breaks (see [`INFLUENCE_RULES`]).
    pub flags: Vec<&'static str>,
}

/// The rules of thumb used to flag rows, each with its source; common
/// practice rather than tests.
pub const INFLUENCE_RULES: [(&str, &str); 3] = [
    (
        "cook",
        "Cook's distance above 4/n (Bollen & Jackman 1990; a rule of thumb)",
    ),
    (
        "studentized",
        "externally studentized residual beyond ±3 (a common rule of thumb)",
    ),
    (
        "leverage",
        "leverage above 2p/n (Hoaglin & Welsch 1978; a rule of thumb)",
    ),
];

/// Residuals, leverage and Cook's distance for every used row (Cook, R. D.
/// 1977, "Detection of influential observation in linear regression",
/// Technometrics 19(1)), kept as compact columns: sheet row, period,
/// actual, residual and leverage (the fitted value is actual − residual),
/// with the few constants of the fit the formulas need. Each row's
/// [`RowDiagnostics`] is formed when it is asked for ([`RowTable::get`],
/// [`RowTable::iter`]), so a model holds 28 bytes a row (36 with a date
/// column) rather than 160; the JSON writes the rows as objects, the same
/// as a list of [`RowDiagnostics`].
#[derive(Debug, Clone, Default)]
pub struct RowTable {
    rows: Vec<u32>,
    /// The ordinal of each row's period when the model has a date column,
    /// else empty.
    ordinals: Vec<i64>,
    /// The first period, where the trend index is 1.
    first: Option<Period>,
    /// The response and residuals on the response's own scale.
    actual: Vec<f64>,
    residuals: Vec<f64>,
    /// √wᵢ of each row for a weighted fit, else empty: the standardized
    /// residuals are those of √wᵢ·eᵢ.
    root_weights: Vec<f64>,
    leverage: Vec<f64>,
    /// Residual standard error s.
    sigma: f64,
    /// Estimable coefficients p.
    rank: f64,
    /// Residual degrees of freedom n − p.
    df_resid: f64,
}

impl RowTable {
    /// The per-row columns of `design` and `fit`.
    pub fn of(design: &Design, fit: &Fit) -> Self {
        RowTable {
            rows: design.rows.clone(),
            ordinals: design
                .timing
                .as_ref()
                .map_or_else(Vec::new, |t| t.periods.iter().map(|p| p.ordinal).collect()),
            first: design.timing.as_ref().map(|t| t.first),
            actual: (0..design.y.len())
                .map(|i| design.unscaled(i, design.y[i]))
                .collect(),
            residuals: (0..design.y.len())
                .map(|i| design.unscaled(i, fit.solution.residuals[i]))
                .collect(),
            root_weights: design
                .weights
                .as_ref()
                .map_or_else(Vec::new, |w| w.iter().map(|w| w.sqrt()).collect()),
            leverage: fit.solution.leverage.clone(),
            sigma: fit.quality.sigma,
            rank: fit.solution.kept.len() as f64,
            df_resid: fit.df_resid as f64,
        }
    }

    /// Rows in the table.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// Whether the table has no rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The residual e = actual − fitted of every row, in order.
    pub fn residuals(&self) -> &[f64] {
        &self.residuals
    }

    /// Row `i` with its diagnostics: the standardized residual
    /// e / (s·√(1 − h)) (√w·e with weights, as R defines it), Cook's distance r²·h / (p·(1 − h)), the externally
    /// studentized residual r·√((n − p − 1)/(n − p − r²)) and DFFITS
    /// t·√(h/(1 − h)) (Belsley, Kuh & Welsch 1980), and the rules of thumb
    /// it breaks.
    pub fn get(&self, i: usize) -> RowDiagnostics {
        let (s, p, df) = (self.sigma, self.rank, self.df_resid);
        let n = self.rows.len() as f64;
        let residual = self.residuals[i];
        let weighted = residual * self.root_weights.get(i).copied().unwrap_or(1.0);
        let h = self.leverage[i];
        let standardized = (s > 0.0 && s.is_finite() && h < 1.0 - 1e-12)
            .then(|| weighted / (s * (1.0 - h).sqrt()));
        let period = self
            .ordinals
            .get(i)
            .zip(self.first)
            .map(|(&ordinal, first)| Period { ordinal, ..first });
        let cook = standardized.map(|r| r * r * h / (p * (1.0 - h)));
        let studentized = standardized
            .filter(|r| df - r * r > 0.0)
            .map(|r| r * ((df - 1.0) / (df - r * r)).sqrt());
        let mut flags = Vec::new();
        if cook.is_some_and(|d| d > 4.0 / n) {
            flags.push(INFLUENCE_RULES[0].0);
        }
        if studentized.is_some_and(|t| t.abs() > 3.0) {
            flags.push(INFLUENCE_RULES[1].0);
        }
        if h > 2.0 * p / n {
            flags.push(INFLUENCE_RULES[2].0);
        }
        RowDiagnostics {
            row: self.rows[i],
            period,
            index: period
                .zip(self.first)
                .map(|(p, first)| p.ordinal - first.ordinal + 1),
            actual: self.actual[i],
            fitted: self.actual[i] - residual,
            residual,
            standardized_residual: standardized,
            leverage: h,
            cooks_distance: cook,
            studentized_residual: studentized,
            dffits: studentized.map(|t| t * (h / (1.0 - h)).sqrt()),
            flags,
        }
    }

    /// Every row with its diagnostics, in order.
    pub fn iter(&self) -> impl ExactSizeIterator<Item = RowDiagnostics> + '_ {
        (0..self.len()).map(|i| self.get(i))
    }
}

impl serde::Serialize for RowTable {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_seq(self.iter())
    }
}

/// A check that counts the rows flagged by the influence rules.
pub fn influence_check(rows: &RowTable) -> Check {
    let flagged: Vec<u32> = rows
        .iter()
        .filter(|r| !r.flags.is_empty())
        .map(|r| r.row)
        .collect();
    Check {
        name: "influential rows".into(),
        statistic: Some(flagged.len() as f64),
        p_value: None,
        rule: INFLUENCE_RULES
            .iter()
            .map(|(_, rule)| *rule)
            .collect::<Vec<_>>()
            .join("; "),
        flagged: !flagged.is_empty(),
        verdict: if flagged.is_empty() {
            "no row stands out".into()
        } else {
            format!(
                "{} rows stand out (sheet rows {}); check them in the source, and refit without them to see how much the estimates move",
                flagged.len(),
                crate::text::row_ranges(&flagged)
            )
        },
    }
}

#[cfg(test)]
mod tests;
