//! Writes the example meshes in `meshes/` from the built-in generator
//! (their `.geo` files describe the same geometry for Gmsh users).
//!
//! Run from the workspace root:
//! `cargo run --release -p twistmode-mesh --example write_example_meshes`
use twistmode_mesh::{
    generate, write_gmsh, BodySpec, DomainKind, GeneratorSpec, GeometryOrder, SectionShape,
    Surroundings,
};

fn main() {
    // Ribbon 1.2 um x 0.3 um with 50 nm corner radius, in a disc with a PML.
    let mut ribbon = GeneratorSpec::new(
        DomainKind::Disc,
        BodySpec {
            shape: SectionShape::Rectangle {
                width: 1.2e-6,
                thickness: 0.3e-6,
                corner_radius: 0.05e-6,
            },
            centre: [0.0, 0.0],
            material: "body".into(),
            max_edge: 0.1e-6,
        },
        Surroundings::Medium {
            padding: 0.6e-6,
            pml_thickness: 0.4e-6,
            max_edge: 0.3e-6,
        },
    );
    ribbon.order = GeometryOrder::Quadratic;
    let mesh = generate(&ribbon).expect("ribbon mesh");
    write_gmsh(&mesh, "meshes/ribbon_section.msh").expect("write ribbon");
    println!("meshes/ribbon_section.msh: {}", mesh.quality());

    // Sphere of radius 1.5 um: half disc on the axis (r, z), with a PML.
    let mut sphere = GeneratorSpec::new(
        DomainKind::HalfPlane,
        BodySpec {
            shape: SectionShape::Ellipse {
                a: 1.5e-6,
                b: 1.5e-6,
            },
            centre: [0.0, 0.0],
            material: "body".into(),
            max_edge: 0.2e-6,
        },
        Surroundings::Medium {
            padding: 0.7e-6,
            pml_thickness: 0.5e-6,
            max_edge: 0.4e-6,
        },
    );
    sphere.order = GeometryOrder::Quadratic;
    let mesh = generate(&sphere).expect("sphere mesh");
    write_gmsh(&mesh, "meshes/half_disc_sphere.msh").expect("write sphere");
    println!("meshes/half_disc_sphere.msh: {}", mesh.quality());
}
