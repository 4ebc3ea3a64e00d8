//! Twisted rings against what must hold exactly: twisting a circular section changes
//! nothing physical (a change of frame), the harmonic expansion converges geometrically
//! on a band whose field follows the twist, and refusals say why.
use twistmode::eigen::{c64, solve_near, Pencil, SolveOptions};
use twistmode::fem::{HarmonicWindow, Placement, SectionProblem, TwistedRing};
use twistmode::io::case::{Case, ModeOrder};

type Sparse = faer::sparse::SparseColMat<usize, c64>;
use twistmode::pipeline::{build_mesh, set_up, solve_case, SolveSettings};

/// A metal-walled torus of circular section (radius 2 mm, R = 5 radii), dielectric filled:
/// a closed cavity, so no PML enters the comparison.
const METAL_TORUS: &str = r#"
[units]
length = "mm"
[body]
kind = "ring"
radius = 10.0
half_turns = 1
[section]
shape = "disc"
radius = 2.0
material = "fill"
[materials.fill]
epsilon = 4.0
[surroundings]
kind = "metal"
[mesh]
order = 2
resolution = 6
[search]
m = 3
harmonics = 4
near_frequency = "24 GHz"
count = 6
"#;

fn case(text: &str, sets: &[(&str, &str)]) -> Case {
    let sets: Vec<(String, String)> = sets
        .iter()
        .map(|(k, v)| (k.to_string(), v.to_string()))
        .collect();
    Case::from_toml_str(text, &sets).unwrap()
}

/// Eigenvalues `k0` (1/m) nearest `k0_target` of a pencil, static ones set aside.
fn nearest_k0(k: Sparse, m: Sparse, k0: f64, count: usize) -> Vec<c64> {
    let opts = SolveOptions {
        count,
        tol: 1e-9,
        static_below: 1e-6 * k0 * k0,
        ..Default::default()
    };
    let spectrum = solve_near(
        &Pencil::try_new(k, m).unwrap(),
        c64::new(k0 * k0, 0.0),
        &opts,
    )
    .unwrap();
    spectrum.pairs.iter().map(|p| p.lambda.sqrt()).collect()
}

/// The untwisted torus of order `order` on the mesh of `case` (a 2D solve).
fn untwisted(case: &Case, order: f64, count: usize) -> Vec<c64> {
    let (mesh, _) = build_mesh(case).unwrap();
    let mut setup = set_up(case, &mesh).unwrap();
    let Placement::Ring { radius, .. } = setup.placement else {
        unreachable!()
    };
    setup.placement = Placement::Ring {
        radius,
        half_turns: 0.0,
    };
    let problem = SectionProblem::try_new(&mesh, setup).unwrap();
    let (k, m) = problem.assemble(order).unwrap().symmetric_form();
    nearest_k0(k, m, case.search.k0(), count)
}

/// The twisted torus, sector `s`, window half-width `k`, centre `m`.
fn twisted(case: &Case, m: f64, k: u32, s: f64, count: usize) -> Vec<c64> {
    let (mesh, _) = build_mesh(case).unwrap();
    let setup = set_up(case, &mesh).unwrap();
    let ring = TwistedRing::try_new(&mesh, setup).unwrap();
    let parts = ring.assemble_parts(2 * k).unwrap();
    let window = HarmonicWindow {
        centre: m,
        tau: ring.tau(),
        half_width: k,
    };
    let system = ring
        .block_system(&parts, window, Some(s), 0.0, false)
        .unwrap();
    nearest_k0(system.stiffness, system.mass, case.search.k0(), count)
}

fn closest(values: &[c64], x: c64) -> f64 {
    values
        .iter()
        .map(|v| (v - x).norm() / x.norm())
        .fold(f64::INFINITY, f64::min)
}

