//! The sphere validation at the quick level: every check passes.
//!
//! Source of every exact value: Mie theory (Bohren & Huffman 1983, ch. 4,
//! eq. 4.53), computed by twistmode_reference::sphere::mie_resonance, itself
//! checked against tools/reference_fixtures.py (mpmath).
use twistmode::validate::sphere::{self, SphereProbe};
use twistmode::validate::{Check, Level};
use twistmode_reference::SpherePolarization;

fn print_table(checks: &[Check]) {
    print!("{}", twistmode::validate::checks_table(checks).to_text());
}

#[test]
fn quick_sphere_checks_pass() {
    let checks = sphere::run(Level::Quick).expect("the sphere validation runs");
    print_table(&checks);
    // 5 probes: Re k0 and Q (all Q < 1e6 here) and identification each, one degeneracy.
    assert_eq!(checks.len(), 5 * 3 + 1);
    let failed: Vec<&Check> = checks.iter().filter(|c| !c.passed()).collect();
    assert!(failed.is_empty(), "failed checks: {failed:#?}");
}

/// No spurious modes: every mode the pipeline keeps near a TE l=5 target at
/// m = 3 is a Mie resonance (within the discretisation error), and the
/// static (gradient) pairs are set aside, not reported.
#[test]
fn every_kept_mode_is_a_mie_resonance() {
    let mut probe = SphereProbe::new(2.0, 5, 1, SpherePolarization::Te, 3);
    probe.resolution = 8.0;
    let solve = sphere::solve_probe(&probe).expect("solve");
    assert!(!solve.all_k0a.is_empty());
    for &k0a in &solve.all_k0a {
        // Source: Mie theory via twistmode_reference::mie_resonance (fixture: tools/reference_fixtures.py, mpmath).
        let ((kind, l, p), distance) = sphere::nearest_exact(&probe, k0a).expect("exact");
        println!(
            "kept k0a {k0a:.6}: nearest {kind:?} l={l} p={p}, relative distance {distance:.1e}"
        );
        assert!(
            distance < 1e-3,
            "k0a {k0a} is no Mie resonance (nearest {distance:.1e})"
        );
        assert!(l >= 3, "a mode at m = 3 must have l >= 3, found l = {l}");
    }
}

/// Refinement study of the bench (n = 2, l = 30, TE, p = 1, m = 30;
/// SPHERE_N, SPHERE_L, SPHERE_KIND, SPHERE_M, SPHERE_ORDER, SPHERE_PML
/// (wavelengths) probe other p = 1 resonances): minutes, so ignored; run with
/// `SPHERE_RESOLUTION=12 cargo test --release --test validate_sphere -- --ignored --nocapture`.
#[test]
#[ignore]
fn bench_l30_refinement() {
    let resolution: f64 = std::env::var("SPHERE_RESOLUTION")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(8.0);
    let order: u8 = std::env::var("SPHERE_ORDER")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(2);
    let l: u32 = std::env::var("SPHERE_L")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(30);
    let env = |key: &str, default: f64| -> f64 {
        std::env::var(key)
            .ok()
            .and_then(|s| s.parse().ok())
            .unwrap_or(default)
    };
    let polarization = match std::env::var("SPHERE_KIND").as_deref() {
        Ok("TM") => SpherePolarization::Tm,
        _ => SpherePolarization::Te,
    };
    let m = env("SPHERE_M", f64::from(l)) as i32;
    let mut probe = SphereProbe::new(env("SPHERE_N", 2.0), l, 1, polarization, m);
    probe.resolution = resolution;
    probe.order = order;
    probe.pml_wavelengths = env("SPHERE_PML", 0.5);
    let solve = sphere::solve_probe(&probe).expect("solve");
    let e = solve.exact.k0a;
    let peak = std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| s.lines().find(|l| l.starts_with("VmHWM")).map(String::from))
        .unwrap_or_default();
    println!(
        "bench l={l} order {order} resolution {resolution}: dofs {} re_err {:.3e} k0a {:.12} exact {:.12} q {:.4e} exact q {:.4e} seconds {:.1} {peak} identified {} flags {:?}",
        solve.dofs,
        (solve.k0a.re - e.re).abs() / e.re,
        solve.k0a.re,
        e.re,
        solve.q,
        solve.exact.q,
        solve.seconds,
        solve.identified(),
        solve.flags
    );
    // Source: Mie theory via twistmode_reference::mie_resonance.
    assert!(solve.identified());
}

/// The full level (minutes; the figures of docs/validation-sphere.md), the
/// same as `twistmode validate --full --only sphere`; run with
/// `cargo test --release --test validate_sphere full_level -- --ignored --nocapture`.
#[test]
#[ignore]
fn full_level() {
    let checks = sphere::run(Level::Full).expect("the sphere validation runs");
    print_table(&checks);
    let failed = checks.iter().filter(|c| !c.passed()).count();
    println!("{} checks, {failed} failed", checks.len());
}
