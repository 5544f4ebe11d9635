//! The cursor readout: [`probe`] gives each curve's values at the line
//! nearest a frequency (the page maps the pointer to a frequency with the
//! [`Frame`](super::Frame)s a drawing returns).

use super::data::{resolve, wrap_phase};
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
    let curves = resolve(spec, sets)?;
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
}
