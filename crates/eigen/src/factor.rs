//! The inner solver of the shift-invert operator: a sparse factorisation of
//! `A = K - sigma M` in a pattern fixed once for all shifts ([`SparseFactor`]), and the
//! condition probe every factorisation shares.
//!
//! Implementations: the supernodal LU (`lu.rs`, any pencil) and the symmetric `L B L^T`
//! of the doubled real form (`lblt.rs`, complex-symmetric pencils). A new inner solver
//! (for example a block solver for coupled-harmonic systems) implements the same trait
//! and is handed to [`ShiftInvert::try_new_with_factor`](crate::ShiftInvert::try_new_with_factor).

use faer::dyn_stack::{MemStack, StackReq};
use faer::sparse::linalg::matmul::sparse_dense_matmul;
use faer::sparse::SparseColMatRef;
use faer::{c64, Accum, MatMut, Par};

use crate::memory::{try_buffer, try_zeros};
use crate::{EigenError, FillOrdering};

/// Which factorisation a [`ShiftInvert`](crate::ShiftInvert) uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Factorisation {
    /// Supernodal LU with partial pivoting (any pencil).
    Lu,
    /// Real symmetric indefinite `L B L^T` of the doubled real form (complex-symmetric
    /// pencils only; chosen automatically when both matrices pass the symmetry test).
    SymmetricDoubled,
}

impl Factorisation {
    /// A short name for reports.
    pub fn name(self) -> &'static str {
        match self {
            Factorisation::Lu => "lu",
            Factorisation::SymmetricDoubled => "symmetric-lblt",
        }
    }
}

/// What the condition probe of one factorisation found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConditionEstimate {
    /// `||A||_1 ||x||_1 / ||b||_1` for the solve `A x = b` with a fixed pseudo-random
    /// `b`: a lower bound on the 1-norm condition number (a shift on an eigenvalue makes
    /// it about 1/eps); infinite when not finite
    pub condition: f64,
    /// backward error of that solve, `||b - A x||_1 / (||A||_1 ||x||_1 + ||b||_1)`
    pub backward_error: f64,
}

/// A sparse factorisation of `A = K - sigma M` whose pattern is fixed when it is built
/// (the [`UnionPattern`](crate::UnionPattern) of `K` and `M`, symbolic analysis done
/// then), refactorised for the values of each shift.
///
/// Contract: [`SparseFactor::factorize`] always receives a matrix in the pattern the
/// factor was built for; [`SparseFactor::solve_in_place`] is called only after a
/// successful `factorize` and solves with its values. Every allocation that grows with
/// the problem reports failure as [`EigenError::OutOfMemory`].
pub trait SparseFactor: std::fmt::Debug + Send + Sync {
    /// Which factorisation this is.
    fn kind(&self) -> Factorisation;

    /// The fill-reducing ordering of the symbolic analysis.
    fn ordering(&self) -> &FillOrdering;

    /// Size of the factor in complex entries (16 bytes each), as the implementation
    /// documents it (known after the symbolic analysis).
    fn fill_nnz(&self) -> usize;

    /// Peak bytes that the first [`SparseFactor::factorize`] and the
    /// [`SparseFactor::estimate_condition`] after it allocate together: factor values and
    /// indices (supernodal padding included), pivots, every workspace, predicted from the
    /// symbolic analysis alone. Later factorisations at other shifts may reuse the
    /// factor's storage and allocate less.
    fn estimated_factor_bytes(&self, par: Par) -> usize;

    /// Numeric factorisation of `a` (values of `K - sigma M` in the fixed pattern).
    fn factorize(&mut self, a: SparseColMatRef<'_, usize, c64>, par: Par)
        -> Result<(), EigenError>;

    /// Workspace [`SparseFactor::solve_in_place`] needs for `ncols` right-hand sides.
    fn solve_scratch(&self, ncols: usize, par: Par) -> StackReq;

    /// Solves `A X = B` in place for the columns of `rhs` with the last factorisation.
    ///
    /// # Panics
    /// If no factorisation has succeeded yet.
    fn solve_in_place(&self, rhs: MatMut<'_, c64>, par: Par, stack: &mut MemStack);

    /// Condition probe of the last factorisation of `a`: one solve with a fixed
    /// pseudo-random right-hand side, its size against `a`'s 1-norm, and its backward
    /// error (which decides on iterative refinement). Implementations may replace it by
    /// a sharper estimator.
    fn estimate_condition(
        &self,
        a: SparseColMatRef<'_, usize, c64>,
        par: Par,
    ) -> Result<ConditionEstimate, EigenError> {
        let n = a.nrows();
        let mut b = try_zeros::<c64>(n, 1)?;
        let mut state = 0x9E37_79B9_7F4A_7C15u64;
        for i in 0..n {
            b[(i, 0)] = c64::new(next_uniform(&mut state), next_uniform(&mut state));
        }
        let mut x = try_zeros::<c64>(n, 1)?;
        x.copy_from(&b);
        let mut mem = try_buffer(self.solve_scratch(1, par))?;
        self.solve_in_place(x.as_mut(), par, MemStack::new(&mut mem));
        let b_norm: f64 = (0..n).map(|i| b[(i, 0)].norm()).sum();
        let x_norm: f64 = (0..n).map(|i| x[(i, 0)].norm()).sum();
        let a_norm = norm1(a);
        let condition = a_norm * x_norm / b_norm;
        let condition = if condition.is_finite() {
            condition
        } else {
            f64::INFINITY
        };
        let mut r = b;
        sparse_dense_matmul(r.as_mut(), Accum::Add, a, x.as_ref(), -c64::ONE, Par::Seq);
        let r_norm: f64 = (0..n).map(|i| r[(i, 0)].norm()).sum();
        Ok(ConditionEstimate {
            condition,
            backward_error: r_norm / (a_norm * x_norm + b_norm),
        })
    }
}

/// Bytes [`SparseFactor::estimate_condition`] allocates besides the solve workspace (two
/// complex columns: the right-hand side, which becomes the residual, and the solution).
pub(crate) fn probe_bytes(n: usize) -> usize {
    2 * n * std::mem::size_of::<c64>()
}

/// Largest column sum of absolute values.
pub(crate) fn norm1(a: SparseColMatRef<'_, usize, c64>) -> f64 {
    (0..a.ncols())
        .map(|j| a.val_of_col(j).iter().map(|v| v.norm()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// Uniform number in [-1, 1) from a 64-bit linear congruential state (Knuth's MMIX constants).
pub(crate) fn next_uniform(state: &mut u64) -> f64 {
    *state = state
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    ((*state >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
}
