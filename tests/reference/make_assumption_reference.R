# Reference fixture generator for sheetfit's model-assumption tests
# (src/checks_assumptions.rs, checked by tests/assumptions.rs).
#
# What it produces
# ----------------
# tests/fixtures/assumptions/<case>.json, one file per regression case, each
# holding the data (response y and the predictor columns, with their names, in
# the order of the rows, which is their time order; the design is these
# columns plus an intercept) and the reference values of:
#   * Durbin-Watson: statistic and p-value for positive autocorrelation from
#     lmtest::dwtest with its defaults (exact distribution below 100 rows,
#     normal approximation with the exact moments from 100 rows on); for the
#     exact cases also the same probability from Imhof's (1961) inversion
#     formula evaluated with R's integrate() on the eigenvalues, a second,
#     independent route to the same number;
#   * Breusch-Godfrey of order 1 and 2: lmtest::bgtest(type = "Chisq", fill = 0);
#   * Breusch-Pagan, studentized (Koenker 1981): lmtest::bptest(studentize = TRUE);
#   * Jarque-Bera on the residuals: the package 'tseries' is not installed
#     here, so the reference is R's own arithmetic on the published formula
#     (Jarque & Bera 1980), n/6 * (S^2 + (K - 3)^2 / 4) with moments about the
#     mean divided by n, and pchisq(., 2, lower.tail = FALSE);
#   * Shapiro-Wilk on the residuals: stats::shapiro.test;
#   * RESET: lmtest::resettest(power = 2:3, type = "fitted").
# tests/fixtures/assumptions/shapiro_wilk.json: raw samples (some columns of
# datasets that ship with R, some drawn with rnorm/rexp/runif from fixed
# seeds; the drawn values are written out, so the Rust test never needs R's
# generator) with stats::shapiro.test's W and p-value.
#
# Every number is written with 17 significant digits (sprintf("%.17g"); the
# JSON is written by hand because jsonlite prints at most 15), and the script
# reads each file back with jsonlite (when it is installed) and stops unless
# every number survives the round trip exactly. Each file has a "source" string with
# R.version.string and the versions of the packages used.
#
# Why
# ---
# The expected values come from an outside implementation (R and lmtest) so
# that the Rust tests can check sheetfit's numbers against them. The JSON is
# committed; the Rust tests only read it and need no R.
#
# How to rerun
# ------------
# On Debian or Ubuntu:
#     apt-get install r-base-core r-cran-lmtest
# then, from the project root:
#     Rscript tests/reference/make_assumption_reference.R
# The data are R's built-in datasets and seeded draws, so rerunning with the
# same versions (R 4.2.2, lmtest 0.9.40) reproduces the files. The package
# jsonlite (r-cran-jsonlite), when installed, is used only to read the files
# back for the round-trip check.

suppressPackageStartupMessages(library(lmtest))
have_jsonlite <- requireNamespace("jsonlite", quietly = TRUE)

out_dir <- file.path("tests", "fixtures", "assumptions")
if (!dir.exists(out_dir)) {
  stop("run from the project root: ", out_dir, " not found")
}

source_string <- sprintf(
  "%s; lmtest %s; zoo %s; jsonlite %s; tseries %s",
  R.version.string,
  as.character(packageVersion("lmtest")),
  as.character(packageVersion("zoo")),
  if (have_jsonlite) as.character(packageVersion("jsonlite")) else "not installed",
  if (requireNamespace("tseries", quietly = TRUE)) {
    as.character(packageVersion("tseries"))
  } else {
    "not installed (Jarque-Bera from the formula in R)"
  }
)

