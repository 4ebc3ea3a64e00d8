//! Global assembly: element parts scattered into the sparsity pattern of one harmonic
//! block on the full DOF numbering, and the reduction of a block to the unknowns that
//! are solved for (walls, axis, symmetry sectors).
//!
//! ```text
//!   BlockPattern (once per mesh and order)      full DOFs x full DOFs, positions of element entries
//!   AssembledParts (once per medium)            S00, S01, S10, S11, M per harmonic j, on that pattern
//!   Reduction (per order m, per sector)         full DOF -> (reduced unknown, weight) or removed
//!   ReducedPattern (per pair of reductions)     B = R_test^T A R_trial as a gather of weighted entries
//! ```
//!
//! A reduction maps every full DOF to at most one reduced unknown with a weight, which
//! covers both the elimination of constrained DOFs (weight 1) and a symmetry-adapted
//! basis in which each unknown is `(e_i + s e_P(i)) / sqrt 2` (weights `1/sqrt 2` and
//! `s / sqrt 2`).
use faer::sparse::{SparseColMat, SymbolicSparseColMat};
use num_complex::Complex64 as c64;
use rayon::prelude::*;
use twistmode_mesh::Mesh;

use crate::dofs::DofMap;
use crate::error::FemError;
use crate::geometry::ElementGeometry;
use crate::harmonics::PointMedium;
use crate::kernel::{combine_stiffness, element_parts, part, PARTS};
use crate::quadrature::TriangleRule;

/// Triangles whose element parts are computed in one parallel batch before scattering.
const BATCH: usize = 512;

/// The sparsity pattern of one harmonic block on the full DOF numbering (compressed
/// columns, rows sorted), and for every triangle the position of each local entry.
#[derive(Clone, Debug)]
pub struct BlockPattern {
    n: usize,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    local_len: usize,
    /// `slots[t * len^2 + row * len + col]`: position of the local entry in the values.
    slots: Vec<u32>,
    /// Sign of each local entry (product of the two edge signs).
    signs: Vec<f64>,
    /// Face-function labels of each triangle.
    faces: Vec<[u8; 3]>,
}

impl BlockPattern {
    /// The pattern of `mesh` with the numbering of `dofs` (constraints ignored: every
    /// full DOF has a row and a column).
    pub fn new(mesh: &Mesh, dofs: &DofMap) -> Result<BlockPattern, FemError> {
        let n = dofs.full_len();
        let order = dofs.order();
        let len = order.transverse_per_triangle() + order.scalar_per_triangle();
        let triangles = mesh.triangles().len();
        let mut columns: Vec<Vec<usize>> = vec![Vec::new(); n];
        let locals: Vec<_> = (0..triangles)
            .map(|t| dofs.triangle_dofs(mesh, t))
            .collect();
        for ld in &locals {
            for col in 0..len {
                let c = ld.index[col];
                columns[c].extend(ld.index[..len].iter().copied());
            }
        }
        let mut col_ptr = Vec::with_capacity(n + 1);
        col_ptr.push(0);
        let mut row_idx = Vec::new();
        for rows in columns.iter_mut() {
            rows.sort_unstable();
            rows.dedup();
            row_idx.extend_from_slice(rows);
            col_ptr.push(row_idx.len());
        }
        drop(columns);
        if row_idx.len() > u32::MAX as usize {
            return Err(FemError::Sparse(format!(
                "{} stored entries exceed the 32-bit positions of the block pattern",
                row_idx.len()
            )));
        }
        let mut slots = vec![0u32; triangles * len * len];
        let mut signs = vec![0.0f64; triangles * len * len];
        for (t, ld) in locals.iter().enumerate() {
            for row in 0..len {
                for col in 0..len {
                    let c = ld.index[col];
                    let rows = &row_idx[col_ptr[c]..col_ptr[c + 1]];
                    let at = rows
                        .binary_search(&ld.index[row])
                        .expect("every local pair is in the pattern");
                    let k = (t * len + row) * len + col;
                    slots[k] = (col_ptr[c] + at) as u32;
                    signs[k] = ld.sign[row] * ld.sign[col];
                }
            }
        }
        let faces = locals.iter().map(|ld| ld.faces).collect();
        Ok(BlockPattern {
            n,
            col_ptr,
            row_idx,
            local_len: len,
            slots,
            signs,
            faces,
        })
    }

    /// Number of full DOFs (rows and columns).
    pub fn dim(&self) -> usize {
        self.n
    }
    /// Stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }
    /// Column pointers.
    pub fn col_ptr(&self) -> &[usize] {
        &self.col_ptr
    }
    /// Row indices.
    pub fn row_idx(&self) -> &[usize] {
        &self.row_idx
    }
}

/// The parts `S00, S01, S10, S11, M` of every harmonic `j` of a medium, assembled on a
/// [`BlockPattern`].
#[derive(Clone, Debug)]
pub struct AssembledParts {
    /// Harmonics `j`, in the order of `values`.
    pub harmonics: Vec<i32>,
    /// `values[h][p]`: part `p` of harmonic `harmonics[h]` on the pattern.
    pub values: Vec<[Vec<c64>; PARTS]>,
}

