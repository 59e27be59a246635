"""Planned contrasts in the oats split plot (open data, tests/data/open/oats.csv:
six blocks B, three varieties V on whole plots, four nitrogen rates N on subplots;
Yates 1935), computed without a mixed model: in a balanced split plot a contrast
among the variety means lies in the whole-plot stratum and one among the nitrogen
means in the subplot stratum, and the exact t test of each is the ordinary one in
its stratum (Kenward and Roger 1997 reproduce these exact tests in balanced
designs; common practice for split plots, e.g. Cochran and Cox 1957, ch. 7).

- Varieties: OLS on the 18 whole-plot means, mean ~ C(B) + C(V) (10 residual df);
  contrast weights over the three variety means; `t_test` gives estimate, SE, t, p.
- Nitrogen: the subplot-stratum fit of oats_subplot.py (OLS on all 72 subplots,
  whole plots as fixed effects, 45 residual df); the contrast is over the nitrogen
  marginal means (each averaged over varieties with equal weight), so its row of L
  is built from the cell-means design and `t_test` tests it.
- Jointly: `f_test` of both nitrogen contrasts on the same fit.

Writes mixed_contrasts.json beside this script; tests/mixed_contrasts.rs reads it."""
import json
import os

import numpy as np
import statsmodels
import statsmodels.formula.api as smf

from oats_subplot import here, nitrogen_row, oats, sub, varieties

out = {"statsmodels": statsmodels.__version__, "variety": {}, "nitrogen": {}}

plots = oats.groupby(["B", "V"], as_index=False)["Y"].mean()
whole = smf.ols("Y ~ C(B) + C(V, levels=%r)" % varieties, data=plots).fit()
names = list(whole.params.index)


def variety_row(weights):
    # Mean of variety v averaged over blocks: intercept + mean block effect + effect of v.
    row = np.zeros(len(names))
    for v, w in weights.items():
        row[names.index("Intercept")] += w
        for n in names:
            if n.startswith("C(B)"):
                row[names.index(n)] += w / 6.0
        key = "C(V, levels=%r)[T.%s]" % (varieties, v)
        if key in names:
            row[names.index(key)] += w
    return row


contrasts_v = {"Marvellous vs the others": {"Marvellous": 1.0, "Golden.rain": -0.5, "Victory": -0.5}}
for name, w in contrasts_v.items():
    t = whole.t_test(variety_row(w))
    out["variety"][name] = {"weights": w, "estimate": float(np.squeeze(t.effect)),
                            "se": float(np.squeeze(t.sd)), "t": float(np.squeeze(t.tvalue)),
                            "df": float(whole.df_resid), "p": float(t.pvalue)}

contrasts_n = {
    "nitrogen vs none": {"0.2cwt": 1 / 3, "0.4cwt": 1 / 3, "0.6cwt": 1 / 3, "0.0cwt": -1.0},
    "top vs middle": {"0.6cwt": 1.0, "0.4cwt": -0.5, "0.2cwt": -0.5},
}
rows = []
for name, w in contrasts_n.items():
    r = nitrogen_row(w)
    rows.append(r)
    t = sub.t_test(r)
    out["nitrogen"][name] = {"weights": w, "estimate": float(np.squeeze(t.effect)),
                             "se": float(np.squeeze(t.sd)), "t": float(np.squeeze(t.tvalue)),
                             "df": float(sub.df_resid), "p": float(t.pvalue)}
f = sub.f_test(np.array(rows))
out["nitrogen_joint"] = {"f": float(np.squeeze(f.fvalue)), "df1": float(f.df_num),
                         "df2": float(f.df_denom), "p": float(f.pvalue)}
with open(os.path.join(here, "mixed_contrasts.json"), "w") as fh:
    json.dump(out, fh, indent=1)
    fh.write("\n")
