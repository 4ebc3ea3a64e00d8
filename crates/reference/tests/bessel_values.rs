//! Bessel functions against mpmath.
//! Fixture: tools/reference_fixtures.py (mpmath besselj, bessely, besselk at 40 digits).

mod common;

use common::{cplx, fixture, num};
use twistmode_reference::bessel::{bessel_jy, bessel_k, SphericalBessel};

/// Error relative to the local scale of the function: near a zero of J_m,
/// absolute accuracy relative to the envelope is the meaningful measure.
fn scaled_err(a: f64, b: f64, scale: f64) -> f64 {
    (a - b).abs() / scale.max(b.abs())
}

#[test]
fn real_order_bessel_functions_match_mpmath() {
    // Fixture: tools/reference_fixtures.py (mpmath besselj/bessely/besselk, 40 digits)
    let data = fixture("bessel.json");
    let mut worst: f64 = 0.0;
    for case in data["real_order"].as_array().unwrap() {
        let m = case["m"].as_u64().unwrap() as u32;
        let x = num(&case["x"]);
        let jy = bessel_jy(m, x).unwrap();
        let kk = bessel_k(m, x).unwrap();
        // Where J, Y oscillate (x > m) errors are measured against their
        // envelope sqrt(J^2 + Y^2) (near a zero only absolute accuracy means
        // anything); below the turning point each is measured against itself.
        let oscillating = x > f64::from(m);
        let env = if oscillating {
            num(&case["j"]).hypot(num(&case["y"]))
        } else {
            0.0
        };
        let env_p = if oscillating {
            num(&case["jp"]).hypot(num(&case["yp"]))
        } else {
            0.0
        };
        let errs = [
            scaled_err(jy.j, num(&case["j"]), env),
            scaled_err(jy.y, num(&case["y"]), env),
            scaled_err(jy.j_prime, num(&case["jp"]), env_p),
            scaled_err(jy.y_prime, num(&case["yp"]), env_p),
            scaled_err(kk.k, num(&case["k"]), 0.0),
            scaled_err(kk.k_prime, num(&case["kp"]), 0.0),
        ];
        for (i, e) in errs.iter().enumerate() {
            assert!(*e < 1e-12, "m = {m}, x = {x}, quantity {i}: rel err {e:e}");
            worst = worst.max(*e);
        }
    }
    println!("worst relative error of J, Y, J', Y', K, K': {worst:e}");
}

#[test]
fn spherical_bessel_functions_of_complex_argument_match_mpmath() {
    // Fixture: tools/reference_fixtures.py (mpmath besselj(l + 1/2) sqrt(pi / 2z), 40 digits)
    let data = fixture("bessel.json");
    let mut worst: f64 = 0.0;
    for case in data["spherical"].as_array().unwrap() {
        let l = case["l"].as_u64().unwrap() as u32;
        let z = cplx(&case["z"]);
        let sb = SphericalBessel::try_new(l, z).unwrap();
        for (got, key) in [(sb.j(l), "j"), (sb.y(l), "y"), (sb.h1(l), "h1")] {
            let want = cplx(&case[key]);
            let err = (got - want).norm() / want.norm();
            assert!(
                err < 1e-12,
                "l = {l}, z = {z}, {key}: got {got}, want {want}, rel err {err:e}"
            );
            worst = worst.max(err);
        }
    }
    println!("worst relative error of spherical j, y, h1: {worst:e}");
}

#[test]
fn first_bessel_zeros_agree_with_published_tables() {
    // Source: Abramowitz & Stegun, table 9.5 (values from memory, also in the
    // mpmath fixture): j_{0,1} = 2.404825557695773, j'_{1,1} = 1.841183781340659,
    // j_{1,1} = 3.831705970207512.
    use twistmode_reference::cavity::bessel_j_zeros;
    let j0 = bessel_j_zeros(0, false, 3.0).unwrap();
    assert!((j0[0] - 2.404_825_557_695_773).abs() < 1e-14, "{}", j0[0]);
    let jp1 = bessel_j_zeros(1, true, 2.0).unwrap();
    assert!((jp1[0] - 1.841_183_781_340_659).abs() < 1e-14, "{}", jp1[0]);
    let j1 = bessel_j_zeros(1, false, 4.0).unwrap();
    assert!((j1[0] - 3.831_705_970_207_512).abs() < 1e-14, "{}", j1[0]);
}
