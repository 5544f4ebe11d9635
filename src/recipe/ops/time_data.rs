//! Time data in a recipe: `spectrum` and `estimate-frf` read a WAV file or
//! a UFF file of time responses named by `file` (through the recipe's
//! files) and make spectra or FRFs with coherence by
//! [`crate::signal::analyse`], as `mortise spectrum` / `estimate` do.

use super::{opt, req, Ctx, Operand, Operation, StepOutput};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::io;
use crate::recipe::report::StepReport;
use crate::signal::analyse::{self, Analysed, Averaging, ChannelSpec, Job};
use crate::signal::impact::ImpactSettings;
use crate::signal::orders::{order_tracks, OrderSettings, Speed, ORDER_DEFAULTS};
use crate::signal::{Detrend, Estimator, Recording, Window};
use serde::{Deserialize, Serialize};

/// Spectra of every channel of a recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spectrum {
    pub file: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub kind: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reference: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub channels: Option<Vec<String>>,
    /// A supplier's time CSV's column map.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time_map: Option<io::csv::TimeColumnMap>,
    pub segment: usize,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub overlap: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub window: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub detrend: Option<String>,
}

/// FRFs from force channels to the other channels of a recording.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EstimateFrf {
    pub file: String,
    pub inputs: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub estimator: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub channels: Option<Vec<String>>,
    /// A supplier's time CSV's column map.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time_map: Option<io::csv::TimeColumnMap>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub segment: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub impact: Option<Impact>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub overlap: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub window: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub detrend: Option<String>,
}

/// Order tracks of a run-up or run-down.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Orders {
    pub file: String,
    pub order: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub speed: Option<Vec<(f64, f64)>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tach: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tach_level: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pulses_per_rev: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub revolutions: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub samples_per_rev: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub channels: Option<Vec<String>>,
    /// A supplier's time CSV's column map.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time_map: Option<io::csv::TimeColumnMap>,
}

/// A hammer test's records (see `signal::impact`), in seconds and SI.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Impact {
    pub trigger: f64,
    pub record_length: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pre_trigger: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub double_hit: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub force_width: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub decay: Option<f64>,
}

const FILE: &str = "a WAV file, a UFF file of time responses (function type 1) or a time CSV (time [s], DOF [UNIT], ...), among the recipe's files";
const CHANNELS: &str = "WAV only, required there: each channel analysed as 'N=DOF QUANTITY FULL_SCALE UNIT', e.g. '1=rig:1+Z force 500 N'";
const TIME_MAP: &str = "a supplier's time CSV: its column map {delimiter, skip_rows, header_line, unit_line, decimal_comma, time, time_unit (s or ms), channels: [{column, dof, unit}]}, columns by number or name";
const SEGMENT: &str = "samples per segment (the FFT length; lines every fs/N Hz)";
const OVERLAP: &str = "fraction of a segment shared with the next, 0 to below 1 (default 0.5)";
const WINDOW: &str =
    "rectangular, hann (default), hamming, flat-top, force:WIDTH_S, exponential:TAU_S";
const DETREND: &str = "none, constant (default: the segment's mean) or linear";

fn averaging(
    segment: usize,
    overlap: Option<f64>,
    window: Option<&str>,
    detrend: Option<&str>,
) -> Result<Averaging> {
    Ok(Averaging {
        segment,
        overlap: overlap.unwrap_or(0.5),
        window: match window {
            Some(w) => Window::parse(w).map_err(|e| Error::recipe(e.message).field("window"))?,
            None => Window::Hann,
        },
        detrend: match detrend {
            Some(d) => Detrend::parse(d).map_err(|e| Error::recipe(e.message).field("detrend"))?,
            None => Detrend::Constant,
        },
    })
}

fn dof(text: &str, field: &str) -> Result<Dof> {
    Dof::parse(text, "").map_err(|e| Error::recipe(e.message).field(field.to_string()))
}

/// A time file's provenance: its name and SHA-256, the format filled in by the reader.
fn provenance_of(file: &str, bytes: &[u8]) -> Provenance {
    Provenance {
        file: io::base_name(file),
        sha256: io::sha256_hex(bytes),
        format: String::new(),
        options: String::new(),
    }
}

/// The step's `channels` (WAV channel descriptions), each parsed or refused.
fn wav_channels(channels: Option<&[String]>) -> Result<Vec<ChannelSpec>> {
    channels
        .unwrap_or_default()
        .iter()
        .map(|t| ChannelSpec::parse(t, "").map_err(|e| Error::recipe(e.message).field("channels")))
        .collect()
}

