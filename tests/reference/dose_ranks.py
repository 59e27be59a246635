"""Reference for the rank-based dose-response tests (src/stats/jonckheere.rs,
steel.rs, step_down.rs; linear-extensions.md E.2-E.5) on the open
P.promelas data (tests/data/open/P.promelas.csv) and on small designs.

What each value comes from:
- Jonckheere-Terpstra J, mean, tie-corrected variance, z and normal p:
  statsmodels `stats.nonparametric.jonckheere_terpstra` (its `statistic` is
  J in the increasing sense even for alternative='smaller'), for the full
  data and for each step-down set S_j = control..dose j.
- Exact Jonckheere-Terpstra p (continuous data): exact integer counts from
  the q-multinomial coefficient (product of Gaussian binomials, Python
  integers, MacMahon 1916), divided with `fractions.Fraction`; the formula
  itself is confirmed by enumerating every arrangement of a small design.
- Ordinal-contrast step-down: statsmodels OLS on the groups in S_j
  (cell means) and `t_test` of the contrast with scores 0..j centred with
  weights n_i.
- Steel's test: U from scipy `mannwhitneyu` (statistic of the treatment
  against the control), tie-corrected z by the formula of E.3, joint
  normal-approximation adjusted p and critical |z| by mpmath quadrature of
  the product-correlation integral at 30 digits (mpmath `quad`, `findroot`).
- Exact Steel p (continuous data): inclusion-exclusion over the treatments
  with the Dirichlet-spacings moments in exact rational arithmetic
  (`fractions.Fraction`), and, on tiny designs, by enumerating every
  arrangement of the labelled values.
- Sanity checks: scipy `mannwhitneyu(method='exact')` (4 and 4, U = 2 gives
  4/70) and mpmath quadrature of 1 - E[(1 - V^4)^5], V ~ Beta(1, 4).

    /tmp/venv-ref/bin/python tests/reference/dose_ranks.py
"""
import itertools
import json
import math
import pathlib
from fractions import Fraction

import mpmath
import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.formula.api as smf
from scipy import stats
from statsmodels.stats.nonparametric import jonckheere_terpstra

HERE = pathlib.Path(__file__).resolve().parent
DATA = HERE.parent / "data" / "open" / "P.promelas.csv"
mpmath.mp.dps = 30


def groups_of(frame):
    levels = sorted(frame.conc.unique())
    return levels, [frame.dryweight[frame.conc == c].to_numpy() for c in levels]


# ---------- Jonckheere-Terpstra ----------

def gaussian_binomial(n, k):
    """Integer coefficients of [n; k]_q (count of Mann-Whitney values)."""
    # [n; k]_q = [n-1; k-1]_q + q^k [n-1; k]_q
    table = {(0, 0): [1]}
    for m in range(1, n + 1):
        for j in range(0, min(m, k) + 1):
            a = table.get((m - 1, j - 1), [0]) if j >= 1 else [0]
            b = table.get((m - 1, j), [0]) if j <= m - 1 else [0]
            size = j * (m - j) + 1
            out = [0] * size
            for i, c in enumerate(a):
                if i < size:
                    out[i] += c
            for i, c in enumerate(b):
                if i + j < size:
                    out[i + j] += c
            table[(m, j)] = out
    return table[(n, k)]


def poly_mul(a, b):
    out = [0] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        if x:
            for j, y in enumerate(b):
                out[i + j] += x * y
    return out


def jt_counts(sizes):
    counts, before = [1], 0
    for m in sizes:
        counts = poly_mul(counts, gaussian_binomial(before + m, m))
        before += m
    return counts


def jt_of_labels(labels):
    """J (increasing sense) of an arrangement: pairs (earlier position,
    later position) whose group label increases."""
    return sum(1 for a in range(len(labels)) for b in range(a + 1, len(labels))
               if labels[a] < labels[b])


def jt_enumerated(sizes):
    labels = [g for g, m in enumerate(sizes) for _ in range(m)]
    counts = {}
    for perm in set(itertools.permutations(labels)):
        j = jt_of_labels(perm)
        counts[j] = counts.get(j, 0) + 1
    return [counts.get(j, 0) for j in range(max(counts) + 1)]


def jt_exact_p(sizes, j, smaller):
    counts = jt_counts(sizes)
    total = sum(counts)
    tail = sum(counts[: j + 1]) if smaller else sum(counts[j:])
    return Fraction(tail, total), total


