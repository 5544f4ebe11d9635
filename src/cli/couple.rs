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

use super::Args;
use crate::error::{Error, Result};
use crate::io::{self, ExportFormat};
use crate::recipe::{self, ComponentSpec, DirSource, JointSpec, Recipe, Step};
use std::collections::BTreeMap;

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
    let mut j = JointSpec {
        a: a.trim().to_string(),
        b: b.to_string(),
        kind: "rigid".into(),
        k: None,
        c: None,
        eta: None,
        stiffness: None,
    };
    for w in words {
        let (key, val) = w
            .split_once('=')
            .ok_or_else(|| bad(&format!("'{w}' is not key=value")))?;
        if key == "stiffness" {
            let stem = io::file_stem(val);
            extra.insert(
                stem.clone(),
                ComponentSpec {
                    file: Some(val.to_string()),
                    kind: Some("dynamic-stiffness".into()),
                    ..Default::default()
                },
            );
            j.stiffness = Some(stem);
            continue;
        }
        let x: f64 = val
            .parse()
            .map_err(|_| bad(&format!("'{val}' is not a number for {key}")))?;
        match key {
            "k" => j.k = Some(x),
            "c" => j.c = Some(x),
            "eta" => j.eta = Some(x),
            _ => return Err(bad(&format!("unknown key '{key}'"))),
        }
    }
    j.kind = match (j.stiffness.is_some(), j.k, j.c, j.eta) {
        (true, None, None, None) => "measured",
        (true, ..) => return Err(bad("stiffness=FILE cannot be combined with k, c or eta")),
        (false, None, None, None) => "rigid",
        (false, Some(_), None, None) => "spring",
        (false, None, Some(_), None) => "damper",
        (false, Some(_), None, Some(_)) => "hysteretic",
        (false, Some(_), _, _) => "spring-damper",
        (false, None, _, Some(_)) => return Err(bad("eta needs k")),
    }
    .to_string();
    Ok(j)
}

/// The export format implied by a file name's extension.
pub fn format_from_name(name: &str) -> Result<ExportFormat> {
    let lower = name.to_ascii_lowercase();
    let ext = lower.rsplit('.').next().unwrap_or("");
    Ok(match ext {
        "uff" | "unv" => ExportFormat::Uff,
        "uffb" => ExportFormat::UffBinary,
        "csv" | "tsv" | "txt" => ExportFormat::Csv,
        "json" | "mortise" => ExportFormat::Bundle,
        _ => {
            return Err(Error::usage(format!(
                "cannot tell the output format from '{name}'; use an extension .uff, .uffb, .csv or .json (bundle)"
            )))
        }
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
        components.entry(k).or_insert(v);
    }
    Ok(Recipe {
        format: recipe::RECIPE_FORMAT.into(),
        version: recipe::RECIPE_VERSION,
        title: format!("coupling of {}", parts.join(" + ")),
        grid: None,
        components,
        steps: vec![Step {
            id: "coupled".into(),
            op: "couple".into(),
            parts: Some(parts),
            joints: Some(joints),
            tsvd,
            ..Default::default()
        }],
        variants: vec![],
        outputs: vec!["coupled".into()],
    })
}

pub fn run(args: &Args) -> Result<String> {
    args.only(&["join", "o", "tsvd", "print-recipe"])?;
    if args.positional.len() < 2 {
        return Err(Error::usage(
            "mortise couple needs at least two files, then --join 'A:1+Z = B:1+Z' ... -o OUT",
        ));
    }
    let joins = args.values("join");
    if joins.is_empty() {
        return Err(Error::usage(
            "mortise couple needs at least one --join 'A:1+Z = B:1+Z'",
        ));
    }
    let tsvd = match args.value("tsvd") {
        Some(t) => Some(
            t.parse::<f64>()
                .map_err(|_| Error::usage(format!("--tsvd '{t}' is not a number")))?,
        ),
        None => None,
    };
    let r = recipe_for(&args.positional, &joins, tsvd)?;
    if let Some(p) = args.value("print-recipe") {
        std::fs::write(p, recipe::to_text(&r))
            .map_err(|e| Error::io(format!("cannot write '{p}': {e}")))?;
    }
    let out = args
        .value("o")
        .ok_or_else(|| Error::usage("mortise couple needs -o OUT"))?;
    let fmt = format_from_name(out)?;
    let res = recipe::run(&r, &DirSource(".".into()))?;
    let bytes = io::save(&res.outputs, fmt)?;
    std::fs::write(out, bytes).map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
    let mut s = super::run::summary(&r.title, &res, std::path::Path::new(out));
    s = s.replace("and report.json ", "");
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn join_syntax() {
        let mut x = BTreeMap::new();
        let j = parse_join("a:1+Z = b:2-Z", &mut x).unwrap();
        assert_eq!(
            (j.a.as_str(), j.b.as_str(), j.kind.as_str()),
            ("a:1+Z", "b:2-Z", "rigid")
        );
        let j = parse_join("a:1+Z=b:2+Z k=2e5 eta=0.1", &mut x).unwrap();
        assert_eq!(
            (j.kind.as_str(), j.k, j.eta),
            ("hysteretic", Some(2e5), Some(0.1))
        );
        let j = parse_join("a:1+Z=b:2+Z stiffness=iso.csv", &mut x).unwrap();
        assert_eq!(j.kind, "measured");
        assert!(x.contains_key("iso"));
        assert!(parse_join("a:1+Z b:2+Z", &mut x)
            .unwrap_err()
            .message
            .contains("no '='"));
        assert!(parse_join("a=b k=x", &mut x)
            .unwrap_err()
            .message
            .contains("'x' is not a number"));
        assert!(parse_join("a=b q=1", &mut x)
            .unwrap_err()
            .message
            .contains("unknown key 'q'"));
    }
}
