//! Our own lossless layout, `mortise-frf 1` (described in the `csv` module
//! docs): [`write_native`] writes one block per set, [`read_native`] reads
//! every block back bit for bit, [`is_native`] recognises it.
//!
//! Not here: suppliers' files (`mapped.rs`).

use super::text::{
    decode_text, esc, fmt_f64, numbered_lines, parse_num, quote_cell, split_quoted, text_lines,
    unesc,
};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::limits::Limits;
use crate::units::Quantity;
use num_complex::Complex64;

/// The magic text that starts every block of our own layout.
pub const NATIVE_MAGIC: &str = "# mortise-frf";
/// The layout version written and read.
pub const NATIVE_VERSION: u32 = 1;

/// True when the text starts (after blank lines) with our magic line.
pub fn is_native(text: &str) -> bool {
    text_lines(text)
        .map(str::trim)
        .find(|l| !l.is_empty())
        .is_some_and(|l| l.starts_with(NATIVE_MAGIC))
}

fn entry_label(out: &Dof, inp: &Dof) -> String {
    format!("{out}/{inp}")
}

fn dof_line(out: &mut String, side: &str, d: &Dof) -> Result<()> {
    let text = d.to_string();
    let reads_back = !text.contains('\n')
        && !text.contains('\r')
        && text.trim() == text
        && Dof::parse(&text, "").ok().as_ref() == Some(d);
    if reads_back {
        out.push_str(&format!("# {side}: {text}\n"));
    } else {
        let j = serde_json::to_string(d).map_err(|e| Error::parse(e.to_string()))?;
        out.push_str(&format!("# {side}-json: {j}\n"));
    }
    Ok(())
}

/// Write sets in our own layout, one block per set.
pub fn write_native(sets: &[FrfSet]) -> Result<Vec<u8>> {
    let mut out = String::new();
    for (n, s) in sets.iter().enumerate() {
        s.validate()
            .map_err(|e| e.field(format!("set {} ('{}')", n + 1, s.name)))?;
        if n > 0 {
            out.push('\n');
        }
        out.push_str(&format!("{NATIVE_MAGIC} {NATIVE_VERSION}\n"));
        out.push_str(&format!("# name: {}\n", esc(&s.name)));
        out.push_str(&format!("# out-quantity: {}\n", s.out_qty.name()));
        out.push_str(&format!("# in-quantity: {}\n", s.in_qty.name()));
        out.push_str("# units: SI\n");
        if let Some(sig) = s.signal {
            out.push_str(&format!("# signal: {}\n", sig.name()));
        }
        for d in &s.outputs {
            dof_line(&mut out, "output", d)?;
        }
        for d in &s.inputs {
            dof_line(&mut out, "input", d)?;
        }
        for i in 0..s.n_out() {
            for j in 0..s.n_in() {
                if !s.is_present(i, j) {
                    out.push_str(&format!(
                        "# missing: {} {} ({})\n",
                        i + 1,
                        j + 1,
                        esc(&format!("{} / {}", s.outputs[i], s.inputs[j]))
                    ));
                }
            }
        }
        let coh = s.coherence.as_ref();
        if coh.is_some() {
            out.push_str("# coherence: yes\n");
        }
        for p in &s.provenance {
            let j = serde_json::to_string(p).map_err(|e| Error::parse(e.to_string()))?;
            out.push_str(&format!("# provenance: {j}\n"));
        }
        for w in &s.warnings {
            out.push_str(&format!("# warning: {}\n", esc(w)));
        }
        let mut head = vec!["freq_Hz".to_string()];
        for i in 0..s.n_out() {
            for j in 0..s.n_in() {
                if s.is_present(i, j) {
                    let l = entry_label(&s.outputs[i], &s.inputs[j]);
                    head.push(quote_cell(&format!("re {l}"), ','));
                    head.push(quote_cell(&format!("im {l}"), ','));
                    if coh.is_some() {
                        head.push(quote_cell(&format!("coh {l}"), ','));
                    }
                }
            }
        }
        out.push_str(&head.join(","));
        out.push('\n');
        for k in 0..s.n_lines() {
            let mut row = vec![fmt_f64(s.freqs[k])];
            for i in 0..s.n_out() {
                for j in 0..s.n_in() {
                    if s.is_present(i, j) {
                        let v = s.get(k, i, j);
                        row.push(fmt_f64(v.re));
                        row.push(fmt_f64(v.im));
                        if let Some(c) = coh {
                            let c = c[s.idx(k, i, j)];
                            row.push(if c.is_finite() {
                                fmt_f64(c)
                            } else {
                                String::new()
                            });
                        }
                    }
                }
            }
            out.push_str(&row.join(","));
            out.push('\n');
        }
    }
    Ok(out.into_bytes())
}

