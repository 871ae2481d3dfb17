# Reference fits for lib/estimation/r-reference.test.ts, from test/reference/synthetic-panel.csv.
# Run from the project root:  Rscript test/reference/fit-reference.R
# Needs R with the sandwich package (Debian: apt-get install -y r-base-core r-cran-sandwich).
# Writes test/reference/r-reference.json, every number with sprintf("%.17g").
#
# The `reference` specification, per economy:
#   observation t is used when A_t, A_{t-1} and R_{t-1} are present and A_t > A_{t-1};
#   g_t = ln(A_t / A_{t-1}) (log change), y = ln g_t;
#   regressors: intercept, ln R_{t-1}, ln A_{t-1}  (t-1 is the previous calendar year).
# Per economy: lm coefficients; standard errors classical, vcovHC HC0/HC1/HC3, and
#   NeweyWest(m, lag = floor(4 * (T/100)^(2/9)), prewhite = FALSE, adjust = TRUE), T = usable obs.,
#   and the same lag with VAR(1) prewhitening (prewhite = TRUE), adjust = TRUE and FALSE.
# Pooled: gamma restricted to 1, economy fixed effects:
#   lm(y - lnR ~ lnA + factor(economy)), SEs classical and vcovCL(m, cluster = ~economy, type = "HC1").
# Per economy n = (ln R_t1 - ln R_t0) / (t1 - t0): t1 the last year with researcher data, t0 the
#   earliest year with researcher data in [t1 - 10, t1).
suppressPackageStartupMessages(library(sandwich))
panel <- read.csv("test/reference/synthetic-panel.csv", stringsAsFactors = FALSE)
num <- function(x) sprintf("%.17g", x)
arr <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")
strs <- function(x) paste0("[", paste0('"', x, '"', collapse = ", "), "]")
named <- function(x) paste0("{", paste0('"', names(x), '": ', num(x), collapse = ", "), "}")

build_sample <- function(d) {
  d <- d[order(d$year), ]
  out <- NULL
  for (i in seq_len(nrow(d))) {
    prev <- which(d$year == d$year[i] - 1)
    if (length(prev) != 1) next
    At <- d$tfp[i]; A0 <- d$tfp[prev]; R0 <- d$researchers[prev]
    if (is.na(At) || is.na(A0) || is.na(R0)) next
    if (!(At > A0)) next
    out <- rbind(out, data.frame(economy = d$economy[i], year = d$year[i],
                                 y = log(log(At / A0)), lnR = log(R0), lnA = log(A0)))
  }
  out
}

economies <- sort(unique(panel$economy))
samples <- list()
entries <- character(0)
for (e in economies) {
  d <- panel[panel$economy == e, ]
  s <- build_sample(d)
  samples[[e]] <- s
  m <- lm(y ~ lnR + lnA, data = s)
  nT <- nrow(s)
  L <- floor(4 * (nT / 100)^(2 / 9))
  se <- function(V) sqrt(diag(V))
  nonpos <- sum(sapply(2:nrow(d), function(i) {
    j <- which(d$year == d$year[i] - 1)
    length(j) == 1 && !is.na(d$tfp[i]) && !is.na(d$tfp[j]) && d$tfp[i] <= d$tfp[j]
  }))
  r <- d[!is.na(d$researchers), ]
  t1 <- max(r$year)
  t0 <- min(r$year[r$year >= t1 - 10 & r$year < t1])
  n <- (log(r$researchers[r$year == t1]) - log(r$researchers[r$year == t0])) / (t1 - t0)
  entries <- c(entries, paste0(
    '    "', e, '": {\n',
    '      "observations": ', nT, ',\n',
    '      "years": ', arr(s$year), ',\n',
    '      "nonPositiveGrowthYears": ', nonpos, ',\n',
    '      "lag": ', L, ',\n',
    '      "coefficients": ', named(coef(m)), ',\n',
    '      "sigma": ', num(summary(m)$sigma), ',\n',
    '      "rSquared": ', num(summary(m)$r.squared), ',\n',
    '      "se": {\n',
    '        "classical": ', named(se(vcov(m))), ',\n',
    '        "HC0": ', named(se(vcovHC(m, type = "HC0"))), ',\n',
    '        "HC1": ', named(se(vcovHC(m, type = "HC1"))), ',\n',
    '        "HC3": ', named(se(vcovHC(m, type = "HC3"))), ',\n',
    '        "NeweyWest": ', named(se(NeweyWest(m, lag = L, prewhite = FALSE, adjust = TRUE))), ',\n',
    '        "NeweyWestPrewhite": ', named(se(NeweyWest(m, lag = L, prewhite = TRUE, adjust = TRUE))), ',\n',
    '        "NeweyWestPrewhiteNoAdjust": ', named(se(NeweyWest(m, lag = L, prewhite = TRUE, adjust = FALSE))), '\n',
    '      },\n',
    '      "researcherGrowth": {"t0": ', t0, ', "t1": ', t1, ', "n": ', num(n), '}\n',
    '    }'))
}
pooled <- do.call(rbind, samples)
pooled$yr <- pooled$y - pooled$lnR
mp <- lm(yr ~ lnA + factor(economy), data = pooled)
lines <- c(
  "{",
  '  "generatedBy": "test/reference/fit-reference.R",',
  paste0('  "rVersion": "', R.version.string, '",'),
  paste0('  "sandwichVersion": "', as.character(packageVersion("sandwich")), '",'),
  '  "calls": {',
  '    "classical": "sqrt(diag(vcov(m)))",',
  '    "HC": "sqrt(diag(sandwich::vcovHC(m, type = type)))",',
  '    "NeweyWest": "sqrt(diag(sandwich::NeweyWest(m, lag = floor(4 * (T/100)^(2/9)), prewhite = FALSE, adjust = TRUE)))",',
  '    "NeweyWestPrewhite": "sqrt(diag(sandwich::NeweyWest(m, lag = floor(4 * (T/100)^(2/9)), prewhite = TRUE, adjust = TRUE)))",',
  '    "NeweyWestPrewhiteNoAdjust": "sqrt(diag(sandwich::NeweyWest(m, lag = floor(4 * (T/100)^(2/9)), prewhite = TRUE, adjust = FALSE)))",',
  '    "pooledCluster": "sqrt(diag(sandwich::vcovCL(m, cluster = ~economy, type = \\"HC1\\")))"',
  '  },',
  '  "economies": {',
  paste(entries, collapse = ",\n"),
  '  },',
  '  "pooled": {',
  '    "formula": "y - lnR ~ lnA + factor(economy)",',
  paste0('    "observations": ', nrow(pooled), ','),
  paste0('    "coefficientNames": ', strs(names(coef(mp))), ','),
  paste0('    "coefficients": ', arr(coef(mp)), ','),
  paste0('    "seClassical": ', arr(sqrt(diag(vcov(mp)))), ','),
  paste0('    "seClusterHC1": ', arr(sqrt(diag(vcovCL(mp, cluster = ~economy, type = "HC1"))))),
  '  }',
  "}"
)
writeLines(lines, "test/reference/r-reference.json")
cat("wrote test/reference/r-reference.json:", length(economies), "economies,", nrow(pooled), "pooled observations\n")
