# Reference fits for tests/glm_reference.rs, made with R's stats::glm and MASS::glm.nb.
#
# Run from the repository root:  Rscript tests/reference/glm_reference.R
# Writes tests/fixtures/glm/<table>.csv (the design as numeric columns, exported with
# model.matrix so both programs fit exactly the same columns) and <table>.json (R's fit).
#
# Convergence is tightened (glm.control(epsilon = 1e-12, maxit = 200)) so the fixtures hold
# the converged maximum-likelihood values rather than R's default stopping point (1e-8).
# MASS::glm.nb reports coefficient standard errors from the expected information with theta
# held fixed (summary.negbin uses dispersion 1 on the final IRLS weights) and theta's standard
# error from the observed information in theta at fixed means (MASS:::theta.ml).
suppressMessages(library(MASS))

out_dir <- "tests/fixtures/glm"
ctrl <- glm.control(epsilon = 1e-12, maxit = 200)

num <- function(x) {
  if (length(x) == 0 || is.null(x)) return("null")
  ifelse(is.finite(x), sprintf("%.17g", x), "null")
}
json_vec <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")
json_str <- function(x) paste0("\"", gsub("\"", "\\\\\"", x), "\"")
clean <- function(x) gsub("[^A-Za-z0-9]+", "_", x)

# Median seconds per call of f over `batches` batches of `reps` calls.
time_fit <- function(f, reps = 50, batches = 15) {
  per <- replicate(batches, {
    t <- proc.time()[["elapsed"]]
    for (i in seq_len(reps)) f()
    (proc.time()[["elapsed"]] - t) / reps
  })
  median(per)
}

fit_json <- function(fit, family, names, se_theta = NULL, seconds = NULL) {
  s <- summary(fit)
  co <- coef(s)
  fields <- c(
    paste0("\"family\": ", json_str(family)),
    paste0("\"names\": [", paste(json_str(names), collapse = ", "), "]"),
    paste0("\"estimate\": ", json_vec(co[, 1])),
    paste0("\"std_error\": ", json_vec(co[, 2])),
    paste0("\"deviance\": ", num(fit$deviance)),
    paste0("\"null_deviance\": ", num(fit$null.deviance)),
    paste0("\"df_residual\": ", num(fit$df.residual)),
    paste0("\"log_likelihood\": ", num(as.numeric(logLik(fit)))),
    paste0("\"aic\": ", num(AIC(fit))),
    paste0("\"bic\": ", num(BIC(fit))),
    paste0("\"pearson_chi2\": ", num(sum(residuals(fit, type = "pearson")^2)))
  )
  if (!is.null(se_theta)) {
    fields <- c(fields,
      paste0("\"theta\": ", num(fit$theta)),
      paste0("\"theta_std_error\": ", num(se_theta)))
  }
  if (!is.null(seconds)) {
    fields <- c(fields, paste0("\"r_seconds_per_fit_median\": ", num(seconds)))
  }
  paste0("{", paste(fields, collapse = ", "), "}")
}

# One table: formula with an optional offset column (log taken by the model); writes the CSV
# of response, design columns (no intercept) and offset column, and both fits' JSON.
reference <- function(name, data, response, rhs, exposure = NULL, negbin = TRUE, time_it = FALSE,
                      source_note) {
  f <- as.formula(paste(response, "~", rhs))
  mm <- model.matrix(f, data)
  cols <- clean(colnames(mm)[-1])
  table <- data.frame(data[[response]], mm[, -1, drop = FALSE])
  names(table) <- c("y", cols)
  if (!is.null(exposure)) table$exposure <- data[[exposure]]
  write.csv(table, file.path(out_dir, paste0(name, ".csv")), row.names = FALSE, quote = FALSE)

  X <- as.data.frame(table)
  g <- if (is.null(exposure)) "y ~ ." else "y ~ . - exposure + offset(log(exposure))"
  g <- as.formula(g)
  pois <- function() glm(g, family = poisson, data = X, control = ctrl)
  p <- pois()
  p_sec <- if (time_it) time_fit(pois) else NULL
  parts <- c(paste0("\"poisson\": ", fit_json(p, "poisson", c("intercept", cols), seconds = p_sec)))
  if (negbin) {
    nbf <- function() glm.nb(g, data = X, control = ctrl)
    nb <- nbf()
    nb_sec <- if (time_it) time_fit(nbf) else NULL
    parts <- c(parts, paste0("\"negbin\": ",
      fit_json(nb, "negbin", c("intercept", cols), se_theta = nb$SE.theta, seconds = nb_sec)))
  }
  meta <- c(
    paste0("\"table\": ", json_str(name)),
    paste0("\"source\": ", json_str(source_note)),
    paste0("\"response\": \"y\""),
    paste0("\"predictors\": [", paste(json_str(cols), collapse = ", "), "]"),
    paste0("\"log_offset\": ", if (is.null(exposure)) "null" else "\"exposure\""),
    paste0("\"made_with\": ", json_str(sprintf("%s; MASS %s; glm.control(epsilon = 1e-12, maxit = 200)",
      R.version.string, as.character(packageVersion("MASS")))))
  )
  writeLines(paste0("{", paste(c(meta, parts), collapse = ",\n "), "}\n"),
             file.path(out_dir, paste0(name, ".json")))
}

