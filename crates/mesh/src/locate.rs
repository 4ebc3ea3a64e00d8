//! Point location: which triangle holds a point, and where in it.
//!
//! [`PointLocator`] indexes the (exact, curved-side) bounding boxes of the
//! triangles in a uniform grid of buckets over the mesh's box, about one
//! cell per triangle (a bucket grid; Samet, *Foundations of Multidimensional
//! and Metric Data Structures*, 2006, sec. 1.4). A query visits one cell and
//! tests its triangles in ascending index order: a box check, then the
//! exact inverse map ([`TriangleMap::invert`]), so points near curved sides
//! are placed in the right triangle.
//!
//! Determinism: a point is accepted by a triangle when its reference
//! coordinates lie in the reference triangle widened by [`INSIDE_TOL`]; a
//! point on a side or vertex shared by several triangles (to that
//! tolerance) goes to the lowest-numbered of them, as a linear scan would
//! find it ([`PointLocator::locate_by_scan`] is that scan). The returned
//! coordinates are clamped onto the closed reference triangle.

use crate::map::{clamp_to_reference, in_reference, BoundingBox, TriangleMap};
use crate::{Mesh, Region, RegionKind};

/// Tolerance in reference coordinates within which a point counts as inside
/// a triangle (about 1e-10 of the triangle's size in physical distance).
pub const INSIDE_TOL: f64 = 1e-10;

/// Relative padding of each triangle's box in the grid (well above the
/// physical distance [`INSIDE_TOL`] stands for).
const BOX_PAD: f64 = 1e-8;

/// Grid cells per indexed triangle.
const CELLS_PER_TRIANGLE: f64 = 2.0;

/// Where a point lies: the triangle and the point's reference coordinates in it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Location {
    /// Triangle index into [`Mesh::triangles`].
    pub triangle: usize,
    /// Reference coordinate `xi` (in `[0, 1]`).
    pub xi: f64,
    /// Reference coordinate `eta` (in `[0, 1 - xi]`).
    pub eta: f64,
}

/// One indexed triangle.
#[derive(Clone, Debug)]
struct Entry {
    triangle: u32,
    map: TriangleMap,
    /// Exact box, padded by [`BOX_PAD`] of its size.
    bbox: BoundingBox,
    /// How far outside the straight triangle (in its barycentric
    /// coordinates) a point of the curved one can lie; see
    /// [`TriangleMap::curvature_bound`].
    reach: f64,
}

impl Entry {
    fn new(triangle: usize, map: TriangleMap) -> Entry {
        let b = map.bounding_box();
        let s = b.size();
        // |d l0| <= |d xi| + |d eta| <= sqrt(2) |d r|; 1.5 leaves margin for rounding.
        let reach = 1.5 * map.curvature_bound();
        Entry {
            triangle: triangle as u32,
            map,
            bbox: b.expanded(BOX_PAD * s[0].max(s[1])),
            reach,
        }
    }

    /// Reference coordinates of `p` when this triangle holds it.
    #[inline]
    fn test(&self, p: [f64; 2]) -> Option<[f64; 2]> {
        if !self.bbox.contains(p) {
            return None;
        }
        let s = self.map.straight_inverse(p);
        if !in_reference(s, INSIDE_TOL + self.reach) {
            return None;
        }
        if !self.map.is_quadratic() {
            return in_reference(s, INSIDE_TOL).then(|| clamp_to_reference(s));
        }
        self.map
            .invert(p, INSIDE_TOL)
            .filter(|r| in_reference(*r, INSIDE_TOL))
            .map(clamp_to_reference)
    }

    fn location(&self, r: [f64; 2]) -> Location {
        Location {
            triangle: self.triangle as usize,
            xi: r[0],
            eta: r[1],
        }
    }
}

/// A spatial index of a mesh's triangles (all, or those of some regions)
/// answering "which triangle holds this point". It copies what it needs
/// and does not borrow the mesh.
#[derive(Clone, Debug)]
pub struct PointLocator {
    entries: Vec<Entry>,
    /// Box of the grid (the union of the entries' padded boxes).
    grid_box: BoundingBox,
    /// Cells along u and v.
    cells: [usize; 2],
    /// Cell size along u and v.
    cell_size: [f64; 2],
    /// Entries of cell `c` are `items[start[c]..start[c + 1]]`, ascending.
    start: Vec<u32>,
    items: Vec<u32>,
}

impl PointLocator {
    /// Indexes every triangle of `mesh`.
    pub fn new(mesh: &Mesh) -> PointLocator {
        PointLocator::for_regions(mesh, |_| true)
    }

    /// Indexes the body triangles of `mesh` (regions of kind [`RegionKind::Body`]).
    pub fn bodies(mesh: &Mesh) -> PointLocator {
        PointLocator::for_regions(mesh, |r| matches!(r.kind, RegionKind::Body { .. }))
    }

