//! `mortise couple`: the one-line route for the common case, coupling files at
//! listed DOF pairs without writing a recipe. It builds a recipe in memory and
//! runs it with the same executor as `mortise run`.
//!
//! ```text
//! mortise couple casing.uff frame.csv --join 'casing:1+Z = frame:7+Z' \
//!        --join 'casing:2+Z = frame:8+Z k=2e5 eta=0.1' -o coupled.uff
//! ```
//! Each file becomes a component named after its file stem, which is also the
//! DOF namespace. A join is `A = B` (rigid) optionally followed by
//! `k=` (N/m), `c=` (N·s/m), `eta=` (loss factor) for a flexible joint, or
//! `stiffness=FILE` for a measured dynamic stiffness (a 1×1 set).

use super::{as_data, Args, Done};
use crate::error::{Error, ErrorKind, Result};
use crate::frf::Dof;
use crate::io::{self, ExportFormat};
use crate::recipe::{self, ComponentSpec, Couple, DirSource, JointSpec, Op, Recipe, Step};
use std::collections::BTreeMap;
use std::path::{Component, Path, PathBuf};

/// Parse one `--join` value.
pub fn parse_join(text: &str, extra: &mut BTreeMap<String, ComponentSpec>) -> Result<JointSpec> {
    let bad = |m: &str| {
        Error::usage(format!(
            "--join '{text}': {m}; expected 'A:node+DIR = B:node+DIR' optionally followed by k=N/m c=N*s/m eta=LOSS or stiffness=FILE"
        ))
    };
    let (a, rest) = text
        .split_once('=')
        .ok_or_else(|| bad("no '=' between the two DOFs"))?;
    let mut words = rest.split_whitespace();
    let b = words.next().ok_or_else(|| bad("no second DOF"))?;
    for label in [a.trim(), b] {
        Dof::parse(label, "").map_err(|e| bad(&e.message))?;
    }
    let (mut k, mut c, mut eta, mut stiffness) = (None, None, None, None);
    for w in words {
        let (key, val) = w
            .split_once('=')
            .ok_or_else(|| bad(&format!("'{w}' is not key=value")))?;
        if key == "stiffness" {
            let stem = io::file_stem(val);
            if let Some(other) = extra.get(&stem).and_then(|c| c.file.as_deref()) {
                if other != val {
                    return Err(bad(&format!(
                        "stiffness files '{other}' and '{val}' have the same stem '{stem}'; component names come from file stems and must differ"
                    )));
                }
            }
            extra.insert(
                stem.clone(),
                ComponentSpec {
                    file: Some(val.to_string()),
                    kind: Some("dynamic-stiffness".into()),
                    ..Default::default()
                },
            );
            stiffness = Some(stem);
            continue;
        }
        let x: f64 = val
            .parse()
            .map_err(|_| bad(&format!("'{val}' is not a number for {key}")))?;
        if !(x.is_finite() && x >= 0.0) {
            return Err(bad(&format!(
                "{key}={val}: expected a finite, non-negative number"
            )));
        }
        match key {
            "k" => k = Some(x),
            "c" => c = Some(x),
            "eta" => eta = Some(x),
            _ => return Err(bad(&format!("unknown key '{key}'"))),
        }
    }
    // the type is read from the parameters by the recipe's one rule
    JointSpec::from_parts(
        a.trim().to_string(),
        b.to_string(),
        None,
        k,
        c,
        eta,
        stiffness,
    )
    .map_err(|e| bad(&e.message))
}

/// The export format implied by a file name's extension (the one table,
/// [`ExportFormat::from_extension`]).
pub fn format_from_name(name: &str) -> Result<ExportFormat> {
    ExportFormat::from_extension(name).ok_or_else(|| {
        Error::usage(format!(
            "cannot tell the output format from '{name}'; use an extension .uff, .uffb, .csv or .json (bundle)"
        ))
    })
}

