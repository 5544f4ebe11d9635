//! Merging FRF sets of one component spread over several files or datasets
//! (one per reference, as a roving-hammer test delivers them).
//!
//! Rules: all sets must hold the same component(s), the same frequency grid
//! (value for value), the same output and input quantities and the same
//! signal kind. The merged set has the union of the output and input DOFs in
//! order of first appearance. An entry given by more than one set is taken
//! from the first and reported; entries no set gives stay missing and are
//! reported. A DOF given once as `+Z` and once as `-Z` is one DOF: values
//! from the second are negated onto the first's sign.

use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::limits::Limits;
use num_complex::Complex64;
use std::collections::HashMap;

/// How a set is named in remarks: its name and the files it came from.
fn who(s: &FrfSet) -> String {
    let files: Vec<String> = s.provenance.iter().map(|p| quote(&p.file)).collect();
    if files.is_empty() {
        format!("'{}'", quote(&s.name))
    } else {
        format!("'{}' ({})", quote(&s.name), files.join(", "))
    }
}

fn components(s: &FrfSet) -> Vec<String> {
    let mut c: Vec<String> = s
        .outputs
        .iter()
        .chain(s.inputs.iter())
        .filter(|d| !(s.signal.is_some() && d.component.is_empty() && d.node == "ref"))
        .map(|d| d.component.clone())
        .collect();
    c.sort();
    c.dedup();
    c
}

/// Where a DOF is, whatever its sign (what [`Dof::same_place`] compares).
type Place<'a> = (&'a str, &'a str, crate::frf::Direction);

fn place(d: &Dof) -> Place<'_> {
    (&d.component, &d.node, d.dir)
}

/// The union of the sets' DOFs in order of first appearance, and each
/// place's index: one hash look-up per DOF, linear in their number.
fn union<'a>(lists: impl Iterator<Item = &'a [Dof]>) -> (Vec<Dof>, HashMap<Place<'a>, usize>) {
    let mut dofs = Vec::new();
    let mut at = HashMap::new();
    for list in lists {
        for d in list {
            at.entry(place(d)).or_insert_with(|| {
                dofs.push(d.clone());
                dofs.len() - 1
            });
        }
    }
    (dofs, at)
}

/// Merge sets with the same grid and quantities into one matrix over the union
/// of their DOFs; entries no set provides stay missing. Returns the merged set
/// and remarks naming duplicates (kept: the first) and gaps.
pub fn merge(sets: Vec<FrfSet>) -> Result<(FrfSet, Vec<String>)> {
    merge_with_limits(sets, &Limits::default())
}

