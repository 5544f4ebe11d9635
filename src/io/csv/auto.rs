//! A column map read from the file itself: the title lines, the column
//! names and the units they carry. Suppliers' exports follow a few habits
//! (common practice, no standard): one column per real or imaginary part,
//! magnitude or phase, named `H_<out>_<in>_re`, `A_a1_a2_mag`, `p_bed_a1_im`,
//! `<label> Re`, `Re(<label>)`, or a storage stiffness and loss factor pair
//! `K' axial [N/mm]`, `eta axial [-]`; the unit in brackets (`[g/N]`,
//! `(dB re 1 m/s²/N)`) or on a title line (`accelerance in g/N`).
//!
//! [`detect_map`] proposes the whole map and says how it decided each part
//! (`Detected::reasons`); the user confirms or corrects it (the page's
//! dialog, `mortise inspect --map auto` prints it as JSON). What cannot be
//! told from the file (no column names, no unit anywhere, columns without a
//! partner) is refused or reported, never guessed silently.

use super::column_map::{
    ColumnMap, ColumnRef, Delimiter, FreqUnit, MagScale, MapEntry, PhaseUnit, ValueColumns,
};
use super::text::{decode_text, text_lines};
use crate::error::{quote, Error, Result};
use crate::units::{parse_unit, Quantity};
use std::collections::BTreeMap;

/// A proposed map and how each part of it was decided.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Detected {
    pub map: ColumnMap,
    /// One sentence per decision, in the order taken.
    pub reasons: Vec<String>,
}

/// How many lines are searched for the first row of numbers.
const SEARCH_LINES: usize = 200;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Role {
    Re,
    Im,
    Mag,
    Phase,
    Stiffness,
    Loss,
    Coherence,
}

/// One value column's name taken apart.
struct Named {
    index: usize,
    header: String,
    base: String,
    role: Role,
    unit: Option<String>,
}

fn number(cell: &str, decimal_comma: bool) -> Option<f64> {
    let t = cell.trim().trim_matches('"');
    let v = if decimal_comma {
        t.replace(',', ".").parse::<f64>().ok()
    } else {
        t.parse::<f64>().ok()
    };
    v.filter(|x| x.is_finite())
}

/// The text inside a trailing `[...]` or `(...)`, and the name before it.
fn split_unit(header: &str) -> (String, Option<String>) {
    let h = header.trim().trim_matches('"').trim();
    for (open, close) in [('[', ']'), ('(', ')')] {
        if h.ends_with(close) {
            if let Some(i) = h.rfind(open) {
                let inner = h[i + 1..h.len() - 1].trim().to_string();
                let name = h[..i].trim().to_string();
                if !name.is_empty() {
                    return (name, Some(inner));
                }
            }
        }
    }
    (h.to_string(), None)
}

fn role_word(w: &str) -> Option<Role> {
    Some(match w.to_ascii_lowercase().as_str() {
        "re" | "real" => Role::Re,
        "im" | "imag" | "imaginary" => Role::Im,
        "mag" | "abs" | "amp" | "ampl" | "amplitude" | "magnitude" | "mod" => Role::Mag,
        "ph" | "phase" | "arg" | "angle" | "phi" => Role::Phase,
        "coh" | "coherence" => Role::Coherence,
        _ => return None,
    })
}

const SEPARATORS: &[char] = &['_', ' ', '.', '-', ':'];

/// Name → (base, role): a role word at the end (`x_re`, `x Re`), at the
/// start (`Re x`, `Re(x)`), or a stiffness/loss prefix (`K' x`, `eta x`).
fn take_apart(name: &str) -> Option<(String, Role)> {
    let n = name.trim();
    // Re(x), Im(x), |x|
    if let Some(open) = n.find('(') {
        if n.ends_with(')') {
            if let Some(r) = role_word(&n[..open]) {
                return Some((n[open + 1..n.len() - 1].trim().to_string(), r));
            }
        }
    }
    // a file of one FRF: the name is the role alone ("Re", "Im")
    if let Some(r) = role_word(n) {
        return Some((String::new(), r));
    }
    if n.len() > 2 && n.starts_with('|') && n.ends_with('|') {
        return Some((n[1..n.len() - 1].trim().to_string(), Role::Mag));
    }
    if let Some(i) = n.rfind(SEPARATORS) {
        if let Some(r) = role_word(&n[i + 1..]) {
            let base = n[..i].trim_end_matches(SEPARATORS).to_string();
            if !base.is_empty() {
                return Some((base, r));
            }
        }
    }
    if let Some(i) = n.find(SEPARATORS) {
        let (head, rest) = (&n[..i], n[i + 1..].trim_start_matches(SEPARATORS));
        if !rest.is_empty() {
            if let Some(r) = role_word(head) {
                return Some((rest.to_string(), r));
            }
            let h = head.to_ascii_lowercase();
            if ["k'", "k", "stiffness", "storage", "kdyn", "k_dyn"].contains(&h.as_str()) {
                return Some((rest.to_string(), Role::Stiffness));
            }
            if ["eta", "η", "loss", "tan_delta", "tand", "lossfactor"].contains(&h.as_str()) {
                return Some((rest.to_string(), Role::Loss));
            }
        }
    }
    None
}

