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
    let limits = super::limits::from_args(args)?;
    let mut result = serde_json::json!({ "recipe": path, "outdir": out.display().to_string() });
    let ran = (|| -> Result<(recipe::Recipe, RunResult, Written)> {
        let bytes = io::disk::read_file(Path::new(path), path, &limits)?;
        let recipe_sha = io::sha256_hex(&bytes);
        // names inside the recipe (or the bundle) are read from its folder
        let folder = recipe_folder(path, args, limits);
        let (r, res) = if matches!(io::detect(&bytes, path), Ok(io::Format::Bundle)) {
            if args.value("monte-carlo").is_some() || args.value("seed").is_some() {
                return Err(Error::usage(
                    "--monte-carlo and --seed run on a recipe file, not on a bundle",
                ));
            }
            run_bundle(path, &bytes, &folder, &limits)?
        } else {
            let text = String::from_utf8(bytes).map_err(|e| {
                let at = e.utf8_error().valid_up_to();
                Error::parse("a recipe is UTF-8 text; this byte does not begin a UTF-8 character")
                    .at_byte(at)
                    .in_file(path.as_str())
            })?;
            let r = recipe::parse(&text)
                .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
            let mut res = recipe::run_with(&r, &folder, &limits)
                .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
            if let Some(mc) = monte_carlo_options(args)? {
                let m = recipe::monte_carlo_levels(&r, &folder, &limits, mc)
                    .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
                // the levels the headline shows: path totals, else responses
                let has_paths = m.levels.iter().any(|l| l.op == "paths");
                for l in m.levels.iter().filter(|l| l.op == "paths" || !has_paths) {
                    res.report.headline.push(format!(
                        "Monte Carlo of the recipe ({} draws, seed {}): {} at {}: 95 % interval {:.1}–{:.1} {u} (mean {:.1} {u}, standard deviation {:.2} dB)",
                        m.draws,
                        m.seed,
                        l.step,
                        l.dof,
                        l.interval_95_db[0],
                        l.interval_95_db[1],
                        l.mean_db,
                        l.std_db,
                        u = l.unit
                    ));
                }
                res.report.monte_carlo = Some(m);
            }
            (r, res)
        };
        super::limits::check_written(&res.outputs, &limits)?;
        let mut w = write_outputs(&res, &out)?;
        if let Some(sw) = &res.report.sweep {
            // the SHA-256 of the file run (the recipe, or the bundle)
            w.files.insert(
                w.files.len().saturating_sub(1),
                write_sweep(sw, &recipe_sha, &out)?,
            );
        }
        Ok((r, res, w))
    })();
    match ran {
        Ok((r, res, w)) => {
            if !json {
                return Ok(Done::text(summary(&r.title, &res, &out)));
            }
            result["title"] = r.title.clone().into();
            result["files"] = w.files.into();
            result["headline"] = res.report.headline.clone().into();
            result["report"] = serde_json::to_value(&w.report)
                .map_err(|e| internal(format!("report as JSON: {e}")))?;
            result["caution"] = super::CAUTION.into();
            Ok(Done::json(result))
        }
        Err(e) if json => Ok(Done::json(result).failed(Some(e))),
        Err(e) => Err(e),
    }
}

/// `--monte-carlo N` and `--seed S`, checked (`--seed` alone is refused).
pub(crate) fn monte_carlo_options(args: &Args) -> Result<Option<crate::uncertainty::McOptions>> {
    let seed = match args.value("seed") {
        None => None,
        Some(t) => Some(t.trim().parse::<u64>().map_err(|_| {
            Error::usage(format!(
                "--seed '{}': expected a whole number from 0 to 18446744073709551615",
                crate::error::quote(t)
            ))
        })?),
    };
    let Some(n) = args.value("monte-carlo") else {
        if seed.is_some() {
            return Err(Error::usage(
                "--seed sets the draws of --monte-carlo; give --monte-carlo N too",
            ));
        }
        return Ok(None);
    };
    let draws = n
        .trim()
        .parse::<usize>()
        .ok()
        .filter(|&d| d >= 2)
        .ok_or_else(|| {
            Error::usage(format!(
                "--monte-carlo '{}': expected a whole number of draws, 2 or more",
                crate::error::quote(n)
            ))
        })?;
    Ok(Some(crate::uncertainty::McOptions {
        draws,
        seed: seed.unwrap_or(1),
    }))
}