/// Build the in-memory recipe for a one-line coupling.
pub fn recipe_for(files: &[String], joins: &[&str], tsvd: Option<f64>) -> Result<Recipe> {
    let mut components = BTreeMap::new();
    let mut parts = Vec::new();
    for f in files {
        let stem = io::file_stem(f);
        if components.contains_key(&stem) {
            return Err(Error::usage(format!(
                "two files have the stem '{stem}'; component names come from file stems and must differ"
            )));
        }
        components.insert(
            stem.clone(),
            ComponentSpec {
                file: Some(f.clone()),
                ..Default::default()
            },
        );
        parts.push(stem);
    }
    let mut extra = BTreeMap::new();
    let joints = joins
        .iter()
        .map(|j| parse_join(j, &mut extra))
        .collect::<Result<Vec<_>>>()?;
    for (k, v) in extra {
        if components.contains_key(&k) {
            return Err(Error::usage(format!(
                "the stiffness file '{}' has the stem '{k}' of a file being coupled; component names come from file stems and must differ",
                v.file.as_deref().unwrap_or("")
            )));
        }
        components.insert(k, v);
    }
    Ok(Recipe {
        format: recipe::RECIPE_FORMAT.into(),
        version: recipe::RECIPE_VERSION,
        title: format!("coupling of {}", parts.join(" + ")),
        grid: None,
        components,
        steps: vec![Step {
            id: "coupled".into(),
            note: None,
            op: Op::Couple(Couple {
                parts,
                joints,
                tsvd: tsvd.map(crate::recipe::RelativeOrNoise::Relative),
                tikhonov: None,
            }),
        }],
        variants: vec![],
        outputs: vec!["coupled".into()],
        sweep: None,
        tolerances: Vec::new(),
    })
}

/// Lexically normalised `p` (no `.`, `..` folded where possible).
fn normalise(p: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in p.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                if !out.pop() {
                    out.push("..");
                }
            }
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// The absolute form of directory `dir` (relative to `cwd`), with symbolic
/// links resolved where it exists.
fn absolute_dir(cwd: &Path, dir: &Path) -> PathBuf {
    let j = cwd.join(dir);
    j.canonicalize().unwrap_or_else(|_| normalise(&j))
}

/// `file` (as given on the command line: relative to the current directory,
/// or absolute) as a path relative to the directory `dir`, with `/` between
/// the parts, so that a recipe written into `dir` finds it.
pub fn relative_to_dir(file: &str, dir: &Path) -> Result<String> {
    let cwd = std::env::current_dir()
        .map_err(|e| Error::io(format!("cannot tell the current directory: {e}")))?;
    let f = Path::new(file);
    let name = f
        .file_name()
        .ok_or_else(|| Error::usage(format!("'{file}' does not end in a file name")))?;
    let parent = f
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    // the file's own name is kept (not resolved): its stem names the component
    let from_dir = absolute_dir(&cwd, dir);
    let from: Vec<Component> = from_dir.components().collect();
    let to_dir = absolute_dir(&cwd, parent);
    let to: Vec<Component> = to_dir.components().collect();
    let common = from.iter().zip(&to).take_while(|(a, b)| a == b).count();
    let text = |c: &Component| -> Result<String> {
        c.as_os_str()
            .to_str()
            .map(str::to_string)
            .ok_or_else(|| Error::io(format!("the path to '{file}' is not valid UTF-8")))
    };
    let mut parts: Vec<String> = Vec::new();
    if common == 0 {
        // no common root (another drive): the absolute path
        return to_dir
            .join(name)
            .to_str()
            .map(|s| s.replace('\\', "/"))
            .ok_or_else(|| Error::io(format!("the path to '{file}' is not valid UTF-8")));
    }
    for _ in common..from.len() {
        parts.push("..".into());
    }
    for c in &to[common..] {
        parts.push(text(c)?);
    }
    parts.push(text(&Component::Normal(name))?);
    Ok(parts.join("/"))
}

/// The recipe as written by `--print-recipe RECIPE`: file names relative to
/// RECIPE's directory.
pub fn recipe_for_file(r: &Recipe, recipe_path: &str) -> Result<Recipe> {
    let dir = Path::new(recipe_path)
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let mut out = r.clone();
    for c in out.components.values_mut() {
        if let Some(f) = &c.file {
            c.file = Some(relative_to_dir(f, dir)?);
        }
    }
    Ok(out)
}

