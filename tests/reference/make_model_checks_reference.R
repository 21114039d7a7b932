# Reference fixture generator for sheetfit's model-checks tests
# (tests/model_checks.rs).
#
# What it produces
# ----------------
# In tests/fixtures/model_checks/:
#   * duncan.csv: carData::Duncan (45 occupations; prestige, income,
#     education and the occupation type "bc", "prof" or "wc" as text), in the
#     dataset's own row order, with the occupation as a first text column.
#   * duncan.json: for the job's models
#       "additive"     prestige ~ income + education + type (baseline "bc"),
#       "without type" prestige ~ income + education,
#       "interaction"  prestige ~ income + education + type + type:income,
#       "additive HC3" and "additive HC1": the additive model with
#                      heteroscedasticity-consistent standard errors,
#     the coefficients (lm, confint), the Type II tests (car::Anova(type = 2)),
#     for "additive" the per-row influence measures (hatvalues, rstandard,
#     rstudent, dffits, cooks.distance), the generalized VIFs (car::vif) and
#     the checks: Durbin-Watson (lmtest::dwtest, its defaults: exact p-value
#     below 100 rows, alternative "greater", i.e. P(DW <= d)), studentized
#     Breusch-Pagan (lmtest::bptest), Shapiro-Wilk on the residuals
#     (shapiro.test), RESET (lmtest::resettest(power = 2:3, type = "fitted"))
#     and Jarque-Bera (R's arithmetic on n/6 (S^2 + (K - 3)^2 / 4), moments
#     about the mean divided by n, with pchisq(., 2, lower.tail = FALSE));
#     for the robust models the standard errors from sandwich::vcovHC(type =
#     "HC3" / "HC1") with lmtest::coeftest and lmtest::coefci on them; the
#     backward elimination of every model (drop1(., test = "F") repeated:
#     drop the term with the largest p-value above 0.05, refit, again; drop1
#     never offers a term contained in an interaction), with the coefficients
#     and Type II tests of the model it ends at; and anova(smaller, larger)
#     for every nested pair of models, suggested ones included.
#   * mtcars.csv: datasets::mtcars (32 cars), the car's name as a first text
#     column.
#   * mtcars.json: the same for mpg ~ wt + hp + qsec + drat + am (all
#     numeric): coefficients, Type II tests, car::vif, the backward
#     elimination (it drops several terms) and the nested comparison of the
#     model it ends at with the full one.
#
# Term and coefficient names are written as sheetfit writes them:
# "Intercept", "type[prof]", "type[prof]:income" for R's "(Intercept)",
# "typeprof", "income:typeprof", and the term "type:income" for R's
# "income:type". R's factor baseline is set with relevel() to the baseline
# the job names ("bc"), so the indicators are the same.
#
# Numbers are written with 17 significant digits (sprintf("%.17g")), in the
# CSV files and in the JSON, which is written by hand for that reason; when
# jsonlite is installed the JSON is read back and every number must survive
# the round trip exactly, and each CSV is read back with read.csv and must
# equal the data frame. Each JSON file has a "source" string with
# R.version.string and the versions of the packages used.
#
# Why
# ---
# The expected values come from an outside implementation (R with car,
# lmtest and sandwich) so that the Rust tests can check sheetfit's numbers
# against them. The files are committed; the Rust tests only read them and
# need no R.
#
# How to rerun
# ------------
# On Debian or Ubuntu:
#     apt-get install r-base-core r-cran-car r-cran-lmtest r-cran-sandwich
# then, from the project root:
#     Rscript tests/reference/make_model_checks_reference.R
# The data are datasets that ship with R and car (carData), so rerunning with
# the same versions (R 4.2.2, car 3.1.1, lmtest 0.9.40, sandwich 3.0.2)
# reproduces the files.

suppressPackageStartupMessages({
  library(car)
  library(lmtest)
  library(sandwich)
})
have_jsonlite <- requireNamespace("jsonlite", quietly = TRUE)

if (!dir.exists(file.path("tests", "reference"))) {
  stop("run from the project root: tests/reference not found")
}
out_dir <- file.path("tests", "fixtures", "model_checks")
dir.create(out_dir, showWarnings = FALSE, recursive = TRUE)

