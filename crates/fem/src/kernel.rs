//! The element kernel: per quadrature point, the basis once and the parts of the forms
//! that do not depend on the azimuthal orders.
//!
//! A trial field `e exp(i n w)` has curl `c0(e) + n c1(e)` and a test field
//! `f exp(-i n' w)` has curl `c0(f) - n' c1(f)`, with
//!
//! ```text
//!   c0 = (d_v e_w, -d_u e_w, d_u e_v - d_v e_u),   c1 = (-i e_v, i e_u, 0)
//! ```
//!
//! so the curl-curl form of test order `n'` and trial order `n` is bilinear in the orders:
//!
//! ```text
//!   K(n', n) = S00 + n S01 - n' S10 - n' n S11,   S_ab = int c_a(f)^T nu_hat c_b(e) du dv
//!   M        = int f^T eps_hat e du dv
//! ```
//!
//! [`element_parts`] computes `S00, S01, S10, S11` and `M` of one triangle for every
//! requested coefficient harmonic `j` of a medium given as a short sum of tensors times
//! known series ([`crate::harmonics::PointMedium`]): the basis and the tensor products
//! are evaluated once per quadrature point, and each harmonic is a weighted sum of them.
//! An untwisted body has one harmonic (`j = 0`); block `(l, k)` of a twisted ring uses
//! harmonic `j = l - k` with orders `n' = m + l tau`, `n = m + k tau`.
use num_complex::Complex64 as c64;

use crate::coordinates::EquivalentMedium;
use crate::element::{lagrange_reference, nedelec_reference_with_faces, Order};
use crate::geometry::ElementGeometry;
use crate::harmonics::PointMedium;
use crate::quadrature::TriangleRule;

/// Largest number of local functions (order 2: 8 transverse + 6 Lagrange).
pub const MAX_LOCAL: usize = 14;

/// Number of order-independent parts: `S00, S01, S10, S11, M`.
pub const PARTS: usize = 5;

/// Index of each part in [`ElementParts::parts`] and in assembled part arrays.
pub mod part {
    /// `S00 = int c0^T nu c0`.
    pub const S00: usize = 0;
    /// `S01 = int c0^T nu c1`.
    pub const S01: usize = 1;
    /// `S10 = int c1^T nu c0`.
    pub const S10: usize = 2;
    /// `S11 = int c1^T nu c1`.
    pub const S11: usize = 3;
    /// `M = int f^T eps e`.
    pub const MASS: usize = 4;
}

/// The curl-curl value of test order `n_test` and trial order `n_trial` from the parts.
#[inline]
pub fn combine_stiffness(s: [c64; 4], n_test: f64, n_trial: f64) -> c64 {
    s[0] + s[1] * n_trial - s[2] * n_test - s[3] * (n_test * n_trial)
}

/// The parts of one triangle, for each requested harmonic: row = test function,
/// column = trial function, local functions in the order of [`crate::element`], before
/// edge signs.
#[derive(Clone, Debug, PartialEq)]
pub struct ElementParts {
    /// Number of local functions.
    pub len: usize,
    /// The harmonics `j`, in the order of `parts`.
    pub harmonics: Vec<i32>,
    /// `parts[h][p]` is part `p` ([`part`]) of harmonic `harmonics[h]`, row-major `len x len`.
    pub parts: Vec<[Vec<c64>; PARTS]>,
}

impl ElementParts {
    /// The curl-curl matrix of harmonic slot `h` for the given orders, row-major.
    pub fn stiffness(&self, h: usize, n_test: f64, n_trial: f64) -> Vec<c64> {
        let p = &self.parts[h];
        (0..self.len * self.len)
            .map(|i| combine_stiffness([p[0][i], p[1][i], p[2][i], p[3][i]], n_test, n_trial))
            .collect()
    }
}

/// The real basis vectors of every local function at one point: value, `c0`, and
/// `c1 / i` (so `c1 = i c1_real`).
struct PointBasis {
    value: [[f64; 3]; MAX_LOCAL],
    c0: [[f64; 3]; MAX_LOCAL],
    c1: [[f64; 3]; MAX_LOCAL],
    /// Local functions with a nonzero `c1` (the transverse ones) come first.
    transverse: usize,
    len: usize,
}

impl PointBasis {
    fn at(
        geometry: &ElementGeometry,
        order: Order,
        faces: [u8; 3],
        xi: f64,
        eta: f64,
    ) -> (PointBasis, [f64; 2], f64) {
        let nt = order.transverse_per_triangle();
        let ns = order.scalar_per_triangle();
        let mut ned_values = [[0.0; 2]; 8];
        let mut ned_curls = [0.0; 8];
        let mut lag_values = [0.0; 6];
        let mut lag_grads = [[0.0; 2]; 6];
        let mapped = geometry.map(xi, eta);
        nedelec_reference_with_faces(order, faces, xi, eta, &mut ned_values, &mut ned_curls);
        lagrange_reference(order, xi, eta, &mut lag_values, &mut lag_grads);
        let mut b = PointBasis {
            value: [[0.0; 3]; MAX_LOCAL],
            c0: [[0.0; 3]; MAX_LOCAL],
            c1: [[0.0; 3]; MAX_LOCAL],
            transverse: nt,
            len: nt + ns,
        };
        for k in 0..nt {
            let a = mapped.covariant(ned_values[k]);
            b.value[k] = [a[0], a[1], 0.0];
            b.c0[k] = [0.0, 0.0, ned_curls[k] / mapped.det];
            b.c1[k] = [-a[1], a[0], 0.0];
        }
        for k in 0..ns {
            let g = mapped.covariant(lag_grads[k]);
            b.value[nt + k] = [0.0, 0.0, lag_values[k]];
            b.c0[nt + k] = [g[1], -g[0], 0.0];
        }
        (b, mapped.x, mapped.det)
    }
}

