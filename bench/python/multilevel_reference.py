"""The estimate benchmark's 4-level exposure written with pandas, numpy and statsmodels.

The same analysis as the last part of benches/estimate.rs: on the
1,000,000 rows it writes, the first categorical covariate k1 (levels 1 to
4) is the exposure, y the outcome, and the adjustment set the 10 continuous
and 5 binary covariates c1..c10, b1..b5, all entering linearly (k2..k5 and
the binary `a` are not used). As an analyst would write it:

- outcome model: statsmodels OLS of y on an intercept, the dummies of k1
  (reference the lowest level, 1) and the 15 covariates;
- propensity model: statsmodels MNLogit of k1 on an intercept and the 15
  covariates (baseline category the lowest level), method='newton';
- for each level k, the mean outcome had everyone been at level k:
  regression standardisation mean_i m_k(L_i); normalised (Hajek) IPW
  sum_i h_i y_i / sum_i h_i with h_i = 1{A_i = k} / P(A = k | L_i); AIPW
  mean_i [m_k(L_i) + 1{A_i = k} (y_i - m_k(L_i)) / P(A = k | L_i)];
- each level minus the reference level, with a sandwich standard error
  written with numpy: each method's means are stacked with the score
  equations of the model(s) it uses (OLS normal equations; multinomial
  score (1{A = j} - p_j) L for j = 2..4), and the stacked system is solved
  in block-triangular form, so each row's influence on a mean is its own
  term plus the derivative of the mean's equation in the coefficients times
  the inverse information times the row's model score. The variance of a
  contrast is the sum over rows of the squared difference of the two
  influences (no degrees-of-freedom correction), as causeway does.

Computed here and by causeway: the two models, the 4 means and 3
contrasts of each method, their sandwich standard errors and 95% normal
intervals. Computed in causeway's timed part but not here: its problem
preparation (complete cases, codings, the check for aliased terms, the
separation check of the propensity model) and the result records with
their notes. Neither side computes diagnostics, balance, sensitivity or
bootstrap intervals in this benchmark (the bench calls the estimators
directly, not `analysis::run`).

The multinomial covariance from statsmodels is the inverse of the negative
Hessian with its parameters ordered level by level (levels 2, 3, 4, each
with the intercept and the 15 covariates); the scores below use that
order. After the timed runs, `check_sandwich` refits on the first 20,000
rows and compares every contrast's standard error with the textbook
sandwich A^-1 B A^-T / n of the full stacked system (A by central
differences), which checks the derivatives and that order (untimed).

Usage: python multilevel_reference.py DATA.csv
Prints the means and contrasts to 6 decimals (to compare with causeway),
the library versions, the BLAS in use and the times: reading the CSV
(pandas.read_csv, once) and the analysis, the best of CAUSEWAY_BENCH_REPEAT
runs (default 3), every run listed.
"""

import os
import sys
import time

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm
from threadpoolctl import threadpool_info

COVARIATES = [f"c{j}" for j in range(1, 11)] + [f"b{j}" for j in range(1, 6)]
EXPOSURE = "k1"
OUTCOME = "y"
Z95 = 1.959963984540054


