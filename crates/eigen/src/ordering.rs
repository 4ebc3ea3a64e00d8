//! Fill-reducing orderings of the unknowns: COLAMD and AMD through faer, a permutation
//! the caller supplies (checked), and the node-major expansion of a permutation of 2D
//! unknowns to systems that carry several copies (harmonics) of every 2D unknown.
//!
//! Convention (faer's forward permutation): `perm[k]` is the unknown eliminated `k`-th,
//! i.e. column `perm[k]` of `A` becomes column `k` of `A P`.

use faer::dyn_stack::MemStack;
use faer::sparse::linalg::{amd, colamd};
use faer::sparse::SymbolicSparseColMatRef;

use crate::memory::{bytes_of, faer_error, try_buffer, try_vec, try_with_capacity};
use crate::EigenError;

/// Fill-reducing column ordering of the LU's symbolic analysis.
///
/// faer's supernodal LU stores its factors in the structure of the Cholesky factor of
/// `A^T A` (room for any row pivoting), so the ordering that matters is the one that
/// keeps *that* factor small: COLAMD. Measured on the 2D P1 pencil of
/// `model::helmholtz_p1_absorbing` (n = 10 000): COLAMD 1.7e6 entries in L+U, AMD on
/// `A + A^T` 9.8e6 (see `docs/performance.md`, "Eigen engine").
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FillOrdering {
    /// Column approximate minimum degree on `A^T A` (default; faer's own choice for LU;
    /// Davis, Gilbert, Larimore & Ng, ACM TOMS 30 (2004) 353-376).
    Colamd,
    /// Approximate minimum degree on the pattern of `A + A^T` (Amestoy, Davis & Duff,
    /// SIAM J. Matrix Anal. Appl. 17 (1996) 886-905); kept for comparison.
    AmdSymmetric,
    /// A permutation supplied by the caller: entry `k` is the unknown eliminated `k`-th.
    /// Checked when the analysis starts ([`EigenError::PermutationLength`],
    /// [`EigenError::NotAPermutation`]). See [`node_major_ordering`] for one way to
    /// build it.
    Given(Vec<usize>),
}

/// Checks that `perm` is a permutation of `0..n`; returns its inverse.
pub(crate) fn inverse_permutation(perm: &[usize], n: usize) -> Result<Vec<usize>, EigenError> {
    if perm.len() != n {
        return Err(EigenError::PermutationLength {
            got: perm.len(),
            expected: n,
        });
    }
    let mut inv = try_vec(n, usize::MAX)?;
    for (position, &value) in perm.iter().enumerate() {
        if value >= n || inv[value] != usize::MAX {
            return Err(EigenError::NotAPermutation { position, value });
        }
        inv[value] = position;
    }
    Ok(inv)
}

/// The column permutation (forward, inverse) of `ordering` for the pattern `a`.
pub(crate) fn column_permutation(
    ordering: &FillOrdering,
    a: SymbolicSparseColMatRef<'_, usize>,
) -> Result<(Vec<usize>, Vec<usize>), EigenError> {
    let n = a.ncols();
    match ordering {
        FillOrdering::AmdSymmetric => amd_permutation(a),
        FillOrdering::Colamd => {
            let mut fwd = try_vec(n, 0usize)?;
            let mut inv = try_vec(n, 0usize)?;
            let req = colamd::order_scratch::<usize>(n, n, a.compute_nnz());
            let mut mem = try_buffer(req)?;
            colamd::order(
                &mut fwd,
                &mut inv,
                a,
                colamd::Control::default(),
                MemStack::new(&mut mem),
            )
            .map_err(|e| faer_error(e, bytes_of(req)))?;
            Ok((fwd, inv))
        }
        FillOrdering::Given(perm) => {
            let inv = inverse_permutation(perm, n)?;
            let mut fwd = try_with_capacity(n)?;
            fwd.extend_from_slice(perm);
            Ok((fwd, inv))
        }
    }
}

/// AMD ordering (forward, inverse) of a structurally symmetric pattern with sorted rows.
pub(crate) fn amd_permutation(
    a: SymbolicSparseColMatRef<'_, usize>,
) -> Result<(Vec<usize>, Vec<usize>), EigenError> {
    amd(a, false)
}

/// AMD ordering of the pattern of `A + A^T` for a square pattern `a` (rows need not be
/// sorted): entry `k` of the result is the unknown eliminated `k`-th. For example the
/// ordering of one 2D block, to be expanded by [`node_major_ordering`].
pub fn amd_ordering(a: SymbolicSparseColMatRef<'_, usize>) -> Result<Vec<usize>, EigenError> {
    if a.nrows() != a.ncols() {
        return Err(EigenError::InvalidOption(format!(
            "AMD needs a square pattern, got {} x {}",
            a.nrows(),
            a.ncols()
        )));
    }
    Ok(amd(a, true)?.0)
}

