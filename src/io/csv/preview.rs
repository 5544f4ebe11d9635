//! The import dialog's preview: the first rows of a supplier file split
//! into cells, and the values the column map gives them, or why it gives
//! none ([`preview`], [`preview_as`]). It runs the stages of `mapped.rs`, so
//! it shows what reading the file gives.

use super::column_map::{ColumnMap, Delimiter};
use super::mapped::{layout, parse_rows, plan};
use super::text::{decode_text, numbered_lines};
use crate::error::{quote, Result};
use crate::frf::SignalKind;

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

/// Whether a column map made for file `a` reads file `b` the same way: the
/// same delimiter, the same column names on the map's column-name line (all
/// of them, in order) and the same number of cells in the first data row.
/// `Ok(None)` when they match, `Ok(Some(why))` when they do not. Errors are
/// `b`'s, placed in it (or the mapped file's, named so).
pub fn same_layout(a: &[u8], b: &[u8], b_name: &str, map: &ColumnMap) -> Result<Option<String>> {
    let read = |bytes: &[u8], file: &str| -> Result<(Delimiter, Vec<String>, usize)> {
        let text = decode_text(bytes);
        let lines = numbered_lines(&text);
        let lay = layout(&lines, map).map_err(|e| e.in_file(file))?;
        let cells = lay.data.first().map_or(0, |d| lay.delim.split(d.1).len());
        Ok((lay.delim, lay.header, cells))
    };
    let (da, ha, ca) = read(a, "the mapped file")?;
    let (db, hb, cb) = read(b, b_name)?;
    if da != db {
        return Ok(Some(format!(
            "delimiter {} here, {} in the mapped file",
            db.name(),
            da.name()
        )));
    }
    if ha != hb {
        let first = ha
            .iter()
            .zip(&hb)
            .position(|(x, y)| x != y)
            .unwrap_or(ha.len().min(hb.len()));
        return Ok(Some(format!(
            "column names differ from column {} on ('{}' here, '{}' in the mapped file)",
            first + 1,
            quote(hb.get(first).map_or("", |s| s.as_str())),
            quote(ha.get(first).map_or("", |s| s.as_str()))
        )));
    }
    if ca != cb {
        return Ok(Some(format!(
            "{cb} cells in the first data row here, {ca} in the mapped file"
        )));
    }
    Ok(None)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn map() -> ColumnMap {
        crate::io::csv::detect_map(
            b"f [Hz],H_1_2_re [m/s/N],H_1_2_im [m/s/N]\n1,0.5,0.1\n",
            "a.csv",
        )
        .unwrap()
        .map
    }

    #[test]
    fn one_map_reads_files_of_one_layout_and_says_why_not_another() {
        let a = b"f [Hz],H_1_2_re [m/s/N],H_1_2_im [m/s/N]\n1,0.5,0.1\n2,0.4,0.2\n";
        let same = b"f [Hz],H_1_2_re [m/s/N],H_1_2_im [m/s/N]\n5,1.5,0.3\n";
        assert_eq!(same_layout(a, same, "b.csv", &map()).unwrap(), None);
        let swapped = b"f [Hz],H_1_2_im [m/s/N],H_1_2_re [m/s/N]\n5,1.5,0.3\n";
        let why = same_layout(a, swapped, "b.csv", &map()).unwrap().unwrap();
        assert!(why.contains("from column 2"), "{why}");
        let semi = b"f [Hz];H_1_2_re [m/s/N];H_1_2_im [m/s/N]\n5;1.5;0.3\n";
        let why = same_layout(a, semi, "b.csv", &map()).unwrap().unwrap();
        // the detected map names the comma: the semicolon file's one column differs
        assert!(why.contains("from column 1"), "{why}");
        let extra = b"f [Hz],H_1_2_re [m/s/N],H_1_2_im [m/s/N]\n5,1.5,0.3,9\n";
        let why = same_layout(a, extra, "b.csv", &map()).unwrap().unwrap();
        assert!(why.contains("4 cells"), "{why}");
    }
}
