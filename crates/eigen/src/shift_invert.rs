//! The shift-invert operator `(K - sigma M)^{-1} M` on one sparse factorisation.
//!
//! ```text
//!   try_new(pencil)  : union pattern of K and M, symmetry test, choice of the
//!                      factorisation, its symbolic analysis                (once)
//!   factor(sigma)    : values of K - sigma M into the kept pattern,
//!                      numeric factorisation, condition check            (per shift)
//!   apply(x)         : y = (K - sigma M)^{-1} (M x)                       (per Krylov step)
//! ```
//!
//! The factorisation is a [`SparseFactor`]: the symmetric `L B L^T` of the doubled real
//! form when `K` and `M` are both complex-symmetric (`lblt.rs`), else the supernodal LU
//! (`lu.rs`). This module adds what every factorisation shares: nudging a shift off an
//! eigenvalue, the condition check, and one step of iterative refinement when the probe
//! solve's backward error exceeds [`REFINE_ABOVE`] (the symmetric factorisation pivots
//! only inside supernodes).

use std::sync::atomic::{AtomicUsize, Ordering as AtomicOrdering};
use std::time::Instant;

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::{temp_mat_scratch, temp_mat_zeroed};
use faer::mat::AsMatMut;
use faer::matrix_free::LinOp;
use faer::sparse::linalg::matmul::sparse_dense_matmul;
use faer::sparse::SparseColMatRef;
use faer::{c64, Accum, MatMut, MatRef, Par};

use crate::factor::norm1;
use crate::lblt::Lblt;
use crate::lu::Lu;
use crate::memory::try_buffer;
use crate::{EigenError, Factorisation, FillOrdering, Pencil, SparseFactor, UnionPattern};

/// Condition estimate above which a factorisation counts as singular (about 1/(1e4 eps)).
const SINGULAR_CONDITION: f64 = 4.5e11;

/// Backward error of a solve above which solves get one step of iterative refinement
/// (the symmetric factorisation pivots only inside supernodes).
pub const REFINE_ABOVE: f64 = 1e-13;

/// Shift-invert operator on a pencil: one symbolic analysis, any number of shifts.
#[derive(Debug)]
pub struct ShiftInvert<'p> {
    pencil: &'p Pencil,
    pattern: UnionPattern,
    factor: Box<dyn SparseFactor>,
    analysis_seconds: f64,
    shifted: Option<Shifted>,
    par: Par,
    /// operator applications so far (one sparse solve each)
    pub(crate) applications: AtomicUsize,
}

/// The matrix of the current numeric factorisation.
#[derive(Debug)]
struct Shifted {
    /// values of `K - sigma M` in the union pattern (for refinement)
    values: Vec<c64>,
    refine: bool,
    seconds: f64,
}

/// What one call of [`ShiftInvert::factor`] did.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FactorReport {
    /// the shift actually factorised
    pub sigma: c64,
    /// the shift first asked for, when it had to be nudged off a (near) eigenvalue
    pub nudged_from: Option<c64>,
    /// lower bound on the 1-norm condition number of `K - sigma M`
    pub condition: f64,
    /// wall time of the numeric factorisation(s), seconds
    pub seconds: f64,
}

impl<'p> ShiftInvert<'p> {
    /// Symbolic analysis, choosing the factorisation: the symmetric one when `K` and
    /// `M` are both complex-symmetric (to a relative `1e-12`), else the LU with
    /// [`FillOrdering::Colamd`].
    pub fn try_new(pencil: &'p Pencil) -> Result<Self, EigenError> {
        let start = Instant::now();
        let pattern = UnionPattern::of(pencil)?;
        let transposed = pattern.transpose()?;
        let factor: Box<dyn SparseFactor> = if pattern.is_complex_symmetric(&transposed, pencil)? {
            drop(transposed);
            Box::new(Lblt::analyse(&pattern)?)
        } else {
            Box::new(Lu::analyse(&pattern, transposed, FillOrdering::Colamd)?)
        };
        Ok(Self::with_factor(pencil, pattern, factor, start))
    }

    /// Symbolic analysis for the LU with a chosen ordering, whatever the pencil's
    /// symmetry (so a complex-symmetric pencil can be factorised both ways for a
    /// comparison). A [`FillOrdering::Given`] permutation is checked here.
    pub fn try_new_with_ordering(
        pencil: &'p Pencil,
        ordering: FillOrdering,
    ) -> Result<Self, EigenError> {
        Self::try_new_with_factor(pencil, |pattern| {
            Ok(Box::new(Lu::analyse(
                pattern,
                pattern.transpose()?,
                ordering,
            )?))
        })
    }

    /// Symbolic analysis by a factorisation the caller builds on the union pattern of `K`
    /// and `M` (the pattern every later [`SparseFactor::factorize`] receives).
    pub fn try_new_with_factor(
        pencil: &'p Pencil,
        build: impl FnOnce(&UnionPattern) -> Result<Box<dyn SparseFactor>, EigenError>,
    ) -> Result<Self, EigenError> {
        let start = Instant::now();
        let pattern = UnionPattern::of(pencil)?;
        let factor = build(&pattern)?;
        Ok(Self::with_factor(pencil, pattern, factor, start))
    }

