//! The Fourier-Galerkin system of a twisted ring.
//!
//! In the rotating frame of the section the equivalent medium of a ring whose section
//! turns by `tau w` (`tau = half_turns / 2`) depends on `w` through
//! `r = R + U cos(tau w) - V sin(tau w)` only, with period `2 pi / tau`
//! ([`crate::harmonics`]). Its Floquet-Bloch solutions are
//!
//! ```text
//!   E = sum_{k = -K..K} e_k(u, v) exp(i (m + k tau) w),
//! ```
//!
//! and testing with `f_l exp(-i (m + l tau) w)` over one period gives the block system
//! `K_lk x_k = k0^2 M_lk x_k` whose block `(l, k)` is the harmonic `j = l - k` of the
//! medium with test order `m + l tau` and trial order `m + k tau`:
//!
//! ```text
//!   K_lk = S00_j + n_k S01_j - n_l S10_j - n_l n_k S11_j,   M_lk = M_j,   n_k = m + k tau
//! ```
//!
//! All parts are assembled once ([`TwistedRing::assemble_parts`]) and every block is a
//! combination of them ([`TwistedRing::block_system`]). On a pi-symmetric section the
//! system commutes with `P` (rotation by pi, [`crate::symmetry`]) combined with the
//! half-period shift, which multiplies harmonic `k` by `(-1)^k`; so it splits exactly
//! into two sectors `{P e_k = s (-1)^k e_k}`, each solved at half the size.
//!
//! The system is exact as `K` grows; the window is centred on `m`, and `{m + k tau}` is
//! unchanged by `m -> m + tau`.
use faer::sparse::{SparseColMat, SymbolicSparseColMat};
use num_complex::Complex64 as c64;
use rayon::prelude::*;
use twistmode_mesh::Mesh;

use crate::assembly::{SectionProblem, SectionSetup};
use crate::coordinates::{Placement, PmlStretch};
use crate::dofs::DofMap;
use crate::error::FemError;
use crate::harmonics::{twisted_ring_medium, PointMedium};
use crate::scatter::{AssembledParts, BlockPattern, ReducedPattern, Reduction};
use crate::symmetry::{mirror_face_labels, Mirror, PiRotation};
use crate::tensor::Tensor3;

/// The harmonics `m + k tau`, `k = -K..K`, of a twisted-ring solve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HarmonicWindow {
    /// Centre order `m`.
    pub centre: f64,
    /// Twist per radian, `tau = half_turns / 2`.
    pub tau: f64,
    /// Half-width `K`.
    pub half_width: u32,
}

impl HarmonicWindow {
    /// Number of harmonics, `2 K + 1`.
    pub fn len(&self) -> usize {
        2 * self.half_width as usize + 1
    }
    /// Never empty (`K = 0` has one harmonic).
    pub fn is_empty(&self) -> bool {
        false
    }
    /// The index `k` of block `b` (blocks run from `k = -K` up).
    pub fn k_of(&self, b: usize) -> i32 {
        b as i32 - self.half_width as i32
    }
    /// The order `m + k tau` of block `b`.
    pub fn order(&self, b: usize) -> f64 {
        self.centre + f64::from(self.k_of(b)) * self.tau
    }
}

/// One diagonal block of a [`BlockSystem`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HarmonicBlock {
    /// Harmonic index `k`.
    pub k: i32,
    /// Order `m + k tau`.
    pub order: f64,
    /// First row (and column) of the block.
    pub offset: usize,
    /// Unknowns of the block.
    pub len: usize,
    /// Index into [`BlockSystem::reductions`].
    pub reduction: usize,
}

/// How many coupling blocks `(l, k)` were kept and how many dropped as negligible.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Couplings {
    /// Blocks kept (diagonal ones included).
    pub kept: usize,
    /// Blocks dropped.
    pub dropped: usize,
    /// Largest relative size `max |part_j| / max |part_0|` among dropped harmonics (0 if none).
    pub largest_dropped: f64,
}

