"""Reference values for where two treatment cells' lines differ in a mixed model
(regions of significance along the covariate), computed without sheaf.

Data and model: the invented split plot tests/data/invented/beans-split.csv (35 rows),
yield ~ irrigation * coating + stand with stand centred at its mean, random block and
block:irrigation, REML, Kenward-Roger; here its "equal slopes" refit, which adds
irrigation:stand, coating:stand and irrigation:coating:stand, so every one of the 9
treatment cells has its own line.

The REML fit, the Kenward-Roger adjusted covariance Phi_A and the one-row KR df are
imported from mixed_covariates.py beside this script (its REML class, `design`,
`indicator`, `fit_reml`, `estimate`, `grid_frame`), so the refit is the same one that
mixed_covariates.json records (checked below: `refit_check`). Methods:
  * Kenward, M. G. and Roger, J. H. (1997), Biometrics 53, 983-997 (Phi_A, df m; one
    row, so the scale lambda is 1 and only m matters).
  * Johnson, P. O. and Neyman, J. (1936), Statistical Research Memoirs 1, 57-93: the
    values of the covariate where the difference between two lines is just significant.

For cells a, b (a before b in the order dry x none, dry x film, dry x pellet, mid x none,
..., wet x pellet; irrigation varying slowest, levels in first-appearance order) and a
stand value x (data units; u = x - mean(stand)):
  row_g(u) = the cell's design row at centred covariate u (the fixed part has no block
             term, so averaging over the block grid leaves the single cell row),
  l(x)     = row_b(u) - row_a(u),   D(x) = l(x) beta   (line b minus line a),
  SE(x)    = sqrt(l(x) Phi_A l(x)'),  df(x) = KR df of the single row l(x),
  the pair differs at level alpha at x when |D(x)| / SE(x) > t_{1-alpha/2, df(x)}.
Over the observed range [min, max] of stand, with alpha = 0.15:
  * boundaries: every x in (min, max) with |D|/SE = t_{1-alpha/2, df(x)}: the sign
    changes of h(x) = |D|/SE - t(df(x)) on a grid of 2001 equally spaced points, each
    refined by scipy.optimize.brentq to xtol 1e-12 (a grid point where h is exactly 0
    is itself a boundary); a tangency without a sign change would not be found, so the
    smallest |h| at the grid's interior local extrema of h is recorded
    (`min_abs_h_at_grid_extrema`, null when h is monotone on the grid) to show none is near;
  * significant: the [from, to] pieces of [min, max] where h > 0 (h evaluated at the
    midpoint of each piece between consecutive boundaries).
Spot checks for three pairs: D, SE, df at x = min, mean, max.

    python3 -m venv /tmp/venv-ref && /tmp/venv-ref/bin/pip install numpy scipy statsmodels pandas numdifftools
    /tmp/venv-ref/bin/python tests/reference/mixed_regions.py

Writes tests/reference/mixed_regions.json; rerunning reproduces it byte for byte.
"""
import json
import math
import os
import sys

import numpy as np
import pandas as pd
import scipy
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
from mixed_covariates import DATA, design, estimate, fit_reml, grid_frame, indicator  # noqa: E402

ALPHA = 0.15
GRID_POINTS = 2001
XTOL = 1e-12
FACTORS = ["irrigation", "coating"]
COVARIATE = "stand"
TERMS = [(), ("irrigation",), ("coating",), ("irrigation", "coating"), ("stand",),
         ("irrigation", "stand"), ("coating", "stand"), ("irrigation", "coating", "stand")]
SPOT_PAIRS = [("dry × none", "wet × pellet"), ("dry × none", "dry × pellet"), ("mid × film", "wet × film")]


def fit_refit():
    frame = pd.read_csv(os.path.join(DATA, "beans-split.csv"), dtype=str, keep_default_na=False)
    levels = {f: list(dict.fromkeys(frame[f])) for f in FACTORS + ["block"]}
    raw = frame[COVARIATE].astype(float)
    mean = float(raw.mean())
    frame[COVARIATE] = raw - mean
    y = frame["yield"].astype(float).to_numpy()
    Zs = [indicator(frame, ["block"]), indicator(frame, ["block", "irrigation"])]
    X, _ = design(frame, TERMS, levels, COVARIATE)
    model = fit_reml(y, X, Zs)
    return model, levels, mean, float(raw.min()), float(raw.max())


def cell_rows(levels):
    """Each cell's design row at centred covariate 0 and its change per unit u."""
    grid = grid_frame(levels, FACTORS, COVARIATE)
    X0, _ = design(grid, TERMS, levels, COVARIATE)
    grid[COVARIATE] = 1.0
    X1, _ = design(grid, TERMS, levels, COVARIATE)
    labels = ["%s × %s" % (grid["irrigation"][i], grid["coating"][i]) for i in range(len(grid))]
    return [(labels[i], X0[i], X1[i] - X0[i]) for i in range(len(grid))]


class Pair:
    def __init__(self, model, mean, a, b):
        self.model, self.mean = model, mean
        self.a, self.b = a[0], b[0]
        self.l0, self.l1 = b[1] - a[1], b[2] - a[2]

    def row(self, x):
        return self.l0 + (x - self.mean) * self.l1

    def parts(self, x):
        l = self.row(x)
        d = float(l @ self.model.pr["beta"])
        se = math.sqrt(float(l @ self.model.PhiA @ l))
        df = float(self.model.kenward_roger(l)["df"])
        return d, se, df

    def h(self, x):
        d, se, df = self.parts(x)
        return abs(d) / se - stats.t.ppf(1 - ALPHA / 2, df)


