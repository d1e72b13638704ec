"""Reference values for weighting a missing outcome by the inverse probability
of its being observed (`--missing weight`), on NHEFS as in Hernan & Robins,
Causal Inference: What If (2020), section 12.6 (inverse probability of
censoring weights for the 63 rows missing wt82_71): the book's analysis
reproduced with statsmodels, and the standard error of the same estimator by
stacked estimating equations (propensity model, model of being observed and
its numerator, the two weighted means) computed with numpy, which accounts for
the estimation of every model (the book's robust standard error treats the
weights as known).

Versions used: statsmodels 0.15.0, numpy 2.4.6, pandas 3.1.1, scipy 1.17.1.
Run from the repository root:
    python3 tests/scripts/make_ipcw_fixtures.py > tests/fixtures/ipcw_reference.json
"""
import json, sys
import numpy as np, pandas as pd, statsmodels, scipy
import statsmodels.api as sm
import statsmodels.formula.api as smf

d = pd.read_csv(sys.argv[1] if len(sys.argv) > 1 else "tests/data/nhefs.csv")
ps_terms = ("sex + race + age + I(age**2) + C(education) + smokeintensity + I(smokeintensity**2)"
            " + smokeyrs + I(smokeyrs**2) + C(exercise) + C(active) + wt71 + I(wt71**2)")
out = {"source": "What If (Hernan & Robins 2020), section 12.6, on tests/data/nhefs.csv",
       "versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                    "pandas": pd.__version__, "scipy": scipy.__version__}}

# The book's analysis: stabilized exposure weights times stabilized weights of
# being observed, a weighted model of the outcome on qsmk over the observed rows.
d["cens"] = d.wt82_71.isna().astype(int)
den = smf.glm("qsmk ~ " + ps_terms, data=d, family=sm.families.Binomial()).fit()
num = smf.glm("qsmk ~ 1", data=d, family=sm.families.Binomial()).fit()
pdn = np.where(d.qsmk == 1, den.predict(d), 1 - den.predict(d))
pnn = np.where(d.qsmk == 1, num.predict(d), 1 - num.predict(d))
d["sw_a"] = pnn / pdn
cden = smf.glm("cens ~ qsmk + " + ps_terms, data=d, family=sm.families.Binomial()).fit()
cnum = smf.glm("cens ~ qsmk", data=d, family=sm.families.Binomial()).fit()
d["sw_c"] = (1 - cnum.predict(d)) / (1 - cden.predict(d))
d["sw"] = d.sw_a * d.sw_c
o = d[d.cens == 0]
msm = smf.gee("wt82_71 ~ qsmk", groups=o.seqn, data=o, weights=o.sw,
              cov_struct=sm.cov_struct.Independence(), family=sm.families.Gaussian()).fit()
out["book"] = {"n_all": int(len(d)), "n_observed": int(len(o)), "outcome_missing": int(d.cens.sum()),
               "sw_mean": float(o.sw.mean()), "sw_min": float(o.sw.min()), "sw_max": float(o.sw.max()),
               "swc_mean": float(o.sw_c.mean()), "swc_min": float(o.sw_c.min()),
               "swc_max": float(o.sw_c.max()),
               "ate": float(msm.params["qsmk"]), "robust_se": float(msm.bse["qsmk"])}

# Stacked estimating equations, every model estimated (numpy).
X = np.asarray(den.model.exog)                     # propensity: 1 + L terms
Z = np.asarray(cden.model.exog)                    # observed: 1 + qsmk + L terms
V = np.asarray(cnum.model.exog)                    # numerator: 1 + qsmk
A = d.qsmk.to_numpy(float)
R = 1.0 - d.cens.to_numpy(float)
Y = np.nan_to_num(d.wt82_71.to_numpy(float))
expit = lambda x: 1.0 / (1.0 + np.exp(-x))
kx, kz, kv = X.shape[1], Z.shape[1], V.shape[1]


def estfun(theta):
    ga, gd, gn = theta[:kx], theta[kx:kx + kz], theta[kx + kz:kx + kz + kv]
    mu1, mu0 = theta[-2], theta[-1]
    e = expit(X @ ga)
    pd_ = expit(Z @ gd)   # P(observed | A, L)
    pn = expit(V @ gn)    # P(observed | A)
    c = R * pn / pd_
    u = [X * (A - e)[:, None], Z * (R - pd_)[:, None], V * (R - pn)[:, None],
         (c * A / e * (Y - mu1))[:, None], (c * (1 - A) / (1 - e) * (Y - mu0))[:, None]]
    return np.hstack(u)


# Logistic fits of "observed" (not "censored"): the coefficients change sign.
theta = np.concatenate([np.asarray(den.params), -np.asarray(cden.params), -np.asarray(cnum.params), [0, 0]])
c0 = R * expit(V @ theta[kx + kz:kx + kz + kv]) / expit(Z @ theta[kx:kx + kz])
e0 = expit(X @ theta[:kx])
theta[-2] = np.sum(c0 * A / e0 * Y) / np.sum(c0 * A / e0)
theta[-1] = np.sum(c0 * (1 - A) / (1 - e0) * Y) / np.sum(c0 * (1 - A) / (1 - e0))
n = len(Y)
U = estfun(theta)
assert np.abs(U.sum(axis=0)).max() < 1e-6, np.abs(U.sum(axis=0)).max()
# Jacobian of the summed estimating functions by central differences.
J = np.zeros((len(theta), len(theta)))
for j in range(len(theta)):
    h = 1e-6 * max(1.0, abs(theta[j]))
    tp, tm = theta.copy(), theta.copy()
    tp[j] += h
    tm[j] -= h
    J[:, j] = (estfun(tp).sum(axis=0) - estfun(tm).sum(axis=0)) / (2 * h)
Ji = np.linalg.inv(J)
cov = Ji @ (U.T @ U) @ Ji.T
g = np.zeros(len(theta))
g[-2], g[-1] = 1.0, -1.0
out["stacked"] = {"mu1": float(theta[-2]), "mu0": float(theta[-1]), "ate": float(theta[-2] - theta[-1]),
                  "std_error": float(np.sqrt(g @ cov @ g))}
json.dump(out, sys.stdout, indent=1)
print()
