#!/usr/bin/python3
"""Reference values for shrink.ConstantCorrelation and shrink.SingleIndex.

numpy 1.24.2 (Debian python3-numpy). Run:
/usr/bin/python3 target_numpy.py > target_numpy.json

A vectorised transcription of the papers' estimators, written for this
project (no library ships them): divisor T on centred data.
  constant correlation: Ledoit & Wolf (2004), "Honey, I shrunk the sample
    covariance matrix", J. Portfolio Management 30(4), appendix A-B;
  single index: Ledoit & Wolf (2003), J. Empirical Finance 10(5), appendix B,
    with the market the equally weighted average of the returns.
The Go test also has a loop-by-loop reference; this script is a second,
matrix-product route to the same formulas.
"""
import json

import numpy as np

rng = np.random.default_rng(314159)


def returns(t, n):
    # Three factors with betas of both signs, so that correlations differ.
    f = rng.standard_normal((t, 3))
    b = rng.standard_normal((3, n)) * np.array([[1.0], [0.7], [0.5]]) + np.array([[0.8], [0], [0]])
    return 0.01 * (f @ b + rng.standard_normal((t, n)) * (0.5 + rng.random((1, n))))


def const_corr(x):
    t, n = x.shape
    y = x - x.mean(0)
    s = y.T @ y / t
    sd = np.sqrt(np.diag(s))
    r = s / np.outer(sd, sd)
    rbar = (r.sum() - n) / (n * (n - 1))
    f = rbar * np.outer(sd, sd)
    np.fill_diagonal(f, np.diag(s))
    y2 = y ** 2
    pi_mat = y2.T @ y2 / t - s ** 2
    pi = pi_mat.sum()
    theta = (y ** 3).T @ y / t - np.diag(s)[:, None] * s  # theta[i, j] = theta_ii,ij
    off = ~np.eye(n, dtype=bool)
    terms = np.outer(1 / sd, sd) * theta + np.outer(sd, 1 / sd) * theta.T
    rho = np.trace(pi_mat) + rbar / 2 * terms[off].sum()
    gamma = ((f - s) ** 2).sum()
    d = 0.0 if gamma == 0 else max(0.0, min(1.0, (pi - rho) / gamma / t))
    return d * f + (1 - d) * s, d, pi, rho, gamma


def single_index(x):
    t, n = x.shape
    y = x - x.mean(0)
    m = y.mean(1)
    s = y.T @ y / t
    c = y.T @ m / t
    sm = m @ m / t
    f = np.outer(c, c) / sm
    np.fill_diagonal(f, np.diag(s))
    y2 = y ** 2
    pi_mat = y2.T @ y2 / t - s ** 2
    pi = pi_mat.sum()
    # rho_ij = (1/T) sum_t r_ijt, r_ijt = (c_j sm y_i + c_i sm y_j - c_i c_j m) m y_i y_j / sm^2 - f_ij s_ij
    yy = np.einsum('ti,tj->tij', y, y)
    rterm = (np.einsum('j,ti->tij', c, y) * sm + np.einsum('i,tj->tij', c, y) * sm
             - np.einsum('i,j,t->tij', c, c, m)) * m[:, None, None] * yy / sm ** 2
    rho_mat = rterm.mean(0) - np.outer(c, c) / sm * s
    np.fill_diagonal(rho_mat, np.diag(pi_mat))
    rho = rho_mat.sum()
    gamma = ((f - s) ** 2).sum()
    d = 0.0 if gamma == 0 else max(0.0, min(1.0, (pi - rho) / gamma / t))
    return d * f + (1 - d) * s, d, pi, rho, gamma


cases = []
for name, t, n in [("T>N", 50, 7), ("T<N", 10, 16), ("two assets", 30, 2)]:
    x = returns(t, n)
    cc = const_corr(x)
    si = single_index(x)
    cases.append({"name": name, "x": x.tolist(),
                  "cc_cov": cc[0].tolist(), "cc_shrinkage": cc[1], "cc_pi": cc[2], "cc_rho": cc[3], "cc_gamma": cc[4],
                  "si_cov": si[0].tolist(), "si_shrinkage": si[1], "si_pi": si[2], "si_rho": si[3], "si_gamma": si[4]})
json.dump({"source": "numpy %s; see target_numpy.py" % np.__version__, "cases": cases}, open(1, "w"), indent=0)
