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
use crate::signal::analyse::{analyse_held, wav_recording, Averaging, ChannelSpec, Job};
use crate::signal::frf_estimate::Estimator;
use crate::signal::impact::{find_hits, ImpactSettings};
use crate::signal::orders::{
    self, order_tracks, parse_profile, BySpeed, OrderSettings, Speed, ORDER_DEFAULTS,
};
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
    /// Each channel's overload limit (0.999 of a WAV channel's full scale;
    /// `None` where the format gives no full scale), for impact records.
    pub(super) over: Vec<Option<f64>>,
}

/// A recording as read, before it is kept: the samples, each channel's
/// overload limit, the format name and the notes.
pub(super) type ReadRecording = (Recording, Vec<Option<f64>>, String, Vec<String>);

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
    /// A supplier's time CSV's column map ([`io::csv::TimeColumnMap`]).
    #[serde(default)]
    time_map: Option<serde_json::Value>,
}

/// One analysis of a recording, as the page asks for it. Every field is
/// used by the analysis it belongs to and refused by the others: Welch
/// averaging (`window`, `segment`, `overlap`, `detrend`) by spectra and FRFs
/// over segments; `impact` (records cut at each hit) by FRFs and energy
/// spectral densities of a hammer test; `orders` by order tracks.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TimeRequest {
    /// "spectrum", "frf" or "orders".
    pub analysis: String,
    /// A window name as [`Window::parse`] reads it (Welch averaging).
    #[serde(default)]
    pub window: Option<String>,
    /// Samples per segment (block length; Welch averaging).
    #[serde(default)]
    pub segment: Option<usize>,
    /// Fraction of a segment shared with the next, 0 ≤ overlap < 1.
    #[serde(default)]
    pub overlap: Option<f64>,
    /// "none", "constant" or "linear" (default "none").
    #[serde(default)]
    pub detrend: Option<String>,
    /// A spectrum's kind: peak, rms, autopower, psd or cross over Welch
    /// segments; esd over impact records.
    #[serde(default)]
    pub kind: Option<String>,
    /// A spectrum's reference channel (the phase of peak / RMS spectra, the
    /// reference of cross spectra).
    #[serde(default)]
    pub reference: Option<String>,
    /// An FRF's force channels; the one channel impact records are
    /// triggered on (an impact FRF or ESD).
    #[serde(default)]
    pub inputs: Vec<String>,
    /// An FRF's estimator: H1, H2 or Hv.
    #[serde(default)]
    pub estimator: Option<String>,
    /// Impact records instead of Welch segments.
    #[serde(default)]
    pub impact: Option<ImpactRequest>,
    /// An order track's choices (analysis "orders").
    #[serde(default)]
    pub orders: Option<OrdersRequest>,
}

/// A hammer test's records, as the command line's `--trigger`,
/// `--record-length`, `--pre-trigger`, `--double-hit`, `--force-width` and
/// `--decay` (seconds and SI; see [`crate::signal::impact`]).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImpactRequest {
    pub trigger: f64,
    pub record_length: f64,
    #[serde(default)]
    pub pre_trigger: Option<f64>,
    #[serde(default)]
    pub double_hit: Option<f64>,
    /// The force window's width, s (window `force:WIDTH`).
    #[serde(default)]
    pub force_width: Option<f64>,
    /// The exponential window's decay time, s (window `exponential:TAU`).
    #[serde(default)]
    pub decay: Option<f64>,
}

impl ImpactRequest {
    fn settings(&self) -> ImpactSettings {
        ImpactSettings {
            level: self.trigger,
            pre_trigger_s: self
                .pre_trigger
                .unwrap_or(ImpactSettings::DEFAULT_PRE_TRIGGER_S),
            length_s: self.record_length,
            double_hit_fraction: self
                .double_hit
                .unwrap_or(ImpactSettings::DEFAULT_DOUBLE_HIT),
            force_width_s: self.force_width,
            decay_s: self.decay,
        }
    }
}

