//! The composite coordinate map `(u, v, w) -> x` and the equivalent medium it induces.
//!
//! ```text
//!   (u, v)  --PML stretch-->  (U, V) complex  --placement (and twist)-->  x in R^3 (complexified)
//! ```
//!
//! The Jacobian `J = dx / d(u, v, w)` is evaluated numerically at every
//! quadrature point; covariant field components then satisfy Maxwell's
//! equations as if `(u, v, w)` were Cartesian, in the medium
//! `eps_hat = det(J) J^-1 eps J^-T`, `mu_hat = det(J) J^-1 mu J^-T`
//! (plain transpose, signed complex determinant).
use num_complex::Complex64 as c64;
use twistmode_mesh::PmlGeometry;

use crate::media::Material;
use crate::tensor::{det3, inverse3, mul3, scale3, transpose3, Tensor3, ZERO3};

/// How the section coordinates `(u, v)` and the third coordinate `w` sit in space.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Placement {
    /// Body of revolution: `(u, v, w) = (r, z, phi)`, `x = (r cos phi, r sin phi, z)`.
    Revolution,
    /// Ring: the section centre at distance `radius` from the axis,
    /// `(r, z) = (radius, 0) + Rot(tau phi) (U, V)` with `tau = half_turns / 2`, `w = phi`.
    Ring {
        /// Distance from the axis to the section centre, metres.
        radius: f64,
        /// Half turns of the section per round trip (0 for an untwisted ring).
        half_turns: f64,
    },
    /// Straight guide along z, section turning at `twist_rate` rad/m:
    /// `x = (Rot(twist_rate z) (U, V), z)`, `w = z`.
    Straight {
        /// Twist rate alpha, radians per metre (0 for an untwisted guide).
        twist_rate: f64,
    },
}

impl Placement {
    /// True when the equivalent medium does not depend on `w` (one 2D solve per m is exact).
    pub fn is_invariant_in_w(&self) -> bool {
        match *self {
            Placement::Ring { half_turns, .. } => half_turns == 0.0,
            Placement::Revolution | Placement::Straight { .. } => true,
        }
    }

    /// Jacobian `dx / d(U, V, w)` at (possibly complex) section coordinates.
    /// Row `i` is Cartesian component `x_i`, column `j` the coordinate.
    pub fn jacobian(&self, uv: [c64; 2], w: f64) -> Tensor3 {
        let (u, v) = (uv[0], uv[1]);
        let zero = c64::new(0.0, 0.0);
        let one = c64::new(1.0, 0.0);
        match *self {
            Placement::Revolution => Self::cylindrical(u, one, zero, zero, zero, one, zero, w),
            Placement::Ring { radius, half_turns } => {
                let tau = 0.5 * half_turns;
                let (s, c) = (tau * w).sin_cos();
                // Rotated offsets, r and z, and their derivatives.
                let a = u * c - v * s;
                let b = u * s + v * c;
                let r = a + radius;
                Self::cylindrical(
                    r,
                    c64::new(c, 0.0),
                    c64::new(-s, 0.0),
                    -b * tau,
                    c64::new(s, 0.0),
                    c64::new(c, 0.0),
                    a * tau,
                    w,
                )
            }
            Placement::Straight { twist_rate } => {
                let (s, c) = (twist_rate * w).sin_cos();
                let (sc, cc) = (c64::new(s, 0.0), c64::new(c, 0.0));
                [
                    [cc, -sc, -(u * s + v * c) * twist_rate],
                    [sc, cc, (u * c - v * s) * twist_rate],
                    [zero, zero, one],
                ]
            }
        }
    }

    /// Jacobian of `x = (r cos w, r sin w, z)` given `r` and `z` as functions of
    /// `(U, V, w)` through their partial derivatives.
    #[allow(clippy::too_many_arguments)]
    fn cylindrical(
        r: c64,
        dr_du: c64,
        dr_dv: c64,
        dr_dw: c64,
        dz_du: c64,
        dz_dv: c64,
        dz_dw: c64,
        w: f64,
    ) -> Tensor3 {
        let (s, c) = w.sin_cos();
        [
            [dr_du * c, dr_dv * c, dr_dw * c - r * s],
            [dr_du * s, dr_dv * s, dr_dw * s + r * c],
            [dz_du, dz_dv, dz_dw],
        ]
    }
}

/// Grading of the PML stretch: `rho~ = rho + i S ((rho - rho0) / d)^p`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PmlProfile {
    /// Total imaginary stretch `S` at the outer boundary, metres.
    pub strength: f64,
    /// Grading power `p` (2 or 3 for smooth absorption).
    pub power: f64,
}

