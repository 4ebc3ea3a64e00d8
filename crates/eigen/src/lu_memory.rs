//! The memory of one numeric LU, predicted from the symbolic analysis before anything is
//! allocated.
//!
//! faer's supernodal LU sizes its storage as it goes, so the prediction retraces its
//! steps on the structure alone:
//!
//! 1. the supernode partition, rebuilt from the column elimination tree and the column
//!    counts of `A^T A` exactly as faer's symbolic analysis builds it (fundamental
//!    supernodes, then relaxed amalgamation with faer's default thresholds; Ashcraft &
//!    Grimes, "The influence of relaxed supernode partitions on the multifrontal method",
//!    ACM TOMS 15 (1989) 291-309);
//! 2. the row set of every supernode's L panel and the column set of its U panel, built
//!    as the numeric factorisation builds them (rows of `A` in the supernode's columns
//!    and the L rows of every earlier supernode whose U reaches it; columns likewise),
//!    with the diagonal row taken as pivot wherever it is a candidate. Partial pivoting
//!    chooses other rows too, which enlarges later supernodes: measured on the model
//!    pencils, the stored factors exceed this trace by 0 to 8 % under COLAMD and by up
//!    to 66 % under orderings not made for `A^T A` (AMD, node-major), for which `lu.rs`
//!    adds a margin;
//! 3. the bytes: the panels of L and U in `Vec`s grown by doubling, faer's bookkeeping
//!    lists, one dense update block per supernode (kept until the factorisation returns),
//!    the workspace, the transposed values, and the probe solve afterwards.

use std::mem::size_of;

use faer::c64;
use faer::sparse::linalg::SymbolicSupernodalParams;
use faer::sparse::SymbolicSparseColMatRef;

use crate::memory::{try_collect, try_reserve, try_vec, try_with_capacity};
use crate::EigenError;

/// What the trace predicts for one numeric LU.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LuFootprint {
    /// supernode boundaries (faer's partition): supernode `s` holds columns
    /// `supernode_begin[s]..supernode_begin[s + 1]` of the permuted matrix
    pub(crate) supernode_begin: Vec<usize>,
    /// stored complex values of the L and U panels (supernodal padding included)
    pub(crate) factor_values: usize,
    /// bytes allocated at the peak of the numeric factorisation: factors, bookkeeping,
    /// update blocks and faer's workspace (not the values of `A` or of its transpose)
    pub(crate) numeric_bytes: usize,
    /// bytes still held once it returns (factors, bookkeeping, row permutation)
    pub(crate) retained_bytes: usize,
}

/// The structure the trace reads: `A`'s pattern and its transpose, the column
/// permutation, and the column elimination tree and column counts of `A^T A` under it.
pub(crate) struct Structure<'a> {
    pub(crate) a: SymbolicSparseColMatRef<'a, usize>,
    pub(crate) at: SymbolicSparseColMatRef<'a, usize>,
    pub(crate) perm_fwd: &'a [usize],
    pub(crate) perm_inv: &'a [usize],
    /// parent of each column in the column elimination tree (negative: a root)
    pub(crate) etree: &'a [isize],
    pub(crate) col_counts: &'a [usize],
}

/// Capacity of a `Vec` after growing to hold `required` values from capacity `cap`
/// (the standard library's amortised doubling, at least `min` once non-empty).
fn grown(cap: usize, required: usize, min: usize) -> usize {
    if required <= cap {
        cap
    } else {
        (2 * cap).max(required).max(min)
    }
}

/// Capacity of a `Vec<usize>` after `pushes` single pushes from empty.
fn pushed(pushes: usize) -> usize {
    match pushes {
        0 => 0,
        1..=4 => 4,
        k => k.next_power_of_two(),
    }
}

