//! Gmsh MSH import/export: round trips on the example meshes, hand-written
//! MSH 2.2 and 4.1 files, error classes, and fuzzing of the parsers.
use proptest::prelude::*;
use twistmode_mesh::{
    parse_gmsh, read_gmsh, write_gmsh, write_gmsh_string, GeometryOrder, Mesh, MeshError,
    RegionKind,
};

fn meshes_dir() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../../meshes")
}

fn assert_same(a: &Mesh, b: &Mesh) {
    assert_eq!(a.points(), b.points());
    assert_eq!(a.order(), b.order());
    assert_eq!(a.triangles(), b.triangles());
    assert_eq!(a.regions(), b.regions());
    assert_eq!(a.boundary_names(), b.boundary_names());
    assert_eq!(a.boundary(), b.boundary());
    assert_eq!(a.edges(), b.edges());
}

#[test]
fn example_meshes_round_trip() {
    let dir = tempfile::tempdir().unwrap();
    for (name, tags, area) in [
        // Source: exact geometry. Disc of radius rb + 1.0 um with rb the
        // ribbon's circumradius sqrt(0.55^2 + 0.1^2) + 0.05 um; half disc of
        // radius 1.5 + 1.2 um. Quadratic edges: relative error well below 1e-4.
        ("ribbon_section.msh", vec!["outer"], {
            let rb = (0.55f64.powi(2) + 0.1f64.powi(2)).sqrt() + 0.05;
            std::f64::consts::PI * ((rb + 1.0) * 1e-6).powi(2)
        }),
        (
            "half_disc_sphere.msh",
            vec!["outer", "axis"],
            0.5 * std::f64::consts::PI * (2.7e-6f64).powi(2),
        ),
    ] {
        let first = read_gmsh(meshes_dir().join(name)).unwrap();
        assert_eq!(first.order(), GeometryOrder::Quadratic);
        let names: Vec<&str> = first.regions().iter().map(|r| r.name.as_str()).collect();
        assert_eq!(names, ["body", "surroundings", "pml"]);
        assert_eq!(first.regions()[2].kind, RegionKind::Pml);
        assert_eq!(first.regions()[1].kind, RegionKind::Surroundings);
        let mut got: Vec<&str> = first.boundary_names().iter().map(|s| s.as_str()).collect();
        got.sort_unstable();
        let mut want = tags.clone();
        want.sort_unstable();
        assert_eq!(got, want);
        assert!(
            (first.area() - area).abs() < 1e-4 * area,
            "{name}: {} vs {area}",
            first.area()
        );
        let path = dir.path().join(name);
        write_gmsh(&first, &path).unwrap();
        let second = read_gmsh(&path).unwrap();
        assert_same(&first, &second);
        // Our output is also valid for mshio itself.
        let bytes = std::fs::read(&path).unwrap();
        let msh = mshio::parse_msh_bytes(&bytes).unwrap();
        assert_eq!(msh.total_node_count(), first.points().len());
        assert_eq!(
            msh.total_element_count(),
            first.triangles().len() + first.boundary().len()
        );
        // No temporary file is left behind.
        let leftovers: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
            .collect();
        assert!(leftovers.is_empty());
    }
}

#[test]
fn generated_mesh_round_trips_with_material_names() {
    use twistmode_mesh::{
        generate, BodySpec, DomainKind, GeneratorSpec, SectionShape, Surroundings,
    };
    let spec = GeneratorSpec::new(
        DomainKind::Box,
        BodySpec {
            shape: SectionShape::Ellipse { a: 1e-6, b: 0.6e-6 },
            centre: [0.0, 0.0],
            material: "glass_k".into(),
            max_edge: 0.2e-6,
        },
        Surroundings::Medium {
            padding: 0.5e-6,
            pml_thickness: 0.3e-6,
            max_edge: 0.4e-6,
        },
    );
    let mesh = generate(&spec).unwrap();
    let back = parse_gmsh(write_gmsh_string(&mesh).as_bytes()).unwrap();
    assert_eq!(
        back.regions()[0].kind,
        RegionKind::Body {
            material: "glass_k".into()
        }
    );
    assert_eq!(back.points(), mesh.points());
    assert_eq!(back.triangles(), mesh.triangles());
    assert_eq!(back.boundary(), mesh.boundary());
}

