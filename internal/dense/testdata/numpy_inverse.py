#!/usr/bin/python3
"""Writes numpy_inverse.json: the reference inverse for Cholesky.InverseTo.

    /usr/bin/python3 internal/dense/testdata/numpy_inverse.py

numpy 1.24.2 (Debian python3-numpy, OpenBLAS 0.3.21). It reads the 100×100
positive definite matrix A of numpy_cholesky.json (see numpy_cholesky.py)
and writes
    inv = np.linalg.inv(A)
"""
import json
import os

import numpy as np

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "numpy_cholesky.json")) as f:
    A = np.array(json.load(f)["a"])
out = {
    "source": f"numpy {np.__version__}: np.linalg.inv(A), A from numpy_cholesky.json",
    "inv": np.linalg.inv(A).tolist(),
}
with open(os.path.join(here, "numpy_inverse.json"), "w") as f:
    json.dump(out, f)
