//! One dataset 58 / 58b: the 58b header line, header records 1-11 (by
//! column, falling back to blank-separated fields) and record 12 (ASCII
//! values, or raw IEEE numbers for 58b), checked finite and, for uneven
//! abscissae, strictly increasing. Gives a [`Dataset58`] as it stands in the
//! file.
//!
//! Not here: finding datasets in a file (`scan.rs`), units and quantities
//! (`convert.rs`).

use super::payload::{all_finite, decode_into, even_abscissa, points, Payload};
use super::records::{function_type_name, AxisInfo, Dataset58};
use super::text::{clamp_i32, col, parse_int, parse_num, perr, preview, Cursor, Line};
use crate::error::{Error, Result};
use num_complex::Complex64;

#[derive(Clone, Copy)]
enum FieldKind {
    Int,
    Float,
    Text,
}

enum FieldVal {
    Int(i64),
    Float(f64),
    Text(String),
}

impl FieldVal {
    fn int(&self) -> i64 {
        match self {
            FieldVal::Int(v) => *v,
            FieldVal::Float(v) => *v as i64,
            FieldVal::Text(_) => 0,
        }
    }
    fn float(&self) -> f64 {
        match self {
            FieldVal::Float(v) => *v,
            FieldVal::Int(v) => *v as f64,
            FieldVal::Text(_) => 0.0,
        }
    }
    fn text(&self) -> String {
        match self {
            FieldVal::Text(s) => s.clone(),
            FieldVal::Int(v) => v.to_string(),
            FieldVal::Float(v) => v.to_string(),
        }
    }
}

/// Read a header record by its columns; if that fails, by blank-separated
/// fields (as many as there are fields). `required` fields must be present;
/// later ones may be blank (taken as 0 / "").
fn read_record(
    file: &str,
    line: &Line,
    record: &str,
    fields: &[(&str, usize, FieldKind)],
    required: usize,
) -> Result<Vec<FieldVal>> {
    let text = line.text();
    let by_cols = (|| -> std::result::Result<Vec<FieldVal>, Error> {
        let mut out = Vec::new();
        let mut start = 0;
        for (n, (name, width, kind)) in fields.iter().enumerate() {
            let raw = col(&text, start, *width);
            let s = raw.trim();
            let field = format!("{record}, {name}");
            let cols = format!("columns {}-{}", start + 1, start + width);
            let v = match kind {
                FieldKind::Text => FieldVal::Text(s.to_string()),
                FieldKind::Int | FieldKind::Float if s.is_empty() => {
                    if n < required {
                        return Err(perr(
                            file,
                            line.no,
                            &field,
                            format!(
                                "expected {} in {cols}, found nothing (the line has {} characters)",
                                if matches!(kind, FieldKind::Int) {
                                    "an integer"
                                } else {
                                    "a number"
                                },
                                text.chars().count()
                            ),
                        ));
                    }
                    match kind {
                        FieldKind::Int => FieldVal::Int(0),
                        _ => FieldVal::Float(0.0),
                    }
                }
                FieldKind::Int => match parse_int(s) {
                    Some(v) => FieldVal::Int(v),
                    None => {
                        return Err(perr(
                            file,
                            line.no,
                            &field,
                            format!("expected an integer in {cols}, found '{s}'"),
                        ))
                    }
                },
                FieldKind::Float => match parse_num(s) {
                    Some(v) => FieldVal::Float(v),
                    None => {
                        return Err(perr(
                            file,
                            line.no,
                            &field,
                            format!("expected a number in {cols}, found '{s}'"),
                        ))
                    }
                },
            };
            out.push(v);
            start += width;
        }
        Ok(out)
    })();
    match by_cols {
        Ok(v) => Ok(v),
        Err(col_err) => {
            // blank-separated fallback
            let toks: Vec<&str> = text.split_whitespace().collect();
            if toks.len() < required || toks.len() > fields.len() {
                return Err(col_err);
            }
            let mut out = Vec::new();
            for (n, (_, _, kind)) in fields.iter().enumerate() {
                let v = match (kind, toks.get(n)) {
                    (FieldKind::Text, Some(t)) => FieldVal::Text(t.to_string()),
                    (FieldKind::Text, None) => FieldVal::Text(String::new()),
                    (FieldKind::Int, Some(t)) => match parse_int(t) {
                        Some(v) => FieldVal::Int(v),
                        None => return Err(col_err),
                    },
                    (FieldKind::Int, None) => FieldVal::Int(0),
                    (FieldKind::Float, Some(t)) => match parse_num(t) {
                        Some(v) => FieldVal::Float(v),
                        None => return Err(col_err),
                    },
                    (FieldKind::Float, None) => FieldVal::Float(0.0),
                };
                out.push(v);
            }
            Ok(out)
        }
    }
}

