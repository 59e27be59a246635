"""Reference for planned contrasts and polynomial trends (linear-extensions
spec, section B.6). Written to tests/reference/contrasts_trends.json, each
value with the specification's number beside it where B.6 prints one
("spec_value", "rel_diff", "agrees" at 1e-9 relative; see spec_check.py).

npk (tests/data/open/npk.csv), yield ~ block + N*P*K with N:P:K confounded
with blocks:
- aliasing: own Gram-Schmidt pass over the sum-to-zero design columns in
  term order (numpy), which must find N:P:K and nothing else;
- the table: statsmodels `anova_lm(typ=1)` on the model without N:P:K; the
  spurious row statsmodels prints when N:P:K is left in (recorded as an
  oracle pitfall, not as a value to reproduce);
- contrasts on marginal means: rows of the full reference grid (block x N x
  P x K) through the fitted model's patsy design, averaged per mean, then
  statsmodels `t_test` (estimate, SE, t, df, p; F = t^2) and `f_test` for the
  joint test of the three two-factor interactions; orthogonality of the set
  from the contrasts' covariance lambda (X'X)^-1 lambda'.

P.promelas (tests/data/open/P.promelas.csv), dry weight on concentration 0,
32, 64, 128, 256, 512 ug/L:
- orthogonal polynomial coefficients for the actual spacing: numpy QR of the
  Vandermonde matrix of the centred and scaled scores u = (x - xbar)/half
  range, rows weighted by sqrt(n_i); linear and quadratic rescaled to the
  smallest integers, the cubic to max |c| = 1;
- components SS_d = L_d^2 / sum(n c^2), F against the pure-error MSE, p from
  scipy; lack of fit after degrees 1, 2, 3;
- checks: statsmodels OLS with the polynomial coefficients as an explicit
  patsy contrast matrix (t^2 = F), nested fits `anova_lm(lin, quad, full)`,
  patsy `Poly(scores=...)`, and the default equal-spacing `Poly` (a pitfall);
- the fitted line (statsmodels OLS, `get_prediction` at 100 ug/L), its SEs
  on the pure-error MSE, the Working-Hotelling multiplier (scipy F);
- the quadratic's stationary point -b1/(2 b2) with its Fieller (1954) set
  (no value in the spec: the quadratic is not significant there, so the set
  is reported as it comes out, bounded or not);
- unequal replication (tests/data/invented/promelas-unequal.csv: the open
  data with the last 512 ug/L row removed, an invented deletion): weighted
  components against statsmodels' sequential SS of u..u^5, and the
  unweighted coefficients that do not add up.

    /tmp/venv-ref/bin/python tests/reference/contrasts_trends.py
"""
import itertools
import json
import math
import os
import warnings

import numpy as np
import pandas as pd
import patsy
import statsmodels.formula.api as smf
from patsy import build_design_matrices
from patsy.contrasts import ContrastMatrix
from scipy import stats
from statsmodels.stats.anova import anova_lm

from spec_check import checked, checked_list, summary, versions

HERE = os.path.dirname(os.path.abspath(__file__))
ALPHA = 0.05
NPK_TERMS = ["block", "N", "P", "K", "N:P", "N:K", "P:K"]


def read(folder, name, dtype=None):
    return pd.read_csv(os.path.join(HERE, "..", "data", folder, name), dtype=dtype)


# ---------------------------------------------------------------- npk


def npk_data():
    data = read("open", "npk.csv", dtype=str)
    data["y"] = data["yield"].astype(float)
    return data


NPK_FORMULA = ("y ~ C(block, Sum) + C(N, Sum) + C(P, Sum) + C(K, Sum) + C(N, Sum):C(P, Sum)"
               " + C(N, Sum):C(K, Sum) + C(P, Sum):C(K, Sum)")


def npk_aliasing(data):
    """Own pass over the full design in term order: a column is aliased when its
    residual on the columns kept before it vanishes (relative 1e-9)."""
    full = patsy.dmatrix("C(block, Sum) + C(N, Sum)*C(P, Sum)*C(K, Sum)", data,
                         return_type="dataframe")
    kept, aliased = [], []
    basis = np.zeros((len(data), 0))
    for name in full.columns:
        col = full[name].to_numpy()
        resid = col - basis @ (basis.T @ col)
        resid = resid - basis @ (basis.T @ resid)
        if np.linalg.norm(resid) <= 1e-9 * np.linalg.norm(col):
            aliased.append(name)
        else:
            kept.append(name)
            basis = np.column_stack([basis, resid / np.linalg.norm(resid)])
    return {"aliased_columns": aliased, "kept_columns": len(kept),
            "expected": "only the N:P:K column"}


