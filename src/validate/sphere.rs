//! Validation against exact answers: sphere (being written).
use super::{Check, Level};
use crate::solve::SolveError;

/// Runs the sphere checks at the given level.
pub fn run(_level: Level) -> Result<Vec<Check>, SolveError> {
    Err(SolveError::Unsupported(
        "the sphere validation is not written yet".into(),
    ))
}
