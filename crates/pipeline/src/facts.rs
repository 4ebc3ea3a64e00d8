//! What a solve reports: the mesh and solver facts and one record per mode.
use serde::Serialize;
use twistmode_analysis::{Flag, ModeLabel, Polarisation};
use twistmode_mesh::Mesh;

use num_complex::Complex64;

/// Knobs of a solve that are not part of the physical case.
#[derive(Clone, Debug)]
pub struct SolveSettings {
    /// Residual tolerance for accepting an eigenpair.
    pub tolerance: f64,
    /// Keep PML and box modes instead of dropping them.
    pub keep_all: bool,
    /// Modes with less of their electric energy inside the body are box modes.
    pub min_confinement: f64,
    /// Modes with more of their electric energy inside the PML are PML modes.
    pub max_pml_fraction: f64,
    /// Largest Q a PML is trusted to resolve.
    pub q_limit: f64,
    /// Memory a factorisation may take, bytes (`None`: 80 % of the available memory).
    pub max_memory: Option<u64>,
}

impl Default for SolveSettings {
    fn default() -> Self {
        SolveSettings {
            tolerance: 1e-8,
            keep_all: false,
            min_confinement: 0.05,
            max_pml_fraction: 0.2,
            q_limit: 1e6,
            max_memory: None,
        }
    }
}

/// Size and quality of the mesh used.
#[derive(Clone, Debug, Serialize)]
pub struct MeshFacts {
    /// Triangles.
    pub triangles: usize,
    /// Nodes (vertices and mid-side nodes).
    pub nodes: usize,
    /// Geometry order (1 or 2).
    pub order: u8,
    /// Smallest angle, degrees.
    pub min_angle_deg: f64,
    /// Largest aspect ratio.
    pub max_aspect: f64,
    /// Seconds to make or read the mesh.
    pub seconds: f64,
}

/// What the solver did.
#[derive(Clone, Debug, Serialize)]
pub struct SolverFacts {
    /// Unknowns before the wall and axis conditions.
    pub dofs_full: usize,
    /// Unknowns solved for.
    pub dofs: usize,
    /// Unknowns removed by walls and axis.
    pub dofs_constrained: usize,
    /// Dimension of the discrete gradient space (eigenvalues at k0 = 0).
    pub static_modes: usize,
    /// Stored entries of K and M (union pattern).
    pub pattern_nnz: usize,
    /// Size of the sparse factor of `K - sigma M`, in complex entries (16 bytes each).
    pub fill_nnz: usize,
    /// The factorisation used: `symmetric-lblt` (complex-symmetric pencils: untwisted
    /// bodies) or `lu` (any pencil).
    pub factorisation: String,
    /// Target wavenumber squared, the shift (1/m^2).
    pub shift: [f64; 2],
    /// Where the shift had to be moved off an eigenvalue, the requested one.
    pub nudged_from: Option<[f64; 2]>,
    /// Eigensolver status in words.
    pub status: String,
    /// Static pairs found near 0 and set aside.
    pub static_dropped: usize,
    /// Modes dropped because most of their energy was in the PML.
    pub pml_dropped: usize,
    /// Modes dropped because little of their energy was in the body.
    pub box_dropped: usize,
    /// Seconds: assembly, factorisation, iterations.
    pub assembly_seconds: f64,
    /// Seconds in the sparse LU (analysis and numeric).
    pub factor_seconds: f64,
    /// Seconds in Krylov-Schur iterations.
    pub iteration_seconds: f64,
    /// Applications of the shift-invert operator (one pair of triangular solves each).
    pub operator_applications: usize,
    /// Why fewer modes than asked for were reported, when that happens.
    pub shortfall: Option<String>,
    /// Twisted rings: the harmonic window, sectors and coupling blocks.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub twist: Option<TwistSolverFacts>,
}

