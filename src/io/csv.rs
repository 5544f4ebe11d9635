//! Delimited text: mortise's own self-describing CSV layout, and suppliers'
//! CSV/TSV files read through a [`ColumnMap`].
//!
//! # The mortise FRF table (our own layout, version 1)
//!
//! A file holds one or more blocks, one per [`FrfSet`]. A block is a run of
//! header comment lines, one column-header row, then one data row per
//! frequency line. Values are always SI (see [`crate::units`]); numbers are
//! written with the shortest text that reads back to the same f64, so
//! reading a written file reproduces every value bit for bit.
//!
//! ```text
//! # mortise-frf 1
//! # name: wall
//! # out-quantity: acceleration
//! # in-quantity: force
//! # units: SI
//! # output: wall:A1+Z
//! # output: wall:A2+Z
//! # input: wall:A1+Z
//! # missing: 2 1 (wall:A2+Z / wall:A1+Z)
//! # coherence: yes
//! freq_Hz,re wall:A1+Z/wall:A1+Z,im wall:A1+Z/wall:A1+Z,coh wall:A1+Z/wall:A1+Z
//! 10,0.0125,-3.5e-5,0.998
//! 12.5,0.0131,-4.25e-5,
//! ```
//!
//! Header lines, in this order, each `# key: value`:
//! * `mortise-frf 1`: the magic line and layout version (first line of a block);
//! * `name`: the set name;
//! * `out-quantity`, `in-quantity`: [`Quantity`] names (`displacement`,
//!   `velocity`, `acceleration`, `force`, `pressure`, `volume-velocity`,
//!   `dimensionless`);
//! * `units: SI`: values are in SI (m, m/s, m/s², N; rad and N·m on
//!   rotational DOFs; Pa; m³/s);
//! * `signal`: only for spectra: `peak`, `rms`, `autopower` or `psd`;
//! * `output`, `input`: one line per DOF in matrix order, in the text form
//!   `component:node+Z` (or `output-json`/`input-json` with the DOF as JSON
//!   when the text form would not read back the same);
//! * `missing`: one line per missing entry, 1-based output and input index
//!   (the labels in brackets are for the reader); missing entries have no
//!   columns;
//! * `coherence: yes` when every present entry has a coherence column (an
//!   empty cell is a line without coherence);
//! * `provenance` (JSON object) and `warning` (text), zero or more lines each.
//!
//! Text values escape backslash, newline and carriage return as `\\`, `\n`,
//! `\r`. The column-header row is `freq_Hz`, then for every present entry in
//! row-major order `re OUT/IN`, `im OUT/IN` (and `coh OUT/IN`); cells holding
//! a comma or a quote are quoted. Reading checks every label against the
//! header lines.
//!
//! # Supplier files
//!
//! [`read_mapped`] reads any delimited text through a [`ColumnMap`] that
//! names the frequency column, and for each FRF its DOFs and value columns
//! (real/imaginary, magnitude/phase with magnitude linear or in dB, or one
//! real value), the value unit (converted to SI with
//! [`crate::units::ratio_factor`]) and the quantities. [`preview`] splits the
//! first rows into cells and shows the values the map gives, for the page's
//! import dialog.

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::units::{factor_for, ratio_factor, Quantity};
use num_complex::Complex64;

/// The magic text that starts every block of our own layout.
pub const NATIVE_MAGIC: &str = "# mortise-frf";
/// The layout version written and read.
pub const NATIVE_VERSION: u32 = 1;

// ---------------------------------------------------------------- text helpers

/// Bytes to text: UTF-8 (a leading byte-order mark dropped), else Latin-1,
/// which is what older spreadsheet exports use for `µ` and `°`.
pub fn decode_text(bytes: &[u8]) -> String {
    let b = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    match std::str::from_utf8(b) {
        Ok(s) => s.to_string(),
        // UTF-8 cut inside its last character (a truncated file): keep the whole ones
        Err(e) if e.error_len().is_none() => {
            String::from_utf8_lossy(&b[..e.valid_up_to()]).into_owned()
        }
        Err(_) => b.iter().map(|&c| c as char).collect(),
    }
}

