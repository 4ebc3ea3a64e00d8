//! Validation against exact answers: closed metal cavities.
//!
//! Two bodies of revolution with perfectly conducting walls, entered as case
//! files with `surroundings.kind = "metal"`: a circular cylinder cavity (the
//! section `[0, a] x [0, d]` touches the axis) and a coaxial cavity (the
//! section `[a, b] x [0, d]`). For each, the lowest resonances of the 3D
//! cavity come from `twistmode_reference::cavity`; the solver finds them one
//! azimuthal order at a time (each `m != 0` pair of 3D modes is a single
//! eigenvalue at fixed `m`), and each exact `(kind, m, n, p)` is matched to
//! the computed eigenvalue of the same rank within its `m`.
//!
//! Besides the resonances: the observed convergence rate of order 1 and
//! order 2 elements under refinement, and the absence of spurious modes
//! between `k0 = 0` and the first physical mode of each `m`.
use std::time::Instant;

use twistmode_eigen::{c64, solve_window, Pencil, ShiftInvert, ShiftSpacing, SolveOptions, Window};
use twistmode_fem::SectionProblem;
use twistmode_io::case::Case;
use twistmode_reference::cavity::{coaxial_modes, cylinder_modes, CavityMode, CavityModeKind};
use twistmode_reference::Filling;

use super::{Check, Level};
use crate::solve::{set_up, SolveError};

/// Where the exact resonances come from.
const SOURCE: &str = "Pozar, Microwave Engineering, 4th ed., sec. 6.3 (cylinder), Marcuvitz, \
     Waveguide Handbook, sec. 2.4 (coaxial cut-offs); twistmode_reference::cavity \
     (checked against tools/reference_fixtures.py, mpmath)";

/// Residual tolerance of the eigensolver: far below the discretisation errors
/// compared here (the eigenvalue error of a Hermitian pencil is of the order
/// of the squared residual).
const EIGEN_TOLERANCE: f64 = 1e-11;

/// How many resonances of the 3D cavity are compared (each `(kind, m, n, p)` once).
const MODES: usize = 15;

/// One of the two cavities.
#[derive(Clone, Debug)]
pub struct Cavity {
    /// Short description for the check table.
    pub name: String,
    /// Inner radius (0 for the cylinder), outer radius, length; metres.
    pub radii_length: [f64; 3],
    /// Relative permittivity of the filling.
    pub epsilon: f64,
}

impl Cavity {
    /// The filled circular cylinder: radius 12 mm, length 20 mm, eps 2.1.
    pub fn cylinder() -> Cavity {
        Cavity {
            name: "cylinder cavity a=12 mm d=20 mm eps=2.1".into(),
            radii_length: [0.0, 12e-3, 20e-3],
            epsilon: 2.1,
        }
    }

    /// The empty coaxial cavity: radii 3 mm and 10 mm, length 15 mm.
    pub fn coaxial() -> Cavity {
        Cavity {
            name: "coaxial cavity a=3 mm b=10 mm d=15 mm".into(),
            radii_length: [3e-3, 10e-3, 15e-3],
            epsilon: 1.0,
        }
    }

    /// The lowest `count` exact resonances.
    pub fn exact_modes(&self, count: usize) -> Result<Vec<CavityMode>, SolveError> {
        let [a, b, d] = self.radii_length;
        let filling = Filling::try_new(self.epsilon, 1.0).map_err(reference_error)?;
        let modes = if a == 0.0 {
            cylinder_modes(b, d, filling, count)
        } else {
            coaxial_modes(a, b, d, filling, count)
        };
        modes.map_err(reference_error)
    }

