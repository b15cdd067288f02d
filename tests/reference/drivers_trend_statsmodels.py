"""Makes tests/fixtures/drivers/trend-statsmodels.json: an OLS sea-level trend fitted by
statsmodels, the reference for tidetally's sea-level trend (tests/drivers_reference.rs).

The monthly series is synthetic (seeded numpy generator): a quadratic trend, an annual and a
semiannual cycle and AR(1) noise, 1990-01 to 2019-12 with no gaps. statsmodels gives the OLS
coefficients, their covariance and the mean-prediction standard error; statsmodels' acf gives
the residual lag-1 autocorrelation r1. The AR(1) adjustment (Santer et al. 2000, JGR 105,
7337-7356) is then applied as documented in model/src/drivers/sea_level.rs:
n_eff = n (1 - r1) / (1 + r1), covariance scaled by (n - p) / (n_eff - p), Student t with
n_eff - p degrees of freedom (quantile from scipy).

Run: python3 tests/reference/drivers_trend_statsmodels.py
"""

import datetime as dt
import json
import math
import pathlib

import numpy as np
import scipy
import scipy.stats
import statsmodels
import statsmodels.api as sm
from statsmodels.tsa.stattools import acf


def decimal_year(d: dt.date) -> float:
    start = dt.date(d.year, 1, 1)
    length = (dt.date(d.year + 1, 1, 1) - start).days
    return d.year + (d - start).days / length


def month_mid_year(year: int, month: int) -> float:
    first = dt.date(year, month, 1)
    nxt = dt.date(year + 1, 1, 1) if month == 12 else dt.date(year, month + 1, 1)
    return (decimal_year(first) + decimal_year(nxt)) / 2.0


rng = np.random.default_rng(20261201)
months = [(y, m) for y in range(1990, 2020) for m in range(1, 13)]
t = np.array([month_mid_year(y, m) for y, m in months])
phi, sd = 0.5, 0.05
noise = np.empty(len(t))
noise[0] = rng.normal(0.0, sd)
for i in range(1, len(t)):
    noise[i] = phi * noise[i - 1] + rng.normal(0.0, sd * math.sqrt(1 - phi * phi))
x0 = t - 2005.0
level = 0.1 + 0.0032 * x0 + 0.00005 * x0**2 + 0.07 * np.cos(2 * np.pi * t - 0.8) \
    + 0.02 * np.sin(4 * np.pi * t) + noise

centre = t.mean()
x = t - centre
w = 2 * np.pi * t
design = np.column_stack([np.ones_like(x), x, x**2, np.cos(w), np.sin(w), np.cos(2 * w), np.sin(2 * w)])
fit = sm.OLS(level, design).fit()
n, p = design.shape
r1 = float(acf(fit.resid, nlags=1, fft=False)[1])
n_eff = n * (1 - r1) / (1 + r1) if r1 > 0 else float(n)
inflation = (n - p) / (n_eff - p)
dof = n_eff - p

year = 2030.0
xf = year - centre
row = np.array([[1.0, xf, xf**2, 0.0, 0.0, 0.0, 0.0]])
# statsmodels' mean prediction includes the cycle terms at zero: the trend line alone.
pred = fit.get_prediction(row)
value = float(pred.predicted_mean[0])
se = float(pred.se_mean[0]) * math.sqrt(inflation)
q = float(scipy.stats.t.ppf(0.975, dof))

out = {
    "description": "OLS quadratic trend + annual/semiannual cycle by statsmodels; AR(1) inflation per Santer et al. (2000)",
    "generated_by": "tests/reference/drivers_trend_statsmodels.py",
    "versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
    "months": [{"year": y, "month": m, "t": float(tt), "mean_m": float(l)} for (y, m), tt, l in zip(months, t, level)],
    "centre_year": float(centre),
    "coefficients": [float(c) for c in fit.params],
    "ols_std_errors": [float(s) for s in fit.bse],
    "lag1_autocorrelation": r1,
    "effective_months": n_eff,
    "inflated_std_errors": [float(s) * math.sqrt(inflation) for s in fit.bse],
    "prediction": {"year": year, "value": value, "std_error": se, "dof": dof,
                   "interval95": [value - q * se, value + q * se]},
}
path = pathlib.Path(__file__).resolve().parents[1] / "fixtures" / "drivers" / "trend-statsmodels.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}: r1 = {r1:.4f}, n_eff = {n_eff:.1f}")
