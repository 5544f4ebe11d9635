//! Operational prediction: responses y = H·f from FRFs and excitation
//! spectra, path contributions and their ranking ([`paths`]), blocked forces
//! from a test bench ([`blocked`]) and variant comparisons ([`variants`]).
//!
//! Spectra are [`FrfSet`]s with one input `Dof::scalar("", "ref")`, input
//! quantity `Dimensionless` and `signal = Some(kind)`. Complex line spectra
//! (peak or RMS) are propagated coherently, with their phases. Autopowers and
//! PSDs carry no phase: their contributions are added incoherently, which
//! assumes the sources are mutually uncorrelated; every such result carries a
//! warning that says so. Kinds are never mixed silently: convert with
//! [`convert_signal`] first.
//!
//! Every prediction here assumes linear, small-amplitude behaviour of the
//! data supplied; it does not replace measurement, local regulations or the
//! judgement of a licensed professional where it is used against noise
//! limits or for safety.

pub mod blocked;
pub mod paths;
pub mod variants;

use crate::error::{Error, Result};
use crate::frf::{labels, Dof, FrfSet, SignalKind};
use crate::units::Quantity;
use num_complex::Complex64;

/// The warning attached to every incoherent (autopower/PSD) result.
pub const INCOHERENT_ASSUMPTION: &str = "the excitation is an autopower/PSD without phase: contributions were added as mean squares, which assumes the sources are mutually uncorrelated; correlated sources can give up to 10·log10(N) dB more or much less";

/// The caution shown with every prediction used against limits.
pub const CAUTION: &str = "Predictions are engineering estimates that assume linear, small-amplitude behaviour of the data supplied; they do not replace measurement, local regulations or a licensed professional's judgement where used against noise limits or for structural safety.";

/// Error unless `b` has the grid of `a` (the one rule: [`crate::grid::require_same_grid`]).
pub(crate) fn require_same_grid(a: &FrfSet, b: &FrfSet) -> Result<()> {
    crate::grid::require_same_grid(a, b, "a prediction")
}

/// Check that `s` is a spectrum and return its kind.
pub fn require_spectrum(s: &FrfSet) -> Result<SignalKind> {
    let kind = s.signal.ok_or_else(|| {
        Error::quantity(format!(
            "'{}' is an FRF set; a spectrum (peak, RMS, autopower or PSD) was expected",
            s.name
        ))
    })?;
    if matches!(kind, SignalKind::Cross | SignalKind::Esd) {
        return Err(Error::quantity(format!(
            "'{}' is {}; predictions and spectrum conversions take peak, RMS, autopower or PSD spectra",
            s.name,
            kind.describe()
        )));
    }
    if s.n_in() != 1 || s.in_qty != Quantity::Dimensionless {
        return Err(Error::quantity(format!(
            "'{}': a spectrum has one dimensionless reference column; this set has {} inputs of {}",
            s.name,
            s.n_in(),
            s.in_qty
        )));
    }
    if !kind.has_phase() {
        for (n, v) in s.data.iter().enumerate() {
            let i = (n / s.n_in()) % s.n_out().max(1);
            if !s.is_present(i, 0) {
                continue;
            }
            if v.re.is_nan() || v.re < 0.0 || v.im.abs() > 1e-9 * v.re.abs().max(f64::MIN_POSITIVE)
            {
                let k = n / s.n_out().max(1);
                return Err(Error::numeric(format!(
                    "'{}' is a {} but holds {} at {} / {} Hz; expected a real, non-negative mean square",
                    s.name,
                    kind.name(),
                    v,
                    s.outputs[i],
                    s.freqs.get(k).copied().unwrap_or(f64::NAN)
                )));
            }
        }
    }
    Ok(kind)
}

/// A new empty spectrum at `dofs`.
pub fn new_spectrum(
    name: &str,
    freqs: Vec<f64>,
    dofs: Vec<Dof>,
    qty: Quantity,
    kind: SignalKind,
) -> FrfSet {
    let mut s = FrfSet::zeros(
        name,
        freqs,
        dofs,
        vec![Dof::scalar("", "ref")],
        qty,
        Quantity::Dimensionless,
    );
    s.signal = Some(kind);
    s
}