struct Header {
    name: Option<String>,
    out_qty: Option<Quantity>,
    in_qty: Option<Quantity>,
    units: Option<String>,
    signal: Option<SignalKind>,
    outputs: Vec<Dof>,
    inputs: Vec<Dof>,
    missing: Vec<(usize, usize, usize)>, // (out, in, line), 0-based indices
    coherence: bool,
    provenance: Vec<Provenance>,
    warnings: Vec<String>,
}

/// Read every block of our own layout, within the default [`Limits`].
pub fn read_native(bytes: &[u8], file: &str) -> Result<Vec<FrfSet>> {
    read_native_with_limits(bytes, file, &Limits::default())
}

/// Read every block of our own layout; each block's lines × outputs ×
/// inputs is checked against `limits` before its set is allocated (an
/// over-budget block is an [`ErrorKind::Budget`](crate::error::ErrorKind::Budget)
/// error at its magic line).
pub fn read_native_with_limits(bytes: &[u8], file: &str, limits: &Limits) -> Result<Vec<FrfSet>> {
    let text = decode_text(bytes);
    let lines = numbered_lines(&text);
    let starts: Vec<usize> = lines
        .iter()
        .enumerate()
        .filter(|(_, (_, l))| l.trim_start().starts_with(NATIVE_MAGIC))
        .map(|(p, _)| p)
        .collect();
    if starts.is_empty() {
        return Err(Error::parse(format!(
            "no '{NATIVE_MAGIC} {NATIVE_VERSION}' line; this is not mortise's own CSV layout"
        ))
        .field("mortise-frf line")
        .in_file(file));
    }
    if lines[..starts[0]].iter().any(|(_, l)| !l.trim().is_empty()) {
        let (n, _) = lines[..starts[0]]
            .iter()
            .find(|(_, l)| !l.trim().is_empty())
            .copied()
            .unwrap_or((1, ""));
        return Err(Error::parse(format!(
            "text before the first '{NATIVE_MAGIC}' line; expected the file to start with it"
        ))
        .at_line(n)
        .in_file(file));
    }
    let mut sets = Vec::new();
    for (b, &st) in starts.iter().enumerate() {
        let end = starts.get(b + 1).copied().unwrap_or(lines.len());
        let s = read_block(&lines[st..end], limits).map_err(|e| e.in_file(file))?;
        sets.push(s);
    }
    Ok(sets)
}

