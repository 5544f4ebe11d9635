//! `mortise convert IN... -o OUT [--to uff|uff-binary|csv|bundle] [--kind KIND] [--units si]`:
//! read every input (column-map options as for `inspect`), optionally change
//! the FRF kind, and write all sets to OUT. A file or set that cannot be read
//! or converted is reported, the others are still written, and the command
//! then fails (exit 1). Options are in [`super::spec::CONVERT`].

use super::inspect::{import_options, load_files};
use super::{as_data, error_json, Args, Done};
use crate::error::{quote, Error, ErrorKind, Result};
use crate::frf::{FrfKind, FrfSet};
use crate::grid::{common_grid, even_lines, to_common_grid, GridChoice, Interp};
use crate::io::{self, ExportFormat};
use crate::limits::{product, Limits};
use crate::synth::Synth;

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
    if a < 0.0 {
        return Err(bad());
    }
    // counted before anything is allocated: a tiny step is refused with
    // the number of lines it asks for
    let freqs = even_lines(
        &format!("--grid '{}'", quote(text)),
        a,
        b,
        st,
        MAX_CONVERT_LINES,
    )
    .map_err(|e| Error::usage(e.message))?;
    Ok(GridChoice::Given { freqs })
}

/// The most lines `--grid START:STOP:STEP` may ask for.
pub const MAX_CONVERT_LINES: usize = 10_000_000;

/// Bytes a conversion holds per complex value written: the value (16),
/// the resampling's temporaries and the output text (measured peak: 97
/// bytes per value for UFF 58 ASCII, 64 for our CSV, on 98,001 lines × 16
/// FRFs; DEVELOPERS.md), rounded up.
pub const CONVERT_BYTES_PER_VALUE: u64 = 128;

/// Refuse a conversion onto `lines` lines whose sets and written file would
/// exceed the memory budget (checked before resampling).
fn check_converted(sets: &[FrfSet], lines: usize, limits: &Limits) -> Result<()> {
    let values = sets.iter().try_fold(0u64, |a, s| {
        a.checked_add(product(&[lines, s.n_out(), s.n_in()])?)
    });
    limits.check_bytes(
        &format!(
            "putting {} set(s) on a grid of {lines} lines ({} values, about {CONVERT_BYTES_PER_VALUE} bytes each with the file written)",
            sets.len(),
            values.map_or("uncountably many".to_string(), |v| v.to_string())
        ),
        values.and_then(|v| v.checked_mul(CONVERT_BYTES_PER_VALUE)),
    )?;
    limits.check_work(
        &format!(
            "resampling and writing {} values",
            values.unwrap_or(u64::MAX)
        ),
        values.map_or(f64::INFINITY, |v| {
            v as f64 * super::limits::WRITE_WORK_PER_VALUE
        }),
    )
}

