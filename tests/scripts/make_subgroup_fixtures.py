#!/usr/bin/env python3
"""Reference values for effects within subgroups, on the NHEFS data
(tests/data/nhefs.csv), made with statsmodels and numpy.

(a) What If (Hernan & Robins 2020), section 12.5: effect modification by
    sex. The marginal structural model E[Y^a | V] = b0 + b1 a + b2 V + b3 a V
    with stabilised weights P(A | sex) / P(A | L) (statsmodels GEE with an
    independence working correlation, robust standard errors that treat the
    weights as known). b1 is the effect in men (sex = 0), b1 + b3 the effect
    in women (sex = 1).
(b) The within-stratum normalised (Hajek) IPW differences with weights
    1 / P(A | L) from the same propensity model. The MSM is saturated in
    (a, V), and P(A | sex) is constant within each stratum and arm, so these
    equal b1 and b1 + b3.
(c) Regression standardisation per stratum: least squares of wt82_71 on
    qsmk, the propensity terms and qsmk x sex, each row predicted with qsmk
    set to 1 and to 0, averaged within each level of sex.
(d) For (b) and (c), the Wald statistic that the two stratum differences are
    equal, (c1 - c0)^2 / Var(c1 - c0), with the variance from the stacked
    estimating equations of every fitted model (numpy): theta = (model
    coefficients, the four stratum means), A = sum_i d psi_i / d theta',
    B = sum_i psi_i psi_i', V = A^-1 B A^-T (no small-sample factor).

Run from the repository root:  python3 tests/scripts/make_subgroup_fixtures.py
Writes tests/fixtures/subgroup_reference.json, which records the library
versions. Made with statsmodels 0.15.0, numpy 2.4.6, pandas 3.1.1,
scipy 1.17.1.
"""
import json

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
import statsmodels.formula.api as smf
from scipy import stats

d = pd.read_csv("tests/data/nhefs.csv")
ps_terms = ("sex + race + age + I(age**2) + C(education) + smokeintensity + I(smokeintensity**2)"
            " + smokeyrs + I(smokeyrs**2) + C(exercise) + C(active) + wt71 + I(wt71**2)")
out = {"source": "What If (Hernan & Robins 2020) section 12.5 on tests/data/nhefs.csv",
       "versions": {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                    "pandas": pd.__version__, "scipy": scipy.__version__}}

c = d[d.wt82_71.notna()].copy().reset_index(drop=True)

# (a) the book's MSM
den = smf.glm("qsmk ~ " + ps_terms, data=c, family=sm.families.Binomial()).fit()
num = smf.glm("qsmk ~ sex", data=c, family=sm.families.Binomial()).fit()
e = den.predict(c).to_numpy()
pd_ = np.where(c.qsmk == 1, e, 1 - e)
pn = np.where(c.qsmk == 1, num.predict(c), 1 - num.predict(c))
c["sw"] = pn / pd_
msm = smf.gee("wt82_71 ~ qsmk + sex + qsmk:sex", groups=c.seqn, data=c, weights=c.sw,
              cov_struct=sm.cov_struct.Independence(), family=sm.families.Gaussian()).fit()
out["msm"] = {"n": int(len(c)),
              "coef": {k: float(v) for k, v in msm.params.items()},
              "robust_se": {k: float(v) for k, v in msm.bse.items()},
              "effect_sex0": float(msm.params["qsmk"]),
              "effect_sex1": float(msm.params["qsmk"] + msm.params["qsmk:sex"])}

a = c.qsmk.to_numpy(dtype=float)
y = c.wt82_71.to_numpy(dtype=float)
s = c.sex.to_numpy(dtype=float)
n = len(c)
X = den.model.exog  # propensity design, same terms as the book's
m = [(s == 0).astype(float), (s == 1).astype(float)]


def wald(theta, A, psi, contrast):
    """Wald statistic of the linear contrast of theta from the stacked sandwich."""
    Ainv = np.linalg.inv(A)
    V = Ainv @ (psi.T @ psi) @ Ainv.T
    g = np.asarray(contrast)
    est = g @ theta
    var = g @ V @ g
    return float(est), float(np.sqrt(var)), float(est * est / var)


