//! twistmode-mesh: triangle meshes of a resonator's cross-section.
//!
//! A [`Mesh`] holds straight (3-node) or quadratic (6-node) triangles in the
//! section plane `(u, v)`, a region tag per triangle (which material, or PML),
//! tagged boundary edges, and a global edge numbering with a fixed orientation
//! (from the lower to the higher vertex number) that edge elements rely on.
//!
//! Key design decision: topology (edges, triangle-to-edge map with signs,
//! boundary edges) is derived once, in [`Mesh::new`], which also rejects
//! broken meshes (inverted or degenerate triangles, non-manifold edges) with a
//! typed [`MeshError`]. Everything downstream may assume a valid mesh.
//!
//! ```text
//!   local vertices 0,1,2 (counter-clockwise); local edge k runs k -> k+1 (mod 3)
//!   quadratic nodes 3,4,5 sit on edges 0 (0-1), 1 (1-2), 2 (2-0)   [Gmsh order]
//!
//!        2
//!        | \
//!        5   4
//!        |     \
//!        0--3---1
//! ```
//!
//! Geometry of the section lives here too: [`TriangleMap`] is the one map
//! from the reference triangle (used by the finite elements, the plots and
//! point location), [`PointLocator`] finds the triangle holding a point,
//! [`Mesh::bounding_box`] and friends give exact boxes, and
//! [`polygon::check_polygon`] checks polygon outlines.
//!
//! Lengths are SI metres throughout.
#![deny(missing_docs)]

mod error;
mod extent;
pub mod generate;
mod gmsh;
pub mod locate;
pub mod map;
pub mod polygon;
mod topology;
mod transform;

pub use generate::generate;
pub use gmsh::{parse_gmsh, read_gmsh, write_gmsh, write_gmsh_string};

pub use error::MeshError;
pub use generate::{BodySpec, GeneratorSpec, SectionShape, Surroundings};
pub use locate::{Location, PointLocator};
pub use map::{BoundingBox, MapPoint, ShapeFunctions, TriangleMap};
pub use polygon::{check_polygon, Orientation, PolygonDefect};

use std::fmt;

/// Index of a mesh node (vertex or quadratic mid-side node) into [`Mesh::points`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct NodeId(pub u32);

/// Index of a global (vertex-to-vertex) edge into [`Mesh::edges`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct EdgeId(pub u32);

/// Index of a region into [`Mesh::regions`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct RegionId(pub u16);

/// Index of a boundary tag into [`Mesh::boundary_names`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct BoundaryTag(pub u16);

impl NodeId {
    /// The index as `usize`.
    #[inline]
    pub fn idx(self) -> usize {
        self.0 as usize
    }
}
impl EdgeId {
    /// The index as `usize`.
    #[inline]
    pub fn idx(self) -> usize {
        self.0 as usize
    }
}
impl RegionId {
    /// The index as `usize`.
    #[inline]
    pub fn idx(self) -> usize {
        self.0 as usize
    }
}

/// Polynomial order of the geometry map of each triangle.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum GeometryOrder {
    /// Straight-sided 3-node triangles.
    Linear,
    /// 6-node triangles; mid-side nodes may sit off the chord (curved sides).
    Quadratic,
}

impl GeometryOrder {
    /// Number of geometric nodes per triangle (3 or 6).
    pub fn nodes_per_triangle(self) -> usize {
        match self {
            GeometryOrder::Linear => 3,
            GeometryOrder::Quadratic => 6,
        }
    }
}

/// One triangle: node ids (vertices first, counter-clockwise, then mid-side
/// nodes of edges 0-1, 1-2, 2-0 when quadratic; unused entries repeat
/// vertex 0) and its region.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Triangle {
    /// Node ids; only the first [`GeometryOrder::nodes_per_triangle`] are meaningful.
    pub nodes: [NodeId; 6],
    /// Region (material or PML) this triangle belongs to.
    pub region: RegionId,
}

