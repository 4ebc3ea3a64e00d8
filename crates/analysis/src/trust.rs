//! Flags on numbers the tool is not sure of. A flagged mode is still
//! reported, with the flag beside it, never silently.
use serde::Serialize;

/// Why a mode's figures should not be taken at face value.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(tag = "flag", rename_all = "kebab-case")]
pub enum Flag {
    /// The eigenpair residual is above the tolerance.
    Unconverged {
        /// The residual found.
        residual: f64,
    },
    /// `Im k0 > 0`: the mode grows in time, which a passive body cannot do;
    /// usually a PML or discretisation artefact.
    Growing,
    /// Q is above the largest value the PML can resolve: only a lower bound.
    QAbovePmlLimit {
        /// The limit used.
        limit: f64,
    },
    /// The PML starts inside the radiation caustic of this mode (where the
    /// field is still evanescent), so Q is meaningless; `Re k0` is still fine.
    PmlInsideCaustic {
        /// Distance of the caustic from the axis, metres.
        caustic: f64,
        /// Distance from the axis where the PML starts (outer side), metres.
        pml_start: f64,
    },
    /// Most of the electric energy lies outside the body.
    LowConfinement {
        /// Fraction of the electric energy inside the body.
        confinement: f64,
    },
    /// A twisted-ring mode whose `k0` changed by more than the tolerance when the
    /// harmonic window was narrowed by one on each side (or had no partner there).
    HarmonicsUnconverged {
        /// `|k0_K - k0_(K-1)| / |k0_K|`, if a partner was found.
        change: Option<f64>,
        /// The tolerance it was held to.
        tolerance: f64,
    },
    /// More of the electric energy lies in the PML than a resonance normally has:
    /// either a very leaky resonance (kept because a complex target was given) or a
    /// mode of the PML itself. A resonance keeps its `k0` when the PML changes; a
    /// PML mode does not.
    PmlDominated {
        /// Fraction of the electric energy inside the PML.
        pml_fraction: f64,
        /// Relative change of the complex `k0` when the PML was made thicker, if that
        /// check ran (small: a resonance; modes that moved are not reported).
        k0_change_with_pml: Option<f64>,
    },
}

impl Flag {
    /// Short text for tables.
    pub fn short(&self) -> String {
        match self {
            Flag::Unconverged { residual } => format!("residual {residual:.1e}"),
            Flag::Growing => "growing (Im k0 > 0)".into(),
            Flag::QAbovePmlLimit { limit } => format!("Q > {limit:.0e} (PML limit)"),
            Flag::PmlInsideCaustic { .. } => "PML inside caustic: Q unreliable".into(),
            Flag::LowConfinement { confinement } => {
                format!("confinement {:.0}%", 100.0 * confinement)
            }
            Flag::HarmonicsUnconverged {
                change: Some(change),
                ..
            } => format!("harmonics: changed {change:.0e} from K-1"),
            Flag::HarmonicsUnconverged { change: None, .. } => {
                "harmonics: no partner at K-1".into()
            }
            Flag::PmlDominated {
                pml_fraction,
                k0_change_with_pml: None,
            } => format!(
                "{:.0}% in PML: vary the PML to confirm",
                100.0 * pml_fraction
            ),
            Flag::PmlDominated {
                pml_fraction,
                k0_change_with_pml: Some(change),
            } => format!(
                "{:.0}% in PML; k0 moved {change:.0e} with a thicker PML",
                100.0 * pml_fraction
            ),
        }
    }
}

/// What the trust checks look at.
#[derive(Clone, Copy, Debug)]
pub struct TrustInputs {
    /// `Re k0`, 1/m.
    pub k0_re: f64,
    /// `Im k0`, 1/m.
    pub k0_im: f64,
    /// Relative residual of the eigenpair.
    pub residual: f64,
    /// Residual tolerance.
    pub tolerance: f64,
    /// Azimuthal order (|m|), for bodies with an axis; `None` for straight guides.
    pub azimuthal_order: Option<f64>,
    /// Refractive index of the medium around the body.
    pub outer_index: f64,
    /// Smallest distance from the axis at which the PML starts on the outer
    /// side of the body (metres); `None` when there is no PML.
    pub pml_start_from_axis: Option<f64>,
    /// Fraction of electric energy inside the body.
    pub confinement: f64,
    /// Largest Q the PML is trusted to resolve.
    pub q_limit: f64,
    /// Whether the domain ends in a PML (else it is closed by walls).
    pub has_pml: bool,
}