pub fn run(args: &Args) -> Result<Done> {
    if args.positional.len() < 2 {
        return Err(Error::usage(
            "couple needs at least two files, then --join 'A:1+Z = B:1+Z' ... -o OUT",
        ));
    }
    let joins = args.values("join");
    if joins.is_empty() {
        return Err(Error::usage(
            "couple needs at least one --join 'A:1+Z = B:1+Z'",
        ));
    }
    let tsvd = match args.value("tsvd") {
        Some(t) => Some(
            t.trim()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite() && (0.0..1.0).contains(x))
                .ok_or_else(|| {
                    Error::usage(format!(
                        "--tsvd '{t}': expected a fraction from 0 to below 1 of the largest singular value"
                    ))
                })?,
        ),
        None => None,
    };
    let out = args
        .value("o")
        .ok_or_else(|| Error::usage("couple needs -o OUT"))?;
    let fmt = format_from_name(out)?;
    let r = recipe_for(&args.positional, &joins, tsvd)?;
    let json = args.flag("json");
    let limits = super::limits::from_args(args)?;
    let mut result = serde_json::json!({
        "files": args.positional,
        "title": r.title,
        "recipe_file": args.value("print-recipe"),
        "output": null,
    });
    // a printed recipe naming files outside its folder runs only with --read-outside
    let mut note = None;
    let ran = (|| -> Result<(recipe::RunResult, serde_json::Value)> {
        if let Some(p) = args.value("print-recipe") {
            let printed = recipe_for_file(&r, p)?;
            std::fs::write(p, recipe::to_text(&printed))
                .map_err(|e| Error::io(format!("cannot write '{p}': {e}")))?;
            let outside = printed
                .components
                .values()
                .filter_map(|c| c.file.as_deref())
                .any(|f| {
                    Path::new(f).is_absolute()
                        || Path::new(f).components().next() == Some(std::path::Component::ParentDir)
                });
            if outside {
                note = Some(format!(
                    "the recipe {p} names files outside its own folder: run it with 'mortise run {p} -o OUTDIR --read-outside', or move the files beside it"
                ));
            }
        }
        let res = recipe::run_with(&r, &DirSource::anywhere(".", limits), &limits)
            .map_err(|e| as_data(e, ErrorKind::Recipe))?;
        super::limits::check_written(&res.outputs, &limits)?;
        let bytes = io::save(&res.outputs, fmt).map_err(|e| as_data(e, ErrorKind::Internal))?;
        std::fs::write(out, &bytes).map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
        let written = serde_json::json!({
            "file": out,
            "format": fmt.name(),
            "bytes": bytes.len(),
            "sha256": io::sha256_hex(&bytes),
            "content_sha256": io::bundle::content_sha256(&bytes).filter(|_| fmt == io::ExportFormat::Bundle),
        });
        Ok((res, written))
    })();
    match ran {
        Ok((res, written)) if json => {
            result["output"] = written;
            result["note"] = note.into();
            result["report"] = serde_json::to_value(&res.report)
                .map_err(|e| Error::internal(format!("report as JSON: {e}")))?;
            result["caution"] = super::CAUTION.into();
            Ok(Done::json(result))
        }
        Ok((res, written)) => {
            let mut s =
                super::run::summary(&r.title, &res, Path::new(out)).replace("and report.json ", "");
            if let Some(c) = written["content_sha256"].as_str() {
                s.push_str(&format!(
                    "bundle content sha256: {c}
"
                ));
            }
            if let Some(n) = note {
                s.push_str(&format!(
                    "note: {n}
"
                ));
            }
            Ok(Done::text(s))
        }
        Err(e) if json => Ok(Done::json(result).failed(Some(e))),
        Err(e) => Err(e),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::JointType;

    #[test]
    fn join_syntax() {
        let mut x = BTreeMap::new();
        let j = parse_join("a:1+Z = b:2-Z", &mut x).unwrap();
        assert_eq!(
            (j.a.as_str(), j.b.as_str(), &j.kind),
            ("a:1+Z", "b:2-Z", &JointType::Rigid)
        );
        let j = parse_join("a:1+Z=b:2+Z k=2e5 eta=0.1", &mut x).unwrap();
        assert_eq!(j.kind, JointType::Hysteretic { k: 2e5, eta: 0.1 });
        let j = parse_join("a:1+Z=b:2+Z stiffness=iso.csv", &mut x).unwrap();
        assert_eq!(j.type_name(), "measured");
        assert!(x.contains_key("iso"));
        assert!(parse_join("a:1+Z b:2+Z", &mut x)
            .unwrap_err()
            .message
            .contains("no '='"));
        assert!(parse_join("a=b k=x", &mut x)
            .unwrap_err()
            .message
            .contains("'x' is not a number"));
        assert!(parse_join("a:1+Z=b:2+Z stiffness=other/iso.csv", &mut x)
            .unwrap_err()
            .message
            .contains("the same stem 'iso'"));
        let files = ["a.csv".to_string(), "iso.csv".to_string()];
        assert!(
            recipe_for(&files, &["a:1+Z=iso:1+Z stiffness=iso.csv"], None)
                .unwrap_err()
                .message
                .contains("stem 'iso' of a file being coupled")
        );
        assert!(parse_join("a=b q=1", &mut x)
            .unwrap_err()
            .message
            .contains("unknown key 'q'"));
    }
}
