//! The point locator against a brute-force search on generated meshes
//! (straight and curved), points near curved sides, and outside points;
//! bounding boxes and the inferred radial PML.
use twistmode_mesh::locate::INSIDE_TOL;
use twistmode_mesh::map::in_reference;
use twistmode_mesh::{
    generate, BodySpec, BoundingBox, DomainKind, GeneratorSpec, GeometryOrder, Mesh, PmlGeometry,
    PointLocator, RegionKind, SectionShape, Surroundings,
};

/// SplitMix64 (Steele, Lea & Flood, OOPSLA 2014): a small deterministic generator.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
}

const CENTRE: [f64; 2] = [0.3e-6, -0.1e-6];

/// An elliptic body in a disc of surroundings and PML; curved sides on the
/// body outline, the PML start and the outer circle when quadratic.
fn disc_mesh(order: GeometryOrder) -> Mesh {
    let mut s = GeneratorSpec::new(
        DomainKind::Disc,
        BodySpec {
            shape: SectionShape::Ellipse { a: 1e-6, b: 0.6e-6 },
            centre: CENTRE,
            material: "glass".into(),
            max_edge: 0.2e-6,
        },
        Surroundings::Medium {
            padding: 0.5e-6,
            pml_thickness: 0.3e-6,
            max_edge: 0.35e-6,
        },
    );
    s.order = order;
    generate(&s).unwrap()
}

/// Brute force, independent of the locator's box and start strategy: every
/// triangle in index order whose vertex box (widened by half its size)
/// holds `p`, Newton from 15 starts spread over the reference triangle.
fn brute_force(mesh: &Mesh, p: [f64; 2], body_only: bool) -> Option<(usize, [f64; 2])> {
    let mut starts = vec![];
    for i in 0..5 {
        for j in 0..5 - i {
            starts.push([(i as f64 + 0.25) / 5.0, (j as f64 + 0.25) / 5.0]);
        }
    }
    for (t, tri) in mesh.triangles().iter().enumerate() {
        if body_only && !mesh.regions()[tri.region.idx()].kind.is_body() {
            continue;
        }
        let map = mesh.triangle_map(t);
        let b = BoundingBox::of_points(map.vertices()).unwrap();
        let s = b.size();
        if !b.expanded(0.5 * s[0].max(s[1])).contains(p) {
            continue;
        }
        for &start in &starts {
            if let Some(r) = map.invert_from(p, start) {
                if in_reference(r, INSIDE_TOL) {
                    return Some((t, r));
                }
            }
        }
    }
    None
}

fn check_against_brute_force(mesh: &Mesh, samples: usize, seed: u64) {
    let all = PointLocator::new(mesh);
    let bodies = PointLocator::bodies(mesh);
    let b = mesh
        .bounding_box()
        .expanded(0.05 * mesh.bounding_box().size()[0]);
    let mut rng = Rng(seed);
    let (mut inside, mut outside, mut in_body) = (0, 0, 0);
    for _ in 0..samples {
        let p = [
            b.min[0] + rng.next() * (b.max[0] - b.min[0]),
            b.min[1] + rng.next() * (b.max[1] - b.min[1]),
        ];
        for (locator, body_only) in [(&all, false), (&bodies, true)] {
            let found = locator.locate(p);
            let expected = brute_force(mesh, p, body_only);
            assert_eq!(
                found.map(|l| l.triangle),
                expected.map(|e| e.0),
                "point {p:?}, bodies only: {body_only}"
            );
            assert_eq!(found, locator.locate_by_scan(p));
            if let (Some(l), Some((_, r))) = (found, expected) {
                assert!((l.xi - r[0]).abs() < 1e-9 && (l.eta - r[1]).abs() < 1e-9);
                // The coordinates map back onto the point.
                let x = mesh.triangle_map(l.triangle).point(l.xi, l.eta);
                assert!((x[0] - p[0]).hypot(x[1] - p[1]) < 1e-12 * b.size()[0]);
            }
            match (found, body_only) {
                (Some(_), false) => inside += 1,
                (None, false) => outside += 1,
                (Some(_), true) => in_body += 1,
                (None, true) => {}
            }
        }
    }
    // The sample covered the inside, the outside and the body.
    assert!(inside > samples / 2 && outside > samples / 20 && in_body > samples / 20);
}

