//! Reading a supplier's delimited file through a [`ColumnMap`]: the layout
//! (skipped rows, header line, delimiter), the plan (columns resolved, DOFs,
//! factors to SI), then every row parsed to SI; [`read_mapped`] and
//! [`read_mapped_as`] build the set. [`looks_delimited`] tells a candidate
//! file by content.
//!
//! `preview.rs` runs the same stages on the first rows for the import
//! dialog.

use super::column_map::{ColumnMap, ColumnRef, Delimiter, MagScale, PhaseUnit, ValueColumns};
use super::text::{decode_text, numbered_lines, parse_num, text_lines};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet, SignalKind};
use crate::limits::Limits;
use crate::units::{factor_for, ratio_factor, Quantity};
use num_complex::Complex64;
use std::collections::{HashMap, HashSet};

pub(super) struct Layout<'a> {
    pub(super) delim: Delimiter,
    pub(super) header: Vec<String>,
    pub(super) data: Vec<(usize, &'a str)>,
}

pub(super) fn layout<'a>(lines: &[(usize, &'a str)], map: &ColumnMap) -> Result<Layout<'a>> {
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

/// The header's column names (ASCII case folded) to the first column of
/// each name: resolving every map entry is one hash look-up, not a scan.
pub(super) struct HeaderIndex<'h> {
    header: &'h [String],
    first: HashMap<String, usize>,
}

impl<'h> HeaderIndex<'h> {
    pub(super) fn new(header: &'h [String]) -> Self {
        let mut first = HashMap::with_capacity(header.len());
        for (n, h) in header.iter().enumerate() {
            first.entry(h.to_ascii_lowercase()).or_insert(n);
        }
        HeaderIndex { header, first }
    }
}

/// The header's names as a message shows them: at most 8, each quoted.
fn header_names(header: &[String]) -> String {
    let mut shown: Vec<String> = header
        .iter()
        .take(8)
        .map(|h| format!("'{}'", quote(h)))
        .collect();
    if header.len() > 8 {
        shown.push(format!("... ({} columns in all)", header.len()));
    }
    shown.join(", ")
}

pub(super) fn resolve(c: &ColumnRef, header: &HeaderIndex, role: &str) -> Result<usize> {
    match c {
        ColumnRef::Index(0) => Err(Error::usage(format!(
            "column 0 for {role}; columns count from 1"
        ))
        .field(role.to_string())),
        ColumnRef::Index(n) => Ok(n - 1),
        ColumnRef::Name(s) => header
            .first
            .get(&s.to_ascii_lowercase())
            .copied()
            .ok_or_else(|| {
                Error::parse(if header.header.is_empty() {
                    format!("column '{}' named, but there is no header line (give skip_rows or header_line, or use a column number)", quote(s))
                } else {
                    format!(
                        "no column named '{}'; the header has {}",
                        quote(s),
                        header_names(header.header)
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

pub(super) struct Plan {
    freq: usize,
    cols: Vec<(Cols, Option<usize>, f64, String)>, // columns, coherence, SI factor, label
    outputs: Vec<Dof>,
    inputs: Vec<Dof>,
    slots: Vec<(usize, usize)>,
    in_qty: Quantity,
}

pub(super) fn plan(
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
    let header = &HeaderIndex::new(header);
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
    // DOF places (component, node, direction) to their index, and the
    // slots taken: one hash look-up per entry, linear in the map's size
    let mut out_at: HashMap<(String, String, crate::frf::Direction), usize> = HashMap::new();
    let mut in_at: HashMap<(String, String, crate::frf::Direction), usize> = HashMap::new();
    let mut taken: HashSet<(usize, usize)> = HashSet::new();
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
        let i = match out_at.get(&(od.component.clone(), od.node.clone(), od.dir)) {
            Some(&i) if outputs[i] == od => i,
            Some(_) => {
                return Err(Error::dof(format!(
                    "output {} appears with both signs; give each DOF one sign",
                    quote(&od.to_string())
                ))
                .field(role("output DOF")))
            }
            None => {
                out_at.insert(
                    (od.component.clone(), od.node.clone(), od.dir),
                    outputs.len(),
                );
                outputs.push(od.clone());
                outputs.len() - 1
            }
        };
        let j = match in_at.get(&(id.component.clone(), id.node.clone(), id.dir)) {
            Some(&j) if inputs[j] == id => j,
            Some(_) => {
                return Err(Error::dof(format!(
                    "input {} appears with both signs; give each DOF one sign",
                    quote(&id.to_string())
                ))
                .field(role("input DOF")))
            }
            None => {
                in_at.insert(
                    (id.component.clone(), id.node.clone(), id.dir),
                    inputs.len(),
                );
                inputs.push(id.clone());
                inputs.len() - 1
            }
        };
        if !taken.insert((i, j)) {
            return Err(Error::dof(format!(
                "{} / {} is given twice; expected each FRF once",
                quote(&od.to_string()),
                quote(&id.to_string())
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
        // the label names the entry in messages: each DOF cut to a quote's length
        cols.push((
            c,
            coh,
            factor,
            format!("{} / {}", quote(&od.to_string()), quote(&id.to_string())),
        ));
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

pub(super) fn cell_num(
    cells: &[String],
    c: usize,
    map: &ColumnMap,
    ln: usize,
    what: &str,
) -> Result<f64> {
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

pub(super) struct Parsed {
    pub(super) lines: Vec<usize>,
    pub(super) freqs: Vec<f64>,
    pub(super) values: Vec<Vec<Complex64>>, // per row, per entry
    coh: Vec<Vec<f64>>,
    warnings: Vec<String>,
}

pub(super) fn parse_rows(
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
                .at_line(ln)
                .field("value columns"));
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
    read_mapped_with_limits(bytes, file, map, component, signal, &Limits::default())
}

/// [`read_mapped_as`] with the set's lines × outputs × inputs checked
/// against `limits` before it is allocated: a map of n entries on distinct
/// DOFs makes an n × n matrix, so the set can grow with the square of the
/// map's size.
pub fn read_mapped_with_limits(
    bytes: &[u8],
    file: &str,
    map: &ColumnMap,
    component: &str,
    signal: Option<SignalKind>,
    limits: &Limits,
) -> Result<FrfSet> {
    let go = || -> Result<FrfSet> {
        let text = decode_text(bytes);
        if text.trim().is_empty() {
            // a verdict on the whole file, like detection's (its place is the file)
            return Err(Error::unsupported(
                "the file is empty; expected rows of numbers",
            ));
        }
        let lines = numbered_lines(&text);
        let lay = layout(&lines, map)?;
        let p = plan(map, signal, &lay.header, component)?;
        if lay.data.is_empty() {
            return Err(Error::parse(format!(
                "no data rows after skipping {} lines",
                map.skip_rows
            ))
            .field("skip_rows"));
        }
        let name = map.name.clone().unwrap_or_else(|| component.to_string());
        // every data row counts (an upper bound of the lines read)
        limits
            .check_set(
                &format!("the set '{}' the column map asks for", quote(&name)),
                lay.data.len(),
                p.outputs.len(),
                p.inputs.len(),
            )
            .map_err(|e| e.field("entries"))?;
        let parsed = parse_rows(&lay.data, lay.delim, map, &p)?;
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
        // counted, not listed: a label per missing entry would be square in the map's size
        let missing = s.present.iter().filter(|p| !**p).count();
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

/// True when the text has at least two rows that split into two or more numeric cells
/// with the auto delimiter: a candidate for [`read_mapped`].
pub fn looks_delimited(text: &str) -> bool {
    let mut numeric_rows = 0;
    for l in text_lines(text).take(400) {
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
