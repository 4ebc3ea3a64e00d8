//! Twisted rings: the Fourier-Galerkin block system over the harmonics `m + k tau`,
//! `|k| <= K`, solved sector by sector, with the harmonic-convergence figure of every
//! mode from a second solve at `K - 1` on the same mesh and parts.
//!
//! ```text
//!   mesh ─► TwistedRing (closed-form harmonics, block pattern, pi rotation)
//!        ─► parts of harmonics |j| <= 2K (assembled once)
//!        ─► per physical sector: block pencil (K) ─► eigenpairs ─► modes
//!                                block pencil (K-1) ─► eigenpairs ─► convergence figure
//! ```
//!
//! Sectors: a band with an odd number of half turns closes on itself turned by pi, so
//! each harmonic `n` must satisfy `P e_n = exp(2 pi i n) e_n`; only the sector
//! `s = exp(2 pi i m)` is physical and solved. With an even number both sectors are
//! physical (the two classes of the band's discrete rotation symmetry): both are solved
//! and each mode carries its `s`. A section without pi symmetry (even half turns only)
//! is solved whole.
use std::time::Instant;

use num_complex::Complex64;
use twistmode_analysis::{k0_from_eigenvalue, Flag};
use twistmode_eigen::{solve_near_growing, EigenPair, Pencil, SolveOptions, Spectrum};
use twistmode_fem::scatter::AssembledParts;
use twistmode_fem::{BlockSystem, EnergySummary, FieldEvaluator, HarmonicWindow, TwistedRing};
use twistmode_io::case::{Body, Case, ModeOrder};

use crate::describe::{
    in_frequency_order, report_mode, verdict, ModeInputs, SectionFacts, Verdict,
};
use crate::model::{build_mesh, set_up};
use crate::search::pairs_for;
use crate::{
    ModeReport, PipelineError, SolveOutcome, SolveSettings, SolverFacts, TwistFacts,
    TwistSolverFacts,
};

/// Coupling harmonics whose parts are all below this fraction of the harmonic
/// convergence tolerance (relative to harmonic 0) are dropped: their first-order effect
/// on `k0` is below a tenth of what the convergence figure resolves.
const DROP_FRACTION: f64 = 0.1;

/// The physical sectors of a band with `half_turns` half turns and window centre `m`,
/// on a section that has (`symmetric`) or lacks the pi rotation.
pub fn physical_sectors(half_turns: i32, m_twice: i64, symmetric: bool) -> Vec<Option<f64>> {
    if half_turns % 2 != 0 {
        // s = exp(2 pi i m): +1 for an integer centre, -1 for a half-integer one.
        vec![Some(if m_twice % 2 == 0 { 1.0 } else { -1.0 })]
    } else if symmetric {
        vec![Some(1.0), Some(-1.0)]
    } else {
        vec![None]
    }
}

/// One sector's block pencil solved near the target.
struct SectorSolve {
    system: BlockSystem,
    spectrum: Spectrum,
    seconds: [f64; 3],
    applications: usize,
}

/// What every sector solve of one case shares.
struct SectorSearch<'a, 'm> {
    ring: &'a TwistedRing<'m>,
    parts: &'a AssembledParts,
    drop_below: f64,
    sigma: Complex64,
    count: usize,
    tolerance: f64,
    budget: crate::budget::Budget,
}

