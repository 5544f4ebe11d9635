//! Averaged spectra as spectrum sets ([`FrfSet`] with `signal = Some(kind)`).
//!
//! One set per quantity (a set has one output quantity), channels in their
//! order. Kinds:
//! - `autopower`: mean square per line (unit²), phase-less;
//! - `psd`: autopower / ENBW in Hz (unit²/Hz); the ASD is its square root
//!   and is not a kind of its own (an ASD file is read as a PSD too);
//! - `rms` and `peak`: the linear spectrum √autopower (× √2 for peak), with
//!   the phase of the cross spectrum to a reference channel, so channels keep
//!   their relative phase. Without a reference a linear spectrum is refused rather
//!   given a made-up phase (autopower and PSD need none);
//! - `cross`: conj(X_ref)·X_c per line against one reference channel (the
//!   set's input), in (unit · reference unit).
//!
//! The window and averaging are stated in the set's provenance options and
//! its warnings carry nothing unless something was dropped.

use super::welch::Averaged;
use super::Channel;
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, Provenance, SignalKind};
use num_complex::Complex64;

/// The averaging, in words for a set's provenance.
pub fn describe_averaging(a: &Averaged) -> String {
    format!(
        "window={} (coherent gain {:.6}, ENBW {:.4} bins); segment={} samples ({} Hz lines); overlap={}; detrend={}; segments={}; fs={} Hz",
        a.settings.window.label(),
        a.window.coherent_gain,
        a.window.enbw_bins,
        a.settings.segment,
        a.df(),
        a.settings.overlap,
        a.settings.detrend.name(),
        a.segments,
        a.fs
    )
}

/// Spectrum sets of `kind` for the channels (all of `a`'s channels, in
/// order). `reference`: the channel index whose phase the linear spectra
/// are measured against, or the reference of a cross spectrum; it must be
/// one of `a.refs`.
pub fn spectrum_sets(
    a: &Averaged,
    channels: &[Channel],
    kind: SignalKind,
    reference: Option<usize>,
    name: &str,
    source: &Provenance,
) -> Result<Vec<FrfSet>> {
    if channels.len() != a.n_ch {
        return Err(Error::internal(format!(
            "{} channels described for {} analysed",
            channels.len(),
            a.n_ch
        )));
    }
    let r = match reference {
        Some(c) => Some(a.ref_index(c).ok_or_else(|| {
            Error::internal(format!("channel {c} was not averaged as a reference"))
        })?),
        None => None,
    };
    match kind {
        SignalKind::Esd => {
            return Err(Error::unsupported(
                "an energy spectral density is made from impact records, not from Welch averages",
            ))
        }
        SignalKind::Cross if r.is_none() => {
            return Err(Error::usage(
                "a cross spectrum needs a reference channel (the one the phase is measured against)",
            )
            .field("reference"))
        }
        SignalKind::Peak | SignalKind::Rms if r.is_none() => {
            return Err(Error::usage(format!(
                "{} keeps the phase of each line, which averaged spectra do not have without a reference channel; name a reference channel, or ask for autopower or psd",
                kind.describe()
            ))
            .field("reference"))
        }
        _ => {}
    }
    let lines = a.freqs.len();
    let enbw = a.enbw_hz();
    let mut groups: Vec<(crate::units::Quantity, Vec<usize>)> = Vec::new();
    for (c, ch) in channels.iter().enumerate() {
        match groups.iter_mut().find(|(q, _)| *q == ch.quantity) {
            Some((_, v)) => v.push(c),
            None => groups.push((ch.quantity, vec![c])),
        }
    }
    let several = groups.len() > 1;
    let mut prov = source.clone();
    let avg = describe_averaging(a);
    prov.options = if prov.options.is_empty() {
        format!("{}; {avg}", kind.name())
    } else {
        format!("{}; {}; {avg}", prov.options, kind.name())
    };
    let mut out = Vec::with_capacity(groups.len());
    for (q, members) in groups {
        let (input, in_qty) = match (kind, reference) {
            (SignalKind::Cross, Some(c)) => (channels[c].dof.clone(), channels[c].quantity),
            _ => (
                Dof::scalar("", "ref"),
                crate::units::Quantity::Dimensionless,
            ),
        };
        let set_name = if several {
            format!("{name} {}", q.name())
        } else {
            name.to_string()
        };
        let mut s = FrfSet::zeros(
            &set_name,
            a.freqs.clone(),
            members.iter().map(|&c| channels[c].dof.clone()).collect(),
            vec![input],
            q,
            in_qty,
        );
        s.signal = Some(kind);
        s.provenance = vec![prov.clone()];
        for k in 0..lines {
            for (i, &c) in members.iter().enumerate() {
                let p = a.auto(k, c);
                let v = match kind {
                    SignalKind::Autopower => Complex64::new(p, 0.0),
                    SignalKind::Psd => Complex64::new(p / enbw, 0.0),
                    SignalKind::Cross => a.cross(k, r.unwrap_or(0), c),
                    SignalKind::Rms | SignalKind::Peak => {
                        let g = a.cross(k, r.unwrap_or(0), c);
                        let mag = p.sqrt()
                            * if kind == SignalKind::Peak {
                                2f64.sqrt()
                            } else {
                                1.0
                            };
                        let n = g.norm();
                        if n > 0.0 {
                            g / n * mag
                        } else {
                            Complex64::new(mag, 0.0)
                        }
                    }
                    SignalKind::Esd => Complex64::new(f64::NAN, 0.0),
                };
                s.set(k, i, 0, v);
            }
        }
        out.push(s);
    }
    Ok(out)
}
