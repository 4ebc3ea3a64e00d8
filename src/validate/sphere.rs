//! Validation against exact answers: the dielectric sphere in air (Mie theory).
//!
//! A sphere of radius `a` and index `n` is a body of revolution whose section
//! is the half disc `r >= 0` of a disc centred on the axis. Its resonances are
//! the poles of the Mie coefficients (Bohren & Huffman, Absorption and
//! Scattering of Light by Small Particles, 1983, ch. 4, eq. 4.53), computed
//! by [`twistmode_reference::mie_resonance`] (checked against a 40-digit
//! mpmath computation in `tools/reference_fixtures.py`). Every azimuthal
//! order `|m| <= l` sees the same complex `k0`, so one exact value checks
//! several solves.
//!
//! Each probe is solved through the user path: a case written as TOML text,
//! read by [`Case::from_toml_str`] and run by [`solve_case`]. The model is
//! put together so that the figures mean something:
//!
//! * the PML starts beyond the caustic `(l + 1/2) / k0` of the probed mode
//!   (for `m = l` this is the `m / k0` that the pipeline's trust flag checks),
//!   with a margin; inside it the outside field is evanescent and the PML's
//!   absorption, hence Q, would be meaningless;
//! * the midplane `z = 0` carries the wall matching the mode's parity:
//!   `Y_lm` has parity `(-1)^(l+m)`, so a TE_l mode (no radial E) has odd
//!   tangential E on `z = 0` when `l + m` is even (electric wall), even when
//!   odd (magnetic wall), and TM_l the reverse. This halves the unknowns and
//!   removes half of the neighbouring resonances;
//! * the computed mode probed is the one nearest the exact `k0`; it is then
//!   identified independently twice: by the nearest exact resonance of either
//!   kind among `l - 3 ..= l + 3`, `p = 1 ..= 4`, and by the energy split
//!   (the share of `|E|^2` at the body's nodes along the spherical radius,
//!   which vanishes for TE and not for TM).
use std::time::Instant;

use num_complex::Complex64;
use twistmode_io::case::Case;
use twistmode_reference::{mie_resonance, MieResonance, MieSphere, SpherePolarization};

use super::{Check, Level};
use twistmode_pipeline::{solve_case, SolveSettings};

use crate::validate::ValidateError;

/// Source named by every check.
pub const SOURCE: &str = "Mie theory, Bohren & Huffman (1983) ch. 4 eq. 4.53; \
     twistmode_reference::sphere::mie_resonance (checked against tools/reference_fixtures.py, mpmath)";

/// Radius of the probed spheres, micrometres (any scale gives the same `k0 a`).
pub const RADIUS_UM: f64 = 1.0;

/// Largest Q whose value is checked (the issue's bound: above it the
/// imaginary part is below the discretisation error of the real part).
pub const Q_CHECK_LIMIT: f64 = 1e6;

/// One resonance to probe and the model to probe it with.
#[derive(Clone, Debug)]
pub struct SphereProbe {
    /// Refractive index of the sphere (in air).
    pub index: f64,
    /// Angular number.
    pub l: u32,
    /// Radial order (1 = no radial node inside).
    pub p: u32,
    /// TE (no radial E) or TM.
    pub polarization: SpherePolarization,
    /// Azimuthal order solved for, `|m| <= l`.
    pub m: i32,
    /// Element order, 1 or 2.
    pub order: u8,
    /// Elements per local wavelength.
    pub resolution: f64,
    /// PML start over the caustic radius `(l + 1/2) / Re k0` (> 1).
    pub caustic_margin: f64,
    /// PML thickness in free-space wavelengths.
    pub pml_wavelengths: f64,
    /// Use the midplane wall matching the mode's parity (halves the unknowns).
    pub use_midplane: bool,
    /// Keep modes the pipeline would drop as PML or box modes (always done
    /// when the exact Q is below 10: much of such a mode's energy lies
    /// outside the sphere).
    pub keep_all: bool,
    /// Centre the search on the complex `k0` through the case key
    /// `search.near_q`, given the exact Q rounded to two significant digits
    /// (only steers the search: the computed value owes nothing to it).
    pub complex_shift: bool,
}

