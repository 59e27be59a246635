#!/usr/bin/env python3
"""Regenerates the reference fixtures that sheaf's Rust tests compare against.

Every expected value in the JSON files written here comes from scipy or
statsmodels, never from sheaf. Run from the repository root:

    python3 -m venv /tmp/refenv
    /tmp/refenv/bin/pip install scipy statsmodels pandas
    /tmp/refenv/bin/python tests/reference/generate.py

It rewrites tests/reference/distributions.json and tests/reference/oneway.json;
commit them together with any change to this script.
"""

import json

import mpmath as mp
import math
import pathlib

import numpy as np
import pandas as pd
import scipy
import statsmodels
from scipy import stats
from statsmodels.formula.api import ols
from statsmodels.stats.anova import anova_lm
from statsmodels.stats.multitest import multipletests

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "reference"


def num(x):
    x = float(x)
    return x if math.isfinite(x) else None


def distributions():
    t_sf = []
    for df in [1, 2, 3, 5, 10, 27, 100, 1e3, 1e4, 1e5, 1e6, 1e7]:
        for t in [0.1, 1.0, 2.0, 3.5, 8.0, 30.0]:
            t_sf.append({"t": t, "df": df, "sf": num(stats.t.sf(t, df))})
    t_isf = []
    for df in [1, 2, 3, 4.5, 10, 27, 100, 1e3, 1e4, 1e5, 1e6, 1e7]:
        for p in [0.25, 0.05, 0.025, 0.005, 1e-6]:
            t_isf.append({"p": p, "df": df, "isf": num(stats.t.isf(p, df))})
    f_sf = []
    f_isf = []
    for d1 in [1, 2, 4, 9, 99]:
        for d2 in [1, 2, 5, 20, 27, 100, 1e4, 1e6, 1e7]:
            for f in [0.2, 1.0, 3.0, 15.0, 200.0]:
                f_sf.append({"f": f, "d1": d1, "d2": d2, "sf": num(stats.f.sf(f, d1, d2))})
            for p in [0.1, 0.05, 0.01, 0.001]:
                f_isf.append({"p": p, "d1": d1, "d2": d2, "isf": num(stats.f.isf(p, d1, d2))})
    ptukey = []
    for k in [2, 3, 4, 5, 10, 20, 50, 100]:
        # scipy switches to the infinite-df formula at df >= 1e5, so stay below it.
        for df in [2, 3, 5, 10, 20, 60, 120, 1000, 5e4, math.inf]:
            for q in [0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.5, 8.0, 12.0]:
                cdf = stats.studentized_range.cdf(q, k, df)
                ptukey.append({"q": q, "k": k, "df": df if math.isfinite(df) else None, "cdf": num(cdf)})
    qtukey = []
    for k in [2, 3, 4, 5, 10, 20, 100]:
        for df in [5, 10, 27, 120, math.inf]:
            for alpha in [0.05, 0.01]:
                q = stats.studentized_range.ppf(1 - alpha, k, df)
                qtukey.append({"alpha": alpha, "k": k, "df": df if math.isfinite(df) else None, "q": num(q)})
    # Very large df, beyond what scipy's t is tested for: exact values from mpmath.
    mp.mp.dps = 40
    t_sf_mp = []
    for df in [1e8, 1e9]:
        for t in [0.5, 1.7677669529663687, 3.0, 5.0, 8.0]:
            nu, tt = mp.mpf(df), mp.mpf(t)
            sf = mp.betainc(nu / 2, mp.mpf(1) / 2, 0, nu / (nu + tt * tt), regularized=True) / 2
            t_sf_mp.append({"t": t, "df": df, "sf": float(sf)})
    return {
        "generator": "tests/reference/generate.py",
        "scipy": scipy.__version__,
        "mpmath": mp.__version__,
        "t_sf_mpmath": t_sf_mp,
        "t_sf": t_sf,
        "t_isf": t_isf,
        "f_sf": f_sf,
        "f_isf": f_isf,
        "ptukey_cdf": ptukey,
        "qtukey": qtukey,
    }


