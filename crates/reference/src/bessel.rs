//! Bessel functions used by the reference solutions.
//!
//! * Real argument, integer order: `J_m`, `Y_m` and their derivatives
//!   ([`bessel_jy`]), and the modified `K_m`, `K_m'` ([`bessel_k`]). These wrap
//!   the `puruspe` crate (Steed's continued fractions CF1/CF2 and Temme's series,
//!   as in Press et al., Numerical Recipes, 3rd ed., sec. 6.6), which is accurate
//!   to a few ulp away from zeros; the tests compare against mpmath.
//! * Complex argument, spherical: `j_l`, `y_l`, `h_l^(1) = j_l + i y_l` and the
//!   Riccati-Bessel functions `psi_l(z) = z j_l(z)`, `xi_l(z) = z h_l^(1)(z)`
//!   ([`SphericalBessel`]). No maintained Rust crate offers these, so they are
//!   written here:
//!   - `j_l` by downward recurrence of the ratios `rho_k = j_k / j_(k-1)`
//!     (Miller's algorithm in ratio form,
//!     `rho_k = 1 / ((2k+1)/z - rho_(k+1))`, started far above the turning
//!     point `k ~ |z|`), normalised by the exact `j_0 = sin z / z` or
//!     `j_1 = sin z / z^2 - cos z / z`, whichever is larger in modulus;
//!   - `y_l` by upward recurrence `y_(k+1) = (2k+1)/z y_k - y_(k-1)` from the
//!     exact `y_0 = -cos z / z`, `y_1 = -cos z / z^2 - sin z / z`, stable
//!     because `y_l` is the dominant solution.
//!
//!   Keeping `j_l` and `y_l` separate (instead of recurring `h_l` upward) keeps
//!   the tiny real part of `h_l` for `|z| < l` accurate, and with it the
//!   Wronskian that sets the radiative width of high-Q Mie resonances.
//!   Recurrence: DLMF 10.51.1; explicit low orders: DLMF 10.49.3, 10.49.4.

use num_complex::Complex64;

use crate::ReferenceError;

/// Largest real argument accepted by [`bessel_jy`] (the continued fraction
/// CF1 needs about `x` terms, and `puruspe` stops at 10 000).
pub const MAX_REAL_ARGUMENT: f64 = 5.0e3;

/// `J_m(x)`, `Y_m(x)` and their derivatives at one real argument.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CylinderBessel {
    /// `J_m(x)`.
    pub j: f64,
    /// `Y_m(x)`.
    pub y: f64,
    /// `J_m'(x)`.
    pub j_prime: f64,
    /// `Y_m'(x)`.
    pub y_prime: f64,
}

/// `K_m(x)` and its derivative at one real argument.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ModifiedBesselK {
    /// `K_m(x)`.
    pub k: f64,
    /// `K_m'(x)`.
    pub k_prime: f64,
}

/// Bessel functions of the first and second kind, `J_m(x)`, `Y_m(x)`, and
/// their derivatives, integer order `m >= 0`, real `0 < x <= 5000`.
///
/// Solutions of `x^2 w'' + x w' + (x^2 - m^2) w = 0` (DLMF 10.2.1).
pub fn bessel_jy(order: u32, x: f64) -> Result<CylinderBessel, ReferenceError> {
    if !(x > 0.0 && x <= MAX_REAL_ARGUMENT) {
        return Err(ReferenceError::ArgumentOutOfDomain {
            function: "bessel_jy",
            x,
            range: "0 < x <= 5000",
        });
    }
    let (j, y, j_prime, y_prime) = puruspe::besseljy(f64::from(order), x);
    Ok(CylinderBessel {
        j,
        y,
        j_prime,
        y_prime,
    })
}

/// Modified Bessel function of the second kind `K_m(x)` and `K_m'(x)`,
/// integer order `m >= 0`, real `0 < x <= 700` (beyond that `K_m` underflows).
///
/// Decaying solution of `x^2 w'' + x w' - (x^2 + m^2) w = 0` (DLMF 10.25.1).
pub fn bessel_k(order: u32, x: f64) -> Result<ModifiedBesselK, ReferenceError> {
    if !(x > 0.0 && x <= 700.0) {
        return Err(ReferenceError::ArgumentOutOfDomain {
            function: "bessel_k",
            x,
            range: "0 < x <= 700",
        });
    }
    let (_i, k, _i_prime, k_prime) = puruspe::besselik(f64::from(order), x);
    Ok(ModifiedBesselK { k, k_prime })
}

