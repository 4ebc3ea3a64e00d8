//! Field export: the `.vtu` file written for a generated curved mesh is read back
//! by vtkio's own XML reader (an independent parse of the format) and compared with
//! what was written.
use std::path::Path;

use num_complex::Complex64;
use twistmode_io::vtk::{write_section_vtu, NodalField, VtkError};
use twistmode_io::Case;
use vtkio::model::{Attribute, CellType, DataSet, VertexNumbers, Vtk};

#[test]
fn vtu_round_trip_of_a_curved_mesh_with_a_complex_field() {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/ceramic-ribbon-ring.toml");
    let case = Case::load(&path, &[("mesh.resolution".into(), "4".into())]).unwrap();
    let mesh = twistmode_mesh::generate(&case.generator_spec().unwrap()).unwrap();
    let field: Vec<[Complex64; 3]> = mesh
        .points()
        .iter()
        .map(|p| {
            [
                Complex64::new(p[0] * 1e3, -p[1]),
                Complex64::new(1.0, p[0] + p[1]),
                Complex64::new(-2.0, 0.5),
            ]
        })
        .collect();
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("fields.vtu");
    let fields = [NodalField {
        name: "mode_00_E".into(),
        values: &field,
    }];
    write_section_vtu(&mesh, &fields, case.length_unit, &file).unwrap();

    let back = Vtk::import(&file).unwrap();
    let DataSet::UnstructuredGrid { pieces, .. } = back.data else {
        panic!("not an unstructured grid")
    };
    let piece = pieces[0].load_piece_data(None).expect("inline piece");
    assert_eq!(piece.num_points(), mesh.points().len());
    let points: Vec<f64> = piece.points.cast_into().unwrap();
    for (i, p) in mesh.points().iter().enumerate() {
        let x = case.length_unit.from_metres(p[0]);
        assert!((points[3 * i] - x).abs() <= 1e-15 * x.abs().max(1.0));
        assert_eq!(points[3 * i + 2], 0.0);
    }
    assert!(piece
        .cells
        .types
        .iter()
        .all(|t| *t == CellType::QuadraticTriangle));
    assert_eq!(piece.cells.types.len(), mesh.triangles().len());
    let VertexNumbers::XML { connectivity, .. } = &piece.cells.cell_verts else {
        panic!("XML connectivity expected")
    };
    let t = &mesh.triangles()[7];
    let written: Vec<u64> = t.nodes.iter().map(|v| u64::from(v.0)).collect();
    assert_eq!(&connectivity[42..48], &written[..]);

    let array = |name: &str| -> Vec<f64> {
        piece
            .data
            .point
            .iter()
            .find_map(|a| match a {
                Attribute::DataArray(d) if d.name == name => {
                    Some(d.data.clone().cast_into().unwrap())
                }
                _ => None,
            })
            .unwrap_or_else(|| panic!("no array {name}"))
    };
    let (re, im, abs2) = (
        array("mode_00_E_re"),
        array("mode_00_E_im"),
        array("mode_00_E_abs2"),
    );
    for (i, e) in field.iter().enumerate() {
        for c in 0..3 {
            assert_eq!(re[3 * i + c], e[c].re);
            assert_eq!(im[3 * i + c], e[c].im);
        }
        let want: f64 = e.iter().map(|c| c.norm_sqr()).sum();
        assert!((abs2[i] - want).abs() <= 1e-15 * want);
    }

    // A field of the wrong length is refused with both counts.
    let short = [NodalField {
        name: "bad".into(),
        values: &field[1..],
    }];
    match write_section_vtu(&mesh, &short, case.length_unit, &file) {
        Err(VtkError::FieldLength { got, want, .. }) => assert_eq!(got + 1, want),
        other => panic!("expected a length error, got {other:?}"),
    }
}
