"""Reference for the repeated-measures covariance structures
(tests/mixed_structures_reference.rs): compound symmetry, AR(1) and
unstructured fitted by REML to two incomplete data sets, computed here
without sheaf.

Data set A: sleepstudy (tests/data/open/sleepstudy.csv), Days as a
10-level factor, with 15 observations deleted: 5 subjects drawn by a seeded
generator lose 3 days each (INVENTED deletion pattern, listed in the JSON
by Subject and Days). 13 subjects stay complete, enough for the
unstructured Sigma over 10 days to have a REML maximum (with 8 complete
subjects it has none; tests/mixed_repeated.rs).

Data set B: INVENTED. 24 animals in 3 diet groups of 8 weighed at weeks
0, 1, 2, 4 and 6 (unequal spacing, used as the AR(1) times), drawn from a
seeded generator (random animal level, AR(1) within animal, measurement
error), rounded to 2 decimals, 6 weighings deleted by the same generator.
Every value is written into the JSON. Model weight ~ diet * week, both
factors.

The REML criterion is written directly from the likelihood (Patterson &
Thompson 1971; Harville 1977), with V block-diagonal by subject, each block
Sigma(psi) restricted to the subject's occasions, and X the cell-means
design (one indicator per observed cell, a coding sheaf does not use):

    d(psi) = (N - p) ln(2 pi) + sum_s ln|Sigma_s| + ln|X'V^-1 X| - ln|X'X|
             + r'V^-1 r,   r = y - X beta_hat(psi)

This is the coding-invariant -2 log REML likelihood of
mixed-models spec 2.2, the constant being (N - p) ln(2 pi); without the
- ln|X'X| term it depends on the coding, so the JSON also gives ln|X'X|
for sheaf's sum-to-zero coding (intercept, then each term's effect-coded
columns, first factor varying slowest), making d + that the criterion "as
fitted" with that coding.

Maximisation: a general optimiser on an unconstrained parameterisation
(CS: ln sigma2 and ln(sigma2 + k sigma2_s); AR(1): ln sigma2 and
atanh rho; UN: Cholesky factor of Sigma with log diagonal), scipy BFGS
(stage 1), then Newton steps on psi itself until the largest relative step
is below 1e-11 (stage 2), with the score of d written out, tr(Pi V_i) -
y'Pi V_i Pi y with Pi = V^-1 - V^-1 X (X'V^-1X)^-1 X'V^-1 (Harville 1977;
dense N x N), and a central-difference Hessian of it; at the end the score
is checked against numdifftools' gradient of d (adaptive Richardson
extrapolation), and the observed information below uses the same
differences of the score. A numerical gradient alone stalls at relative steps of
1e-6 on the 55-parameter unstructured fit (its noise over a flat direction). psi is on sheaf's scale: CS
(sigma2_s, sigma2); AR(1) (sigma2, rho), Sigma_jl = sigma2 rho^|t_j - t_l|;
UN sigma_jl in the order (1,1), (1,2), (2,2), (1,3), ...

At psi_hat: cell means mu_hat = (X'V^-1X)^-1 X'V^-1 y; Phi = (X'V^-1X)^-1;
the Type III hypotheses in cell-means form (Kronecker products of contrast
rows and averaging vectors) and the unadjusted Wald F =
(L mu)'(L Phi L')^-1 (L mu)/l (spec 3.1). Two bases of each hypothesis:
"effects", the rows e_j - 1/a that give the sum-to-zero coefficients
(the rows sheaf tests), and "helmert", Helmert-type contrasts. F is the
same for both (checked); the several-row Satterthwaite df of spec 3.2 is
not: it depends on the basis of L (the eigenvectors of L Phi L' change
with it), so both are recorded. Satterthwaite df (spec 3.2): g = numdifftools gradient of
l Phi(psi) l', A = 2 H^-1 with H the Hessian of d by central differences of
the score (observed information) or A = I^-1 with I_ij = 1/2 tr(Pi V_i Pi V_j) (expected
information, V_i from the numdifftools Jacobian of Sigma(psi)); several rows
by the eigen-decomposition of spec 3.2.

Compound symmetry is also fitted with statsmodels MixedLM (REML, a random
subject intercept, the same model when the common covariance is not
negative): sigma2_s = cov_re, sigma2 = scale, cell means = fe_params, and
-2 llf, which statsmodels computes without - ln|X'X| (checked here against
the criterion above at statsmodels' own estimate).

    python3 -m venv /tmp/refenv
    /tmp/refenv/bin/pip install numpy scipy statsmodels numdifftools pandas
    /tmp/refenv/bin/python tests/reference/repeated_structures.py
"""
import json
import math
import os
import platform