def oneway_case(name, path, response, factor, source):
    df = pd.read_csv(path, dtype={factor: str})
    levels = list(dict.fromkeys(df[factor]))
    groups = [df.loc[df[factor] == lv, response].to_numpy(float) for lv in levels]
    model = ols(f"Q('{response}') ~ C(Q('{factor}'))", data=df).fit()
    table = anova_lm(model, typ=1)
    effect, resid = table.iloc[0], table.iloc[1]
    k, n = len(levels), len(df)
    mse = float(resid["sum_sq"] / resid["df"])
    nu = n - k
    alpha = 0.05
    means = [g.mean() for g in groups]
    group_rows = []
    for lv, g in zip(levels, groups):
        se = math.sqrt(mse / len(g))
        tcrit = stats.t.isf(alpha / 2, nu)
        group_rows.append({
            "level": lv, "n": len(g), "mean": num(g.mean()),
            "sd": num(g.std(ddof=1)) if len(g) > 1 else None,
            "ci_lower": num(g.mean() - tcrit * se), "ci_upper": num(g.mean() + tcrit * se),
        })
    # Pairwise in the order sheaf uses: (i, j) for i < j in level order, diff = mean_j - mean_i
    # is NOT used; sheaf reports a = later level, b = earlier level, diff = mean(a) - mean(b).
    pairs = [(j, i) for i in range(k) for j in range(i + 1, k)]
    m = len(pairs)
    raw_p, lsd = [], []
    for a, b in pairs:
        se = math.sqrt(mse * (1 / len(groups[a]) + 1 / len(groups[b])))
        d = means[a] - means[b]
        t = d / se
        p = 2 * stats.t.sf(abs(t), nu)
        raw_p.append(p)
        half = stats.t.isf(alpha / 2, nu) * se
        lsd.append({"a": levels[a], "b": levels[b], "diff": num(d), "se": num(se),
                    "lower": num(d - half), "upper": num(d + half), "p_adj": num(p)})
    bonf = multipletests(raw_p, method="bonferroni")[1]
    holm = multipletests(raw_p, method="holm")[1]
    bonf_rows, holm_rows = [], []
    for (a, b), row, pb, ph in zip(pairs, lsd, bonf, holm):
        half = stats.t.isf(alpha / (2 * m), nu) * row["se"]
        base = {"a": row["a"], "b": row["b"], "diff": row["diff"], "se": row["se"],
                "lower": num(row["diff"] - half), "upper": num(row["diff"] + half)}
        bonf_rows.append({**base, "p_adj": num(pb)})
        holm_rows.append({**base, "p_adj": num(ph)})
    tukey_rows = []
    if min(len(g) for g in groups) > 1:
        tukey = stats.tukey_hsd(*groups)
        ci = tukey.confidence_interval(confidence_level=1 - alpha)
        for a, b in pairs:
            se = math.sqrt(mse * (1 / len(groups[a]) + 1 / len(groups[b])))
            tukey_rows.append({"a": levels[a], "b": levels[b], "diff": num(tukey.statistic[a, b]),
                               "se": num(se), "lower": num(ci.low[a, b]), "upper": num(ci.high[a, b]),
                               "p_adj": num(tukey.pvalue[a, b])})
    else:
        # scipy.stats.tukey_hsd refuses groups of one; use its studentized range directly.
        qcrit = stats.studentized_range.ppf(1 - alpha, k, nu)
        for a, b in pairs:
            se = math.sqrt(mse * (1 / len(groups[a]) + 1 / len(groups[b])))
            d = means[a] - means[b]
            tukey_rows.append({"a": levels[a], "b": levels[b], "diff": num(d), "se": num(se),
                               "lower": num(d - qcrit / math.sqrt(2) * se), "upper": num(d + qcrit / math.sqrt(2) * se),
                               "p_adj": num(stats.studentized_range.sf(math.sqrt(2) * abs(d) / se, k, nu))})
    return {
        "name": name, "source": source, "csv": str(path.relative_to(ROOT)),
        "response": response, "factor": factor, "levels": levels,
        "anova": {
            "df1": int(effect["df"]), "ss_between": num(effect["sum_sq"]), "ms_between": num(effect["mean_sq"]),
            "f": num(effect["F"]), "p": num(effect["PR(>F)"]),
            "df2": int(resid["df"]), "ss_within": num(resid["sum_sq"]), "ms_within": mse,
            "r_squared": num(model.rsquared),
            "f_crit": num(stats.f.isf(alpha, int(effect["df"]), int(resid["df"]))),
        },
        "groups": group_rows,
        "comparisons": {"lsd": lsd, "bonferroni": bonf_rows, "holm": holm_rows, "tukey": tukey_rows},
        "scipy_f_oneway": num(stats.f_oneway(*groups).statistic),
    }


