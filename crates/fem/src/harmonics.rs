//! Media as short sums of fixed tensors times known phi-harmonics, and the closed-form
//! harmonics of a twisted ring.
//!
//! A coefficient of the forms is written at each point as
//! `sum_t T_t s_t(w)`, with fixed tensors `T_t` and scalar series
//! `s_t(w) = sum_j c_{t,j} exp(i j tau w)`. A medium that does not depend on `w` is one term
//! with the constant series. A twisted ring (section turning by `tau w` as it goes round,
//! `tau = half_turns / 2`) is exactly two terms, in the rotating frame of the section:
//!
//! ```text
//!   r(w)  = R + U cos(tau w) - V sin(tau w) = R + (zeta / 2) e^{i theta} + (zeta' / 2) e^{-i theta}
//!   1/r   = (1 / Delta) [ 1 + sum_{j>0} a^j e^{i j theta} + sum_{j>0} a'^j e^{-i j theta} ]
//!           zeta = U + iV, zeta' = U - iV, theta = tau w,
//!           Delta = sqrt(R^2 - U^2 - V^2), a = -zeta / (R + Delta), a' = -zeta' / (R + Delta)
//!   eps_hat = -eps det S [ r  S^-1 P S^-T + (1/r) (S^-1 b)(S^-1 b)^T ],   b = (tau V, -tau U, 1)
//!   nu_hat  = -(1 / (mu det S)) [ (1/r) S^T C S + r e_w e_w^T ],   C = d1 d1^T + d2 d2^T,
//!           d1 = (1, 0, -tau V), d2 = (0, 1, tau U), P = diag(1, 1, 0)
//! ```
//!
//! with `(U, V)` the (complex, inside a PML) stretched section coordinates about the twist
//! centre and `S = d(U, V) / d(u, v)` extended by 1 in the `w` slot. The overall minus sign
//! is `det J = -r det S` of the left-handed frame `(u, v, phi)`; it cancels in the pencil.
//! The Laurent series of `1/r` follows from `r = ((R + Delta) / 2)(1 - a z)(1 - a' / z)`,
//! `z = e^{i theta}`; it converges on `|z| = 1` when `|a|, |a'| < 1`. The branch of `Delta`
//! is the one with `|R + Delta| >= |R - Delta|` (then `|a a'| <= 1`); for a stretch that is
//! radial about the twist centre `|a| = |a'|`, so both are below one wherever the map does
//! not fold. The derivation is in `docs/theory.md`.
use num_complex::Complex64 as c64;

use crate::coordinates::EquivalentMedium;
use crate::tensor::{Tensor3, ZERO3};

/// The phi-harmonics `c_j` of one scalar factor of a medium, with `theta = tau w`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum HarmonicSeries {
    /// `1` (the factor does not depend on `w`): `c_0 = 1`, all others zero.
    Constant,
    /// A trigonometric polynomial of degree one: `c_-1, c_0, c_1`.
    Trig {
        /// `c_-1`.
        minus: c64,
        /// `c_0`.
        zero: c64,
        /// `c_1`.
        plus: c64,
    },
    /// `c_0 = scale`, `c_j = scale plus^j` and `c_-j = scale minus^j` for `j > 0`.
    Geometric {
        /// `c_0`.
        scale: c64,
        /// Ratio of the positive harmonics.
        plus: c64,
        /// Ratio of the negative harmonics.
        minus: c64,
    },
}

impl HarmonicSeries {
    /// The coefficient `c_j`.
    pub fn coefficient(&self, j: i32) -> c64 {
        let zero = c64::new(0.0, 0.0);
        match *self {
            HarmonicSeries::Constant => {
                if j == 0 {
                    c64::new(1.0, 0.0)
                } else {
                    zero
                }
            }
            HarmonicSeries::Trig {
                minus,
                zero: c0,
                plus,
            } => match j {
                -1 => minus,
                0 => c0,
                1 => plus,
                _ => zero,
            },
            HarmonicSeries::Geometric { scale, plus, minus } => match j.cmp(&0) {
                std::cmp::Ordering::Equal => scale,
                std::cmp::Ordering::Greater => scale * plus.powi(j),
                std::cmp::Ordering::Less => scale * minus.powi(-j),
            },
        }
    }

    /// `|c_j| / |c_0|` bound for `|j| >= 1` as a ratio per harmonic (0 for the constant
    /// series, which has no harmonics beyond 0; 1 for the trigonometric one, which stops at 1).
    pub fn decay(&self) -> f64 {
        match *self {
            HarmonicSeries::Constant => 0.0,
            HarmonicSeries::Trig { .. } => 1.0,
            HarmonicSeries::Geometric { plus, minus, .. } => plus.norm().max(minus.norm()),
        }
    }

