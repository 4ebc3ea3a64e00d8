//! The memory a factorisation needs: [`ShiftInvert::estimated_factor_bytes`] (known after
//! the symbolic analysis) against what the first numeric factorisation allocates (counted
//! by this program's allocator) and the growth of its peak resident memory.
//!
//! ```text
//! cargo run --release -p twistmode-eigen --example factor_memory -- [CELLS] [--symmetric] [--copies C] [--ordering auto|colamd|amd|node-major] [--parallel]
//! cargo run --release -p twistmode-eigen --example factor_memory -- --read DIR [--ordering ...]
//! ```
//! The pencil is `model::helmholtz_p1_absorbing(CELLS)` (default 201), its symmetric part
//! with `--symmetric`, `C` coupled copies with `--copies`, or the `DIR/k.mtx`, `DIR/m.mtx`
//! written by `bench_pencil --write DIR`. The shift is 2000. The resident peak comes from
//! `/proc/self/status` (VmHWM, reset through `/proc/self/clear_refs` where allowed).
//! The factorisation runs on one thread unless `--parallel` (the allocations are counted
//! on the calling thread only; besides, the dense kernels reserve about 1 GB of address
//! space, untouched and not resident, on every thread that first calls them).

#[path = "common/args.rs"]
mod args;
#[path = "common/counting.rs"]
mod counting;

use std::path::Path;
use std::time::Instant;

use twistmode_eigen::model::{coupled_copies, helmholtz_p1_absorbing, symmetric_part};
use twistmode_eigen::{
    amd_ordering, c64, node_major_ordering, read_matrix_market, FillOrdering, Pencil, ShiftInvert,
};

use args::Args;
use counting::{peak_of, Counting};

#[global_allocator]
static ALLOCATOR: Counting = Counting;

/// A `kB` field of `/proc/self/status`, in bytes.
fn status_bytes(field: &str) -> Option<usize> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with(field))?;
    let kib: usize = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

fn mib(bytes: usize) -> f64 {
    bytes as f64 / (1024.0 * 1024.0)
}

fn main() {
    let args = Args::from_env();
    let cells = args
        .size(&["--copies", "--read", "--ordering"])
        .unwrap_or(201);
    let copies: usize = args
        .value_of("--copies")
        .map_or(1, |c| c.parse().expect("--copies C"));
    let ordering = args.value_of("--ordering").unwrap_or_else(|| "auto".into());

    // with copies, the base pencil stays for the node-major ordering of one copy
    let (pencil, coupled) = if let Some(dir) = args.value_of("--read") {
        let dir = Path::new(&dir);
        let k = read_matrix_market(&dir.join("k.mtx")).expect("DIR/k.mtx");
        let m = read_matrix_market(&dir.join("m.mtx")).expect("DIR/m.mtx");
        (Pencil::try_new(k, m).expect("a square pencil"), None)
    } else {
        let p1 = helmholtz_p1_absorbing(cells);
        let base = if args.has("--symmetric") {
            symmetric_part(&p1)
        } else {
            p1
        };
        if copies > 1 {
            let (pencil, members) = coupled_copies(&base, copies, 100.0);
            (pencil, Some((base, members)))
        } else {
            (base, None)
        }
    };
    let ordering = match ordering.as_str() {
        "auto" => None,
        "colamd" => Some(FillOrdering::Colamd),
        "amd" => Some(FillOrdering::AmdSymmetric),
        "node-major" => {
            let (base, members) = coupled.as_ref().expect("node-major needs --copies");
            let order_2d = amd_ordering(base.k.symbolic()).expect("AMD of one copy");
            Some(FillOrdering::Given(
                node_major_ordering(&order_2d, members).expect("node-major ordering"),
            ))
        }
        other => panic!("unknown ordering {other}"),
    };
    drop(coupled);
    if !args.has("--parallel") {
        faer::set_global_parallelism(faer::Par::Seq);
    }
    let sigma = c64::new(2000.0, 0.0);

    // The dense kernels reserve about 1 GB of address space per thread at their first
    // call (untouched, not resident); warm every thread up so it stays out of the counts.
    {
        let warm = helmholtz_p1_absorbing(41);
        let mut op = ShiftInvert::try_new_with_ordering(&warm, FillOrdering::Colamd).unwrap();
        op.factor(sigma).unwrap();
    }

    let t = Instant::now();
    let mut op = match ordering {
        None => ShiftInvert::try_new(&pencil),
        Some(ordering) => ShiftInvert::try_new_with_ordering(&pencil, ordering),
    }
    .expect("symbolic analysis");
    let analysis = t.elapsed().as_secs_f64();
    let estimate = op.estimated_factor_bytes();

    let rss_reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();
    let rss_before = status_bytes("VmRSS:").unwrap_or(0);
    let t = Instant::now();
    let mut report = None;
    let allocated = peak_of(|| report = Some(op.factor(sigma).expect("factorisation")));
    let factor_seconds = t.elapsed().as_secs_f64();
    let report = report.expect("a factor report");
    let rss_peak = status_bytes("VmHWM:").unwrap_or(0);

    let ordering = match op.ordering() {
        FillOrdering::Given(_) => "given".to_string(),
        other => format!("{other:?}"),
    };
    println!(
        "n = {}, nnz(pattern) = {}, {} ({ordering}), fill_nnz = {}",
        op.dim(),
        op.pattern_nnz(),
        op.factorisation().name(),
        op.fill_nnz()
    );
    println!(
        "analysis {analysis:.2} s, factorisation {factor_seconds:.2} s (numeric {:.2} s)",
        report.seconds
    );
    println!(
        "estimate {:.1} MiB, allocated at the peak {:.1} MiB: estimate / allocated = {:.3}",
        mib(estimate),
        mib(allocated),
        estimate as f64 / allocated as f64
    );
    if rss_reset && rss_peak > rss_before {
        let grown = rss_peak - rss_before;
        println!(
            "resident peak grew by {:.1} MiB: estimate / resident growth = {:.3}",
            mib(grown),
            estimate as f64 / grown as f64
        );
    } else {
        println!("resident peak not measurable here (VmHWM could not be reset)");
    }
}
