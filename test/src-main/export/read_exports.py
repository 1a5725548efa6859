#!/usr/bin/python3
"""
Reads a run's CSV folder with pandas and its XLSX workbook with openpyxl, independently of
the program, and prints what they hold as JSON: for every CSV file and every sheet, the
header row and the data rows. Numbers are printed with repr(float) (the shortest decimal
that reads back as the same double), empty cells as null, text as text, so the caller can
compare each cell bit for bit with what the program shows.

Usage: /usr/bin/python3 read_exports.py CSV_FOLDER XLSX_FILE
Readers: pandas.read_csv(float_precision='round_trip') with no other options (the files
hold the table alone), openpyxl.load_workbook(data_only=True).
"""
import json
import math
import os
import sys

import openpyxl
import pandas as pd


def cell(v):
    if v is None:
        return None
    if isinstance(v, bool):
        return v
    if isinstance(v, (int, float)):
        f = float(v)
        if math.isnan(f):
            return None
        return {"num": repr(f)}
    try:
        import numpy as np
        if isinstance(v, np.bool_):
            return bool(v)
        if isinstance(v, (np.integer, np.floating)):
            f = float(v)
            return None if math.isnan(f) else {"num": repr(f)}
    except ImportError:
        pass
    return str(v)


def read_csvs(folder):
    out = {}
    for name in sorted(os.listdir(folder)):
        if not name.endswith(".csv"):
            continue
        d = pd.read_csv(os.path.join(folder, name), float_precision="round_trip")
        out[name[:-4]] = {"header": [str(c) for c in d.columns], "rows": [[cell(v) for v in row] for row in d.itertuples(index=False)]}
    return out


def read_xlsx(path):
    wb = openpyxl.load_workbook(path, data_only=True)
    out = {}
    for ws in wb.worksheets:
        rows = [[cell(c.value) for c in r] for r in ws.iter_rows()]
        if not rows:
            continue
        out[ws.title] = {"header": rows[0], "rows": rows[1:]}
    return out


if __name__ == "__main__":
    print(json.dumps({"pandas": pd.__version__, "openpyxl": openpyxl.__version__, "csv": read_csvs(sys.argv[1]), "xlsx": read_xlsx(sys.argv[2])}))
