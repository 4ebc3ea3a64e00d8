//! Post-processing: the physical field of a solution, its electric energy by
//! region, and values at mesh nodes for plotting.
//!
//! The solution holds covariant components `e = (e_u, e_v, e_w)`. The Cartesian
//! field is `E = J^-T e` (J of the full map, stretch included, so inside a PML
//! this is the analytically continued, decaying field). Components are reported
//! along an orthonormal frame: `u_hat`, `v_hat` (unit vectors along `dx/du`,
//! `dx/dv`) and `w_hat = +-u_hat x v_hat`, oriented along increasing `w`
//! (`phi_hat` for rings and revolution bodies, `z_hat` for straight guides).
use num_complex::Complex64 as c64;
use twistmode_mesh::RegionKind;

use crate::assembly::{AssembledSystem, SectionProblem};
use crate::dofs::DofMap;
use crate::element::{lagrange_reference, nedelec_reference_with_faces};
use crate::geometry::ElementGeometry;
use crate::quadrature::TriangleRule;
use crate::tensor::{apply3, det3, inverse3, transpose3};

/// The physical field at one point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PhysicalField {
    /// Section point `(u, v)`, metres.
    pub point: [f64; 2],
    /// Components along `u_hat, v_hat, w_hat`.
    pub components: [c64; 3],
    /// `|E|^2`.
    pub norm_sq: f64,
}

/// Electric energy integrals over one region, per unit `w` (per radian for
/// rings and revolution bodies, per metre for straight guides).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RegionEnergy {
    /// `int E^* . eps E dV`, complex for lossy materials.
    pub electric: c64,
    /// The real part split along `u_hat, v_hat, w_hat`: `int Re(E_i^* (eps E)_i) dV`.
    pub components: [f64; 3],
}

/// Energy figures of one mode.
#[derive(Clone, Debug, PartialEq)]
pub struct EnergySummary {
    /// Per region, indexed by region id.
    pub regions: Vec<RegionEnergy>,
    /// Sum of `|electric|` over all regions.
    pub total: f64,
    /// Fraction of the energy inside body regions (confinement).
    pub body_fraction: f64,
    /// Fraction of the energy inside PML regions.
    pub pml_fraction: f64,
    /// Inside the body: fractions of the real energy along `u_hat` and `v_hat`
    /// (the polarisation class: mostly u, mostly v, or mixed).
    pub body_uv_fraction: [f64; 2],
}

impl EnergySummary {
    /// The fractions of a set of region energies (indexed by region id of `mesh`).
    pub fn from_regions(mesh: &twistmode_mesh::Mesh, regions: Vec<RegionEnergy>) -> EnergySummary {
        let total: f64 = regions.iter().map(|r| r.electric.norm()).sum();
        let (mut body, mut pml, mut uv) = (0.0, 0.0, [0.0; 2]);
        for (r, e) in mesh.regions().iter().zip(&regions) {
            match r.kind {
                RegionKind::Body { .. } => {
                    body += e.electric.norm();
                    uv[0] += e.components[0];
                    uv[1] += e.components[1];
                }
                RegionKind::Pml => pml += e.electric.norm(),
                RegionKind::Surroundings => {}
            }
        }
        let body_sum: f64 = regions
            .iter()
            .zip(mesh.regions())
            .filter(|(_, r)| matches!(r.kind, RegionKind::Body { .. }))
            .map(|(e, _)| e.components.iter().sum::<f64>())
            .sum();
        let safe = |a: f64, b: f64| if b > 0.0 { a / b } else { 0.0 };
        EnergySummary {
            regions,
            total,
            body_fraction: safe(body, total),
            pml_fraction: safe(pml, total),
            body_uv_fraction: [safe(uv[0], body_sum), safe(uv[1], body_sum)],
        }
    }
}

/// Point, orthonormal frame (rows), Cartesian field and volume factor `|det J|`.
type CartesianSample = ([f64; 2], [[f64; 3]; 3], [c64; 3], f64);

