//! One analysis of time data, shared by the command line and recipes:
//! channels picked and calibrated, Welch averages (a WAV file streamed in
//! blocks), then spectrum sets or FRF estimates.

use super::frf_estimate::{estimate, Estimator};
use super::impact::{impact_frf, Hit, ImpactSettings};
use super::recording::Recording;
use super::spectra::spectrum_sets;
use super::welch::{Averaged, Detrend, Welch, WelchSettings};
use super::window::Window;
use super::Channel;
use crate::error::{quote, Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use crate::io::wav::WavReader;
use crate::limits::Limits;
use crate::units::Quantity;
use std::io::Read;

/// A WAV channel described: `N=DOF QUANTITY FULL_SCALE UNIT`, e.g.
/// `1=rig:1+Z force 500 N` (sample value 1.0 of channel 1 is 500 N at
/// rig:1+Z). Channels are numbered from 1.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelSpec {
    pub number: usize,
    pub dof: Dof,
    pub quantity: Quantity,
    /// SI value of full scale (sample 1.0).
    pub full_scale_si: f64,
    /// As written, for messages.
    pub text: String,
}

impl ChannelSpec {
    pub const FORM: &'static str =
        "N=DOF QUANTITY FULL_SCALE UNIT, e.g. '1=rig:1+Z force 500 N' (sample 1.0 of channel 1 is 500 N)";

    pub fn parse(text: &str, component: &str) -> Result<ChannelSpec> {
        let bad = |why: String| {
            Error::usage(format!(
                "channel '{}': {why}; expected {}",
                quote(text),
                ChannelSpec::FORM
            ))
        };
        let Some((n, rest)) = text.split_once('=') else {
            return Err(bad("no '='".into()));
        };
        let number = match n.trim().parse::<usize>() {
            Ok(v) if v >= 1 => v,
            _ => {
                return Err(bad(format!(
                    "'{}' is not a channel number from 1",
                    quote(n)
                )))
            }
        };
        let parts: Vec<&str> = rest.split_whitespace().collect();
        let [dof, qty, full, unit @ ..] = parts.as_slice() else {
            return Err(bad("too few parts".into()));
        };
        if unit.is_empty() {
            return Err(bad("no unit".into()));
        }
        let unit = unit.join(" ");
        let dof = Dof::parse(dof, component).map_err(|e| bad(e.message))?;
        let quantity = Quantity::parse(qty).map_err(|e| bad(e.message))?;
        let full: f64 = match full.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 => v,
            _ => {
                return Err(bad(format!(
                    "full scale '{}' is not a positive number",
                    quote(full)
                )))
            }
        };
        let factor = crate::units::factor_for(&unit, quantity, dof.dir.is_rotational())
            .map_err(|e| bad(e.message))?;
        Ok(ChannelSpec {
            number,
            dof,
            quantity,
            full_scale_si: full * factor,
            text: text.to_string(),
        })
    }
}

/// How the record is cut: segment in samples, overlap as a fraction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Averaging {
    pub segment: usize,
    /// Fraction of a segment shared with the next, 0 ≤ overlap < 1.
    pub overlap: f64,
    pub window: Window,
    pub detrend: Detrend,
}

impl Averaging {
    pub fn settings(&self) -> Result<WelchSettings> {
        if !(self.overlap.is_finite() && (0.0..1.0).contains(&self.overlap)) {
            return Err(Error::usage(format!(
                "overlap {}; expected a fraction from 0 up to (not including) 1",
                self.overlap
            ))
            .field("overlap"));
        }
        Ok(WelchSettings {
            segment: self.segment,
            overlap: (self.overlap * self.segment as f64).floor() as usize,
            window: self.window,
            detrend: self.detrend,
        })
    }
}