/// Shortest text that parses back to exactly `x` (no 300-digit fixed forms).
pub fn fmt_f64(x: f64) -> String {
    let a = x.abs();
    if x == 0.0 || (1e-4..1e15).contains(&a) || !x.is_finite() {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

fn esc(s: &str) -> String {
    s.replace('\\', "\\\\")
        .replace('\n', "\\n")
        .replace('\r', "\\r")
}

fn unesc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut it = s.chars();
    while let Some(c) = it.next() {
        if c == '\\' {
            match it.next() {
                Some('n') => out.push('\n'),
                Some('r') => out.push('\r'),
                Some(o) => out.push(o),
                None => out.push('\\'),
            }
        } else {
            out.push(c);
        }
    }
    out
}

fn quote_cell(s: &str, delim: char) -> String {
    if s.contains(delim) || s.contains('"') {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Split one row at `delim`, honouring double quotes (`""` inside quotes is a quote).
fn split_quoted(line: &str, delim: char) -> Vec<String> {
    let mut cells = Vec::new();
    let mut cur = String::new();
    let mut in_q = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        if in_q {
            if c == '"' {
                if chars.peek() == Some(&'"') {
                    cur.push('"');
                    chars.next();
                } else {
                    in_q = false;
                }
            } else {
                cur.push(c);
            }
        } else if c == '"' && cur.trim().is_empty() {
            cur.clear();
            in_q = true;
        } else if c == delim {
            cells.push(std::mem::take(&mut cur));
        } else {
            cur.push(c);
        }
    }
    cells.push(cur);
    cells
}

/// Lines without their ending, numbered from 1.
fn numbered_lines(text: &str) -> Vec<(usize, &str)> {
    text.split('\n')
        .enumerate()
        .map(|(n, l)| (n + 1, l.strip_suffix('\r').unwrap_or(l)))
        .collect()
}

/// True when the text starts (after blank lines) with our magic line.
pub fn is_native(text: &str) -> bool {
    text.lines()
        .map(str::trim)
        .find(|l| !l.is_empty())
        .is_some_and(|l| l.starts_with(NATIVE_MAGIC))
}

// ------------------------------------------------------------- native writing

fn entry_label(s: &FrfSet, i: usize, j: usize) -> String {
    format!("{}/{}", s.outputs[i], s.inputs[j])
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
                    let l = entry_label(s, i, j);
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

// ------------------------------------------------------------- native reading

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

fn parse_num(cell: &str, what: &str) -> std::result::Result<f64, String> {
    let t = cell.trim();
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(v) => Err(format!("{what} is {v} ('{t}'); expected a finite number")),
        Err(_) if t.is_empty() => Err(format!("{what} is empty; expected a number")),
        Err(_) => Err(format!("{what} is '{t}'; expected a number")),
    }
}

/// Read every block of our own layout.
pub fn read_native(bytes: &[u8], file: &str) -> Result<Vec<FrfSet>> {
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
        let s = read_block(&lines[st..end]).map_err(|e| e.in_file(file))?;
        sets.push(s);
    }
    Ok(sets)
}

fn read_block(lines: &[(usize, &str)]) -> Result<FrfSet> {
    let (magic_line, magic) = lines[0];
    let ver = magic.trim()[NATIVE_MAGIC.len()..].trim();
    if ver != NATIVE_VERSION.to_string() {
        return Err(Error::unsupported(format!(
            "layout version '{ver}'; this mortise reads version {NATIVE_VERSION}"
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
                "header line '{t}' has no ':'; expected '# key: value'"
            ))
            .at_line(ln));
        };
        let key = key.trim();
        let value = value.strip_prefix(' ').unwrap_or(value);
        let err = |m: String| Error::parse(m).at_line(ln).field(key.to_string());
        match key {
            "name" => h.name = Some(unesc(value)),
            "out-quantity" => h.out_qty = Some(Quantity::parse(value).map_err(|e| e.at_line(ln).field(key))?),
            "in-quantity" => h.in_qty = Some(Quantity::parse(value).map_err(|e| e.at_line(ln).field(key))?),
            "units" => h.units = Some(value.trim().to_string()),
            "signal" => {
                h.signal = Some(
                    crate::io::parse_signal(value)
                        .map_err(|e| err(format!("'{}': {}", value.trim(), e.message)))?,
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
                    .map_err(|e| err(format!("not a DOF in JSON: {e}")))?;
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
                            value.trim()
                        )))
                    }
                }
            }
            "coherence" => match value.trim() {
                "yes" => h.coherence = true,
                "no" => h.coherence = false,
                o => return Err(err(format!("'{o}'; expected yes or no"))),
            },
            "provenance" => h.provenance.push(
                serde_json::from_str(value)
                    .map_err(|e| err(format!("not a provenance record in JSON: {e}")))?,
            ),
            "warning" => h.warnings.push(unesc(value)),
            other => {
                return Err(err(format!(
                    "unknown header key '{other}'; expected name, out-quantity, in-quantity, units, signal, output, input, missing, coherence, provenance or warning"
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
                "units '{u}'; this layout always holds SI values ('# units: SI')"
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
    let mut present = vec![true; n_out * n_in];
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
        present[i * n_in + j] = false;
    }
    // column header row
    let Some(&(head_ln, head)) = lines.get(p) else {
        return Err(Error::parse("no column-header row after the header lines")
            .at_line(lines.last().map_or(magic_line, |l| l.0)));
    };
    let cells: Vec<String> = split_quoted(head, ',')
        .into_iter()
        .map(|c| c.trim().to_string())
        .collect();
    let per = if h.coherence { 3 } else { 2 };
    let mut expect = vec!["freq_Hz".to_string()];
    let name = h.name.clone().unwrap_or_default();
    let mut tmp = FrfSet::zeros(
        &name,
        Vec::new(),
        h.outputs.clone(),
        h.inputs.clone(),
        out_qty,
        in_qty,
    );
    tmp.present = present.clone();
    let mut entries = Vec::new();
    for i in 0..n_out {
        for j in 0..n_in {
            if present[i * n_in + j] {
                let l = entry_label(&tmp, i, j);
                expect.push(format!("re {l}"));
                expect.push(format!("im {l}"));
                if h.coherence {
                    expect.push(format!("coh {l}"));
                }
                entries.push((i, j));
            }
        }
    }
    if cells.len() != expect.len() {
        return Err(Error::parse(format!(
            "{} columns; the header lines call for {} (freq_Hz, then {} per present entry for {} entries)",
            cells.len(),
            expect.len(),
            per,
            entries.len()
        ))
        .at_line(head_ln)
        .field("column-header row"));
    }
    for (c, (got, want)) in cells.iter().zip(&expect).enumerate() {
        if got != want {
            return Err(Error::parse(format!("found '{got}', expected '{want}'"))
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
                Error::numeric(m)
                    .at_line(ln)
                    .field(format!("column {} ({})", c + 1, expect[c]))
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

// --------------------------------------------------------------- column map

/// The cell separator of a supplier file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Delimiter {
    /// Decided from the first data row: tab, else semicolon, else comma, else white space.
    #[default]
    Auto,
    Comma,
    Semicolon,
    Tab,
    /// Runs of spaces or tabs.
    Whitespace,
}

impl Delimiter {
    pub fn parse(s: &str) -> Result<Delimiter> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "auto" => Delimiter::Auto,
            "comma" | "," => Delimiter::Comma,
            "semicolon" | ";" => Delimiter::Semicolon,
            "tab" | "\\t" | "\t" => Delimiter::Tab,
            "whitespace" | "space" | " " => Delimiter::Whitespace,
            _ => {
                return Err(Error::usage(format!(
                    "unknown delimiter '{s}'; expected auto, comma, semicolon, tab or space"
                )))
            }
        })
    }
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Auto => "auto",
            Delimiter::Comma => "comma",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Tab => "tab",
            Delimiter::Whitespace => "whitespace",
        }
    }
    fn resolve(self, sample: &str) -> Delimiter {
        if self != Delimiter::Auto {
            return self;
        }
        if sample.contains('\t') {
            Delimiter::Tab
        } else if sample.contains(';') {
            Delimiter::Semicolon
        } else if sample.contains(',') {
            Delimiter::Comma
        } else {
            Delimiter::Whitespace
        }
    }
    fn split(self, line: &str) -> Vec<String> {
        match self {
            Delimiter::Whitespace | Delimiter::Auto => {
                line.split_whitespace().map(str::to_string).collect()
            }
            Delimiter::Comma => split_quoted(line, ','),
            Delimiter::Semicolon => split_quoted(line, ';'),
            Delimiter::Tab => split_quoted(line, '\t'),
        }
    }
}

