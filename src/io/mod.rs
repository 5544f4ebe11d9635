//! File exchange: format detection by content, loading into [`FrfSet`]s with
//! provenance, and saving.
//!
//! Formats: UFF dataset 58 ASCII and 58b binary ([`uff58`]), our own
//! self-describing CSV and supplier CSVs through a column map ([`csv`]), and
//! the bundle ([`bundle`]).

pub mod bundle;
pub mod csv;
pub mod merge;
pub mod uff58;

use crate::error::{Error, Result};
use crate::frf::FrfSet;

/// A file format mortise reads or writes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Format {
    Uff58Ascii,
    Uff58Binary,
    /// Our own self-describing CSV layout.
    CsvNative,
    /// A supplier's CSV/TSV read through a [`csv::ColumnMap`].
    CsvMapped,
    Bundle,
}

impl Format {
    pub fn name(self) -> &'static str {
        match self {
            Format::Uff58Ascii => "uff58-ascii",
            Format::Uff58Binary => "uff58-binary",
            Format::CsvNative => "csv-mortise",
            Format::CsvMapped => "csv-mapped",
            Format::Bundle => "bundle",
        }
    }
}

/// Options for [`load`].
#[derive(Debug, Clone, Default, serde::Serialize, serde::Deserialize)]
pub struct ImportOptions {
    /// Component namespace given to every DOF read (default: the file stem).
    #[serde(default)]
    pub component: Option<String>,
    /// Column map for supplier CSVs; required when the CSV is not our own layout.
    #[serde(default)]
    pub column_map: Option<csv::ColumnMap>,
}

/// What one file held.
#[derive(Debug, Clone)]
pub struct Loaded {
    pub format: Format,
    pub sets: Vec<FrfSet>,
    pub warnings: Vec<String>,
}

/// SHA-256 of bytes as lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    let d = Sha256::digest(bytes);
    let mut s = String::with_capacity(64);
    for b in d {
        s.push_str(&format!("{b:02x}"));
    }
    s
}

/// The file stem of a path-like name ("dir/casing.uff" → "casing").
pub fn file_stem(name: &str) -> String {
    let base = name.rsplit(['/', '\\']).next().unwrap_or(name);
    match base.rfind('.') {
        Some(p) if p > 0 => base[..p].to_string(),
        _ => base.to_string(),
    }
}

/// The base name of a path-like name ("dir/casing.uff" → "casing.uff").
pub fn base_name(name: &str) -> String {
    name.rsplit(['/', '\\']).next().unwrap_or(name).to_string()
}

/// Detect the format from the bytes (not the extension).
pub fn detect(bytes: &[u8], file: &str) -> Result<Format> {
    let _ = bytes;
    Err(Error::unsupported("format detection is not built yet").in_file(file))
}

/// Load one file. Errors name the file and the place in it.
pub fn load(bytes: &[u8], file: &str, opts: &ImportOptions) -> Result<Loaded> {
    let _ = (bytes, opts);
    Err(Error::unsupported("loading is not built yet").in_file(file))
}

/// An export format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum ExportFormat {
    Uff,
    UffBinary,
    Csv,
    Bundle,
}

/// Write sets in a format.
pub fn save(sets: &[FrfSet], fmt: ExportFormat) -> Result<Vec<u8>> {
    let _ = (sets, fmt);
    Err(Error::unsupported("saving is not built yet"))
}
