//! Variants: the level difference between two predicted responses (a
//! variant against a baseline) and scaling of a source.

use super::{require_same_grid, require_spectrum};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::levels::{self, Band, Weighting};
use num_complex::Complex64;

/// Level differences, variant minus baseline (positive: the variant is louder).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Difference {
    pub targets: Vec<Dof>,
    pub freqs: Vec<f64>,
    /// Per target, per line, dB (NaN where both are zero).
    pub per_line_db: Vec<Vec<f64>>,
    pub bands: Vec<Band>,
    /// Per target, per band, dB (NaN for bands without lines).
    pub per_band_db: Vec<Vec<f64>>,
    /// Per target, overall, dB.
    pub overall_db: Vec<f64>,
    pub weighting: Weighting,
}

/// Differences between two response spectra of the same kind, quantity and
/// grid, at every target of `baseline` (the variant must hold each of them).
pub fn difference_db(
    baseline: &FrfSet,
    variant: &FrfSet,
    band_fraction: u32,
    weighting: Weighting,
) -> Result<Difference> {
    let ka = require_spectrum(baseline)?;
    let kb = require_spectrum(variant)?;
    if ka != kb {
        return Err(Error::quantity(format!(
            "'{}' is a {} spectrum and '{}' a {} spectrum; convert one first, kinds are not mixed silently",
            baseline.name,
            ka.name(),
            variant.name,
            kb.name()
        )));
    }
    if baseline.out_qty != variant.out_qty {
        return Err(Error::quantity(format!(
            "'{}' is {} and '{}' is {}",
            baseline.name, baseline.out_qty, variant.name, variant.out_qty
        )));
    }
    require_same_grid(baseline, variant)?;
    let f = &baseline.freqs;
    let mut per_line = Vec::new();
    let mut per_band = Vec::new();
    let mut overall = Vec::new();
    let mut bands = Vec::new();
    for (t, d) in baseline.outputs.iter().enumerate() {
        let tv = variant.out_place(d).ok_or_else(|| {
            Error::dof(format!(
                "the variant '{}' has no response at {d}",
                variant.name
            ))
        })?;
        let ma = levels::line_mean_squares(baseline, t)?;
        let mb = levels::line_mean_squares(variant, tv)?;
        per_line.push(ma.iter().zip(&mb).map(|(a, b)| ratio_db(*b, *a)).collect());
        overall.push(ratio_db(
            levels::overall_mean_square(f, &mb, weighting),
            levels::overall_mean_square(f, &ma, weighting),
        ));
        if f.iter().any(|&x| x > 0.0) {
            let ba = levels::band_mean_squares(f, &ma, band_fraction, weighting)?;
            let bb = levels::band_mean_squares(f, &mb, band_fraction, weighting)?;
            per_band.push(
                (0..ba.bands.len())
                    .map(|i| {
                        if ba.lines[i] == 0 {
                            f64::NAN
                        } else {
                            ratio_db(bb.mean_square[i], ba.mean_square[i])
                        }
                    })
                    .collect(),
            );
            bands = ba.bands;
        }
    }
    Ok(Difference {
        targets: baseline.outputs.clone(),
        freqs: f.clone(),
        per_line_db: per_line,
        bands,
        per_band_db: per_band,
        overall_db: overall,
        weighting,
    })
}

fn ratio_db(num: f64, den: f64) -> f64 {
    if num == 0.0 && den == 0.0 {
        f64::NAN
    } else {
        10.0 * (num / den).log10()
    }
}

/// Scale a source spectrum by a complex factor, at every DOF or only at
/// `dofs`. Complex spectra scale by the factor, autopowers and PSDs by |factor|².
pub fn scale_source(exc: &FrfSet, factor: Complex64, dofs: Option<&[Dof]>) -> Result<FrfSet> {
    let kind = require_spectrum(exc)?;
    if !(factor.re.is_finite() && factor.im.is_finite()) {
        return Err(Error::numeric(format!(
            "scale factor {factor} is not finite"
        )));
    }
    let rows: Vec<usize> = match dofs {
        None => (0..exc.n_out()).collect(),
        Some(ds) => ds
            .iter()
            .map(|d| {
                exc.out_place(d).ok_or_else(|| {
                    Error::dof(format!("the source '{}' does not act at {d}", exc.name))
                })
            })
            .collect::<Result<_>>()?,
    };
    let g = if kind.has_phase() {
        factor
    } else {
        Complex64::new(factor.norm_sqr(), 0.0)
    };
    let mut out = exc.clone();
    for k in 0..exc.n_lines() {
        for &r in &rows {
            let v = out.get(k, r, 0);
            out.set(k, r, 0, v * g);
        }
    }
    out.warnings.push(format!(
        "'{}' scaled by {factor} at {} DOF(s)",
        exc.name,
        rows.len()
    ));
    Ok(out)
}