# One BLAS thread: the matrices are tiny, and the results then do not depend
# on the thread count.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numdifftools as nd
import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import optimize

HERE = os.path.dirname(os.path.abspath(__file__))
SEED_A = 20240917
SEED_B = 73021
LN2PI = math.log(2.0 * math.pi)


# ---------------------------------------------------------------- data


def data_a():
    path = os.path.join(HERE, "..", "data", "open", "sleepstudy.csv")
    raw = pd.read_csv(path, dtype={"Subject": str})
    subjects = list(dict.fromkeys(raw["Subject"]))
    rng = np.random.default_rng(SEED_A)
    chosen = sorted(rng.choice(len(subjects), size=5, replace=False))
    deleted = []
    for s in chosen:
        for day in sorted(rng.choice(10, size=3, replace=False)):
            deleted.append((subjects[s], int(day)))
    gone = set(deleted)
    keep = [
        (r.Subject, int(r.Days)) not in gone for r in raw.itertuples(index=False)
    ]
    kept = raw[keep]
    return {
        "y": kept["Reaction"].to_numpy(float),
        "subject": np.array([subjects.index(s) for s in kept["Subject"]]),
        "occasion": kept["Days"].to_numpy(int),
        "cell": kept["Days"].to_numpy(int),
        "factors": [("Days", 10)],
        "times": [float(t) for t in range(10)],
        "subjects": len(subjects),
        "deleted": [{"Subject": s, "Days": d} for s, d in deleted],
    }


def data_b():
    rng = np.random.default_rng(SEED_B)
    weeks = np.array([0.0, 1.0, 2.0, 4.0, 6.0])
    start = [20.0, 20.5, 19.5]
    gain = [1.2, 1.6, 1.35]
    rows = []
    for animal in range(24):
        diet = animal // 8
        level = rng.normal(0.0, 1.5)
        ar = 0.0
        for j, t in enumerate(weeks):
            gap = t - weeks[j - 1] if j else None
            ar = rng.normal(0.0, 1.0) if gap is None else (
                0.6**gap * ar + math.sqrt(1 - 0.36**gap) * rng.normal(0.0, 1.0)
            )
            w = start[diet] + gain[diet] * t + level + ar + rng.normal(0.0, 0.4)
            rows.append([animal, diet, j, round(w, 2)])
    drop = sorted(rng.choice(len(rows), size=6, replace=False))
    rows = [r for i, r in enumerate(rows) if i not in set(drop)]
    return {
        "y": np.array([r[3] for r in rows]),
        "subject": np.array([r[0] for r in rows]),
        "occasion": np.array([r[2] for r in rows]),
        "cell": np.array([r[1] * 5 + r[2] for r in rows]),
        "factors": [("diet", 3), ("week", 5)],
        "times": [float(t) for t in weeks],
        "subjects": 24,
        "rows": [
            {"animal": r[0], "diet": r[1], "week": r[2], "weight": r[3]} for r in rows
        ],
    }


# -------------------------------------------------------------- structures


def sigma_of(structure, psi, times):
    k = len(times)
    if structure == "CS":
        return psi[0] * np.ones((k, k)) + psi[1] * np.eye(k)
    if structure == "AR1":
        lag = np.abs(np.subtract.outer(times, times))
        return psi[0] * psi[1] ** lag
    s = np.zeros((k, k))
    i = 0
    for l in range(k):
        for j in range(l + 1):
            s[j, l] = s[l, j] = psi[i]
            i += 1
    return s


