//! Resonances of a homogeneous dielectric sphere (Mie theory).
//!
//! Sphere of radius `a`, relative index `n = sqrt(eps)` (real or complex,
//! `mu = 1`) in a lossless host of index `n_out` (1 for vacuum). With the
//! time convention `exp(-i omega t)` the outside field is the outgoing
//! `h_l^(1)`; a resonance is a pole of the Mie coefficients, i.e. a complex
//! size parameter `x = n_out k0 a` where a denominator vanishes
//! (Bohren & Huffman, Absorption and Scattering of Light by Small Particles,
//! 1983, eq. 4.53, with relative index `m = n / n_out`):
//!
//! ```text
//! TE_l (magnetic type, b_l):  psi_l(mx) xi_l'(x) - m psi_l'(mx) xi_l(x) = 0
//! TM_l (electric type, a_l):  m psi_l(mx) xi_l'(x) - psi_l'(mx) xi_l(x) = 0
//! ```
//!
//! `psi_l(z) = z j_l(z)`, `xi_l(z) = z h_l^(1)(z)`. Radiating modes have
//! `Im k0 < 0`; `Q = Re k0 / (2 |Im k0|)`. Each resonance is `2l + 1`-fold
//! degenerate (azimuthal number `-l..=l`).
//!
//! **Radial order `p`.** For fixed `(l, polarisation)` the resonances are
//! counted by increasing `Re k0 a` inside the strip
//! `0.05 <= Re x`, `-(2 w + 1/2) <= Im x <= 1/2`, `w = ln((m+1)/(m-1)) / (2m)`
//! (the Fabry-Perot width scale, `m` real part of the relative index);
//! `p = 1` is the lowest, and `p - 1` is the number of radial nodes of the
//! interior field. Zeros are counted and isolated with the argument
//! principle, so no resonance in the strip is skipped; strongly damped
//! zeros below the strip are not counted.
//!
//! **Root finding.** In each box holding one zero, Newton's method on the
//! equivalent form
//! `f_TE = psi_l(mx) G(x) - m psi_l'(mx)`, `f_TM = m psi_l(mx) G(x) - psi_l'(mx)`,
//! `G = xi_l' / xi_l` (the product form divided by `xi_l(x)`, which keeps
//! the terms of order one), with the exact derivative from the Riccati-Bessel
//! equation `psi'' = (l(l+1)/z^2 - 1) psi` (same for `xi`), started from the
//! box centre. The asymptotic position of Lam, Leung & Young
//! ([`lam_leung_young_position`]) only sizes the search box.

use num_complex::Complex64;

use crate::bessel::SphericalBessel;
use crate::ReferenceError;

/// Which Mie coefficient has the pole.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SpherePolarization {
    /// Transverse electric, magnetic multipole, pole of `b_l`.
    Te,
    /// Transverse magnetic, electric multipole, pole of `a_l`.
    Tm,
}

/// A homogeneous sphere in a homogeneous lossless host.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MieSphere {
    index: Complex64,
    outer_index: f64,
}

impl MieSphere {
    /// Sphere of complex refractive index `index` (`n = sqrt(eps)`, `Im n >= 0`
    /// for a lossy sphere under `exp(-i omega t)`) in a host of real index
    /// `outer_index`. Needs `Re(index) > outer_index` (the starting formula is
    /// for internal reflection).
    pub fn try_new(index: Complex64, outer_index: f64) -> Result<Self, ReferenceError> {
        if !(outer_index.is_finite() && outer_index > 0.0) {
            return Err(ReferenceError::InvalidParameter {
                name: "outer_index",
                value: outer_index,
                reason: "must be positive and finite",
            });
        }
        if !(index.re.is_finite() && index.im.is_finite() && index.re > outer_index) {
            return Err(ReferenceError::InvalidParameter {
                name: "index",
                value: index.re,
                reason: "Re(index) must exceed outer_index",
            });
        }
        Ok(Self { index, outer_index })
    }

    /// Sphere of relative permittivity `eps` in vacuum (`n = sqrt(eps)`, principal root).
    pub fn try_from_permittivity(eps: Complex64) -> Result<Self, ReferenceError> {
        Self::try_new(eps.sqrt(), 1.0)
    }

    /// Refractive index of the sphere.
    pub fn index(&self) -> Complex64 {
        self.index
    }

    /// Refractive index of the host.
    pub fn outer_index(&self) -> f64 {
        self.outer_index
    }

    fn relative_index(&self) -> Complex64 {
        self.index / self.outer_index
    }
}

