//! `mortise inspect FILE... [--json]`: what each file holds (format, FRFs,
//! DOFs, quantities, units, grid, SHA-256, warnings). A file that cannot be
//! read is reported in its place (in the text, or with its error in the JSON)
//! and the others are still inspected; the command then fails (exit 1).
//!
//! Also home of the column-map options shared with `mortise convert` (their
//! definitions are in [`super::spec::IMPORT_OPTS`]).

use super::{as_data, Args, Done};
use crate::error::{Error, ErrorKind, Result};
use crate::frf::{labels, FrfSet};
use crate::grid::{spacing, Spacing};
use crate::io::csv::{
    ColumnMap, ColumnRef, Delimiter, FreqUnit, MagScale, MapEntry, PhaseUnit, ValueColumns,
};
use crate::io::{self, ImportOptions, Loaded};
use crate::limits::Limits;
use crate::units::Quantity;
use std::path::Path;

fn num<T: std::str::FromStr>(args: &Args, name: &str) -> Result<Option<T>> {
    match args.value(name) {
        None => Ok(None),
        Some(v) => v
            .trim()
            .parse::<T>()
            .map(Some)
            .map_err(|_| Error::usage(format!("--{name} '{v}': expected a number"))),
    }
}

/// Import options from the command line: the component name, the spectrum
/// kind (`--signal`, for any format) and, when any column-map option (or
/// `--map`) is given, a [`ColumnMap`]. Every mistake a column map from options
/// can hold is refused here, as a usage error; what the reader refuses later
/// is about the file (or a `--map` file).
pub fn import_options(args: &Args) -> Result<ImportOptions> {
    let mut o = import_options_base(args)?;
    super::spec::uff_options(args, &mut o)?;
    Ok(o)
}

