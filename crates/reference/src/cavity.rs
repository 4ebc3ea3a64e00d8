//! Resonances of closed metal cavities (perfect electric conductor walls),
//! optionally filled with a lossless homogeneous medium `(eps_r, mu_r)`.
//!
//! In a cavity of length `d` whose cross-section is a hollow waveguide, each
//! guide mode of cut-off wavenumber `k_c` gives standing waves
//! `k^2 = k_c^2 + (p pi / d)^2` (Pozar, Microwave Engineering, 4th ed.,
//! sec. 6.3, eq. 6.40; Jackson, Classical Electrodynamics, 3rd ed., sec. 8.7),
//! with `p >= 0` for TM and `p >= 1` for TE (and TEM) modes. `k` is the
//! wavenumber in the filling, so the vacuum wavenumber is
//! `k0 = k / sqrt(eps_r mu_r)` and the frequency `f = c k0 / (2 pi)`.
//!
//! * circular cylinder, radius `a`: TM `k_c = x_mn / a` with `J_m(x_mn) = 0`;
//!   TE `k_c = x'_mn / a` with `J_m'(x'_mn) = 0` (the root `x = 0` of `J_0'`
//!   is not a mode; `n` counts positive roots);
//! * coaxial cylinder, radii `a < b`: TEM `k = p pi / d` (`p >= 1`); TM `k_c`
//!   from `J_m(k_c a) Y_m(k_c b) - J_m(k_c b) Y_m(k_c a) = 0`; TE from
//!   `J_m'(k_c a) Y_m'(k_c b) - J_m'(k_c b) Y_m'(k_c a) = 0` (Marcuvitz,
//!   Waveguide Handbook, sec. 2.4; Pozar sec. 3.5 for the TE11 form).
//!
//! Degeneracy: every mode with `m != 0` comes as a `cos(m phi)` /
//! `sin(m phi)` pair. A listing holds each `(kind, m, n, p)` once and says
//! [`CavityMode::degeneracy`] = 2 for `m != 0`; a solver working at fixed
//! azimuthal order `m` sees each of them once. In the cylinder, TE_0np and
//! TM_1np also coincide (because `J_0' = -J_1`): they are listed separately.

use std::f64::consts::PI;

use crate::bessel::bessel_jy;
use crate::roots::roots_by_scan;
use crate::ReferenceError;

/// Speed of light in vacuum, m/s (exact, SI 2019).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;

/// Field family of a cavity mode.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum CavityModeKind {
    /// Transverse electromagnetic (coaxial cavity only).
    Tem,
    /// Transverse magnetic to the axis (`H_z = 0`).
    Tm,
    /// Transverse electric to the axis (`E_z = 0`).
    Te,
}

/// One resonance of a closed cavity.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CavityMode {
    /// Field family.
    pub kind: CavityModeKind,
    /// Azimuthal order `m >= 0`.
    pub m: u32,
    /// Radial order `n >= 1` (`n`-th root of the cut-off equation; 0 for TEM).
    pub n: u32,
    /// Axial order `p` (number of half wavelengths along the length).
    pub p: u32,
    /// Cut-off wavenumber of the guide mode, 1/m (0 for TEM).
    pub k_cutoff: f64,
    /// Resonant wavenumber in the filling medium, 1/m.
    pub k: f64,
    /// Resonant vacuum wavenumber `k0 = k / sqrt(eps_r mu_r)`, 1/m.
    pub k0: f64,
    /// Number of independent fields at this label in 3D: 2 for `m != 0`, else 1.
    pub degeneracy: u32,
}

impl CavityMode {
    /// Resonant frequency in Hz, `f = c k0 / (2 pi)`.
    pub fn frequency(&self) -> f64 {
        SPEED_OF_LIGHT * self.k0 / (2.0 * PI)
    }
}

/// A homogeneous, lossless filling medium.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Filling {
    /// Relative permittivity.
    pub eps_r: f64,
    /// Relative permeability.
    pub mu_r: f64,
}

impl Filling {
    /// Vacuum.
    pub const VACUUM: Filling = Filling {
        eps_r: 1.0,
        mu_r: 1.0,
    };

    /// A filling with positive, finite `eps_r` and `mu_r`.
    pub fn try_new(eps_r: f64, mu_r: f64) -> Result<Self, ReferenceError> {
        positive("eps_r", eps_r)?;
        positive("mu_r", mu_r)?;
        Ok(Self { eps_r, mu_r })
    }

    fn index(&self) -> f64 {
        (self.eps_r * self.mu_r).sqrt()
    }
}

fn positive(name: &'static str, value: f64) -> Result<(), ReferenceError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(ReferenceError::InvalidParameter {
            name,
            value,
            reason: "must be positive and finite",
        })
    }
}

