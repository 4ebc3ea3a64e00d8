//! The sparsity pattern shared by `K`, `M` and every `K - sigma M`: the union of the
//! patterns of `K` and `M` with the place of each stored value in it, its transpose, and
//! the test for complex symmetry (`K = K^T` and `M = M^T`, not conjugated) that decides
//! between the two factorisations. (Equilibration lives in [`crate::scaling`].)

use faer::c64;
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};

use crate::memory::{try_vec, try_with_capacity};
use crate::{EigenError, Pencil};

/// Relative asymmetry `|a_ij - a_ji|` (against the larger of the two column maxima
/// and the entries themselves) below which a matrix counts as complex-symmetric.
const SYMMETRY_TOLERANCE: f64 = 1e-12;

/// The union of the patterns of `K` and `M` (rows sorted within each column): the fixed
/// pattern in which a [`SparseFactor`](crate::SparseFactor) receives the values of
/// `K - sigma M` at every shift.
#[derive(Debug)]
pub struct UnionPattern {
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// position in the union pattern of every stored value of K (column-major order)
    k_pos: Vec<usize>,
    /// position in the union pattern of every stored value of M
    m_pos: Vec<usize>,
}

/// The transpose of a [`UnionPattern`] and where each of its entries lands in it.
#[derive(Debug)]
pub(crate) struct Transposed {
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// position in the transposed pattern of every union entry
    pos: Vec<usize>,
}

impl UnionPattern {
    /// Union of the patterns of `pencil.k` and `pencil.m` and, for every stored value of
    /// each, its position in the union.
    pub(crate) fn of(pencil: &Pencil) -> Result<Self, EigenError> {
        let (k, m) = (pencil.k.as_ref(), pencil.m.as_ref());
        let n = k.ncols();
        let mut col_ptr = try_with_capacity(n + 1)?;
        let mut row_idx = try_with_capacity(k.compute_nnz() + m.compute_nnz())?;
        let mut mark = try_vec(n, usize::MAX)?;
        let mut slot = try_vec(n, 0usize)?;
        let mut k_pos = try_with_capacity(k.compute_nnz())?;
        let mut m_pos = try_with_capacity(m.compute_nnz())?;
        col_ptr.push(0);
        for j in 0..n {
            let begin = row_idx.len();
            for &i in k
                .row_idx_of_col_raw(j)
                .iter()
                .chain(m.row_idx_of_col_raw(j))
            {
                if mark[i] != j {
                    mark[i] = j;
                    row_idx.push(i);
                }
            }
            row_idx[begin..].sort_unstable();
            for (p, &i) in row_idx[begin..].iter().enumerate() {
                slot[i] = begin + p;
            }
            k_pos.extend(k.row_idx_of_col_raw(j).iter().map(|&i| slot[i]));
            m_pos.extend(m.row_idx_of_col_raw(j).iter().map(|&i| slot[i]));
            col_ptr.push(row_idx.len());
        }
        Ok(Self {
            col_ptr,
            row_idx,
            k_pos,
            m_pos,
        })
    }