fn import_options_base(args: &Args) -> Result<ImportOptions> {
    let component = args.value("component").map(str::to_string);
    let signal = args
        .value("signal")
        .map(|s| io::parse_signal(s).map_err(|e| Error::usage(format!("--signal: {}", e.message))))
        .transpose()?;
    if let Some(mat) = super::mat_opts::mat_map(args, signal)? {
        return Ok(ImportOptions {
            component,
            signal,
            column_map: None,
            mat: Some(mat),
            ..Default::default()
        });
    }
    let any_col = super::spec::IMPORT_OPTS
        .iter()
        .filter(|o| o.name != "component" && o.name != "map" && o.name != "signal")
        .any(|o| args.flag(o.name));
    if args.value("map") == Some("auto") {
        if any_col {
            return Err(Error::usage(
                "give either --map auto or the column options (--freq-col, --re, ...), not both",
            ));
        }
        return Ok(ImportOptions {
            component,
            signal,
            auto_map: true,
            ..Default::default()
        });
    }
    if let Some(path) = args.value("map") {
        if any_col {
            return Err(Error::usage(
                "give either --map or the column options (--freq-col, --re, ...), not both",
            ));
        }
        let bytes = io::disk::read_file(Path::new(path), path, &super::limits::from_args(args)?)?;
        let value: serde_json::Value = serde_json::from_slice(&bytes).map_err(|e| {
            Error::parse(format!("not a column map: {e}"))
                .at_line(e.line().max(1))
                .in_file(path)
        })?;
        let (map, in_map) = io::csv::map_from_json(value).map_err(|e| e.in_file(path))?;
        return Ok(ImportOptions {
            component,
            signal: io::declared_signal(signal, in_map).map_err(|e| e.in_file(path))?,
            column_map: Some(map),
            mat: None,
            ..Default::default()
        });
    }
    if !any_col {
        return Ok(ImportOptions {
            component,
            signal,
            column_map: None,
            mat: None,
            ..Default::default()
        });
    }
    for name in [
        "freq-col",
        "re",
        "im",
        "mag",
        "phase",
        "value",
        "stiffness",
        "loss",
        "coh",
    ] {
        for c in args.values(name) {
            if c.trim().parse::<usize>() == Ok(0) {
                return Err(Error::usage(format!("--{name} {c}: columns count from 1")));
            }
        }
    }
    let mut m = ColumnMap::default();
    if let Some(d) = args.value("delim") {
        m.delimiter = Delimiter::parse(d)?;
    }
    m.skip_rows = num(args, "skip")?.unwrap_or(0);
    m.header_line = num(args, "header-line")?;
    m.decimal_comma = match args.value("decimal") {
        None | Some("point") | Some(".") => false,
        Some("comma") | Some(",") => true,
        Some(o) => {
            return Err(Error::usage(format!(
                "--decimal '{o}': expected point or comma"
            )))
        }
    };
    if m.decimal_comma && m.delimiter == Delimiter::Comma {
        return Err(Error::usage(
            "--decimal comma needs a --delim other than comma (semicolon, tab or space)",
        ));
    }
    if let Some(c) = args.value("freq-col") {
        m.freq = ColumnRef::parse(c);
    }
    if let Some(u) = args.value("freq-unit") {
        m.freq_unit = FreqUnit::parse(u)?;
    }
    if let Some(r) = args.value("mag-db-ref") {
        let reference: f64 = r
            .trim()
            .parse()
            .ok()
            .filter(|x: &f64| x.is_finite() && *x > 0.0)
            .ok_or_else(|| {
                Error::usage(format!("--mag-db-ref '{r}': expected a positive number"))
            })?;
        m.mag_scale = MagScale::Db { reference };
    }
    if let Some(p) = args.value("phase-unit") {
        m.phase_unit = PhaseUnit::parse(p)?;
    }
    if let Some(u) = args.value("unit") {
        m.unit = u.to_string();
    }
    let q = |name: &str| -> Result<Option<Quantity>> {
        args.value(name)
            .map(|v| {
                Quantity::parse(v).map_err(|e| Error::usage(format!("--{name}: {}", e.message)))
            })
            .transpose()
    };
    m.out_qty = q("out-qty")?.ok_or_else(|| {
        Error::usage("the column map needs --out-qty (displacement, velocity, acceleration, force, pressure, ...)")
    })?;
    m.in_qty =
        match q("in-qty")? {
            Some(x) => x,
            None if signal.is_some() => Quantity::Dimensionless,
            None => return Err(Error::usage(
                "the column map needs --in-qty (force, displacement, ...), or --signal for spectra",
            )),
        };
    m.conjugate = match args.value("time-convention") {
        None | Some("+iwt") | Some("+iωt") => false,
        Some("-iwt") | Some("-iωt") => true,
        Some(o) => {
            return Err(Error::usage(format!(
                "--time-convention '{o}': expected +iwt or -iwt"
            )))
        }
    };
    m.name = args.value("set-name").map(str::to_string);
    let outs = args.values("out-dof");
    let ins = args.values("in-dof");
    let n = outs.len();
    if n == 0 {
        return Err(Error::usage(
            "the column map needs --out-dof (and --in-dof) for each FRF, e.g. --out-dof wall:A1+Z --in-dof wall:A1+Z",
        ));
    }
    if signal.is_none() && ins.len() != n {
        return Err(Error::usage(format!(
            "{n} --out-dof but {} --in-dof; give one of each per FRF",
            ins.len()
        )));
    }
    let cols = |name: &str| args.values(name);
    let (re, im, mag, ph, val, coh) = (
        cols("re"),
        cols("im"),
        cols("mag"),
        cols("phase"),
        cols("value"),
        cols("coh"),
    );
    let (stiff, loss) = (cols("stiffness"), cols("loss"));
    let form = match (re.len(), im.len(), mag.len(), ph.len(), val.len()) {
        _ if !stiff.is_empty() || !loss.is_empty() => {
            if stiff.len() != n || loss.len() != n {
                return Err(Error::usage(format!(
                    "for {n} FRF(s) give {n} --stiffness and {n} --loss (storage stiffness K' and loss factor η); got {} and {}",
                    stiff.len(),
                    loss.len()
                )));
            }
            3
        }
        (a, b, 0, 0, 0) if a == n && b == n => 0,
        (0, 0, a, b, 0) if a == n && b == n => 1,
        (0, 0, 0, 0, a) if a == n => 2,
        _ => {
            return Err(Error::usage(format!(
                "for {n} FRF(s) give {n} --re and {n} --im, or {n} --mag and {n} --phase, or {n} --value; got {} --re, {} --im, {} --mag, {} --phase, {} --value",
                re.len(),
                im.len(),
                mag.len(),
                ph.len(),
                val.len()
            )))
        }
    };
    if !coh.is_empty() && coh.len() != n {
        return Err(Error::usage(format!(
            "{} --coh for {n} FRF(s); give one per FRF or none",
            coh.len()
        )));
    }
    for e in 0..n {
        let values = match form {
            0 => ValueColumns::ReIm {
                re: ColumnRef::parse(re[e]),
                im: ColumnRef::parse(im[e]),
            },
            1 => ValueColumns::MagPhase {
                mag: ColumnRef::parse(mag[e]),
                phase: ColumnRef::parse(ph[e]),
            },
            2 => ValueColumns::Real {
                value: ColumnRef::parse(val[e]),
            },
            _ => ValueColumns::StorageLoss {
                stiffness: ColumnRef::parse(stiff[e]),
                loss: ColumnRef::parse(loss[e]),
            },
        };
        m.entries.push(MapEntry {
            out_dof: outs[e].to_string(),
            in_dof: ins.get(e).map_or(String::new(), |s| s.to_string()),
            values,
            coherence: coh.get(e).map(|c| ColumnRef::parse(c)),
        });
    }
    Ok(ImportOptions {
        component,
        signal,
        column_map: Some(m),
        mat: None,
        ..Default::default()
    })
}

