"""Reference for predicted random effects and conditional residuals
(tests/mixed_core.rs, `*_predictions_*`).

Independent of sheaf: the variance components come from the classical
expected mean squares of a balanced design (statsmodels OLS sums of squares,
every term fixed), which equal the REML estimates when they are positive
(mixed-models spec 5.3); then V is formed densely (N x N) with numpy and

    beta = (X'V^-1 X)^-1 X'V^-1 y,   u_j = s2_j Z_j' V^-1 (y - X beta)   (BLUP)
    e = y - X beta - Z u,            P = V^-1 - V^-1 X (X'V^-1 X)^-1 X'V^-1
    studentized e_i / (s2 sqrt(P_ii)),  standardised u_k / (s2_j sqrt((Z'PZ)_kk))

(Henderson 1975; Robinson 1991, Statist. Sci. 6(1); var(e) = s2^2 P and
var(u) = G Z'PZ G). Units are keyed by their labels joined with ":".

    python3 -m venv /tmp/refenv && /tmp/refenv/bin/pip install numpy pandas statsmodels
    /tmp/refenv/bin/python tests/reference/mixed_predictions.py
"""
import json
import os

import numpy as np
import pandas as pd
import scipy
from scipy import stats
import statsmodels
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

HERE = os.path.dirname(os.path.abspath(__file__))


def read(name):
    return pd.read_csv(os.path.join(HERE, "..", "data", "open", name), dtype=str)


def indicators(data, cols):
    labels = data[cols].agg(":".join, axis=1)
    units = sorted(set(labels))
    z = np.array([[1.0 if l == u else 0.0 for u in units] for l in labels])
    return units, z


def mean_squares(data, response, formula):
    fit = smf.ols(f"{response} ~ {formula}", data=data).fit()
    table = anova_lm(fit, typ=1)
    return {k: table.loc[k, "sum_sq"] / table.loc[k, "df"] for k in table.index}


def predict(data, y, x, terms, variances, residual):
    n = len(y)
    v = np.eye(n) * residual
    zs = []
    for cols, s2 in zip(terms, variances):
        units, z = indicators(data, cols)
        zs.append((":".join(cols), units, z, s2))
        v += s2 * z @ z.T
    vi = np.linalg.inv(v)
    phi = np.linalg.inv(x.T @ vi @ x)
    beta = phi @ x.T @ vi @ y
    r = y - x @ beta
    p = vi - vi @ x @ phi @ x.T @ vi
    out = {"variances": list(variances) + [residual], "terms": {}}
    fitted = x @ beta
    for name, units, z, s2 in zs:
        u = s2 * z.T @ vi @ r
        fitted = fitted + z @ u
        zpz = np.diag(z.T @ p @ z)
        out["terms"][name] = {
            unit: [float(u[k]), float(u[k] / (s2 * np.sqrt(zpz[k])))]
            for k, unit in enumerate(units)
        }
    e = y - fitted
    out["residuals"] = [float(v) for v in e]
    # Shapiro-Wilk (scipy) on the residuals and on each term's standardised effects.
    w, pv = stats.shapiro(e)
    out["shapiro_residuals"] = [float(w), float(pv)]
    out["shapiro_effects"] = {}
    for name, _, _, _ in zs:
        z = [v[1] for v in out["terms"][name].values()]
        w, pv = stats.shapiro(z)
        out["shapiro_effects"][name] = [float(w), float(pv)]
    out["studentized"] = [float(e[i] / (residual * np.sqrt(p[i, i]))) for i in range(n)]
    return out


def dummies(data, cols):
    """Intercept plus sum-to-zero columns of every term (any full-rank coding
    gives the same fitted values and BLUPs)."""
    formula = " * ".join(f"C({c}, Sum)" for c in cols)
    import patsy

    return np.asarray(patsy.dmatrix(formula, data))


def oats():
    d = read("oats.csv")
    d["Y"] = d["Y"].astype(float)
    ms = mean_squares(d, "Y", "C(B) + C(V) + C(B):C(V) + C(N) + C(V):C(N)")
    res = ms["Residual"]
    wp = (ms["C(B):C(V)"] - res) / 4
    block = (ms["C(B)"] - ms["C(B):C(V)"]) / 12
    return predict(d, d["Y"].to_numpy(), dummies(d, ["V", "N"]), [["B"], ["B", "V"]], [block, wp], res)


def machines():
    d = read("Machines.csv")
    d["score"] = d["score"].astype(float)
    ms = mean_squares(d, "score", "C(Worker) + C(Machine) + C(Worker):C(Machine)")
    res = ms["Residual"]
    wm = (ms["C(Worker):C(Machine)"] - res) / 3
    worker = (ms["C(Worker)"] - ms["C(Worker):C(Machine)"]) / 9
    return predict(
        d, d["score"].to_numpy(), dummies(d, ["Machine"]), [["Worker"], ["Worker", "Machine"]], [worker, wm], res
    )


out = {
    "source": "numpy (dense V) on EMS variance components from statsmodels OLS",
    "numpy": np.__version__,
    "statsmodels": statsmodels.__version__,
    "scipy": scipy.__version__,
    "oats": oats(),
    "machines": machines(),
}
with open(os.path.join(HERE, "mixed_predictions.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
