//! Cascades, sums of paths, and mechanical series and parallel combinations.

use super::{inverse_kind, require_same_grid};
use crate::error::{Error, Result};
use crate::frf::{labels, Dof, FrfKind, FrfSet};
use num_complex::Complex64;

/// Chain transfer matrices: H = second · first per line; `first`'s outputs
/// (and quantity) must be `second`'s inputs.
///
/// The DOFs are matched by place (component, node, direction); a label of
/// opposite sign on the two sides flips the sign of that term. The result has
/// `second`'s outputs and `first`'s inputs. `first` may be a complex spectrum
/// (peak or RMS, with phase): the result is then the response spectrum.
pub fn cascade(first: &FrfSet, second: &FrfSet) -> Result<FrfSet> {
    let map = check_cascade(first, second)?;
    let (n_o, n_r, n_i) = (second.n_out(), second.n_in(), first.n_in());
    let mut out = FrfSet::zeros(
        &format!("{} · {}", second.name, first.name),
        second.freqs.clone(),
        second.outputs.clone(),
        first.inputs.clone(),
        second.out_qty,
        first.in_qty,
    );
    for k in 0..first.n_lines() {
        let s = second.line(k);
        let f = first.line(k);
        let dst = out.line_mut(k);
        for i in 0..n_o {
            for (r, &(p, sg)) in map.iter().enumerate() {
                let a = s[i * n_r + r] * sg;
                for j in 0..n_i {
                    dst[i * n_i + j] += a * f[p * n_i + j];
                }
            }
        }
    }
    out.signal = first.signal;
    out.provenance = first
        .provenance
        .iter()
        .chain(&second.provenance)
        .cloned()
        .collect();
    out.warnings = merged_warnings([first, second]);
    Ok(out)
}

/// The cascade's checks; for each input of `second`, the output of `first`
/// at its place and the sign between their labels.
pub(crate) fn check_cascade(first: &FrfSet, second: &FrfSet) -> Result<Vec<(usize, f64)>> {
    require_same_grid(first, second, "a cascade")?;
    if second.signal.is_some() {
        return Err(Error::quantity(format!(
            "a cascade needs an FRF as second stage, but '{}' is a spectrum",
            second.name
        )));
    }
    if let Some(sig) = first.signal {
        if !sig.has_phase() {
            return Err(Error::quantity(format!(
                "a cascade multiplies complex values, but the first stage '{}' is a {} spectrum without phase",
                first.name,
                sig.name()
            )));
        }
    }
    if first.out_qty != second.in_qty {
        return Err(Error::quantity(format!(
            "cascade: the outputs of the first stage '{}' are {} but the inputs of the second stage '{}' are {}; they must be the same quantity (convert one stage first)",
            first.name, first.out_qty, second.name, second.in_qty
        )));
    }
    // For each input r of `second`, the output of `first` at the same place.
    let mut map: Vec<(usize, f64)> = Vec::with_capacity(second.n_in());
    let mut not_in_first: Vec<Dof> = Vec::new();
    for d in &second.inputs {
        match first.out_place(d) {
            Some(p) => map.push((p, d.sign() * first.outputs[p].sign())),
            None => not_in_first.push(d.clone()),
        }
    }
    let not_in_second: Vec<Dof> = first
        .outputs
        .iter()
        .filter(|o| !second.inputs.iter().any(|d| d.same_place(o)))
        .cloned()
        .collect();
    if !not_in_first.is_empty() || !not_in_second.is_empty() {
        let mut parts = Vec::new();
        if !not_in_second.is_empty() {
            parts.push(format!(
                "outputs of the first stage '{}' that are not inputs of '{}': {}",
                first.name,
                second.name,
                labels(&not_in_second)
            ));
        }
        if !not_in_first.is_empty() {
            parts.push(format!(
                "inputs of the second stage '{}' that are not outputs of '{}': {}",
                second.name,
                first.name,
                labels(&not_in_first)
            ));
        }
        return Err(Error::dof(format!(
            "cascade: the outputs of '{}' must be the inputs of '{}'; {}",
            first.name,
            second.name,
            parts.join("; ")
        )));
    }
    first.require_complete("a cascade")?;
    second.require_complete("a cascade")?;
    Ok(map)
}

