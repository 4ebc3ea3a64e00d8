//! Line charts (family dispersion, free spectral range, convergence).
use std::path::Path;

use plotters::prelude::*;

use super::{drawing, register_font, text_style, PlotError};

/// One named series of `(x, y)` points, drawn as a line with markers.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// Points, in drawing order.
    pub points: Vec<(f64, f64)>,
}

/// Colour-blind-safe palette (Okabe & Ito, 2008; common practice for categorical data).
const PALETTE: [RGBColor; 8] = [
    RGBColor(0x00, 0x72, 0xB2),
    RGBColor(0xD5, 0x5E, 0x00),
    RGBColor(0x00, 0x9E, 0x73),
    RGBColor(0xCC, 0x79, 0xA7),
    RGBColor(0xE6, 0x9F, 0x00),
    RGBColor(0x56, 0xB4, 0xE9),
    RGBColor(0xF0, 0xE4, 0x42),
    RGBColor(0x00, 0x00, 0x00),
];

/// Writes a PNG line chart of `series` with axis labels and a legend.
pub fn plot_lines(
    path: &Path,
    title: &str,
    x_label: &str,
    y_label: &str,
    series: &[Series],
) -> Result<(), PlotError> {
    register_font()?;
    let pts = series
        .iter()
        .flat_map(|s| s.points.iter())
        .filter(|p| p.0.is_finite() && p.1.is_finite());
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for p in pts {
        x0 = x0.min(p.0);
        x1 = x1.max(p.0);
        y0 = y0.min(p.1);
        y1 = y1.max(p.1);
    }
    if !x0.is_finite() {
        return Err(PlotError::NoFiniteValues);
    }
    let pad = |a: f64, b: f64| {
        let d = if b > a {
            0.05 * (b - a)
        } else {
            0.5 * a.abs().max(1.0)
        };
        (a - d, b + d)
    };
    let (x0, x1) = pad(x0, x1);
    let (y0, y1) = pad(y0, y1);
    let (w, h) = (1100u32, 750u32);
    let mut buffer = vec![255u8; (w * h * 3) as usize];
    {
        let root = BitMapBackend::with_buffer(&mut buffer, (w, h)).into_drawing_area();
        root.fill(&WHITE).map_err(drawing)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, text_style(22.0))
            .margin(20)
            .x_label_area_size(50)
            .y_label_area_size(90)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(drawing)?;
        chart
            .configure_mesh()
            .x_desc(x_label)
            .y_desc(y_label)
            .axis_desc_style(text_style(18.0))
            .label_style(text_style(14.0))
            .light_line_style(RGBColor(0xEE, 0xEE, 0xEE))
            .draw()
            .map_err(drawing)?;
        for (i, s) in series.iter().enumerate() {
            let c = PALETTE[i % PALETTE.len()];
            chart
                .draw_series(LineSeries::new(s.points.iter().copied(), c.stroke_width(2)))
                .map_err(drawing)?
                .label(s.name.clone())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], c.stroke_width(3))
                });
            chart
                .draw_series(s.points.iter().map(|p| Circle::new(*p, 4, c.filled())))
                .map_err(drawing)?;
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.9))
            .border_style(BLACK)
            .label_font(text_style(14.0))
            .position(SeriesLabelPosition::UpperLeft)
            .draw()
            .map_err(drawing)?;
        root.present().map_err(drawing)?;
    }
    let mut png = Vec::new();
    {
        use image::ImageEncoder;
        image::codecs::png::PngEncoder::new(&mut png)
            .write_image(&buffer, w, h, image::ColorType::Rgb8)
            .map_err(|e| PlotError::Encode(e.to_string()))?;
    }
    crate::output::write_atomic(path, &png)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_a_png_and_refuses_empty_data() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("lines.png");
        let series = vec![
            Series {
                name: "a".into(),
                points: (0..10).map(|i| (i as f64, (i * i) as f64)).collect(),
            },
            Series {
                name: "b".into(),
                points: (0..10).map(|i| (i as f64, 3.0 * i as f64)).collect(),
            },
        ];
        plot_lines(&path, "t", "x", "y", &series).unwrap();
        let bytes = std::fs::read(&path).unwrap();
        assert!(bytes.starts_with(&[0x89, b'P', b'N', b'G']));
        assert!(matches!(
            plot_lines(&path, "t", "x", "y", &[]),
            Err(PlotError::NoFiniteValues)
        ));
    }
}
