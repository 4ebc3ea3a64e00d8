//! Gmsh MSH import and export.
//!
//! Import: MSH 4.1 (ASCII or binary) through the `mshio` crate; MSH 2.2
//! ASCII by the small parser in this module (mshio reads 4.1 only). mshio
//! skips `$PhysicalNames`, so that section is read here for both versions.
//! Triangles (types 2 and 9) make the mesh; lines (types 1 and 8) with a 1D
//! physical group tag boundary edges by the group's name; points (15) are
//! ignored; any other element type is an error.
//!
//! Regions come from 2D physical groups, in increasing group tag: a name
//! starting with "pml" (any case) is a PML, "surroundings", "air" or
//! "background" is the surrounding medium, anything else a body made of the
//! material of that name. Unnamed groups are called `group<tag>`. Boundary
//! edges with no 1D physical group are tagged `outer`; tagged lines that are
//! not on the boundary (interfaces) are ignored.
//!
//! Export: MSH 4.1 ASCII with one surface entity and physical group per
//! region (a body's group is named after its material), one curve entity and physical group per boundary tag, triangle
//! blocks in mesh order. Writes go to a temporary file in the target folder,
//! then are renamed over the target.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::Path;

use crate::{
    boundary_names, BoundaryTag, GeometryOrder, Mesh, MeshError, MeshParts, NodeId, Region,
    RegionId, RegionKind, Triangle,
};

fn gmsh_err(msg: impl Into<String>) -> MeshError {
    MeshError::Gmsh(msg.into())
}

/// One element as read, before conversion.
struct RawElement {
    kind: i32,
    nodes: Vec<u64>,
    /// Physical groups the element belongs to.
    groups: Vec<i32>,
}

/// File contents common to both versions.
#[derive(Default)]
struct RawMesh {
    nodes: Vec<(u64, [f64; 3])>,
    elements: Vec<RawElement>,
    names: HashMap<(i32, i32), String>,
}

/// Reads a Gmsh MSH file (4.1 ASCII/binary or 2.2 ASCII).
pub fn read_gmsh(path: impl AsRef<Path>) -> Result<Mesh, MeshError> {
    let path = path.as_ref();
    let bytes = std::fs::read(path).map_err(|e| MeshError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    })?;
    parse_gmsh(&bytes)
}

/// Parses the contents of a Gmsh MSH file (4.1 ASCII/binary or 2.2 ASCII).
pub fn parse_gmsh(bytes: &[u8]) -> Result<Mesh, MeshError> {
    let (version, file_type, data_size) = header(bytes)?;
    let mut raw = match version.as_str() {
        "4.1" => {
            if data_size != 8 {
                return Err(gmsh_err(format!(
                    "MSH 4.1 data size {data_size} is not supported (only 8)"
                )));
            }
            read_v41(bytes)?
        }
        v if v.starts_with("2.") || v == "2" => {
            if file_type != 0 {
                return Err(gmsh_err(
                    "binary MSH 2 files are not supported; save as ASCII or as MSH 4.1",
                ));
            }
            read_v22(bytes)?
        }
        v => {
            return Err(gmsh_err(format!(
                "MSH version {v} is not supported (use 4.1 or 2.2)"
            )))
        }
    };
    raw.names = physical_names(bytes)?;
    convert(raw)
}

/// Version, file type and data size from `$MeshFormat`.
fn header(bytes: &[u8]) -> Result<(String, i32, i32), MeshError> {
    let head = &bytes[..bytes.len().min(256)];
    let text = String::from_utf8_lossy(head);
    let mut lines = text.lines().map(str::trim).filter(|l| !l.is_empty());
    if lines.next() != Some("$MeshFormat") {
        return Err(gmsh_err(
            "not a Gmsh MSH file: it does not start with $MeshFormat",
        ));
    }
    let fields: Vec<&str> = lines.next().unwrap_or("").split_whitespace().collect();
    if fields.len() < 3 {
        return Err(gmsh_err(
            "the $MeshFormat line needs version, file type and data size",
        ));
    }
    let ft = fields[1]
        .parse::<i32>()
        .map_err(|_| gmsh_err(format!("bad file type '{}' in $MeshFormat", fields[1])))?;
    let ds = fields[2]
        .parse::<i32>()
        .map_err(|_| gmsh_err(format!("bad data size '{}' in $MeshFormat", fields[2])))?;
    if ft != 0 && ft != 1 {
        return Err(gmsh_err(format!(
            "file type {ft} in $MeshFormat is neither 0 (ASCII) nor 1 (binary)"
        )));
    }
    Ok((fields[0].to_string(), ft, ds))
}

