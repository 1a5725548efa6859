#!/usr/bin/python3
"""numpy side of bench/kernels.ts: reads DIR/returns.f64 (T x N, row-major float64) and
DIR/factors.f64 (T x K), then times, in this process (CPU seconds, best of REPS):
  gram  X'X of the first q return series for each q given (numpy uses BLAS syrk for X.T @ X)
  fit   the second-stage fit of gmm_linear.py without and with the HJ distance

    env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/numpy/kernels.py DIR T N K LAGS REPS q1,q2,...

Prints one JSON object: {"gram": {q: seconds}, "estimate": seconds, "fit": seconds, "b": [...], "J": ..., "blas": {...}}.
"""
import json
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from blas_info import describe  # noqa: E402
from gmm_linear import second_stage_fit  # noqa: E402


def best(fn, reps):
    out = None
    t = float("inf")
    w = float("inf")
    for _ in range(reps):
        c0 = time.process_time()
        w0 = time.perf_counter()
        out = fn()
        t = min(t, time.process_time() - c0)
        w = min(w, time.perf_counter() - w0)
    return t, w, out


def main():
    d, T, N, K, L, reps = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5]), int(sys.argv[6])
    qs = [int(q) for q in sys.argv[7].split(",") if q]
    R = np.fromfile(os.path.join(d, "returns.f64")).reshape(T, N)
    F = np.fromfile(os.path.join(d, "factors.f64")).reshape(T, K)
    gram = {}
    for q in qs:
        X = np.ascontiguousarray(R[:, :q])
        gram[q] = best(lambda: X.T @ X, reps)[0]
    est_cpu, est_wall, _ = best(lambda: second_stage_fit(R, F, L, hj=False), reps)
    fit_cpu, fit_wall, out = best(lambda: second_stage_fit(R, F, L, hj=True), reps)
    print(json.dumps({"gram": gram, "estimate": est_cpu, "estimateWall": est_wall, "fit": fit_cpu, "fitWall": fit_wall, "b": out["theta"][:K].tolist(), "J": out["J"], "blas": describe()}))


if __name__ == "__main__":
    main()
