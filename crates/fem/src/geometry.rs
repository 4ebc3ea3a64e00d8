//! The map from the reference triangle to a (straight or quadratic) mesh triangle.
use twistmode_mesh::{GeometryOrder, Mesh};

/// Geometric nodes of one triangle: 3 vertices, plus 3 mid-side nodes when quadratic.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ElementGeometry {
    nodes: [[f64; 2]; 6],
    quadratic: bool,
}

/// The geometry map at one reference point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MappedPoint {
    /// Physical point `(u, v)`.
    pub x: [f64; 2],
    /// Jacobian determinant `det(d(u, v) / d(xi, eta))` (> 0 for a valid mesh).
    pub det: f64,
    /// `G^-T`, with `G = d(u, v) / d(xi, eta)`: maps reference gradients (and
    /// covariant Piola vectors) to physical ones.
    pub inv_t: [[f64; 2]; 2],
}

impl MappedPoint {
    /// `G^-T g` for a reference vector `g`.
    #[inline]
    pub fn covariant(&self, g: [f64; 2]) -> [f64; 2] {
        [
            self.inv_t[0][0] * g[0] + self.inv_t[0][1] * g[1],
            self.inv_t[1][0] * g[0] + self.inv_t[1][1] * g[1],
        ]
    }
}

impl ElementGeometry {
    /// Geometry of triangle `t` of `mesh`.
    pub fn of_triangle(mesh: &Mesh, t: usize) -> ElementGeometry {
        let tri = &mesh.triangles()[t];
        let pts = mesh.points();
        let quadratic = mesh.order() == GeometryOrder::Quadratic;
        let mut nodes = [[0.0; 2]; 6];
        for (k, node) in nodes.iter_mut().enumerate() {
            *node = pts[tri.nodes[k].idx()];
        }
        ElementGeometry { nodes, quadratic }
    }

    /// Straight triangle through three vertices.
    pub fn straight(vertices: [[f64; 2]; 3]) -> ElementGeometry {
        let mut nodes = [[0.0; 2]; 6];
        nodes[..3].copy_from_slice(&vertices);
        ElementGeometry {
            nodes,
            quadratic: false,
        }
    }

    /// Vertex coordinates.
    pub fn vertices(&self) -> [[f64; 2]; 3] {
        [self.nodes[0], self.nodes[1], self.nodes[2]]
    }

    /// Maps the reference point `(xi, eta)`.
    pub fn map(&self, xi: f64, eta: f64) -> MappedPoint {
        let l0 = 1.0 - xi - eta;
        let (shape, dxi, deta): ([f64; 6], [f64; 6], [f64; 6]) = if self.quadratic {
            (
                [
                    l0 * (2.0 * l0 - 1.0),
                    xi * (2.0 * xi - 1.0),
                    eta * (2.0 * eta - 1.0),
                    4.0 * l0 * xi,
                    4.0 * xi * eta,
                    4.0 * eta * l0,
                ],
                [
                    1.0 - 4.0 * l0,
                    4.0 * xi - 1.0,
                    0.0,
                    4.0 * (l0 - xi),
                    4.0 * eta,
                    -4.0 * eta,
                ],
                [
                    1.0 - 4.0 * l0,
                    0.0,
                    4.0 * eta - 1.0,
                    -4.0 * xi,
                    4.0 * xi,
                    4.0 * (l0 - eta),
                ],
            )
        } else {
            (
                [l0, xi, eta, 0.0, 0.0, 0.0],
                [-1.0, 1.0, 0.0, 0.0, 0.0, 0.0],
                [-1.0, 0.0, 1.0, 0.0, 0.0, 0.0],
            )
        };
        let mut x = [0.0; 2];
        let mut g = [[0.0; 2]; 2];
        for k in 0..6 {
            for c in 0..2 {
                x[c] += shape[k] * self.nodes[k][c];
                g[c][0] += dxi[k] * self.nodes[k][c];
                g[c][1] += deta[k] * self.nodes[k][c];
            }
        }
        let det = g[0][0] * g[1][1] - g[0][1] * g[1][0];
        // G^-1 = [[g11, -g01], [-g10, g00]] / det; G^-T is its transpose.
        let inv_t = [
            [g[1][1] / det, -g[1][0] / det],
            [-g[0][1] / det, g[0][0] / det],
        ];
        MappedPoint { x, det, inv_t }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quadratic_map_with_midpoints_on_chords_equals_the_straight_map() {
        let v = [[0.3, 0.1], [1.2, 0.4], [0.5, 1.1]];
        let straight = ElementGeometry::straight(v);
        let mut nodes = [[0.0; 2]; 6];
        nodes[..3].copy_from_slice(&v);
        for k in 0..3 {
            let (a, b) = (v[k], v[(k + 1) % 3]);
            nodes[3 + k] = [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])];
        }
        let quad = ElementGeometry {
            nodes,
            quadratic: true,
        };
        for &(x, y) in &[(0.2, 0.3), (0.6, 0.1), (0.0, 0.0)] {
            let (p, q) = (straight.map(x, y), quad.map(x, y));
            assert!((p.det - q.det).abs() < 1e-14);
            for i in 0..2 {
                assert!((p.x[i] - q.x[i]).abs() < 1e-15);
                for j in 0..2 {
                    assert!((p.inv_t[i][j] - q.inv_t[i][j]).abs() < 1e-13);
                }
            }
        }
    }
}
