//! From a case to a finite-element model: the mesh (made or read), the setup
//! (placement, PML, materials, walls) and the geometric facts the other stages read.
use std::time::Instant;

use twistmode_fem::{
    Material as FemMaterial, MaterialTable, Order, Placement, PmlProfile, PmlStretch, SectionSetup,
    Wall,
};
use twistmode_io::case::{Body, Case, MeshSource, Midplane, ModeOrder, SurroundingMedium};
use twistmode_mesh::{boundary_names, GeometryOrder, Mesh, PmlGeometry, RegionKind};

use crate::{MeshFacts, PipelineError};

/// Makes or reads the mesh of a case.
pub fn build_mesh(case: &Case) -> Result<(Mesh, MeshFacts), PipelineError> {
    let start = Instant::now();
    let mesh = match case.mesh_source()? {
        MeshSource::Generate(spec) => twistmode_mesh::generate(&spec)?,
        MeshSource::Gmsh {
            path,
            metres_per_unit,
        } => twistmode_mesh::read_gmsh(&path)?.scaled(metres_per_unit),
    };
    let q = mesh.quality();
    let facts = MeshFacts {
        triangles: q.triangles,
        nodes: q.nodes,
        order: match mesh.order() {
            GeometryOrder::Linear => 1,
            GeometryOrder::Quadratic => 2,
        },
        min_angle_deg: q.min_angle_deg,
        max_aspect: q.max_aspect,
        seconds: start.elapsed().as_secs_f64(),
    };
    Ok((mesh, facts))
}

/// Refractive index of the surroundings (1 for a metal cavity, whose walls
/// leave no outside).
pub(crate) fn outer_index(case: &Case) -> f64 {
    match case.surroundings {
        SurroundingMedium::Open { epsilon, .. } => epsilon.norm().sqrt(),
        SurroundingMedium::Metal => 1.0,
    }
}

/// A mesh read from a Gmsh file carries no PML geometry: when it has a PML
/// region, take it as a radial shell about the origin (bodies of revolution)
/// or about the body's centre (rings, guides), from the nearest and farthest
/// PML vertex.
fn imported_pml(case: &Case, mesh: &Mesh) -> Option<PmlGeometry> {
    let centre = match case.body {
        Body::Revolution => [0.0, 0.0],
        _ => {
            let b = body_box(mesh);
            [0.5 * (b[0] + b[1]), 0.5 * (b[2] + b[3])]
        }
    };
    let (mut inner, mut outer) = (f64::INFINITY, 0.0f64);
    for t in mesh.triangles() {
        if mesh.regions()[t.region.idx()].kind == RegionKind::Pml {
            for n in t.vertices() {
                let p = mesh.points()[n.idx()];
                let d = (p[0] - centre[0]).hypot(p[1] - centre[1]);
                inner = inner.min(d);
                outer = outer.max(d);
            }
        }
    }
    (outer > inner).then_some(PmlGeometry::Radial {
        centre,
        inner,
        outer,
    })
}

/// The finite-element setup of a case on its mesh.
pub fn set_up(case: &Case, mesh: &Mesh) -> Result<SectionSetup, PipelineError> {
    let placement = match case.body {
        Body::Revolution => Placement::Revolution,
        Body::Ring { radius, half_turns } => Placement::Ring {
            radius,
            half_turns: f64::from(half_turns),
        },
        Body::Straight { twist_rate } => Placement::Straight { twist_rate },
    };
    let order = match case.mesh.order {
        GeometryOrder::Linear => Order::One,
        GeometryOrder::Quadratic => Order::Two,
    };
    let k0 = case.search.k0();
    let n_out = outer_index(case);
    let pml = match mesh
        .domain()
        .map(|d| d.pml)
        .or_else(|| imported_pml(case, mesh))
    {
        Some(geometry @ PmlGeometry::Radial { inner, outer, .. }) => PmlStretch::from_geometry(
            &geometry,
            PmlProfile::for_wavenumber(k0, n_out, outer - inner),
        ),
        Some(geometry @ PmlGeometry::Cartesian { inner, outer }) => {
            let thickness = (0..4)
                .map(|i| (outer[i] - inner[i]).abs())
                .fold(0.0, f64::max);
            PmlStretch::from_geometry(&geometry, PmlProfile::for_wavenumber(k0, n_out, thickness))
        }
        _ => PmlStretch::None,
    };
    let surroundings = match case.surroundings {
        SurroundingMedium::Open { epsilon, .. } => FemMaterial::isotropic(epsilon),
        SurroundingMedium::Metal => FemMaterial::vacuum(),
    };
    let mut materials = MaterialTable::single("", FemMaterial::vacuum(), surroundings);
    materials.by_name.clear();
    for (name, m) in &case.materials {
        let fm = FemMaterial {
            eps: m.epsilon,
            mu: m.mu,
        };
        materials.by_name.insert(name.clone(), fm);
    }
    let mut walls = Vec::new();
    if mesh.boundary_tag(boundary_names::OUTER).is_some() {
        walls.push((boundary_names::OUTER.to_string(), Wall::ElectricConductor));
    }
    if mesh.boundary_tag(boundary_names::MIDPLANE).is_some() {
        match case.midplane {
            Midplane::Electric => walls.push((
                boundary_names::MIDPLANE.to_string(),
                Wall::ElectricConductor,
            )),
            Midplane::Magnetic | Midplane::None => walls.push((
                boundary_names::MIDPLANE.to_string(),
                Wall::MagneticConductor,
            )),
        }
    }
    Ok(SectionSetup {
        order,
        placement,
        pml,
        materials,
        walls,
    })
}

/// The order the pencil is assembled for: azimuthal order, or beta.
pub(crate) fn mode_order(case: &Case) -> f64 {
    match case.search.order {
        ModeOrder::Azimuthal(m) => m.value(),
        ModeOrder::Propagation { beta } => beta,
    }
}

/// The radius the azimuthal phase of a ring is referred to: `body.radius`
/// for rings, the section centre's distance from the axis for a section of
/// revolution off the axis (a ring meshed in the half plane); `None` otherwise.
pub fn reference_radius(case: &Case) -> Option<f64> {
    match case.body {
        Body::Ring { radius, .. } => Some(radius),
        Body::Revolution if case.section.centre[0] > 0.0 => Some(case.section.centre[0]),
        _ => None,
    }
}

/// Bounding box `[u_min, u_max, v_min, v_max]` of the body regions.
pub fn body_box(mesh: &Mesh) -> [f64; 4] {
    let mut b = [
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    ];
    for t in mesh.triangles() {
        if matches!(mesh.regions()[t.region.idx()].kind, RegionKind::Body { .. }) {
            for n in t.vertices() {
                let p = mesh.points()[n.idx()];
                b[0] = b[0].min(p[0]);
                b[1] = b[1].max(p[0]);
                b[2] = b[2].min(p[1]);
                b[3] = b[3].max(p[1]);
            }
        }
    }
    b
}

/// Smallest distance from the axis at which the PML starts (bodies with an axis).
pub(crate) fn pml_start_from_axis(case: &Case, mesh: &Mesh) -> Option<f64> {
    let geometry = mesh.domain()?.pml;
    match (case.body, geometry) {
        (Body::Revolution, PmlGeometry::Radial { centre, inner, .. }) => {
            // Outer side of the equator: the PML circle's farthest reach from the axis.
            Some(centre[0] + inner)
        }
        (Body::Ring { radius, .. }, PmlGeometry::Radial { inner, .. }) => Some(radius + inner),
        (_, PmlGeometry::None) => None,
        _ => None,
    }
}
