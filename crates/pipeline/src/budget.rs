//! Memory before allocating: the factor a solve would build, estimated from the
//! symbolic analysis (cheap: no numbers are factorised), against what the machine has
//! or what the user allows (`--max-memory`). A case that would not fit is refused with
//! the estimate and the keys to change, instead of failing half way.
use twistmode_eigen::{Pencil, ShiftInvert};

use crate::PipelineError;

/// Bytes per stored complex entry.
const COMPLEX: u64 = 16;

/// Allowance on the LU's estimate (which assumes diagonal pivots) for the fill that
/// pivoting adds. Measured on twisted-ring pencils (`docs/performance.md`): the peak grew
/// by 1/0.69 = 1.45 times the estimate at worst (K = 6), 1.35 at resolution 24. The
/// symmetric factorisation's sizes are exact and get none.
pub const LU_PIVOTING_ALLOWANCE: f64 = 1.5;

/// What one factorisation would take.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FactorEstimate {
    /// Unknowns.
    pub unknowns: usize,
    /// Entries of the factor from the symbolic analysis.
    pub fill_nnz: usize,
    /// Estimated bytes of the factorisation (values, indices, supernodal padding,
    /// workspace; `ShiftInvert::estimated_factor_bytes`, times
    /// [`LU_PIVOTING_ALLOWANCE`] for the LU) and of the two matrices.
    pub bytes: u64,
}

/// The memory a solve may use.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Budget {
    /// Bytes.
    pub limit: u64,
    /// Where the limit comes from, in words.
    pub source: &'static str,
}

impl Budget {
    /// `max_memory` when given, else 80 % of the memory the system reports available
    /// (`MemAvailable` of /proc/meminfo), else no limit.
    pub fn new(max_memory: Option<u64>) -> Budget {
        if let Some(limit) = max_memory {
            return Budget {
                limit,
                source: "--max-memory",
            };
        }
        match available_memory() {
            Some(bytes) => Budget {
                limit: (0.8 * bytes as f64) as u64,
                source: "80% of the available memory",
            },
            None => Budget {
                limit: u64::MAX,
                source: "no limit known",
            },
        }
    }
}

/// `MemAvailable` from /proc/meminfo, bytes (Linux); `None` elsewhere.
pub fn available_memory() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

/// A size in words: MiB below one GiB, else GiB.
pub fn human(bytes: u64) -> String {
    let mib = bytes as f64 / (1u64 << 20) as f64;
    if mib < 1024.0 {
        format!("{mib:.0} MiB")
    } else {
        format!("{:.1} GiB", mib / 1024.0)
    }
}

/// The factor of `pencil` from a symbolic analysis alone.
pub fn estimate(pencil: &Pencil) -> Result<FactorEstimate, PipelineError> {
    let op = ShiftInvert::try_new(pencil)?;
    let matrices = (pencil.k.compute_nnz() + pencil.m.compute_nnz()) as u64 * COMPLEX;
    let allowance = match op.factorisation() {
        twistmode_eigen::Factorisation::Lu => LU_PIVOTING_ALLOWANCE,
        _ => 1.0,
    };
    Ok(FactorEstimate {
        unknowns: pencil.dim(),
        fill_nnz: op.fill_nnz(),
        bytes: (allowance * op.estimated_factor_bytes() as f64) as u64 + matrices,
    })
}

/// [`estimate`], refused when it exceeds `budget`; `advice` names the case keys that
/// make the problem smaller.
pub fn check(
    pencil: &Pencil,
    budget: Budget,
    advice: &str,
) -> Result<FactorEstimate, PipelineError> {
    let e = estimate(pencil)?;
    if e.bytes > budget.limit {
        return Err(PipelineError::TooLarge {
            needed: e.bytes,
            limit: budget.limit,
            message: format!(
                "the factorisation would need about {} ({} unknowns, {:.2e} factor entries) \
                 but {} is {}; {advice}, or allow more with --max-memory",
                human(e.bytes),
                e.unknowns,
                e.fill_nnz as f64,
                budget.source,
                human(budget.limit)
            ),
        });
    }
    Ok(e)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_pencil_over_the_budget_is_refused_before_factorising() {
        let pencil = twistmode_eigen::model::laplacian_2d_dirichlet(20);
        let e = estimate(&pencil).unwrap();
        assert!(e.fill_nnz >= pencil.dim() && e.bytes > 16 * e.fill_nnz as u64);
        let tight = Budget {
            limit: e.bytes - 1,
            source: "--max-memory",
        };
        let err = check(&pencil, tight, "reduce mesh.resolution").unwrap_err();
        let text = err.to_string();
        assert!(
            text.contains("--max-memory") && text.contains("reduce mesh.resolution"),
            "{text}"
        );
        let roomy = Budget {
            limit: e.bytes,
            source: "--max-memory",
        };
        assert_eq!(check(&pencil, roomy, "").unwrap(), e);
        assert_eq!(human(3 << 20), "3 MiB");
        assert_eq!(human(3 << 30), "3.0 GiB");
    }
}