/// A DOF text from one part of a column name: a full label stays, `101Z`
/// becomes `101+Z`, anything else is a point without direction.
fn dof_text(part: &str) -> String {
    let p = part.trim();
    if crate::frf::Dof::parse(p, "x").is_ok() && (p.contains('+') || p.contains('-')) {
        return p.to_string();
    }
    for d in ["RX", "RY", "RZ", "X", "Y", "Z"] {
        if p.len() > d.len() && p.to_ascii_uppercase().ends_with(d) {
            let node = &p[..p.len() - d.len()];
            let (node, sign) = match node.strip_suffix('-') {
                Some(n) => (n, '-'),
                None => (node.strip_suffix('+').unwrap_or(node), '+'),
            };
            if node.chars().last().is_some_and(|c| c.is_ascii_digit()) {
                return format!("{node}{sign}{d}");
            }
        }
    }
    p.to_string()
}

/// Output and input DOF from a column name's base: the last two parts
/// (`A_a1_a2` → a1, a2; `p_bed_a1` → bed, a1), or one part for both (a
/// driving point, as a stiffness column of one direction).
fn dofs_of(base: &str) -> (String, String, &'static str) {
    let parts: Vec<&str> = base.split(SEPARATORS).filter(|s| !s.is_empty()).collect();
    if parts.is_empty() {
        return (
            "1".into(),
            "1".into(),
            "one FRF whose columns name no DOF: point '1' at both ends, give the real DOFs",
        );
    }
    match parts.len() {
        0 | 1 => {
            let d = dof_text(base);
            (d.clone(), d, "one name part: a driving point")
        }
        2 => (
            dof_text(parts[0]),
            dof_text(parts[1]),
            "the two name parts are output and input",
        ),
        n => (
            dof_text(parts[n - 2]),
            dof_text(parts[n - 1]),
            "the last two name parts are output and input",
        ),
    }
}

/// The (output, input) quantities of a ratio unit, preferring a force
/// input, then a displacement input (dynamic stiffness).
fn quantities_of(unit: &str) -> Option<(Quantity, Quantity)> {
    let u = parse_unit(unit).ok()?;
    let ins = [
        Quantity::Force,
        Quantity::Displacement,
        Quantity::Velocity,
        Quantity::Acceleration,
        Quantity::VolumeVelocity,
    ];
    for i in ins {
        for o in Quantity::ALL {
            if o == Quantity::Dimensionless || o == i {
                continue;
            }
            if o.dim(false).times(i.dim(false).inv()) == u.dim {
                return Some((o, i));
            }
        }
    }
    None
}

/// `dB re 1 m/s²/N` → (reference 1, unit "m/s²/N").
fn db_reference(unit: &str) -> Option<(f64, String)> {
    let t = unit.trim();
    let rest = t.strip_prefix("dB")?.trim_start();
    let rest = rest.strip_prefix("re")?.trim_start();
    let (num, u) = rest.split_once(char::is_whitespace)?;
    Some((num.trim().parse().ok()?, u.trim().to_string()))
}