#[test]
fn twisting_a_circular_torus_changes_nothing_physical() {
    // Change of frame (the section of a circle turned about its centre is the same
    // circle): the twisted torus has the untwisted spectrum. On one mesh the two
    // discretisations differ (the twisted one turns the mesh under the field), so the
    // difference falls with K down to a floor that falls with the mesh size; both
    // stay well inside the discretisation error, estimated by the change of the
    // untwisted result between two meshes.
    let coarse = case(METAL_TORUS, &[]);
    let fine = case(METAL_TORUS, &[("mesh.resolution", "9")]);
    let exact_coarse = untwisted(&coarse, 3.0, 2);
    let exact_fine = untwisted(&fine, 3.0, 2);
    let discretisation = (exact_coarse[0] - exact_fine[0]).norm() / exact_fine[0].norm();
    println!(
        "untwisted m = 3, k0 {:.7} (coarse) {:.7} (fine): change {discretisation:.1e}",
        exact_coarse[0], exact_fine[0]
    );
    // One half turn, integer window centre: the physical sector s = +1.
    let mut previous = f64::INFINITY;
    for k in [2, 3, 4] {
        let found = twisted(&coarse, 3.0, k, 1.0, 6);
        let d = closest(&found, exact_coarse[0]);
        println!("one half turn, K = {k}: |k0 - untwisted| / |k0| = {d:.2e}");
        assert!(d < previous * 1.01 || d < 1e-3 * discretisation);
        previous = d;
    }
    assert!(
        previous < 0.5 * discretisation,
        "{previous:e} vs {discretisation:e}"
    );
    let found = twisted(&fine, 3.0, 4, 1.0, 6);
    let d_fine = closest(&found, exact_fine[0]);
    println!("finer mesh, K = 4: {d_fine:.2e}");
    assert!(
        d_fine < 0.2 * previous,
        "the floor falls with the mesh: {d_fine:e} vs {previous:e}"
    );
    // The other sector holds the untwisted modes at half-integer orders.
    let half = untwisted(&coarse, 3.5, 2);
    let other = twisted(&coarse, 3.0, 4, -1.0, 8);
    for x in &half {
        let d = closest(&other, *x);
        println!("sector -1 against untwisted m = 3.5, k0 {x:.7}: {d:.2e}");
        assert!(d < 0.5 * discretisation);
    }
    // Two half turns: the section is back to its start after half a round trip, so
    // the rotation by pi is the shift phi -> phi + pi; an untwisted mode of order n has
    // P e(phi) = (-1)^n e(phi + pi), whose harmonic m + k gains (-1)^(m + k): it lives in
    // the sector s = (-1)^(n + m), m the window centre (derived in docs/theory.md).
    let two = case(METAL_TORUS, &[("body.half_turns", "2")]);
    for order in [3.0, 4.0] {
        let s = if (order as i64 + 3) % 2 == 0 {
            1.0
        } else {
            -1.0
        };
        let flat = untwisted(&two, order, 1);
        let right = twisted(&two, 3.0, 4, s, 8);
        let wrong = twisted(&two, 3.0, 4, -s, 8);
        let (d, d_wrong) = (closest(&right, flat[0]), closest(&wrong, flat[0]));
        println!("two half turns: untwisted m = {order} in sector {s:+} to {d:.2e} (other sector {d_wrong:.2e})");
        assert!(d < 0.5 * discretisation && d_wrong > 10.0 * d);
    }
}

/// A flat band (width 3 thickness), R = 4 widths, index 3, in air with a PML.
const RIBBON: &str = r#"
[units]
length = "mm"
[body]
kind = "ring"
radius = 12.0
half_turns = 1
[section]
shape = "rectangle"
width = 3.0
thickness = 1.0
material = "tri"
[materials.tri]
epsilon = 9.0
[surroundings]
padding = 3.0
pml_thickness = 2.0
[mesh]
order = 2
resolution = 4
[search]
m = 25.5
harmonics = 1
near_frequency = "45 GHz"
count = 3
"#;

#[test]
fn a_band_that_follows_its_twist_converges_geometrically_in_the_harmonics() {
    // The fundamental quasi-TE family of a flat band turns with the band, so in the
    // rotating frame it is nearly one harmonic and the window converges geometrically
    // (the change of k0 from K-1 to K falls by a fixed factor per step).
    for (half_turns, centre) in [(1, "25.5"), (2, "25"), (3, "25.5"), (4, "25")] {
        let mut figures = Vec::new();
        for k in 1..=3u32 {
            let c = case(
                RIBBON,
                &[
                    ("body.half_turns", &half_turns.to_string()),
                    ("search.m", centre),
                    ("search.harmonics", &k.to_string()),
                ],
            );
            let outcome = solve_case(&c, &SolveSettings::default()).unwrap();
            let ModeOrder::Azimuthal(m) = c.search.order else {
                unreachable!()
            };
            let mode = outcome
                .modes
                .iter()
                .find(|mode| mode.twist.as_ref().unwrap().dominant_order == m.value())
                .expect("the family centred in the window");
            figures.push(mode.twist.as_ref().unwrap().convergence.unwrap());
        }
        let shown: Vec<String> = figures.iter().map(|f| format!("{f:.2e}")).collect();
        let shown = shown.join(", ");
        let needed = figures.iter().position(|f| *f < 1e-6).map(|i| i + 1);
        println!("{half_turns} half turns: |k0_K - k0_(K-1)| / |k0_K| for K = 1, 2, 3: {shown}; K for 1e-6: {needed:?}");
        for w in figures.windows(2) {
            assert!(w[1] < 0.2 * w[0] || w[1] < 1e-11, "{figures:?}");
        }
    }
}

