//! Bracketed root finding (Brent 1973, *Algorithms for Minimization without
//! Derivatives*, ch. 4): inverse quadratic interpolation with bisection as
//! the safeguard, so it never leaves the bracket.

/// Finds x in [a, b] with f(x) = 0, given f(a) and f(b) of opposite signs.
/// Stops when the bracket is narrower than `tol_abs + tol_rel·|x|`.
pub fn brent(mut f: impl FnMut(f64) -> f64, a: f64, b: f64, tol_abs: f64, tol_rel: f64) -> f64 {
    let (fa, fb) = (f(a), f(b));
    brent_known(f, (a, fa), (b, fb), tol_abs, tol_rel)
}

/// [`brent`] when f(a) and f(b) are already known (a caller that searched
/// for the bracket), saving two evaluations of an expensive f.
pub fn brent_known(
    mut f: impl FnMut(f64) -> f64,
    (a, fa): (f64, f64),
    (b, fb): (f64, f64),
    tol_abs: f64,
    tol_rel: f64,
) -> f64 {
    let (mut a, mut b) = (a, b);
    let (mut fa, mut fb) = (fa, fb);
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    if fa.signum() == fb.signum() {
        return f64::NAN;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..200 {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * (tol_abs + tol_rel * b.abs());
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return b;
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b);
    }
    b
}

#[cfg(test)]
#[path = "roots_tests.rs"]
mod tests;
