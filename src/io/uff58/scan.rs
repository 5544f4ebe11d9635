//! A file into datasets: [`looks_like_uff`] (detection by content) and
//! [`parse_datasets`], which walks the start and end tags, skips datasets
//! other than 58 with a remark, and hands each 58 / 58b to `parse.rs`.
//!
//! No unit conversion and no grouping into sets here (`convert.rs`,
//! `group.rs`).

use super::block::Block;
use super::geometry::GeometryBuilder;
use super::header151::{parse_151, Header151};
use super::modal55::{parse_55, Mode55};
use super::parse::parse_58;
use super::records::Dataset58;
use super::segments;
use super::text::{col, parse_int, perr, preview, Cursor, Line};
use super::units164::{apply_to_58, parse_164, units_code_name, UnitSystem};
use crate::error::{Error, Result};

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

/// Parse every dataset 58/58b of a file. Datasets 151, 164, 15, 2411, 18,
/// 2420, 82 and 55 are read too (see [`parse_file`]); a dataset 164 is
/// applied to the datasets 58 that follow it (`units164::apply_to_58`);
/// other datasets are skipped with a remark. Values are checked (finite,
/// abscissa strictly increasing).
pub fn parse_datasets(bytes: &[u8], file: &str) -> Result<(Vec<Dataset58>, Vec<String>)> {
    let p = parse_file(bytes, file)?;
    Ok((p.datasets, p.remarks))
}

/// Everything mortise reads from a UFF file, dataset by dataset.
pub(super) struct Parsed {
    pub(super) datasets: Vec<Dataset58>,
    pub(super) remarks: Vec<String>,
    pub(super) headers: Vec<Header151>,
    pub(super) units: Vec<UnitSystem>,
    pub(super) geometry: GeometryBuilder,
    pub(super) modes: Vec<Mode55>,
}

/// Parse a whole file: datasets 58/58b, and 151 (header), 164 (units, in
/// force for the datasets after it), 15 / 2411 (nodes), 18 / 2420
/// (coordinate systems), 82 (trace lines), 55 (modes).
pub(super) fn parse_file(bytes: &[u8], file: &str) -> Result<Parsed> {
    parse_file_with(bytes, file, &mut |_| {}, false)
}

/// Bytes between two calls of a progress callback (at most one call per
/// this many bytes read, and one at the end).
pub const PROGRESS_STEP: usize = 1 << 20;

/// [`parse_file`] telling `progress` how many bytes of the file it has read:
/// after a dataset once at least [`PROGRESS_STEP`] bytes more than at the
/// last call are read, and with the file's length at the end. `leave`: even
/// 58b datasets' values are checked and left in the file (payload.rs).
pub(super) fn parse_file_with(
    bytes: &[u8],
    file: &str,
    progress: &mut dyn FnMut(usize),
    leave: bool,
) -> Result<Parsed> {
    parse_in(bytes, file, progress, segments::count(bytes.len()), leave)
}

/// [`parse_file_with`] with runs of datasets 58 parsed on `k` threads (1:
/// on this one alone); the same result whatever `k` (see `segments.rs`).
pub(super) fn parse_in(
    bytes: &[u8],
    file: &str,
    progress: &mut dyn FnMut(usize),
    k: usize,
    leave: bool,
) -> Result<Parsed> {
    if k > 1 {
        let signals = segments::Signal::many(k);
        return std::thread::scope(|sc| {
            let plan = segments::Plan::start(sc, bytes, file, k, &signals);
            walk(bytes, file, progress, plan, leave)
        });
    }
    walk(bytes, file, progress, segments::Plan::none(), leave)
}