/// The assembled block pencil of one harmonic window (and one sector).
#[derive(Clone, Debug)]
pub struct BlockSystem {
    /// Curl-curl matrix, blocks in the order of `blocks`.
    pub stiffness: SparseColMat<usize, c64>,
    /// Mass matrix.
    pub mass: SparseColMat<usize, c64>,
    /// The window.
    pub window: HarmonicWindow,
    /// The diagonal blocks.
    pub blocks: Vec<HarmonicBlock>,
    /// The reductions used by the blocks (constraints and, with a sector, its basis).
    pub reductions: Vec<Reduction>,
    /// The sector `s` solved for, when the section is pi-symmetric.
    pub sector: Option<f64>,
    /// Coupling blocks kept and dropped.
    pub couplings: Couplings,
    /// When the unknowns are eigenvectors of the mirror `T` ([`crate::symmetry::Mirror`])
    /// and the stored matrices are `K D` and `M D` (complex-symmetric), the diagonal
    /// `D` of their eigenvalues `+-1`. An eigenvector `y` of the stored pencil is then
    /// `x = D y` of `(K, M)`.
    pub mirror_signs: Option<Vec<f64>>,
    /// With `mirror_signs`: the largest `|a_ij - a_ji|` of `K D` and `M D` relative to
    /// their largest entry before they were symmetrised (quadrature level).
    pub asymmetry: f64,
}

impl BlockSystem {
    /// Number of unknowns.
    pub fn dim(&self) -> usize {
        self.blocks.iter().map(|b| b.len).sum()
    }

    /// Moves the stored matrices out (for an eigensolver that takes them by value), leaving
    /// empty `0 x 0` matrices; the blocks, reductions and signs stay for reading
    /// eigenvectors. Saves holding a second copy of the pencil through the solve.
    pub fn take_matrices(&mut self) -> (SparseColMat<usize, c64>, SparseColMat<usize, c64>) {
        let empty = || {
            SparseColMat::new(
                SymbolicSparseColMat::new_checked(0, 0, vec![0], None, Vec::new()),
                Vec::new(),
            )
        };
        (
            std::mem::replace(&mut self.stiffness, empty()),
            std::mem::replace(&mut self.mass, empty()),
        )
    }

    /// The solution `x` of `(K, M)` from an eigenvector `y` of the stored pencil
    /// (`x = D y` when the stored pencil is the mirrored one).
    pub fn unmirror(&self, y: &[c64]) -> Vec<c64> {
        match &self.mirror_signs {
            None => y.to_vec(),
            Some(d) => y.iter().zip(d).map(|(v, s)| v * s).collect(),
        }
    }

    /// Full coefficient vector of each harmonic (block order) from an eigenvector of the
    /// stored pencil.
    pub fn harmonic_fields(&self, y: &[c64]) -> Vec<Vec<c64>> {
        let x = self.unmirror(y);
        self.blocks
            .iter()
            .map(|b| self.reductions[b.reduction].expand(&x[b.offset..b.offset + b.len]))
            .collect()
    }

    /// The full coefficient vector of the covariant field at azimuth `phi` (rotating
    /// frame of the section), `sum_k x_k exp(i (m + k tau) phi)`, from an eigenvector of
    /// the stored pencil; read it with a field evaluator at that azimuth
    /// ([`crate::FieldEvaluator::at_azimuth`]).
    pub fn field_at(&self, y: &[c64], phi: f64) -> Vec<c64> {
        let fields = self.harmonic_fields(y);
        let mut sum = vec![c64::new(0.0, 0.0); fields.first().map_or(0, Vec::len)];
        for (b, f) in self.blocks.iter().zip(&fields) {
            let phase = c64::from_polar(1.0, b.order * phi);
            for (s, x) in sum.iter_mut().zip(f) {
                *s += x * phase;
            }
        }
        sum
    }

    /// The global unknowns of each 2D degree of freedom across the harmonics (an unknown
    /// is identified by the first full DOF of its basis vector), in full-DOF order: the
    /// groups of a node-major ordering.
    pub fn unknowns_by_dof(&self) -> Vec<Vec<usize>> {
        let full = self.reductions.first().map_or(0, Reduction::full_len);
        let mut groups = vec![Vec::new(); full];
        for b in &self.blocks {
            for (i, g) in self.reductions[b.reduction]
                .representatives()
                .iter()
                .enumerate()
            {
                groups[*g].push(b.offset + i);
            }
        }
        groups.retain(|g| !g.is_empty());
        groups
    }
}