impl SectorSearch<'_, '_> {
    /// The block pencil of `window` in `sector`, solved near the target.
    fn solve(
        &self,
        window: HarmonicWindow,
        sector: Option<f64>,
    ) -> Result<SectorSolve, PipelineError> {
        let start = Instant::now();
        let mut system = self.ring.block_system(
            self.parts,
            window,
            sector,
            self.drop_below,
            self.ring.has_mirror(),
        )?;
        let assembled = start.elapsed().as_secs_f64();
        let (stiffness, mass) = system.take_matrices();
        let pencil = Pencil::try_new(stiffness, mass)?;
        crate::budget::check(
            &pencil,
            self.budget,
            &format!(
                "with K = {} ({} harmonics, {} unknowns): reduce search.harmonics (or \
                 search.max_harmonics), mesh.resolution or surroundings.padding",
                window.half_width,
                window.len(),
                pencil.dim()
            ),
        )?;
        let opts = SolveOptions {
            count: self.count.min(pencil.dim()),
            tol: self.tolerance,
            static_below: 1e-6 * self.sigma.norm(),
            ..SolveOptions::default()
        };
        let spectrum = solve_near_growing(&pencil, self.sigma, &opts, |_| None)?;
        Ok(SectorSolve {
            seconds: [
                assembled,
                spectrum.stats.analysis_seconds + spectrum.stats.factor_seconds,
                spectrum.stats.iteration_seconds,
            ],
            applications: spectrum.stats.operator_applications,
            system,
            spectrum,
        })
    }
}

/// `|<a, b>| / (|a| |b|)` over the unknowns of the blocks both windows share.
fn overlap(wide: &BlockSystem, x: &[Complex64], narrow: &BlockSystem, y: &[Complex64]) -> f64 {
    let mut dot = Complex64::new(0.0, 0.0);
    let (mut nx, mut ny) = (0.0, 0.0);
    for b in &narrow.blocks {
        let Some(w) = wide.blocks.iter().find(|w| w.k == b.k) else {
            continue;
        };
        let (xs, ys) = (
            &x[w.offset..w.offset + w.len],
            &y[b.offset..b.offset + b.len],
        );
        for (p, q) in xs.iter().zip(ys) {
            dot += p.conj() * q;
            nx += p.norm_sqr();
            ny += q.norm_sqr();
        }
    }
    if nx == 0.0 || ny == 0.0 {
        0.0
    } else {
        dot.norm() / (nx * ny).sqrt()
    }
}

/// The change of `k0` to the best-overlapping pair of the narrower window.
fn convergence_figure(wide: &BlockSystem, pair: &EigenPair, narrow: &SectorSolve) -> Option<f64> {
    let k0 = k0_from_eigenvalue(pair.lambda);
    narrow
        .spectrum
        .pairs
        .iter()
        .map(|p| (overlap(wide, &pair.vector, &narrow.system, &p.vector), p))
        .filter(|(o, _)| *o > 0.5)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, p)| (k0_from_eigenvalue(p.lambda) - k0).norm() / k0.norm())
}

/// The sum of several harmonics' energy summaries (region by region).
fn summed_energy(mesh: &twistmode_mesh::Mesh, parts: &[EnergySummary]) -> EnergySummary {
    let mut regions = parts[0].regions.clone();
    for p in &parts[1..] {
        for (r, e) in regions.iter_mut().zip(&p.regions) {
            r.electric += e.electric;
            for c in 0..3 {
                r.components[c] += e.components[c];
            }
        }
    }
    EnergySummary::from_regions(mesh, regions)
}

/// Material-loss Q from the electric energy outside the PML:
/// `Q = Re W / Im W` with `W = sum int E^* eps E dV` (stored energy twice the electric
/// energy at resonance; the dielectric-loss Q of common practice, e.g. Pozar,
/// Microwave Engineering, sec. 6.7, for a filling factor below one). `None` for lossless
/// materials.
fn material_q(mesh: &twistmode_mesh::Mesh, energy: &EnergySummary) -> Option<f64> {
    let mut w = Complex64::new(0.0, 0.0);
    for (r, e) in mesh.regions().iter().zip(&energy.regions) {
        if r.kind != twistmode_mesh::RegionKind::Pml {
            w += e.electric;
        }
    }
    (w.im > 1e-300 * w.re.abs()).then(|| w.re / w.im)
}

/// What one sector solve described: the kept modes with their fields at phi = 0, and
/// how many pairs were dropped as PML and box modes.
struct Described {
    modes: Vec<(ModeReport, Vec<[Complex64; 3]>)>,
    pml_dropped: usize,
    box_dropped: usize,
}

