//! Fill of the twisted-ring block pencil under the orderings the eigen crate offers.
//!
//! `cargo run --release -p twistmode-pipeline --example twisted_orderings -- CASE [K ...]`
use std::time::Instant;

use twistmode_eigen::{FillOrdering, Pencil, ShiftInvert};
use twistmode_fem::{HarmonicWindow, TwistedRing};
use twistmode_io::case::{Case, ModeOrder};
use twistmode_pipeline::{build_mesh, set_up};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let case = Case::load(std::path::Path::new(&args[1]), &[])?;
    let ks: Vec<u32> = args[2..].iter().map(|s| s.parse().unwrap()).collect();
    let (mesh, _) = build_mesh(&case)?;
    let setup = set_up(&case, &mesh)?;
    let ring = TwistedRing::try_new(&mesh, setup)?;
    let ModeOrder::Azimuthal(m) = case.search.order else {
        panic!("ring")
    };
    let kmax = *ks.iter().max().unwrap();
    let parts = ring.assemble_parts(2 * kmax)?;
    let k0 = case.search.k0();
    for &k in &ks {
        let window = HarmonicWindow {
            centre: m.value(),
            tau: ring.tau(),
            half_width: k,
        };
        let s = if m.twice() % 2 == 0 { 1.0 } else { -1.0 };
        let system = ring.block_system(&parts, window, Some(s), 0.0, false)?;
        let pencil = Pencil::try_new(system.stiffness.clone(), system.mass.clone())?;
        for ordering in [FillOrdering::Colamd, FillOrdering::AmdSymmetric] {
            let t = Instant::now();
            let mut op = ShiftInvert::try_new_with_ordering(&pencil, ordering)?;
            let a = t.elapsed().as_secs_f64();
            let t = Instant::now();
            op.factor(twistmode_eigen::c64::new(k0 * k0, 0.0))?;
            println!(
                "K {k}: n {} nnz {} {:?}: fill {} ({:.0}/row), analysis {a:.2} s, factor {:.2} s",
                pencil.dim(),
                op.pattern_nnz(),
                ordering,
                op.fill_nnz(),
                op.fill_nnz() as f64 / pencil.dim() as f64,
                t.elapsed().as_secs_f64()
            );
        }
    }
    Ok(())
}