impl SphereProbe {
    /// A probe with the defaults used by [`run`]: order 2, 12 elements per
    /// wavelength, PML from 1.2 times the caustic, half a wavelength thick,
    /// midplane wall, PML and box modes dropped (unless Q < 10).
    pub fn new(index: f64, l: u32, p: u32, polarization: SpherePolarization, m: i32) -> Self {
        SphereProbe {
            index,
            l,
            p,
            polarization,
            m,
            order: 2,
            resolution: 12.0,
            caustic_margin: 1.2,
            pml_wavelengths: 0.5,
            use_midplane: true,
            keep_all: false,
            complex_shift: false,
        }
    }

    /// The model for a leaky resonance (Q below 10), as measured in
    /// docs/validation-sphere.md: a PML one free-space wavelength thick (at
    /// half a wavelength its strong stretch is under-resolved and costs
    /// 2e-5 .. 3e-4 on `k0`) and a complex shift from `search.near_q`.
    pub fn leaky(mut self) -> Self {
        self.pml_wavelengths = 1.0;
        self.complex_shift = true;
        self
    }

    /// The wall on `z = 0` that keeps this mode (module docs).
    pub fn midplane_wall(&self) -> &'static str {
        let even = (i64::from(self.l) + i64::from(self.m)) % 2 == 0;
        match (self.polarization, even) {
            (SpherePolarization::Te, true) | (SpherePolarization::Tm, false) => "electric",
            _ => "magnetic",
        }
    }

    /// Short name, e.g. "n=2 TE l=10 p=1 m=10".
    pub fn name(&self) -> String {
        format!(
            "n={} {} l={} p={} m={}",
            self.index,
            kind_name(self.polarization),
            self.l,
            self.p,
            self.m
        )
    }
}

fn kind_name(polarization: SpherePolarization) -> &'static str {
    match polarization {
        SpherePolarization::Te => "TE",
        SpherePolarization::Tm => "TM",
    }
}

/// What one probe gave.
#[derive(Clone, Debug)]
pub struct SphereSolve {
    /// The exact resonance probed.
    pub exact: MieResonance,
    /// Computed complex `k0 a` of the mode nearest the exact one.
    pub k0a: Complex64,
    /// Computed Q.
    pub q: f64,
    /// The exact resonance nearest the computed one, among both kinds,
    /// `l - 3 ..= l + 3` and `p = 1 ..= 4`: `(polarization, l, p)`.
    pub nearest: (SpherePolarization, u32, u32),
    /// `|computed - nearest exact| / |computed|` (complex `k0 a`).
    pub nearest_distance: f64,
    /// Share of `|E|^2` at the body's nodes along the spherical radius.
    pub radial_share: f64,
    /// Unknowns solved for.
    pub dofs: usize,
    /// Wall time of the whole solve, seconds.
    pub seconds: f64,
    /// Flags the pipeline raised on the mode.
    pub flags: Vec<String>,
    /// Other computed `k0 a` found in the same solve (all kept modes).
    pub all_k0a: Vec<Complex64>,
}

impl SphereSolve {
    /// True when both identifications agree with the probed resonance and
    /// the computed value lies within 1 % of it in the complex plane.
    pub fn identified(&self) -> bool {
        let kind_ok = match self.exact.polarization {
            SpherePolarization::Te => self.radial_share < 0.05,
            SpherePolarization::Tm => self.radial_share > 0.05,
        };
        kind_ok
            && self.nearest_distance < 1e-2
            && self.nearest == (self.exact.polarization, self.exact.l, self.exact.p)
    }
}

/// The exact resonance of a probe.
pub fn exact_resonance(probe: &SphereProbe) -> Result<MieResonance, ValidateError> {
    let sphere = MieSphere::try_new(Complex64::new(probe.index, 0.0), 1.0).map_err(reference)?;
    mie_resonance(&sphere, probe.l, probe.p, probe.polarization).map_err(reference)
}

