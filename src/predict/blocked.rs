//! Blocked forces of a source from a test bench: the bench FRFs between
//! interface DOFs (inputs) and indicator DOFs (outputs), and the operational
//! responses at the indicators, give the forces by least squares per line,
//! f = H⁺ y, with H⁺ a truncated-SVD pseudo-inverse (the in-situ / inverse
//! method of the transfer-path literature, e.g. Moorhouse, Elliott & Evans,
//! J. Sound Vib. 325, 2009). Indicators left out of the inversion validate
//! the result: their responses are predicted from the forces and compared.
//!
//! The SVD is mortise's own one-sided Jacobi ([`crate::linalg::svd`]):
//! nalgebra 0.35's complex SVD, used here before, gave singular values and
//! forces wrong in the fourth digit on bench matrices whose singular values
//! form clusters (tests/predict_blocked_svd.rs).

use super::{new_spectrum, require_same_grid, require_spectrum, CAUTION};
use crate::error::{Error, Result};
use crate::frf::{labels, Dof, FrfSet};
use crate::levels::{self, Band};
use crate::linalg::svd::Svd;
use num_complex::Complex64;

/// Options of [`blocked_forces`].
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BlockedForceOptions {
    /// Singular values below this fraction of the largest are dropped (per
    /// line; those equal to it are kept).
    pub rel_threshold: f64,
    /// Indicator DOFs left out of the inversion and used to validate it.
    #[serde(default)]
    pub validation: Vec<Dof>,
    /// Band width 1/b of the validation summary (3 = one-third octave).
    pub band_fraction: u32,
}

impl Default for BlockedForceOptions {
    fn default() -> Self {
        BlockedForceOptions {
            rel_threshold: 1e-3,
            validation: Vec::new(),
            band_fraction: 3,
        }
    }
}

/// The validation at indicators left out of the inversion.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Validation {
    pub dofs: Vec<Dof>,
    /// Predicted responses at the validation DOFs (spectrum).
    pub predicted: FrfSet,
    /// Level error 20·log10(|predicted| / |measured|) per DOF per line, dB.
    pub error_db: Vec<Vec<f64>>,
    /// Complex relative error |predicted − measured| / |measured| per DOF per line.
    pub rel_error: Vec<Vec<f64>>,
    pub bands: Vec<Band>,
    /// Band level error 10·log10(Σ|predicted|² / Σ|measured|²) per DOF per band, dB.
    pub band_error_db: Vec<Vec<f64>>,
}

/// Blocked forces and how they were obtained.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BlockedForces {
    /// The forces at the bench's input DOFs (spectrum of the bench's input quantity).
    pub forces: FrfSet,
    /// The relative threshold used.
    pub rel_threshold: f64,
    /// Indicators used in the inversion.
    pub indicators: Vec<Dof>,
    /// Singular values per line, largest first.
    pub singular_values: Vec<Vec<f64>>,
    /// Singular values kept per line.
    pub kept: Vec<usize>,
    /// 2-norm condition number s_max / s_min per line (all singular values).
    pub condition: Vec<f64>,
    pub validation: Option<Validation>,
    pub warnings: Vec<String>,
}

fn row_of(set: &FrfSet, d: &Dof) -> Option<(usize, f64)> {
    set.out_place(d)
        .map(|i| (i, set.outputs[i].sign() * d.sign()))
}