#[test]
fn a_slowly_twisted_band_shifts_its_odd_families_by_half_a_range() {
    // Adiabatic (geometric-phase) estimate for a band that turns slowly compared with
    // the wave (common practice for polarisation that follows a slowly turning frame;
    // stated from memory, no published table): the families odd under the rotation by
    // pi sit at half-integer orders, at the untwisted band's frequency for that order,
    // half a free spectral range from the integer orders. The correction
    // |k0_twisted(n) - k0_untwisted(n)| / FSR must fall as the twist per wavelength
    // falls: here the radius doubles at fixed section and frequency.
    let mut corrections = Vec::new();
    for (radius, n) in [("12.0", 25.5), ("24.0", 51.5), ("48.0", 103.5)] {
        let centre = n.to_string();
        let c = case(
            RIBBON,
            &[
                ("body.radius", radius),
                ("search.m", &centre),
                ("search.harmonics", "2"),
            ],
        );
        let flat = untwisted(&c, n, 1)[0];
        let next = untwisted(&c, n + 1.0, 1)[0];
        let fsr = (next - flat).norm();
        let found = twisted(&c, n, 2, -1.0, 3);
        let near = found
            .iter()
            .min_by(|a, b| (*a - flat).norm().total_cmp(&(*b - flat).norm()))
            .unwrap();
        let correction = (near - flat).norm() / fsr;
        println!(
            "R = {radius} mm, n = {n}: k0 untwisted {:.6}, twisted {:.6}, FSR {fsr:.4} 1/m: correction {correction:.3e} FSR",
            flat.re, near.re
        );
        corrections.push(correction);
    }
    assert!(
        corrections.windows(2).all(|w| w[1] < 0.6 * w[0]),
        "{corrections:?}"
    );
}

/// `k0` of the modes of a pipeline solve, by frequency.
fn solved_k0(c: &Case) -> Vec<c64> {
    let outcome = solve_case(c, &SolveSettings::default()).unwrap();
    outcome
        .modes
        .iter()
        .map(|m| c64::new(m.k0[0], m.k0[1]))
        .collect()
}

#[test]
fn the_mirror_image_band_and_the_turned_section_have_the_same_spectrum() {
    // -N half turns is the mirror image of +N (Maxwell's equations keep their form
    // under a reflection in these isotropic media). In the code the -N system, with its
    // harmonics relabelled k -> -k, is the transpose of the +N one with the third
    // component's sign flipped (docs/theory.md sec. 10.5): the same eigenvalues, to
    // solver precision, on any mesh.
    for n in [1, 2, 3] {
        let centre = if n % 2 == 0 { "25" } else { "25.5" };
        let plus = case(
            RIBBON,
            &[
                ("body.half_turns", &n.to_string()),
                ("search.m", centre),
                ("search.harmonics", "2"),
            ],
        );
        let minus = case(
            RIBBON,
            &[
                ("body.half_turns", &(-n).to_string()),
                ("search.m", centre),
                ("search.harmonics", "2"),
            ],
        );
        let (a, b) = (solved_k0(&plus), solved_k0(&minus));
        assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(&b) {
            let d = (x - y).norm() / x.norm();
            println!("{n} and -{n} half turns: k0 {x:.9} vs {y:.9}: {d:.1e}");
            assert!(d < 1e-11, "{x} vs {y}");
        }
    }
    // A pi-symmetric section given turned by pi is the same section: an odd band built
    // on it is the same band (the hexagon's vertices listed from the opposite corner).
    let hexagon = |vertices: &str| {
        let text = RIBBON.replace(
            "shape = \"rectangle\"\nwidth = 3.0\nthickness = 1.0\n",
            &format!("shape = \"polygon\"\nvertices = {vertices}\n"),
        );
        case(&text, &[("search.harmonics", "2")])
    };
    let a = solved_k0(&hexagon(
        "[[1.5, 0.0], [0.9, 0.6], [-0.9, 0.6], [-1.5, 0.0], [-0.9, -0.6], [0.9, -0.6]]",
    ));
    let b = solved_k0(&hexagon(
        "[[-1.5, 0.0], [-0.9, -0.6], [0.9, -0.6], [1.5, 0.0], [0.9, 0.6], [-0.9, 0.6]]",
    ));
    assert!(!a.is_empty() && a.len() == b.len());
    for (x, y) in a.iter().zip(&b) {
        println!("hexagon and the hexagon turned by pi, one half turn: k0 {x:.9} vs {y:.9}");
        assert!((x - y).norm() < 1e-12 * x.norm());
    }
}