/// One Mie resonance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MieResonance {
    /// Angular number `l >= 1`.
    pub l: u32,
    /// Radial order `p >= 1` (module docs).
    pub p: u32,
    /// Polarisation.
    pub polarization: SpherePolarization,
    /// Complex `k0 a` (vacuum wavenumber times radius), `Im < 0` for radiating modes.
    pub k0a: Complex64,
    /// Quality factor `Re k0 / (2 |Im k0|)`.
    pub q: f64,
    /// Newton iterations used.
    pub iterations: usize,
}

/// `p`-th zero `a_p` of `Ai(-x)` (positive), `p >= 1`: the first ten from a
/// table (Abramowitz & Stegun, table 10.13, from memory; checked against
/// mpmath.airyaizero by the fixture test), beyond that the asymptotic
/// expansion `t^(2/3) (1 + 5/48 t^-2 - 5/36 t^-4)`, `t = 3 pi (4p - 1) / 8`
/// (A&S 10.4.94, DLMF 9.9.6), good to ~1e-9 at p = 11.
pub fn airy_ai_zero(p: u32) -> f64 {
    const TABLE: [f64; 10] = [
        2.338_107_410_459_767,
        4.087_949_444_130_971,
        5.520_559_828_095_551,
        6.786_708_090_071_759,
        7.944_133_587_120_853,
        9.022_650_853_340_98,
        10.040_174_341_558_086,
        11.008_524_303_733_262,
        11.936_015_563_236_262,
        12.828_776_752_865_757,
    ];
    match p {
        0 => f64::NAN,
        1..=10 => TABLE[(p - 1) as usize],
        _ => {
            let t = 3.0 * std::f64::consts::PI * (4.0 * f64::from(p) - 1.0) / 8.0;
            t.powf(2.0 / 3.0) * (1.0 + 5.0 / 48.0 / (t * t) - 5.0 / 36.0 / t.powi(4))
        }
    }
}

/// Asymptotic resonance position of Lam, Leung & Young, JOSA B 9, 1585
/// (1992), eq. (14) (form as usually quoted; written from memory), for
/// large `nu = l + 1/2`, relative index `m > 1`:
///
/// ```text
/// m x = nu + 2^(-1/3) a_p nu^(1/3) - P / sqrt(m^2 - 1)
///       + (3/10) 2^(-2/3) a_p^2 nu^(-1/3)
///       - 2^(-1/3) P (m^2 - 2 P^2 / 3) / (m^2 - 1)^(3/2) a_p nu^(-2/3) + O(nu^-1)
/// ```
///
/// with `P = m` (TE) or `P = 1 / m` (TM) and `a_p` the `p`-th zero of
/// `Ai(-x)`. Returns the real size parameter `x = n_out k0 a`; the error is
/// `O(nu^-1)` and the radiative width (imaginary part) is not included.
pub fn lam_leung_young_position(l: u32, p: u32, m: f64, polarization: SpherePolarization) -> f64 {
    let nu = f64::from(l) + 0.5;
    let a = airy_ai_zero(p);
    let pp = match polarization {
        SpherePolarization::Te => m,
        SpherePolarization::Tm => 1.0 / m,
    };
    let c = 2f64.powf(-1.0 / 3.0);
    let mx = nu + c * a * nu.cbrt() - pp / (m * m - 1.0).sqrt() + 0.3 * c * c * a * a / nu.cbrt()
        - c * pp * (m * m - 2.0 * pp * pp / 3.0) / (m * m - 1.0).powf(1.5)
            * a
            * nu.powf(-2.0 / 3.0);
    mx / m
}

/// The product-form Mie denominator (module docs) at complex size parameter
/// `x = n_out k0 a`. Its zeros are the resonances; it has a pole only at `x = 0`.
pub fn mie_denominator(
    sphere: &MieSphere,
    l: u32,
    polarization: SpherePolarization,
    x: Complex64,
) -> Result<Complex64, ReferenceError> {
    let m = sphere.relative_index();
    let inner = SphericalBessel::try_new(l, m * x)?;
    let outer = SphericalBessel::try_new(l, x)?;
    let (psi, dpsi) = (inner.psi(l), inner.psi_prime(l));
    let (xi, dxi) = (outer.xi(l), outer.xi_prime(l));
    Ok(match polarization {
        SpherePolarization::Te => psi * dxi - m * dpsi * xi,
        SpherePolarization::Tm => m * psi * dxi - dpsi * xi,
    })
}

