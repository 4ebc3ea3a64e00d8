//! Geometric facts about a section shape (in its own frame, centre at the
//! origin) that the case checks need: extent, symmetries, feature size.

use twistmode_mesh::SectionShape;

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
        SectionShape::Polygon { vertices } => vertices
            .iter()
            .map(|p| p[0].hypot(p[1]))
            .fold(0.0, f64::max),
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
            4.0 * polygon_area(vertices).abs() / polygon_perimeter(vertices)
        }
    }
}

/// Signed area of a polygon (shoelace formula), positive counter-clockwise.
pub(crate) fn polygon_area(v: &[[f64; 2]]) -> f64 {
    let n = v.len();
    0.5 * (0..n)
        .map(|i| {
            let (p, q) = (v[i], v[(i + 1) % n]);
            p[0] * q[1] - q[0] * p[1]
        })
        .sum::<f64>()
}

fn polygon_perimeter(v: &[[f64; 2]]) -> f64 {
    let n = v.len();
    (0..n)
        .map(|i| {
            let (p, q) = (v[i], v[(i + 1) % n]);
            (q[0] - p[0]).hypot(q[1] - p[1])
        })
        .sum()
}

/// First pair of non-adjacent polygon sides that touch or cross, if any.
pub(crate) fn polygon_self_intersection(v: &[[f64; 2]]) -> Option<(usize, usize)> {
    let n = v.len();
    for i in 0..n {
        for j in i + 1..n {
            let adjacent = j == i + 1 || (i == 0 && j == n - 1);
            if !adjacent && segments_meet(v[i], v[(i + 1) % n], v[j], v[(j + 1) % n]) {
                return Some((i, j));
            }
        }
    }
    None
}

fn orient(a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

fn on_segment(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> bool {
    p[0] >= a[0].min(b[0])
        && p[0] <= a[0].max(b[0])
        && p[1] >= a[1].min(b[1])
        && p[1] <= a[1].max(b[1])
}

fn segments_meet(p1: [f64; 2], p2: [f64; 2], q1: [f64; 2], q2: [f64; 2]) -> bool {
    let (d1, d2) = (orient(q1, q2, p1), orient(q1, q2, p2));
    let (d3, d4) = (orient(p1, p2, q1), orient(p1, p2, q2));
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return true;
    }
    (d1 == 0.0 && on_segment(q1, q2, p1))
        || (d2 == 0.0 && on_segment(q1, q2, p2))
        || (d3 == 0.0 && on_segment(p1, p2, q1))
        || (d4 == 0.0 && on_segment(p1, p2, q2))
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
    fn polygon_checks() {
        let square = vec![[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]];
        assert_eq!(polygon_area(&square), 4.0);
        assert!(polygon_self_intersection(&square).is_none());
        let bow_tie = vec![[-1.0, -1.0], [1.0, 1.0], [1.0, -1.0], [-1.0, 1.0]];
        assert!(polygon_self_intersection(&bow_tie).is_some());
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
