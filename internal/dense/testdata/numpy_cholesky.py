#!/usr/bin/python3
"""Writes numpy_cholesky.json: reference values for the Cholesky factorization.

    /usr/bin/python3 internal/dense/testdata/numpy_cholesky.py

numpy 1.24.2 (Debian python3-numpy, OpenBLAS 0.3.21). A is 100×100, made
positive definite from closed formulas (no random generator): A = GᵀG/T + D
with G a 130×100 matrix of sines, so that the test reads A from the file and
every expected value comes from numpy:
    L      = np.linalg.cholesky(A)             # A = L Lᵀ, so U = Lᵀ
    logdet = np.linalg.slogdet(A)[1]           # sign +1
    x      = np.linalg.solve(A, b)             # one right-hand side
    X      = np.linalg.solve(A, B)             # B is 100×3
and two matrices that are not positive definite, for which
np.linalg.cholesky raises LinAlgError: an indefinite one (A with its last
diagonal element replaced by −1) and a positive semidefinite one of rank 40
(HᵀH with H 40×100), where rounding decides the sign of the last pivots.
"""
import json

import numpy as np

t, n = 130, 100
i = np.arange(t)[:, None]
j = np.arange(n)[None, :]
G = np.sin(0.37 * i + 1.1 * j + 0.013 * i * j) + 0.2 * np.cos(0.05 * j)
A = G.T @ G / t + np.diag(0.05 + 0.001 * np.arange(n))
A = (A + A.T) / 2
b = np.cos(0.3 * np.arange(n))
B = np.stack([b, np.sin(0.7 * np.arange(n)), np.ones(n)], axis=1)

indef = A.copy()
indef[-1, -1] = -1.0
h = np.arange(40)[:, None]
H = np.sin(0.21 * h + 0.9 * j + 0.02 * h * j)
semi = H.T @ H


def raises(m):
    try:
        np.linalg.cholesky(m)
    except np.linalg.LinAlgError:
        return True
    return False


sign, logdet = np.linalg.slogdet(A)
assert sign == 1
out = {
    "source": f"numpy {np.__version__}: np.linalg.cholesky(A), np.linalg.slogdet(A), "
              "np.linalg.solve(A, b), np.linalg.solve(A, B); np.linalg.cholesky raises "
              "LinAlgError for Indefinite and Semidefinite",
    "a": A.tolist(),
    "l": np.linalg.cholesky(A).tolist(),
    "logdet": logdet,
    "b": b.tolist(),
    "x": np.linalg.solve(A, b).tolist(),
    "bm": B.tolist(),
    "xm": np.linalg.solve(A, B).tolist(),
    "indefinite": indef.tolist(),
    "indefinite_raises": raises(indef),
    "semidefinite": semi.tolist(),
    "semidefinite_raises": raises(semi),
}
with open(__file__.replace(".py", ".json"), "w") as f:
    json.dump(out, f)
