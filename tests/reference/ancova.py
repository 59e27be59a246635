"""Reference for analysis of covariance (linear-extensions spec, section A.8).

Data: tests/data/open/anorexia.csv, model Postwt ~ Treat + Prewt (Treat levels
in file order Cont, CBT, FT; Prewt the covariate). Written to
tests/reference/ancova.json, each value with the specification's number
beside it where A.8 prints one ("spec_value", "rel_diff", "agrees" at 1e-9
relative; see spec_check.py).

What comes from where:
- within-group sums Exx, Exy, Eyy, the common slope, SSE and MSE: numpy,
  two-pass sums (group means first), cross-checked against statsmodels OLS;
- the ANCOVA table: statsmodels `anova_lm` typ 2 and typ 3 on
  `Postwt ~ C(Treat, Sum) + Prewt`, typ 1 with Treat first, and Prewt-first
  Type I from nested OLS fits (the formula engine moves categorical terms
  first); pingouin `ancova` (Type II SS, F, p, partial eta squared);
- adjusted means: statsmodels `get_prediction` on the grid (each level,
  Prewt = grand mean), SEs and 95% CIs from the model covariance;
- pairwise differences: statsmodels `t_test` on grid-row differences; the
  Tukey-type p from scipy `studentized_range` at sqrt(2)|t| and 3 means;
  the exact all-pairs p with the model's correlation of the three
  differences by nested scipy `integrate.quad` (deterministic; below);
- equal-slopes test: nested OLS fits `C(Treat) + Prewt` against
  `C(Treat) * Prewt`, per-group slopes, the separate-slopes means at the
  grand mean (`get_prediction`) and the Johnson-Neyman boundaries for
  FT - Cont from that model's covariance (quadratic formula, numpy);
- balance F (Prewt ~ Treat), one-way ANOVA of Postwt and of the change score:
  scipy `f_oneway`.

Exact all-pairs probability for three means. The differences d12, d23 and
d13 = d12 + d23 have SEs sqrt(MSE) m_ij; with U_ij = d_ij / (sigma m_ij)
standard normal under H0, U13 = a U12 + b U23 (a = m12/m13, b = m23/m13) and
corr(U12, U23) = r. Then

    P(max |T_ij| <= c) = E_S[ int_{-cS}^{cS} phi(z) P(U23 in I(z) | U12 = z) dz ],

I(z) = [-cS, cS] intersected with [(-cS - a z)/b, (cS - a z)/b], U23 | z ~
N(r z, 1 - r^2), S = sqrt(chi2_nu / nu). Both integrals by `quad` with the
kinks of I(z) passed as break points (epsrel 1e-12).

    /tmp/venv-ref/bin/python tests/reference/ancova.py
"""
import json
import math
import os

import numpy as np
import pandas as pd
import pingouin
import statsmodels.formula.api as smf
from scipy import integrate, optimize, special, stats
from statsmodels.stats.anova import anova_lm

from letter_sets import letters
from spec_check import checked, checked_list, summary, versions

HERE = os.path.dirname(os.path.abspath(__file__))
LEVELS = ["Cont", "CBT", "FT"]
ALPHA = 0.05
SQRT_2PI = math.sqrt(2 * math.pi)
QUAD = dict(epsabs=1e-14, epsrel=1e-12, limit=400)


def load():
    data = pd.read_csv(os.path.join(HERE, "..", "data", "open", "anorexia.csv"))
    assert list(dict.fromkeys(data["Treat"])) == LEVELS
    data["Treat"] = pd.Categorical(data["Treat"], categories=LEVELS)
    data["Change"] = data["Postwt"] - data["Prewt"]
    return data


def within_sums(data):
    """Exx, Exy, Eyy about the group means (two-pass)."""
    exx = exy = eyy = 0.0
    for level in LEVELS:
        g = data[data["Treat"] == level]
        dx = g["Prewt"].to_numpy() - g["Prewt"].mean()
        dy = g["Postwt"].to_numpy() - g["Postwt"].mean()
        exx += float(dx @ dx)
        exy += float(dx @ dy)
        eyy += float(dy @ dy)
    return exx, exy, eyy


