#!/usr/bin/python3
"""Baseline test errors for the trainer's quality checks.

AdaBoost with 500 decision stumps (scikit-learn, Debian's python3-sklearn) on
golearn's bundled UCI sets; the Go tests compare Surety's test error with
these figures within a stated margin.

Rerun from the repository root (about a minute):

    /usr/bin/python3 testdata/trainer/baseline.py "$(go list -m -f '{{.Dir}}' github.com/sjwhitworth/golearn)/examples/datasets" > testdata/trainer/baseline.csv

house-votes-84 has no test file: its figure is the mean test error over 20
stratified 50/50 splits (seeds 0..19).
mnist uses mnist_train.csv to fit and mnist_test.csv to test, as the Go test
does; "mnist-3v8" keeps the digits 3 and 8 only.
"""
import csv
import sys

import numpy as np
import sklearn
from sklearn.ensemble import AdaBoostClassifier
from sklearn.model_selection import train_test_split
from sklearn.tree import DecisionTreeClassifier


def load(path, label):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    head = [h.strip() for h in rows[0]]
    li = head.index(label)
    X = np.array([[float(v) for j, v in enumerate(r) if j != li] for r in rows[1:]])
    y = np.array([r[li] for r in rows[1:]])
    return X, y


def boost():
    stump = DecisionTreeClassifier(max_depth=1)
    try:
        return AdaBoostClassifier(estimator=stump, n_estimators=500, random_state=0)
    except TypeError:  # scikit-learn before 1.2 names it base_estimator
        return AdaBoostClassifier(base_estimator=stump, n_estimators=500, random_state=0)


def main(root):
    out = csv.writer(sys.stdout, lineterminator="\n")
    out.writerow(["dataset", "train_rows", "test_rows", "test_error", "note"])

    X, y = load(root + "/house-votes-84.csv", "party")
    errs = []
    for seed in range(20):
        a, b, ya, yb = train_test_split(X, y, test_size=0.5, stratify=y, random_state=seed)
        errs.append(np.mean(boost().fit(a, ya).predict(b) != yb))
    out.writerow(["house-votes-84", len(a), len(b), "%.4f" % np.mean(errs),
                  "mean of 20 stratified 50/50 splits; sklearn %s" % sklearn.__version__])

    Xtr, ytr = load(root + "/mnist_train.csv", "label")
    Xte, yte = load(root + "/mnist_test.csv", "label")
    err = np.mean(boost().fit(Xtr, ytr).predict(Xte) != yte)
    out.writerow(["mnist-10", len(ytr), len(yte), "%.4f" % err, "sklearn %s" % sklearn.__version__])

    tr = np.isin(ytr, ["3", "8"])
    te = np.isin(yte, ["3", "8"])
    err = np.mean(boost().fit(Xtr[tr], ytr[tr]).predict(Xte[te]) != yte[te])
    out.writerow(["mnist-3v8", int(tr.sum()), int(te.sum()), "%.4f" % err, "sklearn %s" % sklearn.__version__])


if __name__ == "__main__":
    main(sys.argv[1])
