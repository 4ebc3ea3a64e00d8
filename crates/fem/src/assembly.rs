//! Element matrices (curl-curl and vector mass) and parallel global assembly of a
//! section problem for one azimuthal order.
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
//! Assembly goes through the order-independent parts of [`crate::kernel`]:
//! [`SectionProblem::assemble_parts`] integrates `S00, S01, S10, S11, M` once, and
//! [`OrderParts::system`] forms `K(m) = S00 + m (S01 - S10) - m^2 S11` for any order
//! without integrating again (an m-sweep assembles once).
use faer::sparse::SparseColMat;
use num_complex::Complex64 as c64;
use twistmode_mesh::{boundary_names, Mesh, RegionKind};

use crate::coordinates::{CoordinateMap, EquivalentMedium, Placement, PmlStretch};
use crate::dofs::{ConstraintSummary, DofMap, Wall};
use crate::element::{Order, IDENTITY_FACES};
use crate::error::FemError;
use crate::geometry::ElementGeometry;
use crate::harmonics::PointMedium;
use crate::kernel::{element_parts, part};
use crate::media::{Material, MaterialTable};
use crate::quadrature::TriangleRule;
use crate::scatter::{AssembledParts, BlockPattern, ReducedPattern, Reduction};

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

/// Element matrices of one triangle for test order `m_test` and trial order `m_trial`,
/// by quadrature (the parts of [`element_parts`] combined). `medium(u, v)` gives the
/// coefficients at a physical point (`None`: singular, reported as the point).
pub fn element_matrices(
    geometry: &ElementGeometry,
    order: Order,
    rule: &TriangleRule,
    m_test: f64,
    m_trial: f64,
    medium: impl Fn(f64, f64) -> Option<EquivalentMedium>,
) -> Result<ElementMatrices, [f64; 2]> {
    let parts = element_parts(geometry, order, IDENTITY_FACES, rule, &[0], |u, v| {
        medium(u, v).map(PointMedium::invariant)
    })?;
    Ok(ElementMatrices {
        len: parts.len,
        stiffness: parts.stiffness(0, m_test, m_trial),
        mass: parts.parts[0][part::MASS].clone(),
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
    /// The quadrature rule.
    pub fn rule(&self) -> &TriangleRule {
        &self.rule
    }
    /// Replaces the quadrature rule (exact for total degree `degree`).
    pub fn set_quadrature_degree(&mut self, degree: usize) {
        self.rule = TriangleRule::collapsed_gauss(degree);
    }
    /// Makes the quadrature rule invariant under exchanging reference vertices 1 and 2
    /// ([`TriangleRule::swap_symmetrised`]), for meshes whose mirror-image triangles are
    /// numbered that way.
    pub fn symmetrise_quadrature(&mut self) {
        self.rule = self.rule.swap_symmetrised();
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

    /// The order-independent parts `S00, S01, S10, S11, M` on the full DOF numbering,
    /// element integrals in parallel.
    /// Refused for twisted rings, whose medium depends on `w` (see
    /// [`crate::twisted::TwistedRing`]).
    pub fn assemble_parts(&self) -> Result<OrderParts, FemError> {
        if let Placement::Ring { half_turns, .. } = self.setup.placement {
            if half_turns != 0.0 {
                return Err(FemError::TwistedRingNeedsHarmonics { half_turns });
            }
        }
        let numbering = self.dofs(0.0)?;
        let pattern = BlockPattern::new(self.mesh, &numbering)?;
        let medium = |t: usize, u: f64, v: f64| self.medium.at(t, u, v).map(PointMedium::invariant);
        let parts = AssembledParts::assemble(
            self.mesh,
            &pattern,
            self.setup.order,
            &self.rule,
            &[0],
            &medium,
        )?;
        Ok(OrderParts { pattern, parts })
    }

    /// Assembles `K` and `M` for azimuthal order (or propagation constant) `m`,
    /// element matrices in parallel, constrained DOFs eliminated.
    pub fn assemble(&self, m: f64) -> Result<AssembledSystem, FemError> {
        self.assemble_parts()?.system(self, m)
    }
}

/// The order-independent parts of a section problem, assembled once; [`OrderParts::system`]
/// forms the pencil of any order from them.
#[derive(Clone, Debug)]
pub struct OrderParts {
    pattern: BlockPattern,
    parts: AssembledParts,
}

impl OrderParts {
    /// The pattern of the full DOF numbering.
    pub fn pattern(&self) -> &BlockPattern {
        &self.pattern
    }

    /// The pencil of order `m`: `K = S00 + m (S01 - S10) - m^2 S11`, `M`, reduced to the
    /// DOFs left free by the walls and the axis conditions of `problem` at that order.
    pub fn system(
        &self,
        problem: &SectionProblem<'_>,
        m: f64,
    ) -> Result<AssembledSystem, FemError> {
        let dofs = problem.dofs(m)?;
        let reduction = Reduction::of_constraints(&dofs);
        let reduced = ReducedPattern::new(&self.pattern, &reduction, &reduction);
        let (k, mass) = reduced.gather_block(&self.parts, 0, m, m);
        Ok(AssembledSystem {
            stiffness: reduced.matrix(k),
            mass: reduced.matrix(mass),
            dofs,
            m,
        })
    }
}
