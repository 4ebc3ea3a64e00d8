//! twistmode-reference: exact answers that the finite-element solver is
//! validated against.
//!
//! * [`sphere`]: resonances of a dielectric sphere from Mie theory
//!   (complex `k0 a`, Q), with the Lam-Leung-Young asymptotic positions;
//! * [`cavity`]: resonances of closed metal cylinder and coaxial cavities;
//! * [`fibre`]: exact vector guided modes of a step-index fibre, and the
//!   inverse map `beta -> k0` that a solver at fixed `beta` needs;
//! * [`bessel`]: the Bessel functions these need (real-argument `J, Y, K`
//!   through the `puruspe` crate; complex-argument spherical `j, y, h^(1)`
//!   written here);
//! * [`roots`]: bracketing scans and Brent's method.
//!
//! Key design decision: every answer is the root of an exact analytic
//! equation, solved to near machine precision and checked by the tests
//! against an independent 40-digit mpmath computation
//! (`tools/reference_fixtures.py`), never against this crate itself. Roots
//! are labelled by counting (sign changes, argument principle), so a label
//! such as HE21 or TE_(l=10, p=2) means the same thing here and in the
//! fixture script. Units: SI (metres, 1/m); sphere results are the
//! dimensionless `k0 a`. Time convention `exp(-i omega t)`.
#![deny(missing_docs)]

pub mod bessel;
pub mod cavity;
mod error;
pub mod fibre;
pub mod roots;
pub mod sphere;

pub use cavity::{
    coaxial_modes, cylinder_modes, uniaxial_cylinder_modes, CavityMode, CavityModeKind, Filling,
};
pub use error::ReferenceError;
pub use fibre::{FibreMode, FibreModeKind, StepIndexFibre};
pub use sphere::{
    lam_leung_young_position, mie_resonance, MieResonance, MieSphere, SpherePolarization,
};
