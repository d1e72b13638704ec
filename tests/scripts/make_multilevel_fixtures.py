#!/usr/bin/env python3
"""Reference values for a categorical (four-level) exposure, made with
statsmodels (a general-purpose statistics library).

Data: INVENTED. 3000 rows simulated below with numpy's seeded generator
(seed 20261203) from a model whose truths are known; written to
tests/data/multilevel.csv, with its causal graph in tests/data/multilevel.graph.
No real person, study or measurement lies behind these numbers.

Columns: age (years), female (0/1), score (standardised), dose_group (text:
none, low, medium, high), y (continuous outcome), event (binary 0/1 outcome).
Graph: age, female and score cause dose_group and both outcomes; dose_group
causes the outcomes.

Simulation:
  age ~ N(50, 10^2), female ~ Bernoulli(0.5), score ~ N(0, 1), independent;
  dose_group: multinomial logit, baseline none (coefficients in EXPOSURE);
  y = 10 + Y_EFFECT[a] + 0.08 (age - 50) + 1.5 female + 2 score + N(0, 2^2);
  event ~ Bernoulli(expit(-1.2 + EVENT_EFFECT[a] + 0.04 (age - 50)
                          + 0.5 female + 0.6 score)).
The CSV rounds age to 3 decimals, score and y to 4; every fit below reads the
CSV back, so the references belong to the committed file exactly.

References (reference level "none"; every model has an intercept, the three
dummies of dose_group and age, female, score as linear terms, no products):
  regression: OLS (y) / Logit (event) of the outcome; everyone is predicted at
    each level and the predictions averaged;
  ipw: MNLogit of dose_group on intercept, age, female, score gives p_k;
    normalised (Hajek) mean of level k: sum(1{A=k} y / p_k) / sum(1{A=k} / p_k);
  aipw: mean over rows of m_k + 1{A=k} (y - m_k) / p_k, with m_k the
    regression's prediction at level k and p_k as for ipw.
Contrasts against "none": differences for both outcomes; for event also the
risk ratio and the odds ratio, from the per-level means.

Truths: the population means E[Y^k] implied by the simulation, without
simulation error. For y this is the closed form 10 + Y_EFFECT[k] + 1.5 * 0.5.
For event the linear predictor given female is normal (age and score are
independent normals), so E[expit(.)] is a one-dimensional logistic-normal
integral, computed by scipy.integrate.quad. Also given: the sample truths,
the average over the 3000 drawn rows (unrounded covariates) of the model's
conditional mean at each level.

Run from the repository root:  python3 tests/scripts/make_multilevel_fixtures.py
(after `pip install numpy pandas scipy statsmodels`). Writes
tests/data/multilevel.csv and tests/fixtures/multilevel_reference.json, which
records the library versions. Made with Python 3.11.7, numpy 2.4.6,
pandas 3.1.1, scipy 1.17.1, statsmodels 0.15.0.
"""
import json
import os
import sys

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import integrate, special

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
CSV = os.path.join(ROOT, "tests", "data", "multilevel.csv")
OUT = os.path.join(ROOT, "tests", "fixtures", "multilevel_reference.json")

SEED = 20261203
N = 3000
LEVELS = ["none", "low", "medium", "high"]
REF = "none"
# Multinomial logit of dose_group, baseline none: (intercept, age - 50, female, score).
EXPOSURE = {
    "low": (-0.5, 0.03, 0.4, 0.3),
    "medium": (-1.0, 0.04, -0.2, 0.5),
    "high": (-1.5, 0.02, 0.5, -0.4),
}
Y_EFFECT = {"none": 0.0, "low": 1.0, "medium": 2.5, "high": 4.0}
EVENT_EFFECT = {"none": 0.0, "low": 0.3, "medium": 0.7, "high": 1.1}
EVENT_BASE, EVENT_AGE, EVENT_FEMALE, EVENT_SCORE = -1.2, 0.04, 0.5, 0.6


def simulate():
    rng = np.random.default_rng(SEED)
    age = rng.normal(50, 10, N)
    female = rng.binomial(1, 0.5, N)
    score = rng.normal(0, 1, N)
    lin = [np.zeros(N)]
    for lev in LEVELS[1:]:
        b0, ba, bf, bs = EXPOSURE[lev]
        lin.append(b0 + ba * (age - 50) + bf * female + bs * score)
    lin = np.column_stack(lin)
    p = np.exp(lin - lin.max(axis=1, keepdims=True))
    p /= p.sum(axis=1, keepdims=True)
    u = rng.random(N)
    idx = np.minimum((u[:, None] > np.cumsum(p, axis=1)).sum(axis=1), len(LEVELS) - 1)
    a = np.array(LEVELS)[idx]
    ya = np.array([Y_EFFECT[v] for v in a])
    y = 10 + ya + 0.08 * (age - 50) + 1.5 * female + 2.0 * score + rng.normal(0, 2, N)
    ea = np.array([EVENT_EFFECT[v] for v in a])
    eta = EVENT_BASE + ea + EVENT_AGE * (age - 50) + EVENT_FEMALE * female + EVENT_SCORE * score
    event = (rng.random(N) < special.expit(eta)).astype(int)
    d = pd.DataFrame(
        {
            "age": np.round(age, 3),
            "female": female,
            "score": np.round(score, 4),
            "dose_group": a,
            "y": np.round(y, 4),
            "event": event,
        }
    )
    d.to_csv(CSV, index=False)
    # Sample truths: average over the drawn rows of each level's conditional mean.
    sample = {"y": {}, "event": {}}
    for lev in LEVELS:
        sample["y"][lev] = float(np.mean(10 + Y_EFFECT[lev] + 0.08 * (age - 50) + 1.5 * female + 2.0 * score))
        eta_k = EVENT_BASE + EVENT_EFFECT[lev] + EVENT_AGE * (age - 50) + EVENT_FEMALE * female + EVENT_SCORE * score
        sample["event"][lev] = float(np.mean(special.expit(eta_k)))
    return sample


