//! The case file as written: every key optional, unknown keys refused.
//! Checks and unit conversion happen in `validate`.

use serde::Deserialize;
use std::collections::BTreeMap;

#[derive(Deserialize, Debug, Default)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawCase {
    pub units: Option<RawUnits>,
    pub body: Option<RawBody>,
    pub section: Option<RawSection>,
    #[serde(default)]
    pub materials: BTreeMap<String, RawMaterial>,
    #[serde(default)]
    pub surroundings: RawSurroundings,
    #[serde(default)]
    pub mesh: RawMesh,
    pub search: Option<RawSearch>,
    #[serde(default)]
    pub boundary: RawBoundary,
}

#[derive(Deserialize, Debug)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawUnits {
    pub length: Option<String>,
}

#[derive(Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub(crate) enum BodyKindName {
    Revolution,
    Ring,
    Straight,
}

#[derive(Deserialize, Debug)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawBody {
    pub kind: Option<BodyKindName>,
    pub radius: Option<f64>,
    pub half_turns: Option<i32>,
    pub twist_rate: Option<f64>,
}

#[derive(Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub(crate) enum ShapeName {
    Rectangle,
    Disc,
    Ellipse,
    Polygon,
    Gmsh,
}

#[derive(Deserialize, Debug)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSection {
    pub shape: Option<ShapeName>,
    pub width: Option<f64>,
    pub thickness: Option<f64>,
    pub radius: Option<f64>,
    pub corner_radius: Option<f64>,
    pub centre: Option<[f64; 2]>,
    pub material: Option<String>,
    pub semi_axes: Option<[f64; 2]>,
    pub vertices: Option<Vec<[f64; 2]>>,
    pub file: Option<String>,
}

/// A permittivity or permeability as written.
#[derive(Deserialize, Debug, Clone)]
#[serde(untagged)]
pub(crate) enum RawMaterialValue {
    Real(f64),
    Complex([f64; 2]),
    /// Rows of a 3x3 tensor in the laboratory frame (x, y, z).
    Tensor([[RawEntry; 3]; 3]),
}

/// One tensor entry: a number or `[re, im]`.
#[derive(Deserialize, Debug, Clone, Copy)]
#[serde(untagged)]
pub(crate) enum RawEntry {
    Real(f64),
    Complex([f64; 2]),
}

#[derive(Deserialize, Debug)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawMaterial {
    pub epsilon: Option<RawMaterialValue>,
    pub mu: Option<RawMaterialValue>,
}

#[derive(Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub(crate) enum SurroundingsKindName {
    Open,
    Metal,
}

#[derive(Deserialize, Debug, Default)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSurroundings {
    pub kind: Option<SurroundingsKindName>,
    pub epsilon: Option<RawMaterialValue>,
    pub padding: Option<f64>,
    pub pml_thickness: Option<f64>,
}

#[derive(Deserialize, Debug, Default)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawMesh {
    pub order: Option<u8>,
    pub resolution: Option<f64>,
    pub pi_symmetric: Option<bool>,
    pub mirror_symmetric: Option<bool>,
}

/// `search.harmonics`: a window half-width, or the word "auto".
#[derive(Deserialize, Debug, Clone)]
#[serde(untagged)]
pub(crate) enum RawHarmonics {
    Count(u32),
    Word(String),
}

/// A value that should carry a unit; a bare number is caught to say so.
#[derive(Deserialize, Debug, Clone)]
#[serde(untagged)]
pub(crate) enum RawQuantity {
    Text(String),
    Number(f64),
}

#[derive(Deserialize, Debug)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSearch {
    pub m: Option<f64>,
    pub beta: Option<f64>,
    pub near_frequency: Option<RawQuantity>,
    pub near_wavelength: Option<RawQuantity>,
    pub count: Option<u32>,
    pub harmonics: Option<RawHarmonics>,
    pub max_harmonics: Option<u32>,
    pub near_q: Option<f64>,
    pub tolerance: Option<f64>,
}

#[derive(Deserialize, Debug, Clone, Copy, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub(crate) enum MidplaneName {
    None,
    Electric,
    Magnetic,
}

#[derive(Deserialize, Debug, Default)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawBoundary {
    pub midplane: Option<MidplaneName>,
}
