#!/usr/bin/python3
"""The daily fit of bench/daily.ts as a numpy script: the scenario's CSV files read with
pandas (panel_csv.py), then the second-stage fit of gmm_linear.py (with the HJ distance),
Newey-West lags as given.

    env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/numpy/daily_fit.py DIR LAGS
"""
import json
import os
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from gmm_linear import second_stage_fit  # noqa: E402
from panel_csv import load  # noqa: E402

d, L = sys.argv[1], int(sys.argv[2])
t0 = time.perf_counter()
R, F, periods, assets = load(os.path.join(d, "prices.csv"), os.path.join(d, "factors.csv"), os.path.join(d, "riskfree.csv"))
t1 = time.perf_counter()
out = second_stage_fit(R, F, L)
t2 = time.perf_counter()
print(json.dumps({"T": len(periods), "N": len(assets), "b": out["theta"][: F.shape[1]].tolist(), "J": out["J"], "readSeconds": t1 - t0, "fitSeconds": t2 - t1}))
