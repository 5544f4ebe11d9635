//! Universal File Format dataset 58 (ASCII) and 58b (binary): functions at
//! nodal DOFs.
//!
//! Record layout (the public dataset 58 description, as reproduced in pyuff
//! 2.5.8 `datasets/dataset_58.py`):
//!
//! * start tag `    -1`, then the dataset number `    58` (or `    58b` plus
//!   byte order 1 = little endian / 2 = big endian, floating-point format
//!   2 = IEEE 754, number of ASCII lines 11, number of payload bytes);
//! * records 1–5: ID lines (free text);
//! * record 6: function type, function id, version, load case, response
//!   entity/node/direction, reference entity/node/direction
//!   (`2(I5,I10),2(1X,10A1,I10,I4)`);
//! * record 7: ordinate data type (2 real single, 4 real double, 5 complex
//!   single, 6 complex double), number of points, spacing (0 uneven, 1 even),
//!   abscissa minimum, increment, z value (`3I10,3E13.5`);
//! * records 8–11: data characteristics of abscissa, ordinate numerator,
//!   ordinate denominator, z axis: specific data type, length/force/temperature
//!   exponents, axis label, units label (`I10,3I5,2(1X,20A1)`);
//! * record 12: the values (ASCII in the layout's columns, or for 58b raw IEEE
//!   numbers right after the last header line), then the end tag `    -1`.
//!
//! Reading is tolerant where files in the field differ: numbers in data
//! records are read as blank-separated tokens, falling back to the layout's
//! fixed columns when numbers touch; header records are read by column,
//! falling back to blank-separated fields. Every error names the file, the
//! line (ASCII, 1-based) or byte (binary payload, 0-based), the field and what
//! was expected.
//!
//! ## Writing and exactness
//! Binary 58b output is double precision little endian: bit-exact.
//! The layout's ASCII columns are 20 characters for double-precision values
//! and 13 for abscissa values and the even-grid minimum and increment. A
//! double needs up to 17 significant digits (24 characters) to round-trip, so
//! it cannot always fit. [`AsciiLayout::Standard`] (used by [`write()`]) keeps
//! the columns, so column-based readers such as pyuff read the file: each
//! number is written with its shortest round-trip text when that fits its
//! column (then it is bit-exact), otherwise with as many significant digits
//! as fit with a blank before each number. Ordinates (20 columns) keep at
//! least 13 significant digits while the decimal exponent has at most two
//! digits (relative error ≤ 5e-13; 14 digits for |exponent| < 10, 12 beyond
//! 1e±99). Uneven abscissa values (13 columns) keep at least 10 significant
//! digits from 0.1 Hz to 1e10 Hz (relative error ≤ 5e-10). An even grid is
//! written as minimum and increment only when both are exact in 13 columns
//! and `min + k·inc` reproduces every line; otherwise the grid is uneven. [`AsciiLayout::Exact`] (via [`write_with`]) writes
//! every number with its shortest round-trip text in 26-character fields,
//! three to a 78-column line: bit-exact, readable by blank-separated readers
//! (and by mortise), but not by readers that insist on the 20-column fields.

//!
//! ## What mortise writes
//! One dataset per present entry: function type 4 for FRFs; 12 for peak or
//! RMS spectra, 2 for autopower, 9 for PSD; 6 for coherence after its FRF.
//! Double precision, SI units labels (records 9 and 10), specific data types
//! 8/11/12 (motion), 9 (force response) / 13 (excitation force), 15
//! (pressure), 18 (frequency). ID line 1 holds the set name, ID line 2 the
//! FRF kind, `coherence` or `signal=<kind>` (so our own spectra read back as
//! peak or RMS without the usual warning), followed by ` set=<n>` (n = 1, 2,
//! ... in the order written) when the file holds more than one set; ID lines
//! 3-5 the provenance chain ([`provenance_lines`]). The record-6 entity names
//! hold the DOF component when it fits 10 columns; [`read_with`] with no
//! component given restores it. A set without any present entry cannot be
//! written (it would vanish from the file) and is refused.
//!
//! ## How datasets are grouped into sets
//! A UFF file has no set record, so the reader groups datasets:
//! * datasets whose ID line 2 is exactly mortise's own text with a set tag
//!   (`<kind> set=<n>`, `signal=<kind> set=<n>`, `coherence set=<n>`) form
//!   one set per tag and ID line 1 (the set name), so several sets written
//!   to one file come back as those sets, even when they share DOFs, grid
//!   and quantities; files joined byte for byte keep their sets apart when
//!   the names differ;
//! * every other dataset (other writers' files, and our files of one set)
//!   is grouped by function (FRF or the spectrum kind), quantity pair and
//!   frequency grid, whatever its ID lines say: one FRF matrix exported as
//!   many datasets, one per response/reference pair with its own ID text,
//!   reads as one set, with missing entries where no dataset gives one;
//! * coherence (function type 6) joins the FRF of the same DOFs and grid in
//!   the same group.
//!
//! One set spread over several files (a roving-hammer delivery) is read file
//! by file and joined by [`super::merge`].
//!
//! ## Spectrum kinds
//! Function type 2 is an autopower and 9 a PSD; type 12 does not say peak or
//! RMS. The kind the caller declares ([`read_declared`], from
//! [`super::ImportOptions::signal`]) decides for type 12; undeclared, our own
//! `signal=` marker decides, else the spectrum is read as peak with a
//! warning. A declaration that contradicts type 2 or 9 or our marker is
//! refused, naming both.

use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, FrfSet, Provenance, SignalKind};
use crate::units::{self, Dim, Quantity};
use num_complex::Complex64;

// ---------------------------------------------------------------------------
// Low-level record type
// ---------------------------------------------------------------------------

/// Data characteristics of one axis (records 8–11).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct AxisInfo {
    /// Specific data type (8 displacement, 9 reaction force, 11 velocity,
    /// 12 acceleration, 13 excitation force, 15 pressure, 17 time,
    /// 18 frequency, 0 unknown, 1 general...).
    pub code: i32,
    pub len_exp: i32,
    pub force_exp: i32,
    pub temp_exp: i32,
    /// Axis label ("" when the file says NONE or leaves it blank).
    pub label: String,
    /// Axis units label ("" when the file says NONE or leaves it blank).
    pub units: String,
}