# JSON written by hand: jsonlite prints at most 15 significant digits, which
# does not round-trip every double. Numbers get sprintf("%.17g"), which does.
# A vector wrapped in I() is always an array; other length-one vectors are
# scalars.
json_number <- function(v) {
  if (is.na(v)) "null" else sprintf("%.17g", v)
}
json_string <- function(v) {
  v <- gsub("\\\\", "\\\\\\\\", v)
  v <- gsub("\"", "\\\\\"", v)
  paste0("\"", v, "\"")
}
to_json <- function(value, indent = "") {
  inner <- paste0(indent, "  ")
  if (is.null(value)) return("null")
  if (is.list(value)) {
    if (length(value) == 0) return(if (is.null(names(value))) "[]" else "{}")
    parts <- vapply(value, to_json, character(1), indent = inner)
    if (is.null(names(value))) {
      return(paste0("[\n", inner, paste(parts, collapse = paste0(",\n", inner)),
                    "\n", indent, "]"))
    }
    keys <- vapply(names(value), json_string, character(1))
    return(paste0("{\n", inner,
                  paste(paste0(keys, ": ", parts), collapse = paste0(",\n", inner)),
                  "\n", indent, "}"))
  }
  scalar <- length(value) == 1 && !inherits(value, "AsIs")
  items <- if (is.character(value)) {
    vapply(value, json_string, character(1))
  } else if (is.logical(value)) {
    ifelse(value, "true", "false")
  } else {
    vapply(as.numeric(value), json_number, character(1))
  }
  if (scalar) unname(items) else paste0("[", paste(items, collapse = ", "), "]")
}

# Every number read back must equal the number in memory, bit for bit.
numbers_of <- function(value) {
  if (is.list(value)) unlist(lapply(value, numbers_of)) else
    if (is.numeric(value)) as.numeric(value) else numeric(0)
}
write_checked <- function(value, name) {
  path <- file.path(out_dir, name)
  writeLines(to_json(value), path)
  if (have_jsonlite) {
    back <- jsonlite::fromJSON(path, simplifyVector = FALSE)
    stopifnot(identical(numbers_of(back), numbers_of(value)))
  }
  invisible(path)
}

# P(sum_j (lambda_j - d) z_j^2 < 0) by Imhof's (1961) formula, with R's
# adaptive quadrature; an independent check on lmtest's exact p-value.
imhof_lower <- function(d, lambda) {
  l <- lambda - d
  f <- function(u) {
    vapply(u, function(u) {
      theta <- 0.5 * sum(atan(l * u))
      log_rho <- 0.25 * sum(log1p((l * u)^2))
      sin(theta) / (u * exp(log_rho))
    }, numeric(1))
  }
  0.5 - integrate(f, 0, Inf, rel.tol = 1e-12, abs.tol = 1e-15,
                  subdivisions = 10000L)$value / pi
}

regression_case <- function(name, description, data, response, predictors) {
  data <- data[, c(response, predictors)]
  data <- data[complete.cases(data), ]
  fm <- reformulate(predictors, response)
  fit <- lm(fm, data = data)
  X <- model.matrix(fit)
  y <- data[[response]]
  n <- nrow(X)
  k <- ncol(X)
  e <- residuals(fit)

  dw <- dwtest(fm, data = data)
  exact <- n < 100
  dw_ref <- list(statistic = unname(dw$statistic), p_value = dw$p.value,
                 exact = exact, alternative = "greater")
  if (exact) {
    A <- diag(c(1, rep(2, n - 2), 1))
    A[abs(row(A) - col(A)) == 1] <- -1
    M <- diag(n) - X %*% solve(crossprod(X)) %*% t(X)
    lambda <- eigen(M %*% A %*% M, symmetric = TRUE)$values[1:(n - k)]
    dw_ref$p_value_imhof_integrate <- imhof_lower(dw_ref$statistic, lambda)
  }

  bg <- function(order) {
    r <- bgtest(fm, order = order, type = "Chisq", fill = 0, data = data)
    list(order = order, statistic = unname(r$statistic),
         df = unname(r$parameter), p_value = r$p.value)
  }
  bp <- bptest(fm, studentize = TRUE, data = data)
  m2 <- mean((e - mean(e))^2)
  m3 <- mean((e - mean(e))^3)
  m4 <- mean((e - mean(e))^4)
  skew <- m3 / m2^1.5
  kurt <- m4 / m2^2
  jb <- n / 6 * (skew^2 + (kurt - 3)^2 / 4)
  sw <- shapiro.test(e)
  rs <- resettest(fm, power = 2:3, type = "fitted", data = data)

  value <- list(
    source = source_string,
    case = name,
    description = description,
    formula = paste(deparse(fm), collapse = " "),
    n = n,
    intercept = TRUE,
    y_name = response,
    y = I(as.numeric(y)),
    x_names = I(predictors),
    x = lapply(predictors, function(p) I(as.numeric(data[[p]]))),
    reference = list(
      durbin_watson = dw_ref,
      breusch_godfrey = list(bg(1), bg(2)),
      breusch_pagan = list(statistic = unname(bp$statistic),
                           df = unname(bp$parameter), p_value = bp$p.value),
      jarque_bera = list(statistic = jb, df = 2,
                         p_value = pchisq(jb, 2, lower.tail = FALSE),
                         skewness = skew, kurtosis = kurt),
      shapiro_wilk = list(statistic = unname(sw$statistic),
                          p_value = sw$p.value),
      reset = list(statistic = unname(rs$statistic),
                   df1 = unname(rs$parameter[1]),
                   df2 = unname(rs$parameter[2]),
                   p_value = rs$p.value)
    )
  )
  write_checked(value, paste0(name, ".json"))
  cat(sprintf("%-18s n = %3d  DW = %.6f (p %.6g)  RESET = %.6g\n",
              name, n, dw_ref$statistic, dw_ref$p_value, value$reference$reset$statistic))
}

