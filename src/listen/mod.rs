//! Hearing a prediction: a sound-pressure spectrum (a result of `respond`
//! or `paths`) becomes a calibrated sound, each line a sinusoid at its
//! frequency with its amplitude (√(2 × mean square), [`crate::levels::line_mean_squares`]
//! for peak, RMS, autopower and PSD spectra) and its phase (the spectrum's
//! own for complex peak and RMS spectra; seeded random phases for autopower
//! and PSD, which carry none). Dense lines make broadband sound, single
//! lines tones, so the sound's 1/3-octave band levels are the spectrum's.
//!
//! Calibration: sample value 1.0 stands for [`Sound::full_scale_pa`] pascal.
//! By default that is the sound's peak pressure ×10^(1/20) (peak at −1 dB
//! of full scale); a fixed full scale (`--full-scale-pa`) makes sounds
//! comparable (a baseline and a variant at the same gain). To play at the
//! predicted level, set the playback gain so that a full-scale sine gives
//! [`Sound::full_scale_spl_db`] dB SPL at the listener.
//!
//! Hearing safety: the page starts at a low volume and both faces print
//! [`HEARING_CAUTION`].

mod wav;

pub use wav::float_wav;

use crate::error::{Error, Result};
use crate::frf::{FrfSet, SignalKind};
use crate::limits::Limits;
use crate::units::Quantity;

/// Shown wherever a sound is played or written.
pub const HEARING_CAUTION: &str = "Listen at a low volume first: a calibrated playback of a loud prediction can be loud. \
The sound illustrates the predicted spectrum; it is not a measurement and does not replace an assessment against noise limits.";

/// How to make the sound.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ListenOptions {
    /// Samples per second.
    pub rate: u32,
    /// Duration in seconds.
    pub seconds: f64,
    /// Pressure of sample value 1.0 (Pa); `None`: the peak pressure + 1 dB.
    pub full_scale_pa: Option<f64>,
    /// Seed of the random phases of autopower and PSD lines.
    pub seed: u64,
}

impl Default for ListenOptions {
    fn default() -> Self {
        ListenOptions {
            rate: 48_000,
            seconds: 10.0,
            full_scale_pa: None,
            seed: 1,
        }
    }
}

/// A calibrated sound.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Sound {
    pub rate: u32,
    #[serde(skip)]
    pub samples: Vec<f32>,
    /// Pressure (Pa) of sample value 1.0.
    pub full_scale_pa: f64,
    /// Level of a full-scale sine, dB re 20 µPa: the playback gain that
    /// plays the sound at the predicted level makes a full-scale sine this loud.
    pub full_scale_spl_db: f64,
    /// Lines above half the sample rate, left out (named in `notes`).
    pub notes: Vec<String>,
}

/// The sound of output row `out` of the sound-pressure spectrum `set`.
pub fn synthesize(
    set: &FrfSet,
    out: usize,
    opts: &ListenOptions,
    limits: &Limits,
) -> Result<Sound> {
    let mut v = synthesize_together(&[(set, out)], opts, limits)?;
    v.pop().ok_or_else(|| Error::internal("no sound made"))
}

/// The sounds of several spectra (a baseline and its variants) at one
/// gain: one full-scale pressure for all (the loudest one's peak + 1 dB
/// unless given), so switching between them compares their levels.
pub fn synthesize_together(
    curves: &[(&FrfSet, usize)],
    opts: &ListenOptions,
    limits: &Limits,
) -> Result<Vec<Sound>> {
    let mut pressures = Vec::new();
    for (i, (set, out)) in curves.iter().enumerate() {
        // all sounds are held at once
        let mut o = *opts;
        o.seconds = opts.seconds * (i + 1) as f64;
        check_size(&o, limits)?;
        pressures.push(pressure(set, *out, opts, limits)?);
    }
    let peak = pressures
        .iter()
        .flat_map(|(p, _)| p.iter())
        .fold(0.0f64, |m, v| m.max(v.abs()));
    let full = opts.full_scale_pa.unwrap_or(peak * 10f64.powf(1.0 / 20.0));
    if peak > full {
        return Err(Error::usage(format!(
            "the sound's peak pressure {peak:.4e} Pa exceeds the full scale {full:.4e} Pa: raise --full-scale-pa to at least the peak, or leave it out"
        ))
        .field("full_scale_pa"));
    }
    Ok(pressures
        .into_iter()
        .map(|(p, notes)| Sound {
            rate: opts.rate,
            samples: p.iter().map(|v| (v / full) as f32).collect(),
            full_scale_pa: full,
            full_scale_spl_db: crate::levels::db_rms(full / std::f64::consts::SQRT_2, 20e-6),
            notes,
        })
        .collect())
}