#[test]
fn the_mirror_adapted_symmetric_pencil_has_the_spectrum_of_the_plain_one() {
    // Exact algebra (docs/theory.md sec. 10.5): on a mesh invariant under v -> -v, the
    // mirror T maps the pencil to its transpose, so (K D, M D) in the eigenbasis of T is
    // complex-symmetric with the eigenvalues of (K, M). Checked here on generated meshes
    // with curved quadratic triangles and the PML, for 1, 2 and 3 half turns, in each
    // physical sector; then the pipeline solve with mesh.mirror_symmetric uses the
    // symmetric factorisation and finds the same band as the plain mesh (two different
    // meshes: agreement to the discretisation error only).
    for (n, centre) in [(1, "25.5"), (2, "25"), (3, "25.5")] {
        let c = case(
            RIBBON,
            &[
                ("body.half_turns", &n.to_string()),
                ("search.m", centre),
                ("mesh.mirror_symmetric", "true"),
            ],
        );
        let (mesh, _) = build_mesh(&c).unwrap();
        let mirror = mesh
            .mirror_partner_nodes()
            .expect("a mirror-symmetric mesh");
        let ring = TwistedRing::try_new(&mesh, set_up(&c, &mesh).unwrap())
            .unwrap()
            .with_symmetric_quadrature();
        let mirrored = TwistedRing::try_new(&mesh, set_up(&c, &mesh).unwrap())
            .unwrap()
            .with_mirror(mirror)
            .unwrap();
        let window = HarmonicWindow {
            centre: centre.parse().unwrap(),
            tau: ring.tau(),
            half_width: 1,
        };
        let plain_parts = ring.assemble_parts(2).unwrap();
        let mirrored_parts = mirrored.assemble_parts(2).unwrap();
        let sectors: &[f64] = if n % 2 == 0 { &[1.0, -1.0] } else { &[-1.0] };
        for &s in sectors {
            let plain = ring
                .block_system(&plain_parts, window, Some(s), 0.0, false)
                .unwrap();
            let symmetric = mirrored
                .block_system(&mirrored_parts, window, Some(s), 0.0, true)
                .unwrap();
            // Mirror images are integrated at mirrored points: symmetric to rounding.
            assert!(symmetric.asymmetry < 1e-13, "{}", symmetric.asymmetry);
            let a = nearest_k0(plain.stiffness, plain.mass, c.search.k0(), 4);
            let b = nearest_k0(symmetric.stiffness, symmetric.mass, c.search.k0(), 4);
            let worst = a.iter().map(|x| closest(&b, *x)).fold(0.0, f64::max);
            println!(
                "{n} half turns, sector {s}: plain and symmetric pencils differ by {worst:.1e}"
            );
            assert!(worst < 1e-9, "{a:?} {b:?}");
        }
        let outcome = solve_case(&c, &SolveSettings::default()).unwrap();
        assert_eq!(outcome.solver.factorisation, "symmetric-lblt");
        assert!(outcome.solver.twist.as_ref().unwrap().mirror_symmetric);
        let plain = solved_k0(&case(
            RIBBON,
            &[("body.half_turns", &n.to_string()), ("search.m", centre)],
        ));
        let sym: Vec<c64> = outcome
            .modes
            .iter()
            .map(|m| c64::new(m.k0[0], m.k0[1]))
            .collect();
        let worst = sym.iter().map(|x| closest(&plain, *x)).fold(0.0, f64::max);
        println!("{n} half turns: mirrored mesh against plain mesh {worst:.1e}");
        // Two meshes at 4 elements per wavelength: about 1e-3 apart (discretisation).
        assert!(worst < 2e-3, "{sym:?} {plain:?}");
    }
}
