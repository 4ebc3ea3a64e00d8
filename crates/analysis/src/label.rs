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
}
