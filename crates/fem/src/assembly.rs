//! Element matrices (curl-curl and vector mass) and parallel global assembly.
//!
//! Fields `E = (e_u, e_v, e_w)(u, v) exp(i m w)`; trial curl
//! `(d_v e_w - i m e_v, i m e_u - d_u e_w, d_u e_v - d_v e_u)`; test functions
//! carry `exp(-i m w)`, so their curl has `-i m`. Bilinear (non-conjugated) forms
//!
//! ```text
//!   K(F, E) = int (curl F)^T nu_hat (curl E) du dv      (CurlCurl)
//!   M(F, E) = int F^T eps_hat E du dv                   (VectorMass)
//! ```
//!
//! and the pencil `K x = k0^2 M x` (lengths in metres, so `k0^2` in m^-2).
//! The test and trial orders are separate arguments of [`element_matrices`] and
//! the medium comes through [`CoefficientField`], so harmonic blocks of a
//! Fourier-Galerkin (twisted ring) system — test order `m + l tau`, trial order
//! `m + k tau`, coefficient harmonic `l - k` — reuse the same integrator.
use faer::sparse::{Pair, SparseColMat, SymbolicSparseColMat};
use num_complex::Complex64 as c64;
use rayon::prelude::*;
use twistmode_mesh::{boundary_names, Mesh, RegionKind};

use crate::coordinates::{CoordinateMap, EquivalentMedium, Placement, PmlStretch};
use crate::dofs::{ConstraintSummary, DofMap, Wall};
use crate::element::{lagrange_reference, nedelec_reference, Order};
use crate::error::FemError;
use crate::geometry::ElementGeometry;
use crate::media::{Material, MaterialTable};
use crate::quadrature::TriangleRule;
use crate::tensor::apply3;

/// Largest number of local functions (order 2: 8 transverse + 6 Lagrange).
pub const MAX_LOCAL: usize = 14;

/// Entries of one triangle: reduced (row, column) pairs, K values, M values.
type TriangleEntries = (Vec<Pair<usize, usize>>, Vec<c64>, Vec<c64>);

/// The coefficients of the forms as a function of position in the section.
pub trait CoefficientField: Sync {
    /// Medium at `(u, v)` inside triangle `triangle`; `None` where the map is singular.
    fn at(&self, triangle: usize, u: f64, v: f64) -> Option<EquivalentMedium>;
}

/// The equivalent medium of an untwisted section (independent of `w`, taken at `w = 0`).
#[derive(Clone, Debug, PartialEq)]
pub struct SectionMedium {
    /// The coordinate map (placement and PML).
    pub map: CoordinateMap,
    /// Material of each region.
    pub materials: Vec<Material>,
    /// Whether each region is stretched (PML).
    pub stretched: Vec<bool>,
    /// Region index of each triangle.
    pub triangle_region: Vec<usize>,
}

impl CoefficientField for SectionMedium {
    fn at(&self, triangle: usize, u: f64, v: f64) -> Option<EquivalentMedium> {
        let region = self.triangle_region[triangle];
        self.map
            .equivalent_medium(&self.materials[region], u, v, 0.0, self.stretched[region])
    }
}

/// Dense element matrices (row = test function, column = trial function), local
/// functions in the order of [`crate::element`], before edge signs.
#[derive(Clone, Debug, PartialEq)]
pub struct ElementMatrices {
    /// Number of local functions.
    pub len: usize,
    /// Curl-curl matrix, row-major `len x len`.
    pub stiffness: Vec<c64>,
    /// Vector mass matrix, row-major `len x len`.
    pub mass: Vec<c64>,
}

/// Values (3 components) and curls of every local function at one quadrature point.
struct PointBasis {
    value: [[c64; 3]; MAX_LOCAL],
    curl_trial: [[c64; 3]; MAX_LOCAL],
    curl_test: [[c64; 3]; MAX_LOCAL],
}

