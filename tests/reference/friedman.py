"""Reference for Friedman's test, Kendall's W and the rank post hoc
procedures of complete blocks. Written to tests/reference/friedman.json and
read by tests/friedman.rs and the unit tests of src/stats/friedman.rs.

For each data set (a table blocks x levels):
- chi_sq, p: scipy.stats.friedmanchisquare (tie-corrected chi-squared,
  p from chi-squared(k - 1));
- rank_sums, mean_ranks: scipy.stats.rankdata within each block (mid-ranks);
- kendall_w: Kendall's coefficient of concordance with his correction for
  ties, W = 12 S / (m^2 (n^3 - n) - m sum(t^3 - t)) (Kendall 1948, *Rank
  Correlation Methods*; Siegel & Castellan 1988, eq. 9.16, from memory),
  m = blocks (judges), n = levels (objects), S = sum of squared deviations
  of the rank sums from their mean; computed here from the ranks, not
  from chi-squared;
- nemenyi_p: scikit-posthocs posthoc_nemenyi_friedman (scipy's
  studentized_range.sf at infinite df) for every pair, in sheaf's order
  (j, i) for i < j;
- nemenyi_p_mpmath: the same tail P(Q > q) for k means at infinite df by
  mpmath at 30 digits, P(R > w) = 1 - k int phi(z) [Phi(z) - Phi(z - w)]^(k-1)
  dz, to settle the digits where scipy's 1 - cdf loses them;
- conover_p: scikit-posthocs posthoc_conover_friedman (p_adjust=None):
  Conover's (1999, section 5.8) t-based comparison of rank sums, unadjusted.

Data sets:
1. rounding: Hollander & Wolfe (1999), Nonparametric Statistical Methods,
   2nd ed., Table 7.1 (Woodward 1970): times (s) to round first base by
   three methods, 22 players (from memory). Printed values (from memory):
   Friedman statistic 11.14 (adjusted for ties), p about 0.004; rank sums
   53, 47, 32 (round out, narrow angle, wide angle).
2. grass: Conover (1999), Practical Nonparametric Statistics, 3rd ed.,
   Example 5.8.1: twelve homeowners rank four lawn grasses, with ties
   (from memory). Printed values (from memory): rank sums 38, 23.5, 24.5,
   34 and T1 = 8.097.
3. crispness: tests/data/invented/crispness.csv, invented sensory scores
   (12 panellists x 4 crackers, one decimal, ties in some blocks).

    /tmp/venv-ref/bin/python tests/reference/friedman.py
"""
import csv
import json
import os

import mpmath
import numpy as np
import scikit_posthocs as sp
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))

ROUNDING = [
    [5.40, 5.50, 5.55], [5.85, 5.70, 5.75], [5.20, 5.60, 5.50],
    [5.55, 5.50, 5.40], [5.90, 5.85, 5.70], [5.45, 5.55, 5.60],
    [5.40, 5.40, 5.35], [5.45, 5.50, 5.35], [5.25, 5.15, 5.00],
    [5.85, 5.80, 5.70], [5.25, 5.20, 5.10], [5.65, 5.55, 5.45],
    [5.60, 5.35, 5.45], [5.05, 5.00, 4.95], [5.50, 5.50, 5.40],
    [5.45, 5.55, 5.50], [5.55, 5.55, 5.35], [5.45, 5.50, 5.55],
    [5.50, 5.45, 5.25], [5.65, 5.60, 5.40], [5.70, 5.65, 5.55],
    [6.30, 6.30, 6.25],
]

GRASS = [
    [4, 3, 2, 1], [4, 2, 3, 1], [3, 1.5, 1.5, 4], [3, 1, 2, 4],
    [4, 2, 1, 3], [2, 2, 2, 4], [1, 3, 2, 4], [2, 4, 1, 3],
    [3.5, 1, 2, 3.5], [4, 1, 3, 2], [4, 2, 3, 1], [3.5, 1, 2, 3.5],
]


def crispness():
    path = os.path.join(ROOT, "tests", "data", "invented", "crispness.csv")
    blocks, levels, cells = [], [], {}
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            if row["panellist"] not in blocks:
                blocks.append(row["panellist"])
            if row["cracker"] not in levels:
                levels.append(row["cracker"])
            cells[(row["panellist"], row["cracker"])] = float(row["crispness"])
    return levels, [[cells[(b, l)] for l in levels] for b in blocks]


