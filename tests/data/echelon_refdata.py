"""Reference figures for tests/echelon_refdata.rs (wearout).

Run with scipy 1.17.1 / numpy 2.4.6:  python echelon_refdata.py
Each block prints Rust-ready numbers. The methods here are independent of
the Rust code: scipy's distribution functions, scipy.linalg.expm, and exact
rational arithmetic from Python's fractions module.
"""
from fractions import Fraction
import numpy as np
import scipy
from scipy import stats, linalg

print("# scipy", scipy.__version__, "numpy", np.__version__)

# 1. Negative binomial backorders: EBO(s) = sum_{k>=s} P(X > k), with
#    scipy.stats.nbinom(r, p).sf, r = m^2/(v-m), p = m/v.
print("## nbinom")
for m, v in [(0.4, 0.9), (3.0, 4.5), (3.0, 30.0), (12.5, 20.0)]:
    r, p = m * m / (v - m), m / v
    d = stats.nbinom(r, p)
    ebo, fill, nob = [], [], []
    for s in range(0, 13):
        k = np.arange(s, 20000)
        ebo.append(float(np.sum(d.sf(k)[::-1])))
        fill.append(0.0 if s == 0 else float(d.cdf(s - 1)))
        nob.append(float(d.cdf(s)))
    print(f"({m!r}, {v!r}, {ebo!r}, {fill!r}, {nob!r}),")

# 2. Graves' exact site pipeline: Poisson(lambda_j T_j) + binomial thinning
#    of B0 = (X0 - S0)+, X0 ~ Poisson(Lambda T0); scipy.stats poisson/binom,
#    numpy convolution. Site EBO for S_j = 0..4.
print("## exact two-echelon")
cases = {
    "metric_example": ([0.02, 0.03], [5.0, 5.0], 30.0, range(0, 4)),
    "motors": ([20 / 17725.0, 12 / 17725.0], [24.0, 48.0], 400.0, range(0, 4)),
    "busy": ([0.05, 0.01], [24.0, 36.0], 96.0, [0, 2, 4, 6, 8]),
}
for name, (lam, T, T0, s0s) in cases.items():
    L = sum(lam)
    X0 = stats.poisson(L * T0)
    for s0 in s0s:
        bmax = 200
        b = np.arange(0, bmax + 1)
        pb = X0.pmf(s0 + b)
        pb[0] = X0.cdf(s0)
        for j in range(2):
            f = lam[j] / L
            pz = np.zeros(bmax + 1)
            for bb in range(bmax + 1):
                pz[: bb + 1] += pb[bb] * stats.binom(bb, f).pmf(np.arange(bb + 1))
            py = stats.poisson(lam[j] * T[j]).pmf(np.arange(0, 200))
            pk = np.convolve(py, pz)
            k = np.arange(len(pk))
            ebo = [float(np.sum(np.maximum(k - s, 0) * pk)) for s in range(0, 5)]
            print(f'("{name}", {s0}, {j}, {ebo!r}),')

# 3. Erlang C and M/M/c, exact rationals (Gross & Harris's formulas):
#    p0^-1 = sum_{n<c} a^n/n! + a^c/(c! (1 - rho)); C = a^c/(c!(1-rho)) p0;
#    Lq = C rho/(1 - rho); L = Lq + a.
print("## mmc")
from math import factorial
for lam, mu, c in [(Fraction(7, 2), Fraction(1), 5), (Fraction(9), Fraction(1), 10),
                   (Fraction(1, 50), Fraction(1, 400), 9), (Fraction(3, 400), Fraction(1, 120), 1)]:
    a = lam / mu
    rho = a / c
    top = a ** c / (factorial(c) * (1 - rho))
    p0 = 1 / (sum(a ** n / factorial(n) for n in range(c)) + top)
    C = top * p0
    Lq = C * rho / (1 - rho)
    L = Lq + a
    print(f"({float(lam)!r}, {float(mu)!r}, {c}, {float(C)!r}, {float(Lq)!r}, {float(L)!r}),")

# 4. Machine repair with spares: transient from state 0 by scipy.linalg.expm,
#    time-average by Van Loan's block exponential:
#    expm([[Q, I], [0, 0]] H) has int_0^H e^{Qs} ds as its top-right block.
print("## machine repair")
def gen(N, S, c, lam, mu):
    m = N + S + 1
    Q = np.zeros((m, m))
    for n in range(m):
        up = lam * min(N, N + S - n) if n + 1 < m else 0.0
        dn = mu * min(n, c)
        if n + 1 < m:
            Q[n, n + 1] = up
        if n > 0:
            Q[n, n - 1] = dn
        Q[n, n] = -(up + dn)
    return Q
for (N, S, c, lam, mu, ts, H) in [(3, 1, 1, 0.1, 0.5, [1.0, 5.0, 20.0], 20.0),
                                  (10, 2, 2, 0.02, 0.1, [10.0, 50.0], 200.0)]:
    Q = gen(N, S, c, lam, mu)
    m = Q.shape[0]
    for t in ts:
        p = linalg.expm(Q * t)[0]
        print(f"transient N={N} S={S} c={c} t={t}: {p.tolist()!r}")
    B = np.zeros((2 * m, 2 * m))
    B[:m, :m] = Q
    B[:m, m:] = np.eye(m)
    E = linalg.expm(B * H)
    avg = E[:m, m:][0] / H
    up = np.array([min(N, N + S - n) for n in range(m)])
    ready = [float(avg[up >= k].sum()) for k in range(0, N + 1)]
    availability = float((avg * up).sum() / N)
    print(f"time-average N={N} S={S} c={c} H={H}: {avg.tolist()!r}")
    print(f"  readiness k=0..N {ready!r}")
    print(f"  availability {availability!r}")
    # stationary by solving pi Q = 0, sum pi = 1 (least squares on the
    # stacked system)
    A = np.vstack([Q.T, np.ones(m)])
    rhs = np.zeros(m + 1); rhs[-1] = 1
    pi = linalg.lstsq(A, rhs)[0]
    print(f"  stationary {pi.tolist()!r}")