/// faer's supernode partition of the Cholesky factor of `A^T A`: the boundaries and,
/// per supernode, the number of rows below its diagonal block.
pub(crate) fn supernode_partition(
    etree: &[isize],
    col_counts: &[usize],
) -> Result<(Vec<usize>, Vec<usize>), EigenError> {
    let n = etree.len();
    if n == 0 {
        return Ok((vec![0], Vec::new()));
    }
    let parent = |j: usize| usize::try_from(etree[j]).ok();
    let mut child_count = try_vec(n, 0usize)?;
    for j in 0..n {
        if let Some(p) = parent(j) {
            child_count[p] += 1;
        }
    }
    // fundamental supernodes: chains of only children with nested structures
    let mut sizes = try_with_capacity(n)?;
    sizes.push(1usize);
    for j in 1..n {
        let chained = parent(j - 1) == Some(j)
            && child_count[j] == 1
            && col_counts[j - 1] == col_counts[j] + 1;
        match sizes.last_mut() {
            Some(size) if chained => *size += 1,
            _ => sizes.push(1),
        }
    }
    let nf = sizes.len();
    let mut index_to_super = try_vec(n, 0usize)?;
    let mut super_parent = try_vec(nf, usize::MAX)?;
    let mut degrees = try_vec(nf, 0usize)?;
    let mut begin = 0;
    for (s, &size) in sizes.iter().enumerate() {
        index_to_super[begin..begin + size].fill(s);
        begin += size;
    }
    let mut begin = 0;
    for (s, &size) in sizes.iter().enumerate() {
        let last = begin + size - 1;
        if let Some(p) = parent(last) {
            super_parent[s] = index_to_super[p];
        }
        degrees[s] = col_counts[last] - 1;
        begin += size;
    }
    if let Some(relax) = SymbolicSupernodalParams::default().relax {
        relax_supernodes(&mut sizes, &degrees, &super_parent, relax)?;
    }
    let mut supernode_begin = try_with_capacity(nf + 1)?;
    let mut below = try_with_capacity(nf)?;
    supernode_begin.push(0);
    for (s, &size) in sizes.iter().enumerate() {
        if size > 0 {
            supernode_begin.push(supernode_begin[supernode_begin.len() - 1] + size);
            below.push(degrees[s]);
        }
    }
    Ok((supernode_begin, below))
}

/// Relaxed amalgamation as faer does it: each supernode may absorb the one just before
/// it when that one is its child and the merged block keeps its fraction of explicit
/// zeros under the threshold for its size (`relax`: pairs of column count and fraction).
/// A merged supernode's size moves to the parent; the child's becomes zero.
fn relax_supernodes(
    sizes: &mut [usize],
    degrees: &[usize],
    super_parent: &[usize],
    relax: &[(usize, f64)],
) -> Result<(), EigenError> {
    let nf = sizes.len();
    // children of each supernode, most recent first
    let mut head = try_vec(nf, usize::MAX)?;
    let mut next = try_vec(nf, usize::MAX)?;
    for (s, &p) in super_parent.iter().enumerate() {
        if p != usize::MAX {
            next[s] = head[p];
            head[p] = s;
        }
    }
    let mut zeros = try_vec(nf, 0usize)?;
    let mut merged = try_vec(nf, false)?;
    for parent in 0..nf {
        loop {
            let mut merging = None;
            let (mut fewest_new, mut merged_zeros, mut largest) = (0usize, 0usize, 0usize);
            let mut child = head[parent];
            while child != usize::MAX {
                let c = child;
                child = next[c];
                if c + 1 != parent || merged[c] || sizes[c] < largest {
                    continue;
                }
                let (ps, cs) = (sizes[parent], sizes[c]);
                let (pd, cd) = (degrees[parent], degrees[c]);
                let old = zeros[parent] + zeros[c];
                let new = (ps + pd).saturating_sub(cd) * cs;
                let total = if new == 0 {
                    Some(old)
                } else {
                    let combined = cs + ps;
                    let expanded = combined * (combined + 1) / 2 + pd * combined;
                    relax
                        .iter()
                        .any(|&(max_size, fraction)| {
                            max_size >= combined && expanded as f64 * fraction >= (new + old) as f64
                        })
                        .then_some(new + old)
                };
                let Some(total) = total else {
                    continue;
                };
                if cs > largest || total - old < fewest_new {
                    merging = Some(c);
                    fewest_new = total - old;
                    merged_zeros = total;
                    largest = cs;
                }
            }
            let Some(c) = merging else {
                break;
            };
            sizes[parent] += sizes[c];
            sizes[c] = 0;
            zeros[parent] = merged_zeros;
            merged[c] = true;
        }
    }
    Ok(())
}

