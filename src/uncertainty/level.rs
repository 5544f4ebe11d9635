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
    let r = check_row(y, Some(u), row)?;
    let mut d = y.clone();
    let n = y.n_lines();
    let mut levels_db = Vec::with_capacity(LEVEL_DRAWS);
    for draw in 0..LEVEL_DRAWS {
        let l = drawn_level(
            y,
            Some(u),
            row,
            w,
            r,
            (LEVEL_SEED, (draw * n) as u64),
            &mut d,
        )?;
        if l.is_finite() {
            levels_db.push(l);
        }
    }
    quantiles_95(levels_db, &y.name)
}

/// Seed of [`path_spread`] (its own stream: the paths' draws do not
/// repeat the total's).
pub const PATH_SEED: u64 = 16;

/// The spread of path levels at one target.
#[derive(Debug, Clone, PartialEq)]
pub struct PathSpread {
    /// Each path's 95 % level interval (None when most draws gave no
    /// finite level, e.g. a path of zeros).
    pub interval_95_db: Vec<Option<[f64; 2]>>,
    /// `louder[a][b]`: the fraction of draws in which path `a`'s level is
    /// above path `b`'s.
    pub louder: Vec<Vec<f64>>,
}

/// Each path's 95 % overall-level interval at row `row` of its
/// contribution spectrum, and how often one path is louder than another,
/// from [`LEVEL_DRAWS`] joint draws. Paths draw independently (each path's
/// contribution comes from its own FRF columns and excitation rows: see
/// [`super::chain::paths_first_order`]); a path without an uncertainty
/// keeps its level in every draw.
pub fn path_spread(
    paths: &[(&FrfSet, Option<&FrfUncertainty>)],
    row: usize,
    w: Weighting,
) -> Result<PathSpread> {
    let np = paths.len();
    let mut refs = Vec::with_capacity(np);
    for (y, u) in paths {
        refs.push(check_row(y, *u, row)?);
    }
    let mut scratch: Vec<FrfSet> = paths.iter().map(|(y, _)| (*y).clone()).collect();
    let mut per: Vec<Vec<f64>> = vec![Vec::with_capacity(LEVEL_DRAWS); np];
    let mut louder = vec![vec![0.0; np]; np];
    let mut l = vec![f64::NAN; np];
    for draw in 0..LEVEL_DRAWS {
        for (p, (y, u)) in paths.iter().enumerate() {
            let base = ((draw * np + p) * y.n_lines()) as u64;
            l[p] = drawn_level(y, *u, row, w, refs[p], (PATH_SEED, base), &mut scratch[p])?;
            if l[p].is_finite() {
                per[p].push(l[p]);
            }
        }
        for a in 0..np {
            for b in 0..np {
                // a path without energy (−∞ dB) is below any other
                if l[a] > l[b] {
                    louder[a][b] += 1.0;
                }
            }
        }
    }
    for row in louder.iter_mut() {
        for x in row.iter_mut() {
            *x /= LEVEL_DRAWS as f64;
        }
    }
    let interval_95_db = paths
        .iter()
        .zip(per)
        .map(|((y, _), v)| quantiles_95(v, &y.name).ok().map(|(lo, hi)| [lo, hi]))
        .collect();
    Ok(PathSpread {
        interval_95_db,
        louder,
    })
}

/// Row `row` of `y` is a spectrum row the uncertainty fits: its level
/// reference value.
fn check_row(y: &FrfSet, u: Option<&FrfUncertainty>, row: usize) -> Result<f64> {
    if let Some(u) = u {
        u.check_fits(y)?;
    }
    if row >= y.n_out() || y.n_in() != 1 {
        return Err(Error::usage(format!(
            "level interval: '{}' has no spectrum row {row}",
            y.name
        )));
    }
    Ok(levels::reference(y.out_qty, y.outputs[row].dir.is_rotational()).value)
}