def jonckheere_section(groups):
    out = {"steps": []}
    for top in range(len(groups) - 1, 0, -1):
        subset = groups[: top + 1]
        r = jonckheere_terpstra(subset, alternative="smaller")
        sizes = [len(g) for g in subset]
        p_exact, total = jt_exact_p(sizes, int(round(float(r.statistic))), True)
        out["steps"].append({
            "doses": top, "j": float(r.statistic), "mean": float(r.mean_null),
            "variance": float(r.var_null), "z": float(r.zstat),
            "p_normal": float(r.pvalue), "p_exact": float(p_exact),
            "arrangements": str(total),
        })
    full = out["steps"][0]
    n = [len(g) for g in groups]
    N = sum(n)
    full["variance_untied"] = (N * N * (2 * N + 3) - sum(m * m * (2 * m + 3) for m in n)) / 72
    # The q-multinomial against plain enumeration on small designs.
    out["enumerated"] = [
        {"sizes": s, "counts": jt_enumerated(s), "q_multinomial": jt_counts(s)}
        for s in ([2, 2, 3], [1, 3, 2, 2], [3, 3])
    ]
    return out


# ---------- ordinal contrast ----------

def ordinal_section(frame, levels):
    steps = []
    for top in range(len(levels) - 1, 0, -1):
        sub = frame[frame.conc.isin(levels[: top + 1])].copy()
        sub["level"] = pd.Categorical(sub.conc, categories=levels[: top + 1])
        fit = smf.ols("dryweight ~ 0 + level", data=sub).fit()
        n = sub.groupby("level", observed=True).size().to_numpy().astype(float)
        scores = np.arange(top + 1, dtype=float)
        c = scores - (n * scores).sum() / n.sum()
        t = fit.t_test(c.reshape(1, -1))
        steps.append({"doses": top, "t": float(np.squeeze(t.tvalue)),
                      "df": float(t.df_denom),
                      "p": float(stats.t.cdf(float(np.squeeze(t.tvalue)), t.df_denom))})
    return steps


# ---------- Steel ----------

def product_correlation_cdf(d, lambdas):
    """P(all Z_i <= d), corr(Z_i, Z_j) = lambda_i lambda_j (nu = infinity)."""
    def integrand(t):
        prod = mpmath.npdf(t)
        for lam in lambdas:
            prod *= mpmath.ncdf((d + lam * t) / mpmath.sqrt(1 - lam * lam))
        return prod
    return mpmath.quad(integrand, [-mpmath.inf, -5, 0, 5, mpmath.inf])


def dirichlet_moment(n0, exponents):
    total = sum(exponents)
    value = Fraction(math.factorial(n0), math.factorial(n0 + total))
    for a in exponents:
        value *= math.factorial(a)
    return value


def prob_u_at_most(n, cutoff):
    """P(U <= cutoff | D) as {exponent tuple over gaps 0..cutoff: multinomial
    coefficient}, the terms of (sum_g D_g q^g)^n with a power of q <= cutoff."""
    poly = {}
    for combo in itertools.combinations_with_replacement(range(cutoff + 1), n):
        if sum(combo) <= cutoff:
            key = tuple(combo.count(g) for g in range(cutoff + 1))
            ways = math.factorial(n)
            for c in key:
                ways //= math.factorial(c)
            poly[key] = poly.get(key, 0) + ways
    return poly


def steel_exact_rational(n0, sizes, cutoffs):
    """P(some U_j <= cutoff_j), continuous data: inclusion-exclusion over
    subsets of treatments, E[prod D_g^a_g] = n0! prod a_g! / (n0 + sum a)!."""
    width = max(cutoffs) + 1
    polys = []
    for n, c in zip(sizes, cutoffs):
        if c < 0:
            polys.append(None)
            continue
        raw = prob_u_at_most(n, min(c, n0))
        polys.append({k + (0,) * (width - len(k)): v for k, v in raw.items()})
    usable = [p for p in polys if p is not None]
    total = Fraction(0)
    for size in range(1, len(usable) + 1):
        for subset in itertools.combinations(usable, size):
            prod = {(0,) * width: 1}
            for p in subset:
                nxt = {}
                for ka, va in prod.items():
                    for kb, vb in p.items():
                        key = tuple(x + y for x, y in zip(ka, kb))
                        nxt[key] = nxt.get(key, 0) + va * vb
                prod = nxt
            e = sum(v * dirichlet_moment(n0, k[: n0 + 1]) for k, v in prod.items())
            total += (-1) ** (size + 1) * e
    return total


