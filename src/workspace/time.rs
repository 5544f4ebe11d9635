//! Recordings in the workspace: time data (a WAV file, a time CSV, a UFF
//! file's time histories) held as a [`Recording`] beside the sets, each
//! within the memory budget together with the recordings already held;
//! the page's analyses of them (Welch spectra, FRFs with coherence) made
//! into ordinary result files; and the time view's drawing.
//!
//! An analysis's result becomes a file of our CSV layout
//! (`NAME.ANALYSIS.csv`, [`crate::io::csv`]) loaded like any other file, so
//! plots, exports and recipes use it by name; its provenance names the
//! recording (file and SHA-256) and the analysis settings.

use super::{Workspace, WsFile};
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, Provenance, SignalKind};
use crate::io;
use crate::signal::analyse::{analyse_recording, wav_recording, Averaging, ChannelSpec, Job};
use crate::signal::frf_estimate::Estimator;
use crate::signal::welch::Detrend;
use crate::signal::window::Window;
use crate::signal::Recording;
use crate::summary::{FileSummary, RecordingChannel, RecordingSummary};
use serde::{Deserialize, Serialize};

/// A recording held by the workspace.
#[derive(Debug, Clone)]
pub(super) struct WsRecording {
    pub(super) rec: Recording,
    pub(super) summary: RecordingSummary,
}

/// The import options a recording takes: a WAV file's channel
/// descriptions ([`ChannelSpec::FORM`]) and the component of DOFs written
/// without one. Unknown keys are refused.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RecordingOptions {
    #[serde(default)]
    channels: Option<Vec<String>>,
    #[serde(default)]
    component: Option<String>,
}

/// One analysis of a recording, as the page asks for it. Every field is
/// used by the analysis it belongs to and refused by the other.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeRequest {
    /// "spectrum" or "frf".
    pub analysis: String,
    /// A window name as [`Window::parse`] reads it.
    pub window: String,
    /// Samples per segment (block length).
    pub segment: usize,
    /// Fraction of a segment shared with the next, 0 ≤ overlap < 1.
    pub overlap: f64,
    /// "none", "constant" or "linear" (default "none").
    #[serde(default)]
    pub detrend: Option<String>,
    /// A spectrum's kind: peak, rms, autopower, psd or cross.
    #[serde(default)]
    pub kind: Option<String>,
    /// A spectrum's reference channel (the phase of peak / RMS spectra, the
    /// reference of cross spectra).
    #[serde(default)]
    pub reference: Option<String>,
    /// An FRF's force channels.
    #[serde(default)]
    pub inputs: Vec<String>,
    /// An FRF's estimator: H1, H2 or Hv.
    #[serde(default)]
    pub estimator: Option<String>,
}

/// What an analysis made: the result file (loaded into the workspace),
/// how it was cut and the window's corrections.
#[derive(Debug, Clone, Serialize)]
pub struct TimeResult {
    /// The result file's name and bytes (our CSV layout).
    pub file: String,
    #[serde(skip)]
    pub bytes: Vec<u8>,
    /// Its summary as loaded (set ids filled).
    pub summary: FileSummary,
    pub segments: usize,
    pub segment: usize,
    pub overlap_samples: usize,
    pub sample_rate_hz: f64,
    /// Line spacing, Hz.
    pub df_hz: f64,
    pub window: WindowCorrections,
    pub notes: Vec<String>,
}

/// A window's corrections on a segment (Harris 1978's definitions).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct WindowCorrections {
    /// Mean of the window: a sine's peak is scaled by it.
    pub coherent_gain: f64,
    /// Equivalent noise bandwidth in bins and in Hz.
    pub enbw_bins: f64,
    pub enbw_hz: f64,
    /// The factors restoring a sine's amplitude and a broadband signal's
    /// energy.
    pub amplitude_correction: f64,
    pub energy_correction: f64,
}

/// A window's corrections for `segment` samples at `fs` Hz.
pub fn window_corrections(window: &str, segment: usize, fs: f64) -> Result<WindowCorrections> {
    let w = Window::parse(window).map_err(|e| e.field("window"))?;
    if segment < 2 {
        return Err(Error::usage(format!(
            "block length {segment}; expected at least 2 samples"
        ))
        .field("segment"));
    }
    if !(fs.is_finite() && fs > 0.0) {
        return Err(
            Error::usage(format!("sample rate {fs} Hz; expected a positive number"))
                .field("sample_rate_hz"),
        );
    }
    let p = w.properties(segment, fs)?;
    Ok(WindowCorrections {
        coherent_gain: p.coherent_gain,
        enbw_bins: p.enbw_bins,
        enbw_hz: p.enbw_bins * fs / segment as f64,
        amplitude_correction: p.amplitude_correction,
        energy_correction: p.energy_correction,
    })
}

