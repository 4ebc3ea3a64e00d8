//! Allocation that reports failure: every buffer this crate sizes by the problem (values,
//! factors, workspaces, Krylov bases) is reserved with a fallible call, so running out of
//! memory comes back as [`EigenError::OutOfMemory`] instead of aborting the process.
//!
//! faer's sparse factorisations reserve their vectors with `try_reserve` and report
//! `FaerError::OutOfMemory`, mapped here to the same error; their workspaces are
//! `MemBuffer`s that this crate allocates with `MemBuffer::try_new`. Checked by
//! `tests/memory.rs`, which refuses allocations beyond a limit: every factorisation and
//! every solve then ends in `OutOfMemory`, none aborts. Outside this scheme, in faer:
//! COLAMD makes two `n`-vectors with `vec!` (after its workspace, which is larger and
//! allocated here with `try_new`), and the dense product kernels reserve a fixed buffer
//! of address space (about 1 GB, untouched) per thread at their first call.

use faer::dyn_stack::{MemBuffer, StackReq};
use faer::traits::ComplexField;
use faer::Mat;

use crate::EigenError;

/// The error for a failed request of `count` values of type `T`.
pub(crate) fn out_of_memory<T>(count: usize) -> EigenError {
    EigenError::OutOfMemory {
        bytes: count.saturating_mul(std::mem::size_of::<T>()),
    }
}

/// A faer failure as a typed error: memory (with `bytes`, the size of the workspace or
/// factorisation faer was building, as faer does not report the failing request), or
/// anything else as a backend failure.
pub(crate) fn faer_error(e: faer::sparse::FaerError, bytes: usize) -> EigenError {
    match e {
        faer::sparse::FaerError::OutOfMemory => EigenError::OutOfMemory { bytes },
        other => EigenError::Backend(format!("{other:?}")),
    }
}

/// Bytes a workspace of layout `req` occupies (`usize::MAX` when its size overflowed).
pub(crate) fn bytes_of(req: StackReq) -> usize {
    req.layout().map_or(usize::MAX, |layout| layout.size())
}

/// A workspace of the given layout.
pub(crate) fn try_buffer(req: StackReq) -> Result<MemBuffer, EigenError> {
    MemBuffer::try_new(req).map_err(|_| EigenError::OutOfMemory {
        bytes: bytes_of(req),
    })
}

/// An empty vector with room for exactly `capacity` values.
pub(crate) fn try_with_capacity<T>(capacity: usize) -> Result<Vec<T>, EigenError> {
    let mut v = Vec::new();
    v.try_reserve_exact(capacity)
        .map_err(|_| out_of_memory::<T>(capacity))?;
    Ok(v)
}

/// Room for `additional` more values in `v`.
pub(crate) fn try_reserve<T>(v: &mut Vec<T>, additional: usize) -> Result<(), EigenError> {
    v.try_reserve(additional)
        .map_err(|_| out_of_memory::<T>(v.len().saturating_add(additional)))
}

/// A vector of `len` copies of `value`.
pub(crate) fn try_vec<T: Clone>(len: usize, value: T) -> Result<Vec<T>, EigenError> {
    let mut v = try_with_capacity(len)?;
    v.resize(len, value);
    Ok(v)
}

/// The values of an exactly sized iterator, collected into a vector reserved up front.
pub(crate) fn try_collect<T>(
    values: impl ExactSizeIterator<Item = T>,
) -> Result<Vec<T>, EigenError> {
    let mut v = try_with_capacity(values.len())?;
    v.extend(values);
    Ok(v)
}

/// An `nrows x ncols` matrix of zeros.
pub(crate) fn try_zeros<T: ComplexField>(nrows: usize, ncols: usize) -> Result<Mat<T>, EigenError> {
    let mut m = Mat::<T>::new();
    m.try_reserve(nrows, ncols)
        .map_err(|_| out_of_memory::<T>(nrows.saturating_mul(ncols)))?;
    m.resize_with(nrows, ncols, |_, _| T::zero_impl());
    Ok(m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn impossible_requests_come_back_as_typed_errors() {
        // More than the address space: the allocator must refuse, and the refusal must be
        // an error value carrying the size, not an abort.
        let huge = usize::MAX / 4;
        assert!(matches!(
            try_vec(huge, 0u64),
            Err(EigenError::OutOfMemory { bytes }) if bytes == usize::MAX
        ));
        assert!(matches!(
            try_zeros::<faer::c64>(huge, 4),
            Err(EigenError::OutOfMemory { .. })
        ));
        assert!(matches!(
            try_buffer(StackReq::new::<f64>(huge)),
            Err(EigenError::OutOfMemory { bytes: usize::MAX })
        ));
        // ordinary sizes work and hold what was asked
        assert_eq!(try_vec(3, 7u8).unwrap(), vec![7, 7, 7]);
        assert_eq!(try_zeros::<f64>(2, 3).unwrap().ncols(), 3);
    }
}