version_of <- function(p) as.character(packageVersion(p))
source_string <- sprintf(
  "%s; car %s; carData %s; lmtest %s; sandwich %s; zoo %s; written by tests/reference/make_model_checks_reference.R",
  R.version.string, version_of("car"), version_of("carData"),
  version_of("lmtest"), version_of("sandwich"), version_of("zoo")
)

threshold <- 0.05

# ---------------------------------------------------------------------------
# JSON by hand: jsonlite prints at most 15 significant digits, which does not
# round-trip every double; sprintf("%.17g") does. A vector wrapped in I() is
# always an array; other length-one vectors are scalars; a list with names is
# an object, one without an array.

num17 <- function(v) if (is.na(v)) "null" else sprintf("%.17g", v)
quote_json <- function(s) {
  s <- gsub("\\\\", "\\\\\\\\", s)
  s <- gsub("\"", "\\\\\"", s)
  paste0("\"", s, "\"")
}
json <- function(x, indent = "") {
  step <- paste0(indent, "  ")
  if (is.null(x)) return("null")
  if (is.list(x)) {
    if (length(x) == 0) return(if (is.null(names(x))) "[]" else "{}")
    items <- vapply(x, json, character(1), indent = step)
    body <- if (is.null(names(x))) {
      items
    } else {
      paste0(vapply(names(x), quote_json, character(1)), ": ", items)
    }
    open <- if (is.null(names(x))) "[" else "{"
    close <- if (is.null(names(x))) "]" else "}"
    return(paste0(open, "\n", step, paste(body, collapse = paste0(",\n", step)),
                  "\n", indent, close))
  }
  items <- if (is.character(x)) {
    vapply(x, quote_json, character(1))
  } else if (is.logical(x)) {
    ifelse(x, "true", "false")
  } else {
    vapply(as.numeric(x), num17, character(1))
  }
  items <- unname(items)
  if (length(x) == 1 && !inherits(x, "AsIs")) items else
    paste0("[", paste(items, collapse = ", "), "]")
}

all_numbers <- function(x) {
  if (is.list(x)) unlist(lapply(x, all_numbers)) else
    if (is.numeric(x)) as.numeric(x) else numeric(0)
}
write_json_checked <- function(x, name) {
  path <- file.path(out_dir, name)
  writeLines(json(x), path)
  if (have_jsonlite) {
    back <- jsonlite::fromJSON(path, simplifyVector = FALSE)
    stopifnot(identical(all_numbers(back), all_numbers(x)))
  }
  invisible(path)
}

# CSV with every number at 17 significant digits; text as it is (quoted
# when it holds a comma or a quote).
write_csv_exact <- function(df, name) {
  cells <- lapply(df, function(col) {
    if (is.numeric(col)) vapply(as.numeric(col), num17, character(1)) else {
      col <- as.character(col)
      needs <- grepl("[,\"]", col)
      col[needs] <- paste0("\"", gsub("\"", "\"\"", col[needs]), "\"")
      col
    }
  })
  lines <- c(paste(names(df), collapse = ","), do.call(paste, c(cells, sep = ",")))
  path <- file.path(out_dir, name)
  writeLines(lines, path)
  back <- read.csv(path, stringsAsFactors = FALSE)
  for (k in names(df)) {
    a <- df[[k]]
    if (is.numeric(a)) {
      stopifnot(identical(as.numeric(back[[k]]), as.numeric(a)))
    } else {
      stopifnot(identical(back[[k]], as.character(a)))
    }
  }
  invisible(path)
}

# ---------------------------------------------------------------------------
# Names as sheetfit writes them. `coef_names` maps R's coefficient names,
# `term_names` R's term labels; names not listed are the same in both.

renamer <- function(map) {
  function(x) {
    hit <- x %in% names(map)
    x[hit] <- unname(map[x[hit]])
    x
  }
}

coefficients_of <- function(fit, coef_name, vcov = NULL) {
  cf <- if (is.null(vcov)) summary(fit)$coefficients else
    unclass(coeftest(fit, vcov. = vcov))
  ci <- if (is.null(vcov)) confint(fit, level = 0.95) else
    coefci(fit, vcov. = vcov, level = 0.95)
  lapply(seq_len(nrow(cf)), function(i) list(
    term = coef_name(rownames(cf)[i]),
    estimate = cf[i, 1],
    std_error = cf[i, 2],
    t_stat = cf[i, 3],
    p_value = cf[i, 4],
    ci_lower = ci[i, 1],
    ci_upper = ci[i, 2]
  ))
}