/// The spectrum kinds a recording's analysis makes (energy spectral
/// density belongs to transient records, not to Welch averages).
pub const SPECTRUM_KINDS: [SignalKind; 5] = [
    SignalKind::Peak,
    SignalKind::Rms,
    SignalKind::Autopower,
    SignalKind::Psd,
    SignalKind::Cross,
];

/// The analyses' vocabulary for the page: analyses, windows (with the
/// parameter a window needs), spectrum kinds, estimators, detrend choices
/// and the defaults, all as the core reads them.
pub fn time_analysis_options() -> serde_json::Value {
    let plain = [
        Window::Rectangular,
        Window::Hann,
        Window::Hamming,
        Window::FlatTop,
    ];
    let mut windows: Vec<serde_json::Value> = plain
        .iter()
        .map(|w| serde_json::json!({ "name": w.label(), "parameter": null }))
        .collect();
    windows.push(serde_json::json!({ "name": "force", "parameter": "width in seconds", "example": "force:0.01" }));
    windows.push(serde_json::json!({ "name": "exponential", "parameter": "decay time in seconds", "example": "exponential:0.5" }));
    let estimators: Vec<&str> = [Estimator::H1, Estimator::H2, Estimator::Hv]
        .iter()
        .map(|e| e.name())
        .collect();
    let detrend: Vec<&str> = [Detrend::None, Detrend::Constant, Detrend::Linear]
        .iter()
        .map(|d| d.name())
        .collect();
    let kinds: Vec<&str> = SPECTRUM_KINDS.iter().map(|k| k.name()).collect();
    let with_reference: Vec<&str> = SPECTRUM_KINDS
        .iter()
        .filter(|k| k.has_phase())
        .map(|k| k.name())
        .collect();
    serde_json::json!({
        "analyses": ["spectrum", "frf"],
        "windows": windows,
        "spectrum_kinds": kinds,
        "kinds_with_reference": with_reference,
        "estimators": estimators,
        "detrend": detrend,
        "averaging": "linear (Welch): every segment weighted equally",
        "defaults": { "analysis": "spectrum", "window": "hann", "segment": 4096, "overlap": 0.5, "detrend": "none", "kind": "psd", "estimator": "H1" },
    })
}

fn spectrum_kind(text: &str) -> Result<SignalKind> {
    let t = text.trim().to_ascii_lowercase();
    SPECTRUM_KINDS
        .iter()
        .copied()
        .find(|k| k.name() == t)
        .ok_or_else(|| {
            let names: Vec<&str> = SPECTRUM_KINDS.iter().map(|k| k.name()).collect();
            Error::usage(format!(
                "spectrum kind '{}'; expected one of {}",
                quote(text),
                names.join(", ")
            ))
            .field("kind")
        })
}

fn channel_dof(text: &str, field: &str) -> Result<Dof> {
    Dof::parse(text, "").map_err(|e| Error::usage(e.message).field(field.to_string()))
}