/// Reads fields back from a solution vector of an assembled system.
pub struct FieldEvaluator<'a, 'm> {
    problem: &'a SectionProblem<'m>,
    dofs: &'a DofMap,
    full: Vec<c64>,
    /// The third coordinate `w` at which the map (and so the frame) is taken.
    w: f64,
}

impl<'a, 'm> FieldEvaluator<'a, 'm> {
    /// Binds a reduced solution vector (an eigenvector of the pencil) to its problem.
    pub fn new(
        problem: &'a SectionProblem<'m>,
        system: &'a AssembledSystem,
        reduced: &[c64],
    ) -> FieldEvaluator<'a, 'm> {
        FieldEvaluator {
            problem,
            dofs: &system.dofs,
            full: system.dofs.expand(reduced),
            w: 0.0,
        }
    }

    /// Binds a full coefficient vector (every DOF of `dofs`, constrained ones zero) to
    /// its problem: for instance one harmonic of a twisted-ring solution, or their sum.
    pub fn from_full(
        problem: &'a SectionProblem<'m>,
        dofs: &'a DofMap,
        full: Vec<c64>,
    ) -> FieldEvaluator<'a, 'm> {
        FieldEvaluator {
            problem,
            dofs,
            full,
            w: 0.0,
        }
    }

    /// The same field read with the map at `w` (default 0): for a twisted ring, the
    /// section frame `(u_hat, v_hat, w_hat)` and the Cartesian field at azimuth `w`,
    /// given the covariant components there (for instance
    /// [`crate::twisted::BlockSystem::field_at`]).
    pub fn at_azimuth(mut self, w: f64) -> Self {
        self.w = w;
        self
    }

    /// Covariant components `(e_u, e_v, e_w)` and the point `(u, v)` at the
    /// reference point `(xi, eta)` of triangle `t`.
    pub fn covariant(&self, t: usize, xi: f64, eta: f64) -> ([f64; 2], [c64; 3]) {
        let mesh = self.problem.mesh();
        let order = self.dofs.order();
        let mapped = ElementGeometry::of_triangle(mesh, t).map(xi, eta);
        let ld = self.dofs.triangle_dofs(mesh, t);
        let mut nv = [[0.0; 2]; 8];
        let mut nc = [0.0; 8];
        let mut lv = [0.0; 6];
        let mut lg = [[0.0; 2]; 6];
        nedelec_reference_with_faces(order, ld.faces, xi, eta, &mut nv, &mut nc);
        lagrange_reference(order, xi, eta, &mut lv, &mut lg);
        let mut e = [c64::new(0.0, 0.0); 3];
        for k in 0..ld.transverse {
            let a = mapped.covariant(nv[k]);
            let x = self.full[ld.index[k]] * ld.sign[k];
            e[0] += x * a[0];
            e[1] += x * a[1];
        }
        for k in 0..ld.len - ld.transverse {
            e[2] += self.full[ld.index[ld.transverse + k]] * lv[k];
        }
        (mapped.x, e)
    }