/// An order track's choices, as `mortise orders` takes them: the order,
/// the speed (a profile of [time s, rpm] points or a tachometer channel),
/// the blocks, and `by_speed`, the step in rev/s of the speed sweep's
/// source table made from the track (none when left out).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OrdersRequest {
    pub order: f64,
    /// The speed profile as `mortise orders --speed` takes it:
    /// `TIME:RPM, ...` ([`parse_profile`]).
    #[serde(default)]
    pub speed: Option<String>,
    #[serde(default)]
    pub tach: Option<String>,
    #[serde(default)]
    pub tach_level: Option<f64>,
    #[serde(default)]
    pub pulses_per_rev: Option<f64>,
    #[serde(default)]
    pub revolutions: Option<usize>,
    #[serde(default)]
    pub samples_per_rev: Option<usize>,
    #[serde(default)]
    pub by_speed: Option<f64>,
}

/// What a request asks for, read.
enum Plan {
    /// Welch averages or impact records (`averaging` unused by the latter).
    Analyse { averaging: Averaging, job: Job },
    Orders {
        settings: OrderSettings,
        speed: SpeedFrom,
        by_speed: Option<f64>,
    },
}

/// Where an order track's speed comes from.
enum SpeedFrom {
    Profile(Vec<(f64, f64)>),
    Tach {
        dof: Dof,
        level: f64,
        pulses_per_rev: f64,
    },
}

/// What an analysis made: the result file (loaded into the workspace),
/// how it was cut, the window's corrections (Welch averaging), the impact
/// records (a hammer test) and the speed sweep's source tables (order
/// tracks with `by_speed`).
#[derive(Debug, Clone, Serialize)]
pub struct TimeResult {
    /// The result file's name and bytes (our CSV layout).
    pub file: String,
    #[serde(skip)]
    pub bytes: Vec<u8>,
    /// Its summary as loaded (set ids filled).
    pub summary: FileSummary,
    /// How the record was cut, in words.
    pub described: String,
    /// Blocks averaged: Welch segments, accepted impact records or order
    /// blocks.
    pub segments: usize,
    /// Samples per Welch segment or impact record (none for order tracks).
    pub segment: Option<usize>,
    pub overlap_samples: Option<usize>,
    pub sample_rate_hz: f64,
    /// Line spacing, Hz (none for order tracks: their lines follow the speed).
    pub df_hz: Option<f64>,
    pub window: Option<WindowCorrections>,
    /// Every impact record found, accepted or not (empty otherwise).
    pub records: Vec<RecordInfo>,
    pub accepted: usize,
    pub rejected: usize,
    /// The order tracks as a speed sweep's `orders` entries with `by_speed`
    /// rows (order tracks with a `by_speed` step).
    pub by_speed: Option<Vec<BySpeed>>,
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
        "analyses": ["spectrum", "frf", "orders"],
        "windows": windows,
        "spectrum_kinds": kinds,
        "kinds_with_reference": with_reference,
        "estimators": estimators,
        "detrend": detrend,
        "averaging": "linear (Welch): every segment weighted equally",
        "defaults": { "analysis": "spectrum", "window": "hann", "segment": 4096, "overlap": 0.5, "detrend": "none", "kind": "psd", "estimator": "H1" },
        "records": ["welch", "impact"],
        "impact": {
            "kinds": [SignalKind::Esd.name()],
            "fields": [
                { "key": "trigger", "label": "trigger level on |force|", "unit": "N", "default": null },
                { "key": "record_length", "label": "record length", "unit": "s", "default": null },
                { "key": "pre_trigger", "label": "pre-trigger", "unit": "s", "default": ImpactSettings::DEFAULT_PRE_TRIGGER_S },
                { "key": "double_hit", "label": "double hit at this fraction of the peak", "unit": "", "default": ImpactSettings::DEFAULT_DOUBLE_HIT },
                { "key": "force_width", "label": "force window width", "unit": "s", "default": null, "window": "force", "parameter": "width in seconds" },
                { "key": "decay", "label": "exponential window decay time", "unit": "s", "default": null, "window": "exponential", "parameter": "decay time in seconds" },
            ],
        },
        "orders": {
            "speed": ["profile", "tach"],
            "fields": [
                { "key": "order", "label": "order", "unit": "", "default": null },
                { "key": "revolutions", "label": "revolutions per block", "unit": "", "default": ORDER_DEFAULTS.2 },
                { "key": "samples_per_rev", "label": "samples per revolution", "unit": "", "default": ORDER_DEFAULTS.3 },
                { "key": "tach_level", "label": "tachometer trigger level", "unit": "SI", "default": ORDER_DEFAULTS.0, "with": "tach" },
                { "key": "pulses_per_rev", "label": "tachometer pulses per revolution", "unit": "", "default": ORDER_DEFAULTS.1, "with": "tach" },
                { "key": "by_speed", "label": "speed sweep table step", "unit": "rev/s", "default": null },
            ],
            "profile_form": "TIME:RPM, ... e.g. 0:600, 20:3600",
        },
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
    /// The Welch averaging, every field required (spectra and FRFs over
    /// segments).
    fn averaging(&self) -> Result<Averaging> {
        let Some(w) = &self.window else {
            return Err(Error::usage("Welch averaging needs its window").field("window"));
        };
        let window = Window::parse(w).map_err(|e| e.field("window"))?;
        let Some(segment) = self.segment else {
            return Err(
                Error::usage("Welch averaging needs its block length (samples)").field("segment"),
            );
        };
        let Some(overlap) = self.overlap else {
            return Err(Error::usage("Welch averaging needs its overlap").field("overlap"));
        };
        let detrend = match &self.detrend {
            Some(d) => Detrend::parse(d).map_err(|e| e.field("detrend"))?,
            None => Detrend::None,
        };
        Ok(Averaging {
            segment,
            overlap,
            window,
            detrend,
        })
    }