/// One dataset 58 / 58b as it stands in the file (no unit conversion).
#[derive(Debug, Clone, PartialEq)]
pub struct Dataset58 {
    /// True for 58b.
    pub binary: bool,
    /// ID lines 1–5 (records 1–5), trailing blanks removed.
    pub id: [String; 5],
    pub func_type: i32,
    pub func_id: i64,
    pub version: i64,
    pub load_case: i64,
    pub rsp_entity: String,
    pub rsp_node: i64,
    /// -6..=6: ±1..±3 translations X Y Z, ±4..±6 rotations, 0 scalar.
    pub rsp_dir: i32,
    pub ref_entity: String,
    pub ref_node: i64,
    pub ref_dir: i32,
    /// 2 real single, 4 real double, 5 complex single, 6 complex double.
    pub ord_type: i32,
    pub even: bool,
    pub x_min: f64,
    pub x_inc: f64,
    pub z_value: f64,
    /// Abscissa, ordinate numerator, ordinate denominator, z axis.
    pub axes: [AxisInfo; 4],
    /// Abscissa values (computed from minimum and increment when even).
    pub x: Vec<f64>,
    /// Ordinate values; imaginary part 0 for real data.
    pub y: Vec<Complex64>,
    /// 1-based line of the start tag.
    pub line: usize,
}

impl Dataset58 {
    pub fn is_complex(&self) -> bool {
        matches!(self.ord_type, 5 | 6)
    }
    pub fn is_double(&self) -> bool {
        matches!(self.ord_type, 4 | 6)
    }
    /// 1-based line of record `r` (1..=11).
    pub fn record_line(&self, r: usize) -> usize {
        self.line + 1 + r
    }
}

/// Column layout of ASCII output (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AsciiLayout {
    /// The layout's fixed columns (4E20.12 / E13.5,2E20.12 ...).
    Standard,
    /// Shortest round-trip text in 26-character fields, three per line.
    Exact,
}

/// Output format for [`write_with`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layout {
    Ascii(AsciiLayout),
    /// 58b, little-endian IEEE doubles.
    Binary,
}

/// Names of the function types of record 6, field 1.
pub fn function_type_name(t: i32) -> Option<&'static str> {
    Some(match t {
        0 => "general or unknown",
        1 => "time response",
        2 => "auto spectrum",
        3 => "cross spectrum",
        4 => "frequency response function",
        5 => "transmissibility",
        6 => "coherence",
        7 => "auto correlation",
        8 => "cross correlation",
        9 => "power spectral density",
        10 => "energy spectral density",
        11 => "probability density function",
        12 => "spectrum",
        13 => "cumulative frequency distribution",
        14 => "peaks valley",
        15 => "stress/cycles",
        16 => "strain/cycles",
        17 => "orbit",
        18 => "mode indicator function",
        19 => "force pattern",
        20 => "partial power",
        21 => "partial coherence",
        22 => "eigenvalue",
        23 => "eigenvector",
        24 => "shock response spectrum",
        25 => "finite impulse response filter",
        26 => "multiple coherence",
        27 => "order function",
        _ => return None,
    })
}

fn data_type_name(c: i32) -> &'static str {
    match c {
        0 => "unknown",
        1 => "general",
        2 => "stress",
        3 => "strain",
        5 => "temperature",
        6 => "heat flux",
        8 => "displacement",
        9 => "reaction force",
        11 => "velocity",
        12 => "acceleration",
        13 => "excitation force",
        15 => "pressure",
        16 => "mass",
        17 => "time",
        18 => "frequency",
        19 => "rpm",
        20 => "order",
        _ => "not defined by the layout",
    }
}

// ---------------------------------------------------------------------------
// Byte cursor over lines
// ---------------------------------------------------------------------------

struct Line<'a> {
    no: usize,
    bytes: &'a [u8],
}

impl Line<'_> {
    fn text(&self) -> String {
        String::from_utf8_lossy(self.bytes).into_owned()
    }
    fn trimmed(&self) -> String {
        self.text().trim().to_string()
    }
}

struct Cursor<'a> {
    b: &'a [u8],
    pos: usize,
    line: usize,
}

impl<'a> Cursor<'a> {
    fn new(b: &'a [u8]) -> Self {
        Cursor { b, pos: 0, line: 1 }
    }
    fn next_line(&mut self) -> Option<Line<'a>> {
        if self.pos >= self.b.len() {
            return None;
        }
        let start = self.pos;
        let end = self.b[start..]
            .iter()
            .position(|&c| c == b'\n')
            .map(|p| start + p)
            .unwrap_or(self.b.len());
        let mut content = &self.b[start..end];
        if let Some(stripped) = content.strip_suffix(b"\r") {
            content = stripped;
        }
        self.pos = if end < self.b.len() {
            end + 1
        } else {
            self.b.len()
        };
        let no = self.line;
        self.line += 1;
        Some(Line { no, bytes: content })
    }
    /// Skip `n` raw bytes, keeping the line count in step.
    fn skip_bytes(&mut self, n: usize) {
        let end = (self.pos + n).min(self.b.len());
        self.line += self.b[self.pos..end]
            .iter()
            .filter(|&&c| c == b'\n')
            .count();
        self.pos = end;
    }
}

/// A printable preview of a line for messages.
fn preview(bytes: &[u8]) -> String {
    let mut s = String::new();
    for &c in bytes.iter().take(40) {
        if (0x20..0x7f).contains(&c) {
            s.push(c as char);
        } else {
            s.push_str(&format!("\\x{c:02x}"));
        }
    }
    if bytes.len() > 40 {
        s.push_str("...");
    }
    s
}

fn perr(file: &str, line: usize, field: &str, msg: impl Into<String>) -> Error {
    Error::parse(msg).field(field).at_line(line).in_file(file)
}

