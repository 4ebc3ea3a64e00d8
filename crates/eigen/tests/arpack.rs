//! ARPACK cross-check (feature `arpack`): ARPACK's implicitly restarted Arnoldi method
//! and the default Krylov-Schur path, on the same shift-invert operator, must return the
//! same pairs; both are also held against outside references.
#![cfg(feature = "arpack")]

mod common;

use common::*;
use twistmode_eigen::arpack::solve_near_arpack;
use twistmode_eigen::model::{
    helmholtz_p1_absorbing, laplacian_2d_dirichlet, laplacian_2d_dirichlet_eigenvalues,
};
use twistmode_eigen::*;

/// Both paths on one pencil: same status, the same eigenvalues to `rel` (one-to-one,
/// none skipped), every ARPACK residual true and below the tolerance.
fn cross_check(pencil: &Pencil, sigma: c64, opts: &SolveOptions, rel: f64) -> Spectrum {
    let default = solve_near(pencil, sigma, opts).unwrap();
    let arpack = solve_near_arpack(pencil, sigma, opts).unwrap();
    assert_eq!(default.status, Status::Converged);
    assert_eq!(arpack.status, Status::Converged);
    assert_eq!(arpack.pairs.len(), opts.count);
    assert_same_multiset(&lambdas(&arpack), &lambdas(&default), rel);
    for p in &arpack.pairs {
        assert!(p.converged && p.residual < 1e-10, "residual {}", p.residual);
        assert!(
            (relative_residual(pencil, p.lambda, &p.vector).unwrap() - p.residual).abs() < 1e-14
        );
    }
    assert!(arpack.stats.operator_applications > 0);
    arpack
}

#[test]
fn arpack_agrees_with_default_path_on_laplacian() {
    // Source: standard finite-difference analysis of the 5-point stencil,
    // lambda_ij = 4/h^2 (sin^2(i pi h/2) + sin^2(j pi h/2)); exact degeneracies (i,j)/(j,i).
    let m = 24;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let sigma = c64::new(700.0, 0.0);
    let opts = SolveOptions {
        count: 16,
        ..Default::default()
    };
    let arpack = cross_check(&pencil, sigma, &opts, 1e-10);
    assert_same_multiset(&lambdas(&arpack), &nearest(&exact, sigma, 16), 1e-10);
}

#[test]
fn arpack_agrees_with_default_path_on_random_complex_pencil() {
    // Fixture: tools/eigen_fixtures.py (scipy.linalg.eig, LAPACK QZ on the dense pencil).
    let (pencil, exact) = random_pencil();
    for sigma in [c64::new(5.0, 0.3), c64::new(2.0, -0.5)] {
        let opts = SolveOptions {
            count: 12,
            ..Default::default()
        };
        let arpack = cross_check(&pencil, sigma, &opts, 1e-10);
        assert_same_multiset(&lambdas(&arpack), &nearest(&exact, sigma, 12), 1e-9);
    }
}

#[test]
fn arpack_agrees_on_non_hermitian_absorbing_pencil() {
    // The two paths checked against each other only (no closed form): a complex,
    // non-symmetric P1 pencil with an absorbing layer, n = 30^2.
    let pencil = helmholtz_p1_absorbing(31);
    let opts = SolveOptions {
        count: 8,
        ..Default::default()
    };
    cross_check(&pencil, c64::new(300.0, 0.0), &opts, 1e-10);
}

#[test]
fn arpack_reports_iteration_limit_and_bad_options() {
    let pencil = laplacian_2d_dirichlet(24);
    let sigma = c64::new(700.0, 0.0);
    // one restart with a tight basis cannot converge 16 pairs among close degenerate ones
    let opts = SolveOptions {
        count: 16,
        krylov_dim: Some(18),
        max_restarts: 1,
        ..Default::default()
    };
    let s = solve_near_arpack(&pencil, sigma, &opts).unwrap();
    match s.status {
        Status::MaxRestarts {
            converged,
            requested,
        } => {
            assert_eq!(requested, 16);
            assert!(converged < 16 && converged == s.pairs.len());
        }
        other => panic!("expected MaxRestarts, got {other:?}"),
    }
    // ARPACK needs room for count + 2 basis vectors
    let small = laplacian_2d_dirichlet(4); // n = 16
    let err = solve_near_arpack(
        &small,
        c64::new(10.0, 0.0),
        &SolveOptions {
            count: 15,
            ..Default::default()
        },
    )
    .unwrap_err();
    assert!(matches!(err, EigenError::InvalidOption(_)), "{err}");
}
