//! Whole-mesh transformations.
use crate::{Domain, Mesh, PmlGeometry};

impl Mesh {
    /// The same mesh with every coordinate multiplied by `factor` (e.g. to
    /// turn a Gmsh file's millimetres into metres). Topology is unchanged.
    pub fn scaled(mut self, factor: f64) -> Mesh {
        for p in &mut self.points {
            p[0] *= factor;
            p[1] *= factor;
        }
        if let Some(Domain { pml, .. }) = &mut self.domain {
            match pml {
                PmlGeometry::None => {}
                PmlGeometry::Radial {
                    centre,
                    inner,
                    outer,
                } => {
                    centre[0] *= factor;
                    centre[1] *= factor;
                    *inner *= factor;
                    *outer *= factor;
                }
                PmlGeometry::Cartesian { inner, outer } => {
                    for x in inner.iter_mut().chain(outer.iter_mut()) {
                        *x *= factor;
                    }
                }
            }
        }
        self
    }
}
