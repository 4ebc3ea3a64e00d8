//! From eigenpairs to described modes: energy fractions, polarisation class,
//! field-maximum counts, trust flags; PML and box modes dropped unless asked for.
use num_complex::Complex64;
use twistmode_analysis::{
    classify_polarisation, count_maxima, frequency_hz, k0_from_eigenvalue, quality_factor,
    trust_flags, Flag, ModeLabel, TrustInputs,
};
use twistmode_eigen::Spectrum;
use twistmode_fem::{AssembledSystem, EnergySummary, FieldEvaluator, SectionProblem};
use twistmode_io::case::{Body, Case};
use twistmode_mesh::{Mesh, PmlGeometry, PointLocator};

use crate::model::{mode_order, outer_index, pml_start_from_axis, reference_radius};
use crate::{ModeReport, SolveSettings, SolverFacts};

/// Geometric facts of the section that every mode's description reads.
pub(crate) struct SectionFacts {
    /// Box of the body regions `[u_min, u_max, v_min, v_max]`.
    pub bbox: [f64; 4],
    /// Longer over shorter side of that box.
    pub aspect: f64,
    /// Where the PML starts, measured from the axis (bodies with an axis).
    pub pml_start: Option<f64>,
    /// Whether the mesh has a PML.
    pub has_pml: bool,
    /// Finds the body triangle under a point (field samples).
    pub locator: PointLocator,
}

impl SectionFacts {
    pub(crate) fn of(case: &Case, mesh: &Mesh) -> SectionFacts {
        let bbox = mesh.body_box().map_or([0.0; 4], |b| b.to_array());
        let (extent_u, extent_v) = (bbox[1] - bbox[0], bbox[3] - bbox[2]);
        SectionFacts {
            bbox,
            aspect: extent_u.max(extent_v) / extent_u.min(extent_v),
            pml_start: pml_start_from_axis(case, mesh),
            has_pml: !matches!(mesh.domain().map(|d| d.pml), None | Some(PmlGeometry::None)),
            locator: PointLocator::bodies(mesh),
        }
    }
}

/// Whether a pair is kept as a mode.
pub(crate) enum Verdict {
    /// Kept; `pml_heavy` when it is kept although most of its energy is in the PML.
    Keep { pml_heavy: bool },
    /// Dropped: a mode of the PML.
    Pml,
    /// Dropped: a mode of the box (little energy in the body).
    Box,
}

/// PML and box modes are dropped unless asked for; with a complex target
/// (`search.near_q`) very leaky resonances are sought, whose fields reach far into
/// the air and PML: those are flagged instead of dropped.
pub(crate) fn verdict(case: &Case, settings: &SolveSettings, energy: &EnergySummary) -> Verdict {
    let pml_heavy = energy.pml_fraction > settings.max_pml_fraction;
    if !settings.keep_all && case.search.near_q.is_none() {
        if pml_heavy {
            return Verdict::Pml;
        }
        if energy.body_fraction < settings.min_confinement {
            return Verdict::Box;
        }
    }
    Verdict::Keep { pml_heavy }
}

/// What one mode is: its eigenvalue, energy and field shape, and the order it is
/// labelled by (the azimuthal order, a twisted ring's dominant harmonic, or beta).
pub(crate) struct ModeInputs<'a> {
    pub k0: Complex64,
    pub residual: f64,
    pub energy: &'a EnergySummary,
    pub pml_heavy: bool,
    pub order: f64,
}

/// The report of one mode: label, figures and trust flags. `shape_field` is the field
/// whose maxima are counted.
pub(crate) fn report_mode(
    case: &Case,
    settings: &SolveSettings,
    section: &SectionFacts,
    inputs: ModeInputs<'_>,
    shape_field: &FieldEvaluator<'_, '_>,
) -> ModeReport {
    let ModeInputs {
        k0,
        residual,
        energy,
        pml_heavy,
        order,
    } = inputs;
    let bbox = section.bbox;
    let [fu, fv] = energy.body_uv_fraction;
    let (wide, narrow) = if bbox[1] - bbox[0] >= bbox[3] - bbox[2] {
        (fu, fv)
    } else {
        (fv, fu)
    };
    let polarisation = classify_polarisation(wide, narrow, section.aspect, 0.7);
    let (maxima_u, maxima_v) = count_section_maxima(shape_field, &section.locator, bbox);
    let (m, beta, effective_index) = match case.body {
        Body::Straight { .. } => (None, Some(order), Some(order / k0.re)),
        _ => (
            Some(order),
            None,
            reference_radius(case).map(|r| order / (k0.re * r)),
        ),
    };
    let mut flags = trust_flags(&TrustInputs {
        k0_re: k0.re,
        k0_im: k0.im,
        residual,
        tolerance: settings.tolerance,
        azimuthal_order: m,
        outer_index: outer_index(case),
        pml_start_from_axis: section.pml_start,
        confinement: energy.body_fraction,
        q_limit: settings.q_limit,
        has_pml: section.has_pml,
    });
    if pml_heavy {
        flags.push(Flag::PmlDominated {
            pml_fraction: energy.pml_fraction,
            k0_change_with_pml: None,
        });
    }
    let f = frequency_hz(k0);
    // |Im k0| at round-off level (Q > 5e11): a lossless mode, Q infinite.
    let q = if k0.im.abs() <= 1e-12 * k0.re.abs() {
        f64::INFINITY
    } else {
        quality_factor(k0)
    };
    let label = ModeLabel {
        class: polarisation,
        maxima_u,
        maxima_v,
        sector: None,
    };
    ModeReport {
        index: 0,
        m,
        beta,
        frequency_hz: [f.re, f.im],
        k0: [k0.re, k0.im],
        q: q.is_finite().then_some(q),
        wavelength_m: 2.0 * std::f64::consts::PI / k0.re,
        effective_index,
        confinement: energy.body_fraction,
        pml_fraction: energy.pml_fraction,
        polarisation,
        maxima_u,
        maxima_v,
        residual,
        flags,
        label,
        twist: None,
    }
}

