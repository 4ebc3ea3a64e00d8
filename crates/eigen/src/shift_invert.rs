//! The shift-invert operator `(K - sigma M)^{-1} M` on one sparse LU.
//!
//! ```text
//!   try_new(pencil)  : union pattern of K and M, fill-reducing column ordering,
//!                      column elimination tree, supernodal symbolic LU   (once)
//!   factor(sigma)    : values of K - sigma M into the kept pattern,
//!                      numeric LU with partial pivoting, condition check (per shift)
//!   apply(x)         : y = U^{-1} L^{-1} P (M x)                          (per Krylov step)
//! ```
//!
//! faer's high-level `SymbolicLu::try_new` always orders with COLAMD. The lower-level
//! supernodal routines take any column permutation, so the analysis here is assembled
//! from them and the ordering is a choice ([`FillOrdering`]); measured on 2D
//! finite-element pencils, COLAMD wins clearly and is the default.

use std::time::Instant;

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::lu::partial_pivoting::factor::PartialPivLuParams;
use faer::matrix_free::LinOp;
use faer::perm::PermRef;
use faer::sparse::linalg::lu::supernodal::{
    factorize_supernodal_numeric_lu, factorize_supernodal_numeric_lu_scratch,
    factorize_supernodal_symbolic_lu, factorize_supernodal_symbolic_lu_scratch,
    solve_in_place_scratch, SupernodalLu, SymbolicSupernodalLu,
};
use faer::sparse::linalg::matmul::sparse_dense_matmul;
use faer::sparse::linalg::{amd, colamd, qr};
use faer::sparse::{SparseColMat, SparseColMatRef, SymbolicSparseColMatRef};
use faer::{c64, Accum, Conj, Mat, MatMut, MatRef, Par, Spec};

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

/// Fill-reducing column ordering used by the symbolic analysis.
///
/// faer's supernodal LU stores its factors in the structure of the Cholesky factor of
/// `A^T A` (room for any row pivoting), so the ordering that matters is the one that
/// keeps *that* factor small: COLAMD. Measured on the 2D P1 pencil of
/// `model::helmholtz_p1_absorbing` (n = 10 000): COLAMD 1.7e6 entries in L+U, AMD on
/// `A + A^T` 9.8e6 (see `docs/performance.md`, "Eigen engine").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FillOrdering {
    /// Column approximate minimum degree on `A^T A` (default; faer's own choice for LU).
    Colamd,
    /// Approximate minimum degree on the pattern of `A + A^T`; kept for comparison.
    AmdSymmetric,
}

/// Condition estimate above which a factorisation counts as singular (about 1/(1e4 eps)).
const SINGULAR_CONDITION: f64 = 4.5e11;

/// Shift-invert operator on a pencil: one symbolic analysis, any number of shifts.
#[derive(Debug)]
pub struct ShiftInvert<'p> {
    pencil: &'p Pencil,
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// position in the union pattern of every stored value of K (column-major order)
    k_pos: Vec<usize>,
    /// position in the union pattern of every stored value of M
    m_pos: Vec<usize>,
    at_col_ptr: Vec<usize>,
    at_row_idx: Vec<usize>,
    /// position in the transposed pattern of every union entry
    at_pos: Vec<usize>,
    perm_fwd: Vec<usize>,
    perm_inv: Vec<usize>,
    symbolic: SymbolicSupernodalLu<usize>,
    ordering: FillOrdering,
    fill_nnz: usize,
    analysis_seconds: f64,
    numeric: Option<Numeric>,
    par: Par,
    /// operator applications so far (one sparse solve each)
    pub(crate) applications: std::sync::atomic::AtomicUsize,
}

#[derive(Debug)]
struct Numeric {
    sigma: c64,
    lu: SupernodalLu<usize, c64>,
    row_fwd: Vec<usize>,
    row_inv: Vec<usize>,
    seconds: f64,
    condition: f64,
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
    /// Symbolic analysis with the default ordering ([`FillOrdering::Colamd`]).
    pub fn try_new(pencil: &'p Pencil) -> Result<Self, EigenError> {
        Self::try_new_with_ordering(pencil, FillOrdering::Colamd)
    }

