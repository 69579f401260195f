#!/usr/bin/python3
"""Reference fixture for factor.FitExposure's constrained cross-sectional regression.

Run with Debian's python3 (numpy 1.24.2, pandas 1.5.3, statsmodels 0.13.5):

    /usr/bin/python3 testdata/exposure/make_wls_fixture.py > testdata/exposure/wls.json

An invented market of 40 assets in 4 sectors over 9 dates, with returns missing
here and there and a per-date market cap (one missing). Styles, as documented in
factor.FitExposure: size = log cap; volatility = trailing standard deviation over
the 3 dates before t (pandas rolling(3, min_periods=2).std(), divisor m - 1,
shifted one date so only past returns enter); momentum = sum of log(1 + r) over
rows t-4 .. t-2 (window 4, skip 1: pandas rolling(3, min_periods=2).sum()
shifted two dates); one caller characteristic with an outlier. Each date a
style is standardised over the assets with a cap and a value (cap-weighted mean,
root-mean-square deviation with divisor m), clipped to +-2.5 and standardised
again; missing values get 0.

Regression of each date t >= 4 over the assets with a return and a cap:
    r = 1 f_mkt + S f_sec + X f_sty + u,  weights w = sqrt(cap),
    subject to sum_s c_s f_s = 0 (c_s the sector's total cap that date),
with the last sector's return substituted out, f_L = -sum_{s<L} (c_s/c_L) f_s:
statsmodels 0.13.5 sm.WLS(y, X_reduced, weights=w).fit() gives the reduced
coefficients g, their covariance cov_params() and rsquared; f = C g and
Cov(f) = C cov_params() C^T give the t-statistics; numpy.linalg.cond of
sqrt(w)[:, None] * X_reduced gives the condition number.
"""
import json
import sys

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm

rng = np.random.default_rng(20240611)
T, N = 9, 40
sectors = ["Dock", "Forge", "Mill", "Quarry"]  # sorted: the order of the factors
sec = np.array([sectors[i % 4] for i in range(N)])
rng.shuffle(sec)
cap0 = np.exp(np.log(2000) + 1.1 * rng.standard_normal(N))
caps = cap0[None, :] * np.exp(np.cumsum(0.01 * rng.standard_normal((T, N)), axis=0))
caps[6, 5] = np.nan  # asset 5 has no cap on row 6: out of that date
beta = 1 + 0.2 * rng.standard_normal(N)
quality = rng.standard_normal(N)
quality[7] = 9.0  # an outlier the winsorising clips
ret = np.empty((T, N))
for t in range(T):
    fm = 0.01 * rng.standard_normal()
    fs = {s: 0.005 * rng.standard_normal() for s in sectors}
    ret[t] = beta * fm + np.array([fs[s] for s in sec]) + 0.003 * quality * rng.standard_normal() \
        + 0.015 * rng.standard_normal(N)
for (t, j) in [(0, 3), (2, 3), (1, 8), (5, 11), (7, 20), (8, 20), (3, 30), (6, 2)]:
    ret[t, j] = np.nan
ret = np.round(ret, 6)

VOLW, MOMW, SKIP, WINSOR = 3, 4, 1, 2.5
FIRST = max(VOLW, MOMW)
df = pd.DataFrame(ret)
# Row a of these frames is the value as of row a (from rows before a); row T is the date after the last.
ext = pd.concat([df, pd.DataFrame(np.full((1, N), np.nan))], ignore_index=True)
vol = ext.rolling(VOLW, min_periods=max(2, (VOLW + 1) // 2)).std().shift(1).to_numpy()
L = MOMW - SKIP
mom = np.log1p(ext).rolling(L, min_periods=(L + 1) // 2).sum().shift(SKIP + 1).to_numpy()


def standardise(x, w):
    m = np.sum(w * x) / np.sum(w)
    sd = np.sqrt(np.mean((x - m) ** 2))
    return (x - m) / sd


def styles_at(a):
    row = min(a, T - 1)
    cap = caps[row]
    raw = [np.log(cap), vol[a], mom[a], quality]
    out = np.zeros((N, len(raw)))
    for c, x in enumerate(raw):
        ok = ~np.isnan(cap) & ~np.isnan(x)
        z = standardise(x[ok], cap[ok])
        z = standardise(np.clip(z, -WINSOR, WINSOR), cap[ok])
        out[ok, c] = z
    return out


S = len(sectors)
dates = []
for t in range(FIRST, T):
    X = styles_at(t)
    ok = ~np.isnan(ret[t]) & ~np.isnan(caps[t])
    idx = np.flatnonzero(ok)
    cap, y, w = caps[t, idx], ret[t, idx], np.sqrt(caps[t, idx])
    csum = np.array([cap[sec[idx] == s].sum() for s in sectors])
    ratio = csum / csum[-1]
    D = np.array([[1.0 if sec[j] == s else 0.0 for s in sectors] for j in idx])
    sect = D[:, :-1] - np.outer(D[:, -1], ratio[:-1])
    Xr = np.column_stack([np.ones(len(idx)), sect, X[idx]])
    res = sm.WLS(y, Xr, weights=w).fit()
    p = Xr.shape[1]
    C = np.zeros((p + 1, p))
    C[0, 0] = 1
    for q in range(S - 1):
        C[1 + q, 1 + q] = 1
        C[S, 1 + q] = -ratio[q]
    for h in range(S + 1, p + 1):
        C[h, h - 1] = 1
    f = C @ res.params
    covf = C @ res.cov_params() @ C.T
    tstat = f / np.sqrt(np.diag(covf))
    Bfull = np.column_stack([np.ones(N), np.array([[1.0 if s == q else 0.0 for q in sectors] for s in sec]), X])
    spec = np.full(N, np.nan)
    spec[idx] = y - Bfull[idx] @ f
    dates.append({
        "row": t, "assets": int(len(idx)),
        "factor_returns": f.tolist(), "t": tstat.tolist(),
        "reduced_t": res.tvalues.tolist(), "r2": float(res.rsquared),
        "cond": float(np.linalg.cond(np.sqrt(w)[:, None] * Xr)),
        "specific": [None if np.isnan(v) else float(v) for v in spec],
        "sector_cap_check": float(csum @ f[1:1 + S]),
    })

final = np.column_stack([np.ones(N), np.array([[1.0 if s == q else 0.0 for q in sectors] for s in sec]), styles_at(T)])


def nulls(a):
    return [[None if np.isnan(v) else float(v) for v in row] for row in a]


json.dump({
    "provenance": "testdata/exposure/make_wls_fixture.py; numpy %s, pandas %s, statsmodels %s; "
                  "sm.WLS(y, X_reduced, weights=sqrt(cap)).fit()" % (np.__version__, pd.__version__, statsmodels.__version__),
    "sectors": sec.tolist(), "sector_names": sectors,
    "returns": nulls(ret), "caps": nulls(caps), "quality": quality.tolist(),
    "volatility_window": VOLW, "momentum_window": MOMW, "momentum_skip": SKIP, "winsor": WINSOR,
    "first": FIRST, "factor_names": ["market"] + sectors + ["size", "volatility", "momentum", "quality"],
    "dates": dates, "loadings": final.tolist(),
}, sys.stdout, indent=1)
