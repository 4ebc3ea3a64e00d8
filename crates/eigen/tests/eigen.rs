//! Accuracy and behaviour of the eigen engine against outside references.

mod common;

use common::*;
use twistmode_eigen::model::{laplacian_2d_dirichlet, laplacian_2d_dirichlet_eigenvalues};
use twistmode_eigen::*;

#[test]
fn laplacian_interior_shift_finds_nearest_pairs_with_degeneracies() {
    // Source: standard finite-difference analysis of the 5-point stencil,
    // lambda_ij = 4/h^2 (sin^2(i pi h/2) + sin^2(j pi h/2)).
    let m = 24;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let sigma = c64::new(700.0, 0.0);
    let opts = SolveOptions {
        count: 16,
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    assert_eq!(s.status, Status::Converged);
    assert_eq!(s.nudged_from, None);
    assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 16), 1e-10);
    for p in &s.pairs {
        assert!(p.converged && p.residual < 1e-10, "residual {}", p.residual);
        let norm: f64 = p.vector.iter().map(|a| a.norm_sqr()).sum::<f64>().sqrt();
        assert!((norm - 1.0).abs() < 1e-12);
        // the reported residual is the true one
        assert!(
            (relative_residual(&pencil, p.lambda, &p.vector).unwrap() - p.residual).abs() < 1e-14
        );
    }
    // sorted by distance to the shift
    for w in s.pairs.windows(2) {
        assert!((w[0].lambda - sigma).norm() <= (w[1].lambda - sigma).norm() + 1e-9);
    }
    // exact degeneracies (i,j)/(j,i): both copies, with independent vectors
    let mut doubles = 0;
    for (a, pa) in s.pairs.iter().enumerate() {
        for pb in &s.pairs[a + 1..] {
            if (pa.lambda - pb.lambda).norm() < 1e-8 * pa.lambda.norm() {
                doubles += 1;
                let overlap: c64 = pa
                    .vector
                    .iter()
                    .zip(&pb.vector)
                    .map(|(x, y)| x.conj() * y)
                    .sum();
                assert!(overlap.norm() < 0.9, "copies of {} are parallel", pa.lambda);
            }
        }
    }
    assert!(
        doubles >= 4,
        "expected several degenerate pairs near 700, got {doubles}"
    );
}

#[test]
fn random_complex_pencil_matches_dense_qz() {
    // Fixture: tools/eigen_fixtures.py (scipy.linalg.eig, LAPACK QZ on the dense pencil).
    let (pencil, exact) = random_pencil();
    for sigma in [c64::new(5.0, 0.3), c64::new(2.0, -0.5)] {
        let opts = SolveOptions {
            count: 12,
            ..Default::default()
        };
        let s = solve_near(&pencil, sigma, &opts).unwrap();
        assert_eq!(s.status, Status::Converged);
        assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 12), 1e-9);
        assert!(s.pairs.iter().all(|p| p.converged && p.residual < 1e-10));
    }
}

#[test]
fn shift_on_an_eigenvalue_is_nudged_and_reported() {
    // Source: standard finite-difference analysis (5-point Laplacian eigenvalues).
    let m = 16;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let sigma = exact[0]; // simple lowest eigenvalue, as a shift exactly on it
    let opts = SolveOptions {
        count: 5,
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    assert_eq!(s.nudged_from, Some(sigma));
    assert!(s.shift != sigma && (s.shift - sigma).norm() < 1e-3 * sigma.norm());
    assert_eq!(s.status, Status::Converged);
    assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 5), 1e-10);
    assert!((s.pairs[0].lambda - sigma).norm() < 1e-10 * sigma.norm());
}

