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
            let (kept_g, kept_p) = (free.keeps(g), free.keeps(p));
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

/// The mirror `T`: the reflection `v -> -v` of the section together with `w -> -w`,
/// `(T e)(u, v) = (e_u, -e_v, -e_w)(u, -v)` in covariant components.
///
/// For a ring whose section is symmetric under `v -> -v`, the map
/// `(u, v, w) -> (u, -v, -w)` is a rotation by pi of the whole band (about the line
/// through the axis and the section centre at `w = 0`); it turns a field of order `n`
/// into one of order `-n`, which is what transposition does to the forms. So the block
/// pencil of a twisted ring on a mirror-symmetric mesh satisfies `K^T = T K T`, block by
/// block, and `K T`, `M T` are complex-symmetric with the same eigenvalues (eigenvectors
/// `x = T y`): the symmetric indefinite factorisation applies.
///
/// A reflection reverses the orientation of a triangle, so its image carries the
/// vertices in another order; with face labels from [`mirror_face_labels`] the face
/// functions of the image are exact images too, and `T` maps every global basis
/// function to `+-` one other.
#[derive(Clone, Debug, PartialEq)]
pub struct Mirror {
    image: Vec<u32>,
    sign: Vec<f64>,
}

/// The triangle with the vertex set of `nodes` (any order) and the position of each.
fn image_triangle(
    mesh: &Mesh,
    by_vertices: &HashMap<[u32; 3], usize>,
    nodes: [u32; 3],
) -> Option<(usize, [usize; 3])> {
    let mut key = nodes;
    key.sort_unstable();
    let &s = by_vertices.get(&key)?;
    let v = mesh.triangles()[s].vertices().map(|n| n.0);
    let rho = nodes.map(|n| v.iter().position(|x| *x == n).unwrap_or(0));
    Some((s, rho))
}

fn vertex_index(mesh: &Mesh) -> HashMap<[u32; 3], usize> {
    mesh.triangles()
        .iter()
        .enumerate()
        .map(|(t, tri)| {
            let mut v = tri.vertices().map(|n| n.0);
            v.sort_unstable();
            (v, t)
        })
        .collect()
}

/// Face-function labels (see [`crate::element::nedelec_reference_with_faces`]) under
/// which the image of every triangle under the mirror `mirror_nodes` (node -> image)
/// carries the images of its face functions, consistent with the pi rotation when the
/// mesh has one (an image under the rotation keeps its labels).
pub fn mirror_face_labels(
    mesh: &Mesh,
    mirror_nodes: &[twistmode_mesh::NodeId],
) -> Result<Vec<[u8; 3]>, FemError> {
    let by_vertices = vertex_index(mesh);
    let n = mesh.triangles().len();
    let mut labels: Vec<Option<[u8; 3]>> = vec![None; n];
    let pi = mesh.pi_partner_nodes();
    for start in 0..n {
        if labels[start].is_some() {
            continue;
        }
        labels[start] = Some(crate::element::IDENTITY_FACES);
        let mut stack = vec![start];
        while let Some(t) = stack.pop() {
            let own = labels[t].expect("set before it is pushed");
            let tri = mesh.triangles()[t].vertices().map(|v| v.0);
            let mut images = Vec::new();
            let mirrored = tri.map(|v| mirror_nodes[v as usize].0);
            let (s, rho) = image_triangle(mesh, &by_vertices, mirrored).ok_or_else(|| {
                FemError::NotPiSymmetric {
                    reason: format!("triangle {t} has no mirror image"),
                }
            })?;
            images.push((s, own.map(|a| rho[a as usize] as u8)));
            if let Some(p) = pi {
                let turned = tri.map(|v| p[v as usize].0);
                let (s, rho) = image_triangle(mesh, &by_vertices, turned).ok_or_else(|| {
                    FemError::NotPiSymmetric {
                        reason: format!("triangle {t} has no rotated image"),
                    }
                })?;
                images.push((s, own.map(|a| rho[a as usize] as u8)));
            }
            for (s, want) in images {
                match labels[s] {
                    None => {
                        labels[s] = Some(want);
                        stack.push(s);
                    }
                    Some(have) if have == want => {}
                    Some(_) => {
                        return Err(FemError::NotPiSymmetric {
                            reason: format!(
                                "triangle {s} needs two face labellings (a triangle that is its own mirror image?)"
                            ),
                        })
                    }
                }
            }
        }
    }
    Ok(labels
        .into_iter()
        .map(|l| l.expect("every orbit is labelled"))
        .collect())
}

