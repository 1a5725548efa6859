#!/usr/bin/python3
"""The bench/backtest.ts back-test done the straightforward way with numpy: every window
fitted afresh from its own periods. Per window: first stage mu = fbar and b by least
squares on C = cov(R, f); u_t built explicitly; S1 = Newey-West (Bartlett weights
1 - j/(L+1), centred, divided by T) by matrix products; second stage: (b, mu) minimising
g' S1^-1 g by Newton steps with the exact Hessian, falling back to Gauss-Newton with step
halving when a Newton step does not lower the objective, to a step below 1e-12;
Var = (d' S1^-1 d)^-1 / T. Times the loop over the windows only (reading files excluded).

    /usr/bin/python3 bench/backtest_numpy.py DIR WINDOW STEP LAGS

DIR holds returns.csv and factors.csv (no header, one row per period); writes
DIR/numpy_out.json: {"seconds", "cpuSeconds", "numpy", "params": [[b..., mu...] per window], "se": [...]}.
"""
import json
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "numpy"))
from gmm_linear import newey_west  # noqa: E402  (one Newey-West for every numpy anchor)


def fit_window(R, f, L):
    n, N = R.shape
    K = f.shape[1]
    Rbar = R.mean(axis=0)
    fbar = f.mean(axis=0)
    C = R.T @ (f - fbar) / n
    b = np.linalg.lstsq(C, Rbar, rcond=None)[0]
    mu = fbar.copy()

    def moments(b, mu):
        m = 1.0 - (f - mu) @ b
        return np.hstack([R * m[:, None], f - mu])

    def jac(b, mu):
        d = np.zeros((N + K, 2 * K))
        d[:N, :K] = -(R.T @ (f - mu)) / n
        d[:N, K:] = np.outer(Rbar, b)
        d[N:, K:] = -np.eye(K)
        return d

    Sinv = np.linalg.inv(newey_west(moments(b, mu), L))
    theta = np.concatenate([b, mu])

    def objective(th):
        g = moments(th[:K], th[K:]).mean(axis=0)
        return g @ Sinv @ g, g

    q, g = objective(theta)
    for _ in range(100):
        d = jac(theta[:K], theta[K:])
        grad = d.T @ Sinv @ g
        gn = d.T @ Sinv @ d
        rho = (Sinv @ g)[:N] @ Rbar
        H = gn.copy()
        H[:K, K:] += rho * np.eye(K)
        H[K:, :K] += rho * np.eye(K)
        step = np.linalg.solve(H, grad)
        qn, gn_g = objective(theta - step)
        if not qn <= q * (1 + 1e-12):
            step = np.linalg.solve(gn, grad)
            t = 1.0
            qn, gn_g = objective(theta - step)
            while not qn <= q * (1 + 1e-12) and t > 1e-10:
                t /= 2
                qn, gn_g = objective(theta - t * step)
            step = t * step
        theta = theta - step
        q, g = qn, gn_g
        if np.max(np.abs(step)) <= 1e-12 * max(1.0, np.max(np.abs(theta))):
            break
    d = jac(theta[:K], theta[K:])
    V = np.linalg.inv(d.T @ Sinv @ d) / n
    return theta, np.sqrt(np.diag(V))


def main():
    d, W, step, L = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
    R = np.loadtxt(os.path.join(d, "returns.csv"), delimiter=",", ndmin=2)
    F = np.loadtxt(os.path.join(d, "factors.csv"), delimiter=",", ndmin=2)
    T, K = R.shape[0], F.shape[1]
    params, ses = [], []
    t0 = time.perf_counter()
    c0 = time.process_time()
    s = 0
    while s + W + 1 <= T:
        theta, se = fit_window(R[s:s + W], F[s:s + W], L)
        m = 1.0 - (F[s + W:s + W + 1] - theta[K:]) @ theta[:K]
        _alpha_oos = (R[s + W:s + W + 1] * m[:, None]).mean(axis=0)
        params.append(theta.tolist())
        ses.append(se.tolist())
        s += step
    seconds = time.perf_counter() - t0
    cpu = time.process_time() - c0
    with open(os.path.join(d, "numpy_out.json"), "w") as fh:
        json.dump({"seconds": seconds, "cpuSeconds": cpu, "numpy": np.__version__, "params": params, "se": ses}, fh)
    print("numpy %s: %d windows in %.3f s (cpu %.3f s)" % (np.__version__, len(params), seconds, cpu))


if __name__ == "__main__":
    main()
