//! The column map: how a supplier's delimited file is read. [`ColumnMap`]
//! and its parts (delimiter, column references, frequency unit, magnitude
//! scale, phase unit, value columns, entries) in the JSON form the page and
//! the CLI save, and [`map_from_json`], which also reads the legacy
//! `signal` key.
//!
//! Reading a file through a map is `mapped.rs`.

use super::text::split_quoted;
use crate::error::{Error, Result};
use crate::frf::SignalKind;
use crate::units::Quantity;

/// The cell separator of a supplier file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Delimiter {
    /// Decided from the first data row: tab, else semicolon, else comma, else white space.
    #[default]
    Auto,
    Comma,
    Semicolon,
    Tab,
    /// Runs of spaces or tabs.
    Whitespace,
}

impl Delimiter {
    pub fn parse(s: &str) -> Result<Delimiter> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "auto" => Delimiter::Auto,
            "comma" | "," => Delimiter::Comma,
            "semicolon" | ";" => Delimiter::Semicolon,
            "tab" | "\\t" | "\t" => Delimiter::Tab,
            "whitespace" | "space" | " " => Delimiter::Whitespace,
            _ => {
                return Err(Error::usage(format!(
                    "unknown delimiter '{}'; expected auto, comma, semicolon, tab or space",
                    crate::error::quote(s)
                )))
            }
        })
    }
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Auto => "auto",
            Delimiter::Comma => "comma",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Tab => "tab",
            Delimiter::Whitespace => "whitespace",
        }
    }
    pub(super) fn resolve(self, sample: &str) -> Delimiter {
        if self != Delimiter::Auto {
            return self;
        }
        if sample.contains('\t') {
            Delimiter::Tab
        } else if sample.contains(';') {
            Delimiter::Semicolon
        } else if sample.contains(',') {
            Delimiter::Comma
        } else {
            Delimiter::Whitespace
        }
    }
    pub(super) fn split(self, line: &str) -> Vec<String> {
        match self {
            Delimiter::Whitespace | Delimiter::Auto => {
                line.split_whitespace().map(str::to_string).collect()
            }
            Delimiter::Comma => split_quoted(line, ','),
            Delimiter::Semicolon => split_quoted(line, ';'),
            Delimiter::Tab => split_quoted(line, '\t'),
        }
    }
}

/// A column, by 1-based index or by its header name.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(untagged)]
pub enum ColumnRef {
    Index(usize),
    Name(String),
}

impl ColumnRef {
    /// A number is an index, anything else a header name.
    pub fn parse(s: &str) -> ColumnRef {
        match s.trim().parse::<usize>() {
            Ok(n) => ColumnRef::Index(n),
            Err(_) => ColumnRef::Name(s.trim().to_string()),
        }
    }
}

impl std::fmt::Display for ColumnRef {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ColumnRef::Index(n) => write!(f, "column {n}"),
            ColumnRef::Name(s) => write!(f, "column '{s}'"),
        }
    }
}

/// The unit of the frequency column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FreqUnit {
    #[default]
    Hz,
    KHz,
    /// Angular frequency ω in rad/s (f = ω / 2π).
    RadPerS,
}

impl FreqUnit {
    pub fn parse(s: &str) -> Result<FreqUnit> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "hz" => FreqUnit::Hz,
            "khz" => FreqUnit::KHz,
            "rad/s" | "rad-per-s" | "radps" => FreqUnit::RadPerS,
            _ => {
                return Err(Error::usage(format!(
                    "unknown frequency unit '{}'; expected Hz, kHz or rad/s",
                    crate::error::quote(s)
                )))
            }
        })
    }
    pub(super) fn to_hz(self, v: f64) -> f64 {
        match self {
            FreqUnit::Hz => v,
            FreqUnit::KHz => v * 1000.0,
            FreqUnit::RadPerS => v / (2.0 * std::f64::consts::PI),
        }
    }
}

/// How a magnitude column is scaled.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
#[serde(tag = "scale", rename_all = "kebab-case", deny_unknown_fields)]
pub enum MagScale {
    /// The magnitude itself, in the map's value unit.
    #[default]
    Linear,
    /// Level L in dB re `reference` (in the map's value unit):
    /// |H| = reference · 10^(L/20).
    Db { reference: f64 },
}

/// The unit of a phase column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PhaseUnit {
    #[default]
    Deg,
    Rad,
}

impl PhaseUnit {
    pub fn parse(s: &str) -> Result<PhaseUnit> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "deg" | "degree" | "degrees" => PhaseUnit::Deg,
            "rad" | "radian" | "radians" => PhaseUnit::Rad,
            _ => {
                return Err(Error::usage(format!(
                    "unknown phase unit '{}'; expected deg or rad",
                    crate::error::quote(s)
                )))
            }
        })
    }
}