# (b) Hajek IPW within strata, with the stacked covariance
h = [(1 - a) / (1 - e), a / e]          # arm 0, arm 1
dh = [(1 - a) / (1 - e) ** 2, -a / e ** 2]  # d h / d e
mu = np.array([[np.sum(m[k] * h[j] * y) / np.sum(m[k] * h[j]) for j in (0, 1)] for k in (0, 1)])
ipw = {f"sex{k}": {"mean_unexposed": float(mu[k, 0]), "mean_exposed": float(mu[k, 1]),
                   "difference": float(mu[k, 1] - mu[k, 0])} for k in (0, 1)}
p = X.shape[1]
order = [(0, 0), (0, 1), (1, 0), (1, 1)]  # (stratum, arm)
psi = np.zeros((n, p + 4))
A = np.zeros((p + 4, p + 4))
psi[:, :p] = X * (a - e)[:, None]
A[:p, :p] = -(X * (e * (1 - e))[:, None]).T @ X
for q, (k, j) in enumerate(order):
    r = y - mu[k, j]
    psi[:, p + q] = m[k] * h[j] * r
    A[p + q, :p] = (m[k] * r * dh[j] * e * (1 - e)) @ X
    A[p + q, p + q] = -np.sum(m[k] * h[j])
theta = np.concatenate([den.params.to_numpy(), mu.reshape(-1)])
g = np.zeros(p + 4)
g[p + 3], g[p + 2], g[p + 1], g[p + 0] = 1, -1, -1, 1  # (mu11 - mu10) - (mu01 - mu00)
diff, se, stat = wald(theta, A, psi, g)
for k in (0, 1):
    gk = np.zeros(p + 4)
    gk[p + 2 * k + 1], gk[p + 2 * k] = 1, -1
    ipw[f"sex{k}"]["std_error"] = wald(theta, A, psi, gk)[1]
ipw["heterogeneity"] = {"difference": diff, "std_error": se, "statistic": stat,
                        "df": 1, "p_value": float(stats.chi2.sf(stat, 1))}
out["ipw"] = ipw

# (c) regression standardisation within strata
om = smf.ols("wt82_71 ~ qsmk + " + ps_terms + " + qsmk:sex", data=c).fit()
Z = om.model.exog
# Only the columns qsmk and qsmk:sex involve the exposure: set them.
names = list(om.model.exog_names)
Z1, Z0 = Z.copy(), Z.copy()
Z1[:, names.index("qsmk")], Z0[:, names.index("qsmk")] = 1.0, 0.0
Z1[:, names.index("qsmk:sex")], Z0[:, names.index("qsmk:sex")] = s, 0.0
b = om.params.to_numpy()
c1 = c.copy()
c1["qsmk"] = 1
assert np.allclose(Z1 @ b, om.predict(c1).to_numpy())
reg = {}
mus = np.zeros((2, 2))
for k in (0, 1):
    mus[k, 1] = np.sum(m[k] * (Z1 @ b)) / np.sum(m[k])
    mus[k, 0] = np.sum(m[k] * (Z0 @ b)) / np.sum(m[k])
    reg[f"sex{k}"] = {"mean_unexposed": float(mus[k, 0]), "mean_exposed": float(mus[k, 1]),
                      "difference": float(mus[k, 1] - mus[k, 0])}
q_ = Z.shape[1]
psi = np.zeros((n, q_ + 4))
A = np.zeros((q_ + 4, q_ + 4))
psi[:, :q_] = Z * (y - Z @ b)[:, None]
A[:q_, :q_] = -Z.T @ Z
for q, (k, j) in enumerate(order):
    Zj = Z1 if j == 1 else Z0
    psi[:, q_ + q] = m[k] * (Zj @ b - mus[k, j])
    A[q_ + q, :q_] = m[k] @ Zj
    A[q_ + q, q_ + q] = -np.sum(m[k])
theta = np.concatenate([b, mus.reshape(-1)])
g = np.zeros(q_ + 4)
g[q_ + 3], g[q_ + 2], g[q_ + 1], g[q_ + 0] = 1, -1, -1, 1
diff, se, stat = wald(theta, A, psi, g)
for k in (0, 1):
    gk = np.zeros(q_ + 4)
    gk[q_ + 2 * k + 1], gk[q_ + 2 * k] = 1, -1
    reg[f"sex{k}"]["std_error"] = wald(theta, A, psi, gk)[1]
reg["heterogeneity"] = {"difference": diff, "std_error": se, "statistic": stat,
                        "df": 1, "p_value": float(stats.chi2.sf(stat, 1))}
out["regression"] = reg

with open("tests/fixtures/subgroup_reference.json", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(json.dumps(out, indent=1))
