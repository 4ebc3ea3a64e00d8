//! Edge numbering, orientation, validity checks, areas and quality.
use std::collections::HashMap;

use crate::map::TriangleMap;
use crate::{
    BoundaryEdge, BoundaryTag, EdgeId, GeometryOrder, Mesh, MeshError, MeshParts, NodeId, Quality,
};

/// Relative area below which a triangle counts as degenerate (relative to the
/// square of its longest edge).
const DEGENERATE_TOL: f64 = 1e-12;

fn signed_area(p: [[f64; 2]; 3]) -> f64 {
    0.5 * ((p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[2][0] - p[0][0]) * (p[1][1] - p[0][1]))
}

pub(crate) fn build(parts: MeshParts) -> Result<Mesh, MeshError> {
    let MeshParts {
        points,
        order,
        mut triangles,
        regions,
        boundary_names,
        boundary_segments,
        domain,
    } = parts;
    if triangles.is_empty() {
        return Err(MeshError::Empty);
    }
    let npt = order.nodes_per_triangle();
    for (t, tri) in triangles.iter_mut().enumerate() {
        for n in &tri.nodes[..npt] {
            if n.idx() >= points.len() {
                return Err(MeshError::NodeOutOfRange {
                    triangle: t,
                    node: n.0,
                    count: points.len(),
                });
            }
        }
        if tri.region.idx() >= regions.len() {
            return Err(MeshError::RegionOutOfRange {
                triangle: t,
                region: tri.region.0,
                count: regions.len(),
            });
        }
        let v = [
            points[tri.nodes[0].idx()],
            points[tri.nodes[1].idx()],
            points[tri.nodes[2].idx()],
        ];
        let a = signed_area(v);
        let longest = (0..3)
            .map(|k| {
                let (p, q) = (v[k], v[(k + 1) % 3]);
                (p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)
            })
            .fold(0.0, f64::max);
        // NaN areas count as degenerate.
        if a.is_nan() || a.abs() <= DEGENERATE_TOL * longest {
            return Err(MeshError::Degenerate {
                triangle: t,
                area: a,
            });
        }
        if a < 0.0 {
            // Flip to counter-clockwise: swap vertices 1 and 2, and the
            // mid-side nodes accordingly (edges 0-1 <-> 2-0, 1-2 stays).
            tri.nodes.swap(1, 2);
            if order == GeometryOrder::Quadratic {
                tri.nodes.swap(3, 5);
            }
        }
        if order == GeometryOrder::Quadratic {
            let map = TriangleMap::quadratic(tri.nodes.map(|n| points[n.idx()]));
            // Check the Jacobian at the vertices, mid-sides and centroid.
            let samples = [
                (0.0, 0.0),
                (1.0, 0.0),
                (0.0, 1.0),
                (0.5, 0.0),
                (0.5, 0.5),
                (0.0, 0.5),
                (1.0 / 3.0, 1.0 / 3.0),
            ];
            if samples.iter().any(|&(x, y)| map.at(x, y).det() <= 0.0) {
                return Err(MeshError::Inverted { triangle: t });
            }
        }
    }

    // Edge numbering.
    let mut edge_index: HashMap<(u32, u32), u32> = HashMap::new();
    let mut edges: Vec<[NodeId; 2]> = Vec::new();
    let mut edge_count: Vec<u32> = Vec::new();
    let mut triangle_edges = Vec::with_capacity(triangles.len());
    for tri in &triangles {
        let mut te = [(EdgeId(0), 1i8); 3];
        for (k, slot) in te.iter_mut().enumerate() {
            let a = tri.nodes[k].0;
            let b = tri.nodes[(k + 1) % 3].0;
            let key = (a.min(b), a.max(b));
            let id = *edge_index.entry(key).or_insert_with(|| {
                edges.push([NodeId(key.0), NodeId(key.1)]);
                edge_count.push(0);
                (edges.len() - 1) as u32
            });
            edge_count[id as usize] += 1;
            *slot = (EdgeId(id), if a < b { 1 } else { -1 });
        }
        triangle_edges.push(te);
    }
    for (e, &c) in edge_count.iter().enumerate() {
        if c > 2 {
            return Err(MeshError::NonManifold {
                a: edges[e][0].0,
                b: edges[e][1].0,
                count: c as usize,
            });
        }
    }

    // Boundary tags.
    let mut tag_of: Vec<Option<BoundaryTag>> = vec![None; edges.len()];
    for ([a, b], tag) in boundary_segments {
        let key = (a.0.min(b.0), a.0.max(b.0));
        match edge_index.get(&key) {
            Some(&e) if edge_count[e as usize] == 1 => tag_of[e as usize] = Some(tag),
            _ => {
                return Err(MeshError::NotABoundaryEdge {
                    a: a.0,
                    b: b.0,
                    tag: boundary_names
                        .get(tag.0 as usize)
                        .cloned()
                        .unwrap_or_else(|| format!("#{}", tag.0)),
                })
            }
        }
    }
    let mut boundary = Vec::new();
    for (e, &c) in edge_count.iter().enumerate() {
        if c == 1 {
            match tag_of[e] {
                Some(tag) => boundary.push(BoundaryEdge {
                    edge: EdgeId(e as u32),
                    tag,
                }),
                None => {
                    return Err(MeshError::UntaggedBoundary {
                        a: edges[e][0].0,
                        b: edges[e][1].0,
                    })
                }
            }
        }
    }

    Ok(Mesh {
        points,
        order,
        triangles,
        regions,
        boundary_names,
        domain,
        edges,
        triangle_edges,
        boundary,
        pi_partners: None,
        mirror_partners: None,
    })
}

pub(crate) fn quality(mesh: &Mesh) -> Quality {
    let mut min_angle = f64::INFINITY;
    let mut max_angle: f64 = 0.0;
    let mut max_aspect: f64 = 0.0;
    let mut lmin = f64::INFINITY;
    let mut lmax: f64 = 0.0;
    for tri in mesh.triangles() {
        let p = tri.vertices().map(|n| mesh.points()[n.idx()]);
        let len: Vec<f64> = (0..3)
            .map(|k| {
                let (a, b) = (p[k], p[(k + 1) % 3]);
                ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
            })
            .collect();
        for k in 0..3 {
            // angle at vertex k, between edges k (k->k+1) and k+2 (k+2->k)
            let a = len[k];
            let b = len[(k + 2) % 3];
            let c = len[(k + 1) % 3];
            let cos = ((a * a + b * b - c * c) / (2.0 * a * b)).clamp(-1.0, 1.0);
            let ang = cos.acos().to_degrees();
            min_angle = min_angle.min(ang);
            max_angle = max_angle.max(ang);
        }
        let area = signed_area(p).abs();
        let longest = len.iter().cloned().fold(0.0, f64::max);
        let min_height = 2.0 * area / longest;
        max_aspect = max_aspect.max(longest / min_height * (3f64.sqrt() / 2.0));
        for l in len {
            lmin = lmin.min(l);
            lmax = lmax.max(l);
        }
    }
    Quality {
        triangles: mesh.triangles().len(),
        nodes: mesh.points().len(),
        edges: mesh.edges().len(),
        min_angle_deg: min_angle,
        max_angle_deg: max_angle,
        max_aspect,
        edge_length_range: [lmin, lmax],
    }
}