/// Parse a number as written by Fortran-style writers: accepts `D`
/// exponents and the exponent-letter-less form `1.234-100`.
fn parse_num(tok: &str) -> Option<f64> {
    let t = tok.trim();
    if t.is_empty() {
        return None;
    }
    if let Ok(v) = t.parse::<f64>() {
        return Some(v);
    }
    let t2: String = t
        .chars()
        .map(|c| if c == 'D' || c == 'd' { 'e' } else { c })
        .collect();
    if let Ok(v) = t2.parse::<f64>() {
        return Some(v);
    }
    // 1.234-100 → 1.234e-100
    let bytes = t2.as_bytes();
    for p in 1..bytes.len() {
        if (bytes[p] == b'-' || bytes[p] == b'+')
            && bytes[p - 1].is_ascii_digit()
            && !t2[..p].contains(['e', 'E'])
        {
            let s = format!("{}e{}", &t2[..p], &t2[p..]);
            return s.parse::<f64>().ok();
        }
    }
    None
}

/// Codes out of the i32 range become i32::MIN (never a valid code).
fn clamp_i32(v: i64) -> i32 {
    i32::try_from(v).unwrap_or(i32::MIN)
}

fn parse_int(tok: &str) -> Option<i64> {
    tok.trim().parse::<i64>().ok()
}

/// Fixed-column slice (padded with blanks past the end of the line).
fn col(text: &str, start: usize, width: usize) -> String {
    text.chars().skip(start).take(width).collect::<String>()
}

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

// ---------------------------------------------------------------------------
// Parsing the file into datasets
// ---------------------------------------------------------------------------

/// Quick check by content: `Some(binary)` when the bytes start like a UFF
/// file (first non-blank line is the start tag `-1`, the next holds a
/// dataset number); `binary` is true when the first dataset 58 is 58b.
pub fn looks_like_uff(bytes: &[u8]) -> Option<bool> {
    let mut c = Cursor::new(bytes);
    let first = loop {
        let l = c.next_line()?;
        if !l.bytes.iter().all(|b| b.is_ascii_whitespace()) {
            break l;
        }
        if l.no > 50 {
            return None;
        }
    };
    if first.trimmed() != "-1" {
        return None;
    }
    let head = c.next_line()?;
    let t = head.text();
    let tok = t.split_whitespace().next()?;
    let num = tok.trim_end_matches(['b', 'B']);
    parse_int(num)?;
    if num == "58" {
        return Some(tok.len() > 2);
    }
    // first dataset is another one (e.g. 151, 164): look for a 58 header
    let mut prev_tag = false;
    let mut seen = 0;
    while let Some(l) = c.next_line() {
        let t = l.trimmed();
        if prev_tag {
            if t.starts_with("58b") || t.starts_with("58B") {
                return Some(true);
            }
            if t.split_whitespace().next() == Some("58") {
                return Some(false);
            }
        }
        prev_tag = t == "-1";
        seen += 1;
        if seen > 200_000 {
            break;
        }
    }
    Some(false)
}

/// Parse every dataset 58/58b of a file. Other datasets are skipped with a
/// remark. Values are checked (finite, abscissa strictly increasing).
pub fn parse_datasets(bytes: &[u8], file: &str) -> Result<(Vec<Dataset58>, Vec<String>)> {
    let mut c = Cursor::new(bytes);
    let mut out = Vec::new();
    let mut remarks = Vec::new();
    let mut last_end: Option<usize> = None;
    let mut any_text = false;
    while let Some(l) = c.next_line() {
        if l.bytes.iter().all(|b| b.is_ascii_whitespace()) {
            continue;
        }
        any_text = true;
        if l.trimmed() != "-1" {
            let msg = match last_end {
                None => format!(
                    "not a UFF file: expected the start tag '    -1' on the first non-blank line, found '{}'",
                    preview(l.bytes)
                ),
                Some(e) => format!(
                    "expected the start tag '    -1' of a new dataset after the dataset that ended at line {e}, found '{}'",
                    preview(l.bytes)
                ),
            };
            return Err(perr(file, l.no, "dataset start tag", msg));
        }
        let mut start = l.no;
        let mut next = c.next_line();
        // a lone tag (an empty dataset, as pyuff 2.5.8 leaves when it writes
        // 58b in 'overwrite' mode): the next '-1' starts the dataset
        while let Some(h) = &next {
            if h.trimmed() != "-1" {
                break;
            }
            remarks.push(format!(
                "{file}: line {start}: a lone tag '    -1' (an empty dataset) skipped"
            ));
            start = h.no;
            next = c.next_line();
        }
        let Some(h) = next else {
            return Err(perr(
                file,
                start + 1,
                "dataset number",
                format!("the file ends after the start tag at line {start}; expected a dataset number such as '    58'"),
            ));
        };
        let ht = h.text();
        let num_s = col(&ht, 0, 6);
        let (num, binary) = match parse_int(num_s.trim()) {
            Some(n) => (n, matches!(ht.chars().nth(6), Some('b') | Some('B'))),
            None => {
                let tok = ht.split_whitespace().next().unwrap_or("");
                let b = tok.ends_with(['b', 'B']);
                match parse_int(tok.trim_end_matches(['b', 'B'])) {
                    Some(n) => (n, b),
                    None => {
                        return Err(perr(
                            file,
                            h.no,
                            "dataset number",
                            format!(
                                "expected a dataset number (an integer in columns 1-6, such as '    58'), found '{}'",
                                preview(h.bytes)
                            ),
                        ))
                    }
                }
            }
        };
        if num != 58 {
            // skip to the end tag
            loop {
                match c.next_line() {
                    Some(e) if e.trimmed() == "-1" => {
                        last_end = Some(e.no);
                        break;
                    }
                    Some(_) => {}
                    None => {
                        return Err(perr(
                            file,
                            c.line,
                            "dataset end tag",
                            format!("the file ends inside dataset {num} that started at line {start}; expected the end tag '    -1'"),
                        ))
                    }
                }
            }
            remarks.push(format!(
                "{file}: line {start}: dataset {num} skipped (mortise reads dataset 58 only)"
            ));
            continue;
        }
        let ds = parse_58(&mut c, file, start, &h, binary, &mut remarks)?;
        last_end = Some(c.line.saturating_sub(1));
        out.push(ds);
    }
    if !any_text {
        return Err(Error::parse(
            "the file is empty; expected UFF datasets starting with the tag '    -1'",
        )
        .field("file")
        .at_line(1)
        .in_file(file));
    }
    Ok((out, remarks))
}