/// Write `NAME.sweep.csv` (and a speed sweep's `NAME.map.sweep.csv`) into
/// `out`, the recipe's SHA-256 recorded in them; the level file's path.
pub(crate) fn write_sweep(sw: &recipe::SweepReport, sha: &str, out: &Path) -> Result<String> {
    std::fs::create_dir_all(out)
        .map_err(|e| Error::io(format!("cannot create '{}': {e}", out.display())))?;
    let stem = safe_name(&sw.name);
    if let Some(map) = recipe::sweep_map_csv(sw, sha) {
        let p = out.join(format!("{stem}.map.sweep.csv"));
        std::fs::write(&p, map)
            .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
    }
    let p = out.join(format!("{stem}.sweep.csv"));
    std::fs::write(&p, recipe::sweep_csv(sw, sha))
        .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
    Ok(p.display().to_string())
}

/// What [`write_outputs`] wrote.
pub struct Written {
    /// Every file written, report.json last.
    pub files: Vec<String>,
    /// The report as written (with `uff_node_numbers`).
    pub report: crate::recipe::RunReport,
}

/// Run the recipe a bundle holds, on the inputs it carries; withheld inputs
/// are read from files of the same name beside the bundle (their SHA-256
/// must match the bundle's record).
fn run_bundle(
    path: &str,
    bytes: &[u8],
    folder: &DirSource,
    limits: &crate::limits::Limits,
) -> Result<(recipe::Recipe, RunResult)> {
    let mut ws = crate::workspace::Workspace::new();
    ws.set_limits(*limits)?;
    let opened = ws.open_bundle(path, bytes)?;
    for name in &opened.missing {
        // a name the bundle gives: confined like a recipe's
        let p = folder.resolve(name)?;
        if !p.is_file() {
            continue;
        }
        let b = folder.read(name)?;
        let opts = ws.bundle_input_options(name).cloned().unwrap_or_default();
        ws.load_file_with_progress(name, b, opts, &mut |_| {})?;
    }
    let missing = ws.missing_inputs();
    if !missing.is_empty() {
        return Err(Error::missing(format!(
            "the bundle withholds {}; put the original file(s) beside it (same name, same SHA-256) to run it",
            missing.join(", ")
        ))
        .in_file(path));
    }
    let text = ws
        .bundle_recipe_text()
        .ok_or_else(|| Error::missing("the bundle holds no recipe").in_file(path))?;
    let r = recipe::parse(&text).map_err(|e| e.in_file(path).field("recipe"))?;
    let mut res = ws.run(&r).map_err(|e| e.in_file(path))?;
    // what the bundle's hashes proved (or, for an earlier version, could not)
    if let Some(c) = &opened.content_sha256 {
        res.report.notes.push(format!(
            "bundle content sha256 {c} (checked, as was every hash it records)"
        ));
    }
    res.report.notes.extend(opened.notes.iter().cloned());
    Ok((r, res))
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

/// The file name stem of every output, refused before anything is written
/// when two outputs would share a file ("a b" and "a_b" are both `a_b`) or
/// a name would make a hidden or nameless file. Names that differ only in
/// case collide too (they do on macOS's and Windows' file systems).
fn file_names<'a>(names: impl Iterator<Item = &'a str>) -> Result<Vec<String>> {
    let mut seen: std::collections::BTreeMap<String, &str> = Default::default();
    let mut stems = Vec::new();
    for name in names {
        let stem = safe_name(name);
        if stem.is_empty() || stem.starts_with('.') {
            return Err(Error::recipe(format!(
                "output '{}' cannot be a file name ('{}'): give it a name that starts with a letter or digit",
                crate::error::quote(name),
                crate::error::quote(&stem)
            ))
            .field("outputs"));
        }
        // case folded: "Bed" and "bed" are one file on some file systems
        if let Some(first) = seen.insert(stem.to_lowercase(), name) {
            return Err(Error::recipe(format!(
                "outputs '{}' and '{}' would both be written as {}.uff and {}.csv; rename one (names keep letters, digits, '-', '_' and '.'; anything else becomes '_')",
                crate::error::quote(first),
                crate::error::quote(name),
                crate::error::quote(&stem),
                crate::error::quote(&stem)
            ))
            .field("outputs"));
        }
        stems.push(stem);
    }
    Ok(stems)
}

