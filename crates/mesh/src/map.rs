//! The map from the reference triangle to a mesh triangle, its Jacobian,
//! and its inverse.
//!
//! The reference triangle has vertices `(0, 0)`, `(1, 0)`, `(0, 1)` in
//! `(xi, eta)`; with `l0 = 1 - xi - eta`, a straight triangle maps by the
//! barycentric weights `(l0, xi, eta)` of its vertices, a quadratic (6-node)
//! one by the quadratic Lagrange shape functions
//! `l0 (2 l0 - 1), xi (2 xi - 1), eta (2 eta - 1), 4 l0 xi, 4 xi eta, 4 eta l0`
//! of its vertices and mid-side nodes (node order as in [`crate::Triangle`]).
//!
//! The inverse (a physical point to reference coordinates) is exact for both:
//! a straight triangle's is the barycentric solve; a quadratic triangle's is
//! found by Newton's method on `x(xi, eta) = p` started from the straight
//! triangle's solution, with a backtracking line search (standard damped
//! Newton; Nocedal & Wright, *Numerical Optimization*, 2nd ed., ch. 11).
//!
//! [`BoundingBox`] is the axis-aligned box type used for triangles, regions
//! and whole meshes. A triangle's box is exact for curved sides: a valid map
//! (positive Jacobian) sends the reference triangle's interior to the inside
//! of the image of its boundary, so the box of the three side curves (each a
//! parabola, whose extremes are found in closed form) bounds the triangle.

/// Largest Newton iterations in [`TriangleMap::invert_from`].
const NEWTON_ITERATIONS: usize = 40;

/// Newton stops once the residual is at most this fraction of the
/// triangle's size (plus the rounding of the coordinates themselves).
const NEWTON_RESIDUAL: f64 = 1e-13;

/// An axis-aligned box `min ..= max` in the section plane, metres.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BoundingBox {
    /// Lower-left corner `(u_min, v_min)`.
    pub min: [f64; 2],
    /// Upper-right corner `(u_max, v_max)`.
    pub max: [f64; 2],
}

impl BoundingBox {
    /// The box of one point.
    pub fn at(p: [f64; 2]) -> BoundingBox {
        BoundingBox { min: p, max: p }
    }

    /// The smallest box holding all `points`; `None` when there are none.
    pub fn of_points(points: impl IntoIterator<Item = [f64; 2]>) -> Option<BoundingBox> {
        let mut it = points.into_iter();
        let first = BoundingBox::at(it.next()?);
        Some(it.fold(first, BoundingBox::including))
    }

    /// This box grown to hold `p`.
    pub fn including(self, p: [f64; 2]) -> BoundingBox {
        BoundingBox {
            min: [self.min[0].min(p[0]), self.min[1].min(p[1])],
            max: [self.max[0].max(p[0]), self.max[1].max(p[1])],
        }
    }

    /// The smallest box holding both.
    pub fn union(self, other: BoundingBox) -> BoundingBox {
        self.including(other.min).including(other.max)
    }

    /// The box widened by `margin` on every side.
    pub fn expanded(self, margin: f64) -> BoundingBox {
        BoundingBox {
            min: [self.min[0] - margin, self.min[1] - margin],
            max: [self.max[0] + margin, self.max[1] + margin],
        }
    }

    /// True when `p` lies in the closed box.
    #[inline]
    pub fn contains(&self, p: [f64; 2]) -> bool {
        p[0] >= self.min[0] && p[0] <= self.max[0] && p[1] >= self.min[1] && p[1] <= self.max[1]
    }

    /// Centre `((u_min + u_max) / 2, (v_min + v_max) / 2)`.
    pub fn centre(&self) -> [f64; 2] {
        [
            0.5 * (self.min[0] + self.max[0]),
            0.5 * (self.min[1] + self.max[1]),
        ]
    }

    /// Extents `(u_max - u_min, v_max - v_min)`.
    pub fn size(&self) -> [f64; 2] {
        [self.max[0] - self.min[0], self.max[1] - self.min[1]]
    }

    /// The box as `[u_min, u_max, v_min, v_max]` (the layout used elsewhere
    /// for windows and PML boxes).
    pub fn to_array(&self) -> [f64; 4] {
        [self.min[0], self.max[0], self.min[1], self.max[1]]
    }
}

/// The map of one triangle at a reference point: the physical point and the
/// Jacobian `G = d(u, v) / d(xi, eta)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapPoint {
    /// Physical point `(u, v)`.
    pub x: [f64; 2],
    /// `jacobian[c][j]` is `d x_c / d r_j` with `r = (xi, eta)`.
    pub jacobian: [[f64; 2]; 2],
}