/// Two triangles forming the unit square, material "core" and "air".
const V22: &str = r#"$MeshFormat
2.2 0 8
$EndMeshFormat
$PhysicalNames
3
1 5 "wall"
2 1 "core"
2 2 "air"
$EndPhysicalNames
$Nodes
4
1 0 0 0
2 1 0 0
3 1 1 0
4 0 1 0
$EndNodes
$Elements
6
1 1 2 5 1 1 2
2 1 2 5 1 2 3
3 1 2 5 1 3 4
4 1 2 5 1 4 1
5 2 2 1 1 1 2 3
6 2 2 2 1 1 3 4
$EndElements
"#;

#[test]
fn msh22_ascii_is_read() {
    let m = parse_gmsh(V22.as_bytes()).unwrap();
    assert_eq!(m.triangles().len(), 2);
    assert_eq!(
        m.regions()[0].kind,
        RegionKind::Body {
            material: "core".into()
        }
    );
    assert_eq!(m.regions()[1].kind, RegionKind::Surroundings);
    assert_eq!(m.boundary_names(), ["wall"]);
    assert_eq!(m.boundary().len(), 4);
    assert!((m.area() - 1.0).abs() < 1e-15);
    // Region kinds by name.
    for (name, kind) in [
        ("PML_right", RegionKind::Pml),
        ("background", RegionKind::Surroundings),
    ] {
        let text = V22.replace("\"air\"", &format!("\"{name}\""));
        assert_eq!(parse_gmsh(text.as_bytes()).unwrap().regions()[1].kind, kind);
    }
    // Without 1D groups the boundary is tagged "outer".
    let no_lines = V22.replace(
        "6\n1 1 2 5 1 1 2\n2 1 2 5 1 2 3\n3 1 2 5 1 3 4\n4 1 2 5 1 4 1\n",
        "2\n",
    );
    let m = parse_gmsh(no_lines.as_bytes()).unwrap();
    assert_eq!(m.boundary_names(), ["outer"]);
}

fn gmsh_message(text: &str) -> String {
    match parse_gmsh(text.as_bytes()) {
        Err(e) => e.to_string(),
        Ok(_) => panic!("expected an error for:\n{text}"),
    }
}

