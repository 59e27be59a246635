"""Reference for the checks of factorial blocks (tests/bounded_factorial.rs).

Each design is fitted by ordinary least squares with statsmodels; the
residuals are then checked with scipy: Levene's test centred at the median
(Brown-Forsythe) and at the mean, over the groups the report compares,
Shapiro-Wilk, and the bias-adjusted skewness and excess kurtosis; outliers
are the observations whose externally studentized residual (statsmodels)
exceeds 3 in absolute value. Writes tests/reference/bounded_factorial.json.

    python3 -m venv /tmp/refenv && /tmp/refenv/bin/pip install statsmodels pandas scipy
    /tmp/refenv/bin/python tests/reference/bounded_factorial.py
"""
import json
import os

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats.outliers_influence import OLSInfluence

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "data")


def checks(data, formula, response, group_by):
    fit = smf.ols(formula, data=data).fit()
    resid = data[response] - fit.fittedvalues
    keys = data[group_by].astype(str).agg(" ".join, axis=1)
    groups = [resid[keys == k].to_numpy() for k in pd.unique(keys)]
    out = {}
    for centre in ("median", "mean"):
        t = stats.levene(*groups, center=centre)
        k, n = len(groups), len(resid)
        out["levene_" + centre] = {
            "statistic": float(t.statistic),
            "p": float(t.pvalue),
            "df1": float(k - 1),
            "df2": float(n - k),
        }
    sw = stats.shapiro(resid)
    out["shapiro"] = {"w": float(sw.statistic), "p": float(sw.pvalue)}
    out["skewness"] = float(stats.skew(resid, bias=False))
    out["kurtosis"] = float(stats.kurtosis(resid, bias=False))
    t = OLSInfluence(fit).resid_studentized_external
    out["outliers"] = int(np.sum(np.abs(t) > 3))
    return out


immer = pd.read_csv(os.path.join(DATA, "open", "immer.csv"), dtype={"Loc": str, "Var": str})
warp = pd.read_csv(os.path.join(DATA, "invented", "warp-empty-cell.csv"), dtype={"wool": str, "tension": str})
result = {
    "scipy": scipy.__version__,
    "statsmodels": statsmodels.__version__,
    # One plot per location and variety: the spread is compared across the
    # locations (the first factor).
    "unreplicated": checks(immer, "Y1 ~ C(Loc) + C(Var)", "Y1", ["Loc"]),
    # Cell B-H empty: the spread is compared across the five other cells.
    "empty_cell": checks(warp, "breaks ~ C(wool) * C(tension)", "breaks", ["wool", "tension"]),
}
with open(os.path.join(HERE, "bounded_factorial.json"), "w") as f:
    json.dump(result, f, indent=2)
    f.write("\n")
