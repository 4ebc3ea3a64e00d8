//! Case files: a TOML description of one resonator and one search, read into
//! a validated [`Case`] in SI units (metres, Hz, rad/m).
//!
//! Reading goes in four steps, each with errors that name the key:
//! 1. parse the TOML text into a tree;
//! 2. apply `--set path=value` overrides to the tree;
//! 3. deserialise into raw structs that refuse unknown keys (with the closest
//!    valid key suggested);
//! 4. validate and convert units (`validate`), refusing non-physical input.
//!
//! Every key, its unit and its default are listed in `docs/case-files.md`.

mod error;
mod overrides;
mod raw;
mod shape;
mod validate;

pub use error::CaseError;
pub use overrides::parse_set_argument;

use crate::units::{LengthUnit, SPEED_OF_LIGHT};
use num_complex::Complex64;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use twistmode_mesh::{
    BodySpec, DomainKind, GeneratorSpec, GeometryOrder, SectionShape, Surroundings,
};

/// Smallest interior angle asked of the mesh generator, degrees (common practice: 25-30).
pub const MIN_ANGLE_DEG: f64 = 28.0;
/// Default `mesh.resolution`: elements per local wavelength.
pub const DEFAULT_RESOLUTION: f64 = 10.0;
/// Default `surroundings.padding` and `surroundings.pml_thickness`, in local
/// wavelengths of the surrounding medium.
pub const DEFAULT_LAYER_WAVELENGTHS: f64 = 0.5;
/// Default `search.count`.
pub const DEFAULT_COUNT: usize = 6;
/// Default `search.tolerance`: relative change of `k0` between harmonic windows.
pub const DEFAULT_HARMONIC_TOLERANCE: f64 = 1e-6;
/// First K tried with `search.harmonics = "auto"`.
pub const AUTO_FIRST_HARMONICS: u32 = 2;
/// Default `search.max_harmonics` with `search.harmonics = "auto"`.
pub const DEFAULT_MAX_HARMONICS: u32 = 10;
/// Default `search.harmonics` for twisted rings.
pub const DEFAULT_TWISTED_HARMONICS: u32 = 4;

/// A validated case, SI units throughout.
#[derive(Clone, Debug, PartialEq)]
pub struct Case {
    /// Length unit of the file (used again for output and plot axes).
    pub length_unit: LengthUnit,
    /// What kind of body, with its placement.
    pub body: Body,
    /// The cross-section.
    pub section: Section,
    /// Materials by name.
    pub materials: BTreeMap<String, Material>,
    /// What surrounds the body.
    pub surroundings: SurroundingMedium,
    /// Mesh settings.
    pub mesh: MeshSettings,
    /// Which modes to look for.
    pub search: Search,
    /// Condition on the plane z = 0 (bodies of revolution only).
    pub midplane: Midplane,
}

/// The body kind and the numbers that place the section in space.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Body {
    /// Rotation of the section about the z axis; the section lives in the (r, z) half plane.
    Revolution,
    /// A ring: the section sits at distance `radius` (metres) from the axis and
    /// turns by `half_turns * pi` in one round trip (negative: the opposite handedness).
    Ring {
        /// Distance from the ring axis to the section centre, metres.
        radius: f64,
        /// Number of half turns of the section per round trip.
        half_turns: i32,
    },
    /// A straight guide along z whose section turns at `twist_rate` rad/m.
    Straight {
        /// Twist rate, rad/m (0 for an untwisted guide).
        twist_rate: f64,
    },
}

impl Body {
    /// Twist per radian of azimuth for rings, `tau = half_turns / 2`; 0 otherwise.
    pub fn tau(&self) -> f64 {
        match self {
            Body::Ring { half_turns, .. } => f64::from(*half_turns) / 2.0,
            _ => 0.0,
        }
    }
    /// True for rings with a nonzero number of half turns (either handedness).
    pub fn is_twisted_ring(&self) -> bool {
        matches!(self, Body::Ring { half_turns, .. } if *half_turns != 0)
    }
}

/// The cross-section: its outline and where its centre sits.
#[derive(Clone, Debug, PartialEq)]
pub struct Section {
    /// Built-in shape with its material, or a Gmsh file.
    pub outline: SectionOutline,
    /// Centre of the shape in domain coordinates, metres: `(r, z)` for
    /// revolution bodies, an offset from the twist axis for straight guides,
    /// `[0, 0]` for rings.
    pub centre: [f64; 2],
}