#[test]
fn locator_agrees_with_brute_force_on_straight_and_curved_meshes() {
    for (order, seed) in [(GeometryOrder::Linear, 1), (GeometryOrder::Quadratic, 2)] {
        check_against_brute_force(&disc_mesh(order), 2500, seed);
    }
}

#[test]
fn mapped_points_come_back_to_their_triangle() {
    let mesh = disc_mesh(GeometryOrder::Quadratic);
    let locator = PointLocator::new(&mesh);
    let mut rng = Rng(7);
    let n = mesh.triangles().len();
    for _ in 0..4000 {
        let t = ((rng.next() * n as f64) as usize).min(n - 1);
        let (a, b) = (rng.next(), rng.next());
        let r = if a + b > 1.0 {
            [1.0 - a, 1.0 - b]
        } else {
            [a, b]
        };
        let p = mesh.triangle_map(t).point(r[0], r[1]);
        let l = locator.locate(p).expect("a mesh point is found");
        let near_side = r[0].min(r[1]).min(1.0 - r[0] - r[1]) < 1e-8;
        if l.triangle != t {
            // Only a point on a shared side may go to another (lower) triangle.
            assert!(near_side && l.triangle < t, "{t} -> {l:?} at {r:?}");
        } else {
            assert!((l.xi - r[0]).abs() < 1e-11 && (l.eta - r[1]).abs() < 1e-11);
        }
    }
}

/// Sides with their outward unit normals and owning triangle, for every
/// triangle side where `pick(own region, other region or None)` holds.
fn sides(
    mesh: &Mesh,
    pick: impl Fn(&RegionKind, Option<&RegionKind>) -> bool,
) -> Vec<(usize, usize)> {
    let mut owners = vec![vec![]; mesh.edges().len()];
    for (t, te) in mesh.triangle_edges().iter().enumerate() {
        for (k, (e, _)) in te.iter().enumerate() {
            owners[e.idx()].push((t, k));
        }
    }
    let kind = |t: usize| &mesh.regions()[mesh.triangles()[t].region.idx()].kind;
    let mut out = vec![];
    for o in &owners {
        for (i, &(t, k)) in o.iter().enumerate() {
            let other = o.get(1 - i).map(|&(u, _)| kind(u));
            if pick(kind(t), other) {
                out.push((t, k));
            }
        }
    }
    out
}

/// Point at `s` along side `k` of triangle `t`, moved by `offset` (metres)
/// along the side's outward normal.
fn off_side(mesh: &Mesh, t: usize, k: usize, s: f64, offset: f64) -> [f64; 2] {
    let m = mesh.triangle_map(t);
    let (a, b) = (m.side_point(k, s - 1e-6), m.side_point(k, s + 1e-6));
    let (tu, tv) = (b[0] - a[0], b[1] - a[1]);
    let len = tu.hypot(tv);
    // Counter-clockwise triangles: the outward normal is the tangent turned clockwise.
    let n = [tv / len, -tu / len];
    let p = m.side_point(k, s);
    [p[0] + offset * n[0], p[1] + offset * n[1]]
}

