//! Result files and the text table of a solve.
//!
//! `modes.json` (schema in `docs/results.md`), `modes.csv`, the mesh as Gmsh
//! MSH, and PNG pictures. Every file is written atomically (temporary file,
//! then rename), so an interrupted run never leaves a half-written result.
use std::path::{Path, PathBuf};

use serde::Serialize;
use twistmode_io::output::{write_json, Table};

use twistmode_pipeline::{MeshFacts, ModeReport, SolveOutcome, SolverFacts};

/// Version tag of the `modes.json` layout.
pub const SCHEMA: &str = "twistmode-modes/1";

/// The JSON document of a solve.
#[derive(Serialize)]
pub struct ResultsDocument<'a> {
    /// Layout version.
    pub schema: &'static str,
    /// twistmode version that wrote it.
    pub version: &'static str,
    /// The case file, when there was one.
    pub case_file: Option<String>,
    /// Body kind and main sizes, in words.
    pub body: String,
    /// Mesh facts.
    pub mesh: &'a MeshFacts,
    /// Solver facts.
    pub solver: &'a SolverFacts,
    /// The modes.
    pub modes: &'a [ModeReport],
}

impl<'a> ResultsDocument<'a> {
    /// Wraps a solve outcome.
    pub fn new(outcome: &'a SolveOutcome, case_file: Option<&Path>, body: String) -> Self {
        ResultsDocument {
            schema: SCHEMA,
            version: env!("CARGO_PKG_VERSION"),
            case_file: case_file.map(|p| p.display().to_string()),
            body,
            mesh: &outcome.mesh_facts,
            solver: &outcome.solver,
            modes: &outcome.modes,
        }
    }
}

/// Picks a frequency unit for display.
fn frequency_unit(f: f64) -> (&'static str, f64) {
    let a = f.abs();
    if a >= 1e12 {
        ("THz", 1e12)
    } else if a >= 1e9 {
        ("GHz", 1e9)
    } else if a >= 1e6 {
        ("MHz", 1e6)
    } else {
        ("Hz", 1.0)
    }
}

/// Picks a length unit for display.
fn length_unit(x: f64) -> (&'static str, f64) {
    let a = x.abs();
    if a >= 1.0 {
        ("m", 1.0)
    } else if a >= 1e-3 {
        ("mm", 1e-3)
    } else if a >= 1e-6 {
        ("um", 1e-6)
    } else {
        ("nm", 1e-9)
    }
}

/// The modes as a table (text and CSV share it).
pub fn modes_table(modes: &[ModeReport]) -> Table {
    let f_ref = modes.first().map(|m| m.frequency_hz[0]).unwrap_or(1e9);
    let (fu, fs) = frequency_unit(f_ref);
    let l_ref = modes.first().map(|m| m.wavelength_m).unwrap_or(1.0);
    let (lu, ls) = length_unit(l_ref);
    let twisted = modes.iter().any(|m| m.twist.is_some());
    let order_head = if modes.iter().any(|m| m.beta.is_some()) {
        "beta (rad/m)"
    } else if twisted {
        // A twisted-ring mode is labelled by its dominant harmonic.
        "n"
    } else {
        "m"
    };
    let mut head = vec![
        "#".to_string(),
        order_head.to_string(),
        format!("Re f ({fu})"),
        format!("Im f ({fu})"),
        "Q".to_string(),
        format!("wavelength ({lu})"),
        "n_eff".to_string(),
        "confinement".to_string(),
        "class".to_string(),
        "residual".to_string(),
    ];
    if twisted {
        head.extend([
            "sector".to_string(),
            "dK".to_string(),
            "Q material".to_string(),
        ]);
    }
    head.push("flags".to_string());
    let mut table = Table::new(head);
    for m in modes {
        let order = match (m.m, m.beta) {
            (Some(m), _) => format!("{m}"),
            (None, Some(b)) => format!("{b:.6e}"),
            _ => String::new(),
        };
        let flags: Vec<String> = m.flags.iter().map(|f| f.short()).collect();
        // Radiation Q with a PML inside the caustic is not determined by this model.
        let q_undetermined = m
            .flags
            .iter()
            .any(|f| matches!(f, twistmode_analysis::Flag::PmlInsideCaustic { .. }));
        let q = if q_undetermined {
            "n/d".to_string()
        } else {
            m.q.map(|q| format!("{q:.4e}"))
                .unwrap_or_else(|| "inf".into())
        };
        let mut row = vec![
            m.index.to_string(),
            order,
            format!("{:.9}", m.frequency_hz[0] / fs),
            format!("{:.3e}", m.frequency_hz[1] / fs),
            q,
            format!("{:.6}", m.wavelength_m / ls),
            m.effective_index
                .map(|n| format!("{n:.6}"))
                .unwrap_or_default(),
            format!("{:.3}", m.confinement),
            m.label.to_string(),
            format!("{:.1e}", m.residual),
        ];
        if twisted {
            let t = m.twist.as_ref();
            row.push(
                t.and_then(|t| t.sector)
                    .map(|s| format!("{s:+}"))
                    .unwrap_or_else(|| "-".into()),
            );
            row.push(
                t.and_then(|t| t.convergence)
                    .map(|c| format!("{c:.1e}"))
                    .unwrap_or_else(|| "-".into()),
            );
            row.push(
                t.and_then(|t| t.q_material)
                    .map(|q| format!("{q:.4e}"))
                    .unwrap_or_else(|| "inf".into()),
            );
        }
        row.push(flags.join("; "));
        table
            .try_push_row(row)
            .expect("row has one cell per header");
    }
    table
}

/// Writes `modes.json` and `modes.csv` into `dir`; returns their paths.
pub fn write_tables(
    doc: &ResultsDocument<'_>,
    dir: &Path,
) -> Result<Vec<PathBuf>, twistmode_io::output::OutputError> {
    let json = dir.join("modes.json");
    write_json(&json, doc)?;
    let csv = dir.join("modes.csv");
    modes_table(doc.modes).write_csv(&csv)?;
    Ok(vec![json, csv])
}