    /// Symbolic analysis of the union pattern of `K` and `M` with a chosen ordering.
    pub fn try_new_with_ordering(
        pencil: &'p Pencil,
        ordering: FillOrdering,
    ) -> Result<Self, EigenError> {
        let start = Instant::now();
        let n = pencil.dim();
        let k = pencil.k.as_ref();
        let m = pencil.m.as_ref();
        let (col_ptr, row_idx, k_pos, m_pos) = union_pattern(k, m);
        let (at_col_ptr, at_row_idx, at_pos) = transpose_pattern(n, &col_ptr, &row_idx);
        let a = SymbolicSparseColMatRef::new_checked(n, n, &col_ptr, None, &row_idx);
        let at = SymbolicSparseColMatRef::new_checked(n, n, &at_col_ptr, None, &at_row_idx);
        let nnz = row_idx.len();

        let mut perm_fwd = vec![0usize; n];
        let mut perm_inv = vec![0usize; n];
        match ordering {
            FillOrdering::AmdSymmetric => {
                let mut mem = try_mem(amd::order_scratch::<usize>(n, nnz))?;
                amd::order(
                    &mut perm_fwd,
                    &mut perm_inv,
                    a,
                    amd::Control::default(),
                    MemStack::new(&mut mem),
                )
                .map_err(backend)?;
            }
            FillOrdering::Colamd => {
                let mut mem = try_mem(colamd::order_scratch::<usize>(n, n, nnz))?;
                colamd::order(
                    &mut perm_fwd,
                    &mut perm_inv,
                    a,
                    colamd::Control::default(),
                    MemStack::new(&mut mem),
                )
                .map_err(backend)?;
            }
        }
        let perm = PermRef::new_checked(&perm_fwd, &perm_inv, n);

        let mut etree = vec![0usize; n];
        let mut post = vec![0usize; n];
        let mut col_counts = vec![0usize; n];
        let mut min_col = vec![0usize; n];
        let mut mem = try_mem(
            qr::col_etree_scratch::<usize>(n, n)
                .or(qr::postorder_scratch::<usize>(n))
                .or(qr::column_counts_aat_scratch::<usize>(n, n))
                .or(factorize_supernodal_symbolic_lu_scratch::<usize>(n, n)),
        )?;
        let stack = MemStack::new(&mut mem);
        let etree = qr::col_etree(a, Some(perm), &mut etree, stack);
        qr::postorder(&mut post, etree, stack);
        qr::column_counts_ata(
            &mut col_counts,
            &mut min_col,
            at,
            Some(perm),
            etree,
            &post,
            stack,
        );
        // George & Ng: the structures of L and U lie inside the Cholesky factor of A^T A.
        let fill_nnz = 2 * col_counts.iter().sum::<usize>() - n;
        let symbolic = factorize_supernodal_symbolic_lu(
            a,
            Some(perm),
            &min_col,
            etree,
            &col_counts,
            stack,
            Default::default(),
        )
        .map_err(backend)?;

        Ok(Self {
            pencil,
            col_ptr,
            row_idx,
            k_pos,
            m_pos,
            at_col_ptr,
            at_row_idx,
            at_pos,
            perm_fwd,
            perm_inv,
            symbolic,
            ordering,
            fill_nnz,
            analysis_seconds: start.elapsed().as_secs_f64(),
            numeric: None,
            par: faer::get_global_parallelism(),
            applications: std::sync::atomic::AtomicUsize::new(0),
        })
    }

