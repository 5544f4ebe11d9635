//! The cursor readout: [`probe`] gives each curve's values at the line
//! nearest a frequency (the page maps the pointer to a frequency with the
//! [`Frame`](super::Frame)s a drawing returns).

use super::data::{curves, wrap_phase};
use super::spec::PlotSpec;
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
}

/// Cursor readout: values at the grid line nearest `freq` for each curve.
pub fn probe(spec: &PlotSpec, sets: &BTreeMap<String, FrfSet>, freq: f64) -> Result<Vec<Probe>> {
    let curves = curves(spec, sets)?;
    let mut out = Vec::new();
    for c in curves {
        if c.freqs.is_empty() {
            continue;
        }
        // Nearest line: the first line at or above freq, or the one before it.
        let k = c.freqs.partition_point(|f| *f < freq);
        let k = if k == c.freqs.len()
            || (k > 0 && (freq - c.freqs[k - 1]).abs() <= (c.freqs[k] - freq).abs())
        {
            k.saturating_sub(1).min(c.freqs.len() - 1)
        } else {
            k
        };
        let v = c.values[k];
        out.push(Probe {
            label: c.label.clone(),
            freq: c.freqs[k],
            re: v.re,
            im: v.im,
            magnitude: v.norm(),
            unit: c.unit.clone(),
            level_db: c.level[k],
            db_label: c.db_label.clone(),
            phase_deg: wrap_phase(v),
        });
    }
    Ok(out)
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