impl AssembledParts {
    /// Assembles the parts of `harmonics` over all triangles: element parts in parallel
    /// batches, then scattered with edge signs. `medium(t, u, v)` is the medium at a
    /// point of triangle `t`.
    pub fn assemble(
        mesh: &Mesh,
        pattern: &BlockPattern,
        order: crate::element::Order,
        rule: &TriangleRule,
        harmonics: &[i32],
        medium: &(dyn Fn(usize, f64, f64) -> Option<PointMedium> + Sync),
    ) -> Result<AssembledParts, FemError> {
        let nnz = pattern.nnz();
        let zero = c64::new(0.0, 0.0);
        let mut values: Vec<[Vec<c64>; PARTS]> = harmonics
            .iter()
            .map(|_| std::array::from_fn(|_| vec![zero; nnz]))
            .collect();
        let len = pattern.local_len;
        let triangles = mesh.triangles().len();
        for start in (0..triangles).step_by(BATCH) {
            let end = (start + BATCH).min(triangles);
            let batch: Vec<_> = (start..end)
                .into_par_iter()
                .map(|t| {
                    let geometry = ElementGeometry::of_triangle(mesh, t);
                    element_parts(
                        &geometry,
                        order,
                        pattern.faces[t],
                        rule,
                        harmonics,
                        |u, v| medium(t, u, v),
                    )
                    .map_err(|p| FemError::SingularMap {
                        triangle: t,
                        u: p[0],
                        v: p[1],
                    })
                })
                .collect::<Result<_, _>>()?;
            for (offset, parts) in batch.iter().enumerate() {
                let base = (start + offset) * len * len;
                for (h, local) in parts.parts.iter().enumerate() {
                    for (p, matrix) in local.iter().enumerate() {
                        let target = &mut values[h][p];
                        for (k, v) in matrix.iter().enumerate() {
                            target[pattern.slots[base + k] as usize] += v * pattern.signs[base + k];
                        }
                    }
                }
            }
        }
        Ok(AssembledParts {
            harmonics: harmonics.to_vec(),
            values,
        })
    }

    /// Slot of harmonic `j`, if assembled.
    pub fn slot(&self, j: i32) -> Option<usize> {
        self.harmonics.iter().position(|&h| h == j)
    }

    /// Largest entry modulus of harmonic slot `h` over all five parts.
    pub fn max_abs(&self, h: usize) -> f64 {
        self.values[h]
            .iter()
            .flat_map(|v| v.iter())
            .map(|x| x.norm())
            .fold(0.0, f64::max)
    }
}

/// Full DOF -> the reduced unknowns whose basis vectors contain it, with weights: the
/// columns of an orthonormal basis `R` of the unknowns solved for, stored by rows.
#[derive(Clone, Debug, PartialEq)]
pub struct Reduction {
    /// Targets of full DOF `f` are `entries[start[f]..start[f + 1]]`.
    start: Vec<u32>,
    entries: Vec<(u32, f64)>,
    len: usize,
}

impl Reduction {
    /// A reduction in which each full DOF goes to at most one unknown; `len` is the
    /// number of reduced unknowns.
    pub fn new(target: Vec<Option<(u32, f64)>>, len: usize) -> Reduction {
        Self::from_lists(
            target
                .into_iter()
                .map(|t| t.into_iter().collect())
                .collect(),
            len,
        )
    }
    /// A reduction from the target list of every full DOF.
    pub fn from_lists(lists: Vec<Vec<(u32, f64)>>, len: usize) -> Reduction {
        let mut start = Vec::with_capacity(lists.len() + 1);
        let mut entries = Vec::new();
        start.push(0);
        for l in lists {
            entries.extend(l);
            start.push(entries.len() as u32);
        }
        Reduction {
            start,
            entries,
            len,
        }
    }
    /// The elimination of the constrained DOFs of `dofs` (weight 1).
    pub fn of_constraints(dofs: &DofMap) -> Reduction {
        let target = (0..dofs.full_len())
            .map(|f| dofs.reduced_index(f).map(|r| (r as u32, 1.0)))
            .collect();
        Self::new(target, dofs.reduced_len())
    }
    /// Reduced unknowns.
    pub fn len(&self) -> usize {
        self.len
    }
    /// True when nothing is kept.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }
    /// Full DOFs.
    pub fn full_len(&self) -> usize {
        self.start.len() - 1
    }
    /// The unknowns full DOF `f` belongs to, with its weight in each.
    pub fn targets(&self, f: usize) -> &[(u32, f64)] {
        &self.entries[self.start[f] as usize..self.start[f + 1] as usize]
    }
    /// Whether full DOF `f` is part of any unknown.
    pub fn keeps(&self, f: usize) -> bool {
        self.start[f] < self.start[f + 1]
    }
    /// The full DOFs and weights of each reduced unknown's basis vector.
    pub fn columns(&self) -> Vec<Vec<(usize, f64)>> {
        let mut cols = vec![Vec::new(); self.len];
        for f in 0..self.full_len() {
            for &(i, w) in self.targets(f) {
                cols[i as usize].push((f, w));
            }
        }
        cols
    }
    /// The first full DOF of each reduced unknown's basis vector.
    pub fn representatives(&self) -> Vec<usize> {
        let mut first = vec![usize::MAX; self.len];
        for f in 0..self.full_len() {
            for &(i, _) in self.targets(f) {
                let slot = &mut first[i as usize];
                *slot = (*slot).min(f);
            }
        }
        first
    }
    /// The full vector `R y` of a reduced one.
    pub fn expand(&self, reduced: &[c64]) -> Vec<c64> {
        (0..self.full_len())
            .map(|f| {
                self.targets(f)
                    .iter()
                    .map(|&(i, w)| reduced[i as usize] * w)
                    .sum()
            })
            .collect()
    }
}

