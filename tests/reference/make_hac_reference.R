# Reference fixture generator for sheetfit's Newey-West (HAC) standard
# errors (tests/hac.rs).
#
# What it produces
# ----------------
# tests/fixtures/hac/expected.json: on R's `Nile` (annual flow at Aswan,
# 1871-1970; the same series as tests/fixtures/periods/nile.csv), the fit
# lm(volume ~ trend + dam), trend = 1..100 and dam = 1 from 1899 on (the
# job's `step`), with sandwich::NeweyWest(fit, lag = L, prewhite = FALSE,
# adjust = FALSE) for L = 4 (the default rule floor(4 (n/100)^(2/9)) at n =
# 100) and L = 2: each coefficient's standard error, t, two-sided p on the
# residual degrees of freedom and 95 % interval.
#
# Why
# ---
# The expected values come from R's sandwich package; the JSON is
# committed and the Rust tests need no R.
#
# How to rerun
# ------------
# From the project root, with Debian's r-base-core and r-cran-sandwich:
#
#     Rscript tests/reference/make_hac_reference.R

library(sandwich)

volume <- as.numeric(datasets::Nile)
year <- as.numeric(time(datasets::Nile))
trend <- seq_along(volume)
dam <- as.numeric(year >= 1899)
fit <- lm(volume ~ trend + dam)
df <- fit$df.residual
num <- function(v) sprintf("%.17g", v)
names <- c("Intercept", "trend", "dam")

case <- function(lag) {
  v <- NeweyWest(fit, lag = lag, prewhite = FALSE, adjust = FALSE)
  b <- coef(fit)
  se <- sqrt(diag(v))
  t <- b / se
  p <- 2 * pt(-abs(t), df)
  q <- qt(0.975, df)
  rows <- vapply(seq_along(b), function(k) {
    sprintf(
      '{"term": "%s", "estimate": %s, "std_error": %s, "t_stat": %s, "p_value": %s, "ci_lower": %s, "ci_upper": %s}',
      names[k], num(b[k]), num(se[k]), num(t[k]), num(p[k]), num(b[k] - q * se[k]), num(b[k] + q * se[k])
    )
  }, "")
  sprintf('  "%d": [\n   %s\n  ]', lag, paste(rows, collapse = ",\n   "))
}

json <- paste0(
  "{\n",
  sprintf(' "source": "%s; sandwich %s: NeweyWest(lm(volume ~ trend + dam), lag = L, prewhite = FALSE, adjust = FALSE)",\n',
          R.version.string, as.character(packageVersion("sandwich"))),
  ' "script": "tests/reference/make_hac_reference.R",\n',
  ' "dataset": "datasets::Nile",\n',
  ' "lags": {\n', paste(case(4), case(2), sep = ",\n"), "\n }\n",
  "}\n"
)
writeLines(json, file.path("tests", "fixtures", "hac", "expected.json"), sep = "")