impl MapPoint {
    /// Jacobian determinant (> 0 inside a valid, counter-clockwise triangle).
    #[inline]
    pub fn det(&self) -> f64 {
        let g = &self.jacobian;
        g[0][0] * g[1][1] - g[0][1] * g[1][0]
    }

    /// `G^-T`: maps reference gradients (and covariant vectors) to physical ones.
    #[inline]
    pub fn inverse_transpose(&self) -> [[f64; 2]; 2] {
        let g = &self.jacobian;
        let det = self.det();
        // G^-1 = [[g11, -g01], [-g10, g00]] / det; G^-T is its transpose.
        [
            [g[1][1] / det, -g[1][0] / det],
            [-g[0][1] / det, g[0][0] / det],
        ]
    }

    /// `G^-1 d`: the reference displacement that moves the point by `d` (to first order).
    #[inline]
    pub fn solve(&self, d: [f64; 2]) -> [f64; 2] {
        let g = &self.jacobian;
        let det = self.det();
        [
            (g[1][1] * d[0] - g[0][1] * d[1]) / det,
            (g[0][0] * d[1] - g[1][0] * d[0]) / det,
        ]
    }
}

/// The shape functions of the geometry and their `xi` and `eta` derivatives
/// at one reference point (entries 3..6 are zero for a straight triangle).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShapeFunctions {
    /// Values.
    pub value: [f64; 6],
    /// Derivatives along `xi`.
    pub d_xi: [f64; 6],
    /// Derivatives along `eta`.
    pub d_eta: [f64; 6],
}

impl ShapeFunctions {
    /// The straight (`quadratic == false`) or quadratic shape functions at `(xi, eta)`.
    pub fn at(quadratic: bool, xi: f64, eta: f64) -> ShapeFunctions {
        let l0 = 1.0 - xi - eta;
        if quadratic {
            ShapeFunctions {
                value: [
                    l0 * (2.0 * l0 - 1.0),
                    xi * (2.0 * xi - 1.0),
                    eta * (2.0 * eta - 1.0),
                    4.0 * l0 * xi,
                    4.0 * xi * eta,
                    4.0 * eta * l0,
                ],
                d_xi: [
                    1.0 - 4.0 * l0,
                    4.0 * xi - 1.0,
                    0.0,
                    4.0 * (l0 - xi),
                    4.0 * eta,
                    -4.0 * eta,
                ],
                d_eta: [
                    1.0 - 4.0 * l0,
                    0.0,
                    4.0 * eta - 1.0,
                    -4.0 * xi,
                    4.0 * xi,
                    4.0 * (l0 - eta),
                ],
            }
        } else {
            ShapeFunctions {
                value: [l0, xi, eta, 0.0, 0.0, 0.0],
                d_xi: [-1.0, 1.0, 0.0, 0.0, 0.0, 0.0],
                d_eta: [-1.0, 0.0, 1.0, 0.0, 0.0, 0.0],
            }
        }
    }
}

/// The geometry map of one straight (3-node) or quadratic (6-node) triangle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TriangleMap {
    nodes: [[f64; 2]; 6],
    quadratic: bool,
}

impl TriangleMap {
    /// Straight triangle through three vertices.
    pub fn straight(vertices: [[f64; 2]; 3]) -> TriangleMap {
        let mut nodes = [[0.0; 2]; 6];
        nodes[..3].copy_from_slice(&vertices);
        TriangleMap {
            nodes,
            quadratic: false,
        }
    }

    /// Quadratic triangle: three vertices, then the mid-side nodes of the
    /// sides 0-1, 1-2, 2-0.
    pub fn quadratic(nodes: [[f64; 2]; 6]) -> TriangleMap {
        TriangleMap {
            nodes,
            quadratic: true,
        }
    }

    /// A map from node coordinates: 3 make a straight triangle, 6 a
    /// quadratic one; `None` for any other count.
    pub fn from_nodes(nodes: &[[f64; 2]]) -> Option<TriangleMap> {
        match nodes.len() {
            3 => Some(TriangleMap::straight([nodes[0], nodes[1], nodes[2]])),
            6 => {
                let mut n = [[0.0; 2]; 6];
                n.copy_from_slice(nodes);
                Some(TriangleMap::quadratic(n))
            }
            _ => None,
        }
    }

    /// True for a 6-node triangle.
    pub fn is_quadratic(&self) -> bool {
        self.quadratic
    }

    /// The geometric nodes (3 or 6).
    pub fn nodes(&self) -> &[[f64; 2]] {
        &self.nodes[..if self.quadratic { 6 } else { 3 }]
    }

