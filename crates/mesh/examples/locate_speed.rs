//! Speed of the point locator on a large generated mesh (over 100k curved
//! triangles): build time, lookups per second, and the same lookups by a
//! linear scan of the triangles.
//!
//! ```text
//! cargo run --release -p twistmode-mesh --example locate_speed [max_edge_um]
//! ```
use std::time::Instant;

use twistmode_mesh::{
    generate, BodySpec, DomainKind, GeneratorSpec, GeometryOrder, Mesh, PointLocator, SectionShape,
    Surroundings,
};

/// `n` points spread evenly over the mesh's (or the body's) box: the
/// Kronecker sequence `frac(k a)` with `a = (1/g, 1/g^2)`, `g` the plastic
/// number (the real root of `x^3 = x + 1`), a standard low-discrepancy set.
fn points_in(mesh: &Mesh, n: usize, body: bool) -> Vec<[f64; 2]> {
    let b = if body {
        mesh.body_box().expect("the mesh has a body")
    } else {
        mesh.bounding_box()
    };
    let g = 1.324_717_957_244_746_f64;
    let a = [1.0 / g, 1.0 / (g * g)];
    (1..=n)
        .map(|k| {
            let s = [(k as f64 * a[0]).fract(), (k as f64 * a[1]).fract()];
            [
                b.min[0] + s[0] * (b.max[0] - b.min[0]),
                b.min[1] + s[1] * (b.max[1] - b.min[1]),
            ]
        })
        .collect()
}

fn per_second(n: usize, seconds: f64) -> String {
    format!("{:.3e}/s", n as f64 / seconds)
}

fn main() {
    let h: f64 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(0.013);
    // An elliptic ribbon section (2 x 1.2 um) in a disc with a PML, graded
    // from h in the body to 2 h outside; quadratic (curved) sides.
    let mut spec = GeneratorSpec::new(
        DomainKind::Disc,
        BodySpec {
            shape: SectionShape::Ellipse { a: 1e-6, b: 0.6e-6 },
            centre: [0.0, 0.0],
            material: "glass".into(),
            max_edge: h * 1e-6,
        },
        Surroundings::Medium {
            padding: 0.6e-6,
            pml_thickness: 0.4e-6,
            max_edge: 2.0 * h * 1e-6,
        },
    );
    spec.order = GeometryOrder::Quadratic;
    let t = Instant::now();
    let mesh = generate(&spec).expect("the mesh generates");
    println!(
        "mesh: {} quadratic triangles in {:.2} s",
        mesh.triangles().len(),
        t.elapsed().as_secs_f64()
    );

    let t = Instant::now();
    let all = PointLocator::new(&mesh);
    let build_all = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let bodies = PointLocator::bodies(&mesh);
    let build_bodies = t.elapsed().as_secs_f64();
    let [nx, ny] = all.grid_cells();
    println!(
        "build, all {} triangles: {:.1} ms ({nx} x {ny} cells, {:.2} triangles per cell)",
        all.len(),
        build_all * 1e3,
        all.mean_cell_load()
    );
    println!(
        "build, {} body triangles: {:.1} ms",
        bodies.len(),
        build_bodies * 1e3
    );

    for (name, locator, body) in [
        ("all triangles, points over the mesh box", &all, false),
        ("body triangles, points over the body box", &bodies, true),
    ] {
        let points = points_in(&mesh, 400_000, body);
        let t = Instant::now();
        let found = points.iter().filter_map(|p| locator.locate(*p)).count();
        let grid = t.elapsed().as_secs_f64();
        let few = &points[..400];
        let t = Instant::now();
        let scanned: Vec<_> = few.iter().map(|p| locator.locate_by_scan(*p)).collect();
        let scan = t.elapsed().as_secs_f64();
        let agree = few
            .iter()
            .zip(&scanned)
            .all(|(p, s)| locator.locate(*p) == *s);
        assert!(agree, "the grid and the scan disagree");
        println!(
            "{name}: grid {} ({} of {} found), linear scan {}, {:.0}x faster",
            per_second(points.len(), grid),
            found,
            points.len(),
            per_second(few.len(), scan),
            (scan / few.len() as f64) / (grid / points.len() as f64)
        );
    }
}
