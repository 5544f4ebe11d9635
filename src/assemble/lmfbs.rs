//! LM-FBS coupling and decoupling (see the module docs of [`super`] for the
//! form, the sign of B, the kind of Γ and the result DOF order).
//!
//! B is Boolean, so Y B_fᵀ is a signed selection of interface columns and
//! B_u Y a signed selection of interface rows; the block-diagonal Y is never
//! formed. This file checks and prepares the inputs, deals the lines out to
//! threads and, per line, forms the m×m interface matrix and the selections,
//! hands X = (B_u Y B_fᵀ + Γ)⁻¹ B_u Y to [`super::interface_solve`] (singular
//! values, LU or truncated-SVD pseudo-inverse) and does the rank-m update
//! Y − (Y B_fᵀ) X with [`super::kernel`].

use super::interface_solve::{self, Inverted};
use super::kernel;
use super::{
    require_motion_per_force, require_same_grid, Assembled, CouplingOptions, Joint, JointKind,
};
use crate::error::{Error, Result};
use crate::frf::{labels, Dof, FrfKind, FrfSet};
use crate::linalg::jacobi_lanes::LANES;
use crate::units::Quantity;
use num_complex::Complex64;
use std::borrow::Cow;
use std::mem::MaybeUninit;

/// Threads used by [`couple`] and [`decouple`]: the available parallelism in
/// native builds, 1 in wasm32.
pub fn default_threads() -> usize {
    #[cfg(target_arch = "wasm32")]
    {
        1
    }
    #[cfg(not(target_arch = "wasm32"))]
    {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    }
}

/// LM-FBS coupling of components at joints.
///
/// Every component is a motion-per-force FRF set (receptance, mobility or
/// accelerance; outputs may differ from inputs) on one grid; each joint DOF
/// must be both an output and an input of exactly one component, and no two
/// components may share a DOF label (give each its own component name). The
/// result is in the first component's kind, with the outputs of all
/// components (in order) and their inputs.
pub fn couple(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Assembled> {
    couple_with_threads(components, joints, opts, default_threads())
}

/// [`couple`] with an explicit number of worker threads (1 = serial; wasm32
/// builds are always serial). Results do not depend on the thread count.
pub fn couple_with_threads(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
    threads: usize,
) -> Result<Assembled> {
    couple_picked(components, joints, opts, threads, None)
}

/// Which rows and columns of each component form a result: per component,
/// its output and input indices in order (`None`: all of them).
pub(crate) type Picks<'p> = Option<&'p [(Vec<usize>, Vec<usize>)]>;

/// [`couple_with_threads`] keeping only the rows and columns `picks` names
/// of each component (the demand-driven coupling of [`super::demand`]):
/// each kept entry is computed exactly as in the whole coupling.
pub(crate) fn couple_picked(
    components: &[FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
    threads: usize,
    picks: Picks,
) -> Result<Assembled> {
    if components.is_empty() {
        return Err(Error::usage("coupling needs at least one component"));
    }
    let names: Vec<&str> = components.iter().map(|c| c.name.as_str()).collect();
    let name = format!("coupled({})", names.join(" + "));
    let signs = vec![1.0; components.len()];
    let result_parts: Vec<usize> = (0..components.len()).collect();
    let refs: Vec<&FrfSet> = components.iter().collect();
    solve(
        &refs,
        &signs,
        joints,
        1.0,
        opts,
        threads,
        &result_parts,
        picks,
        &name,
        "coupling",
    )
}

/// Remove `removed` from `assembly` (LM-FBS with the removed part entered negatively).
///
/// Y_d = diag(Y_assembly, −Y_removed) with compatibility at the joints (each
/// joint names one DOF of the assembly and one of the removed part); the
/// joints' flexibilities enter as −Γ, so a flexible joint listed here is
/// removed together with the part (use rigid joints to remove the part
/// only). Returned: the rows and columns of the assembly's DOFs, in the
/// assembly's kind. The DOFs of the remaining component, interface included,
/// are meaningful; assembly DOFs that lie inside the removed part are not.
/// Noise in the assembly or a missing interface DOF (rotations!) spoils the
/// result; check the condition numbers.
pub fn decouple(
    assembly: &FrfSet,
    removed: &FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Assembled> {
    decouple_with_threads(assembly, removed, joints, opts, default_threads())
}

/// [`decouple`] with an explicit number of worker threads.
pub fn decouple_with_threads(
    assembly: &FrfSet,
    removed: &FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
    threads: usize,
) -> Result<Assembled> {
    decouple_picked(assembly, removed, joints, opts, threads, None)
}

/// [`decouple_with_threads`] keeping only the rows and columns of the
/// assembly that `picks` names (its first entry; see [`couple_picked`]).
pub(crate) fn decouple_picked(
    assembly: &FrfSet,
    removed: &FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
    threads: usize,
    picks: Picks,
) -> Result<Assembled> {
    let name = format!("{} without {}", assembly.name, removed.name);
    let mut a = solve(
        &[assembly, removed],
        &[1.0, -1.0],
        joints,
        -1.0,
        opts,
        threads,
        &[0],
        picks,
        &name,
        "decoupling",
    )?;
    a.warnings.push(format!(
        "decoupled '{}' from '{}': only the DOFs of the remaining component are meaningful; rows and columns of assembly DOFs inside the removed part are not",
        removed.name, assembly.name
    ));
    a.set.warnings = a.warnings.clone();
    Ok(a)
}

/// One end of a joint inside a component.
#[derive(Debug, Clone, Copy)]
pub(crate) struct End {
    pub(crate) part: usize,
    /// local output index
    pub(crate) o: usize,
    /// local input index
    pub(crate) i: usize,
    /// B_u entry (±1, times the component's sign)
    pub(crate) su: f64,
    /// B_f entry (±1)
    pub(crate) sf: f64,
}

/// A checked coupling or decoupling, ready to be solved line by line.
pub(crate) struct Prepared<'a> {
    /// the components, each in the first one's motion order
    pub(crate) sets: Vec<Cow<'a, FrfSet>>,
    /// one row of B per joint: its two ends
    pub(crate) ends: Vec<[End; 2]>,
    /// n_lines × m flexibilities Γ (times the joint sign), row-major.
    pub(crate) gamma: Vec<Complex64>,
    tsvd: Option<f64>,
    per_line: Option<super::PerLine>,
    /// parts whose rows and columns form the result
    pub(crate) res: Vec<usize>,
    /// per part, the outputs (rows) and inputs (columns) in the result,
    /// as ascending local indices (all of a result part's unless picked;
    /// none of another part's)
    pub(crate) rows: Vec<Vec<usize>>,
    pub(crate) cols: Vec<Vec<usize>>,
    /// offsets of each result part's rows and columns in the result
    pub(crate) row_off: Vec<usize>,
    pub(crate) col_off: Vec<usize>,
    pub(crate) n_rows: usize,
    pub(crate) n_cols: usize,
    /// sign of each part (−1 for a removed part)
    pub(crate) psign: Vec<f64>,
    /// the terms of Z = B_u Y B_fᵀ, in the order they are summed
    z_terms: Vec<ZTerm>,
    /// per part, the columns of B_fᵀ there: (joint, local input, B_f · sign)
    bf_cols: Vec<Vec<(usize, usize, f64)>>,
    /// some result part keeps only some of its rows or columns (what
    /// the prefetch brings in, x86-64 only)
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    picked: bool,
}

/// One term of an entry of Z: entry `at` (row-major) gains
/// (Y_part[idx] · psign) · f, f = B_u entry · B_f entry.
#[derive(Debug, Clone, Copy)]
struct ZTerm {
    at: usize,
    part: usize,
    idx: usize,
    f: f64,
}

/// [`prepare`] for [`couple`]: every component in the result.
pub(crate) fn prepare_coupling<'a>(
    components: &[&'a FrfSet],
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Prepared<'a>> {
    if components.is_empty() {
        return Err(Error::usage("coupling needs at least one component"));
    }
    let signs = vec![1.0; components.len()];
    let parts: Vec<usize> = (0..components.len()).collect();
    prepare(
        components, &signs, joints, 1.0, opts, &parts, None, "coupling",
    )
}

/// [`prepare`] for [`decouple`]: the removed part entered negatively.
pub(crate) fn prepare_decoupling<'a>(
    assembly: &'a FrfSet,
    removed: &'a FrfSet,
    joints: &[Joint],
    opts: &CouplingOptions,
) -> Result<Prepared<'a>> {
    prepare(
        &[assembly, removed],
        &[1.0, -1.0],
        joints,
        -1.0,
        opts,
        &[0],
        None,
        "decoupling",
    )
}