impl TimeRequest {
    /// The averaging and the job, every field used or refused.
    fn read(&self) -> Result<(Averaging, Job, String)> {
        let window = Window::parse(&self.window).map_err(|e| e.field("window"))?;
        let detrend = match &self.detrend {
            Some(d) => Detrend::parse(d).map_err(|e| e.field("detrend"))?,
            None => Detrend::None,
        };
        let averaging = Averaging {
            segment: self.segment,
            overlap: self.overlap,
            window,
            detrend,
        };
        let refuse = |field: &str, what: &str| {
            Error::usage(format!("'{field}' does not apply to {what}; leave it out"))
                .field(field.to_string())
        };
        match self.analysis.trim() {
            "spectrum" => {
                if !self.inputs.is_empty() {
                    return Err(refuse("inputs", "a spectrum (it belongs to an FRF)"));
                }
                if self.estimator.is_some() {
                    return Err(refuse("estimator", "a spectrum (it belongs to an FRF)"));
                }
                let Some(k) = &self.kind else {
                    return Err(Error::usage("a spectrum needs its kind").field("kind"));
                };
                let kind = spectrum_kind(k)?;
                let reference = self
                    .reference
                    .as_deref()
                    .filter(|r| !r.trim().is_empty())
                    .map(|r| channel_dof(r, "reference"))
                    .transpose()?;
                if reference.is_some() && !kind.has_phase() {
                    return Err(refuse(
                        "reference",
                        &format!("a {} spectrum (no phase)", kind.name()),
                    ));
                }
                if reference.is_none() && kind == SignalKind::Cross {
                    return Err(Error::usage("a cross spectrum needs its reference channel")
                        .field("reference"));
                }
                Ok((
                    averaging,
                    Job::Spectrum { kind, reference },
                    kind.name().to_string(),
                ))
            }
            "frf" => {
                if self.kind.is_some() {
                    return Err(refuse("kind", "an FRF (it belongs to a spectrum)"));
                }
                if self.reference.is_some() {
                    return Err(refuse(
                        "reference",
                        "an FRF (its inputs are its references)",
                    ));
                }
                if self.inputs.is_empty() {
                    return Err(
                        Error::usage("an FRF needs at least one force (input) channel")
                            .field("inputs"),
                    );
                }
                let inputs = self
                    .inputs
                    .iter()
                    .map(|d| channel_dof(d, "inputs"))
                    .collect::<Result<Vec<_>>>()?;
                let estimator = match &self.estimator {
                    Some(e) => Estimator::parse(e).map_err(|e| e.field("estimator"))?,
                    None => {
                        return Err(Error::usage("an FRF needs its estimator (H1, H2 or Hv)")
                            .field("estimator"))
                    }
                };
                let tag = estimator.name().to_ascii_lowercase();
                Ok((averaging, Job::Frf { inputs, estimator }, tag))
            }
            other => Err(Error::usage(format!(
                "analysis '{}'; expected spectrum or frf",
                quote(other)
            ))
            .field("analysis")),
        }
    }
}

fn channel_summaries(rec: &Recording) -> Vec<RecordingChannel> {
    rec.channels
        .iter()
        .zip(&rec.samples)
        .map(|(c, s)| {
            let (min, max) = s
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                    (a.min(v), b.max(v))
                });
            RecordingChannel {
                dof: c.dof.to_string(),
                quantity: c.quantity.name().to_string(),
                unit: c.quantity.si_unit(c.dof.dir.is_rotational()).to_string(),
                min,
                max,
            }
        })
        .collect()
}

/// Bytes of samples a recording holds.
fn held_bytes(channels: usize, samples: u64) -> Option<u64> {
    samples.checked_mul(channels as u64)?.checked_mul(8)
}

impl Workspace {
    /// Bytes of samples every recording holds, but the one named `except`.
    fn recordings_bytes(&self, except: &str) -> u64 {
        self.recordings
            .iter()
            .filter(|(k, _)| k.as_str() != except)
            .map(|(_, r)| r.summary.held_bytes)
            .sum()
    }

    /// Check a recording of `samples_bytes` (8 a sample) whose file's `raw`
    /// bytes are held beside it, against the memory budget together with
    /// `others` bytes of recordings held besides it; the error names the
    /// file and the sizes.
    fn check_recording_room(
        &self,
        name: &str,
        samples_bytes: Option<u64>,
        raw: u64,
        others: u64,
    ) -> Result<()> {
        let total = samples_bytes
            .and_then(|b| b.checked_add(raw))
            .and_then(|b| b.checked_add(others));
        let mut what = format!(
            "the recording {} ({} bytes of samples, 8 a sample",
            quote(name),
            samples_bytes.map_or("too many".to_string(), |b| b.to_string())
        );
        if raw > 0 {
            what.push_str(&format!(
                ", and the file's {raw} bytes, kept for recipes and bundles"
            ));
        }
        what.push(')');
        if others > 0 {
            what.push_str(&format!(
                " with the {others} bytes of the recordings already held"
            ));
        }
        self.limits
            .check_bytes(&what, total)
            .map_err(|e| e.in_file(name))
    }