impl PmlProfile {
    /// Round-trip amplitude attenuation the default profile aims for.
    pub const TARGET_ROUND_TRIP: f64 = 1e-12;

    /// A strong default profile: a plane wave of wavenumber `k0_target * n_outside`
    /// crossing the layer and back is attenuated by `exp(-2 k0 n S) = 1e-12`
    /// (so `S = ln(1e12) / (2 k0 n)`), with quadratic grading (p = 2) so the
    /// stretch starts smoothly. `thickness` (metres) only sets a floor on `S`
    /// of one thickness, keeping the stretch well resolved in absolute terms.
    pub fn for_wavenumber(k0_target: f64, n_outside: f64, thickness: f64) -> PmlProfile {
        let s = (1.0 / Self::TARGET_ROUND_TRIP).ln() / (2.0 * k0_target * n_outside);
        PmlProfile {
            strength: s.max(thickness),
            power: 2.0,
        }
    }

    /// `(rho~ - rho, d rho~ / d rho)` at depth `depth` (>= 0) into a layer `thickness` thick.
    fn stretch(&self, depth: f64, thickness: f64) -> (c64, c64) {
        let s = (depth / thickness).clamp(0.0, 1.0);
        let offset = self.strength * s.powf(self.power);
        let slope = self.strength * self.power * s.powf(self.power - 1.0) / thickness;
        (c64::new(0.0, offset), c64::new(1.0, slope))
    }
}

/// The complex stretch of the section coordinates (identity outside the PML).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum PmlStretch {
    /// No stretch anywhere.
    None,
    /// Radial stretch about `centre`, from radius `inner` to `outer`.
    Radial {
        /// Centre of the stretch.
        centre: [f64; 2],
        /// Radius where the layer starts.
        inner: f64,
        /// Outer radius of the layer.
        outer: f64,
        /// Grading.
        profile: PmlProfile,
    },
    /// Per-axis stretch outside the box `inner` (`[u_min, u_max, v_min, v_max]`) up to `outer`.
    Cartesian {
        /// Physical box.
        inner: [f64; 4],
        /// Outer box.
        outer: [f64; 4],
        /// Grading.
        profile: PmlProfile,
    },
}

impl PmlStretch {
    /// The stretch for a mesh's PML geometry with the given grading.
    pub fn from_geometry(geometry: &PmlGeometry, profile: PmlProfile) -> PmlStretch {
        match *geometry {
            PmlGeometry::None => PmlStretch::None,
            PmlGeometry::Radial {
                centre,
                inner,
                outer,
            } => PmlStretch::Radial {
                centre,
                inner,
                outer,
                profile,
            },
            PmlGeometry::Cartesian { inner, outer } => PmlStretch::Cartesian {
                inner,
                outer,
                profile,
            },
        }
    }

    /// Stretched coordinates `(U, V)` and their Jacobian `d(U, V) / d(u, v)`
    /// (row = stretched coordinate) at the real point `(u, v)`.
    pub fn map(&self, u: f64, v: f64) -> ([c64; 2], [[c64; 2]; 2]) {
        let one = c64::new(1.0, 0.0);
        let zero = c64::new(0.0, 0.0);
        let identity = (
            [c64::new(u, 0.0), c64::new(v, 0.0)],
            [[one, zero], [zero, one]],
        );
        match *self {
            PmlStretch::None => identity,
            PmlStretch::Radial {
                centre,
                inner,
                outer,
                profile,
            } => {
                let d = [u - centre[0], v - centre[1]];
                let rho = d[0].hypot(d[1]);
                if rho <= inner {
                    return identity;
                }
                let (offset, slope) = profile.stretch(rho - inner, outer - inner);
                let ratio = (offset + rho) / rho;
                let n = [d[0] / rho, d[1] / rho];
                let mut jac = [[zero; 2]; 2];
                for i in 0..2 {
                    for j in 0..2 {
                        let delta = if i == j { ratio } else { zero };
                        jac[i][j] = delta + (slope - ratio) * (n[i] * n[j]);
                    }
                }
                ([ratio * d[0] + centre[0], ratio * d[1] + centre[1]], jac)
            }
            PmlStretch::Cartesian {
                inner,
                outer,
                profile,
            } => {
                let axis = |x: f64, lo_in: f64, hi_in: f64, lo_out: f64, hi_out: f64| {
                    if x > hi_in && hi_out > hi_in {
                        let (off, slope) = profile.stretch(x - hi_in, hi_out - hi_in);
                        (off + x, slope)
                    } else if x < lo_in && lo_in > lo_out {
                        let (off, slope) = profile.stretch(lo_in - x, lo_in - lo_out);
                        (x - off, slope)
                    } else {
                        (c64::new(x, 0.0), one)
                    }
                };
                let (uu, du) = axis(u, inner[0], inner[1], outer[0], outer[1]);
                let (vv, dv) = axis(v, inner[2], inner[3], outer[2], outer[3]);
                ([uu, vv], [[du, zero], [zero, dv]])
            }
        }
    }
}