/// Each identify-modes step's scaled modal model as `ID.modes.json` (the
/// `ModalModel` serde form) and `ID.modes.unv` (UFF dataset 55, when its
/// DOFs allow it; the report's notes say what was left out or why not).
fn write_models(
    report: &mut crate::recipe::RunReport,
    out: &Path,
    files: &mut Vec<String>,
) -> Result<()> {
    let models: Vec<(String, crate::synth::ModalModel)> = report
        .steps
        .iter()
        .filter_map(|s| Some((s.id.clone(), s.identification.as_ref()?.model.clone()?)))
        .collect();
    let stems = file_names(models.iter().map(|(id, _)| id.as_str()))?;
    for ((id, model), stem) in models.iter().zip(stems) {
        let json = serde_json::to_string_pretty(model)
            .map_err(|e| internal(format!("modal model as JSON: {e}")))?;
        let p = out.join(format!("{stem}.modes.json"));
        std::fs::write(&p, json)
            .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
        files.push(p.display().to_string());
        match crate::identify::model_uff55(model) {
            Ok((text, note)) => {
                let p = out.join(format!("{stem}.modes.unv"));
                std::fs::write(&p, text)
                    .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
                files.push(p.display().to_string());
                if let Some(n) = note {
                    report
                        .notes
                        .push(format!("step '{id}': {stem}.modes.unv: {n}"));
                }
            }
            Err(e) => report.notes.push(format!(
                "step '{id}': the modal model is not written as UFF dataset 55: {}",
                e.message
            )),
        }
    }
    Ok(())
}

/// The size of the stabilization charts `mortise run` writes, pixels.
pub const CHART_SIZE: [f64; 2] = [960.0, 600.0];

/// Each identify-modes step's stabilization chart as `ID.stability.svg`,
/// drawn by [`crate::plot::stabilization_svg`] (the page draws the same); a
/// chart that cannot be drawn is a note of the report, naming the step.
fn write_charts(
    report: &mut crate::recipe::RunReport,
    out: &Path,
    files: &mut Vec<String>,
) -> Result<()> {
    let charts: Vec<(String, crate::identify::StabilizationChart)> = report
        .steps
        .iter()
        .filter_map(|s| {
            let id = s.identification.as_ref()?;
            Some((s.id.clone(), crate::identify::stabilization_chart(id)))
        })
        .collect();
    let stems = file_names(charts.iter().map(|(id, _)| id.as_str()))?;
    for ((id, chart), stem) in charts.iter().zip(stems) {
        match crate::plot::stabilization_svg(chart, CHART_SIZE[0], CHART_SIZE[1]) {
            Ok(d) => {
                let p = out.join(format!("{stem}.stability.svg"));
                std::fs::write(&p, format!("{}\n", d.svg))
                    .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
                files.push(p.display().to_string());
            }
            Err(e) => report.notes.push(format!(
                "step '{id}': no stabilization chart is written: {}",
                e.message
            )),
        }
    }
    Ok(())
}