/// Element matrices of one triangle, by quadrature. `medium(u, v)` gives the
/// coefficients at a physical point (`None`: singular, reported as the point).
pub fn element_matrices(
    geometry: &ElementGeometry,
    order: Order,
    rule: &TriangleRule,
    m_test: f64,
    m_trial: f64,
    medium: impl Fn(f64, f64) -> Option<EquivalentMedium>,
) -> Result<ElementMatrices, [f64; 2]> {
    let nt = order.transverse_per_triangle();
    let n = nt + order.scalar_per_triangle();
    let mut stiffness = vec![c64::new(0.0, 0.0); n * n];
    let mut mass = vec![c64::new(0.0, 0.0); n * n];
    let zero = c64::new(0.0, 0.0);
    let i = c64::new(0.0, 1.0);
    let mut ned_values = [[0.0; 2]; 8];
    let mut ned_curls = [0.0; 8];
    let mut lag_values = [0.0; 6];
    let mut lag_grads = [[0.0; 2]; 6];
    let mut basis = PointBasis {
        value: [[zero; 3]; MAX_LOCAL],
        curl_trial: [[zero; 3]; MAX_LOCAL],
        curl_test: [[zero; 3]; MAX_LOCAL],
    };
    for (point, weight) in rule.points.iter().zip(&rule.weights) {
        let mapped = geometry.map(point[0], point[1]);
        let coefficients = medium(mapped.x[0], mapped.x[1]).ok_or(mapped.x)?;
        let dx = weight * mapped.det;
        nedelec_reference(order, point[0], point[1], &mut ned_values, &mut ned_curls);
        lagrange_reference(order, point[0], point[1], &mut lag_values, &mut lag_grads);
        for k in 0..nt {
            let a = mapped.covariant(ned_values[k]);
            let c = c64::new(ned_curls[k] / mapped.det, 0.0);
            basis.value[k] = [c64::new(a[0], 0.0), c64::new(a[1], 0.0), zero];
            basis.curl_trial[k] = [-i * m_trial * a[1], i * m_trial * a[0], c];
            basis.curl_test[k] = [i * m_test * a[1], -i * m_test * a[0], c];
        }
        for k in 0..order.scalar_per_triangle() {
            let g = mapped.covariant(lag_grads[k]);
            basis.value[nt + k] = [zero, zero, c64::new(lag_values[k], 0.0)];
            let curl = [c64::new(g[1], 0.0), c64::new(-g[0], 0.0), zero];
            basis.curl_trial[nt + k] = curl;
            basis.curl_test[nt + k] = curl;
        }
        for col in 0..n {
            let nu_curl = apply3(&coefficients.nu_hat, &basis.curl_trial[col]);
            let eps_val = apply3(&coefficients.eps_hat, &basis.value[col]);
            for row in 0..n {
                let (ct, vt) = (&basis.curl_test[row], &basis.value[row]);
                stiffness[row * n + col] +=
                    (ct[0] * nu_curl[0] + ct[1] * nu_curl[1] + ct[2] * nu_curl[2]) * dx;
                mass[row * n + col] +=
                    (vt[0] * eps_val[0] + vt[1] * eps_val[1] + vt[2] * eps_val[2]) * dx;
            }
        }
    }
    Ok(ElementMatrices {
        len: n,
        stiffness,
        mass,
    })
}

/// Everything that defines a 2D section problem, independent of `m`.
#[derive(Clone, Debug, PartialEq)]
pub struct SectionSetup {
    /// Element order.
    pub order: Order,
    /// Placement of the section in space.
    pub placement: Placement,
    /// PML stretch (applied only in PML regions).
    pub pml: PmlStretch,
    /// Materials.
    pub materials: MaterialTable,
    /// Wall conditions by boundary tag name (untagged boundaries are natural:
    /// perfect magnetic walls).
    pub walls: Vec<(String, Wall)>,
}