def psi_of(structure, theta, k):
    """Unconstrained theta -> psi (every theta admissible)."""
    if structure == "CS":
        s2 = math.exp(theta[0])
        return np.array([(math.exp(theta[1]) - s2) / k, s2])
    if structure == "AR1":
        return np.array([math.exp(theta[0]), math.tanh(theta[1])])
    c = np.zeros((k, k))
    c[np.tril_indices(k)] = theta
    c[np.diag_indices(k)] = np.exp(np.diag(c))
    s = c @ c.T
    return np.array([s[j, l] for l in range(k) for j in range(l + 1)])


def theta_of(structure, psi, k, times):
    if structure == "CS":
        return np.array([math.log(psi[1]), math.log(psi[1] + k * psi[0])])
    if structure == "AR1":
        return np.array([math.log(psi[0]), math.atanh(psi[1])])
    c = np.linalg.cholesky(sigma_of("UN", psi, times))
    c[np.diag_indices(k)] = np.log(np.diag(c))
    return c[np.tril_indices(k)]


def n_params(structure, k):
    return k * (k + 1) // 2 if structure == "UN" else 2


# ------------------------------------------------------------------- REML


class Reml:
    def __init__(self, data, structure):
        self.d = data
        self.structure = structure
        self.times = np.array(data["times"])
        self.k = len(self.times)
        cells = sorted(set(data["cell"]))
        assert cells == list(range(len(cells))), "every cell must be observed"
        n = len(data["y"])
        self.x = np.zeros((n, len(cells)))
        self.x[np.arange(n), data["cell"]] = 1.0
        self.n, self.p = self.x.shape
        self.ln_det_xtx = np.linalg.slogdet(self.x.T @ self.x)[1]
        self.blocks = []
        for s in range(data["subjects"]):
            rows = np.where(data["subject"] == s)[0]
            rows = rows[np.argsort(data["occasion"][rows])]
            if len(rows):
                self.blocks.append((rows, data["occasion"][rows]))
        # Subjects with the same occasions share Sigma_s: stack them.
        self.patterns = {}
        for rows, occ in self.blocks:
            self.patterns.setdefault(tuple(occ), []).append(rows)
        self.stacks = [
            (np.array(occ), self.x[np.array(rs)], data["y"][np.array(rs)])
            for occ, rs in sorted(self.patterns.items())
        ]

    def pieces(self, psi):
        """ln|V|, X'V^-1X, X'V^-1y, y'V^-1y; None if Sigma_s is not PD."""
        sig = sigma_of(self.structure, psi, self.times)
        ln_v = 0.0
        xvx = np.zeros((self.p, self.p))
        xvy = np.zeros(self.p)
        yvy = 0.0
        for occ, xs, ys in self.stacks:
            try:
                c = np.linalg.cholesky(sig[np.ix_(occ, occ)])
            except np.linalg.LinAlgError:
                return None
            w = np.linalg.inv(c)
            ln_v += len(xs) * 2.0 * np.log(np.diag(c)).sum()
            wx = np.einsum("ij,mjk->mik", w, xs)
            wy = np.einsum("ij,mj->mi", w, ys)
            xvx += np.einsum("mik,mil->kl", wx, wx)
            xvy += np.einsum("mik,mi->k", wx, wy)
            yvy += float(np.sum(wy * wy))
        return ln_v, xvx, xvy, yvy

    def criterion(self, psi):
        """d(psi), coding-invariant (with - ln|X'X|); +inf outside."""
        if self.structure == "AR1" and not -1.0 < psi[1] < 1.0:
            return math.inf
        got = self.pieces(psi)
        if got is None:
            return math.inf
        ln_v, xvx, xvy, yvy = got
        c = np.linalg.cholesky(xvx)
        z = np.linalg.solve(c, xvy)
        ln_xvx = 2.0 * np.log(np.diag(c)).sum()
        return (self.n - self.p) * LN2PI + ln_v + ln_xvx - self.ln_det_xtx + yvy - z @ z

    def phi_and_mu(self, psi):
        _, xvx, xvy, _ = self.pieces(psi)
        phi = np.linalg.inv(xvx)
        return phi, phi @ xvy

    def v_matrix(self, sig):
        v = np.zeros((self.n, self.n))
        for rows, occ in self.blocks:
            v[np.ix_(rows, rows)] = sig[np.ix_(occ, occ)]
        return v