def kendall_w(table):
    """Kendall's W with the tie correction, from the within-block ranks."""
    x = np.asarray(table, dtype=float)
    m, n = x.shape
    ranks = np.array([stats.rankdata(row) for row in x])
    rank_sums = ranks.sum(axis=0)
    s = float(((rank_sums - rank_sums.mean()) ** 2).sum())
    ties = 0.0
    for row in x:
        _, counts = np.unique(row, return_counts=True)
        ties += float((counts ** 3 - counts).sum())
    return 12.0 * s / (m * m * (n ** 3 - n) - m * ties), ties


def range_sf_mpmath(q, k):
    """P(Q > q) for the studentized range of k means at infinite df."""
    mpmath.mp.dps = 30
    q = mpmath.mpf(q)

    def integrand(z):
        return mpmath.npdf(z) * (mpmath.ncdf(z) - mpmath.ncdf(z - q)) ** (k - 1)

    cdf = k * mpmath.quad(integrand, [-mpmath.inf, -5, 0, 5, mpmath.inf])
    return float(1 - cdf)


def pairs_of(matrix, k):
    """Entries (j, i) for i < j, in sheaf's pair order."""
    return [float(matrix[j][i]) for i in range(k) for j in range(i + 1, k)]


def reference(name, levels, table, source):
    x = np.asarray(table, dtype=float)
    b, k = x.shape
    chi_sq, p = stats.friedmanchisquare(*[x[:, j] for j in range(k)])
    ranks = np.array([stats.rankdata(row) for row in x])
    rank_sums = ranks.sum(axis=0)
    w, ties = kendall_w(table)
    nemenyi = sp.posthoc_nemenyi_friedman(x).to_numpy()
    conover = sp.posthoc_conover_friedman(x, p_adjust=None).to_numpy()
    mean_ranks = rank_sums / b
    se = np.sqrt(k * (k + 1.0) / (6.0 * b))
    q = [float(np.sqrt(2.0) * abs(mean_ranks[j] - mean_ranks[i]) / se)
         for i in range(k) for j in range(i + 1, k)]
    return {
        "name": name,
        "source": source,
        "levels": levels,
        "table": [[float(v) for v in row] for row in table],
        "blocks": b,
        "chi_sq": float(chi_sq),
        "p": float(p),
        "df": k - 1,
        "ties": ties,
        "rank_sums": [float(r) for r in rank_sums],
        "mean_ranks": [float(r) for r in mean_ranks],
        "kendall_w": w,
        "nemenyi_q": q,
        "nemenyi_p": pairs_of(nemenyi, k),
        "nemenyi_p_mpmath": [range_sf_mpmath(v, k) for v in q],
        "conover_p": pairs_of(conover, k),
    }


def main():
    levels, crisp = crispness()
    sets = [
        reference("rounding", ["round out", "narrow angle", "wide angle"], ROUNDING,
                  "Hollander & Wolfe (1999) Table 7.1 (Woodward 1970), from memory"),
        reference("grass", ["1", "2", "3", "4"], GRASS,
                  "Conover (1999) Example 5.8.1, from memory"),
        reference("crispness", levels, crisp,
                  "tests/data/invented/crispness.csv (invented)"),
    ]
    printed = {
        "rounding": {"chi_sq": 11.14, "p": 0.004, "rank_sums": [53, 47, 32]},
        "grass": {"chi_sq": 8.097, "rank_sums": [38, 23.5, 24.5, 34]},
    }
    for s in sets:
        if s["name"] in printed:
            s["printed"] = printed[s["name"]]
    out = {
        "versions": {
            "scipy": scipy.__version__,
            "scikit_posthocs": sp.__version__,
            "mpmath": mpmath.__version__,
            "numpy": np.__version__,
        },
        "sets": sets,
    }
    with open(os.path.join(HERE, "friedman.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    for s in sets:
        worst = max(abs(a - b) for a, b in zip(s["nemenyi_p"], s["nemenyi_p_mpmath"]))
        print(s["name"], "chi2", s["chi_sq"], "p", s["p"], "W", s["kendall_w"],
              "R", s["rank_sums"], "| nemenyi scipy-mpmath worst", worst)


if __name__ == "__main__":
    main()
