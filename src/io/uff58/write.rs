//! Writing: [`write`] and [`write_with`] (sets to bytes, with the multi-set
//! tag in ID line 2), [`datasets_of`] (the datasets of one set: one per
//! present entry, coherence after its FRF, our ID lines), [`write_dataset`]
//! (one dataset in the chosen layout) and the number text ([`shortest`],
//! and `fit` for the layout's columns). What each layout keeps exactly is in
//! the `uff58` docs ("Writing and exactness").
//!
//! Not here: reading (`scan.rs`, `group.rs`).

use super::convert::{dir_code, in_code, out_code};
use super::provenance::provenance_lines;
use super::records::{AsciiLayout, AxisInfo, Dataset58, Layout};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, SignalKind};
use num_complex::Complex64;

/// Shortest text that reads back as exactly `v` (Rust's shortest round-trip
/// formatting, in exponent or plain form, whichever is shorter).
pub fn shortest(v: f64) -> String {
    let e = format!("{v:e}");
    let p = format!("{v}");
    if p.len() < e.len() {
        p
    } else {
        e
    }
}

/// `v` right-aligned in `width` columns with at least one leading blank:
/// the shortest exact text if it fits, else as many digits as fit.
fn fit(v: f64, width: usize) -> String {
    let room = width - 1;
    let s = shortest(v);
    if s.len() <= room {
        return format!("{s:>width$}");
    }
    // the most digits that fit, in exponent or plain form, whichever reads
    // back closer
    let mut best: Option<(f64, String)> = None;
    let mut consider = |t: String| {
        if let Ok(r) = t.parse::<f64>() {
            let err = (r - v).abs();
            if best.as_ref().map(|b| err < b.0).unwrap_or(true) {
                best = Some((err, t));
            }
        }
    };
    // with p digits after the point the text is len(p = 0) + 1 + p long,
    // give or take one when rounding carries into the exponent
    for plain in [false, true] {
        let f = |p: usize| {
            if plain {
                format!("{v:.p$}")
            } else {
                format!("{v:.p$e}")
            }
        };
        let l0 = f(0).len();
        let mut p = room.saturating_sub(l0 + 1).min(16);
        loop {
            let t = f(p);
            if t.len() <= room {
                consider(t);
                break;
            }
            if p == 0 {
                break;
            }
            p -= 1;
        }
    }
    let t = best.map(|b| b.1).unwrap_or_else(|| format!("{v:.0e}"));
    format!("{t:>width$}")
}

fn pad80(s: &str) -> String {
    format!("{s:<80}")
}

fn id_text(s: &str) -> String {
    let t: String = s
        .chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .take(80)
        .collect();
    let t = t.trim().to_string();
    if t.is_empty() {
        "NONE".into()
    } else {
        t
    }
}

fn label20(s: &str) -> String {
    let t: String = s.chars().take(20).collect();
    format!("{t:<20}")
}

fn node_number(d: &Dof, set: &str) -> Result<i64> {
    match d.node.trim().parse::<i64>() {
        Ok(n) if (0..=9_999_999_999).contains(&n) => Ok(n),
        _ => Err(Error::dof(format!(
            "cannot write DOF {d} of '{set}' to UFF: node '{}' is not a number 0..9999999999; UFF nodes are integers",
            d.node
        ))),
    }
}

/// The component as a record-6 entity name, when it fits (1-10 characters,
/// no blanks, not "NONE"); else none.
fn entity_of(d: &Dof) -> String {
    let c = d.component.as_str();
    if !c.is_empty()
        && c.chars().count() <= 10
        && !c.chars().any(char::is_whitespace)
        && !c.eq_ignore_ascii_case("none")
    {
        c.to_string()
    } else {
        String::new()
    }
}