fn reference(e: twistmode_reference::ReferenceError) -> ValidateError {
    ValidateError::Reference(e)
}

/// The case file text of a probe, targeting the exact `Re k0`.
pub fn case_text(probe: &SphereProbe, exact: &MieResonance) -> String {
    let a = RADIUS_UM;
    let k0 = exact.k0a.re / a; // 1/um
    let lambda0 = 2.0 * std::f64::consts::PI / k0;
    let caustic = (f64::from(probe.l) + 0.5) / k0;
    let pml_start = (probe.caustic_margin * caustic).max(a + 0.25 * lambda0);
    let padding = pml_start - a;
    let pml = probe.pml_wavelengths * lambda0;
    // Low-Q modes sit far below the real shift `Re(k0)^2` in the complex
    // plane, behind PML modes nearer to it: a complex shift from
    // `search.near_q` goes there; without it, ask for more modes.
    let near_q = if probe.complex_shift {
        format!("near_q = {:.1e}\n", exact.q)
    } else {
        String::new()
    };
    let count = if probe.complex_shift {
        4
    } else if exact.q < 10.0 {
        12
    } else {
        2
    };
    let midplane = if probe.use_midplane {
        probe.midplane_wall()
    } else {
        "none"
    };
    format!(
        r#"[units]
length = "um"

[body]
kind = "revolution"

[section]
shape = "disc"
radius = {a}
centre = [0.0, 0.0]
material = "probe-glass"

[materials.probe-glass]
epsilon = {eps:.15}

[surroundings]
kind = "open"
padding = {padding:.15}
pml_thickness = {pml:.15}

[mesh]
order = {order}
resolution = {resolution}

[search]
m = {m}
near_wavelength = "{lambda0:.15} um"
count = {count}
{near_q}
[boundary]
midplane = "{midplane}"
"#,
        eps = probe.index * probe.index,
        order = probe.order,
        resolution = probe.resolution,
        m = probe.m,
    )
}

/// Solves one probe through the user path and identifies the mode.
pub fn solve_probe(probe: &SphereProbe) -> Result<SphereSolve, ValidateError> {
    let exact = exact_resonance(probe)?;
    let case = Case::from_toml_str(&case_text(probe, &exact), &[])?;
    let start = Instant::now();
    let settings = SolveSettings {
        keep_all: probe.keep_all || exact.q < 10.0,
        ..SolveSettings::default()
    };
    let outcome = solve_case(&case, &settings)?;
    let seconds = start.elapsed().as_secs_f64();
    let metres = RADIUS_UM * 1e-6;
    let all_k0a: Vec<Complex64> = outcome
        .modes
        .iter()
        .map(|mode| Complex64::new(mode.k0[0], mode.k0[1]) * metres)
        .collect();
    let (best, k0a) = all_k0a
        .iter()
        .copied()
        .enumerate()
        .min_by(|x, y| {
            (x.1 - exact.k0a)
                .norm()
                .total_cmp(&(y.1 - exact.k0a).norm())
        })
        .ok_or_else(|| {
            ValidateError::Incomplete(format!("{}: the solve kept no mode", probe.name()))
        })?;
    let mode = &outcome.modes[best];
    let radial_share = radial_share(&outcome.mesh, &outcome.nodal_fields[best], metres);
    let (nearest, nearest_distance) = nearest_exact(probe, k0a)?;
    Ok(SphereSolve {
        nearest,
        nearest_distance,
        q: k0a.re / (2.0 * k0a.im.abs()),
        k0a,
        exact,
        radial_share,
        dofs: outcome.solver.dofs,
        seconds,
        flags: mode.flags.iter().map(|f| format!("{f:?}")).collect(),
        all_k0a,
    })
}

