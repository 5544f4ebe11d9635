//! The bundle: our own versioned JSON holding a recipe, the inputs' provenance
//! (and, optionally, their raw FRFs), and results.
//!
//! Numbers are written by serde_json in their shortest round-trip form and read
//! back with exact rounding, so every f64 survives bit for bit. JSON has no NaN
//! or infinity, so inside FRF sets a non-finite number is written explicitly:
//! `null` for NaN (the data of missing entries, coherence not supplied),
//! `"inf"` and `"-inf"` for infinities.

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;

/// The `format` field of every bundle.
pub const BUNDLE_FORMAT: &str = "mortise-bundle";
/// The current bundle schema version (2: inputs carry their file's bytes,
/// so a bundle runs again as it is; version 1, sets only, is still read).
pub const BUNDLE_VERSION: u32 = 2;

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
    /// The FRF sets read from the file (version 1 bundles); `None` when the
    /// sender withheld the raw data or the file's bytes are in `data`.
    #[serde(
        default,
        with = "wire_opt_sets",
        skip_serializing_if = "Option::is_none"
    )]
    pub sets: Option<Vec<FrfSet>>,
    /// The file's bytes, base64 (standard alphabet, padded); `None` when the
    /// sender withheld the raw data.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub data: Option<String>,
}

impl BundleInput {
    /// True when neither the file's bytes nor its sets travel in the bundle.
    pub fn withheld(&self) -> bool {
        self.sets.is_none() && self.data.is_none()
    }

    /// The file's bytes, when the bundle carries them.
    pub fn bytes(&self) -> Result<Option<Vec<u8>>> {
        use base64::Engine as _;
        match &self.data {
            None => Ok(None),
            Some(d) => base64::engine::general_purpose::STANDARD
                .decode(d)
                .map(Some)
                .map_err(|e| {
                    Error::parse(format!(
                        "the bytes of input '{}' are not base64: {e}",
                        self.name
                    ))
                    .field("inputs.data")
                }),
        }
    }

    /// Base64 text of bytes, as `data` holds it.
    pub fn encode(bytes: &[u8]) -> String {
        use base64::Engine as _;
        base64::engine::general_purpose::STANDARD.encode(bytes)
    }
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
    #[serde(default, with = "wire_sets")]
    pub results: Vec<FrfSet>,
    /// The run report (conditioning, warnings) as JSON.
    #[serde(default)]
    pub report: Option<serde_json::Value>,
}

impl Bundle {
    /// An empty bundle of the current format and version.
    pub fn new(created: &str) -> Bundle {
        Bundle {
            format: BUNDLE_FORMAT.to_string(),
            version: BUNDLE_VERSION,
            mortise_version: crate::VERSION.to_string(),
            created: created.to_string(),
            recipe: None,
            inputs: Vec::new(),
            results: Vec::new(),
            report: None,
        }
    }

    /// A copy with every input's raw FRFs withheld (`sets = None`); names,
    /// SHA-256, formats, options, recipe and results stay.
    pub fn without_raw(&self) -> Bundle {
        let mut b = self.clone();
        for i in &mut b.inputs {
            i.sets = None;
            i.data = None;
        }
        b
    }

    /// Every set the bundle holds: inputs' raw sets (where present), then results.
    pub fn all_sets(&self) -> Vec<FrfSet> {
        let mut v: Vec<FrfSet> = self
            .inputs
            .iter()
            .filter_map(|i| i.sets.clone())
            .flatten()
            .collect();
        v.extend(self.results.iter().cloned());
        v
    }
}

