"""The survival benchmark's analysis written with pandas and statsmodels.

The same analysis as benches/survival.rs (causeway::analysis::run with the
IP-weighted and the standardised pooled logistic hazard curves, horizons 60
and 120, period 1, and 200 bootstrap replicates), written the way an analyst
would (What If, chapter 17): expand the people to person-months with pandas
once, then in each replicate draw people with numpy, refit the logistic
propensity model (statsmodels Logit) and both hazard models (statsmodels
GLM Binomial on the resampled person-months: event ~ a + t + t^2 + a:t +
a:t^2, IP-weighted; and the same with l1..l5, unweighted), predict survival
to 120 under a = 0 and a = 1 (the standardised one for everyone, averaged),
and form the risk differences and ratios at 60 and 120 and the restricted
mean difference to 120; then the 2.5% and 97.5% percentiles.

Usage: python survival_reference.py DATA.csv [REPLICATES]
Prints the full-sample survival at 120, the intervals, the library versions
and the time: the best of CAUSEWAY_BENCH_REPEAT runs (default 3).
"""

import os
import sys
import time

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.api as sm

K = 120
COV = ["l1", "l2", "l3", "l4", "l5"]


def hazard_design(a, t, cov=None):
    t = t.astype(float)
    cols = [np.ones_like(t), a, t, t * t, a * t, a * t * t]
    if cov is not None:
        cols.extend(cov.T)
    return np.column_stack(cols)


def analysis(df, pp, people_idx):
    """Every measure on the people `people_idx` (with repeats)."""
    d = df.iloc[people_idx].reset_index(drop=True)
    X = np.column_stack([np.ones(len(d)), d[COV].to_numpy()])
    ps = sm.Logit(d["a"].to_numpy(), X).fit(disp=0)
    # Each original person's weight (copies of a person share it).
    e = ps.predict(np.column_stack([np.ones(len(df)), df[COV].to_numpy()]))
    w = np.where(df["a"] == 1, 1 / e, 1 / (1 - e))
    # Person-months of the drawn people, repeats kept.
    counts = np.bincount(people_idx, minlength=len(df))
    rows = np.repeat(np.arange(len(pp)), counts[pp["person"].to_numpy()])
    q = pp.iloc[rows]
    y = q["event"].to_numpy()
    a = q["a"].to_numpy(float)
    t = q["time"].to_numpy()
    ipw = sm.GLM(y, hazard_design(a, t), family=sm.families.Binomial(),
                 freq_weights=w[q["person"].to_numpy()]).fit()
    gf = sm.GLM(y, hazard_design(a, t, q[COV].to_numpy()), family=sm.families.Binomial()).fit()
    grid = np.arange(K)
    out = {}
    for lev in (0, 1):
        h = ipw.predict(hazard_design(np.full(K, float(lev)), grid))
        s_ipw = np.concatenate([[1.0], np.cumprod(1 - h)])
        Xg = hazard_design(np.full(len(d) * K, float(lev)), np.tile(grid, len(d)),
                           np.repeat(d[COV].to_numpy(), K, axis=0))
        hg = gf.predict(Xg).reshape(len(d), K)
        s_gf = np.concatenate([np.ones((len(d), 1)), np.cumprod(1 - hg, axis=1)], axis=1).mean(axis=0)
        out[lev] = (s_ipw, s_gf)
    res = []
    for m in (0, 1):
        s1, s0 = out[1][m], out[0][m]
        for hz in (60, 120):
            res += [(1 - s1[hz]) - (1 - s0[hz]), (1 - s1[hz]) / (1 - s0[hz])]
        res.append(s1[:K].sum() - s0[:K].sum())
    return np.array(res), out


def main():
    path = sys.argv[1]
    reps = int(sys.argv[2]) if len(sys.argv) > 2 else 200
    repeat = int(os.environ.get("CAUSEWAY_BENCH_REPEAT", "3"))
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        df = pd.read_csv(path)
        m = df["month"].to_numpy()
        idx = np.repeat(np.arange(len(df)), m)
        pp = df.iloc[idx].reset_index(drop=True)
        pp["person"] = idx
        pp["time"] = np.concatenate([np.arange(k) for k in m])
        pp["event"] = ((pp["time"] == pp["month"] - 1) & (pp["event"] == 1)).astype(float)
        full, curves = analysis(df, pp, np.arange(len(df)))
        rng = np.random.default_rng(1)
        draws = np.array([analysis(df, pp, rng.integers(0, len(df), len(df)))[0] for _ in range(reps)])
        lo, hi = np.percentile(draws, [2.5, 97.5], axis=0)
        times.append(time.perf_counter() - t0)
    for lev in (1, 0):
        print(f"a={lev}: survival at 120 ipw {curves[lev][0][K]:.6f}, standardised {curves[lev][1][K]:.6f}")
    for k, v in enumerate(full):
        print(f"measure {k}: {v:.6f} ({lo[k]:.5f} to {hi[k]:.5f})")
    print(f"numpy {np.__version__}, pandas {pd.__version__}, statsmodels {statsmodels.__version__}")
    print(f"time {min(times):.2f} s (best of {repeat}: {', '.join(f'{t:.2f}' for t in times)})")


if __name__ == "__main__":
    main()