/// A section problem bound to its mesh: assemble it for any azimuthal order
/// (or propagation constant) `m`.
#[derive(Clone, Debug)]
pub struct SectionProblem<'m> {
    mesh: &'m Mesh,
    setup: SectionSetup,
    medium: SectionMedium,
    rule: TriangleRule,
}

/// The assembled pencil `K x = k0^2 M x` on the reduced DOFs.
#[derive(Clone, Debug)]
pub struct AssembledSystem {
    /// Curl-curl matrix `K`.
    pub stiffness: SparseColMat<usize, c64>,
    /// Vector mass matrix `M` (same sparsity pattern as `K`).
    pub mass: SparseColMat<usize, c64>,
    /// DOF numbering and the map to the reduced system.
    pub dofs: DofMap,
    /// Azimuthal order (or propagation constant, rad/m) assembled for.
    pub m: f64,
}

impl AssembledSystem {
    /// What the conditions removed, and the number of static eigenvalues.
    pub fn summary(&self) -> ConstraintSummary {
        self.dofs.summary()
    }

    /// `(D K, D M)` with `D = diag(+1 on transverse DOFs, -1 on third-component DOFs)`:
    /// the same eigenpairs and residual norms, and a complex-symmetric pencil whenever
    /// the equivalent media do not couple the third component to the section plane
    /// (revolution bodies, untwisted rings, untwisted straight guides; not twisted
    /// guides).
    ///
    /// Why: the test field carries `exp(-i m w)`, so `K(F, E)` pairs `curl_{-m} F` with
    /// `curl_m E`. Changing the sign of the third component `f_w` of the test field
    /// turns `curl_{-m} F` into `R curl_m F` with `R = diag(-1, -1, 1)`, so the rows
    /// of `D K` are `int (curl_m F)^T (R nu) (curl_m E)`: symmetric when `R nu` is,
    /// i.e. when `nu` has no `(u, w)` or `(v, w)` entries; `D M` likewise with `eps`.
    /// (Derived here; checked numerically in the tests.)
    pub fn symmetric_form(&self) -> (SparseColMat<usize, c64>, SparseColMat<usize, c64>) {
        let third = self.dofs.third_start();
        let sign: Vec<f64> = self
            .dofs
            .full_indices()
            .iter()
            .map(|&f| if f >= third { -1.0 } else { 1.0 })
            .collect();
        let flip = |a: &SparseColMat<usize, c64>| {
            let mut a = a.clone();
            let n = a.ncols();
            for j in 0..n {
                let rows: Vec<usize> = a.as_ref().row_idx_of_col(j).collect();
                for (v, i) in a.val_of_col_mut(j).iter_mut().zip(rows) {
                    *v *= sign[i];
                }
            }
            a
        };
        (flip(&self.stiffness), flip(&self.mass))
    }
}

impl<'m> SectionProblem<'m> {
    /// Checks the setup against the mesh (materials, boundary names, twist).
    pub fn try_new(mesh: &'m Mesh, setup: SectionSetup) -> Result<SectionProblem<'m>, FemError> {
        if let Placement::Ring { half_turns, .. } = setup.placement {
            if half_turns != 0.0 {
                return Err(FemError::TwistedRingNeedsHarmonics { half_turns });
            }
        }
        for (name, _) in &setup.walls {
            if mesh.boundary_tag(name).is_none() {
                return Err(FemError::UnknownBoundary { name: name.clone() });
            }
        }
        let materials = setup.materials.try_resolve(mesh)?;
        let stretched = mesh
            .regions()
            .iter()
            .map(|r| r.kind == RegionKind::Pml)
            .collect();
        let medium = SectionMedium {
            map: CoordinateMap {
                placement: setup.placement,
                pml: setup.pml,
            },
            materials,
            stretched,
            triangle_region: mesh.triangles().iter().map(|t| t.region.idx()).collect(),
        };
        // Degree 2k + 4: exact for the polynomial part on straight triangles with
        // room for the r and 1/r factors of bodies of revolution and curved sides.
        let rule = TriangleRule::collapsed_gauss(2 * setup.order.degree() + 4);
        Ok(SectionProblem {
            mesh,
            setup,
            medium,
            rule,
        })
    }

    /// The mesh.
    pub fn mesh(&self) -> &'m Mesh {
        self.mesh
    }
    /// The setup.
    pub fn setup(&self) -> &SectionSetup {
        &self.setup
    }
    /// The coefficient field.
    pub fn medium(&self) -> &SectionMedium {
        &self.medium
    }
    /// Replaces the quadrature rule (exact for total degree `degree`).
    pub fn set_quadrature_degree(&mut self, degree: usize) {
        self.rule = TriangleRule::collapsed_gauss(degree);
    }

