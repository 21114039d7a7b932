# Reference fixture generator for sheetfit's linear regression with AR(1)
# errors, fitted by exact Gaussian maximum likelihood:
#
#     y = X b + u,  u_t = phi u_{t-1} + e_t,  e_t ~ N(0, sigma2),
#
# with the full likelihood, the first observation included at its stationary
# variance sigma2 / (1 - phi^2).
#
# What it produces
# ----------------
# In tests/fixtures/ar1/:
#   * nottem.csv: datasets::nottem (monthly mean air temperature at
#     Nottingham Castle, 1920-01 to 1939-12), columns month ("1920-01"),
#     temperature (printed as R prints it; the values have one decimal).
#   * expected.json: for four cases,
#       - "nile": datasets::Nile, read from tests/fixtures/periods/nile.csv
#         (checked here to equal datasets::Nile), volume on
#         X = [Intercept, dam], dam = 1 from 1899 on; forecast 1971-1975
#         with dam = 1.
#       - "nottem": temperature on X = [Intercept, trend, season[Feb], ...,
#         season[Dec]], trend = 1..240, January the baseline; forecast
#         1940-01 to 1940-12, trend 241..252.
#       - "macro": statsmodels' macrodata (1959-Q1 to 2009-Q3), written to
#         tests/fixtures/ar1/macro.csv by make_ar1_data.py, infl on
#         X = [Intercept, unemp]; forecast 2009-Q4 to 2010-Q3 with unemp
#         held at 9.6.
#       - "nottem_gaps": "nottem" with the temperature missing at rows 50,
#         51 and 130 ("blank_rows", 1-based; 1924-02, 1924-03, 1930-10) and
#         X still of all 240 rows; n = 237 observed rows. The data file is
#         nottem.csv: the reader blanks those cells itself. The innovations
#         are null at the gaps; there is no Ljung-Box entry (with gaps it
#         depends on a convention for the autocorrelations). Its
#         profile_check uses the transform with gaps and a numerical Hessian
#         (see "The fourth case" below).
#     Each case holds R's arima() fit (phi and the regression coefficients
#     with standard errors from var.coef, the full var.coef, sigma2, the log
#     likelihood, AIC, BIC, n), the standardized one-step innovations
#     residuals(fit) (sqrt(1 - phi^2) u_1, then u_t - phi u_{t-1}), a
#     Ljung-Box test of them (fitdf = 1), predict() forecasts with three
#     standard errors (see `forecast_rows` below), and "profile_check": an
#     independent maximisation of the concentrated (profile) log likelihood
#     over phi through the Prais-Winsten transform, with the relative
#     differences from arima().
#
# Why
# ---
# The expected values come from R's base `stats` (arima, predict, Box.test)
# so that sheetfit's Rust tests can check its AR(1)-error regression against
# an outside implementation. arima() maximises the likelihood numerically
# (BFGS with a numerical gradient) and takes var.coef from a numerical
# Hessian, so profile_check re-derives the optimum by a second route (a
# one-dimensional search, then the root of the analytic derivative) and gives
# the covariance from the analytic Hessian of the concentrated log
# likelihood, to show how many digits of each number can be trusted.
# tests/reference/check_ar1_reference.py compares the fits with statsmodels'
# SARIMAX as a third implementation. The files are committed; the Rust tests
# read them and need neither R nor Python.
#
# How to rerun
# ------------
# From the project root, with Debian's r-base-core (base R only) and, for
# macro.csv, python3 with statsmodels:
#
#     python3 tests/reference/make_ar1_data.py
#     Rscript tests/reference/make_ar1_reference.R
#     python3 tests/reference/check_ar1_reference.py
#
# The JSON is written by hand with 17 significant digits.

out <- file.path("tests", "fixtures", "ar1")
dir.create(out, showWarnings = FALSE, recursive = TRUE)

num <- function(v) sprintf("%.17g", v)
arr <- function(v) paste0("[", paste(num(v), collapse = ", "), "]")
str <- function(s) paste0('"', s, '"')
strs <- function(s) paste0("[", paste(str(s), collapse = ", "), "]")
rows <- function(m, indent) {
  paste0("[\n", paste0(indent, " ", apply(m, 1, arr), collapse = ",\n"), "\n", indent, "]")
}
obj <- function(fields, indent) {
  paste0("{\n", paste0(indent, " ", str(names(fields)), ": ", fields, collapse = ",\n"), "\n", indent, "}")
}
rel <- function(a, b) max(abs(a - b) / abs(b))