/// Reads the file and runs the analysis.
fn analyse_file(
    cx: &Ctx,
    file: &str,
    channels: Option<&[String]>,
    time_map: Option<&io::csv::TimeColumnMap>,
    avg: &Averaging,
    job: &Job,
) -> Result<Analysed> {
    let name = cx.id.to_string();
    if time_map.is_some() {
        let (rec, prov, notes) = recording_of(cx, file, channels, time_map)?;
        let mut a = analyse::analyse_recording(&rec, avg, job, &name, &prov, cx.limits)?;
        a.notes.extend(notes);
        return Ok(a);
    }
    let bytes = cx.files.read(file).map_err(|e| e.field("file"))?;
    let mut prov = provenance_of(file, &bytes);
    if io::wav::looks_like_wav(&bytes) {
        prov.format = "wav".into();
        let specs = wav_channels(channels)?;
        let length = bytes.len() as u64;
        let wav = io::wav::WavReader::with_length(std::io::Cursor::new(bytes), file, length)?;
        analyse::analyse_wav(
            wav,
            file,
            &specs,
            avg,
            job,
            &name,
            &prov,
            cx.limits,
            &mut |_, _| {},
        )
    } else {
        if channels.is_some() {
            return Err(Error::recipe(
                "'channels' describes WAV channels; a UFF or time CSV file's channels carry their DOFs and units",
            )
            .field("channels"));
        }
        let (rec, format) = analyse::recording_from_bytes(&bytes, file, cx.limits)?;
        prov.format = format;
        analyse::analyse_recording(&rec, avg, job, &name, &prov, cx.limits)
    }
}

/// The file as a recording held whole (WAV channels described by
/// `channels`), with notes.
fn recording_of(
    cx: &Ctx,
    file: &str,
    channels: Option<&[String]>,
    time_map: Option<&io::csv::TimeColumnMap>,
) -> Result<(Recording, Provenance, Vec<String>)> {
    let bytes = cx.files.read(file).map_err(|e| e.field("file"))?;
    let mut prov = provenance_of(file, &bytes);
    if let Some(m) = time_map {
        if io::wav::looks_like_wav(&bytes) || channels.is_some() {
            return Err(Error::recipe(
                "'time_map' reads a supplier's time CSV; a WAV file's channels are described by 'channels'",
            )
            .field("time_map"));
        }
        let (rec, notes) = io::csv::read_time_mapped(&bytes, file, m, &io::file_stem(file))
            .map_err(|e| {
                if e.field.is_none() {
                    e.field("time_map")
                } else {
                    e
                }
            })?;
        prov.format = "time-csv (mapped)".into();
        return Ok((rec, prov, notes));
    }
    if io::wav::looks_like_wav(&bytes) {
        prov.format = "wav".into();
        let specs = wav_channels(channels)?;
        let length = bytes.len() as u64;
        let wav = io::wav::WavReader::with_length(std::io::Cursor::new(bytes), file, length)?;
        let (rec, _, notes) = analyse::wav_recording(wav, file, &specs, cx.limits)?;
        return Ok((rec, prov, notes));
    }
    if channels.is_some() {
        return Err(Error::recipe(
            "'channels' describes WAV channels; a UFF or time CSV file's channels carry their DOFs and units",
        )
        .field("channels"));
    }
    let (rec, format) = analyse::recording_from_bytes(&bytes, file, cx.limits)?;
    prov.format = format;
    Ok((rec, prov, Vec::new()))
}

/// The first set as the step's result, the others (other quantities) as
/// `ID/QUANTITY` extras; the notes in the report.
fn output(cx: &Ctx, op: &str, sets: Vec<FrfSet>, notes: Vec<String>) -> Result<StepOutput> {
    let mut sets = sets.into_iter();
    let Some(first) = sets.next() else {
        return Err(Error::internal("an analysis without a set"));
    };
    for s in std::iter::once(&first).chain(sets.as_slice()) {
        cx.check_set(&format!("'{}'", s.name), s.n_lines(), s.n_out(), s.n_in())?;
    }
    let extras: Vec<(String, FrfSet)> = sets.map(|s| (s.out_qty.name().to_string(), s)).collect();
    let mut warnings = first.warnings.clone();
    warnings.extend(notes);
    let report = StepReport::new(cx.id, op, warnings);
    Ok(StepOutput {
        set: first,
        extras,
        report,
    })
}