#[test]
fn restart_limit_reports_non_convergence() {
    let m = 30;
    let pencil = laplacian_2d_dirichlet(m);
    let sigma = c64::new(3000.0, 0.0);
    // no restart at all: nothing locked, said so
    let opts = SolveOptions {
        count: 30,
        max_restarts: 0,
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    assert_eq!(
        s.status,
        Status::MaxRestarts {
            converged: 0,
            requested: 30
        }
    );
    assert!(s.pairs.is_empty());
    // one restart with the smallest subspace: some, not all
    let opts = SolveOptions {
        count: 30,
        max_restarts: 1,
        krylov_dim: Some(64),
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    match s.status {
        Status::MaxRestarts {
            converged,
            requested,
        } => {
            assert_eq!(requested, 30);
            assert_eq!(converged, s.pairs.len());
            assert!(converged < 30);
        }
        other => panic!("expected MaxRestarts, got {other:?}"),
    }
    for p in &s.pairs {
        assert!(
            (relative_residual(&pencil, p.lambda, &p.vector).unwrap() - p.residual).abs() < 1e-14
        );
        assert_eq!(p.converged, p.residual <= opts.tol);
    }
}

#[test]
fn static_modes_are_counted_and_set_aside() {
    // K = diag(0 (5 copies), Laplacian), M = I: lambda = 0 five times (a stand-in for
    // gradient modes), then the Laplacian spectrum (standard finite-difference analysis).
    let m = 12;
    let lap = laplacian_2d_dirichlet(m);
    let n0 = 5;
    let n = n0 + m * m;
    let mut kt = Vec::new();
    for j in 0..m * m {
        for (i, v) in lap
            .k
            .as_ref()
            .row_idx_of_col(j)
            .zip(lap.k.as_ref().val_of_col(j))
        {
            kt.push((i + n0, j + n0, *v));
        }
    }
    let mt: Vec<_> = (0..n).map(|i| (i, i, c64::new(1.0, 0.0))).collect();
    let pencil = Pencil::try_new(
        sparse_from_triplets(n, n, &kt).unwrap(),
        sparse_from_triplets(n, n, &mt).unwrap(),
    )
    .unwrap();
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let sigma = c64::new(5.0, 0.0);
    let opts = SolveOptions {
        count: 4,
        static_below: 1e-6,
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    assert_eq!(s.static_dropped, 5);
    assert_eq!(s.status, Status::Converged);
    assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 4), 1e-10);
}

#[test]
fn window_covers_band_and_merges_duplicates() {
    // Source: standard finite-difference analysis (5-point Laplacian eigenvalues).
    let m = 20;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = laplacian_2d_dirichlet_eigenvalues(m);
    let window = Window {
        lo: 100.0,
        hi: 400.0,
        shifts: 3,
        spacing: ShiftSpacing::SqrtLambda,
    };
    let opts = SolveOptions {
        count: 16,
        ..Default::default()
    };
    let w = solve_window(&pencil, &window, &opts).unwrap();
    assert!(w.gaps.is_empty(), "gaps {:?}", w.gaps);
    assert!(w.merged_duplicates > 0);
    let inside: Vec<c64> = exact
        .iter()
        .filter(|&&x| (100.0..=400.0).contains(&x))
        .map(|&x| c64::new(x, 0.0))
        .collect();
    let found: Vec<c64> = w.pairs.iter().map(|p| p.lambda).collect();
    assert_same_multiset(&found, &inside, 1e-10);
    for p in w.pairs.windows(2) {
        assert!(p[0].lambda.re <= p[1].lambda.re);
    }
}

#[test]
fn symbolic_analysis_is_reused_across_shifts_and_orderings_agree() {
    // Source: standard finite-difference analysis (5-point Laplacian eigenvalues).
    let m = 18;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    for ordering in [FillOrdering::AmdSymmetric, FillOrdering::Colamd] {
        let mut op = ShiftInvert::try_new_with_ordering(&pencil, ordering).unwrap();
        let fill = op.fill_nnz();
        assert!(fill >= op.pattern_nnz());
        for sigma in [c64::new(300.0, 0.0), c64::new(900.0, 10.0)] {
            let s = op
                .solve_near(
                    sigma,
                    &SolveOptions {
                        count: 6,
                        ..Default::default()
                    },
                )
                .unwrap();
            assert_eq!(s.stats.fill_nnz, fill);
            assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 6), 1e-10);
        }
    }
}