ARIMA_CALL <- paste(
  "arima(y, order = c(1, 0, 0), xreg = X, include.mean = FALSE, method = \"ML\",",
  "transform.pars = FALSE, optim.control = list(reltol = 1e-15, maxit = 10000))"
)
TOLERANCE <- 1e-7

# ---------------------------------------------------------------------------
# Data

nile <- read.csv(file.path("tests", "fixtures", "periods", "nile.csv"))
stopifnot(
  identical(names(nile), c("year", "volume")),
  identical(as.numeric(nile$year), as.numeric(time(datasets::Nile))),
  identical(nile$volume, as.numeric(datasets::Nile))
)

temperature <- as.numeric(datasets::nottem)
stopifnot(length(temperature) == 240, start(datasets::nottem) == c(1920, 1),
          frequency(datasets::nottem) == 12)
month_label <- function(i) sprintf("%d-%02d", 1920 + (i - 1) %/% 12, (i - 1) %% 12 + 1)
text <- as.character(temperature)
stopifnot(identical(as.numeric(text), temperature))
writeLines(c("month,temperature", paste(month_label(1:240), text, sep = ",")),
           file.path(out, "nottem.csv"))
nottem <- read.csv(file.path(out, "nottem.csv"), colClasses = c("character", "numeric"))
stopifnot(identical(nottem$temperature, temperature),
          identical(nottem$month, month_label(1:240)))

macro_csv <- file.path(out, "macro.csv")
if (!file.exists(macro_csv)) stop("run python3 tests/reference/make_ar1_data.py first")
macro <- read.csv(macro_csv, colClasses = c("character", "numeric", "numeric"))
stopifnot(nrow(macro) == 203, macro$quarter[1] == "1959-Q1", macro$quarter[203] == "2009-Q3")

# ---------------------------------------------------------------------------
# The concentrated log likelihood through the Prais-Winsten transform:
# row 1 times sqrt(1 - phi^2), rows t >= 2 as v_t - phi v_{t-1}; with S the
# residual sum of squares of the transformed regression,
#     l(phi) = -n/2 (log(2 pi) + 1 + log(S/n)) + 1/2 log(1 - phi^2).

pw <- function(phi, v) {
  v <- as.matrix(v)
  n <- nrow(v)
  rbind(sqrt(1 - phi^2) * v[1, , drop = FALSE], v[-1, , drop = FALSE] - phi * v[-n, , drop = FALSE])
}

# l(phi, b) with sigma2 concentrated out, its gradient and Hessian in
# (phi, b), all analytic.
loglik_at <- function(phi, b, y, X) {
  n <- length(y)
  u <- drop(y - X %*% b)
  e <- c(sqrt(1 - phi^2) * u[1], u[-1] - phi * u[-n])
  S <- sum(e^2)
  value <- -n / 2 * (log(2 * pi) + 1 + log(S / n)) + 0.5 * log(1 - phi^2)
  r <- sqrt(1 - phi^2)
  # J = de/d(phi, b)
  J <- cbind(c(-phi / r * u[1], -u[-n]), -pw(phi, X))
  # sum_t e_t d2e_t/d(phi, b)^2: only the phi row and column are non-zero.
  E <- matrix(0, ncol(J), ncol(J))
  E[1, 1] <- -e[1] * u[1] / r^3
  cross <- e[1] * phi / r * X[1, ] + colSums(e[-1] * X[-n, , drop = FALSE])
  E[1, -1] <- cross
  E[-1, 1] <- cross
  dS <- 2 * drop(crossprod(J, e))
  d2S <- 2 * (crossprod(J) + E)
  gradient <- -n / 2 * dS / S
  gradient[1] <- gradient[1] - phi / (1 - phi^2)
  hessian <- -n / 2 * (d2S / S - tcrossprod(dS) / S^2)
  hessian[1, 1] <- hessian[1, 1] - (1 + phi^2) / (1 - phi^2)^2
  list(value = value, gradient = gradient, hessian = hessian)
}

