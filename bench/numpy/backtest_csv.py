#!/usr/bin/python3
"""The whole-process back-test anchor (bench/backtest.ts, "whole process"): the monthly
scenario's CSV files read with pandas (panel_csv.py), then every rolling window fitted
afresh at the second stage as bench/backtest_numpy.py does it (fit_window), and each
window's held-out pricing errors.

    env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/numpy/backtest_csv.py DIR WINDOW STEP LAGS
"""
import json
import os
import sys

here = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, here)
sys.path.insert(0, os.path.dirname(here))
from backtest_numpy import fit_window  # noqa: E402
from panel_csv import load  # noqa: E402

d, W, step, L = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
R, F, periods, assets = load(os.path.join(d, "prices.csv"), os.path.join(d, "factors.csv"), os.path.join(d, "riskfree.csv"), monthly=True)
T, K = R.shape[0], F.shape[1]
first = None
s = 0
windows = 0
while s + W + 1 <= T:
    theta, se = fit_window(R[s:s + W], F[s:s + W], L)
    m = 1.0 - (F[s + W:s + W + 1] - theta[K:]) @ theta[:K]
    _alpha_oos = (R[s + W:s + W + 1] * m[:, None]).mean(axis=0)
    if first is None:
        first = theta.tolist()
    windows += 1
    s += step
print(json.dumps({"T": T, "N": len(assets), "windows": windows, "first": first}))