/// `R_test^T A R_trial` for any `A` on a [`BlockPattern`]: the reduced pattern and, for
/// each of its entries, the weighted full entries that add up to it.
#[derive(Clone, Debug)]
pub struct ReducedPattern {
    rows: usize,
    cols: usize,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// Contributions of entry `q` are `source[start[q]..start[q + 1]]`.
    start: Vec<usize>,
    source: Vec<(u32, f64)>,
}

impl ReducedPattern {
    /// The gather plan of `R_test^T A R_trial`.
    pub fn new(pattern: &BlockPattern, test: &Reduction, trial: &Reduction) -> ReducedPattern {
        // (reduced column, reduced row, full position, weight)
        let mut entries: Vec<(u32, u32, u32, f64)> = Vec::with_capacity(pattern.nnz());
        for c in 0..pattern.n {
            for &(jc, wc) in trial.targets(c) {
                for p in pattern.col_ptr[c]..pattern.col_ptr[c + 1] {
                    for &(ir, wr) in test.targets(pattern.row_idx[p]) {
                        entries.push((jc, ir, p as u32, wr * wc));
                    }
                }
            }
        }
        entries.sort_unstable_by_key(|e| (e.0, e.1, e.2));
        let mut col_ptr = vec![0usize; trial.len + 1];
        let mut row_idx = Vec::new();
        let mut start = Vec::new();
        let mut source = Vec::with_capacity(entries.len());
        let mut last: Option<(u32, u32)> = None;
        for (jc, ir, p, w) in entries {
            if last != Some((jc, ir)) {
                row_idx.push(ir as usize);
                start.push(source.len());
                col_ptr[jc as usize + 1] += 1;
                last = Some((jc, ir));
            }
            source.push((p, w));
        }
        start.push(source.len());
        for j in 0..trial.len {
            col_ptr[j + 1] += col_ptr[j];
        }
        ReducedPattern {
            rows: test.len,
            cols: trial.len,
            col_ptr,
            row_idx,
            start,
            source,
        }
    }

    /// Stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }
    /// Rows (reduced test unknowns).
    pub fn rows(&self) -> usize {
        self.rows
    }
    /// Columns (reduced trial unknowns).
    pub fn cols(&self) -> usize {
        self.cols
    }
    /// Column pointers.
    pub fn col_ptr(&self) -> &[usize] {
        &self.col_ptr
    }
    /// Row indices.
    pub fn row_idx(&self) -> &[usize] {
        &self.row_idx
    }

    /// Reduced values of the full values given entry by entry by `full(p)`.
    pub fn gather(&self, full: impl Fn(usize) -> c64) -> Vec<c64> {
        (0..self.nnz())
            .map(|q| {
                self.source[self.start[q]..self.start[q + 1]]
                    .iter()
                    .map(|&(p, w)| full(p as usize) * w)
                    .sum()
            })
            .collect()
    }

    /// The reduced curl-curl and mass values of harmonic slot `h` of `parts` for test
    /// order `n_test` and trial order `n_trial`.
    pub fn gather_block(
        &self,
        parts: &AssembledParts,
        h: usize,
        n_test: f64,
        n_trial: f64,
    ) -> (Vec<c64>, Vec<c64>) {
        let v = &parts.values[h];
        let k = self.gather(|p| {
            combine_stiffness(
                [
                    v[part::S00][p],
                    v[part::S01][p],
                    v[part::S10][p],
                    v[part::S11][p],
                ],
                n_test,
                n_trial,
            )
        });
        let m = self.gather(|p| v[part::MASS][p]);
        (k, m)
    }

    /// A sparse matrix with this pattern and the given values.
    pub fn matrix(&self, values: Vec<c64>) -> SparseColMat<usize, c64> {
        let symbolic = SymbolicSparseColMat::new_checked(
            self.rows,
            self.cols,
            self.col_ptr.clone(),
            None,
            self.row_idx.clone(),
        );
        SparseColMat::new(symbolic, values)
    }
}
