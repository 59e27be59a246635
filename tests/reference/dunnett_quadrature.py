"""Reference for Dunnett's procedure with a random interaction error
(src/validate/mixed.rs): Machines (tests/data/open/Machines.csv), machines
B and C against control A, workers and worker x machine random (mixed-models
spec 9.3). The two comparisons share the worker x machine error on 10 df
with correlation 1/2, so the two-sided adjusted p of |t| is

    1 - P(max_i |T_i| <= |t|),
    P(max_i |T_i| <= c) = int_0^inf f_S(s) int phi(z)
        [Phi((sqrt(rho) z + c s) / sqrt(1 - rho))
         - Phi((sqrt(rho) z - c s) / sqrt(1 - rho))]^2 dz ds

with S = chi_10 / sqrt(10) and rho = 1/2 (Dunnett 1955; the equicorrelated
normal written as a one-factor mixture). Both integrals by scipy
`integrate.quad` (adaptive Gauss-Kronrod) at a requested relative error of
1e-13, the critical value by `optimize.brentq` to 1e-13. This deterministic
quadrature replaces the quasi-Monte Carlo `multivariate_t.cdf` estimates
(seed-to-seed spread about 1.4e-7 at 4e6 points) where more digits are
wanted. Inputs: machine means from pandas, MS_WM from statsmodels OLS
(sequential sums of squares), SED = sqrt(2 MS_WM / 18).

    /tmp/venv-ref/bin/python tests/reference/dunnett_quadrature.py
"""
import json
import math
import pathlib

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.formula.api as smf
from scipy import integrate, optimize, stats
from statsmodels.stats.anova import anova_lm

HERE = pathlib.Path(__file__).resolve().parent
DATA = HERE.parent / "data" / "open" / "Machines.csv"
RHO, NU = 0.5, 10
TOL = dict(epsabs=1e-15, epsrel=1e-13, limit=200)


def inner(s, c):
    a, b = math.sqrt(RHO), math.sqrt(1.0 - RHO)

    def f(z):
        width = stats.norm.cdf((a * z + c * s) / b) - stats.norm.cdf((a * z - c * s) / b)
        return stats.norm.pdf(z) * width * width

    return integrate.quad(f, -np.inf, np.inf, **TOL)[0]


def scale_density(s):
    """Density of chi_nu / sqrt(nu)."""
    log = (
        math.log(2.0)
        + (NU / 2) * math.log(NU / 2)
        - math.lgamma(NU / 2)
        + (NU - 1) * math.log(s)
        - NU * s * s / 2
    )
    return math.exp(log)


def cdf(c):
    return integrate.quad(lambda s: scale_density(s) * inner(s, c), 0, np.inf, **TOL)[0]


def main():
    data = pd.read_csv(DATA, dtype={"Worker": str})
    fit = smf.ols("score ~ C(Machine) * C(Worker)", data=data).fit()
    table = anova_lm(fit, typ=1)
    row = "C(Machine):C(Worker)"
    ms_wm = table.loc[row, "sum_sq"] / table.loc[row, "df"]
    sed = math.sqrt(2.0 * ms_wm / 18.0)
    means = data.groupby("Machine")["score"].mean()
    out = {
        "about": "Machines, Dunnett two-sided against A, worker x machine error on 10 df; "
        "nested scipy integrate.quad; see dunnett_quadrature.py",
        "sed": sed,
        "p_adj": {},
        "critical_95": optimize.brentq(lambda c: cdf(c) - 0.95, 2.0, 3.0, xtol=1e-13),
        "versions": {
            "numpy": np.__version__,
            "pandas": pd.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
    }
    for other in ["B", "C"]:
        t = abs(means[other] - means["A"]) / sed
        out["p_adj"][other] = 1.0 - cdf(t)
    (HERE / "dunnett_quadrature.json").write_text(json.dumps(out, indent=1, sort_keys=True) + "\n")


if __name__ == "__main__":
    main()
