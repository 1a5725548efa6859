#!/usr/bin/python3
"""pandas reading the daily scenario's long prices file and building the returns (bench/daily.ts):
read_csv, pivot to one column per asset, P_t / P_{t-1}. Prints CPU and wall seconds of each
part, best of REPS, in this process (pandas already imported).

    /usr/bin/python3 bench/numpy/read_panel.py PRICES_CSV REPS
"""
import json
import sys
import time

import pandas as pd

path, reps = sys.argv[1], int(sys.argv[2])
best = {"read": (9e9, 9e9), "returns": (9e9, 9e9)}
shape = None
for _ in range(reps):
    c0, w0 = time.process_time(), time.perf_counter()
    p = pd.read_csv(path)
    c1, w1 = time.process_time(), time.perf_counter()
    wide = p.pivot(index="date", columns="asset", values="price").sort_index()
    gross = (wide / wide.shift(1)).iloc[1:]
    c2, w2 = time.process_time(), time.perf_counter()
    shape = gross.shape
    best["read"] = min(best["read"], (c1 - c0, w1 - w0))
    best["returns"] = min(best["returns"], (c2 - c1, w2 - w1))
print(json.dumps({"rows": len(p), "shape": shape, "pandas": pd.__version__, "readCpu": best["read"][0], "readWall": best["read"][1], "returnsCpu": best["returns"][0], "returnsWall": best["returns"][1]}))
