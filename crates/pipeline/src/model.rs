//! From a case to a finite-element model: the mesh (made or read), the setup
//! (placement, PML, materials, walls) and the geometric facts the other stages read.
use std::time::Instant;

use twistmode_fem::{
    Material as FemMaterial, MaterialTable, Order, Placement, PmlProfile, PmlStretch, SectionSetup,
    Wall,
};
use twistmode_io::case::{Body, Case, MeshSource, Midplane, ModeOrder, SurroundingMedium};
use twistmode_mesh::{boundary_names, GeometryOrder, Mesh, PmlGeometry};

use crate::{MeshFacts, PipelineError};

/// Makes or reads the mesh of a case.
pub fn build_mesh(case: &Case) -> Result<(Mesh, MeshFacts), PipelineError> {
    let start = Instant::now();
    let mesh = match case.mesh_source()? {
        MeshSource::Generate(spec) => match twistmode_mesh::generate(&spec) {
            // A polygon with vertices on both mirror lines cannot be cut into quarters;
            // the pi-symmetric mesh still serves (a general, not symmetric, pencil).
            Err(twistmode_mesh::MeshError::Geometry { field, .. })
                if spec.mirror_symmetric && field == "mirror_symmetric" =>
            {
                let mut plain = spec.clone();
                plain.mirror_symmetric = false;
                twistmode_mesh::generate(&plain)?
            }
            other => other?,
        },
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
/// or about the body's centre (rings, guides).
fn imported_pml(case: &Case, mesh: &Mesh) -> Option<PmlGeometry> {
    let centre = match case.body {
        Body::Revolution => [0.0, 0.0],
        _ => mesh.body_box()?.centre(),
    };
    mesh.infer_radial_pml(centre)
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