def descriptives(data):
    groups = data.groupby("Treat", observed=True)
    return {
        "levels": LEVELS,
        "n": [int(groups.size()[lv]) for lv in LEVELS],
        "N": int(len(data)),
        "covariate_grand_mean": checked(data["Prewt"].mean(), "82.4083333333"),
        "covariate_means": checked_list(
            [groups["Prewt"].mean()[lv] for lv in LEVELS],
            ["81.5576923077", "82.6896551724", "83.2294117647"],
        ),
        "unadjusted_means": checked_list(
            [groups["Postwt"].mean()[lv] for lv in LEVELS],
            ["81.1076923077", "85.6965517241", "90.4941176471"],
        ),
        "covariate_range": [float(data["Prewt"].min()), float(data["Prewt"].max())],
        "covariate_range_by_level": [
            [float(groups["Prewt"].min()[lv]), float(groups["Prewt"].max()[lv])] for lv in LEVELS
        ],
    }


def common_slope(data, fit):
    exx, exy, eyy = within_sums(data)
    b = exy / exx
    sse = eyy - exy * exy / exx
    nu = len(data) - len(LEVELS) - 1
    mse = sse / nu
    assert abs(b - fit.params["Prewt"]) <= 1e-12 * abs(b)
    assert abs(sse - fit.ssr) <= 1e-10 * sse and fit.df_resid == nu
    return {
        "Exx": checked(exx, "1874.34565221"),
        "Exy": checked(exy, "814.330368232"),
        "Eyy": checked(eyy, "3665.05752848"),
        "slope": checked(b, "0.434461150361"),
        "slope_se": checked(math.sqrt(mse / exx), "0.161182361852"),
        "slope_statsmodels": checked(fit.params["Prewt"], "0.434461150361"),
        "slope_se_statsmodels": checked(fit.bse["Prewt"], "0.161182361852"),
        "sse": checked(sse, "3311.26261992"),
        "df": nu,
        "mse": checked(mse, "48.6950385282"),
        "sse_statsmodels": checked(fit.ssr, "3311.26261992"),
    }


def table_rows(table, names, specs):
    rows = {}
    for name, (label, spec) in zip(names, specs.items()):
        row = table.loc[label]
        entry = {"df": float(row["df"]), "ss": checked(row["sum_sq"], spec.get("ss"))}
        if "F" in row and not math.isnan(row["F"]):
            entry["F"] = checked(row["F"], spec.get("F"))
            entry["p"] = checked(row["PR(>F)"], spec.get("p"))
        rows[name] = entry
    return rows


def ancova_tables(data, fit_sum):
    treat = {"ss": "766.272812756", "F": "7.86807892463", "p": "0.000843839823858"}
    prewt = {"ss": "353.794908556", "F": "7.26552271544", "p": "0.00885003231395"}
    resid = {"ss": "3311.26261992"}
    typ2 = anova_lm(fit_sum, typ=2)
    typ3 = anova_lm(fit_sum, typ=3)
    typ1 = anova_lm(fit_sum, typ=1)
    labels = {"C(Treat, Sum)": treat, "Prewt": prewt, "Residual": resid}
    out = {
        "type2": table_rows(typ2, ["Treat", "Prewt", "Residual"], labels),
        "type3": table_rows(typ3, ["Treat", "Prewt", "Residual"], labels),
        "type1_treat_first": table_rows(
            typ1, ["Treat", "Prewt", "Residual"],
            {"C(Treat, Sum)": {"ss": "918.986915969"}, "Prewt": {"ss": "353.794908556"},
             "Residual": resid},
        ),
    }
    out["type1_covariate_first"] = covariate_first(data)
    out["pingouin"] = pingouin_table(data)
    total = float(((data["Postwt"] - data["Postwt"].mean()) ** 2).sum())
    out["total_ss"] = checked(total)
    return out


def covariate_first(data):
    """Type I with the covariate first, from nested fits (A.3)."""
    null = smf.ols("Postwt ~ 1", data=data).fit()
    cov = smf.ols("Postwt ~ Prewt", data=data).fit()
    full = smf.ols("Postwt ~ Prewt + C(Treat)", data=data).fit()
    return {
        "Prewt": {"df": 1, "ss": checked(null.ssr - cov.ssr, "506.509011769")},
        "Treat": {"df": 2, "ss": checked(cov.ssr - full.ssr, "766.272812756")},
        "Residual": {"df": int(full.df_resid), "ss": checked(full.ssr, "3311.26261992")},
    }