fn parse_58(
    c: &mut Cursor,
    file: &str,
    start: usize,
    header: &Line,
    binary: bool,
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
    let mut pos: Vec<(bool, usize)> = Vec::with_capacity(n_vals.min(1 << 20)); // (is_byte, location)
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
        let avail = c.b.len() - p0;
        if avail < need {
            return Err(Error::parse(format!(
                "truncated binary payload: record 7 needs {need} bytes of data starting at byte {p0} ({n_pts} points), but the file has only {avail} bytes left"
            ))
            .field("record 12 (binary data values)")
            .at_byte(c.b.len())
            .in_file(file));
        }
        for k in 0..n_vals {
            let o = p0 + k * size;
            let v = if double {
                let mut a = [0u8; 8];
                a.copy_from_slice(&c.b[o..o + 8]);
                if big_endian {
                    f64::from_be_bytes(a)
                } else {
                    f64::from_le_bytes(a)
                }
            } else {
                let mut a = [0u8; 4];
                a.copy_from_slice(&c.b[o..o + 4]);
                (if big_endian {
                    f32::from_be_bytes(a)
                } else {
                    f32::from_le_bytes(a)
                }) as f64
            };
            vals.push(v);
            pos.push((true, o));
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
            let t = l.text();
            let tt = t.trim();
            if tt == "-1" {
                ended = true;
                break;
            }
            if tt.is_empty() {
                continue;
            }
            let toks: Vec<&str> = tt.split_whitespace().collect();
            let parsed: Vec<Option<f64>> = toks.iter().map(|s| parse_num(s)).collect();
            if parsed.iter().all(|p| p.is_some()) {
                for v in parsed.into_iter().flatten() {
                    vals.push(v);
                    pos.push((false, l.no));
                }
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
            for v in fixed {
                vals.push(v);
                pos.push((false, l.no));
            }
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
        let (is_byte, loc) = pos[k];
        let e = if is_byte {
            e.at_byte(loc)
        } else {
            e.at_line(loc)
        };
        e.in_file(file)
    };
    // split into x and y; check finiteness and ordering
    let mut x = Vec::with_capacity(n_pts);
    let mut y = Vec::with_capacity(n_pts);
    for p in 0..n_pts {
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
    })
}

// ---------------------------------------------------------------------------
// Datasets → FRF sets
// ---------------------------------------------------------------------------

fn dir_of(code: i32) -> (Direction, bool) {
    let d = match code.abs() {
        1 => Direction::X,
        2 => Direction::Y,
        3 => Direction::Z,
        4 => Direction::RX,
        5 => Direction::RY,
        6 => Direction::RZ,
        _ => Direction::Scalar,
    };
    (d, code >= 0)
}

fn dir_code(d: &Dof) -> i32 {
    let c = match d.dir {
        Direction::X => 1,
        Direction::Y => 2,
        Direction::Z => 3,
        Direction::RX => 4,
        Direction::RY => 5,
        Direction::RZ => 6,
        Direction::Scalar => 0,
    };
    if d.positive {
        c
    } else {
        -c
    }
}

fn quantity_of_code(code: i32) -> Option<Quantity> {
    Some(match code {
        8 => Quantity::Displacement,
        9 | 13 => Quantity::Force,
        11 => Quantity::Velocity,
        12 => Quantity::Acceleration,
        15 => Quantity::Pressure,
        _ => return None,
    })
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Role {
    Frf,
    Coherence,
    Spectrum(SignalKind),
}

/// Groups warnings that repeat over many datasets into one line each.
#[derive(Default)]
struct Remarks {
    items: Vec<(String, Vec<usize>)>,
}

impl Remarks {
    fn add(&mut self, msg: String, line: usize) {
        if let Some(it) = self.items.iter_mut().find(|(m, _)| *m == msg) {
            it.1.push(line);
        } else {
            self.items.push((msg, vec![line]));
        }
    }
    fn render(&self, file: &str) -> Vec<String> {
        self.items
            .iter()
            .map(|(m, lines)| {
                let shown: Vec<String> = lines.iter().take(5).map(|l| l.to_string()).collect();
                let more = if lines.len() > 5 {
                    format!(" and {} more", lines.len() - 5)
                } else {
                    String::new()
                };
                format!(
                    "{file}: dataset{} at line{} {}{more}: {m}",
                    if lines.len() > 1 { "s" } else { "" },
                    if lines.len() > 1 { "s" } else { "" },
                    shown.join(", ")
                )
            })
            .collect()
    }
}

struct Entry {
    out: Dof,
    inp: Dof,
    values: Vec<Complex64>,
    line: usize,
    binary: bool,
    name: String,
    /// ID lines 3-5 (they may carry an earlier provenance chain).
    ids: [String; 3],
}

/// Our writer's set number and the set name (ID line 1), when ID line 2
/// carries `set=<n>`.
type SetTag = (u32, String);

struct Group {
    role: Role,
    out_qty: Quantity,
    in_qty: Quantity,
    freqs: Vec<f64>,
    tag: Option<SetTag>,
    entries: Vec<Entry>,
    remarks: Remarks,
}

fn unit_err(file: &str, line: usize, field: &str, e: Error) -> Error {
    e.field(field).at_line(line).in_file(file)
}

/// The quantity of an ordinate axis from its code, or from its units label
/// when the code is 0 (unknown) or 1 (general).
fn axis_quantity(
    file: &str,
    ds: &Dataset58,
    rec: usize,
    rot: bool,
    allow_unknown: bool,
) -> Result<Option<Quantity>> {
    let ax = &ds.axes[rec - 8];
    if let Some(q) = quantity_of_code(ax.code) {
        return Ok(Some(q));
    }
    if matches!(ax.code, 0 | 1) {
        if !ax.units.is_empty() {
            if let Ok(u) = units::parse_unit(&ax.units) {
                for q in Quantity::ALL {
                    if q.dim(rot) == u.dim {
                        return Ok(Some(q));
                    }
                }
            }
        }
        if allow_unknown {
            return Ok(None);
        }
        return Err(Error::quantity(format!(
            "specific data type {} ({}) with units label '{}' does not tell the quantity; expected 8 (displacement), 9 (reaction force), 11 (velocity), 12 (acceleration), 13 (excitation force) or 15 (pressure), or a units label such as m/s",
            ax.code,
            data_type_name(ax.code),
            ax.units
        ))
        .field(format!("record {rec}, specific data type"))
        .at_line(ds.record_line(rec))
        .in_file(file));
    }
    Err(Error::quantity(format!(
        "specific data type {} ({}) is not a quantity mortise reads; expected 8 (displacement), 9 (reaction force), 11 (velocity), 12 (acceleration), 13 (excitation force) or 15 (pressure)",
        ax.code,
        data_type_name(ax.code)
    ))
    .field(format!("record {rec}, specific data type"))
    .at_line(ds.record_line(rec))
    .in_file(file))
}

/// Factor to SI of an FRF dataset from the labels of records 9 and 10.
#[allow(clippy::too_many_arguments)]
fn frf_factor(
    file: &str,
    ds: &Dataset58,
    oq: Quantity,
    orot: bool,
    iq: Quantity,
    irot: bool,
    rm: &mut Remarks,
) -> Result<f64> {
    let l9 = &ds.axes[1].units;
    let l10 = &ds.axes[2].units;
    let f9 = "record 9, axis units label";
    let f10 = "record 10, axis units label";
    let den = |rm: &mut Remarks| -> Result<f64> {
        if l10.is_empty() {
            rm.add(
                format!(
                    "the units label of record 10 is empty; assumed SI ({})",
                    iq.si_unit(irot)
                ),
                ds.line,
            );
            Ok(1.0)
        } else {
            units::factor_for(l10, iq, irot).map_err(|e| unit_err(file, ds.record_line(10), f10, e))
        }
    };
    if l9.is_empty() {
        rm.add(
            format!(
                "the units label of record 9 is empty; assumed SI ({})",
                oq.si_unit(orot)
            ),
            ds.line,
        );
        return den(rm);
    }
    let u = units::parse_unit(l9).map_err(|e| unit_err(file, ds.record_line(9), f9, e))?;
    if u.dim == oq.dim(orot) {
        return Ok(u.factor / den(rm)?);
    }
    if u.dim == oq.dim(orot).times(iq.dim(irot).inv()) {
        // the whole ratio in record 9
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "units label '{l9}' does not fit record 9's data type {} ({}); expected a unit of {} such as {} (or of the ratio, such as {}/{})",
        ds.axes[1].code,
        data_type_name(ds.axes[1].code),
        oq,
        oq.si_unit(orot),
        oq.si_unit(orot),
        iq.si_unit(irot)
    ))
    .field(f9)
    .at_line(ds.record_line(9))
    .in_file(file))
}