/// What a twisted-ring solve adds to the solver facts.
#[derive(Clone, Debug, Serialize)]
pub struct TwistSolverFacts {
    /// Half turns of the band.
    pub half_turns: i32,
    /// Half-width `K` of the harmonic window (`2 K + 1` harmonics).
    pub harmonics: u32,
    /// Window centre `m`.
    pub window_centre: f64,
    /// Sectors solved (`+1`, `-1`, or null for a section solved whole).
    pub sectors: Vec<Option<i8>>,
    /// Unknowns of each sector's system.
    pub sector_unknowns: Vec<usize>,
    /// The window half-width `K` each sector ended with.
    pub sector_harmonics: Vec<u32>,
    /// Why each sector's window stopped where it did (fixed, converged, at the limit).
    pub harmonics_stop: Vec<String>,
    /// Coupling blocks `(l, k)` kept, diagonal ones included.
    pub couplings_kept: usize,
    /// Coupling blocks dropped as negligible.
    pub couplings_dropped: usize,
    /// Largest relative size of a dropped coupling harmonic.
    pub largest_dropped: f64,
    /// Whether the pencils were made complex-symmetric with the section's mirror.
    pub mirror_symmetric: bool,
    /// With the mirror: the relative asymmetry removed by averaging (quadrature level).
    pub asymmetry: f64,
}

/// One reported mode.
#[derive(Clone, Debug, Serialize)]
pub struct ModeReport {
    /// Position in the report (0-based, by frequency).
    pub index: usize,
    /// Azimuthal order (revolution, ring); absent for straight guides.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub m: Option<f64>,
    /// Propagation constant, rad/m (straight guides).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beta: Option<f64>,
    /// Complex frequency `[re, im]`, Hz (Im < 0 for a decaying mode).
    pub frequency_hz: [f64; 2],
    /// Complex vacuum wavenumber `[re, im]`, 1/m.
    pub k0: [f64; 2],
    /// Quality factor (infinite Q is written as null).
    pub q: Option<f64>,
    /// Vacuum wavelength at `Re f`, metres.
    pub wavelength_m: f64,
    /// Effective index `m c / (omega R)` (rings) or `beta / k0` (straight guides).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub effective_index: Option<f64>,
    /// Fraction of the electric energy inside the body.
    pub confinement: f64,
    /// Fraction of the electric energy inside the PML.
    pub pml_fraction: f64,
    /// Polarisation class in the section's frame.
    pub polarisation: Polarisation,
    /// Field maxima across the section's u direction (radial order for rings).
    pub maxima_u: usize,
    /// Field maxima across the section's v direction.
    pub maxima_v: usize,
    /// Relative residual of the eigenpair.
    pub residual: f64,
    /// Reasons not to take the figures at face value.
    pub flags: Vec<Flag>,
    /// The family label (polarisation, maxima counts, sector); stored as its text form.
    pub label: ModeLabel,
    /// Twisted rings: the harmonic content and convergence of the mode.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub twist: Option<TwistFacts>,
}

/// What a twisted-ring mode adds to its report.
#[derive(Clone, Debug, Serialize)]
pub struct TwistFacts {
    /// Half turns of the band.
    pub half_turns: i32,
    /// Dominant harmonic `n = m + k tau` (the block holding most electric energy);
    /// also the report's `m`.
    pub dominant_order: f64,
    /// Sector `s` of the rotation by pi (`P e_k = s (-1)^k e_k`), when the section has it.
    pub sector: Option<i8>,
    /// Electric energy share of each harmonic, `(order, share)`, orders increasing.
    pub energy_per_harmonic: Vec<(f64, f64)>,
    /// Half-width `K` of the harmonic window solved.
    pub harmonics: u32,
    /// `|k0_K - k0_(K-1)| / |k0_K|`: the change when the window is narrowed by one
    /// harmonic on each side (None when `K = 1` and no narrower window is meaningful,
    /// or no partner was found).
    pub convergence: Option<f64>,
    /// Quality factor from material loss alone (`1/Q = sum tan(delta) x electric
    /// energy share`), reported beside `q` for when radiation Q is not determined here.
    pub q_material: Option<f64>,
}

/// Everything a solve produced.
pub struct SolveOutcome {
    /// The mesh.
    pub mesh: Mesh,
    /// Mesh facts.
    pub mesh_facts: MeshFacts,
    /// Solver facts.
    pub solver: SolverFacts,
    /// Modes, by increasing frequency.
    pub modes: Vec<ModeReport>,
    /// The per-mode field at the mesh nodes (u, v, w components), same order as `modes`.
    pub nodal_fields: Vec<Vec<[Complex64; 3]>>,
}
