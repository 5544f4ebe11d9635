//! Demand-driven coupling: only the rows and columns of a coupled result
//! that a consumer asks for.
//!
//! Entry (r, c) of Y_c = Y − Y B_fᵀ Z⁻¹ B_u Y (Z = B_u Y B_fᵀ + Γ) reads row
//! r and column c of the block-diagonal Y and the interface rows and
//! columns Z is made of, and nothing else. So each component cut to the
//! requested DOFs plus its interface DOFs, coupled as usual, gives the
//! requested entries through the same interface solve and the same sums
//! over the interface (the products run entry by entry): the values equal
//! the full coupling's bit for bit (tests/couple_lmfbs.rs runs both). The
//! work falls from rows × columns of the whole assembly to (requested +
//! interface)², per line.
//!
//! When a cut would leave a component with no output or no input (a part
//! that is neither joined nor asked for), the coupling is made whole and
//! the request selected from it.

use super::{couple_with_threads, default_threads, Assembled, CouplingOptions, Joint};
use crate::error::Result;
use crate::frf::{Dof, FrfSet};

/// The rows (outputs) and columns (inputs) asked of a coupling, by label
/// (sign included, as `select` names them).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Request {
    pub outputs: Vec<Dof>,
    pub inputs: Vec<Dof>,
}

/// What [`couple_requested`] computed, for the report.
#[derive(Debug, Clone, PartialEq)]
pub struct Demanded {
    pub assembled: Assembled,
    /// Rows × columns of the coupling that was solved.
    pub solved: (usize, usize),
    /// Rows × columns of the whole assembly.
    pub whole: (usize, usize),
}

/// The requested rows and columns of the coupling of `components` (see the
/// module docs); the result's DOFs in the order of `req`, its name that of
/// the whole coupling. A requested DOF no component has is refused naming
/// it (as `select` refuses it).
pub fn couple_requested(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
    req: &Request,
) -> Result<Demanded> {
    couple_requested_with_threads(components, joints, opts, req, default_threads())
}

/// [`couple_requested`] with an explicit number of worker threads.
pub fn couple_requested_with_threads(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
    req: &Request,
    threads: usize,
) -> Result<Demanded> {
    let whole = (
        components.iter().map(FrfSet::n_out).sum(),
        components.iter().map(FrfSet::n_in).sum(),
    );
    let at_joint = |d: &Dof| {
        joints
            .iter()
            .any(|j| j.a.same_place(d) || j.b.same_place(d))
    };
    let keep = |d: &Dof, asked: &[Dof]| at_joint(d) || asked.iter().any(|a| a.same_place(d));
    let mut cut = Vec::with_capacity(components.len());
    for c in components {
        let outs: Vec<usize> = (0..c.n_out())
            .filter(|&i| keep(&c.outputs[i], &req.outputs))
            .collect();
        let ins: Vec<usize> = (0..c.n_in())
            .filter(|&j| keep(&c.inputs[j], &req.inputs))
            .collect();
        if outs.is_empty() || ins.is_empty() {
            cut.clear();
            break;
        }
        cut.push(if outs.len() == c.n_out() && ins.len() == c.n_in() {
            c.clone()
        } else {
            c.select(&outs, &ins)
        });
    }
    let whole_cut = cut.is_empty();
    let parts: &[FrfSet] = if whole_cut { components } else { &cut };
    let mut a = couple_with_threads(parts, joints, opts, threads)?;
    let solved = (a.set.n_out(), a.set.n_in());
    let name = a.set.name.clone();
    a.set = a.set.select_dofs(&req.outputs, &req.inputs)?;
    a.set.name = name;
    Ok(Demanded {
        assembled: a,
        solved,
        whole,
    })
}
