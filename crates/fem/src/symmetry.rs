//! The rotation of the section by pi, `P`, on the finite-element space, and the
//! symmetry-adapted bases of its two sectors.
//!
//! `P` turns a field about the pi-centre: `(P e)(u, v) = (-e_u, -e_v, e_w)(-u, -v)`
//! (covariant components, the centre at the origin). On a mesh that is invariant under
//! the rotation, with each triangle's image numbered in the same local order, the
//! pull-back of local function `i` of the image triangle is local function `i` of the
//! triangle itself (for the edge functions the Jacobian `-I` of the rotation supplies the
//! minus sign of the transverse part), so `P` maps every global basis function to `+-`
//! one other: `P phi_g = sigma_g phi_P(g)`, with `sigma_g` the product of the two global
//! signs. `P` is an involution and its eigenvalues are `s = +-1`; the sector `s` is
//! spanned by `(phi_g + s sigma_g phi_P(g)) / sqrt 2` for each pair `g != P(g)`, and by
//! `phi_g` itself where `g = P(g)` and `sigma_g = s`. The two sectors are orthogonal and
//! each holds about half the unknowns.
use std::collections::HashMap;

use twistmode_mesh::Mesh;

use crate::dofs::DofMap;
use crate::error::FemError;
use crate::scatter::Reduction;

/// `P` on the full DOF numbering: partner and sign of every DOF.
#[derive(Clone, Debug, PartialEq)]
pub struct PiRotation {
    partner: Vec<u32>,
    sign: Vec<f64>,
}

impl PiRotation {
    /// `P` on the DOFs of `dofs` over `mesh`, which must carry pi-partner nodes
    /// ([`Mesh::pi_partner_nodes`]) with each triangle's image numbered in the same local
    /// order (what the generator makes).
    pub fn try_new(mesh: &Mesh, dofs: &DofMap) -> Result<PiRotation, FemError> {
        let partners = mesh
            .pi_partner_nodes()
            .ok_or_else(|| FemError::NotPiSymmetric {
                reason: "the mesh carries no pi-rotation partner map".into(),
            })?;
        let mut by_vertices: HashMap<[u32; 3], usize> = HashMap::new();
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let mut v = tri.vertices().map(|n| n.0);
            v.sort_unstable();
            by_vertices.insert(v, t);
        }
        let n = dofs.full_len();
        const UNSET: u32 = u32::MAX;
        let mut partner = vec![UNSET; n];
        let mut sign = vec![0.0; n];
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let image = tri.vertices().map(|v| partners[v.idx()].0);
            let mut key = image;
            key.sort_unstable();
            let &s = by_vertices
                .get(&key)
                .ok_or_else(|| FemError::NotPiSymmetric {
                    reason: format!("triangle {t} has no rotated image"),
                })?;
            let other = &mesh.triangles()[s];
            if other.vertices().map(|v| v.0) != image {
                return Err(FemError::NotPiSymmetric {
                    reason: format!(
                        "triangle {s}, the image of triangle {t}, is not numbered in the same local order"
                    ),
                });
            }
            let (a, b) = (dofs.triangle_dofs(mesh, t), dofs.triangle_dofs(mesh, s));
            for i in 0..a.len {
                let (g, h) = (a.index[i], b.index[i]);
                let sg = a.sign[i] * b.sign[i];
                if partner[g] == UNSET {
                    partner[g] = h as u32;
                    sign[g] = sg;
                } else if partner[g] as usize != h || sign[g] != sg {
                    return Err(FemError::NotPiSymmetric {
                        reason: format!("degree of freedom {g} has two different images"),
                    });
                }
            }
        }
        for g in 0..n {
            let p = partner[g];
            if p == UNSET || partner[p as usize] as usize != g || sign[p as usize] != sign[g] {
                return Err(FemError::NotPiSymmetric {
                    reason: format!("the rotation is not an involution at degree of freedom {g}"),
                });
            }
        }
        Ok(PiRotation { partner, sign })
    }

    /// Partner and sign of full DOF `g`: `P phi_g = sign phi_partner`.
    pub fn image(&self, g: usize) -> (usize, f64) {
        (self.partner[g] as usize, self.sign[g])
    }

    /// `P x` of a full coefficient vector.
    pub fn apply(&self, x: &[num_complex::Complex64]) -> Vec<num_complex::Complex64> {
        let mut y = vec![num_complex::Complex64::new(0.0, 0.0); x.len()];
        for (g, v) in x.iter().enumerate() {
            y[self.partner[g] as usize] += v * self.sign[g];
        }
        y
    }

    /// The orthonormal basis of sector `s` (`+1` or `-1`) among the DOFs `free` leaves,
    /// as a reduction. A DOF and its partner must be both free or both constrained.
    pub fn sector(&self, free: &Reduction, s: f64) -> Result<Reduction, FemError> {
        let n = self.partner.len();
        let mut target = vec![None; n];
        let mut len = 0u32;
        let half = std::f64::consts::FRAC_1_SQRT_2;
        for g in 0..n {
            let p = self.partner[g] as usize;
            let (kept_g, kept_p) = (free.target(g).is_some(), free.target(p).is_some());
            if kept_g != kept_p {
                return Err(FemError::NotPiSymmetric {
                    reason: format!(
                        "degree of freedom {g} is constrained but its image {p} is not (walls must be symmetric)"
                    ),
                });
            }
            if !kept_g {
                continue;
            }
            if p == g {
                if self.sign[g] == s {
                    target[g] = Some((len, 1.0));
                    len += 1;
                }
            } else if g < p {
                target[g] = Some((len, half));
                target[p] = Some((len, s * self.sign[g] * half));
                len += 1;
            }
        }
        Ok(Reduction::new(target, len as usize))
    }
}
