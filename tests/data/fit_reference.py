"""Reference figures for tests/fit_censoring.rs, computed outside the project.

Not run by the tests (a fresh clone needs no Python): the figures it prints
are copied into the test file with the library versions. To rerun:

    python3 -m venv /tmp/fitref && /tmp/fitref/bin/pip install scipy lifelines
    /tmp/fitref/bin/python tests/data/fit_reference.py

Method: each log-likelihood is written out with scipy.stats (logpdf for an
exact failure, logsf for a suspension, log(cdf(b) - cdf(a)) for a failure
found at an inspection, minus logsf(entry age) for a left-truncated part,
each times its count), maximised with scipy.optimize (Nelder-Mead, then
BFGS from its end); standard errors from the inverse of a central-difference
Hessian in the log-parameters; likelihood-ratio intervals from the profile
log-likelihood (inner maximisation by a bounded scalar search, ends by
brentq). The Weibull fits are cross-checked with lifelines' WeibullFitter
(fit_interval_censoring with weights and entry), a second implementation.
"""

import math

import numpy as np
import scipy
from scipy import optimize, stats

try:
    import lifelines
except ImportError:  # the cross-check is optional
    lifelines = None

INF = math.inf

# ---------------------------------------------------------------- data sets

# Meeker & Escobar (1998), Statistical Methods for Reliability Data, ch. 7:
# alpha-particle interarrival times (Berkson 1966), a random sample of 200,
# recorded only as counts in time bins (interval-censored), times in 1e-5 s
# units as in the book.
ALPHA = [  # (after, before, count, entry)
    (0, 100, 41, 0), (100, 300, 44, 0), (300, 500, 24, 0), (500, 700, 32, 0),
    (700, 1000, 29, 0), (1000, 2000, 21, 0), (2000, 4000, 9, 0),
]

# Invented pump-seal records (the project's own test data): exact failures,
# suspensions, failures found at inspections, failures found at the first
# inspection, with counts. An exact failure is (t, t); a suspension (t, inf).
SEALS = [
    (1520, 1520, 1, 0), (2210, 2210, 1, 0), (2950, 2950, 1, 0),
    (3400, 3400, 2, 0), (4100, 4100, 1, 0), (5230, 5230, 1, 0),
    (1800, INF, 1, 0), (2500, INF, 3, 0), (4000, INF, 5, 0), (6000, INF, 4, 0),
    (2000, 3000, 1, 0), (3000, 4000, 2, 0), (4000, 5000, 1, 0),
    (0, 2000, 1, 0), (0, 1000, 1, 0),
]

# The same seals with entry ages on some rows (parts already in service when
# the records began): intervals and truncation together.
SEALS_ENTRY = [
    (1520, 1520, 1, 0), (2210, 2210, 1, 1000), (2950, 2950, 1, 0),
    (3400, 3400, 2, 0), (4100, 4100, 1, 2500), (5230, 5230, 1, 0),
    (1800, INF, 1, 0), (2500, INF, 3, 1500), (4000, INF, 5, 0), (6000, INF, 4, 3000),
    (2000, 3000, 1, 1000), (3000, 4000, 2, 0), (4000, 5000, 1, 3500),
    (0, 2000, 1, 0), (0, 1000, 1, 0),
]

# Invented gearbox-bearing records: parts already in service when record
# keeping began carry their age then (entry age); exact failures and
# suspensions only.
GEARS = [  # (life, failed, entry)
    (2300, 1, 0), (4100, 1, 2000), (5200, 1, 3000), (6100, 1, 0), (3900, 1, 3500),
    (7400, 1, 5000), (2900, 1, 0), (8100, 1, 6000), (4700, 1, 0),
    (5000, 0, 0), (6500, 0, 4000), (9000, 0, 7000), (7000, 0, 0), (3000, 0, 0),
    (8000, 0, 6500), (4500, 0, 2500),
]


def gears_rows(with_entry):
    rows = []
    for t, failed, e in GEARS:
        e = e if with_entry else 0
        rows.append((t, t, 1, e) if failed else (t, INF, 1, e))
    return rows


