#!/usr/bin/env python3
"""Reference fits for the model tests, made with statsmodels (a general-purpose
statistics library) on the NHEFS extract in tests/data/nhefs.csv.

Run from the repository root:  python3 tests/scripts/make_model_fixtures.py
Writes tests/fixtures/nhefs_models.json; `cargo test` reads only that file.

Design (What If, Program 12.2, propensity model): sex, race, age, age^2,
education (categorical), smokeintensity, smokeintensity^2, smokeyrs,
smokeyrs^2, exercise (categorical), active (categorical), wt71, wt71^2; the
outcome model adds qsmk and qsmk:smokeintensity (chapter 13). Sample: the
1566 rows with wt82_71 observed. Term names follow causeway's design builder.
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
df = pd.read_csv(os.path.join(ROOT, "tests", "data", "nhefs.csv"))
df = df[df["wt82_71"].notna()].reset_index(drop=True)
assert len(df) == 1566

cols, names = [np.ones(len(df))], ["(intercept)"]


def add(values, name):
    cols.append(np.asarray(values, dtype=float))
    names.append(name)


for v in ["sex", "race", "age", "education", "smokeintensity", "smokeyrs", "exercise", "active", "wt71"]:
    if v in ("education", "exercise", "active"):
        levels = sorted(df[v].unique())
        for lev in levels[1:]:
            add(df[v] == lev, f"{v}={lev:g}")
    elif v in ("sex", "race"):
        add(df[v], v)
    else:
        add(df[v], v)
        add(df[v] ** 2, f"{v}^2")
X = np.column_stack(cols)
covariate_names = list(names)
a = df["qsmk"].to_numpy(float)
y = df["wt82_71"].to_numpy(float)
Xo = np.column_stack([X[:, :1], a, X[:, 1:], a * df["smokeintensity"].to_numpy(float)])
outcome_names = ["(intercept)", "qsmk"] + covariate_names[1:] + ["qsmk:smokeintensity"]
Xs = np.column_stack([X[:, :1], a, X[:, 1:]])
sens_names = ["(intercept)", "qsmk"] + covariate_names[1:]
# Frequency weights 1 + (row mod 3), row = position among the 1566 complete rows.
w = 1.0 + (np.arange(len(df)) % 3)
rep = w.astype(int)


def ols(Xm, yv, nm):
    f = sm.OLS(yv, Xm).fit()
    r = sm.OLS(yv, Xm).fit(cov_type="HC0")
    return {"names": nm, "coef": f.params.tolist(), "se": f.bse.tolist(),
            "se_hc0": r.bse.tolist(), "df_resid": float(f.df_resid), "t": f.tvalues.tolist()}


def logit(Xm, yv, nm, fw=None):
    f = sm.GLM(yv, Xm, family=sm.families.Binomial(), freq_weights=fw).fit(tol=1e-12)
    return {"names": nm, "coef": f.params.tolist(), "se": f.bse.tolist(), "deviance": float(f.deviance)}


out = {
    "generator": "tests/scripts/make_model_fixtures.py",
    "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "pandas": pd.__version__,
                 "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
    "rows": len(df),
    "freq_weights": "1 + (row mod 3), rows numbered from 0 among the complete cases",
    "propensity_logit": logit(X, a, covariate_names),
    "propensity_logit_freq": logit(X, a, covariate_names, fw=w),
    "outcome_ols": ols(Xo, y, outcome_names),
    # Frequency weights checked by repeating each row w times.
    "outcome_ols_freq": ols(np.repeat(Xo, rep, axis=0), np.repeat(y, rep), outcome_names),
    "sensitivity_outcome_ols": ols(Xs, y, sens_names),
    "sensitivity_exposure_ols": ols(X, a, covariate_names),
}
path = os.path.join(ROOT, "tests", "fixtures", "nhefs_models.json")
with open(path, "w") as fh:
    json.dump(out, fh, indent=1)
    fh.write("\n")
print("wrote", path)