/// Add sets that share outputs, inputs and quantities.
///
/// An entry missing in any set is missing in the sum (and named in a warning).
pub fn sum_paths(sets: &[FrfSet]) -> Result<FrfSet> {
    let Some(first) = sets.first() else {
        return Err(Error::usage("a sum of paths needs at least one set"));
    };
    if let Some(sig) = first.signal {
        if !sig.has_phase() {
            return Err(Error::quantity(format!(
                "a sum of paths adds complex values, but '{}' is a {} spectrum without phase",
                first.name,
                sig.name()
            )));
        }
    }
    for s in &sets[1..] {
        require_same_grid(first, s, "a sum of paths")?;
        if s.out_qty != first.out_qty || s.in_qty != first.in_qty {
            return Err(Error::quantity(format!(
                "a sum of paths needs one kind: '{}' is {} per {}, '{}' is {} per {}",
                first.name, first.out_qty, first.in_qty, s.name, s.out_qty, s.in_qty
            )));
        }
        if s.signal != first.signal {
            return Err(Error::quantity(format!(
                "a sum of paths cannot add '{}' and '{}': one is a spectrum, or they are spectra of different kinds",
                first.name, s.name
            )));
        }
        require_same_dofs(first, s, "a sum of paths", false)?;
    }
    let mut out = first.clone();
    out.name = names("sum", sets);
    out.coherence = None;
    for s in &sets[1..] {
        for (p, q) in out.present.iter_mut().zip(&s.present) {
            *p = *p && *q;
        }
        for (a, b) in out.data.iter_mut().zip(&s.data) {
            *a += *b;
        }
    }
    finish_sum(&mut out, sets);
    Ok(out)
}

/// Elements carrying one force: mobilities (receptances) add.
///
/// Sets may be motion per force (receptance, mobility, accelerance) or force
/// per motion (dynamic stiffness, impedance, apparent mass); force-per-motion
/// sets are inverted line by line (square, complete matrices). The sum is
/// formed in the motion-per-force kind of the first set and returned in the
/// first set's kind. DOFs come from the first set; for matrices the other
/// sets must list the same nodes and directions in the same order (their
/// component names may differ).
pub fn series(sets: &[FrfSet]) -> Result<FrfSet> {
    combine(sets, true)
}

/// Elements sharing one motion: impedances (dynamic stiffnesses) add.
///
/// Motion-per-force sets are inverted line by line (square, complete
/// matrices), the force-per-motion forms added, and the result returned in
/// the first set's kind. DOF rules as for [`series`].
pub fn parallel(sets: &[FrfSet]) -> Result<FrfSet> {
    combine(sets, false)
}

fn is_motion_per_force(k: FrfKind) -> bool {
    matches!(
        k,
        FrfKind::Receptance | FrfKind::Mobility | FrfKind::Accelerance
    )
}