/// Check and prepare a coupling or decoupling: every component in the first
/// one's motion order, the joints as B entries, Γ per line, the result
/// layout (the rows and columns of `result_parts`, those `picks` names
/// where given). Shared by [`solve`] and the uncertainty propagation
/// ([`crate::uncertainty`], never picked), so both read the one definition
/// of B and Γ.
#[allow(clippy::too_many_arguments)]
pub(crate) fn prepare<'a>(
    components: &[&'a FrfSet],
    signs: &[f64],
    joints: &[Joint],
    gamma_sign: f64,
    opts: &CouplingOptions,
    result_parts: &[usize],
    picks: Picks,
    what: &str,
) -> Result<Prepared<'a>> {
    let first = components[0];

    for &c in components {
        require_motion_per_force(c, what)?;
        require_same_grid(first, c, what)?;
        let n = c.n_lines() * c.n_out() * c.n_in();
        if c.data.len() != n || c.present.len() != c.n_out() * c.n_in() {
            return Err(Error::numeric(format!(
                "'{}': {} values for {} lines × {} outputs × {} inputs; the set is malformed",
                c.name,
                c.data.len(),
                c.n_lines(),
                c.n_out(),
                c.n_in()
            )));
        }
    }
    if joints.is_empty() {
        return Err(Error::usage(format!(
            "{what} needs at least one joint between interface DOFs"
        )));
    }
    if let Some(t) = opts.tsvd_rel_threshold {
        if !(t.is_finite() && (0.0..1.0).contains(&t)) {
            return Err(Error::usage(format!(
                "the truncated-SVD threshold must be a fraction in [0, 1) of the largest singular value; found {t}"
            )));
        }
    }
    if let Some(pl) = &opts.per_line {
        check_per_line(pl, opts.tsvd_rel_threshold, components[0].n_lines())?;
    }
    check_distinct_dofs(components)?;

    // Bring every component to the first one's motion order.
    let oq = first.out_qty;
    let sets: Vec<Cow<FrfSet>> = components
        .iter()
        .map(|&c| {
            if c.out_qty == oq {
                Ok(Cow::Borrowed(c))
            } else {
                c.to_quantities(oq, Quantity::Force).map(Cow::Owned)
            }
        })
        .collect::<Result<_>>()?;
    let order = oq.motion_order().unwrap_or(0);

    // Joints → B entries.
    let mut ends: Vec<[End; 2]> = Vec::with_capacity(joints.len());
    for (n, j) in joints.iter().enumerate() {
        let tag = format!("joint {} ({})", n + 1, j.label());
        if j.a.same_place(&j.b) {
            return Err(Error::dof(format!("{tag}: both ends are the same DOF")));
        }
        if let Some(p) = joints[..n].iter().position(|o| {
            (o.a.same_place(&j.a) && o.b.same_place(&j.b))
                || (o.a.same_place(&j.b) && o.b.same_place(&j.a))
        }) {
            return Err(Error::dof(format!(
                "{tag} joins the same DOFs as joint {}; each pair may be joined once",
                p + 1
            )));
        }
        let ea = find_end(&sets, &j.a, 1.0, &tag)?;
        let eb = find_end(&sets, &j.b, -1.0, &tag)?;
        ends.push([ea, eb]);
    }
    let m = ends.len();

    // Γ per line and joint.
    let nl = first.n_lines();
    let mut gamma = vec![Complex64::new(0.0, 0.0); nl * m];
    for (r, j) in joints.iter().enumerate() {
        let tag = format!("joint {} ({})", r + 1, j.label());
        let measured = match &j.kind {
            JointKind::Measured { stiffness } => Some(measured_stiffness(stiffness, first, &tag)?),
            other => {
                check_params(other, &tag)?;
                None
            }
        };
        if j.kind == JointKind::Rigid {
            continue;
        }
        for k in 0..nl {
            let w = first.omega(k);
            let kk = match (&j.kind, &measured) {
                (_, Some(v)) => v[k],
                (JointKind::Spring { k }, _) => Complex64::new(*k, 0.0),
                (JointKind::Damper { c }, _) => Complex64::new(0.0, w * c),
                (JointKind::Hysteretic { k, eta }, _) => Complex64::new(*k, k * eta),
                (JointKind::SpringDamper { k, c, eta }, _) => Complex64::new(*k, k * eta + w * c),
                _ => Complex64::new(f64::INFINITY, 0.0),
            };
            if kk.norm() == 0.0 || !kk.re.is_finite() || !kk.im.is_finite() {
                return Err(Error::numeric(format!(
                    "{tag}: the dynamic stiffness at {} Hz is {kk}; a flexible joint needs a finite, non-zero stiffness on every line (its flexibility is 1/K)",
                    first.freqs[k]
                )));
            }
            let iw = Complex64::new(0.0, w);
            gamma[k * m + r] = gamma_sign * iw.powi(order) / kk;
        }
    }

    // Result layout.
    let mut rows = vec![Vec::new(); components.len()];
    let mut cols = vec![Vec::new(); components.len()];
    let mut row_off = vec![0; components.len()];
    let mut col_off = vec![0; components.len()];
    let (mut n_rows, mut n_cols) = (0, 0);
    for &p in result_parts {
        let (r, c) = match picks.and_then(|pk| pk.get(p)) {
            Some((r, c)) => {
                let ascending = |v: &[usize], n: usize| {
                    v.windows(2).all(|w| w[0] < w[1]) && v.last().map_or(true, |&x| x < n)
                };
                // ascending and inside the part: a pick of every column is then
                // the part's columns in order (one_line's whole-row path)
                if !ascending(r, sets[p].n_out()) || !ascending(c, sets[p].n_in()) {
                    return Err(Error::internal(format!(
                        "{what}: the picked rows and columns of '{}' must be ascending indices inside it",
                        sets[p].name
                    )));
                }
                (r.clone(), c.clone())
            }
            None => (
                (0..sets[p].n_out()).collect(),
                (0..sets[p].n_in()).collect(),
            ),
        };
        row_off[p] = n_rows;
        col_off[p] = n_cols;
        n_rows += r.len();
        n_cols += c.len();
        rows[p] = r;
        cols[p] = c;
    }
    // Z's terms, entry by entry, each entry's in the order of its ends
    let mut z_terms = Vec::new();
    for (r, er) in ends.iter().enumerate() {
        for (s, es) in ends.iter().enumerate() {
            for e in er {
                for g in es {
                    if e.part == g.part {
                        z_terms.push(ZTerm {
                            at: r * m + s,
                            part: e.part,
                            idx: e.o * sets[e.part].n_in() + g.i,
                            f: e.su * g.sf,
                        });
                    }
                }
            }
        }
    }
    let bf_cols: Vec<Vec<(usize, usize, f64)>> = (0..components.len())
        .map(|q| {
            ends.iter()
                .enumerate()
                .flat_map(|(s, es)| es.iter().map(move |g| (s, g)))
                .filter(|(_, g)| g.part == q)
                .map(|(s, g)| (s, g.i, g.sf * signs[q]))
                .collect()
        })
        .collect();
    let picked = result_parts
        .iter()
        .any(|&p| rows[p].len() < sets[p].n_out() || cols[p].len() < sets[p].n_in());
    let prep = Prepared {
        z_terms,
        bf_cols,
        picked,
        sets,
        ends,
        gamma,
        tsvd: opts.tsvd_rel_threshold,
        per_line: opts.per_line.clone(),
        res: result_parts.to_vec(),
        rows,
        cols,
        row_off,
        col_off,
        n_rows,
        n_cols,
        psign: signs.to_vec(),
    };
    check_needed_entries(&prep, what)?;
    Ok(prep)
}

