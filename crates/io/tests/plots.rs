//! Mesh previews and field maps: valid PNGs of the right size, with the
//! region colours actually painted and equal axis scales.

use std::path::{Path, PathBuf};
use twistmode_io::plot::{
    body_outline, boundary_colour, plot_mesh, plot_section_field, region_colours, Colormap,
    FieldValues, PlotError,
};
use twistmode_io::{Case, LengthUnit};
use twistmode_mesh::{
    BoundaryTag, GeometryOrder, Mesh, MeshParts, NodeId, Region, RegionId, RegionKind, Triangle,
};

/// Folder for the PNGs: `TWISTMODE_KEEP_PLOTS` if set (to look at them), else a temporary one.
fn out_dir() -> (Option<tempfile::TempDir>, PathBuf) {
    match std::env::var_os("TWISTMODE_KEEP_PLOTS") {
        Some(d) => (None, PathBuf::from(d)),
        None => {
            let t = tempfile::tempdir().unwrap();
            let p = t.path().to_path_buf();
            (Some(t), p)
        }
    }
}

/// A 5 x 5 grid of 2 mm squares (two triangles each): the centre square is
/// the body, the ring around it surroundings, the outer ring PML. The left
/// side is tagged `axis`, the rest of the outside `outer`.
fn grid_mesh() -> Mesh {
    let n = 5usize;
    let coord = |i: usize| (i as f64 * 2.0 - 5.0) * 1e-3;
    let mut points = Vec::new();
    for j in 0..=n {
        for i in 0..=n {
            points.push([coord(i), coord(j)]);
        }
    }
    let id = |i: usize, j: usize| NodeId((j * (n + 1) + i) as u32);
    let mut triangles = Vec::new();
    for j in 0..n {
        for i in 0..n {
            let ring = i.min(j).min(n - 1 - i).min(n - 1 - j);
            let region = RegionId(match ring {
                2 => 0,
                1 => 1,
                _ => 2,
            });
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            triangles.push(Triangle {
                nodes: [a, b, c, a, a, a],
                region,
            });
            triangles.push(Triangle {
                nodes: [a, c, d, a, a, a],
                region,
            });
        }
    }
    let mut segments = Vec::new();
    for k in 0..n {
        segments.push(([id(0, k), id(0, k + 1)], BoundaryTag(0)));
        segments.push(([id(n, k), id(n, k + 1)], BoundaryTag(1)));
        segments.push(([id(k, 0), id(k + 1, 0)], BoundaryTag(1)));
        segments.push(([id(k, n), id(k + 1, n)], BoundaryTag(1)));
    }
    Mesh::new(MeshParts {
        points,
        order: GeometryOrder::Linear,
        triangles,
        regions: vec![
            Region {
                name: "core".into(),
                kind: RegionKind::Body {
                    material: "kestrel-38".into(),
                },
            },
            Region {
                name: "air".into(),
                kind: RegionKind::Surroundings,
            },
            Region {
                name: "pml".into(),
                kind: RegionKind::Pml,
            },
        ],
        boundary_names: vec!["axis".into(), "outer".into()],
        boundary_segments: segments,
        domain: None,
    })
    .unwrap()
}

/// Reads a PNG: checks the signature, returns (width, height, RGB pixels).
fn read_png(path: &Path) -> (u32, u32, Vec<[u8; 3]>) {
    let bytes = std::fs::read(path).unwrap();
    // PNG signature and IHDR layout: PNG specification (ISO/IEC 15948), sec. 5.2 and 11.2.2.
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "not a PNG");
    assert_eq!(&bytes[12..16], b"IHDR");
    let w = u32::from_be_bytes(bytes[16..20].try_into().unwrap());
    let h = u32::from_be_bytes(bytes[20..24].try_into().unwrap());
    let img = image::load_from_memory(&bytes).unwrap().to_rgb8();
    assert_eq!((img.width(), img.height()), (w, h));
    (w, h, img.pixels().map(|p| p.0).collect())
}

fn count(pixels: &[[u8; 3]], c: [u8; 3]) -> usize {
    pixels.iter().filter(|p| **p == c).count()
}