#[test]
fn bad_files_give_their_messages() {
    // Unknown element type (4-node quadrangle).
    let quad = V22.replace("5 2 2 1 1 1 2 3", "5 3 2 1 1 1 2 3 4");
    assert!(gmsh_message(&quad).contains("unsupported element type 3"));
    // Triangle without a physical group.
    let missing = V22.replace("5 2 2 1 1 1 2 3", "5 2 2 0 1 1 2 3");
    assert!(gmsh_message(&missing).contains("missing physical groups"));
    // Degenerate: node 3 moved onto the line 1-2... and the diagonal.
    let degenerate = V22.replace("3 1 1 0", "3 0.5 0 0");
    let msg = gmsh_message(&degenerate);
    assert!(msg.contains("degenerate"), "{msg}");
    // Non-manifold: a third triangle on edge 1-3.
    let nonmanifold = V22
        .replace("4\n1 0 0 0", "5\n1 0 0 0")
        .replace("4 0 1 0\n", "4 0 1 0\n5 2 0 0\n")
        .replace("6\n1 1 2", "7\n1 1 2")
        .replace("6 2 2 2 1 1 3 4\n", "6 2 2 2 1 1 3 4\n7 2 2 2 1 1 5 3\n");
    assert!(gmsh_message(&nonmanifold).contains("non-manifold"));
    // Inverted quadratic triangle: a mid-side node far across its element.
    let inverted = "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$Nodes\n6\n1 0 0 0\n2 1 0 0\n3 0 1 0\n4 0.5 1.5 0\n5 0.5 0.5 0\n6 0 0.5 0\n$EndNodes\n$Elements\n1\n1 9 2 1 1 1 2 3 4 5 6\n$EndElements\n";
    assert!(gmsh_message(inverted).contains("inverted"));
    // Unsupported version, not MSH at all, missing sections.
    assert!(gmsh_message(&V22.replace("2.2 0 8", "3.0 0 8")).contains("version 3.0"));
    assert!(gmsh_message("hello").contains("$MeshFormat"));
    assert!(gmsh_message("$MeshFormat\n2.2 0 8\n$EndMeshFormat\n").contains("$Nodes"));
    // Dangling node reference and truncated element list.
    assert!(gmsh_message(&V22.replace("6 2 2 2 1 1 3 4", "6 2 2 2 1 1 3 9")).contains("node 9"));
    assert!(gmsh_message(&V22.replace("6 2 2 2 1 1 3 4\n", "")).contains("unexpected end"));
    // MSH 4.1: unknown element type and missing physical groups.
    let good = write_gmsh_string(&parse_gmsh(V22.as_bytes()).unwrap());
    let quad41 = good.replacen("2 1 2 1\n", "2 1 3 1\n", 1);
    assert_ne!(quad41, good);
    let msg = gmsh_message(&quad41);
    assert!(
        msg.contains("unsupported element type 3") || msg.contains("malformed"),
        "{msg}"
    );
    // Strip the physical group of the first surface entity (the line after
    // the single curve entity).
    let mut lines: Vec<String> = good.lines().map(String::from).collect();
    let e = lines.iter().position(|l| l == "$Entities").unwrap();
    let surf = &mut lines[e + 3];
    assert!(surf.ends_with(" 1 1 0"), "{surf}");
    *surf = format!("{} 0 0", &surf[..surf.len() - " 1 1 0".len()]);
    let nogroup = lines.join("\n") + "\n";
    let msg = gmsh_message(&nogroup);
    assert!(
        msg.contains("missing physical groups") || msg.contains("malformed"),
        "{msg}"
    );
}

#[test]
fn msh41_from_writer_matches_msh22_reader() {
    let a = parse_gmsh(V22.as_bytes()).unwrap();
    let b = parse_gmsh(write_gmsh_string(&a).as_bytes()).unwrap();
    assert_same(&a, &b);
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, .. ProptestConfig::default() })]
    #[test]
    fn arbitrary_bytes_do_not_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let _ = parse_gmsh(&bytes);
        let mut with_header = b"$MeshFormat\n4.1 0 8\n$EndMeshFormat\n".to_vec();
        with_header.extend(&bytes);
        let _ = parse_gmsh(&with_header);
        let mut v2 = b"$MeshFormat\n2.2 0 8\n$EndMeshFormat\n".to_vec();
        v2.extend(&bytes);
        let _ = parse_gmsh(&v2);
    }

    #[test]
    fn mutated_valid_files_do_not_panic(
        which in any::<bool>(),
        edits in proptest::collection::vec((any::<prop::sample::Index>(), any::<u8>()), 1..6),
        cut in any::<prop::sample::Index>(),
    ) {
        let base = if which {
            V22.to_string()
        } else {
            write_gmsh_string(&parse_gmsh(V22.as_bytes()).unwrap())
        };
        let mut bytes = base.into_bytes();
        for (i, b) in &edits {
            let k = i.index(bytes.len());
            bytes[k] = *b;
        }
        let _ = parse_gmsh(&bytes);
        let k = cut.index(bytes.len());
        let r = parse_gmsh(&bytes[..k]);
        if let Err(e) = r {
            prop_assert!(matches!(e, MeshError::Gmsh(_)) || !e.to_string().is_empty());
        }
    }
}
