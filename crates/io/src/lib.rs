//! twistmode-io: everything that crosses the program's edge as a file.
//!
//! - [`case`]: TOML case files (with `--set` overrides) read into a validated
//!   [`Case`] in SI units, and turned into the mesh request
//!   ([`Case::generator_spec`], [`Case::mesh_source`]);
//! - [`output`]: atomic result files, JSON, CSV and aligned text tables;
//! - [`plot`]: PNG previews of meshes and field maps;
//! - [`units`]: lengths and quantities with units ("6.2 GHz", "1.55 um");
//! - [`vtk`]: field export as VTK XML unstructured grids (`.vtu`).
//!
//! Key design decision: units exist only here. A case file states its length
//! unit once and quantities carry theirs; everything leaving this crate is SI
//! (metres, Hz, rad/m), and every refusal is a [`CaseError`] naming the key,
//! the problem and a fix, so a user never has to read code to correct a file.
//! Plots embed their font (DejaVu Sans), so nothing depends on system fonts.
#![deny(missing_docs)]

pub mod case;
pub mod output;
pub mod plot;
pub mod units;
pub mod vtk;

pub use case::{Case, CaseError, MeshSource};
pub use units::LengthUnit;
