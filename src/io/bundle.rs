//! The bundle: our own versioned JSON holding a recipe, the inputs' provenance
//! (and, optionally, their files' bytes), and results, with the SHA-256 that
//! let a recipient check what they got.
//!
//! # Numbers
//! Numbers are written by serde_json in their shortest round-trip form and read
//! back with exact rounding, so every f64 survives bit for bit. JSON has no NaN
//! or infinity, so inside FRF sets a non-finite number is written explicitly:
//! `null` for NaN (the data of missing entries, coherence not supplied),
//! `"inf"` and `"-inf"` for infinities.
//!
//! # Versions
//! - 1: inputs carry their FRF sets; no hashes but each input file's SHA-256.
//! - 2: inputs carry their file's bytes (base64), so a bundle runs again.
//! - 3: as 2, plus the SHA-256 of every stored set (each set's `sha256`) and
//!   of the whole content (`content_sha256`, the last field).
//! - 4 (written now): as 3, plus, on a result, its per-value uncertainty
//!   when the run propagated one (`uncertainty`: `method`, `std` per value,
//!   `flags` per value, `sha256`; see below). A recipient's page draws the
//!   result's 95 % band and unreliable lines from it.
//!
//! Versions 1 and 2 are still read, with a plain note that their stored sets
//! and content carry no SHA-256 (what they do record, the input files'
//! SHA-256, is checked); version 3 as written. A version above 4 is refused
//! as written by a newer mortise. Whatever the version, every recorded hash
//! must be 64 hex digits.
//!
//! # What is hashed
//! - `inputs[i].sha256`: the input file's bytes as loaded (unchanged since
//!   version 1). When the bundle carries the bytes (`data`), they are checked.
//!   When the sender withheld them, this is all the bundle says about the file
//!   (and it lets a recipient who has the file prove it is the same one).
//! - `sha256` of each stored set (`results[k]`, and `inputs[i].sets[j]` when
//!   an input travels as sets): the SHA-256 of the set's **canonical bytes**,
//!   [`set_canonical_bytes`], a binary encoding of everything the set holds:
//!
//!   ```text
//!   "mortise-set 1\n"                        14 ASCII bytes
//!   str name
//!   u64 n, then n × f64                      freqs (Hz)
//!   u64 n, then n × dof                      outputs
//!   u64 n, then n × dof                      inputs
//!   str out_qty, str in_qty                  as the JSON writes them ("velocity", ...)
//!   str signal                               "peak", "rms", "autopower", "psd", or "" for an FRF
//!   u64 n, then n × (f64 re, f64 im)         data, frequency-major as stored
//!   u64 n, then n × u8 (1 present, 0 not)    present
//!   u8 0 (no coherence) | u8 1, u64 n, n × f64
//!   u64 n, then n × (str file, str sha256, str format, str options)   provenance
//!   u64 n, then n × str                      warnings
//!
//!   dof = str component, str node, str dir ("X" ... "RZ", "Scalar"), u8 positive (1 or 0)
//!   str = u64 byte length, then the UTF-8 bytes
//!   u64 = unsigned 64-bit little-endian; f64 = IEEE 754 binary64 bits,
//!         little-endian, every NaN as 0x7FF8000000000000
//!   ```
//!
//!   It is rebuilt from the stored set alone (no other field enters), so it
//!   does not depend on how the JSON is laid out; any language with SHA-256
//!   and a little-endian packer reproduces it (the tests do, in Python).
//! - `uncertainty.sha256` of a result (version 4): the SHA-256 of
//!
//!   ```text
//!   "mortise-uncertainty 1\n"                22 ASCII bytes
//!   str set sha256                           the result's own `sha256` (binds the two)
//!   str method
//!   u64 n, then n × f64                      std, the set's data layout (NaN: none)
//!   u64 n, then n × u8                       flags (0 reliable, else reason bits 1..31)
//!   ```
//! - `content_sha256`: the SHA-256 of the bundle file's bytes with the 64
//!   characters of this field's value each replaced by the digit `0`. The
//!   field is the last member of the top-level object, so it is found
//!   without ambiguity. It covers everything, byte for byte: the recipe, the
//!   report, the creation time, the layout. A bundle re-indented or given
//!   other line endings after it was made no longer matches (it is refused,
//!   as any other alteration).
//!
//! # Checks on reading
//! Every recorded hash is checked and a bundle that fails any check is
//! **refused**, with the entry named (input, set) and both hashes: there is
//! no option to open it anyway; the way out is a new copy from the sender.
//! Checks run entry by entry (input files' bytes, then each set), then the
//! whole content, so an altered set is named rather than only the whole.
//!
//! What a match proves: the content is what the bundle recorded when it was
//! written. It does not prove who wrote it: there is no signature, and
//! whoever alters a bundle can recompute every hash. Compare the content
//! SHA-256 with the one the sender tells you by another channel.
//!
//! # Withholding
//! A withheld input keeps only the SHA-256 of its file (recorded since
//! version 1, and needed to check the original when it is dropped in again);
//! no set hash is recorded for it. A result computed from a withheld input
//! travels without its per-value uncertainty (the workspace leaves it out):
//! with the stated relative uncertainty, the spread of each value would
//! say how large the withheld FRFs are, line by line. A hash of its sets' canonical bytes would
//! let a recipient confirm a guess of the supplier's FRFs without the exact
//! file, which the file's hash does not; so none is written.

use crate::error::{quote, Error, Result};
use crate::frf::{Direction, Dof, FrfSet, Provenance, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;
use serde_json::{Map, Value};

/// The `format` field of every bundle.
pub const BUNDLE_FORMAT: &str = "mortise-bundle";
/// The current bundle schema version (see the module docs for 1 to 4).
pub const BUNDLE_VERSION: u32 = 4;
/// The name of the whole-content hash field (the last member of the bundle).
pub const CONTENT_FIELD: &str = "content_sha256";

/// One input file of a bundle.
#[derive(Debug, Clone, PartialEq)]
pub struct BundleInput {
    /// File name as loaded (no directories).
    pub name: String,
    /// SHA-256 of the file's bytes, lower-case hex.
    pub sha256: String,
    /// Detected format name.
    pub format: String,
    /// Import options used (component name, column map).
    pub options: Value,
    /// The FRF sets read from the file (version 1 bundles); `None` when the
    /// sender withheld the raw data or the file's bytes are in `data`.
    pub sets: Option<Vec<FrfSet>>,
    /// The file's bytes, base64 (standard alphabet, padded); `None` when the
    /// sender withheld the raw data.
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
                        "the bytes of input '{}' are not base64 ({e})",
                        quote(&self.name)
                    ))
                    .field("data")
                }),
        }
    }

    /// Base64 text of bytes, as `data` holds it.
    pub fn encode(bytes: &[u8]) -> String {
        use base64::Engine as _;
        base64::engine::general_purpose::STANDARD.encode(bytes)
    }
}