/// Factor to SI of a spectrum dataset (record 9 label).
fn spectrum_factor(
    file: &str,
    ds: &Dataset58,
    q: Quantity,
    rot: bool,
    kind: SignalKind,
    rm: &mut Remarks,
) -> Result<f64> {
    let l9 = &ds.axes[1].units;
    let (want, si) = match kind {
        SignalKind::Peak | SignalKind::Rms => (q.dim(rot), q.si_unit(rot).to_string()),
        SignalKind::Autopower => (q.dim(rot).pow(2), format!("({})^2", q.si_unit(rot))),
        SignalKind::Psd => (
            q.dim(rot).pow(2).times(Dim::new(0, 0, 1, 0)),
            format!("({})^2/Hz", q.si_unit(rot)),
        ),
    };
    if l9.is_empty() {
        rm.add(
            format!("the units label of record 9 is empty; assumed SI ({si})"),
            ds.line,
        );
        return Ok(1.0);
    }
    let f9 = "record 9, axis units label";
    let u = units::parse_unit(l9).map_err(|e| unit_err(file, ds.record_line(9), f9, e))?;
    if u.dim == want {
        return Ok(u.factor);
    }
    Err(Error::unit(format!(
        "units label '{l9}' does not fit record 9's data type {} ({}) for a {}; expected dimension {} such as {si}",
        ds.axes[1].code,
        data_type_name(ds.axes[1].code),
        function_type_name(ds.func_type).unwrap_or("function"),
        units::dim_text(want)
    ))
    .field(f9)
    .at_line(ds.record_line(9))
    .in_file(file))
}

/// The frequencies of a dataset in Hz.
fn frequencies(file: &str, ds: &Dataset58, rm: &mut Remarks) -> Result<Vec<f64>> {
    let ax = &ds.axes[0];
    let field = "record 8, specific data type";
    match ax.code {
        18 => {}
        0 | 1 => rm.add(
            format!(
                "abscissa specific data type {} ({}); read the abscissa as frequency",
                ax.code,
                data_type_name(ax.code)
            ),
            ds.line,
        ),
        c => {
            return Err(Error::unsupported(format!(
                "abscissa specific data type {c} ({}); expected 18 (frequency)",
                data_type_name(c)
            ))
            .field(field)
            .at_line(ds.record_line(8))
            .in_file(file))
        }
    }
    let factor = if ax.units.is_empty() {
        1.0
    } else {
        let u = units::parse_unit(&ax.units)
            .map_err(|e| unit_err(file, ds.record_line(8), "record 8, axis units label", e))?;
        if u.dim != Dim::new(0, 0, -1, 0) {
            return Err(Error::unit(format!(
                "abscissa units label '{}' is not a frequency unit; expected Hz",
                ax.units
            ))
            .field("record 8, axis units label")
            .at_line(ds.record_line(8))
            .in_file(file));
        }
        u.factor
    };
    let f: Vec<f64> = ds.x.iter().map(|v| v * factor).collect();
    crate::grid::check_grid(&f).map_err(|e| {
        e.field("abscissa (frequency grid)")
            .at_line(ds.record_line(7))
            .in_file(file)
    })?;
    Ok(f)
}

/// What our own writer puts in ID line 2 (see the module docs), when the
/// line is exactly that text; other text gives nothing.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
struct OwnId2 {
    /// `signal=<kind>`.
    signal: Option<SignalKind>,
    /// `set=<n>`, n ≥ 1.
    set: Option<u32>,
}