/// What to make.
#[derive(Debug, Clone, PartialEq)]
pub enum Job {
    /// Spectra of every channel; `reference` for cross spectra and the
    /// phase of linear spectra.
    Spectrum {
        kind: SignalKind,
        reference: Option<Dof>,
    },
    /// FRFs from the `inputs` (forces) to every other channel.
    Frf {
        inputs: Vec<Dof>,
        estimator: Estimator,
    },
    /// FRFs from triggered impact records on the force channel `input`
    /// (the averaging settings do not apply: each record is one segment).
    Impact {
        input: Dof,
        settings: ImpactSettings,
        estimator: Estimator,
    },
    /// The energy spectral density of every channel over the triggered
    /// impact records on `input` ([`crate::signal::impact::impact_esd`]).
    ImpactEnergy {
        input: Dof,
        settings: ImpactSettings,
    },
}

impl Job {
    /// True for the jobs on triggered impact records.
    pub fn is_impact(&self) -> bool {
        matches!(self, Job::Impact { .. } | Job::ImpactEnergy { .. })
    }
}

/// The result.
#[derive(Debug, Clone)]
pub struct Analysed {
    pub sets: Vec<FrfSet>,
    pub channels: Vec<Channel>,
    pub fs: f64,
    pub samples: usize,
    pub segments: usize,
    pub settings: WelchSettings,
    pub coherent_gain: f64,
    pub enbw_bins: f64,
    pub notes: Vec<String>,
    /// The hits of an impact job (empty otherwise).
    pub hits: Vec<Hit>,
}

fn find(channels: &[Channel], dof: &Dof, what: &str) -> Result<usize> {
    channels
        .iter()
        .position(|c| c.dof.same_place(dof))
        .ok_or_else(|| {
            let names: Vec<String> = channels.iter().map(|c| c.dof.to_string()).collect();
            Error::usage(format!(
                "{what} {dof} is not among the channels ({})",
                names.join(", ")
            ))
            .field(what.to_string())
        })
}

/// The reference channels the job needs.
fn refs_of(channels: &[Channel], job: &Job) -> Result<Vec<usize>> {
    Ok(match job {
        Job::Spectrum {
            reference: Some(d), ..
        } => vec![find(channels, d, "reference")?],
        Job::Spectrum {
            reference: None, ..
        } => Vec::new(),
        Job::Impact { input, .. } | Job::ImpactEnergy { input, .. } => {
            vec![find(channels, input, "input")?]
        }
        Job::Frf { inputs, .. } => {
            let mut v = Vec::new();
            for d in inputs {
                let i = find(channels, d, "input")?;
                if v.contains(&i) {
                    return Err(Error::usage(format!("input {d} is named twice")).field("input"));
                }
                v.push(i);
            }
            v
        }
    })
}

fn check_sizes(
    channels: &[Channel],
    refs: &[usize],
    settings: &WelchSettings,
    samples: u64,
    fs: f64,
    limits: &Limits,
) -> Result<()> {
    settings.check(fs)?;
    if samples < settings.segment as u64 {
        return Err(Error::usage(format!(
            "the segment of {} samples ({} s) is longer than the record of {samples} samples ({} s at {fs} Hz); choose a shorter segment",
            settings.segment,
            settings.segment as f64 / fs,
            samples as f64 / fs
        ))
        .field("segment"));
    }
    // the accumulated cross spectra and the result
    limits.check_set(
        "the spectra",
        settings.lines(),
        channels.len(),
        refs.len().max(1),
    )?;
    limits.check_work(
        &format!(
            "Welch averaging of {} channel(s) × {samples} samples",
            channels.len()
        ),
        welch_work(settings, samples, channels.len(), refs.len()),
    )
}

