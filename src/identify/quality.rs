//! How good an identified model is: the modal assurance criterion (MAC)
//! between shapes, the auto-MAC of a set of shapes, the modal phase
//! collinearity (MPC) of each shape, and per FRF the correlation and the
//! relative error of the synthesized against the measured values, over the
//! fitted band and per one-third-octave band (IEC 61260-1 band edges).
//!
//! * MAC(a, b) = |aᴴb|² / ((aᴴa)(bᴴb)) (complex shapes; Allemang & Brown,
//!   1982, from memory).
//! * MPC: with the shape's real and imaginary parts x and y (after removing
//!   nothing), the eigenvalues λ₁ ≥ λ₂ of [[xᵀx, xᵀy], [xᵀy, yᵀy]] give
//!   MPC = ((λ₁ − λ₂)/(λ₁ + λ₂))²: 1 for a shape whose values are all in
//!   phase or opposite (a real mode), lower for a complex one (from memory:
//!   Pappa, Elliott and Schenk, 1993).
//! * Correlation per FRF: |Σ Hₘᴴ Hₛ|² / (Σ|Hₘ|² Σ|Hₛ|²) over the band's
//!   lines (1 = same shape of curve; the frequency-response form of the MAC).
//! * Error per FRF and band: ‖Hₛ − Hₘ‖ / ‖Hₘ‖ over the lines of the band.
//!
//! A fit is flagged poor (common practice) when a correlation is below
//! [`CORRELATION_MIN`] or the band error of the whole fitted band is above
//! [`ERROR_MAX`].

use num_complex::Complex64;
use serde::{Deserialize, Serialize};

/// Correlation below which an FRF's fit is flagged (common practice).
pub const CORRELATION_MIN: f64 = 0.95;
/// Relative error over the fitted band above which an FRF's fit is flagged
/// (common practice).
pub const ERROR_MAX: f64 = 0.2;

/// MAC of two complex vectors (0 when either is zero).
pub fn mac(a: &[Complex64], b: &[Complex64]) -> f64 {
    let ab: Complex64 = a.iter().zip(b).map(|(x, y)| x.conj() * y).sum();
    let aa: f64 = a.iter().map(|x| x.norm_sqr()).sum();
    let bb: f64 = b.iter().map(|x| x.norm_sqr()).sum();
    if aa > 0.0 && bb > 0.0 {
        ab.norm_sqr() / (aa * bb)
    } else {
        0.0
    }
}

/// The MAC of every pair of two sets of shapes: rows `a`, columns `b`.
pub fn mac_matrix(a: &[Vec<Complex64>], b: &[Vec<Complex64>]) -> Vec<Vec<f64>> {
    a.iter()
        .map(|x| b.iter().map(|y| mac(x, y)).collect())
        .collect()
}

/// The auto-MAC of a set of shapes.
pub fn auto_mac(a: &[Vec<Complex64>]) -> Vec<Vec<f64>> {
    mac_matrix(a, a)
}

/// Modal phase collinearity of a shape (see the module docs).
pub fn mpc(a: &[Complex64]) -> f64 {
    let xx: f64 = a.iter().map(|v| v.re * v.re).sum();
    let yy: f64 = a.iter().map(|v| v.im * v.im).sum();
    let xy: f64 = a.iter().map(|v| v.re * v.im).sum();
    let tr = xx + yy;
    if tr <= 0.0 {
        return 0.0;
    }
    let disc = ((xx - yy) * (xx - yy) + 4.0 * xy * xy).sqrt();
    let (l1, l2) = ((tr + disc) / 2.0, (tr - disc) / 2.0);
    ((l1 - l2) / (l1 + l2)).powi(2)
}

/// Correlation of two curves (see the module docs).
pub fn correlation(measured: &[Complex64], synth: &[Complex64]) -> f64 {
    mac(measured, synth)
}

/// ‖s − m‖ / ‖m‖.
pub fn relative_error(measured: &[Complex64], synth: &[Complex64]) -> f64 {
    let d: f64 = measured
        .iter()
        .zip(synth)
        .map(|(m, s)| (s - m).norm_sqr())
        .sum();
    let n: f64 = measured.iter().map(|m| m.norm_sqr()).sum();
    if n > 0.0 {
        (d / n).sqrt()
    } else {
        f64::INFINITY
    }
}

/// The error of one FRF in one band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandError {
    /// Nominal mid-band frequency (one-third octave), e.g. "100".
    pub band: String,
    pub lower: f64,
    pub upper: f64,
    pub lines: usize,
    pub error: f64,
}

/// The fit of one measured FRF.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FrfFit {
    pub output: String,
    pub input: String,
    pub correlation: f64,
    /// Relative error over the fitted band.
    pub error: f64,
    pub bands: Vec<BandError>,
    /// Flagged poor (common-practice limits, see the module docs).
    pub poor: bool,
}

/// The fit of one entry over `freqs`.
pub fn frf_fit(
    output: String,
    input: String,
    freqs: &[f64],
    measured: &[Complex64],
    synth: &[Complex64],
) -> FrfFit {
    let correlation = correlation(measured, synth);
    let error = relative_error(measured, synth);
    let mut bands = Vec::new();
    if let (Some(&lo), Some(&hi)) = (freqs.first(), freqs.last()) {
        if let Ok(bs) = crate::levels::bands_covering(3, lo, hi) {
            for b in bs {
                let idx: Vec<usize> = (0..freqs.len())
                    .filter(|&k| freqs[k] >= b.lower && freqs[k] < b.upper)
                    .collect();
                if idx.is_empty() {
                    continue;
                }
                let m: Vec<Complex64> = idx.iter().map(|&k| measured[k]).collect();
                let s: Vec<Complex64> = idx.iter().map(|&k| synth[k]).collect();
                bands.push(BandError {
                    band: b.label.clone(),
                    lower: b.lower,
                    upper: b.upper,
                    lines: idx.len(),
                    error: relative_error(&m, &s),
                });
            }
        }
    }
    let poor = !(correlation >= CORRELATION_MIN && error <= ERROR_MAX);
    FrfFit {
        output,
        input,
        correlation,
        error,
        bands,
        poor,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mac_and_mpc_of_simple_vectors() {
        let a = vec![Complex64::new(1.0, 0.0), Complex64::new(-2.0, 0.0)];
        let b: Vec<Complex64> = a.iter().map(|v| v * Complex64::new(0.3, 0.7)).collect();
        assert!((mac(&a, &b) - 1.0).abs() < 1e-15);
        assert!((mpc(&b) - 1.0).abs() < 1e-12);
        let c = vec![Complex64::new(1.0, 0.0), Complex64::new(0.0, 1.0)];
        assert!(mpc(&c) < 1e-12);
        assert!(
            mac(
                &[Complex64::new(1.0, 0.0), Complex64::new(0.0, 0.0)],
                &[Complex64::new(0.0, 0.0), Complex64::new(1.0, 0.0)]
            ) < 1e-15
        );
        let f = [10.0, 20.0];
        let fit = frf_fit("o".into(), "i".into(), &f, &a, &a);
        assert!(!fit.poor && fit.error == 0.0);
    }
}