#[test]
fn mesh_preview_is_a_png_with_every_region_painted() {
    let mesh = grid_mesh();
    let (_keep, dir) = out_dir();
    let path = dir.join("grid-mesh.png");
    let frame = plot_mesh(
        &mesh,
        &path,
        "Test grid: body, surroundings, PML",
        LengthUnit::Millimetre,
    )
    .unwrap();
    let (w, h, pixels) = read_png(&path);
    assert_eq!((w, h), (frame.width_px, frame.height_px));
    assert_eq!(w, 1200);
    assert!((400..=1300).contains(&h), "height {h}");
    // Equal aspect: the same number of mm per pixel on both axes (to 1%).
    let [sx, sy] = frame.units_per_px;
    assert!((sx - sy).abs() < 0.01 * sx, "{sx} vs {sy}");
    // The body square is 2 x 2 mm; at sx mm/px its fill covers about
    // (2/sx)^2 pixels minus drawn edges: well over a third of that.
    let colours = region_colours(&mesh);
    let body_px = count(&pixels, colours[0]);
    let expected = (2.0 / sx).powi(2);
    assert!(
        body_px as f64 > 0.33 * expected && (body_px as f64) < 1.1 * expected,
        "{body_px} vs {expected}"
    );
    // Surroundings (8 squares) and PML (16 squares) scale accordingly.
    assert!(count(&pixels, colours[1]) as f64 > 4.0 * body_px as f64);
    assert!(count(&pixels, colours[2]) as f64 > 8.0 * body_px as f64);
    // Both boundary tags are drawn in their colours.
    assert!(count(&pixels, boundary_colour("axis", 0)) > 100);
    assert!(count(&pixels, boundary_colour("outer", 1)) > 100);
}

#[test]
fn field_map_colours_by_value() {
    let mesh = grid_mesh();
    let (_keep, dir) = out_dir();
    // Linear field u (metres) per node: viridis low end on the left, high end on the right.
    let u: Vec<f64> = mesh.points().iter().map(|p| p[0]).collect();
    let path = dir.join("grid-field.png");
    plot_section_field(
        &mesh,
        FieldValues::PerNode(&u),
        &path,
        "Field u",
        Colormap::Viridis,
        LengthUnit::Millimetre,
    )
    .unwrap();
    let (_, _, pixels) = read_png(&path);
    let lowest = Colormap::Viridis.rgb(0.0);
    let highest = Colormap::Viridis.rgb(1.0);
    // Ends of the map appear (in the field and in the colour bar).
    let near = |a: [u8; 3], b: [u8; 3]| a.iter().zip(b).all(|(x, y)| x.abs_diff(y) <= 6);
    assert!(pixels.iter().filter(|p| near(**p, lowest)).count() > 500);
    assert!(pixels.iter().filter(|p| near(**p, highest)).count() > 500);
    // Per-triangle values, and a wrong count is refused.
    let per_tri: Vec<f64> = (0..mesh.triangles().len()).map(|t| t as f64).collect();
    plot_section_field(
        &mesh,
        FieldValues::PerTriangle(&per_tri),
        &dir.join("grid-tri.png"),
        "Index",
        Colormap::Viridis,
        LengthUnit::Millimetre,
    )
    .unwrap();
    assert!(matches!(
        plot_section_field(
            &mesh,
            FieldValues::PerNode(&per_tri),
            &dir.join("x.png"),
            "x",
            Colormap::Viridis,
            LengthUnit::Millimetre
        ),
        Err(PlotError::ValueCount { what: "nodes", .. })
    ));
    let nan = vec![f64::NAN; mesh.points().len()];
    assert!(matches!(
        plot_section_field(
            &mesh,
            FieldValues::PerNode(&nan),
            &dir.join("x.png"),
            "x",
            Colormap::Viridis,
            LengthUnit::Millimetre
        ),
        Err(PlotError::NoFiniteValues)
    ));
}

#[test]
fn body_outline_is_the_square_around_the_core() {
    // The 2 x 2 mm core square has 4 sides, one edge each (the diagonals are inside).
    let mesh = grid_mesh();
    let outline = body_outline(&mesh);
    assert_eq!(outline.len(), 4);
    let length: f64 = outline
        .iter()
        .map(|&e| {
            let [a, b] = mesh.edges()[e];
            let (p, q) = (mesh.points()[a.idx()], mesh.points()[b.idx()]);
            (p[0] - q[0]).hypot(p[1] - q[1])
        })
        .sum();
    assert!((length - 8e-3).abs() < 1e-15);
}

#[test]
fn generated_example_mesh_previews() {
    // A coarse version of the ribbon-ring example, through the real generator.
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/ceramic-ribbon-ring.toml");
    let case = Case::load(&path, &[("mesh.resolution".into(), "4".into())]).unwrap();
    let mesh = twistmode_mesh::generate(&case.generator_spec().unwrap()).unwrap();
    let (_keep, dir) = out_dir();
    let out = dir.join("ribbon-ring-mesh.png");
    let frame = plot_mesh(
        &mesh,
        &out,
        "Ceramic ribbon ring: section mesh",
        case.length_unit,
    )
    .unwrap();
    let (w, h, _) = read_png(&out);
    assert_eq!((w, h), (frame.width_px, frame.height_px));
    // A radial field |rho| per node, on the generated (quadratic) mesh.
    let rho: Vec<f64> = mesh.points().iter().map(|p| p[0].hypot(p[1])).collect();
    plot_section_field(
        &mesh,
        FieldValues::PerNode(&rho),
        &dir.join("ribbon-ring-rho.png"),
        "Distance from the section centre (m)",
        Colormap::Viridis,
        case.length_unit,
    )
    .unwrap();
}
