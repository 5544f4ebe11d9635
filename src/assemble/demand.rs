//! Demand-driven coupling: only the rows and columns of a coupled result
//! that a consumer asks for.
//!
//! Entry (r, c) of Y_c = Y − Y B_fᵀ Z⁻¹ B_u Y (Z = B_u Y B_fᵀ + Γ) reads row
//! r and column c of the block-diagonal Y and the interface rows and
//! columns Z is made of, and nothing else. So the coupling is prepared and
//! checked on the whole components, every line's interface solve is the
//! whole coupling's, and only the requested rows of Y B_fᵀ and columns of
//! B_u Y enter the update (the components' picked rows and columns,
//! [`super::lmfbs::couple_picked`]). The sums over the interface run entry
//! by entry, so the values equal the whole coupling's bit for bit
//! (tests/couple_lmfbs.rs runs both). The work per line falls from the
//! solve plus rows × columns × interface of the whole assembly to the
//! solve plus requested rows × columns × interface.
//!
//! When nothing is requested of the rows or of the columns (no label of
//! the request is in the coupling), the coupling is made whole and the
//! request picked from it (the reader then refuses the missing label).

use super::lmfbs::{couple_picked, decouple_picked};
use super::{cascade, default_threads, Assembled, CouplingOptions, Joint};
use crate::error::Result;
use crate::frf::{Dof, FrfSet};

/// The rows (outputs) and columns (inputs) asked of a result, by label
/// (sign included, as `select` names them); `None`: every one, in the
/// result's order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Request {
    pub outputs: Option<Vec<Dof>>,
    pub inputs: Option<Vec<Dof>>,
}

impl Request {
    /// Rows and columns both named.
    pub fn of(outputs: Vec<Dof>, inputs: Vec<Dof>) -> Request {
        Request {
            outputs: Some(outputs),
            inputs: Some(inputs),
        }
    }

    /// Does it ask for everything (no cut)?
    pub fn is_whole(&self) -> bool {
        self.outputs.is_none() && self.inputs.is_none()
    }

    /// The requested entries of `set`, in the request's order. A label
    /// `set` lacks (exactly, sign included) is left out: the reader that
    /// asked for it refuses it at its own place in the recipe, as it would
    /// reading the whole result.
    pub fn pick(&self, set: &FrfSet) -> FrfSet {
        let have = |asked: &Option<Vec<Dof>>, all: &[Dof]| -> Vec<usize> {
            match asked {
                None => (0..all.len()).collect(),
                Some(a) => a
                    .iter()
                    .filter_map(|d| all.iter().position(|x| x == d))
                    .collect(),
            }
        };
        set.select(
            &have(&self.outputs, &set.outputs),
            &have(&self.inputs, &set.inputs),
        )
    }

    /// "R × C" in words, for the report.
    pub fn describe(&self, whole: (usize, usize)) -> String {
        let n = |v: &Option<Vec<Dof>>, all: usize| v.as_ref().map_or(all, Vec::len);
        format!(
            "{} × {}",
            n(&self.outputs, whole.0),
            n(&self.inputs, whole.1)
        )
    }
}

/// What a demand-driven operation computed, for the report.
#[derive(Debug, Clone, PartialEq)]
pub struct Demanded {
    pub assembled: Assembled,
    /// Rows × columns of the coupling that was solved.
    pub solved: (usize, usize),
    /// Rows × columns of the whole assembly.
    pub whole: (usize, usize),
}

/// The indices, ascending, of the DOFs of `all` at a place `asked` names
/// (sign aside; every one when `asked` is None).
fn places(all: &[Dof], asked: &Option<Vec<Dof>>) -> Vec<usize> {
    (0..all.len())
        .filter(|&i| {
            asked
                .as_ref()
                .map_or(true, |a| a.iter().any(|x| x.same_place(&all[i])))
        })
        .collect()
}

/// Per component, the indices of its outputs and inputs at a requested
/// place (all where the request names none); None when nothing at all is
/// requested of the rows or of the columns (the whole is then computed,
/// and the request's labels left out by [`Request::pick`]).
fn picks(components: &[&FrfSet], req: &Request) -> Option<Vec<(Vec<usize>, Vec<usize>)>> {
    let out: Vec<(Vec<usize>, Vec<usize>)> = components
        .iter()
        .map(|c| {
            (
                places(&c.outputs, &req.outputs),
                places(&c.inputs, &req.inputs),
            )
        })
        .collect();
    let rows: usize = out.iter().map(|(r, _)| r.len()).sum();
    let cols: usize = out.iter().map(|(_, c)| c.len()).sum();
    (rows > 0 && cols > 0).then_some(out)
}

/// The requested rows and columns of the coupling of `components` (see the
/// module docs); the result's DOFs in the order of `req`, its name that of
/// the whole coupling. A requested label the coupling lacks is left out
/// (see [`Request::pick`]).
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
    let refs: Vec<&FrfSet> = components.iter().collect();
    let picks = picks(&refs, req);
    let a = couple_picked(components, joints, opts, threads, picks.as_deref())?;
    Ok(picked(a, req, whole))
}

/// What was solved, and the request picked from it.
fn picked(mut a: Assembled, req: &Request, whole: (usize, usize)) -> Demanded {
    let solved = (a.set.n_out(), a.set.n_in());
    a.set = req.pick(&a.set);
    Demanded {
        assembled: a,
        solved,
        whole,
    }
}

/// The requested rows and columns of `assembly` without `removed` (the
/// decoupling of [`super::decouple`]): both cut to the requested DOFs and
/// the joints' DOFs, decoupled, the request picked; bit for bit the whole
/// decoupling's entries, for the reason given in the module docs.
pub fn decouple_requested(
    assembly: &FrfSet,
    removed: &FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
    req: &Request,
) -> Result<Demanded> {
    let whole = (assembly.n_out(), assembly.n_in());
    // the removed part's rows and columns are not in the result
    let picks = picks(&[assembly], req).map(|mut p| {
        p.push((Vec::new(), Vec::new()));
        p
    });
    let a = decouple_picked(
        assembly,
        removed,
        joints,
        opts,
        default_threads(),
        picks.as_deref(),
    )?;
    Ok(picked(a, req, whole))
}

/// The requested rows and columns of the cascade `second · first`: entry
/// (r, c) is the sum over the shared DOFs of second's row r times first's
/// column c, in the same order as in the whole product, so `second` cut to
/// the requested rows and `first` to the requested columns give the whole
/// cascade's entries bit for bit. The whole cascade's checks (grids,
/// quantities, DOFs, completeness) run on the uncut stages first, so a
/// request never lets through what the whole would refuse. Returns the
/// set and (rows, columns) computed of the whole.
pub fn cascade_requested(
    first: &FrfSet,
    second: &FrfSet,
    req: &Request,
) -> Result<(FrfSet, (usize, usize))> {
    super::chain::check_cascade(first, second)?;
    let rows = places(&second.outputs, &req.outputs);
    let cols = places(&first.inputs, &req.inputs);
    let name = format!("{} · {}", second.name, first.name);
    let out = if rows.is_empty() || cols.is_empty() {
        cascade(first, second)?
    } else {
        let f = first.select(&(0..first.n_out()).collect::<Vec<_>>(), &cols);
        let s = second.select(&rows, &(0..second.n_in()).collect::<Vec<_>>());
        cascade(&f, &s)?
    };
    let computed = (out.n_out(), out.n_in());
    let mut picked = req.pick(&out);
    picked.name = name;
    Ok((picked, computed))
}
