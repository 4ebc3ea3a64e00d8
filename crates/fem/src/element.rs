//! Reference elements on the triangle with vertices `(0,0), (1,0), (0,1)`.
//!
//! Barycentric coordinates `l0 = 1 - xi - eta`, `l1 = xi`, `l2 = eta`; local
//! edge `k` runs from vertex `k` to vertex `k + 1 (mod 3)`, as in the mesh.
//!
//! Transverse field `(e_u, e_v)`: Nédélec elements of the first kind, built
//! hierarchically so that every edge degree of freedom is conforming:
//!
//! | local index | function                         | kind                         |
//! |-------------|----------------------------------|------------------------------|
//! | 0..3        | `W_k = l_a grad l_b - l_b grad l_a` (Whitney, `a = k, b = k+1`) | edge, flips with orientation |
//! | 3..6        | `grad(l_a l_b)` of edge `k`        | edge, orientation free       |
//! | 6, 7        | `l2 W_0`, `l0 W_1`                  | interior (zero tangential trace on every edge) |
//!
//! Order 1 uses the first three (complete P0 plus rotation); order 2 all eight
//! (complete P1 plus two face functions; dimension 8). The third component
//! `e_w` uses Lagrange elements: `l0, l1, l2`, plus for order 2 the edge
//! bubbles `4 l_a l_b` (hierarchical, orientation free). Since `grad l_i` is a
//! combination of Whitney functions and `grad(l_a l_b)` is itself a basis
//! function, `grad(Lagrange_k)` lies inside `Nedelec_k`: the discrete exact sequence.

/// Polynomial order of the elements (Nédélec of the first kind, matching Lagrange).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Order {
    /// Whitney edge elements with linear Lagrange.
    One,
    /// Second-order Nédélec (8 functions) with quadratic Lagrange.
    Two,
}

impl Order {
    /// Transverse (edge-element) functions per triangle: 3 or 8.
    pub fn transverse_per_triangle(self) -> usize {
        match self {
            Order::One => 3,
            Order::Two => 8,
        }
    }
    /// Scalar (Lagrange) functions per triangle: 3 or 6.
    pub fn scalar_per_triangle(self) -> usize {
        match self {
            Order::One => 3,
            Order::Two => 6,
        }
    }
    /// Polynomial degree (1 or 2).
    pub fn degree(self) -> usize {
        match self {
            Order::One => 1,
            Order::Two => 2,
        }
    }
}

/// Gradients of the barycentric coordinates in reference coordinates.
pub const GRAD_BARYCENTRIC: [[f64; 2]; 3] = [[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]];

/// Barycentric coordinates of a reference point.
#[inline]
pub fn barycentric(xi: f64, eta: f64) -> [f64; 3] {
    [1.0 - xi - eta, xi, eta]
}

#[inline]
fn cross(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[1] - a[1] * b[0]
}

/// Whitney function of local edge `k` and its (constant) curl, reference coordinates.
#[inline]
fn whitney(l: &[f64; 3], k: usize) -> ([f64; 2], f64) {
    whitney_pair(l, k, (k + 1) % 3)
}

/// Transverse reference functions at `(xi, eta)`: vector values (components
/// along `xi, eta`) and scalar curls `d_xi N_eta - d_eta N_xi`. Slices must
/// hold [`Order::transverse_per_triangle`] entries.
pub fn nedelec_reference(
    order: Order,
    xi: f64,
    eta: f64,
    values: &mut [[f64; 2]],
    curls: &mut [f64],
) {
    let l = barycentric(xi, eta);
    for k in 0..3 {
        let (w, c) = whitney(&l, k);
        values[k] = w;
        curls[k] = c;
    }
    if order == Order::One {
        return;
    }
    for k in 0..3 {
        let (a, b) = (k, (k + 1) % 3);
        let (ga, gb) = (GRAD_BARYCENTRIC[a], GRAD_BARYCENTRIC[b]);
        values[3 + k] = [l[a] * gb[0] + l[b] * ga[0], l[a] * gb[1] + l[b] * ga[1]];
        curls[3 + k] = 0.0;
    }
    faces(IDENTITY_FACES, &l, values, curls);
}

