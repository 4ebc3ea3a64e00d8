//! The shift-invert operator `(K - sigma M)^{-1} M` on one sparse factorisation.
//!
//! ```text
//!   try_new(pencil)  : union pattern of K and M, symmetry test, fill-reducing
//!                      ordering, symbolic factorisation                  (once)
//!   factor(sigma)    : values of K - sigma M into the kept pattern,
//!                      numeric factorisation, condition check            (per shift)
//!   apply(x)         : y = (K - sigma M)^{-1} (M x)                       (per Krylov step)
//! ```
//!
//! Two factorisations ([`Factorisation`]):
//!
//! * **Complex-symmetric pencils** (`K = K^T`, `M = M^T`, not conjugated; what the
//!   finite-element assembler gives for untwisted bodies once the rows of the third
//!   field component change sign) are factorised as a real symmetric indefinite matrix
//!   of twice the size: `A = X + iY` with `X`, `Y` symmetric solves
//!   `A (u + iv) = c + id` as
//!   `[[X, -Y], [-Y, -X]] [u; v] = [c; -d]`, interleaved per unknown so every complex
//!   entry becomes one symmetric 2x2 block. faer's supernodal Bunch-Kaufman `L B L^T`
//!   (pivoting inside supernodes) factorises it under an AMD ordering of the complex
//!   pattern. Only `L` is stored, in the Cholesky structure of `A`: on the demo pencil
//!   55 entries per row against about 950 for the LU below (see `docs/performance.md`).
//!   A solve whose backward error exceeds [`REFINE_ABOVE`] gets one step of iterative
//!   refinement on the complex matrix.
//! * **Other pencils**: one supernodal LU with partial pivoting. faer's high-level
//!   `SymbolicLu::try_new` always orders with COLAMD. The lower-level supernodal
//!   routines take any column permutation, so the analysis here is assembled from them
//!   and the ordering is a choice ([`FillOrdering`]); measured on 2D finite-element
//!   pencils, COLAMD wins clearly and is the default.

use std::time::Instant;

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::lu::partial_pivoting::factor::PartialPivLuParams;
use faer::matrix_free::LinOp;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, IntranodeLbltRef, SymbolicCholesky,
    SymmetricOrdering,
};
use faer::sparse::linalg::lu::supernodal::{
    factorize_supernodal_numeric_lu, factorize_supernodal_numeric_lu_scratch,
    factorize_supernodal_symbolic_lu, factorize_supernodal_symbolic_lu_scratch,
    solve_in_place_scratch, SupernodalLu, SymbolicSupernodalLu,
};
use faer::sparse::linalg::matmul::sparse_dense_matmul;
use faer::sparse::linalg::{amd, colamd, qr, SupernodalThreshold};
use faer::sparse::{SparseColMat, SparseColMatRef, SymbolicSparseColMatRef};
use faer::{c64, Accum, Conj, Mat, MatMut, MatRef, Par, Side, Spec};

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

/// Which factorisation a [`ShiftInvert`] uses.
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

/// Condition estimate above which a factorisation counts as singular (about 1/(1e4 eps)).
const SINGULAR_CONDITION: f64 = 4.5e11;

/// Backward error of a solve above which solves get one step of iterative refinement
/// (the symmetric factorisation pivots only inside supernodes).
pub const REFINE_ABOVE: f64 = 1e-13;

/// Relative asymmetry `|a_ij - a_ji|` (against the larger of the two column maxima
/// and the entries themselves) below which a matrix counts as complex-symmetric.
const SYMMETRY_TOLERANCE: f64 = 1e-12;

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
    engine: Engine,
    fill_nnz: usize,
    analysis_seconds: f64,
    numeric: Option<Numeric>,
    par: Par,
    /// operator applications so far (one sparse solve each)
    pub(crate) applications: std::sync::atomic::AtomicUsize,
}

/// The union pattern of `K` and `M` and where each stored value goes in it.
struct Union {
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    k_pos: Vec<usize>,
    m_pos: Vec<usize>,
}

/// The union pattern and its transpose.
struct Patterns {
    union: Union,
    at_col_ptr: Vec<usize>,
    at_row_idx: Vec<usize>,
    /// position in the transposed pattern of every union entry
    at_pos: Vec<usize>,
}

