//! File exchange: format detection by content, loading into [`FrfSet`]s with
//! provenance ([`load`] with [`ImportOptions`]), and saving ([`save`], and
//! [`export`], which also numbers text node labels for UFF and returns the
//! table: the one export of `mortise run` and the page).
//!
//! Formats: UFF dataset 58 ASCII and 58b binary ([`uff58`]), our own
//! self-describing CSV and supplier CSVs through a column map ([`csv`]), and
//! the bundle ([`bundle`]).

pub mod bundle;
pub mod csv;
pub mod disk;
pub mod mat;
pub mod merge;
pub mod nodes;
pub mod time_csv;
pub mod uff58;
pub mod wav;

use crate::error::{Error, Result};
use crate::frf::{FrfSet, Provenance, SignalKind};

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
    /// A level-5 MAT-file, read through a [`mat::MatMap`].
    Mat,
}

impl Format {
    pub fn name(self) -> &'static str {
        match self {
            Format::Uff58Ascii => "uff58-ascii",
            Format::Uff58Binary => "uff58-binary",
            Format::CsvNative => "csv-mortise",
            Format::CsvMapped => "csv-mapped",
            Format::Bundle => "bundle",
            Format::Mat => "mat",
        }
    }
}

/// Options for [`load`]: the `"import"` object of a recipe, the page's
/// import options and the CLI's import flags.
///
/// Unknown keys are refused, here and in the column map. `signal` is the one
/// place where a file's spectra are declared peak, RMS, autopower or PSD: for
/// UFF it says what function type 12 spectra are (the layout does not say;
/// undeclared they are read as peak, with a warning) and must agree with
/// function types 2 (autopower) and 9 (PSD); for a supplier CSV it says the
/// columns hold spectra. A file that holds no spectra refuses it. For JSON
/// written before the declaration moved here, `"signal"` inside
/// `"column_map"` is read as this field (giving both, different, is refused).
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(try_from = "ImportOptionsJson")]
pub struct ImportOptions {
    /// Component namespace given to every DOF read (default: the file stem).
    #[serde(default)]
    pub component: Option<String>,
    /// What the file's spectra are (see above); `None`: as the file says.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub signal: Option<SignalKind>,
    /// Column map for supplier CSVs; required when the CSV is not our own layout.
    #[serde(default)]
    pub column_map: Option<csv::ColumnMap>,
    /// MAT-file mapping; required for MAT-files, refused for other files.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mat: Option<mat::MatMap>,
    /// Read a supplier CSV through the map [`csv::detect_map`] proposes
    /// from its column names and units (JSON `"column_map": "auto"`, CLI
    /// `--map auto`); refused with a column map and for other formats.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub auto_map: bool,
    /// UFF only: the response quantity of datasets that do not tell it
    /// (function type 0, or blank codes and labels); refused when no dataset
    /// needs it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub out_qty: Option<crate::units::Quantity>,
    /// UFF only: the reference quantity, as `out_qty`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub in_qty: Option<crate::units::Quantity>,
    /// UFF only: DOFs for datasets written without DOF numbers (node 0,
    /// direction 0); each must be used.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub dofs: Vec<UffDofs>,
}

/// DOFs for one UFF dataset written without DOF numbers: `dataset` is the
/// 1-based number of the dataset 58 in the file (left out: the file's only
/// dataset without DOF numbers); `out` and `in` are DOF labels
/// (`component:node+X`).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UffDofs {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dataset: Option<usize>,
    pub out: String,
    #[serde(rename = "in")]
    pub inp: String,
}

