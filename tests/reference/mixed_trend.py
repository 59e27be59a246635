"""Polynomial trends over nitrogen in the oats split plot (open data,
tests/data/open/oats.csv: six blocks B, three varieties V on whole plots, four
nitrogen rates N on subplots; Yates 1935), computed without a mixed model.

In a balanced split plot every contrast among the nitrogen means lies in the
subplot stratum, and its exact test is the ordinary one on the subplot error
(Kenward and Roger 1997 reproduce these exact tests in balanced designs; the
split-plot analysis of Cochran and Cox 1957, ch. 7). So, as in
mixed_contrasts.py:

- OLS on all 72 subplots, Y ~ C(B) * C(V) + C(N) + C(V):C(N), whole plots as
  fixed effects (45 residual df, the subplot error), in cell-means coding; a
  contrast over the nitrogen marginal means (each averaged over the varieties
  with equal weight) is a row of L built from the cell columns.
- The trend components are the textbook orthogonal polynomials for equal
  replication: the QR factorisation of the Vandermonde matrix [1, x, x², x³] of
  the scores, column d of Q being the degree-d contrast (Robson 1959). Each is
  tested by `t_test` (F = t², 1 and 45 df).
- Lack of fit after degree d: `f_test` of the components d+1 .. 3 together.
- The fitted polynomial of the chosen degree: with equal replication and the
  means' covariance a·I + b·J, generalised least squares on the means equals
  ordinary least squares (the intercept is in the model), so the coefficients
  are `np.polyfit` of the means on the scores; every coefficient but the
  constant is a contrast among the means, whose SE `t_test` gives.

Two sets of scores: the rates as written (0, 0.2, 0.4, 0.6 cwt, equally spaced)
and an unequal spacing given explicitly (0, 1, 2, 4).

Writes mixed_trend.json beside this script; tests/mixed_trend.rs reads it."""
import json
import os
import warnings

import numpy as np
import pandas as pd
import statsmodels
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.tools.sm_exceptions import SingularMatrixWarning

here = os.path.dirname(os.path.abspath(__file__))
oats = pd.read_csv(os.path.join(here, "..", "data", "open", "oats.csv"))

varieties = ["Golden.rain", "Marvellous", "Victory"]
rates = ["0.0cwt", "0.2cwt", "0.4cwt", "0.6cwt"]
oats["cell"] = oats["V"] + "|" + oats["N"]
cells = [v + "|" + n for v in varieties for n in rates]
# The subplot-stratum model of mixed_contrasts.py: rank 27 of 30 columns (patsy
# adds one column per variety that the cell means already span), 45 residual df;
# every row tested here is a contrast among the nitrogen means, so estimable, and
# its estimate and SE do not depend on the generalised inverse.
with warnings.catch_warnings():
    warnings.simplefilter("ignore", category=SingularMatrixWarning)
    sub = smf.ols("Y ~ 0 + C(cell, levels=%r) + C(B, Sum):C(V)" % cells, data=oats).fit()
assert np.linalg.matrix_rank(sub.model.exog) == 27 and sub.df_resid == 45
names = list(sub.params.index)


def nitrogen_row(weights):
    """L over the fit's columns for Σ weights[i]·(nitrogen mean i)."""
    row = np.zeros(len(names))
    for n, w in zip(rates, weights):
        for v in varieties:
            row[names.index("C(cell, levels=%r)[%s|%s]" % (cells, v, n))] += w / 3.0
    return row


means = np.array([oats.loc[oats["N"] == n, "Y"].mean() for n in rates])


def trend(scores):
    x = np.asarray(scores, dtype=float)
    q, _ = np.linalg.qr(np.vander(x, 4, increasing=True))
    components = {}
    for d, name in [(1, "linear"), (2, "quadratic"), (3, "cubic")]:
        t = sub.t_test(nitrogen_row(q[:, d]))
        tv = float(np.squeeze(t.tvalue))
        components[name] = {"weights": list(q[:, d]), "f": tv * tv, "df1": 1.0,
                            "df2": float(sub.df_resid), "p": float(t.pvalue)}
    lack = {}
    for d, name in [(1, "after linear"), (2, "after quadratic")]:
        f = sub.f_test(np.array([nitrogen_row(q[:, j]) for j in range(d + 1, 4)]))
        lack[name] = {"f": float(np.squeeze(f.fvalue)), "df1": float(f.df_num),
                      "df2": float(f.df_denom), "p": float(f.pvalue)}
    return x, components, lack


def curve(x, degree, alpha=0.05):
    """The polynomial of `degree` fitted to the nitrogen means, constant first,
    with the SEs of the non-constant coefficients and, for a quadratic, the
    turning point's Fieller set on the subplot df."""
    coefficients = np.polyfit(x, means, degree)[::-1]
    vander = np.vander(x, degree + 1, increasing=True)
    # Row j of (XᵀX)⁻¹Xᵀ gives coefficient j as a weighing of the means.
    hat = np.linalg.solve(vander.T @ vander, vander.T)
    se = [None] + [float(np.squeeze(sub.t_test(nitrogen_row(hat[j])).sd)) for j in range(1, degree + 1)]
    out = {"degree": degree, "coefficients": list(map(float, coefficients)), "se": se}
    if degree == 2:
        cov = sub.cov_params().values
        rows = np.array([nitrogen_row(hat[j]) for j in (1, 2)])
        v = rows @ cov @ rows.T
        b1, b2 = coefficients[1], coefficients[2]
        t2 = stats.t.isf(alpha / 2, sub.df_resid) ** 2
        # (b1 + 2 b2 x)² − t²(v11 + 4x v12 + 4x² v22) ≤ 0.
        qa = 4 * (b2 * b2 - t2 * v[1, 1])
        qb = 4 * (b1 * b2 - t2 * v[0, 1])
        qc = b1 * b1 - t2 * v[0, 0]
        roots = np.sort(np.roots([qa, qb, qc]).real)
        out["optimum"] = {"x": float(-b1 / (2 * b2)), "bounded": bool(qa > 0),
                          "limits": list(map(float, roots))}
    return out


out = {"statsmodels": statsmodels.__version__, "means": list(map(float, means))}
# The degree each set of scores leads to by the rule (highest significant
# component up to cubic with no significant lack of fit after it), read off
# the tests printed above: linear for the rates as written, quadratic for 0, 1, 2, 4.
for key, scores, degree in [("equal", [0.0, 0.2, 0.4, 0.6], 1), ("unequal", [0.0, 1.0, 2.0, 4.0], 2)]:
    x, components, lack = trend(scores)
    out[key] = {"scores": list(map(float, x)), "components": components, "lack_of_fit": lack,
                "curve": curve(x, degree)}
with open(os.path.join(here, "mixed_trend.json"), "w") as fh:
    json.dump(out, fh, indent=1)
    fh.write("\n")
