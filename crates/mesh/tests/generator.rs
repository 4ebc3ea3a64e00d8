//! Invariants of the built-in generator: areas against exact geometry,
//! region placement, tags, quadratic nodes on the true curves, pi symmetry,
//! size control, clean errors, and random valid inputs.
use std::collections::HashMap;
use std::f64::consts::PI;

use proptest::prelude::*;
use twistmode_mesh::{
    generate, BodySpec, DomainKind, GeneratorSpec, GeometryOrder, Mesh, MeshError, NodeId,
    PmlGeometry, RegionKind, SectionShape, Surroundings,
};

fn body(shape: SectionShape, centre: [f64; 2], h: f64) -> BodySpec {
    BodySpec {
        shape,
        centre,
        material: "glass_q".into(),
        max_edge: h,
    }
}

fn medium(padding: f64, pml: f64, h: f64) -> Surroundings {
    Surroundings::Medium {
        padding,
        pml_thickness: pml,
        max_edge: h,
    }
}

fn region_area(mesh: &Mesh, name: &str) -> f64 {
    let r = mesh.regions().iter().position(|r| r.name == name).unwrap();
    (0..mesh.triangles().len())
        .filter(|&t| mesh.triangles()[t].region.idx() == r)
        .map(|t| mesh.triangle_area(t))
        .sum()
}

/// Boundary or interface edges with both ends on the circle |x - c| = radius,
/// as (a, b, mid node) coordinates.
fn circle_edges(mesh: &Mesh, c: [f64; 2], radius: f64) -> Vec<([f64; 2], [f64; 2], [f64; 2])> {
    let on = |p: [f64; 2]| ((p[0] - c[0]).hypot(p[1] - c[1]) - radius).abs() < 1e-12 * radius;
    let mut seen = HashMap::new();
    for t in mesh.triangles() {
        for k in 0..3 {
            let (a, b) = (t.nodes[k], t.nodes[(k + 1) % 3]);
            let (pa, pb) = (mesh.points()[a.idx()], mesh.points()[b.idx()]);
            if on(pa) && on(pb) {
                let m = if mesh.order() == GeometryOrder::Quadratic {
                    mesh.points()[t.nodes[3 + k].idx()]
                } else {
                    [0.5 * (pa[0] + pb[0]), 0.5 * (pa[1] + pb[1])]
                };
                seen.insert((a.min(b), a.max(b)), (pa, pb, m));
            }
        }
    }
    seen.into_values().collect()
}

/// Area enclosed between the centre and the circle edges: sector triangles
/// (exact), plus for quadratic edges the parabolic segment 2/3 * chord *
/// sagitta (Archimedes, Quadrature of the Parabola; exact for a quadratic
/// edge whose mid node sits on the chord's perpendicular bisector).
fn polygon_area_from_edges(
    edges: &[([f64; 2], [f64; 2], [f64; 2])],
    c: [f64; 2],
    quad: bool,
) -> f64 {
    edges
        .iter()
        .map(|(a, b, m)| {
            let (ua, ub) = ([a[0] - c[0], a[1] - c[1]], [b[0] - c[0], b[1] - c[1]]);
            let tri = 0.5 * (ua[0] * ub[1] - ua[1] * ub[0]).abs();
            if !quad {
                return tri;
            }
            let chord = (b[0] - a[0]).hypot(b[1] - a[1]);
            let mid = [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])];
            let sagitta = (m[0] - mid[0]).hypot(m[1] - mid[1]);
            tri + 2.0 / 3.0 * chord * sagitta
        })
        .sum()
}

fn shoelace(v: &[[f64; 2]]) -> f64 {
    let n = v.len();
    0.5 * (0..n)
        .map(|i| v[i][0] * v[(i + 1) % n][1] - v[(i + 1) % n][0] * v[i][1])
        .sum::<f64>()
        .abs()
}

fn disc_spec(order: GeometryOrder) -> GeneratorSpec {
    let mut s = GeneratorSpec::new(
        DomainKind::Disc,
        body(
            SectionShape::Ellipse { a: 1e-6, b: 1e-6 },
            [0.3e-6, -0.1e-6],
            0.15e-6,
        ),
        medium(0.5e-6, 0.3e-6, 0.3e-6),
    );
    s.order = order;
    s
}