type_ii_tests <- function(fit, term_name) {
  a <- Anova(fit, type = 2)
  rows <- lapply(seq_len(nrow(a)), function(i) {
    name <- rownames(a)[i]
    if (name == "Residuals") {
      list(term = "Residual", df = a[i, "Df"], sum_sq = a[i, "Sum Sq"])
    } else {
      list(term = term_name(name), df = a[i, "Df"], sum_sq = a[i, "Sum Sq"],
           f_stat = a[i, "F value"], p_value = a[i, "Pr(>F)"])
    }
  })
  rows
}

influence_of <- function(fit) {
  h <- hatvalues(fit)
  r <- rstandard(fit)
  t <- rstudent(fit)
  f <- dffits(fit)
  d <- cooks.distance(fit)
  y <- model.response(model.frame(fit))
  lapply(seq_along(h), function(i) list(
    data_row = i,
    sheet_row = i + 1,
    actual = unname(y[i]),
    fitted = unname(fitted(fit)[i]),
    residual = unname(residuals(fit)[i]),
    leverage = unname(h[i]),
    standardized_residual = unname(r[i]),
    studentized_residual = unname(t[i]),
    dffits = unname(f[i]),
    cooks_distance = unname(d[i])
  ))
}

gvif_of <- function(fit, term_name) {
  v <- vif(fit)
  if (is.matrix(v)) {
    lapply(seq_len(nrow(v)), function(i) list(
      term = term_name(rownames(v)[i]),
      df = v[i, "Df"],
      gvif = v[i, "GVIF"],
      gvif_adjusted = v[i, "GVIF^(1/(2*Df))"]
    ))
  } else {
    # One column per term: car::vif returns the classical VIFs; the
    # adjusted value GVIF^(1/(2*Df)) is then the square root.
    lapply(seq_along(v), function(i) list(
      term = term_name(names(v)[i]),
      df = 1,
      gvif = unname(v[i]),
      gvif_adjusted = sqrt(unname(v[i]))
    ))
  }
}

# P(DW < d) under independence from Imhof's (1961) inversion formula with R's
# integrate(), on the non-zero eigenvalues of M A M: a second route to the
# exact p-value, recorded so the precision of dwtest's own is visible.
dw_imhof <- function(fit) {
  X <- model.matrix(fit)
  n <- nrow(X)
  k <- ncol(X)
  e <- residuals(fit)
  d <- sum(diff(e)^2) / sum(e^2)
  A <- diag(c(1, rep(2, n - 2), 1))
  A[abs(row(A) - col(A)) == 1] <- -1
  M <- diag(n) - X %*% solve(crossprod(X), t(X))
  lambda <- eigen(M %*% A %*% M, symmetric = TRUE)$values[seq_len(n - k)]
  l <- lambda - d
  g <- function(u) vapply(u, function(u) {
    sin(0.5 * sum(atan(l * u))) / (u * exp(0.25 * sum(log1p((l * u)^2))))
  }, numeric(1))
  0.5 - integrate(g, 0, Inf, rel.tol = 1e-12, abs.tol = 1e-15,
                  subdivisions = 10000L)$value / pi
}

model_checks_of <- function(fit) {
  e <- residuals(fit)
  n <- length(e)
  dw <- dwtest(fit)
  bp <- bptest(fit)
  sw <- shapiro.test(e)
  rs <- resettest(fit, power = 2:3, type = "fitted")
  m2 <- mean((e - mean(e))^2)
  m3 <- mean((e - mean(e))^3)
  m4 <- mean((e - mean(e))^4)
  skewness <- m3 / m2^1.5
  kurtosis <- m4 / m2^2
  jb <- n / 6 * (skewness^2 + (kurtosis - 3)^2 / 4)
  list(
    list(name = "durbin-watson", statistic = unname(dw$statistic),
         p_value = dw$p.value, exact = n < 100, alternative = dw$alternative,
         p_value_imhof = dw_imhof(fit),
         reference = "lmtest::dwtest, defaults"),
    list(name = "breusch-pagan", statistic = unname(bp$statistic),
         df = unname(bp$parameter), p_value = bp$p.value,
         reference = "lmtest::bptest, studentize = TRUE (Koenker)"),
    list(name = "shapiro-wilk", statistic = unname(sw$statistic),
         p_value = sw$p.value,
         reference = "stats::shapiro.test on the residuals"),
    list(name = "reset", statistic = unname(rs$statistic),
         df1 = unname(rs$parameter[1]), df2 = unname(rs$parameter[2]),
         p_value = rs$p.value,
         reference = "lmtest::resettest, power = 2:3, type = \"fitted\""),
    list(name = "jarque-bera", statistic = jb, df = 2,
         p_value = pchisq(jb, 2, lower.tail = FALSE),
         skewness = skewness, kurtosis = kurtosis,
         reference = "n/6 (S^2 + (K - 3)^2 / 4) with pchisq, in R")
  )
}

