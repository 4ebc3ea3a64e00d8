//! Degrees of freedom: global numbering with edge signs, wall and axis
//! conditions, and the reduced system after eliminating constrained DOFs.
//!
//! Full numbering (`ne` edges, `nt` triangles, `nv` vertices):
//!
//! ```text
//!   transverse  [0, ne)            Whitney DOF of each edge (sign = edge orientation)
//!               [ne, 2 ne)         gradient edge bubble (order 2, no sign)
//!               [2 ne, 2 ne + 2 nt) two face DOFs per triangle (order 2)
//!   third comp. then nv vertex DOFs, then ne edge-bubble DOFs (order 2)
//! ```
use num_complex::Complex64 as c64;
use twistmode_mesh::Mesh;

use crate::element::Order;
use crate::error::FemError;

/// Condition on a tagged boundary.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Wall {
    /// Perfect electric conductor: tangential E = 0 (essential; DOFs removed).
    ElectricConductor,
    /// Perfect magnetic conductor: tangential H = 0 (natural; nothing to do).
    MagneticConductor,
}

/// Counts that say what the conditions removed and where the static modes sit.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ConstraintSummary {
    /// DOFs before elimination.
    pub full: usize,
    /// DOFs after elimination (size of the matrices).
    pub reduced: usize,
    /// Constrained transverse (edge and face) DOFs.
    pub constrained_transverse: usize,
    /// Constrained third-component (Lagrange) DOFs.
    pub constrained_third: usize,
    /// Dimension of the discrete gradient space in the reduced system: the
    /// number of eigenvalues exactly at `k0 = 0` (curl-free fields). For `m = 0`
    /// on a multiply connected section, discrete harmonic fields add to these.
    pub gradient_space: usize,
}

/// Local DOFs of one triangle: global (full) index and sign of each local function,
/// transverse functions first, then the third component.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LocalDofs {
    /// Full DOF index of each local function.
    pub index: [usize; 14],
    /// Sign (+-1) multiplying each local function.
    pub sign: [f64; 14],
    /// Number of transverse functions (3 or 8).
    pub transverse: usize,
    /// Total number of local functions (6 or 14).
    pub len: usize,
    /// Vertex labels of the two face functions (order 2; see
    /// [`crate::element::nedelec_reference_with_faces`]).
    pub faces: [u8; 3],
}

/// Global DOF numbering and the map to the reduced (constrained) system.
#[derive(Clone, Debug, PartialEq)]
pub struct DofMap {
    order: Order,
    edges: usize,
    triangles: usize,
    vertex_of_node: Vec<u32>,
    vertices: usize,
    reduced_of_full: Vec<usize>,
    full_of_reduced: Vec<usize>,
    summary: ConstraintSummary,
    /// Face-function vertex labels per triangle; `None`: the default labels everywhere.
    face_labels: Option<Vec<[u8; 3]>>,
}

/// Marker for an eliminated DOF in `reduced_of_full`.
const ELIMINATED: usize = usize::MAX;

