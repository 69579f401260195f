#!/usr/bin/python3
"""Reference principal components for package factor's tests.

Run with Debian's /usr/bin/python3 (numpy 1.24.2):
    /usr/bin/python3 make_svd_fixture.py
Writes svd_tall.json (T=60 > N=40) and svd_wide.json (T=30 < N=70).

The returns are simulated (an invented 3-factor market plus noise, seeded), so
only the reference computations matter: numpy.linalg.svd of the column-centered
data, and the number-of-factors statistics computed here straight from the
papers' formulas on numpy's singular values:
  Bai & Ng (2002), Econometrica 70(1), eq. (9): IC_p1, IC_p2 with
      V(k) = sum_{j>k} s_j^2 / (N T);
  Ahn & Horenstein (2013), Econometrica 81(3): ER(k) = mu_k / mu_{k+1},
      GR(k) = ln(1 + mu_k / W_k) / ln(1 + mu_{k+1} / W_{k+1}), W_k = sum_{j>k} mu_j,
      mock mu_0 = sum_j mu_j / ln(min(N, T)).
"""
import json
import math
import numpy as np

K = 3
KMAX = 8


def case(name, t, n, seed):
    rng = np.random.default_rng(seed)
    f = rng.standard_normal((t, K)) * np.array([0.02, 0.012, 0.008])
    b = rng.standard_normal((n, K)) + np.array([1.0, 0.0, 0.0])
    e = rng.standard_normal((t, n)) * rng.uniform(0.005, 0.015, n)
    x = f @ b.T + e
    xc = x - x.mean(axis=0)
    u, s, vt = np.linalg.svd(xc, full_matrices=False)
    lam = s**2 / t  # eigenvalues of X'X/T
    total = lam.sum()
    m = min(n, t)
    icp1, icp2, er, gr = [], [], [], []
    pen = (n + t) / (n * t)
    for k in range(KMAX + 1):
        v = (total - lam[:k].sum()) / n
        icp1.append(math.log(v) + k * pen * math.log(n * t / (n + t)))
        icp2.append(math.log(v) + k * pen * math.log(min(n, t)))
    mu = np.concatenate([[total / math.log(m)], lam])
    w = np.array([total - lam[:k].sum() for k in range(len(lam) + 1)])
    for k in range(KMAX + 1):
        er.append(mu[k] / mu[k + 1])
        gr.append(math.log1p(mu[k] / w[k]) / math.log1p(mu[k + 1] / w[k + 1]))
    out = {
        "source": "numpy %s numpy.linalg.svd(x - x.mean(axis=0), full_matrices=False); "
                  "criteria from the paper formulas in make_svd_fixture.py" % np.__version__,
        "T": t, "N": n, "K": K, "kmax": KMAX,
        "x": x.tolist(),
        "singular_values": s.tolist(),
        "vt": vt[:K].tolist(),
        "icp1": icp1, "icp2": icp2, "er": er, "gr": gr,
    }
    with open(name, "w") as fh:
        json.dump(out, fh)


case("svd_tall.json", 60, 40, 11)
case("svd_wide.json", 30, 70, 12)
