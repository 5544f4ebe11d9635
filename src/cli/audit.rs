//! `mortise audit FILE... [--json] [--tolerance-db X] [--coherence-min X]
//! [--reciprocity-tol X] [--condition-max X] [--pair A B]`
//!
//! Loads each file, audits every set in it ([`crate::audit`]) and prints a
//! compact table per set (check, status, flagged bands, summary), or JSON
//! with `--json`. `--pair A B` also compares the sets of A and B (the same
//! component at two excitation levels) for linearity; when other files are
//! listed too, write the pair as `--pair A,B`. A file that cannot be read is
//! reported in its place and the others are still audited; the command then
//! fails (exit 1). Options are in [`super::spec::AUDIT`].

use super::{as_data, error_json, Args, Done};
use crate::audit::{audit, audit_pair, AuditOptions, AuditReport};
use crate::error::{Error, ErrorKind, Result};
use crate::frf::FrfSet;
use crate::io::{self, ImportOptions, Loaded};
use crate::limits::Limits;

/// The audit of one file.
#[derive(Debug, Clone, serde::Serialize)]
pub struct FileAudit {
    pub file: String,
    pub format: String,
    pub reports: Vec<AuditReport>,
}

fn number(args: &Args, name: &str, lo: f64, hi: f64) -> Result<Option<f64>> {
    let Some(v) = args.value(name) else {
        return Ok(None);
    };
    let x: f64 = v
        .trim()
        .parse()
        .map_err(|_| Error::usage(format!("--{name} '{v}': expected a number")))?;
    if !(x.is_finite() && x >= lo && x <= hi) {
        return Err(Error::usage(format!(
            "--{name} {v}: expected a value from {lo} to {hi}"
        )));
    }
    Ok(Some(x))
}

/// Audit options from the command line.
pub fn options(args: &Args) -> Result<AuditOptions> {
    let mut o = AuditOptions::default();
    if let Some(x) = number(args, "tolerance-db", 0.0, 100.0)? {
        o.linearity_tol_db = x;
    }
    if let Some(x) = number(args, "coherence-min", 0.0, 1.0)? {
        o.coherence_min = x;
    }
    if let Some(x) = number(args, "reciprocity-tol", 0.0, 10.0)? {
        o.reciprocity_tol = x;
    }
    if let Some(x) = number(args, "condition-max", 1.0, 1e300)? {
        o.condition_max = x;
    }
    Ok(o)
}

fn read(path: &str, limits: &Limits) -> Result<Loaded> {
    let bytes = io::disk::read_file(std::path::Path::new(path), path, limits)?;
    io::load_with_limits(
        &bytes,
        &io::base_name(path),
        &ImportOptions::default(),
        limits,
    )
    .map_err(|e| as_data(e, ErrorKind::Parse).in_file(path))
}

fn with_file_warnings(set: &FrfSet, l: &Loaded) -> FrfSet {
    let mut s = set.clone();
    for w in &l.warnings {
        if !s.warnings.contains(w) {
            s.warnings.push(w.clone());
        }
    }
    s
}

/// Audit loaded files: each set alone.
pub fn audit_loaded(file: &str, l: &Loaded, opts: &AuditOptions) -> FileAudit {
    FileAudit {
        file: file.to_string(),
        format: l.format.name().to_string(),
        reports: l
            .sets
            .iter()
            .map(|s| audit(&with_file_warnings(s, l), opts))
            .collect(),
    }
}

/// Audit two loaded files as one component at two excitation levels: the
/// sets are paired in order.
pub fn audit_loaded_pair(
    a: (&str, &Loaded),
    b: (&str, &Loaded),
    opts: &AuditOptions,
) -> Result<FileAudit> {
    if a.1.sets.len() != b.1.sets.len() {
        return Err(Error::missing(format!(
            "--pair: {} holds {} set(s) and {} holds {}; the linearity check pairs them in order",
            a.0,
            a.1.sets.len(),
            b.0,
            b.1.sets.len()
        )));
    }
    let reports =
        a.1.sets
            .iter()
            .zip(&b.1.sets)
            .map(|(x, y)| {
                audit_pair(&with_file_warnings(x, a.1), y, opts)
                    .map_err(|e| as_data(e, ErrorKind::Quantity))
            })
            .collect::<Result<Vec<_>>>()?;
    Ok(FileAudit {
        file: format!("{} with {}", a.0, b.0),
        format: a.1.format.name().to_string(),
        reports,
    })
}

/// The audit of one file or pair, or why it could not be made.
pub struct Entry {
    /// The file (or "A with B" for a pair).
    pub file: String,
    pub result: Result<FileAudit>,
}

/// Text or JSON for a list of file audits, in the order given.
pub fn render(entries: &[Entry], json: bool) -> Done {
    if json {
        let audits: Vec<serde_json::Value> = entries
            .iter()
            .map(|e| match &e.result {
                Ok(a) => {
                    let mut v = serde_json::to_value(a).unwrap_or_else(|err| {
                        serde_json::json!({ "file": e.file, "error": error_json(&super::internal(format!("audit as JSON: {err}"))) })
                    });
                    v["ok"] = true.into();
                    v
                }
                Err(err) => serde_json::json!({
                    "file": e.file,
                    "ok": false,
                    "error": error_json(err),
                    "message": err.to_string(),
                }),
            })
            .collect();
        return Done::json(serde_json::json!({
            "audits": audits,
            "caution": crate::audit::CAUTION,
        }));
    }
    let mut s = String::new();
    for e in entries {
        match &e.result {
            Ok(a) => {
                s.push_str(&format!("== {} ({})\n", a.file, a.format));
                if a.reports.is_empty() {
                    s.push_str("  no sets\n");
                }
                for r in &a.reports {
                    s.push_str(&r.table());
                }
            }
            Err(err) => s.push_str(&format!("== {}\n  error: {err}\n", e.file)),
        }
        s.push('\n');
    }
    s.push_str(crate::audit::CAUTION);
    s.push('\n');
    Done::text(s)
}