/// Parse a bundle, checking format and version.
pub fn read(bytes: &[u8], file: &str) -> Result<Bundle> {
    let v: serde_json::Value = serde_json::from_slice(bytes).map_err(|e| {
        let what = match e.classify() {
            serde_json::error::Category::Eof => {
                "the JSON ends early (a truncated or partly copied bundle?)".to_string()
            }
            _ => format!("not valid JSON: {e}"),
        };
        Error::parse(what).at_line(e.line().max(1)).in_file(file)
    })?;
    let Some(obj) = v.as_object() else {
        return Err(Error::parse("expected a JSON object at the top level")
            .at_line(1)
            .in_file(file));
    };
    match obj.get("format").and_then(|f| f.as_str()) {
        Some(BUNDLE_FORMAT) => {}
        Some(other) => {
            return Err(
                Error::unsupported(format!("format '{other}'; expected '{BUNDLE_FORMAT}'"))
                    .field("format")
                    .in_file(file),
            )
        }
        None => {
            return Err(Error::parse(format!(
                "no \"format\" field; expected \"format\": \"{BUNDLE_FORMAT}\""
            ))
            .field("format")
            .in_file(file))
        }
    }
    match obj.get("version").and_then(|f| f.as_u64()) {
        Some(n) if (1..=u64::from(BUNDLE_VERSION)).contains(&n) => {}
        Some(n) if n > u64::from(BUNDLE_VERSION) => {
            return Err(Error::unsupported(format!(
            "version {n} was written by a newer mortise; this one reads version {BUNDLE_VERSION}"
        ))
            .field("version")
            .in_file(file))
        }
        Some(n) => {
            return Err(Error::unsupported(format!(
                "version {n}; this mortise reads version {BUNDLE_VERSION}"
            ))
            .field("version")
            .in_file(file))
        }
        None => {
            return Err(Error::parse(format!(
                "no whole-number \"version\" field; expected \"version\": {BUNDLE_VERSION}"
            ))
            .field("version")
            .in_file(file))
        }
    }
    let b: Bundle = serde_json::from_value(v)
        .map_err(|e| Error::parse(format!("bundle content: {e}")).in_file(file))?;
    for (n, s) in b.all_sets().iter().enumerate() {
        s.validate().map_err(|e| {
            e.field(format!("set {} ('{}')", n + 1, s.name))
                .in_file(file)
        })?;
    }
    Ok(b)
}

/// Serialise a bundle (f64 written shortest-round-trip, so reading back is bit-exact).
pub fn write(bundle: &Bundle) -> Result<Vec<u8>> {
    let mut out = serde_json::to_vec_pretty(bundle)
        .map_err(|e| Error::parse(format!("cannot serialise the bundle: {e}")))?;
    out.push(b'\n');
    Ok(out)
}

// ----------------------------------------------------------------- wire form

/// An f64 that survives JSON: numbers, `null` for NaN, "inf"/"-inf".
#[derive(Debug, Clone, Copy)]
struct Num(f64);

impl serde::Serialize for Num {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let x = self.0;
        if x.is_finite() {
            s.serialize_f64(x)
        } else if x.is_nan() {
            s.serialize_none()
        } else if x > 0.0 {
            s.serialize_str("inf")
        } else {
            s.serialize_str("-inf")
        }
    }
}

impl<'de> serde::Deserialize<'de> for Num {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        #[derive(serde::Deserialize)]
        #[serde(untagged)]
        enum Any {
            N(f64),
            S(String),
            Z(()),
        }
        match Any::deserialize(d)? {
            Any::N(x) => Ok(Num(x)),
            Any::Z(()) => Ok(Num(f64::NAN)),
            Any::S(s) => match s.as_str() {
                "inf" => Ok(Num(f64::INFINITY)),
                "-inf" => Ok(Num(f64::NEG_INFINITY)),
                "nan" | "NaN" => Ok(Num(f64::NAN)),
                o => Err(serde::de::Error::custom(format!(
                    "'{o}' is not a number; expected a number, null (NaN), \"inf\" or \"-inf\""
                ))),
            },
        }
    }
}