impl Patterns {
    fn of(pencil: &Pencil) -> Patterns {
        let (col_ptr, row_idx, k_pos, m_pos) = union_pattern(pencil.k.as_ref(), pencil.m.as_ref());
        let (at_col_ptr, at_row_idx, at_pos) = transpose_pattern(pencil.dim(), &col_ptr, &row_idx);
        Patterns {
            union: Union {
                col_ptr,
                row_idx,
                k_pos,
                m_pos,
            },
            at_col_ptr,
            at_row_idx,
            at_pos,
        }
    }

    /// Whether the pattern is symmetric and `K`, `M` are complex-symmetric.
    fn is_symmetric(&self, pencil: &Pencil) -> bool {
        let u = &self.union;
        self.at_col_ptr == u.col_ptr
            && self.at_row_idx == u.row_idx
            && is_symmetric(pencil.k.val(), &u.k_pos, &u.col_ptr, &self.at_pos)
            && is_symmetric(pencil.m.val(), &u.m_pos, &u.col_ptr, &self.at_pos)
    }
}

/// The symbolic side of one factorisation kind.
#[derive(Debug)]
enum Engine {
    Lu(LuAnalysis),
    Symmetric(SymmetricAnalysis),
}

#[derive(Debug)]
struct LuAnalysis {
    at_col_ptr: Vec<usize>,
    at_row_idx: Vec<usize>,
    /// position in the transposed pattern of every union entry
    at_pos: Vec<usize>,
    perm_fwd: Vec<usize>,
    perm_inv: Vec<usize>,
    symbolic: SymbolicSupernodalLu<usize>,
    ordering: FillOrdering,
}

/// The doubled real lower triangle: pattern, where each value comes from, and the
/// symbolic Cholesky structure under the interleaved AMD ordering.
#[derive(Debug)]
struct SymmetricAnalysis {
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// for each doubled entry: union position and which part (see [`Part`])
    source: Vec<(usize, Part)>,
    symbolic: SymbolicCholesky<usize>,
}

/// Which real number of a complex entry `x + iy` a doubled entry holds.
#[derive(Debug, Clone, Copy)]
enum Part {
    /// `x`
    Re,
    /// `-y`
    NegIm,
    /// `-x`
    NegRe,
}

#[derive(Debug)]
struct Numeric {
    sigma: c64,
    factors: Factors,
    /// values of `K - sigma M` in the union pattern (for refinement)
    values: Vec<c64>,
    refine: bool,
    seconds: f64,
    condition: f64,
}

#[derive(Debug)]
enum Factors {
    Lu {
        lu: Box<SupernodalLu<usize, c64>>,
        row_fwd: Vec<usize>,
        row_inv: Vec<usize>,
    },
    Symmetric {
        l_values: Vec<f64>,
        subdiag: Vec<f64>,
        pivot_fwd: Vec<usize>,
        pivot_inv: Vec<usize>,
    },
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
    /// `M` are both complex-symmetric (to [`SYMMETRY_TOLERANCE`]), else the LU with
    /// [`FillOrdering::Colamd`].
    pub fn try_new(pencil: &'p Pencil) -> Result<Self, EigenError> {
        let start = Instant::now();
        let patterns = Patterns::of(pencil);
        if !patterns.is_symmetric(pencil) {
            return Self::lu(pencil, patterns, FillOrdering::Colamd, start);
        }
        let union = patterns.union;
        let (analysis, fill_nnz) =
            symmetric_analysis(pencil.dim(), &union.col_ptr, &union.row_idx)?;
        Ok(Self::with_engine(
            pencil,
            union,
            Engine::Symmetric(analysis),
            fill_nnz,
            start,
        ))
    }

    /// An operator with its analysis done and no factorisation yet.
    fn with_engine(
        pencil: &'p Pencil,
        Union {
            col_ptr,
            row_idx,
            k_pos,
            m_pos,
        }: Union,
        engine: Engine,
        fill_nnz: usize,
        start: Instant,
    ) -> Self {
        Self {
            pencil,
            col_ptr,
            row_idx,
            k_pos,
            m_pos,
            engine,
            fill_nnz,
            analysis_seconds: start.elapsed().as_secs_f64(),
            numeric: None,
            par: faer::get_global_parallelism(),
            applications: std::sync::atomic::AtomicUsize::new(0),
        }
    }

    /// Symbolic analysis for the LU (whatever the pencil's symmetry) with a chosen ordering.
    pub fn try_new_with_ordering(
        pencil: &'p Pencil,
        ordering: FillOrdering,
    ) -> Result<Self, EigenError> {
        let start = Instant::now();
        Self::lu(pencil, Patterns::of(pencil), ordering, start)
    }