    /// The case file of this cavity: a rectangle section in (r, z), metal
    /// walls, element order `order`.
    pub fn case_toml(&self, order: u8) -> String {
        let [a, b, d] = self.radii_length.map(|x| x * 1e3);
        format!(
            r#"
[units]
length = "mm"
[body]
kind = "revolution"
[section]
shape = "rectangle"
width = {w}
thickness = {d}
centre = [{rc}, {zc}]
material = "filling"
[materials.filling]
epsilon = {eps}
[surroundings]
kind = "metal"
[mesh]
order = {order}
[search]
m = 0
near_frequency = "10 GHz"
"#,
            w = b - a,
            rc = 0.5 * (a + b),
            zc = 0.5 * d,
            eps = self.epsilon,
        )
    }
}

fn reference_error(e: twistmode_reference::ReferenceError) -> SolveError {
    SolveError::Reference(e)
}

/// The computed resonances of one cavity on one mesh.
#[derive(Clone, Debug)]
pub struct Computed {
    /// Largest edge asked of the mesher, metres.
    pub max_edge: f64,
    /// Element order (1 or 2).
    pub order: u8,
    /// Triangles of the mesh.
    pub triangles: usize,
    /// For each exact mode (same order as given): the computed vacuum wavenumber.
    pub k0: Vec<f64>,
    /// Unknowns, summed over the azimuthal orders solved.
    pub dofs: usize,
    /// Largest system solved (one azimuthal order).
    pub largest_dofs: usize,
    /// Wall time: mesh, assembly and solves over all orders, seconds.
    pub seconds: f64,
}

impl Computed {
    /// Relative error of each mode's `k0`.
    pub fn errors(&self, exact: &[CavityMode]) -> Vec<f64> {
        self.k0
            .iter()
            .zip(exact)
            .map(|(k, e)| (k - e.k0).abs() / e.k0)
            .collect()
    }
}

/// The case of `cavity` at element order `order`, through the user path.
fn case_of(cavity: &Cavity, order: u8) -> Result<Case, SolveError> {
    Ok(Case::from_toml_str(&cavity.case_toml(order), &[])?)
}

/// The generated mesh of `case` with the largest edge `max_edge`.
fn mesh_of(case: &Case, max_edge: f64) -> Result<twistmode_mesh::Mesh, SolveError> {
    let mut spec = case.generator_spec()?;
    spec.body.max_edge = max_edge;
    Ok(twistmode_mesh::generate(&spec)?)
}

/// Solves every azimuthal order present in `exact` on a mesh with the given
/// largest edge and matches the computed eigenvalues to the exact modes: the
/// `j`-th exact mode of order `m` (by frequency) to the `j`-th computed
/// eigenvalue of order `m` at or above half the lowest exact one, so a
/// spurious or missing mode shows up as a large error.
pub fn solve_cavity(
    cavity: &Cavity,
    exact: &[CavityMode],
    order: u8,
    max_edge: f64,
) -> Result<Computed, SolveError> {
    let start = Instant::now();
    let case = case_of(cavity, order)?;
    let mesh = mesh_of(&case, max_edge)?;
    let problem = SectionProblem::try_new(&mesh, set_up(&case, &mesh)?)?;
    let mut k0 = vec![f64::NAN; exact.len()];
    let (mut dofs, mut largest_dofs) = (0, 0);
    for (m, mine) in by_order(exact) {
        let system = problem.assemble(f64::from(m))?;
        let n = system.summary().reduced;
        dofs += n;
        largest_dofs = largest_dofs.max(n);
        let lo = exact[mine[0]].k0.powi(2);
        let hi = exact[*mine.last().unwrap_or(&mine[0])].k0.powi(2);
        // Several shifts over the band, so that each shift's disc is small
        // next to its distance from the static modes at 0 (one shift over a
        // wide band converges slowly against that huge cluster).
        let window = Window {
            lo: 0.5 * lo,
            hi: 1.15 * hi,
            shifts: if mine.len() > 2 { 2 } else { 1 },
            spacing: ShiftSpacing::SqrtLambda,
        };
        let (stiffness, mass) = system.symmetric_form();
        let pencil = Pencil::try_new(stiffness, mass)?;
        let opts = SolveOptions {
            count: mine.len().div_ceil(2) + 3,
            tol: EIGEN_TOLERANCE,
            static_below: 1e-6 * lo,
            ..SolveOptions::default()
        };
        let spectrum = solve_window(&pencil, &window, &opts)?;
        if !spectrum.gaps.is_empty() {
            // Part of the band not covered: leave these modes unmatched (NaN fails).
            continue;
        }
        for (slot, pair) in mine.iter().zip(&spectrum.pairs) {
            k0[*slot] = pair.lambda.re.max(0.0).sqrt();
        }
    }
    Ok(Computed {
        max_edge,
        order,
        triangles: mesh.triangles().len(),
        k0,
        dofs,
        largest_dofs,
        seconds: start.elapsed().as_secs_f64(),
    })
}