fn own_id2(line: &str) -> OwnId2 {
    let toks: Vec<&str> = line.split_whitespace().collect();
    let (first, rest) = match toks.split_first() {
        Some(x) => x,
        None => return OwnId2::default(),
    };
    let mut id = OwnId2::default();
    if let Some(text) = first.strip_prefix("signal=") {
        match super::parse_signal(text) {
            Ok(k) if k.name() == text => id.signal = Some(k),
            _ => return OwnId2::default(),
        }
    } else if *first != "coherence" && !is_kind_name(first) {
        return OwnId2::default();
    }
    match rest {
        [] => {}
        [t] => match t.strip_prefix("set=").and_then(|n| n.parse::<u32>().ok()) {
            Some(n) if n >= 1 => id.set = Some(n),
            _ => return OwnId2::default(),
        },
        _ => return OwnId2::default(),
    }
    id
}

/// An FRF kind name as [`crate::frf::FrfKind::name`] writes it.
fn is_kind_name(t: &str) -> bool {
    Quantity::ALL.iter().any(|a| {
        Quantity::ALL
            .iter()
            .any(|b| crate::frf::FrfKind::of(*a, *b).name() == t)
    })
}

/// The spectrum kind of a dataset of function type `func` (2, 9 or 12),
/// from the function type, our ID-line marker and the caller's declaration.
fn spectrum_kind(
    file: &str,
    ds: &Dataset58,
    marker: Option<SignalKind>,
    declared: Option<SignalKind>,
) -> Result<SignalKind> {
    let refuse = |what: String, have: SignalKind, d: SignalKind| {
        Error::usage(format!(
            "{what} makes this dataset {} {} spectrum, but the import options declare {}; declare {} or leave \"signal\" out",
            if have == SignalKind::Autopower { "an" } else { "a" },
            have.name(),
            d.name(),
            have.name()
        ))
        .field("record 6, function type")
        .at_line(ds.record_line(6))
        .in_file(file)
    };
    let fixed = match ds.func_type {
        2 => Some(SignalKind::Autopower),
        9 => Some(SignalKind::Psd),
        _ => None,
    };
    if let Some(have) = fixed {
        return match declared {
            Some(d) if d != have => Err(refuse(
                format!(
                    "function type {} ({})",
                    ds.func_type,
                    function_type_name(ds.func_type).unwrap_or("")
                ),
                have,
                d,
            )),
            _ => Ok(have),
        };
    }
    match (marker, declared) {
        (Some(m), Some(d)) if m != d => Err(refuse(
            format!("ID line 2 'signal={}' (written by mortise)", m.name()),
            m,
            d,
        )),
        (Some(m), _) => Ok(m),
        (None, Some(d)) => Ok(d),
        (None, None) => Ok(SignalKind::Peak),
    }
}

/// Read every dataset 58/58b in a file and group them into FRF sets (one per
/// function type, quantity pair and grid); returns the sets and warnings.
/// DOFs get the component namespace `component`.
pub fn read(bytes: &[u8], file: &str, component: &str) -> Result<(Vec<FrfSet>, Vec<String>)> {
    read_with(bytes, file, Some(component))
}

/// Like [`read`]; with `component` None each DOF takes its component from
/// the entity name of record 6 (mortise writes the component there when it
/// fits the 10 columns), else from the file stem.
pub fn read_with(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
) -> Result<(Vec<FrfSet>, Vec<String>)> {
    read_declared(bytes, file, component, None)
}