profile_beta <- function(phi, y, X) lm.fit(pw(phi, X), pw(phi, y))$coefficients

profile_loglik <- function(phi, y, X) {
  n <- length(y)
  S <- sum(lm.fit(pw(phi, X), pw(phi, y))$residuals^2)
  -n / 2 * (log(2 * pi) + 1 + log(S / n)) + 0.5 * log(1 - phi^2)
}

# d l(phi, b(phi)) / d phi = the partial derivative in phi at b(phi), since
# b(phi) maximises over b.
profile_score <- function(phi, y, X) loglik_at(phi, profile_beta(phi, y, X), y, X)$gradient[1]

# Maximises a profile log likelihood l(phi) over (-0.999, 0.999) with
# optimize(), then polishes: the root of its analytic derivative `score` next
# to optimize's maximum.
maximise_profile <- function(loglik, score) {
  o <- optimize(loglik, c(-0.999, 0.999), maximum = TRUE, tol = 1e-12)
  width <- 1e-6
  repeat {
    lo <- max(-0.999, o$maximum - width)
    hi <- min(0.999, o$maximum + width)
    if (score(lo) > 0 && score(hi) < 0) break
    width <- width * 10
    if (width > 1) stop("no sign change of the profile score")
  }
  root <- uniroot(score, c(lo, hi), tol = 1e-16, maxiter = 1000)$root
  list(phi_optimize = o$maximum, loglik_optimize = o$objective, phi = root, loglik = loglik(root))
}

profile_fit <- function(y, X) {
  p <- maximise_profile(function(phi) profile_loglik(phi, y, X), function(phi) profile_score(phi, y, X))
  p$beta <- unname(profile_beta(p$phi, y, X))
  at <- loglik_at(p$phi, p$beta, y, X)
  p$score <- at$gradient
  p$covariance <- solve(-at$hessian)
  p
}

# ---------------------------------------------------------------------------
# One case

fit_arima <- function(y, X, init = NULL) {
  arima(y, order = c(1, 0, 0), xreg = X, include.mean = FALSE, method = "ML",
        transform.pars = FALSE, init = init,
        optim.control = list(reltol = 1e-15, maxit = 10000))
}

differences <- function(fit, p) {
  c(phi = abs(coef(fit)[[1]] - p$phi) / abs(p$phi),
    coefficients = rel(unname(coef(fit)[-1]), p$beta),
    log_likelihood = abs(fit$loglik - p$loglik) / abs(p$loglik))
}

# arima() from its own start, then, if `always_restart` or if that fit is
# further than TOLERANCE from the profile optimum p, again from p; the refit
# is kept if it is closer to p. Prints the differences from the profile
# named by `profile_label`.
fit_near_profile <- function(name, y, X, p, always_restart, profile_label) {
  fit <- fit_arima(y, X)
  stopifnot(fit$code == 0)
  first <- differences(fit, p)
  restarted <- FALSE
  if (always_restart || max(first) > TOLERANCE) {
    # arima() reads the regression part of `init` in its own rotated
    # coordinates (xreg %*% svd(xreg)$v when there is more than one regressor
    # and none is fixed), so the profile optimum is rotated to match.
    b0 <- if (ncol(X) > 1) drop(crossprod(svd(X)$v, p$beta)) else p$beta
    refit <- fit_arima(y, X, init = c(p$phi, b0))
    stopifnot(refit$code == 0)
    if (max(differences(refit, p)) < max(first)) {
      fit <- refit
      restarted <- TRUE
    }
  }
  final <- differences(fit, p)
  cat(sprintf("%-7s phi %.10f  max rel diff vs %s: first fit %.2e, final %.2e%s\n",
              name, coef(fit)[[1]], profile_label, max(first), max(final),
              if (restarted) " (restarted from the profile optimum)" else ""))
  list(fit = fit, first = first, final = final, restarted = restarted)
}