/// Finds the text of section `$name` (between its start and end lines).
fn section<'a>(bytes: &'a [u8], name: &str) -> Option<&'a [u8]> {
    let start_tag = format!("${name}");
    let end_tag = format!("$End{name}");
    let find = |hay: &[u8], needle: &[u8], from: usize| -> Option<usize> {
        if needle.len() > hay.len() {
            return None;
        }
        (from..=hay.len() - needle.len()).find(|&i| {
            &hay[i..i + needle.len()] == needle
                && (i == 0 || hay[i - 1] == b'\n' || hay[i - 1] == b'\r')
                && hay
                    .get(i + needle.len())
                    .is_none_or(|c| c.is_ascii_whitespace())
        })
    };
    let s = find(bytes, start_tag.as_bytes(), 0)?;
    let body_start = s + start_tag.len();
    let e = find(bytes, end_tag.as_bytes(), body_start)?;
    Some(&bytes[body_start..e])
}

/// `$PhysicalNames`: `(dim, tag) -> name`.
fn physical_names(bytes: &[u8]) -> Result<HashMap<(i32, i32), String>, MeshError> {
    let mut names = HashMap::new();
    let Some(body) = section(bytes, "PhysicalNames") else {
        return Ok(names);
    };
    let text = String::from_utf8_lossy(body);
    let mut lines = text.lines().map(str::trim).filter(|l| !l.is_empty());
    let count: usize = lines
        .next()
        .and_then(|l| l.parse().ok())
        .ok_or_else(|| gmsh_err("$PhysicalNames: missing count"))?;
    for i in 0..count {
        let line = lines.next().ok_or_else(|| {
            gmsh_err(format!("$PhysicalNames: expected {count} names, found {i}"))
        })?;
        let mut it = line.splitn(3, char::is_whitespace);
        let dim = it.next().and_then(|s| s.parse::<i32>().ok());
        let tag = it.next().and_then(|s| s.parse::<i32>().ok());
        let name = it.next().map(|s| s.trim().trim_matches('"').to_string());
        match (dim, tag, name) {
            (Some(d), Some(t), Some(n)) => {
                names.insert((d, t), n);
            }
            _ => return Err(gmsh_err(format!("$PhysicalNames: bad line '{line}'"))),
        }
    }
    Ok(names)
}

fn read_v41(bytes: &[u8]) -> Result<RawMesh, MeshError> {
    // mshio 0.4 still has a few panicking paths on malformed input; turn
    // them into errors.
    let parsed =
        std::panic::catch_unwind(|| mshio::parse_msh_bytes(bytes).map_err(|e| format!("{e}")))
            .map_err(|_| gmsh_err("malformed MSH 4.1 file (the parser gave up)"))?;
    let msh = parsed.map_err(|e| gmsh_err(format!("malformed MSH 4.1 file: {e}")))?;
    let mut groups: HashMap<(i32, i32), Vec<i32>> = HashMap::new();
    if let Some(ent) = &msh.data.entities {
        for p in &ent.points {
            groups.insert((0, p.tag), p.physical_tags.clone());
        }
        for c in &ent.curves {
            groups.insert((1, c.tag), c.physical_tags.clone());
        }
        for s in &ent.surfaces {
            groups.insert((2, s.tag), s.physical_tags.clone());
        }
    }
    let mut raw = RawMesh::default();
    let nodes = msh
        .data
        .nodes
        .as_ref()
        .ok_or_else(|| gmsh_err("the file has no $Nodes section"))?;
    let mut next_tag = nodes.min_node_tag;
    for block in &nodes.node_blocks {
        match &block.node_tags {
            Some(tags) => {
                let mut by_index: Vec<(usize, u64)> = tags.iter().map(|(t, i)| (*i, *t)).collect();
                by_index.sort_unstable();
                for (i, t) in by_index {
                    let n = block
                        .nodes
                        .get(i)
                        .ok_or_else(|| gmsh_err("node tag index out of range"))?;
                    raw.nodes.push((t, [n.x, n.y, n.z]));
                }
            }
            None => {
                // Dense tags: mshio drops them; Gmsh writes them in block order.
                for n in &block.nodes {
                    raw.nodes.push((next_tag, [n.x, n.y, n.z]));
                    next_tag += 1;
                }
            }
        }
    }
    let elements = msh
        .data
        .elements
        .as_ref()
        .ok_or_else(|| gmsh_err("the file has no $Elements section"))?;
    for block in &elements.element_blocks {
        let kind = block.element_type as i32;
        let g = groups
            .get(&(block.entity_dim, block.entity_tag))
            .cloned()
            .unwrap_or_default();
        for e in &block.elements {
            raw.elements.push(RawElement {
                kind,
                nodes: e.nodes.clone(),
                groups: g.clone(),
            });
        }
    }
    Ok(raw)
}

