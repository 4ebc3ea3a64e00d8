//! Placements that must agree: an untwisted ring equals a body of revolution
//! whose section is shifted to r = R; a twisted circular metal guide is an
//! untwisted one seen in a turning frame.
mod support;

use twistmode_fem::{Order, Placement, SectionProblem, SectionSetup};
use twistmode_mesh::{GeometryOrder, Mesh};

fn physical_eigenvalues(mesh: &Mesh, setup: SectionSetup, m: f64, scale: f64) -> Vec<f64> {
    let problem = SectionProblem::try_new(mesh, setup).unwrap();
    let system = problem.assemble(m).unwrap();
    let eigs = support::hermitian_pencil_eigenvalues(&system.stiffness, &system.mass);
    let (statics, physical) = support::split_static(&eigs, scale);
    assert_eq!(statics, system.summary().gradient_space);
    physical
}

#[test]
fn untwisted_ring_equals_revolution_with_the_section_at_distance_r() {
    // Source: a ring with half_turns = 0 is a body of revolution with its section at
    // distance R (exact identity of the maps), so agreement to round-off.
    let (radius, w, h) = (30e-3, 8e-3, 5e-3);
    let ring_mesh = support::rectangle(
        [-w / 2.0, w / 2.0, -h / 2.0, h / 2.0],
        6,
        4,
        GeometryOrder::Linear,
        ["wall"; 4],
    );
    let rev_mesh = support::rectangle(
        [radius - w / 2.0, radius + w / 2.0, -h / 2.0, h / 2.0],
        6,
        4,
        GeometryOrder::Linear,
        ["wall"; 4],
    );
    for m in [0.0, 3.0] {
        let ring = physical_eigenvalues(
            &ring_mesh,
            support::metal_setup(
                Order::Two,
                Placement::Ring {
                    radius,
                    half_turns: 0.0,
                },
                1.8 * 1.8,
            ),
            m,
            1e5,
        );
        let rev = physical_eigenvalues(
            &rev_mesh,
            support::metal_setup(Order::Two, Placement::Revolution, 1.8 * 1.8),
            m,
            1e5,
        );
        assert_eq!(ring.len(), rev.len());
        let worst = ring
            .iter()
            .zip(&rev)
            .take(10)
            .map(|(a, b)| (a / b - 1.0).abs())
            .fold(0.0, f64::max);
        println!("ring vs revolution, m = {m}: largest relative difference {worst:.2e}");
        assert!(worst < 1e-10, "m = {m}: {worst:e}");
    }
}

#[test]
fn twisted_circular_metal_guide_shifts_beta_by_the_angular_order() {
    // Source: change of frame (helicoidal coordinates; docs/theory.md) — twisting a circular guide is a change of
    // frame, beta_twisted = beta_lab + nu alpha; here for the hollow metal guide
    // (TE_11 cutoff k_c a = j'_11 = 1.841183781340659, TM_01: j_01 =
    // 2.404825557695773, A&S Table 9.5, from memory): for fixed beta' in the
    // turning frame, k0^2 = k_c^2 / eps + (beta' - nu alpha)^2 / eps, so TE_11
    // splits into the two values nu = +-1 and TM_01 (nu = 0) does not move.
    let (a, eps) = (5e-3, 1.8f64 * 1.8);
    let mesh = support::disc(a, 6, GeometryOrder::Quadratic);
    let (alpha, beta) = (120.0, 400.0);
    let te11 = (support::JP_ZEROS[1][0] / a).powi(2);
    let tm01 = (support::J_ZEROS[0][0] / a).powi(2);
    // TE_21 (nu = +-2, k_c a = j'_21 = 3.054236928227140) also enters the window.
    let te21 = (support::JP_ZEROS[2][0] / a).powi(2);
    let mut exact = vec![
        (te11 + (beta - alpha) * (beta - alpha)) / eps,
        (te11 + (beta + alpha) * (beta + alpha)) / eps,
        (tm01 + beta * beta) / eps,
        (te21 + (beta - 2.0 * alpha) * (beta - 2.0 * alpha)) / eps,
    ];
    exact.sort_by(f64::total_cmp);
    let computed = physical_eigenvalues(
        &mesh,
        support::metal_setup(Order::Two, Placement::Straight { twist_rate: alpha }, eps),
        beta,
        exact[0],
    );
    let untwisted = physical_eigenvalues(
        &mesh,
        support::metal_setup(Order::Two, Placement::Straight { twist_rate: 0.0 }, eps),
        beta,
        exact[0],
    );
    let te11_plain = (te11 + beta * beta) / eps;
    println!(
        "untwisted TE_11: {:.6e} {:.6e} exact {te11_plain:.6e}; TM_01 {:.6e} exact {:.6e}",
        untwisted[0], untwisted[1], untwisted[2], exact[1]
    );
    for (c, e) in computed.iter().zip(&exact) {
        println!(
            "twisted circular guide: k0^2 {c:.6e} exact {e:.6e} rel. error {:.2e}",
            (c / e - 1.0).abs()
        );
        assert!((c / e - 1.0).abs() < 2e-3);
    }
    // Without twist the TE_11 pair is degenerate.
    assert!((untwisted[0] / untwisted[1] - 1.0).abs() < 1e-6);
}

