//! Benchmark: 10 eigenpairs near an interior shift of a complex, non-Hermitian 2D
//! P1 Helmholtz-like pencil with an absorbing layer (`model::helmholtz_p1_absorbing`),
//! timed against scipy's shift-invert `eigs` on the same exported pencil.
//!
//! ```text
//! cargo run --release -p twistmode-eigen --example bench_pencil -- [CELLS] [--no-scipy] [--orderings] [--symmetric] [--copies C] [--write DIR]
//! cargo run --release -p twistmode-eigen --features arpack --example bench_pencil -- [CELLS] --arpack
//! ```
//! `--arpack` (feature `arpack`) also runs ARPACK on the same shift-invert operator and
//! compares its eigenvalues with ours. `--symmetric` uses the complex-symmetric part of
//! the pencil instead (`model::symmetric_part`), which takes the symmetric factorisation;
//! with `--orderings` the LU is timed on it too. `--copies C` couples C copies of the
//! pencil like neighbouring harmonics (`model::coupled_copies`); `--orderings` then adds
//! the node-major ordering (AMD on one copy, expanded to all copies). `--write DIR` keeps
//! the exported pencil as `DIR/k.mtx`, `DIR/m.mtx` (e.g. for the `factor_memory` example).
//! CELLS = 501 gives 500^2 = 250 000 unknowns. Run from the workspace root (the scipy
//! reference is `tools/eigs_reference.py`).

#[path = "common/args.rs"]
mod args;

use std::process::Command;
use std::time::Instant;

use args::Args;
use twistmode_eigen::model::{coupled_copies, helmholtz_p1_absorbing, symmetric_part};
use twistmode_eigen::{
    amd_ordering, c64, node_major_ordering, write_matrix_market, FillOrdering, ShiftInvert,
    SolveOptions,
};

fn peak_memory_mib() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines().find(|l| l.starts_with("VmHWM:")).and_then(|l| {
                l.split_whitespace()
                    .nth(1)
                    .and_then(|v| v.parse::<f64>().ok())
            })
        })
        .map_or(f64::NAN, |kib| kib / 1024.0)
}

/// Worst relative distance from each of `ours` to the nearest of `theirs`.
fn worst_relative_difference(ours: &[c64], theirs: &[c64]) -> f64 {
    ours.iter()
        .map(|p| {
            theirs
                .iter()
                .map(|q| (p - q).norm() / q.norm())
                .fold(f64::INFINITY, f64::min)
        })
        .fold(0.0, f64::max)
}

#[cfg(feature = "arpack")]
fn arpack_cross_check(
    op: &mut ShiftInvert<'_>,
    sigma: c64,
    opts: &SolveOptions,
    ours: &[twistmode_eigen::EigenPair],
) {
    let t = Instant::now();
    let a = op.solve_near_arpack(sigma, opts).expect("ARPACK solve");
    let seconds = t.elapsed().as_secs_f64();
    let worst_residual = a.pairs.iter().map(|p| p.residual).fold(0.0, f64::max);
    let ours: Vec<c64> = ours.iter().map(|p| p.lambda).collect();
    let theirs: Vec<c64> = a.pairs.iter().map(|p| p.lambda).collect();
    println!(
        "ARPACK (same operator): status {:?}, {} pairs, total {:.2} s (factor {:.2}, iterations {:.2}), \
         {} operator applications, worst residual {:.1e}, worst relative eigenvalue difference to ours {:.1e}",
        a.status,
        a.pairs.len(),
        seconds,
        a.stats.factor_seconds,
        a.stats.iteration_seconds,
        a.stats.operator_applications,
        worst_residual,
        worst_relative_difference(&ours, &theirs)
    );
}

#[cfg(not(feature = "arpack"))]
fn arpack_cross_check(
    _: &mut ShiftInvert<'_>,
    _: c64,
    _: &SolveOptions,
    _: &[twistmode_eigen::EigenPair],
) {
    println!("--arpack needs the cargo feature `arpack` (add --features arpack)");
}

