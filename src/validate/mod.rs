//! The validation suite: the solver against exact answers.
//!
//! Each module solves problems with a known exact answer (metal cavities,
//! the Mie sphere, the step-index fibre) through the same pipeline users run,
//! and returns one [`Check`] per compared number, naming its source. The
//! `validate` command prints them; the tests in `tests/` assert them at the
//! quick level.
use serde::Serialize;
use thiserror::Error;
use twistmode_pipeline::PipelineError;

pub mod cavity;
pub mod fibre;
pub mod sphere;

/// Why a validation run could not produce its checks.
#[derive(Debug, Error)]
pub enum ValidateError {
    /// The solve pipeline failed.
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    /// An exact reference value could not be computed.
    #[error("reference: {0}")]
    Reference(#[from] twistmode_reference::ReferenceError),
    /// A run could not produce what it compares.
    #[error("{0}")]
    Incomplete(String),
}

/// Errors of the crates below the pipeline reach validation through the pipeline's error.
macro_rules! through_pipeline {
    ($($t:ty),*) => {$(
        impl From<$t> for ValidateError {
            fn from(e: $t) -> Self {
                ValidateError::Pipeline(PipelineError::from(e))
            }
        }
    )*};
}
through_pipeline!(
    twistmode_mesh::MeshError,
    twistmode_fem::FemError,
    twistmode_eigen::EigenError,
    twistmode_io::case::CaseError,
    twistmode_io::output::OutputError
);

/// How much work a validation run does.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    /// Small meshes: seconds; what the test suite runs.
    Quick,
    /// Refined meshes: the accuracy figures reported in `docs/validation.md`.
    Full,
}

/// One compared number.
#[derive(Clone, Debug, Serialize)]
pub struct Check {
    /// Which problem (e.g. "cylinder cavity a=12 mm d=20 mm, order 2").
    pub problem: String,
    /// Which quantity (e.g. "k0 of TE111", "Q of TE l=10 p=1").
    pub quantity: String,
    /// Computed value.
    pub computed: f64,
    /// Exact value.
    pub exact: f64,
    /// |computed - exact| / |exact|.
    pub rel_error: f64,
    /// The error the check must stay below.
    pub tolerance: f64,
    /// Where the exact value comes from (publication, or the reference crate
    /// function and the fixture script that checks it).
    pub source: String,
    /// Unknowns of the discrete problem.
    pub dofs: usize,
    /// Wall time of the solve, seconds.
    pub seconds: f64,
}

impl Check {
    /// Builds a check, computing the relative error.
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        problem: impl Into<String>,
        quantity: impl Into<String>,
        computed: f64,
        exact: f64,
        tolerance: f64,
        source: impl Into<String>,
        dofs: usize,
        seconds: f64,
    ) -> Check {
        Check {
            problem: problem.into(),
            quantity: quantity.into(),
            computed,
            exact,
            rel_error: (computed - exact).abs() / exact.abs(),
            tolerance,
            source: source.into(),
            dofs,
            seconds,
        }
    }

    /// True when the error is within tolerance.
    pub fn passed(&self) -> bool {
        self.rel_error <= self.tolerance
    }
}

/// The checks as a table (text for the screen and tests, CSV for files).
pub fn checks_table(checks: &[Check]) -> twistmode_io::output::Table {
    let mut table = twistmode_io::output::Table::new([
        "problem",
        "quantity",
        "computed",
        "exact",
        "rel. error",
        "tolerance",
        "ok",
        "unknowns",
        "seconds",
        "source",
    ]);
    for c in checks {
        table
            .try_push_row([
                c.problem.clone(),
                c.quantity.clone(),
                format!("{:.12e}", c.computed),
                format!("{:.12e}", c.exact),
                format!("{:.2e}", c.rel_error),
                format!("{:.0e}", c.tolerance),
                if c.passed() { "yes" } else { "NO" }.to_string(),
                c.dofs.to_string(),
                format!("{:.2}", c.seconds),
                c.source.clone(),
            ])
            .expect("one cell per column");
    }
    table
}
