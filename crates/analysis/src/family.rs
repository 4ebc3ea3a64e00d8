//! Families: modes that share a label, followed across a parameter (the
//! azimuthal order m, a size, the twist), with the figures a designer reads off
//! them: free spectral range and group index.
use std::collections::BTreeMap;

use serde::Serialize;

use crate::figures::SPEED_OF_LIGHT;

/// One mode of a family.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FamilyMember {
    /// The parameter the family runs over (azimuthal order m, for instance).
    pub parameter: f64,
    /// Real part of the resonance frequency, Hz.
    pub frequency_hz: f64,
    /// Quality factor.
    pub q: f64,
}

/// Modes sharing one label, sorted by the parameter.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Family {
    /// The shared label (e.g. "qTE p1 q1").
    pub label: String,
    /// Members in increasing parameter.
    pub members: Vec<FamilyMember>,
}

/// Groups `(label, member)` pairs into families, each sorted by parameter.
/// Where two modes of one label share a parameter value, the one with the
/// lower frequency is kept in that family and the other starts a family
/// labelled `"<label> #2"` (and so on), so no mode is dropped.
pub fn families(modes: &[(String, FamilyMember)]) -> Vec<Family> {
    let mut by_label: BTreeMap<String, Vec<FamilyMember>> = BTreeMap::new();
    for (label, m) in modes {
        by_label.entry(label.clone()).or_default().push(m.clone());
    }
    let mut out = Vec::new();
    for (label, mut members) in by_label {
        members.sort_by(|a, b| {
            a.parameter
                .total_cmp(&b.parameter)
                .then(a.frequency_hz.total_cmp(&b.frequency_hz))
        });
        let mut layers: Vec<Vec<FamilyMember>> = Vec::new();
        for m in members {
            match layers
                .iter_mut()
                .find(|l| l.last().map(|x| x.parameter) != Some(m.parameter))
            {
                Some(layer) => layer.push(m),
                None => layers.push(vec![m]),
            }
        }
        for (i, members) in layers.into_iter().enumerate() {
            let label = if i == 0 {
                label.clone()
            } else {
                format!("{label} #{}", i + 1)
            };
            out.push(Family { label, members });
        }
    }
    out
}

impl Family {
    /// Free spectral range between consecutive members whose parameters differ
    /// by `step` (1 for azimuthal order): `(mid parameter, f(m + step) - f(m))`.
    pub fn free_spectral_range(&self, step: f64) -> Vec<(f64, f64)> {
        self.members
            .windows(2)
            .filter(|w| (w[1].parameter - w[0].parameter - step).abs() < 1e-9)
            .map(|w| {
                (
                    0.5 * (w[0].parameter + w[1].parameter),
                    w[1].frequency_hz - w[0].frequency_hz,
                )
            })
            .collect()
    }

    /// Group index of a ring family from its free spectral range,
    /// `n_g = c / (2 pi R FSR)` (common practice; `R` the radius the
    /// azimuthal phase is referred to).
    pub fn group_index(&self, radius: f64) -> Vec<(f64, f64)> {
        self.free_spectral_range(1.0)
            .into_iter()
            .map(|(m, fsr)| {
                (
                    m,
                    SPEED_OF_LIGHT / (2.0 * std::f64::consts::PI * radius * fsr),
                )
            })
            .collect()
    }
}

/// Matches the modes of one step to those of the next from the magnitude of
/// their overlaps: `overlap[i][j]` between old mode `i` and new mode `j`
/// (e.g. |<x_i, M y_j>| of normalised vectors). Greedy on the largest
/// overlap; pairs below `min_overlap` stay unmatched (`None`).
pub fn match_by_overlap(overlap: &[Vec<f64>], min_overlap: f64) -> Vec<Option<usize>> {
    let rows = overlap.len();
    let cols = overlap.iter().map(|r| r.len()).max().unwrap_or(0);
    let mut cells: Vec<(f64, usize, usize)> = Vec::with_capacity(rows * cols);
    for (i, row) in overlap.iter().enumerate() {
        for (j, &v) in row.iter().enumerate() {
            if v >= min_overlap {
                cells.push((v, i, j));
            }
        }
    }
    cells.sort_by(|a, b| b.0.total_cmp(&a.0));
    let mut row_of = vec![None; rows];
    let mut col_used = vec![false; cols];
    for (_, i, j) in cells {
        if row_of[i].is_none() && !col_used[j] {
            row_of[i] = Some(j);
            col_used[j] = true;
        }
    }
    row_of
}

#[cfg(test)]
mod tests {
    use super::*;

    fn member(p: f64, f: f64) -> FamilyMember {
        FamilyMember {
            parameter: p,
            frequency_hz: f,
            q: 1e4,
        }
    }

    #[test]
    fn fsr_and_group_index_of_a_uniform_comb() {
        // An ideal ring with n_g = 2 and R = 1 mm has f_m = m c / (2 pi R n_g)
        // (resonance condition m lambda = 2 pi R n_eff with constant index;
        // common practice), so FSR = c / (2 pi R n_g).
        let r = 1e-3;
        let ng = 2.0;
        let fsr = SPEED_OF_LIGHT / (2.0 * std::f64::consts::PI * r * ng);
        let modes: Vec<(String, FamilyMember)> = (10..15)
            .map(|m| ("qTE p1".to_string(), member(m as f64, m as f64 * fsr)))
            .collect();
        let fam = families(&modes);
        assert_eq!(fam.len(), 1);
        let gi = fam[0].group_index(r);
        assert_eq!(gi.len(), 4);
        for (_, g) in gi {
            assert!((g - ng).abs() < 1e-12);
        }
    }

    #[test]
    fn duplicates_split_into_numbered_families() {
        let modes = vec![
            ("a".to_string(), member(1.0, 2.0)),
            ("a".to_string(), member(1.0, 1.0)),
            ("a".to_string(), member(2.0, 3.0)),
            ("b".to_string(), member(1.0, 5.0)),
        ];
        let fam = families(&modes);
        let labels: Vec<_> = fam.iter().map(|f| f.label.as_str()).collect();
        assert_eq!(labels, ["a", "a #2", "b"]);
        assert_eq!(fam[0].members.len(), 2);
        assert_eq!(fam[0].members[0].frequency_hz, 1.0);
        assert_eq!(fam[1].members[0].frequency_hz, 2.0);
    }

    #[test]
    fn overlap_matching_follows_the_largest_overlap() {
        let ov = vec![
            vec![0.1, 0.95, 0.0],
            vec![0.9, 0.2, 0.1],
            vec![0.0, 0.1, 0.3],
        ];
        assert_eq!(match_by_overlap(&ov, 0.5), vec![Some(1), Some(0), None]);
    }
}