/// What the description of every sector's modes reads.
struct Describer<'a, 'm> {
    case: &'a Case,
    settings: &'a SolveSettings,
    ring: &'a TwistedRing<'m>,
    section: SectionFacts,
    half_turns: i32,
}

impl Describer<'_, '_> {
    /// Labels, flags, harmonic content and convergence of the pairs of `wide`, compared
    /// with the narrower window `narrow`; PML and box modes dropped unless asked.
    fn describe(&self, wide: &SectorSolve, narrow: &SectorSolve, k: u32) -> Described {
        let (case, ring) = (self.case, self.ring);
        let mesh = ring.problem().mesh();
        let mut out = Described {
            modes: Vec::new(),
            pml_dropped: 0,
            box_dropped: 0,
        };
        for pair in &wide.spectrum.pairs {
            let fields = wide.system.harmonic_fields(&pair.vector);
            let energies: Vec<EnergySummary> = fields
                .iter()
                .map(|f| {
                    FieldEvaluator::from_full(ring.problem(), ring.numbering(), f.clone()).energy()
                })
                .collect();
            let energy = summed_energy(mesh, &energies);
            let pml_heavy = match verdict(case, self.settings, &energy) {
                Verdict::Pml => {
                    out.pml_dropped += 1;
                    continue;
                }
                Verdict::Box => {
                    out.box_dropped += 1;
                    continue;
                }
                Verdict::Keep { pml_heavy } => pml_heavy,
            };
            let shares: Vec<f64> = energies.iter().map(|e| e.total).collect();
            let total: f64 = shares.iter().sum();
            let dominant = shares
                .iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .map(|(b, _)| b)
                .unwrap_or(0);
            let order = wide.system.blocks[dominant].order;
            let shape_field = FieldEvaluator::from_full(
                ring.problem(),
                ring.numbering(),
                fields[dominant].clone(),
            );
            let mut report = report_mode(
                case,
                self.settings,
                &self.section,
                ModeInputs {
                    k0: k0_from_eigenvalue(pair.lambda),
                    residual: pair.residual,
                    energy: &energy,
                    pml_heavy,
                    order,
                },
                &shape_field,
            );
            let convergence = convergence_figure(&wide.system, pair, narrow);
            match convergence {
                Some(c) if c <= case.search.harmonic_tolerance => {}
                _ => report.flags.push(Flag::HarmonicsUnconverged {
                    change: convergence,
                    tolerance: case.search.harmonic_tolerance,
                }),
            }
            let sector = wide.system.sector;
            if let Some(s) = sector {
                report.label.sector = Some(if s > 0.0 { 1 } else { -1 });
            }
            report.twist = Some(TwistFacts {
                half_turns: self.half_turns,
                dominant_order: order,
                sector: sector.map(|s| s as i8),
                energy_per_harmonic: wide
                    .system
                    .blocks
                    .iter()
                    .zip(&shares)
                    .map(|(b, e)| (b.order, if total > 0.0 { e / total } else { 0.0 }))
                    .collect(),
                harmonics: k,
                convergence,
                q_material: material_q(mesh, &energy),
            });
            // The field at phi = 0: the sum of the harmonics.
            let at_zero = wide.system.field_at(&pair.vector, 0.0);
            let nodal =
                FieldEvaluator::from_full(ring.problem(), ring.numbering(), at_zero).nodal_values();
            out.modes.push((report, nodal));
        }
        out
    }
}

/// Whether a described mode's harmonic convergence figure meets the tolerance.
fn converged(m: &ModeReport) -> bool {
    !m.flags
        .iter()
        .any(|f| matches!(f, Flag::HarmonicsUnconverged { .. }))
}

