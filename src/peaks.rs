//! Peaks of a result compared between two solves of the same problem: a
//! regularised one (truncated SVD, Tikhonov) against the plain one. A
//! regularisation that moves a peak by more than [`PEAK_CHANGE_DB`] removes
//! or damps dynamics the plain solve shows, and is reported.
//!
//! A peak is a line whose magnitude exceeds both neighbours, per entry
//! (common practice).

use crate::frf::FrfSet;

/// Peak level change above which a regularisation is reported, dB.
pub const PEAK_CHANGE_DB: f64 = 1.0;

/// Entries named in full before the rest are counted.
const MAX_ENTRIES: usize = 5;

/// Warnings where `regularised` changes a peak of `plain` (same layout) by
/// more than [`PEAK_CHANGE_DB`], one per entry (the largest change named),
/// `what` naming the result in words.
pub fn peak_changes(plain: &FrfSet, regularised: &FrfSet, what: &str) -> Vec<String> {
    let nl = plain.n_lines();
    let mut out = Vec::new();
    let mut more = 0usize;
    for i in 0..plain.n_out() {
        for j in 0..plain.n_in() {
            if !plain.is_present(i, j) {
                continue;
            }
            let m: Vec<f64> = (0..nl).map(|k| plain.get(k, i, j).norm()).collect();
            let mut count = 0usize;
            let mut largest: Option<(usize, f64)> = None;
            for k in 1..nl.saturating_sub(1) {
                if !(m[k] > m[k - 1] && m[k] > m[k + 1] && m[k] > 0.0) {
                    continue;
                }
                let d = 20.0 * (regularised.get(k, i, j).norm() / m[k]).log10();
                if d.is_nan() || d.abs() <= PEAK_CHANGE_DB {
                    continue;
                }
                count += 1;
                if largest.is_none_or_smaller(d) {
                    largest = Some((k, d));
                }
            }
            let Some((k, d)) = largest else {
                continue;
            };
            if out.len() == MAX_ENTRIES {
                more += 1;
                continue;
            }
            let entry = if plain.n_in() == 1 && plain.signal.is_some() {
                plain.outputs[i].to_string()
            } else {
                format!("{}/{}", plain.outputs[i], plain.inputs[j])
            };
            out.push(format!(
                "the regularisation changes {count} peak(s) of the {what} at {entry} by more than {PEAK_CHANGE_DB} dB against the plain solve (largest {d:+.1} dB at {} Hz): it removes or damps dynamics the data show there",
                plain.freqs[k]
            ));
        }
    }
    if more > 0 {
        out.push(format!(
            "the regularisation changes peaks of the {what} by more than {PEAK_CHANGE_DB} dB at {more} more entries"
        ));
    }
    out
}

trait Larger {
    fn is_none_or_smaller(&self, d: f64) -> bool;
}

impl Larger for Option<(usize, f64)> {
    /// True when empty or holding a smaller |change| than `d` (MSRV 1.80
    /// has no `Option::is_none_or`).
    fn is_none_or_smaller(&self, d: f64) -> bool {
        match self {
            None => true,
            Some((_, x)) => d.abs() > x.abs(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Dof, SignalKind};
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn spectrum(v: &[f64]) -> FrfSet {
        let mut s = crate::predict::new_spectrum(
            "s",
            (1..=v.len()).map(|k| k as f64 * 10.0).collect(),
            vec![Dof::parse("a:1+Z", "").unwrap()],
            Quantity::Force,
            SignalKind::Peak,
        );
        s.data = v.iter().map(|&x| Complex64::new(x, 0.0)).collect();
        s
    }

    #[test]
    fn a_peak_lowered_by_more_than_one_decibel_is_named() {
        // 20·log10(0.8) = −1.94 dB at the peak (line 3, 30 Hz): reported;
        // 20·log10(0.9) = −0.92 dB: not (the 1 dB limit)
        let plain = spectrum(&[1.0, 2.0, 5.0, 2.0, 1.0]);
        let w = peak_changes(&plain, &spectrum(&[1.0, 2.0, 4.0, 2.0, 1.0]), "force");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].contains("-1.9 dB at 30 Hz") && w[0].contains("a:1+Z"),
            "{w:?}"
        );
        assert!(peak_changes(&plain, &spectrum(&[1.0, 2.0, 4.5, 2.0, 1.0]), "force").is_empty());
        // a change away from the peak is no peak change
        assert!(peak_changes(&plain, &spectrum(&[0.1, 2.0, 5.0, 2.0, 1.0]), "force").is_empty());
    }
}