/// Even spacing that a reader reconstructs exactly as `x0 + k*dx`, with both
/// numbers exact in 13-column fields.
fn even_grid(f: &[f64]) -> Option<(f64, f64)> {
    let x0 = f[0];
    let dx = if f.len() > 1 { f[1] - f[0] } else { 0.0 };
    if shortest(x0).len() > 12 || shortest(dx).len() > 12 {
        return None;
    }
    if f.iter()
        .enumerate()
        .all(|(k, &v)| x0 + (k as f64) * dx == v)
    {
        Some((x0, dx))
    } else {
        None
    }
}

/// Append one dataset in the given layout.
pub fn write_dataset(out: &mut Vec<u8>, ds: &Dataset58, layout: Layout) {
    let binary = layout == Layout::Binary;
    let complex = ds.is_complex();
    let mut vals: Vec<f64> = Vec::new();
    for (k, y) in ds.y.iter().enumerate() {
        if !ds.even {
            vals.push(ds.x[k]);
        }
        vals.push(y.re);
        if complex {
            vals.push(y.im);
        }
    }
    let mut s = String::new();
    s.push_str(&format!("{:>6}\n", -1));
    if binary {
        s.push_str(&format!(
            "{:>6}b{:>6}{:>6}{:>12}{:>12}{:>6}{:>6}{:>12}{:>12}\n",
            58,
            1,
            2,
            11,
            vals.len() * 8,
            0,
            0,
            0,
            0
        ));
    } else {
        s.push_str(&pad80(&format!("{:>6}", 58)));
        s.push('\n');
    }
    for l in &ds.id {
        s.push_str(&pad80(&id_text(l)));
        s.push('\n');
    }
    let ent = |e: &str| {
        let t = if e.is_empty() { "NONE" } else { e };
        format!("{:>10}", t.chars().take(10).collect::<String>())
    };
    s.push_str(&format!(
        "{:>5}{:>10}{:>5}{:>10} {}{:>10}{:>4} {}{:>10}{:>4}\n",
        ds.func_type,
        ds.func_id,
        ds.version,
        ds.load_case,
        ent(&ds.rsp_entity),
        ds.rsp_node,
        ds.rsp_dir,
        ent(&ds.ref_entity),
        ds.ref_node,
        ds.ref_dir
    ));
    s.push_str(&format!(
        "{:>10}{:>10}{:>10}{}{}{}\n",
        // always double precision
        if complex { 6 } else { 4 },
        ds.y.len(),
        if ds.even { 1 } else { 0 },
        fit(if ds.even { ds.x_min } else { 0.0 }, 13),
        fit(if ds.even { ds.x_inc } else { 0.0 }, 13),
        fit(ds.z_value, 13)
    ));
    for ax in &ds.axes {
        s.push_str(&format!(
            "{:>10}{:>5}{:>5}{:>5} {} {}\n",
            ax.code,
            ax.len_exp,
            ax.force_exp,
            ax.temp_exp,
            label20(if ax.label.is_empty() {
                "NONE"
            } else {
                &ax.label
            }),
            label20(if ax.units.is_empty() {
                "NONE"
            } else {
                &ax.units
            })
        ));
    }
    out.extend_from_slice(s.as_bytes());
    match layout {
        Layout::Binary => {
            for v in &vals {
                out.extend_from_slice(&v.to_le_bytes());
            }
        }
        Layout::Ascii(AsciiLayout::Exact) => {
            let mut line = String::new();
            for (n, v) in vals.iter().enumerate() {
                line.push_str(&format!("{:>26}", shortest(*v)));
                if n % 3 == 2 || n + 1 == vals.len() {
                    line.push('\n');
                    out.extend_from_slice(line.as_bytes());
                    line.clear();
                }
            }
        }
        Layout::Ascii(AsciiLayout::Standard) => {
            // columns per case (always double precision)
            let (widths, per_line): (&[usize], usize) = match (ds.even, complex) {
                (true, _) => (&[20], 4),
                (false, false) => (&[13, 20], 4),
                (false, true) => (&[13, 20, 20], 3),
            };
            let mut line = String::new();
            for (n, v) in vals.iter().enumerate() {
                let w = widths[n % widths.len()];
                line.push_str(&fit(*v, w));
                if n % per_line == per_line - 1 || n + 1 == vals.len() {
                    line.push('\n');
                    out.extend_from_slice(line.as_bytes());
                    line.clear();
                }
            }
        }
    }
    out.extend_from_slice(format!("{:>6}\n", -1).as_bytes());
}