/// One file as the CLI read it.
pub struct FileResult {
    pub path: String,
    /// SHA-256 of the bytes, when the file could be read at all.
    pub sha256: Option<String>,
    /// A bundle's content SHA-256 (`io::bundle` docs), checked when it loaded.
    pub content_sha256: Option<String>,
    pub result: Result<Loaded>,
    /// A MAT-file read without a MAT mapping: its variables (what `inspect`
    /// lists so the user knows what to map); `result` holds the error that
    /// says a mapping is needed.
    pub mat_variables: Option<Vec<io::mat::VarInfo>>,
}

/// Read and load every file; failures are kept, with the file name. (A
/// usage error from the reader is about the file, or a `--map` file: a data
/// error.)
/// A file that needs a column map: how to give one on the command line
/// (the core's message says what a map holds, not how each face takes it).
fn command_line_hint(mut e: Error) -> Error {
    if e.field.as_deref() == Some("column_map") && e.message.contains("needs a column map") {
        e.message.push_str(
            " On the command line: --map auto, or --freq-col N --out-dof D --in-dof D (--re N --im N | --mag N --phase N | --value N) --unit U --out-qty Q --in-qty Q (after --skip N for title rows), or --map MAP.json.",
        );
    }
    e
}

pub fn load_files(paths: &[String], opts: &ImportOptions, limits: &Limits) -> Vec<FileResult> {
    let data = |e: Error| as_data(e, ErrorKind::Parse);
    paths
        .iter()
        .map(|p| match io::disk::read_file(Path::new(p), p, limits) {
            Err(e) => FileResult {
                path: p.clone(),
                sha256: None,
                content_sha256: None,
                result: Err(e),
                mat_variables: None,
            },
            Ok(bytes) => {
                let result = io::load_with_limits(&bytes, p, opts, limits)
                    .map_err(data)
                    .map_err(command_line_hint);
                let bundle = matches!(&result, Ok(l) if l.format == io::Format::Bundle);
                let mat_variables = match (&result, &opts.mat) {
                    (Err(_), None) if io::mat::sniff(&bytes) => io::mat::variables(&bytes, p).ok(),
                    _ => None,
                };
                FileResult {
                    path: p.clone(),
                    // the load's hash where it read the file, else hashed here
                    sha256: Some(match &result {
                        Ok(l) => l.sha256.clone(),
                        Err(_) => io::sha256_hex(&bytes),
                    }),
                    content_sha256: io::bundle::content_sha256(&bytes).filter(|_| bundle),
                    result,
                    mat_variables,
                }
            }
        })
        .collect()
}

/// A JSON summary of one set: the one set summary ([`crate::summary::SetSummary`]),
/// as the page's cards and the run report show it.
pub fn set_summary(s: &FrfSet) -> serde_json::Value {
    serde_json::to_value(crate::summary::set_summary(s)).unwrap_or_default()
}

fn set_text(n: usize, s: &FrfSet, out: &mut String) {
    let present = s.present.iter().filter(|&&p| p).count();
    let kind = match s.signal {
        Some(k) => format!("{} spectrum of {}", k.name(), s.out_qty),
        None => format!("{} ({} per {})", s.kind(), s.out_qty, s.in_qty),
    };
    out.push_str(&format!(
        "  set {n} '{}': {present} FRF(s) in {} output(s) × {} input(s), {kind}, SI unit {}\n",
        s.name,
        s.n_out(),
        s.n_in(),
        crate::summary::unit_text(s)
    ));
    out.push_str(&format!("    outputs: {}\n", labels(&s.outputs)));
    out.push_str(&format!("    inputs:  {}\n", labels(&s.inputs)));
    let miss = s.missing_entries();
    if !miss.is_empty() {
        out.push_str(&format!(
            "    missing: {}{}\n",
            miss.iter().take(8).cloned().collect::<Vec<_>>().join(", "),
            if miss.len() > 8 {
                format!(", ... ({} in all)", miss.len())
            } else {
                String::new()
            }
        ));
    }
    let sp = match spacing(&s.freqs) {
        Spacing::Single => "one line".to_string(),
        Spacing::Even { step } => format!("even, Δf = {step} Hz"),
        Spacing::Uneven { min_step, max_step } => {
            format!("uneven, Δf from {min_step} to {max_step} Hz")
        }
    };
    out.push_str(&format!(
        "    lines:   {}, {} Hz to {} Hz, {sp}\n",
        s.n_lines(),
        s.freqs.first().copied().unwrap_or(f64::NAN),
        s.freqs.last().copied().unwrap_or(f64::NAN)
    ));
    if s.coherence.is_some() {
        out.push_str("    coherence: supplied\n");
    }
    // the fitness audit with default (common-practice) limits; `mortise audit` sets them
    if s.signal.is_none() {
        let a = crate::audit::audit(s, &crate::audit::AuditOptions::default());
        let count = |st| a.checks.iter().filter(|c| c.status == st).count();
        out.push_str(&format!(
            "    audit:   {} passed, {} flagged, {} not applicable\n",
            count(crate::audit::Status::Pass),
            count(crate::audit::Status::Flag),
            count(crate::audit::Status::NotApplicable)
        ));
        for c in a
            .checks
            .iter()
            .filter(|c| c.status == crate::audit::Status::Flag)
        {
            out.push_str(&format!("      flag {}: {}\n", c.check, c.summary));
        }
    }
}

