//! One solve from start to end: mesh, set-up, assembly, search, description, checks.
use std::time::Instant;

use twistmode_eigen::Status;
use twistmode_fem::SectionProblem;
use twistmode_io::case::Case;

use crate::checks::check_pml_heavy_modes;
use crate::describe::describe_modes;
use crate::model::{build_mesh, mode_order, set_up};
use crate::search::{find_pairs, pairs_for};
use crate::{PipelineError, SolveOutcome, SolveSettings, SolverFacts};

/// Runs the whole pipeline on a case.
pub fn solve_case(case: &Case, settings: &SolveSettings) -> Result<SolveOutcome, PipelineError> {
    solve_case_reporting(case, settings, |_| {})
}

/// [`solve_case`], telling `stage` what it starts on (for a progress display): the
/// mesh, the assembly, the eigensolver (factorisation and Krylov-Schur), the modes.
pub fn solve_case_reporting(
    case: &Case,
    settings: &SolveSettings,
    mut stage: impl FnMut(&str),
) -> Result<SolveOutcome, PipelineError> {
    if case.body.is_twisted_ring() {
        return crate::twisted::solve_twisted(case, settings, &mut stage);
    }
    let mut outcome = solve_once(case, settings, &mut stage)?;
    check_pml_heavy_modes(case, settings, &mut outcome, &mut stage)?;
    Ok(outcome)
}
/// One pass of the pipeline on one mesh.
pub(crate) fn solve_once(
    case: &Case,
    settings: &SolveSettings,
    stage: &mut impl FnMut(&str),
) -> Result<SolveOutcome, PipelineError> {
    stage("meshing the section");
    let (mesh, mesh_facts) = build_mesh(case)?;
    let setup = set_up(case, &mesh)?;
    let start = Instant::now();
    stage(&format!(
        "assembling ({} triangles, order {})",
        mesh_facts.triangles, mesh_facts.order
    ));
    let problem = SectionProblem::try_new(&mesh, setup)?;
    let system = problem.assemble(mode_order(case))?;
    stage(&format!(
        "factorising and iterating ({} unknowns, {} pairs nearest the target)",
        system.stiffness.nrows(),
        pairs_for(case.search.count)
    ));
    let assembly_seconds = start.elapsed().as_secs_f64();
    // Ask for a few more pairs than modes wanted; when PML, box or static
    // modes crowd the wanted ones out, ask once more for twice as many
    // (large requests make the Krylov-Schur iteration slow: see the
    // shortfall note instead of asking without bound).
    let mut ask = pairs_for(case.search.count);
    let mut tries = 0;
    let mut iteration_seconds = 0.0;
    let mut applications = 0;
    let mut described = None;
    let budget = crate::budget::Budget::new(settings.max_memory);
    let spectrum = find_pairs(case, &system, settings.tolerance, ask, budget, |spectrum| {
        iteration_seconds += spectrum.stats.iteration_seconds;
        applications += spectrum.stats.operator_applications;
        let summary = system.summary();
        let mut solver = SolverFacts {
            dofs_full: summary.full,
            dofs: summary.reduced,
            dofs_constrained: summary.constrained_transverse + summary.constrained_third,
            static_modes: summary.gradient_space,
            pattern_nnz: spectrum.stats.pattern_nnz,
            fill_nnz: spectrum.stats.fill_nnz,
            factorisation: spectrum
                .stats
                .factorisation
                .map_or("unknown", |f| f.name())
                .to_string(),
            shift: [spectrum.shift.re, spectrum.shift.im],
            nudged_from: spectrum.nudged_from.map(|s| [s.re, s.im]),
            status: status_text(&spectrum.status),
            static_dropped: spectrum.static_dropped,
            pml_dropped: 0,
            box_dropped: 0,
            assembly_seconds,
            // One analysis and factorisation serve every try.
            factor_seconds: spectrum.stats.analysis_seconds + spectrum.stats.factor_seconds,
            iteration_seconds,
            operator_applications: applications,
            shortfall: None,
            twist: None,
        };
        let (modes, nodal_fields) =
            describe_modes(case, &problem, &system, spectrum, settings, &mut solver);
        tries += 1;
        let more_exist = spectrum.pairs.len() >= ask && ask < system.stiffness.nrows();
        let done = modes.len() >= case.search.count || !more_exist || tries == 2;
        described = Some((solver, modes, nodal_fields));
        if done {
            None
        } else {
            ask *= 2;
            Some(ask)
        }
    })?;
    let (mut solver, modes, nodal_fields) = described.expect("the solve reports at least once");
    if modes.len() < case.search.count {
        solver.shortfall = Some(format!(
            "found {} of the {} modes asked for: the eigensolver returned {} pairs nearest the \
             target, of which {} were static (k0 = 0), {} PML and {} box modes. Move \
             search.near_frequency closer to the modes you want or raise search.count",
            modes.len(),
            case.search.count,
            spectrum.pairs.len() + spectrum.static_dropped,
            spectrum.static_dropped,
            solver.pml_dropped,
            solver.box_dropped
        ));
    }
    drop(problem);
    Ok(SolveOutcome {
        mesh,
        mesh_facts,
        solver,
        modes,
        nodal_fields,
    })
}

pub(crate) fn status_text(status: &Status) -> String {
    match status {
        Status::Converged => "converged".into(),
        Status::MaxRestarts {
            converged,
            requested,
        } => format!("stopped at the restart limit with {converged} of {requested} pairs"),
        Status::ResidualAboveTolerance { failing } => {
            format!("{failing} pairs above the residual tolerance (flagged)")
        }
    }
}
