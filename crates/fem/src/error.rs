//! Typed errors of the assembler.
use thiserror::Error;

/// What can go wrong while setting up or assembling a section problem.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum FemError {
    /// A body region names a material missing from the material table.
    #[error("region '{region}' uses material '{material}', which is not defined")]
    UnknownMaterial {
        /// Region name.
        region: String,
        /// Missing material name.
        material: String,
    },
    /// A permittivity or permeability tensor is singular.
    #[error("the {what} tensor is singular")]
    SingularTensor {
        /// Which tensor.
        what: &'static str,
    },
    /// A wall was given for a boundary tag the mesh does not have.
    #[error("wall condition given for boundary '{name}', which the mesh does not have")]
    UnknownBoundary {
        /// The tag name.
        name: String,
    },
    /// The coordinate map is singular at a quadrature point (the section touches
    /// or crosses the axis of a ring, or a revolution section has r < 0).
    #[error("singular coordinate map in triangle {triangle} at (u, v) = ({u:.6e}, {v:.6e})")]
    SingularMap {
        /// Triangle index.
        triangle: usize,
        /// Section coordinate u, metres.
        u: f64,
        /// Section coordinate v, metres.
        v: f64,
    },
    /// The equivalent medium depends on `w` (twisted ring): a single 2D solve is
    /// not exact and needs the Fourier-Galerkin harmonic system.
    #[error("a ring with {half_turns} half turns depends on phi; the 2D assembly covers untwisted rings only")]
    TwistedRingNeedsHarmonics {
        /// Half turns per round trip.
        half_turns: f64,
    },
    /// The mesh or the DOFs lack the pi-rotation symmetry a sector basis needs.
    #[error("the section mesh is not symmetric under rotation by pi: {reason}")]
    NotPiSymmetric {
        /// What failed.
        reason: String,
    },
    /// The case is outside what the twisted-ring system supports.
    #[error("twisted ring: {reason}")]
    TwistedRing {
        /// What is not supported, and why.
        reason: String,
    },
    /// The sparse matrix could not be built.
    #[error("sparse matrix construction failed: {0}")]
    Sparse(String),
}