def steel_enumerated(n0, sizes, direction):
    """Exact adjusted p of every treatment by enumerating arrangements."""
    labels = [0] * n0 + [g + 1 for g, m in enumerate(sizes) for _ in range(m)]
    perms = list(set(itertools.permutations(labels)))
    means = [m * n0 / 2 for m in sizes]
    sds = [math.sqrt(m * n0 * (m + n0 + 1) / 12) for m in sizes]

    def zs(perm):
        out = []
        for g in range(len(sizes)):
            u, seen = 0, 0
            for lab in perm:
                if lab == 0:
                    seen += 1
                elif lab == g + 1:
                    u += seen
            out.append(direction * (u - means[g]) / sds[g])
        return out

    all_z = [zs(p) for p in perms]
    return all_z, perms


def steel_section(groups):
    control, treatments = groups[0], groups[1:]
    n0 = len(control)
    us, zs, lambdas, mw_exact = [], [], [], []
    for t in treatments:
        m = len(t)
        u = float(stats.mannwhitneyu(t, control, alternative="less").statistic)
        pooled = np.concatenate([t, control])
        _, tie_counts = np.unique(pooled, return_counts=True)
        ties = float(((tie_counts ** 3) - tie_counts).sum())
        var = m * n0 / 12 * ((m + n0 + 1) - ties / ((m + n0) * (m + n0 - 1)))
        us.append(u)
        zs.append((u - m * n0 / 2) / math.sqrt(var))
        lambdas.append(math.sqrt(m / (m + n0 + 1)))
        mw_exact.append(float(stats.mannwhitneyu(t, control, alternative="less",
                                                 method="exact").pvalue))
    lam = [mpmath.mpf(x) for x in lambdas]
    p_normal = [float(1 - product_correlation_cdf(mpmath.mpf(-z), lam)) for z in zs]
    critical = mpmath.findroot(lambda d: product_correlation_cdf(d, lam) - mpmath.mpf("0.95"), 2.2)
    exact = [steel_exact_rational(n0, [len(t) for t in treatments], [int(u)] * len(treatments))
             for u in us]
    return {"u": us, "z": zs, "p_normal": p_normal, "critical_z": float(critical),
            "p_exact": [float(e) for e in exact],
            "p_exact_rational": [[e.numerator, e.denominator] for e in exact],
            "mann_whitney_exact": mw_exact}


def steel_tiny_designs():
    """Exact adjusted p on tiny designs by enumeration (and by the rational
    formula), for an observed arrangement given as values."""
    cases = []
    rng = np.random.default_rng(20261205)
    for n0, sizes, direction in [(3, [2, 2], -1), (3, [2, 3], -1), (4, [3, 2], 1), (2, [2, 2, 2], -1)]:
        all_z, _ = steel_enumerated(n0, sizes, direction)
        control = list(rng.permutation(np.arange(n0) * 1.0 + 0.5))
        # Shifted in the tested direction so that some p are small.
        low, high = (-1.5, n0 - 0.5) if direction < 0 else (0.5, n0 + 1.5)
        treatments = [list(rng.uniform(low, high, m).round(3)) for m in sizes]
        # z of the observed data, signed so that an effect in the tested
        # direction is large; adjusted p = P(max_j z_j >= z_i).
        obs = []
        for t in treatments:
            u = sum(1 for x in t for c in control if x > c)
            m = len(t)
            obs.append(direction * (u - m * n0 / 2) / math.sqrt(m * n0 * (m + n0 + 1) / 12))
        p = [sum(1 for zz in all_z if max(zz) >= o - 1e-12) / len(all_z) for o in obs]
        cases.append({"n0": n0, "sizes": sizes,
                      "direction": "decrease" if direction < 0 else "increase",
                      "control": control, "treatments": treatments, "p_exact": p,
                      "arrangements": len(all_z)})
    return cases


def sanity():
    u2 = stats.mannwhitneyu([1, 2, 3, 6], [4, 5, 7, 8], alternative="less", method="exact")
    return {"mann_whitney_4_4_u2": float(u2.pvalue), "mann_whitney_4_4_u2_statistic": float(u2.statistic),
            "five_treatments_u0": float(1 - mpmath.quad(lambda x: 4 * (1 - x) ** 3 * (1 - x ** 4) ** 5, [0, 1]))}


def main():
    frame = pd.read_csv(DATA)
    levels, groups = groups_of(frame)
    out = {
        "versions": {"scipy": scipy.__version__, "statsmodels": statsmodels.__version__,
                     "mpmath": mpmath.__version__},
        "levels": [float(x) for x in levels],
        "jonckheere": jonckheere_section(groups),
        "ordinal": ordinal_section(frame, levels),
        "steel": steel_section(groups),
        "steel_tiny": steel_tiny_designs(),
        "sanity": sanity(),
    }
    (HERE / "dose_ranks.json").write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