#[test]
fn polygon_in_box_areas_are_exact() {
    // An L-shaped (non-convex) polygon.
    let l_shape = vec![
        [0.0, 0.0],
        [2.0e-6, 0.0],
        [2.0e-6, 0.6e-6],
        [0.7e-6, 0.6e-6],
        [0.7e-6, 1.5e-6],
        [0.0, 1.5e-6],
    ];
    let spec = GeneratorSpec::new(
        DomainKind::Box,
        body(
            SectionShape::Polygon {
                vertices: l_shape.clone(),
            },
            [1.0e-6, 2.0e-6],
            0.15e-6,
        ),
        medium(0.4e-6, 0.25e-6, 0.3e-6),
    );
    let mesh = generate(&spec).unwrap();
    // Source: exact geometry (shoelace formula; box = bounding box + padding + PML).
    let body_exact = shoelace(&l_shape);
    assert!((region_area(&mesh, "body") - body_exact).abs() < 1e-12 * body_exact);
    let inner = [
        1.0e-6 - 0.4e-6,
        3.0e-6 + 0.4e-6,
        2.0e-6 - 0.4e-6,
        3.5e-6 + 0.4e-6,
    ];
    let outer_w = inner[1] - inner[0] + 0.5e-6;
    let outer_h = inner[3] - inner[2] + 0.5e-6;
    let inner_area = (inner[1] - inner[0]) * (inner[3] - inner[2]);
    assert!((mesh.area() - outer_w * outer_h).abs() < 1e-12 * mesh.area());
    assert!(
        (region_area(&mesh, "surroundings") - (inner_area - body_exact)).abs() < 1e-12 * inner_area
    );
    match mesh.domain().unwrap().pml {
        PmlGeometry::Cartesian { inner: i, outer: o } => {
            for k in 0..4 {
                assert!((i[k] - inner[k]).abs() < 1e-18);
            }
            assert!((o[1] - o[0] - outer_w).abs() < 1e-18);
        }
        other => panic!("expected a Cartesian PML, got {other:?}"),
    }
    // Centroids of body triangles lie inside the L (no triangle crosses the interface).
    let inside_l = |p: [f64; 2]| {
        let (x, y) = (p[0] - 1.0e-6, p[1] - 2.0e-6);
        (0.0..=2.0e-6).contains(&x) && (0.0..=0.6e-6).contains(&y)
            || (0.0..=0.7e-6).contains(&x) && (0.0..=1.5e-6).contains(&y)
    };
    for (t, tri) in mesh.triangles().iter().enumerate() {
        let p = mesh.triangle_points(t);
        let c = [
            (p[0][0] + p[1][0] + p[2][0]) / 3.0,
            (p[0][1] + p[1][1] + p[2][1]) / 3.0,
        ];
        let is_body = matches!(
            mesh.regions()[tri.region.idx()].kind,
            RegionKind::Body { .. }
        );
        assert_eq!(
            is_body,
            inside_l(c),
            "triangle {t} on the wrong side of the interface"
        );
    }
}

#[test]
fn disc_areas_match_exact_polygon_and_parabola_formulas() {
    let c = [0.3e-6, -0.1e-6];
    let r = 1e-6;
    let exact = PI * r * r; // Source: exact geometry.
    let mut errors = Vec::new();
    for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
        let mesh = generate(&disc_spec(order)).unwrap();
        let quad = order == GeometryOrder::Quadratic;
        let edges = circle_edges(&mesh, c, r);
        assert!(
            edges.len() >= 40,
            "{} edges on the body circle",
            edges.len()
        );
        let expected = polygon_area_from_edges(&edges, c, quad);
        let got = region_area(&mesh, "body");
        assert!(
            (got - expected).abs() < 1e-13 * exact,
            "{order:?}: {got:e} vs {expected:e}"
        );
        // With N equal segments the straight area is N/2 r^2 sin(2 pi / N) (exact).
        if !quad {
            let n = edges.len() as f64;
            let inscribed = 0.5 * n * r * r * (2.0 * PI / n).sin();
            assert!((got - inscribed).abs() < 1e-12 * exact);
        }
        // Whole domain: disc of radius body + padding + PML about the body centre.
        let r_out = r + 0.5e-6 + 0.3e-6;
        let dom_exact = PI * r_out * r_out;
        errors.push((
            (got - exact).abs() / exact,
            (mesh.area() - dom_exact).abs() / dom_exact,
        ));
        match mesh.domain().unwrap().pml {
            PmlGeometry::Radial {
                centre,
                inner,
                outer,
            } => {
                assert_eq!(centre, c);
                assert!((inner - 1.5e-6).abs() < 1e-15 && (outer - r_out).abs() < 1e-15);
            }
            other => panic!("expected a radial PML, got {other:?}"),
        }
    }
    let (lin, quad) = (errors[0], errors[1]);
    // Straight edges: relative error ~ (2 pi^2 / 3) / N^2 (a few 1e-3 here);
    // quadratic edges: several orders of magnitude smaller.
    assert!(lin.0 > 1e-4 && lin.0 < 1e-2, "linear body error {}", lin.0);
    assert!(
        quad.0 < lin.0 / 100.0,
        "quadratic {} vs linear {}",
        quad.0,
        lin.0
    );
    assert!(
        quad.1 < lin.1 / 100.0,
        "domain: quadratic {} vs linear {}",
        quad.1,
        lin.1
    );
}