def regions(pair, lo, hi):
    xs = np.linspace(lo, hi, GRID_POINTS)
    hs = np.array([pair.h(x) for x in xs])
    bounds = []
    for i in range(len(xs) - 1):
        if hs[i] == 0.0 and 0 < i:
            bounds.append(float(xs[i]))
        elif hs[i] * hs[i + 1] < 0:
            bounds.append(float(optimize.brentq(pair.h, xs[i], xs[i + 1], xtol=XTOL, rtol=4 * np.finfo(float).eps)))
    edges = [lo] + bounds + [hi]
    pieces = [[edges[k], edges[k + 1]] for k in range(len(edges) - 1)
              if pair.h(0.5 * (edges[k] + edges[k + 1])) > 0]
    merged = []
    for p in pieces:
        if merged and merged[-1][1] == p[0]:
            merged[-1][1] = p[1]
        else:
            merged.append(list(p))
    # A tangency (h touching 0 without a sign change) would be a local extremum of h
    # on the grid with |h| near 0: record the smallest |h| at interior grid extrema.
    inner = hs[1:-1]
    extremum = ((inner - hs[:-2]) * (hs[2:] - inner)) <= 0
    at_extrema = np.abs(inner[extremum])
    return bounds, merged, float(at_extrema.min()) if at_extrema.size else None, hs


def refit_check(model):
    """Compare the refit with the one recorded by mixed_covariates.py."""
    with open(os.path.join(HERE, "mixed_covariates.json"), encoding="utf-8") as fh:
        rec = json.load(fh)["cases"]["beans_split"]["equal_slopes"]["fit"]
    beta, phia = np.array(rec["beta"]), np.array(rec["phi_adjusted"])
    return {
        "source": "tests/reference/mixed_covariates.json cases.beans_split.equal_slopes.fit",
        "max_abs_diff_beta": float(np.max(np.abs(beta - model.pr["beta"]))),
        "max_abs_diff_phi_adjusted": float(np.max(np.abs(phia - model.PhiA))),
    }


def main():
    model, levels, mean, lo, hi = fit_refit()
    cells = cell_rows(levels)
    t_crit_note = "t_{1-alpha/2, df(x)} with df(x) the one-row Kenward-Roger df of l(x)"
    out = {
        "generator": "tests/reference/mixed_regions.py",
        "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "pandas": pd.__version__},
        "data": "tests/data/invented/beans-split.csv",
        "model": {"fixed": "yield ~ irrigation * coating + stand + irrigation:stand + coating:stand "
                           "+ irrigation:coating:stand", "covariate": "stand",
                  "random": ["block", "block:irrigation"], "method": "REML, Kenward-Roger"},
        "alpha": ALPHA,
        "range": {"min": lo, "max": hi, "mean": mean},
        "cells": [c[0] for c in cells],
        "rule": "pair differs at x when |D(x)|/SE(x) > " + t_crit_note + "; D = line b - line a, "
                "SE = sqrt(l Phi_A l')",
        "search": {"grid_points": GRID_POINTS, "root_finder": "scipy.optimize.brentq", "xtol": XTOL},
        "refit_check": refit_check(model),
        "variance_components": {n: float(v) for n, v in
                                zip(["block", "block:irrigation", "residual"], model.theta)},
        "pairs": [],
        "spot_checks": [],
    }
    by_label = {c[0]: c for c in cells}
    pairs_inside = 0
    h_at_bounds = []
    for i, a in enumerate(cells):
        for b in cells[i + 1:]:
            pair = Pair(model, mean, a, b)
            bounds, sig, min_h, _ = regions(pair, lo, hi)
            pairs_inside += bool(bounds)
            h_at_bounds += [abs(pair.h(x)) for x in bounds]
            out["pairs"].append({"a": pair.a, "b": pair.b, "boundaries": bounds, "significant": sig,
                                 "min_abs_h_at_grid_extrema": min_h})
            print("%-14s %-14s boundaries %-40s significant %s" % (
                pair.a, pair.b, ["%.6f" % v for v in bounds], [["%.4f" % v for v in p] for p in sig]))
    for a, b in SPOT_PAIRS:
        pair = Pair(model, mean, by_label[a], by_label[b])
        at = {}
        for name, x in (("min", lo), ("mean", mean), ("max", hi)):
            d, se, df = pair.parts(x)
            # Same quantities through mixed_covariates.estimate (independent code path for D, SE).
            e = estimate(model, pair.row(x), "kenward_roger")
            assert abs(e["estimate"] - d) <= 1e-9 * max(1.0, abs(d)) and abs(e["se"] - se) <= 1e-12 * se
            at[name] = {"x": x, "D": d, "SE": se, "df": df,
                        "t_crit": float(stats.t.ppf(1 - ALPHA / 2, df)), "differs": bool(abs(d) / se > stats.t.ppf(1 - ALPHA / 2, df))}
        out["spot_checks"].append({"a": a, "b": b, "at": at})
    out["pairs_with_boundaries"] = pairs_inside
    out["max_abs_h_at_boundaries"] = float(max(h_at_bounds))
    print("pairs with boundaries inside the range: %d of %d" % (pairs_inside, len(out["pairs"])))
    print("refit check", out["refit_check"])
    with open(os.path.join(HERE, "mixed_regions.json"), "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1, ensure_ascii=False)
        fh.write("\n")


if __name__ == "__main__":
    main()