pub fn run(args: &Args) -> Result<Done> {
    let opts = options(args)?;
    let limits = super::limits::from_args(args)?;
    let mut files: Vec<String> = args.positional.clone();
    let mut pair: Option<(String, String)> = None;
    if let Some(p) = args.value("pair") {
        if let Some((a, b)) = p.split_once(',') {
            pair = Some((a.trim().to_string(), b.trim().to_string()));
        } else if files.len() == 1 {
            pair = Some((p.to_string(), files.remove(0)));
        } else {
            return Err(Error::usage(format!(
                "--pair {p}: give the second file right after it when it is the only other file, or write --pair A,B"
            )));
        }
    }
    if files.is_empty() && pair.is_none() {
        return Err(Error::usage(
            "audit needs at least one FILE (or --pair A,B)",
        ));
    }
    let mut entries: Vec<Entry> = files
        .iter()
        .map(|f| Entry {
            file: f.clone(),
            result: read(f, &limits).map(|l| audit_loaded(f, &l, &opts)),
        })
        .collect();
    if let Some((a, b)) = pair {
        let result = read(&a, &limits).and_then(|la| {
            let lb = read(&b, &limits)?;
            audit_loaded_pair((&a, &la), (&b, &lb), &opts)
        });
        entries.push(Entry {
            file: format!("{a} with {b}"),
            result,
        });
    }
    let failed: Vec<&Error> = entries
        .iter()
        .filter_map(|e| e.result.as_ref().err())
        .collect();
    let error = super::files_failed(&failed, entries.len(), "on standard output");
    Ok(render(&entries, args.flag("json")).failed(error))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cli::Body;
    use crate::frf::{Direction, Dof};
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn v(s: &[&str]) -> Vec<String> {
        s.iter().map(|x| x.to_string()).collect()
    }

    fn sdof(k: f64) -> FrfSet {
        let d = Dof::new("unit", "1", Direction::Z);
        let f: Vec<f64> = (1..=400).map(|i| i as f64 * 0.1).collect();
        let mut h = FrfSet::zeros(
            "seat",
            f,
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        for l in 0..h.n_lines() {
            let w = h.omega(l);
            h.set(l, 0, 0, 1.0 / Complex64::new(k - w * w, 2.0 * w));
        }
        h
    }

    fn parse(s: &[&str]) -> Args {
        Args::parse(&v(s), &crate::cli::spec::AUDIT).unwrap()
    }

    #[test]
    fn options_are_checked() {
        let a = parse(&["x.uff", "--coherence-min", "1.5"]);
        assert!(run(&a).unwrap_err().message.contains("coherence-min"));
        assert!(Args::parse(&v(&["x.uff", "--bogus", "1"]), &crate::cli::spec::AUDIT).is_err());
        let a = parse(&[]);
        assert!(run(&a).unwrap_err().message.contains("at least one FILE"));
        let a = parse(&["a", "--pair", "b", "c"]);
        assert!(run(&a).unwrap_err().message.contains("--pair A,B"));
        let a = parse(&["--tolerance-db", "0.5", "--coherence-min", "0.8"]);
        let o = options(&a).unwrap();
        assert_eq!((o.linearity_tol_db, o.coherence_min), (0.5, 0.8));
    }

    #[test]
    fn missing_file_is_named() {
        let a = parse(&["/nonexistent/dir/casing.uff"]);
        let d = run(&a).unwrap();
        let e = d.error.unwrap();
        assert_eq!(e.kind, crate::error::ErrorKind::Io);
        assert_eq!(e.file.as_deref(), Some("/nonexistent/dir/casing.uff"));
        assert!(
            e.message.contains("cannot read: no such file"),
            "{}",
            e.message
        );
        let Body::Text(t) = d.body else {
            panic!("text expected")
        };
        assert!(
            t.contains("== /nonexistent/dir/casing.uff\n  error: "),
            "{t}"
        );
    }

    #[test]
    fn table_and_json_of_loaded_sets() {
        let l = Loaded {
            format: io::Format::CsvNative,
            sets: vec![sdof(1e3)],
            warnings: vec!["column 2: unit 'mm' taken from the header".into()],
            uff: None,
            time_histories: vec![],
            sha256: String::new(),
        };
        let h = Loaded {
            format: io::Format::CsvNative,
            sets: vec![sdof(8e2)],
            warnings: vec![],
            uff: None,
            time_histories: vec![],
            sha256: String::new(),
        };
        let opts = AuditOptions::default();
        let one = audit_loaded("seat.csv", &l, &opts);
        let two = audit_loaded_pair(("seat.csv", &l), ("seat-high.csv", &h), &opts).unwrap();
        let entry = |a: &FileAudit| Entry {
            file: a.file.clone(),
            result: Ok(a.clone()),
        };
        let Body::Text(text) = render(&[entry(&one), entry(&two)], false).body else {
            panic!("text expected")
        };
        print!("{text}");
        assert!(text.contains("== seat.csv (csv-mortise)"));
        assert!(text.contains("linearity") && text.contains("FLAG"));
        assert!(text.contains("import") && text.contains("unit 'mm'"));
        assert!(text.contains("licensed professional"));
        let Body::Json(j) = render(&[entry(&one)], true).body else {
            panic!("JSON expected")
        };
        assert_eq!(
            j["audits"][0]["reports"][0]["checks"][1]["check"],
            "passivity"
        );
        assert_eq!(j["audits"][0]["reports"][0]["checks"][1]["status"], "pass");
    }
}