/// The vertex labels of the default face functions: `l_2 W_01` and `l_0 W_12`.
pub const IDENTITY_FACES: [u8; 3] = [0, 1, 2];

/// [`nedelec_reference`] with the two face functions built on the vertex labels `p`
/// (a permutation of `0, 1, 2`): `l_p2 W_(p0 p1)` and `l_p0 W_(p1 p2)`. The three
/// functions `l_c W_ab` of a triangle sum to zero, so any labelling spans the same
/// face space; a labelling lets the face functions of a mirror-image triangle be the
/// exact images of the original's (a reflection reverses the vertex order).
pub fn nedelec_reference_with_faces(
    order: Order,
    p: [u8; 3],
    xi: f64,
    eta: f64,
    values: &mut [[f64; 2]],
    curls: &mut [f64],
) {
    nedelec_reference(order, xi, eta, values, curls);
    if order == Order::Two && p != IDENTITY_FACES {
        faces(p, &barycentric(xi, eta), values, curls);
    }
}

/// `l_a grad l_b - l_b grad l_a` and its curl, for any vertex pair.
#[inline]
fn whitney_pair(l: &[f64; 3], a: usize, b: usize) -> ([f64; 2], f64) {
    let (ga, gb) = (GRAD_BARYCENTRIC[a], GRAD_BARYCENTRIC[b]);
    (
        [l[a] * gb[0] - l[b] * ga[0], l[a] * gb[1] - l[b] * ga[1]],
        2.0 * cross(ga, gb),
    )
}

/// The face functions `l_p2 W_(p0 p1)` and `l_p0 W_(p1 p2)` into slots 6 and 7.
fn faces(p: [u8; 3], l: &[f64; 3], values: &mut [[f64; 2]], curls: &mut [f64]) {
    let p = p.map(usize::from);
    for (slot, (c, a, b)) in [(p[2], p[0], p[1]), (p[0], p[1], p[2])]
        .into_iter()
        .enumerate()
    {
        let (w, cw) = whitney_pair(l, a, b);
        let gc = GRAD_BARYCENTRIC[c];
        values[6 + slot] = [l[c] * w[0], l[c] * w[1]];
        curls[6 + slot] = cross(gc, w) + l[c] * cw;
    }
}

