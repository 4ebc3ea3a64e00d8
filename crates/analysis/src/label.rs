//! Labels of one mode: polarisation class and field-maximum counts.
use serde::Serialize;

/// Polarisation class in the section's own frame.
///
/// The trade's names: quasi-TE when the electric energy in the body lies
/// mostly along the section's wide side, quasi-TM when mostly along its
/// narrow side (common practice for rectangular dielectric guides and rings).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Polarisation {
    /// Electric energy mostly along the wide side.
    QuasiTe,
    /// Electric energy mostly along the narrow side.
    QuasiTm,
    /// Neither direction dominates (or the section has no wide side).
    Mixed,
}

impl Polarisation {
    /// Short name for tables.
    pub fn short(self) -> &'static str {
        match self {
            Polarisation::QuasiTe => "qTE",
            Polarisation::QuasiTm => "qTM",
            Polarisation::Mixed => "mixed",
        }
    }
}

/// Classifies from the electric energy in the body along the section's wide
/// and narrow directions (any common scale). `dominance` is the fraction of
/// the transverse energy one direction must hold (e.g. 0.7).
///
/// Returns `Mixed` when the section has no wide side (`aspect` within 1% of 1,
/// `aspect` = wide extent / narrow extent) or when neither direction reaches
/// `dominance`.
pub fn classify_polarisation(
    energy_wide: f64,
    energy_narrow: f64,
    aspect: f64,
    dominance: f64,
) -> Polarisation {
    let total = energy_wide + energy_narrow;
    if total.is_nan() || total <= 0.0 || (aspect - 1.0).abs() < 0.01 {
        return Polarisation::Mixed;
    }
    if energy_wide >= dominance * total {
        Polarisation::QuasiTe
    } else if energy_narrow >= dominance * total {
        Polarisation::QuasiTm
    } else {
        Polarisation::Mixed
    }
}

/// Counts the maxima of `samples` (e.g. |E|^2 along a line across the
/// section) whose topographic prominence is at least `rel_prominence` times
/// the largest sample: the height a peak rises above the higher of the two
/// lowest points separating it from higher ground (or from the ends, beyond
/// which the samples are taken as 0). Prominence, not mere local maximality,
/// keeps the small steps of a piecewise finite-element field from counting
/// as extra maxima. A plateau counts once.
pub fn count_maxima(samples: &[f64], rel_prominence: f64) -> usize {
    let peak = samples.iter().cloned().fold(0.0, f64::max);
    if peak.is_nan() || peak <= 0.0 {
        return 0;
    }
    let floor = rel_prominence * peak;
    let n = samples.len();
    let mut count = 0;
    let mut i = 0;
    while i < n {
        let mut j = i;
        while j + 1 < n && samples[j + 1] == samples[i] {
            j += 1;
        }
        let h = samples[i];
        let left_lower = i == 0 || samples[i - 1] < h;
        let right_lower = j + 1 == n || samples[j + 1] < h;
        if left_lower && right_lower && h > 0.0 {
            // Lowest point on each side before higher ground (0 past the ends).
            let mut left_min = h;
            let mut k = i;
            loop {
                if k == 0 {
                    left_min = 0.0;
                    break;
                }
                k -= 1;
                if samples[k] > h {
                    break;
                }
                left_min = left_min.min(samples[k]);
            }
            let mut right_min = h;
            let mut k = j;
            loop {
                if k + 1 == n {
                    right_min = 0.0;
                    break;
                }
                k += 1;
                if samples[k] > h {
                    break;
                }
                right_min = right_min.min(samples[k]);
            }
            if h - left_min.max(right_min) >= floor {
                count += 1;
            }
        }
        i = j + 1;
    }
    count
}

/// A mode's family label: polarisation class, field-maximum counts across the section and,
/// for twisted rings whose section is symmetric under rotation by pi, the sector `s` of
/// that rotation. The dominant harmonic is not part of it: it changes along a family.
///
/// One text form for tables, CSV, JSON and sweep files (what `Display` writes, `FromStr`
/// reads and `Serialize` stores): `<class> u<maxima_u> v<maxima_v>`, then ` s+` or ` s-`
/// when a sector is set; for example `qTE u1 v1 s-`. Class names are those of
/// [`Polarisation::short`].
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct ModeLabel {
    /// Polarisation class.
    pub class: Polarisation,
    /// Field maxima across the section's u direction (radial order for rings).
    pub maxima_u: usize,
    /// Field maxima across the section's v direction.
    pub maxima_v: usize,
    /// Sector `+1` or `-1` of the rotation by pi (twisted rings on a pi-symmetric mesh).
    pub sector: Option<i8>,
}

