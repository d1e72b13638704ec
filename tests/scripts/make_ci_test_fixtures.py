#!/usr/bin/env python3
"""Reference values for the conditional independence tests of `causeway check`,
from general-purpose libraries: numpy (least squares), scipy.stats (normal,
chi-square and F tail probabilities), statsmodels (Logit and MNLogit
log-likelihoods, OLS nested F test, multipletests for Holm and
Benjamini-Hochberg).

Run from the repository root:  python3 tests/scripts/make_ci_test_fixtures.py

Writes tests/data/ci_tests.csv (an invented dataset drawn here with numpy's
seeded generator, with some missing cells) and
tests/fixtures/ci_tests_reference.json, recording the library versions.
`cargo test` reads only those files.

Each test uses the rows complete for its own columns. Kinds: a column with
two distinct values is binary, a text column categorical (levels sorted, the
first the reference), anything else continuous. Designs: an intercept, then
each conditioning variable (continuous linear, binary 0/1, categorical as
dummies of the non-reference levels).
"""
import json
import os
import platform

import numpy as np
import pandas as pd
import scipy
import scipy.stats as st
import statsmodels
import statsmodels.api as sm
from statsmodels.stats.multitest import multipletests

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
CSV = os.path.join(ROOT, "tests", "data", "ci_tests.csv")
OUT = os.path.join(ROOT, "tests", "fixtures", "ci_tests_reference.json")
SEED = 20240917
N = 400


def make_data():
    rng = np.random.default_rng(SEED)
    z1 = rng.normal(size=N)
    z2 = rng.normal(size=N)
    # c3: three regions, more 'west' at high z1.
    u = rng.uniform(size=N) + 0.25 * z1
    c3 = np.where(u < 0.35, "north", np.where(u < 0.7, "south", "west"))
    # c4: four groups, shifted by region.
    shift = np.select([c3 == "north", c3 == "south"], [0.0, 0.6], 1.1)
    v = rng.normal(size=N) + shift
    c4 = np.select([v < 0.0, v < 0.6, v < 1.2], ["a", "b", "c"], "d")
    x = 0.5 * z1 + 0.3 * z2 + np.select([c3 == "south", c3 == "west"], [0.4, -0.3], 0.0) + rng.normal(size=N)
    y = 0.4 * z1 - 0.2 * z2 + 0.15 * x + np.select([c4 == "b", c4 == "c", c4 == "d"], [0.2, -0.1, 0.3], 0.0) + rng.normal(size=N)
    bin1 = (rng.uniform(size=N) < 1 / (1 + np.exp(-(0.2 + 0.8 * z1 - 0.5 * (c3 == "west"))))).astype(int)
    p2 = 1 / (1 + np.exp(-(-0.3 + 0.6 * x - 0.4 * z2 + 0.3 * bin1)))
    bin2 = np.where(rng.uniform(size=N) < p2, 7, 3)  # binary coded 3/7
    df = pd.DataFrame(
        {
            "z1": np.round(z1, 6),
            "z2": np.round(z2, 6),
            "c3": c3,
            "c4": c4,
            "x": np.round(x, 6),
            "y": np.round(y, 6),
            "bin1": bin1,
            "bin2": bin2,
        }
    )
    df = df.astype(object)
    for col, k in [("y", 15), ("c4", 10), ("z2", 6), ("bin2", 4)]:
        rows = rng.choice(N, size=k, replace=False)
        df.loc[rows, col] = ""
    df.to_csv(CSV, index=False)
    return pd.read_csv(CSV, keep_default_na=True)


def kind(s):
    if not pd.api.types.is_numeric_dtype(s):
        return "categorical" if s.nunique() > 2 else "binary"
    return "binary" if s.nunique() == 2 else "continuous"


def terms(s):
    """Design columns of one variable."""
    k = kind(s)
    if not pd.api.types.is_numeric_dtype(s) or k == "categorical":
        levels = sorted(s.unique())
        if k == "binary":
            return [(s == levels[1]).astype(float).to_numpy()]
        return [(s == lev).astype(float).to_numpy() for lev in levels[1:]]
    if k == "binary":
        return [(s == s.max()).astype(float).to_numpy()]
    return [s.astype(float).to_numpy()]


def design(d, names):
    cols = [np.ones(len(d))]
    for v in names:
        cols.extend(terms(d[v]))
    return np.column_stack(cols)


def response01(s):
    levels = sorted(s.unique())
    return (s == levels[1]).astype(float).to_numpy()


