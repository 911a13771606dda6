#!/usr/bin/python3
"""Reference fit of an L2 multinomial logistic regression on iris.

The check for the linear voters of package voters: scikit-learn (Debian's
python3-sklearn) fits LogisticRegression on golearn's iris_headers.csv,
training on the rows whose 0-based data-row index i has i % 3 != 0 (100
rows) and testing on the rest (50 rows), with the four columns standardised
by the training rows' mean and population standard deviation, exactly as
voters.FitLinear does. C = 1 on n = 100 rows is voters' L2 = 1/(C n) = 0.01.

Rerun from the repository root:

    /usr/bin/python3 testdata/voters/iris_logreg.py "$(go list -m -f '{{.Dir}}' github.com/sjwhitworth/golearn)/examples/datasets/iris_headers.csv" > testdata/voters/iris_logreg.json
"""
import csv
import json
import sys

import numpy as np
import sklearn
from sklearn.linear_model import LogisticRegression


def main(path):
    with open(path, newline="") as f:
        rows = [r for r in csv.reader(f) if r]
    body = rows[1:]
    x = np.array([[float(v) for v in r[:4]] for r in body])
    names = [r[4].strip() for r in body]
    classes = sorted(set(names))
    y = np.array([classes.index(n) for n in names])
    train = np.array([i % 3 != 0 for i in range(len(body))])
    test = ~train
    mean = x[train].mean(axis=0)
    scale = x[train].std(axis=0)
    z = (x - mean) / scale
    model = LogisticRegression(C=1.0, multi_class="multinomial", solver="lbfgs", tol=1e-12, max_iter=100000)
    model.fit(z[train], y[train])
    pred = model.predict(z[test])
    out = {
        "source": "scikit-learn %s LogisticRegression(C=1, multinomial, lbfgs) on iris_headers.csv, train i %% 3 != 0, test i %% 3 == 0" % sklearn.__version__,
        "classes": classes,
        "test_accuracy": float((pred == y[test]).mean()),
        "coef": model.coef_.tolist(),
        "intercept": model.intercept_.tolist(),
        "test_predictions": [int(p) for p in pred],
    }
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main(sys.argv[1])
