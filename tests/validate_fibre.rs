//! The fibre validation group at the quick level: every check must pass,
//! plus direct assertions on the single-mode fibre (no spurious modes below
//! the guided window, the HE_11 pair found twice and degenerate).
use twistmode::validate::{fibre, Check, Level};

fn print_table(checks: &[Check]) {
    print!("{}", twistmode::validate::checks_table(checks).to_text());
}

#[test]
fn fibre_group_passes_at_the_quick_level() {
    let checks = fibre::run(Level::Quick).expect("fibre validation runs");
    print_table(&checks);
    assert!(checks.len() > 30);
    for c in &checks {
        assert!(
            c.passed(),
            "{} / {}: {:e} > {:e}",
            c.problem,
            c.quantity,
            c.rel_error,
            c.tolerance
        );
    }
}

#[test]
fn single_mode_fibre_has_one_degenerate_pair_and_nothing_below_it() {
    // Source: Snyder & Love, Optical Waveguide Theory, ch. 12 (HE11 is the only
    // guided mode below V = 2.405); exact values from
    // twistmode_reference::fibre (checked against tools/reference_fixtures.py, mpmath).
    let f = fibre::SINGLE_MODE;
    let beta = f.beta();
    let exact = fibre::exact_modes(&f, beta);
    assert_eq!(exact.len(), 2, "HE11, even and odd");
    let expected: Vec<f64> = exact.iter().map(|m| m.k0).collect();
    let knobs = fibre::MeshKnobs {
        order: 2,
        core_divisions: 4.0,
        cladding_edge_radii: 1.0,
        padding_radii: 8.0,
    };
    let s = fibre::solve_straight(&f, beta, 0.0, knobs, &expected).expect("solve");
    assert!(s.complete, "every search window covered");
    assert_eq!(s.k0.len(), 2, "both members of the HE11 pair: {:?}", s.k0);
    // No physical mode has k0 < beta / n_core (Rayleigh quotient); a spurious
    // one would sit there.
    assert!(
        s.lowest_k0 >= beta / f.n_core,
        "{} < {}",
        s.lowest_k0,
        beta / f.n_core
    );
    let split = (s.k0[1] - s.k0[0]) / s.k0[0];
    println!(
        "HE11 pair: k0 {:?}, split {split:.2e}, exact {:.12e}",
        s.k0, exact[0].k0
    );
    assert!(split < 1e-7, "mesh asymmetry splits the pair by {split:e}");
}