    /// Number of rows and columns.
    pub fn dim(&self) -> usize {
        self.col_ptr.len() - 1
    }

    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// The pattern as a faer matrix structure (column pointers, sorted row indices).
    pub fn symbolic(&self) -> SymbolicSparseColMatRef<'_, usize> {
        let n = self.dim();
        SymbolicSparseColMatRef::new_checked(n, n, &self.col_ptr, None, &self.row_idx)
    }

    /// `values` (one per stored entry, column-major) as a matrix in this pattern.
    pub(crate) fn matrix<'a>(&'a self, values: &'a [c64]) -> SparseColMatRef<'a, usize, c64> {
        SparseColMatRef::new(self.symbolic(), values)
    }

    /// `K - sigma M` in this pattern.
    pub(crate) fn shifted_values(
        &self,
        pencil: &Pencil,
        sigma: c64,
    ) -> Result<Vec<c64>, EigenError> {
        let mut vals = try_vec(self.nnz(), c64::ZERO)?;
        for (v, &p) in pencil.k.val().iter().zip(&self.k_pos) {
            vals[p] += *v;
        }
        for (v, &p) in pencil.m.val().iter().zip(&self.m_pos) {
            vals[p] -= sigma * *v;
        }
        Ok(vals)
    }

    /// The transposed pattern and the position of each entry in it.
    pub(crate) fn transpose(&self) -> Result<Transposed, EigenError> {
        let n = self.dim();
        let mut t_ptr = try_vec(n + 1, 0usize)?;
        for &i in &self.row_idx {
            t_ptr[i + 1] += 1;
        }
        for i in 0..n {
            t_ptr[i + 1] += t_ptr[i];
        }
        let mut next = t_ptr.clone();
        let mut t_row = try_vec(self.nnz(), 0usize)?;
        let mut pos = try_vec(self.nnz(), 0usize)?;
        for j in 0..n {
            let column = self.col_ptr[j]..self.col_ptr[j + 1];
            for (p, &i) in pos[column.clone()].iter_mut().zip(&self.row_idx[column]) {
                let q = next[i];
                next[i] += 1;
                t_row[q] = j;
                *p = q;
            }
        }
        Ok(Transposed {
            col_ptr: t_ptr,
            row_idx: t_row,
            pos,
        })
    }

    /// Whether the pattern is symmetric and `K`, `M` are complex-symmetric (to
    /// [`SYMMETRY_TOLERANCE`]); `transposed` is this pattern's transpose.
    pub(crate) fn is_complex_symmetric(
        &self,
        transposed: &Transposed,
        pencil: &Pencil,
    ) -> Result<bool, EigenError> {
        if transposed.col_ptr != self.col_ptr || transposed.row_idx != self.row_idx {
            return Ok(false);
        }
        Ok(
            self.is_symmetric(pencil.k.val(), &self.k_pos, &transposed.pos)?
                && self.is_symmetric(pencil.m.val(), &self.m_pos, &transposed.pos)?,
        )
    }

    /// Whether the values `v` (placed at `pos` in this structurally symmetric pattern)
    /// are symmetric.
    fn is_symmetric(&self, v: &[c64], pos: &[usize], at_pos: &[usize]) -> Result<bool, EigenError> {
        let col_ptr = &self.col_ptr;
        let mut u = try_vec(self.nnz(), c64::ZERO)?;
        for (x, &p) in v.iter().zip(pos) {
            u[p] += *x;
        }
        let n = self.dim();
        let mut col_max = try_vec(n, 0.0f64)?;
        for j in 0..n {
            col_max[j] = u[col_ptr[j]..col_ptr[j + 1]]
                .iter()
                .map(|x| x.norm())
                .fold(0.0, f64::max);
        }
        // With a symmetric pattern, union position `at_pos[p]` holds the transposed entry.
        Ok((0..n).all(|j| {
            (col_ptr[j]..col_ptr[j + 1]).all(|p| {
                let (a, b) = (u[p], u[at_pos[p]]);
                let scale = a.norm().max(b.norm()).max(col_max[j]);
                (a - b).norm() <= SYMMETRY_TOLERANCE * scale
            })
        }))
    }
}

impl Transposed {
    /// The transposed pattern as a faer matrix structure.
    pub(crate) fn symbolic(&self) -> SymbolicSparseColMatRef<'_, usize> {
        let n = self.col_ptr.len() - 1;
        SymbolicSparseColMatRef::new_checked(n, n, &self.col_ptr, None, &self.row_idx)
    }

    /// Number of stored entries.
    pub(crate) fn nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// The values of the transpose of the matrix with values `vals` in the union pattern.
    pub(crate) fn values(&self, vals: &[c64]) -> Result<Vec<c64>, EigenError> {
        let mut at_vals = try_vec(vals.len(), c64::ZERO)?;
        for (v, &p) in vals.iter().zip(&self.pos) {
            at_vals[p] = *v;
        }
        Ok(at_vals)
    }
}