/// Indices of the exact modes grouped by azimuthal order, each group ascending in `k0`.
fn by_order(exact: &[CavityMode]) -> Vec<(u32, Vec<usize>)> {
    let max_m = exact.iter().map(|e| e.m).max().unwrap_or(0);
    (0..=max_m)
        .filter_map(|m| {
            let mut mine: Vec<usize> = (0..exact.len()).filter(|&i| exact[i].m == m).collect();
            mine.sort_by(|&i, &j| exact[i].k0.total_cmp(&exact[j].k0));
            (!mine.is_empty()).then_some((m, mine))
        })
        .collect()
}

/// What lies between `k0 = 0` and the first physical mode of one azimuthal order.
#[derive(Clone, Debug)]
pub struct LowEnd {
    /// Azimuthal order.
    pub m: u32,
    /// Dimension of the discrete gradient space reported by the assembly.
    pub gradient_space: usize,
    /// Eigenvalue nearest `0.15 lambda_1` (`lambda_1` the exact first
    /// physical `k0^2`): a static one unless something sits in `(0, 0.3 lambda_1)`.
    pub nearest_low: f64,
    /// Eigenvalue nearest `0.6 lambda_1`: the physical fundamental unless
    /// something sits in `(0.2 lambda_1, lambda_1)`.
    pub nearest_mid: f64,
    /// Static eigenvalues counted with a shift at `0.15 lambda_1` asking for
    /// `gradient_space + 1` pairs (None when not attempted).
    pub statics_found: Option<usize>,
    /// The exact first physical `k0^2` of this order.
    pub first_exact: f64,
    /// Unknowns.
    pub dofs: usize,
    /// Seconds.
    pub seconds: f64,
}

/// Probes the low end of the spectrum of each azimuthal order on one mesh.
pub fn probe_low_end(
    cavity: &Cavity,
    exact: &[CavityMode],
    order: u8,
    max_edge: f64,
    count_statics: bool,
) -> Result<Vec<LowEnd>, SolveError> {
    let case = case_of(cavity, order)?;
    let mesh = mesh_of(&case, max_edge)?;
    let problem = SectionProblem::try_new(&mesh, set_up(&case, &mesh)?)?;
    let mut out = Vec::new();
    for (m, mine) in by_order(exact) {
        let start = Instant::now();
        let system = problem.assemble(f64::from(m))?;
        let summary = system.summary();
        let first = exact[mine[0]].k0.powi(2);
        let (stiffness, mass) = system.symmetric_form();
        let pencil = Pencil::try_new(stiffness, mass)?;
        let mut op = ShiftInvert::try_new(&pencil)?;
        let nearest = |op: &mut ShiftInvert<'_>, at: f64, count: usize| {
            let opts = SolveOptions {
                count,
                tol: EIGEN_TOLERANCE,
                ..SolveOptions::default()
            };
            op.solve_near(c64::new(at, 0.0), &opts)
        };
        let low = nearest(&mut op, 0.15 * first, 1)?;
        let mid = nearest(&mut op, 0.6 * first, 1)?;
        let statics_found = if count_statics {
            let all = nearest(&mut op, 0.15 * first, summary.gradient_space + 1)?;
            Some(
                all.pairs
                    .iter()
                    .filter(|p| p.lambda.norm() < 1e-6 * first)
                    .count(),
            )
        } else {
            None
        };
        out.push(LowEnd {
            m,
            gradient_space: summary.gradient_space,
            nearest_low: low.pairs.first().map_or(f64::NAN, |p| p.lambda.re),
            nearest_mid: mid.pairs.first().map_or(f64::NAN, |p| p.lambda.re),
            statics_found,
            first_exact: first,
            dofs: summary.reduced,
            seconds: start.elapsed().as_secs_f64(),
        });
    }
    Ok(out)
}