/// A per-line regularisation: one value per line, each in its range, and
/// not together with a uniform threshold.
fn check_per_line(pl: &super::PerLine, tsvd: Option<f64>, nl: usize) -> Result<()> {
    use super::PerLine;
    if tsvd.is_some() {
        return Err(Error::usage(
            "a uniform truncated-SVD threshold and a per-line regularisation were both given; give one",
        ));
    }
    let v = pl.values();
    if v.len() != nl {
        return Err(Error::usage(format!(
            "a per-line regularisation needs one value per line: {} values for {nl} lines",
            v.len()
        )));
    }
    for (k, &x) in v.iter().enumerate() {
        let ok = match pl {
            PerLine::Tsvd(_) => x.is_finite() && (0.0..1.0).contains(&x),
            PerLine::Tikhonov(_) => x.is_finite() && x >= 0.0,
        };
        if !ok {
            let what = match pl {
                PerLine::Tsvd(_) => "truncated-SVD threshold, expected a fraction in [0, 1) of the largest singular value",
                PerLine::Tikhonov(_) => "Tikhonov λ, expected a fraction of 0 or more of the largest singular value",
            };
            return Err(Error::usage(format!("line {k}: {what}; found {x}")));
        }
    }
    Ok(())
}

impl Prepared<'_> {
    /// How line `k`'s interface matrix is inverted.
    pub(crate) fn rule(&self, k: usize) -> interface_solve::Rule {
        match &self.per_line {
            Some(pl) => pl.rule(k),
            None => interface_solve::Rule::of_tsvd(self.tsvd),
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn solve(
    components: &[&FrfSet],
    signs: &[f64],
    joints: &[Joint],
    gamma_sign: f64,
    opts: &CouplingOptions,
    threads: usize,
    result_parts: &[usize],
    picks: Picks,
    name: &str,
    what: &str,
) -> Result<Assembled> {
    let prep = prepare(
        components,
        signs,
        joints,
        gamma_sign,
        opts,
        result_parts,
        picks,
        what,
    )?;
    let first = components[0];
    let (nl, m, n_rows, n_cols, oq) = (
        first.n_lines(),
        prep.ends.len(),
        prep.n_rows,
        prep.n_cols,
        prep.sets[0].out_qty,
    );
    let mut outputs: Vec<Dof> = Vec::with_capacity(n_rows);
    let mut inputs: Vec<Dof> = Vec::with_capacity(n_cols);
    for &p in result_parts {
        let s = &prep.sets[p];
        outputs.extend(prep.rows[p].iter().map(|&i| s.outputs[i].clone()));
        inputs.extend(prep.cols[p].iter().map(|&j| s.inputs[j].clone()));
    }
    let mut present = vec![true; n_rows * n_cols];
    for &p in result_parts {
        let s = &prep.sets[p];
        for (ii, &i) in prep.rows[p].iter().enumerate() {
            for (jj, &j) in prep.cols[p].iter().enumerate() {
                present[(prep.row_off[p] + ii) * n_cols + prep.col_off[p] + jj] =
                    s.is_present(i, j);
            }
        }
    }
    let total = nl * n_rows * n_cols;
    // written later by the worker threads, so the pages are first touched
    // in parallel
    let mut data: Vec<Complex64> = crate::mem::large_vec(total);
    let lines = run_lines(
        &prep,
        &mut data.spare_capacity_mut()[..total],
        threads.max(1),
    )?;
    let condition: Vec<f64> = lines.iter().map(|l| l.cond).collect();
    let truncated: Vec<usize> = lines.iter().map(|l| l.dropped).collect();
    let damped: Vec<usize> = if matches!(prep.per_line, Some(super::PerLine::Tikhonov(_))) {
        lines.iter().map(|l| l.damped).collect()
    } else {
        Vec::new()
    };
    // SAFETY: run_lines returned Ok, so every line's `one_line` returned Ok,
    // and it does so only after writing all n_rows × n_cols values of its line
    // (it counts the rows written); the lines tile the first `total` values.
    unsafe { data.set_len(total) };
    let nan = Complex64::new(f64::NAN, f64::NAN);
    if present.iter().any(|p| !p) {
        for line in data.chunks_mut(n_rows * n_cols) {
            for (v, p) in line.iter_mut().zip(&present) {
                if !p {
                    *v = nan;
                }
            }
        }
    }

    let mut warnings: Vec<String> = Vec::new();
    for c in components {
        for w in &c.warnings {
            if !warnings.contains(w) {
                warnings.push(w.clone());
            }
        }
    }
    warnings.extend(interface_solve::warnings(
        what,
        &lines,
        &first.freqs,
        opts.tsvd_rel_threshold,
        opts.per_line.as_ref(),
        m,
    ));
    let set = FrfSet {
        name: name.to_string(),
        freqs: first.freqs.clone(),
        outputs,
        inputs,
        out_qty: oq,
        in_qty: Quantity::Force,
        data,
        present,
        coherence: None,
        provenance: components
            .iter()
            .flat_map(|c| c.provenance.iter().cloned())
            .collect(),
        warnings: warnings.clone(),
        signal: None,
    };
    Ok(Assembled {
        set,
        condition,
        truncated,
        damped,
        warnings,
    })
}

fn check_distinct_dofs(components: &[&FrfSet]) -> Result<()> {
    for (a, ca) in components.iter().enumerate() {
        for cb in &components[a + 1..] {
            for d in ca.outputs.iter().chain(&ca.inputs) {
                if cb.outputs.iter().chain(&cb.inputs).any(|e| e.same_place(d)) {
                    return Err(Error::dof(format!(
                        "DOF {} appears in both '{}' and '{}'; give each file its own component name (the 'component' import option, or a distinct component name in the recipe) so joints can tell them apart",
                        d.unsigned(),
                        ca.name,
                        cb.name
                    )));
                }
            }
        }
    }
    Ok(())
}

/// Locate a joint DOF: its component, output and input; `b` is +1 for end a
/// and −1 for end b.
fn find_end(sets: &[Cow<FrfSet>], d: &Dof, b: f64, tag: &str) -> Result<End> {
    for (p, s) in sets.iter().enumerate() {
        let o = s.out_place(d);
        let i = s.in_place(d);
        match (o, i) {
            (Some(o), Some(i)) => {
                return Ok(End {
                    part: p,
                    o,
                    i,
                    su: b * d.sign() * s.outputs[o].sign(),
                    sf: b * d.sign() * s.inputs[i].sign(),
                })
            }
            (Some(_), None) => {
                return Err(Error::dof(format!(
                    "{tag}: DOF {d} is an output of '{}' but not one of its inputs; every interface DOF must be both an output and an input (driving point) of its component",
                    s.name
                )))
            }
            (None, Some(_)) => {
                return Err(Error::dof(format!(
                    "{tag}: DOF {d} is an input of '{}' but not one of its outputs; every interface DOF must be both an output and an input (driving point) of its component",
                    s.name
                )))
            }
            (None, None) => {}
        }
    }
    let have: Vec<String> = sets
        .iter()
        .map(|s| format!("'{}' has {}", s.name, labels(&s.outputs)))
        .collect();
    Err(Error::dof(format!(
        "{tag}: no component has DOF {d}; {}",
        have.join("; ")
    )))
}

fn check_params(kind: &JointKind, tag: &str) -> Result<()> {
    // (name, value, zero allowed)
    let vals: Vec<(&str, f64, bool)> = match kind {
        JointKind::Rigid | JointKind::Measured { .. } => return Ok(()),
        JointKind::Spring { k } => vec![("k", *k, false)],
        JointKind::Damper { c } => vec![("c", *c, false)],
        JointKind::Hysteretic { k, eta } => vec![("k", *k, false), ("eta", *eta, true)],
        JointKind::SpringDamper { k, c, eta } => {
            vec![("k", *k, true), ("c", *c, true), ("eta", *eta, true)]
        }
    };
    for (n, v, zero_ok) in vals {
        let ok = v.is_finite() && (v > 0.0 || (zero_ok && v == 0.0));
        if !ok {
            return Err(Error::usage(format!(
                "{tag}: {n} = {v}; expected a finite {} value",
                if zero_ok { "non-negative" } else { "positive" }
            )));
        }
    }
    Ok(())
}

/// The measured joint's K(ω) per line, in N/m (N·m/rad).
fn measured_stiffness(s: &FrfSet, grid: &FrfSet, tag: &str) -> Result<Vec<Complex64>> {
    if s.n_out() != 1 || s.n_in() != 1 {
        return Err(Error::dof(format!(
            "{tag}: a measured joint needs a 1×1 set; '{}' has {} outputs and {} inputs",
            s.name,
            s.n_out(),
            s.n_in()
        )));
    }
    let ok_kind = matches!(
        s.kind(),
        FrfKind::DynamicStiffness | FrfKind::Impedance | FrfKind::ApparentMass
    ) && s.signal.is_none();
    if !ok_kind {
        return Err(Error::quantity(format!(
            "{tag}: a measured joint needs a dynamic stiffness (force per displacement; impedance and apparent mass are converted), but '{}' is {} ({} per {})",
            s.name,
            s.kind(),
            s.out_qty,
            s.in_qty
        )));
    }
    require_same_grid(grid, s, &format!("{tag}: a measured joint"))?;
    s.require_complete(&format!("{tag}: a measured joint"))?;
    let k = s.to_quantities(Quantity::Force, Quantity::Displacement)?;
    Ok(k.data)
}

/// Error naming every entry the formula reads that is missing.
fn check_needed_entries(p: &Prepared, what: &str) -> Result<()> {
    let n = p.sets.len();
    let mut need: Vec<Vec<bool>> = p
        .sets
        .iter()
        .map(|s| vec![false; s.n_out() * s.n_in()])
        .collect();
    let in_res: Vec<bool> = (0..n).map(|q| p.res.contains(&q)).collect();
    for r in &p.ends {
        for e in r {
            let s = &p.sets[e.part];
            let ni = s.n_in();
            for row in &p.ends {
                for g in row {
                    if g.part == e.part {
                        need[e.part][e.o * ni + g.i] = true;
                    }
                }
            }
            // the whole result's needs, also when only some rows and
            // columns are picked: a request refuses what the whole refuses
            if in_res[e.part] {
                for j in 0..ni {
                    need[e.part][e.o * ni + j] = true;
                }
                for i in 0..s.n_out() {
                    need[e.part][i * ni + e.i] = true;
                }
            }
        }
    }
    for (q, s) in p.sets.iter().enumerate() {
        let ni = s.n_in();
        let missing: Vec<String> = (0..s.n_out() * ni)
            .filter(|&x| need[q][x] && !s.present[x])
            .map(|x| format!("{} / {}", s.outputs[x / ni], s.inputs[x % ni]))
            .collect();
        if !missing.is_empty() {
            let shown: Vec<String> = missing.iter().take(8).cloned().collect();
            return Err(Error::missing(format!(
                "{what} needs the interface rows and columns of '{}', but {} of these entries are missing: {}{}",
                s.name,
                missing.len(),
                shown.join(", "),
                if missing.len() > 8 { ", ..." } else { "" }
            )));
        }
    }
    Ok(())
}

/// Per-thread scratch space (allocated once per thread, not per line).
struct Work {
    path: kernel::Path,
    /// padded column count of the result
    cp: usize,
    /// B_u Y, real and imaginary parts, m × cp
    byr: Vec<f64>,
    byi: Vec<f64>,
    /// X = (B_u Y B_fᵀ + Γ)⁻¹ B_u Y, m × cp
    xr: Vec<f64>,
    xi: Vec<f64>,
    /// Y B_fᵀ, n_rows × m
    p: Vec<Complex64>,
    /// scratch of the interface solve, one per line of a group of
    /// [`LANES`] lines factored together
    solves: Vec<interface_solve::SolveWork>,
    lanes: interface_solve::LaneWork,
    buf: Vec<f64>,
}

impl Work {
    fn new(p: &Prepared) -> Work {
        let m = p.ends.len();
        let cp = kernel::padded(p.n_cols);
        Work {
            path: kernel::path(),
            cp,
            byr: vec![0.0; m * cp],
            byi: vec![0.0; m * cp],
            xr: vec![0.0; m * cp],
            xi: vec![0.0; m * cp],
            p: vec![
                Complex64::new(0.0, 0.0);
                p.n_rows.div_ceil(kernel::ROW_PAD) * kernel::ROW_PAD * m
            ],
            solves: (0..LANES)
                .map(|_| interface_solve::SolveWork::new(m))
                .collect(),
            lanes: interface_solve::LaneWork::new(m),
            buf: vec![0.0; 8 * cp],
        }
    }
}

/// How each line's interface matrix was inverted, in line order.
type LineResults = Vec<Inverted>;

/// The lines of `out` from line `k0` on, in groups of [`LANES`] whose
/// interface matrices are factored together (the bits of one at a time,
/// see [`crate::linalg::jacobi_lanes`]); the first failing line's error,
/// as if the lines were computed one by one.
fn run_chunk(
    p: &Prepared,
    k0: usize,
    out: &mut [MaybeUninit<Complex64>],
    w: &mut Work,
) -> Result<LineResults> {
    let size = p.n_rows * p.n_cols;
    let n = out.len().checked_div(size).unwrap_or(0);
    let mut done = Vec::with_capacity(n);
    for (g, group) in out.chunks_mut((size * LANES).max(1)).enumerate() {
        let kg = k0 + g * LANES;
        let lines = group.len().checked_div(size).unwrap_or(0);
        // the interface matrices, up to the first that fails
        let mut failed = None;
        let mut built = 0;
        for l in 0..lines {
            match interface_matrix(p, kg + l, &mut w.solves[l].z) {
                Ok(()) => built += 1,
                Err(e) => {
                    failed = Some(e);
                    break;
                }
            }
        }
        let want_v = (0..built).any(|l| p.rule(kg + l) != interface_solve::Rule::Plain);
        let converged = interface_solve::factor_lanes(&mut w.solves[..built], want_v, &mut w.lanes);
        for (l, dst) in group.chunks_mut(size.max(1)).take(built).enumerate() {
            prefetch_line(p, kg + LANES + l);
            done.push(one_line(p, kg + l, w, l, converged[l], dst)?);
        }
        if let Some(e) = failed {
            return Err(e);
        }
    }
    Ok(done)
}

/// Ask for the components' data of line `k` to be brought into the cache
/// while the current line is computed (x86-64; a no-op elsewhere): the
/// whole line where the whole result is computed, else the entries of Z
/// (a picked result reads little more).
#[inline]
fn prefetch_line(p: &Prepared, k: usize) {
    #[cfg(target_arch = "x86_64")]
    {
        use std::arch::x86_64::{_mm_prefetch, _MM_HINT_T1};
        let fetch = |v: &Complex64| {
            // SAFETY: SSE is part of every x86-64 target; a prefetch of an
            // address inside a live slice neither faults nor changes memory.
            unsafe { _mm_prefetch::<_MM_HINT_T1>((v as *const Complex64).cast::<i8>()) };
        };
        if p.sets.first().map_or(true, |s| k >= s.n_lines()) {
            return;
        }
        if p.picked {
            for t in &p.z_terms {
                fetch(&p.sets[t.part].line(k)[t.idx]);
            }
            return;
        }
        for s in &p.sets {
            // one cache line (64 bytes) holds 4 values
            s.line(k).iter().step_by(4).for_each(fetch);
        }
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = (p, k);
}

/// Lines handed out to a worker at a time.
#[cfg(not(target_arch = "wasm32"))]
const BLOCK_LINES: usize = 32;

/// The lines are dealt out in blocks of [`BLOCK_LINES`] to whichever worker
/// is free (a busy machine slows threads unevenly); every line is computed
/// by the same code whatever thread runs it.
#[cfg(not(target_arch = "wasm32"))]
fn run_lines(
    p: &Prepared,
    data: &mut [MaybeUninit<Complex64>],
    threads: usize,
) -> Result<LineResults> {
    use std::sync::Mutex;
    let nl = p.sets[0].n_lines();
    let size = p.n_rows * p.n_cols;
    if threads <= 1 || nl <= BLOCK_LINES || size == 0 {
        return run_chunk(p, 0, data, &mut Work::new(p));
    }
    let blocks = Mutex::new(data.chunks_mut(BLOCK_LINES * size).enumerate());
    let workers = threads.min(nl.div_ceil(BLOCK_LINES));
    type Done = Vec<(usize, Result<LineResults>)>;
    let results: Vec<Done> = std::thread::scope(|sc| {
        let handles: Vec<_> = (0..workers)
            .map(|_| {
                sc.spawn(|| {
                    let mut w = Work::new(p);
                    let mut done: Done = Vec::new();
                    loop {
                        let next = match blocks.lock() {
                            Ok(mut it) => it.next(),
                            Err(_) => None,
                        };
                        let Some((b, chunk)) = next else { break };
                        let r = run_chunk(p, b * BLOCK_LINES, chunk, &mut w);
                        let failed = r.is_err();
                        done.push((b, r));
                        if failed {
                            break;
                        }
                    }
                    done
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| {
                h.join().unwrap_or_else(|_| {
                    vec![(0, Err(Error::numeric("a coupling worker thread panicked")))]
                })
            })
            .collect()
    });
    let mut all: Done = results.into_iter().flatten().collect();
    all.sort_by_key(|(b, _)| *b);
    let mut lines = Vec::with_capacity(nl);
    for (seen, (b, r)) in all.into_iter().enumerate() {
        let done = r?;
        if b != seen {
            return Err(Error::numeric(format!(
                "internal: block {seen} of the coupling was not computed"
            )));
        }
        lines.extend(done);
    }
    if lines.len() != nl {
        return Err(Error::numeric(format!(
            "internal: {} of {nl} lines computed",
            lines.len()
        )));
    }
    Ok(lines)
}

#[cfg(target_arch = "wasm32")]
fn run_lines(
    p: &Prepared,
    data: &mut [MaybeUninit<Complex64>],
    _threads: usize,
) -> Result<LineResults> {
    run_chunk(p, 0, data, &mut Work::new(p))
}

/// The interface matrix Z = B_u Y B_fᵀ + Γ of line `k`, row-major, into
/// `z`; refused where it is not finite.
fn interface_matrix(p: &Prepared, k: usize, z: &mut [Complex64]) -> Result<()> {
    let m = p.ends.len();
    // each entry: 0, plus its terms in order, plus Γ on the diagonal
    z.fill(Complex64::new(0.0, 0.0));
    for t in &p.z_terms {
        z[t.at] += p.sets[t.part].line(k)[t.idx] * p.psign[t.part] * t.f;
    }
    for r in 0..m {
        z[r * m + r] += p.gamma[k * m + r];
    }
    if z.iter().any(|v| !(v.re.is_finite() && v.im.is_finite())) {
        let freq = p.sets[0].freqs[k];
        return Err(Error::numeric(format!(
            "the interface matrix at {freq} Hz has non-finite values; check the components' data there"
        )));
    }
    Ok(())
}

/// One frequency line whose interface matrix is `w.solves[l]`'s, factored
/// (`converged`: its Jacobi's outcome): fills `dst` (n_rows × n_cols) and
/// returns how the interface matrix was inverted (condition number,
/// dropped singular values).
fn one_line(
    p: &Prepared,
    k: usize,
    w: &mut Work,
    l: usize,
    converged: bool,
    dst: &mut [MaybeUninit<Complex64>],
) -> Result<Inverted> {
    let m = p.ends.len();
    let nc = p.n_cols;
    let cp = w.cp;
    let line = |q: usize| p.sets[q].line(k);
    let freq = p.sets[0].freqs[k];

    // B_u Y restricted to the result columns (signed row selections).
    w.byr.fill(0.0);
    w.byi.fill(0.0);
    for (r, er) in p.ends.iter().enumerate() {
        for e in er {
            if !p.res.contains(&e.part) {
                continue;
            }
            let s = &p.sets[e.part];
            let off = r * cp + p.col_off[e.part];
            let row = &line(e.part)[e.o * s.n_in()..(e.o + 1) * s.n_in()];
            let f = e.su * p.psign[e.part];
            for (jj, &j) in p.cols[e.part].iter().enumerate() {
                let v = row[j];
                w.byr[off + jj] += v.re * f;
                w.byi[off + jj] += v.im * f;
            }
        }
    }
    // Y B_fᵀ restricted to the result rows (signed column selections),
    // row by row so each row of Y is read once.
    w.p.fill(Complex64::new(0.0, 0.0));
    for &q in &p.res {
        let set = &p.sets[q];
        let ni = set.n_in();
        let off = p.row_off[q];
        let l = line(q);
        for (ii, &i) in p.rows[q].iter().enumerate() {
            let src = &l[i * ni..(i + 1) * ni];
            let dst = &mut w.p[(off + ii) * m..(off + ii + 1) * m];
            for &(s, j, f) in &p.bf_cols[q] {
                dst[s] += src[j] * f;
            }
        }
    }

    // X = Z⁻¹ (B_u Y), or Z⁺ (B_u Y) with the truncated SVD
    let inv = interface_solve::solve(
        &mut w.solves[l],
        p.rule(k),
        freq,
        converged,
        interface_solve::Columns {
            br: &w.byr,
            bi: &w.byi,
            xr: &mut w.xr,
            xi: &mut w.xi,
            cp,
        },
        w.path,
        &mut w.buf,
    )?;

    // Y_c = Y − (Y B_fᵀ) X, row by row; Y is block diagonal.
    let mut written = 0usize;
    kernel::product(
        w.path,
        p.n_rows,
        m,
        &w.p,
        &w.xr,
        &w.xi,
        cp,
        &mut w.buf,
        |i, re, im| {
            let row = &mut dst[i * nc..(i + 1) * nc];
            // the diagonal block of the part this row belongs to
            let (co, src, cols, sg): (usize, &[Complex64], &[usize], f64) = match p
                .res
                .iter()
                .find(|&&q| i >= p.row_off[q] && i < p.row_off[q] + p.rows[q].len())
            {
                Some(&q) => {
                    let ni = p.sets[q].n_in();
                    let li = p.rows[q][i - p.row_off[q]];
                    (
                        p.col_off[q],
                        &line(q)[li * ni..(li + 1) * ni],
                        &p.cols[q],
                        p.psign[q],
                    )
                }
                None => (0, &[], &[], 1.0),
            };
            let end = co + cols.len();
            for j in (0..co).chain(end..nc) {
                row[j].write(Complex64::new(-re[j], -im[j]));
            }
            if cols.len() == src.len() {
                // every column of the part, in order (checked in `prepare`)
                for ((d, y), (r, m)) in row[co..end]
                    .iter_mut()
                    .zip(src)
                    .zip(re[co..end].iter().zip(&im[co..end]))
                {
                    d.write(Complex64::new(-r, -m) + y * sg);
                }
            } else {
                for ((d, &j), (r, m)) in row[co..end]
                    .iter_mut()
                    .zip(cols)
                    .zip(re[co..end].iter().zip(&im[co..end]))
                {
                    d.write(Complex64::new(-r, -m) + src[j] * sg);
                }
            }
            written += 1;
        },
    );
    if written != p.n_rows {
        return Err(Error::numeric(format!(
            "internal: {written} of {} result rows written at {freq} Hz",
            p.n_rows
        )));
    }
    Ok(inv)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    /// Grounded single-DOF oscillator k − ω²m (receptance), as component `c`.
    fn sdof(c: &str, m: f64, k: f64, freqs: &[f64]) -> FrfSet {
        let d = Dof::new(c, "1", Direction::Z);
        let mut s = FrfSet::zeros(
            c,
            freqs.to_vec(),
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        for l in 0..freqs.len() {
            let w = s.omega(l);
            s.set(l, 0, 0, Complex64::new(1.0 / (k - w * w * m), 0.0));
        }
        s
    }

    #[test]
    fn spring_joint_in_every_kind_matches_the_two_dof_closed_form() {
        // textbook two-DOF system: masses m1, m2 grounded by k1, k2 and joined
        // by kc; dynamic stiffness [[k1+kc−ω²m1, −kc], [−kc, k2+kc−ω²m2]] and
        // its closed-form 2×2 inverse
        let (m1, k1, m2, k2, kc) = (2.0, 4.0e5, 1.0, 1.5e5, 7.0e4);
        let freqs = [3.0, 40.0, 75.0, 150.0];
        let joint = Joint {
            a: Dof::new("a", "1", Direction::Z),
            b: Dof::new("b", "1", Direction::Z),
            kind: JointKind::Spring { k: kc },
        };
        for kind in ["receptance", "mobility", "accelerance"] {
            let a = sdof("a", m1, k1, &freqs).to_kind(kind).unwrap();
            let b = sdof("b", m2, k2, &freqs).to_kind(kind).unwrap();
            for threads in [1, 2] {
                let r = couple_with_threads(
                    &[a.clone(), b.clone()],
                    std::slice::from_ref(&joint),
                    &CouplingOptions::default(),
                    threads,
                )
                .unwrap();
                assert_eq!(r.set.kind().name(), kind);
                let rec = r.set.to_kind("receptance").unwrap();
                for l in 0..freqs.len() {
                    let w2 = rec.omega(l).powi(2);
                    let (d11, d22, d12) = (k1 + kc - w2 * m1, k2 + kc - w2 * m2, -kc);
                    let det = d11 * d22 - d12 * d12;
                    let want = [[d22 / det, -d12 / det], [-d12 / det, d11 / det]];
                    for (i, row) in want.iter().enumerate() {
                        for (j, &wv) in row.iter().enumerate() {
                            let g = rec.get(l, i, j);
                            assert!(
                                (g - wv).norm() <= 1e-9 * wv.abs(),
                                "{kind} line {l} ({i},{j}): {g} vs {wv}"
                            );
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn spring_joint_decoupling_recovers_the_oscillator() {
        // remove b and the spring from the two-DOF system above (closed form as
        // the assembly): what stays is 1/(k1 − ω²m1), the textbook SDOF receptance
        let (m1, k1, m2, k2, kc) = (2.0, 4.0e5, 1.0, 1.5e5, 7.0e4);
        let freqs = [5.0, 60.0, 120.0];
        let d = Dof::new("ab", "1", Direction::Z);
        let mut asm = FrfSet::zeros(
            "ab",
            freqs.to_vec(),
            vec![d.clone()],
            vec![d.clone()],
            Quantity::Displacement,
            Quantity::Force,
        );
        for l in 0..freqs.len() {
            let w2 = asm.omega(l).powi(2);
            let (d11, d22) = (k1 + kc - w2 * m1, k2 + kc - w2 * m2);
            asm.set(l, 0, 0, Complex64::new(d22 / (d11 * d22 - kc * kc), 0.0));
        }
        let b = sdof("b", m2, k2, &freqs);
        let j = Joint {
            a: d,
            b: Dof::new("b", "1", Direction::Z),
            kind: JointKind::Spring { k: kc },
        };
        let r = decouple(&asm, &b, &[j], &CouplingOptions::default()).unwrap();
        assert_eq!(r.set.n_out(), 1);
        for l in 0..freqs.len() {
            let w2 = asm.omega(l).powi(2);
            let want = 1.0 / (k1 - w2 * m1);
            assert!((r.set.get(l, 0, 0) - want).norm() <= 1e-9 * want.abs());
        }
    }
}
