"""Reference for the trait table (linear-extensions spec, section D.4).
Written to tests/reference/traits.json, each value with the specification's
number beside it where D.4 prints one ("spec_value", "rel_diff", "agrees" at
1e-9 relative; see spec_check.py).

npk (tests/data/open/npk.csv), one trait (yield, lb/plot), model
block + N*P*K with N:P:K confounded with blocks (residual 12 df):
statsmodels OLS with sum-to-zero coding and `anova_lm(typ=1)` (balanced, so
every type agrees) for MSE and the term p-values; marginal means from pandas
(balanced: the estimated marginal means are the raw means); SED sqrt(2 MSE/r),
LSD with the scipy t quantile; letters per two-level factor from the factor's
F test (for two means the t test of their difference).

anorexia (tests/data/open/anorexia.csv), traits Prewt, Postwt and the derived
Change = Postwt - Prewt, one-way by Treat (26/29/17): scipy `f_oneway`, MSE
from statsmodels OLS, SED sqrt(MSE (1/n_i + 1/n_j)) over all pairs, LSD, and
Tukey-Kramer p from scipy `tukey_hsd`; letters from the Tukey decisions at
0.05 (letter_sets.py, highest mean "a").

Significance marks: ns (p >= 0.05), * (< 0.05), ** (< 0.01), *** (< 0.001).
CV (%) = 100 sqrt(MSE) / grand mean, shown as "-" when the trait has a value
<= 0 (spec D.3), with the computed number kept beside it.

    /tmp/venv-ref/bin/python tests/reference/traits.py
"""
import json
import math
import os

import pandas as pd
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats.anova import anova_lm

from letter_sets import letters
from spec_check import checked, checked_list, summary, versions

HERE = os.path.dirname(os.path.abspath(__file__))
ALPHA = 0.05
LEVELS = ["Cont", "CBT", "FT"]


def read(name, dtype=None):
    return pd.read_csv(os.path.join(HERE, "..", "data", "open", name), dtype=dtype)


def marks(p):
    if p < 0.001:
        return "***"
    if p < 0.01:
        return "**"
    if p < 0.05:
        return "*"
    return "ns"


# ---------------------------------------------------------------- npk

NPK_FORMULA = ("y ~ C(block, Sum) + C(N, Sum) + C(P, Sum) + C(K, Sum) + C(N, Sum):C(P, Sum)"
               " + C(N, Sum):C(K, Sum) + C(P, Sum):C(K, Sum)")
NPK_TERMS = ["block", "N", "P", "K", "N:P", "N:K", "P:K"]
NPK_MEANS_SPEC = {"N": ["52.0666666667", "57.6833333333"], "P": ["55.4666666667", "54.2833333333"],
                  "K": ["56.8666666667", "52.8833333333"]}
NPK_LETTERS_SPEC = {"N": {"0": "b", "1": "a"}, "P": {"0": "a", "1": "a"},
                    "K": {"0": "a", "1": "b"}}
NPK_MARKS_SPEC = {"N": "**", "P": "ns", "K": "*", "N:P": "ns", "N:K": "ns", "P:K": "ns",
                  "block": "*"}


def npk():
    data = read("npk.csv", dtype=str)
    data["y"] = data["yield"].astype(float)
    fit = smf.ols(NPK_FORMULA, data=data).fit()
    table = anova_lm(fit, typ=1)
    pvalues = dict(zip(NPK_TERMS, table["PR(>F)"].iloc[:7]))
    mse, nu = fit.scale, int(fit.df_resid)
    grand = data["y"].mean()
    sed = math.sqrt(2 * mse / 12)
    t = stats.t.ppf(1 - ALPHA / 2, nu)
    factors = {}
    for factor in ("N", "P", "K"):
        means = data.groupby(factor)["y"].mean()
        levels = list(means.index)
        differ = pvalues[factor] < ALPHA
        shown = letters(levels, list(means), lambda i, j: differ)
        factors[factor] = {
            "levels": levels,
            "means": checked_list(list(means), NPK_MEANS_SPEC[factor]),
            "letters": shown["letters"], "spec_letters": NPK_LETTERS_SPEC[factor],
        }
    return {
        "data": "tests/data/open/npk.csv", "trait": "yield (lb/plot)",
        "model": "yield ~ block + N*P*K (N:P:K aliased with block)",
        "residual_df": nu, "mse": checked(mse),
        "grand_mean": checked(grand, "54.875"),
        "cv_percent": checked(100 * math.sqrt(mse) / grand, "7.1607238867"),
        "sed_main_effect_r12": checked(sed, "1.60419011527"),
        "t_0_975": checked(t, "2.17881282967"),
        "lsd_5": checked(t * sed, "3.49523000437"),
        "sed_two_factor_cells_r6": checked(math.sqrt(2 * mse / 6), "2.26866741764"),
        "factors": factors,
        "term_p": {k: checked(v) for k, v in pvalues.items()},
        "term_marks": {k: marks(v) for k, v in pvalues.items()},
        "spec_term_marks": NPK_MARKS_SPEC,
    }


# ---------------------------------------------------------------- anorexia