#[test]
fn points_beside_curved_sides_fall_on_the_right_side() {
    let mesh = disc_mesh(GeometryOrder::Quadratic);
    let all = PointLocator::new(&mesh);
    let bodies = PointLocator::bodies(&mesh);
    let h = 1e-6 * 1e-6; // 1e-6 of the body size
    let outer = sides(&mesh, |_, other| other.is_none());
    let interface = sides(&mesh, |own, other| {
        own.is_body() && other.is_some_and(|o| !o.is_body())
    });
    assert!(outer.len() > 10 && interface.len() > 10);
    let mut beyond_chord = 0;
    let mut rng = Rng(11);
    for &(t, k) in &outer {
        let s = 0.05 + 0.9 * rng.next();
        let inward = off_side(&mesh, t, k, s, -h);
        assert_eq!(all.locate(inward).map(|l| l.triangle), Some(t));
        assert_eq!(all.locate(off_side(&mesh, t, k, s, h)), None);
    }
    for &(t, k) in &interface {
        let s = 0.05 + 0.9 * rng.next();
        let inside = off_side(&mesh, t, k, s, -h);
        let l = all.locate(inside).unwrap();
        assert_eq!(l.triangle, t);
        assert_eq!(bodies.locate(inside).map(|l| l.triangle), Some(t));
        let beyond = off_side(&mesh, t, k, s, h);
        let other = all.locate(beyond).unwrap().triangle;
        assert!(!mesh.regions()[mesh.triangles()[other].region.idx()]
            .kind
            .is_body());
        assert_eq!(bodies.locate(beyond), None);
        // The straight triangle through the vertices would misplace the
        // point when the side bulges outward.
        let straight = mesh.triangle_map(t).straight_inverse(inside);
        if !in_reference(straight, 0.0) {
            beyond_chord += 1;
        }
    }
    assert!(
        beyond_chord > interface.len() / 4,
        "{beyond_chord} of {}",
        interface.len()
    );
}

#[test]
fn vertices_and_shared_sides_go_to_the_lowest_triangle() {
    let mesh = disc_mesh(GeometryOrder::Linear);
    let locator = PointLocator::new(&mesh);
    for (v, p) in mesh.points().iter().enumerate().step_by(7) {
        let lowest = mesh
            .triangles()
            .iter()
            .position(|t| t.vertices().iter().any(|n| n.idx() == v))
            .unwrap();
        let l = locator.locate(*p).unwrap();
        assert_eq!(l.triangle, lowest);
        let back = mesh.triangle_map(l.triangle).point(l.xi, l.eta);
        assert!((back[0] - p[0]).hypot(back[1] - p[1]) < 1e-20);
    }
    for (e, [a, b]) in mesh.edges().iter().enumerate().step_by(5) {
        let (pa, pb) = (mesh.points()[a.idx()], mesh.points()[b.idx()]);
        let mid = [0.5 * (pa[0] + pb[0]), 0.5 * (pa[1] + pb[1])];
        let lowest = mesh
            .triangle_edges()
            .iter()
            .position(|te| te.iter().any(|(id, _)| id.idx() == e))
            .unwrap();
        assert_eq!(locator.locate(mid).unwrap().triangle, lowest);
    }
}

#[test]
fn a_locator_of_no_region_finds_nothing() {
    let mesh = disc_mesh(GeometryOrder::Linear);
    let none = PointLocator::for_regions(&mesh, |_| false);
    assert!(none.is_empty());
    assert_eq!(none.locate(CENTRE), None);
    assert!(PointLocator::new(&mesh).locate(CENTRE).is_some());
}