    /// The vertices.
    pub fn vertices(&self) -> [[f64; 2]; 3] {
        [self.nodes[0], self.nodes[1], self.nodes[2]]
    }

    /// The shape functions of this triangle's geometry at `(xi, eta)`
    /// (for interpolating nodal values with the geometry's own functions).
    pub fn shape(&self, xi: f64, eta: f64) -> ShapeFunctions {
        ShapeFunctions::at(self.quadratic, xi, eta)
    }

    /// The physical point of the reference point `(xi, eta)`.
    pub fn point(&self, xi: f64, eta: f64) -> [f64; 2] {
        let w = ShapeFunctions::at(self.quadratic, xi, eta).value;
        let mut x = [0.0; 2];
        for (wk, node) in w.iter().zip(&self.nodes) {
            for c in 0..2 {
                x[c] += wk * node[c];
            }
        }
        x
    }

    /// The physical point and the Jacobian at `(xi, eta)`.
    pub fn at(&self, xi: f64, eta: f64) -> MapPoint {
        let s = ShapeFunctions::at(self.quadratic, xi, eta);
        let mut x = [0.0; 2];
        let mut g = [[0.0; 2]; 2];
        for k in 0..6 {
            for c in 0..2 {
                x[c] += s.value[k] * self.nodes[k][c];
                g[c][0] += s.d_xi[k] * self.nodes[k][c];
                g[c][1] += s.d_eta[k] * self.nodes[k][c];
            }
        }
        MapPoint { x, jacobian: g }
    }

    /// The point at parameter `s` in `[0, 1]` along side `k` (from vertex
    /// `k` to vertex `k + 1 mod 3`), on the curve for a quadratic triangle.
    pub fn side_point(&self, k: usize, s: f64) -> [f64; 2] {
        match k % 3 {
            0 => self.point(s, 0.0),
            1 => self.point(1.0 - s, s),
            _ => self.point(0.0, 1.0 - s),
        }
    }