def oneway():
    data = ROOT / "tests" / "data"
    cases = [
        oneway_case("plant_growth", data / "open" / "PlantGrowth.csv", "weight", "group",
                    "Dobson (1983) plant weights, via pydataset; see tests/data/open/SOURCES.md"),
        oneway_case("primer", data / "invented" / "primer.csv", "strength", "primer",
                    "invented, unequal n 3/5/4/6"),
        oneway_case("singleton", data / "invented" / "singleton.csv", "volume", "formulation",
                    "invented, one level with n = 1"),
    ]
    return {"generator": "tests/reference/generate.py", "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__, "alpha": 0.05, "cases": cases}


def robust_case(name, path, response, factor, source, control):
    """Checks, alternatives and further procedures for one dataset."""
    import pingouin as pg
    import scikit_posthocs as sp

    df = pd.read_csv(path, dtype={factor: str})
    levels = list(dict.fromkeys(df[factor]))
    groups = [df.loc[df[factor] == lv, response].to_numpy(float) for lv in levels]
    k, n = len(groups), len(df)
    means = [g.mean() for g in groups]
    resid = np.concatenate([g - g.mean() for g in groups])
    mse = float(sum(((g - g.mean()) ** 2).sum() for g in groups) / (n - k))
    nu = n - k
    alpha = 0.05
    pairs = [(j, i) for i in range(k) for j in range(i + 1, k)]
    m = len(pairs)

    bf = stats.levene(*groups, center="median")
    lev = stats.levene(*groups, center="mean")
    bart = stats.bartlett(*groups)
    sw = stats.shapiro(resid)
    checks = {
        "brown_forsythe": {"statistic": num(bf.statistic), "p": num(bf.pvalue)},
        "levene": {"statistic": num(lev.statistic), "p": num(lev.pvalue)},
        "bartlett": {"statistic": num(bart.statistic), "p": num(bart.pvalue)},
        "shapiro_wilk": {"w": num(sw.statistic), "p": num(sw.pvalue), "n": len(resid)},
        "skewness": num(stats.skew(resid, bias=False)),
        "excess_kurtosis": num(stats.kurtosis(resid, bias=False)),
    }

    long = pd.DataFrame({"y": df[response].astype(float), "g": df[factor]})
    w = pg.welch_anova(data=long, dv="y", between="g")
    welch = {"f": num(w["F"].iloc[0]), "df1": num(w["ddof1"].iloc[0]), "df2": num(w["ddof2"].iloc[0]),
             "p": num(w["p_unc"].iloc[0] if "p_unc" in w else w["p-unc"].iloc[0])}
    gh = pg.pairwise_gameshowell(data=long, dv="y", between="g")
    games_howell = []
    for a, b in pairs:
        row = gh[((gh["A"] == levels[a]) & (gh["B"] == levels[b])) | ((gh["A"] == levels[b]) & (gh["B"] == levels[a]))].iloc[0]
        sign = 1.0 if row["A"] == levels[a] else -1.0
        pcol = "pval" if "pval" in row else "p-tukey"
        games_howell.append({"a": levels[a], "b": levels[b], "diff": num(sign * row["diff"]),
                             "se": num(row["se"]), "df": num(row["df"]), "p_adj": num(row[pcol])})

    kw = stats.kruskal(*groups)
    dunn_b = sp.posthoc_dunn(long, val_col="y", group_col="g", p_adjust="bonferroni")
    dunn_h = sp.posthoc_dunn(long, val_col="y", group_col="g", p_adjust="holm")
    dunn = [{"a": levels[a], "b": levels[b], "p_bonferroni": num(dunn_b.loc[levels[a], levels[b]]),
             "p_holm": num(dunn_h.loc[levels[a], levels[b]])} for a, b in pairs]
    scheffe_m = sp.posthoc_scheffe(long, val_col="y", group_col="g")
    scheffe = [{"a": levels[a], "b": levels[b], "p_adj": num(scheffe_m.loc[levels[a], levels[b]])} for a, b in pairs]
    raw = []
    for a, b in pairs:
        se = math.sqrt(mse * (1 / len(groups[a]) + 1 / len(groups[b])))
        raw.append(2 * stats.t.sf(abs(means[a] - means[b]) / se, nu))
    sidak = [{"a": levels[a], "b": levels[b], "p_adj": num(p)}
             for (a, b), p in zip(pairs, multipletests(raw, method="sidak")[1])]

    ci = levels.index(control)
    others = [i for i in range(k) if i != ci]
    dn = stats.dunnett(*[groups[i] for i in others], control=groups[ci], rng=np.random.default_rng(1))
    dunnett = [{"treatment": levels[i], "p_adj": num(p)} for i, p in zip(others, dn.pvalue)]

    ss_b = sum(len(g) * (g.mean() - np.concatenate(groups).mean()) ** 2 for g in groups)
    f_obs = (ss_b / (k - 1)) / mse
    return {
        "name": name, "source": source, "csv": str(path.relative_to(ROOT)), "response": response,
        "factor": factor, "levels": levels, "control": control, "checks": checks, "welch": welch,
        "games_howell": games_howell,
        "kruskal": {"h": num(kw.statistic), "df": k - 1, "p": num(kw.pvalue),
                    "medians": [num(np.median(g)) for g in groups]},
        "dunn": dunn, "scheffe": scheffe, "sidak": sidak, "dunnett_scipy": dunnett,
        "effect": {"f": num(f_obs), "df1": k - 1, "df2": nu,
                   "ncf_cdf_at_f": [{"nc": nc, "cdf": num(stats.ncf.cdf(f_obs, k - 1, nu, nc))}
                                    for nc in [0.5, 2.0, 8.0, 25.0]]},
    }


def robust():
    data = ROOT / "tests" / "data"
    import pingouin
    import scikit_posthocs
    cases = [
        robust_case("plant_growth", data / "open" / "PlantGrowth.csv", "weight", "group",
                    "Dobson (1983) plant weights", "ctrl"),
        robust_case("assay", data / "invented" / "assay.csv", "signal", "condition",
                    "invented, unequal spreads and n, ties", "A"),
        robust_case("primer", data / "invented" / "primer.csv", "strength", "primer",
                    "invented, unequal n", "P0"),
    ]
    ncf = []
    for d1, d2 in [(2, 27), (3, 16), (4, 120), (1, 10)]:
        for nc in [0.0, 1.0, 5.0, 20.0, 80.0]:
            for x in [0.5, 2.0, 4.0, 10.0]:
                ncf.append({"x": x, "d1": d1, "d2": d2, "nc": nc, "cdf": num(stats.ncf.cdf(x, d1, d2, nc))})
    from statsmodels.stats.oneway import anova_generic
    summ = pd.read_csv(ROOT / "tests" / "cases" / "summary" / "plants-summary.csv")
    eq = anova_generic(summ["mean"], summ["sd"] ** 2, summ["n"], use_var="equal")
    uneq = anova_generic(summ["mean"], summ["sd"] ** 2, summ["n"], use_var="unequal")
    summary = {"csv": "tests/cases/summary/plants-summary.csv",
               "equal": {"f": num(eq.statistic), "p": num(eq.pvalue)},
               "welch": {"f": num(uneq.statistic), "df2": num(uneq.df[1]), "p": num(uneq.pvalue)}}
    return {"generator": "tests/reference/generate.py", "scipy": scipy.__version__, "summary": summary,
            "pingouin": pingouin.__version__, "scikit_posthocs": scikit_posthocs.__version__,
            "statsmodels": statsmodels.__version__, "cases": cases, "ncf_cdf": ncf}


def factorial_case(name, path, formula_terms, response, factors, source, compare_terms, dtype=None):
    """ANOVA tables of every type and estimated marginal means for one design."""
    import patsy
    from statsmodels.formula.api import ols as fit_ols

    df = pd.read_csv(path, dtype={f: str for f in factors})
    levels = {f: list(dict.fromkeys(df[f])) for f in factors}
    # Sum-to-zero coding with the level order of first appearance, as sheaf uses.
    coded = {f: f"C({f}, Sum, levels={levels[f]!r})" for f in factors}
    rhs = " + ".join(":".join(coded[factors[i]] for i in t) for t in formula_terms)
    model = fit_ols(f"{response} ~ {rhs}", data=df).fit()
    tables = {}
    for typ in (1, 2, 3):
        try:
            t = anova_lm(model, typ=typ)
        except Exception as e:  # noqa: BLE001 - recorded, not hidden
            tables[str(typ)] = {"error": str(e)}
            continue
        rows = []
        for (label, row) in t.iterrows():
            if label in ("Intercept",):
                continue
            rows.append({"label": label, "df": num(row["df"]), "ss": num(row["sum_sq"]),
                         "f": num(row.get("F", float("nan"))), "p": num(row.get("PR(>F)", float("nan")))})
        tables[str(typ)] = rows
    # Estimated marginal means on the full reference grid (equal weights).
    grid = pd.MultiIndex.from_product([levels[f] for f in factors], names=factors).to_frame(index=False)
    # The same right-hand side through patsy gives the model's columns in order.
    design_info = patsy.dmatrix(rhs, df).design_info
    X = np.asarray(patsy.build_design_matrices([design_info], grid)[0])
    cov = np.asarray(model.cov_params())
    beta = np.asarray(model.params)
    emms = {}
    for term in compare_terms:
        f = factors[term]
        rows = []
        Ls = []
        for lv in levels[f]:
            L = X[(grid[f] == lv).to_numpy()].mean(axis=0)
            Ls.append(L)
            rows.append({"level": lv, "emm": num(L @ beta), "se": num(math.sqrt(L @ cov @ L))})
        k = len(levels[f])
        pairs = []
        for i in range(k):
            for j in range(i + 1, k):
                d = Ls[j] - Ls[i]
                diff = d @ beta
                se = math.sqrt(d @ cov @ d)
                pairs.append({"a": levels[f][j], "b": levels[f][i], "diff": num(diff), "se": num(se),
                              "tukey_p": num(stats.studentized_range.sf(math.sqrt(2) * abs(diff) / se, k, model.df_resid))})
        emms[f] = {"means": rows, "pairs": pairs}
    return {"name": name, "source": source, "csv": str(path.relative_to(ROOT)), "response": response,
            "factors": factors, "terms": [[factors[i] for i in t] for t in formula_terms],
            "levels": levels, "df_resid": num(model.df_resid), "ssr": num(model.ssr),
            "tables": tables, "emms": emms}


def factorial():
    data = ROOT / "tests" / "data"
    cases = [
        factorial_case("warpbreaks", data / "open" / "warpbreaks.csv", [[0], [1], [0, 1]], "breaks",
                       ["wool", "tension"], "Tippett (1950) via pydataset", [0, 1]),
        factorial_case("warp_unbalanced", data / "invented" / "warp-unbalanced.csv", [[0], [1], [0, 1]], "breaks",
                       ["wool", "tension"], "warpbreaks with an invented deletion pattern", [0, 1]),
        factorial_case("warp_empty_cell", data / "invented" / "warp-empty-cell.csv", [[0], [1], [0, 1]], "breaks",
                       ["wool", "tension"], "warpbreaks with cell B-H removed (invented)", []),
        factorial_case("warp_additive_empty", data / "invented" / "warp-empty-cell.csv", [[0], [1]], "breaks",
                       ["wool", "tension"], "additive model on the empty-cell data", [0, 1]),
        factorial_case("immer", data / "open" / "immer.csv", [[0], [1]], "Y1", ["Var", "Loc"],
                       "Immer et al. (1934) barley, randomized complete blocks", [0]),
        factorial_case("three_factor", data / "invented" / "three-factor.csv",
                       [[0], [1], [2], [0, 1], [0, 2], [1, 2], [0, 1, 2]], "y", ["fert", "water", "cultivar"],
                       "invented 2 x 2 x 3, unequal replication", [0, 2]),
    ]
    return {"generator": "tests/reference/generate.py", "statsmodels": statsmodels.__version__,
            "coding": "sum-to-zero (C(x, Sum)), levels in order of first appearance", "cases": cases}


def main():
    for name, builder in [("oneway.json", oneway), ("distributions.json", distributions), ("robust.json", robust),
                          ("factorial.json", factorial)]:
        text = json.dumps(builder(), indent=1, allow_nan=False)
        (OUT / name).write_text(text + "\n")
        print("wrote", OUT / name)


if __name__ == "__main__":
    main()
