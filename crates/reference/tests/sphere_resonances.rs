//! Mie resonances of a dielectric sphere against an independent mpmath computation.
//! Fixture: tools/reference_fixtures.py (mpmath findroot, 40 digits, on the
//! denominators of Bohren & Huffman eq. 4.53; radial order checked there by
//! the argument principle).

mod common;

use common::{cplx, fixture, num, rel_err};
use num_complex::Complex64;
use twistmode_reference::sphere::{
    airy_ai_zero, lam_leung_young_position, mie_resonance, MieSphere, SpherePolarization,
};

fn pol(name: &str) -> SpherePolarization {
    match name {
        "TE" => SpherePolarization::Te,
        "TM" => SpherePolarization::Tm,
        other => panic!("unknown polarisation {other}"),
    }
}

#[test]
fn airy_zeros_match_mpmath() {
    // Fixture: tools/reference_fixtures.py (mpmath.airyaizero); A&S table 10.13.
    let data = fixture("sphere.json");
    for (i, z) in data["airy_zeros"].as_array().unwrap().iter().enumerate() {
        let p = i as u32 + 1;
        assert!(rel_err(airy_ai_zero(p), num(z)) < 1e-15, "a_{p}");
    }
    // beyond the table: the asymptotic expansion (A&S 10.4.94)
    let a10 = num(&data["airy_zeros"][9]);
    assert!(airy_ai_zero(11) > a10 + 0.8 && airy_ai_zero(11) < a10 + 0.9);
}

#[test]
fn mie_resonances_match_mpmath() {
    // Fixture: tools/reference_fixtures.py; Bohren & Huffman eq. 4.53.
    let data = fixture("sphere.json");
    let (mut worst_re, mut worst_im) = (0.0f64, 0.0f64);
    let mut checked = 0;
    for case in data["cases"].as_array().unwrap() {
        let n = cplx(&case["n"]);
        let n_out = num(&case["n_out"]);
        let sphere = MieSphere::try_new(n, n_out).unwrap();
        let (l, p) = (
            case["l"].as_u64().unwrap() as u32,
            case["p"].as_u64().unwrap() as u32,
        );
        let polarization = pol(case["pol"].as_str().unwrap());
        let want = cplx(&case["k0a"]);
        let got = mie_resonance(&sphere, l, p, polarization)
            .unwrap_or_else(|e| panic!("n = {n}, {polarization:?} l = {l} p = {p}: {e}"));
        let err_re = rel_err(got.k0a.re, want.re);
        let err_im = rel_err(got.k0a.im, want.im);
        let err_q = rel_err(got.q, num(&case["q"]));
        assert!(
            err_re < 1e-12 && err_im < 1e-9 && err_q < 1e-9,
            "n = {n}, {polarization:?} l = {l} p = {p}: got {} want {want} (Q {} vs {})",
            got.k0a,
            got.q,
            num(&case["q"])
        );
        assert!(got.k0a.im < 0.0, "radiating modes have Im k0 < 0");
        worst_re = worst_re.max(err_re);
        worst_im = worst_im.max(err_im);
        checked += 1;
    }
    assert!(checked >= 90);
    println!("{checked} resonances: worst rel err Re k0a {worst_re:e}, Im k0a {worst_im:e}");
}

#[test]
fn lam_leung_young_formula_approaches_exact_positions() {
    // Lam, Leung & Young, JOSA B 9, 1585 (1992): error O(nu^-1) in m x.
    // Python evaluates the same formula independently (key "lly").
    let data = fixture("sphere.json");
    for case in data["cases"].as_array().unwrap() {
        if case["lly"].is_null() {
            continue;
        }
        let n = num(&case["n"][0]);
        let (l, p) = (
            case["l"].as_u64().unwrap() as u32,
            case["p"].as_u64().unwrap() as u32,
        );
        let polarization = pol(case["pol"].as_str().unwrap());
        let lly = lam_leung_young_position(l, p, n, polarization);
        assert!(
            rel_err(lly, num(&case["lly"])) < 1e-13,
            "formula differs from the script's"
        );
        let exact = cplx(&case["k0a"]).re;
        let nu = f64::from(l) + 0.5;
        // Asymptotic in nu: the remainder is O(1/nu) in m x. Checked for the
        // fundamental radial order at l >= 20, where the expansion is meant to hold.
        if l >= 20 && p == 1 {
            let err = (n * (lly - exact)).abs();
            assert!(
                err < 4.0 / nu,
                "n = {n} {polarization:?} l = {l} p = {p}: |m dx| = {err}"
            );
        }
    }
}

#[test]
fn bad_input_is_refused() {
    assert!(MieSphere::try_new(Complex64::new(0.9, 0.0), 1.0).is_err());
    let sphere = MieSphere::try_new(Complex64::new(2.0, 0.0), 1.0).unwrap();
    assert!(mie_resonance(&sphere, 0, 1, SpherePolarization::Te).is_err());
    assert!(mie_resonance(&sphere, 3, 0, SpherePolarization::Tm).is_err());
}