/// One draw of row `row` of `y` into `d` (line `k` takes the normal pair
/// `base + k` of stream `seed`) and its overall level as
/// `levels::spectrum_levels` forms it, without its bands.
fn drawn_level(
    y: &FrfSet,
    u: Option<&FrfUncertainty>,
    row: usize,
    w: Weighting,
    reference: f64,
    (seed, base): (u64, u64),
    d: &mut FrfSet,
) -> Result<f64> {
    let phase = y.signal.is_some_and(|s| s.has_phase());
    for k in 0..y.n_lines() {
        let x = y.idx(k, row, 0);
        let s = u.map_or(0.0, |u| u.std[x]);
        d.data[x] = if !(s.is_finite() && s > 0.0) {
            y.data[x]
        } else if phase {
            y.data[x] + draws::circular(seed, base + k as u64, s)
        } else {
            // a mean square stays non-negative
            let z = draws::normal_pair(seed, base + k as u64).re;
            Complex64::new((y.data[x].re + s * z).max(0.0), 0.0)
        };
    }
    let ms = levels::line_mean_squares(d, row)?;
    Ok(levels::db_mean_square(
        levels::overall_mean_square(&d.freqs, &ms, w),
        reference,
    ))
}

/// The 2.5 % and 97.5 % quantiles of the finite levels of the draws;
/// refused when fewer than half the draws gave one.
fn quantiles_95(mut levels_db: Vec<f64>, name: &str) -> Result<(f64, f64)> {
    if levels_db.len() < LEVEL_DRAWS / 2 {
        return Err(Error::numeric(format!(
            "level interval of '{name}': most draws gave no finite level"
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

    #[test]
    fn two_close_paths_swap_as_the_normal_distribution_says() {
        // two paths of one RMS line each, 1 Pa and 0.98 Pa, each with a
        // circular standard uncertainty of 0.02 Pa: to first order each
        // magnitude is normal with standard deviation 0.02/√2, so the
        // weaker path is louder with probability Φ(−0.02 / 0.02) = Φ(−1) =
        // 0.1587 (standard normal table), and the stronger path's 95 %
        // interval is 20·log10(1 ± 1.96 · 0.01414) = −0.245 … +0.238 dB
        let path = |name: &str, a: f64| {
            let mut y = FrfSet::zeros(
                name,
                vec![1000.0],
                vec![Dof::scalar("room", "1")],
                vec![Dof::scalar("", "ref")],
                Quantity::Pressure,
                Quantity::Dimensionless,
            );
            y.signal = Some(SignalKind::Rms);
            y.data[0] = Complex64::new(a, 0.0);
            y
        };
        let (a, b) = (path("a", 1.0), path("b", 0.98));
        let u = FrfUncertainty {
            std: vec![0.02],
            method: String::new(),
        };
        let sp = path_spread(&[(&a, Some(&u)), (&b, Some(&u))], 0, Weighting::Z).unwrap();
        // 1,000 draws: binomial standard error √(0.16 · 0.84 / 1000) = 0.012
        let p_swap = sp.louder[1][0];
        assert!((p_swap - 0.1587).abs() < 0.036, "{p_swap}");
        assert!((sp.louder[0][1] + p_swap - 1.0).abs() < 1e-12);
        let l0 = 20.0 * (1.0f64 / 20e-6).log10();
        let [lo, hi] = sp.interval_95_db[0].unwrap();
        assert!((lo - l0 + 0.245).abs() < 0.03, "{}", lo - l0);
        assert!((hi - l0 - 0.238).abs() < 0.03, "{}", hi - l0);
        // a path without uncertainty keeps its level: the other is louder
        // exactly when its draw lands above
        let sp = path_spread(&[(&a, None), (&b, Some(&u))], 0, Weighting::Z).unwrap();
        let lb = 20.0 * (0.98f64 / 20e-6).log10();
        let [lo, hi] = sp.interval_95_db[0].unwrap();
        assert!((lo - l0).abs() < 1e-9 && (hi - l0).abs() < 1e-9);
        assert!(sp.interval_95_db[1].unwrap()[1] > lb);
        // Φ(−0.02 / 0.01414) = Φ(−1.414) = 0.0787
        assert!(
            (sp.louder[1][0] - 0.0787).abs() < 0.026,
            "{}",
            sp.louder[1][0]
        );
    }
}