/// For each row of `exc`, the FRF input it drives and the sign product
/// (an excitation at `n-Z` drives an FRF column at `n+Z` with sign −1).
pub(crate) fn match_inputs(frf: &FrfSet, exc: &FrfSet) -> Result<Vec<(usize, f64)>> {
    let mut v = Vec::with_capacity(exc.n_out());
    for d in &exc.outputs {
        let j = frf.in_place(d).ok_or_else(|| {
            Error::dof(format!(
                "the excitation '{}' acts at {d}, which is not an input of '{}'; its inputs are {}",
                exc.name,
                frf.name,
                labels(&frf.inputs)
            ))
        })?;
        v.push((j, d.sign() * frf.inputs[j].sign()));
    }
    Ok(v)
}

pub(crate) fn check_pair(frf: &FrfSet, exc: &FrfSet) -> Result<SignalKind> {
    if frf.signal.is_some() {
        return Err(Error::quantity(format!(
            "'{}' is a spectrum; the transfer side of a prediction must be an FRF set",
            frf.name
        )));
    }
    let kind = require_spectrum(exc)?;
    if exc.out_qty != frf.in_qty {
        return Err(Error::quantity(format!(
            "the excitation '{}' is {} but the FRFs of '{}' are per {}; convert one of them first",
            exc.name, exc.out_qty, frf.name, frf.in_qty
        )));
    }
    require_same_grid(frf, exc)?;
    for (r, d) in exc.outputs.iter().enumerate() {
        if !exc.is_present(r, 0) {
            return Err(Error::missing(format!(
                "the excitation '{}' has no values at {d}",
                exc.name
            )));
        }
    }
    let m = match_inputs(frf, exc)?;
    let mut missing = Vec::new();
    for i in 0..frf.n_out() {
        for &(j, _) in &m {
            if !frf.is_present(i, j) {
                missing.push(format!("{} / {}", frf.outputs[i], frf.inputs[j]));
            }
        }
    }
    if !missing.is_empty() {
        return Err(Error::missing(format!(
            "the prediction through '{}' needs {} FRF entries that are missing: {}",
            frf.name,
            missing.len(),
            missing
                .iter()
                .take(8)
                .cloned()
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    Ok(kind)
}

/// Operational response at every output of `frf` to the excitation spectrum
/// `exc` acting at some of its inputs: y_i = Σ_j H_ij f_j per line (peak or
/// RMS, coherent), or y_i = Σ_j |H_ij|² S_j (autopower or PSD, incoherent,
/// with [`INCOHERENT_ASSUMPTION`] among the warnings).
///
/// The result is a spectrum of `frf.out_qty` of the same kind as `exc`.
/// FRF inputs without excitation are taken as unloaded (a warning names them).
pub fn operational_response(frf: &FrfSet, exc: &FrfSet) -> Result<FrfSet> {
    let kind = check_pair(frf, exc)?;
    let m = match_inputs(frf, exc)?;
    let mut y = new_spectrum(
        &format!("{} response", frf.name),
        frf.freqs.clone(),
        frf.outputs.clone(),
        frf.out_qty,
        kind,
    );
    for k in 0..frf.n_lines() {
        for i in 0..frf.n_out() {
            let mut acc = Complex64::new(0.0, 0.0);
            for (r, &(j, sg)) in m.iter().enumerate() {
                let h = frf.get(k, i, j);
                let f = exc.get(k, r, 0);
                if kind.has_phase() {
                    acc += h * f * sg;
                } else {
                    acc += h.norm_sqr() * f.re;
                }
            }
            y.set(k, i, 0, acc);
        }
    }
    let unused: Vec<String> = (0..frf.n_in())
        .filter(|j| !m.iter().any(|(mj, _)| mj == j))
        .map(|j| frf.inputs[j].to_string())
        .collect();
    y.warnings = exc.warnings.clone();
    if !unused.is_empty() {
        y.warnings.push(format!(
            "inputs of '{}' without excitation were taken as unloaded: {}",
            frf.name,
            unused.join(", ")
        ));
    }
    if !kind.has_phase() {
        y.warnings.push(INCOHERENT_ASSUMPTION.to_string());
    }
    y.warnings.push(CAUTION.to_string());
    Ok(y)
}

/// Convert a spectrum to another kind: peak ↔ RMS (factor √2), complex →
/// autopower (mean square per line) or PSD (÷ line width), autopower ↔ PSD.
/// Autopower or PSD cannot become peak or RMS: their phase is unknown.
pub fn convert_signal(s: &FrfSet, to: SignalKind) -> Result<FrfSet> {
    let from = require_spectrum(s)?;
    let mut out = s.clone();
    out.signal = Some(to);
    if from == to {
        return Ok(out);
    }
    if !from.has_phase() && to.has_phase() {
        return Err(Error::quantity(format!(
            "'{}' is a {} without phase and cannot become a {} spectrum",
            s.name,
            from.name(),
            to.name()
        )));
    }
    let widths = if matches!(to, SignalKind::Psd) || matches!(from, SignalKind::Psd) {
        Some(crate::levels::line_widths(&s.freqs)?)
    } else {
        None
    };
    let n = s.n_out();
    for k in 0..s.n_lines() {
        let dfk = widths.as_ref().map(|w| w[k]).unwrap_or(1.0);
        for i in 0..n {
            let v = s.get(k, i, 0);
            let ms = match from {
                SignalKind::Peak => 0.5 * v.norm_sqr(),
                SignalKind::Rms => v.norm_sqr(),
                SignalKind::Autopower => v.re,
                SignalKind::Psd => v.re * dfk,
                // refused by require_spectrum above
                SignalKind::Cross | SignalKind::Esd => f64::NAN,
            };
            let w = match to {
                SignalKind::Peak if from == SignalKind::Rms => v * std::f64::consts::SQRT_2,
                SignalKind::Rms if from == SignalKind::Peak => v / std::f64::consts::SQRT_2,
                SignalKind::Autopower => Complex64::new(ms, 0.0),
                SignalKind::Psd => Complex64::new(ms / dfk, 0.0),
                _ => v,
            };
            out.set(k, i, 0, w);
        }
    }
    out.warnings.push(format!(
        "'{}' converted from {} to {}",
        s.name,
        from.name(),
        to.name()
    ));
    Ok(out)
}

/// Stack spectra acting at different DOFs into one spectrum. They must share
/// kind, quantity and grid; a DOF may appear only once.
pub fn stack_spectra(name: &str, sets: &[FrfSet]) -> Result<FrfSet> {
    let first = sets
        .first()
        .ok_or_else(|| Error::usage("no spectra to stack"))?;
    let kind = require_spectrum(first)?;
    let mut dofs = Vec::new();
    for s in sets {
        let k = require_spectrum(s)?;
        if k != kind {
            return Err(Error::quantity(format!(
                "'{}' is a {} spectrum and '{}' a {} spectrum; mortise does not mix them silently: convert one first",
                first.name,
                kind.name(),
                s.name,
                k.name()
            )));
        }
        if s.out_qty != first.out_qty {
            return Err(Error::quantity(format!(
                "'{}' is {} and '{}' is {}",
                first.name, first.out_qty, s.name, s.out_qty
            )));
        }
        require_same_grid(first, s)?;
        for d in &s.outputs {
            if dofs.iter().any(|e: &Dof| e.same_place(d)) {
                return Err(Error::dof(format!("{d} appears in more than one spectrum")));
            }
            dofs.push(d.clone());
        }
    }
    let mut out = new_spectrum(name, first.freqs.clone(), dofs, first.out_qty, kind);
    let mut row = 0;
    for s in sets {
        for i in 0..s.n_out() {
            out.present[row] = s.is_present(i, 0);
            for k in 0..s.n_lines() {
                out.set(k, row, 0, s.get(k, i, 0));
            }
            row += 1;
        }
        out.warnings.extend(s.warnings.iter().cloned());
        out.provenance.extend(s.provenance.iter().cloned());
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    fn exc(kind: SignalKind, v: f64) -> FrfSet {
        let mut s = new_spectrum(
            "f",
            vec![10.0, 20.0],
            vec![Dof::new("c", "1", Direction::Z)],
            Quantity::Force,
            kind,
        );
        for k in 0..2 {
            s.set(k, 0, 0, Complex64::new(v, 0.0));
        }
        s
    }

    #[test]
    fn kinds_are_not_mixed() {
        let a = exc(SignalKind::Rms, 1.0);
        let mut b = exc(SignalKind::Autopower, 1.0);
        b.outputs[0].node = "2".into();
        assert!(stack_spectra("x", &[a.clone(), b]).is_err());
        assert!(convert_signal(&exc(SignalKind::Psd, 1.0), SignalKind::Rms).is_err());
        let p = convert_signal(&a, SignalKind::Peak).unwrap();
        assert!((p.get(0, 0, 0).re - std::f64::consts::SQRT_2).abs() < 1e-15);
    }

    #[test]
    fn negative_autopower_is_refused() {
        assert!(require_spectrum(&exc(SignalKind::Autopower, -1.0)).is_err());
    }
}