/// [`merge`] with the merged matrix checked against `limits` before it is
/// built: sets of distinct DOFs make a union whose matrix grows with the
/// square of their number.
pub fn merge_with_limits(sets: Vec<FrfSet>, limits: &Limits) -> Result<(FrfSet, Vec<String>)> {
    let Some(first) = sets.first() else {
        return Err(Error::usage("nothing to merge: no FRF sets given"));
    };
    for s in &sets {
        s.validate()
            .map_err(|e| e.field(format!("set {}", who(s))))?;
    }
    let comp0 = components(first);
    for s in &sets[1..] {
        let c = components(s);
        if c != comp0 {
            let list = |c: &[String]| c.iter().map(|x| quote(x)).collect::<Vec<_>>().join(", ");
            return Err(Error::dof(format!(
                "cannot merge {} with {}: they hold different components ({} vs {}); merge sets of one component only",
                who(first),
                who(s),
                list(&comp0),
                list(&c)
            ))
            .field("components"));
        }
        if s.freqs.len() != first.freqs.len() {
            return Err(Error::grid(format!(
                "cannot merge {} ({} lines) with {} ({} lines): the frequency grids differ; resample to one grid first",
                who(first),
                first.freqs.len(),
                who(s),
                s.freqs.len()
            ))
            .field("frequency grid"));
        }
        if let Some(k) = (0..s.freqs.len()).find(|&k| s.freqs[k] != first.freqs[k]) {
            return Err(Error::grid(format!(
                "cannot merge {} with {}: line {} is {} Hz in the first and {} Hz in the second; the grids must be identical (resample first)",
                who(first),
                who(s),
                k + 1,
                first.freqs[k],
                s.freqs[k]
            ))
            .field("frequency grid"));
        }
        if s.out_qty != first.out_qty || s.in_qty != first.in_qty {
            return Err(Error::quantity(format!(
                "cannot merge {} ({} per {}) with {} ({} per {}): the quantities differ; convert one first",
                who(first),
                first.out_qty,
                first.in_qty,
                who(s),
                s.out_qty,
                s.in_qty
            ))
            .field("quantities"));
        }
        if s.signal != first.signal {
            let name = |k: Option<crate::frf::SignalKind>| k.map(|k| k.name()).unwrap_or("FRF");
            return Err(Error::quantity(format!(
                "cannot merge {} ({}) with {} ({}): one cannot hold both",
                who(first),
                name(first.signal),
                who(s),
                name(s.signal)
            ))
            .field("signal"));
        }
    }
    let (outputs, out_at) = union(sets.iter().map(|s| s.outputs.as_slice()));
    let (inputs, in_at) = union(sets.iter().map(|s| s.inputs.as_slice()));
    let (n_out, n_in, n_lines) = (outputs.len(), inputs.len(), first.n_lines());
    let any_coh = sets.iter().any(|s| s.coherence.is_some());
    // the values, and the coherence (half a complex value per entry) if any
    let values = crate::limits::product(&[n_lines, n_out, n_in])
        .and_then(|v| v.checked_add(if any_coh { v / 2 + 1 } else { 0 }));
    limits.check_values(
        &format!(
            "merging {} sets into one of {n_lines} lines × {n_out} outputs × {n_in} inputs",
            sets.len()
        ),
        values,
    )?;
    let mut m = FrfSet::zeros(
        &first.name,
        first.freqs.clone(),
        outputs,
        inputs,
        first.out_qty,
        first.in_qty,
    );
    m.signal = first.signal;
    m.data = vec![Complex64::new(f64::NAN, f64::NAN); n_lines * n_out * n_in];
    m.present = vec![false; n_out * n_in];
    let mut coh = if any_coh {
        Some(vec![f64::NAN; n_lines * n_out * n_in])
    } else {
        None
    };
    let mut source: Vec<Option<usize>> = vec![None; n_out * n_in];
    let mut remarks = Vec::new();
    for (sn, s) in sets.iter().enumerate() {
        for (a, o) in s.outputs.iter().enumerate() {
            let i = out_at.get(&place(o)).copied().unwrap_or(0);
            for (b, inp) in s.inputs.iter().enumerate() {
                if !s.is_present(a, b) {
                    continue;
                }
                let j = in_at.get(&place(inp)).copied().unwrap_or(0);
                let cell = i * n_in + j;
                if let Some(prev) = source[cell] {
                    remarks.push(format!(
                        "entry {} / {} is given by {} and by {}; kept the first",
                        quote(&m.outputs[i].to_string()),
                        quote(&m.inputs[j].to_string()),
                        who(&sets[prev]),
                        who(s)
                    ));
                    continue;
                }
                source[cell] = Some(sn);
                m.present[cell] = true;
                let sign = o.sign() * m.outputs[i].sign() * inp.sign() * m.inputs[j].sign();
                for k in 0..n_lines {
                    m.data[(k * n_out + i) * n_in + j] = s.get(k, a, b) * sign;
                    if let (Some(c), Some(sc)) = (coh.as_mut(), s.coherence.as_ref()) {
                        c[(k * n_out + i) * n_in + j] = sc[s.idx(k, a, b)];
                    }
                }
            }
        }
    }
    // counted, and only the first few named (not a label per missing entry)
    let missing = m.present.iter().filter(|p| !**p).count();
    if missing > 0 {
        let shown: Vec<String> = (0..n_out * n_in)
            .filter(|&c| !m.present[c])
            .take(12)
            .map(|c| {
                format!(
                    "{} / {}",
                    quote(&m.outputs[c / n_in].to_string()),
                    quote(&m.inputs[c % n_in].to_string())
                )
            })
            .collect();
        remarks.push(format!(
            "{missing} of {} entries of the merged '{}' remain missing: {}{}",
            n_out * n_in,
            quote(&m.name),
            shown.join(", "),
            if missing > 12 { ", ..." } else { "" }
        ));
    }
    m.coherence = coh;
    // each record once, found by hash (thousands of sets may be merged)
    let mut seen = std::collections::HashSet::new();
    for s in &sets {
        for p in &s.provenance {
            if seen.insert((&p.file, &p.sha256, &p.format, &p.options)) {
                m.provenance.push(p.clone());
            }
        }
        m.warnings.extend(s.warnings.iter().cloned());
    }
    m.warnings.extend(remarks.iter().cloned());
    m.validate()?;
    Ok((m, remarks))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Direction, Provenance};
    use crate::units::Quantity;

    fn one_ref(file: &str, refnode: &str, outs: &[(&str, Direction)]) -> FrfSet {
        let o: Vec<Dof> = outs.iter().map(|(n, d)| Dof::new("wall", n, *d)).collect();
        let mut s = FrfSet::zeros(
            "wall",
            vec![10.0, 20.0],
            o,
            vec![Dof::new("wall", refnode, Direction::Z)],
            Quantity::Acceleration,
            Quantity::Force,
        );
        for (n, v) in s.data.iter_mut().enumerate() {
            *v = Complex64::new(n as f64 + refnode.len() as f64, 1.0);
        }
        s.provenance.push(Provenance {
            file: file.into(),
            ..Default::default()
        });
        s
    }

    // roving-hammer bookkeeping (common practice): one file per reference
    #[test]
    fn union_duplicates_and_gaps() {
        let a = one_ref("a.uff", "1", &[("1", Direction::Z), ("2", Direction::Z)]);
        let b = one_ref("b.uff", "3", &[("1", Direction::Z)]);
        let mut c = one_ref("c.uff", "1", &[("2", Direction::Z)]);
        c.data[0] = Complex64::new(99.0, 0.0);
        let (m, r) = merge(vec![a.clone(), b, c]).unwrap();
        assert_eq!(m.n_out(), 2);
        assert_eq!(m.n_in(), 2);
        assert!(m.is_present(0, 0) && m.is_present(1, 0) && m.is_present(0, 1));
        assert!(!m.is_present(1, 1));
        // duplicate 2+Z / 1+Z: the first (a.uff) kept
        assert_eq!(m.get(0, 1, 0), a.get(0, 1, 0));
        let dup = r.iter().find(|x| x.contains("kept the first")).unwrap();
        assert!(
            dup.contains("a.uff") && dup.contains("c.uff") && dup.contains("wall:2+Z"),
            "{dup}"
        );
        let gap = r.iter().find(|x| x.contains("remain missing")).unwrap();
        assert!(gap.contains("wall:2+Z / wall:3+Z"), "{gap}");
        assert_eq!(m.provenance.len(), 3);
    }

    #[test]
    fn opposite_sign_is_one_dof() {
        let a = one_ref("a.uff", "1", &[("1", Direction::Z)]);
        let mut b = one_ref("b.uff", "4", &[("1", Direction::Z)]);
        b.outputs[0].positive = false;
        let v = b.get(1, 0, 0);
        let (m, _) = merge(vec![a, b]).unwrap();
        assert_eq!(m.n_out(), 1);
        assert_eq!(m.get(1, 0, 1), -v);
    }

    #[test]
    fn mismatches_name_both_sets() {
        let a = one_ref("a.uff", "1", &[("1", Direction::Z)]);
        let mut b = one_ref("b.uff", "2", &[("1", Direction::Z)]);
        b.freqs[1] = 21.0;
        let e = merge(vec![a.clone(), b]).unwrap_err();
        assert!(
            e.message.contains("a.uff") && e.message.contains("b.uff"),
            "{e}"
        );
        assert!(e.message.contains("line 2"), "{e}");
        let mut c = one_ref("c.uff", "2", &[("1", Direction::Z)]);
        c.out_qty = Quantity::Velocity;
        let e = merge(vec![a.clone(), c]).unwrap_err();
        assert!(
            e.message.contains("acceleration") && e.message.contains("velocity"),
            "{e}"
        );
        assert!(e.message.contains("c.uff"), "{e}");
        let mut d = one_ref("d.uff", "2", &[("1", Direction::Z)]);
        d.set_component("roof");
        let e = merge(vec![a, d]).unwrap_err();
        assert!(
            e.message.contains("roof") && e.message.contains("d.uff"),
            "{e}"
        );
        assert!(merge(vec![]).is_err());
    }
}
