#!/usr/bin/env python3
"""Writes tests/reference/ptukey_tail_mpmath.json: the studentized range
upper tail P(Q > q; k, nu) far out (p from about 4e-5 down to 1.5e-295), by
mpmath at 30 digits, as the reference for sheaf's directly computed tail.

    P(Q > q; k, nu) = int g_t(t) S_R(q e^t; k) dt      (s = e^t)
    S_R(w; k) = P(range of k normals > w)
              = k int phi(x) [Phibar(x)^m - (Phibar(x) - Phibar(x + w))^m] dx,

with m = k - 1, g_t the density of t = ln s for s = sqrt(chi2_nu / nu),
x the smallest of the k normals. The bracket a^m - b^m is taken as
a^m (1 - (b/a)^m) with mpmath's log1p and expm1, so that no digit cancels
when the tail is tiny. Each integral is a fixed 24-point Gauss-Legendre rule
(nodes from mpmath at 30 digits) on panels of fixed width around the peak of
its integrand, scaled to one there; the outer peak is found by a
golden-section search on the logarithm of the integrand (not by anything
sheaf computes). With two means the result must match the t identity
P(Q > q; 2, nu) = I_{nu/(nu+q^2/2)}(nu/2, 1/2) to 1e-15, which checks the
panels and rules of both integrals.
The infinite-df points use S_R(q) alone.

About a minute per point on one idle core; run niced from the repository root
with any Python that has mpmath:

    nice -n 19 python3 tests/reference/ptukey_tail_mpmath.py
"""

import json
import pathlib
import sys

import mpmath as mp

DIGITS = 30
RULES = {}
OUT = pathlib.Path(__file__).resolve().parent / "ptukey_tail_mpmath.json"

# (q, k, nu): the far tail at moderate and large df, small and large k,
# fractional df, and p from about 4e-5 to about 1.5e-295.
POINTS = [
    (9.0, 6, 20.0),
    (12.5, 8, 24.0),
    (20.0, 2, 30.0),
    (30.0, 100, 120.0),
    (1e40, 10, 7.5),
]


def panels(f, pts, n):
    """Sum of n-point Gauss-Legendre rules over consecutive finite intervals."""
    x, wt = RULES[n]
    total = mp.mpf(0)
    for a, b in zip(pts, pts[1:]):
        h, c = (b - a) / 2, (a + b) / 2
        total += h * mp.fsum(wi * f(c + h * xi) for xi, wi in zip(x, wt))
    return total


def range_sf(w, k, n):
    """P(R > w) for the range R of k standard normals."""
    m = k - 1

    def f(x):
        a = mp.ncdf(-x)
        r = mp.ncdf(-(x + w)) / a
        return mp.npdf(x) * a**m * -mp.expm1(m * mp.log1p(-r))

    # Scaled to order one near its peak x = -w/2, where it is about
    # exp(-w^2/4) / (1 + w); the panels reach 8 beyond it on each side,
    # where it has fallen below 1e-27 of that.
    scale = mp.exp(w * w / 4) * (1 + w)
    centre = -w / 2
    pts = [centre + j for j in range(-8, 9, 2)]
    return k * panels(lambda x: scale * f(x), pts, n) / scale


def log_chi_scale_density(nu):
    """ln of the density of t = ln s, s = sqrt(chi2_nu / nu)."""
    c = mp.log(2) + (nu / 2) * mp.log(nu / 2) - mp.loggamma(nu / 2)
    return lambda t: c + nu * t - nu * mp.exp(2 * t) / 2


def peak(h, lo, hi):
    """Golden-section search for the maximum of a unimodal h on [lo, hi]."""
    g = (mp.sqrt(5) - 1) / 2
    a, b = lo, hi
    c, d = b - g * (b - a), a + g * (b - a)
    hc, hd = h(c), h(d)
    for _ in range(40):
        if hc > hd:
            b, d, hd = d, c, hc
            c = b - g * (b - a)
            hc = h(c)
        else:
            a, c, hc = c, d, hd
            d = a + g * (b - a)
            hd = h(d)
    return (a + b) / 2


def tukey_sf(q, k, nu, n):
    """P(Q > q; k, nu) with n-point rules on every panel."""
    if mp.isinf(nu):
        return range_sf(q, k, n)
    log_g = log_chi_scale_density(nu)
    with mp.workdps(15):
        log_integrand = lambda t: log_g(t) + mp.log(range_sf(q * mp.exp(t), k, 12))
        top = peak(log_integrand, mp.log(mp.mpf("0.01") / q), mp.mpf(1))
        height = log_integrand(top)
    # Width of the peak in t: the log density curves by 2 nu e^2t, the range
    # tail by about w^2 there.
    sigma = 1 / mp.sqrt(2 * nu * mp.exp(2 * top) + (q * mp.exp(top)) ** 2)
    sigma = min(sigma, mp.mpf("0.5"))
    pts = [top + j * sigma for j in range(-9, 10, 3)]
    # Left of the peak the log integrand falls at least at rate nu: out to
    # a fall of 80 in geometrically growing steps.
    left = [pts[0] - (80 / nu) * mp.mpf(4) ** -j for j in range(3)]
    integrand = lambda t: mp.exp(log_g(t) - height) * range_sf(q * mp.exp(t), k, n)
    return panels(integrand, left + pts, n) * mp.exp(height)


def main():
    mp.mp.dps = DIGITS
    for n in (12, 24):
        RULES[n] = mp.gauss_quadrature(n, "legendre")
    rows = []
    for q, k, nu in POINTS:
        sf = tukey_sf(mp.mpf(q), k, mp.mpf(nu), 24)
        print(q, k, nu, mp.nstr(sf, 20), flush=True)
        rows.append({"q": q, "k": k, "df": nu if nu != float("inf") else "inf",
                     "sf": mp.nstr(sf, 20)})
        if k == 2 and not mp.isinf(nu):
            # Check the script itself: with two means Q = sqrt(2) |T|.
            t = mp.mpf(q) / mp.sqrt(2)
            x = nu / (nu + t * t)
            exact = mp.betainc(nu / 2, mp.mpf(1) / 2, 0, x, regularized=True)
            print("  t identity:", mp.nstr(exact, 20), file=sys.stderr)
            assert abs(sf / exact - 1) < mp.mpf(10) ** (-15)
    fixture = {"generator": "tests/reference/ptukey_tail_mpmath.py", "mpmath": mp.__version__,
               "digits": DIGITS, "ptukey_sf": rows}
    OUT.write_text(json.dumps(fixture, indent=1) + "\n")
    print("wrote", OUT)


if __name__ == "__main__":
    main()
