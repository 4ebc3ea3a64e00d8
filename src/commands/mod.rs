//! One function per subcommand; each returns `anyhow::Result` for the binary.
use std::path::Path;

use anyhow::{Context, Result};
use twistmode::pipeline::{solve_case_reporting, SolveOutcome, SolveSettings};
use twistmode::report::{modes_table, write_tables, ResultsDocument};
use twistmode_io::case::{parse_set_argument, Body, Case};
use twistmode_io::vtk::{write_section_vtu, NodalField};

use crate::cli::{CaseArgs, Cli, Command, DemoArgs, SolveArgs, SweepArgs, ValidateArgs};

/// The built-in demo case (a scenario of our own).
const DEMO_CASE: &str = include_str!("../../examples/demo_ribbon_ring.toml");

/// Runs a parsed command line.
pub fn run(cli: Cli) -> Result<()> {
    match cli.command {
        Command::Mesh(args) => mesh(&args),
        Command::Solve(args) => solve(&args),
        Command::Demo(args) => demo(&args),
        Command::Validate(args) => validate(&args),
        Command::Sweep(args) => sweep(&args),
    }
}

fn overrides(set: &[String]) -> Result<Vec<(String, String)>> {
    set.iter()
        .map(|s| parse_set_argument(s).map_err(anyhow::Error::from))
        .collect()
}

fn load(args: &CaseArgs) -> Result<Case> {
    let ov = overrides(&args.set)?;
    Ok(Case::load(&args.case, &ov)?)
}

fn make_dir(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir).with_context(|| format!("cannot create folder {}", dir.display()))
}

fn mesh(args: &CaseArgs) -> Result<()> {
    let case = load(args)?;
    make_dir(&args.out)?;
    let (mesh, facts) = twistmode::pipeline::build_mesh(&case)?;
    let q = mesh.quality();
    println!("mesh: {q}");
    println!("made in {:.3} s", facts.seconds);
    let msh = args.out.join("mesh.msh");
    twistmode_mesh::write_gmsh(&mesh, &msh)?;
    println!("wrote {}", msh.display());
    let png = args.out.join("mesh.png");
    twistmode::pictures::mesh_preview(&mesh, &case, &png)?;
    println!("wrote {}", png.display());
    Ok(())
}

fn body_words(case: &Case) -> String {
    match case.body {
        Body::Revolution => "body of revolution".into(),
        Body::Ring { radius, half_turns } => {
            format!("ring, radius {radius:e} m, {half_turns} half turns")
        }
        Body::Straight { twist_rate } => format!("straight guide, twist rate {twist_rate} rad/m"),
    }
}

