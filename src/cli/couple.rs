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
use crate::recipe::{self, ComponentSpec, Couple, DirSource, JointSpec, Op, Recipe, Step};
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
    let (mut k, mut c, mut eta, mut stiffness) = (None, None, None, None);
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
            stiffness = Some(stem);
            continue;
        }
        let x: f64 = val
            .parse()
            .map_err(|_| bad(&format!("'{val}' is not a number for {key}")))?;
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
            note: None,
            op: Op::Couple(Couple {
                parts,
                joints,
                tsvd,
            }),
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
        assert!(parse_join("a=b q=1", &mut x)
            .unwrap_err()
            .message
            .contains("unknown key 'q'"));
    }
}
