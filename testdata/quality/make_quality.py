#!/usr/bin/python3
"""Fixture for quality_test.go: a small invented panel with planted data-quality
problems and the report computed independently with numpy 1.24.2, scipy 1.10.1
and pandas 1.5.3 (Debian packages).

Run from this folder: /usr/bin/python3 make_quality.py
Writes panel.csv (wide form, empty cell = missing) and expected.json.
"""
import json

import numpy as np
import pandas as pd
import scipy
import scipy.stats

rng = np.random.default_rng(20240601)
dates = pd.bdate_range("2023-01-02", periods=60)
assets = ["QA1", "QA2", "QA3", "QA4", "QA5", "QA6"]
r = pd.DataFrame(rng.standard_t(4, size=(60, 6)) * 0.01, index=dates, columns=assets).round(6)
r.iloc[:15, 1] = np.nan          # QA2 listed part-way
r.iloc[40:, 2] = np.nan          # QA3 delisted part-way
r.iloc[20:23, 3] = np.nan        # QA4 halted three days
r.iloc[30, 3] = 1.5              # QA4 implausible +150 %
r.iloc[10:16, 4] = 0.0           # QA5 stale run of 6 zeros
r.iloc[50:53, 4] = 0.0           # QA5 run of 3 zeros: below the minimum
r.iloc[45, 0] = 0.35             # QA1 outlier
r.iloc[:, 5] = np.nan            # QA6 never observed
r.iloc[[57], 5] = 0.02           # ... except once

K, LIMIT, STALE = 10.0, 1.0, 5
out = {"versions": {"numpy": np.__version__, "scipy": scipy.__version__, "pandas": pd.__version__},
       "observed": int(r.notna().sum().sum()),
       "coverage": float(r.notna().values.mean())}
gaps = life = 0
listings, delistings, outliers, stale, nospread = [], [], [], [], []
for a in assets:
    s = r[a]
    first, last = s.first_valid_index(), s.last_valid_index()
    span = s.loc[first:last]
    life += len(span)
    gaps += int(span.isna().sum())
    if first > dates[0]:
        listings.append(a)
    if last < dates[-1]:
        delistings.append(a)
    x = s.dropna().values
    med = float(np.median(x))
    # scipy 1.10.1: scipy.stats.median_abs_deviation(x, scale=1.0), unscaled MAD
    mad = float(scipy.stats.median_abs_deviation(x, scale=1.0))
    if mad == 0:
        nospread.append(a)
    else:
        for d, v in s.dropna().items():
            if abs(v - med) / mad > K:
                outliers.append({"asset": a, "date": d.strftime("%Y-%m-%d"), "score": abs(v - med) / mad,
                                 "median": med, "mad": mad})
    # stale runs: consecutive observed zeros; a missing date ends a run
    z = (s == 0.0)
    run_id = (z != z.shift()).cumsum()
    for _, g in s[z].groupby(run_id[z]):
        if len(g) >= STALE:
            stale.append({"asset": a, "first": g.index[0].strftime("%Y-%m-%d"),
                          "last": g.index[-1].strftime("%Y-%m-%d"), "length": len(g)})
implausible = [{"asset": a, "date": d.strftime("%Y-%m-%d"), "return": float(v)}
               for a in assets for d, v in r[a].dropna().items() if v > LIMIT]
out.update(gaps=gaps, missing_share=gaps / life, listings=listings, delistings=delistings,
           outliers=outliers, stale_runs=stale, implausible=implausible, no_spread=nospread,
           dropped_min_obs_50=[a for a in assets if r[a].notna().sum() < 50])
r.index = r.index.strftime("%Y-%m-%d")
r.index.name = "date"
r.to_csv("panel.csv", float_format="%.6g")
with open("expected.json", "w") as f:
    json.dump(out, f, indent=1)