fn solve_and_write(
    case: &Case,
    case_file: Option<&Path>,
    out: &Path,
    settings: &SolveSettings,
    json_to_stdout: bool,
    plots: bool,
) -> Result<()> {
    make_dir(out)?;
    eprintln!("solving: {}", body_words(case));
    // A spinner with the current stage and the time spent (stderr; hidden when
    // stderr is not a terminal).
    let spinner = indicatif::ProgressBar::new_spinner();
    spinner.set_style(
        indicatif::ProgressStyle::with_template("{spinner} {msg} ({elapsed})")
            .expect("valid template"),
    );
    spinner.enable_steady_tick(std::time::Duration::from_millis(200));
    let outcome = solve_case_reporting(case, settings, |stage| {
        spinner.set_message(stage.to_string())
    });
    spinner.finish_and_clear();
    let outcome: SolveOutcome = outcome?;
    let doc = ResultsDocument::new(&outcome, case_file, body_words(case));
    let mut written = write_tables(&doc, out)?;
    let msh = out.join("mesh.msh");
    twistmode_mesh::write_gmsh(&outcome.mesh, &msh)?;
    written.push(msh);
    let vtu = out.join("fields.vtu");
    let fields: Vec<NodalField<'_>> = outcome
        .modes
        .iter()
        .zip(&outcome.nodal_fields)
        .map(|(mode, values)| NodalField {
            name: format!("mode_{:02}_E", mode.index),
            values,
        })
        .collect();
    write_section_vtu(&outcome.mesh, &fields, case.length_unit, &vtu)?;
    written.push(vtu);
    if plots {
        written.extend(twistmode::pictures::write_pictures(&outcome, case, out)?);
    }
    if json_to_stdout {
        println!("{}", serde_json::to_string_pretty(&doc)?);
    } else {
        let s = &outcome.solver;
        println!(
            "mesh: {} triangles (order {}), {} unknowns ({} removed by walls/axis); factor ({}) {} complex entries, {:.0} MiB",
            outcome.mesh_facts.triangles,
            outcome.mesh_facts.order,
            s.dofs,
            s.dofs_constrained,
            s.factorisation,
            s.fill_nnz,
            s.fill_nnz as f64 * 16.0 / (1024.0 * 1024.0)
        );
        println!(
            "solver: {}; static pairs set aside {}, PML modes dropped {}, box modes dropped {}",
            s.status, s.static_dropped, s.pml_dropped, s.box_dropped
        );
        if let Some(note) = &s.shortfall {
            println!("note: {note}");
        }
        println!(
            "time: mesh {:.2} s, assembly {:.2} s, factorisation {:.2} s, iterations {:.2} s ({} operator applications)",
            outcome.mesh_facts.seconds, s.assembly_seconds, s.factor_seconds, s.iteration_seconds, s.operator_applications
        );
        println!();
        print!("{}", modes_table(&outcome.modes).to_text());
        println!();
        for p in &written {
            println!("wrote {}", p.display());
        }
    }
    Ok(())
}

fn solve(args: &SolveArgs) -> Result<()> {
    let case = load(&args.case)?;
    let settings = SolveSettings {
        tolerance: args.tolerance,
        keep_all: args.all,
        max_memory: args.max_memory,
        ..SolveSettings::default()
    };
    solve_and_write(
        &case,
        Some(&args.case.case),
        &args.case.out,
        &settings,
        args.json,
        !args.no_plots,
    )
}

fn demo(args: &DemoArgs) -> Result<()> {
    let ov = overrides(&args.set)?;
    let case = Case::from_toml_str(DEMO_CASE, &ov)?;
    println!("twistmode demo: a ceramic ribbon ring (see examples/demo_ribbon_ring.toml)");
    solve_and_write(
        &case,
        None,
        &args.out,
        &SolveSettings::default(),
        false,
        true,
    )
}

type ValidationGroup = (
    &'static str,
    fn(
        twistmode::validate::Level,
    ) -> Result<Vec<twistmode::validate::Check>, twistmode::validate::ValidateError>,
);

fn validate(args: &ValidateArgs) -> Result<()> {
    use twistmode::validate::{cavity, fibre, sphere, Level};
    let level = if args.full { Level::Full } else { Level::Quick };
    let groups: [ValidationGroup; 3] = [
        ("cavity", cavity::run),
        ("sphere", sphere::run),
        ("fibre", fibre::run),
    ];
    for name in &args.only {
        if !groups.iter().any(|(g, _)| g == name) {
            anyhow::bail!("--only {name}: unknown group; use cavity, sphere or fibre");
        }
    }
    make_dir(&args.out)?;
    let mut checks = Vec::new();
    for (name, run) in groups {
        if !args.only.is_empty() && !args.only.iter().any(|o| o == name) {
            continue;
        }
        eprintln!("validating: {name} ({level:?})");
        checks.extend(run(level)?);
    }
    let table = twistmode::validate::checks_table(&checks);
    print!("{}", table.to_text());
    twistmode_io::output::write_json(&args.out.join("validation.json"), &checks)?;
    table.write_csv(&args.out.join("validation.csv"))?;
    let failed = checks.iter().filter(|c| !c.passed()).count();
    println!("{} passed, {} failed", checks.len() - failed, failed);
    if failed > 0 {
        anyhow::bail!("{failed} validation checks outside tolerance");
    }
    Ok(())
}

