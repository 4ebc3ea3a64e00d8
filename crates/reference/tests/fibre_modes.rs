//! Exact vector modes of a step-index fibre against an independent mpmath computation.
//! Fixture: tools/reference_fixtures.py (mpmath besselj/besselk, 40 digits;
//! the script solves the hybrid equation in its product form and labels HE/EH
//! by the sign branch). Equations: Snyder & Love, Optical Waveguide Theory, ch. 12.

mod common;

use common::{fixture, num, rel_err};
use twistmode_reference::fibre::{FibreModeKind, StepIndexFibre};

fn kind_of(name: &str) -> FibreModeKind {
    match name {
        "TE" => FibreModeKind::Te,
        "TM" => FibreModeKind::Tm,
        "HE" => FibreModeKind::He,
        "EH" => FibreModeKind::Eh,
        other => panic!("unknown kind {other}"),
    }
}

#[test]
fn all_guided_modes_match_mpmath() {
    // Fixture: tools/reference_fixtures.py; Snyder & Love Table 12-3.
    let data = fixture("fibre.json");
    for case in data["cases"].as_array().unwrap() {
        let fibre =
            StepIndexFibre::try_new(num(&case["a"]), num(&case["n1"]), num(&case["n2"])).unwrap();
        let k0 = num(&case["k0"]);
        assert!(rel_err(fibre.v_number(k0), num(&case["v"])) < 1e-14);
        let got = fibre.guided_modes(k0).unwrap();
        let want = case["modes"].as_array().unwrap();
        let labels: Vec<String> = got.iter().map(|m| m.label()).collect();
        assert_eq!(
            got.len(),
            want.len(),
            "V = {}: got {labels:?}",
            num(&case["v"])
        );
        let (mut worst_u, mut worst_n) = (0.0f64, 0.0f64);
        for w in want {
            let (kind, nu, m) = (
                kind_of(w["kind"].as_str().unwrap()),
                w["nu"].as_u64().unwrap() as u32,
                w["m"].as_u64().unwrap() as u32,
            );
            let mode = got
                .iter()
                .find(|g| g.kind == kind && g.nu == nu && g.m == m)
                .unwrap_or_else(|| panic!("{kind:?}{nu}{m} missing; have {labels:?}"));
            let (eu, en) = (
                rel_err(mode.u, num(&w["u"])),
                rel_err(mode.n_eff, num(&w["n_eff"])),
            );
            assert!(
                eu < 1e-10 && en < 1e-13,
                "{}: U {} vs {}, n_eff {} vs {}",
                mode.label(),
                mode.u,
                num(&w["u"]),
                mode.n_eff,
                num(&w["n_eff"])
            );
            assert!(mode.n_eff > fibre.n_cladding && mode.n_eff < fibre.n_core);
            worst_u = worst_u.max(eu);
            worst_n = worst_n.max(en);
        }
        println!(
            "V = {:.4}: {} modes, worst rel err U {worst_u:e}, n_eff {worst_n:e}",
            num(&case["v"]),
            got.len()
        );
    }
}

#[test]
fn fibre_below_first_cutoff_guides_only_he11() {
    // Source: Snyder & Love sec. 12-10 (single-mode for V < 2.405, the first
    // zero of J_0, where TE01, TM01 and HE21 reach cut-off); value from memory.
    let fibre = StepIndexFibre::try_new(4.0e-6, 1.46, 1.45).unwrap();
    let na = (1.46f64.powi(2) - 1.45f64.powi(2)).sqrt();
    let k0_below = 2.39 / (4.0e-6 * na);
    let modes = fibre.guided_modes(k0_below).unwrap();
    assert_eq!(modes.len(), 1);
    assert_eq!(modes[0].label(), "HE11");
    // TE01 cut-off is exactly J_0(V) = 0 (Snyder & Love Table 12-4)
    let k0_above = 2.42 / (4.0e-6 * na);
    let te01 = fibre.n_eff(FibreModeKind::Te, 0, 1, k0_above).unwrap();
    assert!(te01.is_some());
}

#[test]
fn k0_for_beta_inverts_n_eff() {
    // Consistency of the inverse with the forward map (values from the mpmath fixture).
    let data = fixture("fibre.json");
    let case = &data["cases"][1];
    let fibre =
        StepIndexFibre::try_new(num(&case["a"]), num(&case["n1"]), num(&case["n2"])).unwrap();
    let k0 = num(&case["k0"]);
    for w in case["modes"].as_array().unwrap().iter().take(6) {
        let (kind, nu, m) = (
            kind_of(w["kind"].as_str().unwrap()),
            w["nu"].as_u64().unwrap() as u32,
            w["m"].as_u64().unwrap() as u32,
        );
        let beta = k0 * num(&w["n_eff"]);
        let back = fibre.k0_for_beta(kind, nu, m, beta).unwrap();
        assert!(
            rel_err(back, k0) < 1e-12,
            "{kind:?}{nu}{m}: k0 {back} vs {k0}"
        );
    }
    // a mode that is cut off at every k0 compatible with this beta
    let beta = k0 * 1.4501;
    assert!(fibre.k0_for_beta(FibreModeKind::He, 30, 1, beta).is_err());
}
