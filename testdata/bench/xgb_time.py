#!/usr/bin/python3
"""Times XGBoost on a CSV file, the reference for Surety's speed benchmark.

Reads the file with pandas, codes the labels 0..K-1 (in sorted order), and
fits xgboost.XGBClassifier(tree_method='hist', n_estimators=100,
max_depth=1, n_jobs=2): 100 boosted stumps, like a vote over stumps. Prints
one JSON line with the wall times in seconds (time.perf_counter) of the
read (labels coded included), of the fit, and of both, and the table's
size. Text columns become pandas categories (XGBoost's own categorical
splits); empty cells are missing values, which XGBoost handles itself.

Run (Debian's python3-xgboost and python3-pandas):

    /usr/bin/python3 testdata/bench/xgb_time.py FILE.csv LABEL
"""
import json
import sys
import time

import numpy as np
import pandas as pd
import xgboost


def main(path, label):
    t0 = time.perf_counter()
    df = pd.read_csv(path)
    df.columns = [c.strip() for c in df.columns]
    y = df.pop(label).astype(str)
    classes = np.array(sorted(y.unique()))
    codes = np.searchsorted(classes, y.to_numpy())
    text = [c for c in df.columns if df[c].dtype == object]
    df[text] = df[text].astype("category")
    t1 = time.perf_counter()
    model = xgboost.XGBClassifier(tree_method="hist", n_estimators=100, max_depth=1, n_jobs=2,
                                  enable_categorical=bool(text))
    model.fit(df, codes)
    t2 = time.perf_counter()
    print(json.dumps({
        "read_s": round(t1 - t0, 3),
        "fit_s": round(t2 - t1, 3),
        "total_s": round(t2 - t0, 3),
        "rows": len(df),
        "cols": df.shape[1],
        "classes": len(classes),
        "xgboost": xgboost.__version__,
    }))


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit("usage: xgb_time.py FILE.csv LABEL")
    main(sys.argv[1], sys.argv[2])
