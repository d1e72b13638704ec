#!/usr/bin/env python3
"""Reference values for Rubin's rules (Rubin 1987, ch. 3) with the
Barnard-Rubin degrees of freedom (Barnard & Rubin 1999, Biometrika
86:948-955), reproduced with numpy and scipy (general-purpose libraries) on
INVENTED sets of per-imputation estimates and squared standard errors
(seed 20261214).

For estimates q_m and variances u_m, m = 1..M, and complete-data degrees of
freedom nu_com:
  Q = mean q, W = mean u, B = var(q, ddof=1), T = W + (1 + 1/M) B,
  lambda = (1 + 1/M) B / T, nu_old = (M - 1) / lambda^2,
  nu_obs = (nu_com + 1) / (nu_com + 3) * nu_com * (1 - lambda),
  nu = nu_old nu_obs / (nu_old + nu_obs),
  r = (1 + 1/M) B / W, fmi = (r + 2 / (nu + 3)) / (r + 1),
  interval Q -/+ t_{0.975}(nu) sqrt(T) (scipy.stats.t.ppf).

Run from the repository root:  python3 tests/scripts/make_pool_fixtures.py
(after `pip install numpy scipy`). Writes tests/fixtures/pool_reference.json.
"""
import json

import numpy as np
import scipy
from scipy import stats

rng = np.random.default_rng(20261214)
cases = []
for m, nu_com, spread in [(2, 10.0, 0.5), (5, 120.0, 0.2), (20, 2994.0, 0.05), (50, 40.0, 1.5), (20, 1e6, 0.01)]:
    q = rng.normal(1.0, spread, size=m)
    u = rng.uniform(0.01, 0.05, size=m)
    Q = q.mean()
    W = u.mean()
    B = q.var(ddof=1)
    T = W + (1 + 1 / m) * B
    lam = (1 + 1 / m) * B / T
    nu_old = (m - 1) / lam**2
    nu_obs = (nu_com + 1) / (nu_com + 3) * nu_com * (1 - lam)
    nu = nu_old * nu_obs / (nu_old + nu_obs)
    r = (1 + 1 / m) * B / W
    fmi = (r + 2 / (nu + 3)) / (r + 1)
    t = stats.t.ppf(0.975, nu)
    cases.append(
        {
            "q": q.tolist(),
            "u": u.tolist(),
            "nu_com": nu_com,
            "estimate": Q,
            "within": W,
            "between": B,
            "total": T,
            "df": nu,
            "riv": r,
            "fmi": fmi,
            "ci": [Q - t * np.sqrt(T), Q + t * np.sqrt(T)],
        }
    )

out = {
    "source": "numpy and scipy reproduction of Rubin's rules with Barnard-Rubin df; INVENTED inputs",
    "versions": {"numpy": np.__version__, "scipy": scipy.__version__},
    "level": 0.95,
    "cases": cases,
}
with open("tests/fixtures/pool_reference.json", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