/// A result's per-value uncertainty as a bundle carries it (version 4).
#[derive(Debug, Clone, PartialEq)]
pub struct BundleUncertainty {
    /// How it was obtained (the run's words).
    pub method: String,
    /// Standard uncertainty per value, the set's data layout; NaN: none.
    pub std: Vec<f64>,
    /// Per value: 0 reliable, else the reasons' bits
    /// ([`crate::uncertainty::reliability::ALL_REASONS`]).
    pub flags: Vec<u8>,
}

/// A whole bundle (its hashes are computed by [`write`] and checked by [`read`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Bundle {
    pub format: String,
    /// The version read; [`write`] always writes [`BUNDLE_VERSION`].
    pub version: u32,
    pub mortise_version: String,
    /// ISO 8601 date-time of creation (given by the caller; the core has no clock).
    pub created: String,
    pub recipe: Option<Value>,
    pub inputs: Vec<BundleInput>,
    pub results: Vec<FrfSet>,
    /// The uncertainty of `results[k]` at index k (None, or a shorter list:
    /// none travels).
    pub uncertainties: Vec<Option<BundleUncertainty>>,
    /// The run report (conditioning, warnings) as JSON.
    pub report: Option<Value>,
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
            uncertainties: Vec::new(),
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

/// A bundle as [`read_checked`] read it, with what its checks found.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadBundle {
    pub bundle: Bundle,
    /// The whole-content SHA-256, recorded and checked (version 3); `None`
    /// for earlier versions, which record none.
    pub content_sha256: Option<String>,
    /// Plain notes on what could not be checked (earlier versions).
    pub notes: Vec<String>,
}

// ------------------------------------------------------------------- hashing

fn put_u64(out: &mut Vec<u8>, n: usize) {
    out.extend_from_slice(&(n as u64).to_le_bytes());
}

fn put_str(out: &mut Vec<u8>, s: &str) {
    put_u64(out, s.len());
    out.extend_from_slice(s.as_bytes());
}

fn put_f64(out: &mut Vec<u8>, x: f64) {
    let bits = if x.is_nan() {
        0x7FF8_0000_0000_0000
    } else {
        x.to_bits()
    };
    out.extend_from_slice(&bits.to_le_bytes());
}

/// The name serde gives an enum value (`"velocity"`, `"RX"`, `"psd"`).
fn wire_name<T: serde::Serialize>(x: &T) -> String {
    match serde_json::to_value(x) {
        Ok(Value::String(s)) => s,
        _ => String::new(),
    }
}

fn put_dof(out: &mut Vec<u8>, d: &Dof) {
    put_str(out, &d.component);
    put_str(out, &d.node);
    put_str(out, &wire_name(&d.dir));
    out.push(u8::from(d.positive));
}

/// The canonical bytes of a set, whose SHA-256 a bundle records (layout in
/// the module docs).
pub fn set_canonical_bytes(s: &FrfSet) -> Vec<u8> {
    let mut out = Vec::with_capacity(64 + 16 * s.data.len() + 8 * s.freqs.len());
    out.extend_from_slice(b"mortise-set 1\n");
    put_str(&mut out, &s.name);
    put_u64(&mut out, s.freqs.len());
    for &f in &s.freqs {
        put_f64(&mut out, f);
    }
    for dofs in [&s.outputs, &s.inputs] {
        put_u64(&mut out, dofs.len());
        for d in dofs {
            put_dof(&mut out, d);
        }
    }
    put_str(&mut out, &wire_name(&s.out_qty));
    put_str(&mut out, &wire_name(&s.in_qty));
    put_str(
        &mut out,
        &s.signal.map(|k| wire_name(&k)).unwrap_or_default(),
    );
    put_u64(&mut out, s.data.len());
    for c in &s.data {
        put_f64(&mut out, c.re);
        put_f64(&mut out, c.im);
    }
    put_u64(&mut out, s.present.len());
    out.extend(s.present.iter().map(|&p| u8::from(p)));
    match &s.coherence {
        None => out.push(0),
        Some(c) => {
            out.push(1);
            put_u64(&mut out, c.len());
            for &x in c {
                put_f64(&mut out, x);
            }
        }
    }
    put_u64(&mut out, s.provenance.len());
    for p in &s.provenance {
        for t in [&p.file, &p.sha256, &p.format, &p.options] {
            put_str(&mut out, t);
        }
    }
    put_u64(&mut out, s.warnings.len());
    for w in &s.warnings {
        put_str(&mut out, w);
    }
    out
}

/// A set back from its canonical bytes ([`set_canonical_bytes`]), read from
/// `bytes[*at..]`; `*at` moves past it. Every value comes back bit for bit
/// except the payload of a NaN (a missing entry's data), which the
/// canonical form writes as one quiet NaN; no number depends on it. The
/// page's extra workers receive a sweep's components this way
/// ([`crate::recipe::SweepInputs`]). Errors name `what` and the byte.
pub fn set_from_canonical_bytes(bytes: &[u8], at: &mut usize, what: &str) -> Result<FrfSet> {
    let mut r = Canon {
        bytes,
        at: *at,
        what,
    };
    let set = r.set()?;
    *at = r.at;
    Ok(set)
}

/// A reader of canonical bytes.
struct Canon<'a> {
    bytes: &'a [u8],
    at: usize,
    what: &'a str,
}

