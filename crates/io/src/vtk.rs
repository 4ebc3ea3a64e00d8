//! Field export as a VTK XML unstructured grid (`.vtu`), the open format that
//! ParaView, VisIt and other VTK-based viewers read; written through the vtkio
//! crate and saved atomically.
//!
//! The section lies in the plane `z = 0` with `x = u`, `y = v` in the case's length
//! unit; curved (6-node) triangles are written as VTK quadratic triangles (cell type
//! 22, whose node order — corners, then the mid-sides of edges 0-1, 1-2, 2-0 — is the
//! mesh's own), straight ones as triangles (type 5). Each field becomes three point
//! arrays: `<name>_re` and `<name>_im` (3-component vectors `(E_u, E_v, E_w)`) and
//! `<name>_abs2` (`|E|^2`); the cell array `region` holds the region index.
use std::path::Path;

use num_complex::Complex64;
use thiserror::Error;
use twistmode_mesh::{GeometryOrder, Mesh};
use vtkio::model::{
    Attribute, Attributes, ByteOrder, CellType, Cells, DataSet, UnstructuredGridPiece, Version,
    VertexNumbers, Vtk,
};

use crate::output::{write_atomic, OutputError};
use crate::units::LengthUnit;

/// Why a field export failed.
#[derive(Debug, Error)]
pub enum VtkError {
    /// A field has a different number of values than the mesh has nodes.
    #[error("field '{name}' has {got} values but the mesh has {want} nodes")]
    FieldLength {
        /// The field's name.
        name: String,
        /// Values given.
        got: usize,
        /// Nodes in the mesh.
        want: usize,
    },
    /// The VTK encoder failed.
    #[error("VTK encoding failed: {0}")]
    Encode(String),
    /// The file could not be written.
    #[error(transparent)]
    Output(#[from] OutputError),
}

/// One named complex vector field at the mesh nodes.
pub struct NodalField<'a> {
    /// Array name prefix (letters, digits and `_` keep viewers happy).
    pub name: String,
    /// `(E_u, E_v, E_w)` at each mesh node.
    pub values: &'a [[Complex64; 3]],
}

/// The VTK document of `mesh` with `fields` (coordinates in `unit`).
pub fn section_document(
    mesh: &Mesh,
    fields: &[NodalField<'_>],
    unit: LengthUnit,
) -> Result<Vtk, VtkError> {
    let n = mesh.points().len();
    let points: Vec<f64> = mesh
        .points()
        .iter()
        .flat_map(|p| [unit.from_metres(p[0]), unit.from_metres(p[1]), 0.0])
        .collect();
    let (per, kind) = match mesh.order() {
        GeometryOrder::Linear => (3, CellType::Triangle),
        GeometryOrder::Quadratic => (6, CellType::QuadraticTriangle),
    };
    let triangles = mesh.triangles();
    let connectivity: Vec<u64> = triangles
        .iter()
        .flat_map(|t| t.nodes[..per].iter().map(|v| u64::from(v.0)))
        .collect();
    let offsets: Vec<u64> = (1..=triangles.len() as u64)
        .map(|i| i * per as u64)
        .collect();
    let mut data = Attributes::new();
    data.cell.push(
        Attribute::scalars("region", 1).with_data(
            triangles
                .iter()
                .map(|t| i32::from(t.region.0))
                .collect::<Vec<i32>>(),
        ),
    );
    for field in fields {
        if field.values.len() != n {
            return Err(VtkError::FieldLength {
                name: field.name.clone(),
                got: field.values.len(),
                want: n,
            });
        }
        let part = |f: fn(&Complex64) -> f64| -> Vec<f64> {
            field.values.iter().flat_map(|e| e.iter().map(f)).collect()
        };
        data.point
            .push(Attribute::vectors(format!("{}_re", field.name)).with_data(part(|c| c.re)));
        data.point
            .push(Attribute::vectors(format!("{}_im", field.name)).with_data(part(|c| c.im)));
        let abs2: Vec<f64> = field
            .values
            .iter()
            .map(|e| e.iter().map(|c| c.norm_sqr()).sum())
            .collect();
        data.point
            .push(Attribute::scalars(format!("{}_abs2", field.name), 1).with_data(abs2));
    }
    Ok(Vtk {
        version: Version::new((1, 0)),
        byte_order: ByteOrder::LittleEndian,
        title: String::from("twistmode section fields"),
        file_path: None,
        data: DataSet::inline(UnstructuredGridPiece {
            points: points.into(),
            cells: Cells {
                cell_verts: VertexNumbers::XML {
                    connectivity,
                    offsets,
                },
                types: vec![kind; triangles.len()],
            },
            data,
        }),
    })
}

/// Writes `mesh` and `fields` to `path` (`.vtu`) atomically.
pub fn write_section_vtu(
    mesh: &Mesh,
    fields: &[NodalField<'_>],
    unit: LengthUnit,
    path: &Path,
) -> Result<(), VtkError> {
    let doc = section_document(mesh, fields, unit)?;
    let mut bytes = Vec::new();
    doc.write_xml(&mut bytes)
        .map_err(|e| VtkError::Encode(format!("{e:?}")))?;
    write_atomic(path, &bytes)?;
    Ok(())
}
