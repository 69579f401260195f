#!/usr/bin/python3
"""Reference for factor's volatility-weighted factor space (Adjustments.Weighted).

Run with Debian's /usr/bin/python3 (numpy 1.24.2):
    /usr/bin/python3 weighted.py
Writes weighted.json.

A plain transcription of the steps in factor/weighted.go, after Connor &
Korajczyk (1988), "Risk and return in an equilibrium APT: application of a
new test methodology", J. Financial Economics 21(2):255-289 (principal
components of returns rescaled by residual volatility), on an invented
3-factor market with specific volatilities spread over 0.3 %-6 %:
  z = x - column means; U S V' = numpy.linalg.svd(z) truncated to K;
  each pass: e = z - U S V'; sigma_j = sqrt(mean_t e_tj^2), floored at 1 % of
  the median; Z~ = z / sigma; V~ = the leading K right singular vectors of Z~
  (numpy.linalg.svd); B = QR(diag(sigma) V~); R = z B;
  R'R = W S^2 W' (numpy.linalg.eigh, descending); U = R W / S, V = B W.
The fixture holds the data, the projector V V' onto the final factor space
(sign- and rotation-free) and the final singular values S.
"""
import json
import numpy as np

T, N, K, PASSES = 80, 30, 3, 2

rng = np.random.default_rng(11)
f = rng.standard_normal((T, K)) * np.array([0.02, 0.01, 0.006])
b = rng.standard_normal((N, K)) + np.array([1.0, 0.0, 0.0])
spec = np.exp(rng.uniform(np.log(0.003), np.log(0.06), N))
x = f @ b.T + rng.standard_normal((T, N)) * spec

z = x - x.mean(axis=0)
u, s, vt = np.linalg.svd(z, full_matrices=False)
u, s, v = u[:, :K], s[:K], vt[:K].T
for _ in range(PASSES):
    e = z - (u * s) @ v.T
    sigma = np.sqrt((e ** 2).mean(axis=0))
    sigma = np.maximum(sigma, 0.01 * np.median(sigma))
    _, _, vwt = np.linalg.svd(z / sigma, full_matrices=False)
    bb, _ = np.linalg.qr(sigma[:, None] * vwt[:K].T)
    r = z @ bb
    vals, w = np.linalg.eigh(r.T @ r)
    vals, w = vals[::-1], w[:, ::-1]
    s = np.sqrt(vals)
    u, v = (r @ w) / s, bb @ w

json.dump({
    "source": "testdata/factor/weighted.py, numpy " + np.__version__,
    "k": K, "passes": PASSES,
    "x": x.tolist(),
    "projector": (v @ v.T).tolist(),
    "singular_values": s.tolist(),
}, open("weighted.json", "w"), indent=1)
