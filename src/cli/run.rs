//! `mortise run RECIPE -o OUTDIR`: execute a recipe from files alone and write
//! every requested output as UFF 58 and as our CSV, plus `report.json`.

use super::{as_data, internal, Args, Done};
use crate::error::{Error, ErrorKind, Result};
use crate::io::{self, ExportFormat};
use crate::recipe::{self, DirSource, RunResult};
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

pub fn run(args: &Args) -> Result<Done> {
    let path = match args.positional.as_slice() {
        [p] => p,
        [] => return Err(Error::usage("run needs a RECIPE file")),
        more => {
            return Err(Error::usage(format!(
                "run takes one RECIPE; found {} operands ({})",
                more.len(),
                more.join(" ")
            )))
        }
    };
    let out = PathBuf::from(
        args.value("o")
            .ok_or_else(|| Error::usage("run needs -o OUTDIR"))?,
    );
    let json = args.flag("json");
    let mut result = serde_json::json!({ "recipe": path, "outdir": out.display().to_string() });
    let ran = (|| -> Result<(recipe::Recipe, RunResult, Written)> {
        let text = std::fs::read_to_string(path)
            .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?;
        let r = recipe::parse(&text)
            .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
        let dir = Path::new(path)
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let res = recipe::run(&r, &DirSource(dir))
            .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
        let w = write_outputs(&res, &out)?;
        Ok((r, res, w))
    })();
    match ran {
        Ok((r, res, w)) => {
            if !json {
                return Ok(Done::text(summary(&r.title, &res, &out)));
            }
            result["title"] = r.title.clone().into();
            result["files"] = w.files.into();
            result["headline"] = res.report.get("headline").cloned().unwrap_or_default();
            result["report"] = w.report;
            result["caution"] = super::CAUTION.into();
            Ok(Done::json(result))
        }
        Err(e) if json => Ok(Done::json(result).failed(Some(e))),
        Err(e) => Err(e),
    }
}

/// What [`write_outputs`] wrote.
pub struct Written {
    /// Every file written, report.json last.
    pub files: Vec<String>,
    /// The report as written (with `uff_node_numbers`).
    pub report: serde_json::Value,
}

/// File-name-safe form of an output name.
pub fn safe_name(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.' {
                c
            } else {
                '_'
            }
        })
        .collect()
}

/// Write each output as `NAME.uff` and `NAME.csv`, and `report.json`.
/// Text node labels are numbered for UFF (which needs integers); the report
/// lists the numbers under `uff_node_numbers`.
pub fn write_outputs(res: &RunResult, out: &Path) -> Result<Written> {
    std::fs::create_dir_all(out)
        .map_err(|e| Error::io(format!("cannot create '{}': {e}", out.display())))?;
    let mut report = res.report.clone();
    let mut numbers = serde_json::Map::new();
    let mut files = Vec::new();
    for s in &res.outputs {
        let base = safe_name(&s.name);
        let (uff_sets, map) = io::nodes::numbered(std::slice::from_ref(s));
        if !map.is_empty() {
            numbers.insert(
                s.name.clone(),
                serde_json::to_value(&map)
                    .map_err(|e| internal(format!("UFF node numbers as JSON: {e}")))?,
            );
        }
        let forms: [(&[crate::frf::FrfSet], ExportFormat, &str); 2] = [
            (&uff_sets, ExportFormat::Uff, "uff"),
            (std::slice::from_ref(s), ExportFormat::Csv, "csv"),
        ];
        for (sets, fmt, ext) in forms {
            let bytes = io::save(sets, fmt).map_err(|e| as_data(e, ErrorKind::Internal))?;
            let p = out.join(format!("{base}.{ext}"));
            std::fs::write(&p, bytes)
                .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
            files.push(p.display().to_string());
        }
    }
    report["uff_node_numbers"] = serde_json::Value::Object(numbers);
    let p = out.join("report.json");
    let text = serde_json::to_string_pretty(&report)
        .map_err(|e| internal(format!("report as JSON: {e}")))?;
    std::fs::write(&p, text)
        .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
    files.push(p.display().to_string());
    Ok(Written { files, report })
}

/// What `mortise run` prints.
pub fn summary(title: &str, res: &RunResult, out: &Path) -> String {
    let mut s = String::new();
    if !title.is_empty() {
        let _ = writeln!(s, "{title}");
    }
    let mut seen: Vec<String> = Vec::new();
    if let Some(steps) = res.report["steps"].as_array() {
        for st in steps {
            if let Some(c) = st["worst_condition"].as_f64() {
                let _ = writeln!(
                    s,
                    "  step '{}': interface condition number up to {:.3e} (at {} Hz)",
                    st["id"].as_str().unwrap_or("?"),
                    c,
                    st["worst_condition_hz"]
                        .as_f64()
                        .map(|f| format!("{f}"))
                        .unwrap_or_else(|| "?".into())
                );
            }
            if let Some(ws) = st["warnings"].as_array() {
                for w in ws {
                    let w = w.as_str().unwrap_or("");
                    // the caution is printed once, at the end
                    if w != super::CAUTION && !seen.contains(&w.to_string()) {
                        seen.push(w.to_string());
                        let _ = writeln!(s, "  warning: {w}");
                    }
                }
            }
        }
    }
    if let Some(h) = res.report.get("headline").and_then(|h| h.as_array()) {
        for line in h {
            let _ = writeln!(s, "{}", line.as_str().unwrap_or(""));
        }
    }
    let _ = writeln!(
        s,
        "wrote {} output(s) and report.json to {}",
        res.outputs.len(),
        out.display()
    );
    let _ = writeln!(s, "caution: {}", super::CAUTION);
    s
}
