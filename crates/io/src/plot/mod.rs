//! PNG plots of a section mesh: a preview of regions, edges and boundary
//! tags ([`plot_mesh`]) and a field map with a colour bar ([`plot_section_field`]).
//!
//! Drawing uses plotters' bitmap backend into memory, then the PNG is written
//! with [`crate::output::write_atomic`]. Text uses the embedded DejaVu Sans
//! (registered through plotters' `ab_glyph` font table), so no system font is
//! read. Both axes share one scale (equal aspect ratio), in the case's length unit.

mod colormap;
mod lines;

pub use colormap::Colormap;
pub use lines::{plot_lines, Series};

use crate::units::LengthUnit;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::collections::BTreeMap;
use std::path::Path;
use std::sync::OnceLock;
use twistmode_mesh::{DomainKind, GeometryOrder, Mesh, RegionKind};

/// Why a plot could not be made.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PlotError {
    /// The embedded font could not be registered.
    #[error("the embedded font could not be loaded")]
    Font,
    /// plotters reported a drawing error.
    #[error("drawing failed: {0}")]
    Drawing(String),
    /// The field has the wrong number of values.
    #[error("the field has {got} values, but the mesh has {want} {what}")]
    ValueCount {
        /// Values given.
        got: usize,
        /// Values needed.
        want: usize,
        /// "nodes" or "triangles".
        what: &'static str,
    },
    /// No value of the field is finite.
    #[error("the field has no finite value to plot")]
    NoFiniteValues,
    /// PNG encoding failed.
    #[error("PNG encoding failed: {0}")]
    Encode(String),
    /// Writing the file failed.
    #[error(transparent)]
    Output(#[from] crate::output::OutputError),
}

fn drawing<E: std::fmt::Debug>(e: E) -> PlotError {
    PlotError::Drawing(format!("{e:?}"))
}

/// Font family name under which the embedded font is registered.
const FONT: &str = "sans-serif";
static DEJAVU_SANS: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");

fn register_font() -> Result<(), PlotError> {
    static DONE: OnceLock<bool> = OnceLock::new();
    let ok = *DONE.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, DEJAVU_SANS).is_ok()
    });
    ok.then_some(()).ok_or(PlotError::Font)
}

/// Size and scale of a plot that was drawn.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlotFrame {
    /// Image width, pixels.
    pub width_px: u32,
    /// Image height, pixels.
    pub height_px: u32,
    /// Length units per pixel along the horizontal and vertical axes (equal
    /// up to rounding: the aspect ratio is preserved).
    pub units_per_px: [f64; 2],
}

