#!/usr/bin/python3
"""Reference values for the PSD repair of package ewma (ewma/psd_test.go).

Run with Debian's interpreter: /usr/bin/python3 make_repair.py > repair.json
Library: numpy 1.24.2 (Debian bookworm), numpy.linalg.eigh.
The data are simulated here (seeded), not market data: T = 24 dates of
N = 96 one-factor returns, the first 8 columns with a gap (a late listing
or a halt), so the pairwise matrices have N > T and negative eigenvalues.

The repair (Higham 1988, eigenvalue clipping, then the diagonal restored):
  S = V diag(l) V^T (numpy.linalg.eigh), tol = N * 2^-52 * max|l|,
  B = V diag(max(l, 0)) V^T, R = D^1/2 B D^1/2 with D = diag(S) / diag(B);
  min_eigenvalue = l[0], clipped = #{l < -tol}.
"""
import json

import numpy as np

rng = np.random.default_rng(20261202)
T, N, G = 24, 96, 8
beta = 0.5 + rng.random(N)
f = 0.01 * rng.standard_normal(T)
x = np.outer(f, beta) + 0.02 * rng.standard_normal((T, N))
for j in range(G):
    if j % 2 == 0:
        x[: 1 + j, j] = np.nan  # late listing
    else:
        s = 3 * j
        x[s : s + 1 + j % 5, j] = np.nan  # halt
m = ~np.isnan(x)
z = np.where(m, x, 0.0)
mm = m.astype(float)

# Pairwise zero-mean covariance with equal weights: ewma.Covariance(x, nil, nil).
cnt = mm.T @ mm
cov = (z.T @ z) / cnt
# Pairwise correlation, each variance over the dates the pair shares:
# ewma.Correlation(x, nil, nil), pandas' convention.
q = (z * z).T @ mm  # q[i, j] = sum over dates with both of x_i^2
vi = q / cnt
corr = cov / np.sqrt(vi * vi.T)
np.fill_diagonal(corr, 1.0)


def repair(s):
    n = s.shape[0]
    l, v = np.linalg.eigh(s)
    tol = n * 2.0**-52 * max(abs(l[0]), abs(l[-1]))
    b = (v * np.maximum(l, 0)) @ v.T
    d = np.sqrt(np.diag(s) / np.diag(b))
    r = b * np.outer(d, d)
    return {
        "repaired": r.tolist(),
        "min_eigenvalue": float(l[0]),
        "clipped": int(np.sum(l < -tol)),
    }


out = {
    "numpy": np.__version__,
    "x": [[None if np.isnan(v) else float(v) for v in row] for row in x],
    "covariance": repair(cov),
    "correlation": repair(corr),
}
print(json.dumps(out))