#[test]
fn quadratic_nodes_lie_on_the_ellipse_and_rounded_corners() {
    let (a, b) = (1.3e-6, 0.4e-6);
    let c = [0.2e-6, 0.5e-6];
    let mut spec = GeneratorSpec::new(
        DomainKind::Disc,
        body(SectionShape::Ellipse { a, b }, c, 0.1e-6),
        medium(0.4e-6, 0.2e-6, 0.25e-6),
    );
    spec.order = GeometryOrder::Quadratic;
    let mesh = generate(&spec).unwrap();
    let f = |p: [f64; 2]| ((p[0] - c[0]) / a).powi(2) + ((p[1] - c[1]) / b).powi(2) - 1.0;
    let mut curved = 0;
    for t in mesh.triangles() {
        for k in 0..3 {
            let (pa, pb) = (
                mesh.points()[t.nodes[k].idx()],
                mesh.points()[t.nodes[(k + 1) % 3].idx()],
            );
            if f(pa).abs() < 1e-12 && f(pb).abs() < 1e-12 {
                let m = mesh.points()[t.nodes[3 + k].idx()];
                assert!(f(m).abs() < 1e-12, "mid node off the ellipse by {:e}", f(m));
                curved += 1;
            }
        }
    }
    assert!(curved > 60, "{curved} curved edge uses");
    // Interior mid nodes sit at chord midpoints.
    let mut interior = 0;
    for t in mesh.triangles() {
        for k in 0..3 {
            let (pa, pb) = (
                mesh.points()[t.nodes[k].idx()],
                mesh.points()[t.nodes[(k + 1) % 3].idx()],
            );
            if f(pa).abs() > 1e-9 || f(pb).abs() > 1e-9 {
                let rho = |p: [f64; 2]| (p[0] - c[0]).hypot(p[1] - c[1]);
                if (rho(pa) - 1.9e-6).abs() < 1e-15 && (rho(pb) - 1.9e-6).abs() < 1e-15 {
                    continue; // the PML circle is curved too
                }
                if (rho(pa) - 1.7e-6).abs() < 1e-15 && (rho(pb) - 1.7e-6).abs() < 1e-15 {
                    continue;
                }
                let m = mesh.points()[t.nodes[3 + k].idx()];
                assert!((m[0] - 0.5 * (pa[0] + pb[0])).abs() < 1e-20);
                assert!((m[1] - 0.5 * (pa[1] + pb[1])).abs() < 1e-20);
                interior += 1;
            }
        }
    }
    assert!(interior > 100);

    // Rounded rectangle: corner mid nodes on the corner circles; area
    // w t - (4 - pi) r^2 (exact geometry) approached much better than linear.
    let (w, th, r) = (1.0e-6, 0.4e-6, 0.12e-6);
    let exact = w * th - (4.0 - PI) * r * r;
    let mut err = Vec::new();
    for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
        let mut s = GeneratorSpec::new(
            DomainKind::Box,
            body(
                SectionShape::Rectangle {
                    width: w,
                    thickness: th,
                    corner_radius: r,
                },
                [0.0, 0.0],
                0.08e-6,
            ),
            medium(0.3e-6, 0.0, 0.15e-6),
        );
        s.order = order;
        let mesh = generate(&s).unwrap();
        for (cx, cy) in [(1.0, 1.0), (-1.0, 1.0), (-1.0, -1.0), (1.0, -1.0)] {
            let cc = [cx * (0.5 * w - r), cy * (0.5 * th - r)];
            let edges = circle_edges(&mesh, cc, r);
            assert!(edges.len() >= 3);
            if order == GeometryOrder::Quadratic {
                for (_, _, m) in &edges {
                    assert!(((m[0] - cc[0]).hypot(m[1] - cc[1]) - r).abs() < 1e-12 * r);
                }
            }
        }
        assert_eq!(mesh.domain().unwrap().pml, PmlGeometry::None);
        err.push((region_area(&mesh, "body") - exact).abs() / exact);
    }
    assert!(err[1] < err[0] / 50.0, "{err:?}");
}