/// Field values to colour a section with.
#[derive(Clone, Copy, Debug)]
pub enum FieldValues<'a> {
    /// One value per mesh node (vertices and, on quadratic meshes, mid-side
    /// nodes), interpolated with the geometry's shape functions.
    PerNode(&'a [f64]),
    /// One value per triangle (flat colour).
    PerTriangle(&'a [f64]),
}

// Layout, pixels.
const WIDTH: u32 = 1200;
const SIDE_PANEL: u32 = 290;
const TITLE_BAND: u32 = 50;
const MARGIN: u32 = 20;
const X_LABELS: u32 = 60;
const Y_LABELS: u32 = 85;

// Okabe & Ito colour-blind-safe palette (common practice).
const BODY_COLOURS: [RGBColor; 4] = [
    RGBColor(0xE6, 0x9F, 0x00),
    RGBColor(0xCC, 0x79, 0xA7),
    RGBColor(0xF0, 0xE4, 0x42),
    RGBColor(0xD5, 0x5E, 0x00),
];
const SURROUNDINGS_COLOURS: [RGBColor; 2] =
    [RGBColor(0xC6, 0xE2, 0xF5), RGBColor(0xA9, 0xD3, 0xEE)];
const PML_COLOURS: [RGBColor; 2] = [RGBColor(0xD4, 0xD4, 0xD4), RGBColor(0xBB, 0xBB, 0xBB)];
const TAG_COLOURS: [RGBColor; 4] = [
    RGBColor(0xCC, 0x79, 0xA7),
    RGBColor(0x56, 0xB4, 0xE9),
    RGBColor(0x00, 0x00, 0x00),
    RGBColor(0xE6, 0x9F, 0x00),
];

/// Fill colour of each region: bodies warm, surroundings light blue, PML grey.
pub fn region_colours(mesh: &Mesh) -> Vec<[u8; 3]> {
    let mut counts = [0usize; 3];
    mesh.regions()
        .iter()
        .map(|r| {
            let (palette, k): (&[RGBColor], usize) = match r.kind {
                RegionKind::Body { .. } => (&BODY_COLOURS, 0),
                RegionKind::Surroundings => (&SURROUNDINGS_COLOURS, 1),
                RegionKind::Pml => (&PML_COLOURS, 2),
            };
            let c = palette[counts[k] % palette.len()];
            counts[k] += 1;
            [c.0, c.1, c.2]
        })
        .collect()
}

/// Stroke colour of a boundary tag by name: axis vermillion, outer blue,
/// midplane green, others from a fixed palette.
pub fn boundary_colour(name: &str, index: usize) -> [u8; 3] {
    let c = match name {
        twistmode_mesh::boundary_names::AXIS => RGBColor(0xD5, 0x5E, 0x00),
        twistmode_mesh::boundary_names::OUTER => RGBColor(0x00, 0x72, 0xB2),
        twistmode_mesh::boundary_names::MIDPLANE => RGBColor(0x00, 0x9E, 0x73),
        _ => TAG_COLOURS[index % TAG_COLOURS.len()],
    };
    [c.0, c.1, c.2]
}

fn rgb(c: [u8; 3]) -> RGBColor {
    RGBColor(c[0], c[1], c[2])
}

/// Geometry helpers in display units. Every point comes from the mesh
/// crate's triangle map ([`twistmode_mesh::TriangleMap`]), the same map the
/// finite elements use, so curved sides are drawn where they are computed.
struct Geometry<'a> {
    mesh: &'a Mesh,
    scale: f64,
    /// For each global edge: a triangle holding it, its local side, and
    /// whether that side runs along the edge's orientation.
    edge_side: Vec<(usize, usize, bool)>,
}

impl<'a> Geometry<'a> {
    fn new(mesh: &'a Mesh, unit: LengthUnit) -> Self {
        let mut edge_side = vec![(0, 0, true); mesh.edges().len()];
        for (t, sides) in mesh.triangle_edges().iter().enumerate() {
            for (k, (e, sign)) in sides.iter().enumerate() {
                edge_side[e.idx()] = (t, k, *sign > 0);
            }
        }
        Geometry {
            mesh,
            scale: 1.0 / unit.metres(),
            edge_side,
        }
    }

    fn display(&self, p: [f64; 2]) -> (f64, f64) {
        (p[0] * self.scale, p[1] * self.scale)
    }

    /// Points along side `k` of triangle `t`, from its vertex `k` to `k + 1`.
    fn side(&self, t: usize, k: usize) -> Vec<(f64, f64)> {
        let map = self.mesh.triangle_map(t);
        let nodes = map.nodes();
        // Straight sides are drawn as one segment: plotters rasterises a
        // chain of short collinear segments with visible gaps.
        let curved = map.is_quadratic() && !on_chord(nodes[k], nodes[(k + 1) % 3], nodes[3 + k]);
        let n = if curved { 6 } else { 1 };
        (0..=n)
            .map(|i| self.display(map.side_point(k, i as f64 / n as f64)))
            .collect()
    }

    /// The global edge `e` as a polyline, from its low to its high vertex.
    fn edge(&self, e: usize) -> Vec<(f64, f64)> {
        let (t, k, along) = self.edge_side[e];
        let mut pts = self.side(t, k);
        if !along {
            pts.reverse();
        }
        pts
    }

