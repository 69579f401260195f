#!/usr/bin/python3
"""Reference values for package te, computed with numpy.

Run with Debian's /usr/bin/python3 (numpy 1.24.2): writes fixture.json beside
this script. Data are simulated (seeded); every expected value is a direct
numpy evaluation of the formula named next to it, independent of the Go code.

  dense  : 50 assets, Σ = np.cov(R, rowvar=False) of simulated returns R (120×50)
  factor : 50 assets, 4 factors, Σ = B @ F @ B.T + np.diag(d)
  expost : 60 simulated active returns
"""
import json
import numpy as np

rng = np.random.default_rng(20261201)
N, T, K = 50, 120, 4


def weights(held):
    w = np.zeros(N)
    idx = rng.choice(N, size=held, replace=False)
    w[idx] = rng.uniform(0.2, 1.0, size=held)
    return w / w.sum()


def case(S, p, b):
    a = p - b
    Sa = S @ a                              # numpy 1.24: S @ a
    te = float(np.sqrt(a @ Sa))             # TE = sqrt(a' S a)
    sd = np.sqrt(np.diag(S))
    return {
        "te": te,
        "marginal": (Sa / te).tolist(),     # (S a)_i / TE
        "contribution": (a * Sa / te).tolist(),  # a_i (S a)_i / TE
        "portfolio_risk": float(np.sqrt(p @ S @ p)),
        "benchmark_risk": float(np.sqrt(b @ S @ b)),
        "beta": float((p @ S @ b) / (b @ S @ b)),
        "correlation": (Sa / (sd * te)).tolist(),  # corr(r_i, active)
        "hedge": (-Sa / np.diag(S)).tolist(),      # argmin_t TE(a + t e_i)
        "hedged_te": np.sqrt(te**2 - Sa**2 / np.diag(S)).tolist(),
    }


# Dense case: sample covariance of simulated returns with a market component.
mkt = rng.standard_normal((T, 1)) * 0.01
R = mkt @ rng.uniform(0.5, 1.5, (1, N)) + rng.standard_normal((T, N)) * 0.015
S = np.cov(R, rowvar=False)                 # divisor T-1
p, b = weights(30), weights(N)
dense = {"n": N, "cov": S.tolist(), "portfolio": p.tolist(), "benchmark": b.tolist()}
dense.update(case(S, p, b))

# Factor case.
B = rng.standard_normal((N, K)) * np.array([1.0, 0.5, 0.4, 0.3]) + np.array([1.0, 0, 0, 0])
L = rng.standard_normal((K, K)) * 0.004
F = L @ L.T + np.diag([1e-4, 4e-5, 3e-5, 2e-5])
d = rng.uniform(1e-4, 6e-4, N)
Sf = B @ F @ B.T + np.diag(d)
p, b = weights(25), weights(N)
labels = [["Alpha", "Beta", "Gamma", "Delta", "Epsilon"][i % 5] for i in range(N)]
a = p - b
x = B.T @ a
Fx = F @ x
fac = {"n": N, "k": K, "loadings": B.tolist(), "factor_cov": F.tolist(), "specific": d.tolist(),
       "portfolio": p.tolist(), "benchmark": b.tolist(), "labels": labels}
fac.update(case(Sf, p, b))
te = fac["te"]
fac["factor_variance"] = float(x @ Fx)          # x' F x
fac["specific_variance"] = float(a @ (d * a))   # a' D a
fac["factor_contribution"] = (x * Fx / te).tolist()  # x_k (F x)_k / TE
fac["asset_factor_part"] = (a * (B @ Fx) / te).tolist()
fac["asset_specific_part"] = (a * a * d / te).tolist()
groups = {}
for g in sorted(set(labels)):
    m = np.array([l == g for l in labels])
    ag = np.where(m, a, 0.0)
    groups[g] = {
        "active_weight": float(ag.sum()),
        "contribution": float(ag @ Sf @ a / te),   # a_g' S a / TE
        "volatility": float(np.sqrt(ag @ Sf @ ag)),  # sqrt(a_g' S a_g)
        "factor": float(ag @ (B @ Fx) / te),
        "specific": float(ag @ (d * a) / te),
    }
fac["groups"] = groups

# Ex-post tracking error.
r = rng.standard_normal(60) * 0.002 + 0.0001
expost = {"active": r.tolist(),
          "std_ddof1": float(np.std(r, ddof=1)),         # np.std(r, ddof=1)
          "rms": float(np.sqrt(np.mean(r ** 2))),         # np.sqrt(np.mean(r**2))
          "mean": float(np.mean(r))}

out = {"generator": "testdata/te/make_fixture.py", "numpy": np.__version__,
       "seed": 20261201, "dense": dense, "factor": fac, "expost": expost}
with open(__file__.replace("make_fixture.py", "fixture.json"), "w") as fh:
    json.dump(out, fh, indent=None)
    fh.write("\n")
