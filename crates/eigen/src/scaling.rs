//! Symmetric diagonal equilibration of a pencil.
//!
//! Finite-element pencils that mix edge and nodal unknowns in SI units can
//! have diagonals spanning 30 orders of magnitude (edge functions scale as
//! 1/h, nodal ones as 1), which makes `K - sigma M` look singular to any
//! condition estimate although it is not. Solving
//! `(D K D) y = lambda (D M D) y` with `d_i = 1 / sqrt(|K_ii| + |sigma| |M_ii|)`
//! leaves the eigenvalues unchanged (`x = D y`) and brings every diagonal of
//! `D (K - sigma M) D` to order one (Jacobi scaling; common practice, see
//! e.g. Golub & Van Loan, Matrix Computations, sec. 3.5.2 on equilibration).
use std::mem::size_of;

use faer::c64;
use faer::sparse::{CreationError, SparseColMat};

use crate::memory::{faer_error, try_collect, try_vec, try_with_capacity};

use crate::{EigenError, Pencil};

/// A pencil scaled by `D` on both sides, with the scale kept to map vectors back.
pub struct Equilibrated {
    /// `D K D`, `D M D`.
    pub pencil: Pencil,
    /// The diagonal of `D`.
    pub scale: Vec<f64>,
}

fn diagonal(a: &SparseColMat<usize, c64>) -> Result<Vec<c64>, EigenError> {
    let n = a.ncols();
    let r = a.as_ref();
    let mut d = try_vec(n, c64::new(0.0, 0.0))?;
    for (j, dj) in d.iter_mut().enumerate() {
        for (i, v) in r.row_idx_of_col(j).zip(r.val_of_col(j)) {
            if i == j {
                *dj += *v;
            }
        }
    }
    Ok(d)
}

fn scaled(a: &SparseColMat<usize, c64>, s: &[f64]) -> Result<SparseColMat<usize, c64>, EigenError> {
    let r = a.as_ref();
    let mut triplets = try_with_capacity(r.compute_nnz())?;
    for j in 0..a.ncols() {
        for (i, v) in r.row_idx_of_col(j).zip(r.val_of_col(j)) {
            triplets.push(faer::sparse::Triplet::new(i, j, *v * (s[i] * s[j])));
        }
    }
    SparseColMat::try_new_from_triplets(a.nrows(), a.ncols(), &triplets).map_err(|e| match e {
        CreationError::Generic(e) => faer_error(e, r.compute_nnz() * size_of::<c64>()),
        other => EigenError::InvalidOption(format!("cannot build the scaled matrix: {other:?}")),
    })
}

/// Scales `pencil` for a shift of modulus `sigma_abs`. Rows whose diagonal is
/// zero in both matrices keep scale 1.
pub fn equilibrate(pencil: &Pencil, sigma_abs: f64) -> Result<Equilibrated, EigenError> {
    let dk = diagonal(&pencil.k)?;
    let dm = diagonal(&pencil.m)?;
    let scale = try_collect(dk.iter().zip(&dm).map(|(k, m)| {
        let w = k.norm() + sigma_abs * m.norm();
        if w > 0.0 && w.is_finite() {
            1.0 / w.sqrt()
        } else {
            1.0
        }
    }))?;
    let pencil = Pencil::try_new(scaled(&pencil.k, &scale)?, scaled(&pencil.m, &scale)?)?;
    Ok(Equilibrated { pencil, scale })
}

impl Equilibrated {
    /// Maps an eigenvector of the scaled pencil back (`x = D y`, unit 2-norm).
    pub fn restore(&self, y: &[c64]) -> Result<Vec<c64>, EigenError> {
        let mut x = try_collect(y.iter().zip(&self.scale).map(|(v, s)| *v * *s))?;
        let norm = x.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
        if norm > 0.0 {
            for v in &mut x {
                *v /= norm;
            }
        }
        Ok(x)
    }
}