/// Blocked forces from bench FRFs (indicators × interface DOFs) and
/// operational responses at the indicators (a peak or RMS spectrum of the
/// bench's output quantity). Needs at least as many indicators in the
/// inversion as forces.
pub fn blocked_forces(
    bench: &FrfSet,
    operational: &FrfSet,
    opts: &BlockedForceOptions,
) -> Result<BlockedForces> {
    if bench.signal.is_some() {
        return Err(Error::quantity(format!(
            "'{}' is a spectrum; the bench must be an FRF set",
            bench.name
        )));
    }
    let kind = require_spectrum(operational)?;
    if !kind.has_phase() {
        return Err(Error::quantity(format!(
            "'{}' is a {} without phase; blocked forces need complex (peak or RMS) responses with phase",
            operational.name,
            kind.name()
        )));
    }
    if operational.out_qty != bench.out_qty {
        return Err(Error::quantity(format!(
            "the responses '{}' are {} but the bench FRFs '{}' give {}",
            operational.name, operational.out_qty, bench.name, bench.out_qty
        )));
    }
    if !(opts.rel_threshold >= 0.0 && opts.rel_threshold < 1.0) {
        return Err(Error::recipe(format!(
            "SVD threshold {}: expected a fraction in [0, 1)",
            opts.rel_threshold
        )));
    }
    require_same_grid(bench, operational)?;
    bench.require_complete("the blocked-force inversion")?;
    // indicators: bench outputs with operational data, validation ones set apart
    for v in &opts.validation {
        if row_of(bench, v).is_none() || row_of(operational, v).is_none() {
            return Err(Error::dof(format!(
                "validation DOF {v} must be an output of the bench '{}' ({}) and of the responses '{}' ({})",
                bench.name,
                labels(&bench.outputs),
                operational.name,
                labels(&operational.outputs)
            )));
        }
    }
    let mut used: Vec<(usize, usize, f64)> = Vec::new(); // (bench row, op row, sign)
    for (i, d) in bench.outputs.iter().enumerate() {
        if opts.validation.iter().any(|v| v.same_place(d)) {
            continue;
        }
        if let Some((r, sg)) = row_of(operational, d) {
            if !operational.is_present(r, 0) {
                continue;
            }
            used.push((i, r, sg));
        }
    }
    let nf = bench.n_in();
    if nf == 0 {
        return Err(Error::missing(format!(
            "the bench '{}' has no inputs: blocked forces need at least one force DOF",
            bench.name
        )));
    }
    if used.len() < nf {
        return Err(Error::missing(format!(
            "{} forces need at least {} indicators in the inversion; only {} bench outputs have responses in '{}' (validation DOFs excluded)",
            nf,
            nf,
            used.len(),
            operational.name
        )));
    }
    let mut forces = new_spectrum(
        &format!("{} blocked forces", operational.name),
        bench.freqs.clone(),
        bench.inputs.clone(),
        bench.in_qty,
        kind,
    );
    let mut svs = Vec::with_capacity(bench.n_lines());
    let mut kept = Vec::with_capacity(bench.n_lines());
    let mut cond = Vec::with_capacity(bench.n_lines());
    let nu = used.len();
    for k in 0..bench.n_lines() {
        let h: Vec<Complex64> = (0..nu * nf)
            .map(|e| bench.get(k, used[e / nf].0, e % nf))
            .collect();
        let y: Vec<Complex64> = used
            .iter()
            .map(|&(_, r, sg)| operational.get(k, r, 0) * sg)
            .collect();
        if let Some(a) = y
            .iter()
            .position(|x| !(x.re.is_finite() && x.im.is_finite()))
        {
            return Err(Error::numeric(format!(
                "the response of '{}' at {} is {} at {} Hz; blocked forces need finite responses",
                operational.name, bench.outputs[used[a].0], y[a], bench.freqs[k]
            )));
        }
        let at = |e: Error| {
            Error::new(
                e.kind,
                format!(
                    "the bench matrix of '{}' (used indicators × forces) at {} Hz: {}",
                    bench.name, bench.freqs[k], e.message
                ),
            )
        };
        let svd = Svd::new(&h, nu, nf).map_err(at)?;
        let s = svd.singular_values().to_vec();
        let smax = s[0];
        if smax <= 0.0 {
            return Err(Error::numeric(format!(
                "the bench matrix of '{}' is zero at {} Hz",
                bench.name, bench.freqs[k]
            )));
        }
        // f = Σ_kept v_j (u_jᴴ y) / σ_j, σ_j ≥ rel_threshold · σ_max
        let (f, n_kept) = svd.solve_truncated(&y, opts.rel_threshold).map_err(at)?;
        for (j, fj) in f.iter().enumerate() {
            forces.set(k, j, 0, *fj);
        }
        kept.push(n_kept);
        cond.push(svd.condition());
        svs.push(s);
    }
    let mut warnings = operational.warnings.clone();
    let trunc = kept.iter().filter(|&&n| n < nf).count();
    if trunc > 0 {
        warnings.push(format!(
            "the truncated SVD (threshold {:.1e} of the largest singular value) dropped singular values at {} of {} lines: the forces there are a regularised estimate",
            opts.rel_threshold,
            trunc,
            bench.n_lines()
        ));
    }
    if nu == nf {
        warnings.push(
            "as many indicators as forces: the inversion is exactly determined, so it has no redundancy to average out noise (common practice: use more indicators than forces)"
                .to_string(),
        );
    }
    warnings.push(CAUTION.to_string());
    forces.warnings = warnings.clone();
    let validation = if opts.validation.is_empty() {
        None
    } else {
        Some(validate(bench, operational, &forces, opts)?)
    };
    Ok(BlockedForces {
        forces,
        rel_threshold: opts.rel_threshold,
        indicators: used.iter().map(|u| bench.outputs[u.0].clone()).collect(),
        singular_values: svs,
        kept,
        condition: cond,
        validation,
        warnings,
    })
}

