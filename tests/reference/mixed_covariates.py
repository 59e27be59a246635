"""Reference values for covariates in mixed models (REML; Kenward-Roger and Satterthwaite df).

Two invented data sets are generated here (numpy default_rng, fixed seeds below) and
written to tests/data/invented/; then every value is computed by a dense REML fitter
written from the restricted likelihood, without sheaf:

  A  beans-split.csv   split plot: 4 blocks x 3 irrigation regimes (whole plots) x 3 seed
                       coatings (subplots), one subplot deleted (35 rows);
                       yield ~ irrigation * coating + stand, random block, block:irrigation.
  B  pens-repeated.csv 18 animals in 3 diets weighed at weeks 2, 4, 6, 8 (week a factor),
                       three weighings deleted (69 rows), baseline `initial` per animal;
                       weight ~ diet * week + initial, random intercept per animal.

The REML engine (class REML: Fisher scoring then Newton steps with analytic first and
second derivatives of -2 log L_R; `satterthwaite`; `kenward_roger`) is adapted from the
specification's reference tool (the `mixed-models` specification's "own" REML/KR
calculations, shared/reference/tools/mixed_models_reference.py). Methods:
  * Kenward, M. G. and Roger, J. H. (1997). Small sample inference for fixed effects from
    restricted maximum likelihood. Biometrics 53, 983-997: adjusted covariance Phi_A,
    scale lambda and denominator df m (V linear in theta, so the R_ij term vanishes).
  * Satterthwaite, F. E. (1946). An approximate distribution of estimates of variance
    components. Biometrics Bulletin 2, 110-114; several rows by Fai, A. H.-T. and
    Cornelius, P. L. (1996), J. Statist. Comput. Simul. 54, 363-378; with the observed
    information (Hessian of -2 log L_R) at the REML estimate.
Cross-checks, written to the JSON beside the values:
  * statsmodels MixedLM (REML; its own optimiser and per-group solver) on the same design
    matrix, for each model and each equal-slopes refit: fixed effects, Phi = (X'V^-1 X)^-1
    (from the fixed-effect block of MixedLM.hessian; cov_params() inverts the joint Hessian
    and is not Phi) and the variance components; all agree within 1e-9 relative
    (`statsmodels.max_rel_diff`; the brief asks for ~1e-6).
  * Satterthwaite df with numerical derivatives (numdifftools) against the analytic ones
    for the slope and one pairwise difference (`satterthwaite_numeric_check`, ~1e-7).

Conventions (sheaf's): sum-to-zero coding, levels in order of first appearance in the
file, level j < a-1 -> e_j, last level -> all -1; interaction columns are products with
the first factor varying slowest; the covariate is centred at its mean over the rows
analysed and enters as that centred column; columns in the order the model is written.
EMMs average the design rows over the full grid of the fixed factors (equal weights) with
the centred covariate at 0. Pairwise differences are (earlier level) - (later level).
Type III tests select a term's coefficients. Under KR: F = lambda * Wald F with Phi_A,
SE = sqrt(l Phi_A l'); under Satterthwaite: Wald F with Phi, SE = sqrt(l Phi l').
The equal-slopes test refits by REML with every non-block fixed term crossed with the
covariate and tests the added columns jointly; each treatment cell's own slope is the
design row at centred covariate 1 minus the row at 0 (main slope + interaction
coefficients at the cell's codes).

    python3 -m venv /tmp/venv-ref && /tmp/venv-ref/bin/pip install numpy scipy statsmodels pandas numdifftools
    /tmp/venv-ref/bin/python tests/reference/mixed_covariates.py

Writes tests/data/invented/{beans-split,pens-repeated}.csv and
tests/reference/mixed_covariates.json; rerunning reproduces them byte for byte.
"""
import json
import math
import os
import warnings

import numdifftools as nd
import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
from scipy import linalg, stats
from statsmodels.regression.mixed_linear_model import VCSpec

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.normpath(os.path.join(HERE, "..", "data", "invented"))
SEED_BEANS = 20240611
SEED_PENS = 20240612


# ----------------------------------------------------------------------------
# Invented data
# ----------------------------------------------------------------------------

def write_csv(frame, name, formats):
    path = os.path.join(DATA, name)
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(",".join(frame.columns) + "\n")
        for row in frame.itertuples(index=False):
            fh.write(",".join(f(v) for f, v in zip(formats, row)) + "\n")
    return path