    /// The pencil this operator was built on.
    pub fn pencil(&self) -> &'p Pencil {
        self.pencil
    }

    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.pencil.dim()
    }

    /// Ordering used by the symbolic analysis.
    pub fn ordering(&self) -> FillOrdering {
        self.ordering
    }

    /// Stored entries of the union pattern of `K` and `M`.
    pub fn pattern_nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// nnz(L + U) of the symbolic structure the numeric factorisation fills
    /// (column counts of the Cholesky factor of `A^T A` under the chosen ordering,
    /// counted for L and for U, diagonal once; before supernode amalgamation).
    pub fn fill_nnz(&self) -> usize {
        self.fill_nnz
    }

    /// Wall time of the symbolic analysis, seconds.
    pub fn analysis_seconds(&self) -> f64 {
        self.analysis_seconds
    }

    /// The shift of the current numeric factorisation, if any.
    pub fn sigma(&self) -> Option<c64> {
        self.numeric.as_ref().map(|n| n.sigma)
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
                    seconds += self.numeric.as_ref().map_or(0.0, |n| n.seconds);
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
        self.numeric = None;
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
        let n = self.dim();
        let mut vals = vec![c64::ZERO; self.row_idx.len()];
        for (v, &p) in self.pencil.k.val().iter().zip(&self.k_pos) {
            vals[p] += *v;
        }
        for (v, &p) in self.pencil.m.val().iter().zip(&self.m_pos) {
            vals[p] -= sigma * *v;
        }
        let mut at_vals = vec![c64::ZERO; vals.len()];
        for (v, &p) in vals.iter().zip(&self.at_pos) {
            at_vals[p] = *v;
        }
        let a = SparseColMatRef::new(
            SymbolicSparseColMatRef::new_checked(n, n, &self.col_ptr, None, &self.row_idx),
            &vals,
        );
        let at = SparseColMatRef::new(
            SymbolicSparseColMatRef::new_checked(n, n, &self.at_col_ptr, None, &self.at_row_idx),
            &at_vals,
        );
        let mut numeric = self.numeric.take().unwrap_or_else(|| Numeric {
            sigma,
            lu: SupernodalLu::new(),
            row_fwd: vec![0; n],
            row_inv: vec![0; n],
            seconds: 0.0,
            condition: f64::INFINITY,
        });
        let params: Spec<PartialPivLuParams, c64> = Default::default();
        let mut mem = try_mem(factorize_supernodal_numeric_lu_scratch::<usize, c64>(
            &self.symbolic,
            params,
        ))?;
        let perm = PermRef::new_checked(&self.perm_fwd, &self.perm_inv, n);
        factorize_supernodal_numeric_lu(
            &mut numeric.row_fwd,
            &mut numeric.row_inv,
            &mut numeric.lu,
            a,
            at,
            perm,
            &self.symbolic,
            self.par,
            MemStack::new(&mut mem),
            params,
        )
        .map_err(|e| match e {
            faer::sparse::linalg::LuError::SymbolicSingular { index } => {
                EigenError::StructurallySingular { index }
            }
            faer::sparse::linalg::LuError::Generic(g) => backend(g),
        })?;
        numeric.sigma = sigma;
        numeric.seconds = start.elapsed().as_secs_f64();
        self.numeric = Some(numeric);

        // Condition estimate: ||A||_1 ||A^{-1} b||_1 / ||b||_1 for a fixed pseudo-random b
        // (a lower bound on cond_1(A); a shift on an eigenvalue makes it ~1/eps).
        let mut b = Mat::<c64>::zeros(n, 1);
        let mut state = 0x9E37_79B9_7F4A_7C15u64;
        for i in 0..n {
            b[(i, 0)] = c64::new(next_uniform(&mut state), next_uniform(&mut state));
        }
        let b_norm: f64 = (0..n).map(|i| b[(i, 0)].norm()).sum();
        self.solve_in_place(b.as_mut());
        let x_norm: f64 = (0..n).map(|i| b[(i, 0)].norm()).sum();
        let condition = norm1(a) * x_norm / b_norm;
        let condition = if condition.is_finite() {
            condition
        } else {
            f64::INFINITY
        };
        if let Some(num) = self.numeric.as_mut() {
            num.condition = condition;
        }
        Ok(condition)
    }

    /// Solves `(K - sigma M) X = B` in place with the current factorisation.
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    pub fn solve_in_place(&self, rhs: MatMut<'_, c64>) {
        let numeric = self
            .numeric
            .as_ref()
            .expect("ShiftInvert::factor must succeed first");
        let n = self.dim();
        let ncols = rhs.ncols();
        let mut mem = MemBuffer::new(solve_in_place_scratch::<usize, c64>(n, ncols, self.par));
        numeric.lu.solve_in_place_with_conj(
            PermRef::new_checked(&numeric.row_fwd, &numeric.row_inv, n),
            PermRef::new_checked(&self.perm_fwd, &self.perm_inv, n),
            Conj::No,
            rhs,
            self.par,
            MemStack::new(&mut mem),
        );
    }

    /// `out = (K - sigma M)^{-1} M x` for each column of `x`.
    pub fn apply_to(&self, out: MatMut<'_, c64>, x: MatRef<'_, c64>) {
        self.applications
            .fetch_add(x.ncols(), std::sync::atomic::Ordering::Relaxed);
        let mut out = out;
        sparse_dense_matmul(
            out.as_mut(),
            Accum::Replace,
            self.pencil.m.as_ref(),
            x,
            c64::ONE,
            self.par,
        );
        self.solve_in_place(out);
    }
}

