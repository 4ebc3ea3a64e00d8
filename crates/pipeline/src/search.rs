//! The search policy: where to put the shift, how many pairs to ask for, and when to ask again.
use num_complex::Complex64;
use twistmode_eigen::{Pencil, SolveOptions, Spectrum};
use twistmode_fem::AssembledSystem;
use twistmode_io::case::Case;

use crate::PipelineError;

/// Pairs asked of the eigensolver beyond the modes wanted: PML, box and static
/// pairs near the shift are dropped afterwards.
pub const EXTRA_PAIRS: usize = 4;

/// Pairs to ask for when `count` modes are wanted.
pub fn pairs_for(count: usize) -> usize {
    count + EXTRA_PAIRS
}

/// Shift-invert near the target: eigenpairs of `K x = k0^2 M x` nearest `k0_target^2`.
pub fn find_eigenpairs(
    case: &Case,
    system: &AssembledSystem,
    tolerance: f64,
) -> Result<Spectrum, PipelineError> {
    find_pairs(
        case,
        system,
        tolerance,
        pairs_for(case.search.count),
        crate::budget::Budget::new(None),
        |_| None,
    )
}

/// [`find_eigenpairs`] with an explicit number of pairs; `more` may ask for
/// more pairs after each solve, which then reuses the factorisation.
pub(crate) fn find_pairs(
    case: &Case,
    system: &AssembledSystem,
    tolerance: f64,
    count: usize,
    budget: crate::budget::Budget,
    more: impl FnMut(&Spectrum) -> Option<usize>,
) -> Result<Spectrum, PipelineError> {
    // Real shift `k0^2`, or `(k0 (1 - i / (2 Q)))^2` with `search.near_q`:
    // a leaky mode's `k0^2` lies far below the real axis, behind PML modes.
    let (re, im) = case.search.complex_k0();
    let target = Complex64::new(re, im);
    let sigma = target * target;
    // Row signs make untwisted pencils complex-symmetric (same eigenpairs), which
    // lets the eigen crate use its symmetric factorisation.
    let (k, m) = system.symmetric_form();
    let pencil = Pencil::try_new(k, m)?;
    crate::budget::check(
        &pencil,
        budget,
        "reduce mesh.resolution or surroundings.padding",
    )?;
    let opts = SolveOptions {
        count: count.min(system.stiffness.nrows()),
        tol: tolerance,
        static_below: 1e-6 * sigma.norm(),
        ..SolveOptions::default()
    };
    Ok(twistmode_eigen::solve_near_growing(
        &pencil, sigma, &opts, more,
    )?)
}