/// Like [`read_with`], with the spectrum kind the caller declares for the
/// file's spectra (see "Spectrum kinds" in the module docs).
pub fn read_declared(
    bytes: &[u8],
    file: &str,
    component: Option<&str>,
    declared: Option<SignalKind>,
) -> Result<(Vec<FrfSet>, Vec<String>)> {
    let stem = super::file_stem(file);
    let comp_of = |entity: &str| -> String {
        match component {
            Some(c) => c.to_string(),
            None if !entity.is_empty() => entity.to_string(),
            None => stem.clone(),
        }
    };
    let (datasets, mut warnings) = parse_datasets(bytes, file)?;
    if datasets.is_empty() {
        return Err(Error::parse(
            "the file holds no dataset 58 (functions at nodal DOFs); nothing to read",
        )
        .field("dataset number")
        .in_file(file));
    }
    let mut groups: Vec<Group> = Vec::new();
    // (response, reference, grid, values, line, set tag)
    type Coh = (Dof, Dof, Vec<f64>, Vec<f64>, usize, Option<SetTag>);
    let mut coherences: Vec<Coh> = Vec::new();
    let mut file_rm = Remarks::default();
    for ds in &datasets {
        let own = own_id2(&ds.id[1]);
        let tag = own.set.map(|n| (n, ds.id[0].trim().to_string()));
        let role = match ds.func_type {
            4 | 5 => Role::Frf,
            6 => Role::Coherence,
            2 | 9 | 12 => Role::Spectrum(spectrum_kind(file, ds, own.signal, declared)?),
            t => {
                file_rm.add(
                    format!(
                        "function type {t} ({}) skipped: mortise reads 4 (FRF), 5 (transmissibility), 6 (coherence), 2 (auto spectrum), 9 (PSD) and 12 (spectrum)",
                        function_type_name(t).unwrap_or("unknown")
                    ),
                    ds.line,
                );
                continue;
            }
        };
        let mut rm = Remarks::default();
        let freqs = frequencies(file, ds, &mut rm)?;
        let (od, opos) = dir_of(ds.rsp_dir);
        let mut out = Dof::new(&comp_of(&ds.rsp_entity), &ds.rsp_node.to_string(), od);
        out.positive = opos;
        let orot = od.is_rotational();
        let (id_, ipos) = dir_of(ds.ref_dir);
        let mut inp = Dof::new(&comp_of(&ds.ref_entity), &ds.ref_node.to_string(), id_);
        inp.positive = ipos;
        let irot = id_.is_rotational();
        let name = ds.id[0].trim().to_string();
        match role {
            Role::Coherence => {
                let v: Vec<f64> = ds.y.iter().map(|c| c.re).collect();
                coherences.push((out, inp, freqs, v, ds.line, tag));
                continue;
            }
            Role::Frf => {
                let oq = axis_quantity(file, ds, 9, orot, ds.func_type == 5)?;
                let iq = axis_quantity(file, ds, 10, irot, ds.func_type == 5)?;
                let (oq, iq, factor) = match (oq, iq) {
                    (Some(oq), Some(iq)) => {
                        let f = frf_factor(file, ds, oq, orot, iq, irot, &mut rm)?;
                        (oq, iq, f)
                    }
                    (Some(q), None) | (None, Some(q)) => {
                        // transmissibility: same quantity on both sides
                        let f = frf_factor(file, ds, q, orot, q, irot, &mut rm)?;
                        (q, q, f)
                    }
                    (None, None) => (Quantity::Dimensionless, Quantity::Dimensionless, 1.0),
                };
                let values = ds.y.iter().map(|v| v * factor).collect();
                push_entry(
                    &mut groups,
                    (role, oq, iq, freqs, tag),
                    Entry {
                        out,
                        inp,
                        values,
                        line: ds.line,
                        binary: ds.binary,
                        name,
                        ids: [ds.id[2].clone(), ds.id[3].clone(), ds.id[4].clone()],
                    },
                    rm,
                );
            }
            Role::Spectrum(kind) => {
                let q = axis_quantity(file, ds, 9, orot, false)?.unwrap_or(Quantity::Force);
                let factor = spectrum_factor(file, ds, q, orot, kind, &mut rm)?;
                if ds.func_type == 12 && own.signal.is_none() && declared.is_none() {
                    rm.add(
                        "UFF does not say whether spectrum amplitudes are peak or RMS; read as peak"
                            .to_string(),
                        ds.line,
                    );
                }
                let values = ds.y.iter().map(|v| v * factor).collect();
                push_entry(
                    &mut groups,
                    (role, q, Quantity::Dimensionless, freqs, tag),
                    Entry {
                        out,
                        inp: Dof::scalar("", "ref"),
                        values,
                        line: ds.line,
                        binary: ds.binary,
                        name,
                        ids: [ds.id[2].clone(), ds.id[3].clone(), ds.id[4].clone()],
                    },
                    rm,
                );
            }
        }
    }
    let prov_base = Provenance {
        file: super::base_name(file),
        sha256: super::sha256_hex(bytes),
        format: String::new(),
        options: match component {
            Some(c) => format!("component={c}"),
            None => "component from entity names or file stem".to_string(),
        },
    };
    let default_name = match component {
        Some(c) if !c.is_empty() => c.to_string(),
        _ => stem.clone(),
    };
    let mut sets: Vec<FrfSet> = Vec::new();
    for g in groups.iter_mut() {
        let mut s = build_set(file, g, &default_name);
        let mut p = prov_base.clone();
        p.format = if g.entries.iter().any(|e| e.binary) {
            "uff58-binary"
        } else {
            "uff58-ascii"
        }
        .to_string();
        let lines: Vec<&str> = g
            .entries
            .iter()
            .flat_map(|e| e.ids.iter().map(|t| t.as_str()))
            .collect();
        for q in provenance_from_lines(&lines) {
            if !s.provenance.contains(&q) {
                s.provenance.push(q);
            }
        }
        s.provenance.push(p);
        if sets.iter().any(|o| o.name == s.name) {
            let label = match g.role {
                Role::Spectrum(_) => "spectrum".to_string(),
                _ => s.kind().name().to_string(),
            };
            s.name = format!("{} ({label})", s.name);
            let base = s.name.clone();
            let mut n = 2;
            while sets.iter().any(|o| o.name == s.name) {
                s.name = format!("{base} {n}");
                n += 1;
            }
        }
        sets.push(s);
    }
    // coherence onto the matching FRF entries
    for (out, inp, freqs, v, line, tag) in coherences {
        let mut done = false;
        for (g, s) in groups.iter().zip(sets.iter_mut()) {
            if g.role != Role::Frf || s.freqs != freqs || g.tag != tag {
                continue;
            }
            let i = s.out_place(&out);
            let j = s.in_place(&inp);
            if let (Some(i), Some(j)) = (i, j) {
                let n = s.data.len();
                let (n_out, n_in) = (s.n_out(), s.n_in());
                let coh = s.coherence.get_or_insert_with(|| vec![f64::NAN; n]);
                for (k, c) in v.iter().enumerate() {
                    coh[(k * n_out + i) * n_in + j] = *c;
                }
                done = true;
                break;
            }
        }
        if !done {
            file_rm.add(
                format!("coherence {out} / {inp} has no FRF with the same DOFs and grid; skipped"),
                line,
            );
        }
    }
    for s in &sets {
        s.validate().map_err(|e| e.in_file(file))?;
        warnings.extend(s.warnings.iter().cloned());
    }
    warnings.extend(file_rm.render(file));
    if sets.is_empty() {
        return Err(Error::unsupported(format!(
            "the file holds {} dataset(s) 58 but none mortise reads (FRF, transmissibility, coherence with its FRF, spectra)",
            datasets.len()
        ))
        .field("record 6, function type")
        .in_file(file));
    }
    Ok((sets, warnings))
}

type GroupKey = (Role, Quantity, Quantity, Vec<f64>, Option<SetTag>);

fn push_entry(groups: &mut Vec<Group>, key: GroupKey, e: Entry, rm: Remarks) {
    let (role, oq, iq, freqs, tag) = key;
    let g = match groups.iter_mut().position(|g| {
        g.role == role && g.out_qty == oq && g.in_qty == iq && g.freqs == freqs && g.tag == tag
    }) {
        Some(p) => &mut groups[p],
        None => {
            groups.push(Group {
                role,
                out_qty: oq,
                in_qty: iq,
                freqs,
                tag,
                entries: Vec::new(),
                remarks: Remarks::default(),
            });
            let n = groups.len() - 1;
            &mut groups[n]
        }
    };
    for (m, lines) in rm.items {
        for l in lines {
            g.remarks.add(m.clone(), l);
        }
    }
    g.entries.push(e);
}