    /// Indexes the triangles of the regions for which `keep` is true.
    pub fn for_regions(mesh: &Mesh, keep: impl Fn(&Region) -> bool) -> PointLocator {
        let kept: Vec<bool> = mesh.regions().iter().map(keep).collect();
        let entries: Vec<Entry> = mesh
            .triangles()
            .iter()
            .enumerate()
            .filter(|(_, tri)| kept[tri.region.idx()])
            .map(|(t, _)| Entry::new(t, mesh.triangle_map(t)))
            .collect();
        PointLocator::build(entries)
    }

    fn build(entries: Vec<Entry>) -> PointLocator {
        let Some(grid_box) = entries.iter().map(|e| e.bbox).reduce(BoundingBox::union) else {
            return PointLocator {
                entries,
                grid_box: BoundingBox::at([0.0; 2]),
                cells: [0, 0],
                cell_size: [1.0, 1.0],
                start: vec![0],
                items: Vec::new(),
            };
        };
        // About one cell per triangle, square cells, at least one per axis.
        let [w, h] = grid_box.size();
        let side = (w * h / (CELLS_PER_TRIANGLE * entries.len() as f64)).sqrt();
        let count = |extent: f64| ((extent / side).ceil() as usize).clamp(1, 1 << 14);
        let cells = [count(w), count(h)];
        let cell_size = [w / cells[0] as f64, h / cells[1] as f64];
        let mut locator = PointLocator {
            entries,
            grid_box,
            cells,
            cell_size,
            start: Vec::new(),
            items: Vec::new(),
        };
        // Counting sort of (cell, entry) pairs: entries enter each cell in
        // ascending order, so each cell's list is sorted by triangle index.
        let ncell = cells[0] * cells[1];
        let mut counts = vec![0u32; ncell + 1];
        for e in &locator.entries {
            locator.for_cells(&e.bbox, |c| counts[c + 1] += 1);
        }
        for c in 0..ncell {
            counts[c + 1] += counts[c];
        }
        let mut fill = counts.clone();
        let mut items = vec![0u32; counts[ncell] as usize];
        for (i, e) in locator.entries.iter().enumerate() {
            locator.for_cells(&e.bbox, |c| {
                items[fill[c] as usize] = i as u32;
                fill[c] += 1;
            });
        }
        locator.start = counts;
        locator.items = items;
        locator
    }

    /// Cell coordinate of `x` along `axis`, clamped into the grid.
    #[inline]
    fn cell_of(&self, x: f64, axis: usize) -> usize {
        let c = ((x - self.grid_box.min[axis]) / self.cell_size[axis]).floor();
        (c.max(0.0) as usize).min(self.cells[axis] - 1)
    }

    fn for_cells(&self, b: &BoundingBox, mut f: impl FnMut(usize)) {
        let (i0, i1) = (self.cell_of(b.min[0], 0), self.cell_of(b.max[0], 0));
        let (j0, j1) = (self.cell_of(b.min[1], 1), self.cell_of(b.max[1], 1));
        for j in j0..=j1 {
            for i in i0..=i1 {
                f(j * self.cells[0] + i);
            }
        }
    }

    /// The triangle holding `p` and `p`'s reference coordinates in it;
    /// `None` when no indexed triangle holds it (see the module notes for
    /// the tolerance and for points on shared sides).
    pub fn locate(&self, p: [f64; 2]) -> Option<Location> {
        if self.entries.is_empty() || !self.grid_box.contains(p) {
            return None;
        }
        let c = self.cell_of(p[1], 1) * self.cells[0] + self.cell_of(p[0], 0);
        self.items[self.start[c] as usize..self.start[c + 1] as usize]
            .iter()
            .find_map(|&i| {
                let e = &self.entries[i as usize];
                e.test(p).map(|r| e.location(r))
            })
    }

    /// The same answer as [`PointLocator::locate`] by testing every indexed
    /// triangle in turn (for checks and timing comparisons).
    pub fn locate_by_scan(&self, p: [f64; 2]) -> Option<Location> {
        self.entries
            .iter()
            .find_map(|e| e.test(p).map(|r| e.location(r)))
    }

    /// Number of indexed triangles.
    pub fn len(&self) -> usize {
        self.entries.len()
    }

    /// True when no triangle is indexed.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }

    /// Grid cells along u and v.
    pub fn grid_cells(&self) -> [usize; 2] {
        self.cells
    }

    /// Mean number of triangles listed per grid cell.
    pub fn mean_cell_load(&self) -> f64 {
        self.items.len() as f64 / (self.cells[0] * self.cells[1]).max(1) as f64
    }
}
