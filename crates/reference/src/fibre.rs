//! Exact vector modes of a step-index fibre (circular core in an infinite
//! cladding), without the weak-guidance approximation.
//!
//! Core radius `a`, core index `n1`, cladding index `n2 < n1`, vacuum
//! wavenumber `k0`, propagation constant `beta = k0 n_eff` with
//! `n2 < n_eff < n1`. With `U = a sqrt(k0^2 n1^2 - beta^2)`,
//! `W = a sqrt(beta^2 - k0^2 n2^2)`, `V^2 = U^2 + W^2`, the eigenvalue
//! equations are (Snyder & Love, Optical Waveguide Theory, 1983, ch. 12,
//! Table 12-3; also Okamoto, Fundamentals of Optical Waveguides, sec. 3.2):
//!
//! ```text
//! TE_0m :  J1(U) / (U J0(U)) + K1(W) / (W K0(W)) = 0
//! TM_0m :  n1^2 J1(U) / (U J0(U)) + n2^2 K1(W) / (W K0(W)) = 0
//! hybrid:  (eta + kappa)(eta + r kappa) = nu^2 (1/U^2 + 1/W^2)(1/U^2 + r/W^2)
//!          eta = J_nu'(U) / (U J_nu(U)),  kappa = K_nu'(W) / (W K_nu(W)),
//!          r = n2^2 / n1^2,  nu >= 1
//! ```
//!
//! The hybrid equation is a quadratic in `eta`:
//! `eta = -kappa (1 + r) / 2 +- sqrt(kappa^2 (1 - r)^2 / 4 + R)`, `R` the
//! right-hand side. The `+` root gives the EH_num modes, the `-` root the
//! HE_num modes (in the weak-guidance limit `-` becomes
//! `J_(nu-1)(U) / (U J_nu(U)) = K_(nu-1)(W) / (W K_nu(W))`, the HE / LP
//! equation, so HE_11 is the fundamental mode). Each branch is solved for `U`
//! on `(0, V)` after multiplying by `J_nu(U)` (no poles), by scanning for sign
//! changes and refining with Brent's method; `m` counts roots from the
//! smallest `U` (largest `n_eff`). The scan covers `1e-3 V < U < V`; modes
//! with `W < 1e-6 V` (at cut-off) are not reported. Every label is one mode at fixed azimuthal order `nu`; in the
//! lab, HE/EH modes with `nu >= 1` are doubly degenerate (even/odd), TE/TM
//! are single.

use crate::bessel::{bessel_jy, bessel_k};
use crate::roots::brent;
use crate::ReferenceError;

/// Family of a guided mode.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum FibreModeKind {
    /// TE_0m (`E_z = 0`, azimuthal order 0).
    Te,
    /// TM_0m (`H_z = 0`, azimuthal order 0).
    Tm,
    /// Hybrid HE_num (the `-` branch, module docs).
    He,
    /// Hybrid EH_num (the `+` branch).
    Eh,
}

/// A step-index fibre: core radius (m), core and cladding indices.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StepIndexFibre {
    /// Core radius `a`, metres.
    pub core_radius: f64,
    /// Core index `n1`.
    pub n_core: f64,
    /// Cladding index `n2 < n1`.
    pub n_cladding: f64,
}

/// One guided mode at one frequency.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FibreMode {
    /// Family.
    pub kind: FibreModeKind,
    /// Azimuthal order `nu` (0 for TE/TM).
    pub nu: u32,
    /// Radial order `m >= 1`.
    pub m: u32,
    /// Core parameter `U = a sqrt(k0^2 n1^2 - beta^2)`.
    pub u: f64,
    /// Cladding parameter `W = a sqrt(beta^2 - k0^2 n2^2)`.
    pub w: f64,
    /// Effective index `n_eff = beta / k0`.
    pub n_eff: f64,
    /// Propagation constant `beta`, 1/m.
    pub beta: f64,
}

impl FibreMode {
    /// Label such as `HE11`, `TE01`, `EH21`.
    pub fn label(&self) -> String {
        label(self.kind, self.nu, self.m)
    }
}

fn label(kind: FibreModeKind, nu: u32, m: u32) -> String {
    let name = match kind {
        FibreModeKind::Te => "TE",
        FibreModeKind::Tm => "TM",
        FibreModeKind::He => "HE",
        FibreModeKind::Eh => "EH",
    };
    format!("{name}{nu}{m}")
}

/// Number of samples of `U` per unit of `V` in the bracketing scan (roots of
/// one branch are about `pi` apart, so 40 per unit is ample), at least 400.
const SAMPLES_PER_V: f64 = 40.0;