/// Estimated floating-point operations of Welch averaging: per segment and
/// channel the detrend and window (6 per sample) and half a complex FFT
/// (2.5 N log₂ N), then 8 per line for each auto and cross product.
pub fn welch_work(settings: &WelchSettings, samples: u64, channels: usize, refs: usize) -> f64 {
    let n = settings.segment as f64;
    let segments = if samples < settings.segment as u64 {
        0.0
    } else {
        ((samples - settings.segment as u64) / settings.step() as u64 + 1) as f64
    };
    segments
        * channels as f64
        * (n * (2.5 * n.log2() + 6.0) + settings.lines() as f64 * 8.0 * (1 + refs) as f64)
}

fn finish(
    a: Averaged,
    channels: Vec<Channel>,
    refs: &[usize],
    job: &Job,
    name: &str,
    prov: &Provenance,
    mut notes: Vec<String>,
) -> Result<Analysed> {
    let dropped = a.samples - ((a.segments - 1) * a.settings.step() + a.settings.segment);
    if dropped > 0 {
        notes.push(format!(
            "the last {dropped} samples ({:.6} s) do not fill a segment and are left out",
            dropped as f64 / a.fs
        ));
    }
    let sets = match job {
        Job::Spectrum { kind, .. } => {
            spectrum_sets(&a, &channels, *kind, refs.first().copied(), name, prov)?
        }
        Job::Impact { .. } | Job::ImpactEnergy { .. } => {
            return Err(Error::internal("impact records are not Welch averages"))
        }
        Job::Frf { estimator, .. } => {
            let outputs: Vec<usize> = (0..channels.len()).filter(|c| !refs.contains(c)).collect();
            estimate(&a, &channels, refs, &outputs, *estimator, name, prov)?
        }
    };
    Ok(Analysed {
        sets,
        channels,
        fs: a.fs,
        samples: a.samples,
        segments: a.segments,
        settings: a.settings,
        coherent_gain: a.window.coherent_gain,
        enbw_bins: a.window.enbw_bins,
        notes,
        hits: Vec::new(),
    })
}

/// A file held in memory as a recording: a time CSV
/// ([`crate::io::time_csv`]) or a UFF file's time histories; with the
/// format's name.
pub fn recording_from_bytes(
    bytes: &[u8],
    file: &str,
    limits: &Limits,
) -> Result<(Recording, String)> {
    if crate::io::time_csv::looks_like_time_csv(bytes) {
        let stem = crate::io::file_stem(file);
        return Ok((
            crate::io::time_csv::read(bytes, file, &stem)?,
            "time-csv".into(),
        ));
    }
    let loaded =
        crate::io::load_with_limits(bytes, file, &crate::io::ImportOptions::default(), limits)?;
    let rec = Recording::from_time_histories(file, &loaded.time_histories)?;
    Ok((rec, loaded.format.name().to_string()))
}

/// A recording in memory (a UFF file's time histories, a time CSV).
pub fn analyse_recording(
    rec: &Recording,
    averaging: &Averaging,
    job: &Job,
    name: &str,
    prov: &Provenance,
    limits: &Limits,
) -> Result<Analysed> {
    // no full scale is known for a UFF or CSV channel: no overload flags
    let over = vec![None; rec.channels.len()];
    analyse_held(rec, &over, averaging, job, name, prov, limits)
}

/// A recording in memory with each channel's overload limit (`over`, as
/// [`wav_recording`] gives them for a WAV file held whole; `None` where no
/// full scale is known), so impact records are flagged as the command line
/// flags them.
pub fn analyse_held(
    rec: &Recording,
    over: &[Option<f64>],
    averaging: &Averaging,
    job: &Job,
    name: &str,
    prov: &Provenance,
    limits: &Limits,
) -> Result<Analysed> {
    if over.len() != rec.channels.len() {
        return Err(Error::internal("one overload limit per channel"));
    }
    if job.is_impact() {
        return impacts(rec, over, job, name, prov, limits);
    }
    let settings = averaging.settings()?;
    let refs = refs_of(&rec.channels, job)?;
    check_sizes(
        &rec.channels,
        &refs,
        &settings,
        rec.len() as u64,
        rec.fs,
        limits,
    )?;
    let v: Vec<&[f64]> = rec.samples.iter().map(|c| c.as_slice()).collect();
    let a = super::welch::average(rec.fs, &v, &refs, settings)?;
    finish(a, rec.channels.clone(), &refs, job, name, prov, Vec::new())
}