/// Sorts described modes by frequency and numbers them.
pub(crate) fn in_frequency_order(
    mut out: Vec<(ModeReport, Vec<[Complex64; 3]>)>,
) -> (Vec<ModeReport>, Vec<Vec<[Complex64; 3]>>) {
    out.sort_by(|a, b| a.0.frequency_hz[0].total_cmp(&b.0.frequency_hz[0]));
    let mut modes = Vec::with_capacity(out.len());
    let mut fields = Vec::with_capacity(out.len());
    for (i, (mut m, f)) in out.into_iter().enumerate() {
        m.index = i;
        modes.push(m);
        fields.push(f);
    }
    (modes, fields)
}

/// Labels, flags and figures of each eigenpair; drops PML and box modes unless asked.
pub(crate) fn describe_modes(
    case: &Case,
    problem: &SectionProblem<'_>,
    system: &AssembledSystem,
    spectrum: &Spectrum,
    settings: &SolveSettings,
    solver: &mut SolverFacts,
) -> (Vec<ModeReport>, Vec<Vec<[Complex64; 3]>>) {
    let mesh = problem.mesh();
    let section = SectionFacts::of(case, mesh);
    let mut out: Vec<(ModeReport, Vec<[Complex64; 3]>)> = Vec::new();
    // Pairs come nearest the shift first; keep the `count` nearest physical ones.
    for pair in &spectrum.pairs {
        if out.len() == case.search.count {
            break;
        }
        let field = FieldEvaluator::new(problem, system, &pair.vector);
        let energy = field.energy();
        let pml_heavy = match verdict(case, settings, &energy) {
            Verdict::Pml => {
                solver.pml_dropped += 1;
                continue;
            }
            Verdict::Box => {
                solver.box_dropped += 1;
                continue;
            }
            Verdict::Keep { pml_heavy } => pml_heavy,
        };
        let inputs = ModeInputs {
            k0: k0_from_eigenvalue(pair.lambda),
            residual: pair.residual,
            energy: &energy,
            pml_heavy,
            order: mode_order(case),
        };
        let report = report_mode(case, settings, &section, inputs, &field);
        out.push((report, field.nodal_values()));
    }
    in_frequency_order(out)
}

/// Counts |E|^2 maxima along u through the body's centre line, then along v
/// through the u position of the strongest sample.
pub(crate) fn count_section_maxima(
    field: &FieldEvaluator<'_, '_>,
    locator: &PointLocator,
    bbox: [f64; 4],
) -> (usize, usize) {
    const SAMPLES: usize = 121;
    let sample = |p: [f64; 2]| -> f64 {
        locator
            .locate(p)
            .and_then(|l| field.physical(l.triangle, l.xi, l.eta))
            .map(|f| f.norm_sq)
            .unwrap_or(0.0)
    };
    let inset = |a: f64, b: f64, i: usize| a + (b - a) * (i as f64 + 0.5) / SAMPLES as f64;
    let v_mid = 0.5 * (bbox[2] + bbox[3]);
    let along_u: Vec<f64> = (0..SAMPLES)
        .map(|i| sample([inset(bbox[0], bbox[1], i), v_mid]))
        .collect();
    let best = along_u
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(i, _)| i)
        .unwrap_or(SAMPLES / 2);
    let u_best = inset(bbox[0], bbox[1], best);
    let along_v: Vec<f64> = (0..SAMPLES)
        .map(|i| sample([u_best, inset(bbox[2], bbox[3], i)]))
        .collect();
    (count_maxima(&along_u, 0.1), count_maxima(&along_v, 0.1))
}