def make_beans():
    """Split plot; the yield model has visible block and whole-plot variances."""
    rng = np.random.default_rng(SEED_BEANS)
    blocks, irrigation, coating = ["I", "II", "III", "IV"], ["dry", "mid", "wet"], ["none", "film", "pellet"]
    irr_effect = {"dry": -55.0, "mid": 0.0, "wet": 35.0}
    coat_effect = {"none": -12.0, "film": 4.0, "pellet": 8.0}
    inter = {("dry", "pellet"): 10.0, ("wet", "none"): -8.0}
    block_effect = rng.normal(0.0, 22.0, len(blocks))
    rows = []
    for b, blk in enumerate(blocks):
        for irr in irrigation:
            whole_plot = rng.normal(0.0, 16.0)
            for coat in coating:
                stand = int(round(rng.normal(30.0, 4.0)))
                y = (560.0 + block_effect[b] + whole_plot + irr_effect[irr] + coat_effect[coat]
                     + inter.get((irr, coat), 0.0) + 8.0 * (stand - 30) + rng.normal(0.0, 11.0))
                rows.append((blk, irr, coat, stand, round(y, 1)))
    frame = pd.DataFrame(rows, columns=["block", "irrigation", "coating", "stand", "yield"])
    # Delete one subplot, never from the first block (keeps first-appearance order plain).
    drop = int(rng.integers(9, len(frame)))
    gone = frame.iloc[drop]
    deleted = [{"row": drop + 1, "block": gone["block"], "irrigation": gone["irrigation"],
                "coating": gone["coating"], "stand": int(gone["stand"]), "yield": float(gone["yield"])}]
    frame = frame.drop(index=drop).reset_index(drop=True)
    write_csv(frame, "beans-split.csv", [str, str, str, lambda v: "%d" % v, lambda v: "%.1f" % v])
    return deleted


