//! Combining FRF sets: cascades, sums of paths, mechanical series and
//! parallel, and LM-FBS coupling and decoupling with rigid or flexible joints.
//!
//! # Operations
//! * [`cascade`]: transfer matrices in a chain, H = second · first per line.
//! * [`sum_paths`]: parallel transfer paths, H = Σ Hₙ.
//! * [`series`]: mechanical elements carrying one force; receptances (or
//!   mobilities, accelerances) add.
//! * [`parallel`]: mechanical elements sharing one motion; dynamic stiffnesses
//!   (or impedances, apparent masses) add.
//! * [`couple`] / [`decouple`]: Lagrange-multiplier frequency-based
//!   substructuring (LM-FBS; de Klerk, Rixen, Voormeeren, AIAA J. 46(5), 2008).
//!
//! # LM-FBS conventions
//! * **Form.** Y_c = Y − Y B_fᵀ (B_u Y B_fᵀ + Γ)⁻¹ B_u Y, per frequency line,
//!   with Y the block diagonal of the components' FRFs. All components are
//!   brought to the motion order of the first one (receptance, mobility or
//!   accelerance) and the result is in that kind.
//! * **B (signed Boolean).** One row per [`Joint`]: +1 at the DOF `a`, −1 at
//!   the DOF `b`, each multiplied by the sign relating the joint's label to
//!   the component's label (a joint naming `c:3-Z` on a component that lists
//!   `c:3+Z` enters with −1). B_u acts on the outputs (motions), B_f on the
//!   inputs (forces); they differ only when a component labels the same place
//!   with opposite signs as output and as input.
//! * **Γ (joint flexibility), diagonal, in the working kind.** For a joint of
//!   dynamic stiffness K(ω): 1/K in receptance form, iω/K in mobility form,
//!   −ω²/K in accelerance form; zero for a rigid joint. The joint force λ is
//!   K times the elongation u_a − u_b; it pulls `a` by −λ and `b` by +λ.
//! * **Result DOF order.** Outputs: the outputs of component 1, then of
//!   component 2, ... in each component's own order; inputs likewise. Interface
//!   DOFs therefore appear once per component (for a rigid joint both copies
//!   carry the same motion).
//! * **Decoupling** ([`decouple`]): Y_d = diag(Y_assembly, −Y_removed), the
//!   joints enter with −Γ (a flexible joint listed is removed together with
//!   the part), and the same formula is applied. Only the rows and columns of
//!   the assembly's DOFs are returned. Those of the remaining component
//!   (including the interface DOFs) are meaningful; rows or columns of
//!   assembly DOFs that lie inside the removed part are not.
//! * **Per line** the 2-norm condition number of B_u Y B_fᵀ + Γ (from its
//!   singular values, one-sided Jacobi) is reported, and (B_u Y B_fᵀ + Γ)⁻¹ B_u Y
//!   is solved by LU with partial pivoting. With
//!   [`CouplingOptions::tsvd_rel_threshold`] the lines where some σ <
//!   threshold · σ_max use the truncated-SVD pseudo-inverse without them
//!   instead; lines where none is dropped keep the LU solve, bit for bit.
//!   [`CouplingOptions::per_line`] sets a truncation threshold or a
//!   Tikhonov λ per line (the recipe takes them from the input noise):
//!   Tikhonov inverts Σ σ/(σ² + λ²) v uᴴ from the same Jacobi factors.
//!   Ill-conditioned lines (condition number, or that of the kept singular
//!   values, above 1e10) are named in a warning with the worst value and the
//!   remedy.
//!
//! The lines are independent; native builds spread them over threads
//! (`std::thread::scope`), wasm32 builds stay serial. Both paths run the same
//! per-line code and give identical numbers.

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfKind, FrfSet};
use crate::units::Quantity;

mod bench_case;
mod chain;
mod demand;
mod interface_solve;
mod kernel;
mod lmfbs;

pub use bench_case::{bench_case, values_digest, BENCH_SEED};
pub use chain::{cascade, parallel, series, sum_paths};
pub use demand::{
    cascade_requested, couple_requested, couple_requested_with_threads, decouple_requested,
    Demanded, Request,
};
pub use lmfbs::{couple, couple_with_threads, decouple, decouple_with_threads, default_threads};
pub(crate) use lmfbs::{prepare_coupling, prepare_decoupling, Prepared};

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

