"""Reference values for Williams' test (src/stats/williams.rs and
src/stats/williams_grid.rs), computed independently of the Rust code.

1. Spitzer's running-maximum probability
       P_k(y) = P(max_{m<=k} (W_1 + ... + W_m)/m <= y),  W iid N(0, 1),
   by its recursion P_0 = 1, P_m = (1/m) sum_{j=1..m} Phi(y sqrt(j)) P_{m-j}
   (Spitzer 1956, Trans. AMS 82:323-339) in mpmath at 40 digits.
2. The same kind of probability for unequal dose replication by the direct
   forward formulation of linear-extensions.md E.1: the sub-probability
   density of the partial sums sum_{j>=u} r_j (Ybar_j - x), Ybar_j ~ N(0, 1/r_j),
   on a uniform grid ending at 0 (trapezoid weights, scipy FFT convolution),
   as the specification's `runmax_grid`, except that the grid reaches down
   14 standard deviations *plus the drift* sum r_j x (with a fixed 14 SD the
   mass that drifts below the grid is lost, which at x around 2.5 costs
   about 1e-7); its O(h^2) error is removed by
   Richardson extrapolation from h and h/2 (the difference between the two
   extrapolations from (h, h/2) and (h/2, h/4) is printed as its error).
3. Williams' null cdf with a known variance (nu = infinity) for an unequally
   replicated design, P(tbar_3 <= t) = E_Z[grid(Z/sqrt(c) + t sqrt(1/r_3 + 1/c))]
   with c = 5, r = (4, 4, 3): Z by 16-node Gauss-Legendre panels (numpy) over
   [-8.5, 8.5], the grid probability as in 2.

    /tmp/venv-ref/bin/python tests/reference/williams_reference.py
"""
import json
import math
import pathlib

import mpmath
import numpy as np
import scipy
from numpy.polynomial.legendre import leggauss
from scipy import stats
from scipy.signal import fftconvolve

HERE = pathlib.Path(__file__).resolve().parent
mpmath.mp.dps = 40


def spitzer(y, k):
    y = mpmath.mpf(y)
    phi = [None] + [mpmath.ncdf(y * mpmath.sqrt(j)) for j in range(1, k + 1)]
    p = [mpmath.mpf(1)]
    for m in range(1, k + 1):
        p.append(sum(phi[j] * p[m - j] for j in range(1, m + 1)) / m)
    return p[k]


def runmax_grid(x, r, h, reach=14.0):
    """P(for all u: sum_{j>=u} r_j (Ybar_j - x) <= 0), lowest dose first in r."""
    r = np.asarray(r, float)[::-1]
    h = h * math.sqrt(r.min())
    npts = int((reach * math.sqrt(r.sum()) + r.sum() * max(x, 0.0)) / h) + 1
    grid = -h * np.arange(npts)[::-1]
    wt = np.full(npts, h)
    wt[0] = wt[-1] = h / 2
    dens = None
    for rj in r:
        mu, sd = -rj * x, math.sqrt(rj)
        if dens is None:
            dens = stats.norm.pdf(grid, mu, sd)
        else:
            kern = stats.norm.pdf(np.arange(-npts + 1, npts) * h, mu, sd)
            dens = fftconvolve(dens * wt, kern)[npts - 1:2 * npts - 1]
    return float(np.sum(dens * wt))


def extrapolated(f, h):
    a, b, c = f(h), f(h / 2), f(h / 4)
    coarse, fine = (4 * b - a) / 3, (4 * c - b) / 3
    return fine, abs(fine - coarse)


def control_rule(panels=12, reach=8.5):
    x, w = leggauss(16)
    edges = np.linspace(-reach, reach, panels + 1)
    z = np.concatenate([(b - a) / 2 * x + (a + b) / 2 for a, b in zip(edges[:-1], edges[1:])])
    wz = np.concatenate([(b - a) / 2 * w for a, b in zip(edges[:-1], edges[1:])])
    return z, wz * stats.norm.pdf(z)


def williams_cdf_known_variance(t, c, r, h):
    z, wz = control_rule()
    a = math.sqrt(1 / r[-1] + 1 / c)
    return float(sum(w * runmax_grid(zi / math.sqrt(c) + t * a, r, h) for zi, w in zip(z, wz)))


def main():
    out = {"about": "Williams' test references; see williams_reference.py",
           "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "mpmath": mpmath.__version__}}
    out["spitzer"] = [{"doses": k, "y": y, "p": float(spitzer(y, k))}
                      for k, y in [(3, 0.7), (5, 0.2), (2, -0.5), (10, 1.5), (10, 0.0), (4, 2.5)]]
    grid = []
    for r, x in [((4, 4, 3), 0.5), ((2, 5, 3, 6), 0.1)]:
        value, err = extrapolated(lambda h: runmax_grid(x, r, h), 0.004)
        grid.append({"ns": list(r), "x": x, "p": value, "error": err})
    out["unequal_running_means"] = grid
    cdfs = []
    for t in (1.2, 1.75):
        value, err = extrapolated(lambda h: williams_cdf_known_variance(t, 5, (4, 4, 3), h), 0.004)
        cdfs.append({"control_n": 5, "ns": [4, 4, 3], "t": t, "cdf": value, "error": err})
    out["unequal_cdf_known_variance"] = cdfs
    (HERE / "williams.json").write_text(json.dumps(out, indent=1) + "\n")
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