impl DofMap {
    /// Numbers the DOFs of `mesh` and eliminates those fixed by the walls, and
    /// (when `axis` names a boundary tag) by the axis of a body of revolution:
    /// third component zero on axis nodes for every `m`, tangential edge DOFs
    /// zero on axis edges when `m != 0`.
    pub fn try_new(
        mesh: &Mesh,
        order: Order,
        walls: &[(String, Wall)],
        axis: Option<&str>,
        m: f64,
    ) -> Result<DofMap, FemError> {
        let edges = mesh.edges().len();
        let triangles = mesh.triangles().len();
        let mut vertex_of_node = vec![u32::MAX; mesh.points().len()];
        let mut vertices = 0usize;
        for tri in mesh.triangles() {
            for v in tri.vertices() {
                if vertex_of_node[v.idx()] == u32::MAX {
                    vertex_of_node[v.idx()] = vertices as u32;
                    vertices += 1;
                }
            }
        }
        let mut map = DofMap {
            order,
            edges,
            triangles,
            vertex_of_node,
            vertices,
            reduced_of_full: Vec::new(),
            full_of_reduced: Vec::new(),
            summary: ConstraintSummary {
                full: 0,
                reduced: 0,
                constrained_transverse: 0,
                constrained_third: 0,
                gradient_space: 0,
            },
            face_labels: None,
        };
        let full = map.full_len();
        // Which edges lose their tangential DOFs, which lose their third-component DOFs.
        let mut tangential_fixed = vec![false; edges];
        let mut third_fixed = vec![false; edges];
        for (name, wall) in walls {
            let tag = mesh
                .boundary_tag(name)
                .ok_or_else(|| FemError::UnknownBoundary { name: name.clone() })?;
            if *wall == Wall::ElectricConductor {
                for b in mesh.boundary().iter().filter(|b| b.tag == tag) {
                    tangential_fixed[b.edge.idx()] = true;
                    third_fixed[b.edge.idx()] = true;
                }
            }
        }
        if let Some(axis) = axis.and_then(|name| mesh.boundary_tag(name)) {
            for b in mesh.boundary().iter().filter(|b| b.tag == axis) {
                third_fixed[b.edge.idx()] = true;
                if m != 0.0 {
                    tangential_fixed[b.edge.idx()] = true;
                }
            }
        }
        let mut fixed = vec![false; full];
        for e in 0..edges {
            if tangential_fixed[e] {
                fixed[map.whitney(e)] = true;
                if order == Order::Two {
                    fixed[map.edge_gradient(e)] = true;
                }
            }
            if third_fixed[e] {
                for n in mesh.edges()[e] {
                    fixed[map.third_vertex(map.vertex_of_node[n.idx()] as usize)] = true;
                }
                if order == Order::Two {
                    fixed[map.third_edge(e)] = true;
                }
            }
        }
        map.reduced_of_full = vec![ELIMINATED; full];
        for (i, f) in fixed.iter().enumerate() {
            if !f {
                map.reduced_of_full[i] = map.full_of_reduced.len();
                map.full_of_reduced.push(i);
            }
        }
        let third_start = map.third_start();
        let constrained_transverse = fixed[..third_start].iter().filter(|f| **f).count();
        let constrained_third = fixed[third_start..].iter().filter(|f| **f).count();
        let free_third = (full - third_start) - constrained_third;
        let gradient_space = if m != 0.0 {
            // Kernel of the curl: (grad phi, i m phi) with phi in the free Lagrange space.
            free_third
        } else {
            // Kernel: (grad phi, 0), phi constant along chains of fixed edges, modulo
            // constants; plus a constant third component when none is fixed.
            let mut parent: Vec<usize> = (0..vertices).collect();
            fn find(p: &mut [usize], mut i: usize) -> usize {
                while p[i] != i {
                    p[i] = p[p[i]];
                    i = p[i];
                }
                i
            }
            for e in (0..edges).filter(|e| tangential_fixed[*e]) {
                let [a, b] = mesh.edges()[e];
                let ra = find(&mut parent, map.vertex_of_node[a.idx()] as usize);
                let rb = find(&mut parent, map.vertex_of_node[b.idx()] as usize);
                parent[ra] = rb;
            }
            let components = (0..vertices)
                .filter(|i| find(&mut parent, *i) == *i)
                .count();
            let bubbles = if order == Order::Two {
                tangential_fixed.iter().filter(|f| !**f).count()
            } else {
                0
            };
            components - 1 + bubbles + usize::from(constrained_third == 0)
        };
        map.summary = ConstraintSummary {
            full,
            reduced: map.full_of_reduced.len(),
            constrained_transverse,
            constrained_third,
            gradient_space,
        };
        Ok(map)
    }