/// The datasets that represent a set (one per present entry, plus coherence
/// datasets where the set carries coherence).
pub fn datasets_of(set: &FrfSet, layout: Layout) -> Result<Vec<Dataset58>> {
    set.validate()?;
    // a cross spectrum's input is its reference DOF, written as one
    let spectrum = set.signal.is_some() && set.signal != Some(SignalKind::Cross);
    // UFF has no component namespace: DOFs that differ only by component
    // would become one
    let sides: &[&Vec<Dof>] = if spectrum {
        &[&set.outputs]
    } else {
        &[&set.outputs, &set.inputs]
    };
    for dofs in sides {
        for (a, d) in dofs.iter().enumerate() {
            if let Some(o) = dofs[..a]
                .iter()
                .find(|o| o.node == d.node && o.dir == d.dir && o.component != d.component)
            {
                return Err(Error::dof(format!(
                    "cannot write '{}' to UFF: DOFs {o} and {d} differ only by component, and UFF has no component; write one component per file",
                    set.name
                )));
            }
        }
    }
    let (func_type, id2) = match set.signal {
        None => (4, set.kind().name().to_string()),
        Some(SignalKind::Peak) => (12, "signal=peak".into()),
        Some(SignalKind::Rms) => (12, "signal=rms".into()),
        Some(SignalKind::Autopower) => (2, "signal=autopower".into()),
        Some(SignalKind::Psd) => (9, "signal=psd".into()),
        Some(SignalKind::Cross) => (3, "signal=cross".into()),
        Some(SignalKind::Esd) => (10, "signal=esd".into()),
    };
    let real = matches!(
        set.signal,
        Some(SignalKind::Autopower | SignalKind::Psd | SignalKind::Esd)
    );
    let even = match layout {
        Layout::Binary | Layout::Ascii(_) => even_grid(&set.freqs),
    };
    let chain = provenance_lines(&set.provenance);
    let mut n_primary = 0usize;
    let mut out = Vec::new();
    for i in 0..set.n_out() {
        for j in 0..set.n_in() {
            if !set.is_present(i, j) {
                continue;
            }
            let slot = n_primary;
            n_primary += 1;
            let o = &set.outputs[i];
            let inp = &set.inputs[j];
            let orot = o.dir.is_rotational();
            let irot = inp.dir.is_rotational();
            let rsp_node = node_number(o, &set.name)?;
            let (ref_node, ref_dir) = if spectrum {
                (0, 0)
            } else {
                (node_number(inp, &set.name)?, dir_code(inp))
            };
            let units9 = match set.signal {
                None | Some(SignalKind::Peak | SignalKind::Rms) => {
                    set.out_qty.si_unit(orot).to_string()
                }
                Some(SignalKind::Autopower) => format!("({})^2", set.out_qty.si_unit(orot)),
                Some(SignalKind::Psd) => format!("({})^2/Hz", set.out_qty.si_unit(orot)),
                Some(SignalKind::Esd) => format!("({})^2*s/Hz", set.out_qty.si_unit(orot)),
                Some(SignalKind::Cross) if set.in_qty == set.out_qty => {
                    format!("({})^2", set.out_qty.si_unit(orot))
                }
                Some(SignalKind::Cross) => format!(
                    "({})*({})",
                    set.out_qty.si_unit(orot),
                    set.in_qty.si_unit(irot)
                ),
            };
            let ax_x = AxisInfo {
                code: 18,
                label: "frequency".into(),
                units: "Hz".into(),
                ..Default::default()
            };
            let ax_num = AxisInfo {
                code: out_code(set.out_qty),
                label: set.out_qty.name().into(),
                units: units9,
                ..Default::default()
            };
            let ax_den = if spectrum {
                AxisInfo::default()
            } else if set.signal == Some(SignalKind::Cross) {
                AxisInfo {
                    code: out_code(set.in_qty),
                    label: set.in_qty.name().into(),
                    ..Default::default()
                }
            } else {
                AxisInfo {
                    code: in_code(set.in_qty),
                    label: set.in_qty.name().into(),
                    units: set.in_qty.si_unit(irot).into(),
                    ..Default::default()
                }
            };
            let base = Dataset58 {
                payload: None,
                binary: layout == Layout::Binary,
                id: [
                    set.name.clone(),
                    id2.clone(),
                    chain
                        .get(3 * slot)
                        .cloned()
                        .unwrap_or_else(|| "NONE".into()),
                    chain
                        .get(3 * slot + 1)
                        .cloned()
                        .unwrap_or_else(|| "NONE".into()),
                    chain
                        .get(3 * slot + 2)
                        .cloned()
                        .unwrap_or_else(|| "NONE".into()),
                ],
                func_type,
                func_id: 0,
                version: 0,
                load_case: 0,
                rsp_entity: entity_of(o),
                rsp_node,
                rsp_dir: dir_code(o),
                ref_entity: if spectrum {
                    String::new()
                } else {
                    entity_of(inp)
                },
                ref_node,
                ref_dir,
                ord_type: if real { 4 } else { 6 },
                even: even.is_some(),
                x_min: even.map(|e| e.0).unwrap_or(0.0),
                x_inc: even.map(|e| e.1).unwrap_or(0.0),
                z_value: 0.0,
                axes: [ax_x.clone(), ax_num, ax_den, AxisInfo::default()],
                x: set.freqs.clone(),
                y: set.column(i, j),
                line: 0,
                latin1: false,
            };
            if let Some(coh) = &set.coherence {
                let c: Vec<f64> = (0..set.n_lines()).map(|k| coh[set.idx(k, i, j)]).collect();
                if c.iter().all(|v| v.is_finite()) {
                    let mut cd = base.clone();
                    cd.func_type = 6;
                    cd.id[1] = "coherence".into();
                    for l in cd.id[2..].iter_mut() {
                        *l = "NONE".into();
                    }
                    cd.ord_type = 4;
                    cd.y = c.iter().map(|&v| Complex64::new(v, 0.0)).collect();
                    cd.axes[1] = AxisInfo {
                        code: 0,
                        label: "coherence".into(),
                        units: "1".into(),
                        ..Default::default()
                    };
                    cd.axes[2] = AxisInfo::default();
                    out.push(base);
                    out.push(cd);
                    continue;
                }
            }
            out.push(base);
        }
    }
    Ok(out)
}

