//! The map from the reference triangle to a (straight or quadratic) mesh
//! triangle, in the form the element integrals use: the mesh crate's
//! [`TriangleMap`] with its determinant and `G^-T` at each point.
use twistmode_mesh::{Mesh, TriangleMap};

/// The geometry map of one triangle (straight or quadratic): a thin
/// wrapper of the mesh crate's [`TriangleMap`], which also serves point
/// location and plotting, so that every part of the program maps alike.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ElementGeometry {
    map: TriangleMap,
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
        ElementGeometry {
            map: mesh.triangle_map(t),
        }
    }

    /// Straight triangle through three vertices.
    pub fn straight(vertices: [[f64; 2]; 3]) -> ElementGeometry {
        ElementGeometry {
            map: TriangleMap::straight(vertices),
        }
    }

    /// Vertex coordinates.
    pub fn vertices(&self) -> [[f64; 2]; 3] {
        self.map.vertices()
    }

    /// The underlying map (for its inverse, bounding box and side curves).
    pub fn triangle_map(&self) -> &TriangleMap {
        &self.map
    }

    /// Maps the reference point `(xi, eta)`.
    pub fn map(&self, xi: f64, eta: f64) -> MappedPoint {
        let m = self.map.at(xi, eta);
        MappedPoint {
            x: m.x,
            det: m.det(),
            inv_t: m.inverse_transpose(),
        }
    }
}

impl From<TriangleMap> for ElementGeometry {
    fn from(map: TriangleMap) -> ElementGeometry {
        ElementGeometry { map }
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
        let quad = ElementGeometry::from(TriangleMap::quadratic(nodes));
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