impl Triangle {
    /// The three vertex ids.
    pub fn vertices(&self) -> [NodeId; 3] {
        [self.nodes[0], self.nodes[1], self.nodes[2]]
    }
}

/// What a region is, as far as the solver needs to know.
#[derive(Clone, Debug, PartialEq)]
pub enum RegionKind {
    /// Part of the resonator body, made of the named material.
    Body {
        /// Material name (a key of the case file's `materials` table).
        material: String,
    },
    /// The surrounding medium (including any padding) outside the body.
    Surroundings,
    /// Perfectly matched layer: surrounding medium under a complex stretch.
    Pml,
}

/// A named region of the mesh.
#[derive(Clone, Debug, PartialEq)]
pub struct Region {
    /// Human-readable name (a Gmsh physical-group name, or one set by the generator).
    pub name: String,
    /// Role of the region.
    pub kind: RegionKind,
}

/// A boundary edge of the mesh (an edge with exactly one adjacent triangle) and its tag.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct BoundaryEdge {
    /// The global edge.
    pub edge: EdgeId,
    /// The tag saying which boundary it lies on.
    pub tag: BoundaryTag,
}

/// Names of the boundary tags the built-in generator uses. Imported meshes may
/// use any names; the solver maps names to conditions.
pub mod boundary_names {
    /// The symmetry axis `r = 0` of a body of revolution.
    pub const AXIS: &str = "axis";
    /// The outer boundary of the computational domain.
    pub const OUTER: &str = "outer";
    /// The plane `z = 0` when only the upper half of a revolution domain is meshed.
    pub const MIDPLANE: &str = "midplane";
}

/// Kind of computational domain, which fixes the meaning of the section coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum DomainKind {
    /// The `(r, z)` half plane `r >= 0` of a body of revolution; `u = r`, `v = z`.
    HalfPlane,
    /// A disc around the section centre (rings, twisted or not); `(u, v)` are
    /// offsets from the section centre, the ring axis lying at `u = -R`.
    Disc,
    /// A rectangle around a straight guide's section; `(u, v) = (x, y)`.
    Box,
}

/// Where the PML sits, so that the solver can build the complex stretch.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum PmlGeometry {
    /// No PML: the outer boundary is a wall.
    None,
    /// Radial stretch in the distance `rho` from `centre`, for `inner <= rho <= outer`.
    Radial {
        /// Centre of the radial stretch.
        centre: [f64; 2],
        /// Radius where the PML starts.
        inner: f64,
        /// Radius of the outer boundary.
        outer: f64,
    },
    /// Separate stretches along `u` and `v` outside the inner box, up to the outer box.
    /// Boxes are `[u_min, u_max, v_min, v_max]`. A side with no layer has
    /// equal inner and outer coordinates.
    Cartesian {
        /// The physical (unstretched) box.
        inner: [f64; 4],
        /// The outer boundary of the domain.
        outer: [f64; 4],
    },
}

/// Description of the computational domain a generated mesh covers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Domain {
    /// Which coordinates the section lives in.
    pub kind: DomainKind,
    /// The PML, if any.
    pub pml: PmlGeometry,
}

/// A validated triangle mesh with derived edge topology.
#[derive(Clone, Debug)]
pub struct Mesh {
    points: Vec<[f64; 2]>,
    order: GeometryOrder,
    triangles: Vec<Triangle>,
    regions: Vec<Region>,
    boundary_names: Vec<String>,
    domain: Option<Domain>,
    // derived
    edges: Vec<[NodeId; 2]>,
    triangle_edges: Vec<[(EdgeId, i8); 3]>,
    boundary: Vec<BoundaryEdge>,
    pi_partners: Option<Vec<NodeId>>,
    mirror_partners: Option<Vec<NodeId>>,
}

