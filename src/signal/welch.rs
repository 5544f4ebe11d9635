//! Welch averaging of several channels, streamed block by block.
//!
//! The record of each channel is cut into segments of `segment` samples that
//! start every `segment − overlap` samples (samples after the last whole
//! segment are left out); each segment is detrended (none, its mean, or its
//! least-squares line), multiplied by the window and transformed (rustfft,
//! two real channels packed into one complex transform). Per one-sided line
//! k = 0 … ⌊N/2⌋ (Δf = fs/N) the mean over segments of |Xc|² (every channel c)
//! and of conj(Xr)·Xc (every reference r and channel c) is kept. This is
//! `scipy.signal.welch` / `csd` with `nfft = nperseg`, `average='mean'`,
//! `return_onesided=True`, `scaling='spectrum'`: the sums are scaled by
//! 1/(Σw)² and every line but 0 and (N even) N/2 doubled, so a sine of
//! amplitude A on a line reads A²/2 (its mean square). The PSD is that
//! divided by the ENBW in Hz, ENBW·fs/N, which is scipy's `'density'`
//! scaling 1/(fs Σw²).
//!
//! [`Welch::push_interleaved`] takes frames as a WAV file holds them and
//! keeps at most one segment plus one block per channel, so a recording of
//! any length is processed in bounded memory.

use super::window::{properties_of, Window, WindowProperties};
use crate::error::{Error, Result};
use num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::sync::Arc;

/// What is removed from each segment before the window (scipy's `detrend`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Detrend {
    None,
    /// The segment's mean (scipy's default, `'constant'`).
    Constant,
    /// The segment's least-squares straight line (`'linear'`).
    Linear,
}

impl Detrend {
    pub fn parse(text: &str) -> Result<Detrend> {
        match text.trim().to_ascii_lowercase().as_str() {
            "none" | "false" => Ok(Detrend::None),
            "constant" | "mean" => Ok(Detrend::Constant),
            "linear" => Ok(Detrend::Linear),
            _ => Err(Error::usage(format!(
                "unknown detrend '{}'; expected none, constant or linear",
                crate::error::quote(text)
            ))),
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Detrend::None => "none",
            Detrend::Constant => "constant",
            Detrend::Linear => "linear",
        }
    }
}

/// How the record is cut and weighted.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct WelchSettings {
    /// Samples per segment (the FFT length, N).
    pub segment: usize,
    /// Samples shared by consecutive segments (below `segment`).
    pub overlap: usize,
    pub window: Window,
    pub detrend: Detrend,
}

impl WelchSettings {
    /// Checks the settings against a sample rate.
    pub fn check(&self, fs: f64) -> Result<()> {
        if !(fs.is_finite() && fs > 0.0) {
            return Err(
                Error::usage(format!("sample rate {fs} Hz; expected a positive number"))
                    .field("sample rate"),
            );
        }
        if self.segment < 2 {
            return Err(Error::usage(format!(
                "segment length {} samples; expected at least 2",
                self.segment
            ))
            .field("segment"));
        }
        if self.overlap >= self.segment {
            return Err(Error::usage(format!(
                "overlap {} samples is not below the segment length {}",
                self.overlap, self.segment
            ))
            .field("overlap"));
        }
        Ok(())
    }
    /// Samples from one segment's start to the next.
    pub fn step(&self) -> usize {
        self.segment - self.overlap
    }
    /// Whole segments in `n` samples.
    pub fn segments_in(&self, n: usize) -> usize {
        if n < self.segment {
            0
        } else {
            (n - self.segment) / self.step() + 1
        }
    }
    /// One-sided lines: 0 … ⌊N/2⌋.
    pub fn lines(&self) -> usize {
        self.segment / 2 + 1
    }
}

/// The streaming accumulator.
pub struct Welch {
    settings: WelchSettings,
    fs: f64,
    n_ch: usize,
    refs: Vec<usize>,
    w: Vec<f64>,
    fft: Arc<dyn Fft<f64>>,
    buf: Vec<Complex64>,
    scratch: Vec<Complex64>,
    seg: Vec<f64>,
    seg2: Vec<f64>,
    spec: Vec<Complex64>,
    pending: Vec<Vec<f64>>,
    autos: Vec<f64>,
    cross: Vec<Complex64>,
    segments: usize,
    samples: usize,
}