    /// An operator with its analysis done and no factorisation yet.
    fn with_factor(
        pencil: &'p Pencil,
        pattern: UnionPattern,
        factor: Box<dyn SparseFactor>,
        start: Instant,
    ) -> Self {
        Self {
            pencil,
            pattern,
            factor,
            analysis_seconds: start.elapsed().as_secs_f64(),
            shifted: None,
            par: faer::get_global_parallelism(),
            applications: AtomicUsize::new(0),
        }
    }

    /// The pencil this operator was built on.
    pub(crate) fn pencil(&self) -> &'p Pencil {
        self.pencil
    }

    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.pencil.dim()
    }

    /// The factorisation in use.
    pub fn factorisation(&self) -> Factorisation {
        self.factor.kind()
    }

    /// Ordering used by the symbolic analysis (the symmetric factorisation always orders
    /// with AMD, reported as [`FillOrdering::AmdSymmetric`]).
    pub fn ordering(&self) -> &FillOrdering {
        self.factor.ordering()
    }

    /// Stored entries of the union pattern of `K` and `M`.
    pub fn pattern_nnz(&self) -> usize {
        self.pattern.nnz()
    }

    /// Size of the factor in complex entries (16 bytes each). LU: nnz(L + U) of the
    /// symbolic structure (column counts of the Cholesky factor of `A^T A` under the
    /// chosen ordering, counted for L and for U, diagonal once; before supernode
    /// amalgamation). Symmetric: the stored values of the doubled real `L` (supernodes
    /// included), halved.
    pub fn fill_nnz(&self) -> usize {
        self.factor.fill_nnz()
    }

    /// Bytes the next numeric factorisation will allocate at its peak, known from the
    /// symbolic analysis before anything is allocated: the values of `K - sigma M`, the
    /// factor's values and indices (supernodal padding included), pivots, every
    /// workspace, and the probe solve of the condition check
    /// ([`SparseFactor::estimated_factor_bytes`]). For the first factorisation; later
    /// ones reuse the factor's storage. Compare it with the memory available before
    /// calling [`ShiftInvert::factor`].
    pub fn estimated_factor_bytes(&self) -> usize {
        self.pattern.nnz() * std::mem::size_of::<c64>()
            + self.factor.estimated_factor_bytes(self.par)
    }

    /// Wall time of the symbolic analysis, seconds.
    pub fn analysis_seconds(&self) -> f64 {
        self.analysis_seconds
    }

    /// Whether solves with the current factorisation take a refinement step.
    pub fn refines(&self) -> bool {
        self.shifted.as_ref().is_some_and(|s| s.refine)
    }

    /// Factorises `K - sigma M`, reusing the symbolic analysis. If the factorisation is
    /// singular or its condition estimate exceeds about `1/(1e4 eps)`, the shift is
    /// nudged off the real axis by `1e-6`, then `1e-4`, then `1e-2` times the shift's
    /// scale and retried; the report says so.
    pub fn factor(&mut self, sigma: c64) -> Result<FactorReport, EigenError> {
        let scale = if sigma.norm() > 0.0 {
            sigma.norm()
        } else {
            self.spectral_scale()
        };
        let direction = c64::new(
            std::f64::consts::FRAC_1_SQRT_2,
            std::f64::consts::FRAC_1_SQRT_2,
        );
        let mut seconds = 0.0;
        let mut condition = f64::INFINITY;
        for (attempt, nudge) in [0.0, 1e-6, 1e-4, 1e-2].into_iter().enumerate() {
            let shift = sigma + direction * (nudge * scale);
            match self.factor_exact(shift) {
                Ok(cond) => {
                    seconds += self.shifted.as_ref().map_or(0.0, |s| s.seconds);
                    condition = cond;
                    if cond.is_finite() && cond < SINGULAR_CONDITION {
                        return Ok(FactorReport {
                            sigma: shift,
                            nudged_from: (attempt > 0).then_some(sigma),
                            condition: cond,
                            seconds,
                        });
                    }
                }
                Err(EigenError::StructurallySingular { index }) if attempt == 0 => {
                    // a structurally singular pattern does not depend on the shift
                    return Err(EigenError::StructurallySingular { index });
                }
                Err(e) => return Err(e),
            }
        }
        self.shifted = None;
        Err(EigenError::SingularShift { sigma, condition })
    }

    /// Ratio `||K||_1 / ||M||_1`, a scale for shifts near zero.
    fn spectral_scale(&self) -> f64 {
        let k = norm1(self.pencil.k.as_ref());
        let m = norm1(self.pencil.m.as_ref());
        if m > 0.0 && k > 0.0 {
            k / m
        } else {
            1.0
        }
    }

    /// One numeric factorisation at exactly `sigma`; returns the condition estimate.
    fn factor_exact(&mut self, sigma: c64) -> Result<f64, EigenError> {
        let start = Instant::now();
        self.shifted = None;
        let values = self.pattern.shifted_values(self.pencil, sigma)?;
        self.factor
            .factorize(self.pattern.matrix(&values), self.par)?;
        let seconds = start.elapsed().as_secs_f64();
        let probe = self
            .factor
            .estimate_condition(self.pattern.matrix(&values), self.par)?;
        self.shifted = Some(Shifted {
            values,
            // a NaN backward error also refines
            refine: probe.backward_error.is_nan() || probe.backward_error > REFINE_ABOVE,
            seconds,
        });
        Ok(probe.condition)
    }

    /// `K - sigma M` of the current factorisation and whether solves refine.
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    fn shifted(&self) -> (SparseColMatRef<'_, usize, c64>, bool) {
        let shifted = self
            .shifted
            .as_ref()
            .expect("ShiftInvert::factor must succeed first");
        (self.pattern.matrix(&shifted.values), shifted.refine)
    }

    /// Workspace of [`ShiftInvert::solve_with`] (and of the conjugate application) for
    /// `ncols` right-hand sides.
    fn solve_scratch(&self, ncols: usize) -> StackReq {
        let column = temp_mat_scratch::<c64>(self.dim(), ncols);
        StackReq::all_of(&[
            column,
            column,
            column,
            self.factor.solve_scratch(ncols, self.par),
        ])
    }

    /// Solves `(K - sigma M) X = B` in place with the current factorisation (and one
    /// refinement step when [`ShiftInvert::refines`]).
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    fn solve_with(&self, rhs: MatMut<'_, c64>, stack: &mut MemStack) {
        let (a, refine) = self.shifted();
        let mut rhs = rhs;
        if !refine {
            self.factor.solve_in_place(rhs, self.par, stack);
            return;
        }
        let (mut r, stack) = temp_mat_zeroed::<c64, _, _>(rhs.nrows(), rhs.ncols(), stack);
        let mut r = r.as_mat_mut();
        r.copy_from(&rhs);
        self.factor.solve_in_place(rhs.as_mut(), self.par, stack);
        sparse_dense_matmul(r.as_mut(), Accum::Add, a, rhs.as_ref(), -c64::ONE, self.par);
        self.factor.solve_in_place(r.as_mut(), self.par, stack);
        rhs += r.as_ref();
    }

    /// `out = (K - sigma M)^{-1} M x` for each column of `x`.
    fn apply_with(&self, out: MatMut<'_, c64>, x: MatRef<'_, c64>, stack: &mut MemStack) {
        self.applications
            .fetch_add(x.ncols(), AtomicOrdering::Relaxed);
        let mut out = out;
        sparse_dense_matmul(
            out.as_mut(),
            Accum::Replace,
            self.pencil.m.as_ref(),
            x,
            c64::ONE,
            self.par,
        );
        self.solve_with(out, stack);
    }

    /// `out = (K - sigma M)^{-1} M x` for each column of `x`, with its own workspace.
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    pub(crate) fn apply_to(
        &self,
        out: MatMut<'_, c64>,
        x: MatRef<'_, c64>,
    ) -> Result<(), EigenError> {
        let mut mem = try_buffer(self.solve_scratch(x.ncols()))?;
        self.apply_with(out, x, MemStack::new(&mut mem));
        Ok(())
    }
}

