"""Reference for the two-way table of a split-plot (tests/mixed_reports.rs,
`oats_cells_*`): the oats cell means compared within rows (nitrogen rates at
one variety) and within columns (varieties at one nitrogen rate) by Tukey's
procedure with each pair's own SED and df.

Independent of sheaf: the stratum error mean squares E_a (whole plots,
B:V) and E_b (subplots, residual) come from statsmodels OLS with every term
fixed; the SEDs and the Satterthwaite df from the textbook split-plot
formulas (mixed-models specification 5.4; Cochran & Cox 1957 ch. 7, from
memory, re-derived in the specification):

    same V, two N:    SED = sqrt(2 E_b / r)                     on f_b df
    same N, two V:    SED = sqrt(2 [(b-1) E_b + E_a] / (r b))   on
                      [(b-1)E_b + E_a]^2 / {[(b-1)E_b]^2/f_b + E_a^2/f_a} df

and Tukey's p for a family of k means as scipy's studentized-range upper
tail at sqrt(2)|t| (specification 4.2). Cell means are plain means (the
design is balanced, so they equal the estimated marginal means).

    python3 -m venv /tmp/refenv && /tmp/refenv/bin/pip install numpy pandas scipy statsmodels
    /tmp/refenv/bin/python tests/reference/cell_letters.py
"""
import json
import math
import os

import pandas as pd
import scipy
from scipy import stats
import statsmodels
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "data", "open", "oats.csv")


def main():
    d = pd.read_csv(DATA)
    fit = smf.ols("Y ~ C(B) + C(V) + C(B):C(V) + C(N) + C(V):C(N)", data=d).fit()
    table = anova_lm(fit, typ=1)
    e_a = table.loc["C(B):C(V)", "sum_sq"] / table.loc["C(B):C(V)", "df"]
    f_a = float(table.loc["C(B):C(V)", "df"])
    e_b = table.loc["Residual", "sum_sq"] / table.loc["Residual", "df"]
    f_b = float(table.loc["Residual", "df"])
    r = d["B"].nunique()
    v_levels = list(dict.fromkeys(d["V"]))
    n_levels = sorted(d["N"].unique())
    b = len(n_levels)
    means = d.groupby(["V", "N"])["Y"].mean()
    same_v = (math.sqrt(2 * e_b / r), f_b)
    combined = (b - 1) * e_b + e_a
    same_n = (
        math.sqrt(2 * combined / (r * b)),
        combined**2 / (((b - 1) * e_b) ** 2 / f_b + e_a**2 / f_a),
    )

    def family(levels, mean_of, sed_df):
        sed, df = sed_df
        k = len(levels)
        pairs = []
        for i in range(k):
            for j in range(i):
                diff = mean_of(levels[i]) - mean_of(levels[j])
                q = math.sqrt(2) * abs(diff) / sed
                pairs.append({
                    "a": levels[i], "b": levels[j], "diff": diff, "sed": sed,
                    "df": df, "p_adj": float(stats.studentized_range.sf(q, k, df)),
                })
        return pairs

    families = {}
    for v in v_levels:
        families[f"N@V={v}"] = family(n_levels, lambda n: means[(v, n)], same_v)
    for n in n_levels:
        families[f"V@N={n}"] = family(v_levels, lambda v: means[(v, n)], same_n)
    out = {
        "source": "statsmodels %s OLS stratum mean squares, textbook split-plot SEDs, scipy %s studentized_range"
        % (statsmodels.__version__, scipy.__version__),
        "families": families,
    }
    with open(os.path.join(HERE, "cell_letters.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
