//! The cursor readout: [`probe`] (from the sets) and [`probe_data`] (from
//! resolved data) give each curve's values at the line nearest a frequency
//! (the page maps the pointer to a frequency with the [`Frame`]s a drawing
//! returns); [`step_line`] the next line either way (keyboard);
//! [`nearest_point`] the Nyquist read-out, the point nearest the pointer.

use super::data::{curves, wrap_phase, Curve};
use super::resolved::PlotData;
use super::spec::{Frame, PlotSpec};
use crate::error::Result;
use crate::frf::FrfSet;
use std::collections::BTreeMap;

/// The values of every curve of `spec` at the line nearest `freq`.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Probe {
    pub label: String,
    /// The frequency of the nearest line (Hz).
    pub freq: f64,
    pub re: f64,
    pub im: f64,
    pub magnitude: f64,
    pub unit: String,
    pub level_db: f64,
    pub db_label: String,
    pub phase_deg: f64,
    /// The 95 % interval of the level (dB, absolute) when the curve's set
    /// has an uncertainty; an end without value (the interval reaching
    /// zero) is null.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interval_95_db: Option<[Option<f64>; 2]>,
    /// Whether the line is reliable, when the set has an uncertainty.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reliable: Option<bool>,
}

/// Cursor readout: values at the grid line nearest `freq` for each curve.
pub fn probe(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>, freq: f64) -> Result<Vec<Probe>> {
    Ok(probe_curves(
        &curves(spec, sets, &super::data::Bands::new())?,
        freq,
    ))
}

/// The read-out of resolved data (the page's drawing instance): each
/// curve's values at the line nearest `freq`, so a tonal spectrum reads the
/// line's value, never a zero between lines.
pub fn probe_data(data: &PlotData, freq: f64) -> Vec<Probe> {
    probe_curves(&data.curves, freq)
}

fn nearest_line(freqs: &[f64], freq: f64) -> usize {
    // the first line at or above freq, or the one before it when nearer
    let k = freqs.partition_point(|f| *f < freq);
    if k == freqs.len() || (k > 0 && (freq - freqs[k - 1]).abs() <= (freqs[k] - freq).abs()) {
        k.saturating_sub(1).min(freqs.len() - 1)
    } else {
        k
    }
}

fn reading(c: &Curve, k: usize) -> Probe {
    let v = c.values[k];
    Probe {
        label: c.label.clone(),
        freq: c.freqs[k],
        re: v.re,
        im: v.im,
        magnitude: v.norm(),
        unit: c.unit.clone(),
        level_db: c.level[k],
        db_label: c.db_label.clone(),
        phase_deg: wrap_phase(v),
        // an empty line of a line spectrum has no interval (both ends NaN)
        interval_95_db: c.band.as_ref().and_then(|b| {
            let end = |x: Option<&f64>| x.copied().filter(|v| v.is_finite());
            let (lo, hi) = (b.lo.get(k), b.hi.get(k));
            let none = |x: Option<&f64>| x.map_or(true, |v| v.is_nan());
            (!(none(lo) && none(hi))).then(|| [end(lo), end(hi)])
        }),
        reliable: c.band.as_ref().and_then(|b| b.reliable.get(k).copied()),
    }
}

fn probe_curves(curves: &[Curve], freq: f64) -> Vec<Probe> {
    curves
        .iter()
        .filter(|c| !c.freqs.is_empty())
        .map(|c| reading(c, nearest_line(&c.freqs, freq)))
        .collect()
}

/// The line next to `freq` (the nearest line above when `dir > 0`, below
/// when `dir < 0`) over all curves' grids: the keyboard moves the read-out
/// line by line. None when there is none that way.
pub fn step_line(data: &PlotData, freq: f64, dir: i32) -> Option<f64> {
    let mut best: Option<f64> = None;
    for c in &data.curves {
        let f = &c.freqs;
        let cand = if dir > 0 {
            let k = f.partition_point(|x| *x <= freq);
            f.get(k).copied()
        } else {
            let k = f.partition_point(|x| *x < freq);
            k.checked_sub(1).map(|k| f[k])
        };
        if let Some(x) = cand.filter(|x| x.is_finite()) {
            best = Some(match best {
                None => x,
                Some(b) if dir > 0 => b.min(x),
                Some(b) => b.max(x),
            });
        }
    }
    best
}

/// Pixel position of axis values in a frame (log or linear axes).
pub fn frame_px(f: &Frame, x: f64, y: f64) -> (f64, f64) {
    let t = |v: f64, lo: f64, hi: f64, log: bool| {
        if log {
            (v.log10() - lo.log10()) / (hi.log10() - lo.log10())
        } else {
            (v - lo) / (hi - lo)
        }
    };
    (
        f.x0 as f64 + t(x, f.x_min, f.x_max, f.x_log) * (f.x1 - f.x0) as f64,
        f.y1 as f64 - t(y, f.y_min, f.y_max, f.y_log) * (f.y1 - f.y0) as f64,
    )
}