regression_case("cars", "cars: dist ~ speed (exact Durbin-Watson)",
                cars, "dist", "speed")
regression_case("life_cycle_savings",
                "LifeCycleSavings: sr ~ pop15 + pop75 + dpi + ddpi",
                LifeCycleSavings, "sr", c("pop15", "pop75", "dpi", "ddpi"))
regression_case("longley", "longley: Employed ~ all six others, rows in year order",
                longley, "Employed",
                c("GNP.deflator", "GNP", "Unemployed", "Armed.Forces",
                  "Population", "Year"))
regression_case("women", "women: weight ~ height (strong autocorrelation, tiny exact p)",
                women, "weight", "height")
regression_case("mtcars", "mtcars: mpg ~ wt + hp", mtcars, "mpg", c("wt", "hp"))
regression_case("faithful",
                "faithful: eruptions ~ waiting (272 rows, normal approximation)",
                faithful, "eruptions", "waiting")
regression_case("airquality",
                "airquality complete cases: Ozone ~ Solar.R + Wind + Temp (111 rows, normal approximation)",
                airquality, "Ozone", c("Solar.R", "Wind", "Temp"))

# Shapiro-Wilk on raw samples.
sample_case <- function(name, x) {
  x <- as.numeric(x)
  r <- shapiro.test(x)
  list(name = name, n = length(x), x = I(x),
       statistic = unname(r$statistic), p_value = r$p.value)
}
set.seed(20240611)
samples <- list(
  sample_case("n3 rnorm", rnorm(3)),
  sample_case("n3 c(1, 2, 4)", c(1, 2, 4)),
  sample_case("n4 c(1, 2, 3, 10)", c(1, 2, 3, 10)),
  sample_case("n5 rexp", rexp(5)),
  sample_case("n11 rnorm", rnorm(11, mean = 10, sd = 2)),
  sample_case("n12 runif", runif(12)),
  sample_case("n15 women$height", women$height),
  sample_case("n20 rexp", rexp(20)),
  sample_case("n48 islands", islands),
  sample_case("n50 cars$dist", cars$dist),
  sample_case("n70 precip", precip),
  sample_case("n200 rnorm", rnorm(200)),
  sample_case("n272 faithful$waiting", faithful$waiting),
  sample_case("n2000 rnorm", rnorm(2000)),
  sample_case("n2000 rexp", rexp(2000)),
  sample_case("n5000 rnorm", rnorm(5000))
)
write_checked(list(source = source_string,
                   description = "stats::shapiro.test on raw samples; drawn samples from set.seed(20240611) in the order listed",
                   samples = samples),
              "shapiro_wilk.json")
for (s in samples) cat(sprintf("%-24s W = %.10f  p = %.10g\n", s$name, s$statistic, s$p_value))
