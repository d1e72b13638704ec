#!/usr/bin/env python3
"""Reference values for the sensitivity module (src/sensitivity/) and the
distribution helpers it uses (src/infer/dist.rs).

Run from the repository root:  python3 tests/scripts/make_sensitivity_fixtures.py

Writes tests/fixtures/sensitivity_reference.json with:
- "quantiles": Student t quantiles and normal quantiles/distribution values
  from scipy.stats;
- "omitted_variable": an ordinary-least-squares check with statsmodels. For
  simulated data with an observed confounder Z, fit the outcome model with and
  without Z. Omitted-variable algebra in OLS (Cinelli and Hazlett, JRSS-B
  2020;82:39-67, section 4) makes the shift of the exposure coefficient equal
  se_restricted * sqrt(df * R2_yz * R2_dz / (1 - R2_dz)) and the full model's
  standard error equal se_restricted * sqrt((1 - R2_yz)/(1 - R2_dz) * df/(df - 1)),
  where R2_dz, R2_yz are Z's partial R2 (from its t statistics in the exposure
  and full outcome models) and df is the restricted model's residual df.
  So the bias-adjusted estimate and interval at Z's own strengths are the full
  model's coefficient and 95% interval;
- "benchmark": data in which Z is made exactly orthogonal (in sample) to the
  covariates; the strengths of Z relative to covariate X1 (k_D, k_Y) then give
  R2_dz exactly by the benchmark formula and R2_yz no larger than its bound.
Library versions are recorded.
"""

import json
import pathlib
import sys

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import stats

ROOT = pathlib.Path(__file__).resolve().parents[2]


def partial_r2(fit, name):
    t = fit.tvalues[name]
    return float(t * t / (t * t + fit.df_resid))


def frame(cols):
    import pandas as pd
    return sm.add_constant(pd.DataFrame(cols))


def omitted_variable():
    rng = np.random.default_rng(31)
    n = 250
    x1 = rng.normal(size=n)
    x2 = rng.normal(size=n)
    z = 0.5 * x1 + rng.normal(size=n)
    d = 0.4 * x1 - 0.3 * x2 + 0.6 * z + rng.normal(size=n)
    y = 0.5 * d + 0.8 * x1 + 0.4 * x2 + 0.9 * z + rng.normal(scale=2.0, size=n)
    restricted = sm.OLS(y, frame({"d": d, "x1": x1, "x2": x2})).fit()
    full = sm.OLS(y, frame({"d": d, "x1": x1, "x2": x2, "z": z})).fit()
    exposure = sm.OLS(d, frame({"x1": x1, "x2": x2, "z": z})).fit()
    ci = full.conf_int(alpha=0.05).loc["d"]
    return {
        "restricted": {"estimate": float(restricted.params["d"]),
                       "se": float(restricted.bse["d"]), "df": float(restricted.df_resid)},
        "r2_exposure": partial_r2(exposure, "z"),
        "r2_outcome": partial_r2(full, "z"),
        "full": {"estimate": float(full.params["d"]), "se": float(full.bse["d"]),
                 "ci": [float(ci.iloc[0]), float(ci.iloc[1])], "df": float(full.df_resid)},
    }


def benchmark():
    rng = np.random.default_rng(47)
    n = 400
    x1 = rng.normal(size=n)
    x2 = 0.5 * x1 + rng.normal(size=n)
    z = rng.normal(size=n)
    # Make z exactly orthogonal to (1, x1, x2) in this sample.
    basis = np.column_stack([np.ones(n), x1, x2])
    z = z - basis @ np.linalg.lstsq(basis, z, rcond=None)[0]
    d = 0.7 * x1 + 0.3 * x2 + 0.8 * z + rng.normal(size=n)
    y = 0.4 * d + 0.6 * x1 + 0.5 * x2 + 1.1 * z + rng.normal(scale=1.5, size=n)
    # Covariate x1's partial R2 with the exposure given x2, and with the
    # outcome given the exposure and x2 (the confounder is not observed).
    d_on_x = sm.OLS(d, frame({"x1": x1, "x2": x2})).fit()
    y_on_dx = sm.OLS(y, frame({"d": d, "x1": x1, "x2": x2})).fit()
    r2_dxj = partial_r2(d_on_x, "x1")
    r2_yxj = partial_r2(y_on_dx, "x1")
    # Z's strength given x2 only (X_{-j}), as in the definition of k_D, k_Y.
    d_full = sm.OLS(d, frame({"x1": x1, "x2": x2, "z": z})).fit()
    k_d = partial_r2(sm.OLS(d, frame({"x2": x2, "z": z})).fit(), "z") / r2_dxj
    k_y = partial_r2(sm.OLS(y, frame({"d": d, "x2": x2, "z": z})).fit(), "z") / r2_yxj
    # Z's actual strength given all covariates.
    r2_dz = partial_r2(d_full, "z")
    r2_yz = partial_r2(sm.OLS(y, frame({"d": d, "x1": x1, "x2": x2, "z": z})).fit(), "z")
    return {"covariate": {"name": "x1", "r2_exposure": r2_dxj, "r2_outcome": r2_yxj},
            "k_d": k_d, "k_y": k_y, "r2_dz": r2_dz, "r2_yz": r2_yz}


def quantiles():
    t = [[p, df, float(stats.t.ppf(p, df))]
         for p in (0.6, 0.9, 0.975, 0.995, 0.999)
         for df in (1.5, 3.0, 9.0, 29.0, 120.0, 782.0, 5000.0)]
    z = [[p, float(stats.norm.ppf(p))] for p in (0.001, 0.025, 0.1, 0.5, 0.8, 0.975, 0.9999)]
    cdf = [[x, float(stats.norm.cdf(x))] for x in (-6.0, -2.5, -1.0, 0.0, 0.7, 1.96, 3.5)]
    return {"t_quantile": t, "normal_quantile": z, "normal_cdf": cdf}


def main():
    out = {
        "source": "tests/scripts/make_sensitivity_fixtures.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                     "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
        "quantiles": quantiles(),
        "omitted_variable": omitted_variable(),
        "benchmark": benchmark(),
    }
    path = ROOT / "tests" / "fixtures" / "sensitivity_reference.json"
    path.write_text(json.dumps(out, indent=2) + "\n")
    print(f"wrote {path}")


if __name__ == "__main__":
    main()
