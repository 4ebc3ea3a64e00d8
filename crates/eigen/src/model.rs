//! Model pencils on structured grids, for tests, examples and benchmarks.
//!
//! They stand in for the pencils of the finite-element crates: same sparsity character
//! (2D nearest-neighbour graphs), known answers where one exists.

use faer::c64;
use faer::sparse::{SparseColMat, Triplet};

use crate::{EigenError, Pencil};

/// Builds a sparse matrix from `(row, col, value)` triplets; duplicates are summed
/// (faer's `try_new_from_triplets` does the summing).
pub fn sparse_from_triplets(
    nrows: usize,
    ncols: usize,
    triplets: &[(usize, usize, c64)],
) -> Result<SparseColMat<usize, c64>, EigenError> {
    let t: Vec<Triplet<usize, usize, c64>> = triplets
        .iter()
        .map(|&(r, c, v)| Triplet::new(r, c, v))
        .collect();
    SparseColMat::try_new_from_triplets(nrows, ncols, &t)
        .map_err(|e| EigenError::Backend(format!("{e:?}")))
}

/// 5-point Laplacian `-Δ` on the unit square with Dirichlet walls, `m x m` interior
/// nodes, spacing `h = 1/(m+1)`, and `M = I`.
pub fn laplacian_2d_dirichlet(m: usize) -> Pencil {
    let h = 1.0 / (m as f64 + 1.0);
    let s = 1.0 / (h * h);
    let n = m * m;
    let id = |i: usize, j: usize| i + m * j;
    let mut k = Vec::with_capacity(5 * n);
    for j in 0..m {
        for i in 0..m {
            let p = id(i, j);
            k.push((p, p, c64::new(4.0 * s, 0.0)));
            if i > 0 {
                k.push((p, id(i - 1, j), c64::new(-s, 0.0)));
            }
            if i + 1 < m {
                k.push((p, id(i + 1, j), c64::new(-s, 0.0)));
            }
            if j > 0 {
                k.push((p, id(i, j - 1), c64::new(-s, 0.0)));
            }
            if j + 1 < m {
                k.push((p, id(i, j + 1), c64::new(-s, 0.0)));
            }
        }
    }
    let mm: Vec<_> = (0..n).map(|p| (p, p, c64::new(1.0, 0.0))).collect();
    Pencil {
        k: sparse_from_triplets(n, n, &k).expect("valid triplets"),
        m: sparse_from_triplets(n, n, &mm).expect("valid triplets"),
    }
}

/// Eigenvalues of [`laplacian_2d_dirichlet`]:
/// `lambda_ij = 4/h^2 (sin^2(i pi h/2) + sin^2(j pi h/2))`, `i, j = 1..m`, ascending.
/// Source: standard finite-difference analysis (separation of variables of the
/// 5-point stencil; e.g. LeVeque, Finite Difference Methods for ODEs and PDEs, §3.4).
pub fn laplacian_2d_dirichlet_eigenvalues(m: usize) -> Vec<f64> {
    let h = 1.0 / (m as f64 + 1.0);
    let one = |i: usize| 4.0 / (h * h) * (i as f64 * std::f64::consts::PI * h / 2.0).sin().powi(2);
    let mut v: Vec<f64> = (1..=m)
        .flat_map(|i| (1..=m).map(move |j| one(i) + one(j)))
        .collect();
    v.sort_by(f64::total_cmp);
    v
}

/// A complex, non-Hermitian, non-symmetric 2D Helmholtz-like pencil from linear (P1)
/// triangles on a structured triangulation of the unit square, Dirichlet walls,
/// `(cells - 1)^2` unknowns:
///
/// `K = ∫ (1/s) ∇u·∇v + i beta ∫ (∂u/∂x) v`, `M = ∫ eps s u v`,
///
/// with a central square (side 0.4) of relative permittivity `eps = 4 - 0.01 i`
/// (lossy), `eps = 1` elsewhere, and an absorbing layer of width 0.1 along the walls
/// where `s = 1 - 2 i (d/0.1)^2` (d = depth into the layer). `beta = 3` adds a drift
/// term that makes `K` non-symmetric.
pub fn helmholtz_p1_absorbing(cells: usize) -> Pencil {
    let m = cells - 1;
    let n = m * m;
    let h = 1.0 / cells as f64;
    let unknown = |i: usize, j: usize| -> Option<usize> {
        (i > 0 && j > 0 && i < cells && j < cells).then(|| (i - 1) + m * (j - 1))
    };
    let layer = 0.1;
    let depth = |x: f64| (layer - x).max(0.0).max(x - (1.0 - layer)).max(0.0);
    let beta = 3.0;
    let mut kt = Vec::with_capacity(14 * n);
    let mut mt = Vec::with_capacity(14 * n);
    for cj in 0..cells {
        for ci in 0..cells {
            // two triangles per square cell, split along the (0,0)-(1,1) diagonal
            let corners = [(ci, cj), (ci + 1, cj), (ci + 1, cj + 1), (ci, cj + 1)];
            for tri in [[0usize, 1, 2], [0, 2, 3]] {
                let v: Vec<(usize, usize)> = tri.iter().map(|&t| corners[t]).collect();
                let xy: Vec<(f64, f64)> = v
                    .iter()
                    .map(|&(i, j)| (i as f64 * h, j as f64 * h))
                    .collect();
                let cx = (xy[0].0 + xy[1].0 + xy[2].0) / 3.0;
                let cy = (xy[0].1 + xy[1].1 + xy[2].1) / 3.0;
                let d = depth(cx).max(depth(cy)) / layer;
                let s = c64::new(1.0, -2.0 * d * d);
                let eps = if (cx - 0.5).abs() < 0.2 && (cy - 0.5).abs() < 0.2 {
                    c64::new(4.0, -0.01)
                } else {
                    c64::new(1.0, 0.0)
                };
                let area2 = (xy[1].0 - xy[0].0) * (xy[2].1 - xy[0].1)
                    - (xy[2].0 - xy[0].0) * (xy[1].1 - xy[0].1);
                let area = area2.abs() / 2.0;
                // gradients of the barycentric functions
                let grad: Vec<(f64, f64)> = (0..3)
                    .map(|a| {
                        let (b, c) = ((a + 1) % 3, (a + 2) % 3);
                        ((xy[b].1 - xy[c].1) / area2, (xy[c].0 - xy[b].0) / area2)
                    })
                    .collect();
                for a in 0..3 {
                    let Some(ra) = unknown(v[a].0, v[a].1) else {
                        continue;
                    };
                    for b in 0..3 {
                        let Some(cb) = unknown(v[b].0, v[b].1) else {
                            continue;
                        };
                        let stiff = (grad[a].0 * grad[b].0 + grad[a].1 * grad[b].1) * area;
                        let drift = c64::new(0.0, beta * grad[b].0 * area / 3.0);
                        kt.push((ra, cb, s.inv() * stiff + drift));
                        let mass = area / 12.0 * if a == b { 2.0 } else { 1.0 };
                        mt.push((ra, cb, eps * s * mass));
                    }
                }
            }
        }
    }
    Pencil {
        k: sparse_from_triplets(n, n, &kt).expect("valid triplets"),
        m: sparse_from_triplets(n, n, &mt).expect("valid triplets"),
    }
}

