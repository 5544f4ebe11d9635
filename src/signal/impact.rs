//! Triggered impact records: hits found on the force channel, a record
//! around each, double hits and overloads flagged, and FRFs averaged over
//! the accepted records.
//!
//! Rules (common practice for hammer tests):
//! - **trigger**: the first sample whose |force| reaches `level`, searched
//!   from the end of the previous record; the record starts `pre_trigger_s`
//!   before it and is `length_s` long. A hit too close to the start (no room
//!   for the pre-trigger) or to the end of the recording is left out, with a
//!   note.
//! - **peak**: the largest |force| of the pulse (from the trigger until
//!   |force| first falls below `double_hit_fraction` × that running peak).
//! - **double hit**: after the pulse has ended, |force| reaches
//!   `double_hit_fraction` × the peak again within the record; the record is
//!   flagged with the time from the trigger and the ratio to the peak.
//! - **overload**: a channel whose |value| reaches its limit (e.g. 0.999 ×
//!   a WAV channel's full scale) anywhere in the record.
//!
//! Flagged records are left out of the average and named in the notes. Each
//! accepted record is one segment without detrending: the force channel
//! times the force window (1 for `force_width_s` after the record start,
//! 0 after) and every channel times the exponential window exp(−t/τ) when
//! `decay_s` is given (the same on force and response so the FRF is not
//! distorted; it adds 1/τ to every mode's decay rate).

use super::frf_estimate::{estimate, Estimator};
use super::recording::Recording;
use super::welch::{Detrend, Welch, WelchSettings};
use super::window::Window;
use crate::error::{Error, Result};
use crate::frf::{FrfSet, Provenance, SignalKind};

/// How hits are found and records cut.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImpactSettings {
    /// Trigger level on |force|, SI (N).
    pub level: f64,
    pub pre_trigger_s: f64,
    pub length_s: f64,
    /// Fraction of the peak that ends the pulse and flags a second one.
    pub double_hit_fraction: f64,
    /// Force window width from the record start, s (`None`: force kept whole).
    pub force_width_s: Option<f64>,
    /// Exponential window decay time on every channel, s.
    pub decay_s: Option<f64>,
}

/// One hit.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Hit {
    /// Sample of the trigger.
    pub trigger: usize,
    /// First sample of the record.
    pub start: usize,
    /// Largest |force| of the pulse, SI.
    pub peak: f64,
    /// A second pulse: (seconds after the trigger, its |force| / peak).
    pub double_hit: Option<(f64, f64)>,
    /// Channels that reached their limit in the record (indices).
    pub overloaded: Vec<usize>,
}

impl Hit {
    /// Why the record is left out of the average (a double hit, an
    /// overload on the channels named), `None` when it is accepted; the
    /// words the notes, the time view and the page's cards use.
    pub fn rejection(&self, channels: &[super::Channel]) -> Option<String> {
        if let Some((dt, r)) = self.double_hit {
            return Some(format!(
                "double hit {:.6} s after the trigger at {:.0} % of the peak",
                dt,
                r * 100.0
            ));
        }
        if !self.overloaded.is_empty() {
            let names: Vec<String> = self
                .overloaded
                .iter()
                .map(|&c| {
                    channels
                        .get(c)
                        .map_or_else(|| format!("channel {}", c + 1), |ch| ch.dof.to_string())
                })
                .collect();
            return Some(format!("overload on {}", names.join(", ")));
        }
        None
    }
}

impl ImpactSettings {
    /// The pre-trigger and the double-hit fraction when not given.
    pub const DEFAULT_PRE_TRIGGER_S: f64 = 0.01;
    pub const DEFAULT_DOUBLE_HIT: f64 = 0.1;

    /// The record length in samples at `fs` (checked as the records are cut).
    pub fn record_samples(&self, fs: f64) -> Result<usize> {
        Ok(self.check(fs)?.0)
    }

