//! Built-in section mesher: constrained Delaunay triangulation with
//! refinement (spade), regions for body, surroundings and PML, and quadratic
//! nodes placed on the true curves.
//!
//! The contract (types below) is fixed; see `generate` for the algorithm.

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
    /// HalfPlane only: mesh only `z >= 0` and tag `z = 0` as `midplane`.
    pub upper_half_only: bool,
    /// Smallest interior angle the refinement aims for, degrees (about 25-30).
    pub min_angle_deg: f64,
}