    /// Refuse the Welch fields for an analysis that does not average
    /// segments (`what`).
    fn no_welch(&self, what: &str) -> Result<()> {
        for (given, field) in [
            (self.window.is_some(), "window"),
            (self.segment.is_some(), "segment"),
            (self.overlap.is_some(), "overlap"),
            (self.detrend.is_some(), "detrend"),
        ] {
            if given {
                return Err(refuse(field, what));
            }
        }
        Ok(())
    }

    /// The one channel impact records are triggered on.
    fn trigger_channel(&self) -> Result<Dof> {
        match self.inputs.as_slice() {
            [one] => channel_dof(one, "inputs"),
            other => Err(Error::usage(format!(
                "impact records are triggered on one channel (the hammer's force); {} were given",
                other.len()
            ))
            .field("inputs")),
        }
    }

    /// What the request asks for and the result's tag, every field used or
    /// refused.
    fn read(&self) -> Result<(Plan, String)> {
        let impact_what =
            "impact records (each hit is one record: 'record_length', 'force_width', 'decay')";
        match self.analysis.trim() {
            "spectrum" => {
                if self.orders.is_some() {
                    return Err(refuse("orders", "a spectrum (it belongs to order tracks)"));
                }
                if self.estimator.is_some() {
                    return Err(refuse("estimator", "a spectrum (it belongs to an FRF)"));
                }
                let Some(k) = &self.kind else {
                    return Err(Error::usage("a spectrum needs its kind").field("kind"));
                };
                if let Some(i) = &self.impact {
                    self.no_welch(impact_what)?;
                    if k.trim().to_ascii_lowercase() != SignalKind::Esd.name() {
                        return Err(Error::usage(format!(
                            "spectrum kind '{}' over impact records; impact records give the energy spectral density (esd)",
                            quote(k)
                        ))
                        .field("kind"));
                    }
                    if self
                        .reference
                        .as_deref()
                        .is_some_and(|r| !r.trim().is_empty())
                    {
                        return Err(refuse("reference", "an energy spectral density (no phase)"));
                    }
                    let job = Job::ImpactEnergy {
                        input: self.trigger_channel()?,
                        settings: i.settings(),
                    };
                    return Ok((
                        Plan::Analyse {
                            averaging: unused_averaging(),
                            job,
                        },
                        "esd".to_string(),
                    ));
                }
                if k.trim().to_ascii_lowercase() == SignalKind::Esd.name() {
                    return Err(Error::usage(
                        "the energy spectral density (esd) is made over impact records: give 'impact' and the channel they are triggered on",
                    )
                    .field("impact"));
                }
                if !self.inputs.is_empty() {
                    return Err(refuse(
                        "inputs",
                        "a spectrum over Welch segments (it names an FRF's forces or the channel impact records are triggered on)",
                    ));
                }
                let averaging = self.averaging()?;
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
                    Plan::Analyse {
                        averaging,
                        job: Job::Spectrum { kind, reference },
                    },
                    kind.name().to_string(),
                ))
            }
            "frf" => {
                if self.orders.is_some() {
                    return Err(refuse("orders", "an FRF (it belongs to order tracks)"));
                }
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
                let estimator = match &self.estimator {
                    Some(e) => Estimator::parse(e).map_err(|e| e.field("estimator"))?,
                    None => {
                        return Err(Error::usage("an FRF needs its estimator (H1, H2 or Hv)")
                            .field("estimator"))
                    }
                };
                let tag = estimator.name().to_ascii_lowercase();
                if let Some(i) = &self.impact {
                    self.no_welch(impact_what)?;
                    let job = Job::Impact {
                        input: self.trigger_channel()?,
                        settings: i.settings(),
                        estimator,
                    };
                    return Ok((
                        Plan::Analyse {
                            averaging: unused_averaging(),
                            job,
                        },
                        format!("impact-{tag}"),
                    ));
                }
                let averaging = self.averaging()?;
                let inputs = self
                    .inputs
                    .iter()
                    .map(|d| channel_dof(d, "inputs"))
                    .collect::<Result<Vec<_>>>()?;
                Ok((
                    Plan::Analyse {
                        averaging,
                        job: Job::Frf { inputs, estimator },
                    },
                    tag,
                ))
            }
            "orders" => {
                let what = "order tracks (blocks of whole revolutions, Hann)";
                self.no_welch(what)?;
                for (given, field) in [
                    (self.kind.is_some(), "kind"),
                    (self.reference.is_some(), "reference"),
                    (!self.inputs.is_empty(), "inputs"),
                    (self.estimator.is_some(), "estimator"),
                    (self.impact.is_some(), "impact"),
                ] {
                    if given {
                        return Err(refuse(field, what));
                    }
                }
                let Some(o) = &self.orders else {
                    return Err(Error::usage(
                        "order tracks need their choices: the order and the speed (a profile or a tachometer channel)",
                    )
                    .field("orders"));
                };
                let (level, ppr, revs, spr) = ORDER_DEFAULTS;
                let speed = match (&o.speed, &o.tach) {
                    (Some(_), Some(_)) | (None, None) => {
                        return Err(Error::usage(
                            "give the speed as a profile ('speed': 'TIME:RPM, ...') or a tachometer channel ('tach'), one of them",
                        )
                        .field("speed"))
                    }
                    (Some(p), None) => {
                        for (given, field) in [
                            (o.tach_level.is_some(), "tach_level"),
                            (o.pulses_per_rev.is_some(), "pulses_per_rev"),
                        ] {
                            if given {
                                return Err(refuse(field, "a speed profile (it belongs to 'tach')"));
                            }
                        }
                        SpeedFrom::Profile(parse_profile(p).map_err(|e| e.field("speed"))?)
                    }
                    (None, Some(t)) => SpeedFrom::Tach {
                        dof: channel_dof(t, "tach")?,
                        level: o.tach_level.unwrap_or(level),
                        pulses_per_rev: o.pulses_per_rev.unwrap_or(ppr),
                    },
                };
                let settings = OrderSettings {
                    order: o.order,
                    revolutions: o.revolutions.unwrap_or(revs),
                    samples_per_rev: o.samples_per_rev.unwrap_or(spr),
                };
                Ok((
                    Plan::Orders {
                        settings,
                        speed,
                        by_speed: o.by_speed,
                    },
                    format!("order{}", o.order),
                ))
            }
            other => Err(Error::usage(format!(
                "analysis '{}'; expected spectrum, frf or orders",
                quote(other)
            ))
            .field("analysis")),
        }
    }
}

