//! twistmode-fem: the vector finite-element model of a resonator's cross-section.
//!
//! It turns a [`twistmode_mesh::Mesh`], materials, a placement in space
//! (body of revolution, ring, straight guide) and wall conditions into the
//! sparse pencil `K x = k0^2 M x` for one azimuthal order `m` (or propagation
//! constant), plus the post-processing that reads fields back from a solution.
//!
//! Key design decision: geometry enters only through the Jacobian of the
//! composite map `(u, v, w) -> x` (PML stretch, then placement), evaluated
//! numerically at every quadrature point and turned into an equivalent medium
//! `eps_hat = det(J) J^-1 eps J^-T` ([`coordinates`]). The element integrator
//! is the same for every body kind and takes separate test and trial orders,
//! so harmonic blocks of a twisted-ring system can reuse it.
//!
//! ```text
//!   mesh + SectionSetup ──► SectionProblem::assemble(m) ──► AssembledSystem {K, M, DofMap}
//!                                                            │ (eigen solver, elsewhere)
//!                                       FieldEvaluator ◄─────┘ eigenvector
//! ```
//!
//! Elements: Nédélec of the first kind (orders 1 and 2) for `(e_u, e_v)`,
//! Lagrange of the same order for `e_w`; see `docs/theory.md` for the derivation.
#![deny(missing_docs)]
// Index loops over small fixed-size arrays read like the formulas they implement.
#![allow(clippy::needless_range_loop)]

pub mod assembly;
pub mod coordinates;
pub mod dofs;
pub mod element;
mod error;
pub mod field;
pub mod geometry;
pub mod harmonics;
pub mod kernel;
pub mod media;
pub mod quadrature;
pub mod scatter;
pub mod symmetry;
pub mod tensor;
pub mod twisted;

pub use assembly::{
    element_matrices, AssembledSystem, CoefficientField, ElementMatrices, OrderParts,
    SectionMedium, SectionProblem, SectionSetup,
};
pub use coordinates::{CoordinateMap, EquivalentMedium, Placement, PmlProfile, PmlStretch};
pub use dofs::{ConstraintSummary, DofMap, LocalDofs, Wall};
pub use element::Order;
pub use error::FemError;
pub use field::{EnergySummary, FieldEvaluator, PhysicalField, RegionEnergy};
pub use media::{Material, MaterialTable};
pub use quadrature::TriangleRule;
pub use symmetry::PiRotation;
pub use twisted::{BlockSystem, Couplings, HarmonicBlock, HarmonicWindow, TwistedRing};

/// Complex scalar used throughout (same type as `faer::c64`).
pub use num_complex::Complex64 as c64;
