//! Test support: small structured meshes and dense eigensolvers.
#![allow(dead_code)]

use faer::linalg::triangular_solve::solve_lower_triangular_in_place;
use faer::sparse::SparseColMat;
use faer::{Mat, Par, Side};
use twistmode_fem::{
    c64, Material, MaterialTable, Order, Placement, PmlStretch, SectionSetup, Wall,
};
use twistmode_mesh::{
    BoundaryTag, GeometryOrder, Mesh, MeshParts, NodeId, Region, RegionKind, Triangle,
};

/// Name of the single body material of the test meshes.
pub const FILL: &str = "fill";

/// Structured mesh of the rectangle `[x0, x1] x [y0, y1]`, `nx * ny` cells each
/// split into two triangles along alternating diagonals. Boundary sides are
/// tagged with `names = [bottom, right, top, left]` (equal names share a tag).
pub fn rectangle(
    corners: [f64; 4],
    nx: usize,
    ny: usize,
    order: GeometryOrder,
    names: [&str; 4],
) -> Mesh {
    let [x0, x1, y0, y1] = corners;
    let q = order == GeometryOrder::Quadratic;
    let f = if q { 2 } else { 1 };
    let (px, py) = (f * nx + 1, f * ny + 1);
    let mut points = Vec::with_capacity(px * py);
    for j in 0..py {
        for i in 0..px {
            points.push([
                x0 + (x1 - x0) * i as f64 / (px - 1) as f64,
                y0 + (y1 - y0) * j as f64 / (py - 1) as f64,
            ]);
        }
    }
    // Grid point id at refined coordinates (a, b).
    let id = |a: usize, b: usize| NodeId((b * px + a) as u32);
    let mid = |p: (usize, usize), r: (usize, usize)| id((p.0 + r.0) / 2, (p.1 + r.1) / 2);
    let mut triangles = Vec::new();
    let mut push = |v: [(usize, usize); 3]| {
        let mut nodes = [id(v[0].0, v[0].1); 6];
        for k in 0..3 {
            nodes[k] = id(v[k].0, v[k].1);
            if q {
                nodes[3 + k] = mid(v[k], v[(k + 1) % 3]);
            }
        }
        triangles.push(Triangle {
            nodes,
            region: twistmode_mesh::RegionId(0),
        });
    };
    for j in 0..ny {
        for i in 0..nx {
            let (a, b) = (f * i, f * j);
            let (c, d) = (a + f, b + f);
            if (i + j) % 2 == 0 {
                push([(a, b), (c, b), (c, d)]);
                push([(a, b), (c, d), (a, d)]);
            } else {
                push([(a, b), (c, b), (a, d)]);
                push([(c, b), (c, d), (a, d)]);
            }
        }
    }
    let mut boundary_names: Vec<String> = Vec::new();
    let mut tag_of = |name: &str| {
        if let Some(i) = boundary_names.iter().position(|n| n == name) {
            BoundaryTag(i as u16)
        } else {
            boundary_names.push(name.to_string());
            BoundaryTag((boundary_names.len() - 1) as u16)
        }
    };
    let tags: Vec<BoundaryTag> = names.iter().map(|n| tag_of(n)).collect();
    let mut boundary_segments = Vec::new();
    for i in 0..nx {
        boundary_segments.push(([id(f * i, 0), id(f * i + f, 0)], tags[0]));
        boundary_segments.push(([id(f * i, f * ny), id(f * i + f, f * ny)], tags[2]));
    }
    for j in 0..ny {
        boundary_segments.push(([id(f * nx, f * j), id(f * nx, f * j + f)], tags[1]));
        boundary_segments.push(([id(0, f * j), id(0, f * j + f)], tags[3]));
    }
    Mesh::new(MeshParts {
        points,
        order,
        triangles,
        regions: vec![Region {
            name: "body".into(),
            kind: RegionKind::Body {
                material: FILL.into(),
            },
        }],
        boundary_names,
        boundary_segments,
        domain: None,
    })
    .expect("valid structured mesh")
}

/// Structured mesh of the disc of radius `radius` about the origin: a square
/// core mapped onto the disc (elliptical grid map), so every vertex and
/// mid-side node of the boundary lies on the true circle. `n` cells per side
/// of the core. Boundary tagged `wall`.
pub fn disc(radius: f64, n: usize, order: GeometryOrder) -> Mesh {
    let square = rectangle([-1.0, 1.0, -1.0, 1.0], n, n, order, ["wall"; 4]);
    // Map square (x, y) to disc: (x sqrt(1 - y^2/2), y sqrt(1 - x^2/2)).
    let mut parts = parts_of(&square);
    for p in parts.points.iter_mut() {
        let (x, y) = (p[0], p[1]);
        *p = [
            radius * x * (1.0 - 0.5 * y * y).sqrt(),
            radius * y * (1.0 - 0.5 * x * x).sqrt(),
        ];
    }
    Mesh::new(parts).expect("valid disc mesh")
}

/// The raw parts of a mesh (to remap its points).
pub fn parts_of(mesh: &Mesh) -> MeshParts {
    let boundary_segments = mesh
        .boundary()
        .iter()
        .map(|b| (mesh.edges()[b.edge.idx()], b.tag))
        .collect();
    MeshParts {
        points: mesh.points().to_vec(),
        order: mesh.order(),
        triangles: mesh.triangles().to_vec(),
        regions: mesh.regions().to_vec(),
        boundary_names: mesh.boundary_names().to_vec(),
        boundary_segments,
        domain: mesh.domain().copied(),
    }
}

