"""Reference for the Box-Cox profile of a factorial model with blocks
(linear-extensions spec C.2: the block's own model, not the pooled response).
Written to tests/reference/box_cox_factorial.json.

Data: tests/data/open/npk.csv; model yield ~ block + N + P + K (additive,
so the fitted values are not the cell means: the residuals come from a
least-squares fit, here statsmodels OLS).

l(lambda) = -(N/2) ln(SSE(lambda)/N) + (lambda - 1) sum ln y, SSE from
statsmodels OLS on z(lambda) = (y^lambda - 1)/lambda; the maximum is the root
of dl/dlambda = -N r'(dz/dlambda)/SSE + sum ln y (r the OLS residuals),
solved with scipy `brentq`; the 95% interval by `brentq` on each side of
l(max) - chi2_{1,0.95}/2 (scipy quantile). The maximum is confirmed at 40
digits with mpmath (the hat matrix of the same design in mpmath, the root of
a numerical derivative): statsmodels' lambda differs from it by about 1.5e-9
relative (the profile is flat there), so the tests read `mpmath_lambda`.

    /tmp/venv-ref/bin/python tests/reference/box_cox_factorial.py
"""
import json
import math
import os

import mpmath as mp
import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.formula.api as smf
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "data", "open", "npk.csv")
FORMULA = "z ~ C(block) + C(N) + C(P) + C(K)"


def z_of(y, lam):
    return np.log(y) if lam == 0.0 else (y ** lam - 1) / lam


def dz_of(y, lam):
    if abs(lam) < 1e-8:
        return np.log(y) ** 2 / 2
    return (lam * y ** lam * np.log(y) - (y ** lam - 1)) / lam ** 2


def mpmath_lambda(data, start):
    mp.mp.dps = 40
    y = [mp.mpf(repr(float(v))) for v in data["yield"]]
    columns = [[mp.mpf(1)] * len(y)]
    for factor in ["block", "N", "P", "K"]:
        levels = sorted(data[factor].unique())
        for level in levels[1:]:
            columns.append([mp.mpf(1) if v == level else mp.mpf(0) for v in data[factor]])
    x = mp.matrix(len(y), len(columns))
    for j, column in enumerate(columns):
        for i, v in enumerate(column):
            x[i, j] = v
    hat = x * mp.inverse(x.T * x) * x.T
    n, slog = len(y), sum(mp.log(v) for v in y)

    def llf(lam):
        z = mp.matrix([(v ** lam - 1) / lam for v in y])
        r = z - hat * z
        return -mp.mpf(n) / 2 * mp.log(sum(r[i] ** 2 for i in range(n)) / n) + (lam - 1) * slog

    return float(mp.findroot(lambda t: mp.diff(llf, t), mp.mpf(repr(start))))


def main():
    data = pd.read_csv(DATA)
    y = data["yield"].to_numpy(dtype=float)
    n, slog = len(y), float(np.log(y).sum())

    def fit(lam):
        return smf.ols(FORMULA, data=data.assign(z=z_of(y, lam))).fit()

    def llf(lam):
        return -n / 2 * math.log(fit(lam).ssr / n) + (lam - 1) * slog

    def dllf(lam):
        f = fit(lam)
        return -n * float(f.resid.to_numpy() @ dz_of(y, lam)) / f.ssr + slog

    lam = optimize.brentq(dllf, -3.0, 3.0, xtol=1e-15, rtol=4 * np.finfo(float).eps)
    top = llf(lam)
    drop = stats.chi2.ppf(0.95, 1) / 2
    left = optimize.brentq(lambda x: top - llf(x) - drop, lam - 20, lam, xtol=1e-14)
    right = optimize.brentq(lambda x: top - llf(x) - drop, lam, lam + 20, xtol=1e-14)
    out = {
        "data": "tests/data/open/npk.csv",
        "model": "yield ~ block + N + P + K",
        "lambda": lam,
        "mpmath_lambda": mpmath_lambda(data, lam),
        "log_likelihood": top,
        "interval": [left, right],
        "profile": {str(c): llf(c) for c in [-1.0, -0.5, 0.0, 0.5, 1.0, 2.0]},
        "versions": {"numpy": np.__version__, "pandas": pd.__version__,
                     "scipy": scipy.__version__, "mpmath": mp.__version__, "statsmodels": statsmodels.__version__},
    }
    with open(os.path.join(HERE, "box_cox_factorial.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