/// A twisted ring on its mesh: the medium's closed-form harmonics, the block pattern,
/// and (on a pi-symmetric mesh) the rotation that splits the system into sectors.
pub struct TwistedRing<'m> {
    problem: SectionProblem<'m>,
    radius: f64,
    tau: f64,
    /// Scalar permittivity and permeability of each region.
    region_media: Vec<(c64, c64)>,
    numbering: DofMap,
    pattern: BlockPattern,
    rotation: Option<PiRotation>,
    mirror: Option<Mirror>,
}

fn isotropic(t: &Tensor3) -> Option<c64> {
    let d = t[0][0];
    let zero = c64::new(0.0, 0.0);
    for (a, row) in t.iter().enumerate() {
        for (b, x) in row.iter().enumerate() {
            let want = if a == b { d } else { zero };
            if *x != want {
                return None;
            }
        }
    }
    Some(d)
}

impl<'m> TwistedRing<'m> {
    /// Checks and prepares a twisted ring: placement `Ring` with `half_turns != 0`,
    /// isotropic materials (a tensor fixed in the laboratory frame turns against the
    /// section), a PML radial about the twist centre (a box PML would turn with the
    /// section), and the whole mesh within `rho < R` of the centre (else the map folds
    /// through the axis). The pi rotation is set up when the mesh carries partners.
    pub fn try_new(mesh: &'m Mesh, setup: SectionSetup) -> Result<TwistedRing<'m>, FemError> {
        let Placement::Ring { radius, half_turns } = setup.placement else {
            return Err(FemError::TwistedRing {
                reason: "the placement is not a ring".into(),
            });
        };
        let tau = 0.5 * half_turns;
        let reach = mesh
            .points()
            .iter()
            .map(|p| p[0].hypot(p[1]))
            .fold(0.0, f64::max);
        if reach >= radius {
            return Err(FemError::TwistedRing {
                reason: format!(
                    "the mesh reaches {reach:.4e} m from the twist centre, beyond the ring radius {radius:.4e} m: the twisted section would cross the axis"
                ),
            });
        }
        match setup.pml {
            PmlStretch::None => {}
            PmlStretch::Radial { centre, .. } => {
                if centre[0].hypot(centre[1]) > 1e-9 * radius {
                    return Err(FemError::TwistedRing {
                        reason: "the PML must be radial about the twist centre (the section centre at the origin)".into(),
                    });
                }
            }
            PmlStretch::Cartesian { .. } => {
                return Err(FemError::TwistedRing {
                    reason: "a box PML turns with the section; the PML must be radial about the section centre".into(),
                })
            }
        }
        let problem = SectionProblem::try_new(mesh, setup)?;
        let region_media = problem
            .medium()
            .materials
            .iter()
            .map(|m| match (isotropic(&m.eps), isotropic(&m.mu)) {
                (Some(e), Some(u)) => Ok((e, u)),
                _ => Err(FemError::TwistedRing {
                    reason: "anisotropic materials are not supported: a tensor fixed in the laboratory frame turns against the section".into(),
                }),
            })
            .collect::<Result<_, _>>()?;
        let numbering = problem.dofs(0.0)?;
        let pattern = BlockPattern::new(mesh, &numbering)?;
        let rotation = match mesh.pi_partner_nodes() {
            Some(_) => Some(PiRotation::try_new(mesh, &numbering)?),
            None => None,
        };
        Ok(TwistedRing {
            problem,
            radius,
            tau,
            region_media,
            numbering,
            pattern,
            rotation,
            mirror: None,
        })
    }

    /// The ring with the mirror-symmetrised quadrature rule of [`TwistedRing::with_mirror`]
    /// but without the mirror: the plain pencil on the same integrals (for comparisons).
    pub fn with_symmetric_quadrature(mut self) -> TwistedRing<'m> {
        self.problem.symmetrise_quadrature();
        self
    }

