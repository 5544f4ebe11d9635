//! `mortise convert IN... -o OUT [--to uff|uff-binary|csv|bundle] [--kind KIND] [--units si]`:
//! read every input (column-map options as for `inspect`), optionally change
//! the FRF kind, and write all sets to OUT. A file that cannot be read is
//! reported, the others are still written, and the command then fails.

use super::inspect::{import_options, load_files, IMPORT_OPTIONS, MAP_HELP};
use super::Args;
use crate::error::{Error, Result};
use crate::grid::{to_common_grid, GridChoice, Interp};
use crate::io::{self, ExportFormat};

const USAGE: &str = "usage: mortise convert IN... -o OUT [--to uff|uff-binary|csv|bundle] [--kind KIND] [--units si] [column-map options]
  --to       output format; default from OUT's extension (.uff/.unv, .csv, .json)
  --kind     receptance, mobility, accelerance, dynamic-stiffness, impedance or apparent-mass
  --units    si (every format mortise writes holds SI values)
  --grid     finest|coarsest|START:STOP:STEP  put every set on one grid: the finest or
             coarsest of the inputs' lines inside the range all cover, or an even grid in Hz
             (never extrapolated: a grid beyond any input's range is an error)
  --interp   re-im|log-mag-phase  interpolation for --grid (default re-im)
";

/// Parse `--grid`.
fn grid_choice(text: &str) -> Result<GridChoice> {
    match text.trim() {
        "finest" => return Ok(GridChoice::Finest),
        "coarsest" => return Ok(GridChoice::Coarsest),
        _ => {}
    }
    let parts: Vec<&str> = text.split(':').collect();
    let bad = || {
        Error::usage(format!(
            "--grid '{text}': expected finest, coarsest or START:STOP:STEP in Hz, e.g. 10:1000:2.5"
        ))
    };
    if parts.len() != 3 {
        return Err(bad());
    }
    let v: Vec<f64> = parts
        .iter()
        .map(|p| p.trim().parse::<f64>().map_err(|_| bad()))
        .collect::<Result<_>>()?;
    let (a, b, st) = (v[0], v[1], v[2]);
    if !(a.is_finite() && b.is_finite() && st.is_finite() && st > 0.0 && b >= a && a >= 0.0) {
        return Err(bad());
    }
    let n = ((b - a) / st + 1e-9).floor() as usize + 1;
    if n > 10_000_000 {
        return Err(Error::usage(format!(
            "--grid '{text}' asks for {n} lines; at most 10 000 000"
        )));
    }
    Ok(GridChoice::Given {
        freqs: (0..n).map(|k| a + k as f64 * st).collect(),
    })
}

pub fn run(args: &Args) -> Result<String> {
    if args.flag("help") {
        return Ok(format!("{USAGE}\n{MAP_HELP}"));
    }
    let mut known = vec!["o", "to", "kind", "units", "grid", "interp", "help"];
    known.extend_from_slice(IMPORT_OPTIONS);
    args.only(&known)?;
    if args.positional.is_empty() {
        return Err(Error::usage(format!(
            "convert needs at least one input file\n{USAGE}"
        )));
    }
    let Some(out_path) = args.value("o") else {
        return Err(Error::usage(format!("convert needs -o OUT\n{USAGE}")));
    };
    let fmt = match args.value("to") {
        Some(t) => ExportFormat::parse(t)?,
        None => ExportFormat::from_extension(out_path).ok_or_else(|| {
            Error::usage(format!(
                "cannot tell the output format from '{out_path}'; give --to uff, uff-binary, csv or bundle (or name it .uff, .csv or .json)"
            ))
        })?,
    };
    match args.value("units") {
        None => {}
        Some(u) if u.eq_ignore_ascii_case("si") => {}
        Some(u) => {
            return Err(Error::usage(format!(
                "--units '{u}': mortise writes SI values only (--units si); units of other programs' exports are set when reading"
            )))
        }
    }
    let grid = args.value("grid").map(grid_choice).transpose()?;
    let interp = match args.value("interp") {
        Some(i) => Interp::parse(i)?,
        None => Interp::default(),
    };
    if args.value("interp").is_some() && grid.is_none() {
        return Err(Error::usage("--interp needs --grid"));
    }
    let opts = import_options(args)?;
    let results = load_files(&args.positional, &opts);
    let mut report = String::new();
    let mut sets = Vec::new();
    let mut failures = Vec::new();
    for f in results {
        match f.result {
            Ok(l) => {
                report.push_str(&format!(
                    "read {}: {}, {} set(s)\n",
                    f.path,
                    l.format.name(),
                    l.sets.len()
                ));
                for w in &l.warnings {
                    report.push_str(&format!("  warning: {w}\n"));
                }
                for s in l.sets {
                    let s = match args.value("kind") {
                        None => s,
                        Some(k) => {
                            if s.signal.is_some() {
                                failures.push(
                                    Error::quantity(format!(
                                        "'{}' is a spectrum, not an FRF; --kind does not apply",
                                        s.name
                                    ))
                                    .in_file(f.path.as_str()),
                                );
                                continue;
                            }
                            match s.to_kind(k) {
                                Ok(c) => c,
                                Err(e) => {
                                    failures.push(e.in_file(f.path.as_str()));
                                    continue;
                                }
                            }
                        }
                    };
                    sets.push(s);
                }
            }
            Err(e) => failures.push(e),
        }
    }
    for e in &failures {
        report.push_str(&format!("error: {e}\n"));
    }
    if sets.is_empty() {
        return Err(Error::new(
            failures
                .first()
                .map_or(crate::ErrorKind::Missing, |e| e.kind),
            format!("{report}nothing to write: no input could be read"),
        ));
    }
    if let Some(g) = &grid {
        let (freqs, resampled) = to_common_grid(&sets, g, interp)?;
        report.push_str(&format!(
            "grid: {} lines, {} Hz to {} Hz, {}\n",
            freqs.len(),
            freqs[0],
            freqs[freqs.len() - 1],
            interp.name()
        ));
        sets = resampled;
    }
    let bytes = io::save(&sets, fmt)?;
    std::fs::write(out_path, &bytes)
        .map_err(|e| Error::io(format!("cannot write: {e}")).in_file(out_path))?;
    report.push_str(&format!(
        "wrote {out_path}: {}, {} set(s), {} bytes, sha256 {}\n",
        fmt.name(),
        sets.len(),
        bytes.len(),
        io::sha256_hex(&bytes)
    ));
    match failures.first() {
        None => Ok(report),
        Some(e) => Err(Error::new(
            e.kind,
            format!(
                "{report}{} problem(s); the sets that could be read were written",
                failures.len()
            ),
        )),
    }
}