def pingouin_table(data):
    table = pingouin.ancova(data=data, dv="Postwt", covar="Prewt", between="Treat")
    table = table.set_index("Source")
    spec = {
        "Treat": ("766.272812756", "7.86807892463", "0.000843839823858", "0.187925482294"),
        "Prewt": ("353.794908556", "7.26552271544", "0.00885003231395", "0.0965318840993"),
    }
    out = {}
    for source, (ss, f, p, np2) in spec.items():
        row = table.loc[source]
        out[source] = {
            "df": float(row["DF"]),
            "ss": checked(row["SS"], ss),
            "F": checked(row["F"], f),
            "p": checked(row["p_unc"] if "p_unc" in row else row["p-unc"], p),
            "partial_eta_sq": checked(row["np2"], np2),
        }
    return out


def grid(data, x):
    return pd.DataFrame({"Treat": pd.Categorical(LEVELS, categories=LEVELS), "Prewt": [x] * 3})


def adjusted_means(data, fit, slope):
    xbar = data["Prewt"].mean()
    pred = fit.get_prediction(grid(data, xbar))
    frame = pred.summary_frame(alpha=ALPHA)
    # The A.2 formula as a second route to the SEs.
    exx, _, _ = within_sums(data)
    mse = fit.scale
    formula_se = []
    formula_mean = []
    for level in LEVELS:
        g = data[data["Treat"] == level]
        dx = g["Prewt"].mean() - xbar
        formula_mean.append(g["Postwt"].mean() - slope * dx)
        formula_se.append(math.sqrt(mse * (1 / len(g) + dx * dx / exx)))
    assert np.allclose(formula_mean, frame["mean"], rtol=1e-12, atol=0)
    assert np.allclose(formula_se, frame["mean_se"], rtol=1e-10, atol=0)
    nu = fit.df_resid
    return {
        "at_covariate": float(xbar),
        "means": checked_list(frame["mean"], ["81.4772627862", "85.5743283143", "90.1373909672"]),
        "se": checked_list(frame["mean_se"], ["1.37538532466", "1.29660917345", "1.69762445677"]),
        "ci_lower": checked_list(
            frame["mean_ci_lower"], ["78.7327241021", "82.9869849925", "86.7498341065"]),
        "ci_upper": checked_list(
            frame["mean_ci_upper"], ["84.2218014703", "88.1616716361", "93.524947828"]),
        "means_formula": checked_list(formula_mean),
        "se_formula": checked_list(formula_se),
        "t_crit": checked(stats.t.ppf(1 - ALPHA / 2, nu), "1.99546893143"),
        "q_crit": checked(stats.studentized_range.ppf(1 - ALPHA, 3, nu), "3.38857586174"),
    }


def grid_matrix(data, fit, x):
    """Design rows of the reference grid (one per level, covariate at x)."""
    from patsy import build_design_matrices

    (rows,) = build_design_matrices([fit.model.data.model_spec], grid(data, x))
    return np.asarray(rows)


PAIRS = [(0, 1), (0, 2), (1, 2)]
PAIR_SPEC = {
    "d": ["-4.09706552807", "-8.66012818099", "-4.56306265292"],
    "se": ["1.89349260697", "2.19314941164", "2.13333592264"],
    "t": ["-2.16376103767", "-3.94871782789", "-2.13893302245"],
    "p": ["0.0339993147203", "0.000189023798034", "0.0360350846649"],
    "p_tukey": ["0.0848767139812", "0.000548410966061", "0.0895782310946"],
    "p_exact": ["0.0844581895", "0.000545589537", "0.0891410790"],
    "tukey_lower": ["-8.63403470519", "-13.9151005241", "-9.67471679398"],
    "tukey_upper": ["0.439903649046", "-3.40515583791", "0.548591488143"],
}


def exact_all_pairs_cdf(c, a, b, r, nu):
    """P(max |T_ij| <= c) for the three pairwise t statistics (see the header)."""
    sr = math.sqrt(1 - r * r)

    def given_scale(s):
        h = c * s

        def inner(z):
            lo = max(-h, (-h - a * z) / b)
            hi = min(h, (h - a * z) / b)
            if hi <= lo:
                return 0.0
            mu = r * z
            mass = special.ndtr((hi - mu) / sr) - special.ndtr((lo - mu) / sr)
            return math.exp(-z * z / 2) / SQRT_2PI * mass

        kinks = sorted(
            k for k in ((h - h * b) / a, (-h + h * b) / a, (h + h * b) / a, (-h - h * b) / a)
            if -h < k < h
        )
        return integrate.quad(inner, -h, h, points=kinks or None, **QUAD)[0]

    def density(s):
        log = (math.log(2.0) + (nu / 2) * math.log(nu / 2) - math.lgamma(nu / 2)
               + (nu - 1) * math.log(s) - nu * s * s / 2)
        return math.exp(log)

    mode = math.sqrt((nu - 1) / nu)
    parts = [(0.0, mode), (mode, 3.0), (3.0, np.inf)]
    return sum(integrate.quad(lambda s: density(s) * given_scale(s), lo, hi, **QUAD)[0]
               for lo, hi in parts)


