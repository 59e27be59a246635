#!/usr/bin/env python3
"""Writes tests/reference/studentized_range_tail.json: the studentized range
upper tail P(Q > q; k, nu) at p from about 1e-6 down to 3e-16, by
mpmath (version written into the json; 1.4.1 when last run), as the
reference for sheaf's far-tail p-values.

Points: k = 2, 3, 4, 6, 10 means at nu = 45 and infinite error df, k = 4
and 10 also at nu = 5, 10 and 100 (see `wanted`), each with q chosen so
that p is near 1e-6, 1e-9, 1e-12 and 1e-15 (q from the
Bonferroni bound q = sqrt(2) t_isf(p / (k (k - 1)), nu), rounded to four
decimals; the exact p of each point is what the json holds). One more point
is the oats split-plot nitrogen pair 0.0cwt v 0.6cwt (tests/mixed_reports.rs):
difference of means 44, residual mean square 2125/12 on 45 df, 18 plots per
mean, so q = 44 sqrt(2) / sqrt(2 (2125/12) / 18) = 44 sqrt(432/4250),
k = 4, nu = 45.

    P(Q > q; k, nu) = int g(t) S_R(q e^t; k) dt         (s = e^t)
    S_R(w; k) = P(range of k normals > w)
              = k int phi(x) Phibar(x)^m (1 - (1 - r)^m) dx,
    r = Phibar(x + w) / Phibar(x),  m = k - 1,

with g the density of t = ln s for s = sqrt(chi2_nu / nu) and x the smallest
of the k normals; 1 - (1 - r)^m is -expm1(m log1p(-r)), so no digit cancels
however small the tail. Both integrals are taken outward from the peak of
their integrand (found by a scan, then golden section, in mpmath) on panels
of Gauss-Legendre rules from mpmath, until the integrand is exp(-DROP) below
its peak.

Settings (COARSE, FINE below): every point at 30 digits with 16-point rules
on panels 1.5 wide in x and twice the peak's width in t, out to DROP = 60;
the oats point, every point with p near 1e-12 and every point at nu = 5
again at 40 digits with 24-point rules and DROP = 85, where
the json keeps the second value and the relative difference between the two.
Three further checks, also written to the json:
  * k = 2: the exact identity P(Q > q; 2, nu) = 2 P(T_nu > q / sqrt 2)
    (mpmath betainc; erfc for nu infinite);
  * a structurally different form at 50 digits at three points (the oats
    pair and two more): the textbook S_R = 1 - k int phi(x) (Phi(x + w) -
    Phi(x))^m dx over the whole line by mpmath.quad (tanh-sinh) on intervals
    split at the integrand's turns, the 1 - P_R cancellation paid for with
    digits; the outer integral on 20-point panels as above;
  * p = 0.05 and 0.01 critical values from Harter's (1960) table (from
    memory, three decimals): P(Q > q_table -+ 0.0005) must bracket alpha.
scipy.stats.studentized_range.sf at each point is written beside the
reference for comparison only (scipy takes it as 1 - cdf, with its cdf
integrated to 1e-11 absolute); it is not a reference.

Run niced from the repository root (about 40 minutes on two busy cores;
--jobs N worker processes; --resume LOG skips the points whose rows an
earlier, interrupted run printed to LOG):

    nice -n 19 python3 tests/reference/studentized_range_tail.py --jobs 2
"""

import argparse
import json
import math
import multiprocessing
import pathlib
import sys

import mpmath as mp

OUT = pathlib.Path(__file__).resolve().parent / "studentized_range_tail.json"

KS = [2, 3, 4, 6, 10]
DFS = [5.0, 10.0, 45.0, 100.0, math.inf]
TARGETS = [1e-6, 1e-9, 1e-12, 1e-15]
OATS = ("oats nitrogen 0.0cwt v 0.6cwt", "44*sqrt(432/4250)", 4, 45.0)

# (digits, nodes per panel, panel width factor, DROP)
COARSE = (30, 16, 1.0, 60)
FINE = (40, 24, 1.0, 85)

RULES = {}


def rule(n):
    """n-point Gauss-Legendre nodes and weights on [-1, 1] at the current precision."""
    key = (n, mp.mp.dps)
    if key not in RULES:
        RULES[key] = mp.gauss_quadrature(n, "legendre")
    return RULES[key]