/// The averaged spectra, in autopower scaling (see the module docs).
#[derive(Debug, Clone)]
pub struct Averaged {
    pub fs: f64,
    pub settings: WelchSettings,
    pub window: WindowProperties,
    /// Lines in Hz, k·fs/N.
    pub freqs: Vec<f64>,
    pub segments: usize,
    /// Samples per channel that were pushed (the tail after the last whole
    /// segment included).
    pub samples: usize,
    pub n_ch: usize,
    /// The reference channels of `cross`.
    pub refs: Vec<usize>,
    /// n_lines × n_ch mean squares per line.
    pub autos: Vec<f64>,
    /// n_lines × n_refs × n_ch: mean conj(X_r)·X_c per line, same scaling.
    pub cross: Vec<Complex64>,
}

impl Averaged {
    /// Autopower (mean square per line) of channel `c` at line `k`.
    pub fn auto(&self, k: usize, c: usize) -> f64 {
        self.autos[k * self.n_ch + c]
    }
    /// Cross spectrum conj(X_r)·X_c at line `k`, `r` the index in `refs`.
    pub fn cross(&self, k: usize, r: usize, c: usize) -> Complex64 {
        self.cross[(k * self.refs.len() + r) * self.n_ch + c]
    }
    /// The equivalent noise bandwidth in Hz: autopower / it = PSD.
    pub fn enbw_hz(&self) -> f64 {
        self.window.enbw_bins * self.fs / self.settings.segment as f64
    }
    /// Frequency resolution Δf = fs/N.
    pub fn df(&self) -> f64 {
        self.fs / self.settings.segment as f64
    }
    /// Where `refs` holds channel `c`.
    pub fn ref_index(&self, c: usize) -> Option<usize> {
        self.refs.iter().position(|&r| r == c)
    }
}

impl Welch {
    /// An accumulator for `n_ch` channels at `fs`, with cross spectra
    /// against the channels `refs`.
    pub fn new(fs: f64, n_ch: usize, refs: &[usize], settings: WelchSettings) -> Result<Welch> {
        settings.check(fs)?;
        if n_ch == 0 {
            return Err(Error::usage("no channel to analyse"));
        }
        if let Some(&r) = refs.iter().find(|&&r| r >= n_ch) {
            return Err(Error::internal(format!(
                "reference channel {r} of {n_ch} channels"
            )));
        }
        let w = settings.window.coefficients(settings.segment, fs)?;
        let n = settings.segment;
        let fft = FftPlanner::new().plan_fft_forward(n);
        let scratch = vec![Complex64::new(0.0, 0.0); fft.get_inplace_scratch_len()];
        let lines = settings.lines();
        Ok(Welch {
            settings,
            fs,
            n_ch,
            refs: refs.to_vec(),
            w,
            fft,
            buf: vec![Complex64::new(0.0, 0.0); n],
            scratch,
            seg: vec![0.0; n],
            seg2: vec![0.0; n],
            spec: vec![Complex64::new(0.0, 0.0); lines * n_ch],
            pending: vec![Vec::new(); n_ch],
            autos: vec![0.0; lines * n_ch],
            cross: vec![Complex64::new(0.0, 0.0); lines * refs.len() * n_ch],
            segments: 0,
            samples: 0,
        })
    }

    /// Segments averaged so far.
    pub fn segments(&self) -> usize {
        self.segments
    }

    /// Frames of `n_ch` interleaved samples (a length not a multiple of
    /// `n_ch` is an internal error: readers give whole frames).
    pub fn push_interleaved(&mut self, frames: &[f64]) -> Result<()> {
        if frames.len() % self.n_ch != 0 {
            return Err(Error::internal(format!(
                "{} samples are not whole frames of {} channels",
                frames.len(),
                self.n_ch
            )));
        }
        for (c, p) in self.pending.iter_mut().enumerate() {
            p.extend(frames.iter().skip(c).step_by(self.n_ch));
        }
        self.samples += frames.len() / self.n_ch;
        self.drain();
        Ok(())
    }