/// A column, by 1-based index or by its header name.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(untagged)]
pub enum ColumnRef {
    Index(usize),
    Name(String),
}

impl ColumnRef {
    /// A number is an index, anything else a header name.
    pub fn parse(s: &str) -> ColumnRef {
        match s.trim().parse::<usize>() {
            Ok(n) => ColumnRef::Index(n),
            Err(_) => ColumnRef::Name(s.trim().to_string()),
        }
    }
}

impl std::fmt::Display for ColumnRef {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ColumnRef::Index(n) => write!(f, "column {n}"),
            ColumnRef::Name(s) => write!(f, "column '{s}'"),
        }
    }
}

/// The unit of the frequency column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FreqUnit {
    #[default]
    Hz,
    KHz,
    /// Angular frequency ω in rad/s (f = ω / 2π).
    RadPerS,
}

impl FreqUnit {
    pub fn parse(s: &str) -> Result<FreqUnit> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "hz" => FreqUnit::Hz,
            "khz" => FreqUnit::KHz,
            "rad/s" | "rad-per-s" | "radps" => FreqUnit::RadPerS,
            _ => {
                return Err(Error::usage(format!(
                    "unknown frequency unit '{s}'; expected Hz, kHz or rad/s"
                )))
            }
        })
    }
    fn to_hz(self, v: f64) -> f64 {
        match self {
            FreqUnit::Hz => v,
            FreqUnit::KHz => v * 1000.0,
            FreqUnit::RadPerS => v / (2.0 * std::f64::consts::PI),
        }
    }
}

/// How a magnitude column is scaled.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
#[serde(tag = "scale", rename_all = "kebab-case", deny_unknown_fields)]
pub enum MagScale {
    /// The magnitude itself, in the map's value unit.
    #[default]
    Linear,
    /// Level L in dB re `reference` (in the map's value unit):
    /// |H| = reference · 10^(L/20).
    Db { reference: f64 },
}