/// All eigenvalues (ascending) of the Hermitian pencil `(K, M)` with `M`
/// definite (either sign): Cholesky `M = L L^H`, then the Hermitian
/// eigenvalues of `L^-1 K L^-H` (faer dense solvers).
pub fn hermitian_pencil_eigenvalues(
    k: &SparseColMat<usize, c64>,
    m: &SparseColMat<usize, c64>,
) -> Vec<f64> {
    let mut kd: Mat<c64> = k.to_dense();
    let mut md: Mat<c64> = m.to_dense();
    if md.as_ref().get(0, 0).re < 0.0 {
        kd = -kd;
        md = -md;
    }
    let llt = md.llt(Side::Lower).expect("mass matrix is definite");
    let l = llt.L();
    let mut x = kd.clone();
    solve_lower_triangular_in_place(l, x.as_mut(), Par::Seq);
    let mut y: Mat<c64> = x.adjoint().to_owned();
    solve_lower_triangular_in_place(l, y.as_mut(), Par::Seq);
    let n = y.nrows();
    let h = Mat::<c64>::from_fn(n, n, |i, j| {
        (*y.as_ref().get(i, j) + y.as_ref().get(j, i).conj()) * 0.5
    });
    h.self_adjoint_eigenvalues(Side::Lower)
        .expect("Hermitian eigenvalues")
}

/// All eigenvalues of a general pencil `(K, M)` (faer dense QZ).
pub fn pencil_eigenvalues(k: &SparseColMat<usize, c64>, m: &SparseColMat<usize, c64>) -> Vec<c64> {
    let kd: Mat<c64> = k.to_dense();
    let md: Mat<c64> = m.to_dense();
    let ev = kd.generalized_eigen(&md).expect("generalized eigenvalues");
    let (a, b) = (ev.S_a().column_vector(), ev.S_b().column_vector());
    (0..a.nrows())
        .filter(|&i| b[i].norm() > 1e-300)
        .map(|i| a[i] / b[i])
        .collect()
}

/// Splits sorted eigenvalues into (count at zero, the physical ones above),
/// with `zero_tol` relative to the first physical value scale.
pub fn split_static(eigs: &[f64], scale: f64) -> (usize, Vec<f64>) {
    let zeros = eigs.iter().filter(|&&l| l.abs() < 1e-8 * scale).count();
    let rest = eigs
        .iter()
        .copied()
        .filter(|&l| l.abs() >= 1e-8 * scale)
        .collect();
    (zeros, rest)
}

/// Observed convergence rate of errors `e` on meshes of sizes `h`.
pub fn rate(e0: f64, e1: f64, h0: f64, h1: f64) -> f64 {
    (e0 / e1).ln() / (h0 / h1).ln()
}

/// Setup of a metal box (boundary tag `wall` a perfect electric conductor)
/// filled with relative permittivity `eps`.
pub fn metal_setup(order: Order, placement: Placement, eps: f64) -> SectionSetup {
    SectionSetup {
        order,
        placement,
        pml: PmlStretch::None,
        materials: MaterialTable::single(
            FILL,
            Material::with_index(eps.sqrt()),
            Material::vacuum(),
        ),
        walls: vec![("wall".into(), Wall::ElectricConductor)],
    }
}

/// Zeros x_mn of J_m (n = 1, 2) for m = 0, 1, 2 (Abramowitz & Stegun, Table 9.5;
/// from memory, checked with scipy.special.jn_zeros).
pub const J_ZEROS: [[f64; 2]; 3] = [
    [2.404_825_557_695_773, 5.520_078_110_286_311],
    [3.831_705_970_207_512, 7.015_586_669_815_619],
    [5.135_622_301_840_683, 8.417_244_140_399_866],
];
/// Zeros x'_mn of J_m' (n = 1, 2) for m = 0, 1, 2 (A&S Table 9.5; from memory,
/// checked with scipy.special.jnp_zeros).
pub const JP_ZEROS: [[f64; 2]; 3] = [
    [3.831_705_970_207_512, 7.015_586_669_815_619],
    [1.841_183_781_340_659, 5.331_442_773_525_033],
    [3.054_236_928_227_14, 6.706_133_194_158_459],
];

/// Eigenvector of the pencil `(K, M)` nearest `sigma` by inverse iteration
/// with a dense LU of `K - sigma M`; returns the vector and its Rayleigh quotient.
pub fn eigenvector_near(
    k: &SparseColMat<usize, c64>,
    m: &SparseColMat<usize, c64>,
    sigma: f64,
) -> (Vec<c64>, c64) {
    use faer::linalg::solvers::Solve;
    let kd: Mat<c64> = k.to_dense();
    let md: Mat<c64> = m.to_dense();
    let n = kd.nrows();
    let shifted = Mat::<c64>::from_fn(n, n, |i, j| {
        *kd.as_ref().get(i, j) - *md.as_ref().get(i, j) * sigma
    });
    let lu = shifted.partial_piv_lu();
    let mut x = Mat::<c64>::from_fn(n, 1, |i, _| c64::new(1.0 + (i % 7) as f64, 0.5));
    for _ in 0..8 {
        let y = lu.solve(&md * &x);
        let norm = y.norm_l2();
        x = Mat::from_fn(n, 1, |i, _| *y.as_ref().get(i, 0) / norm);
    }
    let kx = &kd * &x;
    let mx = &md * &x;
    let num: c64 = (0..n)
        .map(|i| x.as_ref().get(i, 0).conj() * kx.as_ref().get(i, 0))
        .sum();
    let den: c64 = (0..n)
        .map(|i| x.as_ref().get(i, 0).conj() * mx.as_ref().get(i, 0))
        .sum();
    ((0..n).map(|i| *x.as_ref().get(i, 0)).collect(), num / den)
}
