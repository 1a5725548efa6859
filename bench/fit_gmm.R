# The benchmark fit of bench/fit.ts with R's gmm package: demeaned linear SDF
# m = 1 - b'(f - mu), N asset moments R^e m and K factor-mean moments f - mu; first stage
# W = I on the asset moments with mu = fbar, then the second stage on all N + K moments with
# W = S1^-1 (Newey-West, Bartlett, bw = L + 1, no pre-whitening, centered) and
# vcov = "TrueFixed"; optim BFGS with the analytic gradient (gradv). Times the two gmm()
# calls and the HAC matrix between them, median of 3 runs.
#   Rscript bench/fit_gmm.R <dir with returns.csv, factors.csv> <lags>
suppressPackageStartupMessages(library(gmm))
args <- commandArgs(TRUE)
dir <- args[1]; L <- as.integer(args[2])
R <- as.matrix(read.csv(file.path(dir, "returns.csv"), header = FALSE))
Fm <- as.matrix(read.csv(file.path(dir, "factors.csv"), header = FALSE))
T <- nrow(R); N <- ncol(R); K <- ncol(Fm)
fb <- colMeans(Fm); Fc0 <- sweep(Fm, 2, fb)
gb <- function(b, x) R * as.vector(1 - Fc0 %*% b)
Gb <- function(b, x) -crossprod(R, Fc0) / T
g <- function(th, x) { b <- th[1:K]; Fc <- sweep(Fm, 2, th[K + 1:K]); cbind(R * as.vector(1 - Fc %*% b), Fc) }
G <- function(th, x) { b <- th[1:K]; Fc <- sweep(Fm, 2, th[K + 1:K]); rbind(cbind(-crossprod(R, Fc) / T, colMeans(R) %o% b), cbind(matrix(0, K, K), -diag(K))) }
one <- function() {
  r1 <- gmm(gb, R, rep(0, K), gradv = Gb, weightsMatrix = diag(N), vcov = "HAC", kernel = "Bartlett", bw = L + 1, prewhite = FALSE, method = "BFGS")
  th1 <- c(coef(r1), fb)
  U <- scale(g(th1, R), scale = FALSE)
  S1 <- crossprod(U) / T
  for (j in seq_len(L)) { Gj <- crossprod(U[(j + 1):T, ], U[1:(T - j), ]) / T; S1 <- S1 + (1 - j / (L + 1)) * (Gj + t(Gj)) }
  gmm(g, R, th1, gradv = G, weightsMatrix = solve(S1), vcov = "TrueFixed", kernel = "Bartlett", bw = L + 1, prewhite = FALSE, method = "BFGS")
}
times <- numeric(3)
for (k in 1:3) times[k] <- system.time(r <- one())[["elapsed"]]
cat(sprintf("R gmm %s (%s): second-stage fit, median %.1f ms, min %.1f ms (3 runs)\n", packageVersion("gmm"), R.version.string, 1000 * median(times), 1000 * min(times)))
cat(sprintf("  J = %.4f, b.F1 = %.10g\n", specTest(r)$test[1], coef(r)[1]))
# Not timed: the same estimator run to convergence (Gauss-Newton on each stage's
# first-order condition, started from gmm's estimates), to show that the two agree.
gn <- function(th, gf, Gf, W) { for (i in 1:200) { gbar <- colMeans(gf(th, R)); Gm <- Gf(th, R); st <- as.vector(solve(t(Gm) %*% W %*% Gm, t(Gm) %*% W %*% gbar)); th <- th - st; if (max(abs(st)) < 1e-15) break }; th }
r1 <- gmm(gb, R, rep(0, K), gradv = Gb, weightsMatrix = diag(N), vcov = "HAC", kernel = "Bartlett", bw = L + 1, prewhite = FALSE, method = "BFGS")
th1 <- c(gn(coef(r1), gb, Gb, diag(N)), fb)
U <- scale(g(th1, R), scale = FALSE); S1 <- crossprod(U) / T
for (j in seq_len(L)) { Gj <- crossprod(U[(j + 1):T, ], U[1:(T - j), ]) / T; S1 <- S1 + (1 - j / (L + 1)) * (Gj + t(Gj)) }
th <- gn(coef(r), g, G, solve(S1))
cat(sprintf("  both stages run to convergence from gmm's estimates: b.F1 = %.10g\n", th[1]))