#[test]
fn half_plane_sphere_section_and_tags() {
    let r = 1e-6;
    for upper in [false, true] {
        let mut spec = GeneratorSpec::new(
            DomainKind::HalfPlane,
            body(SectionShape::Ellipse { a: r, b: r }, [0.0, 0.0], 0.12e-6),
            medium(0.5e-6, 0.3e-6, 0.25e-6),
        );
        spec.order = GeometryOrder::Quadratic;
        spec.upper_half_only = upper;
        let mesh = generate(&spec).unwrap();
        let fraction = if upper { 0.25 } else { 0.5 };
        // Source: exact geometry (half / quarter disc).
        let body_exact = fraction * PI * r * r;
        assert!((region_area(&mesh, "body") - body_exact).abs() < 1e-5 * body_exact);
        let r_out = r + 0.8e-6;
        let dom_exact = fraction * PI * r_out * r_out;
        assert!((mesh.area() - dom_exact).abs() < 1e-5 * dom_exact);
        match mesh.domain().unwrap().pml {
            PmlGeometry::Radial {
                centre,
                inner,
                outer,
            } => {
                assert_eq!(centre, [0.0, 0.0]);
                assert!((inner - (r + 0.5e-6)).abs() < 1e-15 && (outer - r_out).abs() < 1e-15);
            }
            other => panic!("expected a radial PML, got {other:?}"),
        }
        let axis = mesh.boundary_tag("axis").unwrap();
        let outer = mesh.boundary_tag("outer").unwrap();
        let mid = mesh.boundary_tag("midplane");
        assert_eq!(mid.is_some(), upper);
        let mut axis_len = 0.0;
        for be in mesh.boundary() {
            let [a, b] = mesh.edges()[be.edge.idx()];
            let (pa, pb) = (mesh.points()[a.idx()], mesh.points()[b.idx()]);
            if be.tag == axis {
                assert!(pa[0] == 0.0 && pb[0] == 0.0);
                axis_len += (pa[1] - pb[1]).abs();
            } else if be.tag == outer {
                assert!((pa[0].hypot(pa[1]) - r_out).abs() < 1e-12 * r_out);
            } else {
                assert_eq!(Some(be.tag), mid);
                assert!(pa[1] == 0.0 && pb[1] == 0.0);
            }
        }
        let axis_exact = if upper { r_out } else { 2.0 * r_out };
        assert!((axis_len - axis_exact).abs() < 1e-12 * r_out);
        assert!(mesh
            .points()
            .iter()
            .all(|p| p[0] >= 0.0 && (!upper || p[1] >= 0.0)));
    }
}

#[test]
fn metal_cavity_sections_without_surroundings() {
    // Cylindrical cavity: [0, a] x [0, d] in (r, z).
    let (a, d) = (2.0e-3, 3.0e-3);
    let spec = GeneratorSpec::new(
        DomainKind::HalfPlane,
        body(
            SectionShape::Rectangle {
                width: a,
                thickness: d,
                corner_radius: 0.0,
            },
            [0.5 * a, 0.5 * d],
            0.4e-3,
        ),
        Surroundings::None,
    );
    let mesh = generate(&spec).unwrap();
    assert!((mesh.area() - a * d).abs() < 1e-12 * a * d);
    assert_eq!(mesh.regions().len(), 1);
    assert_eq!(mesh.domain().unwrap().pml, PmlGeometry::None);
    let axis = mesh.boundary_tag("axis").unwrap();
    let axis_len: f64 = mesh
        .boundary()
        .iter()
        .filter(|b| b.tag == axis)
        .map(|b| {
            let [p, q] = mesh.edges()[b.edge.idx()];
            (mesh.points()[p.idx()][1] - mesh.points()[q.idx()][1]).abs()
        })
        .sum();
    assert!((axis_len - d).abs() < 1e-15);
    // Coaxial cavity: off-axis rectangle, no axis boundary.
    let spec = GeneratorSpec::new(
        DomainKind::HalfPlane,
        body(
            SectionShape::Rectangle {
                width: a,
                thickness: d,
                corner_radius: 0.0,
            },
            [0.5 * a + 1.0e-3, 0.0],
            0.4e-3,
        ),
        Surroundings::None,
    );
    let mesh = generate(&spec).unwrap();
    assert!(mesh.boundary_tag("axis").is_none());
    assert!((mesh.area() - a * d).abs() < 1e-12 * a * d);
    // A disc centred on the axis with no surroundings: a metal sphere's half disc.
    let spec = GeneratorSpec::new(
        DomainKind::HalfPlane,
        body(
            SectionShape::Ellipse { a: 1e-3, b: 1e-3 },
            [0.0, 0.0],
            0.2e-3,
        ),
        Surroundings::None,
    );
    let mesh = generate(&spec).unwrap();
    assert!(mesh.boundary_tag("axis").is_some() && mesh.boundary_tag("outer").is_some());
}

