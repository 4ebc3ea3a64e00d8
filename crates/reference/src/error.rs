//! The crate's error type.

use thiserror::Error;

/// Everything that can go wrong when computing a reference answer.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ReferenceError {
    /// A Bessel function was asked for outside the argument range this crate supports.
    #[error("{function}: argument {x} outside the supported range {range}")]
    ArgumentOutOfDomain {
        /// Which function.
        function: &'static str,
        /// The offending argument.
        x: f64,
        /// Human-readable supported range.
        range: &'static str,
    },
    /// A physical or numerical parameter is not acceptable.
    #[error("invalid parameter {name} = {value}: {reason}")]
    InvalidParameter {
        /// Parameter name as in the function signature.
        name: &'static str,
        /// Its value (real part where complex).
        value: f64,
        /// Why it was refused.
        reason: &'static str,
    },
    /// An iterative root search did not converge.
    #[error("{what}: no convergence after {iterations} iterations (last step {last_step:e})")]
    NoConvergence {
        /// What was being solved.
        what: &'static str,
        /// Iterations spent.
        iterations: usize,
        /// Size of the last correction.
        last_step: f64,
    },
    /// The search strip did not yield p Mie resonances (argument-principle count).
    #[error("Mie resonance l = {l}, p = {p}: the search strip holds {count} roots (< p; -1: stopped growing)")]
    RadialOrderMismatch {
        /// Angular number.
        l: u32,
        /// Requested radial order.
        p: u32,
        /// Roots counted in the box.
        count: i64,
    },
    /// The requested guided mode does not exist (below cut-off) at this frequency.
    #[error("mode {label} is not guided at k0 = {k0} 1/m")]
    ModeNotGuided {
        /// Mode label, e.g. "HE21".
        label: String,
        /// Vacuum wavenumber in 1/m.
        k0: f64,
    },
}
