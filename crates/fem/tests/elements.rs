//! Element-level checks: hand-computed Whitney/Lagrange matrices and the
//! discrete exact sequence on assembled systems.
mod support;

use twistmode_fem::coordinates::EquivalentMedium;
use twistmode_fem::geometry::ElementGeometry;
use twistmode_fem::tensor::scalar3;
use twistmode_fem::{c64, element_matrices, Order, Placement, SectionProblem, TriangleRule};
use twistmode_mesh::GeometryOrder;

fn identity_medium(_: f64, _: f64) -> Option<EquivalentMedium> {
    let one = scalar3(c64::new(1.0, 0.0));
    Some(EquivalentMedium {
        eps_hat: one,
        nu_hat: one,
    })
}

#[test]
fn whitney_and_linear_lagrange_matrices_on_the_reference_triangle() {
    // Source: hand computation with int l_i l_j dA = A (1 + delta_ij) / 12 and
    // curl W_k = 2 grad l_a x grad l_b = 1/A (the standard Whitney-element
    // results, e.g. Jin, The Finite Element Method in Electromagnetics, ch. 8 —
    // chapter from memory). Reference triangle (0,0), (1,0), (0,1), A = 1/2.
    let geometry = ElementGeometry::straight([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]);
    let rule = TriangleRule::collapsed_gauss(4);
    let e = element_matrices(&geometry, Order::One, &rule, 0.0, 0.0, identity_medium).unwrap();
    let whitney_mass = [
        [1.0 / 3.0, 0.0, -1.0 / 6.0],
        [0.0, 1.0 / 6.0, 0.0],
        [-1.0 / 6.0, 0.0, 1.0 / 3.0],
    ];
    // Lagrange P1: mass A/12 [[2,1,1],[1,2,1],[1,1,2]]; gradient (Laplace) stiffness.
    let lagrange_mass = [
        [1.0 / 12.0, 1.0 / 24.0, 1.0 / 24.0],
        [1.0 / 24.0, 1.0 / 12.0, 1.0 / 24.0],
        [1.0 / 24.0, 1.0 / 24.0, 1.0 / 12.0],
    ];
    let laplace = [[1.0, -0.5, -0.5], [-0.5, 0.5, 0.0], [-0.5, 0.0, 0.5]];
    let n = e.len;
    assert_eq!(n, 6);
    for i in 0..6 {
        for j in 0..6 {
            let (k, m) = (e.stiffness[i * n + j], e.mass[i * n + j]);
            let (ek, em) = match (i < 3, j < 3) {
                (true, true) => (2.0, whitney_mass[i][j]), // int (1/A)^2 dA = 2
                (false, false) => (laplace[i - 3][j - 3], lagrange_mass[i - 3][j - 3]),
                _ => (0.0, 0.0), // m = 0: the two parts decouple
            };
            assert!((k - ek).norm() < 1e-14, "K[{i}][{j}] = {k}, expected {ek}");
            assert!((m - em).norm() < 1e-14, "M[{i}][{j}] = {m}, expected {em}");
        }
    }
}

fn closed_problem(
    mesh: &twistmode_mesh::Mesh,
    order: Order,
    placement: Placement,
) -> SectionProblem<'_> {
    SectionProblem::try_new(mesh, support::metal_setup(order, placement, 2.25)).unwrap()
}

/// `||K g|| / (||K|| ||g||)` for the gradient `g` of a pseudo-random scalar.
fn curl_of_gradient(problem: &SectionProblem<'_>, m: f64) -> (f64, f64) {
    let system = problem.assemble(m).unwrap();
    let dofs = &system.dofs;
    let scalars = dofs.full_len() - dofs.third_start();
    // Deterministic pseudo-random phi, zero where the scalar DOF is constrained
    // (so the gradient satisfies the wall conditions).
    let phi: Vec<c64> = (0..scalars)
        .map(|i| {
            let x = ((i as f64 + 1.0) * 0.618_033_988_7).fract() - 0.5;
            let free = dofs.reduced_index(dofs.third_start() + i).is_some();
            if free {
                c64::new(x, 0.3 * x * x)
            } else {
                c64::new(0.0, 0.0)
            }
        })
        .collect();
    let g = dofs.restrict(&dofs.gradient(problem.mesh(), &phi, m));
    let k = system.stiffness.to_dense();
    let mm = system.mass.to_dense();
    let gn: f64 = g.iter().map(|x| x.norm_sqr()).sum::<f64>().sqrt();
    let apply = |a: &faer::Mat<c64>| -> f64 {
        (0..a.nrows())
            .map(|i| {
                (0..a.ncols())
                    .map(|j| a.as_ref().get(i, j) * g[j])
                    .sum::<c64>()
                    .norm_sqr()
            })
            .sum::<f64>()
            .sqrt()
    };
    (
        apply(&k) / (k.norm_l2() * gn),
        apply(&mm) / (mm.norm_l2() * gn),
    )
}

#[test]
fn discrete_curl_of_an_assembled_gradient_vanishes() {
    // Source: the exact-sequence property grad(Lagrange_k) in Nedelec_k
    // (Monk, Finite Element Methods for Maxwell's Equations, sec. 5.6 — from memory).
    let straight = support::rectangle(
        [0.0, 0.02, 0.0, 0.01],
        4,
        3,
        GeometryOrder::Linear,
        ["wall"; 4],
    );
    let curved = support::disc(0.01, 3, GeometryOrder::Quadratic);
    for (mesh, placement) in [
        (&straight, Placement::Straight { twist_rate: 40.0 }),
        (&curved, Placement::Straight { twist_rate: 0.0 }),
        (
            &curved,
            Placement::Ring {
                radius: 0.05,
                half_turns: 0.0,
            },
        ),
    ] {
        for order in [Order::One, Order::Two] {
            for m in [0.0, 1.0, 173.0] {
                let problem = closed_problem(mesh, order, placement);
                let (curl, mass) = curl_of_gradient(&problem, m);
                assert!(
                    curl < 1e-12,
                    "{order:?} {placement:?} m={m}: |K g| ratio {curl:e}"
                );
                assert!(
                    mass > 1e-6,
                    "the gradient must be a nonzero field ({mass:e})"
                );
            }
        }
    }
}