#[derive(serde::Serialize, serde::Deserialize)]
struct WireSet {
    name: String,
    freqs: Vec<Num>,
    outputs: Vec<Dof>,
    inputs: Vec<Dof>,
    out_qty: Quantity,
    in_qty: Quantity,
    /// [re, im] per value, frequency-major.
    data: Vec<[Num; 2]>,
    present: Vec<bool>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    coherence: Option<Vec<Num>>,
    #[serde(default)]
    provenance: Vec<Provenance>,
    #[serde(default)]
    warnings: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    signal: Option<SignalKind>,
}

impl From<&FrfSet> for WireSet {
    fn from(s: &FrfSet) -> WireSet {
        WireSet {
            name: s.name.clone(),
            freqs: s.freqs.iter().map(|&f| Num(f)).collect(),
            outputs: s.outputs.clone(),
            inputs: s.inputs.clone(),
            out_qty: s.out_qty,
            in_qty: s.in_qty,
            data: s.data.iter().map(|c| [Num(c.re), Num(c.im)]).collect(),
            present: s.present.clone(),
            coherence: s
                .coherence
                .as_ref()
                .map(|c| c.iter().map(|&x| Num(x)).collect()),
            provenance: s.provenance.clone(),
            warnings: s.warnings.clone(),
            signal: s.signal,
        }
    }
}

impl From<WireSet> for FrfSet {
    fn from(w: WireSet) -> FrfSet {
        FrfSet {
            name: w.name,
            freqs: w.freqs.into_iter().map(|n| n.0).collect(),
            outputs: w.outputs,
            inputs: w.inputs,
            out_qty: w.out_qty,
            in_qty: w.in_qty,
            data: w
                .data
                .into_iter()
                .map(|[a, b]| Complex64::new(a.0, b.0))
                .collect(),
            present: w.present,
            coherence: w.coherence.map(|c| c.into_iter().map(|n| n.0).collect()),
            provenance: w.provenance,
            warnings: w.warnings,
            signal: w.signal,
        }
    }
}

mod wire_sets {
    use super::{FrfSet, WireSet};
    use serde::{Deserialize, Serialize};
    pub fn serialize<S: serde::Serializer>(
        v: &[FrfSet],
        s: S,
    ) -> std::result::Result<S::Ok, S::Error> {
        let w: Vec<WireSet> = v.iter().map(WireSet::from).collect();
        w.serialize(s)
    }
    pub fn deserialize<'de, D: serde::Deserializer<'de>>(
        d: D,
    ) -> std::result::Result<Vec<FrfSet>, D::Error> {
        let w = Vec::<WireSet>::deserialize(d)?;
        Ok(w.into_iter().map(FrfSet::from).collect())
    }
}

mod wire_opt_sets {
    use super::{FrfSet, WireSet};
    use serde::{Deserialize, Serialize};
    pub fn serialize<S: serde::Serializer>(
        v: &Option<Vec<FrfSet>>,
        s: S,
    ) -> std::result::Result<S::Ok, S::Error> {
        let w: Option<Vec<WireSet>> = v.as_ref().map(|v| v.iter().map(WireSet::from).collect());
        w.serialize(s)
    }
    pub fn deserialize<'de, D: serde::Deserializer<'de>>(
        d: D,
    ) -> std::result::Result<Option<Vec<FrfSet>>, D::Error> {
        let w = Option::<Vec<WireSet>>::deserialize(d)?;
        Ok(w.map(|w| w.into_iter().map(FrfSet::from).collect()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    #[test]
    fn nan_and_infinity_survive() {
        let d = Dof::new("c", "1", Direction::Z);
        let mut s = FrfSet::zeros(
            "x",
            vec![1.0, 2.0],
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        s.coherence = Some(vec![f64::NAN, f64::INFINITY]);
        let mut b = Bundle::new("2026-12-01T00:00:00Z");
        b.results.push(s.clone());
        let text = write(&b).unwrap();
        let back: Bundle = serde_json::from_slice(&text).unwrap();
        let c = back.results[0].coherence.as_ref().unwrap();
        assert!(c[0].is_nan());
        assert_eq!(c[1], f64::INFINITY);
    }
}