ANOREXIA_SPEC = {
    "Prewt": {
        "means": ["81.5576923077", "82.6896551724", "83.2294117647"],
        "F": "0.599485211015", "p": "0.551928743386",
        "mse": "27.1644297421", "grand": "82.4083333333", "cv": "6.32454322873",
        "sed": ["1.40765415965", "1.62563630348"], "lsd": ["2.80819321185", "3.24305569027"],
        "tukey": ["0.701732591068", "0.561648335282", "0.938663915184"],
        "letters": {"Cont": "a", "CBT": "a", "FT": "a"}, "marks": "ns",
    },
    "Postwt": {
        "means": ["81.1076923077", "85.6965517241", "90.4941176471"],
        "F": "8.65062781541", "p": "0.000444327487406",
        "mse": "53.116775775", "grand": "85.1722222222", "cv": "8.55692792719",
        "sed": ["1.96839169684", "2.2732067958"], "lsd": ["3.92683399074", "4.53492347488"],
        "tukey": ["0.0581141123104", "0.000292991506531", "0.0864029974878"],
        "letters": {"Cont": "b", "CBT": "ab", "FT": "a"}, "marks": "***",
    },
    "Change": {
        "means": ["-0.45", "3.00689655172", "7.26470588235"],
        "F": "5.42229686824", "p": "0.0064986529807",
        "mse": "56.6774267278", "grand": "2.76388888889", "cv": "272.385811843",
        "sed": ["2.03329659742", "2.34816253826"], "lsd": ["4.05631572458", "4.68445608963"],
        "tukey": ["0.212442842164", "0.00451274612399", "0.160746128698"],
        "letters": {"Cont": "b", "CBT": "ab", "FT": "a"}, "marks": "**",
    },
}
PAIRS = [(0, 1), (0, 2), (1, 2)]


def pair_seds(mse, n):
    return [math.sqrt(mse * (1 / n[i] + 1 / n[j])) for i, j in PAIRS]


def one_trait(data, trait):
    spec = ANOREXIA_SPEC[trait]
    groups = [data.loc[data["Treat"] == lv, trait].to_numpy() for lv in LEVELS]
    n = [len(g) for g in groups]
    means = [float(g.mean()) for g in groups]
    oneway = stats.f_oneway(*groups)
    fit = smf.ols(f"{trait} ~ C(Treat)", data=data).fit()
    mse, nu = fit.scale, int(fit.df_resid)
    grand = float(data[trait].mean())
    t = stats.t.ppf(1 - ALPHA / 2, nu)
    seds = pair_seds(mse, n)
    tukey = stats.tukey_hsd(*groups).pvalue
    tukey_p = [float(tukey[i, j]) for i, j in PAIRS]
    shown = letters(LEVELS, means, lambda i, j: tukey[i, j] < ALPHA)
    positive = bool((data[trait] > 0).all())
    cv = 100 * math.sqrt(mse) / grand
    return {
        "n": n, "means": checked_list(means, spec["means"]),
        "F": checked(oneway.statistic, spec["F"]), "p": checked(oneway.pvalue, spec["p"]),
        "mse": checked(mse, spec["mse"]), "df": nu,
        "grand_mean": checked(grand, spec["grand"]),
        "cv_percent_computed": checked(cv, spec["cv"]),
        "cv_shown": f"{cv:.1f}" if positive else "-",
        "all_values_positive": positive,
        "sed_by_pair": checked_list(seds), "lsd_by_pair": checked_list([t * s for s in seds]),
        "sed_min_max": checked_list([min(seds), max(seds)], spec["sed"]),
        "lsd_min_max": checked_list([t * min(seds), t * max(seds)], spec["lsd"]),
        "tukey_p": checked_list(tukey_p, spec["tukey"]),
        "letters": shown["letters"], "spec_letters": spec["letters"],
        "marks": marks(oneway.pvalue), "spec_marks": spec["marks"],
    }


def anorexia():
    data = read("anorexia.csv")
    data["Change"] = data["Postwt"] - data["Prewt"]
    traits = {trait: one_trait(data, trait) for trait in ("Prewt", "Postwt", "Change")}
    post = traits["Postwt"]
    diff = post["means"][1]["value"] - post["means"][0]["value"]
    return {
        "data": "tests/data/open/anorexia.csv", "levels": LEVELS,
        "pairs": [f"{LEVELS[i]} - {LEVELS[j]}" for i, j in PAIRS],
        "traits": traits,
        "lsd_versus_tukey_postwt_CBT_minus_Cont": {
            "difference": checked(diff), "pair_lsd": post["lsd_by_pair"][0],
            "exceeds_lsd": diff > post["lsd_by_pair"][0]["value"],
            "tukey_p": post["tukey_p"][0],
            "note": "spec D.4: the difference exceeds that pair's LSD yet the Tukey letters share b",
        },
    }


def main():
    doc = {"versions": versions(), "npk": npk(), "anorexia": anorexia()}
    doc["agreement"] = summary(doc)
    doc["agreement"]["letters_and_marks_agree"] = letters_agree(doc)
    with open(os.path.join(HERE, "traits.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")
    print(json.dumps(doc["agreement"], indent=1))


def letters_agree(doc):
    ok = all(f["letters"] == f["spec_letters"] for f in doc["npk"]["factors"].values())
    ok &= doc["npk"]["term_marks"] == doc["npk"]["spec_term_marks"]
    for trait in doc["anorexia"]["traits"].values():
        ok &= trait["letters"] == trait["spec_letters"] and trait["marks"] == trait["spec_marks"]
    return bool(ok)


if __name__ == "__main__":
    main()
