"""Polynomial trends over nitrogen in the oats split plot (open data,
tests/data/open/oats.csv: six blocks B, three varieties V on whole plots, four
nitrogen rates N on subplots; Yates 1935), computed without a mixed model.

In a balanced split plot every contrast among the nitrogen means lies in the
subplot stratum, and its exact test is the ordinary one on the subplot error
(Kenward and Roger 1997 reproduce these exact tests in balanced designs; the
split-plot analysis of Cochran and Cox 1957, ch. 7). So, as in
mixed_contrasts.py:

- The subplot-stratum fit of oats_subplot.py: OLS on all 72 subplots, whole
  plots as fixed effects (45 residual df, the subplot error), in cell-means
  coding; a contrast over the nitrogen marginal means (each averaged over the
  varieties with equal weight) is a row of L built from the cell columns.
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

import numpy as np
import statsmodels
from scipy import stats

from oats_subplot import here, oats, rates, sub
from oats_subplot import nitrogen_row as row_by_rate


def nitrogen_row(weights):
    """L for the weights listed in the order of the rates."""
    return row_by_rate(dict(zip(rates, weights)))


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