/// Lagrange reference functions at `(xi, eta)`: values and reference gradients.
/// Slices must hold [`Order::scalar_per_triangle`] entries.
pub fn lagrange_reference(
    order: Order,
    xi: f64,
    eta: f64,
    values: &mut [f64],
    gradients: &mut [[f64; 2]],
) {
    let l = barycentric(xi, eta);
    values[..3].copy_from_slice(&l);
    gradients[..3].copy_from_slice(&GRAD_BARYCENTRIC);
    if order == Order::One {
        return;
    }
    for k in 0..3 {
        let (a, b) = (k, (k + 1) % 3);
        let (ga, gb) = (GRAD_BARYCENTRIC[a], GRAD_BARYCENTRIC[b]);
        values[3 + k] = 4.0 * l[a] * l[b];
        gradients[3 + k] = [
            4.0 * (l[a] * gb[0] + l[b] * ga[0]),
            4.0 * (l[a] * gb[1] + l[b] * ga[1]),
        ];
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Reference vertex coordinates.
    const VERTS: [[f64; 2]; 3] = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];

    /// Tangential moment of function `i` along local edge `k`: integral of N . t ds
    /// with t the unnormalised edge vector (5-point Gauss on the edge).
    fn edge_moment(order: Order, i: usize, k: usize, weight: impl Fn(f64) -> f64) -> f64 {
        let (p, q) = (VERTS[k], VERTS[(k + 1) % 3]);
        let t = [q[0] - p[0], q[1] - p[1]];
        let (x, w) = crate::quadrature::gauss_legendre_unit(5);
        let mut vals = [[0.0; 2]; 8];
        let mut curls = [0.0; 8];
        x.iter()
            .zip(&w)
            .map(|(s, ws)| {
                let pt = [p[0] + s * t[0], p[1] + s * t[1]];
                nedelec_reference(order, pt[0], pt[1], &mut vals, &mut curls);
                ws * weight(*s) * (vals[i][0] * t[0] + vals[i][1] * t[1])
            })
            .sum()
    }

    #[test]
    fn whitney_functions_have_unit_circulation_on_their_own_edge_only() {
        // Source: Whitney forms, the defining property of the lowest-order edge
        // element (Monk, Finite Element Methods for Maxwell's Equations, sec. 5.5).
        for i in 0..3 {
            for k in 0..3 {
                let m = edge_moment(Order::One, i, k, |_| 1.0);
                let expect = if i == k { 1.0 } else { 0.0 };
                assert!((m - expect).abs() < 1e-14, "W_{i} on edge {k}: {m}");
            }
        }
    }

    #[test]
    fn second_order_extra_functions_have_the_expected_edge_traces() {
        // Gradient bubbles: zero circulation on every edge, nonzero first moment on
        // their own edge only; face functions: zero tangential trace everywhere.
        for i in 3..8 {
            for k in 0..3 {
                let m0 = edge_moment(Order::Two, i, k, |_| 1.0);
                let m1 = edge_moment(Order::Two, i, k, |s| s - 0.5);
                assert!(m0.abs() < 1e-14, "function {i} edge {k}: {m0}");
                if i - 3 == k {
                    assert!(m1.abs() > 0.1, "function {i} edge {k}: {m1}");
                } else {
                    assert!(m1.abs() < 1e-14, "function {i} edge {k}: {m1}");
                }
            }
        }
    }

    #[test]
    fn face_labellings_span_one_space() {
        // l2 W01 + l0 W12 + l1 W20 = 0 (expand the three products): any two of the
        // three functions span the face space, whatever the labelling.
        let (x, y) = (0.21, 0.33);
        let mut v = [[0.0; 2]; 8];
        let mut c = [0.0; 8];
        let mut vp = [[0.0; 2]; 8];
        let mut cp = [0.0; 8];
        nedelec_reference(Order::Two, x, y, &mut v, &mut c);
        nedelec_reference_with_faces(Order::Two, [1, 2, 0], x, y, &mut vp, &mut cp);
        // Labels (1, 2, 0): l0 W12 and l1 W20 = -(l2 W01 + l0 W12).
        for d in 0..2 {
            assert!((vp[6][d] - v[7][d]).abs() < 1e-15);
            assert!((vp[7][d] + v[6][d] + v[7][d]).abs() < 1e-15);
        }
        assert!((cp[7] + c[6] + c[7]).abs() < 1e-14);
        for k in 0..6 {
            assert_eq!(v[k], vp[k]);
        }
    }

    #[test]
    fn curls_match_finite_differences() {
        let h = 1e-6;
        let (x, y) = (0.23, 0.31);
        let mut v = [[0.0; 2]; 8];
        let mut c = [0.0; 8];
        let mut vp = [[0.0; 2]; 8];
        let mut vm = [[0.0; 2]; 8];
        let mut d = [0.0; 8];
        nedelec_reference(Order::Two, x, y, &mut v, &mut c);
        let mut fd = [0.0; 8];
        nedelec_reference(Order::Two, x + h, y, &mut vp, &mut d);
        nedelec_reference(Order::Two, x - h, y, &mut vm, &mut d);
        for i in 0..8 {
            fd[i] += (vp[i][1] - vm[i][1]) / (2.0 * h);
        }
        nedelec_reference(Order::Two, x, y + h, &mut vp, &mut d);
        nedelec_reference(Order::Two, x, y - h, &mut vm, &mut d);
        for i in 0..8 {
            fd[i] -= (vp[i][0] - vm[i][0]) / (2.0 * h);
            assert!(
                (fd[i] - c[i]).abs() < 1e-8,
                "curl {i}: {} vs {}",
                c[i],
                fd[i]
            );
        }
    }
}
