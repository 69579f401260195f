#!/usr/bin/python3
"""Reference values for shrink.LedoitWolf and shrink.OAS.

Library versions: scikit-learn 1.2.1, numpy 1.24.2 (Debian python3-sklearn,
python3-numpy). Run: /usr/bin/python3 linear_sklearn.py > linear_sklearn.json

Calls: sklearn.covariance.LedoitWolf(assume_centered=False).fit(x)
(covariance_, shrinkage_), sklearn.covariance.ledoit_wolf(x, block_size=b)
for small blocks, and sklearn.covariance.OAS().fit(x) (covariance_,
shrinkage_). Inputs are seeded random returns with a common factor so that
the intensities are neither 0 nor 1.
"""
import json

import numpy as np
import sklearn
from sklearn.covariance import OAS, LedoitWolf, ledoit_wolf

rng = np.random.default_rng(20240611)


def returns(t, n, scale=0.01):
    f = rng.standard_normal((t, 1))
    b = 0.5 + rng.random((1, n))
    x = scale * (f @ b + rng.standard_normal((t, n)) * (0.5 + rng.random((1, n))))
    return x + 0.001 * rng.standard_normal((1, n))


cases = []
for name, t, n in [("T>N", 60, 8), ("T<N", 12, 20), ("T=N", 15, 15), ("one asset", 25, 1), ("two rows", 2, 4)]:
    x = returns(t, n)
    lw = LedoitWolf(assume_centered=False).fit(x)
    oas = OAS().fit(x)
    blocked = [ledoit_wolf(x, block_size=b)[1] for b in (1, 3)]
    cases.append({
        "name": name,
        "x": x.tolist(),
        "lw_cov": lw.covariance_.tolist(),
        "lw_shrinkage": float(lw.shrinkage_),
        "lw_shrinkage_block1": float(blocked[0]),
        "lw_shrinkage_block3": float(blocked[1]),
        "oas_cov": oas.covariance_.tolist(),
        "oas_shrinkage": float(oas.shrinkage_),
    })

json.dump({"source": "scikit-learn %s, numpy %s; see linear_sklearn.py" % (sklearn.__version__, np.__version__),
           "cases": cases}, open(1, "w"), indent=0)
