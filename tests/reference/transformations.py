"""Reference for response transformations (linear-extensions spec, section
C.4). Written to tests/reference/transformations.json, each value with the
specification's number beside it where C.4 prints one ("spec_value",
"rel_diff", "agrees" at 1e-9 relative; see spec_check.py).

Data: tests/data/open/P.promelas.csv, dry weight (mg) at concentrations 0,
32, 64, 128, 256, 512 ug/L, 4 replicates each; analysis of ln(dry weight).

What comes from where:
- one-way ANOVA of ln y and of log10 y: scipy `f_oneway`; MSE and the
  per-pair ratio intervals: statsmodels OLS `np.log(y) ~ C(conc)` (treatment
  coding against 0 ug/L, `conf_int`);
- geometric means: scipy `gmean`, their 95% intervals exp(m +- t sqrt(MSE/n))
  with the pooled MSE (scipy t quantile);
- Dunnett intervals for the ratios: the two-sided critical value for 5
  comparisons with a control, 18 df, equal n (correlation 1/2), by nested
  scipy `integrate.quad` (deterministic; the equicorrelated normal written as
  a one-factor mixture, Dunnett 1955), checked loosely against scipy
  `dunnett` (quasi-Monte Carlo, seeded);
- ratios for all pairs: exp of the log-scale differences with per-pair t and
  Tukey-Kramer intervals (scipy `tukey_hsd` on the logs);
- Box-Cox for the one-way model: the profile log-likelihood
  l(lambda) = -(N/2) ln(SSE(lambda)/N) + (lambda - 1) sum ln y with SSE from the
  group means of z(lambda) (numpy; equal to statsmodels OLS SSE, asserted),
  maximised by solving dl/dlambda = 0 with scipy `brentq` (analytic
  derivative), the 95% interval by `brentq` on each side; the normalised-SSE
  form minimised as a second route; scipy `boxcox` / `boxcox_llf` (pooled,
  intercept-only model) for the library difference the spec describes.

    /tmp/venv-ref/bin/python tests/reference/transformations.py
"""
import itertools
import json
import math
import os

import mpmath as mp
import numpy as np
import pandas as pd
import statsmodels.formula.api as smf
from scipy import integrate, optimize, special, stats

from spec_check import checked, checked_list, summary, versions

HERE = os.path.dirname(os.path.abspath(__file__))
ALPHA = 0.05
QUAD = dict(epsabs=1e-15, epsrel=1e-13, limit=200)
SQRT_2PI = math.sqrt(2 * math.pi)
CONVENTIONAL = [-1.0, -0.5, 0.0, 0.5, 1.0, 2.0]


def load():
    data = pd.read_csv(os.path.join(HERE, "..", "data", "open", "P.promelas.csv"))
    scores = sorted(data["conc"].unique())
    groups = [data.loc[data["conc"] == s, "dryweight"].to_numpy() for s in scores]
    return data, scores, groups


def anova_log(data, groups):
    ln = stats.f_oneway(*[np.log(g) for g in groups])
    log10 = stats.f_oneway(*[np.log10(g) for g in groups])
    fit = smf.ols("np.log(dryweight) ~ C(conc)", data=data).fit()
    return {
        "F": checked(ln.statistic, "8.31615707661"),
        "p": checked(ln.pvalue, "0.000321467689281"),
        "F_log10": checked(log10.statistic, "8.31615707661"),
        "p_log10": checked(log10.pvalue, "0.000321467689281"),
        "mse": checked(fit.scale, "0.0116165519687"),
        "df": int(fit.df_resid),
    }, fit


def dunnett_cdf(c, k, nu, rho=0.5):
    """P(max_i |T_i| <= c), k comparisons with equal correlation rho, nu df."""
    a, b = math.sqrt(rho), math.sqrt(1 - rho)

    def given_scale(s):
        def f(z):
            w = special.ndtr((a * z + c * s) / b) - special.ndtr((a * z - c * s) / b)
            return math.exp(-z * z / 2) / SQRT_2PI * w ** k

        # |z| > 9 carries mass below 1e-18
        return integrate.quad(f, -9.0, 9.0, points=[0.0], **QUAD)[0]

    def density(s):
        return math.exp(math.log(2.0) + (nu / 2) * math.log(nu / 2) - math.lgamma(nu / 2)
                        + (nu - 1) * math.log(s) - nu * s * s / 2)

    mode = math.sqrt((nu - 1) / nu)
    return sum(integrate.quad(lambda s: density(s) * given_scale(s), lo, hi, **QUAD)[0]
               for lo, hi in [(0.0, mode), (mode, 4.0), (4.0, np.inf)])