/// Small tokenizer over one section's text.
struct Tokens<'a> {
    it: std::str::SplitAsciiWhitespace<'a>,
    what: &'static str,
}

impl<'a> Tokens<'a> {
    fn new(text: &'a str, what: &'static str) -> Self {
        Tokens {
            it: text.split_ascii_whitespace(),
            what,
        }
    }

    fn next<T: std::str::FromStr>(&mut self, field: &str) -> Result<T, MeshError> {
        let tok = self.it.next().ok_or_else(|| {
            gmsh_err(format!(
                "${}: unexpected end while reading {field}",
                self.what
            ))
        })?;
        tok.parse::<T>()
            .map_err(|_| gmsh_err(format!("${}: bad {field} '{tok}'", self.what)))
    }
}

/// The text of a required section.
fn section_text(bytes: &[u8], name: &str) -> Result<String, MeshError> {
    section(bytes, name)
        .map(|b| String::from_utf8_lossy(b).into_owned())
        .ok_or_else(|| gmsh_err(format!("the file has no ${name} section")))
}

fn read_v22(bytes: &[u8]) -> Result<RawMesh, MeshError> {
    let mut raw = RawMesh::default();
    let text = section_text(bytes, "Nodes")?;
    let mut t = Tokens::new(&text, "Nodes");
    let n: usize = t.next("node count")?;
    // Each node needs at least 8 bytes of text: bound allocations by the input.
    raw.nodes.reserve(n.min(text.len() / 8 + 1));
    for _ in 0..n {
        let tag: u64 = t.next("node tag")?;
        let x: f64 = t.next("x")?;
        let y: f64 = t.next("y")?;
        let z: f64 = t.next("z")?;
        raw.nodes.push((tag, [x, y, z]));
    }
    let text = section_text(bytes, "Elements")?;
    let mut t = Tokens::new(&text, "Elements");
    let n: usize = t.next("element count")?;
    raw.elements.reserve(n.min(text.len() / 8 + 1));
    for _ in 0..n {
        let _tag: u64 = t.next("element tag")?;
        let kind: i32 = t.next("element type")?;
        let ntags: usize = t.next("tag count")?;
        if ntags > 64 {
            return Err(gmsh_err(format!(
                "$Elements: implausible tag count {ntags}"
            )));
        }
        let mut tags = Vec::with_capacity(ntags);
        for _ in 0..ntags {
            tags.push(t.next::<i32>("element tag list")?);
        }
        let nn = nodes_of_type(kind)?;
        let mut nodes = Vec::with_capacity(nn);
        for _ in 0..nn {
            nodes.push(t.next::<u64>("element node")?);
        }
        // The first tag is the physical group (0: none).
        let groups = match tags.first() {
            Some(&p) if p != 0 => vec![p],
            _ => vec![],
        };
        raw.elements.push(RawElement {
            kind,
            nodes,
            groups,
        });
    }
    Ok(raw)
}

fn nodes_of_type(kind: i32) -> Result<usize, MeshError> {
    match kind {
        1 => Ok(2),
        2 => Ok(3),
        8 => Ok(3),
        9 => Ok(6),
        15 => Ok(1),
        k => Err(gmsh_err(format!(
            "unsupported element type {k} ({}); only triangles (2, 9), lines (1, 8) and points (15) can be read",
            type_name(k)
        ))),
    }
}

