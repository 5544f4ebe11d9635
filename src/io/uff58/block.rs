//! One dataset other than 58 as lines between its tags ([`Block`]), with the
//! record readers the datasets 151, 164, 15, 2411, 18, 2420, 82 and 55 share:
//! integers and reals as blank-separated tokens, falling back to the
//! layout's fixed columns when numbers touch. Every error names the file,
//! the line, the field and what was expected.

use super::text::{parse_int, parse_num, perr, preview};
use crate::error::{Error, Result};

/// The lines of one dataset between the header line (dataset number) and
/// the end tag.
pub(super) struct Block<'f> {
    pub(super) file: &'f str,
    pub(super) num: i64,
    /// 1-based line of the start tag.
    pub(super) start: usize,
    /// (1-based line number, text without the line end and trailing blanks).
    pub(super) lines: Vec<(usize, String)>,
    /// 1-based line of the end tag.
    pub(super) end: usize,
}

impl Block<'_> {
    pub(super) fn len(&self) -> usize {
        self.lines.len()
    }
    /// Record line `i` (0-based after the dataset number line), or the error
    /// of a dataset that ends too early.
    pub(super) fn line(&self, i: usize, field: &str) -> Result<(usize, &str)> {
        match self.lines.get(i) {
            Some((n, t)) => Ok((*n, t.as_str())),
            None => Err(perr(
                self.file,
                self.end,
                field,
                format!(
                    "dataset {} that starts at line {} ends at line {} after {} record line(s); expected {field} here",
                    self.num,
                    self.start,
                    self.end,
                    self.lines.len()
                ),
            )),
        }
    }
    /// `n` integers from record line `i` (`width`-column fields when the
    /// numbers touch).
    pub(super) fn ints(&self, i: usize, n: usize, width: usize, field: &str) -> Result<Vec<i64>> {
        let (no, t) = self.line(i, field)?;
        let toks: Vec<&str> = t.split_whitespace().collect();
        if toks.len() >= n {
            let v: Option<Vec<i64>> = toks[..n].iter().map(|s| parse_int(s)).collect();
            if let Some(v) = v {
                return Ok(v);
            }
        }
        if let Some(v) = fixed(t, n, width, parse_int) {
            return Ok(v);
        }
        Err(perr(
            self.file,
            no,
            field,
            format!(
                "expected {n} integer(s) ({field}) in dataset {}, found '{}'",
                self.num,
                preview(t.as_bytes())
            ),
        ))
    }
    /// `n` real numbers from record line `i` (Fortran `D` exponents read).
    pub(super) fn reals(&self, i: usize, n: usize, width: usize, field: &str) -> Result<Vec<f64>> {
        let (no, t) = self.line(i, field)?;
        let toks: Vec<&str> = t.split_whitespace().collect();
        let mut got = None;
        if toks.len() >= n {
            got = toks[..n]
                .iter()
                .map(|s| parse_num(s))
                .collect::<Option<Vec<f64>>>();
        }
        if got.is_none() {
            got = fixed(t, n, width, parse_num);
        }
        match got {
            Some(v) => {
                if let Some(k) = v.iter().position(|x| !x.is_finite()) {
                    return Err(perr(
                        self.file,
                        no,
                        field,
                        format!(
                            "value {} of {field} is {}; expected a finite number",
                            k + 1,
                            v[k]
                        ),
                    ));
                }
                Ok(v)
            }
            None => Err(perr(
                self.file,
                no,
                field,
                format!(
                    "expected {n} real number(s) ({field}) in dataset {}, found '{}'",
                    self.num,
                    preview(t.as_bytes())
                ),
            )),
        }
    }
    /// Free text of record line `i`, trimmed.
    pub(super) fn text(&self, i: usize, field: &str) -> Result<String> {
        Ok(self.line(i, field)?.1.trim().to_string())
    }
    /// An error placed at record line `i` (or the end tag past the end).
    pub(super) fn err(&self, i: usize, field: &str, msg: impl Into<String>) -> Error {
        let no = self.lines.get(i).map(|l| l.0).unwrap_or(self.end);
        perr(self.file, no, field, msg)
    }
}

/// `n` fields of `width` columns each, when the line is long enough.
fn fixed<T>(t: &str, n: usize, width: usize, f: impl Fn(&str) -> Option<T>) -> Option<Vec<T>> {
    if n == 0 {
        return Some(Vec::new());
    }
    let chars: Vec<char> = t.chars().collect();
    if width == 0 || chars.len() < (n - 1) * width + 1 {
        return None;
    }
    (0..n)
        .map(|k| {
            let a = k * width;
            let b = ((k + 1) * width).min(chars.len());
            let s: String = chars.get(a..b)?.iter().collect();
            f(s.trim())
        })
        .collect()
}
