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

use twistmode_eigen::{
    c64, solve_near_growing, Pencil, ShiftInvert, SolveOptions, Spectrum, Status,
};
use twistmode_fem::SectionProblem;
use twistmode_io::case::Case;
use twistmode_reference::cavity::{coaxial_modes, cylinder_modes, CavityMode, CavityModeKind};
use twistmode_reference::Filling;

use super::{Check, Level};
use crate::validate::ValidateError;
use twistmode_pipeline::set_up;

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
    /// Finest order-2 mesh of the Full level: `h = b / full_refinement`,
    /// chosen from the measured h^4 rate so that every compared resonance
    /// lands below 1e-8 (see docs/validation-cavity.md).
    pub full_refinement: f64,
}

impl Cavity {
    /// The filled circular cylinder: radius 12 mm, length 20 mm, eps 2.1.
    pub fn cylinder() -> Cavity {
        Cavity {
            name: "cylinder cavity a=12 mm d=20 mm eps=2.1".into(),
            radii_length: [0.0, 12e-3, 20e-3],
            epsilon: 2.1,
            full_refinement: 84.0,
        }
    }

    /// The empty coaxial cavity: radii 3 mm and 10 mm, length 15 mm.
    pub fn coaxial() -> Cavity {
        Cavity {
            name: "coaxial cavity a=3 mm b=10 mm d=15 mm".into(),
            radii_length: [3e-3, 10e-3, 15e-3],
            epsilon: 1.0,
            full_refinement: 64.0,
        }
    }

