//! Metal cavity resonances against an independent mpmath computation.
//! Fixture: tools/reference_fixtures.py (mpmath besseljzero for the cylinder,
//! mpmath findroot on the coaxial cross-product equations).
//! Source of the equations: Pozar, Microwave Engineering, sec. 6.3.

mod common;

use common::{fixture, num, rel_err};
use serde_json::Value;
use twistmode_reference::cavity::{
    bessel_j_zeros, coaxial_modes, cylinder_modes, uniaxial_cylinder_modes, CavityMode,
    CavityModeKind, Filling,
};

fn kind_of(name: &str) -> CavityModeKind {
    match name {
        "TE" => CavityModeKind::Te,
        "TM" => CavityModeKind::Tm,
        "TEM" => CavityModeKind::Tem,
        other => panic!("unknown kind {other}"),
    }
}

/// Same labelled modes, same wavenumbers (order may differ only within
/// exactly degenerate pairs such as TE_01p / TM_11p).
fn compare(got: &[CavityMode], want: &Value, scale: f64) -> f64 {
    let want = want.as_array().unwrap();
    assert_eq!(got.len(), want.len());
    let mut worst: f64 = 0.0;
    for (i, w) in want.iter().enumerate() {
        let (kind, m, n, p) = (
            kind_of(w["kind"].as_str().unwrap()),
            w["m"].as_u64().unwrap() as u32,
            w["n"].as_u64().unwrap() as u32,
            w["p"].as_u64().unwrap() as u32,
        );
        let mode = got
            .iter()
            .find(|g| g.kind == kind && g.m == m && g.n == n && g.p == p)
            .unwrap_or_else(|| panic!("mode {kind:?} {m}{n}{p} missing from {got:?}"));
        let k = num(&w["k"]);
        let err = rel_err(mode.k0 * scale, k);
        assert!(
            err < 1e-12,
            "{kind:?} {m}{n}{p}: k0 = {} vs {k}, rel err {err:e}",
            mode.k0
        );
        // position in the list agrees up to exact degeneracies
        assert!(rel_err(got[i].k0 * scale, k) < 1e-12, "list position {i}");
        assert_eq!(mode.degeneracy, if m == 0 { 1 } else { 2 });
        worst = worst.max(err);
    }
    worst
}

#[test]
fn bessel_zeros_match_mpmath_besseljzero() {
    // Fixture: tools/reference_fixtures.py (mpmath.besseljzero, 40 digits)
    let data = fixture("cavity.json");
    for (key, derivative) in [("j_zeros", false), ("jp_zeros", true)] {
        for row in data["bessel_zeros"][key].as_array().unwrap() {
            let (m, n, x) = (
                row[0].as_u64().unwrap() as u32,
                row[1].as_u64().unwrap() as usize,
                num(&row[2]),
            );
            let zeros = bessel_j_zeros(m, derivative, x + 1.0).unwrap();
            assert_eq!(
                zeros.len(),
                n,
                "{key} m = {m}: zeros below {x} + 1: {zeros:?}"
            );
            assert!(
                rel_err(zeros[n - 1], x) < 1e-14,
                "{key} m = {m} n = {n}: {} vs {x}",
                zeros[n - 1]
            );
        }
    }
}

#[test]
fn cylinder_cavity_lowest_fifteen_modes_match_mpmath() {
    // Fixture: tools/reference_fixtures.py (mpmath besseljzero); Pozar eqs. 6.48, 6.51
    let data = fixture("cavity.json");
    for case in data["cylinder"].as_array().unwrap() {
        let (a, d) = (num(&case["a"]), num(&case["d"]));
        let modes = cylinder_modes(a, d, Filling::VACUUM, 15).unwrap();
        let worst = compare(&modes, &case["modes"], 1.0);
        println!("cylinder a = {a}, d = {d}: worst rel err {worst:e}");
    }
}