/// Runs every check and returns the flags that apply.
///
/// The caustic check: outside the body a field `exp(i m phi)` behaves as
/// `H_m(n k0 r)`, which turns from evanescent to radiating where its argument
/// passes its order, at `r_c = m / (n k0)` (the turning point of the Bessel
/// equation; common practice in whispering-gallery analysis). A PML that
/// starts at `r < r_c` damps an evanescent tail, not a radiating wave.
pub fn check(inputs: &TrustInputs) -> Vec<Flag> {
    let mut flags = Vec::new();
    if inputs.residual.is_nan() || inputs.residual > inputs.tolerance {
        flags.push(Flag::Unconverged {
            residual: inputs.residual,
        });
    }
    // Within the PML's resolution band |Im k0| < Re k0 / (2 q_limit) the sign
    // of Im k0 is noise: such a mode is lossless as far as the PML can tell.
    let band = inputs.k0_re.abs() / (2.0 * inputs.q_limit);
    if inputs.has_pml && inputs.k0_im.abs() < band {
        flags.push(Flag::QAbovePmlLimit {
            limit: inputs.q_limit,
        });
    } else if inputs.k0_im > 0.0 && inputs.k0_im > 1e-12 * inputs.k0_re.abs() {
        flags.push(Flag::Growing);
    }
    if let (Some(start), Some(m)) = (inputs.pml_start_from_axis, inputs.azimuthal_order) {
        let caustic = m.abs() / (inputs.outer_index * inputs.k0_re);
        if start < caustic {
            flags.push(Flag::PmlInsideCaustic {
                caustic,
                pml_start: start,
            });
        }
    }
    if inputs.confinement < 0.5 {
        flags.push(Flag::LowConfinement {
            confinement: inputs.confinement,
        });
    }
    flags
}

#[cfg(test)]
mod tests {
    use super::*;

    fn base() -> TrustInputs {
        TrustInputs {
            k0_re: 100.0,
            k0_im: -0.01,
            residual: 1e-12,
            tolerance: 1e-8,
            azimuthal_order: Some(10.0),
            outer_index: 1.0,
            pml_start_from_axis: Some(0.2),
            confinement: 0.9,
            q_limit: 1e6,
            has_pml: true,
        }
    }

    #[test]
    fn clean_mode_has_no_flags() {
        // caustic at 10 / 100 = 0.1 m, PML at 0.2 m: beyond it.
        assert!(check(&base()).is_empty());
    }

    #[test]
    fn each_check_fires() {
        let mut i = base();
        i.pml_start_from_axis = Some(0.05);
        assert!(
            matches!(check(&i)[0], Flag::PmlInsideCaustic { caustic, .. } if (caustic - 0.1).abs() < 1e-15)
        );
        let mut i = base();
        i.k0_im = 0.01;
        assert_eq!(check(&i), vec![Flag::Growing]);
        // A tiny positive Im k0 inside the PML's resolution is noise, not growth.
        let mut i = base();
        i.k0_im = 1e-6;
        assert_eq!(check(&i), vec![Flag::QAbovePmlLimit { limit: 1e6 }]);
        // Closed by walls: no PML flag; a lossless mode has no flag at all.
        let mut i = base();
        i.has_pml = false;
        i.pml_start_from_axis = None;
        i.k0_im = 0.0;
        assert!(check(&i).is_empty());
        let mut i = base();
        i.k0_im = -1e-6; // Q = 5e7
        assert_eq!(check(&i), vec![Flag::QAbovePmlLimit { limit: 1e6 }]);
        let mut i = base();
        i.residual = f64::NAN;
        assert!(matches!(check(&i)[0], Flag::Unconverged { .. }));
        let mut i = base();
        i.confinement = 0.2;
        assert_eq!(check(&i), vec![Flag::LowConfinement { confinement: 0.2 }]);
    }
}