/// The exact resonance nearest `k0a` among both kinds, `l - 3 ..= l + 3`
/// (at least `|m|` and 1) and `p = 1 ..= 4`, and its distance relative to `|k0a|`.
pub fn nearest_exact(
    probe: &SphereProbe,
    k0a: Complex64,
) -> Result<((SpherePolarization, u32, u32), f64), ValidateError> {
    let sphere = MieSphere::try_new(Complex64::new(probe.index, 0.0), 1.0).map_err(reference)?;
    let low = probe.l.saturating_sub(3).max(probe.m.unsigned_abs()).max(1);
    let mut best = (probe.polarization, probe.l, probe.p);
    let mut best_distance = f64::INFINITY;
    for polarization in [SpherePolarization::Te, SpherePolarization::Tm] {
        for l in low..=probe.l + 3 {
            for p in 1..=4 {
                let r = mie_resonance(&sphere, l, p, polarization).map_err(reference)?;
                let d = (r.k0a - k0a).norm();
                if d < best_distance {
                    best_distance = d;
                    best = (polarization, l, p);
                }
            }
        }
    }
    Ok((best, best_distance / k0a.norm()))
}

/// Share of `sum |E_rad|^2 / sum |E|^2` over the mesh nodes inside the
/// sphere, `E_rad = (r E_r + z E_z) / sqrt(r^2 + z^2)` (nodal values are
/// `(E_r, E_z, E_phi)` in the section frame).
fn radial_share(mesh: &twistmode_mesh::Mesh, field: &[[Complex64; 3]], radius: f64) -> f64 {
    let (mut radial, mut total) = (0.0, 0.0);
    for (p, e) in mesh.points().iter().zip(field) {
        let rho = p[0].hypot(p[1]);
        if rho >= radius * (1.0 - 1e-9) || rho == 0.0 {
            continue;
        }
        let e_rad = (e[0] * p[0] + e[1] * p[1]) / rho;
        radial += e_rad.norm_sqr();
        total += e[0].norm_sqr() + e[1].norm_sqr() + e[2].norm_sqr();
    }
    if total > 0.0 {
        radial / total
    } else {
        0.0
    }
}

/// The probes of a level.
///
/// Quick: n = 2, l = 5 and 10, TE and TM, p = 1, m = l and one m < l, at 8
/// elements per wavelength (seconds each). Full: indices 1.5, 2 and 3,
/// l from 1 to 30, radial orders 1 to 3, several m, each at the resolution
/// that the measured h^4 convergence says reaches 1e-6 (12 to 32 elements
/// per wavelength: small spheres in wavelengths need more per wavelength);
/// the probes of the six resonances with Q below 10 use [`SphereProbe::leaky`].
pub fn probes(level: Level) -> Vec<SphereProbe> {
    use SpherePolarization::{Te, Tm};
    let at = |index, l, p, polarization, m, resolution| {
        let mut probe = SphereProbe::new(index, l, p, polarization, m);
        probe.resolution = resolution;
        probe
    };
    // The resonances with Q below 10 (Mie theory): thicker PML, complex shift.
    let leaky = |index, l, p, polarization, m, resolution| {
        at(index, l, p, polarization, m, resolution).leaky()
    };
    match level {
        Level::Quick => vec![
            at(2.0, 5, 1, Te, 5, 8.0),
            at(2.0, 5, 1, Tm, 5, 8.0),
            at(2.0, 5, 1, Te, 3, 8.0),
            at(2.0, 10, 1, Te, 10, 8.0),
            at(2.0, 10, 1, Tm, 10, 8.0),
        ],
        Level::Full => vec![
            leaky(2.0, 1, 1, Te, 1, 32.0),
            leaky(2.0, 1, 1, Tm, 0, 48.0),
            at(2.0, 5, 1, Te, 5, 22.0),
            at(2.0, 5, 1, Tm, 5, 22.0),
            at(2.0, 5, 2, Te, 2, 22.0),
            leaky(2.0, 5, 3, Tm, 0, 22.0),
            at(2.0, 10, 1, Te, 10, 16.0),
            at(2.0, 10, 1, Tm, 10, 16.0),
            at(2.0, 10, 1, Te, 7, 20.0),
            at(2.0, 20, 1, Te, 20, 16.0),
            leaky(1.5, 1, 1, Tm, 1, 32.0),
            leaky(1.5, 1, 1, Tm, 0, 48.0),
            leaky(1.5, 5, 1, Te, 5, 22.0),
            leaky(1.5, 10, 2, Tm, 10, 20.0),
            at(3.0, 5, 1, Tm, 5, 16.0),
            at(3.0, 10, 2, Te, 4, 24.0),
            at(3.0, 20, 1, Tm, 20, 16.0),
            at(2.0, 30, 1, Te, 30, 12.0),
        ],
    }
}