/// The unit of a phase column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PhaseUnit {
    #[default]
    Deg,
    Rad,
}

impl PhaseUnit {
    pub fn parse(s: &str) -> Result<PhaseUnit> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "deg" | "degree" | "degrees" => PhaseUnit::Deg,
            "rad" | "radian" | "radians" => PhaseUnit::Rad,
            _ => {
                return Err(Error::usage(format!(
                    "unknown phase unit '{s}'; expected deg or rad"
                )))
            }
        })
    }
}

/// Which columns hold one FRF's value.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "form", rename_all = "kebab-case", deny_unknown_fields)]
pub enum ValueColumns {
    ReIm {
        re: ColumnRef,
        im: ColumnRef,
    },
    MagPhase {
        mag: ColumnRef,
        phase: ColumnRef,
    },
    /// One real value (imaginary part zero), e.g. an autopower.
    Real {
        value: ColumnRef,
    },
    /// Storage stiffness K' and loss factor η, as isolator makers give them:
    /// the value is K'(1 + iη) (e^{+iωt}: a lossy spring has Im ≥ 0).
    StorageLoss {
        stiffness: ColumnRef,
        loss: ColumnRef,
    },
}

/// One FRF of a supplier file.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MapEntry {
    /// Output DOF text, `node+Z` or `component:node+Z`.
    pub out_dof: String,
    /// Input DOF text; ignored for spectra (the input is the reference).
    #[serde(default)]
    pub in_dof: String,
    pub values: ValueColumns,
    #[serde(default)]
    pub coherence: Option<ColumnRef>,
}

/// How to read a supplier's CSV: which column is what.
///
/// Blank lines and lines starting with `#` after the skipped rows are
/// ignored; every other line is a data row and must have as many cells as
/// the first. Frequencies must increase strictly. Values are converted to
/// SI: `SI value = factor(unit) × value`, where a magnitude/phase pair is
/// `|H| e^{iφ}` and a dB level L gives `|H| = reference × 10^(L/20)`.
///
/// Whether the columns hold spectra is declared once, in
/// [`crate::io::ImportOptions::signal`] (passed to [`read_mapped_as`] and
/// [`preview_as`]). Unknown keys are refused; [`map_from_json`] also reads
/// the `signal` key that maps saved before carry.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ColumnMap {
    pub delimiter: Delimiter,
    /// Lines before the first data row (titles, column names, units rows).
    pub skip_rows: usize,
    /// 1-based line holding the column names, for columns addressed by name;
    /// default: the last skipped line.
    pub header_line: Option<usize>,
    /// A decimal comma (`0,25`); needs a delimiter other than comma.
    pub decimal_comma: bool,
    pub freq: ColumnRef,
    pub freq_unit: FreqUnit,
    pub entries: Vec<MapEntry>,
    pub mag_scale: MagScale,
    pub phase_unit: PhaseUnit,
    /// The unit of the values, e.g. "g/N", "mm/s/N", "N/mm"; empty = SI.
    /// For autopower and PSD spectra give the amplitude unit ("N" for N²/Hz).
    pub unit: String,
    pub out_qty: Quantity,
    pub in_qty: Quantity,
    /// The supplier used the e^{-iωt} convention: values are conjugated.
    pub conjugate: bool,
    /// Set name (default: the component name).
    pub name: Option<String>,
}

impl Default for ColumnMap {
    fn default() -> Self {
        ColumnMap {
            delimiter: Delimiter::Auto,
            skip_rows: 0,
            header_line: None,
            decimal_comma: false,
            freq: ColumnRef::Index(1),
            freq_unit: FreqUnit::Hz,
            entries: Vec::new(),
            mag_scale: MagScale::Linear,
            phase_unit: PhaseUnit::Deg,
            unit: String::new(),
            out_qty: Quantity::Dimensionless,
            in_qty: Quantity::Dimensionless,
            conjugate: false,
            name: None,
        }
    }
}

/// A column map from its JSON form, and the spectrum kind a legacy
/// `"signal"` key in it declares (maps saved before the declaration moved to
/// [`crate::io::ImportOptions::signal`] carry it; the page's mapping dialog
/// writes it). Unknown keys are refused, naming them.
pub fn map_from_json(mut v: serde_json::Value) -> Result<(ColumnMap, Option<SignalKind>)> {
    let legacy = match v.as_object_mut().and_then(|o| o.remove("signal")) {
        None | Some(serde_json::Value::Null) => None,
        Some(serde_json::Value::String(t)) => {
            Some(crate::io::parse_signal(&t).map_err(|e| e.field("column_map.signal"))?)
        }
        Some(other) => {
            return Err(Error::usage(format!(
                "column_map.signal is {other}; expected peak, rms, autopower or psd"
            ))
            .field("column_map.signal"))
        }
    };
    let map = serde_json::from_value::<ColumnMap>(v)
        .map_err(|e| Error::usage(e.to_string()).field("column_map"))?;
    Ok((map, legacy))
}

