#!/usr/bin/python3
"""Reference values for package ewma.

Run with Debian's interpreter: /usr/bin/python3 make_fixture.py > fixture.json
Libraries: pandas 1.5.3, numpy 1.24.2, statsmodels 0.13.5 (Debian bookworm).
The data are simulated here (seeded), not market data.
"""
import json

import numpy as np
import pandas as pd
import statsmodels
from statsmodels.stats import sandwich_covariance as sw

rng = np.random.default_rng(20240611)
T, N = 80, 4
H = 10.0
# Correlated returns with a small drift and some serial correlation.
L = np.array([[1.0, 0, 0, 0], [0.5, 0.8, 0, 0], [0.2, -0.3, 0.9, 0], [0.1, 0.4, 0.2, 0.7]])
e = rng.standard_normal((T, N)) @ L.T * 0.01
x = np.empty_like(e)
x[0] = e[0]
for t in range(1, T):
    x[t] = 0.3 * x[t - 1] + e[t]
x += 0.0005
full = x.copy()
gappy = x.copy()
for t, j in [(3, 0), (4, 0), (10, 1), (25, 2), (26, 2), (27, 2), (40, 3), (70, 1), (79, 2), (0, 3)]:
    gappy[t, j] = np.nan


def last(frame):
    return frame.loc[frame.index.get_level_values(0)[-1]].to_numpy().tolist()


def refs(data, adjust):
    df = pd.DataFrame(data)
    ew = df.ewm(halflife=H, adjust=adjust)
    out = {
        "cov_unbiased": last(ew.cov()),
        "cov_biased": last(ew.cov(bias=True)),
        "corr": last(ew.corr()),
        "var_unbiased": ew.var().iloc[-1].tolist(),
        "var_biased": ew.var(bias=True).iloc[-1].tolist(),
        "mean": ew.mean().iloc[-1].tolist(),
    }
    # Zero-mean second moments: the exponentially weighted mean of x_i x_j.
    zm = np.zeros((N, N))
    for i in range(N):
        for j in range(N):
            zm[i, j] = (df[i] * df[j]).ewm(halflife=H, adjust=adjust).mean().iloc[-1]
    out["zero_mean"] = zm.tolist()
    return out


def nan_to_none(a):
    return [[None if np.isnan(v) else float(v) for v in row] for row in a]


fixture = {
    "source": "testdata/ewma/make_fixture.py",
    "versions": {"pandas": pd.__version__, "numpy": np.__version__,
                 "statsmodels": statsmodels.__version__},
    "halflife": H,
    "calls": {
        "cov_unbiased": "DataFrame.ewm(halflife=10, adjust=A).cov() at the last date",
        "cov_biased": "DataFrame.ewm(halflife=10, adjust=A).cov(bias=True) at the last date",
        "corr": "DataFrame.ewm(halflife=10, adjust=A).corr() at the last date",
        "var_unbiased": "DataFrame.ewm(halflife=10, adjust=A).var() at the last date",
        "var_biased": "DataFrame.ewm(halflife=10, adjust=A).var(bias=True) at the last date",
        "mean": "DataFrame.ewm(halflife=10, adjust=A).mean() at the last date",
        "zero_mean": "(df[i]*df[j]).ewm(halflife=10, adjust=A).mean() at the last date",
        "hac": "statsmodels.stats.sandwich_covariance.S_hac_simple(x, nlags=L)",
    },
    "full": nan_to_none(full),
    "gappy": nan_to_none(gappy),
    "adjust_true_full": refs(full, True),
    "adjust_true_gappy": refs(gappy, True),
    "adjust_false_full": refs(full, False),
    "hac": {str(l): sw.S_hac_simple(full, nlags=l).tolist() for l in (1, 3, 5)},
    "hac_auto": sw.S_hac_simple(full).tolist(),
    "hac_auto_lags": int(np.floor(4 * (T / 100.0) ** (2.0 / 9.0))),
}
print(json.dumps(fixture, indent=1))
