//! Text shared by our own layout and supplier files: bytes to text (UTF-8,
//! else Latin-1), the shortest exact number text, escaping of header values,
//! quoted cells, numbered lines and number cells.
//!
//! Knows no layout: that is `native.rs` and `mapped.rs`.

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

pub(super) fn esc(s: &str) -> String {
    s.replace('\\', "\\\\")
        .replace('\n', "\\n")
        .replace('\r', "\\r")
}

pub(super) fn unesc(s: &str) -> String {
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

pub(super) fn quote_cell(s: &str, delim: char) -> String {
    if s.contains(delim) || s.contains('"') {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Split one row at `delim`, honouring double quotes (`""` inside quotes is a quote).
pub(super) fn split_quoted(line: &str, delim: char) -> Vec<String> {
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

/// Lines without their ending, numbered from 1. A line ends at CR LF, LF
/// or a lone CR (old Mac exports), in any mix; like `str::split`, text
/// that ends with a line ending gives a last, empty line.
pub(super) fn numbered_lines(text: &str) -> Vec<(usize, &str)> {
    text_lines(text)
        .enumerate()
        .map(|(n, l)| (n + 1, l))
        .collect()
}

/// The lines of `text` without their endings (CR LF, LF or a lone CR).
pub fn text_lines(text: &str) -> impl Iterator<Item = &str> {
    let mut rest = Some(text);
    std::iter::from_fn(move || {
        let t = rest?;
        match t.find(['\r', '\n']) {
            Some(p) => {
                let skip = if t[p..].starts_with("\r\n") { 2 } else { 1 };
                rest = Some(&t[p + skip..]);
                Some(&t[..p])
            }
            None => {
                rest = None;
                Some(t)
            }
        }
    })
}

pub(super) fn parse_num(cell: &str, what: &str) -> std::result::Result<f64, String> {
    let t = cell.trim();
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(v) => Err(format!(
            "{what} is {v} ('{}'); expected a finite number",
            crate::error::quote(t)
        )),
        Err(_) if t.is_empty() => Err(format!("{what} is empty; expected a number")),
        Err(_) => Err(format!(
            "{what} is '{}'; expected a number",
            crate::error::quote(t)
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
    fn every_line_ending_and_their_mix() {
        let got: Vec<&str> = text_lines("a\r\nb\rc\nd\r\re").collect();
        assert_eq!(got, ["a", "b", "c", "d", "", "e"]);
        let got: Vec<&str> = text_lines("a\n").collect();
        assert_eq!(got, ["a", ""]);
        assert_eq!(text_lines("").count(), 1);
        assert_eq!(numbered_lines("x\ry")[1], (2, "y"));
    }

    #[test]
    fn quoted_split() {
        assert_eq!(
            split_quoted("a,\"b,c\",\"d\"\"e\"", ','),
            vec!["a", "b,c", "d\"e"]
        );
    }
}