/// The first rows of a supplier file split into cells, and what the map makes of them.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Preview {
    /// The delimiter used (resolved when the map says auto).
    pub delimiter: Delimiter,
    /// Column names (from the header line), empty when there is none.
    pub header: Vec<String>,
    /// Data rows: 1-based line number and cells.
    pub rows: Vec<PreviewRow>,
    /// Parsed values of the shown rows, when the map reads them.
    pub values: Vec<PreviewValues>,
    /// Why the map does not read the shown rows, if it does not.
    pub problem: Option<String>,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PreviewRow {
    pub line: usize,
    pub cells: Vec<String>,
}

/// One line's values as mortise will hold them (Hz, SI).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PreviewValues {
    pub line: usize,
    pub freq_hz: f64,
    /// One [re, im] per map entry, SI.
    pub entries: Vec<[f64; 2]>,
}

struct Layout<'a> {
    delim: Delimiter,
    header: Vec<String>,
    data: Vec<(usize, &'a str)>,
}

fn layout<'a>(lines: &[(usize, &'a str)], map: &ColumnMap) -> Result<Layout<'a>> {
    if map.decimal_comma && map.delimiter == Delimiter::Comma {
        return Err(Error::usage(
            "a decimal comma needs a delimiter other than comma (semicolon, tab or space)",
        )
        .field("decimal_comma"));
    }
    if map.skip_rows > lines.len() {
        return Err(Error::parse(format!(
            "{} rows to skip, but the file has {} lines",
            map.skip_rows,
            lines.len()
        ))
        .field("skip_rows"));
    }
    let data: Vec<(usize, &str)> = lines[map.skip_rows..]
        .iter()
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'))
        .copied()
        .collect();
    let sample = data.first().map_or("", |d| d.1);
    let mut delim = map.delimiter.resolve(sample);
    if map.delimiter == Delimiter::Auto && map.decimal_comma && delim == Delimiter::Comma {
        delim = Delimiter::Whitespace;
    }
    let hl = map.header_line.or(if map.skip_rows > 0 {
        Some(map.skip_rows)
    } else {
        None
    });
    let header = match hl {
        Some(n) if n >= 1 && n <= lines.len() => delim
            .split(lines[n - 1].1)
            .into_iter()
            .map(|c| c.trim().to_string())
            .collect(),
        Some(n) => {
            return Err(Error::parse(format!(
                "header line {n} does not exist; the file has {} lines",
                lines.len()
            ))
            .field("header_line"))
        }
        None => Vec::new(),
    };
    Ok(Layout {
        delim,
        header,
        data,
    })
}

