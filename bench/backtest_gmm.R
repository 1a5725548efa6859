# The bench/backtest.ts back-test with R's gmm package: for every window, the demeaned
# linear SDF m = 1 - b'(f - mu) as in bench/fit_gmm.R: first stage W = I on the N asset
# moments with mu = fbar (gmm with weightsMatrix = I), S1 = Newey-West of the first-stage
# moments (Bartlett, L lags, centred, divided by T), then the second stage on all N + K
# moments with weightsMatrix = S1^-1 and vcov = "TrueFixed" (optim BFGS, analytic gradient,
# reltol 1e-16: with optim's default the first stage stops early and S1 moves with it).
# Times the loop over the windows; writes DIR/r_out.csv (b, mu, then their s.e. per window).
#   Rscript bench/backtest_gmm.R DIR WINDOW STEP LAGS [MAX_WINDOWS]
suppressPackageStartupMessages(library(gmm))
args <- commandArgs(TRUE)
dir <- args[1]; W <- as.integer(args[2]); step <- as.integer(args[3]); L <- as.integer(args[4])
maxw <- if (length(args) >= 5) as.integer(args[5]) else .Machine$integer.max
Rall <- as.matrix(read.csv(file.path(dir, "returns.csv"), header = FALSE))
Fall <- as.matrix(read.csv(file.path(dir, "factors.csv"), header = FALSE))
Tall <- nrow(Rall); N <- ncol(Rall); K <- ncol(Fall)
# optim tolerance tightened from its default (reltol 1.5e-8), which stops BFGS early on these flat objectives
ctl <- list(reltol = 1e-16, maxit = 5000)
fitWindow <- function(R, Fm) {
  T <- nrow(R)
  fb <- colMeans(Fm); Fc0 <- sweep(Fm, 2, fb)
  gb <- function(b, x) R * as.vector(1 - Fc0 %*% b)
  Gb <- function(b, x) -crossprod(R, Fc0) / T
  g <- function(th, x) { b <- th[1:K]; Fc <- sweep(Fm, 2, th[K + 1:K]); cbind(R * as.vector(1 - Fc %*% b), Fc) }
  G <- function(th, x) { b <- th[1:K]; Fc <- sweep(Fm, 2, th[K + 1:K]); rbind(cbind(-crossprod(R, Fc) / T, colMeans(R) %o% b), cbind(matrix(0, K, K), -diag(K))) }
  r1 <- gmm(gb, R, rep(0, K), gradv = Gb, weightsMatrix = diag(N), vcov = "HAC", kernel = "Bartlett", bw = L + 1, prewhite = FALSE, method = "BFGS", control = ctl)
  th1 <- c(coef(r1), fb)
  U <- scale(g(th1, R), scale = FALSE)
  S1 <- crossprod(U) / T
  for (j in seq_len(L)) { Gj <- crossprod(U[(j + 1):T, ], U[1:(T - j), ]) / T; S1 <- S1 + (1 - j / (L + 1)) * (Gj + t(Gj)) }
  r2 <- gmm(g, R, th1, gradv = G, weightsMatrix = solve(S1), vcov = "TrueFixed", kernel = "Bartlett", bw = L + 1, prewhite = FALSE, method = "BFGS", control = ctl)
  c(coef(r2), sqrt(diag(vcov(r2))))
}
starts <- seq(0, Tall - W - 1, by = step)
starts <- starts[seq_len(min(length(starts), maxw))]
out <- matrix(NA_real_, length(starts), 4 * K)
timing <- system.time({
  for (w in seq_along(starts)) {
    s <- starts[w]
    out[w, ] <- fitWindow(Rall[(s + 1):(s + W), , drop = FALSE], Fall[(s + 1):(s + W), , drop = FALSE])
  }
})
elapsed <- timing[["elapsed"]]
cpu <- timing[["user.self"]] + timing[["sys.self"]]
write.table(out, file.path(dir, "r_out.csv"), sep = ",", row.names = FALSE, col.names = FALSE)
cat(sprintf("R gmm %s (%s): %d windows in %.3f s (cpu %.3f s)\n", packageVersion("gmm"), R.version.string, length(starts), elapsed, cpu))