# -------------------------------------------------------------- optimiser


def scales(structure, psi, times):
    """Typical sizes of the parameters, so derivative steps are relative."""
    sig = sigma_of(structure, psi, times)
    var = float(np.mean(np.diag(sig)))
    if structure == "CS":
        return np.array([var, var])
    if structure == "AR1":
        return np.array([var, 1.0])
    k = len(times)
    return np.array([math.sqrt(sig[j, j] * sig[l, l]) for l in range(k) for j in range(l + 1)])


def numerical_gradient(f, psi, scale):
    """Gradient of f at psi by numdifftools on u = psi/scale."""
    g = lambda u: f(u * scale)
    return nd.Gradient(g, step=nd.MaxStepGenerator(base_step=1e-3))(psi / scale) / scale


def central_differences(model, psi, scale, h):
    n = len(psi)
    hess = np.zeros((n, n))
    for i in range(n):
        e = np.zeros(n)
        e[i] = h * scale[i]
        hess[:, i] = (score(model, psi + e) - score(model, psi - e)) / (2.0 * h * scale[i])
    return 0.5 * (hess + hess.T)


def observed_hessian(model, psi, scale, h=2e-6):
    """Hessian of d: central differences of the score with steps h and h/2
    on u = psi/scale, Richardson-extrapolated (error O(h^4)). The
    unstructured fit on data set A is ill-conditioned (condition number
    about 6e6), and its several-row df moved by 1e-3 relative between
    plain steps 1e-4 and 1e-5, and 1e-5 between 1e-5 and 1e-6; numdifftools'
    Hessian of d itself is good to only about 2e-6."""
    coarse = central_differences(model, psi, scale, h)
    fine = central_differences(model, psi, scale, h / 2.0)
    return (4.0 * fine - coarse) / 3.0


def dsigma(structure, psi, times):
    """d Sigma / d psi_i, one k x k matrix per parameter."""
    k = len(times)
    if structure == "CS":
        return [np.ones((k, k)), np.eye(k)]
    if structure == "AR1":
        lag = np.abs(np.subtract.outer(times, times))
        drho = np.where(lag > 0, psi[0] * lag * psi[1] ** np.maximum(lag - 1.0, 0.0), 0.0)
        return [psi[1] ** lag, drho]
    out = []
    for l in range(k):
        for j in range(l + 1):
            e = np.zeros((k, k))
            e[j, l] = e[l, j] = 1.0
            out.append(e)
    return out


def score(model, psi):
    """Gradient of d: tr(Pi V_i) - y'Pi V_i Pi y (Harville 1977), dense."""
    v = model.v_matrix(sigma_of(model.structure, psi, model.times))
    vi = np.linalg.inv(v)
    x = model.x
    pi = vi - vi @ x @ np.linalg.solve(x.T @ vi @ x, x.T @ vi)
    a = pi @ model.d["y"]
    out = []
    for ds in dsigma(model.structure, psi, model.times):
        vd = model.v_matrix(ds)
        out.append(np.sum(pi * vd) - a @ vd @ a)
    return np.array(out)


def newton_direction(model, psi, scale):
    """The Newton step from the score and the Hessian above."""
    return np.linalg.solve(central_differences(model, psi, scale, 1e-6), score(model, psi))


def start(model):
    """OLS residual variance on the diagonal, no correlation."""
    y = model.d["y"]
    mu = np.linalg.lstsq(model.x, y, rcond=None)[0]
    s2 = float(np.sum((y - model.x @ mu) ** 2) / (model.n - model.p))
    k = model.k
    if model.structure == "CS":
        psi = np.array([0.3 * s2, 0.7 * s2])
    elif model.structure == "AR1":
        psi = np.array([s2, 0.3])
    else:
        psi = np.array([s2 if j == l else 0.0 for l in range(k) for j in range(l + 1)])
    return theta_of(model.structure, psi, k, model.times)


