//! Post-processing against the exact field of the fundamental metal-guide mode.
mod support;

use std::f64::consts::PI;

use twistmode_fem::{FieldEvaluator, Order, Placement, SectionProblem};
use twistmode_mesh::GeometryOrder;

#[test]
fn te10_field_shape_energy_split_and_nodal_values() {
    // Source: Pozar, Microwave Engineering, sec. 3.3: the TE_10 mode of an a x b
    // guide has E = y_hat sin(pi x / a) only, k0^2 = (pi/a)^2 + beta^2.
    let (a, b, beta) = (20e-3, 10e-3, 150.0);
    let mesh = support::rectangle([0.0, a, 0.0, b], 8, 4, GeometryOrder::Linear, ["wall"; 4]);
    let setup = support::metal_setup(Order::Two, Placement::Straight { twist_rate: 0.0 }, 1.0);
    let problem = SectionProblem::try_new(&mesh, setup).unwrap();
    let system = problem.assemble(beta).unwrap();
    let exact = (PI / a).powi(2) + beta * beta;
    let (x, lambda) = support::eigenvector_near(&system.stiffness, &system.mass, 0.9 * exact);
    assert!(
        (lambda.re / exact - 1.0).abs() < 1e-4,
        "k0^2 {lambda} vs {exact}"
    );
    let field = FieldEvaluator::new(&problem, &system, &x);

    // Energy: all in the body, all along v (y).
    let energy = field.energy();
    assert!((energy.body_fraction - 1.0).abs() < 1e-12);
    assert_eq!(energy.pml_fraction, 0.0);
    assert!(
        energy.body_uv_fraction[1] > 0.999,
        "{:?}",
        energy.body_uv_fraction
    );

    // Nodal values: E_v / E_v(centre) = sin(pi x / a); E_u and E_w vanish.
    let nodal = field.nodal_values();
    let centre = mesh
        .points()
        .iter()
        .position(|p| (p[0] - a / 2.0).abs() < 1e-12 && (p[1] - b / 2.0).abs() < 1e-12)
        .unwrap();
    let reference = nodal[centre][1];
    let mut worst: f64 = 0.0;
    for (p, value) in mesh.points().iter().zip(&nodal) {
        let shape = (PI * p[0] / a).sin();
        worst = worst.max((value[1] / reference - shape).norm());
        worst = worst
            .max((value[0] / reference).norm())
            .max((value[2] / reference).norm());
    }
    println!("TE10 nodal field: largest deviation from sin(pi x / a) {worst:.2e}");
    assert!(worst < 1e-2, "{worst}");

    // |E|^2 at an interior point equals the sum of the component magnitudes.
    let f = field.physical(5, 0.2, 0.3).unwrap();
    let sum: f64 = f.components.iter().map(|c| c.norm_sqr()).sum();
    assert!((f.norm_sq - sum).abs() < 1e-12 * sum);
}
