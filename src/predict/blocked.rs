//! Blocked forces of a source: FRFs between the source's interface DOFs
//! (inputs) and indicator DOFs (outputs), and the operational responses at
//! the indicators, give the forces by least squares per line, f = H⁺ y.
//! Two methods share this one solve and differ in where H and y are
//! measured ([`BlockedMethod`]): on a test bench, or in situ on the installed
//! assembly (Moorhouse, Elliott & Evans, J. Sound Vib. 325, 2009, 679–685:
//! the blocked forces of a source are a property of the source alone, so
//! the assembly's own FRFs and running responses give them). Indicators
//! left out of the inversion validate the result: their responses are
//! predicted from the forces and compared; in situ, target DOFs of the
//! assembly (outputs of the same FRFs) are predicted too.
//!
//! H⁺ is the pseudo-inverse applied per line, from the SVD H = U Σ Vᴴ:
//! P = V diag(φ_j / σ_j) Uᴴ with filter factors φ_j: 1 for a kept singular
//! value of a truncated SVD (σ_j ≥ t·σ_max) and 0 for a dropped one, or
//! Tikhonov's φ_j = σ_j² / (σ_j² + λ²), which gives
//! f = (HᴴH + λ²I)⁻¹ Hᴴ y (Hansen, Rank-Deficient and Discrete Ill-Posed
//! Problems, SIAM 1998, ch. 4). The applied P is kept, so the first-order
//! uncertainty ([`crate::uncertainty::blocked`]) uses the same operator.
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

/// Where the FRFs and the operational responses were measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum BlockedMethod {
    /// The source runs on a test bench; the FRFs are the bench's.
    Bench,
    /// The source runs installed; the FRFs are the assembly's, between the
    /// source's interface DOFs and indicators on the receiving structure.
    InSitu,
}

impl BlockedMethod {
    /// The name in recipes and reports.
    pub fn name(self) -> &'static str {
        match self {
            BlockedMethod::Bench => "bench",
            BlockedMethod::InSitu => "in-situ",
        }
    }

    /// What the FRF set is, in words.
    fn frf_words(self) -> &'static str {
        match self {
            BlockedMethod::Bench => "bench",
            BlockedMethod::InSitu => "assembly",
        }
    }
}

/// The regularisation of the inversion.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum Regularisation {
    /// Truncated SVD: singular values below this fraction of the largest are
    /// dropped (per line; those equal to it are kept). 0 drops none.
    Truncated(f64),
    /// Tikhonov with λ = this fraction of the largest singular value, per line.
    TikhonovRelative(f64),
    /// Tikhonov with λ from the FRFs' noise: per line, the root sum of
    /// squares of the standard uncertainties of the indicator matrix used,
    /// λ = (Σ u_H,ic²)^½, an estimate of ‖δH‖_F (which bounds ‖δH‖₂). Holds
    /// the FRFs' standard uncertainties, one per value of the FRF set.
    TikhonovNoise(Vec<f64>),
}

/// Options of [`blocked_forces`].
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BlockedForceOptions {
    pub method: BlockedMethod,
    pub regularisation: Regularisation,
    /// Indicator DOFs left out of the inversion and used to validate it.
    #[serde(default)]
    pub validation: Vec<Dof>,
    /// Target DOFs (outputs of the FRFs, left out of the inversion) whose
    /// responses are predicted; compared where the responses hold them.
    /// In situ only.
    #[serde(default)]
    pub target: Vec<Dof>,
    /// Band width 1/b of the validation summary (3 = one-third octave).
    pub band_fraction: u32,
}

