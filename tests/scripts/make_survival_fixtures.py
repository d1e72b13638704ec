#!/usr/bin/env python3
"""Reference values for time-to-event outcomes, made with statsmodels (a
general-purpose statistics library) and numpy.

1. NHEFS (tests/data/nhefs.csv, attribution in tests/data/README.md), the
   analysis of Hernan MA, Robins JM. Causal Inference: What If (2020),
   chapter 17, reproduced from the book's description: the effect of quitting
   smoking (qsmk) on death by 120 months of follow-up from January 1983.
   - Follow-up time survtime in months: (yrdth - 83) * 12 + modth for the
     deaths (all within 1983-1992), 120 for the others. Written with the
     columns the analysis uses to tests/data/nhefs_survival.csv, because
     causeway does not derive columns.
   - Person-months: a person with survtime s is at risk in months
     k = 0, ..., s - 1 (time = k), the event (death) in month s - 1.
   - IP weights 1 / P(A = a | L) from a logistic model of qsmk on
     C(sex) + C(race) + age + age^2 + C(education) + smokeintensity +
     smokeintensity^2 + smokeyrs + smokeyrs^2 + C(exercise) + C(active) +
     wt71 + wt71^2 (stabilising them changes nothing below: the hazard
     model has a separate intercept and time function per arm).
   - IP-weighted hazard: GLM Binomial of event on qsmk + time + time^2 +
     qsmk:time + qsmk:time^2 with the weights as frequency weights;
     survival after month k under a = prod_{j<k} (1 - h(a, j)).
   - Standardised (g-formula): the same hazard model with the covariate terms
     above added, unweighted, predicted for everyone under a = 0 and a = 1,
     survival averaged over the 1629 people.
   - Restricted mean to 120 months of the discrete curves: sum_{k<120} S(k).
   - IP-weighted Kaplan-Meier: SurvfuncRight with the IP weights as
     freq_weights, survival at 120 months in each arm; its restricted mean to
     120 by integrating the step function.
2. INVENTED data (tests/data/survival_small.csv, seed 20261203, numpy's
   generator): 300 people, a binary exposure a with no confounders, follow-up
   times in days with ties, censoring. References: unweighted Kaplan-Meier per
   arm with Greenwood standard errors (SurvfuncRight); a pooled logistic fit
   over periods of 30 days, GLM Binomial of event on a + t + t^2 + a:t + a:t^2
   (t the period index), survival at the horizons under each arm, and its
   standard error by the delta method from the robust covariance clustered by
   person without small-sample correction.

Run from the repository root:  python3 tests/scripts/make_survival_fixtures.py
(after `pip install numpy pandas scipy statsmodels`). Writes
tests/fixtures/survival_reference.json (with the library versions),
tests/data/nhefs_survival.csv and tests/data/survival_small.csv. Made with
Python 3.11.7, numpy 2.4.6, pandas 3.1.1, scipy 1.17.1, statsmodels 0.15.0.
"""
import json
import math
import os
import sys

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
import statsmodels.formula.api as smf
from statsmodels.duration.survfunc import SurvfuncRight

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
DATA = os.path.join(ROOT, "tests", "data")
OUT = os.path.join(ROOT, "tests", "fixtures", "survival_reference.json")
COVARIATES = (
    "C(sex) + C(race) + age + I(age**2) + C(education) + smokeintensity + I(smokeintensity**2)"
    " + smokeyrs + I(smokeyrs**2) + C(exercise) + C(active) + wt71 + I(wt71**2)"
)
KEEP = ["seqn", "qsmk", "death", "survtime", "sex", "race", "age", "education",
        "smokeintensity", "smokeyrs", "exercise", "active", "wt71"]
HAZARD = "event ~ qsmk + time + I(time**2) + qsmk:time + qsmk:I(time**2)"


def expand(df, time_col, event_col, width=1.0):
    """Person-periods: periods 0 .. ceil(T / width) - 1, event in the last."""
    m = np.ceil(df[time_col].to_numpy() / width - 1e-9).astype(int)
    idx = np.repeat(np.arange(len(df)), m)
    pp = df.iloc[idx].reset_index(drop=True)
    pp["time"] = np.concatenate([np.arange(k) for k in m])
    last = np.concatenate([np.arange(k) == k - 1 for k in m])
    pp["event"] = (last & (pp[event_col].to_numpy() == 1)).astype(float)
    pp["person"] = idx
    return pp


def curve(hazard):
    """Survival after 0, 1, ..., K periods from hazards of periods 0..K-1."""
    return np.concatenate([[1.0], np.cumprod(1.0 - hazard)])


def km_rmst(sf, tau):
    times = np.concatenate([[0.0], sf.surv_times])
    surv = np.concatenate([[1.0], sf.surv_prob])
    keep = times <= tau
    t, s = times[keep], surv[keep]
    edges = np.concatenate([t, [tau]])
    return float(np.sum(s * np.diff(edges)))


def km_at(sf, t):
    k = np.searchsorted(sf.surv_times, t, side="right") - 1
    return (1.0, 0.0) if k < 0 else (float(sf.surv_prob[k]), float(sf.surv_prob_se[k]))