/// Where the section's geometry comes from.
#[derive(Clone, Debug, PartialEq)]
pub enum SectionOutline {
    /// A built-in shape (in metres, centre at the origin) made of one material.
    Shape {
        /// The shape.
        shape: SectionShape,
        /// Name of its material (a key of [`Case::materials`]).
        material: String,
    },
    /// A Gmsh mesh file; its physical groups name materials and `pml`.
    Gmsh {
        /// Path, resolved against the case file's folder.
        file: PathBuf,
    },
}

/// A 3x3 complex tensor, rows first.
pub type Tensor = [[Complex64; 3]; 3];

/// `value` times the identity.
pub fn scalar_tensor(value: Complex64) -> Tensor {
    let zero = Complex64::new(0.0, 0.0);
    let mut t = [[zero; 3]; 3];
    for (i, row) in t.iter_mut().enumerate() {
        row[i] = value;
    }
    t
}

/// A material: relative permittivity and permeability tensors in the laboratory frame
/// `(x, y, z)` — `z` the axis of a body of revolution or ring, or the axis of a straight
/// guide. Loss is a positive imaginary part under the `exp(-i omega t)` convention.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Material {
    /// Relative permittivity tensor.
    pub epsilon: Tensor,
    /// Relative permeability tensor.
    pub mu: Tensor,
}

impl Material {
    /// An isotropic material.
    pub fn isotropic(epsilon: Complex64, mu: Complex64) -> Material {
        Material {
            epsilon: scalar_tensor(epsilon),
            mu: scalar_tensor(mu),
        }
    }

    /// Whether both tensors are multiples of the identity.
    pub fn is_isotropic(&self) -> bool {
        let iso = |t: &Tensor| *t == scalar_tensor(t[0][0]);
        iso(&self.epsilon) && iso(&self.mu)
    }

    /// Modulus of the largest refractive index, `sqrt(max |epsilon_ii| max |mu_ii|)`
    /// (`sqrt(|epsilon mu|)` for an isotropic material); sets element sizes.
    pub fn index_modulus(&self) -> f64 {
        let largest = |t: &Tensor| (0..3).map(|i| t[i][i].norm()).fold(0.0, f64::max);
        (largest(&self.epsilon) * largest(&self.mu)).sqrt()
    }
}

/// What surrounds the body.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SurroundingMedium {
    /// An open problem: a medium, then a PML.
    Open {
        /// Relative permittivity of the medium (mu = 1).
        epsilon: Complex64,
        /// Medium thickness between the body's bounding circle (or box) and the PML, metres.
        padding: f64,
        /// PML thickness, metres (0: the outer boundary is a wall).
        pml_thickness: f64,
    },
    /// No surroundings: the section outline is a perfectly conducting wall.
    Metal,
}

/// Mesh settings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MeshSettings {
    /// Geometry (and element) order.
    pub order: GeometryOrder,
    /// Elements per local wavelength.
    pub resolution: f64,
    /// Mesh half the section and rotate the copy by pi.
    pub pi_symmetric: bool,
    /// With `pi_symmetric`: mesh a quarter and mirror it first, so the mesh is also
    /// invariant under `v -> -v` (twisted-ring pencils become complex-symmetric).
    pub mirror_symmetric: bool,
}

/// Which modes to look for.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Search {
    /// The order of the modes (azimuthal for revolution and rings,
    /// propagation constant for straight guides).
    pub order: ModeOrder,
    /// Look for resonances near this frequency, Hz.
    pub near_frequency: f64,
    /// How many modes to find.
    pub count: usize,
    /// Fourier window half-width K for twisted rings (harmonics m + k tau, |k| <= K); 0
    /// otherwise. With `search.harmonics = "auto"`, the first K tried.
    pub harmonics: u32,
    /// With `search.harmonics = "auto"`: the largest K tried (`search.max_harmonics`);
    /// `None` for a fixed K.
    pub max_harmonics: Option<u32>,
    /// Expected quality factor of the resonances sought (`search.near_q`):
    /// with it the search is centred on the complex wavenumber
    /// `k0 (1 - i / (2 Q))` instead of the real `k0`; `None` searches near the real `k0`.
    pub near_q: Option<f64>,
    /// Twisted rings: the relative change of `k0` between the windows `K - 1` and `K`
    /// below which a mode counts as converged in the harmonics (`search.tolerance`).
    pub harmonic_tolerance: f64,
}

