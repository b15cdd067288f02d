"""Reference covariances for the water engine's residual regression.

Makes a small persistent regression problem (seeded), fits it by OLS with statsmodels and
records the Newey-West HAC (Bartlett, maxlags=5) and the cluster-robust standard errors,
both with statsmodels' default small-sample corrections. Run:

    python3 tests/reference/water_hac_statsmodels.py > tests/fixtures/water/hac-statsmodels.json
"""
import json

import numpy as np
import statsmodels
import statsmodels.api as sm

rng = np.random.default_rng(20261202)
n_groups, per_group = 12, 30
n = n_groups * per_group
x1 = np.zeros(n)
x2 = np.zeros(n)
e = np.zeros(n)
for t in range(n):
    prev = t - 1 if t % per_group else None
    x1[t] = (0.8 * x1[prev] if prev is not None else 0.0) + rng.normal()
    x2[t] = float(rng.random() < 0.3)
    e[t] = (0.6 * e[prev] if prev is not None else 0.0) + rng.normal(scale=0.5)
y = 0.2 + 0.5 * x1 - 0.3 * x2 + e
groups = np.repeat(np.arange(n_groups), per_group)
X = sm.add_constant(np.column_stack([x1, x2]))
hac = sm.OLS(y, X).fit(cov_type="HAC", cov_kwds={"maxlags": 5})
cluster = sm.OLS(y, X).fit(cov_type="cluster", cov_kwds={"groups": groups})
print(json.dumps({
    "source": "statsmodels OLS, cov_type HAC (maxlags 5, Bartlett, use_correction default) "
              "and cluster (groups, use_correction default)",
    "versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__},
    "x": X.tolist(),
    "y": y.tolist(),
    "groups": groups.tolist(),
    "estimates": hac.params.tolist(),
    "hac_maxlags": 5,
    "hac_std_errors": hac.bse.tolist(),
    "cluster_std_errors": cluster.bse.tolist(),
}, indent=1))