    /// Orthonormal frame (rows: `u_hat, v_hat, w_hat`) and the Cartesian field.
    fn cartesian(&self, t: usize, xi: f64, eta: f64) -> Option<CartesianSample> {
        let (x, e) = self.covariant(t, xi, eta);
        let medium = self.problem.medium();
        let region = medium.triangle_region[t];
        let j = medium
            .map
            .jacobian(x[0], x[1], self.w, medium.stretched[region]);
        let j_real = medium.map.jacobian(x[0], x[1], self.w, false);
        let j_inv_t = transpose3(&inverse3(&j)?);
        let field = apply3(&j_inv_t, &e);
        let col = |k: usize| [j_real[0][k].re, j_real[1][k].re, j_real[2][k].re];
        let unit = |a: [f64; 3]| {
            let n = (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt();
            [a[0] / n, a[1] / n, a[2] / n]
        };
        let (uh, vh, dw) = (unit(col(0)), unit(col(1)), col(2));
        let mut wh = [
            uh[1] * vh[2] - uh[2] * vh[1],
            uh[2] * vh[0] - uh[0] * vh[2],
            uh[0] * vh[1] - uh[1] * vh[0],
        ];
        if wh[0] * dw[0] + wh[1] * dw[1] + wh[2] * dw[2] < 0.0 {
            wh = [-wh[0], -wh[1], -wh[2]];
        }
        let volume = det3(&j_real).re.abs();
        Some((x, [uh, vh, wh], field, volume))
    }

    /// Physical field at reference point `(xi, eta)` of triangle `t`
    /// (`None` where the map is singular, on the axis of a revolution body).
    pub fn physical(&self, t: usize, xi: f64, eta: f64) -> Option<PhysicalField> {
        let (point, frame, field, _) = self.cartesian(t, xi, eta)?;
        let dot = |f: &[f64; 3]| field[0] * f[0] + field[1] * f[1] + field[2] * f[2];
        Some(PhysicalField {
            point,
            components: [dot(&frame[0]), dot(&frame[1]), dot(&frame[2])],
            norm_sq: field.iter().map(|c| c.norm_sqr()).sum(),
        })
    }

    /// Electric energy by region, confinement, PML fraction and polarisation split.
    pub fn energy(&self) -> EnergySummary {
        let mesh = self.problem.mesh();
        let medium = self.problem.medium();
        let rule = TriangleRule::collapsed_gauss(2 * self.dofs.order().degree() + 4);
        let zero = RegionEnergy {
            electric: c64::new(0.0, 0.0),
            components: [0.0; 3],
        };
        let mut regions = vec![zero; mesh.regions().len()];
        for t in 0..mesh.triangles().len() {
            let region = medium.triangle_region[t];
            let geometry = ElementGeometry::of_triangle(mesh, t);
            let eps = medium.materials[region].eps;
            for (p, w) in rule.points.iter().zip(&rule.weights) {
                let Some((_, frame, field, volume)) = self.cartesian(t, p[0], p[1]) else {
                    continue;
                };
                let dv = w * geometry.map(p[0], p[1]).det * volume;
                let d = apply3(&eps, &field);
                let acc = &mut regions[region];
                for (i, f) in frame.iter().enumerate() {
                    let ef = field[0] * f[0] + field[1] * f[1] + field[2] * f[2];
                    let df = d[0] * f[0] + d[1] * f[1] + d[2] * f[2];
                    acc.components[i] += (ef.conj() * df).re * dv;
                }
                acc.electric +=
                    (field[0].conj() * d[0] + field[1].conj() * d[1] + field[2].conj() * d[2]) * dv;
            }
        }
        EnergySummary::from_regions(mesh, regions)
    }

    /// Physical field components at every mesh node (vertices and mid-side
    /// nodes), averaged over the triangles sharing the node. Each node is
    /// evaluated a hair inside each triangle, so nodes on the axis are fine.
    pub fn nodal_values(&self) -> Vec<[c64; 3]> {
        let mesh = self.problem.mesh();
        let mut sum = vec![[c64::new(0.0, 0.0); 3]; mesh.points().len()];
        let mut count = vec![0u32; mesh.points().len()];
        let local = [
            [0.0, 0.0],
            [1.0, 0.0],
            [0.0, 1.0],
            [0.5, 0.0],
            [0.5, 0.5],
            [0.0, 0.5],
        ];
        let inward = 1e-7;
        let npt = mesh.order().nodes_per_triangle();
        for (t, tri) in mesh.triangles().iter().enumerate() {
            for k in 0..npt {
                let p = local[k];
                let xi = p[0] + inward * (1.0 / 3.0 - p[0]);
                let eta = p[1] + inward * (1.0 / 3.0 - p[1]);
                if let Some(f) = self.physical(t, xi, eta) {
                    let node = tri.nodes[k].idx();
                    for c in 0..3 {
                        sum[node][c] += f.components[c];
                    }
                    count[node] += 1;
                }
            }
        }
        sum.iter()
            .zip(&count)
            .map(|(s, &n)| {
                let n = f64::from(n.max(1));
                [s[0] / n, s[1] / n, s[2] / n]
            })
            .collect()
    }
}
