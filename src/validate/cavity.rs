//! Validation against exact answers: cavity (being written).
use super::{Check, Level};
use crate::solve::SolveError;

/// Runs the cavity checks at the given level.
pub fn run(_level: Level) -> Result<Vec<Check>, SolveError> {
    Err(SolveError::Unsupported(
        "the cavity validation is not written yet".into(),
    ))
}
