//! twistmode-eigen: eigenpairs of a sparse complex pencil `K x = lambda M x` nearest a
//! shift, for matrices that are in general neither Hermitian nor complex-symmetric.
//!
//! Key design decision: one sparse factorisation of `K - sigma M` drives everything. The
//! symbolic analysis (fill-reducing ordering and supernodal structure of the union
//! pattern of `K` and `M`) is done once in [`ShiftInvert::try_new`] and reused for every
//! shift ([`ShiftInvert::factor`]), every sweep point and every shift of a window
//! ([`solve_window`]). The eigenvalues of the pencil nearest `sigma` become the largest
//! ones of `(K - sigma M)^{-1} M`, found by faer's restarted Krylov-Schur
//! (`faer::matrix_free::eigen::partial_eigen`) run on that operator.
//!
//! The factorisation is a [`SparseFactor`]: the symmetric `L B L^T` of the doubled real
//! form when `K` and `M` are complex-symmetric, else a supernodal LU under a
//! [`FillOrdering`] (COLAMD by default; AMD, or a permutation the caller gives, e.g. a
//! [`node_major_ordering`]). Before any numeric factorisation the operator knows the
//! bytes it will allocate ([`ShiftInvert::estimated_factor_bytes`]); allocation failures
//! come back as [`EigenError::OutOfMemory`].
//!
//! Modules, one idea each: `pencil` (the problem), `pattern` (union pattern, transpose,
//! symmetry test), [`scaling`] (equilibration), `ordering` (fill-reducing orderings),
//! `factor` (the [`SparseFactor`] trait and the condition probe), `lu` and `lu_memory`
//! (supernodal LU and the prediction of its memory), `lblt` (symmetric `L B L^T`),
//! `memory` (fallible allocation), `shift_invert` (the operator), `solve` (Krylov-Schur,
//! residuals, polishing), `window` (bands of shifts), `matrix_market`, [`model`].
//!
//! faer's Krylov-Schur serves as is; this crate adds only what it leaves to the caller:
//! - its locking test is an absolute bound on the Ritz residual, so the tolerance is
//!   scaled by the operator's dominant eigenvalue (three power steps);
//! - it returns only locked pairs and no residuals of the pencil, so every pair is
//!   checked against `K` and `M` directly, polished by at most three inverse-iteration
//!   steps if above tolerance, and flagged if still above;
//! - static (gradient) pairs below `static_below` are set aside and the solve is
//!   repeated once with room for them.
//!
//! With the cargo feature `arpack` (off by default; needs the system libarpack),
//! [`arpack::solve_near_arpack`] runs ARPACK's implicitly restarted Arnoldi method on the
//! same shift-invert operator, as an independent check of the default path.
//!
//! ```
//! use twistmode_eigen::{c64, model, solve_near, SolveOptions};
//! let pencil = model::laplacian_2d_dirichlet(10);
//! let spectrum = solve_near(&pencil, c64::new(50.0, 0.0), &SolveOptions::default()).unwrap();
//! assert!(spectrum.pairs.iter().all(|p| p.residual < 1e-10));
//! ```
#![deny(missing_docs)]

#[cfg(feature = "arpack")]
pub mod arpack;
mod error;
mod factor;
mod lblt;
mod lu;
mod lu_memory;
mod matrix_market;
mod memory;
pub mod model;
mod ordering;
mod pattern;
mod pencil;
pub mod scaling;
mod shift_invert;
mod solve;
mod window;

pub use error::EigenError;
pub use factor::{ConditionEstimate, Factorisation, SparseFactor};
pub use faer::c64;
pub use matrix_market::{read_matrix_market, write_matrix_market};
pub use model::sparse_from_triplets;
pub use ordering::{amd_ordering, node_major_ordering, FillOrdering};
pub use pattern::UnionPattern;
pub use pencil::Pencil;
pub use shift_invert::{FactorReport, ShiftInvert, REFINE_ABOVE};
pub use solve::{
    relative_residual, solve_near, solve_near_growing, EigenPair, SolveOptions, Spectrum, Stats,
    Status,
};
pub use window::{
    merge_duplicates, solve_window, ShiftOutcome, ShiftSpacing, Window, WindowSpectrum,
};