#[test]
fn matrix_market_round_trip_and_scipy_file() {
    // Fixture: tools/eigen_fixtures.py (K written by scipy.io.mmwrite, and its triplets).
    let k = read_matrix_market(&fixture("scipy_written.mtx")).unwrap();
    let json = random_pencil_json();
    let n = json["n"].as_u64().unwrap() as usize;
    let t = triplets(&json, "k");
    let expected = sparse_from_triplets(n, n, &t).unwrap();
    assert_eq!(k.as_ref().compute_nnz(), expected.as_ref().compute_nnz());
    let dense_a = k.as_ref().to_dense();
    let dense_b = expected.as_ref().to_dense();
    let diff = (&dense_a - &dense_b).norm_max();
    // serde_json without `float_roundtrip` may be off by one ulp when reading the JSON copy
    assert!(
        diff <= 4.0 * f64::EPSILON * dense_b.norm_max(),
        "max difference {diff}"
    );

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("k.mtx");
    write_matrix_market(&path, &expected).unwrap();
    let back = read_matrix_market(&path).unwrap();
    assert!((back.as_ref().to_dense() - &dense_b).norm_max() == 0.0);
    let head = std::fs::read_to_string(&path).unwrap();
    assert!(head.starts_with("%%MatrixMarket matrix coordinate complex general\n"));
}

#[test]
fn triplet_duplicates_are_summed() {
    let a = sparse_from_triplets(
        2,
        2,
        &[
            (0, 0, c64::new(1.0, 0.0)),
            (0, 0, c64::new(2.0, 1.0)),
            (1, 0, c64::new(0.5, 0.0)),
        ],
    )
    .unwrap();
    let d = a.as_ref().to_dense();
    assert_eq!(d[(0, 0)], c64::new(3.0, 1.0));
    assert_eq!(d[(1, 0)], c64::new(0.5, 0.0));
}

#[test]
fn shape_and_option_errors_are_typed() {
    let a = laplacian_2d_dirichlet(3);
    let b = laplacian_2d_dirichlet(4);
    assert!(matches!(
        Pencil::try_new(a.k.clone(), b.m.clone()),
        Err(EigenError::ShapeMismatch { .. })
    ));
    let opts = SolveOptions {
        start: Some(vec![c64::new(1.0, 0.0); 2]),
        ..Default::default()
    };
    assert!(matches!(
        solve_near(&a, c64::new(1.0, 0.0), &opts),
        Err(EigenError::VectorLength {
            got: 2,
            expected: 9
        })
    ));
}

/// A pencil whose unknowns have wildly different scales (as edge and nodal
/// finite-element unknowns in SI units do) has the same eigenvalues as the
/// well-scaled one: `(S K S, S M S)` with `S` diagonal and invertible.
/// Source: the exact 2D Dirichlet Laplacian eigenvalues (standard
/// finite-difference analysis), as in the tests above.
#[test]
fn badly_scaled_pencil_is_equilibrated() {
    let base = laplacian_2d_dirichlet(20);
    let n = base.dim();
    let s: Vec<f64> = (0..n)
        .map(|i| if i % 3 == 0 { 1e-8 } else { 1e7 })
        .collect();
    let scale = |a: &faer::sparse::SparseColMat<usize, c64>| {
        let r = a.as_ref();
        let mut t = Vec::new();
        for j in 0..n {
            for (i, v) in r.row_idx_of_col(j).zip(r.val_of_col(j)) {
                t.push(faer::sparse::Triplet::new(i, j, *v * (s[i] * s[j])));
            }
        }
        faer::sparse::SparseColMat::try_new_from_triplets(n, n, &t).unwrap()
    };
    let pencil = Pencil::try_new(scale(&base.k), scale(&base.m)).unwrap();
    let exact = laplacian_2d_dirichlet_eigenvalues(20);
    let sigma = c64::new(500.0, 0.0);
    let opts = SolveOptions {
        count: 6,
        ..SolveOptions::default()
    };
    let spectrum = solve_near(&pencil, sigma, &opts).unwrap();
    assert_eq!(spectrum.pairs.len(), 6);
    let mut nearest: Vec<f64> = exact.clone();
    nearest.sort_by(|a, b| (a - 500.0).abs().total_cmp(&(b - 500.0).abs()));
    for p in &spectrum.pairs {
        assert!(p.converged, "residual {}", p.residual);
        assert!(
            nearest[..6]
                .iter()
                .any(|e| (p.lambda.re - e).abs() < 1e-8 * e),
            "{:?} not among {:?}",
            p.lambda,
            &nearest[..6]
        );
    }
}