impl StepIndexFibre {
    /// A fibre with `core_radius > 0` and `n_core > n_cladding >= 1`... any
    /// `n_cladding > 0` is accepted.
    pub fn try_new(core_radius: f64, n_core: f64, n_cladding: f64) -> Result<Self, ReferenceError> {
        if !(core_radius.is_finite() && core_radius > 0.0) {
            return Err(ReferenceError::InvalidParameter {
                name: "core_radius",
                value: core_radius,
                reason: "must be positive and finite",
            });
        }
        if !(n_cladding.is_finite()
            && n_cladding > 0.0
            && n_core.is_finite()
            && n_core > n_cladding)
        {
            return Err(ReferenceError::InvalidParameter {
                name: "n_core",
                value: n_core,
                reason: "need n_core > n_cladding > 0",
            });
        }
        Ok(Self {
            core_radius,
            n_core,
            n_cladding,
        })
    }

    /// Normalised frequency `V = k0 a sqrt(n1^2 - n2^2)`.
    pub fn v_number(&self, k0: f64) -> f64 {
        k0 * self.core_radius * (self.n_core.powi(2) - self.n_cladding.powi(2)).sqrt()
    }

    /// The eigenvalue function of one family and order at `U` (with
    /// `W = sqrt(V^2 - U^2)`), scaled to have no poles on `0 < U < V`:
    /// TE: `W J1(U) + U J0(U) K1(W)/K0(W)`, TM: the same with `n1^2`, `n2^2`
    /// weights, hybrid: `J_nu'(U)/U - J_nu(U) eta_+-` (module docs).
    pub fn characteristic(
        &self,
        kind: FibreModeKind,
        nu: u32,
        u: f64,
        v: f64,
    ) -> Result<f64, ReferenceError> {
        let w = (v * v - u * u).sqrt();
        let (n1s, n2s) = (self.n_core.powi(2), self.n_cladding.powi(2));
        match kind {
            FibreModeKind::Te | FibreModeKind::Tm => {
                let (j0, j1) = (bessel_jy(0, u)?.j, bessel_jy(1, u)?.j);
                let k0 = bessel_k(0, w)?.k;
                let k1 = bessel_k(1, w)?.k;
                let (c1, c2) = if kind == FibreModeKind::Te {
                    (1.0, 1.0)
                } else {
                    (n1s, n2s)
                };
                Ok(c1 * w * j1 + c2 * u * j0 * (k1 / k0))
            }
            FibreModeKind::He | FibreModeKind::Eh => {
                let jb = bessel_jy(nu, u)?;
                let kb = bessel_k(nu, w)?;
                let r = n2s / n1s;
                let kappa = kb.k_prime / (w * kb.k);
                let nus = f64::from(nu).powi(2);
                let rhs = nus * (1.0 / (u * u) + 1.0 / (w * w)) * (1.0 / (u * u) + r / (w * w));
                let root = (kappa * kappa * (1.0 - r).powi(2) / 4.0 + rhs).sqrt();
                let sign = if kind == FibreModeKind::Eh { 1.0 } else { -1.0 };
                let eta = -kappa * (1.0 + r) / 2.0 + sign * root;
                Ok(jb.j_prime / u - jb.j * eta)
            }
        }
    }

    /// Roots `U` of one family and azimuthal order at normalised frequency `v`,
    /// in increasing order (the `m`-th is mode `m`).
    fn branch_roots(
        &self,
        kind: FibreModeKind,
        nu: u32,
        v: f64,
    ) -> Result<Vec<f64>, ReferenceError> {
        let samples = ((SAMPLES_PER_V * v).ceil() as usize).max(400);
        // Near U = 0 both terms of the hybrid function grow like nu / U^2 and
        // cancel to O(1): below U ~ 1e-3 V round-off decides the sign. No
        // guided mode has U that small (HE11 has U -> V as V -> 0).
        let (lo, hi) = (1e-3 * v, v * (1.0 - 5e-13));
        let h = (hi - lo) / samples as f64;
        let mut roots = Vec::new();
        let g = |u: f64| self.characteristic(kind, nu, u, v);
        // Skip leading samples where J_nu(U) underflows to an exact zero: their
        // sign says nothing.
        let mut first = 0;
        let mut g_first = g(lo)?;
        while g_first == 0.0 && first < samples {
            first += 1;
            g_first = g(lo + first as f64 * h)?;
        }
        let (mut u0, mut g0) = (lo + first as f64 * h, g_first);
        for i in first + 1..=samples {
            let u1 = lo + i as f64 * h;
            let g1 = g(u1)?;
            if g0.signum() != g1.signum() && g0.is_finite() && g1.is_finite() {
                let u = brent(g, u0, u1, 0.0)?;
                if (v * v - u * u).sqrt() > 1e-6 * v {
                    roots.push(u);
                }
            }
            (u0, g0) = (u1, g1);
        }
        Ok(roots)
    }

