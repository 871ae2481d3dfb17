# Generates test/reference/synthetic-panel.csv: an INVENTED panel of 6 fictional economies
# (user-assigned codes XAA..XAF) x 40 years (1980-2019), for reference checks of lib/estimation.
# Nothing here is real data.
#
# Knowledge production (DOMAIN.md section 2, discrete time, inputs lagged one year):
#   A_t = (A_{t-1} + B * R_{t-1}^gamma * A_{t-1}^theta) * exp(eps_t),  eps_t ~ N(0, 0.008^2)
# with gamma = 0.5, theta = 0.4, B = 4e-5 (the exp(eps) shock makes a few years' TFP growth
# non-positive). Researchers R_t = share_t * population_t, log share a random walk with drift.
# A few researcher and TFP values are then deleted (missing).
#
# Run from the project root:  Rscript test/reference/make-synthetic-panel.R
set.seed(20240611)
gamma <- 0.5; theta <- 0.4; B <- 4e-5
economies <- c("XAA", "XAB", "XAC", "XAD", "XAE", "XAF")
years <- 1980:2019
rows <- list()
for (e in economies) {
  nT <- length(years)
  pop <- numeric(nT); share <- numeric(nT); A <- numeric(nT)
  pop[1] <- round(runif(1, 5e6, 8e7))
  popGrowth <- runif(1, 0.002, 0.015)
  share[1] <- runif(1, 0.002, 0.006)
  shareGrowth <- runif(1, 0.005, 0.03)
  A[1] <- runif(1, 0.8, 1.2)
  for (t in 2:nT) {
    pop[t] <- round(pop[t - 1] * exp(popGrowth + rnorm(1, 0, 0.002)))
    share[t] <- share[t - 1] * exp(shareGrowth + rnorm(1, 0, 0.02))
  }
  R <- round(share * pop, 1)
  for (t in 2:nT) {
    A[t] <- (A[t - 1] + B * R[t - 1]^gamma * A[t - 1]^theta) * exp(rnorm(1, 0, 0.008))
  }
  A <- signif(A, 10)
  rows[[e]] <- data.frame(economy = e, year = years, researchers = R, tfp = A, population = pop)
}
panel <- do.call(rbind, rows)
# Missing values: a few researcher counts and TFP values, never in the first year.
missR <- sample(which(panel$year > 1980), 5)
missA <- sample(which(panel$year > 1980), 4)
panel$researchers[missR] <- NA
panel$tfp[missA] <- NA
fmt <- function(x) ifelse(is.na(x), "", trimws(formatC(x, digits = 15, format = "g")))
out <- data.frame(economy = panel$economy, year = panel$year, researchers = fmt(panel$researchers),
                  tfp = fmt(panel$tfp), population = formatC(panel$population, format = "d", big.mark = ""))
write.csv(out, "test/reference/synthetic-panel.csv", row.names = FALSE, quote = FALSE)
growth <- with(panel, ave(tfp, economy, FUN = function(a) c(NA, diff(log(a)))))
cat("rows:", nrow(panel), " missing researchers:", length(missR), " missing tfp:", length(missA),
    " non-positive TFP growth years:", sum(growth <= 0, na.rm = TRUE), "\n")