impl Canon<'_> {
    fn bad(&self, msg: &str) -> Error {
        Error::parse(format!("{}: {msg}", self.what)).at_byte(self.at)
    }
    fn take(&mut self, n: usize) -> Result<&[u8]> {
        let end = self
            .at
            .checked_add(n)
            .filter(|&e| e <= self.bytes.len())
            .ok_or_else(|| self.bad(&format!("{n} more bytes expected; the data end")))?;
        let s = &self.bytes[self.at..end];
        self.at = end;
        Ok(s)
    }
    fn u64(&mut self) -> Result<u64> {
        let b = self.take(8)?;
        let mut a = [0u8; 8];
        a.copy_from_slice(b);
        Ok(u64::from_le_bytes(a))
    }
    /// A count of items of `size` bytes each, checked against what is left.
    fn count(&mut self, size: usize) -> Result<usize> {
        let n = self.u64()?;
        let left = (self.bytes.len() - self.at) as u64;
        if n.saturating_mul(size.max(1) as u64) > left {
            return Err(self.bad(&format!("a count of {n} is more than the data hold")));
        }
        Ok(n as usize)
    }
    fn f64(&mut self) -> Result<f64> {
        Ok(f64::from_bits(self.u64()?))
    }
    fn str(&mut self) -> Result<String> {
        let n = self.count(1)?;
        let at = self.at;
        let b = self.take(n)?.to_vec();
        String::from_utf8(b)
            .map_err(|_| Error::parse(format!("{}: text that is not UTF-8", self.what)).at_byte(at))
    }
    fn named<T: serde::de::DeserializeOwned>(&mut self, field: &str) -> Result<T> {
        let at = self.at;
        let s = self.str()?;
        serde_json::from_value(Value::String(s.clone())).map_err(|_| {
            Error::parse(format!("{}: '{}' is not a {field}", self.what, quote(&s)))
                .at_byte(at)
                .field(field.to_string())
        })
    }
    fn dofs(&mut self) -> Result<Vec<Dof>> {
        let n = self.count(25)?;
        let mut out = Vec::with_capacity(n);
        for _ in 0..n {
            let component = self.str()?;
            let node = self.str()?;
            let dir: Direction = self.named("direction")?;
            let positive = self.take(1)?[0] != 0;
            out.push(Dof {
                component,
                node,
                dir,
                positive,
            });
        }
        Ok(out)
    }
    fn set(&mut self) -> Result<FrfSet> {
        const MAGIC: &[u8] = b"mortise-set 1\n";
        if self.take(MAGIC.len())? != MAGIC {
            return Err(self.bad("not a set's canonical bytes (no 'mortise-set 1')"));
        }
        let name = self.str()?;
        let n = self.count(8)?;
        let freqs = (0..n).map(|_| self.f64()).collect::<Result<Vec<f64>>>()?;
        let outputs = self.dofs()?;
        let inputs = self.dofs()?;
        let out_qty: Quantity = self.named("quantity")?;
        let in_qty: Quantity = self.named("quantity")?;
        let at = self.at;
        let signal = match self.str()?.as_str() {
            "" => None,
            s => Some(
                serde_json::from_value::<SignalKind>(Value::String(s.to_string())).map_err(
                    |_| {
                        Error::parse(format!(
                            "{}: '{}' is not a signal kind",
                            self.what,
                            quote(s)
                        ))
                        .at_byte(at)
                    },
                )?,
            ),
        };
        let n = self.count(16)?;
        let mut data = Vec::with_capacity(n);
        for _ in 0..n {
            let re = self.f64()?;
            let im = self.f64()?;
            data.push(Complex64::new(re, im));
        }
        let n = self.count(1)?;
        let present = self.take(n)?.iter().map(|&b| b != 0).collect();
        let coherence = match self.take(1)?[0] {
            0 => None,
            _ => {
                let n = self.count(8)?;
                Some((0..n).map(|_| self.f64()).collect::<Result<Vec<f64>>>()?)
            }
        };
        let n = self.count(32)?;
        let mut provenance = Vec::with_capacity(n);
        for _ in 0..n {
            provenance.push(Provenance {
                file: self.str()?,
                sha256: self.str()?,
                format: self.str()?,
                options: self.str()?,
            });
        }
        let n = self.count(8)?;
        let warnings = (0..n)
            .map(|_| self.str())
            .collect::<Result<Vec<String>>>()?;
        Ok(FrfSet {
            name,
            freqs,
            outputs,
            inputs,
            out_qty,
            in_qty,
            data,
            present,
            coherence,
            provenance,
            warnings,
            signal,
        })
    }
}

/// The SHA-256 of a set's canonical bytes, lower-case hex.
pub fn set_sha256(s: &FrfSet) -> String {
    crate::io::sha256_hex(&set_canonical_bytes(s))
}

/// The canonical bytes of a result's uncertainty (module docs), bound to
/// the set's SHA-256.
pub fn uncertainty_canonical_bytes(set_sha256: &str, u: &BundleUncertainty) -> Vec<u8> {
    let mut out = b"mortise-uncertainty 1\n".to_vec();
    put_str(&mut out, set_sha256);
    put_str(&mut out, &u.method);
    put_u64(&mut out, u.std.len());
    for &x in &u.std {
        put_f64(&mut out, x);
    }
    put_u64(&mut out, u.flags.len());
    out.extend_from_slice(&u.flags);
    out
}

/// SHA-256 (hex) of [`uncertainty_canonical_bytes`].
pub fn uncertainty_sha256(set_sha256: &str, u: &BundleUncertainty) -> String {
    crate::io::sha256_hex(&uncertainty_canonical_bytes(set_sha256, u))
}

/// True for 64 hexadecimal digits (either case).
pub fn is_sha256_hex(s: &str) -> bool {
    s.len() == 64 && s.bytes().all(|b| b.is_ascii_hexdigit())
}