def make_pens():
    """Repeated weighings; `initial` is one value per animal."""
    rng = np.random.default_rng(SEED_PENS)
    diets, weeks = ["basal", "oilseed", "legume"], [2, 4, 6, 8]
    diet_gain = {"basal": 1.6, "oilseed": 2.1, "legume": 1.9}   # kg per week
    rows = []
    for a in range(18):
        diet = diets[a // 6]
        initial = round(rng.normal(24.0, 2.6), 1)
        animal = rng.normal(0.0, 1.4)
        for w in weeks:
            y = 3.0 + 0.9 * initial + diet_gain[diet] * w + animal + rng.normal(0.0, 0.9)
            rows.append(("A%02d" % (a + 1), diet, w, initial, round(y, 1)))
    frame = pd.DataFrame(rows, columns=["animal", "diet", "week", "initial", "weight"])
    # Delete three weighings, none from the first animal.
    drop = sorted(int(i) for i in rng.choice(np.arange(4, len(frame)), size=3, replace=False))
    deleted = [{"row": i + 1, "animal": frame.iloc[i]["animal"], "week": int(frame.iloc[i]["week"]),
                "weight": float(frame.iloc[i]["weight"])} for i in drop]
    frame = frame.drop(index=drop).reset_index(drop=True)
    write_csv(frame, "pens-repeated.csv",
              [str, str, lambda v: "%d" % v, lambda v: "%.1f" % v, lambda v: "%.1f" % v])
    return deleted


# ----------------------------------------------------------------------------
# Design matrices (sum-to-zero coding) and indicators
# ----------------------------------------------------------------------------

def first_appearance(series):
    return list(dict.fromkeys(series))


def sum_coding(values, levels):
    codes = np.array([levels.index(v) for v in values])
    a = len(levels)
    M = np.zeros((len(values), a - 1))
    for j in range(a - 1):
        M[:, j] = (codes == j).astype(float) - (codes == a - 1).astype(float)
    return M


def design(frame, terms, levels, covariate):
    """terms: tuples of names, () = intercept; `covariate` names the (already centred)
    numeric column; products with the first name varying slowest."""
    n = len(frame)
    blocks, where, start = [], {}, 0
    for t in terms:
        B = np.ones((n, 1))
        for f in t:
            F = frame[f].to_numpy(float)[:, None] if f == covariate else sum_coding(list(frame[f]), levels[f])
            B = np.einsum("ij,ik->ijk", B, F).reshape(n, -1)
        blocks.append(B)
        where[t] = slice(start, start + B.shape[1])
        start += B.shape[1]
    return np.hstack(blocks), where


def column_names(terms, levels, covariate):
    names = []
    for t in terms:
        parts = [[""]]
        for f in t:
            labs = [f] if f == covariate else ["%s[%s]" % (f, l) for l in levels[f][:-1]]
            parts = [p + [l] for p in parts for l in labs]
        names += [":".join(x for x in p if x) or "(intercept)" for p in parts]
    return names


def indicator(frame, cols):
    key = frame[cols].astype(str).agg(":".join, axis=1)
    units = first_appearance(key)
    Z = np.zeros((len(frame), len(units)))
    Z[np.arange(len(frame)), [units.index(k) for k in key]] = 1.0
    return Z


def term_name(t):
    return ":".join(t)


# ----------------------------------------------------------------------------
# Dense REML engine (adapted from the specification's reference tool)
# ----------------------------------------------------------------------------

class REML:
    """y ~ N(X beta, V(theta)), V = sum_k theta_k G_k (linear in theta)."""

    def __init__(self, y, X, G):
        self.y = np.asarray(y, float)
        self.X = np.asarray(X, float)
        self.N, self.p = self.X.shape
        self.rank = int(np.linalg.matrix_rank(self.X))
        assert self.rank == self.p, "design not of full column rank"
        self.G = G

    def parts(self, th):
        V = sum(t * G for t, G in zip(th, self.G))
        c = linalg.cho_factor(V, lower=True)
        Vi = linalg.cho_solve(c, np.eye(self.N))
        ViX = Vi @ self.X
        XVX = self.X.T @ ViX
        cx = linalg.cho_factor(XVX, lower=True)
        Phi = linalg.cho_solve(cx, np.eye(self.p))
        beta = Phi @ (ViX.T @ self.y)
        P = Vi - ViX @ Phi @ ViX.T
        Py = P @ self.y
        ldV = 2 * np.sum(np.log(np.diag(c[0])))
        ldX = 2 * np.sum(np.log(np.diag(cx[0])))
        dev = ldV + ldX + self.y @ Py + (self.N - self.p) * math.log(2 * math.pi)
        return dict(Vi=Vi, ViX=ViX, Phi=Phi, beta=beta, P=P, Py=Py, dev=dev)

    def grad(self, th, pr):
        P, Py = pr["P"], pr["Py"]
        return np.array([np.sum(P * Gk.T) - Py @ Gk @ Py for Gk in self.G])

    def expected_hess(self, pr):
        """E[d2 dev] = tr(P G_i P G_j)."""
        M = [pr["P"] @ Gk for Gk in self.G]
        K = len(M)
        E = np.empty((K, K))
        for i in range(K):
            for j in range(i, K):
                E[i, j] = E[j, i] = np.sum(M[i] * M[j].T)
        return E

    def observed_hess(self, pr):
        """d2 dev = -tr(P G_i P G_j) + 2 y'P G_i P G_j P y (V linear in theta)."""
        P, Py = pr["P"], pr["Py"]
        M = [P @ Gk for Gk in self.G]
        u = [Gk @ Py for Gk in self.G]
        K = len(M)
        H = np.empty((K, K))
        for i in range(K):
            for j in range(i, K):
                H[i, j] = H[j, i] = -np.sum(M[i] * M[j].T) + 2 * u[i] @ P @ u[j]
        return H

    def fit(self, th0, lower, tol=1e-12, maxit=500):
        """Fisher scoring, then Newton once the steps are small; step halving keeps
        every accepted step downhill and inside the bounds; components on a bound
        whose gradient points outwards are held (active set)."""
        th = np.array(th0, float)
        lower = np.asarray(lower, float)
        pr = self.parts(th)
        newton = False
        it = 0
        for it in range(maxit):
            g_all = self.grad(th, pr)
            act = [i for i in range(len(th)) if not (th[i] <= lower[i] and g_all[i] > 0)]
            if not act:
                break
            g = g_all[act]
            step = None
            if newton:
                H = self.observed_hess(pr)[np.ix_(act, act)]
                try:
                    step = -np.linalg.solve(H, g)
                    if g @ step >= 0:
                        step = None
                except np.linalg.LinAlgError:
                    step = None
            if step is None:
                step = -np.linalg.solve(self.expected_hess(pr)[np.ix_(act, act)], g)
            t, accepted = 1.0, False
            while t > 1e-12:
                cand = th.copy()
                cand[act] = np.maximum(th[act] + t * step, lower[act])
                try:
                    prc = self.parts(cand)
                    ok = prc["dev"] <= pr["dev"] + 1e-12 * abs(pr["dev"])
                except linalg.LinAlgError:
                    ok = False
                if ok:
                    accepted = True
                    break
                t /= 2
            if not accepted:
                break
            rel = np.max(np.abs(cand - th) / (np.abs(cand) + 1e-8))
            change = pr["dev"] - prc["dev"]
            th, pr = cand, prc
            if rel < 1e-6:
                newton = True
            if newton and rel < tol and change < 1e-10:
                break
        self.theta, self.pr, self.iterations = th, pr, it + 1
        self.gradient = self.grad(th, pr)
        return th, pr

    def dPhi(self):
        Phi, ViX = self.pr["Phi"], self.pr["ViX"]
        return [Phi @ (ViX.T @ Gk @ ViX) @ Phi for Gk in self.G]

    def W(self, kind):
        H = self.expected_hess(self.pr) if kind == "expected" else self.observed_hess(self.pr)
        return 2 * np.linalg.inv(H)

    def wald_F(self, L, Phi):
        Lb = L @ self.pr["beta"]
        return Lb @ np.linalg.solve(L @ Phi @ L.T, Lb) / L.shape[0]

    def satterthwaite(self, L, kind="observed"):
        """Wald F with Phi and its denominator df (Fai & Cornelius for several rows)."""
        L = np.atleast_2d(L)
        W = self.W(kind)
        C = L @ self.pr["Phi"] @ L.T
        evals, U = np.linalg.eigh(C)
        dP = self.dPhi()
        nus = []
        for m in range(L.shape[0]):
            l = U[:, m] @ L
            g = np.array([l @ d @ l for d in dP])
            nus.append(2 * evals[m] ** 2 / (g @ W @ g))
        q = L.shape[0]
        F = self.wald_F(L, self.pr["Phi"])
        if q == 1:
            return F, nus[0]
        Ev = sum(v / (v - 2) for v in nus if v > 2)
        return F, (2 * Ev / (Ev - q) if Ev > q else float("nan"))

    def satterthwaite_numeric(self, l):
        """One-row Satterthwaite df with numerical derivatives (numdifftools) of
        l Phi(theta) l' and of -2 log L_R, in relative units theta = s (1 + u)."""
        th = self.theta
        sc = np.where(np.abs(th) > 0, np.abs(th), 1.0)
        to_th = lambda u: th + sc * u
        steps = nd.MinStepGenerator(base_step=1e-3, step_ratio=2, num_steps=6)
        H = nd.Hessian(lambda u: self.parts(to_th(u))["dev"], step=steps)(np.zeros(len(th))) / np.outer(sc, sc)
        g = np.atleast_1d(nd.Gradient(lambda u: l @ self.parts(to_th(u))["Phi"] @ l, step=steps)(
            np.zeros(len(th)))) / sc
        var = l @ self.pr["Phi"] @ l
        return 2 * var ** 2 / (g @ (2 * np.linalg.inv(H)) @ g)

    def adjusted_phi(self):
        """Kenward-Roger Phi_A = Phi + 2 Phi Lambda Phi (R_ij = 0: V linear in theta)."""
        pr = self.pr
        Vi, Phi, ViX = pr["Vi"], pr["Phi"], pr["ViX"]
        W = self.W("expected")
        Cs = [Gk @ ViX for Gk in self.G]
        self.Pm = [-(ViX.T @ Ci) for Ci in Cs]
        ViC = [Vi @ Ci for Ci in Cs]
        K = len(self.G)
        Lam = np.zeros((self.p, self.p))
        for i in range(K):
            for j in range(K):
                Lam += W[i, j] * (Cs[i].T @ ViC[j] - self.Pm[i] @ Phi @ self.Pm[j])
        self.PhiA = Phi + 2 * Phi @ Lam @ Phi
        return self.PhiA

    def kenward_roger(self, L):
        L = np.atleast_2d(L)
        q = L.shape[0]
        Phi = self.pr["Phi"]
        W = self.W("expected")
        K = len(self.G)
        Theta = L.T @ np.linalg.solve(L @ Phi @ L.T, L)
        M = [Theta @ Phi @ self.Pm[i] @ Phi for i in range(K)]
        A1 = sum(W[i, j] * np.trace(M[i]) * np.trace(M[j]) for i in range(K) for j in range(K))
        A2 = sum(W[i, j] * np.trace(M[i] @ M[j]) for i in range(K) for j in range(K))
        B = (A1 + 6 * A2) / (2 * q)
        g = ((q + 1) * A1 - (q + 4) * A2) / ((q + 2) * A2)
        den = 3 * q + 2 * (1 - g)
        c1, c2, c3 = g / den, (q - g) / den, (q + 2 - g) / den
        Estar = 1 / (1 - A2 / q)
        Vstar = (2 / q) * (1 + c1 * B) / ((1 - c2 * B) ** 2 * (1 - c3 * B))
        rho = Vstar / (2 * Estar ** 2)
        m = 4 + (q + 2) / (q * rho - 1)
        lam = m / (Estar * (m - 2))
        F = self.wald_F(L, self.PhiA)
        return dict(F=lam * F, F_unscaled=F, df=m, scale=lam)


# ----------------------------------------------------------------------------
# Inference summaries
# ----------------------------------------------------------------------------

def f_test(model, L, method):
    q = L.shape[0]
    if method == "kenward_roger":
        kr = model.kenward_roger(L)
        F, df2 = kr["F"], kr["df"]
        out = {"F": F, "df1": q, "df2": df2, "p": stats.f.sf(F, q, df2),
               "scale": kr["scale"], "F_unscaled": kr["F_unscaled"]}
    else:
        F, df2 = model.satterthwaite(L)
        out = {"F": F, "df1": q, "df2": df2, "p": stats.f.sf(F, q, df2)}
    return {k: (v if isinstance(v, int) else float(v)) for k, v in out.items()}


def estimate(model, l, method):
    """One row: estimate, SE (Phi_A under KR, Phi under Satterthwaite), df, t, p."""
    l = np.atleast_2d(l)
    est = float((l @ model.pr["beta"])[0])
    if method == "kenward_roger":
        se = math.sqrt(float((l @ model.PhiA @ l.T)[0, 0]))
        df = model.kenward_roger(l)["df"]
    else:
        se = math.sqrt(float((l @ model.pr["Phi"] @ l.T)[0, 0]))
        df = model.satterthwaite(l)[1]
    t = est / se
    return {"estimate": est, "se": se, "df": float(df), "t": t, "p": float(2 * stats.t.sf(abs(t), df))}


def grid_frame(levels, factors, covariate):
    grid = pd.MultiIndex.from_product([levels[f] for f in factors], names=factors).to_frame(index=False)
    grid[covariate] = 0.0
    return grid


def emm_rows(terms, levels, factors, covariate, factor):
    grid = grid_frame(levels, factors, covariate)
    Xg, _ = design(grid, terms, levels, covariate)
    return [(lv, Xg[(grid[factor] == lv).to_numpy()].mean(axis=0)) for lv in levels[factor]]


def slope_rows(terms, levels, factors, covariate):
    """Each treatment cell's own slope: design row at centred covariate 1 minus at 0."""
    grid = grid_frame(levels, factors, covariate)
    X0, _ = design(grid, terms, levels, covariate)
    grid[covariate] = 1.0
    X1, _ = design(grid, terms, levels, covariate)
    return [({f: grid[f][i] for f in factors}, X1[i] - X0[i]) for i in range(len(grid))]


def inference(model, terms, where, levels, factors, covariate, emm_factors, pair_factor, method, random_names):
    out = {"variance_components": {n: float(v) for n, v in
                                   zip(random_names + ["residual"], model.theta)},
           "tests": {}}
    for t in terms:
        if t == ():
            continue
        L = np.eye(model.p)[where[t]]
        out["tests"][term_name(t)] = f_test(model, L, method)
    s = estimate(model, np.eye(model.p)[where[(covariate,)]], method)
    out["slope"] = {k: s[k] for k in ("estimate", "se", "df", "t", "p")}
    out["emm"] = {}
    for f in emm_factors:
        out["emm"][f] = [{"level": lv, **{k: v for k, v in estimate(model, l, method).items()
                                          if k in ("estimate", "se", "df")}}
                         for lv, l in emm_rows(terms, levels, factors, covariate, f)]
    rows = emm_rows(terms, levels, factors, covariate, pair_factor)
    out["pairwise"] = {pair_factor: [
        {"first": a, "second": b, **estimate(model, la - lb, method)}
        for i, (a, la) in enumerate(rows) for (b, lb) in rows[i + 1:]]}
    return out


# ----------------------------------------------------------------------------
# Fitting a case
# ----------------------------------------------------------------------------

def fit_reml(y, X, Zs):
    G = [Z @ Z.T for Z in Zs] + [np.eye(len(y))]
    model = REML(y, X, G)
    resid = y - X @ np.linalg.lstsq(X, y, rcond=None)[0]
    s2 = float(resid @ resid) / (len(y) - X.shape[1])
    model.fit([s2 / len(G)] * len(G), lower=[0.0] * (len(G) - 1) + [1e-10])
    model.adjusted_phi()
    return model


def fit_summary(model, random_names):
    pr = model.pr
    return {
        "variance_components": {n: float(v) for n, v in zip(random_names + ["residual"], model.theta)},
        "reml_criterion": float(pr["dev"]),
        "reml_criterion_note": "-2 log L_R = log|V| + log|X'V^-1X| + y'Py + (N-p) log(2 pi), X as coded here",
        "reml_criterion_coding_invariant": float(pr["dev"] - np.linalg.slogdet(model.X.T @ model.X)[1]),
        "gradient": [float(g) for g in model.gradient],
        "gradient_norm": float(np.linalg.norm(model.gradient)),
        "iterations": model.iterations,
        "rank": model.rank,
        "columns": model.X.shape[1],
        "beta": [float(b) for b in pr["beta"]],
        "phi": [[float(v) for v in r] for r in pr["Phi"]],
        "phi_adjusted": [[float(v) for v in r] for r in model.PhiA],
    }


def statsmodels_check(frame, y, X, model, group, vc_cols, random_names):
    """statsmodels MixedLM (REML) on the same X; `group` is the top random term,
    `vc_cols` (if any) a nested term as a variance component within it."""
    vc = None
    if vc_cols:
        groups = first_appearance(frame[group])
        mats = [indicator(frame[(frame[group] == g).to_numpy()], [vc_cols]) for g in groups]
        vc = VCSpec(["nested"], [[["u%d" % k for k in range(m.shape[1])] for m in mats]], [mats])
    mod = sm.MixedLM(y, X, groups=frame[group].to_numpy(), exog_re=np.ones((len(y), 1)), exog_vc=vc)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = mod.fit(reml=True, method=["bfgs", "lbfgs"], gtol=1e-10, maxiter=5000)
    p = X.shape[1]
    comps = [float(res.cov_re.iloc[0, 0] if hasattr(res.cov_re, "iloc") else res.cov_re[0, 0])]
    if vc_cols:
        comps.append(float(res.vcomp[0]))
    comps.append(float(res.scale))
    # statsmodels' cov_params() inverts the joint Hessian (fixed effects and variance
    # parameters, observed cross terms), which is not (X'V^-1X)^-1; the fixed-effect
    # block of its Hessian is -X'V^-1X, formed by statsmodels' own per-group solver.
    hess, _ = mod.hessian(res.params_object)
    cov = np.linalg.inv(-hess[:p, :p])
    joint = np.asarray(res.cov_params())[:p, :p]
    fe = np.asarray(res.fe_params)
    rel = lambda a, b: float(np.max(np.abs(np.asarray(a) - np.asarray(b)) / np.maximum(np.abs(np.asarray(b)), 1e-300)))
    # Covariance entries near zero are compared relative to the diagonal scale.
    cov_scale = np.sqrt(np.outer(np.diag(model.pr["Phi"]), np.diag(model.pr["Phi"])))
    return {
        "variance_components": {n: v for n, v in zip(random_names + ["residual"], comps)},
        "beta": [float(b) for b in fe],
        "phi": [[float(v) for v in r] for r in cov],
        "phi_note": "inverse of minus the fixed-effect block of MixedLM.hessian at the REML fit",
        "cov_params_joint_diagonal": [float(v) for v in np.diag(joint)],
        "cov_params_joint_note": "diagonal of MixedLMResults.cov_params() for the fixed effects: inverse of "
                                 "the joint observed Hessian (variance parameters included), not Phi; not compared",
        "llf_reml": float(res.llf),
        "converged": bool(res.converged),
        "max_rel_diff": {
            "beta": float(np.max(np.abs(fe - model.pr["beta"]) / np.sqrt(np.diag(model.pr["Phi"])))),
            "beta_note": "largest |difference| / sqrt(Phi_ii) (a coefficient can be near zero)",
            "phi": float(np.max(np.abs(cov - model.pr["Phi"]) / cov_scale)),
            "phi_note": "largest |difference| / sqrt(Phi_ii Phi_jj)",
            "variance_components": rel(comps, model.theta),
        },
    }


def run_case(spec):
    frame = pd.read_csv(os.path.join(DATA, spec["file"]), dtype=str, keep_default_na=False)
    factors, cov = spec["factors"], spec["covariate"]
    levels = {f: first_appearance(frame[f]) for f in factors + spec["random_factors"]}
    raw = frame[cov].astype(float)
    mean = float(raw.mean())
    frame[cov] = raw - mean
    y = frame[spec["response"]].astype(float).to_numpy()
    Zs = [indicator(frame, cols) for cols in spec["random"]]
    random_names = [":".join(c) for c in spec["random"]]
    terms = spec["terms"]
    X, where = design(frame, terms, levels, cov)
    model = fit_reml(y, X, Zs)
    group = spec["random"][0][0]
    nested = spec["random"][1][-1] if len(spec["random"]) > 1 else None
    check = lambda X_, model_: statsmodels_check(frame, y, X_, model_, group, nested, random_names)
    case = {
        "data": "tests/data/invented/" + spec["file"], "rows": len(frame),
        "deleted": spec["deleted"],
        "deleted_note": "row: 1-based position among the generated rows before the deletion (header not counted)",
        "model": spec["model"], "levels": levels,
        "covariate": cov, "covariate_mean": mean,
        "column_names": column_names(terms, levels, cov),
        "fit": fit_summary(model, random_names),
        "statsmodels": check(X, model),
        "satterthwaite_numeric_check": numeric_check(model, where, terms, levels, factors, cov, spec),
    }
    for method in ("kenward_roger", "satterthwaite"):
        case[method] = inference(model, terms, where, levels, factors, cov,
                                 spec["emm_factors"], spec["pair_factor"], method, random_names)
    case["equal_slopes"] = equal_slopes(frame, y, Zs, terms, levels, factors, cov, random_names, check)
    return case


def numeric_check(model, where, terms, levels, factors, cov, spec):
    """Analytic against numerical (numdifftools) Satterthwaite df, one row each."""
    rows = {"slope": np.eye(model.p)[where[(cov,)]][0]}
    emms = emm_rows(terms, levels, factors, cov, spec["pair_factor"])
    rows["%s %s - %s" % (spec["pair_factor"], emms[0][0], emms[1][0])] = emms[0][1] - emms[1][1]
    out = {}
    for name, l in rows.items():
        analytic = float(model.satterthwaite(l)[1])
        numeric = float(model.satterthwaite_numeric(l))
        out[name] = {"analytic": analytic, "numeric": numeric, "rel_diff": abs(analytic - numeric) / analytic}
    return out


def equal_slopes(frame, y, Zs, terms, levels, factors, cov, random_names, check):
    treatment = [t for t in terms if t != () and cov not in t]
    added = [t + (cov,) for t in treatment]
    full = terms + added
    X, where = design(frame, full, levels, cov)
    rank = int(np.linalg.matrix_rank(X))
    out = {"added_terms": [term_name(t) for t in added], "columns": X.shape[1], "rank": rank,
           "estimable": rank == X.shape[1], "column_names": column_names(full, levels, cov)}
    if rank < X.shape[1]:
        return out
    model = fit_reml(y, X, Zs)
    out["fit"] = fit_summary(model, random_names)
    out["statsmodels"] = check(X, model)
    idx = np.concatenate([np.arange(X.shape[1])[where[t]] for t in added])
    L = np.eye(X.shape[1])[idx]
    out["test"] = {m: f_test(model, L, m) for m in ("kenward_roger", "satterthwaite")}
    out["group_slopes"] = []
    for cell, l in slope_rows(full, levels, factors, cov):
        kr = estimate(model, l, "kenward_roger")
        st = estimate(model, l, "satterthwaite")
        out["group_slopes"].append({**cell, "estimate": kr["estimate"], "se_kr": kr["se"], "df_kr": kr["df"],
                                    "se_satterthwaite": st["se"], "df_satterthwaite": st["df"]})
    return out


# ----------------------------------------------------------------------------

def summary(name, case):
    print("== %s (%d rows, covariate mean %.6g)" % (name, case["rows"], case["covariate_mean"]))
    print("   variance components", {k: round(v, 4) for k, v in case["fit"]["variance_components"].items()},
          "gradient norm %.2e" % case["fit"]["gradient_norm"])
    print("   statsmodels max diffs", {k: "%.1e" % v for k, v in case["statsmodels"]["max_rel_diff"].items()
                                       if not k.endswith("note")})
    print("   Satterthwaite df analytic vs numeric", {k: "%.1e" % v["rel_diff"]
                                                     for k, v in case["satterthwaite_numeric_check"].items()})
    for m in ("kenward_roger", "satterthwaite"):
        r = case[m]
        for t, v in r["tests"].items():
            print("   %-14s %-22s F %10.4f  df %d, %8.3f  p %.4g" % (m[:14], t, v["F"], v["df1"], v["df2"], v["p"]))
        s = r["slope"]
        print("   %-14s slope %.5f  SE %.5f  df %.3f" % (m[:14], s["estimate"], s["se"], s["df"]))
    es = case["equal_slopes"]
    if "test" in es:
        print("   equal-slopes refit vs statsmodels", {k: "%.1e" % v for k, v in
                                                      es["statsmodels"]["max_rel_diff"].items() if not k.endswith("note")})
        for m, v in es["test"].items():
            print("   equal slopes %-14s F %.4f  df %d, %.3f  p %.4g" % (m[:14], v["F"], v["df1"], v["df2"], v["p"]))
    else:
        print("   equal slopes: not estimable (rank %d of %d)" % (es["rank"], es["columns"]))


def main():
    beans_deleted = make_beans()
    pens_deleted = make_pens()
    specs = {
        "beans_split": dict(
            file="beans-split.csv", response="yield", covariate="stand",
            factors=["irrigation", "coating"], random_factors=["block"],
            random=[["block"], ["block", "irrigation"]],
            terms=[(), ("irrigation",), ("coating",), ("irrigation", "coating"), ("stand",)],
            model={"fixed": "yield ~ irrigation * coating + stand", "covariate": "stand",
                   "random": ["block", "block:irrigation"]},
            emm_factors=["coating", "irrigation"], pair_factor="coating", deleted=beans_deleted),
        "pens_repeated": dict(
            file="pens-repeated.csv", response="weight", covariate="initial",
            factors=["diet", "week"], random_factors=["animal"], random=[["animal"]],
            terms=[(), ("diet",), ("week",), ("diet", "week"), ("initial",)],
            model={"fixed": "weight ~ diet * week + initial", "covariate": "initial",
                   "random": ["animal"], "note": "week is a factor (levels 2, 4, 6, 8)"},
            emm_factors=["diet", "week"], pair_factor="diet", deleted=pens_deleted),
    }
    out = {
        "generator": "tests/reference/mixed_covariates.py",
        "versions": {"numpy": np.__version__, "scipy": scipy.__version__,
                     "pandas": pd.__version__, "statsmodels": statsmodels.__version__},
        "seeds": {"beans_split": SEED_BEANS, "pens_repeated": SEED_PENS},
        "conventions": "sum-to-zero coding, levels in first-appearance order, covariate centred at its mean "
                       "over the rows analysed; pairwise = first - second; KR: SE from Phi_A, F = lambda * "
                       "Wald F(Phi_A); Satterthwaite: SE from Phi, Fai-Cornelius df with observed information",
        "cases": {},
    }
    for name, spec in specs.items():
        out["cases"][name] = run_case(spec)
        summary(name, out["cases"][name])
    with open(os.path.join(HERE, "mixed_covariates.json"), "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
