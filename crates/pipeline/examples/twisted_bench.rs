//! Bench of one twisted-ring solve (not a timed test): the physical-sector pencil of a
//! case at window half-width `K`, factorised and iterated with one inner solver, with the
//! unknowns, factor fill, seconds per stage and the process's peak resident memory after
//! each stage (`VmHWM` from `/proc/self/status`, Linux). One solver per process, so the
//! peak belongs to it; `tools/bench_twisted.sh` runs the set and writes a table.
//!
//! ```text
//! cargo run --release -p twistmode-pipeline --example twisted_bench -- \
//!     CASE.toml K MODE [key=value ...]
//! ```
//! MODE: `untwisted` (the ring with `half_turns = 0` on the same mesh, integer order
//! nearest the window centre, the pipeline's symmetric solve), `colamd`, `amd`, `node`
//! (LU with that fill ordering; `node` keeps the harmonics of one 2D unknown together,
//! the 2D unknowns in AMD order), `symmetric` (the mirror-adapted complex-symmetric
//! pencil and the symmetric indefinite factorisation; needs a mirror-symmetric mesh).

use std::path::Path;
use std::time::Instant;

use faer::sparse::SymbolicSparseColMat;
use twistmode_eigen::{
    amd_ordering, node_major_ordering, solve_near, FillOrdering, Pencil, SolveOptions,
};
use twistmode_fem::{HarmonicWindow, TwistedRing};
use twistmode_io::case::{Case, ModeOrder};
use twistmode_pipeline::{
    build_mesh, set_up, solve_case, twisted::physical_sectors, SolveSettings,
};

