# Principal angles between loading spaces, the check of riskmodel.Compare.
# Made with /usr/bin/python3, numpy 1.24.2 and scipy 1.10.1:
#   /usr/bin/python3 testdata/compare/make_angles.py > testdata/compare/angles.json
# The call is scipy.linalg.subspace_angles(A, B), which returns the angles in
# descending order; they are written ascending, as Compare reports them.
import json

import numpy as np
import scipy
import scipy.linalg

rng = np.random.default_rng(20310502)
cases = []
a = rng.standard_normal((12, 3))
b = rng.standard_normal((12, 2))
cases.append(("random 3 and 2 factors", a, b))
r, _ = np.linalg.qr(rng.standard_normal((3, 3)))
cases.append(("rotated with noise", a, a @ r + 0.05 * rng.standard_normal((12, 3))))
c = rng.standard_normal((9, 4))
cases.append(("4 factors against 4", c, c + 0.3 * rng.standard_normal((9, 4))))

out = {
    "source": "scipy %s scipy.linalg.subspace_angles(A, B), numpy %s" % (scipy.__version__, np.__version__),
    "cases": [
        {"name": n, "a": x.tolist(), "b": y.tolist(),
         "angles": sorted(scipy.linalg.subspace_angles(x, y).tolist())}
        for n, x, y in cases
    ],
}
print(json.dumps(out, indent=1))