# Nelson's generator fans (tests/data/generator_fans.csv): 12 failures, 58
# suspensions, hours.
FAN_FAIL = [450, 1150, 1150, 1600, 2070, 2070, 2080, 3100, 3450, 4600, 6100, 8750]
FAN_SUSP = [460, 1560, 1660, 1850, 1850, 1850, 1850, 1850, 2030, 2030, 2030, 2200,
            3000, 3000, 3000, 3000, 3200, 3750, 3750, 4150, 4150, 4150, 4150, 4300,
            4300, 4300, 4300, 4850, 4850, 4850, 4850, 5000, 5000, 5000, 6100, 6100,
            6100, 6300, 6450, 6450, 6700, 7450, 7800, 7800, 8100, 8100, 8200, 8500,
            8500, 8500, 8750, 8750, 9400, 9900, 10100, 10100, 10100, 11500]
assert len(FAN_FAIL) == 12 and len(FAN_SUSP) == 58
FANS = [(t, t, 1, 0) for t in FAN_FAIL] + [(t, INF, 1, 0) for t in FAN_SUSP]

# ------------------------------------------------------------ likelihoods


def family(name, p):
    """A frozen scipy distribution from unconstrained parameters."""
    if name == "weibull":
        return stats.weibull_min(math.exp(p[0]), scale=math.exp(p[1]))
    if name == "weibull3":
        return stats.weibull_min(math.exp(p[0]), loc=p[2], scale=math.exp(p[1]))
    if name == "lognormal":
        return stats.lognorm(math.exp(p[1]), scale=math.exp(p[0]))
    if name == "gamma":
        return stats.gamma(math.exp(p[0]), scale=math.exp(p[1]))
    if name == "exponential":
        return stats.expon(scale=math.exp(p[0]))
    raise ValueError(name)


def loglik(name, p, rows):
    d = family(name, p)
    ll = 0.0
    for a, b, w, e in rows:
        a = max(a, e)
        if a == b:
            v = d.logpdf(a)
        elif b == INF:
            v = d.logsf(a)
        elif a == 0:
            v = d.logcdf(b)
        else:
            diff = d.sf(a) - d.sf(b)
            v = math.log(diff) if diff > 0 else -INF
        if e > 0:
            v -= d.logsf(e)
        ll += w * v
    return ll if math.isfinite(ll) else -1e300


def fit(name, rows, start):
    f = lambda p: -loglik(name, p, rows)
    r = optimize.minimize(f, start, method="Nelder-Mead",
                          options={"xatol": 1e-12, "fatol": 1e-14, "maxiter": 200000,
                                   "maxfev": 200000})
    r2 = optimize.minimize(f, r.x, method="BFGS", options={"gtol": 1e-10})
    x = r2.x if r2.fun <= r.fun else r.x
    return x, -f(x)


def hessian(fun, x, h=1e-4):
    n = len(x)
    H = np.zeros((n, n))
    for i in range(n):
        for j in range(n):
            def at(di, dj):
                y = np.array(x, dtype=float)
                y[i] += di
                y[j] += dj
                return fun(y)
            H[i, j] = (at(h, h) - at(h, -h) - at(-h, h) + at(-h, -h)) / (4 * h * h)
    return H


def covariance(name, rows, x):
    H = hessian(lambda p: loglik(name, p, rows), x)
    return np.linalg.inv(-H)


def profile_interval(prof, x_hat, ll_max, lo, hi):
    """Where the profile falls 1.92 below the maximum, on each side."""
    drop = 0.5 * stats.chi2.ppf(0.95, 1)
    g = lambda x: prof(x) - (ll_max - drop)
    return optimize.brentq(g, lo, x_hat, xtol=1e-12), optimize.brentq(g, x_hat, hi, xtol=1e-12)