/// Singly linked lists of supernode numbers, one per owner, in flat arrays.
struct Lists {
    head: Vec<usize>,
    len: Vec<usize>,
    value: Vec<usize>,
    next: Vec<usize>,
}

impl Lists {
    fn new(owners: usize) -> Result<Self, EigenError> {
        Ok(Self {
            head: try_vec(owners, usize::MAX)?,
            len: try_vec(owners, 0usize)?,
            value: Vec::new(),
            next: Vec::new(),
        })
    }

    fn push(&mut self, owner: usize, s: usize) -> Result<(), EigenError> {
        try_reserve(&mut self.value, 1)?;
        try_reserve(&mut self.next, 1)?;
        self.value.push(s);
        self.next.push(self.head[owner]);
        self.head[owner] = self.value.len() - 1;
        self.len[owner] += 1;
        Ok(())
    }

    fn last(&self, owner: usize) -> Option<usize> {
        (self.head[owner] != usize::MAX).then(|| self.value[self.head[owner]])
    }

    fn iter(&self, owner: usize) -> impl Iterator<Item = usize> + '_ {
        let mut at = self.head[owner];
        std::iter::from_fn(move || {
            (at != usize::MAX).then(|| {
                let s = self.value[at];
                at = self.next[at];
                s
            })
        })
    }

    /// Bytes of the same lists as faer keeps them: one `Vec<usize>` per owner.
    fn bytes_as_vecs(&self) -> usize {
        self.len.len() * size_of::<Vec<usize>>()
            + self.len.iter().map(|&k| pushed(k)).sum::<usize>() * size_of::<usize>()
    }
}