/// Write each output as `NAME.uff` and `NAME.csv` (with `NAME.uncertainty.csv`
/// when it carries an uncertainty), and `report.json`.
/// Text node labels are numbered for UFF (which needs integers) by
/// [`io::export`], as the page's export numbers them; the report lists the
/// numbers under `uff_node_numbers`.
pub fn write_outputs(res: &RunResult, out: &Path) -> Result<Written> {
    let stems = file_names(res.outputs.iter().map(|s| s.name.as_str()))?;
    std::fs::create_dir_all(out)
        .map_err(|e| Error::io(format!("cannot create '{}': {e}", out.display())))?;
    let mut report = res.report.clone();
    let mut numbers = std::collections::BTreeMap::new();
    let mut files = Vec::new();
    for (s, base) in res.outputs.iter().zip(&stems) {
        for (fmt, ext) in [(ExportFormat::Uff, "uff"), (ExportFormat::Csv, "csv")] {
            let ex = io::export(std::slice::from_ref(s), fmt)
                .map_err(|e| as_data(e, ErrorKind::Internal))?;
            if !ex.node_numbers.is_empty() {
                numbers.insert(
                    s.name.clone(),
                    serde_json::to_value(&ex.node_numbers)
                        .map_err(|e| internal(format!("UFF node numbers as JSON: {e}")))?,
                );
            }
            let p = out.join(format!("{base}.{ext}"));
            std::fs::write(&p, ex.bytes)
                .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
            files.push(p.display().to_string());
        }
    }
    for (s, base) in res.outputs.iter().zip(&stems) {
        if res.uncertainties.contains_key(&s.name) && stems.contains(&format!("{base}.uncertainty"))
        {
            return Err(Error::usage(format!(
                "output '{}' has an uncertainty, written as {base}.uncertainty.csv, and another output would be written as {base}.uncertainty.csv too; rename one",
                s.name
            )));
        }
        let Some(a) = res.uncertainties.get(&s.name) else {
            continue;
        };
        let text = crate::uncertainty::csv::to_csv(s, &a.uncertainty, &a.reliability)
            .map_err(|e| as_data(e, ErrorKind::Internal))?;
        let p = out.join(format!("{base}.uncertainty.csv"));
        std::fs::write(&p, text)
            .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
        files.push(p.display().to_string());
    }
    report.uff_node_numbers = numbers;
    write_models(&mut report, out, &mut files)?;
    write_charts(&mut report, out, &mut files)?;
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
    for n in &res.report.notes {
        let _ = writeln!(s, "  note: {n}");
    }
    let mut seen: Vec<&String> = Vec::new();
    for st in &res.report.steps {
        if let Some(i) = &st.interface {
            if let Some(c) = i.worst_condition {
                let _ = writeln!(
                    s,
                    "  step '{}': interface condition number up to {c:.3e}{}",
                    st.id,
                    i.worst_condition_hz
                        .map(|f| format!(" (at {f} Hz)"))
                        .unwrap_or_default()
                );
            }
        }
        if let Some(b) = &st.blocked {
            if let Some(c) = b.worst_indicator_condition {
                let _ = writeln!(
                    s,
                    "  step '{}': indicator matrix condition number up to {c:.3e}{}",
                    st.id,
                    b.worst_indicator_condition_hz
                        .map(|f| format!(" (at {f} Hz)"))
                        .unwrap_or_default()
                );
            }
            if let Some(v) = b.validation.as_ref().and_then(|v| v.worst_band_error_db) {
                let _ = writeln!(
                    s,
                    "  step '{}': on-board validation, largest 1/3-octave band error {v:.1} dB",
                    st.id
                );
            }
            if let Some(t) = &b.target {
                let err = t
                    .worst_error_db
                    .map(|e| format!(", largest level error against the measured {e:.2} dB"))
                    .unwrap_or_default();
                let band = b
                    .prediction_bands
                    .iter()
                    .find(|p| p.of == "target")
                    .and_then(|p| p.median_upper_db.iter().flatten().copied().reduce(f64::max))
                    .map(|u| format!(", 95 % band up to +{u:.2} dB (median over the lines)"))
                    .unwrap_or_default();
                let _ = writeln!(
                    s,
                    "  step '{}': {} blocked forces, target(s) {} predicted{err}{band}",
                    st.id,
                    b.method,
                    t.dofs.join(", ")
                );
            }
        }
        for w in &st.warnings {
            // the caution is printed once, at the end
            if w != super::CAUTION && !seen.contains(&w) {
                seen.push(w);
                let _ = writeln!(s, "  warning: {w}");
            }
        }
    }
    for line in &res.report.headline {
        let _ = writeln!(s, "{line}");
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

/// The folder a recipe's (or bundle's) file names are read from: its own,
/// confined to it unless `--read-outside` (shared by `run` and `sweep`).
pub(super) fn recipe_folder(path: &str, args: &Args, limits: crate::limits::Limits) -> DirSource {
    let dir = Path::new(path)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    if args.flag("read-outside") {
        DirSource::anywhere(dir, limits)
    } else {
        DirSource::confined(dir, limits)
    }
}
