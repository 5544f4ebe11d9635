//! `mortise spectrum` and `mortise estimate`: recorded time data (WAV, UFF
//! 58 time responses) to spectrum sets or FRFs with coherence, through
//! [`crate::signal::analyse`].

use super::{Args, Done};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, Provenance, SignalKind};
use crate::io::{self, ExportFormat};
use crate::signal::analyse::{self, Analysed, Averaging, ChannelSpec, Job};
use crate::signal::impact::ImpactSettings;
use crate::signal::{Detrend, Estimator, Window};
use std::io::{BufReader, Read};
use std::path::Path;

fn averaging(args: &Args) -> Result<Averaging> {
    let segment = match args.value("segment") {
        None => 4096,
        Some(v) => v.trim().parse::<usize>().map_err(|_| {
            Error::usage(format!(
                "--segment '{}': expected a whole number of samples",
                quote(v)
            ))
        })?,
    };
    let overlap = match args.value("overlap") {
        None => 0.5,
        Some(v) => v
            .trim()
            .parse::<f64>()
            .map_err(|_| Error::usage(format!("--overlap '{}': expected a fraction", quote(v))))?,
    };
    let window = match args.value("window") {
        None => Window::Hann,
        Some(w) => {
            Window::parse(w).map_err(|e| Error::usage(format!("--window: {}", e.message)))?
        }
    };
    let detrend = match args.value("detrend") {
        None => Detrend::Constant,
        Some(d) => {
            Detrend::parse(d).map_err(|e| Error::usage(format!("--detrend: {}", e.message)))?
        }
    };
    Ok(Averaging {
        segment,
        overlap,
        window,
        detrend,
    })
}

fn seconds(args: &Args, name: &str) -> Result<Option<f64>> {
    args.value(name)
        .map(|v| {
            v.trim()
                .parse::<f64>()
                .map_err(|_| Error::usage(format!("--{name} '{}': expected a number", quote(v))))
        })
        .transpose()
}

/// The impact options, when --trigger is given (and refused without it).
fn impact_settings(args: &Args) -> Result<Option<ImpactSettings>> {
    let impact_opts = [
        "record-length",
        "pre-trigger",
        "double-hit",
        "force-width",
        "decay",
    ];
    let Some(level) = seconds(args, "trigger")? else {
        if let Some(o) = impact_opts.iter().find(|o| args.value(o).is_some()) {
            return Err(Error::usage(format!(
                "--{o} applies to an impact test: give --trigger LEVEL"
            )));
        }
        return Ok(None);
    };
    if let Some(o) = ["segment", "overlap", "window", "detrend"]
        .iter()
        .find(|o| args.value(o).is_some())
    {
        return Err(Error::usage(format!(
            "--{o} sets Welch averaging, which an impact test (--trigger) does not use: each hit is one record (--record-length, --force-width, --decay)"
        )));
    }
    let Some(length_s) = seconds(args, "record-length")? else {
        return Err(Error::usage(
            "an impact test (--trigger) needs --record-length S",
        ));
    };
    Ok(Some(ImpactSettings {
        level,
        pre_trigger_s: seconds(args, "pre-trigger")?
            .unwrap_or(ImpactSettings::DEFAULT_PRE_TRIGGER_S),
        length_s,
        double_hit_fraction: seconds(args, "double-hit")?
            .unwrap_or(ImpactSettings::DEFAULT_DOUBLE_HIT),
        force_width_s: seconds(args, "force-width")?,
        decay_s: seconds(args, "decay")?,
    }))
}

