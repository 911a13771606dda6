#!/usr/bin/python3
"""Reference values for the objective package's tests.

Rerun from the repository root with Debian's python3-scipy and python3-mpmath
(Debian bookworm: scipy 1.10.1, mpmath 1.2.1):

    /usr/bin/python3 testdata/reference/gen.py

It rewrites, next to this script:

  kl_inverse.csv  q, e, upper, lower: kl^-1_up(q, e) and kl^-1_lo(q, e),
                  roots of kl(q||p) = e found by mpmath.findroot (bisection
                  bracket, 40 digits), printed to 17 significant digits.
  xi.csv          m, ln_xi: ln of Maurer's xi(m) = sum_k C(m,k) (k/m)^k
                  (1-k/m)^(m-k), summed exactly in mpmath (40 digits).
  binomial.csv    errors, n, delta, upper: the one-sided Clopper-Pearson
                  limit scipy.stats.beta.ppf(1-delta, k+1, n-k) (1 at k = n).
  hypergeom.csv   errors, n, population, delta, total_errors_upper: the
                  largest K with scipy.stats.hypergeom.cdf(k, N, K, n) >= delta.
  bounds.csv      m, delta, kl, gibbs_risk, tandem_risk, tradeoff, then each
                  PAC-Bayesian bound of FIELD-GUIDE.md written out again from
                  its formula in mpmath; lambda and mu are optimised
                  numerically (scipy.optimize.minimize_scalar), not by the
                  closed forms the Go code uses.

The Go tests read only the CSV files; CI does not need Python.
"""

import csv
import os

import mpmath
import scipy
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
mpmath.mp.dps = 40


def kl(q, p):
    q, p = mpmath.mpf(q), mpmath.mpf(p)
    a = 0 if q == 0 else q * mpmath.log(q / p)
    b = 0 if q == 1 else (1 - q) * mpmath.log((1 - q) / (1 - p))
    return a + b


def solve(q, e, lo, hi):
    """The root of kl(q||p) = e in the bracket (lo, hi), to 40 digits."""
    f = lambda p: kl(q, p) - e
    # Pull the open ends in until kl is finite there and the signs differ.
    eps = mpmath.mpf(10) ** -35
    a, b = mpmath.mpf(lo), mpmath.mpf(hi)
    if a == 0:
        a = eps
    if b == 1:
        b = 1 - eps
    fa, fb = f(a), f(b)
    if fa * fb > 0:
        # The root lies within 1e-35 of an edge.
        return a if abs(fa) < abs(fb) else b
    r = mpmath.findroot(f, (a, b), solver="anderson", verify=False,
                        tol=mpmath.mpf(10) ** -70, maxsteps=500)
    # Check the answer: it lies in the bracket, and kl moves by more than
    # the residual within 1e-20 of it (so the root is good to ~1e-20).
    assert a <= r <= b, (q, e, r)
    step = mpmath.mpf(10) ** -20
    assert abs(f(r)) < abs(f(min(r + step, b)) - f(max(r - step, a))), (q, e, r)
    return r


def kl_inverses(path):
    qs = ["0", "1e-9", "1e-6", "0.001", "0.01", "0.05", "0.1", "0.25", "0.5",
          "0.75", "0.9", "0.99", "0.999999", "1"]
    es = ["1e-10", "1e-6", "0.0001", "0.001", "0.01", "0.1", "0.5", "1", "2", "5", "20"]
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["q", "e", "upper", "lower"])
        for qs_ in qs:
            q = mpmath.mpf(qs_)
            for es_ in es:
                e = mpmath.mpf(es_)
                up = mpmath.mpf(1) if q == 1 else solve(q, e, q, 1)
                lo = mpmath.mpf(0) if q == 0 else solve(q, e, 0, q)
                w.writerow([qs_, es_, mpmath.nstr(up, 17), mpmath.nstr(lo, 17)])


def xi(path):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["m", "ln_xi"])
        for m in [1, 2, 3, 4, 5, 7, 8, 10, 15, 16, 17, 50, 100, 1000, 10000, 100000]:
            w.writerow([m, mpmath.nstr(log_xi(m), 17)])