impl LinOp<c64> for ShiftInvert<'_> {
    fn apply_scratch(&self, rhs_ncols: usize, _par: Par) -> StackReq {
        self.solve_scratch(rhs_ncols)
    }

    fn nrows(&self) -> usize {
        self.dim()
    }

    fn ncols(&self) -> usize {
        self.dim()
    }

    fn apply(&self, out: MatMut<'_, c64>, rhs: MatRef<'_, c64>, _par: Par, stack: &mut MemStack) {
        // faer sizes the workspace for one column, but its dense path for small
        // problems applies the operator to a whole block: use the given stack when it
        // is large enough, else a buffer of our own (a panic inside faer otherwise).
        let need = self.solve_scratch(rhs.ncols());
        if stack.can_hold(need) {
            self.apply_with(out, rhs, stack);
        } else {
            let mut mem = MemBuffer::new(need);
            self.apply_with(out, rhs, MemStack::new(&mut mem));
        }
    }

    fn conj_apply(
        &self,
        out: MatMut<'_, c64>,
        rhs: MatRef<'_, c64>,
        _par: Par,
        stack: &mut MemStack,
    ) {
        // conj(A) x = conj(A conj(x)); workspace as in `apply`.
        let need =
            temp_mat_scratch::<c64>(rhs.nrows(), rhs.ncols()).and(self.solve_scratch(rhs.ncols()));
        let mut own;
        let stack = if stack.can_hold(need) {
            stack
        } else {
            own = MemBuffer::new(need);
            MemStack::new(&mut own)
        };
        let (mut x, stack) = temp_mat_zeroed::<c64, _, _>(rhs.nrows(), rhs.ncols(), stack);
        let mut x = x.as_mat_mut();
        x.copy_from(rhs.conjugate());
        let mut out = out;
        self.apply_with(out.as_mut(), x.as_ref(), stack);
        for j in 0..out.ncols() {
            for i in 0..out.nrows() {
                out[(i, j)] = out[(i, j)].conj();
            }
        }
    }
}