/// Independent check of a pi-symmetric mesh: rotated nodes are nodes, rotated
/// triangles are triangles of the same region.
/// A hexagon of circumradius 0.6 um with two vertices on the horizontal axis.
fn hexagon() -> Vec<[f64; 2]> {
    (0..6)
        .map(|k| {
            let a = PI / 3.0 * k as f64;
            [0.6e-6 * a.cos(), 0.6e-6 * a.sin()]
        })
        .collect()
}

/// A 1.2 x 0.3 um ribbon with 0.05 um corner radius.
fn rounded_ribbon() -> SectionShape {
    SectionShape::Rectangle {
        width: 1.2e-6,
        thickness: 0.3e-6,
        corner_radius: 0.05e-6,
    }
}

/// An ellipse with semi-axes 0.9 and 0.5 um.
fn ellipse() -> SectionShape {
    SectionShape::Ellipse {
        a: 0.9e-6,
        b: 0.5e-6,
    }
}

/// A pi-symmetric (and with `mirror`, mirror-symmetric) spec of `shape` in a medium with
/// a PML, 0.1 um elements in the body.
fn symmetric_spec(
    domain: DomainKind,
    shape: &SectionShape,
    centre: [f64; 2],
    order: GeometryOrder,
    mirror: bool,
) -> GeneratorSpec {
    let mut spec = GeneratorSpec::new(
        domain,
        body(shape.clone(), centre, 0.1e-6),
        medium(0.5e-6, 0.3e-6, 0.25e-6),
    );
    spec.pi_symmetric = true;
    spec.mirror_symmetric = mirror;
    spec.order = order;
    spec
}

fn assert_pi_symmetric(mesh: &Mesh, centre: [f64; 2]) {
    let partners = mesh.pi_partner_nodes().expect("partner map");
    let scale = mesh
        .points()
        .iter()
        .map(|p| p[0].abs().max(p[1].abs()))
        .fold(0.0, f64::max);
    for (i, p) in mesh.points().iter().enumerate() {
        let q = mesh.points()[partners[i].idx()];
        let err = (p[0] + q[0] - 2.0 * centre[0]).hypot(p[1] + q[1] - 2.0 * centre[1]);
        assert!(err <= 1e-14 * scale, "node {i}: {err:e}");
        assert_eq!(partners[partners[i].idx()], NodeId(i as u32));
    }
    let mut by_vertices = HashMap::new();
    for t in mesh.triangles() {
        let mut v = t.vertices();
        v.sort();
        by_vertices.insert(v, t.region);
    }
    let half = mesh.triangles().len() / 2;
    for (j, t) in mesh.triangles().iter().enumerate() {
        let mut v = t.vertices().map(|n| partners[n.idx()]);
        v.sort();
        assert_eq!(by_vertices.get(&v), Some(&t.region), "triangle {j}");
        if j < half {
            let img = mesh.triangles()[j + half];
            let mut w = img.vertices();
            w.sort();
            assert_eq!(v, w, "triangle {} is the image of {j}", j + half);
        }
    }
    assert_eq!(
        mesh.pi_centre()
            .map(|c| ((c[0] - centre[0]).abs() + (c[1] - centre[1]).abs()) < 1e-14 * scale),
        Some(true)
    );
}