fn none_to_empty(s: &str) -> String {
    let t = s.trim();
    if t.eq_ignore_ascii_case("none") {
        String::new()
    } else {
        t.to_string()
    }
}

fn read_axis(file: &str, line: &Line, record: usize) -> Result<AxisInfo> {
    let rec = format!("record {record}");
    let text = line.text();
    // by columns: I10, 3I5, 1X, 20A1, 1X, 20A1
    let mut nums = [0i32; 4];
    let mut by_cols = true;
    let mut start = 0;
    for (n, w) in [10usize, 5, 5, 5].into_iter().enumerate() {
        let s = col(&text, start, w);
        let s = s.trim();
        match parse_int(s) {
            Some(v) => nums[n] = clamp_i32(v),
            None if s.is_empty() && n > 0 => {}
            None => by_cols = false,
        }
        start += w;
    }
    if by_cols {
        return Ok(AxisInfo {
            code: nums[0],
            len_exp: nums[1],
            force_exp: nums[2],
            temp_exp: nums[3],
            label: none_to_empty(&col(&text, 26, 20)),
            units: none_to_empty(&col(&text, 47, 20)),
        });
    }
    // blank-separated: four integers then the two labels
    let toks: Vec<&str> = text.split_whitespace().collect();
    let mut nums = [0i32; 4];
    for (n, slot) in nums.iter_mut().enumerate() {
        match toks.get(n).and_then(|t| parse_int(t)) {
            Some(v) => *slot = clamp_i32(v),
            None if n > 0 => {}
            None => {
                return Err(perr(
                    file,
                    line.no,
                    &format!("{rec}, specific data type"),
                    format!(
                        "expected an integer in columns 1-10, found '{}'",
                        preview(col(&text, 0, 10).trim().as_bytes())
                    ),
                ))
            }
        }
    }
    Ok(AxisInfo {
        code: nums[0],
        len_exp: nums[1],
        force_exp: nums[2],
        temp_exp: nums[3],
        label: none_to_empty(toks.get(4).copied().unwrap_or("")),
        units: none_to_empty(toks.get(5).copied().unwrap_or("")),
    })
}

