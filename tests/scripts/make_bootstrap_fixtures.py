#!/usr/bin/env python3
"""Reference values for the bootstrap engine (src/infer/bootstrap.rs).

Run from the repository root:  python3 tests/scripts/make_bootstrap_fixtures.py

1. Draws a small dataset (n = 30: x exponential, y = 2 + x + normal noise)
   with numpy and writes tests/data/bootstrap_sample.csv.
2. Asks the crate for its bootstrap resamples (frequency weights) of 30 rows,
   2000 replicates, seed 7, through `cargo run --example bootstrap_resamples`,
   and stores them in tests/fixtures/bootstrap_weights_n30_b2000_seed7.txt.
3. On those very resamples computes three statistics (mean of x, ratio of
   means mean(y)/mean(x), Pearson correlation of x and y), then the
   percentile, BCa and normal intervals with scipy: the BCa levels come from
   scipy.stats's own BCa routine (scipy.stats._resampling._bca_interval, the
   code behind scipy.stats.bootstrap(method='BCa'), which computes z0 and the
   jackknife acceleration from the data), and the quantiles from
   scipy.stats.quantile (method 'linear'), as scipy.stats.bootstrap does.
4. Runs scipy.stats.bootstrap itself with its own 20000 resamples, for a
   comparison within Monte Carlo error.
Writes tests/fixtures/bootstrap_scipy.json with the library versions.
"""

import json
import pathlib
import subprocess
import sys

import numpy as np
import scipy
from scipy import stats
from scipy.stats import _resampling

ROOT = pathlib.Path(__file__).resolve().parents[2]
N, B, SEED = 30, 2000, 7
LEVEL = 0.95
ALPHA = (1 - LEVEL) / 2


def make_data():
    rng = np.random.default_rng(20240607)
    x = rng.exponential(1.0, N)
    y = 2.0 + x + rng.normal(0.0, 0.7, N)
    path = ROOT / "tests" / "data" / "bootstrap_sample.csv"
    with open(path, "w") as f:
        f.write("x,y\n")
        for a, b in zip(x, y):
            f.write(f"{float(a)!r},{float(b)!r}\n")
    return x, y


def rust_weights():
    out = subprocess.run(
        ["cargo", "run", "--quiet", "--example", "bootstrap_resamples", "--",
         str(N), str(B), str(SEED)],
        cwd=ROOT, check=True, capture_output=True, text=True).stdout
    path = ROOT / "tests" / "fixtures" / f"bootstrap_weights_n{N}_b{B}_seed{SEED}.txt"
    path.write_text(out)
    w = np.array([[int(c) for c in line.split()] for line in out.splitlines()], dtype=float)
    assert w.shape == (B, N) and np.all(w.sum(axis=1) == N)
    return w


def main():
    x, y = make_data()
    w = rust_weights()
    idx = np.arange(N)

    def stat_mean(i, axis=-1):
        return x[i].mean(axis=axis)

    def stat_ratio(i, axis=-1):
        return y[i].mean(axis=axis) / x[i].mean(axis=axis)

    def stat_corr(i, axis=-1):
        a, b = x[i], y[i]
        a = a - a.mean(axis=axis, keepdims=True)
        b = b - b.mean(axis=axis, keepdims=True)
        return (a * b).sum(axis=axis) / np.sqrt((a * a).sum(axis=axis) * (b * b).sum(axis=axis))

    # Replicate values from the frequency weights: a weighted statistic with
    # integer counts equals the statistic on the resample with repeated rows.
    wsum = w.sum(axis=1)
    mx = (w * x).sum(axis=1) / wsum
    my = (w * y).sum(axis=1) / wsum
    cx = x[None, :] - mx[:, None]
    cy = y[None, :] - my[:, None]
    corr_b = (w * cx * cy).sum(axis=1) / np.sqrt((w * cx * cx).sum(axis=1) * (w * cy * cy).sum(axis=1))
    replicate_values = {"mean": mx, "ratio": my / mx, "correlation": corr_b}
    statistics = {"mean": stat_mean, "ratio": stat_ratio, "correlation": stat_corr}

    # Cross-check the weighted form against explicit resampling for a few
    # replicates.
    for r in range(5):
        rows = np.repeat(idx, w[r].astype(int))
        assert abs(stat_ratio(rows) - replicate_values["ratio"][r]) < 1e-12

    z = stats.norm.ppf(1 - ALPHA)
    result = {
        "source": "tests/scripts/make_bootstrap_fixtures.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                     "scipy": scipy.__version__},
        "n": N, "replicates": B, "seed": SEED, "level": LEVEL,
        "same_resamples": {}, "scipy_bootstrap": {},
    }
    for name, f in statistics.items():
        theta_b = replicate_values[name]
        theta_hat = float(f(idx))
        a1, a2, a_hat = _resampling._bca_interval(
            (idx,), f, axis=-1, alpha=ALPHA, theta_hat_b=theta_b, batch=None, xp=np)
        a1, a2 = float(a1), float(a2)
        bca = stats.quantile(theta_b, [a1, a2], method="linear")
        pct = stats.quantile(theta_b, [ALPHA, 1 - ALPHA], method="linear")
        se = float(np.std(theta_b, ddof=1))
        result["same_resamples"][name] = {
            "estimate": theta_hat,
            "std_error": se,
            "percentile": [float(pct[0]), float(pct[1])],
            "bca": [float(bca[0]), float(bca[1])],
            "bca_levels": [a1, a2],
            "acceleration": float(a_hat),
            "normal": [theta_hat - z * se, theta_hat + z * se],
        }
        own = {}
        for method in ("percentile", "BCa"):
            res = stats.bootstrap((idx,), f, n_resamples=20000, method=method,
                                  confidence_level=LEVEL, vectorized=True,
                                  rng=np.random.default_rng(11))
            ci = res.confidence_interval
            own[method.lower()] = [float(ci.low), float(ci.high)]
            own["std_error"] = float(res.standard_error)
        result["scipy_bootstrap"][name] = own

    out = ROOT / "tests" / "fixtures" / "bootstrap_scipy.json"
    out.write_text(json.dumps(result, indent=2) + "\n")
    print(f"wrote {out}")


if __name__ == "__main__":
    main()