/// Positive zeros of `J_m` (`derivative = false`) or `J_m'` (`true`) below
/// `x_max`, in increasing order. Every zero exceeds `m` (for `J_0'`, the
/// trivial zero at 0 is skipped); zeros are at least ~2.5 apart, so a
/// scan with step 0.05 and Brent refinement finds all of them.
pub fn bessel_j_zeros(
    order: u32,
    derivative: bool,
    x_max: f64,
) -> Result<Vec<f64>, ReferenceError> {
    let start = f64::from(order).max(0.01);
    if x_max <= start {
        return Ok(Vec::new());
    }
    roots_by_scan(
        |x| {
            let b = bessel_jy(order, x)?;
            Ok(if derivative { b.j_prime } else { b.j })
        },
        start,
        x_max,
        0.05,
    )
}

/// Cut-off wavenumbers `k_c < k_max` of the coaxial guide `a < r < b` for
/// azimuthal order `m`: roots of the TM or TE cross-product equation (module
/// docs). The Rayleigh quotient gives `k_c > m / b`, roots are spaced about
/// `pi / (b - a)`; the scan step is 1/40 of that.
pub fn coaxial_cutoffs(
    inner_radius: f64,
    outer_radius: f64,
    order: u32,
    kind: CavityModeKind,
    k_max: f64,
) -> Result<Vec<f64>, ReferenceError> {
    let (a, b) = (inner_radius, outer_radius);
    let start = (f64::from(order) / b).max(1e-3 / b) * (1.0 + 1e-9);
    if k_max <= start || kind == CavityModeKind::Tem {
        return Ok(Vec::new());
    }
    let cross = |k: f64| -> Result<f64, ReferenceError> {
        let (ja, jb) = (bessel_jy(order, k * a)?, bessel_jy(order, k * b)?);
        Ok(match kind {
            CavityModeKind::Tm => ja.j * jb.y - jb.j * ja.y,
            _ => ja.j_prime * jb.y_prime - jb.j_prime * ja.y_prime,
        })
    };
    roots_by_scan(cross, start, k_max, PI / (b - a) / 40.0)
}

/// The lowest `count` resonances of a closed circular cylinder cavity of
/// radius `radius` and length `length` (metres), filled with `filling`,
/// ordered by frequency (ties keep TM before TE, then lower m, n, p).
///
/// TM_mnp: `k = sqrt((x_mn / a)^2 + (p pi / d)^2)`, `p >= 0`;
/// TE_mnp: `k = sqrt((x'_mn / a)^2 + (p pi / d)^2)`, `p >= 1`
/// (Pozar, Microwave Engineering, sec. 6.3, eqs. 6.51 and 6.48).
pub fn cylinder_modes(
    radius: f64,
    length: f64,
    filling: Filling,
    count: usize,
) -> Result<Vec<CavityMode>, ReferenceError> {
    positive("radius", radius)?;
    positive("length", length)?;
    let cutoffs = |m: u32, kind: CavityModeKind, k_max: f64| -> Result<Vec<f64>, ReferenceError> {
        let zeros = bessel_j_zeros(m, kind == CavityModeKind::Te, k_max * radius)?;
        Ok(zeros.into_iter().map(|x| x / radius).collect())
    };
    lowest_modes(radius, length, filling, count, false, cutoffs)
}

