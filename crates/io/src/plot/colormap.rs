//! Perceptually uniform colour maps from their published tables.

use std::sync::OnceLock;

/// A colour map for field plots.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum Colormap {
    /// viridis (van der Walt & Smith, 2015): perceptually uniform, lightness
    /// rising monotonically from dark blue-violet to yellow.
    #[default]
    Viridis,
}

/// The published viridis table: 256 sRGB triples in 0..1 (CC0 data).
const VIRIDIS_TABLE: &str = include_str!("../../assets/viridis.txt");

fn viridis() -> &'static [[f64; 3]] {
    static TABLE: OnceLock<Vec<[f64; 3]>> = OnceLock::new();
    TABLE.get_or_init(|| {
        VIRIDIS_TABLE
            .lines()
            .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
            .map(|l| {
                let v: Vec<f64> = l
                    .split_whitespace()
                    .map(|x| x.parse().expect("viridis table holds numbers"))
                    .collect();
                [v[0], v[1], v[2]]
            })
            .collect()
    })
}

impl Colormap {
    /// The map's table of sRGB colours (components in 0..1), low to high.
    pub fn table(self) -> &'static [[f64; 3]] {
        match self {
            Colormap::Viridis => viridis(),
        }
    }

    /// Colour at `t` in [0, 1] (clamped; NaN gives the low end), as 8-bit sRGB,
    /// interpolated linearly between table entries.
    pub fn rgb(self, t: f64) -> [u8; 3] {
        let table = self.table();
        let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
        let x = t * (table.len() - 1) as f64;
        let i = (x.floor() as usize).min(table.len() - 2);
        let f = x - i as f64;
        let (a, b) = (table[i], table[i + 1]);
        let c = |k: usize| ((a[k] + f * (b[k] - a[k])) * 255.0).round() as u8;
        [c(0), c(1), c(2)]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// CIE 1976 L* of an sRGB colour (sRGB transfer curve, IEC 61966-2-1;
    /// D65 luminance weights of BT.709 primaries; L* from CIE 15).
    fn lightness(rgb: [f64; 3]) -> f64 {
        let lin = |c: f64| {
            if c <= 0.04045 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        let y = 0.2126 * lin(rgb[0]) + 0.7152 * lin(rgb[1]) + 0.0722 * lin(rgb[2]);
        if y > (6.0f64 / 29.0).powi(3) {
            116.0 * y.cbrt() - 16.0
        } else {
            y * (29.0f64 / 3.0).powi(3)
        }
    }

    #[test]
    fn viridis_table_is_complete_and_monotonic_in_lightness() {
        let t = Colormap::Viridis.table();
        assert_eq!(t.len(), 256);
        // viridis is designed with lightness rising monotonically
        // (van der Walt & Smith, SciPy 2015 talk "A Better Default Colormap"; from memory).
        let l: Vec<f64> = t.iter().map(|&c| lightness(c)).collect();
        assert!(
            l.windows(2).all(|w| w[1] > w[0]),
            "lightness not increasing"
        );
        // Ends: about L* 16 and 92 (from memory), i.e. a wide lightness range.
        assert!(l[0] < 20.0 && l[255] > 88.0, "{} {}", l[0], l[255]);
    }

    #[test]
    fn viridis_ends_match_published_hex_codes() {
        // Published endpoints #440154 and #FDE725 (common practice: matplotlib docs; from memory).
        assert_eq!(Colormap::Viridis.rgb(0.0), [0x44, 0x01, 0x54]);
        assert_eq!(Colormap::Viridis.rgb(1.0), [0xFD, 0xE7, 0x25]);
        assert_eq!(Colormap::Viridis.rgb(f64::NAN), [0x44, 0x01, 0x54]);
        assert_eq!(Colormap::Viridis.rgb(7.0), [0xFD, 0xE7, 0x25]);
    }
}