/// faer's AMD on `a` (its variant for unsorted rows when `unsorted`).
fn amd(
    a: SymbolicSparseColMatRef<'_, usize>,
    unsorted: bool,
) -> Result<(Vec<usize>, Vec<usize>), EigenError> {
    let n = a.nrows();
    let nnz = a.compute_nnz();
    let (req, order): (_, AmdOrder) = if unsorted {
        (
            amd::order_maybe_unsorted_scratch::<usize>(n, nnz),
            amd::order_maybe_unsorted::<usize>,
        )
    } else {
        (amd::order_scratch::<usize>(n, nnz), amd::order::<usize>)
    };
    let mut fwd = try_vec(n, 0usize)?;
    let mut inv = try_vec(n, 0usize)?;
    let mut mem = try_buffer(req)?;
    order(
        &mut fwd,
        &mut inv,
        a,
        amd::Control::default(),
        MemStack::new(&mut mem),
    )
    .map_err(|e| faer_error(e, bytes_of(req)))?;
    Ok((fwd, inv))
}

/// The signature shared by faer's two AMD entry points.
type AmdOrder = fn(
    &mut [usize],
    &mut [usize],
    SymbolicSparseColMatRef<'_, usize>,
    amd::Control,
    &mut MemStack,
) -> Result<amd::FlopCount, faer::sparse::FaerError>;

/// Node-major ordering of a system with several global unknowns per 2D unknown (for
/// example the `2K + 1` harmonics of each 2D unknown of a coupled-harmonic system).
///
/// `order_2d` is a permutation of the `n2d = members.len()` 2D unknowns (entry `k` is
/// the 2D unknown eliminated `k`-th, e.g. from [`amd_ordering`] on one 2D block);
/// `members[u]` lists the global unknowns that belong to 2D unknown `u`, in the order
/// they should be eliminated. The result eliminates all members of `order_2d[0]`, then
/// all of `order_2d[1]`, and so on:
///
/// `result = members[order_2d[0]] ++ members[order_2d[1]] ++ ... ++ members[order_2d[n2d - 1]]`.
///
/// The members together must be exactly `0..N` (each global unknown in one list, once);
/// the result is then a permutation of `0..N` for [`FillOrdering::Given`]. Errors:
/// [`EigenError::PermutationLength`] / [`EigenError::NotAPermutation`] when `order_2d` is
/// not a permutation of `0..n2d` or the members do not cover `0..N` exactly once.
///
/// ```
/// use twistmode_eigen::node_major_ordering;
/// // two 2D unknowns, three harmonics each, numbered harmonic-major (u + 2 h)
/// let members = vec![vec![0, 2, 4], vec![1, 3, 5]];
/// assert_eq!(node_major_ordering(&[1, 0], &members).unwrap(), vec![1, 3, 5, 0, 2, 4]);
/// ```
pub fn node_major_ordering(
    order_2d: &[usize],
    members: &[Vec<usize>],
) -> Result<Vec<usize>, EigenError> {
    inverse_permutation(order_2d, members.len())?;
    let total: usize = members.iter().map(Vec::len).sum();
    let mut global = try_with_capacity(total)?;
    for &u in order_2d {
        global.extend_from_slice(&members[u]);
    }
    inverse_permutation(&global, total)?;
    Ok(global)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn permutations_are_checked() {
        assert_eq!(inverse_permutation(&[2, 0, 1], 3).unwrap(), vec![1, 2, 0]);
        assert!(matches!(
            inverse_permutation(&[0, 1], 3),
            Err(EigenError::PermutationLength {
                got: 2,
                expected: 3
            })
        ));
        assert!(matches!(
            inverse_permutation(&[0, 3, 1], 3),
            Err(EigenError::NotAPermutation {
                position: 1,
                value: 3
            })
        ));
        assert!(matches!(
            inverse_permutation(&[1, 0, 1], 3),
            Err(EigenError::NotAPermutation {
                position: 2,
                value: 1
            })
        ));
    }

    #[test]
    fn node_major_expands_each_2d_unknown_to_its_members() {
        // three 2D unknowns, harmonics -1, 0, 1 numbered harmonic-major: unknown u of
        // harmonic h is global u + 3 (h + 1)
        let members: Vec<Vec<usize>> = (0..3).map(|u| vec![u, u + 3, u + 6]).collect();
        let global = node_major_ordering(&[2, 0, 1], &members).unwrap();
        assert_eq!(global, vec![2, 5, 8, 0, 3, 6, 1, 4, 7]);
        // each 2D unknown's members stay together, in the 2D order
        for (k, chunk) in global.chunks(3).enumerate() {
            assert!(chunk.iter().all(|&g| g % 3 == [2, 0, 1][k]));
        }
        // a bad 2D order, and members that miss or repeat a global unknown
        assert!(matches!(
            node_major_ordering(&[0, 0, 1], &members),
            Err(EigenError::NotAPermutation { .. })
        ));
        let missing = vec![vec![0, 3], vec![1, 4], vec![2, 6]];
        assert!(matches!(
            node_major_ordering(&[0, 1, 2], &missing),
            Err(EigenError::NotAPermutation { value: 6, .. })
        ));
        let repeated = vec![vec![0, 1], vec![1, 2], vec![3, 4]];
        assert!(matches!(
            node_major_ordering(&[0, 1, 2], &repeated),
            Err(EigenError::NotAPermutation { value: 1, .. })
        ));
    }
}