#[test]
fn pi_symmetric_meshes_are_symmetric() {
    let centre = [0.4e-6, -0.2e-6];
    let hexagon = hexagon();
    let shapes = [
        (DomainKind::Disc, rounded_ribbon()),
        (
            DomainKind::Box,
            SectionShape::Rectangle {
                width: 1.0e-6,
                thickness: 0.5e-6,
                corner_radius: 0.0,
            },
        ),
        (DomainKind::Disc, ellipse()),
        // Vertices on the horizontal line through the centre: the cut turns.
        (DomainKind::Box, SectionShape::Polygon { vertices: hexagon }),
    ];
    for (domain, shape) in shapes {
        for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
            let spec = symmetric_spec(domain, &shape, centre, order, false);
            let mesh = generate(&spec).unwrap_or_else(|e| panic!("{shape:?}: {e}"));
            assert_pi_symmetric(&mesh, centre);
        }
    }
    // Surroundings::None too.
    let mut spec = GeneratorSpec::new(
        DomainKind::Disc,
        body(
            SectionShape::Rectangle {
                width: 1.0e-6,
                thickness: 0.4e-6,
                corner_radius: 0.1e-6,
            },
            centre,
            0.1e-6,
        ),
        Surroundings::None,
    );
    spec.pi_symmetric = true;
    assert_pi_symmetric(&generate(&spec).unwrap(), centre);
}

/// Exact geometry: a mesh made of a quarter, its mirror image and the rotated half is
/// invariant under both mirrors through the centre, node by node.
#[test]
fn mirror_symmetric_meshes_are_symmetric_under_both_mirrors() {
    let centre = [0.4e-6, -0.2e-6];
    // An octagon with no vertex on either axis through its centre (the cut stays at 0).
    let octagon: Vec<[f64; 2]> = (0..8)
        .map(|k| {
            let a = PI / 8.0 + PI / 4.0 * k as f64;
            [0.6e-6 * a.cos(), 0.4e-6 * a.sin()]
        })
        .collect();
    // A hexagon with vertices on the horizontal axis: no quarter without a vertex on its cut.
    let hexagon = hexagon();
    let shapes = [
        (DomainKind::Disc, rounded_ribbon()),
        (DomainKind::Box, ellipse()),
        (
            DomainKind::Disc,
            SectionShape::Polygon { vertices: octagon },
        ),
    ];
    for (domain, shape) in shapes {
        for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
            let spec = symmetric_spec(domain, &shape, centre, order, true);
            let mesh = generate(&spec).unwrap_or_else(|e| panic!("{shape:?}: {e}"));
            assert_pi_symmetric(&mesh, centre);
            let mirror = mesh.mirror_partner_nodes().expect("mirror partner map");
            let scale = 1e-6;
            let mut on_line = 0;
            for (i, p) in mesh.points().iter().enumerate() {
                let q = mesh.points()[mirror[i].idx()];
                assert!((p[0] - q[0]).abs() <= 1e-14 * scale, "node {i}");
                assert!(
                    (p[1] + q[1] - 2.0 * centre[1]).abs() <= 1e-14 * scale,
                    "node {i}"
                );
                assert_eq!(mirror[mirror[i].idx()], NodeId(i as u32));
                on_line += usize::from(mirror[i].idx() == i);
            }
            // Nodes on the mirror line are their own images; there are some (the line
            // crosses the whole domain), and far fewer than all.
            assert!(
                on_line > 4 && on_line < mesh.points().len() / 4,
                "{on_line}"
            );
            // Every triangle has positive area and the areas add up as for the plain mesh.
            for t in 0..mesh.triangles().len() {
                assert!(mesh.triangle_area(t) > 0.0, "{shape:?}: triangle {t}");
            }
            let mut plain = spec.clone();
            plain.mirror_symmetric = false;
            println!(
                "{shape:?} {order:?}: mirrored {}; plain {}",
                mesh.quality(),
                generate(&plain).unwrap().quality()
            );
            assert!(mesh.quality().min_angle_deg > 10.0, "{}", mesh.quality());
        }
    }
    // A polygon with vertices on a mirror line cannot be cut into quarters.
    let mut spec = symmetric_spec(
        DomainKind::Disc,
        &SectionShape::Polygon { vertices: hexagon },
        centre,
        GeometryOrder::Linear,
        true,
    );
    expect_geometry_error(&spec, "mirror_symmetric", "on the mirror lines");
    spec.pi_symmetric = false;
    expect_geometry_error(&spec, "mirror_symmetric", "set pi_symmetric");
}