/// Traces faer's numeric supernodal LU on the structure; `None` when the trace finds a
/// supernode with fewer candidate rows than columns (the factorisation will report the
/// pattern structurally singular).
pub(crate) fn trace(structure: &Structure<'_>) -> Result<Option<LuFootprint>, EigenError> {
    let Structure {
        a,
        at,
        perm_fwd,
        perm_inv,
        etree,
        col_counts,
    } = *structure;
    let n = a.ncols();
    let (supernode_begin, _) = supernode_partition(etree, col_counts)?;
    let nsup = supernode_begin.len() - 1;
    let mut index_to_super = try_vec(n, 0usize)?;
    for s in 0..nsup {
        index_to_super[supernode_begin[s]..supernode_begin[s + 1]].fill(s);
    }
    // position of each row and row at each position, identity before any pivoting
    let mut row_perm = try_collect(0..n)?;
    let mut row_perm_inv = try_collect(0..n)?;
    let mut row_mark = try_vec(n, usize::MAX)?;
    let mut col_mark = try_vec(n, usize::MAX)?;
    let mut visited = try_vec(nsup, usize::MAX)?;
    let mut local = try_vec(n, 0usize)?;
    // L rows below each supernode's pivots, U columns right of its block (permuted)
    let mut below_ptr = try_with_capacity(nsup + 1)?;
    let mut below_rows: Vec<usize> = Vec::new();
    let mut u_ptr = try_with_capacity(nsup + 1)?;
    let mut u_cols: Vec<usize> = Vec::new();
    below_ptr.push(0);
    u_ptr.push(0);
    // supernodes whose U reaches each supernode; supernodes whose L holds each row
    let mut u_reaches = Lists::new(nsup)?;
    let mut l_holds = Lists::new(n)?;
    let mut rows: Vec<usize> = Vec::new();
    let mut cols: Vec<usize> = Vec::new();

    let (u, z) = (size_of::<usize>(), size_of::<c64>());
    let (mut l_len, mut l_cap, mut l_idx_len, mut l_idx_cap) = (0usize, 0usize, 0usize, 0usize);
    let (mut u_len, mut u_cap, mut u_idx_len, mut u_idx_cap) = (0usize, 0usize, 0usize, 0usize);
    let mut blocks = 0usize;

    for s in 0..nsup {
        let (sb, se) = (supernode_begin[s], supernode_begin[s + 1]);
        let size = se - sb;
        // the L panel's rows
        rows.clear();
        for &c in &perm_fwd[sb..se] {
            for &i in a.row_idx_of_col_raw(c) {
                if row_perm_inv[i] >= sb && row_mark[i] != s {
                    row_mark[i] = s;
                    rows.push(i);
                }
            }
        }
        for d in u_reaches.iter(s) {
            for &i in &below_rows[below_ptr[d]..below_ptr[d + 1]] {
                if row_perm_inv[i] >= sb && row_mark[i] != s {
                    row_mark[i] = s;
                    rows.push(i);
                }
            }
        }
        if rows.len() < size {
            return Ok(None);
        }
        rows.sort_unstable();
        for (p, &i) in rows.iter().enumerate() {
            local[i] = p;
        }
        // pivots: the diagonal row when it is still a candidate
        for t in 0..size {
            let k = sb + t;
            let diagonal = perm_fwd[k];
            let p = if row_mark[diagonal] == s && local[diagonal] >= t {
                local[diagonal]
            } else {
                t
            };
            let kk = row_perm_inv[rows[p]];
            row_perm.swap(k, kk);
            row_perm_inv.swap(row_perm[k], row_perm[kk]);
            rows.swap(t, p);
            local[rows[t]] = t;
            local[rows[p]] = p;
        }
        for &i in &rows[size..] {
            l_holds.push(i, s)?;
        }
        try_reserve(&mut below_rows, rows.len() - size)?;
        below_rows.extend_from_slice(&rows[size..]);
        below_ptr.push(below_rows.len());

        // the U panel's columns
        cols.clear();
        for &pivot_row in &row_perm[sb..se] {
            for &j in at.row_idx_of_col_raw(pivot_row) {
                let pj = perm_inv[j];
                if pj >= se && col_mark[pj] != s {
                    col_mark[pj] = s;
                    cols.push(pj);
                }
            }
        }
        for &pivot_row in &row_perm[sb..se] {
            for d in l_holds.iter(pivot_row) {
                if visited[d] == s {
                    continue;
                }
                visited[d] = s;
                let d_cols = &u_cols[u_ptr[d]..u_ptr[d + 1]];
                for &pj in &d_cols[d_cols.partition_point(|&pj| pj < se)..] {
                    if col_mark[pj] != s {
                        col_mark[pj] = s;
                        cols.push(pj);
                    }
                }
            }
        }
        cols.sort_unstable();
        for &pj in &cols {
            let owner = index_to_super[pj];
            if owner > s && u_reaches.last(owner) != Some(s) {
                u_reaches.push(owner, s)?;
            }
        }
        try_reserve(&mut u_cols, cols.len())?;
        u_cols.extend_from_slice(&cols);
        u_ptr.push(u_cols.len());

        // storage as faer grows it, and this supernode's update block
        l_idx_len += rows.len();
        l_idx_cap = grown(l_idx_cap, l_idx_len, 4);
        l_len += rows.len() * size;
        l_cap = grown(l_cap, l_len, 4);
        u_idx_len += cols.len();
        u_idx_cap = grown(u_idx_cap, u_idx_len, 4);
        u_len += cols.len() * size;
        u_cap = grown(u_cap, u_len, 4);
        let below = rows.len() - size;
        if below > 0 && !cols.is_empty() {
            // values (kept until the end), active-column counts, active-entry flags
            blocks += (below * cols.len()).max(4) * z + cols.len() * u + below * cols.len();
        }
    }
    let ptrs = 5 * (nsup + 1) * u;
    let retained = (l_idx_cap + u_idx_cap) * u
        + (l_cap + u_cap) * z
        + ptrs
        + u_reaches.bytes_as_vecs()
        + l_holds.bytes_as_vecs()
        + 2 * n * u;
    let contrib_slots = nsup * size_of::<(Vec<c64>, Vec<usize>, usize, (Vec<u8>, usize))>();
    Ok(Some(LuFootprint {
        supernode_begin,
        factor_values: l_len + u_len,
        numeric_bytes: retained + contrib_slots + blocks,
        retained_bytes: retained,
    }))
}