/// The lowest `count` resonances of a closed circular cylinder cavity filled with a
/// uniaxial dielectric whose optic axis is the cylinder axis,
/// `eps = diag(eps_perp, eps_perp, eps_par)` (non-magnetic), ordered by frequency.
///
/// TE_mnp (`E_z = 0`: the field sees `eps_perp` only):
/// `k0^2 = ((x'_mn / a)^2 + (p pi / d)^2) / eps_perp`;
/// TM_mnp (`H_z = 0`, the extraordinary wave):
/// `k0^2 = (x_mn / a)^2 / eps_par + (p pi / d)^2 / eps_perp`.
/// Source: the extraordinary-wave dispersion relation `k_t^2 / eps_par + k_z^2 / eps_perp
/// = k0^2` of a uniaxial medium with its axis along z (Born & Wolf, *Principles of
/// Optics*, sec. 15.3; from memory) with the cut-offs of the isotropic cavity. The
/// `k` field of each mode holds the vacuum-filled value `sqrt(k_c^2 + (p pi / d)^2)`.
pub fn uniaxial_cylinder_modes(
    radius: f64,
    length: f64,
    eps_perp: f64,
    eps_par: f64,
    count: usize,
) -> Result<Vec<CavityMode>, ReferenceError> {
    positive("eps_perp", eps_perp)?;
    positive("eps_par", eps_par)?;
    if count == 0 {
        return Ok(Vec::new());
    }
    let axial = PI / length;
    let largest = eps_perp.max(eps_par).sqrt();
    let mut asked = 4 * count.max(1);
    loop {
        let vacuum = cylinder_modes(radius, length, Filling::VACUUM, asked)?;
        let mut modes: Vec<CavityMode> = vacuum
            .iter()
            .map(|mode| {
                let kz = f64::from(mode.p) * axial;
                let k0 = match mode.kind {
                    CavityModeKind::Tm => {
                        (mode.k_cutoff.powi(2) / eps_par + kz * kz / eps_perp).sqrt()
                    }
                    _ => mode.k / eps_perp.sqrt(),
                };
                CavityMode { k0, ..*mode }
            })
            .collect();
        modes.sort_by(|x, y| x.k0.total_cmp(&y.k0).then(x.kind.cmp(&y.kind)));
        // Every mode left out has a vacuum k above the largest listed one, hence
        // k0 >= k / sqrt(max eps): complete once that bound passes the count-th k0.
        let k_listed = vacuum.iter().map(|m| m.k).fold(0.0, f64::max);
        if modes.len() >= count && k_listed / largest >= modes[count - 1].k0 {
            modes.truncate(count);
            return Ok(modes);
        }
        asked *= 2;
    }
}

/// The lowest `count` resonances of a closed coaxial cavity, inner radius
/// `inner_radius`, outer radius `outer_radius`, length `length` (metres),
/// filled with `filling`: TEM_p (`k = p pi / d`, `p >= 1`), TM_mnp and TE_mnp
/// from the cross-product equations in the module docs.
pub fn coaxial_modes(
    inner_radius: f64,
    outer_radius: f64,
    length: f64,
    filling: Filling,
    count: usize,
) -> Result<Vec<CavityMode>, ReferenceError> {
    positive("inner_radius", inner_radius)?;
    positive("outer_radius", outer_radius)?;
    positive("length", length)?;
    if outer_radius <= inner_radius {
        return Err(ReferenceError::InvalidParameter {
            name: "outer_radius",
            value: outer_radius,
            reason: "must exceed inner_radius",
        });
    }
    let cutoffs = |m: u32, kind: CavityModeKind, k_max: f64| {
        coaxial_cutoffs(inner_radius, outer_radius, m, kind, k_max)
    };
    lowest_modes(outer_radius, length, filling, count, true, cutoffs)
}

/// Enumerates all modes below a growing `k_max` until `count` are found.
/// `outer_radius` bounds the azimuthal orders through `k_c > m / outer_radius`.
fn lowest_modes<C>(
    outer_radius: f64,
    length: f64,
    filling: Filling,
    count: usize,
    with_tem: bool,
    cutoffs: C,
) -> Result<Vec<CavityMode>, ReferenceError>
where
    C: Fn(u32, CavityModeKind, f64) -> Result<Vec<f64>, ReferenceError>,
{
    let axial = PI / length;
    let mut k_max = axial.max(1.0 / outer_radius) * 2.0;
    loop {
        let mut modes = Vec::new();
        let mut push = |kind, m: u32, n, p: u32, k_cutoff: f64| {
            let k = k_cutoff.hypot(f64::from(p) * axial);
            if k < k_max {
                modes.push(CavityMode {
                    kind,
                    m,
                    n,
                    p,
                    k_cutoff,
                    k,
                    k0: k / filling.index(),
                    degeneracy: if m == 0 { 1 } else { 2 },
                });
            }
            k < k_max
        };
        if with_tem {
            let mut p = 1;
            while push(CavityModeKind::Tem, 0, 0, p, 0.0) {
                p += 1;
            }
        }
        let mut m = 0u32;
        while f64::from(m) < k_max * outer_radius {
            for kind in [CavityModeKind::Tm, CavityModeKind::Te] {
                for (i, k_cutoff) in cutoffs(m, kind, k_max)?.into_iter().enumerate() {
                    let mut p = u32::from(kind == CavityModeKind::Te);
                    while push(kind, m, i as u32 + 1, p, k_cutoff) {
                        p += 1;
                    }
                }
            }
            m += 1;
        }
        if modes.len() >= count || count == 0 {
            modes.sort_by(|x, y| {
                x.k.total_cmp(&y.k)
                    .then(x.kind.cmp(&y.kind))
                    .then(x.m.cmp(&y.m))
                    .then(x.n.cmp(&y.n))
                    .then(x.p.cmp(&y.p))
            });
            modes.truncate(count);
            return Ok(modes);
        }
        k_max *= 1.5;
    }
}