def weibull_lr(rows, x, ll_max):
    lb, le = x
    ll = lambda b, e: loglik("weibull", [b, e], rows)
    inner_e = lambda b: -optimize.minimize_scalar(
        lambda e: -ll(b, e), bounds=(le - 8, le + 8), method="bounded",
        options={"xatol": 1e-12}).fun
    inner_b = lambda f: -optimize.minimize_scalar(
        f, bounds=(lb - 4, lb + 4), method="bounded", options={"xatol": 1e-12}).fun
    out = {}
    out["shape"] = profile_interval(inner_e, lb, ll_max, lb - 2, lb + 2)
    out["scale"] = profile_interval(lambda e: inner_b(lambda b: -ll(b, e)), le, ll_max,
                                    le - 5, le + 5)
    for name, p in [("B1", 0.01), ("B10", 0.10)]:
        w = math.log(-math.log1p(-p))
        lbp = le + w / math.exp(lb)
        prof = lambda q: inner_b(lambda b: -ll(b, q - w / math.exp(b)))
        out[name] = profile_interval(prof, lbp, ll_max, lbp - 8, lbp + 4)
        out[name + " point"] = (math.exp(lbp),)
    return {k: tuple(math.exp(v) if k.endswith("point") is False else v for v in vs)
            for k, vs in out.items()}


def report(title, name, rows, start, lr=False):
    x, ll = fit(name, rows, start)
    cov = covariance(name, rows, x)
    se = np.sqrt(np.diag(cov))
    print(f"{title} {name}: params {list(map(float, x))} loglik {ll:.10f}")
    print(f"    natural: {[float(math.exp(v)) if i != 2 else float(v) for i, v in enumerate(x)]}")
    print(f"    se of the (log-)parameters: {list(map(float, se))}")
    if lr:
        for k, v in weibull_lr(rows, x, ll).items():
            print(f"    LR {k}: {v}")
    return x, ll


def lifelines_weibull(title, rows):
    if lifelines is None:
        return
    lower = np.array([float(max(a, e)) if a != b else float(a) for a, b, w, e in rows])
    upper = np.array([float(b) for a, b, w, e in rows])
    weights = np.array([float(w) for a, b, w, e in rows])
    entry = np.array([float(e) for a, b, w, e in rows])
    lower = np.where(lower == 0, 1e-300, lower)
    wf = lifelines.WeibullFitter()
    wf.fit_interval_censoring(lower, upper, weights=weights, entry=entry)
    print(f"    lifelines {lifelines.__version__} {title}: shape {wf.rho_} scale {wf.lambda_} "
          f"loglik {wf.log_likelihood_}")


def main():
    print(f"scipy {scipy.__version__}, numpy {np.__version__}")
    rows = [(a, b, w, e) for a, b, w, e in ALPHA]
    report("alpha", "exponential", rows, [math.log(500)])
    report("alpha", "weibull", rows, [0.0, math.log(500)], lr=True)
    report("alpha", "lognormal", rows, [math.log(400), 0.0])
    report("alpha", "gamma", rows, [0.0, math.log(500)])
    lifelines_weibull("alpha", rows)

    for fam, st in [("weibull", [0.5, math.log(5000)]), ("lognormal", [8.3, 0.0]),
                    ("gamma", [1.0, math.log(1500)]), ("exponential", [math.log(5000)])]:
        report("seals", fam, SEALS, st, lr=(fam == "weibull"))
    lifelines_weibull("seals", SEALS)
    report("seals_entry", "weibull", SEALS_ENTRY, [0.5, math.log(5000)], lr=True)
    report("seals_entry", "lognormal", SEALS_ENTRY, [8.3, 0.0])
    lifelines_weibull("seals_entry", SEALS_ENTRY)

    for with_entry in [False, True]:
        rows = gears_rows(with_entry)
        tag = "gears_entry" if with_entry else "gears_plain"
        for fam, st in [("weibull", [0.7, math.log(7000)]), ("lognormal", [8.6, -0.5]),
                        ("gamma", [1.5, math.log(1500)]), ("exponential", [math.log(8000)])]:
            report(tag, fam, rows, st, lr=(fam == "weibull"))
        lifelines_weibull(tag, rows)

    report("fans", "weibull", FANS, [0.0, math.log(26000)], lr=True)


if __name__ == "__main__":
    main()