impl LinOp<c64> for ShiftInvert<'_> {
    fn apply_scratch(&self, _rhs_ncols: usize, _par: Par) -> faer::dyn_stack::StackReq {
        // the solve allocates its own (small) workspace
        faer::dyn_stack::StackReq::EMPTY
    }

    fn nrows(&self) -> usize {
        self.dim()
    }

    fn ncols(&self) -> usize {
        self.dim()
    }

    fn apply(&self, out: MatMut<'_, c64>, rhs: MatRef<'_, c64>, _par: Par, _stack: &mut MemStack) {
        self.apply_to(out, rhs);
    }

    fn conj_apply(
        &self,
        out: MatMut<'_, c64>,
        rhs: MatRef<'_, c64>,
        _par: Par,
        _stack: &mut MemStack,
    ) {
        // conj(A) x = conj(A conj(x))
        let x = rhs.conjugate().to_owned();
        let mut out = out;
        self.apply_to(out.as_mut(), x.as_ref());
        for j in 0..out.ncols() {
            for i in 0..out.nrows() {
                out[(i, j)] = out[(i, j)].conj();
            }
        }
    }
}

/// Union of the patterns of `K` and `M` (rows sorted in each column) and, for every
/// stored value of each, its position in the union.
fn union_pattern(
    k: SparseColMatRef<'_, usize, c64>,
    m: SparseColMatRef<'_, usize, c64>,
) -> (Vec<usize>, Vec<usize>, Vec<usize>, Vec<usize>) {
    let n = k.ncols();
    let mut col_ptr = Vec::with_capacity(n + 1);
    let mut row_idx = Vec::with_capacity(k.compute_nnz() + m.compute_nnz());
    let mut mark = vec![usize::MAX; n];
    let mut slot = vec![0usize; n];
    let mut k_pos = Vec::with_capacity(k.compute_nnz());
    let mut m_pos = Vec::with_capacity(m.compute_nnz());
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
    (col_ptr, row_idx, k_pos, m_pos)
}

/// Pattern of the transpose and the position of each entry in it.
fn transpose_pattern(
    n: usize,
    col_ptr: &[usize],
    row_idx: &[usize],
) -> (Vec<usize>, Vec<usize>, Vec<usize>) {
    let mut t_ptr = vec![0usize; n + 1];
    for &i in row_idx {
        t_ptr[i + 1] += 1;
    }
    for i in 0..n {
        t_ptr[i + 1] += t_ptr[i];
    }
    let mut next = t_ptr.clone();
    let mut t_row = vec![0usize; row_idx.len()];
    let mut pos = vec![0usize; row_idx.len()];
    for j in 0..n {
        for p in col_ptr[j]..col_ptr[j + 1] {
            let i = row_idx[p];
            let q = next[i];
            next[i] += 1;
            t_row[q] = j;
            pos[p] = q;
        }
    }
    (t_ptr, t_row, pos)
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

fn try_mem(req: faer::dyn_stack::StackReq) -> Result<MemBuffer, EigenError> {
    MemBuffer::try_new(req).map_err(|_| EigenError::Backend("out of memory".into()))
}

fn backend(e: impl std::fmt::Debug) -> EigenError {
    EigenError::Backend(format!("{e:?}"))
}