def means_table(data, scores, groups, fit):
    mse, nu = fit.scale, fit.df_resid
    t = stats.t.ppf(1 - ALPHA / 2, nu)
    logm = [float(np.mean(np.log(g))) for g in groups]
    gmeans = [float(stats.gmean(g)) for g in groups]
    assert np.allclose(gmeans, np.exp(logm), rtol=1e-14, atol=0)
    half = [t * math.sqrt(mse / len(g)) for g in groups]
    conf = fit.conf_int(alpha=ALPHA)
    names = [f"C(conc)[T.{s}]" for s in scores[1:]]
    d_crit = optimize.brentq(lambda c: dunnett_cdf(c, 5, nu) - (1 - ALPHA), 2.0, 3.5, xtol=1e-13)
    d = np.array([fit.params[n] for n in names])
    se = np.array([fit.bse[n] for n in names])
    spec = SPEC_MEANS
    return {
        "conc": [float(s) for s in scores],
        "arithmetic_means": checked_list([g.mean() for g in groups], spec["arith"]),
        "geometric_means": checked_list(gmeans, spec["geo"]),
        "geometric_ci_lower": checked_list(np.exp(np.array(logm) - half), spec["geo_lo"]),
        "geometric_ci_upper": checked_list(np.exp(np.array(logm) + half), spec["geo_hi"]),
        "ratio_to_control": checked_list(np.exp(d), spec["ratio"]),
        "ratio_ci_per_pair_lower": checked_list(np.exp(conf.loc[names, 0]), spec["ratio_lo"]),
        "ratio_ci_per_pair_upper": checked_list(np.exp(conf.loc[names, 1]), spec["ratio_hi"]),
        "dunnett_crit": checked(d_crit, "2.76141104097"),
        "ratio_ci_dunnett_lower": checked_list(np.exp(d - d_crit * se), spec["dun_lo"]),
        "ratio_ci_dunnett_upper": checked_list(np.exp(d + d_crit * se), spec["dun_hi"]),
        "percent_change": checked_list(100 * (np.exp(d) - 1), spec["pct"]),
        "scipy_dunnett_loose": scipy_dunnett(groups, d, se, d_crit),
    }


SPEC_MEANS = {
    "arith": ["0.7145", "0.67375", "0.677", "0.6235", "0.5805", "0.471"],
    "geo": ["0.713529362643", "0.672606092919", "0.676923514349", "0.61967153794",
            "0.578057410422", "0.465507807418"],
    "geo_lo": ["0.637149795333", "0.600607146503", "0.604462410665", "0.553338957362",
               "0.516179403433", "0.415677643768"],
    "geo_hi": ["0.799065078704", "0.753236052661", "0.758071033357", "0.69395586525",
               "0.647353163496", "0.52131145857"],
    "ratio": ["0.94264669141", "0.948697488553", "0.868459758466", "0.810138223718",
              "0.652401753579"],
    "ratio_lo": ["0.803177696615", "0.80833324997", "0.739967068006", "0.690274477591",
                 "0.555875857288"],
    "ratio_hi": ["1.10633398882", "1.1134354857", "1.01926475472", "0.950815889672",
                 "0.765689033787"],
    "dun_lo": ["0.76374866472", "0.768651125293", "0.703641127621", "0.656388010737",
               "0.528587192526"],
    "dun_hi": ["1.16344921552", "1.1709173319", "1.07188497441", "0.999902391256",
               "0.805218238525"],
    "pct": ["-5.73533085903", "-5.13025114466", "-13.1540241534", "-18.9861776282",
            "-34.7598246421"],
}


def scipy_dunnett(groups, d, se, d_crit):
    """scipy's randomised Dunnett: a loose check only (spec G.8)."""
    res = stats.dunnett(*[np.log(g) for g in groups[1:]], control=np.log(groups[0]),
                        rng=np.random.default_rng(12345))
    ci = res.confidence_interval(confidence_level=1 - ALPHA)
    own = np.concatenate([np.exp(d - d_crit * se), np.exp(d + d_crit * se)])
    theirs = np.exp(np.concatenate([ci.low, ci.high]))
    rel = float(np.max(np.abs(theirs - own) / own))
    assert rel < 1e-3, rel
    return {"ratio_lower": np.exp(ci.low).tolist(), "ratio_upper": np.exp(ci.high).tolist(),
            "max_rel_diff_to_quadrature": rel,
            "note": "quasi-Monte Carlo (seed 12345): a loose check; its 256 ug/L upper limit"
                    " may fall on either side of 1"}