    /// The same numbering with the face functions of each triangle built on the given
    /// vertex labels (one permutation of `0, 1, 2` per triangle).
    pub fn with_face_labels(mut self, labels: Vec<[u8; 3]>) -> DofMap {
        self.face_labels = Some(labels);
        self
    }
    /// Element order.
    pub fn order(&self) -> Order {
        self.order
    }
    /// What the conditions removed.
    pub fn summary(&self) -> ConstraintSummary {
        self.summary
    }
    /// Number of DOFs before elimination.
    pub fn full_len(&self) -> usize {
        self.third_start()
            + self.vertices
            + if self.order == Order::Two {
                self.edges
            } else {
                0
            }
    }
    /// Number of DOFs of the reduced system.
    pub fn reduced_len(&self) -> usize {
        self.full_of_reduced.len()
    }
    /// Reduced index of a full DOF, `None` if eliminated.
    pub fn reduced_index(&self, full: usize) -> Option<usize> {
        match self.reduced_of_full[full] {
            ELIMINATED => None,
            r => Some(r),
        }
    }
    /// Full index of each reduced DOF.
    pub fn full_indices(&self) -> &[usize] {
        &self.full_of_reduced
    }
    /// First full index of the third-component block.
    pub fn third_start(&self) -> usize {
        match self.order {
            Order::One => self.edges,
            Order::Two => 2 * self.edges + 2 * self.triangles,
        }
    }
    /// Full index of the Whitney DOF of edge `e`.
    pub fn whitney(&self, e: usize) -> usize {
        e
    }
    /// Full index of the gradient-bubble DOF of edge `e` (order 2).
    pub fn edge_gradient(&self, e: usize) -> usize {
        self.edges + e
    }
    /// Full index of face DOF `k` (0 or 1) of triangle `t` (order 2).
    pub fn face(&self, t: usize, k: usize) -> usize {
        2 * self.edges + 2 * t + k
    }
    /// Full index of the third-component DOF of vertex number `v`.
    pub fn third_vertex(&self, v: usize) -> usize {
        self.third_start() + v
    }
    /// Full index of the third-component edge bubble of edge `e` (order 2).
    pub fn third_edge(&self, e: usize) -> usize {
        self.third_start() + self.vertices + e
    }
    /// Vertex number of mesh node `node`, if it is a vertex.
    pub fn vertex_number(&self, node: usize) -> Option<usize> {
        match self.vertex_of_node.get(node) {
            Some(&v) if v != u32::MAX => Some(v as usize),
            _ => None,
        }
    }

    /// Local-to-global map of triangle `t`.
    pub fn triangle_dofs(&self, mesh: &Mesh, t: usize) -> LocalDofs {
        let mut index = [0usize; 14];
        let mut sign = [1.0f64; 14];
        let te = mesh.triangle_edges()[t];
        let nt = self.order.transverse_per_triangle();
        for k in 0..3 {
            index[k] = self.whitney(te[k].0.idx());
            sign[k] = f64::from(te[k].1);
        }
        if self.order == Order::Two {
            for k in 0..3 {
                index[3 + k] = self.edge_gradient(te[k].0.idx());
            }
            index[6] = self.face(t, 0);
            index[7] = self.face(t, 1);
        }
        let tri = &mesh.triangles()[t];
        for (k, v) in tri.vertices().iter().enumerate() {
            index[nt + k] = self.third_vertex(self.vertex_of_node[v.idx()] as usize);
        }
        if self.order == Order::Two {
            for k in 0..3 {
                index[nt + 3 + k] = self.third_edge(te[k].0.idx());
            }
        }
        LocalDofs {
            index,
            sign,
            transverse: nt,
            len: nt + self.order.scalar_per_triangle(),
            faces: self
                .face_labels
                .as_ref()
                .map_or(crate::element::IDENTITY_FACES, |f| f[t]),
        }
    }

    /// Full solution vector (zeros at eliminated DOFs) from a reduced one.
    pub fn expand(&self, reduced: &[c64]) -> Vec<c64> {
        let mut full = vec![c64::new(0.0, 0.0); self.full_len()];
        for (r, &f) in self.full_of_reduced.iter().enumerate() {
            full[f] = reduced[r];
        }
        full
    }

    /// Reduced vector from a full one (eliminated entries dropped).
    pub fn restrict(&self, full: &[c64]) -> Vec<c64> {
        self.full_of_reduced.iter().map(|&f| full[f]).collect()
    }
}

impl DofMap {
    /// Full DOF vector of the field `(grad phi, i m phi)`, the gradient of
    /// `phi exp(i m w)`, for a scalar `phi` in the Lagrange space given by its
    /// hierarchical coefficients (vertex values, then for order 2 the
    /// coefficients of the edge bubbles `4 l_a l_b`). Exact: the discrete
    /// gradient of the Lagrange space lies in the Nédélec space.
    pub fn gradient(&self, mesh: &Mesh, phi: &[c64], m: f64) -> Vec<c64> {
        let mut full = vec![c64::new(0.0, 0.0); self.full_len()];
        for (e, [a, b]) in mesh.edges().iter().enumerate() {
            let (va, vb) = (self.vertex_of_node[a.idx()], self.vertex_of_node[b.idx()]);
            // grad sum phi_i l_i = sum over edges (phi_high - phi_low) W_(low, high).
            full[self.whitney(e)] = phi[vb as usize] - phi[va as usize];
            if self.order == Order::Two {
                full[self.edge_gradient(e)] = phi[self.vertices + e] * 4.0;
            }
        }
        let start = self.third_start();
        for (i, p) in phi.iter().enumerate() {
            full[start + i] = p * c64::new(0.0, m);
        }
        full
    }
}
