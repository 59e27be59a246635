"""Planned contrasts on the open PlantGrowth data (weight ~ group), computed
with statsmodels OLS on cell-means coding: `t_test` for each contrast (estimate,
SE, t, p, 95% interval), `f_test` for the pair jointly, Bonferroni and Holm from
`multipletests`, Scheffe's p from scipy's F distribution with k - 1 = 2 df and
its critical value sqrt(2 F_0.95;2,27). Writes planned_contrasts.json beside
this script; tests/planned_contrasts.rs reads it."""
import json
import os

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats.multitest import multipletests

here = os.path.dirname(os.path.abspath(__file__))
data = pd.read_csv(os.path.join(here, "..", "data", "open", "PlantGrowth.csv"))
fit = smf.ols("weight ~ C(group, levels=['ctrl', 'trt1', 'trt2']) - 1", data=data).fit()
contrasts = {
    "control vs treated": [1.0, -0.5, -0.5],
    "trt2 vs trt1": [0.0, -1.0, 1.0],
    "trt1 vs control": [-1.0, 1.0, 0.0],
}
out = {"data": "tests/data/open/PlantGrowth.csv", "levels": ["ctrl", "trt1", "trt2"],
       "df": float(fit.df_resid), "contrasts": {}}
ps = []
for name, w in contrasts.items():
    t = fit.t_test(np.array([w]))
    lo, hi = t.conf_int(alpha=0.05)[0]
    p = float(t.pvalue)
    ps.append(p)
    out["contrasts"][name] = {
        "weights": w, "estimate": float(np.squeeze(t.effect)), "se": float(np.squeeze(t.sd)),
        "t": float(np.squeeze(t.tvalue)), "p": p, "ci_lower": float(lo), "ci_upper": float(hi),
        "scheffe_p": float(stats.f.sf(float(np.squeeze(t.tvalue)) ** 2 / 2, 2, fit.df_resid)),
    }
for method, key in [("bonferroni", "bonferroni_p"), ("holm", "holm_p")]:
    adj = multipletests(ps, method=method)[1]
    for (name, _), a in zip(contrasts.items(), adj):
        out["contrasts"][name][key] = float(a)
joint = fit.f_test(np.array([contrasts["control vs treated"], contrasts["trt2 vs trt1"]]))
out["joint_first_two"] = {"f": float(np.squeeze(joint.fvalue)), "p": float(joint.pvalue),
                          "df1": float(joint.df_num), "df2": float(joint.df_denom)}
out["scheffe_critical"] = float(np.sqrt(2 * stats.f.isf(0.05, 2, fit.df_resid)))
out["bonferroni_critical_3"] = float(stats.t.isf(0.05 / 6, fit.df_resid))
out["versions"] = {"numpy": np.__version__, "pandas": pd.__version__, "scipy": scipy.__version__,
                   "statsmodels": statsmodels.__version__}
with open(os.path.join(here, "planned_contrasts.json"), "w") as f:
    json.dump(out, f, indent=1, sort_keys=True)
    f.write("\n")