/// Observed rate `p` of `e ~ h^p` between two meshes, `h ~ 1 / sqrt(triangles)`.
pub fn observed_rate(coarse: (f64, usize), fine: (f64, usize)) -> f64 {
    2.0 * (coarse.0 / fine.0).ln() / (fine.1 as f64 / coarse.1 as f64).ln()
}

/// Mode label, e.g. "TE_111".
pub fn label(mode: &CavityMode) -> String {
    let kind = match mode.kind {
        CavityModeKind::Tem => "TEM",
        CavityModeKind::Tm => "TM",
        CavityModeKind::Te => "TE",
    };
    if mode.kind == CavityModeKind::Tem {
        format!("TEM_{}", mode.p)
    } else {
        format!("{kind}_{}{}{}", mode.m, mode.n, mode.p)
    }
}

/// The meshes of one level: largest edges as fractions of the outer radius.
fn refinements(level: Level) -> &'static [f64] {
    match level {
        Level::Quick => &[4.0, 8.0],
        Level::Full => &[4.0, 8.0, 16.0],
    }
}

/// Largest value of a list (NaN propagates as a failure).
fn worst(values: &[f64]) -> f64 {
    values.iter().copied().fold(0.0, |a, b| {
        if a.is_nan() || b.is_nan() {
            f64::NAN
        } else {
            a.max(b)
        }
    })
}

/// Richardson extrapolation of `k0^2` from a coarse and a fine mesh with the
/// observed rate `p`: `l = l_f + (l_f - l_c) / ((h_c / h_f)^p - 1)`.
pub fn richardson(coarse: &Computed, fine: &Computed, rate: f64) -> Vec<f64> {
    let ratio = (fine.triangles as f64 / coarse.triangles as f64).sqrt();
    let factor = ratio.powf(rate) - 1.0;
    coarse
        .k0
        .iter()
        .zip(&fine.k0)
        .map(|(c, f)| {
            let (lc, lf) = (c * c, f * f);
            (lf + (lf - lc) / factor).sqrt()
        })
        .collect()
}