/// Runs a twisted-ring case: for each physical sector, the window `K` (with `K - 1`
/// for the convergence figure); with `search.harmonics = "auto"`, `K` grows from its
/// start until the modes nearest the target meet `search.tolerance` or
/// `search.max_harmonics` is reached.
pub fn solve_twisted(
    case: &Case,
    settings: &SolveSettings,
    stage: &mut impl FnMut(&str),
) -> Result<SolveOutcome, PipelineError> {
    let Body::Ring { half_turns, .. } = case.body else {
        return Err(PipelineError::Unsupported("not a twisted ring".into()));
    };
    let ModeOrder::Azimuthal(centre) = case.search.order else {
        return Err(PipelineError::Unsupported(
            "a ring is searched by search.m".into(),
        ));
    };
    stage("meshing the section");
    let (mesh, mesh_facts) = build_mesh(case)?;
    let setup = set_up(case, &mesh)?;
    let start = Instant::now();
    let mut ring = TwistedRing::try_new(&mesh, setup)?;
    if let Some(mirror) = mesh.mirror_partner_nodes() {
        ring = ring.with_mirror(mirror)?;
    }
    let (k_start, k_last) = match case.search.max_harmonics {
        Some(max) => (case.search.harmonics.min(max), max),
        None => (case.search.harmonics, case.search.harmonics),
    };
    stage(&format!(
        "assembling the harmonics of the medium ({} triangles, |j| <= {})",
        mesh_facts.triangles,
        2 * k_last
    ));
    let parts = ring.assemble_parts(2 * k_last)?;
    let assembly_seconds = start.elapsed().as_secs_f64();
    let tau = ring.tau();
    let window = |k: u32| HarmonicWindow {
        centre: centre.value(),
        tau,
        half_width: k,
    };
    let (re, im) = case.search.complex_k0();
    let target = Complex64::new(re, im);
    let sigma = target * target;
    let sectors = physical_sectors(half_turns, centre.twice(), ring.rotation().is_some());
    let search = SectorSearch {
        ring: &ring,
        parts: &parts,
        drop_below: DROP_FRACTION * case.search.harmonic_tolerance,
        sigma,
        count: pairs_for(case.search.count),
        tolerance: settings.tolerance,
        budget: crate::budget::Budget::new(settings.max_memory),
    };
    let describer = Describer {
        case,
        settings,
        ring: &ring,
        section: SectionFacts::of(case, &mesh),
        half_turns,
    };
    let distance = |m: &ModeReport| (Complex64::new(m.k0[0], m.k0[1]) - target).norm();
    let mut out: Vec<(ModeReport, Vec<[Complex64; 3]>)> = Vec::new();
    let mut facts: Option<SolverFacts> = None;
    let (mut factor_seconds, mut iteration_seconds, mut applications) = (0.0, 0.0, 0);
    let mut dropped = (0usize, 0usize, 0usize);
    let mut sector_dims = Vec::new();
    let mut windows = Vec::new();
    let mut stops = Vec::new();
    for sector in &sectors {
        let sector_name = match sector {
            Some(s) if *s > 0.0 => "sector +1",
            Some(_) => "sector -1",
            None => "whole section",
        };
        stage(&format!(
            "factorising and iterating, {sector_name}, K = {}",
            k_start.saturating_sub(1)
        ));
        let mut narrow = search.solve(window(k_start.saturating_sub(1)), *sector)?;
        factor_seconds += narrow.seconds[1];
        iteration_seconds += narrow.seconds[2];
        applications += narrow.applications;
        let mut k = k_start;
        // With "auto", the description of the last window (now `narrow`), in case the
        // next window does not fit.
        let mut last: Option<Described> = None;
        let (wide, described, stop) = loop {
            stage(&format!(
                "factorising and iterating, {sector_name}, K = {k} ({} harmonics)",
                2 * k + 1
            ));
            let wide = match search.solve(window(k), *sector) {
                Ok(w) => w,
                Err(PipelineError::TooLarge { .. }) if last.is_some() => {
                    let d = last.take().expect("checked");
                    k -= 1;
                    break (
                        narrow,
                        d,
                        "stopped: the next window would exceed the memory budget",
                    );
                }
                Err(e) => return Err(e),
            };
            factor_seconds += wide.seconds[1];
            iteration_seconds += wide.seconds[2];
            applications += wide.applications;
            let mut described = describer.describe(&wide, &narrow, k);
            described
                .modes
                .sort_by(|a, b| distance(&a.0).total_cmp(&distance(&b.0)));
            let nearest_converged = described
                .modes
                .iter()
                .take(case.search.count)
                .all(|(m, _)| converged(m));
            if case.search.max_harmonics.is_none() {
                break (wide, described, "fixed (search.harmonics)");
            }
            if nearest_converged {
                break (wide, described, "converged to search.tolerance");
            }
            if k >= k_last {
                break (wide, described, "stopped at search.max_harmonics");
            }
            // The next window compares with this one; keep this one's description.
            narrow = wide;
            last = Some(described);
            k += 1;
        };
        sector_dims.push(wide.system.dim());
        windows.push(k);
        stops.push(stop.to_string());
        dropped.0 += described.pml_dropped;
        dropped.1 += described.box_dropped;
        dropped.2 += wide.spectrum.static_dropped;
        out.extend(described.modes);
        if facts.is_none() {
            let stats = &wide.spectrum.stats;
            let summary = ring.numbering().summary();
            facts = Some(SolverFacts {
                dofs_full: summary.full * window(k).len(),
                dofs: wide.system.dim(),
                dofs_constrained: (summary.constrained_transverse + summary.constrained_third)
                    * window(k).len(),
                static_modes: 0,
                pattern_nnz: stats.pattern_nnz,
                fill_nnz: stats.fill_nnz,
                factorisation: stats
                    .factorisation
                    .map_or("unknown", |f| f.name())
                    .to_string(),
                shift: [wide.spectrum.shift.re, wide.spectrum.shift.im],
                nudged_from: wide.spectrum.nudged_from.map(|s| [s.re, s.im]),
                status: crate::run::status_text(&wide.spectrum.status),
                static_dropped: 0,
                pml_dropped: 0,
                box_dropped: 0,
                assembly_seconds,
                factor_seconds: 0.0,
                iteration_seconds: 0.0,
                operator_applications: 0,
                shortfall: None,
                twist: Some(TwistSolverFacts {
                    half_turns,
                    harmonics: k,
                    window_centre: centre.value(),
                    sectors: Vec::new(),
                    sector_unknowns: Vec::new(),
                    sector_harmonics: Vec::new(),
                    harmonics_stop: Vec::new(),
                    couplings_kept: wide.system.couplings.kept,
                    couplings_dropped: wide.system.couplings.dropped,
                    largest_dropped: wide.system.couplings.largest_dropped,
                    mirror_symmetric: wide.system.mirror_signs.is_some(),
                    asymmetry: wide.system.asymmetry,
                }),
            });
        }
    }
    // Keep the `count` nearest the target over all sectors.
    out.sort_by(|a, b| distance(&a.0).total_cmp(&distance(&b.0)));
    out.truncate(case.search.count);
    let (modes, nodal_fields) = in_frequency_order(out);
    drop(ring);
    let mut solver =
        facts.ok_or_else(|| PipelineError::Unsupported("no sector to solve".into()))?;
    solver.factor_seconds = factor_seconds;
    solver.iteration_seconds = iteration_seconds;
    solver.operator_applications = applications;
    solver.pml_dropped = dropped.0;
    solver.box_dropped = dropped.1;
    solver.static_dropped = dropped.2;
    if let Some(t) = solver.twist.as_mut() {
        t.sectors = sectors.iter().map(|s| s.map(|s| s as i8)).collect();
        t.sector_unknowns = sector_dims;
        t.harmonics = windows.iter().copied().max().unwrap_or(t.harmonics);
        t.sector_harmonics = windows;
        t.harmonics_stop = stops;
    }
    if modes.len() < case.search.count {
        solver.shortfall = Some(format!(
            "found {} of the {} modes asked for ({} PML and {} box modes dropped). Move \
             search.near_frequency closer to the modes you want or raise search.count",
            modes.len(),
            case.search.count,
            solver.pml_dropped,
            solver.box_dropped
        ));
    }
    Ok(SolveOutcome {
        mesh,
        mesh_facts,
        solver,
        modes,
        nodal_fields,
    })
}