pub fn run(args: &Args) -> Result<Done> {
    if args.positional.is_empty() {
        return Err(Error::usage("convert needs at least one input file"));
    }
    let Some(out_path) = args.value("o") else {
        return Err(Error::usage("convert needs -o OUT"));
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
    let kind = args.value("kind");
    if let Some(k) = kind {
        FrfKind::quantities(k).map_err(|e| Error::usage(format!("--kind: {}", e.message)))?;
    }
    let limits = super::limits::from_args(args)?;
    let grid = args.value("grid").map(grid_choice).transpose()?;
    let interp = match args.value("interp") {
        Some(i) => {
            Interp::parse(i).map_err(|e| Error::usage(format!("--interp: {}", e.message)))?
        }
        None => Interp::default(),
    };
    if args.value("interp").is_some() && grid.is_none() {
        return Err(Error::usage("--interp needs --grid"));
    }
    let json = args.flag("json");
    let opts = import_options(args)?;
    let results = load_files(&args.positional, &opts, &limits);
    let mut report = String::new();
    let mut inputs = Vec::new();
    let mut sets = Vec::new();
    let mut failures: Vec<Error> = Vec::new();
    let mut failed_files = 0;
    for f in results {
        let mut entry = serde_json::json!({ "file": f.path, "sha256": f.sha256 });
        match f.result {
            Ok(mut l) => {
                // a file of modes (UFF dataset 55) and no FRFs: synthesized
                // on the --grid START:STOP:STEP lines
                if let (true, Some(m)) = (
                    l.sets.is_empty(),
                    l.uff.as_ref().and_then(|x| x.modal.clone()),
                ) {
                    match &grid {
                        Some(GridChoice::Given { freqs }) => {
                            match Synth::Modal(m).synthesize_with(freqs, &limits) {
                                Ok(s) => {
                                    l.sets.push(s);
                                    l.warnings
                                        .retain(|w| !w.starts_with("the file holds no FRF sets"));
                                }
                                Err(e) => l.warnings.push(format!("modal model not synthesized: {e}")),
                            }
                        }
                        _ => l.warnings.push(
                            "the file holds a modal model (dataset 55) and no FRFs; give --grid START:STOP:STEP to synthesize its receptances".to_string(),
                        ),
                    }
                }
                report.push_str(&format!(
                    "read {}: {}, {} set(s)\n",
                    f.path,
                    l.format.name(),
                    l.sets.len()
                ));
                for w in &l.warnings {
                    report.push_str(&format!("  warning: {w}\n"));
                }
                let mut names = Vec::new();
                let mut errors = Vec::new();
                for s in l.sets {
                    let s = match kind {
                        None => Ok(s),
                        Some(_) if s.signal.is_some() => Err(Error::quantity(format!(
                            "'{}' is a spectrum, not an FRF; --kind does not apply",
                            s.name
                        ))),
                        Some(k) => s.to_kind(k).map_err(|e| as_data(e, ErrorKind::Quantity)),
                    };
                    match s {
                        Ok(s) => {
                            names.push(s.name.clone());
                            sets.push(s);
                        }
                        Err(e) => {
                            let e = e.in_file(f.path.as_str());
                            report.push_str(&format!("  error: {e}\n"));
                            errors.push(e);
                        }
                    }
                }
                entry["ok"] = errors.is_empty().into();
                entry["format"] = l.format.name().into();
                entry["sets"] = names.into();
                entry["warnings"] = l.warnings.into();
                entry["errors"] = errors.iter().map(error_json).collect::<Vec<_>>().into();
                if !errors.is_empty() {
                    failed_files += 1;
                }
                failures.extend(errors);
            }
            Err(e) => {
                report.push_str(&format!("error: {e}\n"));
                entry["ok"] = false.into();
                entry["error"] = error_json(&e);
                entry["message"] = e.to_string().into();
                failed_files += 1;
                failures.push(e);
            }
        }
        inputs.push(entry);
    }
    let n_inputs = inputs.len();
    let mut result = serde_json::json!({ "inputs": inputs, "output": null });
    let problems = |what: &str| -> Option<Error> {
        let first = failures.first()?;
        Some(Error::new(
            first.kind,
            format!(
                "{} problem(s) in {failed_files} of {n_inputs} file(s) (each is reported on standard output); {what}; the first: {first}",
                failures.len()
            ),
        ))
    };
    if sets.is_empty() {
        let error = problems("nothing was written")
            .unwrap_or_else(|| Error::missing("the inputs hold no FRF set; nothing was written"));
        return Ok(done(json, report, result).failed(Some(error)));
    }
    if let Some(g) = &grid {
        let refs: Vec<&FrfSet> = sets.iter().collect();
        let checked = common_grid(&refs, g).and_then(|freqs| {
            check_converted(&sets, freqs.len(), &limits)?;
            to_common_grid(&sets, &GridChoice::Given { freqs }, interp)
        });
        let (freqs, resampled) = match checked {
            Ok(x) => x,
            Err(e) => return Ok(done(json, report, result).failed(Some(e))),
        };
        let (first, last) = (freqs.first().copied(), freqs.last().copied());
        report.push_str(&format!(
            "grid: {} lines, {} Hz to {} Hz, {}\n",
            freqs.len(),
            first.unwrap_or(f64::NAN),
            last.unwrap_or(f64::NAN),
            interp.name()
        ));
        result["grid"] = serde_json::json!({
            "lines": freqs.len(), "first_hz": first, "last_hz": last, "interp": interp.name()
        });
        sets = resampled;
    }
    let written = io::save(&sets, fmt)
        .map_err(|e| as_data(e, ErrorKind::Internal))
        .and_then(|bytes| {
            std::fs::write(out_path, &bytes)
                .map_err(|e| Error::io(format!("cannot write: {e}")).in_file(out_path))?;
            Ok(bytes)
        });
    let bytes = match written {
        Ok(b) => b,
        Err(e) => return Ok(done(json, report, result).failed(Some(e))),
    };
    let sha = io::sha256_hex(&bytes);
    // a bundle also records the SHA-256 of its content (io::bundle docs)
    let content = io::bundle::content_sha256(&bytes).filter(|_| fmt == ExportFormat::Bundle);
    report.push_str(&format!(
        "wrote {out_path}: {}, {} set(s), {} bytes, sha256 {sha}{}\n",
        fmt.name(),
        sets.len(),
        bytes.len(),
        content
            .as_ref()
            .map(|c| format!(", bundle content sha256 {c}"))
            .unwrap_or_default()
    ));
    result["output"] = serde_json::json!({
        "file": out_path, "format": fmt.name(), "sets": sets.len(), "bytes": bytes.len(), "sha256": sha,
        "content_sha256": content
    });
    let error = problems("the sets that could be read were written");
    Ok(done(json, report, result).failed(error))
}

fn done(json: bool, text: String, result: serde_json::Value) -> Done {
    if json {
        Done::json(result)
    } else {
        Done::text(text)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_grid_step_of_1e_300_says_how_many_lines_it_asks_for() {
        let e = grid_choice("10:1000:1e-300").unwrap_err();
        assert_eq!(e.kind, ErrorKind::Usage);
        assert!(e.message.contains("asks for 9.900e302 lines"), "{e}");
        assert!(!e.message.contains("empty"), "{e}");
        let e = grid_choice("10:1000:0.00001").unwrap_err();
        assert!(e.message.contains("asks for 99000001 lines"), "{e}");
        match grid_choice("10:20:2.5").unwrap() {
            GridChoice::Given { freqs } => assert_eq!(freqs, vec![10.0, 12.5, 15.0, 17.5, 20.0]),
            g => panic!("{g:?}"),
        }
        assert!(grid_choice("-1:20:2.5").is_err());
    }
}