fn combine(sets: &[FrfSet], series: bool) -> Result<FrfSet> {
    let what = if series {
        "a series combination"
    } else {
        "a parallel combination"
    };
    let Some(first) = sets.first() else {
        return Err(Error::usage(format!("{what} needs at least one set")));
    };
    for s in sets {
        if s.signal.is_some() {
            return Err(Error::quantity(format!(
                "{what} needs FRFs, but '{}' is a spectrum",
                s.name
            )));
        }
        if inverse_kind(s.kind()).is_none() {
            return Err(Error::quantity(format!(
                "{what} needs mechanical FRFs (receptance, mobility, accelerance, dynamic stiffness, impedance or apparent mass), but '{}' is {} ({} per {})",
                s.name,
                s.kind(),
                s.out_qty,
                s.in_qty
            )));
        }
    }
    for s in &sets[1..] {
        require_same_grid(first, s, what)?;
        require_same_dofs(first, s, what, true)?;
    }
    let k0 = first.kind();
    // The form in which the values add.
    let target = if is_motion_per_force(k0) == series {
        k0
    } else {
        inverse_kind(k0).unwrap_or(k0)
    };
    let conv: Vec<FrfSet> = sets
        .iter()
        .map(|s| {
            if s.kind() == target {
                Ok(s.clone())
            } else {
                s.to_kind(target.name())
            }
        })
        .collect::<Result<_>>()?;
    let mut out = conv[0].clone();
    out.coherence = None;
    for s in &conv[1..] {
        for (p, q) in out.present.iter_mut().zip(&s.present) {
            *p = *p && *q;
        }
        for (a, b) in out.data.iter_mut().zip(&s.data) {
            *a += *b;
        }
    }
    finish_sum(&mut out, &conv);
    if target != k0 {
        out = out.to_kind(k0.name())?;
    }
    out.name = names(if series { "series" } else { "parallel" }, sets);
    out.provenance = sets
        .iter()
        .flat_map(|s| s.provenance.iter().cloned())
        .collect();
    Ok(out)
}

/// Same DOF lists. With `ignore_component`, 1×1 sets match whatever their
/// labels, and matrices must agree in node, direction and sign.
fn require_same_dofs(a: &FrfSet, b: &FrfSet, what: &str, ignore_component: bool) -> Result<()> {
    if a.n_out() != b.n_out() || a.n_in() != b.n_in() {
        return Err(Error::dof(format!(
            "{what} needs sets of one size: '{}' has {} outputs × {} inputs, '{}' has {} × {}",
            a.name,
            a.n_out(),
            a.n_in(),
            b.name,
            b.n_out(),
            b.n_in()
        )));
    }
    if ignore_component && a.n_out() * a.n_in() == 1 {
        return Ok(());
    }
    let same = |x: &Dof, y: &Dof| {
        if ignore_component {
            x.node == y.node && x.dir == y.dir && x.positive == y.positive
        } else {
            x == y
        }
    };
    for (side, da, db) in [
        ("outputs", &a.outputs, &b.outputs),
        ("inputs", &a.inputs, &b.inputs),
    ] {
        if let Some(p) = da.iter().zip(db).position(|(x, y)| !same(x, y)) {
            return Err(Error::dof(format!(
                "{what} needs the same {side} in the same order: '{}' has {} where '{}' has {} (position {}){}",
                a.name,
                da[p],
                b.name,
                db[p],
                p + 1,
                if ignore_component {
                    " (component names may differ, nodes and directions may not)"
                } else {
                    ""
                }
            )));
        }
    }
    Ok(())
}

fn names(op: &str, sets: &[FrfSet]) -> String {
    let n: Vec<&str> = sets.iter().map(|s| s.name.as_str()).collect();
    format!("{op}({})", n.join(", "))
}

fn merged_warnings<'a>(sets: impl IntoIterator<Item = &'a FrfSet>) -> Vec<String> {
    let mut w: Vec<String> = Vec::new();
    for s in sets {
        for x in &s.warnings {
            if !w.contains(x) {
                w.push(x.clone());
            }
        }
    }
    w
}

/// Missing entries are NaN in the sum; name them in a warning.
fn finish_sum(out: &mut FrfSet, sets: &[FrfSet]) {
    out.warnings = merged_warnings(sets);
    let missing = out.missing_entries();
    if missing.is_empty() {
        return;
    }
    let nan = Complex64::new(f64::NAN, f64::NAN);
    let (n_o, n_i) = (out.n_out(), out.n_in());
    for k in 0..out.n_lines() {
        for i in 0..n_o {
            for j in 0..n_i {
                if !out.present[i * n_i + j] {
                    out.set(k, i, j, nan);
                }
            }
        }
    }
    let shown: Vec<String> = missing.iter().take(8).cloned().collect();
    out.warnings.push(format!(
        "{} entries are missing in at least one of the added sets and so in the result: {}{}",
        missing.len(),
        shown.join(", "),
        if missing.len() > 8 { ", ..." } else { "" }
    ));
}