/// The complex-symmetric part `((K + K^T) / 2, (M + M^T) / 2)` of a pencil (not
/// conjugated): turns [`helmholtz_p1_absorbing`] into a complex-symmetric test pencil
/// for the symmetric factorisation.
pub fn symmetric_part(pencil: &Pencil) -> Pencil {
    let half = |a: &SparseColMat<usize, c64>| {
        let r = a.as_ref();
        let mut t = Vec::with_capacity(2 * r.compute_nnz());
        for j in 0..a.ncols() {
            for (i, v) in r.row_idx_of_col(j).zip(r.val_of_col(j)) {
                t.push((i, j, *v * 0.5));
                t.push((j, i, *v * 0.5));
            }
        }
        sparse_from_triplets(a.nrows(), a.ncols(), &t).expect("valid triplets")
    };
    Pencil {
        k: half(&pencil.k),
        m: half(&pencil.m),
    }
}

/// `copies` copies of a pencil coupled like neighbouring harmonics of a coupled-harmonic
/// system: `K = I ⊗ K0 + C ⊗ M0`, `M = I ⊗ M0`, with `C` the `copies x copies` matrix
/// holding `coupling` on its first off-diagonals. Unknown `u` of copy `c` is global
/// unknown `u + n0 c` (copy-major). Returns the pencil and, for every unknown of the
/// base pencil, its global unknowns in copy order (the `members` of
/// [`node_major_ordering`](crate::node_major_ordering)).
///
/// Eigenvalues: `mu + 2 coupling cos(j pi / (copies + 1))`, `j = 1..copies`, for every
/// eigenvalue `mu` of the base pencil (eigenvectors `q_j ⊗ x`: the Kronecker structure,
/// Horn & Johnson, Topics in Matrix Analysis, Thm 4.4.5, with the eigenvalues of the
/// tridiagonal Toeplitz `C`, e.g. Golub & Van Loan, Matrix Computations, sec. 4.8).
pub fn coupled_copies(base: &Pencil, copies: usize, coupling: f64) -> (Pencil, Vec<Vec<usize>>) {
    let n0 = base.dim();
    let n = n0 * copies;
    let entries = |a: &SparseColMat<usize, c64>| -> Vec<(usize, usize, c64)> {
        let r = a.as_ref();
        (0..n0)
            .flat_map(|j| {
                r.row_idx_of_col(j)
                    .zip(r.val_of_col(j))
                    .map(move |(i, v)| (i, j, *v))
            })
            .collect()
    };
    let (k0, m0) = (entries(&base.k), entries(&base.m));
    let mut kt = Vec::with_capacity(copies * k0.len() + 2 * copies * m0.len());
    let mut mt = Vec::with_capacity(copies * m0.len());
    for c in 0..copies {
        let at = |(i, j, v): (usize, usize, c64), d: usize| (i + n0 * c, j + n0 * d, v);
        kt.extend(k0.iter().map(|&e| at(e, c)));
        mt.extend(m0.iter().map(|&e| at(e, c)));
        for d in [c.wrapping_sub(1), c + 1] {
            if d < copies {
                kt.extend(m0.iter().map(|&(i, j, v)| at((i, j, v * coupling), d)));
            }
        }
    }
    let members = (0..n0)
        .map(|u| (0..copies).map(|c| u + n0 * c).collect())
        .collect();
    let pencil = Pencil {
        k: sparse_from_triplets(n, n, &kt).expect("valid triplets"),
        m: sparse_from_triplets(n, n, &mt).expect("valid triplets"),
    };
    (pencil, members)
}