fn check_size(opts: &ListenOptions, limits: &Limits) -> Result<()> {
    let n = (opts.seconds * f64::from(opts.rate)).round() as u64;
    limits.check_values("the sounds' samples", Some(n / 2 + 1))
}

/// The pressure samples (Pa) of one spectrum row, and notes.
fn pressure(
    set: &FrfSet,
    out: usize,
    opts: &ListenOptions,
    limits: &Limits,
) -> Result<(Vec<f64>, Vec<String>)> {
    if set.signal.is_none() || set.out_qty != Quantity::Pressure {
        return Err(Error::quantity(format!(
            "'{}' is not a sound-pressure spectrum (it is {}); a sound is made from a predicted pressure spectrum, such as a 'respond' step's result at a microphone",
            crate::error::quote(&set.name),
            if set.signal.is_some() { format!("a {} spectrum", set.out_qty) } else { "an FRF set".into() }
        )));
    }
    if !(8_000..=192_000).contains(&opts.rate) {
        return Err(Error::usage(format!(
            "sample rate {} Hz: expected 8000 to 192000",
            opts.rate
        ))
        .field("rate"));
    }
    if !(opts.seconds.is_finite() && opts.seconds > 0.0 && opts.seconds <= 600.0) {
        return Err(Error::usage(format!(
            "duration {} s: expected above 0 and at most 600",
            opts.seconds
        ))
        .field("seconds"));
    }
    if let Some(fs) = opts.full_scale_pa {
        if !(fs.is_finite() && fs > 0.0) {
            return Err(
                Error::usage(format!("full scale {fs} Pa: expected a pressure above 0"))
                    .field("full_scale_pa"),
            );
        }
    }
    let ms = crate::levels::line_mean_squares(set, out)?;
    let n = (opts.seconds * f64::from(opts.rate)).round() as usize;
    let nyquist = f64::from(opts.rate) / 2.0;
    let mut lines = Vec::new();
    let mut above = 0usize;
    let mut rng = opts.seed.max(1);
    for (k, (&f, &m)) in set.freqs.iter().zip(&ms).enumerate() {
        if m.is_nan() || m <= 0.0 || f <= 0.0 {
            continue;
        }
        if f >= nyquist {
            above += 1;
            continue;
        }
        let phase = match set.signal {
            Some(SignalKind::Peak) | Some(SignalKind::Rms) => set.get(k, out, 0).arg(),
            _ => {
                // xorshift64: reproducible phases for spectra that carry none
                rng ^= rng << 13;
                rng ^= rng >> 7;
                rng ^= rng << 17;
                (rng >> 11) as f64 / (1u64 << 53) as f64 * std::f64::consts::TAU
            }
        };
        lines.push((f, (2.0 * m).sqrt(), phase));
    }
    if lines.is_empty() {
        return Err(Error::numeric(format!(
            "'{}' holds no line with sound between 0 Hz and {nyquist} Hz: there is nothing to hear",
            crate::error::quote(&set.name)
        )));
    }
    check_size(opts, limits)?;
    limits.check_work(
        "synthesizing the sound",
        8.0 * lines.len() as f64 * n as f64,
    )?;
    let mut p = vec![0.0f64; n];
    let dt = 1.0 / f64::from(opts.rate);
    const BLOCK: usize = 4096;
    for &(f, a, ph) in &lines {
        let w = std::f64::consts::TAU * f * dt;
        let step = num_complex::Complex64::from_polar(1.0, w);
        for (b, chunk) in p.chunks_mut(BLOCK).enumerate() {
            // exact phase at each block start keeps the recurrence from drifting
            let mut z = num_complex::Complex64::from_polar(a, w * (b * BLOCK) as f64 + ph);
            for v in chunk.iter_mut() {
                *v += z.re;
                z *= step;
            }
        }
    }
    let mut notes = Vec::new();
    if above > 0 {
        notes.push(format!(
            "{above} line(s) at or above {nyquist} Hz (half the sample rate) left out"
        ));
    }
    Ok((p, notes))
}