/// Described WAV channels: their DOFs and quantities, (index in the file,
/// SI full scale) each, and a note on channels left out.
type Picked = (Vec<Channel>, Vec<(usize, f64)>, Vec<String>);

/// The described WAV channels (see [`Picked`]).
fn pick_channels(
    info: &crate::io::wav::WavInfo,
    file: &str,
    specs: &[ChannelSpec],
) -> Result<Picked> {
    if specs.is_empty() {
        return Err(Error::usage(format!(
            "describe the WAV file's channels to analyse ({} in the file): {}",
            info.channels,
            ChannelSpec::FORM
        ))
        .in_file(file)
        .field("channel"));
    }
    let mut channels = Vec::new();
    let mut picks: Vec<(usize, f64)> = Vec::new();
    for s in specs {
        if s.number > info.channels {
            return Err(Error::usage(format!(
                "channel '{}': the file has {} channel(s)",
                quote(&s.text),
                info.channels
            ))
            .in_file(file)
            .field("channel"));
        }
        if picks.iter().any(|p| p.0 == s.number - 1)
            || channels.iter().any(|c: &Channel| c.dof.same_place(&s.dof))
        {
            return Err(Error::usage(format!(
                "channel '{}' repeats a channel number or DOF",
                quote(&s.text)
            ))
            .field("channel"));
        }
        picks.push((s.number - 1, s.full_scale_si));
        channels.push(Channel {
            dof: s.dof.clone(),
            quantity: s.quantity,
        });
    }
    let mut notes = Vec::new();
    let unused: Vec<String> = (1..=info.channels)
        .filter(|n| !specs.iter().any(|s| s.number == *n))
        .map(|n| n.to_string())
        .collect();
    if !unused.is_empty() {
        notes.push(format!(
            "WAV channel(s) {} not described, left out",
            unused.join(", ")
        ));
    }
    Ok((channels, picks, notes))
}

/// Every remaining frame of the picked channels in SI, held in memory
/// (checked against the memory budget first), with each channel's overload
/// limit (0.999 of its full scale).
fn held<R: Read>(
    mut wav: WavReader<R>,
    file: &str,
    channels: Vec<Channel>,
    picks: &[(usize, f64)],
    limits: &Limits,
) -> Result<(Recording, Vec<Option<f64>>)> {
    let info = wav.info.clone();
    let values = info.frames.checked_mul(channels.len() as u64);
    limits
        .check_bytes(
            "the recording held in memory (8 bytes a sample)",
            values.and_then(|v| v.checked_mul(8)),
        )
        .map_err(|e| e.in_file(file))?;
    let raw = wav.read_all()?;
    let rec = Recording {
        fs: info.sample_rate as f64,
        channels,
        samples: picks
            .iter()
            .map(|&(c, f)| raw[c].iter().map(|v| v * f).collect())
            .collect(),
    };
    let over = picks.iter().map(|&(_, f)| Some(0.999 * f)).collect();
    Ok((rec, over))
}

/// A WAV file held whole as a recording of its described channels (for
/// jobs that need the whole record: impact tests, order tracks), with each
/// channel's overload limit and the notes.
pub fn wav_recording<R: Read>(
    wav: WavReader<R>,
    file: &str,
    specs: &[ChannelSpec],
    limits: &Limits,
) -> Result<(Recording, Vec<Option<f64>>, Vec<String>)> {
    let info = wav.info.clone();
    let (channels, picks, notes) = pick_channels(&info, file, specs)?;
    let (rec, over) = held(wav, file, channels, &picks, limits)?;
    Ok((rec, over, notes))
}

