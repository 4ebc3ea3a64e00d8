//! Generation time and quality for three sections:
//! 1. a flat ribbon (rounded rectangle) in a Disc domain with a radial PML,
//! 2. a sphere's half-disc section in the HalfPlane domain,
//! 3. a hexagon in a Box domain with Cartesian PML layers.
//!
//! Run: `cargo run --release -p twistmode-mesh --example mesh_report`
use std::time::Instant;

use twistmode_mesh::{
    generate, BodySpec, DomainKind, GeneratorSpec, GeometryOrder, SectionShape, Surroundings,
};

fn report(label: &str, spec: &GeneratorSpec) {
    let t = Instant::now();
    let mesh = generate(spec).expect("mesh generation");
    let dt = t.elapsed();
    println!("{label}");
    println!("  time {:.1} ms", dt.as_secs_f64() * 1e3);
    println!("  {}", mesh.quality());
    for (r, region) in mesh.regions().iter().enumerate() {
        let n = mesh
            .triangles()
            .iter()
            .filter(|t| t.region.idx() == r)
            .count();
        let area: f64 = (0..mesh.triangles().len())
            .filter(|&t| mesh.triangles()[t].region.idx() == r)
            .map(|t| mesh.triangle_area(t))
            .sum();
        println!(
            "  region {:<13} {n:>6} triangles, area {area:.6e} m^2",
            region.name
        );
    }
}

fn main() {
    // 1. Ribbon 1.2 um x 0.3 um, corner radius 50 nm, in a Disc with PML.
    let mut ribbon = GeneratorSpec::new(
        DomainKind::Disc,
        BodySpec {
            shape: SectionShape::Rectangle {
                width: 1.2e-6,
                thickness: 0.3e-6,
                corner_radius: 0.05e-6,
            },
            centre: [0.0, 0.0],
            material: "glass_b".into(),
            max_edge: 0.06e-6,
        },
        Surroundings::Medium {
            padding: 0.8e-6,
            pml_thickness: 0.5e-6,
            max_edge: 0.2e-6,
        },
    );
    ribbon.order = GeometryOrder::Quadratic;
    ribbon.pi_symmetric = true;
    report("ribbon in Disc (quadratic, pi-symmetric)", &ribbon);

    // 2. Sphere of radius 1 um: half disc on the axis, HalfPlane domain.
    let mut sphere = GeneratorSpec::new(
        DomainKind::HalfPlane,
        BodySpec {
            shape: SectionShape::Ellipse { a: 1e-6, b: 1e-6 },
            centre: [0.0, 0.0],
            material: "glass_a".into(),
            max_edge: 0.08e-6,
        },
        Surroundings::Medium {
            padding: 0.6e-6,
            pml_thickness: 0.4e-6,
            max_edge: 0.15e-6,
        },
    );
    sphere.order = GeometryOrder::Quadratic;
    report("sphere half disc in HalfPlane (quadratic)", &sphere);

    // 3. Regular hexagon (circumradius 0.5 um) in a Box with PML.
    let hexagon: Vec<[f64; 2]> = (0..6)
        .map(|k| {
            let a = std::f64::consts::PI / 3.0 * k as f64;
            [0.5e-6 * a.cos(), 0.5e-6 * a.sin()]
        })
        .collect();
    let polygon = GeneratorSpec::new(
        DomainKind::Box,
        BodySpec {
            shape: SectionShape::Polygon { vertices: hexagon },
            centre: [0.0, 0.0],
            material: "crystal_c".into(),
            max_edge: 0.05e-6,
        },
        Surroundings::Medium {
            padding: 0.5e-6,
            pml_thickness: 0.3e-6,
            max_edge: 0.12e-6,
        },
    );
    report("hexagon in Box (linear)", &polygon);
}
