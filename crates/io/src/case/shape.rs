//! Geometric facts about a section shape (in its own frame, centre at the
//! origin) that the case checks need: extent, symmetries, feature size.

use twistmode_mesh::{polygon, SectionShape};

/// Relative tolerance for symmetry tests.
const SYMMETRY_TOL: f64 = 1e-9;

/// Largest distance from the centre to the outline, metres.
pub(crate) fn bounding_radius(shape: &SectionShape) -> f64 {
    match shape {
        SectionShape::Rectangle {
            width,
            thickness,
            corner_radius: c,
        } => (0.5 * width - c).hypot(0.5 * thickness - c) + c,
        SectionShape::Ellipse { a, b } => a.max(*b),
        SectionShape::Polygon { vertices } => polygon::radius(vertices),
    }
}

/// Bounding box `[u_min, u_max, v_min, v_max]` relative to the centre.
pub(crate) fn bounding_box(shape: &SectionShape) -> [f64; 4] {
    match shape {
        SectionShape::Rectangle {
            width, thickness, ..
        } => [-0.5 * width, 0.5 * width, -0.5 * thickness, 0.5 * thickness],
        SectionShape::Ellipse { a, b } => [-a, *a, -b, *b],
        SectionShape::Polygon { vertices } => vertices.iter().fold(
            [
                f64::INFINITY,
                f64::NEG_INFINITY,
                f64::INFINITY,
                f64::NEG_INFINITY,
            ],
            |b, p| {
                [
                    b[0].min(p[0]),
                    b[1].max(p[0]),
                    b[2].min(p[1]),
                    b[3].max(p[1]),
                ]
            },
        ),
    }
}

/// Hydraulic diameter `4 A / P` (2 r for a disc, about 2 t for a thin ribbon):
/// the size of the narrowest feature the mesh must resolve.
pub(crate) fn hydraulic_diameter(shape: &SectionShape) -> f64 {
    match shape {
        SectionShape::Rectangle {
            width,
            thickness,
            corner_radius: c,
        } => {
            let area = width * thickness - (4.0 - std::f64::consts::PI) * c * c;
            let perimeter = 2.0 * (width + thickness) - (8.0 - 2.0 * std::f64::consts::PI) * c;
            4.0 * area / perimeter
        }
        SectionShape::Ellipse { a, b } => {
            // Ramanujan's second approximation of the ellipse perimeter
            // (relative error below 1e-9 for b/a > 0.1; from memory).
            let h = ((a - b) / (a + b)).powi(2);
            let perimeter =
                std::f64::consts::PI * (a + b) * (1.0 + 3.0 * h / (10.0 + (4.0 - 3.0 * h).sqrt()));
            4.0 * std::f64::consts::PI * a * b / perimeter
        }
        SectionShape::Polygon { vertices } => {
            4.0 * polygon::signed_area(vertices).abs() / polygon::perimeter(vertices)
        }
    }
}

/// A point map used by the symmetry tests.
type PointMap = fn([f64; 2]) -> [f64; 2];

fn polygon_invariant(vertices: &[[f64; 2]], map: PointMap) -> bool {
    let scale = bounding_radius(&SectionShape::Polygon {
        vertices: vertices.to_vec(),
    });
    vertices.iter().all(|&p| {
        let q = map(p);
        vertices
            .iter()
            .any(|w| (w[0] - q[0]).hypot(w[1] - q[1]) <= SYMMETRY_TOL * scale)
    })
}

/// Invariant under rotation by pi about the centre, `(u, v) -> (-u, -v)`.
pub(crate) fn is_pi_symmetric(shape: &SectionShape) -> bool {
    match shape {
        SectionShape::Polygon { vertices } => polygon_invariant(vertices, |p| [-p[0], -p[1]]),
        _ => true,
    }
}

/// Invariant under the mirror `v -> -v` (about the section's own u axis).
pub(crate) fn is_mirror_symmetric_in_v(shape: &SectionShape) -> bool {
    match shape {
        SectionShape::Polygon { vertices } => polygon_invariant(vertices, |p| [p[0], -p[1]]),
        _ => true,
    }
}

/// Invariant under the mirror `u -> -u` (about the section's own v axis).
pub(crate) fn is_mirror_symmetric_in_u(shape: &SectionShape) -> bool {
    match shape {
        SectionShape::Polygon { vertices } => polygon_invariant(vertices, |p| [-p[0], p[1]]),
        _ => true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn extents_of_simple_shapes() {
        let r = SectionShape::Rectangle {
            width: 4.0,
            thickness: 2.0,
            corner_radius: 0.0,
        };
        // Half-diagonal of a 4 x 2 rectangle: sqrt(5) (exact).
        assert!((bounding_radius(&r) - 5f64.sqrt()).abs() < 1e-15);
        // Hydraulic diameter 4A/P = 4*8/12 (exact).
        assert!((hydraulic_diameter(&r) - 8.0 / 3.0).abs() < 1e-15);
        let rounded = SectionShape::Rectangle {
            width: 2.0,
            thickness: 2.0,
            corner_radius: 1.0,
        };
        // A 2 x 2 square with corner radius 1 is the unit disc.
        assert!((bounding_radius(&rounded) - 1.0).abs() < 1e-15);
        assert!((hydraulic_diameter(&rounded) - 2.0).abs() < 1e-14);
        let disc = SectionShape::Ellipse { a: 1.5, b: 1.5 };
        assert!((hydraulic_diameter(&disc) - 3.0).abs() < 1e-14);
    }

    #[test]
    fn polygon_symmetries() {
        let square = vec![[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]];
        // Hydraulic diameter 4A/P of a 2 x 2 square: 2 (exact).
        assert_eq!(
            hydraulic_diameter(&SectionShape::Polygon {
                vertices: square.clone()
            }),
            2.0
        );
        let sq = SectionShape::Polygon { vertices: square };
        assert!(is_pi_symmetric(&sq) && is_mirror_symmetric_in_u(&sq));
        let tri = SectionShape::Polygon {
            vertices: vec![[0.0, 1.0], [-1.0, -0.5], [1.0, -0.5]],
        };
        assert!(!is_pi_symmetric(&tri));
        assert!(is_mirror_symmetric_in_u(&tri));
        assert!(!is_mirror_symmetric_in_v(&tri));
    }
}
