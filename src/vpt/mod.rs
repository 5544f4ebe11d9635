//! The virtual point transformation: measured interface channels and impacts
//! reduced to virtual points with three translations and three rotations
//! each, ready for rigid coupling.
//!
//! A practitioner places a few tri-axial accelerometers around a bolt hole
//! and hammers at several positions and directions near it; rotations are
//! never measured directly. If the interface moves as a rigid body, the
//! channel motions u are u = R_u q + μ (q the six motions of the virtual
//! point at its origin o, μ what the rigid modes do not explain) and the
//! impacts f act on the point as the loads m = R_fᵀ f. The transformation
//! (M. V. van der Seijs, D. D. van den Bosch, D. J. Rixen, D. de Klerk, "An
//! improved methodology for the virtual point transformation of measured
//! frequency response functions in dynamic substructuring", COMPDYN 2013;
//! and M. V. van der Seijs, D. de Klerk, D. J. Rixen, "General framework for
//! transfer path analysis: history, theory and classification of
//! techniques", Mechanical Systems and Signal Processing 68–69, 2016;
//! references from memory) is
//!
//! * T_u = (R_uᵀ W_u R_u)⁻¹ R_uᵀ W_u, q = T_u u (weighted least squares);
//! * T_f = (R_fᵀ W_f R_f)⁻¹ R_fᵀ W_f, f = T_fᵀ m;
//! * Y_qm = T_u Y_uf T_fᵀ, the FRFs at the point's DOFs `comp:VP+X` …
//!   `comp:VP+RZ` (rotations in rad, moments in N·m, the set's quantities
//!   read on rotational DOFs as [`crate::units::Quantity`] defines).
//!
//! W_u and W_f are diagonal, one positive weight per channel or impact
//! (default 1). The rows of R are in [`modes`]; the consistencies that say
//! how rigid the measured interface is, in [`consistency`]. DOFs of the set
//! that belong to no virtual point are kept as they are (identity rows and
//! columns), first in their order, followed by each point's six DOFs.
//! The computation is done in [`geometry`] (where each DOF sits), [`modes`]
//! (R and its weighted inverse by the one-sided Jacobi SVD of
//! [`crate::linalg::svd`], with the rank check naming what is not
//! determined), [`transform`] (resolving points against a set, T_u, T_f and
//! the product) and [`consistency`]. Extra, user-given interface modes
//! beyond the six rigid ones are not supported.
//!
//! # The geometry file (`# mortise-geometry 1`)
//! Our own text layout, comma-separated, one row per line:
//! ```text
//! # mortise-geometry 1
//! unit, mm
//! # lines starting with '#' and empty lines are ignored
//! outdoor:s1, 40, 0, 12
//! outdoor:s2, -20, 35, 12
//! outdoor:s3+X, -20, -35, 12, 0.8660254, 0.5, 0
//! outdoor:h1+Z, 30, 10, 25
//! outdoor:h2+X, 0, 0, 0, 1, 1, 0
//! ```
//! * line 1 is exactly `# mortise-geometry 1` (the layout's version);
//! * one `unit, LENGTH` line before the first row (m, cm, mm, in, ft...;
//!   converted to metres on reading; a missing unit is an error);
//! * each row is `label, x, y, z` or `label, x, y, z, dx, dy, dz`: a node
//!   label (`outdoor:s1`) locates every DOF at that node, each taking the
//!   direction of its own label (`+X` → (1, 0, 0), `-Z` → (0, 0, −1), `+RY`
//!   → the axis (0, 1, 0)); a DOF label (`outdoor:s3+X`) locates that DOF
//!   alone, along its direction vector (normalised; a zero-length vector is
//!   an error naming the line) or, without one, along its label. A DOF row
//!   wins over its node's row. A node row with a direction vector is
//!   refused. A label without a component (`s1`) matches that node in any
//!   component. The origin of a virtual point is given in the same unit.
//!
//! Every row must locate a channel or an impact of a virtual point of the
//! step that reads it; an unused row is refused, naming its line. The same
//! layout is accepted inline in a recipe as `{"unit": "mm", "rows":
//! [{"label": "outdoor:s1", "at": [40, 0, 12]}, {"label": "outdoor:s3+X", "at":
//! [...], "dir": [...]}]}`.
//!
//! A Universal File with nodes (datasets 15 or 2411) is a geometry too: each
//! node locates its DOFs along the axes of its displacement system (see
//! `uff_geometry.rs`); positions and origins are then in metres, and nodes
//! that locate nothing of the step are expected.

pub mod consistency;
pub mod geometry;
pub mod groups;
pub mod modes;
pub mod transform;
mod uff_geometry;

pub use consistency::VirtualPointReport;
pub use geometry::{Geometry, Located, RawRow, GEOMETRY_MAGIC};
pub use transform::{matrices, plan, Plan, Transformed, VpMatrices};

use crate::error::Result;
use crate::frf::FrfSet;

/// The consistency below which a virtual point is flagged, unless the step
/// says otherwise (common practice).
pub const DEFAULT_CONSISTENCY_MIN: f64 = 0.9;

/// One virtual point as a user defines it; resolved against a set by
/// [`plan`].
#[derive(Debug, Clone, PartialEq)]
pub struct VirtualPointDef {
    /// `NODE` or `COMPONENT:NODE` (the component defaults to the channels').
    pub name: String,
    /// Origin in the geometry's unit.
    pub origin: [f64; 3],
    /// Sensor channels: node labels (every output DOF at the node) or DOF labels.
    pub sensors: Vec<String>,
    /// Impacts: node labels (every input DOF at the node) or DOF labels.
    pub impacts: Vec<String>,
    /// Weights of sensor channels by node or DOF label (default 1).
    pub sensor_weights: Vec<(String, f64)>,
    /// Weights of impacts by node or DOF label (default 1).
    pub impact_weights: Vec<(String, f64)>,
}

/// Transform `set` to the virtual points `vps` located by `geom`, flagging
/// consistencies below `threshold` (plan, then apply; no budget check: the
/// recipe operation checks the budget between the two).
pub fn transform(
    set: &FrfSet,
    geom: &Geometry,
    vps: &[VirtualPointDef],
    threshold: f64,
) -> Result<Transformed> {
    plan(set, geom, vps)?.apply(set, threshold)
}
