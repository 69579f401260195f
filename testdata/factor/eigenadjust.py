"""Plain numpy transcription of the eigen-adjustment of Menchero, Wang & Orr (2011),
"Eigen-adjusted covariance matrices" (steps as recalled in /work/shared/REFERENCES.md,
"Correcting the risk of optimized portfolios"), for factor/eigenadjust_test.go.

For F0 = U0 D0 U0' estimated from T dates by the exponentially weighted estimator
(zero mean, separate volatility and correlation half-lives, weights 0.5^((T-1-t)/h)
normalised to sum 1, divisor sum of weights):

  for m = 1..M: R_m = Z_m D0^(1/2) U0'  (T x K, Z_m standard normal)
                F_m = ewma(R_m) = U_m D_m U_m'
                ratio_m(k) = u_mk' F0 u_mk / D_m(k)    (eigenvalues in descending order)
  v(k) = sqrt(mean_m ratio_m(k)),  gamma(k) = a (v(k) - 1) + 1,
  F~ = U0 diag(gamma^2 D0) U0'.

Writes eigenadjust.json: the inputs, v(k) with its Monte Carlo standard error
(delta method), one simulated R with its estimate and ratios (the deterministic
step), and gamma and F~ for a = 1.4 from this script's v.

Run: /usr/bin/python3 testdata/factor/eigenadjust.py   (numpy 1.24.2)
"""
import json
import os

import numpy as np


def weights(t, half_life):
    lam = 0.5 ** (1.0 / half_life)
    w = lam ** np.arange(t - 1, -1, -1, dtype=float)
    return w / w.sum()


def ewma(r, vol_hl, corr_hl):
    t = r.shape[0]
    wv, wc = weights(t, vol_hl), weights(t, corr_hl)
    var = wv @ (r * r)
    m = (r * wc[:, None]).T @ r
    d = np.sqrt(np.diag(m))
    c = m / np.outer(d, d)
    sd = np.sqrt(var)
    return c * np.outer(sd, sd)


def eig_desc(f):
    vals, vecs = np.linalg.eigh(f)
    return vals[::-1], vecs[:, ::-1]


def ratios(f0, fm):
    dm, um = eig_desc(fm)
    return np.einsum("ik,ij,jk->k", um, f0, um) / dm


def main():
    k, t, vol_hl, corr_hl, sims, scale = 6, 252, 63.0, 126.0, 4000, 1.4
    # A fixed factor covariance: volatilities 1.5 % down to 0.3 % a day, a
    # correlation from a fixed lower-triangular matrix.
    vol = np.array([0.015, 0.010, 0.008, 0.006, 0.004, 0.003])
    g = np.eye(k) + 0.3 * np.tril(np.ones((k, k)), -1)
    c = g @ g.T
    c = c / np.sqrt(np.outer(np.diag(c), np.diag(c)))
    f0 = c * np.outer(vol, vol)
    d0, u0 = eig_desc(f0)
    rng = np.random.default_rng(20110901)
    acc = np.zeros((sims, k))
    first = None
    for m in range(sims):
        z = rng.standard_normal((t, k)) * np.sqrt(d0)
        r = z @ u0.T
        fm = ewma(r, vol_hl, corr_hl)
        acc[m] = ratios(f0, fm)
        if m == 0:
            first = (r, fm, acc[m].copy())
    mean = acc.mean(axis=0)
    v = np.sqrt(mean)
    se = acc.std(axis=0, ddof=1) / np.sqrt(sims) / (2 * v)
    gamma = scale * (v - 1) + 1
    adjusted = u0 @ np.diag(gamma ** 2 * d0) @ u0.T
    out = {
        "source": "testdata/factor/eigenadjust.py, numpy " + np.__version__,
        "k": k, "dates": t, "vol_half_life": vol_hl, "corr_half_life": corr_hl,
        "sims": sims, "scale": scale,
        "f0": f0.ravel().tolist(),
        "eigenvalues": d0.tolist(),
        "bias": v.tolist(), "bias_se": se.tolist(),
        "gamma": gamma.tolist(), "adjusted": adjusted.ravel().tolist(),
        "sim_returns": first[0].ravel().tolist(),
        "sim_estimate": first[1].ravel().tolist(),
        "sim_ratios": first[2].tolist(),
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "eigenadjust.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
