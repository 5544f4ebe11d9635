//! The import dialog's preview: the first rows of a supplier file split
//! into cells, and the values the column map gives them, or why it gives
//! none ([`preview`], [`preview_as`]). It runs the stages of `mapped.rs`, so
//! it shows what reading the file gives.

use super::column_map::{ColumnMap, Delimiter};
use super::mapped::{layout, parse_rows, plan};
use super::text::{decode_text, numbered_lines};
use crate::error::Result;
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
