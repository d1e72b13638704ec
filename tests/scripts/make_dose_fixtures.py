#!/usr/bin/env python3
"""Reference values for a continuous exposure (dose-response), made with
statsmodels (a general-purpose statistics library) on the NHEFS extract in
tests/data/nhefs.csv (attribution in tests/data/README.md).

The analysis is that of Hernan MA, Robins JM. Causal Inference: What If (2020),
section 12.4: the effect of the change in smoking intensity between 1971 and
1982 (smkintensity82_71, cigarettes per day) on weight change (wt82_71, kg),
among the rows with wt82_71 observed and smokeintensity <= 25 (1162 rows).

- Stabilised weights sw = f(A) / f(A | L). Denominator: OLS of the exposure on
  C(sex) + C(race) + age + age^2 + C(education) + smokeintensity +
  smokeintensity^2 + smokeyrs + smokeyrs^2 + C(exercise) + C(active) + wt71 +
  wt71^2, normal density with sigma^2 = RSS / (n - p). Numerator: normal
  density with the exposure's sample mean and sample sd (n - 1).
- Marginal structural model: weighted least squares of wt82_71 on 1 + a + a^2
  with weights sw, and the robust (sandwich, HC0) covariance with the weights
  taken as fixed. It comes from WLS with cov_type='HC0' and is checked against
  statsmodels GEE with an independence working correlation (one cluster per
  row); both are recorded with their largest difference.
- E[Y^a] with a 95% normal interval (the normal quantile is recorded) at
  a = 0, a = 20 and on the default grid: the 5th, 15th, ..., 95th percentiles
  of the exposure (5th to 95th in 9 equal steps of 10 points: 10 doses; numpy's
  default linear interpolation; the exposure is whole cigarettes, so the 55th
  and 65th percentiles are both 0 and each grid point names its percentile),
  and the contrast E[Y^20] - E[Y^0].
- Standardisation (g-formula) on the same rows: OLS of wt82_71 on a + a^2 and
  the denominator's covariate terms, everyone predicted at each dose, averaged.
- "published": the values printed in the text of What If section 12.4
  (rounded as printed there), E[Y^0] 2.0 (1.4 to 2.6), E[Y^20] 0.9 (-1.7 to 3.5).

Run from the repository root:  python3 tests/scripts/make_dose_fixtures.py
(after `pip install numpy pandas scipy statsmodels`). Writes
tests/fixtures/dose_reference.json, which records the library versions. Made
with Python 3.11.7, numpy 2.4.6, pandas 3.1.1, scipy 1.17.1, statsmodels 0.15.0.
"""
import json
import os
import sys

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
import statsmodels.formula.api as smf
from scipy.stats import norm

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
OUT = os.path.join(ROOT, "tests", "fixtures", "dose_reference.json")
A, Y = "smkintensity82_71", "wt82_71"
COVARIATES = (
    "C(sex) + C(race) + age + I(age**2) + C(education) + smokeintensity + I(smokeintensity**2)"
    " + smokeyrs + I(smokeyrs**2) + C(exercise) + C(active) + wt71 + I(wt71**2)"
)
PERCENTILES = [5.0 + 10.0 * i for i in range(10)]
Z = float(norm.ppf(0.975))