/// Which columns hold one FRF's value.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "form", rename_all = "kebab-case", deny_unknown_fields)]
pub enum ValueColumns {
    ReIm {
        re: ColumnRef,
        im: ColumnRef,
    },
    MagPhase {
        mag: ColumnRef,
        phase: ColumnRef,
    },
    /// One real value (imaginary part zero), e.g. an autopower.
    Real {
        value: ColumnRef,
    },
    /// Storage stiffness K' and loss factor η, as isolator makers give them:
    /// the value is K'(1 + iη) (e^{+iωt}: a lossy spring has Im ≥ 0).
    StorageLoss {
        stiffness: ColumnRef,
        loss: ColumnRef,
    },
}

/// One FRF of a supplier file.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MapEntry {
    /// Output DOF text, `node+Z` or `component:node+Z`.
    pub out_dof: String,
    /// Input DOF text; ignored for spectra (the input is the reference).
    #[serde(default)]
    pub in_dof: String,
    pub values: ValueColumns,
    #[serde(default)]
    pub coherence: Option<ColumnRef>,
}

/// How to read a supplier's CSV: which column is what.
///
/// Blank lines and lines starting with `#` after the skipped rows are
/// ignored; every other line is a data row and must have as many cells as
/// the first. Frequencies must increase strictly. Values are converted to
/// SI: `SI value = factor(unit) × value`, where a magnitude/phase pair is
/// `|H| e^{iφ}` and a dB level L gives `|H| = reference × 10^(L/20)`.
///
/// Whether the columns hold spectra is declared once, in
/// [`crate::io::ImportOptions::signal`] (passed to [`read_mapped_as`](super::read_mapped_as) and
/// [`preview_as`](super::preview_as)). Unknown keys are refused; [`map_from_json`] also reads
/// the `signal` key that maps saved before carry.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ColumnMap {
    pub delimiter: Delimiter,
    /// Lines before the first data row (titles, column names, units rows).
    pub skip_rows: usize,
    /// 1-based line holding the column names, for columns addressed by name;
    /// default: the last skipped line.
    pub header_line: Option<usize>,
    /// A decimal comma (`0,25`); needs a delimiter other than comma.
    pub decimal_comma: bool,
    pub freq: ColumnRef,
    pub freq_unit: FreqUnit,
    pub entries: Vec<MapEntry>,
    pub mag_scale: MagScale,
    pub phase_unit: PhaseUnit,
    /// The unit of the values, e.g. "g/N", "mm/s/N", "N/mm"; empty = SI.
    /// For autopower and PSD spectra give the amplitude unit ("N" for N²/Hz).
    pub unit: String,
    pub out_qty: Quantity,
    pub in_qty: Quantity,
    /// The supplier used the e^{-iωt} convention: values are conjugated.
    pub conjugate: bool,
    /// Set name (default: the component name).
    pub name: Option<String>,
}

impl Default for ColumnMap {
    fn default() -> Self {
        ColumnMap {
            delimiter: Delimiter::Auto,
            skip_rows: 0,
            header_line: None,
            decimal_comma: false,
            freq: ColumnRef::Index(1),
            freq_unit: FreqUnit::Hz,
            entries: Vec::new(),
            mag_scale: MagScale::Linear,
            phase_unit: PhaseUnit::Deg,
            unit: String::new(),
            out_qty: Quantity::Dimensionless,
            in_qty: Quantity::Dimensionless,
            conjugate: false,
            name: None,
        }
    }
}

/// A column map from its JSON form, and the spectrum kind a legacy
/// `"signal"` key in it declares (maps saved before the declaration moved to
/// [`crate::io::ImportOptions::signal`] carry it; the page's mapping dialog
/// writes it). Unknown keys are refused, naming them.
pub fn map_from_json(mut v: serde_json::Value) -> Result<(ColumnMap, Option<SignalKind>)> {
    let legacy = match v.as_object_mut().and_then(|o| o.remove("signal")) {
        None | Some(serde_json::Value::Null) => None,
        Some(serde_json::Value::String(t)) => {
            Some(crate::io::parse_signal(&t).map_err(|e| e.field("column_map.signal"))?)
        }
        Some(other) => {
            return Err(Error::usage(format!(
                "column_map.signal is {}; expected peak, rms, autopower, psd, cross or esd",
                crate::error::quote(&other.to_string())
            ))
            .field("column_map.signal"))
        }
    };
    let map = serde_json::from_value::<ColumnMap>(v)
        .map_err(|e| Error::usage(crate::io::json_message(&e)).field("column_map"))?;
    Ok((map, legacy))
}