# Dobson & Barnett, An Introduction to Generalized Linear Models, 3rd ed. 2008, Table 9.1:
# deaths from coronary heart disease after ten years among British male doctors, by age group
# and smoking, with person-years at risk (Doll and Hill). Typed in from the book's table.
doctors <- data.frame(
  agecat = rep(1:5, 2),
  smoke = rep(c(1, 0), each = 5),
  deaths = c(32, 104, 206, 186, 102, 2, 12, 28, 28, 31),
  pyears = c(52407, 43248, 28612, 12663, 5317, 18790, 10673, 5710, 2585, 1462)
)
doctors$agesq <- doctors$agecat^2
doctors$smkage <- doctors$smoke * doctors$agecat
reference("doctors", doctors, "deaths", "agecat + agesq + smoke + smkage", exposure = "pyears",
          negbin = FALSE,
          source_note = "Dobson & Barnett 3rd ed. 2008, Table 9.1 (British doctors, Doll and Hill)")

# MASS quine (Venables & Ripley, MASS 4th ed. 2002, section 7.4): days absent from school;
# the model of the book and of ?glm.nb, Days ~ Sex/(Age + Eth*Lrn).
reference("quine", quine, "Days", "Sex/(Age + Eth*Lrn)",
          source_note = "MASS::quine, Venables & Ripley 4th ed. 2002, section 7.4")
reference("quine_additive", quine, "Days", "Eth + Sex + Age + Lrn",
          source_note = "MASS::quine, additive model")

# MASS Insurance (Venables & Ripley 4th ed. 2002, section 7.2): claims with log(holders) offset.
ins <- Insurance
ins$Group <- factor(ins$Group, ordered = FALSE)
ins$Age <- factor(ins$Age, ordered = FALSE)
# Here theta runs to infinity in glm.nb (no overdispersion), so theta's standard error is null.
reference("insurance", ins, "Claims", "District + Group + Age", exposure = "Holders",
          source_note = "MASS::Insurance, Venables & Ripley 4th ed. 2002, section 7.2 (treatment contrasts)")

# R datasets warpbreaks (Tippett 1950): breaks ~ wool + tension.
reference("warpbreaks", warpbreaks, "breaks", "wool + tension",
          source_note = "R datasets::warpbreaks")

# Bench table: 45 seasons, 6 predictors, 90-day exposure, NB2 with theta 4 (invented, seeded).
set.seed(20261201)
n <- 45
bench <- data.frame(matrix(round(rnorm(n * 6), 4), n, 6))
names(bench) <- paste0("x", 1:6)
bench$days <- sample(80:90, n, replace = TRUE)
beta <- c(0.35, -0.2, 0.15, 0.1, -0.05, 0.25)
mu <- bench$days * exp(-2.3 + as.matrix(bench[, 1:6]) %*% beta)
bench$floods <- rnbinom(n, size = 4, mu = mu)
reference("bench_45x6", bench, "floods", "x1 + x2 + x3 + x4 + x5 + x6", exposure = "days",
          time_it = TRUE, source_note = "synthetic bench table (set.seed(20261201)); invented data")