/// One dataset 58 / 58b from the cursor, after its number line `header`.
/// `leave`: an even 58b dataset's values are checked and left in the file
/// (`payload`, with `x` and `y` empty) instead of copied; see payload.rs.
#[allow(clippy::too_many_arguments)]
pub(super) fn parse_58(
    c: &mut Cursor,
    file: &str,
    start: usize,
    header: &Line,
    binary: bool,
    leave: bool,
    remarks: &mut Vec<String>,
) -> Result<Dataset58> {
    const RECORD_NAMES: [&str; 11] = [
        "record 1 (ID line 1)",
        "record 2 (ID line 2)",
        "record 3 (ID line 3)",
        "record 4 (ID line 4)",
        "record 5 (ID line 5)",
        "record 6 (DOF identification)",
        "record 7 (data form)",
        "record 8 (abscissa data characteristics)",
        "record 9 (ordinate numerator data characteristics)",
        "record 10 (ordinate denominator data characteristics)",
        "record 11 (z-axis data characteristics)",
    ];
    // 58b fields
    let mut big_endian = false;
    let mut n_bytes_header: Option<i64> = None;
    if binary {
        let v = read_record(
            file,
            header,
            "58b header line",
            &[
                ("dataset number", 6, FieldKind::Text),
                ("binary flag", 1, FieldKind::Text),
                ("byte ordering", 6, FieldKind::Int),
                ("floating-point format", 6, FieldKind::Int),
                ("number of ASCII lines", 12, FieldKind::Int),
                ("number of bytes", 12, FieldKind::Int),
            ],
            6,
        )
        .or_else(|e| {
            // "58b 1 2 11 n ..." written with blanks
            let t = header.text();
            let toks: Vec<&str> = t.split_whitespace().collect();
            let ints: Vec<Option<i64>> = toks.iter().skip(1).map(|s| parse_int(s)).collect();
            if ints.len() >= 4 && ints[..4].iter().all(|x| x.is_some()) {
                Ok(vec![
                    FieldVal::Text("58".into()),
                    FieldVal::Text("b".into()),
                    FieldVal::Int(ints[0].unwrap_or(0)),
                    FieldVal::Int(ints[1].unwrap_or(0)),
                    FieldVal::Int(ints[2].unwrap_or(0)),
                    FieldVal::Int(ints[3].unwrap_or(0)),
                ])
            } else {
                Err(e)
            }
        })?;
        match v[2].int() {
            1 => {}
            2 => big_endian = true,
            o => {
                return Err(perr(
                    file,
                    header.no,
                    "58b header line, byte ordering",
                    format!("expected 1 (little endian) or 2 (big endian), found {o}"),
                ))
            }
        }
        if v[3].int() != 2 {
            return Err(Error::unsupported(format!(
                "expected floating-point format 2 (IEEE 754), found {}; other formats (1 DEC VMS, 3 IBM 5/370) are not supported",
                v[3].int()
            ))
            .field("58b header line, floating-point format")
            .at_line(header.no)
            .in_file(file));
        }
        if v[4].int() != 11 {
            return Err(perr(
                file,
                header.no,
                "58b header line, number of ASCII lines",
                format!("expected 11 for dataset 58b, found {}", v[4].int()),
            ));
        }
        n_bytes_header = Some(v[5].int());
    }
    let mut recs: Vec<Line> = Vec::with_capacity(11);
    for (r, name) in RECORD_NAMES.iter().enumerate() {
        match c.next_line() {
            Some(l) if l.trimmed() == "-1" && r > 0 => {
                return Err(perr(
                    file,
                    l.no,
                    name,
                    format!("dataset 58 that started at line {start} ends here after {r} of 11 header records; expected {name}"),
                ))
            }
            Some(l) => recs.push(l),
            None => {
                return Err(perr(
                    file,
                    c.line,
                    name,
                    format!("the file ends inside dataset 58 that started at line {start} (truncated record); expected {name}"),
                ))
            }
        }
    }
    let id: [String; 5] = std::array::from_fn(|k| recs[k].text().trim_end().to_string());
    let latin1 = recs.iter().any(|l| l.not_utf8());
    // record 6
    let r6 = read_record(
        file,
        &recs[5],
        "record 6",
        &[
            ("function type", 5, FieldKind::Int),
            ("function identification number", 10, FieldKind::Int),
            ("version number", 5, FieldKind::Int),
            ("load case", 10, FieldKind::Int),
            ("response entity name", 11, FieldKind::Text),
            ("response node", 10, FieldKind::Int),
            ("response direction", 4, FieldKind::Int),
            ("reference entity name", 11, FieldKind::Text),
            ("reference node", 10, FieldKind::Int),
            ("reference direction", 4, FieldKind::Int),
        ],
        10,
    )?;
    let func_type = r6[0].int();
    if function_type_name(clamp_i32(func_type)).is_none() {
        return Err(perr(
            file,
            recs[5].no,
            "record 6, function type",
            format!("unknown function type {func_type}; expected 0-27 (1 time response, 4 frequency response function, 6 coherence, 9 power spectral density, 12 spectrum ...)"),
        ));
    }
    for (k, name) in [(6usize, "response direction"), (9, "reference direction")] {
        let d = r6[k].int();
        if !(-6..=6).contains(&d) {
            return Err(perr(
                file,
                recs[5].no,
                &format!("record 6, {name}"),
                format!("expected a direction code -6..6 (0 scalar, ±1..±3 translation X Y Z, ±4..±6 rotation), found {d}"),
            ));
        }
    }
    // record 7
    let r7 = read_record(
        file,
        &recs[6],
        "record 7",
        &[
            ("ordinate data type", 10, FieldKind::Int),
            ("number of data points", 10, FieldKind::Int),
            ("abscissa spacing", 10, FieldKind::Int),
            ("abscissa minimum", 13, FieldKind::Float),
            ("abscissa increment", 13, FieldKind::Float),
            ("z-axis value", 13, FieldKind::Float),
        ],
        3,
    )?;
    let l7 = recs[6].no;
    let ord_type = clamp_i32(r7[0].int());
    if !matches!(ord_type, 2 | 4 | 5 | 6) {
        return Err(perr(
            file,
            l7,
            "record 7, ordinate data type",
            format!("expected 2 (real single), 4 (real double), 5 (complex single) or 6 (complex double), found {}", r7[0].int()),
        ));
    }
    let n_pts = r7[1].int();
    if n_pts < 1 {
        return Err(perr(
            file,
            l7,
            "record 7, number of data points",
            format!("expected at least 1 data point, found {n_pts}"),
        ));
    }
    let n_pts = usize::try_from(n_pts).unwrap_or(usize::MAX);
    let even = match r7[2].int() {
        0 => false,
        1 => true,
        o => {
            return Err(perr(
                file,
                l7,
                "record 7, abscissa spacing",
                format!("expected 0 (uneven) or 1 (even), found {o}"),
            ))
        }
    };
    let (x_min, x_inc, z_value) = (r7[3].float(), r7[4].float(), r7[5].float());
    if even {
        if !x_min.is_finite() {
            return Err(Error::numeric(format!(
                "abscissa minimum is {x_min}; expected a finite number"
            ))
            .field("record 7, abscissa minimum")
            .at_line(l7)
            .in_file(file));
        }
        if n_pts > 1 && !(x_inc.is_finite() && x_inc > 0.0) {
            return Err(Error::grid(format!(
                "abscissa increment is {x_inc}; expected a positive number for even spacing with {n_pts} points"
            ))
            .field("record 7, abscissa increment")
            .at_line(l7)
            .in_file(file));
        }
    }
    let mut axes: [AxisInfo; 4] = Default::default();
    for (k, slot) in axes.iter_mut().enumerate() {
        *slot = read_axis(file, &recs[7 + k], 8 + k)?;
    }
    let complex = matches!(ord_type, 5 | 6);
    let double = matches!(ord_type, 4 | 6);
    let per_pt = if complex { 2 } else { 1 } + if even { 0 } else { 1 };
    let n_vals = n_pts.saturating_mul(per_pt);

    // values and where each sits
    let mut vals: Vec<f64> = Vec::with_capacity(n_vals.min(1 << 20));
    // where the values stand, for error places: binary values by byte
    // offset (from `payload`), ASCII values by line ((index of the line's
    // first value, line number), one per data line)
    let mut payload: Option<(usize, usize)> = None;
    let mut left: Option<Payload> = None;
    let mut lines: Vec<(usize, usize)> = Vec::new();
    if binary {
        let size = if double { 8 } else { 4 };
        let need = n_vals.saturating_mul(size);
        if let Some(h) = n_bytes_header {
            if h != need as i64 {
                remarks.push(format!(
                    "{file}: line {}: 58b header says {h} data bytes, but record 7 ({n_pts} points, {}) needs {need}; read {need} (pyuff 2.5.8 writes the number of points times 8 here)",
                    header.no,
                    if complex { "complex" } else { "real" }
                ));
            }
        }
        let p0 = c.pos;
        payload = Some((p0, size));
        let avail = c.b.len() - p0;
        if avail < need {
            return Err(Error::parse(format!(
                "truncated binary payload: record 7 needs {need} bytes of data starting at byte {p0} ({n_pts} points), but the file has only {avail} bytes left"
            ))
            .field("record 12 (binary data values)")
            .at_byte(c.b.len())
            .in_file(file));
        }
        let data = &c.b[p0..p0 + need];
        // an even grid of finite values is left in the file when asked
        // (see payload.rs); anything else, or a value to report, is read
        if leave && even && all_finite(data, double, big_endian) {
            left = Some(Payload {
                at: p0,
                n_pts,
                double,
                big_endian,
                complex,
            });
        } else {
            decode_into(data, double, big_endian, &mut vals);
        }
        c.skip_bytes(need);
        // the end tag follows (possibly after a line break)
        let after = c.pos;
        let mut found = false;
        while let Some(l) = c.next_line() {
            let t = l.trimmed();
            if t.is_empty() {
                continue;
            }
            if t == "-1" {
                found = true;
                break;
            }
            return Err(Error::parse(format!(
                "expected the end tag '    -1' right after the {need} bytes of binary data that record 7 announces ({n_pts} points), found '{}' (more data than the header says?)",
                preview(l.bytes)
            ))
            .field("dataset end tag")
            .at_byte(after)
            .in_file(file));
        }
        if !found {
            return Err(Error::parse(format!(
                "the file ends after the binary data of dataset 58b that started at line {start}; expected the end tag '    -1'"
            ))
            .field("dataset end tag")
            .at_byte(c.b.len())
            .in_file(file));
        }
    } else {
        // fixed columns of the layout, for lines whose numbers touch
        let widths: &[usize] = match (double, even, complex) {
            (false, _, _) => &[13],
            (true, true, _) => &[20],
            (true, false, false) => &[13, 20],
            (true, false, true) => &[13, 20, 20],
        };
        let mut ended = false;
        while let Some(l) = c.next_line() {
            // the common line, ASCII numbers between blanks, read from
            // its bytes without copies; any other line by the general
            // reading below (identical results, see `fast_line`)
            match fast_line(l.bytes, &mut vals, n_vals) {
                Fast::Values(k) => {
                    if k > 0 {
                        lines.push((vals.len() - k, l.no));
                    }
                    continue;
                }
                Fast::Blank => continue,
                Fast::EndTag => {
                    ended = true;
                    break;
                }
                Fast::ValuesThenTag(k) => {
                    lines.push((vals.len() - k, l.no));
                    remarks.push(format!(
                        "{file}: line {}: the end tag '-1' of dataset 58 that started at line {start} stands on the last data line; read as the end tag",
                        l.no
                    ));
                    ended = true;
                    break;
                }
                Fast::General => {}
            }
            let t = l.text();
            let tt = t.trim();
            if tt == "-1" {
                ended = true;
                break;
            }
            if tt.is_empty() {
                continue;
            }
            let mut toks: Vec<&str> = tt.split_whitespace().collect();
            // the end tag on the last data line (no newline before it):
            // taken only when the values are then exactly those record 7
            // announces, so no number changes
            let tag_here = toks.len() > 1
                && toks.last() == Some(&"-1")
                && vals.len() + toks.len() == n_vals + 1;
            if tag_here {
                toks.pop();
            }
            let parsed: Vec<Option<f64>> = toks.iter().map(|s| parse_num(s)).collect();
            if tag_here && parsed.iter().all(|p| p.is_some()) {
                lines.push((vals.len(), l.no));
                vals.extend(parsed.into_iter().flatten());
                remarks.push(format!(
                    "{file}: line {}: the end tag '-1' of dataset 58 that started at line {start} stands on the last data line; read as the end tag",
                    l.no
                ));
                ended = true;
                break;
            }
            if parsed.iter().all(|p| p.is_some()) {
                if !parsed.is_empty() {
                    lines.push((vals.len(), l.no));
                }
                vals.extend(parsed.into_iter().flatten());
                continue;
            }
            // fixed columns
            let chars: Vec<char> = t.chars().collect();
            let mut p = 0;
            let mut k = 0;
            let mut fixed = Vec::new();
            let mut ok = true;
            while p < chars.len() {
                let w = widths[k % widths.len()];
                let s: String = chars[p..(p + w).min(chars.len())].iter().collect();
                if !s.trim().is_empty() {
                    match parse_num(&s) {
                        Some(v) => fixed.push(v),
                        None => {
                            ok = false;
                            break;
                        }
                    }
                }
                p += w;
                k += 1;
            }
            if !ok {
                let (n, bad) = toks
                    .iter()
                    .enumerate()
                    .find(|(_, s)| parse_num(s).is_none())
                    .map(|(n, s)| (n, s.to_string()))
                    .unwrap_or((0, tt.to_string()));
                return Err(perr(
                    file,
                    l.no,
                    "record 12 (data values)",
                    format!(
                        "expected a number, found '{}' (item {} on the line; value {} of the dataset)",
                        preview(bad.as_bytes()),
                        n + 1,
                        vals.len() + n + 1
                    ),
                ));
            }
            if !fixed.is_empty() {
                lines.push((vals.len(), l.no));
            }
            vals.extend(fixed);
        }
        if !ended {
            return Err(perr(
                file,
                c.line,
                "dataset end tag",
                format!(
                    "the file ends inside the data of dataset 58 that started at line {start} (truncated record) after {} of {n_vals} values; expected the end tag '    -1'",
                    vals.len()
                ),
            ));
        }
        if vals.len() != n_vals {
            return Err(perr(
                file,
                c.line - 1,
                "record 7, number of data points",
                format!(
                    "record 7 says {n_pts} points ({n_vals} values for {} {} data), but the dataset that started at line {start} holds {} values",
                    if even { "even" } else { "uneven" },
                    if complex { "complex" } else { "real" },
                    vals.len()
                ),
            ));
        }
    }
    let at = |e: Error, k: usize| -> Error {
        let e = match payload {
            Some((p0, size)) => e.at_byte(p0 + k * size),
            None => {
                let n = lines.partition_point(|&(first, _)| first <= k);
                e.at_line(lines.get(n.wrapping_sub(1)).map_or(start, |l| l.1))
            }
        };
        e.in_file(file)
    };
    // split into x and y; check finiteness and ordering. The common case,
    // an even grid of finite values, in loops without a branch per value
    // (the same values); any other case, and the error's place, below.
    // (values left in the file: nothing to split)
    let (mut x, mut y) = (Vec::new(), Vec::new());
    let fast = left.is_none() && even && vals.iter().fold(true, |ok, v| ok & v.is_finite());
    if fast {
        even_abscissa(x_min, x_inc, n_pts, &mut x);
        y = points(&vals, complex);
    }
    // the points the general reading goes through: all, or none
    let general = if left.is_none() && !fast { n_pts } else { 0 };
    x.reserve(general);
    y.reserve(general);
    for p in 0..general {
        let b = p * per_pt;
        let (xv, re_k) = if even {
            (x_min + (p as f64) * x_inc, b)
        } else {
            (vals[b], b + 1)
        };
        if !even {
            if !xv.is_finite() {
                return Err(at(
                    Error::numeric(format!(
                        "abscissa value of point {} is {xv}; expected a finite number",
                        p + 1
                    ))
                    .field("record 12, abscissa"),
                    b,
                ));
            }
            if p > 0 && xv <= x[p - 1] {
                return Err(at(
                    Error::grid(format!(
                        "abscissa value of point {} ({xv}) {} the previous one ({}); expected strictly increasing abscissa values",
                        p + 1,
                        if xv == x[p - 1] { "repeats" } else { "is below" },
                        x[p - 1]
                    ))
                    .field("record 12, abscissa"),
                    b,
                ));
            }
        }
        let re = vals[re_k];
        let im = if complex { vals[re_k + 1] } else { 0.0 };
        for (v, k, part) in [(re, re_k, "real part"), (im, re_k + 1, "imaginary part")] {
            if !v.is_finite() {
                let k = k.min(vals.len() - 1);
                return Err(at(
                    Error::numeric(format!(
                        "ordinate {part} of point {} is {v}; expected a finite number",
                        p + 1
                    ))
                    .field("record 12, ordinate"),
                    k,
                ));
            }
        }
        x.push(xv);
        y.push(Complex64::new(re, im));
    }
    Ok(Dataset58 {
        binary,
        id,
        func_type: func_type as i32,
        func_id: r6[1].int(),
        version: r6[2].int(),
        load_case: r6[3].int(),
        rsp_entity: none_to_empty(&r6[4].text()),
        rsp_node: r6[5].int(),
        rsp_dir: r6[6].int() as i32,
        ref_entity: none_to_empty(&r6[7].text()),
        ref_node: r6[8].int(),
        ref_dir: r6[9].int() as i32,
        ord_type,
        even,
        x_min,
        x_inc,
        z_value,
        axes,
        x,
        y,
        line: start,
        latin1,
        payload: left,
    })
}