/// `f` and `df/dx` of the normalised form used by Newton (module docs).
fn newton_function(
    m: Complex64,
    l: u32,
    polarization: SpherePolarization,
    x: Complex64,
) -> Result<(Complex64, Complex64), ReferenceError> {
    let inner = SphericalBessel::try_new(l, m * x)?;
    let outer = SphericalBessel::try_new(l, x)?;
    let ll = f64::from(l * (l + 1));
    let (psi, dpsi) = (inner.psi(l), inner.psi_prime(l));
    let ddpsi = (ll / (m * x * m * x) - 1.0) * psi;
    let g = outer.xi_prime(l) / outer.xi(l);
    let dg = (ll / (x * x) - 1.0) - g * g;
    Ok(match polarization {
        SpherePolarization::Te => (psi * g - m * dpsi, m * dpsi * g + psi * dg - m * m * ddpsi),
        SpherePolarization::Tm => (
            m * psi * g - dpsi,
            m * m * dpsi * g + m * psi * dg - m * ddpsi,
        ),
    })
}

/// Scale of the radiative width of low-l resonances (Fabry-Perot estimate
/// for a slab of index `m`): `ln((m + 1) / (m - 1)) / (2 m)`.
fn fabry_perot_width(m: f64) -> f64 {
    ((m + 1.0) / (m - 1.0)).ln() / (2.0 * m)
}

/// The search strip `0.05 <= Re x`, `-(2 w + 1/2) <= Im x <= 1/2` (module docs).
const STRIP_LEFT: f64 = 0.05;
const STRIP_TOP: f64 = 0.5;

/// The resonance `(l, p, polarization)` of `sphere` (module docs).
///
/// The strip is cut at `Re x = X`, with `X` grown from the Lam-Leung-Young
/// position until the box holds at least `p` zeros (argument principle); the
/// zeros in the box are isolated by splitting it until each part holds one,
/// found there by Newton's method, sorted by `Re x`, and the `p`-th returned.
/// Converges to ~1e-15 relative in `Re x`; `l` up to a few hundred is fine.
pub fn mie_resonance(
    sphere: &MieSphere,
    l: u32,
    p: u32,
    polarization: SpherePolarization,
) -> Result<MieResonance, ReferenceError> {
    if l == 0 || p == 0 {
        return Err(ReferenceError::InvalidParameter {
            name: if l == 0 { "l" } else { "p" },
            value: 0.0,
            reason: "l and p start at 1",
        });
    }
    let m = sphere.relative_index();
    let bottom = -(2.0 * fabry_perot_width(m.re) + 0.5);
    let half_spacing = 0.5 * std::f64::consts::PI / m.re;
    let mut right =
        lam_leung_young_position(l, p, m.re, polarization).max(STRIP_LEFT) + half_spacing;
    let denominator = |z: Complex64| mie_denominator(sphere, l, polarization, z);
    let mut grown = 0;
    while winding_number(
        denominator,
        &box_corners(STRIP_LEFT, right, bottom, STRIP_TOP),
    )? < i64::from(p)
    {
        right += half_spacing;
        grown += 1;
        if grown > 200 {
            return Err(ReferenceError::RadialOrderMismatch { l, p, count: -1 });
        }
    }
    let mut roots = Vec::new();
    let mut iterations = 0;
    isolate_roots(
        sphere,
        l,
        polarization,
        [STRIP_LEFT, right, bottom, STRIP_TOP],
        0,
        &mut roots,
        &mut iterations,
    )?;
    roots.sort_by(|a, b| a.re.total_cmp(&b.re));
    let count = roots.len() as i64;
    let x = *roots
        .get(p as usize - 1)
        .ok_or(ReferenceError::RadialOrderMismatch { l, p, count })?;
    let k0a = x / sphere.outer_index;
    Ok(MieResonance {
        l,
        p,
        polarization,
        k0a,
        q: k0a.re / (2.0 * k0a.im.abs()),
        iterations,
    })
}

fn box_corners(x0: f64, x1: f64, y0: f64, y1: f64) -> [Complex64; 4] {
    [
        Complex64::new(x0, y0),
        Complex64::new(x1, y0),
        Complex64::new(x1, y1),
        Complex64::new(x0, y1),
    ]
}

