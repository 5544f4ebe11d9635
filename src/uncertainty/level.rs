//! The 95 % interval of an overall level from the per-line uncertainty of
//! a spectrum: a seeded Monte Carlo over the lines (independent, circular
//! errors for spectra with phase, real errors for autopower and PSD)
//! through the level functions of [`crate::levels`] (the overall level as
//! `spectrum_levels` forms it).

use super::draws;
use super::model::FrfUncertainty;
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::levels::{self, Weighting};
use num_complex::Complex64;

/// Draws of [`level_interval`] (the 2.5 % and 97.5 % quantiles of 1,000
/// draws are each within about ±0.5 % in probability: common practice).
pub const LEVEL_DRAWS: usize = 1000;
/// Seed of [`level_interval`].
pub const LEVEL_SEED: u64 = 15;

/// The 2.5 % and 97.5 % quantiles of the overall level (dB, weighting `w`)
/// of row `row` of the spectrum `y` with uncertainty `u`.
pub fn level_interval(
    y: &FrfSet,
    u: &FrfUncertainty,
    row: usize,
    w: Weighting,
) -> Result<(f64, f64)> {
    u.check_fits(y)?;
    if row >= y.n_out() || y.n_in() != 1 {
        return Err(Error::usage(format!(
            "level interval: '{}' has no spectrum row {row}",
            y.name
        )));
    }
    let phase = y.signal.is_some_and(|s| s.has_phase());
    let r = levels::reference(y.out_qty, y.outputs[row].dir.is_rotational());
    let mut d = y.clone();
    let mut levels_db = Vec::with_capacity(LEVEL_DRAWS);
    let n = y.n_lines();
    for draw in 0..LEVEL_DRAWS {
        for k in 0..n {
            let x = y.idx(k, row, 0);
            let s = u.std[x];
            let base = (draw * n + k) as u64;
            d.data[x] = if !(s.is_finite() && s > 0.0) {
                y.data[x]
            } else if phase {
                y.data[x] + draws::circular(LEVEL_SEED, base, s)
            } else {
                // a mean square stays non-negative
                let z = draws::normal_pair(LEVEL_SEED, base).re;
                Complex64::new((y.data[x].re + s * z).max(0.0), 0.0)
            };
        }
        // the overall level as levels::spectrum_levels forms it, without its bands
        let ms = levels::line_mean_squares(&d, row)?;
        let l = levels::db_mean_square(levels::overall_mean_square(&d.freqs, &ms, w), r.value);
        if l.is_finite() {
            levels_db.push(l);
        }
    }
    if levels_db.len() < LEVEL_DRAWS / 2 {
        return Err(Error::numeric(format!(
            "level interval of '{}': most draws gave no finite level",
            y.name
        )));
    }
    levels_db.sort_by(|a, b| a.total_cmp(b));
    let q = |p: f64| levels_db[((levels_db.len() - 1) as f64 * p).round() as usize];
    Ok((q(0.025), q(0.975)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Dof, SignalKind};
    use crate::units::Quantity;

    #[test]
    fn one_line_interval_matches_the_closed_form() {
        // one RMS line of 1 Pa with u = 0.01 Pa: |y| has standard deviation
        // u/√2 (circular), so the level's 95 % interval is about
        // 20·log10(1 ± 1.96 · 0.00707) = −0.1213 … +0.1196 dB around 93.98 dB re 20 µPa
        let mut y = FrfSet::zeros(
            "y",
            vec![1000.0],
            vec![Dof::scalar("room", "1")],
            vec![Dof::scalar("", "ref")],
            Quantity::Pressure,
            Quantity::Dimensionless,
        );
        y.signal = Some(SignalKind::Rms);
        y.data[0] = Complex64::new(1.0, 0.0);
        let u = FrfUncertainty {
            std: vec![0.01],
            method: String::new(),
        };
        let l0 = levels::spectrum_levels(&y, 0, 3, Weighting::Z)
            .unwrap()
            .overall_db;
        // 20·log10(1 / 20e-6) = 93.979 dB (ISO 1683 reference)
        assert!((l0 - 93.979).abs() < 1e-3, "{l0}");
        let (lo, hi) = level_interval(&y, &u, 0, Weighting::Z).unwrap();
        // Monte Carlo quantiles of 1,000 draws: within 0.02 dB of the closed form
        assert!((lo - l0 + 0.1213).abs() < 0.02, "{}", lo - l0);
        assert!((hi - l0 - 0.1196).abs() < 0.02, "{}", hi - l0);
    }
}
