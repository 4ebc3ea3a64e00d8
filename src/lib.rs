//! twistmode: resonant modes of dielectric resonators from a 2D vector
//! finite-element model of their cross-section.
//!
//! This facade re-exports the workspace crates; the `twistmode` binary is a
//! thin layer on top of them.
#![deny(missing_docs)]

pub use twistmode_io as io;
pub use twistmode_mesh as mesh;