pub fn run(args: &Args) -> Result<Done> {
    if args.positional.is_empty() {
        return Err(Error::usage("inspect needs at least one FILE"));
    }
    let opts = import_options(args)?;
    let results = load_files(&args.positional, &opts, &super::limits::from_args(args)?);
    let failed: Vec<&Error> = results
        .iter()
        .filter(|f| f.mat_variables.is_none())
        .filter_map(|f| f.result.as_ref().err())
        .collect();
    let error = super::files_failed(&failed, results.len(), "on standard output");
    if args.flag("json") {
        let files: Vec<serde_json::Value> = results
            .iter()
            .map(|f| match (&f.result, &f.mat_variables) {
                (Err(e), Some(vars)) => serde_json::json!({
                    "file": f.path,
                    "ok": true,
                    "format": io::Format::Mat.name(),
                    "sha256": f.sha256,
                    "sets": [],
                    "mat_variables": vars,
                    "warnings": [e.message],
                }),
                (Ok(l), _) => serde_json::json!({
                    "file": f.path,
                    "ok": true,
                    "format": l.format.name(),
                    "sha256": f.sha256,
                    "content_sha256": f.content_sha256,
                    "sets": l.sets.iter().map(set_summary).collect::<Vec<_>>(),
                    "uff": l.uff.as_ref().map(|x| x.summary()),
                    "time_histories": l.time_histories.iter().map(crate::summary::time_summary).collect::<Vec<_>>(),
                    "warnings": l.warnings,
                }),
                (Err(e), None) => serde_json::json!({
                    "file": f.path,
                    "ok": false,
                    "sha256": f.sha256,
                    "error": super::error_json(e),
                    "message": e.to_string(),
                }),
            })
            .collect();
        return Ok(Done::json(serde_json::json!({ "files": files })).failed(error));
    }
    let mut out = String::new();
    for f in &results {
        out.push_str(&format!("{}\n", f.path));
        if let Some(h) = &f.sha256 {
            out.push_str(&format!("  sha256: {h}\n"));
        }
        if let Some(vars) = &f.mat_variables {
            out.push_str(&format!(
                "  format: {} (no FRFs read: give a MAT mapping, see 'mortise help inspect')\n",
                io::Format::Mat.name()
            ));
            out.push_str(&format!("  variables: {}\n", vars.len()));
            for v in vars {
                out.push_str(&format!(
                    "    {}{}\n",
                    v.describe(),
                    if v.compressed { ", compressed" } else { "" }
                ));
            }
            continue;
        }
        match &f.result {
            Ok(l) => {
                out.push_str(&format!("  format: {}\n", l.format.name()));
                if let Some(c) = &f.content_sha256 {
                    out.push_str(&format!("  bundle content sha256: {c} (checked)\n"));
                }
                if let Some(x) = &l.uff {
                    for line in x.describe() {
                        out.push_str(&format!("  {line}\n"));
                    }
                }
                for (n, s) in l.sets.iter().enumerate() {
                    set_text(n + 1, s, &mut out);
                }
                for t in &l.time_histories {
                    out.push_str(&format!("  {}\n", crate::summary::time_summary(t).text()));
                }
                for w in &l.warnings {
                    out.push_str(&format!("  warning: {w}\n"));
                }
            }
            Err(e) => out.push_str(&format!("  error: {e}\n")),
        }
    }
    Ok(Done::text(out).failed(error))
}
