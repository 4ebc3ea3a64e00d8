//! Sweeps: one case key varied over a range, every point solved, modes
//! grouped into families by label, and the figures read off the families
//! (free spectral range and group index when the azimuthal order is swept).
//!
//! Each point's result is written to `points/point_NNN.json` as soon as it
//! is solved, with a fingerprint of the case; a sweep run again in the same
//! folder loads the points it already has and solves only the rest, so a long
//! sweep that was interrupted resumes where it stopped.
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use twistmode_analysis::{families, Family, FamilyMember};
use twistmode_io::case::Case;

use crate::model::reference_radius;
use crate::run::solve_case;
use crate::{ModeReport, PipelineError, SolveSettings};

/// Reads the case with extra `--set` overrides.
pub type CaseLoader<'a> = dyn Fn(&[(String, String)]) -> Result<Case, PipelineError> + 'a;

/// What to vary.
#[derive(Clone, Debug)]
pub struct SweepPlan {
    /// Dotted case key, e.g. `search.m` or `section.width`.
    pub key: String,
    /// Values, in the case file's units.
    pub values: Vec<f64>,
}

/// One solved point, as stored on disk.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct SweepPoint {
    /// Fingerprint of the case text and fixed overrides.
    pub fingerprint: String,
    /// The varied key.
    pub key: String,
    /// Its value at this point.
    pub value: f64,
    /// Family label, real frequency (Hz), Q (null: infinite) of each mode.
    pub modes: Vec<(String, f64, Option<f64>)>,
}

/// Free spectral range and group index of one family around one order.
#[derive(Clone, Debug, Serialize)]
pub struct RangeFigure {
    /// Mid-point between the two orders.
    pub m: f64,
    /// Free spectral range, Hz.
    pub fsr_hz: f64,
    /// Group index `c / (2 pi R FSR)`.
    pub group_index: Option<f64>,
}

/// A family with its derived figures.
#[derive(Clone, Debug, Serialize)]
pub struct FamilyReport {
    /// The family.
    #[serde(flatten)]
    pub family: Family,
    /// Free spectral range and group index (sweeps of `search.m` only).
    pub ranges: Vec<RangeFigure>,
}

/// The result of a sweep.
#[derive(Clone, Debug, Serialize)]
pub struct SweepOutcome {
    /// The varied key.
    pub key: String,
    /// Points solved now.
    pub solved: usize,
    /// Points loaded from an earlier run.
    pub resumed: usize,
    /// Families.
    pub families: Vec<FamilyReport>,
}

/// FNV-1a hash (64 bit) of the text, as hex: a fingerprint, not security.
fn fingerprint(text: &str) -> String {
    let mut h: u64 = 0xcbf29ce484222325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x100000001b3);
    }
    format!("{h:016x}")
}

/// Runs a sweep. `load_case(overrides)` reads the case with extra overrides
/// (so relative paths resolve as for `solve`); `progress(done, total)` is
/// called after each point.
pub fn run_sweep(
    case_text: &str,
    fixed: &[(String, String)],
    load_case: &CaseLoader<'_>,
    plan: &SweepPlan,
    settings: &SolveSettings,
    dir: &Path,
    progress: &dyn Fn(usize, usize),
) -> Result<SweepOutcome, PipelineError> {
    let points_dir = dir.join("points");
    std::fs::create_dir_all(&points_dir).map_err(|e| {
        PipelineError::Incomplete(format!("cannot create {}: {e}", points_dir.display()))
    })?;
    let mut print = String::from(case_text);
    for (k, v) in fixed {
        print.push_str(&format!("\n{k}={v}"));
    }
    let fp = fingerprint(&print);
    let mut points = Vec::new();
    let (mut solved, mut resumed) = (0, 0);
    let mut radius = None;
    for (i, &value) in plan.values.iter().enumerate() {
        let path: PathBuf = points_dir.join(format!("point_{i:03}.json"));
        let old: Option<SweepPoint> = std::fs::read(&path)
            .ok()
            .and_then(|b| serde_json::from_slice(&b).ok())
            .filter(|p: &SweepPoint| p.fingerprint == fp && p.key == plan.key && p.value == value);
        let mut overrides = fixed.to_vec();
        overrides.push((plan.key.clone(), format!("{value}")));
        let case = load_case(&overrides)?;
        radius = reference_radius(&case);
        let point = match old {
            Some(p) => {
                resumed += 1;
                p
            }
            None => {
                let outcome = solve_case(&case, settings)?;
                let p = SweepPoint {
                    fingerprint: fp.clone(),
                    key: plan.key.clone(),
                    value,
                    modes: outcome
                        .modes
                        .iter()
                        .map(|m: &ModeReport| (m.label.to_string(), m.frequency_hz[0], m.q))
                        .collect(),
                };
                twistmode_io::output::write_json(&path, &p)?;
                solved += 1;
                p
            }
        };
        points.push(point);
        progress(i + 1, plan.values.len());
    }
    let labelled: Vec<(String, FamilyMember)> = points
        .iter()
        .flat_map(|p| {
            p.modes.iter().map(move |(label, f, q)| {
                (
                    label.clone(),
                    FamilyMember {
                        parameter: p.value,
                        frequency_hz: *f,
                        q: q.unwrap_or(f64::INFINITY),
                    },
                )
            })
        })
        .collect();
    let azimuthal = plan.key == "search.m";
    let families = families(&labelled)
        .into_iter()
        .map(|family| {
            let ranges = if azimuthal {
                let gi = radius.map(|r| family.group_index(r));
                family
                    .free_spectral_range(1.0)
                    .into_iter()
                    .enumerate()
                    .map(|(i, (m, fsr))| RangeFigure {
                        m,
                        fsr_hz: fsr,
                        group_index: gi.as_ref().map(|g| g[i].1),
                    })
                    .collect()
            } else {
                Vec::new()
            };
            FamilyReport { family, ranges }
        })
        .collect();
    Ok(SweepOutcome {
        key: plan.key.clone(),
        solved,
        resumed,
        families,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fingerprint_is_stable_and_sensitive() {
        // FNV-1a of the empty string is the offset basis (Fowler, Noll, Vo).
        assert_eq!(fingerprint(""), "cbf29ce484222325");
        assert_ne!(fingerprint("a"), fingerprint("b"));
    }
}