impl Operation for Spectrum {
    const SUMMARY: &'static str = "spectra of recorded time data (Welch averages): psd, autopower, rms, peak or cross, the kind kept with the set; one set per quantity (others as ID/QUANTITY)";
    const OPERANDS: &'static [Operand] = &[
        req("file", FILE),
        req("segment", SEGMENT),
        opt("kind", "psd (default), autopower, rms, peak or cross"),
        opt(
            "reference",
            "the channel DOF phases are measured against (rms, peak, cross)",
        ),
        opt("channels", CHANNELS),
        opt("time_map", TIME_MAP),
        opt("overlap", OVERLAP),
        opt("window", WINDOW),
        opt("detrend", DETREND),
    ];
    fn reads(&self) -> Vec<&str> {
        Vec::new()
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let kind = match self.kind.as_deref().map(|k| k.trim().to_ascii_lowercase()) {
            None => SignalKind::Psd,
            Some(k) => match k.as_str() {
                "psd" => SignalKind::Psd,
                "autopower" => SignalKind::Autopower,
                "rms" => SignalKind::Rms,
                "peak" => SignalKind::Peak,
                "cross" => SignalKind::Cross,
                _ => {
                    return Err(Error::recipe(format!(
                        "unknown kind '{}'; expected psd, autopower, rms, peak or cross",
                        crate::error::quote(&k)
                    ))
                    .field("kind"))
                }
            },
        };
        let reference = self
            .reference
            .as_deref()
            .map(|r| dof(r, "reference"))
            .transpose()?;
        if reference.is_some() && matches!(kind, SignalKind::Psd | SignalKind::Autopower) {
            return Err(Error::recipe(format!(
                "'reference' applies to rms, peak and cross spectra; {} has no phase",
                kind.name()
            ))
            .field("reference"));
        }
        let avg = averaging(
            self.segment,
            self.overlap,
            self.window.as_deref(),
            self.detrend.as_deref(),
        )?;
        let a = analyse_file(
            cx,
            &self.file,
            self.channels.as_deref(),
            self.time_map.as_ref(),
            &avg,
            &Job::Spectrum { kind, reference },
        )?;
        output(cx, "spectrum", a.sets, a.notes)
    }
}

impl Operation for EstimateFrf {
    const SUMMARY: &'static str = "FRFs with coherence from force and response channels of recorded time data: H1 (default), H2 (one input) or Hv; several inputs through their cross-spectral matrix; one set per response quantity (others as ID/QUANTITY)";
    const OPERANDS: &'static [Operand] = &[
        req("file", FILE),
        req(
            "inputs",
            "the input (force) channel DOFs; every other channel is a response",
        ),
        opt(
            "segment",
            "samples per segment (the FFT length; lines every fs/N Hz); required without 'impact'",
        ),
        opt(
            "impact",
            "a hammer test instead of Welch segments: {\"trigger\": level in N, \"record_length\": s, \"pre_trigger\": s (0.01), \"double_hit\": fraction of the peak (0.1), \"force_width\": s, \"decay\": s}; one input; records with a double hit or an overload are left out",
        ),
        opt("estimator", "h1 (default), h2 or hv"),
        opt("channels", CHANNELS),
        opt("time_map", TIME_MAP),
        opt("overlap", OVERLAP),
        opt("window", WINDOW),
        opt("detrend", DETREND),
    ];
    fn reads(&self) -> Vec<&str> {
        Vec::new()
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let inputs: Vec<Dof> = self
            .inputs
            .iter()
            .map(|t| dof(t, "inputs"))
            .collect::<Result<_>>()?;
        let estimator = match &self.estimator {
            Some(e) => {
                Estimator::parse(e).map_err(|e| Error::recipe(e.message).field("estimator"))?
            }
            None => Estimator::H1,
        };
        let (avg, job) = match &self.impact {
            None => {
                let Some(segment) = self.segment else {
                    return Err(Error::recipe(
                        "'segment' is needed (or 'impact' for a hammer test)",
                    )
                    .field("segment"));
                };
                let avg = averaging(
                    segment,
                    self.overlap,
                    self.window.as_deref(),
                    self.detrend.as_deref(),
                )?;
                (avg, Job::Frf { inputs, estimator })
            }
            Some(i) => {
                for (given, name) in [
                    (self.segment.is_some(), "segment"),
                    (self.overlap.is_some(), "overlap"),
                    (self.window.is_some(), "window"),
                    (self.detrend.is_some(), "detrend"),
                ] {
                    if given {
                        return Err(Error::recipe(format!(
                            "'{name}' sets Welch averaging, which 'impact' does not use (each hit is one record)"
                        ))
                        .field(name));
                    }
                }
                let [input] = inputs.as_slice() else {
                    return Err(Error::recipe(format!(
                        "'impact' takes one input, the hammer's force channel; {} were given",
                        inputs.len()
                    ))
                    .field("inputs"));
                };
                let settings = ImpactSettings {
                    level: i.trigger,
                    pre_trigger_s: i
                        .pre_trigger
                        .unwrap_or(ImpactSettings::DEFAULT_PRE_TRIGGER_S),
                    length_s: i.record_length,
                    double_hit_fraction: i.double_hit.unwrap_or(ImpactSettings::DEFAULT_DOUBLE_HIT),
                    force_width_s: i.force_width,
                    decay_s: i.decay,
                };
                // the averaging is not used by an impact job
                let avg = averaging(2, None, None, None)?;
                (
                    avg,
                    Job::Impact {
                        input: input.clone(),
                        settings,
                        estimator,
                    },
                )
            }
        };
        let a = analyse_file(
            cx,
            &self.file,
            self.channels.as_deref(),
            self.time_map.as_ref(),
            &avg,
            &job,
        )
        .map_err(|e| {
            if matches!(job, Job::Impact { .. }) && e.field.is_none() {
                e.field("impact")
            } else {
                e
            }
        })?;
        output(cx, "estimate-frf", a.sets, a.notes)
    }
}