    fn lu(
        pencil: &'p Pencil,
        patterns: Patterns,
        ordering: FillOrdering,
        start: Instant,
    ) -> Result<Self, EigenError> {
        let n = pencil.dim();
        let Patterns {
            union,
            at_col_ptr,
            at_row_idx,
            at_pos,
        } = patterns;
        let (col_ptr, row_idx) = (&union.col_ptr, &union.row_idx);
        let a = SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx);
        let at = SymbolicSparseColMatRef::new_checked(n, n, &at_col_ptr, None, &at_row_idx);
        let nnz = row_idx.len();

        let mut perm_fwd = vec![0usize; n];
        let mut perm_inv = vec![0usize; n];
        match ordering {
            FillOrdering::AmdSymmetric => {
                amd_order(&mut perm_fwd, &mut perm_inv, a)?;
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

        let engine = Engine::Lu(LuAnalysis {
            at_col_ptr,
            at_row_idx,
            at_pos,
            perm_fwd,
            perm_inv,
            symbolic,
            ordering,
        });
        Ok(Self::with_engine(pencil, union, engine, fill_nnz, start))
    }

    /// The pencil this operator was built on.
    pub fn pencil(&self) -> &'p Pencil {
        self.pencil
    }

    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.pencil.dim()
    }

    /// The factorisation in use.
    pub fn factorisation(&self) -> Factorisation {
        match self.engine {
            Engine::Lu(_) => Factorisation::Lu,
            Engine::Symmetric(_) => Factorisation::SymmetricDoubled,
        }
    }

    /// Ordering used by the symbolic analysis of the LU (the symmetric factorisation
    /// always orders with AMD, reported as [`FillOrdering::AmdSymmetric`]).
    pub fn ordering(&self) -> FillOrdering {
        match &self.engine {
            Engine::Lu(a) => a.ordering,
            Engine::Symmetric(_) => FillOrdering::AmdSymmetric,
        }
    }

    /// Stored entries of the union pattern of `K` and `M`.
    pub fn pattern_nnz(&self) -> usize {
        self.row_idx.len()
    }

    /// Size of the factor in complex entries (16 bytes each). LU: nnz(L + U) of the
    /// symbolic structure (column counts of the Cholesky factor of `A^T A` under the
    /// chosen ordering, counted for L and for U, diagonal once; before supernode
    /// amalgamation). Symmetric: the stored values of the doubled real `L` (supernodes
    /// included), halved.
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

    /// Whether solves with the current factorisation take a refinement step.
    pub fn refines(&self) -> bool {
        self.numeric.as_ref().is_some_and(|n| n.refine)
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

    /// `K - sigma M` in the union pattern.
    fn shifted_values(&self, sigma: c64) -> Vec<c64> {
        let mut vals = vec![c64::ZERO; self.row_idx.len()];
        for (v, &p) in self.pencil.k.val().iter().zip(&self.k_pos) {
            vals[p] += *v;
        }
        for (v, &p) in self.pencil.m.val().iter().zip(&self.m_pos) {
            vals[p] -= sigma * *v;
        }
        vals
    }

    /// One numeric factorisation at exactly `sigma`; returns the condition estimate.
    fn factor_exact(&mut self, sigma: c64) -> Result<f64, EigenError> {
        let start = Instant::now();
        let n = self.dim();
        let vals = self.shifted_values(sigma);
        let previous = self.numeric.take().map(|num| num.factors);
        let factors = match &self.engine {
            Engine::Lu(analysis) => factor_lu(
                analysis,
                n,
                &self.col_ptr,
                &self.row_idx,
                &vals,
                previous,
                self.par,
            )?,
            Engine::Symmetric(analysis) => factor_symmetric(analysis, &vals, self.par)?,
        };
        self.numeric = Some(Numeric {
            sigma,
            factors,
            values: vals,
            refine: false,
            seconds: start.elapsed().as_secs_f64(),
            condition: f64::INFINITY,
        });

        // Condition estimate: ||A||_1 ||A^{-1} b||_1 / ||b||_1 for a fixed pseudo-random b
        // (a lower bound on cond_1(A); a shift on an eigenvalue makes it ~1/eps), and the
        // backward error of that solve, which decides on refinement.
        let mut b = Mat::<c64>::zeros(n, 1);
        let mut state = 0x9E37_79B9_7F4A_7C15u64;
        for i in 0..n {
            b[(i, 0)] = c64::new(next_uniform(&mut state), next_uniform(&mut state));
        }
        let mut x = b.clone();
        self.solve_in_place(x.as_mut());
        let a = self.shifted_matrix();
        let b_norm: f64 = (0..n).map(|i| b[(i, 0)].norm()).sum();
        let x_norm: f64 = (0..n).map(|i| x[(i, 0)].norm()).sum();
        let a_norm = norm1(a);
        let condition = a_norm * x_norm / b_norm;
        let condition = if condition.is_finite() {
            condition
        } else {
            f64::INFINITY
        };
        let mut r = b.clone();
        sparse_dense_matmul(r.as_mut(), Accum::Add, a, x.as_ref(), -c64::ONE, Par::Seq);
        let r_norm: f64 = (0..n).map(|i| r[(i, 0)].norm()).sum();
        let backward = r_norm / (a_norm * x_norm + b_norm);
        if let Some(num) = self.numeric.as_mut() {
            num.condition = condition;
            // a NaN backward error also refines
            num.refine = backward.is_nan() || backward > REFINE_ABOVE;
        }
        Ok(condition)
    }

    /// `K - sigma M` of the current factorisation as a sparse matrix.
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    fn shifted_matrix(&self) -> SparseColMatRef<'_, usize, c64> {
        let numeric = self
            .numeric
            .as_ref()
            .expect("ShiftInvert::factor must succeed first");
        let n = self.dim();
        SparseColMatRef::new(
            SymbolicSparseColMatRef::new_checked(n, n, &self.col_ptr, None, &self.row_idx),
            &numeric.values,
        )
    }

    /// Solves `(K - sigma M) X = B` in place with the current factorisation (and one
    /// refinement step when [`ShiftInvert::refines`]).
    ///
    /// # Panics
    /// If [`ShiftInvert::factor`] has not succeeded yet.
    pub fn solve_in_place(&self, rhs: MatMut<'_, c64>) {
        let numeric = self
            .numeric
            .as_ref()
            .expect("ShiftInvert::factor must succeed first");
        let mut rhs = rhs;
        if !numeric.refine {
            self.solve_once(numeric, rhs);
            return;
        }
        let b = rhs.to_owned();
        self.solve_once(numeric, rhs.as_mut());
        let mut r = b;
        sparse_dense_matmul(
            r.as_mut(),
            Accum::Add,
            self.shifted_matrix(),
            rhs.as_ref(),
            -c64::ONE,
            self.par,
        );
        self.solve_once(numeric, r.as_mut());
        rhs += &r;
    }

    fn solve_once(&self, numeric: &Numeric, rhs: MatMut<'_, c64>) {
        let n = self.dim();
        let ncols = rhs.ncols();
        match (&self.engine, &numeric.factors) {
            (
                Engine::Lu(analysis),
                Factors::Lu {
                    lu,
                    row_fwd,
                    row_inv,
                },
            ) => {
                let mut mem =
                    MemBuffer::new(solve_in_place_scratch::<usize, c64>(n, ncols, self.par));
                lu.solve_in_place_with_conj(
                    PermRef::new_checked(row_fwd, row_inv, n),
                    PermRef::new_checked(&analysis.perm_fwd, &analysis.perm_inv, n),
                    Conj::No,
                    rhs,
                    self.par,
                    MemStack::new(&mut mem),
                );
            }
            (
                Engine::Symmetric(analysis),
                Factors::Symmetric {
                    l_values,
                    subdiag,
                    pivot_fwd,
                    pivot_inv,
                },
            ) => {
                let mut rhs = rhs;
                let mut z = Mat::<f64>::zeros(2 * n, ncols);
                for j in 0..ncols {
                    for i in 0..n {
                        let v = rhs[(i, j)];
                        z[(2 * i, j)] = v.re;
                        z[(2 * i + 1, j)] = -v.im;
                    }
                }
                let lblt = IntranodeLbltRef::new(
                    &analysis.symbolic,
                    l_values,
                    subdiag,
                    PermRef::new_checked(pivot_fwd, pivot_inv, 2 * n),
                );
                let mut mem = MemBuffer::new(
                    analysis
                        .symbolic
                        .solve_in_place_scratch::<f64>(ncols, self.par),
                );
                lblt.solve_in_place_with_conj(
                    Conj::No,
                    z.as_mut(),
                    self.par,
                    MemStack::new(&mut mem),
                );
                for j in 0..ncols {
                    for i in 0..n {
                        rhs[(i, j)] = c64::new(z[(2 * i, j)], z[(2 * i + 1, j)]);
                    }
                }
            }
            _ => unreachable!("factors always match the engine that made them"),
        }
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

/// Numeric LU of the union-pattern values `vals`.
fn factor_lu(
    analysis: &LuAnalysis,
    n: usize,
    col_ptr: &[usize],
    row_idx: &[usize],
    vals: &[c64],
    previous: Option<Factors>,
    par: Par,
) -> Result<Factors, EigenError> {
    let mut at_vals = vec![c64::ZERO; vals.len()];
    for (v, &p) in vals.iter().zip(&analysis.at_pos) {
        at_vals[p] = *v;
    }
    let a = SparseColMatRef::new(
        SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx),
        vals,
    );
    let at = SparseColMatRef::new(
        SymbolicSparseColMatRef::new_checked(
            n,
            n,
            &analysis.at_col_ptr,
            None,
            &analysis.at_row_idx,
        ),
        &at_vals,
    );
    let (mut lu, mut row_fwd, mut row_inv) = match previous {
        Some(Factors::Lu {
            lu,
            row_fwd,
            row_inv,
        }) => (lu, row_fwd, row_inv),
        _ => (Box::new(SupernodalLu::new()), vec![0; n], vec![0; n]),
    };
    let params: Spec<PartialPivLuParams, c64> = Default::default();
    let mut mem = try_mem(factorize_supernodal_numeric_lu_scratch::<usize, c64>(
        &analysis.symbolic,
        params,
    ))?;
    let perm = PermRef::new_checked(&analysis.perm_fwd, &analysis.perm_inv, n);
    factorize_supernodal_numeric_lu(
        &mut row_fwd,
        &mut row_inv,
        &mut lu,
        a,
        at,
        perm,
        &analysis.symbolic,
        par,
        MemStack::new(&mut mem),
        params,
    )
    .map_err(|e| match e {
        faer::sparse::linalg::LuError::SymbolicSingular { index } => {
            EigenError::StructurallySingular { index }
        }
        faer::sparse::linalg::LuError::Generic(g) => backend(g),
    })?;
    Ok(Factors::Lu {
        lu,
        row_fwd,
        row_inv,
    })
}