#[test]
fn sizes_follow_max_edge_and_angles_stay_reasonable() {
    let mesh = generate(&disc_spec(GeometryOrder::Linear)).unwrap();
    let q = mesh.quality();
    assert!(q.min_angle_deg > 20.0, "{q}");
    for (name, h) in [("body", 0.15e-6), ("surroundings", 0.3e-6), ("pml", 0.3e-6)] {
        let r = mesh.regions().iter().position(|x| x.name == name).unwrap();
        let mut longest: f64 = 0.0;
        for (t, tri) in mesh.triangles().iter().enumerate() {
            if tri.region.idx() != r {
                continue;
            }
            let p = mesh.triangle_points(t);
            for k in 0..3 {
                longest =
                    longest.max((p[k][0] - p[(k + 1) % 3][0]).hypot(p[k][1] - p[(k + 1) % 3][1]));
            }
        }
        assert!(
            longest < 1.35 * h,
            "{name}: longest edge {longest:e} for max_edge {h:e}"
        );
    }
    // Graded: the surroundings get fewer triangles per area than the body.
    let count = |name: &str| {
        let r = mesh.regions().iter().position(|x| x.name == name).unwrap();
        mesh.triangles()
            .iter()
            .filter(|t| t.region.idx() == r)
            .count() as f64
    };
    let density_body = count("body") / region_area(&mesh, "body");
    let density_sur = count("surroundings") / region_area(&mesh, "surroundings");
    assert!(density_body > 2.0 * density_sur);
}

fn expect_geometry_error(spec: &GeneratorSpec, field: &str, words: &str) {
    match generate(spec) {
        Err(e @ MeshError::Geometry { .. }) => {
            let msg = e.to_string();
            assert!(msg.contains(field) && msg.contains(words), "message: {msg}");
        }
        other => panic!("expected a geometry error on {field}, got {other:?}"),
    }
}

#[test]
fn bad_inputs_give_clear_errors() {
    let base = disc_spec(GeometryOrder::Linear);
    let mut s = base.clone();
    s.body.shape = SectionShape::Rectangle {
        width: -1.0,
        thickness: 1e-6,
        corner_radius: 0.0,
    };
    expect_geometry_error(&s, "body.width", "positive");
    s.body.shape = SectionShape::Rectangle {
        width: 1e-6,
        thickness: 1e-6,
        corner_radius: 0.6e-6,
    };
    expect_geometry_error(&s, "corner_radius", "half the smaller side");
    s.body.shape = SectionShape::Polygon {
        vertices: vec![[0.0, 0.0], [2e-6, 2e-6], [2e-6, 0.0], [0.0, 1e-6]],
    };
    expect_geometry_error(&s, "body.vertices", "sides 0 and 2 cross or touch");
    s.body.shape = SectionShape::Polygon {
        vertices: vec![[0.0, 0.0], [1e-6, 1e-6], [1e-6, 0.0], [0.0, 1e-6]],
    };
    expect_geometry_error(&s, "body.vertices", "zero area");
    s.body.shape = SectionShape::Polygon {
        vertices: vec![[0.0, 0.0], [1e-6, 0.0]],
    };
    expect_geometry_error(&s, "body.vertices", "at least 3");
    s.body.shape = SectionShape::Polygon {
        vertices: vec![[0.0, 0.0], [1e-6, 0.0], [0.0, 1e-6]],
    };
    s.pi_symmetric = true;
    expect_geometry_error(&s, "pi_symmetric", "not invariant");
    let mut s = base.clone();
    s.domain = DomainKind::HalfPlane;
    s.pi_symmetric = true;
    expect_geometry_error(&s, "pi_symmetric", "HalfPlane");
    let mut s = base.clone();
    s.upper_half_only = true;
    expect_geometry_error(&s, "upper_half_only", "HalfPlane");
    let mut s = base.clone();
    s.domain = DomainKind::HalfPlane;
    s.body.centre = [-3e-6, 0.0];
    expect_geometry_error(&s, "body.centre", "r < 0");
    let mut s = base.clone();
    s.min_angle_deg = 40.0;
    expect_geometry_error(&s, "min_angle_deg", "34");
    let mut s = base.clone();
    s.body.max_edge = 1e-12;
    expect_geometry_error(&s, "max_edge", "larger max_edge");
    let mut s = base.clone();
    s.surroundings = medium(0.0, 0.1e-6, 0.2e-6);
    expect_geometry_error(&s, "surroundings.padding", "positive");
    let mut s = base;
    s.body.max_edge = f64::NAN;
    expect_geometry_error(&s, "body.max_edge", "positive");
}

