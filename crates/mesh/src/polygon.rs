//! Checks of a polygon outline: enough finite vertices, non-zero area, no
//! two sides that cross or touch (simple polygon), and its orientation.
//!
//! One check serves the case reader and the mesher. The order is fixed, and
//! the first failure is reported:
//!
//! 1. at least 3 vertices; 2. all coordinates finite; 3. area (shoelace
//!    formula) above 1e-12 of the squared largest vertex distance from the
//!    origin; 4. no two non-adjacent sides meet (the first pair `(i, j)`,
//!    `i < j`, in lexicographic order is named; side `k` joins vertices `k`
//!    and `k + 1 mod n`).
//!
//! Repeated consecutive vertices (a side of zero length) and adjacent sides
//! folding back along each other need no check of their own: with 4 or more
//! vertices the neighbouring sides then meet a non-adjacent side (at the
//! repeated vertex, or where the fold ends), and with 3 the area is zero.
//!
//! The segment test is the orientation-sign predicate (Cormen, Leiserson,
//! Rivest & Stein, *Introduction to Algorithms*, 3rd ed., sec. 33.1), with
//! touching counted as meeting; it is O(n^2), fine for hand-written outlines.

use thiserror::Error;

/// Why a polygon outline is refused.
#[derive(Debug, Error, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum PolygonDefect {
    /// Fewer than 3 vertices.
    #[error("a polygon needs at least 3 vertices, got {count}")]
    TooFewVertices {
        /// Vertices given.
        count: usize,
    },
    /// A coordinate is infinite or NaN.
    #[error("vertex {vertex} is not finite")]
    NotFinite {
        /// The first offending vertex.
        vertex: usize,
    },
    /// The enclosed area is (near) zero.
    #[error("the polygon has zero area")]
    ZeroArea,
    /// Two non-adjacent sides cross or touch.
    #[error("the polygon's sides {first} and {second} cross or touch (sides counted from 0; side k joins vertices k and k+1)")]
    SidesMeet {
        /// The lower side index.
        first: usize,
        /// The higher side index.
        second: usize,
    },
}

/// Which way a polygon's vertices run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Orientation {
    /// Positive signed area.
    CounterClockwise,
    /// Negative signed area.
    Clockwise,
}

/// Signed area (shoelace formula), positive for counter-clockwise vertices.
pub fn signed_area(v: &[[f64; 2]]) -> f64 {
    let n = v.len();
    0.5 * (0..n)
        .map(|i| {
            let (p, q) = (v[i], v[(i + 1) % n]);
            p[0] * q[1] - q[0] * p[1]
        })
        .sum::<f64>()
}

/// Perimeter (sum of side lengths, closing side included).
pub fn perimeter(v: &[[f64; 2]]) -> f64 {
    let n = v.len();
    (0..n)
        .map(|i| {
            let (p, q) = (v[i], v[(i + 1) % n]);
            (q[0] - p[0]).hypot(q[1] - p[1])
        })
        .sum()
}

/// Largest distance of a vertex from the origin.
pub fn radius(v: &[[f64; 2]]) -> f64 {
    v.iter().map(|p| p[0].hypot(p[1])).fold(0.0, f64::max)
}

