#!/usr/bin/python3
"""Data sets and baseline test errors for the accuracy benchmark.

Writes, for each of scikit-learn's bundled sets below and for the demo
scenario, <name>_train.csv and <name>_test.csv next to this script, then
fits three baselines on every train file (and on golearn's bundled UCI sets,
split as Surety's tests split them) and writes their test errors to
baseline.csv.

Rerun from the repository root (Debian's python3-sklearn; a few minutes,
most of it AdaBoost on MNIST):

    /usr/bin/python3 testdata/bench/make.py

The sets (70/30 split, stratified, train_test_split random_state=42):
  breast_cancer  classes malignant, benign
  wine           classes class_0, class_1, class_2
  iris           classes setosa, versicolor, virginica
  digits         classes d0..d9 (8 x 8 pixels, integers 0..16)
  digits38       digits 3 and 8 only, classes d3, d8
  diabetes       the regression target as "high" (above the median of all
                 442 rows) or "low"
  demo           not split here: `surety demo` writes its generated rows
                 (datasets/demodata), 4,000 train rows with seed 1 and
                 20,000 test rows with seed 2
Feature names are scikit-learn's, lower case, with runs of other characters
than letters and digits turned into "_"; the label column "label" comes last
(the demo's is "leaked"). Numbers are written as Python's repr (the shortest
text that reads back to the same float), integral values without ".0".

golearn's UCI sets (its examples/datasets in the Go module cache), split as
the Go tests split them:
  house-votes-84  trainer.TestHouseVotes: datasets.StratifiedSplit(labels,
                  2, 0.5, seed 11), the first part trains (classes sorted,
                  as the datasets reader sorts them)
  mnist-10        trainer.TestMNIST: mnist_train.csv trains, mnist_test.csv
                  tests
  mnist-3v8       the same, digits 3 and 8 only
  iris-golearn    iris_headers.csv, row i (from 0) tests when i % 3 == 0,
                  as voters/iris_logreg.py splits it

The baselines, each fit on the whole train part:
  adaboost200, adaboost500  AdaBoostClassifier with 200 or 500 depth-1
      trees, scikit-learn 1.2's default algorithm (SAMME.R), random_state 0
  logreg  make_pipeline(StandardScaler(), LogisticRegression(max_iter=5000))
Where a set has text columns or empty cells (only the demo), each model gets
the same step in front: text columns one-hot encoded, empty numeric cells
set to the train part's median with a was-missing indicator column.
"""
import os

# One BLAS thread, so that sums come out the same on every run.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import csv
import math
import platform
import re
import shutil
import subprocess
import sys
import tempfile

import numpy as np
import sklearn
from sklearn import datasets
from sklearn.compose import ColumnTransformer
from sklearn.ensemble import AdaBoostClassifier
from sklearn.impute import SimpleImputer
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import train_test_split
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import OneHotEncoder, StandardScaler
from sklearn.tree import DecisionTreeClassifier

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))


def number(v):
    v = float(v)
    if v.is_integer() and abs(v) < 2**53:
        return str(int(v))
    return repr(v)


def column_name(s):
    return re.sub(r"[^0-9a-z]+", "_", s.lower()).strip("_")


def write_csv(path, names, X, y):
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(names + ["label"])
        for row, label in zip(X, y):
            w.writerow([number(v) for v in row] + [label])


def sklearn_sets():
    """Yields (name, feature names, X, y as strings) for scikit-learn's sets."""
    b = datasets.load_breast_cancer()
    yield "breast_cancer", b.feature_names, b.data, b.target_names[b.target]
    w = datasets.load_wine()
    yield "wine", w.feature_names, w.data, w.target_names[w.target]
    i = datasets.load_iris()
    yield "iris", i.feature_names, i.data, i.target_names[i.target]
    d = datasets.load_digits()
    names = np.array(["d%d" % k for k in range(10)])
    yield "digits", d.feature_names, d.data, names[d.target]
    keep = np.isin(d.target, [3, 8])
    yield "digits38", d.feature_names, d.data[keep], names[d.target[keep]]
    r = datasets.load_diabetes()
    yield "diabetes", r.feature_names, r.data, np.where(r.target > np.median(r.target), "high", "low")


