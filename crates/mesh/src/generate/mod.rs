//! Built-in section mesher: constrained Delaunay triangulation with
//! refinement (spade), regions for body, surroundings and PML, and quadratic
//! nodes placed on the true curves.
//!
//! The contract (types below) is fixed; see [`generate`] for the algorithm.
//!
//! ```text
//!   outline pieces (lines, elliptic arcs)      per region: its outlines,
//!   -> curves discretised once (graded size,   clipped to r >= 0 / z >= 0 /
//!      <= 30 deg turn per segment)             the cut half plane
//!   -> spade CDT + Ruppert refinement per region (own max area, angle limit,
//!      constraint edges kept, so regions meet node to node)
//!   -> merge -> optional pi-rotated copy -> quadratic nodes on the curves
//! ```

mod clip;
mod curves;
mod mesher;

use crate::{Mesh, MeshError};

/// Builds a mesh of the section described by `spec`.
///
/// - Every curve (body outline, PML start, outer boundary) is a chain of
///   constraint edges, so no triangle crosses a material interface or the
///   PML start. Segment lengths follow the body's `max_edge` on the body
///   outline and grow by 0.35 m per m of distance up to the surroundings'
///   `max_edge`; curved segments turn by at most 30 degrees.
/// - Each region (`body`, `surroundings`, `pml`) is refined on its own by
///   spade's Delaunay refinement with the spec's angle limit and a largest
///   area of 0.6 times the equilateral triangle of the region's `max_edge`.
/// - Quadratic meshes put the mid-side node of every edge on a curve at the
///   curve's mid-parameter point; all other mid-side nodes at the chord midpoint.
///   Should a curved triangle come out inverted, the curves are discretised
///   more finely and the mesh is rebuilt (up to three times).
/// - With `pi_symmetric`, the half `v >= v_c` (in a frame turned so that the
///   cut line avoids polygon vertices) is meshed and rotated by pi about the
///   body centre; see [`Mesh::pi_partner_nodes`]. With `mirror_symmetric` too,
///   the quarter `u >= 0, v >= 0` of that frame is meshed and mirrored first; see
///   [`Mesh::mirror_partner_nodes`].
///
/// Errors: [`MeshError::Geometry`] for bad input (naming the field),
/// [`MeshError::Triangulation`] when the triangulator fails.
pub fn generate(spec: &GeneratorSpec) -> Result<Mesh, MeshError> {
    let mut turn = curves::MAX_TURN;
    let mut attempt = 0;
    loop {
        match mesher::build(spec, turn) {
            Err(MeshError::Inverted { .. }) if attempt < 3 => {
                attempt += 1;
                turn *= 0.5;
            }
            other => return other,
        }
    }
}

impl GeneratorSpec {
    /// Default smallest interior angle aimed for, degrees (common practice:
    /// Delaunay refinement terminates reliably below about 30 degrees).
    pub const DEFAULT_MIN_ANGLE_DEG: f64 = 28.0;

    /// A spec with the defaults: linear geometry, no symmetry, full domain,
    /// [`GeneratorSpec::DEFAULT_MIN_ANGLE_DEG`].
    pub fn new(domain: crate::DomainKind, body: BodySpec, surroundings: Surroundings) -> Self {
        GeneratorSpec {
            domain,
            body,
            surroundings,
            order: crate::GeometryOrder::Linear,
            pi_symmetric: false,
            mirror_symmetric: false,
            upper_half_only: false,
            min_angle_deg: Self::DEFAULT_MIN_ANGLE_DEG,
        }
    }
}

/// Shape of a body section, in its own frame (centre at the origin).
#[derive(Clone, Debug, PartialEq)]
pub enum SectionShape {
    /// Rectangle `width` (along u) by `thickness` (along v), corners rounded
    /// with `corner_radius` (0 for sharp corners).
    Rectangle {
        /// Extent along u, metres.
        width: f64,
        /// Extent along v, metres.
        thickness: f64,
        /// Corner radius, metres (0 <= r <= min(width, thickness)/2).
        corner_radius: f64,
    },
    /// Ellipse with semi-axes `a` (along u) and `b` (along v); a disc when equal.
    Ellipse {
        /// Semi-axis along u, metres.
        a: f64,
        /// Semi-axis along v, metres.
        b: f64,
    },
    /// Simple polygon, vertices in order (either orientation), metres.
    Polygon {
        /// Vertices.
        vertices: Vec<[f64; 2]>,
    },
}

/// One body in the section: a shape, where its centre sits in `(u, v)`, and its material.
#[derive(Clone, Debug, PartialEq)]
pub struct BodySpec {
    /// The shape.
    pub shape: SectionShape,
    /// Position of the shape's centre in domain coordinates, metres.
    pub centre: [f64; 2],
    /// Material name given to the body region.
    pub material: String,
    /// Target largest edge length inside the body, metres.
    pub max_edge: f64,
}

/// What surrounds the body.
#[derive(Clone, Debug, PartialEq)]
pub enum Surroundings {
    /// Nothing: the body's own outline is the outer boundary (a closed metal
    /// cavity filled with the body's material, for instance).
    None,
    /// A layer of surrounding medium `padding` thick around the body's bounding
    /// circle (or box), then a PML `pml_thickness` thick (0 for none: the outer
    /// boundary is then a wall).
    Medium {
        /// Distance from the body to the start of the PML, metres.
        padding: f64,
        /// PML thickness, metres (0 for no PML).
        pml_thickness: f64,
        /// Target largest edge length in the surrounding medium and PML, metres.
        max_edge: f64,
    },
}

/// Everything the generator needs.
#[derive(Clone, Debug, PartialEq)]
pub struct GeneratorSpec {
    /// Domain kind; fixes the outer shape: half disc centred on the origin
    /// with `r >= 0` (HalfPlane), disc around the body centre (Disc), box
    /// around the body (Box).
    pub domain: crate::DomainKind,
    /// The body (one section).
    pub body: BodySpec,
    /// What surrounds it.
    pub surroundings: Surroundings,
    /// Geometry order of the output triangles.
    pub order: crate::GeometryOrder,
    /// Make the mesh invariant under rotation by pi about the body centre
    /// (mesh half and rotate the copy). Only for Disc and Box domains.
    pub pi_symmetric: bool,
    /// With `pi_symmetric`: make the mesh also invariant under the mirror
    /// `v -> -v` about the body centre (mesh a quarter, mirror it, rotate the half
    /// by pi); see [`Mesh::mirror_partner_nodes`]. The section must have both mirror
    /// lines through its centre along the axes, and a polygon no vertex on them.
    pub mirror_symmetric: bool,
    /// HalfPlane only: mesh only `z >= 0` and tag `z = 0` as `midplane`.
    pub upper_half_only: bool,
    /// Smallest interior angle the refinement aims for, degrees (about 25-30).
    pub min_angle_deg: f64,
}
