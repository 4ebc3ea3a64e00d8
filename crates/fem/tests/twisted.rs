//! The twisted-ring block system on small structured meshes: the pi-rotation sectors
//! split it exactly, and the rotation commutes with it.
#![allow(clippy::needless_range_loop)]
mod support;

use twistmode_fem::{c64, HarmonicWindow, Order, Placement, PmlStretch, SectionSetup, TwistedRing};
use twistmode_mesh::{GeometryOrder, Mesh, NodeId};

/// A structured rectangle about the origin, pi-symmetric (even cell counts), with its
/// partner map attached.
fn symmetric_rectangle(order: GeometryOrder) -> Mesh {
    let mesh = support::rectangle([-0.6, 0.6, -0.3, 0.3], 4, 2, order, ["wall"; 4]);
    let points = mesh.points();
    let partners: Vec<NodeId> = points
        .iter()
        .map(|p| {
            let i = points
                .iter()
                .position(|q| (q[0] + p[0]).abs() < 1e-12 && (q[1] + p[1]).abs() < 1e-12)
                .expect("a pi-symmetric grid");
            NodeId(i as u32)
        })
        .collect();
    mesh.try_with_pi_partners(partners).expect("partners")
}

fn setup(order: Order, half_turns: f64) -> SectionSetup {
    let mut s = support::metal_setup(
        order,
        Placement::Ring {
            radius: 3.0,
            half_turns,
        },
        2.25,
    );
    s.pml = PmlStretch::None;
    s
}

fn sorted(mut v: Vec<c64>) -> Vec<c64> {
    v.retain(|x| x.norm() > 1e-8);
    v.sort_by(|a, b| a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im)));
    v
}

/// The eigenvalues nearest `sigma` (static ones set aside) by shift-invert.
fn nearest(system: &twistmode_fem::BlockSystem, sigma: f64, count: usize) -> Vec<c64> {
    let pencil =
        twistmode_eigen::Pencil::try_new(system.stiffness.clone(), system.mass.clone()).unwrap();
    let opts = twistmode_eigen::SolveOptions {
        count,
        tol: 1e-10,
        static_below: 1e-6 * sigma,
        ..Default::default()
    };
    let spectrum = twistmode_eigen::solve_near(&pencil, c64::new(sigma, 0.0), &opts).unwrap();
    spectrum.pairs.iter().map(|p| p.lambda).collect()
}

#[test]
fn the_two_sectors_hold_exactly_the_whole_spectrum() {
    // The system commutes with P combined with the half-period shift, so the whole
    // block pencil is the direct sum of the two sector pencils: the eigenvalues of the
    // whole nearest a shift are those of the two sectors nearest it (relative 1e-9).
    for (order, geometry) in [
        (Order::One, GeometryOrder::Linear),
        (Order::Two, GeometryOrder::Quadratic),
    ] {
        let mesh = symmetric_rectangle(geometry);
        for half_turns in [1.0, 2.0] {
            let ring = TwistedRing::try_new(&mesh, setup(order, half_turns)).unwrap();
            let parts = ring.assemble_parts(2).unwrap();
            let window = HarmonicWindow {
                centre: 1.0,
                tau: 0.5 * half_turns,
                half_width: 1,
            };
            let whole = ring.block_system(&parts, window, None, 0.0, false).unwrap();
            let plus = ring
                .block_system(&parts, window, Some(1.0), 0.0, false)
                .unwrap();
            let minus = ring
                .block_system(&parts, window, Some(-1.0), 0.0, false)
                .unwrap();
            assert_eq!(plus.dim() + minus.dim(), whole.dim());
            let sigma = 60.0;
            let all = sorted(nearest(&whole, sigma, 8));
            let mut union = nearest(&plus, sigma, 8);
            union.extend(nearest(&minus, sigma, 8));
            // The 8 nearest of the union.
            union.sort_by(|a, b| (a - sigma).norm().total_cmp(&(b - sigma).norm()));
            union.truncate(8);
            let union = sorted(union);
            assert_eq!(all.len(), 8);
            for (a, b) in all.iter().zip(&union) {
                assert!(
                    (a - b).norm() < 1e-9 * a.norm(),
                    "order {order:?}, {half_turns} half turns: {a} vs {b}"
                );
            }
        }
    }
}

#[test]
fn the_rotation_by_pi_commutes_with_the_block_system() {
    // (P~ x)_k = (-1)^k P x_k with P the rotation of the section: K P~ = P~ K.
    let mesh = symmetric_rectangle(GeometryOrder::Quadratic);
    let ring = TwistedRing::try_new(&mesh, setup(Order::Two, 3.0)).unwrap();
    let parts = ring.assemble_parts(4).unwrap();
    let window = HarmonicWindow {
        centre: 0.5,
        tau: 1.5,
        half_width: 2,
    };
    let system = ring.block_system(&parts, window, None, 0.0, false).unwrap();
    let rotation = ring.rotation().unwrap();
    let n = system.dim();
    let x: Vec<c64> = (0..n)
        .map(|i| c64::new((0.37 * i as f64).sin(), (1.3 * i as f64).cos()))
        .collect();
    let rotate = |x: &[c64]| -> Vec<c64> {
        let mut y = vec![c64::new(0.0, 0.0); n];
        for b in &system.blocks {
            let full = system.reductions[b.reduction].expand(&x[b.offset..b.offset + b.len]);
            let sign = if b.k.rem_euclid(2) == 0 { 1.0 } else { -1.0 };
            let turned = rotation.apply(&full);
            // Back to the reduced unknowns of the block (constraints only: weight 1).
            let r = &system.reductions[b.reduction];
            for (f, v) in turned.iter().enumerate() {
                if let [(i, _)] = r.targets(f) {
                    y[b.offset + *i as usize] = v * sign;
                }
            }
        }
        y
    };
    let apply = |a: &faer::sparse::SparseColMat<usize, c64>, x: &[c64]| -> Vec<c64> {
        let mut y = vec![c64::new(0.0, 0.0); n];
        for j in 0..n {
            for (i, v) in a.as_ref().row_idx_of_col(j).zip(a.as_ref().val_of_col(j)) {
                y[i] += v * x[j];
            }
        }
        y
    };
    for a in [&system.stiffness, &system.mass] {
        let lhs = apply(a, &rotate(&x));
        let rhs = rotate(&apply(a, &x));
        let scale: f64 = rhs.iter().map(|v| v.norm()).fold(0.0, f64::max);
        let err: f64 = lhs
            .iter()
            .zip(&rhs)
            .map(|(p, q)| (p - q).norm())
            .fold(0.0, f64::max);
        assert!(err < 1e-12 * scale, "commutator {err:e} of {scale:e}");
    }
}

