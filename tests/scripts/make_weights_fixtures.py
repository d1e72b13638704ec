#!/usr/bin/env python3
"""Reference values for sampling weights, made with statsmodels and numpy
(general-purpose libraries) on INVENTED survey data simulated here (seed
20261204) and written to tests/data/weighted.csv (graph in
tests/data/weighted.graph).

The data: a population in which the chance of being sampled depends on a
covariate and on the outcome's noise; 900 sampled rows with confounders
`age` and `female`, a binary exposure `treated`, a continuous outcome `y`
(1 + 2 treated + 0.05 age + 0.5 female + noise) and the sampling weight `w`
(the inverse of each row's selection probability, rounded to 4 decimals).

(a) Weighted least squares of y on 1 + treated + age + female
    (statsmodels WLS, weights = w) with cov_type='HC0': the sandwich
    (X'WX)^-1 (sum_i w_i^2 e_i^2 x_i x_i') (X'WX)^-1, which treats the
    weights as known and is the one causeway's influence functions give (no
    small-sample factor). With no exposure products, regression
    standardization's difference equals the coefficient of treated.
(b) The weighted logistic propensity model of treated on 1 + age + female:
    statsmodels GLM Binomial with freq_weights = w, whose point estimates
    maximize the weighted likelihood sum_i w_i l_i (var_weights give the same
    point estimates for the binomial family; only the coefficients are
    compared). Then the weighted Hajek IPW difference and its standard error
    from the stacked weighted estimating equations (numpy): each row's
    estimating function is w_i psi_i, and its influence value is
    phi_i = -(sum_j w_j dpsi_j/dtheta)^{-1} w_i psi_i; SE = sqrt(sum_i phi_i^2).

Run from the repository root:  python3 tests/scripts/make_weights_fixtures.py
(after `pip install numpy pandas scipy statsmodels`). Writes
tests/data/weighted.csv and tests/fixtures/weights_reference.json, which
records the library versions. Made with numpy 2.4.6, pandas 3.1.1,
scipy 1.17.1, statsmodels 0.15.0.
"""
import json
import os
import sys

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DATA = os.path.join(ROOT, "tests", "data", "weighted.csv")
OUT = os.path.join(ROOT, "tests", "fixtures", "weights_reference.json")
SEED = 20261204
SAMPLE = 900


def simulate():
    rng = np.random.default_rng(SEED)
    rows = []
    while len(rows) < SAMPLE:
        age = round(float(rng.normal(45.0, 10.0)), 1)
        female = int(rng.random() < 0.5)
        p = 1.0 / (1.0 + np.exp(-(-2.0 + 0.04 * age + 0.5 * female)))
        treated = int(rng.random() < p)
        noise = rng.normal(0.0, 1.0)
        y = 1.0 + 2.0 * treated + 0.05 * age + 0.5 * female + noise
        # Selection leans on the outcome's noise and on being exposed.
        s = 1.0 / (1.0 + np.exp(-(-1.0 + 0.8 * noise + 0.5 * treated)))
        if rng.random() < s:
            rows.append((age, female, treated, round(float(y), 6), round(float(1.0 / s), 4)))
    return pd.DataFrame(rows, columns=["age", "female", "treated", "y", "w"])


def hajek(df):
    x = sm.add_constant(df[["age", "female"]].to_numpy(float))
    a = df["treated"].to_numpy(float)
    y = df["y"].to_numpy(float)
    w = df["w"].to_numpy(float)
    glm = sm.GLM(a, x, family=sm.families.Binomial(), freq_weights=w).fit(tol=1e-14, maxiter=200)
    e = glm.predict(x)
    mu1 = np.sum(w * a * y / e) / np.sum(w * a / e)
    mu0 = np.sum(w * (1 - a) * y / (1 - e)) / np.sum(w * (1 - a) / (1 - e))
    k = x.shape[1]
    psi = w[:, None] * np.column_stack([
        x * (a - e)[:, None],
        a * (y - mu1) / e,
        (1 - a) * (y - mu0) / (1 - e),
    ])
    jac = np.zeros((k + 2, k + 2))
    jac[:k, :k] = -(x * (w * e * (1 - e))[:, None]).T @ x
    jac[k, :k] = -np.sum((w * a * (y - mu1) * (1 - e) / e)[:, None] * x, axis=0)
    jac[k, k] = -np.sum(w * a / e)
    jac[k + 1, :k] = np.sum((w * (1 - a) * (y - mu0) * e / (1 - e))[:, None] * x, axis=0)
    jac[k + 1, k + 1] = -np.sum(w * (1 - a) / (1 - e))
    infl = -psi @ np.linalg.inv(jac).T
    phi = infl[:, k] - infl[:, k + 1]
    return glm.params, mu1 - mu0, float(np.sqrt(np.sum(phi ** 2)))


def main():
    df = simulate()
    df.to_csv(DATA, index=False)
    w = df["w"].to_numpy(float)
    x = sm.add_constant(df[["treated", "age", "female"]].to_numpy(float))
    wls = sm.WLS(df["y"].to_numpy(float), x, weights=w).fit(cov_type="HC0")
    coef, diff, se = hajek(df)
    out = {
        "source": "statsmodels WLS cov_type='HC0' and GLM Binomial freq_weights; numpy stacked weighted "
        "influence functions for the Hajek IPW difference; invented data tests/data/weighted.csv",
        "versions": {
            "python": sys.version.split()[0],
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "rows": int(len(df)),
        "effective_sample_size": float(w.sum() ** 2 / (w ** 2).sum()),
        "wls": {"coefficient": float(wls.params[1]), "hc0_se": float(wls.bse[1])},
        "propensity": {"intercept": float(coef[0]), "age": float(coef[1]), "female": float(coef[2])},
        "ipw": {"difference": float(diff), "se": se},
    }
    with open(OUT, "w") as f:
        json.dump(out, f, indent=2)
        f.write("\n")
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
