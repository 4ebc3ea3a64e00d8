//! The memory estimate of a factorisation against what the factorisation actually
//! allocates, and allocation failures inside it, with a global allocator of this test
//! binary that counts (and can refuse) each thread's allocations.

#[path = "../examples/common/counting.rs"]
mod counting;

use twistmode_eigen::model::{
    coupled_copies, helmholtz_p1_absorbing, laplacian_2d_dirichlet, symmetric_part,
};
use twistmode_eigen::{
    amd_ordering, c64, node_major_ordering, solve_near, EigenError, Factorisation, FillOrdering,
    Pencil, ShiftInvert, SolveOptions,
};

use counting::{peak_of, with_limit, Counting};

#[global_allocator]
static ALLOCATOR: Counting = Counting;

/// One thread, and every per-thread reservation made: the dense kernels (crate
/// private-gemm-x86) reserve about 1 GB of address space per thread at their first call,
/// once for the thread's life and untouched (not resident); a warm-up factorisation keeps
/// that reservation out of the counts.
fn warm_up() {
    faer::set_global_parallelism(faer::Par::Seq);
    ShiftInvert::try_new_with_ordering(&laplacian_2d_dirichlet(20), FillOrdering::Colamd)
        .unwrap()
        .factor(c64::new(500.0, 0.0))
        .unwrap();
}

/// Estimate and peak of the first factorisation of `op` at `sigma`.
fn estimate_and_actual(mut op: ShiftInvert<'_>, sigma: c64) -> (usize, usize) {
    let estimate = op.estimated_factor_bytes();
    let actual = peak_of(|| {
        op.factor(sigma).expect("factorisation");
    });
    (estimate, actual)
}

#[test]
fn factor_memory_estimate_matches_what_the_factorisation_allocates() {
    // Source: the allocations themselves (this binary's counting allocator, on the
    // calling thread, which does every allocation that grows with the problem). Target
    // from the task: the estimate within a factor 1.5 and never more than 20 % low.
    warm_up();
    let p1 = helmholtz_p1_absorbing(41);
    let sym = symmetric_part(&p1);
    let lap = laplacian_2d_dirichlet(40);
    let base = laplacian_2d_dirichlet(16);
    let (coupled, members) = coupled_copies(&base, 5, 40.0);
    let node_major =
        node_major_ordering(&amd_ordering(base.k.symbolic()).unwrap(), &members).unwrap();
    let sigma = c64::new(2000.0, 0.0);
    type Case<'a> = (&'a str, &'a Pencil, Option<FillOrdering>, Factorisation);
    let cases: [Case<'_>; 6] = [
        ("P1 absorbing, LU COLAMD", &p1, None, Factorisation::Lu),
        (
            "P1 absorbing, LU AMD",
            &p1,
            Some(FillOrdering::AmdSymmetric),
            Factorisation::Lu,
        ),
        (
            "P1 symmetric part, L B L^T",
            &sym,
            None,
            Factorisation::SymmetricDoubled,
        ),
        (
            "P1 symmetric part, LU COLAMD",
            &sym,
            Some(FillOrdering::Colamd),
            Factorisation::Lu,
        ),
        (
            "5-point Laplacian, L B L^T",
            &lap,
            None,
            Factorisation::SymmetricDoubled,
        ),
        (
            "coupled Laplacian, LU node-major",
            &coupled,
            Some(FillOrdering::Given(node_major)),
            Factorisation::Lu,
        ),
    ];
    for (name, pencil, ordering, kind) in cases {
        let op = match ordering {
            None => ShiftInvert::try_new(pencil),
            Some(ordering) => ShiftInvert::try_new_with_ordering(pencil, ordering),
        }
        .unwrap();
        assert_eq!(op.factorisation(), kind, "{name}");
        let (estimate, actual) = estimate_and_actual(op, sigma);
        let ratio = estimate as f64 / actual as f64;
        println!("{name}: estimate {estimate} B, allocated {actual} B, ratio {ratio:.3}");
        assert!(
            (0.8..=1.5).contains(&ratio),
            "{name}: estimate {estimate} B against {actual} B allocated"
        );
    }
}

#[test]
fn a_factorisation_that_does_not_fit_is_an_error_not_an_abort() {
    // Every request of the factorisation beyond a fraction of its estimate is refused
    // (this binary's allocator returns null, as a system out of memory does): the call
    // must return EigenError::OutOfMemory, and the operator must work once memory is
    // back.
    warm_up();
    let p1 = helmholtz_p1_absorbing(31);
    let sym = symmetric_part(&p1);
    let sigma = c64::new(2000.0, 0.0);
    for (pencil, ordering) in [(&p1, Some(FillOrdering::Colamd)), (&sym, None)] {
        let mut op = match ordering {
            None => ShiftInvert::try_new(pencil),
            Some(ordering) => ShiftInvert::try_new_with_ordering(pencil, ordering),
        }
        .unwrap();
        let estimate = op.estimated_factor_bytes();
        for k in 0..20 {
            let limit = estimate * k / 20;
            let result = with_limit(limit, || op.factor(sigma));
            assert!(
                matches!(result, Err(EigenError::OutOfMemory { bytes }) if bytes > 0),
                "{:?} with {limit} of {estimate} bytes: {result:?}",
                op.factorisation()
            );
        }
        let report = op.factor(sigma).expect("memory is back");
        assert!(report.condition.is_finite() && report.nudged_from.is_none());
    }
}

#[test]
fn a_solve_that_does_not_fit_is_an_error_not_an_abort() {
    // The whole solve (equilibration, analysis, factorisation, Krylov-Schur, residuals)
    // under 40 limits below what it needs: each run must end in EigenError::OutOfMemory.
    // With the L B L^T and with the LU under AMD: faer's COLAMD makes two n-vectors with
    // an allocation that cannot report failure (the one path left that aborts, see
    // memory.rs), so COLAMD is left out here.
    warm_up();
    let pencil = symmetric_part(&helmholtz_p1_absorbing(25));
    let sigma = c64::new(2000.0, 0.0);
    for lu_ordering in [None, Some(FillOrdering::AmdSymmetric)] {
        let opts = SolveOptions {
            count: 4,
            lu_ordering,
            ..Default::default()
        };
        let needed = peak_of(|| {
            solve_near(&pencil, sigma, &opts).unwrap();
        });
        for k in 0..40 {
            let limit = needed * k / 40;
            let result = with_limit(limit, || solve_near(&pencil, sigma, &opts));
            assert!(
                matches!(result, Err(EigenError::OutOfMemory { .. })),
                "{limit} of {needed} bytes: {:?}",
                result.map(|s| s.status)
            );
        }
    }
}