def npk_table(fit):
    table = anova_lm(fit, typ=1)
    spec = {
        "block": ("343.295", "4.4466664268", "0.0159387902082"),
        "N": ("189.281666667", "12.2587342137", "0.0043718118258"),
        "P": ("8.40166666667", "0.54412981686", "0.474904092674"),
        "K": ("95.2016666667", "6.16568920232", "0.0287950535002"),
        "N:P": ("21.2816666667", "1.37829669341", "0.263165282877"),
        "N:K": ("33.135", "2.14597200734", "0.1686478785"),
        "P:K": ("0.481666666667", "0.031194905192", "0.862752085685"),
    }
    rows = {}
    for name, label in zip(NPK_TERMS, [r for r in table.index if r != "Residual"]):
        ss, f, p = spec[name]
        row = table.loc[label]
        rows[name] = {"df": float(row["df"]), "ss": checked(row["sum_sq"], ss),
                      "F": checked(row["F"], f), "p": checked(row["PR(>F)"], p)}
    res = table.loc["Residual"]
    rows["Residual"] = {"df": float(res["df"]), "ss": checked(res["sum_sq"], "185.286666667"),
                        "ms": checked(res["mean_sq"], "15.4405555556")}
    return rows


def npk_pitfalls(data):
    """What statsmodels prints for the rank-deficient model (B.1, B.6): not an oracle."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the rank deficiency is the point here
        fit = smf.ols("y ~ C(block) + C(N)*C(P)*C(K)", data=data).fit()
    table = anova_lm(fit, typ=1)
    row = table.loc["C(N):C(P):C(K)"]
    name = [c for c in fit.params.index if c.count(":") == 2][0]
    test = fit.t_test(np.eye(len(fit.params))[list(fit.params.index).index(name)])
    cells = data.groupby(["N", "P", "K"])["y"].mean()
    sign = np.array([(-1) ** (3 - sum(int(v) for v in key)) for key in cells.index])
    contrast = float(sign @ cells.to_numpy())
    return {
        "typ1_spurious_NPK_row": {
            "df": float(row["df"]), "ss": checked(row["sum_sq"]), "F": checked(row["F"]),
            "spec_ss_F_not_reproducible": [12.0859614337, 0.782741358642],
            "ss_under_row_permutations": spurious_under_permutations(data),
            "note": "the aliased column's direction in the QR is rounding noise, so its SS is"
                    " arbitrary (it changes with the row order); only the row's existence with"
                    " df 1 is the finding",
        },
        "t_test_NPK_coefficient_treatment_coding": {
            "estimate": checked(test.effect[0], "-2.1029411765"),
            "se": checked(test.sd[0, 0], "2.1435408550"),
            "p": checked(np.squeeze(test.pvalue), "0.3459295498"),
        },
        "NPK_contrast_ss_ignoring_blocks": checked(contrast ** 2 / (8 / 3), "37.0016666667"),
    }


def spurious_under_permutations(data):
    rng = np.random.default_rng(20261204)
    out = []
    for _ in range(4):
        shuffled = data.iloc[rng.permutation(len(data))].reset_index(drop=True)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            fit = smf.ols("y ~ C(block) + C(N)*C(P)*C(K)", data=shuffled).fit()
        out.append(float(anova_lm(fit, typ=1).loc["C(N):C(P):C(K)", "sum_sq"]))
    return out


def reference_grid(data):
    levels = {f: sorted(data[f].unique()) for f in ("block", "N", "P", "K")}
    rows = list(itertools.product(*levels.values()))
    return pd.DataFrame(rows, columns=list(levels)).assign(y=0.0)


def emm_rows(fit, data):
    """Function giving the averaged grid row for a mean defined by factor values."""
    grid = reference_grid(data)
    (x,) = build_design_matrices([fit.model.data.model_spec], grid)
    x = np.asarray(x)

    def row(**at):
        mask = np.ones(len(grid), dtype=bool)
        for factor, level in at.items():
            mask &= (grid[factor] == level).to_numpy()
        return x[mask].mean(axis=0)

    return row


def npk_contrasts(data, fit):
    row = emm_rows(fit, data)
    n1_n0 = row(N="1") - row(N="0")
    nk = (row(N="1", K="1") - row(N="0", K="1")) - (row(N="1", K="0") - row(N="0", K="0"))
    k_in_n1 = row(N="1", K="1") - row(N="1", K="0")
    specs = {
        "N1 - N0": (n1_n0, ("5.61666666667", "1.60419011527", "3.50124752248", "0.0043718118258"),
                    "12.2587342137"),
        "(N1K1 - N0K1) - (N1K0 - N0K0)": (
            nk, ("-4.7", "3.20838023054", "-1.46491365184", "0.1686478785"), "2.14597200734"),
        "K1 - K0 within N1": (
            k_in_n1, ("-6.33333333333", "2.26866741764", "-2.79165349848", "0.0162945092123"), None),
    }
    out = []
    for name, (lam, (est, se, t, p), f_spec) in specs.items():
        test = fit.t_test(lam)
        tval = float(np.squeeze(test.tvalue))
        out.append({
            "contrast": name, "df": float(fit.df_resid),
            "estimate": checked(test.effect[0], est), "se": checked(test.sd[0, 0], se),
            "t": checked(tval, t), "p": checked(np.squeeze(test.pvalue), p),
            "F": checked(tval * tval, f_spec),
        })
    lams = np.array([s[0] for s in specs.values()])
    v = lams @ fit.normalized_cov_params.to_numpy() @ lams.T
    pairs = {}
    for i, j in itertools.combinations(range(3), 2):
        key = f"{out[i]['contrast']} | {out[j]['contrast']}"
        pairs[key] = {"cross_product": float(v[i, j]), "orthogonal": bool(abs(v[i, j]) <= 1e-12)}
    return {"contrasts": out, "orthogonality": pairs, "set_orthogonal": all(
        p["orthogonal"] for p in pairs.values())}


def npk_means_and_joint(data, fit):
    row = emm_rows(fit, data)
    beta = fit.params.to_numpy()
    n_means = [row(N=lv) @ beta for lv in ("0", "1")]
    cells = [row(N=n, K=k) @ beta for n, k in (("0", "0"), ("0", "1"), ("1", "0"), ("1", "1"))]
    names = list(fit.params.index)
    interactions = [i for i, c in enumerate(names) if c.count(":") == 1]
    joint = fit.f_test(np.eye(len(names))[interactions])
    mse = fit.scale
    return {
        "N_means": checked_list(n_means, ["52.0666666667", "57.6833333333"]),
        "NK_cells_N0K0_N0K1_N1K0_N1K1": checked_list(
            cells, ["52.8833333333", "51.25", "60.85", "54.5166666667"]),
        "sed_r12": checked(math.sqrt(2 * mse / 12), "1.60419011527"),
        "sed_r6": checked(math.sqrt(2 * mse / 6), "2.26866741764"),
        "joint_two_factor_interactions": {
            "F": checked(float(np.squeeze(joint.fvalue)), "1.18515453531"),
            "df": [int(joint.df_num), int(joint.df_denom)],
            "p": checked(float(joint.pvalue), "0.356550375202"),
        },
    }


def npk():
    data = npk_data()
    fit = smf.ols(NPK_FORMULA, data=data).fit()
    out = {"data": "tests/data/open/npk.csv", "model": "yield ~ block + N*P*K (N:P:K aliased)",
           "aliasing": npk_aliasing(data), "table_type1": npk_table(fit),
           "oracle_pitfalls": npk_pitfalls(data)}
    out.update(npk_contrasts(data, fit))
    out["means"] = npk_means_and_joint(data, fit)
    return out


# ---------------------------------------------------------------- P.promelas


def orthogonal_polynomials(scores, n):
    """Columns P_0..P_{k-1} at the levels, orthogonal under sum n_i f g (weighted QR)."""
    x = np.asarray(scores, dtype=float)
    w = np.asarray(n, dtype=float)
    centre = (w @ x) / w.sum()
    half = (x.max() - x.min()) / 2
    u = (x - centre) / half
    vander = np.vander(u, len(x), increasing=True)
    q, r = np.linalg.qr(vander * np.sqrt(w)[:, None])
    polys = q / np.sqrt(w)[:, None]
    polys = polys * np.sign(polys[-1])  # last level positive
    return polys


def integer_scale(c, limit=2000):
    """Smallest multiple of c / min|c| that is all integers, or None."""
    base = c / np.min(np.abs(c[np.abs(c) > 1e-12]))
    for m in range(1, limit):
        v = base * m
        if np.all(np.abs(v - np.round(v)) < 1e-9):
            ints = np.round(v).astype(int)
            g = math.gcd(*[abs(int(i)) for i in ints])
            return [int(i) // g for i in ints]
    return None


def group_stats(data):
    groups = data.groupby("conc")["dryweight"]
    scores = np.array(sorted(data["conc"].unique()), dtype=float)
    n = np.array([groups.size()[s] for s in scores], dtype=float)
    means = np.array([groups.mean()[s] for s in scores])
    sse = float(sum(((g - g.mean()) ** 2).sum() for _, g in groups))
    nu = int(len(data) - len(scores))
    return scores, n, means, sse / nu, nu


def components(means, n, polys, mse, nu):
    rows = []
    for d in range(1, polys.shape[1]):
        c = polys[:, d]
        ss = (n * c @ means) ** 2 / (n @ (c * c))
        f = ss / mse
        rows.append((ss, f, stats.f.sf(f, 1, nu)))
    return rows


def lack_of_fit(rows, ss_treat, mse, nu, k):
    out = {}
    for d in (1, 2, 3):
        ss = ss_treat - sum(r[0] for r in rows[:d])
        df = k - 1 - d
        f = ss / df / mse
        out[d] = (ss, df, f, stats.f.sf(f, df, nu))
    return out


def promelas_trend(data):
    scores, n, means, mse, nu = group_stats(data)
    polys = orthogonal_polynomials(scores, n)
    grand = (n @ means) / n.sum()
    ss_treat = float(n @ (means - grand) ** 2)
    rows = components(means, n, polys, mse, nu)
    lof = lack_of_fit(rows, ss_treat, mse, nu, len(scores))
    names = ["linear", "quadratic", "cubic", "quartic", "quintic"]
    spec = [("0.15217268053", "45.6778786147", "2.47607151629e-06"),
            ("0.00086089000096", "0.258414511905", "0.617385014713"),
            ("0.000641417011007", "0.192535008703", "0.666036543597"),
            ("1.80655809643e-05", "0.00542276978705", "0.942109440762"),
            ("0.00140082187711", "0.420486590897", "0.524881288914")]
    cubic = polys[:, 3] / np.max(np.abs(polys[:, 3]))
    out = {
        "scores": scores.tolist(), "n": n.tolist(),
        "means": checked_list(means, ["0.7145", "0.67375", "0.677", "0.6235", "0.5805", "0.471"]),
        "pure_error_mse": checked(mse, "0.00333143055556"), "pure_error_df": nu,
        "coefficients_linear_integer": integer_scale(polys[:, 1]),
        "coefficients_quadratic_integer": integer_scale(polys[:, 2]),
        "spec_linear_integer": [-31, -25, -19, -7, 17, 65],
        "spec_quadratic_integer": [93, 40, -6, -77, -135, 85],
        "coefficients_cubic_max1": checked_list(cubic, [
            "-0.889628160386", "0.11549373572", "0.704963719903", "0.886012704311", "-1",
            "0.183158000452"]),
        "components": {name: {"df": 1, "ss": checked(r[0], s[0]), "F": checked(r[1], s[1]),
                              "p": checked(r[2], s[2])}
                       for name, r, s in zip(names, rows, spec)},
        "treatment_ss": checked(ss_treat, "0.155093875"),
        "lack_of_fit": {
            "after_linear": lof_entry(lof[1], ("0.00292119447005", "0.219214720323",
                                               "0.924231425073")),
            "after_quadratic": lof_entry(lof[2], ("0.00206030446909", "0.206148123129",
                                                  "0.890796830735")),
            "after_cubic": lof_entry(lof[3], (None, None, None)),
        },
    }
    out["checks"] = trend_checks(data, polys, scores, rows, lof, mse)
    return out


def lof_entry(values, spec):
    ss, df, f, p = values
    return {"ss": checked(ss, spec[0]), "df": df, "F": checked(f, spec[1]),
            "p": checked(p, spec[2])}


def trend_checks(data, polys, scores, rows, lof, mse):
    """statsmodels routes to the same numbers, asserted here and recorded."""
    names = ["lin", "quad", "cub", "quar", "quin"]
    matrix = ContrastMatrix(polys[:, 1:], names)
    explicit = smf.ols("dryweight ~ C(conc, matrix)", data=data).fit()
    t2 = [float(explicit.tvalues.iloc[i + 1] ** 2) for i in range(5)]
    assert np.allclose(t2, [r[1] for r in rows], rtol=1e-10, atol=0)
    lin = smf.ols("dryweight ~ conc", data=data).fit()
    quad = smf.ols("dryweight ~ conc + I(conc**2)", data=data).fit()
    full = smf.ols("dryweight ~ C(conc)", data=data).fit()
    nested = anova_lm(lin, quad, full)
    poly_scores = smf.ols(f"dryweight ~ C(conc, Poly(scores={scores.tolist()}))", data=data).fit()
    poly_default = smf.ols("dryweight ~ C(conc, Poly)", data=data).fit()
    return {
        "explicit_contrast_matrix_t_squared": checked_list(t2, [
            "45.6778786147", "0.258414511905", "0.192535008703", "0.00542276978705",
            "0.420486590897"]),
        "nested_quadratic_ss": checked(nested["ss_diff"].iloc[1], "0.00086089000096"),
        "nested_lof_after_quadratic_ss": checked(nested["ss_diff"].iloc[2], "0.00206030446909"),
        "nested_lof_after_quadratic_F": checked(nested["F"].iloc[2], "0.206148123129"),
        "nested_lof_after_linear_ss": checked(lin.ssr - full.ssr, "0.00292119447005"),
        "poly_scores_t_squared": checked_list(
            (poly_scores.tvalues.iloc[1:] ** 2).tolist(),
            ["45.6778786147", "0.258414511905", "0.192535008703", "0.00542276978705",
             "0.420486590897"]),
        "pitfall_equal_spacing_poly_t_squared": checked_list(
            (poly_default.tvalues.iloc[1:] ** 2).tolist(),
            ["41.2491274483", "3.99623207533", "0.820638864685", "0.0241879144107",
             "0.464551193211"]),
        "pitfall_equal_spacing_quadratic_p": checked(poly_default.pvalues.iloc[2]),
    }


def fitted_line(data, mse_pe, nu_pe):
    lin = smf.ols("dryweight ~ conc", data=data).fit()
    ratio = math.sqrt(mse_pe / lin.scale)
    at = pd.DataFrame({"conc": [100.0]})
    pred = lin.get_prediction(at).summary_frame(alpha=ALPHA)
    yhat, se = float(pred["mean"].iloc[0]), float(pred["mean_se"].iloc[0])
    half_pe = stats.t.ppf(1 - ALPHA / 2, nu_pe) * se * ratio
    return {
        "intercept": checked(lin.params["Intercept"], "0.698314285714"),
        "slope": checked(lin.params["conc"], "-0.000453261808756"),
        "regression_mse": checked(lin.scale, "0.00285849747591"),
        "regression_df": int(lin.df_resid),
        "se_regression_mse": checked_list(lin.bse.tolist(), ["0.0149865349648", "6.21226092696e-05"]),
        "se_pure_error_mse": checked_list((lin.bse * ratio).tolist(),
                                          ["0.0161788521823", "6.70650363753e-05"]),
        "at_100": {
            "fitted": checked(yhat, "0.652988104839"),
            "ci_regression_mse": checked_list(
                [pred["mean_ci_lower"].iloc[0], pred["mean_ci_upper"].iloc[0]],
                ["0.628840444632", "0.677135765046"]),
            "ci_pure_error_mse": checked_list([yhat - half_pe, yhat + half_pe],
                                              ["0.626579266544", "0.679396943133"]),
        },
        "working_hotelling_multiplier": checked(
            math.sqrt(2 * stats.f.ppf(1 - ALPHA, 2, lin.df_resid)), "2.62425485781"),
    }


def quadratic_stationary_point(data, y="dryweight", x="conc", note=None):
    """x* = -b1/(2 b2) and its Fieller set {x: (b1 + 2 b2 x)^2 <= t^2 var(b1 + 2 b2 x)}."""
    fit = smf.ols(f"{y} ~ {x} + I({x}**2)", data=data).fit()
    b1, b2 = fit.params.iloc[1], fit.params.iloc[2]
    v = fit.cov_params().to_numpy()
    v11, v12, v22 = v[1, 1], v[1, 2], v[2, 2]
    t = stats.t.ppf(1 - ALPHA / 2, fit.df_resid)
    # (4 b2^2 - 4 t^2 v22) x^2 + (4 b1 b2 - 4 t^2 v12) x + (b1^2 - t^2 v11) <= 0
    qa, qb, qc = 4 * (b2 * b2 - t * t * v22), 4 * (b1 * b2 - t * t * v12), b1 * b1 - t * t * v11
    disc = qb * qb - 4 * qa * qc
    if qa > 0 and disc > 0:
        kind = "lower <= x <= upper (bounded)"
        limits = sorted([(-qb - math.sqrt(disc)) / (2 * qa), (-qb + math.sqrt(disc)) / (2 * qa)])
    elif qa < 0 and disc > 0:
        kind = "x <= lower or x >= upper (two half-lines, unbounded)"
        limits = sorted([(-qb - math.sqrt(disc)) / (2 * qa), (-qb + math.sqrt(disc)) / (2 * qa)])
    else:
        kind = "whole line (unbounded)" if qa < 0 else "empty"
        limits = []
    return {
        "note": note or "not in the spec; quadratic not significant, so sheaf would not print it",
        "b1": checked(b1), "b2": checked(b2), "b2_t": checked(b2 / math.sqrt(v22)),
        "b2_p": checked(fit.pvalues.iloc[2]), "df": int(fit.df_resid),
        "x_star": checked(-b1 / (2 * b2)), "fieller_kind": kind,
        "fieller_limits": checked_list(limits),
    }


def unequal_replication():
    data = read("invented", "promelas-unequal.csv")
    whole = read("open", "P.promelas.csv")
    assert data.equals(whole.iloc[:-1]), "promelas-unequal.csv must be the open file less its last row"
    scores, n, means, mse, nu = group_stats(data)
    polys = orthogonal_polynomials(scores, n)
    grand = (n @ means) / n.sum()
    ss_treat = float(n @ (means - grand) ** 2)
    weighted = [r[0] for r in components(means, n, polys, mse, nu)]
    unweighted_polys = orthogonal_polynomials(scores, np.ones_like(n))
    unweighted = [float((c @ means) ** 2 / np.sum(c * c / n)) for c in unweighted_polys[:, 1:].T]
    centre = (n @ scores) / n.sum()
    data = data.assign(u=(data["conc"] - centre) / ((scores.max() - scores.min()) / 2))
    seq = anova_lm(smf.ols("dryweight ~ u + I(u**2) + I(u**3) + I(u**4) + I(u**5)",
                           data=data).fit(), typ=1)
    return {
        "data": "tests/data/invented/promelas-unequal.csv", "n": n.tolist(),
        "weighted_components_ss": checked_list(weighted, [
            "0.13601471506", "0.000503530756692", "0.000725446283266", "1.98755840185e-05",
            "0.00140163883767"]),
        "weighted_sum": checked(sum(weighted), "0.138665206522"),
        "treatment_ss": checked(ss_treat, "0.138665206522"),
        "statsmodels_sequential_ss": checked_list(seq["sum_sq"].iloc[:5].tolist(), [
            "0.13601471506", "0.000503530756692", "0.000725446283266", "1.98755840185e-05",
            "0.00140163883767"]),
        "unweighted_components_ss": checked_list(
            unweighted, ["0.133512024027", "0.000486192569791", None, None, None]),
        "unweighted_sum": checked(sum(unweighted), "0.136145333367"),
    }


def promelas():
    data = read("open", "P.promelas.csv")
    trend = promelas_trend(data)
    scores, n, means, mse, nu = group_stats(data)
    return {"data": "tests/data/open/P.promelas.csv", "trend": trend,
            "fitted_line": fitted_line(data, mse, nu),
            "quadratic_stationary_point": quadratic_stationary_point(data),
            "unequal_replication": unequal_replication(),
            "nutrient_quadratic": quadratic_stationary_point(
                read("invented", "nutrient.csv"), "fresh_weight_g", "strength_pct",
                "invented tests/data/invented/nutrient.csv (the demo's nutrient series); "
                "significant quadratic, bounded Fieller interval")}


def main():
    doc = {"versions": versions(patsy=patsy.__version__), "npk": npk(), "promelas": promelas()}
    doc["agreement"] = summary(doc)
    with open(os.path.join(HERE, "contrasts_trends.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")
    print(json.dumps(doc["agreement"], indent=1))


if __name__ == "__main__":
    main()
