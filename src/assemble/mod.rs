//! Combining FRF sets: cascades, sums of paths, mechanical series and
//! parallel, and LM-FBS coupling and decoupling with rigid or flexible joints.
//!
//! (Being built. The signatures below are the contract other modules use.)

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};

/// How two interface DOFs are joined.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case", tag = "type")]
pub enum JointKind {
    /// Compatibility u_a = u_b and equilibrium.
    Rigid,
    /// A massless spring of stiffness k (N/m, or N·m/rad on rotations).
    Spring { k: f64 },
    /// A viscous damper c (N·s/m).
    Damper { c: f64 },
    /// A hysteretic spring k(1 + iη).
    Hysteretic { k: f64, eta: f64 },
    /// Spring, damper and loss together: k(1 + iη) + iωc.
    SpringDamper { k: f64, c: f64, eta: f64 },
    /// A measured or synthesized dynamic stiffness K(ω) (N/m) as a 1×1 set of
    /// kind dynamic-stiffness on the assembly's grid.
    Measured { stiffness: Box<FrfSet> },
}

/// One joint between DOF `a` of one component and DOF `b` of another.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Joint {
    pub a: Dof,
    pub b: Dof,
    pub kind: JointKind,
}

/// Options for the interface inversion.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CouplingOptions {
    /// Truncated SVD: singular values below this fraction of the largest are dropped.
    #[serde(default)]
    pub tsvd_rel_threshold: Option<f64>,
}

/// A coupling or decoupling result.
#[derive(Debug, Clone, PartialEq)]
pub struct Assembled {
    /// The assembled FRFs, in the kind of the first component.
    pub set: FrfSet,
    /// 2-norm condition number of the interface matrix B Y Bᵀ + Γ per line.
    pub condition: Vec<f64>,
    /// Singular values dropped by the regularisation, per line (count).
    pub truncated: Vec<usize>,
    pub warnings: Vec<String>,
}

/// LM-FBS coupling of components at joints.
pub fn couple(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Assembled> {
    let _ = (components, joints, opts);
    Err(Error::unsupported("coupling is not built yet"))
}

/// Remove `removed` from `assembly` (LM-FBS with the removed part entered negatively).
pub fn decouple(
    assembly: &FrfSet,
    removed: &FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Assembled> {
    let _ = (assembly, removed, joints, opts);
    Err(Error::unsupported("decoupling is not built yet"))
}

/// Chain transfer matrices: H = second · first per line; `first`'s outputs
/// (and quantity) must be `second`'s inputs.
pub fn cascade(first: &FrfSet, second: &FrfSet) -> Result<FrfSet> {
    let _ = (first, second);
    Err(Error::unsupported("cascade is not built yet"))
}

/// Add sets that share outputs, inputs and quantities.
pub fn sum_paths(sets: &[FrfSet]) -> Result<FrfSet> {
    let _ = sets;
    Err(Error::unsupported("sum of paths is not built yet"))
}

/// Elements carrying one force: mobilities (receptances) add.
pub fn series(sets: &[FrfSet]) -> Result<FrfSet> {
    let _ = sets;
    Err(Error::unsupported("series is not built yet"))
}

/// Elements sharing one motion: impedances (dynamic stiffnesses) add.
pub fn parallel(sets: &[FrfSet]) -> Result<FrfSet> {
    let _ = sets;
    Err(Error::unsupported("parallel is not built yet"))
}
