//! The symmetric factorisation for complex-symmetric pencils (`K = K^T`, `M = M^T`, not
//! conjugated): the real symmetric indefinite `L B L^T` of the doubled real form.
//!
//! `A = X + iY` with `X`, `Y` symmetric solves `A (u + iv) = c + id` as
//! `[[X, -Y], [-Y, -X]] [u; v] = [c; -d]`, interleaved per unknown so every complex
//! entry becomes one symmetric 2x2 block. faer's supernodal Bunch-Kaufman `L B L^T`
//! (pivoting inside supernodes; Bunch & Kaufman, Math. Comp. 31 (1977) 163-179)
//! factorises it under an AMD ordering of the complex pattern. Only `L` is stored, in the
//! Cholesky structure of `A`: on the demo pencil 55 entries per row against about 950
//! for the LU (see `docs/performance.md`).

use faer::dyn_stack::{MemStack, StackReq};
use faer::linalg::{temp_mat_scratch, temp_mat_zeroed};
use faer::mat::AsMatMut;
use faer::perm::PermRef;
use faer::sparse::linalg::cholesky::{
    factorize_symbolic_cholesky, CholeskySymbolicParams, IntranodeLbltRef, SymbolicCholesky,
    SymmetricOrdering,
};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{c64, Conj, MatMut, Par, Side};

use std::mem::size_of;

use crate::factor::{probe_bytes, SparseFactor};
use crate::memory::{bytes_of, faer_error, try_buffer, try_collect, try_vec, try_with_capacity};
use crate::ordering::amd_permutation;
use crate::{EigenError, Factorisation, FillOrdering, UnionPattern};

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

/// The doubled real lower triangle (pattern, where each value comes from), its symbolic
/// Cholesky structure under the interleaved AMD ordering, and the last numeric factor.
#[derive(Debug)]
pub(crate) struct Lblt {
    col_ptr: Vec<usize>,
    row_idx: Vec<usize>,
    /// for each doubled entry: union position and which part
    source: Vec<(usize, Part)>,
    symbolic: SymbolicCholesky<usize>,
    numeric: Option<LbltNumeric>,
}

#[derive(Debug)]
struct LbltNumeric {
    l_values: Vec<f64>,
    subdiag: Vec<f64>,
    pivot_fwd: Vec<usize>,
    pivot_inv: Vec<usize>,
}

/// AMD, as the trait reports it.
static AMD: FillOrdering = FillOrdering::AmdSymmetric;

impl Lblt {
    /// Symbolic analysis of the doubled real lower triangle of a structurally symmetric
    /// complex pattern.
    pub(crate) fn analyse(pattern: &UnionPattern) -> Result<Self, EigenError> {
        let n = pattern.dim();
        let (col_ptr, row_idx) = (pattern.symbolic().col_ptr(), pattern.symbolic().row_idx());
        let (fwd, inv) = amd_permutation(pattern.symbolic())?;
        // the pair (2i, 2i+1) of each complex unknown stays together
        let mut fwd2 = try_with_capacity(2 * n)?;
        fwd2.extend(fwd.iter().flat_map(|&f| [2 * f, 2 * f + 1]));
        let mut inv2 = try_with_capacity(2 * n)?;
        inv2.extend(inv.iter().flat_map(|&v| [2 * v, 2 * v + 1]));

        let lower_nnz = (0..n)
            .map(|j| {
                (col_ptr[j]..col_ptr[j + 1])
                    .filter(|&p| row_idx[p] >= j)
                    .count()
            })
            .sum::<usize>();
        let mut dcol_ptr = try_with_capacity(2 * n + 1)?;
        let mut drow_idx = try_with_capacity(4 * lower_nnz)?;
        let mut source = try_with_capacity(4 * lower_nnz)?;
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
        let pattern_bytes = (dcol_ptr.len() + drow_idx.len()) * size_of::<usize>();
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
            .map_err(|e| faer_error(e, pattern_bytes))?
        };
        Ok(Self {
            col_ptr: dcol_ptr,
            row_idx: drow_idx,
            source,
            symbolic,
            numeric: None,
        })
    }

    fn factor_scratch(&self, par: Par) -> StackReq {
        self.symbolic
            .factorize_numeric_intranode_lblt_scratch::<f64>(par, Default::default())
    }
}