/// Asking again for more pairs reuses the factorisation and finds the
/// superset. Source: the exact 2D Dirichlet Laplacian eigenvalues (standard
/// finite-difference analysis), as above.
#[test]
fn growing_request_reuses_the_factorisation() {
    let pencil = laplacian_2d_dirichlet(20);
    let exact = laplacian_2d_dirichlet_eigenvalues(20);
    let sigma = c64::new(500.0, 0.0);
    let opts = SolveOptions {
        count: 4,
        ..SolveOptions::default()
    };
    let mut calls = Vec::new();
    let spectrum = solve_near_growing(&pencil, sigma, &opts, |s| {
        calls.push(s.pairs.len());
        (calls.len() == 1).then_some(10)
    })
    .unwrap();
    assert_eq!(calls, vec![4, 10]);
    let mut nearest = exact.clone();
    nearest.sort_by(|a, b| (a - 500.0).abs().total_cmp(&(b - 500.0).abs()));
    for p in &spectrum.pairs {
        assert!(p.converged);
        assert!(nearest[..10]
            .iter()
            .any(|e| (p.lambda.re - e).abs() < 1e-8 * e));
    }
}

#[test]
fn symmetric_factorisation_is_chosen_and_agrees() {
    // Real symmetric: the 5-point Laplacian against its exact eigenvalues (standard
    // finite-difference analysis), at a real interior shift and a complex one.
    let m = 18;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let mut op = ShiftInvert::try_new(&pencil).unwrap();
    assert_eq!(op.factorisation(), Factorisation::SymmetricDoubled);
    for sigma in [c64::new(300.0, 0.0), c64::new(900.0, 10.0)] {
        let opts = SolveOptions {
            count: 6,
            ..Default::default()
        };
        let s = op.solve_near(sigma, &opts).unwrap();
        assert_eq!(s.status, Status::Converged);
        assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 6), 1e-10);
    }

    // Complex symmetric, lossy and absorbing (`eps`, `s` complex): the symmetric part of
    // the absorbing model pencil, against the LU path on the same pencil (itself checked
    // against dense QZ in `random_complex_pencil_matches_dense_qz`).
    let absorbing = model::helmholtz_p1_absorbing(24);
    let pencil = model::symmetric_part(&absorbing);
    let sigma = c64::new(60.0, -3.0);
    let opts = SolveOptions {
        count: 8,
        ..Default::default()
    };
    let mut sym = ShiftInvert::try_new(&pencil).unwrap();
    assert_eq!(sym.factorisation(), Factorisation::SymmetricDoubled);
    let mut lu = ShiftInvert::try_new_with_ordering(&pencil, FillOrdering::Colamd).unwrap();
    assert_eq!(lu.factorisation(), Factorisation::Lu);
    let a = sym.solve_near(sigma, &opts).unwrap();
    let b = lu.solve_near(sigma, &opts).unwrap();
    assert_eq!(a.status, Status::Converged);
    assert!(a.pairs.iter().all(|p| p.residual < 1e-10));
    assert_same_multiset(&lambdas(&a), &lambdas(&b), 1e-10);
    // The symmetric factor is the smaller one.
    assert!(
        sym.fill_nnz() < lu.fill_nnz(),
        "{} vs {}",
        sym.fill_nnz(),
        lu.fill_nnz()
    );

    // A non-symmetric pencil (the drift term of the same model) keeps the LU.
    let op = ShiftInvert::try_new(&absorbing).unwrap();
    assert_eq!(op.factorisation(), Factorisation::Lu);
}

#[test]
fn shift_almost_on_an_eigenvalue_still_resolves_the_others() {
    // Source: standard finite-difference analysis (5-point Laplacian eigenvalues).
    // A shift 1e-10 (relative) from an eigenvalue: the other pairs would come out with
    // residuals far above the tolerance (and inverse-iteration polishing at that shift
    // would turn them into copies of the nearest pair); the solver must move the shift,
    // say so, and return distinct pairs within tolerance.
    let m = 18;
    let pencil = laplacian_2d_dirichlet(m);
    let exact = real(&laplacian_2d_dirichlet_eigenvalues(m));
    let target = exact[40];
    let sigma = target * (1.0 + 1e-10);
    let opts = SolveOptions {
        count: 8,
        tol: 1e-11,
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    println!(
        "shift moved: {:?}; residuals {:?}",
        s.nudged_from.map(|_| s.shift),
        s.pairs.iter().map(|p| p.residual).collect::<Vec<_>>()
    );
    assert!(s.nudged_from.is_some(), "the shift should have moved");
    assert_eq!(s.status, Status::Converged);
    assert!(s.pairs.iter().all(|p| p.residual < 1e-11));
    assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 8), 1e-10);
}

