//! How a model is estimated beyond least squares: robust standard errors
//! and the model of the errors.

/// Which robust estimator of the coefficients' covariance.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Robust {
    /// HC1: ωᵢ = n/(n − p)·eᵢ², White's HC0 with the degrees-of-freedom
    /// correction of MacKinnon & White (1985); n rows, p estimable
    /// coefficients.
    Hc1,
    /// HC3: ωᵢ = eᵢ²/(1 − hᵢ)², hᵢ the leverage of row i (MacKinnon & White
    /// 1985, their jackknife approximation); recommended by Long & Ervin
    /// (2000), above all for samples under 250 rows.
    Hc3,
    /// Newey-West heteroscedasticity-and-autocorrelation-consistent
    /// (HAC): the products of the rows' scores up to `lags` rows apart, in
    /// period order, weighted by the Bartlett kernel 1 − l/(L + 1) (Newey &
    /// West 1987), without a small-sample factor. `None` until the fit
    /// settles the usual rule floor(4 (n/100)^(2/9)).
    Hac(Option<u32>),
}

impl Robust {
    /// The estimator's usual short name, for the report: "HC1", "HC3" or
    /// "HAC".
    pub fn label(self) -> &'static str {
        match self {
            Robust::Hc1 => "HC1",
            Robust::Hc3 => "HC3",
            Robust::Hac(_) => "HAC",
        }
    }

    /// The estimator in words, with its lag count: "HC3
    /// (heteroscedasticity-consistent)", "HAC (Newey-West, 4 lags)".
    pub fn describe(self) -> String {
        match self {
            Robust::Hac(Some(lags)) => format!(
                "HAC (Newey-West, {lags} lag{})",
                if lags == 1 { "" } else { "s" }
            ),
            Robust::Hac(None) => "HAC (Newey-West)".into(),
            other => format!("{} (heteroscedasticity-consistent)", other.label()),
        }
    }
}

/// The model of the regression's errors.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Errors {
    /// Independent errors: least squares alone.
    #[default]
    Independent,
    /// Also a regression with AR(1) errors, uₜ = φuₜ₋₁ + eₜ, fitted by
    /// exact Gaussian maximum likelihood (`errors = "ar1"`).
    Ar1,
}
