# Reference values of the normal and Student t distributions for lib/estimation/distributions.test.ts.
# Run from the project root:  Rscript test/reference/distributions-reference.R
# Writes test/reference/distributions-reference.json (every number with sprintf("%.17g")).
num <- function(x) sprintf("%.17g", x)
arr <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")

x_norm <- c(-38, -37.5, -30, -20, -10, -8, -5.657, -5, -3, -2, -1.5, -1, -0.66291, -0.5, -0.1, -1e-10,
            0, 0.1, 0.5, 1, 1.959963984540054, 2, 3, 5, 8)
p_norm <- c(1e-300, 1e-100, 1e-20, 1e-10, 1e-5, 0.001, 0.01, 0.025, 0.05, 0.1, 0.3, 0.5, 0.7, 0.9,
            0.975, 0.99, 0.999999)
dfs <- c(1, 2, 3, 4.5, 5, 10, 30, 100, 1000, 1e5, 1e7)
t_vals <- c(-50, -10, -5, -3, -2, -1, -0.5, -0.01, 0.3, 1, 2.5, 8)
p_t <- c(1e-12, 1e-6, 0.001, 0.025, 0.05, 0.2, 0.45, 0.55, 0.9, 0.975, 0.999)

pt_grid <- expand.grid(t = t_vals, df = dfs)
qt_grid <- expand.grid(p = p_t, df = dfs)

lines <- c(
  "{",
  sprintf('  "generatedBy": "test/reference/distributions-reference.R",'),
  sprintf('  "rVersion": "%s",', R.version.string),
  sprintf('  "pnorm": {"x": %s, "value": %s},', arr(x_norm), arr(pnorm(x_norm))),
  sprintf('  "qnorm": {"p": %s, "value": %s},', arr(p_norm), arr(qnorm(p_norm))),
  sprintf('  "pt": {"t": %s, "df": %s, "value": %s},', arr(pt_grid$t), arr(pt_grid$df), arr(pt(pt_grid$t, pt_grid$df))),
  sprintf('  "qt": {"p": %s, "df": %s, "value": %s}', arr(qt_grid$p), arr(qt_grid$df), arr(qt(qt_grid$p, qt_grid$df))),
  "}"
)
writeLines(lines, "test/reference/distributions-reference.json")