def case(df, a, b, given):
    d = df[[a, b] + given].dropna().reset_index(drop=True)
    n = len(d)
    ka, kb = kind(d[a]), kind(d[b])
    Z = design(d, given)
    out = {"a": a, "b": b, "given": given, "n": n}
    if ka == "continuous" and kb == "continuous":
        ea = d[a].to_numpy(float) - Z @ np.linalg.lstsq(Z, d[a].to_numpy(float), rcond=None)[0]
        eb = d[b].to_numpy(float) - Z @ np.linalg.lstsq(Z, d[b].to_numpy(float), rcond=None)[0]
        r = float(ea @ eb / np.sqrt((ea @ ea) * (eb @ eb)))
        k = np.linalg.matrix_rank(Z) - 1
        z = float(np.arctanh(r) * np.sqrt(n - k - 3))
        out.update(test="partial correlation (Fisher z)", statistic=z, p_value=float(2 * st.norm.sf(abs(z))),
                   partial_correlation=r, df=None, response=None)
        return out
    if kb == "binary" or ka == "binary":
        resp, other = (b, a) if kb == "binary" else (a, b)
        y = response01(d[resp])
        X0 = Z
        X1 = np.column_stack([Z] + terms(d[other]))
        m0 = sm.Logit(y, X0).fit(method="newton", tol=1e-13, maxiter=200, disp=0)
        m1 = sm.Logit(y, X1).fit(method="newton", tol=1e-13, maxiter=200, disp=0)
        lr = float(2 * (m1.llf - m0.llf))
        dof = int(np.linalg.matrix_rank(X1) - np.linalg.matrix_rank(X0))
        out.update(test="likelihood ratio (logistic)", statistic=lr, p_value=float(st.chi2.sf(lr, dof)), df=dof,
                   response=resp, llf0=float(m0.llf), llf1=float(m1.llf))
        return out
    if ka == "continuous" or kb == "continuous":
        resp, other = (a, b) if ka == "continuous" else (b, a)
        y = d[resp].to_numpy(float)
        X1 = np.column_stack([Z] + terms(d[other]))
        r0 = sm.OLS(y, Z).fit()
        r1 = sm.OLS(y, X1).fit()
        f, p, dfd = r1.compare_f_test(r0)
        out.update(test="F test (nested least squares)", statistic=float(f), p_value=float(p), df=int(dfd),
                   df_denominator=int(r1.df_resid), response=resp)
        return out
    # Both categorical with more than two levels: b is the response.
    levels = sorted(d[b].unique())
    y = np.array([levels.index(v) for v in d[b]])
    X1 = np.column_stack([Z] + terms(d[a]))
    m0 = sm.MNLogit(y, Z).fit(method="newton", tol=1e-13, maxiter=200, disp=0)
    m1 = sm.MNLogit(y, X1).fit(method="newton", tol=1e-13, maxiter=200, disp=0)
    lr = float(2 * (m1.llf - m0.llf))
    dof = int((len(levels) - 1) * (np.linalg.matrix_rank(X1) - np.linalg.matrix_rank(Z)))
    out.update(test="likelihood ratio (multinomial logistic)", statistic=lr, p_value=float(st.chi2.sf(lr, dof)),
               df=dof, response=b, llf0=float(m0.llf), llf1=float(m1.llf))
    return out


CASES = [
    # Fisher z: no conditioning, continuous, continuous with missing, categorical and binary conditioning.
    ("x", "y", []),
    ("x", "y", ["z1"]),
    ("x", "y", ["z1", "z2", "c3"]),
    ("z1", "z2", ["bin1", "c4"]),
    ("z2", "x", ["z1", "bin2"]),
    # Logistic likelihood ratio.
    ("bin1", "x", ["z1"]),
    ("bin1", "y", ["z1", "c3"]),
    ("x", "bin2", ["z2"]),
    ("bin1", "bin2", ["x"]),
    ("bin1", "c4", ["z1"]),
    ("c3", "bin2", ["z1", "x"]),
    ("z1", "bin1", []),
    # Nested least-squares F test.
    ("c3", "y", ["z1"]),
    ("x", "c4", ["z2", "bin1"]),
    ("c3", "x", []),
    # Multinomial likelihood ratio.
    ("c3", "c4", ["z1"]),
    ("c4", "c3", ["x", "bin1"]),
    ("c3", "c4", []),
]


def main():
    df = make_data()
    cases = [case(df, a, b, g) for a, b, g in CASES]
    p = [c["p_value"] for c in cases] + [0.5, 0.5, 1.0, 1e-6, 0.03]
    adj = {
        "p": p,
        "holm": multipletests(p, method="holm")[1].tolist(),
        "bh": multipletests(p, method="fdr_bh")[1].tolist(),
    }
    # Tail probabilities over the range a check meets (up to 10^6 rows).
    tails = []
    for df1 in [1, 2, 3, 6, 12]:
        for df2 in [5, 50, 397, 10_000, 99_990, 1_000_000]:
            for x in [0.01, 0.3, 0.9, 1.1, 2.0, 4.5, 12.0, 60.0]:
                tails.append({"dist": "f", "x": x, "df1": df1, "df2": df2, "sf": float(st.f.sf(x, df1, df2))})
        for x in [0.01, 0.5, 1.0, 3.84, 10.0, 40.0, 150.0, 700.0]:
            tails.append({"dist": "chi2", "x": x, "df1": df1, "sf": float(st.chi2.sf(x, df1))})
    doc = {
        "source": "numpy lstsq, scipy.stats, statsmodels Logit/MNLogit/OLS and multipletests "
        "on tests/data/ci_tests.csv (made by this script)",
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
        "pandas": pd.__version__,
        "python": platform.python_version(),
        "seed": SEED,
        "cases": cases,
        "adjust": adj,
        "tails": tails,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")
    for c in cases:
        print(f"{c['a']:>5} {c['b']:>5} | {','.join(c['given']):<12} n={c['n']} {c['test']:<40} "
              f"stat={c['statistic']:.4f} p={c['p_value']:.4g}")


if __name__ == "__main__":
    main()