def panel(f, a, b, n):
    x, wt = rule(n)
    h, c = (b - a) / 2, (a + b) / 2
    return h * mp.fsum(wi * f(c + h * xi) for xi, wi in zip(x, wt))


def golden_max(h, a, b, steps=60):
    """The maximum of a unimodal h on [a, b] by golden-section search."""
    g = (mp.sqrt(5) - 1) / 2
    c, d = b - g * (b - a), a + g * (b - a)
    hc, hd = h(c), h(d)
    for _ in range(steps):
        if hc > hd:
            b, d, hd = d, c, hc
            c = b - g * (b - a)
            hc = h(c)
        else:
            a, c, hc = c, d, hd
            d = a + g * (b - a)
            hd = h(d)
    return (a + b) / 2


def bump_integral(log_f, top, width, n, drop):
    """int exp(log_f) over the line for a unimodal integrand peaking at top:
    panels outward on both sides, widened (x1.5) while a panel spans a fall
    under 2, until the integrand is exp(-drop) below the peak. Returned as
    (log of the peak, integral of exp(log_f - peak))."""
    height = log_f(top)
    f = lambda x: mp.exp(log_f(x) - height)
    total = mp.mpf(0)
    for direction in (1, -1):
        edge, step = top, width
        for _ in range(400):
            nxt = edge + direction * step
            total += direction * panel(f, edge, nxt, n)
            fall_before = height - log_f(edge)
            fall = height - log_f(nxt)
            if fall > drop:
                break
            if fall - fall_before < 2:
                step *= mp.mpf("1.5")
            edge = nxt
        else:
            raise RuntimeError("bump did not fall off")
    return height, total


def log_range_integrand(x, w, m):
    root2 = mp.sqrt(2)
    upper = mp.erfc(x / root2) / 2
    r = mp.erfc((x + w) / root2) / 2 / upper
    bracket = -mp.expm1(m * mp.log1p(-r))
    return -x * x / 2 - mp.log(2 * mp.pi) / 2 + m * mp.log(upper) + mp.log(bracket)


def log_range_sf(w, k, n, factor, drop):
    """ln P(R > w), R the range of k standard normals."""
    m = k - 1
    lf = lambda x: log_range_integrand(x, w, m)
    # The peak is near -w/2 for a wide range, near the expected minimum of
    # k normals (within [-1.6, 0] for k <= 10) for a narrow one: scan, then refine.
    centre = -w / 2
    with mp.workdps(15):
        grid = [centre + j for j in range(-8, 9)] + [mp.mpf(j) / 2 for j in range(-4, 1)]
        best = max(grid, key=lf)
        top = golden_max(lf, best - 1, best + 1, steps=25)
    height, total = bump_integral(lf, top, factor * mp.mpf("1.5"), n, drop)
    return mp.log(k) + height + mp.log(total)


def log_chi_scale_density(nu):
    c = mp.log(2) + (nu / 2) * mp.log(nu / 2) - mp.loggamma(nu / 2)
    return lambda t: c + nu * t - nu * mp.exp(2 * t) / 2


def tail(q, k, nu, settings):
    """P(Q > q; k, nu) at the given (digits, nodes, width factor, drop)."""
    digits, n, factor, drop = settings
    with mp.workdps(digits):
        q = mp.mpf(q)
        if nu == math.inf:
            return +mp.exp(log_range_sf(q, k, n, factor, drop))
        nu = mp.mpf(nu)
        log_g = log_chi_scale_density(nu)
        lf = lambda t: log_g(t) + log_range_sf(q * mp.exp(t), k, n, factor, drop)
        with mp.workdps(20):
            # The peak lies left of the density's mode t = 0 (ln S_R falls in t).
            lo, hi = mp.log(mp.mpf("0.05") / q) - 2, mp.mpf("0.5")
            grid = [lo + (hi - lo) * j / 40 for j in range(41)]
            cheap = lambda t: log_g(t) + log_range_sf(q * mp.exp(t), k, 12, 1, 40)
            best = max(grid, key=cheap)
            span = (hi - lo) / 40
            top = golden_max(cheap, best - span, best + span, steps=30)
        # Width of the peak: ln g curves by 2 nu e^2t, ln S_R by about (q e^t)^2.
        e2 = mp.exp(2 * top)
        sigma = min(1 / mp.sqrt(2 * nu * e2 + q * q * e2), mp.mpf("0.5"))
        height, total = bump_integral(lf, top, factor * 2 * sigma, n, drop)
        return +mp.exp(height + mp.log(total))