/// Pushes every zero of the Mie denominator inside `[x0, x1, y0, y1]`.
/// A box with one zero is tried with Newton from its centre; otherwise (or
/// if Newton leaves the box) the longer side is split at 0.4721 of its
/// length (off-centre, so edges do not land on the real axis where high-Q
/// zeros sit).
fn isolate_roots(
    sphere: &MieSphere,
    l: u32,
    polarization: SpherePolarization,
    [x0, x1, y0, y1]: [f64; 4],
    depth: usize,
    roots: &mut Vec<Complex64>,
    iterations: &mut usize,
) -> Result<(), ReferenceError> {
    let count = winding_number(
        |z| mie_denominator(sphere, l, polarization, z),
        &box_corners(x0, x1, y0, y1),
    )?;
    if count <= 0 {
        return Ok(());
    }
    if count == 1 {
        let mut x = Complex64::new(0.5 * (x0 + x1), 0.5 * (y0 + y1));
        if let Ok((r, its)) = newton(sphere.relative_index(), l, polarization, &mut x) {
            *iterations += its;
            if r.re >= x0 && r.re <= x1 && r.im >= y0 && r.im <= y1 {
                roots.push(r);
                return Ok(());
            }
        }
    }
    if depth > 60 {
        return Err(ReferenceError::NoConvergence {
            what: "Mie root isolation by box splitting",
            iterations: depth,
            last_step: x1 - x0,
        });
    }
    const CUT: f64 = 0.4721;
    let halves = if x1 - x0 >= y1 - y0 {
        let xm = x0 + CUT * (x1 - x0);
        [[x0, xm, y0, y1], [xm, x1, y0, y1]]
    } else {
        let ym = y0 + CUT * (y1 - y0);
        [[x0, x1, y0, ym], [x0, x1, ym, y1]]
    };
    for half in halves {
        isolate_roots(sphere, l, polarization, half, depth + 1, roots, iterations)?;
    }
    Ok(())
}

fn newton(
    m: Complex64,
    l: u32,
    polarization: SpherePolarization,
    x: &mut Complex64,
) -> Result<(Complex64, usize), ReferenceError> {
    const MAX_ITER: usize = 100;
    let mut converged_steps = 0;
    let mut last = f64::INFINITY;
    for iteration in 1..=MAX_ITER {
        let (f, df) = newton_function(m, l, polarization, *x)?;
        let mut step = f / df;
        // Keep steps below a quarter of the root spacing (~pi / m).
        let cap = 0.25 * std::f64::consts::PI / m.re;
        if step.norm() > cap {
            step *= cap / step.norm();
        }
        *x -= step;
        if x.re <= 0.0 {
            x.re = 0.05;
        }
        last = step.norm();
        if last <= 4.0 * f64::EPSILON * x.norm() {
            // One more step after convergence polishes the last bit.
            converged_steps += 1;
            if converged_steps == 2 {
                return Ok((*x, iteration));
            }
        }
    }
    if last <= 1e-13 * x.norm() {
        return Ok((*x, MAX_ITER));
    }
    Err(ReferenceError::NoConvergence {
        what: "Mie resonance Newton iteration",
        iterations: MAX_ITER,
        last_step: last,
    })
}

/// Number of zeros minus poles of `f` inside the counter-clockwise polygon
/// `corners`: the total change of `arg f` along the edges over `2 pi`
/// (argument principle), sampling each edge at 64 points and halving any
/// step whose phase change exceeds 0.5 rad.
pub fn winding_number<F>(mut f: F, corners: &[Complex64]) -> Result<i64, ReferenceError>
where
    F: FnMut(Complex64) -> Result<Complex64, ReferenceError>,
{
    const BASE: usize = 64;
    let mut total = 0.0;
    for (k, &a) in corners.iter().enumerate() {
        let b = corners[(k + 1) % corners.len()];
        let point = |t: f64| a + (b - a) * t;
        let mut stack = Vec::new();
        let mut prev = f(point(0.0))?;
        for i in 1..=BASE {
            let t1 = i as f64 / BASE as f64;
            let v1 = f(point(t1))?;
            stack.push(((i - 1) as f64 / BASE as f64, t1, prev, v1));
            prev = v1;
        }
        while let Some((t0, t1, v0, v1)) = stack.pop() {
            let d = (v1 / v0).arg();
            if d.abs() > 0.5 && t1 - t0 > 1e-12 {
                let tm = 0.5 * (t0 + t1);
                let vm = f(point(tm))?;
                stack.push((t0, tm, v0, vm));
                stack.push((tm, t1, vm, v1));
            } else {
                total += d;
            }
        }
    }
    Ok((total / (2.0 * std::f64::consts::PI)).round() as i64)
}
