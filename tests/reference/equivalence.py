"""Reference for equivalence by two one-sided tests (linear-extensions spec,
section F.4). Written to tests/reference/equivalence.json, each value with the
specification's number beside it where F.4 prints one ("spec_value",
"rel_diff", "agrees" at 1e-9 relative; see spec_check.py).

Data (INVENTED, made up for the specification): tests/data/invented/assay-pair.csv
(a reference and a test batch, six assays each, % of label claim) and
tests/data/invented/equivalence-levels.csv (a control and levels A, B, C, five
each).

What comes from where:
- the pair: statsmodels `weightstats.ttost_ind(test, reference, low, upp,
  usevar='pooled'|'unequal', transform=None|np.log)` for p_TOST and both
  one-sided (t, p, df); the 90% intervals d +- t_{0.95,nu} SE with scipy's t
  quantile, SE from the pooled variance or from each group's own (Welch,
  Satterthwaite df); the two-sided t-test p from scipy `ttest_ind`; the ratio
  of geometric means and its interval exp(d +- t SE) on ln y;
- each level against the control: statsmodels OLS `y ~ C(level,
  Treatment('control'))` with `t_test((L, theta))` for t_L (theta = -2) and
  t_U (theta = +2), the ANOVA's MSE and df from the fit, p_L and p_U from
  scipy's t, intervals at 90% and, for three separate claims (Bonferroni),
  at 1 - 2(0.05/3) with scipy's t quantile; the Welch version per
  comparison from `ttost_ind(..., usevar='unequal')` on the two groups.

    /tmp/venv-ref/bin/python tests/reference/equivalence.py
"""
import json
import os

import numpy as np
import pandas as pd
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats import weightstats

from spec_check import checked, checked_list, summary, versions

HERE = os.path.dirname(os.path.abspath(__file__))
INVENTED = os.path.join(HERE, "..", "data", "invented")
ALPHA = 0.05


def ci(d, se, df, alpha):
    half = stats.t.isf(alpha, df) * se
    return [float(d - half), float(d + half)]


def tost_record(test, ref, low, upp, usevar="pooled", transform=None, spec=None):
    """ttost_ind's answer, with the interval at 1 - 2 alpha from scipy."""
    p, lower, upper = weightstats.ttost_ind(test, ref, low, upp, usevar=usevar, transform=transform)
    x, y = (transform(test), transform(ref)) if transform else (test, ref)
    d = x.mean() - y.mean()
    if usevar == "pooled":
        n1, n2 = len(x), len(y)
        sp2 = ((n1 - 1) * x.var(ddof=1) + (n2 - 1) * y.var(ddof=1)) / (n1 + n2 - 2)
        se = np.sqrt(sp2 * (1 / n1 + 1 / n2))
        df = n1 + n2 - 2
    else:
        va, vb = x.var(ddof=1) / len(x), y.var(ddof=1) / len(y)
        se = np.sqrt(va + vb)
        df = (va + vb) ** 2 / (va**2 / (len(x) - 1) + vb**2 / (len(y) - 1))
    spec = spec or {}
    out = {
        "margins": [float(low), float(upp)],
        "usevar": usevar,
        "log": transform is not None,
        "difference": checked(d),
        "se": checked(se),
        "df": checked(df),
        "t_lower": checked(lower[0], spec.get("t_lower")),
        "p_lower": checked(lower[1], spec.get("p_lower")),
        "t_upper": checked(upper[0], spec.get("t_upper")),
        "p_upper": checked(upper[1], spec.get("p_upper")),
        "p": checked(p, spec.get("p")),
        "ci_90": checked_list(ci(d, se, df, ALPHA), spec.get("ci_90")),
        "equivalent": bool(p < ALPHA),
    }
    # ttost_ind's df must be the one the interval uses.
    assert abs(lower[2] - df) < 1e-9 * df, (lower[2], df)
    if transform is not None:
        out["ratio"] = checked(np.exp(d), spec.get("ratio"))
        out["ratio_ci_90"] = checked_list(np.exp(ci(d, se, df, ALPHA)), spec.get("ratio_ci_90"))
    return out