    /// Load a WAV file or a time CSV as a recording (called by
    /// [`Workspace::load_file`] for time data).
    pub(super) fn load_recording(
        &mut self,
        name: &str,
        bytes: &[u8],
        options: serde_json::Value,
    ) -> Result<FileSummary> {
        let others = self.recordings_bytes(name);
        let (rec, format, notes) = self.read_recording(name, bytes, &options, others)?;
        Ok(self.keep_recording(name, bytes, options, rec, format, notes))
    }

    /// Read a WAV file or a time CSV into a recording, checked against the
    /// memory budget with `others` bytes of recordings held besides; the
    /// workspace is not changed (a bundle's inputs are all read before it
    /// changes). Returns the recording, its format name and its notes.
    pub(super) fn read_recording(
        &self,
        name: &str,
        bytes: &[u8],
        options: &serde_json::Value,
        others: u64,
    ) -> Result<(Recording, String, Vec<String>)> {
        let opts: RecordingOptions = if options.is_null() {
            RecordingOptions::default()
        } else {
            serde_json::from_value(options.clone()).map_err(|e| {
                Error::usage(format!(
                    "import options of a recording: {e}; a recording takes 'channels' (WAV) and 'component'"
                ))
                .field("options")
                .in_file(name)
            })?
        };
        let component = opts
            .component
            .clone()
            .unwrap_or_else(|| io::file_stem(name));
        if io::wav::looks_like_wav(bytes) {
            let wav = io::wav::WavReader::new(std::io::Cursor::new(bytes), name)?;
            let info = wav.info.clone();
            let Some(channels) = &opts.channels else {
                return Err(Error::usage(format!(
                    "describe the channels of this WAV recording ({}), one per line: {}",
                    info.describe(),
                    ChannelSpec::FORM
                ))
                .field("channels")
                .in_file(name));
            };
            let specs = channels
                .iter()
                .map(|t| ChannelSpec::parse(t, &component))
                .collect::<Result<Vec<_>>>()
                .map_err(|e| e.field("channels").in_file(name))?;
            self.check_recording_room(
                name,
                held_bytes(specs.len(), info.frames),
                bytes.len() as u64,
                others,
            )?;
            let (rec, _over, mut notes) = wav_recording(wav, name, &specs, &self.limits)?;
            notes.insert(0, info.describe());
            Ok((rec, "wav".to_string(), notes))
        } else {
            if opts.channels.is_some() {
                return Err(Error::usage(
                    "'channels' describes a WAV file's channels; this time CSV names its own (DOF [UNIT] columns)",
                )
                .field("channels")
                .in_file(name));
            }
            let rec = io::time_csv::read(bytes, name, &component)?;
            self.check_recording_room(
                name,
                held_bytes(rec.channels.len(), rec.len() as u64),
                bytes.len() as u64,
                others,
            )?;
            Ok((rec, "time-csv".to_string(), Vec::new()))
        }
    }

    /// A UFF file's time histories as a recording (called by
    /// [`Workspace::load_file`] after the sets are read).
    pub(super) fn uff_recording(
        &mut self,
        name: &str,
        histories: &[io::uff58::TimeHistory],
        format: &str,
        bytes: &[u8],
    ) -> Result<RecordingSummary> {
        let others = self.recordings_bytes(name);
        let rec = self.read_uff_recording(name, histories, others)?;
        let summary = recording_summary(name, format, io::sha256_hex(bytes), 0, &rec, Vec::new());
        self.recordings.insert(
            name.to_string(),
            WsRecording {
                rec,
                summary: summary.clone(),
            },
        );
        Ok(summary)
    }

    /// A UFF file's time histories read into a recording, checked against
    /// the budget with `others` bytes held besides; nothing kept.
    pub(super) fn read_uff_recording(
        &self,
        name: &str,
        histories: &[io::uff58::TimeHistory],
        others: u64,
    ) -> Result<Recording> {
        let rec = Recording::from_time_histories(name, histories)?;
        // the UFF file's bytes are held for its sets too, counted there
        self.check_recording_room(
            name,
            held_bytes(rec.channels.len(), rec.len() as u64),
            0,
            others,
        )?;
        Ok(rec)
    }