impl Default for BlockedForceOptions {
    fn default() -> Self {
        BlockedForceOptions {
            method: BlockedMethod::Bench,
            regularisation: Regularisation::Truncated(1e-3),
            validation: Vec::new(),
            target: Vec::new(),
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

/// The predicted responses at target DOFs of the assembly.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TargetPrediction {
    pub dofs: Vec<Dof>,
    /// Predicted responses (spectrum), one output per target DOF.
    pub predicted: FrfSet,
    /// Per target: whether the operational responses hold it.
    pub measured: Vec<bool>,
    /// Level error 20·log10(|predicted| / |measured|) per target per line,
    /// dB (NaN for a target not measured).
    pub error_db: Vec<Vec<f64>>,
}

/// Where a DOF sits: its row in the FRFs and, when measured, in the
/// responses, each with the sign relating the row to the DOF as given.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Row {
    pub frf: usize,
    pub frf_sign: f64,
    pub op: Option<(usize, f64)>,
}

/// Blocked forces and how they were obtained.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BlockedForces {
    pub method: BlockedMethod,
    /// The forces at the FRFs' input DOFs (spectrum of the FRFs' input quantity).
    pub forces: FrfSet,
    /// The relative truncation threshold used (0 under Tikhonov).
    pub rel_threshold: f64,
    /// Tikhonov's λ per line, when used.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tikhonov: Option<Vec<f64>>,
    /// Indicators used in the inversion.
    pub indicators: Vec<Dof>,
    /// Singular values per line, largest first.
    pub singular_values: Vec<Vec<f64>>,
    /// Singular values kept per line (all of them under Tikhonov).
    pub kept: Vec<usize>,
    /// 2-norm condition number s_max / s_min per line (all singular values).
    pub condition: Vec<f64>,
    pub validation: Option<Validation>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target: Option<TargetPrediction>,
    pub warnings: Vec<String>,
    /// The applied inverse per line: forces × used indicators, row-major,
    /// line after line (f = P y).
    #[serde(skip)]
    pub inverse: Vec<Complex64>,
    /// The rows of the indicators used, in the order of P's columns.
    #[serde(skip)]
    pub rows: Vec<Row>,
    /// The rows of the validation DOFs and of the targets.
    #[serde(skip)]
    pub validation_rows: Vec<Row>,
    #[serde(skip)]
    pub target_rows: Vec<Row>,
}

fn row_of(set: &FrfSet, d: &Dof) -> Option<(usize, f64)> {
    set.out_place(d)
        .map(|i| (i, set.outputs[i].sign() * d.sign()))
}

/// The pseudo-inverse P = V diag(φ_j / σ_j) Uᴴ of one line's SVD (see the
/// module docs), n × m row-major, and the number of singular values with a
/// non-zero filter factor: Tikhonov's with `lambda`, else a truncation at
/// `rel` of the largest.
fn applied_inverse(
    svd: &Svd,
    m: usize,
    n: usize,
    rel: f64,
    lambda: Option<f64>,
) -> (Vec<Complex64>, usize) {
    let s = svd.singular_values();
    let mut p = vec![Complex64::new(0.0, 0.0); n * m];
    let kept = match lambda {
        None => svd.kept(rel),
        Some(_) => s.iter().filter(|&&x| x > 0.0).count(),
    };
    for (j, &sj) in s.iter().enumerate().take(kept) {
        let g = match lambda {
            None => 1.0 / sj,
            Some(l) => sj / (sj * sj + l * l),
        };
        let (u, v) = (svd.u(j), svd.v(j));
        for a in 0..n {
            let va = v[a] * g;
            for (b, ub) in u.iter().enumerate() {
                p[a * m + b] += va * ub.conj();
            }
        }
    }
    (p, kept)
}

