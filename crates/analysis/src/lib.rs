//! twistmode-analysis: what a computed mode is, whether its numbers can be
//! trusted, and how modes group into families.
//!
//! Key design decision: everything here works on small, plain records
//! (eigenvalue, energy fractions, field samples along section lines), not on
//! meshes or matrices, so that the same labelling and tracking serve every
//! body kind and can be tested against hand-made data.
//!
//! ```text
//!   eigenpair --(fem post-processing)--> ModeFacts --label()--> Label + Flags
//!   Labels over m (or tau) --families()--> Family { members } --> FSR, group index
//! ```
#![deny(missing_docs)]

pub mod family;
pub mod figures;
pub mod label;
pub mod trust;

pub use family::{families, match_by_overlap, Family, FamilyMember};
pub use figures::{frequency_hz, k0_from_eigenvalue, quality_factor, SPEED_OF_LIGHT};
pub use label::{classify_polarisation, count_maxima, ModeLabel, Polarisation};
pub use trust::{check as trust_flags, Flag, TrustInputs};
