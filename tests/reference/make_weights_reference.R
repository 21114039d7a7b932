# Reference fixture generator for sheetfit's weighted least squares tests
# (tests/weights.rs).
#
# What it produces
# ----------------
# In tests/fixtures/weights/:
#   * states.csv: datasets::state.x77 with datasets::state.region (the 50
#     US states of 1977): state, murder, illiteracy, income, region and
#     population (thousands), as the columns the tests read.
#   * expected.json: lm(murder ~ illiteracy + income + region, weights =
#     population) with the region baseline "North Central" (R's first level in
#     sorted order): the coefficients (summary, confint), R², adjusted R²,
#     sigma, F and its p-value, logLik, AIC and BIC; per row the residuals
#     (residuals(), on the response's scale), hatvalues, rstandard, rstudent
#     and cooks.distance, as R defines them for a weighted fit; and predict()
#     for two new states with weights = 1000 (interval "confidence" and
#     "prediction"), written as the job's scenarios.
#
# Why
# ---
# The expected values come from R's own weighted least squares, so that
# sheetfit's Rust tests can check every weighted statistic against it. The
# files are committed; the Rust tests read them and need no R.
#
# How to rerun
# ------------
# From the project root, with Debian's r-base-core:
#
#     Rscript tests/reference/make_weights_reference.R
#
# Base R only; the JSON is written by hand with 17 significant digits.

out <- file.path("tests", "fixtures", "weights")
dir.create(out, showWarnings = FALSE, recursive = TRUE)

x <- as.data.frame(datasets::state.x77)
data <- data.frame(
  state = rownames(x),
  murder = x$Murder,
  illiteracy = x$Illiteracy,
  income = x$Income,
  region = as.character(datasets::state.region),
  population = x$Population,
  stringsAsFactors = FALSE
)
write.csv(data, file.path(out, "states.csv"), row.names = FALSE)

data$region <- factor(data$region)
fit <- lm(murder ~ illiteracy + income + region, data = data, weights = population)
s <- summary(fit)
ci <- confint(fit, level = 0.95)

num <- function(v) sprintf("%.17g", v)
arr <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")
name <- function(n) {
  n <- sub("^\\(Intercept\\)$", "Intercept", n)
  sub("^region(.*)$", "region[\\1]", n)
}

co <- s$coefficients
coefficients <- vapply(seq_len(nrow(co)), function(k) {
  sprintf(
    '{"term": "%s", "estimate": %s, "std_error": %s, "t_stat": %s, "p_value": %s, "ci_lower": %s, "ci_upper": %s}',
    name(rownames(co)[k]), num(co[k, 1]), num(co[k, 2]), num(co[k, 3]), num(co[k, 4]),
    num(ci[k, 1]), num(ci[k, 2])
  )
}, "")

f <- s$fstatistic
ll <- logLik(fit)
new <- data.frame(
  illiteracy = c(1.5, 0.6),
  income = c(4000, 5000),
  region = factor(c("South", "West"), levels = levels(data$region))
)
names_new <- c("Southern state", "Western state")
conf <- predict(fit, new, interval = "confidence", level = 0.95)
pred <- predict(fit, new, interval = "prediction", level = 0.95, weights = 1000)
scenarios <- vapply(seq_len(nrow(new)), function(k) {
  sprintf(
    '{"name": "%s", "illiteracy": %s, "income": %s, "region": "%s", "estimate": %s, "mean_lower": %s, "mean_upper": %s, "pred_lower": %s, "pred_upper": %s}',
    names_new[k], num(new$illiteracy[k]), num(new$income[k]), as.character(new$region[k]),
    num(conf[k, 1]), num(conf[k, 2]), num(conf[k, 3]), num(pred[k, 2]), num(pred[k, 3])
  )
}, "")

json <- paste0(
  "{\n",
  sprintf(' "source": "%s; stats::lm with weights, summary.lm, confint, logLik, AIC, BIC, hatvalues, rstandard, rstudent, cooks.distance, predict.lm",\n', R.version.string),
  ' "script": "tests/reference/make_weights_reference.R",\n',
  ' "dataset": "datasets::state.x77 and datasets::state.region",\n',
  sprintf(' "n": %d,\n "df_model": %d,\n "df_resid": %d,\n', nrow(data), as.integer(f[2]), as.integer(f[3])),
  ' "coefficients": [\n  ', paste(coefficients, collapse = ",\n  "), "\n ],\n",
  sprintf(
    ' "fit": {"r_squared": %s, "adj_r_squared": %s, "sigma": %s, "f_stat": %s, "f_p_value": %s, "log_likelihood": %s, "aic": %s, "bic": %s},\n',
    num(s$r.squared), num(s$adj.r.squared), num(s$sigma), num(f[1]),
    num(pf(f[1], f[2], f[3], lower.tail = FALSE)), num(as.numeric(ll)), num(AIC(fit)), num(BIC(fit))
  ),
  sprintf(' "residuals": %s,\n', arr(residuals(fit))),
  sprintf(' "fitted": %s,\n', arr(fitted(fit))),
  sprintf(' "leverage": %s,\n', arr(hatvalues(fit))),
  sprintf(' "standardized_residual": %s,\n', arr(rstandard(fit))),
  sprintf(' "studentized_residual": %s,\n', arr(rstudent(fit))),
  sprintf(' "cooks_distance": %s,\n', arr(cooks.distance(fit))),
  ' "scenario_weight": 1000,\n',
  ' "scenarios": [\n  ', paste(scenarios, collapse = ",\n  "), "\n ]\n",
  "}\n"
)
writeLines(json, file.path(out, "expected.json"), sep = "")
