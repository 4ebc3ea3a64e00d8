//! Cavity bench (not a test): one metal cavity on one order-2 mesh, per-mode errors
//! against the exact modes printed. `CAVITY_BENCH=cylinder:32` (or `coaxial:24`) sets
//! the cavity and the mesh size `h = b / fraction`:
//! `CAVITY_BENCH=cylinder:32 cargo run --release --example cavity_study`.
//! Exact modes: Pozar, Microwave Engineering, sec. 6.3 (via `twistmode::validate::cavity`).
use twistmode::validate::cavity::{self, Cavity};

fn main() {
    let spec = std::env::var("CAVITY_BENCH").unwrap_or_else(|_| "cylinder:16".into());
    let (name, fraction) = spec.split_once(':').expect("CAVITY_BENCH=name:fraction");
    let cavity = if name == "coaxial" {
        Cavity::coaxial()
    } else {
        Cavity::cylinder()
    };
    let fraction: f64 = fraction.parse().expect("fraction is a number");
    let exact = cavity.exact_modes(15).unwrap();
    let beyond = cavity.exact_modes(60).unwrap();
    let b = cavity.radii_length[1];
    let c = cavity::solve_cavity(&cavity, &exact, &beyond, 2, b / fraction).unwrap();
    println!(
        "{} h = b/{fraction}: {} triangles, {:.1} s",
        cavity.name, c.triangles, c.seconds
    );
    for o in &c.per_order {
        println!(
            "  m={}: {} unknowns, {} shift(s), {} applications, {} statics, {:.1} s",
            o.m, o.dofs, o.shifts, o.applications, o.statics, o.seconds
        );
    }
    let errors = c.errors(&exact);
    for (mode, e) in exact.iter().zip(&errors) {
        println!("  {} (m = {}): {e:.3e}", cavity::label(mode), mode.m);
    }
    // Every exact mode matched (a missing or extra computed mode leaves NaN).
    if !errors.iter().all(|e| e.is_finite()) {
        eprintln!("not every exact mode was matched: {errors:?}");
        std::process::exit(1);
    }
}