    /// The value at `theta = tau w` summed over `|j| <= j_max`.
    pub fn sum(&self, theta: f64, j_max: i32) -> c64 {
        (-j_max..=j_max)
            .map(|j| self.coefficient(j) * c64::from_polar(1.0, f64::from(j) * theta))
            .sum()
    }
}

/// One term `T s(w)` of a medium: the two tensors and their common series.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MediumTerm {
    /// The tensors (`eps_hat` part and `nu_hat` part) multiplying the series.
    pub medium: EquivalentMedium,
    /// The series.
    pub series: HarmonicSeries,
}

/// The medium at one point as at most two terms.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PointMedium {
    terms: [MediumTerm; 2],
    len: usize,
}

impl PointMedium {
    /// A medium that does not depend on `w`.
    pub fn invariant(medium: EquivalentMedium) -> PointMedium {
        let term = MediumTerm {
            medium,
            series: HarmonicSeries::Constant,
        };
        PointMedium {
            terms: [term, term],
            len: 1,
        }
    }

    /// A medium of two terms.
    pub fn two(first: MediumTerm, second: MediumTerm) -> PointMedium {
        PointMedium {
            terms: [first, second],
            len: 2,
        }
    }

    /// The terms.
    pub fn terms(&self) -> &[MediumTerm] {
        &self.terms[..self.len]
    }

    /// The coefficient tensors of harmonic `j`: `sum_t T_t c_{t,j}`.
    pub fn harmonic(&self, j: i32) -> EquivalentMedium {
        let mut out = EquivalentMedium {
            eps_hat: ZERO3,
            nu_hat: ZERO3,
        };
        for t in self.terms() {
            let c = t.series.coefficient(j);
            if c == c64::new(0.0, 0.0) {
                continue;
            }
            for a in 0..3 {
                for b in 0..3 {
                    out.eps_hat[a][b] += t.medium.eps_hat[a][b] * c;
                    out.nu_hat[a][b] += t.medium.nu_hat[a][b] * c;
                }
            }
        }
        out
    }
}

