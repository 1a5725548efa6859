#!/usr/bin/python3
"""The demo fit (sample-data/specs/linear-second.json) as a numpy script, from the same CSV
files `deflator demo` imports: monthly total returns (P_t + D_t) a_t / P_{t-1} from
sample-data/monthly/prices.csv, the risk-free (1 + y_{t-1})^(1/12) from bill_yield.csv
(annual yield in percent), excess returns on the months every asset has, the three factors,
then the second-stage fit of gmm_linear.py with L = floor(4 (T/100)^(2/9)).

    env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OPENBLAS_NUM_THREADS=1 /usr/bin/python3 bench/numpy/demo_fit.py [DATA_DIR]

Prints one JSON line: T, N, the estimates, J, and the seconds spent (whole script in the caller).
"""
import csv
import json
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from gmm_linear import auto_lags, second_stage_fit  # noqa: E402


def month(date):
    return date[:7]


def main():
    data = sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "sample-data", "monthly")
    rows = {}
    with open(os.path.join(data, "prices.csv"), newline="") as fh:
        for r in csv.DictReader(fh):
            rows.setdefault(r["asset"], []).append((r["date"], float(r["price"]), float(r["dividend"] or 0.0), float(r["adjust"] or 1.0)))
    gross = {}
    for asset, hist in rows.items():
        hist.sort()
        g = {}
        for (d0, p0, _, _), (d1, p1, div1, a1) in zip(hist, hist[1:]):
            g[month(d1)] = (p1 + div1) * a1 / p0
        gross[asset] = g
    yields = []
    with open(os.path.join(data, "bill_yield.csv"), newline="") as fh:
        for r in csv.DictReader(fh):
            yields.append((r["date"], float(r["bill_yield"]) / 100.0))
    yields.sort()
    rf = {month(d1): (1.0 + y0) ** (1.0 / 12.0) for (_, y0), (d1, _) in zip(yields, yields[1:])}
    with open(os.path.join(data, "factors.csv"), newline="") as fh:
        rd = csv.reader(fh)
        head = next(rd)
        fac = {month(r[0]): [float(v) for v in r[1:]] for r in rd}
    assets = sorted(gross)
    months = sorted(set(rf) & set(fac) & set.intersection(*(set(gross[a]) for a in assets)))
    R = np.array([[gross[a][m] - rf[m] for a in assets] for m in months])
    F = np.array([fac[m] for m in months])
    T = len(months)
    out = second_stage_fit(R, F, auto_lags(T))
    print(json.dumps({"T": T, "N": len(assets), "factors": head[1:], "b": out["theta"][:3].tolist(), "J": out["J"], "pricingStat": out["pricingStat"], "hj": out["hj"]}))


if __name__ == "__main__":
    main()
