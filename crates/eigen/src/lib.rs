//! twistmode-eigen: eigenpairs of a sparse complex pencil `K x = lambda M x` nearest a
//! shift, for matrices that are in general neither Hermitian nor complex-symmetric.
//!
//! Key design decision: one sparse LU of `K - sigma M` drives everything. The symbolic
//! analysis (fill-reducing ordering and supernodal structure of the union pattern of `K`
//! and `M`) is done once in [`ShiftInvert::try_new`] and reused for every shift
//! ([`ShiftInvert::factor`]), every sweep point and every shift of a window
//! ([`solve_window`]). The eigenvalues of the pencil nearest `sigma` become the largest
//! ones of `(K - sigma M)^{-1} M`, found by faer's restarted Krylov-Schur
//! (`faer::matrix_free::eigen::partial_eigen`) run on that operator.
#![deny(missing_docs)]

mod error;
mod matrix_market;
pub mod model;
mod shift_invert;
mod solve;
mod window;

pub use error::EigenError;
pub use faer::c64;
pub use matrix_market::{read_matrix_market, write_matrix_market};
pub use model::sparse_from_triplets;
pub use shift_invert::{FactorReport, FillOrdering, Pencil, ShiftInvert};
pub use solve::{relative_residual, solve_near, EigenPair, SolveOptions, Spectrum, Stats, Status};
pub use window::{
    merge_duplicates, solve_window, ShiftOutcome, ShiftSpacing, Window, WindowSpectrum,
};