/// Propose a column map for a supplier's delimited file.
pub fn detect_map(bytes: &[u8], file: &str) -> Result<Detected> {
    let text = decode_text(bytes);
    let lines: Vec<&str> = text_lines(&text).take(SEARCH_LINES).collect();
    let mut reasons = Vec::new();
    let fail = |m: String, line: Option<usize>| {
        let e = Error::parse(m).field("column map detection").in_file(file);
        match line {
            Some(l) => e.at_line(l),
            None => e,
        }
    };
    // the first row of numbers fixes the delimiter and the rows before it
    let mut first = None;
    for (i, l) in lines.iter().enumerate() {
        if l.trim().is_empty() {
            continue;
        }
        let delim = Delimiter::Auto.resolve(l);
        let cells = delim.split(l);
        if cells.len() < 2 {
            continue;
        }
        for comma in [false, true] {
            if comma && delim == Delimiter::Comma {
                continue;
            }
            if cells.iter().all(|c| number(c, comma).is_some()) {
                first = Some((i, delim, comma, cells.len()));
                break;
            }
        }
        if first.is_some() {
            break;
        }
    }
    let Some((data, delim, decimal_comma, ncols)) = first else {
        return Err(fail(
            format!("no row of numbers in the first {SEARCH_LINES} lines, so nothing to map"),
            None,
        ));
    };
    reasons.push(format!(
        "data start at line {} ({} columns, {} separated{})",
        data + 1,
        ncols,
        delim.name(),
        if decimal_comma { ", decimal comma" } else { "" }
    ));
    let header_at = (0..data).rev().find(|&i| !lines[i].trim().is_empty());
    let Some(h) = header_at else {
        return Err(fail(
            "no line of column names above the data; detection reads the names, so map the columns by hand".into(),
            Some(data + 1),
        ));
    };
    let headers: Vec<String> = delim
        .split(lines[h])
        .into_iter()
        .map(|c| c.trim().trim_matches('"').trim().to_string())
        .collect();
    if headers.len() != ncols {
        return Err(fail(
            format!(
                "line {} holds {} names for {} columns of numbers; map the columns by hand",
                h + 1,
                headers.len(),
                ncols
            ),
            Some(h + 1),
        ));
    }
    reasons.push(format!("column names on line {}", h + 1));
    // the frequency column
    let freq = headers
        .iter()
        .position(|c| {
            let (n, _) = split_unit(c);
            let n = n.to_ascii_lowercase();
            n == "f"
                || n.starts_with("freq")
                || n.starts_with("f_")
                || n == "hz"
                || n == "frequency"
        })
        .unwrap_or(0);
    let (fname, funit) = split_unit(&headers[freq]);
    let fu = funit
        .clone()
        .or_else(|| fname.rsplit_once(SEPARATORS).map(|(_, u)| u.to_string()));
    let freq_unit = match fu.as_deref().map(|u| u.to_ascii_lowercase()) {
        Some(u) if u == "khz" => FreqUnit::KHz,
        Some(u) if u == "rad/s" || u == "rad_s" || u == "rads" => FreqUnit::RadPerS,
        _ => FreqUnit::Hz,
    };
    reasons.push(format!(
        "frequency in column {} ('{}'), in {}",
        freq + 1,
        quote(&headers[freq]),
        match freq_unit {
            FreqUnit::Hz => "Hz",
            FreqUnit::KHz => "kHz",
            FreqUnit::RadPerS => "rad/s",
        }
    ));
    // value columns by base name
    let mut named: Vec<Named> = Vec::new();
    let mut left_out = Vec::new();
    for (i, hd) in headers.iter().enumerate() {
        if i == freq {
            continue;
        }
        let (name, unit) = split_unit(hd);
        match take_apart(&name) {
            Some((base, role)) => named.push(Named {
                index: i,
                header: hd.clone(),
                base,
                role,
                unit,
            }),
            None => left_out.push(quote(hd)),
        }
    }
    let mut groups: BTreeMap<String, Vec<&Named>> = BTreeMap::new();
    let mut order = Vec::new();
    for n in &named {
        if !groups.contains_key(&n.base) {
            order.push(n.base.clone());
        }
        groups.entry(n.base.clone()).or_default().push(n);
    }
    let unique = |hd: &str| headers.iter().filter(|h| h.as_str() == hd).count() == 1;
    let col = |n: &Named| {
        if unique(&n.header) {
            ColumnRef::Name(n.header.clone())
        } else {
            ColumnRef::Index(n.index + 1)
        }
    };
    let mut entries = Vec::new();
    let mut units: Vec<(String, String)> = Vec::new();
    let mut phase_units: Vec<String> = Vec::new();
    let mut dof_rule = None;
    for base in &order {
        let g = &groups[base];
        let get = |r: Role| g.iter().find(|n| n.role == r).copied();
        let values = match (
            get(Role::Re),
            get(Role::Im),
            get(Role::Mag),
            get(Role::Phase),
            get(Role::Stiffness),
            get(Role::Loss),
        ) {
            (Some(re), Some(im), _, _, _, _) => ValueColumns::ReIm {
                re: col(re),
                im: col(im),
            },
            (_, _, Some(m), Some(p), _, _) => {
                if let Some(u) = &p.unit {
                    phase_units.push(u.clone());
                }
                ValueColumns::MagPhase {
                    mag: col(m),
                    phase: col(p),
                }
            }
            (_, _, _, _, Some(k), Some(l)) => ValueColumns::StorageLoss {
                stiffness: col(k),
                loss: col(l),
            },
            _ => {
                for n in g.iter() {
                    left_out.push(quote(&n.header));
                }
                continue;
            }
        };
        for n in g.iter() {
            if let Some(u) = &n.unit {
                if !matches!(n.role, Role::Phase | Role::Loss | Role::Coherence) {
                    units.push((u.clone(), n.header.clone()));
                }
            }
        }
        let (out_dof, in_dof, rule) = dofs_of(base);
        dof_rule.get_or_insert(rule);
        entries.push(MapEntry {
            out_dof,
            in_dof,
            values,
            coherence: get(Role::Coherence).map(col),
        });
    }
    if entries.is_empty() {
        return Err(fail(
            format!(
                "no pair of value columns recognised in the names on line {} (real/imaginary, magnitude/phase or stiffness/loss, e.g. H_1_2_re and H_1_2_im); map the columns by hand",
                h + 1
            ),
            Some(h + 1),
        ));
    }
    if let Some(rule) = dof_rule {
        reasons.push(format!(
            "{} FRF(s); DOFs from the column names ({rule})",
            entries.len()
        ));
    }
    if !left_out.is_empty() {
        reasons.push(format!(
            "left out (no partner column or not a value): {}",
            left_out.join(", ")
        ));
    }
    // the unit: in the names, else on a title line
    let mut mag_scale = MagScale::Linear;
    let mut unit_found: Option<(String, String)> = None;
    for (u, from) in &units {
        let (u, scale) = match db_reference(u) {
            Some((r, u)) => (u, MagScale::Db { reference: r }),
            None => (u.clone(), MagScale::Linear),
        };
        if quantities_of(&u).is_some() {
            if let Some((prev, _)) = &unit_found {
                if *prev != u {
                    return Err(fail(
                        format!("the columns carry different units ('{}' and '{}'); map them as separate files or by hand", quote(prev), quote(&u)),
                        Some(h + 1),
                    ));
                }
            }
            mag_scale = scale;
            unit_found = Some((u, format!("the column '{}'", quote(from))));
        }
    }
    if unit_found.is_none() {
        'lines: for (i, l) in lines[..h].iter().enumerate() {
            for w in l.split(|c: char| c.is_whitespace() || c == ',' || c == ';') {
                let w = w.trim_matches(|c: char| {
                    c == '(' || c == ')' || c == '[' || c == ']' || c == '.' || c == ':'
                });
                if w.contains('/') && quantities_of(w).is_some() {
                    unit_found = Some((w.to_string(), format!("line {}", i + 1)));
                    break 'lines;
                }
            }
        }
    }
    let Some((unit, unit_from)) = unit_found else {
        return Err(fail(
            "no unit of the values found in the column names or the lines above them (such as [g/N] or 'accelerance in g/N'); give the value unit and the quantities by hand".into(),
            Some(h + 1),
        ));
    };
    let Some((out_qty, in_qty)) = quantities_of(&unit) else {
        return Err(Error::internal("a detected unit lost its quantities"));
    };
    reasons.push(format!(
        "values in {} (from {unit_from}): {} per {}",
        quote(&unit),
        out_qty,
        in_qty
    ));
    if let MagScale::Db { reference } = mag_scale {
        reasons.push(format!("magnitudes in dB re {reference} {}", quote(&unit)));
    }
    // phase unit: a column's unit, else a title line, else degrees
    let title = lines[..h].join(" ").to_ascii_lowercase();
    let phase_unit = if phase_units
        .iter()
        .any(|u| u.to_ascii_lowercase().starts_with("rad"))
        || title.contains("radian")
    {
        PhaseUnit::Rad
    } else {
        PhaseUnit::Deg
    };
    if entries
        .iter()
        .any(|e| matches!(e.values, ValueColumns::MagPhase { .. }))
    {
        reasons.push(format!(
            "phase in {}{}",
            if phase_unit == PhaseUnit::Rad {
                "radians"
            } else {
                "degrees"
            },
            if phase_units.is_empty() && !title.contains("degree") && !title.contains("radian") {
                " (not stated in the file: degrees assumed, check)"
            } else {
                ""
            }
        ));
    }
    let map = ColumnMap {
        delimiter: delim,
        skip_rows: data,
        header_line: Some(h + 1),
        decimal_comma,
        freq: ColumnRef::Index(freq + 1),
        freq_unit,
        entries,
        mag_scale,
        phase_unit,
        unit,
        out_qty,
        in_qty,
        ..ColumnMap::default()
    };
    Ok(Detected { map, reasons })
}