def t_identity(q, nu):
    """P(Q > q; 2, nu) = 2 P(T > q / sqrt 2), at 40 digits."""
    with mp.workdps(40):
        t = mp.mpf(q) / mp.sqrt(2)
        if nu == math.inf:
            return +mp.erfc(t / mp.sqrt(2))
        nu = mp.mpf(nu)
        return +mp.betainc(nu / 2, mp.mpf(1) / 2, 0, nu / (nu + t * t), regularized=True)


def textbook_tail(q, k, nu):
    """P(Q > q) with the textbook range tail S_R = 1 - P_R at 50 digits,
    P_R(w) = k int phi(x) (Phi(x + w) - Phi(x))^m dx over the whole line by
    mpmath.quad (tanh-sinh) split at the integrand's turns; the outer
    integral on 20-point panels as in `tail`, out to a fall of 50 (the
    cancellation in 1 - P_R leaves no digits further out)."""
    with mp.workdps(50):
        q, m = mp.mpf(q), k - 1

        def textbook_log_sf(w):
            f = lambda x: mp.npdf(x) * (mp.ncdf(x + w) - mp.ncdf(x)) ** m
            c = -w / 2
            cuts = sorted({c - 6, c - 3, c, c + 3, mp.mpf(-3), mp.mpf(-1), mp.mpf(0), mp.mpf(2)})
            sf = 1 - k * mp.quad(f, [-mp.inf] + cuts + [mp.inf])
            return mp.log(max(sf, mp.mpf(10) ** -60))

        if nu == math.inf:
            return +mp.exp(textbook_log_sf(q))
        nu = mp.mpf(nu)
        log_g = log_chi_scale_density(nu)
        lf = lambda t: log_g(t) + textbook_log_sf(q * mp.exp(t))
        with mp.workdps(20):
            lo, hi = mp.log(mp.mpf("0.05") / q) - 2, mp.mpf("0.5")
            grid = [lo + (hi - lo) * j / 40 for j in range(41)]
            top = max(grid, key=lambda t: log_g(t) + log_range_sf(q * mp.exp(t), k, 12, 1, 40))
            e2 = mp.exp(2 * top)
            sigma = min(1 / mp.sqrt(2 * nu * e2 + q * q * e2), mp.mpf("0.5"))
        height, total = bump_integral(lf, top, 2 * sigma, 20, 50)
        return +mp.exp(height + mp.log(total))


def scipy_sf(q, k, nu):
    try:
        from scipy.stats import studentized_range
    except ImportError:
        return None
    return float(studentized_range.sf(q, k, nu if nu != math.inf else 1e300))


def point_q(p, k, nu):
    from scipy.stats import norm, t

    tail_each = p / (k * (k - 1))
    z = norm.isf(tail_each) if nu == math.inf else t.isf(tail_each, nu)
    return round(math.sqrt(2) * z, 4)


def wanted(k, nu):
    """The grid: every k at nu = 45 (the oats df) and nu infinite; k = 4 and
    10 at every nu."""
    return nu in (45.0, math.inf) or k in (4, 10)


def compute(row):
    mp.mp.dps = 50  # so that the relative differences below are not rounded away
    q, k, nu = row["q"], row["k"], row["nu"]
    out = dict(row)
    out["df"] = "inf" if nu == math.inf else nu
    del out["nu"], out["fine"]
    done = row.get("previous")
    if done:
        return done
    del out["previous"]
    best = coarse = tail(q, k, nu, COARSE)
    if row["fine"]:
        best = tail(q, k, nu, FINE)
        out["settings_rel_diff"] = float(abs(coarse / best - 1))
    out["sf"] = mp.nstr(best, 20)
    fine = best
    if k == 2:
        exact = t_identity(q, nu)
        out["t_identity"] = mp.nstr(exact, 20)
        out["t_identity_rel_diff"] = float(abs(fine / exact - 1))
    if row.get("textbook"):
        other = textbook_tail(q, k, nu)
        out["textbook_sf"] = mp.nstr(other, 20)
        out["textbook_rel_diff"] = float(abs(fine / other - 1))
    del out["textbook"]
    out["scipy_sf"] = scipy_sf(float(q), k, nu)
    print(json.dumps(out), flush=True)
    return out