def population_truths():
    """E[Y^k] for the population the rows are drawn from, without simulation."""
    y = {lev: 10 + Y_EFFECT[lev] + 1.5 * 0.5 for lev in LEVELS}
    s = np.hypot(EVENT_AGE * 10, EVENT_SCORE)  # sd of the linear predictor given female
    event = {}
    for lev in LEVELS:
        total = 0.0
        for fem in (0, 1):
            mu = EVENT_BASE + EVENT_EFFECT[lev] + EVENT_FEMALE * fem
            val, err = integrate.quad(
                lambda z: special.expit(mu + s * z) * np.exp(-0.5 * z * z) / np.sqrt(2 * np.pi),
                -np.inf,
                np.inf,
                epsabs=1e-14,
                epsrel=1e-13,
            )
            assert err < 1e-12, err
            total += 0.5 * val
        event[lev] = total
    return {"y": y, "event": event}


def contrasts(means, binary):
    r = means[REF]
    out = {"differences": {k: means[k] - r for k in LEVELS if k != REF}}
    if binary:
        out["risk_ratios"] = {k: means[k] / r for k in LEVELS if k != REF}
        odds = {k: means[k] / (1 - means[k]) for k in LEVELS}
        out["odds_ratios"] = {k: odds[k] / odds[REF] for k in LEVELS if k != REF}
    return out


def block(means, binary):
    return {"means": means, **contrasts(means, binary)}


def main():
    sample_truth = simulate()
    truth = population_truths()
    d = pd.read_csv(CSV)
    assert len(d) == N and not d.isna().any().any()
    assert set(d.dose_group) == set(LEVELS)

    L = sm.add_constant(d[["age", "female", "score"]].astype(float))
    dummies = [k for k in LEVELS if k != REF]
    X = L.copy()
    for k in dummies:
        X["dose_group=" + k] = (d.dose_group == k).astype(float)

    def at_level(lev):
        Xa = X.copy()
        for k in dummies:
            Xa["dose_group=" + k] = 1.0 if k == lev else 0.0
        return Xa

    codes = pd.Categorical(d.dose_group, categories=LEVELS).codes
    mn = sm.MNLogit(codes, L).fit(method="newton", tol=1e-12, maxiter=200, disp=0)
    assert mn.mle_retvals["converged"]
    P = np.asarray(mn.predict(L))

    out = {
        "source": "statsmodels OLS, Logit and MNLogit on tests/data/multilevel.csv "
        "(INVENTED data, simulated by tests/scripts/make_multilevel_fixtures.py)",
        "data": {"file": "tests/data/multilevel.csv", "graph": "tests/data/multilevel.graph",
                 "invented": True, "seed": SEED, "rows": N},
        "versions": {
            "python": sys.version.split()[0],
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "exposure": "dose_group",
        "levels": LEVELS,
        "reference": REF,
        "covariates": ["age", "female", "score"],
        "level_counts": {k: int((d.dose_group == k).sum()) for k in LEVELS},
        "propensity": {
            "model": "MNLogit of dose_group on intercept, age, female, score (Newton, tol 1e-12)",
            "ranges": {k: [float(P[:, j].min()), float(P[:, j].max())] for j, k in enumerate(LEVELS)},
        },
        "outcomes": {},
    }

    for outcome, binary in (("y", False), ("event", True)):
        yv = d[outcome].astype(float).to_numpy()
        if binary:
            fit = sm.Logit(yv, X).fit(method="newton", tol=1e-12, maxiter=200, disp=0)
            assert fit.mle_retvals["converged"]
        else:
            fit = sm.OLS(yv, X).fit()
        reg, ipw, aipw = {}, {}, {}
        for j, lev in enumerate(LEVELS):
            m = np.asarray(fit.predict(at_level(lev)))
            ind = (codes == j).astype(float)
            p = P[:, j]
            reg[lev] = float(m.mean())
            ipw[lev] = float((ind * yv / p).sum() / (ind / p).sum())
            aipw[lev] = float(np.mean(m + ind * (yv - m) / p))
        out["outcomes"][outcome] = {
            "kind": "binary 0/1" if binary else "continuous",
            "outcome_model": ("Logit (Newton, tol 1e-12)" if binary else "OLS")
            + " of " + outcome + " on intercept, dummies of dose_group (reference none), age, female, score",
            "outcome_coefficients": {name: float(v) for name, v in fit.params.items()},
            "truth": {
                "population": {
                    "method": "closed form" if not binary
                    else "logistic-normal integral over the covariate distribution (scipy.integrate.quad), no simulation",
                    **block(truth[outcome], binary),
                },
                "sample": {
                    "method": "average over the 3000 drawn rows (unrounded covariates) of the simulation's "
                    "conditional mean at each level",
                    **block(sample_truth[outcome], binary),
                },
            },
            "regression": block(reg, binary),
            "ipw": block(ipw, binary),
            "aipw": block(aipw, binary),
        }

    with open(OUT, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