def maximise(model):
    k = model.k
    to_psi = lambda t: psi_of(model.structure, t, k)
    f = lambda t: model.criterion(to_psi(t))
    theta = start(model)
    stage1 = optimize.minimize(
        f, theta, method="BFGS", options={"gtol": 1e-7, "maxiter": 20000}
    )
    psi = to_psi(stage1.x)
    steps = []
    for _ in range(30):
        sc = scales(model.structure, psi, model.times)
        step = newton_direction(model, psi, sc)
        t = 1.0
        while model.criterion(psi - t * step) > model.criterion(psi) + 1e-9 and t > 1e-4:
            t /= 2.0
        psi = psi - t * step
        rel = float(np.max(np.abs(t * step) / sc))
        steps.append(rel)
        if rel < 1e-11:
            break
    sc = scales(model.structure, psi, model.times)
    grad = numerical_gradient(model.criterion, psi, sc)
    hess = observed_hessian(model, psi, sc)
    assert np.all(np.linalg.eigvalsh(hess * np.outer(sc, sc)) > 0), "not a minimum"
    assert steps[-1] < 1e-11, f"Newton did not settle: {steps}"
    # The analytic score agrees with numdifftools' gradient of d.
    analytic = score(model, psi)
    assert np.max(np.abs(analytic - grad) * sc) < 1e-4, (analytic, grad)
    return psi, hess, {
        "bfgs_iterations": int(stage1.nit),
        "bfgs_criterion": float(stage1.fun),
        "newton_relative_steps": steps,
        "max_scaled_score": float(np.max(np.abs(analytic * sc))),
        "max_scaled_numdifftools_gradient": float(np.max(np.abs(grad * sc))),
    }


# -------------------------------------------------------------- inference


def helmert(levels):
    """(levels - 1) x levels Helmert-type contrasts (rows orthogonal to 1)."""
    c = np.zeros((levels - 1, levels))
    for i in range(levels - 1):
        c[i, : i + 1] = 1.0
        c[i, i + 1] = -(i + 1)
    return c


def effects(levels):
    """(levels - 1) x levels rows e_j - 1/levels: the sum-to-zero coding's
    coefficients as functions of the cell means (sheaf's Type III rows)."""
    return np.eye(levels)[:-1] - 1.0 / levels


def type3_hypotheses(factors, contrasts):
    """Each term's Type III L over the cell means (first factor slowest)."""
    if len(factors) == 1:
        return [(factors[0][0], [0], contrasts(factors[0][1]))]
    (na, a), (nb, b) = factors
    return [
        (na, [0], np.kron(contrasts(a), np.ones((1, b)) / b)),
        (nb, [1], np.kron(np.ones((1, a)) / a, contrasts(b))),
        (na + ":" + nb, [0, 1], np.kron(contrasts(a), contrasts(b))),
    ]


def satterthwaite(model, psi, hess, rows):
    """df of L mu = 0 (spec 3.2) with observed and expected information."""
    sc = scales(model.structure, psi, model.times)
    phi, _ = model.phi_and_mu(psi)
    a_obs = 2.0 * np.linalg.inv(hess)
    a_exp = np.linalg.inv(expected_information(model, psi))
    vals, vecs = np.linalg.eigh(rows @ phi @ rows.T)
    grads = []
    for m in range(len(vals)):
        l = vecs[:, m] @ rows
        var = lambda u: l @ model.phi_and_mu(u * sc)[0] @ l
        grads.append(nd.Gradient(var, step=nd.MaxStepGenerator(base_step=1e-3))(psi / sc) / sc)
    out = {}
    for name, a in (("observed", a_obs), ("expected", a_exp)):
        nus = [2.0 * vals[m] ** 2 / (g @ a @ g) for m, g in enumerate(grads)]
        if len(nus) == 1:
            out[name] = float(nus[0])
        else:
            e = sum(nu / (nu - 2.0) for nu in nus if nu > 2.0)
            out[name] = float(2.0 * e / (e - len(nus))) if e > len(nus) else float(min(nus))
    return out