def table_check():
    """Harter (1960) q(0.95) and q(0.99), from memory, three decimals: the
    alpha that P(Q > q_table +- 0.0005) brackets must contain 0.05 / 0.01."""
    rows = []
    for alpha, k, nu, qt in [(0.05, 3, 10.0, 3.877), (0.05, 4, 20.0, 3.958),
                             (0.05, 10, 60.0, 4.646), (0.05, 3, math.inf, 3.314),
                             (0.01, 4, 20.0, 5.018), (0.01, 2, 10.0, 4.482)]:
        hi = tail(mp.mpf(qt) - mp.mpf("0.0005"), k, nu, COARSE)
        lo = tail(mp.mpf(qt) + mp.mpf("0.0005"), k, nu, COARSE)
        ok = lo <= alpha <= hi
        rows.append({"alpha": alpha, "k": k, "df": "inf" if nu == math.inf else nu,
                     "q_table": qt, "sf_at_q_minus": float(hi), "sf_at_q_plus": float(lo),
                     "brackets_alpha": bool(ok)})
        print(rows[-1], flush=True)
        assert ok, rows[-1]
    return rows


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--jobs", type=int, default=1)
    ap.add_argument("--resume", help="output of an earlier run of this script "
                    "(its printed rows): points found there are not recomputed")
    args = ap.parse_args()
    mp.mp.dps = 50  # the working precision between calls, as in `compute`'s workers
    previous = {}
    if args.resume:
        for line in pathlib.Path(args.resume).read_text().splitlines():
            if line.startswith("{\""):
                r = json.loads(line)
                previous[(r["q"], r["k"], str(r["df"]))] = r
    with mp.workdps(40):
        oats_q = 44 * mp.sqrt(mp.mpf(432) / 4250)
    points = [{"label": OATS[0], "q_expr": OATS[1], "q": float(oats_q), "k": OATS[2], "nu": OATS[3],
               "textbook": True, "fine": True}]
    for nu in DFS:
        for k in KS:
            if not wanted(k, nu):
                continue
            for p in TARGETS:
                # The structurally different form, slow, on a few points.
                textbook = (k, nu, p) in {(10, 5.0, 1e-12), (6, math.inf, 1e-9)}
                fine = p == 1e-12 or nu == 5.0
                points.append({"label": f"p near {p:g}", "q": float(point_q(p, k, nu)), "k": k,
                               "nu": nu, "textbook": textbook, "fine": fine})
    for r in points:
        r["previous"] = previous.get((r["q"], r["k"], "inf" if r["nu"] == math.inf else str(r["nu"])))
    if args.jobs > 1:
        with multiprocessing.Pool(args.jobs) as pool:
            rows = pool.map(compute, points, chunksize=1)
    else:
        rows = [compute(r) for r in points]
    tables = table_check()
    worst = max(r["settings_rel_diff"] for r in rows if "settings_rel_diff" in r)
    worst_t = max((r["t_identity_rel_diff"] for r in rows if "t_identity_rel_diff" in r), default=0)
    worst_b = max((r["textbook_rel_diff"] for r in rows if "textbook_rel_diff" in r), default=0)
    print(f"settings {worst:.1e}, t identity {worst_t:.1e}, textbook {worst_b:.1e}", file=sys.stderr)
    assert worst < 1e-16 and worst_t < 1e-16 and worst_b < 1e-16
    fixture = {"generator": "tests/reference/studentized_range_tail.py",
               "mpmath": mp.__version__,
               "settings": {"coarse": COARSE, "fine": FINE,
                            "fields": "(digits, Gauss-Legendre nodes per panel, panel width factor, DROP)"},
               "worst_settings_rel_diff": worst, "worst_t_identity_rel_diff": worst_t,
               "worst_textbook_rel_diff": worst_b, "harter_table": tables,
               "points": rows}
    OUT.write_text(json.dumps(fixture, indent=1) + "\n")
    print("wrote", OUT)


if __name__ == "__main__":
    main()