/// Runs the cavity checks at the given level.
///
/// Tolerances: Quick meshes cannot reach the 1e-8 target, so the resonance
/// checks there use an honest bound above the measured errors (1e-4 at
/// `h = b/8`); Full uses a bound above the measured errors at `h = b/16` and
/// the 1e-8 target on the Richardson-extrapolated values (labelled so).
pub fn run(level: Level) -> Result<Vec<Check>, SolveError> {
    let mut checks = Vec::new();
    for cavity in [Cavity::cylinder(), Cavity::coaxial()] {
        let exact = cavity.exact_modes(MODES)?;
        let b = cavity.radii_length[1];
        // 1. No spurious modes below the first physical one of each m.
        let probe_edge = b / 4.0;
        for le in probe_low_end(&cavity, &exact, 2, probe_edge, false)? {
            let problem = format!("{}, order 2, h = b/4", cavity.name);
            checks.push(Check::new(
                problem.clone(),
                format!(
                    "m={}: 1 + lambda/lambda_1 of the pair nearest 0.15 lambda_1 \
                     (1: static, nothing in (0, 0.3 lambda_1))",
                    le.m
                ),
                1.0 + le.nearest_low / le.first_exact,
                1.0,
                1e-8,
                format!(
                    "static modes at k0 = 0 ({} gradient DOFs); {SOURCE}",
                    le.gradient_space
                ),
                le.dofs,
                le.seconds,
            ));
            checks.push(Check::new(
                problem,
                format!(
                    "m={}: k0 of the pair nearest 0.6 lambda_1 (the fundamental: \
                     nothing in (0.2 lambda_1, lambda_1))",
                    le.m
                ),
                le.nearest_mid.max(0.0).sqrt(),
                le.first_exact.sqrt(),
                1e-3,
                SOURCE,
                le.dofs,
                le.seconds,
            ));
        }
        // 2. Refinement at orders 1 and 2.
        let mut runs: Vec<Vec<Computed>> = Vec::new();
        for order in [1u8, 2] {
            let mut series = Vec::new();
            for fraction in refinements(level) {
                let c = solve_cavity(&cavity, &exact, order, b / fraction)?;
                eprintln!(
                    "{} order {order} h = b/{fraction}: {} triangles, {} unknowns over all m, \
                     max rel. error {:.3e}, {:.1} s",
                    cavity.name,
                    c.triangles,
                    c.dofs,
                    worst(&c.errors(&exact)),
                    c.seconds
                );
                series.push(c);
            }
            runs.push(series);
        }
        for (series, expected) in runs.iter().zip([2.0, 4.0]) {
            for pair in series.windows(2) {
                let (c, f) = (&pair[0], &pair[1]);
                let rate = observed_rate(
                    (worst(&c.errors(&exact)), c.triangles),
                    (worst(&f.errors(&exact)), f.triangles),
                );
                checks.push(Check::new(
                    format!("{}, order {}", cavity.name, c.order),
                    format!(
                        "observed rate of the max k0 error, h = b/{:.0} -> b/{:.0}",
                        b / c.max_edge,
                        b / f.max_edge
                    ),
                    rate,
                    expected,
                    0.3,
                    "expected h^(2k) for order-k Nedelec elements: Monk, Finite Element \
                     Methods for Maxwell's Equations, ch. 7 (from memory)",
                    f.dofs,
                    c.seconds + f.seconds,
                ));
            }
        }
        // 3. The resonances on the finest order-2 mesh.
        let order2 = &runs[1];
        let finest = &order2[order2.len() - 1];
        let tolerance = match level {
            Level::Quick => 1e-4,
            Level::Full => 1e-5,
        };
        for (mode, k0) in exact.iter().zip(&finest.k0) {
            checks.push(Check::new(
                format!("{}, order 2, h = b/{:.0}", cavity.name, b / finest.max_edge),
                format!("k0 of {} (m = {})", label(mode), mode.m),
                *k0,
                mode.k0,
                tolerance,
                SOURCE,
                finest.largest_dofs,
                finest.seconds,
            ));
        }
        // 4. Full: Richardson extrapolation from the two finest meshes.
        if level == Level::Full && order2.len() >= 3 {
            let n = order2.len();
            let (c, f) = (&order2[n - 2], &order2[n - 1]);
            let rate = observed_rate(
                (worst(&c.errors(&exact)), c.triangles),
                (worst(&f.errors(&exact)), f.triangles),
            );
            for (mode, k0) in exact.iter().zip(richardson(c, f, rate)) {
                checks.push(Check::new(
                    format!(
                        "{}, order 2, EXTRAPOLATED (Richardson, rate {rate:.2}) from h = b/{:.0}, b/{:.0}",
                        cavity.name,
                        b / c.max_edge,
                        b / f.max_edge
                    ),
                    format!("k0 of {} (m = {})", label(mode), mode.m),
                    k0,
                    mode.k0,
                    1e-8,
                    SOURCE,
                    f.largest_dofs,
                    c.seconds + f.seconds,
                ));
            }
        }
    }
    Ok(checks)
}