impl SparseFactor for Lblt {
    fn kind(&self) -> Factorisation {
        Factorisation::SymmetricDoubled
    }

    fn ordering(&self) -> &FillOrdering {
        &AMD
    }

    /// The stored values of the doubled real `L` (supernodes included), halved.
    fn fill_nnz(&self) -> usize {
        self.symbolic.len_val() / 2
    }

    /// Exact up to faer's alignment padding: at the peak of the factorisation the doubled
    /// values, `L`, the 2x2 block subdiagonal, the pivot permutation and faer's
    /// workspace; afterwards the probe solve (its two columns and workspace) while `L`
    /// and the pivots stay.
    fn estimated_factor_bytes(&self, par: Par) -> usize {
        let n2 = self.col_ptr.len() - 1;
        let (f, u) = (size_of::<f64>(), size_of::<usize>());
        let held = self.symbolic.len_val() * f + n2 * f + 2 * n2 * u;
        let factorising = self.source.len() * f + bytes_of(self.factor_scratch(par));
        let probing = probe_bytes(n2 / 2) + bytes_of(self.solve_scratch(1, par));
        held + factorising.max(probing)
    }

    fn factorize(
        &mut self,
        a: SparseColMatRef<'_, usize, c64>,
        par: Par,
    ) -> Result<(), EigenError> {
        self.numeric = None;
        let vals = a.val();
        let n2 = self.col_ptr.len() - 1;
        let values = try_collect(self.source.iter().map(|&(p, part)| match part {
            Part::Re => vals[p].re,
            Part::NegIm => -vals[p].im,
            Part::NegRe => -vals[p].re,
        }))?;
        let doubled = SparseColMatRef::new(
            SymbolicSparseColMatRef::new_checked(n2, n2, &self.col_ptr, None, &self.row_idx),
            &values,
        );
        let symbolic = &self.symbolic;
        let mut l_values = try_vec(symbolic.len_val(), 0.0f64)?;
        let mut subdiag = try_vec(n2, 0.0f64)?;
        let mut pivot_fwd = try_vec(n2, 0usize)?;
        let mut pivot_inv = try_vec(n2, 0usize)?;
        let params = Default::default();
        let mut mem = try_buffer(self.factor_scratch(par))?;
        symbolic.factorize_numeric_intranode_lblt(
            &mut l_values,
            &mut subdiag,
            &mut pivot_fwd,
            &mut pivot_inv,
            doubled,
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
        self.numeric = Some(LbltNumeric {
            l_values,
            subdiag,
            pivot_fwd,
            pivot_inv,
        });
        Ok(())
    }

    fn solve_scratch(&self, ncols: usize, par: Par) -> StackReq {
        let n2 = self.col_ptr.len() - 1;
        temp_mat_scratch::<f64>(n2, ncols)
            .and(self.symbolic.solve_in_place_scratch::<f64>(ncols, par))
    }

    fn solve_in_place(&self, rhs: MatMut<'_, c64>, par: Par, stack: &mut MemStack) {
        let numeric = self
            .numeric
            .as_ref()
            .expect("Lblt::factorize must succeed first");
        let n = rhs.nrows();
        let ncols = rhs.ncols();
        let mut rhs = rhs;
        let (mut z, stack) = temp_mat_zeroed::<f64, _, _>(2 * n, ncols, stack);
        let mut z = z.as_mat_mut();
        for j in 0..ncols {
            for i in 0..n {
                let v = rhs[(i, j)];
                z[(2 * i, j)] = v.re;
                z[(2 * i + 1, j)] = -v.im;
            }
        }
        let lblt = IntranodeLbltRef::new(
            &self.symbolic,
            &numeric.l_values,
            &numeric.subdiag,
            PermRef::new_checked(&numeric.pivot_fwd, &numeric.pivot_inv, 2 * n),
        );
        lblt.solve_in_place_with_conj(Conj::No, z.as_mut(), par, stack);
        for j in 0..ncols {
            for i in 0..n {
                rhs[(i, j)] = c64::new(z[(2 * i, j)], z[(2 * i + 1, j)]);
            }
        }
    }
}