# Backward elimination: drop1(., test = "F") on the current model, drop the
# term with the largest p-value if it is above the threshold, refit, repeat.
# drop1's scope for an lm respects marginality (a term inside a remaining
# interaction is never offered).
eliminate <- function(fit, term_name) {
  dropped <- list()
  repeat {
    d1 <- drop1(fit, test = "F")
    d1 <- d1[rownames(d1) != "<none>", , drop = FALSE]
    if (nrow(d1) == 0) break
    p <- d1[["Pr(>F)"]]
    k <- which.max(p)
    if (!(p[k] > threshold)) break
    term <- rownames(d1)[k]
    dropped[[length(dropped) + 1]] <- list(
      term = term_name(term), p_value = p[k],
      f_stat = d1[k, "F value"], df = d1[k, "Df"]
    )
    fit <- update(fit, as.formula(paste(". ~ . -", term)))
  }
  list(dropped = dropped, fit = fit)
}

formula_text <- function(fit) paste(deparse(formula(fit)), collapse = " ")

# Every nested pair among `fits` (a named list): the smaller one's
# coefficients a subset of the larger one's, fewer residual df lost.
nested_comparisons <- function(fits) {
  out <- list()
  nm <- names(fits)
  for (i in seq_along(fits)) for (j in seq_along(fits)) {
    if (i == j) next
    a <- fits[[i]]
    b <- fits[[j]]
    if (length(coef(a)) < length(coef(b)) && all(names(coef(a)) %in% names(coef(b)))) {
      av <- anova(a, b)
      out[[length(out) + 1]] <- list(
        smaller = nm[i], larger = nm[j],
        f_stat = av$F[2], df1 = av$Df[2], df2 = av$Res.Df[2],
        p_value = av[["Pr(>F)"]][2],
        reference = sprintf("anova(lm(%s), lm(%s))", formula_text(a), formula_text(b))
      )
    }
  }
  out
}

model_entry <- function(name, fit, coef_name, term_name, elimination) {
  list(
    name = name,
    formula = formula_text(fit),
    n = nobs(fit),
    df_resid = fit$df.residual,
    coefficients = coefficients_of(fit, coef_name),
    term_tests = type_ii_tests(fit, term_name),
    elimination = list(
      dropped = elimination$dropped,
      formula = formula_text(elimination$fit),
      coefficients = coefficients_of(elimination$fit, coef_name),
      term_tests = type_ii_tests(elimination$fit, term_name)
    )
  )
}

# ---------------------------------------------------------------------------
# (a) Duncan.

duncan <- carData::Duncan
duncan_csv <- data.frame(
  occupation = rownames(duncan),
  prestige = as.numeric(duncan$prestige),
  income = as.numeric(duncan$income),
  education = as.numeric(duncan$education),
  type = as.character(duncan$type),
  stringsAsFactors = FALSE
)
write_csv_exact(duncan_csv, "duncan.csv")

# Read back exactly as the tool will see it, the factor's baseline set to
# the job's.
d <- read.csv(file.path(out_dir, "duncan.csv"), stringsAsFactors = FALSE)
d$type <- relevel(factor(d$type), ref = "bc")
stopifnot(identical(levels(d$type), c("bc", "prof", "wc")))

duncan_coef <- renamer(c(
  "(Intercept)" = "Intercept",
  "typeprof" = "type[prof]", "typewc" = "type[wc]",
  "income:typeprof" = "type[prof]:income", "income:typewc" = "type[wc]:income"
))
duncan_term <- renamer(c("income:type" = "type:income", "type:income" = "type:income"))