    /// Sets up the mirror `v -> -v` (`mirror_nodes`: the image of every node) so that
    /// block systems can be made complex-symmetric ([`TwistedRing::block_system`] with
    /// `symmetric`): the face functions are relabelled so that mirror images match,
    /// and the DOF numbering, pattern and rotation are rebuilt on those labels.
    pub fn with_mirror(
        mut self,
        mirror_nodes: &[twistmode_mesh::NodeId],
    ) -> Result<TwistedRing<'m>, FemError> {
        // Mirror-image triangles are integrated at mirrored points (generated meshes
        // number an image with reference vertices 1 and 2 exchanged).
        self.problem.symmetrise_quadrature();
        let mesh = self.problem.mesh();
        let labels = mirror_face_labels(mesh, mirror_nodes)?;
        self.numbering = self.problem.dofs(0.0)?.with_face_labels(labels);
        self.pattern = BlockPattern::new(mesh, &self.numbering)?;
        if self.rotation.is_some() {
            self.rotation = Some(PiRotation::try_new(mesh, &self.numbering)?);
        }
        self.mirror = Some(Mirror::try_new(mesh, &self.numbering, mirror_nodes)?);
        Ok(self)
    }

    /// Whether the mirror is set up (complex-symmetric block systems available).
    pub fn has_mirror(&self) -> bool {
        self.mirror.is_some()
    }

    /// The section problem (mesh, setup, medium at `w = 0` for field read-back).
    pub fn problem(&self) -> &SectionProblem<'m> {
        &self.problem
    }
    /// Twist per radian `tau`.
    pub fn tau(&self) -> f64 {
        self.tau
    }
    /// Ring radius `R`, metres.
    pub fn radius(&self) -> f64 {
        self.radius
    }
    /// The full DOF numbering (walls applied as constraints).
    pub fn numbering(&self) -> &DofMap {
        &self.numbering
    }
    /// The rotation by pi, on a pi-symmetric mesh.
    pub fn rotation(&self) -> Option<&PiRotation> {
        self.rotation.as_ref()
    }
    /// Full DOFs per harmonic.
    pub fn full_len(&self) -> usize {
        self.numbering.full_len()
    }

    /// The closed-form medium at a point of triangle `t`.
    pub fn medium_at(&self, t: usize, u: f64, v: f64) -> Option<PointMedium> {
        let medium = self.problem.medium();
        let region = medium.triangle_region[t];
        let (uv, s) = if medium.stretched[region] {
            medium.map.pml.map(u, v)
        } else {
            PmlStretch::None.map(u, v)
        };
        let (eps, mu) = self.region_media[region];
        twisted_ring_medium(uv, s, self.radius, self.tau, eps, mu)
    }

    /// The parts of harmonics `j = -j_max..=j_max`, assembled once for any window with
    /// `2 K <= j_max`.
    pub fn assemble_parts(&self, j_max: u32) -> Result<AssembledParts, FemError> {
        let j_max = j_max as i32;
        let harmonics: Vec<i32> = (-j_max..=j_max).collect();
        AssembledParts::assemble(
            self.problem.mesh(),
            &self.pattern,
            self.problem.setup().order,
            self.problem.rule(),
            &harmonics,
            &|t, u, v| self.medium_at(t, u, v),
        )
    }

    /// The reductions of one solve: the wall constraints alone, or the two sector bases
    /// (`+1` first) when `sector` is given.
    fn reductions(&self, sector: Option<f64>) -> Result<Vec<Reduction>, FemError> {
        let free = Reduction::of_constraints(&self.numbering);
        match sector {
            None => Ok(vec![free]),
            Some(_) => {
                let rotation = self
                    .rotation
                    .as_ref()
                    .ok_or_else(|| FemError::NotPiSymmetric {
                        reason: "a sector was asked for on a mesh without pi-rotation partners"
                            .into(),
                    })?;
                Ok(vec![
                    rotation.sector(&free, 1.0)?,
                    rotation.sector(&free, -1.0)?,
                ])
            }
        }
    }

    /// [`TwistedRing::reductions`] turned into eigenvectors of the mirror, with the
    /// eigenvalue of every unknown.
    fn mirrored_reductions(
        &self,
        sector: Option<f64>,
    ) -> Result<(Vec<Reduction>, Vec<Vec<f64>>), FemError> {
        let mirror = self
            .mirror
            .as_ref()
            .ok_or_else(|| FemError::NotPiSymmetric {
                reason: "a symmetric block system needs the mirror (TwistedRing::with_mirror)"
                    .into(),
            })?;
        let mut reductions = Vec::new();
        let mut signs = Vec::new();
        for r in self.reductions(sector)? {
            let (adapted, d) = mirror.adapted(&r)?;
            reductions.push(adapted);
            signs.push(d);
        }
        Ok((reductions, signs))
    }

    /// The block pencil of `window` from `parts`: the whole system (`sector = None`) or
    /// the sector `s = sector` (blocks `k` in the sector `s (-1)^k` of `P`). Coupling
    /// harmonics whose parts are all below `drop_below` times the largest entry of
    /// harmonic 0 are left out and counted.
    ///
    /// With `symmetric` (and the mirror set up, [`TwistedRing::with_mirror`]) the stored
    /// matrices are `K T` and `M T`, complex-symmetric, averaged with their transposes
    /// to remove the quadrature-level asymmetry (measured in
    /// [`BlockSystem::asymmetry`]).
    pub fn block_system(
        &self,
        parts: &AssembledParts,
        window: HarmonicWindow,
        sector: Option<f64>,
        drop_below: f64,
        symmetric: bool,
    ) -> Result<BlockSystem, FemError> {
        let (reductions, block_signs) = if symmetric {
            let (r, d) = self.mirrored_reductions(sector)?;
            (r, Some(d))
        } else {
            (self.reductions(sector)?, None)
        };
        let nb = window.len();
        let reduction_of = |b: usize| -> usize {
            match sector {
                None => 0,
                Some(s) => {
                    let sk = if window.k_of(b).rem_euclid(2) == 0 {
                        s
                    } else {
                        -s
                    };
                    if sk > 0.0 {
                        0
                    } else {
                        1
                    }
                }
            }
        };
        let mut blocks = Vec::with_capacity(nb);
        let mut offset = 0;
        for b in 0..nb {
            let r = reduction_of(b);
            let len = reductions[r].len();
            blocks.push(HarmonicBlock {
                k: window.k_of(b),
                order: window.order(b),
                offset,
                len,
                reduction: r,
            });
            offset += len;
        }
        let n = offset;
        // Which coupling harmonics are kept.
        let zero_slot = parts.slot(0).ok_or_else(|| FemError::TwistedRing {
            reason: "the parts hold no harmonic 0".into(),
        })?;
        let scale = parts.max_abs(zero_slot);
        let mut largest_dropped = 0.0f64;
        let mut keep_j = std::collections::HashMap::new();
        for l in 0..nb {
            for k in 0..nb {
                let j = l as i32 - k as i32;
                if keep_j.contains_key(&j) {
                    continue;
                }
                let slot = parts.slot(j).ok_or_else(|| FemError::TwistedRing {
                    reason: format!("harmonic {j} of the medium was not assembled"),
                })?;
                let size = parts.max_abs(slot) / scale;
                let keep = j == 0 || size >= drop_below;
                if !keep {
                    largest_dropped = largest_dropped.max(size);
                }
                keep_j.insert(j, (keep, slot));
            }
        }
        let pairs: Vec<(usize, usize)> = (0..nb)
            .flat_map(|l| (0..nb).map(move |k| (l, k)))
            .filter(|(l, k)| keep_j[&(*l as i32 - *k as i32)].0)
            .collect();
        let couplings = Couplings {
            kept: pairs.len(),
            dropped: nb * nb - pairs.len(),
            largest_dropped,
        };
        // One gather plan per pair of reductions.
        let mut plans = std::collections::HashMap::new();
        for &(l, k) in &pairs {
            let key = (blocks[l].reduction, blocks[k].reduction);
            plans.entry(key).or_insert_with(|| {
                ReducedPattern::new(&self.pattern, &reductions[key.0], &reductions[key.1])
            });
        }
        // Values of every kept block, in parallel.
        let values: Vec<(Vec<c64>, Vec<c64>)> = pairs
            .par_iter()
            .map(|&(l, k)| {
                let plan = &plans[&(blocks[l].reduction, blocks[k].reduction)];
                let slot = keep_j[&(l as i32 - k as i32)].1;
                plan.gather_block(parts, slot, blocks[l].order, blocks[k].order)
            })
            .collect();
        let index_of: std::collections::HashMap<(usize, usize), usize> =
            pairs.iter().enumerate().map(|(i, p)| (*p, i)).collect();
        // Block-major compressed columns.
        let nnz: usize = values.iter().map(|v| v.0.len()).sum();
        let mut col_ptr = Vec::with_capacity(n + 1);
        let mut row_idx = Vec::with_capacity(nnz);
        let mut kv = Vec::with_capacity(nnz);
        let mut mv = Vec::with_capacity(nnz);
        col_ptr.push(0);
        for k in 0..nb {
            for c in 0..blocks[k].len {
                for l in 0..nb {
                    let Some(&i) = index_of.get(&(l, k)) else {
                        continue;
                    };
                    let plan = &plans[&(blocks[l].reduction, blocks[k].reduction)];
                    let range = plan.col_ptr()[c]..plan.col_ptr()[c + 1];
                    row_idx.extend(
                        plan.row_idx()[range.clone()]
                            .iter()
                            .map(|r| r + blocks[l].offset),
                    );
                    kv.extend_from_slice(&values[i].0[range.clone()]);
                    mv.extend_from_slice(&values[i].1[range]);
                }
                col_ptr.push(row_idx.len());
            }
        }
        drop(values);
        let symbolic = SymbolicSparseColMat::new_checked(n, n, col_ptr, None, row_idx);
        let mut stiffness = SparseColMat::new(symbolic.clone(), kv);
        let mut mass = SparseColMat::new(symbolic, mv);
        let (mut mirror_signs, mut asymmetry) = (None, 0.0);
        if let Some(per_reduction) = block_signs {
            let mut d = Vec::with_capacity(n);
            for b in &blocks {
                d.extend_from_slice(&per_reduction[b.reduction]);
            }
            let (k_sym, ak) = symmetrised_scaled(&stiffness, &d);
            let (m_sym, am) = symmetrised_scaled(&mass, &d);
            stiffness = k_sym;
            mass = m_sym;
            asymmetry = ak.max(am);
            mirror_signs = Some(d);
        }
        Ok(BlockSystem {
            stiffness,
            mass,
            window,
            blocks,
            reductions,
            sector,
            couplings,
            mirror_signs,
            asymmetry,
        })
    }
}

