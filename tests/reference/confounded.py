"""Reference for a factorial confounded with blocks (tests/factorial_reference.rs).

The npk data hold N:P:K confounded with blocks. The usual analysis fits
block + the main effects and two-factor interactions (N:P:K's one contrast is
part of the block sum of squares). This script fits that model with
statsmodels (ols + anova_lm, sum-to-zero coding; the design is balanced, so
Types I, II and III agree) and writes tests/reference/confounded.json.

    python3 -m venv /tmp/refenv && /tmp/refenv/bin/pip install statsmodels pandas
    /tmp/refenv/bin/python tests/reference/confounded.py
"""
import json
import os

import pandas as pd
import statsmodels
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

HERE = os.path.dirname(os.path.abspath(__file__))
data = pd.read_csv(os.path.join(HERE, "..", "data", "open", "npk.csv"), dtype=str)
data["yield"] = data["yield"].astype(float)
model = smf.ols(
    "Q('yield') ~ C(block, Sum) + C(N, Sum) + C(P, Sum) + C(K, Sum)"
    " + C(N, Sum):C(P, Sum) + C(N, Sum):C(K, Sum) + C(P, Sum):C(K, Sum)",
    data=data,
).fit()
names = ["block", "N", "P", "K", "N:P", "N:K", "P:K"]
out = {"statsmodels": statsmodels.__version__, "types": {}}
for typ in (1, 2, 3):
    table = anova_lm(model, typ=typ)
    rows = [r for r in table.index if r not in ("Intercept", "Residual")]
    out["types"][str(typ)] = {
        "terms": [
            {
                "term": name,
                "df": float(table.loc[r, "df"]),
                "ss": float(table.loc[r, "sum_sq"]),
                "f": float(table.loc[r, "F"]),
                "p": float(table.loc[r, "PR(>F)"]),
            }
            for name, r in zip(names, rows)
        ],
        "residual_df": float(table.loc["Residual", "df"]),
        "residual_ss": float(table.loc["Residual", "sum_sq"]),
    }
with open(os.path.join(HERE, "confounded.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