impl Mirror {
    /// `T` on the DOFs of `dofs` (whose face labels must come from
    /// [`mirror_face_labels`] for order 2) over `mesh`, with `mirror_nodes` the image of
    /// every node under `v -> -v` about the section centre.
    pub fn try_new(
        mesh: &Mesh,
        dofs: &DofMap,
        mirror_nodes: &[twistmode_mesh::NodeId],
    ) -> Result<Mirror, FemError> {
        let by_vertices = vertex_index(mesh);
        let n = dofs.full_len();
        const UNSET: u32 = u32::MAX;
        let mut image = vec![UNSET; n];
        let mut sign = vec![0.0; n];
        let bad = |reason: String| FemError::NotPiSymmetric { reason };
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let verts = tri.vertices().map(|v| v.0);
            let mirrored = verts.map(|v| mirror_nodes[v as usize].0);
            let (s, rho) = image_triangle(mesh, &by_vertices, mirrored)
                .ok_or_else(|| bad(format!("triangle {t} has no mirror image")))?;
            let (a, b) = (dofs.triangle_dofs(mesh, t), dofs.triangle_dofs(mesh, s));
            if b.faces != a.faces.map(|x| rho[x as usize] as u8) {
                return Err(bad(format!(
                    "the face labels of triangle {s} are not the mirror images of triangle {t}'s"
                )));
            }
            // Local function j of t -> (local function of s, sign of the pull-back).
            let nt = a.transverse;
            let mut pairs: Vec<(usize, usize, f64)> = Vec::with_capacity(a.len);
            for k in 0..3 {
                let (p, q) = (rho[k], rho[(k + 1) % 3]);
                // The edge of s joining p and q, and whether it runs p -> q.
                let (edge, forward) = if (p + 1) % 3 == q {
                    (p, true)
                } else {
                    (q, false)
                };
                let e = if forward { 1.0 } else { -1.0 };
                pairs.push((k, edge, e));
                if nt == 8 {
                    pairs.push((3 + k, 3 + edge, 1.0));
                    pairs.push((nt + 3 + k, nt + 3 + edge, -1.0));
                }
                pairs.push((nt + k, nt + p, -1.0));
            }
            if nt == 8 {
                pairs.push((6, 6, 1.0));
                pairs.push((7, 7, 1.0));
            }
            for (j, js, e) in pairs {
                let (g, h) = (a.index[j], b.index[js]);
                let sg = a.sign[j] * b.sign[js] * e;
                if image[g] == UNSET {
                    image[g] = h as u32;
                    sign[g] = sg;
                } else if image[g] as usize != h || sign[g] != sg {
                    return Err(bad(format!("degree of freedom {g} has two mirror images")));
                }
            }
        }
        for g in 0..n {
            let h = image[g];
            if h == UNSET || image[h as usize] as usize != g || sign[h as usize] != sign[g] {
                return Err(bad(format!(
                    "the mirror is not an involution at degree of freedom {g}"
                )));
            }
        }
        Ok(Mirror { image, sign })
    }

    /// Image and sign of full DOF `g`: `T phi_g = sign phi_image`.
    pub fn image(&self, g: usize) -> (usize, f64) {
        (self.image[g] as usize, self.sign[g])
    }

    /// The basis of `base` (the constraints, or a sector of the pi rotation) turned into
    /// eigenvectors of `T`: for each unknown `b_i` with `T b_i = c b_j`, either `j = i`
    /// and `b_i` is kept (eigenvalue `c`), or the pair becomes `(b_i +- c b_j) / sqrt 2`
    /// (eigenvalues `+-1`). Returns the new reduction and the eigenvalue of each unknown.
    /// In this basis `T` is the diagonal `D` of those signs, so `K^T = T K T` becomes
    /// `(R^T K R)^T = D (R^T K R) D`: the pencil `(R^T K R D, R^T M R D)` is
    /// complex-symmetric, with nonzero diagonals.
    pub fn adapted(&self, base: &Reduction) -> Result<(Reduction, Vec<f64>), FemError> {
        let columns = base.columns();
        let bad = |reason: String| FemError::NotPiSymmetric { reason };
        // T b_i = c b_j from the first DOF of each column.
        let mut image = Vec::with_capacity(base.len());
        for (i, col) in columns.iter().enumerate() {
            let &(g, wg) = col
                .first()
                .ok_or_else(|| bad(format!("reduced unknown {i} is empty")))?;
            let (h, s) = self.image(g);
            let &[(j, wh)] = base.targets(h) else {
                return Err(bad(format!(
                    "the mirror image of degree of freedom {g} is not in exactly one unknown"
                )));
            };
            image.push((j as usize, s * wg / wh));
        }
        let half = std::f64::consts::FRAC_1_SQRT_2;
        let mut lists: Vec<Vec<(u32, f64)>> = vec![Vec::new(); base.full_len()];
        let mut signs = Vec::with_capacity(base.len());
        for (i, &(j, c)) in image.iter().enumerate() {
            if image[j].0 != i || (image[j].1 - c).abs() > 1e-12 {
                return Err(bad(format!(
                    "the mirror is not an involution on unknown {i}"
                )));
            }
            if j == i {
                let u = signs.len() as u32;
                signs.push(c);
                for &(f, w) in &columns[i] {
                    lists[f].push((u, w));
                }
            } else if i < j {
                let (plus, minus) = (signs.len() as u32, signs.len() as u32 + 1);
                signs.extend([1.0, -1.0]);
                for &(f, w) in &columns[i] {
                    lists[f].push((plus, w * half));
                    lists[f].push((minus, w * half));
                }
                for &(f, w) in &columns[j] {
                    lists[f].push((plus, c * w * half));
                    lists[f].push((minus, -c * w * half));
                }
            }
        }
        let len = signs.len();
        Ok((Reduction::from_lists(lists, len), signs))
    }
}