def write_sklearn_sets():
    out = []
    for name, features, X, y in sklearn_sets():
        Xa, Xb, ya, yb = train_test_split(X, y, test_size=0.3, stratify=y, random_state=42)
        names = [column_name(f) for f in features]
        assert len(set(names)) == len(names), name
        write_csv(os.path.join(HERE, name + "_train.csv"), names, Xa, ya)
        write_csv(os.path.join(HERE, name + "_test.csv"), names, Xb, yb)
        out.append(name)
    return out


def write_demo():
    """Copies the rows `surety demo` writes (pipes.csv beside its model)."""
    for part, rows, seed in [("train", 4000, 1), ("test", 20000, 2)]:
        with tempfile.TemporaryDirectory() as tmp:
            subprocess.run(["go", "run", "./cmd/surety", "demo", "--rows", str(rows), "--seed", str(seed),
                            "--fresh-rows", "1000", "--out", os.path.join(tmp, "model.json")],
                           cwd=ROOT, check=True, stdout=subprocess.DEVNULL)
            shutil.copyfile(os.path.join(tmp, "pipes.csv"), os.path.join(HERE, "demo_%s.csv" % part))


def read_csv(path, label):
    """Returns the rows of a CSV as an object array (floats, NaN for empty
    numeric cells, or strings), which columns hold text, and the labels."""
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    head = [h.strip() for h in rows[0]]
    li = head.index(label)
    cols, text = [], []
    for j in range(len(head)):
        if j == li:
            continue
        cells = [r[j].strip() for r in rows[1:]]
        try:
            cols.append([float(c) if c != "" else math.nan for c in cells])
            text.append(False)
        except ValueError:
            cols.append(cells)
            text.append(True)
    X = np.empty((len(rows) - 1, len(cols)), dtype=object)
    for j, c in enumerate(cols):
        X[:, j] = c
    return X, np.array(text), np.array([r[li].strip() for r in rows[1:]])


# Pieces of the Go split (datasets.StratifiedSplit), as
# testdata/datasets/split_reference.py writes them and
# datasets/split_test.go pins them.
M64 = (1 << 64) - 1


class PCG:
    def __init__(self, seed1, seed2):
        self.state = (seed1 << 64) | seed2

    def uint64(self):
        self.state = (self.state * 0x2360ED051FC65DA44385DF649FCCF645 + 0x5851F42D4C957F2D14057B7EF767814F) & ((1 << 128) - 1)
        hi, lo = self.state >> 64, self.state & M64
        hi ^= hi >> 32
        hi = (hi * 0xDA942042E4DD58B5) & M64
        hi ^= hi >> 48
        return (hi * (lo | 1)) & M64


def below(g, n):
    x = g.uint64() * n
    if x & M64 < n:
        thresh = ((1 << 64) - n) % n
        while x & M64 < thresh:
            x = g.uint64() * n
    return x >> 64


def go_stratified_split(labels, fraction, seed):
    """The rows of datasets.StratifiedSplit: (first, second), both sorted."""
    g = PCG(seed, 0x5375726574790001)
    first = []
    for c in sorted(set(labels)):
        rows = [i for i, l in enumerate(labels) if l == c]
        for i in range(len(rows) - 1, 0, -1):
            j = below(g, i + 1)
            rows[i], rows[j] = rows[j], rows[i]
        first += rows[: int(math.floor(fraction * len(rows) + 0.5))]
    first = sorted(first)
    taken = set(first)
    return first, [i for i in range(len(labels)) if i not in taken]


