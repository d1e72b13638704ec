"""Prepared for the instrumental-variable check (not read by a test yet).
What If (Hernan & Robins 2020), chapter 16, on NHEFS: the price of
cigarettes in 1982 (price82 >= 1.5, "high price") as an instrument for
quitting smoking (qsmk); outcome wt82_71. Reproduced from the book's
description with statsmodels and numpy."""
import json, os, sys
ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")
import numpy as np, pandas as pd, scipy, statsmodels
import statsmodels.api as sm
from statsmodels.sandbox.regression.gmm import IV2SLS

d = pd.read_csv(os.path.join(ROOT, "tests/data/nhefs.csv"))
d = d[d.wt82_71.notna() & d.price82.notna()].copy()
d["highprice"] = (d.price82 >= 1.5).astype(float)
n = len(d)
y, a, z = d.wt82_71.values, d.qsmk.values.astype(float), d.highprice.values
wald = (y[z == 1].mean() - y[z == 0].mean()) / (a[z == 1].mean() - a[z == 0].mean())
X = sm.add_constant(a); Z = sm.add_constant(z)
iv = IV2SLS(y, X, Z).fit()
# HC0 robust sandwich for 2SLS by hand
b = iv.params
Xh = Z @ np.linalg.solve(Z.T @ Z, Z.T @ X)
u = y - X @ b
bread = np.linalg.inv(Xh.T @ X)
meat = (Xh * u[:, None] ** 2).T @ Xh
hc0 = bread @ meat @ bread.T
fs = sm.OLS(a, Z).fit()
out = {
  "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "pandas": pd.__version__,
               "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
  "n": n, "wald": wald, "tsls": b.tolist(), "tsls_se_classical": iv.bse.tolist(),
  "tsls_se_hc0": np.sqrt(np.diag(hc0)).tolist(),
  "first_stage_f": float(fs.tvalues[1] ** 2), "first_stage_r2": float(fs.rsquared),
}
for cut in (1.6, 1.7, 1.8, 1.9):
    zz = (d.price82 >= cut).astype(float).values
    out[f"wald_{cut}"] = (y[zz == 1].mean() - y[zz == 0].mean()) / (a[zz == 1].mean() - a[zz == 0].mean())
with open(os.path.join(ROOT, "tests/fixtures/iv_reference.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
