//! twistmode-pipeline: the policy of a solve, from a case to described modes.
//!
//! The crates below know the mathematics (mesh, fem, eigen, analysis) and the
//! file formats (io); this crate decides what to do with them for one case:
//! which mesh to make, how to set up the section problem, where to put the
//! shift and how many pairs to ask for, which pairs are modes and how they are
//! labelled and flagged, which checks need a second solve, and how a sweep
//! walks a parameter.
//!
//! ```text
//!   Case (io) ──model──► mesh + SectionSetup ──assemble (fem)──► pencil
//!        ──search (eigen)──► eigenpairs ──describe (fem fields, analysis)──► ModeReport
//!        ──checks──► flagged / dropped modes ──► SolveOutcome (to report writers)
//! ```
//!
//! Key design decision: every stage is a named function called in order from
//! [`run::solve_case`], so the life of a run reads top to bottom, and each
//! parameter is read once from the case and passed down as a typed value.
#![deny(missing_docs)]

pub mod budget;
pub mod checks;
pub mod describe;
mod error;
mod facts;
pub mod model;
pub mod run;
pub mod search;
pub mod sweep;
pub mod twisted;

pub use checks::PML_MODE_CHANGE;
pub use error::PipelineError;
pub use facts::{
    MeshFacts, ModeReport, SolveOutcome, SolveSettings, SolverFacts, TwistFacts, TwistSolverFacts,
};
pub use model::{build_mesh, reference_radius, set_up};
pub use run::{solve_case, solve_case_reporting};
pub use search::find_eigenpairs;
