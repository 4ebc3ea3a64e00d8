//! Derived figures of one eigenvalue: wavenumber, frequency, Q.
//!
//! Convention `exp(-i omega t)`: a radiating (decaying) mode has `Im omega < 0`.
use num_complex::Complex64;

/// Speed of light in vacuum, m/s (exact by the SI definition of the metre).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;

/// The vacuum wavenumber `k0 = sqrt(lambda)` of an eigenvalue `lambda = k0^2`
/// (1/m^2), on the branch with `Re k0 >= 0`.
pub fn k0_from_eigenvalue(lambda: Complex64) -> Complex64 {
    let k = lambda.sqrt();
    if k.re < 0.0 {
        -k
    } else {
        k
    }
}

/// Complex frequency `omega / (2 pi) = c k0 / (2 pi)`, Hz.
pub fn frequency_hz(k0: Complex64) -> Complex64 {
    k0 * (SPEED_OF_LIGHT / (2.0 * std::f64::consts::PI))
}

/// Quality factor `Q = Re k0 / (2 |Im k0|)` (infinite for a real `k0`).
pub fn quality_factor(k0: Complex64) -> f64 {
    if k0.im == 0.0 {
        f64::INFINITY
    } else {
        k0.re / (2.0 * k0.im.abs())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn frequency_of_one_metre_wavelength() {
        // Definition: f = c / lambda0, k0 = 2 pi / lambda0 (common practice).
        let k0 = Complex64::new(2.0 * std::f64::consts::PI, 0.0);
        let f = frequency_hz(k0);
        assert!((f.re - SPEED_OF_LIGHT).abs() < 1e-6);
        assert_eq!(quality_factor(k0), f64::INFINITY);
    }

    #[test]
    fn q_from_decay() {
        // Q = omega' / (2 |omega''|): a field decaying as exp(-omega'' t) loses
        // energy at rate 2|omega''| (common practice).
        let k0 = Complex64::new(1000.0, -0.5);
        assert!((quality_factor(k0) - 1000.0).abs() < 1e-12);
        let lambda = k0 * k0;
        let back = k0_from_eigenvalue(lambda);
        assert!((back - k0).norm() < 1e-9);
    }
}