    /// One block per channel, all of the same length.
    pub fn push_channels(&mut self, channels: &[&[f64]]) -> Result<()> {
        if channels.len() != self.n_ch {
            return Err(Error::internal(format!(
                "{} channels pushed to an accumulator of {}",
                channels.len(),
                self.n_ch
            )));
        }
        let n = channels.first().map_or(0, |c| c.len());
        if channels.iter().any(|c| c.len() != n) {
            return Err(Error::usage("channels of different lengths"));
        }
        for (p, c) in self.pending.iter_mut().zip(channels) {
            p.extend_from_slice(c);
        }
        self.samples += n;
        self.drain();
        Ok(())
    }

    fn drain(&mut self) {
        let n = self.settings.segment;
        let step = self.settings.step();
        let mut start = 0;
        while self.pending[0].len() - start >= n {
            self.segment_at(start);
            start += step;
        }
        if start > 0 {
            for p in &mut self.pending {
                p.drain(..start.min(p.len()));
            }
        }
    }

    /// The detrended, windowed segment of channel `c` into `out`.
    fn prepare(&self, c: usize, start: usize, out: &mut [f64]) {
        let n = self.settings.segment;
        let x = &self.pending[c][start..start + n];
        match self.settings.detrend {
            Detrend::None => out.copy_from_slice(x),
            Detrend::Constant => {
                let m = x.iter().sum::<f64>() / n as f64;
                for (o, v) in out.iter_mut().zip(x) {
                    *o = v - m;
                }
            }
            Detrend::Linear => {
                // least squares a + b·t on t = 0 … n−1, centred for accuracy
                let tm = (n as f64 - 1.0) / 2.0;
                let mean = x.iter().sum::<f64>() / n as f64;
                let (mut sxy, mut sxx) = (0.0, 0.0);
                for (i, v) in x.iter().enumerate() {
                    let t = i as f64 - tm;
                    sxy += t * (v - mean);
                    sxx += t * t;
                }
                let b = sxy / sxx;
                for (i, (o, v)) in out.iter_mut().zip(x).enumerate() {
                    *o = v - mean - b * (i as f64 - tm);
                }
            }
        }
        for (o, w) in out.iter_mut().zip(&self.w) {
            *o *= w;
        }
    }

    fn segment_at(&mut self, start: usize) {
        let n = self.settings.segment;
        let lines = self.settings.lines();
        let mut seg = std::mem::take(&mut self.seg);
        let mut seg2 = std::mem::take(&mut self.seg2);
        let mut c = 0;
        while c < self.n_ch {
            let pair = c + 1 < self.n_ch;
            self.prepare(c, start, &mut seg);
            if pair {
                self.prepare(c + 1, start, &mut seg2);
            }
            for i in 0..n {
                self.buf[i] = Complex64::new(seg[i], if pair { seg2[i] } else { 0.0 });
            }
            self.fft
                .process_with_scratch(&mut self.buf, &mut self.scratch);
            for k in 0..lines {
                let z = self.buf[k];
                let zc = self.buf[(n - k) % n].conj();
                if pair {
                    // real and imaginary inputs separated by conjugate symmetry
                    self.spec[c * lines + k] = (z + zc) * 0.5;
                    let d = z - zc;
                    self.spec[(c + 1) * lines + k] = Complex64::new(d.im * 0.5, -d.re * 0.5);
                } else {
                    self.spec[c * lines + k] = z;
                }
            }
            c += if pair { 2 } else { 1 };
        }
        let nr = self.refs.len();
        for k in 0..lines {
            for ch in 0..self.n_ch {
                self.autos[k * self.n_ch + ch] += self.spec[ch * lines + k].norm_sqr();
            }
            for (ri, &r) in self.refs.iter().enumerate() {
                let xr = self.spec[r * lines + k].conj();
                for ch in 0..self.n_ch {
                    self.cross[(k * nr + ri) * self.n_ch + ch] += xr * self.spec[ch * lines + k];
                }
            }
        }
        self.seg = seg;
        self.seg2 = seg2;
        self.segments += 1;
    }

