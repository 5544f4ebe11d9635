//! Windows for spectral analysis and impact testing, with their corrections.
//!
//! Every window is sampled *periodically* (DFT-even: `N` points of a period
//! `N`), as for spectral analysis; this is what `scipy.signal.get_window`
//! gives by default and what `scipy.signal.welch` uses.
//!
//! - rectangular: 1
//! - Hann: 0.5 − 0.5 cos(2πn/N)
//! - Hamming: 0.54 − 0.46 cos(2πn/N)
//! - flat-top: Σₖ (−1)ᵏ aₖ cos(2πkn/N), a = 0.21557895, 0.41663158,
//!   0.277263158, 0.083578947, 0.006947368 (the five-term window of D'Antona
//!   and Ferrero, *Digital Signal Processing for Measurement Systems*, 2006,
//!   p. 70, which `scipy.signal.windows.flattop` uses)
//! - force (impact testing): 1 for t < `width_s` from the segment start, 0
//!   after (keeps the hammer pulse, removes the noise of the force channel
//!   after it)
//! - exponential (impact testing): exp(−t/`tau_s`), forcing a ringing
//!   response to die out within the record. It adds a known damping: every
//!   mode's decay rate σ grows by 1/τ, so a mode at ω has its damping ratio
//!   raised by 1/(τ ω) (common practice; subtract it from identified damping).
//!
//! Corrections ([`Window::properties`]): the coherent gain is the mean of
//! the window (a line spectrum is divided by it: the amplitude correction);
//! the equivalent noise bandwidth (ENBW) is N Σw² / (Σw)² bins (a PSD is an
//! autopower divided by ENBW·Δf); the energy correction is 1/√(mean w²).

use crate::error::{Error, Result};
use std::f64::consts::PI;

/// The five cosine coefficients of the flat-top window (see the module docs).
pub const FLAT_TOP: [f64; 5] = [
    0.21557895,
    0.41663158,
    0.277263158,
    0.083578947,
    0.006947368,
];

/// A window, with the parameters of the impact-testing ones in seconds.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case", tag = "type", deny_unknown_fields)]
pub enum Window {
    Rectangular,
    Hann,
    Hamming,
    FlatTop,
    /// 1 during the first `width_s` seconds of the segment, 0 after.
    Force {
        width_s: f64,
    },
    /// exp(−t/`tau_s`) from the segment start.
    Exponential {
        tau_s: f64,
    },
}

/// What a window does to spectra, for the record and for corrections.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct WindowProperties {
    /// Mean of the window (the amplitude of a bin-centred sine is scaled by it).
    pub coherent_gain: f64,
    /// Equivalent noise bandwidth in bins: N Σw² / (Σw)².
    pub enbw_bins: f64,
    /// 1 / coherent gain: multiplies a line spectrum's amplitude.
    pub amplitude_correction: f64,
    /// 1 / √(mean w²): multiplies an RMS level of broadband noise.
    pub energy_correction: f64,
}

impl Window {
    /// The window names the command line and recipes take.
    pub const NAMES: &'static str =
        "rectangular, hann, hamming, flat-top, force:WIDTH_S, exponential:TAU_S";

    /// Parse `hann`, `flat-top`, `force:0.01`, `exponential:0.5`, ...
    pub fn parse(text: &str) -> Result<Window> {
        let t = text.trim().to_ascii_lowercase();
        let (name, arg) = match t.split_once(':') {
            Some((n, a)) => (n.trim().to_string(), Some(a.trim().to_string())),
            None => (t.clone(), None),
        };
        let seconds = |what: &str| -> Result<f64> {
            let Some(a) = &arg else {
                return Err(Error::usage(format!(
                    "window '{}' needs its {what} in seconds, e.g. '{name}:0.05'",
                    crate::error::quote(text)
                )));
            };
            match a.parse::<f64>() {
                Ok(v) if v.is_finite() && v > 0.0 => Ok(v),
                _ => Err(Error::usage(format!(
                    "window '{}': {what} '{}' is not a positive number of seconds",
                    crate::error::quote(text),
                    crate::error::quote(a)
                ))),
            }
        };
        let plain = |w: Window| -> Result<Window> {
            if arg.is_some() {
                return Err(Error::usage(format!(
                    "window '{}' takes no parameter; expected one of {}",
                    crate::error::quote(text),
                    Window::NAMES
                )));
            }
            Ok(w)
        };
        match name.as_str() {
            "rectangular" | "boxcar" | "uniform" => plain(Window::Rectangular),
            "hann" | "hanning" => plain(Window::Hann),
            "hamming" => plain(Window::Hamming),
            "flat-top" | "flattop" => plain(Window::FlatTop),
            "force" => Ok(Window::Force {
                width_s: seconds("width")?,
            }),
            "exponential" => Ok(Window::Exponential {
                tau_s: seconds("decay time")?,
            }),
            _ => Err(Error::usage(format!(
                "unknown window '{}'; expected one of {}",
                crate::error::quote(text),
                Window::NAMES
            ))),
        }
    }

    /// The name as [`Window::parse`] reads it.
    pub fn label(&self) -> String {
        match self {
            Window::Rectangular => "rectangular".into(),
            Window::Hann => "hann".into(),
            Window::Hamming => "hamming".into(),
            Window::FlatTop => "flat-top".into(),
            Window::Force { width_s } => format!("force:{width_s}"),
            Window::Exponential { tau_s } => format!("exponential:{tau_s}"),
        }
    }