/// Where the value of `content_sha256` sits in a bundle's bytes: the last
/// member of the top-level object, `"content_sha256": "<64 characters>"`,
/// followed only by `}` and white space. `None` when the bytes do not end so.
fn content_value_range(bytes: &[u8]) -> Option<std::ops::Range<usize>> {
    let ws = |b: u8| matches!(b, b' ' | b'\n' | b'\r' | b'\t');
    let mut end = bytes.len();
    while end > 0 && ws(bytes[end - 1]) {
        end -= 1;
    }
    if end == 0 || bytes[end - 1] != b'}' {
        return None;
    }
    end -= 1;
    while end > 0 && ws(bytes[end - 1]) {
        end -= 1;
    }
    if end < 66 || bytes[end - 1] != b'"' || bytes[end - 66] != b'"' {
        return None;
    }
    let value = end - 65..end - 1;
    let mut k = end - 66;
    while k > 0 && ws(bytes[k - 1]) {
        k -= 1;
    }
    if k == 0 || bytes[k - 1] != b':' {
        return None;
    }
    k -= 1;
    while k > 0 && ws(bytes[k - 1]) {
        k -= 1;
    }
    let key = format!("\"{CONTENT_FIELD}\"");
    (k >= key.len() && &bytes[k - key.len()..k] == key.as_bytes()).then_some(value)
}

/// The SHA-256 of a bundle's content as the module docs define it (its
/// bytes with the `content_sha256` value replaced by zeros); `None` when the
/// bytes do not end with that field.
pub fn content_sha256(bytes: &[u8]) -> Option<String> {
    let r = content_value_range(bytes)?;
    let mut zeroed = bytes.to_vec();
    zeroed[r].fill(b'0');
    Some(crate::io::sha256_hex(&zeroed))
}

// ------------------------------------------------------------------- writing

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

#[derive(serde::Serialize)]
struct WireSet<'a> {
    sha256: String,
    name: &'a str,
    freqs: Vec<Num>,
    outputs: &'a [Dof],
    inputs: &'a [Dof],
    out_qty: Quantity,
    in_qty: Quantity,
    /// [re, im] per value, frequency-major.
    data: Vec<[Num; 2]>,
    present: &'a [bool],
    #[serde(skip_serializing_if = "Option::is_none")]
    coherence: Option<Vec<Num>>,
    provenance: &'a [Provenance],
    warnings: &'a [String],
    #[serde(skip_serializing_if = "Option::is_none")]
    signal: Option<SignalKind>,
}

impl<'a> From<&'a FrfSet> for WireSet<'a> {
    fn from(s: &'a FrfSet) -> WireSet<'a> {
        WireSet {
            sha256: set_sha256(s),
            name: &s.name,
            freqs: s.freqs.iter().map(|&f| Num(f)).collect(),
            outputs: &s.outputs,
            inputs: &s.inputs,
            out_qty: s.out_qty,
            in_qty: s.in_qty,
            data: s.data.iter().map(|c| [Num(c.re), Num(c.im)]).collect(),
            present: &s.present,
            coherence: s
                .coherence
                .as_ref()
                .map(|c| c.iter().map(|&x| Num(x)).collect()),
            provenance: &s.provenance,
            warnings: &s.warnings,
            signal: s.signal,
        }
    }
}

#[derive(serde::Serialize)]
struct WireUncertainty<'a> {
    sha256: String,
    method: &'a str,
    std: Vec<Num>,
    flags: &'a [u8],
}

#[derive(serde::Serialize)]
struct WireResult<'a> {
    #[serde(flatten)]
    set: WireSet<'a>,
    #[serde(skip_serializing_if = "Option::is_none")]
    uncertainty: Option<WireUncertainty<'a>>,
}

#[derive(serde::Serialize)]
struct WireInput<'a> {
    name: &'a str,
    sha256: &'a str,
    format: &'a str,
    options: &'a Value,
    #[serde(skip_serializing_if = "Option::is_none")]
    sets: Option<Vec<WireSet<'a>>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    data: Option<&'a str>,
}

#[derive(serde::Serialize)]
struct WireBundle<'a> {
    format: &'a str,
    version: u32,
    mortise_version: &'a str,
    created: &'a str,
    recipe: &'a Option<Value>,
    inputs: Vec<WireInput<'a>>,
    results: Vec<WireResult<'a>>,
    report: &'a Option<Value>,
    /// Last, so that it is found without ambiguity.
    content_sha256: &'a str,
}

/// Serialise a bundle in the current version, with the SHA-256 of every
/// stored set and of the whole content (f64 written shortest-round-trip, so
/// reading back is bit-exact). The inputs' `sha256` are written as given.
pub fn write(bundle: &Bundle) -> Result<Vec<u8>> {
    let zeros = "0".repeat(64);
    let wire = WireBundle {
        format: BUNDLE_FORMAT,
        version: BUNDLE_VERSION,
        mortise_version: &bundle.mortise_version,
        created: &bundle.created,
        recipe: &bundle.recipe,
        inputs: bundle
            .inputs
            .iter()
            .map(|i| WireInput {
                name: &i.name,
                sha256: &i.sha256,
                format: &i.format,
                options: &i.options,
                sets: i
                    .sets
                    .as_ref()
                    .map(|v| v.iter().map(WireSet::from).collect()),
                data: i.data.as_deref(),
            })
            .collect(),
        results: bundle
            .results
            .iter()
            .enumerate()
            .map(|(k, r)| {
                let set = WireSet::from(r);
                let uncertainty = bundle
                    .uncertainties
                    .get(k)
                    .and_then(Option::as_ref)
                    .map(|u| WireUncertainty {
                        sha256: uncertainty_sha256(&set.sha256, u),
                        method: &u.method,
                        std: u.std.iter().map(|&x| Num(x)).collect(),
                        flags: &u.flags,
                    });
                WireResult { set, uncertainty }
            })
            .collect(),
        report: &bundle.report,
        content_sha256: &zeros,
    };
    let mut out = serde_json::to_vec_pretty(&wire)
        .map_err(|e| Error::internal(format!("cannot serialise the bundle: {e}")))?;
    out.push(b'\n');
    let range = content_value_range(&out)
        .ok_or_else(|| Error::internal("the bundle's content SHA-256 field is not last"))?;
    let sha = crate::io::sha256_hex(&out);
    out[range].copy_from_slice(sha.as_bytes());
    Ok(out)
}

// ------------------------------------------------------------------- reading

/// Words for a JSON value a field did not expect (text quoted through
/// [`quote`]).
fn found(v: &Value) -> String {
    match v {
        Value::Null => "null".into(),
        Value::Bool(b) => b.to_string(),
        Value::Number(n) => format!("the number {}", quote(&n.to_string())),
        Value::String(s) => format!("the text '{}'", quote(s)),
        Value::Array(a) => format!("a list of {} item(s)", a.len()),
        Value::Object(_) => "an object".into(),
    }
}