impl UffDofs {
    /// Parse `DATASET:OUT,IN` or `OUT,IN` (the CLI's `--uff-dofs`).
    pub fn parse(text: &str) -> Result<UffDofs> {
        let bad = || {
            Error::usage(format!(
                "'{}': expected OUT,IN or DATASET:OUT,IN (DATASET the 1-based number of the dataset 58 in the file), such as 3:wall:1+Z,wall:2+Z",
                crate::error::quote(text)
            ))
            .field("dofs")
        };
        let (dataset, rest) = match text.split_once(':') {
            Some((n, rest)) if !n.is_empty() && n.bytes().all(|b| b.is_ascii_digit()) => {
                (Some(n.parse::<usize>().map_err(|_| bad())?), rest)
            }
            _ => (None, text),
        };
        let (out, inp) = rest.split_once(',').ok_or_else(bad)?;
        let d = UffDofs {
            dataset,
            out: out.trim().to_string(),
            inp: inp.trim().to_string(),
        };
        d.dofs()?;
        Ok(d)
    }
    /// The DOFs, parsed (errors name the field `dofs`).
    pub fn dofs(&self) -> Result<(crate::frf::Dof, crate::frf::Dof)> {
        let p = |t: &str, side: &str| {
            crate::frf::Dof::parse(t, "")
                .map_err(|e| Error::usage(format!("{side} DOF: {}", e.message)).field("dofs"))
        };
        if self.dataset == Some(0) {
            return Err(Error::usage(
                "dataset 0: datasets are numbered from 1 in the order of the file",
            )
            .field("dofs"));
        }
        Ok((p(&self.out, "out")?, p(&self.inp, "in")?))
    }
}

/// The JSON form of [`ImportOptions`] as read (the column map is taken
/// apart by [`csv::map_from_json`] for its legacy `signal` key).
#[derive(serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct ImportOptionsJson {
    #[serde(default)]
    component: Option<String>,
    #[serde(default, deserialize_with = "signal_from_json")]
    signal: Option<SignalKind>,
    #[serde(default)]
    column_map: Option<serde_json::Value>,
    #[serde(default)]
    mat: Option<serde_json::Value>,
    #[serde(default)]
    auto_map: bool,
    #[serde(default)]
    out_qty: Option<crate::units::Quantity>,
    #[serde(default)]
    in_qty: Option<crate::units::Quantity>,
    #[serde(default)]
    dofs: Vec<UffDofs>,
}

fn signal_from_json<'de, D: serde::Deserializer<'de>>(
    d: D,
) -> std::result::Result<Option<SignalKind>, D::Error> {
    use serde::Deserialize;
    match Option::<String>::deserialize(d)? {
        None => Ok(None),
        Some(t) => parse_signal(&t)
            .map(Some)
            .map_err(|e| serde::de::Error::custom(e.message)),
    }
}

impl TryFrom<ImportOptionsJson> for ImportOptions {
    type Error = String;
    fn try_from(j: ImportOptionsJson) -> std::result::Result<Self, String> {
        let mut auto_map = j.auto_map;
        let (column_map, in_map) = match j.column_map {
            None | Some(serde_json::Value::Null) => (None, None),
            Some(serde_json::Value::String(s)) if s == "auto" => {
                auto_map = true;
                (None, None)
            }
            Some(v) => {
                let (m, s) = csv::map_from_json(v).map_err(|e| match e.field {
                    Some(f) => format!("{f}: {}", e.message),
                    None => e.message,
                })?;
                (Some(m), s)
            }
        };
        Ok(ImportOptions {
            component: j.component,
            signal: declared_signal(j.signal, in_map).map_err(|e| e.message)?,
            column_map,
            mat: match j.mat {
                None | Some(serde_json::Value::Null) => None,
                Some(v) => Some(mat::map_from_json(v).map_err(|e| e.message)?),
            },
            auto_map,
            out_qty: j.out_qty,
            in_qty: j.in_qty,
            dofs: {
                for d in &j.dofs {
                    d.dofs().map_err(|e| format!("dofs: {}", e.message))?;
                }
                j.dofs
            },
        })
    }
}

/// The one parser of spectrum kinds, for every face and file: `peak`,
/// `rms`, `autopower`, `psd`, `cross` or `esd` (any case): every kind a
/// set can hold, so whatever mortise writes reads back.
pub fn parse_signal(text: &str) -> Result<SignalKind> {
    let t = text.trim().to_ascii_lowercase();
    SignalKind::ALL
        .iter()
        .copied()
        .find(|k| k.name() == t)
        .ok_or_else(|| {
            Error::usage(format!(
                "unknown signal kind '{}'; expected peak, rms, autopower, psd, cross or esd",
                crate::error::quote(text)
            ))
            .field("signal")
        })
}