    fn check(&self, fs: f64) -> Result<(usize, usize)> {
        let bad = |what: &str, v: f64| {
            Error::usage(format!("{what} {v}; expected a positive number")).field(what.to_string())
        };
        if !(self.level.is_finite() && self.level > 0.0) {
            return Err(bad("trigger level", self.level));
        }
        if !(self.length_s.is_finite() && self.length_s > 0.0) {
            return Err(bad("record length", self.length_s));
        }
        if !(self.pre_trigger_s.is_finite() && self.pre_trigger_s >= 0.0) {
            return Err(Error::usage(format!(
                "pre-trigger {} s; expected 0 or more",
                self.pre_trigger_s
            ))
            .field("pre-trigger"));
        }
        if !(self.double_hit_fraction > 0.0 && self.double_hit_fraction < 1.0) {
            return Err(Error::usage(format!(
                "double-hit fraction {}; expected a number between 0 and 1",
                self.double_hit_fraction
            ))
            .field("double-hit"));
        }
        let len = (self.length_s * fs).round() as usize;
        let pre = (self.pre_trigger_s * fs).round() as usize;
        if len < 2 {
            return Err(Error::usage(format!(
                "a record of {} s is under two samples at {fs} Hz",
                self.length_s
            ))
            .field("record length"));
        }
        if pre >= len {
            return Err(Error::usage(format!(
                "the pre-trigger {} s is not shorter than the record {} s",
                self.pre_trigger_s, self.length_s
            ))
            .field("pre-trigger"));
        }
        Ok((len, pre))
    }
}

/// Hits on `force` (SI) at `fs`, with notes on hits left out; `limits` per
/// channel of `all` (the recording's channels) for the overload flags.
pub fn find_hits(
    all: &[Vec<f64>],
    input: usize,
    limits: &[Option<f64>],
    fs: f64,
    s: &ImpactSettings,
) -> Result<(Vec<Hit>, Vec<String>)> {
    let (len, pre) = s.check(fs)?;
    let force = &all[input];
    let n = force.len();
    let mut hits = Vec::new();
    let mut notes = Vec::new();
    let mut i = 0;
    while i < n {
        let Some(t) = (i..n).find(|&k| force[k].abs() >= s.level) else {
            break;
        };
        // the pulse and its peak
        let mut peak = force[t].abs();
        let mut k = t;
        while k < n && force[k].abs() >= s.double_hit_fraction * peak {
            peak = peak.max(force[k].abs());
            k += 1;
        }
        if t < pre || t - pre + len > n {
            notes.push(format!(
                "hit at {:.6} s left out: its record ({} s from {} s before the trigger) does not fit in the recording",
                t as f64 / fs,
                s.length_s,
                s.pre_trigger_s
            ));
            i = k.max(t + 1);
            continue;
        }
        let start = t - pre;
        let end = start + len;
        let double_hit = (k..end)
            .find(|&m| force[m].abs() >= s.double_hit_fraction * peak)
            .map(|m| {
                let second = force[m..end]
                    .iter()
                    .take_while(|v| v.abs() >= s.double_hit_fraction * peak)
                    .fold(0.0f64, |a, v| a.max(v.abs()));
                ((m - t) as f64 / fs, second / peak)
            });
        let overloaded = all
            .iter()
            .zip(limits)
            .enumerate()
            .filter(|(_, (x, l))| l.is_some_and(|l| x[start..end].iter().any(|v| v.abs() >= l)))
            .map(|(c, _)| c)
            .collect();
        hits.push(Hit {
            trigger: t,
            start,
            peak,
            double_hit,
            overloaded,
        });
        i = end;
    }
    Ok((hits, notes))
}

