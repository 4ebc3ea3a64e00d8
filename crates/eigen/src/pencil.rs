//! The problem: a generalised eigenproblem `K x = lambda M x` with sparse complex `K`, `M`.

use faer::c64;
use faer::sparse::SparseColMat;

use crate::EigenError;

/// A generalised eigenproblem `K x = lambda M x` with sparse complex `K` and `M`.
#[derive(Debug, Clone)]
pub struct Pencil {
    /// left-hand ("stiffness") matrix
    pub k: SparseColMat<usize, c64>,
    /// right-hand ("mass") matrix
    pub m: SparseColMat<usize, c64>,
}

impl Pencil {
    /// Checks that `K` and `M` are square and of one size.
    pub fn try_new(
        k: SparseColMat<usize, c64>,
        m: SparseColMat<usize, c64>,
    ) -> Result<Self, EigenError> {
        if k.nrows() != k.ncols() || m.nrows() != m.ncols() || k.nrows() != m.nrows() {
            return Err(EigenError::ShapeMismatch {
                k_rows: k.nrows(),
                k_cols: k.ncols(),
                m_rows: m.nrows(),
                m_cols: m.ncols(),
            });
        }
        Ok(Self { k, m })
    }

    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.k.nrows()
    }
}