/// Inputs of [`Mesh::new`]: raw geometry before topology is derived.
#[derive(Clone, Debug)]
pub struct MeshParts {
    /// Node coordinates `(u, v)` in metres.
    pub points: Vec<[f64; 2]>,
    /// Geometry order of all triangles.
    pub order: GeometryOrder,
    /// Triangles (any orientation; clockwise ones are flipped to counter-clockwise).
    pub triangles: Vec<Triangle>,
    /// Region table indexed by [`RegionId`].
    pub regions: Vec<Region>,
    /// Boundary tag names indexed by [`BoundaryTag`].
    pub boundary_names: Vec<String>,
    /// Tagged boundary segments, given by their two vertex node ids. Every
    /// edge with a single adjacent triangle must be tagged; tagging an
    /// interior edge is an error.
    pub boundary_segments: Vec<([NodeId; 2], BoundaryTag)>,
    /// The domain description, when known (built-in generator).
    pub domain: Option<Domain>,
}

impl Mesh {
    /// Builds a mesh: orients triangles counter-clockwise, numbers edges
    /// (oriented low -> high vertex id), checks validity and attaches boundary tags.
    pub fn new(parts: MeshParts) -> Result<Mesh, MeshError> {
        topology::build(parts)
    }

    /// Node coordinates.
    pub fn points(&self) -> &[[f64; 2]] {
        &self.points
    }
    /// Geometry order.
    pub fn order(&self) -> GeometryOrder {
        self.order
    }
    /// Triangles, all counter-clockwise.
    pub fn triangles(&self) -> &[Triangle] {
        &self.triangles
    }
    /// Region table.
    pub fn regions(&self) -> &[Region] {
        &self.regions
    }
    /// Boundary tag names.
    pub fn boundary_names(&self) -> &[String] {
        &self.boundary_names
    }
    /// Looks up a boundary tag by name.
    pub fn boundary_tag(&self, name: &str) -> Option<BoundaryTag> {
        self.boundary_names
            .iter()
            .position(|n| n == name)
            .map(|i| BoundaryTag(i as u16))
    }
    /// Domain description, if the mesh came from the built-in generator.
    pub fn domain(&self) -> Option<&Domain> {
        self.domain.as_ref()
    }
    /// Global edges, each `[low, high]` by vertex node id (this is the edge's orientation).
    pub fn edges(&self) -> &[[NodeId; 2]] {
        &self.edges
    }
    /// For each triangle, its local edges `k` (from local vertex `k` to `k+1 mod 3`)
    /// as global edge and sign (+1 when the local direction matches the global one).
    pub fn triangle_edges(&self) -> &[[(EdgeId, i8); 3]] {
        &self.triangle_edges
    }
    /// Boundary edges with their tags.
    pub fn boundary(&self) -> &[BoundaryEdge] {
        &self.boundary
    }
    /// Number of vertex nodes (nodes that are a triangle vertex).
    pub fn vertex_count(&self) -> usize {
        let mut seen = vec![false; self.points.len()];
        for t in &self.triangles {
            for v in t.vertices() {
                seen[v.idx()] = true;
            }
        }
        seen.iter().filter(|s| **s).count()
    }
    /// Geometric node coordinates of triangle `t` (3 or 6 points).
    pub fn triangle_points(&self, t: usize) -> Vec<[f64; 2]> {
        let n = self.order.nodes_per_triangle();
        self.triangles[t].nodes[..n]
            .iter()
            .map(|id| self.points[id.idx()])
            .collect()
    }
    /// Total area (exact for straight triangles; for quadratic ones, the exact
    /// area of the quadratic map, by 3-point-rule-exact integration of its Jacobian).
    pub fn area(&self) -> f64 {
        (0..self.triangles.len())
            .map(|t| self.triangle_area(t))
            .sum()
    }
    /// Area of triangle `t` (see [`Mesh::area`]).
    pub fn triangle_area(&self, t: usize) -> f64 {
        self.triangle_map(t).area()
    }
    /// Mesh quality figures.
    pub fn quality(&self) -> Quality {
        topology::quality(self)
    }

