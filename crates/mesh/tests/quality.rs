//! Quality figures on a hand-made mesh with known angles.
use twistmode_mesh::{
    BoundaryTag, GeometryOrder, Mesh, MeshParts, NodeId, Region, RegionId, RegionKind, Triangle,
};

#[test]
fn counts_angles_and_aspect_are_exact() {
    // Right isosceles triangle (0,0),(1,0),(0,1) and an equilateral one on
    // its hypotenuse. Source: exact geometry — angles 45/90 and 60; aspect
    // (longest edge / smallest height * sqrt(3)/2) = sqrt(2) / (1/sqrt(2)) *
    // sqrt(3)/2 = sqrt(3) for the right isosceles triangle, 1 for the
    // equilateral one.
    let s3 = 3f64.sqrt();
    // Apex of the equilateral triangle on (1,0)-(0,1): midpoint + h * unit normal.
    let h = 2f64.sqrt() * s3 / 2.0;
    let n = [1.0 / 2f64.sqrt(), 1.0 / 2f64.sqrt()];
    let apex = [0.5 + h * n[0], 0.5 + h * n[1]];
    let points = vec![[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], apex];
    let tri = |a: u32, b: u32, c: u32| Triangle {
        nodes: [
            NodeId(a),
            NodeId(b),
            NodeId(c),
            NodeId(a),
            NodeId(a),
            NodeId(a),
        ],
        region: RegionId(0),
    };
    let seg = |a: u32, b: u32| ([NodeId(a), NodeId(b)], BoundaryTag(0));
    let mesh = Mesh::new(MeshParts {
        points,
        order: GeometryOrder::Linear,
        triangles: vec![tri(0, 1, 2), tri(1, 3, 2)],
        regions: vec![Region {
            name: "body".into(),
            kind: RegionKind::Body {
                material: "m".into(),
            },
        }],
        boundary_names: vec!["outer".into()],
        boundary_segments: vec![seg(0, 1), seg(1, 3), seg(3, 2), seg(2, 0)],
        domain: None,
    })
    .unwrap();
    let q = mesh.quality();
    assert_eq!((q.triangles, q.nodes, q.edges), (2, 4, 5));
    assert!((q.min_angle_deg - 45.0).abs() < 1e-12);
    assert!((q.max_angle_deg - 90.0).abs() < 1e-12);
    assert!((q.max_aspect - s3).abs() < 1e-12);
    assert!((q.edge_length_range[0] - 1.0).abs() < 1e-15);
    assert!((q.edge_length_range[1] - 2f64.sqrt()).abs() < 1e-12);
    // Area: 1/2 + sqrt(3)/4 * 2 (equilateral with side sqrt 2).
    assert!((mesh.area() - (0.5 + s3 / 2.0)).abs() < 1e-14);
}