/// What [`fast_line`] made of a data line.
#[derive(Debug, PartialEq)]
enum Fast {
    /// This many values appended.
    Values(usize),
    /// This many values appended, then the end tag on the same line.
    ValuesThenTag(usize),
    Blank,
    EndTag,
    /// Nothing appended: the line needs the general reading.
    General,
}

/// Blanks as `str::trim` and `str::split_whitespace` see them in ASCII
/// text (tab, line feed, vertical tab, form feed, carriage return, space).
fn blank(c: u8) -> bool {
    matches!(c, b'\t' | b'\n' | 0x0b | 0x0c | b'\r' | b' ')
}

/// A data line of record 12 read from its bytes, when it is ASCII and
/// every blank-separated token is a number: the same values, tag handling
/// and results as the general reading in [`parse_58`] (which reads the line
/// as decoded text), without allocating. `n_vals`: the values record 7
/// announces (an end tag on the last data line is taken only when the
/// values are then exactly those).
fn fast_line(bytes: &[u8], vals: &mut Vec<f64>, n_vals: usize) -> Fast {
    // UTF-8 (one check; a non-ASCII character then lies inside a token,
    // which does not parse and goes to the general reading, and every
    // blank is an ASCII byte, so each token bound is a character boundary)
    let Ok(text) = std::str::from_utf8(bytes) else {
        return Fast::General;
    };
    let before = vals.len();
    let mut n = 0;
    let mut last_tag = false;
    let b = text.as_bytes();
    let mut i = 0;
    while i < b.len() {
        while i < b.len() && blank(b[i]) {
            i += 1;
        }
        if i == b.len() {
            break;
        }
        let a = i;
        while i < b.len() && !blank(b[i]) {
            i += 1;
        }
        // bounded by ASCII blanks or the line's ends: character boundaries
        let tok = &text[a..i];
        // the plain form first (no blanks in a token: parse_num's trim is
        // not needed), then the Fortran forms
        // (a token with a non-ASCII character goes to the general reading)
        let fortran = || tok.is_ascii().then(|| parse_num(tok)).flatten();
        let Some(v) = tok.parse::<f64>().ok().or_else(fortran) else {
            vals.truncate(before);
            return Fast::General;
        };
        n += 1;
        last_tag = tok == "-1";
        vals.push(v);
    }
    if n == 0 {
        return Fast::Blank;
    }
    if last_tag && n == 1 {
        vals.truncate(before);
        return Fast::EndTag;
    }
    if last_tag && before + n == n_vals + 1 {
        vals.pop();
        return Fast::ValuesThenTag(n - 1);
    }
    Fast::Values(n)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fast(line: &str, have: usize, n_vals: usize) -> (Fast, Vec<f64>) {
        let mut v = vec![0.0; have];
        let f = fast_line(line.as_bytes(), &mut v, n_vals);
        (f, v.split_off(have))
    }

    /// The fast reading of a data line gives Rust's own number parsing of
    /// each blank-separated token (common practice: `str::parse::<f64>` is
    /// the reference), the Fortran `D` exponent as `parse_num` reads it, and
    /// leaves every other line to the general reading untouched.
    #[test]
    fn fast_line_reads_plain_lines_and_leaves_the_rest() {
        let (f, v) = fast("  1.25000000000E+00 -3.5E-07\t 4 ", 0, 10);
        assert_eq!(f, Fast::Values(3));
        assert_eq!(v, vec![1.25, -3.5e-7, 4.0]);
        let (f, v) = fast("1.5D+02 2.0d-1", 0, 10);
        assert_eq!(f, Fast::Values(2));
        assert_eq!(v, vec![150.0, 0.2]);
        // blank (as str::trim sees it, vertical tab and form feed too)
        assert_eq!(fast(" \t\x0b\x0c ", 0, 10).0, Fast::Blank);
        assert_eq!(fast("    -1", 4, 10).0, Fast::EndTag);
        // the end tag after the last values: only when the count is then exact
        let (f, v) = fast(" 1.0 2.0 -1", 8, 10);
        assert_eq!(f, Fast::ValuesThenTag(2));
        assert_eq!(v, vec![1.0, 2.0]);
        let (f, v) = fast(" 1.0 2.0 -1", 4, 10);
        assert_eq!(f, Fast::Values(3));
        assert_eq!(v, vec![1.0, 2.0, -1.0]);
        // touching numbers, words and non-ASCII go to the general reading,
        // with nothing appended
        for line in ["1.0E+00-2.0E+00", "1.0 abc", "1.0 2.0\u{a0}", "1,5"] {
            let (f, v) = fast(line, 3, 10);
            assert_eq!(f, Fast::General, "{line}");
            assert!(v.is_empty(), "{line}");
        }
    }
}