def quadrature_self_check(nu):
    """Equal n gives a = b = 1, r = -1/2, where the studentized range is exact."""
    c = 2.4
    ours = exact_all_pairs_cdf(c, 1.0, 1.0, -0.5, nu)
    theirs = stats.studentized_range.cdf(c * math.sqrt(2), 3, nu)
    assert abs(ours - theirs) < 1e-9, (ours, theirs)
    return {"c": c, "quadrature": ours, "scipy_studentized_range": float(theirs)}


def pairwise(data, fit, means):
    xbar = data["Prewt"].mean()
    rows = grid_matrix(data, fit, xbar)
    nu = fit.df_resid
    cov = fit.cov_params().to_numpy()
    diffs = np.array([rows[i] - rows[j] for i, j in PAIRS])
    vd = diffs @ cov @ diffs.T
    m = np.sqrt(np.diag(vd) / fit.scale)
    corr = vd / np.sqrt(np.outer(np.diag(vd), np.diag(vd)))
    # U13 = (m12 U12 + m23 U23) / m13 with pair order (12, 13, 23).
    a, b, r = m[0] / m[1], m[2] / m[1], corr[0, 2]
    qcrit = stats.studentized_range.ppf(1 - ALPHA, 3, nu)
    out = {k: [] for k in PAIR_SPEC}
    test = fit.t_test(diffs)
    for idx, (i, j) in enumerate(PAIRS):
        d = float(test.effect[idx])
        se = float(test.sd[idx])
        t = d / se
        out["d"].append(d)
        out["se"].append(se)
        out["t"].append(t)
        out["p"].append(float(test.pvalue[idx]))
        out["p_tukey"].append(float(stats.studentized_range.sf(math.sqrt(2) * abs(t), 3, nu)))
        out["p_exact"].append(1 - exact_all_pairs_cdf(abs(t), a, b, r, nu))
        half = qcrit / math.sqrt(2) * se
        out["tukey_lower"].append(d - half)
        out["tukey_upper"].append(d + half)
    exact_crit = optimize.brentq(
        lambda c: exact_all_pairs_cdf(c, a, b, r, nu) - (1 - ALPHA), 2.0, 3.0, xtol=1e-13)
    result = {"pairs": [f"{LEVELS[i]} - {LEVELS[j]}" for i, j in PAIRS], "df": int(nu)}
    for key, spec in PAIR_SPEC.items():
        result[key] = checked_list(out[key], spec)
    result["crit_abs_t_tukey"] = checked(qcrit / math.sqrt(2), "2.3960849704")
    result["crit_abs_t_exact"] = checked(exact_crit, "2.39382880085")
    result["correlations_12_13_23"] = {
        "pairs": ["(Cont-CBT, Cont-FT)", "(Cont-CBT, CBT-FT)", "(Cont-FT, CBT-FT)"],
        "values": checked_list([corr[0, 1], corr[0, 2], corr[1, 2]],
                               ["0.462841662666", "-0.411754978428", "0.6172315064"]),
    }
    result["quadrature_self_check_equal_n"] = quadrature_self_check(nu)
    result["letters_tukey"] = tukey_letters(means, out["p_tukey"])
    return result


def tukey_letters(means, pvalues):
    differ = {}
    for (i, j), p in zip(PAIRS, pvalues):
        differ[(i, j)] = differ[(j, i)] = p < ALPHA
    out = letters(LEVELS, means, lambda i, j: differ[(i, j)])
    out["spec"] = {"FT": "a", "CBT": "ab", "Cont": "b"}
    return out


