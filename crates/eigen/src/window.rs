//! Covering a band of eigenvalues with several shifts and merging the duplicates.

use faer::c64;

use crate::solve::dot;
use crate::{EigenError, EigenPair, Pencil, ShiftInvert, SolveOptions, Stats, Status};

/// How the shifts are spread over the band.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ShiftSpacing {
    /// equal steps in `lambda`
    Lambda,
    /// equal steps in `sqrt(lambda)` (equal steps in frequency when `lambda = k^2`)
    SqrtLambda,
}

/// A band `lo <= Re(lambda) <= hi` and the shifts that cover it.
#[derive(Debug, Clone, Copy)]
pub struct Window {
    /// lower end of the band (real part of lambda)
    pub lo: f64,
    /// upper end of the band
    pub hi: f64,
    /// number of shifts, placed at the midpoints of equal sub-bands
    pub shifts: usize,
    /// spacing of the shifts
    pub spacing: ShiftSpacing,
}

impl Window {
    /// The real shifts, ascending.
    pub fn shift_values(&self) -> Vec<f64> {
        let k = self.shifts.max(1) as f64;
        (0..self.shifts.max(1))
            .map(|s| {
                let t = (s as f64 + 0.5) / k;
                match self.spacing {
                    ShiftSpacing::Lambda => self.lo + t * (self.hi - self.lo),
                    ShiftSpacing::SqrtLambda => {
                        let (a, b) = (self.lo.max(0.0).sqrt(), self.hi.max(0.0).sqrt());
                        (a + t * (b - a)).powi(2)
                    }
                }
            })
            .collect()
    }
}

/// What happened at one shift of a window.
#[derive(Debug, Clone)]
pub struct ShiftOutcome {
    /// shift factorised
    pub shift: c64,
    /// requested shift, if it was nudged
    pub nudged_from: Option<c64>,
    /// how the solve at this shift ended
    pub status: Status,
    /// pairs found at this shift (before merging)
    pub found: usize,
    /// distance from the shift to the farthest converged pair: the disc this shift
    /// covers completely
    pub radius: f64,
    /// counters of this shift
    pub stats: Stats,
}

/// Merged result over a window.
#[derive(Debug, Clone)]
pub struct WindowSpectrum {
    /// distinct pairs with `lo <= Re(lambda) <= hi`, ascending in `Re(lambda)`
    pub pairs: Vec<EigenPair>,
    /// one entry per shift
    pub shifts: Vec<ShiftOutcome>,
    /// pairs dropped as copies of a pair found from another shift
    pub merged_duplicates: usize,
    /// static pairs set aside over all shifts (counted once per shift)
    pub static_dropped: usize,
    /// parts of `[lo, hi]` not inside any shift's covered disc (empty when covered)
    pub gaps: Vec<(f64, f64)>,
}

