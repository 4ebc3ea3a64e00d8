//! Every flag and subcommand of the `twistmode` binary.
use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

/// Resonant modes of dielectric resonators from a 2D vector finite-element
/// model of their cross-section.
#[derive(Debug, Parser)]
#[command(name = "twistmode", version, about, long_about = None)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// Subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Mesh a case's cross-section; write the mesh (Gmsh MSH) and a PNG preview.
    Mesh(CaseArgs),
    /// Find the resonances of a case near its target frequency.
    Solve(SolveArgs),
    /// Solve the built-in demo case (a ceramic ribbon ring) and write all outputs.
    Demo(DemoArgs),
    /// Compare the solver with exact answers (metal cavities, Mie sphere, fibre).
    Validate(ValidateArgs),
    /// Solve a case over a range of one key and follow the mode families.
    Sweep(SweepArgs),
}

/// Options of `sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// Case, overrides, output folder.
    #[command(flatten)]
    pub case: CaseArgs,
    /// The case key to vary, e.g. `search.m` or `section.width`.
    #[arg(long, value_name = "KEY")]
    pub vary: String,
    /// First value (in the case file's units).
    #[arg(long)]
    pub from: f64,
    /// Last value (included when the steps land on it).
    #[arg(long)]
    pub to: f64,
    /// Step between values.
    #[arg(long, default_value_t = 1.0)]
    pub step: f64,
}

/// Options of `validate`.
#[derive(Debug, Args)]
pub struct ValidateArgs {
    /// Refined meshes (minutes) instead of the quick set (seconds).
    #[arg(long)]
    pub full: bool,
    /// Run only these groups (cavity, sphere, fibre); repeatable.
    #[arg(long, value_name = "GROUP")]
    pub only: Vec<String>,
    /// Folder for validation.json and validation.csv.
    #[arg(long, value_name = "DIR", default_value = "twistmode-validation")]
    pub out: PathBuf,
}

/// A case file with overrides and an output folder.
#[derive(Debug, Args)]
pub struct CaseArgs {
    /// The case file (TOML).
    pub case: PathBuf,
    /// Override a case key, e.g. `--set search.m=12` (repeatable).
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub set: Vec<String>,
    /// Folder for the results (created if missing).
    #[arg(long, value_name = "DIR", default_value = "twistmode-out")]
    pub out: PathBuf,
}

/// Options of `solve`.
#[derive(Debug, Args)]
pub struct SolveArgs {
    /// Case, overrides, output folder.
    #[command(flatten)]
    pub case: CaseArgs,
    /// Print the result JSON to standard output instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Keep PML and box modes instead of dropping them.
    #[arg(long)]
    pub all: bool,
    /// Residual tolerance for accepting an eigenpair.
    #[arg(long, default_value_t = 1e-8)]
    pub tolerance: f64,
    /// Do not draw field maps.
    #[arg(long)]
    pub no_plots: bool,
    /// Memory a factorisation may take, e.g. `4GB`, `512MiB` (default: 80 % of the
    /// available memory); a larger case is refused before anything is allocated.
    #[arg(long, value_name = "SIZE", value_parser = parse_size)]
    pub max_memory: Option<u64>,
}

/// A size in bytes: a number with an optional unit (B, kB, MB, GB, KiB, MiB, GiB).
fn parse_size(text: &str) -> Result<u64, String> {
    let t = text.trim();
    let split = t
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(t.len());
    let (number, unit) = t.split_at(split);
    let value: f64 = number
        .parse()
        .map_err(|_| format!("'{text}' is not a size; write e.g. 4GB or 512MiB"))?;
    let scale = match unit.trim() {
        "" | "B" => 1.0,
        "kB" | "KB" => 1e3,
        "MB" => 1e6,
        "GB" => 1e9,
        "KiB" => 1024.0,
        "MiB" => 1024.0 * 1024.0,
        "GiB" => 1024.0 * 1024.0 * 1024.0,
        other => {
            return Err(format!(
                "unknown size unit '{other}' in '{text}'; use B, kB, MB, GB, KiB, MiB or GiB"
            ))
        }
    };
    if !(value.is_finite() && value > 0.0) {
        return Err(format!("'{text}' must be a positive size"));
    }
    Ok((value * scale) as u64)
}

/// Options of `demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Folder for the results (created if missing).
    #[arg(long, value_name = "DIR", default_value = "twistmode-demo")]
    pub out: PathBuf,
    /// Override a demo case key (repeatable).
    #[arg(long = "set", value_name = "PATH=VALUE")]
    pub set: Vec<String>,
}

/// Parses the command line.
pub fn parse() -> Cli {
    Cli::parse()
}
