"""Reference values for sensitivity numbers at extreme inputs.

Writes tests/fixtures/sensitivity_extremes.json: E-values of risk ratios,
odds ratios and hazard ratios (common outcome), and of standardized
differences; robustness values and partial R^2 of regression coefficients,
all at inputs near the ends of the range of double-precision numbers.

Each value is computed from its defining formula (VanderWeele & Ding 2017:
E = RR + sqrt(RR (RR - 1)), after inverting RR < 1; RR = sqrt(OR);
RR = (1 - 0.5^sqrt(HR)) / (1 - 0.5^sqrt(1/HR)); RR = exp(0.91 d) and its
interval exp(0.91 (d -/+ z se)). Cinelli & Hazlett 2020: f = q |t| / sqrt(df),
RV = (sqrt(f^4 + 4 f^2) - f^2) / 2, partial R^2 = t^2 / (t^2 + df),
RV_alpha from f - f*, f* = t*_{alpha/2, df-1} / sqrt(df - 1)) in mpmath with
400 significant digits (enough for 1 - 0.5^(1e-150)), from the exact binary value of each double input, so
that no cancellation or overflow of the double-precision formula enters the
reference. The t quantile comes from scipy. Run from the repository root:
    python3 tests/scripts/make_extreme_sensitivity_fixtures.py
"""
import json

import mpmath as mp
import scipy
from scipy import stats

mp.mp.dps = 400


def E(rr):
    rr = mp.mpf(rr)
    if rr < 1:
        rr = 1 / rr
    return rr + mp.sqrt(rr * (rr - 1))


def hr_to_rr(hr):
    hr = mp.mpf(hr)
    return (1 - mp.power(0.5, mp.sqrt(hr))) / (1 - mp.power(0.5, mp.sqrt(1 / hr)))


def rv_of_f(f):
    # f up to 1e450: f^4 + 4 f^2 needs about 900 more digits than f^4.
    with mp.workdps(2000):
        f = mp.mpf(f)
        return (mp.sqrt(f**4 + 4 * f**2) - f**2) / 2


out = {"versions": {"mpmath": mp.__version__, "scipy": scipy.__version__}, "evalue": [], "robustness": []}

for rr in [1e300, 1e-300, 1.000000000000001, 0.999999999999999, 1e150, 5e307, 1e-307, 3.0]:
    out["evalue"].append({"kind": "rr", "input": rr, "point": float(E(rr))})
for o in [1e300, 1e-300, 1.000000000000001, 1.7e308]:
    out["evalue"].append({"kind": "or_common", "input": o, "point": float(E(mp.sqrt(mp.mpf(o))))})
for h in [1e300, 1e-300, 1.000000000000001, 1e20, 2.0]:
    out["evalue"].append({"kind": "hr_common", "input": h, "point": float(E(hr_to_rr(h)))})
z95 = stats.norm.ppf(0.975)
for d, se in [(700.0, 1.0), (-700.0, 1.0), (1e-300, 1e-300), (1.0, 1e300), (1e-15, 1e-16)]:
    x = mp.mpf(0.91) * mp.mpf(d)
    lo = mp.mpf(0.91) * (mp.mpf(d) - mp.mpf(z95) * mp.mpf(se))
    hi = mp.mpf(0.91) * (mp.mpf(d) + mp.mpf(z95) * mp.mpf(se))
    if lo <= 0 <= hi:
        ci = 1.0
    else:
        ci = float(E(mp.exp(lo if x > 0 else hi)))
    out["evalue"].append({"kind": "smd", "input": d, "se": se, "level": 0.95,
                          "point": float(E(mp.exp(x))), "ci_limit": ci})

for est, se, df in [(1e300, 1e-300, 1e300), (1e300, 1.0, 100.0), (1.0, 1.0, 1e300), (1e-300, 1e300, 10.0),
                    (1e200, 1.0, 50.0), (3.0, 1.0, 1e30), (2.5, 0.5, 1e12), (-4.0, 1.0, 200.0)]:
    t = mp.mpf(est) / mp.mpf(se)
    dfm = mp.mpf(df)
    f = abs(t) / mp.sqrt(dfm)
    fs = mp.mpf(abs(stats.t.ppf(0.975, df - 1.0))) / mp.sqrt(dfm - 1)
    if f <= fs:
        rva = mp.mpf(0)
    elif f > 1 / fs:
        rva = (f**2 - fs**2) / (1 + f**2)
    else:
        rva = rv_of_f(f - fs)
    out["robustness"].append({"estimate": est, "se": se, "df": df, "rv": float(rv_of_f(f)),
                              "rv_alpha": float(rva), "partial_r2": float(t**2 / (t**2 + dfm))})

with open("tests/fixtures/sensitivity_extremes.json", "w") as fh:
    json.dump(out, fh, indent=1)
    fh.write("\n")