impl Operation for Orders {
    const SUMMARY: &'static str = "order tracks of a run-up or run-down: one order's peak amplitude at order × rpm / 60 per block of revolutions, from a speed profile or a tachometer channel; one set per quantity (others as ID/QUANTITY)";
    const OPERANDS: &'static [Operand] = &[
        req("file", FILE),
        req(
            "order",
            "the order to track, e.g. 2; order × revolutions must be whole",
        ),
        opt(
            "speed",
            "the speed profile as [[time s, rpm], ...], rpm linear between the points (or 'tach')",
        ),
        opt(
            "tach",
            "the tachometer channel's DOF (or 'speed'); left out of the tracks",
        ),
        opt(
            "tach_level",
            "the tachometer's trigger level in its SI unit (default 0.5)",
        ),
        opt(
            "pulses_per_rev",
            "tachometer pulses per revolution (default 1)",
        ),
        opt("revolutions", "revolutions per block (default 8)"),
        opt(
            "samples_per_rev",
            "samples per revolution after resampling (default 64)",
        ),
        opt("channels", CHANNELS),
        opt("time_map", TIME_MAP),
    ];
    fn reads(&self) -> Vec<&str> {
        Vec::new()
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        if self.speed.is_some() == self.tach.is_some() {
            return Err(Error::recipe("give 'speed' or 'tach', one of them").field("speed"));
        }
        if self.tach.is_none() {
            for (given, name) in [
                (self.tach_level.is_some(), "tach_level"),
                (self.pulses_per_rev.is_some(), "pulses_per_rev"),
            ] {
                if given {
                    return Err(Error::recipe(format!("'{name}' applies to 'tach'")).field(name));
                }
            }
        }
        let (rec, prov, notes) = recording_of(
            cx,
            &self.file,
            self.channels.as_deref(),
            self.time_map.as_ref(),
        )?;
        let (speed, tach) = match (&self.speed, &self.tach) {
            (Some(p), _) => (Speed::Profile(p.clone()), None),
            (None, Some(t)) => {
                let i = rec
                    .index_of(&dof(t, "tach")?)
                    .map_err(|e| e.field("tach"))?;
                (
                    Speed::Tach {
                        samples: rec.samples[i].clone(),
                        level: self.tach_level.unwrap_or(ORDER_DEFAULTS.0),
                        pulses_per_rev: self.pulses_per_rev.unwrap_or(ORDER_DEFAULTS.1),
                    },
                    Some(i),
                )
            }
            (None, None) => return Err(Error::internal("speed checked above")),
        };
        let settings = OrderSettings {
            order: self.order,
            revolutions: self.revolutions.unwrap_or(ORDER_DEFAULTS.2),
            samples_per_rev: self.samples_per_rev.unwrap_or(ORDER_DEFAULTS.3),
        };
        let sets = order_tracks(&rec, &speed, tach, &settings, cx.id, &prov, cx.limits)?;
        output(cx, "orders", sets, notes)
    }
}
