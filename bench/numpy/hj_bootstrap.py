#!/usr/bin/python3
"""numpy side of bench/compare.ts: the squared HJ distance of the demo comparison's three
models on each bootstrap replication, on the same panels and the same replication indices
deflator drew (files written by the benchmark), timed per replication (CPU seconds).

  linear models   HJ^2 = min_b g(b)' E[RR']^-1 g(b), g = Rbar - C b, C = cov(R, f): least squares
                  on the system whitened by the Cholesky factor of E[RR'] (numpy.linalg)
  consumption     m_t = (C_t/C_t-1)^-gamma (delta fixed at 1, excess returns): minimise
                  g(gamma)' E[RR']^-1 g(gamma) over gamma by Newton's method, started from the
                  full-sample estimate (found once by a grid from -20 to 200 step 0.5, then Newton)

    env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/numpy/hj_bootstrap.py DIR T N REPS
DIR holds R.f64 (T x N excess returns), f1.f64 (T x 1), f3.f64 (T x 3), g.f64 (consumption growth, T),
idx.i32 (REPS x T replication indices). Prints JSON {"perReplication": seconds, "values": [[hj2 x 3] per rep]}.
"""
import json
import os
import sys
import time

import numpy as np


def linear_hj2(R, f):
    T = R.shape[0]
    Rbar = R.mean(axis=0)
    C = R.T @ (f - f.mean(axis=0)) / T
    E = R.T @ R / T
    L = np.linalg.cholesky(E)
    X = np.linalg.solve(L, C)
    y = np.linalg.solve(L, Rbar)
    b = np.linalg.lstsq(X, y, rcond=None)[0]
    e = y - X @ b
    return e @ e


def cons_parts(R, lg, gamma, Winv_chol):
    x = np.exp(-gamma * lg)
    T = R.shape[0]
    g = R.T @ x / T
    d1 = R.T @ (-lg * x) / T
    d2 = R.T @ (lg * lg * x) / T
    a = np.linalg.solve(Winv_chol, g)
    b1 = np.linalg.solve(Winv_chol, d1)
    b2 = np.linalg.solve(Winv_chol, d2)
    return a @ a, 2 * a @ b1, 2 * (b1 @ b1 + a @ b2)


def cons_hj2(R, lg, gamma0):
    T = R.shape[0]
    L = np.linalg.cholesky(R.T @ R / T)
    gamma = gamma0
    q, dq, d2q = cons_parts(R, lg, gamma, L)
    for _ in range(100):
        step = dq / d2q if d2q > 0 else dq
        t = 1.0
        while True:
            qn, dqn, d2qn = cons_parts(R, lg, gamma - t * step, L)
            if qn <= q or t < 1e-10:
                break
            t /= 2
        gamma -= t * step
        done = abs(t * step) <= 1e-12 * max(1.0, abs(gamma))
        q, dq, d2q = qn, dqn, d2qn
        if done:
            break
    return q, gamma


def main():
    d, T, N, reps = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
    R = np.fromfile(os.path.join(d, "R.f64")).reshape(T, N)
    f1 = np.fromfile(os.path.join(d, "f1.f64")).reshape(T, 1)
    f3 = np.fromfile(os.path.join(d, "f3.f64")).reshape(T, 3)
    lg = np.log(np.fromfile(os.path.join(d, "g.f64")))
    idx = np.fromfile(os.path.join(d, "idx.i32"), dtype=np.int32).reshape(reps, T)
    # full-sample gamma: the grid, then Newton
    L = np.linalg.cholesky(R.T @ R / T)
    grid = np.arange(-20, 200.0001, 0.5)
    start = grid[np.argmin([cons_parts(R, lg, g, L)[0] for g in grid])]
    _, gamma_hat = cons_hj2(R, lg, start)
    values = []
    c0 = time.process_time()
    for r in range(reps):
        i = idx[r]
        Rr, lgr = R[i], lg[i]
        values.append([linear_hj2(Rr, f1[i]), linear_hj2(Rr, f3[i]), cons_hj2(Rr, lgr, gamma_hat)[0]])
    per = (time.process_time() - c0) / reps
    print(json.dumps({"perReplication": per, "values": values, "numpy": np.__version__}))


if __name__ == "__main__":
    main()
