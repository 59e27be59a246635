#!/usr/bin/env python3
"""Writes tests/reference/ptukey_mpmath.json: the studentized range cdf at a
few points, by mpmath at 20 digits, as an independent check tighter than
scipy (whose quadrature leaves errors up to about 5e-11 on sheaf's grid).

    P(Q <= q; k, nu) = int_0^inf g(s) P_R(q s; k) ds,
    P_R(w; k) = k int_-inf^inf phi(x) [Phi(x + w) - Phi(x)]^(k - 1) dx,

with g the density of s = sqrt(chi2_nu / nu). This is the textbook form
over the whole line (not the split sheaf integrates), each integral by
mpmath's tanh-sinh quadrature on intervals broken where the integrand
turns. Several minutes per point, two at a time; run from the repository root with any
Python that has mpmath:

    python3 tests/reference/ptukey_mpmath.py
"""

import json
import multiprocessing
import pathlib

import mpmath as mp

mp.mp.dps = 20
OUT = pathlib.Path(__file__).resolve().parent / "ptukey_mpmath.json"

# (q, k, nu): small and large k, small and large nu, centre and both tails.
POINTS = [
    (2.5, 2, 10.0),  # k = 2: also the exact t identity
    (3.5, 3, 5.0),
    (2.0, 5, 2.0),
    (8.0, 5, 50000.0),
    (1.5, 10, 30.0),
    (4.0, 10, 20.0),
    (5.0, 20, 60.0),
    (4.5, 50, 120.0),
    (6.0, 100, 3.0),
    (5.5, 100, 1000.0),
]


def range_cdf(w, k):
    f = lambda x: mp.npdf(x) * (mp.ncdf(x + w) - mp.ncdf(x)) ** (k - 1)
    return k * mp.quad(f, [-mp.inf, -w / 2 - 3, -w / 2, -w / 2 + 3, mp.inf])


def ptukey_cdf(q, k, nu):
    c = mp.log(2) + (nu / 2) * mp.log(nu / 2) - mp.loggamma(nu / 2)
    g = lambda s: mp.exp(c + (nu - 1) * mp.log(s) - nu * s * s / 2)
    sd = 1 / mp.sqrt(2 * nu)
    breaks = [mp.mpf(0)] + [1 + j * sd for j in range(-8, 9, 2) if 1 + j * sd > 0] + [mp.inf]
    return mp.quad(lambda s: g(s) * range_cdf(q * s, k), breaks)


def point(qkn):
    q, k, nu = qkn
    cdf = ptukey_cdf(mp.mpf(q), k, mp.mpf(nu))
    print(q, k, nu, mp.nstr(cdf, 17), flush=True)
    return {"q": q, "k": k, "df": nu, "cdf": float(cdf)}


def main():
    with multiprocessing.Pool(2) as pool:
        rows = pool.map(point, POINTS, chunksize=1)
    fixture = {"generator": "tests/reference/ptukey_mpmath.py", "mpmath": mp.__version__,
               "digits": mp.mp.dps, "ptukey_cdf": rows}
    OUT.write_text(json.dumps(fixture, indent=1) + "\n")
    print("wrote", OUT)


if __name__ == "__main__":
    main()