fn type_name(kind: i32) -> &'static str {
    match kind {
        3 => "4-node quadrangle",
        4 => "4-node tetrahedron",
        5 => "8-node hexahedron",
        6 => "6-node prism",
        7 => "5-node pyramid",
        10 => "9-node quadrangle",
        11 => "10-node tetrahedron",
        16 => "8-node quadrangle",
        20..=22 => "higher-order triangle",
        _ => "not a planar triangle or line",
    }
}

/// Region kind from a physical group name.
pub(crate) fn region_kind(name: &str) -> RegionKind {
    let lower = name.to_ascii_lowercase();
    if lower.starts_with("pml") {
        RegionKind::Pml
    } else if matches!(lower.as_str(), "surroundings" | "air" | "background") {
        RegionKind::Surroundings
    } else {
        RegionKind::Body {
            material: name.to_string(),
        }
    }
}

fn convert(raw: RawMesh) -> Result<Mesh, MeshError> {
    let mut index: HashMap<u64, u32> = HashMap::with_capacity(raw.nodes.len());
    let mut points = Vec::with_capacity(raw.nodes.len());
    let scale = raw
        .nodes
        .iter()
        .map(|(_, p)| p[0].abs().max(p[1].abs()))
        .fold(0.0, f64::max);
    for (tag, p) in &raw.nodes {
        if !(p[0].is_finite() && p[1].is_finite() && p[2].is_finite()) {
            return Err(gmsh_err(format!("node {tag} has a non-finite coordinate")));
        }
        if p[2].abs() > 1e-9 * scale.max(f64::MIN_POSITIVE) {
            return Err(gmsh_err(format!(
                "node {tag} has z = {:e}: the mesh must lie in the plane z = 0",
                p[2]
            )));
        }
        if index.insert(*tag, points.len() as u32).is_some() {
            return Err(gmsh_err(format!("node tag {tag} appears twice")));
        }
        points.push([p[0], p[1]]);
    }
    let node = |tag: u64| -> Result<NodeId, MeshError> {
        index.get(&tag).map(|&i| NodeId(i)).ok_or_else(|| {
            gmsh_err(format!(
                "an element refers to node {tag}, which is not defined"
            ))
        })
    };

    let mut order = None;
    let mut tri_groups: Vec<i32> = Vec::new();
    let mut tris: Vec<[NodeId; 6]> = Vec::new();
    let mut lines: Vec<([NodeId; 2], i32)> = Vec::new();
    for (i, e) in raw.elements.iter().enumerate() {
        let nn = nodes_of_type(e.kind)?;
        if e.nodes.len() != nn {
            return Err(gmsh_err(format!(
                "element {i} has {} nodes, expected {nn}",
                e.nodes.len()
            )));
        }
        match e.kind {
            2 | 9 => {
                let o = if e.kind == 2 {
                    GeometryOrder::Linear
                } else {
                    GeometryOrder::Quadratic
                };
                if *order.get_or_insert(o) != o {
                    return Err(gmsh_err("the file mixes 3-node and 6-node triangles"));
                }
                let group = match e.groups.as_slice() {
                    [] => {
                        return Err(gmsh_err(format!(
                            "missing physical groups: triangle {i} belongs to no 2D physical group; give every surface a physical group naming its material"
                        )))
                    }
                    [g] => *g,
                    _ => {
                        return Err(gmsh_err(format!(
                            "triangle {i} belongs to {} physical groups; a triangle needs exactly one",
                            e.groups.len()
                        )))
                    }
                };
                let mut n = [NodeId(0); 6];
                for (k, t) in e.nodes.iter().enumerate() {
                    n[k] = node(*t)?;
                }
                if e.kind == 2 {
                    n[3] = n[0];
                    n[4] = n[0];
                    n[5] = n[0];
                }
                tris.push(n);
                tri_groups.push(group);
            }
            1 | 8 => {
                if let Some(&g) = e.groups.first() {
                    lines.push(([node(e.nodes[0])?, node(e.nodes[1])?], g));
                }
            }
            _ => {}
        }
    }
    let order =
        order.ok_or_else(|| gmsh_err("the file has no triangles (element types 2 or 9)"))?;

    // Regions in increasing physical tag.
    let mut region_tags: Vec<i32> = tri_groups.clone();
    region_tags.sort_unstable();
    region_tags.dedup();
    if region_tags.len() > u16::MAX as usize {
        return Err(gmsh_err("too many physical groups"));
    }
    let regions: Vec<Region> = region_tags
        .iter()
        .map(|t| {
            let name = raw
                .names
                .get(&(2, *t))
                .cloned()
                .unwrap_or_else(|| format!("group{t}"));
            Region {
                kind: region_kind(&name),
                name,
            }
        })
        .collect();
    let region_of: HashMap<i32, u16> = region_tags
        .iter()
        .enumerate()
        .map(|(i, t)| (*t, i as u16))
        .collect();
    let triangles: Vec<Triangle> = tris
        .iter()
        .zip(&tri_groups)
        .map(|(n, g)| Triangle {
            nodes: *n,
            region: RegionId(region_of[g]),
        })
        .collect();

    // Boundary: edges used once.
    let mut count: HashMap<(u32, u32), u32> = HashMap::new();
    for t in &triangles {
        for k in 0..3 {
            let (a, b) = (t.nodes[k].0, t.nodes[(k + 1) % 3].0);
            *count.entry((a.min(b), a.max(b))).or_default() += 1;
        }
    }
    let mut line_tags: Vec<i32> = lines.iter().map(|l| l.1).collect();
    line_tags.sort_unstable();
    line_tags.dedup();
    let mut boundary_names: Vec<String> = line_tags
        .iter()
        .map(|t| {
            raw.names
                .get(&(1, *t))
                .cloned()
                .unwrap_or_else(|| format!("line{t}"))
        })
        .collect();
    let tag_of: HashMap<i32, u16> = line_tags
        .iter()
        .enumerate()
        .map(|(i, t)| (*t, i as u16))
        .collect();
    let mut tagged: HashMap<(u32, u32), BoundaryTag> = HashMap::new();
    for ([a, b], g) in &lines {
        let key = (a.0.min(b.0), a.0.max(b.0));
        if count.get(&key) == Some(&1) {
            tagged.entry(key).or_insert(BoundaryTag(tag_of[g]));
        }
    }
    let mut boundary_segments: Vec<([NodeId; 2], BoundaryTag)> = Vec::new();
    let mut keys: Vec<(u32, u32)> = count
        .iter()
        .filter(|(_, c)| **c == 1)
        .map(|(k, _)| *k)
        .collect();
    keys.sort_unstable();
    let mut default_tag = None;
    for k in keys {
        let tag = match tagged.get(&k) {
            Some(t) => *t,
            None => *default_tag.get_or_insert_with(|| {
                match boundary_names
                    .iter()
                    .position(|n| n == boundary_names::OUTER)
                {
                    Some(i) => BoundaryTag(i as u16),
                    None => {
                        boundary_names.push(boundary_names::OUTER.to_string());
                        BoundaryTag((boundary_names.len() - 1) as u16)
                    }
                }
            }),
        };
        boundary_segments.push(([NodeId(k.0), NodeId(k.1)], tag));
    }

    Mesh::new(MeshParts {
        points,
        order,
        triangles,
        regions,
        boundary_names,
        boundary_segments,
        domain: None,
    })
}

