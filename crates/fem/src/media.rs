//! Materials: complex, possibly anisotropic, relative permittivity and permeability.
use std::collections::HashMap;

use num_complex::Complex64 as c64;
use twistmode_mesh::{Mesh, RegionKind};

use crate::error::FemError;
use crate::tensor::{inverse3, scalar3, Tensor3};

/// Relative permittivity and permeability tensors of one material, in the
/// Cartesian laboratory frame (SI: relative, dimensionless).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Material {
    /// Relative permittivity tensor.
    pub eps: Tensor3,
    /// Relative permeability tensor.
    pub mu: Tensor3,
}

impl Material {
    /// Vacuum (`eps = mu = I`).
    pub fn vacuum() -> Material {
        Material::isotropic(c64::new(1.0, 0.0))
    }

    /// Isotropic, non-magnetic material of relative permittivity `eps_r`
    /// (for loss use `Im eps_r > 0`, matching the `exp(-i omega t)` convention).
    pub fn isotropic(eps_r: c64) -> Material {
        Material {
            eps: scalar3(eps_r),
            mu: scalar3(c64::new(1.0, 0.0)),
        }
    }

    /// Isotropic, non-magnetic material of refractive index `n` (`eps_r = n^2`).
    pub fn with_index(n: f64) -> Material {
        Material::isotropic(c64::new(n * n, 0.0))
    }

    /// Anisotropic material; both tensors must be invertible.
    pub fn try_anisotropic(eps: Tensor3, mu: Tensor3) -> Result<Material, FemError> {
        if inverse3(&eps).is_none() {
            return Err(FemError::SingularTensor {
                what: "permittivity",
            });
        }
        if inverse3(&mu).is_none() {
            return Err(FemError::SingularTensor {
                what: "permeability",
            });
        }
        Ok(Material { eps, mu })
    }
}

/// Which material fills each kind of region: body materials by name, and one
/// medium for the surroundings (also used, stretched, inside the PML).
#[derive(Clone, Debug, PartialEq)]
pub struct MaterialTable {
    /// Body materials by name (the names in [`RegionKind::Body`]).
    pub by_name: HashMap<String, Material>,
    /// Medium of the surroundings and of the PML.
    pub surroundings: Material,
}

impl MaterialTable {
    /// A table with one named body material and the given surroundings.
    pub fn single(name: &str, body: Material, surroundings: Material) -> MaterialTable {
        MaterialTable {
            by_name: HashMap::from([(name.to_string(), body)]),
            surroundings,
        }
    }

    /// The material of every region of `mesh`, indexed by region id.
    pub fn try_resolve(&self, mesh: &Mesh) -> Result<Vec<Material>, FemError> {
        mesh.regions()
            .iter()
            .map(|region| match &region.kind {
                RegionKind::Body { material } => {
                    self.by_name
                        .get(material)
                        .copied()
                        .ok_or_else(|| FemError::UnknownMaterial {
                            region: region.name.clone(),
                            material: material.clone(),
                        })
                }
                RegionKind::Surroundings | RegionKind::Pml => Ok(self.surroundings),
            })
            .collect()
    }
}