    /// Area: exact for both orders (a quadratic triangle's Jacobian
    /// determinant is a quadratic polynomial, which the three-point
    /// mid-side rule integrates exactly). Positive when counter-clockwise.
    pub fn area(&self) -> f64 {
        if !self.quadratic {
            let [a, b, c] = self.vertices();
            return 0.5 * ((b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]));
        }
        [(0.5, 0.0), (0.5, 0.5), (0.0, 0.5)]
            .iter()
            .map(|&(x, y)| self.at(x, y).det() / 6.0)
            .sum()
    }

    /// Largest vertex-to-vertex distance.
    pub fn size(&self) -> f64 {
        let v = self.vertices();
        (0..3)
            .map(|k| {
                let (p, q) = (v[k], v[(k + 1) % 3]);
                (p[0] - q[0]).hypot(p[1] - q[1])
            })
            .fold(0.0, f64::max)
    }

    /// Exact bounding box of the triangle (curved sides included).
    pub fn bounding_box(&self) -> BoundingBox {
        let v = self.vertices();
        let mut b = BoundingBox::at(v[0]).including(v[1]).including(v[2]);
        if self.quadratic {
            for k in 0..3 {
                let (a, m, e) = (v[k], self.nodes[3 + k], v[(k + 1) % 3]);
                for c in 0..2 {
                    // x(s) = a (1-s)(1-2s) + e s(2s-1) + 4 m s(1-s);
                    // x'(s) = 0 at s = (3a + e - 4m) / (4a + 4e - 8m).
                    let den = 4.0 * (a[c] + e[c] - 2.0 * m[c]);
                    if den != 0.0 {
                        let s = (3.0 * a[c] + e[c] - 4.0 * m[c]) / den;
                        if s > 0.0 && s < 1.0 {
                            b = b.including(self.side_point(k, s));
                        }
                    }
                }
            }
        }
        b
    }

    /// Reference coordinates of `p` in the straight triangle through the
    /// vertices (exact for a straight triangle; the start of Newton's
    /// method for a quadratic one). Not clamped: outside points give
    /// coordinates outside the reference triangle.
    pub fn straight_inverse(&self, p: [f64; 2]) -> [f64; 2] {
        let [a, b, c] = self.vertices();
        let det = (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]);
        let xi = ((p[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (p[1] - a[1])) / det;
        let eta = ((b[0] - a[0]) * (p[1] - a[1]) - (p[0] - a[0]) * (b[1] - a[1])) / det;
        [xi, eta]
    }

    /// Newton's method for `x(xi, eta) = p` from `guess`, with a
    /// backtracking line search. Returns the converged reference point
    /// (possibly outside the reference triangle), or `None` when Newton
    /// does not converge (a singular Jacobian on the way, or no progress).
    /// Converged means a residual of at most 1e-13 of the triangle's size
    /// plus the rounding of the coordinates.
    pub fn invert_from(&self, p: [f64; 2], guess: [f64; 2]) -> Option<[f64; 2]> {
        if !self.quadratic {
            return Some(self.straight_inverse(p));
        }
        let scale = p[0].abs().max(p[1].abs());
        let tol = NEWTON_RESIDUAL * self.size() + 8.0 * f64::EPSILON * scale;
        let mut r = guess;
        let residual = |r: [f64; 2]| {
            let m = self.at(r[0], r[1]);
            let d = [m.x[0] - p[0], m.x[1] - p[1]];
            (m, d, d[0].hypot(d[1]))
        };
        let (mut m, mut d, mut norm) = residual(r);
        for _ in 0..NEWTON_ITERATIONS {
            if norm <= tol {
                return Some(r);
            }
            let step = m.solve(d);
            let det = m.det();
            if det.is_nan() || det <= 0.0 || !step[0].is_finite() || !step[1].is_finite() {
                return None;
            }
            let mut t = 1.0;
            loop {
                let trial = [r[0] - t * step[0], r[1] - t * step[1]];
                let (tm, td, tn) = residual(trial);
                if tn < norm || t < 1.0 / 64.0 {
                    if tn >= norm {
                        return None;
                    }
                    (r, m, d, norm) = (trial, tm, td, tn);
                    break;
                }
                t *= 0.5;
            }
            // Far outside the reference triangle: the point is not in this one.
            if r[0].abs() > 4.0 || r[1].abs() > 4.0 {
                return None;
            }
        }
        (norm <= tol).then_some(r)
    }

    /// Reference coordinates of `p`: exact for a straight triangle; for a
    /// quadratic one, Newton's method ([`TriangleMap::invert_from`]) from
    /// the straight triangle's solution, then (should that fail or land
    /// outside the reference triangle) from that solution clamped into the
    /// triangle and from the centroid. A root inside the reference triangle
    /// (within `tol` in reference coordinates) is preferred; `None` when
    /// no start converges.
    pub fn invert(&self, p: [f64; 2], tol: f64) -> Option<[f64; 2]> {
        let straight = self.straight_inverse(p);
        if !self.quadratic {
            return Some(straight);
        }
        let mut found = None;
        for guess in [straight, clamp_to_reference(straight), [1.0 / 3.0; 2]] {
            if let Some(r) = self.invert_from(p, guess) {
                if in_reference(r, tol) {
                    return Some(r);
                }
                found = found.or(Some(r));
            }
        }
        found
    }

    /// A bound on how far (in reference coordinates, Euclidean) the
    /// quadratic triangle's inverse can lie from the straight one:
    /// `|G^-1| sum_k |m_k - c_k|`, with `G` the straight triangle's Jacobian
    /// and `m_k - c_k` the offset of side `k`'s mid-side node from the
    /// chord midpoint (each side's bubble `4 l_i l_j` is at most 1). Zero
    /// for straight triangles.
    pub fn curvature_bound(&self) -> f64 {
        if !self.quadratic {
            return 0.0;
        }
        let v = self.vertices();
        let offset: f64 = (0..3)
            .map(|k| {
                let (a, b, m) = (v[k], v[(k + 1) % 3], self.nodes[3 + k]);
                (m[0] - 0.5 * (a[0] + b[0])).hypot(m[1] - 0.5 * (a[1] + b[1]))
            })
            .sum();
        let g = TriangleMap::straight(v).at(0.0, 0.0);
        let j = &g.jacobian;
        // Frobenius norm of G^-1 = |G|_F / |det G|, an upper bound of the 2-norm.
        let frob = (j[0][0].powi(2) + j[0][1].powi(2) + j[1][0].powi(2) + j[1][1].powi(2)).sqrt();
        frob / g.det().abs() * offset
    }
}

/// True when `r = (xi, eta)` lies in the reference triangle widened by `tol`.
#[inline]
pub fn in_reference(r: [f64; 2], tol: f64) -> bool {
    r[0] >= -tol && r[1] >= -tol && r[0] + r[1] <= 1.0 + tol
}