# The coefficient rows, covariance and standard errors of the fit, with its
# BIC checked against n observed rows.
fit_summary <- function(fit, X, n) {
  terms <- colnames(X)
  stopifnot(identical(names(coef(fit)), c("ar1", terms)))
  V <- fit$var.coef
  se <- sqrt(diag(V))
  coefficient_rows <- vapply(seq_along(terms), function(k) {
    sprintf('{"term": %s, "estimate": %s, "std_error": %s}',
            str(terms[k]), num(coef(fit)[[k + 1]]), num(se[k + 1]))
  }, "")
  k <- length(coef(fit)) + 1
  bic <- BIC(fit)
  stopifnot(abs(bic - (-2 * fit$loglik + log(n) * k)) < 1e-9 * abs(bic))
  list(terms = terms, V = V, se = se, coefficient_rows = coefficient_rows, bic = bic)
}

forecast_rows <- function(fit, y, X, Xnew, labels) {
  h <- nrow(Xnew)
  pred <- predict(fit, n.ahead = h, newxreg = Xnew)
  phi <- coef(fit)[[1]]
  b <- unname(coef(fit)[-1])
  V <- fit$var.coef
  n <- length(y)
  un <- y[n] - sum(X[n, ] * b)
  out <- character(h)
  for (k in 1:h) {
    mean_k <- sum(Xnew[k, ] * b) + phi^k * un
    stopifnot(abs(mean_k - pred$pred[k]) <= 1e-9 * abs(mean_k))
    # Gradient of x_{n+k}'b + phi^k (y_n - x_n'b) in (phi, b).
    g <- c(k * phi^(k - 1) * un, Xnew[k, ] - phi^k * X[n, ])
    mean_var <- drop(t(g) %*% V %*% g)
    out[k] <- obj(c(
      period = str(labels[k]),
      x = arr(Xnew[k, ]),
      estimate = num(pred$pred[k]),
      std_error = num(sqrt(pred$se[k]^2 + mean_var)),
      error_std_error = num(pred$se[k]),
      mean_std_error = num(sqrt(mean_var))
    ), "    ")
  }
  paste0("[\n    ", paste(out, collapse = ",\n    "), "\n   ]")
}

# The "profile_check" object: the profile optimum p, how far arima() ended
# from it (r from fit_near_profile), and the standard errors se against those
# of `covariance`; `accuracy` holds extra fields written after the covariance.
profile_json <- function(method, p, r, covariance, se, accuracy = character(0)) {
  obj(c(
    method = str(method),
    phi = num(p$phi_optimize),
    log_likelihood = num(p$loglik_optimize),
    phi_polished = num(p$phi),
    coefficients_polished = arr(p$beta),
    log_likelihood_polished = num(p$loglik),
    max_abs_score_polished = num(max(abs(p$score))),
    max_rel_diff = obj(c(
      phi = num(r$final[["phi"]]),
      coefficients = num(r$final[["coefficients"]]),
      log_likelihood = num(r$final[["log_likelihood"]])
    ), "    "),
    max_rel_diff_optimize_vs_polished = num(abs(p$phi_optimize - p$phi) / abs(p$phi)),
    arima_restarted = if (r$restarted) "true" else "false",
    max_rel_diff_first_arima_fit = num(max(r$first)),
    covariance_analytic = rows(covariance, "    "),
    accuracy,
    max_rel_diff_std_error = num(rel(se, sqrt(diag(covariance))))
  ), "   ")
}

# One case's object. `gaps` holds fields written after "response",
# `ljung_box` one written after "innovations" (both absent when empty); the
# innovations are written as null where they are NA.
case_json <- function(dataset, data_file, response, fit, s, n, innovations, forecast, profile,
                      gaps = character(0), ljung_box = character(0)) {
  obj(c(
    dataset = str(dataset),
    data = str(data_file),
    response = str(response),
    gaps,
    terms = strs(s$terms),
    n = as.character(n),
    phi = sprintf('{"estimate": %s, "std_error": %s}', num(coef(fit)[[1]]), num(s$se[1])),
    coefficients = paste0("[\n    ", paste(s$coefficient_rows, collapse = ",\n    "), "\n   ]"),
    sigma2 = num(fit$sigma2),
    log_likelihood = num(fit$loglik),
    aic = num(fit$aic),
    bic = num(s$bic),
    covariance = rows(s$V, "   "),
    innovations = paste0("[", paste(ifelse(is.na(innovations), "null", num(innovations)),
                                    collapse = ", "), "]"),
    ljung_box,
    forecast = forecast,
    profile_check = profile
  ), "  ")
}