def pair():
    data = pd.read_csv(os.path.join(INVENTED, "assay-pair.csv"))
    ref = data.loc[data["batch"] == "reference", "assay"].to_numpy()
    test = data.loc[data["batch"] == "test", "assay"].to_numpy()
    two_sided = stats.ttest_ind(test, ref)
    base = tost_record(test, ref, -3, 3, spec={
        "t_lower": "4.80553505683", "p_lower": "0.000358819533469",
        "t_upper": "-2.55613566853", "p_upper": "0.0142809192183", "p": "0.0142809192183",
        "ci_90": ["-0.560547832946", "2.39388116628"]})
    return {
        "means": {"reference": checked(ref.mean(), "99.7333333333"),
                  "test": checked(test.mean(), "100.65")},
        "difference": checked(test.mean() - ref.mean(), "0.916666666667"),
        "se": checked(base["se"]["value"], "0.815032378362"),
        "df": checked(base["df"]["value"], "10"),
        "two_sided_p": checked(two_sided.pvalue, "0.286987504109"),
        "margin_3": base,
        "margin_2": tost_record(test, ref, -2, 2, spec={
            "t_lower": "3.57858993594", "p_lower": "0.00251173240367",
            "t_upper": "-1.32919054763", "p_upper": "0.106656170176", "p": "0.106656170176"}),
        "margin_asymmetric": tost_record(test, ref, -1.5, 2),
        "margin_3_welch": tost_record(test, ref, -3, 3, usevar="unequal",
                                      spec={"p": "0.0146456568174"}),
        "margin_3_percent": {
            "margin": checked(0.03 * ref.mean()),
            **tost_record(test, ref, -0.03 * ref.mean(), 0.03 * ref.mean()),
        },
        "ratio_095": tost_record(test, ref, 0.95, 1 / 0.95, transform=np.log, spec={
            "p": "0.000211154207368", "ratio": "1.00922440883",
            "ratio_ci_90": ["0.994419713997", "1.0242495126"]}),
    }


SPEC_LEVELS = {
    "A": {"d": "0.64", "ci_90": ["-0.485790415419", "1.76579041542"],
          "t_lower": "4.09413052575", "t_upper": "-2.10909754357",
          "p_lower": "0.000423458596116", "p_upper": "0.0255226206311", "p": "0.0255226206311",
          "ci_bonferroni": ["-0.86136093758", "2.14136093758"]},
    "B": {"d": "2.3", "ci_90": ["1.17420958458", "3.42579041542"],
          "t_lower": "6.66847017452", "t_upper": "0.465242105199",
          "p_lower": "2.69902489828e-06", "p_upper": "0.675986281722", "p": "0.675986281722",
          "ci_bonferroni": ["0.79863906242", "3.80136093758"]},
    "C": {"d": "-1.1", "ci_90": ["-2.22579041542", "0.0257904154195"],
          "t_lower": "1.3957263156", "t_upper": "-4.80750175373",
          "p_lower": "0.0909328124917", "p_upper": "9.66738053298e-05", "p": "0.0909328124917",
          "ci_bonferroni": ["-2.60136093758", "0.40136093758"]},
}


def levels():
    data = pd.read_csv(os.path.join(INVENTED, "equivalence-levels.csv"))
    fit = smf.ols("y ~ C(level, Treatment('control'))", data=data).fit()
    mse, df = float(fit.mse_resid), float(fit.df_resid)
    names = list(fit.params.index)
    m = 3
    t_bonf = stats.t.isf(ALPHA / m, df)
    rows = {}
    ref = data.loc[data["level"] == "control", "y"].to_numpy()
    for level in ["A", "B", "C"]:
        L = np.zeros(len(names))
        L[names.index(f"C(level, Treatment('control'))[T.{level}]")] = 1.0
        low = fit.t_test((L, -2.0))
        upp = fit.t_test((L, 2.0))
        d = float(fit.params.iloc[names.index(f"C(level, Treatment('control'))[T.{level}]")])
        se = float(low.sd[0][0])
        t_l, t_u = float(low.tvalue[0][0]), float(upp.tvalue[0][0])
        p_l, p_u = stats.t.sf(t_l, df), stats.t.cdf(t_u, df)
        s = SPEC_LEVELS[level]
        p = max(p_l, p_u)
        test = data.loc[data["level"] == level, "y"].to_numpy()
        rows[level] = {
            "difference": checked(d, s["d"]),
            "se": checked(se, "0.644825557806"),
            "t_lower": checked(t_l, s["t_lower"]),
            "t_upper": checked(t_u, s["t_upper"]),
            "p_lower": checked(p_l, s["p_lower"]),
            "p_upper": checked(p_u, s["p_upper"]),
            "p": checked(p, s["p"]),
            "ci_90": checked_list(ci(d, se, df, ALPHA), s["ci_90"]),
            "ci_bonferroni": checked_list(
                [d - t_bonf * se, d + t_bonf * se], s["ci_bonferroni"]),
            "equivalent_alone": bool(p < ALPHA),
            "equivalent_bonferroni": bool(p < ALPHA / m),
            "welch": tost_record(test, ref, -2, 2, usevar="unequal"),
        }
    return {
        "mse": checked(mse, "1.0395"),
        "df": checked(df, "16"),
        "t_bonferroni": checked(t_bonf, "2.32832107755"),
        "all_equivalent": all(r["equivalent_alone"] for r in rows.values()),
        "levels": rows,
    }


def main():
    doc = {
        "about": __doc__.strip().splitlines()[0],
        "alpha": ALPHA,
        "versions": versions(),
        "pair": pair(),
        "against_control": levels(),
    }
    doc = {"agreement": summary(doc), **doc}
    with open(os.path.join(HERE, "equivalence.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=False)
        f.write("\n")
    print(json.dumps(doc["agreement"], indent=1))


if __name__ == "__main__":
    main()