    fn keep_recording(
        &mut self,
        name: &str,
        bytes: &[u8],
        options: serde_json::Value,
        rec: Recording,
        format: String,
        notes: Vec<String>,
    ) -> FileSummary {
        let summary = recording_summary(
            name,
            &format,
            io::sha256_hex(bytes),
            bytes.len() as u64,
            &rec,
            notes,
        );
        self.drop_prefix(&super::prefix_of("file", name));
        self.recordings.insert(
            name.to_string(),
            WsRecording {
                rec,
                summary: summary.clone(),
            },
        );
        // the bytes stay for recipes' time-data steps and bundles
        self.files.insert(
            name.to_string(),
            WsFile {
                bytes: bytes.to_vec(),
                options,
                format: format.clone(),
            },
        );
        FileSummary {
            file: name.to_string(),
            bytes: bytes.len(),
            sha256: summary.sha256.clone(),
            format,
            frfs: 0,
            sets: Vec::new(),
            time_histories: Vec::new(),
            warnings: Vec::new(),
            uff: None,
            geometry_svg: None,
            geometry: None,
            recording: Some(summary),
        }
    }

    /// The recording a file holds.
    pub fn recording(&self, name: &str) -> Result<&Recording> {
        self.recordings.get(name).map(|r| &r.rec).ok_or_else(|| {
            Error::missing(format!(
                "no recording '{}' is loaded (drop a WAV, time CSV or UFF time-response file first)",
                quote(name)
            ))
            .field("recording")
        })
    }

    /// Analyse a recording: Welch spectra or FRFs with coherence. The result
    /// is written as our CSV and loaded as the file `STEM.TAG.csv`
    /// (replacing one of that name), so every part of the page uses it.
    pub fn analyse_time(&mut self, name: &str, request: &TimeRequest) -> Result<TimeResult> {
        let (averaging, job, tag) = request.read()?;
        let held = self.recordings.get(name).ok_or_else(|| {
            Error::missing(format!("no recording '{}' is loaded", quote(name))).field("recording")
        })?;
        let rec = &held.rec;
        let prov = Provenance {
            file: io::base_name(name),
            sha256: held.summary.sha256.clone(),
            format: held.summary.format.clone(),
            options: format!(
                "analysis {}, window {}, segment {}, overlap {}, detrend {}",
                request.analysis,
                averaging.window.label(),
                averaging.segment,
                averaging.overlap,
                averaging.detrend.name()
            ),
        };
        let stem = io::file_stem(name);
        let a = analyse_recording(rec, &averaging, &job, &stem, &prov, &self.limits)
            .map_err(|e| e.in_file(name))?;
        let window = window_corrections(&request.window, a.settings.segment, a.fs)?;
        let bytes = io::save(&a.sets, io::ExportFormat::Csv)?;
        let file = format!("{stem}.{tag}.csv");
        let summary = self.load_file(&file, &bytes, serde_json::json!({}))?;
        Ok(TimeResult {
            file,
            bytes,
            summary,
            segments: a.segments,
            segment: a.settings.segment,
            overlap_samples: a.settings.overlap,
            sample_rate_hz: a.fs,
            df_hz: a.fs / a.settings.segment as f64,
            window,
            notes: a.notes,
        })
    }

    /// The time view of a recording between `t0` and `t1` seconds (the
    /// whole record when both are `None`), with the analysis blocks the
    /// request would cut shaded.
    pub fn time_view(
        &self,
        name: &str,
        range: Option<[f64; 2]>,
        request: Option<&TimeRequest>,
        width: f64,
        height: f64,
    ) -> Result<crate::plot::Drawing> {
        let rec = self.recording(name)?;
        let blocks = match request {
            Some(r) => {
                let (avg, _, _) = r.read()?;
                let s = avg.settings()?;
                s.check(rec.fs)?;
                crate::plot::time_view::welch_blocks(rec.len(), s.segment, s.step())
            }
            None => Vec::new(),
        };
        crate::plot::time_view::time_view_svg(name, rec, range, &blocks, width, height)
    }
}

pub(super) fn recording_summary(
    name: &str,
    format: &str,
    sha256: String,
    raw: u64,
    rec: &Recording,
    notes: Vec<String>,
) -> RecordingSummary {
    RecordingSummary {
        file: name.to_string(),
        format: format.to_string(),
        sha256,
        sample_rate_hz: rec.fs,
        samples: rec.len(),
        duration_s: rec.len() as f64 / rec.fs,
        channels: channel_summaries(rec),
        held_bytes: held_bytes(rec.channels.len(), rec.len() as u64)
            .and_then(|b| b.checked_add(raw))
            .unwrap_or(u64::MAX),
        notes,
    }
}
