# Reference fixture generator for sheetfit's collinearity and robust
# standard-error tests (tests/collinearity.rs).
#
# What it produces
# ----------------
# One JSON file per case in tests/fixtures/collinearity/, each holding
#   * the data as sheetfit reads it: the response and the predictor columns
#     by name (text for a categorical predictor, null for a missing cell);
#   * the job that fits it (response, numeric, poly, categorical);
#   * the design matrix R builds for the same model, intercept included,
#     with its columns named and ordered as sheetfit builds them (numeric
#     predictors, then polynomial powers, then treatment indicators against
#     the first level in sorted order; R's factor baselines are set to match);
#   * the least-squares coefficients, the generalized variance inflation
#     factors of car::vif (its "GVIF", "Df" and "GVIF^(1/(2*Df))" columns;
#     plain VIFs, Df = 1 and sqrt(VIF), when every term has one degree of
#     freedom), and the heteroscedasticity-consistent covariance matrices
#     sandwich::vcovHC(type = "HC1") and (type = "HC3") with their standard
#     errors;
#   * a "source" string naming R and the package versions.
#
# The datasets ship with R (datasets: mtcars, LifeCycleSavings, warpbreaks,
# iris) or with car (carData: Duncan, Prestige).
#
# Why
# ---
# The expected numbers come from an independent, outside implementation
# (R with car and sandwich), so that sheetfit's own GVIF and HC1/HC3 code
# can be checked against them. The JSON files are committed; the Rust tests
# only read them and need no R.
#
# How to rerun
# ------------
# On Debian or Ubuntu:
#
#     apt-get install r-base-core r-cran-car r-cran-sandwich
#
# then, from the project root:
#
#     Rscript tests/reference/make_collinearity_reference.R
#
# The fixtures were produced with R 4.2.2, car 3.1.1, carData 3.0.5 and
# sandwich 3.0.2; rerunning with the same versions reproduces the same files.
# Numbers are written with 17 significant digits, so they read back as the
# very doubles R computed.

suppressPackageStartupMessages({
  library(car)
  library(sandwich)
})

if (!file.exists("Cargo.toml")) {
  stop("run this script from the project root (the folder holding Cargo.toml)")
}
out_dir <- file.path("tests", "fixtures", "collinearity")
dir.create(out_dir, recursive = TRUE, showWarnings = FALSE)

source_text <- sprintf(
  "%s; car %s; carData %s; sandwich %s; written by tests/reference/make_collinearity_reference.R",
  R.version.string, packageVersion("car"), packageVersion("carData"),
  packageVersion("sandwich")
)

# ---------------------------------------------------------------------------
# A small JSON writer: 17 significant digits for doubles, null for NA, NaN
# and infinities. A length-one atomic vector is a scalar unless wrapped in
# I(); a named list is an object, an unnamed list an array.
# ---------------------------------------------------------------------------
json_string <- function(s) {
  s <- gsub("\\", "\\\\", s, fixed = TRUE)
  s <- gsub("\"", "\\\"", s, fixed = TRUE)
  paste0("\"", s, "\"")
}

json_atom <- function(v) {
  if (is.na(v)) {
    return("null")
  }
  if (is.character(v)) {
    return(json_string(v))
  }
  if (is.logical(v)) {
    return(if (v) "true" else "false")
  }
  if (is.integer(v)) {
    return(as.character(v))
  }
  if (!is.finite(v)) {
    return("null")
  }
  sprintf("%.17g", v)
}

