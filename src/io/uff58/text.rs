//! The text of a UFF file: a cursor over lines that counts line numbers and
//! steps over 58b binary payloads, Fortran-style numbers, fixed columns,
//! printable previews of bad bytes, and the parse error with its place.
//!
//! Knows nothing of records or datasets (`parse.rs`, `scan.rs`).

use crate::error::Error;

pub(super) struct Line<'a> {
    pub(super) no: usize,
    pub(super) bytes: &'a [u8],
}

impl Line<'_> {
    /// The line as text: UTF-8, else Latin-1 (Windows-1252 for the
    /// characters units use), by the one decoder the CSV readers use.
    pub(super) fn text(&self) -> String {
        crate::io::csv::decode_text(self.bytes)
    }
    /// True when the line is not UTF-8 (and [`Line::text`] read it as Latin-1).
    pub(super) fn not_utf8(&self) -> bool {
        std::str::from_utf8(self.bytes).is_err()
    }
    pub(super) fn trimmed(&self) -> String {
        self.text().trim().to_string()
    }
}

pub(super) struct Cursor<'a> {
    pub(super) b: &'a [u8],
    pub(super) pos: usize,
    pub(super) line: usize,
}

impl<'a> Cursor<'a> {
    /// A cursor at the start of the file, after a UTF-8 byte-order mark
    /// if there is one (byte offsets stay those of the file).
    pub(super) fn new(b: &'a [u8]) -> Self {
        let pos = if b.starts_with(BOM) { BOM.len() } else { 0 };
        Cursor { b, pos, line: 1 }
    }
    /// The next line; a line ends at LF, CR LF or a lone CR, in any mix.
    pub(super) fn next_line(&mut self) -> Option<Line<'a>> {
        if self.pos >= self.b.len() {
            return None;
        }
        let start = self.pos;
        let end = line_end(&self.b[start..])
            .map(|p| start + p)
            .unwrap_or(self.b.len());
        let content = &self.b[start..end];
        self.pos = match self.b.get(end) {
            None => self.b.len(),
            Some(b'\r') if self.b.get(end + 1) == Some(&b'\n') => end + 2,
            Some(_) => end + 1,
        };
        let no = self.line;
        self.line += 1;
        Some(Line { no, bytes: content })
    }
    /// Skip `n` raw bytes, keeping the line count in step.
    pub(super) fn skip_bytes(&mut self, n: usize) {
        let end = (self.pos + n).min(self.b.len());
        self.line += count_lf(&self.b[self.pos..end]);
        self.pos = end;
    }
}

/// The number of LF bytes in `b`: byte counters summed over blocks of 255
/// bytes (a block cannot overflow a byte), a loop without a branch per
/// byte (on the benchmark's 81 MB 58b file about 7 ms → 2–3 ms per read,
/// from `perf` shares, against the former eight-bytes-a-word count).
pub(super) fn count_lf(b: &[u8]) -> usize {
    b.chunks(255)
        .map(|blk| {
            blk.iter()
                .fold(0u8, |n, &c| n.wrapping_add(u8::from(c == b'\n'))) as usize
        })
        .sum()
}

/// Index of the first LF or CR in `b`: eight bytes at a time while none is
/// among them (a word holds a byte equal to `c` when `w ^ c·0x01..01` has
/// a zero byte: (v − 0x01..01) & !v & 0x80..80 ≠ 0, from memory: the
/// "determine if a word has a zero byte" bit trick), then byte by byte.
fn line_end(b: &[u8]) -> Option<usize> {
    const LO: u64 = 0x0101_0101_0101_0101;
    const HI: u64 = 0x8080_8080_8080_8080;
    let zero = |v: u64| v.wrapping_sub(LO) & !v & HI != 0;
    let mut i = 0;
    for ch in b.chunks_exact(8) {
        let Ok(w) = <[u8; 8]>::try_from(ch) else {
            break;
        };
        let w = u64::from_le_bytes(w);
        if zero(w ^ (LO * u64::from(b'\n'))) || zero(w ^ (LO * u64::from(b'\r'))) {
            break;
        }
        i += 8;
    }
    b[i..]
        .iter()
        .position(|&c| c == b'\n' || c == b'\r')
        .map(|p| i + p)
}

/// The UTF-8 byte-order mark some editors put at the start of a text file.
pub(super) const BOM: &[u8] = b"\xEF\xBB\xBF";

/// A printable preview of a line for messages, the byte counterpart of
/// [`crate::error::quote`]: at most [`crate::error::QUOTE_CHARS`] bytes,
/// those outside printable ASCII as `\xNN`, then "… (N bytes)" when cut.
pub(super) fn preview(bytes: &[u8]) -> String {
    let mut s = String::new();
    for &c in bytes.iter().take(crate::error::QUOTE_CHARS) {
        if (0x20..0x7f).contains(&c) {
            s.push(c as char);
        } else {
            s.push_str(&format!("\\x{c:02x}"));
        }
    }
    if bytes.len() > crate::error::QUOTE_CHARS {
        s.push_str(&format!("… ({} bytes)", bytes.len()));
    }
    s
}

pub(super) fn perr(file: &str, line: usize, field: &str, msg: impl Into<String>) -> Error {
    Error::parse(msg).field(field).at_line(line).in_file(file)
}

/// Parse a number as written by Fortran-style writers: accepts `D`
/// exponents and the exponent-letter-less form `1.234-100`.
pub(super) fn parse_num(tok: &str) -> Option<f64> {
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
pub(super) fn clamp_i32(v: i64) -> i32 {
    i32::try_from(v).unwrap_or(i32::MIN)
}

pub(super) fn parse_int(tok: &str) -> Option<i64> {
    tok.trim().parse::<i64>().ok()
}

/// Fixed-column slice (padded with blanks past the end of the line).
pub(super) fn col(text: &str, start: usize, width: usize) -> String {
    text.chars().skip(start).take(width).collect::<String>()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The word-at-a-time search finds what a byte-by-byte search finds
    /// (common practice: compare with the plain loop), at every offset and
    /// for every byte value next to the line ends.
    #[test]
    fn line_end_matches_the_plain_search() {
        let plain = |b: &[u8]| b.iter().position(|&c| c == b'\n' || c == b'\r');
        for len in 0..40 {
            for at in 0..=len {
                for end in [b'\n', b'\r'] {
                    for fill in [0u8, b' ', 0x0b, 0x0c, 0x8d, 0x8a, 0xff, b'9'] {
                        let mut v = vec![fill; len];
                        if at < len {
                            v[at] = end;
                        }
                        assert_eq!(line_end(&v), plain(&v), "len {len} at {at} fill {fill}");
                    }
                }
            }
        }
    }

    #[test]
    fn count_lf_equals_the_plain_count() {
        // every byte value around LF, at every offset and tail length
        let mut b: Vec<u8> = (0..=255u8).collect();
        b.extend([
            b'\n', 0x0a, 0x8a, 0x0b, 0x09, b'\n', b'\n', 0xff, 0x00, b'\n',
        ]);
        for start in 0..9 {
            for end in (start..b.len()).step_by(3) {
                let s = &b[start..end];
                assert_eq!(count_lf(s), s.iter().filter(|&&c| c == b'\n').count());
            }
        }
    }
}