run_case <- function(name, dataset, data_file, response, y, X, Xnew, labels) {
  n <- length(y)
  p <- profile_fit(y, X)
  r <- fit_near_profile(name, y, X, p, always_restart = FALSE, profile_label = "profile")
  fit <- r$fit
  s <- fit_summary(fit, X, n)
  lags <- min(10, floor(n / 5))
  box <- Box.test(residuals(fit), lag = lags, type = "Ljung-Box", fitdf = 1)

  # The innovations as defined, against residuals(fit).
  phi <- coef(fit)[[1]]
  u <- drop(y - X %*% coef(fit)[-1])
  innovations <- as.numeric(residuals(fit))
  stopifnot(max(abs(innovations - c(sqrt(1 - phi^2) * u[1], u[-1] - phi * u[-n]))) < 1e-9 * max(abs(u)))

  profile <- profile_json(paste(
    "optimize(l, c(-0.999, 0.999), maximum = TRUE, tol = 1e-12) of the Prais-Winsten",
    "concentrated log likelihood l(phi) = -n/2 (log(2 pi) + 1 + log(S/n)) + 1/2 log(1 - phi^2);",
    "then polished: uniroot of its analytic derivative"
  ), p, r, p$covariance, s$se)

  case_json(dataset, data_file, response, fit, s, n, innovations,
            forecast_rows(fit, y, X, Xnew, labels), profile,
            ljung_box = c(ljung_box = sprintf('{"lags": %d, "df": %s, "statistic": %s, "p_value": %s}',
                                              lags, num(box$parameter), num(box$statistic),
                                              num(box$p.value))))
}

# ---------------------------------------------------------------------------
# The first three cases

dam <- as.numeric(nile$year >= 1899)
X_nile <- cbind(Intercept = 1, dam = dam)
Xnew_nile <- cbind(Intercept = rep(1, 5), dam = rep(1, 5))
nile_case <- run_case("nile", "datasets::Nile", "tests/fixtures/periods/nile.csv", "volume",
                      nile$volume, X_nile, Xnew_nile, as.character(1971:1975))

