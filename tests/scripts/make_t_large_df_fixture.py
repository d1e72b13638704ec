#!/usr/bin/env python3
"""Student t quantiles at large degrees of freedom, for t_quantile in
src/infer/dist.rs (which switches to a Cornish-Fisher expansion above 1e5
degrees of freedom).

Run from the repository root:  python3 tests/scripts/make_t_large_df_fixture.py

Writes tests/fixtures/t_quantile_large_df.json: rows [p, df, scipy.stats.t.ppf(p, df)].
Library versions are recorded.
"""

import json
import pathlib

import numpy as np
import scipy
from scipy import stats

rows = [[p, df, float(stats.t.ppf(p, df))]
        for p in (0.001, 0.025, 0.4, 0.6, 0.975, 0.999)
        for df in (9.9e4, 1.0e5, 1.5e5, 1.0e6, 1.0e8, 1.0e12, 1.0e300)]
out = {
    "source": "tests/scripts/make_t_large_df_fixture.py",
    "versions": {"numpy": np.__version__, "scipy": scipy.__version__},
    "t_quantile": rows,
}
path = pathlib.Path("tests/fixtures/t_quantile_large_df.json")
path.write_text(json.dumps(out, indent=1) + "\n")
print(f"wrote {path}")