def golearn_sets():
    """Yields (name, X train, X test, text columns, y train, y test)."""
    root = subprocess.run(["go", "list", "-m", "-f", "{{.Dir}}", "github.com/sjwhitworth/golearn"],
                          cwd=ROOT, check=True, capture_output=True, text=True).stdout.strip()
    if not root:
        sys.exit("make.py: golearn is not in the module cache; run `go mod download` first")
    root = os.path.join(root, "examples", "datasets")

    X, text, y = read_csv(os.path.join(root, "house-votes-84.csv"), "party")
    a, b = go_stratified_split(list(y), 0.5, 11)
    yield "house-votes-84", X[a], X[b], text, y[a], y[b]

    Xa, text, ya = read_csv(os.path.join(root, "mnist_train.csv"), "label")
    Xb, _, yb = read_csv(os.path.join(root, "mnist_test.csv"), "label")
    yield "mnist-10", Xa, Xb, text, ya, yb
    ka, kb = np.isin(ya, ["3", "8"]), np.isin(yb, ["3", "8"])
    yield "mnist-3v8", Xa[ka], Xb[kb], text, ya[ka], yb[kb]

    X, text, y = read_csv(os.path.join(root, "iris_headers.csv"), "Species")
    test = np.arange(len(y)) % 3 == 0
    yield "iris-golearn", X[~test], X[test], text, y[~test], y[test]


def front(X, text):
    """The step in front of each model: none for all-numeric complete data."""
    num = np.array([not t and np.isnan(X[:, j].astype(float)).any() for j, t in enumerate(text)])
    if not text.any() and not num.any():
        return []
    try:
        onehot = OneHotEncoder(handle_unknown="ignore", sparse_output=False)
    except TypeError:  # scikit-learn before 1.2 names it sparse
        onehot = OneHotEncoder(handle_unknown="ignore", sparse=False)
    return [ColumnTransformer([
        ("numbers", SimpleImputer(strategy="median", add_indicator=True), np.flatnonzero(~text)),
        ("text", onehot, np.flatnonzero(text)),
    ])]


def boost(n):
    stump = DecisionTreeClassifier(max_depth=1)
    try:
        return AdaBoostClassifier(estimator=stump, n_estimators=n, random_state=0)
    except TypeError:  # scikit-learn before 1.2 names it base_estimator
        return AdaBoostClassifier(base_estimator=stump, n_estimators=n, random_state=0)


def baselines(Xa, Xb, text, ya, yb):
    if not text.any():
        Xa, Xb = Xa.astype(float), Xb.astype(float)
    models = [
        ("adaboost200", boost(200)),
        ("adaboost500", boost(500)),
        ("logreg", make_pipeline(StandardScaler(), LogisticRegression(max_iter=5000))),
    ]
    errs = {}
    for name, m in models:
        m = make_pipeline(*front(Xa, text), m)
        errs[name] = float(np.mean(m.fit(Xa, ya).predict(Xb) != yb))
    return errs


def main():
    names = write_sklearn_sets()
    write_demo()
    jobs = []
    for name in names:
        Xa, text, ya = read_csv(os.path.join(HERE, name + "_train.csv"), "label")
        Xb, _, yb = read_csv(os.path.join(HERE, name + "_test.csv"), "label")
        jobs.append((name, Xa, Xb, text, ya, yb))
    Xa, text, ya = read_csv(os.path.join(HERE, "demo_train.csv"), "leaked")
    Xb, _, yb = read_csv(os.path.join(HERE, "demo_test.csv"), "leaked")
    jobs.append(("demo", Xa, Xb, text, ya, yb))
    jobs.extend(golearn_sets())

    cols = ["set", "train_rows", "test_rows", "classes", "adaboost200", "adaboost500", "logreg"]
    print("%-15s %7s %7s %7s %11s %11s %8s" % tuple(cols))
    path = os.path.join(HERE, "baseline.csv")
    with open(path + ".tmp", "w", newline="") as f:
        f.write("# made by testdata/bench/make.py with scikit-learn %s, numpy %s, python %s (Debian bookworm)\n"
                % (sklearn.__version__, np.__version__, platform.python_version()))
        w = csv.writer(f, lineterminator="\n")
        w.writerow(cols)
        for name, Xa, Xb, text, ya, yb in jobs:
            e = baselines(Xa, Xb, text, ya, yb)
            row = [name, len(ya), len(yb), len(set(ya) | set(yb))] + ["%.6f" % e[c] for c in cols[4:]]
            w.writerow(row)
            print("%-15s %7d %7d %7d %11s %11s %8s" % tuple(row), flush=True)
    os.replace(path + ".tmp", path)


if __name__ == "__main__":
    main()