def main():
    d = pd.read_csv(os.path.join(ROOT, "tests", "data", "nhefs.csv"))
    d = d[d[Y].notna() & (d.smokeintensity <= 25)].reset_index(drop=True)
    assert len(d) == 1162, len(d)
    a = d[A].to_numpy(dtype=float)
    n = len(d)

    # Stabilised weights.
    den = smf.ols(A + " ~ " + COVARIATES, data=d).fit()
    p = int(den.df_model) + 1
    assert p == len(den.params)
    sigma = float(np.sqrt(den.ssr / (n - p)))
    f_den = norm.pdf(a, den.fittedvalues, sigma)
    mu, sd = float(a.mean()), float(a.std(ddof=1))
    f_num = norm.pdf(a, mu, sd)
    sw = f_num / f_den

    # Marginal structural model E[Y^a] = b0 + b1 a + b2 a^2.
    X = np.column_stack([np.ones(n), a, a * a])
    yv = d[Y].to_numpy(dtype=float)
    wls = sm.WLS(yv, X, weights=sw).fit(cov_type="HC0")
    gee = sm.GEE(
        yv, X, groups=np.arange(n), weights=sw, cov_struct=sm.cov_struct.Independence()
    ).fit(maxiter=100, params_niter=100)
    b, V = np.asarray(wls.params), np.asarray(wls.cov_params())
    bg, Vg = np.asarray(gee.params), np.asarray(gee.cov_params())
    diff_b = float(np.max(np.abs(b - bg)))
    diff_v = float(np.max(np.abs(V - Vg)))
    assert diff_b < 1e-8 and diff_v < 1e-8, (diff_b, diff_v)

    def msm_at(dose, pct=None):
        x = np.array([1.0, dose, dose * dose])
        est = float(x @ b)
        se = float(np.sqrt(x @ V @ x))
        point = {"a": float(dose), "estimate": est, "std_error": se, "ci": [est - Z * se, est + Z * se]}
        return point if pct is None else {"percentile": pct, **point}

    grid = [float(v) for v in np.percentile(a, PERCENTILES)]
    c = np.array([0.0, 20.0, 400.0])  # x(20) - x(0)
    c_est = float(c @ b)
    c_se = float(np.sqrt(c @ V @ c))

    # Standardisation (g-formula).
    g = smf.ols(Y + " ~ " + A + " + I(" + A + "**2) + " + COVARIATES, data=d).fit()

    def g_at(dose, pct=None):
        da = d.copy()
        da[A] = dose
        point = {"a": float(dose), "estimate": float(np.mean(g.predict(da)))}
        return point if pct is None else {"percentile": pct, **point}

    g0, g20 = g_at(0.0), g_at(20.0)

    out = {
        "source": "statsmodels OLS, WLS and GEE on tests/data/nhefs.csv; analysis of "
        "Hernan & Robins, Causal Inference: What If (2020), section 12.4",
        "versions": {
            "python": sys.version.split()[0],
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "sample": {"filter": "wt82_71 observed and smokeintensity <= 25", "rows": n},
        "exposure": A,
        "outcome": Y,
        "covariate_terms": COVARIATES,
        "weights": {
            "denominator": "OLS of the exposure on the covariate terms; normal density, "
            "sigma^2 = RSS / (n - p)",
            "numerator": "normal density with the exposure's sample mean and sample sd (n - 1)",
            "n": n,
            "p": p,
            "sigma": sigma,
            "exposure_mean": mu,
            "exposure_sd": sd,
            "mean": float(sw.mean()),
            "min": float(sw.min()),
            "max": float(sw.max()),
            "sd": float(sw.std(ddof=1)),
            "sd_ddof": 1,
        },
        "msm": {
            "model": "WLS of wt82_71 on 1 + a + a^2, weights sw",
            "terms": ["(intercept)", "a", "a^2"],
            "coefficients": [float(v) for v in b],
            "covariance": [[float(v) for v in row] for row in V],
            "covariance_method": "sandwich HC0, weights fixed: statsmodels WLS cov_type='HC0' "
            "(used); GEE independence robust covariance as a check",
            "gee_check": {"max_abs_diff_coefficients": diff_b, "max_abs_diff_covariance": diff_v},
            "normal_quantile": Z,
            "at_0": msm_at(0.0),
            "at_20": msm_at(20.0),
            "contrast_20_minus_0": {
                "estimate": c_est,
                "std_error": c_se,
                "ci": [c_est - Z * c_se, c_est + Z * c_se],
            },
            "grid": [msm_at(v, q) for q, v in zip(PERCENTILES, grid)],
        },
        "grid": {
            "percentiles": PERCENTILES,
            "method": "numpy.percentile default (linear interpolation between order statistics, "
            "h = (n - 1) q)",
            "doses": grid,
        },
        "standardisation": {
            "model": "OLS of wt82_71 on a + a^2 + the covariate terms; everyone predicted at "
            "each dose and averaged",
            "coefficients": {name: float(v) for name, v in g.params.items()},
            "at_0": g0,
            "at_20": g20,
            "contrast_20_minus_0": g20["estimate"] - g0["estimate"],
            "grid": [g_at(v, q) for q, v in zip(PERCENTILES, grid)],
        },
        "published": {
            "source": "Hernan MA, Robins JM. Causal Inference: What If (2020), text of section "
            "12.4 (values as printed, rounded to one decimal)",
            "at_0": {"estimate": 2.0, "ci": [1.4, 2.6]},
            "at_20": {"estimate": 0.9, "ci": [-1.7, 3.5]},
        },
    }
    with open(OUT, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