impl Search {
    /// Free-space wavelength at the target frequency, metres.
    pub fn free_space_wavelength(&self) -> f64 {
        SPEED_OF_LIGHT / self.near_frequency
    }
    /// Free-space wavenumber at the target frequency, rad/m.
    pub fn k0(&self) -> f64 {
        2.0 * std::f64::consts::PI * self.near_frequency / SPEED_OF_LIGHT
    }
    /// Complex target wavenumber `(Re, Im)`, rad/m: `k0 (1 - i / (2 Q))` with
    /// `Q = near_q` (time dependence `exp(-i omega t)`, so radiating modes
    /// have `Im k0 < 0`), or `(k0, 0)` without `near_q`.
    pub fn complex_k0(&self) -> (f64, f64) {
        let k0 = self.k0();
        match self.near_q {
            Some(q) => (k0, -k0 / (2.0 * q)),
            None => (k0, 0.0),
        }
    }
}

/// The order that labels the modes searched for.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ModeOrder {
    /// Azimuthal order m (integer, or half-integer for odd-twist rings).
    Azimuthal(AzimuthalOrder),
    /// Propagation constant of a straight guide, rad/m.
    Propagation {
        /// beta, rad/m.
        beta: f64,
    },
}

/// An azimuthal order that is an integer or a half-integer, stored exactly.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct AzimuthalOrder {
    twice: i64,
}

impl AzimuthalOrder {
    /// From twice the order (`5` means m = 2.5).
    pub fn from_twice(twice: i64) -> Self {
        AzimuthalOrder { twice }
    }
    /// Twice the order, an exact integer.
    pub fn twice(self) -> i64 {
        self.twice
    }
    /// The order as a number.
    pub fn value(self) -> f64 {
        self.twice as f64 / 2.0
    }
    /// True when the order is a half-integer.
    pub fn is_half_integer(self) -> bool {
        self.twice % 2 != 0
    }
}

/// Condition on the plane z = 0 for bodies of revolution meshed in the upper half only.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Midplane {
    /// The whole (r, z) half plane is meshed.
    None,
    /// Tangential E = 0 on z = 0 (perfect electric conductor).
    Electric,
    /// Tangential H = 0 on z = 0 (perfect magnetic conductor).
    Magnetic,
}

/// Where the mesh of a case comes from.
#[derive(Clone, Debug, PartialEq)]
pub enum MeshSource {
    /// The built-in generator, with this request.
    Generate(GeneratorSpec),
    /// A Gmsh file whose coordinates are in the case's length unit.
    Gmsh {
        /// The file.
        path: PathBuf,
        /// Metres per file coordinate unit (the case's `units.length`).
        metres_per_unit: f64,
    },
}

impl Case {
    /// Reads a case from TOML text, after applying `--set` overrides
    /// (`(dotted path, value)` pairs). Relative file paths are taken as given.
    pub fn from_toml_str(text: &str, overrides: &[(String, String)]) -> Result<Case, CaseError> {
        Self::from_toml_str_in(text, overrides, Path::new(""))
    }

    /// Reads a case file; relative file paths in it are resolved against its folder.
    pub fn load(path: &Path, overrides: &[(String, String)]) -> Result<Case, CaseError> {
        let text = std::fs::read_to_string(path).map_err(|e| {
            CaseError::new(
                path.display().to_string(),
                format!("cannot read the case file: {e}"),
                "check the path and the file's permissions",
            )
        })?;
        let base = path.parent().unwrap_or(Path::new(""));
        Self::from_toml_str_in(&text, overrides, base)
    }

    fn from_toml_str_in(
        text: &str,
        overrides: &[(String, String)],
        base_dir: &Path,
    ) -> Result<Case, CaseError> {
        let mut tree: toml::Table = text.parse().map_err(|e| syntax_error(text, &e))?;
        for (path, value) in overrides {
            overrides::apply(&mut tree, path, value)?;
        }
        let raw: raw::RawCase = serde_path_to_error::deserialize(toml::Value::Table(tree))
            .map_err(validate::deserialise_error)?;
        validate::validate(raw, base_dir)
    }