class Models:
    """The two fitted models and what their influence functions need."""

    def __init__(self, df):
        self.y = df[OUTCOME].to_numpy(dtype=float)
        self.levels = np.sort(df[EXPOSURE].unique())
        self.code = np.searchsorted(self.levels, df[EXPOSURE].to_numpy())
        self.n = len(self.y)
        self.nk = len(self.levels)
        # Propensity design: intercept and the covariates.
        self.Z = sm.add_constant(df[COVARIATES].to_numpy(dtype=float), has_constant="add")
        # Outcome design: intercept, exposure dummies (levels 2..K), covariates.
        dummies = (self.code[:, None] == np.arange(1, self.nk)[None, :]).astype(float)
        self.X = np.column_stack([self.Z[:, :1], dummies, self.Z[:, 1:]])
        self.ols = sm.OLS(self.y, self.X).fit()
        self.mnl = sm.MNLogit(self.code, self.Z).fit(method="newton", disp=0)
        self.prob = self.mnl.predict(self.Z)  # (n, K): P(A = k | L)
        self.resid = self.y - self.ols.fittedvalues
        self.ols_bread = self.ols.normalized_cov_params  # (X'X)^-1
        self.mnl_cov = np.asarray(self.mnl.cov_params())  # inverse information
        self.onehot = (self.code[:, None] == np.arange(self.nk)[None, :]).astype(float)

    def design_at(self, k):
        """The outcome design with every row set to level k."""
        xk = self.X.copy()
        xk[:, 1 : self.nk] = 0.0
        if k > 0:
            xk[:, k] = 1.0
        return xk

    def ols_influence(self, g):
        """Row i's influence on g'(b - beta): x_i' (X'X)^-1 g e_i."""
        return (self.X @ (self.ols_bread @ g)) * self.resid

    def mnl_influence(self, kmat):
        """Row i's influence on sum_j kmat[:, j]'(gamma_j - gamma_j0), j = levels 2..K.

        kmat is (covariates, K-1); the score of level j is (1{A = j} - p_j) z.
        """
        c = (self.mnl_cov @ kmat.T.ravel()).reshape(self.nk - 1, -1).T
        return np.sum((self.onehot[:, 1:] - self.prob[:, 1:]) * (self.Z @ c), axis=1)

    def dprob(self, k, v):
        """sum_i v_i d p_ik / d gamma_j for j = 2..K, as (covariates, K-1)."""
        pk = self.prob[:, k]
        delta = (np.arange(1, self.nk) == k).astype(float)
        return self.Z.T @ (v[:, None] * pk[:, None] * (delta[None, :] - self.prob[:, 1:]))


def regression(m):
    """Standardisation: means and influences, stacked with the OLS equations."""
    means, infl = [], []
    for k in range(m.nk):
        xk = m.design_at(k)
        pred = xk @ m.ols.params
        mu = pred.mean()
        phi = (pred - mu) / m.n + m.ols_influence(xk.mean(axis=0))
        means.append(mu)
        infl.append(phi)
    return means, infl


def ipw(m):
    """Normalised IPW: means and influences, stacked with the multinomial score."""
    means, infl = [], []
    for k in range(m.nk):
        h = m.onehot[:, k] / m.prob[:, k]
        s = h.sum()
        mu = np.sum(h * m.y) / s
        r = m.y - mu
        # d h_i / d gamma_j = -h_i (1{k = j} - p_ij) z_i.
        delta = (np.arange(1, m.nk) == k).astype(float)
        kmat = -(m.Z.T @ ((h * r)[:, None] * (delta[None, :] - m.prob[:, 1:])))
        phi = (h * r + m.mnl_influence(kmat)) / s
        means.append(mu)
        infl.append(phi)
    return means, infl


def aipw(m):
    """AIPW: means and influences, stacked with both models' equations."""
    means, infl = [], []
    for k in range(m.nk):
        xk = m.design_at(k)
        pred = xk @ m.ols.params
        r = m.onehot[:, k]
        q = m.prob[:, k]
        term = pred + r * (m.y - pred) / q
        mu = term.mean()
        g = xk.T @ ((1.0 - r / q) / m.n)
        dq = -r * (m.y - pred) / (q * q) / m.n
        phi = (term - mu) / m.n + m.ols_influence(g) + m.mnl_influence(m.dprob(k, dq))
        means.append(mu)
        infl.append(phi)
    return means, infl


METHODS = {"regression": regression, "ipw": ipw, "aipw": aipw}


def analysis(df):
    """Both models, then every method's means and contrasts with standard errors."""
    m = Models(df)
    out = {}
    for name, method in METHODS.items():
        means, infl = method(m)
        contrasts = []
        for k in range(1, m.nk):
            est = means[k] - means[0]
            se = np.sqrt(np.sum((infl[k] - infl[0]) ** 2))
            contrasts.append((m.levels[k], est, se))
        out[name] = (means, contrasts)
    return m, out