/// Spherical Bessel functions `j_l(z)`, `y_l(z)` of one complex argument for
/// all orders `0..=l_max` (see the module docs for the algorithm).
///
/// Valid for `0 < |z| <= 5000` and `|Im z| <= 300`. `h_l^(1) = j_l + i y_l` is
/// formed by addition, so it loses relative accuracy where it is exponentially
/// small (`Im z >> 1`); Mie resonances live at `Im z <= 0`, where it does not.
#[derive(Debug, Clone, PartialEq)]
pub struct SphericalBessel {
    z: Complex64,
    j: Vec<Complex64>,
    y: Vec<Complex64>,
}

impl SphericalBessel {
    /// Computes `j_l(z)` and `y_l(z)` for `l = 0..=l_max`.
    pub fn try_new(l_max: u32, z: Complex64) -> Result<Self, ReferenceError> {
        let modulus = z.norm();
        if !(modulus > 0.0 && modulus <= MAX_REAL_ARGUMENT && z.im.abs() <= 300.0) {
            return Err(ReferenceError::ArgumentOutOfDomain {
                function: "SphericalBessel::try_new",
                x: modulus,
                range: "0 < |z| <= 5000, |Im z| <= 300",
            });
        }
        let l_max = l_max as usize;
        let (sin, cos) = (z.sin(), z.cos());
        let inv_z = z.inv();
        let j0 = sin * inv_z;
        let j1_exact = (sin * inv_z - cos) * inv_z;

        // Downward ratio recurrence, started well above max(l_max, |z|).
        let start =
            l_max.max(modulus.ceil() as usize) + 30 + (15.0 * modulus.cbrt()).ceil() as usize;
        let mut ratio = vec![Complex64::new(0.0, 0.0); l_max + 2];
        let mut rho_next = Complex64::new(0.0, 0.0);
        for k in (1..=start).rev() {
            let mut denominator = Complex64::new((2 * k + 1) as f64, 0.0) * inv_z - rho_next;
            if denominator.norm() == 0.0 {
                denominator = Complex64::new(1e-300, 0.0);
            }
            let rho = denominator.inv();
            if k <= l_max + 1 {
                ratio[k] = rho;
            }
            rho_next = rho;
        }
        let mut j = vec![Complex64::new(0.0, 0.0); l_max + 1];
        j[0] = j0;
        if l_max >= 1 {
            // Normalise on the larger of j_0, j_1: the smaller may sit near a zero.
            j[1] = if j1_exact.norm() > j0.norm() {
                j1_exact
            } else {
                j0 * ratio[1]
            };
            for k in 2..=l_max {
                j[k] = j[k - 1] * ratio[k];
            }
        }

        let mut y = vec![Complex64::new(0.0, 0.0); l_max + 1];
        y[0] = -cos * inv_z;
        if l_max >= 1 {
            y[1] = -(cos * inv_z + sin) * inv_z;
            for k in 1..l_max {
                y[k + 1] = Complex64::new((2 * k + 1) as f64, 0.0) * inv_z * y[k] - y[k - 1];
            }
        }
        Ok(Self { z, j, y })
    }

    /// The argument `z`.
    pub fn argument(&self) -> Complex64 {
        self.z
    }

    /// Highest order held.
    pub fn l_max(&self) -> u32 {
        (self.j.len() - 1) as u32
    }

    /// `j_l(z)`. Panics if `l > l_max`.
    pub fn j(&self, l: u32) -> Complex64 {
        self.j[l as usize]
    }

    /// `y_l(z)`. Panics if `l > l_max`.
    pub fn y(&self, l: u32) -> Complex64 {
        self.y[l as usize]
    }

    /// `h_l^(1)(z) = j_l(z) + i y_l(z)` (outgoing for `exp(-i omega t)`).
    pub fn h1(&self, l: u32) -> Complex64 {
        self.j(l) + Complex64::i() * self.y(l)
    }

    /// Riccati-Bessel `psi_l(z) = z j_l(z)` (Bohren & Huffman sec. 4.4).
    pub fn psi(&self, l: u32) -> Complex64 {
        self.z * self.j(l)
    }

    /// `psi_l'(z) = z j_(l-1)(z) - l j_l(z)` (and `cos z` for `l = 0`).
    pub fn psi_prime(&self, l: u32) -> Complex64 {
        if l == 0 {
            self.z.cos()
        } else {
            self.z * self.j(l - 1) - f64::from(l) * self.j(l)
        }
    }

    /// Riccati-Bessel `xi_l(z) = z h_l^(1)(z)` (Bohren & Huffman sec. 4.4).
    pub fn xi(&self, l: u32) -> Complex64 {
        self.z * self.h1(l)
    }

    /// `xi_l'(z) = z h_(l-1)(z) - l h_l(z)` (and `-i exp(iz)`'s derivative,
    /// `exp(iz)`, for `l = 0`).
    pub fn xi_prime(&self, l: u32) -> Complex64 {
        if l == 0 {
            (Complex64::i() * self.z).exp()
        } else {
            self.z * self.h1(l - 1) - f64::from(l) * self.h1(l)
        }
    }
}
