//! ARPACK cross-check (cargo feature `arpack`, off by default): the same shift-invert
//! operator, driven by ARPACK's implicitly restarted Arnoldi method instead of faer's
//! Krylov-Schur.
//!
//! ```text
//!   ShiftInvert::factor(sigma)      one sparse LU (faer), as in the default path
//!   znaupd  <-> y = (K - sigma M)^{-1} M x     reverse communication, mode 1, "LM"
//!   zneupd                          Ritz values theta and vectors x
//!   lambda = sigma + 1/theta        true residual on the pencil as given
//! ```
//!
//! Only the Krylov method differs from [`crate::solve_near`]: the factorisation, the
//! equilibration, the starting vector, the handling of static pairs and the residual
//! test are shared, so a disagreement between the two paths points at the eigensolver.
//! Unlike the default path, ARPACK's pairs are not polished: their residuals are
//! reported as ARPACK leaves them.
//!
//! The routines come from the system library (`libarpack`, e.g. Debian's
//! `libarpack2-dev`) through the `arpack-ng-sys` bindings (its ISO C interface,
//! `znaupd_c` / `zneupd_c`). ARPACK keeps state between reverse-communication calls in
//! Fortran `SAVE` variables, so it is not reentrant: solves are serialised by a global
//! lock.

use std::ffi::c_int;
use std::sync::Mutex;

use arpack_ng_sys::{__BindgenComplex, znaupd_c, zneupd_c};
use faer::{c64, MatRef};

use crate::memory::{try_vec, try_zeros};
use crate::solve::{normalise, relative_residual, solve_near_with, start_vector};
use crate::{EigenError, EigenPair, Pencil, ShiftInvert, SolveOptions, Spectrum};

/// ARPACK's stopping tolerance: `||r_j|| <= tol |theta_j|` for each Ritz pair of the
/// shift-invert operator (relative to each Ritz value, so at least as strict as the
/// default path's 1e-14 relative to the dominant one).
const ARPACK_RELATIVE_TOL: f64 = 1e-14;

/// Serialises every use of the (non-reentrant) ARPACK routines in this process.
static ARPACK_LOCK: Mutex<()> = Mutex::new(());

/// Eigenpairs of `pencil` nearest `sigma` by ARPACK on the shift-invert operator:
/// the independent check of [`crate::solve_near`] (same options, same [`Spectrum`]).
///
/// `opts.krylov_dim` is ARPACK's `ncv` (default `max(2 count + 1, 20)`, capped at `n`);
/// `opts.max_restarts` is its iteration limit. Needs `count <= n - 2` (ARPACK's bound).
pub fn solve_near_arpack(
    pencil: &Pencil,
    sigma: c64,
    opts: &SolveOptions,
) -> Result<Spectrum, EigenError> {
    solve_near_with(pencil, sigma, opts, |op, sigma, opts| {
        op.solve_near_arpack(sigma, opts)
    })
}