#[inline]
fn apply(t: &[[c64; 3]; 3], x: &[f64; 3]) -> [c64; 3] {
    [
        t[0][0] * x[0] + t[0][1] * x[1] + t[0][2] * x[2],
        t[1][0] * x[0] + t[1][1] * x[1] + t[1][2] * x[2],
        t[2][0] * x[0] + t[2][1] * x[1] + t[2][2] * x[2],
    ]
}

#[inline]
fn dot(x: &[f64; 3], y: &[c64; 3]) -> c64 {
    y[0] * x[0] + y[1] * x[1] + y[2] * x[2]
}

/// Adds `weight` times the parts of the tensors `medium` at one point to `acc`
/// (five `len x len` row-major matrices).
fn accumulate(b: &PointBasis, medium: &EquivalentMedium, weight: c64, acc: &mut [Vec<c64>; PARTS]) {
    let n = b.len;
    let nt = b.transverse;
    let i = c64::new(0.0, 1.0);
    for col in 0..n {
        let nu_c0 = apply(&medium.nu_hat, &b.c0[col]);
        let eps_v = apply(&medium.eps_hat, &b.value[col]);
        for row in 0..n {
            acc[part::S00][row * n + col] += dot(&b.c0[row], &nu_c0) * weight;
            acc[part::MASS][row * n + col] += dot(&b.value[row], &eps_v) * weight;
        }
        // c1 = i c1_real: S10 = i int c1r^T nu c0 (rows with c1), and below S01, S11.
        for row in 0..nt {
            acc[part::S10][row * n + col] += dot(&b.c1[row], &nu_c0) * (weight * i);
        }
        if col < nt {
            let nu_c1 = apply(&medium.nu_hat, &b.c1[col]);
            for row in 0..n {
                acc[part::S01][row * n + col] += dot(&b.c0[row], &nu_c1) * (weight * i);
            }
            for row in 0..nt {
                // (i c1r)^T nu (i c1r) = -c1r^T nu c1r.
                acc[part::S11][row * n + col] -= dot(&b.c1[row], &nu_c1) * weight;
            }
        }
    }
}

/// The parts of one triangle for each harmonic in `harmonics`, by quadrature, with the
/// face functions built on the vertex labels `faces`. `medium(u, v)` gives the medium
/// at a physical point (`None`: the map is singular there, reported as the point).
pub fn element_parts(
    geometry: &ElementGeometry,
    order: Order,
    faces: [u8; 3],
    rule: &TriangleRule,
    harmonics: &[i32],
    medium: impl Fn(f64, f64) -> Option<PointMedium>,
) -> Result<ElementParts, [f64; 2]> {
    let n = order.transverse_per_triangle() + order.scalar_per_triangle();
    let zero = c64::new(0.0, 0.0);
    let mut parts: Vec<[Vec<c64>; PARTS]> = harmonics
        .iter()
        .map(|_| std::array::from_fn(|_| vec![zero; n * n]))
        .collect();
    // Per point and term: the unit-weight parts, then each harmonic adds its multiple.
    let mut unit: [Vec<c64>; PARTS] = std::array::from_fn(|_| vec![zero; n * n]);
    for (point, weight) in rule.points.iter().zip(&rule.weights) {
        let (basis, x, det) = PointBasis::at(geometry, order, faces, point[0], point[1]);
        let point_medium = medium(x[0], x[1]).ok_or(x)?;
        let dx = weight * det;
        for term in point_medium.terms() {
            let coefficients: Vec<c64> = harmonics
                .iter()
                .map(|&j| term.series.coefficient(j))
                .collect();
            let nonzero: Vec<usize> = (0..harmonics.len())
                .filter(|&h| coefficients[h] != zero)
                .collect();
            match nonzero.as_slice() {
                [] => continue,
                [h] => {
                    // One harmonic (untwisted media): accumulate in place.
                    accumulate(&basis, &term.medium, coefficients[*h] * dx, &mut parts[*h]);
                }
                _ => {
                    for u in unit.iter_mut() {
                        u.fill(zero);
                    }
                    accumulate(&basis, &term.medium, c64::new(dx, 0.0), &mut unit);
                    for &h in &nonzero {
                        let c = coefficients[h];
                        for (target, source) in parts[h].iter_mut().zip(&unit) {
                            for (t, s) in target.iter_mut().zip(source) {
                                *t += s * c;
                            }
                        }
                    }
                }
            }
        }
    }
    Ok(ElementParts {
        len: n,
        harmonics: harmonics.to_vec(),
        parts,
    })
}