to_json <- function(x, indent = "") {
  inner <- paste0(indent, "  ")
  if (is.null(x)) {
    return("null")
  }
  if (is.list(x)) {
    if (length(x) == 0) {
      return(if (is.null(names(x))) "[]" else "{}")
    }
    parts <- vapply(x, to_json, character(1), indent = inner)
    if (!is.null(names(x))) {
      parts <- paste0(json_string(names(x)), ": ", parts)
      return(paste0("{\n", inner, paste(parts, collapse = paste0(",\n", inner)),
                    "\n", indent, "}"))
    }
    return(paste0("[\n", inner, paste(parts, collapse = paste0(",\n", inner)),
                  "\n", indent, "]"))
  }
  if (length(x) == 1 && !inherits(x, "AsIs")) {
    return(json_atom(x))
  }
  x <- unclass(x)
  paste0("[", paste(vapply(seq_along(x), function(i) json_atom(x[[i]]), character(1)),
                    collapse = ", "), "]")
}

# ---------------------------------------------------------------------------
# The cases.
# ---------------------------------------------------------------------------
duncan_singleton <- local({
  # Every blue-collar and professional occupation and the first white-collar
  # one: the level "wc" then has a single row, whose leverage is 1.
  first_wc <- which(Duncan$type == "wc")[1]
  Duncan[Duncan$type != "wc" | seq_len(nrow(Duncan)) == first_wc, ]
})

cases <- list(
  list(name = "mtcars", data = mtcars, dataset = "datasets::mtcars",
       response = "mpg", numeric = c("disp", "hp", "wt", "drat"),
       poly = list(), categorical = character(0),
       what = "four numeric predictors: plain VIFs"),
  list(name = "mtcars_poly", data = mtcars, dataset = "datasets::mtcars",
       response = "mpg", numeric = c("wt", "qsec"), poly = list(hp = 2L),
       categorical = character(0),
       what = "a raw quadratic in hp as one two-column term: GVIF with Df = 2"),
  list(name = "duncan", data = Duncan, dataset = "carData::Duncan",
       response = "prestige", numeric = c("income", "education"),
       poly = list(), categorical = "type",
       what = "a three-level factor: GVIF with Df = 2"),
  list(name = "prestige", data = Prestige, dataset = "carData::Prestige",
       response = "prestige", numeric = c("education", "income", "women"),
       poly = list(), categorical = "type",
       what = "four rows with a missing type, left out by both"),
  list(name = "life_cycle_savings", data = LifeCycleSavings,
       dataset = "datasets::LifeCycleSavings",
       response = "sr", numeric = c("pop15", "pop75", "dpi", "ddpi"),
       poly = list(), categorical = character(0),
       what = "four numeric predictors, for HC1 and HC3 standard errors"),
  list(name = "warpbreaks", data = warpbreaks, dataset = "datasets::warpbreaks",
       response = "breaks", numeric = character(0), poly = list(),
       categorical = c("wool", "tension"),
       what = "two factors; tension's sorted first level H is the baseline, not R's default L"),
  list(name = "iris", data = iris, dataset = "datasets::iris",
       response = "Sepal.Length",
       numeric = c("Sepal.Width", "Petal.Length", "Petal.Width"),
       poly = list(), categorical = "Species",
       what = "strongly collinear numeric predictors and a factor"),
  list(name = "duncan_singleton", data = duncan_singleton,
       dataset = "carData::Duncan, every bc and prof row and the first wc row",
       response = "prestige", numeric = c("income", "education"),
       poly = list(), categorical = "type",
       what = "a factor level with one row (leverage 1): R's HC3 is NaN throughout")
)

# Sorted levels in byte order, as sheetfit sorts them.
sorted_factor <- function(v) {
  v <- as.character(v)
  factor(v, levels = sort(unique(v[!is.na(v)]), method = "radix"))
}

# Names sheetfit gives the design columns and the terms of a case.
sheetfit_names <- function(case, frame) {
  columns <- "Intercept"
  terms <- character(0)
  for (v in case$numeric) {
    columns <- c(columns, v)
    terms <- c(terms, v)
  }
  for (v in names(case$poly)) {
    degree <- case$poly[[v]]
    columns <- c(columns, v, if (degree >= 2) paste0(v, "^", 2:degree))
    terms <- c(terms, sprintf("%s (degree %d)", v, degree))
  }
  for (v in case$categorical) {
    columns <- c(columns, paste0(v, "[", levels(frame[[v]])[-1], "]"))
    terms <- c(terms, v)
  }
  list(columns = columns, terms = terms)
}