/// The nearest point of the closed reference triangle along the clamp
/// `xi, eta >= 0`, then scaling onto `xi + eta <= 1` (for points just outside).
#[inline]
pub fn clamp_to_reference(r: [f64; 2]) -> [f64; 2] {
    let (xi, eta) = (r[0].max(0.0), r[1].max(0.0));
    let s = xi + eta;
    if s > 1.0 {
        [xi / s, eta / s]
    } else {
        [xi, eta]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A quadratic triangle with a bulging side 1-2 (mid-node pushed out).
    fn curved() -> TriangleMap {
        TriangleMap::quadratic([
            [0.0, 0.0],
            [1.0, 0.0],
            [0.0, 1.0],
            [0.5, 0.0],
            [0.62, 0.62],
            [0.0, 0.5],
        ])
    }

    #[test]
    fn quadratic_with_midpoints_on_chords_is_the_straight_map() {
        let v = [[0.3, 0.1], [1.2, 0.4], [0.5, 1.1]];
        let s = TriangleMap::straight(v);
        let mut n = [[0.0; 2]; 6];
        n[..3].copy_from_slice(&v);
        for k in 0..3 {
            let (a, b) = (v[k], v[(k + 1) % 3]);
            n[3 + k] = [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])];
        }
        let q = TriangleMap::quadratic(n);
        for &(x, y) in &[(0.2, 0.3), (0.6, 0.1), (0.0, 0.0)] {
            let (a, b) = (s.at(x, y), q.at(x, y));
            assert!((a.det() - b.det()).abs() < 1e-14);
            for c in 0..2 {
                assert!((a.x[c] - b.x[c]).abs() < 1e-15);
            }
        }
        assert!((s.area() - q.area()).abs() < 1e-15);
        assert_eq!(q.curvature_bound(), 0.0);
    }

    #[test]
    fn jacobian_matches_finite_differences() {
        let m = curved();
        let (x, y, h) = (0.21, 0.37, 1e-6);
        let g = m.at(x, y).jacobian;
        let (px, mx) = (m.point(x + h, y), m.point(x - h, y));
        let (py, my) = (m.point(x, y + h), m.point(x, y - h));
        for c in 0..2 {
            // Central differences are exact for quadratics up to rounding.
            assert!((g[c][0] - (px[c] - mx[c]) / (2.0 * h)).abs() < 1e-8);
            assert!((g[c][1] - (py[c] - my[c]) / (2.0 * h)).abs() < 1e-8);
        }
    }

    #[test]
    fn newton_inverts_the_quadratic_map() {
        let m = curved();
        for i in 0..=10 {
            for j in 0..=10 - i {
                let r = [i as f64 / 10.0, j as f64 / 10.0];
                let p = m.point(r[0], r[1]);
                let back = m.invert(p, 1e-10).expect("converges");
                assert!((back[0] - r[0]).abs() < 1e-12 && (back[1] - r[1]).abs() < 1e-12);
            }
        }
        // A point in the bulge beyond the chord 1-2: the straight guess is
        // outside the reference triangle, the exact inverse inside.
        let p = m.side_point(1, 0.5);
        let p = [p[0] - 1e-3, p[1] - 1e-3];
        let s = m.straight_inverse(p);
        assert!(s[0] + s[1] > 1.0);
        let r = m.invert(p, 0.0).unwrap();
        assert!(in_reference(r, 0.0));
        let x = m.point(r[0], r[1]);
        assert!((x[0] - p[0]).abs() < 1e-14 && (x[1] - p[1]).abs() < 1e-14);
        // The bound holds on that point.
        let dist = (r[0] - s[0]).hypot(r[1] - s[1]);
        assert!(
            dist <= m.curvature_bound(),
            "{dist} > {}",
            m.curvature_bound()
        );
    }

    #[test]
    fn curved_box_reaches_the_bulge() {
        let b = curved().bounding_box();
        // Side 1-2: x(s) = (1-s)(1-2s) * 1 + 4 s (1-s) 0.62 along u; the
        // extreme at s = (3 + 0 - 2.48) / (4 - 4.96) < 0 is outside, so u_max
        // is the vertex 1. Along the diagonal the bulge lifts u + v to 1.24
        // at s = 1/2, where u = 0.62.
        assert_eq!(b.max[0], 1.0);
        assert_eq!(b.max[1], 1.0);
        let m = TriangleMap::quadratic([
            [0.0, 0.0],
            [1.0, 0.0],
            [0.0, 1.0],
            [0.5, -0.2],
            [0.5, 0.5],
            [0.0, 0.5],
        ]);
        // Side 0-1 bows down: v(s) = -0.8 s (1-s), lowest -0.2 at s = 1/2.
        assert!((m.bounding_box().min[1] + 0.2).abs() < 1e-15);
        assert!((m.area() - (0.5 + 2.0 / 3.0 * 0.2)).abs() < 1e-15);
    }
}
