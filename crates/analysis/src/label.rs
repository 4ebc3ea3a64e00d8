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

/// Counts the local maxima of `samples` (e.g. |E|^2 along a line across the
/// section) that rise above `rel_threshold` times the largest sample. A
/// plateau counts once; the ends count when they exceed their one neighbour.
pub fn count_maxima(samples: &[f64], rel_threshold: f64) -> usize {
    let peak = samples.iter().cloned().fold(0.0, f64::max);
    if peak.is_nan() || peak <= 0.0 {
        return 0;
    }
    let floor = rel_threshold * peak;
    let n = samples.len();
    let mut count = 0;
    let mut i = 0;
    while i < n {
        // extent of the plateau starting at i
        let mut j = i;
        while j + 1 < n && samples[j + 1] == samples[i] {
            j += 1;
        }
        let left_lower = i == 0 || samples[i - 1] < samples[i];
        let right_lower = j + 1 == n || samples[j + 1] < samples[i];
        if left_lower && right_lower && samples[i] >= floor && n > 1 {
            count += 1;
        }
        i = j + 1;
    }
    count
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
        // A small ripple below the threshold is ignored.
        let s = [0.0, 1.0, 0.5, 0.55, 0.5, 0.0];
        assert_eq!(count_maxima(&s, 0.6), 1);
        assert_eq!(count_maxima(&s, 0.1), 2);
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
}