/// An error placed in a bundle's entry: the entry leads the field
/// ("result 2 ('casing'): sha256"), so the CLI and the page's error box both
/// show it where they show a field.
fn in_entry(mut e: Error, entry: &str) -> Error {
    if !entry.is_empty() {
        e.field = Some(match e.field.take() {
            Some(f) => format!("{entry}: {f}"),
            None => entry.to_string(),
        });
    }
    e
}

/// Where an entry sits, for errors: the file and the entry ("result 2 ('casing')").
struct At<'a> {
    file: &'a str,
    entry: String,
}

impl At<'_> {
    fn err(&self, field: impl Into<String>, message: impl Into<String>) -> Error {
        in_entry(
            Error::parse(message).field(field).in_file(self.file),
            &self.entry,
        )
    }

    fn object<'v>(&self, v: &'v Value, what: &str) -> Result<&'v Map<String, Value>> {
        v.as_object()
            .ok_or_else(|| self.err(what, format!("found {}; expected an object", found(v))))
    }

    /// Refuse keys a bundle of this version does not have.
    /// `inner`: where the object sits inside the entry ("outputs, DOF 2"), or "".
    fn known(
        &self,
        m: &Map<String, Value>,
        keys: &[&str],
        version: u32,
        inner: &str,
    ) -> Result<()> {
        if let Some(k) = m.keys().find(|k| !keys.contains(&k.as_str())) {
            return Err(self.err(
                if inner.is_empty() {
                    quote(k)
                } else {
                    format!("{inner}.{}", quote(k))
                },
                format!(
                    "unknown field '{}'; a version {version} bundle has here: {}",
                    quote(k),
                    keys.join(", ")
                ),
            ));
        }
        Ok(())
    }

    fn text(&self, m: &Map<String, Value>, key: &str) -> Result<Option<String>> {
        match m.get(key) {
            None => Ok(None),
            Some(Value::String(s)) => Ok(Some(s.clone())),
            Some(v) => Err(self.err(key, format!("found {}; expected text", found(v)))),
        }
    }

    fn required_text(&self, m: &Map<String, Value>, key: &str) -> Result<String> {
        self.text(m, key)?
            .ok_or_else(|| self.err(key, "missing; expected text"))
    }

    fn list<'v>(&self, m: &'v Map<String, Value>, key: &str) -> Result<Option<&'v Vec<Value>>> {
        match m.get(key) {
            None | Some(Value::Null) => Ok(None),
            Some(Value::Array(a)) => Ok(Some(a)),
            Some(v) => Err(self.err(key, format!("found {}; expected a list", found(v)))),
        }
    }

    fn required_list<'v>(&self, m: &'v Map<String, Value>, key: &str) -> Result<&'v Vec<Value>> {
        self.list(m, key)?
            .ok_or_else(|| self.err(key, "missing; expected a list"))
    }

    /// A recorded SHA-256: 64 hex digits, returned in lower case.
    fn sha256(&self, m: &Map<String, Value>, key: &str) -> Result<String> {
        let s = self.required_text(m, key)?;
        if !is_sha256_hex(&s) {
            return Err(self.err(
                key,
                format!(
                    "'{}' is not a SHA-256 (64 hexadecimal digits); the bundle is damaged or was altered",
                    quote(&s)
                ),
            ));
        }
        Ok(s.to_ascii_lowercase())
    }

    /// A number as sets store it: a JSON number, null (NaN), "inf" or "-inf".
    fn num(&self, field: impl Fn() -> String, v: &Value) -> Result<f64> {
        match v {
            Value::Number(n) => n.as_f64().ok_or_else(|| {
                self.err(
                    field(),
                    format!("{} is not a number mortise can hold", found(v)),
                )
            }),
            Value::Null => Ok(f64::NAN),
            Value::String(s) if s == "inf" => Ok(f64::INFINITY),
            Value::String(s) if s == "-inf" => Ok(f64::NEG_INFINITY),
            Value::String(s) if s == "nan" || s == "NaN" => Ok(f64::NAN),
            _ => Err(self.err(
                field(),
                format!(
                    "found {}; expected a number, null (NaN), \"inf\" or \"-inf\"",
                    found(v)
                ),
            )),
        }
    }

    fn nums(&self, key: &str, list: &[Value]) -> Result<Vec<f64>> {
        list.iter()
            .enumerate()
            .map(|(n, v)| self.num(|| format!("{key}, value {}", n + 1), v))
            .collect()
    }

    /// An enum value by the name the JSON writes (`"velocity"`, `"RX"`).
    fn named<T: serde::Serialize + Copy>(
        &self,
        field: &str,
        v: &Value,
        all: &[T],
        what: &str,
    ) -> Result<T> {
        let names: Vec<String> = all.iter().map(wire_name).collect();
        if let Value::String(s) = v {
            if let Some(k) = names.iter().position(|n| n == s) {
                return Ok(all[k]);
            }
        }
        Err(self.err(
            field,
            format!("found {}; expected {what}: {}", found(v), names.join(", ")),
        ))
    }

    fn dof(&self, field: &str, v: &Value, version: u32) -> Result<Dof> {
        let m = self.object(v, field)?;
        let at = |k: &str| format!("{field}.{k}");
        self.known(m, &["component", "node", "dir", "positive"], version, field)?;
        let text = |k: &str| -> Result<String> {
            match m.get(k) {
                Some(Value::String(s)) => Ok(s.clone()),
                Some(v) => Err(self.err(at(k), format!("found {}; expected text", found(v)))),
                None => Err(self.err(at(k), "missing; expected text")),
            }
        };
        const DIRS: [Direction; 7] = [
            Direction::X,
            Direction::Y,
            Direction::Z,
            Direction::RX,
            Direction::RY,
            Direction::RZ,
            Direction::Scalar,
        ];
        let dir = match m.get("dir") {
            Some(d) => self.named(&at("dir"), d, &DIRS, "a direction")?,
            None => return Err(self.err(at("dir"), "missing; expected a direction")),
        };
        let positive = match m.get("positive") {
            Some(Value::Bool(b)) => *b,
            Some(v) => {
                return Err(self.err(
                    at("positive"),
                    format!("found {}; expected true or false", found(v)),
                ))
            }
            None => return Err(self.err(at("positive"), "missing; expected true or false")),
        };
        Ok(Dof {
            component: text("component")?,
            node: text("node")?,
            dir,
            positive,
        })
    }

    /// A result's uncertainty (version 4) for `set`, whose recorded SHA-256
    /// is `set_sha`: every value checked, then its own SHA-256.
    fn uncertainty(
        &self,
        v: &Value,
        set: &FrfSet,
        set_sha: &str,
        version: u32,
    ) -> Result<BundleUncertainty> {
        let m = self.object(v, "uncertainty")?;
        self.known(
            m,
            &["sha256", "method", "std", "flags"],
            version,
            "uncertainty",
        )?;
        let recorded = self
            .sha256(m, "sha256")
            .map_err(|e| e.field("uncertainty, sha256"))?;
        let method = self
            .required_text(m, "method")
            .map_err(|e| e.field("uncertainty, method"))?;
        let std = self.nums("uncertainty, std", self.required_list(m, "std")?)?;
        let n = set.data.len();
        if std.len() != n {
            return Err(self.err(
                "uncertainty, std",
                format!("{} values; the set holds {n}", std.len()),
            ));
        }
        if let Some(x) = std
            .iter()
            .find(|x| !(x.is_nan() || (x.is_finite() && **x >= 0.0)))
        {
            return Err(self.err(
                "uncertainty, std",
                format!("found {x}; expected a standard uncertainty ≥ 0 (or null: none)"),
            ));
        }
        let all = crate::uncertainty::reliability::ALL_REASONS;
        let flags = self
            .required_list(m, "flags")?
            .iter()
            .enumerate()
            .map(|(i, v)| match v.as_u64() {
                Some(f) if f <= u64::from(all) && f as u8 & !all == 0 => Ok(f as u8),
                _ => Err(self.err(
                    format!("uncertainty, flags, value {}", i + 1),
                    format!(
                        "found {}; expected 0 (reliable) or reason bits within {all}",
                        found(v)
                    ),
                )),
            })
            .collect::<Result<Vec<u8>>>()?;
        if flags.len() != n {
            return Err(self.err(
                "uncertainty, flags",
                format!("{} values; the set holds {n}", flags.len()),
            ));
        }
        let u = BundleUncertainty { method, std, flags };
        let computed = uncertainty_sha256(set_sha, &u);
        if computed != recorded {
            return Err(self.err(
                "uncertainty, sha256",
                format!(
                    "the uncertainty of '{}' does not match its recorded SHA-256: recorded {recorded}, computed {computed}; it was altered after the bundle was made",
                    quote(&set.name)
                ),
            ));
        }
        Ok(u)
    }

    /// One stored set, with the SHA-256 it records (version 3).
    fn set(&self, m: &Map<String, Value>, version: u32) -> Result<(FrfSet, Option<String>)> {
        let mut keys = vec![
            "name",
            "freqs",
            "outputs",
            "inputs",
            "out_qty",
            "in_qty",
            "data",
            "present",
            "coherence",
            "provenance",
            "warnings",
            "signal",
        ];
        if version >= 3 {
            keys.push("sha256");
        }
        if version >= 4 && self.entry.starts_with("result ") {
            keys.push("uncertainty");
        }
        self.known(m, &keys, version, "")?;
        let sha = if version >= 3 {
            Some(self.sha256(m, "sha256")?)
        } else {
            None
        };
        let name = self.required_text(m, "name")?;
        let freqs = self.nums("freqs", self.required_list(m, "freqs")?)?;
        let dofs = |key: &str| -> Result<Vec<Dof>> {
            self.required_list(m, key)?
                .iter()
                .enumerate()
                .map(|(n, v)| self.dof(&format!("{key}, DOF {}", n + 1), v, version))
                .collect()
        };
        let (outputs, inputs) = (dofs("outputs")?, dofs("inputs")?);
        let qty = |key: &str| -> Result<Quantity> {
            let v = m
                .get(key)
                .ok_or_else(|| self.err(key, "missing; expected a quantity"))?;
            self.named(key, v, &Quantity::ALL, "a quantity")
        };
        let (out_qty, in_qty) = (qty("out_qty")?, qty("in_qty")?);
        let data = self
            .required_list(m, "data")?
            .iter()
            .enumerate()
            .map(|(n, v)| {
                let part = |p: &'static str| move || format!("data, value {}, {p}", n + 1);
                match v.as_array().map(Vec::as_slice) {
                    Some([re, im]) => Ok(Complex64::new(
                        self.num(part("real part"), re)?,
                        self.num(part("imaginary part"), im)?,
                    )),
                    _ => Err(self.err(
                        format!("data, value {}", n + 1),
                        format!("found {}; expected [real, imaginary]", found(v)),
                    )),
                }
            })
            .collect::<Result<Vec<_>>>()?;
        let present = self
            .required_list(m, "present")?
            .iter()
            .enumerate()
            .map(|(n, v)| {
                v.as_bool().ok_or_else(|| {
                    self.err(
                        format!("present, entry {}", n + 1),
                        format!("found {}; expected true or false", found(v)),
                    )
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let coherence = match self.list(m, "coherence")? {
            None => None,
            Some(c) => Some(self.nums("coherence", c)?),
        };
        let provenance = match self.list(m, "provenance")? {
            None => Vec::new(),
            Some(list) => list
                .iter()
                .enumerate()
                .map(|(n, v)| {
                    let field = format!("provenance, entry {}", n + 1);
                    let p = self.object(v, &field)?;
                    self.known(p, &["file", "sha256", "format", "options"], version, &field)?;
                    let t = |k: &str, required: bool| -> Result<String> {
                        match p.get(k) {
                            Some(Value::String(s)) => Ok(s.clone()),
                            None if !required => Ok(String::new()),
                            Some(v) => Err(self.err(
                                format!("{field}, {k}"),
                                format!("found {}; expected text", found(v)),
                            )),
                            None => {
                                Err(self.err(format!("{field}, {k}"), "missing; expected text"))
                            }
                        }
                    };
                    Ok(Provenance {
                        file: t("file", true)?,
                        sha256: t("sha256", true)?,
                        format: t("format", true)?,
                        options: t("options", false)?,
                    })
                })
                .collect::<Result<Vec<_>>>()?,
        };
        let warnings = match self.list(m, "warnings")? {
            None => Vec::new(),
            Some(list) => list
                .iter()
                .enumerate()
                .map(|(n, v)| match v {
                    Value::String(s) => Ok(s.clone()),
                    _ => Err(self.err(
                        format!("warnings, entry {}", n + 1),
                        format!("found {}; expected text", found(v)),
                    )),
                })
                .collect::<Result<Vec<_>>>()?,
        };
        let signal = match m.get("signal") {
            None | Some(Value::Null) => None,
            Some(v) => Some(self.named("signal", v, &SignalKind::ALL, "a spectrum kind")?),
        };
        let set = FrfSet {
            name,
            freqs,
            outputs,
            inputs,
            out_qty,
            in_qty,
            data,
            present,
            coherence,
            provenance,
            warnings,
            signal,
        };
        Ok((set, sha))
    }
}

/// The label of a stored set in errors: `result 2 ('casing')`.
fn set_label(kind: &str, n: usize, m: &Map<String, Value>) -> String {
    match m.get("name").and_then(Value::as_str) {
        Some(name) => format!("{kind} {n} ('{}')", quote(name)),
        None => format!("{kind} {n}"),
    }
}

/// A name an input may have: a plain file name (it is looked up beside a
/// bundle when withheld, so never a path).
fn plain_file_name(name: &str) -> bool {
    !name.is_empty()
        && name != "."
        && name != ".."
        && !name.contains(['/', '\\'])
        && !name.chars().any(char::is_control)
}

/// Parse a bundle, checking its format, version and every recorded hash
/// (see the module docs); a bundle that fails a check is refused.
pub fn read(bytes: &[u8], file: &str) -> Result<Bundle> {
    read_checked(bytes, file).map(|r| r.bundle)
}

/// [`read`], also returning the checked content SHA-256 and the notes on
/// what an earlier version's bundle cannot have checked.
pub fn read_checked(bytes: &[u8], file: &str) -> Result<ReadBundle> {
    let v: Value = serde_json::from_slice(bytes).map_err(|e| {
        let what = match e.classify() {
            serde_json::error::Category::Eof => {
                "the JSON ends early (a truncated or partly copied bundle?)".to_string()
            }
            _ => format!(
                "not valid JSON at column {} (a damaged or hand-edited bundle?)",
                e.column()
            ),
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
            return Err(Error::unsupported(format!(
                "format '{}'; expected '{BUNDLE_FORMAT}'",
                quote(other)
            ))
            .field("format")
            .in_file(file))
        }
        None => {
            return Err(Error::parse(format!(
                "no \"format\" field; expected \"format\": \"{BUNDLE_FORMAT}\""
            ))
            .field("format")
            .in_file(file))
        }
    }
    let version = match obj.get("version").and_then(|f| f.as_u64()) {
        Some(n) if (1..=u64::from(BUNDLE_VERSION)).contains(&n) => n as u32,
        Some(n) if n > u64::from(BUNDLE_VERSION) => {
            return Err(Error::unsupported(format!(
            "version {n} was written by a newer mortise; this one reads versions 1 to {BUNDLE_VERSION}"
        ))
            .field("version")
            .in_file(file))
        }
        Some(n) => {
            return Err(Error::unsupported(format!(
                "version {n}; this mortise reads versions 1 to {BUNDLE_VERSION}"
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
    };
    let top = At {
        file,
        entry: String::new(),
    };
    let mut keys = vec![
        "format",
        "version",
        "mortise_version",
        "created",
        "recipe",
        "inputs",
        "results",
        "report",
    ];
    if version >= 3 {
        keys.push(CONTENT_FIELD);
    }
    top.known(obj, &keys, version, "")?;
    let optional_value = |k: &str| match obj.get(k) {
        None | Some(Value::Null) => None,
        Some(v) => Some(v.clone()),
    };
    let mut bundle = Bundle {
        format: BUNDLE_FORMAT.to_string(),
        version,
        mortise_version: top.required_text(obj, "mortise_version")?,
        created: top.text(obj, "created")?.unwrap_or_default(),
        recipe: optional_value("recipe"),
        inputs: Vec::new(),
        results: Vec::new(),
        uncertainties: Vec::new(),
        report: optional_value("report"),
    };
    if let Some(r) = &bundle.recipe {
        top.object(r, "recipe")?;
    }
    if let Some(r) = &bundle.report {
        top.object(r, "report")?;
    }
    // every stored set with its entry and recorded SHA-256, checked below
    let mut stored: Vec<(String, Option<String>)> = Vec::new();
    for (n, v) in top.list(obj, "inputs")?.into_iter().flatten().enumerate() {
        let entry = |name: Option<&str>| match name {
            Some(name) => format!("input {} ('{}')", n + 1, quote(name)),
            None => format!("input {}", n + 1),
        };
        let m = top.object(v, &format!("inputs, entry {}", n + 1))?;
        let at = At {
            file,
            entry: entry(m.get("name").and_then(Value::as_str)),
        };
        at.known(
            m,
            &["name", "sha256", "format", "options", "sets", "data"],
            version,
            "",
        )?;
        let name = at.required_text(m, "name")?;
        if !plain_file_name(&name) {
            return Err(at.err(
                "name",
                "not a plain file name (no folders, no control characters): a bundle names its inputs by file name only",
            ));
        }
        if bundle.inputs.iter().any(|i: &BundleInput| i.name == name) {
            return Err(at.err(
                "name",
                "a second input of the same name; each input appears once",
            ));
        }
        let sha256 = at.sha256(m, "sha256")?;
        let format = at.required_text(m, "format")?;
        let options = m.get("options").cloned().unwrap_or(Value::Null);
        let data = match m.get("data") {
            None | Some(Value::Null) => None,
            Some(Value::String(s)) => Some(s.clone()),
            Some(v) => {
                return Err(at.err(
                    "data",
                    format!(
                        "found {}; expected the file's bytes as base64 text",
                        found(v)
                    ),
                ))
            }
        };
        let mut sets = None;
        if let Some(list) = at.list(m, "sets")? {
            if data.is_some() {
                return Err(at.err(
                    "sets",
                    "the input carries both the file's bytes ('data') and sets; a bundle carries one of them",
                ));
            }
            let mut v = Vec::new();
            for (j, s) in list.iter().enumerate() {
                let sm = at.object(s, &format!("sets, entry {}", j + 1))?;
                let label = format!("{}: {}", at.entry, set_label("set", j + 1, sm));
                let (set, sha) = At {
                    file,
                    entry: label.clone(),
                }
                .set(sm, version)?;
                stored.push((label, sha));
                v.push(set);
            }
            sets = Some(v);
        }
        let input = BundleInput {
            name,
            sha256,
            format,
            options,
            sets,
            data,
        };
        if let Some(raw) = input
            .bytes()
            .map_err(|e| in_entry(e.in_file(file), &at.entry))?
        {
            let sha = crate::io::sha256_hex(&raw);
            if sha != input.sha256 {
                return Err(at.err(
                    "data",
                    format!(
                        "the file's bytes in the bundle do not match its recorded SHA-256: recorded {}, computed {sha}; the bundle is damaged or was altered",
                        input.sha256
                    ),
                ));
            }
        }
        bundle.inputs.push(input);
    }
    for (n, v) in top.list(obj, "results")?.into_iter().flatten().enumerate() {
        let m = top.object(v, &format!("results, entry {}", n + 1))?;
        let label = set_label("result", n + 1, m);
        let (set, sha) = At {
            file,
            entry: label.clone(),
        }
        .set(m, version)?;
        if let Some(u) = m.get("uncertainty") {
            let at = At {
                file,
                entry: label.clone(),
            };
            // read only when the set's own hash is recorded (version 4), so
            // both are checked below: the set's first
            let rec = sha.clone().unwrap_or_default();
            let uv = at.uncertainty(u, &set, &rec, version)?;
            bundle.uncertainties.resize(n, None);
            bundle.uncertainties.push(Some(uv));
        }
        stored.push((label, sha));
        bundle.results.push(set);
    }
    // each set well formed, then its hash, then the whole content
    for (set, (label, recorded)) in bundle.all_sets().iter().zip(&stored) {
        set.validate()
            .map_err(|e| in_entry(e.in_file(file), label))?;
        if let Some(recorded) = recorded {
            let computed = set_sha256(set);
            if &computed != recorded {
                return Err(At {
                    file,
                    entry: label.clone(),
                }
                .err(
                    "sha256",
                    format!(
                        "set '{}' in the bundle does not match its recorded SHA-256: recorded {recorded}, computed {computed}; its data were altered after the bundle was made",
                        quote(&set.name)
                    ),
                ));
            }
        }
    }
    if version < 3 {
        return Ok(ReadBundle {
            bundle,
            content_sha256: None,
            notes: vec![format!(
                "a version {version} bundle records only its input files' SHA-256 (checked); its {}recipe, results and report carry none, so whether they were altered cannot be checked",
                if version == 1 { "input sets, " } else { "" }
            )],
        });
    }
    let recorded = top.sha256(obj, CONTENT_FIELD)?;
    let computed = content_sha256(bytes).ok_or_else(|| {
        top.err(
            CONTENT_FIELD,
            "is not the bundle's last field, where mortise writes it: the file was re-written after it was made, so its content cannot be checked",
        )
    })?;
    if computed != recorded {
        return Err(top.err(
            CONTENT_FIELD,
            format!(
                "the bundle's content does not match its recorded SHA-256: recorded {recorded}, computed {computed}; it was altered after it was made (re-indenting it or changing its line endings counts too); ask the sender for a new copy"
            ),
        ));
    }
    Ok(ReadBundle {
        bundle,
        content_sha256: Some(recorded),
        notes: Vec::new(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn one_set() -> FrfSet {
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
        s
    }

    #[test]
    fn nan_and_infinity_survive() {
        let mut b = Bundle::new("2026-12-01T00:00:00Z");
        b.results.push(one_set());
        let text = write(&b).unwrap();
        let back = read(&text, "b.json").unwrap();
        let c = back.results[0].coherence.as_ref().unwrap();
        assert!(c[0].is_nan());
        assert_eq!(c[1], f64::INFINITY);
    }

    #[test]
    fn the_content_hash_is_the_last_field_and_checks() {
        let mut b = Bundle::new("2026-12-01T00:00:00Z");
        b.results.push(one_set());
        let bytes = write(&b).unwrap();
        let r = read_checked(&bytes, "b.json").unwrap();
        let sha = r.content_sha256.unwrap();
        assert_eq!(content_sha256(&bytes).as_deref(), Some(sha.as_str()));
        let text = String::from_utf8(bytes).unwrap();
        assert!(text
            .trim_end()
            .ends_with(&format!("\"content_sha256\": \"{sha}\"\n}}")));
        // any byte changed outside the sets: the whole-content check
        let e = read(
            text.replace("2026-12-01", "2026-12-02").as_bytes(),
            "b.json",
        )
        .unwrap_err();
        assert_eq!(e.field.as_deref(), Some(CONTENT_FIELD), "{e}");
        // the field moved away from the end: refused, not skipped
        let moved = text.replacen(
            "\"format\": \"mortise-bundle\",",
            &format!("\"format\": \"mortise-bundle\", \"content_sha256\": \"{sha}\","),
            1,
        );
        assert!(read(moved.as_bytes(), "b.json").is_err());
    }

    #[test]
    fn a_set_hash_covers_every_field() {
        let s = one_set();
        let base = set_sha256(&s);
        let mut t = s.clone();
        t.provenance.push(Provenance::default());
        assert_ne!(set_sha256(&t), base);
        let mut t = s.clone();
        t.present[0] = false;
        assert_ne!(set_sha256(&t), base);
        let mut t = s.clone();
        t.outputs[0].positive = false;
        assert_ne!(set_sha256(&t), base);
        let mut t = s.clone();
        t.coherence = None;
        assert_ne!(set_sha256(&t), base);
        // every NaN is one NaN: a set read back hashes the same
        let mut t = s.clone();
        t.data[0].re = f64::from_bits(0x7FF0_0000_0000_0001);
        let mut u = s;
        u.data[0].re = f64::NAN;
        assert_eq!(set_sha256(&t), set_sha256(&u));
    }
}