impl std::fmt::Display for ModeLabel {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} u{} v{}",
            self.class.short(),
            self.maxima_u,
            self.maxima_v
        )?;
        match self.sector {
            Some(s) if s > 0 => write!(f, " s+"),
            Some(_) => write!(f, " s-"),
            None => Ok(()),
        }
    }
}

impl std::str::FromStr for ModeLabel {
    type Err = String;

    /// Reads the text form back (sweep files written by an earlier run).
    fn from_str(text: &str) -> Result<Self, String> {
        let bad =
            || format!("'{text}' is not a mode label such as \"qTE u1 v1\" or \"qTM u2 v1 s-\"");
        let mut words = text.split_whitespace();
        let class = match words.next() {
            Some("qTE") => Polarisation::QuasiTe,
            Some("qTM") => Polarisation::QuasiTm,
            Some("mixed") => Polarisation::Mixed,
            _ => return Err(bad()),
        };
        let count = |word: Option<&str>, prefix: char| -> Result<usize, String> {
            word.and_then(|w| w.strip_prefix(prefix))
                .and_then(|n| n.parse().ok())
                .ok_or_else(bad)
        };
        let maxima_u = count(words.next(), 'u')?;
        let maxima_v = count(words.next(), 'v')?;
        let sector = match words.next() {
            None => None,
            Some("s+") => Some(1),
            Some("s-") => Some(-1),
            Some(_) => return Err(bad()),
        };
        if words.next().is_some() {
            return Err(bad());
        }
        Ok(ModeLabel {
            class,
            maxima_u,
            maxima_v,
            sector,
        })
    }
}

impl Serialize for ModeLabel {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn maxima_of_standing_waves() {
        // |sin(p pi x)|^2 on (0, 1) has exactly p maxima (elementary).
        for p in 1..=6 {
            let s: Vec<f64> = (1..400)
                .map(|i| {
                    let x = i as f64 / 400.0;
                    (p as f64 * std::f64::consts::PI * x).sin().powi(2)
                })
                .collect();
            assert_eq!(count_maxima(&s, 0.1), p);
        }
        assert_eq!(count_maxima(&[0.0; 10], 0.1), 0);
        // A ripple of prominence 0.05 counts only below that threshold.
        let s = [0.0, 1.0, 0.5, 0.55, 0.5, 0.0];
        assert_eq!(count_maxima(&s, 0.1), 1);
        assert_eq!(count_maxima(&s, 0.01), 2);
        // A staircase (piecewise field with small jumps) has one maximum.
        let s = [0.1, 0.3, 0.29, 0.6, 0.58, 1.0, 0.97, 0.5, 0.2];
        assert_eq!(count_maxima(&s, 0.1), 1);
        // Two equal humps separated by a deep valley.
        let s = [0.2, 1.0, 0.1, 1.0, 0.2];
        assert_eq!(count_maxima(&s, 0.5), 2);
    }

    #[test]
    fn polarisation_classes() {
        assert_eq!(
            classify_polarisation(9.0, 1.0, 3.0, 0.7),
            Polarisation::QuasiTe
        );
        assert_eq!(
            classify_polarisation(1.0, 9.0, 3.0, 0.7),
            Polarisation::QuasiTm
        );
        assert_eq!(
            classify_polarisation(5.0, 5.0, 3.0, 0.7),
            Polarisation::Mixed
        );
        // A square or round section has no wide side.
        assert_eq!(
            classify_polarisation(9.0, 1.0, 1.0, 0.7),
            Polarisation::Mixed
        );
    }

    #[test]
    fn mode_labels_have_one_text_form_that_reads_back() {
        let label = ModeLabel {
            class: Polarisation::QuasiTe,
            maxima_u: 1,
            maxima_v: 2,
            sector: Some(-1),
        };
        assert_eq!(label.to_string(), "qTE u1 v2 s-");
        assert_eq!("qTE u1 v2 s-".parse::<ModeLabel>(), Ok(label));
        let plain = ModeLabel {
            sector: None,
            class: Polarisation::Mixed,
            ..label
        };
        assert_eq!(plain.to_string(), "mixed u1 v2");
        assert_eq!(plain.to_string().parse::<ModeLabel>(), Ok(plain));
        assert_eq!(serde_json::to_string(&label).unwrap(), "\"qTE u1 v2 s-\"");
        for bad in [
            "",
            "qTE",
            "qTE u1",
            "TE u1 v1",
            "qTE v1 u1",
            "qTE u1 v1 s0",
            "qTE u1 v1 s+ x",
        ] {
            let err = bad.parse::<ModeLabel>().unwrap_err();
            assert!(err.contains("is not a mode label"), "{err}");
        }
    }
}