/// Peak resident memory of this process so far, MiB.
fn peak_mib() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .map_or(f64::NAN, |kib| kib / 1024.0)
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if args.len() < 4 {
        return Err("usage: twisted_bench CASE.toml K MODE [key=value ...]".into());
    }
    let path = Path::new(&args[1]);
    let k: u32 = args[2].parse()?;
    let mode = args[3].as_str();
    let mut overrides: Vec<(String, String)> = args[4..]
        .iter()
        .map(|a| {
            let (key, value) = a.split_once('=').ok_or("overrides are key=value")?;
            Ok::<_, String>((key.to_string(), value.to_string()))
        })
        .collect::<Result<_, _>>()?;
    overrides.push(("search.harmonics".into(), k.to_string()));
    let mirror = if mode == "symmetric" { "true" } else { "false" };
    overrides.push(("mesh.mirror_symmetric".into(), mirror.into()));
    let case = Case::load(path, &overrides)?;
    let ModeOrder::Azimuthal(centre) = case.search.order else {
        return Err("a ring case (search.m) is needed".into());
    };
    let (re, im) = case.search.complex_k0();
    let sigma = twistmode_eigen::c64::new(re, im).powi(2);

    if mode == "untwisted" {
        let m = centre.value().round();
        let mut flat = overrides.clone();
        flat.push(("body.half_turns".into(), "0".into()));
        flat.push(("search.m".into(), format!("{m}")));
        flat.push(("mesh.pi_symmetric".into(), "true".into()));
        // The case file's own search.harmonics is refused on an untwisted ring: drop it.
        let text: String = std::fs::read_to_string(path)?
            .lines()
            .filter(|l| !l.trim_start().starts_with("harmonics"))
            .map(|l| format!("{l}\n"))
            .collect();
        let flat_path =
            std::env::temp_dir().join(format!("twisted_bench_{}.toml", std::process::id()));
        std::fs::write(&flat_path, text)?;
        flat.retain(|(key, _)| key != "search.harmonics");
        let case = Case::load(&flat_path, &flat);
        std::fs::remove_file(&flat_path)?;
        let case = case?;
        let start = Instant::now();
        let outcome = solve_case(&case, &SolveSettings::default())?;
        let s = &outcome.solver;
        let target = case.search.k0();
        let nearest = outcome
            .modes
            .iter()
            .min_by(|a, b| {
                (a.k0[0] - target)
                    .abs()
                    .total_cmp(&(b.k0[0] - target).abs())
            })
            .map_or(f64::NAN, |m| m.frequency_hz[0]);
        println!(
            "untwisted m={m}: nearest Re f {:.9} GHz, {} unknowns, factor {} ({} entries), analysis+factor {:.2} s, iterations {:.2} s ({} applications), total {:.2} s, peak {:.0} MiB",
            nearest * 1e-9,
            s.dofs,
            s.factorisation,
            s.fill_nnz,
            s.factor_seconds,
            s.iteration_seconds,
            s.operator_applications,
            start.elapsed().as_secs_f64(),
            peak_mib()
        );
        return Ok(());
    }

    let start = Instant::now();
    let (mesh, facts) = build_mesh(&case)?;
    let setup = set_up(&case, &mesh)?;
    let mut ring = TwistedRing::try_new(&mesh, setup)?;
    if mode == "symmetric" {
        let mirror = mesh
            .mirror_partner_nodes()
            .ok_or("the mesh is not mirror-symmetric (section or polygon vertices)")?;
        ring = ring.with_mirror(mirror)?;
    }
    let parts = ring.assemble_parts(2 * k)?;
    let half_turns = match case.body {
        twistmode_io::case::Body::Ring { half_turns, .. } => half_turns,
        _ => return Err("a ring case is needed".into()),
    };
    let sector = physical_sectors(half_turns, centre.twice(), ring.rotation().is_some())[0];
    let window = HarmonicWindow {
        centre: centre.value(),
        tau: ring.tau(),
        half_width: k,
    };
    let mut system = ring.block_system(
        &parts,
        window,
        sector,
        0.1 * case.search.harmonic_tolerance,
        mode == "symmetric",
    )?;
    let assembled = start.elapsed().as_secs_f64();
    let assembly_peak = peak_mib();
    // (kept only where the node-major ordering needs it, so peaks stay comparable)
    let pattern_2d = if mode == "node" {
        Some(system.stiffness.symbolic().to_owned()?)
    } else {
        None
    };
    let (stiffness, mass) = system.take_matrices();
    let pencil = Pencil::try_new(stiffness, mass)?;
    let lu_ordering = match mode {
        "colamd" => Some(FillOrdering::Colamd),
        "amd" => Some(FillOrdering::AmdSymmetric),
        "node" => {
            // The pattern of the 2D unknowns (an unknown's group couples another's when
            // any harmonic of one meets any harmonic of the other), in AMD order.
            let groups = system.unknowns_by_dof();
            let mut owner = vec![0usize; system.dim()];
            for (g, members) in groups.iter().enumerate() {
                for &u in members {
                    owner[u] = g;
                }
            }
            let mut cols: Vec<Vec<usize>> = vec![Vec::new(); groups.len()];
            let a = pattern_2d.as_ref().expect("kept for node").as_ref();
            for j in 0..a.ncols() {
                for &i in a.row_idx_of_col_raw(j) {
                    cols[owner[j]].push(owner[i]);
                }
            }
            let (mut col_ptr, mut row_idx) = (vec![0usize], Vec::new());
            for c in &mut cols {
                c.sort_unstable();
                c.dedup();
                row_idx.extend_from_slice(c);
                col_ptr.push(row_idx.len());
            }
            let pattern = SymbolicSparseColMat::new_checked(
                groups.len(),
                groups.len(),
                col_ptr,
                None,
                row_idx,
            );
            let order_2d = amd_ordering(pattern.as_ref())?;
            Some(FillOrdering::Given(node_major_ordering(
                &order_2d, &groups,
            )?))
        }
        "symmetric" => None,
        other => return Err(format!("unknown mode '{other}'").into()),
    };
    let opts = SolveOptions {
        count: (case.search.count + 4).min(pencil.dim()),
        // TWISTED_BENCH_TOL sets the residual bound (default 1e-10)
        tol: std::env::var("TWISTED_BENCH_TOL")
            .ok()
            .and_then(|v| v.parse().ok())
            .unwrap_or(1e-10),
        static_below: 1e-6 * sigma.norm(),
        lu_ordering,
        // TWISTED_BENCH_KRYLOV=n sets the Krylov basis size (default: the eigen crate's)
        krylov_dim: std::env::var("TWISTED_BENCH_KRYLOV")
            .ok()
            .and_then(|v| v.parse().ok()),
        ..SolveOptions::default()
    };
    let pencil_peak = peak_mib();
    // The eigen crate's own estimate of the factorisation's bytes, from its analysis.
    let (estimate, analysis_peak) = {
        let op = match &opts.lu_ordering {
            Some(o) => twistmode_eigen::ShiftInvert::try_new_with_ordering(&pencil, o.clone())?,
            None => twistmode_eigen::ShiftInvert::try_new(&pencil)?,
        };
        (op.estimated_factor_bytes() as f64 / 1048576.0, peak_mib())
    };
    eprintln!(
        "  peaks: assembly {assembly_peak:.0} MiB, pencil {pencil_peak:.0} MiB, analysis {analysis_peak:.0} MiB; factor estimate {estimate:.0} MiB"
    );
    let spectrum = solve_near(&pencil, sigma, &opts)?;
    let s = &spectrum.stats;
    let nearest = spectrum
        .pairs
        .iter()
        .map(|p| p.lambda.sqrt())
        .min_by(|a, b| {
            (a - sigma.sqrt())
                .norm()
                .total_cmp(&(b - sigma.sqrt()).norm())
        })
        .map_or(f64::NAN, |k0| k0.re);
    println!(
        "{mode} K={k}: {} triangles, {} unknowns, {} pattern entries, factor {:?} {} entries ({:.0} MiB), assembly {assembled:.2} s (peak {assembly_peak:.0} MiB), analysis {:.2} s, factor {:.2} s, iterations {:.2} s ({} applications), total {:.2} s, peak {:.0} MiB, nearest Re k0 {nearest:.9} 1/m, status {:?}",
        facts.triangles,
        s.n,
        s.pattern_nnz,
        s.factorisation,
        s.fill_nnz,
        s.fill_nnz as f64 * 16.0 / 1048576.0,
        s.analysis_seconds,
        s.factor_seconds,
        s.iteration_seconds,
        s.operator_applications,
        start.elapsed().as_secs_f64(),
        peak_mib(),
        spectrum.status
    );
    Ok(())
}
