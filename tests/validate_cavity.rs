//! The cavity validation at the quick level: every check within tolerance,
//! every azimuthal order 0, 1, 2 (axis conditions) exercised, no spurious mode
//! below the first physical one of each order.
//!
//! Source of the exact resonances: Pozar, Microwave Engineering, 4th ed.,
//! sec. 6.3 and Marcuvitz, Waveguide Handbook, sec. 2.4, through
//! twistmode_reference::cavity (checked against tools/reference_fixtures.py, mpmath).
use twistmode::validate::cavity::{self, Cavity};
use twistmode::validate::Level;

#[test]
fn cavity_checks_pass_at_the_quick_level() {
    let checks = cavity::run(Level::Quick).expect("cavity validation runs");
    print!("{}", twistmode::validate::checks_table(&checks).to_text());
    let failed: Vec<_> = checks.iter().filter(|c| !c.passed()).collect();
    assert!(failed.is_empty(), "failed checks: {failed:#?}");

    // 2 cavities x 15 resonances, order-1 and order-2 rates, and two
    // low-end probes per azimuthal order.
    let resonances = checks
        .iter()
        .filter(|c| c.quantity.starts_with("k0 of "))
        .count();
    assert_eq!(resonances, 30);
    let rates: Vec<_> = checks
        .iter()
        .filter(|c| c.quantity.starts_with("observed rate"))
        .collect();
    assert_eq!(rates.len(), 4);
    for r in &rates {
        // Order 1 converges as h^2, order 2 as h^4 (checked within 30 % by the tolerance).
        assert!(r.computed > 0.7 * r.exact, "{r:?}");
    }

    // Axis conditions: modes of |m| = 0, 1 and 2 are among the compared ones
    // in both cavities (the cylinder's section touches the axis).
    for name in ["cylinder", "coaxial"] {
        for m in 0..3 {
            let tag = format!("(m = {m})");
            assert!(
                checks
                    .iter()
                    .any(|c| c.problem.starts_with(name) && c.quantity.ends_with(&tag)),
                "{name}: no resonance of m = {m}"
            );
        }
    }

    // No spurious mode: at every m, the pair nearest 0.15 lambda_1 is static
    // and the pair nearest 0.6 lambda_1 is the physical fundamental.
    let low = checks
        .iter()
        .filter(|c| c.quantity.contains("nearest 0.15"))
        .count();
    let mid = checks
        .iter()
        .filter(|c| c.quantity.contains("nearest 0.6"))
        .count();
    assert_eq!(low, mid);
    assert!(low >= 2 * 4, "every m of both cavities probed");
}

#[test]
fn exact_lists_hold_the_orders_and_degeneracies_claimed() {
    // Source: Pozar sec. 6.3 (TE_111 is the cylinder's fundamental when d > 2.03 a;
    // here d/a = 1.67 so TM_010 is first), from memory; the coaxial TEM_1 is
    // k0 = pi / d exactly.
    let cyl = Cavity::cylinder().exact_modes(15).unwrap();
    assert_eq!(cavity::label(&cyl[0]), "TM_010");
    let coax = Cavity::coaxial().exact_modes(15).unwrap();
    assert_eq!(cavity::label(&coax[0]), "TEM_1");
    assert!((coax[0].k0 - std::f64::consts::PI / 15e-3).abs() < 1e-9);
    for m in cyl.iter().chain(&coax) {
        assert_eq!(m.degeneracy, if m.m == 0 { 1 } else { 2 });
    }
}