    /// Free-space wavelength at the target frequency, metres.
    pub fn free_space_wavelength(&self) -> f64 {
        self.search.free_space_wavelength()
    }

    /// The body's material (`None` for Gmsh sections, whose regions name their own).
    pub fn body_material(&self) -> Option<(&str, &Material)> {
        match &self.section.outline {
            SectionOutline::Shape { material, .. } => {
                self.materials.get(material).map(|m| (material.as_str(), m))
            }
            SectionOutline::Gmsh { .. } => None,
        }
    }

    /// The domain kind the body needs.
    pub fn domain_kind(&self) -> DomainKind {
        match self.body {
            Body::Revolution => DomainKind::HalfPlane,
            Body::Ring { .. } => DomainKind::Disc,
            Body::Straight { .. } => DomainKind::Box,
        }
    }

    /// Where the mesh comes from: the built-in generator or a Gmsh file.
    pub fn mesh_source(&self) -> Result<MeshSource, CaseError> {
        match &self.section.outline {
            SectionOutline::Gmsh { file } => Ok(MeshSource::Gmsh {
                path: file.clone(),
                metres_per_unit: self.length_unit.metres(),
            }),
            SectionOutline::Shape { .. } => self.generator_spec().map(MeshSource::Generate),
        }
    }

    /// The mesh request for the built-in generator.
    ///
    /// Element sizes: `lambda0 / (n * resolution)` in the body with
    /// `n = sqrt(|eps mu|)`, capped at half the section's hydraulic diameter
    /// (`4 A / P`) so that thin sections get at least two elements across;
    /// `lambda0 / (n_s * resolution)` in the surroundings and PML.
    pub fn generator_spec(&self) -> Result<GeneratorSpec, CaseError> {
        let (shape, material) = match &self.section.outline {
            SectionOutline::Shape { shape, material } => (shape, material),
            SectionOutline::Gmsh { file } => {
                return Err(CaseError::new(
                    "section.shape",
                    format!(
                        "the section comes from the Gmsh file {}, so there is nothing to generate",
                        file.display()
                    ),
                    "read the mesh from the file (Case::mesh_source gives its path)",
                ))
            }
        };
        let body_material = self.materials.get(material).ok_or_else(|| {
            CaseError::new(
                "section.material",
                format!("no material named '{material}'"),
                format!("add a table [materials.{material}]"),
            )
        })?;
        let lambda0 = self.free_space_wavelength();
        let resolution = self.mesh.resolution;
        let body_edge = (lambda0 / (body_material.index_modulus() * resolution))
            .min(0.5 * shape::hydraulic_diameter(shape));
        let surroundings = match self.surroundings {
            SurroundingMedium::Metal => Surroundings::None,
            SurroundingMedium::Open {
                epsilon,
                padding,
                pml_thickness,
            } => Surroundings::Medium {
                padding,
                pml_thickness,
                max_edge: lambda0 / (epsilon.norm().sqrt() * resolution),
            },
        };
        Ok(GeneratorSpec {
            domain: self.domain_kind(),
            body: BodySpec {
                shape: shape.clone(),
                centre: self.section.centre,
                material: material.clone(),
                max_edge: body_edge,
            },
            surroundings,
            order: self.mesh.order,
            pi_symmetric: self.mesh.pi_symmetric,
            mirror_symmetric: self.mesh.mirror_symmetric,
            upper_half_only: self.midplane != Midplane::None,
            min_angle_deg: MIN_ANGLE_DEG,
        })
    }
}

/// A TOML syntax error, located by line and column.
fn syntax_error(text: &str, e: &toml::de::Error) -> CaseError {
    let key = match e.span() {
        Some(span) => {
            let before = &text[..span.start.min(text.len())];
            let line = before.matches('\n').count() + 1;
            let column = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
            format!("line {line}, column {column}")
        }
        None => "(syntax)".to_string(),
    };
    CaseError::new(
        key,
        format!("not valid TOML: {}", e.message().trim()),
        "correct the TOML syntax there (strings need quotes, tables are written [name], keys are key = value)",
    )
}