    /// Outline of triangle `t` as a closed polygon (curved sides sampled).
    fn outline(&self, t: usize) -> Vec<(f64, f64)> {
        let mut pts = Vec::new();
        for k in 0..3 {
            let mut side = self.side(t, k);
            side.pop();
            pts.extend(side);
        }
        pts
    }

    /// Point and interpolated value at reference point `(xi, eta)` of
    /// triangle `t`, using the geometry's shape functions.
    fn sample(&self, t: usize, xi: f64, eta: f64, values: &[f64]) -> ((f64, f64), f64) {
        let map = self.mesh.triangle_map(t);
        let weights = map.shape(xi, eta).value;
        let nodes = &self.mesh.triangles()[t].nodes[..map.nodes().len()];
        let v = weights
            .iter()
            .zip(nodes)
            .map(|(w, n)| w * values[n.idx()])
            .sum();
        (self.display(map.point(xi, eta)), v)
    }

    /// Bounding box `[x0, x1, y0, y1]` of the mesh (curved sides included), display units.
    fn bounds(&self) -> [f64; 4] {
        self.mesh.bounding_box().to_array().map(|x| x * self.scale)
    }
}

/// True when `m` is (to 1e-3 of the chord length) the midpoint of the chord `a`-`b`.
fn on_chord(a: [f64; 2], b: [f64; 2], m: [f64; 2]) -> bool {
    let (cx, cy) = (0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1]));
    (m[0] - cx).hypot(m[1] - cy) <= 1e-3 * (b[0] - a[0]).hypot(b[1] - a[1])
}

fn axis_names(mesh: &Mesh) -> (&'static str, &'static str) {
    match mesh.domain().map(|d| d.kind) {
        Some(DomainKind::HalfPlane) => ("r", "z"),
        Some(DomainKind::Box) => ("x", "y"),
        _ => ("u", "v"),
    }
}

/// Image height and the data ranges giving equal scales on both axes.
fn frame(bounds: [f64; 4]) -> (u32, [f64; 4]) {
    let (dx, dy) = (bounds[1] - bounds[0], bounds[3] - bounds[2]);
    let pad = 0.04 * dx.max(dy).max(f64::MIN_POSITIVE);
    let (dx, dy) = (dx + 2.0 * pad, dy + 2.0 * pad);
    let pw = f64::from(WIDTH - SIDE_PANEL - 2 * MARGIN - Y_LABELS);
    let ph = (pw * dy / dx).clamp(420.0, 1000.0);
    let height = ph.round() as u32 + TITLE_BAND + 2 * MARGIN + X_LABELS;
    (
        height,
        [
            bounds[0] - pad,
            bounds[1] + pad,
            bounds[2] - pad,
            bounds[3] + pad,
        ],
    )
}

/// Widens `r` about its centre so that both axes have the same units per
/// pixel on a plotting area of `px` pixels.
fn equalise(r: [f64; 4], px: (u32, u32)) -> [f64; 4] {
    let (w, h) = (f64::from(px.0.max(1)), f64::from(px.1.max(1)));
    let s = ((r[1] - r[0]) / w).max((r[3] - r[2]) / h);
    let (cx, cy) = (0.5 * (r[0] + r[1]), 0.5 * (r[2] + r[3]));
    [
        cx - 0.5 * s * w,
        cx + 0.5 * s * w,
        cy - 0.5 * s * h,
        cy + 0.5 * s * h,
    ]
}

type Chart<'a, 'b> = ChartContext<
    'a,
    BitMapBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

fn text_style(size: f64) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(&BLACK)
}