def expected_information(model, psi):
    """I_ij = 1/2 tr(Pi V_i Pi V_j), V_i from d Sigma / d psi_i."""
    sc = scales(model.structure, psi, model.times)
    k = model.k
    flat = lambda u: sigma_of(model.structure, u * sc, model.times).ravel()
    jac = nd.Jacobian(flat, step=nd.MaxStepGenerator(base_step=1e-3))(psi / sc)
    jac = np.asarray(jac).reshape(k * k, -1) / sc
    v = model.v_matrix(sigma_of(model.structure, psi, model.times))
    vi = np.linalg.inv(v)
    x = model.x
    pi = vi - vi @ x @ np.linalg.inv(x.T @ vi @ x) @ x.T @ vi
    pv = [pi @ model.v_matrix(jac[:, i].reshape(k, k)) for i in range(len(psi))]
    return np.array([[0.5 * np.sum(a * b.T) for b in pv] for a in pv])


def sum_to_zero_ln_det_xtx(data):
    """ln|X'X| for sheaf's coding: intercept, then each term's columns as
    products of effect codes (level l: 1 at l, -1 at the last level)."""
    def code(level, n):
        return [1.0 if level == l else (-1.0 if level == n - 1 else 0.0) for l in range(n - 1)]

    factors = data["factors"]
    terms = [[0]] if len(factors) == 1 else [[0], [1], [0, 1]]
    rows = []
    for cell in data["cell"]:
        levels = [cell] if len(factors) == 1 else [cell // factors[1][1], cell % factors[1][1]]
        row = [1.0]
        for t in terms:
            cols = [1.0]
            for f in t:
                cols = [a * c for a in cols for c in code(levels[f], factors[f][1])]
            row += cols
        rows.append(row)
    x = np.array(rows)
    return float(np.linalg.slogdet(x.T @ x)[1])


def single_contrasts(data):
    """A few differences of cell means, as (name, {cell: coefficient})."""
    if len(data["factors"]) == 1:
        return [
            ("day 9 - day 0", {9: 1.0, 0: -1.0}),
            ("day 5 - day 4", {5: 1.0, 4: -1.0}),
            ("mean of days 0-4 - mean of days 5-9", {c: (0.2 if c < 5 else -0.2) for c in range(10)}),
        ]
    return [
        ("diet 2 - diet 1 at week 6", {9: 1.0, 4: -1.0}),
        ("week 6 - week 0 in diet 3", {14: 1.0, 10: -1.0}),
        ("diet 3 - diet 1 averaged over weeks", {c: (0.2 if c >= 10 else -0.2) for c in range(15) if c >= 10 or c < 5}),
    ]


def fit_structure(data, structure):
    model = Reml(data, structure)
    psi, hess, report = maximise(model)
    phi, mu = model.phi_and_mu(psi)
    tests = []
    both = zip(type3_hypotheses(data["factors"], effects), type3_hypotheses(data["factors"], helmert))
    for (name, factors, rows), (_, _, other) in both:
        lm = rows @ mu
        f = float(lm @ np.linalg.solve(rows @ phi @ rows.T, lm) / rows.shape[0])
        lo = other @ mu
        f_other = float(lo @ np.linalg.solve(other @ phi @ other.T, lo) / other.shape[0])
        assert abs(f - f_other) < 1e-10 * f, (f, f_other)
        df = satterthwaite(model, psi, hess, rows)
        df_other = satterthwaite(model, psi, hess, other)
        tests.append({
            "term": name,
            "factors": factors,
            "f": f,
            "df_num": int(rows.shape[0]),
            "satterthwaite_df_observed": df["observed"],
            "satterthwaite_df_expected": df["expected"],
            "helmert_rows": [[float(v) for v in row] for row in other],
            "helmert_satterthwaite_df_observed": df_other["observed"],
            "helmert_satterthwaite_df_expected": df_other["expected"],
        })
    singles = []
    for name, coef in single_contrasts(data):
        l = np.zeros(model.p)
        for c, v in coef.items():
            l[c] = v
        df = satterthwaite(model, psi, hess, l[None, :])
        singles.append({
            "name": name,
            "cells": [[int(c), float(v)] for c, v in sorted(coef.items())],
            "estimate": float(l @ mu),
            "se": float(math.sqrt(l @ phi @ l)),
            "satterthwaite_df_observed": df["observed"],
            "satterthwaite_df_expected": df["expected"],
        })
    d = model.criterion(psi)
    return {
        "parameters": [float(v) for v in psi],
        "criterion": float(d),
        "criterion_as_fitted_sum_to_zero": float(d + sum_to_zero_ln_det_xtx(data)),
        "cell_means": [float(v) for v in mu],
        "type3": tests,
        "contrasts": singles,
        "optimiser": report,
    }, model


def statsmodels_cs(data, model):
    """REML random-intercept fit; the optimiser is pushed to tight tolerances."""
    fit = sm.MixedLM(data["y"], model.x, groups=data["subject"]).fit(
        reml=True, method=["bfgs"], gtol=1e-12, maxiter=5000
    )
    s2s = float(fit.cov_re.iloc[0, 0] if hasattr(fit.cov_re, "iloc") else fit.cov_re[0, 0])
    s2 = float(fit.scale)
    ours = model.criterion(np.array([s2s, s2]))
    as_fitted = -2.0 * float(fit.llf)
    # statsmodels' -2 llf omits - ln|X'X|: equal to ours plus it, at its own estimate.
    assert abs(as_fitted - (ours + model.ln_det_xtx)) < 1e-8 * abs(as_fitted), (as_fitted, ours)
    return {
        "common_covariance": s2s,
        "residual_variance": s2,
        "cell_means": [float(v) for v in fit.fe_params],
        "criterion": as_fitted - model.ln_det_xtx,
        "converged": bool(fit.converged),
    }


def main():
    out = {
        "about": (
            "REML fits of compound symmetry, AR(1) and unstructured covariance "
            "over a repeated factor; see repeated_structures.py for how every value "
            "was computed. Criterion: -2 log REML likelihood with constant "
            "(N - p) ln(2 pi) and the - ln|X'X| term (coding-invariant); "
            "criterion_as_fitted_sum_to_zero adds ln|X'X| of the sum-to-zero coding. "
            "Cells: first factor slowest. Type III F: unadjusted Wald F with "
            "Phi = (X'V^-1X)^-1."
        ),
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
            "numdifftools": nd.__version__,
            "pandas": pd.__version__,
        },
    }
    for key, data in (("A", data_a()), ("B", data_b())):
        entry = {
            "n": int(len(data["y"])),
            "factors": [[n, l] for n, l in data["factors"]],
            "times": data["times"],
        }
        if key == "A":
            entry["description"] = (
                "sleepstudy.csv, Reaction ~ Days (factor), subject Subject; "
                "INVENTED deletion of the listed (Subject, Days) rows"
            )
            entry["deleted"] = data["deleted"]
        else:
            entry["description"] = (
                "INVENTED: 24 animals (subject), diet (3, between) and week "
                "(5 occasions at times 0, 1, 2, 4, 6); weight ~ diet * week; "
                "seeded generator, rounded to 2 decimals, 6 weighings deleted"
            )
            entry["rows"] = data["rows"]
        fits = {}
        for structure in ("CS", "AR1", "UN"):
            fits[structure], model = fit_structure(data, structure)
            if structure == "CS":
                entry["statsmodels_cs"] = statsmodels_cs(data, model)
            print(key, structure, fits[structure]["parameters"][:3], fits[structure]["criterion"],
                  fits[structure]["optimiser"]["newton_relative_steps"][-3:])
        entry["structures"] = fits
        out[key] = entry
    with open(os.path.join(HERE, "repeated_structures.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