/// A UFF or time CSV recording held whole, with its provenance (`specs`,
/// the WAV channel descriptions, refused here): `spectrum`, `estimate` and
/// `orders` read such files the same way.
pub(super) fn recording_of(
    path: &String,
    shown: &str,
    specs: &[ChannelSpec],
    map: Option<&io::csv::TimeColumnMap>,
    limits: &crate::limits::Limits,
) -> Result<(crate::signal::Recording, Provenance, Vec<String>)> {
    if !specs.is_empty() {
        return Err(Error::usage(
            "--channel describes WAV channels; a UFF or time CSV file's channels carry their DOFs and units",
        )
        .in_file(path.as_str()));
    }
    let bytes = io::disk::read_file(Path::new(path), path, limits)?;
    let (rec, format, notes) = match map {
        Some(m) => {
            let (rec, notes) = io::csv::read_time_mapped(&bytes, shown, m, &io::file_stem(path))
                .map_err(|e| e.in_file(path.as_str()))?;
            (rec, "time-csv (mapped)".to_string(), notes)
        }
        None => {
            let (rec, format) = analyse::recording_from_bytes(&bytes, shown, limits)
                .map_err(|e| e.in_file(path.as_str()))?;
            (rec, format, Vec::new())
        }
    };
    let prov = Provenance {
        file: shown.to_string(),
        sha256: io::sha256_hex(&bytes),
        format,
        options: String::new(),
    };
    Ok((rec, prov, notes))
}

/// `--time-map FILE`: a supplier's time CSV's column map, read from its
/// JSON file; refused for a WAV file (`wav`), whose channels `--channel`
/// describes.
pub(super) fn time_map(args: &Args, wav: bool) -> Result<Option<io::csv::TimeColumnMap>> {
    let Some(file) = args.value("time-map") else {
        return Ok(None);
    };
    if wav {
        return Err(Error::usage(
            "--time-map reads a supplier's time CSV; a WAV file's channels are described by --channel",
        ));
    }
    let text = std::fs::read_to_string(file)
        .map_err(|e| Error::io(format!("cannot read the time map '{file}': {e}")))?;
    let v: serde_json::Value = serde_json::from_str(&text).map_err(|e| {
        Error::parse(format!("the time map is not JSON: {e}"))
            .in_file(file)
            .field("time-map")
    })?;
    io::csv::TimeColumnMap::from_json(v)
        .map(Some)
        .map_err(|e| e.in_file(file))
}

fn dof(text: &str, option: &str) -> Result<Dof> {
    Dof::parse(text, "").map_err(|e| Error::usage(format!("--{option}: {}", e.message)))
}

/// A Welch spectrum job of `kind`, with its --reference.
fn spectrum_job(args: &Args, kind: SignalKind) -> Result<Job> {
    let reference = args
        .value("reference")
        .map(|r| dof(r, "reference"))
        .transpose()?;
    if reference.is_some() && matches!(kind, SignalKind::Psd | SignalKind::Autopower) {
        return Err(Error::usage(format!(
            "--reference applies to rms, peak and cross spectra; {} has no phase",
            kind.name()
        )));
    }
    Ok(Job::Spectrum { kind, reference })
}