fn build_set(file: &str, g: &mut Group, default_name: &str) -> FrfSet {
    let mut outputs: Vec<Dof> = Vec::new();
    let mut inputs: Vec<Dof> = Vec::new();
    for e in &g.entries {
        if !outputs.iter().any(|d| d.same_place(&e.out)) {
            outputs.push(e.out.clone());
        }
        if !inputs.iter().any(|d| d.same_place(&e.inp)) {
            inputs.push(e.inp.clone());
        }
    }
    let n_lines = g.freqs.len();
    let (n_out, n_in) = (outputs.len(), inputs.len());
    let mut s = FrfSet::zeros(
        default_name,
        g.freqs.clone(),
        outputs,
        inputs,
        g.out_qty,
        g.in_qty,
    );
    s.data = vec![Complex64::new(f64::NAN, f64::NAN); n_lines * n_out * n_in];
    s.present = vec![false; n_out * n_in];
    if let Role::Spectrum(k) = g.role {
        s.signal = Some(k);
    }
    let mut first_line = vec![0usize; n_out * n_in];
    for e in &g.entries {
        let i = s.out_place(&e.out).unwrap_or(0);
        let j = s.in_place(&e.inp).unwrap_or(0);
        let sign = e.out.sign() * s.outputs[i].sign() * e.inp.sign() * s.inputs[j].sign();
        let m = i * n_in + j;
        if s.present[m] {
            g.remarks.add(
                format!(
                    "duplicates {} / {} of the dataset at line {}; kept the first",
                    s.outputs[i], s.inputs[j], first_line[m]
                ),
                e.line,
            );
            continue;
        }
        s.present[m] = true;
        first_line[m] = e.line;
        for (k, v) in e.values.iter().enumerate() {
            s.data[(k * n_out + i) * n_in + j] = v * sign;
        }
    }
    // a name common to all datasets (ID line 1), else the component
    let first = &g.entries[0].name;
    if !first.is_empty()
        && !first.eq_ignore_ascii_case("none")
        && g.entries.iter().all(|e| &e.name == first)
    {
        s.name = first.clone();
    }
    s.warnings = g.remarks.render(file);
    s
}

// ---------------------------------------------------------------------------
// Writing
// ---------------------------------------------------------------------------

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

/// The provenance chain as ID-line text, two lines an entry:
/// `from <format> <file>` and `sha256 <hex>` (file names cut to fit 80
/// columns). The writer spreads the lines over ID lines 3-5 of a set's
/// datasets (three per dataset, in order); a chain longer than that keeps
/// its first entries.
pub fn provenance_lines(prov: &[Provenance]) -> Vec<String> {
    let mut v = Vec::new();
    for p in prov {
        let fmt = if p.format.trim().is_empty() || p.format.contains(char::is_whitespace) {
            "-"
        } else {
            p.format.as_str()
        };
        let head = format!("from {fmt} ");
        let room = 80 - head.len().min(80);
        let name: String = p
            .file
            .chars()
            .map(|c| if c.is_control() { ' ' } else { c })
            .take(room)
            .collect();
        v.push(format!("{head}{}", name.trim()));
        let sha = if p.sha256.len() == 64 && p.sha256.chars().all(|c| c.is_ascii_hexdigit()) {
            p.sha256.as_str()
        } else {
            "-"
        };
        v.push(format!("sha256 {sha}"));
    }
    v
}

/// Read back what [`provenance_lines`] wrote; other ID text is ignored.
pub fn provenance_from_lines(lines: &[&str]) -> Vec<Provenance> {
    let mut v = Vec::new();
    let mut k = 0;
    while k + 1 < lines.len() {
        let a = lines[k].trim();
        let b = lines[k + 1].trim();
        if let (Some(rest), Some(sha)) = (a.strip_prefix("from "), b.strip_prefix("sha256 ")) {
            if let Some((fmt, file)) = rest.split_once(' ') {
                let sha = sha.trim();
                let ok =
                    sha == "-" || (sha.len() == 64 && sha.chars().all(|c| c.is_ascii_hexdigit()));
                if ok && !file.trim().is_empty() {
                    v.push(Provenance {
                        file: file.trim().to_string(),
                        sha256: if sha == "-" {
                            String::new()
                        } else {
                            sha.to_string()
                        },
                        format: if fmt == "-" {
                            String::new()
                        } else {
                            fmt.to_string()
                        },
                        options: String::new(),
                    });
                    k += 2;
                    continue;
                }
            }
        }
        k += 1;
    }
    v
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

fn out_code(q: Quantity) -> i32 {
    match q {
        Quantity::Displacement => 8,
        Quantity::Velocity => 11,
        Quantity::Acceleration => 12,
        Quantity::Force => 9,
        Quantity::Pressure => 15,
        Quantity::VolumeVelocity => 1,
        Quantity::Dimensionless => 0,
    }
}

fn in_code(q: Quantity) -> i32 {
    match q {
        Quantity::Force => 13,
        o => out_code(o),
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
    let spectrum = set.signal.is_some();
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
    };
    let real = matches!(set.signal, Some(SignalKind::Autopower | SignalKind::Psd));
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
            } else {
                AxisInfo {
                    code: in_code(set.in_qty),
                    label: set.in_qty.name().into(),
                    units: set.in_qty.si_unit(irot).into(),
                    ..Default::default()
                }
            };
            let base = Dataset58 {
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
    use super::*;

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
    fn only_our_own_id_line_2_carries_a_set_tag() {
        let id = |t: &str| {
            let o = own_id2(t);
            (o.signal, o.set)
        };
        assert_eq!(id("accelerance set=2"), (None, Some(2)));
        assert_eq!(id("vibro-acoustic set=11"), (None, Some(11)));
        assert_eq!(id("coherence set=1"), (None, Some(1)));
        assert_eq!(id("signal=rms set=3"), (Some(SignalKind::Rms), Some(3)));
        assert_eq!(id("signal=psd"), (Some(SignalKind::Psd), None));
        assert_eq!(id("mobility"), (None, None));
        // other writers' text: no tag, no marker
        for t in [
            "NONE",
            "run 2",
            "set=2",
            "Accelerance set=2",
            "accelerance set=0",
            "accelerance set=2 x",
            "accelerance set=two",
            "signal=RMS",
            "signal=loud set=1",
        ] {
            assert_eq!(id(t), (None, None), "{t}");
        }
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