    fn mode_from_u(&self, kind: FibreModeKind, nu: u32, m: u32, u: f64, k0: f64) -> FibreMode {
        let a = self.core_radius;
        let v = self.v_number(k0);
        let n_eff = (self.n_core.powi(2) - (u / (k0 * a)).powi(2)).sqrt();
        FibreMode {
            kind,
            nu,
            m,
            u,
            w: (v * v - u * u).sqrt(),
            n_eff,
            beta: k0 * n_eff,
        }
    }

    /// All guided modes at vacuum wavenumber `k0` (1/m), sorted by decreasing
    /// `n_eff`. Each `(kind, nu, m)` appears once (see module docs on degeneracy).
    pub fn guided_modes(&self, k0: f64) -> Result<Vec<FibreMode>, ReferenceError> {
        if !(k0.is_finite() && k0 > 0.0) {
            return Err(ReferenceError::InvalidParameter {
                name: "k0",
                value: k0,
                reason: "must be positive and finite",
            });
        }
        let v = self.v_number(k0);
        let mut modes = Vec::new();
        for kind in [FibreModeKind::Te, FibreModeKind::Tm] {
            for (i, u) in self.branch_roots(kind, 0, v)?.into_iter().enumerate() {
                modes.push(self.mode_from_u(kind, 0, i as u32 + 1, u, k0));
            }
        }
        // HE_nu1 has no cut-off only for nu = 1; beyond the first nu with no
        // guided hybrid mode at all, higher nu have none either.
        let mut nu = 1;
        loop {
            let before = modes.len();
            for kind in [FibreModeKind::He, FibreModeKind::Eh] {
                for (i, u) in self.branch_roots(kind, nu, v)?.into_iter().enumerate() {
                    modes.push(self.mode_from_u(kind, nu, i as u32 + 1, u, k0));
                }
            }
            if modes.len() == before {
                break;
            }
            nu += 1;
        }
        modes.sort_by(|x, y| y.n_eff.total_cmp(&x.n_eff));
        Ok(modes)
    }

    /// Effective index of mode `(kind, nu, m)` at `k0`, or `None` if it is not
    /// guided there.
    pub fn n_eff(
        &self,
        kind: FibreModeKind,
        nu: u32,
        m: u32,
        k0: f64,
    ) -> Result<Option<f64>, ReferenceError> {
        let nu = if matches!(kind, FibreModeKind::Te | FibreModeKind::Tm) {
            0
        } else {
            nu
        };
        let roots = self.branch_roots(kind, nu, self.v_number(k0))?;
        Ok(m.checked_sub(1)
            .and_then(|i| roots.get(i as usize))
            .map(|&u| self.mode_from_u(kind, nu, m, u, k0).n_eff))
    }

    /// The vacuum wavenumber `k0` at which mode `(kind, nu, m)` has
    /// propagation constant `beta` (1/m): the inverse of `beta(k0)`, as a finite
    /// element solver at fixed `beta` computes it.
    ///
    /// Solves `k0 n_eff(k0) - beta = 0` by Brent's method on
    /// `beta / n1 < k0 < beta / n2`, taking `n_eff = n2` below cut-off (this
    /// keeps the function continuous and increasing). Errors if the mode is
    /// not guided anywhere on that interval.
    pub fn k0_for_beta(
        &self,
        kind: FibreModeKind,
        nu: u32,
        m: u32,
        beta: f64,
    ) -> Result<f64, ReferenceError> {
        if !(beta.is_finite() && beta > 0.0) {
            return Err(ReferenceError::InvalidParameter {
                name: "beta",
                value: beta,
                reason: "must be positive and finite",
            });
        }
        let (lo, hi) = (beta / self.n_core, beta / self.n_cladding);
        let mismatch = |k0: f64| -> Result<f64, ReferenceError> {
            let n = self.n_eff(kind, nu, m, k0)?.unwrap_or(self.n_cladding);
            Ok(k0 * n - beta)
        };
        let hi_inner = hi * (1.0 - 1e-12);
        if mismatch(hi_inner)? <= 0.0 {
            return Err(ReferenceError::ModeNotGuided {
                label: label(kind, nu, m),
                k0: hi,
            });
        }
        brent(mismatch, lo * (1.0 + 1e-12), hi_inner, 0.0)
    }
}