/// Coefficients of the two bilinear forms at one point: `eps_hat` for the
/// mass form and `nu_hat = mu_hat^-1` for the curl-curl form.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EquivalentMedium {
    /// `det(J) J^-1 eps J^-T`.
    pub eps_hat: Tensor3,
    /// `mu_hat^-1 = J^T mu^-1 J / det(J)`.
    pub nu_hat: Tensor3,
}

/// Placement plus PML stretch: the whole map `(u, v, w) -> x`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CoordinateMap {
    /// Placement in space.
    pub placement: Placement,
    /// Complex stretch of the section coordinates.
    pub pml: PmlStretch,
}

impl CoordinateMap {
    /// `J = dx / d(u, v, w)` at `(u, v, w)`; the PML stretch is applied only when
    /// `stretched` (triangles of PML regions).
    pub fn jacobian(&self, u: f64, v: f64, w: f64, stretched: bool) -> Tensor3 {
        let (uv, s) = if stretched {
            self.pml.map(u, v)
        } else {
            PmlStretch::None.map(u, v)
        };
        let place = self.placement.jacobian(uv, w);
        let mut stretch = ZERO3;
        for i in 0..2 {
            for j in 0..2 {
                stretch[i][j] = s[i][j];
            }
        }
        stretch[2][2] = c64::new(1.0, 0.0);
        mul3(&place, &stretch)
    }

    /// Equivalent medium of `material` at `(u, v, w)`. Returns `None` where the
    /// map is singular (on the axis of a revolution body).
    pub fn equivalent_medium(
        &self,
        material: &Material,
        u: f64,
        v: f64,
        w: f64,
        stretched: bool,
    ) -> Option<EquivalentMedium> {
        let j = self.jacobian(u, v, w, stretched);
        equivalent_medium_from_jacobian(&j, material)
    }
}