def nhefs():
    df = pd.read_csv(os.path.join(DATA, "nhefs.csv"))
    surv = np.where(df["death"] == 1, (df["yrdth"] - 83) * 12 + df["modth"], 120)
    df["survtime"] = surv.astype(int)
    out = df[KEEP].copy()
    for c in KEEP:
        if out[c].dtype.kind == "f" and (out[c] == out[c].round()).all():
            out[c] = out[c].astype(int)
    with open(os.path.join(DATA, "nhefs_survival.csv"), "w") as f:
        f.write(out.to_csv(index=False))
    df = out
    ps = smf.glm("qsmk ~ " + COVARIATES, data=df, family=sm.families.Binomial()).fit(tol=1e-12)
    e = ps.predict(df)
    df["w"] = np.where(df["qsmk"] == 1, 1.0 / e, 1.0 / (1.0 - e))
    pp = expand(df, "survtime", "death")
    K = 120
    ipw = smf.glm(HAZARD, data=pp, family=sm.families.Binomial(),
                  freq_weights=pp["w"]).fit(tol=1e-12)
    grid = pd.DataFrame({"time": np.arange(K)})
    ipw_curves = {}
    for a in (0, 1):
        g = grid.assign(qsmk=a)
        ipw_curves[a] = curve(ipw.predict(g).to_numpy())
    gf = smf.glm(HAZARD + " + " + COVARIATES, data=pp, family=sm.families.Binomial()).fit(tol=1e-12)
    gf_curves = {}
    for a in (0, 1):
        rows = df.loc[df.index.repeat(K)].reset_index(drop=True)
        rows["time"] = np.tile(np.arange(K), len(df))
        rows["qsmk"] = a
        h = gf.predict(rows).to_numpy().reshape(len(df), K)
        s = np.concatenate([np.ones((len(df), 1)), np.cumprod(1.0 - h, axis=1)], axis=1)
        gf_curves[a] = s.mean(axis=0)
    km = {}
    for a in (0, 1):
        sub = df[df["qsmk"] == a]
        sf = SurvfuncRight(sub["survtime"].to_numpy(float), sub["death"].to_numpy(float),
                           freq_weights=sub["w"].to_numpy())
        km[a] = {"survival_120": km_at(sf, 120.0)[0], "rmst_120": km_rmst(sf, 120.0),
                 "survival_60": km_at(sf, 60.0)[0]}
    res = {"rows": int(len(df)), "person_months": int(len(pp)),
           "deaths": int(df["death"].sum())}
    for name, curves in (("ipw", ipw_curves), ("regression", gf_curves)):
        res[name] = {
            lab: {"survival_120": float(curves[a][K]), "survival_60": float(curves[a][60]),
                  "rmst_120": float(curves[a][:K].sum())}
            for a, lab in ((1, "exposed"), (0, "unexposed"))
        }
    res["km"] = {lab: km[a] for a, lab in ((1, "exposed"), (0, "unexposed"))}
    return res


def small():
    rng = np.random.default_rng(20261203)
    n = 300
    a = (rng.random(n) < 0.45).astype(int)
    rate = np.where(a == 1, 1 / 500.0, 1 / 300.0)
    t_event = np.ceil(rng.exponential(1 / rate))
    t_cens = np.ceil(rng.uniform(60, 400, n))
    time = np.minimum(t_event, t_cens)
    event = (t_event <= t_cens).astype(int)
    df = pd.DataFrame({"a": a, "event": event, "days": time.astype(int)})
    with open(os.path.join(DATA, "survival_small.csv"), "w") as f:
        f.write(df.to_csv(index=False))
    horizons = [90.0, 180.0, 300.0]
    out = {"rows": n, "horizons": horizons, "km": {}, "hazard": {}}
    for lab, av in (("exposed", 1), ("unexposed", 0)):
        sub = df[df["a"] == av]
        sf = SurvfuncRight(sub["days"].to_numpy(float), sub["event"].to_numpy(float))
        out["km"][lab] = {str(int(h)): {"survival": km_at(sf, h)[0], "std_error": km_at(sf, h)[1]}
                          for h in horizons}
        out["km"][lab]["rmst_300"] = km_rmst(sf, 300.0)
    width = 30.0
    K = int(math.ceil(300.0 / width - 1e-9))
    pp = expand(df, "days", "event", width)
    pp = pp[pp["time"] < K].copy()
    pp["qsmk"] = pp["a"]
    fit = smf.glm(HAZARD, data=pp, family=sm.families.Binomial()).fit(
        tol=1e-12, cov_type="cluster", cov_kwds={"groups": pp["person"].to_numpy(), "use_correction": False})
    beta = fit.params.to_numpy()
    cov = fit.cov_params().to_numpy()
    names = list(fit.params.index)
    for lab, av in (("exposed", 1), ("unexposed", 0)):
        g = pd.DataFrame({"time": np.arange(K), "qsmk": av})
        t = g["time"].to_numpy(float)
        cols = {"Intercept": np.ones(K), "qsmk": np.full(K, float(av)), "time": t,
                "I(time ** 2)": t * t, "qsmk:time": av * t, "qsmk:I(time ** 2)": av * t * t}
        X = np.column_stack([cols[c] for c in names])
        h = 1.0 / (1.0 + np.exp(-X @ beta))
        s = curve(h)
        out["hazard"][lab] = {}
        for hz in horizons:
            c = int(math.floor(hz / width + 1e-9))
            grad = -s[c] * (h[:c, None] * X[:c]).sum(axis=0)
            se = float(math.sqrt(grad @ cov @ grad))
            out["hazard"][lab][str(int(hz))] = {"survival": float(s[c]), "std_error": se}
    out["hazard"]["period"] = width
    out["hazard"]["terms"] = names
    return out


def main():
    res = {
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "pandas": pd.__version__,
                     "scipy": scipy.__version__, "statsmodels": statsmodels.__version__},
        "nhefs": nhefs(),
        "small": small(),
    }
    with open(OUT, "w") as f:
        json.dump(res, f, indent=2)
        f.write("\n")


if __name__ == "__main__":
    main()