/// Sets up the canvas: title band, chart with equal aspect, side panel.
/// Calls `draw` with the chart and the side panel, then encodes and writes the PNG.
#[allow(clippy::too_many_arguments)]
fn render(
    path: &Path,
    mesh: &Mesh,
    unit: LengthUnit,
    title: &str,
    view: Option<[f64; 4]>,
    draw: impl FnOnce(
        &mut Chart<'_, '_>,
        &DrawingArea<BitMapBackend<'_>, Shift>,
        &Geometry,
    ) -> Result<(), PlotError>,
) -> Result<PlotFrame, PlotError> {
    register_font()?;
    let geometry = Geometry::new(mesh, unit);
    let bounds = match view {
        Some(v) => v.map(|x| x * geometry.scale),
        None => geometry.bounds(),
    };
    let (height, ranges) = frame(bounds);
    let mut buffer = vec![255u8; (WIDTH * height * 3) as usize];
    let units_per_px;
    {
        let root = BitMapBackend::with_buffer(&mut buffer, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let (title_area, rest) = root.split_vertically(TITLE_BAND);
        title_area
            .draw(&Text::new(
                title.to_string(),
                ((WIDTH / 2) as i32, (TITLE_BAND / 2) as i32 + 4),
                text_style(24.0).pos(Pos::new(HPos::Center, VPos::Center)),
            ))
            .map_err(drawing)?;
        let (chart_area, side) = rest.split_horizontally(WIDTH - SIDE_PANEL);
        let builder = |r: [f64; 4]| {
            ChartBuilder::on(&chart_area)
                .margin(MARGIN)
                .x_label_area_size(X_LABELS)
                .y_label_area_size(Y_LABELS)
                .build_cartesian_2d(r[0]..r[1], r[2]..r[3])
                .map_err(drawing)
        };
        let px = builder(ranges)?.plotting_area().dim_in_pixel();
        let r = equalise(ranges, px);
        units_per_px = [
            (r[1] - r[0]) / f64::from(px.0),
            (r[3] - r[2]) / f64::from(px.1),
        ];
        let mut chart = builder(r)?;
        let (xn, yn) = axis_names(mesh);
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(format!("{xn} ({unit})"))
            .y_desc(format!("{yn} ({unit})"))
            .axis_desc_style(text_style(18.0))
            .label_style(text_style(14.0))
            .x_labels(8)
            .y_labels(8)
            .draw()
            .map_err(drawing)?;
        draw(&mut chart, &side, &geometry)?;
        root.present().map_err(drawing)?;
    }
    let mut png = Vec::new();
    {
        use image::ImageEncoder;
        image::codecs::png::PngEncoder::new(&mut png)
            .write_image(&buffer, WIDTH, height, image::ColorType::Rgb8)
            .map_err(|e| PlotError::Encode(e.to_string()))?;
    }
    crate::output::write_atomic(path, &png)?;
    Ok(PlotFrame {
        width_px: WIDTH,
        height_px: height,
        units_per_px,
    })
}

/// Draws a legend entry: a swatch (filled box or a thick line) and a label.
fn legend_entry(
    side: &DrawingArea<BitMapBackend<'_>, Shift>,
    y: i32,
    colour: RGBColor,
    line: bool,
    label: &str,
) -> Result<(), PlotError> {
    if line {
        side.draw(&PathElement::new(
            vec![(12, y), (40, y)],
            colour.stroke_width(4),
        ))
    } else {
        side.draw(&Rectangle::new([(12, y - 8), (40, y + 8)], colour.filled()))
            .and_then(|_| {
                side.draw(&Rectangle::new(
                    [(12, y - 8), (40, y + 8)],
                    BLACK.stroke_width(1),
                ))
            })
    }
    .map_err(drawing)?;
    side.draw(&Text::new(
        label.to_string(),
        (50, y),
        text_style(15.0).pos(Pos::new(HPos::Left, VPos::Center)),
    ))
    .map_err(drawing)
}

fn heading(
    side: &DrawingArea<BitMapBackend<'_>, Shift>,
    y: i32,
    text: &str,
) -> Result<(), PlotError> {
    side.draw(&Text::new(
        text.to_string(),
        (10, y),
        text_style(17.0).pos(Pos::new(HPos::Left, VPos::Center)),
    ))
    .map_err(drawing)
}

/// Writes a PNG preview of `mesh`: regions filled (bodies warm, surroundings
/// light blue, PML grey), every triangle edge drawn thin, boundary edges thick
/// and coloured by tag, a legend and mesh statistics; axes in `unit`, equal aspect.
pub fn plot_mesh(
    mesh: &Mesh,
    path: &Path,
    title: &str,
    unit: LengthUnit,
) -> Result<PlotFrame, PlotError> {
    let fills = region_colours(mesh);
    render(path, mesh, unit, title, None, |chart, side, g| {
        chart
            .draw_series((0..mesh.triangles().len()).map(|t| {
                let c = rgb(fills[mesh.triangles()[t].region.idx()]);
                Polygon::new(g.outline(t), c.filled())
            }))
            .map_err(drawing)?;
        // Opaque grey: blended strokes darken where curved-edge segments meet.
        let edge_style = RGBColor(0x6E, 0x6E, 0x6E).stroke_width(1);
        chart
            .draw_series((0..mesh.edges().len()).map(|e| PathElement::new(g.edge(e), edge_style)))
            .map_err(drawing)?;
        let names = mesh.boundary_names();
        let tag_colours: Vec<[u8; 3]> = names
            .iter()
            .enumerate()
            .map(|(i, n)| boundary_colour(n, i))
            .collect();
        chart
            .draw_series(mesh.boundary().iter().map(|b| {
                PathElement::new(
                    g.edge(b.edge.idx()),
                    rgb(tag_colours[b.tag.0 as usize]).stroke_width(4),
                )
            }))
            .map_err(drawing)?;

        // Legend.
        let mut y = 20;
        heading(side, y, "Regions")?;
        for (r, region) in mesh.regions().iter().enumerate() {
            y += 26;
            let label = match &region.kind {
                RegionKind::Body { material } if *material != region.name => {
                    format!("{} ({material})", region.name)
                }
                RegionKind::Body { .. } => region.name.clone(),
                RegionKind::Surroundings if region.name != "surroundings" => {
                    format!("{} (surroundings)", region.name)
                }
                RegionKind::Pml if !region.name.eq_ignore_ascii_case("pml") => {
                    format!("{} (PML)", region.name)
                }
                RegionKind::Surroundings => region.name.clone(),
                RegionKind::Pml => "PML".to_string(),
            };
            legend_entry(side, y, rgb(fills[r]), false, &label)?;
        }
        let mut used: BTreeMap<u16, usize> = BTreeMap::new();
        for b in mesh.boundary() {
            *used.entry(b.tag.0).or_default() += 1;
        }
        y += 40;
        heading(side, y, "Boundaries")?;
        for (&tag, &count) in &used {
            y += 26;
            let name = &names[tag as usize];
            legend_entry(
                side,
                y,
                rgb(tag_colours[tag as usize]),
                true,
                &format!("{name} ({count} edges)"),
            )?;
        }
        let q = mesh.quality();
        y += 40;
        heading(side, y, "Mesh")?;
        let order = match mesh.order() {
            GeometryOrder::Linear => "straight (3-node)",
            GeometryOrder::Quadratic => "curved (6-node)",
        };
        for line in [
            format!("{} triangles, {order}", q.triangles),
            format!("{} nodes, {} edges", q.nodes, q.edges),
            format!(
                "angles {:.1} to {:.1} deg",
                q.min_angle_deg, q.max_angle_deg
            ),
        ] {
            y += 22;
            side.draw(&Text::new(
                line,
                (12, y),
                text_style(14.0).pos(Pos::new(HPos::Left, VPos::Center)),
            ))
            .map_err(drawing)?;
        }
        Ok(())
    })
}

/// Formats a colour-bar tick value compactly.
fn tick_label(v: f64) -> String {
    let a = v.abs();
    if a != 0.0 && !(1e-3..1e4).contains(&a) {
        format!("{v:.3e}")
    } else {
        format!("{v:.4}")
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_string()
    }
}

/// Writes a PNG map of a scalar field over the section, coloured with
/// `colormap` (values mapped linearly from their minimum to their maximum),
/// with a colour bar and the body outline drawn. Non-finite values are grey.
pub fn plot_section_field(
    mesh: &Mesh,
    values: FieldValues<'_>,
    path: &Path,
    title: &str,
    colormap: Colormap,
    unit: LengthUnit,
) -> Result<PlotFrame, PlotError> {
    plot_section_field_in(mesh, values, path, title, colormap, unit, None)
}

/// As [`plot_section_field`], showing only the window `view` =
/// `[u_min, u_max, v_min, v_max]` (metres) when given; the colour scale then
/// spans the values of the triangles inside the window.
pub fn plot_section_field_in(
    mesh: &Mesh,
    values: FieldValues<'_>,
    path: &Path,
    title: &str,
    colormap: Colormap,
    unit: LengthUnit,
    view: Option<[f64; 4]>,
) -> Result<PlotFrame, PlotError> {
    let (data, want, what) = match values {
        FieldValues::PerNode(v) => (v, mesh.points().len(), "nodes"),
        FieldValues::PerTriangle(v) => (v, mesh.triangles().len(), "triangles"),
    };
    if data.len() != want {
        return Err(PlotError::ValueCount {
            got: data.len(),
            want,
            what,
        });
    }
    let inside = |p: [f64; 2]| match view {
        Some(v) => p[0] >= v[0] && p[0] <= v[1] && p[1] >= v[2] && p[1] <= v[3],
        None => true,
    };
    let visible: Vec<f64> = match values {
        FieldValues::PerNode(v) => v
            .iter()
            .zip(mesh.points())
            .filter(|(_, p)| inside(**p))
            .map(|(x, _)| *x)
            .collect(),
        FieldValues::PerTriangle(v) => v
            .iter()
            .zip(mesh.triangles())
            .filter(|(_, t)| inside(mesh.points()[t.nodes[0].idx()]))
            .map(|(x, _)| *x)
            .collect(),
    };
    let finite = visible.iter().copied().filter(|v| v.is_finite());
    let lo = finite.clone().fold(f64::INFINITY, f64::min);
    let hi = finite.fold(f64::NEG_INFINITY, f64::max);
    if !lo.is_finite() {
        return Err(PlotError::NoFiniteValues);
    }
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else {
        (lo - 0.5, hi + 0.5)
    };
    let colour = |v: f64| -> RGBColor {
        if v.is_finite() {
            rgb(colormap.rgb(((v - lo) / (hi - lo)).clamp(0.0, 1.0)))
        } else {
            RGBColor(0x99, 0x99, 0x99)
        }
    };
    render(path, mesh, unit, title, view, |chart, side, g| {
        let (xs, ys) = (chart.x_range(), chart.y_range());
        let shown = |pts: &[(f64, f64)]| {
            pts.iter()
                .all(|p| p.0 >= xs.start && p.0 <= xs.end && p.1 >= ys.start && p.1 <= ys.end)
        };
        let units_per_px = {
            let (xr, _) = chart.plotting_area().get_pixel_range();
            let x = chart.x_range();
            (x.end - x.start) / f64::from((xr.end - xr.start).max(1))
        };
        // Each patch is filled and also stroked in its own colour, which closes
        // the one-pixel seams that separate fills of adjacent polygons.
        let mut polys: Vec<(Vec<(f64, f64)>, RGBColor)> = Vec::new();
        for t in 0..mesh.triangles().len() {
            if view.is_some() && !shown(&g.outline(t)) {
                continue;
            }
            match values {
                FieldValues::PerTriangle(v) => polys.push((g.outline(t), colour(v[t]))),
                FieldValues::PerNode(v) => {
                    let outline = g.outline(t);
                    let size = outline
                        .iter()
                        .map(|p| (p.0 - outline[0].0).hypot(p.1 - outline[0].1))
                        .fold(0.0, f64::max);
                    let n = ((size / units_per_px / 4.0).ceil() as usize).clamp(1, 12);
                    subdivide(g, t, n, v, |pts, value| polys.push((pts, colour(value))));
                }
            }
        }
        chart
            .draw_series(
                polys
                    .iter()
                    .map(|(p, c)| Polygon::new(p.clone(), c.filled())),
            )
            .map_err(drawing)?;
        chart
            .draw_series(polys.iter().map(|(p, c)| {
                let mut closed = p.clone();
                closed.push(p[0]);
                PathElement::new(closed, c.stroke_width(1))
            }))
            .map_err(drawing)?;
        chart
            .draw_series(
                body_outline(mesh)
                    .into_iter()
                    .map(|e| PathElement::new(g.edge(e), BLACK.stroke_width(2))),
            )
            .map_err(drawing)?;
        colour_bar(side, colormap, lo, hi)
    })
}

/// Splits triangle `t` into `n * n` sub-triangles; `emit` gets each one's
/// corners and the mean of the interpolated field at them.
fn subdivide(
    g: &Geometry,
    t: usize,
    n: usize,
    values: &[f64],
    mut emit: impl FnMut(Vec<(f64, f64)>, f64),
) {
    let h = 1.0 / n as f64;
    let at = |i: usize, j: usize| g.sample(t, i as f64 * h, j as f64 * h, values);
    for i in 0..n {
        for j in 0..n - i {
            let tri = [at(i, j), at(i + 1, j), at(i, j + 1)];
            emit(
                tri.iter().map(|s| s.0).collect(),
                tri.iter().map(|s| s.1).sum::<f64>() / 3.0,
            );
            if i + j + 1 < n {
                let tri = [at(i + 1, j), at(i + 1, j + 1), at(i, j + 1)];
                emit(
                    tri.iter().map(|s| s.0).collect(),
                    tri.iter().map(|s| s.1).sum::<f64>() / 3.0,
                );
            }
        }
    }
}

/// Global edges between a body triangle and a non-body triangle, or on the
/// mesh boundary next to a body triangle.
pub fn body_outline(mesh: &Mesh) -> Vec<usize> {
    let is_body: Vec<bool> = mesh
        .regions()
        .iter()
        .map(|r| matches!(r.kind, RegionKind::Body { .. }))
        .collect();
    let mut sides: Vec<(u32, u32)> = vec![(0, 0); mesh.edges().len()]; // (body, other) counts
    for (t, tri) in mesh.triangles().iter().enumerate() {
        for (e, _) in &mesh.triangle_edges()[t] {
            if is_body[tri.region.idx()] {
                sides[e.idx()].0 += 1;
            } else {
                sides[e.idx()].1 += 1;
            }
        }
    }
    sides
        .iter()
        .enumerate()
        .filter(|(_, &(b, o))| b == 1 && o <= 1)
        .map(|(e, _)| e)
        .collect()
}

fn colour_bar(
    side: &DrawingArea<BitMapBackend<'_>, Shift>,
    colormap: Colormap,
    lo: f64,
    hi: f64,
) -> Result<(), PlotError> {
    let (_, h) = side.dim_in_pixel();
    let (top, bottom) = (40i32, h as i32 - 100);
    let (x0, x1) = (30i32, 70i32);
    let span = (bottom - top).max(1);
    for py in top..bottom {
        let t = f64::from(bottom - py) / f64::from(span);
        side.draw(&Rectangle::new(
            [(x0, py), (x1, py + 1)],
            rgb(colormap.rgb(t)).filled(),
        ))
        .map_err(drawing)?;
    }
    side.draw(&Rectangle::new(
        [(x0, top), (x1, bottom)],
        BLACK.stroke_width(1),
    ))
    .map_err(drawing)?;
    for k in 0..=4 {
        let t = f64::from(k) / 4.0;
        let y = bottom - (t * f64::from(span)).round() as i32;
        side.draw(&PathElement::new(
            vec![(x1, y), (x1 + 6, y)],
            BLACK.stroke_width(1),
        ))
        .map_err(drawing)?;
        let v = lo + t * (hi - lo);
        let v = if v.abs() < 1e-9 * (hi - lo) { 0.0 } else { v };
        side.draw(&Text::new(
            tick_label(v),
            (x1 + 10, y),
            text_style(15.0).pos(Pos::new(HPos::Left, VPos::Center)),
        ))
        .map_err(drawing)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use twistmode_mesh::{BoundaryTag, MeshParts, NodeId, Region, RegionId, Triangle};

    /// One quadratic triangle (0,0), (2,0), (0,2) mm, its side 0-1 bowed
    /// down to (1, -0.5) mm at the middle, the others straight.
    fn bowed() -> Mesh {
        let mm = 1e-3;
        let points = [
            [0.0, 0.0],
            [2.0, 0.0],
            [0.0, 2.0],
            [1.0, -0.5],
            [1.0, 1.0],
            [0.0, 1.0],
        ]
        .map(|p| [p[0] * mm, p[1] * mm])
        .to_vec();
        // Listed clockwise, so Mesh::new flips it (vertices 1 and 2 swap).
        let order = [0, 2, 1, 5, 4, 3].map(NodeId);
        Mesh::new(MeshParts {
            points,
            order: GeometryOrder::Quadratic,
            triangles: vec![Triangle {
                nodes: order,
                region: RegionId(0),
            }],
            regions: vec![Region {
                name: "body".into(),
                kind: RegionKind::Body {
                    material: "m".into(),
                },
            }],
            boundary_names: vec!["outer".into()],
            boundary_segments: [(0, 1), (1, 2), (2, 0)]
                .map(|(a, b)| ([NodeId(a), NodeId(b)], BoundaryTag(0)))
                .to_vec(),
            domain: None,
        })
        .unwrap()
    }

    #[test]
    fn edges_follow_the_curve_from_low_to_high_vertex() {
        let mesh = bowed();
        let g = Geometry::new(&mesh, LengthUnit::Millimetre);
        for (e, [a, b]) in mesh.edges().iter().enumerate() {
            let line = g.edge(e);
            let (pa, pb) = (
                g.display(mesh.points()[a.idx()]),
                g.display(mesh.points()[b.idx()]),
            );
            assert_eq!((line[0], line[line.len() - 1]), (pa, pb));
            if [a.0, b.0] == [0, 1] {
                // Curved: 7 points, the middle one on the mid-side node.
                assert_eq!(line.len(), 7);
                let m = line[3];
                assert!((m.0 - 1.0).abs() < 1e-12 && (m.1 + 0.5).abs() < 1e-12);
            } else {
                assert_eq!(line.len(), 2);
            }
        }
        // The frame reaches the bulge, below every node but the mid-side one.
        let b = g.bounds();
        assert!((b[2] + 0.5).abs() < 1e-12 && (b[3] - 2.0).abs() < 1e-12);
        // Sampling interpolates with the geometry's shape functions: a field
        // linear in (u, v) is linear in (xi, eta) only for straight maps, but
        // its nodal values interpolate it exactly at the mapped point because
        // u and v themselves are interpolated by the same functions.
        let f = |p: [f64; 2]| 2.0 * p[0] - 3.0 * p[1];
        let values: Vec<f64> = mesh.points().iter().map(|p| f(*p)).collect();
        let (x, v) = g.sample(0, 0.2, 0.3, &values);
        assert!((v - f([x.0 * 1e-3, x.1 * 1e-3])).abs() < 1e-15);
    }
}