/// Largest `|a_ij - a_ji|` over the largest `|a_ij|`.
fn asymmetry(a: &faer::sparse::SparseColMat<usize, num_complex::Complex64>) -> f64 {
    let dense = a.to_dense();
    let n = a.nrows();
    let (mut diff, mut size) = (0.0f64, 0.0f64);
    for j in 0..n {
        for i in 0..n {
            diff = diff.max((dense[(i, j)] - dense[(j, i)]).norm());
            size = size.max(dense[(i, j)].norm());
        }
    }
    diff / size
}

#[test]
fn row_signs_make_untwisted_pencils_complex_symmetric() {
    // Derivation in `AssembledSystem::symmetric_form`: flipping the sign of the
    // third-component test functions makes the bilinear forms symmetric when the
    // medium does not couple the third component to the section plane. Checked on a
    // lossy (complex eps) revolution body at m = 3, where K itself is not symmetric
    // (the i m terms), and on a twisted guide, where the flip does not help.
    let (radius, w, h) = (30e-3, 8e-3, 5e-3);
    let mesh = support::rectangle(
        [radius - w / 2.0, radius + w / 2.0, -h / 2.0, h / 2.0],
        5,
        3,
        GeometryOrder::Quadratic,
        ["wall"; 4],
    );
    let mut setup = support::metal_setup(Order::Two, Placement::Revolution, 1.0);
    setup.materials = twistmode_fem::MaterialTable::single(
        support::FILL,
        twistmode_fem::Material::isotropic(num_complex::Complex64::new(3.2, 0.05)),
        twistmode_fem::Material::vacuum(),
    );
    let problem = SectionProblem::try_new(&mesh, setup).unwrap();
    let system = problem.assemble(3.0).unwrap();
    let (k, m) = system.symmetric_form();
    println!(
        "revolution m = 3: asymmetry K {:.1e}, D K {:.1e}, D M {:.1e}",
        asymmetry(&system.stiffness),
        asymmetry(&k),
        asymmetry(&m)
    );
    assert!(asymmetry(&system.stiffness) > 1e-3);
    assert!(asymmetry(&k) < 1e-14 && asymmetry(&m) < 1e-14);

    let disc = support::disc(5e-3, 4, GeometryOrder::Quadratic);
    let setup = support::metal_setup(Order::Two, Placement::Straight { twist_rate: 120.0 }, 2.0);
    let problem = SectionProblem::try_new(&disc, setup).unwrap();
    let (k, _) = problem.assemble(400.0).unwrap().symmetric_form();
    println!("twisted guide: asymmetry D K {:.1e}", asymmetry(&k));
    assert!(asymmetry(&k) > 1e-6);
}
