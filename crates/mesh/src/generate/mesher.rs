//! The generator's pipeline: outlines -> discretised curves -> clipped
//! region boundaries -> one constrained Delaunay refinement per region
//! (spade) -> merged mesh -> (pi-rotated copy) -> quadratic nodes -> [`Mesh`].
//!
//! Each region is triangulated on its own with its own largest triangle
//! area, so that size control is per region; regions share the nodes of
//! their common curves because those curves are discretised once and
//! constraint edges are never split (`keep_constraint_edges`). Everything is
//! computed in a working frame centred on the body (Disc, Box) or on the
//! axis origin (HalfPlane), where every clip line is `u = 0` or `v = 0`.

use std::collections::{HashMap, HashSet};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

use spade::{
    AngleLimit, ConstrainedDelaunayTriangulation, Point2, RefinementParameters, Triangulation,
};

use super::clip::{clip, ClipLine};
use super::curves::{discretise_loop, point_segment_distance, sample_outline, Piece, Seg, P2};
use super::{GeneratorSpec, SectionShape, Surroundings};
use crate::{
    boundary_names, Domain, DomainKind, GeometryOrder, Mesh, MeshError, MeshParts, NodeId,
    PmlGeometry, Region, RegionId, RegionKind, Triangle,
};

/// Growth of the target edge length per metre of distance from the body
/// (graded transition between body and surroundings sizes; common practice).
const GRADING: f64 = 0.35;
/// Largest triangle area as a fraction of the equilateral triangle with the
/// target edge: chosen so that nearly all edges stay below the target.
const AREA_FACTOR: f64 = 0.6;
/// Refuse meshes larger than this many triangles (a size that was meant in
/// other units, most likely).
const MAX_TRIANGLES: f64 = 4.0e6;

/// Clip line ids (index into [`Seg::line`]).
const LINE_AXIS: usize = 0;
const LINE_MIDPLANE: usize = 1;
const LINE_CUT: usize = 2;
/// The mirror line `u = 0` of the working frame (mirror-symmetric meshes).
const LINE_MIRROR: usize = 3;

fn geometry(field: &str, reason: impl Into<String>) -> MeshError {
    MeshError::Geometry {
        field: field.into(),
        reason: reason.into(),
    }
}

fn positive(field: &str, x: f64) -> Result<(), MeshError> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(geometry(
            field,
            format!("must be a positive finite length, got {x}"),
        ))
    }
}