fn sweep(args: &SweepArgs) -> Result<()> {
    use twistmode::pipeline::sweep::{run_sweep, SweepPlan};
    use twistmode_io::plot::{plot_lines, Series};
    if args.step.is_nan()
        || args.step <= 0.0
        || !args.from.is_finite()
        || !args.to.is_finite()
        || args.to < args.from
    {
        anyhow::bail!(
            "--from {} --to {} --step {}: need finite values with from <= to and a positive step",
            args.from,
            args.to,
            args.step
        );
    }
    let count = ((args.to - args.from) / args.step + 1e-9).floor() as usize + 1;
    if count > 10_000 {
        anyhow::bail!(
            "--step {}: {count} points is too many; use a larger step",
            args.step
        );
    }
    let values: Vec<f64> = (0..count)
        .map(|i| args.from + i as f64 * args.step)
        .collect();
    let fixed = overrides(&args.case.set)?;
    let text = std::fs::read_to_string(&args.case.case)
        .with_context(|| format!("cannot read {}", args.case.case.display()))?;
    // Check the case once with the first value, so errors come before any work.
    let mut first = fixed.clone();
    first.push((args.vary.clone(), format!("{}", values[0])));
    Case::load(&args.case.case, &first)?;
    make_dir(&args.case.out)?;
    let bar = indicatif::ProgressBar::new(values.len() as u64);
    bar.set_style(
        indicatif::ProgressStyle::with_template(
            "{bar:40} {pos}/{len} points, {elapsed} elapsed, about {eta} left",
        )
        .expect("valid template"),
    );
    let case_path = args.case.case.clone();
    let load = move |ov: &[(String, String)]| -> Result<Case, twistmode::pipeline::PipelineError> {
        Ok(Case::load(&case_path, ov)?)
    };
    let outcome = run_sweep(
        &text,
        &fixed,
        &load,
        &SweepPlan {
            key: args.vary.clone(),
            values,
        },
        &SolveSettings::default(),
        &args.case.out,
        &|done, _| bar.set_position(done as u64),
    )?;
    bar.finish_and_clear();
    eprintln!(
        "sweep of {}: {} points solved, {} resumed from {}",
        outcome.key,
        outcome.solved,
        outcome.resumed,
        args.case.out.join("points").display()
    );
    let mut table = twistmode_io::output::Table::new([
        "family",
        &args.vary,
        "Re f (Hz)",
        "Q",
        "FSR (Hz)",
        "group index",
    ]);
    for fam in &outcome.families {
        for m in &fam.family.members {
            let range = fam
                .ranges
                .iter()
                .find(|r| (r.m - (m.parameter + 0.5)).abs() < 1e-9);
            table.try_push_row([
                fam.family.label.clone(),
                format!("{}", m.parameter),
                format!("{:.9e}", m.frequency_hz),
                if m.q.is_finite() {
                    format!("{:.4e}", m.q)
                } else {
                    "inf".into()
                },
                range
                    .map(|r| format!("{:.6e}", r.fsr_hz))
                    .unwrap_or_default(),
                range
                    .and_then(|r| r.group_index)
                    .map(|g| format!("{g:.5}"))
                    .unwrap_or_default(),
            ])?;
        }
    }
    print!("{}", table.to_text());
    let out = &args.case.out;
    twistmode_io::output::write_json(&out.join("families.json"), &outcome)?;
    table.write_csv(&out.join("families.csv"))?;
    let series: Vec<Series> = outcome
        .families
        .iter()
        .map(|f| Series {
            name: f.family.label.clone(),
            points: f
                .family
                .members
                .iter()
                .map(|m| (m.parameter, m.frequency_hz / 1e9))
                .collect(),
        })
        .collect();
    plot_lines(
        &out.join("families.png"),
        "mode families",
        &args.vary,
        "Re f (GHz)",
        &series,
    )?;
    for name in ["families.json", "families.csv", "families.png"] {
        println!("wrote {}", out.join(name).display());
    }
    Ok(())
}