/// The body of [`parse_file_with`]: the datasets in file order, taking a
/// run of datasets 58 parsed ahead on another thread from `plan` where the
/// walk arrives exactly at its start (see `segments.rs`).
fn walk(
    bytes: &[u8],
    file: &str,
    progress: &mut dyn FnMut(usize),
    mut plan: segments::Plan,
    leave: bool,
) -> Result<Parsed> {
    let mut c = Cursor::new(bytes);
    let mut told = 0usize;
    let mut out = Vec::new();
    let mut remarks = Vec::new();
    let mut headers = Vec::new();
    let mut units: Vec<UnitSystem> = Vec::new();
    let mut geometry = GeometryBuilder::default();
    let mut modes = Vec::new();
    // per dataset 164: start lines of the datasets 58 it converted
    let mut converted: Vec<Vec<usize>> = Vec::new();
    let mut mode_lines: Vec<usize> = Vec::new();
    let mut last_end: Option<usize> = None;
    let mut any_text = false;
    loop {
        if let Some(seg) = plan.take_at(c.pos, c.line) {
            // the same datasets, remarks and place as parsing them here
            for ds in seg.datasets {
                keep_58(bytes, file, ds, &units, &mut converted, &mut out)?;
            }
            remarks.extend(seg.remarks);
            last_end = seg.last_end;
            any_text = true;
            c.pos = seg.end;
            c.line = seg.end_line;
        }
        if c.pos >= told + PROGRESS_STEP {
            told = c.pos;
            progress(told);
        }
        let Some(Head {
            start,
            line: h,
            num,
            binary,
        }) = next_head(&mut c, file, last_end, &mut remarks, &mut any_text)?
        else {
            break;
        };
        if num != 58 {
            // collect the lines up to the end tag
            let read = READ_OTHER.contains(&num);
            let mut lines = Vec::new();
            loop {
                match c.next_line() {
                    Some(e) if e.trimmed() == "-1" => {
                        last_end = Some(e.no);
                        break;
                    }
                    Some(l) => {
                        if read {
                            lines.push((l.no, l.text().trim_end().to_string()));
                        }
                    }
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
            if !read {
                remarks.push(format!(
                    "{file}: line {start}: dataset {num} skipped (mortise reads datasets 58, 151, 164, 15, 2411, 18, 2420, 82 and 55)"
                ));
                continue;
            }
            let b = Block {
                file,
                num,
                start,
                lines,
                end: last_end.unwrap_or(start),
            };
            let u = units.last();
            let what = match num {
                151 => {
                    headers.push(parse_151(&b)?);
                    "header read (model, program, dates)".to_string()
                }
                164 => {
                    let sys = parse_164(&b)?;
                    let msg = format!(
                        "units {} ({}): length factor {}, force factor {} (SI = file value / factor), applied to the datasets after it",
                        sys.code,
                        units_code_name(sys.code),
                        sys.length,
                        sys.force
                    );
                    units.push(sys);
                    converted.push(Vec::new());
                    msg
                }
                15 => format!("{} node(s) read into the geometry", geometry.add_15(&b, u)?),
                2411 => format!(
                    "{} node(s) read into the geometry",
                    geometry.add_2411(&b, u)?
                ),
                18 => format!("{} coordinate system(s) read", geometry.add_18(&b, u)?),
                2420 => format!("{} coordinate system(s) read", geometry.add_2420(&b, u)?),
                82 => {
                    geometry.add_82(&b)?;
                    "trace line read into the geometry".to_string()
                }
                _ => {
                    // one remark for all modes, after the loop
                    if let Some(m) = parse_55(&b, u, &mut remarks)? {
                        modes.push(m);
                        mode_lines.push(start);
                    }
                    continue;
                }
            };
            remarks.push(format!("{file}: line {start}: dataset {num}: {what}"));
            continue;
        }
        let ds = parse_58(&mut c, file, start, &h, binary, leave, &mut remarks)?;
        last_end = Some(c.line.saturating_sub(1));
        keep_58(bytes, file, ds, &units, &mut converted, &mut out)?;
    }
    if !mode_lines.is_empty() {
        let shown: Vec<String> = mode_lines.iter().take(5).map(|l| l.to_string()).collect();
        remarks.push(format!(
            "{file}: {} dataset(s) 55 (at line(s) {}{}): modes read into the modal model",
            mode_lines.len(),
            shown.join(", "),
            if mode_lines.len() > 5 { ", ..." } else { "" }
        ));
    }
    for (sys, lines) in units.iter().zip(&converted) {
        if !lines.is_empty() {
            let shown: Vec<String> = lines.iter().take(5).map(|l| l.to_string()).collect();
            remarks.push(format!(
                "{file}: {} dataset(s) 58 without units labels (at line(s) {}{}) converted to SI by the units of dataset 164 at line {} (length factor {}, force factor {})",
                lines.len(),
                shown.join(", "),
                if lines.len() > 5 { ", ..." } else { "" },
                sys.line,
                sys.length,
                sys.force
            ));
        }
    }
    progress(bytes.len());
    if !any_text {
        return Err(Error::parse(
            "the file is empty; expected UFF datasets starting with the tag '    -1'",
        )
        .field("file")
        .at_line(1)
        .in_file(file));
    }
    Ok(Parsed {
        datasets: out,
        remarks,
        headers,
        units,
        geometry,
        modes,
    })
}

/// A parsed dataset 58 into `out`, converted by the units of the last
/// dataset 164 before it if there is one (its line then noted in
/// `converted`, one list per dataset 164). Values left in the file
/// (`bytes`) are copied first where units apply.
fn keep_58(
    bytes: &[u8],
    file: &str,
    mut ds: Dataset58,
    units: &[UnitSystem],
    converted: &mut [Vec<usize>],
    out: &mut Vec<Dataset58>,
) -> Result<()> {
    if let Some(sys) = units.last() {
        ds.fill_from(bytes);
        if apply_to_58(file, &mut ds, sys)? {
            if let Some(v) = converted.last_mut() {
                v.push(ds.line);
            }
        }
    }
    out.push(ds);
    Ok(())
}

/// Where a dataset starts: its start tag's line, its number line, the
/// number and whether it is binary (58b).
pub(super) struct Head<'a> {
    pub(super) start: usize,
    pub(super) line: Line<'a>,
    pub(super) num: i64,
    pub(super) binary: bool,
}

/// The next dataset's head: blank lines skipped (`any_text` set once a line
/// is not blank), the start tag `-1`, lone tags (an empty dataset, as pyuff
/// 2.5.8 leaves when it writes 58b in 'overwrite' mode) skipped with a
/// remark, the dataset number. `None` at the end of the file; `last_end`
/// (the line where the previous dataset ended) places a missing start tag.
pub(super) fn next_head<'a>(
    c: &mut Cursor<'a>,
    file: &str,
    last_end: Option<usize>,
    remarks: &mut Vec<String>,
    any_text: &mut bool,
) -> Result<Option<Head<'a>>> {
    let l = loop {
        match c.next_line() {
            None => return Ok(None),
            Some(l) if l.bytes.iter().all(|b| b.is_ascii_whitespace()) => continue,
            Some(l) => break l,
        }
    };
    *any_text = true;
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
    Ok(Some(Head {
        start,
        line: h,
        num,
        binary,
    }))
}

/// The datasets besides 58 that mortise reads.
const READ_OTHER: [i64; 8] = [151, 164, 15, 2411, 18, 2420, 82, 55];