/// Tolerances of a level: `(Re k0, Q)`, relative. Quick: 1e-4 on Re k0, an
/// honest bound above the 2e-5 to 6e-5 measured at 8 elements per wavelength
/// (the issue's 1e-6 needs about 16); Q to the issue's 1 %. Full: the issue's
/// 1e-6 and 1 %.
fn tolerances(level: Level) -> (f64, f64) {
    match level {
        Level::Quick => (1e-4, 0.01),
        Level::Full => (1e-6, 0.01),
    }
}

/// Runs the sphere checks at the given level.
pub fn run(level: Level) -> Result<Vec<Check>, ValidateError> {
    run_probes(probes(level), level)
}

/// Runs the given probes with the tolerances of `level` (a subset of a
/// level's probes, e.g. to re-measure some of them).
pub fn run_probes(probes: Vec<SphereProbe>, level: Level) -> Result<Vec<Check>, ValidateError> {
    let (tol_k0, tol_q) = tolerances(level);
    let mut checks = Vec::new();
    let mut done: Vec<(SphereProbe, SphereSolve)> = Vec::new();
    for probe in probes {
        let solve = match solve_probe(&probe) {
            Ok(solve) => solve,
            Err(e) => {
                // A failed solve is a failed check, not the end of the run.
                checks.push(Check::new(
                    format!("sphere {} (order {})", probe.name(), probe.order),
                    format!("solve failed: {e}"),
                    f64::NAN,
                    1.0,
                    0.0,
                    SOURCE,
                    0,
                    0.0,
                ));
                continue;
            }
        };
        checks.extend(checks_of(&probe, &solve, tol_k0, tol_q));
        // The same resonance at another m: the (2l + 1)-fold degeneracy.
        if let Some((first, earlier)) = done.iter().find(|(q, _)| {
            q.index == probe.index
                && q.l == probe.l
                && q.p == probe.p
                && q.polarization == probe.polarization
        }) {
            checks.push(Check::new(
                format!("sphere {} vs m={}", probe.name(), first.m),
                "Re k0 a degeneracy in m",
                solve.k0a.re,
                earlier.k0a.re,
                2.0 * tol_k0,
                "Mie theory: every |m| <= l has the same resonance (Bohren & Huffman 1983 ch. 4)",
                solve.dofs,
                solve.seconds,
            ));
        }
        done.push((probe, solve));
    }
    Ok(checks)
}

/// The checks of one solve: Re k0, Q (where below [`Q_CHECK_LIMIT`]) and
/// the identification (1 when both ways agree with the probed resonance).
pub fn checks_of(probe: &SphereProbe, solve: &SphereSolve, tol_k0: f64, tol_q: f64) -> Vec<Check> {
    let problem = format!("sphere {} (order {})", probe.name(), probe.order);
    let mut out = vec![Check::new(
        problem.clone(),
        "Re k0 a",
        solve.k0a.re,
        solve.exact.k0a.re,
        tol_k0,
        SOURCE,
        solve.dofs,
        solve.seconds,
    )];
    if solve.exact.q < Q_CHECK_LIMIT {
        out.push(Check::new(
            problem.clone(),
            "Q",
            solve.q,
            solve.exact.q,
            tol_q,
            SOURCE,
            solve.dofs,
            solve.seconds,
        ));
    }
    let (kind, l, p) = solve.nearest;
    out.push(Check::new(
        problem,
        format!(
            "identified (nearest exact {} l={l} p={p}; radial |E|^2 share {:.3})",
            kind_name(kind),
            solve.radial_share
        ),
        if solve.identified() { 1.0 } else { 0.0 },
        1.0,
        0.0,
        SOURCE,
        solve.dofs,
        solve.seconds,
    ));
    out
}