#[test]
fn boxes_of_mesh_and_regions() {
    for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
        let mesh = disc_mesh(order);
        let all = mesh.bounding_box();
        let body = mesh.body_box().unwrap();
        // The body is the ellipse a = 1, b = 0.6 (um) about CENTRE, its
        // vertices on it. Straight sides cut inside by up to the sagitta
        // h^2 / (8 rho), with rho = a^2 / b at the ends of the minor axis
        // (h = 0.2 um: 3e-9 m); quadratic sides follow the curve far closer.
        let tol = match order {
            GeometryOrder::Linear => 4e-9,
            GeometryOrder::Quadratic => 1e-10,
        };
        let want = [
            CENTRE[0] - 1e-6,
            CENTRE[0] + 1e-6,
            CENTRE[1] - 0.6e-6,
            CENTRE[1] + 0.6e-6,
        ];
        for (got, want) in body.to_array().iter().zip(want) {
            assert!((got - want).abs() < tol, "{order:?}: {got} vs {want}");
        }
        // The domain is the disc of radius R = 1 + 0.5 + 0.3 um about CENTRE
        // (straight sides: sagitta h^2 / (8 R) = 8.5e-9 m for h = 0.35 um).
        let r = 1.8e-6;
        let tol = match order {
            GeometryOrder::Linear => 9e-9,
            GeometryOrder::Quadratic => 1e-10,
        };
        for (got, want) in
            all.to_array()
                .iter()
                .zip([CENTRE[0] - r, CENTRE[0] + r, CENTRE[1] - r, CENTRE[1] + r])
        {
            assert!((got - want).abs() < tol, "{order:?}: {got} vs {want}");
        }
        // Boxes contain every node, and the region boxes make the whole.
        assert!(mesh.points().iter().all(|p| all.contains(*p)));
        let union = (0..mesh.regions().len())
            .filter_map(|r| mesh.region_box(twistmode_mesh::RegionId(r as u16)))
            .reduce(BoundingBox::union)
            .unwrap();
        assert_eq!(union, all);
        let vertex_box = BoundingBox::of_points(
            mesh.triangles()
                .iter()
                .filter(|t| mesh.regions()[t.region.idx()].kind.is_body())
                .flat_map(|t| t.vertices().map(|n| mesh.points()[n.idx()])),
        )
        .unwrap();
        match order {
            GeometryOrder::Linear => assert_eq!(body, vertex_box),
            // Curved sides bulge past the vertices.
            GeometryOrder::Quadratic => {
                assert_eq!(body, body.union(vertex_box));
                assert!(body.size()[0] >= vertex_box.size()[0]);
            }
        }
    }
}

#[test]
fn radial_pml_is_recovered_from_the_mesh() {
    for order in [GeometryOrder::Linear, GeometryOrder::Quadratic] {
        let mesh = disc_mesh(order);
        let Some(d) = mesh.domain() else {
            panic!("generated meshes describe their domain")
        };
        let PmlGeometry::Radial {
            centre,
            inner,
            outer,
        } = d.pml
        else {
            panic!("a disc domain has a radial PML")
        };
        let centre_guess = mesh.body_box().unwrap().centre();
        let Some(PmlGeometry::Radial {
            centre: c,
            inner: i,
            outer: o,
        }) = mesh.infer_radial_pml(centre_guess)
        else {
            panic!("the PML is found")
        };
        assert!((c[0] - centre[0]).hypot(c[1] - centre[1]) < 1e-15);
        assert!((i - inner).abs() < 1e-12 * outer && (o - outer).abs() < 1e-12 * outer);
    }
    // A half-plane body of revolution: the shell is centred on the origin.
    let mut s = GeneratorSpec::new(
        DomainKind::HalfPlane,
        BodySpec {
            shape: SectionShape::Ellipse { a: 1e-6, b: 1e-6 },
            centre: [0.0, 0.0],
            material: "glass".into(),
            max_edge: 0.3e-6,
        },
        Surroundings::Medium {
            padding: 0.5e-6,
            pml_thickness: 0.4e-6,
            max_edge: 0.4e-6,
        },
    );
    let mesh = generate(&s).unwrap();
    let radii = |g: Option<PmlGeometry>| match g {
        Some(PmlGeometry::Radial {
            centre,
            inner,
            outer,
        }) => [centre[0], centre[1], inner, outer],
        other => panic!("expected a radial PML, got {other:?}"),
    };
    let got = radii(mesh.infer_radial_pml([0.0, 0.0]));
    let want = radii(Some(mesh.domain().unwrap().pml));
    assert_eq!(want[..2], [0.0, 0.0]);
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() < 1e-12 * want[3], "{got:?} vs {want:?}");
    }
    s.surroundings = Surroundings::Medium {
        padding: 0.5e-6,
        pml_thickness: 0.0,
        max_edge: 0.4e-6,
    };
    assert_eq!(generate(&s).unwrap().infer_radial_pml([0.0, 0.0]), None);
}
