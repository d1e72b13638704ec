"""The bootstrap benchmark's analysis written with pandas and statsmodels.

The same analysis as benches/bootstrap.rs (causeway::analysis::run with
regression, ipw and aipw and 200 bootstrap replicates), vectorized the way
an analyst would write it: the design matrix is built once with pandas
(dummies for k1..k5, lowest level the reference), each replicate draws row
indices with numpy, refits the logistic propensity model (statsmodels Logit,
Newton, warm-started from the full-sample fit) and the least-squares outcome
model with the exposure term (statsmodels OLS), and forms

- regression standardization: mean of m1(L) - m0(L);
- Hajek IPW: weighted means with weights A/e and (1-A)/(1-e), each divided
  by the sum of its weights;
- AIPW: mean of m1 + A (Y - m1) / e minus mean of m0 + (1-A) (Y - m0) / (1-e);

then the 2.5% and 97.5% percentiles of the 200 replicates of each.

Usage: python bootstrap_reference.py DATA.csv [REPLICATES]
Prints the point estimates (to compare with the Rust benchmark's), the
percentile intervals, the library versions, the BLAS in use and the time:
the best of CAUSEWAY_BENCH_REPEAT runs (default 3), as the Rust benchmark
reports, every run listed.
"""

import os
import sys
import time

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm
from threadpoolctl import threadpool_info

CONT = [f"c{j}" for j in range(1, 11)]
BIN = [f"b{j}" for j in range(1, 6)]
CAT = [f"k{j}" for j in range(1, 6)]


def design(df):
    """Intercept, continuous and binary columns, dummies of the categorical ones."""
    x = pd.get_dummies(df[CONT + BIN + CAT], columns=CAT, drop_first=True, dtype=float)
    return sm.add_constant(x, has_constant="add").to_numpy()


def effects(L, a, y, ps_start=None):
    """Regression, Hajek IPW and AIPW estimates of the ATE on one sample."""
    ps = sm.Logit(a, L).fit(disp=0, method="newton", start_params=ps_start)
    e = ps.predict(L)
    om = sm.OLS(y, np.column_stack([L, a])).fit()
    n = len(y)
    m1 = om.predict(np.column_stack([L, np.ones(n)]))
    m0 = om.predict(np.column_stack([L, np.zeros(n)]))
    regression = np.mean(m1 - m0)
    w1, w0 = a / e, (1 - a) / (1 - e)
    ipw = np.sum(w1 * y) / np.sum(w1) - np.sum(w0 * y) / np.sum(w0)
    aipw = np.mean(m1 + w1 * (y - m1)) - np.mean(m0 + w0 * (y - m0))
    return np.array([regression, ipw, aipw]), ps.params


def main():
    path = sys.argv[1]
    replicates = int(sys.argv[2]) if len(sys.argv) > 2 else 200
    t0 = time.perf_counter()
    df = pd.read_csv(path)
    read = time.perf_counter() - t0

    repeat = max(1, int(os.environ.get("CAUSEWAY_BENCH_REPEAT", "3")))
    runs = []
    for _ in range(repeat):
        t1 = time.perf_counter()
        L = design(df)
        a = df["a"].to_numpy(dtype=float)
        y = df["y"].to_numpy(dtype=float)
        n = len(y)
        point, ps_params = effects(L, a, y)
        rng = np.random.default_rng(1)
        draws = np.empty((replicates, 3))
        for b in range(replicates):
            idx = rng.integers(0, n, n)
            draws[b], _ = effects(L[idx], a[idx], y[idx], ps_params)
        lo, hi = np.percentile(draws, [2.5, 97.5], axis=0)
        runs.append(time.perf_counter() - t1)
    elapsed = min(runs)

    print(f"rows {n}, design columns {L.shape[1]}, replicates {replicates}")
    for name, p, l, h in zip(["regression", "ipw", "aipw"], point, lo, hi):
        print(f"{name:>10}: {p:.6f} (bootstrap percentile CI {l:.4f} to {h:.4f})")
    print(
        f"numpy {np.__version__}, pandas {pd.__version__}, statsmodels {statsmodels.__version__}, "
        f"python {sys.version.split()[0]}"
    )
    for lib in threadpool_info():
        print(
            f"blas: {lib.get('internal_api')} {lib.get('version')}, "
            f"threads {lib.get('num_threads')}, kernel {lib.get('architecture')}"
        )
    print(f"read CSV                    {read:.3f} s")
    listed = ", ".join(f"{t:.3f} s" for t in runs)
    print(f"analysis with {replicates} replicates {elapsed:.3f} s (best of {repeat}: {listed})")
    print(f"per replicate               {1000 * elapsed / (replicates + 1):.1f} ms")


if __name__ == "__main__":
    main()