def binomial(path):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["errors", "n", "delta", "upper"])
        for n in [1, 10, 100, 1000, 10000, 100000]:
            for k in sorted({k for k in (0, 1, 2, n // 10, n // 2, n - 1, n) if k <= n}):
                for delta in [0.05, 0.01, 0.001]:
                    up = 1.0 if k == n else stats.beta.ppf(1 - delta, k + 1, n - k)
                    w.writerow([k, n, delta, repr(float(up))])


def hypergeom_upper(k, n, population, delta):
    lo, hi = k, population - (n - k)
    while lo < hi:
        mid = lo + (hi - lo + 1) // 2
        if stats.hypergeom.cdf(k, population, mid, n) >= delta:
            lo = mid
        else:
            hi = mid - 1
    return lo


def hypergeom(path):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["errors", "n", "population", "delta", "total_errors_upper"])
        for population, n in [(20, 10), (50, 10), (1000, 200), (20000, 1000), (100000, 5000)]:
            for k in sorted({0, 1, 5, n // 10, n // 2, n}):
                for delta in [0.05, 0.01]:
                    w.writerow([k, n, population, delta, hypergeom_upper(k, n, population, delta)])


def log_xi(m):
    s = mpmath.mpf(2)  # k = 0 and k = m
    mm = mpmath.mpf(m)
    for k in range(1, m):
        x = k / mm
        s += mpmath.binomial(m, k) * x ** k * (1 - x) ** (m - k)
    return mpmath.log(s)


def inv_up(q, e):
    return mpmath.mpf(1) if q == 1 else solve(q, e, q, 1)


def inv_lo(q, e):
    return mpmath.mpf(0) if q == 0 else solve(q, e, 0, q)


def bounds(path):
    cases = [
        # m, delta, KL, r, t, C
        (5000, "0.05", "3.2", "0.12", "0.05", "2"),
        (1000, "0.01", "0.5", "0.3", "0.15", "1"),
        (200, "0.1", "10", "0.05", "0.01", "5"),
        (20000, "0.05", "50", "0.4", "0.3", "0.5"),
        (50, "0.05", "0", "0", "0", "3"),
    ]
    cols = ["m", "delta", "kl", "gibbs_risk", "tandem_risk", "tradeoff",
            "kl_bound", "pinsker", "catoni", "lambda", "first_order", "tandem",
            "c_bound", "chebyshev_cantelli"]
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(cols)
        for m, delta, kl_, r, t, c in cases:
            d, KL, r, t, c = (mpmath.mpf(x) for x in (delta, kl_, r, t, c))
            lx = log_xi(m)
            # Seeger/Maurer kl bound and the first-order vote bound.
            klb = inv_up(r, (KL + lx - mpmath.log(d)) / m)
            # McAllester's Pinsker form.
            pin = r + mpmath.sqrt((KL + mpmath.log(2 * mpmath.sqrt(m) / d)) / (2 * m))
            # Catoni's linear trade-off at C.
            cat = (1 - mpmath.exp(-(c * r + (KL - mpmath.log(d)) / m))) / (1 - mpmath.exp(-c))
            # Thiemann et al.'s lambda form, minimised over lambda in (0, 2).
            B = float((KL + mpmath.log(2 * mpmath.sqrt(m) / d)) / m)
            rf = float(r)
            lam = optimize.minimize_scalar(lambda l: rf / (1 - l / 2) + B / (l * (1 - l / 2)),
                                           bounds=(1e-9, 2 - 1e-9), method="bounded",
                                           options={"xatol": 1e-12}).fun
            # Tandem: KL doubled.
            tan = 4 * inv_up(t, (2 * KL + lx - mpmath.log(d)) / m)
            # Certified C-bound: delta/2 for R upper and D lower.
            e1 = (KL + lx - mpmath.log(d / 2)) / m
            e2 = (2 * KL + lx - mpmath.log(d / 2)) / m
            r_up, d_lo = inv_up(r, e1), inv_lo(2 * (r - t), e2)
            cb = 1 - (1 - 2 * r_up) ** 2 / (1 - 2 * d_lo) if r_up < 0.5 else mpmath.nan
            # Chebyshev-Cantelli with R lower and T upper, mu in [0, 1/2).
            r_lo, t_up = float(inv_lo(r, e1)), float(inv_up(t, e2))
            cc_f = lambda mu: (t_up - 2 * mu * r_lo + mu * mu) / (0.5 - mu) ** 2
            res = optimize.minimize_scalar(cc_f, bounds=(0, 0.5 - 1e-9), method="bounded",
                                           options={"xatol": 1e-12})
            cc = min(res.fun, cc_f(0.0))
            vals = [klb, pin, cat, lam, 2 * klb, tan, cb, cc]
            w.writerow([m, delta, kl_, str(r), str(t), str(c)] +
                       [mpmath.nstr(mpmath.mpf(v), 17) for v in vals])


if __name__ == "__main__":
    print("scipy", scipy.__version__, "mpmath", mpmath.__version__)
    kl_inverses(os.path.join(HERE, "kl_inverse.csv"))
    binomial(os.path.join(HERE, "binomial.csv"))
    hypergeom(os.path.join(HERE, "hypergeom.csv"))
    bounds(os.path.join(HERE, "bounds.csv"))
    xi(os.path.join(HERE, "xi.csv"))
