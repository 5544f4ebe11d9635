//! The bundle: our own versioned JSON holding a recipe, the inputs' provenance
//! (and, optionally, their raw FRFs), and results. (Being built.)

use crate::error::{Error, Result};
use crate::frf::FrfSet;

/// The `format` field of every bundle.
pub const BUNDLE_FORMAT: &str = "mortise-bundle";
/// The current bundle schema version.
pub const BUNDLE_VERSION: u32 = 1;

/// One input file of a bundle.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BundleInput {
    /// File name as loaded (no directories).
    pub name: String,
    pub sha256: String,
    /// Detected format name.
    pub format: String,
    /// Import options used (component name, column map).
    #[serde(default)]
    pub options: serde_json::Value,
    /// The FRF sets read from the file; `None` when the sender withheld the raw data.
    #[serde(default)]
    pub sets: Option<Vec<FrfSet>>,
}

/// A whole bundle.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Bundle {
    pub format: String,
    pub version: u32,
    pub mortise_version: String,
    /// ISO 8601 date-time of creation (given by the caller; the core has no clock).
    #[serde(default)]
    pub created: String,
    #[serde(default)]
    pub recipe: Option<serde_json::Value>,
    #[serde(default)]
    pub inputs: Vec<BundleInput>,
    #[serde(default)]
    pub results: Vec<FrfSet>,
    /// The run report (conditioning, warnings) as JSON.
    #[serde(default)]
    pub report: Option<serde_json::Value>,
}

/// Parse a bundle, checking format and version.
pub fn read(bytes: &[u8], file: &str) -> Result<Bundle> {
    let _ = bytes;
    Err(Error::unsupported("bundle reading is not built yet").in_file(file))
}

/// Serialise a bundle (f64 written shortest-round-trip, so reading back is bit-exact).
pub fn write(bundle: &Bundle) -> Result<Vec<u8>> {
    let _ = bundle;
    Err(Error::unsupported("bundle writing is not built yet"))
}