impl ShiftInvert<'_> {
    /// Factorises at `sigma` and finds the nearest pairs with ARPACK (see
    /// [`solve_near_arpack`]); the pencil is used as given (no equilibration).
    pub fn solve_near_arpack(
        &mut self,
        sigma: c64,
        opts: &SolveOptions,
    ) -> Result<Spectrum, EigenError> {
        crate::solve::check_options(self.dim(), opts)?;
        let report = self.factor(sigma)?;
        self.solve_factored_with(sigma, &report, opts, |shift, want| {
            self.arnoldi(shift, want, opts)
        })
    }

    /// One ARPACK run for `want` pairs at the factorised shift; returns the pairs with
    /// true residuals and whether all `want` converged.
    fn arnoldi(
        &self,
        sigma: c64,
        want: usize,
        opts: &SolveOptions,
    ) -> Result<(Vec<EigenPair>, bool), EigenError> {
        let n = self.dim();
        if want + 2 > n {
            return Err(EigenError::InvalidOption(format!(
                "ARPACK needs count <= n - 2, got count {want} for n = {n}"
            )));
        }
        let ncv = opts.krylov_dim.unwrap_or((2 * want + 1).max(20)).min(n);
        if ncv < want + 2 {
            return Err(EigenError::InvalidOption(format!(
                "ARPACK needs krylov_dim >= count + 2, got {ncv} for count {want}"
            )));
        }
        let as_int = |v: usize| {
            c_int::try_from(v).map_err(|_| {
                EigenError::InvalidOption(format!("{v} exceeds ARPACK's 32-bit index range"))
            })
        };
        let (n_c, nev_c, ncv_c) = (as_int(n)?, as_int(want)?, as_int(ncv)?);
        let lworkl = 3 * ncv * ncv + 5 * ncv;
        let lworkl_c = as_int(lworkl)?;
        as_int(n * ncv)?; // ARPACK indexes its n x ncv basis with default integers

        let mut resid = start_vector(n, opts)?;
        let mut v = try_vec(n * ncv, c64::ZERO)?;
        let mut workd = try_vec(3 * n, c64::ZERO)?;
        let mut workl = try_vec(lworkl, c64::ZERO)?;
        let mut rwork = vec![0.0f64; ncv];
        let mut iparam: [c_int; 11] = [0; 11];
        iparam[0] = 1; // exact shifts
        iparam[2] = as_int(opts.max_restarts.max(1))?; // maximum Arnoldi restarts
        iparam[6] = 1; // mode 1: standard problem for the operator we apply
        let mut ipntr: [c_int; 14] = [0; 14];
        let mut ido: c_int = 0;
        let mut info: c_int = 1; // use `resid` as the starting vector
        let (bmat, which) = (c"I", c"LM");

        let _guard = ARPACK_LOCK.lock().unwrap_or_else(|e| e.into_inner());
        let mut x = try_zeros::<c64>(n, 1)?;
        loop {
            // SAFETY: every array has the length ARPACK's documentation requires for
            // these n, nev, ncv and lworkl; c64 and __BindgenComplex<f64> are both
            // #[repr(C)] pairs of f64 (C99 `double _Complex` layout).
            unsafe {
                znaupd_c(
                    &mut ido,
                    bmat.as_ptr(),
                    n_c,
                    which.as_ptr(),
                    nev_c,
                    ARPACK_RELATIVE_TOL,
                    complex_ptr(&mut resid),
                    ncv_c,
                    complex_ptr(&mut v),
                    n_c,
                    iparam.as_mut_ptr(),
                    ipntr.as_mut_ptr(),
                    complex_ptr(&mut workd),
                    complex_ptr(&mut workl),
                    lworkl_c,
                    rwork.as_mut_ptr(),
                    &mut info,
                );
            }
            match ido {
                -1 | 1 => {
                    // y = OP x with x at workd[ipntr[0] - 1], y at workd[ipntr[1] - 1]
                    let (xi, yi) = (ipntr[0] as usize - 1, ipntr[1] as usize - 1);
                    let input = MatRef::from_column_major_slice(&workd[xi..xi + n], n, 1);
                    self.apply_to(x.as_mut(), input)?;
                    for i in 0..n {
                        workd[yi + i] = x[(i, 0)];
                    }
                }
                99 => break,
                other => {
                    return Err(EigenError::Backend(format!(
                        "znaupd asked for an action this driver does not take (ido = {other})"
                    )))
                }
            }
        }
        // info 1: iteration limit reached with iparam[4] pairs converged; 0: all converged
        if info != 0 && info != 1 {
            return Err(EigenError::Arpack {
                routine: "znaupd",
                info,
            });
        }
        let nconv = (iparam[4].max(0) as usize).min(want);
        if nconv == 0 {
            return Ok((Vec::new(), false));
        }

        let select: Vec<c_int> = vec![0; ncv];
        let mut d = vec![c64::ZERO; want + 1];
        let mut z = try_vec(n * want, c64::ZERO)?;
        let mut workev = vec![c64::ZERO; 2 * ncv];
        let mut info_eupd: c_int = 0;
        // SAFETY: as above; `d` holds nev + 1 values, `z` n x nev, `workev` 2 ncv,
        // `select` ncv (unused with howmny = "A"); the work arrays are those of znaupd.
        unsafe {
            zneupd_c(
                1,
                c"A".as_ptr(),
                select.as_ptr(),
                complex_ptr(&mut d),
                complex_ptr(&mut z),
                n_c,
                __BindgenComplex {
                    re: sigma.re,
                    im: sigma.im,
                },
                complex_ptr(&mut workev),
                bmat.as_ptr(),
                n_c,
                which.as_ptr(),
                nev_c,
                ARPACK_RELATIVE_TOL,
                complex_ptr(&mut resid),
                ncv_c,
                complex_ptr(&mut v),
                n_c,
                iparam.as_mut_ptr(),
                ipntr.as_mut_ptr(),
                complex_ptr(&mut workd),
                complex_ptr(&mut workl),
                lworkl_c,
                rwork.as_mut_ptr(),
                &mut info_eupd,
            );
        }
        drop(_guard);
        if info_eupd != 0 {
            return Err(EigenError::Arpack {
                routine: "zneupd",
                info: info_eupd,
            });
        }
        let nconv = (iparam[4].max(0) as usize).min(want);
        let pencil = self.pencil();
        let mut pairs = Vec::with_capacity(nconv);
        for (j, &theta) in d.iter().enumerate().take(nconv) {
            if theta.norm() == 0.0 || !theta.norm().is_finite() {
                continue;
            }
            let mut vector = z[j * n..(j + 1) * n].to_vec();
            normalise(&mut vector);
            let lambda = sigma + theta.inv();
            let residual = relative_residual(pencil, lambda, &vector)?;
            pairs.push(EigenPair {
                lambda,
                vector,
                residual,
                converged: residual <= opts.tol,
            });
        }
        Ok((pairs, info == 0 && nconv >= want))
    }
}

/// A `c64` buffer as ARPACK's `double _Complex *`.
fn complex_ptr(buffer: &mut [c64]) -> *mut __BindgenComplex<f64> {
    buffer.as_mut_ptr().cast()
}