fn read_block(lines: &[(usize, &str)], limits: &Limits) -> Result<FrfSet> {
    let (magic_line, magic) = lines[0];
    let ver = magic.trim()[NATIVE_MAGIC.len()..].trim();
    if ver != NATIVE_VERSION.to_string() {
        return Err(Error::unsupported(format!(
            "layout version '{}'; this mortise reads version {NATIVE_VERSION}",
            quote(ver)
        ))
        .at_line(magic_line)
        .field("mortise-frf version"));
    }
    let mut h = Header {
        name: None,
        out_qty: None,
        in_qty: None,
        units: None,
        signal: None,
        outputs: Vec::new(),
        inputs: Vec::new(),
        missing: Vec::new(),
        coherence: false,
        provenance: Vec::new(),
        warnings: Vec::new(),
    };
    let mut p = 1;
    while p < lines.len() {
        let (ln, l) = lines[p];
        let t = l.trim();
        if t.is_empty() {
            p += 1;
            continue;
        }
        let Some(body) = t.strip_prefix('#') else {
            break;
        };
        let body = body.trim_start();
        let Some((key, value)) = body.split_once(':') else {
            return Err(Error::parse(format!(
                "header line '{}' has no ':'; expected '# key: value'",
                quote(t)
            ))
            .at_line(ln));
        };
        let key = key.trim();
        let value = value.strip_prefix(' ').unwrap_or(value);
        let err = |m: String| Error::parse(m).at_line(ln).field(quote(key));
        match key {
            "name" => h.name = Some(unesc(value)),
            "out-quantity" => h.out_qty = Some(Quantity::parse(value).map_err(|e| e.at_line(ln).field(key))?),
            "in-quantity" => h.in_qty = Some(Quantity::parse(value).map_err(|e| e.at_line(ln).field(key))?),
            "units" => h.units = Some(value.trim().to_string()),
            "signal" => {
                h.signal = Some(
                    crate::io::parse_signal(value)
                        .map_err(|e| err(format!("'{}': {}", quote(value.trim()), e.message)))?,
                )
            }
            "output" | "input" => {
                let d = Dof::parse(value, "").map_err(|e| e.at_line(ln).field(key))?;
                if key == "output" {
                    h.outputs.push(d)
                } else {
                    h.inputs.push(d)
                }
            }
            "output-json" | "input-json" => {
                let d: Dof = serde_json::from_str(value)
                    .map_err(|e| err(format!("not a DOF in JSON: {}", crate::io::json_message(&e))))?;
                if key == "output-json" {
                    h.outputs.push(d)
                } else {
                    h.inputs.push(d)
                }
            }
            "missing" => {
                let mut it = value.split_whitespace();
                let a = it.next().and_then(|x| x.parse::<usize>().ok());
                let b = it.next().and_then(|x| x.parse::<usize>().ok());
                match (a, b) {
                    (Some(a), Some(b)) if a >= 1 && b >= 1 => h.missing.push((a - 1, b - 1, ln)),
                    _ => {
                        return Err(err(format!(
                            "'{}'; expected two 1-based indices, output then input",
                            quote(value.trim())
                        )))
                    }
                }
            }
            "coherence" => match value.trim() {
                "yes" => h.coherence = true,
                "no" => h.coherence = false,
                o => return Err(err(format!("'{}'; expected yes or no", quote(o)))),
            },
            "provenance" => h.provenance.push(
                serde_json::from_str(value)
                    .map_err(|e| {
                        err(format!(
                            "not a provenance record in JSON: {}",
                            crate::io::json_message(&e)
                        ))
                    })?,
            ),
            "warning" => h.warnings.push(unesc(value)),
            other => {
                return Err(err(format!(
                    "unknown header key '{}'; expected name, out-quantity, in-quantity, units, signal, output, input, missing, coherence, provenance or warning",
                    quote(other)
                )))
            }
        }
        p += 1;
    }
    let need = |o: Option<Quantity>, k: &str| {
        o.ok_or_else(|| {
            Error::parse(format!("no '# {k}:' header line; expected one"))
                .at_line(magic_line)
                .field(k.to_string())
        })
    };
    let out_qty = need(h.out_qty, "out-quantity")?;
    let in_qty = need(h.in_qty, "in-quantity")?;
    match h.units.as_deref() {
        Some("SI") => {}
        Some(u) => {
            return Err(Error::unit(format!(
                "units '{}'; this layout always holds SI values ('# units: SI')",
                quote(u)
            ))
            .at_line(magic_line)
            .field("units"))
        }
        None => {
            return Err(Error::parse("no '# units: SI' header line")
                .at_line(magic_line)
                .field("units"))
        }
    }
    if h.outputs.is_empty() || h.inputs.is_empty() {
        return Err(Error::dof(format!(
            "{} output and {} input DOF lines; expected at least one of each",
            h.outputs.len(),
            h.inputs.len()
        ))
        .at_line(magic_line));
    }
    let (n_out, n_in) = (h.outputs.len(), h.inputs.len());
    // Counts first, labels later: a header of a few thousand DOF lines
    // claims millions of entries, so nothing of size outputs × inputs is
    // built before the claim is checked against the columns and the budget.
    let mut missing = std::collections::HashSet::with_capacity(h.missing.len());
    for &(i, j, ln) in &h.missing {
        if i >= n_out || j >= n_in {
            return Err(Error::parse(format!(
                "entry {} {} does not exist; the set has {n_out} outputs and {n_in} inputs",
                i + 1,
                j + 1
            ))
            .at_line(ln)
            .field("missing"));
        }
        missing.insert((i, j));
    }
    // column header row
    let Some(&(head_ln, head)) = lines.get(p) else {
        return Err(Error::parse("no column-header row after the header lines")
            .at_line(lines.last().map_or(magic_line, |l| l.0)));
    };
    let data_rows = lines[p + 1..]
        .iter()
        .filter(|(_, l)| !l.trim().is_empty())
        .count();
    let name = h.name.clone().unwrap_or_default();
    limits
        .check_set(&format!("set '{}'", quote(&name)), data_rows, n_out, n_in)
        .map_err(|e| e.at_line(magic_line))?;
    let per = if h.coherence { 3 } else { 2 };
    // both fit in memory (the budget above), so their product is counted
    let n_entries = n_out.saturating_mul(n_in).saturating_sub(missing.len());
    let n_cols = n_entries.saturating_mul(per).saturating_add(1);
    let cells: Vec<String> = split_quoted(head, ',')
        .into_iter()
        .map(|c| c.trim().to_string())
        .collect();
    if cells.len() != n_cols {
        return Err(Error::parse(format!(
            "{} columns; the header lines call for {n_cols} (freq_Hz, then {per} per present entry for {n_entries} entries)",
            cells.len(),
        ))
        .at_line(head_ln)
        .field("column-header row"));
    }
    // the columns are real now: everything below is linear in the file's size
    let mut present = vec![true; n_out * n_in];
    for &(i, j) in &missing {
        present[i * n_in + j] = false;
    }
    let mut expect = Vec::with_capacity(n_cols);
    expect.push("freq_Hz".to_string());
    let mut entries = Vec::with_capacity(n_entries);
    for i in 0..n_out {
        for j in 0..n_in {
            if present[i * n_in + j] {
                let l = entry_label(&h.outputs[i], &h.inputs[j]);
                expect.push(format!("re {l}"));
                expect.push(format!("im {l}"));
                if h.coherence {
                    expect.push(format!("coh {l}"));
                }
                entries.push((i, j));
            }
        }
    }
    for (c, (got, want)) in cells.iter().zip(&expect).enumerate() {
        if got != want {
            return Err(Error::parse(format!(
                "found '{}', expected '{}'",
                quote(got),
                quote(want)
            ))
            .at_line(head_ln)
            .field(format!("column {}", c + 1)));
        }
    }
    // data rows
    let mut freqs = Vec::new();
    let mut rows: Vec<Vec<f64>> = Vec::new();
    let mut row_lines = Vec::new();
    for &(ln, l) in &lines[p + 1..] {
        let t = l.trim();
        if t.is_empty() {
            continue;
        }
        if t.starts_with('#') {
            return Err(Error::parse(
                "a comment line among the data rows; expected numbers or a new '# mortise-frf' block",
            )
            .at_line(ln));
        }
        let cs: Vec<&str> = l.split(',').collect();
        if cs.len() != expect.len() {
            return Err(Error::parse(format!(
                "{} cells; expected {} as in the column-header row (line {head_ln})",
                cs.len(),
                expect.len()
            ))
            .at_line(ln));
        }
        let f = parse_num(cs[0], "frequency")
            .map_err(|m| Error::numeric(m).at_line(ln).field("column 1 (freq_Hz)"))?;
        if let Some(&prev) = freqs.last() {
            if f <= prev {
                return Err(Error::grid(format!(
                    "frequency {f} Hz does not exceed the previous line's {prev} Hz; expected strictly increasing frequencies"
                ))
                .at_line(ln)
                .field("column 1 (freq_Hz)"));
            }
        }
        if f < 0.0 {
            return Err(Error::grid(format!("frequency {f} Hz is negative"))
                .at_line(ln)
                .field("column 1 (freq_Hz)"));
        }
        let mut vals = Vec::with_capacity(cs.len() - 1);
        for (c, cell) in cs.iter().enumerate().skip(1) {
            let is_coh = h.coherence && (c - 1) % 3 == 2;
            if is_coh && cell.trim().is_empty() {
                vals.push(f64::NAN);
                continue;
            }
            let v = parse_num(cell, "value").map_err(|m| {
                Error::numeric(m).at_line(ln).field(format!(
                    "column {} ({})",
                    c + 1,
                    quote(&expect[c])
                ))
            })?;
            vals.push(v);
        }
        freqs.push(f);
        rows.push(vals);
        row_lines.push(ln);
    }
    if freqs.is_empty() {
        return Err(Error::parse(
            "no data rows after the column-header row; expected at least one",
        )
        .at_line(head_ln));
    }
    let mut s = FrfSet::zeros(&name, freqs, h.outputs, h.inputs, out_qty, in_qty);
    s.present = present;
    for v in s.data.iter_mut() {
        *v = Complex64::new(f64::NAN, f64::NAN);
    }
    let mut coh = if h.coherence {
        Some(vec![f64::NAN; s.data.len()])
    } else {
        None
    };
    for (k, row) in rows.iter().enumerate() {
        for (e, &(i, j)) in entries.iter().enumerate() {
            let n = s.idx(k, i, j);
            s.data[n] = Complex64::new(row[e * per], row[e * per + 1]);
            if let Some(c) = coh.as_mut() {
                c[n] = row[e * per + 2];
            }
        }
    }
    s.coherence = coh.take();
    s.signal = h.signal;
    s.provenance = h.provenance;
    s.warnings = h.warnings;
    s.validate().map_err(|e| e.at_line(magic_line))?;
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    fn sample() -> FrfSet {
        let a = Dof::new("wall", "A1", Direction::Z);
        let b = Dof::new("wall", "A2", Direction::Z);
        let mut s = FrfSet::zeros(
            "wall, test",
            vec![10.0, 12.5, 1e-7, 3.0e20],
            vec![a.clone(), b],
            vec![a],
            Quantity::Acceleration,
            Quantity::Force,
        );
        s.freqs = vec![1e-7, 10.0, 12.5, 3.0e20];
        for k in 0..4 {
            s.set(k, 0, 0, Complex64::new(0.1 * k as f64 + 1e-300, -1.0 / 3.0));
        }
        s.present[1] = false;
        for k in 0..4 {
            s.set(k, 1, 0, Complex64::new(f64::NAN, f64::NAN));
        }
        s.warnings.push("line one\nline \\two".into());
        s
    }

    #[test]
    fn native_round_trip_is_exact() {
        let s = sample();
        let bytes = write_native(std::slice::from_ref(&s)).unwrap();
        let back = read_native(&bytes, "t.csv").unwrap();
        assert_eq!(back.len(), 1);
        let b = &back[0];
        assert_eq!(b.name, s.name);
        assert_eq!(b.present, s.present);
        assert_eq!(b.warnings, s.warnings);
        for (x, y) in b.freqs.iter().zip(&s.freqs) {
            assert_eq!(x.to_bits(), y.to_bits());
        }
        assert_eq!(b.get(2, 0, 0).re.to_bits(), s.get(2, 0, 0).re.to_bits());
        assert!(b.get(0, 1, 0).re.is_nan());
    }
}