/// One declaration from the import options' `signal` and a column map's
/// legacy `signal`: either, or both when they agree.
pub fn declared_signal(
    given: Option<SignalKind>,
    in_map: Option<SignalKind>,
) -> Result<Option<SignalKind>> {
    match (given, in_map) {
        (Some(a), Some(b)) if a != b => Err(Error::usage(format!(
            "the import options declare the spectra {}, but the column map's \"signal\" says {}; declare it once",
            a.name(),
            b.name()
        ))
        .field("signal")),
        (a, b) => Ok(a.or(b)),
    }
}

/// What one file held.
#[derive(Debug, Clone)]
pub struct Loaded {
    pub format: Format,
    pub sets: Vec<FrfSet>,
    pub warnings: Vec<String>,
    /// A UFF file's datasets besides 58 (header, units, geometry, modal
    /// model), when it holds any.
    pub uff: Option<uff58::UffExtras>,
    /// Time histories (UFF function type 1), apart from the sets: no FRF or
    /// spectrum operation takes them.
    pub time_histories: Vec<uff58::TimeHistory>,
    /// SHA-256 of the file (hex), as the sets' provenance records it.
    pub sha256: String,
}

/// SHA-256 of bytes as lower-case hex.
///
/// Hashed a megabyte per call. The browser runs a WebAssembly function in
/// its quickly compiled baseline code until the function returns, and
/// switches to the optimised code at a later call: one call over a whole
/// file ran in baseline code throughout. On the page, reading the UFF
/// benchmark's 81 MB 58b file took 4.4 s in the worker; with the hash a
/// megabyte per call (nothing else changed), 0.91 s.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    let mut h = Sha256::new();
    for c in bytes.chunks(1 << 20) {
        h.update(c);
    }
    let d = h.finalize();
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

/// What a file that is not one of ours looks like, by its first bytes.
fn looks_like(bytes: &[u8]) -> Option<&'static str> {
    const SIGS: &[(&[u8], &str)] = &[
        (b"\x89PNG", "a PNG image"),
        (b"%PDF", "a PDF document"),
        (
            b"PK\x03\x04",
            "a zip archive (or an office document, which is one)",
        ),
        (b"\x1f\x8b", "a gzip-compressed file"),
        (b"GIF8", "a GIF image"),
        (b"\xff\xd8\xff", "a JPEG image"),
        (b"\xd0\xcf\x11\xe0", "an old-style office document"),
        (b"{\\rtf", "an RTF document"),
    ];
    SIGS.iter()
        .find(|(sig, _)| bytes.starts_with(sig))
        .map(|(_, what)| *what)
}

const ACCEPTED: &str = "accepted: UFF dataset 58 or 58b (first line '-1', then '58' or '58b'), \
mortise's own CSV (first line '# mortise-frf 1'), a mortise bundle (JSON with \"format\": \"mortise-bundle\"), \
delimited text of numbers (CSV/TSV) with a column map, or a level-5 MAT-file with a MAT mapping";

/// A JSON reader's message for an error message: kept whole while short
/// (it names the field and what was expected), cut by
/// [`crate::error::quote`] when it is long, which happens when it echoes a
/// long string from the input.
pub(crate) fn json_message(e: &serde_json::Error) -> String {
    let m = e.to_string();
    if m.chars().count() <= 300 {
        m.chars()
            .map(|c| if c.is_control() { ' ' } else { c })
            .collect()
    } else {
        crate::error::quote(&m)
    }
}