/// Write sets as UFF 58 (ASCII) or 58b (binary, double precision), one dataset per present entry.
///
/// ASCII uses [`AsciiLayout::Standard`] (the layout's columns); see the
/// module docs for exactness, and [`write_with`] for the exact layout.
pub fn write(sets: &[FrfSet], binary: bool) -> Result<Vec<u8>> {
    write_with(
        sets,
        if binary {
            Layout::Binary
        } else {
            Layout::Ascii(AsciiLayout::Standard)
        },
    )
}

/// Write sets in a chosen layout. With more than one set, ID line 2 of
/// every dataset carries ` set=<n>` so the reader gives the sets back (see
/// the module docs); a set without any present entry is refused.
pub fn write_with(sets: &[FrfSet], layout: Layout) -> Result<Vec<u8>> {
    if sets.is_empty() {
        return Err(Error::usage("no FRF sets to write"));
    }
    let tagged = sets.len() > 1;
    let mut out = Vec::new();
    let mut n = 0;
    for (k, s) in sets.iter().enumerate() {
        let list = datasets_of(s, layout)?;
        if list.is_empty() && tagged {
            return Err(Error::missing(format!(
                "set {} of {} ('{}') has no present entry; UFF cannot hold an empty set (it would vanish from the file), so leave it out",
                k + 1,
                sets.len(),
                s.name
            )));
        }
        for mut ds in list {
            if tagged {
                ds.id[1] = format!("{} set={}", ds.id[1], k + 1);
            }
            write_dataset(&mut out, &ds, layout);
            n += 1;
        }
    }
    if n == 0 {
        return Err(Error::missing(
            "every entry of the sets is missing; nothing to write",
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::super::{looks_like_uff, read};
    use super::*;
    use crate::frf::Direction;
    use crate::units::Quantity;

    fn sample(n: usize) -> FrfSet {
        let freqs: Vec<f64> = (0..n).map(|k| 3.0 + 0.37 * (k as f64).powf(1.3)).collect();
        let outs = vec![
            Dof::new("c", "12", Direction::Z),
            Dof::new("c", "7", Direction::RX),
        ];
        let ins = vec![Dof::new("c", "3", Direction::X)];
        let mut s = FrfSet::zeros(
            "bracket",
            freqs,
            outs,
            ins,
            Quantity::Velocity,
            Quantity::Force,
        );
        for k in 0..n {
            for i in 0..2 {
                // values needing all 17 digits, and extreme exponents
                let v = Complex64::new(
                    (k as f64 + 1.0).sqrt() * 1e-7 / (i as f64 + 3.0),
                    -(k as f64 * 0.1).sin() * 1.234e-300 + 1.0 / 3.0,
                );
                s.set(k, i, 0, v);
            }
        }
        s
    }

    // common practice: a writer/reader pair must return the same bits
    #[test]
    fn ascii_exact_write_read_is_bit_exact() {
        let s = sample(37);
        let bytes =
            write_with(std::slice::from_ref(&s), Layout::Ascii(AsciiLayout::Exact)).unwrap();
        for l in String::from_utf8(bytes.clone()).unwrap().lines() {
            assert!(l.len() <= 80, "line longer than 80 columns: {l}");
        }
        let (sets, _) = read(&bytes, "x.uff", "c").unwrap();
        assert_eq!(sets.len(), 1);
        let r = &sets[0];
        assert_eq!(r.name, "bracket");
        assert_eq!(r.outputs, s.outputs);
        assert_eq!(r.inputs, s.inputs);
        assert_eq!(r.freqs.len(), s.freqs.len());
        for (a, b) in r.freqs.iter().zip(&s.freqs) {
            assert_eq!(a.to_bits(), b.to_bits());
        }
        for (a, b) in r.data.iter().zip(&s.data) {
            assert_eq!(a.re.to_bits(), b.re.to_bits());
            assert_eq!(a.im.to_bits(), b.im.to_bits());
        }
        assert_eq!(r.provenance[0].format, "uff58-ascii");
    }

    #[test]
    fn binary_write_read_is_bit_exact() {
        let s = sample(20);
        let bytes = write(std::slice::from_ref(&s), true).unwrap();
        assert_eq!(looks_like_uff(&bytes), Some(true));
        let (sets, w) = read(&bytes, "x.uff", "c").unwrap();
        assert!(w.is_empty(), "{w:?}");
        assert_eq!(sets[0].data.len(), s.data.len());
        for (a, b) in sets[0].data.iter().zip(&s.data) {
            assert_eq!(a.re.to_bits(), b.re.to_bits());
            assert_eq!(a.im.to_bits(), b.im.to_bits());
        }
        assert_eq!(sets[0].provenance[0].format, "uff58-binary");
    }

    #[test]
    fn standard_columns_precision_bounds() {
        let s = sample(9);
        let bytes = write(std::slice::from_ref(&s), false).unwrap();
        assert_eq!(looks_like_uff(&bytes), Some(false));
        let text = String::from_utf8(bytes.clone()).unwrap();
        for l in text.lines() {
            assert!(l.len() <= 80);
        }
        let (sets, _) = read(&bytes, "x.uff", "c").unwrap();
        for (a, b) in sets[0].data.iter().zip(&s.data) {
            assert!((a - b).norm() <= 5e-13 * b.norm(), "{a} vs {b}");
        }
        // values whose shortest text fits the column come back exactly
        let mut t = s.clone();
        for v in t.data.iter_mut() {
            *v = Complex64::new(0.125, -2.5e-3);
        }
        let b2 = write(std::slice::from_ref(&t), false).unwrap();
        let (r2, _) = read(&b2, "x.uff", "c").unwrap();
        assert_eq!(r2[0].data, t.data);
        // the documented bounds, worst case negative 17-digit values
        for e in [-300, -150, -99, -50, -12, -5, 0, 5, 12, 99, 150, 300] {
            let v = -(1.0f64 / 3.0 + 1e-9) * 10f64.powi(e);
            let txt = fit(v, 20);
            assert_eq!(txt.len(), 20);
            assert!(txt.starts_with(' '), "{txt}");
            let r: f64 = txt.trim().parse().unwrap();
            let e10 = (v.abs().log10().floor() as i32).abs();
            let bound = if e10 < 10 {
                5e-14
            } else if e10 < 100 {
                5e-13
            } else {
                5e-12
            };
            assert!(((r - v) / v).abs() <= bound, "{e}: {txt}");
        }
        for k in 0..60 {
            let f = 0.1 * 1.5f64.powi(k) * (1.0 + 1.0 / 7.0);
            if f > 1e10 {
                break;
            }
            let txt = fit(f, 13);
            assert!(txt.len() == 13 && txt.starts_with(' '), "{txt}");
            let r: f64 = txt.trim().parse().unwrap();
            assert!(((r - f) / f).abs() <= 5e-10, "{f}: {txt}");
        }
    }

    #[test]
    fn even_grid_written_even_and_shortest_text() {
        assert_eq!(shortest(0.1), "0.1");
        assert_eq!(shortest(1e-300), "1e-300");
        assert_eq!(fit(1.0 / 3.0, 20).len(), 20);
        assert_eq!(fit(1.0 / 3.0, 20).trim().parse::<f64>().unwrap(), 1.0 / 3.0);
        let f: Vec<f64> = (0..10).map(|k| 2.0 + 0.5 * k as f64).collect();
        assert_eq!(even_grid(&f), Some((2.0, 0.5)));
        let g: Vec<f64> = (0..10).map(|k| (k as f64 + 1.0).ln()).collect();
        assert_eq!(even_grid(&g), None);
    }

    #[test]
    fn components_that_would_collide_are_refused() {
        let mut s = sample(3);
        s.outputs[1] = Dof::new("other", "12", Direction::Z);
        let e = write(&[s], false).unwrap_err();
        assert!(e.message.contains("c:12+Z and other:12+Z"), "{e}");
        let mut t = sample(3);
        t.outputs[0].node = "A7".into();
        let e = write(&[t], true).unwrap_err();
        assert!(e.message.contains("node 'A7' is not a number"), "{e}");
    }

    #[test]
    fn spectrum_and_coherence_round_trip() {
        let d = Dof::new("c", "5", Direction::Y);
        let mut s = FrfSet::zeros(
            "fan",
            vec![10.0, 20.0, 30.0],
            vec![d],
            vec![Dof::scalar("", "ref")],
            Quantity::Force,
            Quantity::Dimensionless,
        );
        s.signal = Some(SignalKind::Rms);
        s.data[1] = Complex64::new(2.0, 1.0);
        let mut h = sample(3);
        h.freqs = vec![10.0, 20.0, 30.0];
        h.coherence = Some(vec![0.9; h.data.len()]);
        let bytes = write(&[s.clone(), h.clone()], false).unwrap();
        let (sets, w) = read(&bytes, "y.uff", "c").unwrap();
        assert_eq!(sets.len(), 2, "{w:?}");
        let sp = sets.iter().find(|x| x.signal.is_some()).unwrap();
        assert_eq!(sp.signal, Some(SignalKind::Rms));
        assert_eq!(sp.data, s.data);
        let fr = sets.iter().find(|x| x.signal.is_none()).unwrap();
        assert_eq!(
            fr.coherence.as_ref().unwrap(),
            h.coherence.as_ref().unwrap()
        );
    }
}