/// Whether the values `v` (placed at `pos` in the union pattern) are symmetric.
fn is_symmetric(v: &[c64], pos: &[usize], col_ptr: &[usize], at_pos: &[usize]) -> bool {
    let nnz = at_pos.len();
    let mut u = vec![c64::ZERO; nnz];
    for (x, &p) in v.iter().zip(pos) {
        u[p] += *x;
    }
    let n = col_ptr.len() - 1;
    let mut col_max = vec![0.0f64; n];
    for j in 0..n {
        col_max[j] = u[col_ptr[j]..col_ptr[j + 1]]
            .iter()
            .map(|x| x.norm())
            .fold(0.0, f64::max);
    }
    // With a symmetric pattern, union position `at_pos[p]` holds the transposed entry.
    (0..n).all(|j| {
        (col_ptr[j]..col_ptr[j + 1]).all(|p| {
            let (a, b) = (u[p], u[at_pos[p]]);
            let scale = a.norm().max(b.norm()).max(col_max[j]);
            (a - b).norm() <= SYMMETRY_TOLERANCE * scale
        })
    })
}

/// AMD ordering of a structurally symmetric pattern.
fn amd_order(
    perm_fwd: &mut [usize],
    perm_inv: &mut [usize],
    a: SymbolicSparseColMatRef<'_, usize>,
) -> Result<(), EigenError> {
    let n = a.nrows();
    let mut mem = try_mem(amd::order_scratch::<usize>(n, a.compute_nnz()))?;
    amd::order(
        perm_fwd,
        perm_inv,
        a,
        amd::Control::default(),
        MemStack::new(&mut mem),
    )
    .map_err(backend)?;
    Ok(())
}