fn main() {
    let args = Args::from_env();
    let cells = args.size(&["--copies", "--write"]).unwrap_or(501);
    let copies: usize = args
        .value_of("--copies")
        .map_or(1, |c| c.parse().expect("--copies C"));
    let write_to = args.value_of("--write");
    let with_scipy = !args.has("--no-scipy");
    let compare_orderings = args.has("--orderings");
    let count = 10;
    let sigma = c64::new(2000.0, 0.0);

    let symmetric = args.has("--symmetric");
    let t = Instant::now();
    let base = if symmetric {
        // complex-symmetric variant: the symmetric factorisation is chosen
        symmetric_part(&helmholtz_p1_absorbing(cells))
    } else {
        helmholtz_p1_absorbing(cells)
    };
    // with copies, the base pencil stays for the node-major ordering of one copy
    let (pencil, coupled) = if copies > 1 {
        let (pencil, members) = coupled_copies(&base, copies, 100.0);
        (pencil, Some((base, members)))
    } else {
        (base, None)
    };
    println!(
        "pencil: n = {}, nnz(K) = {}, nnz(M) = {}, built in {:.2} s",
        pencil.dim(),
        pencil.k.as_ref().compute_nnz(),
        pencil.m.as_ref().compute_nnz(),
        t.elapsed().as_secs_f64()
    );

    if compare_orderings {
        let mut orderings = vec![FillOrdering::AmdSymmetric, FillOrdering::Colamd];
        if let Some((base, members)) = &coupled {
            let order_2d = amd_ordering(base.k.symbolic()).expect("AMD of one copy");
            let global = node_major_ordering(&order_2d, members).expect("node-major ordering");
            orderings.push(FillOrdering::Given(global));
        }
        for ordering in orderings {
            let node_major = matches!(ordering, FillOrdering::Given(_));
            let mut op = ShiftInvert::try_new_with_ordering(&pencil, ordering).unwrap();
            let r = op.factor(sigma).unwrap();
            let name = if node_major {
                "node-major (AMD on one copy)".to_string()
            } else {
                format!("{:?}", op.ordering())
            };
            println!("ordering {}: fill nnz(L+U) = {} ({:.1} x pattern), analysis {:.2} s, factor {:.2} s",
                name, op.fill_nnz(), op.fill_nnz() as f64 / op.pattern_nnz() as f64,
                op.analysis_seconds(), r.seconds);
        }
    }

    let t = Instant::now();
    let mut op = ShiftInvert::try_new(&pencil).expect("symbolic analysis");
    let opts = SolveOptions {
        count,
        tol: 1e-10,
        ..Default::default()
    };
    let s = op.solve_near(sigma, &opts).expect("solve");
    let ours = t.elapsed().as_secs_f64();
    println!("ours ({}, refinement {}): status {:?}, {} pairs, total {:.2} s (analysis {:.2}, factor {:.2}, iterations {:.2}), \
              {} operator applications, factor size {} complex entries, condition ~ {:.1e}, peak memory {:.0} MiB",
        op.factorisation().name(), op.refines(), s.status, s.pairs.len(), ours, s.stats.analysis_seconds, s.stats.factor_seconds,
        s.stats.iteration_seconds, s.stats.operator_applications, s.stats.fill_nnz, s.stats.condition,
        peak_memory_mib());
    for p in &s.pairs {
        println!(
            "  lambda = {:>22.12} {:+.12}i  residual {:.1e}",
            p.lambda.re, p.lambda.im, p.residual
        );
    }
    if args.has("--arpack") {
        arpack_cross_check(&mut op, sigma, &opts, &s.pairs);
    }
    if !with_scipy && write_to.is_none() {
        return;
    }
    let dir = write_to.clone().map_or_else(
        || std::env::temp_dir().join(format!("twistmode-eigen-bench-{}", std::process::id())),
        std::path::PathBuf::from,
    );
    std::fs::create_dir_all(&dir).unwrap();
    let (kp, mp) = (dir.join("k.mtx"), dir.join("m.mtx"));
    write_matrix_market(&kp, &pencil.k).unwrap();
    write_matrix_market(&mp, &pencil.m).unwrap();
    if !with_scipy {
        println!("pencil written to {} and {}", kp.display(), mp.display());
        return;
    }
    let out = Command::new("python3")
        .args([
            "tools/eigs_reference.py",
            kp.to_str().unwrap(),
            mp.to_str().unwrap(),
            &sigma.re.to_string(),
            &sigma.im.to_string(),
            &count.to_string(),
        ])
        .output()
        .expect("python3 tools/eigs_reference.py");
    if write_to.is_none() {
        let _ = std::fs::remove_dir_all(&dir);
    }
    if !out.status.success() {
        eprintln!(
            "scipy reference failed:\n{}",
            String::from_utf8_lossy(&out.stderr)
        );
        return;
    }
    let text = String::from_utf8_lossy(&out.stdout);
    let json: serde_json::Value =
        serde_json::from_str(text.trim()).expect("JSON from the reference");
    let scipy_seconds = json["solve_seconds"].as_f64().unwrap();
    let theirs: Vec<c64> = json["eigenvalues"]
        .as_array()
        .unwrap()
        .iter()
        .map(|z| c64::new(z[0].as_f64().unwrap(), z[1].as_f64().unwrap()))
        .collect();
    let found: Vec<c64> = s.pairs.iter().map(|p| p.lambda).collect();
    let worst = worst_relative_difference(&found, &theirs);
    println!(
        "scipy eigs: {:.2} s (load excluded), worst relative eigenvalue difference {:.1e}",
        scipy_seconds, worst
    );
    println!(
        "time ratio ours / scipy = {:.3} (goal <= 0.5)",
        ours / scipy_seconds
    );
}
