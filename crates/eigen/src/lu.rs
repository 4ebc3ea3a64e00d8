//! Supernodal LU with partial pivoting of `K - sigma M`, for any pencil: fill-reducing
//! column ordering, symbolic analysis in the structure of the Cholesky factor of `A^T A`,
//! numeric factorisation per shift, triangular solves.
//!
//! faer's high-level `SymbolicLu::try_new` always orders with COLAMD. The lower-level
//! supernodal routines take any column permutation, so the analysis here is assembled
//! from them and the ordering is a choice ([`FillOrdering`]); measured on 2D
//! finite-element pencils, COLAMD wins clearly and is the default.

use faer::dyn_stack::{MemStack, StackReq};
use faer::linalg::lu::partial_pivoting::factor::PartialPivLuParams;
use faer::perm::PermRef;
use faer::sparse::linalg::lu::supernodal::{
    factorize_supernodal_numeric_lu, factorize_supernodal_numeric_lu_scratch,
    factorize_supernodal_symbolic_lu, factorize_supernodal_symbolic_lu_scratch,
    solve_in_place_scratch, SupernodalLu, SymbolicSupernodalLu,
};
use faer::sparse::linalg::{qr, LuError};
use faer::sparse::SparseColMatRef;
use faer::{c64, Conj, MatMut, Par, Spec};

use crate::factor::SparseFactor;
use crate::memory::{bytes_of, faer_error, try_buffer, try_vec};
use crate::ordering::column_permutation;
use crate::pattern::Transposed;
use crate::{EigenError, Factorisation, FillOrdering, UnionPattern};

/// The LU's symbolic analysis (column ordering, supernodal structure) and its last
/// numeric factorisation.
#[derive(Debug)]
pub(crate) struct Lu {
    /// the transposed union pattern (faer's numeric LU reads `A` by rows too)
    transposed: Transposed,
    perm_fwd: Vec<usize>,
    perm_inv: Vec<usize>,
    symbolic: SymbolicSupernodalLu<usize>,
    ordering: FillOrdering,
    fill_nnz: usize,
    /// factors of the last successful factorisation; kept across shifts so that
    /// refactorising reuses their storage
    numeric: Option<LuNumeric>,
    /// whether `numeric` holds the factors of the last `factorize`
    factored: bool,
}

#[derive(Debug)]
struct LuNumeric {
    lu: Box<SupernodalLu<usize, c64>>,
    row_fwd: Vec<usize>,
    row_inv: Vec<usize>,
}

impl Lu {
    /// Symbolic analysis of `pattern` (whose transpose is `transposed`) under `ordering`.
    pub(crate) fn analyse(
        pattern: &UnionPattern,
        transposed: Transposed,
        ordering: FillOrdering,
    ) -> Result<Self, EigenError> {
        let n = pattern.dim();
        let a = pattern.symbolic();
        let at = transposed.symbolic();
        let (perm_fwd, perm_inv) = column_permutation(&ordering, a)?;
        let perm = PermRef::new_checked(&perm_fwd, &perm_inv, n);

        let mut etree = try_vec(n, 0usize)?;
        let mut post = try_vec(n, 0usize)?;
        let mut col_counts = try_vec(n, 0usize)?;
        let mut min_col = try_vec(n, 0usize)?;
        let req = qr::col_etree_scratch::<usize>(n, n)
            .or(qr::postorder_scratch::<usize>(n))
            .or(qr::column_counts_aat_scratch::<usize>(n, n))
            .or(factorize_supernodal_symbolic_lu_scratch::<usize>(n, n));
        let mut mem = try_buffer(req)?;
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
        .map_err(|e| faer_error(e, bytes_of(req)))?;
        Ok(Self {
            transposed,
            perm_fwd,
            perm_inv,
            symbolic,
            ordering,
            fill_nnz,
            numeric: None,
            factored: false,
        })
    }

    fn col_perm(&self) -> PermRef<'_, usize> {
        PermRef::new_checked(&self.perm_fwd, &self.perm_inv, self.perm_fwd.len())
    }
}

impl SparseFactor for Lu {
    fn kind(&self) -> Factorisation {
        Factorisation::Lu
    }

    fn ordering(&self) -> &FillOrdering {
        &self.ordering
    }

    /// nnz(L + U) of the symbolic structure: column counts of the Cholesky factor of
    /// `A^T A` under the chosen ordering, counted for L and for U, diagonal once (George
    /// & Ng's bound, before supernode amalgamation; the stored factors are smaller).
    fn fill_nnz(&self) -> usize {
        self.fill_nnz
    }

    fn factorize(
        &mut self,
        a: SparseColMatRef<'_, usize, c64>,
        par: Par,
    ) -> Result<(), EigenError> {
        self.factored = false;
        let n = a.nrows();
        let at_vals = self.transposed.values(a.val())?;
        let at = SparseColMatRef::new(self.transposed.symbolic(), &at_vals);
        let numeric = match self.numeric.take() {
            Some(numeric) => numeric,
            None => LuNumeric {
                lu: Box::new(SupernodalLu::new()),
                row_fwd: try_vec(n, 0usize)?,
                row_inv: try_vec(n, 0usize)?,
            },
        };
        let numeric = self.numeric.insert(numeric);
        let params: Spec<PartialPivLuParams, c64> = Default::default();
        let req = factorize_supernodal_numeric_lu_scratch::<usize, c64>(&self.symbolic, params);
        let mut mem = try_buffer(req)?;
        let col_perm = PermRef::new_checked(&self.perm_fwd, &self.perm_inv, n);
        factorize_supernodal_numeric_lu(
            &mut numeric.row_fwd,
            &mut numeric.row_inv,
            &mut numeric.lu,
            a,
            at,
            col_perm,
            &self.symbolic,
            par,
            MemStack::new(&mut mem),
            params,
        )
        .map_err(|e| match e {
            LuError::SymbolicSingular { index } => EigenError::StructurallySingular { index },
            LuError::Generic(g) => faer_error(g, bytes_of(req)),
        })?;
        self.factored = true;
        Ok(())
    }

    fn solve_scratch(&self, ncols: usize, par: Par) -> StackReq {
        solve_in_place_scratch::<usize, c64>(self.perm_fwd.len(), ncols, par)
    }

    fn solve_in_place(&self, rhs: MatMut<'_, c64>, par: Par, stack: &mut MemStack) {
        let numeric = self
            .numeric
            .as_ref()
            .filter(|_| self.factored)
            .expect("Lu::factorize must succeed first");
        let n = self.perm_fwd.len();
        numeric.lu.solve_in_place_with_conj(
            PermRef::new_checked(&numeric.row_fwd, &numeric.row_inv, n),
            self.col_perm(),
            Conj::No,
            rhs,
            par,
            stack,
        );
    }
}