#[test]
fn coaxial_cavity_lowest_fifteen_modes_match_mpmath() {
    // Fixture: tools/reference_fixtures.py (mpmath findroot on the cross products)
    let data = fixture("cavity.json");
    for case in data["coaxial"].as_array().unwrap() {
        let (a, b, d) = (num(&case["a"]), num(&case["b"]), num(&case["d"]));
        let modes = coaxial_modes(a, b, d, Filling::VACUUM, 15).unwrap();
        let worst = compare(&modes, &case["modes"], 1.0);
        println!("coaxial a = {a}, b = {b}, d = {d}: worst rel err {worst:e}");
    }
}

#[test]
fn dielectric_filling_scales_k0_by_one_over_refractive_index() {
    // Source: Pozar sec. 6.3 (k = k0 sqrt(eps_r mu_r) in a filled cavity); common practice.
    let data = fixture("cavity.json");
    let case = &data["cylinder"][0];
    let (a, d) = (num(&case["a"]), num(&case["d"]));
    let filling = Filling::try_new(2.25, 1.0).unwrap();
    let modes = cylinder_modes(a, d, filling, 15).unwrap();
    let worst = compare(&modes, &case["modes"], 1.5);
    assert!(worst < 1e-12);
    // TM_010 frequency of the vacuum cavity: c x_01 / (2 pi a) (Pozar eq. 6.52).
    let vac = cylinder_modes(a, d, Filling::VACUUM, 3).unwrap();
    let tm010 = vac
        .iter()
        .find(|m| m.kind == CavityModeKind::Tm && m.p == 0)
        .unwrap();
    let f = 299_792_458.0 * 2.404_825_557_695_773 / (2.0 * std::f64::consts::PI * a);
    assert!(rel_err(tm010.frequency(), f) < 1e-13);
}

#[test]
fn invalid_geometry_is_refused() {
    assert!(coaxial_modes(0.01, 0.005, 0.02, Filling::VACUUM, 5).is_err());
    assert!(cylinder_modes(-1.0, 0.02, Filling::VACUUM, 5).is_err());
    assert!(Filling::try_new(0.0, 1.0).is_err());
}

#[test]
fn uniaxial_filling_reduces_to_isotropic_and_splits_te_from_tm() {
    // Isotropic limit: eps_perp = eps_par = 2.1 must give the isotropic cavity's
    // k0 = k / sqrt(2.1) (Pozar sec. 6.3), mode for mode.
    let (a, d) = (12e-3, 20e-3);
    let iso = cylinder_modes(a, d, Filling::try_new(2.1, 1.0).unwrap(), 15).unwrap();
    let uni = uniaxial_cylinder_modes(a, d, 2.1, 2.1, 15).unwrap();
    for (u, i) in uni.iter().zip(&iso) {
        assert_eq!((u.kind, u.m, u.n, u.p), (i.kind, i.m, i.n, i.p));
        assert!((u.k0 / i.k0 - 1.0).abs() < 1e-14);
    }
    // Anisotropic: TE modes see eps_perp only; TM_mn0 (no axial variation) sees eps_par
    // only, so its k0 is the cut-off over sqrt(eps_par) (extraordinary wave with k_z = 0).
    let (perp, par) = (9.0, 11.5);
    let modes = uniaxial_cylinder_modes(a, d, perp, par, 20).unwrap();
    assert!(modes.windows(2).all(|w| w[0].k0 <= w[1].k0));
    for mode in &modes {
        let kz = f64::from(mode.p) * std::f64::consts::PI / d;
        let expected = match mode.kind {
            CavityModeKind::Te => (mode.k_cutoff.powi(2) + kz * kz).sqrt() / perp.sqrt(),
            _ => (mode.k_cutoff.powi(2) / par + kz * kz / perp).sqrt(),
        };
        assert!((mode.k0 / expected - 1.0).abs() < 1e-14);
    }
    let tm010 = modes
        .iter()
        .find(|m| m.kind == CavityModeKind::Tm && (m.m, m.n, m.p) == (0, 1, 0))
        .unwrap();
    // x_01 = 2.404825557695773 (A&S Table 9.5, from memory; checked by the mpmath
    // fixture of bessel_zeros_match_mpmath_besseljzero).
    assert!((tm010.k0 - 2.404825557695773 / a / par.sqrt()).abs() < 1e-9 * tm010.k0);
}