/// The closed-form medium of a twisted ring at one point.
///
/// `uv` are the (stretched, complex inside a PML) section coordinates about the twist
/// centre, `stretch` their Jacobian `d(U, V) / d(u, v)`, `radius` the distance `R` from
/// the ring axis to the twist centre, `tau = half_turns / 2`, and `eps`, `mu` the scalar
/// relative permittivity and permeability. `None` where the map folds (the series of
/// `1/r` does not converge on the circle: the point reaches the axis).
pub fn twisted_ring_medium(
    uv: [c64; 2],
    stretch: [[c64; 2]; 2],
    radius: f64,
    tau: f64,
    eps: c64,
    mu: c64,
) -> Option<PointMedium> {
    let (u, v) = (uv[0], uv[1]);
    let one = c64::new(1.0, 0.0);
    let zero = c64::new(0.0, 0.0);
    let i = c64::new(0.0, 1.0);
    let r0 = c64::new(radius, 0.0);
    // Series of r and 1/r.
    let zeta = u + i * v;
    let zeta_c = u - i * v;
    let d1 = (r0 * r0 - u * u - v * v).sqrt();
    let delta = if (r0 + d1).norm() >= (r0 - d1).norm() {
        d1
    } else {
        -d1
    };
    let a_plus = -zeta / (r0 + delta);
    let a_minus = -zeta_c / (r0 + delta);
    if !(a_plus.norm() < 1.0 && a_minus.norm() < 1.0) || delta.norm() == 0.0 {
        return None;
    }
    let r_series = HarmonicSeries::Trig {
        minus: zeta_c * 0.5,
        zero: r0,
        plus: zeta * 0.5,
    };
    let inv_r_series = HarmonicSeries::Geometric {
        scale: one / delta,
        plus: a_plus,
        minus: a_minus,
    };
    // S extended by 1 in the w slot, its inverse and determinant.
    let det_s = stretch[0][0] * stretch[1][1] - stretch[0][1] * stretch[1][0];
    if det_s.norm() == 0.0 {
        return None;
    }
    let mut s3 = ZERO3;
    s3[0][0] = stretch[0][0];
    s3[0][1] = stretch[0][1];
    s3[1][0] = stretch[1][0];
    s3[1][1] = stretch[1][1];
    s3[2][2] = one;
    let mut s_inv = ZERO3;
    s_inv[0][0] = stretch[1][1] / det_s;
    s_inv[0][1] = -stretch[0][1] / det_s;
    s_inv[1][0] = -stretch[1][0] / det_s;
    s_inv[1][1] = stretch[0][0] / det_s;
    s_inv[2][2] = one;
    let outer = |x: [c64; 3], y: [c64; 3]| -> Tensor3 {
        let mut t = ZERO3;
        for a in 0..3 {
            for b in 0..3 {
                t[a][b] = x[a] * y[b];
            }
        }
        t
    };
    let apply = |m: &Tensor3, x: [c64; 3]| -> [c64; 3] {
        [
            m[0][0] * x[0] + m[0][1] * x[1] + m[0][2] * x[2],
            m[1][0] * x[0] + m[1][1] * x[1] + m[1][2] * x[2],
            m[2][0] * x[0] + m[2][1] * x[1] + m[2][2] * x[2],
        ]
    };
    let transpose_apply = |m: &Tensor3, x: [c64; 3]| -> [c64; 3] {
        [
            m[0][0] * x[0] + m[1][0] * x[1] + m[2][0] * x[2],
            m[0][1] * x[0] + m[1][1] * x[1] + m[2][1] * x[2],
            m[0][2] * x[0] + m[1][2] * x[1] + m[2][2] * x[2],
        ]
    };
    let add = |a: Tensor3, b: Tensor3| -> Tensor3 {
        let mut t = a;
        for x in 0..3 {
            for y in 0..3 {
                t[x][y] += b[x][y];
            }
        }
        t
    };
    let scale = |a: Tensor3, s: c64| -> Tensor3 {
        let mut t = a;
        for row in t.iter_mut() {
            for x in row.iter_mut() {
                *x *= s;
            }
        }
        t
    };
    let tau = c64::new(tau, 0.0);
    // eps: r-part S^-1 P S^-T = sum over the first two columns of S^-1; 1/r-part (S^-1 b)(S^-1 b)^T.
    let col = |k: usize| [s_inv[0][k], s_inv[1][k], s_inv[2][k]];
    let eps_r = add(outer(col(0), col(0)), outer(col(1), col(1)));
    let sb = apply(&s_inv, [tau * v, -tau * u, one]);
    let eps_inv_r = outer(sb, sb);
    // nu: 1/r-part S^T C S with C = d1 d1^T + d2 d2^T; r-part e_w e_w^T.
    let sd1 = transpose_apply(&s3, [one, zero, -tau * v]);
    let sd2 = transpose_apply(&s3, [zero, one, tau * u]);
    let nu_inv_r = add(outer(sd1, sd1), outer(sd2, sd2));
    let nu_r = outer([zero, zero, one], [zero, zero, one]);
    let eps_factor = -eps * det_s;
    let nu_factor = -one / (mu * det_s);
    Some(PointMedium::two(
        MediumTerm {
            medium: EquivalentMedium {
                eps_hat: scale(eps_r, eps_factor),
                nu_hat: scale(nu_r, nu_factor),
            },
            series: r_series,
        },
        MediumTerm {
            medium: EquivalentMedium {
                eps_hat: scale(eps_inv_r, eps_factor),
                nu_hat: scale(nu_inv_r, nu_factor),
            },
            series: inv_r_series,
        },
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::coordinates::{CoordinateMap, Placement, PmlProfile, PmlStretch};
    use crate::media::Material;
    use crate::tensor::max_abs_diff3;

    fn c(x: f64) -> c64 {
        c64::new(x, 0.0)
    }

    #[test]
    fn series_of_inverse_r_sums_to_one_over_r() {
        // 1/(R + rho cos psi) = (1/sqrt(R^2 - rho^2)) (1 + 2 sum (-q)^n cos n psi),
        // q = rho / (R + sqrt(R^2 - rho^2)) (Gradshteyn & Ryzhik 1.447, from memory);
        // checked here by summation at several angles, real and complex points.
        let radius = 3.0;
        for (u, v) in [(c(0.4), c(-0.7)), (c64::new(1.1, 0.3), c64::new(-0.2, 0.5))] {
            let m = twisted_ring_medium(
                [u, v],
                [[c(1.0), c(0.0)], [c(0.0), c(1.0)]],
                radius,
                1.5,
                c(1.0),
                c(1.0),
            )
            .unwrap();
            let series = m.terms()[1].series;
            let trig = m.terms()[0].series;
            for theta in [0.0f64, 0.3, 1.7, -2.9] {
                let r = c(radius) + u * theta.cos() - v * theta.sin();
                let s = series.sum(theta, 80);
                assert!(
                    (s - 1.0 / r).norm() < 1e-14,
                    "1/r at {theta}: {s} vs {}",
                    1.0 / r
                );
                assert!((trig.sum(theta, 1) - r).norm() < 1e-14);
            }
        }
    }

    /// The numeric equivalent medium of the full map at `phi`, and the closed form summed.
    fn compare_at(placement: Placement, pml: PmlStretch, u: f64, v: f64, stretched: bool) {
        let Placement::Ring { radius, half_turns } = placement else {
            unreachable!()
        };
        let tau = 0.5 * half_turns;
        let eps = c64::new(7.5, 0.2);
        let map = CoordinateMap { placement, pml };
        let (uv, s) = if stretched {
            pml.map(u, v)
        } else {
            PmlStretch::None.map(u, v)
        };
        let closed = twisted_ring_medium(uv, s, radius, tau, eps, c(1.0)).unwrap();
        // A fine numerical DFT over one period of the numeric medium gives the same harmonics.
        let samples = 256;
        let period = 2.0 * std::f64::consts::PI / tau;
        let numeric: Vec<EquivalentMedium> = (0..samples)
            .map(|k| {
                let phi = period * k as f64 / samples as f64;
                map.equivalent_medium(&Material::isotropic(eps), u, v, phi, stretched)
                    .unwrap()
            })
            .collect();
        let scale = closed.harmonic(0).eps_hat[2][2].norm();
        for j in -6..=6 {
            let mut dft = EquivalentMedium {
                eps_hat: ZERO3,
                nu_hat: ZERO3,
            };
            for (k, m) in numeric.iter().enumerate() {
                let w = c64::from_polar(
                    1.0 / samples as f64,
                    -2.0 * std::f64::consts::PI * (j * k as i32) as f64 / samples as f64,
                );
                for a in 0..3 {
                    for b in 0..3 {
                        dft.eps_hat[a][b] += m.eps_hat[a][b] * w;
                        dft.nu_hat[a][b] += m.nu_hat[a][b] * w;
                    }
                }
            }
            let h = closed.harmonic(j);
            let de = max_abs_diff3(&dft.eps_hat, &h.eps_hat);
            let dn = max_abs_diff3(&dft.nu_hat, &h.nu_hat);
            assert!(
                de < 1e-12 * scale.max(1.0) && dn < 1e-12,
                "harmonic {j} at ({u}, {v}), stretched {stretched}: eps {de:.2e}, nu {dn:.2e}"
            );
        }
    }

    #[test]
    fn closed_form_harmonics_match_a_fine_dft_of_the_numeric_medium() {
        // Independent check: the equivalent medium det(J) J^-1 eps J^-T computed from the
        // numeric Jacobian of the full map (PML stretch, twist, placement) at 256 angles
        // over one period, transformed by a plain DFT, against the closed form.
        let pml = PmlStretch::Radial {
            centre: [0.0, 0.0],
            inner: 1.0,
            outer: 1.6,
            profile: PmlProfile {
                strength: 0.7,
                power: 2.0,
            },
        };
        for half_turns in [1.0, 2.0, 3.0, -1.0] {
            let placement = Placement::Ring {
                radius: 4.0,
                half_turns,
            };
            // Inside the body region, in the padding, and inside the PML.
            compare_at(placement, pml, 0.3, -0.2, false);
            compare_at(placement, pml, -0.6, 0.7, false);
            compare_at(placement, pml, 1.1, 0.5, true);
            compare_at(placement, pml, -0.9, -1.2, true);
        }
    }

    #[test]
    fn the_map_that_reaches_the_axis_is_refused() {
        assert!(twisted_ring_medium(
            [c(-2.5), c(0.0)],
            [[c(1.0), c(0.0)], [c(0.0), c(1.0)]],
            2.0,
            0.5,
            c(1.0),
            c(1.0)
        )
        .is_none());
    }

    #[test]
    fn harmonics_decay_like_rho_over_two_r() {
        // |a| = rho / (R + sqrt(R^2 - rho^2)), about rho / 2R for a thin ring.
        let m = twisted_ring_medium(
            [c(0.3), c(0.4)],
            [[c(1.0), c(0.0)], [c(0.0), c(1.0)]],
            10.0,
            0.5,
            c(1.0),
            c(1.0),
        )
        .unwrap();
        let q = 0.5 / (10.0 + (100.0f64 - 0.25).sqrt());
        assert!((m.terms()[1].series.decay() - q).abs() < 1e-15);
        assert!((q - 0.5 / 20.0).abs() < 1e-4);
    }
}
