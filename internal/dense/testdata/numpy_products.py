#!/usr/bin/python3
"""Writes numpy_products.json: reference values of the weighted products.

    /usr/bin/python3 internal/dense/testdata/numpy_products.py

numpy 1.24.2 (Debian python3-numpy, OpenBLAS 0.3.21). X is 23×9 (dates ×
assets) and w has 23 weights, both from closed formulas (no random
generator), and the file holds them with
    xtwx = (X * w[:, None]).T @ X                       # Σ_t w_t x_t x_tᵀ
    gram = np.sqrt(w)[:, None] * (X @ X.T) * np.sqrt(w)[None, :]
    xty  = X.T @ Y  (Y = first 4 columns of X squared)
    xz   = X @ Z    (Z = X[:9, :5], 9×5)
    sub  = C - X @ Z  (C = X[:, :5] + 1)
"""
import json

import numpy as np

t, n = 23, 9
i = np.arange(t)[:, None]
j = np.arange(n)[None, :]
X = np.sin(0.7 * i + 1.3 * j + 0.1 * i * j) * 0.02 + 0.001 * j
w = 0.97 ** np.arange(t)[::-1]
Y = X[:, :4] ** 2
Z = X[:9, :5]
C = X[:, :5] + 1
out = {
    "source": f"numpy {np.__version__}: (X * w[:, None]).T @ X, "
              "np.sqrt(w)[:, None] * (X @ X.T) * np.sqrt(w)[None, :], X.T @ Y, "
              "X @ Z, C - X @ Z",
    "x": X.tolist(),
    "w": w.tolist(),
    "y": Y.tolist(),
    "xtwx": ((X * w[:, None]).T @ X).tolist(),
    "gram": (np.sqrt(w)[:, None] * (X @ X.T) * np.sqrt(w)[None, :]).tolist(),
    "xty": (X.T @ Y).tolist(),
    "z": Z.tolist(),
    "c": C.tolist(),
    "xz": (X @ Z).tolist(),
    "sub": (C - X @ Z).tolist(),
}
with open(__file__.replace(".py", ".json"), "w") as f:
    json.dump(out, f, indent=1)
