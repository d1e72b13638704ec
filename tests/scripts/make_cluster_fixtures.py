#!/usr/bin/env python3
"""Reference values for cluster-robust standard errors, made with statsmodels
and numpy (general-purpose libraries) on INVENTED clustered data simulated
here (seed 20261203) and written to tests/data/clustered.csv (graph in
tests/data/clustered.graph).

The data: 48 sites of 8 to 40 rows (1163 rows); `site` is a text code
(s01 ... s48), empty in 5 rows (those rows are dropped as incomplete by
causeway and here alike). Confounders `age` (with a site shift) and `female`;
a binary exposure `treated` whose probability depends on them and on a site
tendency (sd 1 on the log-odds scale, unrelated to the outcome); a continuous
outcome `y` = 1 + 2 treated + 0.05 age + 0.5 female + a shared site effect
(sd 1.5) + noise (sd 1).

(a) Least squares of y on 1 + treated + age + female, with
    cov_type='cluster' (groups = site) and statsmodels' default
    use_correction=True, whose factor is G/(G-1) x (N-1)/(N-K). With no
    exposure products in the outcome model, regression standardization's
    difference equals the coefficient of treated, and its cluster-robust
    standard error equals this one.
(b) The IPW Hajek mean difference (logistic propensity model on
    1 + age + female): the stacked estimating equations of the propensity
    score equations and the two weighted means give each row's influence
    value phi_i = -(sum_j dpsi_j/dtheta)^{-1} psi_i (numpy); the
    cluster-robust standard error is sqrt(G/(G-1) sum_g (sum_{i in g} phi_i)^2),
    and the row-level one sqrt(sum_i phi_i^2). The propensity coefficients come
    from statsmodels Logit.

Run from the repository root:  python3 tests/scripts/make_cluster_fixtures.py
(after `pip install numpy pandas scipy statsmodels`). Writes
tests/data/clustered.csv and tests/fixtures/cluster_reference.json, which
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
DATA = os.path.join(ROOT, "tests", "data", "clustered.csv")
OUT = os.path.join(ROOT, "tests", "fixtures", "cluster_reference.json")
SEED = 20261203
SITES = 48


def simulate():
    rng = np.random.default_rng(SEED)
    sizes = rng.integers(8, 41, size=SITES)
    rows = []
    for g, m in enumerate(sizes):
        shift = rng.normal(0.0, 5.0)
        effect = rng.normal(0.0, 1.5)
        tendency = rng.normal(0.0, 1.0)
        for _ in range(m):
            age = round(float(45.0 + shift + rng.normal(0.0, 10.0)), 1)
            female = int(rng.random() < 0.5)
            p = 1.0 / (1.0 + np.exp(-(-2.0 + 0.04 * age + 0.5 * female + tendency)))
            treated = int(rng.random() < p)
            y = 1.0 + 2.0 * treated + 0.05 * age + 0.5 * female + effect + rng.normal(0.0, 1.0)
            rows.append((f"s{g + 1:02d}", age, female, treated, round(float(y), 6)))
    df = pd.DataFrame(rows, columns=["site", "age", "female", "treated", "y"])
    missing = rng.choice(len(df), size=5, replace=False)
    df["site"] = df["site"].astype(object)
    df.loc[missing, "site"] = ""
    return df


def hajek_influence(df):
    x = sm.add_constant(df[["age", "female"]].to_numpy(float))
    a = df["treated"].to_numpy(float)
    y = df["y"].to_numpy(float)
    logit = sm.Logit(a, x).fit(disp=0, tol=1e-12, maxiter=100)
    e = logit.predict(x)
    mu1 = np.sum(a * y / e) / np.sum(a / e)
    mu0 = np.sum((1 - a) * y / (1 - e)) / np.sum((1 - a) / (1 - e))
    k = x.shape[1]
    psi = np.column_stack([
        x * (a - e)[:, None],
        a * (y - mu1) / e,
        (1 - a) * (y - mu0) / (1 - e),
    ])
    jac = np.zeros((k + 2, k + 2))
    jac[:k, :k] = -(x * (e * (1 - e))[:, None]).T @ x
    jac[k, :k] = -np.sum((a * (y - mu1) * (1 - e) / e)[:, None] * x, axis=0)
    jac[k, k] = -np.sum(a / e)
    jac[k + 1, :k] = np.sum(((1 - a) * (y - mu0) * e / (1 - e))[:, None] * x, axis=0)
    jac[k + 1, k + 1] = -np.sum((1 - a) / (1 - e))
    infl = -psi @ np.linalg.inv(jac).T
    phi = infl[:, k] - infl[:, k + 1]
    return mu1 - mu0, phi


def main():
    df = simulate()
    df.to_csv(DATA, index=False)
    used = df[df["site"] != ""].reset_index(drop=True)
    n = len(used)
    groups = pd.factorize(used["site"])[0]
    g = int(groups.max() + 1)
    sizes = np.bincount(groups)

    x = sm.add_constant(used[["treated", "age", "female"]].to_numpy(float))
    ols = sm.OLS(used["y"].to_numpy(float), x).fit(cov_type="cluster", cov_kwds={"groups": groups})
    ols_plain = sm.OLS(used["y"].to_numpy(float), x).fit(cov_type="HC0")

    diff, phi = hajek_influence(used)
    sums = np.bincount(groups, weights=phi)
    se_cluster = float(np.sqrt(g / (g - 1) * np.sum(sums ** 2)))
    se_rows = float(np.sqrt(np.sum(phi ** 2)))

    out = {
        "source": "statsmodels OLS cov_type='cluster' (use_correction=True); numpy stacked "
        "influence functions for the Hajek IPW difference; invented data tests/data/clustered.csv",
        "versions": {
            "python": sys.version.split()[0],
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "rows": int(len(df)),
        "used": n,
        "clusters": g,
        "min_size": int(sizes.min()),
        "max_size": int(sizes.max()),
        "ols": {
            "coefficient": float(ols.params[1]),
            "cluster_se": float(ols.bse[1]),
            "hc0_se": float(ols_plain.bse[1]),
            "k": int(x.shape[1]),
        },
        "ipw": {
            "difference": float(diff),
            "cluster_se": se_cluster,
            "row_se": se_rows,
        },
    }
    with open(OUT, "w") as f:
        json.dump(out, f, indent=2)
        f.write("\n")
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
