//! twistmode: resonant modes of dielectric resonators from a 2D vector
//! finite-element model of their cross-section.
//!
//! This facade re-exports the workspace crates and holds the result files
//! ([`report`]), pictures ([`pictures`]) and the validation suite
//! ([`validate`]) that the `twistmode` binary drives; the solve itself is the
//! pipeline crate ([`pipeline`]).
#![deny(missing_docs)]

pub mod pictures;
pub mod report;
pub mod validate;

pub use twistmode_analysis as analysis;
pub use twistmode_eigen as eigen;
pub use twistmode_fem as fem;
pub use twistmode_io as io;
pub use twistmode_mesh as mesh;
pub use twistmode_pipeline as pipeline;
pub use twistmode_reference as reference;
