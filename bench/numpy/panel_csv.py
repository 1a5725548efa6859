"""Reads the benchmark scenario's CSV files (bench/lib/scenario.ts writes them) into the
arrays a numpy estimator needs, as deflator's returns engine builds them from the same
files: prices.csv (long: date,asset,price) -> simple gross returns P_t / P_{t-1} per asset;
riskfree.csv (date,<name>: a per-period rate, R^f_t = 1 + rf_t); excess returns on the
periods every asset, the risk-free and the factors (factors.csv, wide) have. `key` maps a
date to its period: the date itself (daily) or its month (monthly, "YYYY-MM").

Uses pandas' C reader for the long prices file (the fastest reader on this machine); the
caller's timing includes importing pandas."""
import numpy as np
import pandas as pd


def load(prices, factors, riskfree, monthly=False):
    p = pd.read_csv(prices)
    if monthly:
        p["date"] = p["date"].str.slice(0, 7)
    wide = p.pivot(index="date", columns="asset", values="price").sort_index()
    gross = (wide / wide.shift(1)).iloc[1:]
    f = pd.read_csv(factors)
    rf = pd.read_csv(riskfree)
    if monthly:
        f["date"] = f["date"].str.slice(0, 7)
        rf["date"] = rf["date"].str.slice(0, 7)
    f = f.set_index("date")
    rf = rf.set_index("date").iloc[:, 0]
    idx = gross.dropna().index.intersection(f.index).intersection(rf.index)
    R = gross.loc[idx].to_numpy() - (1.0 + rf.loc[idx].to_numpy())[:, None]
    F = f.loc[idx].to_numpy()
    return R, F, list(idx), list(wide.columns)