covariance_json <- function(v) {
  list(
    std_errors = I(unname(sqrt(diag(v)))),
    matrix = lapply(seq_len(nrow(v)), function(i) I(unname(v[i, ])))
  )
}

for (case in cases) {
  columns <- c(case$response, case$numeric, names(case$poly), case$categorical)
  frame <- case$data[, columns, drop = FALSE]
  rownames(frame) <- NULL
  for (v in case$categorical) {
    frame[[v]] <- sorted_factor(frame[[v]])
  }
  rhs <- c(
    sprintf("`%s`", case$numeric),
    vapply(names(case$poly), function(v) {
      sprintf("poly(`%s`, %d, raw = TRUE)", v, case$poly[[v]])
    }, character(1)),
    sprintf("`%s`", case$categorical)
  )
  formula <- as.formula(sprintf("`%s` ~ %s", case$response, paste(rhs, collapse = " + ")))
  fit <- lm(formula, data = frame, na.action = na.omit)
  x <- model.matrix(fit)
  names_ <- sheetfit_names(case, frame)
  stopifnot(ncol(x) == length(names_$columns))

  vifs <- car::vif(fit)
  vif_rows <- if (is.matrix(vifs)) {
    lapply(seq_len(nrow(vifs)), function(i) {
      list(term = names_$terms[i], df = as.integer(vifs[i, "Df"]),
           gvif = vifs[i, "GVIF"], gvif_adjusted = vifs[i, "GVIF^(1/(2*Df))"])
    })
  } else {
    lapply(seq_along(vifs), function(i) {
      list(term = names_$terms[i], df = 1L, gvif = unname(vifs[i]),
           gvif_adjusted = sqrt(unname(vifs[i])))
    })
  }
  stopifnot(length(vif_rows) == length(names_$terms))

  hc1 <- suppressWarnings(vcovHC(fit, type = "HC1"))
  hc3 <- suppressWarnings(vcovHC(fit, type = "HC3"))

  data_json <- lapply(columns, function(v) {
    values <- frame[[v]]
    if (is.factor(values)) values <- as.character(values)
    list(name = v, values = I(values))
  })
  out <- list(
    case = case$name,
    what = case$what,
    dataset = case$dataset,
    source = source_text,
    formula = paste(deparse(formula), collapse = " "),
    job = list(
      response = case$response,
      numeric = I(case$numeric),
      poly = if (length(case$poly)) case$poly else setNames(list(), character(0)),
      categorical = I(case$categorical)
    ),
    data = data_json,
    n = nrow(x),
    design = list(
      names = I(names_$columns),
      columns = lapply(seq_len(ncol(x)), function(j) I(unname(x[, j])))
    ),
    coefficients = I(unname(coef(fit))),
    leverage = I(unname(hatvalues(fit))),
    vif = vif_rows,
    hc1 = covariance_json(hc1),
    hc3 = covariance_json(hc3)
  )

  if (case$name == "duncan_singleton") {
    # With the single wc row and its indicator left out, the other rows'
    # residuals and leverages are unchanged, so this HC3 is what the
    # coefficients other than type[wc] get when that row adds nothing.
    reduced_frame <- frame[frame$type != "wc", ]
    reduced_frame$type <- sorted_factor(reduced_frame$type)
    reduced <- lm(formula, data = reduced_frame)
    out$hc3_without_singleton <- list(
      names = I(c("Intercept", "income", "education", "type[prof]")),
      std_errors = I(unname(sqrt(diag(vcovHC(reduced, type = "HC3")))))
    )
  }

  path <- file.path(out_dir, paste0(case$name, ".json"))
  writeLines(to_json(out), path)
  cat("wrote", path, "\n")
}