    /// Checks that `partners` has one entry per node and is an involution; returns the
    /// mesh's size (largest coordinate), the scale of the position tolerance.
    fn check_involution(
        &self,
        partners: &[NodeId],
        bad: &dyn Fn(usize, String) -> MeshError,
    ) -> Result<f64, MeshError> {
        if partners.len() != self.points.len() {
            return Err(bad(
                0,
                format!(
                    "{} partners for {} nodes",
                    partners.len(),
                    self.points.len()
                ),
            ));
        }
        for (i, p) in partners.iter().enumerate() {
            if p.idx() >= partners.len() || partners[p.idx()].idx() != i {
                return Err(bad(i, "the partner map is not an involution".into()));
            }
        }
        Ok(self
            .points
            .iter()
            .map(|p| p[0].abs().max(p[1].abs()))
            .fold(0.0, f64::max))
    }

    /// For a mesh invariant under rotation by pi about a centre (generated
    /// with `pi_symmetric`), `partners[i]` is the node at the rotated
    /// position of node `i`. The map is an involution; nodes on the cut line
    /// through the centre partner other cut nodes (a node at the centre
    /// itself is its own partner). Generated meshes number the meshed half
    /// first: nodes `0..n` and triangles `0..t` (with `t` half the triangle
    /// count) are the half, triangle `t + j` is the image of triangle `j`,
    /// and every node of the half that is not on the cut has its partner at
    /// `n` or above. `None` for meshes without this symmetry.
    pub fn pi_partner_nodes(&self) -> Option<&[NodeId]> {
        self.pi_partners.as_deref()
    }