fn validate(
    bench: &FrfSet,
    operational: &FrfSet,
    forces: &FrfSet,
    opts: &BlockedForceOptions,
) -> Result<Validation> {
    let nl = bench.n_lines();
    let kind = forces.signal.unwrap_or(crate::frf::SignalKind::Rms);
    let mut predicted = new_spectrum(
        &format!("{} validation", operational.name),
        bench.freqs.clone(),
        opts.validation.clone(),
        bench.out_qty,
        kind,
    );
    let mut error_db = Vec::new();
    let mut rel_error = Vec::new();
    let mut band_error_db = Vec::new();
    let mut bands = Vec::new();
    for (v, d) in opts.validation.iter().enumerate() {
        let (bi, bs) = row_of(bench, d).ok_or_else(|| Error::dof(format!("{d}")))?;
        let (oi, os) = row_of(operational, d).ok_or_else(|| Error::dof(format!("{d}")))?;
        let mut e_db = Vec::with_capacity(nl);
        let mut e_rel = Vec::with_capacity(nl);
        let mut pm = Vec::with_capacity(nl);
        let mut mm = Vec::with_capacity(nl);
        for k in 0..nl {
            let mut p = Complex64::new(0.0, 0.0);
            for j in 0..bench.n_in() {
                p += bench.get(k, bi, j) * forces.get(k, j, 0);
            }
            // in the sign of the validation DOF as given
            let p = p * bs;
            let m = operational.get(k, oi, 0) * os;
            predicted.set(k, v, 0, p);
            e_db.push(20.0 * (p.norm() / m.norm()).log10());
            e_rel.push((p - m).norm() / m.norm());
            pm.push(p.norm_sqr());
            mm.push(m.norm_sqr());
        }
        let f = &bench.freqs;
        if f.iter().any(|&x| x > 0.0) {
            let bp = levels::band_mean_squares(f, &pm, opts.band_fraction, levels::Weighting::Z)?;
            let bm = levels::band_mean_squares(f, &mm, opts.band_fraction, levels::Weighting::Z)?;
            band_error_db.push(
                bp.mean_square
                    .iter()
                    .zip(&bm.mean_square)
                    .zip(&bp.lines)
                    .map(|((a, b), &n)| {
                        if n == 0 {
                            f64::NAN
                        } else {
                            10.0 * (a / b).log10()
                        }
                    })
                    .collect(),
            );
            bands = bp.bands;
        }
        error_db.push(e_db);
        rel_error.push(e_rel);
    }
    Ok(Validation {
        dofs: opts.validation.clone(),
        predicted,
        error_db,
        rel_error,
        bands,
        band_error_db,
    })
}