fn shape_strategy() -> impl Strategy<Value = SectionShape> {
    prop_oneof![
        (0.2f64..3.0, 0.2f64..3.0, 0.0f64..0.5).prop_map(|(w, t, f)| SectionShape::Rectangle {
            width: w * 1e-6,
            thickness: t * 1e-6,
            corner_radius: f * w.min(t) * 1e-6,
        }),
        (0.2f64..2.0, 0.2f64..2.0).prop_map(|(a, b)| SectionShape::Ellipse {
            a: a * 1e-6,
            b: b * 1e-6
        }),
        // Star-shaped polygons: sorted angles, random radii.
        proptest::collection::vec((0.0f64..1.0, 0.3f64..1.5), 3..9).prop_map(|v| {
            let n = v.len() as f64;
            SectionShape::Polygon {
                vertices: v
                    .iter()
                    .enumerate()
                    .map(|(i, (jit, r))| {
                        let a = 2.0 * PI * (i as f64 + 0.8 * jit) / n;
                        [r * a.cos() * 1e-6, r * a.sin() * 1e-6]
                    })
                    .collect(),
            }
        }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 150, .. ProptestConfig::default() })]
    #[test]
    fn random_valid_inputs_give_valid_meshes_or_clean_errors(
        shape in shape_strategy(),
        domain in prop_oneof![Just(DomainKind::Disc), Just(DomainKind::Box), Just(DomainKind::HalfPlane)],
        cu in -1.0f64..2.0, cv in -1.0f64..1.0,
        h_body in 0.15f64..0.6, h_out in 0.2f64..1.0,
        padding in 0.1f64..1.0, pml in 0.0f64..0.6,
        quadratic in any::<bool>(), none in any::<bool>(),
    ) {
        let surroundings = if none { Surroundings::None } else { medium(padding * 1e-6, pml * 1e-6, h_out * 1e-6) };
        let mut spec = GeneratorSpec::new(domain, body(shape, [cu * 1e-6, cv * 1e-6], h_body * 1e-6), surroundings);
        if quadratic { spec.order = GeometryOrder::Quadratic; }
        match generate(&spec) {
            Ok(mesh) => {
                prop_assert!(mesh.area() > 0.0);
                prop_assert!(mesh.triangles().len() < 200_000);
                // Every triangle is positively oriented (Mesh::new guarantees it; check again).
                for t in 0..mesh.triangles().len() {
                    prop_assert!(mesh.triangle_area(t) > 0.0);
                }
            }
            Err(MeshError::Geometry { .. }) | Err(MeshError::Triangulation(_)) => {}
            Err(e) => prop_assert!(false, "unexpected error kind: {e}"),
        }
    }
}

/// A section whose side lies on the axis only up to round-off (centre 5 mm,
/// half width 5 mm: 0.005 - 0.005 may leave 1e-18) must mesh without slivers.
/// Source: exact geometry (the rectangle [0, 10] x [-5, 5] mm has area 1e-4 m^2).
#[test]
fn section_touching_the_axis_up_to_round_off_has_no_slivers() {
    use twistmode_mesh::{
        BodySpec, DomainKind, GeneratorSpec, GeometryOrder, SectionShape, Surroundings,
    };
    for (w, c) in [(0.01, 0.005), (0.003, 0.0015), (0.007, 0.0035)] {
        let spec = GeneratorSpec {
            domain: DomainKind::HalfPlane,
            body: BodySpec {
                shape: SectionShape::Rectangle {
                    width: w,
                    thickness: 0.01,
                    corner_radius: 0.0,
                },
                centre: [c, 0.0],
                material: "fill".into(),
                max_edge: 0.0013,
            },
            surroundings: Surroundings::None,
            order: GeometryOrder::Quadratic,
            pi_symmetric: false,
            mirror_symmetric: false,
            upper_half_only: false,
            min_angle_deg: 28.0,
        };
        let mesh = twistmode_mesh::generate(&spec).unwrap();
        let q = mesh.quality();
        assert!(q.min_angle_deg > 20.0, "{q}");
        assert!((mesh.area() - w * 0.01).abs() < 1e-12 * w * 0.01);
        assert!(mesh.boundary_tag("axis").is_some());
    }
}