/// The lines of bytes without their endings: LF, CR LF or a lone CR, in any
/// mix (the UFF reader's cursor splits the same way).
fn byte_lines(bytes: &[u8]) -> impl Iterator<Item = &[u8]> {
    let mut rest = Some(bytes);
    std::iter::from_fn(move || {
        let t = rest?;
        match t.iter().position(|&c| c == b'\n' || c == b'\r') {
            Some(p) => {
                let skip = if t[p..].starts_with(b"\r\n") { 2 } else { 1 };
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

/// Dataset numbers of a UFF file, scanning the "-1" delimiter lines.
fn uff_kind(bytes: &[u8]) -> Option<Result<Format>> {
    // first non-blank line must be "-1" (after a byte-order mark, if any)
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    let mut lines = byte_lines(bytes);
    let first = lines.find(|l| !l.iter().all(|b| b.is_ascii_whitespace()))?;
    if first.trim_ascii() != b"-1" {
        return None;
    }
    // some writers start with an empty dataset ("-1" twice)
    let second = lines.find(|l| l.trim_ascii() != b"-1")?;
    let tok = second
        .trim_ascii()
        .split(|b| b.is_ascii_whitespace())
        .next()?;
    let tok = std::str::from_utf8(tok).ok()?;
    let num = tok.trim_end_matches(['b', 'B']);
    if num.is_empty() || !num.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    if tok == "58" {
        return Some(Ok(Format::Uff58Ascii));
    }
    if tok.eq_ignore_ascii_case("58b") {
        return Some(Ok(Format::Uff58Binary));
    }
    // another dataset first: look for a later 58/58b header
    let mut prev_delim = false;
    // geometry (15, 2411, 18, 2420, 82) or modes (55) without a 58: read
    // as a UFF file all the same (`uff58::read_extras`)
    let mut other = false;
    for l in byte_lines(bytes) {
        let t = l.trim_ascii();
        if prev_delim {
            let tok = t.split(|b| b.is_ascii_whitespace()).next().unwrap_or(b"");
            if tok == b"58" {
                return Some(Ok(Format::Uff58Ascii));
            }
            if tok.eq_ignore_ascii_case(b"58b") {
                return Some(Ok(Format::Uff58Binary));
            }
            other |= [&b"15"[..], b"2411", b"18", b"2420", b"82", b"55"].contains(&tok);
        }
        prev_delim = t == b"-1";
    }
    if other {
        return Some(Ok(Format::Uff58Ascii));
    }
    Some(Err(Error::unsupported(format!(
        "a Universal File (first dataset {tok}) without any dataset 58 or 58b; mortise reads FRFs from datasets 58 and 58b only"
    ))))
}

/// Detect the format from the bytes (not the extension).
pub fn detect(bytes: &[u8], file: &str) -> Result<Format> {
    // every refusal names its place: the byte or line that decided it
    let fail = |m: String| Err(Error::unsupported(m).in_file(file));
    let fail_at = |m: String, byte: usize| Err(Error::unsupported(m).at_byte(byte).in_file(file));
    // verdicts on the whole file (empty, another kind of file by its
    // signature) have the file as their place
    if bytes.iter().all(|b| b.is_ascii_whitespace()) {
        return fail(format!(
            "the file is empty{}; {ACCEPTED}",
            if bytes.is_empty() {
                ""
            } else {
                " (only white space)"
            }
        ));
    }
    if let Some(what) = looks_like(bytes) {
        return fail(format!("this looks like {what}, not FRF data; {ACCEPTED}"));
    }
    // time data: read by the time-data commands and steps, never as a set
    const TIME_WAY: &str = "spectra, FRFs and order tracks are made from it by 'mortise spectrum', \
        'mortise estimate' and 'mortise orders' (recipe steps 'spectrum', 'estimate-frf', 'orders')";
    if wav::looks_like_wav(bytes) {
        let what = match wav::WavReader::new(bytes, file) {
            Ok(r) => r.info.describe(),
            Err(e) => format!("its header is not readable: {}", e.message),
        };
        return fail(format!(
            "this is a WAV recording ({what}): time data, not FRFs or spectra; {TIME_WAY}"
        ));
    }
    if time_csv::looks_like_time_csv(bytes) {
        return fail(format!(
            "this is time data (its first column is time): not FRFs or spectra; {TIME_WAY}"
        ));
    }
    if mat::sniff(bytes) {
        return Ok(Format::Mat);
    }
    if let Some(r) = uff_kind(bytes) {
        return r.map_err(|e| e.field("dataset number").in_file(file));
    }
    let head = &bytes[..bytes.len().min(4096)];
    if let Some(nul) = head.iter().position(|&b| b == 0) {
        return fail_at(
            format!(
                "this looks like a binary file of unknown kind (it holds NUL bytes); {ACCEPTED}"
            ),
            nul,
        );
    }
    let text = csv::decode_text(bytes);
    let t = text.trim_start();
    if t.starts_with('{') || t.starts_with('[') {
        return match serde_json::from_str::<serde_json::Value>(t) {
            Ok(v) => match v.get("format").and_then(|f| f.as_str()) {
                Some(bundle::BUNDLE_FORMAT) => Ok(Format::Bundle),
                Some(other) => fail(format!(
                    "this is JSON with \"format\": \"{}\", not a data file; expected \"{}\"; {ACCEPTED}",
                    crate::error::quote(other),
                    bundle::BUNDLE_FORMAT
                ))
                .map_err(|e: Error| e.field("format")),
                None => fail(format!(
                    "this is JSON without a \"format\" field; {ACCEPTED}"
                ))
                .map_err(|e: Error| e.field("format")),
            },
            // a damaged bundle: let the bundle reader say where it breaks
            Err(_)
                if t.as_bytes()[..t.len().min(4096)]
                    .windows(bundle::BUNDLE_FORMAT.len())
                    .any(|w| w == bundle::BUNDLE_FORMAT.as_bytes()) =>
            {
                Ok(Format::Bundle)
            }
            Err(e) => fail(format!(
                "this looks like JSON but does not parse ({}); {ACCEPTED}",
                json_message(&e)
            ))
            // serde_json counts lines after the leading white space
            .map_err(|x: Error| {
                let skipped = csv::text_lines(&text[..text.len() - t.len()]).count() - 1;
                x.at_line(e.line() + skipped)
            }),
        };
    }
    if csv::is_native(&text) {
        return Ok(Format::CsvNative);
    }
    if csv::looks_delimited(&text) {
        return Ok(Format::CsvMapped);
    }
    // a verdict on the whole file: its place is the file. Its content is
    // not quoted: it is not data, and it may be anything (a recipe may have
    // named a file it should not have).
    let lines = csv::text_lines(&text)
        .filter(|l| !l.trim().is_empty())
        .count();
    fail(format!(
        "this looks like plain text without columns of numbers ({lines} non-blank lines, none of them delimited numbers); {ACCEPTED}"
    ))
}

/// Give every DOF the component `c`, except the reference input of a spectrum.
fn rename_component(s: &mut FrfSet, c: &str) {
    for d in s.outputs.iter_mut() {
        d.component = c.to_string();
    }
    if s.signal.is_none() {
        for d in s.inputs.iter_mut() {
            d.component = c.to_string();
        }
    }
}

/// Import options as text for provenance records.
fn options_text(opts: &ImportOptions) -> String {
    serde_json::to_string(opts).unwrap_or_default()
}

/// A declared spectrum kind must be what the file's spectra are, and the
/// file must hold spectra (else the declaration would change nothing).
fn check_declared(sets: &[FrfSet], k: SignalKind) -> Result<()> {
    for (n, s) in sets.iter().enumerate() {
        if let Some(have) = s.signal {
            if have != k {
                return Err(Error::usage(format!(
                    "set {} ('{}') of the file is a {} spectrum, but the import options declare {}; declare {} or leave \"signal\" out",
                    n + 1,
                    crate::error::quote(&s.name),
                    have.name(),
                    k.name(),
                    have.name()
                ))
                .field("signal"));
            }
        }
    }
    if !sets.iter().any(|s| s.signal.is_some()) {
        return Err(Error::usage(format!(
            "the import options declare {} spectra, but the file holds no spectra (only FRFs); leave \"signal\" out",
            k.name()
        ))
        .field("signal"));
    }
    Ok(())
}

/// A MAT mapping given for another file, a MAT-file without one, or a
/// column map given for a MAT-file.
fn mat_options_misplaced(format: Format, opts: &ImportOptions) -> Error {
    if format != Format::Mat {
        return Error::usage(format!(
            "the import options carry a MAT-file mapping (\"mat\"), but this file is {}, not a MAT-file; leave \"mat\" out",
            format.name()
        ))
        .field("mat");
    }
    if opts.column_map.is_some() {
        return Error::usage(
            "this is a MAT-file, but the import options carry a CSV column map (\"column_map\"); give a MAT mapping (\"mat\") instead",
        )
        .field("column_map");
    }
    Error::internal("MAT options checked for a MAT-file with a mapping")
}

/// Load one file within the default [`Limits`](crate::limits::Limits).
/// Errors name the file and the place in it.
pub fn load(bytes: &[u8], file: &str, opts: &ImportOptions) -> Result<Loaded> {
    load_with_limits(bytes, file, opts, &crate::limits::Limits::default())
}

/// [`load`] with every set a reader builds (UFF, our CSV, a supplier CSV)
/// checked against `limits` before it is allocated. (A bundle's sets are
/// read by [`bundle::read`].)
pub fn load_with_limits(
    bytes: &[u8],
    file: &str,
    opts: &ImportOptions,
    limits: &crate::limits::Limits,
) -> Result<Loaded> {
    load_with_progress(bytes, file, opts, limits, &mut |_| {})
}

/// [`load_with_limits`] telling `progress` how many bytes of a UFF file it
/// has parsed (at most once per [`uff58::PROGRESS_STEP`] bytes, then the
/// file's length); other formats do not call it.
pub fn load_with_progress(
    bytes: &[u8],
    file: &str,
    opts: &ImportOptions,
    limits: &crate::limits::Limits,
    progress: &mut dyn FnMut(usize),
) -> Result<Loaded> {
    load_known(bytes, None, file, opts, limits, progress)
}

/// The body of every `load`: `sha256`, the bytes' SHA-256 where the caller
/// already computed it from these very bytes (a bundle's input checked
/// against its record), else computed here once.
pub(crate) fn load_known(
    bytes: &[u8],
    sha256: Option<&str>,
    file: &str,
    opts: &ImportOptions,
    limits: &crate::limits::Limits,
    progress: &mut dyn FnMut(usize),
) -> Result<Loaded> {
    let format = detect(bytes, file)?;
    let component = opts.component.clone().unwrap_or_else(|| file_stem(file));
    let mut warnings = Vec::new();
    let mut time_histories = Vec::new();
    let uff = matches!(format, Format::Uff58Ascii | Format::Uff58Binary);
    for (given, key) in [
        (opts.out_qty.is_some(), "out_qty"),
        (opts.in_qty.is_some(), "in_qty"),
        (!opts.dofs.is_empty(), "dofs"),
    ] {
        if given && !uff {
            return Err(Error::usage(format!(
                "the import option \"{key}\" applies to UFF files, but this file is {}; leave it out (a CSV's quantities and DOFs go in its column map, a MAT-file's in \"mat\")",
                format.name()
            ))
            .field(key)
            .in_file(file));
        }
    }
    if (opts.mat.is_some() && format != Format::Mat)
        || (format == Format::Mat && opts.column_map.is_some())
    {
        return Err(mat_options_misplaced(format, opts).in_file(file));
    }
    if opts.auto_map && format != Format::CsvMapped {
        return Err(Error::usage(format!(
            "a detected column map (\"auto\") is for delimited text that is not mortise's own CSV; this file is {}, which needs none",
            format.name()
        ))
        .field("column_map")
        .in_file(file));
    }
    let mut uff = None;
    // the UFF reader hashes the file while it parses (see uff58::read_all)
    let mut sha: Option<String> = sha256.map(str::to_string);
    let mut sets = match format {
        Format::Uff58Ascii | Format::Uff58Binary => {
            // the overrides first; a wrong one is reported after the file's
            // own errors, as reading it alone would (and not at all for a
            // file of extras alone, which reads no dataset 58)
            let ov = (|| -> Result<uff58::Overrides> {
                let mut ov = uff58::Overrides {
                    out_qty: opts.out_qty,
                    in_qty: opts.in_qty,
                    dofs: Vec::new(),
                };
                for d in &opts.dofs {
                    let (out, inp) = d.dofs().map_err(|e| e.in_file(file))?;
                    ov.dofs.push(uff58::DofAssignment {
                        dataset: d.dataset,
                        out,
                        inp,
                    });
                }
                Ok(ov)
            })();
            match ov {
                Err(e) => {
                    let (extras, notes, has58) = uff58::read_extras(bytes, file, &component)?;
                    if has58 || extras.is_none() {
                        return Err(e);
                    }
                    uff = extras;
                    warnings.extend(notes);
                    Vec::new()
                }
                Ok(ov) => {
                    // one parse gives the extras and the sets; without a
                    // given component, each DOF takes the one written in the
                    // record-6 entity name, else the file stem
                    let all = uff58::read_all(
                        bytes,
                        sha256,
                        file,
                        &component,
                        opts.component.as_deref(),
                        opts.signal,
                        &ov,
                        limits,
                        progress,
                    )?;
                    uff = all.extras;
                    sha = Some(all.sha256);
                    match all.read {
                        Some(r) => {
                            warnings.extend(r.warnings);
                            time_histories = r.time;
                            // the geometry's and modal model's own notes
                            let seen: std::collections::HashSet<String> =
                                warnings.iter().cloned().collect();
                            warnings.extend(all.notes.into_iter().filter(|n| !seen.contains(n)));
                            r.sets
                        }
                        None => {
                            warnings.extend(all.notes);
                            Vec::new()
                        }
                    }
                }
            }
        }
        Format::CsvNative => {
            let mut sets = csv::read_native_with_limits(bytes, file, limits)?;
            if let Some(c) = &opts.component {
                for s in &mut sets {
                    rename_component(s, c);
                }
            }
            sets
        }
        Format::CsvMapped => {
            let detected;
            let map = if opts.auto_map {
                if opts.column_map.is_some() {
                    return Err(Error::usage(
                        "the import options ask for a detected column map (\"auto\") and give one; give one of them",
                    )
                    .field("column_map")
                    .in_file(file));
                }
                detected = csv::detect_map(bytes, file)?;
                warnings.push(format!(
                    "column map detected from the file: {}",
                    detected.reasons.join("; ")
                ));
                Some(&detected.map)
            } else {
                opts.column_map.as_ref()
            };
            let Some(map) = map else {
                let text = csv::decode_text(bytes);
                let head: Vec<String> = csv::text_lines(&text)
                    .filter(|l| !l.trim().is_empty())
                    .take(3)
                    .map(|l| format!("'{}'", crate::error::quote(l.trim())))
                    .collect();
                return Err(Error::usage(format!(
                    "this is delimited text but not mortise's own CSV layout, so it needs a column map: \
the frequency column, and for each FRF its output DOF, input DOF and value columns (real/imaginary, \
magnitude/phase or one value), the value unit and the output and input quantities; \
mortise can propose one from the column names and units (column map \"auto\"). The file starts: {}",
                    head.join(" | ")
                ))
                .field("column_map")
                .in_file(file));
            };
            vec![csv::read_mapped_with_limits(
                bytes,
                file,
                map,
                &component,
                opts.signal,
                limits,
            )?]
        }
        Format::Mat => {
            let Some(map) = &opts.mat else {
                return Err(mat::mapping_needed(bytes, file));
            };
            let limits = crate::limits::Limits::default();
            let (set, w) = mat::read(bytes, file, map, &component, opts.signal, &limits)?;
            warnings.extend(w);
            vec![set]
        }
        Format::Bundle => {
            let checked = bundle::read_checked(bytes, file)?;
            warnings.extend(checked.notes);
            let b = checked.bundle;
            let withheld = b.inputs.iter().filter(|i| i.withheld()).count();
            if withheld > 0 {
                warnings.push(format!(
                    "{withheld} of {} inputs' raw FRFs were withheld by the sender; only their names and SHA-256 are in the bundle",
                    b.inputs.len()
                ));
            }
            let mut sets = b.all_sets();
            if let Some(c) = &opts.component {
                for s in &mut sets {
                    rename_component(s, c);
                }
            }
            sets
        }
    };
    if let Some(k) = opts.signal {
        check_declared(&sets, k).map_err(|e| e.in_file(file))?;
    }
    let prov = Provenance {
        file: base_name(file),
        sha256: sha.unwrap_or_else(|| sha256_hex(bytes)),
        format: format.name().to_string(),
        options: options_text(opts),
    };
    for (n, s) in sets.iter_mut().enumerate() {
        s.validate().map_err(|e| {
            e.field(format!(
                "set {} ('{}')",
                n + 1,
                crate::error::quote(&s.name)
            ))
            .in_file(file)
        })?;
        // a reader may already have recorded this file (the UFF reader does,
        // with the format of each set); then only the options are completed
        match s.provenance.last_mut() {
            Some(last) if last.file == prov.file && last.sha256 == prov.sha256 => {
                last.options = prov.options.clone();
                if last.format.is_empty() {
                    last.format = prov.format.clone();
                }
            }
            _ => s.provenance.push(prov.clone()),
        }
        for w in &s.warnings {
            if !warnings.contains(w) {
                warnings.push(w.clone());
            }
        }
    }
    if sets.is_empty() && time_histories.is_empty() {
        warnings.push(match uff.as_ref().map(|x| x.modal.is_some()) {
            Some(true) => "the file holds no FRF sets; its modal model (dataset 55) gives FRFs on a grid (a recipe component's \"grid\", convert --grid START:STOP:STEP)".to_string(),
            Some(false) => "the file holds no FRF sets (only the datasets listed above)".to_string(),
            None => "the file holds no FRF sets".to_string(),
        });
    }
    Ok(Loaded {
        format,
        sets,
        warnings,
        uff,
        time_histories,
        sha256: prov.sha256,
    })
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
    match fmt {
        ExportFormat::Uff => uff58::write(sets, false),
        ExportFormat::UffBinary => uff58::write(sets, true),
        ExportFormat::Csv => csv::write_native(sets),
        ExportFormat::Bundle => {
            let mut b = bundle::Bundle::new("");
            b.results = sets.to_vec();
            bundle::write(&b)
        }
    }
}

/// What [`export`] wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct Exported {
    pub bytes: Vec<u8>,
    /// For UFF: the number written for each text node label (and for a
    /// numeric node a second component also uses), see [`nodes::numbered`];
    /// empty for the other formats and when every node was a number.
    pub node_numbers: Vec<nodes::NodeNumber>,
}

impl Exported {
    /// The node-number table as JSON text (`[{component, node, number}]`),
    /// the small file offered beside a UFF export.
    pub fn node_numbers_json(&self) -> String {
        serde_json::to_string_pretty(&self.node_numbers).unwrap_or_else(|_| "[]".into())
    }
}

/// Write sets for a user: like [`save`], but UFF (whose nodes are integers)
/// gets text node labels numbered by [`nodes::numbered`], and the table is
/// returned with the bytes. The one export of `mortise run` and the page.
pub fn export(sets: &[FrfSet], fmt: ExportFormat) -> Result<Exported> {
    match fmt {
        ExportFormat::Uff | ExportFormat::UffBinary => {
            let (numbered, node_numbers) = nodes::numbered(sets);
            Ok(Exported {
                bytes: save(&numbered, fmt)?,
                node_numbers,
            })
        }
        ExportFormat::Csv | ExportFormat::Bundle => Ok(Exported {
            bytes: save(sets, fmt)?,
            node_numbers: Vec::new(),
        }),
    }
}

impl ExportFormat {
    pub fn parse(s: &str) -> Result<ExportFormat> {
        Ok(match s.trim().to_ascii_lowercase().as_str() {
            "uff" | "uff58" | "unv" => ExportFormat::Uff,
            "uff-binary" | "uff58b" => ExportFormat::UffBinary,
            "csv" => ExportFormat::Csv,
            "bundle" | "json" => ExportFormat::Bundle,
            _ => {
                return Err(Error::usage(format!(
                    "unknown output format '{s}'; expected uff, uff-binary, csv or bundle"
                )))
            }
        })
    }
    /// From a file name's extension: .uff/.unv, .uffb (binary UFF), .csv,
    /// .json (bundle). The one table of extensions (convert and couple).
    pub fn from_extension(name: &str) -> Option<ExportFormat> {
        let base = base_name(name).to_ascii_lowercase();
        let ext = base.rsplit_once('.').map(|(_, e)| e)?;
        Some(match ext {
            "uff" | "unv" => ExportFormat::Uff,
            "uffb" => ExportFormat::UffBinary,
            "csv" => ExportFormat::Csv,
            "json" => ExportFormat::Bundle,
            _ => return None,
        })
    }
    pub fn name(self) -> &'static str {
        match self {
            ExportFormat::Uff => "uff",
            ExportFormat::UffBinary => "uff-binary",
            ExportFormat::Csv => "csv",
            ExportFormat::Bundle => "bundle",
        }
    }
}