fn key(p: P2) -> (u64, u64) {
    ((p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits())
}

/// Key of an unordered segment: the bit patterns of its ends, sorted.
type SegKey = ((u64, u64), (u64, u64));

fn seg_key(a: P2, b: P2) -> SegKey {
    let (ka, kb) = (key(a), key(b));
    if ka <= kb {
        (ka, kb)
    } else {
        (kb, ka)
    }
}

/// Largest edge in the PML: at most its thickness.
fn shell_max(s: &Surroundings) -> f64 {
    match s {
        Surroundings::Medium { pml_thickness, .. } if *pml_thickness > 0.0 => *pml_thickness,
        _ => f64::INFINITY,
    }
}

/// Checks the spec; returns nothing but clear errors.
fn validate(spec: &GeneratorSpec) -> Result<(), MeshError> {
    let b = &spec.body;
    positive("body.max_edge", b.max_edge)?;
    if !(b.centre[0].is_finite() && b.centre[1].is_finite()) {
        return Err(geometry("body.centre", "must be finite"));
    }
    match &b.shape {
        SectionShape::Rectangle {
            width,
            thickness,
            corner_radius,
        } => {
            positive("body.width", *width)?;
            positive("body.thickness", *thickness)?;
            let rmax = 0.5 * width.min(*thickness);
            if !(corner_radius.is_finite() && *corner_radius >= 0.0 && *corner_radius <= rmax) {
                return Err(geometry(
                    "body.corner_radius",
                    format!(
                        "must lie in [0, {rmax:e}] (half the smaller side), got {corner_radius}"
                    ),
                ));
            }
        }
        SectionShape::Ellipse { a, b } => {
            positive("body.a", *a)?;
            positive("body.b", *b)?;
        }
        SectionShape::Polygon { vertices } => validate_polygon(vertices)?,
    }
    if let Surroundings::Medium {
        padding,
        pml_thickness,
        max_edge,
    } = &spec.surroundings
    {
        positive("surroundings.padding", *padding)?;
        positive("surroundings.max_edge", *max_edge)?;
        if !(pml_thickness.is_finite() && *pml_thickness >= 0.0) {
            return Err(geometry(
                "surroundings.pml_thickness",
                format!("must be >= 0, got {pml_thickness}"),
            ));
        }
    }
    if !(spec.min_angle_deg > 0.0 && spec.min_angle_deg <= 34.0) {
        return Err(geometry(
            "min_angle_deg",
            format!(
                "must lie in (0, 34] degrees (refinement may not terminate above ~34), got {}",
                spec.min_angle_deg
            ),
        ));
    }
    if spec.upper_half_only && spec.domain != DomainKind::HalfPlane {
        return Err(geometry(
            "upper_half_only",
            "only a HalfPlane domain can be cut at z = 0",
        ));
    }
    if spec.mirror_symmetric && !spec.pi_symmetric {
        return Err(geometry(
            "mirror_symmetric",
            "a mirror-symmetric mesh is built from a pi-symmetric one; set pi_symmetric too",
        ));
    }
    if spec.pi_symmetric && spec.domain == DomainKind::HalfPlane {
        return Err(geometry(
            "pi_symmetric",
            "a HalfPlane domain cannot be invariant under rotation by pi; use Disc or Box",
        ));
    }
    Ok(())
}

/// The shared polygon check ([`crate::polygon::check_polygon`]), reported on `body.vertices`.
fn validate_polygon(v: &[[f64; 2]]) -> Result<(), MeshError> {
    crate::polygon::check_polygon(v)
        .map(|_| ())
        .map_err(|defect| geometry("body.vertices", defect.to_string()))
}

/// Outline pieces of the body in its own frame (centre at the origin).
fn shape_pieces(shape: &SectionShape) -> Vec<Piece> {
    match shape {
        SectionShape::Rectangle {
            width,
            thickness,
            corner_radius,
        } => {
            let (hw, ht, r) = (0.5 * width, 0.5 * thickness, *corner_radius);
            // Counter-clockwise: corner arc (if rounded), then the next side.
            let corners = [
                ([hw - r, -ht + r], -FRAC_PI_2, [hw, -ht + r], [hw, ht - r]),
                ([hw - r, ht - r], 0.0, [hw - r, ht], [-hw + r, ht]),
                ([-hw + r, ht - r], FRAC_PI_2, [-hw, ht - r], [-hw, -ht + r]),
                ([-hw + r, -ht + r], PI, [-hw + r, -ht], [hw - r, -ht]),
            ];
            let mut out = Vec::new();
            for (c, t0, a, b) in corners {
                if r > 0.0 {
                    out.push(Piece::Arc {
                        c,
                        ax: r,
                        ay: r,
                        t0,
                        t1: t0 + FRAC_PI_2,
                    });
                }
                if a != b {
                    out.push(Piece::Line { a, b });
                }
            }
            out
        }
        SectionShape::Ellipse { a, b } => vec![Piece::Arc {
            c: [0.0, 0.0],
            ax: *a,
            ay: *b,
            t0: 0.0,
            t1: TAU,
        }],
        SectionShape::Polygon { vertices } => (0..vertices.len())
            .map(|i| Piece::Line {
                a: vertices[i],
                b: vertices[(i + 1) % vertices.len()],
            })
            .collect(),
    }
}

fn rotate(p: P2, angle: f64) -> P2 {
    if angle == 0.0 {
        return p;
    }
    let (s, c) = angle.sin_cos();
    [c * p[0] - s * p[1], s * p[0] + c * p[1]]
}

fn transform_piece(p: Piece, shift: P2, angle: f64) -> Piece {
    let tr = |x: P2| {
        let r = rotate(x, angle);
        [r[0] + shift[0], r[1] + shift[1]]
    };
    match p {
        Piece::Line { a, b } => Piece::Line { a: tr(a), b: tr(b) },
        Piece::Arc { c, ax, ay, t0, t1 } => {
            debug_assert!(angle == 0.0, "arcs are never rotated");
            Piece::Arc {
                c: tr(c),
                ax,
                ay,
                t0,
                t1,
            }
        }
    }
}

fn circle(r: f64) -> Vec<Piece> {
    vec![Piece::Arc {
        c: [0.0, 0.0],
        ax: r,
        ay: r,
        t0: 0.0,
        t1: TAU,
    }]
}

fn polygon_pieces(p: &[P2]) -> Vec<Piece> {
    (0..p.len())
        .map(|i| Piece::Line {
            a: p[i],
            b: p[(i + 1) % p.len()],
        })
        .collect()
}

/// Angle of the cut line for a pi-symmetric polygon: one that avoids the
/// vertices, so that the cut crosses edges transversally.
fn cut_angle(shape: &SectionShape, mirror: bool) -> Result<f64, MeshError> {
    let SectionShape::Polygon { vertices } = shape else {
        return Ok(0.0);
    };
    let scale = vertices
        .iter()
        .map(|p| p[0].hypot(p[1]))
        .fold(0.0, f64::max);
    let has_vertex_at = |q: P2| {
        vertices
            .iter()
            .any(|w| (w[0] - q[0]).hypot(w[1] - q[1]) <= 1e-9 * scale)
    };
    for v in vertices {
        let partner = [-v[0], -v[1]];
        if !has_vertex_at(partner) {
            return Err(geometry(
                "pi_symmetric",
                format!(
                    "the polygon is not invariant under rotation by pi about its centre: vertex ({:e}, {:e}) has no partner at ({:e}, {:e})",
                    v[0], v[1], partner[0], partner[1]
                ),
            ));
        }
    }
    if mirror {
        // Both working axes are mirror lines and must avoid the vertices.
        let off_both_axes = |p: P2| p[0].abs() > 1e-3 * scale && p[1].abs() > 1e-3 * scale;
        for v in vertices {
            if !has_vertex_at([v[0], -v[1]]) {
                return Err(geometry(
                    "mirror_symmetric",
                    format!(
                        "the polygon is not invariant under v -> -v: vertex ({:e}, {:e}) has no partner",
                        v[0], v[1]
                    ),
                ));
            }
        }
        // (Turning the frame by pi/2 would not help: it swaps the two lines.)
        if vertices.iter().all(|v| off_both_axes(*v)) {
            return Ok(0.0);
        }
        return Err(geometry(
            "mirror_symmetric",
            "the polygon has vertices on the mirror lines through its centre; mesh it without the mirror",
        ));
    }
    let candidates = [0.0, FRAC_PI_2, 0.3, 0.7, 1.1, 1.9, 2.3, 2.7];
    for &a in &candidates {
        let ok = vertices
            .iter()
            .all(|v| rotate(*v, -a)[1].abs() > 1e-3 * scale);
        if ok {
            return Ok(a);
        }
    }
    Err(geometry(
        "pi_symmetric",
        "found no cut line through the centre that avoids the polygon's vertices",
    ))
}

struct RegionPlan {
    region: Region,
    loops: Vec<usize>,
    max_edge: f64,
}

/// Builds the mesh; `max_turn` limits the turning of curved segments.
pub(crate) fn build(spec: &GeneratorSpec, max_turn: f64) -> Result<Mesh, MeshError> {
    validate(spec)?;
    let body = &spec.body;
    let half_plane = spec.domain == DomainKind::HalfPlane;
    // Working frame: domain point = origin + rotate(working point, angle).
    let (origin, angle) = if half_plane {
        ([0.0, 0.0], 0.0)
    } else if spec.pi_symmetric {
        (body.centre, cut_angle(&body.shape, spec.mirror_symmetric)?)
    } else {
        (body.centre, 0.0)
    };
    let body_shift = [body.centre[0] - origin[0], body.centre[1] - origin[1]];
    let body_pieces: Vec<Piece> = shape_pieces(&body.shape)
        .into_iter()
        .map(|p| transform_piece(p, body_shift, -angle))
        .collect();
    let samples = sample_outline(&body_pieces, 2000);

    let h_body = body.max_edge;
    let (medium, h_out) = match spec.surroundings {
        Surroundings::None => (None, h_body),
        Surroundings::Medium {
            padding,
            pml_thickness,
            max_edge,
        } => (Some((padding, pml_thickness)), max_edge),
    };
    let h_outline = if medium.is_some() {
        h_body.min(h_out)
    } else {
        h_body
    };

    // Outer loops and the PML description (domain frame).
    let mut loops: Vec<Vec<Piece>> = vec![body_pieces.clone()];
    let mut pml = PmlGeometry::None;
    let mut extent = samples
        .iter()
        .map(|p| p[0].abs().max(p[1].abs()))
        .fold(0.0, f64::max);
    if half_plane && !samples.iter().any(|p| p[0] > 0.0) {
        return Err(geometry(
            "body.centre",
            "the body lies entirely in r < 0; a HalfPlane section needs part of it at r > 0",
        ));
    }
    if let Some((padding, pml_t)) = medium {
        match spec.domain {
            DomainKind::HalfPlane | DomainKind::Disc => {
                let rb = samples
                    .iter()
                    .filter(|p| !half_plane || p[0] >= 0.0)
                    .map(|p| p[0].hypot(p[1]))
                    .fold(0.0, f64::max);
                let inner = rb + padding;
                let outer = inner + pml_t;
                loops.push(circle(inner));
                if pml_t > 0.0 {
                    loops.push(circle(outer));
                    pml = PmlGeometry::Radial {
                        centre: origin,
                        inner,
                        outer,
                    };
                }
                extent = outer;
            }
            DomainKind::Box => {
                // Bounding box in the domain frame.
                let dom: Vec<P2> = samples
                    .iter()
                    .map(|p| {
                        let r = rotate(*p, angle);
                        [r[0] + origin[0], r[1] + origin[1]]
                    })
                    .collect();
                let mut bb = [
                    f64::INFINITY,
                    f64::NEG_INFINITY,
                    f64::INFINITY,
                    f64::NEG_INFINITY,
                ];
                for p in &dom {
                    bb[0] = bb[0].min(p[0]);
                    bb[1] = bb[1].max(p[0]);
                    bb[2] = bb[2].min(p[1]);
                    bb[3] = bb[3].max(p[1]);
                }
                if spec.pi_symmetric {
                    // Exactly symmetric about the centre.
                    let hu = (bb[1] - origin[0]).max(origin[0] - bb[0]);
                    let hv = (bb[3] - origin[1]).max(origin[1] - bb[2]);
                    bb = [
                        origin[0] - hu,
                        origin[0] + hu,
                        origin[1] - hv,
                        origin[1] + hv,
                    ];
                }
                let inner = [
                    bb[0] - padding,
                    bb[1] + padding,
                    bb[2] - padding,
                    bb[3] + padding,
                ];
                let outer = [
                    inner[0] - pml_t,
                    inner[1] + pml_t,
                    inner[2] - pml_t,
                    inner[3] + pml_t,
                ];
                let to_work = |b: [f64; 4]| -> Vec<Piece> {
                    let hu = 0.5 * (b[1] - b[0]);
                    let hv = 0.5 * (b[3] - b[2]);
                    let c = [
                        0.5 * (b[0] + b[1]) - origin[0],
                        0.5 * (b[2] + b[3]) - origin[1],
                    ];
                    let corners = [[hu, -hv], [hu, hv], [-hu, hv], [-hu, -hv]]
                        .map(|d| rotate([c[0] + d[0], c[1] + d[1]], -angle));
                    polygon_pieces(&corners)
                };
                loops.push(to_work(inner));
                if pml_t > 0.0 {
                    loops.push(to_work(outer));
                    pml = PmlGeometry::Cartesian { inner, outer };
                }
                extent = (outer[1] - outer[0]).max(outer[3] - outer[2]);
            }
        }
    }

    // Regions.
    let mut plans = vec![RegionPlan {
        region: Region {
            name: "body".into(),
            kind: RegionKind::Body {
                material: body.material.clone(),
            },
        },
        loops: vec![0],
        max_edge: h_body,
    }];
    if medium.is_some() {
        plans.push(RegionPlan {
            region: Region {
                name: "surroundings".into(),
                kind: RegionKind::Surroundings,
            },
            loops: vec![0, 1],
            max_edge: h_out,
        });
        if loops.len() == 3 {
            plans.push(RegionPlan {
                region: Region {
                    name: "pml".into(),
                    kind: RegionKind::Pml,
                },
                loops: vec![1, 2],
                max_edge: h_out.min(shell_max(&spec.surroundings)),
            });
        }
    }

    // Sizing: graded away from the body outline.
    let clip_axes: Vec<(usize, usize)> = if half_plane {
        let mut v = vec![(0, LINE_AXIS)];
        if spec.upper_half_only {
            v.push((1, LINE_MIDPLANE));
        }
        v
    } else if spec.mirror_symmetric {
        vec![(1, LINE_CUT), (0, LINE_MIRROR)]
    } else if spec.pi_symmetric {
        vec![(1, LINE_CUT)]
    } else {
        vec![]
    };
    let axes: Vec<usize> = clip_axes.iter().map(|c| c.0).collect();
    let snap_tol = 1e-12 * extent;
    let outline = discretise_loop(&loops[0], &axes, &|_| h_outline, max_turn, snap_tol)?;
    let distance = |x: P2| {
        outline
            .iter()
            .map(|s| point_segment_distance(x, s.a, s.b))
            .fold(f64::INFINITY, f64::min)
    };
    let graded = |cap: f64| move |x: P2| cap.min(h_outline + GRADING * distance(x));
    // The PML circles or boxes are at least one element apart: their
    // segments are no longer than the PML thickness (else the shell's
    // triangles would be slivers, and curved ones inverted).
    let shell = match medium {
        Some((_, t)) if t > 0.0 => t,
        _ => f64::INFINITY,
    };
    let graded_out = graded(h_out);
    let outer_size = |x: P2| graded_out(x).min(shell);
    let mut loop_segs: Vec<Vec<Seg>> = vec![outline.clone()];
    for l in &loops[1..] {
        loop_segs.push(discretise_loop(l, &axes, &outer_size, max_turn, snap_tol)?);
    }
    if spec.pi_symmetric {
        symmetrise_cut_nodes(&mut loop_segs, extent)?;
    }

    // Triangle budget.
    let estimate: f64 = plans
        .iter()
        .map(|p| {
            let (lo, hi) = bbox(&loop_segs[*p.loops.last().unwrap()]);
            (hi[0] - lo[0]) * (hi[1] - lo[1]) / (AREA_FACTOR * 0.433 * p.max_edge * p.max_edge)
        })
        .sum();
    if estimate.is_nan() || estimate > MAX_TRIANGLES {
        return Err(geometry(
            "max_edge",
            format!("the mesh would have about {estimate:.2e} triangles (limit {MAX_TRIANGLES:.0e}); use larger max_edge values"),
        ));
    }

    // Clip and triangulate each region.
    let mut seg_info: HashMap<SegKey, Seg> = HashMap::new();
    let mut tri_pts: Vec<([P2; 3], RegionId)> = Vec::new();
    for (r, plan) in plans.iter().enumerate() {
        let mut segs: Vec<Seg> = plan
            .loops
            .iter()
            .flat_map(|&l| loop_segs[l].iter().copied())
            .collect();
        let line_size = graded(plan.max_edge);
        for &(axis, id) in &clip_axes {
            segs = clip(
                &segs,
                &ClipLine {
                    axis,
                    id,
                    size: &line_size,
                    symmetric: id == LINE_CUT,
                    extent,
                },
            )?;
        }
        if segs.is_empty() {
            return Err(geometry(
                "body.centre",
                format!("region '{}' is empty after clipping", plan.region.name),
            ));
        }
        for s in &segs {
            seg_info.insert(seg_key(s.a, s.b), *s);
        }
        let max_area = AREA_FACTOR * 3f64.sqrt() / 4.0 * plan.max_edge * plan.max_edge;
        for t in triangulate(&segs, max_area, spec.min_angle_deg)? {
            tri_pts.push((t, RegionId(r as u16)));
        }
    }

    // Merge into one node list.
    let mut points: Vec<P2> = Vec::new();
    let mut node_of: HashMap<(u64, u64), u32> = HashMap::new();
    let mut id = |p: P2, points: &mut Vec<P2>| -> NodeId {
        let n = *node_of.entry(key(p)).or_insert_with(|| {
            points.push([p[0] + 0.0, p[1] + 0.0]);
            (points.len() - 1) as u32
        });
        NodeId(n)
    };
    let mut triangles: Vec<Triangle> = Vec::with_capacity(tri_pts.len());
    for (t, region) in &tri_pts {
        let v = t.map(|p| id(p, &mut points));
        triangles.push(Triangle {
            nodes: [v[0], v[1], v[2], v[0], v[0], v[0]],
            region: *region,
        });
    }

    // Boundary edges of this (half) mesh and their tags.
    let mut edge_count: HashMap<(u32, u32), u32> = HashMap::new();
    for t in &triangles {
        for k in 0..3 {
            let (a, b) = (t.nodes[k].0, t.nodes[(k + 1) % 3].0);
            *edge_count.entry((a.min(b), a.max(b))).or_default() += 1;
        }
    }
    let mut boundary: Vec<([NodeId; 2], Option<usize>)> = Vec::new();
    let mut sorted_edges: Vec<_> = edge_count
        .iter()
        .filter(|(_, &c)| c == 1)
        .map(|(e, _)| *e)
        .collect();
    sorted_edges.sort_unstable();
    for (a, b) in sorted_edges {
        let info = seg_info
            .get(&seg_key(points[a as usize], points[b as usize]))
            .ok_or_else(|| {
                MeshError::Triangulation(format!(
                    "boundary edge {a}-{b} lies on no input curve (internal error)"
                ))
            })?;
        if info.line == Some(LINE_CUT) || info.line == Some(LINE_MIRROR) {
            continue;
        }
        boundary.push(([NodeId(a), NodeId(b)], info.line));
    }

    // Quadratic nodes.
    if spec.order == GeometryOrder::Quadratic {
        let mut mid_of: HashMap<(u32, u32), NodeId> = HashMap::new();
        for t in triangles.iter_mut() {
            for k in 0..3 {
                let (a, b) = (t.nodes[k], t.nodes[(k + 1) % 3]);
                let e = (a.0.min(b.0), a.0.max(b.0));
                let m = *mid_of.entry(e).or_insert_with(|| {
                    let (pa, pb) = (points[a.idx()], points[b.idx()]);
                    let p = match seg_info.get(&seg_key(pa, pb)) {
                        Some(s) if s.curved => s.mid,
                        _ => [0.5 * (pa[0] + pb[0]), 0.5 * (pa[1] + pb[1])],
                    };
                    points.push(p);
                    NodeId((points.len() - 1) as u32)
                });
                t.nodes[3 + k] = m;
            }
        }
    }

    // Mirrored copy of the quarter (u -> -u in the working frame), orientation restored.
    if spec.mirror_symmetric {
        let n_quarter = points.len();
        let mut image = vec![NodeId(0); n_quarter];
        for (i, slot) in image.iter_mut().enumerate() {
            let p = points[i];
            *slot = if p[0] == 0.0 {
                NodeId(i as u32)
            } else {
                points.push([-p[0] + 0.0, p[1]]);
                NodeId((points.len() - 1) as u32)
            };
        }
        let quarter = triangles.len();
        for t in 0..quarter {
            let n = triangles[t].nodes.map(|n| image[n.idx()]);
            triangles.push(Triangle {
                nodes: [n[0], n[2], n[1], n[5], n[4], n[3]],
                region: triangles[t].region,
            });
        }
        let quarter_boundary = boundary.len();
        for b in 0..quarter_boundary {
            let ([a, c], tag) = boundary[b];
            boundary.push(([image[c.idx()], image[a.idx()]], tag));
        }
    }

    // Rotated copy.
    let mut partners = None;
    if spec.pi_symmetric {
        let n_half = points.len();
        let mut on_cut: HashMap<u64, u32> = HashMap::new();
        for (i, p) in points.iter().enumerate() {
            if p[1] == 0.0 {
                on_cut.insert((p[0] + 0.0).to_bits(), i as u32);
            }
        }
        let mut image = vec![NodeId(0); n_half];
        for i in 0..n_half {
            let p = points[i];
            image[i] = if p[1] == 0.0 {
                let j = on_cut.get(&(-p[0] + 0.0).to_bits()).ok_or_else(|| {
                    MeshError::Triangulation(format!(
                        "cut node at u = {:e} has no partner at u = {:e} (internal error)",
                        p[0], -p[0]
                    ))
                })?;
                NodeId(*j)
            } else {
                points.push([-p[0] + 0.0, -p[1] + 0.0]);
                NodeId((points.len() - 1) as u32)
            };
        }
        let mut partner = vec![NodeId(0); points.len()];
        for i in 0..n_half {
            partner[i] = image[i];
            partner[image[i].idx()] = NodeId(i as u32);
        }
        let upper = triangles.len();
        for t in 0..upper {
            let tri = triangles[t];
            triangles.push(Triangle {
                nodes: tri.nodes.map(|n| image[n.idx()]),
                region: tri.region,
            });
        }
        let upper_boundary = boundary.len();
        for b in 0..upper_boundary {
            let ([a, c], tag) = boundary[b];
            boundary.push(([image[a.idx()], image[c.idx()]], tag));
        }
        partners = Some(partner);
    }

    // The mirror v -> -v of the domain frame, found in the working frame (exact:
    // every image point was made by negating coordinates).
    let mirror_partners = if spec.mirror_symmetric {
        let index: HashMap<(u64, u64), u32> = points
            .iter()
            .enumerate()
            .map(|(i, p)| (((p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits()), i as u32))
            .collect();
        // The working frame is the domain frame shifted to the centre (angle 0).
        let flip = |p: P2| -> P2 { [p[0] + 0.0, -p[1] + 0.0] };
        let mut m = Vec::with_capacity(points.len());
        for (i, p) in points.iter().enumerate() {
            let q = flip(*p);
            let j = index
                .get(&(q[0].to_bits(), q[1].to_bits()))
                .ok_or_else(|| {
                    MeshError::Triangulation(format!(
                        "node {i} at ({:e}, {:e}) has no mirror image (internal error)",
                        p[0], p[1]
                    ))
                })?;
            m.push(NodeId(*j));
        }
        Some(m)
    } else {
        None
    };

    // Back to the domain frame.
    for p in points.iter_mut() {
        let r = rotate(*p, angle);
        *p = [r[0] + origin[0], r[1] + origin[1]];
    }

    let tag_names = [
        (None, boundary_names::OUTER),
        (Some(LINE_AXIS), boundary_names::AXIS),
        (Some(LINE_MIDPLANE), boundary_names::MIDPLANE),
    ];
    let mut boundary_names_used: Vec<String> = Vec::new();
    let mut boundary_segments = Vec::with_capacity(boundary.len());
    for (edge, line) in boundary {
        let name = tag_names
            .iter()
            .find(|(l, _)| *l == line)
            .map(|(_, n)| *n)
            .unwrap_or(boundary_names::OUTER);
        let tag = match boundary_names_used.iter().position(|n| n == name) {
            Some(i) => i,
            None => {
                boundary_names_used.push(name.to_string());
                boundary_names_used.len() - 1
            }
        };
        boundary_segments.push((edge, crate::BoundaryTag(tag as u16)));
    }

    let mesh = Mesh::new(MeshParts {
        points,
        order: spec.order,
        triangles,
        regions: plans.into_iter().map(|p| p.region).collect(),
        boundary_names: boundary_names_used,
        boundary_segments,
        domain: Some(Domain {
            kind: spec.domain,
            pml,
        }),
    })?;
    let mesh = match partners {
        Some(p) => mesh.try_with_pi_partners(p)?,
        None => mesh,
    };
    match mirror_partners {
        Some(p) => mesh.try_with_mirror_partners(p),
        None => Ok(mesh),
    }
}

fn bbox(segs: &[Seg]) -> (P2, P2) {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for s in segs {
        for p in [s.a, s.b] {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
    }
    (lo, hi)
}

/// Makes the crossing nodes of all loops with the cut line `v = 0` exactly
/// odd in `u` (pairs `u`, `-u`), so that the rotated copy meets the original.
fn symmetrise_cut_nodes(loop_segs: &mut [Vec<Seg>], extent: f64) -> Result<(), MeshError> {
    let mut us: Vec<f64> = loop_segs
        .iter()
        .flatten()
        .flat_map(|s| [s.a, s.b])
        .filter(|p| p[1] == 0.0)
        .map(|p| p[0])
        .collect();
    us.sort_by(f64::total_cmp);
    us.dedup();
    let tol = 1e-9 * extent;
    let mut replace: HashMap<u64, f64> = HashMap::new();
    for &u in us.iter().filter(|u| **u > 0.0) {
        let partner = us
            .iter()
            .filter(|w| **w < 0.0)
            .min_by(|a, b| (*a + u).abs().total_cmp(&(*b + u).abs()));
        match partner {
            Some(&w) if (w + u).abs() <= tol => {
                replace.insert(w.to_bits(), -u);
            }
            _ => {
                return Err(geometry(
                    "pi_symmetric",
                    format!("the section is not invariant under rotation by pi: the cut meets an outline at u = {u:e} but not at {:e}", -u),
                ))
            }
        }
    }
    let fix = |p: &mut P2| {
        if p[1] == 0.0 {
            if let Some(&u) = replace.get(&p[0].to_bits()) {
                p[0] = u;
            }
        }
    };
    for s in loop_segs.iter_mut().flatten() {
        fix(&mut s.a);
        fix(&mut s.b);
        if !s.curved {
            s.mid = [0.5 * (s.a[0] + s.b[0]), 0.5 * (s.a[1] + s.b[1])];
        }
    }
    Ok(())
}

/// Constrained Delaunay triangulation of one region (the odd-parity part
/// of its segment set) refined to the angle limit and the area bound.
fn triangulate(segs: &[Seg], max_area: f64, min_angle_deg: f64) -> Result<Vec<[P2; 3]>, MeshError> {
    let mut index: HashMap<(u64, u64), usize> = HashMap::new();
    let mut verts: Vec<Point2<f64>> = Vec::new();
    let mut edges: Vec<[usize; 2]> = Vec::with_capacity(segs.len());
    let mut vid = |p: P2, verts: &mut Vec<Point2<f64>>| {
        *index.entry(key(p)).or_insert_with(|| {
            verts.push(Point2::new(p[0], p[1]));
            verts.len() - 1
        })
    };
    let mut seen: HashSet<(usize, usize)> = HashSet::new();
    for s in segs {
        let (a, b) = (vid(s.a, &mut verts), vid(s.b, &mut verts));
        if seen.insert((a.min(b), a.max(b))) {
            edges.push([a, b]);
        }
    }
    let n_input = verts.len();
    let mut conflicts = 0usize;
    let mut cdt: ConstrainedDelaunayTriangulation<Point2<f64>> =
        ConstrainedDelaunayTriangulation::try_bulk_load_cdt(verts, edges, |_| conflicts += 1)
            .map_err(|e| {
                MeshError::Triangulation(format!("spade rejected the input points: {e:?}"))
            })?;
    if conflicts > 0 {
        return Err(MeshError::Triangulation(format!(
            "{conflicts} boundary segments cross each other; the outlines must not intersect"
        )));
    }
    if cdt.num_vertices() != n_input {
        return Err(MeshError::Triangulation(
            "two boundary nodes coincide; the outlines touch each other".into(),
        ));
    }
    let (lo, hi) = bbox(segs);
    let area_box = (hi[0] - lo[0]) * (hi[1] - lo[1]);
    let budget = (3.0 * area_box / max_area) as usize + 20 * n_input + 1000;
    let params = RefinementParameters::<f64>::new()
        .exclude_outer_faces(true)
        .keep_constraint_edges()
        .with_angle_limit(AngleLimit::from_deg(min_angle_deg))
        .with_max_allowed_area(max_area)
        .with_max_additional_vertices(budget);
    let result = cdt.refine(params);
    if !result.refinement_complete {
        return Err(MeshError::Triangulation(format!(
            "refinement stopped after {budget} extra nodes without meeting the {min_angle_deg} degree angle limit; lower min_angle_deg"
        )));
    }
    let excluded: HashSet<_> = result.excluded_faces.into_iter().collect();
    let mut out = Vec::new();
    for face in cdt.inner_faces() {
        if excluded.contains(&face.fix()) {
            continue;
        }
        out.push(face.vertices().map(|v| {
            let p = v.position();
            [p.x, p.y]
        }));
    }
    Ok(out)
}