/// `eps_hat = det(J) J^-1 eps J^-T` and `nu_hat = J^T mu^-1 J / det(J)`.
pub fn equivalent_medium_from_jacobian(
    j: &Tensor3,
    material: &Material,
) -> Option<EquivalentMedium> {
    let det = det3(j);
    let j_inv = inverse3(j)?;
    let mu_inv = inverse3(&material.mu)?;
    let eps_hat = scale3(
        &mul3(&mul3(&j_inv, &material.eps), &transpose3(&j_inv)),
        det,
    );
    let nu_hat = scale3(&mul3(&mul3(&transpose3(j), &mu_inv), j), 1.0 / det);
    Some(EquivalentMedium { eps_hat, nu_hat })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tensor::{diag3, max_abs_diff3};

    fn c(x: f64) -> c64 {
        c64::new(x, 0.0)
    }

    #[test]
    fn revolution_gives_diag_r_r_inverse_r_up_to_sign() {
        // Source: transformation optics (Ward & Pendry, J. Mod. Opt. 43, 1996, from
        // memory): cylindrical coordinates give eps * diag(r, r, 1/r), overall
        // sign -1 because (r, z, phi) is left-handed (det J = -r).
        let eps = c64::new(2.25, 0.01);
        let map = CoordinateMap {
            placement: Placement::Revolution,
            pml: PmlStretch::None,
        };
        let r = 0.37;
        let m = map
            .equivalent_medium(&Material::isotropic(eps), r, -0.2, 0.0, false)
            .unwrap();
        let expect = diag3([eps * -r, eps * -r, eps * (-1.0 / r)]);
        assert!(max_abs_diff3(&m.eps_hat, &expect) < 1e-14);
        let expect_nu = diag3([c(-1.0 / r), c(-1.0 / r), c(-r)]);
        assert!(max_abs_diff3(&m.nu_hat, &expect_nu) < 1e-14);
        // Independent of phi.
        let m2 = map
            .equivalent_medium(&Material::isotropic(eps), r, -0.2, 1.1, false)
            .unwrap();
        assert!(max_abs_diff3(&m.eps_hat, &m2.eps_hat) < 1e-14);
    }

    #[test]
    fn twisted_straight_guide_gives_the_helicoidal_tensor() {
        // Source: helicoidal coordinates (Nicolet et al., "Modelling of twisted optical
        // waveguides with edge elements", Eur. Phys. J. Appl. Phys. 28, 2004).
        let a = 3.7;
        let (u, v) = (0.21, -0.4);
        let eps = 3.1;
        let map = CoordinateMap {
            placement: Placement::Straight { twist_rate: a },
            pml: PmlStretch::None,
        };
        let m = map
            .equivalent_medium(&Material::isotropic(c(eps)), u, v, 0.0, false)
            .unwrap();
        let expect = [
            [c(1.0 + a * a * v * v), c(-a * a * u * v), c(a * v)],
            [c(-a * a * u * v), c(1.0 + a * a * u * u), c(-a * u)],
            [c(a * v), c(-a * u), c(1.0)],
        ];
        assert!(max_abs_diff3(&m.eps_hat, &scale3(&expect, c(eps))) < 1e-13);
        // Helicoidal symmetry: the tensor at another z is the same.
        let m2 = map
            .equivalent_medium(&Material::isotropic(c(eps)), u, v, 0.8, false)
            .unwrap();
        assert!(max_abs_diff3(&m.eps_hat, &m2.eps_hat) < 1e-12);
    }

    #[test]
    fn untwisted_ring_equals_revolution_shifted_by_the_radius() {
        let radius = 2.0;
        let ring = CoordinateMap {
            placement: Placement::Ring {
                radius,
                half_turns: 0.0,
            },
            pml: PmlStretch::None,
        };
        let rev = CoordinateMap {
            placement: Placement::Revolution,
            pml: PmlStretch::None,
        };
        let mat = Material::with_index(1.7);
        let a = ring.equivalent_medium(&mat, 0.3, 0.1, 0.0, false).unwrap();
        let b = rev
            .equivalent_medium(&mat, radius + 0.3, 0.1, 0.0, false)
            .unwrap();
        assert!(max_abs_diff3(&a.eps_hat, &b.eps_hat) < 1e-14);
        assert!(max_abs_diff3(&a.nu_hat, &b.nu_hat) < 1e-14);
    }

    #[test]
    fn twisted_ring_matches_the_fourier_structure_of_the_note() {
        // Source: the metric of the rotating frame (docs/theory.md sec. 10.1):
        // eps_hat = A r + B / r with
        // r = R + U cos(tau phi) - V sin(tau phi). Check r through det J = -r.
        let (radius, half_turns) = (5.0, 3.0);
        let map = CoordinateMap {
            placement: Placement::Ring { radius, half_turns },
            pml: PmlStretch::None,
        };
        let (u, v, phi) = (0.4, -0.3, 0.7);
        let tau = 0.5 * half_turns;
        let r = radius + u * (tau * phi).cos() - v * (tau * phi).sin();
        let det = det3(&map.jacobian(u, v, phi, false));
        assert!((det + r).norm() < 1e-13, "det {det} vs -r {r}");
    }

    #[test]
    fn radial_pml_jacobian_matches_finite_differences_and_profile() {
        let profile = PmlProfile {
            strength: 0.5,
            power: 2.0,
        };
        let pml = PmlStretch::Radial {
            centre: [0.1, -0.2],
            inner: 1.0,
            outer: 1.5,
            profile,
        };
        let (u, v) = (1.0, 0.9);
        let (x, j) = pml.map(u, v);
        let h = 1e-6;
        for col in 0..2 {
            let (p, q) = if col == 0 {
                (pml.map(u + h, v).0, pml.map(u - h, v).0)
            } else {
                (pml.map(u, v + h).0, pml.map(u, v - h).0)
            };
            for row in 0..2 {
                let fd = (p[row] - q[row]) / (2.0 * h);
                assert!((fd - j[row][col]).norm() < 1e-7);
            }
        }
        // rho~ - rho = i S ((rho - inner)/d)^2 along the radial direction.
        let d = [u - 0.1, v + 0.2];
        let rho = d[0].hypot(d[1]);
        let rho_t = ((x[0] - 0.1).powi(2) + (x[1] + 0.2).powi(2)).sqrt();
        let expect = c64::new(rho, 0.5 * ((rho - 1.0) / 0.5).powi(2));
        assert!((rho_t - expect).norm() < 1e-13);
    }

    #[test]
    fn default_profile_reaches_the_target_round_trip_attenuation() {
        let k0 = 2.0 * std::f64::consts::PI / 1.55e-6;
        let p = PmlProfile::for_wavenumber(k0, 1.44, 0.1e-6);
        let round_trip = (-2.0 * k0 * 1.44 * p.strength).exp();
        assert!((round_trip / PmlProfile::TARGET_ROUND_TRIP - 1.0).abs() < 1e-9);
    }
}
