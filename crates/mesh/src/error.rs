//! Typed mesh errors.
use thiserror::Error;

/// Why a mesh was rejected or could not be made.
#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum MeshError {
    /// A triangle has (near) zero area.
    #[error("triangle {triangle} is degenerate (area {area:.3e} m^2): its vertices are collinear or coincide; fix the mesh or refine less aggressively")]
    Degenerate {
        /// Triangle index.
        triangle: usize,
        /// Signed area found.
        area: f64,
    },
    /// A quadratic triangle's Jacobian changes sign inside it.
    #[error("quadratic triangle {triangle} is inverted inside (Jacobian changes sign): a mid-side node is too far off its chord; refine near curved boundaries")]
    Inverted {
        /// Triangle index.
        triangle: usize,
    },
    /// A node index points outside the point list.
    #[error("triangle {triangle} refers to node {node}, but the mesh has only {count} nodes")]
    NodeOutOfRange {
        /// Triangle index.
        triangle: usize,
        /// Offending node id.
        node: u32,
        /// Number of nodes.
        count: usize,
    },
    /// A region index points outside the region table.
    #[error("triangle {triangle} has region {region}, but only {count} regions are defined")]
    RegionOutOfRange {
        /// Triangle index.
        triangle: usize,
        /// Offending region id.
        region: u16,
        /// Number of regions.
        count: usize,
    },
    /// More than two triangles share an edge.
    #[error("edge between nodes {a} and {b} is shared by {count} triangles (non-manifold); each edge may border at most two triangles")]
    NonManifold {
        /// First vertex.
        a: u32,
        /// Second vertex.
        b: u32,
        /// Number of triangles sharing it.
        count: usize,
    },
    /// A boundary segment names an edge that is not on the boundary.
    #[error("boundary segment {a}-{b} (tag '{tag}') is not a boundary edge of the mesh")]
    NotABoundaryEdge {
        /// First vertex.
        a: u32,
        /// Second vertex.
        b: u32,
        /// Tag name.
        tag: String,
    },
    /// A boundary edge carries no tag.
    #[error("boundary edge {a}-{b} has no boundary tag; every outer edge must belong to a boundary group (e.g. 'outer', 'axis')")]
    UntaggedBoundary {
        /// First vertex.
        a: u32,
        /// Second vertex.
        b: u32,
    },
    /// The mesh has no triangles.
    #[error("the mesh has no triangles")]
    Empty,
    /// Bad geometry given to the generator.
    #[error("invalid geometry for '{field}': {reason}")]
    Geometry {
        /// The offending parameter.
        field: String,
        /// What is wrong and how to fix it.
        reason: String,
    },
    /// Triangulation failed.
    #[error("triangulation failed: {0}")]
    Triangulation(String),
    /// A Gmsh file could not be read.
    #[error("Gmsh file: {0}")]
    Gmsh(String),
    /// A pi-rotation partner map does not describe a symmetry of the mesh.
    #[error("pi-rotation partner map rejected at node {node}: {reason}")]
    PiPartners {
        /// The first offending node.
        node: u32,
        /// What is wrong.
        reason: String,
    },
    /// A mirror partner map does not describe a symmetry of the mesh.
    #[error("mirror partner map rejected at node {node}: {reason}")]
    MirrorPartners {
        /// The first offending node.
        node: u32,
        /// What is wrong.
        reason: String,
    },
    /// File system error.
    #[error("I/O error on {path}: {message}")]
    Io {
        /// The file.
        path: String,
        /// The system's message.
        message: String,
    },
}