def pairwise_ratios(scores, groups, fit):
    """Ratios of geometric means for every pair, per-pair t and Tukey-Kramer CIs."""
    logs = [np.log(g) for g in groups]
    tukey = stats.tukey_hsd(*logs).confidence_interval(confidence_level=1 - ALPHA)
    mse, nu = fit.scale, fit.df_resid
    t = stats.t.ppf(1 - ALPHA / 2, nu)
    rows = []
    for i, j in itertools.combinations(range(len(groups)), 2):
        d = logs[i].mean() - logs[j].mean()
        se = math.sqrt(mse * (1 / len(logs[i]) + 1 / len(logs[j])))
        rows.append({
            "pair": f"{scores[i]} / {scores[j]}",
            "ratio": checked(math.exp(d)),
            "ci_per_pair": checked_list([math.exp(d - t * se), math.exp(d + t * se)]),
            "ci_tukey": checked_list([math.exp(tukey.low[i, j]), math.exp(tukey.high[i, j])]),
            "p_per_pair": checked(2 * stats.t.sf(abs(d / se), nu)),
        })
    return rows


def group_sse(groups, z):
    return float(sum(((z(g) - z(g).mean()) ** 2).sum() for g in groups))


def boxcox_z(lam):
    if lam == 0.0:
        return np.log
    return lambda y: (y ** lam - 1) / lam


def boxcox_dz(lam):
    """d z / d lambda (the lambda -> 0 limit is ln(y)^2 / 2)."""
    if abs(lam) < 1e-8:
        return lambda y: np.log(y) ** 2 / 2
    return lambda y: (lam * y ** lam * np.log(y) - (y ** lam - 1)) / lam ** 2


def profile(groups):
    """l(lambda) and its derivative for the model given by `groups` (one group = pooled)."""
    y = np.concatenate(groups)
    n, slog = len(y), float(np.log(y).sum())

    def llf(lam):
        return -n / 2 * math.log(group_sse(groups, boxcox_z(lam)) / n) + (lam - 1) * slog

    def dllf(lam):
        z, dz = boxcox_z(lam), boxcox_dz(lam)
        sse = group_sse(groups, z)
        cross = sum(float((z(g) - z(g).mean()) @ dz(g)) for g in groups)
        return -n / 2 * 2 * cross / sse + slog

    return llf, dllf


def maximise(groups, lo=-3.0, hi=3.0):
    llf, dllf = profile(groups)
    while dllf(hi) > 0:
        hi += 3.0
    while dllf(lo) < 0:
        lo -= 3.0
    lam = optimize.brentq(dllf, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps)
    drop = stats.chi2.ppf(1 - ALPHA, 1) / 2
    top = llf(lam)
    left = optimize.brentq(lambda x: top - llf(x) - drop, lam - 20, lam, xtol=1e-14)
    right = optimize.brentq(lambda x: top - llf(x) - drop, lam, lam + 20, xtol=1e-14)
    return lam, top, left, right, llf


def normalised_sse_route(groups):
    y = np.concatenate(groups)
    gm = stats.gmean(y)

    def sse(lam):
        if lam == 0.0:
            return group_sse(groups, lambda v: gm * np.log(v))
        return group_sse(groups, lambda v: (v ** lam - 1) / (lam * gm ** (lam - 1)))

    res = optimize.minimize_scalar(sse, bracket=(1.0, 3.0, 5.0), tol=1e-12)
    return float(res.x)


def mpmath_lambda(groups, start):
    """The profile maximum at 40 digits (mpmath root of a numerical derivative):
    settles disagreements in the 8th digit between optimisers."""
    mp.mp.dps = 40
    data = [[mp.mpf(repr(float(v))) for v in g] for g in groups]
    n = sum(len(g) for g in data)
    slog = sum(mp.log(v) for g in data for v in g)

    def llf(lam):
        sse = mp.mpf(0)
        for g in data:
            z = [(v ** lam - 1) / lam for v in g]
            m = sum(z) / len(z)
            sse += sum((x - m) ** 2 for x in z)
        return -mp.mpf(n) / 2 * mp.log(sse / n) + (lam - 1) * slog

    lam = mp.findroot(lambda x: mp.diff(llf, x), mp.mpf(start))
    return float(lam), float(llf(lam)), llf


def suggestion(lam, left, right):
    if left <= 1.0 <= right:
        return "no transformation indicated"
    inside = [c for c in CONVENTIONAL if left <= c <= right]
    if not inside:
        return "no conventional value inside the interval"
    return min(inside, key=lambda c: abs(c - lam))