/// Blocked forces from FRFs (indicators × interface DOFs; the bench's, or in
/// situ the assembly's) and operational responses at the indicators (a peak
/// or RMS spectrum of the FRFs' output quantity). Needs at least as many
/// indicators in the inversion as forces.
pub fn blocked_forces(
    frf: &FrfSet,
    operational: &FrfSet,
    opts: &BlockedForceOptions,
) -> Result<BlockedForces> {
    let what = opts.method.frf_words();
    if frf.signal.is_some() {
        return Err(Error::quantity(format!(
            "'{}' is a spectrum; the {what} must be an FRF set",
            frf.name
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
    if operational.out_qty != frf.out_qty {
        return Err(Error::quantity(format!(
            "the responses '{}' are {} but the {what} FRFs '{}' give {}",
            operational.name, operational.out_qty, frf.name, frf.out_qty
        )));
    }
    match &opts.regularisation {
        Regularisation::Truncated(t) if !(*t >= 0.0 && *t < 1.0) => {
            return Err(Error::recipe(format!(
                "SVD threshold {t}: expected a fraction in [0, 1)"
            ))
            .field("tsvd"))
        }
        Regularisation::TikhonovRelative(t) if !(t.is_finite() && *t >= 0.0) => {
            return Err(Error::recipe(format!(
                "Tikhonov's relative λ is {t}; expected a finite fraction of the largest singular value, 0 or more"
            ))
            .field("tikhonov"))
        }
        Regularisation::TikhonovNoise(u) if u.len() != frf.data.len() => {
            return Err(Error::internal(format!(
                "Tikhonov: {} uncertainties for {} FRF values",
                u.len(),
                frf.data.len()
            )))
        }
        _ => {}
    }
    if opts.method == BlockedMethod::Bench && !opts.target.is_empty() {
        return Err(Error::recipe(
            "target DOFs are predicted in situ only (method 'in-situ'): on a bench the FRFs do not reach the installed receiver",
        )
        .field("target"));
    }
    require_same_grid(frf, operational)?;
    frf.require_complete("the blocked-force inversion")?;
    // indicators: outputs with operational data, validation and targets set apart
    let mut validation_rows = Vec::new();
    for v in &opts.validation {
        match (row_of(frf, v), row_of(operational, v)) {
            (Some((i, s)), Some(o)) => validation_rows.push(Row {
                frf: i,
                frf_sign: s,
                op: Some(o),
            }),
            _ => {
                return Err(Error::dof(format!(
                    "validation DOF {v} must be an output of the {what} '{}' ({}) and of the responses '{}' ({})",
                    frf.name,
                    labels(&frf.outputs),
                    operational.name,
                    labels(&operational.outputs)
                ))
                .field("validate"))
            }
        }
    }
    let mut target_rows = Vec::new();
    for t in &opts.target {
        let Some((i, s)) = row_of(frf, t) else {
            return Err(Error::dof(format!(
                "target DOF {t} is not an output of the assembly FRFs '{}' ({}); a target's response is predicted through the assembly's FRFs from the interface",
                frf.name,
                labels(&frf.outputs)
            ))
            .field("target"));
        };
        if opts.validation.iter().any(|v| v.same_place(t)) {
            return Err(Error::recipe(format!(
                "DOF {t} is both a validation indicator and a target; give it once"
            ))
            .field("target"));
        }
        let op = row_of(operational, t).filter(|&(r, _)| operational.is_present(r, 0));
        target_rows.push(Row {
            frf: i,
            frf_sign: s,
            op,
        });
    }
    let mut used: Vec<Row> = Vec::new();
    for (i, d) in frf.outputs.iter().enumerate() {
        if opts.validation.iter().any(|v| v.same_place(d))
            || opts.target.iter().any(|v| v.same_place(d))
        {
            continue;
        }
        if let Some((r, sg)) = row_of(operational, d) {
            if !operational.is_present(r, 0) {
                continue;
            }
            used.push(Row {
                frf: i,
                frf_sign: 1.0,
                op: Some((r, sg)),
            });
        }
    }
    let nf = frf.n_in();
    if nf == 0 {
        return Err(Error::missing(format!(
            "the {what} '{}' has no inputs: blocked forces need at least one force DOF",
            frf.name
        )));
    }
    if used.len() < nf {
        return Err(Error::missing(format!(
            "{} forces need at least {} indicators in the inversion; only {} outputs of the {what} FRFs have responses in '{}' (validation and target DOFs excluded)",
            nf,
            nf,
            used.len(),
            operational.name
        )));
    }
    let mut forces = new_spectrum(
        &format!("{} blocked forces", operational.name),
        frf.freqs.clone(),
        frf.inputs.clone(),
        frf.in_qty,
        kind,
    );
    let nl = frf.n_lines();
    let mut svs = Vec::with_capacity(nl);
    let mut kept = Vec::with_capacity(nl);
    let mut cond = Vec::with_capacity(nl);
    let nu = used.len();
    let mut inverse = Vec::with_capacity(nl * nf * nu);
    // the plain least-squares forces, for the peak comparison when regularised
    let mut plain = forces.clone();
    let mut regularised = false;
    let mut lambdas = Vec::with_capacity(nl);
    for k in 0..nl {
        let h: Vec<Complex64> = (0..nu * nf)
            .map(|e| frf.get(k, used[e / nf].frf, e % nf))
            .collect();
        let y: Vec<Complex64> = used
            .iter()
            .map(|u| {
                let (r, sg) = u.op.unwrap_or((0, 1.0));
                operational.get(k, r, 0) * sg
            })
            .collect();
        if let Some(a) = y
            .iter()
            .position(|x| !(x.re.is_finite() && x.im.is_finite()))
        {
            return Err(Error::numeric(format!(
                "the response of '{}' at {} is {} at {} Hz; blocked forces need finite responses",
                operational.name, frf.outputs[used[a].frf], y[a], frf.freqs[k]
            )));
        }
        let at = |e: Error| {
            Error::new(
                e.kind,
                format!(
                    "the {what} matrix of '{}' (used indicators × forces) at {} Hz: {}",
                    frf.name, frf.freqs[k], e.message
                ),
            )
        };
        let svd = Svd::new(&h, nu, nf).map_err(at)?;
        let s = svd.singular_values().to_vec();
        if s[0] <= 0.0 {
            return Err(Error::numeric(format!(
                "the {what} matrix of '{}' is zero at {} Hz",
                frf.name, frf.freqs[k]
            )));
        }
        let rel = match &opts.regularisation {
            Regularisation::Truncated(t) => *t,
            _ => 0.0,
        };
        let lambda = match &opts.regularisation {
            Regularisation::Truncated(_) => None,
            Regularisation::TikhonovRelative(t) => Some(t * s[0]),
            Regularisation::TikhonovNoise(u) => {
                let l = used
                    .iter()
                    .flat_map(|r| (0..nf).map(move |c| u[frf.idx(k, r.frf, c)].powi(2)))
                    .sum::<f64>()
                    .sqrt();
                if !l.is_finite() {
                    return Err(Error::numeric(format!(
                        "the uncertainty of the {what} FRFs '{}' is not finite at {} Hz, so Tikhonov's λ cannot come from it",
                        frf.name, frf.freqs[k]
                    ))
                    .field("tikhonov"));
                }
                Some(l)
            }
        };
        let (p, n_kept) = applied_inverse(&svd, nu, nf, rel, lambda);
        for j in 0..nf {
            let fj: Complex64 = (0..nu).map(|b| p[j * nu + b] * y[b]).sum();
            forces.set(k, j, 0, fj);
        }
        let line_regularised = match lambda {
            None => n_kept < s.len(),
            Some(l) => l > 0.0,
        };
        lambdas.push(lambda.unwrap_or(0.0));
        if line_regularised {
            regularised = true;
            let (x, _) = svd.solve_truncated(&y, 0.0).map_err(at)?;
            for (j, xj) in x.iter().enumerate() {
                plain.set(k, j, 0, *xj);
            }
        } else {
            for j in 0..nf {
                plain.set(k, j, 0, forces.get(k, j, 0));
            }
        }
        inverse.extend_from_slice(&p);
        kept.push(n_kept);
        cond.push(svd.condition());
        svs.push(s);
    }
    let mut warnings = operational.warnings.clone();
    let (rel_threshold, tikhonov) = match &opts.regularisation {
        Regularisation::Truncated(t) => {
            let trunc = kept.iter().filter(|&&n| n < nf).count();
            if trunc > 0 {
                warnings.push(format!(
                    "the truncated SVD (threshold {t:.1e} of the largest singular value) dropped singular values at {trunc} of {nl} lines: the forces there are a regularised estimate"
                ));
            }
            (*t, None)
        }
        _ => (0.0, Some(lambdas)),
    };
    if nu == nf {
        warnings.push(
            "as many indicators as forces: the inversion is exactly determined, so it has no redundancy to average out noise (common practice: use more indicators than forces)"
                .to_string(),
        );
    }
    if regularised {
        warnings.extend(crate::peaks::peak_changes(
            &plain,
            &forces,
            "blocked forces",
        ));
    }
    warnings.push(CAUTION.to_string());
    forces.warnings = warnings.clone();
    let validation = if opts.validation.is_empty() {
        None
    } else {
        Some(validate(frf, operational, &forces, opts)?)
    };
    let target = if opts.target.is_empty() {
        None
    } else {
        let t = predict_targets(frf, operational, &forces, &opts.target, &target_rows);
        if regularised {
            let p = predict_targets(frf, operational, &plain, &opts.target, &target_rows);
            warnings.extend(crate::peaks::peak_changes(
                &p.predicted,
                &t.predicted,
                "target responses",
            ));
        }
        Some(t)
    };
    Ok(BlockedForces {
        method: opts.method,
        forces,
        rel_threshold,
        tikhonov,
        indicators: used.iter().map(|u| frf.outputs[u.frf].clone()).collect(),
        singular_values: svs,
        kept,
        condition: cond,
        validation,
        target,
        warnings,
        inverse,
        rows: used,
        validation_rows,
        target_rows,
    })
}

/// The responses at target DOFs predicted from the forces, compared with
/// the operational responses where they hold the target.
fn predict_targets(
    frf: &FrfSet,
    operational: &FrfSet,
    forces: &FrfSet,
    dofs: &[Dof],
    rows: &[Row],
) -> TargetPrediction {
    let nl = frf.n_lines();
    let kind = forces.signal.unwrap_or(crate::frf::SignalKind::Rms);
    let mut predicted = new_spectrum(
        &format!("{} target", operational.name),
        frf.freqs.clone(),
        dofs.to_vec(),
        frf.out_qty,
        kind,
    );
    let mut error_db = Vec::new();
    for (t, r) in rows.iter().enumerate() {
        let mut e = Vec::with_capacity(nl);
        for k in 0..nl {
            let p: Complex64 = (0..frf.n_in())
                .map(|j| frf.get(k, r.frf, j) * forces.get(k, j, 0))
                .sum::<Complex64>()
                * r.frf_sign;
            predicted.set(k, t, 0, p);
            e.push(match r.op {
                Some((o, s)) => 20.0 * (p.norm() / (operational.get(k, o, 0) * s).norm()).log10(),
                None => f64::NAN,
            });
        }
        error_db.push(e);
    }
    TargetPrediction {
        dofs: dofs.to_vec(),
        predicted,
        measured: rows.iter().map(|r| r.op.is_some()).collect(),
        error_db,
    }
}

fn validate(
    frf: &FrfSet,
    operational: &FrfSet,
    forces: &FrfSet,
    opts: &BlockedForceOptions,
) -> Result<Validation> {
    let nl = frf.n_lines();
    let kind = forces.signal.unwrap_or(crate::frf::SignalKind::Rms);
    let mut predicted = new_spectrum(
        &format!("{} validation", operational.name),
        frf.freqs.clone(),
        opts.validation.clone(),
        frf.out_qty,
        kind,
    );
    let mut error_db = Vec::new();
    let mut rel_error = Vec::new();
    let mut band_error_db = Vec::new();
    let mut bands = Vec::new();
    for (v, d) in opts.validation.iter().enumerate() {
        let (bi, bs) = row_of(frf, d).ok_or_else(|| Error::dof(format!("{d}")))?;
        let (oi, os) = row_of(operational, d).ok_or_else(|| Error::dof(format!("{d}")))?;
        let mut e_db = Vec::with_capacity(nl);
        let mut e_rel = Vec::with_capacity(nl);
        let mut pm = Vec::with_capacity(nl);
        let mut mm = Vec::with_capacity(nl);
        for k in 0..nl {
            let mut p = Complex64::new(0.0, 0.0);
            for j in 0..frf.n_in() {
                p += frf.get(k, bi, j) * forces.get(k, j, 0);
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
        let f = &frf.freqs;
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