    /// Name of the axis tag when the axis conditions apply (revolution bodies).
    fn axis_tag(&self) -> Option<&'static str> {
        match self.setup.placement {
            Placement::Revolution => Some(boundary_names::AXIS),
            _ => None,
        }
    }

    /// DOF numbering and constraints for azimuthal order `m`.
    pub fn dofs(&self, m: f64) -> Result<DofMap, FemError> {
        DofMap::try_new(
            self.mesh,
            self.setup.order,
            &self.setup.walls,
            self.axis_tag(),
            m,
        )
    }

    /// Assembles `K` and `M` for azimuthal order (or propagation constant) `m`,
    /// element matrices in parallel, constrained DOFs eliminated.
    pub fn assemble(&self, m: f64) -> Result<AssembledSystem, FemError> {
        let dofs = self.dofs(m)?;
        let order = self.setup.order;
        let per_triangle: Vec<TriangleEntries> = (0..self.mesh.triangles().len())
            .into_par_iter()
            .map(|t| {
                let geometry = ElementGeometry::of_triangle(self.mesh, t);
                let local = element_matrices(&geometry, order, &self.rule, m, m, |u, v| {
                    self.medium.at(t, u, v)
                })
                .map_err(|p| FemError::SingularMap {
                    triangle: t,
                    u: p[0],
                    v: p[1],
                })?;
                let ld = dofs.triangle_dofs(self.mesh, t);
                let mut pairs = Vec::with_capacity(ld.len * ld.len);
                let mut k = Vec::with_capacity(ld.len * ld.len);
                let mut mm = Vec::with_capacity(ld.len * ld.len);
                for row in 0..ld.len {
                    let Some(r) = dofs.reduced_index(ld.index[row]) else {
                        continue;
                    };
                    for col in 0..ld.len {
                        let Some(c) = dofs.reduced_index(ld.index[col]) else {
                            continue;
                        };
                        let s = ld.sign[row] * ld.sign[col];
                        pairs.push(Pair { row: r, col: c });
                        k.push(local.stiffness[row * ld.len + col] * s);
                        mm.push(local.mass[row * ld.len + col] * s);
                    }
                }
                Ok((pairs, k, mm))
            })
            .collect::<Result<_, FemError>>()?;
        let total: usize = per_triangle.iter().map(|p| p.0.len()).sum();
        let mut pairs = Vec::with_capacity(total);
        let mut kv = Vec::with_capacity(total);
        let mut mv = Vec::with_capacity(total);
        for (p, k, mm) in per_triangle {
            pairs.extend(p);
            kv.extend(k);
            mv.extend(mm);
        }
        let n = dofs.reduced_len();
        let (symbolic, argsort) = SymbolicSparseColMat::try_new_from_indices(n, n, &pairs)
            .map_err(|e| FemError::Sparse(format!("{e:?}")))?;
        let stiffness = SparseColMat::new_from_argsort(symbolic.clone(), &argsort, &kv)
            .map_err(|e| FemError::Sparse(format!("{e:?}")))?;
        let mass = SparseColMat::new_from_argsort(symbolic, &argsort, &mv)
            .map_err(|e| FemError::Sparse(format!("{e:?}")))?;
        Ok(AssembledSystem {
            stiffness,
            mass,
            dofs,
            m,
        })
    }
}