month_names <- c("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
season_columns <- function(index) {
  m <- sapply(2:12, function(j) as.numeric((index - 1) %% 12 + 1 == j))
  colnames(m) <- paste0("season[", month_names[2:12], "]")
  m
}
X_nottem <- cbind(Intercept = 1, trend = 1:240, season_columns(1:240))
Xnew_nottem <- cbind(Intercept = 1, trend = 241:252, season_columns(241:252))
nottem_case <- run_case("nottem", "datasets::nottem", "tests/fixtures/ar1/nottem.csv", "temperature",
                        nottem$temperature, X_nottem, Xnew_nottem, month_label(241:252))

X_macro <- cbind(Intercept = 1, unemp = macro$unemp)
Xnew_macro <- cbind(Intercept = rep(1, 4), unemp = rep(9.6, 4))
macro_case <- run_case("macro", "statsmodels macrodata", "tests/fixtures/ar1/macro.csv", "infl",
                       macro$infl, X_macro, Xnew_macro,
                       c("2009-Q4", "2010-Q1", "2010-Q2", "2010-Q3"))

# ---------------------------------------------------------------------------
# The fourth case: nottem with gaps in the response
#
# "nottem_gaps" is "nottem" with the temperature missing at rows 50, 51 and
# 130 (1924-02, 1924-03, 1930-10); X keeps all 240 rows. arima() handles a
# missing response exactly (its Kalman filter gives the Gaussian likelihood
# of the observed values), but the Prais-Winsten transform above assumes
# every row is observed, so the profile check here uses the transform with
# gaps: for consecutive observed rows s < t, d = t - s periods apart,
#     e_t = (u_t - phi^d u_s) / sqrt(w_d),  w_d = 1 + phi^2 + ... + phi^(2(d-1))
#         = (1 - phi^(2d)) / (1 - phi^2),
# the first observed row times sqrt(1 - phi^2), and with m observed rows
#     l(phi, b) = -m/2 (log(2 pi) + 1 + log(S/m)) - 1/2 sum log w_d + 1/2 log(1 - phi^2).
# Its covariance is the inverse of a numerical Hessian of l(phi, b),
# Richardson-extrapolated central differences (`richardson_hessian`), whose
# accuracy is measured three ways: the spread of the last two Richardson
# columns, a second Hessian from differencing the analytic gradient, and the
# same routine on "nottem" (no gaps) against the analytic Hessian above.

BLANK_ROWS <- c(50, 51, 130)

gap_pairs <- function(obs) {
  # The observed rows after the first, with the previous observed row and
  # the gap in periods between them.
  list(t = obs[-1], s = obs[-length(obs)], d = diff(obs))
}

# w_d and dw_d/dphi, as sums (exact at d = 1, no cancellation near phi = 0).
gap_w <- function(phi, d) vapply(d, function(k) sum(phi^(2 * (0:(k - 1)))), 0)
gap_dw <- function(phi, d) {
  vapply(d, function(k) if (k == 1) 0 else sum(2 * (1:(k - 1)) * phi^(2 * (1:(k - 1)) - 1)), 0)
}

gap_transform <- function(phi, v, obs) {
  v <- as.matrix(v)
  g <- gap_pairs(obs)
  w <- gap_w(phi, g$d)
  rbind(sqrt(1 - phi^2) * v[obs[1], , drop = FALSE],
        (v[g$t, , drop = FALSE] - phi^g$d * v[g$s, , drop = FALSE]) / sqrt(w))
}

gap_logdet <- function(phi, obs) -0.5 * sum(log(gap_w(phi, gap_pairs(obs)$d))) + 0.5 * log(1 - phi^2)

# l(phi, b) and its analytic gradient in (phi, b).
gap_loglik_at <- function(phi, b, y, X, obs) {
  m <- length(obs)
  g <- gap_pairs(obs)
  u <- drop(y - X %*% b)
  w <- gap_w(phi, g$d)
  dw <- gap_dw(phi, g$d)
  r <- sqrt(1 - phi^2)
  e <- c(r * u[obs[1]], (u[g$t] - phi^g$d * u[g$s]) / sqrt(w))
  S <- sum(e^2)
  de_dphi <- c(-phi / r * u[obs[1]],
               -g$d * phi^(g$d - 1) * u[g$s] / sqrt(w) - e[-1] * dw / (2 * w))
  Z <- gap_transform(phi, X, obs)
  gradient <- c(-m * sum(e * de_dphi) / S - 0.5 * sum(dw / w) - phi / (1 - phi^2),
                m * drop(crossprod(Z, e)) / S)
  list(value = -m / 2 * (log(2 * pi) + 1 + log(S / m)) + gap_logdet(phi, obs),
       gradient = gradient, innovations = e)
}

gap_beta <- function(phi, y, X, obs) lm.fit(gap_transform(phi, X, obs), gap_transform(phi, y, obs))$coefficients

gap_profile_loglik <- function(phi, y, X, obs) {
  m <- length(obs)
  S <- sum(lm.fit(gap_transform(phi, X, obs), gap_transform(phi, y, obs))$residuals^2)
  -m / 2 * (log(2 * pi) + 1 + log(S / m)) + gap_logdet(phi, obs)
}

gap_profile_score <- function(phi, y, X, obs) {
  gap_loglik_at(phi, gap_beta(phi, y, X, obs), y, X, obs)$gradient[1]
}

gap_profile_fit <- function(y, X, obs) {
  p <- maximise_profile(function(phi) gap_profile_loglik(phi, y, X, obs),
                        function(phi) gap_profile_score(phi, y, X, obs))
  p$beta <- unname(gap_beta(p$phi, y, X, obs))
  p$score <- gap_loglik_at(p$phi, p$beta, y, X, obs)$gradient
  p
}

# Richardson extrapolation of a sequence of estimates at steps h, h/2, h/4,
# ... whose error is a series in h^2; returns the last entry of the tableau
# and its difference from the entry before (an estimate of its error).
richardson <- function(estimates) {
  col <- estimates
  previous <- NULL
  j <- 1
  while (length(col) > 1) {
    previous <- col[[length(col)]]
    col <- lapply(seq_len(length(col) - 1), function(k) (4^j * col[[k + 1]] - col[[k]]) / (4^j - 1))
    j <- j + 1
  }
  list(value = col[[1]], error = abs(col[[1]] - previous))
}

# Hessian of f at x by central second differences with steps h (one per
# coordinate), h/2, ..., h/2^(levels - 1), Richardson-extrapolated.
richardson_hessian <- function(f, x, h, levels = 5) {
  p <- length(x)
  f0 <- f(x)
  at <- function(i, j, si, sj, step) {
    z <- x
    z[i] <- z[i] + si * step[i]
    z[j] <- z[j] + sj * step[j]
    f(z)
  }
  estimates <- lapply(0:(levels - 1), function(level) {
    step <- h / 2^level
    H <- matrix(0, p, p)
    for (i in 1:p) {
      z_plus <- x; z_plus[i] <- z_plus[i] + step[i]
      z_minus <- x; z_minus[i] <- z_minus[i] - step[i]
      H[i, i] <- (f(z_plus) - 2 * f0 + f(z_minus)) / step[i]^2
      if (i > 1) for (j in 1:(i - 1)) {
        H[i, j] <- (at(i, j, 1, 1, step) - at(i, j, 1, -1, step) - at(i, j, -1, 1, step) +
                      at(i, j, -1, -1, step)) / (4 * step[i] * step[j])
        H[j, i] <- H[i, j]
      }
    }
    H
  })
  richardson(estimates)
}

# The Jacobian of a gradient g at x by central differences, Richardson-
# extrapolated the same way, then symmetrised.
richardson_jacobian <- function(g, x, h, levels = 5) {
  p <- length(x)
  estimates <- lapply(0:(levels - 1), function(level) {
    step <- h / 2^level
    J <- sapply(1:p, function(i) {
      z_plus <- x; z_plus[i] <- z_plus[i] + step[i]
      z_minus <- x; z_minus[i] <- z_minus[i] - step[i]
      (g(z_plus) - g(z_minus)) / (2 * step[i])
    })
    (J + t(J)) / 2
  })
  richardson(estimates)
}

# Largest difference of two covariance matrices in correlation units,
# |A_ij - B_ij| / sqrt(B_ii B_jj).
cov_diff <- function(A, B) max(abs(A - B) / sqrt(tcrossprod(diag(B))))

run_gap_case <- function(name, dataset, data_file, response, y, X, Xnew, labels, blank_rows,
                         check_y, check_X) {
  obs <- which(!is.na(y))
  m <- length(obs)

  # The gap-aware functions with no gaps are the Prais-Winsten ones: checked
  # on the complete series (check_y, check_X) at two values of phi.
  all_rows <- seq_along(check_y)
  b_check <- profile_beta(0.3, check_y, check_X)
  for (phi in c(0.3, -0.6)) {
    stopifnot(
      abs(gap_profile_loglik(phi, check_y, check_X, all_rows) - profile_loglik(phi, check_y, check_X)) <
        1e-12 * abs(profile_loglik(phi, check_y, check_X)),
      max(abs(gap_loglik_at(phi, b_check, check_y, check_X, all_rows)$gradient -
                loglik_at(phi, b_check, check_y, check_X)$gradient)) < 1e-8
    )
  }

  p <- gap_profile_fit(y, X, obs)
  # The restart is always tried here (the fit from arima's own start is off
  # by ~2e-8 in phi); kept if closer to the profile optimum.
  r <- fit_near_profile(name, y, X, p, always_restart = TRUE, profile_label = "gap-aware profile")
  fit <- r$fit
  stopifnot(fit$nobs == m)
  s <- fit_summary(fit, X, m)

  # residuals(fit): NA at the gaps, the gap-transformed rows elsewhere.
  phi <- coef(fit)[[1]]
  innovations <- as.numeric(residuals(fit))
  e <- gap_loglik_at(phi, unname(coef(fit)[-1]), y, X, obs)$innovations
  stopifnot(identical(which(is.na(innovations)), as.integer(blank_rows)),
            max(abs(innovations[obs] - e)) < 1e-9 * max(abs(e)))

  # Covariance: the inverse of the numerical Hessian of l(phi, b) at the
  # profile optimum. Steps: arima's standard errors (only a scale), then
  # halved four times.
  x0 <- c(p$phi, p$beta)
  f <- function(z) gap_loglik_at(z[1], z[-1], y, X, obs)$value
  g <- function(z) gap_loglik_at(z[1], z[-1], y, X, obs)$gradient
  h <- unname(s$se)
  H <- richardson_hessian(f, x0, h)
  covariance <- solve(-H$value)
  tableau_error <- max(H$error / sqrt(tcrossprod(diag(-H$value))))
  from_gradient <- solve(-richardson_jacobian(g, x0, h)$value)
  vs_gradient <- cov_diff(from_gradient, covariance)
  # The same routine on the complete series, against the analytic Hessian.
  pc <- profile_fit(check_y, check_X)
  fc <- function(z) loglik_at(z[1], z[-1], check_y, check_X)$value
  no_gap <- solve(-richardson_hessian(fc, c(pc$phi, pc$beta), sqrt(diag(pc$covariance)))$value)
  vs_analytic_no_gaps <- cov_diff(no_gap, pc$covariance)
  cat(sprintf(paste("%-7s numerical Hessian: Richardson error estimate %.1e; covariance vs",
                    "differenced analytic gradient %.1e; on nottem vs the analytic Hessian %.1e\n"),
              name, tableau_error, vs_gradient, vs_analytic_no_gaps))

  profile <- profile_json(paste(
    "optimize(l, c(-0.999, 0.999), maximum = TRUE, tol = 1e-12) of the concentrated log likelihood",
    "of the observed rows, transformed with gaps: first observed row times sqrt(1 - phi^2),",
    "then (v_t - phi^d v_s) / sqrt(w_d) for consecutive observed rows s < t, d = t - s,",
    "w_d = (1 - phi^(2d)) / (1 - phi^2); l(phi) = -m/2 (log(2 pi) + 1 + log(S/m))",
    "- 1/2 sum log w_d + 1/2 log(1 - phi^2), m observed rows;",
    "then polished: uniroot of its analytic derivative"
  ), p, r, covariance, s$se, accuracy = c(
    covariance_analytic_method = str(paste(
      "solve(-H), H the Hessian of l(phi, b) (sigma2 concentrated out) at the polished optimum by",
      "central second differences with steps arima's standard errors / 2^k, k = 0..4,",
      "Richardson-extrapolated"
    )),
    covariance_analytic_accuracy = obj(c(
      richardson_error_estimate = num(tableau_error),
      vs_differenced_analytic_gradient = num(vs_gradient),
      same_routine_on_nottem_vs_analytic_hessian = num(vs_analytic_no_gaps),
      units = str("max |A_ij - B_ij| / sqrt(B_ii B_jj)")
    ), "    ")
  ))

  case_json(dataset, data_file, response, fit, s, m, innovations,
            forecast_rows(fit, y, X, Xnew, labels), profile,
            gaps = c(blank_rows = paste0("[", paste(blank_rows, collapse = ", "), "]"),
                     blank_periods = strs(labels_of_rows(blank_rows))))
}

labels_of_rows <- month_label
temperature_gaps <- nottem$temperature
temperature_gaps[BLANK_ROWS] <- NA
stopifnot(identical(month_label(BLANK_ROWS), c("1924-02", "1924-03", "1930-10")),
          !is.na(temperature_gaps[240]))
nottem_gaps_case <- run_gap_case("nottem_gaps", "datasets::nottem", "tests/fixtures/ar1/nottem.csv",
                                 "temperature", temperature_gaps, X_nottem, Xnew_nottem,
                                 month_label(241:252), BLANK_ROWS,
                                 nottem$temperature, X_nottem)

json <- paste0(
  "{\n",
  ' "source": ', str(paste0(R.version.string, ": ", gsub('"', '\\\\"', ARIMA_CALL),
                            "; predict(fit, n.ahead = h, newxreg = Xnew); Box.test(residuals(fit), lag = L, type = \\\"Ljung-Box\\\", fitdf = 1)")), ",\n",
  ' "script": "tests/reference/make_ar1_reference.R",\n',
  ' "cases": {\n',
  '  "nile": ', nile_case, ",\n",
  '  "nottem": ', nottem_case, ",\n",
  '  "macro": ', macro_case, ",\n",
  '  "nottem_gaps": ', nottem_gaps_case, "\n",
  " }\n",
  "}\n"
)
writeLines(json, file.path(out, "expected.json"), sep = "")
