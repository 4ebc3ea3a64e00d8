//! PNG pictures of a run: the mesh preview and, for each mode, maps of
//! `|E|^2` and of the magnitudes of the three field components over the section.
use std::path::{Path, PathBuf};

use num_complex::Complex64;
use twistmode_io::case::Case;
use twistmode_io::plot::{plot_mesh, plot_section_field_in, Colormap, FieldValues, PlotError};
use twistmode_mesh::Mesh;

use twistmode_pipeline::SolveOutcome;

/// Writes the mesh preview (regions, PML, boundary tags) to `path`.
pub fn mesh_preview(mesh: &Mesh, case: &Case, path: &Path) -> Result<(), PlotError> {
    let q = mesh.quality();
    let title = format!(
        "mesh: {} triangles, order {}, min angle {:.1} deg",
        q.triangles,
        match mesh.order() {
            twistmode_mesh::GeometryOrder::Linear => 1,
            twistmode_mesh::GeometryOrder::Quadratic => 2,
        },
        q.min_angle_deg
    );
    plot_mesh(mesh, path, &title, case.length_unit)?;
    Ok(())
}

/// File tag, title and value of one field map.
type FieldMap = (&'static str, &'static str, fn(&[Complex64; 3]) -> f64);

/// The window field maps show: the body's bounding box widened by its larger
/// side on every side (clipped to the mesh), where the field of a confined
/// mode lives.
fn field_window(mesh: &Mesh) -> [f64; 4] {
    let all = mesh.bounding_box().to_array();
    let Some(b) = mesh.body_box().map(|b| b.to_array()) else {
        return all;
    };
    let margin = (b[1] - b[0]).max(b[3] - b[2]);
    [
        (b[0] - margin).max(all[0]),
        (b[1] + margin).min(all[1]),
        (b[2] - margin).max(all[2]),
        (b[3] + margin).min(all[3]),
    ]
}

/// Writes `mode_NN_<what>.png` for every mode; returns the files written.
pub fn write_pictures(
    outcome: &SolveOutcome,
    case: &Case,
    dir: &Path,
) -> Result<Vec<PathBuf>, PlotError> {
    let mut written = Vec::new();
    let preview = dir.join("mesh.png");
    mesh_preview(&outcome.mesh, case, &preview)?;
    written.push(preview);
    let view = field_window(&outcome.mesh);
    for (mode, field) in outcome.modes.iter().zip(&outcome.nodal_fields) {
        let f = mode.frequency_hz[0];
        let head = format!(
            "mode {} ({}), f = {:.6e} Hz, Q = {}",
            mode.index,
            mode.label,
            f,
            mode.q
                .map(|q| format!("{q:.3e}"))
                .unwrap_or_else(|| "inf".into())
        );
        let maps: [FieldMap; 4] = [
            ("E2", "|E|^2", |e| e.iter().map(|c| c.norm_sqr()).sum()),
            ("Eu", "|E_u|", |e| e[0].norm()),
            ("Ev", "|E_v|", |e| e[1].norm()),
            ("Ew", "|E_w|", |e| e[2].norm()),
        ];
        for (tag, what, value) in maps.iter() {
            let values: Vec<f64> = field.iter().map(*value).collect();
            let path = dir.join(format!("mode_{:02}_{tag}.png", mode.index));
            plot_section_field_in(
                &outcome.mesh,
                FieldValues::PerNode(&values),
                &path,
                &format!("{head}: {what}"),
                Colormap::Viridis,
                case.length_unit,
                Some(view),
            )?;
            written.push(path);
        }
    }
    Ok(written)
}