/// Covers `window` with shifts, `opts.count` pairs per shift, one symbolic analysis for all.
///
/// Pairs found from two shifts are the same pair when their eigenvalues agree to
/// `1e-6` relative and the later vector lies (to 10 %) in the span of the earlier ones of
/// that eigenvalue; so an eigenvalue of multiplicity two keeps two independent vectors.
pub fn solve_window(
    pencil: &Pencil,
    window: &Window,
    opts: &SolveOptions,
) -> Result<WindowSpectrum, EigenError> {
    if window.hi.is_nan() || window.lo.is_nan() || window.hi <= window.lo || window.shifts == 0 {
        return Err(EigenError::InvalidOption(format!(
            "window needs lo < hi and at least one shift, got [{}, {}] with {} shifts",
            window.lo, window.hi, window.shifts
        )));
    }
    // One equilibration (at the window's middle) serves every shift.
    let scaled = crate::scaling::equilibrate(pencil, 0.5 * (window.lo.abs() + window.hi.abs()))?;
    let mut op = ShiftInvert::for_options(&scaled.pencil, opts)?;
    let mut all: Vec<EigenPair> = Vec::new();
    let mut shifts = Vec::new();
    let mut static_dropped = 0;
    for sigma in window.shift_values() {
        let sigma = c64::new(sigma, 0.0);
        let mut spectrum = op.solve_near(sigma, opts)?;
        crate::solve::restore_pairs(pencil, &scaled, opts.tol, &mut spectrum.pairs)?;
        let radius = spectrum
            .pairs
            .iter()
            .filter(|p| p.converged)
            .map(|p| (p.lambda - sigma).norm())
            .fold(0.0, f64::max);
        static_dropped += spectrum.static_dropped;
        shifts.push(ShiftOutcome {
            shift: spectrum.shift,
            nudged_from: spectrum.nudged_from,
            status: spectrum.status,
            found: spectrum.pairs.len(),
            radius,
            stats: spectrum.stats,
        });
        all.extend(spectrum.pairs);
    }
    let before = all.len();
    let mut pairs = merge_duplicates(all);
    let merged_duplicates = before - pairs.len();
    pairs.retain(|p| p.lambda.re >= window.lo && p.lambda.re <= window.hi);
    let gaps = uncovered(window.lo, window.hi, &shifts);
    Ok(WindowSpectrum {
        pairs,
        shifts,
        merged_duplicates,
        static_dropped,
        gaps,
    })
}

/// Removes pairs that repeat an earlier one (eigenvalue within 1e-6 relative, vector in
/// the span of the kept vectors of that eigenvalue); keeps the one with smaller residual
/// first. Result ascending in `Re(lambda)`.
pub fn merge_duplicates(mut pairs: Vec<EigenPair>) -> Vec<EigenPair> {
    pairs.sort_by(|a, b| a.residual.total_cmp(&b.residual));
    let mut kept: Vec<EigenPair> = Vec::new();
    // orthonormal bases of the kept vectors, one per kept pair's eigenvalue cluster
    for p in pairs {
        let scale = p.lambda.norm().max(f64::MIN_POSITIVE);
        let near: Vec<&EigenPair> = kept
            .iter()
            .filter(|q| (q.lambda - p.lambda).norm() <= 1e-6 * scale)
            .collect();
        let mut basis: Vec<Vec<c64>> = Vec::new();
        for q in near {
            let mut v = q.vector.clone();
            orthogonalise(&mut v, &basis);
            let s = norm(&v);
            if s > 1e-8 {
                v.iter_mut().for_each(|a| *a /= s);
                basis.push(v);
            }
        }
        let mut v = p.vector.clone();
        orthogonalise(&mut v, &basis);
        if norm(&v) > 0.1 {
            kept.push(p);
        }
    }
    kept.sort_by(|a, b| a.lambda.re.total_cmp(&b.lambda.re));
    kept
}

fn orthogonalise(v: &mut [c64], basis: &[Vec<c64>]) {
    for _ in 0..2 {
        for b in basis {
            let c = dot(b, v);
            v.iter_mut().zip(b).for_each(|(a, bb)| *a -= c * *bb);
        }
    }
}

fn norm(v: &[c64]) -> f64 {
    v.iter().map(|a| a.norm_sqr()).sum::<f64>().sqrt()
}

/// Parts of `[lo, hi]` outside every `[Re(shift) - radius, Re(shift) + radius]`.
fn uncovered(lo: f64, hi: f64, shifts: &[ShiftOutcome]) -> Vec<(f64, f64)> {
    let mut iv: Vec<(f64, f64)> = shifts
        .iter()
        .map(|s| (s.shift.re - s.radius, s.shift.re + s.radius))
        .collect();
    iv.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut gaps = Vec::new();
    let mut reach = lo;
    for (a, b) in iv {
        if a > reach && a < hi {
            gaps.push((reach, a.min(hi)));
        }
        reach = reach.max(b);
    }
    if reach < hi {
        gaps.push((reach, hi));
    }
    gaps
}