    /// The lowest `count` exact resonances.
    pub fn exact_modes(&self, count: usize) -> Result<Vec<CavityMode>, ValidateError> {
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

fn reference_error(e: twistmode_reference::ReferenceError) -> ValidateError {
    ValidateError::Reference(e)
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
    /// Per azimuthal order: unknowns, shifts, operator applications, time.
    pub per_order: Vec<OrderCost>,
    /// Wall time: mesh, assembly and solves over all orders, seconds.
    pub seconds: f64,
}

impl Computed {
    /// Unknowns, summed over the azimuthal orders solved.
    pub fn dofs(&self) -> usize {
        self.per_order.iter().map(|o| o.dofs).sum()
    }

    /// Largest system solved (one azimuthal order).
    pub fn largest_dofs(&self) -> usize {
        self.per_order.iter().map(|o| o.dofs).max().unwrap_or(0)
    }

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
fn case_of(cavity: &Cavity, order: u8) -> Result<Case, ValidateError> {
    Ok(Case::from_toml_str(&cavity.case_toml(order), &[])?)
}

/// The generated mesh of `case` with the largest edge `max_edge`.
fn mesh_of(case: &Case, max_edge: f64) -> Result<twistmode_mesh::Mesh, ValidateError> {
    let mut spec = case.generator_spec()?;
    spec.body.max_edge = max_edge;
    Ok(twistmode_mesh::generate(&spec)?)
}

/// One shift's share of an azimuthal order: consecutive exact modes of that
/// order and the band `[lo, hi]` (in `k0^2`) that must hold exactly them.
#[derive(Clone, Debug)]
struct Band {
    /// Indices into the compared exact modes, ascending in `k0`.
    slots: Vec<usize>,
    /// Lower end of the band: below the lowest exact mode by a margin (0.8
    /// `lambda` for the lowest mode of the order, the low-end probes covering
    /// `(0, lambda_1)`, else the midpoint in `k0` to the
    /// exact mode below).
    lo: f64,
    /// Upper end: the midpoint in `k0` to the next exact mode of the order.
    /// With `lo` it places the shift; which computed pairs are matched is
    /// decided by the floor of [`solve_cavity`], not by these ends.
    hi: f64,
}

impl Band {
    /// The shift at the middle of the band.
    fn shift(&self) -> f64 {
        0.5 * (self.lo + self.hi)
    }

    /// Ratio of the band's half width to its distance from the static modes
    /// at 0: near 1 the static cluster competes with the band's edge modes.
    fn width_ratio(&self) -> f64 {
        (self.hi - self.lo) / (self.hi + self.lo)
    }
}

/// Largest [`Band::width_ratio`] solved with one shift; wider bands are
/// split at their largest gap between consecutive exact values.
const MAX_WIDTH_RATIO: f64 = 0.8;

/// Splits the exact modes of one order (`k0s` ascending, `next` the exact `k0`
/// of the order's next mode beyond the compared ones) into bands.
fn bands_of(slots: &[usize], k0s: &[f64], next: f64) -> Vec<Band> {
    let mid2 = |a: f64, b: f64| (0.5 * (a + b)).powi(2);
    let whole = Band {
        slots: slots.to_vec(),
        lo: 0.8 * k0s[0].powi(2),
        hi: mid2(k0s[k0s.len() - 1], next),
    };
    let mut out = vec![whole];
    loop {
        let Some(i) = out
            .iter()
            .position(|b| b.slots.len() > 1 && b.width_ratio() > MAX_WIDTH_RATIO)
        else {
            return out;
        };
        let band = out.remove(i);
        let first = slots.iter().position(|&s| s == band.slots[0]).unwrap_or(0);
        let k = &k0s[first..first + band.slots.len()];
        // Split at the largest relative gap between consecutive exact values.
        let cut = (1..k.len())
            .max_by(|&a, &b| (k[a] / k[a - 1]).total_cmp(&(k[b] / k[b - 1])))
            .unwrap_or(1);
        let at = mid2(k[cut - 1], k[cut]);
        out.insert(
            i,
            Band {
                slots: band.slots[cut..].to_vec(),
                lo: at,
                hi: band.hi,
            },
        );
        out.insert(
            i,
            Band {
                slots: band.slots[..cut].to_vec(),
                lo: band.lo,
                hi: at,
            },
        );
    }
}

/// Pairs asked for beyond the exact modes of a band: at least one pair
/// outside the band on each side, or the disc reaching the static modes.
const MARGIN: usize = 2;

/// What one azimuthal order cost on one mesh.
#[derive(Clone, Debug)]
pub struct OrderCost {
    /// Azimuthal order.
    pub m: u32,
    /// Unknowns of this order's system.
    pub dofs: usize,
    /// Shifts used (one per band).
    pub shifts: usize,
    /// Applications of the shift-invert operator over the shifts.
    pub applications: usize,
    /// Static (gradient) pairs returned among the nearest ones and set aside.
    pub statics: usize,
    /// Wall time: assembly, factorisations and iterations, seconds.
    pub seconds: f64,
}

/// Solves every azimuthal order present in `exact` on a mesh with the given
/// largest edge and matches the computed eigenvalues to the exact modes.
///
/// `beyond` is a longer exact list (the compared modes first): it gives each
/// order's next exact mode, whose midpoint to the last compared one closes the
/// band (see [`Band`]). Per band one shift at its middle asks for the band's
/// exact count plus [`MARGIN`] pairs and grows the count (same factorisation)
/// until the disc of the returned pairs reaches down to the band's floor and
/// holds enough physical pairs above it; static pairs at 0 are set aside.
/// The `j`-th exact mode of the band is matched to the `j`-th computed pair
/// above the floor, so a missing or extra mode shows up as a large error; a
/// band not covered leaves its modes unmatched (NaN, a failed check).
pub fn solve_cavity(
    cavity: &Cavity,
    exact: &[CavityMode],
    beyond: &[CavityMode],
    order: u8,
    max_edge: f64,
) -> Result<Computed, ValidateError> {
    let start = Instant::now();
    let case = case_of(cavity, order)?;
    let mesh = mesh_of(&case, max_edge)?;
    let problem = SectionProblem::try_new(&mesh, set_up(&case, &mesh)?)?;
    let mut k0 = vec![f64::NAN; exact.len()];
    let mut per_order = Vec::new();
    for (m, mine) in by_order(exact) {
        let started = Instant::now();
        let system = problem.assemble(f64::from(m))?;
        let n = system.summary().reduced;
        let k0s: Vec<f64> = mine.iter().map(|&i| exact[i].k0).collect();
        let last = k0s[k0s.len() - 1];
        let next = beyond
            .iter()
            .filter(|e| e.m == m && e.k0 > last * (1.0 + 1e-12))
            .map(|e| e.k0)
            .fold(f64::INFINITY, f64::min);
        let next = if next.is_finite() { next } else { 1.3 * last };
        let (stiffness, mass) = system.symmetric_form();
        let pencil = Pencil::try_new(stiffness, mass)?;
        let bands = bands_of(&mine, &k0s, next);
        // |lambda| below this: a static (gradient) pair, set aside.
        let static_below = 1e-6 * k0s[0].powi(2);
        let (mut applications, mut statics_set_aside) = (0, 0);
        // Lower end of the current band: the band's own for the first one, then
        // just above the computed pair matched last (so the bands chain without
        // gaps or overlaps whatever the discretisation error).
        let mut floor = bands[0].lo;
        for band in &bands {
            let sigma = band.shift();
            let wanted = band.slots.len();
            let count = wanted + MARGIN;
            let opts = SolveOptions {
                count,
                tol: EIGEN_TOLERANCE,
                // Static pairs are kept as ordinary pairs and set aside below
                // (`static_below = 0`): with `static_below > 0` the solver asks
                // again for room whenever they take slots, and converging more
                // members of the gradient cluster is what made the solves slow.
                static_below: 0.0,
                krylov_dim: Some((2 * count + 16).max(32)),
                ..SolveOptions::default()
            };
            // The computed physical pairs above the floor, ascending.
            let above = |s: &Spectrum| {
                let mut l: Vec<f64> = s
                    .pairs
                    .iter()
                    .filter(|p| p.lambda.norm() >= static_below && p.lambda.re > floor)
                    .map(|p| p.lambda.re)
                    .collect();
                l.sort_by(f64::total_cmp);
                l
            };
            // Covered: the disc through the farthest returned pair (every pair
            // inside it found: the Krylov-Schur assumption) reaches down to the
            // floor and holds at least `wanted` physical pairs above it, which
            // meet the residual tolerance (a static pair's relative residual is
            // meaningless: K x ~ 0). The first `wanted` of them are then the
            // discrete eigenvalues next above the floor, none skipped.
            let covers = |s: &Spectrum| {
                let reach = s
                    .pairs
                    .iter()
                    .map(|p| (p.lambda - sigma).norm())
                    .fold(0.0, f64::max);
                let physical_converged = s
                    .pairs
                    .iter()
                    .all(|p| p.converged || p.lambda.norm() < static_below);
                !matches!(s.status, Status::MaxRestarts { .. })
                    && physical_converged
                    && reach >= sigma - floor
                    && above(s).len() >= wanted
            };
            let spectrum = solve_near_growing(&pencil, c64::new(sigma, 0.0), &opts, |s| {
                applications += s.stats.operator_applications;
                (!covers(s) && s.pairs.len() < 3 * wanted + 12).then_some(s.pairs.len() + 4)
            })?;
            statics_set_aside += spectrum
                .pairs
                .iter()
                .filter(|p| p.lambda.norm() < static_below)
                .count();
            let found = above(&spectrum);
            if !covers(&spectrum) {
                eprintln!(
                    "{} m={m}: shift {sigma:.6e} (k0^2) did not cover [{floor:.6e}, ...] with {} \
                     pairs above it for {wanted} exact modes (status {:?}); modes left unmatched",
                    cavity.name,
                    found.len(),
                    spectrum.status
                );
                floor = band.hi;
                continue;
            }
            // In-order matching: a missing or extra computed mode shifts every
            // later one onto the wrong exact value (a large error, a failed check).
            for (slot, lambda) in band.slots.iter().zip(&found) {
                k0[*slot] = lambda.max(0.0).sqrt();
            }
            floor = found[wanted - 1];
        }
        per_order.push(OrderCost {
            m,
            dofs: n,
            shifts: bands.len(),
            applications,
            statics: statics_set_aside,
            seconds: started.elapsed().as_secs_f64(),
        });
    }
    Ok(Computed {
        max_edge,
        order,
        triangles: mesh.triangles().len(),
        k0,
        per_order,
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
) -> Result<Vec<LowEnd>, ValidateError> {
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

/// The meshes of one level and element order: largest edges as fractions of
/// the outer radius `b`. The Full level ends order 2 at the cavity's
/// [`Cavity::full_refinement`].
fn refinements(level: Level, order: u8, cavity: &Cavity) -> Vec<f64> {
    match (level, order) {
        (Level::Quick, _) => vec![4.0, 8.0],
        (Level::Full, 1) => vec![4.0, 8.0, 16.0],
        (Level::Full, _) => vec![4.0, 8.0, 16.0, 32.0, cavity.full_refinement],
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

/// Exact modes beyond the compared ones, to close each order's band.
const BEYOND: usize = 4 * MODES;

/// Runs the cavity checks at the given level.
///
/// Tolerances: Quick meshes (`h = b/8`) cannot reach the 1e-8 target, so the
/// resonance checks there use an honest bound above the measured errors
/// (1e-4; measured max 5.3e-5). Full checks every resonance on its finest
/// plain order-2 mesh against the 1e-8 target (no extrapolation).
pub fn run(level: Level) -> Result<Vec<Check>, ValidateError> {
    let mut checks = Vec::new();
    for cavity in [Cavity::cylinder(), Cavity::coaxial()] {
        let exact = cavity.exact_modes(MODES)?;
        let beyond = cavity.exact_modes(BEYOND)?;
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
            for fraction in refinements(level, order, &cavity) {
                let c = solve_cavity(&cavity, &exact, &beyond, order, b / fraction)?;
                eprintln!(
                    "{} order {order} h = b/{fraction}: {} triangles, {} unknowns over all m \
                     (largest {}), max rel. error {:.3e}, {:.1} s",
                    cavity.name,
                    c.triangles,
                    c.dofs(),
                    c.largest_dofs(),
                    worst(&c.errors(&exact)),
                    c.seconds
                );
                for o in &c.per_order {
                    eprintln!(
                        "    m={}: {} unknowns, {} shift(s), {} operator applications, \
                         {} static pairs set aside, {:.1} s",
                        o.m, o.dofs, o.shifts, o.applications, o.statics, o.seconds
                    );
                }
                if level == Level::Full {
                    for (mode, e) in exact.iter().zip(c.errors(&exact)) {
                        eprintln!("    {} (m = {}): {e:.2e}", label(mode), mode.m);
                    }
                }
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
                    f.dofs(),
                    c.seconds + f.seconds,
                ));
            }
        }
        // 3. The resonances on the finest order-2 mesh, plain values.
        let order2 = &runs[1];
        let finest = &order2[order2.len() - 1];
        let tolerance = match level {
            Level::Quick => 1e-4,
            Level::Full => 1e-8,
        };
        for (mode, k0) in exact.iter().zip(&finest.k0) {
            let dofs = finest
                .per_order
                .iter()
                .find(|o| o.m == mode.m)
                .map_or(0, |o| o.dofs);
            checks.push(Check::new(
                format!("{}, order 2, h = b/{:.0}", cavity.name, b / finest.max_edge),
                format!("k0 of {} (m = {})", label(mode), mode.m),
                *k0,
                mode.k0,
                tolerance,
                SOURCE,
                dofs,
                finest.seconds,
            ));
        }
    }
    Ok(checks)
}
