//! Sphere studies behind `docs/validation-sphere.md` (not tests: minutes, and they
//! print figures rather than assert a bound). Run one with
//! `cargo run --release --example sphere_study -- refinement` or `-- pml`; environment
//! variables choose the probe (below). The full validation level is
//! `twistmode validate --full --only sphere`.
//!
//! `refinement`: the refinement bench (n = 2, l = 30, TE, p = 1, m = 30;
//! SPHERE_RESOLUTION, SPHERE_ORDER, SPHERE_N, SPHERE_L, SPHERE_KIND, SPHERE_M,
//! SPHERE_PML (wavelengths) probe other p = 1 resonances).
//!
//! `pml`: one probe assembled like the user path (case text, mesh, setup) but with the
//! PML strength scaled by SPHERE_S, `outer / (2 Q)` times SPHERE_ADDQ added
//! (compensation of the field's outward growth), grading power SPHERE_POWER, and the
//! shift at the exact complex `k0^2`; SPHERE_N, SPHERE_L, SPHERE_P, SPHERE_KIND (TE/TM),
//! SPHERE_M, SPHERE_RESOLUTION, SPHERE_PML (wavelengths), SPHERE_MARGIN (PML start over
//! the caustic) choose the probe.
//!
//! Source of every exact value: Mie theory (Bohren & Huffman 1983, ch. 4, eq. 4.53) via
//! `twistmode_reference::mie_resonance` (checked against mpmath in
//! `tools/reference_fixtures.py`).
use twistmode::validate::sphere::{self, SphereProbe};
use twistmode_reference::SpherePolarization;

/// A number from the environment variable `key`, or `default`.
fn env_or(key: &str, default: f64) -> f64 {
    std::env::var(key)
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(default)
}

fn main() {
    match std::env::args().nth(1).as_deref() {
        Some("refinement") => refinement(),
        Some("pml") => pml(),
        _ => {
            eprintln!("usage: sphere_study refinement|pml (environment variables: see the source)");
            std::process::exit(2);
        }
    }
}

fn refinement() {
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
    let polarization = match std::env::var("SPHERE_KIND").as_deref() {
        Ok("TM") => SpherePolarization::Tm,
        _ => SpherePolarization::Te,
    };
    let m = env_or("SPHERE_M", f64::from(l)) as i32;
    let mut probe = SphereProbe::new(env_or("SPHERE_N", 2.0), l, 1, polarization, m);
    probe.resolution = resolution;
    probe.order = order;
    probe.pml_wavelengths = env_or("SPHERE_PML", 0.5);
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
    if !solve.identified() {
        eprintln!("the nearest pair is not the probed resonance");
        std::process::exit(1);
    }
}

fn pml() {
    use num_complex::Complex64;
    use twistmode_fem::{PmlStretch, SectionProblem};
    let polarization = match std::env::var("SPHERE_KIND").as_deref() {
        Ok("TE") => SpherePolarization::Te,
        _ => SpherePolarization::Tm,
    };
    let l = env_or("SPHERE_L", 1.0) as u32;
    let mut probe = SphereProbe::new(
        env_or("SPHERE_N", 2.0),
        l,
        env_or("SPHERE_P", 1.0) as u32,
        polarization,
        env_or("SPHERE_M", 0.0) as i32,
    );
    probe.resolution = env_or("SPHERE_RESOLUTION", 16.0);
    probe.pml_wavelengths = env_or("SPHERE_PML", 0.5);
    probe.caustic_margin = env_or("SPHERE_MARGIN", 1.2);
    let exact = sphere::exact_resonance(&probe).unwrap();
    let case =
        twistmode_io::case::Case::from_toml_str(&sphere::case_text(&probe, &exact), &[]).unwrap();
    let (mesh, _) = twistmode::pipeline::build_mesh(&case).unwrap();
    let mut setup = twistmode::pipeline::set_up(&case, &mesh).unwrap();
    let a = 1e-6;
    let k0 = exact.k0a.re / a;
    if let PmlStretch::Radial {
        ref mut profile,
        inner,
        outer,
        ..
    } = setup.pml
    {
        let s_mult = env_or("SPHERE_S", 1.0);
        let add_q = env_or("SPHERE_ADDQ", 0.0);
        profile.strength = profile.strength * s_mult + add_q * outer / (2.0 * exact.q);
        profile.power = env_or("SPHERE_POWER", 2.0);
        let ki = exact.k0a.im.abs() / a;
        println!(
            "pml inner {:.3} outer {:.3} (a) S {:.3} a; margin kr S - ki R = {:.2}",
            inner / a,
            outer / a,
            profile.strength / a,
            k0 * profile.strength - ki * outer
        );
    }
    let problem = SectionProblem::try_new(&mesh, setup).unwrap();
    let system = problem.assemble(f64::from(probe.m)).unwrap();
    let pencil =
        twistmode_eigen::Pencil::try_new(system.stiffness.clone(), system.mass.clone()).unwrap();
    let ek = exact.k0a / a;
    let sigma = ek * ek;
    let opts = twistmode_eigen::SolveOptions {
        count: 4,
        tol: 1e-10,
        static_below: 1e-6 * sigma.norm(),
        ..twistmode_eigen::SolveOptions::default()
    };
    let spectrum = twistmode_eigen::solve_near(&pencil, sigma, &opts).unwrap();
    let mut best: Option<Complex64> = None;
    for p in &spectrum.pairs {
        let k = p.lambda.sqrt() * a;
        let k = if k.re < 0.0 { -k } else { k };
        if best.is_none_or(|b| (b - exact.k0a).norm() > (k - exact.k0a).norm()) {
            best = Some(k);
        }
    }
    let k = best.unwrap();
    let q = k.re / (2.0 * k.im.abs());
    println!(
        "{} res {} pml {} dofs {}: k0a {:.10} exact {:.10} re_err {:.3e} q_err {:.3e} dist {:.3e}",
        probe.name(),
        probe.resolution,
        probe.pml_wavelengths,
        system.stiffness.nrows(),
        k,
        exact.k0a,
        (k.re - exact.k0a.re) / exact.k0a.re,
        (q - exact.q) / exact.q,
        (k - exact.k0a).norm() / exact.k0a.norm()
    );
    // Source: Mie theory (Bohren & Huffman 1983 ch. 4 eq. 4.53) via
    // twistmode_reference::mie_resonance: the nearest pair is the resonance.
    if (k - exact.k0a).norm() >= 1e-2 * exact.k0a.norm() {
        eprintln!("the nearest pair is not the probed resonance");
        std::process::exit(1);
    }
}