fn resolve(c: &ColumnRef, header: &[String], role: &str) -> Result<usize> {
    match c {
        ColumnRef::Index(0) => Err(Error::usage(format!(
            "column 0 for {role}; columns count from 1"
        ))
        .field(role.to_string())),
        ColumnRef::Index(n) => Ok(n - 1),
        ColumnRef::Name(s) => header
            .iter()
            .position(|h| h.eq_ignore_ascii_case(s))
            .ok_or_else(|| {
                Error::parse(if header.is_empty() {
                    format!("column '{s}' named, but there is no header line (give skip_rows or header_line, or use a column number)")
                } else {
                    format!(
                        "no column named '{s}'; the header has {}",
                        header
                            .iter()
                            .map(|h| format!("'{h}'"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                })
                .field(role.to_string())
            }),
    }
}

enum Cols {
    ReIm(usize, usize),
    MagPhase(usize, usize),
    Real(usize),
    StorageLoss(usize, usize),
}

struct Plan {
    freq: usize,
    cols: Vec<(Cols, Option<usize>, f64, String)>, // columns, coherence, SI factor, label
    outputs: Vec<Dof>,
    inputs: Vec<Dof>,
    slots: Vec<(usize, usize)>,
    in_qty: Quantity,
}

fn plan(
    map: &ColumnMap,
    signal: Option<SignalKind>,
    header: &[String],
    component: &str,
) -> Result<Plan> {
    if map.entries.is_empty() {
        return Err(Error::usage(
            "the column map names no FRF; give at least one entry (output DOF, input DOF and value columns)",
        )
        .field("entries"));
    }
    let freq = resolve(&map.freq, header, "frequency column")?;
    if let MagScale::Db { reference } = map.mag_scale {
        if !(reference.is_finite() && reference > 0.0) {
            return Err(Error::usage(format!(
                "dB reference {reference}; expected a positive value in the value unit, e.g. 1e-6 for dB re 1e-6 g/N"
            ))
            .field("mag_scale"));
        }
    }
    let spectrum = signal.is_some();
    let in_qty = if spectrum {
        Quantity::Dimensionless
    } else {
        map.in_qty
    };
    let mut outputs: Vec<Dof> = Vec::new();
    let mut inputs: Vec<Dof> = Vec::new();
    let mut slots = Vec::new();
    let mut cols = Vec::new();
    for (n, e) in map.entries.iter().enumerate() {
        let role = |w: &str| format!("entry {} {w}", n + 1);
        let od = Dof::parse(&e.out_dof, component).map_err(|x| x.field(role("output DOF")))?;
        let id = if spectrum {
            Dof::scalar("", "ref")
        } else {
            Dof::parse(&e.in_dof, component).map_err(|x| x.field(role("input DOF")))?
        };
        let i = match outputs.iter().position(|d| d == &od) {
            Some(i) => i,
            None => {
                if outputs.iter().any(|d| d.same_place(&od)) {
                    return Err(Error::dof(format!(
                        "output {od} appears with both signs; give each DOF one sign"
                    ))
                    .field(role("output DOF")));
                }
                outputs.push(od.clone());
                outputs.len() - 1
            }
        };
        let j = match inputs.iter().position(|d| d == &id) {
            Some(j) => j,
            None => {
                if inputs.iter().any(|d| d.same_place(&id)) {
                    return Err(Error::dof(format!(
                        "input {id} appears with both signs; give each DOF one sign"
                    ))
                    .field(role("input DOF")));
                }
                inputs.push(id.clone());
                inputs.len() - 1
            }
        };
        if slots.contains(&(i, j)) {
            return Err(Error::dof(format!(
                "{od} / {id} is given twice; expected each FRF once"
            ))
            .field(role("DOFs")));
        }
        slots.push((i, j));
        let unit = map.unit.trim();
        let factor = if unit.is_empty() || unit.eq_ignore_ascii_case("si") {
            1.0
        } else if let Some(sig) = signal {
            let f = factor_for(unit, map.out_qty, od.dir.is_rotational())
                .map_err(|x| x.field("unit"))?;
            if sig.has_phase() {
                f
            } else {
                f * f
            }
        } else {
            ratio_factor(
                unit,
                map.out_qty,
                od.dir.is_rotational(),
                in_qty,
                id.dir.is_rotational(),
            )
            .map_err(|x| x.field("unit"))?
        };
        let c = match &e.values {
            ValueColumns::ReIm { re, im } => Cols::ReIm(
                resolve(re, header, &role("real part"))?,
                resolve(im, header, &role("imaginary part"))?,
            ),
            ValueColumns::MagPhase { mag, phase } => Cols::MagPhase(
                resolve(mag, header, &role("magnitude"))?,
                resolve(phase, header, &role("phase"))?,
            ),
            ValueColumns::Real { value } => Cols::Real(resolve(value, header, &role("value"))?),
            ValueColumns::StorageLoss { stiffness, loss } => Cols::StorageLoss(
                resolve(stiffness, header, &role("storage stiffness"))?,
                resolve(loss, header, &role("loss factor"))?,
            ),
        };
        let coh = match &e.coherence {
            Some(c) => Some(resolve(c, header, &role("coherence"))?),
            None => None,
        };
        cols.push((c, coh, factor, format!("{od} / {id}")));
    }
    Ok(Plan {
        freq,
        cols,
        outputs,
        inputs,
        slots,
        in_qty,
    })
}

fn cell_num(cells: &[String], c: usize, map: &ColumnMap, ln: usize, what: &str) -> Result<f64> {
    let Some(raw) = cells.get(c) else {
        return Err(Error::parse(format!(
            "the row has {} cells; expected column {} for {what}",
            cells.len(),
            c + 1
        ))
        .at_line(ln)
        .field(format!("column {} ({what})", c + 1)));
    };
    let t = raw.trim();
    let t = if map.decimal_comma {
        t.replace(',', ".")
    } else {
        t.to_string()
    };
    parse_num(&t, what).map_err(|m| {
        Error::numeric(m)
            .at_line(ln)
            .field(format!("column {} ({what})", c + 1))
    })
}

struct Parsed {
    lines: Vec<usize>,
    freqs: Vec<f64>,
    values: Vec<Vec<Complex64>>, // per row, per entry
    coh: Vec<Vec<f64>>,
    warnings: Vec<String>,
}

fn parse_rows(
    data: &[(usize, &str)],
    delim: Delimiter,
    map: &ColumnMap,
    p: &Plan,
) -> Result<Parsed> {
    let mut out = Parsed {
        lines: Vec::new(),
        freqs: Vec::new(),
        values: Vec::new(),
        coh: Vec::new(),
        warnings: Vec::new(),
    };
    let mut width: Option<(usize, usize)> = None;
    let mut coh_outside = 0usize;
    for &(ln, l) in data {
        let cells = delim.split(l);
        match width {
            None => width = Some((cells.len(), ln)),
            Some((w, wl)) if w != cells.len() => {
                return Err(Error::parse(format!(
                    "{} cells; expected {} as in the first data row (line {wl})",
                    cells.len(),
                    w
                ))
                .at_line(ln))
            }
            _ => {}
        }
        let fr = cell_num(&cells, p.freq, map, ln, "frequency")?;
        let f = map.freq_unit.to_hz(fr);
        if f < 0.0 {
            return Err(Error::grid(format!("frequency {fr} is negative"))
                .at_line(ln)
                .field(format!("column {} (frequency)", p.freq + 1)));
        }
        if let Some(&prev) = out.freqs.last() {
            if f <= prev {
                return Err(Error::grid(format!(
                    "frequency {f} Hz does not exceed the previous row's {prev} Hz; expected strictly increasing frequencies (a repeated or unsorted row?)"
                ))
                .at_line(ln)
                .field(format!("column {} (frequency)", p.freq + 1)));
            }
        }
        let mut vals = Vec::with_capacity(p.cols.len());
        let mut cohs = Vec::with_capacity(p.cols.len());
        for (cols, coh, factor, label) in &p.cols {
            let v = match *cols {
                Cols::ReIm(a, b) => Complex64::new(
                    cell_num(&cells, a, map, ln, &format!("real part of {label}"))?,
                    cell_num(&cells, b, map, ln, &format!("imaginary part of {label}"))?,
                ),
                Cols::MagPhase(a, b) => {
                    let m = cell_num(&cells, a, map, ln, &format!("magnitude of {label}"))?;
                    let ph = cell_num(&cells, b, map, ln, &format!("phase of {label}"))?;
                    let mag = match map.mag_scale {
                        MagScale::Linear => {
                            if m < 0.0 {
                                return Err(Error::numeric(format!(
                                    "magnitude {m} is negative; expected a linear magnitude ≥ 0 (is it in dB? then give the dB reference)"
                                ))
                                .at_line(ln)
                                .field(format!("column {} (magnitude of {label})", a + 1)));
                            }
                            m
                        }
                        MagScale::Db { reference } => reference * 10f64.powf(m / 20.0),
                    };
                    let rad = match map.phase_unit {
                        PhaseUnit::Deg => ph.to_radians(),
                        PhaseUnit::Rad => ph,
                    };
                    Complex64::from_polar(mag, rad)
                }
                Cols::Real(a) => Complex64::new(
                    cell_num(&cells, a, map, ln, &format!("value of {label}"))?,
                    0.0,
                ),
                Cols::StorageLoss(a, b) => {
                    let k = cell_num(&cells, a, map, ln, &format!("storage stiffness of {label}"))?;
                    let eta = cell_num(&cells, b, map, ln, &format!("loss factor of {label}"))?;
                    Complex64::new(k, k * eta)
                }
            };
            let mut v = v * *factor;
            if map.conjugate {
                v = v.conj();
            }
            if !(v.re.is_finite() && v.im.is_finite()) {
                return Err(Error::numeric(format!(
                    "{label} becomes {v} in SI; expected a finite value"
                ))
                .at_line(ln));
            }
            vals.push(v);
            let c = match coh {
                Some(c) => {
                    let x = cell_num(&cells, *c, map, ln, &format!("coherence of {label}"))?;
                    if !(0.0..=1.0).contains(&x) {
                        coh_outside += 1;
                    }
                    x
                }
                None => f64::NAN,
            };
            cohs.push(c);
        }
        out.lines.push(ln);
        out.freqs.push(f);
        out.values.push(vals);
        out.coh.push(cohs);
    }
    if coh_outside > 0 {
        out.warnings.push(format!(
            "{coh_outside} coherence values lie outside 0..1; coherence is a ratio between 0 and 1"
        ));
    }
    Ok(out)
}

/// Read a supplier file of FRFs through a column map. DOFs without a
/// component get `component`.
pub fn read_mapped(bytes: &[u8], file: &str, map: &ColumnMap, component: &str) -> Result<FrfSet> {
    read_mapped_as(bytes, file, map, component, None)
}

/// Read a supplier file through a column map; with `signal` the columns are
/// spectra of that kind (the import options' declaration), else FRFs.
pub fn read_mapped_as(
    bytes: &[u8],
    file: &str,
    map: &ColumnMap,
    component: &str,
    signal: Option<SignalKind>,
) -> Result<FrfSet> {
    let go = || -> Result<FrfSet> {
        let text = decode_text(bytes);
        if text.trim().is_empty() {
            return Err(Error::parse("the file is empty; expected rows of numbers"));
        }
        let lines = numbered_lines(&text);
        let lay = layout(&lines, map)?;
        let p = plan(map, signal, &lay.header, component)?;
        if lay.data.is_empty() {
            return Err(Error::parse(format!(
                "no data rows after skipping {} lines",
                map.skip_rows
            )));
        }
        let parsed = parse_rows(&lay.data, lay.delim, map, &p)?;
        let name = map.name.clone().unwrap_or_else(|| component.to_string());
        let mut s = FrfSet::zeros(
            &name,
            parsed.freqs,
            p.outputs.clone(),
            p.inputs.clone(),
            map.out_qty,
            p.in_qty,
        );
        s.present = vec![false; s.n_out() * s.n_in()];
        for v in s.data.iter_mut() {
            *v = Complex64::new(f64::NAN, f64::NAN);
        }
        let any_coh = p.cols.iter().any(|c| c.1.is_some());
        let mut coh = vec![f64::NAN; s.data.len()];
        for (e, &(i, j)) in p.slots.iter().enumerate() {
            let n_in = s.n_in();
            s.present[i * n_in + j] = true;
            for k in 0..s.n_lines() {
                let n = s.idx(k, i, j);
                s.data[n] = parsed.values[k][e];
                coh[n] = parsed.coh[k][e];
            }
        }
        if any_coh {
            s.coherence = Some(coh);
        }
        s.signal = signal;
        s.warnings = parsed.warnings;
        let missing = s.missing_entries().len();
        if missing > 0 {
            s.warnings.push(format!(
                "{missing} of {} matrix entries are not in the file and stay missing",
                s.n_out() * s.n_in()
            ));
        }
        s.validate()?;
        Ok(s)
    };
    go().map_err(|e| e.in_file(file))
}

/// The first `rows` data rows split into cells, and the values the map gives
/// them (or, in `problem`, why it gives none). For the import dialog.
pub fn preview(bytes: &[u8], file: &str, map: &ColumnMap, rows: usize) -> Result<Preview> {
    preview_as(bytes, file, map, None, rows)
}

/// [`preview`] of a file whose columns are spectra of kind `signal` (the
/// import options' declaration), or FRFs when `None`.
pub fn preview_as(
    bytes: &[u8],
    file: &str,
    map: &ColumnMap,
    signal: Option<SignalKind>,
    rows: usize,
) -> Result<Preview> {
    let text = decode_text(bytes);
    let lines = numbered_lines(&text);
    let lay = layout(&lines, map).map_err(|e| e.in_file(file))?;
    let shown: Vec<(usize, &str)> = lay.data.iter().take(rows).copied().collect();
    let prow = shown
        .iter()
        .map(|&(line, l)| PreviewRow {
            line,
            cells: lay
                .delim
                .split(l)
                .into_iter()
                .map(|c| c.trim().to_string())
                .collect(),
        })
        .collect();
    let (values, problem) = match plan(map, signal, &lay.header, &crate::io::file_stem(file))
        .and_then(|p| parse_rows(&shown, lay.delim, map, &p))
    {
        Ok(parsed) => (
            parsed
                .lines
                .iter()
                .zip(&parsed.freqs)
                .zip(&parsed.values)
                .map(|((&line, &freq_hz), v)| PreviewValues {
                    line,
                    freq_hz,
                    entries: v.iter().map(|c| [c.re, c.im]).collect(),
                })
                .collect(),
            None,
        ),
        Err(e) => (Vec::new(), Some(e.in_file(file).to_string())),
    };
    Ok(Preview {
        delimiter: lay.delim,
        header: lay.header,
        rows: prow,
        values,
        problem,
    })
}

/// True when the text has at least two rows that split into two or more numeric cells
/// with the auto delimiter: a candidate for [`read_mapped`].
pub fn looks_delimited(text: &str) -> bool {
    let mut numeric_rows = 0;
    for l in text.lines().take(400) {
        let t = l.trim();
        if t.is_empty() || t.starts_with('#') {
            continue;
        }
        let d = Delimiter::Auto.resolve(t);
        let cells = d.split(t);
        let num = cells.len() >= 2
            && cells.iter().all(|c| {
                let c = c.trim().trim_matches('"');
                c.parse::<f64>().is_ok() || c.replace(',', ".").parse::<f64>().is_ok()
            });
        if num {
            numeric_rows += 1;
            if numeric_rows >= 2 {
                return true;
            }
        }
    }
    false
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

    #[test]
    fn fmt_shortest() {
        assert_eq!(fmt_f64(0.1), "0.1");
        assert_eq!(fmt_f64(1e-300), "1e-300");
        assert_eq!(fmt_f64(-0.0), "-0");
        assert_eq!(fmt_f64(1e20), "1e20");
        assert!(fmt_f64(-0.0).parse::<f64>().unwrap().is_sign_negative());
    }

    #[test]
    fn latin1_and_cut_utf8() {
        // 0xB5 is µ in ISO 8859-1
        assert_eq!(decode_text(b"\xb5m/s"), "µm/s");
        assert_eq!(decode_text("µm".as_bytes()), "µm");
        assert_eq!(decode_text(&"aµ".as_bytes()[..2]), "a");
        assert_eq!(decode_text(b"\xEF\xBB\xBFfreq"), "freq");
    }

    #[test]
    fn quoted_split() {
        assert_eq!(
            split_quoted("a,\"b,c\",\"d\"\"e\"", ','),
            vec!["a", "b,c", "d\"e"]
        );
    }
}