pub fn run(args: &Args, frf: bool) -> Result<Done> {
    let cmd = if frf { "estimate" } else { "spectrum" };
    let [path] = args.positional.as_slice() else {
        return Err(Error::usage(format!(
            "{cmd} takes one FILE of time data (WAV, or UFF with time responses)"
        )));
    };
    let out = args
        .value("o")
        .ok_or_else(|| Error::usage(format!("{cmd} needs -o OUT")))?;
    let fmt = match args.value("to") {
        Some(t) => ExportFormat::parse(t)?,
        None => ExportFormat::from_extension(out).ok_or_else(|| {
            Error::usage(format!(
                "cannot tell the output format from '{out}'; give --to uff, uff-binary or csv"
            ))
        })?,
    };
    if fmt == ExportFormat::Bundle {
        return Err(Error::usage(format!(
            "{cmd} writes uff, uff-binary or csv; a bundle is made by 'mortise run'"
        )));
    }
    let limits = super::limits::from_args(args)?;
    let avg = averaging(args)?;
    let job = if frf {
        let inputs: Vec<Dof> = args
            .values("input")
            .iter()
            .map(|t| dof(t, "input"))
            .collect::<Result<_>>()?;
        if inputs.is_empty() {
            return Err(Error::usage(
                "estimate needs at least one --input DOF (a force channel)",
            ));
        }
        let estimator = match args.value("estimator") {
            None => Estimator::H1,
            Some(e) => Estimator::parse(e)
                .map_err(|e| Error::usage(format!("--estimator: {}", e.message)))?,
        };
        match impact_settings(args)? {
            None => Job::Frf { inputs, estimator },
            Some(settings) => {
                let [input] = inputs.as_slice() else {
                    return Err(Error::usage(format!(
                        "an impact test (--trigger) takes one --input, the hammer's force channel; {} were given",
                        inputs.len()
                    )));
                };
                Job::Impact {
                    input: input.clone(),
                    settings,
                    estimator,
                }
            }
        }
    } else {
        let kind = match args.value("kind").map(|k| k.trim().to_ascii_lowercase()) {
            None => SignalKind::Psd,
            Some(k) => match k.as_str() {
                "psd" => SignalKind::Psd,
                "autopower" => SignalKind::Autopower,
                "rms" => SignalKind::Rms,
                "peak" => SignalKind::Peak,
                "cross" => SignalKind::Cross,
                "esd" => SignalKind::Esd,
                _ => {
                    return Err(Error::usage(format!(
                        "--kind '{}': expected psd, autopower, rms, peak, cross or esd",
                        quote(&k)
                    )))
                }
            },
        };
        let impact = impact_settings(args)?;
        let inputs = args.values("input");
        if kind == SignalKind::Esd {
            let Some(settings) = impact else {
                return Err(Error::usage(
                    "--kind esd is the energy of impact records: give --trigger LEVEL, --record-length S and --input DOF (the channel the records are triggered on)",
                ));
            };
            let [input] = inputs.as_slice() else {
                return Err(Error::usage(format!(
                    "--kind esd takes one --input, the channel the records are triggered on; {} were given",
                    inputs.len()
                )));
            };
            if args.value("reference").is_some() {
                return Err(Error::usage(
                    "--reference applies to rms, peak and cross spectra; an energy spectral density has no phase",
                ));
            }
            Job::ImpactEnergy {
                input: dof(input, "input")?,
                settings,
            }
        } else {
            if impact.is_some() {
                return Err(Error::usage(format!(
                    "--trigger makes impact records, which spectrum uses for --kind esd only; {} is averaged over Welch segments",
                    kind.name()
                )));
            }
            if !inputs.is_empty() {
                return Err(Error::usage(
                    "--input names the channel impact records are triggered on (--kind esd); the other spectra take --reference",
                ));
            }
            spectrum_job(args, kind)?
        }
    };

    let name = io::file_stem(path);
    let shown = io::base_name(path);
    let specs: Vec<ChannelSpec> = args
        .values("channel")
        .iter()
        .map(|t| ChannelSpec::parse(t, ""))
        .collect::<Result<_>>()?;

    // WAV: streamed; anything else: read whole and its time histories taken
    let mut file = io::disk::open_stream(Path::new(path), path)?;
    let mut head = [0u8; 12];
    let n = file
        .read(&mut head)
        .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?;
    let result: Analysed = if io::wav::looks_like_wav(&head[..n]) {
        drop(file);
        time_map(args, true)?;
        let f = io::disk::open_stream(Path::new(path), path)?;
        let length = f
            .metadata()
            .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?
            .len();
        // hashed as the blocks pass: the provenance's SHA-256 without a second read
        let (stream, hash) = io::wav::hashing(BufReader::with_capacity(1 << 20, f));
        let wav = io::wav::WavReader::with_length(stream, path, length)?;
        let prov = Provenance {
            file: shown.clone(),
            sha256: String::new(),
            format: "wav".into(),
            options: String::new(),
        };
        let quiet = args.flag("json") || wav.info.frames < 1 << 22;
        let mut tenth = 0u64;
        let mut progress = |done: u64, total: u64| {
            let t = done * 10 / total.max(1);
            if !quiet && t > tenth {
                tenth = t;
                eprintln!("{cmd}: {}% of {shown}", t * 10);
            }
        };
        let mut a = analyse::analyse_wav(
            wav,
            path,
            &specs,
            &avg,
            &job,
            &name,
            &prov,
            &limits,
            &mut progress,
        )?;
        // the bytes after those the reader took (chunks after the samples)
        let mut rest = io::disk::open_stream(Path::new(path), path)?;
        std::io::copy(&mut (&mut rest).take(hash.len()), &mut std::io::sink())
            .map_err(|e| Error::io(format!("cannot read: {e}")).in_file(path.as_str()))?;
        let sha = hash.finish(rest, path)?;
        for s in &mut a.sets {
            for p in &mut s.provenance {
                if p.file == shown && p.sha256.is_empty() {
                    p.sha256 = sha.clone();
                }
            }
        }
        a
    } else {
        drop(file);
        let map = time_map(args, false)?;
        let (rec, prov, notes) =
            super::time_data::recording_of(path, &shown, &specs, map.as_ref(), &limits)?;
        let mut a =
            analyse::analyse_recording(&rec, &avg, &job, &name, &prov, &limits).map_err(|e| {
                if e.file.is_none() {
                    e.in_file(path.as_str())
                } else {
                    e
                }
            })?;
        a.notes.extend(notes);
        a
    };
    let exported = io::export(&result.sets, fmt)?;
    std::fs::write(out, &exported.bytes)
        .map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
    let sets: Vec<serde_json::Value> = result
        .sets
        .iter()
        .map(|s| {
            serde_json::json!({
                "name": s.name,
                "what": s.signal.map(|k| k.name().to_string()).unwrap_or_else(|| s.kind().name().to_string()),
                "outputs": s.outputs.iter().map(|d| d.to_string()).collect::<Vec<_>>(),
                "inputs": s.inputs.iter().map(|d| d.to_string()).collect::<Vec<_>>(),
                "lines": s.n_lines(),
                "from_hz": s.freqs.first(),
                "to_hz": s.freqs.last(),
                "lowest_coherence": s.coherence.as_ref().map(|c| c.iter().cloned().fold(f64::INFINITY, f64::min)),
            })
        })
        .collect();
    let impact = job.is_impact();
    if args.flag("json") {
        let mut v = serde_json::json!({
            "file": out,
            "sets": sets,
            "sample_rate_hz": result.fs,
            "samples": result.samples,
            "segment": result.settings.segment,
            "segments": result.segments,
            "notes": result.notes,
        });
        if impact {
            v["hits"] =
                serde_json::to_value(&result.hits).map_err(|e| super::internal(e.to_string()))?;
            v["provenance"] = result
                .sets
                .first()
                .map(|s| s.provenance[0].options.clone())
                .into();
        } else {
            v["overlap"] = result.settings.overlap.into();
            v["window"] = result.settings.window.label().into();
            v["detrend"] = result.settings.detrend.name().into();
            v["coherent_gain"] = result.coherent_gain.into();
            v["enbw_bins"] = result.enbw_bins.into();
        }
        return Ok(Done::json(v));
    }
    let mut s = format!(
        "wrote {out}: {} set(s) from {} channel(s) of {shown}, {} samples at {} Hz\n",
        result.sets.len(),
        result.channels.len(),
        result.samples,
        result.fs,
    );
    if impact {
        s.push_str(&format!(
            "  {} hit(s), {} averaged, records of {} samples ({} Hz lines)\n",
            result.hits.len(),
            result.segments,
            result.settings.segment,
            result.fs / result.settings.segment as f64,
        ));
    } else {
        s.push_str(&format!(
            "  {} segments of {} samples ({} Hz lines), overlap {}, window {} (coherent gain {:.6}, ENBW {:.4} bins), detrend {}\n",
            result.segments,
            result.settings.segment,
            result.fs / result.settings.segment as f64,
            result.settings.overlap,
            result.settings.window.label(),
            result.coherent_gain,
            result.enbw_bins,
            result.settings.detrend.name()
        ));
    }
    for set in &result.sets {
        let what = set
            .signal
            .map(|k| k.describe().to_string())
            .unwrap_or_else(|| set.kind().name().to_string());
        s.push_str(&format!(
            "  {}: {what}, {} output(s) × {} input(s), {} lines",
            set.name,
            set.n_out(),
            set.n_in(),
            set.n_lines()
        ));
        if let Some(c) = &set.coherence {
            let low = c.iter().cloned().fold(f64::INFINITY, f64::min);
            s.push_str(&format!(", lowest coherence {low:.3}"));
        }
        s.push('\n');
    }
    for n in &result.notes {
        s.push_str(&format!("  note: {n}\n"));
    }
    Ok(Done::text(s))
}