additive <- lm(prestige ~ income + education + type, data = d)
without_type <- lm(prestige ~ income + education, data = d)
interaction <- lm(prestige ~ income + education + type + type:income, data = d)
stopifnot(identical(
  duncan_coef(names(coef(interaction))),
  c("Intercept", "income", "education", "type[prof]", "type[wc]",
    "type[prof]:income", "type[wc]:income")
))

job_fits <- list("additive" = additive, "without type" = without_type,
                 "interaction" = interaction)
eliminations <- lapply(job_fits, eliminate, term_name = duncan_term)

models <- mapply(model_entry, names(job_fits), job_fits,
                 MoreArgs = list(coef_name = duncan_coef, term_name = duncan_term),
                 elimination = eliminations, SIMPLIFY = FALSE, USE.NAMES = FALSE)
models[[1]]$residuals <- influence_of(additive)
models[[1]]$collinearity <- gvif_of(additive, duncan_term)
models[[1]]$checks <- model_checks_of(additive)

robust <- lapply(c("HC3", "HC1"), function(type) list(
  name = paste("additive", type),
  standard_errors = type,
  formula = formula_text(additive),
  reference = sprintf("lmtest::coeftest and lmtest::coefci with sandwich::vcovHC(type = \"%s\")", type),
  coefficients = coefficients_of(additive, duncan_coef,
                                 vcov = vcovHC(additive, type = type))
))

# The models the job's results hold: the job's own, then one suggested model
# for each whose elimination drops something. The robust models have the
# additive model's terms and rows, and so its elimination.
all_fits <- c(job_fits, list("additive HC3" = additive, "additive HC1" = additive))
all_eliminations <- c(eliminations, list("additive HC3" = eliminations$additive,
                                         "additive HC1" = eliminations$additive))
suggested <- list()
for (nm in names(all_eliminations)) {
  if (length(all_eliminations[[nm]]$dropped) > 0) {
    suggested[[paste0(nm, " (suggested)")]] <- all_eliminations[[nm]]$fit
  }
}
result_fits <- c(all_fits, suggested)

write_json_checked(list(
  source = source_string,
  dataset = "carData::Duncan",
  data = "duncan.csv",
  suggest_threshold = threshold,
  baseline = list(column = "type", level = "bc"),
  result_models = I(names(result_fits)),
  models = models,
  robust = robust,
  suggested = lapply(names(suggested), function(nm) list(
    name = nm,
    suggested_from = sub(" \\(suggested\\)$", "", nm),
    formula = formula_text(suggested[[nm]])
  )),
  comparisons = nested_comparisons(result_fits)
), "duncan.json")

# ---------------------------------------------------------------------------
# (b) mtcars.

mt_csv <- data.frame(
  car = rownames(mtcars),
  mpg = mtcars$mpg, wt = mtcars$wt, hp = mtcars$hp, qsec = mtcars$qsec,
  drat = mtcars$drat, am = mtcars$am,
  stringsAsFactors = FALSE
)
write_csv_exact(mt_csv, "mtcars.csv")
mt <- read.csv(file.path(out_dir, "mtcars.csv"), stringsAsFactors = FALSE)
stopifnot(identical(mt$mpg, mtcars$mpg), identical(mt$wt, mtcars$wt),
          identical(mt$qsec, mtcars$qsec), identical(mt$drat, mtcars$drat))

same <- function(x) x
mt_coef <- renamer(c("(Intercept)" = "Intercept"))
full <- lm(mpg ~ wt + hp + qsec + drat + am, data = mt)
mt_elimination <- eliminate(full, same)
stopifnot(length(mt_elimination$dropped) >= 2)
mt_model <- model_entry("full", full, mt_coef, same, mt_elimination)
mt_model$collinearity <- gvif_of(full, same)
mt_result <- list("full" = full, "full (suggested)" = mt_elimination$fit)

write_json_checked(list(
  source = source_string,
  dataset = "datasets::mtcars",
  data = "mtcars.csv",
  suggest_threshold = threshold,
  result_models = I(names(mt_result)),
  models = list(mt_model),
  suggested = list(list(name = "full (suggested)", suggested_from = "full",
                        formula = formula_text(mt_elimination$fit))),
  comparisons = nested_comparisons(mt_result)
), "mtcars.json")

cat("wrote", file.path(out_dir, c("duncan.csv", "duncan.json", "mtcars.csv", "mtcars.json")),
    sep = "\n  ")