    /// The centre of the pi-rotation symmetry (mean of a node and its
    /// partner), when the mesh has one.
    pub fn pi_centre(&self) -> Option<[f64; 2]> {
        let p = self.pi_partners.as_ref()?;
        let a = self.points[0];
        let b = self.points[p[0].idx()];
        Some([0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])])
    }

    /// Attaches a pi-rotation partner map (see [`Mesh::pi_partner_nodes`])
    /// after checking it: one entry per node, an involution, partners at the
    /// rotated positions (relative tolerance 1e-9 of the mesh size), and the
    /// image of every triangle a triangle of the same region.
    pub fn try_with_pi_partners(mut self, partners: Vec<NodeId>) -> Result<Mesh, MeshError> {
        let bad = |node: usize, reason: String| MeshError::PiPartners {
            node: node as u32,
            reason,
        };
        let scale = self.check_involution(&partners, &bad)?;
        let a = self.points[0];
        let b = self.points[partners[0].idx()];
        let centre = [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])];
        for (i, p) in partners.iter().enumerate() {
            let x = self.points[i];
            let y = self.points[p.idx()];
            let err = (x[0] + y[0] - 2.0 * centre[0]).hypot(x[1] + y[1] - 2.0 * centre[1]);
            if err > 1e-9 * scale {
                return Err(bad(
                    i,
                    format!("the partner is {err:.3e} m away from the rotated position"),
                ));
            }
        }
        let mut tris = std::collections::HashMap::new();
        for (i, t) in self.triangles.iter().enumerate() {
            let mut v = t.vertices();
            v.sort_unstable();
            tris.insert(v, i);
        }
        // Each image triangle is renumbered (a cyclic shift, orientation kept) so that its
        // local vertex k is the image of local vertex k: then local function k of the image
        // is the rotated local function k, what a symmetry-adapted basis needs.
        for i in 0..self.triangles.len() {
            let t = self.triangles[i];
            let image = t.vertices().map(|n| partners[n.idx()]);
            let mut key = image;
            key.sort_unstable();
            let j = match tris.get(&key) {
                Some(&j) if self.triangles[j].region == t.region => j,
                _ => {
                    return Err(bad(
                        t.nodes[0].idx(),
                        "the rotated image of a triangle is not a triangle of the same region"
                            .into(),
                    ))
                }
            };
            if j <= i {
                continue;
            }
            let other = self.triangles[j];
            let shift = (0..3)
                .find(|s| other.nodes[*s] == image[0])
                .expect("the image shares its vertices");
            let mut nodes = other.nodes;
            for k in 0..3 {
                nodes[k] = other.nodes[(k + shift) % 3];
                nodes[3 + k] = other.nodes[3 + (k + shift) % 3];
            }
            if nodes[..3] != image[..] {
                return Err(bad(
                    t.nodes[0].idx(),
                    "the rotated image of a triangle has the opposite orientation".into(),
                ));
            }
            self.triangles[j].nodes = nodes;
            let te = self.triangle_edges[j];
            self.triangle_edges[j] = std::array::from_fn(|k| te[(k + shift) % 3]);
        }
        self.pi_partners = Some(partners);
        Ok(self)
    }

    /// For a mesh invariant under the mirror `v -> 2 v_c - v` about a line
    /// `v = v_c` (generated with `mirror_symmetric`), `partners[i]` is the node at
    /// the mirrored position of node `i`; nodes on the line are their own partners.
    /// `None` for meshes without this symmetry.
    pub fn mirror_partner_nodes(&self) -> Option<&[NodeId]> {
        self.mirror_partners.as_deref()
    }

    /// Attaches a mirror partner map (see [`Mesh::mirror_partner_nodes`]) after
    /// checking it: one entry per node, an involution, partners at the mirrored
    /// positions (relative tolerance 1e-9 of the mesh size), and the image of every
    /// triangle a triangle of the same region.
    pub fn try_with_mirror_partners(mut self, partners: Vec<NodeId>) -> Result<Mesh, MeshError> {
        let bad = |node: usize, reason: String| MeshError::MirrorPartners {
            node: node as u32,
            reason,
        };
        let scale = self.check_involution(&partners, &bad)?;
        let line = 0.5 * (self.points[0][1] + self.points[partners[0].idx()][1]);
        for (i, p) in partners.iter().enumerate() {
            let x = self.points[i];
            let y = self.points[p.idx()];
            let err = (x[0] - y[0]).hypot(x[1] + y[1] - 2.0 * line);
            if err > 1e-9 * scale {
                return Err(bad(
                    i,
                    format!("the partner is {err:.3e} m away from the mirrored position"),
                ));
            }
        }
        let mut tris = std::collections::HashMap::new();
        for t in &self.triangles {
            let mut v = t.vertices();
            v.sort_unstable();
            tris.insert(v, t.region);
        }
        for t in &self.triangles {
            let mut image = t.vertices().map(|n| partners[n.idx()]);
            image.sort_unstable();
            if tris.get(&image) != Some(&t.region) {
                return Err(bad(
                    t.nodes[0].idx(),
                    "the mirror image of a triangle is not a triangle of the same region".into(),
                ));
            }
        }
        self.mirror_partners = Some(partners);
        Ok(self)
    }
}

/// Quality figures of a mesh (angles of the straight triangle through the vertices).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Quality {
    /// Number of triangles.
    pub triangles: usize,
    /// Number of nodes (vertices plus mid-side nodes).
    pub nodes: usize,
    /// Number of global edges.
    pub edges: usize,
    /// Smallest interior angle, degrees.
    pub min_angle_deg: f64,
    /// Largest interior angle, degrees.
    pub max_angle_deg: f64,
    /// Largest aspect ratio (longest edge over smallest height times sqrt(3)/2;
    /// 1 for an equilateral triangle).
    pub max_aspect: f64,
    /// Smallest and largest edge length, metres.
    pub edge_length_range: [f64; 2],
}

impl fmt::Display for Quality {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} triangles, {} nodes, {} edges; angles {:.1}..{:.1} deg; max aspect {:.2}; edge length {:.3e}..{:.3e} m",
            self.triangles,
            self.nodes,
            self.edges,
            self.min_angle_deg,
            self.max_angle_deg,
            self.max_aspect,
            self.edge_length_range[0],
            self.edge_length_range[1]
        )
    }
}
