//! Typed errors of the eigen engine.

use faer::c64;

/// Everything that can go wrong while factorising a pencil or solving for eigenpairs.
#[derive(Debug, thiserror::Error)]
pub enum EigenError {
    /// `K` and `M` must be square and of the same size.
    #[error("pencil shape mismatch: K is {k_rows}x{k_cols}, M is {m_rows}x{m_cols}")]
    ShapeMismatch {
        /// rows of K
        k_rows: usize,
        /// columns of K
        k_cols: usize,
        /// rows of M
        m_rows: usize,
        /// columns of M
        m_cols: usize,
    },
    /// A vector handed in (e.g. the starting vector) has the wrong length.
    #[error("vector of length {got} where {expected} was expected")]
    VectorLength {
        /// length supplied
        got: usize,
        /// length required
        expected: usize,
    },
    /// An option is outside its meaningful range.
    #[error("invalid option: {0}")]
    InvalidOption(String),
    /// `K - sigma M` stayed singular (or too badly conditioned) after every nudge of the shift.
    #[error("K - sigma M is singular at sigma = {sigma} and at every nudged shift tried (last condition estimate {condition:e})")]
    SingularShift {
        /// the shift first requested
        sigma: c64,
        /// lower bound on the 1-norm condition number at the last attempt
        condition: f64,
    },
    /// The structural pattern of `K - sigma M` has an empty pivot column.
    #[error("structurally singular pencil: no pivot available at elimination step {index}")]
    StructurallySingular {
        /// elimination step at which no pivot existed
        index: usize,
    },
    /// An allocation failed (in this crate or inside faer's factorisation); the
    /// operator's estimate of what a factorisation needs is
    /// [`ShiftInvert::estimated_factor_bytes`](crate::ShiftInvert::estimated_factor_bytes).
    #[error("out of memory: an allocation of {bytes} bytes failed")]
    OutOfMemory {
        /// bytes asked for (for a failure inside faer's factorisation, where the size of
        /// the failing request is not reported, the estimated bytes of the whole
        /// factorisation)
        bytes: usize,
    },
    /// A caller-supplied permutation has the wrong length.
    #[error("permutation of length {got} where {expected} was expected")]
    PermutationLength {
        /// length supplied
        got: usize,
        /// number of unknowns
        expected: usize,
    },
    /// A caller-supplied permutation holds an index out of range or repeats one.
    #[error("not a permutation: entry {position} is {value}, out of range or repeated")]
    NotAPermutation {
        /// position of the first bad entry
        position: usize,
        /// the entry there
        value: usize,
    },
    /// faer reported an index overflow or another failure that is not memory.
    #[error("linear algebra backend failed: {0}")]
    Backend(String),
    /// An ARPACK routine returned a non-zero `info` (feature `arpack`; the codes are
    /// listed in the routine's documentation in ARPACK's source).
    #[cfg(feature = "arpack")]
    #[error("ARPACK {routine} failed with info = {info}")]
    Arpack {
        /// `znaupd` or `zneupd`
        routine: &'static str,
        /// ARPACK's error code
        info: i32,
    },
    /// Reading or writing a MatrixMarket file failed.
    #[error("I/O error on {path}: {source}")]
    Io {
        /// file concerned
        path: String,
        /// underlying error
        source: std::io::Error,
    },
    /// A MatrixMarket file could not be parsed.
    #[error("MatrixMarket parse error in {path} line {line}: {message}")]
    MatrixMarket {
        /// file concerned
        path: String,
        /// 1-based line number
        line: usize,
        /// what was wrong
        message: String,
    },
}
