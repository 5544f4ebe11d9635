//! The dataset 58 record as it stands in a file, before any unit conversion:
//! [`Dataset58`] with its axes ([`AxisInfo`]), the output layouts ([`Layout`],
//! [`AsciiLayout`]) and the names of the layout's codes (function types,
//! specific data types) for messages.
//!
//! Not here: reading records from text (`parse.rs`), what the codes mean as
//! quantities and units (`convert.rs`), writing them (`write.rs`).

use num_complex::Complex64;

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
    /// True when header text (records 1-11) was not UTF-8 and was read as
    /// Latin-1 (Windows-1252).
    pub latin1: bool,
    /// An even 58b dataset's values left in the file by the reader that
    /// builds sets (`x` and `y` are then empty until [`Self::fill_from`]);
    /// `None` in every dataset the public parsers return.
    pub(crate) payload: Option<super::payload::Payload>,
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
    /// Values left in the file (`bytes`: the file parsed) copied into `x`
    /// and `y`, as the parse would have copied them.
    pub(crate) fn fill_from(&mut self, bytes: &[u8]) {
        if let Some(p) = self.payload.take() {
            super::payload::even_abscissa(self.x_min, self.x_inc, p.n_pts, &mut self.x);
            self.y = p.values(bytes);
        }
    }
}

/// A time history (function type 1) as read, in SI: kept apart from FRF
/// sets (it has no frequency grid), so no FRF or spectrum operation can take
/// it. Listed by `inspect` and on the page's card; later it is the input of
/// time-data processing (spectra for the excitation of `respond`,
/// operational data for blocked forces).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TimeHistory {
    /// ID line 1.
    pub name: String,
    /// The channel: the response DOF of record 6 (`None` when the file
    /// gives node 0 and direction 0).
    pub channel: Option<crate::frf::Dof>,
    /// What the values measure, from record 9 (`None`: not told; the values
    /// are then as in the file).
    pub quantity: Option<crate::units::Quantity>,
    /// The SI unit of `values` ("" when the quantity is not told).
    pub unit: String,
    /// Time of the first sample, s.
    pub start_s: f64,
    /// Samples per second (even spacing), `None` for uneven time steps.
    pub sample_rate_hz: Option<f64>,
    /// Last time minus first time, s.
    pub duration_s: f64,
    /// Sample times, s.
    pub times: Vec<f64>,
    /// Values in SI (the real part; a time history is real).
    pub values: Vec<f64>,
    /// 1-based line of the dataset's start tag.
    pub line: usize,
}

/// Column layout of ASCII output (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AsciiLayout {
    /// The layout's fixed columns (4E20.12 / E13.5,2E20.12 ...).
    Standard,
    /// Shortest round-trip text in 26-character fields, three per line.
    Exact,
}

/// Output format for [`write_with`](super::write_with).
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

pub(super) fn data_type_name(c: i32) -> &'static str {
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