#[test]
fn node_major_ordering_forces_the_lu_and_finds_the_coupled_spectrum() {
    // Source: the Kronecker structure of `model::coupled_copies` (eigenvalues
    // mu + 2 c cos(j pi / 4), j = 1..3) with mu the closed-form eigenvalues of the
    // 5-point Laplacian (standard finite-difference analysis).
    let (m, copies, coupling) = (12, 3, 40.0);
    let base = laplacian_2d_dirichlet(m);
    let (pencil, members) = model::coupled_copies(&base, copies, coupling);
    let exact: Vec<c64> = laplacian_2d_dirichlet_eigenvalues(m)
        .iter()
        .flat_map(|mu| {
            (1..=copies).map(move |j| {
                let angle = j as f64 * std::f64::consts::PI / (copies as f64 + 1.0);
                c64::new(mu + 2.0 * coupling * angle.cos(), 0.0)
            })
        })
        .collect();
    let order_2d = amd_ordering(base.k.symbolic()).unwrap();
    let global = node_major_ordering(&order_2d, &members).unwrap();
    let sigma = c64::new(500.0, 0.0);
    let opts = SolveOptions {
        count: 8,
        lu_ordering: Some(FillOrdering::Given(global.clone())),
        ..Default::default()
    };
    let s = solve_near(&pencil, sigma, &opts).unwrap();
    // real symmetric, yet the LU was asked for
    assert_eq!(s.stats.factorisation, Some(Factorisation::Lu));
    assert_eq!(s.status, Status::Converged);
    assert_same_multiset(&lambdas(&s), &nearest(&exact, sigma, 8), 1e-10);
    let op =
        ShiftInvert::try_new_with_ordering(&pencil, FillOrdering::Given(global.clone())).unwrap();
    assert_eq!(op.ordering(), &FillOrdering::Given(global.clone()));

    // a permutation of the wrong length, or one that repeats an unknown, is refused
    let short = FillOrdering::Given(global[1..].to_vec());
    assert!(matches!(
        ShiftInvert::try_new_with_ordering(&pencil, short),
        Err(EigenError::PermutationLength { got, expected }) if got + 1 == expected
    ));
    let mut repeated = global.clone();
    repeated[5] = repeated[4];
    assert!(matches!(
        ShiftInvert::try_new_with_ordering(&pencil, FillOrdering::Given(repeated)),
        Err(EigenError::NotAPermutation { position: 5, .. })
    ));
}

#[test]
fn a_pencil_smaller_than_the_krylov_basis_is_solved_on_the_dense_path() {
    // faer's Krylov-Schur applies the operator to a whole block at once when the
    // pencil is smaller than its basis; the workspace it offers is sized for one
    // column, so the operator must bring its own (regression: a panic in the
    // symmetric solve). Exact: Dirichlet Laplacian eigenvalues (model.rs).
    let pencil = twistmode_eigen::model::laplacian_2d_dirichlet(5);
    let exact = twistmode_eigen::model::laplacian_2d_dirichlet_eigenvalues(5);
    let opts = twistmode_eigen::SolveOptions {
        count: 3,
        ..Default::default()
    };
    let s = twistmode_eigen::solve_near(
        &pencil,
        twistmode_eigen::c64::new(exact[0] * 0.9, 0.0),
        &opts,
    )
    .unwrap();
    assert_eq!(s.pairs.len(), 3);
    for p in &s.pairs {
        let d = exact
            .iter()
            .map(|e| (p.lambda.re - e).abs() / e)
            .fold(f64::INFINITY, f64::min);
        assert!(d < 1e-10 && p.residual < 1e-10, "{} ({d:e})", p.lambda);
    }
}
