//! A file into datasets: [`looks_like_uff`] (detection by content) and
//! [`parse_datasets`], which walks the start and end tags, skips datasets
//! other than 58 with a remark, and hands each 58 / 58b to `parse.rs`.
//!
//! No unit conversion and no grouping into sets here (`convert.rs`,
//! `group.rs`).

use super::parse::parse_58;
use super::records::Dataset58;
use super::text::{col, parse_int, perr, preview, Cursor};
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
