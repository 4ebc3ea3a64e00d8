//! Real root finding: bracketing scans and Brent's method.
//!
//! Brent's method (Brent, Algorithms for Minimization without Derivatives,
//! 1973, ch. 4): inverse quadratic interpolation or secant steps, falling back
//! to bisection whenever they would leave the bracket or shrink it too slowly.
//! It never loses the bracket, so a sign change always gives a root.

use crate::ReferenceError;

/// Finds a root of `f` in `[a, b]`, where `f(a)` and `f(b)` have opposite
/// signs (a zero at an end point is returned as is), to an absolute tolerance
/// of about `4 eps |x| + tol`.
pub fn brent<F>(mut f: F, a: f64, b: f64, tol: f64) -> Result<f64, ReferenceError>
where
    F: FnMut(f64) -> Result<f64, ReferenceError>,
{
    let (mut a, mut b) = (a, b);
    let (mut fa, mut fb) = (f(a)?, f(b)?);
    if fa == 0.0 {
        return Ok(a);
    }
    if fb == 0.0 {
        return Ok(b);
    }
    if fa.signum() == fb.signum() {
        return Err(ReferenceError::InvalidParameter {
            name: "bracket",
            value: a,
            reason: "f has the same sign at both ends",
        });
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    const MAX_ITER: usize = 200;
    for _ in 0..MAX_ITER {
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
        let tol1 = 4.0 * f64::EPSILON * b.abs() + 0.5 * tol;
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            return Ok(b);
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            let min1 = 3.0 * xm * q - (tol1 * q).abs();
            let min2 = (e * q).abs();
            if 2.0 * p < min1.min(min2) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = f(b)?;
    }
    Err(ReferenceError::NoConvergence {
        what: "Brent root search",
        iterations: MAX_ITER,
        last_step: d,
    })
}

/// All roots of `f` on `[start, end]` found by sampling with step `step`
/// and refining every sign change with [`brent`]. Roots closer together than
/// `step` (or of even multiplicity) are missed: choose `step` from the known
/// root spacing.
pub fn roots_by_scan<F>(
    mut f: F,
    start: f64,
    end: f64,
    step: f64,
) -> Result<Vec<f64>, ReferenceError>
where
    F: FnMut(f64) -> Result<f64, ReferenceError>,
{
    let mut roots = Vec::new();
    let count = ((end - start) / step).ceil().max(1.0) as usize;
    let h = (end - start) / count as f64;
    let mut x0 = start;
    let mut f0 = f(x0)?;
    for i in 1..=count {
        let x1 = if i == count {
            end
        } else {
            start + i as f64 * h
        };
        let f1 = f(x1)?;
        if f0 == 0.0 {
            roots.push(x0);
        } else if f0.signum() != f1.signum() && f1 != 0.0 {
            roots.push(brent(&mut f, x0, x1, 0.0)?);
        }
        x0 = x1;
        f0 = f1;
    }
    if f0 == 0.0 {
        roots.push(x0);
    }
    Ok(roots)
}