/// The accepted records' averages (rectangular window: each record one
/// segment, force and exponential windows applied to the data), the hits,
/// the notes naming every hit left out, how many were averaged, and the
/// processing in words for the provenance.
fn accepted_records(
    rec: &Recording,
    input: usize,
    limits: &[Option<f64>],
    s: &ImpactSettings,
) -> Result<(super::welch::Averaged, Vec<Hit>, Vec<String>, String)> {
    let fs = rec.fs;
    let (len, _) = s.check(fs)?;
    let (hits, mut notes) = find_hits(&rec.samples, input, limits, fs, s)?;
    let force_w = match s.force_width_s {
        Some(w) => Window::Force { width_s: w }.coefficients(len, fs)?,
        None => vec![1.0; len],
    };
    let exp_w = match s.decay_s {
        Some(t) => Window::Exponential { tau_s: t }.coefficients(len, fs)?,
        None => vec![1.0; len],
    };
    let settings = WelchSettings {
        segment: len,
        overlap: 0,
        window: Window::Rectangular,
        detrend: Detrend::None,
    };
    let mut welch = Welch::new(fs, rec.channels.len(), &[input], settings)?;
    let mut used = 0;
    for (h_no, h) in hits.iter().enumerate() {
        let at = h.trigger as f64 / fs;
        if let Some(why) = h.rejection(&rec.channels) {
            notes.push(format!("hit {} at {at:.6} s left out: {why}", h_no + 1));
            continue;
        }
        let block: Vec<Vec<f64>> = rec
            .samples
            .iter()
            .enumerate()
            .map(|(c, x)| {
                x[h.start..h.start + len]
                    .iter()
                    .enumerate()
                    .map(|(i, v)| v * exp_w[i] * if c == input { force_w[i] } else { 1.0 })
                    .collect()
            })
            .collect();
        let refs: Vec<&[f64]> = block.iter().map(|b| b.as_slice()).collect();
        welch.push_channels(&refs)?;
        used += 1;
    }
    if used == 0 {
        return Err(Error::usage(format!(
            "no usable hit: {} found above {} at {}{}",
            hits.len(),
            s.level,
            rec.channels[input].dof,
            if hits.is_empty() {
                "; lower the trigger level"
            } else {
                ", every one flagged (see the notes)"
            }
        )));
    }
    let a = welch.finish()?;
    let what = format!(
        "{used} of {} impact records: trigger {} at {}, pre-trigger {} s, length {} s, force window {}, exponential window {}, double hit at {} of the peak",
        hits.len(),
        s.level,
        rec.channels[input].dof,
        s.pre_trigger_s,
        s.length_s,
        s.force_width_s.map_or("none".into(), |w| format!("{w} s")),
        s.decay_s.map_or("none".into(), |t| format!("tau {t} s")),
        s.double_hit_fraction
    );
    Ok((a, hits, notes, what))
}

fn with_options(source: &Provenance, what: String) -> Provenance {
    let mut prov = source.clone();
    prov.options = if prov.options.is_empty() {
        what
    } else {
        format!("{}; {what}", prov.options)
    };
    prov
}

/// FRFs from `input` to every other channel, averaged over the hits with
/// neither a double hit nor an overload; the notes name every hit left out.
pub fn impact_frf(
    rec: &Recording,
    input: usize,
    limits: &[Option<f64>],
    s: &ImpactSettings,
    estimator: Estimator,
    name: &str,
    source: &Provenance,
) -> Result<(Vec<FrfSet>, Vec<Hit>, Vec<String>)> {
    let (a, hits, notes, what) = accepted_records(rec, input, limits, s)?;
    let prov = with_options(source, format!("{} from {what}", estimator.name()));
    let outputs: Vec<usize> = (0..rec.channels.len()).filter(|&c| c != input).collect();
    let mut sets = estimate(
        &a,
        &rec.channels,
        &[input],
        &outputs,
        estimator,
        name,
        &Provenance::default(),
    )?;
    for set in &mut sets {
        set.provenance = vec![prov.clone()];
    }
    Ok((sets, hits, notes))
}

/// The energy spectral density of every channel over the accepted records
/// (the mean energy of a record per hertz, one-sided, unit²·s/Hz): the
/// records' mean autopower times the record length T squared, since the
/// autopower of a line is its mean square over T and a line is 1/T wide.
/// So the ESD integrates over frequency to the mean energy of a record,
/// Σ x² Δt (Parseval). Each set is one quantity's channels.
pub fn impact_esd(
    rec: &Recording,
    input: usize,
    limits: &[Option<f64>],
    s: &ImpactSettings,
    name: &str,
    source: &Provenance,
) -> Result<(Vec<FrfSet>, Vec<Hit>, Vec<String>)> {
    let (a, hits, notes, what) = accepted_records(rec, input, limits, s)?;
    let prov = with_options(source, format!("energy spectral density of {what}"));
    let (len, _) = s.check(rec.fs)?;
    let t = len as f64 / rec.fs;
    let mut sets = super::spectra::spectrum_sets(
        &a,
        &rec.channels,
        SignalKind::Autopower,
        None,
        name,
        &Provenance::default(),
    )?;
    for set in &mut sets {
        for v in &mut set.data {
            *v *= t * t;
        }
        set.signal = Some(SignalKind::Esd);
        set.provenance = vec![prov.clone()];
    }
    Ok((sets, hits, notes))
}
