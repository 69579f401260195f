#!/usr/bin/python3
"""Reference values for the confidence intervals of evaluate.Run (internal/evaluate).

Writes intervals.json. Library versions are recorded in the file.
Run: /usr/bin/python3 testdata/evaluate/intervals.py (from the repository root).
  - chi-square interval of a volatility: scipy.stats.chi2.ppf(q, df)
  - Wilson interval of a share: statsmodels.stats.proportion.proportion_confint(k, n, alpha=0.05, method="wilson")
"""
import json, os
import numpy as np, scipy, statsmodels
from scipy.stats import chi2
from statsmodels.stats.proportion import proportion_confint

rng = np.random.default_rng(20300107)
vol = []
for t in (5, 21, 252, 756):
    x = np.round(rng.standard_normal(t) * 0.01, 7)
    s = x.std(ddof=1)
    lo = s * np.sqrt((t - 1) / chi2.ppf(0.975, t - 1))
    hi = s * np.sqrt((t - 1) / chi2.ppf(0.025, t - 1))
    vol.append({"x": x.tolist(), "std": s, "lower": lo, "upper": hi})
share = []
for k, n in ((95, 100), (0, 20), (20, 20), (37, 400), (380, 400), (1, 3)):
    lo, hi = proportion_confint(k, n, alpha=0.05, method="wilson")
    share.append({"k": k, "n": n, "lower": lo, "upper": hi})
out = {
    "source": "numpy %s, scipy %s (scipy.stats.chi2.ppf), statsmodels %s (proportion_confint method='wilson')"
    % (np.__version__, scipy.__version__, statsmodels.__version__),
    "volatility": vol,
    "share": share,
}
with open(os.path.join(os.path.dirname(os.path.abspath(__file__)), "intervals.json"), "w") as f:
    json.dump(out, f, indent=1)
