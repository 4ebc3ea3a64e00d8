//! The pipeline's errors: one enum that wraps the errors of the crates below and
//! adds the pipeline's own refusals.
use thiserror::Error;

/// Why a solve failed.
#[derive(Debug, Error)]
pub enum PipelineError {
    /// The case asks for something this version cannot do yet.
    #[error("{0}")]
    Unsupported(String),
    /// Mesh generation or reading failed.
    #[error("mesh: {0}")]
    Mesh(#[from] twistmode_mesh::MeshError),
    /// Assembly failed.
    #[error("assembly: {0}")]
    Fem(#[from] twistmode_fem::FemError),
    /// The eigensolver failed.
    #[error("eigensolver: {0}")]
    Eigen(#[from] twistmode_eigen::EigenError),
    /// The case file is invalid.
    #[error("{0}")]
    Case(#[from] twistmode_io::case::CaseError),
    /// A result file could not be written.
    #[error("output: {0}")]
    Output(#[from] twistmode_io::output::OutputError),
    /// The solve would need more memory than the budget allows (estimated before
    /// allocating).
    #[error("{message}")]
    TooLarge {
        /// Estimated bytes.
        needed: u64,
        /// The budget, bytes.
        limit: u64,
        /// What, how much, and what to change.
        message: String,
    },
    /// A validation or sweep run could not produce what it compares.
    #[error("{0}")]
    Incomplete(String),
}