/// `(A D + (A D)^T) / 2` for a diagonal `D`, and the relative asymmetry of `A D`
/// before averaging. The pattern of `A` must be symmetric.
fn symmetrised_scaled(a: &SparseColMat<usize, c64>, d: &[f64]) -> (SparseColMat<usize, c64>, f64) {
    let n = a.ncols();
    let a = a.as_ref();
    let col_ptr: Vec<usize> = a.col_ptr().to_vec();
    let row_idx: Vec<usize> = a.row_idx().to_vec();
    let values: Vec<c64> = (0..n)
        .flat_map(|j| a.val_of_col(j).iter().map(move |v| v * d[j]))
        .collect();
    let find = |i: usize, j: usize| -> Option<usize> {
        let rows = &row_idx[col_ptr[j]..col_ptr[j + 1]];
        rows.binary_search(&i).ok().map(|p| col_ptr[j] + p)
    };
    let scale = values.iter().map(|v| v.norm()).fold(0.0, f64::max);
    let mut averaged = values.clone();
    let mut worst = 0.0f64;
    for j in 0..n {
        for p in col_ptr[j]..col_ptr[j + 1] {
            let i = row_idx[p];
            let other = find(j, i).map_or(c64::new(0.0, 0.0), |q| values[q]);
            worst = worst.max((values[p] - other).norm());
            averaged[p] = (values[p] + other) * 0.5;
        }
    }
    let symbolic = SymbolicSparseColMat::new_checked(n, n, col_ptr, None, row_idx);
    (
        SparseColMat::new(symbolic, averaged),
        if scale > 0.0 { worst / scale } else { 0.0 },
    )
}