/// Symbolic analysis of the doubled real lower triangle of a structurally symmetric
/// complex pattern; returns it and the factor size in complex entries.
fn symmetric_analysis(
    n: usize,
    col_ptr: &[usize],
    row_idx: &[usize],
) -> Result<(SymmetricAnalysis, usize), EigenError> {
    let a = SymbolicSparseColMatRef::new_checked(n, n, col_ptr, None, row_idx);
    let mut fwd = vec![0usize; n];
    let mut inv = vec![0usize; n];
    amd_order(&mut fwd, &mut inv, a)?;
    // the pair (2i, 2i+1) of each complex unknown stays together
    let fwd2: Vec<usize> = fwd.iter().flat_map(|&f| [2 * f, 2 * f + 1]).collect();
    let inv2: Vec<usize> = inv.iter().flat_map(|&v| [2 * v, 2 * v + 1]).collect();

    let mut dcol_ptr = Vec::with_capacity(2 * n + 1);
    let mut drow_idx = Vec::new();
    let mut source = Vec::new();
    dcol_ptr.push(0);
    for j in 0..n {
        let lower = (col_ptr[j]..col_ptr[j + 1]).filter(|&p| row_idx[p] >= j);
        // column 2j: (2i, x), (2i+1, -y) for every i >= j
        for p in lower.clone() {
            let i = row_idx[p];
            drow_idx.push(2 * i);
            source.push((p, Part::Re));
            drow_idx.push(2 * i + 1);
            source.push((p, Part::NegIm));
        }
        dcol_ptr.push(drow_idx.len());
        // column 2j+1: (2j+1, -x) on the diagonal; (2i, -y), (2i+1, -x) below
        for p in lower {
            let i = row_idx[p];
            if i != j {
                drow_idx.push(2 * i);
                source.push((p, Part::NegIm));
            }
            drow_idx.push(2 * i + 1);
            source.push((p, Part::NegRe));
        }
        dcol_ptr.push(drow_idx.len());
    }
    let symbolic = {
        let pattern =
            SymbolicSparseColMatRef::new_checked(2 * n, 2 * n, &dcol_ptr, None, &drow_idx);
        factorize_symbolic_cholesky(
            pattern,
            Side::Lower,
            SymmetricOrdering::Custom(PermRef::new_checked(&fwd2, &inv2, 2 * n)),
            CholeskySymbolicParams {
                // the simplicial path has no pivoting at all
                supernodal_flop_ratio_threshold: SupernodalThreshold::FORCE_SUPERNODAL,
                ..Default::default()
            },
        )
        .map_err(backend)?
    };
    let fill = symbolic.len_val() / 2;
    Ok((
        SymmetricAnalysis {
            col_ptr: dcol_ptr,
            row_idx: drow_idx,
            source,
            symbolic,
        },
        fill,
    ))
}