def stacked(m, method, theta):
    """Row-wise stacked estimating functions of one method at theta.

    theta: OLS coefficients, multinomial coefficients (level by level), the
    K means. Columns: OLS normal equations, multinomial score, mean equations.
    """
    p, q, j = m.X.shape[1], m.Z.shape[1], m.nk - 1
    b, g, mu = theta[:p], theta[p : p + j * q].reshape(j, q).T, theta[p + j * q :]
    eta = np.column_stack([np.zeros(m.n), m.Z @ g])
    prob = np.exp(eta - eta.max(axis=1, keepdims=True))
    prob /= prob.sum(axis=1, keepdims=True)
    cols = [m.X * (m.y - m.X @ b)[:, None]]
    cols += [m.Z * (m.onehot[:, l] - prob[:, l])[:, None] for l in range(1, m.nk)]
    for k in range(m.nk):
        pred, r = m.design_at(k) @ b, m.onehot[:, k]
        f = {
            "regression": pred - mu[k],
            "ipw": r / prob[:, k] * (m.y - mu[k]),
            "aipw": pred + r * (m.y - pred) / prob[:, k] - mu[k],
        }[method]
        cols.append(f[:, None])
    return np.concatenate(cols, axis=1)


def check_sandwich(df, rows=20000):
    """The influence-function standard errors against the textbook sandwich.

    Refits on the first `rows` rows and forms A^-1 B A^-T / n from the
    stacked estimating functions, A by central differences: checks the
    derivatives and the multinomial parameter order the fast path assumes.
    Returns the largest relative difference of a contrast's standard error.
    """
    m, out = analysis(df.iloc[:rows])
    worst = 0.0
    for name, (means, contrasts) in out.items():
        theta = np.concatenate([m.ols.params, np.asarray(m.mnl.params).T.ravel(), means])
        psi = stacked(m, name, theta)
        a = np.empty((len(theta), len(theta)))
        for c in range(len(theta)):
            h = 1e-6 * max(1.0, abs(theta[c]))
            up, down = theta.copy(), theta.copy()
            up[c] += h
            down[c] -= h
            a[:, c] = (stacked(m, name, up).mean(axis=0) - stacked(m, name, down).mean(axis=0)) / (2 * h)
        ai = np.linalg.inv(a)
        v = ai @ (psi.T @ psi / m.n) @ ai.T / m.n
        ref = len(theta) - m.nk
        for k, (_, _, se) in enumerate(contrasts, start=1):
            i = ref + k
            textbook = np.sqrt(v[i, i] + v[ref, ref] - 2 * v[i, ref])
            worst = max(worst, abs(se / textbook - 1))
    return worst


def main():
    path = sys.argv[1]
    t0 = time.perf_counter()
    df = pd.read_csv(path)
    read = time.perf_counter() - t0

    repeat = max(1, int(os.environ.get("CAUSEWAY_BENCH_REPEAT", "3")))
    runs = []
    for _ in range(repeat):
        t1 = time.perf_counter()
        m, out = analysis(df)
        runs.append(time.perf_counter() - t1)
    elapsed = min(runs)
    worst = check_sandwich(df)

    print(
        f"rows {m.n}, exposure {EXPOSURE} ({m.nk} levels, reference {m.levels[0]}), "
        f"outcome design {m.X.shape[1]} columns, propensity design {m.Z.shape[1]} columns, "
        f"newton iterations {m.mnl.mle_retvals['iterations']}"
    )
    for name, (means, contrasts) in out.items():
        listed = ", ".join(f"{lv}: {mu:.6f}" for lv, mu in zip(m.levels, means))
        print(f"{name:>10} means     {listed}")
        for lv, est, se in contrasts:
            print(
                f"{name:>10} {lv} vs {m.levels[0]}    {est:.6f} (SE {se:.6f}, "
                f"95% CI {est - Z95 * se:.6f} to {est + Z95 * se:.6f})"
            )
    print(
        f"numpy {np.__version__}, pandas {pd.__version__}, statsmodels {statsmodels.__version__}, "
        f"python {sys.version.split()[0]}"
    )
    for lib in threadpool_info():
        print(
            f"blas: {lib.get('internal_api')} {lib.get('version')}, "
            f"threads {lib.get('num_threads')}, kernel {lib.get('architecture')}"
        )
    print(
        f"standard errors against the textbook stacked sandwich (first 20,000 rows, "
        f"derivatives by central differences): largest relative difference {worst:.1e}"
    )
    print(f"read CSV (pandas.read_csv)  {read:.3f} s")
    listed = ", ".join(f"{t:.3f} s" for t in runs)
    print(f"analysis                    {elapsed:.3f} s (best of {repeat}: {listed})")


if __name__ == "__main__":
    main()
