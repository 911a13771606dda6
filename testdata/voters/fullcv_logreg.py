#!/usr/bin/python3
"""Reference test errors of a cross-validated L2 logistic regression.

The check for voters.FitLinearCV: scikit-learn (Debian's python3-sklearn)
on golearn's iris_headers.csv and house-votes-84.csv (every column numeric,
no missing cell). Outer split by 0-based data-row index: round f (f = 0..4)
tests on the rows with i % 5 == f and trains on the rest. In each round the
training rows' mean and population standard deviation standardise the
columns (a constant column is left out, as FitLinearCV does), and
GridSearchCV picks C for LogisticRegression (lbfgs; multinomial beyond two
classes, one score vector for two, as FitLinearCV) over
FitLinearCV's default grid, numpy.logspace(-4, 1, 8), by mean log-loss over
a stratified 5-fold split (shuffled, random_state 0), then refits on all
the training rows. The test errors of the five rounds are summed.

Rerun from the repository root:

    /usr/bin/python3 testdata/voters/fullcv_logreg.py "$(go list -m -f '{{.Dir}}' github.com/sjwhitworth/golearn)/examples/datasets" > testdata/voters/fullcv_logreg.json
"""
import csv
import json
import os
import sys

import numpy as np
import sklearn
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import GridSearchCV, StratifiedKFold

SETS = [("iris", "iris_headers.csv", "Species"), ("house-votes-84", "house-votes-84.csv", "party")]
GRID = np.logspace(-4, 1, 8)
ROUNDS = 5


def read(path, label):
    with open(path, newline="") as f:
        rows = [r for r in csv.reader(f) if r]
    header = [h.strip() for h in rows[0]]
    j = header.index(label)
    body = rows[1:]
    x = np.array([[float(v) for k, v in enumerate(r) if k != j] for r in body])
    names = [r[j].strip() for r in body]
    classes = sorted(set(names))
    return x, np.array([classes.index(n) for n in names])


def run(x, y):
    errors, chosen = 0, []
    for f in range(ROUNDS):
        test = np.arange(len(y)) % ROUNDS == f
        train = ~test
        mean = x[train].mean(axis=0)
        scale = x[train].std(axis=0)
        keep = scale > 0
        z = (x[:, keep] - mean[keep]) / scale[keep]
        search = GridSearchCV(
            LogisticRegression(multi_class="auto", solver="lbfgs", tol=1e-8, max_iter=100000),
            {"C": GRID},
            cv=StratifiedKFold(5, shuffle=True, random_state=0),
            scoring="neg_log_loss",
        )
        search.fit(z[train], y[train])
        errors += int((search.predict(z[test]) != y[test]).sum())
        chosen.append(float(search.best_params_["C"]))
    return errors, chosen


def main(folder):
    out = {
        "source": "scikit-learn %s: StandardScaler-equivalent + GridSearchCV(LogisticRegression(lbfgs, multinomial beyond two classes), C in logspace(-4, 1, 8), stratified 5-fold, neg_log_loss); outer rounds test on i %% 5 == f" % sklearn.__version__,
        "sets": {},
    }
    for name, file, label in SETS:
        x, y = read(os.path.join(folder, file), label)
        errors, chosen = run(x, y)
        out["sets"][name] = {"rows": len(y), "test_errors": errors, "test_error": errors / len(y), "chosen_c": chosen}
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main(sys.argv[1])