    /// The averages; an error when not one whole segment was seen.
    pub fn finish(self) -> Result<Averaged> {
        let n = self.settings.segment;
        if self.segments == 0 {
            return Err(Error::usage(format!(
                "the record has {} samples per channel, shorter than one segment of {n} ({:.6} s at {} Hz); choose a shorter segment",
                self.samples,
                n as f64 / self.fs,
                self.fs
            ))
            .field("segment"));
        }
        let props = properties_of(&self.w);
        let s1: f64 = self.w.iter().sum();
        let lines = self.settings.lines();
        let scale = 1.0 / (s1 * s1 * self.segments as f64);
        let side = |k: usize| {
            if k == 0 || (n % 2 == 0 && k == n / 2) {
                1.0
            } else {
                2.0
            }
        };
        let mut autos = self.autos;
        let mut cross = self.cross;
        let per_line_a = self.n_ch;
        let per_line_c = self.refs.len() * self.n_ch;
        for k in 0..lines {
            let f = scale * side(k);
            for v in &mut autos[k * per_line_a..(k + 1) * per_line_a] {
                *v *= f;
            }
            for v in &mut cross[k * per_line_c..(k + 1) * per_line_c] {
                *v *= f;
            }
        }
        Ok(Averaged {
            fs: self.fs,
            settings: self.settings,
            window: props,
            freqs: (0..lines).map(|k| k as f64 * self.fs / n as f64).collect(),
            segments: self.segments,
            samples: self.samples,
            n_ch: self.n_ch,
            refs: self.refs,
            autos,
            cross,
        })
    }
}

/// Welch averages of whole channels held in memory.
pub fn average(
    fs: f64,
    channels: &[&[f64]],
    refs: &[usize],
    settings: WelchSettings,
) -> Result<Averaged> {
    let mut w = Welch::new(fs, channels.len(), refs, settings)?;
    w.push_channels(channels)?;
    w.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn settings(segment: usize, overlap: usize, window: Window) -> WelchSettings {
        WelchSettings {
            segment,
            overlap,
            window,
            detrend: Detrend::None,
        }
    }

    #[test]
    fn block_sizes_do_not_change_the_result() {
        let fs = 1000.0;
        let x: Vec<f64> = (0..5000)
            .map(|i| ((i * 7919) % 1000) as f64 / 1000.0)
            .collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, v)| v * (i as f64).sin())
            .collect();
        let s = settings(256, 128, Window::Hann);
        let whole = average(fs, &[&x, &y], &[0], s).unwrap();
        let mut w = Welch::new(fs, 2, &[0], s).unwrap();
        for start in (0..5000).step_by(333) {
            let end = (start + 333).min(5000);
            let frames: Vec<f64> = (start..end).flat_map(|i| [x[i], y[i]]).collect();
            w.push_interleaved(&frames).unwrap();
        }
        let streamed = w.finish().unwrap();
        assert_eq!(streamed.segments, s.segments_in(5000));
        for (a, b) in whole.autos.iter().zip(&streamed.autos) {
            assert!((a - b).abs() <= 1e-12 * a.abs().max(1e-300));
        }
    }

    #[test]
    fn parseval_on_a_rectangular_window() {
        // Parseval's theorem for the DFT (common practice): with a
        // rectangular window and one segment, the one-sided autopowers sum to
        // the mean square of the segment
        let x: Vec<f64> = (0..64).map(|i| ((i * 37) % 11) as f64 - 5.0).collect();
        let a = average(10.0, &[&x], &[], settings(64, 0, Window::Rectangular)).unwrap();
        let ms = x.iter().map(|v| v * v).sum::<f64>() / 64.0;
        let sum: f64 = a.autos.iter().sum();
        assert!((sum - ms).abs() < 1e-12 * ms);
    }

    #[test]
    fn too_short_and_bad_settings_are_refused() {
        let x = vec![0.0; 100];
        let e = average(10.0, &[&x], &[], settings(128, 0, Window::Hann)).unwrap_err();
        assert!(e.to_string().contains("shorter than one segment"), "{e}");
        assert!(Welch::new(10.0, 1, &[], settings(128, 128, Window::Hann)).is_err());
        assert!(Welch::new(0.0, 1, &[], settings(128, 0, Window::Hann)).is_err());
    }
}