/// The Nyquist read-out: of every curve's points inside the frame, the one
/// nearest the pointer at pixel (`x`, `y`), with its frequency and values,
/// and its own pixel position. None when no point is inside the frame.
pub fn nearest_point(data: &PlotData, frame: &Frame, x: f64, y: f64) -> Option<(Probe, f64, f64)> {
    let mut best: Option<(f64, usize, usize, f64, f64)> = None;
    for (i, c) in data.curves.iter().enumerate() {
        for (k, v) in c.values.iter().enumerate() {
            if !(v.re.is_finite() && v.im.is_finite()) {
                continue;
            }
            let (px, py) = frame_px(frame, v.re, v.im);
            let inside = px >= frame.x0 as f64
                && px <= frame.x1 as f64
                && py >= frame.y0 as f64
                && py <= frame.y1 as f64;
            if !inside {
                continue;
            }
            let d = (px - x).powi(2) + (py - y).powi(2);
            if best.map_or(true, |b| d < b.0) {
                best = Some((d, i, k, px, py));
            }
        }
    }
    best.map(|(_, i, k, px, py)| (reading(&data.curves[i], k), px, py))
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{sdof, spec};
    use super::*;

    #[test]
    fn probe_reads_nearest_line() {
        // Static receptance at 0.5 Hz is close to 1/k = 1e-4 m/N (single-DOF
        // oscillator below resonance, textbook result).
        let p = probe(&spec("bode"), &sdof(), 0.6).unwrap();
        assert_eq!(p[0].freq, 0.5);
        assert!((p[0].magnitude - 1e-4).abs() / 1e-4 < 0.01);
        assert!((p[0].level_db - (-80.0)).abs() < 0.1);
        // Just above resonance (sqrt(k/m)/(2π) ≈ 15.92 Hz) a passive receptance
        // with e^{+iωt} has Im H < 0, so its phase lies between −90° and −180°
        // (single-DOF oscillator, textbook result).
        let p = probe(&spec("bode"), &sdof(), 15.9).unwrap();
        assert_eq!(p[0].freq, 16.0);
        assert!(p[0].phase_deg < -90.0 && p[0].phase_deg > -180.0);
    }

    /// Two runs' curves: the sdof receptance and the same at half (and at a
    /// PSD of a quarter) amplitude.
    fn two_runs() -> BTreeMap<String, FrfSet> {
        let mut m = sdof();
        let a = m["a"].clone();
        let mut half = a.clone();
        for v in &mut half.data {
            *v *= 0.5;
        }
        let mut psd = a.clone();
        psd.signal = Some(crate::frf::SignalKind::Psd);
        psd.in_qty = crate::units::Quantity::Dimensionless;
        for v in &mut psd.data {
            *v = num_complex::Complex64::new(v.norm_sqr(), 0.0);
        }
        let mut psd_quarter = psd.clone();
        for v in &mut psd_quarter.data {
            *v *= 0.25;
        }
        let mut coarse = a.clone();
        coarse.freqs.truncate(10);
        coarse.data.truncate(10);
        m.insert("half".into(), half);
        m.insert("psd".into(), psd);
        m.insert("psd4".into(), psd_quarter);
        m.insert("coarse".into(), coarse);
        m
    }

    fn diff(after: &str, before: &str) -> crate::error::Result<Vec<Probe>> {
        let spec = PlotSpec::from_json(&format!(
            r#"{{"kind":"difference","series":[{{"set":"{after}"}}],"baseline":[{{"set":"{before}"}}]}}"#
        ))?;
        probe(&spec, &two_runs(), 15.9)
    }

    #[test]
    fn difference_of_half_the_amplitude_is_minus_6_db() {
        // 20·log10(1/2) = −6.0206 dB for an amplitude (field) quantity and
        // 10·log10(1/4) = −6.0206 dB for a quarter of the power (ISO 80000-3
        // definitions of the level of a field and of a power quantity).
        let p = diff("half", "a").unwrap();
        assert!((p[0].level_db + 6.0206).abs() < 1e-4, "{}", p[0].level_db);
        assert!((p[0].magnitude - 0.5).abs() < 1e-12);
        let p = diff("psd4", "psd").unwrap();
        assert!((p[0].level_db + 6.0206).abs() < 1e-4, "{}", p[0].level_db);
        // the same curve against itself changes by nothing
        assert_eq!(diff("a", "a").unwrap()[0].level_db, 0.0);
    }

    #[test]
    fn difference_refuses_two_grids_two_quantities_and_stray_baselines() {
        let e = diff("coarse", "a").unwrap_err();
        assert!(e.message.contains("different frequency grids"), "{e}");
        assert_eq!(e.field.as_deref(), Some("baseline"));
        let e = diff("psd", "a").unwrap_err();
        assert!(e.message.contains("one quantity and reference"), "{e}");
        let e = PlotSpec::from_json(
            r#"{"kind":"bode","series":[{"set":"a"}],"baseline":[{"set":"a"}]}"#,
        )
        .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("baseline"));
        let spec = PlotSpec::from_json(
            r#"{"kind":"difference","series":[{"set":"a"},{"set":"half"}],"baseline":[{"set":"a"}]}"#,
        )
        .unwrap();
        let e = probe(&spec, &two_runs(), 1.0).unwrap_err();
        assert!(e.message.contains("2 curve(s), 1 baseline(s)"), "{e}");
        // and it draws, on one axis
        let spec = PlotSpec::from_json(
            r#"{"kind":"difference","series":[{"set":"half"}],"baseline":[{"set":"a"}]}"#,
        )
        .unwrap();
        let (svg, frames) = super::super::render_svg(&spec, &two_runs()).unwrap();
        assert_eq!(frames.len(), 1);
        assert!(svg.contains("change against the baseline"));
    }
}