    /// `n` periodic samples at `fs` samples per second (`fs` only matters
    /// for the force and exponential windows).
    pub fn coefficients(&self, n: usize, fs: f64) -> Result<Vec<f64>> {
        if n == 0 {
            return Err(Error::usage("a window needs at least one sample"));
        }
        let nf = n as f64;
        let cosines = |a: &[f64]| -> Vec<f64> {
            (0..n)
                .map(|i| {
                    let x = 2.0 * PI * i as f64 / nf;
                    a.iter()
                        .enumerate()
                        .map(|(k, &ak)| {
                            let s = if k % 2 == 0 { 1.0 } else { -1.0 };
                            s * ak * (k as f64 * x).cos()
                        })
                        .sum()
                })
                .collect()
        };
        Ok(match *self {
            Window::Rectangular => vec![1.0; n],
            Window::Hann => cosines(&[0.5, 0.5]),
            Window::Hamming => cosines(&[0.54, 0.46]),
            Window::FlatTop => cosines(&FLAT_TOP),
            Window::Force { width_s } => {
                check_seconds("force window width", width_s, n, fs)?;
                (0..n)
                    .map(|i| if (i as f64) / fs < width_s { 1.0 } else { 0.0 })
                    .collect()
            }
            Window::Exponential { tau_s } => {
                check_seconds("exponential window decay time", tau_s, n, fs)?;
                (0..n).map(|i| (-(i as f64) / fs / tau_s).exp()).collect()
            }
        })
    }

    /// Coherent gain, ENBW and corrections of `n` samples at `fs`.
    pub fn properties(&self, n: usize, fs: f64) -> Result<WindowProperties> {
        Ok(properties_of(&self.coefficients(n, fs)?))
    }
}

fn check_seconds(what: &str, v: f64, n: usize, fs: f64) -> Result<()> {
    if !(v.is_finite() && v > 0.0) {
        return Err(Error::usage(format!(
            "{what} is {v}; expected a positive number of seconds"
        )));
    }
    if !(fs.is_finite() && fs > 0.0) {
        return Err(Error::usage(format!(
            "sample rate {fs} Hz; expected a positive number"
        )));
    }
    if v * fs < 1.0 {
        return Err(Error::usage(format!(
            "{what} {v} s is shorter than one sample at {fs} Hz ({n} samples a segment)"
        )));
    }
    Ok(())
}

/// Coherent gain, ENBW and corrections of given coefficients.
pub fn properties_of(w: &[f64]) -> WindowProperties {
    let n = w.len() as f64;
    let s1: f64 = w.iter().sum();
    let s2: f64 = w.iter().map(|v| v * v).sum();
    let cg = s1 / n;
    WindowProperties {
        coherent_gain: cg,
        enbw_bins: n * s2 / (s1 * s1),
        amplitude_correction: 1.0 / cg,
        energy_correction: 1.0 / (s2 / n).sqrt(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hann_and_hamming_against_harris_1978() {
        // Harris, Proc. IEEE 66(1), 1978, Table I: Hann coherent gain 0.50,
        // ENBW 1.50 bins; Hamming 0.54, 1.36 bins; rectangular 1.00, 1.00.
        let h = Window::Hann.properties(1024, 1.0).unwrap();
        assert!((h.coherent_gain - 0.5).abs() < 1e-12);
        assert!((h.enbw_bins - 1.5).abs() < 1e-12);
        let m = Window::Hamming.properties(1024, 1.0).unwrap();
        assert!((m.coherent_gain - 0.54).abs() < 1e-12);
        assert!((m.enbw_bins - 1.36).abs() < 0.005);
        let r = Window::Rectangular.properties(100, 1.0).unwrap();
        assert_eq!((r.coherent_gain, r.enbw_bins), (1.0, 1.0));
    }

    #[test]
    fn flat_top_gain_is_its_first_coefficient() {
        // a cosine-sum window sampled periodically has mean a0 and ENBW
        // (a0² + ½Σaₖ²)/a0² bins (Harris 1978, eq. for cosine-sum windows)
        let p = Window::FlatTop.properties(4096, 1.0).unwrap();
        let a = FLAT_TOP;
        let enbw = (a[0] * a[0] + 0.5 * a[1..].iter().map(|x| x * x).sum::<f64>()) / (a[0] * a[0]);
        assert!((p.coherent_gain - a[0]).abs() < 1e-12);
        assert!((p.enbw_bins - enbw).abs() < 1e-9);
        assert!((p.enbw_bins - 3.77).abs() < 0.005, "{}", p.enbw_bins);
    }

    #[test]
    fn parse_names_and_refusals() {
        assert_eq!(Window::parse("Flat-Top").unwrap(), Window::FlatTop);
        assert_eq!(
            Window::parse("force:0.02").unwrap(),
            Window::Force { width_s: 0.02 }
        );
        assert!(Window::parse("hann:3").is_err());
        assert!(Window::parse("exponential").is_err());
        assert!(Window::parse("exponential:-1").is_err());
        assert!(Window::parse("kaiser").is_err());
        // shorter than a sample
        assert!(Window::Force { width_s: 1e-6 }
            .coefficients(64, 1000.0)
            .is_err());
    }
}
