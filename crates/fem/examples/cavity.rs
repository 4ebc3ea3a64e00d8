//! Worked example: resonances of a closed metal can (a circular cylinder cavity)
//! modelled as a body of revolution, against the exact Bessel-zero formulas.
//!
//! Run with `cargo run -p twistmode-fem --release --example cavity`.
//!
//! Steps: 1 make the (r, z) mesh, 2 set up materials, placement and walls,
//! 3 assemble K and M for each azimuthal order m, 4 solve the small pencil
//! densely, 5 print each computed k0 against the exact one.
#[path = "../tests/support/mod.rs"]
mod support;

use twistmode_fem::{
    Material, MaterialTable, Order, Placement, PmlStretch, SectionProblem, SectionSetup, Wall,
};
use twistmode_mesh::{boundary_names, GeometryOrder};

/// A can 12 mm in radius and 20 mm tall, filled with a low-loss plastic of
/// relative permittivity 2.1 (our own scenario).
const RADIUS: f64 = 12e-3;
const HEIGHT: f64 = 20e-3;
const EPS_FILL: f64 = 2.1;

/// Exact k0^2 of the lowest modes of order m (Bessel zeros: A&S Table 9.5, in
/// the test support module): TM_mnp = (x_mn/a)^2 + (p pi/d)^2
/// for p >= 0, TE_mnp = (x'_mn/a)^2 + (p pi/d)^2 for p >= 1, divided by eps
/// (Pozar, Microwave Engineering, sec. 6.3).
fn exact_k0_squared(m: usize) -> Vec<f64> {
    let mut out = Vec::new();
    for p in 0..4 {
        let kz = p as f64 * std::f64::consts::PI / HEIGHT;
        for n in 0..2 {
            out.push(((support::J_ZEROS[m][n] / RADIUS).powi(2) + kz * kz) / EPS_FILL);
            if p >= 1 {
                out.push(((support::JP_ZEROS[m][n] / RADIUS).powi(2) + kz * kz) / EPS_FILL);
            }
        }
    }
    out.sort_by(f64::total_cmp);
    out
}

fn main() {
    // 1. Mesh: the rectangle [0, a] x [0, d] in (r, z); the side r = 0 is the axis.
    let mesh = support::rectangle(
        [0.0, RADIUS, 0.0, HEIGHT],
        6,
        10,
        GeometryOrder::Linear,
        ["wall", "wall", "wall", boundary_names::AXIS],
    );
    println!("mesh: {}", mesh.quality());

    // 2. Set up: second-order elements, a body of revolution, metal walls.
    let setup = SectionSetup {
        order: Order::Two,
        placement: Placement::Revolution,
        pml: PmlStretch::None,
        materials: MaterialTable::single(
            support::FILL,
            Material::with_index(EPS_FILL.sqrt()),
            Material::vacuum(),
        ),
        walls: vec![("wall".into(), Wall::ElectricConductor)],
    };
    let problem = SectionProblem::try_new(&mesh, setup).expect("valid setup");

    for m in 0..3usize {
        // 3. Assemble K and M for azimuthal order m.
        let started = std::time::Instant::now();
        let system = problem.assemble(m as f64).expect("assembly");
        let summary = system.summary();
        println!(
            "\nm = {m}: {} DOFs ({} transverse and {} third-component DOFs constrained), assembled in {:.1} ms",
            summary.reduced,
            summary.constrained_transverse,
            summary.constrained_third,
            started.elapsed().as_secs_f64() * 1e3
        );

        // 4. Solve densely (the sparse shift-invert solver lives in twistmode-eigen).
        let eigenvalues = support::hermitian_pencil_eigenvalues(&system.stiffness, &system.mass);
        let exact = exact_k0_squared(m);
        let (statics, physical) = support::split_static(&eigenvalues, exact[0]);
        println!(
            "  {statics} eigenvalues at k0 = 0 (gradient space predicts {}); first nonzero k0^2 = {:.6e}",
            summary.gradient_space, physical[0]
        );

        // 5. Compare with the exact resonances.
        println!(
            "  {:>14} {:>14} {:>12}",
            "k0 computed", "k0 exact", "rel. error"
        );
        for (computed, exact) in physical.iter().zip(&exact).take(5) {
            let (kc, ke) = (computed.sqrt(), exact.sqrt());
            println!("  {kc:>14.6} {ke:>14.6} {:>12.2e}", (kc - ke).abs() / ke);
        }
    }
}