def slopes(data):
    common = smf.ols("Postwt ~ C(Treat) + Prewt", data=data).fit()
    separate = smf.ols("Postwt ~ C(Treat) * Prewt", data=data).fit()
    test = anova_lm(common, separate)
    per_group = []
    for level in LEVELS:
        g = data[data["Treat"] == level]
        per_group.append(smf.ols("Postwt ~ Prewt", data=g).fit().params["Prewt"])
    xbar = data["Prewt"].mean()
    pred = separate.get_prediction(grid(data, xbar)).summary_frame(alpha=ALPHA)
    return {
        "F": checked(test["F"].iloc[1], "5.41123080123"),
        "df": [int(test["df_diff"].iloc[1]), int(test["df_resid"].iloc[1])],
        "p": checked(test["Pr(>F)"].iloc[1], "0.00666559073481"),
        "ss": checked(test["ss_diff"].iloc[1], "466.478316526"),
        "interaction_type2_F": checked(anova_lm(separate, typ=2).loc["C(Treat):Prewt", "F"],
                                       "5.41123080123"),
        "slopes_by_level": checked_list(
            per_group, ["-0.134184503693", "0.847981620578", "0.909226233953"]),
        "separate_mse": checked(separate.scale, "43.1027924757"),
        "separate_df": int(separate.df_resid),
        "separate_means_at_grand_mean": checked_list(
            pred["mean"], ["80.9935494638", "85.4579959751", "89.7475715971"]),
        "separate_se_at_grand_mean": checked_list(
            pred["mean_se"], ["1.30234509203", "1.22126660547", "1.61481337421"]),
        "johnson_neyman_FT_minus_Cont": johnson_neyman(data, separate),
    }


def johnson_neyman(data, separate):
    """D(x) = a + c x for FT - Cont from the separate-slopes fit; |D|/SE = t boundaries."""
    from patsy import build_design_matrices

    info = separate.model.data.model_spec
    at = pd.DataFrame({"Treat": pd.Categorical(["FT", "Cont", "FT", "Cont"], categories=LEVELS),
                       "Prewt": [0.0, 0.0, 1.0, 1.0]})
    (rows,) = build_design_matrices([info], at)
    rows = np.asarray(rows)
    intercept_row = rows[0] - rows[1]
    slope_row = (rows[2] - rows[3]) - intercept_row
    beta = separate.params.to_numpy()
    cov = separate.cov_params().to_numpy()
    a, c = intercept_row @ beta, slope_row @ beta
    vaa, vac, vcc = intercept_row @ cov @ intercept_row, intercept_row @ cov @ slope_row, slope_row @ cov @ slope_row
    t = stats.t.ppf(1 - ALPHA / 2, separate.df_resid)
    qa, qb, qc = c * c - t * t * vcc, 2 * (a * c - t * t * vac), a * a - t * t * vaa
    disc = qb * qb - 4 * qa * qc
    roots = sorted([(-qb - math.sqrt(disc)) / (2 * qa), (-qb + math.sqrt(disc)) / (2 * qa)])
    return {
        "intercept_difference": checked(a, "-77.2317177382"),
        "slope_difference": checked(c, "1.04341073765"),
        "boundaries": checked_list(roots, ["44.6363238078", "78.9169008465"]),
        "t_crit": float(t),
    }


def other_checks(data):
    groups = [data[data["Treat"] == lv] for lv in LEVELS]
    balance = stats.f_oneway(*[g["Prewt"] for g in groups])
    oneway = stats.f_oneway(*[g["Postwt"] for g in groups])
    change = stats.f_oneway(*[g["Change"] for g in groups])
    return {
        "balance_F": checked(balance.statistic, "0.599485211015"),
        "balance_p": checked(balance.pvalue, "0.551928743386"),
        "oneway_postwt_F": checked(oneway.statistic, "8.65062781541"),
        "oneway_postwt_p": checked(oneway.pvalue, "0.000444327487406"),
        "change_score_F": checked(change.statistic, "5.42229686824"),
        "change_score_p": checked(change.pvalue, "0.0064986529807"),
    }


def main():
    data = load()
    fit_sum = smf.ols("Postwt ~ C(Treat, Sum) + Prewt", data=data).fit()
    common = common_slope(data, fit_sum)
    adjusted = adjusted_means(data, fit_sum, common["slope"]["value"])
    doc = {
        "versions": versions(pingouin=pingouin.__version__),
        "data": "tests/data/open/anorexia.csv",
        "model": "Postwt ~ Treat + Prewt (covariate Prewt)",
        "descriptives": descriptives(data),
        "common_slope": common,
        "tables": ancova_tables(data, fit_sum),
        "adjusted_means": adjusted,
        "differences": pairwise(data, fit_sum, [m["value"] for m in adjusted["means"]]),
        "slopes_test": slopes(data),
        "other_checks": other_checks(data),
    }
    doc["agreement"] = summary(doc)
    with open(os.path.join(HERE, "ancova.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")
    print(json.dumps(doc["agreement"], indent=1))


if __name__ == "__main__":
    main()