/// The mirror image of every node under `v -> -v`.
fn mirror_nodes(mesh: &Mesh) -> Vec<NodeId> {
    let points = mesh.points();
    points
        .iter()
        .map(|p| {
            let i = points
                .iter()
                .position(|q| (q[0] - p[0]).abs() < 1e-12 && (q[1] + p[1]).abs() < 1e-12)
                .expect("a mirror-symmetric grid");
            NodeId(i as u32)
        })
        .collect()
}

#[test]
fn the_mirrored_pencil_is_complex_symmetric_with_the_same_eigenvalues() {
    // K^T = T K T with T the mirror (v, w) -> (-v, -w) (derived in docs/theory.md):
    // K T and M T are complex-symmetric to quadrature accuracy (the rule is not
    // symmetric under the vertex permutation a reflection makes; 3e-10 here, on
    // triangles a fifth of the ring radius), and their eigenvalues
    // are those of (K, M), in every sector.
    for (order, geometry) in [
        (Order::One, GeometryOrder::Linear),
        (Order::Two, GeometryOrder::Quadratic),
    ] {
        let mesh = symmetric_rectangle(geometry);
        for half_turns in [1.0, -2.0, 3.0] {
            let ring = TwistedRing::try_new(&mesh, setup(order, half_turns))
                .unwrap()
                .with_mirror(&mirror_nodes(&mesh))
                .unwrap();
            let parts = ring.assemble_parts(4).unwrap();
            let window = HarmonicWindow {
                centre: 0.5,
                tau: 0.5 * half_turns,
                half_width: 2,
            };
            for sector in [None, Some(1.0), Some(-1.0)] {
                let plain = ring
                    .block_system(&parts, window, sector, 0.0, false)
                    .unwrap();
                let mirrored = ring
                    .block_system(&parts, window, sector, 0.0, true)
                    .unwrap();
                assert!(
                    mirrored.asymmetry < 1e-8,
                    "order {order:?}, {half_turns} half turns, sector {sector:?}: asymmetry {:e}",
                    mirrored.asymmetry
                );
                let a = sorted(nearest(&plain, 60.0, 6));
                let b = sorted(nearest(&mirrored, 60.0, 6));
                for (x, y) in a.iter().zip(&b) {
                    assert!((x - y).norm() < 1e-9 * x.norm(), "{x} vs {y}");
                }
            }
        }
    }
}

#[test]
fn a_band_with_one_half_turn_closes_on_itself_turned_by_pi() {
    // Closure: going once round, the section frame turns by pi, so the field of a
    // physical mode satisfies E(phi + 2 pi) = P E(phi) (covariant components, P the
    // rotation of the section by pi), harmonic by harmonic and so at every phi.
    let mesh = symmetric_rectangle(GeometryOrder::Quadratic);
    for half_turns in [1.0, 3.0, -1.0] {
        let ring = TwistedRing::try_new(&mesh, setup(Order::Two, half_turns)).unwrap();
        let parts = ring.assemble_parts(4).unwrap();
        for (centre, sector) in [(2.0, 1.0), (2.5, -1.0)] {
            let window = HarmonicWindow {
                centre,
                tau: 0.5 * half_turns,
                half_width: 2,
            };
            let system = ring
                .block_system(&parts, window, Some(sector), 0.0, false)
                .unwrap();
            let pencil =
                twistmode_eigen::Pencil::try_new(system.stiffness.clone(), system.mass.clone())
                    .unwrap();
            let opts = twistmode_eigen::SolveOptions {
                count: 2,
                tol: 1e-10,
                static_below: 1e-6 * 60.0,
                ..Default::default()
            };
            let spectrum =
                twistmode_eigen::solve_near(&pencil, c64::new(60.0, 0.0), &opts).unwrap();
            let rotation = ring.rotation().unwrap();
            for pair in &spectrum.pairs {
                for phi in [0.0, 0.7] {
                    let later = system.field_at(&pair.vector, phi + 2.0 * std::f64::consts::PI);
                    let turned = rotation.apply(&system.field_at(&pair.vector, phi));
                    let scale: f64 = later.iter().map(|v| v.norm()).fold(0.0, f64::max);
                    let err: f64 = later
                        .iter()
                        .zip(&turned)
                        .map(|(a, b)| (a - b).norm())
                        .fold(0.0, f64::max);
                    assert!(
                        err < 1e-10 * scale,
                        "{half_turns} half turns, m = {centre}: {err:e}"
                    );
                }
            }
        }
    }
}