impl Joint {
    /// A rigid joint between `a` and `b`.
    pub fn rigid(a: Dof, b: Dof) -> Joint {
        Joint {
            a,
            b,
            kind: JointKind::Rigid,
        }
    }
    /// "a – b", for messages.
    pub fn label(&self) -> String {
        format!("{} – {}", self.a, self.b)
    }
}

/// Options for the interface inversion.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CouplingOptions {
    /// Truncated SVD: singular values below this fraction of the largest are
    /// dropped (the recipe operand "tsvd", `--tsvd` on `mortise couple`).
    /// Lines where none falls below keep the plain LU solve.
    #[serde(default)]
    pub tsvd_rel_threshold: Option<f64>,
    /// A regularisation set line by line (from the input noise, or one
    /// value repeated), instead of `tsvd_rel_threshold`: one value per line.
    #[serde(default)]
    pub per_line: Option<PerLine>,
}

/// A regularisation of the interface inversion with its own value on each
/// line, relative to that line's largest singular value σ_max.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum PerLine {
    /// Truncated SVD: singular values below t · σ_max dropped (t in [0, 1)).
    Tsvd(Vec<f64>),
    /// Tikhonov: Z_λ⁺ = (ZᴴZ + λ²I)⁻¹ Zᴴ = Σ σ/(σ² + λ²) v uᴴ with
    /// λ = x · σ_max (x ≥ 0; x = 0 is the plain LU solve, bit for bit).
    Tikhonov(Vec<f64>),
}

impl PerLine {
    /// The rule of line `k` (the values' count is checked before).
    pub(crate) fn rule(&self, k: usize) -> interface_solve::Rule {
        match self {
            PerLine::Tsvd(t) => interface_solve::Rule::Tsvd(t[k]),
            PerLine::Tikhonov(x) if x[k] > 0.0 => interface_solve::Rule::Tikhonov(x[k]),
            PerLine::Tikhonov(_) => interface_solve::Rule::Plain,
        }
    }
    pub(crate) fn values(&self) -> &[f64] {
        match self {
            PerLine::Tsvd(v) | PerLine::Tikhonov(v) => v,
        }
    }
}

/// A coupling or decoupling result.
#[derive(Debug, Clone, PartialEq)]
pub struct Assembled {
    /// The assembled FRFs, in the kind of the first component.
    pub set: FrfSet,
    /// 2-norm condition number of the interface matrix B Y Bᵀ + Γ per line
    /// (of the whole matrix, also where singular values were dropped).
    pub condition: Vec<f64>,
    /// Singular values dropped by the regularisation, per line (count; 0 where
    /// the LU solve was used). The rank kept is the number of joints minus this.
    pub truncated: Vec<usize>,
    /// Tikhonov: singular values below λ per line (damped to less than half
    /// of their plain inverse); empty without Tikhonov.
    pub damped: Vec<usize>,
    pub warnings: Vec<String>,
}

/// Error unless `b` has the grid of `a` (the one rule: [`crate::grid::require_same_grid`]).
pub(crate) fn require_same_grid(a: &FrfSet, b: &FrfSet, what: &str) -> Result<()> {
    crate::grid::require_same_grid(a, b, what)
}

/// Error unless the set is an FRF (not a spectrum) of motion per force.
pub(crate) fn require_motion_per_force(s: &FrfSet, what: &str) -> Result<()> {
    if s.signal.is_some() {
        return Err(Error::quantity(format!(
            "{what} needs FRFs, but '{}' is a spectrum",
            s.name
        )));
    }
    if !(s.out_qty.is_motion() && s.in_qty == Quantity::Force) {
        return Err(Error::quantity(format!(
            "{what} needs receptance, mobility or accelerance (motion per force), but '{}' is {} ({} per {})",
            s.name,
            s.kind(),
            s.out_qty,
            s.in_qty
        )));
    }
    Ok(())
}

/// The kind name of the other side of an inversion (receptance ↔ dynamic
/// stiffness, mobility ↔ impedance, accelerance ↔ apparent mass).
pub(crate) fn inverse_kind(k: FrfKind) -> Option<FrfKind> {
    Some(match k {
        FrfKind::Receptance => FrfKind::DynamicStiffness,
        FrfKind::Mobility => FrfKind::Impedance,
        FrfKind::Accelerance => FrfKind::ApparentMass,
        FrfKind::DynamicStiffness => FrfKind::Receptance,
        FrfKind::Impedance => FrfKind::Mobility,
        FrfKind::ApparentMass => FrfKind::Accelerance,
        _ => return None,
    })
}
