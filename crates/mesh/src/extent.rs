//! Where a mesh lies: triangle maps, bounding boxes of the mesh and of its
//! regions, and the radial PML shell of a mesh that came without one.

use crate::map::{BoundingBox, TriangleMap};
use crate::{GeometryOrder, Mesh, PmlGeometry, Region, RegionId, RegionKind};

impl RegionKind {
    /// True for [`RegionKind::Body`].
    pub fn is_body(&self) -> bool {
        matches!(self, RegionKind::Body { .. })
    }
}

impl Mesh {
    /// The geometry map of triangle `t` (straight or quadratic, as the mesh).
    pub fn triangle_map(&self, t: usize) -> TriangleMap {
        let tri = &self.triangles()[t];
        let mut nodes = [[0.0; 2]; 6];
        for (node, id) in nodes.iter_mut().zip(&tri.nodes) {
            *node = self.points()[id.idx()];
        }
        match self.order() {
            GeometryOrder::Linear => TriangleMap::straight([nodes[0], nodes[1], nodes[2]]),
            GeometryOrder::Quadratic => TriangleMap::quadratic(nodes),
        }
    }

    /// Exact bounding box of the whole mesh (curved sides included).
    pub fn bounding_box(&self) -> BoundingBox {
        self.bounding_box_where(|_| true)
            .expect("a mesh has at least one triangle")
    }

    /// Exact bounding box of the triangles of the regions for which `keep`
    /// is true; `None` when there are none.
    pub fn bounding_box_where(&self, keep: impl Fn(&Region) -> bool) -> Option<BoundingBox> {
        let kept: Vec<bool> = self.regions().iter().map(keep).collect();
        (0..self.triangles().len())
            .filter(|&t| kept[self.triangles()[t].region.idx()])
            .map(|t| self.triangle_map(t).bounding_box())
            .reduce(BoundingBox::union)
    }

    /// Exact bounding box of one region; `None` when it has no triangle.
    pub fn region_box(&self, region: RegionId) -> Option<BoundingBox> {
        let target = self.regions().get(region.idx())?;
        // Compare by identity: names may repeat across regions.
        self.bounding_box_where(|r| std::ptr::eq(r, target))
    }

    /// Exact bounding box of the body regions (all of kind
    /// [`RegionKind::Body`]); `None` when the mesh has no body triangle.
    pub fn body_box(&self) -> Option<BoundingBox> {
        self.bounding_box_where(|r| r.kind.is_body())
    }

    /// The radial PML shell of a mesh that has PML regions but no PML
    /// description (an imported Gmsh mesh): about `centre`, from the nearest
    /// to the farthest vertex of a PML triangle. Bodies of revolution take
    /// the origin as centre, other sections the centre of [`Mesh::body_box`].
    /// `None` when the mesh has no PML triangle.
    ///
    /// This is the shell the layer's vertices span; it is exact when the
    /// PML's inner and outer boundaries are circles about `centre` with
    /// vertices on them (the layout a radial stretch expects).
    pub fn infer_radial_pml(&self, centre: [f64; 2]) -> Option<PmlGeometry> {
        let (mut inner, mut outer) = (f64::INFINITY, 0.0f64);
        for t in self.triangles() {
            if self.regions()[t.region.idx()].kind == RegionKind::Pml {
                for n in t.vertices() {
                    let p = self.points()[n.idx()];
                    let d = (p[0] - centre[0]).hypot(p[1] - centre[1]);
                    inner = inner.min(d);
                    outer = outer.max(d);
                }
            }
        }
        (outer > inner).then_some(PmlGeometry::Radial {
            centre,
            inner,
            outer,
        })
    }
}