def box_cox(data, groups):
    lam, top, left, right, llf = maximise(groups)
    fit = smf.ols("z ~ C(conc)", data=data.assign(z=boxcox_z(0.5)(data["dryweight"]))).fit()
    assert abs(fit.ssr - group_sse(groups, boxcox_z(0.5))) <= 1e-12 * fit.ssr
    pooled = [np.concatenate(groups)]
    plam, ptop, pleft, pright, pllf = maximise(pooled)
    y = np.concatenate(groups)
    slam, (sleft, sright) = stats.boxcox(y, alpha=ALPHA)[1:]
    mlam, mtop, mllf = mpmath_lambda(groups, lam)
    plam_mp, _, pllf_mp = mpmath_lambda(pooled, plam)

    def llf_gap(f, at, best):
        return float(f(mp.mpf(repr(float(at)))) - f(mp.mpf(repr(best))))

    return {
        "one_way_model": {
            "lambda": checked(lam, "2.97822530973"),
            "llf_at_lambda": checked(top, "74.1783709456"),
            "interval": checked_list([left, right], ["1.14770667167", "5.19186107987"]),
            "llf_at_0": checked(llf(0.0), "68.5784697945"),
            "llf_at_0_5": checked(llf(0.5), "70.4500087975"),
            "llf_at_1": checked(llf(1.0), "71.9044265211"),
            "lambda_normalised_sse": checked(normalised_sse_route(groups), "2.97822530973"),
            "suggestion": suggestion(lam, left, right), "spec_suggestion": 2.0,
            "mpmath_lambda": checked(mlam, "2.97822530973"),
            "mpmath_llf_at_lambda": checked(mtop, "74.1783709456"),
            "mpmath_llf_shortfall_at_spec_lambda": llf_gap(mllf, "2.97822530973", mlam),
            "mpmath_llf_shortfall_at_own_lambda": llf_gap(mllf, lam, mlam),
        },
        "pooled_intercept_only": {
            "own_lambda": checked(plam, "3.48227033223"),
            "own_interval": checked_list([pleft, pright], ["1.1117298346", "6.23174743738"]),
            "own_llf_at_0_5": checked(pllf(0.5), "55.5264248559"),
            "scipy_boxcox_lambda": checked(slam, "3.48227023666"),
            "scipy_boxcox_interval": checked_list([sleft, sright],
                                                  ["1.1117298346", "6.23174743738"]),
            "scipy_boxcox_llf_0_5": checked(stats.boxcox_llf(0.5, y), "55.5264248559"),
            "mpmath_lambda": checked(plam_mp, "3.48227033223"),
            "mpmath_llf_shortfall_at_spec_lambda": llf_gap(pllf_mp, "3.48227033223", plam_mp),
            "mpmath_llf_shortfall_at_scipy_lambda": llf_gap(pllf_mp, slam, plam_mp),
            "mpmath_llf_shortfall_at_own_lambda": llf_gap(pllf_mp, plam, plam_mp),
        },
    }


def identities():
    y = np.array([1.0, 4.0, 9.0])
    return {
        "asin_sqrt_0_25": checked(math.asin(math.sqrt(0.25)), "0.523598775598"),
        "pi_over_6": checked(math.pi / 6, "0.523598775598"),
        "sin2_pi_over_6": checked(math.sin(math.pi / 6) ** 2, "0.25"),
        "logit_0_2": checked(special.logit(0.2), "-1.38629436112"),
        "expit_ln_0_25": checked(special.expit(math.log(0.25)), "0.2"),
        "back_transformed_mean_root": checked(np.mean(np.sqrt(y)) ** 2, "4"),
        "arithmetic_mean": checked(np.mean(y), "4.66666666667"),
    }


RESOLUTION = (
    "The Box-Cox lambda-hat values of the spec (2.97822530973 one-way, 3.48227033223 pooled) and"
    " scipy's boxcox (3.48227023666) differ from this script's in the 8th digit (2e-8 relative)."
    " mpmath at 40 digits puts the maxima at this script's values (2.97822537375..., 3.48227038666...):"
    " the others stop early on a flat log-likelihood (their shortfall in l is 1e-15, within the"
    " default Brent tolerance of about 1.5e-8 in lambda). Every other value, including l at the"
    " maximum and the interval ends, agrees with the spec; test lambda-hat at 1e-7 relative against"
    " the spec or 1e-10 against mpmath_lambda here."
)


def main():
    data, scores, groups = load()
    anova, fit = anova_log(data, groups)
    doc = {
        "versions": versions(mpmath=mp.__version__),
        "data": "tests/data/open/P.promelas.csv",
        "model": "ln(dryweight) ~ conc (factor)",
        "anova_log": anova,
        "means": means_table(data, scores, groups, fit),
        "pairwise_ratios": pairwise_ratios(scores, groups, fit),
        "box_cox": box_cox(data, groups),
        "identities": identities(),
    }
    doc["agreement"] = summary(doc)
    doc["agreement"]["resolution"] = RESOLUTION
    with open(os.path.join(HERE, "transformations.json"), "w") as f:
        json.dump(doc, f, indent=1, sort_keys=True)
        f.write("\n")
    print(json.dumps(doc["agreement"], indent=1))


if __name__ == "__main__":
    main()