/// Numeric `L B L^T` of the doubled real form of the union-pattern values `vals`.
fn factor_symmetric(
    analysis: &SymmetricAnalysis,
    vals: &[c64],
    par: Par,
) -> Result<Factors, EigenError> {
    let n2 = analysis.col_ptr.len() - 1;
    let values: Vec<f64> = analysis
        .source
        .iter()
        .map(|&(p, part)| match part {
            Part::Re => vals[p].re,
            Part::NegIm => -vals[p].im,
            Part::NegRe => -vals[p].re,
        })
        .collect();
    let a = SparseColMatRef::new(
        SymbolicSparseColMatRef::new_checked(n2, n2, &analysis.col_ptr, None, &analysis.row_idx),
        &values,
    );
    let symbolic = &analysis.symbolic;
    let mut l_values = vec![0.0f64; symbolic.len_val()];
    let mut subdiag = vec![0.0f64; n2];
    let mut pivot_fwd = vec![0usize; n2];
    let mut pivot_inv = vec![0usize; n2];
    let params = Default::default();
    let mut mem = try_mem(symbolic.factorize_numeric_intranode_lblt_scratch::<f64>(par, params))?;
    symbolic.factorize_numeric_intranode_lblt(
        &mut l_values,
        &mut subdiag,
        &mut pivot_fwd,
        &mut pivot_inv,
        a,
        Side::Lower,
        par,
        MemStack::new(&mut mem),
        params,
    );
    if l_values.iter().any(|v| !v.is_finite()) {
        return Err(EigenError::Backend(
            "the symmetric factorisation produced non-finite values".into(),
        ));
    }
    Ok(Factors::Symmetric {
        l_values,
        subdiag,
        pivot_fwd,
        pivot_inv,
    })
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