/// The first pair of non-adjacent sides `(i, j)`, `i < j`, that cross or touch.
pub fn first_meeting_sides(v: &[[f64; 2]]) -> Option<(usize, usize)> {
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

/// Checks a polygon outline (see the module notes for the order) and
/// returns its orientation.
pub fn check_polygon(v: &[[f64; 2]]) -> Result<Orientation, PolygonDefect> {
    if v.len() < 3 {
        return Err(PolygonDefect::TooFewVertices { count: v.len() });
    }
    if let Some(vertex) = v
        .iter()
        .position(|p| !(p[0].is_finite() && p[1].is_finite()))
    {
        return Err(PolygonDefect::NotFinite { vertex });
    }
    let area = signed_area(v);
    let scale = radius(v);
    if area.abs() <= 1e-12 * scale * scale {
        return Err(PolygonDefect::ZeroArea);
    }
    if let Some((first, second)) = first_meeting_sides(v) {
        return Err(PolygonDefect::SidesMeet { first, second });
    }
    Ok(if area > 0.0 {
        Orientation::CounterClockwise
    } else {
        Orientation::Clockwise
    })
}

fn orient(a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> f64 {
    (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0])
}

/// True when `p` lies in the box spanned by `a` and `b` (on the segment when collinear).
fn in_span(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> bool {
    p[0] >= a[0].min(b[0])
        && p[0] <= a[0].max(b[0])
        && p[1] >= a[1].min(b[1])
        && p[1] <= a[1].max(b[1])
}

/// True when the closed segments `p1 p2` and `q1 q2` cross or touch.
pub fn segments_meet(p1: [f64; 2], p2: [f64; 2], q1: [f64; 2], q2: [f64; 2]) -> bool {
    let (d1, d2) = (orient(q1, q2, p1), orient(q1, q2, p2));
    let (d3, d4) = (orient(p1, p2, q1), orient(p1, p2, q2));
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return true;
    }
    (d1 == 0.0 && in_span(q1, q2, p1))
        || (d2 == 0.0 && in_span(q1, q2, p2))
        || (d3 == 0.0 && in_span(p1, p2, q1))
        || (d4 == 0.0 && in_span(p1, p2, q2))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn simple_polygons_pass_with_their_orientation() {
        let square = [[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]];
        assert_eq!(signed_area(&square), 4.0);
        assert_eq!(perimeter(&square), 8.0);
        assert_eq!(check_polygon(&square), Ok(Orientation::CounterClockwise));
        let mut cw = square;
        cw.reverse();
        assert_eq!(check_polygon(&cw), Ok(Orientation::Clockwise));
        // A non-convex L.
        let l = [
            [0.0, 0.0],
            [2.0, 0.0],
            [2.0, 1.0],
            [1.0, 1.0],
            [1.0, 2.0],
            [0.0, 2.0],
        ];
        assert_eq!(signed_area(&l), 3.0);
        assert!(check_polygon(&l).is_ok());
    }

    #[test]
    fn defects_are_found_in_order() {
        assert_eq!(
            check_polygon(&[[0.0, 0.0], [1.0, 0.0]]),
            Err(PolygonDefect::TooFewVertices { count: 2 })
        );
        assert_eq!(
            check_polygon(&[[0.0, 0.0], [1.0, f64::NAN], [0.0, 1.0]]),
            Err(PolygonDefect::NotFinite { vertex: 1 })
        );
        // Symmetric bow tie: zero area comes before the crossing.
        let bow = [[0.0, 0.0], [1.0, 1.0], [1.0, 0.0], [0.0, 1.0]];
        assert_eq!(check_polygon(&bow), Err(PolygonDefect::ZeroArea));
        let lopsided = [[0.0, 0.0], [2.0, 2.0], [2.0, 0.0], [0.0, 1.0]];
        assert_eq!(
            check_polygon(&lopsided),
            Err(PolygonDefect::SidesMeet {
                first: 0,
                second: 2
            })
        );
    }

    #[test]
    fn repeated_vertices_and_fold_backs_are_refused() {
        // Vertex 2 repeated: sides 1 and 3 meet there.
        let repeated = [[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [2.0, 2.0], [0.0, 2.0]];
        assert_eq!(
            check_polygon(&repeated),
            Err(PolygonDefect::SidesMeet {
                first: 1,
                second: 3
            })
        );
        // Side 2 folds back along side 1, short of its start: vertex 3 on side 1.
        let short = [[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [2.0, 1.0], [0.0, 2.0]];
        assert!(matches!(
            check_polygon(&short),
            Err(PolygonDefect::SidesMeet { .. })
        ));
        // Side 2 folds back past side 1's start: vertex 1 on side 2.
        let long = [[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [2.0, -1.0], [0.0, -1.0]];
        assert!(matches!(
            check_polygon(&long),
            Err(PolygonDefect::SidesMeet { .. })
        ));
        // A triangle folding back is flat.
        let flat = [[0.0, 0.0], [2.0, 0.0], [1.0, 0.0]];
        assert_eq!(check_polygon(&flat), Err(PolygonDefect::ZeroArea));
    }
}