fn refuse(field: &str, what: &str) -> Error {
    Error::usage(format!("'{field}' does not apply to {what}; leave it out"))
        .field(field.to_string())
}

/// The averaging an impact job is given and does not use (each record is
/// one segment).
fn unused_averaging() -> Averaging {
    Averaging {
        segment: 2,
        overlap: 0.0,
        window: Window::Rectangular,
        detrend: Detrend::None,
    }
}

/// One impact record as the page lists it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RecordInfo {
    /// Trigger time and record start, s.
    pub trigger_s: f64,
    pub start_s: f64,
    /// Largest |force| of the pulse, SI.
    pub peak: f64,
    /// Why it is left out; `None` when averaged.
    pub rejected: Option<String>,
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
        bytes: Vec<u8>,
        options: serde_json::Value,
    ) -> Result<FileSummary> {
        let others = self.recordings_bytes(name);
        let (rec, over, format, notes) = self.read_recording(name, &bytes, &options, others)?;
        Ok(self.keep_recording(name, bytes, options, (rec, over), format, notes))
    }

    /// Read a WAV file or a time CSV into a recording, checked against the
    /// memory budget with `others` bytes of recordings held besides; the
    /// workspace is not changed (a bundle's inputs are all read before it
    /// changes). Returns the recording, each channel's overload limit, its
    /// format name and its notes.
    pub(super) fn read_recording(
        &self,
        name: &str,
        bytes: &[u8],
        options: &serde_json::Value,
        others: u64,
    ) -> Result<ReadRecording> {
        let opts: RecordingOptions = if options.is_null() {
            RecordingOptions::default()
        } else {
            serde_json::from_value(options.clone()).map_err(|e| {
                Error::usage(format!(
                    "import options of a recording: {e}; a recording takes 'channels' (WAV), 'time_map' (a supplier's time CSV) and 'component'"
                ))
                .field("options")
                .in_file(name)
            })?
        };
        let component = opts
            .component
            .clone()
            .unwrap_or_else(|| io::file_stem(name));
        if let Some(m) = &opts.time_map {
            if io::wav::looks_like_wav(bytes) || opts.channels.is_some() {
                return Err(Error::usage(
                    "'time_map' reads a supplier's time CSV; a WAV file's channels are described by 'channels'",
                )
                .field("time_map")
                .in_file(name));
            }
            let map = io::csv::TimeColumnMap::from_json(m.clone()).map_err(|e| e.in_file(name))?;
            let (rec, notes) = io::csv::read_time_mapped(bytes, name, &map, &component)?;
            self.check_recording_room(
                name,
                held_bytes(rec.channels.len(), rec.len() as u64),
                bytes.len() as u64,
                others,
            )?;
            let over = vec![None; rec.channels.len()];
            Ok((rec, over, "time-csv (mapped)".to_string(), notes))
        } else if io::wav::looks_like_wav(bytes) {
            let wav = io::wav::WavReader::with_length(
                std::io::Cursor::new(bytes),
                name,
                bytes.len() as u64,
            )?;
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
            let (rec, over, mut notes) = wav_recording(wav, name, &specs, &self.limits)?;
            notes.insert(0, info.describe());
            Ok((rec, over, "wav".to_string(), notes))
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
            let over = vec![None; rec.channels.len()];
            Ok((rec, over, "time-csv".to_string(), Vec::new()))
        }
    }

    /// A UFF file's time histories as a recording (called by
    /// [`Workspace::load_file`] after the sets are read).
    pub(super) fn uff_recording(
        &mut self,
        name: &str,
        histories: &[io::uff58::TimeHistory],
        format: &str,
        sha256: &str,
    ) -> Result<RecordingSummary> {
        let others = self.recordings_bytes(name);
        let rec = self.read_uff_recording(name, histories, others)?;
        let summary = recording_summary(name, format, sha256.to_string(), 0, &rec, Vec::new());
        let over = vec![None; rec.channels.len()];
        self.recordings.insert(
            name.to_string(),
            WsRecording {
                rec,
                summary: summary.clone(),
                over,
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
        bytes: Vec<u8>,
        options: serde_json::Value,
        (rec, over): (Recording, Vec<Option<f64>>),
        format: String,
        notes: Vec<String>,
    ) -> FileSummary {
        let summary = recording_summary(
            name,
            &format,
            io::sha256_hex(&bytes),
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
                over,
            },
        );
        // the bytes stay for recipes' time-data steps and bundles
        let size = bytes.len();
        self.files.insert(
            name.to_string(),
            WsFile {
                bytes,
                options,
                format: format.clone(),
            },
        );
        FileSummary {
            file: name.to_string(),
            bytes: size,
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

    /// Analyse a recording: Welch spectra or FRFs with coherence, impact
    /// records' FRFs or energy spectral densities, or order tracks. The
    /// result is written as our CSV and loaded as the file `STEM.TAG.csv`
    /// (replacing one of that name), so every part of the page uses it.
    pub fn analyse_time(&mut self, name: &str, request: &TimeRequest) -> Result<TimeResult> {
        let (plan, tag) = request.read()?;
        let held = self.recordings.get(name).ok_or_else(|| {
            Error::missing(format!("no recording '{}' is loaded", quote(name))).field("recording")
        })?;
        let rec = &held.rec;
        let stem = io::file_stem(name);
        let mut prov = Provenance {
            file: io::base_name(name),
            sha256: held.summary.sha256.clone(),
            format: held.summary.format.clone(),
            options: String::new(),
        };
        let file = format!("{stem}.{tag}.csv");
        let (sets, mut out) = match plan {
            Plan::Analyse { averaging, job } => {
                if !job.is_impact() {
                    prov.options = format!(
                        "analysis {}, window {}, segment {}, overlap {}, detrend {}",
                        request.analysis,
                        averaging.window.label(),
                        averaging.segment,
                        averaging.overlap,
                        averaging.detrend.name()
                    );
                }
                let a = analyse_held(
                    rec,
                    &held.over,
                    &averaging,
                    &job,
                    &stem,
                    &prov,
                    &self.limits,
                )
                .map_err(|e| e.in_file(name))?;
                let df = a.fs / a.settings.segment as f64;
                if job.is_impact() {
                    let records: Vec<RecordInfo> = a
                        .hits
                        .iter()
                        .map(|h| RecordInfo {
                            trigger_s: h.trigger as f64 / a.fs,
                            start_s: h.start as f64 / a.fs,
                            peak: h.peak,
                            rejected: h.rejection(&rec.channels),
                        })
                        .collect();
                    let rejected = records.iter().filter(|r| r.rejected.is_some()).count();
                    let described = format!(
                        "{} of {} impact record(s) averaged, {rejected} left out; records of {} samples ({} s), Δf = {} Hz",
                        a.segments,
                        records.len(),
                        a.settings.segment,
                        a.settings.segment as f64 / a.fs,
                        df
                    );
                    let out = TimeResult {
                        file: file.clone(),
                        bytes: Vec::new(),
                        summary: empty_summary(),
                        described,
                        segments: a.segments,
                        segment: Some(a.settings.segment),
                        overlap_samples: None,
                        sample_rate_hz: a.fs,
                        df_hz: Some(df),
                        window: None,
                        accepted: a.segments,
                        rejected,
                        records,
                        by_speed: None,
                        notes: a.notes,
                    };
                    (a.sets, out)
                } else {
                    let window = window_corrections(
                        averaging.window.label().as_str(),
                        a.settings.segment,
                        a.fs,
                    )?;
                    let described = format!(
                        "{} block(s) of {} samples ({} overlapping), Δf = {} Hz",
                        a.segments, a.settings.segment, a.settings.overlap, df
                    );
                    let out = TimeResult {
                        file: file.clone(),
                        bytes: Vec::new(),
                        summary: empty_summary(),
                        described,
                        segments: a.segments,
                        segment: Some(a.settings.segment),
                        overlap_samples: Some(a.settings.overlap),
                        sample_rate_hz: a.fs,
                        df_hz: Some(df),
                        window: Some(window),
                        records: Vec::new(),
                        accepted: 0,
                        rejected: 0,
                        by_speed: None,
                        notes: a.notes,
                    };
                    (a.sets, out)
                }
            }
            Plan::Orders {
                settings,
                speed,
                by_speed,
            } => {
                let (speed, tach) = match speed {
                    SpeedFrom::Profile(p) => (Speed::Profile(p), None),
                    SpeedFrom::Tach {
                        dof,
                        level,
                        pulses_per_rev,
                    } => {
                        let i = rec.index_of(&dof).map_err(|e| e.field("tach"))?;
                        (
                            Speed::Tach {
                                samples: rec.samples[i].clone(),
                                level,
                                pulses_per_rev,
                            },
                            Some(i),
                        )
                    }
                };
                let track_name = format!("{stem} order {}", settings.order);
                let sets = order_tracks(
                    rec,
                    &speed,
                    tach,
                    &settings,
                    &track_name,
                    &prov,
                    &self.limits,
                )
                .map_err(|e| e.in_file(name))?;
                let tables = by_speed
                    .map(|step| {
                        orders::by_speed(&sets, settings.order, step, orders::MAX_BY_SPEED_ROWS)
                    })
                    .transpose()?;
                let described = sets
                    .first()
                    .and_then(|s| s.provenance.first())
                    .map(|p| p.options.clone())
                    .unwrap_or_default();
                let out = TimeResult {
                    file: file.clone(),
                    bytes: Vec::new(),
                    summary: empty_summary(),
                    described,
                    segments: sets.first().map_or(0, |s| s.n_lines()),
                    segment: None,
                    overlap_samples: None,
                    sample_rate_hz: rec.fs,
                    df_hz: None,
                    window: None,
                    records: Vec::new(),
                    accepted: 0,
                    rejected: 0,
                    by_speed: tables,
                    notes: Vec::new(),
                };
                (sets, out)
            }
        };
        let bytes = io::save(&sets, io::ExportFormat::Csv)?;
        out.summary = self.load_file(&file, &bytes, serde_json::json!({}))?;
        out.bytes = bytes;
        Ok(out)
    }

    /// The time view of a recording between `t0` and `t1` seconds (the
    /// whole record when both are `None`), with the blocks the request
    /// would cut shaded: Welch segments, or impact records with the ones
    /// left out marked and their reason in their titles.
    pub fn time_view(
        &self,
        name: &str,
        range: Option<[f64; 2]>,
        request: Option<&TimeRequest>,
        width: f64,
        height: f64,
    ) -> Result<crate::plot::Drawing> {
        let held = self.recordings.get(name).ok_or_else(|| {
            Error::missing(format!("no recording '{}' is loaded", quote(name))).field("recording")
        })?;
        let rec = &held.rec;
        let blocks = match request.map(|r| r.read()).transpose()? {
            Some((
                Plan::Analyse {
                    job:
                        Job::Impact {
                            input, settings, ..
                        }
                        | Job::ImpactEnergy { input, settings },
                    ..
                },
                _,
            )) => {
                let i = rec.index_of(&input).map_err(|e| e.field("inputs"))?;
                let len = settings.record_samples(rec.fs)?;
                let (hits, _) = find_hits(&rec.samples, i, &held.over, rec.fs, &settings)?;
                hits.iter()
                    .map(|h| crate::plot::time_view::Block {
                        start: h.start,
                        len,
                        flag: h.rejection(&rec.channels),
                    })
                    .collect()
            }
            Some((Plan::Analyse { averaging, .. }, _)) => {
                let s = averaging.settings()?;
                s.check(rec.fs)?;
                crate::plot::time_view::welch_blocks(rec.len(), s.segment, s.step())
            }
            Some((Plan::Orders { .. }, _)) | None => Vec::new(),
        };
        crate::plot::time_view::time_view_svg(name, rec, range, &blocks, width, height)
    }
}

/// A placeholder summary, replaced by the loaded file's.
fn empty_summary() -> FileSummary {
    FileSummary {
        file: String::new(),
        bytes: 0,
        sha256: String::new(),
        format: String::new(),
        frfs: 0,
        sets: Vec::new(),
        time_histories: Vec::new(),
        warnings: Vec::new(),
        uff: None,
        geometry_svg: None,
        geometry: None,
        recording: None,
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
