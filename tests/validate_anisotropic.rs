//! Anisotropic materials through the user path (case file with a 3x3 `epsilon` tensor
//! -> mesh -> assembly -> eigensolver), against exact answers:
//!
//! * a metal circular cylinder cavity filled with a uniaxial crystal (optic axis along
//!   the cylinder axis), a body of revolution: TE modes see `eps_perp` only, TM modes
//!   obey the extraordinary-wave relation (`twistmode_reference::uniaxial_cylinder_modes`,
//!   Born & Wolf sec. 15.3 with Pozar sec. 6.3's cut-offs);
//! * a metal rectangular guide `a x b` filled with `diag(eps_x, eps_y, eps_z)`, a straight
//!   guide: the TE_m0 modes carry `E_y` only and the TE_0n modes `E_x` only, so
//!   `k0^2 = ((m pi / a)^2 + beta^2) / eps_y` and `((n pi / b)^2 + beta^2) / eps_x`
//!   (Pozar sec. 3.3 with the filling's component along E; exact because those fields do
//!   not vary along their own direction).
//!
//! The invented "test crystal" values are ours: eps_perp = 9.0, eps_par = 11.5.
use twistmode::pipeline::{solve_case, SolveSettings};
use twistmode_io::Case;
use twistmode_reference::{uniaxial_cylinder_modes, CavityModeKind};

/// Computed `k0` of every mode of a solve (real parts, ascending).
fn solved_k0(text: &str) -> Vec<f64> {
    let case = Case::from_toml_str(text, &[]).expect("valid case");
    let outcome = solve_case(&case, &SolveSettings::default()).expect("solve");
    assert!(
        outcome.modes.iter().all(|m| m.residual < 1e-8),
        "solver: {}",
        outcome.solver.status
    );
    let mut k0: Vec<f64> = outcome.modes.iter().map(|m| m.k0[0]).collect();
    k0.sort_by(f64::total_cmp);
    k0
}

#[test]
fn uniaxial_cylinder_cavity_matches_the_extraordinary_wave_relation() {
    let (a, d, perp, par) = (12e-3, 20e-3, 9.0, 11.5);
    let exact = uniaxial_cylinder_modes(a, d, perp, par, 40).unwrap();
    for m in [0u32, 1] {
        let mine: Vec<_> = exact.iter().filter(|x| x.m == m).take(4).collect();
        let centre = 0.5 * (mine[0].k0 + mine[3].k0);
        let f = centre * twistmode_reference::cavity::SPEED_OF_LIGHT / (2.0 * std::f64::consts::PI);
        let text = format!(
            r#"
[units]
length = "mm"
[body]
kind = "revolution"
[section]
shape = "rectangle"
width = 12
thickness = 20
centre = [6, 10]
material = "test-crystal"
[materials.test-crystal]
epsilon = [[{perp}, 0, 0], [0, {perp}, 0], [0, 0, {par}]]
[surroundings]
kind = "metal"
[mesh]
order = 2
resolution = 12
[search]
m = {m}
near_frequency = "{f} Hz"
count = 8
"#
        );
        let k0 = solved_k0(&text);
        // every exact mode of this m inside the span of the solved ones is found
        let (lo, hi) = (k0[0], k0[k0.len() - 1]);
        let inside: Vec<_> = exact
            .iter()
            .filter(|x| x.m == m && x.k0 > lo * (1.0 - 1e-3) && x.k0 < hi * (1.0 + 1e-3))
            .collect();
        assert_eq!(inside.len(), k0.len(), "m = {m}: {k0:?}");
        let mut worst = 0.0f64;
        for (x, k) in inside.iter().zip(&k0) {
            let err = (k / x.k0 - 1.0).abs();
            println!(
                "uniaxial cavity {:?}_{}{}{}: k0 {k:.9e} exact {:.9e} rel. error {err:.1e}",
                x.kind, x.m, x.n, x.p, x.k0
            );
            worst = worst.max(err);
        }
        assert!(worst < 2e-4, "m = {m}: worst {worst:e}");
        // both families present, so eps_par and eps_perp are both tested
        assert!(inside.iter().any(|x| x.kind == CavityModeKind::Tm));
        assert!(inside.iter().any(|x| x.kind == CavityModeKind::Te));
    }
}

#[test]
fn diagonal_tensor_in_a_rectangular_metal_guide() {
    let (a, b, beta) = (10e-3, 6e-3, 300.0);
    let (ex, ey, ez) = (4.0, 6.0, 2.5);
    let pi = std::f64::consts::PI;
    // TE_10, TE_20 (E_y only) and TE_01 (E_x only); lowest of the guide for these values.
    let mut exact = [
        ((pi / a).powi(2) + beta * beta) / ey,
        ((2.0 * pi / a).powi(2) + beta * beta) / ey,
        ((pi / b).powi(2) + beta * beta) / ex,
    ]
    .map(f64::sqrt);
    exact.sort_by(f64::total_cmp);
    let f = exact[0] * twistmode_reference::cavity::SPEED_OF_LIGHT / (2.0 * pi);
    let errors_at = |resolution: u32| -> Vec<f64> {
        let text = format!(
            r#"
[units]
length = "mm"
[body]
kind = "straight"
[section]
shape = "rectangle"
width = 10
thickness = 6
centre = [0, 0]
material = "test-crystal"
[materials.test-crystal]
epsilon = [[{ex}, 0, 0], [0, {ey}, 0], [0, 0, {ez}]]
[surroundings]
kind = "metal"
[mesh]
order = 2
resolution = {resolution}
[search]
beta = {beta_per_mm}
near_frequency = "{f} Hz"
count = 3
"#,
            beta_per_mm = beta * 1e-3
        );
        let k0 = solved_k0(&text);
        assert_eq!(k0.len(), 3);
        k0.iter()
            .zip(&exact)
            .map(|(k, x)| {
                let err = (k / x - 1.0).abs();
                println!("diagonal tensor guide, resolution {resolution}: k0 {k:.9e} exact {x:.9e} rel. error {err:.1e}");
                err
            })
            .collect()
    };
    // Converges to the exact values at the order-2 rate: the error is discretisation,
    // not a wrong component of the tensor (which would leave an O(1) error).
    let (coarse, fine) = (errors_at(12), errors_at(24));
    for (c, f) in coarse.iter().zip(&fine) {
        assert!(*c < 5e-5 && *f < 5e-6, "{coarse:?} {fine:?}");
        assert!(c / f > 8.0, "rate below 3: {coarse:?} {fine:?}");
    }
}