/// A WAV file streamed in blocks of `block` frames: only the described
/// channels, each times its full scale. `progress(frames done, frames)`
/// is called after each block.
#[allow(clippy::too_many_arguments)]
pub fn analyse_wav<R: Read>(
    mut wav: WavReader<R>,
    file: &str,
    specs: &[ChannelSpec],
    averaging: &Averaging,
    job: &Job,
    name: &str,
    prov: &Provenance,
    limits: &Limits,
    progress: &mut dyn FnMut(u64, u64),
) -> Result<Analysed> {
    let info = wav.info.clone();
    let (channels, picks, notes) = pick_channels(&info, file, specs)?;
    let fs = info.sample_rate as f64;
    if job.is_impact() {
        let (rec, over) = held(wav, file, channels, &picks, limits)?;
        let mut a = impacts(&rec, &over, job, name, prov, limits)?;
        a.notes.extend(notes);
        return Ok(a);
    }
    let settings = averaging.settings()?;
    let refs = refs_of(&channels, job)?;
    check_sizes(&channels, &refs, &settings, info.frames, fs, limits)
        .map_err(|e| e.in_file(file))?;
    let mut welch = Welch::new(fs, channels.len(), &refs, settings)?;
    let block = 1usize << 15;
    let mut done = 0u64;
    let mut picked = Vec::with_capacity(block * picks.len());
    loop {
        let frames = wav.read_frames(block)?;
        if frames.is_empty() {
            break;
        }
        picked.clear();
        for frame in frames.chunks_exact(info.channels) {
            for &(c, f) in &picks {
                picked.push(frame[c] * f);
            }
        }
        welch.push_interleaved(&picked)?;
        done += (frames.len() / info.channels) as u64;
        progress(done, info.frames);
    }
    let a = welch.finish().map_err(|e| e.in_file(file))?;
    finish(a, channels, &refs, job, name, prov, notes)
}

/// An impact job on a recording in memory.
fn impacts(
    rec: &Recording,
    over: &[Option<f64>],
    job: &Job,
    name: &str,
    prov: &Provenance,
    limits: &Limits,
) -> Result<Analysed> {
    let (input, settings) = match job {
        Job::Impact {
            input, settings, ..
        }
        | Job::ImpactEnergy { input, settings } => (input, settings),
        _ => return Err(Error::internal("not an impact job")),
    };
    let i = find(&rec.channels, input, "input")?;
    let len = (settings.length_s * rec.fs).round();
    if !(len.is_finite() && len <= rec.len() as f64) {
        return Err(Error::usage(format!(
            "the record length {} s is longer than the recording ({} s)",
            settings.length_s,
            rec.len() as f64 / rec.fs
        ))
        .field("record length"));
    }
    limits.check_set("the FRFs", len as usize / 2 + 1, rec.channels.len(), 1)?;
    // at most one record per record length of the recording
    let records = (rec.len() as f64 / len).floor();
    limits.check_work(
        "the impact records",
        records * rec.channels.len() as f64 * len * (2.5 * len.log2() + 12.0),
    )?;
    let (sets, hits, notes) = match job {
        Job::Impact { estimator, .. } => {
            impact_frf(rec, i, over, settings, *estimator, name, prov)?
        }
        _ => crate::signal::impact::impact_esd(rec, i, over, settings, name, prov)?,
    };
    let segments = hits
        .iter()
        .filter(|h| h.double_hit.is_none() && h.overloaded.is_empty())
        .count();
    Ok(Analysed {
        sets,
        channels: rec.channels.clone(),
        fs: rec.fs,
        samples: rec.len(),
        segments,
        settings: WelchSettings {
            segment: len as usize,
            overlap: 0,
            window: Window::Rectangular,
            detrend: Detrend::None,
        },
        coherent_gain: 1.0,
        enbw_bins: 1.0,
        notes,
        hits,
    })
}