/// The MSH 4.1 ASCII text of `mesh` (see the module notes for the layout).
pub fn write_gmsh_string(mesh: &Mesh) -> String {
    let mut s = String::new();
    let quad = mesh.order() == GeometryOrder::Quadratic;
    let npt = mesh.order().nodes_per_triangle();
    let _ = writeln!(s, "$MeshFormat\n4.1 0 8\n$EndMeshFormat");
    let nreg = mesh.regions().len();
    let nbnd = mesh.boundary_names().len();
    let _ = writeln!(s, "$PhysicalNames\n{}", nreg + nbnd);
    for (i, name) in mesh.boundary_names().iter().enumerate() {
        let _ = writeln!(s, "1 {} \"{}\"", i + 1, name.replace('"', "'"));
    }
    for (i, r) in mesh.regions().iter().enumerate() {
        // A body's group is named after its material, so that reading the
        // file back gives the same material.
        let name = match &r.kind {
            RegionKind::Body { material } => material,
            _ => &r.name,
        };
        let _ = writeln!(s, "2 {} \"{}\"", i + 1, name.replace('"', "'"));
    }
    let _ = writeln!(s, "$EndPhysicalNames");
    // Entities: bounding boxes are not needed by readers; write the mesh box.
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in mesh.points() {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let bb = format!("{:e} {:e} 0 {:e} {:e} 0", lo[0], lo[1], hi[0], hi[1]);
    let _ = writeln!(s, "$Entities\n0 {nbnd} {nreg} 0");
    for i in 0..nbnd {
        let _ = writeln!(s, "{} {bb} 1 {} 0", i + 1, i + 1);
    }
    for i in 0..nreg {
        let _ = writeln!(s, "{} {bb} 1 {} 0", i + 1, i + 1);
    }
    let _ = writeln!(s, "$EndEntities");
    let n = mesh.points().len();
    let _ = writeln!(s, "$Nodes\n1 {n} 1 {n}\n2 1 0 {n}");
    for i in 1..=n {
        let _ = writeln!(s, "{i}");
    }
    for p in mesh.points() {
        let _ = writeln!(s, "{:e} {:e} 0", p[0], p[1]);
    }
    let _ = writeln!(s, "$EndNodes");

    // Triangle blocks: runs of equal region, in mesh order.
    let tris = mesh.triangles();
    let mut runs: Vec<(usize, usize)> = Vec::new();
    for (i, t) in tris.iter().enumerate() {
        match runs.last_mut() {
            Some((start, end)) if tris[*start].region == t.region && *end == i => *end = i + 1,
            _ => runs.push((i, i + 1)),
        }
    }
    // Boundary lines grouped by tag, with the quadratic mid node from the
    // adjacent triangle.
    let mut mid_of: HashMap<(u32, u32), NodeId> = HashMap::new();
    if quad {
        for t in tris {
            for k in 0..3 {
                let (a, b) = (t.nodes[k].0, t.nodes[(k + 1) % 3].0);
                mid_of.insert((a.min(b), a.max(b)), t.nodes[3 + k]);
            }
        }
    }
    let mut by_tag: Vec<Vec<[u32; 3]>> = vec![Vec::new(); nbnd];
    for b in mesh.boundary() {
        let [a, c] = mesh.edges()[b.edge.idx()];
        let m = mid_of.get(&(a.0, c.0)).map(|m| m.0).unwrap_or(a.0);
        by_tag[b.tag.0 as usize].push([a.0, c.0, m]);
    }
    let nonempty = by_tag.iter().filter(|v| !v.is_empty()).count();
    let nelem = tris.len() + mesh.boundary().len();
    let _ = writeln!(s, "$Elements\n{} {nelem} 1 {nelem}", runs.len() + nonempty);
    let mut tag = 1usize;
    let (line_type, tri_type) = if quad { (8, 9) } else { (1, 2) };
    for (i, lines) in by_tag.iter().enumerate() {
        if lines.is_empty() {
            continue;
        }
        let _ = writeln!(s, "1 {} {line_type} {}", i + 1, lines.len());
        for l in lines {
            if quad {
                let _ = writeln!(s, "{tag} {} {} {}", l[0] + 1, l[1] + 1, l[2] + 1);
            } else {
                let _ = writeln!(s, "{tag} {} {}", l[0] + 1, l[1] + 1);
            }
            tag += 1;
        }
    }
    for (start, end) in runs {
        let _ = writeln!(
            s,
            "2 {} {tri_type} {}",
            tris[start].region.0 as usize + 1,
            end - start
        );
        for t in &tris[start..end] {
            let _ = write!(s, "{tag}");
            for n in &t.nodes[..npt] {
                let _ = write!(s, " {}", n.0 + 1);
            }
            let _ = writeln!(s);
            tag += 1;
        }
    }
    let _ = writeln!(s, "$EndElements");
    s
}

/// Writes `mesh` as MSH 4.1 ASCII, atomically (temporary file in the same
/// folder, then rename).
pub fn write_gmsh(mesh: &Mesh, path: impl AsRef<Path>) -> Result<(), MeshError> {
    let path = path.as_ref();
    let io = |e: std::io::Error| MeshError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => std::path::PathBuf::from("."),
    };
    let name = path
        .file_name()
        .ok_or_else(|| io(std::io::Error::other("the path has no file name")))?;
    let tmp = dir.join(format!(
        ".{}.{}.tmp",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| {
        use std::io::Write;
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(write_gmsh_string(mesh).as_bytes())?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(io)
}
