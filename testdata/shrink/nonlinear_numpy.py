#!/usr/bin/python3
"""Reference values for shrink.Nonlinear.

numpy 1.24.2, scikit-learn 1.2.1, mpmath 1.2.1 (Debian python3-numpy,
python3-sklearn, python3-mpmath). Run:
/usr/bin/python3 nonlinear_numpy.py > nonlinear_numpy.json

Ledoit & Wolf (2020), "Analytical nonlinear shrinkage of large-dimensional
covariance matrices", Annals of Statistics, section 4, step by step, written
for this project (no Debian library ships it): demean, n = T - 1,
S = X'X/n, eigen-decomposition by numpy.linalg.eigh on the N x N matrix,
bandwidth h = n^(-1/3), local bandwidths h*lambda_j, Epanechnikov density
and Hilbert transform, the p <= n and p > n formulas.
"""
import json

import mpmath as mp
import numpy as np
import sklearn
from sklearn.isotonic import isotonic_regression

rng = np.random.default_rng(2020)


def analytical_shrinkage(x):
    t, p = x.shape
    x = x - x.mean(0)
    n = t - 1
    s = x.T @ x / n
    lam, u = np.linalg.eigh(s)  # ascending
    lam = lam[max(0, p - n):]
    m = lam.size
    # The kernel sums are evaluated in mpmath at 40 digits: in float64 the
    # two terms of the Hilbert transform cancel for |x| >> 1 and lose up to
    # x^2 of precision when the spectrum is wide.
    mp.mp.dps = 40
    lm = [mp.mpf(float(v)) for v in lam]
    hm = mp.mpf(n) ** (mp.mpf(-1) / 3)
    s5 = mp.sqrt(5)
    ftilde, hftilde = [], []
    for li in lm:
        fs, hs = mp.mpf(0), mp.mpf(0)
        for lj in lm:
            bw = hm * lj
            xx = (li - lj) / bw
            fs += max(1 - xx ** 2 / 5, 0) / bw
            if abs(xx) == s5:
                g = (-3 / (10 * mp.pi)) * xx
            else:
                g = (-3 / (10 * mp.pi)) * xx + (3 / (4 * s5 * mp.pi)) * (1 - xx ** 2 / 5) * mp.log(abs((s5 - xx) / (s5 + xx)))
            hs += g / bw
        ftilde.append(3 / (4 * s5) * fs / m)
        hftilde.append(hs / m)
    if p <= n:
        c = mp.mpf(p) / n
        d = [li / ((mp.pi * c * li * fi) ** 2 + (1 - c - mp.pi * c * li * hi) ** 2)
             for li, fi, hi in zip(lm, ftilde, hftilde)]
        null = 0.0
    else:
        hf0 = (1 / mp.pi) * (3 / (10 * hm ** 2) + 3 / (4 * s5 * hm) * (1 - 1 / (5 * hm ** 2))
                             * mp.log((1 + s5 * hm) / (1 - s5 * hm))) * (sum(1 / v for v in lm) / m)
        null = float(1 / (mp.pi * mp.mpf(p - n) / n * hf0))
        d = [li / (mp.pi ** 2 * li ** 2 * (fi ** 2 + hi ** 2)) for li, fi, hi in zip(lm, ftilde, hftilde)]
    d = np.array([float(v) for v in d])
    dall = d if p <= n else np.concatenate([np.full(p - n, null), d])
    sigma = u @ np.diag(dall) @ u.T
    # The project's monotone step (not in the paper): isotonic regression of
    # the shrunk values in the order of the sample eigenvalues, the null
    # value first with weight p - n, by scikit-learn's isotonic_regression.
    if p > n:
        iso = isotonic_regression(np.concatenate([[null], d]), sample_weight=np.concatenate([[p - n], np.ones(m)]))
        dall_iso = np.concatenate([np.full(p - n, iso[0]), iso[1:]])
    else:
        dall_iso = isotonic_regression(d)
    sigma_iso = u @ np.diag(dall_iso) @ u.T
    return sigma, lam, d, null, sigma_iso


def returns(t, n):
    f = rng.standard_normal((t, 2))
    b = rng.standard_normal((2, n)) + np.array([[1.0], [0]])
    return 0.01 * (f @ b + rng.standard_normal((t, n)) * (0.5 + rng.random((1, n))))


cases = []
for name, t, p in [("p<n", 60, 12), ("p>n", 20, 30), ("p=n", 21, 20), ("one asset", 25, 1)]:
    x = returns(t, p)
    sigma, lam, d, null, sigma_iso = analytical_shrinkage(x)
    cases.append({"name": name, "x": x.tolist(), "sigma": sigma.tolist(), "sample": lam.tolist(),
                  "shrunk": d.tolist(), "null": null, "sigma_monotone": sigma_iso.tolist()})
json.dump({"source": "numpy %s, scikit-learn %s, mpmath %s; see nonlinear_numpy.py" % (np.__version__, sklearn.__version__, mp.__version__), "cases": cases}, open(1, "w"), indent=0)
